/*!
Scenarios: what-if replay of the logged period (API.md "Scenarios (what-if replay)").

The logged demand is replayed against a simulated plant: the plant as it is (the **baseline**, which
must reproduce the logged energy: `validation_error`) and the plant with the scenario's changes.

# Demand
- From the logged system flow ([`Frame::system_flow`], m³/s free air) if the frame has one; otherwise
  estimated from each compressor's logged power ([`states::classify`], [`states::estimated_flow`])
  minus the air stored in the system volume (`V/p_atm dp/dt` from the logged header pressure).
- A missing bin holds the last demand if the gap is at most [`HOLD_GAP_S`]; a longer gap is skipped:
  it is left out of the simulated energy and of the logged energy alike (the plant's state carries
  over the gap unchanged).
- The pressure-dependent part: leaks are choked orifices, their free-air flow ∝ absolute pressure
  (FIELD-NOTES §5, §6). With `leak_flow_m3_min` given at the mean logged header pressure `p̄`, the leak
  coefficient is `c = Q_leak / p̄_abs`; the logged demand minus `c p_logged,abs` is the production draw,
  replayed as is, and `(1 - reduced share) c p_sim,abs` is added at the simulated pressure. Without a
  leak estimate the demand does not depend on pressure (unregulated uses are not modelled separately).

# Receiver
One pressure node, isothermal, in free air: `V dp/dt = p_atm (Q_supply - Q_demand)` (the receiver
equation of the bleed-down test, FIELD-NOTES §5), `V` = system volume + added storage. Each bin is cut
into sub-steps short enough that the pressure moves at most [`MAX_DP_PER_SUBSTEP_BAR`] at full
capacity and that the continuous controls (modulation, variable speed) stay well inside their loop
time constant. Within a sub-step the switching of load/unload and start/stop machines and their timers
are **events**: the step is cut exactly where a pressure threshold is crossed or a timer ends, so
cycle counts and loaded times do not depend on the step.

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
  time constant (sump blow-down); after [`RUN_ON_S`] (10 min) unloaded it stops.
- **Modulation**: delivers `Q_full (p_unload - p) / 0.6 bar` (full at the load pressure, none at the
  unload pressure), power `P/P_full = 0.70 + 0.30 Q/Q_full` (FIELD-NOTES §4, common practice); after
  10 min at zero delivery it stops, and it starts again at its load pressure.
- **Variable speed**: a PI law on the setpoint between the curve's minimum and maximum flow, with a
  speed ramp (gains scaled to the machine's maximum flow like the demo's drive: 2.63 Q_max per bar,
  0.0395 Q_max per bar s, ramp 0.066 Q_max per s); power from the data-sheet curve, linear between
  points. At minimum flow it stops once the pressure reaches setpoint + 0.6 bar and restarts below
  setpoint - 0.1 bar.
- **Start/stop**: runs fully loaded from its load pressure to its unload pressure, then stops, but not
  before a minimum run time of [`MIN_RUN_S`] (30 s, from memory: motor start limits).
- Package input power rises [`POWER_PER_BAR`] (7 %) per bar of discharge pressure above the rated
  pressure ("each 2 psi costs about 1 %", FIELD-NOTES §6, DOE sourcebook); unloaded and stopped power
  do not.
- **SetPressure** shifts every band by the same amount so that the simulated mean header pressure
  lands on the target (two corrections of the shift).
- **ReduceLeaks** removes that fraction of the leak flow (two reductions compound).

# Figures
- `validation_error` = (baseline energy - logged energy) / logged energy, over the simulated bins in
  which every machine's power is logged (`NaN`, shown as `null`, if none is).
- `energy_kwh` over every simulated bin; a 15-minute warm-up on the first bin's demand is not counted.
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
*/

use serde::{Deserialize, Serialize};

use super::model::{CompressorKind, CompressorSpec, Control, Cooling, StorageSpec};
use super::series::Frame;
use super::states;
use super::units::{SiteAir, PA_PER_BAR};

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
/// Sump blow-down after unloading: power starts at this fraction of full (common practice).
pub const BLOWDOWN_START_FRACTION: f64 = 0.65;
/// Blow-down time constant, s (common practice).
pub const BLOWDOWN_TAU_S: f64 = 20.0;
/// Unloaded run-on before a load/unload machine stops, s (common practice).
pub const RUN_ON_S: f64 = 600.0;
/// Star-delta start before a load/unload machine can load, s (common practice).
pub const START_DELAY_S: f64 = 8.0;
/// Minimum run time of a start/stop machine, s (from memory).
pub const MIN_RUN_S: f64 = 30.0;
/// Package power change per bar of discharge pressure (FIELD-NOTES §6: ~1 % per 2 psi).
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

// PI law of a variable-speed drive, scaled to its maximum flow (the demo drive's 20 m³/min per bar,
// 0.3 m³/min per bar s and 0.5 m³/min per s at 7.6 m³/min).
const VSD_KP_PER_BAR: f64 = 20.0 / 7.6;
const VSD_KI_PER_BAR_S: f64 = 0.3 / 7.6;
const VSD_RAMP_PER_S: f64 = 0.5 / 7.6;
/// Tolerance of a threshold test after an event landed on it, bar.
const EPS_BAR: f64 = 1e-9;
const EPS_S: f64 = 1e-9;
/// Events handled within one sub-step before the rest of it is taken in one go (a guard).
const MAX_EVENTS_PER_SUBSTEP: usize = 64;

use super::costs;

/// The default implementation cost of a scenario's changes (module doc) and the lines it adds up.
pub fn default_cost(changes: &[Change], leak_flow_m3_min: Option<f64>) -> (f64, Vec<String>) {
    let mut total = 0.0;
    let mut lines = Vec::new();
    let mut leak_share = 0.0;
    for c in changes {
        let (cost, line) = match c {
            Change::Remove { tag } => (0.0, format!("remove {tag}: 0")),
            Change::Add { compressor: a } => {
                let rate = if a.control == Control::VariableSpeed {
                    costs::PER_KW_VARIABLE_SPEED
                } else {
                    costs::PER_KW_FIXED_SPEED
                };
                let cost = rate * a.rated_power_kw.max(0.0);
                (cost, format!("add {} ({:.0} kW at {rate:.0} per kW): {cost:.0}", a.tag, a.rated_power_kw))
            }
            Change::Sequence { .. } => (costs::SEQUENCER, format!("new sequence: {:.0}", costs::SEQUENCER)),
            Change::AddStorage { volume_m3 } => {
                let cost = costs::STORAGE_FIXED + costs::STORAGE_PER_M3 * volume_m3.max(0.0);
                (cost, format!("add {volume_m3:.2} m³ of storage: {cost:.0}"))
            }
            Change::SetPressure { target_bar_g } => (
                costs::SET_PRESSURE,
                format!("set-point {target_bar_g:.2} bar(g): {:.0}", costs::SET_PRESSURE),
            ),
            Change::ReduceLeaks { fraction } => {
                leak_share = 1.0 - (1.0 - leak_share) * (1.0 - fraction.clamp(0.0, 1.0));
                continue;
            }
        };
        total += cost;
        lines.push(line);
    }
    if leak_share > 0.0 {
        let repaired = leak_flow_m3_min.unwrap_or(0.0) * leak_share;
        let cost = costs::LEAK_SURVEY + costs::LEAK_PER_M3_MIN * repaired;
        total += cost;
        lines.push(format!(
            "repair {:.0} % of the leaks ({repaired:.2} m³/min free air): {cost:.0}",
            leak_share * 100.0
        ));
    }
    (total, lines)
}

/// One what-if change (API.md).
#[derive(Deserialize, Serialize, Clone, Debug)]
#[serde(tag = "op", rename_all = "snake_case")]
pub enum Change {
    Remove { tag: String },
    Add { compressor: AddedCompressor },
    SetPressure { target_bar_g: f64 },
    AddStorage { volume_m3: f64 },
    ReduceLeaks { fraction: f64 },
    Sequence { order: Vec<String> },
}

/// A compressor added by a scenario: the API.md compressor fields.
#[derive(Deserialize, Serialize, Clone, Debug)]
pub struct AddedCompressor {
    pub tag: String,
    pub kind: CompressorKind,
    pub control: Control,
    pub cooling: Cooling,
    pub rated_power_kw: f64,
    pub rated_flow_m3_min: f64,
    pub rated_pressure_bar_g: f64,
    #[serde(default)]
    pub unloaded_power_fraction: Option<f64>,
    /// Variable speed: `[[flow_m3_min, kw], ...]`, ascending in flow.
    #[serde(default)]
    pub power_curve: Vec<(f64, f64)>,
    /// Variable speed without a curve: minimum flow / rated flow (default 0.20).
    #[serde(default)]
    pub min_speed_fraction: Option<f64>,
}

