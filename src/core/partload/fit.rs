/*!
The load/unload cycle read from a machine's own log, where the log is fine enough to show it: the
sump blow-down after each unloading (its time constant and starting level) from the power trace,
and the pressure band from the pressure at the load and unload transitions. What the log cannot
show keeps the defaults of `partload` (common practice), and the result says which and why.

# Blow-down
Fitted when the logging interval is at most half the default time constant
(`interval <= BLOWDOWN_TAU_S / 2`, 10 s: a decay of τ then spans at least two readings) and at
least [`MIN_RUNS`] unloadings show it. An unloading is a bin below 90 % of the loaded level after a
bin at or above it; the bins that follow it while the machine stays unloaded (every one below 90 % of
the loaded level, the next one too, so no reloading is in them; at most [`DECAY_WINDOW_TAUS`] default
time constants) are its decay, at least three of them. Over all the decays at once the model
`P_j = P_u + A_r exp(-(j - 1) Δt / τ)` is fitted by least squares: for each τ the unloaded level `P_u`
(common to all runs) and each run's amplitude `A_r` have a closed form (linear least squares), and
τ is the minimum of the residual over a log-spaced scan refined by golden section. The starting
level follows from the runs' mean amplitude with the unloading taken uniformly within its bin:
`(b - u) P_full = mean(A_r) / c²`, `c = (τ/Δt)(1 - exp(-Δt/τ))` (the bin mean of the exponential,
once for the first fitted bin and once, on average, for the unknown instant within the transition
bin). Where every decay bin lies within 1 % of full power of the first (or the fitted amplitude is
that small), the log shows no blow-down over two intervals and more: the start is the unloaded
level (the curve is then the ideal line) and τ keeps its default, which then prices nothing.
Otherwise a fit whose τ is under two intervals or over 200 s, or whose start is not between the
unloaded and the loaded level, is refused and the defaults stand.

# Pressure band
Fitted when at least [`MIN_CYCLES`] unload (and load) transitions fall between runs of at least
[`MIN_RUN_BINS`] bins each (the interval is at most a quarter of the loaded and of the unloaded
time). Each run's pressure is a straight line fitted through its bins but the first and last (which
may hold the transition); the turning point is where the rising line of a loaded run meets the
falling line of the unloaded run after it (the unload pressure), and where that one meets the next
rising line (the load pressure). Bin means of a straight ramp lie on the ramp, so the lines are the
ramp's whatever the interval. The band is the median unload pressure less the median load pressure.
*/

use crate::core::states::State;

use super::{BlowDown, BLOWDOWN_TAU_S};

/// Fewest unloadings whose decay is fitted.
pub const MIN_RUNS: usize = 5;
/// Fewest load and unload transitions whose pressures give the band.
pub const MIN_CYCLES: usize = 5;
/// Fewest bins in a loaded or unloaded run whose pressure line is fitted.
pub const MIN_RUN_BINS: usize = 4;
/// The decay read after an unloading, in default time constants.
pub const DECAY_WINDOW_TAUS: f64 = 4.0;
/// A bin below this share of the loaded level is not loaded at full (an unloading is in it).
const BELOW_LOADED: f64 = 0.9;
/// A decay under this share of full power is no blow-down at all.
const NO_DECAY_SHARE: f64 = 0.01;

/// The blow-down fitted from the power trace.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BlowDownFit {
    pub blowdown: BlowDown,
    /// The unloaded level the decays settle to, W (fitted with them).
    pub unloaded_w: f64,
    pub runs: usize,
}

/// The pressure band fitted from the pressure at the transitions.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BandFit {
    pub band_bar: f64,
    /// Median pressure at unloading and at loading, Pa (on the column's basis).
    pub unload_pa: f64,
    pub load_pa: f64,
    pub cycles: usize,
}

/// What a log showed of one load/unload machine's cycle.
#[derive(Debug, Clone, PartialEq)]
pub struct Calibration {
    /// The logging interval read, s (the analysis bin).
    pub interval_s: f64,
    pub blowdown: Option<BlowDownFit>,
    pub band: Option<BandFit>,
    /// In words: what was fitted from how much, what was assumed and why.
    pub note: String,
}

