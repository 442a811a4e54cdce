//! Issue 16, the forms a person fills and what they are told: data-quality warnings in the site's
//! local time with the zone named, field-test refusals in the reader's units, the mapping's date
//! readings, and `report --format html` as a file that stands alone.

use crate::support::*;
use serde_json::{json, Value};

/// 2026-05-04T08:00:00Z, the start of [`cycling_csv`].
const START: i64 = 1_777_881_600;

fn chicago_audit(s: &Server, units: &str) -> i64 {
    s.audit_in_chicago("Chicago plant", units)
}

fn warnings(reply: &Value) -> Vec<String> {
    reply["warnings"].as_array().unwrap().iter().map(|w| w.as_str().unwrap().to_string()).collect()
}

#[test]
fn quality_warnings_give_the_sites_local_time_with_the_zone_named() {
    let s = Server::start();
    let id = chicago_audit(&s, "us");
    // A file with 100 rows left out after row 99: a gap of 1,010 s in a 10 s log.
    let csv = cycling_csv(2);
    let lines: Vec<&str> = csv.lines().collect();
    let mut gapped: Vec<&str> = lines[..101].to_vec(); // header and data rows 0..=99
    gapped.extend_from_slice(&lines[201..]);
    let first = s.upload(id, "first.csv", (gapped.join("\n") + "\n").as_bytes(), &cycling_mapping(), "");
    assert_eq!(first.status, 201, "{}", first.text);
    // The times below by Python's zoneinfo (IANA tz database), e.g.
    // datetime(2026,5,4,8,16,30,tzinfo=UTC).astimezone(ZoneInfo("America/Chicago")) is 03:16:30
    // CDT (UTC-5 from the second Sunday of March).
    let w = warnings(&first.json());
    assert!(
        w.iter().any(|x| x.contains("the first starts Mon 4 May 2026 03:16 CDT")),
        "the gap's start is not in Chicago time: {w:?}"
    );
    // A second file 30 days later overlaps none: both spans in Chicago time.
    let later =
        s.upload(id, "later.csv", cycling_csv_at(START + 30 * 86_400, 2).as_bytes(), &cycling_mapping(), "");
    assert_eq!(later.status, 201, "{}", later.text);
    let w = warnings(&later.json());
    let expected =
        "this file (Wed 3 Jun 2026 03:00 CDT to Wed 3 Jun 2026 04:59 CDT) does not overlap in time any \
                    other file of the audit (Mon 4 May 2026 03:00 CDT to Mon 4 May 2026 04:59 CDT)";
    assert!(w.iter().any(|x| x.starts_with(expected)), "{w:?}");
    for x in &w {
        assert!(!x.contains("2026-0") && !x.contains(":00Z"), "a UTC time is left: {x}");
    }
    // The file tables of the upload and audit pages say the same.
    for page in [format!("/audits/{id}/upload"), format!("/audits/{id}")] {
        let html = s.get(&page).text;
        assert!(html.contains(expected), "{page} lacks the local times");
        assert!(!html.contains("T09:59:50Z"), "{page} shows a UTC time");
    }
}

#[test]
fn a_field_test_refused_on_a_us_audit_quotes_psig() {
    let s = Server::start();
    let id = chicago_audit(&s, "us");
    // NIST SP 811 (2008) B.8: 1 psi = 6 894.757 Pa, so 90 psig = 90 × 0.06894757 bar(g).
    let bar_per_psi = 6_894.757_293_168 / 1e5;
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/field-tests"),
        &json!({"kind": "bleed_down", "volume_m3": 2.0, "start_pressure_bar_g": 90.0 * bar_per_psi,
                "end_pressure_bar_g": 100.0 * bar_per_psi, "duration_s": 60}),
    );
    assert_eq!(r.status, 422, "{}", r.text);
    let e = &r.json()["error"];
    assert_eq!(e["field"], "end_pressure_bar_g");
    assert_eq!(e["message"], "the end pressure 100 psig must be below the start pressure 90 psig", "{e}");
    // A stored air at 300 °F is beyond the 120 °C limit (248 °F = 120 °C, t/°C = (t/°F - 32)/1.8).
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/field-tests"),
        &json!({"kind": "bleed_down", "volume_m3": 2.0, "start_pressure_bar_g": 7.0,
                "end_pressure_bar_g": 6.0, "duration_s": 60, "air_temperature_c": (300.0 - 32.0) / 1.8}),
    );
    assert_eq!(r.status, 422, "{}", r.text);
    let m = r.json()["error"]["message"].as_str().unwrap().to_string();
    assert_eq!(m, "the stored air's temperature must be from -40 °F to 248 °F, got 300 °F");
    // The same refusal on an SI audit speaks bar(g).
    let si = chicago_audit(&s, "si");
    let r = s.post_json(
        &format!("/api/v1/audits/{si}/field-tests"),
        &json!({"kind": "bleed_down", "volume_m3": 2.0, "start_pressure_bar_g": 6.0,
                "end_pressure_bar_g": 7.0, "duration_s": 60}),
    );
    assert_eq!(
        r.json()["error"]["message"],
        "the end pressure 7 bar(g) must be below the start pressure 6 bar(g)"
    );
}

