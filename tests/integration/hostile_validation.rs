//! Hostile and unlucky input to the JSON API (issue 15, "Validation"): every number finite and within
//! its documented range, unknown fields refused, type errors naming their field. Each probe checks the
//! 422, the `field` named, and that nothing was stored.
//!
//! The ranges are documented beside the records: `site` (site, compressors, receivers),
//! `core::fieldtest`, `core::simulate::plant` (scenarios), `core::recommend` (costs) and `web::api`
//! (calculators).

use serde_json::{json, Value};

use crate::support::{Resp, Server};

/// The response is a 422 in the API's error shape naming `field`.
fn assert_refused(r: &Resp, field: &str, probe: &Value) {
    assert_eq!(r.status, 422, "{probe}: {}", r.text);
    let j = r.json();
    assert_eq!(j["error"]["field"], field, "{probe}: {}", r.text);
    assert!(!j["error"]["message"].as_str().unwrap_or("").is_empty(), "{probe}: {}", r.text);
}

fn compressor(tag: &str) -> Value {
    json!({"tag": tag, "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
           "rated_power_kw": 55, "rated_flow_m3_min": 9.5, "rated_pressure_bar_g": 7.5})
}

fn bleed_down() -> Value {
    json!({"kind": "bleed_down", "volume_m3": 3.0, "start_pressure_bar_g": 7.0,
           "end_pressure_bar_g": 5.5, "duration_s": 95})
}

fn with(base: &Value, key: &str, v: Value) -> Value {
    let mut b = base.clone();
    b[key] = v;
    b
}

fn count(s: &Server, path: &str, key: &str) -> usize {
    let r = s.get(path);
    assert_eq!(r.status, 200, "{}", r.text);
    r.json()[key].as_array().map_or(usize::MAX, Vec::len)
}

#[test]
fn probe_huge_price_is_refused_naming_the_field() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let audit = format!("/api/v1/audits/{id}");
    for (field, v) in [
        ("electricity_price_per_kwh", json!(1e308)),
        ("heating_fuel_price_per_kwh", json!(1e308)),
        ("demand_charge_per_kw_month", json!(1e300)),
        ("electricity_price_per_kwh", json!(-0.1)),
        ("grid_co2_kg_per_kwh", json!(1e308)),
        ("fuel_co2_kg_per_kwh", json!(5)),
        ("other_volume_m3", json!(1e308)),
        ("altitude_m", json!(1e308)),
        ("heater_efficiency", json!(1e308)),
    ] {
        let body = json!({"site": {field: v}});
        assert_refused(&s.patch_json(&audit, &body), field, &body);
    }
    // Nothing was stored: the documented defaults hold.
    let a = s.get(&audit).json();
    assert_eq!(a["site"]["electricity_price_per_kwh"], 0.15, "{a}");
    assert_eq!(a["site"]["heating_fuel_price_per_kwh"], 0.08, "{a}");
    assert_eq!(a["site"]["other_volume_m3"], 0.0, "{a}");
    // A new audit with a huge price is not created.
    let before = count(&s, "/api/v1/audits", "audits");
    let body = json!({"name": "x", "site": {"electricity_price_per_kwh": 1e308}});
    assert_refused(&s.post_json("/api/v1/audits", &body), "electricity_price_per_kwh", &body);
    assert_eq!(count(&s, "/api/v1/audits", "audits"), before);
    // The cost override: huge and negative refused, a plain one taken.
    let cost = format!("/api/v1/audits/{id}/costs/repair_leaks");
    for v in [json!(1e308), json!(-1)] {
        let body = json!({"implementation_cost": v});
        assert_refused(&s.put_json(&cost, &body), "implementation_cost", &body);
    }
    let r = s.put_json(&cost, &json!({"implementation_cost": 2500.0}));
    assert_eq!(r.status, 200, "{}", r.text);
}

#[test]
fn probe_huge_equipment_values_are_refused_and_not_stored() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let url = format!("/api/v1/audits/{id}/compressors");
    let base = compressor("C2");
    for (field, v) in [
        ("rated_power_kw", json!(1e308)),
        ("rated_flow_m3_min", json!(1e308)),
        ("rated_pressure_bar_g", json!(1e308)),
        ("rated_pressure_bar_g", json!(400)),
        ("unloaded_power_fraction", json!(1e308)),
        ("rated_specific_power_kw_per_m3_min", json!(1e308)),
        ("power_curve", json!([[1e308, 50]])),
        ("stages", json!(40)),
    ] {
        let body = with(&base, field, v);
        assert_refused(&s.post_json(&url, &body), field, &body);
    }
    let body = json!({"name": "R1", "volume_m3": 1e308});
    assert_refused(&s.post_json(&format!("/api/v1/audits/{id}/receivers"), &body), "volume_m3", &body);
    let a = s.get(&format!("/api/v1/audits/{id}")).json();
    assert_eq!(a["compressors"].as_array().map(Vec::len), Some(1), "{a}");
    assert_eq!(a["receivers"].as_array().map(Vec::len), Some(0), "{a}");
}