impl AddedCompressor {
    /// The data-sheet description; `field` prefixes the error's field name.
    pub fn to_spec(&self, field: &str) -> Result<CompressorSpec, ScenarioError> {
        let err = |f: &str, m: String| Err(ScenarioError { field: format!("{field}.{f}"), message: m });
        if self.tag.trim().is_empty() {
            return err("tag", "the tag must not be empty".into());
        }
        for (name, v) in [
            ("rated_power_kw", self.rated_power_kw),
            ("rated_flow_m3_min", self.rated_flow_m3_min),
            ("rated_pressure_bar_g", self.rated_pressure_bar_g),
        ] {
            if !(v.is_finite() && v > 0.0) {
                return err(name, format!("{name} must be a positive number, not {v}"));
            }
        }
        let unl = self.unloaded_power_fraction.unwrap_or(self.kind.default_unloaded_power_fraction());
        if !(0.0..=1.0).contains(&unl) {
            return err("unloaded_power_fraction", format!("must lie in 0..1, not {unl}"));
        }
        let mut curve = self.power_curve.clone();
        if self.control == Control::VariableSpeed {
            if curve.is_empty() {
                let f = self.min_speed_fraction.unwrap_or(states::VSD_TYPICAL_MIN_FLOW_FRACTION);
                if !(f > 0.0 && f < 1.0) {
                    return err("min_speed_fraction", format!("must lie in 0..1, not {f}"));
                }
                let (q, p) = (self.rated_flow_m3_min, self.rated_power_kw);
                curve = vec![(f * q, p * (states::VSD_TYPICAL_A + states::VSD_TYPICAL_B * f)), (q, p)];
            }
            if curve.len() < 2 {
                return err("power_curve", "needs at least two [flow_m3_min, kw] points".into());
            }
            for w in curve.windows(2) {
                if w[1].0.partial_cmp(&w[0].0) != Some(std::cmp::Ordering::Greater) {
                    return err("power_curve", "flows must rise strictly from point to point".into());
                }
            }
            if curve.iter().any(|&(q, p)| !(q.is_finite() && p.is_finite() && q >= 0.0 && p >= 0.0)) {
                return err("power_curve", "flows and powers must be finite and not negative".into());
            }
        }
        let unl = if self.control == Control::VariableSpeed && self.unloaded_power_fraction.is_none() {
            curve[0].1 / self.rated_power_kw
        } else {
            unl
        };
        Ok(CompressorSpec {
            tag: self.tag.clone(),
            kind: self.kind,
            control: self.control,
            cooling: self.cooling,
            rated_power_kw: self.rated_power_kw,
            rated_flow_m3_min: self.rated_flow_m3_min,
            rated_pressure_bar_g: self.rated_pressure_bar_g,
            unloaded_power_fraction: unl,
            stages: 1,
            rated_specific_power_kw_per_m3_min: None,
            power_curve: curve,
            year: None,
        })
    }
}

/// A named list of changes; no changes is the plant as it is.
#[derive(Deserialize, Serialize, Clone, Debug)]
pub struct Scenario {
    pub name: String,
    #[serde(default)]
    pub changes: Vec<Change>,
    /// The installed cost, if quoted; otherwise [`default_cost`] estimates it.
    #[serde(default)]
    pub implementation_cost: Option<f64>,
}

impl Scenario {
    /// No set-point change and no leak repair: a change of the supply side alone (module doc).
    pub fn supply_side_only(&self) -> bool {
        !self.changes.iter().any(|c| matches!(c, Change::SetPressure { .. } | Change::ReduceLeaks { .. }))
    }
}

/// What the replay runs on.
pub struct SimInput<'a> {
    pub frame: &'a Frame,
    /// The audit's compressors; `FrameColumn::compressor` indexes this slice.
    pub compressors: &'a [CompressorSpec],
    pub storage: &'a StorageSpec,
    pub site: &'a SiteAir,
    /// Leak flow at the mean header pressure, m³/min free air, if the audit has an estimate.
    pub leak_flow_m3_min: Option<f64>,
}

/// One machine's figures over the simulated period.
#[derive(Serialize, Clone, Debug, PartialEq)]
pub struct SimCompressor {
    pub tag: String,
    pub energy_kwh: f64,
    /// Hours delivering air (loaded; variable speed: running; modulation: delivering).
    pub loaded_hours: f64,
    /// Hours running without delivering (unloaded, starting, modulated to nothing).
    pub unloaded_hours: f64,
    /// Load cycles (into the loaded state) per simulated hour.
    pub cycles_per_hour: f64,
    pub starts: u64,
}

