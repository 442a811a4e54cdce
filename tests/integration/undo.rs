//! Undo and correct (issue 16): delete an upload, import a kept original again with a corrected
//! mapping, the same bytes with another mapping, edits of equipment, tests and scenarios, and the
//! scenario marked as the proposal. Every check compares the server with itself on another audit
//! built from the right data only: an undo must leave exactly what a correct start would have.

use crate::support::*;

/// A logger file of compressor C1 cycling `loaded_kw` / `unloaded_kw` (4 of every 20 readings
/// loaded) at 10 s for `hours` from `start` (Unix seconds), with header pressure and flow.
fn plant_csv(start: i64, hours: u32, loaded_kw: f64, unloaded_kw: f64) -> String {
    let mut s = String::from("time,C1 kW,header bar,flow m3/min\n");
    for i in 0..(hours as i64 * 360) {
        let loaded = (i % 20) < 4;
        s.push_str(&format!(
            "{},{},{:.2},{:.2}\n",
            jiff_like_rfc3339(start + i * 10),
            if loaded { loaded_kw } else { unloaded_kw },
            if loaded { 7.2 } else { 6.9 },
            if loaded { 9.5 } else { 1.9 }
        ));
    }
    s
}

/// 2026-05-04T08:00Z and 2026-05-05T08:00Z.
const DAY1: i64 = 1_777_881_600;
const DAY2: i64 = DAY1 + 86_400;

/// [`cycling_mapping`] with C1's power in `unit`.
fn mapping_with_power_unit(unit: &str) -> Value {
    let mut m = cycling_mapping();
    m["columns"][0]["unit"] = json!(unit);
    m
}

fn upload_ok(s: &Server, audit: i64, name: &str, csv: &str, mapping: &Value) -> Value {
    let r = s.upload(audit, name, csv.as_bytes(), mapping, "");
    assert_eq!(r.status, 201, "{name}: {}", r.text);
    r.json()
}

fn system(s: &Server, audit: i64) -> Value {
    let sm = s.get(&format!("/api/v1/audits/{audit}/summary"));
    assert_eq!(sm.status, 200, "{}", sm.text);
    sm.json()["system"].clone()
}

fn uploads(s: &Server, audit: i64) -> Vec<Value> {
    s.get(&format!("/api/v1/audits/{audit}/uploads")).json()["uploads"].as_array().expect("uploads").clone()
}

/// Equal to the last few bits: the same readings through the same analysis.
fn same(a: &Value, b: &Value, field: &str) {
    let (x, y) = (a[field].as_f64().expect(field), b[field].as_f64().expect(field));
    assert!((x - y).abs() <= 1e-9 * x.abs().max(y.abs()), "{field}: {x} against {y}");
}

