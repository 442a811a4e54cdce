/*!
Measures: what to do about what the audit found, with annual savings, cost and simple payback.

Savings show only through the compressors' part-load behaviour (FIELD-NOTES §6): a change of demand is
priced at the **marginal** specific power of the machine that trims (`states::marginal_kw_per_m3_min`),
never at the plant's average, and a demand saving is never worth more than the trim machine's present
energy above idle.

| kind | saving | default implementation cost (common practice, from memory; edit per audit) |
|---|---|---|
| `repair_leaks` | `f` × leak flow (default `f` = 50 %, [`MeasureOptions::leak_repair_fraction`]) × marginal kW/(m³/min) × the system's running hours, capped at the trim's energy above idle | 1500 (survey) + 1000 per m³/min repaired |
| `lower_pressure` | 1 % of compressor input per 2 psi (0.138 bar) lower (DOE sourcebook, FIELD-NOTES §6) + the artificial demand `dQ = Q_unreg (p_now - p_target) / p_now,abs` at the marginal curve; target by default 0.5 bar below the mean header pressure, never below the highest pressure the uses need | 2000 fixed (engineering, set-point changes) |
| `recover_heat` | the displaced fuel (heater efficiency, fuel price) in the months the heat is used | 250 per kW of recoverable heat at full load |
| `shut_off_idle` | energy spent unloaded in non-production hours | 800 per compressor (timer or sequencer rule) |
| `improve_control` | the best replayed scenario (below), else the trim's logged energy - the same demand on a variable-speed trim (the audit's own VSD curve, or the typical curve of `states`) | the scenario's cost (quoted, or `simulate::default_cost`); else 350 per kW of trim rating (a VSD trim), 3000 fixed when the audit already has a VSD to sequence as trim |
| `replace_compressor` | loaded hours × (measured loaded kW - data-sheet kW) | 400 per kW rated |

**Replayed scenarios** (`simulate`) outrank the rule for `improve_control`: a scenario qualifies when it
is feasible, changes only the supply side (`supply_side_only`: pressure and leaks are measures of their
own), saves energy, and its baseline reproduced the logged energy within [`MAX_SCENARIO_VALIDATION_ERROR`]
(3 %, the bar of the validation test). Its annual saving is its saved share of the simulated baseline
energy times the audit's annual energy (the same annualisation as the baseline); the qualifying scenario
with the shortest payback is offered, and it replaces the rule-of-thumb estimate.

Costs are in the audit's currency. [`CostOverrides::per_kind`] replaces the *rate* of a kind (the
number multiplied by the quantity in the table: per m³/min, per kW, per compressor, or the fixed sum).
`simple_payback_years` = implementation cost / annual cost saving; it is `None` (JSON `null`) when the
saving is not positive, and such a measure is not proposed.
*/

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

use super::costs;
use super::display::Fmt;
use super::model::{CompressorSpec, Control, SiteSpec};
use super::units::UnitSystem;

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

/// 2 psi in bar: the step of the DOE "1 % per 2 psi" rule (FIELD-NOTES §6).
pub const BAR_PER_2_PSI: f64 = 2.0 * 6_894.757_293_168 / 100_000.0;
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

/// Default implementation cost of a measure (module doc table).
pub fn default_cost(kind: MeasureKind, ctx: &CostContext) -> f64 {
    cost_with_rate(kind, ctx, default_rate(kind, ctx))
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

/// A figure inside a measure's words, in canonical units, so each page shows it in its reader's
/// units. Only the quantities whose unit differs between SI and US customary are figures; kWh, kW,
/// hours and money read the same in both and stay words.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Quantity {
    /// m³/min of free air (cfm of free air in US units).
    FlowM3Min,
    /// bar(g) (psig).
    PressureBarG,
    /// kW/(m³/min) (kW/100 cfm).
    SpecificPowerKwPerM3Min,
}

/// Words, or a figure the reader's units show (JSON: a string, or `{"quantity", "value"}`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(untagged)]
pub enum Part {
    Words(String),
    Figure { quantity: Quantity, value: f64 },
}

impl From<&str> for Part {
    fn from(w: &str) -> Self {
        Part::Words(w.into())
    }
}
impl From<String> for Part {
    fn from(w: String) -> Self {
        Part::Words(w)
    }
}

