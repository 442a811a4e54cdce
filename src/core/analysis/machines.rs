/*!
The compressors one by one: each machine's logged power, its states and the flow they imply, its
energy, the trim machine and its marginal specific power, what the measures need of each machine, and
the per-compressor figures of the summary.

- **Energy and mean power**: each compressor's power column is integrated over its logged bins
  (`series::integrate_weighted`: a bin at a gap's edge counts for the time it was logged); system energy and mean power are the sums over compressors, so a gap in one
  logger does not drop the others.
- **Levels and states**: each machine's off, unloaded and loaded levels are found in its own power
  (`core::levels`); load/unload and start/stop machines are read on them.
- **Against the data sheet**: mean power while loaded, beside the data sheet's full-load power corrected
  to the mean pressure while loaded (its own discharge column, else the header) by the ratio of
  isentropic work (`thermo::power_at_pressure`); the replacement measure reads only this.
- **Load of a machine that follows demand by speed or capacity** (variable speed, modulation):
  its time loaded (at or above 95 % of full power) says little, as it runs at part capacity most of
  its running time; its figure is the mean capacity share, the free air it delivered (its own
  meter, else its states through its part-load curve) over its running hours against its rated
  free air delivery, beside those running hours (`CompressorFigures::mean_capacity_share`).
- **Trim machine**: a running variable-speed machine if there is one (a sequencer trims with it);
  otherwise the machine with the largest share of its running time unloaded or at part load.
*/

use crate::core::levels::{self, LevelSource, Levels};
use crate::core::model::{CompressorSpec, Control};
use crate::core::partload::{self, PartLoadModel, Storage};
use crate::core::recommend::MachineUse;
use crate::core::series::{integrate_weighted, sum_columns, Frame, Integral, Signal};
use crate::core::states::{self, State, StateStats};
use crate::core::thermo;
use crate::core::units::kw_per_100cfm;
use crate::core::units::{Power, PressureAbs, SiteAir};

use super::baseline::{AnnualRule, CellSums};
use super::calendar::Calendar;
use super::figures::{CompressorFigures, PowerSource};
use super::heat::CompressorHeat;
use super::uncertainty::{band, power_rel, Accuracy};
use super::DataFigures;

/// Each compressor's logged power, its states and the flow they imply (`None`: no power logged).
pub(super) struct Logged<'f> {
    pub powers: Vec<Option<&'f [f32]>>,
    pub states: Vec<Option<Vec<State>>>,
    pub est_flow: Vec<Option<Vec<f32>>>,
    pub stats: Vec<Option<StateStats>>,
    /// The levels found in each machine's own power (`core::levels`).
    pub levels: Vec<Option<Levels>>,
    /// The unloaded power the states were read on, W (the level found, `core::levels`).
    pub unloaded_w: Vec<Option<f64>>,
    /// Tags of the compressors without a power column.
    pub without_power: Vec<String>,
    /// Σ power of the compressors with a power column, W.
    pub total_power: Option<Vec<f32>>,
}

/// Per-compressor power, states and flow.
pub(super) fn logged<'f>(frame: &'f Frame, cs: &[CompressorSpec]) -> Logged<'f> {
    let grid = frame.grid;
    let n = grid.len;
    let powers: Vec<Option<&[f32]>> =
        (0..cs.len()).map(|i| frame.power_of(i).map(|c| c.values.as_slice())).collect();
    let found: Vec<Option<levels::Found>> =
        cs.iter().zip(&powers).map(|(c, p)| p.map(|p| levels::find(c, p))).collect();
    let st: Vec<Option<Vec<State>>> = found
        .iter()
        .zip(&powers)
        .map(|(f, p)| match (f, p) {
            (Some(f), Some(p)) => Some(states::classify_with(&f.thresholds, p)),
            _ => None,
        })
        .collect();
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
    let unloaded_w = found.iter().map(|f| f.as_ref().map(|f| f.thresholds.unloaded_w)).collect();
    let levels = found.into_iter().map(|f| f.map(|f| f.levels)).collect();
    Logged { powers, states: st, est_flow, stats, levels, unloaded_w, without_power, total_power }
}

