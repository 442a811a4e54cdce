/*!
Instrument accuracy and how the summary's uncertainties combine: each headline figure has `_low` /
`_high` at ± one combined standard uncertainty, the relative uncertainties of a product or ratio
combined in quadrature (root sum of squares, the JCGM 100:2008 "GUM" law of propagation for
uncorrelated inputs). The field tests (`core::fieldtest`) read the same accuracies, so this room is the
one place both depend on.
*/

use serde::{Deserialize, Serialize};

use crate::core::model::CompressorSpec;

/// Default instrument accuracies (fractions of reading unless named otherwise).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(default)]
pub struct Accuracy {
    /// True-power logger (common practice: class 1 meters).
    pub power_true_rel: f64,
    /// Power from current with an assumed power factor.
    pub power_current_rel: f64,
    /// Flow meter, of reading.
    pub flow_rel: f64,
    /// Flow estimated from compressor states and rated FAD (our assumption: rated FAD of a worn
    /// machine and the state reading together).
    pub flow_estimated_rel: f64,
    /// Pressure transmitter span, bar, and accuracy as a fraction of span.
    pub pressure_span_bar: f64,
    pub pressure_rel_of_span: f64,
    /// System volume for bleed-down and decay tests.
    pub volume_rel: f64,
    /// Tags of compressors whose power is derived from current.
    pub current_derived_power: Vec<String>,
    /// Current logger (clamp-on transformer), of reading (common practice: ±2 %, from memory).
    pub current_clamp_rel: f64,
    /// Per compressor whose power is made from current with a known power factor: the power
    /// factor's relative uncertainty (the mapping's, `ingest::mapping` rules). Without an entry,
    /// `power_current_rel` stands for both.
    pub power_factor_rel: Vec<(String, f64)>,
    /// Compressors whose power is made from current with one power factor for loaded and unloaded
    /// running: a source of error the summary warns of.
    pub single_power_factor: Vec<String>,
}

impl Default for Accuracy {
    fn default() -> Self {
        Self {
            power_true_rel: 0.01,
            power_current_rel: 0.05,
            flow_rel: 0.03,
            flow_estimated_rel: 0.10,
            pressure_span_bar: 16.0,
            pressure_rel_of_span: 0.005,
            volume_rel: 0.20,
            current_derived_power: Vec::new(),
            current_clamp_rel: 0.02,
            power_factor_rel: Vec::new(),
            single_power_factor: Vec::new(),
        }
    }
}

impl Accuracy {
    /// Pressure uncertainty, bar (0.5 % of a 16 bar span = 0.08 bar by default).
    pub fn pressure_abs_bar(&self) -> f64 {
        self.pressure_span_bar * self.pressure_rel_of_span
    }
}

/// Default relative uncertainty (1 standard uncertainty, as a fraction) of a leak estimate by method,
/// for estimates that carry none of their own (an estimate from a stored field test carries the one
/// its test was evaluated with, from its own inputs): bleed-down and pressure decay the volume
/// (±20 %) with the pressure readings for a 1.5 bar fall; load/unload the rated FAD's ±5 % (ISO 1217
/// capacity tolerance, from memory) with an assumed ±5 % for timing whose times are unknown; idle
/// flow the meter.
pub fn default_relative_uncertainty(method: &str, acc: &Accuracy) -> f64 {
    match method {
        "bleed_down" | "pressure_decay" => {
            let dp = std::f64::consts::SQRT_2 * acc.pressure_abs_bar() / 1.5;
            quad(&[acc.volume_rel, dp])
        }
        "load_unload" => quad(&[LOAD_UNLOAD_RATED_FLOW_REL, 0.05]),
        "idle_flow" => acc.flow_rel,
        _ => quad(&[acc.volume_rel, acc.flow_rel]),
    }
}

/// The rated FAD's relative uncertainty in a load/unload test (ISO 1217 capacity tolerance, about
/// ±5 % near full load, from memory).
pub const LOAD_UNLOAD_RATED_FLOW_REL: f64 = 0.05;
/// Timing uncertainty of each of a load/unload test's mean times, s (a stopwatch, or the logging
/// interval of a state read from a log; common practice).
pub const LOAD_UNLOAD_TIMING_S: f64 = 2.0;

/// Relative uncertainty of a load/unload test's leak flow from its own times: the fraction
/// f = T / (T + t) with ±[`LOAD_UNLOAD_TIMING_S`] on each of T and t (GUM law of propagation:
/// df/dT = t / (T + t)², df/dt = -T / (T + t)², so u_f / f = u_t sqrt(T² + t²) / (T (T + t))), and the
/// rated FAD's [`LOAD_UNLOAD_RATED_FLOW_REL`], in quadrature. 40 s / 160 s: timing 4.1 %.
pub fn load_unload_relative_uncertainty(loaded_s: f64, unloaded_s: f64) -> f64 {
    let (lt, ut) = (loaded_s.max(1e-9), unloaded_s.max(0.0));
    let timing = LOAD_UNLOAD_TIMING_S * (lt * lt + ut * ut).sqrt() / (lt * (lt + ut));
    quad(&[LOAD_UNLOAD_RATED_FLOW_REL, timing])
}

/// Root sum of squares.
pub fn quad(parts: &[f64]) -> f64 {
    parts.iter().map(|x| x * x).sum::<f64>().sqrt()
}

/// `v` ± the relative uncertainty `rel`: (low, high).
pub(super) fn band(v: f64, rel: f64) -> (f64, f64) {
    (v * (1.0 - rel), v * (1.0 + rel))
}

/// Relative uncertainty of a compressor's logged power: true power's; or, made from current, the
/// current's and the power factor's in quadrature (P = k I PF, GUM law for a product) when the
/// power factor's is known, else `power_current_rel`.
pub(super) fn power_rel(acc: &Accuracy, c: &CompressorSpec) -> f64 {
    if !acc.current_derived_power.contains(&c.tag) {
        return acc.power_true_rel;
    }
    let pf = acc
        .power_factor_rel
        .iter()
        .filter(|(t, _)| *t == c.tag)
        .map(|(_, r)| *r)
        .fold(None, |m: Option<f64>, r| Some(m.map_or(r, |m| m.max(r))));
    pf.map_or(acc.power_current_rel, |pf| quad(&[acc.current_clamp_rel, pf]))
}
