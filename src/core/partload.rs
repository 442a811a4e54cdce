/*!
One part-load model: a compressor's mean package power at a mean free air delivery, by its control,
with the storage it works against. The marginal specific power that prices leaks, artificial demand
and the pressure measure is its slope at the trim machine's operating point, and the replay
(`core::simulate`) draws its unloaded blow-down and modulation power from the same functions.

# Load/unload with storage
A load/unload trim machine of capacity `Q_c` meeting a demand `Q_d = x Q_c` cycles across its pressure
band `Δp` on the system volume `V` (isothermal receiver, free air at the site's atmospheric pressure
`p_atm`: `V dp/dt = p_atm (Q_supply - Q_demand)`, the receiver equation of the bleed-down test in the
US DOE's *Improving Compressed Air System Performance: A Sourcebook for Industry*, leaks fact sheet):

- band time `T0 = V Δp / (p_atm Q_c)`; loaded `t_L = T0 / (1 - x)`, unloaded `t_U = T0 / x`, so the
  loaded fraction is `x` whatever the storage;
- loaded at full power `P_full`; after each unloading the power decays from
  [`BLOWDOWN_START_FRACTION`] of full to the unloaded fraction `u` with the time constant
  [`BLOWDOWN_TAU_S`] (sump blow-down, common practice), and restarts from the top at the next unload;
- the cycle mean: `P/P_full = x + (1 - x) u + (b - u) (τ / T0) x (1 - x) (1 - exp(-T0 / (x τ)))`.

With large storage the last term vanishes and the curve is the ideal straight line `u + (1 - u) x`
(US DOE sourcebook); with small storage the machine seldom finishes blowing down, the curve bends up
towards `b` at low load and its slope in the usual operating range falls below the ideal `(1 - u)`:
a saved m³/min saves less. The published curves (US DOE sourcebook, compressor controls fact sheet,
lubricant-injected screw with 1, 3, 5 and 10 US gal/cfm: more storage lies nearer the ideal line;
from memory) have that shape; `tests/reference/partload_reference.py` checks the closed form against
a time-domain blow-down cycle.

When no system volume is on record, [`ASSUMED_STORAGE_US_GAL_PER_CFM`] (3 US gal per cfm of trim
capacity, common practice) is assumed and the model says so (`storage_assumed`). The band is
[`DEFAULT_BAND_BAR`] (0.6 bar, the replay's band; common practice for 10 psi bands).

# Other controls
- Modulation: `P/P_full = 0.70 + 0.30 Q/Q_full` (common practice; `states::MODULATION_POWER_AT_ZERO_FLOW`).
- Variable speed: the data-sheet curve, linear between its points (or the typical curve of
  `states::vsd_curve`); below its minimum flow it idles part of the time, between unloaded power at
  zero flow and the curve's lowest point. The marginal is the curve's local slope at the operating flow.
- Start/stop: full specific power, `P = P_full Q/Q_rated`; storage only sets how often it starts.

# Calibrated from the log
Where a load/unload machine's log is fine enough, [`fit`] reads its band (from the pressure at its
load and unload transitions) and its blow-down (start and τ, from the power after each unloading)
and the model uses them in place of the defaults; `PartLoadModel` says which were fitted and which
assumed, and why.

# Reading power as air
[`Machine::flow_at_power_m3_min`] inverts the curve: the mean delivery at which the model draws a
logged mean power. The operating point and the control measure read the trim's air through it, so
blow-down energy is not read as air.

# Marginal specific power
`dP/dQ` at the operating point, by a central difference over ±[`SLOPE_HALF_WIDTH`] of capacity
(clamped inside 0..1). The operating point is the trim machine's logged one: the loaded share of its
running time (load/unload), its mean delivery while running (variable speed), else half load.
*/

use serde::{Deserialize, Serialize};

use super::model::{CompressorSpec, Control};
use super::recommend::{self as text, Part};
use super::states;

pub mod fit;

