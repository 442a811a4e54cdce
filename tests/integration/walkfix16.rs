//! Issue 16's walk (walk16f): what the files table and the upload form say about a current column
//! and a renamed compressor, and the quality report's word on a power far below the data sheet.

use crate::support::{jiff_like_rfc3339, Server};
use serde_json::{json, Value};

/// Two hours of a compressor's current at 10 s, cycling between 95 A and 35 A.
fn amps_csv() -> String {
    let mut csv = String::from("time,C1 A\n");
    for i in 0..720i64 {
        let amps = if i % 20 < 4 { 95.0 } else { 35.0 };
        csv.push_str(&format!("{},{amps}\n", jiff_like_rfc3339(1_777_881_600 + i * 10)));
    }
    csv
}

fn page_data(html: &str) -> Value {
    let start = html.find("id=\"page-data\">").expect("the page data") + "id=\"page-data\">".len();
    let end = start + html[start..].find("</script>").expect("its end");
    serde_json::from_str(&html[start..end]).expect("JSON")
}

#[test]
fn a_current_column_says_its_voltage_and_the_form_assumes_the_audits_own() {
    let s = Server::start();
    // The form's defaults follow the audit's unit system: 460 V in a US audit (the motor rating for
    // 480 V systems, common practice), 400 V in an SI one (IEC 60038), said as assumptions.
    for (units, volts) in [("us", 460.0), ("si", 400.0)] {
        let id = s.audit_in_chicago(&format!("plant {units}"), units);
        let html = s.get(&format!("/audits/{id}/upload")).text;
        let d = &page_data(&html)["current_defaults"];
        assert_eq!(d["volts"].as_f64(), Some(volts), "{units}: {d}");
        assert_eq!((d["phases"].as_i64(), d["power_factor"].as_f64()), (Some(3), Some(0.85)), "{d}");
        let note = d["note"].as_str().unwrap();
        assert!(note.starts_with(&format!("Assumed, not read from the file: {volts} V")), "{note}");
        assert!(note.contains("nameplate"), "{note}");
    }
    // The files table says what the current was read with, not only "read as power".
    let id = s.us_audit_in_chicago("amps");
    let mapping = json!({"timestamp": {"column": "time", "format": "rfc3339"}, "columns": [
        {"column": "C1 A", "quantity": "current", "unit": "A", "compressor": "C1", "volts": 460, "power_factor": 0.85}]});
    let r = s.upload(id, "amps.csv", amps_csv().as_bytes(), &mapping, "");
    assert_eq!(r.status, 201, "{}", r.text);
    let html = s.get(&format!("/audits/{id}/upload")).text;
    assert!(html.contains("C1 current in A, read as power at 460 V, 3 phases, PF 0.85"), "{html}");
    assert!(!html.contains("(read as power)"));
}

#[test]
fn a_renamed_compressor_is_named_by_its_new_tag_in_the_files_table() {
    // A walk renamed C1 to K1 and the files table still said "C1 current ... in A".
    let s = Server::start();
    let id = s.us_audit_in_chicago("rename");
    let mapping = json!({"timestamp": {"column": "time", "format": "rfc3339"}, "columns": [
        {"column": "C1 A", "quantity": "current", "unit": "A", "compressor": "C1", "volts": 460, "power_factor": 0.85}]});
    let r = s.upload(id, "amps.csv", amps_csv().as_bytes(), &mapping, "");
    assert_eq!(r.status, 201, "{}", r.text);
    let audit = s.get(&format!("/api/v1/audits/{id}")).json();
    let c = audit["compressors"][0].clone();
    let cid = c["id"].as_i64().expect("the compressor's id");
    let put = json!({"tag": "K1", "kind": c["kind"], "control": c["control"], "cooling": c["cooling"],
                     "rated_power_kw": c["rated_power_kw"], "rated_flow_m3_min": c["rated_flow_m3_min"],
                     "rated_pressure_bar_g": c["rated_pressure_bar_g"]});
    let r = s.put_json(&format!("/api/v1/audits/{id}/compressors/{cid}"), &put);
    assert!(r.status == 200 || r.status == 204, "{}: {}", r.status, r.text);
    let html = s.get(&format!("/audits/{id}/upload")).text;
    assert!(html.contains("K1 current in A, read as power at 460 V"), "{html}");
    assert!(!html.contains("C1 current"), "the old tag is gone");
    // The stored mapping follows, so a correction of the mapping finds the machine.
    let uploads = s.get(&format!("/api/v1/audits/{id}/uploads")).json();
    let list = uploads.as_array().or_else(|| uploads["uploads"].as_array()).expect("the uploads");
    assert_eq!(list[0]["mapping"]["columns"][0]["compressor"], "K1", "{uploads}");
    // The readings stay the machine's: its energy is unchanged by the rename.
    let j = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    assert_eq!(j["compressors"][0]["tag"], "K1");
    assert!(j["compressors"][0]["energy_kwh"].as_f64().unwrap() > 0.0, "{}", j["compressors"][0]);
}