#[test]
fn probe_tiny_bleed_down_duration_is_refused() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let url = format!("/api/v1/audits/{id}/field-tests");
    let base = bleed_down();
    for (field, v) in [
        ("duration_s", json!(1e-300)),
        ("duration_s", json!(1e308)),
        ("volume_m3", json!(1e308)),
        ("start_pressure_bar_g", json!(1e308)),
        ("operating_pressure_bar_g", json!(1e308)),
    ] {
        let body = with(&base, field, v);
        assert_refused(&s.post_json(&url, &body), field, &body);
    }
    // The huge volume with the tiny duration of the probe: refused on one of them.
    let body = with(&with(&base, "volume_m3", json!(1e308)), "duration_s", json!(1e-300));
    let r = s.post_json(&url, &body);
    assert_eq!(r.status, 422, "{}", r.text);
    for (field, v) in [("loaded_s", json!(1e-300)), ("unloaded_s", json!(1e308))] {
        let lu = json!({"kind": "load_unload", "compressor": "C1", "loaded_s": 40, "unloaded_s": 160});
        let body = with(&lu, field, v);
        assert_refused(&s.post_json(&url, &body), field, &body);
    }
    assert_eq!(count(&s, &url, "field_tests"), 0);
    // The same test with sane numbers is taken.
    let r = s.post_json(&url, &base);
    assert_eq!(r.status, 201, "{}", r.text);
    assert_eq!(count(&s, &url, "field_tests"), 1);
}

#[test]
fn probe_unknown_field_on_a_field_test_is_refused_and_not_stored() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let url = format!("/api/v1/audits/{id}/field-tests");
    let body = with(&bleed_down(), "bogus", json!("<b>x</b>"));
    assert_refused(&s.post_json(&url, &body), "bogus", &body);
    let lu = json!({"kind": "load_unload", "compressor": "C1", "loaded_s": 40, "unloaded_s": 160,
                    "notes": "<script>1</script>"});
    assert_refused(&s.post_json(&url, &lu), "notes", &lu);
    assert_eq!(count(&s, &url, "field_tests"), 0);
    // Nor anywhere else: equipment, site, calculators, costs.
    let c = with(&compressor("C2"), "bogus", json!(1));
    assert_refused(&s.post_json(&format!("/api/v1/audits/{id}/compressors"), &c), "bogus", &c);
    let site = json!({"site": {"bogus": 1}});
    assert_refused(&s.patch_json(&format!("/api/v1/audits/{id}"), &site), "site.bogus", &site);
    let cost = json!({"implementation_cost": 1, "bogus": 1});
    assert_refused(&s.put_json(&format!("/api/v1/audits/{id}/costs/repair_leaks"), &cost), "bogus", &cost);
    let calc = json!({"diameter_mm": 3, "pressure_bar_g": 7, "bogus": 1});
    assert_refused(&s.post_json("/api/v1/calc/orifice-leak", &calc), "bogus", &calc);
    let a = s.get(&format!("/api/v1/audits/{id}")).json();
    assert_eq!(a["compressors"].as_array().map(Vec::len), Some(1), "{a}");
}

#[test]
fn probe_unknown_change_field_in_a_scenario_is_refused() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let url = format!("/api/v1/audits/{id}/scenarios");
    let cases = [
        (
            json!({"name": "x", "changes": [{"op": "set_pressure", "target_bar_g": 6.5, "bogus": "<b>x</b>"}]}),
            "changes[0].bogus",
        ),
        (json!({"name": "x", "changes": [], "bogus": 1}), "bogus"),
        (
            json!({"name": "x", "changes": [{"op": "add", "compressor": with(&compressor("N1"), "colour", json!("red"))}]}),
            "changes[0].compressor.colour",
        ),
        // Huge numbers in changes: the set-point that showed "below inf bar(g)".
        (
            json!({"name": "x", "changes": [{"op": "set_pressure", "target_bar_g": 1e308}]}),
            "changes[0].target_bar_g",
        ),
        (
            json!({"name": "x", "changes": [{"op": "add_storage", "volume_m3": 1e308}]}),
            "changes[0].volume_m3",
        ),
        (json!({"name": "x", "changes": [{"op": "reduce_leaks", "fraction": 1e308}]}), "changes[0].fraction"),
        (
            json!({"name": "x", "changes": [{"op": "add", "compressor": with(&compressor("N1"), "rated_flow_m3_min", json!(1e308))}]}),
            "changes[0].compressor.rated_flow_m3_min",
        ),
        (json!({"name": "x", "changes": [], "implementation_cost": 1e308}), "implementation_cost"),
    ];
    for (body, field) in &cases {
        assert_refused(&s.post_json(&url, body), field, body);
    }
    assert_eq!(count(&s, &url, "scenarios"), 0);
}

