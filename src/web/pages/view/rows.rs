//! The pressure and leak tables of the report and the findings, and the notes that say what their
//! figures hold: the readings kept (implausible ones too) and why a share of demand is not given.

use super::{nan, range, window_words, withheld, LeakRow, NOT_ENOUGH_DATA};
use crate::core::analysis::Summary;
use crate::core::display::{span, Fmt};
use crate::core::units::PressureAbs;

/// The leak flow adopted, with its likely range, and the rule it was adopted by ("the median of
/// the accepted field tests"), in the reader's units; the rule alone when no flow is adopted.
fn adopted_leak(sm: &Summary, fmt: &Fmt) -> String {
    let l = &sm.leaks;
    let Some(q) = l.adopted_leak_flow_m3_min else { return l.adopted_rule.clone() };
    let likely = match (l.adopted_leak_flow_m3_min_low, l.adopted_leak_flow_m3_min_high) {
        (Some(lo), Some(hi)) => format!(" (likely {})", span(&fmt.flow_m3_min(lo), &fmt.flow_m3_min(hi))),
        _ => String::new(),
    };
    let disagree = l.disagreement.as_ref().map_or(String::new(), |d| {
        format!(
            "; the tests disagree beyond their stated ranges (test no. {} gives {}, at most {}; test no. {} \
             gives {}, at least {}), so the median stands with its range spanning theirs: repeat the tests \
             that stand apart, or remove the one found wrong",
            d.low_test_id,
            fmt.flow_m3_min(d.low_leak_flow_m3_min),
            fmt.flow_m3_min(d.low_range_high_m3_min),
            d.high_test_id,
            fmt.flow_m3_min(d.high_leak_flow_m3_min),
            fmt.flow_m3_min(d.high_range_low_m3_min)
        )
    });
    format!("Leak flow adopted: {}{likely}, the {}{disagree}", fmt.flow_m3_min(q), l.adopted_rule)
}

/// How the leak figure was adopted, and the non-production flow's corrections in the reader's units.
pub(super) fn leak_note(sm: &Summary, fmt: &Fmt) -> String {
    let l = &sm.leaks;
    let Some(np) = &l.non_production else { return adopted_leak(sm, fmt) };
    let pressure = match (np.mean_pressure_bar_g, np.production_pressure_bar_g, np.pressure_corrected) {
        (Some(a), Some(b), true) => format!(
            ", scaled from {} out of production to {} in it (choked leak flow ∝ absolute pressure)",
            fmt.pressure_bar_g(a),
            fmt.pressure_bar_g(b)
        ),
        _ => ", not corrected for pressure".to_string(),
    };
    format!(
        "{}. Non-production flow: {} logged, less {} of purge and drains on record{}: {} of leaks.",
        adopted_leak(sm, fmt),
        fmt.flow_m3_min(np.mean_flow_m3_min),
        fmt.flow_m3_min(np.purge_and_drains_m3_min),
        pressure,
        np.leak_flow_m3_min.map_or_else(|| "none left".to_string(), |q| fmt.flow_m3_min(q))
    )
}

/// Why a leak's share of demand is not given: the reason it was withheld, or no mean flow.
pub(super) fn leak_share_missing(sm: &Summary) -> String {
    let w = &sm.sufficiency.withheld;
    if w.iter().any(|x| x.figure.starts_with("leaks.") && x.figure.ends_with("share_of_mean_demand")) {
        let prefix = if w.iter().any(|x| x.figure == "leaks.share_of_mean_demand") {
            "leaks.share_of_mean_demand"
        } else {
            "leaks.estimates[].share_of_mean_demand"
        };
        format!("share of demand: {NOT_ENOUGH_DATA} ({})", withheld(sm, prefix))
    } else if w.iter().any(|x| x.figure == "system.mean_flow_m3_min") {
        format!("share of demand: {NOT_ENOUGH_DATA} ({})", withheld(sm, "system.mean_flow_m3_min"))
    } else {
        format!("share of demand: {NOT_ENOUGH_DATA} (no mean flow was logged to compare with)")
    }
}

/// The line under the leak table when a share is not given: its reason, once for the table.
pub(super) fn leak_share_note(sm: &Summary) -> String {
    if sm.leaks.estimates.iter().all(|e| e.share_of_mean_demand.is_some()) {
        return String::new();
    }
    let s = leak_share_missing(sm);
    let mut c = s.chars();
    c.next().map_or(String::new(), |f| f.to_uppercase().chain(c).collect::<String>() + ".")
}

