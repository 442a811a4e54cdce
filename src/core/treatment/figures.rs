/*!
The treatment and end-use records priced on the plant's analysis: each dryer, filter, drain and
pressure drop as a figure of `summary.transmission`, and the split of the metered demand.
*/

use super::*;

/// The records of one audit (ids as stored).
#[derive(Debug, Clone, Default)]
pub struct Records {
    pub dryers: Vec<Dryer>,
    pub drains: Vec<Drain>,
    pub end_uses: Vec<EndUse>,
    pub filters: Vec<Filter>,
}

impl Records {
    pub fn is_empty(&self) -> bool {
        self.dryers.is_empty()
            && self.drains.is_empty()
            && self.end_uses.is_empty()
            && self.filters.is_empty()
    }
}

/// What the plant's analysis says that the treatment figures need.
#[derive(Debug, Clone, Copy)]
pub struct PlantFigures {
    /// Metered (or estimated) mean flow over the logged time, free air (`None`: no flow is known;
    /// only what does not need it is priced, [`figures`]).
    pub mean_flow_m3_min: Option<f64>,
    /// Share of the logged time in production.
    pub production_share_of_time: f64,
    /// Hours a year the compressors run, and hours a year of production.
    pub annual_running_hours: f64,
    pub annual_production_hours: f64,
    /// The trim machine's marginal specific power (`core::partload`).
    pub marginal_kw_per_m3_min: f64,
    pub price_per_kwh: f64,
    /// The line pressure drains and dryers see, bar(g).
    pub line_pressure_bar_g: f64,
    /// The adopted leak flow at production pressure, if any.
    pub leak_flow_m3_min: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DryerFigure {
    pub tag: String,
    pub kind: String,
    pub control: String,
    pub purge_m3_min: f64,
    pub annual_purge_kwh: f64,
    pub annual_purge_cost: f64,
    pub power_kw: f64,
    pub annual_power_kwh: f64,
    /// What dew-point control would save on a fixed-cycle purging dryer (0 otherwise): air and a
    /// year's energy. Like the load and the cycling saving, `None` when no mean flow is known: it
    /// follows the air through the dryer (`sufficiency.withheld`'s `transmission.dryers[].savings`).
    pub dew_point_control_saving_m3_min: Option<f64>,
    pub dew_point_control_saving_kwh: Option<f64>,
    /// Rated flow, free air, and the mean flow through it over its rated flow (0-1).
    #[serde(default)]
    pub rated_flow_m3_min: f64,
    #[serde(default)]
    pub load: Option<f64>,
    /// What a cycling or variable unit would save in place of a non-cycling refrigerated dryer
    /// (0 otherwise): mean kW and a year's energy.
    #[serde(default)]
    pub cycling_saving_kw: Option<f64>,
    #[serde(default)]
    pub cycling_saving_kwh: Option<f64>,
}

/// A filter priced (`summary.transmission.filters`).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct FilterFigure {
    pub tag: String,
    pub kind: String,
    pub rated_flow_m3_min: f64,
    /// The mean flow through it (the plant's, see the module doc), free air.
    pub flow_m3_min: f64,
    pub clean_drop_bar: f64,
    pub clean_drop_at_flow_bar: f64,
    pub measured_drop_bar: f64,
    pub excess_drop_bar: f64,
    /// The loaded energy a year the excess drop costs by the pressure rule (`None` until priced on
    /// the plant's loaded energy, `analysis::transmission`), and its cost.
    pub annual_kwh: Option<f64>,
    pub annual_cost: Option<f64>,
    /// The excess is above [`FILTER_CHANGE_ABOVE_BAR`]: the element is worth changing.
    pub change_recommended: bool,
    pub element_change_months: Option<f64>,
    pub element_cost: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DrainFigure {
    pub tag: String,
    pub kind: String,
    pub air_m3_min: f64,
    pub annual_kwh: f64,
    pub annual_cost: f64,
    /// What a zero-loss drain would save a year (its whole loss).
    pub zero_loss_saving_kwh: f64,
}

/// The drop from the most upstream pressure point logged to one downstream (API.md; the
/// analysis' `drops` room): names, the points' kinds, the drop's mean, at peak flow and its
/// duration curve (exceeded for 0, 5, ..., 100 % of the time), the downstream point's 5th
/// percentile, and what the drop costs a year at the pressure measure's rule.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PressureDropFigure {
    pub from: String,
    pub to: String,
    pub mean_bar: f64,
    pub at_peak_flow_bar: Option<f64>,
    pub from_point: crate::core::series::PressurePoint,
    pub to_point: crate::core::series::PressurePoint,
    pub duration_curve_bar: Vec<f64>,
    pub to_p5_bar_g: f64,
    /// `None` when the data cannot carry annual figures (`analysis::sufficiency`).
    pub annual_energy_kwh: Option<f64>,
    pub annual_cost: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct EndUseFigure {
    pub name: String,
    pub kind: String,
    pub inappropriate: bool,
    /// Mean over production time, free air.
    pub production_mean_flow_m3_min: f64,
    /// The same air's energy a year at the marginal specific power.
    pub annual_air_kwh: f64,
    /// The electric alternative's mean input over production time (kW × count × duty), when given.
    pub alternative_mean_kw: Option<f64>,
    /// Net saving of the electric alternative, when its kW is given.
    pub alternative_saving_kwh: Option<f64>,
}

/// `summary.transmission` (API.md).
#[derive(Debug, Clone, Default, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Transmission {
    pub dryers: Vec<DryerFigure>,
    pub drains: Vec<DrainFigure>,
    pub pressure_drops: Vec<PressureDropFigure>,
    pub end_uses: Vec<EndUseFigure>,
    #[serde(default)]
    pub filters: Vec<FilterFigure>,
}

