//! The two logger files, each in its own layout (the module doc's "The logger files"): a true-power
//! logger with `;`, decimal commas, a preamble and local time stamps, each value the mean of its
//! interval; and a header pressure and flow logger with `,`, RFC 3339 UTC stamps from a clock that runs
//! fast, pressure sampled, flow averaged. Each gets its mapping (API.md `Logger files`).

use std::fmt::Write as _;

use serde_json::json;

use super::calendar::{berlin_local, push_berlin_dmy, push_rfc3339_utc};
use super::noise::Rng;
use super::plant::INLET_C;
use super::DemoFile;
use crate::core::units::{ReferenceConditions, SiteAir};

/// The pipe's drop from the header to the press shop, bar per (m³/min)² of system flow (invented:
/// 0.01 bar at 10 m³/min, 0.16 bar at 40).
pub(super) const PRESS_SHOP_DROP_BAR_PER_M3_MIN_SQ: f64 = 0.0001;

/// The header/flow logger's clock runs this many seconds fast.
pub(super) const PRESSURE_LOGGER_FAST_S: u64 = 7;

/// Both loggers, fed with the true values at every simulation step.
pub(super) struct Loggers {
    meter: Rng,
    press_interval_s: u64,
    power_bin: u64,
    press_bin: u64,
    power_sum: [f64; 3],
    power_n: u64,
    flow_sum: f64,
    flow_n: u64,
    power_due: u64,
    press_due: u64,
    nm3_h_per_m3_min: f64,
    power_csv: String,
    press_csv: String,
}

impl Loggers {
    /// Loggers for `total_s` seconds, the power logger every `interval_s`, the header/flow logger
    /// every 2 intervals, for a simulation of `steps_per_s` steps per second.
    pub(super) fn new(
        seed: u64,
        interval_s: u64,
        total_s: u64,
        steps_per_s: u64,
        site_air: &SiteAir,
    ) -> Self {
        // Steps per power interval; the pressure logger reads at 2 intervals.
        let power_bin = interval_s * steps_per_s;
        let press_interval_s = 2 * interval_s;
        let press_bin = press_interval_s * steps_per_s;
        let fast_offset_steps = PRESSURE_LOGGER_FAST_S * steps_per_s;

        let power_rows = (total_s / interval_s) as usize;
        let mut power_csv = String::with_capacity(power_rows * 48 + 256);
        let _ = writeln!(power_csv, "Logger;three-phase true power, 3 channels (invented)");
        let _ = writeln!(power_csv, "Site;Brackwen Castings, compressor house 2");
        let _ = writeln!(power_csv, "Interval;{interval_s} s mean");
        power_csv.push_str("Time;C1 kW;C2 kW;C3 kW\n");
        let mut press_csv = String::with_capacity((total_s / press_interval_s) as usize * 48 + 64);
        press_csv.push_str("time_utc,header_bar_g,flow_Nm3_h,inlet_temp_C,press_shop_bar_g\n");

        Self {
            meter: Rng::new(seed ^ 0x05EE_D0F3_E7E5),
            press_interval_s,
            power_bin,
            press_bin,
            power_sum: [0.0f64; 3],
            power_n: 0,
            flow_sum: 0.0,
            flow_n: 0,
            // Steps to the next reading of each logger. The header logger reads when its fast clock
            // shows a multiple of its interval, i.e. `fast_offset_steps` before a true multiple.
            power_due: power_bin,
            press_due: press_bin - fast_offset_steps % press_bin,
            nm3_h_per_m3_min: site_air.reference_from_free_air(60.0, ReferenceConditions::NORMAL_DIN_1343),
            power_csv,
            press_csv,
        }
    }

    /// The header/flow logger's interval, s.
    pub(super) fn press_interval_s(&self) -> u64 {
        self.press_interval_s
    }

    /// One step's true package powers (kW) and system demand (m³/min free air).
    pub(super) fn sample(&mut self, kw: [f64; 3], demand_m3_min: f64) {
        for (s, k) in self.power_sum.iter_mut().zip(kw) {
            *s += k;
        }
        self.power_n += 1;
        self.flow_sum += demand_m3_min;
        self.flow_n += 1;
    }

