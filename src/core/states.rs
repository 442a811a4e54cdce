/*!
Compressor states read from a logged power column, and the part-load models that go with them.

Common practice of logger audits: a kW log shows each machine off (near 0), unloaded (near its unloaded power), loaded
(near full) and, for modulation and variable speed, in between. From the states follow the loaded
fraction, load cycles, mean loaded and unloaded times (the load/unload leak test read from the logs) and,
where no flow meter exists, an estimate of the free air each machine delivered.

# Thresholds
The analysis reads load/unload and start/stop machines on the levels found in their own logged power
(`core::levels`: loaded at or above the midpoint of the unloaded and loaded levels found, off below
`max(3 % of loaded, unloaded / 2)`). The data sheet's thresholds below are the prior, and what
modulation and variable speed are read on.

Per bin mean power P; P_full = rated package power, P_unl = unloaded fraction × P_full:
- **Off** below `max(3 % of P_full, P_unl / 2)` (common practice: above a logger's noise floor, below
  any running state).
- Load/unload and start/stop: **Loaded** at or above the midpoint `(P_unl + P_full) / 2`; **Unloaded**
  between off and that midpoint.
- Modulation and variable speed: **Loaded** at or above 95 % of P_full (full capacity); **Unloaded** from
  off up to the midpoint between P_unl and the lowest loaded power (modulation: 0.70 P_full at zero
  capacity; variable speed: the data-sheet curve's lowest point, or the typical curve's at 20 % flow);
  **PartLoad** between.

A bin longer than the machine's load and unload times holds a mix and is counted in the state its mean
falls in: fractions and cycle counts are exact only when bins are shorter than the shortest load or
unload period.

# Part-load models (power at a given free air delivery Q)
- Load/unload: `P = P_unl + (P_full - P_unl) Q/Q_rated` (the time-average of loaded and unloaded,
  US DOE compressed-air sourcebook, ideal: storage is large enough).
- Modulation: `P/P_full = 0.70 + 0.30 Q/Q_full` (common practice).
- Variable speed: the data-sheet curve, linear between its points; without one, the typical curve
  `P/P_full = 0.12 + 0.88 Q/Q_full` for Q from 20 % to 100 % (common practice, approximate: a VSD screw's
  specific power rises only slightly towards minimum speed; from memory).
- Start/stop: full specific power, `P = P_full Q/Q_rated` in the time average.

These are the ideal lines, kept as the reference the part-load model is compared with
(`ideal_marginal_kw_per_m3_min`) and for the data sheet's thresholds above. Every price reads
`core::partload` instead, which adds the storage a load/unload machine cycles on and its sump
blow-down: the **marginal** specific power behind leaks, pressure and artificial demand (its slope at
the trim's logged operating point), that operating point itself (its inverse), the control measure's
air and variable-speed power (`analysis::control`), and the replay's blow-down.
*/

use serde::Serialize;

use super::model::{CompressorSpec, Control};
use super::series::Grid;

/// Modulation: share of full power drawn at zero capacity (common practice).
pub const MODULATION_POWER_AT_ZERO_FLOW: f64 = 0.70;
/// Typical variable-speed curve: P/P_full = VSD_TYPICAL_A + VSD_TYPICAL_B Q/Q_full (common practice,
/// approximate, from memory).
pub const VSD_TYPICAL_A: f64 = 0.12;
pub const VSD_TYPICAL_B: f64 = 0.88;
/// Typical minimum flow of a variable-speed screw, share of full flow (common practice).
pub const VSD_TYPICAL_MIN_FLOW_FRACTION: f64 = 0.20;

/// The state of a compressor in one bin.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum State {
    /// No power logged in the bin.
    Unknown,
    Off,
    Unloaded,
    PartLoad,
    Loaded,
}

impl State {
    pub fn running(self) -> bool {
        matches!(self, Self::Unloaded | Self::PartLoad | Self::Loaded)
    }
    /// Delivering air (loaded or part load).
    pub fn delivering(self) -> bool {
        matches!(self, Self::PartLoad | Self::Loaded)
    }
}

