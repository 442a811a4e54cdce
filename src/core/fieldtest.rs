/*!
Field tests: the leak measurements an auditor runs or reads from the logs (US DOE compressed-air sourcebook, leaks fact sheet; API.md
"Field tests"), validated and evaluated into results the API returns as they are.

Every result carries `leak_flow_m3_min`: the leak flow (free air) at the operating or production
pressure, so estimates from different methods compare side by side, with `_low`/`_high` from the
default instrument accuracies ([`Accuracy`]).

- `bleed_down`: mean flow `V (p1 - p2) / (p_atm t) × T_inlet / T_air` (`air_temperature_c`, the
  stored air's temperature, optional: the inlet's when blank), scaled to the operating pressure by
  `p_op,abs / p_log-mean,abs` (choked leak flow is proportional to absolute pressure, so the decay is
  exponential: `leaks::log_mean_pressure`); the DOE rule of thumb (× 1.25) beside it for comparison
  (US DOE compressed-air sourcebook, leaks fact sheet). That reading takes the stored air at one
  temperature, so it is an upper bound: `leak_flow_m3_min` is it divided by 1 + the estimated
  overstatement (`leaks::non_isothermal_overstatement`, the rule there, at most the fall's adiabatic
  limit `leaks::adiabatic_overstatement`), the conservative side for the savings it carries, and the
  likely range runs from that less the instruments' uncertainty to the reading plus it. A test too
  fast to be near isothermal (over 5 %) carries a warning saying so.
- `load_unload`: `T / (T + t)` of the compressor's rated FAD (same source); its uncertainty from the
  test's own times (`uncertainty::load_unload_relative_uncertainty`).
- `idle_flow`: the mean logged flow in a window when nothing but leaks (and fixed users such as dryer
  purge) draw air, less `purge_and_drains_m3_min` (the purge and drain air the auditor knows of,
  default 0), scaled to the production pressure like the bleed-down when one is given.
- `pressure_decay`: logged pressure falling while every logged compressor is off, or off or unloaded
  outside the schedule's production hours (unloaded running in a production hour is refused: the fall
  is then the whole demand; without a schedule it is not checked), fitted
  by `leaks::fit_pressure_decay`, with the same stored-air temperature as the bleed-down.

# Accepted ranges

Every number must be finite and lie in its range, else the test is refused naming the field (API
422) and nothing is stored; unknown fields are refused too. Results no plant can give are refused
as well (`checks`): a bleed-down whose leak flow, even at the lowest the reading allows, exceeds
what the compressors on record deliver together; a load/unload test of a variable-speed machine; an
idle-flow or pressure-decay window whose header pressure is under half the compressors' lowest
rated pressure (the report's credibility rule) or under the choked limit.

| value | range | why |
|---|---|---|
| pressures (`start_pressure_bar_g`, `end_pressure_bar_g`, `operating_pressure_bar_g`, `production_pressure_bar_g`) | above 0 bar absolute ..= [`MAX_PRESSURE_BAR_G`] (50 bar(g)) | shop air and boosters (PET blowing at 40 bar(g)); common practice |
| `duration_s` (bleed-down) | [`MIN_BLEED_DOWN_S`] (30 s) ..= [`MAX_DURATION_S`] (7 days) | timed by hand, a second off at each end; a bleed-down takes minutes (US DOE sourcebook, leaks fact sheet; the 30 s common practice) |
| `loaded_s` | [`MIN_DURATION_S`] (1 s) ..= [`MAX_DURATION_S`] | a stopwatch reads seconds |
| `unloaded_s` | [`MIN_DURATION_S`] ..= [`MAX_DURATION_S`] | 0 s unloaded is no measured cycle (T / (T + t) would read 100 %) |
| `volume_m3` (bleed-down, pressure decay; given or the system volume) | above 0 ..= [`MAX_VOLUME_M3`] (10 000 m³) | the system volume of the largest plants (common practice) |
| `air_temperature_c` (bleed-down, pressure decay) | [`MIN_AIR_TEMPERATURE_C`] (-40 °C) ..= [`MAX_AIR_TEMPERATURE_C`] (120 °C) | stored air from a cold yard to just after an aftercooler-less discharge (common practice) |
| `purge_and_drains_m3_min` (idle flow) | 0 ..= [`MAX_PURGE_M3_MIN`] (1 000 m³/min) | at most the largest plants' flow |

Safety: these tests can hurt people. `core::safety::PRESSURE_TEST_CAUTIONS` are the cautions the
pages show wherever a test is planned.
*/

