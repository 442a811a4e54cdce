//! Issue 16: an upload's data-quality warnings speak the reader's units. A negative gauge
//! pressure logged in bar(g) is quoted, with the limit it broke, in psig on a US audit's pages and
//! in bar(g) on an SI audit's, rounded as every figure; the value as the file logged it stays only
//! as a reference beside its line ("as logged: -0.273216 bar(g)", in the file's own unit). The upload reply carries the warnings
//! in parts (`warning_parts`, one for one with `warnings`).

use crate::support::*;
use serde_json::{json, Value};

// NIST SP 811 (2008) B.8: 1 psi = 6 894.757 293 168 Pa; 1 bar = 100 000 Pa.
const PA_PER_PSI: f64 = 6_894.757_293_168;

/// An hour at 10 s of header pressure in bar(g), every 30th row (from line 7) at -0.273216.
fn csv() -> String {
    let mut s = String::from("time,header bar\n");
    for i in 0..360 {
        let p =
            if i % 30 == 5 { "-0.273216".to_string() } else { format!("{:.3}", 6.9 + (i % 7) as f64 * 0.01) };
        s.push_str(&format!("{},{p}\n", jiff_like_rfc3339(1_777_881_600 + i * 10)));
    }
    s
}

fn mapping() -> Value {
    json!({"delimiter": ",", "decimal": ".", "header_line": 1,
           "timestamp": {"column": "time", "format": "rfc3339", "timezone": "UTC"},
           "columns": [{"column": "header bar", "quantity": "pressure", "unit": "bar_g"}]})
}

fn audit(s: &Server, units: &str) -> i64 {
    let r = s.post_json(
        "/api/v1/audits",
        &json!({"name": "Quality plant", "site": {"altitude_m": 0, "timezone": "America/Chicago", "display_units": units}}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    r.json()["id"].as_i64().unwrap()
}

#[test]
fn quality_warnings_quote_readings_in_the_readers_units() {
    let s = Server::start();
    let us = audit(&s, "us");
    let r = s.upload(us, "header.csv", csv().as_bytes(), &mapping(), "");
    assert_eq!(r.status, 201, "{}", r.text);
    let reply = r.json();
    let warnings: Vec<&str> =
        reply["warnings"].as_array().unwrap().iter().map(|w| w.as_str().unwrap()).collect();
    let parts = reply["warning_parts"].as_array().expect("warning_parts");
    assert_eq!(parts.len(), warnings.len(), "one for one");
    let i = warnings.iter().position(|w| w.contains("out of range")).expect("an out-of-range warning");
    // The JSON's words are SI, rounded; the logged value only as a reference with its line.
    assert!(
        warnings[i]
            .starts_with("header bar: 12 readings out of range (negative gauge pressure, below -0.10 bar(g)")
            && warnings[i].ends_with("the first is -0.27 bar(g) at line 7 (as logged: -0.273216 bar(g))"),
        "{}",
        warnings[i]
    );
    // The parts carry the reading and the limit as figures in canonical units.
    let figures: Vec<(&str, f64)> = parts[i]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|p| Some((p["quantity"].as_str()?, p["value"].as_f64()?)))
        .collect();
    assert_eq!(figures.len(), 2, "{}", parts[i]);
    assert_eq!(figures[0].0, "pressure_bar_g");
    assert!((figures[0].1 + 0.1).abs() < 1e-12 && (figures[1].1 + 0.273216).abs() < 1e-6, "{figures:?}");

    // The US audit's pages: -0.273216 bar = -3.96 psi -> "-4.0 psig"; -0.1 bar = -1.45 psi ->
    // "-1.5 psig" (NIST SP 811 B.8), rounded to 0.1 psig as every gauge pressure on the pages.
    assert_eq!(format!("{:.1}", -0.273216e5 / PA_PER_PSI), "-4.0");
    assert_eq!(format!("{:.1}", -0.1e5 / PA_PER_PSI), "-1.5");
    for path in [format!("/audits/{us}"), format!("/audits/{us}/upload"), format!("/audits/{us}/findings")] {
        let page = s.get(&path).text;
        assert!(
            page.contains("below -1.5 psig")
                && page.contains("the first is -4.0 psig at line 7 (as logged: -0.273216 bar(g))"),
            "{path}: no warning in psig"
        );
        // The file's own literal keeps the file's unit beside it; no figure is in bar(g).
        let figures = page.replace("(as logged: -0.273216 bar(g))", "");
        assert!(
            !figures.contains("-0.273216") && !figures.contains("-0.1 bar(g)"),
            "{path}: bar(g) in a US audit"
        );
    }
    // The same file in an SI audit: bar(g), rounded to 0.01 bar(g).
    let si = audit(&s, "si");
    let r = s.upload(si, "header.csv", csv().as_bytes(), &mapping(), "");
    assert_eq!(r.status, 201, "{}", r.text);
    let page = s.get(&format!("/audits/{si}")).text;
    assert!(
        page.contains("below -0.10 bar(g)") && page.contains("the first is -0.27 bar(g) at line 7"),
        "SI page"
    );
    assert!(!page.contains("-4.0 psig") && !page.contains("-1.5 psig"), "psig in an SI audit's warning");
}
