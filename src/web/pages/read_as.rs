//! How each logger file was read, in words, for the files table: which compressor's power, which
//! pressure (and its measuring point's name), which flow, in which unit, and the clock its times
//! were read on. A wrong mapping then shows where the file is listed, not only once its mapping is opened.

use crate::core::series::PressurePoint;
use crate::core::unit_table::{self, LoggedQuantity};
use crate::ingest::mapping::Mapping;

/// The words for one file's stored mapping; empty when it cannot be read (an old or odd record).
pub fn mapping_in_words(mapping: &serde_json::Value, site_tz: &str) -> Vec<String> {
    let Ok(m) = serde_json::from_value::<Mapping>(mapping.clone()) else { return vec![] };
    let mut lines: Vec<String> = m
        .columns
        .iter()
        .map(|c| {
            let q =
                LoggedQuantity::ALL.into_iter().find(|q| q.as_str().eq_ignore_ascii_case(c.quantity.trim()));
            let what = match q {
                Some(LoggedQuantity::Pressure) => {
                    match c.point.as_deref().and_then(PressurePoint::parse).unwrap_or(PressurePoint::Header) {
                        PressurePoint::Header => "header pressure",
                        PressurePoint::Discharge => "discharge pressure",
                        PressurePoint::AfterTreatment => "pressure after treatment",
                        PressurePoint::PointOfUse => "pressure at a point of use",
                    }
                    .to_string()
                }
                Some(LoggedQuantity::Energy) => "energy counter".into(),
                Some(LoggedQuantity::Current) => "current".into(),
                Some(other) => other.as_str().into(),
                None => c.quantity.clone(),
            };
            let who = c.compressor.as_deref().map_or(String::new(), |t| format!("{t} "));
            let unit = q
                .and_then(|q| unit_table::find(q, &c.unit))
                .map_or_else(|| c.unit.clone(), |u| u.label.to_string());
            // The measuring point's name when the mapping gave one; never the file's column name,
            // which is often a code ("header_bar_g").
            let named = c.label.as_deref().map(str::trim).filter(|l| !l.is_empty());
            let named = named.map_or(String::new(), |l| format!(" (\u{201c}{l}\u{201d})"));
            let mut line = format!("{who}{what}{named} in {unit}");
            if q == Some(LoggedQuantity::Current) {
                line += &current_in_words(c);
            }
            line
        })
        .collect();
    let tz = m.timestamp.timezone.trim();
    lines.push(if tz.is_empty() || tz == site_tz {
        format!("times read on the site's clock ({site_tz})")
    } else {
        format!("times read on a {tz} clock, shown in the site's ({site_tz})")
    });
    lines
}

/// How a current column was made power, with the figures it was read with (`√3·V·I·PF`): the
/// voltage, phases and power factors are a person's assumptions, which the files table shows.
fn current_in_words(c: &crate::ingest::mapping::ColumnMap) -> String {
    // As typed: up to two decimals, no trailing zeros.
    let n = |v: f64| {
        let s = crate::core::display::num(v, 2);
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    };
    let mut s = String::from(", read as power");
    if let Some(v) = c.volts {
        s += &format!(" at {} V", n(v));
    }
    let phases = c.phases.unwrap_or(3);
    s += &format!(", {phases} {}", if phases == 1 { "phase" } else { "phases" });
    match (&c.loaded_spot, c.power_factor) {
        (Some(spot), _) => {
            s += &format!(", power factor from a spot reading of {} A at {} kW", n(spot.a), n(spot.kw))
        }
        (None, Some(pf)) => s += &format!(", PF {}", n(pf)),
        (None, None) => {}
    }
    if let Some(below) = c.unloaded_below_a {
        match (&c.unloaded_spot, c.unloaded_power_factor) {
            (Some(spot), _) => {
                s += &format!(
                    "; below {} A, unloaded, its power factor from a spot reading of {} A at {} kW",
                    n(below),
                    n(spot.a),
                    n(spot.kw)
                )
            }
            (None, Some(pf)) => s += &format!("; PF {} unloaded, below {} A", n(pf), n(below)),
            (None, None) => {}
        }
    }
    s
}

#[cfg(test)]
mod tests {
    #[test]
    fn a_mapping_is_said_per_column_with_its_clock() {
        let m = serde_json::json!({
            "timestamp": {"column": "time", "format": "%Y-%m-%dT%H:%M:%SZ", "timezone": "UTC"},
            "columns": [
                {"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"},
                {"column": "P", "quantity": "pressure", "unit": "psig", "point": "point_of_use", "label": "press shop"},
                {"column": "F", "quantity": "flow", "unit": "Nm3_h"}
            ]
        });
        let w = super::mapping_in_words(&m, "America/Chicago");
        assert_eq!(w[0], "C1 power in kW");
        assert_eq!(w[1], "pressure at a point of use (\u{201c}press shop\u{201d}) in psig");
        assert_eq!(w[2], "flow in Nm³/h");
        assert_eq!(w[3], "times read on a UTC clock, shown in the site's (America/Chicago)");
    }

    #[test]
    fn a_current_column_says_the_voltage_phases_and_power_factor_it_was_read_with() {
        // A walk saw only "C1 current (read as power) in A": the 400 V and PF 0.85 behind every kW
        // were nowhere on the page.
        let m = serde_json::json!({
            "timestamp": {"column": "time", "format": "%Y-%m-%dT%H:%M:%SZ", "timezone": "UTC"},
            "columns": [
                {"column": "I1", "quantity": "current", "unit": "A", "compressor": "C1",
                 "volts": 460.0, "phases": 3, "power_factor": 0.85},
                {"column": "I2", "quantity": "current", "unit": "A", "compressor": "C2",
                 "volts": 230.0, "phases": 1, "power_factor": 0.9,
                 "unloaded_power_factor": 0.45, "unloaded_below_a": 30.0},
                {"column": "I3", "quantity": "current", "unit": "A", "compressor": "C3",
                 "volts": 400.0, "loaded_spot": {"a": 52.0, "kw": 30.5}}
            ]
        });
        let w = super::mapping_in_words(&m, "UTC");
        assert_eq!(w[0], "C1 current in A, read as power at 460 V, 3 phases, PF 0.85");
        assert_eq!(
            w[1],
            "C2 current in A, read as power at 230 V, 1 phase, PF 0.9; PF 0.45 unloaded, below 30 A"
        );
        assert_eq!(
            w[2],
            "C3 current in A, read as power at 400 V, 3 phases, power factor from a spot reading of 52 A at 30.5 kW"
        );
    }
}
