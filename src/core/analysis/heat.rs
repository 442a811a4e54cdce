/*!
Heat of compression: heat rejected = input - heat carried by the delivered air
(`heat::heat_rejected`, the energy balance with a 10 K delivery rise, common practice); recoverable =
rejected × the share on the cooling path × the recovery unit's effectiveness on it
(`heat::heat_recoverable`; defaults 0.80 air, 0.75 water, editable per audit, inside the US DOE
heat-recovery fact sheet's 50-90 %), for the machines that ran only (a standby machine neither
delivers heat nor sets the unit's size). The annual recoverable heat is spread over the months by
their days (`heat::by_month`) and valued by the site's stored heat use (`site.heat_use`): space
heating in the heating months only (none given: worth nothing, said in the assumptions) or, when the
site gives each month's heating degree-days, by the degree-day method (`heat::degree_day_use`:
capped by the space's need when its annual heat need is given); process or boiler water all year;
the fuel displaced is the heat over the heater's efficiency.
*/

use crate::core::heat::{self, HeatUse, HeatUseKind};
use crate::core::model::SiteSpec;
use crate::core::recommend::{HeatCase, MeasureOptions, RECOVERY_EFFECTIVENESS_SPREAD};
use crate::core::safety;
use crate::core::units::Energy;

use super::figures::HeatFigures;
use super::DataFigures;

/// One compressor's heat over the log and over the year, kWh.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct CompressorHeat {
    pub rejected_kwh: f64,
    pub recoverable_kwh: f64,
    pub annual_rejected_kwh: f64,
    pub annual_recoverable_kwh: f64,
    /// The same at the low and high ends of the effectiveness range.
    pub annual_recoverable_kwh_low: f64,
    pub annual_recoverable_kwh_high: f64,
    /// Recoverable heat at full load, kW (0 for a machine that did not run).
    pub recoverable_kw: f64,
}

/// The effectiveness for a cooling path, and its range (± the spread, within the DOE's 0.50-0.90).
fn effectiveness(opts: &MeasureOptions, cooling: crate::core::model::Cooling) -> (f64, f64, f64) {
    let e = match cooling {
        crate::core::model::Cooling::Air => opts.heat_recovery_effectiveness_air,
        crate::core::model::Cooling::Water => opts.heat_recovery_effectiveness_water,
    };
    let lo = (e - RECOVERY_EFFECTIVENESS_SPREAD).max(0.50).min(e);
    let hi = (e + RECOVERY_EFFECTIVENESS_SPREAD).min(0.90).max(e);
    (e, lo, hi)
}

/// The heat of each compressor; `annual_kwh_c` its annual energy.
pub(super) fn compressor_heat(
    d: &DataFigures,
    annual_kwh_c: &[f64],
    opts: &MeasureOptions,
) -> Vec<CompressorHeat> {
    let atm = d.spec.air.atmosphere;
    let rho_in = atm.0 / (287.05 * d.spec.air.inlet_temperature.0);
    let energy_kwh = &d.energy.energy_kwh;
    d.spec
        .compressors
        .iter()
        .enumerate()
        .map(|(i, c)| {
            let factor = if energy_kwh[i] > 0.0 { annual_kwh_c[i] / energy_kwh[i] } else { 0.0 };
            let e = Energy::from_kwh(energy_kwh[i]);
            let rejected =
                heat::heat_rejected(e, d.air[i].air_m3 * rho_in, heat::DEFAULT_DELIVERY_TEMPERATURE_RISE_K);
            let (eff, lo, hi) = effectiveness(opts, c.cooling);
            let rec = |x: f64| heat::heat_recoverable(rejected, c.kind, c.cooling, x).kwh();
            let ran = energy_kwh[i] > 0.0;
            // At full load: the rated input less what the rated air carries, on the path, × effectiveness.
            let full_kw = {
                let air_kg_h = c.rated_flow_m3_min * 60.0 * rho_in;
                let rej = heat::heat_rejected(
                    Energy::from_kwh(c.rated_power_kw),
                    air_kg_h,
                    heat::DEFAULT_DELIVERY_TEMPERATURE_RISE_K,
                );
                heat::heat_recoverable(rej, c.kind, c.cooling, eff).kwh()
            };
            CompressorHeat {
                rejected_kwh: rejected.kwh(),
                recoverable_kwh: rec(eff),
                annual_rejected_kwh: rejected.kwh() * factor,
                annual_recoverable_kwh: rec(eff) * factor,
                annual_recoverable_kwh_low: rec(lo) * factor,
                annual_recoverable_kwh_high: rec(hi) * factor,
                recoverable_kw: if ran { full_kw } else { 0.0 },
            }
        })
        .collect()
}

