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
  FIELD-NOTES §5). Integrated with explicit Euler at 0.5 s.
- Leaks are choked orifices, so their free-air flow is proportional to absolute pressure:
  `Q_leak = c p_abs`, with c chosen to give 2.4 m³/min at 7 bar(g) (FIELD-NOTES §5).
- C1 and C2 are load/unload screws with pressure bands, a star-delta start delay, a blow-down after
  unloading (power falls from about 65 % to the unloaded fraction with a 20 s time constant, common
  practice) and a 10 min run-on timer before they stop.
- C3 is a variable-speed screw holding 7.0 bar(g) with a PI law between its minimum and maximum flow;
  its power is its data-sheet curve. It stops when it cannot turn down far enough (7.6 bar(g)) and
  restarts below 6.9 bar(g).
- Package power rises with discharge pressure by 7 % per bar above or below the rated pressure ("each
  2 psi costs about 1 %", FIELD-NOTES §6). A stopped package draws 0.1 kW for its controller (common
  practice).
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
  normal conditions (101.325 kPa, 0 °C) as the **mean** over its interval, and the inlet temperature.
  Its clock runs 7 s fast: the mapping says `"clock_offset_s": -7`, meaning true time = stamp + offset.

The default week, 2026-03-09 to 2026-03-16, has no daylight-saving change (Europe/Berlin changes on
2026-03-29). Longer periods cross it and the local-time power file then has the usual gap or repeat.
*/

use std::fmt::Write as _;

use serde_json::json;

use crate::core::model::{CompressorKind, CompressorSpec, Control, Cooling};
use crate::core::units::{PressureAbs, ReferenceConditions, SiteAir};

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
    /// Site atmosphere from altitude (ISO 2533, FIELD-NOTES §2), kPa.
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

// ---------------------------------------------------------------------------------------------------
// Plant data

const ALTITUDE_M: f64 = 180.0;
const INLET_C: f64 = 18.0;
const RECEIVER_M3: f64 = 6.0;
const OTHER_VOLUME_M3: f64 = 1.5;
/// Leak flow at 7 bar(g) the leak coefficient is chosen for, m³/min.
const LEAK_AT_7_BAR_G_M3_MIN: f64 = 2.4;
/// Internal integration step, s.
const DT_S: f64 = 0.5;
/// The header/flow logger's clock runs this many seconds fast.
const PRESSURE_LOGGER_FAST_S: u64 = 7;
/// Package power changes by this fraction per bar of discharge pressure (FIELD-NOTES §6: ~1 % per
/// 2 psi).
const POWER_PER_BAR: f64 = 0.07;
/// Controller power of a stopped package, kW (common practice).
const STANDBY_KW: f64 = 0.1;

/// Monday 2026-03-09 00:00 CET as Unix seconds (UTC 2026-03-08T23:00:00Z).
fn period_start_unix_s() -> i64 {
    days_from_civil(2026, 3, 9) * 86_400 - 3_600
}

fn compressors() -> Vec<CompressorSpec> {
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
            stages: 1,
            rated_specific_power_kw_per_m3_min: None,
            power_curve: vec![(2.0, 14.0), (3.4, 20.6), (4.8, 27.6), (6.2, 35.6), (7.6, 45.0)],
            year: Some(2021),
        },
    ]
}

fn site(notes: String) -> DemoSite {
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
        timezone: "Europe/Berlin".into(),
        auditor: "R. Tessmer (invented)".into(),
        notes,
    }
}

/// ISO 2533 standard atmosphere (ASHRAE Fundamentals ch. 1 eq. 3, FIELD-NOTES §2), kPa.
fn atmosphere_kpa(altitude_m: f64) -> f64 {
    101.325 * (1.0 - 2.25577e-5 * altitude_m).powf(5.2559)
}

// ---------------------------------------------------------------------------------------------------
// Noise: xorshift64* seeded through splitmix64, Gaussian by Box-Muller. No external crate, so the
// bytes of the demo never change with a dependency update.

struct Rng(u64);

impl Rng {
    fn new(seed: u64) -> Self {
        // splitmix64 turns any seed (0 included) into a well-mixed non-zero state.
        let mut z = seed.wrapping_add(0x9E37_79B9_7F4A_7C15);
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^= z >> 31;
        Self(if z == 0 { 0x2545_F491_4F6C_DD1D } else { z })
    }
    fn next_u64(&mut self) -> u64 {
        let mut x = self.0;
        x ^= x >> 12;
        x ^= x << 25;
        x ^= x >> 27;
        self.0 = x;
        x.wrapping_mul(0x2545_F491_4F6C_DD1D)
    }
    /// Uniform in (0, 1].
    fn uniform(&mut self) -> f64 {
        ((self.next_u64() >> 11) as f64 + 1.0) / (1u64 << 53) as f64
    }
    fn gauss(&mut self) -> f64 {
        let u1 = self.uniform();
        let u2 = self.uniform();
        (-2.0 * u1.ln()).sqrt() * (std::f64::consts::TAU * u2).cos()
    }
}

// ---------------------------------------------------------------------------------------------------
// Calendar (proleptic Gregorian, Howard Hinnant's algorithms) and the Europe/Berlin rule (EU summer
// time: last Sunday of March 01:00 UTC to last Sunday of October 01:00 UTC, UTC+1 otherwise).

fn days_from_civil(y: i64, m: u32, d: u32) -> i64 {
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let m = i64::from(m);
    let doy = (153 * (if m > 2 { m - 3 } else { m + 9 }) + 2) / 5 + i64::from(d) - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let y = yoe + era * 400 + i64::from(m <= 2);
    (y, m, d)
}

/// Weekday, 0 = Monday (1970-01-01 was a Thursday).
fn weekday_monday0(days: i64) -> u32 {
    (days + 3).rem_euclid(7) as u32
}