/// Sump blow-down after unloading: the power starts at this fraction of full (common practice).
pub const BLOWDOWN_START_FRACTION: f64 = 0.65;
/// Blow-down time constant, s (common practice).
pub const BLOWDOWN_TAU_S: f64 = 20.0;
/// Load/unload pressure band when none is known, bar (common practice; the replay's band).
pub const DEFAULT_BAND_BAR: f64 = 0.6;
/// Storage assumed when no system volume is on record, US gal per cfm of trim capacity (common
/// practice: 3 to 5 US gal/cfm is the usual rule for load/unload trim machines).
pub const ASSUMED_STORAGE_US_GAL_PER_CFM: f64 = 3.0;
/// 1 US gal/cfm in m³ per (m³/min): 0.003785411784 m³ / 0.028316846592 m³/min (exact definitions).
pub const M3_PER_M3_MIN_PER_US_GAL_PER_CFM: f64 = 0.003_785_411_784 / 0.028_316_846_592;
/// Half width of the central difference of the marginal, share of capacity.
pub const SLOPE_HALF_WIDTH: f64 = 0.05;

/// The storage a load/unload trim machine works against.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Storage {
    /// System volume, m³ (receivers, piping, vessels), or the assumed one.
    pub volume_m3: f64,
    /// Load/unload pressure band, bar.
    pub band_bar: f64,
    /// Site atmospheric pressure, bar(a): free air is at it.
    pub p_atm_bar: f64,
    /// True when no volume is on record and [`ASSUMED_STORAGE_US_GAL_PER_CFM`] stands in.
    pub assumed: bool,
}

impl Storage {
    /// The recorded system volume, or the assumed storage for a trim capacity when none (0) is on record.
    pub fn of(system_volume_m3: f64, trim_capacity_m3_min: f64, p_atm_bar: f64) -> Self {
        let recorded = system_volume_m3.is_finite() && system_volume_m3 > 0.0;
        Self {
            volume_m3: if recorded {
                system_volume_m3
            } else {
                ASSUMED_STORAGE_US_GAL_PER_CFM * M3_PER_M3_MIN_PER_US_GAL_PER_CFM * trim_capacity_m3_min
            },
            band_bar: DEFAULT_BAND_BAR,
            p_atm_bar,
            assumed: !recorded,
        }
    }

    /// Storage per trim capacity, m³ per (m³/min).
    pub fn per_capacity(&self, capacity_m3_min: f64) -> f64 {
        self.volume_m3 / capacity_m3_min.max(1e-12)
    }

    /// Band time `T0 = V Δp / (p_atm Q_c)`, s: the time a band takes to fill at full capacity and no demand.
    pub fn band_time_s(&self, capacity_m3_min: f64) -> f64 {
        self.volume_m3 * self.band_bar / (self.p_atm_bar * capacity_m3_min.max(1e-12) / 60.0)
    }
}

/// The sump blow-down after an unloading: the power starts at `start_fraction` of full and decays to
/// the unloaded level with the time constant `tau_s`. The defaults are common practice; `fit` reads
/// them from a log that shows them.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BlowDown {
    pub start_fraction: f64,
    pub tau_s: f64,
}

impl Default for BlowDown {
    fn default() -> Self {
        Self { start_fraction: BLOWDOWN_START_FRACTION, tau_s: BLOWDOWN_TAU_S }
    }
}

/// Energy over `[s, s + dt]` after an unloading, as a share of full power × s: the exact integral of
/// `u + (b - u) exp(-t/τ)`, `b` = max([`BLOWDOWN_START_FRACTION`], u).
pub fn unloaded_energy(u: f64, s: f64, dt: f64) -> f64 {
    unloaded_energy_with(u, s, dt, BlowDown::default())
}

/// [`unloaded_energy`] with a given blow-down (`b` = max(its start, u)).
pub fn unloaded_energy_with(u: f64, s: f64, dt: f64, bd: BlowDown) -> f64 {
    let b = bd.start_fraction.max(u);
    let tau = bd.tau_s.max(1e-9);
    let decay = tau * ((-s / tau).exp() - (-(s + dt) / tau).exp());
    u * dt + (b - u) * decay
}

/// Modulation: power share at a delivery share `x` (module doc).
pub fn modulation_power_fraction(x: f64) -> f64 {
    let a = states::MODULATION_POWER_AT_ZERO_FLOW;
    a + (1.0 - a) * x.clamp(0.0, 1.0)
}

/// Load/unload with storage: the cycle-mean power share at a load share `x`, with unloaded share `u`
/// and band time `t0_s` (module doc). `t0_s` infinite gives the ideal line.
pub fn load_unload_power_fraction(x: f64, u: f64, t0_s: f64) -> f64 {
    load_unload_power_fraction_with(x, u, t0_s, BlowDown::default())
}

