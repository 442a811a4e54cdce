//! The demand replayed: from the logged system flow or the compressors' logged power, with short gaps
//! held and long ones skipped, split into the production draw and the leaks (the module doc's
//! "Demand").

use super::{fail, ScenarioError, SimInput, BAND_BAR, HOLD_GAP_S, PEAK_WINDOW_S};
use crate::core::recommend::{self, Part};
use crate::core::series;
use crate::core::units::PA_PER_BAR;
use crate::core::{levels, states};

pub(super) struct Demand {
    pub(super) step_s: f64,
    pub(super) start_ms: i64,
    pub(super) step_ms: i64,
    /// Production draw (demand less leaks at the logged pressure), m³/s; NaN = skipped bin.
    pub(super) prod: Vec<f32>,
    /// Leak coefficient, m³/s per bar absolute.
    pub(super) leak_c: f64,
    pub(super) p_atm_bar: f64,
    /// Logged total power, W (NaN where any machine's is missing).
    pub(super) logged_w: Option<Vec<f32>>,
    pub(super) first_p_bar_g: Option<f64>,
    /// Highest [`PEAK_WINDOW_S`] mean of the production draw, m³/s.
    pub(super) peak_prod: f64,
    /// The window of `peak_prod`, s: [`PEAK_WINDOW_S`], or one bin when the bin is longer.
    pub(super) peak_window_s: f64,
    pub(super) max_prod: f64,
    /// What the replay left out of the data and why, in parts (the result's `note_parts`).
    pub(super) notes: Vec<Vec<Part>>,
    /// Why there is no demand to replay, when there is none (the module doc's "Demand").
    pub(super) no_demand: Option<String>,
}

/// Why the demand `q` (m³/s free air a bin, after the short gaps are held) gives nothing to replay:
/// no bin holds a demand, or none holds one above nothing. A plant replayed on no demand never
/// loads, and its energy against the logged energy would read -100 %.
fn no_demand(q: &[f32], metered: bool, drew_power: bool, step_s: f64) -> Option<String> {
    let known = q.iter().filter(|v| v.is_finite());
    if known.clone().any(|&v| v > 0.0) {
        return None;
    }
    let any = known.count() > 0;
    let why = match (metered, any) {
        (true, false) => "the flow meters logged no reading that the replay can use".to_string(),
        (true, true) => "the flow logged is nil in every time step".to_string(),
        (false, true) if !drew_power => "no flow was logged, and the compressors' logged power shows them \
                                         off throughout"
            .to_string(),
        (false, false) => "no flow was logged, and the compressors' load states, read from their power, are \
                           known for every compressor at once in no time step (their power logs do not \
                           overlap)"
            .to_string(),
        (false, true) => format!(
            "no flow was logged, and the compressors' load states, read from their logged power on the \
             log's {} time step, show none of them loaded at any time although they drew power: a power \
             averaged over long intervals, as an energy counter's between its readings, lies between the \
             loaded and unloaded levels and hides the loading. Log the flow, or the power every few \
             seconds, to replay the plant",
            crate::core::display::duration_words(step_s)
        ),
    };
    Some(format!("no demand to replay: {why}"))
}

