/*!
Production hours: the site's schedule if given; otherwise detected: a weekday-hour cell is production
when its mean flow is at least 35 % of the highest cell's mean (common practice; demand at night and at
weekends is mostly leaks).
*/

use crate::core::model::WeeklySchedule;

use super::calendar::{weekday_hour, Calendar, NO_CELL};
use super::figures::ProductionSource;
use super::stats::mean_where;

/// Share of the peak weekday-hour flow below which an hour is non-production (module doc).
pub const NON_PRODUCTION_SHARE_OF_PEAK: f64 = 0.35;

/// Which bins are production, by which rule, and the mean flow in and out of production.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Production {
    pub is_prod: Vec<bool>,
    pub source: ProductionSource,
    pub rule: String,
    pub share: f64,
    /// Mean flow in production bins, m³/min.
    pub q_prod: Option<f64>,
    /// Mean flow out of production, m³/min.
    pub q_nonprod: Option<f64>,
    /// Mean header pressure in and out of production, Pa absolute (`None`: no pressure logged there).
    pub p_prod: Option<f64>,
    pub p_nonprod: Option<f64>,
}

/// Production hours (module doc).
pub(super) fn production(
    schedule: Option<&WeeklySchedule>,
    cal: &Calendar,
    flow: Option<&[f32]>,
    total_power: Option<&[f32]>,
    pressure: Option<&[f32]>,
    n: usize,
) -> Production {
    let cells = &cal.cells;
    let (is_prod, source, rule): (Vec<bool>, ProductionSource, String) = match schedule {
        Some(s) => (
            cells.iter().map(|&c| c != NO_CELL && s.hours[c as usize / 24][c as usize % 24]).collect(),
            ProductionSource::Schedule,
            "the site's weekly production schedule".into(),
        ),
        None => {
            let basis = flow.or(total_power);
            let prof = basis.map(|b| weekday_hour(b, cells, 1.0)).unwrap_or_default();
            let peak = prof.iter().flatten().flatten().fold(0.0f64, |a, &b| a.max(b));
            let prod_cell: Vec<bool> = (0..168)
                .map(|c| {
                    prof.get(c / 24)
                        .and_then(|d| d[c % 24])
                        .is_none_or(|v| v >= NON_PRODUCTION_SHARE_OF_PEAK * peak)
                })
                .collect();
            (
                cells.iter().map(|&c| c == NO_CELL || prod_cell[c as usize]).collect(),
                ProductionSource::Detected,
                format!(
                    "a weekday-hour is production when its mean {} is at least {:.0} % of the highest weekday-hour mean",
                    if flow.is_some() { "flow" } else { "power" },
                    NON_PRODUCTION_SHARE_OF_PEAK * 100.0
                ),
            )
        }
    };
    let share = if n > 0 { is_prod.iter().filter(|&&b| b).count() as f64 / n as f64 } else { 0.0 };
    let q_prod = flow.and_then(|q| mean_where(q, |i| is_prod[i])).map(|q| q * 60.0);
    let q_nonprod = flow.and_then(|q| mean_where(q, |i| !is_prod[i])).map(|q| q * 60.0);
    let p_prod = pressure.and_then(|p| mean_where(p, |i| is_prod[i]));
    let p_nonprod = pressure.and_then(|p| mean_where(p, |i| !is_prod[i]));
    Production { is_prod, source, rule, share, q_prod, q_nonprod, p_prod, p_nonprod }
}
