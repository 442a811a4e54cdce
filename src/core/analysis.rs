/*!
The audit's figures: one pass over the logged [`Frame`] that yields the [`Summary`] the summary page and
`GET /api/v1/audits/{id}/summary` show (API.md "The audit's figures"), plus the decay events proposed as
pressure-decay tests.

# Rules (each also listed in [`Summary::methods`] / [`Summary::assumptions`])
- **Energy and mean power**: each compressor's power column is integrated over its logged bins
  (`series::integrate`); system energy and mean power are the sums over compressors, so a gap in one
  logger does not drop the others.
- **Flow**: the system flow meters if any (`flow_source = "measured"`), else the flow estimated from
  each machine's states (`"estimated_from_compressor_states"`, `estimated: true` wherever shown).
- **Specific power** is interval-synchronous: Σ power / Σ flow over the bins where both exist (never a
  ratio of averages over different periods, FIELD-NOTES §3).
- **Isothermal efficiency**: Σ isothermal power of the logged flow between the site atmosphere and the
  header pressure / Σ logged power, over bins where all three exist.
- **Peak flow**: the highest mean over 1-minute windows (or one bin, if bins are longer); **peak power**
  for the demand charge: the highest 15-minute mean (utilities bill 15- or 30-minute demand; common
  practice).
- **Weekday × hour** profiles are in the site's local time (`site.timezone`, IANA; UTC if unknown).
- **Production hours**: the site's schedule if given; otherwise detected: a weekday-hour cell is
  production when its mean flow is at least 35 % of the highest cell's mean (common practice; demand at
  night and at weekends is mostly leaks).
- **Pressure bands**: p5/p50/p95 of the header pressure; the low limit is the lowest rated pressure of
  the compressors minus 1 bar (below it tools are likely short of air; common practice), the high limit
  the highest rated pressure.
- **Annualisation**: if `operating_hours_per_year` is set, mean × those hours; else, for a log of at
  least a week, the logged weekly pattern (mean of each weekday-hour cell; a cell never logged takes the
  overall mean) repeated over `operating_weeks_per_year`; for a shorter log, the mean × 168 h ×
  weeks. Annual cost = energy × price + demand charge × peak 15-min kW × 12.
- **Leaks**: all estimates side by side; the adopted figure is the median of the field tests; without
  tests, the mean flow in non-production hours (an upper bound: fixed users such as dryer purge are in
  it). Leak energy is priced at the **marginal** specific power of the trim machine (FIELD-NOTES §5).
- **Trim machine**: a running variable-speed machine if there is one (a sequencer trims with it);
  otherwise the machine with the largest share of its running time unloaded or at part load.
- **Heat**: heat rejected = input - heat carried by the delivered air (`heat::heat_rejected`, 10 K
  delivery rise); recoverable = `heat::recoverable_fraction` × input; the annual recoverable heat is
  spread evenly over the months and valued in the heating months (or all year for process water).
- **Uncertainty**: default instrument accuracies ([`Accuracy`]), combined in quadrature for products
  and ratios; each headline figure has `_low` / `_high` at ± one combined uncertainty.
*/

use serde::{Deserialize, Serialize};

use super::fieldtest::{default_relative_uncertainty, quad};
use super::heat;
use super::leaks;
use super::model::{CompressorSpec, Control, SiteSpec, StorageSpec, WeeklySchedule};
use super::recommend::{
    self, ControlCase, CostOverrides, HeatCase, MachineUse, RecommendInput, Recommendation,
};
use super::series::{integrate, sum_columns, Frame, Grid};
use super::states::{self, State, StateStats};
use super::thermo;
use super::units::{FreeAirFlow, Power, PressureAbs, SiteAir, Volume, M3_PER_FT3};

/// Default instrument accuracies (fractions of reading unless named otherwise).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Accuracy {
    /// True-power logger (common practice: class 1 meters).
    pub power_true_rel: f64,
    /// Power from current with an assumed power factor.
    pub power_current_rel: f64,
    /// Flow meter, of reading.
    pub flow_rel: f64,
    /// Flow estimated from compressor states and rated FAD (our assumption: rated FAD of a worn
    /// machine and the state reading together).
    pub flow_estimated_rel: f64,
    /// Pressure transmitter span, bar, and accuracy as a fraction of span.
    pub pressure_span_bar: f64,
    pub pressure_rel_of_span: f64,
    /// System volume for bleed-down and decay tests.
    pub volume_rel: f64,
    /// Tags of compressors whose power is derived from current.
    pub current_derived_power: Vec<String>,
}

impl Default for Accuracy {
    fn default() -> Self {
        Self {
            power_true_rel: 0.01,
            power_current_rel: 0.05,
            flow_rel: 0.03,
            flow_estimated_rel: 0.10,
            pressure_span_bar: 16.0,
            pressure_rel_of_span: 0.005,
            volume_rel: 0.20,
            current_derived_power: Vec::new(),
        }
    }
}

impl Accuracy {
    /// Pressure uncertainty, bar (0.5 % of a 16 bar span = 0.08 bar by default).
    pub fn pressure_abs_bar(&self) -> f64 {
        self.pressure_span_bar * self.pressure_rel_of_span
    }
}

/// A leak estimate from an accepted field test.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LeakEstimate {
    pub test_id: i64,
    pub method: String,
    /// At the operating or production pressure, m³/min free air.
    pub leak_flow_m3_min: f64,
}

/// What the passes over the bins read besides the frame: the compressors and the site's air, clock
/// and production schedule (the operating year is applied afterwards, to per-cell sums). [`data_figures`] is given nothing else, so an equal `DataSpec` over an equal frame
/// gives an equal [`DataFigures`].
#[derive(Debug, Clone, PartialEq)]
pub struct DataSpec {
    pub compressors: Vec<CompressorSpec>,
    pub air: SiteAir,
    pub timezone: String,
    pub production: Option<WeeklySchedule>,
}

impl DataSpec {
    pub fn of(site: &SiteSpec, compressors: &[CompressorSpec]) -> Self {
        Self {
            compressors: compressors.to_vec(),
            air: site.air,
            timezone: site.timezone.clone(),
            production: site.production.clone(),
        }
    }
}

