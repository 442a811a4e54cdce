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
    /// m³ free air (`None`: no bin of the period holds a flow, logged or read from the states).
    pub air_m3: Option<f64>,
    /// m³/min (`None`: as `air_m3`).
    pub mean_flow: Option<f64>,
    /// m³/min, over `peak_flow_window` s (`None`: as `air_m3`).
    pub peak_flow: Option<f64>,
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
    // A flow is known where some bin holds one: an integral over no logged bin is no figure (a
    // window on a day logged by an energy counter alone read 0.000 m³/min).
    let flow_i = flow.map(|q| integrate_weighted(grid, q, partial)).filter(|i| i.mean.is_finite());
    let air_m3 = flow_i.map(|i| i.total);
    let mean_flow = flow_i.map(|i| i.mean * 60.0);
    let none = |window_s| Peak { mean: None, window_s };
    let flow_peak = flow.map_or(none(60.0), |q| peak_mean(grid, q, 60.0));
    let power_peak = total_power.map_or(none(900.0), |p| peak_mean(grid, p, 900.0));
    FlowTotals {
        air_m3,
        mean_flow,
        peak_flow: flow_peak.mean.filter(|_| mean_flow.is_some()).map(|q| q * 60.0),
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
    peak_flow: Option<f64>,
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

/// Why no flow can be known in the period, if none can (`DataFigures::totals`): no flow logged in
/// it and none read from the compressors' states.
pub(super) fn flow_unknown(d: &super::DataFigures) -> Option<String> {
    if d.totals.mean_flow.is_some() {
        return None;
    }
    Some(if !d.flow_estimated {
        "the flow meters on record logged no reading in the period analysed, and with a flow meter on \
         record the air is not read from the compressors' states"
            .into()
    } else if d.power_from_counter.iter().any(|&c| c) {
        let tags: Vec<&str> = d
            .spec
            .compressors
            .iter()
            .zip(&d.power_from_counter)
            .filter(|(_, &c)| c)
            .map(|(c, _)| c.tag.as_str())
            .collect();
        let whose = match tags.as_slice() {
            [one] => format!("{one}'s power was logged only as an energy counter"),
            _ => format!("the power of {} was logged only as energy counters", tags.join(", ")),
        };
        format!(
            "no flow meter was logged, and the air cannot be read from the compressors' states: {whose}, \
             whose readings are means over each interval and do not show when a machine loaded or unloaded"
        )
    } else if d.power_logged.iter().any(|&p| p) {
        "no flow meter was logged, and the air read from the compressors' states needs a state for every \
         compressor with a power log in the same time step, which no time step of the period analysed has"
            .into()
    } else {
        "no flow meter was logged, and no compressor's power from whose states the air could be read".into()
    })
}
