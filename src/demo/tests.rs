//! The demo as a whole: its bytes, its integrals against the physics, and its files read back.

use super::calendar::{berlin_local, days_from_civil, period_start_unix_s, rfc3339_utc, weekday_monday0};
use super::plant::{atmosphere_kpa, INLET_C};
use super::{demo_plant, simulate, DemoOptions, DemoPlant};
use crate::core::units::{ReferenceConditions, SiteAir};
use std::collections::hash_map::DefaultHasher;
use std::hash::{Hash, Hasher};

fn hash_files(plant: &DemoPlant) -> u64 {
    let mut h = DefaultHasher::new();
    for f in &plant.files {
        f.filename.hash(&mut h);
        f.csv.hash(&mut h);
        f.mapping.to_string().hash(&mut h);
    }
    h.finish()
}

/// The built-in demo, simulated once for all the tests that read it.
fn plant() -> &'static DemoPlant {
    static PLANT: std::sync::OnceLock<DemoPlant> = std::sync::OnceLock::new();
    PLANT.get_or_init(demo_plant)
}

fn small(seed: u64) -> DemoOptions {
    DemoOptions { days: 2, interval_s: 5, seed }
}

/// Rows of the header/flow file: (true Unix time, bar(g), Nm³/h, inlet °C). The stamps are
/// parsed here with plain string slicing, independently of the writer, and shifted by the
/// mapping's clock offset.
fn header_rows(plant: &DemoPlant) -> Vec<(i64, f64, f64, f64)> {
    let file = &plant.files[1];
    let offset = file.mapping["clock_offset_s"].as_i64().unwrap();
    let mut lines = file.csv.lines();
    assert_eq!(lines.next().unwrap(), "time_utc,header_bar_g,flow_Nm3_h,inlet_temp_C,press_shop_bar_g");
    lines
        .map(|l| {
            let f: Vec<&str> = l.split(',').collect();
            assert_eq!(f.len(), 5, "line {l}");
            // The press shop reads below the header, by at most the pipe's drop at 60 m³/min.
            let (header, shop): (f64, f64) = (f[1].parse().unwrap(), f[4].parse().unwrap());
            assert!(shop <= header + 5e-4 && header - shop <= 0.36 + 5e-4, "line {l}");
            let ts = f[0];
            assert!(ts.ends_with('Z') && ts.len() == 20, "stamp {ts}");
            let num = |a: usize, b: usize| ts[a..b].parse::<i64>().unwrap();
            let days = days_from_civil(num(0, 4), num(5, 7) as u32, num(8, 10) as u32);
            let unix = days * 86_400 + num(11, 13) * 3600 + num(14, 16) * 60 + num(17, 19);
            (unix + offset, f[1].parse().unwrap(), f[2].parse().unwrap(), f[3].parse().unwrap())
        })
        .collect()
}

/// Rows of the power file: (local stamp text, [kW; 3]).
fn power_rows(plant: &DemoPlant) -> Vec<(String, [f64; 3])> {
    let file = &plant.files[0];
    let header_line = file.mapping["header_line"].as_u64().unwrap() as usize;
    let lines: Vec<&str> = file.csv.lines().collect();
    assert_eq!(lines[header_line - 1], "Time;C1 kW;C2 kW;C3 kW");
    lines[header_line..]
        .iter()
        .map(|l| {
            let f: Vec<&str> = l.split(';').collect();
            assert_eq!(f.len(), 4, "line {l}");
            let kw = |s: &str| {
                assert!(!s.contains('.'), "decimal comma expected in {s}");
                s.replace(',', ".").parse::<f64>().unwrap()
            };
            (f[0].to_string(), [kw(f[1]), kw(f[2]), kw(f[3])])
        })
        .collect()
}

fn rfc3339_to_unix(s: &str) -> i64 {
    let num = |a: usize, b: usize| s[a..b].parse::<i64>().unwrap();
    days_from_civil(num(0, 4), num(5, 7) as u32, num(8, 10) as u32) * 86_400
        + num(11, 13) * 3600
        + num(14, 16) * 60
        + num(17, 19)
}