/// [`load_unload_power_fraction`] with a given blow-down.
pub fn load_unload_power_fraction_with(x: f64, u: f64, t0_s: f64, bd: BlowDown) -> f64 {
    let x = x.clamp(0.0, 1.0);
    let ideal = x + (1.0 - x) * u;
    if x <= 0.0 || x >= 1.0 || !t0_s.is_finite() {
        return ideal;
    }
    let b = bd.start_fraction.max(u);
    let tau = bd.tau_s.max(1e-9);
    // (b - u) τ (1 - e^{-t_U/τ}) per cycle of T0 / (x (1 - x)).
    ideal + (b - u) * (tau / t0_s.max(1e-9)) * x * (1.0 - x) * (1.0 - (-t0_s / (x * tau)).exp())
}

/// What the model was given for one machine.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Machine<'a> {
    pub spec: &'a CompressorSpec,
    /// Full-load power, kW (the logged loaded power when known, else the data sheet's).
    pub full_kw: f64,
    /// Unloaded power / full power.
    pub unloaded_fraction: f64,
    pub storage: Storage,
    /// The sump blow-down (load/unload only): the defaults, or fitted from the log (`fit`).
    pub blowdown: BlowDown,
}

impl Machine<'_> {
    /// Mean package power at a mean free air delivery, kW.
    pub fn power_at_flow_kw(&self, flow_m3_min: f64) -> f64 {
        let c = self.spec;
        let qc = c.rated_flow_m3_min.max(1e-12);
        let x = (flow_m3_min / qc).clamp(0.0, 1.0);
        match c.control {
            Control::LoadUnload => {
                self.full_kw
                    * load_unload_power_fraction_with(
                        x,
                        self.unloaded_fraction,
                        self.storage.band_time_s(qc),
                        self.blowdown,
                    )
            }
            Control::Modulation => self.full_kw * modulation_power_fraction(x),
            Control::StartStop => self.full_kw * x,
            Control::VariableSpeed => {
                let curve = states::vsd_curve(c);
                let q = flow_m3_min.max(0.0);
                let unl = self.unloaded_fraction * c.rated_power_kw;
                if q < curve[0].0 {
                    unl + (curve[0].1 - unl) * q / curve[0].0
                } else {
                    interp(&curve, q)
                }
            }
        }
    }

    /// Flow range of the model, m³/min: the curve's top for variable speed, else rated flow.
    pub fn capacity_m3_min(&self) -> f64 {
        match self.spec.control {
            Control::VariableSpeed => states::vsd_curve(self.spec).last().map_or(0.0, |p| p.0),
            _ => self.spec.rated_flow_m3_min,
        }
    }

    /// The inverse: the mean delivery, m³/min, at which the model draws `kw` (bisection over the
    /// model's flow range; a power below the curve's lowest point gives 0, above its top the top).
    /// The one way a logged mean power becomes the air it stands for (the operating point, the
    /// control measure's demand).
    pub fn flow_at_power_m3_min(&self, kw: f64) -> f64 {
        let cap = self.capacity_m3_min().max(1e-12);
        let (mut lo, mut hi) = (0.0, cap);
        if !kw.is_finite() || kw <= self.power_at_flow_kw(lo) {
            return 0.0;
        }
        if kw >= self.power_at_flow_kw(hi) {
            return hi;
        }
        for _ in 0..60 {
            let mid = 0.5 * (lo + hi);
            if self.power_at_flow_kw(mid) < kw {
                lo = mid;
            } else {
                hi = mid;
            }
        }
        0.5 * (lo + hi)
    }

    /// Marginal specific power at an operating delivery, kW per m³/min (module doc).
    pub fn marginal_kw_per_m3_min(&self, flow_m3_min: f64) -> f64 {
        let cap = self.capacity_m3_min().max(1e-12);
        let h = SLOPE_HALF_WIDTH * cap;
        let lo = (flow_m3_min - h).clamp(0.0, cap - 2.0 * h);
        let hi = lo + 2.0 * h;
        (self.power_at_flow_kw(hi) - self.power_at_flow_kw(lo)) / (hi - lo)
    }

    /// The ideal line's slope (storage large enough; the figure used before this model), kW per m³/min.
    pub fn ideal_marginal_kw_per_m3_min(&self) -> f64 {
        match self.spec.control {
            Control::LoadUnload => {
                self.full_kw * (1.0 - self.unloaded_fraction) / self.spec.rated_flow_m3_min.max(1e-12)
            }
            _ => states::marginal_kw_per_m3_min(self.spec),
        }
    }
}