/// Everything the summary is computed from besides the logged frame.
#[derive(Debug, Clone)]
pub struct AuditInput<'a> {
    pub site: &'a SiteSpec,
    pub compressors: &'a [CompressorSpec],
    pub leak_estimates: Vec<LeakEstimate>,
    pub costs: &'a CostOverrides,
    pub accuracy: &'a Accuracy,
    /// Stored what-if results of the present data (`recommend::ScenarioCase`).
    pub scenarios: &'a [recommend::ScenarioCase],
}

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
    pub hours: f64,
    pub step_s: f64,
    pub bins: usize,
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
    pub peak_power_kw: f64,
    pub peak_power_window_s: f64,
    pub air_m3: f64,
    pub air_m3_low: f64,
    pub air_m3_high: f64,
    pub mean_flow_m3_min: f64,
    pub mean_flow_m3_min_low: f64,
    pub mean_flow_m3_min_high: f64,
    pub peak_flow_m3_min: f64,
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
    pub specific_power_degradation_percent: Option<f64>,
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
    pub power_source: PowerSource,
    pub energy_kwh: f64,
    pub energy_kwh_low: f64,
    pub energy_kwh_high: f64,
    pub mean_power_kw: f64,
    pub annual_energy_kwh: f64,
    pub loaded_fraction: f64,
    pub part_load_fraction: f64,
    pub unloaded_fraction: f64,
    pub off_fraction: f64,
    pub cycles_per_hour: f64,
    pub logged_hours: f64,
    pub running_hours: f64,
    pub loaded_hours: f64,
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
    pub specific_power_degradation_percent: Option<f64>,
    pub loaded_power_vs_rated_percent: Option<f64>,
    pub marginal_kw_per_m3_min: f64,
    pub trim: bool,
    pub heat_rejected_kwh: f64,
    pub recoverable_kwh: f64,
    pub annual_heat_rejected_kwh: f64,
    pub annual_recoverable_kwh: f64,
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
    pub peak_flow_m3_min: f64,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Baseline {
    pub rule: String,
    /// Hours of the operating year the annual figures cover.
    pub annual_hours: f64,
    /// Annual hours with some compressor running.
    pub annual_running_hours: f64,
    pub annual_energy_kwh: f64,
    pub annual_energy_kwh_low: f64,
    pub annual_energy_kwh_high: f64,
    pub annual_energy_cost: f64,
    pub annual_demand_charge: f64,
    pub annual_cost: f64,
    pub annual_cost_low: f64,
    pub annual_cost_high: f64,
    pub cost_per_1000_m3: Option<f64>,
    pub cost_per_1000_ft3: Option<f64>,
    pub annual_co2_t: f64,
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

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LeakFigures {
    pub estimates: Vec<LeakEstimateFigure>,
    pub adopted_leak_flow_m3_min: Option<f64>,
    pub adopted_leak_flow_m3_min_low: Option<f64>,
    pub adopted_leak_flow_m3_min_high: Option<f64>,
    pub adopted_rule: String,
    pub share_of_mean_demand: Option<f64>,
    pub share_of_mean_demand_low: Option<f64>,
    pub share_of_mean_demand_high: Option<f64>,
    pub share_of_production_demand: Option<f64>,
    pub share_of_non_production_demand: Option<f64>,
    pub band: Option<leaks::LeakShareBand>,
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
    pub annual_heat_rejected_kwh: f64,
    pub annual_recoverable_kwh: f64,
    pub recoverable_kw_at_full_load: f64,
    pub use_kind: heat::HeatUseKind,
    pub useful_heat_kwh_per_year: f64,
    pub displaced_fuel_kwh_per_year: f64,
    pub annual_value: f64,
    /// The same heat all year as process or boiler make-up water, for comparison.
    pub process_water_annual_value: f64,
    pub cautions: Vec<String>,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Method {
    pub figure: String,
    pub formula: String,
    pub source: String,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Summary {
    pub period: Period,
    pub coverage: Coverage,
    pub flow_source: FlowSource,
    pub system: SystemFigures,
    pub pressure: PressureFigures,
    pub compressors: Vec<CompressorFigures>,
    pub demand: Demand,
    pub baseline: Baseline,
    pub leaks: LeakFigures,
    pub heat: HeatFigures,
    pub recommendations: Vec<Recommendation>,
    pub methods: Vec<Method>,
    pub assumptions: Vec<String>,
}

const NO_CELL: u8 = u8::MAX;
/// Share of the peak weekday-hour flow below which an hour is non-production (module doc).
pub const NON_PRODUCTION_SHARE_OF_PEAK: f64 = 0.35;

/// The weekday-hour cell (0..168, Monday 00 first) of each bin in local time.
fn calendar(grid: &Grid, timezone: &str) -> (Vec<u8>, bool) {
    let (tz, ok) = match jiff::tz::TimeZone::get(timezone) {
        Ok(tz) => (tz, true),
        Err(_) => (jiff::tz::TimeZone::UTC, false),
    };
    let cells = (0..grid.len)
        .map(|i| {
            let ms = grid.bin_start_ms(i);
            let Ok(ts) = jiff::Timestamp::from_millisecond(ms) else { return NO_CELL };
            let local_s = ms.div_euclid(1000) + i64::from(tz.to_offset(ts).seconds());
            let day = local_s.div_euclid(86_400);
            // 1970-01-01 was a Thursday (Monday = 0 -> Thursday = 3).
            let weekday = (day + 3).rem_euclid(7);
            let hour = local_s.rem_euclid(86_400) / 3600;
            (weekday * 24 + hour) as u8
        })
        .collect();
    (cells, ok)
}

/// How logged means become annual figures (module doc).
#[derive(Debug, Clone, Copy, PartialEq)]
enum AnnualRule {
    Hours(f64),
    Weekly(f64),
    Scaled(f64),
}

impl AnnualRule {
    fn hours(self) -> f64 {
        match self {
            Self::Hours(h) => h,
            Self::Weekly(w) | Self::Scaled(w) => 168.0 * w,
        }
    }
}

/// A binned series summed per weekday-hour cell: all that its annual figure needs under any rule,
/// so an edit of the operating year re-prices instead of passing over the bins again.
#[derive(Debug, Clone, PartialEq)]
struct CellSums {
    sum: [f64; 168],
    n: [u32; 168],
    /// Over all cells, summed in bin order.
    all: f64,
    count: usize,
}

impl CellSums {
    /// The sums of the series whose value in bin `k` is `value(k)`, without making it (the masked
    /// series of the measures would otherwise cost 4 bytes a bin each).
    fn of(cells: &[u8], value: impl Fn(usize) -> f32) -> Self {
        let mut c = Self { sum: [0.0; 168], n: [0; 168], all: 0.0, count: 0 };
        for (k, &cell) in cells.iter().enumerate() {
            let v = value(k);
            if v.is_finite() && cell != NO_CELL {
                c.sum[cell as usize] += v as f64;
                c.n[cell as usize] += 1;
                c.all += v as f64;
                c.count += 1;
            }
        }
        c
    }

    /// Annual integral (value × h) under the rule (module doc).
    fn annual(&self, rule: AnnualRule) -> f64 {
        if self.count == 0 {
            return 0.0;
        }
        let mean = self.all / self.count as f64;
        match rule {
            AnnualRule::Hours(h) => mean * h,
            AnnualRule::Scaled(w) => mean * 168.0 * w,
            AnnualRule::Weekly(w) => {
                (0..168)
                    .map(|c| if self.n[c] > 0 { self.sum[c] / self.n[c] as f64 } else { mean })
                    .sum::<f64>()
                    * w
            }
        }
    }
}

/// How the site's operating year turns a log of `hours` into annual figures, and its words.
fn annual_rule(site: &SiteSpec, hours: f64) -> (AnnualRule, String) {
    let rule = match site.operating_hours_per_year {
        Some(h) => AnnualRule::Hours(h),
        // A logger week rarely spans exactly 168 h (its first reading comes one interval after the
        // hour); a weekday-hour cell without data takes the overall mean (see `CellSums::annual`).
        None if hours >= 167.0 => AnnualRule::Weekly(site.operating_weeks_per_year),
        None => AnnualRule::Scaled(site.operating_weeks_per_year),
    };
    let text = match rule {
        AnnualRule::Hours(h) => format!("mean over the log × {h} operating hours per year"),
        AnnualRule::Weekly(w) => {
            format!("the logged weekly pattern (weekday × hour means) repeated over {w} weeks")
        }
        AnnualRule::Scaled(w) => format!("log shorter than a week: mean over the log × 168 h × {w} weeks"),
    };
    (rule, text)
}

/// What the measures need from one compressor, with its annual figures as cell sums.
#[derive(Debug, Clone, PartialEq)]
struct MachineCells {
    /// Unloaded power out of production, W.
    idle: Option<CellSums>,
    /// Power above unloaded power, W.
    above: Option<CellSums>,
    /// 1 while loaded.
    loaded: Option<CellSums>,
    loaded_fraction: f64,
    cycles_per_hour: f64,
    mean_loaded_power_kw: Option<f64>,
    full_load_specific_power_kw_per_m3_min: Option<f64>,
}

/// The control case with its logged and modelled power (W) as cell sums.
#[derive(Debug, Clone, PartialEq)]
struct ControlCells {
    logged: CellSums,
    modelled: CellSums,
    curve: String,
    simultaneous_cycling_share: f64,
}

/// Weekday × hour means of a series, scaled by `k`.
fn weekday_hour(values: &[f32], cells: &[u8], k: f64) -> Vec<Vec<Option<f64>>> {
    let (mut sum, mut n) = ([0.0f64; 168], [0usize; 168]);
    for (&v, &c) in values.iter().zip(cells) {
        if v.is_finite() && c != NO_CELL {
            sum[c as usize] += v as f64;
            n[c as usize] += 1;
        }
    }
    (0..7)
        .map(|d| {
            (0..24).map(|h| (n[d * 24 + h] > 0).then(|| sum[d * 24 + h] / n[d * 24 + h] as f64 * k)).collect()
        })
        .collect()
}

/// Highest mean over consecutive non-overlapping windows of `window_s` (at least one bin); windows
/// with fewer than half their bins present are skipped.
fn peak_mean(grid: &Grid, values: &[f32], window_s: f64) -> (f64, f64) {
    let k = ((window_s / grid.step_s()).round() as usize).max(1);
    let mut best = f64::NAN;
    for chunk in values.chunks(k) {
        let v: Vec<f64> = chunk.iter().filter(|x| x.is_finite()).map(|&x| x as f64).collect();
        if v.len() * 2 >= k && !v.is_empty() {
            let m = v.iter().sum::<f64>() / v.len() as f64;
            if best.is_nan() || m > best {
                best = m;
            }
        }
    }
    (if best.is_finite() { best } else { 0.0 }, k as f64 * grid.step_s())
}

fn percentile<T: Copy + Into<f64>>(sorted: &[T], p: f64) -> f64 {
    let x = p * (sorted.len() - 1) as f64;
    let (i, f) = (x.floor() as usize, x - x.floor());
    let at = |k: usize| -> f64 { sorted[k].into() };
    if i + 1 < sorted.len() {
        at(i) + f * (at(i + 1) - at(i))
    } else {
        at(i)
    }
}

fn band(v: f64, rel: f64) -> (f64, f64) {
    (v * (1.0 - rel), v * (1.0 + rel))
}

fn ts_string(ms: i64) -> String {
    jiff::Timestamp::from_millisecond(ms).map(|t| t.to_string()).unwrap_or_default()
}

fn mean_where(values: &[f32], mask: impl Fn(usize) -> bool) -> Option<f64> {
    let (mut s, mut n) = (0.0, 0usize);
    for (i, &v) in values.iter().enumerate() {
        if v.is_finite() && mask(i) {
            s += v as f64;
            n += 1;
        }
    }
    (n > 0).then(|| s / n as f64)
}

/// Compute the audit's figures.
/// The data-heavy half of the summary: every pass over the frame's bins, and nothing that prices,
/// weighs an uncertainty or reads a field test. Small (a few kB whatever the log's length), so the
/// service keeps it beside the frame: an edit of prices, costs, tests, scenarios or accuracies then
/// re-runs only [`summary_of`], which never touches a bin.
#[derive(Debug, Clone, PartialEq)]
pub struct DataFigures {
    /// What it was computed from besides the frame.
    pub spec: DataSpec,
    period: Period,
    tz_ok: bool,
    /// Per compressor.
    stats: Vec<Option<StateStats>>,
    power_logged: Vec<bool>,
    energy_kwh: Vec<f64>,
    mean_kw: Vec<f64>,
    /// Power, W, per compressor (`None`: not logged).
    power_cells: Vec<Option<CellSums>>,
    comp_air: Vec<f64>,
    /// Specific power, flow estimated, full-load specific power.
    comp_sp: Vec<(Option<f64>, bool, Option<f64>)>,
    machines: Vec<MachineCells>,
    without_power: Vec<String>,
    flow_source: FlowSource,
    flow_estimated: bool,
    air_m3: f64,
    mean_flow: f64,
    peak_flow: f64,
    peak_flow_window: f64,
    peak_kw: f64,
    peak_kw_window: f64,
    sp: Option<f64>,
    part_load_curve: Vec<PartLoadPoint>,
    iso: Option<f64>,
    /// Mean header pressure over the isothermal bins, Pa(abs) (sets its uncertainty).
    iso_mean_pa: f64,
    rated_sp: Option<f64>,
    trim: Option<usize>,
    marginal: f64,
    prod_share: f64,
    q_prod: Option<f64>,
    q_nonprod: Option<f64>,
    /// 1 while some compressor runs (`None`: no states, every hour counts).
    running_cells: Option<CellSums>,
    control: Option<ControlCells>,
    /// `uncertainty_bar` is set by [`summary_of`].
    pressure: PressureFigures,
    demand: Demand,
    coverage: Coverage,
}

/// The summary of a frame (module doc): [`data_figures`] then [`summary_of`].
pub fn summarize(frame: &Frame, input: &AuditInput) -> Summary {
    summary_of(&data_figures(frame, &DataSpec::of(input.site, input.compressors)), input)
}

/// Every pass over the bins (module doc: energy, flow, specific power, states, production hours,
/// annualisation, the control case, pressure and demand).
pub fn data_figures(frame: &Frame, spec: &DataSpec) -> DataFigures {
    let cs = spec.compressors.as_slice();
    let grid = frame.grid;
    let n = grid.len;
    let atm = spec.air.atmosphere;

    let (cells, tz_ok) = calendar(&grid, &spec.timezone);

    // Per-compressor power, states and flow.
    let powers: Vec<Option<&[f32]>> =
        (0..cs.len()).map(|i| frame.power_of(i).map(|c| c.values.as_slice())).collect();
    let st: Vec<Option<Vec<State>>> =
        cs.iter().zip(&powers).map(|(c, p)| p.map(|p| states::classify(c, p))).collect();
    let est_flow: Vec<Option<Vec<f32>>> = cs
        .iter()
        .zip(&powers)
        .zip(&st)
        .map(|((c, p), s)| match (p, s) {
            (Some(p), Some(s)) => Some(states::estimated_flow(c, s, p)),
            _ => None,
        })
        .collect();
    let stats: Vec<Option<StateStats>> = st
        .iter()
        .zip(&powers)
        .map(|(s, p)| match (s, p) {
            (Some(s), Some(p)) => Some(states::state_stats(&grid, s, p)),
            _ => None,
        })
        .collect();
    let without_power: Vec<String> =
        cs.iter().zip(&powers).filter(|(_, p)| p.is_none()).map(|(c, _)| c.tag.clone()).collect();
    let total_power: Option<Vec<f32>> = sum_columns(n, powers.iter().flatten().copied());

    // The metered system flow when there is one (taken, not copied), else the compressors' estimate.
    let (flow, flow_source, flow_estimated) = match frame.system_flow() {
        Some(q) => (Some(q), FlowSource::Measured, false),
        None => (
            sum_columns(n, est_flow.iter().flatten().map(|v| v.as_slice())),
            FlowSource::EstimatedFromCompressorStates,
            true,
        ),
    };
    let pressure = frame.header_pressure().map(|c| c.values.as_slice());

    // Energy per compressor.
    let integ: Vec<Option<super::series::Integral>> =
        powers.iter().map(|p| p.map(|p| integrate(&grid, p))).collect();
    let energy_kwh: Vec<f64> = integ.iter().map(|i| i.map_or(0.0, |i| i.total / 3.6e6)).collect();
    let mean_kw: Vec<f64> = integ
        .iter()
        .map(|i| i.map_or(0.0, |i| if i.mean.is_finite() { i.mean / 1000.0 } else { 0.0 }))
        .collect();

    // Flow figures.
    let flow_i = flow.as_ref().map(|q| integrate(&grid, q));
    let air_m3 = flow_i.map_or(0.0, |i| i.total);
    let mean_flow = flow_i.map_or(0.0, |i| if i.mean.is_finite() { i.mean * 60.0 } else { 0.0 });
    let (peak_flow, peak_flow_window) = flow.as_ref().map_or((0.0, 60.0), |q| peak_mean(&grid, q, 60.0));
    let peak_flow = peak_flow * 60.0;
    let (peak_kw, peak_kw_window) = total_power.as_ref().map_or((0.0, 900.0), |p| peak_mean(&grid, p, 900.0));
    let peak_kw = peak_kw / 1000.0;

    // Interval-synchronous specific power, part-load curve, isothermal efficiency.
    let (mut sp_p, mut sp_q) = (0.0, 0.0);
    // The header pressure's sum and count over those bins (its mean sets the pressure's share of
    // the isothermal efficiency's uncertainty).
    let (mut iso_w, mut iso_p, mut iso_pa_sum, mut iso_pa_n) = (0.0, 0.0, 0.0f64, 0usize);
    let q_max = flow
        .as_ref()
        .map_or(0.0, |q| q.iter().filter(|x| x.is_finite()).fold(0.0f64, |a, &b| a.max(b as f64)));
    let mut curve = [(0.0f64, 0.0f64, 0usize); 10];
    let mut both = 0usize;
    if let (Some(p), Some(q)) = (&total_power, &flow) {
        for i in 0..n {
            let (pw, qq) = (p[i] as f64, q[i] as f64);
            if !(pw.is_finite() && qq.is_finite()) {
                continue;
            }
            sp_p += pw;
            sp_q += qq;
            both += 1;
            if q_max > 0.0 {
                let k = ((qq / q_max * 10.0) as usize).min(9);
                curve[k].0 += pw;
                curve[k].1 += qq;
                curve[k].2 += 1;
            }
            if let Some(pr) = pressure {
                let pa = pr[i] as f64;
                if pa.is_finite() && pa > atm.0 && pw > 0.0 {
                    iso_w += thermo::isothermal_power(FreeAirFlow(qq), atm, PressureAbs(pa)).0;
                    iso_p += pw;
                    iso_pa_sum += pa;
                    iso_pa_n += 1;
                }
            }
        }
    }
    let sp = (sp_q > 0.0).then(|| (sp_p / 1000.0) / (sp_q * 60.0));
    let part_load_curve: Vec<PartLoadPoint> = curve
        .iter()
        .enumerate()
        .filter(|(_, c)| c.2 > 0 && c.1 > 0.0)
        .map(|(k, c)| PartLoadPoint {
            flow_m3_min: (k as f64 + 0.5) * q_max / 10.0 * 60.0,
            specific_power_kw_per_m3_min: (c.0 / 1000.0) / (c.1 * 60.0),
            share_of_time: c.2 as f64 / both.max(1) as f64,
        })
        .collect();
    let iso = (iso_p > 0.0).then(|| thermo::isothermal_efficiency(Power(iso_w), Power(iso_p)));
    let iso_mean_pa = if iso_pa_n == 0 { 8e5 } else { iso_pa_sum / iso_pa_n as f64 };

    // Air per compressor (meter on the machine, else estimated) and the data-sheet comparison.
    let mut comp_air = vec![0.0; cs.len()];
    let mut comp_sp: Vec<(Option<f64>, bool, Option<f64>)> = Vec::new();
    for i in 0..cs.len() {
        let own = frame.flow_of(i).map(|col| col.values.as_slice());
        let q = own.or(est_flow[i].as_deref());
        let estimated = own.is_none();
        let (mut sp_pp, mut sp_qq, mut fl_p, mut fl_q) = (0.0, 0.0, 0.0, 0.0);
        if let (Some(p), Some(q), Some(s)) = (powers[i], q, &st[i]) {
            for k in 0..n {
                let (pw, qq) = (p[k] as f64, q[k] as f64);
                if pw.is_finite() && qq.is_finite() {
                    sp_pp += pw;
                    sp_qq += qq;
                    if s[k] == State::Loaded {
                        fl_p += pw;
                        fl_q += qq;
                    }
                }
            }
            comp_air[i] = integrate(&grid, q).total;
        }
        let sp_c = (sp_qq > 0.0).then(|| (sp_pp / 1000.0) / (sp_qq * 60.0));
        let full = (fl_q > 0.0).then(|| (fl_p / 1000.0) / (fl_q * 60.0));
        // Without a loaded bin with flow, the loaded power over the rated flow.
        let full = full.or_else(|| {
            stats[i].as_ref().and_then(|s| s.mean_loaded_power_kw).map(|p| p / cs[i].rated_flow_m3_min)
        });
        comp_sp.push((sp_c, estimated, full));
    }
    let air_total: f64 = comp_air.iter().sum();
    let rated_sp = (air_total > 0.0).then(|| {
        cs.iter().zip(&comp_air).map(|(c, a)| c.rated_specific_power_kw_per_m3_min() * a).sum::<f64>()
            / air_total
    });

    // Trim machine and marginal specific power.
    let trim = {
        let running_vsd = cs.iter().enumerate().find(|(i, c)| {
            c.control == Control::VariableSpeed && stats[*i].as_ref().is_some_and(|s| s.running_hours > 0.0)
        });
        running_vsd.map(|(i, _)| i).or_else(|| {
            let score = |i: usize| {
                stats[i].as_ref().map_or(-1.0, |s| {
                    let run = 1.0 - s.off_fraction;
                    if run <= 0.0 {
                        -1.0
                    } else {
                        (s.unloaded_fraction + s.part_load_fraction) / run
                    }
                })
            };
            (0..cs.len()).filter(|&i| score(i) >= 0.0).max_by(|&a, &b| score(a).total_cmp(&score(b)))
        })
    };
    let marginal = trim.map_or_else(
        || cs.first().map_or(0.0, states::marginal_kw_per_m3_min),
        |t| states::marginal_kw_per_m3_min(&cs[t]),
    );

    // Production hours.
    let (is_prod, production_source, production_rule): (Vec<bool>, ProductionSource, String) = match &spec
        .production
    {
        Some(s) => (
            cells.iter().map(|&c| c != NO_CELL && s.hours[c as usize / 24][c as usize % 24]).collect(),
            ProductionSource::Schedule,
            "the site's weekly production schedule".into(),
        ),
        None => {
            let basis = flow.as_deref().or(total_power.as_deref());
            let prof = basis.map(|b| weekday_hour(b, &cells, 1.0)).unwrap_or_default();
            let peak = prof.iter().flatten().flatten().fold(0.0f64, |a, &b| a.max(b));
            let prod_cell: Vec<bool> = (0..168)
                .map(|c| {
                    prof.get(c / 24)
                        .and_then(|d| d[c % 24])
                        .is_none_or(|v| v >= NON_PRODUCTION_SHARE_OF_PEAK * peak)
                })
                .collect();
            (
                cells.iter().map(|&c| c == NO_CELL || prod_cell[c as usize]).collect(),
                ProductionSource::Detected,
                format!(
                    "a weekday-hour is production when its mean {} is at least {:.0} % of the highest weekday-hour mean",
                    if flow.is_some() { "flow" } else { "power" },
                    NON_PRODUCTION_SHARE_OF_PEAK * 100.0
                ),
            )
        }
    };
    let prod_share = if n > 0 { is_prod.iter().filter(|&&b| b).count() as f64 / n as f64 } else { 0.0 };
    let q_prod = flow.as_ref().and_then(|q| mean_where(q, |i| is_prod[i])).map(|q| q * 60.0);
    let q_nonprod = flow.as_ref().and_then(|q| mean_where(q, |i| !is_prod[i])).map(|q| q * 60.0);

    // Annual figures.
    let running_any = |k: usize| {
        let mut known = false;
        for s in st.iter().flatten() {
            match s[k] {
                State::Unknown => {}
                x if x.running() => return 1.0,
                _ => known = true,
            }
        }
        if known {
            0.0
        } else {
            f32::NAN
        }
    };
    let running_cells = st.iter().flatten().next().is_some().then(|| CellSums::of(&cells, running_any));
    let power_cells: Vec<Option<CellSums>> =
        powers.iter().map(|p| p.map(|p| CellSums::of(&cells, |k| p[k]))).collect();

    // Per compressor: the annualised figures the measures need.
    let mut machines = Vec::new();
    for (i, c) in cs.iter().enumerate() {
        let s = stats[i].as_ref();
        // Masked series for the measures: unloaded out of production, and power above idle.
        let unl_w = c.unloaded_power_fraction * c.rated_power_kw * 1000.0;
        let (idle_np, above) = match (powers[i], &st[i]) {
            (Some(p), Some(sv)) => {
                let idle = |k: usize| match sv[k] {
                    State::Unknown => f32::NAN,
                    State::Unloaded if !is_prod[k] => p[k],
                    _ => 0.0,
                };
                let above = |k: usize| {
                    if sv[k].running() {
                        (p[k] - unl_w as f32).max(0.0)
                    } else if p[k].is_finite() {
                        0.0
                    } else {
                        f32::NAN
                    }
                };
                (Some(CellSums::of(&cells, idle)), Some(CellSums::of(&cells, above)))
            }
            _ => (None, None),
        };
        let loaded = st[i].as_ref().map(|sv| {
            CellSums::of(&cells, |k| match sv[k] {
                State::Unknown => f32::NAN,
                State::Loaded => 1.0,
                _ => 0.0,
            })
        });
        let (_, estimated, full) = comp_sp[i];
        machines.push(MachineCells {
            idle: idle_np,
            above,
            loaded,
            loaded_fraction: s.map_or(0.0, |s| s.loaded_fraction),
            cycles_per_hour: s.map_or(0.0, |s| s.cycles_per_hour),
            mean_loaded_power_kw: s.and_then(|s| s.mean_loaded_power_kw),
            full_load_specific_power_kw_per_m3_min: if estimated { None } else { full },
        });
    }

    // Control case: the trim on a variable-speed curve, over 5-minute windows of its delivered air.
    let control = trim.and_then(|t| {
        let c = &cs[t];
        if c.control == Control::VariableSpeed {
            return None;
        }
        let (p, q) = (powers[t]?, est_flow[t].as_ref()?);
        let s = stats[t].as_ref()?;
        let simultaneous = {
            let lu: Vec<&Vec<State>> = cs
                .iter()
                .zip(&st)
                .filter(|(c, _)| matches!(c.control, Control::LoadUnload | Control::Modulation))
                .filter_map(|(_, s)| s.as_ref())
                .collect();
            let both = (0..n)
                .filter(|&k| {
                    lu.iter().filter(|s| matches!(s[k], State::Unloaded | State::PartLoad)).count() >= 2
                })
                .count();
            if n > 0 {
                both as f64 / n as f64
            } else {
                0.0
            }
        };
        let low_load = s.loaded_fraction < 0.5 && s.running_hours > 0.0;
        if !(low_load || simultaneous > 0.1) {
            return None;
        }
        let own_vsd = cs.iter().find(|x| x.control == Control::VariableSpeed);
        let mut vsd = own_vsd.cloned().unwrap_or_else(|| CompressorSpec {
            control: Control::VariableSpeed,
            power_curve: vec![],
            ..c.clone()
        });
        if own_vsd.is_none() {
            vsd.unloaded_power_fraction = c.unloaded_power_fraction;
        }
        let curve = if own_vsd.is_some() {
            format!("the audit's own variable-speed machine {}", vsd.tag)
        } else {
            format!("a typical variable-speed curve at {}'s rating", c.tag)
        };
        // The modelled power of each 5-minute window (W), then of each bin with flow in it.
        let k = ((300.0 / grid.step_s()).round() as usize).max(1);
        let window_w: Vec<f32> = q
            .chunks(k)
            .map(|chunk| {
                let (sum, count) = chunk
                    .iter()
                    .filter(|x| x.is_finite())
                    .fold((0.0f64, 0usize), |(s, c), &x| (s + x as f64, c + 1));
                if count == 0 {
                    return f32::NAN;
                }
                let qm = sum / count as f64 * 60.0;
                let kw = if qm > 0.0 { states::power_at_flow_kw(&vsd, qm) } else { 0.0 };
                (kw * 1000.0) as f32
            })
            .collect();
        let modelled = |b: usize| if q[b].is_finite() { window_w[b / k] } else { f32::NAN };
        Some(ControlCells {
            logged: CellSums::of(&cells, |b| p[b]),
            modelled: CellSums::of(&cells, modelled),
            curve,
            simultaneous_cycling_share: simultaneous,
        })
    });

    // Pressure.
    let pressure_fig = {
        // One sorted copy in the logged SI values (f32, unstable sort: the frame's own precision),
        // then bar(g) per figure: the conversion is linear, so percentiles commute with it.
        let mut sorted: Vec<f32> =
            pressure.map_or_else(Vec::new, |p| p.iter().copied().filter(|x| x.is_finite()).collect());
        sorted.sort_unstable_by(f32::total_cmp);
        let bar_g = |pa: f64| PressureAbs(pa).bar_g(atm);
        let low_limit = cs.iter().map(|c| c.rated_pressure_bar_g).reduce(f64::min).map(|x| x - 1.0);
        let high = cs.iter().map(|c| c.rated_pressure_bar_g).reduce(f64::max);
        if sorted.is_empty() {
            PressureFigures {
                logged: false,
                mean_bar_g: None,
                min_bar_g: None,
                max_bar_g: None,
                p5_bar_g: None,
                p50_bar_g: None,
                p95_bar_g: None,
                std_dev_bar: None,
                uncertainty_bar: 0.0,
                low_limit_bar_g: low_limit,
                share_below_low_limit: None,
                highest_rated_bar_g: high,
                share_above_highest_rated: None,
            }
        } else {
            let len = sorted.len() as f64;
            let mean = sorted.iter().map(|&v| bar_g(v as f64)).sum::<f64>() / len;
            let var = sorted.iter().map(|&v| (bar_g(v as f64) - mean).powi(2)).sum::<f64>() / len;
            let below = low_limit.map(|l| sorted.partition_point(|&v| bar_g(v as f64) < l) as f64 / len);
            let above =
                high.map(|h| (sorted.len() - sorted.partition_point(|&v| bar_g(v as f64) <= h)) as f64 / len);
            // Linear interpolation commutes with the linear conversion to bar(g).
            let pct = |p: f64| bar_g(percentile(&sorted, p));
            PressureFigures {
                logged: true,
                mean_bar_g: Some(mean),
                min_bar_g: sorted.first().map(|&v| bar_g(v as f64)),
                max_bar_g: sorted.last().map(|&v| bar_g(v as f64)),
                p5_bar_g: Some(pct(0.05)),
                p50_bar_g: Some(pct(0.50)),
                p95_bar_g: Some(pct(0.95)),
                std_dev_bar: Some(var.sqrt()),
                uncertainty_bar: 0.0,
                low_limit_bar_g: low_limit,
                share_below_low_limit: below,
                highest_rated_bar_g: high,
                share_above_highest_rated: above,
            }
        }
    };

    // Demand.
    let duration: Vec<DurationPoint> = flow.as_ref().map_or_else(Vec::new, |q| {
        let mut v: Vec<f32> = q.iter().copied().filter(|x| x.is_finite()).collect();
        v.sort_unstable_by(|a, b| b.total_cmp(a));
        if v.is_empty() {
            return Vec::new();
        }
        (0..50)
            .map(|k| {
                let share = k as f64 / 49.0;
                let idx = ((share * (v.len() - 1) as f64).round() as usize).min(v.len() - 1);
                DurationPoint { share_of_time: share, flow_m3_min: v[idx] as f64 * 60.0 }
            })
            .collect()
    });
    let demand = Demand {
        estimated: flow_estimated,
        timezone: if tz_ok { spec.timezone.clone() } else { "UTC".into() },
        flow_duration_curve: duration,
        weekday_hour_mean_flow_m3_min: flow
            .as_ref()
            .map_or_else(|| vec![vec![None; 24]; 7], |q| weekday_hour(q, &cells, 60.0)),
        weekday_hour_mean_power_kw: total_power
            .as_ref()
            .map_or_else(|| vec![vec![None; 24]; 7], |p| weekday_hour(p, &cells, 1e-3)),
        production_source,
        production_rule,
        production_share_of_time: prod_share,
        production_mean_flow_m3_min: q_prod,
        non_production_mean_flow_m3_min: q_nonprod,
        production_mean_power_kw: total_power
            .as_ref()
            .and_then(|p| mean_where(p, |i| is_prod[i]))
            .map(|x| x / 1000.0),
        non_production_mean_power_kw: total_power
            .as_ref()
            .and_then(|p| mean_where(p, |i| !is_prod[i]))
            .map(|x| x / 1000.0),
        peak_flow_m3_min: peak_flow,
    };

    let coverage = Coverage {
        power: total_power.as_ref().map_or(0.0, |p| integrate(&grid, p).coverage),
        flow: if flow_estimated { 0.0 } else { flow.as_ref().map_or(0.0, |q| integrate(&grid, q).coverage) },
        pressure: pressure.map_or(0.0, |p| integrate(&grid, p).coverage),
    };

    DataFigures {
        spec: spec.clone(),
        period: Period {
            start: ts_string(grid.start_ms),
            end: ts_string(grid.end_ms()),
            hours: grid.hours(),
            step_s: grid.step_s(),
            bins: n,
        },
        tz_ok,
        stats,
        power_logged: powers.iter().map(Option::is_some).collect(),
        energy_kwh,
        mean_kw,
        power_cells,
        comp_air,
        comp_sp,
        machines,
        without_power,
        flow_source,
        flow_estimated,
        air_m3,
        mean_flow,
        peak_flow,
        peak_flow_window,
        peak_kw,
        peak_kw_window,
        sp,
        part_load_curve,
        iso,
        iso_mean_pa,
        rated_sp,
        trim,
        marginal,
        prod_share,
        q_prod,
        q_nonprod,
        running_cells,
        control,
        pressure: pressure_fig,
        demand,
        coverage,
    }
}

/// The summary from a [`DataFigures`] of the audit's frame: prices, costs, uncertainties, heat value,
/// leaks (field tests and logs side by side) and the recommendations. Reads no bin, so it costs
/// well under a millisecond whatever the log's length. `d` must be the data figures of the audit's frame
/// under `DataSpec::of(input.site, input.compressors)`; the compressors and the site's air are
/// taken from `d.spec`.
pub fn summary_of(d: &DataFigures, input: &AuditInput) -> Summary {
    debug_assert!(d.spec == DataSpec::of(input.site, input.compressors), "data figures of other specs");
    let (site, cs, acc) = (input.site, d.spec.compressors.as_slice(), input.accuracy);
    let atm = d.spec.air.atmosphere;
    let mut methods: Vec<Method> = Vec::new();
    let mut assumptions: Vec<String> = Vec::new();
    let m = |figure: &str, formula: &str, source: &str| Method {
        figure: figure.into(),
        formula: formula.into(),
        source: source.into(),
    };
    if !d.tz_ok {
        assumptions
            .push(format!("time zone {:?} unknown: weekday and hour profiles use UTC", d.spec.timezone));
    }
    if !d.without_power.is_empty() {
        assumptions
            .push(format!("no power logged for {}: left out of energy and cost", d.without_power.join(", ")));
    }
    let (flow_estimated, mean_flow, q_prod, q_nonprod) =
        (d.flow_estimated, d.mean_flow, d.q_prod, d.q_nonprod);
    if flow_estimated {
        assumptions.push(
            "no flow meter: flow estimated from compressor states and rated FAD (states module)".into(),
        );
    }
    let u_flow = if flow_estimated { acc.flow_estimated_rel } else { acc.flow_rel };
    let power_rel = |c: &CompressorSpec| {
        if acc.current_derived_power.contains(&c.tag) {
            acc.power_current_rel
        } else {
            acc.power_true_rel
        }
    };
    let energy_kwh = &d.energy_kwh;
    let sys_energy: f64 = energy_kwh.iter().sum();
    let sys_mean_kw: f64 = d.mean_kw.iter().sum();
    let u_power = if sys_energy > 0.0 {
        cs.iter().zip(energy_kwh).map(|(c, e)| (power_rel(c) * e).powi(2)).sum::<f64>().sqrt() / sys_energy
    } else {
        acc.power_true_rel
    };
    methods.push(m(
        "energy_kwh",
        "Σ over compressors of ∫ P dt over logged bins",
        "time-weighted integration of synchronised logger intervals (ISO 11011 measurement practice)",
    ));
    let (sp, iso) = (d.sp, d.iso);
    let u_sp = quad(&[u_power, u_flow]);
    let u_iso = {
        let pm = d.iso_mean_pa;
        let ln_r = (pm / atm.0).ln().max(1e-6);
        quad(&[u_power, u_flow, acc.pressure_abs_bar() * 1e5 / pm / ln_r])
    };
    methods.push(m(
        "specific_power_kw_per_m3_min",
        "Σ P / Σ Q over bins where both power and flow exist (interval-synchronous)",
        "ISO 1217 specific package input power, computed interval by interval",
    ));
    methods.push(m(
        "isothermal_efficiency",
        "Σ p_atm Q ln(p_header / p_atm) / Σ P over bins with power, flow and pressure",
        "ideal-gas isothermal compression work (checked against the Python library fluids)",
    ));
    let (trim, marginal) = (d.trim, d.marginal);
    methods.push(m(
        "marginal_kw_per_m3_min",
        "trim machine's part-load slope: load/unload (P_full - P_unl)/Q; modulation 0.30 P/Q; VSD curve slope; start/stop P/Q",
        "US DOE compressed-air sourcebook: part-load behaviour by control",
    ));

    // Annual figures.
    let (rule, rule_text) = annual_rule(site, d.period.hours);
    let annual_kwh_c: Vec<f64> =
        d.power_cells.iter().map(|c| c.as_ref().map_or(0.0, |c| c.annual(rule) / 1000.0)).collect();
    let annual_kwh: f64 = annual_kwh_c.iter().sum();
    let annual_running_hours = d.running_cells.as_ref().map_or(rule.hours(), |c| c.annual(rule));
    let peak_kw = d.peak_kw;
    let energy_cost = annual_kwh * site.electricity_price_per_kwh;
    let demand_charge = site.demand_charge_per_kw_month * peak_kw * 12.0;
    let annual_cost = energy_cost + demand_charge;
    let cost_per_1000_m3 = sp.map(|s| s / 60.0 * 1000.0 * site.electricity_price_per_kwh);
    methods.push(m(
        "annual_energy_kwh",
        &rule_text,
        "the logged weekly pattern repeated over the operating weeks (airledger's documented rule)",
    ));
    methods.push(m(
        "annual_cost",
        "annual kWh × price + demand charge × peak 15-min kW × 12",
        "US DOE compressed-air tip sheet 1 (annual energy cost)",
    ));
    methods.push(m(
        "cost_per_1000_m3",
        "specific power / 60 (kWh/m³) × 1000 × price; per 1000 ft³ = kW/100 cfm / 6 × price",
        "kW/(m³/min) = kW/100 cfm × 0.353147; US DOE tip sheet 1",
    ));

    // Per compressor: heat and the figures shown.
    let rho_in = atm.0 / (287.05 * d.spec.air.inlet_temperature.0);
    let mut comp_fig = Vec::new();
    let (mut heat_rej, mut heat_rec, mut heat_rej_y, mut heat_rec_y, mut rec_kw) = (0.0, 0.0, 0.0, 0.0, 0.0);
    for (i, c) in cs.iter().enumerate() {
        let factor = if energy_kwh[i] > 0.0 { annual_kwh_c[i] / energy_kwh[i] } else { 0.0 };
        let e = super::units::Energy::from_kwh(energy_kwh[i]);
        let rej =
            heat::heat_rejected(e, d.comp_air[i] * rho_in, heat::DEFAULT_DELIVERY_TEMPERATURE_RISE_K).kwh();
        let frac = heat::recoverable_fraction(c.kind, c.cooling);
        let rec = frac * energy_kwh[i];
        heat_rej += rej;
        heat_rec += rec;
        heat_rej_y += rej * factor;
        heat_rec_y += rec * factor;
        rec_kw += frac * c.rated_power_kw;
        let (sp_c, estimated, full) = d.comp_sp[i];
        let rated = c.rated_specific_power_kw_per_m3_min();
        let (lo, hi) = band(energy_kwh[i], power_rel(c));
        let s0 = d.stats[i].clone().unwrap_or(StateStats {
            logged_hours: 0.0,
            loaded_fraction: 0.0,
            part_load_fraction: 0.0,
            unloaded_fraction: 0.0,
            off_fraction: 0.0,
            running_hours: 0.0,
            loaded_hours: 0.0,
            load_cycles: 0,
            cycles_per_hour: 0.0,
            mean_loaded_power_kw: None,
            mean_unloaded_power_kw: None,
            mean_loaded_time_s: None,
            mean_unloaded_time_s: None,
        });
        comp_fig.push(CompressorFigures {
            tag: c.tag.clone(),
            control: c.control,
            power_logged: d.power_logged[i],
            power_source: if acc.current_derived_power.contains(&c.tag) {
                PowerSource::CurrentDerived
            } else {
                PowerSource::TruePower
            },
            energy_kwh: energy_kwh[i],
            energy_kwh_low: lo,
            energy_kwh_high: hi,
            mean_power_kw: d.mean_kw[i],
            annual_energy_kwh: annual_kwh_c[i],
            loaded_fraction: s0.loaded_fraction,
            part_load_fraction: s0.part_load_fraction,
            unloaded_fraction: s0.unloaded_fraction,
            off_fraction: s0.off_fraction,
            cycles_per_hour: s0.cycles_per_hour,
            logged_hours: s0.logged_hours,
            running_hours: s0.running_hours,
            loaded_hours: s0.loaded_hours,
            mean_loaded_power_kw: s0.mean_loaded_power_kw,
            mean_unloaded_power_kw: s0.mean_unloaded_power_kw,
            mean_loaded_time_s: s0.mean_loaded_time_s,
            mean_unloaded_time_s: s0.mean_unloaded_time_s,
            air_m3: d.comp_air[i],
            specific_power_kw_per_m3_min: sp_c,
            specific_power_kw_per_100cfm: sp_c.map(super::units::kw_per_100cfm),
            estimated,
            full_load_specific_power_kw_per_m3_min: full,
            rated_specific_power_kw_per_m3_min: rated,
            specific_power_degradation_percent: full.map(|f| (f / rated - 1.0) * 100.0),
            loaded_power_vs_rated_percent: s0
                .mean_loaded_power_kw
                .map(|p| (p / c.rated_power_kw - 1.0) * 100.0),
            marginal_kw_per_m3_min: states::marginal_kw_per_m3_min(c),
            trim: trim == Some(i),
            heat_rejected_kwh: rej,
            recoverable_kwh: rec,
            annual_heat_rejected_kwh: rej * factor,
            annual_recoverable_kwh: rec * factor,
        });
    }

    let machines: Vec<MachineUse> = d
        .machines
        .iter()
        .enumerate()
        .map(|(i, m)| MachineUse {
            annual_energy_kwh: annual_kwh_c[i],
            annual_above_idle_kwh: m.above.as_ref().map_or(0.0, |c| c.annual(rule) / 1000.0),
            annual_unloaded_non_production_kwh: m.idle.as_ref().map_or(0.0, |c| c.annual(rule) / 1000.0),
            annual_loaded_hours: m.loaded.as_ref().map_or(0.0, |c| c.annual(rule)),
            loaded_fraction: m.loaded_fraction,
            cycles_per_hour: m.cycles_per_hour,
            mean_loaded_power_kw: m.mean_loaded_power_kw,
            full_load_specific_power_kw_per_m3_min: m.full_load_specific_power_kw_per_m3_min,
            power_logged: d.power_logged[i],
        })
        .collect();

    // Heat value.
    let monthly = [heat_rec_y / 12.0; 12];
    let space =
        heat::HeatUse { kind: heat::HeatUseKind::SpaceHeating, heating_months: site.heating_months.clone() };
    let process = heat::HeatUse { kind: heat::HeatUseKind::ProcessWater, heating_months: vec![] };
    let (u_s, f_s, v_s) =
        heat::recovered_value(&monthly, &space, site.heater_efficiency, site.heating_fuel_price_per_kwh);
    let (u_p, f_p, v_p) =
        heat::recovered_value(&monthly, &process, site.heater_efficiency, site.heating_fuel_price_per_kwh);
    let space_ok = !site.heating_months.is_empty();
    let (use_kind, useful, fuel, value) = if space_ok {
        (heat::HeatUseKind::SpaceHeating, u_s, f_s, v_s)
    } else {
        (heat::HeatUseKind::ProcessWater, u_p, f_p, v_p)
    };
    if !space_ok {
        assumptions.push("no heating months given: recovered heat valued as year-round process water".into());
    }
    methods.push(m(
        "recoverable_kwh",
        "recoverable fraction (kind, cooling) × input energy; valued as fuel displaced in the months of use",
        "US DOE heat-recovery fact sheet",
    ));

    // Leaks.
    let mut estimates: Vec<LeakEstimateFigure> = input
        .leak_estimates
        .iter()
        .map(|e| {
            let rel = default_relative_uncertainty(&e.method, acc);
            let (lo, hi) = band(e.leak_flow_m3_min, rel);
            LeakEstimateFigure {
                test_id: Some(e.test_id),
                method: e.method.clone(),
                leak_flow_m3_min: e.leak_flow_m3_min,
                leak_flow_m3_min_low: lo,
                leak_flow_m3_min_high: hi,
                share_of_mean_demand: (mean_flow > 0.0).then(|| e.leak_flow_m3_min / mean_flow),
                automatic: false,
                estimated: false,
            }
        })
        .collect();
    let mut tests: Vec<f64> = input.leak_estimates.iter().map(|e| e.leak_flow_m3_min).collect();
    tests.sort_by(f64::total_cmp);
    let (adopted, adopted_rel, adopted_rule) = if !tests.is_empty() {
        let med = percentile(&tests, 0.5);
        let rel = input
            .leak_estimates
            .iter()
            .map(|e| default_relative_uncertainty(&e.method, acc))
            .fold(0.0, f64::max);
        (Some(med), rel, "median of the accepted field tests".to_string())
    } else if let (Some(q), true) = (q_nonprod, d.prod_share < 1.0) {
        (
            Some(q),
            u_flow,
            "mean flow in non-production hours (an upper bound: includes fixed users)".to_string(),
        )
    } else {
        (None, 0.0, "no leak estimate: run a bleed-down or load/unload test".to_string())
    };
    if let Some(q) = q_nonprod.filter(|_| d.prod_share < 1.0) {
        let (lo, hi) = band(q, u_flow);
        estimates.push(LeakEstimateFigure {
            test_id: None,
            method: "non_production_flow".into(),
            leak_flow_m3_min: q,
            leak_flow_m3_min_low: lo,
            leak_flow_m3_min_high: hi,
            share_of_mean_demand: (mean_flow > 0.0).then(|| q / mean_flow),
            automatic: true,
            estimated: flow_estimated,
        });
    }
    let share = adopted.filter(|_| mean_flow > 0.0).map(|q| q / mean_flow);
    let u_share = quad(&[adopted_rel, u_flow]);
    let leak_kwh = adopted.map(|q| q * marginal * annual_running_hours);
    let u_leak_cost = quad(&[adopted_rel, 0.05]);
    let leak_band = share.map(leaks::leak_share_band);
    methods.push(m(
        "annual_leak_cost",
        "leak flow × marginal kW/(m³/min) × annual running hours × price",
        "US DOE sourcebook, leaks fact sheet; priced at the marginal (trim) specific power, not the average",
    ));

    let mut pressure_fig = d.pressure.clone();
    pressure_fig.uncertainty_bar = acc.pressure_abs_bar();
    methods.push(m(
        "pressure bands",
        "p5/p50/p95 of header pressure; low limit = lowest rated pressure - 1 bar",
        "common practice",
    ));

    let recs = recommend::recommend(&RecommendInput {
        site,
        compressors: cs,
        machines: &machines,
        trim,
        marginal_kw_per_m3_min: marginal,
        annual_running_hours,
        annual_energy_kwh: annual_kwh,
        leak_flow_m3_min: adopted,
        mean_pressure_bar_g: pressure_fig.mean_bar_g,
        control: d.control.as_ref().map(|c| ControlCase {
            logged_annual_kwh: c.logged.annual(rule) / 1000.0,
            modelled_annual_kwh: c.modelled.annual(rule) / 1000.0,
            curve: c.curve.clone(),
            simultaneous_cycling_share: c.simultaneous_cycling_share,
        }),
        heat: (value > 0.0).then_some(HeatCase {
            useful_kwh_per_year: useful,
            fuel_kwh_per_year: fuel,
            value_per_year: value,
            recoverable_kw: rec_kw,
            use_kind,
        }),
        costs: input.costs,
        scenarios: input.scenarios,
    });

    assumptions.push(format!(
        "instrument accuracy: true power ±{:.0} %, current-derived power ±{:.0} %, flow ±{:.0} % of reading, \
         pressure ±{:.1} % of a {} bar span, system volume ±{:.0} %; combined in quadrature",
        acc.power_true_rel * 100.0,
        acc.power_current_rel * 100.0,
        acc.flow_rel * 100.0,
        acc.pressure_rel_of_span * 100.0,
        acc.pressure_span_bar,
        acc.volume_rel * 100.0
    ));
    assumptions.push(format!(
        "delivery air {} K above inlet for the heat balance (common practice)",
        heat::DEFAULT_DELIVERY_TEMPERATURE_RISE_K
    ));

    let (e_lo, e_hi) = band(sys_energy, u_power);
    let (p_lo, p_hi) = band(sys_mean_kw, u_power);
    let (a_lo, a_hi) = band(d.air_m3, u_flow);
    let (q_lo, q_hi) = band(mean_flow, u_flow);
    let (ae_lo, ae_hi) = band(annual_kwh, u_power);
    let (ac_lo, ac_hi) = band(annual_cost, u_power);
    Summary {
        period: d.period.clone(),
        coverage: d.coverage.clone(),
        flow_source: d.flow_source,
        system: SystemFigures {
            energy_kwh: sys_energy,
            energy_kwh_low: e_lo,
            energy_kwh_high: e_hi,
            mean_power_kw: sys_mean_kw,
            mean_power_kw_low: p_lo,
            mean_power_kw_high: p_hi,
            peak_power_kw: peak_kw,
            peak_power_window_s: d.peak_kw_window,
            air_m3: d.air_m3,
            air_m3_low: a_lo,
            air_m3_high: a_hi,
            mean_flow_m3_min: mean_flow,
            mean_flow_m3_min_low: q_lo,
            mean_flow_m3_min_high: q_hi,
            peak_flow_m3_min: d.peak_flow,
            peak_flow_window_s: d.peak_flow_window,
            flow_source: d.flow_source,
            estimated: flow_estimated,
            specific_power_kw_per_m3_min: sp,
            specific_power_kw_per_m3_min_low: sp.map(|s| s * (1.0 - u_sp)),
            specific_power_kw_per_m3_min_high: sp.map(|s| s * (1.0 + u_sp)),
            specific_power_kw_per_100cfm: sp.map(super::units::kw_per_100cfm),
            specific_power_kwh_per_m3: sp.map(|s| s / 60.0),
            rated_specific_power_kw_per_m3_min: d.rated_sp,
            specific_power_degradation_percent: sp.zip(d.rated_sp).map(|(s, r)| (s / r - 1.0) * 100.0),
            isothermal_efficiency: iso,
            isothermal_efficiency_low: iso.map(|x| x * (1.0 - u_iso)),
            isothermal_efficiency_high: iso.map(|x| x * (1.0 + u_iso)),
            part_load_curve: d.part_load_curve.clone(),
            compressors_without_power: d.without_power.clone(),
        },
        pressure: pressure_fig,
        compressors: comp_fig,
        demand: d.demand.clone(),
        baseline: Baseline {
            rule: rule_text,
            annual_hours: rule.hours(),
            annual_running_hours,
            annual_energy_kwh: annual_kwh,
            annual_energy_kwh_low: ae_lo,
            annual_energy_kwh_high: ae_hi,
            annual_energy_cost: energy_cost,
            annual_demand_charge: demand_charge,
            annual_cost,
            annual_cost_low: ac_lo,
            annual_cost_high: ac_hi,
            cost_per_1000_m3,
            cost_per_1000_ft3: cost_per_1000_m3.map(|c| c * M3_PER_FT3),
            annual_co2_t: annual_kwh * site.grid_co2_kg_per_kwh / 1000.0,
            electricity_price_per_kwh: site.electricity_price_per_kwh,
            currency: site.currency.clone(),
        },
        leaks: LeakFigures {
            estimates,
            adopted_leak_flow_m3_min: adopted,
            adopted_leak_flow_m3_min_low: adopted.map(|q| q * (1.0 - adopted_rel)),
            adopted_leak_flow_m3_min_high: adopted.map(|q| q * (1.0 + adopted_rel)),
            adopted_rule,
            share_of_mean_demand: share,
            share_of_mean_demand_low: share.map(|s| s * (1.0 - u_share)),
            share_of_mean_demand_high: share.map(|s| s * (1.0 + u_share)),
            share_of_production_demand: adopted.zip(q_prod).filter(|(_, q)| *q > 0.0).map(|(l, q)| l / q),
            share_of_non_production_demand: adopted
                .zip(q_nonprod)
                .filter(|(_, q)| *q > 0.0)
                .map(|(l, q)| l / q),
            band: leak_band,
            band_description: leak_band.map(|b| b.describe().to_string()),
            target_share: 0.10,
            marginal_machine: trim.map(|t| cs[t].tag.clone()),
            marginal_kw_per_m3_min: marginal,
            annual_leak_energy_kwh: leak_kwh,
            annual_leak_cost: leak_kwh.map(|k| k * site.electricity_price_per_kwh),
            annual_leak_cost_low: leak_kwh.map(|k| k * site.electricity_price_per_kwh * (1.0 - u_leak_cost)),
            annual_leak_cost_high: leak_kwh.map(|k| k * site.electricity_price_per_kwh * (1.0 + u_leak_cost)),
        },
        heat: HeatFigures {
            heat_rejected_kwh: heat_rej,
            recoverable_kwh: heat_rec,
            annual_heat_rejected_kwh: heat_rej_y,
            annual_recoverable_kwh: heat_rec_y,
            recoverable_kw_at_full_load: rec_kw,
            use_kind,
            useful_heat_kwh_per_year: useful,
            displaced_fuel_kwh_per_year: fuel,
            annual_value: value,
            process_water_annual_value: v_p,
            cautions: heat::HEAT_RECOVERY_CAUTIONS.iter().map(|c| c.to_string()).collect(),
        },
        recommendations: recs,
        methods,
        assumptions,
    }
}

/// A stretch of the logs where pressure decays with every logged compressor off or unloaded.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DecayEvent {
    pub start_ms: i64,
    pub end_ms: i64,
    pub start: String,
    pub end: String,
    pub start_pressure_bar_g: f64,
    pub end_pressure_bar_g: f64,
    pub duration_s: f64,
    /// Every logged compressor off (not merely unloaded).
    pub all_off: bool,
    pub leak_flow_at_start_pressure_m3_min: f64,
    pub fit_r2: f64,
}

/// Shortest decay proposed, s (a shorter fall is dominated by logger noise and valve timing; common
/// practice).
pub const DECAY_MIN_DURATION_S: f64 = 120.0;
/// Smallest pressure fall proposed, bar (about the pressure accuracy; below it the fit is noise).
pub const DECAY_MIN_FALL_BAR: f64 = 0.1;
/// A rise above the lowest pressure so far by more than this ends a decay, bar (noise allowance).
pub const DECAY_NOISE_BAR: f64 = 0.02;
/// At most this many events are proposed (the longest).
pub const DECAY_MAX_EVENTS: usize = 100;

/// Decay windows proposed as `pressure_decay` tests: runs of bins where every compressor with a
/// power column is off or unloaded (at least one must be logged) and the header pressure falls,
/// allowing rises of [`DECAY_NOISE_BAR`]; at least [`DECAY_MIN_DURATION_S`] long and
/// [`DECAY_MIN_FALL_BAR`] deep; fitted with `leaks::fit_pressure_decay`. Longest first.
pub fn decay_events(
    frame: &Frame,
    compressors: &[CompressorSpec],
    storage: &StorageSpec,
    site: &SiteAir,
) -> Vec<DecayEvent> {
    let grid = frame.grid;
    let Some(p) = frame.header_pressure() else { return Vec::new() };
    let p = &p.values;
    let st: Vec<Vec<State>> = compressors
        .iter()
        .enumerate()
        .filter_map(|(i, c)| frame.power_of(i).map(|col| states::classify(c, &col.values)))
        .collect();
    if st.is_empty() || storage.system_volume_m3() <= 0.0 {
        return Vec::new();
    }
    let ok = |k: usize| p[k].is_finite() && st.iter().all(|s| matches!(s[k], State::Off | State::Unloaded));
    let noise = DECAY_NOISE_BAR * 1e5;
    let mut events = Vec::new();
    let mut k = 0;
    while k < grid.len {
        if !ok(k) {
            k += 1;
            continue;
        }
        // Start at the highest point, then follow the fall.
        let start = k;
        let mut lowest = p[k] as f64;
        let mut end = k;
        k += 1;
        while k < grid.len && ok(k) && (p[k] as f64) <= lowest + noise {
            if (p[k] as f64) < lowest {
                lowest = p[k] as f64;
            }
            end = k;
            k += 1;
        }
        let dur = (end - start) as f64 * grid.step_s();
        let fall = (p[start] - p[end]) as f64;
        if dur >= DECAY_MIN_DURATION_S && fall >= DECAY_MIN_FALL_BAR * 1e5 && end - start >= 2 {
            let samples: Vec<(f64, PressureAbs)> = (start..=end)
                .map(|i| ((i - start) as f64 * grid.step_s(), PressureAbs(p[i] as f64)))
                .collect();
            if let Ok(fit) = leaks::fit_pressure_decay(&samples, Volume(storage.system_volume_m3()), site) {
                let (s_ms, e_ms) = (grid.bin_start_ms(start), grid.bin_start_ms(end));
                events.push(DecayEvent {
                    start_ms: s_ms,
                    end_ms: e_ms,
                    start: ts_string(s_ms),
                    end: ts_string(e_ms),
                    start_pressure_bar_g: fit.start_pressure.bar_g(site.atmosphere),
                    end_pressure_bar_g: fit.end_pressure.bar_g(site.atmosphere),
                    duration_s: dur,
                    all_off: (start..=end).all(|i| st.iter().all(|s| s[i] == State::Off)),
                    leak_flow_at_start_pressure_m3_min: fit.leak_flow_at_start.m3_min(),
                    fit_r2: fit.fit_r2,
                });
            }
        }
        if k == end + 1 && k < grid.len && !ok(k) {
            k += 1;
        }
    }
    events.sort_by(|a, b| b.duration_s.total_cmp(&a.duration_s));
    events.truncate(DECAY_MAX_EVENTS);
    events
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::core::fieldtest::bar_g_to_pa_abs;
    use crate::core::recommend::tests::site;
    use crate::core::recommend::MeasureKind;
    use crate::core::series::{FrameColumn, Signal};
    use crate::core::states::tests::spec;

    /// 2026-03-02T00:00:00Z, a Monday.
    const MONDAY_MS: i64 = 1_772_409_600_000;

    fn col(signal: Signal, compressor: Option<usize>, values: Vec<f32>) -> FrameColumn {
        FrameColumn { signal, compressor, label: String::new(), values }
    }

    fn run(s: &SiteSpec, cs: &[CompressorSpec], frame: &Frame, leaks: Vec<LeakEstimate>) -> Summary {
        let costs = CostOverrides::default();
        let acc = Accuracy::default();
        let summary = summarize(
            frame,
            &AuditInput {
                site: s,
                compressors: cs,
                leak_estimates: leaks,
                costs: &costs,
                scenarios: &[],
                accuracy: &acc,
            },
        );
        // Every summary a test builds reads back from its JSON unchanged.
        assert_json_round_trip(&summary);
        summary
    }

    /// `to_value(from_value(to_value(s))) == to_value(s)`: the cached summary read back typed
    /// writes the same JSON, name for name and number for number.
    fn assert_json_round_trip(s: &Summary) {
        let json = serde_json::to_value(s).unwrap();
        let back: Summary = serde_json::from_value(json.clone()).unwrap();
        assert_eq!(serde_json::to_value(&back).unwrap(), json);
    }

    #[test]
    fn a_summary_reads_back_from_its_json_with_the_same_names_and_spellings() {
        // The week with a leak test and a schedule: every enum of the summary is spelled in the JSON
        // as the API names it (API.md), and the summary reads back from that JSON unchanged.
        let mut s = site();
        let (cs, frame) = week();
        let r = run(
            &s,
            &cs,
            &frame,
            vec![LeakEstimate { test_id: 3, method: "bleed_down".into(), leak_flow_m3_min: 1.5 }],
        );
        let j = serde_json::to_value(&r).unwrap();
        assert_eq!(j["flow_source"], "measured");
        assert_eq!(j["system"]["flow_source"], "measured");
        assert_eq!(j["compressors"][0]["control"], "load_unload");
        assert_eq!(j["compressors"][0]["power_source"], "true_power");
        assert_eq!(j["demand"]["production_source"], "detected");
        assert_eq!(j["heat"]["use_kind"], "space_heating");
        // 1.5 of a mean (80 x 10 + 88 x 2) / 168 = 5.81 m³/min is 26 %: poorly maintained.
        assert_eq!(j["leaks"]["band"], "poorly_maintained");
        assert_eq!(j["leaks"]["band_description"], leaks::LeakShareBand::PoorlyMaintained.describe());
        assert_eq!(j["heat"]["cautions"].as_array().unwrap().len(), heat::HEAT_RECOVERY_CAUTIONS.len());
        let kinds: Vec<&str> =
            j["recommendations"].as_array().unwrap().iter().map(|m| m["kind"].as_str().unwrap()).collect();
        assert!(kinds.contains(&"repair_leaks") && kinds.contains(&"shut_off_idle"), "{kinds:?}");
        assert!(j["recommendations"]
            .as_array()
            .unwrap()
            .iter()
            .all(|m| m["implementation_cost_source"] == "default_estimate"));
        // Estimated flow and a schedule spell the other variants.
        s.heating_months.clear();
        let mut week_hours = [[false; 24]; 7];
        week_hours[0][8] = true;
        s.production = Some(WeeklySchedule { hours: week_hours });
        let no_flow = Frame { grid: frame.grid, columns: frame.columns[..1].to_vec() };
        let j = serde_json::to_value(run(&s, &cs, &no_flow, vec![])).unwrap();
        assert_eq!(j["flow_source"], "estimated_from_compressor_states");
        assert_eq!(j["demand"]["production_source"], "schedule");
        assert_eq!(j["heat"]["use_kind"], "process_water");
    }

    #[test]
    fn constant_power_and_flow_give_specific_power_p_over_q_and_isothermal_efficiency() {
        // Specific power = P/Q (FIELD-NOTES §3); isothermal power p1 V1 ln(p2/p1) (FIELD-NOTES §7).
        let s = site();
        let cs = vec![spec("C1", Control::LoadUnload, 55.0, 9.5)];
        let n = 360;
        let p_abs = bar_g_to_pa_abs(7.0, &s.air);
        let frame = Frame {
            grid: Grid { start_ms: MONDAY_MS, step_ms: 10_000, len: n },
            columns: vec![
                col(Signal::Power, Some(0), vec![50_000.0; n]),
                col(Signal::Flow, None, vec![(8.0f64 / 60.0) as f32; n]),
                col(Signal::Pressure, None, vec![p_abs as f32; n]),
            ],
        };
        let r = run(&s, &cs, &frame, vec![]);
        let sp = r.system.specific_power_kw_per_m3_min.unwrap();
        assert!((sp - 50.0 / 8.0).abs() < 1e-5, "{sp}");
        assert!((r.system.specific_power_kw_per_100cfm.unwrap() - 6.25 * 2.831_684_659_2).abs() < 1e-4);
        assert!((r.system.energy_kwh - 50.0).abs() < 1e-6);
        assert!((r.system.air_m3 - 480.0).abs() < 1e-3);
        assert!((r.system.mean_flow_m3_min - 8.0).abs() < 1e-5);
        let atm = s.air.atmosphere.0;
        let iso = atm * (8.0 / 60.0) * (p_abs / atm).ln() / 50_000.0;
        assert!((r.system.isothermal_efficiency.unwrap() - iso).abs() < 1e-5);
        assert_eq!(r.flow_source, FlowSource::Measured);
        assert!((r.pressure.mean_bar_g.unwrap() - 7.0).abs() < 1e-4);
        assert_eq!(r.coverage.power, 1.0);
        // Cost of air (FIELD-NOTES §9): kW/100 cfm / 6 x price per 1000 ft³.
        let per_kft3 = r.system.specific_power_kw_per_100cfm.unwrap() / 6.0 * 0.15;
        assert!((r.baseline.cost_per_1000_ft3.unwrap() - per_kft3).abs() < 1e-4);
        // Uncertainty: power ±1 % and flow ±3 % in quadrature on the ratio.
        let u = (0.01f64.powi(2) + 0.03f64.powi(2)).sqrt();
        assert!((r.system.specific_power_kw_per_m3_min_high.unwrap() / sp - 1.0 - u).abs() < 1e-9);
        // The API's names hold.
        let j = serde_json::to_value(&r).unwrap();
        for path in [
            "/period/start",
            "/period/end",
            "/period/hours",
            "/system/energy_kwh",
            "/system/mean_power_kw",
            "/system/air_m3",
            "/system/mean_flow_m3_min",
            "/system/peak_flow_m3_min",
            "/system/specific_power_kw_per_m3_min",
            "/system/isothermal_efficiency",
            "/pressure/mean_bar_g",
            "/pressure/min_bar_g",
            "/pressure/max_bar_g",
            "/compressors/0/tag",
            "/compressors/0/energy_kwh",
            "/compressors/0/mean_power_kw",
            "/compressors/0/loaded_fraction",
            "/compressors/0/unloaded_fraction",
            "/compressors/0/off_fraction",
            "/compressors/0/cycles_per_hour",
            "/leaks/estimates",
            "/heat/heat_rejected_kwh",
            "/heat/recoverable_kwh",
            "/recommendations",
        ] {
            assert!(j.pointer(path).is_some(), "missing {path}");
        }
        assert_eq!(j["period"]["start"], "2026-03-02T00:00:00Z");
    }

    #[test]
    fn pressure_bands_and_the_duration_curve_come_from_the_sorted_bins() {
        // 201 pressures 6.00..8.00 bar(g) in steps of 0.01, logged out of order, plus missing bins:
        // p5/p50/p95 of an evenly spaced set are its values at 5/50/95 % of the range (the
        // percentile's linear interpolation, common practice).
        let s = site();
        let cs = vec![spec("C1", Control::LoadUnload, 55.0, 9.5)]; // rated 7.5 bar(g): low limit 6.5
        let n = 210;
        let mut pressure = vec![f32::NAN; n];
        let mut flow = vec![f32::NAN; n];
        for k in 0..201usize {
            let i = (k * 37) % 201; // every index once, shuffled
            pressure[i] = bar_g_to_pa_abs(6.0 + 0.01 * k as f64, &s.air) as f32;
            flow[i] = (k as f32 / 10.0) / 60.0; // 0.0..20.0 m³/min free air
        }
        let frame = Frame {
            grid: Grid { start_ms: MONDAY_MS, step_ms: 10_000, len: n },
            columns: vec![
                col(Signal::Power, Some(0), vec![40_000.0; n]),
                col(Signal::Flow, None, flow),
                col(Signal::Pressure, None, pressure),
            ],
        };
        let r = run(&s, &cs, &frame, vec![]);
        let p = &r.pressure;
        let close = |a: Option<f64>, b: f64| (a.unwrap() - b).abs() < 1e-4;
        assert!(close(p.min_bar_g, 6.0) && close(p.max_bar_g, 8.0), "{p:?}");
        assert!(close(p.p5_bar_g, 6.1) && close(p.p50_bar_g, 7.0) && close(p.p95_bar_g, 7.9), "{p:?}");
        assert!(close(p.mean_bar_g, 7.0), "{p:?}");
        // Population standard deviation of 201 evenly spaced values: 0.01 × sqrt((201² - 1) / 12).
        assert!(close(p.std_dev_bar, 0.01 * ((201.0f64 * 201.0 - 1.0) / 12.0).sqrt()), "{p:?}");
        // Below 6.5: 6.00..6.49 (50 values); above 7.5: 7.51..8.00 (50 values).
        assert!(close(p.share_below_low_limit, 50.0 / 201.0), "{p:?}");
        assert!(close(p.share_above_highest_rated, 50.0 / 201.0), "{p:?}");
        let d = &r.demand.flow_duration_curve;
        assert_eq!(d.len(), 50);
        assert!((d[0].flow_m3_min - 20.0).abs() < 1e-4 && d[49].flow_m3_min.abs() < 1e-6, "{d:?}");
        assert!(d.windows(2).all(|w| w[0].flow_m3_min >= w[1].flow_m3_min), "falls with the share of time");
        // Halfway through the time the flow is the median, 10 m³/min.
        assert!((d[24].flow_m3_min - 10.0).abs() < 0.25, "{:?}", d[24]);
    }

    #[test]
    fn gaps_are_skipped_and_reported_in_the_coverage() {
        let s = site();
        let cs = vec![spec("C1", Control::LoadUnload, 55.0, 9.5)];
        let n = 360;
        let power: Vec<f32> = (0..n).map(|i| if i < 180 { 40_000.0 } else { f32::NAN }).collect();
        let frame = Frame {
            grid: Grid { start_ms: MONDAY_MS, step_ms: 10_000, len: n },
            columns: vec![col(Signal::Power, Some(0), power)],
        };
        let r = run(&s, &cs, &frame, vec![]);
        assert_eq!(r.coverage.power, 0.5);
        assert!((r.system.energy_kwh - 20.0).abs() < 1e-6); // 40 kW over the logged half hour
        assert!((r.system.mean_power_kw - 40.0).abs() < 1e-6); // the gap is not counted as zero
        assert_eq!(r.coverage.flow, 0.0);
        assert_eq!(r.flow_source, FlowSource::EstimatedFromCompressorStates);
        assert!(r.system.estimated);
        // 40 kW is loaded for this machine: estimated flow is its rated 9.5 m³/min.
        assert!((r.system.mean_flow_m3_min - 9.5).abs() < 1e-5);
        assert!(!r.pressure.logged);
    }

    /// A week from Monday 00:00 UTC on 5-min bins: weekdays 06-22 h 60 kW / 10 m³/min, otherwise
    /// 20 kW / 2 m³/min.
    fn week() -> (Vec<CompressorSpec>, Frame) {
        let cs = vec![spec("C1", Control::LoadUnload, 55.0, 9.5)];
        let n = 7 * 24 * 12;
        let prod = |i: usize| {
            let (d, h) = (i / 288, (i % 288) / 12);
            d < 5 && (6..22).contains(&h)
        };
        let power = (0..n).map(|i| if prod(i) { 60_000.0 } else { 20_000.0 }).collect();
        let flow = (0..n).map(|i| if prod(i) { 10.0f32 / 60.0 } else { 2.0 / 60.0 }).collect();
        let frame = Frame {
            grid: Grid { start_ms: MONDAY_MS, step_ms: 300_000, len: n },
            columns: vec![col(Signal::Power, Some(0), power), col(Signal::Flow, None, flow)],
        };
        (cs, frame)
    }

    #[test]
    fn a_logged_week_is_profiled_by_weekday_and_hour_and_annualised_over_52_weeks() {
        let s = site();
        let (cs, frame) = week();
        let r = run(
            &s,
            &cs,
            &frame,
            vec![LeakEstimate { test_id: 3, method: "bleed_down".into(), leak_flow_m3_min: 1.5 }],
        );
        let wh = &r.demand.weekday_hour_mean_flow_m3_min;
        assert!((wh[0][10].unwrap() - 10.0).abs() < 1e-5);
        assert!((wh[0][3].unwrap() - 2.0).abs() < 1e-5);
        assert!((wh[5][10].unwrap() - 2.0).abs() < 1e-5);
        // API.md: the logged pattern over 52 weeks: (80 h x 60 kW + 88 h x 20 kW) x 52.
        let annual = (80.0 * 60.0 + 88.0 * 20.0) * 52.0;
        assert!((r.baseline.annual_energy_kwh - annual).abs() < 1e-3, "{}", r.baseline.annual_energy_kwh);
        assert!((r.baseline.annual_cost - annual * 0.15).abs() < 1e-3);
        assert!((r.baseline.annual_co2_t - annual * 0.4 / 1000.0).abs() < 1e-6);
        // Detected production: 2 m³/min is 20 % of the 10 m³/min peak hour, below 35 %.
        assert_eq!(r.demand.production_source, ProductionSource::Detected);
        assert!((r.demand.production_share_of_time - 80.0 / 168.0).abs() < 1e-12);
        assert!((r.demand.non_production_mean_flow_m3_min.unwrap() - 2.0).abs() < 1e-5);
        // Leaks: the test is adopted; leak energy at the load/unload marginal power (FIELD-NOTES §5)
        // over the hours the machine runs (all 168 h a week).
        assert_eq!(r.leaks.adopted_leak_flow_m3_min, Some(1.5));
        let marginal = 55.0 * 0.75 / 9.5;
        assert!((r.leaks.marginal_kw_per_m3_min - marginal).abs() < 1e-12);
        assert!((r.baseline.annual_running_hours - 168.0 * 52.0).abs() < 1e-6);
        assert!((r.leaks.annual_leak_energy_kwh.unwrap() - 1.5 * marginal * 168.0 * 52.0).abs() < 1e-3);
        let mean_q = (80.0 * 10.0 + 88.0 * 2.0) / 168.0;
        assert!((r.leaks.share_of_mean_demand.unwrap() - 1.5 / mean_q).abs() < 1e-5);
        assert_eq!(r.leaks.estimates.len(), 2); // the test and the automatic non-production flow
                                                // The week's unloaded time out of production shows up as a shut-off measure.
        assert!(r.recommendations.iter().any(|x| x.kind == MeasureKind::ShutOffIdle));
        assert!(r.recommendations.iter().any(|x| x.kind == MeasureKind::RepairLeaks));
        for w in r.recommendations.windows(2) {
            assert!(w[0].simple_payback_years <= w[1].simple_payback_years);
        }
    }

    #[test]
    fn weekday_hours_follow_the_site_time_zone() {
        // Vienna is UTC+1 in early March (before the end-of-March change): UTC 06:00 is 07:00 local.
        let mut s = site();
        s.timezone = "Europe/Vienna".into();
        let (cs, frame) = week();
        let r = run(&s, &cs, &frame, vec![]);
        let wh = &r.demand.weekday_hour_mean_flow_m3_min;
        assert!((wh[0][6].unwrap() - 2.0).abs() < 1e-5);
        assert!((wh[0][7].unwrap() - 10.0).abs() < 1e-5);
        assert!((wh[0][22].unwrap() - 10.0).abs() < 1e-5);
        assert!((wh[0][23].unwrap() - 2.0).abs() < 1e-5);
    }

    #[test]
    fn operating_hours_override_scales_the_mean_power() {
        let mut s = site();
        s.operating_hours_per_year = Some(4000.0);
        let (cs, frame) = week();
        let r = run(&s, &cs, &frame, vec![]);
        let mean_kw = (80.0 * 60.0 + 88.0 * 20.0) / 168.0;
        assert!((r.baseline.annual_energy_kwh - mean_kw * 4000.0).abs() < 1e-3);
    }

    #[test]
    fn a_decay_with_every_compressor_off_is_found_and_its_leak_recovered() {
        // Choked leaks: p = p0 e^(-t/tau), Q_FAD = V p / (p_atm tau) (FIELD-NOTES §5).
        let s = site();
        let cs = vec![spec("C1", Control::LoadUnload, 55.0, 9.5)];
        let storage = StorageSpec { receivers_m3: vec![3.0], other_volume_m3: 0.0 };
        let n = 360; // 1 h at 10 s
        let p0 = bar_g_to_pa_abs(7.0, &s.air);
        let tau = 1800.0;
        let off = |i: usize| (120..240).contains(&i); // 20 min off
        let power = (0..n).map(|i| if off(i) { 0.0 } else { 55_000.0 }).collect();
        let pressure = (0..n)
            .map(|i| if off(i) { (p0 * (-((i - 120) as f64 * 10.0) / tau).exp()) as f32 } else { p0 as f32 })
            .collect();
        let frame = Frame {
            grid: Grid { start_ms: MONDAY_MS, step_ms: 10_000, len: n },
            columns: vec![col(Signal::Power, Some(0), power), col(Signal::Pressure, None, pressure)],
        };
        let ev = decay_events(&frame, &cs, &storage, &s.air);
        assert_eq!(ev.len(), 1, "{ev:?}");
        let e = &ev[0];
        assert!(e.all_off);
        assert!((e.duration_s - 1190.0).abs() < 1e-9);
        assert!((e.start_pressure_bar_g - 7.0).abs() < 1e-3);
        let expect = 3.0 * p0 / (s.air.atmosphere.0 * tau) * 60.0;
        assert!((e.leak_flow_at_start_pressure_m3_min - expect).abs() / expect < 1e-3, "{e:?}");
        assert!(e.fit_r2 > 0.999);
        assert_eq!(e.start, "2026-03-02T00:20:00Z");
    }

    #[test]
    fn marginal_power_is_the_trim_machine_not_the_plant_average() {
        // A base-loaded machine (always loaded) and a load/unload trim: the trim's part-load slope
        // prices leaks (FIELD-NOTES §5).
        let s = site();
        let cs =
            vec![spec("BASE", Control::LoadUnload, 90.0, 16.0), spec("TRIM", Control::LoadUnload, 37.0, 6.0)];
        let n = 1080;
        let trim: Vec<f32> = (0..n).map(|i| if i % 20 < 4 { 37_000.0 } else { 9_250.0 }).collect();
        let frame = Frame {
            grid: Grid { start_ms: MONDAY_MS, step_ms: 10_000, len: n },
            columns: vec![col(Signal::Power, Some(0), vec![90_000.0; n]), col(Signal::Power, Some(1), trim)],
        };
        let r = run(
            &s,
            &cs,
            &frame,
            vec![LeakEstimate { test_id: 1, method: "load_unload".into(), leak_flow_m3_min: 1.2 }],
        );
        assert_eq!(r.leaks.marginal_machine.as_deref(), Some("TRIM"));
        assert!((r.leaks.marginal_kw_per_m3_min - 37.0 * 0.75 / 6.0).abs() < 1e-12);
        assert!(r.compressors[1].trim && !r.compressors[0].trim);
        assert!((r.compressors[1].loaded_fraction - 0.2).abs() < 1e-12);
        // Load/unload trim at 20 % load: a VSD trim is proposed.
        assert!(
            r.recommendations.iter().any(|x| x.kind == MeasureKind::ImproveControl),
            "{:?}",
            r.recommendations
        );
    }
}
