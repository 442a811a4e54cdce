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
                Some(LoggedQuantity::Current) => "current (read as power)".into(),
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
            format!("{who}{what}{named} in {unit}")
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
}
