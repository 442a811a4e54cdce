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
        assert!(html.contains("Treatment and pressure drops"), "{page}");
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
    // A refusal quotes the value in the units it was typed in: a nozzle of -0.125 in, not the
    // -3.175 mm it is checked as.
    let r = s.post_form(
        &format!("/audits/{id}/treatment/end-uses"),
        &[
            ("entry_units", "us"),
            ("name", "nozzle"),
            ("kind", "open_blowing"),
            ("count", "1"),
            ("orifice_mm", "-0.125"),
            ("pressure_bar_g", "90"),
        ],
    );
    assert_eq!(r.status, 422, "{}", r.text);
    let text = r.text.replace('\u{a0}', " ");
    assert!(text.contains("got -0.125 in") && !text.contains("3.175"), "US refusal");
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
    // Removal needs the box ticked, and the box says what goes (a walk found it labelled "sure").
    let page = s.get(&format!("/audits/{id}/treatment")).text;
    assert!(page.contains("> yes, remove Drain T1 and what the report reads from it</label>"), "{page}");
    assert!(!page.contains("> sure</label>"));
    let did = drains["drains"][0]["id"].as_i64().unwrap();
    let r = s.post_form(&format!("/audits/{id}/treatment/drains/{did}/delete"), &[]);
    assert_eq!(r.status, 422, "{}", r.text);
    assert_eq!(s.get(&format!("/api/v1/audits/{id}/drains")).json()["drains"].as_array().unwrap().len(), 1);
    let r = s.post_form(&format!("/audits/{id}/treatment/drains/{did}/delete"), &[("confirm", "on")]);
    assert!(r.status == 303 || r.status == 200, "{}", r.status);
    assert_eq!(s.get(&format!("/api/v1/audits/{id}/drains")).json()["drains"].as_array().unwrap().len(), 0);
}

