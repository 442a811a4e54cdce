//! The treatment and end-use figures of a priced summary (`core::treatment`): what the plant's
//! analysis knows (mean flow, production share, running hours, the marginal specific power, the
//! line pressure, the adopted leak flow) applied to the records on file.

use super::figures::{Method, Summary};
use crate::core::treatment::{self, PlantFigures, Records};
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

/// The purge and drain air on record at this summary's plant, m³/min (0 without records).
pub fn purge_and_drains_m3_min(s: &Summary, records: &Records, site: &SiteAir) -> f64 {
    if records.dryers.is_empty() && records.drains.is_empty() {
        return 0.0;
    }
    let (plant, _) = plant_of(s);
    treatment::figures(records, &plant, site).map(|(_, split)| split.purge_and_drains_m3_min).unwrap_or(0.0)
}

/// Put the transmission figures and the demand split on the summary, with their methods.
pub fn apply(s: &mut Summary, records: &Records, site: &SiteAir) {
    if records.is_empty() {
        return;
    }
    let (plant, assumed) = plant_of(s);
    match treatment::figures(records, &plant, site) {
        Ok((t, split)) => {
            s.transmission = t;
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
