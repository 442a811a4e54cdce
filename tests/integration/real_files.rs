//! Real logger files go in on the sniffer's proposal (issue 14).
//!
//! Every file in `$AIRLEDGER_REAL_DATA/realfiles/` (other people's published exports, listed with
//! their sources and licences in that folder's `SOURCES.md`; never copied into this repository) is
//! sent to the sniff endpoint as the upload page sends it; its proposal is taken unchanged but for
//! compressor tags (power and energy columns get one each, and the compressors are created), the
//! file is imported over HTTP, and what the server stored is compared with an independent reading
//! of the same file in Python (`tests/reference/realfiles.py`, standard library only, written per
//! file from `SOURCES.md`):
//!
//! - **sniffed right**: the sniff answered with a proposal that maps every column the oracle marks
//!   `required`, maps nothing the oracle does not list, and gives each column the oracle's quantity;
//! - **imported**: the upload answered 201;
//! - **right within 0.5 %**: data rows, first and last time equal; for each mapped column the
//!   readings stored equal the oracle's and the arithmetic mean of the stored readings
//!   (`GET /api/v1/audits/{id}/uploads/{upload_id}`) is within 0.5 % of the oracle's (pressure
//!   compared on the basis it was logged: gauge readings as gauge, with the site's atmosphere);
//!   for power and energy columns the summary's mean power of the column's compressor is within
//!   0.5 % of the oracle's time-weighted mean (trapezoid between readings no further apart than 3
//!   median steps; a counter's increase over the same steps).
//!
//! Every file is tried and scored before the test fails, and the table says which failures lie
//! with the sniffer.

use std::path::{Path, PathBuf};
use std::process::Command;
use std::time::Duration;

use crate::support::*;

/// Largest relative difference between a stored mean and the oracle's (the bound).
const TOLERANCE: f64 = 0.005;

/// One file's outcome: `Ok` or why not, for each of the three checks.
struct Score {
    file: String,
    sniffed: Result<(), String>,
    imported: Result<(), String>,
    right: Result<(), String>,
}

fn oracle(dir: &Path) -> Value {
    let script = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/reference/realfiles.py");
    let (out, _) = run_within(Command::new("python3").arg(&script).arg(dir), Duration::from_secs(120));
    assert!(
        out.status.success(),
        "python3 {} {} failed: {}",
        script.display(),
        dir.display(),
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).expect("the oracle prints JSON")
}

/// RFC 3339 to milliseconds since the epoch (jiff parses; the test only compares).
fn ms(rfc3339: &str) -> Option<i64> {
    rfc3339.parse::<jiff::Timestamp>().ok().map(|t| t.as_millisecond())
}

fn close(got: f64, want: f64) -> bool {
    (got - want).abs() <= TOLERANCE * want.abs() || (got - want).abs() < 1e-9
}

/// The server's message in an error reply, with the line, column and field it names.
fn message(r: &Resp) -> String {
    let detail = serde_json::from_str::<Value>(&r.text).ok().and_then(|v| {
        let e = v.get("error")?;
        let mut m = e.get("message")?.as_str()?.to_string();
        for key in ["line", "column", "field"] {
            if let Some(x) = e.get(key).filter(|x| !x.is_null()) {
                m.push_str(&format!(" [{key} {x}]"));
            }
        }
        Some(m)
    });
    format!("{}: {}", r.status, detail.unwrap_or_else(|| r.text.chars().take(300).collect()))
}

