/*!
The control case: the trim machine on a variable-speed curve, over 5-minute windows of its delivered
air, when it runs mostly at low load or two machines part-load at once (US DOE compressed-air
sourcebook: part-load behaviour by control). The audit's own variable-speed machine gives the curve if
it has one, else the typical curve of `states` at the trim's rating.
*/

use crate::core::model::{CompressorSpec, Control};
use crate::core::series::Grid;
use crate::core::states::{self, State};

use super::baseline::CellSums;
use super::calendar::Calendar;
use super::machines::Logged;

/// The control case with its logged and modelled power (W) as cell sums.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct ControlCells {
    pub logged: CellSums,
    pub modelled: CellSums,
    pub curve: String,
    pub simultaneous_cycling_share: f64,
}

/// The control case of the trim machine `trim`, if it is worth modelling (module doc).
pub(super) fn control_case(
    grid: &Grid,
    cs: &[CompressorSpec],
    logged: &Logged,
    cal: &Calendar,
    trim: Option<usize>,
) -> Option<ControlCells> {
    let n = grid.len;
    let (powers, st, est_flow, stats) = (&logged.powers, &logged.states, &logged.est_flow, &logged.stats);
    let cells = &cal.cells;
    trim.and_then(|t| {
        let c = &cs[t];
        if c.control == Control::VariableSpeed {
            return None;
        }
        let (p, q) = (powers[t]?, est_flow[t].as_ref()?);
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
            logged: CellSums::of(cells, |b| p[b]),
            modelled: CellSums::of(cells, modelled),
            curve,
            simultaneous_cycling_share: simultaneous,
        })
    })
}