#[test]
fn the_date_readings_say_how_a_day_first_file_reads_in_the_loggers_zone() {
    let s = Server::start();
    let id = chicago_audit(&s, "us");
    let cells = ["23/11/2026 14:05:00", "23/11/2026 14:06:00", "23/11/2026 14:07:00"];
    // The audit's zone when none is given.
    let r = s.post_json(&format!("/api/v1/audits/{id}/date-readings"), &json!({"cells": cells}));
    assert_eq!(r.status, 200, "{}", r.text);
    let j = r.json();
    assert_eq!(j["timezone"], "America/Chicago");
    assert_eq!(j["readings"][0]["words"], "day/month/year, hh:mm:ss");
    // 23 Nov 2026 is a Monday (Python: date(2026, 11, 23).strftime("%a")); Chicago keeps CST
    // (UTC-6) in November (IANA tz database).
    assert_eq!(j["readings"][0]["rows"][0]["reads_as"], "Mon 23 Nov 2026 14:05:00 CST, America/Chicago");
    assert!(
        !j["readings"]
            .as_array()
            .unwrap()
            .iter()
            .any(|x| x["words"].as_str().unwrap().starts_with("month/day")),
        "a 23rd month is offered: {j}"
    );
    // A logger keeping Berlin time on this Chicago site: its rows shown on the site's clock, 14:05
    // CET = 07:05 CST (zoneinfo: datetime(2026,11,23,14,5,tzinfo=ZoneInfo("Europe/Berlin"))
    // .astimezone(ZoneInfo("America/Chicago"))).
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/date-readings"),
        &json!({"cells": cells, "timezone": "Europe/Berlin"}),
    );
    let j = r.json();
    assert_eq!(
        (j["timezone"].as_str(), j["site_timezone"].as_str()),
        (Some("Europe/Berlin"), Some("America/Chicago"))
    );
    assert_eq!(j["readings"][0]["rows"][0]["reads_as"], "Mon 23 Nov 2026 07:05:00 CST, America/Chicago");
    // A zone that is not one: 422 naming the field.
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/date-readings"),
        &json!({"cells": cells, "timezone": "CST"}),
    );
    assert_eq!(r.status, 422, "{}", r.text);
    assert_eq!(r.json()["error"]["field"], "timezone");
}

#[test]
fn the_html_report_carries_its_styles_and_links_no_server_path() {
    let s = Server::demo();
    let out = std::process::Command::new(binary())
        .args(["report", "--db"])
        .arg(&s.db)
        .args(["--audit", "1", "--format", "html"])
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let html = String::from_utf8(out.stdout).unwrap();
    for link in ["href=\"/static", "href=\"/audits", "src=\"/static", "src=\"/"] {
        assert!(!html.contains(link), "the standalone report links a server path: {link}");
    }
    assert!(!html.contains("<link rel=\"stylesheet\""), "a stylesheet is linked, not carried");
    // The page's own stylesheet, as the repository holds it, is carried inline, and so are the
    // print rules: the running head with the site's name and "page n of m" (CSS Paged Media).
    let app_css = include_str!("../../static/css/app.css");
    assert!(html.contains(app_css.trim()), "static/css/app.css is not inline");
    assert!(html.contains("<style media=\"print\">"), "no print stylesheet");
    assert!(html.contains("counter(pages)") && html.contains("@top-left"), "no running head or page numbers");
    assert!(html.contains("Recommendations: measures stacked in order"));
}

