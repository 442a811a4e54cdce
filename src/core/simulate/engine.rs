//! Time stepping: the receiver equation integrated sub-step by sub-step, cut at switching events
//! (the module doc's "Receiver").

use super::demand::Demand;
use super::machine::{MState, MStats, Machine, Mode};
use super::plant::Plant;
use super::{BAND_BAR, MAX_DP_PER_SUBSTEP_BAR, TRACE_POINTS, WARMUP_S};
use crate::core::model::Control;

/// Events handled within one sub-step before the rest of it is taken in one go (a guard).
const MAX_EVENTS_PER_SUBSTEP: usize = 64;

/// What the sub-steps of one bin add up (the warm-up's are thrown away).
struct BinSums {
    /// ∫p dt, bar(g) s.
    p_integral: f64,
    /// Time below the minimum required pressure, s.
    below_s: f64,
    /// Lowest pressure, bar(g).
    min_p: f64,
}

impl BinSums {
    fn new() -> Self {
        Self { p_integral: 0.0, below_s: 0.0, min_p: f64::INFINITY }
    }
}

pub(super) struct Outcome {
    pub(super) machines: Vec<MStats>,
    pub(super) energy_kws: f64,
    /// Simulated energy over the bins with logged power, and the logged energy there, kW s.
    pub(super) compare_sim_kws: f64,
    pub(super) compare_logged_kws: f64,
    pub(super) simulated_s: f64,
    pub(super) peak_kw: f64,
    pub(super) min_p: f64,
    pub(super) p_integral: f64,
    pub(super) below_s: f64,
    pub(super) trace: Vec<(i64, f64)>,
}

/// Replay the demand against a plant. `threshold_bar_g`: the minimum required pressure.
pub(super) fn simulate(plant: &Plant, d: &Demand, threshold_bar_g: f64, trace: bool) -> Outcome {
    let nm = plant.machines.len();
    let ms = &plant.machines;
    let k_v = d.p_atm_bar / plant.volume_m3; // bar/s per m³/s
    let leak_c = d.leak_c * plant.leak_keep;
    let p_atm = d.p_atm_bar;
    let top =
        ms.iter()
            .map(|m| {
                if m.control == Control::VariableSpeed {
                    m.setpoint
                } else {
                    m.unload_bar_g - 0.5 * BAND_BAR
                }
            })
            .fold(f64::NEG_INFINITY, f64::max);
    // Sub-step: pressure moves at most MAX_DP at full capacity; continuous loops get τ/5.
    let capacity: f64 = ms.iter().map(|m| m.rated_q.max(m.qmax())).sum::<f64>().max(d.max_prod).max(1e-9);
    let mut h_max = MAX_DP_PER_SUBSTEP_BAR / (k_v * capacity);
    for m in ms {
        let gain = match m.control {
            Control::VariableSpeed => m.kp,
            Control::Modulation => m.rated_q / BAND_BAR,
            _ => continue,
        };
        h_max = h_max.min(0.2 / (k_v * gain));
    }
    let n_sub = (d.step_s / h_max).ceil().max(1.0) as usize;
    let h = d.step_s / n_sub as f64;

    let mut st = vec![MState { mode: Mode::Off, timer: 0.0, q: 0.0, integ: 0.0 }; nm];
    let mut stats = vec![MStats::default(); nm];
    let mut p = d.first_p_bar_g.unwrap_or(if top.is_finite() { top } else { 7.0 });

    let n = d.prod.len();
    // The trace's buckets count simulated bins only: a replay of a few bins in a grid of years
    // (files logged years apart) still draws them, one point a bin.
    let simulated = d.prod.iter().filter(|v| v.is_finite()).count();
    let bucket = simulated.div_ceil(TRACE_POINTS).max(1);
    let (mut in_bucket, mut bucket_t) = (0usize, 0i64);
    let mut out = Outcome {
        machines: vec![],
        energy_kws: 0.0,
        compare_sim_kws: 0.0,
        compare_logged_kws: 0.0,
        simulated_s: 0.0,
        peak_kw: 0.0,
        min_p: f64::INFINITY,
        p_integral: 0.0,
        below_s: 0.0,
        trace: Vec::new(),
    };
    let mut bucket_min = f64::INFINITY;

    // Warm-up on the first simulated bin's demand: states and pressure settle, nothing is counted.
    if let Some(&first) = d.prod.iter().find(|v| v.is_finite()) {
        let steps = (WARMUP_S / h).ceil() as usize;
        let mut scratch = vec![MStats::default(); nm];
        let mut sink = BinSums::new();
        for _ in 0..steps {
            substep(
                ms,
                &mut st,
                &mut scratch,
                &mut p,
                h,
                first as f64,
                leak_c,
                p_atm,
                k_v,
                threshold_bar_g,
                &mut sink,
            );
        }
    }

    for i in 0..n {
        let prod = d.prod[i];
        if prod.is_finite() {
            let e0: f64 = stats.iter().map(|s| s.energy_kws).sum();
            // (energy is read back from the stats)
            let mut sink = BinSums::new();
            for _ in 0..n_sub {
                substep(
                    ms,
                    &mut st,
                    &mut stats,
                    &mut p,
                    h,
                    prod as f64,
                    leak_c,
                    p_atm,
                    k_v,
                    threshold_bar_g,
                    &mut sink,
                );
            }
            let e1: f64 = stats.iter().map(|s| s.energy_kws).sum();
            let bin_kws = e1 - e0;
            out.energy_kws += bin_kws;
            out.simulated_s += d.step_s;
            out.peak_kw = out.peak_kw.max(bin_kws / d.step_s);
            out.p_integral += sink.p_integral;
            out.below_s += sink.below_s;
            out.min_p = out.min_p.min(sink.min_p);
            bucket_min = bucket_min.min(sink.min_p);
            if in_bucket == 0 {
                bucket_t = d.start_ms + i as i64 * d.step_ms;
            }
            in_bucket += 1;
            if let Some(lw) = &d.logged_w {
                let l = lw[i];
                if l.is_finite() {
                    out.compare_sim_kws += bin_kws;
                    out.compare_logged_kws += l as f64 / 1000.0 * d.step_s;
                }
            }
        }
        if in_bucket > 0 && (in_bucket == bucket || i + 1 == n) {
            if bucket_min.is_finite() {
                out.trace.push((bucket_t, bucket_min));
            }
            bucket_min = f64::INFINITY;
            in_bucket = 0;
        }
    }
    if !trace {
        out.trace.clear();
    }
    out.machines = stats;
    out
}

