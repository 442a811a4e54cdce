/*!
Scenarios: what-if replay of the logged period (API.md "Scenarios (what-if replay)").

The logged demand is replayed against a simulated plant: the plant as it is (the **baseline**, which
must reproduce the logged energy: `validation_error`) and the plant with the scenario's changes.

# Demand
- From the logged system flow ([`Frame::system_flow`], m³/s free air) if the frame has one; otherwise
  estimated from each compressor's logged power (states on the levels found in it, [`levels::classify`];
  [`states::estimated_flow`])
  minus the air stored in the system volume (`V/p_atm dp/dt` from the logged header pressure).
- A header pressure log that is not credible (`SimInput::pressure_credible`, the sufficiency
  verdict's check: a pressure of another system, or a wrong unit or zero) is not read at all: no
  stored air from it, no start pressure, no leak coefficient anchored on it; the leaks are then
  taken at the plant's own pressure (the highest rated pressure less half a band).
- A leak estimate at or above the replayed demand's mean flow cannot be a part of that demand (the
  leak test and the log describe different conditions, as with a leak share above 100 %, which
  the summary withholds): the replay leaves it out, and says so in `note_parts`.
- **No demand to replay**: when no time step holds a demand above nothing (no flow logged and the
  states of the compressors' power show none of them loaded, as a power averaged between an
  energy counter's quarter-hourly readings does; or a flow log that is nil), the replay is not run:
  its figures are `null` and `no_demand_reason` says why in words, never a plant that never loads
  read as 0 kWh against the logged energy (-100 %).
- A missing bin holds the last demand if the gap is at most [`HOLD_GAP_S`]; a longer gap is skipped:
  it is left out of the simulated energy and of the logged energy alike (the plant's state carries
  over the gap unchanged).
- The pressure-dependent part: leaks are choked orifices, their free-air flow ∝ absolute pressure
  (choked flow through an orifice is proportional to the upstream absolute pressure: the physics
  behind the pressure correction of the bleed-down test in the US DOE's *Improving Compressed Air
  System Performance: A Sourcebook for Industry*, leaks fact sheet). With `leak_flow_m3_min` given at
  the mean logged header pressure `p̄`, the leak coefficient is `c = Q_leak / p̄_abs`; the logged
  demand minus `c p_logged,abs` is the production draw, replayed as is, and `(1 - reduced share) c
  p_sim,abs` is added at the simulated pressure. Without a leak estimate the demand does not depend on
  pressure (unregulated uses are not modelled separately).

# Receiver
One pressure node, isothermal, in free air: `V dp/dt = p_atm (Q_supply - Q_demand)` (the receiver
equation of the bleed-down test, `Q = V Δp / (p_atm t)`, in the US DOE sourcebook's leaks fact sheet),
`V` = system volume + added storage. Each bin is cut into sub-steps short enough that the pressure
moves at most [`MAX_DP_PER_SUBSTEP_BAR`] at full capacity and that the continuous controls
(modulation, variable speed) stay well inside their loop time constant. Within a sub-step the
switching of load/unload and start/stop machines and their timers are **events**: the step is cut
exactly where a pressure threshold is crossed or a timer ends, so cycle counts and loaded times do not
depend on the step.

# Control rules (defaults; "common practice" unless a source is named)
- **Sequence**: fixed-speed machines in `order` (default: rated flow descending), each next machine's
  band [`STAGGER_BAR`] (0.2 bar) lower: machine k unloads at `min(its rated pressure, unload(k-1) -
  0.2)` and loads [`BAND_BAR`] (0.6 bar) below that. Variable-speed machines are trim machines: their
  setpoint is the highest load pressure of the fixed-speed machines + 0.1 bar (a second VSD 0.2 bar
  lower), or, with no fixed-speed machine, their rated pressure - 0.5 bar. This reproduces the demo
  plant's own bands (C1 7.5/6.9, C2 7.3/6.7, C3 holding 7.0 bar(g)).
- **Load/unload**: starts (star-delta, [`START_DELAY_S`] at unloaded power) when the pressure falls to
  its load pressure, loads, unloads at its unload pressure; after unloading the power decays from
  [`BLOWDOWN_START_FRACTION`] (65 %) of full to the unloaded fraction with a [`BLOWDOWN_TAU_S`] (20 s)
  time constant (sump blow-down, `partload::unloaded_energy`: the same blow-down as the part-load
  model that prices leaks and pressure); after [`RUN_ON_S`] (10 min) unloaded it stops.
- **Modulation**: delivers `Q_full (p_unload - p) / 0.6 bar` (full at the load pressure, none at the
  unload pressure), power `P/P_full = 0.70 + 0.30 Q/Q_full` (common practice,
  `partload::modulation_power_fraction`); after
  10 min at zero delivery it stops, and it starts again at its load pressure.
- **Variable speed**: a PI law on the setpoint between the curve's minimum and maximum flow, with a
  speed ramp (gains scaled to the machine's maximum flow like the demo's drive: 2.63 Q_max per bar,
  0.0395 Q_max per bar s, ramp 0.066 Q_max per s); power from the data-sheet curve, linear between
  points. At minimum flow it stops once the pressure reaches setpoint + 0.6 bar and restarts below
  setpoint - 0.1 bar.
- **Start/stop**: runs fully loaded from its load pressure to its unload pressure, then stops, but not
  before a minimum run time of [`MIN_RUN_S`] (30 s, from memory: motor start limits).
- Package input power rises [`POWER_PER_BAR`] (7 %) per bar of discharge pressure above the rated
  pressure ("each 2 psi costs about 1 %": US DOE, *Improving Compressed Air System Performance: A Sourcebook
  for Industry*); unloaded and stopped power
  do not.
- **SetPressure** shifts every band by the same amount so that the simulated mean header pressure
  lands on the target (two corrections of the shift).
- **ReduceLeaks** removes that fraction of the leak flow (two reductions compound).

# Calibration
A load/unload machine whose log shows it running unloaded more than three blow-down time constants
after its last loaded bin and before its next (at least 30 such bins) takes the median power of those
bins as its unloaded
power, in place of the data sheet's (a blank one is a default by kind); the bins nearer the unloading
hold blow-down, which the replay adds itself: the blow-down `partload::fit` reads from the same log
when it is fine enough to show one (interval ≤ τ/2, at least five unloadings), else the default.
`calibration` lists each machine so calibrated.

# Figures
- `validation_error` = (baseline energy - logged energy) / logged energy, over the simulated bins in
  which every machine's power is logged (`NaN`, shown as `null`, if none is).
- `energy_kwh` over every simulated bin; a 15-minute warm-up on the first bin's demand is not counted.
- The peak demand is the highest mean of the production draw over [`PEAK_WINDOW_S`] (one bin when
  the bin is longer; below zero never), plus the leaks the scenario keeps at its mean simulated
  pressure: with nothing changed, near the logged peak flow.
- The pressure trace is the lowest pressure of each bucket of simulated bins (at most
  [`TRACE_POINTS`]), so a replay of a few bins in a span of years still draws its line.
- `feasible` is false when the 1-minute peak demand exceeds the total rated flow, or when the header
  pressure spends more than [`MAX_TIME_BELOW_S`] below `min_required_pressure_bar_g` (the lowest load
  or restart pressure of the simulated plant - 0.3 bar: the plant must hold its own control band).

# Implementation cost
A scenario may carry its own `implementation_cost` (a quotation). Without one, [`default_cost`]
estimates it from the changes, installed, in the audit's currency (common practice, from memory; the
same figures as the measures of `recommend` where they overlap): an added fixed-speed compressor
[`costs::PER_KW_FIXED_SPEED`] per kW rated, an added variable-speed one [`costs::PER_KW_VARIABLE_SPEED`]
per kW, a new sequence [`costs::SEQUENCER`], added storage [`costs::STORAGE_FIXED`] +
[`costs::STORAGE_PER_M3`] per m³, a new set-point [`costs::SET_PRESSURE`], leak repair
[`costs::LEAK_SURVEY`] + [`costs::LEAK_PER_M3_MIN`] per m³/min repaired; removing a machine costs nothing.
A scenario that changes only the supply side (no `set_pressure`, no `reduce_leaks`) is
`supply_side_only`: only such a scenario can be offered as the `improve_control` measure, because
lower pressure and leak repair are measures of their own and would otherwise be counted twice.

[`levels::classify`]: crate::core::levels::classify
[`states::estimated_flow`]: crate::core::states::estimated_flow
[`costs::PER_KW_FIXED_SPEED`]: crate::core::costs::PER_KW_FIXED_SPEED
[`costs::PER_KW_VARIABLE_SPEED`]: crate::core::costs::PER_KW_VARIABLE_SPEED
[`costs::SEQUENCER`]: crate::core::costs::SEQUENCER
[`costs::STORAGE_FIXED`]: crate::core::costs::STORAGE_FIXED
[`costs::STORAGE_PER_M3`]: crate::core::costs::STORAGE_PER_M3
[`costs::SET_PRESSURE`]: crate::core::costs::SET_PRESSURE
[`costs::LEAK_SURVEY`]: crate::core::costs::LEAK_SURVEY
[`costs::LEAK_PER_M3_MIN`]: crate::core::costs::LEAK_PER_M3_MIN
*/

