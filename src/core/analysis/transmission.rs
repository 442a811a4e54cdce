//! The treatment and end-use figures of a priced summary (`core::treatment`): what the plant's
//! analysis knows (mean flow, production share, running hours, the marginal specific power, the
//! line pressure, the adopted leak flow) applied to the records on file.

use super::figures::{Method, Summary};
use crate::core::recommend::TreatmentCuts;
use crate::core::treatment::{self, PlantFigures, Records, Transmission};
use crate::core::units::SiteAir;

/// Line pressure taken when neither a header pressure is logged nor a rated pressure is known,
/// bar(g) (common practice for shop air, stated in the assumptions when used).
pub const FALLBACK_LINE_PRESSURE_BAR_G: f64 = 7.0;

/// What the summary says that the treatment figures need, and whether the line pressure is assumed.
pub fn plant_of(s: &Summary) -> (PlantFigures, bool) {
    let (line, assumed) = match (s.pressure.mean_bar_g, s.pressure.highest_rated_bar_g) {
        (Some(p), _) => (p, false),
        (None, Some(p)) => (p, false),
        (None, None) => (FALLBACK_LINE_PRESSURE_BAR_G, true),
    };
    let share = s.demand.production_share_of_time.clamp(0.0, 1.0);
    (
        PlantFigures {
            mean_flow_m3_min: s.system.mean_flow_m3_min,
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
    let (plant, assumed) = plant_of(s);
    match treatment::figures(records, &plant, site) {
        Ok((t, split)) => {
            let drops = std::mem::take(&mut s.transmission.pressure_drops);
            s.transmission = t;
            s.transmission.pressure_drops = drops;
            if split.over_explained() {
                s.warnings.push(format!(
                    "the end uses, purge, drains and leaks on record add up to {:.2} m³/min more than the \
                     {:.2} m³/min mean flow: some figure on record is too high",
                    -split.unexplained_m3_min, plant.mean_flow_m3_min
                ));
            }
            s.demand_split = Some(split);
        }
        Err(e) => s.warnings.push(format!("the treatment records could not be priced: {e}")),
    }
    if assumed {
        s.assumptions.push(format!(
            "no header pressure logged and no rated pressure known: drains priced at {FALLBACK_LINE_PRESSURE_BAR_G} bar(g)"
        ));
    }
    let m = |figure: &str, formula: &str, source: &str| Method {
        figure: figure.into(),
        formula: formula.into(),
        source: source.into(),
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
    s.methods.push(m(
        "demand_split",
        "production and inappropriate uses (count × air per use × duty × production share) + purge and drains + \
         adopted leaks + unexplained = mean flow",
        "ISO 11011 demand side; inappropriate uses as the US DOE sourcebook names them",
    ));
}

/// What the priced records offer the measures: the purge dew-point control would save, the drains'
/// air, and the inappropriate uses that have an electric alternative on record.
pub fn cuts(t: &Transmission) -> TreatmentCuts {
    let mut c = TreatmentCuts::default();
    for d in &t.dryers {
        if d.dew_point_control_saving_m3_min > 0.0 {
            c.dew_point_m3_min += d.dew_point_control_saving_m3_min;
            c.dew_point_dryers += 1;
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
        Ok((t, split)) => (split.purge_and_drains_m3_min, cuts(&t)),
        Err(_) => (0.0, TreatmentCuts::default()),
    }
}
