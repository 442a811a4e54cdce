//! Issue 16, a technician corrects any mistake from the pages and reads every figure in words and
//! in the reader's units: a whole audit deleted (page and API), each file's mapping said in the
//! files table, values put back into forms at their unit's resolution, the flow unit's note true
//! and in the audit's units, a dryer without purge said so, and the report's days.

use crate::ingest::on_db;
use crate::support::*;

/// Rows of `table` whose `column` is `id`.
fn rows(db: &std::path::Path, table: &str, column: &str, id: i64) -> i64 {
    let sql = format!("SELECT COUNT(*) FROM {table} WHERE {column} = ?");
    on_db(
        db,
        |pool| async move { sqlx::query_scalar::<_, i64>(&sql).bind(id).fetch_one(&pool).await.unwrap() },
    )
}

/// Every row an audit holds, by table: its own tables by `audit_id`, its uploads' by `upload_id`.
fn held(db: &std::path::Path, audit: i64, uploads: &[i64]) -> Vec<(String, i64)> {
    let mut out = vec![];
    for t in [
        "audit",
        "compressor",
        "receiver",
        "upload",
        "channel",
        "field_test",
        "cost_override",
        "summary_cache",
        "scenario",
        "measure_plan",
        "treatment_item",
    ] {
        let col = if t == "audit" { "id" } else { "audit_id" };
        out.push((t.to_string(), rows(db, t, col, audit)));
    }
    for t in ["upload_channel", "chunk", "rollup_minute", "rollup_hour", "upload_original"] {
        out.push((t.to_string(), uploads.iter().map(|u| rows(db, t, "upload_id", *u)).sum()));
    }
    out
}

