/*!
Measures: what to do about what the audit found, with annual savings, cost and simple payback.

Savings show only through the compressors' part-load behaviour (US DOE compressed-air sourcebook): a change of demand is
priced at the **marginal** specific power of the machine that trims (`states::marginal_kw_per_m3_min`),
never at the plant's average, and a demand saving is never worth more than the trim machine's present
energy above idle.

| kind | saving | default implementation cost (common practice, from memory; edit per audit) |
|---|---|---|
| `repair_leaks` | `f` × leak flow (default `f` = 50 %, [`MeasureOptions::leak_repair_fraction`]) × marginal kW/(m³/min) × the system's running hours, capped at the trim's energy above idle | 1500 (survey) + 1000 per m³/min repaired |
| `lower_pressure` | 1 % of compressor input per 2 psi (0.138 bar) lower (US DOE compressed-air sourcebook) + the artificial demand `dQ = Q_unreg (p_now - p_target) / p_now,abs` at the marginal curve; target by default 0.5 bar below the mean header pressure, never below the highest pressure the uses need, the plant's low limit (`low_limit_bar_g`) or 0 bar(g) | 2000 fixed (engineering, set-point changes) |
| `recover_heat` | the displaced fuel (heater efficiency, fuel price) in the months the heat is used | 250 per kW of recoverable heat at full load |
| `shut_off_idle` | energy spent unloaded in non-production hours | 800 per compressor (timer or sequencer rule) |
| `improve_control` | the best replayed scenario (below), else the trim's logged energy - the same demand on a variable-speed trim (the audit's own VSD curve, or the typical curve of `states`) | the scenario's cost (quoted, or `simulate::default_cost`); else 350 per kW of trim rating (a VSD trim), 3000 fixed when the audit already has a VSD to sequence as trim |
| `replace_compressor` | when the mean loaded power is more than 10 % above the data sheet's full-load power corrected to the mean pressure while loaded (ratio of isentropic work, `thermo::power_at_pressure`): loaded hours × (measured loaded kW - that corrected kW); nothing else (no comparison with the uncorrected rated power) | 400 per kW rated |

**Never more than the energy acted on**: each measure's electricity saving is capped by the annual
energy it acts on (the trim's energy above idle for a demand cut, the system's annual energy for the
pressure set point, the trim's logged energy for control, the machine's annual energy for a
replacement), so no measure can save more than exists to save.

**Replayed scenarios** (`simulate`) outrank the rule for `improve_control`: a scenario qualifies when the
auditor marked it as the proposal (`proposal`: a replay is a question asked, not advice, until then), it
is feasible, changes only the supply side (`supply_side_only`: pressure and leaks are measures of their
own), saves energy, and its baseline reproduced the logged energy within [`MAX_SCENARIO_VALIDATION_ERROR`]
(3 %, the bar of the validation test). Its annual saving is its saved share of the simulated baseline
energy times the audit's annual energy (the same annualisation as the baseline); the qualifying scenario
with the shortest payback is offered, and it replaces the rule-of-thumb estimate.

Costs are in the audit's currency. [`CostOverrides::per_kind`] replaces the *rate* of a kind (the
number multiplied by the quantity in the table: per m³/min, per kW, per compressor, or the fixed sum).
`simple_payback_years` = implementation cost / annual cost saving; it is `None` (JSON `null`) when the
saving is not positive, and such a measure is not proposed.

An edited implementation cost (`PUT /costs/{kind}`) and a scenario's quoted cost must be finite and
within 0 ..= [`MAX_IMPLEMENTATION_COST`] (1e12 in the audit's currency: a plant's whole air system,
priced in the weakest currency, stays far below it; any larger figure only makes paybacks overflow to
`null`), checked by [`check_implementation_cost`].

Rooms: `measures` works out each measure from the audit's figures; `text` holds the measures' words
in parts (words, or a figure in SI), which `core::display` renders in a reader's units.
*/

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

/// Largest implementation cost accepted, in the audit's currency (module doc).
pub const MAX_IMPLEMENTATION_COST: f64 = 1e12;

