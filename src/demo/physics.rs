//! The deterministic simulation: the two load/unload machines, the variable-speed trim, the demand,
//! the receiver equation, and the loggers fed at every step (the module doc's "The physics").

use super::calendar::{
    berlin_local, period_start_unix_s, production_base_m3_min, rfc3339_utc, weekday_monday0,
};
use super::files::Loggers;
use super::noise::Rng;
use super::plant::{atmosphere_kpa, compressors, notes, site, ALTITUDE_M, INLET_C};
use super::plant::{LEAK_AT_7_BAR_G_M3_MIN, OTHER_VOLUME_M3, RECEIVER_M3};
use super::{DemoOptions, DemoPlant, DemoTruth};
use crate::core::units::{PressureAbs, SiteAir};

/// Internal integration step, s.
const DT_S: f64 = 0.5;
/// Package power changes by this fraction per bar of discharge pressure (US DOE, *Improving Compressed
/// Air System Performance: A Sourcebook for Industry*: about 1 % per 2 psi).
const POWER_PER_BAR: f64 = 0.07;
/// Controller power of a stopped package, kW (common practice).
const STANDBY_KW: f64 = 0.1;

// ---------------------------------------------------------------------------------------------------
// Compressors

#[derive(Debug, Clone, Copy, PartialEq)]
enum LuState {
    Off,
    Starting { remaining_s: f64 },
    Loaded,
    Unloaded { since_s: f64 },
}

struct LoadUnload {
    rated_kw: f64,
    rated_flow_m3_min: f64,
    rated_bar_g: f64,
    unloaded_fraction: f64,
    load_below_bar_g: f64,
    unload_at_bar_g: f64,
    state: LuState,
}

/// Star-delta start before the machine can load, s (common practice).
const START_DELAY_S: f64 = 8.0;
/// Unloaded run-on before the machine stops, s.
const RUN_ON_S: f64 = 600.0;
/// Blow-down of the oil sump after unloading: starting fraction of full power and time constant.
const BLOWDOWN_START_FRACTION: f64 = 0.65;
const BLOWDOWN_TAU_S: f64 = 20.0;

impl LoadUnload {
    /// Advance the controller one step at header pressure `p_bar_g`; returns (flow m³/min, kW).
    fn step(&mut self, p_bar_g: f64, forced_off: bool) -> (f64, f64) {
        if forced_off {
            self.state = LuState::Off;
        }
        let state = self.state;
        let (next, flow, kw) = match state {
            LuState::Off => {
                let next = if !forced_off && p_bar_g < self.load_below_bar_g {
                    LuState::Starting { remaining_s: START_DELAY_S }
                } else {
                    LuState::Off
                };
                (next, 0.0, STANDBY_KW)
            }
            LuState::Starting { remaining_s } => {
                let left = remaining_s - DT_S;
                let next =
                    if left <= 0.0 { LuState::Loaded } else { LuState::Starting { remaining_s: left } };
                (next, 0.0, self.rated_kw * self.unloaded_fraction)
            }
            LuState::Loaded => {
                let kw = self.rated_kw * (1.0 + POWER_PER_BAR * (p_bar_g - self.rated_bar_g));
                let next = if p_bar_g >= self.unload_at_bar_g {
                    LuState::Unloaded { since_s: 0.0 }
                } else {
                    LuState::Loaded
                };
                (next, self.rated_flow_m3_min, kw)
            }
            LuState::Unloaded { since_s } => {
                let u = self.unloaded_fraction;
                let fraction = u + (BLOWDOWN_START_FRACTION - u) * (-since_s / BLOWDOWN_TAU_S).exp();
                let next = if p_bar_g < self.load_below_bar_g {
                    LuState::Loaded
                } else if since_s + DT_S >= RUN_ON_S {
                    LuState::Off
                } else {
                    LuState::Unloaded { since_s: since_s + DT_S }
                };
                (next, 0.0, self.rated_kw * fraction)
            }
        };
        self.state = next;
        (flow, kw)
    }
}