/// The scenario's result beside the baseline and the log.
#[derive(Serialize, Clone, Debug)]
pub struct SimResult {
    pub energy_kwh: f64,
    pub mean_power_kw: f64,
    /// Highest bin-mean total power, kW.
    pub peak_power_kw: f64,
    pub min_pressure_bar_g: f64,
    pub mean_pressure_bar_g: f64,
    pub time_below_min_required_s: f64,
    pub min_required_pressure_bar_g: f64,
    /// (simulated energy of the unchanged plant - logged energy) / logged energy.
    pub validation_error: f64,
    pub logged_energy_kwh: f64,
    /// The unchanged plant simulated.
    pub baseline_energy_kwh: f64,
    /// Baseline - this scenario.
    pub energy_saving_kwh: f64,
    /// Hours simulated (the logged period less skipped gaps).
    pub simulated_hours: f64,
    pub feasible: bool,
    pub problems: Vec<String>,
    /// The scenario's installed cost: quoted, or estimated by [`default_cost`].
    pub implementation_cost: f64,
    /// `given` (the scenario's own figure) or `default_estimate`.
    pub implementation_cost_source: &'static str,
    pub implementation_cost_basis: Vec<String>,
    /// Neither `set_pressure` nor `reduce_leaks`: may be offered as the `improve_control` measure.
    pub supply_side_only: bool,
    pub compressors: Vec<SimCompressor>,
    /// (t_ms, bar_g), the minimum of each bucket, at most [`TRACE_POINTS`] points.
    pub pressure_trace: Vec<(i64, f64)>,
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

// ---------------------------------------------------------------------------------------------------
// The plant as simulated

#[derive(Debug, Clone)]
struct Machine {
    tag: String,
    control: Control,
    rated_kw: f64,
    rated_q: f64,
    rated_bar_g: f64,
    unl_frac: f64,
    load_bar_g: f64,
    unload_bar_g: f64,
    /// Variable speed: (m³/s, kW).
    curve: Vec<(f64, f64)>,
    setpoint: f64,
    stop: f64,
    restart: f64,
    kp: f64,
    ki: f64,
    ramp: f64,
}

impl Machine {
    fn qmin(&self) -> f64 {
        self.curve.first().map_or(0.0, |c| c.0)
    }
    fn qmax(&self) -> f64 {
        self.curve.last().map_or(self.rated_q, |c| c.0)
    }
    fn curve_kw(&self, q: f64) -> f64 {
        let c = &self.curve;
        if q <= c[0].0 {
            return c[0].1;
        }
        for w in c.windows(2) {
            let ((q0, p0), (q1, p1)) = (w[0], w[1]);
            if q <= q1 {
                return p0 + (p1 - p0) * (q - q0) / (q1 - q0);
            }
        }
        c[c.len() - 1].1
    }
    fn pressure_factor(&self, p_bar_g: f64) -> f64 {
        1.0 + POWER_PER_BAR * (p_bar_g - self.rated_bar_g)
    }
    /// The lowest pressure at which this machine still reacts (load or restart), bar(g).
    fn lowest_trigger(&self) -> f64 {
        match self.control {
            Control::VariableSpeed => self.restart,
            _ => self.load_bar_g,
        }
    }
}

#[derive(Debug, Clone)]
struct Plant {
    machines: Vec<Machine>,
    volume_m3: f64,
    leak_keep: f64,
}

/// Bands from the order and a common shift (rules in the module doc).
fn build_plant(
    specs: &[CompressorSpec],
    order: &[usize],
    shift_bar: f64,
    volume_m3: f64,
    keep: f64,
) -> Plant {
    let mut machines = Vec::with_capacity(order.len());
    let mut prev_unload: Option<f64> = None;
    let mut highest_load: Option<f64> = None;
    for &i in order {
        let s = &specs[i];
        if s.control == Control::VariableSpeed {
            continue;
        }
        let unload = match prev_unload {
            Some(u) => s.rated_pressure_bar_g.min(u - STAGGER_BAR),
            None => s.rated_pressure_bar_g,
        };
        prev_unload = Some(unload);
        let load = unload - BAND_BAR;
        highest_load = Some(highest_load.map_or(load, |h: f64| h.max(load)));
        machines.push((i, load, unload));
    }
    let mut vsd_count = 0;
    let mut out = Vec::with_capacity(order.len());
    for &i in order {
        let s = &specs[i];
        let mut m = Machine {
            tag: s.tag.clone(),
            control: s.control,
            rated_kw: s.rated_power_kw,
            rated_q: s.rated_flow_m3_min / 60.0,
            rated_bar_g: s.rated_pressure_bar_g,
            unl_frac: s.unloaded_power_fraction.clamp(0.0, 1.0),
            load_bar_g: 0.0,
            unload_bar_g: 0.0,
            curve: vec![],
            setpoint: 0.0,
            stop: 0.0,
            restart: 0.0,
            kp: 0.0,
            ki: 0.0,
            ramp: 0.0,
        };
        if s.control == Control::VariableSpeed {
            m.curve = states::vsd_curve(s).iter().map(|&(q, p)| (q / 60.0, p)).collect();
            let base = match highest_load {
                Some(h) => h + VSD_ABOVE_LOAD_BAR,
                None => s.rated_pressure_bar_g - 0.5,
            };
            m.setpoint = base - STAGGER_BAR * vsd_count as f64 + shift_bar;
            m.stop = m.setpoint + VSD_STOP_ABOVE_SETPOINT_BAR;
            m.restart = m.setpoint - VSD_RESTART_BELOW_SETPOINT_BAR;
            let qmax = m.qmax();
            m.kp = VSD_KP_PER_BAR * qmax;
            m.ki = VSD_KI_PER_BAR_S * qmax;
            m.ramp = VSD_RAMP_PER_S * qmax;
            vsd_count += 1;
        } else {
            let &(_, load, unload) = machines.iter().find(|x| x.0 == i).expect("fixed-speed machine");
            m.load_bar_g = load + shift_bar;
            m.unload_bar_g = unload + shift_bar;
        }
        out.push(m);
    }
    Plant { machines: out, volume_m3, leak_keep: keep }
}

/// Default order: fixed-speed machines by rated flow descending, variable-speed (trim) last.
fn default_order(specs: &[CompressorSpec]) -> Vec<usize> {
    let mut idx: Vec<usize> = (0..specs.len()).collect();
    idx.sort_by(|&a, &b| {
        let va = specs[a].control == Control::VariableSpeed;
        let vb = specs[b].control == Control::VariableSpeed;
        va.cmp(&vb).then(specs[b].rated_flow_m3_min.total_cmp(&specs[a].rated_flow_m3_min))
    });
    idx
}

// ---------------------------------------------------------------------------------------------------
// Demand from the log

struct Demand {
    step_s: f64,
    start_ms: i64,
    step_ms: i64,
    /// Production draw (demand less leaks at the logged pressure), m³/s; NaN = skipped bin.
    prod: Vec<f32>,
    /// Leak coefficient, m³/s per bar absolute.
    leak_c: f64,
    p_atm_bar: f64,
    /// Logged total power, W (NaN where any machine's is missing).
    logged_w: Option<Vec<f32>>,
    first_p_bar_g: Option<f64>,
    /// Highest [`PEAK_WINDOW_S`] mean of the production draw, m³/s.
    peak_prod: f64,
    max_prod: f64,
}

fn prepare_demand(input: &SimInput) -> Result<Demand, ScenarioError> {
    let frame = input.frame;
    let grid = frame.grid;
    let n = grid.len;
    let step_s = grid.step_s();
    let atm = input.site.atmosphere.0;
    let p_atm_bar = atm / PA_PER_BAR;
    let pressure: Option<Vec<f64>> =
        frame.header_pressure().map(|c| c.values.iter().map(|&v| (v as f64 - atm) / PA_PER_BAR).collect());
    let mut q: Vec<f32> = match frame.system_flow() {
        Some(q) => q,
        None => {
            let mut sum = vec![0.0f32; n];
            for (i, spec) in input.compressors.iter().enumerate() {
                let Some(col) = frame.power_of(i) else {
                    return fail(
                        "frame",
                        format!(
                            "no flow is logged and no power for {}: the demand cannot be estimated",
                            spec.tag
                        ),
                    );
                };
                let st = states::classify(spec, &col.values);
                for (s, f) in sum.iter_mut().zip(states::estimated_flow(spec, &st, &col.values)) {
                    *s += f;
                }
            }
            // Supply less the air stored: Q_d = Q_s - V/p_atm dp/dt (receiver equation).
            if let Some(p) = &pressure {
                let k = input.storage.system_volume_m3() / p_atm_bar;
                for i in 1..n.saturating_sub(1) {
                    let dp = p[i + 1] - p[i - 1];
                    if dp.is_finite() {
                        sum[i] -= (k * dp / (2.0 * step_s)) as f32;
                    }
                }
            }
            sum
        }
    };
    if input.compressors.is_empty() && q.is_empty() {
        return fail("frame", "the frame holds no bins");
    }
    // Hold short gaps, leave long ones out.
    let hold_bins = ((HOLD_GAP_S / step_s).floor() as usize).max(1);
    let mut i = 0;
    while i < n {
        if q[i].is_finite() {
            i += 1;
            continue;
        }
        let start = i;
        while i < n && !q[i].is_finite() {
            i += 1;
        }
        if start > 0 && i - start <= hold_bins && i < n {
            let v = q[start - 1];
            q[start..i].iter_mut().for_each(|x| *x = v);
        }
    }
    let mean_p = pressure.as_ref().and_then(|p| {
        let (s, c) = p.iter().filter(|v| v.is_finite()).fold((0.0, 0usize), |(s, c), v| (s + v, c + 1));
        (c > 0).then(|| s / c as f64)
    });
    let p_ref = mean_p.unwrap_or_else(|| {
        input.compressors.iter().map(|c| c.rated_pressure_bar_g).fold(f64::NAN, f64::max) - 0.5 * BAND_BAR
    });
    let leak_c = match input.leak_flow_m3_min {
        Some(l) if l.is_finite() && l > 0.0 && (p_ref + p_atm_bar) > 0.0 => l / 60.0 / (p_ref + p_atm_bar),
        Some(l) if !(l.is_finite() && l >= 0.0) => {
            return fail("leak_flow_m3_min", format!("must be a flow of zero or more, not {l}"))
        }
        _ => 0.0,
    };
    let prod: Vec<f32> = (0..n)
        .map(|i| {
            let pl = pressure.as_ref().map(|p| p[i]).filter(|v| v.is_finite()).unwrap_or(p_ref);
            (q[i] as f64 - leak_c * (pl + p_atm_bar)) as f32
        })
        .collect();
    let logged_w = if input.compressors.is_empty() {
        None
    } else {
        let cols: Option<Vec<&[f32]>> =
            (0..input.compressors.len()).map(|i| frame.power_of(i).map(|c| c.values.as_slice())).collect();
        cols.and_then(|c| super::series::sum_columns(n, c.into_iter()))
    };
    let w = ((PEAK_WINDOW_S / step_s).round() as usize).clamp(1, n.max(1));
    let (mut peak, mut max_prod, mut run, mut cnt) = (0.0f64, 0.0f64, 0.0f64, 0usize);
    let mut window = std::collections::VecDeque::with_capacity(w);
    for &v in &prod {
        if !v.is_finite() {
            window.clear();
            run = 0.0;
            cnt = 0;
            continue;
        }
        let v = v as f64;
        max_prod = max_prod.max(v);
        window.push_back(v);
        run += v;
        cnt += 1;
        if cnt > w {
            run -= window.pop_front().unwrap_or(0.0);
            cnt -= 1;
        }
        if cnt == w {
            peak = peak.max(run / w as f64);
        }
    }
    if peak == 0.0 {
        peak = max_prod;
    }
    let first_p_bar_g = pressure.as_ref().and_then(|p| p.iter().copied().find(|v| v.is_finite()));
    Ok(Demand {
        step_s,
        start_ms: grid.start_ms,
        step_ms: grid.step_ms,
        prod,
        leak_c,
        p_atm_bar,
        logged_w,
        first_p_bar_g,
        peak_prod: peak,
        max_prod,
    })
}

// ---------------------------------------------------------------------------------------------------
// The simulation

#[derive(Debug, Clone, Copy, PartialEq)]
enum Mode {
    Off,
    /// Star-delta start; timer = time left.
    Starting,
    /// Load/unload, start/stop loaded; timer = time since the start (start/stop minimum run).
    Loaded,
    /// Timer = time since unloading.
    Unloaded,
    /// Modulation, variable speed; timer = time at zero delivery (modulation run-on).
    Running,
}

#[derive(Debug, Clone, Copy)]
struct MState {
    mode: Mode,
    timer: f64,
    q: f64,
    integ: f64,
}

#[derive(Debug, Clone, Copy, Default)]
struct MStats {
    energy_kws: f64,
    loaded_s: f64,
    unloaded_s: f64,
    cycles: u64,
    starts: u64,
}

struct Outcome {
    machines: Vec<MStats>,
    energy_kws: f64,
    /// Simulated energy over the bins with logged power, and the logged energy there, kW s.
    compare_sim_kws: f64,
    compare_logged_kws: f64,
    simulated_s: f64,
    peak_kw: f64,
    min_p: f64,
    p_integral: f64,
    below_s: f64,
    trace: Vec<(i64, f64)>,
}

fn time_to_rise(p: f64, r: f64, thr: f64) -> f64 {
    if p >= thr {
        0.0
    } else if r > 0.0 {
        (thr - p) / r
    } else {
        f64::INFINITY
    }
}

fn time_to_fall(p: f64, r: f64, thr: f64) -> f64 {
    if p <= thr {
        0.0
    } else if r < 0.0 {
        (thr - p) / r
    } else {
        f64::INFINITY
    }
}

impl MState {
    fn flow(&self, m: &Machine) -> f64 {
        match (self.mode, m.control) {
            (Mode::Loaded, _) => m.rated_q,
            (Mode::Running, _) => self.q,
            _ => 0.0,
        }
    }

