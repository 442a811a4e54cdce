/*!
The measures one by one: each is drafted from the audit's figures, then costed, checked for a positive
saving and given its payback.
*/

use crate::core::model::Control;
use crate::core::safety;

use super::text::{bar_g, flow, specific, Part};
use super::{
    cost, CostContext, CostSource, MeasureKind, RecommendInput, Recommendation, Text, BAR_PER_2_PSI,
    DEFAULT_PRESSURE_REDUCTION_BAR, REPLACE_ABOVE_DATASHEET,
};

/// Writes a measure's parts as words (in SI for the JSON's strings).
pub type Words<'a> = dyn Fn(&[Part]) -> String + 'a;

/// A measure before its cost and payback are worked out.
struct Draft {
    kind: MeasureKind,
    title: Vec<Part>,
    description: Vec<Part>,
    saving_kwh: f64,
    /// The annual energy the measure acts on, kWh: the saving never exceeds it (module doc of
    /// `recommend`).
    acts_on_kwh: f64,
    /// The money saved when it is not electricity at the site's price (recovered heat).
    money: Option<f64>,
    cost_ctx: CostContext,
    basis: Vec<Vec<Part>>,
    formula: &'static str,
    source: &'static str,
    caution: Option<String>,
}

fn finish_scenario(r: &RecommendInput, si: &Words<'_>, d: Draft, id: i64) -> Option<Recommendation> {
    finish(r, si, d).map(|x| Recommendation { scenario_id: Some(id), ..x })
}

fn finish(r: &RecommendInput, si: &Words<'_>, d: Draft) -> Option<Recommendation> {
    let Draft {
        kind,
        title,
        description,
        saving_kwh,
        acts_on_kwh,
        money,
        cost_ctx,
        basis,
        formula,
        source,
        caution,
    } = d;
    let saving_kwh = saving_kwh.min(acts_on_kwh.max(0.0));
    let electricity = money.is_none();
    let annual_cost_saving = money.unwrap_or(saving_kwh * r.site.electricity_price_per_kwh);
    if !(saving_kwh > 0.0 && annual_cost_saving > 0.0) {
        return None;
    }
    let implementation_cost = cost(kind, &cost_ctx, r.costs);
    let co2_kg = if electricity { r.site.grid_co2_kg_per_kwh } else { r.site.fuel_co2_kg_per_kwh };
    Some(Recommendation {
        kind,
        title: si(&title),
        description: si(&description),
        annual_energy_saving_kwh: saving_kwh,
        annual_cost_saving,
        implementation_cost,
        simple_payback_years: Some(implementation_cost / annual_cost_saving),
        implementation_cost_source: CostSource::DefaultEstimate,
        annual_co2_saving_t: saving_kwh * co2_kg / 1000.0,
        electricity,
        basis: basis.iter().map(|b| si(b)).collect(),
        text: Text { title, description, basis },
        formula: formula.into(),
        source: source.into(),
        caution,
        scenario_id: None,
    })
}