#[test]
fn the_same_seed_gives_the_same_bytes_and_another_seed_other_bytes() {
    let a = simulate(&small(7));
    let b = simulate(&small(7));
    let c = simulate(&small(8));
    assert_eq!(hash_files(&a), hash_files(&b));
    assert_eq!(a.truth, b.truth);
    assert_ne!(hash_files(&a), hash_files(&c));
}

#[test]
fn air_delivered_minus_air_drawn_is_the_change_stored_in_the_system_volume() {
    // Receiver equation integrated: ∫(Q_s - Q_d) dt = V Δp / p_atm (free air, isothermal).
    let t = &plant().truth;
    let atm_bar = t.atmospheric_pressure_kpa_abs / 100.0;
    let stored = t.system_volume_m3 * (t.end_pressure_bar_g - t.start_pressure_bar_g) / atm_bar;
    let net = t.supply_air_m3 - t.air_m3;
    assert!((net - stored).abs() < 1e-6 * t.supply_air_m3, "net {net} stored {stored}");
    // A week of a 7.5 m³ system at ~9 m³/min: the supply is some 10^5 m³, the store a few m³.
    assert!(t.supply_air_m3 > 80_000.0 && t.supply_air_m3 < 120_000.0);
}

#[test]
fn the_site_atmosphere_follows_the_standard_atmosphere() {
    // ASHRAE Handbook - Fundamentals ch. 1 eq. 3 (the ISO 2533 atmosphere), evaluated: 1000 m ->
    // 89.875 kPa, 1500 m -> 84.556 kPa.
    assert!((atmosphere_kpa(1000.0) - 89.875).abs() < 0.005);
    assert!((atmosphere_kpa(1500.0) - 84.556).abs() < 0.005);
    let t = simulate(&small(1)).truth;
    assert!((t.atmospheric_pressure_kpa_abs - atmosphere_kpa(180.0)).abs() < 1e-9);
    assert!(t.atmospheric_pressure_kpa_abs > 99.0 && t.atmospheric_pressure_kpa_abs < 99.4);
}

#[test]
fn header_pressure_stays_in_a_working_band_during_production() {
    let plant = plant();
    let rows = header_rows(plant);
    let mut checked = 0;
    for &(unix, p, _, _) in &rows {
        assert!(p < 7.8, "pressure {p} above the band at {unix}");
        let (day, sod) = berlin_local(unix);
        let h = sod as f64 / 3600.0;
        let production = match weekday_monday0(day) {
            0..=4 => (6.5..21.75).contains(&h),
            5 => (6.5..11.75).contains(&h),
            _ => false,
        };
        if production {
            checked += 1;
            assert!((6.2..=7.8).contains(&p), "pressure {p} at {}", rfc3339_utc(unix));
        }
    }
    // 5 × 15.25 h + 5.25 h of production at 10 s.
    assert_eq!(checked, ((5.0 * 15.25 + 5.25) * 360.0) as usize);
    let t = &plant.truth;
    assert!(t.production_min_pressure_bar_g > 6.2 && t.production_max_pressure_bar_g < 7.8);
}