/// Fit the blow-down and the band of one load/unload machine (module doc). `power_w` and `states`
/// are its bins, `loaded_w` its loaded level, `pressure_pa` its own discharge pressure or the header's.
pub fn calibrate(
    power_w: &[f32],
    states: &[State],
    loaded_w: f64,
    pressure_pa: Option<&[f32]>,
    step_s: f64,
) -> Calibration {
    let mut notes = Vec::new();
    let blowdown = if step_s > BLOWDOWN_TAU_S / 2.0 {
        notes.push(format!(
            "blow-down assumed: the logging interval {step_s:.0} s is longer than τ/2 = {:.0} s",
            BLOWDOWN_TAU_S / 2.0
        ));
        None
    } else {
        match fit_blowdown(power_w, states, loaded_w, step_s) {
            Ok(f) if f.blowdown.start_fraction * loaded_w <= f.unloaded_w + NO_DECAY_SHARE * loaded_w => {
                notes.push(format!(
                    "no blow-down in the log: after {} unloadings at {step_s:.0} s the power falls straight to a flat unloaded level",
                    f.runs
                ));
                Some(f)
            }
            Ok(f) => {
                notes.push(format!(
                    "blow-down fitted from {} unloadings at {step_s:.0} s: from {:.0} % of loaded power with τ = {:.1} s",
                    f.runs,
                    f.blowdown.start_fraction * 100.0,
                    f.blowdown.tau_s
                ));
                Some(f)
            }
            Err(why) => {
                notes.push(format!("blow-down assumed: {why}"));
                None
            }
        }
    };
    let band = match pressure_pa {
        None => {
            notes.push("band assumed: no pressure logged".into());
            None
        }
        Some(p) => match fit_band(p, states, step_s) {
            Ok(f) => {
                notes.push(format!(
                    "band fitted from {} load/unload cycles of the logged pressure: {:.2} bar",
                    f.cycles, f.band_bar
                ));
                Some(f)
            }
            Err(why) => {
                notes.push(format!("band assumed: {why}"));
                None
            }
        },
    };
    Calibration { interval_s: step_s, blowdown, band, note: notes.join("; ") }
}

/// The decays after unloading: for each, the powers of its bins in order (module doc).
fn decays(power_w: &[f32], states: &[State], loaded_w: f64, step_s: f64) -> Vec<Vec<f64>> {
    let below = BELOW_LOADED * loaded_w;
    let max_bins = (DECAY_WINDOW_TAUS * BLOWDOWN_TAU_S / step_s).floor() as usize;
    let low = |k: usize| {
        power_w.get(k).is_some_and(|&p| p.is_finite() && (p as f64) < below)
            && states.get(k).is_some_and(|s| s.running())
    };
    let mut out = Vec::new();
    let mut k = 1;
    while k < power_w.len() {
        let high_before =
            power_w[k - 1].is_finite() && power_w[k - 1] as f64 >= below && states[k - 1] == State::Loaded;
        if !(high_before && low(k)) {
            k += 1;
            continue;
        }
        // Bin k holds the unloading; its decay follows while the next bin is low too.
        let mut run = Vec::new();
        let mut j = k + 1;
        while run.len() < max_bins && low(j) && low(j + 1) {
            run.push(power_w[j] as f64);
            j += 1;
        }
        if run.len() >= 3 {
            out.push(run);
        }
        k = j.max(k + 1);
    }
    out
}

/// The decays with what the residual needs of them that τ does not change: the longest run and the
/// sums of the powers and of their squares over every bin, taken once rather than at each of the
/// scan's two hundred τ (a day at 1 s holds hundreds of decays).
struct Decays {
    runs: Vec<Vec<f64>>,
    longest: usize,
    sum_p: f64,
    sum_p2: f64,
    n: f64,
}

impl Decays {
    fn of(runs: Vec<Vec<f64>>) -> Decays {
        let longest = runs.iter().map(Vec::len).max().unwrap_or(0);
        let (mut sum_p, mut sum_p2, mut n) = (0.0, 0.0, 0.0);
        for &p in runs.iter().flatten() {
            sum_p += p;
            sum_p2 += p * p;
            n += 1.0;
        }
        Decays { runs, longest, sum_p, sum_p2, n }
    }
}