#[test]
fn deleting_an_audit_takes_all_it_holds_after_a_confirmation_and_leaves_the_others() {
    let s = Server::start();
    let doomed = s.audit_with_compressor("C1");
    let kept = s.audit_with_compressor("C1");
    let csv = cycling_csv(3);
    let mut uploads = vec![];
    for id in [doomed, kept] {
        let r = s.upload(id, "plant.csv", csv.as_bytes(), &cycling_mapping(), "");
        assert_eq!(r.status, 201, "{}", r.text);
        uploads.push(r.json()["upload_id"].as_i64().unwrap());
    }
    // Everything else an audit can hold, on the one to delete.
    let a = format!("/api/v1/audits/{doomed}");
    assert_eq!(s.post_json(&format!("{a}/receivers"), &json!({"name": "R1", "volume_m3": 2})).status, 201);
    let r = s.post_json(
        &format!("{a}/dryers"),
        &json!({"tag": "D1", "kind": "refrigerated", "rated_flow_m3_min": 10, "power_kw": 1.5}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    assert_eq!(
        s.put_json(&format!("{a}/costs/repair_leaks"), &json!({"implementation_cost": 900})).status,
        200
    );
    let r = s.post_json(
        &format!("{a}/scenarios"),
        &json!({"name": "more storage", "changes": [{"op": "add_storage", "volume_m3": 3.0}]}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let kept_before = s.get(&format!("/api/v1/audits/{kept}/summary")).json()["system"].clone();
    let before = held(&s.db, doomed, &uploads[..1]);
    for t in [
        "audit",
        "compressor",
        "receiver",
        "upload",
        "channel",
        "cost_override",
        "scenario",
        "treatment_item",
        "upload_channel",
        "chunk",
        "rollup_minute",
        "rollup_hour",
        "upload_original",
    ] {
        let n = before.iter().find(|(k, _)| k == t).unwrap().1;
        assert!(n > 0, "the audit holds no {t} to delete: {before:?}");
    }

    // The page asks first, saying what goes, and a post without the confirmation only asks again.
    let ask = s.get(&format!("/audits/{doomed}/delete"));
    assert_eq!(ask.status, 200);
    assert!(ask.text.contains("1 logger file with"), "{}", ask.text);
    assert!(ask.text.contains("1 what-if scenario"), "{}", ask.text);
    assert!(ask.text.contains("1 treatment record"), "{}", ask.text);
    let r = s.post_form(&format!("/audits/{doomed}/delete"), &[]);
    assert_eq!(r.status, 303);
    assert_eq!(r.header("location"), Some(format!("/audits/{doomed}/delete").as_str()));
    assert_eq!(
        s.get(&format!("/api/v1/audits/{doomed}")).status,
        200,
        "not deleted without the confirmation"
    );
    // Confirmed: gone, and the list of audits says so.
    let r = s.post_form(&format!("/audits/{doomed}/delete"), &[("confirm", "yes")]);
    assert_eq!(r.status, 303, "{}", r.text);
    let to = r.header("location").unwrap().to_string();
    assert!(to.starts_with("/?done=audit-deleted"), "{to}");
    let index = s.get(&to).text;
    assert!(index.contains("The audit \u{201c}test plant\u{201d} was deleted"), "{index}");
    assert_eq!(s.get(&format!("/api/v1/audits/{doomed}")).status, 404);
    let after = held(&s.db, doomed, &uploads[..1]);
    assert!(after.iter().all(|(_, n)| *n == 0), "left behind: {after:?}");
    // The other audit keeps its rows and its figures.
    assert!(held(&s.db, kept, &uploads[1..]).iter().filter(|(t, _)| t == "chunk").all(|(_, n)| *n > 0));
    assert_eq!(s.get(&format!("/api/v1/audits/{kept}/summary")).json()["system"], kept_before);
    // The same file imports again into a new audit: nothing of the deleted one is in its way.
    let again = s.audit_with_compressor("C1");
    assert_eq!(s.upload(again, "plant.csv", csv.as_bytes(), &cycling_mapping(), "").status, 201);

    // The API deletes the same way: 204, then 404.
    assert_eq!(s.delete(&format!("/api/v1/audits/{kept}")).status, 204);
    assert_eq!(s.delete(&format!("/api/v1/audits/{kept}")).status, 404);
    assert!(held(&s.db, kept, &uploads[1..]).iter().all(|(_, n)| *n == 0));
}

#[test]
fn the_files_table_says_how_each_file_was_read() {
    let s = Server::start();
    let id = s.us_audit_in_chicago("words");
    let r = s.upload(id, "plant.csv", cycling_csv(2).as_bytes(), &cycling_mapping(), "");
    assert_eq!(r.status, 201, "{}", r.text);
    for page in [format!("/audits/{id}"), format!("/audits/{id}/upload")] {
        let html = s.get(&page).text;
        let table = html.split("id=\"files-table\"").nth(1).expect("files table");
        for said in [
            "<div>C1 power in kW</div>",
            "<div>header pressure in bar(g)</div>",
            "<div>flow in m³/min</div>",
            "times read on a UTC clock, shown in the site&#39;s (America/Chicago)",
        ] {
            assert!(table.contains(said), "{page}: {said} not in the files table");
        }
    }
}

#[test]
fn a_new_audits_zone_is_utc_without_scripts_and_marked_for_the_browsers() {
    let s = Server::start();
    let html = s.get("/").text;
    let input = html.split("name=\"timezone\"").nth(1).unwrap().split('>').next().unwrap();
    assert!(input.contains("value=\"UTC\"") && input.contains("data-zone-default"), "{input}");
}

#[test]
fn values_in_forms_and_limits_read_at_their_units_resolution() {
    let s = Server::start();
    let id = s.us_audit_in_chicago("rounding");
    // 75 °F typed in a US audit, then the audit switched to SI: (75 - 32) / 1.8 = 23.9 °C
    // (NIST SP 811 B.9), not 23.8888889.
    let r = s.patch_json(
        &format!("/api/v1/audits/{id}"),
        &json!({"site": {"inlet_temperature_c": (75.0 - 32.0) / 1.8}}),
    );
    assert_eq!(r.status, 200, "{}", r.text);
    let r = s.patch_json(&format!("/api/v1/audits/{id}"), &json!({"site": {"display_units": "si"}}));
    assert_eq!(r.status, 200, "{}", r.text);
    let page = s.get(&format!("/audits/{id}")).text;
    assert!(
        page.contains(
            "name=\"inlet_temperature_c\" type=\"text\" inputmode=\"decimal\" step=\"any\" value=\"23.9\""
        ),
        "not 23.9"
    );
    assert!(!page.contains("23.8888"), "a raw conversion in the form");
    // Saved unchanged, the stored value keeps its bits.
    let stored =
        s.get(&format!("/api/v1/audits/{id}")).json()["site"]["inlet_temperature_c"].as_f64().unwrap();
    assert_eq!(stored, (75.0 - 32.0) / 1.8);

    // Back in US units: the what-if target's min is the plant's low limit, C1's 7.5 bar(g) less
    // 1 bar = 6.5 bar(g) = 94.27 psig (psi = 6 894.757 Pa, NIST SP 811), rounded up to 0.1 psig.
    s.patch_json(&format!("/api/v1/audits/{id}"), &json!({"site": {"display_units": "us"}}));
    let csv = cycling_csv(3);
    assert_eq!(s.upload(id, "plant.csv", csv.as_bytes(), &cycling_mapping(), "").status, 201);
    let page = s.get(&format!("/audits/{id}/scenarios")).text;
    let psig: f64 = 6.5e5 / 6_894.757_293_168;
    let min = (psig * 10.0).ceil() / 10.0;
    assert!(
        page.contains(&format!(
            "name=\"target_bar_g\" type=\"text\" inputmode=\"decimal\" step=\"any\" min=\"{min}\""
        )),
        "min {min}"
    );

    // The orifice calculator's upper limit, 100 mm, is 3.937 in (1 in = 25.4 mm exactly): quoted
    // as 3.93 in, which is itself accepted.
    let r = s.post_json(
        "/api/v1/calc/orifice-leak",
        &json!({"diameter_mm": 150.0, "pressure_bar_g": 6.0, "audit_id": id}),
    );
    assert_eq!(r.status, 422);
    assert!(r.text.contains("at most 3.93 in"), "{}", r.text);
    let r = s.post_json(
        "/api/v1/calc/orifice-leak",
        &json!({"diameter_mm": 3.93 * 25.4, "pressure_bar_g": 6.0, "audit_id": id}),
    );
    assert_eq!(r.status, 200, "the limit quoted is accepted: {}", r.text);
}

#[test]
fn a_flow_units_note_quotes_no_power_the_file_does_not_log_and_speaks_the_audits_units() {
    let s = Server::start();
    let id = s.us_audit_in_chicago("notes");
    // Volts and amps, no power column; 400 V × 20 A = 8 kW over 1,300 l/min = 1.3 m³/min.
    let mut csv = String::from("time;Voltage;Current;Flow rate\n");
    for i in 0..40 {
        csv.push_str(&format!("2026-05-04 08:{:02}:00;{};20;{}\n", i, 400 + i % 2, 1_300 + i % 3));
    }
    let r = s.sniff(id, "rig.csv", csv.as_bytes());
    assert_eq!(r.status, 200, "{}", r.text);
    let cols = r.json()["sniffed"]["columns"].as_array().unwrap().clone();
    let flow = cols.iter().find(|c| c["column"] == "Flow rate").unwrap();
    assert_eq!(flow["unit"], "l_min");
    let note = flow["note"].as_str().unwrap();
    assert!(note.contains("volts times amps") && !note.contains(" kW)"), "{note}");
    assert!(note.contains("kW/100 cfm") && !note.contains("m³"), "a US audit's note: {note}");
}

#[test]
fn a_dryer_without_purge_says_so_in_words() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    assert_eq!(s.upload(id, "plant.csv", cycling_csv(3).as_bytes(), &cycling_mapping(), "").status, 201);
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/dryers"),
        &json!({"tag": "D1", "kind": "refrigerated", "rated_flow_m3_min": 10, "power_kw": 1.5}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    assert_eq!(
        sm["transmission"]["dryers"][0]["purge_m3_min"].as_f64(),
        Some(0.0),
        "a refrigerated dryer purges no air"
    );
    for page in ["report", "findings"] {
        let html = s.get(&format!("/audits/{id}/{page}")).text;
        let row = html.split("Dryer D1").nth(1).unwrap_or_else(|| panic!("{page}: no dryer row"));
        let row = &row[..row.find("</tr>").unwrap_or(row.len())];
        assert!(row.contains("no purge air") && !row.contains("purge 0"), "{page}: {row}");
    }
}

#[test]
fn a_compressors_confirmation_keeps_a_space_between_its_sentences() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    assert_eq!(s.upload(id, "plant.csv", cycling_csv(2).as_bytes(), &cycling_mapping(), "").status, 201);
    let cid = s.get(&format!("/api/v1/audits/{id}")).json()["compressors"][0]["id"].as_i64().unwrap();
    let page = s.get(&format!("/audits/{id}/compressors/{cid}/delete")).text;
    // The whole text of the page, tags taken out (as a reader of its text content sees it).
    let mut text = String::new();
    let mut in_tag = false;
    for ch in page.chars() {
        match ch {
            '<' => in_tag = true,
            '>' => in_tag = false,
            c if !in_tag => text.push(c),
            _ => {}
        }
    }
    assert!(text.contains("is removed from the audit. Its logged readings ("), "{text}");
}

#[test]
fn the_demos_day_selector_offers_only_days_that_hold_readings() {
    let s = Server::demo();
    let html = s.get("/audits/1/report").text;
    let data =
        html.split("id=\"chart-data\">").nth(1).and_then(|d| d.split("</script>").next()).expect("page data");
    let d: Value = serde_json::from_str(data).expect("page data JSON");
    let last = d["last_ms"].as_i64().unwrap();
    let days = d["days"].as_array().unwrap();
    assert!(!days.is_empty());
    for day in days {
        assert!(day["start_ms"].as_i64().unwrap() < last, "a day after the last reading: {day}");
    }
    // The demo's log ends at midnight on Mon 16 Mar 2026 (its period), a day with nothing to draw.
    assert!(days.iter().all(|day| day["label"] != "Mon 16 Mar 2026"), "{days:?}");
}