/// The system's heat and what it is worth.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct HeatValue {
    pub figures: HeatFigures,
    /// `None` when the heat is worth nothing.
    pub case: Option<HeatCase>,
    /// Space heating with no heating months given: worth nothing until they are.
    pub no_heating_months: bool,
}

/// How the recovered heat is counted, in words for the method line.
pub(super) fn use_words(site: &SiteSpec) -> String {
    match (site.heat_use, site.heating_degree_days_k_day, site.annual_space_heat_kwh) {
        (HeatUseKind::ProcessWater, _, _) => "all year, as process or boiler make-up water".into(),
        (HeatUseKind::SpaceHeating, Some(_), Some(h)) => format!(
            "as space heat by the month's heating degree-days, up to the space's need ({h:.0} kWh a year \
             shared by degree-days)"
        ),
        (HeatUseKind::SpaceHeating, Some(_), None) => "as space heat by the month's heating degree-days, \
             the unit sized to the coldest month's mean load (the space's annual need not given)"
            .into(),
        (HeatUseKind::SpaceHeating, None, _) => "as space heat in the heating months".into(),
    }
}

/// Heat value (module doc).
pub(super) fn heat_value(site: &SiteSpec, per_compressor: &[CompressorHeat]) -> HeatValue {
    let (mut heat_rej, mut heat_rec, mut heat_rej_y, mut heat_rec_y, mut rec_kw) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for h in per_compressor {
        heat_rej += h.rejected_kwh;
        heat_rec += h.recoverable_kwh;
        heat_rej_y += h.annual_rejected_kwh;
        heat_rec_y += h.annual_recoverable_kwh;
        rec_kw += h.recoverable_kw;
    }
    let monthly = heat::by_month(heat_rec_y);
    let use_kind = site.heat_use;
    let use_ = HeatUse {
        kind: use_kind,
        heating_months: site.heating_months.clone(),
        degree_days_k_day: site.heating_degree_days_k_day,
        annual_space_heat_kwh: site.annual_space_heat_kwh,
    };
    let process = HeatUse { kind: HeatUseKind::ProcessWater, ..Default::default() };
    let v = heat::recovered_value(&monthly, &use_, site.heater_efficiency, site.heating_fuel_price_per_kwh);
    let p =
        heat::recovered_value(&monthly, &process, site.heater_efficiency, site.heating_fuel_price_per_kwh);
    let used_share = if heat_rec_y > 0.0 { v.useful_kwh / heat_rec_y } else { 0.0 };
    HeatValue {
        figures: HeatFigures {
            heat_rejected_kwh: heat_rej,
            recoverable_kwh: heat_rec,
            annual_heat_rejected_kwh: Some(heat_rej_y),
            annual_recoverable_kwh: Some(heat_rec_y),
            recoverable_kw_at_full_load: rec_kw,
            use_kind,
            useful_heat_kwh_per_year: Some(v.useful_kwh),
            displaced_fuel_kwh_per_year: Some(v.fuel_kwh),
            annual_value: Some(v.money),
            process_water_annual_value: Some(p.money),
            cautions: safety::heat_recovery_cautions(),
        },
        case: (v.money > 0.0).then(|| HeatCase {
            useful_kwh_per_year: v.useful_kwh,
            fuel_kwh_per_year: v.fuel_kwh,
            value_per_year: v.money,
            recoverable_kw: rec_kw,
            use_kind,
            per_machine_recoverable_kwh: per_compressor.iter().map(|h| h.annual_recoverable_kwh).collect(),
            per_machine_recoverable_kwh_low: per_compressor
                .iter()
                .map(|h| h.annual_recoverable_kwh_low)
                .collect(),
            per_machine_recoverable_kwh_high: per_compressor
                .iter()
                .map(|h| h.annual_recoverable_kwh_high)
                .collect(),
            used_share,
        }),
        no_heating_months: use_kind == HeatUseKind::SpaceHeating
            && site.heating_months.is_empty()
            && site.heating_degree_days_k_day.is_none(),
    }
}
