//! Issue 16's page defects over HTTP: every refusal of a form at once, what the confirmation
//! pages and the messages after a delete or a re-import say, counts written with grouped digits,
//! the re-map page's unread columns, the currency of a new US audit and a default kept a default.

use crate::support::*;
use serde_json::json;

/// 2026-05-04T08:00:00Z, the start of [`cycling_csv`].
const START: i64 = 1_777_881_600;

fn us_audit(s: &Server) -> i64 {
    let r = s.post_json(
        "/api/v1/audits",
        &json!({"name": "Chicago plant", "site": {"timezone": "America/Chicago", "display_units": "us"}}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    r.json()["id"].as_i64().unwrap()
}

/// The refusals a page lists (`<li data-refused="field">`), as (field, text).
fn refusals(page: &str) -> Vec<(String, String)> {
    page.split("<li data-refused=\"")
        .skip(1)
        .map(|rest| {
            let (field, tail) = rest.split_once("\">").unwrap();
            (field.to_string(), tail.split_once("</li>").unwrap().0.to_string())
        })
        .collect()
}

#[test]
fn a_refused_form_lists_every_field_and_keeps_what_was_typed() {
    let s = Server::start();
    let id = us_audit(&s);
    // A compressor with -120 cfm and 2000 psig: both refused at once, in the units typed.
    let r = s.post_form(
        &format!("/audits/{id}/compressors"),
        &[
            ("entry_units", "us"),
            ("tag", "C9"),
            ("kind", "lubricated_screw"),
            ("control", "load_unload"),
            ("cooling", "air"),
            ("rated_power_kw", "75"),
            ("rated_flow_m3_min", "-120"),
            ("rated_pressure_bar_g", "2000"),
        ],
    );
    assert_eq!(r.status, 422, "{}", r.text);
    let got = refusals(&r.text);
    let fields: Vec<&str> = got.iter().map(|(f, _)| f.as_str()).collect();
    assert_eq!(fields, ["rated_flow_m3_min", "rated_pressure_bar_g"], "{got:?}");
    assert!(got[0].1.contains("-120 cfm") && got[1].1.contains("2000 psig"), "{got:?}");
    // What was typed goes back to the page, for its form (found by its action).
    assert!(r.text.contains(&format!("\"action\":\"/audits/{id}/compressors\"")), "{}", r.text);
    assert!(r.text.contains("\"rated_pressure_bar_g\":\"2000\"") && r.text.contains("\"tag\":\"C9\""));
    assert_eq!(s.get(&format!("/api/v1/audits/{id}")).json()["compressors"], json!([]));
    // A receiver with no name and a negative volume: both.
    let r = s.post_form(
        &format!("/audits/{id}/receivers"),
        &[("entry_units", "us"), ("name", " "), ("volume_m3", "-5")],
    );
    assert_eq!(r.status, 422, "{}", r.text);
    let fields: Vec<String> = refusals(&r.text).into_iter().map(|(f, _)| f).collect();
    assert_eq!(fields, ["name", "volume_m3"]);
    // The site with an altitude of 30,000 ft (above 6,000 m = 19,685 ft) and a heater efficiency
    // of 5: both, and nothing of the form stored.
    let r = s.post_form(
        &format!("/audits/{id}/site"),
        &[
            ("entry_units", "us"),
            ("name", "Chicago plant"),
            ("altitude_m", "30000"),
            ("heater_efficiency", "5"),
            ("currency", "CAD"),
        ],
    );
    assert_eq!(r.status, 422, "{}", r.text);
    let got = refusals(&r.text);
    let fields: Vec<&str> = got.iter().map(|(f, _)| f.as_str()).collect();
    assert_eq!(fields, ["altitude_m", "heater_efficiency"], "{got:?}");
    assert!(got[0].1.contains("30000 ft"), "{got:?}");
    assert_eq!(s.get(&format!("/api/v1/audits/{id}")).json()["site"]["currency"], "USD");
}

#[test]
fn a_new_us_audit_prices_in_dollars_unless_told_otherwise() {
    let s = Server::start();
    // Through the page's form, US customary chosen and no currency posted; and through the API.
    let r = s.post_form(
        "/audits",
        &[
            ("entry_units", "us"),
            ("name", "US plant"),
            ("display_units", "us"),
            ("timezone", "America/Chicago"),
        ],
    );
    assert_eq!(r.status, 303, "{}", r.text);
    let id: i64 = r.header("location").unwrap().trim_start_matches("/audits/").parse().unwrap();
    assert_eq!(s.get(&format!("/api/v1/audits/{id}")).json()["site"]["currency"], "USD");
    let api = us_audit(&s);
    assert_eq!(s.get(&format!("/api/v1/audits/{api}")).json()["site"]["currency"], "USD");
    // SI keeps the documented default, and a currency given is kept.
    let si = s.post_json("/api/v1/audits", &json!({"name": "SI plant"})).json()["id"].as_i64().unwrap();
    assert_eq!(s.get(&format!("/api/v1/audits/{si}")).json()["site"]["currency"], "EUR");
    let cad = s
        .post_json(
            "/api/v1/audits",
            &json!({"name": "CA", "site": {"display_units": "us", "currency": "CAD"}}),
        )
        .json()["id"]
        .as_i64()
        .unwrap();
    assert_eq!(s.get(&format!("/api/v1/audits/{cad}")).json()["site"]["currency"], "CAD");
    // The form drawn in US units offers USD, marked to follow the unit switch.
    let page = s.get("/?units=us").text;
    assert!(page.contains("name=\"currency\" value=\"USD\" maxlength=\"8\" data-currency-default"), "{page}");
}

#[test]
fn an_unloaded_fraction_left_blank_stays_a_default_through_the_edit_page() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let cid = s.get(&format!("/api/v1/audits/{id}")).json()["compressors"][0]["id"].as_i64().unwrap();
    let page = s.get(&format!("/audits/{id}/compressors/{cid}/edit")).text;
    // The lubricated screw's 0.25 (core::datasheet's table) is the placeholder, not a value.
    assert!(
        page.contains("name=\"unloaded_power_fraction\" type=\"text\" inputmode=\"decimal\" step=\"any\" value=\"\" placeholder=\"0.25 (typical for the kind)\""),
        "{page}"
    );
    // Saved as shown with another kind, the fraction follows the new kind: oil-free screw 0.20.
    let fields = [
        ("tag", "C1"),
        ("kind", "oil_free_screw"),
        ("control", "load_unload"),
        ("cooling", "air"),
        ("rated_power_kw", "55"),
        ("rated_flow_m3_min", "9.5"),
        ("rated_pressure_bar_g", "7.5"),
        ("unloaded_power_fraction", ""),
    ];
    let r = s.post_form(&format!("/audits/{id}/compressors/{cid}"), &fields);
    assert_eq!(r.status, 303, "{}", r.text);
    let c = s.get(&format!("/api/v1/audits/{id}")).json()["compressors"][0].clone();
    assert_eq!(c["unloaded_power_fraction"], 0.2, "{c}");
    // A fraction typed is shown as typed.
    let mut typed = fields;
    typed[7] = ("unloaded_power_fraction", "0.3");
    assert_eq!(s.post_form(&format!("/audits/{id}/compressors/{cid}"), &typed).status, 303);
    let page = s.get(&format!("/audits/{id}/compressors/{cid}/edit")).text;
    assert!(
        page.contains(
            "name=\"unloaded_power_fraction\" type=\"text\" inputmode=\"decimal\" step=\"any\" value=\"0.3\""
        ),
        "{page}"
    );
}

#[test]
fn confirmations_and_messages_say_what_in_words() {
    let s = Server::start();
    let id = us_audit(&s);
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/compressors"),
        &json!({"tag": "C1", "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                "rated_power_kw": 55, "rated_flow_m3_min": 9.5, "rated_pressure_bar_g": 7.5}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    // One hour at 10 s: 360 rows of time, C1 kW, header bar and flow m3/min (support::cycling_csv).
    let up = s.upload(id, "one hour.csv", cycling_csv(1).as_bytes(), &cycling_mapping(), "");
    assert_eq!(up.status, 201, "{}", up.text);
    let uid = up.json()["upload_id"].as_i64().unwrap();
    // The file's confirmation counts its readings per quantity, in words.
    let page = s.get(&format!("/audits/{id}/uploads/{uid}/delete")).text;
    assert!(
        page.contains(
            "360 rows, 1,080 readings (360 power readings, 360 flow readings and 360 pressure readings)"
        ),
        "{page}"
    );
    // A load/unload test, named by its kind, its number in the table and its inputs as the table
    // says them (a walk was shown a recording time the table never shows).
    let t = s.post_json(
        &format!("/api/v1/audits/{id}/field-tests"),
        &json!({"kind": "load_unload", "compressor": "C1", "loaded_s": 20, "unloaded_s": 80}),
    );
    assert_eq!(t.status, 201, "{}", t.text);
    let tid = t.json()["id"].as_i64().unwrap();
    let page = s.get(&format!("/audits/{id}/tests/{tid}/delete")).text;
    assert!(page.contains(&format!("Delete the load/unload test no. {tid}?")), "{page}");
    assert!(
        page.contains("Load/unload timing: Compressor C1: loaded for 20 s and unloaded for 80 s on average"),
        "{page}"
    );
    assert!(!page.contains(" CST") && !page.contains(" CDT"), "no recording time: {page}");
    assert!(!page.contains("load unload"), "{page}");
    let r = s.post_form(&format!("/audits/{id}/tests/{tid}/delete"), &[("confirm", "yes")]);
    assert_eq!(r.status, 303);
    let page = s.get(r.header("location").unwrap()).text;
    assert!(
        page.contains("id=\"done-message\"") && page.contains(&format!("The load/unload test no. {tid} ")),
        "{page}"
    );
    // A re-map says it was done, naming the file.
    let r = s.post_form(
        &format!("/audits/{id}/uploads/{uid}/remap"),
        &[("col0_unit", "kW"), ("timezone", "UTC"), ("format", "rfc3339")],
    );
    assert_eq!(r.status, 303, "{}", r.text);
    let back = r.header("location").unwrap().to_string();
    assert_eq!(back, format!("/audits/{id}?done=upload-remapped&what=one%20hour.csv"));
    let page = s.get(&back).text;
    assert!(
        page.contains("The file \u{201c}one hour.csv\u{201d} was read again with the corrected mapping"),
        "{page}"
    );
    // Counts in the file table with grouped digits, as in the import's reply.
    assert!(page.contains("<td class=\"num\">1,080</td>"), "{page}");
    // An unknown code says nothing, and a name is escaped.
    let page = s.get(&format!("/audits/{id}?done=%3Cb%3E&what=%3Cscript%3E")).text;
    assert!(!page.contains("done-message"));
    let page = s.get(&format!("/audits/{id}?done=upload-deleted&what=%3Cscript%3E")).text;
    assert!(page.contains("id=\"done-message\""), "{page}");
    assert!(!page.contains("\u{201c}<script>"), "the name is escaped: {page}");
}

#[test]
fn the_remap_page_offers_unread_columns_as_not_read_under_the_logger_files_tab() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    // A column the sniffer cannot name (a count with no unit), left out at upload.
    let mut csv = String::from("time,C1 kW,header bar,flow m3/min,batch\n");
    for (i, line) in cycling_csv_at(START, 1).lines().skip(1).enumerate() {
        csv.push_str(&format!("{line},{}\n", i % 7));
    }
    let up = s.upload(id, "batch.csv", csv.as_bytes(), &cycling_mapping(), "");
    assert_eq!(up.status, 201, "{}", up.text);
    let uid = up.json()["upload_id"].as_i64().unwrap();
    let page = s.get(&format!("/audits/{id}/uploads/{uid}/remap")).text;
    let row =
        page.split("name=\"extra0_column\" value=\"batch\"").nth(1).expect("the batch column is offered");
    let row = row.split("</tr>").next().unwrap();
    assert!(row.contains("<option value=\"\" selected>not read</option>"), "{row}");
    assert!(row.contains("<option value=\"\" selected>—</option>"), "no unit chosen: {row}");
    assert!(!row.contains("selected>kW<"), "{row}");
    // The tab of the logger files is the current one.
    assert!(page.contains(&format!("<a href=\"/audits/{id}/upload\" aria-current=\"page\">")), "{page}");
    // Ticked but left "not read": the file is read again without it.
    let r = s.post_form(
        &format!("/audits/{id}/uploads/{uid}/remap"),
        &[("extra0_column", "batch"), ("extra0_use", "1"), ("timezone", "UTC"), ("format", "rfc3339")],
    );
    assert_eq!(r.status, 303, "{}", r.text);
}

#[test]
fn a_refused_filter_lists_every_field_beside_its_own() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    // A negative rated flow and a measured drop of 12 bar (above the 10 bar of
    // core::treatment's MAX_FILTER_DROP_BAR) typed together: both refused, nothing stored.
    let r = s.post_form(
        &format!("/audits/{id}/treatment/filters"),
        &[
            ("entry_units", "si"),
            ("tag", "F1"),
            ("kind", "coalescing"),
            ("rated_flow_m3_min", "-4"),
            ("clean_drop_bar", "0.1"),
            ("measured_drop_bar", "12"),
        ],
    );
    assert_eq!(r.status, 422, "{}", r.text);
    let got = refusals(&r.text);
    let fields: Vec<&str> = got.iter().map(|(f, _)| f.as_str()).collect();
    assert_eq!(fields, ["rated_flow_m3_min", "measured_drop_bar"], "{got:?}");
    assert!(r.text.contains(&format!("\"action\":\"/audits/{id}/treatment/filters\"")));
    assert_eq!(s.get(&format!("/api/v1/audits/{id}/filters")).json()["filters"], json!([]));
}
