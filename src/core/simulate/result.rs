//! What a replay returns. Serialised for the API (API.md "Scenarios (what-if replay)") and read back
//! typed; a non-finite figure is written as `null` and read back as `NaN`.

use serde::{Deserialize, Deserializer, Serialize};

/// One machine's figures over the simulated period.
#[derive(Serialize, Deserialize, Clone, Debug, PartialEq)]
pub struct SimCompressor {
    pub tag: String,
    #[serde(deserialize_with = "f64_or_nan")]
    pub energy_kwh: f64,
    /// Hours delivering air (loaded; variable speed: running; modulation: delivering).
    #[serde(deserialize_with = "f64_or_nan")]
    pub loaded_hours: f64,
    /// Hours running without delivering (unloaded, starting, modulated to nothing).
    #[serde(deserialize_with = "f64_or_nan")]
    pub unloaded_hours: f64,
    /// Load cycles (into the loaded state) per simulated hour.
    #[serde(deserialize_with = "f64_or_nan")]
    pub cycles_per_hour: f64,
    pub starts: u64,
}

/// The scenario's result beside the baseline and the log.
#[derive(Serialize, Deserialize, Clone, Debug)]
pub struct SimResult {
    #[serde(deserialize_with = "f64_or_nan")]
    pub energy_kwh: f64,
    #[serde(deserialize_with = "f64_or_nan")]
    pub mean_power_kw: f64,
    /// Highest bin-mean total power, kW.
    #[serde(deserialize_with = "f64_or_nan")]
    pub peak_power_kw: f64,
    #[serde(deserialize_with = "f64_or_nan")]
    pub min_pressure_bar_g: f64,
    #[serde(deserialize_with = "f64_or_nan")]
    pub mean_pressure_bar_g: f64,
    #[serde(deserialize_with = "f64_or_nan")]
    pub time_below_min_required_s: f64,
    #[serde(deserialize_with = "f64_or_nan")]
    pub min_required_pressure_bar_g: f64,
    /// (simulated energy of the unchanged plant - logged energy) / logged energy.
    #[serde(deserialize_with = "f64_or_nan")]
    pub validation_error: f64,
    #[serde(deserialize_with = "f64_or_nan")]
    pub logged_energy_kwh: f64,
    /// The unchanged plant simulated.
    #[serde(deserialize_with = "f64_or_nan")]
    pub baseline_energy_kwh: f64,
    /// Baseline - this scenario.
    #[serde(deserialize_with = "f64_or_nan")]
    pub energy_saving_kwh: f64,
    /// Hours simulated (the logged period less skipped gaps).
    #[serde(deserialize_with = "f64_or_nan")]
    pub simulated_hours: f64,
    pub feasible: bool,
    /// Why the plant falls short, in SI words; `problem_parts` holds them one for one in parts.
    pub problems: Vec<String>,
    /// `problems` in parts (`recommend::Part`), for a page in the reader's units.
    #[serde(default)]
    pub problem_parts: Vec<Vec<crate::core::recommend::Part>>,
    /// What the replay left out of the logged data and why, in parts (the module doc's "Demand"):
    /// words beside the figures, not problems of the plant.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub note_parts: Vec<Vec<crate::core::recommend::Part>>,
    /// The scenario's installed cost: quoted, or estimated by [`default_cost`](super::default_cost).
    #[serde(deserialize_with = "f64_or_nan")]
    pub implementation_cost: f64,
    /// `given` (the scenario's own figure) or `default_estimate`.
    pub implementation_cost_source: CostSource,
    pub implementation_cost_basis: Vec<String>,
    /// Neither `set_pressure` nor `reduce_leaks`: may be offered as the `improve_control` measure.
    pub supply_side_only: bool,
    pub compressors: Vec<SimCompressor>,
    /// (t_ms, bar_g), the minimum of each bucket, at most [`TRACE_POINTS`](super::TRACE_POINTS) points.
    pub pressure_trace: Vec<(i64, f64)>,
    /// The machines calibrated from the log, one line each (the module doc's "Calibration").
    #[serde(default)]
    pub calibration: Vec<String>,
    /// Why there is no demand to replay, in words ("no demand to replay: ..."), when there is none:
    /// the replay's figures are then `null` (the module doc's "Demand"). Absent otherwise.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub no_demand_reason: Option<String>,
}

/// Where a scenario's implementation cost comes from; written `given` or `default_estimate`.
#[derive(Serialize, Deserialize, Clone, Copy, Debug, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum CostSource {
    /// The scenario's own figure (a quotation).
    Given,
    /// Estimated by [`default_cost`](super::default_cost).
    DefaultEstimate,
}

/// A figure written as `null` (serde_json writes a non-finite number so) reads back as `NaN`.
fn f64_or_nan<'de, D: Deserializer<'de>>(d: D) -> Result<f64, D::Error> {
    Ok(Option::<f64>::deserialize(d)?.unwrap_or(f64::NAN))
}
