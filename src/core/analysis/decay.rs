/*!
Decay events: stretches of the logs where the header pressure falls with every logged compressor off,
or, outside production hours, with every logged compressor off or unloaded: bleed-down tests that
happened anyway, proposed to the auditor as `pressure_decay` field tests (choked leak flow proportional
to absolute pressure, US DOE compressed-air sourcebook, leaks fact sheet; fitted by
`leaks::fit_pressure_decay`). An unloaded stretch during production is not proposed: while
production draws air, the fall is the whole demand, not the leaks. Production hours are the summary's
(`production`: the site's schedule, else detected from the demand). Without a system volume on
record the events are still proposed, with their fit and without a flow (`null`: the flow waits for
the volume).
*/

use serde::{Deserialize, Serialize};

use crate::core::leaks::fit_pressure_decay;
use crate::core::model::StorageSpec;
use crate::core::series::Frame;
use crate::core::states::State;
use crate::core::units::{PressureAbs, Volume};

use super::calendar::{calendar, ts_string};
use super::{machines, production, specific_power, DataSpec};

/// A stretch of the logs where pressure decays with every logged compressor off, or outside
/// production with every logged compressor off or unloaded.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct DecayEvent {
    pub start_ms: i64,
    pub end_ms: i64,
    pub start: String,
    pub end: String,
    pub start_pressure_bar_g: f64,
    pub end_pressure_bar_g: f64,
    pub duration_s: f64,
    /// Every logged compressor off (not merely unloaded) throughout.
    pub all_off: bool,
    /// Every bin outside production hours.
    pub outside_production: bool,
    /// The system volume the flow was computed with, m³ (`None`: none on record).
    pub volume_m3: Option<f64>,
    /// Leak flow at the start pressure, m³/min free air; `None` until a system volume is on record.
    pub leak_flow_at_start_pressure_m3_min: Option<f64>,
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

/// Decay windows proposed as `pressure_decay` tests: runs of bins where the header pressure falls
/// and every compressor with a power column (at least one must have one) is off, or, in a bin
/// outside production, off or unloaded; falls allowing rises of [`DECAY_NOISE_BAR`], at least
/// [`DECAY_MIN_DURATION_S`] long and [`DECAY_MIN_FALL_BAR`] deep, fitted with
/// `leaks::fit_pressure_decay` (the flow only with a system volume on record). Longest first.
pub fn decay_events(frame: &Frame, spec: &DataSpec, storage: &StorageSpec) -> Vec<DecayEvent> {
    let grid = frame.grid;
    let site = &spec.air;
    let Some(p) = frame.header_pressure() else { return Vec::new() };
    let p = &p.values;
    let logged = machines::logged(frame, &spec.compressors);
    let st: Vec<&Vec<State>> = logged.states.iter().flatten().collect();
    if st.is_empty() {
        return Vec::new();
    }
    let cal = calendar(&grid, &spec.timezone);
    let flow = specific_power::system_flow(frame, &logged);
    let is_prod = production::production(
        spec.production.as_ref(),
        &cal,
        flow.values.as_deref(),
        logged.total_power.as_deref(),
        None,
        grid.len,
    )
    .is_prod;
    let volume = Some(storage.system_volume_m3()).filter(|v| *v > 0.0 && v.is_finite());
    let all_off = |k: usize| st.iter().all(|s| s[k] == State::Off);
    let ok = |k: usize| {
        p[k].is_finite()
            && (all_off(k)
                || (!is_prod[k] && st.iter().all(|s| matches!(s[k], State::Off | State::Unloaded))))
    };
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
            // The fit's shape (r², the pressures) needs no volume; its flow scales with it.
            if let Ok(fit) = fit_pressure_decay(&samples, Volume(volume.unwrap_or(1.0)), site) {
                let (s_ms, e_ms) = (grid.bin_start_ms(start), grid.bin_start_ms(end));
                events.push(DecayEvent {
                    start_ms: s_ms,
                    end_ms: e_ms,
                    start: ts_string(s_ms),
                    end: ts_string(e_ms),
                    start_pressure_bar_g: fit.start_pressure.bar_g(site.atmosphere),
                    end_pressure_bar_g: fit.end_pressure.bar_g(site.atmosphere),
                    duration_s: dur,
                    all_off: (start..=end).all(all_off),
                    outside_production: (start..=end).all(|i| !is_prod[i]),
                    volume_m3: volume,
                    leak_flow_at_start_pressure_m3_min: volume.map(|_| fit.leak_flow_at_start.m3_min()),
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