struct VariableSpeed {
    curve: Vec<(f64, f64)>,
    rated_bar_g: f64,
    setpoint_bar_g: f64,
    stop_at_bar_g: f64,
    restart_below_bar_g: f64,
    /// Proportional gain, m³/min per bar; integral gain, m³/min per bar s.
    kp: f64,
    ki: f64,
    integral_m3_min: f64,
    flow_m3_min: f64,
    running: bool,
}

/// Speed ramp of the drive, m³/min per s (common practice for a drive's acceleration limit).
const VSD_RAMP_M3_MIN_PER_S: f64 = 0.5;

impl VariableSpeed {
    fn min_flow(&self) -> f64 {
        self.curve[0].0
    }
    fn max_flow(&self) -> f64 {
        self.curve[self.curve.len() - 1].0
    }

    fn curve_kw(&self, q: f64) -> f64 {
        let c = &self.curve;
        let q = q.clamp(self.min_flow(), self.max_flow());
        for w in c.windows(2) {
            let ((q0, p0), (q1, p1)) = (w[0], w[1]);
            if q <= q1 {
                return p0 + (p1 - p0) * (q - q0) / (q1 - q0);
            }
        }
        c[c.len() - 1].1
    }

    fn step(&mut self, p_bar_g: f64, forced_off: bool) -> (f64, f64) {
        if forced_off {
            self.running = false;
            self.flow_m3_min = 0.0;
            return (0.0, STANDBY_KW);
        }
        if !self.running {
            if p_bar_g < self.restart_below_bar_g {
                self.running = true;
                self.flow_m3_min = self.min_flow();
                self.integral_m3_min = self.min_flow();
            } else {
                return (0.0, STANDBY_KW);
            }
        }
        let (qmin, qmax) = (self.min_flow(), self.max_flow());
        let e = self.setpoint_bar_g - p_bar_g;
        // Integrate only while the output is not pinned at a limit in the same direction (anti-windup).
        let unclamped = self.kp * e + self.integral_m3_min;
        if !((unclamped >= qmax && e > 0.0) || (unclamped <= qmin && e < 0.0)) {
            self.integral_m3_min = (self.integral_m3_min + self.ki * e * DT_S).clamp(qmin, qmax);
        }
        let command = (self.kp * e + self.integral_m3_min).clamp(qmin, qmax);
        let max_change = VSD_RAMP_M3_MIN_PER_S * DT_S;
        self.flow_m3_min += (command - self.flow_m3_min).clamp(-max_change, max_change);
        let q = self.flow_m3_min;
        let kw = self.curve_kw(q) * (1.0 + POWER_PER_BAR * (p_bar_g - self.rated_bar_g));
        if q <= qmin + 1e-9 && p_bar_g >= self.stop_at_bar_g {
            self.running = false;
            self.flow_m3_min = 0.0;
        }
        (q, kw)
    }
}

// ---------------------------------------------------------------------------------------------------
// The simulation

