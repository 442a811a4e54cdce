/*!
Measures on the treatment and end-use records: dew-point control of a purging dryer, zero-loss
drains, inappropriate uses replaced, filter elements changed, a cycling refrigerated dryer. Each is a
demand cut priced on the plant it is given, less any electricity its alternative draws.
*/

use super::*;

/// A measure on the treatment or end-use records: `dq` m³/min less demand (in production only
/// when `production_only`), less `alt_kw` of new electricity over the production hours.
struct TreatmentStep {
    kind: MeasureKind,
    dq: f64,
    production_only: bool,
    alt_kw: f64,
    items: usize,
    title: Vec<Part>,
    description: Vec<Part>,
    formula: &'static str,
    source: &'static str,
    method: &'static str,
}

fn treatment_measure(r: &RecommendInput, p: &Plant, t: TreatmentStep) -> Option<(Draft, Plant)> {
    if t.dq <= 0.0 || t.items == 0 {
        return None;
    }
    let per = r.marginal_kw_per_m3_min * p.power_factor;
    let mut cut = p.demand_cut(r, t.dq);
    if t.production_only {
        cut.1 = 0.0;
    }
    let production_hours = (p.demand_hours - p.night_hours.min(p.demand_hours)).max(0.0);
    let alt_kwh = t.alt_kw.max(0.0) * production_hours;
    let air_kwh = cut.0 + cut.1;
    let kwh = air_kwh - alt_kwh;
    if kwh <= 0.0 {
        return None;
    }
    let (lo, hi) = demand_rel(r, false);
    let (low_kwh, high_kwh) = band(air_kwh, lo, hi);
    let mut next = p.clone();
    next.take_demand(r.trim, cut);
    let mut basis = vec![
        text!["air given back ", flow(t.dq)],
        text!["marginal specific power ", specific(per)],
        text![format!(
            "hours priced {:.0} h/yr{}",
            Grouped(if t.production_only { production_hours } else { p.demand_hours }),
            if t.production_only { " (production)" } else { "" }
        )],
    ];
    if alt_kwh > 0.0 {
        basis.push(text![format!("the electric alternatives' own use {:.0} kWh/yr", Grouped(alt_kwh))]);
    }
    let draft = Draft {
        kind: t.kind,
        title: t.title,
        description: t.description,
        saving_kwh: kwh,
        low_kwh: (low_kwh - alt_kwh).max(0.0),
        high_kwh: (high_kwh - alt_kwh).min(p.trim_above_idle_kwh.max(kwh)),
        acts_on_kwh: p.trim_above_idle_kwh,
        money: None,
        cost_ctx: CostContext { items: t.items as f64, ..Default::default() },
        basis,
        formula: t.formula,
        source: t.source,
        method: t.method,
        caution: Some(safety::TREATMENT_MEASURE_CAUTION.to_string()),
        scenario_id: None,
    };
    Some((draft, next))
}

pub(in crate::core::recommend) fn dew_point_control(r: &RecommendInput, p: &Plant) -> Option<(Draft, Plant)> {
    let c = &r.treatment;
    treatment_measure(
        r,
        p,
        TreatmentStep {
            kind: MeasureKind::DewPointControl,
            dq: c.dew_point_m3_min,
            production_only: false,
            alt_kw: 0.0,
            items: c.dew_point_dryers,
            title: text!["Switch desiccant dryers by dew point: about ", flow(c.dew_point_m3_min), " less purge"],
            description: text![format!(
                "Let the {} on a fixed cycle switch towers by the outlet dew point, so that \
                 the purge follows the moisture load instead of running at its full share all day.",
                counted(c.dew_point_dryers, "desiccant dryer", "desiccant dryers")
            )],
            formula: "saving = (purge on a fixed cycle - purge × load) × marginal specific power × hours",
            source: "purge of heatless dryers 15-20 % of rated flow: US DOE compressed-air sourcebook; purge following the load: common practice",
            method: "purge air not made, at the trim's part-load slope over the running hours; range from the slope and the annual hours",
        },
    )
}

