//! A second invented plant, not the demo's: its own machines, bands, storage, demand and its own
//! blow-down, start and run-on constants, stepped in time here by a generator written apart from the
//! replay's engine. The unchanged replay must reproduce the energy it logs within 3 % (issue 17).
//!
//! The plant (invented for this test): a packaging hall at 420 m with two lubricated load/unload
//! screws, K1 90 kW / 15.5 m³/min and K2 45 kW / 7.4 m³/min, both rated 7.0 bar(g), on 3.2 m³ of
//! storage (about 3 US gal/cfm of K2), two shifts on weekdays and leaks at night.

use super::*;
use crate::core::levels;
use crate::core::model::Control;
use crate::core::series::{FrameColumn, Grid, Signal};
use crate::core::states::tests::spec;
use crate::core::units::PressureAbs;

/// The plant's own constants (not the replay's defaults).
const DT_S: f64 = 0.25;
const VOLUME_M3: f64 = 3.2;
/// Package power per bar above rated: 1 % per 2 psi (US DOE sourcebook) is 0.0725 per bar.
const POWER_PER_BAR_TRUE: f64 = 0.0725;

struct TrueMachine {
    kw: f64,
    q_m3_min: f64,
    rated_bar_g: f64,
    unl: f64,
    blow_start: f64,
    blow_tau_s: f64,
    start_s: f64,
    run_on_s: f64,
    load_bar_g: f64,
    unload_bar_g: f64,
    // State: 0 off, 1 starting, 2 loaded, 3 unloaded; timer.
    mode: u8,
    t: f64,
}

impl TrueMachine {
    /// One step at pressure p: (free air m³/s delivered, kW drawn).
    fn step(&mut self, p: f64) -> (f64, f64) {
        match self.mode {
            0 => {
                if p < self.load_bar_g {
                    self.mode = 1;
                    self.t = 0.0;
                }
                (0.0, 0.0)
            }
            1 => {
                self.t += DT_S;
                if self.t >= self.start_s {
                    self.mode = 2;
                }
                (0.0, self.kw * self.unl)
            }
            2 => {
                if p >= self.unload_bar_g {
                    self.mode = 3;
                    self.t = 0.0;
                }
                (self.q_m3_min / 60.0, self.kw * (1.0 + POWER_PER_BAR_TRUE * (p - self.rated_bar_g)))
            }
            _ => {
                let mid = self.t + 0.5 * DT_S;
                let share = self.unl + (self.blow_start - self.unl) * (-mid / self.blow_tau_s).exp();
                self.t += DT_S;
                if p < self.load_bar_g {
                    self.mode = 2;
                } else if self.t >= self.run_on_s {
                    self.mode = 0;
                }
                (0.0, self.kw * share)
            }
        }
    }
}