/// Energy (kWh) and mean power (kW) of each compressor over its logged bins (0 without power).
#[derive(Debug, Clone, PartialEq)]
pub(super) struct MachineEnergy {
    pub energy_kwh: Vec<f64>,
    pub mean_kw: Vec<f64>,
}

/// Energy per compressor.
pub(super) fn energy(frame: &Frame, logged: &Logged) -> MachineEnergy {
    // Partly covered bins (a gap's edges) count for the time they were logged.
    let integ: Vec<Option<Integral>> = logged
        .powers
        .iter()
        .enumerate()
        .map(|(i, p)| {
            p.map(|p| {
                let partial = frame.power_of(i).map_or(&[][..], |c| c.partial.as_slice());
                integrate_weighted(&frame.grid, p, partial)
            })
        })
        .collect();
    let energy_kwh: Vec<f64> = integ.iter().map(|i| i.map_or(0.0, |i| i.total / 3.6e6)).collect();
    let mean_kw: Vec<f64> = integ
        .iter()
        .map(|i| i.map_or(0.0, |i| if i.mean.is_finite() { i.mean / 1000.0 } else { 0.0 }))
        .collect();
    MachineEnergy { energy_kwh, mean_kw }
}

/// Mean pressure of each compressor while loaded, bar(g): its own discharge pressure column if it
/// has one, else the header pressure, over its loaded bins (`None`: no loaded bin with pressure).
pub(super) fn loaded_pressure(frame: &Frame, logged: &Logged, atm: PressureAbs) -> Vec<Option<f64>> {
    logged
        .states
        .iter()
        .enumerate()
        .map(|(i, s)| {
            let s = s.as_ref()?;
            let own = frame.columns.iter().find(|c| c.signal == Signal::Pressure && c.compressor == Some(i));
            let p = own.or_else(|| frame.header_pressure())?;
            let (sum, n) = s
                .iter()
                .zip(&p.values)
                .filter(|(st, v)| **st == State::Loaded && v.is_finite())
                .fold((0.0, 0usize), |(a, n), (_, &v)| (a + v as f64, n + 1));
            (n > 0).then(|| PressureAbs(sum / n as f64).bar_g(atm))
        })
        .collect()
}

/// The data sheet's full-load power corrected to a pressure, kW (`thermo::power_at_pressure`, at
/// the site's inlet conditions).
pub(super) fn datasheet_power_at(c: &CompressorSpec, bar_g: f64, air: &SiteAir) -> f64 {
    let atm = air.atmosphere;
    thermo::power_at_pressure(
        Power::from_kw(c.rated_power_kw),
        PressureAbs::from_bar_g(c.rated_pressure_bar_g, atm),
        PressureAbs::from_bar_g(bar_g, atm),
        atm,
        air.inlet_temperature,
        c.stages,
    )
    .kw()
}

/// The trim machine (module doc).
pub(super) fn trim(cs: &[CompressorSpec], stats: &[Option<StateStats>]) -> Option<usize> {
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
}

