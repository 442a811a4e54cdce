/*!
The built-in demo: an invented plant, "Brackwen Castings, compressor house 2" in the invented town of
Lindhaven an der Ebre, and one week of logger files made by a deterministic physics simulation.

Nothing here does IO. [`demo_plant`] returns the plant's data-sheet values, two logger files (CSV text
plus the `Logger files` mapping of API.md) and the simulation's own truth, so that the caller can write
the files and import them through the normal ingest path, and tests can compare what the analysis finds
with what the simulation did.

## The physics
- One pressure node (receiver + piping + dryer, volume V), isothermal, in free air at the site's inlet
  conditions: `V dp/dt = p_atm (Q_supply - Q_demand)` (the receiver equation used by bleed-down tests,
  US DOE, *Improving Compressed Air System Performance: A Sourcebook for Industry*, leaks fact
  sheet). Integrated with explicit Euler at 0.5 s.
- Leaks are choked orifices, so their free-air flow is proportional to absolute pressure:
  `Q_leak = c p_abs`, with c chosen to give 2.4 m³/min at 7 bar(g) (ideal choked flow through an
  orifice is proportional to the upstream absolute pressure).
- C1 and C2 are load/unload screws with pressure bands, a star-delta start delay, a blow-down after
  unloading (power falls from about 65 % to the unloaded fraction with a 20 s time constant, common
  practice) and a 10 min run-on timer before they stop.
- C3 is a variable-speed screw holding 7.0 bar(g) with a PI law between its minimum and maximum flow;
  its power is its data-sheet curve. It stops when it cannot turn down far enough (7.6 bar(g)) and
  restarts below 6.9 bar(g).
- Package power rises with discharge pressure by 7 % per bar above or below the rated pressure ("each
  2 psi costs about 1 %", US DOE, *Improving Compressed Air System Performance: A Sourcebook for
  Industry*). A stopped package draws 0.1 kW for its controller (common practice).
- Demand: two shifts Monday to Friday (06:00-14:00 at 17.5 m³/min with a break at 11:45, 14:00-22:00
  at 12 m³/min with a break at 18:00, both breaks at 60 %), Saturday 06:00-12:00 at 5 m³/min, Sunday
  none; a slow and a fast random walk (Ornstein-Uhlenbeck) and short blow-off spikes on top, all in
  local time (Europe/Berlin).
- Maintenance stop: on the first Sunday of the period, 10:00-10:30 local, every compressor is off and the
  pressure decays with only the leaks drawing air. A period without a Sunday (fewer than 7 days) has
  its stop on the first night, 02:00-02:30.

## The logger files
- `power_logger.csv`: true-power logger, `;` and decimal comma, a 3-line preamble, local time
  Europe/Berlin as `dd.mm.yyyy HH:MM:SS`; each value is the **mean** over the interval that **ends** at
  its time stamp (default 5 s), with small meter noise.
- `header_flow_logger.csv`: `,` and decimal point, RFC 3339 UTC stamps, every 2 intervals (default 10 s);
  header pressure in bar(g) as an **instantaneous** sample, flow from a thermal mass flow meter in the
  main header downstream of the receiver (it sees all demand, leaks included) in Nm³/h at DIN 1343
  normal conditions (101.325 kPa, 0 °C) as the **mean** over its interval, the inlet temperature, and
  the pressure at the press shop at the far end of the main (a point of use: the header's reading
  less 0.0001 bar per (m³/min)² of system flow, a drop growing with the square of the flow).
  Its clock runs 7 s fast: the mapping says `"clock_offset_s": -7`, meaning true time = stamp + offset.

The default week, 2026-03-09 to 2026-03-16, has no daylight-saving change (Europe/Berlin changes on
2026-03-29). Longer periods cross it and the local-time power file then has the usual gap or repeat.
*/

mod calendar;
mod files;
mod noise;
mod physics;
mod plant;
#[cfg(test)]
mod tests;

use crate::core::model::CompressorSpec;

pub use calendar::civil_from_days;
pub use physics::simulate;

/// The invented plant with its logger files and the simulation's truth.
#[derive(Debug, Clone)]
pub struct DemoPlant {
    pub audit_name: String,
    pub site: DemoSite,
    pub compressors: Vec<CompressorSpec>,
    /// Receivers: name and volume, m³.
    pub receivers: Vec<(String, f64)>,
    /// Piping, dryer and filter volume, m³.
    pub other_volume_m3: f64,
    pub files: Vec<DemoFile>,
    pub truth: DemoTruth,
}