    /// Time until this machine's next switching condition holds, with the pressure moving at r bar/s.
    fn event_time(&self, m: &Machine, p: f64, r: f64) -> f64 {
        match (m.control, self.mode) {
            (Control::VariableSpeed, Mode::Off) => time_to_fall(p, r, m.restart),
            (Control::VariableSpeed, _) => {
                if self.q <= m.qmin() + 1e-12 {
                    time_to_rise(p, r, m.stop)
                } else {
                    f64::INFINITY
                }
            }
            (_, Mode::Off) => time_to_fall(p, r, m.load_bar_g),
            (_, Mode::Starting) => self.timer,
            (Control::StartStop, Mode::Loaded) => {
                time_to_rise(p, r, m.unload_bar_g).max(MIN_RUN_S - self.timer)
            }
            (_, Mode::Loaded) => time_to_rise(p, r, m.unload_bar_g),
            (_, Mode::Unloaded) => time_to_fall(p, r, m.load_bar_g).min(RUN_ON_S - self.timer),
            (_, Mode::Running) => {
                if self.q <= 0.0 {
                    RUN_ON_S - self.timer
                } else {
                    f64::INFINITY
                }
            }
        }
    }

    /// Energy over `dt` at mean pressure `p_mid`, kW s; and (loaded, unloaded) time.
    fn advance(&mut self, m: &Machine, p_mid: f64, dt: f64, st: &mut MStats) {
        let kws = match self.mode {
            Mode::Off => 0.0,
            Mode::Starting => {
                self.timer -= dt;
                st.unloaded_s += dt;
                m.unl_frac * m.rated_kw * dt
            }
            Mode::Loaded => {
                self.timer += dt;
                st.loaded_s += dt;
                m.rated_kw * m.pressure_factor(p_mid) * dt
            }
            Mode::Unloaded => {
                // Exact integral of u + (b - u) exp(-s/τ) from s to s + dt.
                let u = m.unl_frac;
                let b = BLOWDOWN_START_FRACTION.max(u);
                let s = self.timer;
                let decay =
                    BLOWDOWN_TAU_S * ((-s / BLOWDOWN_TAU_S).exp() - (-(s + dt) / BLOWDOWN_TAU_S).exp());
                self.timer += dt;
                st.unloaded_s += dt;
                m.rated_kw * (u * dt + (b - u) * decay)
            }
            Mode::Running => match m.control {
                Control::VariableSpeed => {
                    st.loaded_s += dt;
                    m.curve_kw(self.q) * m.pressure_factor(p_mid) * dt
                }
                _ => {
                    let x = (self.q / m.rated_q).clamp(0.0, 1.0);
                    if self.q <= 0.0 {
                        self.timer += dt;
                        st.unloaded_s += dt;
                    } else {
                        st.loaded_s += dt;
                    }
                    let mp = states::MODULATION_POWER_AT_ZERO_FLOW;
                    m.rated_kw * (mp + (1.0 - mp) * x) * m.pressure_factor(p_mid) * dt
                }
            },
        };
        st.energy_kws += kws;
    }

    /// Apply the switching rules at pressure p.
    fn transition(&mut self, m: &Machine, p: f64, st: &mut MStats) {
        match (m.control, self.mode) {
            (Control::VariableSpeed, Mode::Off) => {
                if p <= m.restart + EPS_BAR {
                    *self = MState { mode: Mode::Running, timer: 0.0, q: m.qmin(), integ: m.qmin() };
                    st.starts += 1;
                    st.cycles += 1;
                }
            }
            (Control::VariableSpeed, _) => {
                if self.q <= m.qmin() + 1e-12 && p >= m.stop - EPS_BAR {
                    *self = MState { mode: Mode::Off, timer: 0.0, q: 0.0, integ: 0.0 };
                }
            }
            (Control::Modulation, Mode::Off) => {
                if p <= m.load_bar_g + EPS_BAR {
                    self.mode = Mode::Running;
                    self.timer = 0.0;
                    self.q = modulation_flow(m, p);
                    st.starts += 1;
                    st.cycles += 1;
                }
            }
            (Control::Modulation, _) => {
                if self.q <= 0.0 && self.timer >= RUN_ON_S - EPS_S {
                    self.mode = Mode::Off;
                    self.q = 0.0;
                }
            }
            (Control::StartStop, Mode::Off) => {
                if p <= m.load_bar_g + EPS_BAR {
                    self.mode = Mode::Loaded;
                    self.timer = 0.0;
                    st.starts += 1;
                    st.cycles += 1;
                }
            }
            (Control::StartStop, _) => {
                if p >= m.unload_bar_g - EPS_BAR && self.timer >= MIN_RUN_S - EPS_S {
                    self.mode = Mode::Off;
                }
            }
            (Control::LoadUnload, Mode::Off) => {
                if p <= m.load_bar_g + EPS_BAR {
                    self.mode = Mode::Starting;
                    self.timer = START_DELAY_S;
                    st.starts += 1;
                }
            }
            (Control::LoadUnload, Mode::Starting) => {
                if self.timer <= EPS_S {
                    self.mode = Mode::Loaded;
                    self.timer = 0.0;
                    st.cycles += 1;
                }
            }
            (Control::LoadUnload, Mode::Loaded) => {
                if p >= m.unload_bar_g - EPS_BAR {
                    self.mode = Mode::Unloaded;
                    self.timer = 0.0;
                }
            }
            (Control::LoadUnload, _) => {
                if p <= m.load_bar_g + EPS_BAR {
                    self.mode = Mode::Loaded;
                    self.timer = 0.0;
                    st.cycles += 1;
                } else if self.timer >= RUN_ON_S - EPS_S {
                    self.mode = Mode::Off;
                }
            }
        }
    }