/// The part-load model's machine for compressor `c` (`core::partload`), on the system volume on
/// record (0: none, the assumed storage stands in), with the band and blow-down its log showed
/// (`partload::fit`, else the defaults). A fixed-speed machine's full-load power and unloaded share
/// are the levels found in its own log (or the auditor's), else the data sheet's; where the fit read
/// the blow-down, the unloaded share is the level its decays settle to. Returns the sources
/// of the full power and the unloaded share.
pub(super) fn model_machine<'a>(
    c: &'a CompressorSpec,
    found: Option<&Levels>,
    fit: Option<&partload::fit::Calibration>,
    system_volume_m3: f64,
    atm: PressureAbs,
) -> (partload::Machine<'a>, (&'static str, &'static str)) {
    let found = found.filter(|l| l.loaded > 0.0);
    let fixed_speed = matches!(c.control, Control::LoadUnload | Control::StartStop);
    let (full_kw, full_src) = match found {
        Some(l) if fixed_speed && l.loaded_source != LevelSource::DataSheet => {
            (l.loaded, if l.loaded_source == LevelSource::User { "user" } else { "log" })
        }
        _ => (c.rated_power_kw, "data_sheet"),
    };
    let fitted_unloaded = fit.and_then(|f| f.blowdown.as_ref()).map(|b| b.unloaded_w / 1000.0);
    let (unloaded_fraction, unl_src) = match found {
        Some(l) if l.unloaded_source == LevelSource::User && l.unloaded > 0.0 => {
            ((l.unloaded / l.loaded).clamp(0.0, 1.0), "user")
        }
        // The level the fitted decays settle to: the histogram's unloaded mode sits on the
        // blow-down when the unloaded runs are too short to settle (`partload::fit`).
        Some(_) if fixed_speed && fitted_unloaded.is_some_and(|u| u > 0.0) => {
            (fitted_unloaded.map_or(0.0, |u| u / full_kw.max(1e-9)).clamp(0.0, 1.0), "log")
        }
        Some(l) if l.unloaded_source != LevelSource::DataSheet && l.unloaded > 0.0 => {
            ((l.unloaded / l.loaded).clamp(0.0, 1.0), "log")
        }
        _ => (c.unloaded_power_fraction, "data_sheet"),
    };
    let mut storage = Storage::of(system_volume_m3, c.rated_flow_m3_min, atm.bar_abs());
    let mut blowdown = partload::BlowDown::default();
    if let Some(f) = fit {
        if let Some(b) = &f.band {
            storage.band_bar = b.band_bar;
        }
        if let Some(b) = &f.blowdown {
            blowdown = b.blowdown;
        }
    }
    (partload::Machine { spec: c, full_kw, unloaded_fraction, storage, blowdown }, (full_src, unl_src))
}

/// The part-load model of compressor `i` at its logged operating point (`model_machine`). A
/// load/unload machine's load share is read from its mean running power through the inverse of the
/// same model (`partload::Machine::flow_at_power_m3_min`: its blow-down on its storage counted, so
/// the blow-down energy is not read as air; with no blow-down in its log, the linear inverse
/// `(P̄/P_full - u)/(1 - u)`), which bins as long as a load cycle do not bias, nor bins that hold a
/// transition (issue 17); the states' loaded share stands in where the power is not logged.
pub(super) fn part_load_model(d: &DataFigures, i: usize, system_volume_m3: f64) -> PartLoadModel {
    let c = &d.spec.compressors[i];
    let stats = d.stats[i].as_ref();
    let fit = d.fits.get(i).and_then(Option::as_ref);
    let (m, sources) = model_machine(c, d.levels[i].as_ref(), fit, system_volume_m3, d.spec.air.atmosphere);
    let running = stats.filter(|s| s.running_hours > 0.0 && s.off_fraction < 1.0);
    let states_share = |s: &StateStats| (s.loaded_fraction / (1.0 - s.off_fraction)).clamp(0.0, 1.0);
    let (q, src) = match (c.control, running) {
        (_, None) => (0.5 * c.rated_flow_m3_min, "assumed_half_load"),
        (Control::LoadUnload, Some(s)) => {
            let mean_running_kw = d.energy.mean_kw[i] / (1.0 - s.off_fraction);
            if mean_running_kw > 0.0 {
                (m.flow_at_power_m3_min(mean_running_kw), "power_through_model")
            } else {
                (states_share(s) * c.rated_flow_m3_min, "states")
            }
        }
        (Control::StartStop, Some(s)) => ((1.0 - s.off_fraction) * c.rated_flow_m3_min, "states"),
        (_, Some(s)) if d.air[i].air_m3 > 0.0 => (d.air[i].air_m3 / (s.running_hours * 60.0), "air"),
        _ => (0.5 * c.rated_flow_m3_min, "assumed_half_load"),
    };
    let mut model = PartLoadModel::of(&m, q, sources).with_calibration(fit);
    model.load_fraction_source = src.into();
    model
}