/// A free-air flow, m³/min.
pub fn flow(m3_min: f64) -> Part {
    Part::Figure { quantity: Quantity::FlowM3Min, value: m3_min }
}
/// A gauge pressure, bar(g).
pub fn bar_g(bar_g: f64) -> Part {
    Part::Figure { quantity: Quantity::PressureBarG, value: bar_g }
}
/// A specific power, kW/(m³/min).
pub fn specific(kw_per_m3_min: f64) -> Part {
    Part::Figure { quantity: Quantity::SpecificPowerKwPerM3Min, value: kw_per_m3_min }
}

/// The words of `parts` with every figure in `fmt`'s units.
pub fn render(parts: &[Part], fmt: &Fmt) -> String {
    parts
        .iter()
        .map(|p| match p {
            Part::Words(w) => w.clone(),
            Part::Figure { quantity: Quantity::FlowM3Min, value } => fmt.flow_m3_min(*value),
            Part::Figure { quantity: Quantity::PressureBarG, value } => fmt.pressure_bar_g(*value),
            Part::Figure { quantity: Quantity::SpecificPowerKwPerM3Min, value } => fmt.specific_power(*value),
        })
        .collect()
}

/// A measure's words in parts: `title`, `description` and `basis` of [`Recommendation`] are their
/// SI rendering (API.md); pages render these in the reader's units.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct Text {
    pub title: Vec<Part>,
    pub description: Vec<Part>,
    pub basis: Vec<Vec<Part>>,
}

/// Words and figures: `text!["about ", flow(q)]`.
macro_rules! text {
    ($($p:expr),* $(,)?) => { vec![$(Part::from($p)),*] };
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
}