/// Power thresholds for one compressor, W.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Thresholds {
    pub full_w: f64,
    pub unloaded_w: f64,
    /// Below this: off.
    pub off_below_w: f64,
    /// Below this (and not off): unloaded.
    pub unloaded_below_w: f64,
    /// At or above this: loaded; between `unloaded_below_w` and this: part load.
    pub loaded_from_w: f64,
}

/// Thresholds from the data sheet (rules in the module doc).
pub fn thresholds(spec: &CompressorSpec) -> Thresholds {
    let full = spec.rated_power_kw * 1000.0;
    let unl = spec.unloaded_power_fraction.clamp(0.0, 1.0) * full;
    let off = (0.03 * full).max(0.5 * unl);
    match spec.control {
        Control::LoadUnload | Control::StartStop => {
            let mid = 0.5 * (unl + full);
            Thresholds {
                full_w: full,
                unloaded_w: unl,
                off_below_w: off,
                unloaded_below_w: mid,
                loaded_from_w: mid,
            }
        }
        Control::Modulation | Control::VariableSpeed => {
            let lowest_loaded = power_at_flow_kw(spec, min_flow_m3_min(spec)) * 1000.0;
            // A drive at minimum speed still delivers air. When the data sheet's minimum-speed power
            // is clearly above the unloaded power, the boundary is their midpoint; when the two are
            // (nearly) the same, only power clearly below it (75 %, our judgement) is idling: the
            // package's power falls a few % with discharge pressure, and a running drive a hair
            // below its rated minimum-speed power must not read as unloaded (regression: the demo
            // plant's trim machine was 17 % "unloaded" while the simulation had it delivering).
            let unl_top = if lowest_loaded > 1.1 * unl {
                0.5 * (unl + lowest_loaded)
            } else {
                (0.75 * lowest_loaded.min(unl.max(lowest_loaded))).max(off)
            };
            Thresholds {
                full_w: full,
                unloaded_w: unl,
                off_below_w: off,
                unloaded_below_w: unl_top.max(off),
                loaded_from_w: (0.95 * full).max(unl_top),
            }
        }
    }
}

/// Classify each bin of a power column (W) on the data sheet's thresholds.
pub fn classify(spec: &CompressorSpec, power_w: &[f32]) -> Vec<State> {
    classify_with(&thresholds(spec), power_w)
}

/// Classify each bin of a power column (W) on given thresholds (the data sheet's, or those of the
/// levels found in the data: `core::levels`).
pub fn classify_with(t: &Thresholds, power_w: &[f32]) -> Vec<State> {
    power_w
        .iter()
        .map(|&p| {
            let p = p as f64;
            if !p.is_finite() {
                State::Unknown
            } else if p < t.off_below_w {
                State::Off
            } else if p < t.unloaded_below_w {
                State::Unloaded
            } else if p < t.loaded_from_w {
                State::PartLoad
            } else {
                State::Loaded
            }
        })
        .collect()
}

/// What the states say about one compressor over the logged time.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StateStats {
    /// Hours with power logged (the denominator of the fractions).
    pub logged_hours: f64,
    pub loaded_fraction: f64,
    pub part_load_fraction: f64,
    pub unloaded_fraction: f64,
    pub off_fraction: f64,
    /// Hours running (loaded, part load or unloaded).
    pub running_hours: f64,
    pub loaded_hours: f64,
    /// Transitions into the loaded state from unloaded or off, between adjacent logged bins.
    pub load_cycles: u64,
    pub cycles_per_hour: f64,
    pub mean_loaded_power_kw: Option<f64>,
    pub mean_unloaded_power_kw: Option<f64>,
    /// Mean length of complete loaded periods (bounded by other logged states on both sides), s.
    pub mean_loaded_time_s: Option<f64>,
    pub mean_unloaded_time_s: Option<f64>,
}