/// `cost` if it is finite and within 0 ..= [`MAX_IMPLEMENTATION_COST`], else why not.
pub fn check_implementation_cost(cost: f64) -> Result<f64, String> {
    if cost.is_finite() && (0.0..=MAX_IMPLEMENTATION_COST).contains(&cost) {
        Ok(cost)
    } else {
        Err(format!("the cost must be a number from 0 to {MAX_IMPLEMENTATION_COST:e}, got {cost}"))
    }
}

use super::costs;
use super::heat::HeatUseKind;
use super::model::{CompressorSpec, SiteSpec};

#[macro_use]
mod text;
mod measures;
#[cfg(test)]
pub(crate) mod tests;

pub use measures::recommend;
pub use text::{bar_g, flow, specific, Part, Quantity, Text};

/// Every kind of measure this module proposes (API.md names, the JSON spelling of each).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum MeasureKind {
    RepairLeaks,
    LowerPressure,
    RecoverHeat,
    ShutOffIdle,
    ImproveControl,
    ReplaceCompressor,
}

impl MeasureKind {
    pub const ALL: &'static [Self] = &[
        Self::RepairLeaks,
        Self::LowerPressure,
        Self::RecoverHeat,
        Self::ShutOffIdle,
        Self::ImproveControl,
        Self::ReplaceCompressor,
    ];

    /// The API name (`repair_leaks`, ...), the same as the JSON spelling.
    pub fn as_str(self) -> &'static str {
        match self {
            Self::RepairLeaks => "repair_leaks",
            Self::LowerPressure => "lower_pressure",
            Self::RecoverHeat => "recover_heat",
            Self::ShutOffIdle => "shut_off_idle",
            Self::ImproveControl => "improve_control",
            Self::ReplaceCompressor => "replace_compressor",
        }
    }

    pub fn parse(s: &str) -> Option<Self> {
        Self::ALL.iter().copied().find(|k| k.as_str() == s)
    }
}

/// Where a measure's implementation cost comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum CostSource {
    /// The documented default rates (module doc table).
    DefaultEstimate,
    /// Set per audit.
    Edited,
}

/// Rank by simple payback, shortest first (measures without one last).
pub fn rank(recs: &mut [Recommendation]) {
    recs.sort_by(|a, b| {
        let pa = a.simple_payback_years.unwrap_or(f64::INFINITY);
        let pb = b.simple_payback_years.unwrap_or(f64::INFINITY);
        pa.total_cmp(&pb)
    });
}

/// Replace default implementation costs by the totals an auditor entered per kind, recompute the
/// paybacks and rank again.
pub fn apply_implementation_costs(recs: &mut [Recommendation], edited: &BTreeMap<String, f64>) {
    for r in recs.iter_mut() {
        if let Some(&c) = edited.get(r.kind.as_str()) {
            r.implementation_cost = c;
            r.simple_payback_years = Some(c / r.annual_cost_saving);
            r.implementation_cost_source = CostSource::Edited;
        }
    }
    rank(recs);
}

/// 2 psi in bar: the step of the "1 % per 2 psi" rule (US DOE compressed-air sourcebook).
pub const BAR_PER_2_PSI: f64 = 2.0 * 6_894.757_293_168 / 100_000.0;
/// `replace_compressor` is proposed when the loaded power is this far above the data sheet's
/// full-load power at the loaded pressure (common practice; module doc table).
pub const REPLACE_ABOVE_DATASHEET: f64 = 0.10;
/// Default share of the estimated leak flow a repair campaign removes (common practice).
pub const DEFAULT_LEAK_REPAIR_FRACTION: f64 = 0.5;
/// Default pressure reduction below the mean header pressure, bar (common practice).
pub const DEFAULT_PRESSURE_REDUCTION_BAR: f64 = 0.5;

/// Options of the measures an auditor may change per audit.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct MeasureOptions {
    pub leak_repair_fraction: f64,
    /// Target header pressure; default mean - 0.5 bar (not below `needed_pressure_bar_g`).
    pub target_pressure_bar_g: Option<f64>,
    /// The highest pressure any use needs at the header, if known.
    pub needed_pressure_bar_g: Option<f64>,
    /// Unregulated demand that follows header pressure (besides leaks), m³/min.
    pub unregulated_flow_m3_min: Option<f64>,
}