/// The band and blow-down each load/unload machine's log shows (`partload::fit`): its power on its
/// states, its own discharge pressure or else the header's (`None`: not load/unload, or no power).
pub(super) fn fits(
    frame: &Frame,
    cs: &[CompressorSpec],
    logged: &Logged,
) -> Vec<Option<partload::fit::Calibration>> {
    cs.iter()
        .enumerate()
        .map(|(i, c)| {
            if c.control != Control::LoadUnload {
                return None;
            }
            let (p, s, l) = (logged.powers[i]?, logged.states[i].as_ref()?, logged.levels[i].as_ref()?);
            let own = frame.columns.iter().find(|c| c.signal == Signal::Pressure && c.compressor == Some(i));
            let pressure = own.or_else(|| frame.header_pressure()).map(|c| c.values.as_slice());
            Some(partload::fit::calibrate(p, s, l.loaded * 1000.0, pressure, frame.grid.step_s()))
        })
        .collect()
}

/// The part-load model of the trim machine (of the first compressor without one): the curve and
/// storage behind the marginal specific power that prices leaks, artificial demand and pressure.
pub(super) fn trim_model(d: &DataFigures, system_volume_m3: f64) -> Option<PartLoadModel> {
    let i = d.trim.or((!d.spec.compressors.is_empty()).then_some(0))?;
    Some(part_load_model(d, i, system_volume_m3))
}

/// What the measures need from one compressor, with its annual figures as cell sums.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct MachineCells {
    /// Unloaded power out of production, W.
    idle: Option<CellSums>,
    /// Power above unloaded power, W.
    above: Option<CellSums>,
    /// 1 while loaded.
    loaded: Option<CellSums>,
    /// Power while delivering air (loaded or part load), W.
    delivering: Option<CellSums>,
    /// 1 while running out of production.
    running_np: Option<CellSums>,
    /// Power above unloaded power out of production, W.
    above_np: Option<CellSums>,
    loaded_fraction: f64,
    cycles_per_hour: f64,
    mean_loaded_power_kw: Option<f64>,
}

/// The shortest idle run of a variable-speed machine that counts as idling for the shut-off
/// measure, s (our judgement: longer than the few minutes a drive idles before it stops itself;
/// module doc of `recommend` on `shut_off_idle`).
pub const VSD_IDLE_RUN_S: f64 = 600.0;