use serde::{Deserialize, Serialize};

use super::analysis::uncertainty::{load_unload_relative_uncertainty, quad, Accuracy};
use super::entry::Entry;
use super::leaks;
use super::levels::classify;
use super::model::{CompressorSpec, StorageSpec, WeeklySchedule};
use super::series::{Frame, Signal};
use super::states::State;
use super::units::{FreeAirFlow, PressureAbs, SiteAir, Temperature, UnitSystem, Volume};

/// A field test as the API receives it.
#[derive(Debug, Clone, PartialEq, Deserialize, Serialize)]
#[serde(tag = "kind", rename_all = "snake_case", deny_unknown_fields)]
pub enum FieldTestInput {
    BleedDown {
        /// Default: the system volume (receivers + piping and vessels).
        #[serde(default)]
        volume_m3: Option<f64>,
        start_pressure_bar_g: f64,
        end_pressure_bar_g: f64,
        duration_s: f64,
        /// Default: the start pressure.
        #[serde(default)]
        operating_pressure_bar_g: Option<f64>,
        /// The stored air's temperature during the test; default the site's inlet temperature.
        #[serde(default)]
        air_temperature_c: Option<f64>,
    },
    LoadUnload {
        compressor: String,
        loaded_s: f64,
        unloaded_s: f64,
    },
    IdleFlow {
        start: String,
        end: String,
        #[serde(default)]
        production_pressure_bar_g: Option<f64>,
        /// Free air of the fixed users known to draw in the window (dryer purge, timed drains),
        /// m³/min, subtracted before the pressure correction; default 0.
        #[serde(default)]
        purge_and_drains_m3_min: Option<f64>,
    },
    PressureDecay {
        start: String,
        end: String,
        #[serde(default)]
        volume_m3: Option<f64>,
        /// Pressure to report `leak_flow_m3_min` at; default the start pressure of the fit.
        #[serde(default)]
        operating_pressure_bar_g: Option<f64>,
        /// The stored air's temperature; default the site's inlet temperature.
        #[serde(default)]
        air_temperature_c: Option<f64>,
    },
}

impl FieldTestInput {
    pub fn method(&self) -> &'static str {
        match self {
            Self::BleedDown { .. } => "bleed_down",
            Self::LoadUnload { .. } => "load_unload",
            Self::IdleFlow { .. } => "idle_flow",
            Self::PressureDecay { .. } => "pressure_decay",
        }
    }
}

/// What a test is evaluated against.
#[derive(Debug, Clone, Copy)]
pub struct FieldTestContext<'a> {
    pub site: &'a SiteAir,
    pub compressors: &'a [CompressorSpec],
    pub storage: &'a StorageSpec,
    /// The logged data (needed by `idle_flow` and `pressure_decay`).
    pub frame: Option<&'a Frame>,
    /// The site's production schedule and time zone (IANA; UTC if unknown): a `pressure_decay`
    /// window may hold a compressor running unloaded only outside the schedule's production hours.
    /// Without a schedule that is not checked (production detected from the demand needs the
    /// whole log, not the window; the proposed decay events apply it).
    pub production: Option<&'a WeeklySchedule>,
    pub timezone: &'a str,
    /// The reader's units: a refusal quotes pressures, flows, volumes and temperatures in them,
    /// as the form's fields were typed (`core::entry`).
    pub units: UnitSystem,
}

/// Whether the bin starting at `ms` lies in the schedule's production hours, local time.
fn in_production(schedule: &WeeklySchedule, timezone: &str, ms: i64) -> bool {
    let tz = jiff::tz::TimeZone::get(timezone).unwrap_or(jiff::tz::TimeZone::UTC);
    let Ok(ts) = jiff::Timestamp::from_millisecond(ms) else { return false };
    let local_s = ms.div_euclid(1000) + i64::from(tz.to_offset(ts).seconds());
    // 1970-01-01 was a Thursday (Monday = 0 -> Thursday = 3).
    let weekday = (local_s.div_euclid(86_400) + 3).rem_euclid(7) as usize;
    schedule.hours[weekday][(local_s.rem_euclid(86_400) / 3600) as usize]
}