/// Site data as an auditor would enter it.
#[derive(Debug, Clone, PartialEq)]
pub struct DemoSite {
    pub altitude_m: f64,
    pub inlet_temperature_c: f64,
    pub electricity_price_per_kwh: f64,
    pub demand_charge_per_kw_month: f64,
    pub currency: String,
    pub operating_weeks_per_year: f64,
    pub heating_fuel_price_per_kwh: f64,
    pub heater_efficiency: f64,
    pub heating_months: Vec<u8>,
    pub grid_co2_kg_per_kwh: f64,
    /// Natural gas, about 0.2 kg CO2 per kWh of fuel (common practice).
    pub fuel_co2_kg_per_kwh: f64,
    pub timezone: String,
    pub auditor: String,
    pub notes: String,
}

/// One logger file: its name, its text as logged, and its mapping (API.md `Logger files`).
#[derive(Debug, Clone)]
pub struct DemoFile {
    pub filename: String,
    pub csv: String,
    pub mapping: serde_json::Value,
}

/// What the simulation did, for tests. Flows and volumes are free air at the site's inlet conditions.
#[derive(Debug, Clone, PartialEq)]
pub struct DemoTruth {
    pub leak_coefficient_m3_min_per_bar_abs: f64,
    pub leak_flow_at_7_bar_g_m3_min: f64,
    /// Integral of each package's true input power (before meter noise), kWh.
    pub energy_kwh_by_compressor: Vec<(String, f64)>,
    /// Free air drawn from the system (production + leaks): what the header flow meter sees, m³.
    pub air_m3: f64,
    /// Maintenance stop, RFC 3339 UTC.
    pub shutdown_start: String,
    pub shutdown_end: String,
    /// Free air the compressors delivered, m³.
    pub supply_air_m3: f64,
    /// Free air lost to leaks, m³.
    pub leak_air_m3: f64,
    /// Receivers + other volume, m³.
    pub system_volume_m3: f64,
    /// Site atmosphere from altitude (the ISO 2533 standard atmosphere, ASHRAE Handbook - Fundamentals
    /// ch. 1 eq. 3), kPa.
    pub atmospheric_pressure_kpa_abs: f64,
    /// Simulated period, RFC 3339 UTC (the first and last instants of the simulation).
    pub period_start: String,
    pub period_end: String,
    pub start_pressure_bar_g: f64,
    pub end_pressure_bar_g: f64,
    /// True header pressure when the maintenance stop began and ended, bar(g).
    pub shutdown_start_pressure_bar_g: f64,
    pub shutdown_end_pressure_bar_g: f64,
    /// Time delivering air / simulated time (for the variable-speed machine: time running).
    pub loaded_fraction_by_compressor: Vec<(String, f64)>,
    /// Lowest and highest true header pressure during production hours, bar(g).
    pub production_min_pressure_bar_g: f64,
    pub production_max_pressure_bar_g: f64,
}

/// Size of the simulation.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct DemoOptions {
    /// Simulated days from Monday 2026-03-09 00:00 local time (default 7).
    pub days: u32,
    /// Power logger interval, s (default 5); the header/flow logger uses twice this.
    pub interval_s: u32,
    /// Seed of the process and meter noise.
    pub seed: u64,
}

impl Default for DemoOptions {
    fn default() -> Self {
        Self { days: 7, interval_s: 5, seed: 0x00A1_71ED_6E72 }
    }
}

/// The built-in demo: 7 days, power logged every 5 s, header pressure and flow every 10 s.
pub fn demo_plant() -> DemoPlant {
    simulate(&DemoOptions::default())
}

/// The demo plant's treatment equipment and end-use inventory, as the API takes them (list, body).
/// Invented for the demo scenario. The simulated logs carry no purge or drain air, so the dryer is
/// a non-cycling refrigerated one and the drains are level-sensing: the records add the demand
/// split and the end-use measure without changing what the logs say about leaks.
pub fn demo_treatment() -> Vec<(&'static str, serde_json::Value)> {
    use serde_json::json;
    vec![
        (
            "dryers",
            json!({"tag": "RD1", "kind": "refrigerated", "rated_flow_m3_min": 20.0, "power_kw": 3.2,
                   "control": "fixed_cycle"}),
        ),
        ("drains", json!({"tag": "LD1", "kind": "zero_loss"})),
        ("drains", json!({"tag": "LD2", "kind": "float"})),
        (
            "end-uses",
            json!({"name": "assembly tools", "kind": "tool", "count": 14, "flow_m3_min": 0.45, "pressure_bar_g": 6.0,
                   "duty": 0.35, "regulated": true}),
        ),
        (
            "end-uses",
            json!({"name": "blow-off at the fettling line", "kind": "open_blowing", "count": 3, "orifice_mm": 2.0,
                   "pressure_bar_g": 6.0, "duty": 0.6, "regulated": false, "alternative_kw": 0.37}),
        ),
        (
            "end-uses",
            json!({"name": "panel cooler, core shop", "kind": "cabinet_cooler", "count": 1, "flow_m3_min": 0.55,
                   "pressure_bar_g": 6.0, "duty": 0.8, "regulated": true, "alternative_kw": 0.3}),
        ),
    ]
}