mod calibrate;
mod cost;
mod demand;
mod engine;
mod machine;
mod plant;
#[cfg(test)]
mod plant_b_tests;
mod result;
#[cfg(test)]
mod tests;

use crate::core::display::{self, Fmt};
use crate::core::model::{CompressorSpec, StorageSpec};
use crate::core::recommend::{self, Part};
use crate::core::series::Frame;
use crate::core::units::{SiteAir, UnitSystem};

pub use cost::default_cost;
pub use plant::{AddedCompressor, Change, Scenario};
pub use result::{CostSource, SimCompressor, SimResult};

use demand::prepare_demand;
use engine::{simulate, Outcome};
use plant::{apply, build_plant, default_order, min_required, Plant};

/// Width of a load/unload or modulation band, bar (common practice).
pub const BAND_BAR: f64 = 0.6;
/// Each next machine's band is this much lower, bar (common practice: 0.1-0.2 bar).
pub const STAGGER_BAR: f64 = 0.2;
/// A variable-speed trim holds this much above the highest load pressure, bar.
pub const VSD_ABOVE_LOAD_BAR: f64 = 0.1;
/// A variable-speed machine at minimum flow stops at setpoint + this, bar.
pub const VSD_STOP_ABOVE_SETPOINT_BAR: f64 = 0.6;
/// ... and restarts below setpoint - this, bar.
pub const VSD_RESTART_BELOW_SETPOINT_BAR: f64 = 0.1;
/// Sump blow-down after unloading (the one part-load model's, `core::partload`).
pub use crate::core::partload::{BLOWDOWN_START_FRACTION, BLOWDOWN_TAU_S};
/// Unloaded run-on before a load/unload machine stops, s (common practice).
pub const RUN_ON_S: f64 = 600.0;
/// Star-delta start before a load/unload machine can load, s (common practice).
pub const START_DELAY_S: f64 = 8.0;
/// Minimum run time of a start/stop machine, s (from memory).
pub const MIN_RUN_S: f64 = 30.0;
/// Package power change per bar of discharge pressure (US DOE, *Improving Compressed Air System
/// Performance: A Sourcebook for Industry*: about 1 % per 2 psi).
pub const POWER_PER_BAR: f64 = 0.07;
/// A missing demand bin holds the last value for gaps up to this long, s.
pub const HOLD_GAP_S: f64 = 120.0;
/// Largest pressure change within one sub-step at full capacity, bar.
pub const MAX_DP_PER_SUBSTEP_BAR: f64 = 0.05;
/// Time below the minimum required pressure that makes a scenario infeasible, s.
pub const MAX_TIME_BELOW_S: f64 = 60.0;
/// Minimum required pressure: this much below the lowest load/restart pressure, bar.
pub const MIN_REQUIRED_MARGIN_BAR: f64 = 0.3;
/// Warm-up on the first bin's demand before the replay is counted, s.
pub const WARMUP_S: f64 = 900.0;
/// Peak demand is the highest mean over this window, s.
pub const PEAK_WINDOW_S: f64 = 60.0;
/// Points of the pressure trace at most.
pub const TRACE_POINTS: usize = 500;

