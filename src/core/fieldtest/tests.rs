//! Tests of `core::fieldtest`, against the sources named beside each.

use super::*;
use crate::core::model::{Control, WeeklySchedule};
use crate::core::series::{FrameColumn, Grid};
use crate::core::states::tests::spec;

fn site() -> SiteAir {
    SiteAir::new(101.325, 20.0)
}

/// A result reads back from its JSON as the same variant with the same figures, and writes the
/// same JSON again (the application stores results typed).
fn assert_json_round_trip(r: &FieldTestResult) {
    let json = serde_json::to_value(r).unwrap();
    let back: FieldTestResult = serde_json::from_value(json.clone()).unwrap();
    assert_eq!(&back, r);
    assert_eq!(serde_json::to_value(&back).unwrap(), json);
}

#[test]
fn bleed_down_matches_the_doe_worked_example() {
    // US DOE compressed-air sourcebook, leaks fact sheet (worked bleed-down formula): V = 5 ft³, 100 -> 50 psig in 60 min -> 0.354 cfm
    // with the 1.25 factor. The site is at 14.7 psia as the US formula assumes.
    let s = SiteAir::new(14.7 * 6.894_757_293_168, 20.0);
    let psi_in_bar = 6.894_757_293_168 / 100.0;
    let storage = StorageSpec::default();
    let ctx = FieldTestContext {
        site: &s,
        compressors: &[],
        storage: &storage,
        frame: None,
        production: None,
        timezone: "UTC",
        units: crate::core::units::UnitSystem::Si,
    };
    let input: FieldTestInput = serde_json::from_str(&format!(
        r#"{{"kind": "bleed_down", "volume_m3": {}, "start_pressure_bar_g": {}, "end_pressure_bar_g": {}, "duration_s": 3600}}"#,
        5.0 * 0.028_316_846_592,
        100.0 * psi_in_bar,
        50.0 * psi_in_bar
    ))
    .unwrap();
    let FieldTestResult::BleedDown(r) = evaluate(&input, &ctx).unwrap() else { panic!() };
    let cfm = |m3_min: f64| m3_min * 35.314_666_7;
    assert!((cfm(r.doe_rule_of_thumb_flow_m3_min) - 0.354).abs() < 0.001, "{r:?}");
    // Mean flow 5 x 50 / (60 x 14.7) cfm; at the start pressure scaled by 114.7 / p_log-mean,
    // p_log-mean = 50 / ln(114.7 / 64.7) psia (choked leak flow proportional to absolute
    // pressure, so the decay is exponential).
    let mean = 5.0 * 50.0 / (60.0 * 14.7);
    let log_mean_psia = 50.0 / (114.7f64 / 64.7).ln();
    assert!((cfm(r.mean_leak_flow_m3_min) - mean).abs() < 1e-4);
    let read = r.leak_flow_at_operating_pressure_m3_min;
    assert!((cfm(read) - mean * 114.7 / log_mean_psia).abs() < 1e-4);
    // The flow taken is the reading corrected for the air's cooling, read / (1 + overstatement);
    // its range runs from it less the instruments' uncertainty to the reading plus the same.
    let over = r.non_isothermal_overstatement.unwrap();
    assert!(over > 0.0 && (r.leak_flow_m3_min * (1.0 + over) / read - 1.0).abs() < 1e-12, "{r:?}");
    let u = 1.0 - r.leak_flow_m3_min_low / r.leak_flow_m3_min;
    assert!(u > 0.0 && (r.leak_flow_m3_min_high / read - 1.0 - u).abs() < 1e-12, "{r:?}");
    assert!((r.log_mean_pressure_bar_g - (log_mean_psia - 14.7) * psi_in_bar).abs() < 1e-6);
    // An hour's fall of 5 ft³ is near isothermal: no warning.
    assert!(r.warnings.is_empty(), "{:?}", r.warnings);
    assert!(r.leak_flow_m3_min_low < r.leak_flow_m3_min && read < r.leak_flow_m3_min_high);
    assert_json_round_trip(&FieldTestResult::BleedDown(r.clone()));
    let json = serde_json::to_value(FieldTestResult::BleedDown(r)).unwrap();
    assert_eq!(json["volume_source"], "given");
    assert!(json.get("mean_leak_flow_m3_min").is_some());
    assert!(json.get("leak_flow_at_operating_pressure_m3_min").is_some());
}