/// One sub-step of length h, cut at switching events, adding its share to `sink`.
#[allow(clippy::too_many_arguments)]
#[inline]
fn substep(
    ms: &[Machine],
    st: &mut [MState],
    stats: &mut [MStats],
    p: &mut f64,
    h: f64,
    prod: f64,
    leak_c: f64,
    p_atm: f64,
    k_v: f64,
    threshold: f64,
    sink: &mut BinSums,
) {
    for (m, s) in ms.iter().zip(st.iter_mut()) {
        s.control(m, *p, h);
    }
    let mut left = h;
    let mut events = 0;
    while left > 1e-12 {
        let supply: f64 = ms.iter().zip(st.iter()).map(|(m, s)| s.flow(m)).sum();
        let demand = (prod + leak_c * (*p + p_atm)).max(0.0);
        let mut r = k_v * (supply - demand);
        // A header cannot fall below the atmosphere: there the uses take only what is supplied
        // (they are starved, the plant short of air), so the pressure stays at 0 bar(g).
        if *p <= 0.0 && r < 0.0 {
            r = 0.0;
        }
        let mut tau = left;
        if events < MAX_EVENTS_PER_SUBSTEP {
            for (m, s) in ms.iter().zip(st.iter()) {
                tau = tau.min(s.event_time(m, *p, r));
            }
        }
        if r < 0.0 && *p > 0.0 {
            tau = tau.min(*p / -r);
        }
        let tau = tau.max(0.0);
        let p0 = *p;
        let p1 = if p0 >= 0.0 { (p0 + r * tau).max(0.0) } else { p0 + r * tau };
        let p_mid = 0.5 * (p0 + p1);
        for ((m, s), stt) in ms.iter().zip(st.iter_mut()).zip(stats.iter_mut()) {
            s.advance(m, p_mid, tau, stt);
        }
        sink.p_integral += p_mid * tau;
        // Time below the threshold: the pressure is a straight line over the interval.
        if tau > 0.0 {
            if p0 < threshold && p1 < threshold {
                sink.below_s += tau;
            } else if (p0 < threshold) != (p1 < threshold) {
                let below = if p0 < threshold { threshold - p0 } else { threshold - p1 };
                sink.below_s += tau * below / (p1 - p0).abs();
            }
        }
        sink.min_p = sink.min_p.min(p0.min(p1));
        *p = p1;
        left -= tau;
        for ((m, s), stt) in ms.iter().zip(st.iter_mut()).zip(stats.iter_mut()) {
            s.transition(m, *p, stt);
        }
        events += 1;
    }
}