/// A small deterministic noise source (xorshift), so the plant is the same at every run.
struct Noise(u64);
impl Noise {
    fn uniform(&mut self) -> f64 {
        self.0 ^= self.0 << 13;
        self.0 ^= self.0 >> 7;
        self.0 ^= self.0 << 17;
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
}

/// Three days (Wednesday to Friday night) logged on 10 s bins: each machine's power, the header
/// pressure and the demand at the flow meter.
fn plant_b_frame(site: &SiteAir) -> Frame {
    plant_b_frame_at(site, 10.0)
}

/// The same three days logged on bins of `bin_s` (a whole number of the generator's steps).
fn plant_b_frame_at(site: &SiteAir, bin_s: f64) -> Frame {
    let atm_bar = site.atmosphere.bar_abs();
    let mut k = [
        TrueMachine {
            kw: 90.0,
            q_m3_min: 15.5,
            rated_bar_g: 7.0,
            unl: 0.28,
            blow_start: 0.58,
            blow_tau_s: 26.0,
            start_s: 6.0,
            run_on_s: 420.0,
            load_bar_g: 6.45,
            unload_bar_g: 7.0,
            mode: 0,
            t: 0.0,
        },
        TrueMachine {
            kw: 45.0,
            q_m3_min: 7.4,
            rated_bar_g: 7.0,
            unl: 0.22,
            blow_start: 0.6,
            blow_tau_s: 15.0,
            start_s: 10.0,
            run_on_s: 300.0,
            load_bar_g: 6.25,
            unload_bar_g: 6.85,
            mode: 0,
            t: 0.0,
        },
    ];
    let hours = 72.0;
    let bin_steps = (bin_s / DT_S) as usize;
    let n = (hours * 3600.0 / bin_s) as usize;
    let mut noise = Noise(0x9e37_79b9_7f4a_7c15);
    let mut p = 6.7;
    let mut slow = 0.0;
    let leak_at_7 = 3.1 / 60.0; // m³/s free air at 7 bar(g), choked: ∝ p_abs
    let mut cols: [Vec<f32>; 4] = Default::default();
    for i in 0..n {
        let (mut e, mut pp, mut qd) = ([0.0f64; 2], 0.0, 0.0);
        let hour = (i as f64 * bin_s / 3600.0) % 24.0;
        let base = if (6.0..22.0).contains(&hour) {
            if (12.0..12.5).contains(&hour) {
                9.0
            } else {
                13.5 + 2.5 * (hour * 0.7).sin()
            }
        } else {
            0.6
        } / 60.0;
        for _ in 0..bin_steps {
            slow += -slow * DT_S / 300.0
                + 0.8 / 60.0 * (2.0 * DT_S / 300.0f64).sqrt() * (noise.uniform() - 0.5) * 3.46;
            let burst = if noise.uniform() < DT_S / 90.0 { 4.0 / 60.0 } else { 0.0 };
            let prod = (base + slow).max(0.0) + burst;
            let demand = prod + leak_at_7 * (p + atm_bar) / (7.0 + atm_bar);
            let mut supply = 0.0;
            for (j, m) in k.iter_mut().enumerate() {
                let (q, kw) = m.step(p);
                supply += q;
                e[j] += kw * DT_S;
            }
            p += atm_bar / VOLUME_M3 * (supply - demand) * DT_S;
            pp += p * DT_S;
            qd += demand * DT_S;
        }
        cols[0].push((e[0] / bin_s * 1000.0) as f32);
        cols[1].push((e[1] / bin_s * 1000.0) as f32);
        cols[2].push(PressureAbs::from_bar_g(pp / bin_s, site.atmosphere).0 as f32);
        cols[3].push((qd / bin_s) as f32);
    }
    let col = |signal, compressor, label: &str, values| FrameColumn {
        from_counter: false,
        point: Default::default(),
        signal,
        compressor,
        label: label.into(),
        values,
        partial: vec![],
    };
    let [k1, k2, pr, q] = cols;
    Frame {
        grid: Grid { start_ms: 1_789_000_000_000, step_ms: (bin_s * 1000.0) as i64, len: n },
        columns: vec![
            col(Signal::Power, Some(0), "K1 kW", k1),
            col(Signal::Power, Some(1), "K2 kW", k2),
            col(Signal::Pressure, None, "header", pr),
            col(Signal::Flow, None, "flow", q),
        ],
    }
}

fn plant_b_specs() -> Vec<CompressorSpec> {
    let mut k1 = spec("K1", Control::LoadUnload, 90.0, 15.5);
    let mut k2 = spec("K2", Control::LoadUnload, 45.0, 7.4);
    for (c, unl) in [(&mut k1, 0.28), (&mut k2, 0.22)] {
        c.rated_pressure_bar_g = 7.0;
        c.unloaded_power_fraction = unl;
        c.no_load_power_kw = Some(unl * c.rated_power_kw);
    }
    vec![k1, k2]
}

#[test]
fn a_second_invented_plant_is_replayed_within_3_percent_of_its_logged_energy() {
    let site = SiteAir::new(96.4, 15.0);
    let frame = plant_b_frame(&site);
    let specs = plant_b_specs();
    let storage = StorageSpec { receivers_m3: vec![2.5], other_volume_m3: 0.7 };
    let input = SimInput {
        frame: &frame,
        compressors: &specs,
        storage: &storage,
        site: &site,
        leak_flow_m3_min: None,
        pressure_credible: true,
    };
    let r =
        run(&input, &Scenario { name: "as is".into(), changes: vec![], implementation_cost: None }).unwrap();
    // The log's own energy: the sum of the generated power bins.
    let logged_kwh: f64 =
        frame.columns[..2].iter().flat_map(|c| c.values.iter()).map(|&w| w as f64 * 10.0 / 3.6e6).sum();
    assert!(
        (r.logged_energy_kwh - logged_kwh).abs() / logged_kwh < 1e-6,
        "{} vs {logged_kwh}",
        r.logged_energy_kwh
    );
    eprintln!(
        "plant B: replay {} kWh, logged {} kWh, validation error {:+.4}; {:?}",
        r.energy_kwh, r.logged_energy_kwh, r.validation_error, r.compressors
    );
    // Issue 17's target on plants other than the demo: |validation error| < 3 %.
    assert!(r.validation_error.abs() < 0.03, "validation error {}", r.validation_error);
    assert!(r.feasible, "{:?}", r.problems);
    // Both machines worked: K1 cycles all day, K2 starts for the shifts and stops at night.
    assert!(r.compressors.iter().all(|c| c.loaded_hours > 1.0), "{:?}", r.compressors);

    // Without the flow meter the demand comes from the machines' states on the levels found in their
    // own power, less the air stored (module doc "Demand"): still within 3 %.
    let no_meter = Frame { grid: frame.grid, columns: frame.columns[..3].to_vec() };
    let input = SimInput { frame: &no_meter, ..input };
    let r =
        run(&input, &Scenario { name: "as is".into(), changes: vec![], implementation_cost: None }).unwrap();
    eprintln!("plant B without a flow meter: validation error {:+.4}", r.validation_error);
    assert!(r.validation_error.abs() < 0.03, "validation error {}", r.validation_error);
}

#[test]
fn a_wrong_unloaded_power_on_the_data_sheet_is_calibrated_where_the_log_settles() {
    // K2's data sheet says 35 % unloaded; plant B runs it unloaded at 22 % of rated (the generator's
    // constant), in long unloaded runs between the shifts' peaks. Its settled unloaded bins give the
    // plant's own figure back. K1 cycles in seconds and never settles in 10 s bins: it keeps its sheet.
    let site = SiteAir::new(96.4, 15.0);
    let frame = plant_b_frame(&site);
    let mut specs = plant_b_specs();
    specs[1].unloaded_power_fraction = 0.35;
    specs[1].no_load_power_kw = None;
    let storage = StorageSpec { receivers_m3: vec![2.5], other_volume_m3: 0.7 };
    let input = SimInput {
        frame: &frame,
        compressors: &specs,
        storage: &storage,
        site: &site,
        leak_flow_m3_min: None,
        pressure_credible: true,
    };
    let r =
        run(&input, &Scenario { name: "as is".into(), changes: vec![], implementation_cost: None }).unwrap();
    eprintln!("plant B, K2's sheet wrong: validation error {:+.4}; {:?}", r.validation_error, r.calibration);
    assert_eq!(r.calibration.len(), 1, "{:?}", r.calibration);
    let line = &r.calibration[0];
    assert!(line.starts_with("K2"), "{line}");
    let got: f64 = line.split("unloaded power ").nth(1).unwrap().split(' ').next().unwrap().parse().unwrap();
    // Within 0.2 kW of 0.22 × 45 kW: the blow-down left after 3 τ is 5 % of (b - u) at most.
    assert!((got - 0.22 * 45.0).abs() < 0.2, "K2: {got} kW vs {} kW", 0.22 * 45.0);
    assert!(r.validation_error.abs() < 0.03, "validation error {}", r.validation_error);
}

#[test]
fn plant_bs_own_bands_and_blow_downs_come_back_from_its_2_s_log_and_not_from_its_10_s_one() {
    // Plant B's generator has its own constants (K1: band 6.45 -> 7.0 bar(g), blow-down from 0.58 of
    // 90 kW with τ = 26 s; K2: 6.25 -> 6.85 bar(g), from 0.60 of 45 kW with τ = 15 s), none of them
    // the model's defaults. Logged at 2 s (under τ/2 of both), `partload::fit` reads them back from
    // each machine's power on its states and the header pressure.
    let site = SiteAir::new(96.4, 15.0);
    let frame = plant_b_frame_at(&site, 2.0);
    let specs = plant_b_specs();
    let pressure = frame.header_pressure().map(|c| c.values.as_slice());
    // (kW, start, τ s, band bar) of each machine, as the generator above has them.
    for (i, (kw, start, tau, band)) in
        [(90.0, 0.58, 26.0, 0.55), (45.0, 0.60, 15.0, 0.60)].into_iter().enumerate()
    {
        let p = &frame.power_of(i).unwrap().values;
        let found = levels::find(&specs[i], p);
        let st = crate::core::states::classify_with(&found.thresholds, p);
        let loaded_w = found.levels.loaded * 1000.0;
        let c = crate::core::partload::fit::calibrate(p, &st, loaded_w, pressure, 2.0);
        eprintln!("plant B {}: {}", specs[i].tag, c.note);
        let bd = c.blowdown.unwrap_or_else(|| panic!("{}: {}", specs[i].tag, c.note));
        // τ within 10 %; the start, in kW, within 4 % of full power (the loaded level found moves
        // with pressure, 1 % per 2 psi); the band within 0.05 bar.
        assert!(
            (bd.blowdown.tau_s - tau).abs() / tau < 0.10,
            "{}: τ {} vs {tau}",
            specs[i].tag,
            bd.blowdown.tau_s
        );
        let start_kw = bd.blowdown.start_fraction * loaded_w / 1000.0;
        assert!(
            (start_kw - start * kw).abs() < 0.04 * kw,
            "{}: start {start_kw} kW vs {}",
            specs[i].tag,
            start * kw
        );
        let b = c.band.unwrap_or_else(|| panic!("{}: {}", specs[i].tag, c.note));
        assert!((b.band_bar - band).abs() < 0.05, "{}: band {} vs {band}", specs[i].tag, b.band_bar);
    }
    // The 10 s log of the same plant: K2's decay, τ = 15 s, spans under two intervals: the fit is
    // refused, the blow-down assumed, and said so.
    let coarse = plant_b_frame(&site);
    let p = &coarse.power_of(1).unwrap().values;
    let found = levels::find(&specs[1], p);
    let st = crate::core::states::classify_with(&found.thresholds, p);
    let c = crate::core::partload::fit::calibrate(p, &st, found.levels.loaded * 1000.0, None, 10.0);
    eprintln!("plant B K2 at 10 s: {}", c.note);
    assert!(c.blowdown.is_none() && c.note.contains("outside 2 intervals"), "{}", c.note);
    assert!(c.note.contains("band assumed: no pressure logged"), "{}", c.note);
}

#[test]
fn the_replay_runs_each_machine_on_the_blow_down_its_own_log_shows() {
    // Plant B logged at 2 s: K1 blows down with τ = 26 s, K2 with τ = 15 s (the generator's own
    // constants, not the model's 20 s). The replay takes the blow-down `partload::fit` reads from
    // each machine's log, says so in its calibration, and stays within issue 17's 3 % (measured on
    // 2026-12-04: +0.38 %, against +1.19 % when the same log was replayed on the default 20 s).
    let site = SiteAir::new(96.4, 15.0);
    let frame = plant_b_frame_at(&site, 2.0);
    let specs = plant_b_specs();
    let storage = StorageSpec { receivers_m3: vec![2.5], other_volume_m3: 0.7 };
    let input = SimInput {
        frame: &frame,
        compressors: &specs,
        storage: &storage,
        site: &site,
        leak_flow_m3_min: None,
        pressure_credible: true,
    };
    let r =
        run(&input, &Scenario { name: "as is".into(), changes: vec![], implementation_cost: None }).unwrap();
    eprintln!("plant B at 2 s: validation error {:+.4}; {:?}", r.validation_error, r.calibration);
    for (tag, tau) in [("K1", 26.0), ("K2", 15.0)] {
        let line = r
            .calibration
            .iter()
            .find(|l| l.starts_with(&format!("{tag}: blow-down from its log")))
            .unwrap_or_else(|| panic!("{tag} not calibrated: {:?}", r.calibration));
        let fitted: f64 = line.rsplit("τ = ").next().unwrap().trim_end_matches(" s").parse().unwrap();
        assert!((fitted - tau).abs() / tau < 0.10, "{line}");
    }
    assert!(r.validation_error.abs() < 0.03, "validation error {}", r.validation_error);
}
