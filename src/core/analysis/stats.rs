/*!
Small statistics over binned series: masked means, peak window means and percentiles.
*/

use crate::core::series::Grid;

/// The highest window mean of a series, and the window it was taken over.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct Peak {
    /// `None` when no window has enough bins.
    pub mean: Option<f64>,
    pub window_s: f64,
}

/// Highest mean over consecutive non-overlapping windows of `window_s` (at least one bin); windows
/// with fewer than half their bins present are skipped.
///
/// Never below the series' mean over its present bins, by construction: that mean is the
/// count-weighted mean of all window means, so some window reaches it; when the highest readings
/// lie in windows skipped for sparseness, the qualifying windows can fall short of it, and the
/// mean is then the best lower bound of the peak the data allow.
pub(super) fn peak_mean(grid: &Grid, values: &[f32], window_s: f64) -> Peak {
    let k = ((window_s / grid.step_s()).round() as usize).max(1);
    let mut best = f64::NAN;
    let (mut sum, mut n) = (0.0, 0usize);
    for chunk in values.chunks(k) {
        let (mut s, mut c) = (0.0, 0usize);
        for &x in chunk.iter().filter(|x| x.is_finite()) {
            s += x as f64;
            c += 1;
        }
        sum += s;
        n += c;
        if c * 2 >= k && c > 0 {
            let m = s / c as f64;
            if best.is_nan() || m > best {
                best = m;
            }
        }
    }
    let mean = (n > 0).then(|| sum / n as f64);
    let peak = best.is_finite().then(|| best.max(mean.unwrap_or(best)));
    Peak { mean: peak, window_s: k as f64 * grid.step_s() }
}

/// The `p` quantile (0-1) of sorted values, interpolated linearly between neighbours (common
/// practice).
pub(super) fn percentile<T: Copy + Into<f64>>(sorted: &[T], p: f64) -> f64 {
    let x = p * (sorted.len() - 1) as f64;
    let (i, f) = (x.floor() as usize, x - x.floor());
    let at = |k: usize| -> f64 { sorted[k].into() };
    if i + 1 < sorted.len() {
        at(i) + f * (at(i + 1) - at(i))
    } else {
        at(i)
    }
}

/// Mean of the finite values where `mask(i)` holds (`None` if there are none).
pub(super) fn mean_where(values: &[f32], mask: impl Fn(usize) -> bool) -> Option<f64> {
    let (mut s, mut n) = (0.0, 0usize);
    for (i, &v) in values.iter().enumerate() {
        if v.is_finite() && mask(i) {
            s += v as f64;
            n += 1;
        }
    }
    (n > 0).then(|| s / n as f64)
}