/// Pressure at several points: a discharge, a header and a named point of use mapped in one file;
/// the drops, their cost and the pressure measure's critical point over HTTP.
#[test]
fn pressure_points_give_drops_their_cost_and_the_critical_point_of_use() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    // A week at 1-minute readings: C1 always loaded at 50 kW; flow 8 m³/min with 9.5 in every
    // tenth minute; discharge 7.6 bar(g); header and point of use below it by a drop proportional
    // to the flow (0.02 and 0.05 bar per m³/min: a pipe's drop grows with flow; linear here so that
    // the bin means keep it exact).
    let start = 1_777_852_800i64; // 2026-05-04T00:00:00Z
    let mut csv = String::from("time,C1 kW,flow m3/min,P1,P2,P3\n");
    for i in 0..7 * 1440 {
        let q = if i % 10 == 0 { 9.5 } else { 8.0 };
        csv.push_str(&format!(
            "{},50,{q},7.6,{:.4},{:.4}\n",
            jiff_like_rfc3339(start + i * 60),
            7.6 - 0.02 * q,
            7.6 - 0.05 * q
        ));
    }
    let mapping = json!({"delimiter": ",", "decimal": ".", "header_line": 1,
        "timestamp": {"column": "time", "format": "rfc3339", "timezone": "UTC"},
        "columns": [{"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"},
                    {"column": "flow m3/min", "quantity": "flow", "unit": "m3_min"},
                    {"column": "P1", "quantity": "pressure", "unit": "bar_g", "point": "discharge", "label": "compressor room"},
                    {"column": "P2", "quantity": "pressure", "unit": "bar_g", "point": "header", "label": "main header"},
                    {"column": "P3", "quantity": "pressure", "unit": "bar_g", "point": "point_of_use", "label": "press line"}]});
    // A point on a column that is not a pressure, or an unknown point, is refused by name.
    let mut bad = mapping.clone();
    bad["columns"][1]["point"] = json!("header");
    let r = s.upload(id, "week.csv", csv.as_bytes(), &bad, "");
    assert_eq!(r.status, 422, "{}", r.text);
    assert_eq!(r.json()["error"]["field"], "columns[1].point");
    let mut bad = mapping.clone();
    bad["columns"][4]["point"] = json!("downstream");
    let r = s.upload(id, "week.csv", csv.as_bytes(), &bad, "");
    assert_eq!(r.status, 422, "{}", r.text);
    assert_eq!(r.json()["error"]["field"], "columns[4].point");
    let r = s.upload(id, "week.csv", csv.as_bytes(), &mapping, "");
    assert_eq!(r.status, 201, "{}", r.text);
    let uid = r.json()["upload_id"].as_i64().unwrap();
    // The remap page offers where each pressure was measured, in words, and its name.
    let page = s.get(&format!("/audits/{id}/uploads/{uid}/remap")).text;
    assert!(page.contains("name=\"col4_point\"") && page.contains(">point of use</option>"), "remap page");
    assert!(page.contains("value=\"press line\""));
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    let drops = sm["transmission"]["pressure_drops"].as_array().expect("drops");
    assert_eq!(drops.len(), 2, "{drops:?}");
    let (h, u) = (&drops[0], &drops[1]);
    assert_eq!((h["from"].as_str(), h["to"].as_str()), (Some("compressor room"), Some("main header")));
    assert_eq!((h["from_point"].as_str(), u["to_point"].as_str()), (Some("discharge"), Some("point_of_use")));
    // Mean drop = 0.02 × the mean flow, (9 × 8 + 9.5) / 10 = 8.15 m³/min: 0.163 bar; the point of use
    // 0.05 × 8.15 = 0.4075 bar.
    let near = |v: &Value, want: f64, tol: f64| (v.as_f64().unwrap() - want).abs() < tol;
    assert!(near(&h["mean_bar"], 0.163, 1e-3), "{h}");
    assert!(near(&u["mean_bar"], 0.4075, 1e-3), "{u}");
    // At peak flow: the bins are trapezoid means of the readings (the aligner's rule), so each
    // 9.5 reading makes two bins of (9.5 + 8) / 2 = 8.75 m³/min, the top 20 % of bins and so the
    // 95th percentile: the drop there is 0.02 × 8.75 = 0.175 bar.
    assert!(near(&h["at_peak_flow_bar"], 0.175, 1e-3), "{h}");
    assert_eq!(h["duration_curve_bar"].as_array().unwrap().len(), 21);
    // Cost: C1 is always loaded, so all its annual energy is delivering energy, and the drop's
    // worth of discharge pressure costs 1 % of it per 2 psi (US DOE compressed-air sourcebook;
    // 2 psi = 0.137895 bar by the NIST SP 811 psi factor).
    let annual = sm["baseline"]["annual_energy_kwh"].as_f64().unwrap();
    let want = annual * 0.01 * 0.163 / 0.137_895;
    assert!(near(&h["annual_energy_kwh"], want, want * 0.01), "{} vs {want}", h["annual_energy_kwh"]);
    let price = sm["baseline"]["electricity_price_per_kwh"].as_f64().unwrap();
    assert!(near(&h["annual_cost"], h["annual_energy_kwh"].as_f64().unwrap() * price, 1e-6));
    // The header figures are the header's, not the point of use's: its 5th percentile is
    // 7.6 - 0.02 × 8.75 = 7.425 bar(g).
    assert!(near(&sm["pressure"]["p5_bar_g"], 7.425, 2e-3), "{}", sm["pressure"]);
    // The pressure measure keeps the point of use's 5th percentile (7.6 - 0.05 × 8.75 = 7.1625)
    // above the low limit (7.5 - 1 = 6.5 bar(g)) plus the transmitter's uncertainty: that is the
    // critical point, and the set point comes down by 7.1625 - 6.5 - u from the mean header pressure.
    let lp = sm["recommendations"]
        .as_array()
        .unwrap()
        .iter()
        .find(|m| m["kind"] == "lower_pressure")
        .expect("room");
    assert!(lp["description"].as_str().unwrap().contains("critical point of use (press line)"), "{lp}");
    let u_bar = sm["pressure"]["uncertainty_bar"].as_f64().unwrap();
    let mean = sm["pressure"]["mean_bar_g"].as_f64().unwrap();
    let target = mean - (7.1625 - 6.5 - u_bar);
    assert!(
        lp["title"].as_str().unwrap().ends_with(&format!("to {target:.2} bar(g)")),
        "{} vs {target}",
        lp["title"]
    );

    // The report says each drop in words and the reader's units; a US reader sees psi (0.163 bar
    // = 2.364 psi by the NIST SP 811 psi factor, shown to 0.1 psi).
    let report = s.get(&format!("/audits/{id}/report")).text;
    assert!(
        report.contains("Pressure drop: compressor room (compressor discharge) to main header (header)"),
        "report rows"
    );
    // The report's pressure chart draws every point together, each named with where it was measured.
    assert!(
        report.contains("press line (point of use)")
            && report.contains("compressor room (compressor discharge)")
    );
    let r = s.patch_json(&format!("/api/v1/audits/{id}"), &json!({"site": {"display_units": "us"}}));
    assert_eq!(r.status, 200, "{}", r.text);
    let report = s.get(&format!("/audits/{id}/report")).text.replace('\u{a0}', " ");
    assert!(report.contains("mean 2.4 psi"), "US drop");
    // Read again with P2 moved to after the treatment under another name, from the page's form:
    // the header figures then fall back to the nearest point upstream of the header (P2), and the
    // drops follow.
    let r = s.post_form(
        &format!("/audits/{id}/uploads/{uid}/remap"),
        &[("col3_point", "after_treatment"), ("col3_label", "after the dryer")],
    );
    assert_eq!(r.status, 303, "{}", r.text);
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    let drops = sm["transmission"]["pressure_drops"].as_array().unwrap();
    assert_eq!(drops[0]["to"], "after the dryer", "{drops:?}");
    assert_eq!(drops[0]["to_point"], "after_treatment");
    assert!(near(&sm["pressure"]["p5_bar_g"], 7.425, 2e-3), "{}", sm["pressure"]);
}