impl ScenarioCase {
    /// Whether this scenario may be offered (module doc).
    pub fn qualifies(&self) -> bool {
        self.feasible
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
    /// Full-load specific power measured (or from rated flow), kW/(m³/min).
    pub full_load_specific_power_kw_per_m3_min: Option<f64>,
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
    pub use_kind: super::heat::HeatUseKind,
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
    pub mean_pressure_bar_g: Option<f64>,
    pub control: Option<ControlCase>,
    pub heat: Option<HeatCase>,
    pub costs: &'a CostOverrides,
    /// Stored what-if results of the audit's present data (may be empty).
    pub scenarios: &'a [ScenarioCase],
}

/// A measure before its cost and payback are worked out.
struct Draft {
    kind: MeasureKind,
    title: Vec<Part>,
    description: Vec<Part>,
    saving_kwh: f64,
    /// The money saved when it is not electricity at the site's price (recovered heat).
    money: Option<f64>,
    cost_ctx: CostContext,
    basis: Vec<Vec<Part>>,
    formula: &'static str,
    source: &'static str,
    caution: Option<String>,
}

fn finish_scenario(r: &RecommendInput, d: Draft, id: i64) -> Option<Recommendation> {
    finish(r, d).map(|x| Recommendation { scenario_id: Some(id), ..x })
}

fn finish(r: &RecommendInput, d: Draft) -> Option<Recommendation> {
    let Draft { kind, title, description, saving_kwh, money, cost_ctx, basis, formula, source, caution } = d;
    let electricity = money.is_none();
    let annual_cost_saving = money.unwrap_or(saving_kwh * r.site.electricity_price_per_kwh);
    if !(saving_kwh > 0.0 && annual_cost_saving > 0.0) {
        return None;
    }
    let implementation_cost = cost(kind, &cost_ctx, r.costs);
    let co2_kg = if electricity { r.site.grid_co2_kg_per_kwh } else { r.site.fuel_co2_kg_per_kwh };
    let si = Fmt::new(UnitSystem::Si, r.site.air.atmosphere);
    Some(Recommendation {
        kind,
        title: render(&title, &si),
        description: render(&description, &si),
        annual_energy_saving_kwh: saving_kwh,
        annual_cost_saving,
        implementation_cost,
        simple_payback_years: Some(implementation_cost / annual_cost_saving),
        implementation_cost_source: CostSource::DefaultEstimate,
        annual_co2_saving_t: saving_kwh * co2_kg / 1000.0,
        electricity,
        basis: basis.iter().map(|b| render(b, &si)).collect(),
        text: Text { title, description, basis },
        formula: formula.into(),
        source: source.into(),
        caution,
        scenario_id: None,
    })
}

/// The measures worth proposing, ranked by simple payback (shortest first).
pub fn recommend(r: &RecommendInput) -> Vec<Recommendation> {
    let mut out = Vec::new();
    let opts = &r.costs.options;
    let trim_cap = r.trim.and_then(|t| r.machines.get(t)).map(|m| m.annual_above_idle_kwh);
    let trim_tag = r.trim.map(|t| r.compressors[t].tag.clone()).unwrap_or_default();
    let capped = |kwh: f64| trim_cap.map_or(kwh, |c| kwh.min(c.max(0.0)));
    let has_vsd = r.compressors.iter().any(|c| c.control == Control::VariableSpeed);

    // Leak repair: demand removed, priced at the trim's part-load curve.
    if let Some(leak) = r.leak_flow_m3_min.filter(|q| *q > 0.0) {
        let dq = opts.leak_repair_fraction.clamp(0.0, 1.0) * leak;
        let kwh = capped(dq * r.marginal_kw_per_m3_min * r.annual_running_hours);
        out.extend(finish(r, Draft { kind: MeasureKind::RepairLeaks, title: text!["Repair leaks: about ", flow(dq)], description: text![
                format!("Find and repair {:.0} % of the estimated ", opts.leak_repair_fraction * 100.0),
                flow(leak),
                format!(" of leaks; the trim compressor {trim_tag} then delivers less air."),
            ], saving_kwh: kwh, money: None, cost_ctx: CostContext { leak_repaired_m3_min: dq, ..Default::default() }, basis: vec![
                text!["leak flow ", flow(leak)],
                text![format!("repair fraction {:.2}", opts.leak_repair_fraction)],
                text!["marginal specific power ", specific(r.marginal_kw_per_m3_min), format!(" ({trim_tag})")],
                text![format!("running hours {:.0} h/yr", r.annual_running_hours)],
            ], formula: "saving = f × Q_leak × marginal kW/(m³/min) × running hours (≤ trim energy above idle)", source: "US DOE compressed-air sourcebook (leaks fact sheet); priced at the marginal (trim) specific power", caution: None }));
    }

    // Lower pressure.
    if let Some(p_now) = r.mean_pressure_bar_g {
        let mut target = opts.target_pressure_bar_g.unwrap_or(p_now - DEFAULT_PRESSURE_REDUCTION_BAR);
        if let Some(need) = opts.needed_pressure_bar_g {
            target = target.max(need);
        }
        let dp = p_now - target;
        if dp > 0.0 {
            let direct = r.annual_energy_kwh * 0.01 * dp / BAR_PER_2_PSI;
            let p_abs_bar = p_now + r.site.air.atmosphere.0 / 1e5;
            let q_unreg = opts.unregulated_flow_m3_min.unwrap_or(0.0) + r.leak_flow_m3_min.unwrap_or(0.0);
            let dq = q_unreg * dp / p_abs_bar;
            let artificial = capped(dq * r.marginal_kw_per_m3_min * r.annual_running_hours);
            out.extend(finish(r, Draft { kind: MeasureKind::LowerPressure, title: text!["Lower the header pressure from ", bar_g(p_now), " to ", bar_g(target)], description: text!["Lower the compressors' set points in steps while watching the pressure at the farthest point of use."], saving_kwh: direct + artificial, money: None, cost_ctx: CostContext::default(), basis: vec![
                    text!["mean header pressure ", bar_g(p_now)],
                    text!["target ", bar_g(target)],
                    text![format!("annual compressor energy {:.0} kWh", r.annual_energy_kwh)],
                    text!["unregulated demand incl. leaks ", flow(q_unreg), ": ", flow(dq), " less at the lower pressure"],
                    text!["marginal specific power ", specific(r.marginal_kw_per_m3_min)],
                ], formula: "saving = E × 1 % × Δp / 0.138 bar + Q_unreg Δp / p_abs × marginal kW/(m³/min) × hours", source: "US DOE compressed-air sourcebook (1 % of input per 2 psi)", caution: Some("check that every point of use keeps the pressure its tools need; lower in steps".into()) }));
        }
    }

    // Heat recovery.
    if let Some(h) = &r.heat {
        out.extend(finish(r, Draft { kind: MeasureKind::RecoverHeat, title: text![format!("Recover compressor heat for {}", h.use_kind.as_str().replace('_', " "))], description: text![format!(
                "Use about {:.0} kWh/yr of the compressors' heat in place of fuel ({:.0} kWh/yr of fuel).",
                h.useful_kwh_per_year, h.fuel_kwh_per_year
            )], saving_kwh: h.fuel_kwh_per_year, money: Some(h.value_per_year), cost_ctx: CostContext { recoverable_heat_kw: h.recoverable_kw, ..Default::default() }, basis: vec![
                text![format!("useful heat {:.0} kWh/yr", h.useful_kwh_per_year)],
                text![format!("heater efficiency {:.2}", r.site.heater_efficiency)],
                text![format!("fuel price {} {} per kWh", r.site.heating_fuel_price_per_kwh, r.site.currency)],
                text![format!("recoverable heat {:.1} kW at full load", h.recoverable_kw)],
            ], formula: "saving = useful heat / heater efficiency × fuel price, in the months the heat is used", source: "US DOE compressed-air sourcebook, heat-recovery fact sheet", caution: Some(
                "hot oil, hot ducts and water above 60 °C; interlock the recovery circuit so a blocked \
                 circuit never stops the compressor's own cooling; defer to local codes and licensed practice"
                    .into(),
            ) }));
    }

    // Shut off idle machines out of production.
    let idle: Vec<(usize, f64)> = r
        .machines
        .iter()
        .enumerate()
        .map(|(i, m)| (i, m.annual_unloaded_non_production_kwh))
        .filter(|(_, kwh)| *kwh > 0.0)
        .collect();
    if !idle.is_empty() {
        let kwh: f64 = idle.iter().map(|x| x.1).sum();
        let tags: Vec<String> = idle.iter().map(|(i, _)| r.compressors[*i].tag.clone()).collect();
        out.extend(finish(r, Draft { kind: MeasureKind::ShutOffIdle, title: text![format!("Switch off idling compressors out of production ({})", tags.join(", "))], description: text!["Outside production hours these machines run unloaded; a timer or sequencer rule stops them."], saving_kwh: kwh, money: None, cost_ctx: CostContext { compressors: idle.len() as f64, ..Default::default() }, basis: idle.iter()
                .map(|(i, k)| text![format!("{} unloaded out of production {k:.0} kWh/yr", r.compressors[*i].tag)])
                .collect(), formula: "saving = Σ energy spent unloaded in non-production hours (annualised)", source: "US DOE sourcebook (unloaded power 15-35 % of full load); common practice", caution: Some(
                "only where nothing needs air at those hours; leaks and dryers still draw while pressurized"
                    .into(),
            ) }));
    }

    // Control: the best replayed scenario, else a variable-speed trim by rule.
    let price = r.site.electricity_price_per_kwh;
    let best = r
        .scenarios
        .iter()
        .filter(|s| s.qualifies())
        .map(|s| (s, s.annual_saving_kwh(r.annual_energy_kwh)))
        .filter(|(s, kwh)| *kwh * price > 0.0 && s.implementation_cost >= 0.0)
        .min_by(|(a, ka), (b, kb)| {
            (a.implementation_cost / (ka * price))
                .total_cmp(&(b.implementation_cost / (kb * price)))
                .then(kb.total_cmp(ka))
        });
    if let Some((s, kwh)) = best {
        out.extend(finish_scenario(
            r,
            Draft {
                kind: MeasureKind::ImproveControl,
                title: text![format!("Change the compressor room as in scenario \u{201c}{}\u{201d}", s.name)],
                description: text![format!(
                    "The logged demand replayed through the changed room (scenario {}) takes {:.1} % less \
                     energy than the same replay of the room as it is.",
                    s.id,
                    s.energy_saving_kwh / s.baseline_energy_kwh * 100.0
                )],
                saving_kwh: kwh,
                money: None,
                cost_ctx: CostContext { scenario_cost: Some(s.implementation_cost), ..Default::default() },
                basis: vec![
                    text![format!(
                        "replayed saving {:.0} kWh over {:.0} h against a simulated baseline of {:.0} kWh",
                        s.energy_saving_kwh, s.simulated_hours, s.baseline_energy_kwh
                    )],
                    text![format!("annual energy {:.0} kWh/yr", r.annual_energy_kwh)],
                    text![format!("validation error of the replay {:+.2} %", s.validation_error * 100.0)],
                    text![format!("scenario cost {:.0} {}", s.implementation_cost, r.site.currency)],
                ],
                formula:
                    "saving = (replayed baseline - replayed scenario) / replayed baseline × annual energy",
                source:
                    "receiver equation V dp/dt = p_atm (Q_supply - Q_demand) with each machine's control \
                         (FIELD-NOTES §5, §4); validated against the logged energy",
                caution: None,
            },
            s.id,
        ));
    } else if let (Some(c), Some(t)) = (&r.control, r.trim) {
        let kwh = c.logged_annual_kwh - c.modelled_annual_kwh;
        let spec = &r.compressors[t];
        out.extend(finish(
            r,
            Draft {
                kind: MeasureKind::ImproveControl,
                title: text![if has_vsd {
                    format!("Sequence the variable-speed machine as trim instead of {}", spec.tag)
                } else {
                    format!("Trim with a variable-speed compressor instead of {}", spec.tag)
                }],
                description: text![format!(
                    "{} runs loaded {:.0} % of its time and cycles {:.1} times an hour; {}",
                    spec.tag,
                    r.machines[t].loaded_fraction * 100.0,
                    r.machines[t].cycles_per_hour,
                    if c.simultaneous_cycling_share > 0.1 {
                        format!(
                            "two machines part-load at once {:.0} % of the time",
                            c.simultaneous_cycling_share * 100.0
                        )
                    } else {
                        "its part-load power is high for the air it delivers".into()
                    }
                )],
                saving_kwh: kwh,
                money: None,
                cost_ctx: CostContext { rated_kw: spec.rated_power_kw, has_vsd, ..Default::default() },
                basis: vec![
                    text![format!("logged trim energy {:.0} kWh/yr", c.logged_annual_kwh)],
                    text![format!("same demand on {}: {:.0} kWh/yr", c.curve, c.modelled_annual_kwh)],
                ],
                formula: "saving = logged trim energy - Σ P_vsd(mean trim flow per 5 min) × time",
                source: "US DOE sourcebook: part-load behaviour by control",
                caution: None,
            },
        ));
    }

    // Replace (or overhaul) machines far from their data sheet.
    for (spec, m) in r.compressors.iter().zip(r.machines) {
        let Some(p_meas) = m.mean_loaded_power_kw else { continue };
        let power_high = p_meas > 1.10 * spec.rated_power_kw;
        let sp_high = m
            .full_load_specific_power_kw_per_m3_min
            .is_some_and(|sp| sp > 1.15 * spec.rated_specific_power_kw_per_m3_min());
        if !(power_high || sp_high) {
            continue;
        }
        let excess_kw = match m.full_load_specific_power_kw_per_m3_min {
            Some(sp) if sp_high => p_meas - p_meas * spec.rated_specific_power_kw_per_m3_min() / sp,
            _ => p_meas - spec.rated_power_kw,
        };
        out.extend(finish(r, Draft { kind: MeasureKind::ReplaceCompressor, title: text![format!("Overhaul or replace {}", spec.tag)], description: text![format!(
                "{} draws {p_meas:.1} kW loaded against {:.1} kW on its data sheet.",
                spec.tag, spec.rated_power_kw
            )], saving_kwh: excess_kw * m.annual_loaded_hours, money: None, cost_ctx: CostContext { rated_kw: spec.rated_power_kw, ..Default::default() }, basis: vec![
                text![format!("measured loaded power {p_meas:.2} kW")],
                text![format!("data-sheet power {:.2} kW", spec.rated_power_kw)],
                text![format!("loaded hours {:.0} h/yr", m.annual_loaded_hours)],
            ], formula: "saving = loaded hours × (measured loaded kW - data-sheet kW at its specific power)", source: "ISO 1217 data-sheet values; threshold 10 % power / 15 % specific power (common practice)", caution: Some(
                "check the measurement (power factor, clamp placement) and the discharge pressure first"
                    .into(),
            ) }));
    }

    out.sort_by(|a, b| {
        let pa = a.simple_payback_years.unwrap_or(f64::INFINITY);
        let pb = b.simple_payback_years.unwrap_or(f64::INFINITY);
        pa.total_cmp(&pb)
    });
    out
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::core::model::{CompressorKind, Cooling};
    use crate::core::states::marginal_kw_per_m3_min;
    use crate::core::units::SiteAir;

    pub(crate) fn site() -> SiteSpec {
        SiteSpec {
            air: SiteAir::new(101.325, 20.0),
            timezone: "UTC".into(),
            electricity_price_per_kwh: 0.15,
            demand_charge_per_kw_month: 0.0,
            currency: "EUR".into(),
            operating_weeks_per_year: 52.0,
            operating_hours_per_year: None,
            heating_fuel_price_per_kwh: 0.08,
            heater_efficiency: 0.9,
            heating_months: vec![1, 2, 3, 10, 11, 12],
            grid_co2_kg_per_kwh: 0.4,
            fuel_co2_kg_per_kwh: 0.2,
            production: None,
        }
    }

    fn lu() -> CompressorSpec {
        CompressorSpec {
            tag: "C1".into(),
            kind: CompressorKind::LubricatedScrew,
            control: Control::LoadUnload,
            cooling: Cooling::Air,
            rated_power_kw: 55.0,
            rated_flow_m3_min: 9.5,
            rated_pressure_bar_g: 7.5,
            unloaded_power_fraction: 0.25,
            stages: 1,
            rated_specific_power_kw_per_m3_min: None,
            power_curve: vec![],
            year: None,
        }
    }

    fn input<'a>(
        s: &'a SiteSpec,
        cs: &'a [CompressorSpec],
        ms: &'a [MachineUse],
        costs: &'a CostOverrides,
    ) -> RecommendInput<'a> {
        RecommendInput {
            site: s,
            compressors: cs,
            machines: ms,
            trim: Some(0),
            marginal_kw_per_m3_min: marginal_kw_per_m3_min(&cs[0]),
            annual_running_hours: 8000.0,
            annual_energy_kwh: 300_000.0,
            leak_flow_m3_min: Some(2.0),
            mean_pressure_bar_g: Some(7.0),
            control: None,
            heat: None,
            costs,
            scenarios: &[],
        }
    }

    fn case(id: i64, saving: f64, cost: f64) -> ScenarioCase {
        ScenarioCase {
            id,
            name: format!("s{id}"),
            energy_saving_kwh: saving,
            baseline_energy_kwh: 1000.0,
            validation_error: 0.01,
            feasible: true,
            supply_side_only: true,
            implementation_cost: cost,
            simulated_hours: 168.0,
        }
    }

    #[test]
    fn measure_texts_show_flow_and_pressure_in_the_readers_units() {
        // 1 m³/min = 35.3147 cfm; 1 psi = 6894.757 Pa (FIELD-NOTES §2, NIST SP 811).
        let s = site();
        let cs = [lu()];
        let ms = [MachineUse { annual_above_idle_kwh: 1e6, ..Default::default() }];
        let costs = CostOverrides::default();
        let recs = recommend(&input(&s, &cs, &ms, &costs));
        let us = Fmt::new(UnitSystem::Us, s.air.atmosphere);
        let leak = recs.iter().find(|r| r.kind == MeasureKind::RepairLeaks).expect("leak measure");
        // Half of the 2 m³/min leak repaired.
        assert_eq!(leak.title, "Repair leaks: about 1.00 m³/min free air");
        assert_eq!(render(&leak.text.title, &us), "Repair leaks: about 35.3 cfm free air");
        assert_eq!(leak.basis[0], "leak flow 2.00 m³/min free air");
        assert_eq!(render(&leak.text.basis[0], &us), "leak flow 70.6 cfm free air");
        assert!(render(&leak.text.basis[2], &us).contains(" kW/100 cfm"), "{:?}", leak.text.basis[2]);
        // 7.0 and 6.5 bar(g) = 101.5 and 94.3 psig.
        let p = recs.iter().find(|r| r.kind == MeasureKind::LowerPressure).expect("pressure measure");
        assert_eq!(p.title, "Lower the header pressure from 7.00 bar(g) to 6.50 bar(g)");
        assert_eq!(render(&p.text.title, &us), "Lower the header pressure from 101.5 psig to 94.3 psig");
        // No SI unit is left in any US rendering of these measures.
        for r in [leak, p] {
            let all: Vec<String> = std::iter::once(&r.text.title)
                .chain(std::iter::once(&r.text.description))
                .chain(&r.text.basis)
                .map(|x| render(x, &us))
                .collect();
            assert!(all.iter().all(|x| !x.contains("m³") && !x.contains("bar(g)")), "{all:?}");
        }
        // The parts survive the summary's JSON (the pages read them back from it).
        let back: Text = serde_json::from_value(serde_json::to_value(&leak.text).unwrap()).unwrap();
        assert_eq!(back, leak.text);
    }

    #[test]
    fn the_best_qualifying_scenario_is_the_control_measure() {
        let s = site();
        let cs = [lu()];
        let ms = [MachineUse::default()];
        let costs = CostOverrides::default();
        let mut bad_validation = case(4, 300.0, 10.0);
        bad_validation.validation_error = 0.05;
        let mut infeasible = case(5, 300.0, 10.0);
        infeasible.feasible = false;
        let mut demand_side = case(6, 300.0, 10.0);
        demand_side.supply_side_only = false;
        // 1: 10 % for 9000; 2: 5 % for 3000 (shorter payback); the last three do not qualify.
        let cases = [case(1, 100.0, 9000.0), case(2, 50.0, 3000.0), bad_validation, infeasible, demand_side];
        let mut inp = input(&s, &cs, &ms, &costs);
        inp.scenarios = &cases;
        let recs = recommend(&inp);
        let ctl: Vec<_> = recs.iter().filter(|r| r.kind == MeasureKind::ImproveControl).collect();
        assert_eq!(ctl.len(), 1);
        // 5 % of 300 000 kWh/yr.
        assert!((ctl[0].annual_energy_saving_kwh - 15_000.0).abs() < 1e-6);
        assert_eq!(ctl[0].implementation_cost, 3000.0);
        assert!(ctl[0].title.contains("s2"), "{}", ctl[0].title);
        assert_eq!(ctl[0].scenario_id, Some(2));
        let p = 3000.0 / (15_000.0 * s.electricity_price_per_kwh);
        assert!((ctl[0].simple_payback_years.unwrap() - p).abs() < 1e-9);
        // With none qualifying there is no scenario measure.
        let cases = [cases[2].clone(), cases[3].clone(), cases[4].clone()];
        inp.scenarios = &cases;
        assert!(recommend(&inp).iter().all(|r| r.kind != MeasureKind::ImproveControl));
    }

    #[test]
    fn an_edited_implementation_cost_changes_payback_and_rank() {
        let mk = |kind: MeasureKind, cost: f64, saving: f64| Recommendation {
            kind,
            title: String::new(),
            description: String::new(),
            annual_energy_saving_kwh: saving,
            annual_cost_saving: saving,
            implementation_cost: cost,
            simple_payback_years: Some(cost / saving),
            implementation_cost_source: CostSource::DefaultEstimate,
            annual_co2_saving_t: 0.0,
            electricity: true,
            basis: vec![],
            text: Text::default(),
            formula: String::new(),
            source: String::new(),
            caution: None,
            scenario_id: None,
        };
        let mut recs =
            vec![mk(MeasureKind::RepairLeaks, 1000.0, 1000.0), mk(MeasureKind::RecoverHeat, 3000.0, 1000.0)];
        let edited = BTreeMap::from([("recover_heat".to_string(), 500.0)]);
        apply_implementation_costs(&mut recs, &edited);
        assert_eq!(recs[0].kind, MeasureKind::RecoverHeat);
        assert_eq!(recs[0].simple_payback_years, Some(0.5));
        assert_eq!(recs[0].implementation_cost_source, CostSource::Edited);
        assert_eq!(recs[1].simple_payback_years, Some(1.0));
    }

    #[test]
    fn leak_repair_is_priced_at_the_load_unload_marginal_curve() {
        // Load/unload part load (FIELD-NOTES §4): ΔP = (P_full - P_unl) ΔQ / Q_rated.
        let s = site();
        let cs = vec![lu()];
        let ms = vec![MachineUse { annual_above_idle_kwh: 1e9, ..Default::default() }];
        let costs = CostOverrides::default();
        let r = recommend(&input(&s, &cs, &ms, &costs));
        let leak = r.iter().find(|x| x.kind == MeasureKind::RepairLeaks).unwrap();
        let expect = 0.5 * 2.0 * (55.0 - 13.75) / 9.5 * 8000.0;
        assert!((leak.annual_energy_saving_kwh - expect).abs() < 1e-6);
        assert!((leak.annual_cost_saving - expect * 0.15).abs() < 1e-6);
        assert_eq!(leak.implementation_cost, 1500.0 + 1000.0);
        assert!((leak.simple_payback_years.unwrap() - 2500.0 / (expect * 0.15)).abs() < 1e-9);
        // Capped at the trim's energy above idle.
        let ms = vec![MachineUse { annual_above_idle_kwh: 1000.0, ..Default::default() }];
        let r = recommend(&input(&s, &cs, &ms, &costs));
        let leak = r.iter().find(|x| x.kind == MeasureKind::RepairLeaks).unwrap();
        assert_eq!(leak.annual_energy_saving_kwh, 1000.0);
    }

    #[test]
    fn lower_pressure_follows_one_percent_per_two_psi() {
        // DOE sourcebook (FIELD-NOTES §6): 1 % of input per 2 psi; 0.5 bar = 3.626 x 2 psi -> 3.626 %.
        let s = site();
        let cs = vec![lu()];
        let ms = vec![MachineUse { annual_above_idle_kwh: 1e9, ..Default::default() }];
        let costs = CostOverrides::default();
        let mut inp = input(&s, &cs, &ms, &costs);
        inp.leak_flow_m3_min = None;
        let r = recommend(&inp);
        let lp = r.iter().find(|x| x.kind == MeasureKind::LowerPressure).unwrap();
        assert!((BAR_PER_2_PSI - 0.137_895).abs() < 1e-5);
        assert!((lp.annual_energy_saving_kwh - 300_000.0 * 0.01 * 0.5 / BAR_PER_2_PSI).abs() < 1e-6);
        // With leaks, artificial demand Q (p_now - p_target)/p_now,abs at the marginal curve is added.
        let inp = input(&s, &cs, &ms, &costs);
        let r = recommend(&inp);
        let lp2 = r.iter().find(|x| x.kind == MeasureKind::LowerPressure).unwrap();
        let dq = 2.0 * 0.5 / (7.0 + 1.01325);
        let extra = dq * marginal_kw_per_m3_min(&cs[0]) * 8000.0;
        assert!((lp2.annual_energy_saving_kwh - lp.annual_energy_saving_kwh - extra).abs() < 1e-6);
        // Not below the needed pressure.
        let mut costs = CostOverrides::default();
        costs.options.needed_pressure_bar_g = Some(7.0);
        let r = recommend(&input(&s, &cs, &ms, &costs));
        assert!(r.iter().all(|x| x.kind != MeasureKind::LowerPressure));
    }

    #[test]
    fn measures_rank_by_payback_and_heat_carries_its_caution() {
        let s = site();
        let cs = vec![lu()];
        let ms = vec![MachineUse {
            annual_above_idle_kwh: 1e9,
            annual_unloaded_non_production_kwh: 20_000.0,
            ..Default::default()
        }];
        let mut costs = CostOverrides::default();
        costs.per_kind.insert("recover_heat".into(), 100.0);
        let mut inp = input(&s, &cs, &ms, &costs);
        inp.heat = Some(HeatCase {
            useful_kwh_per_year: 90_000.0,
            fuel_kwh_per_year: 100_000.0,
            value_per_year: 8_000.0,
            recoverable_kw: 44.0,
            use_kind: crate::core::heat::HeatUseKind::SpaceHeating,
        });
        let r = recommend(&inp);
        assert!(r.len() >= 4);
        for w in r.windows(2) {
            assert!(w[0].simple_payback_years.unwrap() <= w[1].simple_payback_years.unwrap());
        }
        let h = r.iter().find(|x| x.kind == MeasureKind::RecoverHeat).unwrap();
        assert_eq!(h.implementation_cost, 4400.0); // overridden rate 100 per kW
        assert_eq!(h.annual_cost_saving, 8000.0);
        assert!(!h.electricity);
        assert!((h.annual_co2_saving_t - 20.0).abs() < 1e-9);
        assert!(h.caution.as_deref().unwrap().contains("60 °C"));
        let idle = r.iter().find(|x| x.kind == MeasureKind::ShutOffIdle).unwrap();
        assert_eq!(idle.annual_energy_saving_kwh, 20_000.0);
        let json = serde_json::to_value(&r[0]).unwrap();
        assert!(json["simple_payback_years"].is_number());
    }

    #[test]
    fn a_machine_drawing_more_than_its_data_sheet_is_flagged() {
        let s = site();
        let cs = vec![lu()];
        let ms = vec![MachineUse {
            mean_loaded_power_kw: Some(62.0),
            annual_loaded_hours: 4000.0,
            power_logged: true,
            ..Default::default()
        }];
        let costs = CostOverrides::default();
        let mut inp = input(&s, &cs, &ms, &costs);
        inp.leak_flow_m3_min = None;
        inp.mean_pressure_bar_g = None;
        let r = recommend(&inp);
        assert_eq!(r.len(), 1);
        assert_eq!(r[0].kind, MeasureKind::ReplaceCompressor);
        assert!((r[0].annual_energy_saving_kwh - 7.0 * 4000.0).abs() < 1e-9);
        assert_eq!(r[0].implementation_cost, 400.0 * 55.0);
    }
}