/// Residual and (unloaded level, amplitudes) of the decays at one τ (module doc's closed form). A
/// run's sums of `e_j` and `e_j²` depend on its length only: they are the prefix sums of one table,
/// added in the same order as bin by bin, so only `Σ p_j e_j` is summed per run.
fn residual(d: &Decays, step_s: f64, tau: f64) -> (f64, f64, Vec<f64>) {
    let mut e = Vec::with_capacity(d.longest);
    // prefix[l] = (Σ e_j, Σ e_j²) over j < l.
    let mut prefix = Vec::with_capacity(d.longest + 1);
    let (mut se, mut ee) = (0.0, 0.0);
    prefix.push((se, ee));
    for j in 0..d.longest {
        let x = (-(j as f64) * step_s / tau).exp();
        se += x;
        ee += x * x;
        e.push(x);
        prefix.push((se, ee));
    }
    let (sum_p, n) = (d.sum_p, d.n);
    let (mut num, mut den) = (0.0, 0.0);
    let mut per: Vec<(f64, f64, f64)> = Vec::with_capacity(d.runs.len());
    for r in &d.runs {
        let (se, ee) = prefix[r.len()];
        let mut sp = 0.0;
        for (&p, &x) in r.iter().zip(&e) {
            sp += p * x;
        }
        num += sp * se / ee;
        den += se * se / ee;
        per.push((se, ee, sp));
    }
    let u = if (den - n).abs() > 1e-12 { (num - sum_p) / (den - n) } else { f64::NAN };
    let mut sse = d.sum_p2 - 2.0 * u * sum_p + n * u * u;
    let amps = per
        .iter()
        .map(|&(se, ee, sp)| {
            let s = sp - u * se;
            sse -= s * s / ee;
            s / ee
        })
        .collect();
    (sse, u, amps)
}

/// The blow-down of the decays (module doc), or why not.
pub fn fit_blowdown(
    power_w: &[f32],
    states: &[State],
    loaded_w: f64,
    step_s: f64,
) -> Result<BlowDownFit, String> {
    if !(loaded_w > 0.0 && step_s > 0.0) {
        return Err("no loaded level in the log".into());
    }
    let d = Decays::of(decays(power_w, states, loaded_w, step_s));
    let runs = &d.runs;
    if runs.len() < MIN_RUNS {
        return Err(format!(
            "{} unloadings with at least three analysis steps of decay in the log, {MIN_RUNS} needed",
            runs.len()
        ));
    }
    // A log-spaced scan of τ from 1 s to 200 s, then golden section around the best.
    let (lo_ln, hi_ln) = (1.0f64.ln(), 200.0f64.ln());
    let steps = 80;
    let at = |i: usize| (lo_ln + (hi_ln - lo_ln) * i as f64 / steps as f64).exp();
    let sse = |tau: f64| residual(&d, step_s, tau).0;
    // Each τ of the scan once (the first least, as `min_by` keeps it).
    let scan: Vec<f64> = (0..=steps).map(|i| sse(at(i))).collect();
    let best = (0..=steps).min_by(|&a, &b| scan[a].total_cmp(&scan[b])).unwrap_or(0);
    let (mut a, mut b) = (at(best.saturating_sub(1)).ln(), at((best + 1).min(steps)).ln());
    let g = 0.5 * (5.0f64.sqrt() - 1.0);
    for _ in 0..60 {
        let (c, d) = (b - g * (b - a), a + g * (b - a));
        if sse(c.exp()) < sse(d.exp()) {
            b = d;
        } else {
            a = c;
        }
    }
    let tau = (0.5 * (a + b)).exp();
    let (_, u_w, amps) = residual(&d, step_s, tau);
    let mean_amp = amps.iter().sum::<f64>() / amps.len() as f64;
    // Power that falls straight to a flat level (within 1 % of full power in every decay bin, or a
    // fitted amplitude that small): the log shows no blow-down over two intervals and more. The
    // start is then the unloaded level (the curve is the ideal line) and τ, which then prices
    // nothing, keeps its default.
    let flat = runs.iter().flatten().all(|&p| (p - runs[0][0]).abs() < NO_DECAY_SHARE * loaded_w);
    if flat || (mean_amp.abs() < NO_DECAY_SHARE * loaded_w && u_w.is_finite()) {
        let u = if flat { runs[0][0] } else { u_w };
        return Ok(BlowDownFit {
            blowdown: BlowDown { start_fraction: (u / loaded_w).clamp(0.0, 1.0), tau_s: BLOWDOWN_TAU_S },
            unloaded_w: u,
            runs: runs.len(),
        });
    }
    let c = tau / step_s * (1.0 - (-step_s / tau).exp());
    let start_w = u_w + mean_amp / (c * c);
    let start = start_w / loaded_w;
    if !(tau >= 2.0 * step_s && tau <= 200.0) {
        return Err(format!("the decay's fitted τ = {tau:.1} s is outside 2 intervals to 200 s"));
    }
    if !(u_w >= 0.0 && start_w > u_w && start <= 1.0) {
        return Err(format!(
            "the decay's fitted start {:.0} % is not between the unloaded level and full power",
            start * 100.0
        ));
    }
    Ok(BlowDownFit {
        blowdown: BlowDown { start_fraction: start, tau_s: tau },
        unloaded_w: u_w,
        runs: runs.len(),
    })
}