#[test]
fn load_unload_7_5_of_30_min_is_25_percent() {
    // US DOE compressed-air sourcebook, leaks fact sheet: 7.5 min on-load in 30 min -> 25 % leakage.
    let cs = vec![spec("C2", Control::LoadUnload, 55.0, 9.5)];
    let storage = StorageSpec::default();
    let s = site();
    let ctx = FieldTestContext {
        site: &s,
        compressors: &cs,
        storage: &storage,
        frame: None,
        production: None,
        timezone: "UTC",
        units: crate::core::units::UnitSystem::Si,
    };
    let input: FieldTestInput = serde_json::from_str(
        r#"{"kind": "load_unload", "compressor": "C2", "loaded_s": 450, "unloaded_s": 1350}"#,
    )
    .unwrap();
    let r = evaluate(&input, &ctx).unwrap();
    assert_json_round_trip(&r);
    let json = serde_json::to_value(&r).unwrap();
    assert!((json["leak_fraction"].as_f64().unwrap() - 0.25).abs() < 1e-12);
    assert!((r.leak_flow_m3_min() - 0.25 * 9.5).abs() < 1e-12);
    let bad = FieldTestInput::LoadUnload { compressor: "C9".into(), loaded_s: 40.0, unloaded_s: 160.0 };
    assert_eq!(evaluate(&bad, &ctx).unwrap_err().field, "compressor");
}

#[test]
fn bad_inputs_are_rejected_with_their_field() {
    let s = site();
    let storage = StorageSpec { receivers_m3: vec![2.0], other_volume_m3: 0.5 };
    let ctx = FieldTestContext {
        site: &s,
        compressors: &[],
        storage: &storage,
        frame: None,
        production: None,
        timezone: "UTC",
        units: crate::core::units::UnitSystem::Si,
    };
    let bd = |p1: f64, p2: f64, t: f64| FieldTestInput::BleedDown {
        volume_m3: None,
        start_pressure_bar_g: p1,
        end_pressure_bar_g: p2,
        duration_s: t,
        operating_pressure_bar_g: None,
        air_temperature_c: None,
    };
    assert_eq!(evaluate(&bd(7.0, -1.5, 60.0), &ctx).unwrap_err().field, "end_pressure_bar_g");
    assert_eq!(evaluate(&bd(5.0, 6.0, 60.0), &ctx).unwrap_err().field, "end_pressure_bar_g");
    assert_eq!(evaluate(&bd(7.0, 5.0, 0.0), &ctx).unwrap_err().field, "duration_s");
    // The default volume is the system volume, 2.5 m³.
    let FieldTestResult::BleedDown(r) = evaluate(&bd(7.0, 5.5, 95.0), &ctx).unwrap() else { panic!() };
    assert_eq!((r.volume_m3, r.volume_source), (2.5, VolumeSource::SystemVolume));
    let w = FieldTestInput::IdleFlow {
        start: "2026-03-02T06:00:00Z".into(),
        end: "2026-03-02T05:00:00Z".into(),
        production_pressure_bar_g: None,
        purge_and_drains_m3_min: None,
    };
    assert_eq!(evaluate(&w, &ctx).unwrap_err().field, "end");
    let w = FieldTestInput::IdleFlow {
        start: "2026-03-02T04:00:00Z".into(),
        end: "2026-03-02T05:00:00Z".into(),
        production_pressure_bar_g: None,
        purge_and_drains_m3_min: None,
    };
    assert_eq!(evaluate(&w, &ctx).unwrap_err().field, "start"); // no logged data
}