pub(in crate::core::recommend) fn zero_loss_drains(r: &RecommendInput, p: &Plant) -> Option<(Draft, Plant)> {
    let c = &r.treatment;
    treatment_measure(
        r,
        p,
        TreatmentStep {
            kind: MeasureKind::ZeroLossDrains,
            dq: c.drains_m3_min,
            production_only: false,
            alt_kw: 0.0,
            items: c.lossy_drains,
            title: text!["Fit zero-loss drains: about ", flow(c.drains_m3_min), " less air blown"],
            description: text![format!(
                "Replace the {} timer or open drain(s) with level-sensing drains that open only when there \
                 is condensate.",
                c.lossy_drains
            )],
            formula: "saving = orifice flow × open time / interval × marginal specific power × hours",
            source: "orifice discharge of air (compressible nozzle); timer drains blow whether or not there is condensate: common practice",
            method: "drain air not made, at the trim's part-load slope over the running hours; range from the slope and the annual hours",
        },
    )
}

pub(in crate::core::recommend) fn replace_inappropriate_uses(
    r: &RecommendInput,
    p: &Plant,
) -> Option<(Draft, Plant)> {
    let c = &r.treatment;
    treatment_measure(
        r,
        p,
        TreatmentStep {
            kind: MeasureKind::ReplaceInappropriateUses,
            dq: c.inappropriate_m3_min,
            production_only: true,
            alt_kw: c.alternative_kw,
            items: c.inappropriate_uses,
            title: text!["Use electric drives, blowers or fans where air is used inappropriately: about ", flow(c.inappropriate_m3_min)],
            description: text![format!(
                "Give the {} use line(s) recorded as open blowing, cooling, air motors, diaphragm pumps or \
                 sparging an electric alternative; the saving is the air's energy less the alternative's own.",
                c.inappropriate_uses
            )],
            formula: "saving = air of the uses × marginal specific power × production hours - alternative kW × production hours",
            source: "inappropriate uses as the US DOE compressed-air sourcebook names them; alternative's kW as recorded",
            method: "air not made in production at the trim's part-load slope, less the alternatives' electricity; range from the slope and the annual hours",
        },
    )
}

pub(in crate::core::recommend) fn filter_change(r: &RecommendInput, p: &Plant) -> Option<(Draft, Plant)> {
    let c = &r.treatment;
    let step = c.filter_excess_bar;
    if step.is_nan() || step <= 0.0 || c.filters_to_change == 0 {
        return None;
    }
    // The header keeps its pressure; the discharge comes down by the excess drops.
    let p_header = p.pressure_bar_g.unwrap_or(c.line_pressure_bar_g);
    let mut next = p.clone();
    let (chosen, other, delivering) = scale_loaded(r, p, &mut next, p_header + step, p_header);
    let (lo_rule, hi_rule) = if chosen > 0.0 {
        ((chosen - other).max(0.0) / chosen, (other - chosen).max(0.0) / chosen)
    } else {
        (0.0, 0.0)
    };
    let (lo, hi) = (quad(&[lo_rule, r.annual_energy_rel_low]), quad(&[hi_rule, r.annual_energy_rel_high]));
    let (low_kwh, high_kwh) = band(chosen, lo, hi);
    let rule = match r.costs.options.pressure_rule {
        PressureRule::OnePercentPerTwoPsi => "1 % of loaded input per 2 psi",
        PressureRule::IsentropicWork => "the ratio of isentropic work",
    };
    let draft = Draft {
        kind: MeasureKind::FilterChange,
        title: text![
            format!("Change {} filter element(s): the discharge pressure comes down by ", c.filters_to_change),
            pressure_drop(step)
        ],
        description: text![
            format!(
                "{} filter(s) drop more than ",
                c.filters_to_change
            ),
            pressure_drop(crate::core::treatment::FILTER_CHANGE_ABOVE_BAR),
            " above their clean drop at the mean flow; with new elements the compressors' set points can come down by the excess while the header keeps ",
            bar_g(p_header),
            ". Change elements by their differential pressure, not only by the calendar."
        ],
        saving_kwh: chosen,
        low_kwh,
        high_kwh,
        acts_on_kwh: delivering,
        money: None,
        cost_ctx: CostContext {
            items: c.filters_without_cost as f64,
            recorded_cost: c.filter_recorded_cost,
            ..Default::default()
        },
        basis: vec![
            text!["excess drop over the clean drop at the mean flow (drop ∝ flow²) ", pressure_drop(step)],
            text!["header pressure ", bar_g(p_header), ", discharge ", bar_g(p_header + step), " before the change"],
            text![format!(
                "loaded (delivering) energy {:.0} kWh/yr, scaled by {rule}: {:.0} kWh/yr (the other rule {:.0})",
                Grouped(delivering),
                Grouped(chosen),
                Grouped(other)
            )],
        ],
        formula: "saving = Σ loaded energy × (1 % per 2 psi, or the isentropic-work ratio) for Δp = Σ (measured drop - clean drop × (Q / Q_rated)²) over the filters above 0.1 bar",
        source: "US DOE compressed-air sourcebook (1 % of input per 2 psi; pressure drop); drop ∝ flow² and the 0.1 bar threshold: common practice",
        method: "loaded energy scaled by the pressure rule for the excess drop, header pressure unchanged; range from the other rule and the annual hours (US DOE sourcebook; isentropic work)",
        caution: Some(safety::TREATMENT_MEASURE_CAUTION.to_string()),
        scenario_id: None,
    };
    Some((draft, next))
}

