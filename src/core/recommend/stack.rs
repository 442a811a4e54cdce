/*!
Savings stacked in order. Each measure is first priced alone on the plant as logged (its
`standalone_annual_energy_saving_kwh`) and ranked by that payback; the auditor's order
(`MeasureOptions::order`) puts the kinds it lists first, and `excluded` leaves kinds out. Then the
measures are priced one after the other, each on the plant the ones before it leave
(`measures::Plant`): a leak repair lowers the trim's energy above idle and the leak flow; a lower
pressure scales the delivering energy of every machine, the marginal power of air and the
unregulated demand and leaks (by the absolute pressure); a filter change scales the delivering
energy and the marginal power of air the same way by the excess drops, the header pressure (and so
unregulated demand) unchanged; a cycling refrigerated dryer saves its own electricity, outside the
compressors', and leaves the plant as it was; switching a trim off out of production
removes its non-production hours from every later demand cut; a variable-speed trim saves on the trim
energy left. Heat recovery is always valued on the energy left after every electrical measure of the
plan, whatever its place. The total (`MeasuresTotal`) is the sum of the stacked figures, so it is
what the measures save done in that order; its range is the sum of the measures' ranges (taken as
fully correlated: they share the annual hours).
*/

use super::measures::{self, Draft, Plant, Words};
use super::{cost, CostSource, MeasureKind, MeasuresTotal, RecommendInput, Recommendation, Text};

/// One measure of the plan: a kind, or a replacement of one machine.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Slot {
    Kind(MeasureKind),
    Replace(usize),
}

impl Slot {
    fn kind(self) -> MeasureKind {
        match self {
            Slot::Kind(k) => k,
            Slot::Replace(_) => MeasureKind::ReplaceCompressor,
        }
    }
}

/// The slot priced on `p` (`first`: the plant as logged); heat is valued on `p` as it is.
fn price(r: &RecommendInput, slot: Slot, p: &Plant, first: &Plant) -> Option<(Draft, Plant)> {
    match slot {
        Slot::Kind(MeasureKind::RepairLeaks) => measures::repair_leaks(r, p),
        Slot::Kind(MeasureKind::LowerPressure) => measures::lower_pressure(r, p),
        Slot::Kind(MeasureKind::ShutOffIdle) => measures::shut_off_idle(r, p),
        Slot::Kind(MeasureKind::ImproveControl) => measures::improve_control(r, p, first),
        Slot::Kind(MeasureKind::RecoverHeat) => measures::recover_heat(r, p, first).map(|d| (d, p.clone())),
        Slot::Replace(i) => measures::replace_compressor(r, p, first, i),
        Slot::Kind(MeasureKind::DewPointControl) => measures::dew_point_control(r, p),
        Slot::Kind(MeasureKind::ZeroLossDrains) => measures::zero_loss_drains(r, p),
        Slot::Kind(MeasureKind::ReplaceInappropriateUses) => measures::replace_inappropriate_uses(r, p),
        Slot::Kind(MeasureKind::FilterChange) => measures::filter_change(r, p),
        Slot::Kind(MeasureKind::CyclingRefrigeratedDryer) => measures::cycling_refrigerated_dryer(r, p),
        Slot::Kind(MeasureKind::ReplaceCompressor) => None,
    }
}

/// The measures worth proposing, in the order they are stacked (module doc). `si` writes a
/// measure's parts in SI units (`core::display::render_parts` with an SI `Fmt`): the `title`,
/// `description` and `basis` of each [`Recommendation`] (API.md).
pub fn recommend(r: &RecommendInput, si: &Words<'_>) -> Vec<Recommendation> {
    let opts = &r.costs.options;
    let first = Plant::of(r);
    let mut slots: Vec<Slot> = [
        MeasureKind::RepairLeaks,
        MeasureKind::LowerPressure,
        MeasureKind::RecoverHeat,
        MeasureKind::ShutOffIdle,
        MeasureKind::ImproveControl,
        MeasureKind::DewPointControl,
        MeasureKind::ZeroLossDrains,
        MeasureKind::ReplaceInappropriateUses,
        MeasureKind::FilterChange,
        MeasureKind::CyclingRefrigeratedDryer,
    ]
    .into_iter()
    .map(Slot::Kind)
    .chain(measures::replace_candidates(r).into_iter().map(Slot::Replace))
    .collect();
    slots.retain(|s| !opts.excluded.contains(&s.kind()));
    // Each alone, on the plant as logged.
    let mut alone: Vec<(Slot, Recommendation)> = slots
        .iter()
        .filter_map(|&s| {
            let (d, _) = price(r, s, &first, &first)?;
            Some((s, finish(r, si, d)?))
        })
        .collect();
    // Ranked by payback alone (the larger saving first on a tie), then the auditor's order first.
    alone.sort_by(|(_, a), (_, b)| {
        let pa = a.simple_payback_years.unwrap_or(f64::INFINITY);
        let pb = b.simple_payback_years.unwrap_or(f64::INFINITY);
        pa.total_cmp(&pb).then(b.annual_cost_saving.total_cmp(&a.annual_cost_saving))
    });
    let place = |k: MeasureKind| opts.order.iter().position(|o| *o == k).unwrap_or(usize::MAX);
    alone.sort_by_key(|(s, _)| place(s.kind()));

    // Stacked: the electrical measures in order, then heat on the energy they leave.
    let mut plant = first.clone();
    let mut stacked: Vec<Option<Draft>> = Vec::with_capacity(alone.len());
    for (s, _) in &alone {
        if s.kind() == MeasureKind::RecoverHeat {
            stacked.push(None);
            continue;
        }
        match price(r, *s, &plant, &first) {
            Some((d, next)) => {
                stacked.push(Some(d));
                plant = next;
            }
            None => stacked.push(None),
        }
    }
    for ((s, _), d) in alone.iter().zip(stacked.iter_mut()) {
        if s.kind() == MeasureKind::RecoverHeat {
            *d = measures::recover_heat(r, &plant, &first);
        }
    }
    let mut out = Vec::new();
    for ((_, a), d) in alone.into_iter().zip(stacked) {
        let Some(rec) = d.and_then(|d| finish(r, si, d)) else { continue };
        out.push(Recommendation {
            stack_position: out.len() + 1,
            standalone_annual_energy_saving_kwh: a.annual_energy_saving_kwh,
            standalone_annual_cost_saving: a.annual_cost_saving,
            standalone_simple_payback_years: a.simple_payback_years,
            ..rec
        });
    }
    out
}