    /// Continuous controls, once per sub-step of length h.
    fn control(&mut self, m: &Machine, p: f64, h: f64) {
        if self.mode != Mode::Running {
            return;
        }
        match m.control {
            Control::VariableSpeed => {
                let (qmin, qmax) = (m.qmin(), m.qmax());
                let e = m.setpoint - p;
                // Integrate only while the output is not pinned at a limit the same way (anti-windup).
                let unclamped = m.kp * e + self.integ;
                if !((unclamped >= qmax && e > 0.0) || (unclamped <= qmin && e < 0.0)) {
                    self.integ = (self.integ + m.ki * e * h).clamp(qmin, qmax);
                }
                let cmd = (m.kp * e + self.integ).clamp(qmin, qmax);
                let mc = m.ramp * h;
                self.q += (cmd - self.q).clamp(-mc, mc);
            }
            Control::Modulation => {
                let q = modulation_flow(m, p);
                if q > 0.0 {
                    self.timer = 0.0;
                }
                self.q = q;
            }
            _ => {}
        }
    }
}

fn modulation_flow(m: &Machine, p: f64) -> f64 {
    m.rated_q * ((m.unload_bar_g - p) / BAND_BAR).clamp(0.0, 1.0)
}

/// Replay the demand against a plant. `threshold_bar_g`: the minimum required pressure.
fn simulate(plant: &Plant, d: &Demand, threshold_bar_g: f64, trace: bool) -> Outcome {
    let nm = plant.machines.len();
    let ms = &plant.machines;
    let k_v = d.p_atm_bar / plant.volume_m3; // bar/s per m³/s
    let leak_c = d.leak_c * plant.leak_keep;
    let p_atm = d.p_atm_bar;
    let top =
        ms.iter()
            .map(|m| {
                if m.control == Control::VariableSpeed {
                    m.setpoint
                } else {
                    m.unload_bar_g - 0.5 * BAND_BAR
                }
            })
            .fold(f64::NEG_INFINITY, f64::max);
    // Sub-step: pressure moves at most MAX_DP at full capacity; continuous loops get τ/5.
    let capacity: f64 = ms.iter().map(|m| m.rated_q.max(m.qmax())).sum::<f64>().max(d.max_prod).max(1e-9);
    let mut h_max = MAX_DP_PER_SUBSTEP_BAR / (k_v * capacity);
    for m in ms {
        let gain = match m.control {
            Control::VariableSpeed => m.kp,
            Control::Modulation => m.rated_q / BAND_BAR,
            _ => continue,
        };
        h_max = h_max.min(0.2 / (k_v * gain));
    }
    let n_sub = (d.step_s / h_max).ceil().max(1.0) as usize;
    let h = d.step_s / n_sub as f64;

    let mut st = vec![MState { mode: Mode::Off, timer: 0.0, q: 0.0, integ: 0.0 }; nm];
    let mut stats = vec![MStats::default(); nm];
    let mut p = d.first_p_bar_g.unwrap_or(if top.is_finite() { top } else { 7.0 });

    let n = d.prod.len();
    let bucket = n.div_ceil(TRACE_POINTS).max(1);
    let mut out = Outcome {
        machines: vec![],
        energy_kws: 0.0,
        compare_sim_kws: 0.0,
        compare_logged_kws: 0.0,
        simulated_s: 0.0,
        peak_kw: 0.0,
        min_p: f64::INFINITY,
        p_integral: 0.0,
        below_s: 0.0,
        trace: Vec::new(),
    };
    let mut bucket_min = f64::INFINITY;

    // Warm-up on the first simulated bin's demand: states and pressure settle, nothing is counted.
    if let Some(&first) = d.prod.iter().find(|v| v.is_finite()) {
        let steps = (WARMUP_S / h).ceil() as usize;
        let mut scratch = vec![MStats::default(); nm];
        let mut sink = (0.0, 0.0, 0.0, f64::INFINITY);
        for _ in 0..steps {
            substep(
                ms,
                &mut st,
                &mut scratch,
                &mut p,
                h,
                first as f64,
                leak_c,
                p_atm,
                k_v,
                threshold_bar_g,
                &mut sink,
            );
        }
    }

    for i in 0..n {
        let prod = d.prod[i];
        if prod.is_finite() {
            let e0: f64 = stats.iter().map(|s| s.energy_kws).sum();
            // (energy is read back from the stats; sink: p integral, time below, unused, min p)
            let mut sink = (0.0, 0.0, 0.0, f64::INFINITY);
            for _ in 0..n_sub {
                substep(
                    ms,
                    &mut st,
                    &mut stats,
                    &mut p,
                    h,
                    prod as f64,
                    leak_c,
                    p_atm,
                    k_v,
                    threshold_bar_g,
                    &mut sink,
                );
            }
            let e1: f64 = stats.iter().map(|s| s.energy_kws).sum();
            let bin_kws = e1 - e0;
            out.energy_kws += bin_kws;
            out.simulated_s += d.step_s;
            out.peak_kw = out.peak_kw.max(bin_kws / d.step_s);
            out.p_integral += sink.0;
            out.below_s += sink.1;
            out.min_p = out.min_p.min(sink.3);
            bucket_min = bucket_min.min(sink.3);
            if let Some(lw) = &d.logged_w {
                let l = lw[i];
                if l.is_finite() {
                    out.compare_sim_kws += bin_kws;
                    out.compare_logged_kws += l as f64 / 1000.0 * d.step_s;
                }
            }
        }
        if (i + 1) % bucket == 0 || i + 1 == n {
            if bucket_min.is_finite() {
                let b0 = i / bucket * bucket;
                out.trace.push((d.start_ms + b0 as i64 * d.step_ms, bucket_min));
            }
            bucket_min = f64::INFINITY;
        }
    }
    if !trace {
        out.trace.clear();
    }
    out.machines = stats;
    out
}

/// One sub-step of length h, cut at switching events. `sink`: (∫p dt, time below threshold, -, min p).
#[allow(clippy::too_many_arguments)]
#[inline]
fn substep(
    ms: &[Machine],
    st: &mut [MState],
    stats: &mut [MStats],
    p: &mut f64,
    h: f64,
    prod: f64,
    leak_c: f64,
    p_atm: f64,
    k_v: f64,
    threshold: f64,
    sink: &mut (f64, f64, f64, f64),
) {
    for (m, s) in ms.iter().zip(st.iter_mut()) {
        s.control(m, *p, h);
    }
    let mut left = h;
    let mut events = 0;
    while left > 1e-12 {
        let supply: f64 = ms.iter().zip(st.iter()).map(|(m, s)| s.flow(m)).sum();
        let demand = (prod + leak_c * (*p + p_atm)).max(0.0);
        let r = k_v * (supply - demand);
        let mut tau = left;
        if events < MAX_EVENTS_PER_SUBSTEP {
            for (m, s) in ms.iter().zip(st.iter()) {
                tau = tau.min(s.event_time(m, *p, r));
            }
        }
        let tau = tau.max(0.0);
        let p0 = *p;
        let p1 = p0 + r * tau;
        let p_mid = 0.5 * (p0 + p1);
        for ((m, s), stt) in ms.iter().zip(st.iter_mut()).zip(stats.iter_mut()) {
            s.advance(m, p_mid, tau, stt);
        }
        sink.0 += p_mid * tau;
        // Time below the threshold: the pressure is a straight line over the interval.
        if tau > 0.0 {
            if p0 < threshold && p1 < threshold {
                sink.1 += tau;
            } else if (p0 < threshold) != (p1 < threshold) {
                let below = if p0 < threshold { threshold - p0 } else { threshold - p1 };
                sink.1 += tau * below / (p1 - p0).abs();
            }
        }
        sink.3 = sink.3.min(p0.min(p1));
        *p = p1;
        left -= tau;
        for ((m, s), stt) in ms.iter().zip(st.iter_mut()).zip(stats.iter_mut()) {
            s.transition(m, *p, stt);
        }
        events += 1;
    }
}

// ---------------------------------------------------------------------------------------------------
// Scenarios

struct Applied {
    specs: Vec<CompressorSpec>,
    order: Vec<usize>,
    volume_m3: f64,
    leak_keep: f64,
    target_bar_g: Option<f64>,
}

fn apply(input: &SimInput, scenario: &Scenario) -> Result<Applied, ScenarioError> {
    let mut specs: Vec<CompressorSpec> = input.compressors.to_vec();
    let mut order: Option<Vec<String>> = None;
    let mut added = 0.0;
    let mut keep = 1.0;
    let mut target = None;
    for (k, c) in scenario.changes.iter().enumerate() {
        let field = |f: &str| format!("changes[{k}].{f}");
        match c {
            Change::Remove { tag } => {
                let Some(i) = specs.iter().position(|s| &s.tag == tag) else {
                    return fail(field("tag"), format!("no compressor tagged {tag:?} to remove"));
                };
                specs.remove(i);
                if let Some(o) = order.as_mut() {
                    o.retain(|t| t != tag);
                }
            }
            Change::Add { compressor } => {
                let spec = compressor.to_spec(&field("compressor"))?;
                if specs.iter().any(|s| s.tag == spec.tag) {
                    return fail(
                        field("compressor.tag"),
                        format!("a compressor tagged {:?} exists", spec.tag),
                    );
                }
                specs.push(spec);
            }
            Change::SetPressure { target_bar_g } => {
                if !(target_bar_g.is_finite() && *target_bar_g > 0.0) {
                    return fail(
                        field("target_bar_g"),
                        format!("the target pressure must be above 0 bar(g), not {target_bar_g}"),
                    );
                }
                target = Some(*target_bar_g);
            }
            Change::AddStorage { volume_m3 } => {
                if !(volume_m3.is_finite() && *volume_m3 >= 0.0) {
                    return fail(
                        field("volume_m3"),
                        format!("the added volume must be 0 or more, not {volume_m3}"),
                    );
                }
                added += volume_m3;
            }
            Change::ReduceLeaks { fraction } => {
                if !(fraction.is_finite() && (0.0..=1.0).contains(fraction)) {
                    return fail(field("fraction"), format!("the fraction must lie in 0..1, not {fraction}"));
                }
                keep *= 1.0 - fraction;
            }
            Change::Sequence { order: o } => {
                for (j, t) in o.iter().enumerate() {
                    if !specs.iter().any(|s| &s.tag == t) {
                        return fail(
                            format!("changes[{k}].order[{j}]"),
                            format!("no compressor tagged {t:?}"),
                        );
                    }
                    if o[..j].contains(t) {
                        return fail(format!("changes[{k}].order[{j}]"), format!("{t:?} is listed twice"));
                    }
                }
                order = Some(o.clone());
            }
        }
    }
    let def = default_order(&specs);
    let order: Vec<usize> = match order {
        None => def,
        Some(o) => {
            let mut idx: Vec<usize> =
                o.iter().filter_map(|t| specs.iter().position(|s| &s.tag == t)).collect();
            idx.extend(def.into_iter().filter(|i| !o.contains(&specs[*i].tag)));
            idx
        }
    };
    let volume_m3 = input.storage.system_volume_m3() + added;
    Ok(Applied { specs, order, volume_m3, leak_keep: keep, target_bar_g: target })
}

fn min_required(plant: &Plant) -> f64 {
    plant.machines.iter().map(Machine::lowest_trigger).fold(f64::INFINITY, f64::min) - MIN_REQUIRED_MARGIN_BAR
}

/// Replay the logged period against the scenario's plant, beside the unchanged plant and the log.
pub fn run(input: &SimInput, scenario: &Scenario) -> Result<SimResult, ScenarioError> {
    let base_volume = input.storage.system_volume_m3();
    if !(base_volume.is_finite() && base_volume > 0.0) {
        return fail("storage", format!("the system volume must be above 0 m³, not {base_volume}"));
    }
    for (i, s) in input.compressors.iter().enumerate() {
        if !(s.rated_flow_m3_min > 0.0 && s.rated_power_kw > 0.0) {
            return fail(
                format!("compressors[{i}]"),
                format!("{}: rated flow and power must be above 0", s.tag),
            );
        }
    }
    let applied = apply(input, scenario)?;
    let demand = prepare_demand(input)?;
    let (implementation_cost, implementation_cost_source, implementation_cost_basis) =
        match scenario.implementation_cost {
            Some(c) if c.is_finite() && c >= 0.0 => (c, "given", vec![format!("quoted: {c:.0}")]),
            Some(c) => return fail("implementation_cost", format!("must be 0 or more, not {c}")),
            None => {
                let (c, lines) = default_cost(&scenario.changes, input.leak_flow_m3_min);
                (c, "default_estimate", lines)
            }
        };

    let base_plant = build_plant(input.compressors, &default_order(input.compressors), 0.0, base_volume, 1.0);
    let base_threshold = if base_plant.machines.is_empty() { 0.0 } else { min_required(&base_plant) };
    let base = simulate(&base_plant, &demand, base_threshold, false);

    let mean_p = |o: &Outcome| if o.simulated_s > 0.0 { o.p_integral / o.simulated_s } else { f64::NAN };
    let mk =
        |shift: f64| build_plant(&applied.specs, &applied.order, shift, applied.volume_m3, applied.leak_keep);
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
    if applied.specs.is_empty() {
        problems.push(format!("no compressor is left to meet the peak demand of {peak:.1} m³/min free air"));
    } else if peak > capacity * (1.0 + 1e-9) {
        problems.push(format!(
            "the compressors' total capacity of {capacity:.1} m³/min free air is below the peak demand of \
             {peak:.1} m³/min free air (1-minute mean), short by {:.1} m³/min",
            peak - capacity
        ));
    }
    if out.below_s > MAX_TIME_BELOW_S {
        problems.push(format!(
            "the header pressure was below {threshold:.2} bar(g) for {:.1} min: the plant does not hold its \
             control band",
            out.below_s / 60.0
        ));
    }
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
        implementation_cost,
        implementation_cost_source,
        implementation_cost_basis,
        supply_side_only: scenario.supply_side_only(),
        compressors,
        pressure_trace: out.trace,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::core::series::{Aligner, FrameColumn, Grid, Signal};
    use crate::core::states::tests::spec;
    use crate::core::units::{PressureAbs, ReferenceConditions};

    fn site() -> SiteAir {
        SiteAir::new(101.325, 20.0)
    }

    /// A frame with one system flow meter: `flow_m3_min(i)` per 10 s bin.
    fn flow_frame(hours: f64, flow_m3_min: impl Fn(usize) -> f64) -> Frame {
        let len = (hours * 360.0) as usize;
        let grid = Grid { start_ms: 1_700_000_000_000, step_ms: 10_000, len };
        let values = (0..len).map(|i| (flow_m3_min(i) / 60.0) as f32).collect();
        Frame {
            grid,
            columns: vec![FrameColumn {
                signal: Signal::Flow,
                compressor: None,
                label: "flow".into(),
                values,
            }],
        }
    }

    fn storage(v: f64) -> StorageSpec {
        StorageSpec { receivers_m3: vec![v], other_volume_m3: 0.0 }
    }

    fn as_is() -> Scenario {
        Scenario { name: "as is".into(), changes: vec![], implementation_cost: None }
    }

    fn run_plant(frame: &Frame, c: &[CompressorSpec], v: f64, leak: Option<f64>, sc: &Scenario) -> SimResult {
        let st = storage(v);
        let s = site();
        let input = SimInput { frame, compressors: c, storage: &st, site: &s, leak_flow_m3_min: leak };
        run(&input, sc).unwrap()
    }

    #[test]
    fn start_stop_against_constant_demand_cycles_as_the_receiver_equation_says() {
        // Receiver equation (FIELD-NOTES §5, bleed-down form V dp = p_atm Q dt): one start/stop machine,
        // Q_r = 10, Q_d = 4 m³/min, band 0.6 bar, V = 6 m³: t_on = V Δp / (p_atm (Q_r - Q_d)),
        // t_off = V Δp / (p_atm Q_d); duty Q_d / Q_r.
        let c = vec![spec("S", Control::StartStop, 60.0, 10.0)];
        let frame = flow_frame(24.0, |_| 4.0);
        let r = run_plant(&frame, &c, 6.0, None, &as_is());
        let p_atm_bar = 1.01325;
        let (qr, qd, dp, v) = (10.0 / 60.0, 4.0 / 60.0, BAND_BAR, 6.0);
        let t_on = v * dp / (p_atm_bar * (qr - qd));
        let t_off = v * dp / (p_atm_bar * qd);
        assert!(t_on > MIN_RUN_S, "the minimum run time must not bind in this check");
        let cph = 3600.0 / (t_on + t_off);
        let m = &r.compressors[0];
        assert!((m.cycles_per_hour - cph).abs() / cph < 0.02, "{} vs {cph}", m.cycles_per_hour);
        // Energy: duty × full power at the band's mean pressure (7 %/bar, FIELD-NOTES §6).
        let factor = 1.0 + POWER_PER_BAR * (-0.5 * BAND_BAR);
        let expected_kwh = 60.0 * factor * (qd / qr) * 24.0;
        assert!(
            (r.energy_kwh - expected_kwh).abs() / expected_kwh < 0.02,
            "{} vs {expected_kwh}",
            r.energy_kwh
        );
        assert!((m.loaded_hours / 24.0 - 0.4).abs() < 0.01);
        assert!(r.feasible, "{:?}", r.problems);
        // The unchanged plant is the baseline: no saving; no power logged: validation not computable.
        assert_eq!(r.energy_saving_kwh, 0.0);
        assert!(r.validation_error.is_nan());
        assert!(r.pressure_trace.len() <= TRACE_POINTS && r.pressure_trace.len() > 400);
        // API.md names: the result serializes with them, a NaN validation error as null.
        let j = serde_json::to_value(&r).unwrap();
        assert!(j["energy_kwh"].is_number() && j["min_pressure_bar_g"].is_number());
        assert!(j["validation_error"].is_null());
        assert!(j["compressors"][0]["cycles_per_hour"].is_number());
        assert!(j["pressure_trace"][0][1].is_number());
        // The trace holds bucket minima: the band's bottom (load pressure 7.5 - 0.6).
        assert!(r.pressure_trace.iter().all(|&(_, p)| (p - 6.9).abs() < 0.02));
    }

    #[test]
    fn doubling_storage_halves_cycles_per_hour() {
        // Receiver equation: t_on and t_off are both ∝ V.
        let c = vec![spec("S", Control::StartStop, 60.0, 10.0)];
        let frame = flow_frame(24.0, |_| 4.0);
        let one = run_plant(&frame, &c, 6.0, None, &as_is());
        let sc = Scenario {
            name: "receiver".into(),
            changes: vec![Change::AddStorage { volume_m3: 6.0 }],
            implementation_cost: None,
        };
        let two = run_plant(&frame, &c, 6.0, None, &sc);
        let ratio = two.compressors[0].cycles_per_hour / one.compressors[0].cycles_per_hour;
        assert!((ratio - 0.5).abs() < 0.01, "{ratio}");
        // Same air, same duty: energy within 0.5 %.
        assert!((two.energy_kwh - one.energy_kwh).abs() / one.energy_kwh < 0.005);
    }

    #[test]
    fn load_unload_mean_power_approaches_the_ideal_formula_with_blow_down_on_top() {
        // FIELD-NOTES §4: mean power = f + (1 - f) P_unl/P_full (ideal); blow-down makes it worse.
        let c = vec![spec("L", Control::LoadUnload, 55.0, 9.5)];
        let frame = flow_frame(12.0, |_| 3.8);
        let r = run_plant(&frame, &c, 10.0, None, &as_is());
        let f = 3.8 / 9.5;
        let ideal = 55.0 * (f + (1.0 - f) * 0.25);
        let loaded = r.compressors[0].loaded_hours / 12.0;
        assert!((loaded - f).abs() < 0.01, "{loaded}");
        assert!(r.mean_power_kw > ideal && r.mean_power_kw < ideal * 1.15, "{} vs {ideal}", r.mean_power_kw);
        // Never stopped while the demand holds: one start.
        assert_eq!(r.compressors[0].starts, 0);
    }

    #[test]
    fn a_plant_below_peak_demand_is_infeasible_and_names_the_shortfall() {
        let c = vec![spec("A", Control::LoadUnload, 75.0, 12.5), spec("B", Control::LoadUnload, 55.0, 9.2)];
        // 18 m³/min most of the time, one 10-minute peak of 24 m³/min: 2.3 m³/min short.
        let frame = flow_frame(4.0, |i| if (600..660).contains(&i) { 24.0 } else { 18.0 });
        let r = run_plant(&frame, &c, 7.5, None, &as_is());
        assert!(!r.feasible);
        assert!(r.problems[0].contains("24.0 m³/min"), "{:?}", r.problems);
        assert!(r.problems[0].contains("short by 2.3"), "{:?}", r.problems);
        // Over ten minutes 2.3 m³/min short empties the band: the pressure falls below the floor.
        assert!(r.time_below_min_required_s > 60.0);
        assert!(r.min_pressure_bar_g < r.min_required_pressure_bar_g);
    }

    #[test]
    fn removing_a_machine_that_carried_load_raises_the_others_energy() {
        let c = vec![
            spec("A", Control::LoadUnload, 55.0, 10.0),
            spec("B", Control::LoadUnload, 55.0, 10.0),
            spec("C", Control::LoadUnload, 55.0, 10.0),
        ];
        let frame = flow_frame(8.0, |i| 14.0 + 2.0 * ((i as f64) / 90.0).sin());
        let base = run_plant(&frame, &c, 7.5, None, &as_is());
        let b = base.compressors.iter().find(|m| m.tag == "B").unwrap();
        assert!(b.loaded_hours > 1.0, "B carried load: {b:?}");
        let sc = Scenario {
            name: "no B".into(),
            changes: vec![Change::Remove { tag: "B".into() }],
            implementation_cost: None,
        };
        let r = run_plant(&frame, &c, 7.5, None, &sc);
        assert!(r.feasible, "{:?}", r.problems);
        assert_eq!(r.compressors.len(), 2);
        let e = |r: &SimResult, t: &str| r.compressors.iter().find(|m| m.tag == t).unwrap().energy_kwh;
        // A is the base machine, fully loaded either way (demand 12-16 > 10 m³/min); C takes over B's
        // share, so C's energy rises by about B's loaded energy.
        assert!((e(&r, "A") - e(&base, "A")).abs() / e(&base, "A") < 1e-9);
        assert!(e(&r, "C") > e(&base, "C") + 0.5 * b.energy_kwh, "{} vs {}", e(&r, "C"), e(&base, "C"));
        // One machine fewer idling: the plant as a whole uses a little less, not more.
        assert!(r.energy_kwh < base.energy_kwh);
    }

    #[test]
    fn a_vsd_trim_added_to_a_load_unload_plant_saves_energy_at_part_load() {
        let c = vec![spec("L", Control::LoadUnload, 75.0, 12.5)];
        let frame = flow_frame(8.0, |i| 5.0 + 1.0 * ((i as f64) / 60.0).sin());
        let base = run_plant(&frame, &c, 3.0, None, &as_is());
        let vsd: AddedCompressor = serde_json::from_value(serde_json::json!({
            "tag": "V", "kind": "lubricated_screw", "control": "variable_speed", "cooling": "air",
            "rated_power_kw": 45, "rated_flow_m3_min": 7.6, "rated_pressure_bar_g": 7.5,
            "power_curve": [[2.0, 14.0], [3.4, 20.6], [4.8, 27.6], [6.2, 35.6], [7.6, 45.0]]
        }))
        .unwrap();
        let sc = Scenario {
            name: "vsd".into(),
            changes: vec![Change::Add { compressor: vsd }],
            implementation_cost: None,
        };
        let r = run_plant(&frame, &c, 3.0, None, &sc);
        assert!(r.feasible, "{:?}", r.problems);
        // The VSD carries the part load alone: ~5 m³/min at ~28-30 kW instead of L's ~48 kW.
        assert!(
            r.energy_saving_kwh > 0.25 * base.energy_kwh,
            "{} of {}",
            r.energy_saving_kwh,
            base.energy_kwh
        );
        let v = r.compressors.iter().find(|m| m.tag == "V").unwrap();
        assert!(v.loaded_hours > 7.5);
        // The VSD holds its setpoint: L's load pressure + 0.1 = 7.0 bar(g).
        assert!((r.mean_pressure_bar_g - 7.0).abs() < 0.05, "{}", r.mean_pressure_bar_g);
    }

    #[test]
    fn set_pressure_moves_the_mean_and_lower_leaks_save_through_the_part_load_curve() {
        let c = vec![spec("L", Control::LoadUnload, 75.0, 12.5), spec("S", Control::LoadUnload, 37.0, 6.0)];
        let frame = flow_frame(8.0, |i| 9.0 + 2.0 * ((i as f64) / 120.0).sin());
        let base = run_plant(&frame, &c, 5.0, Some(2.5), &as_is());
        let sc: Scenario = serde_json::from_str(
            r#"{"name": "6.5", "changes": [{"op": "set_pressure", "target_bar_g": 6.5}]}"#,
        )
        .unwrap();
        let r = run_plant(&frame, &c, 5.0, Some(2.5), &sc);
        assert!((r.mean_pressure_bar_g - 6.5).abs() < 0.03, "{}", r.mean_pressure_bar_g);
        assert!(r.energy_saving_kwh > 0.0);
        // Lower pressure: ~7 %/bar on loaded power plus leaks ∝ p_abs: a few % for ~0.5 bar.
        let share = r.energy_saving_kwh / base.energy_kwh;
        assert!(share > 0.02 && share < 0.10, "{share}");
        let half: Scenario = serde_json::from_str(
            r#"{"name": "leaks", "changes": [{"op": "reduce_leaks", "fraction": 0.5}]}"#,
        )
        .unwrap();
        let l = run_plant(&frame, &c, 5.0, Some(2.5), &half);
        // 1.25 m³/min less air at the load/unload marginal ~4.5 kW per m³/min: 40-60 kWh over 8 h.
        let kwh = l.energy_saving_kwh;
        assert!(kwh > 30.0 && kwh < 70.0, "{kwh}");
    }

    #[test]
    fn bad_changes_are_refused_with_their_field() {
        let c = vec![spec("A", Control::LoadUnload, 75.0, 12.5)];
        let frame = flow_frame(1.0, |_| 5.0);
        let st = storage(5.0);
        let s = site();
        let input =
            SimInput { frame: &frame, compressors: &c, storage: &st, site: &s, leak_flow_m3_min: None };
        let cases = [
            (r#"[{"op": "remove", "tag": "X"}]"#, "changes[0].tag"),
            (r#"[{"op": "sequence", "order": ["A", "Q"]}]"#, "changes[0].order[1]"),
            (r#"[{"op": "add_storage", "volume_m3": -1}]"#, "changes[0].volume_m3"),
            (r#"[{"op": "reduce_leaks", "fraction": 1.5}]"#, "changes[0].fraction"),
            (r#"[{"op": "set_pressure", "target_bar_g": 0}]"#, "changes[0].target_bar_g"),
            (r#"[{"op": "remove", "tag": "A"}, {"op": "remove", "tag": "A"}]"#, "changes[1].tag"),
        ];
        for (json, field) in cases {
            let changes: Vec<Change> = serde_json::from_str(json).unwrap();
            let e = run(&input, &Scenario { name: "bad".into(), changes, implementation_cost: None })
                .unwrap_err();
            assert_eq!(e.field, field, "{json}: {e}");
            assert!(!e.to_string().is_empty());
        }
    }

    #[test]
    fn long_gaps_are_skipped_and_short_ones_held() {
        let c = vec![spec("S", Control::StartStop, 60.0, 10.0)];
        // 2 h at 4 m³/min with one 60 s hole (held) and one 30 min hole (skipped).
        let frame =
            flow_frame(2.0, |i| if i == 100 || i == 101 || (300..480).contains(&i) { f64::NAN } else { 4.0 });
        let r = run_plant(&frame, &c, 6.0, None, &as_is());
        assert!((r.simulated_hours - 1.5).abs() < 1e-9, "{}", r.simulated_hours);
    }

    /// The demo plant's logger files aligned onto 10 s bins, as the ingest path would.
    #[test]
    fn default_cost_adds_up_the_documented_rates() {
        let vsd = AddedCompressor {
            tag: "V".into(),
            kind: CompressorKind::LubricatedScrew,
            control: Control::VariableSpeed,
            cooling: Cooling::Air,
            rated_power_kw: 30.0,
            rated_flow_m3_min: 5.0,
            rated_pressure_bar_g: 7.5,
            unloaded_power_fraction: None,
            power_curve: vec![],
            min_speed_fraction: None,
        };
        let changes = vec![
            Change::Remove { tag: "C1".into() },
            Change::Add { compressor: vsd },
            Change::AddStorage { volume_m3: 2.0 },
            Change::ReduceLeaks { fraction: 0.5 },
            Change::ReduceLeaks { fraction: 0.5 },
        ];
        let (c, lines) = default_cost(&changes, Some(4.0));
        // 30 kW x 550 + (1000 + 2 x 1500) + (1500 + 1000 x 4 x 0.75)
        assert_eq!(c, 16_500.0 + 4_000.0 + 4_500.0);
        assert_eq!(lines.len(), 4, "{lines:?}");
        let sc = Scenario { name: "x".into(), changes, implementation_cost: None };
        assert!(!sc.supply_side_only());
        let sc = Scenario {
            name: "y".into(),
            changes: vec![Change::Sequence { order: vec!["C2".into()] }],
            implementation_cost: None,
        };
        assert!(sc.supply_side_only());
        assert_eq!(default_cost(&sc.changes, None).0, costs::SEQUENCER);
    }

    fn demo_frame(plant: &crate::demo::DemoPlant) -> (Frame, SiteAir) {
        let t0: jiff::Timestamp = plant.truth.period_start.parse().unwrap();
        let t1: jiff::Timestamp = plant.truth.period_end.parse().unwrap();
        let (t0, t1) = (t0.as_millisecond(), t1.as_millisecond());
        let grid = Grid { start_ms: t0, step_ms: 10_000, len: ((t1 - t0) / 10_000) as usize };
        let site = SiteAir::new(plant.truth.atmospheric_pressure_kpa_abs, plant.site.inlet_temperature_c);
        let atm = site.atmosphere;
        // Power: `;`, decimal comma, 4 header lines, each value the mean of the 5 s ending at its row
        // (rows follow each other every interval from the period start; the default week has no DST
        // change), read as the value at the middle of its interval.
        let power = &plant.files[0];
        let mut al: Vec<Aligner> = (0..3).map(|_| Aligner::new(grid, 15_000)).collect();
        for (k, line) in power.csv.lines().skip(4).enumerate() {
            let f: Vec<&str> = line.split(';').collect();
            let t = t0 + (k as i64 + 1) * 5_000 - 2_500;
            for (a, v) in al.iter_mut().zip(&f[1..]) {
                a.push(t, v.replace(',', ".").parse::<f64>().unwrap() * 1000.0);
            }
        }
        let mut columns: Vec<FrameColumn> = al
            .into_iter()
            .enumerate()
            .map(|(i, a)| FrameColumn {
                signal: Signal::Power,
                compressor: Some(i),
                label: format!("C{} kW", i + 1),
                values: a.finish(),
            })
            .collect();
        // Header: RFC 3339 stamps 7 s fast (clock_offset_s), pressure instantaneous, flow the 10 s mean.
        let header = &plant.files[1];
        let offset_ms = header.mapping["clock_offset_s"].as_i64().unwrap() * 1000;
        let mut ap = Aligner::new(grid, 30_000);
        let mut aq = Aligner::new(grid, 30_000);
        for line in header.csv.lines().skip(1) {
            let f: Vec<&str> = line.split(',').collect();
            let t = f[0].parse::<jiff::Timestamp>().unwrap().as_millisecond() + offset_ms;
            ap.push(t, PressureAbs::from_bar_g(f[1].parse().unwrap(), atm).0);
            let nm3_h: f64 = f[2].parse().unwrap();
            aq.push(
                t - 5_000,
                site.free_air_from_reference(nm3_h / 3600.0, ReferenceConditions::NORMAL_DIN_1343),
            );
        }
        columns.push(FrameColumn {
            signal: Signal::Pressure,
            compressor: None,
            label: "p".into(),
            values: ap.finish(),
        });
        columns.push(FrameColumn {
            signal: Signal::Flow,
            compressor: None,
            label: "q".into(),
            values: aq.finish(),
        });
        (Frame { grid, columns }, site)
    }

    fn demo() -> &'static (crate::demo::DemoPlant, Frame, SiteAir) {
        static D: std::sync::OnceLock<(crate::demo::DemoPlant, Frame, SiteAir)> = std::sync::OnceLock::new();
        D.get_or_init(|| {
            let p = crate::demo::demo_plant();
            let (f, s) = demo_frame(&p);
            (p, f, s)
        })
    }

    fn demo_run(sc: &Scenario) -> SimResult {
        let (plant, frame, site) = demo();
        let st = StorageSpec {
            receivers_m3: plant.receivers.iter().map(|r| r.1).collect(),
            other_volume_m3: plant.other_volume_m3,
        };
        let input = SimInput {
            frame,
            compressors: &plant.compressors,
            storage: &st,
            site,
            leak_flow_m3_min: Some(plant.truth.leak_flow_at_7_bar_g_m3_min),
        };
        run(&input, sc).unwrap()
    }

    #[test]
    fn the_unchanged_demo_plant_reproduces_its_logged_energy_within_3_percent() {
        let r = demo_run(&as_is());
        let truth: f64 = demo().0.truth.energy_kwh_by_compressor.iter().map(|e| e.1).sum();
        eprintln!(
            "demo: sim {} kWh, logged {} kWh, truth {truth} kWh, err {}",
            r.energy_kwh, r.logged_energy_kwh, r.validation_error
        );
        for (m, t) in r.compressors.iter().zip(&demo().0.truth.energy_kwh_by_compressor) {
            eprintln!("  {m:?} truth {t:?}");
        }
        // Machine by machine against the demo simulation's own truth: the base and the trim within 2 %,
        // the standby (a few short runs at the peaks, most sensitive to the demand's timing) within 10 %.
        for (m, (tag, kwh)) in r.compressors.iter().zip(&demo().0.truth.energy_kwh_by_compressor) {
            assert_eq!(&m.tag, tag);
            let tol = if tag == "C2" { 0.10 } else { 0.02 };
            assert!((m.energy_kwh - kwh).abs() / kwh < tol, "{tag}: {} vs {kwh}", m.energy_kwh);
        }
        // The log itself holds the truth within 1 %.
        assert!((r.logged_energy_kwh - truth).abs() / truth < 0.01);
        // Issue's target: |validation error| < 3 %.
        assert!(r.validation_error.abs() < 0.03, "validation error {}", r.validation_error);
        assert!(r.feasible, "{:?}", r.problems);
        assert!((r.mean_pressure_bar_g - 7.0).abs() < 0.2, "{}", r.mean_pressure_bar_g);
    }

    #[test]
    fn demo_without_the_standby_cannot_meet_the_peaks() {
        let r = demo_run(&Scenario {
            name: "no C2".into(),
            changes: vec![Change::Remove { tag: "C2".into() }],
            implementation_cost: None,
        });
        assert!(!r.feasible, "{r:?}");
        assert!(r.problems.iter().any(|p| p.contains("capacity of 20.1")), "{:?}", r.problems);
    }

    /// Release timing: `cargo test --release -- --ignored --nocapture timing`.
    #[test]
    #[ignore]
    fn timing_a_week_at_10_s_and_a_year_at_1_s() {
        let c =
            vec![spec("A", Control::LoadUnload, 75.0, 12.5), spec("B", Control::LoadUnload, 55.0, 9.2), {
                let mut v = spec("V", Control::VariableSpeed, 45.0, 7.6);
                v.power_curve = vec![(2.0, 14.0), (4.8, 27.6), (7.6, 45.0)];
                v
            }];
        let week = flow_frame(168.0, |i| 12.0 + 6.0 * ((i as f64) / 500.0).sin());
        let t = std::time::Instant::now();
        let r = run_plant(&week, &c, 7.5, Some(2.4), &as_is());
        let dt = t.elapsed();
        eprintln!("week at 10 s ({} bins, baseline + scenario): {dt:?}, {} kWh", week.grid.len, r.energy_kwh);
        let len = 365 * 86_400;
        let grid = Grid { start_ms: 0, step_ms: 1_000, len };
        let values = (0..len).map(|i| ((12.0 + 6.0 * ((i as f64) / 5000.0).sin()) / 60.0) as f32).collect();
        let year = Frame {
            grid,
            columns: vec![FrameColumn { signal: Signal::Flow, compressor: None, label: "q".into(), values }],
        };
        let t = std::time::Instant::now();
        let r = run_plant(&year, &c, 7.5, Some(2.4), &as_is());
        eprintln!("year at 1 s ({len} bins, baseline + scenario): {:?}, {} kWh", t.elapsed(), r.energy_kwh);
    }
}