impl Default for MeasureOptions {
    fn default() -> Self {
        Self {
            leak_repair_fraction: DEFAULT_LEAK_REPAIR_FRACTION,
            target_pressure_bar_g: None,
            needed_pressure_bar_g: None,
            unregulated_flow_m3_min: None,
        }
    }
}

/// Per-audit cost rates and measure options.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(default)]
pub struct CostOverrides {
    /// kind -> rate (module doc: per m³/min, per kW, per compressor or fixed).
    pub per_kind: BTreeMap<String, f64>,
    pub options: MeasureOptions,
}

/// The quantities a cost rate multiplies.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct CostContext {
    pub leak_repaired_m3_min: f64,
    pub recoverable_heat_kw: f64,
    pub rated_kw: f64,
    pub compressors: f64,
    /// The audit already has a variable-speed machine (a sequencer, not a new VSD, is the measure).
    pub has_vsd: bool,
    /// The cost of a replayed scenario (quoted or estimated by `simulate`); replaces the rate.
    pub scenario_cost: Option<f64>,
}

/// Default rate of a kind (module doc table), common practice, from memory.
pub fn default_rate(kind: MeasureKind, ctx: &CostContext) -> f64 {
    match kind {
        MeasureKind::RepairLeaks => costs::LEAK_PER_M3_MIN,
        MeasureKind::LowerPressure => costs::SET_PRESSURE,
        MeasureKind::RecoverHeat => costs::HEAT_RECOVERY_PER_KW,
        MeasureKind::ShutOffIdle => costs::SHUT_OFF_PER_COMPRESSOR,
        MeasureKind::ImproveControl if ctx.has_vsd => costs::SEQUENCER,
        MeasureKind::ImproveControl => costs::VSD_TRIM_PER_KW,
        MeasureKind::ReplaceCompressor => costs::PER_KW_FIXED_SPEED,
    }
}

fn cost_with_rate(kind: MeasureKind, ctx: &CostContext, rate: f64) -> f64 {
    match kind {
        MeasureKind::RepairLeaks => costs::LEAK_SURVEY + rate * ctx.leak_repaired_m3_min,
        MeasureKind::RecoverHeat => rate * ctx.recoverable_heat_kw,
        MeasureKind::ShutOffIdle => rate * ctx.compressors.max(1.0),
        MeasureKind::ImproveControl if ctx.has_vsd => rate,
        MeasureKind::ImproveControl | MeasureKind::ReplaceCompressor => rate * ctx.rated_kw,
        MeasureKind::LowerPressure => rate,
    }
}

