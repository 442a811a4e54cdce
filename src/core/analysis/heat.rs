/*!
Heat of compression: heat rejected = input - heat carried by the delivered air
(`heat::heat_rejected`, 10 K delivery rise, common practice); recoverable = `heat::recoverable_fraction`
× input (US DOE heat-recovery fact sheet); the annual recoverable heat is spread evenly over the months
and valued in the heating months (or all year for process water).
*/

use crate::core::heat::{self, HeatUse, HeatUseKind};
use crate::core::model::SiteSpec;
use crate::core::recommend::HeatCase;
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
    /// Recoverable heat at full load, kW.
    pub recoverable_kw: f64,
}

/// The heat of each compressor; `annual_kwh_c` its annual energy.
pub(super) fn compressor_heat(d: &DataFigures, annual_kwh_c: &[f64]) -> Vec<CompressorHeat> {
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
            let rej =
                heat::heat_rejected(e, d.air[i].air_m3 * rho_in, heat::DEFAULT_DELIVERY_TEMPERATURE_RISE_K)
                    .kwh();
            let frac = heat::recoverable_fraction(c.kind, c.cooling);
            let rec = frac * energy_kwh[i];
            CompressorHeat {
                rejected_kwh: rej,
                recoverable_kwh: rec,
                annual_rejected_kwh: rej * factor,
                annual_recoverable_kwh: rec * factor,
                recoverable_kw: frac * c.rated_power_kw,
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
    /// No heating months: valued as year-round process water.
    pub as_process_water: bool,
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
    let monthly = [heat_rec_y / 12.0; 12];
    let space = HeatUse { kind: HeatUseKind::SpaceHeating, heating_months: site.heating_months.clone() };
    let process = HeatUse { kind: HeatUseKind::ProcessWater, heating_months: vec![] };
    let s = heat::recovered_value(&monthly, &space, site.heater_efficiency, site.heating_fuel_price_per_kwh);
    let p =
        heat::recovered_value(&monthly, &process, site.heater_efficiency, site.heating_fuel_price_per_kwh);
    let space_ok = !site.heating_months.is_empty();
    let (use_kind, useful, fuel, value) = if space_ok {
        (HeatUseKind::SpaceHeating, s.useful_kwh, s.fuel_kwh, s.money)
    } else {
        (HeatUseKind::ProcessWater, p.useful_kwh, p.fuel_kwh, p.money)
    };
    HeatValue {
        figures: HeatFigures {
            heat_rejected_kwh: heat_rej,
            recoverable_kwh: heat_rec,
            annual_heat_rejected_kwh: Some(heat_rej_y),
            annual_recoverable_kwh: Some(heat_rec_y),
            recoverable_kw_at_full_load: rec_kw,
            use_kind,
            useful_heat_kwh_per_year: Some(useful),
            displaced_fuel_kwh_per_year: Some(fuel),
            annual_value: Some(value),
            process_water_annual_value: Some(p.money),
            cautions: safety::heat_recovery_cautions(),
        },
        case: (value > 0.0).then_some(HeatCase {
            useful_kwh_per_year: useful,
            fuel_kwh_per_year: fuel,
            value_per_year: value,
            recoverable_kw: rec_kw,
            use_kind,
        }),
        as_process_water: !space_ok,
    }
}