fn last_sunday_unix_s(year: i64, month: u32) -> i64 {
    // March and October both have 31 days.
    let d31 = days_from_civil(year, month, 31);
    let sunday = d31 - i64::from((weekday_monday0(d31) + 1) % 7);
    sunday * 86_400
}

fn berlin_offset_s(unix_s: i64) -> i64 {
    let (year, _, _) = civil_from_days(unix_s.div_euclid(86_400));
    let summer_from = last_sunday_unix_s(year, 3) + 3_600;
    let summer_to = last_sunday_unix_s(year, 10) + 3_600;
    if (summer_from..summer_to).contains(&unix_s) {
        7_200
    } else {
        3_600
    }
}

/// Local (Europe/Berlin) day number and seconds into the day.
fn berlin_local(unix_s: i64) -> (i64, i64) {
    let local = unix_s + berlin_offset_s(unix_s);
    (local.div_euclid(86_400), local.rem_euclid(86_400))
}

fn push_rfc3339_utc(out: &mut String, unix_s: i64) {
    let (y, mo, d) = civil_from_days(unix_s.div_euclid(86_400));
    let s = unix_s.rem_euclid(86_400);
    let _ = write!(out, "{y:04}-{mo:02}-{d:02}T{:02}:{:02}:{:02}Z", s / 3600, s / 60 % 60, s % 60);
}

fn rfc3339_utc(unix_s: i64) -> String {
    let mut s = String::new();
    push_rfc3339_utc(&mut s, unix_s);
    s
}

fn push_berlin_dmy(out: &mut String, unix_s: i64) {
    let (day, s) = berlin_local(unix_s);
    let (y, mo, d) = civil_from_days(day);
    let _ = write!(out, "{d:02}.{mo:02}.{y:04} {:02}:{:02}:{:02}", s / 3600, s / 60 % 60, s % 60);
}

/// A number with a decimal comma.
fn push_comma(out: &mut String, v: f64, decimals: usize) {
    let start = out.len();
    let _ = write!(out, "{v:.decimals$}");
    if let Some(i) = out[start..].find('.') {
        out.replace_range(start + i..start + i + 1, ",");
    }
}

// ---------------------------------------------------------------------------------------------------
// Demand

/// Mean production draw of the early shift, the late shift and the Saturday shift, m³/min.
const SHIFT_1_M3_MIN: f64 = 17.5;
const SHIFT_2_M3_MIN: f64 = 12.0;
const SATURDAY_M3_MIN: f64 = 5.0;
/// Draw during a break, as a fraction of the shift's.
const BREAK_FACTOR: f64 = 0.6;

/// Production draw before noise, m³/min free air, by local weekday (0 = Monday) and second of day.
fn production_base_m3_min(weekday: u32, second_of_day: i64) -> f64 {
    let h = second_of_day as f64 / 3600.0;
    match weekday {
        0..=4 => {
            if (6.0..14.0).contains(&h) {
                if (11.75..12.25).contains(&h) {
                    SHIFT_1_M3_MIN * BREAK_FACTOR
                } else {
                    SHIFT_1_M3_MIN
                }
            } else if (14.0..22.0).contains(&h) {
                if (18.0..18.5).contains(&h) {
                    SHIFT_2_M3_MIN * BREAK_FACTOR
                } else {
                    SHIFT_2_M3_MIN
                }
            } else {
                0.0
            }
        }
        5 if (6.0..12.0).contains(&h) => SATURDAY_M3_MIN,
        _ => 0.0,
    }
}

// ---------------------------------------------------------------------------------------------------
// Compressors

#[derive(Debug, Clone, Copy, PartialEq)]
enum LuState {
    Off,
    Starting { remaining_s: f64 },
    Loaded,
    Unloaded { since_s: f64 },
}

struct LoadUnload {
    rated_kw: f64,
    rated_flow_m3_min: f64,
    rated_bar_g: f64,
    unloaded_fraction: f64,
    load_below_bar_g: f64,
    unload_at_bar_g: f64,
    state: LuState,
}

/// Star-delta start before the machine can load, s (common practice).
const START_DELAY_S: f64 = 8.0;
/// Unloaded run-on before the machine stops, s.
const RUN_ON_S: f64 = 600.0;
/// Blow-down of the oil sump after unloading: starting fraction of full power and time constant.
const BLOWDOWN_START_FRACTION: f64 = 0.65;
const BLOWDOWN_TAU_S: f64 = 20.0;

impl LoadUnload {
    /// Advance the controller one step at header pressure `p_bar_g`; returns (flow m³/min, kW).
    fn step(&mut self, p_bar_g: f64, forced_off: bool) -> (f64, f64) {
        if forced_off {
            self.state = LuState::Off;
        }
        let state = self.state;
        let (next, flow, kw) = match state {
            LuState::Off => {
                let next = if !forced_off && p_bar_g < self.load_below_bar_g {
                    LuState::Starting { remaining_s: START_DELAY_S }
                } else {
                    LuState::Off
                };
                (next, 0.0, STANDBY_KW)
            }
            LuState::Starting { remaining_s } => {
                let left = remaining_s - DT_S;
                let next =
                    if left <= 0.0 { LuState::Loaded } else { LuState::Starting { remaining_s: left } };
                (next, 0.0, self.rated_kw * self.unloaded_fraction)
            }
            LuState::Loaded => {
                let kw = self.rated_kw * (1.0 + POWER_PER_BAR * (p_bar_g - self.rated_bar_g));
                let next = if p_bar_g >= self.unload_at_bar_g {
                    LuState::Unloaded { since_s: 0.0 }
                } else {
                    LuState::Loaded
                };
                (next, self.rated_flow_m3_min, kw)
            }
            LuState::Unloaded { since_s } => {
                let u = self.unloaded_fraction;
                let fraction = u + (BLOWDOWN_START_FRACTION - u) * (-since_s / BLOWDOWN_TAU_S).exp();
                let next = if p_bar_g < self.load_below_bar_g {
                    LuState::Loaded
                } else if since_s + DT_S >= RUN_ON_S {
                    LuState::Off
                } else {
                    LuState::Unloaded { since_s: since_s + DT_S }
                };
                (next, 0.0, self.rated_kw * fraction)
            }
        };
        self.state = next;
        (flow, kw)
    }
}

