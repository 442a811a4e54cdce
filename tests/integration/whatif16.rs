//! The what-if page's defects of issue 16, over HTTP: rows numbered in the page's order (never the
//! database id), the sequence box suggesting the audit's own tags, and a scenario field that cannot
//! be read named in words.

use serde_json::json;

use crate::support::*;

/// The text of every `<td rowspan="2">` (the row number) of the scenario table, in page order.
fn row_numbers(page: &str) -> Vec<String> {
    page.split("<tr class=\"scenario-figures\"><td rowspan=\"2\">")
        .skip(1)
        .map(|rest| rest.split('<').next().unwrap_or("").to_string())
        .collect()
}

#[test]
fn the_scenario_rows_are_numbered_in_page_order_not_by_id() {
    let s = Server::demo();
    // Three replays, the first deleted: the two left have ids past 1.
    let mut ids = vec![];
    for body in [
        json!({"name": "gone", "changes": []}),
        json!({"name": "baseline", "changes": []}),
        json!({"name": "less leakage", "changes": [{"op": "reduce_leaks", "fraction": 0.3}]}),
    ] {
        let r = s.post_json("/api/v1/audits/1/scenarios", &body);
        assert_eq!(r.status, 201, "{}", r.text);
        ids.push(r.json()["id"].as_i64().unwrap());
    }
    assert_eq!(s.delete(&format!("/api/v1/audits/1/scenarios/{}", ids.remove(0))).status, 204);
    assert!(ids.iter().all(|&i| i > 1), "ids {ids:?}");
    let page = s.get("/audits/1/scenarios").text;
    assert_eq!(row_numbers(&page), ["1", "2"], "the first column numbers the rows");
    // The rows are still those scenarios, in that order, and each name is shown once.
    let first = page.find(&format!("data-scenario=\"{}\"", ids[0])).expect("first row");
    let second = page.find(&format!("data-scenario=\"{}\"", ids[1])).expect("second row");
    assert!(first < second);
    assert!(page.contains("<strong>baseline</strong>"), "the baseline's name once");
    assert!(!page.contains("baselinebaseline"));
    // The name box only suggests the baseline: it holds no value a typed name would run into.
    let name_box = page
        .split("id=\"scenario-form\"")
        .nth(1)
        .unwrap()
        .split("<input name=\"name\"")
        .nth(1)
        .unwrap()
        .split('>')
        .next()
        .unwrap();
    assert!(!name_box.contains("value="), "the name box is prefilled: {name_box}");
    assert!(name_box.contains("placeholder=\"baseline\""), "{name_box}");
}

#[test]
fn the_sequence_box_suggests_the_audits_own_tags() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/compressors"),
        &json!({"tag": "V2", "kind": "lubricated_screw", "control": "variable_speed", "cooling": "air",
                "rated_power_kw": 37, "rated_flow_m3_min": 6.0, "rated_pressure_bar_g": 7.5}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let page = s.get(&format!("/audits/{id}/scenarios")).text;
    assert!(
        page.contains("<input name=\"order\" placeholder=\"C1 V2\">"),
        "the sequence box: {}",
        page.split("name=\"order\"").nth(1).unwrap_or("").split('>').next().unwrap_or("")
    );
    assert!(!page.contains("C1 C3 C2"));
}

#[test]
fn a_speed_curve_point_that_is_not_a_number_is_named_in_words() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    // What the page's script sent before it checked the curve: "zz" read as a number is null.
    let body = json!({"name": "with a VSD", "changes": [
        {"op": "remove", "tag": "C1"},
        {"op": "reduce_leaks", "fraction": 0.2},
        {"op": "add", "compressor": {"tag": "V9", "kind": "lubricated_screw", "control": "variable_speed",
            "cooling": "air", "rated_power_kw": 45, "rated_flow_m3_min": 8.0, "rated_pressure_bar_g": 7.5,
            "power_curve": [[null, 15.0]]}}]});
    let r = s.post_json(&format!("/api/v1/audits/{id}/scenarios"), &body);
    assert_eq!(r.status, 422, "{}", r.text);
    assert!(
        r.text.contains(
            "change 3 (add a compressor), the added compressor's speed curve, point 1: each point is two numbers, flow and power"
        ),
        "{}",
        r.text
    );
    // The field stays serde's path, for a client that reads it.
    assert!(r.text.contains("changes[2].compressor.power_curve[0][0]"), "{}", r.text);
}