/// `summary.measures_total`: the sums of the stacked figures; `None` without a measure.
pub fn stack_total(recs: &[Recommendation], excluded: &[MeasureKind]) -> Option<MeasuresTotal> {
    if recs.is_empty() {
        return None;
    }
    let sum = |f: fn(&Recommendation) -> f64| recs.iter().map(f).sum::<f64>();
    let cost = sum(|r| r.annual_cost_saving);
    let implementation = sum(|r| r.implementation_cost);
    let mut order: Vec<MeasureKind> = Vec::new();
    for r in recs {
        if !order.contains(&r.kind) {
            order.push(r.kind);
        }
    }
    Some(MeasuresTotal {
        annual_energy_saving_kwh: sum(|r| r.annual_energy_saving_kwh),
        annual_energy_saving_kwh_low: sum(|r| r.annual_energy_saving_kwh_low),
        annual_energy_saving_kwh_high: sum(|r| r.annual_energy_saving_kwh_high),
        annual_electricity_saving_kwh: recs
            .iter()
            .filter(|r| r.electricity)
            .map(|r| r.annual_energy_saving_kwh)
            .sum(),
        annual_fuel_saving_kwh: recs
            .iter()
            .filter(|r| !r.electricity)
            .map(|r| r.annual_energy_saving_kwh)
            .sum(),
        annual_cost_saving: cost,
        annual_cost_saving_low: sum(|r| r.annual_cost_saving_low),
        annual_cost_saving_high: sum(|r| r.annual_cost_saving_high),
        implementation_cost: implementation,
        simple_payback_years: (cost > 0.0).then(|| implementation / cost),
        order,
        excluded: excluded.to_vec(),
        range_rule: "sum of the measures' ranges (fully correlated: they share the annual hours)".into(),
    })
}

/// A draft costed, with its payback; `None` when it saves nothing.
pub(super) fn finish(r: &RecommendInput, si: &Words<'_>, d: Draft) -> Option<Recommendation> {
    let Draft {
        kind,
        title,
        description,
        saving_kwh,
        low_kwh,
        high_kwh,
        acts_on_kwh,
        money,
        cost_ctx,
        basis,
        formula,
        source,
        method,
        caution,
        scenario_id,
    } = d;
    let cap = acts_on_kwh.max(0.0);
    let saving_kwh = saving_kwh.min(cap);
    let (low_kwh, high_kwh) = (low_kwh.min(saving_kwh), high_kwh.max(saving_kwh));
    let electricity = money.is_none();
    let price =
        if electricity { r.site.electricity_price_per_kwh } else { r.site.heating_fuel_price_per_kwh };
    let annual_cost_saving = money.unwrap_or(saving_kwh * price);
    if !(saving_kwh > 0.0 && annual_cost_saving > 0.0) {
        return None;
    }
    let (implementation_cost, source_of_cost) = match r.costs.edited_totals.get(kind.as_str()) {
        Some(&c) => (c, CostSource::Edited),
        None if cost_ctx.scenario_cost.is_some() && cost_ctx.scenario_cost_quoted => {
            (cost(kind, &cost_ctx, r.costs), CostSource::Quoted)
        }
        None => (cost(kind, &cost_ctx, r.costs), CostSource::DefaultEstimate),
    };
    let co2_kg = if electricity { r.site.grid_co2_kg_per_kwh } else { r.site.fuel_co2_kg_per_kwh };
    Some(Recommendation {
        kind,
        title: si(&title),
        description: si(&description),
        annual_energy_saving_kwh: saving_kwh,
        annual_cost_saving,
        implementation_cost,
        simple_payback_years: Some(implementation_cost / annual_cost_saving),
        implementation_cost_source: source_of_cost,
        annual_co2_saving_t: saving_kwh * co2_kg / 1000.0,
        electricity,
        basis: basis.iter().map(|b| si(b)).collect(),
        text: Text { title, description, basis },
        formula: formula.into(),
        source: source.into(),
        caution,
        scenario_id,
        stack_position: 0,
        standalone_annual_energy_saving_kwh: saving_kwh,
        standalone_annual_cost_saving: annual_cost_saving,
        standalone_simple_payback_years: Some(implementation_cost / annual_cost_saving),
        annual_energy_saving_kwh_low: low_kwh,
        annual_energy_saving_kwh_high: high_kwh,
        annual_cost_saving_low: low_kwh * annual_cost_saving / saving_kwh,
        annual_cost_saving_high: high_kwh * annual_cost_saving / saving_kwh,
        method_and_sources: method.into(),
    })
}