#[test]
fn a_power_in_kw_mapped_as_w_is_a_finding_at_upload() {
    // A walk mapped a column logged in kW as W on a 55 kW machine: the reply said nothing was wrong.
    // 40 kW read as W is 40 W, under 5 % of 55 kW (2.75 kW): an unloaded screw draws 20-35 % of its
    // full load (common practice).
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let mut csv = String::from("time,P\n");
    for i in 0..120i64 {
        let kw = if i % 4 == 0 { -0.2 } else { 40.0 };
        csv.push_str(&format!("{},{kw}\n", jiff_like_rfc3339(1_777_881_600 + i * 60)));
    }
    let mapping = json!({"timestamp": {"column": "time", "format": "rfc3339"}, "columns": [
        {"column": "P", "quantity": "power", "unit": "W", "compressor": "C1"}]});
    let r = s.upload(id, "w.csv", csv.as_bytes(), &mapping, "");
    assert_eq!(r.status, 201, "kept, never refused: {}", r.text);
    let warnings: Vec<String> =
        r.json()["warnings"].as_array().unwrap().iter().map(|w| w.as_str().unwrap().to_string()).collect();
    assert!(
        warnings.iter().any(|w| w.starts_with("P: implausible: power of C1 (the mean over a minute or more) never above 40.0 W, under 5 % of its rated 55 kW")
            && w.contains("a power logged in kW read as W")),
        "{warnings:?}"
    );
    assert!(
        warnings.iter().any(|w| w.starts_with("P: 30 readings out of range (negative power")),
        "{warnings:?}"
    );
}

#[test]
fn two_columns_read_as_one_machines_power_are_named_in_the_refusal() {
    // A walk was told "two columns map to the same channel (power C1)": neither column was named.
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let mut csv = String::from("time,planned kW,actual kW\n");
    for i in 0..60 {
        csv.push_str(&format!("{},30.0,12.5\n", jiff_like_rfc3339(1_777_881_600 + i * 60)));
    }
    let mapping = json!({"timestamp": {"column": "time", "format": "rfc3339"}, "columns": [
        {"column": "planned kW", "quantity": "power", "unit": "kW", "compressor": "C1"},
        {"column": "actual kW", "quantity": "power", "unit": "kW", "compressor": "C1"}]});
    let r = s.upload(id, "two.csv", csv.as_bytes(), &mapping, "");
    assert_eq!(r.status, 422, "{}", r.text);
    let e = &r.json()["error"];
    assert_eq!(
        e["message"],
        "the columns \u{201c}planned kW\u{201d} and \u{201c}actual kW\u{201d} are both read as the power of C1 \
         (a current is read as power): leave one out, or give it another compressor or measuring point's name"
    );
    assert_eq!(e["field"], "columns[1]");
    assert!(!e["message"].as_str().unwrap().contains("channel"));
}