#[test]
fn deleting_an_upload_leaves_the_figures_of_the_remaining_file_and_the_bytes_import_again() {
    // Arrange: two days of one plant, the second at higher power; and a twin audit holding only
    // the second day, built the ordinary way.
    let s = Server::start();
    let both = s.audit_with_compressor("C1");
    let only_b = s.audit_with_compressor("C1");
    let a = plant_csv(DAY1, 3, 56.0, 14.0);
    let b = plant_csv(DAY2, 3, 70.0, 20.0);
    let ua = upload_ok(&s, both, "day1.csv", &a, &cycling_mapping());
    upload_ok(&s, both, "day2.csv", &b, &cycling_mapping());
    upload_ok(&s, only_b, "day2.csv", &b, &cycling_mapping());
    let before = system(&s, both);
    let twin = system(&s, only_b);
    assert!(
        (before["mean_power_kw"].as_f64().unwrap() - twin["mean_power_kw"].as_f64().unwrap()).abs() > 1.0,
        "the two days differ in power: {before} / {twin}"
    );
    let revision = s.get(&format!("/api/v1/audits/{both}")).json()["revision"].as_i64().unwrap();
    // The two days do not overlap: the second file's import warned of it, quoting the first.
    let page = s.get(&format!("/audits/{both}")).text;
    assert!(page.contains("does not overlap in time any other file"), "warned while both are there");

    // Act
    let id = ua["upload_id"].as_i64().unwrap();
    let r = s.delete(&format!("/api/v1/audits/{both}/uploads/{id}"));

    // Assert: 204, its readings gone, the revision bumped, the figures those of day 2 alone.
    assert_eq!(r.status, 204, "{}", r.text);
    let left = uploads(&s, both);
    assert_eq!(left.len(), 1);
    assert_eq!(left[0]["filename"], "day2.csv");
    let audit = s.get(&format!("/api/v1/audits/{both}")).json();
    assert!(audit["revision"].as_i64().unwrap() > revision);
    let power =
        audit["channels"].as_array().unwrap().iter().find(|c| c["quantity"] == "power").cloned().unwrap();
    assert_eq!(power["readings"].as_i64(), Some(3 * 360), "only day 2's readings of C1 are left");
    // The warning quoted the deleted file: with no other file left it is no longer shown.
    let page = s.get(&format!("/audits/{both}")).text;
    assert!(!page.contains("does not overlap in time any other file"), "a deleted file is still quoted");
    let after = system(&s, both);
    for f in ["energy_kwh", "mean_power_kw", "air_m3", "mean_flow_m3_min", "specific_power_kw_per_m3_min"] {
        same(&after, &twin, f);
    }
    // Gone is gone: a second delete is 404, and the same bytes are a new upload again (201).
    assert_eq!(s.delete(&format!("/api/v1/audits/{both}/uploads/{id}")).status, 404);
    let again = upload_ok(&s, both, "day1.csv", &a, &cycling_mapping());
    assert_ne!(again["upload_id"].as_i64(), Some(id));
    for f in ["energy_kwh", "mean_power_kw"] {
        same(&system(&s, both), &before, f);
    }
    // Another audit's upload is not this audit's to delete.
    let other = uploads(&s, only_b)[0]["id"].as_i64().unwrap();
    assert_eq!(s.delete(&format!("/api/v1/audits/{both}/uploads/{other}")).status, 404);
}

#[test]
fn a_deleted_import_takes_its_mapping_out_of_memory_unless_another_import_uses_it() {
    // A wrong mapping (C1's power said to be in W) is remembered for the file's layout and offered
    // for the next file of that layout; deleting the import is how a person says it was wrong, so
    // the sniff must offer it no longer. A mapping another import still uses stays remembered.
    let s = Server::start();
    let a = s.audit_with_compressor("C1");
    let b = s.audit_with_compressor("C1");
    let csv = plant_csv(DAY1, 1, 56.0, 14.0);
    let remembered = |audit: i64| {
        let r = s.sniff(audit, "day1.csv", csv.as_bytes());
        assert_eq!(r.status, 200, "{}", r.text);
        r.json()["remembered_mapping"].clone()
    };
    assert!(remembered(a).is_null(), "nothing remembered before the first import");
    let wrong = mapping_with_power_unit("W");
    let up = upload_ok(&s, a, "day1.csv", &csv, &wrong);
    assert_eq!(remembered(a)["columns"][0]["unit"], "W", "the import's mapping is remembered");
    let id = up["upload_id"].as_i64().unwrap();
    assert_eq!(s.delete(&format!("/api/v1/audits/{a}/uploads/{id}")).status, 204);
    assert!(remembered(a).is_null(), "a deleted import's mapping is still offered: {}", remembered(a));

    // The same mapping used by imports in two audits: deleting one keeps it for the other.
    let first = upload_ok(&s, a, "day1.csv", &csv, &wrong)["upload_id"].as_i64().unwrap();
    upload_ok(&s, b, "day1.csv", &csv, &wrong);
    assert_eq!(s.delete(&format!("/api/v1/audits/{a}/uploads/{first}")).status, 204);
    assert_eq!(remembered(a)["columns"][0]["unit"], "W", "still used by audit {b}'s import");
}

