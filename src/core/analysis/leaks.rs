/*!
Leaks: all estimates side by side; the adopted figure is the median of the field tests (when their
likely ranges do not all meet, [`disagreement`], the median still stands, as the middle test is
not moved by one test gone wrong, but the adopted range is widened to span the tests' ranges and
the figures say the tests disagree: repeat the tests that stand apart; tests that agree give the
widest test's band around the median, cut to the span of their ranges, so that it never reaches
below or above every test); without tests,
the flow in non-production hours read as leaks: its mean, less the purge and drain air on record
(`AuditInput::purge_and_drains_m3_min`, 0 until treatment records are kept: then an upper bound, as
any other fixed user is in it), corrected to the production pressure by p_production,abs /
p_non-production,abs (choked leak flow is proportional to absolute upstream pressure; the mean header
pressures in and out of production; not corrected when either is not logged, or when the
non-production pressure is below 1 / `leaks::critical_pressure_ratio()` = 1.893 × the atmosphere,
where leaks are no longer choked). Leak
energy is priced at the **marginal** specific power of the trim machine, not the plant's average (US
DOE compressed-air sourcebook, leaks fact sheet); the share of demand is banded by the same source's
benchmarks (`leaks::leak_share_band`).
*/

use crate::core::leaks::{critical_pressure_ratio, leak_share_band};
use crate::core::units::PressureAbs;

use super::figures::{LeakDisagreement, LeakEstimateFigure, LeakFigures, NonProductionLeak};
use super::stats::percentile;
use super::uncertainty::{band, default_relative_uncertainty, quad, Accuracy};
use super::LeakEstimate;
use crate::core::recommend::{flow, Part};

/// What the leak figures are computed from besides the estimates.
#[derive(Debug, Clone, Copy)]
pub(super) struct LeakContext<'a> {
    pub acc: &'a Accuracy,
    /// Mean system flow (`None`: no flow known, no share of it) and the flows in and out of
    /// production, m³/min.
    pub mean_flow: Option<f64>,
    pub q_prod: Option<f64>,
    pub q_nonprod: Option<f64>,
    /// Mean header pressure in and out of production, Pa absolute.
    pub p_prod: Option<f64>,
    pub p_nonprod: Option<f64>,
    pub atmosphere_pa: f64,
    /// Purge and drain air on record, m³/min (`AuditInput::purge_and_drains_m3_min`).
    pub purge_and_drains_m3_min: f64,
    pub production_share: f64,
    pub flow_estimated: bool,
    /// Relative uncertainty of the flow.
    pub u_flow: f64,
    pub marginal_kw_per_m3_min: f64,
    pub marginal_machine: Option<&'a str>,
    pub annual_running_hours: f64,
    pub electricity_price_per_kwh: f64,
}

/// The non-production flow read as leaks (module doc).
fn non_production_leak(x: &LeakContext) -> Option<NonProductionLeak> {
    let q = x.q_nonprod.filter(|_| x.production_share < 1.0)?;
    let purge = x.purge_and_drains_m3_min.max(0.0);
    let atm = PressureAbs(x.atmosphere_pa);
    let choked = 1.0 / critical_pressure_ratio();
    let ratio = match (x.p_prod, x.p_nonprod) {
        (Some(pp), Some(pn)) if pn >= choked * x.atmosphere_pa && pp > 0.0 => Some(pp / pn),
        _ => None,
    };
    let left = q - purge;
    Some(NonProductionLeak {
        mean_flow_m3_min: q,
        purge_and_drains_m3_min: purge,
        mean_pressure_bar_g: x.p_nonprod.map(|p| PressureAbs(p).bar_g(atm)),
        production_pressure_bar_g: x.p_prod.map(|p| PressureAbs(p).bar_g(atm)),
        pressure_corrected: ratio.is_some(),
        leak_flow_m3_min: (left > 0.0).then(|| left * ratio.unwrap_or(1.0)),
    })
}

/// An estimate's relative uncertainty: its own, else its method's default.
fn estimate_rel(e: &LeakEstimate, acc: &Accuracy) -> f64 {
    e.relative_uncertainty
        .filter(|r| r.is_finite() && *r >= 0.0)
        .unwrap_or_else(|| default_relative_uncertainty(&e.method, acc))
}

/// The likely ranges of the accepted tests, (test id, flow, low, high), m³/min: as evaluated, else
/// the flow ± its relative uncertainty.
fn test_ranges(leak_estimates: &[LeakEstimate], acc: &Accuracy) -> Vec<(i64, f64, f64, f64)> {
    leak_estimates
        .iter()
        .map(|e| {
            let (lo, hi) = likely_range(e, acc);
            (e.test_id, e.leak_flow_m3_min, lo, hi)
        })
        .collect()
}

