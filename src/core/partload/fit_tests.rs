//! The fit gives back a known band and blow-down from a trace logged by a time-domain computation
//! written apart (`tests/reference/partload_reference.py`, `logged_trace`), and keeps the defaults
//! where the log is too coarse to show them.

use super::*;
use crate::core::levels;
use crate::core::model::{CompressorKind, CompressorSpec, Control};
use crate::core::partload::BLOWDOWN_START_FRACTION;
use crate::core::states;

fn trace() -> (serde_json::Value, Vec<f32>, Vec<f32>) {
    let f: serde_json::Value =
        serde_json::from_str(include_str!("../../../tests/reference/partload_fixture.json")).unwrap();
    let t = f["logged_trace"].clone();
    let col = |k: &str| -> Vec<f32> {
        t[k].as_array().unwrap().iter().map(|v| v.as_f64().unwrap() as f32).collect()
    };
    let power_w = col("power_kw").iter().map(|kw| kw * 1000.0).collect();
    // Gauge bar to Pa on the trace's atmosphere (the band is a difference: the basis does not matter).
    let atm = t["inputs"]["p_atm_bar"].as_f64().unwrap();
    let pressure_pa = col("pressure_bar_g").iter().map(|b| ((*b as f64 + atm) * 1e5) as f32).collect();
    (t["inputs"].clone(), power_w, pressure_pa)
}

/// States on the levels found in the power, as the analysis reads them (`core::levels`).
fn read_states(power_w: &[f32]) -> (Vec<State>, f64) {
    let spec = CompressorSpec::blank(CompressorKind::LubricatedScrew, Control::LoadUnload, 55.0, 10.0);
    let found = levels::find(&spec, power_w);
    (states::classify_with(&found.thresholds, power_w), found.levels.loaded * 1000.0)
}

#[test]
fn band_and_blow_down_come_back_from_a_trace_logged_at_2_s_by_a_time_domain_cycle() {
    let (inp, power, pressure) = trace();
    let g = |k: &str| inp[k].as_f64().unwrap();
    // Not the defaults: the fit must read them, not fall back.
    assert!(g("blowdown_tau_s") != BLOWDOWN_TAU_S && g("blowdown_start_fraction") != BLOWDOWN_START_FRACTION);
    let (st, loaded_w) = read_states(&power);
    assert!((loaded_w / 1000.0 - g("full_kw")).abs() < 0.5, "loaded level {loaded_w}");
    let c = calibrate(&power, &st, loaded_w, Some(&pressure), g("interval_s"));
    let bd = c.blowdown.expect(&c.note);
    let band = c.band.expect(&c.note);
    eprintln!("{}; u = {:.2} kW", c.note, bd.unloaded_w / 1000.0);
    // τ within 5 %, the start within 0.03 of full power (the unloading's instant in its bin is
    // taken uniform), the unloaded level within 1 %.
    let tau = g("blowdown_tau_s");
    assert!((bd.blowdown.tau_s - tau).abs() / tau < 0.05, "τ {} vs {tau}", bd.blowdown.tau_s);
    let b = g("blowdown_start_fraction");
    assert!((bd.blowdown.start_fraction - b).abs() < 0.03, "start {} vs {b}", bd.blowdown.start_fraction);
    let u_w = g("unloaded_fraction") * g("full_kw") * 1000.0;
    assert!((bd.unloaded_w - u_w).abs() / u_w < 0.01, "unloaded {} W vs {u_w}", bd.unloaded_w);
    // The band: unload 7.0 - load 6.55 bar(g) = 0.45 bar, within 0.02 bar.
    let want = g("unload_bar_g") - g("load_bar_g");
    assert!((band.band_bar - want).abs() < 0.02, "band {} vs {want}", band.band_bar);
    assert!(band.cycles >= 20, "{}", band.cycles);
}

#[test]
fn a_30_s_log_of_the_same_trace_keeps_the_defaults_and_says_why() {
    let (inp, power, pressure) = trace();
    // 15 bins of 2 s averaged into one of 30 s.
    let mean30 = |v: &[f32]| -> Vec<f32> {
        v.chunks(15).map(|c| (c.iter().map(|&x| x as f64).sum::<f64>() / c.len() as f64) as f32).collect()
    };
    let (power, pressure) = (mean30(&power), mean30(&pressure));
    let (st, loaded_w) = read_states(&power);
    let c = calibrate(&power, &st, loaded_w, Some(&pressure), 30.0);
    assert!(c.blowdown.is_none(), "{}", c.note);
    assert!(c.note.contains("longer than τ/2 = 10 s"), "{}", c.note);
    // The cycles (tens of seconds) are not four bins long: the band is assumed too.
    assert!(c.band.is_none(), "{}", c.note);
    assert!(c.note.contains("band assumed"), "{}", c.note);
    assert!(inp["interval_s"].as_f64().unwrap() < 30.0);
}