/// The proposal: the suggested mapping, with a compressor tag of its own for each power, energy or
/// current column that has none, and for each power or energy column the sniffer read but left
/// out for want of a compressor. Returns the mapping and the tags.
fn proposal(sniff: &Value) -> (Value, Vec<String>) {
    let mut mapping = sniff["suggested_mapping"].clone();
    let mut columns = mapping["columns"].as_array().cloned().unwrap_or_default();
    let mut tags: Vec<String> =
        columns.iter().filter_map(|c| c["compressor"].as_str().map(str::to_string)).collect();
    let mut n = 0;
    let mut new_tag = |tags: &mut Vec<String>| loop {
        n += 1;
        let t = format!("RF{n}");
        if !tags.contains(&t) {
            tags.push(t.clone());
            break t;
        }
    };
    // Proposed power, energy or current columns without a compressor get one.
    for c in columns.iter_mut() {
        let needs = matches!(c["quantity"].as_str(), Some("power" | "energy" | "current"));
        if needs && c["compressor"].as_str().is_none() {
            c["compressor"] = new_tag(&mut tags).into();
        }
    }
    // Power and energy columns the sniffer read but left out for want of a compressor.
    for guess in sniff["sniffed"]["columns"].as_array().into_iter().flatten() {
        let quantity = guess["quantity"].as_str().unwrap_or("");
        if !matches!(quantity, "power" | "energy") || guess["unit"].is_null() {
            continue;
        }
        if columns.iter().any(|c| c["column"] == guess["column"]) {
            continue;
        }
        let tag = new_tag(&mut tags);
        columns.push(json!({"column": guess["column"], "quantity": quantity, "unit": guess["unit"],
                            "compressor": tag}));
    }
    mapping["columns"] = Value::Array(columns);
    tags.sort();
    tags.dedup();
    (mapping, tags)
}