fn interp(points: &[(f64, f64)], x: f64) -> f64 {
    let (first, last) = (points[0], points[points.len() - 1]);
    if x <= first.0 {
        return first.1;
    }
    for w in points.windows(2) {
        let ((x0, y0), (x1, y1)) = (w[0], w[1]);
        if x <= x1 {
            return if x1 > x0 { y0 + (y1 - y0) * (x - x0) / (x1 - x0) } else { y1 };
        }
    }
    last.1
}

/// Which curve and storage a price used (API `summary.part_load_model`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PartLoadModel {
    /// The machine whose curve prices a change of demand (the trim machine).
    pub machine: String,
    pub control: Control,
    /// `load_unload_with_storage`, `modulation`, `variable_speed_curve` (the data sheet's),
    /// `variable_speed_typical` (no curve given) or `start_stop`.
    pub curve: String,
    /// Operating point: mean delivery while running, m³/min free air, and as a share of capacity.
    pub operating_flow_m3_min: f64,
    pub load_fraction: f64,
    /// How the operating point was read: `power_through_model` (the mean running power through the
    /// model's inverse), `states` (start/stop: the running share; load/unload without power), `air`
    /// (air delivered over running hours) or `assumed_half_load`.
    pub load_fraction_source: String,
    /// Full-load power used, kW, and where from (`log` or `data_sheet`).
    pub full_power_kw: f64,
    pub full_power_source: String,
    pub unloaded_power_fraction: f64,
    /// `log` (the unloaded level found in the machine's own power), `user` or `data_sheet`.
    pub unloaded_source: String,
    /// Load/unload only (else `null`): the storage behind the curve.
    pub storage_m3: Option<f64>,
    pub storage_m3_per_m3_min: Option<f64>,
    pub storage_us_gal_per_cfm: Option<f64>,
    /// True when no system volume is on record and 3 US gal/cfm was assumed.
    pub storage_assumed: bool,
    pub pressure_band_bar: Option<f64>,
    /// Load/unload only: `log` (fitted from the pressure at the transitions, `fit`) or `assumed`.
    pub pressure_band_source: Option<String>,
    pub blowdown_start_fraction: Option<f64>,
    pub blowdown_tau_s: Option<f64>,
    /// Load/unload only: `log` (fitted from the power after each unloading, `fit`) or `assumed`.
    pub blowdown_source: Option<String>,
    /// The logging interval the fit read, s (load/unload with logged power only).
    pub logging_interval_s: Option<f64>,
    /// What was fitted from the log and what assumed, and why (load/unload with logged power only).
    pub calibration_note: Option<String>,
    /// The slope at the operating point, and the ideal line's for comparison, kW per m³/min.
    pub marginal_kw_per_m3_min: f64,
    pub ideal_marginal_kw_per_m3_min: f64,
}

impl PartLoadModel {
    /// The model of one machine at an operating delivery; `sources` = (full power, unloaded level).
    pub fn of(m: &Machine, operating_flow_m3_min: f64, sources: (&str, &str)) -> Self {
        let c = m.spec;
        let lu = c.control == Control::LoadUnload;
        let curve = match c.control {
            Control::LoadUnload => "load_unload_with_storage",
            Control::Modulation => "modulation",
            Control::VariableSpeed if c.power_curve.len() >= 2 => "variable_speed_curve",
            Control::VariableSpeed => "variable_speed_typical",
            Control::StartStop => "start_stop",
        };
        let per_cap = m.storage.per_capacity(c.rated_flow_m3_min);
        Self {
            machine: c.tag.clone(),
            control: c.control,
            curve: curve.into(),
            operating_flow_m3_min,
            load_fraction: operating_flow_m3_min / m.capacity_m3_min().max(1e-12),
            load_fraction_source: "power_through_model".into(),
            full_power_kw: m.full_kw,
            full_power_source: sources.0.into(),
            unloaded_power_fraction: m.unloaded_fraction,
            unloaded_source: sources.1.into(),
            storage_m3: lu.then_some(m.storage.volume_m3),
            storage_m3_per_m3_min: lu.then_some(per_cap),
            storage_us_gal_per_cfm: lu.then_some(per_cap / M3_PER_M3_MIN_PER_US_GAL_PER_CFM),
            storage_assumed: lu && m.storage.assumed,
            pressure_band_bar: lu.then_some(m.storage.band_bar),
            pressure_band_source: lu.then(|| "assumed".into()),
            blowdown_start_fraction: lu.then_some(m.blowdown.start_fraction.max(m.unloaded_fraction)),
            blowdown_tau_s: lu.then_some(m.blowdown.tau_s),
            blowdown_source: lu.then(|| "assumed".into()),
            logging_interval_s: None,
            calibration_note: None,
            marginal_kw_per_m3_min: m.marginal_kw_per_m3_min(operating_flow_m3_min),
            ideal_marginal_kw_per_m3_min: m.ideal_marginal_kw_per_m3_min(),
        }
    }

