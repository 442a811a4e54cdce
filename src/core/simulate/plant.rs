//! The changed compressor room: a scenario's changes, checked and applied, and the plant it gives,
//! with each machine's control band (the module doc's "Control rules").
//!
//! # Accepted ranges
//!
//! [`Scenario::check`] refuses, naming the field (`changes[k].target_bar_g`), any number that is not
//! finite or lies outside its range; unknown fields are refused when the scenario is read.
//!
//! | value | range | why |
//! |---|---|---|
//! | `name` | 1 ..= 100 characters | a label |
//! | `changes` | at most [`MAX_CHANGES`] (100) | a scenario is a handful of changes; bounds the replay's set-up |
//! | `implementation_cost` | 0 ..= 1e12 | `recommend::MAX_IMPLEMENTATION_COST` |
//! | `set_pressure.target_bar_g` | above 0 ..= [`MAX_PRESSURE_BAR_G`] (50 bar(g)), and not below the plant's low limit (lowest rated pressure - 1 bar, `Scenario::check_plant_in`) | shop air and boosters (PET blowing at 40 bar(g)); common practice |
//! | `add_storage.volume_m3` | 0 ..= [`MAX_ADDED_STORAGE_M3`] (10 000 m³) | the system volume of the largest plants (common practice) |
//! | `reduce_leaks.fraction` | 0 ..= 1 | a share of the leak flow |
//! | `add.compressor.*` | as a compressor of the audit (`core::datasheet` table: one shape, one check) | same machines |

use serde::{Deserialize, Serialize};

use super::machine::Machine;
use super::{fail, ScenarioError, SimInput, BAND_BAR, MIN_REQUIRED_MARGIN_BAR, STAGGER_BAR};
use super::{VSD_ABOVE_LOAD_BAR, VSD_RESTART_BELOW_SETPOINT_BAR, VSD_STOP_ABOVE_SETPOINT_BAR};
use crate::core::entry::Entry;
use crate::core::model::{self, CompressorSpec, Control};
use crate::core::partload;
use crate::core::states;
use crate::core::units::UnitSystem;

// PI law of a variable-speed drive, scaled to its maximum flow (the demo drive's 20 m³/min per bar,
// 0.3 m³/min per bar s and 0.5 m³/min per s at 7.6 m³/min).
const VSD_KP_PER_BAR: f64 = 20.0 / 7.6;
const VSD_KI_PER_BAR_S: f64 = 0.3 / 7.6;
const VSD_RAMP_PER_S: f64 = 0.5 / 7.6;

/// Most changes in one scenario (module doc table).
pub const MAX_CHANGES: usize = 100;
/// Highest target or rated pressure, bar(g) (module doc table).
pub const MAX_PRESSURE_BAR_G: f64 = 50.0;
/// Most storage one change adds, m³ (module doc table).
pub const MAX_ADDED_STORAGE_M3: f64 = 10_000.0;

/// `v` if finite and within `lo..=hi` (above `lo` when `lo_open`), else a message saying so.
fn within(v: f64, lo: f64, lo_open: bool, hi: f64, unit: &str) -> Result<f64, String> {
    let low_ok = if lo_open { v > lo } else { v >= lo };
    if v.is_finite() && low_ok && v <= hi {
        return Ok(v);
    }
    let from = if lo_open { format!("above {lo}") } else { format!("{lo}") };
    Err(format!("must be a number from {from} to {hi}{unit}, not {v}"))
}

/// One what-if change (API.md).
#[derive(Deserialize, Serialize, Clone, Debug)]
#[serde(tag = "op", rename_all = "snake_case", deny_unknown_fields)]
pub enum Change {
    Remove { tag: String },
    Add { compressor: Box<AddedCompressor> },
    SetPressure { target_bar_g: f64 },
    AddStorage { volume_m3: f64 },
    ReduceLeaks { fraction: f64 },
    Sequence { order: Vec<String> },
}

/// A compressor added by a scenario: the one data-sheet shape of `core::datasheet`, as the audit's
/// compressors are posted.
pub use crate::core::datasheet::DataSheetInput as AddedCompressor;

/// The data-sheet description of an added machine; `field` prefixes the error's field name.
pub(super) fn added_spec(c: &AddedCompressor, field: &str) -> Result<CompressorSpec, ScenarioError> {
    added_spec_in(c, field, UnitSystem::Si)
}

