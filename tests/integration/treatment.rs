//! Dryers, drains and end uses over HTTP (API.md "Additions"): stored, priced into the summary's
//! `transmission` and `demand_split`, refused with the field named, deleted.

use crate::support::*;

fn fixture_value(name: &str) -> f64 {
    let f: Value = serde_json::from_str(include_str!("../reference/fixture.json")).unwrap();
    f["values"][name]["value"].as_f64().unwrap_or_else(|| panic!("fixture has no {name}"))
}

#[test]
fn treatment_records_are_priced_into_the_summary_and_split_the_demand() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let r = s.upload(id, "cycle.csv", cycling_csv(24).as_bytes(), &cycling_mapping(), "");
    assert_eq!(r.status, 201, "{}", r.text);
    let post = |list: &str, body: Value| s.post_json(&format!("/api/v1/audits/{id}/{list}"), &body);
    let r = post(
        "dryers",
        json!({"tag": "D1", "kind": "heatless_desiccant", "rated_flow_m3_min": 10, "purge_fraction": 0.15,
               "power_kw": 0.3, "control": "fixed_cycle"}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let dryer = r.json()["id"].as_i64().unwrap();
    let r = post(
        "drains",
        json!({"tag": "T1", "kind": "timer", "open_s": 5, "interval_s": 300, "orifice_mm": 3.0,
               "discharge_coefficient": 0.61}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let r = post(
        "end-uses",
        json!({"name": "nutrunners <b>", "kind": "tool", "count": 2, "flow_m3_min": 0.5, "pressure_bar_g": 6.0,
               "duty": 0.5, "regulated": true}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let list = s.get(&format!("/api/v1/audits/{id}/end-uses")).json();
    assert_eq!(list["end_uses"][0]["name"], "nutrunners <b>", "{list}");

    // Refusals name the field, and add nothing.
    for (list, body, field) in [
        (
            "dryers",
            json!({"tag": "D2", "kind": "heatless_desiccant", "rated_flow_m3_min": 10, "purge_fraction": 1.5}),
            "purge_fraction",
        ),
        ("dryers", json!({"tag": "D2", "kind": "silica_gel", "rated_flow_m3_min": 10}), "kind"),
        (
            "drains",
            json!({"tag": "T2", "kind": "timer", "open_s": 5, "interval_s": 300, "orifice_mm": -1}),
            "orifice_mm",
        ),
        ("end-uses", json!({"name": "x", "kind": "tool", "duty": 0.5}), "flow_m3_min"),
        (
            "dryers",
            json!({"tag": "D2", "kind": "refrigerated", "rated_flow_m3_min": 10, "purge_pct": 3}),
            "purge_pct",
        ),
        ("drains", json!({"tag": "T2", "kind": "timer", "open_s": "five"}), "open_s"),
    ] {
        let r = post(list, body);
        assert_eq!(r.status, 422, "{list}: {}", r.text);
        assert_eq!(r.json()["error"]["field"], field, "{list}: {}", r.text);
    }
    assert_eq!(s.get(&format!("/api/v1/audits/{id}/dryers")).json()["dryers"].as_array().unwrap().len(), 1);

    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    let t = &sm["transmission"];
    // Purge: 10 m³/min x 0.15 on a fixed cycle, whatever the load (worked by hand).
    let purge = t["dryers"][0]["purge_m3_min"].as_f64().unwrap();
    assert!((purge - 1.5).abs() < 1e-12, "{t}");
    // The drain's orifice is choked, so its flow scales with the absolute line pressure: the
    // fluids value at 7.0 bar(g) (fixture) x p_line,abs / p_7,abs, the line at the logged mean.
    let p_mean = sm["pressure"]["mean_bar_g"].as_f64().unwrap();
    let want = fixture_value("treatment.timer_drain_3mm_7barg_5s_300s_m3_min") * (p_mean * 1e5 + 101_325.0)
        / (7.0e5 + 101_325.0);
    let drain = t["drains"][0]["air_m3_min"].as_f64().unwrap();
    assert!((drain - want).abs() < 1e-3 * want, "drain {drain} vs {want}");
    // The split sums to the logged mean flow, and the production uses are count x air x duty x
    // the production share.
    let split = &sm["demand_split"];
    let parts: f64 = [
        "production_m3_min",
        "inappropriate_m3_min",
        "purge_and_drains_m3_min",
        "leaks_m3_min",
        "unexplained_m3_min",
    ]
    .iter()
    .map(|k| split[k].as_f64().unwrap())
    .sum();
    let mean = sm["system"]["mean_flow_m3_min"].as_f64().unwrap();
    assert!((parts - mean).abs() < 1e-9, "{split} vs {mean}");
    let share = sm["demand"]["production_share_of_time"].as_f64().unwrap();
    assert!((split["production_m3_min"].as_f64().unwrap() - 0.5 * share).abs() < 1e-9, "{split}");
    assert!((split["purge_and_drains_m3_min"].as_f64().unwrap() - (purge + drain)).abs() < 1e-9);
    // The cost is that air at the marginal specific power over the running hours.
    let cost = t["dryers"][0]["annual_purge_cost"].as_f64().unwrap();
    let by_hand = 1.5
        * sm["leaks"]["marginal_kw_per_m3_min"].as_f64().unwrap()
        * sm["baseline"]["annual_running_hours"].as_f64().unwrap()
        * sm["baseline"]["electricity_price_per_kwh"].as_f64().unwrap();
    assert!((cost - by_hand).abs() < 1e-6 * by_hand.max(1.0), "{cost} vs {by_hand}");

    // The records offer measures, stacked with the rest; the total is the sum of the stacked savings.
    let recs = sm["recommendations"].as_array().unwrap();
    for kind in ["dew_point_control", "zero_loss_drains"] {
        let m = recs.iter().find(|m| m["kind"] == kind).unwrap_or_else(|| panic!("no {kind}: {recs:?}"));
        assert!(m["caution"].as_str().unwrap().contains("isolate"), "{m}");
    }
    let dew = recs.iter().find(|m| m["kind"] == "dew_point_control").unwrap();
    let saved_m3_min = t["dryers"][0]["dew_point_control_saving_m3_min"].as_f64().unwrap();
    let load = mean / 10.0;
    assert!((saved_m3_min - 1.5 * (1.0 - load)).abs() < 1e-9, "{saved_m3_min} at load {load}");
    assert!(dew["standalone_annual_energy_saving_kwh"].as_f64().unwrap() > 0.0);
    let stacked: f64 = recs.iter().map(|m| m["annual_energy_saving_kwh"].as_f64().unwrap()).sum();
    let total = sm["measures_total"]["annual_energy_saving_kwh"].as_f64().unwrap();
    assert!((stacked - total).abs() < 1e-6 * total.max(1.0), "{stacked} vs {total}");

    // The findings and the report show them, user text escaped.
    for page in ["findings", "report"] {
        let html = s.get(&format!("/audits/{id}/{page}")).text;
        // Grouped as ISO 11011 does: dryers and drains under transmission, end uses under demand.
        assert!(html.contains("Treatment: dryers and drains"), "{page}");
        assert!(html.contains("End uses and the demand split"), "{page}");
        assert!(html.contains("nutrunners &lt;b&gt;") || html.contains("nutrunners &#60;b&#62;"), "{page}");
        assert!(!html.contains("nutrunners <b>"), "{page}: unescaped user text");
        assert!(html.contains("Safety at dryers and drains"), "{page}");
    }

    // Deleted: gone from the list and from the figures.
    let r = s.delete(&format!("/api/v1/audits/{id}/dryers/{dryer}"));
    assert_eq!(r.status, 204, "{}", r.text);
    assert_eq!(s.delete(&format!("/api/v1/audits/{id}/dryers/{dryer}")).status, 404);
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    assert_eq!(sm["transmission"]["dryers"].as_array().unwrap().len(), 0, "{}", sm["transmission"]);
}

/// The demo plant carries a dryer, level-sensing drains and three end uses: its demand split sums
/// to its logged mean flow, and the two inappropriate uses with an electric alternative give one
/// measure, whose saving is their air at the marginal specific power over the production hours,
/// less the alternatives' electricity (checked from the summary's own figures).
#[test]
fn the_demo_plant_splits_its_demand_and_prices_its_inappropriate_uses() {
    let s = Server::demo();
    let audits = s.get("/api/v1/audits").json();
    let id = audits["audits"][0]["id"].as_i64().unwrap();
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    let split = &sm["demand_split"];
    let parts: f64 = [
        "production_m3_min",
        "inappropriate_m3_min",
        "purge_and_drains_m3_min",
        "leaks_m3_min",
        "unexplained_m3_min",
    ]
    .iter()
    .map(|k| split[k].as_f64().unwrap())
    .sum();
    let mean = sm["system"]["mean_flow_m3_min"].as_f64().unwrap();
    assert!((parts - mean).abs() < 1e-9, "{split} vs {mean}");
    assert_eq!(split["purge_and_drains_m3_min"], 0.0, "{split}");
    let t = &sm["transmission"];
    assert_eq!(t["end_uses"].as_array().unwrap().len(), 3, "{t}");
    let recs = sm["recommendations"].as_array().unwrap();
    let m = recs.iter().find(|m| m["kind"] == "replace_inappropriate_uses").expect("the end-use measure");
    let uses: Vec<&Value> =
        t["end_uses"].as_array().unwrap().iter().filter(|u| u["inappropriate"] == true).collect();
    assert_eq!(uses.len(), 2);
    let alone: f64 = uses.iter().map(|u| u["alternative_saving_kwh"].as_f64().unwrap()).sum();
    let got = m["standalone_annual_energy_saving_kwh"].as_f64().unwrap();
    // The summary's end-use figures price over the production hours of the operating year; the
    // measure over the trim's running hours in production: the two agree within a few per cent.
    assert!(got > 0.0 && (got - alone).abs() < 0.1 * alone, "measure {got} vs end uses {alone}");
}

/// The technician's page takes a drain and an end use in US units (in, psig, cfm) and stores them
/// in SI (NIST SP 811: 1 in = 25.4 mm, 1 ft³ = 0.028316846592 m³, 1 psi = 6.894757 kPa), and a
/// removal needs its confirmation box.
#[test]
fn the_treatment_page_takes_records_in_the_readers_units() {
    let s = Server::start();
    let r = s.post_json(
        "/api/v1/audits",
        &json!({"name": "us plant", "site": {"altitude_m": 0, "display_units": "us"}}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let id = r.json()["id"].as_i64().unwrap();
    let page = s.get(&format!("/audits/{id}/treatment"));
    assert_eq!(page.status, 200);
    assert!(page.text.contains("Orifice or valve bore, in"), "the form asks in inches");
    assert!(page.text.contains("Safety at dryers and drains"));
    let r = s.post_form(
        &format!("/audits/{id}/treatment/drains"),
        &[
            ("entry_units", "us"),
            ("tag", "T1"),
            ("kind", "timer"),
            ("open_s", "5"),
            ("interval_s", "300"),
            ("orifice_mm", "0.125"),
        ],
    );
    assert!(r.status == 303 || r.status == 200, "{} {}", r.status, r.text);
    let r = s.post_form(
        &format!("/audits/{id}/treatment/end-uses"),
        &[
            ("entry_units", "us"),
            ("name", "blow-off"),
            ("kind", "open_blowing"),
            ("count", "2"),
            ("flow_m3_min", "10"),
            ("pressure_bar_g", "90"),
            ("duty_percent", "50"),
        ],
    );
    assert!(r.status == 303 || r.status == 200, "{} {}", r.status, r.text);
    let drains = s.get(&format!("/api/v1/audits/{id}/drains")).json();
    let d = drains["drains"][0]["orifice_mm"].as_f64().unwrap();
    assert!((d - 3.175).abs() < 1e-9, "{drains}");
    let uses = s.get(&format!("/api/v1/audits/{id}/end-uses")).json();
    let u = &uses["end_uses"][0];
    assert!((u["flow_m3_min"].as_f64().unwrap() - 10.0 * 0.028_316_846_592).abs() < 1e-9, "{u}");
    assert!((u["pressure_bar_g"].as_f64().unwrap() - 90.0 * 0.068_947_572_93).abs() < 1e-6, "{u}");
    assert_eq!(u["duty"], 0.5);
    // A bad record re-shows the page with the reason and a 422.
    let r = s.post_form(
        &format!("/audits/{id}/treatment/dryers"),
        &[
            ("entry_units", "us"),
            ("tag", "D1"),
            ("kind", "heatless_desiccant"),
            ("rated_flow_m3_min", "300"),
            ("purge_percent", "150"),
        ],
    );
    assert_eq!(r.status, 422, "{}", r.text);
    assert!(r.text.contains("purge"), "the reason is shown");
    // Removal needs the box ticked.
    let did = drains["drains"][0]["id"].as_i64().unwrap();
    let r = s.post_form(&format!("/audits/{id}/treatment/drains/{did}/delete"), &[]);
    assert_eq!(r.status, 422, "{}", r.text);
    assert_eq!(s.get(&format!("/api/v1/audits/{id}/drains")).json()["drains"].as_array().unwrap().len(), 1);
    let r = s.post_form(&format!("/audits/{id}/treatment/drains/{did}/delete"), &[("confirm", "on")]);
    assert!(r.status == 303 || r.status == 200, "{}", r.status);
    assert_eq!(s.get(&format!("/api/v1/audits/{id}/drains")).json()["drains"].as_array().unwrap().len(), 0);
}
