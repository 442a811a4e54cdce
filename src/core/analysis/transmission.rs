//! The treatment and end-use figures of a priced summary (`core::treatment`): what the plant's
//! analysis knows (mean flow, production share, running hours, the marginal specific power, the
//! line pressure, the adopted leak flow) applied to the records on file; the filters' excess drops
//! are priced on the machines' loaded energy by the pressure measure's rule (`Summary::discharge`).

use super::figures::{Method, Summary};
use crate::core::recommend::{self, TreatmentCuts};
use crate::core::treatment::{self, PlantFigures, Records, Transmission};
use crate::core::units::SiteAir;

/// Line pressure taken when neither a header pressure is logged nor a rated pressure is known,
/// bar(g) (common practice for shop air, stated in the assumptions when used).
pub const FALLBACK_LINE_PRESSURE_BAR_G: f64 = 7.0;

/// What the summary says that the treatment figures need, and whether the line pressure is assumed
/// (the mean flow `None` when none is known: then only what does not need it is priced,
/// `treatment::figures`).
pub fn plant_of(s: &Summary) -> (PlantFigures, bool) {
    let mean_flow_m3_min = s.system.mean_flow_m3_min;
    let (line, assumed) = match (s.pressure.mean_bar_g, s.pressure.highest_rated_bar_g) {
        (Some(p), _) => (p, false),
        (None, Some(p)) => (p, false),
        (None, None) => (FALLBACK_LINE_PRESSURE_BAR_G, true),
    };
    let share = s.demand.production_share_of_time.clamp(0.0, 1.0);
    (
        PlantFigures {
            mean_flow_m3_min,
            production_share_of_time: share,
            annual_running_hours: s.baseline.annual_running_hours,
            annual_production_hours: s.baseline.annual_hours * share,
            marginal_kw_per_m3_min: s.leaks.marginal_kw_per_m3_min,
            price_per_kwh: s.baseline.electricity_price_per_kwh,
            line_pressure_bar_g: line,
            leak_flow_m3_min: s.leaks.adopted_leak_flow_m3_min,
        },
        assumed,
    )
}

/// Put the transmission figures and the demand split on the summary, with their methods.
pub fn apply(s: &mut Summary, records: &Records, site: &SiteAir) {
    if records.is_empty() {
        return;
    }
    // Records priced on a mean flow and running hours the data cannot carry would give figures
    // that mean nothing (a demand split of -6,500 %): they stay on their page, unpriced.
    if s.sufficiency.verdict == super::figures::Verdict::Insufficient {
        s.sufficiency.withheld.push(super::figures::Withheld {
            figure: "transmission".into(),
            reason: "not enough data: the treatment records and end uses are priced on the logged mean flow \
                     and running hours, which the data cannot carry"
                .into(),
        });
        return;
    }
    let (plant, assumed) = plant_of(s);
    if plant.mean_flow_m3_min.is_none() {
        withhold_without_flow(s, records);
    }
    match treatment::figures(records, &plant, site) {
        Ok((mut t, split)) => {
            price_filters(&mut t, s, &plant);
            let drops = std::mem::take(&mut s.transmission.pressure_drops);
            s.transmission = t;
            s.transmission.pressure_drops = drops;
            if let Some(split) = split.filter(|x| x.over_explained()) {
                s.warn(parts![
                    "the end uses, purge, drains and leaks on record add up to ",
                    recommend::flow(-split.unexplained_m3_min),
                    " more than the ",
                    recommend::flow(split.total_m3_min()),
                    " mean flow: some figure on record is too high"
                ]);
            }
            s.demand_split = split;
        }
        Err(e) => s.warn(parts![format!("the treatment records could not be priced: {e}")]),
    }
    if assumed {
        s.assume(parts![
            "no header pressure logged and no rated pressure known: drains priced at ",
            recommend::bar_g(FALLBACK_LINE_PRESSURE_BAR_G)
        ]);
    }
    let m = |figure: &str, formula: &str, source: &str| Method {
        figure: figure.into(),
        formula: formula.into(),
        source: source.into(),
        formula_parts: vec![],
    };
    s.methods.push(m(
        "transmission.dryers",
        "purge = purge share × rated flow (fixed cycle) or × the load through the dryer (dew-point control); \
         energy at the marginal specific power over the running hours",
        "heatless purge 15-20 % of rated flow: US DOE compressed-air sourcebook; purge following the load: common practice",
    ));
    s.methods.push(m(
        "transmission.drains",
        "orifice flow at line pressure (compressible nozzle, sharp edge Cd 0.61) × open time / interval",
        "orifice discharge of air (the leak calculator's equation); timer drains blow whether or not there is condensate: common practice",
    ));
    if !records.filters.is_empty() {
        s.methods.push(m(
            "transmission.filters",
            "excess drop = measured drop - clean drop × (mean flow / rated flow)² (the measured drop read at the mean flow, \
             every filter on the main line); its cost = the loaded energy × 1 % per 2 psi of it (or the ratio of isentropic \
             work, as the plan says), the header pressure unchanged",
            "US DOE compressed-air sourcebook (1 % of input per 2 psi; pressure drop); drop ∝ flow²: common practice",
        ));
    }
    if records.dryers.iter().any(|d| d.kind == treatment::DryerKind::Refrigerated) {
        s.methods.push(m(
            "transmission.dryers.cycling_saving_kwh",
            "non-cycling refrigerated dryer: kW × (1 - max(mean flow through it / rated flow, 0.2)) × running hours",
            "data-sheet kW; cycling units following the load down to 0.2 of their kW: common practice, from memory",
        ));
    }
    s.methods.push(m(
        "demand_split",
        "production and inappropriate uses (count × air per use × duty × production share) + purge and drains + \
         adopted leaks + unexplained = mean flow",
        "ISO 11011 demand side; inappropriate uses as the US DOE sourcebook names them",
    ));
}