/// [`added_spec`], a refusal quoting figures in `units`.
fn added_spec_in(
    c: &AddedCompressor,
    field: &str,
    units: UnitSystem,
) -> Result<CompressorSpec, ScenarioError> {
    c.validate_in(units)
        .map_err(|e| ScenarioError { field: format!("{field}.{}", e.field), message: e.message })
}

/// A named list of changes; no changes is the plant as it is.
#[derive(Deserialize, Serialize, Clone, Debug)]
#[serde(deny_unknown_fields)]
pub struct Scenario {
    pub name: String,
    #[serde(default)]
    pub changes: Vec<Change>,
    /// The installed cost, if quoted; otherwise [`default_cost`](super::default_cost) estimates it.
    #[serde(default)]
    pub implementation_cost: Option<f64>,
}

impl Scenario {
    /// The checks that need no plant: the name, the number of changes, the quoted cost and every
    /// number of every change within its range (module doc table). [`super::run`] calls it first.
    pub fn check(&self) -> Result<(), ScenarioError> {
        self.check_in(UnitSystem::Si)
    }

    /// [`Self::check`], a refusal quoting pressures, volumes and an added machine's figures in
    /// `units`, as the what-if form labelled them (`core::entry`).
    pub fn check_in(&self, units: UnitSystem) -> Result<(), ScenarioError> {
        let n = self.name.trim().chars().count();
        if n == 0 || n > 100 {
            return fail("name", "the scenario needs a name of 1 to 100 characters");
        }
        if self.changes.len() > MAX_CHANGES {
            return fail("changes", format!("at most {MAX_CHANGES} changes, not {}", self.changes.len()));
        }
        if let Some(c) = self.implementation_cost {
            crate::core::recommend::check_implementation_cost(c)
                .or_else(|m| fail("implementation_cost", m))?;
        }
        for (k, c) in self.changes.iter().enumerate() {
            let field = |f: &str| format!("changes[{k}].{f}");
            match c {
                Change::Add { compressor } => {
                    added_spec_in(compressor, &field("compressor"), units)?;
                }
                Change::SetPressure { target_bar_g } => {
                    within(*target_bar_g, 0.0, true, MAX_PRESSURE_BAR_G, " bar(g)").or_else(|_| {
                        let why = Entry::GaugePressure.out_of_range(
                            units,
                            *target_bar_g,
                            0.0,
                            true,
                            MAX_PRESSURE_BAR_G,
                        );
                        fail(field("target_bar_g"), format!("the target pressure {why}"))
                    })?;
                }
                Change::AddStorage { volume_m3 } => {
                    within(*volume_m3, 0.0, false, MAX_ADDED_STORAGE_M3, " m³").or_else(|_| {
                        let why =
                            Entry::Volume.out_of_range(units, *volume_m3, 0.0, false, MAX_ADDED_STORAGE_M3);
                        fail(field("volume_m3"), format!("the added volume {why}"))
                    })?;
                }
                Change::ReduceLeaks { fraction } => {
                    within(*fraction, 0.0, false, 1.0, "")
                        .or_else(|m| fail(field("fraction"), format!("the fraction {m}")))?;
                }
                Change::Remove { .. } | Change::Sequence { .. } => {}
            }
        }
        Ok(())
    }

    /// The checks against the plant on record: a target pressure below the plant's low limit (its
    /// lowest rated pressure less [`model::LOW_LIMIT_BELOW_RATED_BAR`], the floor the pressure
    /// measure keeps too) is refused, quoted in `units`.
    pub fn check_plant_in(
        &self,
        compressors: &[CompressorSpec],
        units: UnitSystem,
    ) -> Result<(), ScenarioError> {
        let Some(low) = model::low_limit_bar_g(compressors) else { return Ok(()) };
        for (k, c) in self.changes.iter().enumerate() {
            if let Change::SetPressure { target_bar_g } = c {
                if *target_bar_g < low {
                    return fail(
                        format!("changes[{k}].target_bar_g"),
                        format!(
                            "the target pressure must be at least the plant's low limit of {} (its lowest rated \
                             pressure less {}), got {}",
                            Entry::GaugePressure.lower_limit(units, low),
                            Entry::PressureDrop.limit(units, model::LOW_LIMIT_BELOW_RATED_BAR),
                            Entry::GaugePressure.said(units, *target_bar_g)
                        ),
                    );
                }
            }
        }
        Ok(())
    }

