//! The changed compressor room: a scenario's changes, checked and applied, and the plant it gives,
//! with each machine's control band (the module doc's "Control rules").

use serde::{Deserialize, Serialize};

use super::machine::Machine;
use super::{fail, ScenarioError, SimInput, BAND_BAR, MIN_REQUIRED_MARGIN_BAR, STAGGER_BAR};
use super::{VSD_ABOVE_LOAD_BAR, VSD_RESTART_BELOW_SETPOINT_BAR, VSD_STOP_ABOVE_SETPOINT_BAR};
use crate::core::model::{CompressorKind, CompressorSpec, Control, Cooling};
use crate::core::states;

// PI law of a variable-speed drive, scaled to its maximum flow (the demo drive's 20 m³/min per bar,
// 0.3 m³/min per bar s and 0.5 m³/min per s at 7.6 m³/min).
const VSD_KP_PER_BAR: f64 = 20.0 / 7.6;
const VSD_KI_PER_BAR_S: f64 = 0.3 / 7.6;
const VSD_RAMP_PER_S: f64 = 0.5 / 7.6;

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
    /// The installed cost, if quoted; otherwise [`default_cost`](super::default_cost) estimates it.
    #[serde(default)]
    pub implementation_cost: Option<f64>,
}

impl Scenario {
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

pub(super) fn min_required(plant: &Plant) -> f64 {
    plant.machines.iter().map(Machine::lowest_trigger).fold(f64::INFINITY, f64::min) - MIN_REQUIRED_MARGIN_BAR
}