/// State statistics from classified bins and the power column they came from.
pub fn state_stats(grid: &Grid, states: &[State], power_w: &[f32]) -> StateStats {
    let step_h = grid.step_s() / 3600.0;
    let mut n = [0usize; 5];
    let (mut loaded_w, mut unloaded_w) = (0.0, 0.0);
    for (s, &p) in states.iter().zip(power_w) {
        n[*s as usize] += 1;
        match s {
            State::Loaded => loaded_w += p as f64,
            State::Unloaded => unloaded_w += p as f64,
            _ => {}
        }
    }
    let logged = (n[State::Off as usize]
        + n[State::Unloaded as usize]
        + n[State::PartLoad as usize]
        + n[State::Loaded as usize]) as f64;
    let frac = |s: State| if logged > 0.0 { n[s as usize] as f64 / logged } else { 0.0 };

    let mut cycles = 0u64;
    for w in states.windows(2) {
        if w[1] == State::Loaded && matches!(w[0], State::Unloaded | State::Off) {
            cycles += 1;
        }
    }
    let logged_hours = logged * step_h;
    StateStats {
        logged_hours,
        loaded_fraction: frac(State::Loaded),
        part_load_fraction: frac(State::PartLoad),
        unloaded_fraction: frac(State::Unloaded),
        off_fraction: frac(State::Off),
        running_hours: (logged - n[State::Off as usize] as f64) * step_h,
        loaded_hours: n[State::Loaded as usize] as f64 * step_h,
        load_cycles: cycles,
        cycles_per_hour: if logged_hours > 0.0 { cycles as f64 / logged_hours } else { 0.0 },
        mean_loaded_power_kw: (n[State::Loaded as usize] > 0)
            .then(|| loaded_w / n[State::Loaded as usize] as f64 / 1000.0),
        mean_unloaded_power_kw: (n[State::Unloaded as usize] > 0)
            .then(|| unloaded_w / n[State::Unloaded as usize] as f64 / 1000.0),
        mean_loaded_time_s: mean_run_s(grid, states, State::Loaded),
        mean_unloaded_time_s: mean_run_s(grid, states, State::Unloaded),
    }
}

/// The runs of `target` in `states`, as bin ranges (any other state, a gap too, ends a run).
fn runs(states: &[State], target: State) -> impl Iterator<Item = std::ops::Range<usize>> + '_ {
    let mut i = 0;
    std::iter::from_fn(move || {
        while i < states.len() && states[i] != target {
            i += 1;
        }
        let start = i;
        while i < states.len() && states[i] == target {
            i += 1;
        }
        (i > start).then_some(start..i)
    })
}

/// Which bins lie in a run of `target` at least `min_bins` long (any other state, a gap too, ends a
/// run).
pub fn sustained(states: &[State], target: State, min_bins: usize) -> Vec<bool> {
    let mut out = vec![false; states.len()];
    for run in runs(states, target).filter(|r| r.len() >= min_bins) {
        out[run].iter_mut().for_each(|b| *b = true);
    }
    out
}

/// Mean length of runs of `target` that have a different *logged* state on both sides (a run cut by
/// the log's ends or by a gap is not a whole period and is left out).
fn mean_run_s(grid: &Grid, states: &[State], target: State) -> Option<f64> {
    let bounded = |s: Option<State>| matches!(s, Some(x) if x != State::Unknown);
    let (mut total, mut count) = (0usize, 0usize);
    for run in runs(states, target) {
        let before = run.start.checked_sub(1).map(|j| states[j]);
        if bounded(before) && bounded(states.get(run.end).copied()) {
            total += run.len();
            count += 1;
        }
    }
    (count > 0).then(|| total as f64 / count as f64 * grid.step_s())
}

/// Lowest flow at which the machine delivers air while running loaded or at part load, m³/min.
fn min_flow_m3_min(spec: &CompressorSpec) -> f64 {
    match spec.control {
        Control::VariableSpeed => match spec.power_curve.first() {
            Some(&(q, _)) => q.max(0.0),
            None => VSD_TYPICAL_MIN_FLOW_FRACTION * spec.rated_flow_m3_min,
        },
        _ => 0.0,
    }
}

/// The variable-speed curve used: the data sheet's, or the typical one (module doc).
pub fn vsd_curve(spec: &CompressorSpec) -> Vec<(f64, f64)> {
    if spec.power_curve.len() >= 2 {
        return spec.power_curve.clone();
    }
    let (q, p) = (spec.rated_flow_m3_min, spec.rated_power_kw);
    [VSD_TYPICAL_MIN_FLOW_FRACTION, 1.0]
        .iter()
        .map(|&x| (x * q, p * (VSD_TYPICAL_A + VSD_TYPICAL_B * x)))
        .collect()
}