#[test]
fn probe_type_error_names_the_field() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let c = with(&compressor("C2"), "rated_power_kw", json!("fifty"));
    assert_refused(&s.post_json(&format!("/api/v1/audits/{id}/compressors"), &c), "rated_power_kw", &c);
    let t = with(&bleed_down(), "start_pressure_bar_g", json!("seven"));
    let tests = format!("/api/v1/audits/{id}/field-tests");
    assert_refused(&s.post_json(&tests, &t), "start_pressure_bar_g", &t);
    let sc = json!({"name": "x", "changes": [{"op": "set_pressure", "target_bar_g": "high"}]});
    let scenarios = format!("/api/v1/audits/{id}/scenarios");
    assert_refused(&s.post_json(&scenarios, &sc), "changes[0].target_bar_g", &sc);
    let sc = json!({"name": "x", "changes": [{"op": "add", "compressor": with(&compressor("N1"), "rated_power_kw", json!("fifty"))}]});
    assert_refused(&s.post_json(&scenarios, &sc), "changes[0].compressor.rated_power_kw", &sc);
    let calc = json!({"flow_m3_min": "lots", "discharge_pressure_bar_g": 7});
    assert_refused(&s.post_json("/api/v1/calc/compression", &calc), "flow_m3_min", &calc);
    let cost = json!({"implementation_cost": "cheap"});
    assert_refused(
        &s.put_json(&format!("/api/v1/audits/{id}/costs/repair_leaks"), &cost),
        "implementation_cost",
        &cost,
    );
    assert_eq!(count(&s, &tests, "field_tests"), 0);
    assert_eq!(count(&s, &scenarios, "scenarios"), 0);
    let a = s.get(&format!("/api/v1/audits/{id}")).json();
    assert_eq!(a["compressors"].as_array().map(Vec::len), Some(1), "{a}");
}

#[test]
fn probe_calculators_refuse_non_physical_inputs() {
    let s = Server::start();
    let orifice = json!({"diameter_mm": 3.0, "pressure_bar_g": 7.0});
    for (field, v) in [
        ("diameter_mm", json!(1e308)),
        ("diameter_mm", json!(0)),
        ("pressure_bar_g", json!(1e308)),
        ("discharge_coefficient", json!(5)),
        ("upstream_temperature_c", json!(1e308)),
        ("atmospheric_pressure_kpa_abs", json!(1e308)),
        ("inlet_temperature_c", json!(1e308)),
    ] {
        let body = with(&orifice, field, v);
        assert_refused(&s.post_json("/api/v1/calc/orifice-leak", &body), field, &body);
    }
    let compression = json!({"flow_m3_min": 10.0, "discharge_pressure_bar_g": 7.0});
    for (field, v) in [
        ("flow_m3_min", json!(1e308)),
        ("discharge_pressure_bar_g", json!(1e308)),
        ("stages", json!(0)),
        ("stages", json!(4_000_000_000u64)),
        ("isentropic_efficiency", json!(1e308)),
        ("intercooled_to_c", json!(1e308)),
        ("inlet_pressure_kpa_abs", json!(1e308)),
        ("inlet_temperature_c", json!(-1e308)),
    ] {
        let body = with(&compression, field, v);
        assert_refused(&s.post_json("/api/v1/calc/compression", &body), field, &body);
    }
    // Sane inputs still compute.
    let r = s.post_json("/api/v1/calc/orifice-leak", &orifice);
    assert_eq!(r.status, 200, "{}", r.text);
    assert!(r.json()["leak_flow_m3_min"].as_f64().is_some_and(|q| q > 0.0 && q.is_finite()), "{}", r.text);
    let r = s.post_json("/api/v1/calc/compression", &compression);
    assert_eq!(r.status, 200, "{}", r.text);
    assert!(r.json()["shaft_power_kw"].as_f64().is_some_and(|p| p > 0.0 && p.is_finite()), "{}", r.text);
}