#[test]
fn a_remap_corrects_a_wrong_unit_to_the_figures_of_a_fresh_import() {
    // Arrange: kW logged, mapped as W by mistake; a twin audit imported right.
    let s = Server::start();
    let wrong = s.audit_with_compressor("C1");
    let right = s.audit_with_compressor("C1");
    let csv = plant_csv(DAY1, 3, 56.0, 14.0);
    let first = upload_ok(&s, wrong, "log.csv", &csv, &mapping_with_power_unit("W"));
    upload_ok(&s, right, "log.csv", &csv, &mapping_with_power_unit("kW"));
    let as_w = system(&s, wrong);
    let twin = system(&s, right);
    // 1 kW = 1000 W (NIST SP 811, SI prefixes): the mistake is a factor of 1000 in mean power.
    let ratio = twin["mean_power_kw"].as_f64().unwrap() / as_w["mean_power_kw"].as_f64().unwrap();
    assert!((ratio - 1000.0).abs() < 1e-6, "mean power {ratio} times off");

    // Act: the kept original imported again with kW, without sending the file.
    let old = first["upload_id"].as_i64().unwrap();
    let r =
        s.post_json(&format!("/api/v1/audits/{wrong}/uploads/{old}/remap"), &mapping_with_power_unit("kW"));

    // Assert: the reply of an upload, one upload left, the figures of the right import.
    assert_eq!(r.status, 201, "{}", r.text);
    let reply = r.json();
    assert_eq!(reply["rows"], 3 * 360);
    assert_eq!(reply["readings"], 3 * 360 * 3);
    assert_eq!(reply["replaced_upload_id"].as_i64(), Some(old));
    let list = uploads(&s, wrong);
    assert_eq!(list.len(), 1);
    assert_eq!(list[0]["id"], reply["upload_id"]);
    assert_eq!(list[0]["mapping"]["columns"][0]["unit"], "kW");
    let fixed = system(&s, wrong);
    for f in ["energy_kwh", "mean_power_kw", "specific_power_kw_per_m3_min", "mean_flow_m3_min"] {
        same(&fixed, &twin, f);
    }
    // The channel now says what was logged.
    let audit = s.get(&format!("/api/v1/audits/{wrong}")).json();
    let power =
        audit["channels"].as_array().unwrap().iter().find(|c| c["quantity"] == "power").cloned().unwrap();
    assert_eq!(power["unit"], "kW");
    // The same mapping again changes nothing: 200 naming the upload.
    let new = reply["upload_id"].as_i64().unwrap();
    let r =
        s.post_json(&format!("/api/v1/audits/{wrong}/uploads/{new}/remap"), &mapping_with_power_unit("kW"));
    assert_eq!(r.status, 200, "{}", r.text);
    assert_eq!(r.json()["upload_id"].as_i64(), Some(new));
    // The old id is gone.
    let r =
        s.post_json(&format!("/api/v1/audits/{wrong}/uploads/{old}/remap"), &mapping_with_power_unit("W"));
    assert_eq!(r.status, 404, "{}", r.text);
}

#[test]
fn the_same_bytes_with_another_mapping_replace_the_earlier_import() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let twin = s.audit_with_compressor("C1");
    let csv = plant_csv(DAY1, 2, 56.0, 14.0);
    let first = upload_ok(&s, id, "log.csv", &csv, &mapping_with_power_unit("W"));
    upload_ok(&s, twin, "log.csv", &csv, &mapping_with_power_unit("kW"));
    // The same bytes and mapping: 200, nothing added.
    let r = s.upload(id, "log.csv", csv.as_bytes(), &mapping_with_power_unit("W"), "");
    assert_eq!(r.status, 200, "{}", r.text);
    assert_eq!(r.json()["upload_id"], first["upload_id"]);
    // The same bytes with another mapping: 201, and the earlier import is replaced.
    let r = s.upload(id, "log.csv", csv.as_bytes(), &mapping_with_power_unit("kW"), "");
    assert_eq!(r.status, 201, "{}", r.text);
    assert_eq!(r.json()["replaced_upload_id"], first["upload_id"]);
    let list = uploads(&s, id);
    assert_eq!(list.len(), 1, "{list:?}");
    assert_eq!(list[0]["id"], r.json()["upload_id"]);
    same(&system(&s, id), &system(&s, twin), "mean_power_kw");
    same(&system(&s, id), &system(&s, twin), "energy_kwh");
}