    /// The end of a step at true time `end_unix` with header pressure `p_bar_g`: each logger writes
    /// its row when its interval is over.
    pub(super) fn end_step(&mut self, end_unix: i64, p_bar_g: f64) {
        self.power_due -= 1;
        self.press_due -= 1;
        if self.power_due == 0 {
            self.power_due = self.power_bin;
            push_berlin_dmy(&mut self.power_csv, end_unix);
            for s in &self.power_sum {
                let mean = s / self.power_n as f64;
                let v = (mean + self.meter.gauss() * (0.002 * mean + 0.02)).max(0.0);
                self.power_csv.push(';');
                push_comma(&mut self.power_csv, v, 2);
            }
            self.power_csv.push('\n');
            self.power_sum = [0.0; 3];
            self.power_n = 0;
        }
        if self.press_due == 0 {
            self.press_due = self.press_bin;
            if self.flow_n == self.press_bin {
                let meter = &mut self.meter;
                let stamp = end_unix + PRESSURE_LOGGER_FAST_S as i64;
                push_rfc3339_utc(&mut self.press_csv, stamp);
                let p_read = p_bar_g + 0.004 * meter.gauss();
                let q_mean = self.flow_sum / self.flow_n as f64;
                let nm3_h = (q_mean * self.nm3_h_per_m3_min * (1.0 + 0.005 * meter.gauss())
                    + 0.5 * meter.gauss())
                .max(0.0);
                // Inlet air: a gentle daily swing around the site value, coldest at 05:00 local.
                let (_, sod_end) = berlin_local(end_unix);
                let phase = (sod_end as f64 / 3600.0 - 11.0) / 24.0 * std::f64::consts::TAU;
                let t_in = INLET_C + 1.5 * phase.sin() + 0.1 * meter.gauss();
                // The press shop at the far end of the main: the header's reading less the pipe's
                // drop, which grows with the square of the flow (turbulent flow, Darcy-Weisbach);
                // no draw of its own from the noise, so the other readings stay as they were.
                let p_shop = p_read - PRESS_SHOP_DROP_BAR_PER_M3_MIN_SQ * q_mean * q_mean;
                let _ = writeln!(self.press_csv, ",{p_read:.3},{nm3_h:.1},{t_in:.1},{p_shop:.3}");
            }
            self.flow_sum = 0.0;
            self.flow_n = 0;
        }
    }

    /// The two files as logged, with their mappings.
    pub(super) fn finish(self) -> Vec<DemoFile> {
        let norm = ReferenceConditions::NORMAL_DIN_1343;
        let power_mapping = json!({
            "delimiter": ";",
            "decimal": ",",
            "header_line": 4,
            "timestamp": {"column": "Time", "format": "%d.%m.%Y %H:%M:%S", "timezone": "Europe/Berlin"},
            "columns": [
                {"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"},
                {"column": "C2 kW", "quantity": "power", "unit": "kW", "compressor": "C2"},
                {"column": "C3 kW", "quantity": "power", "unit": "kW", "compressor": "C3"}
            ]
        });
        let press_mapping = json!({
            "delimiter": ",",
            "decimal": ".",
            "header_line": 1,
            "timestamp": {"column": "time_utc", "format": "rfc3339", "timezone": "UTC"},
            "clock_offset_s": -(PRESSURE_LOGGER_FAST_S as i64),
            "columns": [
                {"column": "header_bar_g", "quantity": "pressure", "unit": "bar_g", "label": "main header"},
                {"column": "flow_Nm3_h", "quantity": "flow", "unit": "Nm3_h",
                 "reference": {"pressure_kpa_abs": norm.pressure_kpa_abs,
                               "temperature_c": norm.temperature_c}},
                {"column": "inlet_temp_C", "quantity": "temperature", "unit": "C"},
                {"column": "press_shop_bar_g", "quantity": "pressure", "unit": "bar_g",
                 "point": "point_of_use", "label": "press shop"}
            ]
        });
        vec![
            DemoFile { filename: "power_logger.csv".into(), csv: self.power_csv, mapping: power_mapping },
            DemoFile {
                filename: "header_flow_logger.csv".into(),
                csv: self.press_csv,
                mapping: press_mapping,
            },
        ]
    }
}

/// A number with a decimal comma.
fn push_comma(out: &mut String, v: f64, decimals: usize) {
    let start = out.len();
    let _ = write!(out, "{v:.decimals$}");
    if let Some(i) = out[start..].find('.') {
        out.replace_range(start + i..start + i + 1, ",");
    }
}