/// Filters over HTTP: stored, refused naming the field, priced in `summary.transmission.filters` by
/// the drop ∝ flow² rule and the pressure rule, offered as `filter_change`, edited and deleted; a
/// non-cycling refrigerated dryer offers `cycling_refrigerated_dryer`, its saving worked by hand.
#[test]
fn filters_and_a_non_cycling_dryer_are_priced_edited_and_deleted() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let r = s.upload(id, "cycle.csv", cycling_csv(24).as_bytes(), &cycling_mapping(), "");
    assert_eq!(r.status, 201, "{}", r.text);
    let path = format!("/api/v1/audits/{id}/filters");
    let good = json!({"tag": "F1", "kind": "coalescing", "rated_flow_m3_min": 10, "clean_drop_bar": 0.1,
                      "measured_drop_bar": 0.6, "element_change_months": 12});
    let r = s.post_json(&path, &good);
    assert_eq!(r.status, 201, "{}", r.text);
    let fid = r.json()["id"].as_i64().unwrap();
    for (body, field) in [
        (
            json!({"tag": "F2", "kind": "coalescing", "rated_flow_m3_min": 10, "clean_drop_bar": -0.1, "measured_drop_bar": 0.3}),
            "clean_drop_bar",
        ),
        (
            json!({"tag": "F2", "kind": "coalescing", "rated_flow_m3_min": 10, "clean_drop_bar": 0.1, "measured_drop_bar": -0.2}),
            "measured_drop_bar",
        ),
        (
            json!({"tag": "F2", "kind": "sintered", "rated_flow_m3_min": 10, "clean_drop_bar": 0.1, "measured_drop_bar": 0.3}),
            "kind",
        ),
        (
            json!({"tag": "F2", "kind": "particulate", "rated_flow_m3_min": 10, "clean_drop_bar": 0.1, "measured_drop_bar": 70}),
            "measured_drop_bar",
        ),
        (
            json!({"tag": "F2", "kind": "particulate", "rated_flow_m3_min": 10, "clean_drop_bar": 0.1, "measured_drop_psi": 3}),
            "measured_drop_psi",
        ),
        (
            json!({"tag": "F2", "kind": "particulate", "rated_flow_m3_min": 10, "clean_drop_bar": 0.1, "measured_drop_bar": 0.3, "element_cost": -1}),
            "element_cost",
        ),
    ] {
        let r = s.post_json(&path, &body);
        assert_eq!(r.status, 422, "{}", r.text);
        assert_eq!(r.json()["error"]["field"], field, "{}", r.text);
    }
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/dryers"),
        &json!({"tag": "R1", "kind": "refrigerated", "rated_flow_m3_min": 20, "power_kw": 4.0}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let list = s.get(&path).json();
    assert_eq!(list["filters"].as_array().unwrap().len(), 1, "{list}");
    assert_eq!(list["filters"][0]["element_change_months"], 12.0);

    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    let f = &sm["transmission"]["filters"][0];
    let num = |v: &Value| v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"));
    // By hand: the whole mean flow passes the filter; clean drop 0.1 × (Q / 10)², excess 0.6 - that.
    let q = num(&sm["system"]["mean_flow_m3_min"]);
    let clean = 0.1 * (q / 10.0) * (q / 10.0);
    assert!((num(&f["flow_m3_min"]) - q).abs() < 1e-12, "{f}");
    assert!((num(&f["clean_drop_at_flow_bar"]) - clean).abs() < 1e-12, "{f}");
    assert!((num(&f["excess_drop_bar"]) - (0.6 - clean)).abs() < 1e-12, "{f}");
    assert_eq!(f["change_recommended"], true);
    // Its cost and the measure use the one pressure rule on the same loaded energy (US DOE
    // sourcebook, 1 % per 2 psi): the measure alone saves what the figure says the drop costs.
    let recs = sm["recommendations"].as_array().unwrap();
    let fc = recs.iter().find(|m| m["kind"] == "filter_change").unwrap_or_else(|| panic!("{recs:?}"));
    let kwh = num(&f["annual_kwh"]);
    assert!(kwh > 0.0);
    assert!((num(&fc["standalone_annual_energy_saving_kwh"]) - kwh).abs() < 1e-6 * kwh, "{fc} vs {f}");
    let price = num(&sm["baseline"]["electricity_price_per_kwh"]);
    assert!((num(&f["annual_cost"]) - kwh * price).abs() < 1e-6 * kwh);
    // No element cost on record: 300 per element (stated default).
    assert_eq!(num(&fc["implementation_cost"]), 300.0);
    assert!(fc["caution"].as_str().unwrap().contains("filter housing"), "{fc}");
    // The refrigerated dryer: 4 kW × (1 - max(Q / 20, 0.2)) × running hours (floor 0.2).
    let load = (q / 20.0_f64).max(0.2);
    let want = 4.0 * (1.0 - load) * num(&sm["baseline"]["annual_running_hours"]);
    let cyc = recs.iter().find(|m| m["kind"] == "cycling_refrigerated_dryer").expect("cycling dryer measure");
    assert!((num(&cyc["standalone_annual_energy_saving_kwh"]) - want).abs() < 1e-6 * want, "{cyc}");
    assert_eq!(num(&cyc["implementation_cost"]), 600.0 * 20.0);
    let d = &sm["transmission"]["dryers"][0];
    assert!((num(&d["cycling_saving_kwh"]) - want).abs() < 1e-6 * want, "{d}");
    for page in ["findings", "report"] {
        let html = s.get(&format!("/audits/{id}/{page}")).text;
        assert!(html.contains("Filter F1"), "{page}");
    }

    // Edited: a drop only 0.05 bar above clean is no measure; a bad edit is refused naming its field.
    let mut edit = good.clone();
    edit["measured_drop_bar"] = json!(clean + 0.05);
    let r = s.put_json(&format!("{path}/{fid}"), &edit);
    assert_eq!(r.status, 200, "{}", r.text);
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    assert_eq!(sm["transmission"]["filters"][0]["change_recommended"], false);
    assert!(sm["recommendations"].as_array().unwrap().iter().all(|m| m["kind"] != "filter_change"));
    edit["measured_drop_bar"] = json!(-1);
    let r = s.put_json(&format!("{path}/{fid}"), &edit);
    assert_eq!(r.status, 422, "{}", r.text);
    assert_eq!(r.json()["error"]["field"], "measured_drop_bar");
    assert_eq!(s.put_json(&format!("{path}/{}", fid + 100), &good).status, 404);
    // Deleted.
    assert_eq!(s.delete(&format!("{path}/{fid}")).status, 204);
    assert_eq!(s.delete(&format!("{path}/{fid}")).status, 404);
    assert!(s.get(&path).json()["filters"].as_array().unwrap().is_empty());
}

