/*!
The control case: the trim machine on a variable-speed curve, over 5-minute windows of its delivered
air, when it runs mostly at low load or two machines part-load at once (US DOE compressed-air
sourcebook: part-load behaviour by control). The audit's own variable-speed machine gives the curve if
it has one, else the typical curve of `states` at the trim's rating.

One part-load model (`core::partload`, issue 17): the air the trim delivered in a window is read
from its logged mean running power through the inverse of its own part-load model (load/unload on the storage on record, or the
assumed storage, with the band and blow-down its log showed or the defaults; modulation on its line;
start/stop on full specific power), so its blow-down energy is not read as air, nor a bin that holds
a transition read as all loaded (the states' air did both). The variable-speed
machine's power at that air is the partload model's (the data sheet's curve, idling below its lowest
point). The logged energy stays the logged energy.

*/

use crate::core::model::{CompressorSpec, Control};
use crate::core::partload::{self, fit::Calibration, PartLoadModel, Storage};
use crate::core::recommend::Part;
use crate::core::series::Grid;
use crate::core::states::State;

use super::baseline::CellSums;
use super::calendar::Calendar;
use super::machines::{self, Logged};
use super::DataSpec;

/// The control case with its logged and modelled power (W) as cell sums.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct ControlCells {
    pub logged: CellSums,
    pub modelled: CellSums,
    pub curve: String,
    /// The trim's own part-load model that read its air from its power, in words and figures.
    pub model: Vec<Part>,
    pub simultaneous_cycling_share: f64,
}

/// The control case of the trim machine `trim`, if it is worth modelling (module doc).
pub(super) fn control_case(
    grid: &Grid,
    spec: &DataSpec,
    logged: &Logged,
    cal: &Calendar,
    trim: Option<usize>,
    fits: &[Option<Calibration>],
) -> Option<ControlCells> {
    let (cs, system_volume_m3, atm) =
        (spec.compressors.as_slice(), spec.system_volume_m3, spec.air.atmosphere);
    let n = grid.len;
    let (powers, st, stats) = (&logged.powers, &logged.states, &logged.stats);
    let cells = &cal.cells;
    trim.and_then(|t| {
        let c = &cs[t];
        if c.control == Control::VariableSpeed {
            return None;
        }
        let (p, trim_states) = (powers[t]?, st[t].as_ref()?);
        let s = stats[t].as_ref()?;
        let simultaneous = {
            let lu: Vec<&Vec<State>> = cs
                .iter()
                .zip(st)
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
        let fit = fits.get(t).and_then(Option::as_ref);
        let (trim_m, sources) =
            machines::model_machine(c, logged.levels[t].as_ref(), fit, system_volume_m3, atm);
        let vsd_m = partload::Machine {
            spec: &vsd,
            full_kw: vsd.rated_power_kw,
            unloaded_fraction: vsd.unloaded_power_fraction,
            storage: Storage::of(system_volume_m3, vsd.rated_flow_m3_min, atm.bar_abs()),
            blowdown: partload::BlowDown::default(),
        };
        // Each 5-minute window: the trim's air from its mean running power through its model, then
        // the variable-speed machine's power at that air (W).
        let k = ((300.0 / grid.step_s()).round() as usize).max(1);
        let (mut air_sum, mut air_n) = (0.0, 0usize);
        let window_w: Vec<f32> = p
            .chunks(k)
            .zip(trim_states.chunks(k))
            .map(|(pw, sw)| {
                let (mut all, mut n_all, mut run, mut n_run) = (0.0f64, 0usize, 0.0f64, 0usize);
                for (&x, s) in pw.iter().zip(sw) {
                    if x.is_finite() {
                        all += x as f64;
                        n_all += 1;
                        if s.running() {
                            run += x as f64;
                            n_run += 1;
                        }
                    }
                }
                if n_all == 0 {
                    return f32::NAN;
                }
                let qm = match c.control {
                    Control::StartStop => trim_m.flow_at_power_m3_min(all / n_all as f64 / 1000.0),
                    _ if n_run == 0 => 0.0,
                    _ => {
                        trim_m.flow_at_power_m3_min(run / n_run as f64 / 1000.0) * n_run as f64 / n_all as f64
                    }
                };
                air_sum += qm;
                air_n += 1;
                let kw = if qm > 0.0 { vsd_m.power_at_flow_kw(qm) } else { 0.0 };
                (kw * 1000.0) as f32
            })
            .collect();
        let modelled = |b: usize| if p[b].is_finite() { window_w[b / k] } else { f32::NAN };
        let mean_air = if air_n > 0 { air_sum / air_n as f64 } else { 0.0 };
        let mut model = vec![Part::Words(format!(
            "{}'s air read from its logged power through its part-load model: ",
            c.tag
        ))];
        model.extend(PartLoadModel::of(&trim_m, mean_air, sources).with_calibration(fit).describe_parts());
        Some(ControlCells {
            logged: CellSums::of(cells, |b| p[b]),
            modelled: CellSums::of(cells, modelled),
            curve,
            model,
            simultaneous_cycling_share: simultaneous,
        })
    })
}