/// Implementation cost with the audit's override of the rate, if any.
pub fn cost(kind: MeasureKind, ctx: &CostContext, overrides: &CostOverrides) -> f64 {
    if let Some(c) = ctx.scenario_cost {
        return c;
    }
    let rate = overrides.per_kind.get(kind.as_str()).copied().unwrap_or_else(|| default_rate(kind, ctx));
    cost_with_rate(kind, ctx, rate)
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Recommendation {
    pub kind: MeasureKind,
    pub title: String,
    pub description: String,
    pub annual_energy_saving_kwh: f64,
    pub annual_cost_saving: f64,
    pub implementation_cost: f64,
    pub simple_payback_years: Option<f64>,
    /// `default_estimate` (the documented rates above) or `edited` (set per audit).
    pub implementation_cost_source: CostSource,
    pub annual_co2_saving_t: f64,
    /// The saving is electricity (`false` for `recover_heat`, whose kWh are fuel displaced).
    pub electricity: bool,
    pub basis: Vec<String>,
    /// The same words in parts, for pages in either unit system.
    pub text: Text,
    pub formula: String,
    pub source: String,
    pub caution: Option<String>,
    /// The replayed scenario this measure rests on (`improve_control` only).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub scenario_id: Option<i64>,
}

/// A scenario is offered only if its unchanged plant reproduced the logged energy this closely.
pub const MAX_SCENARIO_VALIDATION_ERROR: f64 = 0.03;

/// A stored what-if result, as the `improve_control` measure needs it.
#[derive(Debug, Clone, PartialEq)]
pub struct ScenarioCase {
    pub id: i64,
    pub name: String,
    pub energy_saving_kwh: f64,
    pub baseline_energy_kwh: f64,
    pub validation_error: f64,
    pub feasible: bool,
    pub supply_side_only: bool,
    pub implementation_cost: f64,
    pub simulated_hours: f64,
    /// Marked by the auditor as the proposal: only then may it enter the ranking.
    pub proposal: bool,
}

impl ScenarioCase {
    /// Whether this scenario may be offered (module doc).
    pub fn qualifies(&self) -> bool {
        self.proposal
            && self.feasible
            && self.supply_side_only
            && self.energy_saving_kwh > 0.0
            && self.baseline_energy_kwh > 0.0
            && self.validation_error.abs() <= MAX_SCENARIO_VALIDATION_ERROR
            && self.implementation_cost.is_finite()
    }
    /// The annual saving: the saved share of the simulated baseline times the annual energy.
    pub fn annual_saving_kwh(&self, annual_energy_kwh: f64) -> f64 {
        self.energy_saving_kwh / self.baseline_energy_kwh * annual_energy_kwh
    }
}

/// What the measures need from one compressor, annualised by the audit's rule.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct MachineUse {
    pub annual_energy_kwh: f64,
    /// Energy above its unloaded (idle) power, kWh/yr: the most a demand cut can save on it.
    pub annual_above_idle_kwh: f64,
    /// Energy spent unloaded during non-production hours, kWh/yr.
    pub annual_unloaded_non_production_kwh: f64,
    pub annual_loaded_hours: f64,
    pub loaded_fraction: f64,
    pub cycles_per_hour: f64,
    pub mean_loaded_power_kw: Option<f64>,
    /// The data sheet's full-load power at the pressure the machine ran loaded at, kW.
    pub datasheet_power_at_pressure_kw: Option<f64>,
    /// Mean pressure while loaded, bar(g).
    pub loaded_pressure_bar_g: Option<f64>,
    pub power_logged: bool,
}

/// The trim machine on a variable-speed curve, as the analysis modelled it.
#[derive(Debug, Clone, PartialEq)]
pub struct ControlCase {
    pub logged_annual_kwh: f64,
    pub modelled_annual_kwh: f64,
    /// Which curve modelled the VSD trim.
    pub curve: String,
    pub simultaneous_cycling_share: f64,
}

/// The value of recovered heat, as the analysis computed it.
#[derive(Debug, Clone, PartialEq)]
pub struct HeatCase {
    pub useful_kwh_per_year: f64,
    pub fuel_kwh_per_year: f64,
    pub value_per_year: f64,
    pub recoverable_kw: f64,
    pub use_kind: HeatUseKind,
}

/// Everything the measures are computed from.
#[derive(Debug, Clone)]
pub struct RecommendInput<'a> {
    pub site: &'a SiteSpec,
    pub compressors: &'a [CompressorSpec],
    pub machines: &'a [MachineUse],
    pub trim: Option<usize>,
    pub marginal_kw_per_m3_min: f64,
    /// Annual hours the system is pressurized (some compressor running).
    pub annual_running_hours: f64,
    pub annual_energy_kwh: f64,
    pub leak_flow_m3_min: Option<f64>,
    /// Mean header pressure, only when the pressure log is credible (`analysis::sufficiency`).
    pub mean_pressure_bar_g: Option<f64>,
    /// The plant's low pressure limit (lowest rated pressure - 1 bar): no target goes below it.
    pub low_limit_bar_g: Option<f64>,
    pub control: Option<ControlCase>,
    pub heat: Option<HeatCase>,
    pub costs: &'a CostOverrides,
    /// Stored what-if results of the audit's present data (may be empty).
    pub scenarios: &'a [ScenarioCase],
}