/// The page's edit form of a dryer, drawn in US units, saved unchanged keeps the stored SI value to
/// the bit; a changed field is read in the form's units (NIST SP 811: 1 ft³ = 0.028316846592 m³),
/// and a bad edit is a 422 naming what is wrong.
#[test]
fn the_treatment_page_edits_a_record_without_drift() {
    let s = Server::start();
    let r = s.post_json(
        "/api/v1/audits",
        &json!({"name": "us plant", "site": {"altitude_m": 0, "display_units": "us"}}),
    );
    let id = r.json()["id"].as_i64().unwrap();
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/dryers"),
        &json!({"tag": "D1", "kind": "heatless_desiccant", "rated_flow_m3_min": 10.3, "purge_fraction": 0.17,
                "power_kw": 0.3, "control": "fixed_cycle"}),
    );
    let did = r.json()["id"].as_i64().unwrap();
    let page = s.get(&format!("/audits/{id}/treatment")).text;
    // 10.3 m³/min in cfm to 0.1 cfm, the field's resolution (NIST SP 811 factor), the purge as a
    // percentage.
    let cfm = entry_shown(10.3 / 0.028_316_846_592);
    assert_eq!(cfm, "363.7");
    assert!(page.contains(&format!("value=\"{cfm}\"")), "the edit form shows {cfm} cfm");
    let form = |rated: &str, purge: &str| {
        vec![
            ("entry_units", "us".to_string()),
            ("tag", "D1".to_string()),
            ("kind", "heatless_desiccant".to_string()),
            ("control", "fixed_cycle".to_string()),
            ("rated_flow_m3_min", rated.to_string()),
            ("purge_percent", purge.to_string()),
            ("power_kw", "0.3".to_string()),
        ]
    };
    let post = |fields: Vec<(&str, String)>| {
        let pairs: Vec<(&str, &str)> = fields.iter().map(|(k, v)| (*k, v.as_str())).collect();
        s.post_form(&format!("/audits/{id}/treatment/dryers/{did}"), &pairs)
    };
    let before = s.get(&format!("/api/v1/audits/{id}/dryers")).json()["dryers"][0].clone();
    for _ in 0..3 {
        let r = post(form(&cfm, "17"));
        assert!(r.status == 303 || r.status == 200, "{} {}", r.status, r.text);
    }
    let after = s.get(&format!("/api/v1/audits/{id}/dryers")).json()["dryers"][0].clone();
    assert_eq!(after, before, "an unchanged save moved the record");
    assert_eq!(after["rated_flow_m3_min"].as_f64().unwrap().to_bits(), 10.3f64.to_bits());
    // 400 cfm typed: 400 × 0.028316846592 m³/min.
    let r = post(form("400", "17"));
    assert!(r.status == 303 || r.status == 200, "{} {}", r.status, r.text);
    let d = s.get(&format!("/api/v1/audits/{id}/dryers")).json()["dryers"][0].clone();
    assert!((d["rated_flow_m3_min"].as_f64().unwrap() - 400.0 * 0.028_316_846_592).abs() < 1e-12, "{d}");
    assert_eq!(d["purge_fraction"], 0.17);
    let r = post(form("400", "170"));
    assert_eq!(r.status, 422, "{}", r.text);
    assert!(
        r.text.contains("Purge (share of rated flow): must be from 0 % to 100 %, got 170 %"),
        "the reason names the field, as a percentage as typed"
    );
    assert_eq!(s.post_form(&format!("/audits/{id}/treatment/dryers/{}", did + 50), &[]).status, 404);
}

/// A number as a form field shows it: nine significant figures, no trailing zeros (`core::entry`).
fn entry_shown(v: f64) -> String {
    // A flow in cfm is shown to 0.1 cfm (`core::entry::Entry::decimals`).
    let s = format!("{v:.1}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}