#[test]
fn a_remap_refused_with_422_leaves_the_earlier_import_as_it_was() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let csv = plant_csv(DAY1, 2, 56.0, 14.0);
    let first = upload_ok(&s, id, "log.csv", &csv, &cycling_mapping());
    let old = first["upload_id"].as_i64().unwrap();
    let before = system(&s, id);
    let listed = uploads(&s, id);
    let url = format!("/api/v1/audits/{id}/uploads/{old}/remap");

    // A column the file does not have, a compressor the audit does not have, a unit of no
    // quantity: each 422 naming what is wrong.
    let mut no_column = cycling_mapping();
    no_column["columns"][1]["column"] = json!("header psi");
    let mut no_compressor = cycling_mapping();
    no_compressor["columns"][0]["compressor"] = json!("C7");
    let mut bad_unit = cycling_mapping();
    bad_unit["columns"][2]["unit"] = json!("gallons");
    for (what, m) in [("column", no_column), ("compressor", no_compressor), ("unit", bad_unit)] {
        let r = s.post_json(&url, &m);
        assert_eq!(r.status, 422, "{what}: {}", r.text);
        let e = r.json()["error"].clone();
        assert!(e["field"].is_string() || e["column"].is_string(), "{what}: {e}");
    }
    // A body that is no mapping at all.
    let r = s.post_json(&url, &json!({"columns": "none"}));
    assert_eq!(r.status, 422, "{}", r.text);

    // Assert: the earlier import is there as it was, and nothing half-imported is listed.
    assert_eq!(uploads(&s, id), listed);
    for f in ["energy_kwh", "mean_power_kw", "mean_flow_m3_min"] {
        same(&system(&s, id), &before, f);
    }
    // And a good remap still goes through afterwards (no leftover blocks it).
    let r = s.post_json(&url, &mapping_with_power_unit("W"));
    assert_eq!(r.status, 201, "{}", r.text);
}

/// The control measures of the summary that rest on a replay: `(scenario_id, title)`.
fn replayed_measures(s: &Server) -> Vec<(i64, String)> {
    s.get("/api/v1/audits/1/summary").json()["recommendations"]
        .as_array()
        .unwrap()
        .iter()
        .filter_map(|r| Some((r["scenario_id"].as_i64()?, r["title"].as_str().unwrap_or("").to_string())))
        .collect()
}

#[test]
fn only_the_scenario_marked_as_the_proposal_enters_the_ranking() {
    // Arrange: the demo plant, and a supply-side replay that saves energy.
    let s = Server::demo();
    let body = json!({"name": "more storage", "changes": [{"op": "add_storage", "volume_m3": 4.0}],
                      "implementation_cost": 5000});
    let r = s.post_json("/api/v1/audits/1/scenarios", &body);
    assert_eq!(r.status, 201, "{}", r.text);
    let sid = r.json()["id"].as_i64().unwrap();
    assert!(r.json()["result"]["energy_saving_kwh"].as_f64().unwrap() > 0.0);
    // Not asked for: not in the ranking.
    assert_eq!(replayed_measures(&s), vec![]);
    let page = s.get("/audits/1/scenarios").text;
    assert!(page.contains("not proposed"), "the page says why it is not on the report");

    // Act: marked as the proposal.
    let r = s.patch_json(&format!("/api/v1/audits/1/scenarios/{sid}"), &json!({"proposal": true}));
    assert_eq!(r.status, 200, "{}", r.text);
    assert_eq!(r.json()["proposal"], true);
    // Assert: it is the control measure now.
    let m = replayed_measures(&s);
    assert_eq!(m.len(), 1, "{m:?}");
    assert_eq!(m[0].0, sid);
    assert!(m[0].1.contains("more storage"), "{m:?}");

    // A second proposal withdraws the first; renamed, the measure follows the name.
    let r = s.post_json("/api/v1/audits/1/scenarios", &json!({"name": "storage 6", "changes": [{"op": "add_storage", "volume_m3": 6.0}], "implementation_cost": 7000, "proposal": true}));
    assert_eq!(r.status, 201, "{}", r.text);
    let second = r.json()["id"].as_i64().unwrap();
    assert_eq!(s.get(&format!("/api/v1/audits/1/scenarios/{sid}")).json()["proposal"], false);
    let r =
        s.patch_json(&format!("/api/v1/audits/1/scenarios/{second}"), &json!({"name": "six cubic metres"}));
    assert_eq!(r.status, 200, "{}", r.text);
    let m = replayed_measures(&s);
    assert_eq!(m.iter().map(|x| x.0).collect::<Vec<_>>(), vec![second]);
    assert!(m[0].1.contains("six cubic metres"), "{m:?}");
    // Withdrawn: no replay is in the ranking.
    let r = s.patch_json(&format!("/api/v1/audits/1/scenarios/{second}"), &json!({"proposal": false}));
    assert_eq!(r.status, 200, "{}", r.text);
    assert_eq!(replayed_measures(&s), vec![]);
    // Wrong input names its field; deleted is gone.
    let r = s.patch_json(&format!("/api/v1/audits/1/scenarios/{second}"), &json!({"proposal": "yes"}));
    assert_eq!(r.status, 422, "{}", r.text);
    assert_eq!(r.json()["error"]["field"], "proposal");
    let r = s.patch_json(&format!("/api/v1/audits/1/scenarios/{second}"), &json!({"name": ""}));
    assert_eq!(r.status, 422, "{}", r.text);
    assert_eq!(r.json()["error"]["field"], "name");
    assert_eq!(s.delete(&format!("/api/v1/audits/1/scenarios/{second}")).status, 204);
    assert_eq!(s.get(&format!("/api/v1/audits/1/scenarios/{second}")).status, 404);
    assert_eq!(s.delete(&format!("/api/v1/audits/1/scenarios/{second}")).status, 404);
}