/// Sniff, import and compare one file; `want` is the oracle's entry for it.
fn score(s: &Server, name: &str, bytes: &[u8], want: &Value) -> Score {
    let mut sc = Score {
        file: name.to_string(),
        sniffed: Err("not tried".into()),
        imported: Err("not tried".into()),
        right: Err("not tried".into()),
    };
    let r = s.post_json("/api/v1/audits", &json!({"name": name, "site": {"altitude_m": 0}}));
    assert_eq!(r.status, 201, "{}", r.text);
    let audit = r.json()["id"].as_i64().expect("id");

    let r = s.sniff(audit, name, bytes);
    if r.status != 200 {
        sc.sniffed = Err(format!("sniff {}", message(&r)));
        return sc;
    }
    let sniff = r.json();
    let (mapping, tags) = proposal(&sniff);
    let mapped: Vec<&Value> = mapping["columns"].as_array().map(|a| a.iter().collect()).unwrap_or_default();
    let oracle_cols = want["columns"].as_object().expect("oracle columns");
    let mut wrong = Vec::new();
    if sniff["sniffed"]["timestamp"].is_null() {
        wrong.push("no timestamp column found".to_string());
    }
    if sniff["sniffed"]["day_first_ambiguous"] == true {
        wrong.push(format!(
            "asks day-first or month-first (proposes {})",
            sniff["sniffed"]["timestamp"]["format"]
        ));
    }
    for (col, w) in oracle_cols {
        let q = w["quantity"].as_str().unwrap_or("");
        if w["required"] == true && !mapped.iter().any(|c| c["column"] == col.as_str() && c["quantity"] == q)
        {
            wrong.push(format!("{col:?} not mapped as {q}"));
        }
    }
    for c in &mapped {
        let col = c["column"].as_str().unwrap_or("");
        match oracle_cols.get(col.trim()) {
            None => {
                wrong.push(format!("{col:?} mapped as {} {}, not such a reading", c["quantity"], c["unit"]))
            }
            Some(w) if w["quantity"] != c["quantity"] => {
                wrong.push(format!("{col:?} mapped as {}, is {}", c["quantity"], w["quantity"]))
            }
            Some(_) => {}
        }
    }
    if mapped.is_empty() {
        wrong.push("maps no column".into());
    }
    sc.sniffed = if wrong.is_empty() {
        Ok(())
    } else {
        // What was proposed, in short, for whoever mends the sniffer.
        let ts = &mapping["timestamp"];
        let cols: Vec<String> =
            mapped.iter().map(|c| format!("{} {} {}", c["column"], c["quantity"], c["unit"])).collect();
        Err(format!(
            "{} [proposed: delimiter {} decimal {} header_line {} timestamp {} + {} {} in {}; columns {}]",
            wrong.join("; "),
            mapping["delimiter"],
            mapping["decimal"],
            mapping["header_line"],
            ts["column"],
            ts["time_column"],
            ts["format"],
            ts["timezone"],
            cols.join(", ")
        ))
    };

    for tag in &tags {
        let r = s.post_json(
            &format!("/api/v1/audits/{audit}/compressors"),
            &json!({"tag": tag, "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                    "rated_power_kw": 55, "rated_flow_m3_min": 9.5, "rated_pressure_bar_g": 7.5}),
        );
        assert_eq!(r.status, 201, "compressor {tag}: {}", r.text);
    }
    let r = s.upload(audit, name, bytes, &mapping, "");
    if r.status != 201 {
        sc.imported = Err(format!("upload {}", message(&r)));
        return sc;
    }
    sc.imported = Ok(());
    let reply = r.json();
    sc.right = compare(s, audit, &reply, &mapping, want);
    sc
}

/// Rows, first, last, and per mapped column the readings and means, against the oracle.
fn compare(s: &Server, audit: i64, reply: &Value, mapping: &Value, want: &Value) -> Result<(), String> {
    let mapped: Vec<&Value> = mapping["columns"].as_array().map(|a| a.iter().collect()).unwrap_or_default();
    let mut wrong = Vec::new();
    if reply["rows"] != want["rows"] {
        wrong.push(format!("rows {} (oracle {})", reply["rows"], want["rows"]));
    }
    // The upload's span is that of the readings it stored: the oracle's span of the mapped columns'
    // readings (none when they hold none).
    let ts = &mapping["timestamp"];
    let mapped_want: Vec<&Value> = mapped
        .iter()
        .filter_map(|c| want["columns"].get(c["column"].as_str().unwrap_or("").trim()))
        .collect();
    let span = |end: &'static str| -> Vec<i64> {
        mapped_want.iter().filter_map(|w| w[end].as_str().and_then(ms)).collect()
    };
    let spans = [("first", span("first").into_iter().min()), ("last", span("last").into_iter().max())];
    for (end, want_ms) in spans {
        let got = reply[end].as_str().and_then(ms);
        if got != want_ms {
            let shown = want_ms.map(|t| jiff::Timestamp::from_millisecond(t).expect("time").to_string());
            wrong.push(format!(
                "{end} {} (oracle {}; proposed format {} in {})",
                reply[end],
                shown.as_deref().unwrap_or("none: no mapped column it reads holds a reading"),
                ts["format"],
                ts["timezone"]
            ));
        }
    }
    let upload_id = reply["upload_id"].as_i64().expect("upload_id");
    let r = s.get(&format!("/api/v1/audits/{audit}/uploads/{upload_id}"));
    assert_eq!(r.status, 200, "{}", r.text);
    let upload = r.json();
    let channels = upload["channels"].as_array().cloned().unwrap_or_default();
    let r = s.get(&format!("/api/v1/audits/{audit}"));
    assert_eq!(r.status, 200, "{}", r.text);
    let atm_pa = r.json()["site"]["atmospheric_pressure_kpa_abs"].as_f64().expect("atmosphere") * 1e3;
    let mut summary: Option<Value> = None;
    for c in &mapped {
        let col = c["column"].as_str().unwrap_or("");
        let Some(w) = want["columns"].get(col.trim()) else { continue }; // scored as a sniff error
        let quantity = c["quantity"].as_str().unwrap_or("");
        let tag = c["compressor"].as_str();
        let ch = channels.iter().find(|ch| {
            ch["quantity"] == quantity
                && match tag {
                    Some(t) => ch["compressor_tag"] == t,
                    None => ch["label"] == col,
                }
        });
        let want_n = w["readings"].as_u64().unwrap_or(0);
        let got_n = ch.and_then(|ch| ch["readings"].as_u64()).unwrap_or(0);
        if got_n != want_n {
            wrong.push(format!("{col:?} {got_n} readings (oracle {want_n})"));
            continue;
        }
        let (Some(ch), Some(want_mean)) = (ch, w["mean_si"].as_f64()) else { continue };
        let mut got = ch["mean_si"].as_f64().unwrap_or(f64::NAN);
        // Pressure on the basis it was logged.
        match (ch["unit_si"].as_str(), w["basis"].as_str()) {
            (Some("Pa_abs"), Some("gauge")) => got -= atm_pa,
            (Some("Pa_g"), Some("absolute")) => got += atm_pa,
            _ => {}
        }
        if !close(got, want_mean) {
            wrong.push(format!(
                "{col:?} mean {got:.6e} {} (oracle {want_mean:.6e}, {:+.2} %; proposed unit {})",
                ch["unit_si"].as_str().unwrap_or("?"),
                (got / want_mean - 1.0) * 100.0,
                c["unit"]
            ));
        }
        if let (Some(tag), Some(want_w)) = (tag, w["time_weighted_w"].as_f64()) {
            let sum = summary.get_or_insert_with(|| {
                let r = s.get(&format!("/api/v1/audits/{audit}/summary"));
                assert_eq!(r.status, 200, "{}", r.text);
                r.json()
            });
            let got_kw = sum["compressors"]
                .as_array()
                .and_then(|a| a.iter().find(|k| k["tag"] == tag))
                .and_then(|k| k["mean_power_kw"].as_f64());
            match got_kw {
                Some(kw) if close(kw * 1e3, want_w) => {}
                Some(kw) => wrong.push(format!(
                    "{col:?} summary mean power {kw:.6} kW (oracle time-weighted {:.6} kW, {:+.2} %)",
                    want_w / 1e3,
                    (kw * 1e3 / want_w - 1.0) * 100.0
                )),
                None => wrong.push(format!("{col:?}: no mean power for {tag} in the summary")),
            }
        }
    }
    if wrong.is_empty() {
        Ok(())
    } else {
        Err(wrong.join("; "))
    }
}

fn mark(r: &Result<(), String>) -> &'static str {
    if r.is_ok() {
        "yes"
    } else {
        "NO"
    }
}

