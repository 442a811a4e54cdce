//! The invented plant's description: its site, its compressors and volumes, and the notes an auditor
//! would write about it.

use super::files::PRESSURE_LOGGER_FAST_S;
use super::DemoSite;
use crate::core::display::local_time;

/// The demo site's time zone (IANA).
pub(super) const TIMEZONE: &str = "Europe/Berlin";
use crate::core::model::{CompressorKind, CompressorSpec, Control, Cooling};

pub(super) const ALTITUDE_M: f64 = 180.0;
pub(super) const INLET_C: f64 = 18.0;
pub(super) const RECEIVER_M3: f64 = 6.0;
pub(super) const OTHER_VOLUME_M3: f64 = 1.5;
/// Leak flow at 7 bar(g) the leak coefficient is chosen for, m³/min.
pub(super) const LEAK_AT_7_BAR_G_M3_MIN: f64 = 2.4;

pub(super) fn compressors() -> Vec<CompressorSpec> {
    vec![
        CompressorSpec {
            tag: "C1".into(),
            kind: CompressorKind::LubricatedScrew,
            control: Control::LoadUnload,
            cooling: Cooling::Air,
            rated_power_kw: 75.0,
            rated_flow_m3_min: 12.5,
            rated_pressure_bar_g: 7.5,
            unloaded_power_fraction: 0.28,
            no_load_power_kw: None,
            nameplate_motor_kw: None,
            max_pressure_bar_g: None,
            unloaded_level_kw: None,
            loaded_level_kw: None,
            stages: 1,
            rated_specific_power_kw_per_m3_min: None,
            power_curve: vec![],
            year: Some(2009),
        },
        CompressorSpec {
            tag: "C2".into(),
            kind: CompressorKind::LubricatedScrew,
            control: Control::LoadUnload,
            cooling: Cooling::Air,
            rated_power_kw: 55.0,
            rated_flow_m3_min: 9.2,
            rated_pressure_bar_g: 7.5,
            unloaded_power_fraction: 0.25,
            no_load_power_kw: None,
            nameplate_motor_kw: None,
            max_pressure_bar_g: None,
            unloaded_level_kw: None,
            loaded_level_kw: None,
            stages: 1,
            rated_specific_power_kw_per_m3_min: None,
            power_curve: vec![],
            year: Some(2014),
        },
        CompressorSpec {
            tag: "C3".into(),
            kind: CompressorKind::LubricatedScrew,
            control: Control::VariableSpeed,
            cooling: Cooling::Water,
            rated_power_kw: 45.0,
            rated_flow_m3_min: 7.6,
            rated_pressure_bar_g: 7.5,
            // Minimum-speed power over full-load power: 14.0 / 45.0.
            unloaded_power_fraction: 14.0 / 45.0,
            no_load_power_kw: None,
            nameplate_motor_kw: None,
            max_pressure_bar_g: None,
            unloaded_level_kw: None,
            loaded_level_kw: None,
            stages: 1,
            rated_specific_power_kw_per_m3_min: None,
            power_curve: vec![(2.0, 14.0), (3.4, 20.6), (4.8, 27.6), (6.2, 35.6), (7.6, 45.0)],
            year: Some(2021),
        },
    ]
}

pub(super) fn site(notes: String) -> DemoSite {
    DemoSite {
        altitude_m: ALTITUDE_M,
        inlet_temperature_c: INLET_C,
        electricity_price_per_kwh: 0.16,
        demand_charge_per_kw_month: 9.5,
        currency: "EUR".into(),
        operating_weeks_per_year: 50.0,
        heating_fuel_price_per_kwh: 0.07,
        heater_efficiency: 0.9,
        heating_months: vec![1, 2, 3, 4, 10, 11, 12],
        grid_co2_kg_per_kwh: 0.38,
        fuel_co2_kg_per_kwh: 0.2,
        timezone: TIMEZONE.into(),
        auditor: "R. Tessmer (invented)".into(),
        notes,
    }
}

/// ISO 2533 standard atmosphere (ASHRAE Handbook - Fundamentals ch. 1 eq. 3), kPa.
pub(super) fn atmosphere_kpa(altitude_m: f64) -> f64 {
    101.325 * (1.0 - 2.25577e-5 * altitude_m).powf(5.2559)
}

/// The notes an auditor would write about the plant and its logging.
pub(super) fn notes(
    days: u32,
    period_start: &str,
    interval_s: u64,
    press_interval_s: u64,
    shutdown_start: &str,
    shutdown_end: &str,
) -> String {
    format!(
        "Invented demo plant: Brackwen Castings, compressor house 2, Lindhaven an der Ebre (neither \
         exists). Aluminium die casting in two shifts Monday to Friday and a short Saturday morning \
         shift. C1 (2009) is the base machine, C3 the variable-speed trim, C2 the standby that comes in \
         at peaks. Receiver {RECEIVER_M3} m³ in the compressor house, about {OTHER_VOLUME_M3} m³ of \
         piping, dryer and filters. Logged {} days from {} at {} s (power) and {} s (header pressure \
         and flow); the header logger's clock was found {} s fast. Maintenance stop with every \
         compressor off from {} to {}.",
        days,
        local_time(period_start, TIMEZONE),
        interval_s,
        press_interval_s,
        PRESSURE_LOGGER_FAST_S,
        local_time(shutdown_start, TIMEZONE),
        local_time(shutdown_end, TIMEZONE)
    )
}
