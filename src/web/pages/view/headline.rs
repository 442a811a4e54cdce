//! The report's headline figures (the cards above the tables): each a value in the reader's units
//! or "not enough data", with the note that says how it was read or why it is not given.

use super::*;

/// The headline figures above the measures.
pub(super) fn headline_figures(sm: &Summary, fmt: &Fmt, cur: &str) -> Vec<FigureView> {
    let (sys, base, leaks, heat) = (&sm.system, &sm.baseline, &sm.leaks, &sm.heat);
    let estimated = sys.estimated;
    let money = |v: f64| fmt.money(v, cur);
    let energy_note = match (base.annual_energy_kwh_low, base.annual_energy_kwh_high) {
        (Some(lo), Some(hi)) => format!(
            "range {} (meters ±{}, extrapolation to the year ±{}: {}); logged {}",
            span(&fmt.energy_kwh(lo), &fmt.energy_kwh(hi)),
            fmt.percent(base.meter_relative_uncertainty),
            fmt.percent(base.extrapolation_relative_uncertainty),
            base.extrapolation_rule,
            fmt.energy_kwh(sys.energy_kwh)
        ),
        _ => format!("{}; logged {}", withheld(sm, "baseline"), fmt.energy_kwh(sys.energy_kwh)),
    };
    let cost_note = match (base.annual_cost_low, base.annual_cost_high, base.annual_energy_cost) {
        (Some(lo), Some(hi), Some(e)) => format!(
            "range {}; energy {} + demand charge {}",
            span(&money(lo), &money(hi)),
            money(e),
            or_nd(base.annual_demand_charge, money)
        ),
        _ => withheld(sm, "baseline"),
    };
    vec![
        FigureView {
            label: "Annual energy of the compressors".into(),
            value: or_nd(base.annual_energy_kwh, |v| fmt.energy_kwh(v)),
            note: energy_note,
            estimated: false,
        },
        FigureView {
            label: "Annual cost of compressed air".into(),
            value: or_nd(base.annual_cost, money),
            note: cost_note,
            estimated: false,
        },
        FigureView {
            label: "System specific power".into(),
            value: or_nd(sys.specific_power_kw_per_m3_min, |v| fmt.specific_power(v)),
            note: match (&sys.specific_power_note, sys.specific_power_kw_per_m3_min) {
                (Some(why), None) if !has_withheld(sm, "system.specific_power") => why.clone(),
                (_, None) => withheld(sm, "system.specific_power"),
                (Some(why), Some(_)) => why.clone(),
                (None, Some(_)) => format!(
                    "range {}; the same machines at full load at the logged pressure {}: part-load \
                     penalty {} % (control loss, not wear)",
                    span(
                        &fmt.specific_power(nan(sys.specific_power_kw_per_m3_min_low)),
                        &fmt.specific_power(nan(sys.specific_power_kw_per_m3_min_high))
                    ),
                    fmt.specific_power(nan(sys.full_load_specific_power_at_pressure_kw_per_m3_min)),
                    num(nan(sys.part_load_penalty_percent), 1)
                ),
            },
            estimated,
        },
        FigureView {
            label: "Cost of air".into(),
            value: or_nd(base.cost_per_1000_m3, |v| fmt.air_cost(v, cur)),
            note: match base.cost_per_1000_m3 {
                Some(_) => format!("at {} per kWh", fmt.unit_price(base.electricity_price_per_kwh, cur)),
                None => withheld(sm, "baseline.cost_per_1000_m3"),
            },
            estimated,
        },
        FigureView {
            label: "Leaks, share of demand".into(),
            value: match (leaks.share_of_mean_demand, leaks.adopted_leak_flow_m3_min) {
                (Some(sh), Some(q)) => format!("{} ({})", fmt.percent(sh), fmt.flow_m3_min(q)),
                (None, Some(q)) => fmt.flow_m3_min(q),
                _ => NOT_ENOUGH_DATA.into(),
            },
            // The parts that exist, joined: no stray separator when one is missing.
            note: [
                leaks.band_description.clone().unwrap_or_default(),
                match (leaks.adopted_leak_flow_m3_min, leaks.share_of_mean_demand) {
                    (Some(_), None) => leak_share_missing(sm),
                    // Why there is no estimate, as the leaks table's note says it.
                    (None, _) => leaks.adopted_rule.clone(),
                    _ => String::new(),
                },
                leaks.annual_leak_cost.map_or_else(String::new, |c| {
                    format!(
                        "annual leak cost {}: all of the leaks' air at the trim machine's marginal \
                         specific power; the repair measure counts only what the trim would stop drawing",
                        money(c)
                    )
                }),
            ]
            .into_iter()
            .filter(|x| !x.is_empty())
            .collect::<Vec<_>>()
            .join("; "),
            estimated,
        },
        FigureView {
            label: "Marginal specific power (trim machine)".into(),
            // Read at the logged load on the trim's part-load curve: with the verdict insufficient
            // that load is not the plant's, and the rate prices nothing on the page.
            value: if marginal_shown(sm) {
                fmt.specific_power(leaks.marginal_kw_per_m3_min)
            } else {
                NOT_ENOUGH_DATA.into()
            },
            note: match &sm.part_load_model {
                Some(_) if sm.sufficiency.verdict == Verdict::Insufficient => {
                    "the logged data are not enough for annual figures (reasons above)".into()
                }
                Some(_) if has_withheld(sm, "leaks.marginal_kw_per_m3_min") => {
                    withheld(sm, "leaks.marginal_kw_per_m3_min")
                }
                Some(m) => part_load_note(m, fmt),
                None => String::new(),
            },
            estimated: false,
        },
        FigureView {
            label: "Heat discarded per year".into(),
            value: or_nd(heat.annual_heat_rejected_kwh, |v| fmt.energy_kwh(v)),
            note: match (heat.annual_recoverable_kwh, heat.annual_value) {
                (Some(r), Some(v)) => {
                    format!("recoverable {}; worth {} a year as displaced fuel", fmt.energy_kwh(r), money(v))
                }
                _ => withheld(sm, "heat"),
            },
            estimated: false,
        },
        FigureView {
            label: "Isothermal efficiency".into(),
            value: or_nd(sys.isothermal_efficiency, |v| fmt.percent(v)),
            note: if sys.isothermal_efficiency.is_some() {
                format!(
                    "range {}: the share of input power the ideal isothermal compression needs",
                    span(
                        &fmt.percent(nan(sys.isothermal_efficiency_low)),
                        &fmt.percent(nan(sys.isothermal_efficiency_high))
                    )
                )
            } else if has_withheld(sm, "system.isothermal_efficiency") {
                withheld(sm, "system.isothermal_efficiency")
            } else {
                isothermal_missing(sm)
            },
            estimated,
        },
    ]
}
