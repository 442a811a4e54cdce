/*!
Pressure at several points (ISO 11011's transmission): the drop from the most upstream point logged
(a compressor's discharge, else after the treatment, else the header) to every point downstream of
it, bin by bin where both are logged:

- **mean** drop over the bins both points hold;
- **at peak flow**: the mean drop over the bins whose system flow is at or above its 95th
  percentile (the flow that sizes a pipe; common practice), `None` without a flow;
- its **duration curve**: the drop exceeded for 0, 5, ..., 100 % of the logged time;
- each point's 5th-percentile pressure, bar(g), for the pressure measure's critical point of use.

What a drop costs is priced with the pressure measure's own rule
(`recommend::DischargeBasis::drop_kwh`, as the filters' excess): the compressors make the drop's worth of extra discharge
pressure on all their loaded energy.
*/

use crate::core::series::{Frame, FrameColumn, PressurePoint};
use crate::core::units::PressureAbs;

use super::stats::percentile;

/// Shares of the logged time at which the duration curve is read.
pub const DURATION_SHARES: usize = 21;

/// One drop from the reference point to a point downstream, over the bins both hold.
#[derive(Debug, Clone, PartialEq)]
pub struct DropStats {
    pub from: String,
    pub from_point: PressurePoint,
    pub to: String,
    pub to_point: PressurePoint,
    /// Mean pressure at the upstream point over the same bins, bar(g).
    pub from_mean_bar_g: f64,
    pub mean_bar: f64,
    pub at_peak_flow_bar: Option<f64>,
    /// The drop exceeded for 0, 5, ..., 100 % of the time, bar (21 values, highest first).
    pub duration_bar: Vec<f64>,
    /// The downstream point's 5th-percentile pressure over all its bins, bar(g).
    pub to_p5_bar_g: f64,
    /// Bins both points hold.
    pub bins: usize,
}

/// The drops of a frame (module doc); empty with fewer than two pressure points. `flow`: the
/// system flow per bin, if logged.
pub fn drops(frame: &Frame, flow: Option<&[f32]>, atm: PressureAbs) -> Vec<DropStats> {
    let points = frame.pressure_points();
    let Some(reference) = points.first().copied() else { return Vec::new() };
    // Nothing downstream of the reference: no drop, and no copy of the flow to sort.
    if !points.iter().any(|c| c.point > reference.point) {
        return Vec::new();
    }
    let bar_g = |pa: f64| PressureAbs(pa).bar_g(atm);
    // Peak-flow bins: at or above the 95th percentile of the logged flow.
    let peak_q = flow.and_then(|q| {
        let mut s: Vec<f32> = q.iter().copied().filter(|x| x.is_finite()).collect();
        s.sort_unstable_by(f32::total_cmp);
        (!s.is_empty()).then(|| percentile(&s, 0.95))
    });
    points
        .iter()
        .skip(1)
        .filter(|c| c.point > reference.point)
        .filter_map(|c| drop_between(reference, c, flow.zip(peak_q), &bar_g))
        .collect()
}