/// A frame 2026-03-02T00:00Z, 10 s bins, one hour: pressure decaying exponentially from 7 bar(g)
/// with time constant `tau_s`, a constant flow of `flow_m3_min`, and C1's power.
pub(crate) fn decay_frame(s: &SiteAir, tau_s: f64, flow_m3_min: f64, c1_kw: f32) -> Frame {
    let start_ms = 1_772_409_600_000; // 2026-03-02T00:00:00Z
    let grid = Grid { start_ms, step_ms: 10_000, len: 360 };
    let p0 = PressureAbs::from_bar_g(7.0, s.atmosphere).0;
    let pressure: Vec<f32> =
        (0..360).map(|i| (p0 * (-(i as f64 * 10.0 + 5.0) / tau_s).exp()) as f32).collect();
    let col = |signal, compressor, values| FrameColumn {
        from_counter: false,
        point: Default::default(),
        signal,
        compressor,
        label: String::new(),
        values,
        partial: vec![],
    };
    Frame {
        grid,
        columns: vec![
            col(Signal::Pressure, None, pressure),
            col(Signal::Flow, None, vec![(flow_m3_min / 60.0) as f32; 360]),
            col(Signal::Power, Some(0), vec![c1_kw * 1000.0; 360]),
        ],
    }
}

#[test]
fn pressure_decay_recovers_the_leak_of_an_exponential_fall() {
    // Choked leaks flow in proportion to absolute pressure (ideal-gas choked flow), so p = p0 e^(-t/tau)
    // and Q_FAD = V p / (p_atm tau): at 7 bar(g), V = 3 m³, tau = 1200 s -> 3 x 8.01325 / 1200 m³/s.
    let s = site();
    let cs = vec![spec("C1", Control::LoadUnload, 55.0, 9.5)];
    let storage = StorageSpec { receivers_m3: vec![3.0], other_volume_m3: 0.0 };
    let frame = decay_frame(&s, 1200.0, 0.0, 0.0);
    let ctx = FieldTestContext {
        site: &s,
        compressors: &cs,
        storage: &storage,
        frame: Some(&frame),
        production: None,
        timezone: "UTC",
        units: crate::core::units::UnitSystem::Si,
    };
    let input = FieldTestInput::PressureDecay {
        start: "2026-03-02T00:00:00Z".into(),
        end: "2026-03-02T00:10:00Z".into(),
        volume_m3: None,
        operating_pressure_bar_g: None,
        air_temperature_c: None,
    };
    let FieldTestResult::PressureDecay(r) = evaluate(&input, &ctx).unwrap() else { panic!() };
    let p_start = PressureAbs::from_bar_g(7.0, s.atmosphere).0 * (-5.0f64 / 1200.0).exp();
    let expect = 3.0 * p_start / (s.atmosphere.0 * 1200.0) * 60.0;
    assert!((r.leak_flow_at_start_pressure_m3_min - expect).abs() / expect < 1e-3, "{r:?}");
    assert!(r.fit_r2 > 0.999);
    assert!(r.unchecked_compressors.is_empty());
    assert_json_round_trip(&FieldTestResult::PressureDecay(r.clone()));
    // The same window with C1 loaded is refused.
    let frame = decay_frame(&s, 1200.0, 0.0, 55.0);
    let ctx = FieldTestContext { frame: Some(&frame), ..ctx };
    assert_eq!(evaluate(&input, &ctx).unwrap_err().field, "start");
}

#[test]
fn idle_flow_scales_to_the_production_pressure() {
    // Choked leaks scale with absolute pressure (ideal-gas choked flow): a flat 1.2 m³/min at the logged
    // mean pressure, reported at 7 bar(g).
    let s = site();
    let storage = StorageSpec::default();
    let frame = decay_frame(&s, 1e12, 1.2, 0.0); // tau huge: pressure flat at 7 bar(g)
    let ctx = FieldTestContext {
        site: &s,
        compressors: &[],
        storage: &storage,
        frame: Some(&frame),
        production: None,
        timezone: "UTC",
        units: crate::core::units::UnitSystem::Si,
    };
    let input = FieldTestInput::IdleFlow {
        start: "2026-03-02T00:00:00Z".into(),
        end: "2026-03-02T00:30:00Z".into(),
        production_pressure_bar_g: Some(6.0),
        purge_and_drains_m3_min: None,
    };
    let FieldTestResult::IdleFlow(r) = evaluate(&input, &ctx).unwrap() else { panic!() };
    assert!((r.mean_flow_m3_min - 1.2).abs() < 1e-6);
    assert_json_round_trip(&FieldTestResult::IdleFlow(r.clone()));
    let expect =
        1.2 * PressureAbs::from_bar_g(6.0, s.atmosphere).0 / PressureAbs::from_bar_g(7.0, s.atmosphere).0;
    assert!((r.leak_flow_m3_min - expect).abs() < 1e-5, "{r:?}");
    assert_eq!(r.coverage, 1.0);
}