pub(in crate::core::recommend) fn cycling_refrigerated_dryer(
    r: &RecommendInput,
    p: &Plant,
) -> Option<(Draft, Plant)> {
    let c = &r.treatment;
    let kw = c.cycling_saving_kw;
    if kw.is_nan() || kw <= 0.0 || c.non_cycling_dryers == 0 {
        return None;
    }
    let hours = r.annual_running_hours.max(0.0);
    let kwh = kw * hours;
    let (low_kwh, high_kwh) = band(kwh, r.annual_energy_rel_low, r.annual_energy_rel_high);
    let draft = Draft {
        kind: MeasureKind::CyclingRefrigeratedDryer,
        title: text![format!(
            "Replace {} with {}: about {kw:.2} kW less",
            counted(
                c.non_cycling_dryers,
                "non-cycling refrigerated dryer",
                "non-cycling refrigerated dryers"
            ),
            if c.non_cycling_dryers == 1 {
                "a cycling or variable unit"
            } else {
                "cycling or variable units"
            }
        )],
        description: text![format!(
            "{} draw{} {:.2} kW whatever the air through {}; a cycling or variable unit follows the load \
             down to about {:.0} % of its kW.",
            if c.non_cycling_dryers == 1 { "The non-cycling dryer" } else { "The non-cycling dryers" },
            if c.non_cycling_dryers == 1 { "s its full" } else { " their full" },
            c.non_cycling_kw,
            if c.non_cycling_dryers == 1 { "it" } else { "them" },
            crate::core::treatment::CYCLING_DRYER_FLOOR * 100.0
        )],
        saving_kwh: kwh,
        low_kwh,
        high_kwh,
        acts_on_kwh: c.non_cycling_kw * hours,
        money: None,
        cost_ctx: CostContext { rated_m3_min: c.non_cycling_rated_m3_min, ..Default::default() },
        basis: vec![
            text![format!("dryer input {:.2} kW, saved {kw:.2} kW at the load through it", c.non_cycling_kw)],
            text![format!(
                "floor {:.2} of the kW at light load",
                crate::core::treatment::CYCLING_DRYER_FLOOR
            )],
            text![format!("hours priced {:.0} h/yr (the compressors' running hours)", Grouped(hours))],
        ],
        formula: "saving = dryer kW × (1 - max(mean flow through it / rated flow, 0.2)) × running hours",
        source:
            "data-sheet kW; cycling units following the load, and the 0.2 floor: common practice, from memory",
        method: "the dryer's own electricity at its load against full input; range from the annual hours",
        caution: Some(safety::TREATMENT_MEASURE_CAUTION.to_string()),
        scenario_id: None,
    };
    Some((draft, p.clone()))
}