#[test]
fn put_edits_equipment_tests_and_scenarios_and_names_the_wrong_field() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    upload_ok(&s, id, "log.csv", &plant_csv(DAY1, 3, 56.0, 14.0), &cycling_mapping());
    let cid = s.get(&format!("/api/v1/audits/{id}")).json()["compressors"][0]["id"].as_i64().unwrap();
    let compressor = json!({"tag": "C1", "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                            "rated_power_kw": 55, "rated_flow_m3_min": 9.5, "rated_pressure_bar_g": 7.5});

    // A compressor: a new rated flow is stored; a negative one is 422 naming the field.
    let mut c = compressor.clone();
    c["rated_flow_m3_min"] = json!(10.5);
    let r = s.put_json(&format!("/api/v1/audits/{id}/compressors/{cid}"), &c);
    assert_eq!(r.status, 200, "{}", r.text);
    assert_eq!(s.get(&format!("/api/v1/audits/{id}")).json()["compressors"][0]["rated_flow_m3_min"], 10.5);
    c["rated_flow_m3_min"] = json!(-1);
    let r = s.put_json(&format!("/api/v1/audits/{id}/compressors/{cid}"), &c);
    assert_eq!(r.status, 422, "{}", r.text);
    assert_eq!(r.json()["error"]["field"], "rated_flow_m3_min");

    // A receiver: renamed and resized; the system volume follows; 0 m³ is refused.
    let r = s.post_json(&format!("/api/v1/audits/{id}/receivers"), &json!({"name": "wet", "volume_m3": 2.0}));
    let rid = r.json()["id"].as_i64().unwrap();
    let r = s.put_json(
        &format!("/api/v1/audits/{id}/receivers/{rid}"),
        &json!({"name": "wet receiver", "volume_m3": 3.0}),
    );
    assert_eq!(r.status, 200, "{}", r.text);
    let a = s.get(&format!("/api/v1/audits/{id}")).json();
    assert_eq!(a["receivers"][0]["name"], "wet receiver");
    assert_eq!(a["storage"]["system_volume_m3"], 3.0);
    let r =
        s.put_json(&format!("/api/v1/audits/{id}/receivers/{rid}"), &json!({"name": "wet", "volume_m3": 0}));
    assert_eq!(r.status, 422, "{}", r.text);
    assert_eq!(r.json()["error"]["field"], "volume_m3");
    assert_eq!(
        s.put_json(&format!("/api/v1/audits/{id}/receivers/999"), &json!({"name": "x", "volume_m3": 1}))
            .status,
        404
    );

    // A bleed-down test: a longer duration gives a proportionally smaller mean leak flow,
    // V (p1 - p2) / (p_atm t) (US DOE compressed-air sourcebook, bleed-down method).
    let test = json!({"kind": "bleed_down", "volume_m3": 3.0, "start_pressure_bar_g": 7.0, "end_pressure_bar_g": 5.5, "duration_s": 95});
    let r = s.post_json(&format!("/api/v1/audits/{id}/field-tests"), &test);
    assert_eq!(r.status, 201, "{}", r.text);
    let tid = r.json()["id"].as_i64().unwrap();
    let q1 = r.json()["result"]["mean_leak_flow_m3_min"].as_f64().unwrap();
    let mut longer = test.clone();
    longer["duration_s"] = json!(190);
    let r = s.put_json(&format!("/api/v1/audits/{id}/field-tests/{tid}"), &longer);
    assert_eq!(r.status, 200, "{}", r.text);
    let q2 = r.json()["result"]["mean_leak_flow_m3_min"].as_f64().unwrap();
    assert!((q1 / q2 - 2.0).abs() < 1e-9, "{q1} / {q2}");
    let tests = s.get(&format!("/api/v1/audits/{id}/field-tests")).json()["field_tests"].clone();
    assert_eq!(tests.as_array().unwrap().len(), 1, "edited in place");
    assert_eq!(tests[0]["input"]["duration_s"], 190);
    longer["end_pressure_bar_g"] = json!(7.5);
    let r = s.put_json(&format!("/api/v1/audits/{id}/field-tests/{tid}"), &longer);
    assert_eq!(r.status, 422, "{}", r.text);
    assert!(r.json()["error"]["field"].as_str().unwrap().contains("pressure"), "{}", r.text);
    assert_eq!(
        s.get(&format!("/api/v1/audits/{id}/field-tests")).json()["field_tests"][0]["input"]["duration_s"],
        190
    );

    // A scenario: replayed again with the new changes; a wrong change names its place.
    let r =
        s.post_json(&format!("/api/v1/audits/{id}/scenarios"), &json!({"name": "baseline", "changes": []}));
    assert_eq!(r.status, 201, "{}", r.text);
    let sid = r.json()["id"].as_i64().unwrap();
    let r = s.put_json(
        &format!("/api/v1/audits/{id}/scenarios/{sid}"),
        &json!({"name": "more storage", "changes": [{"op": "add_storage", "volume_m3": 2.0}]}),
    );
    assert_eq!(r.status, 200, "{}", r.text);
    let stored = s.get(&format!("/api/v1/audits/{id}/scenarios/{sid}")).json();
    assert_eq!(stored["name"], "more storage");
    assert_eq!(stored["changes"][0]["op"], "add_storage");
    let r = s.put_json(
        &format!("/api/v1/audits/{id}/scenarios/{sid}"),
        &json!({"name": "x", "changes": [{"op": "add_storage", "volume_m3": -2.0}]}),
    );
    assert_eq!(r.status, 422, "{}", r.text);
    assert!(r.json()["error"]["field"].as_str().unwrap().starts_with("changes[0]"), "{}", r.text);
    assert_eq!(s.get(&format!("/api/v1/audits/{id}/scenarios/{sid}")).json()["name"], "more storage");
}

#[test]
fn a_scenario_without_data_says_there_is_no_data_to_replay() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let r =
        s.post_json(&format!("/api/v1/audits/{id}/scenarios"), &json!({"name": "baseline", "changes": []}));
    assert_eq!(r.status, 422, "{}", r.text);
    assert!(r.json()["error"]["message"].as_str().unwrap().starts_with("no data to replay"), "{}", r.text);
    let page = s.get(&format!("/audits/{id}/scenarios")).text;
    assert!(page.contains("No data to replay"), "the page says so before anyone tries");
}