#[test]
fn load_unload_uncertainty_comes_from_the_tests_own_times() {
    // GUM law of propagation (JCGM 100:2008) for f = T / (T + t) with ±2 s on each time, and the
    // rated FAD's ±5 %, by hand: 40 s / 160 s -> timing 2 sqrt(40² + 160²) / (40 x 200) = 4.123 %,
    // combined 6.481 %; 450 s / 1350 s -> 0.351 %, combined 5.012 %. The band is not the same for
    // every test, as a fixed 40 s loaded time made it.
    let cs = vec![spec("C2", Control::LoadUnload, 55.0, 9.5)];
    let storage = StorageSpec::default();
    let s = site();
    let ctx = FieldTestContext {
        site: &s,
        compressors: &cs,
        storage: &storage,
        frame: None,
        production: None,
        timezone: "UTC",
        units: crate::core::units::UnitSystem::Si,
    };
    for (loaded, unloaded, rel) in [(40.0, 160.0, 0.064_81), (450.0, 1350.0, 0.050_12)] {
        let r = evaluate(
            &FieldTestInput::LoadUnload { compressor: "C2".into(), loaded_s: loaded, unloaded_s: unloaded },
            &ctx,
        )
        .unwrap();
        let got = r.relative_uncertainty().unwrap();
        assert!((got - rel).abs() < 2e-5, "{loaded}/{unloaded}: {got}");
    }
}

#[test]
fn a_fast_bleed_down_warns_and_warm_air_is_corrected() {
    // API.md's example, 3 m³ 7.0 -> 5.5 bar(g) in 95 s: far from isothermal by the rule of
    // `leaks::non_isothermal_overstatement` (thermal time constant ~475 s for 3 m³): one warning
    // naming the overstatement. Stored air at 35 °C (inlet 20 °C): the flow × 293.15 / 308.15
    // (ideal gas).
    let s = site();
    let storage = StorageSpec::default();
    let ctx = FieldTestContext {
        site: &s,
        compressors: &[],
        storage: &storage,
        frame: None,
        production: None,
        timezone: "UTC",
        units: crate::core::units::UnitSystem::Si,
    };
    let bd = |t_air: Option<f64>| FieldTestInput::BleedDown {
        volume_m3: Some(3.0),
        start_pressure_bar_g: 7.0,
        end_pressure_bar_g: 5.5,
        duration_s: 95.0,
        operating_pressure_bar_g: None,
        air_temperature_c: t_air,
    };
    let FieldTestResult::BleedDown(cold) = evaluate(&bd(None), &ctx).unwrap() else { panic!() };
    assert_eq!(cold.warnings.len(), 1, "{cold:?}");
    // 0.2857 × 475 / 95 = 1.43 by the first-order rule, capped at the fall's adiabatic limit,
    // 36.0 % (scipy's adiabatic vessel in tests/reference, checked in `leaks`' tests).
    assert!(
        cold.warnings[0].contains("isothermal")
            && cold.warnings[0].contains("overstated by about 36.0 % (the first-order rule")
            && cold.warnings[0]
                .contains("capped at the adiabatic limit of a fall from 7 bar(g) to 5.5 bar(g)"),
        "{:?}",
        cold.warnings
    );
    assert!((cold.thermal_time_constant_s.unwrap() - 474.8).abs() < 0.5);
    let FieldTestResult::BleedDown(warm) = evaluate(&bd(Some(35.0)), &ctx).unwrap() else { panic!() };
    assert!((warm.leak_flow_m3_min / cold.leak_flow_m3_min - 293.15 / 308.15).abs() < 1e-12);
    assert_eq!(warm.air_temperature_c, Some(35.0));
    assert_json_round_trip(&FieldTestResult::BleedDown(warm));
    assert_eq!(evaluate(&bd(Some(500.0)), &ctx).unwrap_err().field, "air_temperature_c");
}

