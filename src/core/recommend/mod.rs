/*!
Measures: what to do about what the audit found, with annual savings, cost and simple payback.

Savings show only through the compressors' part-load behaviour (US DOE compressed-air sourcebook): a change of demand is
priced at the **marginal** specific power of the machine that trims (the slope of its part-load model
at its logged operating point, `core::partload`),
never at the plant's average, and a demand saving is never worth more than the trim machine's present
energy above idle.

| kind | saving | default implementation cost (common practice, from memory; edit per audit) |
|---|---|---|
| `repair_leaks` | `f` × leak flow (default `f` = 50 %, [`MeasureOptions::leak_repair_fraction`]) × marginal kW/(m³/min) × the hours left to price, held at the trim's energy above idle in and out of production | 1500 (survey) + 1000 per m³/min repaired |
| `lower_pressure` | the **loaded** (delivering) energy of the machines making the air × 1 % per 2 psi (0.138 bar) lower (US DOE compressed-air sourcebook), or × the ratio of isentropic work (`pressure_rule`), + the artificial demand `dQ = (Q_unreg + leaks) Δp / p_now,abs` at the marginal curve. The step Δp keeps the logged 5th-percentile pressure, shifted down by it, above the critical end use (`critical_pressure_bar_g`, else the plant's low limit) plus the transmitter's uncertainty; never past `target_pressure_bar_g`, the low limit or 0 bar(g); no room, no measure | 2000 fixed (engineering, set-point changes) |
| `recover_heat` | heat rejected (energy balance) × share on the cooling path × the unit's effectiveness (0.80 air, 0.75 water; editable; US DOE fact sheet 50-90 %), machines that ran; used in the heating months (space heating) or all year (process water); fuel = heat / heater efficiency × price; on the energy left after the electrical measures | 250 per kW of recoverable heat at full load |
| `shut_off_idle` | energy spent unloaded in non-production hours (a variable-speed machine's only in runs read as unloaded for 10 min or more: it slows down rather than unloads, and a bin between running and off is a stop, not idling; `analysis::machines::machine_cells`); when the trim is among the machines switched off, also the leaks left × marginal power over its non-production hours (held at its energy above idle then), and later demand cuts are priced in production hours only | 800 per compressor (timer or sequencer rule) |
| `improve_control` | the best replayed scenario (below) on the energy left, else (the trim's logged energy - the same air on a variable-speed trim, the air read in each 5 minutes from the trim's mean running power through its part-load model, `core::partload`) × the trim's energy above idle left / logged - its unloaded energy already switched off | the scenario's cost (quoted, or `simulate::default_cost`); else 350 per kW of trim rating (a VSD trim), 3000 fixed when the audit already has a VSD to sequence as trim |
| `replace_compressor` | when the mean loaded power is more than 10 % above the data sheet's full-load power corrected to the mean pressure while loaded (ratio of isentropic work, `thermo::power_at_pressure`): loaded hours × (measured loaded kW - that corrected kW) × the machine's loaded energy left / logged; nothing once the trim it is has been replaced by the control measure | 400 per kW rated |
| `dew_point_control` | purge a fixed-cycle desiccant dryer would not blow with dew-point switching (its purge × (1 - load through it), `core::treatment`) × marginal kW/(m³/min) × the hours left, held at the trim's energy above idle | 2500 per dryer |
| `zero_loss_drains` | the timer and open drains' air (orifice flow × open time / interval) × marginal kW/(m³/min) × the hours left | 500 per drain |
| `replace_inappropriate_uses` | the air of inappropriate uses that have an electric alternative on record × marginal kW/(m³/min) × the production hours left, less the alternatives' kW × those hours; none when that is not positive | 1500 per use line |
| `filter_change` | the filters whose excess drop (measured − clean at the mean flow, drop ∝ flow², `core::treatment`) exceeds 0.1 bar: the discharge pressure comes down by the sum of those excesses, priced like the pressure measure on the **loaded** energy left (1 % per 2 psi, US DOE sourcebook, or the isentropic-work ratio, `pressure_rule`; [`pressure_cut_fractions`]); the header pressure, hence unregulated demand, stays | each element's recorded cost, else 300 per element |
| `cycling_refrigerated_dryer` | a non-cycling refrigerated dryer replaced by a cycling or variable one: its kW × (1 − max(load through it, 0.2)) × the running hours (`core::treatment::CYCLING_DRYER_FLOOR`, common practice, from memory); the dryer's own electricity, outside the compressors' | 600 per m³/min of the dryer's rated flow |

**Stacked** (`stack`): each measure is priced alone (`standalone_*`), ranked by that payback (the
auditor's `order` first, `excluded` left out), then priced again on the plant the measures before
it leave; `measures_total` is the sum of the stacked figures.

**Ranges** (`_low` / `_high`), relative parts combined in quadrature: leak repair and other demand
cuts: the adopted leak flow's range, the part-load slope ±15 % ([`PART_LOAD_SLOPE_REL`], common
practice, from memory) and the annual energy's range (meters and extrapolation, from `baseline`);
lower pressure: the other pressure rule and the annual range; heat: the effectiveness ±0.10 (held
within 0.50-0.90) and the annual range; shut-off: the annual range (and the leak part's); control:
slope and annual range (a replay: its validation error); replacement: the power meter's error on
the measured power, carried whole into the difference. Prices are the audit's, taken as exact.
The total's range is the sum of the measures' (fully correlated).

Plan options ([`MeasureOptions`], `PUT /api/v1/audits/{id}/measures`): `leak_repair_fraction` and the
effectiveness 0-1, pressures 0-50 bar(g), `unregulated_flow_m3_min` 0-2000, no kind twice in
`order`.

**Never more than the energy acted on**: each measure's electricity saving is capped by the annual
energy it acts on on the plant it is priced on (the trim's energy above idle for a demand cut, the
delivering energy for the pressure set point, the trim's logged energy for control, the machine's
energy for a replacement), so no measure can save more than exists to save.

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
use super::units::SiteAir;

#[macro_use]
mod text;
mod measures;
mod stack;
#[cfg(test)]
pub(crate) mod tests;

pub use measures::{pressure_cut_fractions, Words};
pub use stack::{recommend, stack_total};
pub use text::{
    bar_g, flow, kpa_abs, pressure_drop, specific, storage_per_flow, temperature_c, temperature_difference,
    volume, Part, Quantity, Text,
};

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
    DewPointControl,
    ZeroLossDrains,
    ReplaceInappropriateUses,
    FilterChange,
    CyclingRefrigeratedDryer,
}

impl MeasureKind {
    pub const ALL: &'static [Self] = &[
        Self::RepairLeaks,
        Self::LowerPressure,
        Self::RecoverHeat,
        Self::ShutOffIdle,
        Self::ImproveControl,
        Self::ReplaceCompressor,
        Self::DewPointControl,
        Self::ZeroLossDrains,
        Self::ReplaceInappropriateUses,
        Self::FilterChange,
        Self::CyclingRefrigeratedDryer,
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
            Self::DewPointControl => "dew_point_control",
            Self::ZeroLossDrains => "zero_loss_drains",
            Self::ReplaceInappropriateUses => "replace_inappropriate_uses",
            Self::FilterChange => "filter_change",
            Self::CyclingRefrigeratedDryer => "cycling_refrigerated_dryer",
        }
    }

    pub fn parse(s: &str) -> Option<Self> {
        Self::ALL.iter().copied().find(|k| k.as_str() == s)
    }
}

/// What the treatment and end-use records offer the measures (free air, m³/min).
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct TreatmentCuts {
    /// Purge that dew-point control would save on the fixed-cycle desiccant dryers, and how many.
    pub dew_point_m3_min: f64,
    pub dew_point_dryers: usize,
    /// Air the timer (and open) drains lose, and how many.
    pub drains_m3_min: f64,
    pub lossy_drains: usize,
    /// Inappropriate uses with an electric alternative on record: their air while production runs,
    /// the alternatives' mean input then, kW, and how many use lines.
    pub inappropriate_m3_min: f64,
    pub alternative_kw: f64,
    pub inappropriate_uses: usize,
    /// Filters whose excess drop is worth an element change: the sum of their excess drops, bar,
    /// how many, the element costs on record and how many have none.
    pub filter_excess_bar: f64,
    pub filters_to_change: usize,
    pub filter_recorded_cost: f64,
    pub filters_without_cost: usize,
    /// The line pressure the records were priced at, bar(g): the filter measure's pressure when no
    /// credible header pressure is logged.
    pub line_pressure_bar_g: f64,
    /// Non-cycling refrigerated dryers: the mean kW a cycling or variable unit would save, their
    /// whole kW, their rated flow (m³/min) and how many.
    pub cycling_saving_kw: f64,
    pub non_cycling_kw: f64,
    pub non_cycling_rated_m3_min: f64,
    pub non_cycling_dryers: usize,
}

/// What a change of discharge pressure acts on: each machine's stages and loaded (delivering)
/// energy a year, kWh, with the pressure rule of the plan and the site's air. The pressure measure
/// and the filters' excess drops are priced on it by one rule ([`pressure_cut_fractions`]).
#[derive(Debug, Clone, PartialEq)]
pub struct DischargeBasis {
    pub machines: Vec<(u32, f64)>,
    pub rule: PressureRule,
    pub air: SiteAir,
}

impl DischargeBasis {
    /// The loaded energy a year that `drop_bar` of extra discharge pressure at `p_bar_g` costs:
    /// (by the plan's rule, by the other rule), kWh.
    pub fn drop_kwh(&self, p_bar_g: f64, drop_bar: f64) -> (f64, f64) {
        let mut chosen = 0.0;
        let mut other = 0.0;
        for &(stages, kwh) in &self.machines {
            let (doe, isen) = pressure_cut_fractions(&self.air, stages, p_bar_g + drop_bar, p_bar_g);
            let (a, b) = match self.rule {
                PressureRule::OnePercentPerTwoPsi => (doe, isen),
                PressureRule::IsentropicWork => (isen, doe),
            };
            chosen += kwh * a;
            other += kwh * b;
        }
        (chosen, other)
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
    /// The installed cost quoted for the replayed scenario the measure rests on (`improve_control`).
    Quoted,
}

/// Rank by simple payback, shortest first (measures without one last).
pub fn rank(recs: &mut [Recommendation]) {
    recs.sort_by(|a, b| {
        let pa = a.simple_payback_years.unwrap_or(f64::INFINITY);
        let pb = b.simple_payback_years.unwrap_or(f64::INFINITY);
        pa.total_cmp(&pb)
    });
}

/// 2 psi in bar: the step of the "1 % per 2 psi" rule (US DOE compressed-air sourcebook).
pub const BAR_PER_2_PSI: f64 = 2.0 * 6_894.757_293_168 / 100_000.0;
/// `replace_compressor` is proposed when the loaded power is this far above the data sheet's
/// full-load power at the loaded pressure (common practice; module doc table).
pub const REPLACE_ABOVE_DATASHEET: f64 = 0.10;
/// Default share of the estimated leak flow a repair campaign removes (common practice).
pub const DEFAULT_LEAK_REPAIR_FRACTION: f64 = 0.5;

/// Default effectiveness of a heat-recovery unit on the heat leaving through the cooling air (ducted
/// cabinet air) and through the cooling water (oil cooler and aftercooler circuits), inside the US DOE
/// heat-recovery fact sheet's "50-90 %" of the heat; the values are common practice, from memory.
pub const DEFAULT_RECOVERY_EFFECTIVENESS_AIR: f64 = 0.80;
pub const DEFAULT_RECOVERY_EFFECTIVENESS_WATER: f64 = 0.75;
/// Spread of the recovery unit's effectiveness taken as its range (± this, held within 0.50-0.90,
/// the fact sheet's range).
pub const RECOVERY_EFFECTIVENESS_SPREAD: f64 = 0.10;
/// Relative uncertainty of the trim machine's part-load slope (data sheet or typical curve; common
/// practice, from memory): a demand cut's range.
pub const PART_LOAD_SLOPE_REL: f64 = 0.15;

/// The scaling of loaded energy with discharge pressure used by `lower_pressure` (the other one gives
/// the far end of its range).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum PressureRule {
    /// 1 % of input per 2 psi (US DOE compressed-air sourcebook).
    #[default]
    OnePercentPerTwoPsi,
    /// The ratio of isentropic compression work at the two pressures (ideal gas, k = 1.4, the
    /// machine's stages).
    IsentropicWork,
}

/// Options of the measures an auditor may change per audit (stored as the audit's measure plan,
/// `PUT /api/v1/audits/{id}/measures`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default, deny_unknown_fields)]
pub struct MeasureOptions {
    pub leak_repair_fraction: f64,
    /// Target header pressure, bar(g): the set point comes down no further than this (and never
    /// further than the 5th-percentile rule allows).
    pub target_pressure_bar_g: Option<f64>,
    /// The highest pressure any use needs at the header, if known (the critical end use; an older
    /// name of `critical_pressure_bar_g`, which wins when both are given).
    pub needed_pressure_bar_g: Option<f64>,
    /// The pressure the critical end use needs at the header, bar(g); default the plant's low limit.
    pub critical_pressure_bar_g: Option<f64>,
    /// Unregulated demand that follows header pressure (besides leaks), m³/min.
    pub unregulated_flow_m3_min: Option<f64>,
    pub pressure_rule: PressureRule,
    /// Effectiveness of the recovery unit on heat leaving through cooling air / cooling water (0.5-0.9).
    pub heat_recovery_effectiveness_air: f64,
    pub heat_recovery_effectiveness_water: f64,
    /// The auditor's order of the measures: listed kinds are stacked first, in this order; the
    /// others follow by payback.
    pub order: Vec<MeasureKind>,
    /// Kinds left out of the plan (neither priced in the stack nor summed).
    pub excluded: Vec<MeasureKind>,
}

impl Default for MeasureOptions {
    fn default() -> Self {
        Self {
            leak_repair_fraction: DEFAULT_LEAK_REPAIR_FRACTION,
            target_pressure_bar_g: None,
            needed_pressure_bar_g: None,
            critical_pressure_bar_g: None,
            unregulated_flow_m3_min: None,
            pressure_rule: PressureRule::default(),
            heat_recovery_effectiveness_air: DEFAULT_RECOVERY_EFFECTIVENESS_AIR,
            heat_recovery_effectiveness_water: DEFAULT_RECOVERY_EFFECTIVENESS_WATER,
            order: vec![],
            excluded: vec![],
        }
    }
}

impl MeasureOptions {
    /// `Ok` when every number is finite and in its documented range (module doc), else the field
    /// and why.
    pub fn check(&self) -> Result<(), (&'static str, String)> {
        let f = |name: &'static str, v: f64, lo: f64, hi: f64| {
            if v.is_finite() && (lo..=hi).contains(&v) {
                Ok(())
            } else {
                Err((name, format!("{name} must be a number from {lo} to {hi}, got {v}")))
            }
        };
        f("leak_repair_fraction", self.leak_repair_fraction, 0.0, 1.0)?;
        f("heat_recovery_effectiveness_air", self.heat_recovery_effectiveness_air, 0.0, 1.0)?;
        f("heat_recovery_effectiveness_water", self.heat_recovery_effectiveness_water, 0.0, 1.0)?;
        for (name, v) in [
            ("target_pressure_bar_g", self.target_pressure_bar_g),
            ("needed_pressure_bar_g", self.needed_pressure_bar_g),
            ("critical_pressure_bar_g", self.critical_pressure_bar_g),
        ] {
            if let Some(v) = v {
                f(name, v, 0.0, 50.0)?;
            }
        }
        if let Some(q) = self.unregulated_flow_m3_min {
            f("unregulated_flow_m3_min", q, 0.0, 2000.0)?;
        }
        let mut seen = std::collections::BTreeSet::new();
        if !self.order.iter().all(|k| seen.insert(*k)) {
            return Err(("order", "a measure is listed twice in the order".into()));
        }
        Ok(())
    }

    /// The critical end use's pressure at the header, bar(g), if the auditor gave one.
    pub fn critical_pressure(&self) -> Option<f64> {
        self.critical_pressure_bar_g.or(self.needed_pressure_bar_g)
    }
}

/// Per-audit cost rates, edited totals and measure options.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
#[serde(default)]
pub struct CostOverrides {
    /// kind -> rate (module doc: per m³/min, per kW, per compressor or fixed).
    pub per_kind: BTreeMap<String, f64>,
    /// kind -> the implementation cost an auditor entered (`PUT /costs/{kind}`), replacing the estimate.
    pub edited_totals: BTreeMap<String, f64>,
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
    /// That cost was quoted for the scenario, not estimated.
    pub scenario_cost_quoted: bool,
    /// Dryers, drains or end-use lines a treatment measure changes (for `filter_change`: the
    /// elements without a recorded cost).
    pub items: f64,
    /// Costs on record that the measure carries whole (filter elements' own costs).
    pub recorded_cost: f64,
    /// Rated flow of the equipment replaced, m³/min (refrigerated dryers).
    pub rated_m3_min: f64,
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
        MeasureKind::DewPointControl => costs::DEW_POINT_CONTROL_PER_DRYER,
        MeasureKind::ZeroLossDrains => costs::ZERO_LOSS_DRAIN,
        MeasureKind::ReplaceInappropriateUses => costs::ALTERNATIVE_PER_USE,
        MeasureKind::FilterChange => costs::FILTER_ELEMENT,
        MeasureKind::CyclingRefrigeratedDryer => costs::CYCLING_DRYER_PER_M3_MIN,
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
        MeasureKind::DewPointControl
        | MeasureKind::ZeroLossDrains
        | MeasureKind::ReplaceInappropriateUses => rate * ctx.items.max(1.0),
        MeasureKind::FilterChange => ctx.recorded_cost + rate * ctx.items,
        MeasureKind::CyclingRefrigeratedDryer => rate * ctx.rated_m3_min,
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
    /// `default_estimate` (the documented rates above), `edited` (set per audit) or `quoted` (the
    /// installed cost given with the replayed scenario the measure rests on).
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
    /// 1-based place in the stack: `annual_energy_saving_kwh` is the saving on the plant left by
    /// the measures placed before it.
    pub stack_position: usize,
    /// The saving of this measure alone, on the plant as logged (API.md additions).
    pub standalone_annual_energy_saving_kwh: f64,
    pub standalone_annual_cost_saving: f64,
    /// `implementation_cost` / `standalone_annual_cost_saving`: the payback alone, which ranks the
    /// measures (API.md additions).
    #[serde(default)]
    pub standalone_simple_payback_years: Option<f64>,
    /// The stacked saving's range from its inputs (leak flow, part-load slope, hours, rule, effectiveness).
    pub annual_energy_saving_kwh_low: f64,
    pub annual_energy_saving_kwh_high: f64,
    pub annual_cost_saving_low: f64,
    pub annual_cost_saving_high: f64,
    /// One short line: how the saving is worked out and on what sources it rests.
    pub method_and_sources: String,
}

/// `summary.measures_total`: the sums of the stacked figures (API.md additions). Electricity and
/// displaced fuel are also given apart.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct MeasuresTotal {
    pub annual_energy_saving_kwh: f64,
    pub annual_energy_saving_kwh_low: f64,
    pub annual_energy_saving_kwh_high: f64,
    pub annual_electricity_saving_kwh: f64,
    pub annual_fuel_saving_kwh: f64,
    pub annual_cost_saving: f64,
    pub annual_cost_saving_low: f64,
    pub annual_cost_saving_high: f64,
    pub implementation_cost: f64,
    /// `None` when the stacked cost saving is not positive.
    pub simple_payback_years: Option<f64>,
    /// The kinds in the order they were stacked, and those left out by the auditor.
    pub order: Vec<MeasureKind>,
    pub excluded: Vec<MeasureKind>,
    /// How the ranges are combined.
    pub range_rule: String,
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
    /// The cost was quoted with the scenario, not estimated by the default rates.
    pub cost_quoted: bool,
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
        replayed_annual_saving_kwh(self.energy_saving_kwh, self.baseline_energy_kwh, annual_energy_kwh)
    }
}

/// A replay's saving over a year: the share it saves of the baseline replay (the same demand
/// through the room as it is, so the replay's own error cancels) times the plant's annual energy.
/// The what-if page and the report's saving alone use this one rule.
pub fn replayed_annual_saving_kwh(
    energy_saving_kwh: f64,
    baseline_energy_kwh: f64,
    annual_energy_kwh: f64,
) -> f64 {
    energy_saving_kwh / baseline_energy_kwh * annual_energy_kwh
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
    /// Energy while delivering air (loaded or part load), kWh/yr: what a lower pressure scales.
    pub annual_delivering_kwh: f64,
    /// Hours a year it runs out of production.
    pub annual_running_non_production_hours: f64,
    /// Energy above its unloaded power out of production, kWh/yr.
    pub annual_above_idle_non_production_kwh: f64,
}

/// The trim machine on a variable-speed curve, as the analysis modelled it.
#[derive(Debug, Clone, PartialEq)]
pub struct ControlCase {
    pub logged_annual_kwh: f64,
    pub modelled_annual_kwh: f64,
    /// Which curve modelled the VSD trim.
    pub curve: String,
    /// The trim's part-load model that read its air from its logged power (`core::partload`), in
    /// words and figures.
    pub model: Vec<Part>,
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
    /// Per compressor: annual recoverable heat, kWh (running machines only), at the default
    /// effectiveness; the recovered heat follows each machine's energy left in the stack.
    pub per_machine_recoverable_kwh: Vec<f64>,
    /// The same at the low and high ends of the effectiveness range.
    pub per_machine_recoverable_kwh_low: Vec<f64>,
    pub per_machine_recoverable_kwh_high: Vec<f64>,
    /// Share of the recoverable heat the site uses (heating months / 12, or 1 for process water).
    pub used_share: f64,
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
    pub leak_flow_m3_min_low: Option<f64>,
    pub leak_flow_m3_min_high: Option<f64>,
    /// Relative range of the annual energy (meters and extrapolation), below and above: every
    /// saving priced on annual energy or hours carries it.
    pub annual_energy_rel_low: f64,
    pub annual_energy_rel_high: f64,
    /// Mean header pressure, only when the pressure log is credible (`analysis::sufficiency`).
    pub mean_pressure_bar_g: Option<f64>,
    /// The logged 5th-percentile header pressure, bar(g) (credible logs only).
    pub p5_pressure_bar_g: Option<f64>,
    /// The pressure transmitter's uncertainty, bar: the margin kept above the critical pressure.
    pub pressure_uncertainty_bar: f64,
    /// The plant's low pressure limit (lowest rated pressure - 1 bar): no target goes below it.
    pub low_limit_bar_g: Option<f64>,
    /// Each logged point of use's name and 5th-percentile pressure, bar(g) (credible logs only): a
    /// lower pressure keeps each above the critical need too.
    pub points_of_use: Vec<(String, f64)>,
    pub control: Option<ControlCase>,
    pub heat: Option<HeatCase>,
    pub costs: &'a CostOverrides,
    /// The air the dryers, drains and inappropriate uses on record could give back
    /// (`core::treatment`, `analysis::transmission`); zero without records.
    pub treatment: TreatmentCuts,
    /// Stored what-if results of the audit's present data (may be empty).
    pub scenarios: &'a [ScenarioCase],
}