/// A straight line through a run's inner bins: (mean time s, mean pressure, slope per s), or
/// `None` with fewer than two finite bins.
fn line(p: &[f32], start: usize, len: usize, step_s: f64) -> Option<(f64, f64, f64)> {
    let pts: Vec<(f64, f64)> = (start + 1..start + len - 1)
        .filter(|&k| p.get(k).is_some_and(|v| v.is_finite()))
        .map(|k| ((k as f64 + 0.5) * step_s, p[k] as f64))
        .collect();
    if pts.len() < 2 {
        return None;
    }
    let n = pts.len() as f64;
    let (tm, pm) = (pts.iter().map(|q| q.0).sum::<f64>() / n, pts.iter().map(|q| q.1).sum::<f64>() / n);
    let sxx: f64 = pts.iter().map(|q| (q.0 - tm).powi(2)).sum();
    let sxy: f64 = pts.iter().map(|q| (q.0 - tm) * (q.1 - pm)).sum();
    (sxx > 0.0).then(|| (tm, pm, sxy / sxx))
}

/// Where two lines meet, if the first rises and the second falls (or the reverse, `rising_first`).
fn meet(a: (f64, f64, f64), b: (f64, f64, f64), rising_first: bool) -> Option<f64> {
    let ok = if rising_first { a.2 > 0.0 && b.2 < 0.0 } else { a.2 < 0.0 && b.2 > 0.0 };
    if !ok {
        return None;
    }
    let t = (b.1 - a.1 + a.2 * a.0 - b.2 * b.0) / (a.2 - b.2);
    // The turning point lies between the two runs' inner bins.
    (t > a.0 && t < b.0).then_some(a.1 + a.2 * (t - a.0))
}

fn median(v: &mut [f64]) -> f64 {
    v.sort_by(f64::total_cmp);
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        0.5 * (v[n / 2 - 1] + v[n / 2])
    }
}

/// The band from the pressure at the transitions (module doc), or why not.
pub fn fit_band(pressure_pa: &[f32], states: &[State], step_s: f64) -> Result<BandFit, String> {
    // Runs of loaded and unloaded bins: (loaded?, start, len).
    let mut runs: Vec<(bool, usize, usize)> = Vec::new();
    let mut k = 0;
    while k < states.len() {
        let s = states[k];
        let mut j = k;
        while j < states.len() && states[j] == s {
            j += 1;
        }
        if matches!(s, State::Loaded | State::Unloaded) {
            runs.push((s == State::Loaded, k, j - k));
        } else {
            runs.push((false, k, 0)); // a break: off, part load or not logged
        }
        k = j;
    }
    let (mut ups, mut downs) = (Vec::new(), Vec::new());
    for w in runs.windows(2) {
        let ((l1, s1, n1), (l2, s2, n2)) = (w[0], w[1]);
        if n1 < MIN_RUN_BINS || n2 < MIN_RUN_BINS || l1 == l2 || s1 + n1 != s2 {
            continue;
        }
        let (Some(a), Some(b)) = (line(pressure_pa, s1, n1, step_s), line(pressure_pa, s2, n2, step_s))
        else {
            continue;
        };
        if let Some(p) = meet(a, b, l1) {
            if l1 {
                ups.push(p);
            } else {
                downs.push(p);
            }
        }
    }
    let cycles = ups.len().min(downs.len());
    if cycles < MIN_CYCLES {
        return Err(format!(
            "{cycles} load/unload transitions between runs of at least {MIN_RUN_BINS} bins with pressure logged, \
             {MIN_CYCLES} needed (the interval must be at most a quarter of the loaded and unloaded times)"
        ));
    }
    let (unload_pa, load_pa) = (median(&mut ups), median(&mut downs));
    let band_bar = (unload_pa - load_pa) / 1e5;
    if !(band_bar > 0.0 && band_bar < 5.0) {
        return Err(format!("the fitted band {band_bar:.2} bar is not between 0 and 5 bar"));
    }
    Ok(BandFit { band_bar, unload_pa, load_pa, cycles })
}

#[cfg(test)]
#[path = "fit_tests.rs"]
mod tests;