#[test]
fn compressor_receiver_site_and_what_if_refusals_speak_the_audits_units() {
    let s = Server::start();
    let id = chicago_audit(&s, "us");
    // NIST SP 811 (2008) B.8: 1 psi = 6 894.757 Pa; 1 ft = 0.3048 m; 1 US gal = 3.785 412 E-03 m³.
    // The limits: 50 bar(g) = 725.19 psig; 6,000 m = 19,685 ft and -500 m = -1,640 ft.
    let bar_per_psi = 6_894.757_293_168 / 1e5;
    let message = |r: Resp| {
        assert_eq!(r.status, 422, "{}", r.text);
        r.json()["error"]["message"].as_str().unwrap().to_string()
    };
    let m = message(s.post_json(
        &format!("/api/v1/audits/{id}/compressors"),
        &json!({"tag": "C9", "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                "rated_power_kw": 55, "rated_flow_m3_min": 9.5, "rated_pressure_bar_g": 800.0 * bar_per_psi}),
    ));
    assert_eq!(m, "the rated pressure must be above 0 psig and at most 725.1 psig, got 800 psig");
    let m = message(
        s.post_json(&format!("/api/v1/audits/{id}/receivers"), &json!({"name": "wet", "volume_m3": 0.0})),
    );
    assert!(m.starts_with("the receiver's volume must be above 0 US gal and at most "), "{m}");
    assert!(m.ends_with(" US gal, got 0 US gal"), "{m}");
    let m = message(
        s.patch_json(&format!("/api/v1/audits/{id}"), &json!({"site": {"altitude_m": 30_000.0 * 0.3048}})),
    );
    assert_eq!(m, "the altitude must be at least -1,640 ft and at most 19,685 ft, got 30000 ft");
    let m = message(s.post_json(
        &format!("/api/v1/audits/{id}/scenarios"),
        &json!({"name": "too high", "changes": [{"op": "set_pressure", "target_bar_g": 800.0 * bar_per_psi}]}),
    ));
    assert_eq!(m, "the target pressure must be above 0 psig and at most 725.1 psig, got 800 psig");
    // The leak calculator of the tests page, asked for this audit: a hole of 0 in.
    let m = message(s.post_json(
        "/api/v1/calc/orifice-leak",
        &json!({"audit_id": id, "diameter_mm": 0.0, "pressure_bar_g": 100.0 * bar_per_psi}),
    ));
    assert!(
        m.starts_with("the hole's diameter must be above 0 in and at most ") && m.ends_with(" in, got 0 in"),
        "{m}"
    );
    // The new-audit page, US chosen, refuses an altitude in feet, in feet, and keeps the form in US.
    let r = s.post_form(
        "/audits",
        &[
            ("name", "High"),
            ("entry_units", "us"),
            ("display_units", "us"),
            ("altitude_m", "30000"),
            ("timezone", "UTC"),
        ],
    );
    assert_eq!(r.status, 422, "{}", r.text);
    assert!(
        r.text.contains("the altitude must be at least -1,640 ft and at most 19,685 ft, got 30000 ft"),
        "{}",
        r.text
    );
    assert!(
        r.text.contains("Altitude, <span data-unit-of=\"altitude\">ft</span>"),
        "the form is drawn again in SI"
    );
}

/// Issue 16: a what-if target below the plant's low limit (its lowest rated pressure less 1 bar,
/// the floor the pressure measure keeps) is refused in the reader's units, naming the field, and
/// the what-if form's input starts at that limit in the same units.
#[test]
fn a_what_if_target_below_the_low_limit_is_refused_in_the_readers_units() {
    let s = Server::start();
    // NIST SP 811 (2008) B.8: 1 psi = 6 894.757 Pa. C1 is rated 7.5 bar(g): the low limit is
    // 6.5 bar(g) = 650 000 / 6 894.757 = 94.27 psig, quoted rounded up to 94.3 psig (a value typed
    // as quoted is accepted), and 1 bar = 14.50 psi.
    let bar_per_psi = 6_894.757_293_168 / 1e5;
    let low_psig = 6.5 / bar_per_psi;
    for (units, target, want) in [
        (
            "us",
            80.0 * bar_per_psi,
            "the target pressure must be at least the plant's low limit of 94.3 psig (its lowest rated \
             pressure less 14.5 psi), got 80 psig",
        ),
        (
            "si",
            6.0,
            "the target pressure must be at least the plant's low limit of 6.5 bar(g) (its lowest rated \
             pressure less 1 bar), got 6 bar(g)",
        ),
    ] {
        let id = chicago_audit(&s, units);
        let r = s.post_json(
            &format!("/api/v1/audits/{id}/scenarios"),
            &json!({"name": "too low", "changes": [{"op": "reduce_leaks", "fraction": 0.2},
                                                   {"op": "set_pressure", "target_bar_g": target}]}),
        );
        assert_eq!(r.status, 422, "{units}: {}", r.text);
        let e = &r.json()["error"];
        assert_eq!(e["field"], "changes[1].target_bar_g", "{units}: {}", r.text);
        assert_eq!(e["message"], want, "{units}");
        // At the limit itself the check passes (and the replay asks for data, a refusal of its own).
        let r = s.post_json(
            &format!("/api/v1/audits/{id}/scenarios"),
            &json!({"name": "at the limit", "changes": [{"op": "set_pressure", "target_bar_g": 6.5}]}),
        );
        assert_eq!(r.json()["error"]["field"], "changes", "{units}: {}", r.text);
        // Below 0 gauge: refused by the range check, in the same units.
        let r = s.post_json(
            &format!("/api/v1/audits/{id}/scenarios"),
            &json!({"name": "vacuum", "changes": [{"op": "set_pressure", "target_bar_g": -0.5}]}),
        );
        assert_eq!(r.json()["error"]["field"], "changes[0].target_bar_g", "{units}: {}", r.text);
        let unit = if units == "us" { "psig" } else { "bar(g)" };
        assert!(r.json()["error"]["message"].as_str().unwrap().contains(&format!("must be above 0 {unit}")));
        // The form's input starts at the low limit, in the page's units.
        let page = s.get(&format!("/audits/{id}/scenarios")).text;
        let at = page.find("name=\"target_bar_g\"").expect("the target input");
        let tag = &page[at..at + page[at..].find('>').unwrap()];
        let min: f64 = tag
            .split("min=\"")
            .nth(1)
            .and_then(|t| t.split('"').next())
            .and_then(|v| v.parse().ok())
            .unwrap_or_else(|| panic!("{units}: no min on {tag}"));
        // Rounded up to the field's 0.1 psig, so that no value below the limit passes the input.
        let want_min = if units == "us" { (low_psig * 10.0_f64).ceil() / 10.0 } else { 6.5 };
        assert!((min - want_min).abs() < 1e-9, "{units}: min {min} against {want_min}");
        assert!(units != "us" || min >= low_psig, "{units}: min {min} below the limit {low_psig}");
    }
}

/// A refused form answers at the URL it was posted to; opening that address again (Enter in the
/// address bar, a bookmark) is a GET on a POST-only route. It must lead back to the form's page, not
/// to a bare 405 with an empty body (found on a walk of the compressor and site forms).
#[test]
fn a_refused_forms_address_opened_again_leads_back_to_its_form() {
    let s = Server::start();
    let id = chicago_audit(&s, "us");
    let r = s.post_form(&format!("/audits/{id}/compressors"), &[("tag", "C2"), ("rated_power_kw", "-5")]);
    assert_eq!(r.status, 422, "{}", r.text);
    let cid = s.get(&format!("/api/v1/audits/{id}")).json()["compressors"][0]["id"].as_i64().unwrap();
    for (path, page) in [
        (format!("/audits/{id}/compressors"), "<h2>Compressors</h2>"),
        (format!("/audits/{id}/site"), "<h2>Site</h2>"),
        (format!("/audits/{id}/receivers"), "<h2>Storage</h2>"),
        (format!("/audits/{id}/compressors/{cid}"), "Edit compressor"),
        (format!("/audits/{id}/treatment/dryers"), "<h2>Add a dryer</h2>"),
        (format!("/audits/{id}/scenarios/1/rename"), "<h2>Scenarios</h2>"),
        ("/audits".to_string(), "<h2>New audit</h2>"),
    ] {
        let r = s.get(&path);
        assert_eq!(r.status, 200, "GET {path}: {}", r.text);
        assert!(r.text.contains(page), "GET {path} did not lead to the page with {page}");
    }
}

/// A refusal is read beside the form's box, so it says the box's meaning in words, never the API's
/// field name or a code range ("unloaded_power_fraction must be ...", "within 0..53" were found on
/// a walk); a share typed as a percentage is answered with the form the box wants.
#[test]
fn form_refusals_name_their_boxes_in_words() {
    let s = Server::start();
    let id = chicago_audit(&s, "si");
    let r = s.post_form(
        &format!("/audits/{id}/compressors"),
        &[
            ("tag", "C2"),
            ("kind", "lubricated_screw"),
            ("control", "load_unload"),
            ("cooling", "air"),
            ("rated_power_kw", "55"),
            ("rated_flow_m3_min", "9.5"),
            ("rated_pressure_bar_g", "7.5"),
            ("unloaded_power_fraction", "25"),
        ],
    );
    assert_eq!(r.status, 422, "{}", r.text);
    assert!(
        r.text.contains(
            "the unloaded power, as a fraction of full-load power (0.25 for 25 %), must be a number from 0 to 0.9, got 25"
        ),
        "{}",
        r.text
    );
    assert!(!r.text.contains("unloaded_power_fraction must"), "{}", r.text);
    let r = s.post_form(&format!("/audits/{id}/site"), &[("operating_weeks_per_year", "60")]);
    assert_eq!(r.status, 422, "{}", r.text);
    assert!(
        r.text.contains("the operating weeks per year must be above 0 and at most 53, got 60"),
        "{}",
        r.text
    );
    assert!(!r.text.contains("0..53"), "{}", r.text);
}