#[test]
fn idle_flow_takes_off_the_purge_and_drains_before_the_pressure_correction() {
    // 1.2 m³/min logged at 7 bar(g), 0.2 of it purge and drains on record, the rest choked leaks
    // scaled to 6 bar(g) by 701.325 / 801.325 (choked leak flow ∝ absolute pressure; by hand).
    let s = site();
    let storage = StorageSpec::default();
    let frame = decay_frame(&s, 1e12, 1.2, 0.0);
    let ctx = FieldTestContext {
        site: &s,
        compressors: &[],
        storage: &storage,
        frame: Some(&frame),
        production: None,
        timezone: "UTC",
        units: crate::core::units::UnitSystem::Si,
    };
    let input = |purge: Option<f64>| FieldTestInput::IdleFlow {
        start: "2026-03-02T00:00:00Z".into(),
        end: "2026-03-02T00:30:00Z".into(),
        production_pressure_bar_g: Some(6.0),
        purge_and_drains_m3_min: purge,
    };
    let FieldTestResult::IdleFlow(r) = evaluate(&input(Some(0.2)), &ctx).unwrap() else { panic!() };
    let expect = 1.0 * 701.325 / 801.325;
    assert!((r.leak_flow_m3_min - expect).abs() < 1e-5, "{r:?}");
    assert_eq!(r.purge_and_drains_m3_min, 0.2);
    assert_eq!(evaluate(&input(Some(1.5)), &ctx).unwrap_err().field, "purge_and_drains_m3_min");
    assert_eq!(evaluate(&input(Some(-0.1)), &ctx).unwrap_err().field, "purge_and_drains_m3_min");
}

#[test]
fn results_stored_before_the_new_fields_still_read_back() {
    // A bleed-down result as stored before the log-mean and the temperature were kept: it reads
    // back as a bleed-down (its leak flow counts as before).
    let old = serde_json::json!({"mean_leak_flow_m3_min": 2.8, "leak_flow_at_operating_pressure_m3_min": 3.1,
        "doe_rule_of_thumb_flow_m3_min": 3.5, "leak_flow_m3_min": 3.1, "leak_flow_m3_min_low": 2.5,
        "leak_flow_m3_min_high": 3.7, "mean_pressure_bar_g": 6.25, "operating_pressure_bar_g": 7.0,
        "volume_m3": 3.0, "volume_source": "given"});
    let FieldTestResult::BleedDown(r) = serde_json::from_value(old).unwrap() else {
        panic!("not a bleed-down")
    };
    assert_eq!(r.leak_flow_m3_min, 3.1);
    assert!(r.warnings.is_empty() && r.air_temperature_c.is_none());
}

#[test]
fn an_unloaded_window_in_a_production_hour_is_refused() {
    // Issue 18: while production draws air, a fall with a compressor unloaded is the whole demand.
    // C1 loaded (55 kW) for the first half hour, then unloaded (13.75 kW) while the pressure falls;
    // a window in the unloaded half is refused when the schedule makes Monday 00 h a production
    // hour (2026-03-02 is a Monday) and accepted when it does not.
    let s = site();
    let cs = vec![spec("C1", Control::LoadUnload, 55.0, 9.5)];
    let storage = StorageSpec { receivers_m3: vec![3.0], other_volume_m3: 0.0 };
    // A slow fall (tau 12,000 s): the window stays near the working pressure, where leaks are
    // choked, as a decay window must (issue 16).
    let mut frame = decay_frame(&s, 12_000.0, 0.0, 0.0);
    frame.columns[2].values = (0..360).map(|i| if i < 180 { 55_000.0 } else { 13_750.0 }).collect();
    let mut hours = [[false; 24]; 7];
    hours[0][0] = true;
    let busy = WeeklySchedule { hours };
    let idle = WeeklySchedule { hours: [[false; 24]; 7] };
    let input = FieldTestInput::PressureDecay {
        start: "2026-03-02T00:31:00Z".into(),
        end: "2026-03-02T00:50:00Z".into(),
        volume_m3: None,
        operating_pressure_bar_g: None,
        air_temperature_c: None,
    };
    let ctx = |p| FieldTestContext {
        site: &s,
        compressors: &cs,
        storage: &storage,
        frame: Some(&frame),
        production: p,
        timezone: "UTC",
        units: crate::core::units::UnitSystem::Si,
    };
    let e = evaluate(&input, &ctx(Some(&busy))).unwrap_err();
    assert_eq!(e.field, "start");
    assert!(e.message.contains("unloaded") && e.message.contains("production"), "{e}");
    assert!(evaluate(&input, &ctx(Some(&idle))).is_ok());
    assert!(evaluate(&input, &ctx(None)).is_ok());
}