#[test]
fn the_maintenance_stop_decays_as_the_leak_law_says() {
    // With every compressor off and only choked leaks drawing air, V dp/dt = -p_atm c p, so
    // p_abs(t) = p_abs(0) exp(-t / tau), tau = V / (p_atm c) (the bleed-down test's receiver
    // equation, US DOE compressed-air sourcebook, leaks fact sheet, with choked leaks). The logged
    // pressure must follow that curve, and a log-linear fit of it must give back c.
    let plant = plant();
    let t = &plant.truth;
    let atm_bar = t.atmospheric_pressure_kpa_abs / 100.0;
    let c_per_s = t.leak_coefficient_m3_min_per_bar_abs / 60.0;
    let tau_s = t.system_volume_m3 / (atm_bar * c_per_s);
    let (from, to) = (rfc3339_to_unix(&t.shutdown_start), rfc3339_to_unix(&t.shutdown_end));
    let p0_abs = t.shutdown_start_pressure_bar_g + atm_bar;
    let window: Vec<(f64, f64)> = header_rows(plant)
        .into_iter()
        .filter(|r| r.0 > from && r.0 <= to)
        .map(|r| ((r.0 - from) as f64, r.1 + atm_bar))
        .collect();
    assert_eq!(window.len(), 180);
    for &(s, p_abs) in &window {
        let expected = p0_abs * (-s / tau_s).exp();
        assert!((p_abs - expected).abs() < 0.02, "at {s} s: {p_abs} vs {expected}");
    }
    // Least squares of ln p against t.
    let n = window.len() as f64;
    let (sx, sy) = window.iter().fold((0.0, 0.0), |a, &(x, p)| (a.0 + x, a.1 + p.ln()));
    let (mx, my) = (sx / n, sy / n);
    let (sxy, sxx) =
        window.iter().fold((0.0, 0.0), |a, &(x, p)| (a.0 + (x - mx) * (p.ln() - my), a.1 + (x - mx).powi(2)));
    let fitted_c_m3_min = -sxy / sxx * t.system_volume_m3 / atm_bar * 60.0;
    let rel = fitted_c_m3_min / t.leak_coefficient_m3_min_per_bar_abs - 1.0;
    assert!(rel.abs() < 0.01, "fitted leak coefficient off by {rel}");
    // The decay is deep enough to be a real bleed-down: 7 -> about 1.4 bar(g) in 30 min.
    assert!(t.shutdown_start_pressure_bar_g > 6.8);
    assert!(t.shutdown_end_pressure_bar_g > 1.0 && t.shutdown_end_pressure_bar_g < 2.0);
    // Still choked at the end (p_abs / p_atm above 1/0.528, the critical pressure ratio of air,
    // (2/(k+1))^(k/(k-1)) with k = 1.4, for ideal nozzle flow), so the law holds.
    assert!((t.shutdown_end_pressure_bar_g + atm_bar) / atm_bar > 1.0 / 0.528);
}

#[test]
fn leaks_are_a_quarter_or_so_of_demand() {
    let t = &plant().truth;
    assert!((t.leak_flow_at_7_bar_g_m3_min - 2.4).abs() < 1e-12);
    let share = t.leak_air_m3 / t.air_m3;
    // US DOE, Improving Compressed Air System Performance: A Sourcebook for Industry: poorly
    // maintained systems leak 20-30 % of demand.
    assert!((0.22..0.32).contains(&share), "leak share {share}");
}

#[test]
fn loaded_fractions_fit_a_base_machine_a_standby_and_a_trim() {
    let t = &plant().truth;
    let f: Vec<f64> = t.loaded_fraction_by_compressor.iter().map(|x| x.1).collect();
    // C1 base load through ~82 production hours of 168, unloaded or off at night.
    assert!((0.3..0.7).contains(&f[0]), "C1 {}", f[0]);
    // C2 only comes in at peaks.
    assert!((0.005..0.2).contains(&f[1]), "C2 {}", f[1]);
    // C3 runs all week except the maintenance stop and short stops at turn-down.
    assert!(f[2] > 0.9, "C3 {}", f[2]);
}