    /// The model with what a log's fit gave it (`fit::calibrate`): the sources of the band and the
    /// blow-down, the interval and the note. The values themselves are the machine's (the caller
    /// built it with the fitted ones).
    pub fn with_calibration(mut self, c: Option<&fit::Calibration>) -> Self {
        if self.control != Control::LoadUnload {
            return self;
        }
        if let Some(c) = c {
            let src = |fitted: bool| Some(if fitted { "log" } else { "assumed" }.to_string());
            self.pressure_band_source = src(c.band.is_some());
            self.blowdown_source = src(c.blowdown.is_some());
            self.logging_interval_s = Some(c.interval_s);
            self.calibration_note = Some(c.note.clone());
        }
        self
    }

    /// The model in words, SI (the JSON's strings): [`Self::describe_parts`] rendered in SI.
    pub fn describe(&self) -> String {
        let si = super::display::Fmt::new(
            super::units::UnitSystem::Si,
            super::units::PressureAbs(super::units::P_STD_ATM),
        );
        super::display::render_parts(&self.describe_parts(), &si)
    }

    /// The curve in words, as every page names it (never its code, `load_unload_with_storage`).
    pub fn curve_words(&self) -> &'static str {
        match self.curve.as_str() {
            "load_unload_with_storage" => "load/unload on its storage",
            "variable_speed_curve" => "variable speed, the data sheet's curve",
            "variable_speed_typical" => "variable speed, a typical curve: no data-sheet curve given",
            "modulation" => "modulation",
            _ => "start/stop",
        }
    }

    /// The model in words with its figures as parts (the methods' and assumptions' lines, the
    /// control measure's basis), so each page renders them in its reader's units.
    pub fn describe_parts(&self) -> Vec<Part> {
        let mut s: Vec<Part> = vec![Part::Words(format!(
            "{} ({}): {} at {:.0} % load",
            self.machine,
            self.control.label(),
            self.curve_words(),
            self.load_fraction * 100.0
        ))];
        if let (Some(v), Some(per)) = (self.storage_m3, self.storage_m3_per_m3_min) {
            let from = |src: &Option<String>| match src.as_deref() {
                Some("log") => " (fitted from the log)",
                _ => " (assumed)",
            };
            s.extend([
                Part::from(", storage "),
                text::volume(v),
                Part::from(" ("),
                text::storage_per_flow(per),
                Part::Words(format!(
                    "{}), band ",
                    if self.storage_assumed {
                        ", assumed (common practice): no receiver or other volume on the audit's \
                         record; a volume given with a field test serves that test only"
                    } else {
                        ""
                    }
                )),
                text::pressure_drop(self.pressure_band_bar.unwrap_or(DEFAULT_BAND_BAR)),
                Part::Words(format!(
                    "{}, blow-down from {:.0} % with τ = {:.1} s{}",
                    from(&self.pressure_band_source),
                    self.blowdown_start_fraction.unwrap_or(BLOWDOWN_START_FRACTION) * 100.0,
                    self.blowdown_tau_s.unwrap_or(BLOWDOWN_TAU_S),
                    from(&self.blowdown_source)
                )),
            ]);
        }
        s.extend([
            Part::from("; marginal "),
            text::specific(self.marginal_kw_per_m3_min),
            Part::from(" against the ideal line's "),
            text::specific(self.ideal_marginal_kw_per_m3_min),
        ]);
        s
    }
}

#[cfg(test)]
mod tests;
