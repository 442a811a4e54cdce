//! One machine as simulated: its band, its control law, its power, and the switching events of its
//! state (the module doc's "Control rules").

use super::START_DELAY_S;
use super::{BAND_BAR, MIN_RUN_S, POWER_PER_BAR, RUN_ON_S};
use crate::core::model::Control;
use crate::core::partload;

/// Tolerance of a threshold test after an event landed on it, bar.
const EPS_BAR: f64 = 1e-9;
const EPS_S: f64 = 1e-9;

#[derive(Debug, Clone)]
pub(super) struct Machine {
    pub(super) tag: String,
    pub(super) control: Control,
    pub(super) rated_kw: f64,
    pub(super) rated_q: f64,
    pub(super) rated_bar_g: f64,
    pub(super) unl_frac: f64,
    /// The sump blow-down after unloading: fitted from the log where it shows one, else the
    /// part-load model's default.
    pub(super) blowdown: partload::BlowDown,
    pub(super) load_bar_g: f64,
    pub(super) unload_bar_g: f64,
    /// Variable speed: (m³/s, kW).
    pub(super) curve: Vec<(f64, f64)>,
    pub(super) setpoint: f64,
    pub(super) stop: f64,
    pub(super) restart: f64,
    pub(super) kp: f64,
    pub(super) ki: f64,
    pub(super) ramp: f64,
}

impl Machine {
    pub(super) fn qmin(&self) -> f64 {
        self.curve.first().map_or(0.0, |c| c.0)
    }
    pub(super) fn qmax(&self) -> f64 {
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
    pub(super) fn lowest_trigger(&self) -> f64 {
        match self.control {
            Control::VariableSpeed => self.restart,
            _ => self.load_bar_g,
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum Mode {
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
pub(super) struct MState {
    pub(super) mode: Mode,
    pub(super) timer: f64,
    pub(super) q: f64,
    pub(super) integ: f64,
}

#[derive(Debug, Clone, Copy, Default)]
pub(super) struct MStats {
    pub(super) energy_kws: f64,
    pub(super) loaded_s: f64,
    pub(super) unloaded_s: f64,
    pub(super) cycles: u64,
    pub(super) starts: u64,
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
    pub(super) fn flow(&self, m: &Machine) -> f64 {
        match (self.mode, m.control) {
            (Mode::Loaded, _) => m.rated_q,
            (Mode::Running, _) => self.q,
            _ => 0.0,
        }
    }

    /// Time until this machine's next switching condition holds, with the pressure moving at r bar/s.
    pub(super) fn event_time(&self, m: &Machine, p: f64, r: f64) -> f64 {
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
    pub(super) fn advance(&mut self, m: &Machine, p_mid: f64, dt: f64, st: &mut MStats) {
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
                // The part-load model's blow-down, integrated exactly from s to s + dt.
                let e = partload::unloaded_energy_with(m.unl_frac, self.timer, dt, m.blowdown);
                self.timer += dt;
                st.unloaded_s += dt;
                m.rated_kw * e
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
                    m.rated_kw * partload::modulation_power_fraction(x) * m.pressure_factor(p_mid) * dt
                }
            },
        };
        st.energy_kws += kws;
    }

    /// Apply the switching rules at pressure p.
    pub(super) fn transition(&mut self, m: &Machine, p: f64, st: &mut MStats) {
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
    pub(super) fn control(&mut self, m: &Machine, p: f64, h: f64) {
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
