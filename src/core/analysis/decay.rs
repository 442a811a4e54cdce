/*!
Decay events: stretches of the logs where the header pressure falls with every logged compressor off
or unloaded, bleed-down tests that happened anyway, proposed to the auditor as `pressure_decay` field
tests (choked leak flow proportional to absolute pressure, US DOE compressed-air sourcebook, leaks
fact sheet; fitted by `leaks::fit_pressure_decay`).
*/

use serde::{Deserialize, Serialize};

use crate::core::leaks::fit_pressure_decay;
use crate::core::levels;
use crate::core::model::{CompressorSpec, StorageSpec};
use crate::core::series::Frame;
use crate::core::states::State;
use crate::core::units::{PressureAbs, SiteAir, Volume};

use super::calendar::ts_string;

/// A stretch of the logs where pressure decays with every logged compressor off or unloaded.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DecayEvent {
    pub start_ms: i64,
    pub end_ms: i64,
    pub start: String,
    pub end: String,
    pub start_pressure_bar_g: f64,
    pub end_pressure_bar_g: f64,
    pub duration_s: f64,
    /// Every logged compressor off (not merely unloaded).
    pub all_off: bool,
    pub leak_flow_at_start_pressure_m3_min: f64,
    pub fit_r2: f64,
}

/// Shortest decay proposed, s (a shorter fall is dominated by logger noise and valve timing; common
/// practice).
pub const DECAY_MIN_DURATION_S: f64 = 120.0;
/// Smallest pressure fall proposed, bar (about the pressure accuracy; below it the fit is noise).
pub const DECAY_MIN_FALL_BAR: f64 = 0.1;
/// A rise above the lowest pressure so far by more than this ends a decay, bar (noise allowance).
pub const DECAY_NOISE_BAR: f64 = 0.02;
/// At most this many events are proposed (the longest).
pub const DECAY_MAX_EVENTS: usize = 100;

/// Decay windows proposed as `pressure_decay` tests: runs of bins where every compressor with a
/// power column is off or unloaded (at least one must be logged) and the header pressure falls,
/// allowing rises of [`DECAY_NOISE_BAR`]; at least [`DECAY_MIN_DURATION_S`] long and
/// [`DECAY_MIN_FALL_BAR`] deep; fitted with `leaks::fit_pressure_decay`. Longest first.
pub fn decay_events(
    frame: &Frame,
    compressors: &[CompressorSpec],
    storage: &StorageSpec,
    site: &SiteAir,
) -> Vec<DecayEvent> {
    let grid = frame.grid;
    let Some(p) = frame.header_pressure() else { return Vec::new() };
    let p = &p.values;
    let st: Vec<Vec<State>> = compressors
        .iter()
        .enumerate()
        .filter_map(|(i, c)| frame.power_of(i).map(|col| levels::classify(c, &col.values)))
        .collect();
    if st.is_empty() || storage.system_volume_m3() <= 0.0 {
        return Vec::new();
    }
    let ok = |k: usize| p[k].is_finite() && st.iter().all(|s| matches!(s[k], State::Off | State::Unloaded));
    let noise = DECAY_NOISE_BAR * 1e5;
    let mut events = Vec::new();
    let mut k = 0;
    while k < grid.len {
        if !ok(k) {
            k += 1;
            continue;
        }
        // Start at the highest point, then follow the fall.
        let start = k;
        let mut lowest = p[k] as f64;
        let mut end = k;
        k += 1;
        while k < grid.len && ok(k) && (p[k] as f64) <= lowest + noise {
            if (p[k] as f64) < lowest {
                lowest = p[k] as f64;
            }
            end = k;
            k += 1;
        }
        let dur = (end - start) as f64 * grid.step_s();
        let fall = (p[start] - p[end]) as f64;
        if dur >= DECAY_MIN_DURATION_S && fall >= DECAY_MIN_FALL_BAR * 1e5 && end - start >= 2 {
            let samples: Vec<(f64, PressureAbs)> = (start..=end)
                .map(|i| ((i - start) as f64 * grid.step_s(), PressureAbs(p[i] as f64)))
                .collect();
            if let Ok(fit) = fit_pressure_decay(&samples, Volume(storage.system_volume_m3()), site) {
                let (s_ms, e_ms) = (grid.bin_start_ms(start), grid.bin_start_ms(end));
                events.push(DecayEvent {
                    start_ms: s_ms,
                    end_ms: e_ms,
                    start: ts_string(s_ms),
                    end: ts_string(e_ms),
                    start_pressure_bar_g: fit.start_pressure.bar_g(site.atmosphere),
                    end_pressure_bar_g: fit.end_pressure.bar_g(site.atmosphere),
                    duration_s: dur,
                    all_off: (start..=end).all(|i| st.iter().all(|s| s[i] == State::Off)),
                    leak_flow_at_start_pressure_m3_min: fit.leak_flow_at_start.m3_min(),
                    fit_r2: fit.fit_r2,
                });
            }
        }
        if k == end + 1 && k < grid.len && !ok(k) {
            k += 1;
        }
    }
    events.sort_by(|a, b| b.duration_s.total_cmp(&a.duration_s));
    events.truncate(DECAY_MAX_EVENTS);
    events
}