#[test]
fn a_letter_typed_for_a_digit_in_a_field_test_is_refused_in_words() {
    // A walk got "this field test cannot be read: duration_s: invalid type: string \"6O\", expected f64".
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/field-tests"),
        &json!({"kind": "bleed_down", "volume_m3": 2.5, "start_pressure_bar_g": 7.0, "end_pressure_bar_g": 5.5,
                "duration_s": "6O"}),
    );
    assert_eq!(r.status, 422, "{}", r.text);
    let e = &r.json()["error"];
    assert_eq!(e["field"], "duration_s");
    assert_eq!(
        e["message"],
        "this field test cannot be read: the duration must be a number, got \u{201c}6O\u{201d}"
    );
}

#[test]
fn a_decay_events_times_are_said_on_the_sites_clock_with_its_zones_abbreviation() {
    // The field-tests page's decay table said "Sun 15 Mar 2026 10:00 GMT+1" (the browser's en-US
    // name for Berlin's winter offset) where every other time says CET, as the tz database does.
    let s = Server::demo();
    let audit = s.get("/api/v1/audits/1").json();
    let tz = audit["site"]["timezone"].as_str().expect("the demo's zone").to_string();
    let r = s.get("/api/v1/audits/1/decay-events");
    assert_eq!(r.status, 200, "{}", r.text);
    let events = r.json()["events"].as_array().expect("events").clone();
    assert!(!events.is_empty());
    for e in &events {
        for (ms, local) in [("start_ms", "start_local"), ("end_ms", "end_local")] {
            let t = e[ms].as_i64().unwrap();
            let said = e[local].as_str().unwrap_or_else(|| panic!("no {local}: {e}"));
            // The zone's offset then, from the tz database through jiff (an independent reading
            // of the same instant), and the abbreviation every page uses for it.
            let zoned =
                jiff::Timestamp::from_millisecond(t).unwrap().to_zoned(jiff::tz::TimeZone::get(&tz).unwrap());
            assert_eq!(said, zoned.strftime("%a %-d %b %Y %H:%M %Z").to_string());
            assert!(!said.contains("GMT"), "{said}");
            // The demo plant's clock is Central European (its scenario).
            assert!(said.ends_with(" CET") || said.ends_with(" CEST"), "{said}");
        }
    }
}

#[test]
fn the_units_read_carry_from_the_report_to_the_findings_and_the_print_date_reads_as_every_date() {
    // A walk switched the report to US units and the nav's "Findings" went back to SI; the
    // findings said "Printed 2026-12-05" where every other date reads "Sat 5 Dec 2026".
    let s = Server::demo();
    let report = s.get("/audits/1/report?units=us").text;
    assert!(
        report.contains("href=\"/audits/1/findings?units=us\""),
        "the nav's findings link keeps US units"
    );
    assert!(report.contains("href=\"/audits/1/report?units=us\""));
    let findings = s.get("/audits/1/findings?units=us").text;
    assert!(findings.contains("href=\"/audits/1/report?units=us\""), "and back");
    // The demo is read in SI: its own units need no query.
    let plain = s.get("/audits/1/report").text;
    assert!(plain.contains("href=\"/audits/1/findings\""));
    assert!(s.get("/audits/1/report?units=si").text.contains("href=\"/audits/1/findings\""));
    let start = findings.find("<dt>Printed</dt><dd>").expect("the print date") + "<dt>Printed</dt><dd>".len();
    let printed = &findings[start..start + findings[start..].find("</dd>").unwrap()];
    // "Sat 5 Dec 2026": a weekday, the day, the month's name, the year.
    let parts: Vec<&str> = printed.split(' ').collect();
    assert_eq!(parts.len(), 4, "{printed}");
    assert!(["Mon", "Tue", "Wed", "Thu", "Fri", "Sat", "Sun"].contains(&parts[0]), "{printed}");
    assert!(parts[1].parse::<u8>().is_ok_and(|d| (1..=31).contains(&d)), "{printed}");
    assert!(
        ["Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec"]
            .contains(&parts[2]),
        "{printed}"
    );
    assert!(parts[3].len() == 4 && parts[3].parse::<u16>().is_ok(), "{printed}");
}