#[test]
fn a_duration_refusal_says_its_limits_as_a_person_would() {
    // A walk found "from 1 s to 604800 s, got -40 s": the week is said as such.
    let e =
        super::within("loaded_s", "the loaded time", -40.0, (1.0, MAX_DURATION_S), super::Quoted::Seconds)
            .unwrap_err();
    assert_eq!(e.message, "the loaded time must be from 1 s to 7 days, got -40 s");
}

#[test]
fn a_fast_bleed_down_in_us_units_takes_the_corrected_flow_with_the_reading_as_its_upper_end() {
    // 660 US gal, 105 -> 85 psig in 95 s at 14.696 psia and 20 °C (issue 16's walk). The flow as
    // read is an upper bound; the fall's adiabatic limit is 36.48 % (scipy's integration of an
    // adiabatic vessel, tests/reference `leaks.adiabatic_overstatement_105_85_psig`), which caps
    // the first-order rule's 0.2857 × tau_th / 95 s (tau_th about 440 s): the flow taken is the
    // reading / 1.3648, and the likely range runs from it (less the instruments) to the reading
    // (plus them), never centred on the reading.
    let fixture: serde_json::Value =
        serde_json::from_str(include_str!("../../../tests/reference/fixture.json")).unwrap();
    let limit = fixture["values"]["leaks.adiabatic_overstatement_105_85_psig"]["value"].as_f64().unwrap();
    let psi = 6.894_757_293_168e-2; // bar per psi (NIST SP 811)
    let s = SiteAir::new(14.696 * 6.894_757_293_168, 20.0);
    let storage = StorageSpec::default();
    let ctx = FieldTestContext {
        site: &s,
        compressors: &[],
        storage: &storage,
        frame: None,
        production: None,
        timezone: "America/Chicago",
        units: UnitSystem::Us,
    };
    let input = FieldTestInput::BleedDown {
        volume_m3: Some(660.0 * 3.785_411_784e-3),
        start_pressure_bar_g: 105.0 * psi,
        end_pressure_bar_g: 85.0 * psi,
        duration_s: 95.0,
        operating_pressure_bar_g: None,
        air_temperature_c: None,
    };
    let result = evaluate(&input, &ctx).unwrap();
    let FieldTestResult::BleedDown(r) = &result else { panic!() };
    let read = r.leak_flow_at_operating_pressure_m3_min;
    assert!((r.non_isothermal_overstatement.unwrap() - limit).abs() < 1e-9, "{r:?}");
    assert!((read / r.leak_flow_m3_min - (1.0 + limit)).abs() < 1e-9, "{r:?}");
    assert!(r.leak_flow_m3_min_low < r.leak_flow_m3_min && r.leak_flow_m3_min_high > read, "{r:?}");
    let (lo, hi) = result.range_m3_min();
    assert!((1.0 - lo / r.leak_flow_m3_min - (hi / read - 1.0)).abs() < 1e-12);
    // The wider side of the range, up to the reading, is the relative uncertainty carried on.
    assert!((result.relative_uncertainty().unwrap() - (hi / r.leak_flow_m3_min - 1.0)).abs() < 1e-12);
    let w = &r.warnings[0];
    assert!(
        // 36.5 %, to a tenth as the pages' percentages are.
        w.contains("about 36.5 %")
            && w.contains("from 105 psig to 85 psig")
            && w.contains(
                "its likely range running up to the flow as read plus the instruments' uncertainty"
            ),
        "{w}"
    );
    assert!(!w.contains("40 %"), "{w}");
}

mod guards;