/// One accepted test's likely range, m³/min: as evaluated when it is a range, else the flow ± its
/// relative uncertainty.
fn likely_range(e: &LeakEstimate, acc: &Accuracy) -> (f64, f64) {
    e.range_m3_min
        .filter(|(lo, hi)| lo.is_finite() && hi.is_finite() && lo <= hi)
        .unwrap_or_else(|| band(e.leak_flow_m3_min, estimate_rel(e, acc)))
}

/// Whether the accepted tests disagree beyond their stated ranges: no flow lies in every test's
/// likely range (the highest bottom above the lowest top). `None` with fewer than two tests.
pub fn disagreement(leak_estimates: &[LeakEstimate], acc: &Accuracy) -> Option<LeakDisagreement> {
    let r = test_ranges(leak_estimates, acc);
    let low = r.iter().min_by(|a, b| a.3.total_cmp(&b.3))?;
    let high = r.iter().max_by(|a, b| a.2.total_cmp(&b.2))?;
    (high.2 > low.3).then_some(LeakDisagreement {
        low_test_id: low.0,
        low_leak_flow_m3_min: low.1,
        low_range_high_m3_min: low.3,
        high_test_id: high.0,
        high_leak_flow_m3_min: high.1,
        high_range_low_m3_min: high.2,
    })
}

/// The summary's warning when the accepted tests disagree ([`disagreement`]), its flows as figures.
pub fn disagreement_warning(leak_estimates: &[LeakEstimate], acc: &Accuracy) -> Option<Vec<Part>> {
    let d = disagreement(leak_estimates, acc)?;
    Some(parts![
        format!(
            "the accepted field tests disagree beyond their stated ranges: test no. {} gives ",
            d.low_test_id
        ),
        flow(d.low_leak_flow_m3_min),
        " (likely at most ",
        flow(d.low_range_high_m3_min),
        format!("), test no. {} gives ", d.high_test_id),
        flow(d.high_leak_flow_m3_min),
        " (likely at least ",
        flow(d.high_range_low_m3_min),
        "); the leak adopted is still their median, with its range spanning theirs: repeat the tests that \
         stand apart, or remove the one found wrong"
    ])
}

/// Why there is no leak estimate, said from what is missing: no field test on record gives a leak
/// flow, and the flow out of production hours is not known, or there are no such hours, or it is
/// no more than the purge and drain air on record (`with_non_production`: that flow is known).
fn no_estimate(x: &LeakContext, with_non_production: bool) -> String {
    let logs = if with_non_production {
        "the mean flow out of production hours is no more than the purge and drain air on record"
    } else if x.mean_flow.is_some() && x.production_share >= 1.0 {
        "every time step analysed is a production hour, so no flow out of production hours is there to read \
         leaks from"
    } else {
        "no flow is known out of production hours to read leaks from"
    };
    format!("no leak estimate: no field test on record gives a leak flow, and {logs}; run a bleed-down or load/unload test")
}