/// The transmission figures and the demand split of an audit's records on its plant. Each dryer
/// is taken to carry an equal share of the mean flow (a stated simplification); purge and drains
/// blow while the compressors run; end uses run their duty over production time.
///
/// With no mean flow known only what does not need it is priced: a drain's loss (its orifice at the
/// line pressure), an end use's air (its own rating), a dryer whose purge and electricity do not
/// follow the air through it (without its load and the savings read from it). A dryer that follows
/// it ([`Dryer::follows_load`]), the filters (their clean drop is read at the flow) and the split
/// of the mean flow are left out, `None` for the split.
pub fn figures(
    records: &Records,
    plant: &PlantFigures,
    site: &SiteAir,
) -> Result<(Transmission, Option<DemandSplit>), TreatmentError> {
    let marginal = plant.marginal_kw_per_m3_min;
    let run_h = plant.annual_running_hours;
    let kwh = |q: f64, hours: f64| q * marginal * hours;
    let line = PressureAbs::from_bar_g(plant.line_pressure_bar_g, site.atmosphere);
    let mean = plant.mean_flow_m3_min;
    let through = mean.map(|q| FreeAirFlow::from_m3_min(q / records.dryers.len().max(1) as f64));
    let mut t = Transmission::default();
    let mut purge_and_drains = 0.0;
    for d in &records.dryers {
        d.validate()?;
        if through.is_none() && d.follows_load() {
            continue;
        }
        // Without a flow the figures at none through it: the purge and electricity of a dryer
        // that does not follow the load are the same at any flow; what follows it is `None`.
        let f = d.figures(through.unwrap_or(FreeAirFlow(0.0)));
        let known = |x: f64, follows: bool| (through.is_some() || !follows).then_some(x);
        // The savings that follow the load: dew-point control on a fixed-cycle purge, a cycling
        // unit in place of a non-cycling refrigerated dryer (every other dryer's are 0 at any flow).
        let dew_point = d.control == DryerControl::FixedCycle && d.purge_fraction() > 0.0;
        let cycling = d.kind == DryerKind::Refrigerated;
        let purge = f.purge.m3_min();
        purge_and_drains += purge;
        let purge_kwh = kwh(purge, run_h);
        t.dryers.push(DryerFigure {
            tag: d.tag.clone(),
            kind: d.kind.as_str().into(),
            control: d.control.as_str().into(),
            purge_m3_min: purge,
            annual_purge_kwh: purge_kwh,
            annual_purge_cost: purge_kwh * plant.price_per_kwh,
            power_kw: f.power_kw,
            annual_power_kwh: f.power_kw * run_h,
            dew_point_control_saving_m3_min: known(
                purge - f.purge_with_dew_point_control.m3_min(),
                dew_point,
            ),
            dew_point_control_saving_kwh: known(
                kwh(purge - f.purge_with_dew_point_control.m3_min(), run_h),
                dew_point,
            ),
            rated_flow_m3_min: d.rated_flow.m3_min(),
            load: known(f.load, true),
            cycling_saving_kw: known(f.cycling_saving_kw, cycling),
            cycling_saving_kwh: known(f.cycling_saving_kw * run_h, cycling),
        });
    }
    // Filters sit on the main line: each carries the whole mean flow (module doc).
    for x in &records.filters {
        x.validate()?;
        let Some(whole) = mean.map(FreeAirFlow::from_m3_min) else { continue };
        let f = x.figures(whole);
        t.filters.push(FilterFigure {
            tag: x.tag.clone(),
            kind: x.kind.as_str().into(),
            rated_flow_m3_min: x.rated_flow.m3_min(),
            flow_m3_min: whole.m3_min(),
            clean_drop_bar: x.clean_drop_bar,
            clean_drop_at_flow_bar: f.clean_drop_at_flow_bar,
            measured_drop_bar: x.measured_drop_bar,
            excess_drop_bar: f.excess_drop_bar,
            annual_kwh: None,
            annual_cost: None,
            change_recommended: f.excess_drop_bar > FILTER_CHANGE_ABOVE_BAR,
            element_change_months: x.element_change_months,
            element_cost: x.element_cost,
        });
    }
    for d in &records.drains {
        let q = d.air(line, site)?.m3_min();
        purge_and_drains += q;
        let e = kwh(q, run_h);
        t.drains.push(DrainFigure {
            tag: d.tag.clone(),
            kind: d.kind.as_str().into(),
            air_m3_min: q,
            annual_kwh: e,
            annual_cost: e * plant.price_per_kwh,
            zero_loss_saving_kwh: e,
        });
    }
    let (mut production, mut inappropriate) = (0.0, 0.0);
    for u in &records.end_uses {
        let q = u.mean_flow(site)?.m3_min();
        if u.kind.inappropriate() {
            inappropriate += q;
        } else {
            production += q;
        }
        t.end_uses.push(EndUseFigure {
            name: u.name.clone(),
            kind: u.kind.as_str().into(),
            inappropriate: u.kind.inappropriate(),
            production_mean_flow_m3_min: q,
            annual_air_kwh: kwh(q, plant.annual_production_hours),
            alternative_mean_kw: u.alternative_kw.map(|k| k * u.count as f64 * u.duty),
            alternative_saving_kwh: if u.kind.inappropriate() {
                inappropriate_use_saving_kwh(u, site, marginal, plant.annual_production_hours)?
            } else {
                None
            },
        });
    }
    // End uses run over production time: their share of the logged mean.
    let share = plant.production_share_of_time.clamp(0.0, 1.0);
    let f = FreeAirFlow::from_m3_min;
    let split = mean.map(|q| {
        DemandSplit::new(
            f(q),
            f(production * share),
            f(inappropriate * share),
            f(purge_and_drains),
            f(plant.leak_flow_m3_min.unwrap_or(0.0)),
        )
    });
    Ok((t, split))
}
