/*!
Pressure bands: p5/p50/p95 of the header pressure; the low limit is the lowest rated pressure of the
compressors minus 1 bar (below it tools are likely short of air; common practice), the high limit the
highest rated pressure.
*/

use crate::core::model::CompressorSpec;
use crate::core::units::PressureAbs;

use super::figures::PressureFigures;
use super::stats::percentile;

/// The header pressure's figures (`uncertainty_bar` is set by `summary_of`).
pub(super) fn pressure_figures(
    pressure: Option<&[f32]>,
    atm: PressureAbs,
    cs: &[CompressorSpec],
) -> PressureFigures {
    // One sorted copy in the logged SI values (f32, unstable sort: the frame's own precision),
    // then bar(g) per figure: the conversion is linear, so percentiles commute with it.
    let mut sorted: Vec<f32> =
        pressure.map_or_else(Vec::new, |p| p.iter().copied().filter(|x| x.is_finite()).collect());
    sorted.sort_unstable_by(f32::total_cmp);
    let bar_g = |pa: f64| PressureAbs(pa).bar_g(atm);
    let low_limit = crate::core::model::low_limit_bar_g(cs);
    let high = cs.iter().map(|c| c.rated_pressure_bar_g).reduce(f64::max);
    if sorted.is_empty() {
        PressureFigures {
            logged: false,
            mean_bar_g: None,
            min_bar_g: None,
            max_bar_g: None,
            p5_bar_g: None,
            p50_bar_g: None,
            p95_bar_g: None,
            std_dev_bar: None,
            uncertainty_bar: 0.0,
            low_limit_bar_g: low_limit,
            share_below_low_limit: None,
            highest_rated_bar_g: high,
            share_above_highest_rated: None,
        }
    } else {
        let len = sorted.len() as f64;
        let mean = sorted.iter().map(|&v| bar_g(v as f64)).sum::<f64>() / len;
        let var = sorted.iter().map(|&v| (bar_g(v as f64) - mean).powi(2)).sum::<f64>() / len;
        let below = low_limit.map(|l| sorted.partition_point(|&v| bar_g(v as f64) < l) as f64 / len);
        let above =
            high.map(|h| (sorted.len() - sorted.partition_point(|&v| bar_g(v as f64) <= h)) as f64 / len);
        // Linear interpolation commutes with the linear conversion to bar(g).
        let pct = |p: f64| bar_g(percentile(&sorted, p));
        PressureFigures {
            logged: true,
            mean_bar_g: Some(mean),
            min_bar_g: sorted.first().map(|&v| bar_g(v as f64)),
            max_bar_g: sorted.last().map(|&v| bar_g(v as f64)),
            p5_bar_g: Some(pct(0.05)),
            p50_bar_g: Some(pct(0.50)),
            p95_bar_g: Some(pct(0.95)),
            std_dev_bar: Some(var.sqrt()),
            uncertainty_bar: 0.0,
            low_limit_bar_g: low_limit,
            share_below_low_limit: below,
            highest_rated_bar_g: high,
            share_above_highest_rated: above,
        }
    }
}