pub(super) fn leak_rows(sm: &Summary, fmt: &Fmt) -> Vec<LeakRow> {
    sm.leaks
        .estimates
        .iter()
        .map(|e| LeakRow {
            method: super::super::words::leak_estimate_label(e),
            flow: range(
                |x| fmt.flow_m3_min(x),
                e.leak_flow_m3_min,
                e.leak_flow_m3_min_low,
                e.leak_flow_m3_min_high,
            ),
            share: e.share_of_mean_demand.map_or_else(|| NOT_ENOUGH_DATA.to_string(), |x| fmt.percent(x)),
            automatic: e.automatic,
        })
        .collect()
}

/// The pressure table. The least and greatest of the `step_s` means are the figures' extremes;
/// `extremes_pa` (the header channel's least and greatest reading, Pa absolute) is what the chart's
/// band reaches: both are printed, named for what they are, so the table never contradicts the chart.
pub(super) fn pressure_rows(
    sm: &Summary,
    fmt: &Fmt,
    extremes_pa: Option<(f64, f64)>,
) -> Vec<(String, String)> {
    let p = &sm.pressure;
    let bar_g = |v: Option<f64>| fmt.pressure_bar_g(nan(v));
    if p.mean_bar_g.is_none() {
        // No pressure logged: no transmitter to quote an uncertainty for, no time below the limit.
        return vec![
            ("Header pressure".into(), "not logged (no pressure column was read)".into()),
            ("Low limit".into(), bar_g(p.low_limit_bar_g)),
        ];
    }
    let mut rows: Vec<(String, String)> = vec![("Mean".into(), bar_g(p.mean_bar_g))];
    if let Some((lo, hi)) = extremes_pa {
        rows.push(("Least / greatest reading".into(), {
            let g = |pa: f64| fmt.pressure_bar_g(PressureAbs(pa).bar_g(fmt.atmosphere));
            format!("{} / {}", g(lo), g(hi))
        }));
    }
    // A log that is not this plant's header: its bands and its time below the plant's limit are
    // no figures of this plant.
    let credible = sm.sufficiency.pressure_credible != Some(false);
    let nd = || format!("{NOT_ENOUGH_DATA} ({})", withheld(sm, "pressure.share_below_low_limit"));
    rows.extend([
        (
            format!("Least / greatest {} mean", window_words(sm.period.step_s)),
            format!("{} / {}", bar_g(p.min_bar_g), bar_g(p.max_bar_g)),
        ),
        (
            "5 % / 50 % / 95 % of time below".into(),
            if credible {
                format!("{} / {} / {}", bar_g(p.p5_bar_g), bar_g(p.p50_bar_g), bar_g(p.p95_bar_g))
            } else {
                nd()
            },
        ),
        ("Uncertainty of the transmitter".into(), format!("± {}", fmt.pressure_delta_bar(p.uncertainty_bar))),
        (
            "Time below the low limit".into(),
            match p.share_below_low_limit {
                Some(sh) => format!("{} (limit {})", fmt.percent(sh), bar_g(p.low_limit_bar_g)),
                None if !credible => nd(),
                None => format!("{} (limit {})", fmt.percent(f64::NAN), bar_g(p.low_limit_bar_g)),
            },
        ),
    ]);
    rows
}

/// What the pressure figures and charts hold when the log has readings no compressed-air line runs
/// at (below `MIN_CREDIBLE_BAR_G`, which the data-quality report flags): they are kept in both,
/// never dropped from one and not the other, and the page says so (empty otherwise).
pub(super) fn pressure_note(sm: &Summary, fmt: &Fmt, extremes_pa: Option<(f64, f64)>) -> String {
    let floor = crate::core::analysis::sufficiency::MIN_CREDIBLE_BAR_G;
    let low = extremes_pa.map(|(lo, _)| PressureAbs(lo).bar_g(fmt.atmosphere));
    if !low.is_some_and(|l| l < floor) {
        return String::new();
    }
    let verdict = if sm.sufficiency.pressure_credible == Some(false) {
        " This pressure log is not taken as the plant's header: it prices no pressure measure."
    } else {
        ""
    };
    format!(
        "The log holds readings below {} (a compressed-air line never runs below the atmosphere), flagged \
         in the data-quality report. They are kept, in these figures and in the charts alike: the \
         chart's band reaches the least reading, the means include them.{verdict}",
        fmt.pressure_bar_g(floor)
    )
}