    /// Every refusal of [`Self::check_in`] and [`Self::check_plant_in`] at once, in `units`: the
    /// name, the number of changes, the quoted cost, every change's numbers (an added machine's
    /// every data-sheet field, `DataSheetInput::validate_all_in`) and a target pressure against
    /// the plant's low limit once it is a number in range. Empty when the scenario is right.
    pub fn refusals_in(&self, compressors: &[CompressorSpec], units: UnitSystem) -> Vec<ScenarioError> {
        let mut errs = Vec::new();
        let n = self.name.trim().chars().count();
        if n == 0 || n > 100 {
            errs.push(ScenarioError {
                field: "name".into(),
                message: "the scenario needs a name of 1 to 100 characters".into(),
            });
        }
        if self.changes.len() > MAX_CHANGES {
            errs.push(ScenarioError {
                field: "changes".into(),
                message: format!("at most {MAX_CHANGES} changes, not {}", self.changes.len()),
            });
            return errs;
        }
        if let Some(c) = self.implementation_cost {
            if let Err(m) = crate::core::recommend::check_implementation_cost(c) {
                errs.push(ScenarioError { field: "implementation_cost".into(), message: m });
            }
        }
        for (k, c) in self.changes.iter().enumerate() {
            let one = Scenario { name: "-".into(), changes: vec![c.clone()], implementation_cost: None };
            let prefix = |f: String| f.replacen("changes[0]", &format!("changes[{k}]"), 1);
            if let Change::Add { compressor } = c {
                if let Err(all) = compressor.validate_all_in(units) {
                    errs.extend(all.into_iter().map(|e| ScenarioError {
                        field: format!("changes[{k}].compressor.{}", e.field),
                        message: e.message,
                    }));
                }
                continue;
            }
            match one.check_in(units).and_then(|()| one.check_plant_in(compressors, units)) {
                Ok(()) => {}
                Err(e) => errs.push(ScenarioError { field: prefix(e.field), message: e.message }),
            }
        }
        errs
    }

    /// No set-point change and no leak repair: a change of the supply side alone (module doc).
    pub fn supply_side_only(&self) -> bool {
        !self.changes.iter().any(|c| matches!(c, Change::SetPressure { .. } | Change::ReduceLeaks { .. }))
    }
}

#[derive(Debug, Clone)]
pub(super) struct Plant {
    pub(super) machines: Vec<Machine>,
    pub(super) volume_m3: f64,
    pub(super) leak_keep: f64,
}

/// Bands from the order and a common shift (rules in the module doc).
pub(super) fn build_plant(
    specs: &[CompressorSpec],
    order: &[usize],
    shift_bar: f64,
    volume_m3: f64,
    keep: f64,
    blowdowns: &[(String, partload::BlowDown)],
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
            blowdown: blowdowns.iter().find(|(t, _)| *t == s.tag).map(|(_, b)| *b).unwrap_or_default(),
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
pub(super) fn default_order(specs: &[CompressorSpec]) -> Vec<usize> {
    let mut idx: Vec<usize> = (0..specs.len()).collect();
    idx.sort_by(|&a, &b| {
        let va = specs[a].control == Control::VariableSpeed;
        let vb = specs[b].control == Control::VariableSpeed;
        va.cmp(&vb).then(specs[b].rated_flow_m3_min.total_cmp(&specs[a].rated_flow_m3_min))
    });
    idx
}

pub(super) struct Applied {
    pub(super) specs: Vec<CompressorSpec>,
    pub(super) order: Vec<usize>,
    pub(super) volume_m3: f64,
    pub(super) leak_keep: f64,
    pub(super) target_bar_g: Option<f64>,
}

pub(super) fn apply(input: &SimInput, scenario: &Scenario) -> Result<Applied, ScenarioError> {
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
                let spec = added_spec(compressor, &field("compressor"))?;
                if specs.iter().any(|s| s.tag == spec.tag) {
                    return fail(
                        field("compressor.tag"),
                        format!("a compressor tagged {:?} exists", spec.tag),
                    );
                }
                specs.push(spec);
            }
            // Their ranges were checked by `Scenario::check`.
            Change::SetPressure { target_bar_g } => target = Some(*target_bar_g),
            Change::AddStorage { volume_m3 } => added += volume_m3,
            Change::ReduceLeaks { fraction } => keep *= 1.0 - fraction,
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

pub(super) fn min_required(plant: &Plant) -> f64 {
    plant.machines.iter().map(Machine::lowest_trigger).fold(f64::INFINITY, f64::min) - MIN_REQUIRED_MARGIN_BAR
}