/// Per compressor: the annualised figures the measures need. `step_s` is the grid's step.
///
/// Idling out of production is the power of the bins read as unloaded outside production. A
/// variable-speed machine has no unload state in normal running: at low demand it slows down
/// (part load: delivering air, never idling) and below its minimum speed it idles briefly and
/// stops itself; a bin read as unloaded is then most often a start or a stop inside the bin. Its
/// idling counts only in runs read as unloaded for at least [`VSD_IDLE_RUN_S`] (a drive held
/// idling by its settings); stopped with its drive powered, it reads as off and counts nothing.
pub(super) fn machine_cells(
    cs: &[CompressorSpec],
    logged: &Logged,
    cal: &Calendar,
    is_prod: &[bool],
    step_s: f64,
) -> Vec<MachineCells> {
    let cells = &cal.cells;
    let mut machines = Vec::new();
    for (i, c) in cs.iter().enumerate() {
        let s = logged.stats[i].as_ref();
        // Masked series for the measures: unloaded out of production, and power above idle.
        let unl_w = logged.unloaded_w[i].unwrap_or(c.unloaded_power_fraction * c.rated_power_kw * 1000.0);
        let (idle_np, above) = match (logged.powers[i], &logged.states[i]) {
            (Some(p), Some(sv)) => {
                let held: Option<Vec<bool>> = (c.control == Control::VariableSpeed).then(|| {
                    let min_bins = (VSD_IDLE_RUN_S / step_s.max(1e-9)).ceil().max(1.0) as usize;
                    states::sustained(sv, State::Unloaded, min_bins)
                });
                let idle = |k: usize| match sv[k] {
                    State::Unknown => f32::NAN,
                    State::Unloaded if !is_prod[k] && held.as_ref().is_none_or(|h| h[k]) => p[k],
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
                (Some(CellSums::of(cells, idle)), Some(CellSums::of(cells, above)))
            }
            _ => (None, None),
        };
        let loaded = logged.states[i].as_ref().map(|sv| {
            CellSums::of(cells, |k| match sv[k] {
                State::Unknown => f32::NAN,
                State::Loaded => 1.0,
                _ => 0.0,
            })
        });
        let delivering = match (logged.powers[i], &logged.states[i]) {
            (Some(p), Some(sv)) => Some(CellSums::of(cells, |k| match sv[k] {
                State::Unknown => f32::NAN,
                State::Loaded | State::PartLoad => p[k],
                _ => 0.0,
            })),
            _ => None,
        };
        let above_np = match (logged.powers[i], &logged.states[i]) {
            (Some(p), Some(sv)) => Some(CellSums::of(cells, |k| match sv[k] {
                State::Unknown => f32::NAN,
                x if x.running() && !is_prod[k] => (p[k] - unl_w as f32).max(0.0),
                _ if p[k].is_finite() => 0.0,
                _ => f32::NAN,
            })),
            _ => None,
        };
        let running_np = logged.states[i].as_ref().map(|sv| {
            CellSums::of(cells, |k| match sv[k] {
                State::Unknown => f32::NAN,
                x if x.running() && !is_prod[k] => 1.0,
                _ => 0.0,
            })
        });
        machines.push(MachineCells {
            idle: idle_np,
            above,
            loaded,
            delivering,
            running_np,
            above_np,
            loaded_fraction: s.map_or(0.0, |s| s.loaded_fraction),
            cycles_per_hour: s.map_or(0.0, |s| s.cycles_per_hour),
            mean_loaded_power_kw: s.and_then(|s| s.mean_loaded_power_kw),
        });
    }
    machines
}

/// The machines as the measures see them, annualised by `rule`.
pub(super) fn machine_uses(d: &DataFigures, rule: AnnualRule, annual_kwh_c: &[f64]) -> Vec<MachineUse> {
    d.machines
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
            datasheet_power_at_pressure_kw: d.loaded_pressure_bar_g[i]
                .map(|p| datasheet_power_at(&d.spec.compressors[i], p, &d.spec.air)),
            loaded_pressure_bar_g: d.loaded_pressure_bar_g[i],
            power_logged: d.power_logged[i],
            annual_delivering_kwh: m.delivering.as_ref().map_or(0.0, |c| c.annual(rule) / 1000.0),
            annual_running_non_production_hours: m.running_np.as_ref().map_or(0.0, |c| c.annual(rule)),
            annual_above_idle_non_production_kwh: m
                .above_np
                .as_ref()
                .map_or(0.0, |c| c.annual(rule) / 1000.0),
        })
        .collect()
}