#[test]
#[cfg_attr(
    not(has_real_data),
    ignore = "set AIRLEDGER_REAL_DATA to a folder of real logger files (with realfiles/ and its SOURCES.md)"
)]
fn every_real_file_goes_in_on_the_sniffers_proposal() {
    let dir = real_data_dir();
    let folder = dir.join("realfiles");
    let mut names: Vec<String> = std::fs::read_dir(&folder)
        .unwrap_or_else(|e| panic!("cannot read {} (AIRLEDGER_REAL_DATA): {e}", folder.display()))
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .filter(|n| n != "SOURCES.md" && !n.starts_with('.'))
        .collect();
    names.sort();
    assert!(!names.is_empty(), "{} holds no files", folder.display());
    let truth = oracle(&dir);
    let unread = truth["unread"].as_array().map(Vec::len).unwrap_or(0);
    assert_eq!(unread, 0, "files the oracle has no reader for: {}", truth["unread"]);

    let s = Server::start();
    let scores: Vec<Score> = names
        .iter()
        .map(|name| {
            let bytes = std::fs::read(folder.join(name)).expect("read a real file");
            score(&s, name, &bytes, &truth["files"][name.as_str()])
        })
        .collect();

    let count = |f: fn(&Score) -> bool| scores.iter().filter(|s| f(s)).count();
    let (sniffed, imported, right) =
        (count(|s| s.sniffed.is_ok()), count(|s| s.imported.is_ok()), count(|s| s.right.is_ok()));
    let n = scores.len();
    println!("\nreal files (issue 14): sniffed right / imported / right within 0.5 %");
    for sc in &scores {
        println!("{:<52} {:>3} {:>3} {:>3}", sc.file, mark(&sc.sniffed), mark(&sc.imported), mark(&sc.right));
        for (what, r) in [("sniffer", &sc.sniffed), ("import", &sc.imported), ("figures", &sc.right)] {
            if let Err(e) = r {
                if e != "not tried" {
                    println!("    {what}: {e}");
                }
            }
        }
    }
    println!("score: {sniffed}/{n} sniffed right, {imported}/{n} imported, {right}/{n} right within 0.5 %\n");
    // Every file: sniffed right, imported, and its figures within 0.5 % of the oracle.
    let failing: Vec<&str> = scores
        .iter()
        .filter(|sc| !(sc.sniffed.is_ok() && sc.imported.is_ok() && sc.right.is_ok()))
        .map(|sc| sc.file.as_str())
        .collect();
    assert!(
        failing.is_empty(),
        "{sniffed}/{n} sniffed right, {imported}/{n} imported, {right}/{n} right within 0.5 % (table above); \
         failing: {failing:?}"
    );
}

