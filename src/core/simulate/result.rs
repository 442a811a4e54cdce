//! What a replay returns, serialised for the API (API.md "Scenarios (what-if replay)").

use serde::Serialize;

/// One machine's figures over the simulated period.
#[derive(Serialize, Clone, Debug, PartialEq)]
pub struct SimCompressor {
    pub tag: String,
    pub energy_kwh: f64,
    /// Hours delivering air (loaded; variable speed: running; modulation: delivering).
    pub loaded_hours: f64,
    /// Hours running without delivering (unloaded, starting, modulated to nothing).
    pub unloaded_hours: f64,
    /// Load cycles (into the loaded state) per simulated hour.
    pub cycles_per_hour: f64,
    pub starts: u64,
}

/// The scenario's result beside the baseline and the log.
#[derive(Serialize, Clone, Debug)]
pub struct SimResult {
    pub energy_kwh: f64,
    pub mean_power_kw: f64,
    /// Highest bin-mean total power, kW.
    pub peak_power_kw: f64,
    pub min_pressure_bar_g: f64,
    pub mean_pressure_bar_g: f64,
    pub time_below_min_required_s: f64,
    pub min_required_pressure_bar_g: f64,
    /// (simulated energy of the unchanged plant - logged energy) / logged energy.
    pub validation_error: f64,
    pub logged_energy_kwh: f64,
    /// The unchanged plant simulated.
    pub baseline_energy_kwh: f64,
    /// Baseline - this scenario.
    pub energy_saving_kwh: f64,
    /// Hours simulated (the logged period less skipped gaps).
    pub simulated_hours: f64,
    pub feasible: bool,
    pub problems: Vec<String>,
    /// The scenario's installed cost: quoted, or estimated by [`default_cost`](super::default_cost).
    pub implementation_cost: f64,
    /// `given` (the scenario's own figure) or `default_estimate`.
    pub implementation_cost_source: &'static str,
    pub implementation_cost_basis: Vec<String>,
    /// Neither `set_pressure` nor `reduce_leaks`: may be offered as the `improve_control` measure.
    pub supply_side_only: bool,
    pub compressors: Vec<SimCompressor>,
    /// (t_ms, bar_g), the minimum of each bucket, at most [`TRACE_POINTS`](super::TRACE_POINTS) points.
    pub pressure_trace: Vec<(i64, f64)>,
}