#[test]
fn a_delete_on_the_pages_asks_first_and_deletes_only_from_its_own_form() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let up = upload_ok(&s, id, "day1.csv", &plant_csv(DAY1, 2, 56.0, 14.0), &cycling_mapping());
    let uid = up["upload_id"].as_i64().unwrap();
    let cid = s.get(&format!("/api/v1/audits/{id}")).json()["compressors"][0]["id"].as_i64().unwrap();
    let audit_page = s.get(&format!("/audits/{id}")).text;
    assert!(audit_page.contains(&format!("/audits/{id}/uploads/{uid}/delete")), "a delete link per file");
    assert!(audit_page.contains(&format!("/audits/{id}/uploads/{uid}/remap")), "a remap link per file");
    for (what, path) in [
        ("file", format!("/audits/{id}/uploads/{uid}/delete")),
        ("compressor", format!("/audits/{id}/compressors/{cid}/delete")),
    ] {
        // A post without the confirmation (the old one-click form) only shows the question.
        let r = s.post_form(&path, &[]);
        assert_eq!(r.status, 303, "{what}: {}", r.text);
        assert_eq!(r.header("location"), Some(path.as_str()));
        assert_eq!(uploads(&s, id).len(), 1, "{what}: nothing deleted");
        let page = s.get(&path);
        assert_eq!(page.status, 200);
        assert!(
            page.text.contains("name=\"confirm\" value=\"yes\""),
            "{what}: the page carries the confirmation"
        );
        assert!(page.text.contains("No, keep it"));
    }
    // The compressor's page says its logged readings go with it, counted per quantity: two hours
    // at 10 s are 720 power readings.
    assert!(s.get(&format!("/audits/{id}/compressors/{cid}/delete")).text.contains("(720 power readings)"));
    // Confirmed: gone, and back to the audit, which says what was done.
    let r = s.post_form(&format!("/audits/{id}/uploads/{uid}/delete"), &[("confirm", "yes")]);
    assert_eq!(r.status, 303);
    let back = r.header("location").unwrap_or_default().to_string();
    assert_eq!(back, format!("/audits/{id}?done=upload-deleted&what=day1.csv"));
    let page = s.get(&back).text;
    assert!(page.contains("The file \u{201c}day1.csv\u{201d} was deleted with its readings"), "{page}");
    assert!(uploads(&s, id).is_empty());
    assert_eq!(s.get(&format!("/audits/{id}/uploads/{uid}/delete")).status, 404);
    // Started from the upload page, a delete goes back there, and that page says what was done.
    let up = upload_ok(&s, id, "day2.csv", &plant_csv(DAY2, 1, 56.0, 14.0), &cycling_mapping());
    let uid = up["upload_id"].as_i64().unwrap();
    let r =
        s.post_form(&format!("/audits/{id}/uploads/{uid}/delete"), &[("confirm", "yes"), ("from", "upload")]);
    assert_eq!(r.status, 303);
    let back = r.header("location").unwrap_or_default().to_string();
    assert_eq!(back, format!("/audits/{id}/upload?done=upload-deleted&what=day2.csv"));
    let page = s.get(&back).text;
    assert!(page.contains("The file \u{201c}day2.csv\u{201d} was deleted with its readings"), "{page}");
}

