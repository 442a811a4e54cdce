/*!
The summary's shape: [`Summary`] and every figure in it, as `GET /api/v1/audits/{id}/summary` writes
them (API.md "The audit's figures"). Serialised and read back typed: the application caches the
summary and the pages read its fields. The rooms beside this one compute the figures.
*/

use serde::{Deserialize, Serialize};

use crate::core::heat::HeatUseKind;
use crate::core::leaks::LeakShareBand;
use crate::core::levels::Levels;
use crate::core::model::Control;
use crate::core::recommend::{MeasuresTotal, Part, Recommendation};

/// Where the system flow comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum FlowSource {
    /// The system flow meters.
    Measured,
    /// Each machine's states and rated flow (`estimated: true` wherever shown).
    EstimatedFromCompressorStates,
}

/// How a compressor's power was logged.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PowerSource {
    TruePower,
    /// From current with an assumed power factor.
    CurrentDerived,
}

/// Where the production hours come from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum ProductionSource {
    /// The site's weekly schedule.
    Schedule,
    /// Detected from the logged demand (module doc).
    Detected,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Period {
    pub start: String,
    pub end: String,
    /// The span from `start` to `end`, h: calendar time, logged or not.
    pub hours: f64,
    pub step_s: f64,
    pub bins: usize,
    /// Hours in which at least one channel was logged (`Frame::logged_hours`): files far apart
    /// make it a small part of `hours`.
    #[serde(default)]
    pub logged_hours: f64,
}