/// A test input that is well-formed but wrong (API 422).
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct FieldError {
    pub field: String,
    pub message: String,
}

impl std::fmt::Display for FieldError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}: {}", self.field, self.message)
    }
}

impl std::error::Error for FieldError {}

fn err(field: &str, message: impl Into<String>) -> FieldError {
    FieldError { field: field.into(), message: message.into() }
}

impl From<leaks::LeakError> for FieldError {
    fn from(e: leaks::LeakError) -> Self {
        FieldError { field: e.field.to_string(), message: e.message }
    }
}

/// Where a test's system volume comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum VolumeSource {
    /// Entered with the test.
    Given,
    /// The audit's system volume (receivers + piping and vessels).
    SystemVolume,
}

impl VolumeSource {
    pub fn as_str(self) -> &'static str {
        match self {
            Self::Given => "given",
            Self::SystemVolume => "system_volume",
        }
    }
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BleedDownOutcome {
    pub mean_leak_flow_m3_min: f64,
    pub leak_flow_at_operating_pressure_m3_min: f64,
    /// The DOE rule of thumb (mean flow × 1.25), for comparison only.
    pub doe_rule_of_thumb_flow_m3_min: f64,
    pub leak_flow_m3_min: f64,
    pub leak_flow_m3_min_low: f64,
    pub leak_flow_m3_min_high: f64,
    /// Log-mean of the start and end pressures (absolute), as gauge; the mean flow is scaled from it.
    /// Results stored before it was kept read back as 0 (they hold `mean_pressure_bar_g`, the
    /// arithmetic mean they were scaled from).
    #[serde(default)]
    pub log_mean_pressure_bar_g: f64,
    pub operating_pressure_bar_g: f64,
    pub volume_m3: f64,
    pub volume_source: VolumeSource,
    /// The stored air's temperature given with the test (`None`: the inlet's).
    #[serde(default)]
    pub air_temperature_c: Option<f64>,
    /// Estimated thermal time constant of the stored air, s, and the overstatement of the leak flow
    /// it implies for this test's duration (fraction; `leaks::non_isothermal_overstatement`).
    #[serde(default)]
    pub thermal_time_constant_s: Option<f64>,
    #[serde(default)]
    pub non_isothermal_overstatement: Option<f64>,
    /// What a reader should know of this test (too fast to be near isothermal).
    #[serde(default)]
    pub warnings: Vec<String>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LoadUnloadOutcome {
    pub compressor: String,
    pub leak_fraction: f64,
    pub leak_flow_m3_min: f64,
    pub leak_flow_m3_min_low: f64,
    pub leak_flow_m3_min_high: f64,
    pub rated_flow_m3_min: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct IdleFlowOutcome {
    pub leak_flow_m3_min: f64,
    pub leak_flow_m3_min_low: f64,
    pub leak_flow_m3_min_high: f64,
    /// Mean logged flow in the window, at the logged pressure.
    pub mean_flow_m3_min: f64,
    pub mean_pressure_bar_g: Option<f64>,
    pub production_pressure_bar_g: Option<f64>,
    /// Share of the window's bins with flow logged.
    pub coverage: f64,
    /// Purge and drain air subtracted from the mean flow before the pressure correction, m³/min.
    #[serde(default)]
    pub purge_and_drains_m3_min: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PressureDecayOutcome {
    pub leak_flow_at_start_pressure_m3_min: f64,
    pub fit_r2: f64,
    pub leak_flow_m3_min: f64,
    pub leak_flow_m3_min_low: f64,
    pub leak_flow_m3_min_high: f64,
    pub start_pressure_bar_g: f64,
    pub end_pressure_bar_g: f64,
    pub operating_pressure_bar_g: f64,
    pub duration_s: f64,
    pub volume_m3: f64,
    pub volume_source: VolumeSource,
    /// Compressors without a logged power column: their state in the window could not be checked.
    pub unchecked_compressors: Vec<String>,
    /// The stored air's temperature given with the test (`None`: the inlet's).
    #[serde(default)]
    pub air_temperature_c: Option<f64>,
}

/// A test's result, serialized flat (the API's `result` object).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(untagged)]
pub enum FieldTestResult {
    BleedDown(BleedDownOutcome),
    LoadUnload(LoadUnloadOutcome),
    IdleFlow(IdleFlowOutcome),
    PressureDecay(PressureDecayOutcome),
}

impl FieldTestResult {
    /// Leak flow at the operating or production pressure, m³/min free air.
    pub fn leak_flow_m3_min(&self) -> f64 {
        match self {
            Self::BleedDown(r) => r.leak_flow_m3_min,
            Self::LoadUnload(r) => r.leak_flow_m3_min,
            Self::IdleFlow(r) => r.leak_flow_m3_min,
            Self::PressureDecay(r) => r.leak_flow_m3_min,
        }
    }

    /// What the evaluation warned of (a bleed-down too fast to be near isothermal).
    pub fn warnings(&self) -> &[String] {
        match self {
            Self::BleedDown(r) => &r.warnings,
            _ => &[],
        }
    }

    /// The likely range of the leak flow as evaluated with the test's own inputs, m³/min.
    pub fn range_m3_min(&self) -> (f64, f64) {
        match self {
            Self::BleedDown(r) => (r.leak_flow_m3_min_low, r.leak_flow_m3_min_high),
            Self::LoadUnload(r) => (r.leak_flow_m3_min_low, r.leak_flow_m3_min_high),
            Self::IdleFlow(r) => (r.leak_flow_m3_min_low, r.leak_flow_m3_min_high),
            Self::PressureDecay(r) => (r.leak_flow_m3_min_low, r.leak_flow_m3_min_high),
        }
    }

    /// The relative uncertainty of the leak flow (one standard uncertainty) as evaluated with the
    /// test's own inputs: the wider side of its range, `high / leak_flow_m3_min - 1` or
    /// `1 - low / leak_flow_m3_min` (a bleed-down's range reaches up to the flow as read);
    /// `None` for a zero flow.
    pub fn relative_uncertainty(&self) -> Option<f64> {
        let q = self.leak_flow_m3_min();
        let (lo, hi) = self.range_m3_min();
        (q > 0.0 && hi.is_finite() && lo.is_finite()).then(|| (hi / q - 1.0).max(1.0 - lo / q))
    }
}

mod advice;
mod checks;
pub use advice::*;
pub use checks::*;

/// Parse an RFC 3339 time into ms since the epoch.
pub fn parse_time_ms(field: &str, s: &str) -> Result<i64, FieldError> {
    s.parse::<jiff::Timestamp>()
        .map(|t| t.as_millisecond())
        .map_err(|e| err(field, format!("not an RFC 3339 time with an offset: {s:?} ({e})")))
}

/// Bins of `frame` whose start lies in `start..=end` (RFC 3339), checked.
fn window<'f>(
    frame: Option<&'f Frame>,
    start: &str,
    end: &str,
    tz: &str,
) -> Result<(&'f Frame, std::ops::Range<usize>), FieldError> {
    let (t0, t1) = (parse_time_ms("start", start)?, parse_time_ms("end", end)?);
    if t1 <= t0 {
        return Err(err(
            "end",
            format!("the end must be after the start ({})", window_words(start, end, tz)),
        ));
    }
    let frame = frame.ok_or_else(|| err("start", "no logged data in this audit"))?;
    let g = frame.grid;
    let first = if t0 <= g.start_ms { 0 } else { ((t0 - g.start_ms + g.step_ms - 1) / g.step_ms) as usize };
    let last = if t1 < g.start_ms {
        None
    } else {
        Some((((t1 - g.start_ms) / g.step_ms) as usize).min(g.len.saturating_sub(1)))
    };
    match last {
        Some(l) if first <= l && first < g.len => Ok((frame, first..l + 1)),
        _ => Err(err(
            "start",
            format!("the window {} lies outside the logged period", window_words(start, end, tz)),
        )),
    }
}

/// Evaluate one field test.
pub fn evaluate(input: &FieldTestInput, ctx: &FieldTestContext) -> Result<FieldTestResult, FieldError> {
    let site = ctx.site;
    let acc = Accuracy::default();
    let atm = site.atmosphere;
    let band = |q: f64, rel: f64| (q * (1.0 - rel).max(0.0), q * (1.0 + rel));
    match input {
        FieldTestInput::BleedDown {
            volume_m3,
            start_pressure_bar_g,
            end_pressure_bar_g,
            duration_s,
            operating_pressure_bar_g,
            air_temperature_c,
        } => {
            let units = ctx.units;
            let p1 = pressure("start_pressure_bar_g", *start_pressure_bar_g, site, units)?;
            let p2 = pressure("end_pressure_bar_g", *end_pressure_bar_g, site, units)?;
            if p2.0 >= p1.0 {
                return Err(err(
                    "end_pressure_bar_g",
                    format!(
                        "the end pressure {} must be below the start pressure {}",
                        Entry::GaugePressure.said(units, *end_pressure_bar_g),
                        Entry::GaugePressure.said(units, *start_pressure_bar_g)
                    ),
                ));
            }
            bleed_down_duration(*duration_s)?;
            let op_g = operating_pressure_bar_g.unwrap_or(*start_pressure_bar_g);
            let op = pressure("operating_pressure_bar_g", op_g, site, units)?;
            let (v, src) = volume("volume_m3", *volume_m3, ctx.storage, units)?;
            let t_air = air_temperature(*air_temperature_c, units)?;
            let r = leaks::bleed_down(Volume(v), p1, p2, *duration_s, op, t_air, site)?;
            // The flow as read takes the stored air at one temperature: an upper bound, as the air
            // that stays behind cools. The estimate is that reading corrected by the estimated
            // overstatement (at most the fall's adiabatic limit), the conservative side for the
            // savings it carries; the likely range runs from it, less the instruments'
            // uncertainty, to the reading, plus it.
            let read = r.leak_flow_at_operating_pressure.m3_min();
            let iso = r.isothermal;
            let q = read / (1.0 + iso.overstatement);
            let fall = (*start_pressure_bar_g, *end_pressure_bar_g, *duration_s, v);
            within_capacity(read / (1.0 + iso.adiabatic_limit), ctx.compressors, units, fall)?;
            let dp_rel = std::f64::consts::SQRT_2 * acc.pressure_abs_bar()
                / (start_pressure_bar_g - end_pressure_bar_g);
            let u = quad(&[acc.volume_rel, dp_rel]);
            let (lo, hi) = (q * (1.0 - u).max(0.0), read * (1.0 + u));
            let warnings = if iso.too_fast {
                vec![format!(
                    "test too short to be near isothermal: over {} the stored air cools as it \
                     expands (thermal time constant about {} for this volume), so the leak flow \
                     as read is overstated by about {} %{}; the estimate is the flow corrected for \
                     it, its likely range running up to the flow as read plus the instruments' \
                     uncertainty; {}",
                    crate::core::display::seconds(*duration_s),
                    crate::core::display::seconds(iso.thermal_time_constant_s),
                    crate::core::display::num(100.0 * iso.overstatement, 1),
                    adiabatic_cap_words(&iso, *start_pressure_bar_g, *end_pressure_bar_g, units),
                    longer_fall_advice(p1, p2, *duration_s, &iso, atm, units)
                )]
            } else {
                Vec::new()
            };
            Ok(FieldTestResult::BleedDown(BleedDownOutcome {
                mean_leak_flow_m3_min: r.mean_leak_flow.m3_min(),
                leak_flow_at_operating_pressure_m3_min: read,
                doe_rule_of_thumb_flow_m3_min: r.doe_rule_of_thumb_flow.m3_min(),
                leak_flow_m3_min: q,
                leak_flow_m3_min_low: lo,
                leak_flow_m3_min_high: hi,
                log_mean_pressure_bar_g: r.log_mean_pressure.bar_g(atm),
                operating_pressure_bar_g: op_g,
                volume_m3: v,
                volume_source: src,
                air_temperature_c: *air_temperature_c,
                thermal_time_constant_s: Some(iso.thermal_time_constant_s),
                non_isothermal_overstatement: Some(iso.overstatement),
                warnings,
            }))
        }
        FieldTestInput::LoadUnload { compressor, loaded_s, unloaded_s } => {
            let c = ctx.compressors.iter().find(|c| &c.tag == compressor).ok_or_else(|| {
                err("compressor", format!("no compressor tagged {compressor:?} in this audit"))
            })?;
            if let Some(why) = load_unload_applies(c) {
                return Err(err("compressor", why));
            }
            within(
                "loaded_s",
                "the loaded time",
                *loaded_s,
                (MIN_DURATION_S, MAX_DURATION_S),
                Quoted::Seconds,
            )?;
            unloaded_time(*unloaded_s)?;
            let (f, q) =
                leaks::load_unload(*loaded_s, *unloaded_s, FreeAirFlow::from_m3_min(c.rated_flow_m3_min))?;
            let q = q.m3_min();
            let (lo, hi) = band(q, load_unload_relative_uncertainty(*loaded_s, *unloaded_s));
            Ok(FieldTestResult::LoadUnload(LoadUnloadOutcome {
                compressor: compressor.clone(),
                leak_fraction: f,
                leak_flow_m3_min: q,
                leak_flow_m3_min_low: lo,
                leak_flow_m3_min_high: hi,
                rated_flow_m3_min: c.rated_flow_m3_min,
            }))
        }
        FieldTestInput::IdleFlow { start, end, production_pressure_bar_g, purge_and_drains_m3_min } => {
            let units = ctx.units;
            let said_flow = |q: f64| Entry::FreeAirFlow.said(units, q);
            let purge = within(
                "purge_and_drains_m3_min",
                "the purge and drains flow",
                purge_and_drains_m3_min.unwrap_or(0.0),
                (0.0, MAX_PURGE_M3_MIN),
                Quoted::Entry(Entry::FreeAirFlow, units),
            )?;
            let (frame, bins) = window(ctx.frame, start, end, ctx.timezone)?;
            let flow = frame.system_flow().ok_or_else(|| {
                err(
                    "start",
                    "no flow logged: an idle-flow test needs a flow meter (a load/unload test needs none)",
                )
            })?;
            let n = bins.len();
            let vals: Vec<f64> =
                flow[bins.clone()].iter().filter(|v| v.is_finite()).map(|&v| v as f64).collect();
            let when = window_words(start, end, ctx.timezone);
            if vals.is_empty() {
                return Err(err("start", format!("no flow logged {when}")));
            }
            let mean_q = vals.iter().sum::<f64>() / vals.len() as f64;
            let mean_p = frame.header_pressure().and_then(|c| {
                let v: Vec<f64> =
                    c.values[bins.clone()].iter().filter(|v| v.is_finite()).map(|&v| v as f64).collect();
                (!v.is_empty()).then(|| v.iter().sum::<f64>() / v.len() as f64)
            });
            if let Some(p) = mean_p {
                held_at_pressure(PressureAbs(p), ctx, "averaged", &when)?;
            }
            if purge / 60.0 >= mean_q {
                return Err(err(
                    "purge_and_drains_m3_min",
                    format!(
                        "purge and drains {} are not below the mean flow in the window, {:.3} {}",
                        said_flow(purge),
                        Entry::FreeAirFlow.from_stored(units, mean_q * 60.0),
                        Entry::FreeAirFlow.unit(units).label
                    ),
                ));
            }
            let mut q = mean_q - purge / 60.0;
            if let Some(pp) = production_pressure_bar_g {
                let prod = pressure("production_pressure_bar_g", *pp, site, units)?;
                let pm = mean_p.ok_or_else(|| {
                    err("production_pressure_bar_g", "no pressure logged in the window to scale from")
                })?;
                q *= prod.0 / pm;
            }
            let (lo, hi) = band(q * 60.0, acc.flow_rel);
            Ok(FieldTestResult::IdleFlow(IdleFlowOutcome {
                leak_flow_m3_min: q * 60.0,
                leak_flow_m3_min_low: lo,
                leak_flow_m3_min_high: hi,
                mean_flow_m3_min: mean_q * 60.0,
                mean_pressure_bar_g: mean_p.map(|p| PressureAbs(p).bar_g(atm)),
                production_pressure_bar_g: *production_pressure_bar_g,
                coverage: vals.len() as f64 / n as f64,
                purge_and_drains_m3_min: purge,
            }))
        }
        FieldTestInput::PressureDecay {
            start,
            end,
            volume_m3,
            operating_pressure_bar_g,
            air_temperature_c,
        } => {
            let k_t = leaks::stored_air_factor(air_temperature(*air_temperature_c, ctx.units)?, site);
            let (frame, bins) = window(ctx.frame, start, end, ctx.timezone)?;
            let p =
                frame.header_pressure().ok_or_else(|| err("start", "no pressure logged in this audit"))?;
            let mut unchecked = Vec::new();
            for (i, c) in ctx.compressors.iter().enumerate() {
                match frame
                    .columns
                    .iter()
                    .find(|col| col.signal == Signal::Power && col.compressor == Some(i))
                {
                    Some(col) => {
                        let all = classify(c, &col.values);
                        let s = &all[bins.clone()];
                        let at = |k: usize| {
                            crate::core::display::local_ms(
                                frame.grid.bin_start_ms(bins.start + k),
                                ctx.timezone,
                            )
                        };
                        if let Some(k) = s.iter().position(|s| s.delivering()) {
                            return Err(err(
                                "start",
                                format!("compressor {} delivers air at {}: a pressure-decay window needs every compressor off or unloaded", c.tag, at(k)),
                            ));
                        }
                        if let Some(sched) = ctx.production {
                            if let Some(k) = s.iter().enumerate().position(|(k, s)| {
                                *s == State::Unloaded
                                    && in_production(
                                        sched,
                                        ctx.timezone,
                                        frame.grid.bin_start_ms(bins.start + k),
                                    )
                            }) {
                                return Err(err(
                                    "start",
                                    format!(
                                        "compressor {} runs unloaded at {} in a production hour: while production \
                                         draws air the fall is the whole demand, not the leaks; choose a window \
                                         with every compressor off, or outside production",
                                        c.tag,
                                        at(k)
                                    ),
                                ));
                            }
                        }
                    }
                    None => unchecked.push(c.tag.clone()),
                }
            }
            let (v, src) = volume("volume_m3", *volume_m3, ctx.storage, ctx.units)?;
            let g = frame.grid;
            let t_first = g.bin_start_ms(bins.start);
            let samples: Vec<(f64, PressureAbs)> = bins
                .clone()
                .filter(|&i| p.values[i].is_finite())
                .map(|i| {
                    (
                        (g.bin_start_ms(i) - t_first) as f64 / 1000.0 + 0.5 * g.step_s(),
                        PressureAbs(p.values[i] as f64),
                    )
                })
                .collect();
            let when = window_words(start, end, ctx.timezone);
            if samples.len() < 3 {
                let n = samples.len();
                let got =
                    if n == 0 { "no pressure reading".to_string() } else { format!("only {n} of them") };
                return Err(err(
                    "start",
                    format!("{got} logged {when}; a fit needs pressure in at least 3 of the log's intervals"),
                ));
            }
            held_at_pressure(samples[0].1, ctx, "started at", &when)?;
            let fit = leaks::fit_pressure_decay(&samples, Volume(v), site).map_err(|e| {
                let fmt = crate::core::display::Fmt::new(ctx.units, atm);
                let said = |p: PressureAbs| fmt.pressure_bar_g(p.bar_g(atm));
                match e.field {
                    "end" => err(
                        "end",
                        format!(
                            "the pressure does not fall {when} (from {} to {}): a decay needs a falling \
                             pressure with every compressor off",
                            said(samples[0].1),
                            said(samples[samples.len() - 1].1)
                        ),
                    ),
                    _ => e.into(),
                }
            })?;
            let q_start = fit.leak_flow_at_start.m3_min() * k_t;
            let start_g = fit.start_pressure.bar_g(atm);
            let op_g = operating_pressure_bar_g.unwrap_or(start_g);
            let op = pressure("operating_pressure_bar_g", op_g, site, ctx.units)?;
            let q = q_start * op.0 / fit.start_pressure.0;
            let fall = (start_g - fit.end_pressure.bar_g(atm)).max(1e-3);
            let rel = quad(&[acc.volume_rel, std::f64::consts::SQRT_2 * acc.pressure_abs_bar() / fall]);
            let (lo, hi) = band(q, rel);
            Ok(FieldTestResult::PressureDecay(PressureDecayOutcome {
                leak_flow_at_start_pressure_m3_min: q_start,
                fit_r2: fit.fit_r2,
                leak_flow_m3_min: q,
                leak_flow_m3_min_low: lo,
                leak_flow_m3_min_high: hi,
                start_pressure_bar_g: start_g,
                end_pressure_bar_g: fit.end_pressure.bar_g(atm),
                operating_pressure_bar_g: op_g,
                duration_s: fit.duration_s,
                volume_m3: v,
                volume_source: src,
                unchecked_compressors: unchecked,
                air_temperature_c: *air_temperature_c,
            }))
        }
    }
}

#[cfg(test)]
mod tests;