#[test]
#[cfg_attr(
    not(has_real_data),
    ignore = "set AIRLEDGER_REAL_DATA to a folder of real logger files (with realfiles/ and its SOURCES.md)"
)]
fn a_real_energy_counter_against_a_data_sheet_far_below_it_is_flagged() {
    // Issue 16: each real file with an energy column (the oracle's reading says which), its
    // counter alone mapped to a compressor rated at half the oracle's time-weighted mean power. The
    // counter's highest power over spans of a minute or more is at least that mean (the mean is a
    // weighted mean of the rates of those spans, or of a subset of them), so above 1.5 × rated.
    let dir = real_data_dir();
    let truth = oracle(&dir);
    let files = truth["files"].as_object().expect("the oracle's files");
    let s = Server::start();
    let mut tried = 0;
    for (name, want) in files {
        let Some((col, w)) =
            want["columns"].as_object().unwrap().iter().find(|(_, c)| c["quantity"] == "energy")
        else {
            continue;
        };
        tried += 1;
        let mean_kw = w["time_weighted_w"].as_f64().expect("the oracle's mean power") / 1000.0;
        let rated_kw = mean_kw / 2.0;
        let bytes = std::fs::read(dir.join("realfiles").join(name)).expect("read a real file");
        let r = s.post_json("/api/v1/audits", &json!({"name": name, "site": {"altitude_m": 0}}));
        let audit = r.json()["id"].as_i64().expect("id");
        let r = s.post_json(
            &format!("/api/v1/audits/{audit}/compressors"),
            &json!({"tag": "C1", "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                    "rated_power_kw": rated_kw, "rated_flow_m3_min": 1.0, "rated_pressure_bar_g": 7.5}),
        );
        assert_eq!(r.status, 201, "{}", r.text);
        let r = s.sniff(audit, name, &bytes);
        assert_eq!(r.status, 200, "{name}: {}", r.text);
        let mut mapping = r.json()["suggested_mapping"].clone();
        let counter: Vec<Value> = mapping["columns"]
            .as_array()
            .unwrap()
            .iter()
            .filter(|c| c["column"].as_str().map(str::trim) == Some(col.as_str()))
            .map(|c| {
                let mut c = c.clone();
                c["compressor"] = json!("C1");
                c
            })
            .collect();
        assert_eq!(counter.len(), 1, "{name}: the sniffer's proposal has the energy column");
        mapping["columns"] = json!(counter);
        let r = s.upload(audit, name, &bytes, &mapping, "");
        assert_eq!(r.status, 201, "{name}: {}", r.text);
        let q = &r.json()["quality"]["channels"][0];
        let p =
            q["counter_power"]["value"].as_f64().unwrap_or_else(|| panic!("{name}: no counter power: {q}"));
        assert!(p >= mean_kw * (1.0 - TOLERANCE), "{name}: {p} kW against the oracle's mean {mean_kw} kW");
        let reason =
            q["implausible"][0]["reason"].as_str().unwrap_or_else(|| panic!("{name}: not flagged: {q}"));
        assert!(reason.starts_with("power of C1 from its energy counter"), "{name}: {reason}");
    }
    assert!(tried > 0, "no real file with an energy column");
}