struct VariableSpeed {
    curve: Vec<(f64, f64)>,
    rated_bar_g: f64,
    setpoint_bar_g: f64,
    stop_at_bar_g: f64,
    restart_below_bar_g: f64,
    /// Proportional gain, m³/min per bar; integral gain, m³/min per bar s.
    kp: f64,
    ki: f64,
    integral_m3_min: f64,
    flow_m3_min: f64,
    running: bool,
}

/// Speed ramp of the drive, m³/min per s (common practice for a drive's acceleration limit).
const VSD_RAMP_M3_MIN_PER_S: f64 = 0.5;

impl VariableSpeed {
    fn min_flow(&self) -> f64 {
        self.curve[0].0
    }
    fn max_flow(&self) -> f64 {
        self.curve[self.curve.len() - 1].0
    }

    fn curve_kw(&self, q: f64) -> f64 {
        let c = &self.curve;
        let q = q.clamp(self.min_flow(), self.max_flow());
        for w in c.windows(2) {
            let ((q0, p0), (q1, p1)) = (w[0], w[1]);
            if q <= q1 {
                return p0 + (p1 - p0) * (q - q0) / (q1 - q0);
            }
        }
        c[c.len() - 1].1
    }

    fn step(&mut self, p_bar_g: f64, forced_off: bool) -> (f64, f64) {
        if forced_off {
            self.running = false;
            self.flow_m3_min = 0.0;
            return (0.0, STANDBY_KW);
        }
        if !self.running {
            if p_bar_g < self.restart_below_bar_g {
                self.running = true;
                self.flow_m3_min = self.min_flow();
                self.integral_m3_min = self.min_flow();
            } else {
                return (0.0, STANDBY_KW);
            }
        }
        let (qmin, qmax) = (self.min_flow(), self.max_flow());
        let e = self.setpoint_bar_g - p_bar_g;
        // Integrate only while the output is not pinned at a limit in the same direction (anti-windup).
        let unclamped = self.kp * e + self.integral_m3_min;
        if !((unclamped >= qmax && e > 0.0) || (unclamped <= qmin && e < 0.0)) {
            self.integral_m3_min = (self.integral_m3_min + self.ki * e * DT_S).clamp(qmin, qmax);
        }
        let command = (self.kp * e + self.integral_m3_min).clamp(qmin, qmax);
        let max_change = VSD_RAMP_M3_MIN_PER_S * DT_S;
        self.flow_m3_min += (command - self.flow_m3_min).clamp(-max_change, max_change);
        let q = self.flow_m3_min;
        let kw = self.curve_kw(q) * (1.0 + POWER_PER_BAR * (p_bar_g - self.rated_bar_g));
        if q <= qmin + 1e-9 && p_bar_g >= self.stop_at_bar_g {
            self.running = false;
            self.flow_m3_min = 0.0;
        }
        (q, kw)
    }
}

// ---------------------------------------------------------------------------------------------------
// The simulation