pub(super) fn prepare_demand(input: &SimInput) -> Result<Demand, ScenarioError> {
    let frame = input.frame;
    let grid = frame.grid;
    let n = grid.len;
    let step_s = grid.step_s();
    let atm = input.site.atmosphere.0;
    let p_atm_bar = atm / PA_PER_BAR;
    // A pressure log that is not credible is not read (module doc, "Demand").
    let pressure: Option<Vec<f64>> = frame
        .header_pressure()
        .filter(|_| input.pressure_credible)
        .map(|c| c.values.iter().map(|&v| (v as f64 - atm) / PA_PER_BAR).collect());
    let metered_q = frame.system_flow();
    let metered = metered_q.is_some();
    let mut q: Vec<f32> = match metered_q {
        Some(q) => q,
        None => {
            let mut sum = vec![0.0f32; n];
            for (i, spec) in input.compressors.iter().enumerate() {
                let Some(col) = frame.power_of(i) else {
                    return fail(
                        "frame",
                        format!(
                            "no flow is logged and no power for {}: the demand cannot be estimated",
                            spec.tag
                        ),
                    );
                };
                let st = levels::classify(spec, &col.values);
                for (s, f) in sum.iter_mut().zip(states::estimated_flow(spec, &st, &col.values)) {
                    *s += f;
                }
            }
            // Supply less the air stored: Q_d = Q_s - V/p_atm dp/dt (receiver equation).
            if let Some(p) = &pressure {
                let k = input.storage.system_volume_m3() / p_atm_bar;
                for i in 1..n.saturating_sub(1) {
                    let dp = p[i + 1] - p[i - 1];
                    if dp.is_finite() {
                        sum[i] -= (k * dp / (2.0 * step_s)) as f32;
                    }
                }
            }
            sum
        }
    };
    if input.compressors.is_empty() && q.is_empty() {
        return fail("frame", "the frame holds no bins");
    }
    // Hold short gaps, leave long ones out.
    let hold_bins = ((HOLD_GAP_S / step_s).floor() as usize).max(1);
    let mut i = 0;
    while i < n {
        if q[i].is_finite() {
            i += 1;
            continue;
        }
        let start = i;
        while i < n && !q[i].is_finite() {
            i += 1;
        }
        if start > 0 && i - start <= hold_bins && i < n {
            let v = q[start - 1];
            q[start..i].iter_mut().for_each(|x| *x = v);
        }
    }
    let drew_power = (0..input.compressors.len())
        .filter_map(|i| frame.power_of(i))
        .any(|c| c.values.iter().any(|&w| w.is_finite() && w > 0.0));
    let no_demand = no_demand(&q, metered, drew_power, step_s);
    let mean_p = pressure.as_ref().and_then(|p| {
        let (s, c) = p.iter().filter(|v| v.is_finite()).fold((0.0, 0usize), |(s, c), v| (s + v, c + 1));
        (c > 0).then(|| s / c as f64)
    });
    let p_ref = mean_p.unwrap_or_else(|| {
        input.compressors.iter().map(|c| c.rated_pressure_bar_g).fold(f64::NAN, f64::max) - 0.5 * BAND_BAR
    });
    // The replayed demand's mean flow, m³/s: a leak estimate at or above it is no part of it.
    let (sum_q, n_q) =
        q.iter().filter(|v| v.is_finite()).fold((0.0f64, 0usize), |(s, c), &v| (s + v as f64, c + 1));
    let mean_q = if n_q > 0 { sum_q / n_q as f64 } else { f64::NAN };
    let mut notes = Vec::new();
    let leak_c = match input.leak_flow_m3_min {
        Some(l) if l.is_finite() && l > 0.0 && mean_q.is_finite() && l / 60.0 >= mean_q => {
            notes.push(vec![
                Part::from("the leak estimate of "),
                recommend::flow(l),
                Part::from(" is not below the replayed demand's mean of "),
                recommend::flow(mean_q * 60.0),
                Part::from(
                    ": the leak test and the log describe different conditions, so the replay leaves the \
                     leaks out and replays the logged demand as it is",
                ),
            ]);
            0.0
        }
        Some(l) if l.is_finite() && l > 0.0 && (p_ref + p_atm_bar) > 0.0 => l / 60.0 / (p_ref + p_atm_bar),
        Some(l) if !(l.is_finite() && l >= 0.0) => {
            return fail("leak_flow_m3_min", format!("must be a flow of zero or more, not {l}"))
        }
        _ => 0.0,
    };
    let prod: Vec<f32> = (0..n)
        .map(|i| {
            let pl = pressure.as_ref().map(|p| p[i]).filter(|v| v.is_finite()).unwrap_or(p_ref);
            (q[i] as f64 - leak_c * (pl + p_atm_bar)) as f32
        })
        .collect();
    let logged_w = if input.compressors.is_empty() {
        None
    } else {
        let cols: Option<Vec<&[f32]>> =
            (0..input.compressors.len()).map(|i| frame.power_of(i).map(|c| c.values.as_slice())).collect();
        cols.and_then(|c| series::sum_columns(n, c.into_iter()))
    };
    let w = ((PEAK_WINDOW_S / step_s).round() as usize).clamp(1, n.max(1));
    let (mut peak, mut max_prod, mut run, mut cnt) = (0.0f64, 0.0f64, 0.0f64, 0usize);
    let mut window = std::collections::VecDeque::with_capacity(w);
    for &v in &prod {
        if !v.is_finite() {
            window.clear();
            run = 0.0;
            cnt = 0;
            continue;
        }
        let v = v as f64;
        max_prod = max_prod.max(v);
        window.push_back(v);
        run += v;
        cnt += 1;
        if cnt > w {
            run -= window.pop_front().unwrap_or(0.0);
            cnt -= 1;
        }
        if cnt == w {
            peak = peak.max(run / w as f64);
        }
    }
    if peak == 0.0 {
        peak = max_prod;
    }
    let first_p_bar_g = pressure.as_ref().and_then(|p| p.iter().copied().find(|v| v.is_finite()));
    Ok(Demand {
        step_s,
        start_ms: grid.start_ms,
        step_ms: grid.step_ms,
        prod,
        leak_c,
        p_atm_bar,
        logged_w,
        first_p_bar_g,
        peak_prod: peak,
        peak_window_s: w as f64 * step_s,
        max_prod,
        notes,
        no_demand,
    })
}