#[test]
fn the_mapping_form_reads_the_kept_file_again_and_a_refusal_keeps_the_import() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let twin = s.audit_with_compressor("C1");
    let csv = plant_csv(DAY1, 2, 56.0, 14.0);
    let up = upload_ok(&s, id, "log.csv", &csv, &mapping_with_power_unit("W"));
    upload_ok(&s, twin, "log.csv", &csv, &mapping_with_power_unit("kW"));
    let uid = up["upload_id"].as_i64().unwrap();
    let path = format!("/audits/{id}/uploads/{uid}/remap");
    let page = s.get(&path).text;
    // Units as people write them, the stored one selected; no unit codes shown as text.
    assert!(page.contains("<option value=\"W\" selected>W</option>"), "the stored unit is selected");
    assert!(page.contains(">bar(g)</option>") && page.contains(">m³/min</option>"), "{page}");
    assert!(!page.contains(">bar_g<") && !page.contains(">m3_min<"));
    // A time zone nobody has: 422, the reason on the page, the import as it was.
    let before = system(&s, id);
    let r = s.post_form(&path, &[("col0_unit", "kW"), ("timezone", "CST"), ("format", "rfc3339")]);
    assert_eq!(r.status, 422, "{}", r.text);
    assert!(r.text.contains("The file was not read again"), "{}", r.text);
    assert_eq!(uploads(&s, id)[0]["id"].as_i64(), Some(uid));
    same(&system(&s, id), &before, "mean_power_kw");
    // kW chosen: read again, back to the audit, the figures of a right import.
    let r = s.post_form(
        &path,
        &[
            ("col0_quantity", "power"),
            ("col0_unit", "kW"),
            ("col0_compressor", "C1"),
            ("timezone", "UTC"),
            ("format", "rfc3339"),
        ],
    );
    assert_eq!(r.status, 303, "{}", r.text);
    let list = uploads(&s, id);
    assert_eq!(list.len(), 1);
    assert_eq!(list[0]["mapping"]["columns"][0]["unit"], "kW");
    same(&system(&s, id), &system(&s, twin), "mean_power_kw");
    // Leaving a column out drops its channel from the import.
    let new = list[0]["id"].as_i64().unwrap();
    let r = s.post_form(
        &format!("/audits/{id}/uploads/{new}/remap"),
        &[("col0_unit", "kW"), ("col2_skip", "1"), ("timezone", "UTC"), ("format", "rfc3339")],
    );
    assert_eq!(r.status, 303, "{}", r.text);
    let chans = s.get(&format!("/api/v1/audits/{id}/channels")).json()["channels"].clone();
    assert!(chans.as_array().unwrap().iter().all(|c| c["quantity"] != "flow"), "{chans}");
}