/// The summary's figures of each compressor.
pub(super) fn compressor_figures(
    d: &DataFigures,
    acc: &Accuracy,
    annual_kwh_c: &[f64],
    heat: &[CompressorHeat],
    system_volume_m3: f64,
) -> Vec<CompressorFigures> {
    let cs = d.spec.compressors.as_slice();
    let energy_kwh = &d.energy.energy_kwh;
    let mut comp_fig = Vec::new();
    for (i, c) in cs.iter().enumerate() {
        let h = &heat[i];
        let a = &d.air[i];
        let (sp_c, estimated, full) = (a.specific_power, a.estimated, a.full_load);
        let rated = c.rated_specific_power_kw_per_m3_min();
        let loaded_p = d.loaded_pressure_bar_g[i];
        let ds_kw = loaded_p.map(|p| datasheet_power_at(c, p, &d.spec.air));
        let own = part_load_model(d, i, system_volume_m3);
        let (lo, hi) = band(energy_kwh[i], power_rel(acc, c));
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
            power_from_counter: d.power_from_counter.get(i).copied().unwrap_or(false),
            power_source: if acc.current_derived_power.contains(&c.tag) {
                PowerSource::CurrentDerived
            } else {
                PowerSource::TruePower
            },
            energy_kwh: energy_kwh[i],
            energy_kwh_low: lo,
            energy_kwh_high: hi,
            mean_power_kw: d.energy.mean_kw[i],
            annual_energy_kwh: Some(annual_kwh_c[i]),
            loaded_fraction: s0.loaded_fraction,
            part_load_fraction: s0.part_load_fraction,
            unloaded_fraction: s0.unloaded_fraction,
            off_fraction: s0.off_fraction,
            cycles_per_hour: s0.cycles_per_hour,
            logged_hours: s0.logged_hours,
            running_hours: s0.running_hours,
            loaded_hours: s0.loaded_hours,
            mean_capacity_share: mean_capacity_share(a.air_m3, c.rated_flow_m3_min, s0.running_hours),
            mean_loaded_power_kw: s0.mean_loaded_power_kw,
            mean_unloaded_power_kw: s0.mean_unloaded_power_kw,
            mean_loaded_time_s: s0.mean_loaded_time_s,
            mean_unloaded_time_s: s0.mean_unloaded_time_s,
            air_m3: a.air_m3,
            specific_power_kw_per_m3_min: sp_c,
            specific_power_kw_per_100cfm: sp_c.map(kw_per_100cfm),
            estimated,
            full_load_specific_power_kw_per_m3_min: full,
            rated_specific_power_kw_per_m3_min: rated,
            loaded_power_kw: s0.mean_loaded_power_kw,
            loaded_pressure_bar_g: loaded_p,
            datasheet_power_at_pressure_kw: ds_kw,
            loaded_power_vs_datasheet_percent: s0
                .mean_loaded_power_kw
                .zip(ds_kw)
                .map(|(p, ds)| (p / ds - 1.0) * 100.0),
            levels_kw: d.levels[i].clone(),
            marginal_kw_per_m3_min: own.marginal_kw_per_m3_min,
            pressure_band_bar: own.calibration_note.as_ref().and(own.pressure_band_bar),
            blowdown_tau_s: own.calibration_note.as_ref().and(own.blowdown_tau_s),
            calibration_note: own.calibration_note.clone(),
            trim: d.trim == Some(i),
            heat_rejected_kwh: h.rejected_kwh,
            recoverable_kwh: h.recoverable_kwh,
            annual_heat_rejected_kwh: Some(h.annual_rejected_kwh),
            annual_recoverable_kwh: Some(h.annual_recoverable_kwh),
        });
    }
    comp_fig
}

/// The free air delivered over the running hours against the rated free air delivery: `air_m3 /
/// (rated_flow_m3_min × 60 × running_hours)` (`None` when it never ran or has no rating).
pub(super) fn mean_capacity_share(air_m3: f64, rated_flow_m3_min: f64, running_hours: f64) -> Option<f64> {
    (running_hours > 0.0 && rated_flow_m3_min > 0.0 && air_m3.is_finite())
        .then(|| air_m3 / (rated_flow_m3_min * 60.0 * running_hours))
}

/// Air-weighted specific power of the machines with logged power at full load, at the pressure each
/// ran loaded at (else the mean header pressure, else its rating), kW/(m³/min): Σ air_i × P_sheet,i(p_i)
/// / Q_rated,i over Σ air_i.
pub(super) fn full_load_specific_power_at_pressure(d: &DataFigures) -> Option<f64> {
    let (mut num, mut den) = (0.0, 0.0);
    for (i, c) in d.spec.compressors.iter().enumerate() {
        let air = d.air[i].air_m3;
        if !(d.power_logged[i] && air > 0.0 && c.rated_flow_m3_min > 0.0) {
            continue;
        }
        let p = d.loaded_pressure_bar_g[i].or(d.pressure.mean_bar_g).unwrap_or(c.rated_pressure_bar_g);
        num += air * datasheet_power_at(c, p, &d.spec.air) / c.rated_flow_m3_min;
        den += air;
    }
    (den > 0.0 && num.is_finite()).then(|| num / den)
}