/// Share of bins with each signal.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Coverage {
    /// Bins where every compressor with a power column has power.
    pub power: f64,
    /// Bins with measured system flow (0 when flow is estimated).
    pub flow: f64,
    pub pressure: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PartLoadPoint {
    pub flow_m3_min: f64,
    pub specific_power_kw_per_m3_min: f64,
    pub share_of_time: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SystemFigures {
    pub energy_kwh: f64,
    pub energy_kwh_low: f64,
    pub energy_kwh_high: f64,
    pub mean_power_kw: f64,
    pub mean_power_kw_low: f64,
    pub mean_power_kw_high: f64,
    /// The highest 15-minute mean of the compressors' power together (`None`: their logs do not
    /// overlap enough for a simultaneous peak; `sufficiency.withheld` says why). Never below
    /// `mean_power_kw`.
    pub peak_power_kw: Option<f64>,
    pub peak_power_window_s: f64,
    // The air and the flow are `None` (JSON `null`) when no flow can be known in the period: no
    // flow logged in it and none read from the machines' states (`sufficiency.withheld` says why),
    // never 0.
    pub air_m3: Option<f64>,
    pub air_m3_low: Option<f64>,
    pub air_m3_high: Option<f64>,
    pub mean_flow_m3_min: Option<f64>,
    pub mean_flow_m3_min_low: Option<f64>,
    pub mean_flow_m3_min_high: Option<f64>,
    /// The highest 1-minute mean on the clock's minutes (`None`: as the mean flow).
    pub peak_flow_m3_min: Option<f64>,
    pub peak_flow_window_s: f64,
    pub flow_source: FlowSource,
    pub estimated: bool,
    pub specific_power_kw_per_m3_min: Option<f64>,
    pub specific_power_kw_per_m3_min_low: Option<f64>,
    pub specific_power_kw_per_m3_min_high: Option<f64>,
    pub specific_power_kw_per_100cfm: Option<f64>,
    pub specific_power_kwh_per_m3: Option<f64>,
    /// Air-weighted data-sheet specific power of the machines that ran.
    pub rated_specific_power_kw_per_m3_min: Option<f64>,
    /// Air-weighted specific power the same machines would reach at full load at the pressure they
    /// ran at (data sheet corrected by the ratio of isentropic work), kW/(m³/min).
    pub full_load_specific_power_at_pressure_kw_per_m3_min: Option<f64>,
    /// (specific power / that full-load figure - 1) × 100: the control (part-load) loss (API.md).
    pub part_load_penalty_percent: Option<f64>,
    /// Why `specific_power_kw_per_m3_min` is refused, if it is (a compressor without logged power).
    pub specific_power_note: Option<String>,
    pub isothermal_efficiency: Option<f64>,
    pub isothermal_efficiency_low: Option<f64>,
    pub isothermal_efficiency_high: Option<f64>,
    pub part_load_curve: Vec<PartLoadPoint>,
    pub compressors_without_power: Vec<String>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PressureFigures {
    pub logged: bool,
    pub mean_bar_g: Option<f64>,
    pub min_bar_g: Option<f64>,
    pub max_bar_g: Option<f64>,
    pub p5_bar_g: Option<f64>,
    pub p50_bar_g: Option<f64>,
    pub p95_bar_g: Option<f64>,
    pub std_dev_bar: Option<f64>,
    pub uncertainty_bar: f64,
    pub low_limit_bar_g: Option<f64>,
    pub share_below_low_limit: Option<f64>,
    pub highest_rated_bar_g: Option<f64>,
    pub share_above_highest_rated: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CompressorFigures {
    pub tag: String,
    pub control: Control,
    pub power_logged: bool,
    /// Its power known only from an energy counter: the mean over each reading interval, from which
    /// its states (loaded, unloaded, off, cycles, running hours) cannot be read; they are withheld
    /// (`sufficiency.withheld`: `compressors[].states`) and the pages print "not enough data".
    #[serde(default)]
    pub power_from_counter: bool,
    pub power_source: PowerSource,
    pub energy_kwh: f64,
    pub energy_kwh_low: f64,
    pub energy_kwh_high: f64,
    pub mean_power_kw: f64,
    /// `None` when the data cannot support annual figures (`sufficiency`).
    pub annual_energy_kwh: Option<f64>,
    pub loaded_fraction: f64,
    pub part_load_fraction: f64,
    pub unloaded_fraction: f64,
    pub off_fraction: f64,
    pub cycles_per_hour: f64,
    pub logged_hours: f64,
    pub running_hours: f64,
    pub loaded_hours: f64,
    /// The free air it delivered over its running hours against its rated free air delivery,
    /// `air_m3 / (rated_flow_m3_min × 60 × running_hours)` (`None`: no power logged, or it never
    /// ran). For a machine that follows demand by speed or by capacity (variable speed,
    /// modulation) this, not its time loaded, says how hard it worked (`machines` module doc).
    #[serde(default)]
    pub mean_capacity_share: Option<f64>,
    pub mean_loaded_power_kw: Option<f64>,
    pub mean_unloaded_power_kw: Option<f64>,
    pub mean_loaded_time_s: Option<f64>,
    pub mean_unloaded_time_s: Option<f64>,
    pub air_m3: f64,
    pub specific_power_kw_per_m3_min: Option<f64>,
    pub specific_power_kw_per_100cfm: Option<f64>,
    /// Flow of this machine from its states, not a meter.
    pub estimated: bool,
    pub full_load_specific_power_kw_per_m3_min: Option<f64>,
    pub rated_specific_power_kw_per_m3_min: f64,
    /// Mean power while loaded, kW (API.md additions).
    pub loaded_power_kw: Option<f64>,
    /// Mean discharge pressure (its own column, else the header's) while loaded, bar(g).
    pub loaded_pressure_bar_g: Option<f64>,
    /// The data sheet's full-load power corrected to `loaded_pressure_bar_g` by the ratio of
    /// isentropic work (`thermo::power_at_pressure`), kW.
    pub datasheet_power_at_pressure_kw: Option<f64>,
    /// (`loaded_power_kw` / `datasheet_power_at_pressure_kw` - 1) × 100.
    pub loaded_power_vs_datasheet_percent: Option<f64>,
    /// The off, unloaded and loaded levels found in the data (`core::levels`).
    pub levels_kw: Option<Levels>,
    pub marginal_kw_per_m3_min: f64,
    /// Load/unload with logged power (else `null`): the band and blow-down of its own part-load
    /// model (fitted from its log or assumed, `core::partload::fit`) and what was fitted, in words.
    pub pressure_band_bar: Option<f64>,
    pub blowdown_tau_s: Option<f64>,
    pub calibration_note: Option<String>,
    pub trim: bool,
    pub heat_rejected_kwh: f64,
    pub recoverable_kwh: f64,
    pub annual_heat_rejected_kwh: Option<f64>,
    pub annual_recoverable_kwh: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DurationPoint {
    pub share_of_time: f64,
    pub flow_m3_min: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Demand {
    pub estimated: bool,
    pub timezone: String,
    pub flow_duration_curve: Vec<DurationPoint>,
    /// `[weekday 0 = Monday][hour]`, local time; `null` where never logged.
    pub weekday_hour_mean_flow_m3_min: Vec<Vec<Option<f64>>>,
    pub weekday_hour_mean_power_kw: Vec<Vec<Option<f64>>>,
    pub production_source: ProductionSource,
    pub production_rule: String,
    pub production_share_of_time: f64,
    pub production_mean_flow_m3_min: Option<f64>,
    pub non_production_mean_flow_m3_min: Option<f64>,
    pub production_mean_power_kw: Option<f64>,
    pub non_production_mean_power_kw: Option<f64>,
    /// As `system.peak_flow_m3_min` (`None`: no flow known in the period).
    pub peak_flow_m3_min: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Baseline {
    pub rule: String,
    /// Hours of the operating year the annual figures cover.
    pub annual_hours: f64,
    /// Annual hours with some compressor running.
    pub annual_running_hours: f64,
    // The annual figures below are `None` (JSON `null`) when the data cannot support them
    // (`Summary::sufficiency` says why), never a number.
    pub annual_energy_kwh: Option<f64>,
    pub annual_energy_kwh_low: Option<f64>,
    pub annual_energy_kwh_high: Option<f64>,
    /// The relative standard uncertainties the range combines: the meters' (power) and the
    /// extrapolation's from the logged weeks to the year (`baseline` module doc), with its words and
    /// the whole weeks logged (on the site's clock).
    pub meter_relative_uncertainty: f64,
    pub extrapolation_relative_uncertainty: f64,
    pub extrapolation_rule: String,
    pub weeks_logged: usize,
    pub annual_energy_cost: Option<f64>,
    pub annual_demand_charge: Option<f64>,
    pub annual_cost: Option<f64>,
    pub annual_cost_low: Option<f64>,
    pub annual_cost_high: Option<f64>,
    pub cost_per_1000_m3: Option<f64>,
    pub cost_per_1000_ft3: Option<f64>,
    pub annual_co2_t: Option<f64>,
    pub electricity_price_per_kwh: f64,
    pub currency: String,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LeakEstimateFigure {
    pub test_id: Option<i64>,
    pub method: String,
    pub leak_flow_m3_min: f64,
    pub leak_flow_m3_min_low: f64,
    pub leak_flow_m3_min_high: f64,
    pub share_of_mean_demand: Option<f64>,
    /// Derived from the logs, not from an accepted test.
    pub automatic: bool,
    pub estimated: bool,
}

/// The flow out of production read as leaks: what was logged, what was taken off and the pressure
/// correction (`analysis::leaks`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct NonProductionLeak {
    /// Mean logged flow out of production, m³/min free air.
    pub mean_flow_m3_min: f64,
    /// Purge and drain air on record, subtracted, m³/min free air.
    pub purge_and_drains_m3_min: f64,
    /// Mean header pressure out of production and in production, bar(g) (`None`: not logged).
    pub mean_pressure_bar_g: Option<f64>,
    pub production_pressure_bar_g: Option<f64>,
    /// Corrected to the production pressure (`false`: no pressure logged in or out of production,
    /// or the non-production pressure too low for choked leaks).
    pub pressure_corrected: bool,
    /// The leak flow at the production pressure, m³/min free air (`None`: purge and drains take the
    /// whole flow).
    pub leak_flow_m3_min: Option<f64>,
}

/// Two accepted field tests whose likely ranges do not meet: the one whose range tops out lowest
/// and the one whose range starts highest, m³/min free air at the operating pressure.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LeakDisagreement {
    pub low_test_id: i64,
    pub low_leak_flow_m3_min: f64,
    /// The top of the low test's likely range.
    pub low_range_high_m3_min: f64,
    pub high_test_id: i64,
    pub high_leak_flow_m3_min: f64,
    /// The bottom of the high test's likely range.
    pub high_range_low_m3_min: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LeakFigures {
    pub estimates: Vec<LeakEstimateFigure>,
    /// The non-production flow and its corrections (`None`: no flow out of production).
    pub non_production: Option<NonProductionLeak>,
    pub adopted_leak_flow_m3_min: Option<f64>,
    pub adopted_leak_flow_m3_min_low: Option<f64>,
    pub adopted_leak_flow_m3_min_high: Option<f64>,
    pub adopted_rule: String,
    /// The accepted field tests disagree beyond their stated ranges (`None`: their ranges share a
    /// flow, or fewer than two tests); the adopted range then spans theirs (`analysis::leaks`).
    #[serde(default)]
    pub disagreement: Option<LeakDisagreement>,
    pub share_of_mean_demand: Option<f64>,
    pub share_of_mean_demand_low: Option<f64>,
    pub share_of_mean_demand_high: Option<f64>,
    pub share_of_production_demand: Option<f64>,
    pub share_of_non_production_demand: Option<f64>,
    pub band: Option<LeakShareBand>,
    pub band_description: Option<String>,
    pub target_share: f64,
    pub marginal_machine: Option<String>,
    pub marginal_kw_per_m3_min: f64,
    pub annual_leak_energy_kwh: Option<f64>,
    pub annual_leak_cost: Option<f64>,
    pub annual_leak_cost_low: Option<f64>,
    pub annual_leak_cost_high: Option<f64>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct HeatFigures {
    pub heat_rejected_kwh: f64,
    pub recoverable_kwh: f64,
    pub annual_heat_rejected_kwh: Option<f64>,
    pub annual_recoverable_kwh: Option<f64>,
    pub recoverable_kw_at_full_load: f64,
    pub use_kind: HeatUseKind,
    pub useful_heat_kwh_per_year: Option<f64>,
    pub displaced_fuel_kwh_per_year: Option<f64>,
    pub annual_value: Option<f64>,
    /// The same heat all year as process or boiler make-up water, for comparison.
    pub process_water_annual_value: Option<f64>,
    pub cautions: Vec<String>,
}

/// The data-sufficiency verdict (rules in `analysis::sufficiency`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Verdict {
    /// The data carry every figure.
    Enough,
    /// Annual figures are given but rest on less than the rules ask for: read them as indicative.
    Thin,
    /// No annual figure and no measure: the data cannot carry them.
    Insufficient,
}

impl Verdict {
    pub fn as_str(self) -> &'static str {
        match self {
            Self::Enough => "enough",
            Self::Thin => "thin",
            Self::Insufficient => "insufficient",
        }
    }
}

/// A figure left out (`null`) because the data cannot support it, and why.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Withheld {
    /// The summary's field, as a JSON path (`baseline.annual_energy_kwh`).
    pub figure: String,
    pub reason: String,
}

/// `summary.sufficiency` (API.md).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Sufficiency {
    pub verdict: Verdict,
    /// Why the verdict is not `enough` (empty when it is), in SI words.
    pub reasons: Vec<String>,
    /// `reasons` in parts, one for one (`recommend::Part`), for a page in the reader's units.
    #[serde(default)]
    pub reason_parts: Vec<Vec<Part>>,
    /// Figures set to `null`, each with its reason.
    pub withheld: Vec<Withheld>,
    /// Hours in which every compressor with a power column was logged together.
    pub power_hours: f64,
    /// Hours with power and measured flow together (`None`: no flow meter).
    pub power_flow_hours: Option<f64>,
    /// Hours with power and header pressure together (`None`: no pressure logged).
    pub power_pressure_hours: Option<f64>,
    /// Weekdays (of 7, in the site's time zone) with power logged.
    pub weekdays_logged: u32,
    /// The pressure log passed the credibility checks (`None`: no pressure logged).
    pub pressure_credible: Option<bool>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Method {
    pub figure: String,
    /// The formula in SI words (the JSON's).
    pub formula: String,
    pub source: String,
    /// The formula in parts when it quotes a figure with a unit (`recommend::Part`), so the pages
    /// render it in the reader's units; empty: `formula` reads the same in both unit systems.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub formula_parts: Vec<Part>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Summary {
    pub period: Period,
    pub coverage: Coverage,
    pub flow_source: FlowSource,
    pub system: SystemFigures,
    pub pressure: PressureFigures,
    /// The curve and storage behind the marginal specific power (the trim machine's part-load
    /// model, `core::partload`): what leaks, artificial demand and the pressure measure are priced at.
    #[serde(default)]
    pub part_load_model: Option<crate::core::partload::PartLoadModel>,
    pub compressors: Vec<CompressorFigures>,
    pub demand: Demand,
    pub baseline: Baseline,
    pub leaks: LeakFigures,
    pub heat: HeatFigures,
    /// In the order they are stacked (`recommend::stack`).
    pub recommendations: Vec<Recommendation>,
    /// The sums of the stacked figures (`None`: no measure).
    #[serde(default)]
    pub measures_total: Option<MeasuresTotal>,
    /// Dryers, drains and end uses on record, priced (`core::treatment`, `analysis::transmission`).
    #[serde(default)]
    pub transmission: crate::core::treatment::Transmission,
    /// The mean flow split by what uses it; `None` without treatment or end-use records.
    #[serde(default)]
    pub demand_split: Option<crate::core::treatment::DemandSplit>,
    /// What a change of discharge pressure acts on (the machines' loaded energy a year and stages,
    /// the plan's pressure rule): the filters' excess drops are priced on it
    /// (`analysis::transmission`). Kept in memory only, never in the JSON.
    #[serde(skip)]
    pub discharge: Option<crate::core::recommend::DischargeBasis>,
    /// Whether the data can carry the annual figures, and the figures withheld (`sufficiency`).
    pub sufficiency: Sufficiency,
    pub methods: Vec<Method>,
    /// The assumptions in SI words (the JSON's); [`Self::assumption_parts`] holds them in parts.
    pub assumptions: Vec<String>,
    /// Sources of error a reader should know of (one power factor for a machine logged in amps).
    #[serde(default)]
    pub warnings: Vec<String>,
    /// `assumptions`, one for one, in parts (`recommend::Part`): the pages render these in the
    /// reader's units. Pushed together through [`Self::assume`].
    #[serde(default)]
    pub assumption_parts: Vec<Vec<Part>>,
    /// `warnings`, one for one, in parts; pushed together through [`Self::warn`].
    #[serde(default)]
    pub warning_parts: Vec<Vec<Part>>,
}

impl Summary {
    /// Adds an assumption: its parts, and their SI rendering to `assumptions`.
    pub fn assume(&mut self, parts: Vec<Part>) {
        self.assumptions.push(si_words(&parts));
        self.assumption_parts.push(parts);
    }
    /// Adds a warning: its parts, and their SI rendering to `warnings`.
    pub fn warn(&mut self, parts: Vec<Part>) {
        self.warnings.push(si_words(&parts));
        self.warning_parts.push(parts);
    }
}

/// Words in parts rendered in SI for the JSON's strings (the pages render the parts themselves).
pub fn si_words(parts: &[Part]) -> String {
    let si = crate::core::display::Fmt::new(
        crate::core::units::UnitSystem::Si,
        crate::core::units::PressureAbs(crate::core::units::P_STD_ATM),
    );
    crate::core::display::render_parts(parts, &si)
}