#[test]
fn the_edit_pages_show_what_is_stored_and_refuse_a_wrong_value_with_422() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let cid = s.get(&format!("/api/v1/audits/{id}")).json()["compressors"][0]["id"].as_i64().unwrap();
    let page = s.get(&format!("/audits/{id}/compressors/{cid}/edit"));
    assert_eq!(page.status, 200);
    assert!(page.text.contains("value=\"9.5\""), "the stored flow is in the form");
    let fields = [
        ("tag", "C1"),
        ("kind", "lubricated_screw"),
        ("control", "load_unload"),
        ("cooling", "air"),
        ("rated_power_kw", "55"),
        ("rated_flow_m3_min", "10.2"),
        ("rated_pressure_bar_g", "7.5"),
    ];
    let r = s.post_form(&format!("/audits/{id}/compressors/{cid}"), &fields);
    assert_eq!(r.status, 303, "{}", r.text);
    assert_eq!(s.get(&format!("/api/v1/audits/{id}")).json()["compressors"][0]["rated_flow_m3_min"], 10.2);
    let mut bad = fields;
    bad[5] = ("rated_flow_m3_min", "-3");
    let r = s.post_form(&format!("/audits/{id}/compressors/{cid}"), &bad);
    assert_eq!(r.status, 422, "{}", r.text);
    assert!(r.text.contains("role=\"alert\""));
    assert_eq!(s.get(&format!("/api/v1/audits/{id}")).json()["compressors"][0]["rated_flow_m3_min"], 10.2);
    // A receiver through its edit page.
    let rid = s
        .post_json(&format!("/api/v1/audits/{id}/receivers"), &json!({"name": "wet", "volume_m3": 2.0}))
        .json()["id"]
        .as_i64()
        .unwrap();
    let r = s.post_form(&format!("/audits/{id}/receivers/{rid}"), &[("name", "dry"), ("volume_m3", "1.5")]);
    assert_eq!(r.status, 303, "{}", r.text);
    assert_eq!(s.get(&format!("/api/v1/audits/{id}")).json()["receivers"][0]["volume_m3"], 1.5);
    let r = s.post_form(&format!("/audits/{id}/receivers/{rid}"), &[("name", "dry"), ("volume_m3", "0")]);
    assert_eq!(r.status, 422, "{}", r.text);
}

#[test]
fn a_column_left_out_at_upload_can_be_read_from_the_kept_file() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let twin = s.audit_with_compressor("C1");
    let csv = plant_csv(DAY1, 2, 56.0, 14.0);
    let mut without_flow = cycling_mapping();
    without_flow["columns"].as_array_mut().unwrap().pop();
    let up = upload_ok(&s, id, "log.csv", &csv, &without_flow);
    upload_ok(&s, twin, "log.csv", &csv, &cycling_mapping());
    let uid = up["upload_id"].as_i64().unwrap();
    let path = format!("/audits/{id}/uploads/{uid}/remap");
    let page = s.get(&path).text;
    assert!(page.contains("Columns of the file not read so far"), "{page}");
    assert!(page.contains("name=\"extra0_column\" value=\"flow m3/min\""), "the left-out column is offered");
    let r = s.post_form(
        &path,
        &[
            ("extra0_column", "flow m3/min"),
            ("extra0_use", "1"),
            ("extra0_quantity", "flow"),
            ("extra0_unit", "m3_min"),
            ("timezone", "UTC"),
            ("format", "rfc3339"),
        ],
    );
    assert_eq!(r.status, 303, "{}", r.text);
    for f in ["mean_flow_m3_min", "air_m3", "specific_power_kw_per_m3_min"] {
        same(&system(&s, id), &system(&s, twin), f);
    }
}