/// What the replay runs on.
pub struct SimInput<'a> {
    pub frame: &'a Frame,
    /// The audit's compressors; `FrameColumn::compressor` indexes this slice.
    pub compressors: &'a [CompressorSpec],
    pub storage: &'a StorageSpec,
    pub site: &'a SiteAir,
    /// Leak flow at the mean header pressure, m³/min free air, if the audit has an estimate.
    pub leak_flow_m3_min: Option<f64>,
    /// Whether the logged header pressure passed the data-sufficiency checks
    /// (`analysis::sufficiency`: no reading below -0.1 bar(g), a median at least half the lowest
    /// rated pressure). When it did not, the replay reads nothing from it (module doc, "Demand").
    pub pressure_credible: bool,
}

/// A scenario that cannot be run, with the field at fault.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ScenarioError {
    pub field: String,
    pub message: String,
}

impl std::fmt::Display for ScenarioError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}: {}", self.field, self.message)
    }
}

impl std::error::Error for ScenarioError {}

fn fail<T>(field: impl Into<String>, message: impl Into<String>) -> Result<T, ScenarioError> {
    Err(ScenarioError { field: field.into(), message: message.into() })
}

/// Replay the logged period against the scenario's plant, beside the unchanged plant and the log.
pub fn run(input: &SimInput, scenario: &Scenario) -> Result<SimResult, ScenarioError> {
    let base_volume = input.storage.system_volume_m3();
    if !(base_volume.is_finite() && base_volume > 0.0) {
        // Said without a figure (the reader's units are the page's): an audit with no receiver
        // has nothing to hold the pressure between the compressors' steps.
        return fail(
            "storage",
            "no receiver or other system volume is on record: add the receivers under Site & equipment, \
             Storage, to replay the plant",
        );
    }
    for (i, s) in input.compressors.iter().enumerate() {
        if !(s.rated_flow_m3_min > 0.0 && s.rated_power_kw > 0.0) {
            return fail(
                format!("compressors[{i}]"),
                format!("{}: rated flow and power must be above 0", s.tag),
            );
        }
    }
    scenario.check()?;
    let (calibrated, calibration, blowdowns) = calibrate::calibrated(input);
    let input = &SimInput { compressors: &calibrated, ..*input };
    let applied = apply(input, scenario)?;
    let demand = prepare_demand(input)?;
    let (implementation_cost, implementation_cost_source, implementation_cost_basis) =
        match scenario.implementation_cost {
            Some(c) => (c, CostSource::Given, vec![format!("quoted: {c:.0}")]),
            None => {
                let (c, lines) = default_cost(&scenario.changes, input.leak_flow_m3_min);
                (c, CostSource::DefaultEstimate, lines)
            }
        };
    if let Some(why) = demand.no_demand.clone() {
        let cost = (implementation_cost, implementation_cost_source, implementation_cost_basis);
        return Ok(no_demand_result(&demand, why, cost, scenario.supply_side_only(), calibration));
    }

    let base_plant =
        build_plant(input.compressors, &default_order(input.compressors), 0.0, base_volume, 1.0, &blowdowns);
    let base_threshold = if base_plant.machines.is_empty() { 0.0 } else { min_required(&base_plant) };
    let base = simulate(&base_plant, &demand, base_threshold, false);

    let mean_p = |o: &Outcome| if o.simulated_s > 0.0 { o.p_integral / o.simulated_s } else { f64::NAN };
    let mk = |shift: f64| {
        build_plant(&applied.specs, &applied.order, shift, applied.volume_m3, applied.leak_keep, &blowdowns)
    };
    let mut plant = mk(0.0);
    let threshold_of = |pl: &Plant| if pl.machines.is_empty() { base_threshold } else { min_required(pl) };
    let mut out = simulate(&plant, &demand, threshold_of(&plant), true);
    if let Some(target) = applied.target_bar_g {
        let mut shift = 0.0;
        for _ in 0..2 {
            let m = mean_p(&out);
            if !m.is_finite() {
                break;
            }
            shift += target - m;
            plant = mk(shift);
            out = simulate(&plant, &demand, threshold_of(&plant), true);
        }
    }
    let threshold = threshold_of(&plant);

    let kwh = |kws: f64| kws / 3600.0;
    let hours = out.simulated_s / 3600.0;
    let validation_error = if base.compare_logged_kws > 0.0 {
        (base.compare_sim_kws - base.compare_logged_kws) / base.compare_logged_kws
    } else {
        f64::NAN
    };
    let mut problems = Vec::new();
    let capacity: f64 = applied.specs.iter().map(|s| s.rated_flow_m3_min).sum();
    let mp = mean_p(&out);
    let p_for_leaks = if mp.is_finite() { mp } else { 0.0 };
    let peak =
        (demand.peak_prod + demand.leak_c * applied.leak_keep * (p_for_leaks + demand.p_atm_bar)) * 60.0;
    // In parts (`recommend::Part`), so the what-if page quotes them in the reader's units.
    let mut problem_parts: Vec<Vec<Part>> = Vec::new();
    // What the peak is: a minute's mean, or one bin's when the log's analysis step is longer.
    let peak_words = if (demand.peak_window_s - PEAK_WINDOW_S).abs() < 1e-9 {
        " (the replayed demand's highest mean over any minute)".to_string()
    } else if demand.peak_window_s % 60.0 == 0.0 {
        format!(
            " (the replayed demand's highest mean over one {:.0}-minute step of the log)",
            demand.peak_window_s / 60.0
        )
    } else {
        format!(
            " (the replayed demand's highest mean over one {:.0}-second step of the log)",
            demand.peak_window_s
        )
    };
    if applied.specs.is_empty() {
        problem_parts.push(vec![
            Part::from("no compressor is left to meet the peak demand of "),
            recommend::flow(peak),
            Part::Words(peak_words.clone()),
        ]);
    } else if peak > capacity * (1.0 + 1e-9) {
        problem_parts.push(vec![
            Part::from("the compressors' total capacity of "),
            recommend::flow(capacity),
            Part::from(" is below the peak demand of "),
            recommend::flow(peak),
            Part::Words(format!("{peak_words}, short by ")),
            recommend::flow(peak - capacity),
        ]);
    }
    if out.below_s > MAX_TIME_BELOW_S {
        problem_parts.push(vec![
            Part::from("the header pressure was below "),
            recommend::bar_g(threshold),
            Part::Words(format!(
                " for {}: the plant does not hold its control band",
                display::hours_minutes(out.below_s)
            )),
        ]);
    }
    let si = Fmt::new(UnitSystem::Si, input.site.atmosphere);
    problems.extend(problem_parts.iter().map(|p| display::render_parts(p, &si)));
    let compressors = plant
        .machines
        .iter()
        .zip(&out.machines)
        .map(|(m, s)| SimCompressor {
            tag: m.tag.clone(),
            energy_kwh: kwh(s.energy_kws),
            loaded_hours: s.loaded_s / 3600.0,
            unloaded_hours: s.unloaded_s / 3600.0,
            cycles_per_hour: if hours > 0.0 { s.cycles as f64 / hours } else { 0.0 },
            starts: s.starts,
        })
        .collect();
    Ok(SimResult {
        energy_kwh: kwh(out.energy_kws),
        mean_power_kw: if out.simulated_s > 0.0 { out.energy_kws / out.simulated_s } else { 0.0 },
        peak_power_kw: out.peak_kw,
        min_pressure_bar_g: out.min_p,
        mean_pressure_bar_g: mp,
        time_below_min_required_s: out.below_s,
        min_required_pressure_bar_g: threshold,
        validation_error,
        logged_energy_kwh: kwh(base.compare_logged_kws),
        baseline_energy_kwh: kwh(base.energy_kws),
        energy_saving_kwh: kwh(base.energy_kws - out.energy_kws),
        simulated_hours: hours,
        feasible: problems.is_empty(),
        problems,
        problem_parts,
        note_parts: demand.notes,
        implementation_cost,
        implementation_cost_source,
        implementation_cost_basis,
        supply_side_only: scenario.supply_side_only(),
        compressors,
        pressure_trace: out.trace,
        calibration,
        no_demand_reason: None,
    })
}