/// The leak figures (module doc).
pub(super) fn leak_figures(leak_estimates: &[LeakEstimate], x: &LeakContext) -> LeakFigures {
    let (acc, q_prod, q_nonprod, u_flow) = (x.acc, x.q_prod, x.q_nonprod, x.u_flow);
    // A share of demand needs a mean demand above nothing.
    let mean_flow = x.mean_flow.filter(|&q| q > 0.0);
    let mut estimates: Vec<LeakEstimateFigure> = leak_estimates
        .iter()
        .map(|e| {
            let (lo, hi) = likely_range(e, acc);
            LeakEstimateFigure {
                test_id: Some(e.test_id),
                method: e.method.clone(),
                leak_flow_m3_min: e.leak_flow_m3_min,
                leak_flow_m3_min_low: lo,
                leak_flow_m3_min_high: hi,
                share_of_mean_demand: mean_flow.map(|q| e.leak_flow_m3_min / q),
                automatic: false,
                estimated: false,
            }
        })
        .collect();
    let non_production = non_production_leak(x);
    let q_leak_np = non_production.as_ref().and_then(|n| n.leak_flow_m3_min);
    let mut tests: Vec<f64> = leak_estimates.iter().map(|e| e.leak_flow_m3_min).collect();
    tests.sort_by(f64::total_cmp);
    let (adopted, adopted_rel, adopted_rule, adopted_range) = if !tests.is_empty() {
        let med = percentile(&tests, 0.5);
        let mut rel = leak_estimates.iter().map(|e| estimate_rel(e, acc)).fold(0.0, f64::max);
        let ranges = test_ranges(leak_estimates, acc);
        // Tests that disagree: the adopted range spans every test's range (module doc).
        if disagreement(leak_estimates, acc).is_some() && med > 0.0 {
            for (_, _, lo, hi) in &ranges {
                rel = rel.max(1.0 - lo / med).max(hi / med - 1.0);
            }
        }
        // Never beyond what the tests themselves allow: the widest test's band around the median
        // is cut to the span of the tests' ranges (a median of 77.2 cfm ± 68 % reached 24.3 cfm,
        // below both tests' bottoms, 55.5 and 74.8 cfm). The range's wider side sets the relative
        // uncertainty carried to the share and the cost, whose bottoms stop at zero.
        let env_lo = ranges.iter().map(|t| t.2).fold(f64::INFINITY, f64::min);
        let env_hi = ranges.iter().map(|t| t.3).fold(f64::NEG_INFINITY, f64::max);
        let (lo, hi) = ((med * (1.0 - rel)).max(env_lo), (med * (1.0 + rel)).min(env_hi));
        if med > 0.0 {
            rel = (1.0 - lo / med).max(hi / med - 1.0).max(0.0);
        }
        (Some(med), rel, "median of the accepted field tests".to_string(), Some((lo, hi)))
    } else if let Some(q) = q_leak_np {
        let np = non_production.as_ref().expect("a leak flow comes with its record");
        let purge = if np.purge_and_drains_m3_min > 0.0 {
            "less the purge and drain air on record"
        } else {
            "with no purge or drain air on record (an upper bound: fixed users are in it)"
        };
        let corrected = if np.pressure_corrected {
            "corrected to the production pressure (choked leak flow ∝ absolute pressure)"
        } else {
            "not corrected to the production pressure (no pressure logged in and out of production, \
             or too low out of it for choked leaks)"
        };
        let text = format!("mean flow in non-production hours, {purge}, {corrected}");
        (Some(q), u_flow, text, Some(band(q, u_flow)))
    } else {
        (None, 0.0, no_estimate(x, non_production.is_some()), None)
    };
    if let Some(q) = q_leak_np {
        let (lo, hi) = band(q, u_flow);
        estimates.push(LeakEstimateFigure {
            test_id: None,
            method: "non_production_flow".into(),
            leak_flow_m3_min: q,
            leak_flow_m3_min_low: lo,
            leak_flow_m3_min_high: hi,
            share_of_mean_demand: mean_flow.map(|m| q / m),
            automatic: true,
            estimated: x.flow_estimated,
        });
    }
    let share = adopted.zip(mean_flow).map(|(q, m)| q / m);
    let u_share = quad(&[adopted_rel, u_flow]);
    let leak_kwh = adopted.map(|q| q * x.marginal_kw_per_m3_min * x.annual_running_hours);
    let u_leak_cost = quad(&[adopted_rel, 0.05]);
    let leak_band = share.map(leak_share_band);
    let price = x.electricity_price_per_kwh;
    LeakFigures {
        estimates,
        non_production,
        adopted_leak_flow_m3_min: adopted,
        adopted_leak_flow_m3_min_low: adopted_range.map(|r| r.0),
        adopted_leak_flow_m3_min_high: adopted_range.map(|r| r.1),
        adopted_rule,
        disagreement: disagreement(leak_estimates, acc),
        share_of_mean_demand: share,
        share_of_mean_demand_low: share.map(|s| s * (1.0 - u_share).max(0.0)),
        share_of_mean_demand_high: share.map(|s| s * (1.0 + u_share)),
        share_of_production_demand: adopted.zip(q_prod).filter(|(_, q)| *q > 0.0).map(|(l, q)| l / q),
        share_of_non_production_demand: adopted.zip(q_nonprod).filter(|(_, q)| *q > 0.0).map(|(l, q)| l / q),
        band: leak_band,
        band_description: leak_band.map(|b| b.describe().to_string()),
        target_share: 0.10,
        marginal_machine: x.marginal_machine.map(str::to_string),
        marginal_kw_per_m3_min: x.marginal_kw_per_m3_min,
        annual_leak_energy_kwh: leak_kwh,
        annual_leak_cost: leak_kwh.map(|k| k * price),
        annual_leak_cost_low: leak_kwh.map(|k| k * price * (1.0 - u_leak_cost).max(0.0)),
        annual_leak_cost_high: leak_kwh.map(|k| k * price * (1.0 + u_leak_cost)),
    }
}