/// Price each filter's excess drop on the plant's loaded energy by the pressure rule
/// (`recommend::DischargeBasis`), at the line pressure; left `None` when the summary withholds its
/// annual figures or has no machine.
fn price_filters(t: &mut Transmission, s: &Summary, plant: &PlantFigures) {
    let Some(basis) = s.discharge.as_ref().filter(|_| s.baseline.annual_energy_kwh.is_some()) else {
        return;
    };
    for f in &mut t.filters {
        let (kwh, _) = basis.drop_kwh(plant.line_pressure_bar_g, f.excess_drop_bar);
        f.annual_kwh = Some(kwh);
        f.annual_cost = Some(kwh * plant.price_per_kwh);
    }
}

/// What the priced records offer the measures: the purge dew-point control would save, the kW a
/// cycling unit would save on each non-cycling refrigerated dryer, the filters whose excess drop is
/// worth an element change, the drains' air, and the inappropriate uses that have an electric
/// alternative on record. `line_pressure_bar_g` is the filter measure's pressure when no credible
/// header pressure is logged.
pub fn cuts(t: &Transmission, line_pressure_bar_g: f64) -> TreatmentCuts {
    let mut c = TreatmentCuts { line_pressure_bar_g, ..Default::default() };
    for d in &t.dryers {
        if let Some(q) = d.dew_point_control_saving_m3_min.filter(|&q| q > 0.0) {
            c.dew_point_m3_min += q;
            c.dew_point_dryers += 1;
        }
        if let Some(kw) = d.cycling_saving_kw.filter(|&kw| kw > 0.0) {
            c.cycling_saving_kw += kw;
            c.non_cycling_kw += d.power_kw;
            c.non_cycling_rated_m3_min += d.rated_flow_m3_min;
            c.non_cycling_dryers += 1;
        }
    }
    for f in t.filters.iter().filter(|f| f.change_recommended) {
        c.filter_excess_bar += f.excess_drop_bar;
        c.filters_to_change += 1;
        match f.element_cost {
            Some(cost) => c.filter_recorded_cost += cost,
            None => c.filters_without_cost += 1,
        }
    }
    for d in &t.drains {
        if d.air_m3_min > 0.0 {
            c.drains_m3_min += d.air_m3_min;
            c.lossy_drains += 1;
        }
    }
    for u in t.end_uses.iter().filter(|u| u.inappropriate) {
        if let Some(kw) = u.alternative_mean_kw {
            c.inappropriate_m3_min += u.production_mean_flow_m3_min;
            c.alternative_kw += kw;
            c.inappropriate_uses += 1;
        }
    }
    c
}

/// The records priced on a first summary, for the second pricing: (purge and drains m³/min, cuts).
pub fn first_pass(s: &Summary, records: &Records, site: &SiteAir) -> (f64, TreatmentCuts) {
    if records.is_empty() {
        return (0.0, TreatmentCuts::default());
    }
    let (plant, _) = plant_of(s);
    match treatment::figures(records, &plant, site) {
        Ok((t, _)) => {
            let purge_and_drains = t.dryers.iter().map(|d| d.purge_m3_min).sum::<f64>()
                + t.drains.iter().map(|d| d.air_m3_min).sum::<f64>();
            (purge_and_drains, cuts(&t, plant.line_pressure_bar_g))
        }
        Err(_) => (0.0, TreatmentCuts::default()),
    }
}

/// With no mean flow known, what of the records needs it is withheld, each with its reason (the
/// rest is priced: `treatment::figures`): the dryers whose purge or electricity follows the air
/// through them, the load and savings of the others, the filters, and the demand split.
fn withhold_without_flow(s: &mut Summary, records: &Records) {
    let why = s
        .sufficiency
        .withheld
        .iter()
        .find(|w| w.figure == "system.mean_flow_m3_min")
        .map_or_else(|| "no flow is known".to_string(), |w| w.reason.clone());
    let tags = |it: &mut dyn Iterator<Item = &str>| it.collect::<Vec<_>>().join(", ");
    let mut out: Vec<(&str, String)> = Vec::new();
    let following = tags(&mut records.dryers.iter().filter(|d| d.follows_load()).map(|d| d.tag.as_str()));
    if !following.is_empty() {
        out.push((
            "transmission.dryers[]",
            format!(
                "{following}: the purge under dew-point control, or a cycling unit's electricity, follows the air \
                 through the dryer, a share of the plant's mean flow ({why})"
            ),
        ));
    }
    let saving = |d: &&treatment::Dryer| {
        !d.follows_load()
            && ((d.control == treatment::DryerControl::FixedCycle && d.purge_fraction() > 0.0)
                || d.kind == treatment::DryerKind::Refrigerated)
    };
    let priced = tags(&mut records.dryers.iter().filter(saving).map(|d| d.tag.as_str()));
    if !priced.is_empty() {
        out.push((
            "transmission.dryers[].savings",
            format!(
                "{priced}: what dew-point control or a cycling unit would save follows the air through the \
                 dryer, a share of the plant's mean flow ({why})"
            ),
        ));
    }
    let filters = tags(&mut records.filters.iter().map(|f| f.tag.as_str()));
    if !filters.is_empty() {
        out.push((
            "transmission.filters[]",
            format!("{filters}: a filter's clean drop is read at the plant's mean flow through it ({why})"),
        ));
    }
    out.push(("demand_split", format!("the split is of the plant's mean flow ({why})")));
    for (figure, reason) in out {
        s.sufficiency.withheld.push(super::figures::Withheld { figure: figure.into(), reason });
    }
}