/// The result of a replay with no demand to replay (the module doc's "Demand"): every figure of
/// the replay `NaN` (`null`), never a plant that never loads read as 0 kWh and a -100 %
/// validation error; the logged energy, the cost of the changes and the reason stay.
fn no_demand_result(
    demand: &demand::Demand,
    why: String,
    (implementation_cost, implementation_cost_source, implementation_cost_basis): (
        f64,
        CostSource,
        Vec<String>,
    ),
    supply_side_only: bool,
    calibration: Vec<String>,
) -> SimResult {
    let logged_kws: f64 =
        demand.logged_w.iter().flatten().filter(|w| w.is_finite()).map(|&w| w as f64 / 1000.0).sum();
    SimResult {
        energy_kwh: f64::NAN,
        mean_power_kw: f64::NAN,
        peak_power_kw: f64::NAN,
        min_pressure_bar_g: f64::NAN,
        mean_pressure_bar_g: f64::NAN,
        time_below_min_required_s: f64::NAN,
        min_required_pressure_bar_g: f64::NAN,
        validation_error: f64::NAN,
        logged_energy_kwh: logged_kws * demand.step_s / 3600.0,
        baseline_energy_kwh: f64::NAN,
        energy_saving_kwh: f64::NAN,
        simulated_hours: 0.0,
        // Nothing shows that the plant holds its pressure: no replay of this can be the proposal.
        feasible: false,
        problems: vec![],
        problem_parts: vec![],
        // The reason says it all (a leak note would compare the leaks with a demand of nothing).
        note_parts: vec![],
        implementation_cost,
        implementation_cost_source,
        implementation_cost_basis,
        supply_side_only,
        compressors: vec![],
        pressure_trace: vec![],
        calibration,
        no_demand_reason: Some(why),
    }
}