/// Linear interpolation in `(x, y)` points ascending in x, held flat beyond the ends.
fn interp(points: &[(f64, f64)], x: f64) -> f64 {
    let (first, last) = (points[0], points[points.len() - 1]);
    if x <= first.0 {
        return first.1;
    }
    if x >= last.0 {
        return last.1;
    }
    for w in points.windows(2) {
        let ((x0, y0), (x1, y1)) = (w[0], w[1]);
        if x <= x1 {
            return if x1 > x0 { y0 + (y1 - y0) * (x - x0) / (x1 - x0) } else { y1 };
        }
    }
    last.1
}

/// Modelled package power at a mean free air delivery, kW (part-load models in the module doc).
/// For variable speed below its minimum flow the machine idles (unloaded) part of the time: the
/// power is interpolated between the unloaded power at zero flow and the curve's lowest point.
pub fn power_at_flow_kw(spec: &CompressorSpec, flow_m3_min: f64) -> f64 {
    let (pf, qf) = (spec.rated_power_kw, spec.rated_flow_m3_min.max(1e-12));
    let x = (flow_m3_min / qf).clamp(0.0, 1.0);
    let unl = spec.unloaded_power_fraction * pf;
    match spec.control {
        Control::LoadUnload => unl + (pf - unl) * x,
        Control::Modulation => {
            pf * (MODULATION_POWER_AT_ZERO_FLOW + (1.0 - MODULATION_POWER_AT_ZERO_FLOW) * x)
        }
        Control::StartStop => pf * x,
        Control::VariableSpeed => {
            let c = vsd_curve(spec);
            let q = flow_m3_min.max(0.0);
            if q < c[0].0 {
                unl + (c[0].1 - unl) * q / c[0].0
            } else {
                interp(&c, q)
            }
        }
    }
}

/// The inverse for the running part: free air delivery from a power reading, m³/min.
pub fn flow_at_power_m3_min(spec: &CompressorSpec, kw: f64) -> f64 {
    let (pf, qf) = (spec.rated_power_kw, spec.rated_flow_m3_min);
    match spec.control {
        Control::Modulation => {
            qf * ((kw / pf - MODULATION_POWER_AT_ZERO_FLOW) / (1.0 - MODULATION_POWER_AT_ZERO_FLOW))
                .clamp(0.0, 1.0)
        }
        Control::VariableSpeed => {
            let c = vsd_curve(spec);
            let inv: Vec<(f64, f64)> = c.iter().map(|&(q, p)| (p, q)).collect();
            if kw <= c[0].1 {
                c[0].0
            } else {
                interp(&inv, kw)
            }
        }
        Control::LoadUnload | Control::StartStop => {
            let unl = spec.unloaded_power_fraction * pf;
            qf * ((kw - unl) / (pf - unl).max(1e-9)).clamp(0.0, 1.0)
        }
    }
}

/// The ideal line's slope, kW per m³/min (module doc; storage large enough): `core::partload` compares
/// its marginal with it (`ideal_marginal_kw_per_m3_min`).
/// Load/unload `(P_full - P_unl)/Q_rated`; modulation `0.30 P_full/Q_full`; variable speed the
/// curve's slope between its lowest and highest points; start/stop `P_full/Q_rated`.
pub fn marginal_kw_per_m3_min(spec: &CompressorSpec) -> f64 {
    let (pf, qf) = (spec.rated_power_kw, spec.rated_flow_m3_min.max(1e-12));
    match spec.control {
        Control::LoadUnload => pf * (1.0 - spec.unloaded_power_fraction) / qf,
        Control::Modulation => (1.0 - MODULATION_POWER_AT_ZERO_FLOW) * pf / qf,
        Control::StartStop => pf / qf,
        Control::VariableSpeed => {
            let c = vsd_curve(spec);
            let (a, b) = (c[0], c[c.len() - 1]);
            if b.0 > a.0 {
                (b.1 - a.1) / (b.0 - a.0)
            } else {
                pf / qf
            }
        }
    }
}