fn drop_between(
    up: &FrameColumn,
    down: &FrameColumn,
    peak: Option<(&[f32], f64)>,
    bar_g: &dyn Fn(f64) -> f64,
) -> Option<DropStats> {
    let (mut d, mut up_sum, mut peak_sum, mut peak_n) = (Vec::new(), 0.0, 0.0, 0usize);
    for (k, (&u, &w)) in up.values.iter().zip(&down.values).enumerate() {
        if !(u.is_finite() && w.is_finite()) {
            continue;
        }
        // Pa to bar: the drop is a difference, the atmosphere cancels.
        let drop = (u as f64 - w as f64) / 1e5;
        d.push(drop);
        up_sum += u as f64;
        if let Some((q, q95)) = peak {
            if q.get(k).is_some_and(|&x| x.is_finite() && x as f64 >= q95) {
                peak_sum += drop;
                peak_n += 1;
            }
        }
    }
    if d.is_empty() {
        return None;
    }
    let n = d.len();
    let mean_bar = d.iter().sum::<f64>() / n as f64;
    d.sort_unstable_by(|a, b| b.total_cmp(a));
    // Exceeded for share s of the time: the value at s of the way down the descending sort.
    let duration_bar = (0..DURATION_SHARES)
        .map(|i| {
            let s = i as f64 / (DURATION_SHARES - 1) as f64;
            let x = s * (n - 1) as f64;
            let (lo, f) = (x.floor() as usize, x - x.floor());
            if lo + 1 < n {
                d[lo] + f * (d[lo + 1] - d[lo])
            } else {
                d[lo]
            }
        })
        .collect();
    let mut down_sorted: Vec<f32> = down.values.iter().copied().filter(|x| x.is_finite()).collect();
    down_sorted.sort_unstable_by(f32::total_cmp);
    Some(DropStats {
        from: up.label.clone(),
        from_point: up.point,
        to: down.label.clone(),
        to_point: down.point,
        from_mean_bar_g: bar_g(up_sum / n as f64),
        mean_bar,
        at_peak_flow_bar: (peak_n > 0).then(|| peak_sum / peak_n as f64),
        duration_bar,
        to_p5_bar_g: bar_g(percentile(&down_sorted, 0.05)),
        bins: n,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::core::series::{Grid, Signal};

    fn col(point: PressurePoint, label: &str, bar_g: Vec<f64>) -> FrameColumn {
        FrameColumn {
            from_counter: false,
            signal: Signal::Pressure,
            compressor: None,
            point,
            label: label.into(),
            values: bar_g.iter().map(|b| (b * 1e5 + 101_325.0) as f32).collect(),
            partial: Vec::new(),
        }
    }

    #[test]
    fn drops_are_read_from_the_most_upstream_point_bin_by_bin() {
        // Ten bins: discharge 7.5 bar(g) throughout; header 7.3 except 7.0 in the two peak-flow bins;
        // a point of use 6.8, 6.3 at peak, one bin not logged. Flow 5 m³/min, 9 in bins 8 and 9.
        let atm = PressureAbs(101_325.0);
        let grid = Grid { start_ms: 0, step_ms: 60_000, len: 10 };
        let header = (0..10).map(|k| if k >= 8 { 7.0 } else { 7.3 }).collect();
        let mut pou: Vec<f64> = (0..10).map(|k| if k >= 8 { 6.3 } else { 6.8 }).collect();
        pou[0] = f64::NAN;
        let frame = Frame {
            grid,
            columns: vec![
                col(PressurePoint::PointOfUse, "press line", pou),
                col(PressurePoint::Header, "header", header),
                col(PressurePoint::Discharge, "discharge", vec![7.5; 10]),
            ],
        };
        let q: Vec<f32> = (0..10).map(|k| if k >= 8 { 9.0 / 60.0 } else { 5.0 / 60.0 }).collect();
        let d = drops(&frame, Some(&q), atm);
        assert_eq!(d.len(), 2);
        assert_eq!((d[0].from.as_str(), d[0].to.as_str()), ("discharge", "header"));
        // By hand: header drop 0.2 in 8 bins, 0.5 in 2: mean 0.26 bar; at peak flow (bins 8 and 9,
        // the 95th percentile of the flow being 9 m³/min) 0.5 bar.
        assert!((d[0].mean_bar - 0.26).abs() < 1e-5, "{}", d[0].mean_bar);
        assert!((d[0].at_peak_flow_bar.unwrap() - 0.5).abs() < 1e-5);
        assert!((d[0].from_mean_bar_g - 7.5).abs() < 1e-5);
        // The duration curve over the ten drops sorted high to low (0.5, 0.5, then 0.2 eight times):
        // 0.5 at 0 %; at 20 % the position 0.2 × 9 = 1.8 lies between the 2nd (0.5) and 3rd (0.2)
        // values, 0.5 - 0.8 × 0.3 = 0.26; from 25 % (position 2.25) on, 0.2.
        assert!((d[0].duration_bar[0] - 0.5).abs() < 1e-5 && (d[0].duration_bar[20] - 0.2).abs() < 1e-5);
        assert!((d[0].duration_bar[4] - 0.26).abs() < 1e-5, "{:?}", d[0].duration_bar);
        assert!((d[0].duration_bar[5] - 0.2).abs() < 1e-5, "{:?}", d[0].duration_bar);
        // Point of use: 9 bins held, 0.7 in 7, 1.2 in 2: mean (4.9 + 2.4) / 9 = 0.8111 bar.
        assert_eq!(d[1].bins, 9);
        assert!((d[1].mean_bar - 7.3 / 9.0).abs() < 1e-5, "{}", d[1].mean_bar);
        // Its 5th percentile over 9 readings: 6.3 + 0.4 × (6.3 - 6.3) ... sorted 6.3, 6.3, 6.8 ...:
        // position 0.05 × 8 = 0.4, between 6.3 and 6.3: 6.3 bar(g).
        assert!((d[1].to_p5_bar_g - 6.3).abs() < 1e-4);
        // One point alone: no drop.
        let one = Frame { grid, columns: vec![col(PressurePoint::Header, "header", vec![7.0; 10])] };
        assert!(drops(&one, None, atm).is_empty());
    }
}