/// Build the plant and simulate `options.days` days from Monday 2026-03-09 00:00 Europe/Berlin.
pub fn simulate(options: &DemoOptions) -> DemoPlant {
    let days = options.days.max(1);
    let interval_s = u64::from(options.interval_s.max(1));
    let specs = compressors();
    let atm_kpa = atmosphere_kpa(ALTITUDE_M);
    let atm = PressureAbs::from_kpa_abs(atm_kpa);
    let site_air = SiteAir::new(atm_kpa, INLET_C);
    let volume_m3 = RECEIVER_M3 + OTHER_VOLUME_M3;
    let atm_bar = atm.bar_abs();
    let leak_c = LEAK_AT_7_BAR_G_M3_MIN / (7.0 + atm_bar);

    let t0 = period_start_unix_s();
    let total_s = u64::from(days) * 86_400;
    // Maintenance stop: first Sunday 10:00-10:30 local, or the first night 02:00-02:30.
    let stop_offset_s: u64 = if days >= 7 { 6 * 86_400 + 10 * 3_600 } else { 2 * 3_600 };
    let stop_from_s = stop_offset_s;
    let stop_to_s = stop_offset_s + 1_800;

    let mut c1 = LoadUnload {
        rated_kw: specs[0].rated_power_kw,
        rated_flow_m3_min: specs[0].rated_flow_m3_min,
        rated_bar_g: specs[0].rated_pressure_bar_g,
        unloaded_fraction: specs[0].unloaded_power_fraction,
        load_below_bar_g: 6.9,
        unload_at_bar_g: 7.5,
        state: LuState::Off,
    };
    let mut c2 = LoadUnload {
        rated_kw: specs[1].rated_power_kw,
        rated_flow_m3_min: specs[1].rated_flow_m3_min,
        rated_bar_g: specs[1].rated_pressure_bar_g,
        unloaded_fraction: specs[1].unloaded_power_fraction,
        load_below_bar_g: 6.7,
        unload_at_bar_g: 7.3,
        state: LuState::Off,
    };
    let mut p_bar_g = 7.0;
    // Sunday night before the period: only the trim machine runs, matching the leaks.
    let mut c3 = VariableSpeed {
        curve: specs[2].power_curve.clone(),
        rated_bar_g: specs[2].rated_pressure_bar_g,
        setpoint_bar_g: 7.0,
        stop_at_bar_g: 7.6,
        restart_below_bar_g: 6.9,
        kp: 20.0,
        ki: 0.3,
        integral_m3_min: leak_c * (p_bar_g + atm_bar),
        flow_m3_min: leak_c * (p_bar_g + atm_bar),
        running: true,
    };

    let mut process = Rng::new(options.seed);
    let mut meter = Rng::new(options.seed ^ 0x05EE_D0F3_E7E5);

    // Demand state: lagged base, slow and fast random walks, one spike at a time.
    let mut base_lag = 0.0;
    let mut slow = 0.0;
    let mut fast = 0.0;
    let mut spike_left_s = 0.0;
    let mut spike_m3_min = 0.0;
    let slow_tau = 600.0;
    let slow_sigma = 0.10;
    let fast_tau = 20.0;
    let fast_sigma = 0.05;
    let base_tau = 180.0;
    let spikes_per_s = 4.0 / 3600.0;

    // Integrals.
    let mut energy_kws = [0.0f64; 3];
    let mut loaded_steps = [0u64; 3];
    let mut supply_m3 = 0.0;
    let mut demand_m3 = 0.0;
    let mut leak_m3 = 0.0;
    let mut shutdown_p = (f64::NAN, f64::NAN);
    let mut prod_min = f64::INFINITY;
    let mut prod_max = f64::NEG_INFINITY;
    let start_p = p_bar_g;

    // Logger accumulators. Steps per power interval; the pressure logger reads at 2 intervals.
    let steps_per_s = (1.0 / DT_S) as u64;
    let power_bin = interval_s * steps_per_s;
    let press_interval_s = 2 * interval_s;
    let press_bin = press_interval_s * steps_per_s;
    let fast_offset_steps = PRESSURE_LOGGER_FAST_S * steps_per_s;
    let mut power_sum = [0.0f64; 3];
    let mut power_n = 0u64;
    let mut flow_sum = 0.0;
    let mut flow_n = 0u64;
    // Steps to the next reading of each logger. The header logger reads when its fast clock shows
    // a multiple of its interval, i.e. `fast_offset_steps` before a true multiple.
    let mut power_due = power_bin;
    let mut press_due = press_bin - fast_offset_steps % press_bin;

    let n_steps = total_s * steps_per_s;
    let power_rows = (total_s / interval_s) as usize;
    let mut power_csv = String::with_capacity(power_rows * 48 + 256);
    let _ = writeln!(power_csv, "Logger;three-phase true power, 3 channels (invented)");
    let _ = writeln!(power_csv, "Site;Brackwen Castings, compressor house 2");
    let _ = writeln!(power_csv, "Interval;{interval_s} s mean");
    power_csv.push_str("Time;C1 kW;C2 kW;C3 kW\n");
    let mut press_csv = String::with_capacity((total_s / press_interval_s) as usize * 48 + 64);
    press_csv.push_str("time_utc,header_bar_g,flow_Nm3_h,inlet_temp_C\n");

    let norm = ReferenceConditions::NORMAL_DIN_1343;
    let nm3_h_per_m3_min = site_air.reference_from_free_air(60.0, norm);

    for n in 0..n_steps {
        let t_s = n as f64 * DT_S;
        let unix_s = t0 + (n / steps_per_s) as i64;
        let (day, sod) = berlin_local(unix_s);
        let wd = weekday_monday0(day);
        let base = production_base_m3_min(wd, sod);
        let forced_off = (stop_from_s as f64..stop_to_s as f64).contains(&t_s);
        if t_s == stop_from_s as f64 {
            shutdown_p.0 = p_bar_g;
        }
        if t_s == stop_to_s as f64 {
            shutdown_p.1 = p_bar_g;
        }

        // Demand.
        base_lag += (base - base_lag) * DT_S / base_tau;
        slow += -slow * DT_S / slow_tau + slow_sigma * (2.0 * DT_S / slow_tau).sqrt() * process.gauss();
        fast += -fast * DT_S / fast_tau + fast_sigma * (2.0 * DT_S / fast_tau).sqrt() * process.gauss();
        if spike_left_s > 0.0 {
            spike_left_s -= DT_S;
        } else if base > 1.0 && process.uniform() < spikes_per_s * DT_S {
            spike_left_s = 20.0 + 100.0 * process.uniform();
            spike_m3_min = 1.5 + 2.0 * process.uniform();
        }
        let spike = if spike_left_s > 0.0 && base_lag > 1.0 { spike_m3_min } else { 0.0 };
        let production = (base_lag * (1.0 + slow + fast) + spike).max(0.0);
        let p_abs_bar = p_bar_g + atm_bar;
        let leak = leak_c * p_abs_bar;
        let demand = production + leak;

        if base > 1.0 && base_lag > 0.95 * base && !forced_off {
            prod_min = prod_min.min(p_bar_g);
            prod_max = prod_max.max(p_bar_g);
        }

        // Supply.
        let (q1, p1) = c1.step(p_bar_g, forced_off);
        let (q2, p2) = c2.step(p_bar_g, forced_off);
        let (q3, p3) = c3.step(p_bar_g, forced_off);
        let supply = q1 + q2 + q3;
        let kw = [p1, p2, p3];
        for i in 0..3 {
            energy_kws[i] += kw[i] * DT_S;
            power_sum[i] += kw[i];
        }
        // Delivering air: loaded for C1 and C2, running for C3.
        for (i, q) in [q1, q2, q3].into_iter().enumerate() {
            loaded_steps[i] += u64::from(q > 0.0);
        }
        power_n += 1;
        flow_sum += demand;
        flow_n += 1;

        // Receiver equation, free air at inlet conditions: V dp/dt = p_atm (Q_s - Q_d).
        supply_m3 += supply / 60.0 * DT_S;
        demand_m3 += demand / 60.0 * DT_S;
        leak_m3 += leak / 60.0 * DT_S;
        p_bar_g += atm_bar * (supply - demand) / 60.0 * DT_S / volume_m3;

        // Loggers, at the end of this step.
        let end = n + 1;
        let end_unix = t0 + (end / steps_per_s) as i64;
        power_due -= 1;
        press_due -= 1;
        if power_due == 0 {
            power_due = power_bin;
            push_berlin_dmy(&mut power_csv, end_unix);
            for s in &power_sum {
                let mean = s / power_n as f64;
                let v = (mean + meter.gauss() * (0.002 * mean + 0.02)).max(0.0);
                power_csv.push(';');
                push_comma(&mut power_csv, v, 2);
            }
            power_csv.push('\n');
            power_sum = [0.0; 3];
            power_n = 0;
        }
        if press_due == 0 {
            press_due = press_bin;
            if flow_n == press_bin {
                let stamp = end_unix + PRESSURE_LOGGER_FAST_S as i64;
                push_rfc3339_utc(&mut press_csv, stamp);
                let p_read = p_bar_g + 0.004 * meter.gauss();
                let q_mean = flow_sum / flow_n as f64;
                let nm3_h = (q_mean * nm3_h_per_m3_min * (1.0 + 0.005 * meter.gauss()) + 0.5 * meter.gauss())
                    .max(0.0);
                // Inlet air: a gentle daily swing around the site value, coldest at 05:00 local.
                let (_, sod_end) = berlin_local(end_unix);
                let phase = (sod_end as f64 / 3600.0 - 11.0) / 24.0 * std::f64::consts::TAU;
                let t_in = INLET_C + 1.5 * phase.sin() + 0.1 * meter.gauss();
                let _ = writeln!(press_csv, ",{p_read:.3},{nm3_h:.1},{t_in:.1}");
            }
            flow_sum = 0.0;
            flow_n = 0;
        }
    }

    let tags: Vec<String> = specs.iter().map(|s| s.tag.clone()).collect();
    let steps_total = n_steps as f64;
    let truth = DemoTruth {
        leak_coefficient_m3_min_per_bar_abs: leak_c,
        leak_flow_at_7_bar_g_m3_min: leak_c * (7.0 + atm_bar),
        energy_kwh_by_compressor: tags.iter().zip(energy_kws).map(|(t, e)| (t.clone(), e / 3600.0)).collect(),
        air_m3: demand_m3,
        shutdown_start: rfc3339_utc(t0 + stop_from_s as i64),
        shutdown_end: rfc3339_utc(t0 + stop_to_s as i64),
        supply_air_m3: supply_m3,
        leak_air_m3: leak_m3,
        system_volume_m3: volume_m3,
        atmospheric_pressure_kpa_abs: atm_kpa,
        period_start: rfc3339_utc(t0),
        period_end: rfc3339_utc(t0 + total_s as i64),
        start_pressure_bar_g: start_p,
        end_pressure_bar_g: p_bar_g,
        shutdown_start_pressure_bar_g: shutdown_p.0,
        shutdown_end_pressure_bar_g: shutdown_p.1,
        loaded_fraction_by_compressor: tags
            .iter()
            .zip(loaded_steps)
            .map(|(t, n)| (t.clone(), n as f64 / steps_total))
            .collect(),
        production_min_pressure_bar_g: prod_min,
        production_max_pressure_bar_g: prod_max,
    };

    let power_mapping = json!({
        "delimiter": ";",
        "decimal": ",",
        "header_line": 4,
        "timestamp": {"column": "Time", "format": "%d.%m.%Y %H:%M:%S", "timezone": "Europe/Berlin"},
        "columns": [
            {"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"},
            {"column": "C2 kW", "quantity": "power", "unit": "kW", "compressor": "C2"},
            {"column": "C3 kW", "quantity": "power", "unit": "kW", "compressor": "C3"}
        ]
    });
    let press_mapping = json!({
        "delimiter": ",",
        "decimal": ".",
        "header_line": 1,
        "timestamp": {"column": "time_utc", "format": "rfc3339", "timezone": "UTC"},
        "clock_offset_s": -(PRESSURE_LOGGER_FAST_S as i64),
        "columns": [
            {"column": "header_bar_g", "quantity": "pressure", "unit": "bar_g"},
            {"column": "flow_Nm3_h", "quantity": "flow", "unit": "Nm3_h",
             "reference": {"pressure_kpa_abs": norm.pressure_kpa_abs,
                           "temperature_c": norm.temperature_c}},
            {"column": "inlet_temp_C", "quantity": "temperature", "unit": "C"}
        ]
    });

    let notes = format!(
        "Invented demo plant: Brackwen Castings, compressor house 2, Lindhaven an der Ebre (neither \
         exists). Aluminium die casting in two shifts Monday to Friday and a short Saturday morning \
         shift. C1 (2009) is the base machine, C3 the variable-speed trim, C2 the standby that comes in \
         at peaks. Receiver {RECEIVER_M3} m³ in the compressor house, about {OTHER_VOLUME_M3} m³ of \
         piping, dryer and filters. Logged {} days from {} at {} s (power) and {} s (header pressure \
         and flow); the header logger's clock was found {} s fast. Maintenance stop with every \
         compressor off from {} to {}.",
        days,
        truth.period_start,
        interval_s,
        press_interval_s,
        PRESSURE_LOGGER_FAST_S,
        truth.shutdown_start,
        truth.shutdown_end
    );

    DemoPlant {
        audit_name: "Brackwen Castings, compressor house 2 (demo)".into(),
        site: site(notes),
        compressors: specs,
        receivers: vec![("R1 main receiver".into(), RECEIVER_M3)],
        other_volume_m3: OTHER_VOLUME_M3,
        files: vec![
            DemoFile { filename: "power_logger.csv".into(), csv: power_csv, mapping: power_mapping },
            DemoFile { filename: "header_flow_logger.csv".into(), csv: press_csv, mapping: press_mapping },
        ],
        truth,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::collections::hash_map::DefaultHasher;
    use std::hash::{Hash, Hasher};

    fn hash_files(plant: &DemoPlant) -> u64 {
        let mut h = DefaultHasher::new();
        for f in &plant.files {
            f.filename.hash(&mut h);
            f.csv.hash(&mut h);
            f.mapping.to_string().hash(&mut h);
        }
        h.finish()
    }

    /// The built-in demo, simulated once for all the tests that read it.
    fn plant() -> &'static DemoPlant {
        static PLANT: std::sync::OnceLock<DemoPlant> = std::sync::OnceLock::new();
        PLANT.get_or_init(demo_plant)
    }

    fn small(seed: u64) -> DemoOptions {
        DemoOptions { days: 2, interval_s: 5, seed }
    }

    /// Rows of the header/flow file: (true Unix time, bar(g), Nm³/h, inlet °C). The stamps are
    /// parsed here with plain string slicing, independently of the writer, and shifted by the
    /// mapping's clock offset.
    fn header_rows(plant: &DemoPlant) -> Vec<(i64, f64, f64, f64)> {
        let file = &plant.files[1];
        let offset = file.mapping["clock_offset_s"].as_i64().unwrap();
        let mut lines = file.csv.lines();
        assert_eq!(lines.next().unwrap(), "time_utc,header_bar_g,flow_Nm3_h,inlet_temp_C");
        lines
            .map(|l| {
                let f: Vec<&str> = l.split(',').collect();
                assert_eq!(f.len(), 4, "line {l}");
                let ts = f[0];
                assert!(ts.ends_with('Z') && ts.len() == 20, "stamp {ts}");
                let num = |a: usize, b: usize| ts[a..b].parse::<i64>().unwrap();
                let days = days_from_civil(num(0, 4), num(5, 7) as u32, num(8, 10) as u32);
                let unix = days * 86_400 + num(11, 13) * 3600 + num(14, 16) * 60 + num(17, 19);
                (unix + offset, f[1].parse().unwrap(), f[2].parse().unwrap(), f[3].parse().unwrap())
            })
            .collect()
    }

    /// Rows of the power file: (local stamp text, [kW; 3]).
    fn power_rows(plant: &DemoPlant) -> Vec<(String, [f64; 3])> {
        let file = &plant.files[0];
        let header_line = file.mapping["header_line"].as_u64().unwrap() as usize;
        let lines: Vec<&str> = file.csv.lines().collect();
        assert_eq!(lines[header_line - 1], "Time;C1 kW;C2 kW;C3 kW");
        lines[header_line..]
            .iter()
            .map(|l| {
                let f: Vec<&str> = l.split(';').collect();
                assert_eq!(f.len(), 4, "line {l}");
                let kw = |s: &str| {
                    assert!(!s.contains('.'), "decimal comma expected in {s}");
                    s.replace(',', ".").parse::<f64>().unwrap()
                };
                (f[0].to_string(), [kw(f[1]), kw(f[2]), kw(f[3])])
            })
            .collect()
    }

    fn rfc3339_to_unix(s: &str) -> i64 {
        let num = |a: usize, b: usize| s[a..b].parse::<i64>().unwrap();
        days_from_civil(num(0, 4), num(5, 7) as u32, num(8, 10) as u32) * 86_400
            + num(11, 13) * 3600
            + num(14, 16) * 60
            + num(17, 19)
    }

    #[test]
    fn the_same_seed_gives_the_same_bytes_and_another_seed_other_bytes() {
        let a = simulate(&small(7));
        let b = simulate(&small(7));
        let c = simulate(&small(8));
        assert_eq!(hash_files(&a), hash_files(&b));
        assert_eq!(a.truth, b.truth);
        assert_ne!(hash_files(&a), hash_files(&c));
    }

    #[test]
    fn air_delivered_minus_air_drawn_is_the_change_stored_in_the_system_volume() {
        // Receiver equation integrated: ∫(Q_s - Q_d) dt = V Δp / p_atm (free air, isothermal).
        let t = &plant().truth;
        let atm_bar = t.atmospheric_pressure_kpa_abs / 100.0;
        let stored = t.system_volume_m3 * (t.end_pressure_bar_g - t.start_pressure_bar_g) / atm_bar;
        let net = t.supply_air_m3 - t.air_m3;
        assert!((net - stored).abs() < 1e-6 * t.supply_air_m3, "net {net} stored {stored}");
        // A week of a 7.5 m³ system at ~9 m³/min: the supply is some 10^5 m³, the store a few m³.
        assert!(t.supply_air_m3 > 80_000.0 && t.supply_air_m3 < 120_000.0);
    }

    #[test]
    fn the_site_atmosphere_follows_the_standard_atmosphere() {
        // FIELD-NOTES §11 (ASHRAE eq. 3): 1000 m -> 89.875 kPa, 1500 m -> 84.556 kPa.
        assert!((atmosphere_kpa(1000.0) - 89.875).abs() < 0.005);
        assert!((atmosphere_kpa(1500.0) - 84.556).abs() < 0.005);
        let t = simulate(&small(1)).truth;
        assert!((t.atmospheric_pressure_kpa_abs - atmosphere_kpa(180.0)).abs() < 1e-9);
        assert!(t.atmospheric_pressure_kpa_abs > 99.0 && t.atmospheric_pressure_kpa_abs < 99.4);
    }

    #[test]
    fn header_pressure_stays_in_a_working_band_during_production() {
        let plant = plant();
        let rows = header_rows(plant);
        let mut checked = 0;
        for &(unix, p, _, _) in &rows {
            assert!(p < 7.8, "pressure {p} above the band at {unix}");
            let (day, sod) = berlin_local(unix);
            let h = sod as f64 / 3600.0;
            let production = match weekday_monday0(day) {
                0..=4 => (6.5..21.75).contains(&h),
                5 => (6.5..11.75).contains(&h),
                _ => false,
            };
            if production {
                checked += 1;
                assert!((6.2..=7.8).contains(&p), "pressure {p} at {}", rfc3339_utc(unix));
            }
        }
        // 5 × 15.25 h + 5.25 h of production at 10 s.
        assert_eq!(checked, ((5.0 * 15.25 + 5.25) * 360.0) as usize);
        let t = &plant.truth;
        assert!(t.production_min_pressure_bar_g > 6.2 && t.production_max_pressure_bar_g < 7.8);
    }

    #[test]
    fn the_maintenance_stop_decays_as_the_leak_law_says() {
        // With every compressor off and only choked leaks drawing air, V dp/dt = -p_atm c p, so
        // p_abs(t) = p_abs(0) exp(-t / tau), tau = V / (p_atm c) (FIELD-NOTES §5). The logged
        // pressure must follow that curve, and a log-linear fit of it must give back c.
        let plant = plant();
        let t = &plant.truth;
        let atm_bar = t.atmospheric_pressure_kpa_abs / 100.0;
        let c_per_s = t.leak_coefficient_m3_min_per_bar_abs / 60.0;
        let tau_s = t.system_volume_m3 / (atm_bar * c_per_s);
        let (from, to) = (rfc3339_to_unix(&t.shutdown_start), rfc3339_to_unix(&t.shutdown_end));
        let p0_abs = t.shutdown_start_pressure_bar_g + atm_bar;
        let window: Vec<(f64, f64)> = header_rows(plant)
            .into_iter()
            .filter(|r| r.0 > from && r.0 <= to)
            .map(|r| ((r.0 - from) as f64, r.1 + atm_bar))
            .collect();
        assert_eq!(window.len(), 180);
        for &(s, p_abs) in &window {
            let expected = p0_abs * (-s / tau_s).exp();
            assert!((p_abs - expected).abs() < 0.02, "at {s} s: {p_abs} vs {expected}");
        }
        // Least squares of ln p against t.
        let n = window.len() as f64;
        let (sx, sy) = window.iter().fold((0.0, 0.0), |a, &(x, p)| (a.0 + x, a.1 + p.ln()));
        let (mx, my) = (sx / n, sy / n);
        let (sxy, sxx) = window
            .iter()
            .fold((0.0, 0.0), |a, &(x, p)| (a.0 + (x - mx) * (p.ln() - my), a.1 + (x - mx).powi(2)));
        let fitted_c_m3_min = -sxy / sxx * t.system_volume_m3 / atm_bar * 60.0;
        let rel = fitted_c_m3_min / t.leak_coefficient_m3_min_per_bar_abs - 1.0;
        assert!(rel.abs() < 0.01, "fitted leak coefficient off by {rel}");
        // The decay is deep enough to be a real bleed-down: 7 -> about 1.4 bar(g) in 30 min.
        assert!(t.shutdown_start_pressure_bar_g > 6.8);
        assert!(t.shutdown_end_pressure_bar_g > 1.0 && t.shutdown_end_pressure_bar_g < 2.0);
        // Still choked at the end (p_abs / p_atm above 1/0.528, FIELD-NOTES §5), so the law holds.
        assert!((t.shutdown_end_pressure_bar_g + atm_bar) / atm_bar > 1.0 / 0.528);
    }

    #[test]
    fn leaks_are_a_quarter_or_so_of_demand() {
        let t = &plant().truth;
        assert!((t.leak_flow_at_7_bar_g_m3_min - 2.4).abs() < 1e-12);
        let share = t.leak_air_m3 / t.air_m3;
        // FIELD-NOTES §5: poorly maintained systems leak 20-30 % of demand.
        assert!((0.22..0.32).contains(&share), "leak share {share}");
    }

    #[test]
    fn loaded_fractions_fit_a_base_machine_a_standby_and_a_trim() {
        let t = &plant().truth;
        let f: Vec<f64> = t.loaded_fraction_by_compressor.iter().map(|x| x.1).collect();
        // C1 base load through ~82 production hours of 168, unloaded or off at night.
        assert!((0.3..0.7).contains(&f[0]), "C1 {}", f[0]);
        // C2 only comes in at peaks.
        assert!((0.005..0.2).contains(&f[1]), "C2 {}", f[1]);
        // C3 runs all week except the maintenance stop and short stops at turn-down.
        assert!(f[2] > 0.9, "C3 {}", f[2]);
    }

    #[test]
    fn the_logger_files_parse_back_with_their_mappings() {
        let plant = plant();
        let power = power_rows(plant);
        assert_eq!(power.len(), 7 * 86_400 / 5);
        assert_eq!(power[0].0, "09.03.2026 00:00:05");
        assert_eq!(power[power.len() - 1].0, "16.03.2026 00:00:00");
        let header = header_rows(plant);
        // Logger stamps every 10 s from 00:00:20 to the end; true times 7 s earlier.
        assert_eq!(header.len(), 7 * 8_640 - 1);
        assert_eq!(header[0].0, period_start_unix_s() + 13);
        assert!(header.windows(2).all(|w| w[1].0 - w[0].0 == 10));
        for m in plant.files.iter().map(|f| &f.mapping) {
            let header_line = m["header_line"].as_u64().unwrap() as usize;
            let delimiter = m["delimiter"].as_str().unwrap();
            let csv = &plant.files.iter().find(|f| &f.mapping == m).unwrap().csv;
            let names: Vec<&str> = csv.lines().nth(header_line - 1).unwrap().split(delimiter).collect();
            assert!(names.contains(&m["timestamp"]["column"].as_str().unwrap()));
            for c in m["columns"].as_array().unwrap() {
                assert!(names.contains(&c["column"].as_str().unwrap()), "{c}");
            }
        }
    }

    #[test]
    fn logged_energy_and_air_match_the_simulation_truth() {
        let plant = plant();
        let t = &plant.truth;
        let rows = power_rows(plant);
        for (i, (tag, kwh)) in t.energy_kwh_by_compressor.iter().enumerate() {
            let logged: f64 = rows.iter().map(|r| r.1[i] * 5.0 / 3600.0).sum();
            assert!((logged / kwh - 1.0).abs() < 0.005, "{tag}: logged {logged} truth {kwh}");
        }
        // Nm³/h back to free air with the site's conditions (units.rs SiteAir).
        let site = SiteAir::new(t.atmospheric_pressure_kpa_abs, INLET_C);
        let to_fad = site.free_air_from_reference(1.0, ReferenceConditions::NORMAL_DIN_1343);
        let air: f64 = header_rows(plant).iter().map(|r| r.2 * to_fad * 10.0 / 3600.0).sum();
        assert!((air / t.air_m3 - 1.0).abs() < 0.005, "logged air {air} truth {}", t.air_m3);
        // Specific power in the usual range for lubricated screws near 7 bar (FIELD-NOTES §3).
        let kwh: f64 = t.energy_kwh_by_compressor.iter().map(|x| x.1).sum();
        let sp = kwh * 60.0 / t.air_m3;
        assert!((5.0..8.0).contains(&sp), "specific power {sp}");
    }

    #[test]
    fn the_power_log_shows_off_unloaded_and_loaded_states() {
        let plant = plant();
        let rows = power_rows(plant);
        let specs = &plant.compressors;
        for (i, spec) in specs.iter().enumerate().take(2) {
            let near = |kw: f64, f: f64| (kw / spec.rated_power_kw - f).abs() < 0.04;
            let off = rows.iter().filter(|r| r.1[i] < 1.0).count();
            let unloaded = rows.iter().filter(|r| near(r.1[i], spec.unloaded_power_fraction)).count();
            let loaded = rows.iter().filter(|r| r.1[i] > 0.9 * spec.rated_power_kw).count();
            assert!(off > 0 && unloaded > 0 && loaded > 0, "{}: {off} {unloaded} {loaded}", spec.tag);
        }
        // The variable-speed machine spans its curve from minimum to maximum flow.
        let c3: Vec<f64> = rows.iter().map(|r| r.1[2]).filter(|&kw| kw > 1.0).collect();
        let (lo, hi) = c3.iter().fold((f64::MAX, 0.0f64), |a, &k| (a.0.min(k), a.1.max(k)));
        assert!(lo < 15.0 && hi > 42.0, "C3 spans {lo}..{hi} kW");
    }

    #[test]
    fn a_short_run_has_its_stop_on_the_first_night() {
        let p = simulate(&DemoOptions { days: 1, interval_s: 10, seed: 3 });
        assert_eq!(p.truth.shutdown_start, "2026-03-09T01:00:00Z");
        assert_eq!(p.truth.shutdown_end, "2026-03-09T01:30:00Z");
        assert_eq!(power_rows(&p).len(), 8_640);
        assert!(p.truth.shutdown_end_pressure_bar_g < 2.0);
    }

    #[test]
    fn the_calendar_and_the_berlin_rule_hold() {
        // 2026-03-09 is a Monday; EU summer time 2026 runs from 29 March to 25 October, changing at
        // 01:00 UTC (Directive 2000/84/EC).
        let d = days_from_civil(2026, 3, 9);
        assert_eq!(weekday_monday0(d), 0);
        assert_eq!(civil_from_days(d), (2026, 3, 9));
        assert_eq!(civil_from_days(0), (1970, 1, 1));
        assert_eq!(days_from_civil(2000, 3, 1), 11_017);
        let change = days_from_civil(2026, 3, 29) * 86_400 + 3_600;
        assert_eq!(berlin_offset_s(change - 1), 3_600);
        assert_eq!(berlin_offset_s(change), 7_200);
        let back = days_from_civil(2026, 10, 25) * 86_400 + 3_600;
        assert_eq!(berlin_offset_s(back - 1), 7_200);
        assert_eq!(berlin_offset_s(back), 3_600);
        assert_eq!(rfc3339_utc(period_start_unix_s()), "2026-03-08T23:00:00Z");
    }

    #[test]
    fn the_variable_speed_curve_is_interpolated_between_its_points() {
        let spec = &compressors()[2];
        let v = VariableSpeed {
            curve: spec.power_curve.clone(),
            rated_bar_g: 7.5,
            setpoint_bar_g: 7.0,
            stop_at_bar_g: 7.6,
            restart_below_bar_g: 6.9,
            kp: 20.0,
            ki: 0.3,
            integral_m3_min: 2.0,
            flow_m3_min: 2.0,
            running: true,
        };
        assert!((v.curve_kw(2.0) - 14.0).abs() < 1e-12);
        assert!((v.curve_kw(4.1) - (20.6 + 7.0 * 0.5)).abs() < 1e-12);
        assert!((v.curve_kw(7.6) - 45.0).abs() < 1e-12);
    }
}
