/*!
Demand: the system's air and peaks, the flow duration curve and the weekday × hour profiles in the
site's local time.

- **Peak flow**: the highest mean over 1-minute windows (or one bin, if bins are longer); **peak
  power** for the demand charge: the highest 15-minute mean (utilities bill 15- or 30-minute demand;
  common practice).
- **Air and mean flow** integrate the metered flow over the time it was logged: a bin at a gap's edge
  counts for its covered share (`series::integrate_weighted`), as compressor energy does. With several
  meters summed the bins count whole (a sum has no one covered share).
*/

use crate::core::series::{integrate_weighted, Grid, Partial};

use super::calendar::{weekday_hour, Calendar};
use super::figures::{Demand, DurationPoint};
use super::production::Production;
use super::stats::{mean_where, peak_mean, Peak};

/// The system's delivered air and peaks over the log.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct FlowTotals {
    /// m³ free air.
    pub air_m3: f64,
    /// m³/min.
    pub mean_flow: f64,
    /// m³/min, over `peak_flow_window` s.
    pub peak_flow: f64,
    pub peak_flow_window: f64,
    /// kW, over `peak_kw_window` s (`None`: no window with every compressor's power).
    pub peak_kw: Option<f64>,
    pub peak_kw_window: f64,
}

/// Flow figures and peaks (module doc).
pub(super) fn flow_totals(
    grid: &Grid,
    flow: Option<&[f32]>,
    partial: &[Partial],
    total_power: Option<&[f32]>,
) -> FlowTotals {
    let flow_i = flow.map(|q| integrate_weighted(grid, q, partial));
    let air_m3 = flow_i.map_or(0.0, |i| i.total);
    let mean_flow = flow_i.map_or(0.0, |i| if i.mean.is_finite() { i.mean * 60.0 } else { 0.0 });
    let none = |window_s| Peak { mean: None, window_s };
    let flow_peak = flow.map_or(none(60.0), |q| peak_mean(grid, q, 60.0));
    let power_peak = total_power.map_or(none(900.0), |p| peak_mean(grid, p, 900.0));
    FlowTotals {
        air_m3,
        mean_flow,
        peak_flow: flow_peak.mean.unwrap_or(0.0) * 60.0,
        peak_flow_window: flow_peak.window_s,
        peak_kw: power_peak.mean.map(|w| w / 1000.0),
        peak_kw_window: power_peak.window_s,
    }
}

/// The demand figures. `timezone` is the one the profiles were made in (UTC if the site's was unknown).
pub(super) fn demand(
    cal: &Calendar,
    timezone: String,
    flow: Option<&[f32]>,
    flow_estimated: bool,
    total_power: Option<&[f32]>,
    production: &Production,
    peak_flow: f64,
) -> Demand {
    let cells = &cal.cells;
    let is_prod = &production.is_prod;
    let duration: Vec<DurationPoint> = flow.map_or_else(Vec::new, |q| {
        let mut v: Vec<f32> = q.iter().copied().filter(|x| x.is_finite()).collect();
        v.sort_unstable_by(|a, b| b.total_cmp(a));
        if v.is_empty() {
            return Vec::new();
        }
        (0..50)
            .map(|k| {
                let share = k as f64 / 49.0;
                let idx = ((share * (v.len() - 1) as f64).round() as usize).min(v.len() - 1);
                DurationPoint { share_of_time: share, flow_m3_min: v[idx] as f64 * 60.0 }
            })
            .collect()
    });
    Demand {
        estimated: flow_estimated,
        timezone,
        flow_duration_curve: duration,
        weekday_hour_mean_flow_m3_min: flow
            .map_or_else(|| vec![vec![None; 24]; 7], |q| weekday_hour(q, cells, 60.0)),
        weekday_hour_mean_power_kw: total_power
            .map_or_else(|| vec![vec![None; 24]; 7], |p| weekday_hour(p, cells, 1e-3)),
        production_source: production.source,
        production_rule: production.rule.clone(),
        production_share_of_time: production.share,
        production_mean_flow_m3_min: production.q_prod,
        non_production_mean_flow_m3_min: production.q_nonprod,
        production_mean_power_kw: total_power.and_then(|p| mean_where(p, |i| is_prod[i])).map(|x| x / 1000.0),
        non_production_mean_power_kw: total_power
            .and_then(|p| mean_where(p, |i| !is_prod[i]))
            .map(|x| x / 1000.0),
        peak_flow_m3_min: peak_flow,
    }
}
