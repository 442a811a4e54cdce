//! The part-load model behind the marginal specific power, end to end: the system volume posted to
//! the audit reaches the price, and the summary says which curve and storage it used.
//!
//! Outside values: `tests/reference/partload_fixture.json`, the slope of a load/unload machine's
//! part-load curve computed by stepping a receiver and a blow-down cycle in time
//! (`tests/reference/partload_reference.py`); 1 US gal = 3.785411784 l and 1 ft³ = 28.316846592 l
//! (NIST SP 811 definitions).

use crate::support::*;

fn fixture_slope(gal_per_cfm: f64, x: f64) -> f64 {
    let f: Value =
        serde_json::from_str(include_str!("../reference/partload_fixture.json")).expect("partload fixture");
    let curve = f["curves"].as_array().unwrap().iter().find(|c| c["us_gal_per_cfm"] == gal_per_cfm).unwrap();
    curve["slope_at_load_share_per_share"]
        .as_array()
        .unwrap()
        .iter()
        .find(|p| (p[0].as_f64().unwrap() - x).abs() < 1e-9)
        .unwrap()[1]
        .as_f64()
        .unwrap()
}

#[test]
fn leaks_are_priced_on_the_storage_on_record_or_on_3_us_gal_per_cfm_said_to_be_assumed() {
    let s = Server::start();
    // C1: 55 kW, 9.5 m³/min load/unload at sea level; the file cycles 40 s loaded at 56 kW and 160 s
    // unloaded at 14 kW: load share 0.2, unloaded level a quarter of the loaded one.
    let id = s.audit_with_compressor("C1");
    let r = s.upload(id, "cycling.csv", cycling_csv(24).as_bytes(), &cycling_mapping(), "");
    assert_eq!(r.status, 201, "{}", r.text);
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/field-tests"),
        &json!({"kind": "bleed_down", "volume_m3": 3.0, "start_pressure_bar_g": 7.0,
                "end_pressure_bar_g": 5.5, "duration_s": 120}),
    );
    assert_eq!(r.status, 201, "{}", r.text);

    let summary = |s: &Server| {
        let r = s.get(&format!("/api/v1/audits/{id}/summary"));
        assert_eq!(r.status, 200, "{}", r.text);
        r.json()
    };
    // No volume on record: 3 US gal/cfm assumed, and said so.
    let sum = summary(&s);
    let m = &sum["part_load_model"];
    assert_eq!(m["machine"], "C1");
    assert_eq!(m["curve"], "load_unload_with_storage");
    assert_eq!(m["storage_assumed"], true, "{m}");
    assert!((m["storage_us_gal_per_cfm"].as_f64().unwrap() - 3.0).abs() < 1e-9, "{m}");
    assert!((m["load_fraction"].as_f64().unwrap() - 0.2).abs() < 0.01, "{m}");
    assert_eq!(m["unloaded_source"], "log");
    let want = fixture_slope(3.0, 0.2) * 56.0 / 9.5;
    let got = sum["leaks"]["marginal_kw_per_m3_min"].as_f64().unwrap();
    assert!((got - want).abs() / want < 0.02, "marginal {got} vs time-domain slope {want}");
    assert!(sum["assumptions"].to_string().contains("no system volume on record"), "{}", sum["assumptions"]);

    // 5 US gal/cfm of C1 posted as a receiver: the price follows the storage on record.
    let v = 5.0 * 3.785_411_784 / 28.316_846_592 * 9.5;
    let r = s.post_json(&format!("/api/v1/audits/{id}/receivers"), &json!({"name": "R1", "volume_m3": v}));
    assert_eq!(r.status, 201, "{}", r.text);
    let sum = summary(&s);
    let m = &sum["part_load_model"];
    assert_eq!(m["storage_assumed"], false, "{m}");
    assert!((m["storage_m3"].as_f64().unwrap() - v).abs() < 1e-9, "{m}");
    assert!((m["storage_us_gal_per_cfm"].as_f64().unwrap() - 5.0).abs() < 1e-6, "{m}");
    let want = fixture_slope(5.0, 0.2) * 56.0 / 9.5;
    let got = sum["leaks"]["marginal_kw_per_m3_min"].as_f64().unwrap();
    assert!((got - want).abs() / want < 0.02, "marginal {got} vs time-domain slope {want}");
    // The leak energy is priced at that marginal: leak flow × marginal × running hours (DOE leaks fact sheet).
    let q = sum["leaks"]["adopted_leak_flow_m3_min"].as_f64().unwrap();
    let hours = sum["baseline"]["annual_running_hours"].as_f64().unwrap();
    let kwh = sum["leaks"]["annual_leak_energy_kwh"].as_f64().unwrap();
    assert!((kwh - q * got * hours).abs() / kwh < 1e-9, "{kwh} vs {q} × {got} × {hours}");
}
