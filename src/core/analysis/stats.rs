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
/// The windows lie on the clock, as a utility's demand meter's intervals do (a 15-minute demand
/// interval runs :00-:15, :15-:30, ...; common practice of demand metering): each starts at a
/// multiple of the window since the epoch, which is also a multiple in local time for every time
/// zone whose offset is a whole number of quarter hours. The first window is cut short where the
/// log starts inside one.
///
/// Never below the series' mean over its present bins, by construction: that mean is the
/// count-weighted mean of all window means, so some window reaches it; when the highest readings
/// lie in windows skipped for sparseness, the qualifying windows can fall short of it, and the
/// mean is then the best lower bound of the peak the data allow.
pub(super) fn peak_mean(grid: &Grid, values: &[f32], window_s: f64) -> Peak {
    let k = ((window_s / grid.step_s()).round() as usize).max(1);
    // Bins before the first clock boundary: the log's first window is a partial one.
    let window_ms = k as i64 * grid.step_ms;
    let lead = match grid.start_ms.rem_euclid(window_ms) {
        0 => 0,
        r => (((window_ms - r) / grid.step_ms) as usize).min(values.len()),
    };
    let mut best = f64::NAN;
    let (mut sum, mut n) = (0.0, 0usize);
    let (head, rest) = values.split_at(lead);
    for chunk in std::iter::once(head).filter(|h| !h.is_empty()).chain(rest.chunks(k)) {
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

#[cfg(test)]
mod tests {
    use super::*;

    /// One hour at 1-minute bins from `start_min` past midnight UTC, 40 kW with 100 kW from 10:07
    /// to 10:22 (the minutes 7 to 21 of the hour, fifteen readings).
    fn hour(start_min: i64) -> (Grid, Vec<f32>) {
        let grid = Grid { start_ms: (600 + start_min) * 60_000, step_ms: 60_000, len: 60 };
        let v = (0..60).map(|i| if (7..22).contains(&(start_min + i)) { 100.0 } else { 40.0 }).collect();
        (grid, v)
    }

    #[test]
    fn the_demand_peak_is_taken_over_the_meters_clock_quarter_hours() {
        // A utility's demand meter averages fixed 15-minute intervals on the clock (common practice
        // of demand metering). A 15-minute burst of 100 kW that straddles 10:15 is split between
        // 10:00-10:15 (8 minutes at 100, 7 at 40: 1080 / 15 = 72 kW) and 10:15-10:30 (7 at 100, 8 at
        // 40: 68 kW). The billed peak is 72 kW, not the 100 kW a sliding window would find.
        let (g, v) = hour(0);
        let p = peak_mean(&g, &v, 900.0);
        assert_eq!(p.window_s, 900.0);
        assert!((p.mean.unwrap() - 72.0).abs() < 1e-9, "{:?}", p.mean);
        // A log that starts at 10:05 reads the same clock intervals: its first is 10:05-10:15 (10
        // minutes: 2 at 40, 8 at 100: 88 kW), logged for more than half its length.
        let (g, v) = hour(5);
        let p = peak_mean(&g, &v, 900.0);
        assert!((p.mean.unwrap() - 88.0).abs() < 1e-9, "{:?}", p.mean);
    }
}