/// Estimated free air per bin from the states, m³/s (for a plant without a flow meter):
/// loaded -> rated FAD (load/unload, start/stop) or the part-load model's inverse (modulation,
/// variable speed); part load -> the inverse of the part-load model; unloaded and off -> 0; unknown ->
/// `NaN`.
pub fn estimated_flow(spec: &CompressorSpec, states: &[State], power_w: &[f32]) -> Vec<f32> {
    let rated = spec.rated_flow_m3_min / 60.0;
    states
        .iter()
        .zip(power_w)
        .map(|(s, &p)| match s {
            State::Unknown => f32::NAN,
            State::Off | State::Unloaded => 0.0,
            State::Loaded if matches!(spec.control, Control::LoadUnload | Control::StartStop) => rated as f32,
            State::Loaded | State::PartLoad => (flow_at_power_m3_min(spec, p as f64 / 1000.0) / 60.0) as f32,
        })
        .collect()
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::core::model::{CompressorKind, Cooling};

    #[test]
    fn sustained_marks_only_runs_at_least_as_long_as_asked() {
        // Runs of Unloaded: 1 bin (index 1), 3 bins (4..7), cut by a gap, 2 bins (8..10) after it.
        use State::*;
        let s = [Off, Unloaded, Off, PartLoad, Unloaded, Unloaded, Unloaded, Unknown, Unloaded, Unloaded];
        let got = sustained(&s, Unloaded, 3);
        let want = [false, false, false, false, true, true, true, false, false, false];
        assert_eq!(got, want);
        // A gap ends a run: the two after it are not joined to the three before it.
        assert_eq!(sustained(&s, Unloaded, 4), [false; 10]);
        assert_eq!(sustained(&s, Unloaded, 1).iter().filter(|b| **b).count(), 6);
    }

    pub(crate) fn spec(tag: &str, control: Control, kw: f64, q: f64) -> CompressorSpec {
        CompressorSpec {
            tag: tag.into(),
            kind: CompressorKind::LubricatedScrew,
            control,
            cooling: Cooling::Air,
            rated_power_kw: kw,
            rated_flow_m3_min: q,
            rated_pressure_bar_g: 7.5,
            unloaded_power_fraction: 0.25,
            no_load_power_kw: None,
            nameplate_motor_kw: None,
            max_pressure_bar_g: None,
            unloaded_level_kw: None,
            loaded_level_kw: None,
            stages: 1,
            rated_specific_power_kw_per_m3_min: None,
            power_curve: vec![],
            year: None,
        }
    }

    /// A load/unload machine on 10 s bins: each period `unloaded_s` at unloaded power (25 %), then
    /// `loaded_s` at full power.
    pub(crate) fn cycling_power(kw: f64, loaded_s: usize, unloaded_s: usize, hours: usize) -> Vec<f32> {
        let period = (loaded_s + unloaded_s) / 10;
        (0..hours * 360)
            .map(|i| if i % period < unloaded_s / 10 { kw * 250.0 } else { kw * 1000.0 } as f32)
            .collect()
    }

    #[test]
    fn load_unload_40_160_gives_loaded_fraction_0_2_and_18_cycles_per_hour() {
        // US DOE compressed-air sourcebook, leaks fact sheet, load/unload timing: T/(T+t) = 40/200 = 0.2; 3600/200 = 18/h.
        let c = spec("C2", Control::LoadUnload, 55.0, 9.5);
        let grid = Grid { start_ms: 0, step_ms: 10_000, len: 3 * 360 };
        let p = cycling_power(55.0, 40, 160, 3);
        let s = classify(&c, &p);
        let st = state_stats(&grid, &s, &p);
        assert!((st.loaded_fraction - 0.2).abs() < 1e-12);
        assert!((st.unloaded_fraction - 0.8).abs() < 1e-12);
        assert_eq!(st.off_fraction, 0.0);
        // 54 whole periods in 3 h, each with one unloaded -> loaded transition.
        assert_eq!(st.load_cycles, 54);
        assert!((st.cycles_per_hour - 18.0).abs() < 1e-9);
        assert!((st.mean_loaded_time_s.unwrap() - 40.0).abs() < 1e-9);
        assert!((st.mean_unloaded_time_s.unwrap() - 160.0).abs() < 1e-9);
        assert!((st.mean_loaded_power_kw.unwrap() - 55.0).abs() < 1e-3);
        assert!((st.mean_unloaded_power_kw.unwrap() - 13.75).abs() < 1e-3);
        // Estimated flow: rated FAD while loaded, 0 unloaded -> mean 0.2 x 9.5 m³/min.
        let q = estimated_flow(&c, &s, &p);
        let mean: f64 = q.iter().map(|&x| x as f64).sum::<f64>() / q.len() as f64 * 60.0;
        assert!((mean - 1.9).abs() < 1e-5);
    }

    #[test]
    fn off_threshold_is_the_larger_of_3_percent_and_half_unloaded() {
        let c = spec("C1", Control::LoadUnload, 100.0, 16.0);
        let t = thresholds(&c);
        assert_eq!(t.off_below_w, 12_500.0); // max(3 kW, 25 kW / 2)
        assert_eq!(t.loaded_from_w, 62_500.0); // (25 + 100) / 2
        let s = classify(&c, &[0.0, 12_000.0, 13_000.0, 62_000.0, 63_000.0, f32::NAN]);
        use State::*;
        assert_eq!(s, vec![Off, Off, Unloaded, Unloaded, Loaded, Unknown]);
    }

    #[test]
    fn modulation_flow_inverts_0_70_plus_0_30_q() {
        // Common practice: P/P_full = 0.70 + 0.30 Q/Q_full; at 85 % power Q = 50 %.
        let c = spec("M", Control::Modulation, 90.0, 15.0);
        assert!((flow_at_power_m3_min(&c, 76.5) - 7.5).abs() < 1e-9);
        assert!((power_at_flow_kw(&c, 7.5) - 76.5).abs() < 1e-9);
        let s = classify(&c, &[76_500.0, 90_000.0]);
        assert_eq!(s, vec![State::PartLoad, State::Loaded]);
        let q = estimated_flow(&c, &s, &[76_500.0, 90_000.0]);
        assert!((q[0] as f64 * 60.0 - 7.5).abs() < 1e-5);
        assert!((q[1] as f64 * 60.0 - 15.0).abs() < 1e-5);
    }

    #[test]
    fn vsd_flow_follows_the_data_sheet_curve_linearly() {
        let mut c = spec("V", Control::VariableSpeed, 45.0, 8.0);
        c.power_curve = vec![(2.0, 14.0), (5.0, 28.0), (8.0, 45.0)];
        // Between (5, 28) and (8, 45): 36.5 kW -> 6.5 m³/min.
        assert!((flow_at_power_m3_min(&c, 36.5) - 6.5).abs() < 1e-9);
        assert!((power_at_flow_kw(&c, 3.5) - 21.0).abs() < 1e-9);
        // Slope between the ends: (45 - 14) / 6.
        assert!((marginal_kw_per_m3_min(&c) - 31.0 / 6.0).abs() < 1e-12);
    }

    #[test]
    fn marginal_specific_power_per_control() {
        // Load/unload (US DOE compressed-air sourcebook, ideal load/unload): (P_full - P_unl)/Q = 55 x 0.75 / 9.5.
        let lu = spec("L", Control::LoadUnload, 55.0, 9.5);
        assert!((marginal_kw_per_m3_min(&lu) - 55.0 * 0.75 / 9.5).abs() < 1e-12);
        // Modulation (common practice 0.70 + 0.30 Q): 0.30 P/Q.
        let m = spec("M", Control::Modulation, 55.0, 9.5);
        assert!((marginal_kw_per_m3_min(&m) - 0.30 * 55.0 / 9.5).abs() < 1e-12);
        // Start/stop (US DOE compressed-air sourcebook): full specific power.
        let s = spec("S", Control::StartStop, 55.0, 9.5);
        assert!((marginal_kw_per_m3_min(&s) - 55.0 / 9.5).abs() < 1e-12);
        // The load/unload model's power at a mean flow is the loaded-fraction average (US DOE compressed-air sourcebook):
        // f = 0.4 -> 0.4 + 0.6 x 0.25 of full.
        assert!((power_at_flow_kw(&lu, 0.4 * 9.5) - 55.0 * (0.4 + 0.6 * 0.25)).abs() < 1e-9);
    }
}