/// Build the plant and simulate `options.days` days from Monday 2026-03-09 00:00 Europe/Berlin.
pub fn simulate(options: &DemoOptions) -> DemoPlant {
    let days = options.days.max(1);
    let interval_s = u64::from(options.interval_s.max(1));
    let specs = compressors();
    let atm_kpa = atmosphere_kpa(ALTITUDE_M);
    let atm = PressureAbs::from_kpa_abs(atm_kpa);
    let site_air = SiteAir::new(atm_kpa, INLET_C);
    let volume_m3 = RECEIVER_M3 + OTHER_VOLUME_M3;
    let atm_bar = atm.bar_abs();
    let leak_c = LEAK_AT_7_BAR_G_M3_MIN / (7.0 + atm_bar);

    let t0 = period_start_unix_s();
    let total_s = u64::from(days) * 86_400;
    // Maintenance stop: first Sunday 10:00-10:30 local, or the first night 02:00-02:30.
    let stop_offset_s: u64 = if days >= 7 { 6 * 86_400 + 10 * 3_600 } else { 2 * 3_600 };
    let stop_from_s = stop_offset_s;
    let stop_to_s = stop_offset_s + 1_800;

    let mut c1 = LoadUnload {
        rated_kw: specs[0].rated_power_kw,
        rated_flow_m3_min: specs[0].rated_flow_m3_min,
        rated_bar_g: specs[0].rated_pressure_bar_g,
        unloaded_fraction: specs[0].unloaded_power_fraction,
        load_below_bar_g: 6.9,
        unload_at_bar_g: 7.5,
        state: LuState::Off,
    };
    let mut c2 = LoadUnload {
        rated_kw: specs[1].rated_power_kw,
        rated_flow_m3_min: specs[1].rated_flow_m3_min,
        rated_bar_g: specs[1].rated_pressure_bar_g,
        unloaded_fraction: specs[1].unloaded_power_fraction,
        load_below_bar_g: 6.7,
        unload_at_bar_g: 7.3,
        state: LuState::Off,
    };
    let mut p_bar_g = 7.0;
    // Sunday night before the period: only the trim machine runs, matching the leaks.
    let mut c3 = VariableSpeed {
        curve: specs[2].power_curve.clone(),
        rated_bar_g: specs[2].rated_pressure_bar_g,
        setpoint_bar_g: 7.0,
        stop_at_bar_g: 7.6,
        restart_below_bar_g: 6.9,
        kp: 20.0,
        ki: 0.3,
        integral_m3_min: leak_c * (p_bar_g + atm_bar),
        flow_m3_min: leak_c * (p_bar_g + atm_bar),
        running: true,
    };

    let mut process = Rng::new(options.seed);

    // Demand state: lagged base, slow and fast random walks, one spike at a time.
    let mut base_lag = 0.0;
    let mut slow = 0.0;
    let mut fast = 0.0;
    let mut spike_left_s = 0.0;
    let mut spike_m3_min = 0.0;
    let slow_tau = 600.0;
    let slow_sigma = 0.10;
    let fast_tau = 20.0;
    let fast_sigma = 0.05;
    let base_tau = 180.0;
    let spikes_per_s = 4.0 / 3600.0;

    // Integrals.
    let mut energy_kws = [0.0f64; 3];
    let mut loaded_steps = [0u64; 3];
    let mut supply_m3 = 0.0;
    let mut demand_m3 = 0.0;
    let mut leak_m3 = 0.0;
    let mut shutdown_p = (f64::NAN, f64::NAN);
    let mut prod_min = f64::INFINITY;
    let mut prod_max = f64::NEG_INFINITY;
    let start_p = p_bar_g;

    let steps_per_s = (1.0 / DT_S) as u64;
    let n_steps = total_s * steps_per_s;
    let mut loggers = Loggers::new(options.seed, interval_s, total_s, steps_per_s, &site_air);

    for n in 0..n_steps {
        let t_s = n as f64 * DT_S;
        let unix_s = t0 + (n / steps_per_s) as i64;
        let (day, sod) = berlin_local(unix_s);
        let wd = weekday_monday0(day);
        let base = production_base_m3_min(wd, sod);
        let forced_off = (stop_from_s as f64..stop_to_s as f64).contains(&t_s);
        if t_s == stop_from_s as f64 {
            shutdown_p.0 = p_bar_g;
        }
        if t_s == stop_to_s as f64 {
            shutdown_p.1 = p_bar_g;
        }

        // Demand.
        base_lag += (base - base_lag) * DT_S / base_tau;
        slow += -slow * DT_S / slow_tau + slow_sigma * (2.0 * DT_S / slow_tau).sqrt() * process.gauss();
        fast += -fast * DT_S / fast_tau + fast_sigma * (2.0 * DT_S / fast_tau).sqrt() * process.gauss();
        if spike_left_s > 0.0 {
            spike_left_s -= DT_S;
        } else if base > 1.0 && process.uniform() < spikes_per_s * DT_S {
            spike_left_s = 20.0 + 100.0 * process.uniform();
            spike_m3_min = 1.5 + 2.0 * process.uniform();
        }
        let spike = if spike_left_s > 0.0 && base_lag > 1.0 { spike_m3_min } else { 0.0 };
        let production = (base_lag * (1.0 + slow + fast) + spike).max(0.0);
        let p_abs_bar = p_bar_g + atm_bar;
        let leak = leak_c * p_abs_bar;
        let demand = production + leak;

        if base > 1.0 && base_lag > 0.95 * base && !forced_off {
            prod_min = prod_min.min(p_bar_g);
            prod_max = prod_max.max(p_bar_g);
        }

        // Supply.
        let (q1, p1) = c1.step(p_bar_g, forced_off);
        let (q2, p2) = c2.step(p_bar_g, forced_off);
        let (q3, p3) = c3.step(p_bar_g, forced_off);
        let supply = q1 + q2 + q3;
        let kw = [p1, p2, p3];
        for i in 0..3 {
            energy_kws[i] += kw[i] * DT_S;
        }
        // Delivering air: loaded for C1 and C2, running for C3.
        for (i, q) in [q1, q2, q3].into_iter().enumerate() {
            loaded_steps[i] += u64::from(q > 0.0);
        }
        loggers.sample(kw, demand);

        // Receiver equation, free air at inlet conditions: V dp/dt = p_atm (Q_s - Q_d).
        supply_m3 += supply / 60.0 * DT_S;
        demand_m3 += demand / 60.0 * DT_S;
        leak_m3 += leak / 60.0 * DT_S;
        p_bar_g += atm_bar * (supply - demand) / 60.0 * DT_S / volume_m3;

        // Loggers, at the end of this step.
        loggers.end_step(t0 + ((n + 1) / steps_per_s) as i64, p_bar_g);
    }

    let tags: Vec<String> = specs.iter().map(|s| s.tag.clone()).collect();
    let steps_total = n_steps as f64;
    let truth = DemoTruth {
        leak_coefficient_m3_min_per_bar_abs: leak_c,
        leak_flow_at_7_bar_g_m3_min: leak_c * (7.0 + atm_bar),
        energy_kwh_by_compressor: tags.iter().zip(energy_kws).map(|(t, e)| (t.clone(), e / 3600.0)).collect(),
        air_m3: demand_m3,
        shutdown_start: rfc3339_utc(t0 + stop_from_s as i64),
        shutdown_end: rfc3339_utc(t0 + stop_to_s as i64),
        supply_air_m3: supply_m3,
        leak_air_m3: leak_m3,
        system_volume_m3: volume_m3,
        atmospheric_pressure_kpa_abs: atm_kpa,
        period_start: rfc3339_utc(t0),
        period_end: rfc3339_utc(t0 + total_s as i64),
        start_pressure_bar_g: start_p,
        end_pressure_bar_g: p_bar_g,
        shutdown_start_pressure_bar_g: shutdown_p.0,
        shutdown_end_pressure_bar_g: shutdown_p.1,
        loaded_fraction_by_compressor: tags
            .iter()
            .zip(loaded_steps)
            .map(|(t, n)| (t.clone(), n as f64 / steps_total))
            .collect(),
        production_min_pressure_bar_g: prod_min,
        production_max_pressure_bar_g: prod_max,
    };

    let notes = notes(
        days,
        &truth.period_start,
        interval_s,
        loggers.press_interval_s(),
        &truth.shutdown_start,
        &truth.shutdown_end,
    );
    DemoPlant {
        audit_name: "Brackwen Castings, compressor house 2 (demo)".into(),
        site: site(notes),
        compressors: specs,
        receivers: vec![("R1 main receiver".into(), RECEIVER_M3)],
        other_volume_m3: OTHER_VOLUME_M3,
        files: loggers.finish(),
        truth,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_variable_speed_curve_is_interpolated_between_its_points() {
        let spec = &compressors()[2];
        let v = VariableSpeed {
            curve: spec.power_curve.clone(),
            rated_bar_g: 7.5,
            setpoint_bar_g: 7.0,
            stop_at_bar_g: 7.6,
            restart_below_bar_g: 6.9,
            kp: 20.0,
            ki: 0.3,
            integral_m3_min: 2.0,
            flow_m3_min: 2.0,
            running: true,
        };
        assert!((v.curve_kw(2.0) - 14.0).abs() < 1e-12);
        assert!((v.curve_kw(4.1) - (20.6 + 7.0 * 0.5)).abs() < 1e-12);
        assert!((v.curve_kw(7.6) - 45.0).abs() < 1e-12);
    }
}