#[test]
fn the_logger_files_parse_back_with_their_mappings() {
    let plant = plant();
    let power = power_rows(plant);
    assert_eq!(power.len(), 7 * 86_400 / 5);
    assert_eq!(power[0].0, "09.03.2026 00:00:05");
    assert_eq!(power[power.len() - 1].0, "16.03.2026 00:00:00");
    let header = header_rows(plant);
    // Logger stamps every 10 s from 00:00:20 to the end; true times 7 s earlier.
    assert_eq!(header.len(), 7 * 8_640 - 1);
    assert_eq!(header[0].0, period_start_unix_s() + 13);
    assert!(header.windows(2).all(|w| w[1].0 - w[0].0 == 10));
    for m in plant.files.iter().map(|f| &f.mapping) {
        let header_line = m["header_line"].as_u64().unwrap() as usize;
        let delimiter = m["delimiter"].as_str().unwrap();
        let csv = &plant.files.iter().find(|f| &f.mapping == m).unwrap().csv;
        let names: Vec<&str> = csv.lines().nth(header_line - 1).unwrap().split(delimiter).collect();
        assert!(names.contains(&m["timestamp"]["column"].as_str().unwrap()));
        for c in m["columns"].as_array().unwrap() {
            assert!(names.contains(&c["column"].as_str().unwrap()), "{c}");
        }
    }
}

#[test]
fn logged_energy_and_air_match_the_simulation_truth() {
    let plant = plant();
    let t = &plant.truth;
    let rows = power_rows(plant);
    for (i, (tag, kwh)) in t.energy_kwh_by_compressor.iter().enumerate() {
        let logged: f64 = rows.iter().map(|r| r.1[i] * 5.0 / 3600.0).sum();
        assert!((logged / kwh - 1.0).abs() < 0.005, "{tag}: logged {logged} truth {kwh}");
    }
    // Nm³/h back to free air with the site's conditions (units.rs SiteAir).
    let site = SiteAir::new(t.atmospheric_pressure_kpa_abs, INLET_C);
    let to_fad = site.free_air_from_reference(1.0, ReferenceConditions::NORMAL_DIN_1343);
    let air: f64 = header_rows(plant).iter().map(|r| r.2 * to_fad * 10.0 / 3600.0).sum();
    assert!((air / t.air_m3 - 1.0).abs() < 0.005, "logged air {air} truth {}", t.air_m3);
    // Specific power in the usual range for lubricated screws near 7 bar (about 5-7 kW/(m³/min):
    // common practice).
    let kwh: f64 = t.energy_kwh_by_compressor.iter().map(|x| x.1).sum();
    let sp = kwh * 60.0 / t.air_m3;
    assert!((5.0..8.0).contains(&sp), "specific power {sp}");
}

#[test]
fn the_power_log_shows_off_unloaded_and_loaded_states() {
    let plant = plant();
    let rows = power_rows(plant);
    let specs = &plant.compressors;
    for (i, spec) in specs.iter().enumerate().take(2) {
        let near = |kw: f64, f: f64| (kw / spec.rated_power_kw - f).abs() < 0.04;
        let off = rows.iter().filter(|r| r.1[i] < 1.0).count();
        let unloaded = rows.iter().filter(|r| near(r.1[i], spec.unloaded_power_fraction)).count();
        let loaded = rows.iter().filter(|r| r.1[i] > 0.9 * spec.rated_power_kw).count();
        assert!(off > 0 && unloaded > 0 && loaded > 0, "{}: {off} {unloaded} {loaded}", spec.tag);
    }
    // The variable-speed machine spans its curve from minimum to maximum flow.
    let c3: Vec<f64> = rows.iter().map(|r| r.1[2]).filter(|&kw| kw > 1.0).collect();
    let (lo, hi) = c3.iter().fold((f64::MAX, 0.0f64), |a, &k| (a.0.min(k), a.1.max(k)));
    assert!(lo < 15.0 && hi > 42.0, "C3 spans {lo}..{hi} kW");
}

#[test]
fn a_short_run_has_its_stop_on_the_first_night() {
    let p = simulate(&DemoOptions { days: 1, interval_s: 10, seed: 3 });
    assert_eq!(p.truth.shutdown_start, "2026-03-09T01:00:00Z");
    assert_eq!(p.truth.shutdown_end, "2026-03-09T01:30:00Z");
    assert_eq!(power_rows(&p).len(), 8_640);
    assert!(p.truth.shutdown_end_pressure_bar_g < 2.0);
}