/// The measures worth proposing, ranked by simple payback (shortest first). `si` writes a measure's
/// parts in SI units (`core::display::render_parts` with an SI `Fmt`): the `title`, `description` and
/// `basis` of each [`Recommendation`] (API.md).
pub fn recommend(r: &RecommendInput, si: &Words<'_>) -> Vec<Recommendation> {
    let mut out = Vec::new();
    let opts = &r.costs.options;
    let trim_cap = r.trim.and_then(|t| r.machines.get(t)).map(|m| m.annual_above_idle_kwh);
    let trim_tag = r.trim.map(|t| r.compressors[t].tag.clone()).unwrap_or_default();
    let capped = |kwh: f64| trim_cap.map_or(kwh, |c| kwh.min(c.max(0.0)));
    // A demand cut acts on the trim's energy above idle, or on the whole plant without a trim.
    let demand_acts_on = trim_cap.unwrap_or(r.annual_energy_kwh).min(r.annual_energy_kwh);
    let has_vsd = r.compressors.iter().any(|c| c.control == Control::VariableSpeed);

    // Leak repair: demand removed, priced at the trim's part-load curve.
    if let Some(leak) = r.leak_flow_m3_min.filter(|q| *q > 0.0) {
        let dq = opts.leak_repair_fraction.clamp(0.0, 1.0) * leak;
        let kwh = capped(dq * r.marginal_kw_per_m3_min * r.annual_running_hours);
        out.extend(finish(r, si, Draft { kind: MeasureKind::RepairLeaks, title: text!["Repair leaks: about ", flow(dq)], description: text![
                format!("Find and repair {:.0} % of the estimated ", opts.leak_repair_fraction * 100.0),
                flow(leak),
                format!(" of leaks; the trim compressor {trim_tag} then delivers less air."),
            ], saving_kwh: kwh, acts_on_kwh: demand_acts_on, money: None, cost_ctx: CostContext { leak_repaired_m3_min: dq, ..Default::default() }, basis: vec![
                text!["leak flow ", flow(leak)],
                text![format!("repair fraction {:.2}", opts.leak_repair_fraction)],
                text!["marginal specific power ", specific(r.marginal_kw_per_m3_min), format!(" ({trim_tag})")],
                text![format!("running hours {:.0} h/yr", r.annual_running_hours)],
            ], formula: "saving = f × Q_leak × marginal kW/(m³/min) × running hours (≤ trim energy above idle)", source: "US DOE compressed-air sourcebook (leaks fact sheet); priced at the marginal (trim) specific power", caution: None }));
    }

    // Lower pressure.
    if let Some(p_now) = r.mean_pressure_bar_g {
        let mut target = opts.target_pressure_bar_g.unwrap_or(p_now - DEFAULT_PRESSURE_REDUCTION_BAR);
        if let Some(need) = opts.needed_pressure_bar_g {
            target = target.max(need);
        }
        // Never below the plant's low limit nor below the atmosphere (module doc).
        target = target.max(r.low_limit_bar_g.unwrap_or(0.0)).max(0.0);
        let dp = p_now - target;
        if dp > 0.0 {
            let direct = r.annual_energy_kwh * 0.01 * dp / BAR_PER_2_PSI;
            let p_abs_bar = p_now + r.site.air.atmosphere.0 / 1e5;
            let q_unreg = opts.unregulated_flow_m3_min.unwrap_or(0.0) + r.leak_flow_m3_min.unwrap_or(0.0);
            let dq = q_unreg * dp / p_abs_bar;
            let artificial = capped(dq * r.marginal_kw_per_m3_min * r.annual_running_hours);
            out.extend(finish(r, si, Draft { kind: MeasureKind::LowerPressure, title: text!["Lower the header pressure from ", bar_g(p_now), " to ", bar_g(target)], description: text!["Lower the compressors' set points in steps while watching the pressure at the farthest point of use."], saving_kwh: direct + artificial, acts_on_kwh: r.annual_energy_kwh, money: None, cost_ctx: CostContext::default(), basis: vec![
                    text!["mean header pressure ", bar_g(p_now)],
                    text!["target ", bar_g(target)],
                    text![format!("annual compressor energy {:.0} kWh", r.annual_energy_kwh)],
                    text!["unregulated demand incl. leaks ", flow(q_unreg), ": ", flow(dq), " less at the lower pressure"],
                    text!["marginal specific power ", specific(r.marginal_kw_per_m3_min)],
                ], formula: "saving = E × 1 % × Δp / 0.138 bar + Q_unreg Δp / p_abs × marginal kW/(m³/min) × hours", source: "US DOE compressed-air sourcebook (1 % of input per 2 psi)", caution: Some("check that every point of use keeps the pressure its tools need; lower in steps".into()) }));
        }
    }

    // Heat recovery.
    if let Some(h) = &r.heat {
        out.extend(finish(
            r,
            si,
            Draft {
                kind: MeasureKind::RecoverHeat,
                title: text![format!(
                    "Recover compressor heat for {}",
                    h.use_kind.as_str().replace('_', " ")
                )],
                description: text![format!(
                "Use about {:.0} kWh/yr of the compressors' heat in place of fuel ({:.0} kWh/yr of fuel).",
                h.useful_kwh_per_year, h.fuel_kwh_per_year
            )],
                saving_kwh: h.fuel_kwh_per_year,
                // Fuel displaced, not electricity: bounded by the recoverable heat upstream.
                acts_on_kwh: h.fuel_kwh_per_year,
                money: Some(h.value_per_year),
                cost_ctx: CostContext { recoverable_heat_kw: h.recoverable_kw, ..Default::default() },
                basis: vec![
                    text![format!("useful heat {:.0} kWh/yr", h.useful_kwh_per_year)],
                    text![format!("heater efficiency {:.2}", r.site.heater_efficiency)],
                    text![format!(
                        "fuel price {} {} per kWh",
                        r.site.heating_fuel_price_per_kwh, r.site.currency
                    )],
                    text![format!("recoverable heat {:.1} kW at full load", h.recoverable_kw)],
                ],
                formula:
                    "saving = useful heat / heater efficiency × fuel price, in the months the heat is used",
                source: "US DOE compressed-air sourcebook, heat-recovery fact sheet",
                caution: Some(safety::HEAT_RECOVERY_MEASURE_CAUTION.into()),
            },
        ));
    }

    // Shut off idle machines out of production.
    let idle: Vec<(usize, f64)> = r
        .machines
        .iter()
        .enumerate()
        .map(|(i, m)| (i, m.annual_unloaded_non_production_kwh))
        .filter(|(_, kwh)| *kwh > 0.0)
        .collect();
    if !idle.is_empty() {
        let kwh: f64 = idle.iter().map(|x| x.1).sum();
        let tags: Vec<String> = idle.iter().map(|(i, _)| r.compressors[*i].tag.clone()).collect();
        out.extend(finish(r, si, Draft { kind: MeasureKind::ShutOffIdle, title: text![format!("Switch off idling compressors out of production ({})", tags.join(", "))], description: text!["Outside production hours these machines run unloaded; a timer or sequencer rule stops them."], saving_kwh: kwh, acts_on_kwh: r.annual_energy_kwh, money: None, cost_ctx: CostContext { compressors: idle.len() as f64, ..Default::default() }, basis: idle.iter()
                .map(|(i, k)| text![format!("{} unloaded out of production {k:.0} kWh/yr", r.compressors[*i].tag)])
                .collect(), formula: "saving = Σ energy spent unloaded in non-production hours (annualised)", source: "US DOE sourcebook (unloaded power 15-35 % of full load); common practice", caution: Some(
                "only where nothing needs air at those hours; leaks and dryers still draw while pressurized"
                    .into(),
            ) }));
    }

    // Control: the best replayed scenario, else a variable-speed trim by rule.
    let price = r.site.electricity_price_per_kwh;
    let best = r
        .scenarios
        .iter()
        .filter(|s| s.qualifies())
        .map(|s| (s, s.annual_saving_kwh(r.annual_energy_kwh)))
        .filter(|(s, kwh)| *kwh * price > 0.0 && s.implementation_cost >= 0.0)
        .min_by(|(a, ka), (b, kb)| {
            (a.implementation_cost / (ka * price))
                .total_cmp(&(b.implementation_cost / (kb * price)))
                .then(kb.total_cmp(ka))
        });
    if let Some((s, kwh)) = best {
        out.extend(finish_scenario(
            r,
            si,
            Draft {
                kind: MeasureKind::ImproveControl,
                title: text![format!("Change the compressor room as in scenario \u{201c}{}\u{201d}", s.name)],
                description: text![format!(
                    "The logged demand replayed through the changed room (scenario {}) takes {:.1} % less \
                     energy than the baseline, the same replay of the room as it is.",
                    s.id,
                    s.energy_saving_kwh / s.baseline_energy_kwh * 100.0
                )],
                saving_kwh: kwh,
                acts_on_kwh: r.annual_energy_kwh,
                money: None,
                cost_ctx: CostContext { scenario_cost: Some(s.implementation_cost), ..Default::default() },
                basis: vec![
                    text![format!(
                        "replayed saving {:.0} kWh over {:.0} h against a simulated baseline of {:.0} kWh",
                        s.energy_saving_kwh, s.simulated_hours, s.baseline_energy_kwh
                    )],
                    text![format!("annual energy {:.0} kWh/yr", r.annual_energy_kwh)],
                    text![format!("validation error of the replay {:+.2} %", s.validation_error * 100.0)],
                    text![format!("scenario cost {:.0} {}", s.implementation_cost, r.site.currency)],
                ],
                formula:
                    "saving = (replayed baseline - replayed scenario) / replayed baseline × annual energy",
                source:
                    "receiver equation V dp/dt = p_atm (Q_supply - Q_demand) with each machine's control \
                         (part-load behaviour by control: US DOE compressed-air sourcebook); validated against the logged energy",
                caution: None,
            },
            s.id,
        ));
    } else if let (Some(c), Some(t)) = (&r.control, r.trim) {
        let kwh = c.logged_annual_kwh - c.modelled_annual_kwh;
        let spec = &r.compressors[t];
        out.extend(finish(
            r,
            si,
            Draft {
                kind: MeasureKind::ImproveControl,
                title: text![if has_vsd {
                    format!("Sequence the variable-speed machine as trim instead of {}", spec.tag)
                } else {
                    format!("Trim with a variable-speed compressor instead of {}", spec.tag)
                }],
                description: text![format!(
                    "{} runs loaded {:.0} % of its time and cycles {:.1} times an hour; {}",
                    spec.tag,
                    r.machines[t].loaded_fraction * 100.0,
                    r.machines[t].cycles_per_hour,
                    if c.simultaneous_cycling_share > 0.1 {
                        format!(
                            "two machines part-load at once {:.0} % of the time",
                            c.simultaneous_cycling_share * 100.0
                        )
                    } else {
                        "its part-load power is high for the air it delivers".into()
                    }
                )],
                saving_kwh: kwh,
                acts_on_kwh: c.logged_annual_kwh.min(r.annual_energy_kwh),
                money: None,
                cost_ctx: CostContext { rated_kw: spec.rated_power_kw, has_vsd, ..Default::default() },
                basis: vec![
                    text![format!("logged trim energy {:.0} kWh/yr", c.logged_annual_kwh)],
                    text![format!("same demand on {}: {:.0} kWh/yr", c.curve, c.modelled_annual_kwh)],
                ],
                formula: "saving = logged trim energy - Σ P_vsd(mean trim flow per 5 min) × time",
                source: "US DOE sourcebook: part-load behaviour by control",
                caution: None,
            },
        ));
    }

    // Replace (or overhaul) machines far from their data sheet at the pressure they ran at.
    for (spec, m) in r.compressors.iter().zip(r.machines) {
        let (Some(p_meas), Some(p_sheet), Some(p_bar_g)) =
            (m.mean_loaded_power_kw, m.datasheet_power_at_pressure_kw, m.loaded_pressure_bar_g)
        else {
            continue;
        };
        if !(p_sheet > 0.0 && p_meas > (1.0 + REPLACE_ABOVE_DATASHEET) * p_sheet) {
            continue;
        }
        let excess_kw = p_meas - p_sheet;
        let percent = (p_meas / p_sheet - 1.0) * 100.0;
        out.extend(finish(r, si, Draft { kind: MeasureKind::ReplaceCompressor, title: text![format!("Overhaul or replace {}", spec.tag)], description: text![
                format!("{} draws {p_meas:.1} kW loaded at ", spec.tag),
                bar_g(p_bar_g),
                format!(", {percent:.0} % above the {p_sheet:.1} kW its data sheet gives at that pressure."),
            ], saving_kwh: excess_kw * m.annual_loaded_hours, acts_on_kwh: m.annual_energy_kwh, money: None, cost_ctx: CostContext { rated_kw: spec.rated_power_kw, ..Default::default() }, basis: vec![
                text![format!("measured loaded power {p_meas:.2} kW")],
                text!["mean pressure while loaded ", bar_g(p_bar_g)],
                text![format!("data-sheet package power {:.2} kW at ", spec.rated_power_kw), bar_g(spec.rated_pressure_bar_g), format!(", {p_sheet:.2} kW at the logged pressure")],
                text![format!("loaded hours {:.0} h/yr", m.annual_loaded_hours)],
            ], formula: "saving = loaded hours × (measured loaded kW - data-sheet full-load kW corrected to the loaded pressure by the ratio of isentropic work)", source: "ISO 1217 data-sheet package input power; correction by isentropic compression work; threshold 10 % above it (common practice: beyond ISO 1217 annex C test tolerances of 4-8 %, from memory, and instrument accuracy)", caution: Some(
                "check the measurement (power factor, clamp placement) and the discharge pressure first"
                    .into(),
            ) }));
    }

    out.sort_by(|a, b| {
        let pa = a.simple_payback_years.unwrap_or(f64::INFINITY);
        let pb = b.simple_payback_years.unwrap_or(f64::INFINITY);
        pa.total_cmp(&pb)
    });
    out
}
