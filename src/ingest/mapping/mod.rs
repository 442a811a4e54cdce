/*!
The mapping of a logger file (which column is which quantity, in which unit) and its validation
against the file's header into a [`Plan`].

Every logged value becomes SI units on the way in, on the basis the meter logged
(`core::basis`; the site's air is applied when the readings are read): pressure in Pa, gauge or
absolute as logged, flow in m³/s free air, at reference conditions or at line conditions, power in
W (current becomes power), energy counters in J, temperature in K. The units a mapping may name,
their spellings and their factors are the one table of [`crate::core::unit_table`]; [`rules`] turns
a column's unit into its conversion and basis:

- Gauge pressure stays gauge (absolute with the site's atmosphere when read). A bare `bar` or
  `psi` is refused: the mapping must say gauge or absolute (the sniffer proposes gauge, common shop
  practice).
- Reference-condition flows keep their `reference` (free air at the site inlet when read, dry
  ideal gas, `SiteAir::free_air_from_reference`). Defaults when `reference` is absent:
  `Nm3` DIN 1343 (101.325 kPa, 0 °C), `Sm3` ISO 1217 standard inlet (100 kPa, 20 °C), `scfm` ASME
  (14.696 psia, 68 °F). A `reference` on a free-air unit is refused rather than guessed at.
- Actual-volume flows (`acfm`, `am3_min`, `am3_h`) need `line`: a fixed line pressure and
  temperature (stored as logged, made free air when read), or a mapped pressure column (each row made
  normal volume with that row's pressure); refused naming the column without them.
- Current to power: P = sqrt(3) V_LL I PF for three phases, V I PF for one (the active power of a
  balanced load, IEC 60050; reading power from logged amps so is common practice); `phases`
  defaults to 3. With
  `unloaded_power_factor` and `unloaded_below_a`, a current below that threshold uses the unloaded
  power factor (PF falls steeply at no load). `loaded_spot` / `unloaded_spot` (amps and kW read
  beside the logger) calibrate a state's power factor instead; the power factors' uncertainty goes
  with the channel to the power's range (`rules::pf_uncertainty`).
- Power, energy and current columns must name their `compressor`.
*/

mod rules;
#[cfg(test)]
mod tests;

pub use rules::{Converter, UnitRule};

use crate::core::basis::{Basis, CurrentPf};
use crate::core::series::PressurePoint;
use crate::core::unit_table::{self, LoggedQuantity};
use crate::core::units::{ReferenceConditions, SiteAir};
use crate::ingest::text::Encoding;
use crate::ingest::timestamp::TimestampParser;
use crate::ingest::IngestError;
use rules::column_rule;
use serde::{Deserialize, Serialize};

fn default_delimiter() -> String {
    ",".into()
}
fn default_decimal() -> String {
    ".".into()
}
fn default_header_line() -> u32 {
    1
}
fn default_timezone() -> String {
    "UTC".into()
}

/// How a logger file is read. Serde shape as in API.md (`Logger files`).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct Mapping {
    #[serde(default = "default_delimiter")]
    pub delimiter: String,
    #[serde(default = "default_decimal")]
    pub decimal: String,
    #[serde(default = "default_header_line")]
    pub header_line: u32,
    /// The 1-based line holding each column's unit under the names (`[kW]`, `bar`); it is skipped.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub units_line: Option<u32>,
    /// The 1-based line of the first data row: lines between the header and it (units,
    /// aggregation words such as `Avg`, a second header row) are skipped. Absent: the line after
    /// the header (or after `units_line`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub first_data_line: Option<u32>,
    /// Cell texts read as missing values besides the built-in markers (compared trimmed, ASCII
    /// case-insensitive), e.g. `["-9999", "E-11"]`.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub missing_markers: Vec<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub encoding: Option<String>,
    pub timestamp: TimestampSpec,
    pub columns: Vec<ColumnMap>,
    #[serde(default)]
    pub clock_offset_s: f64,
}

/// Where the timestamp is and how it is written.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct TimestampSpec {
    pub column: String,
    pub format: String,
    #[serde(default = "default_timezone")]
    pub timezone: String,
    /// Date and time in two columns: `column` holds the date, this the time; `format` covers
    /// both joined by one space.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub time_column: Option<String>,
    /// The cell is an interval (`14.05.2026 08:00 - 14.05.2026 08:15`): which end stamps the row.
    /// `format` reads one end; the ends are split at ` - ` (or an en dash, or ` to `).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub interval: Option<IntervalEnd>,
}

/// Which end of an interval timestamp a row is stamped with.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq, Eq)]
#[serde(rename_all = "snake_case")]
pub enum IntervalEnd {
    Start,
    End,
}

/// One mapped column.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct ColumnMap {
    pub column: String,
    pub quantity: String,
    pub unit: String,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub compressor: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub reference: Option<ReferenceConditions>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub volts: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub power_factor: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub unloaded_power_factor: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub unloaded_below_a: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub phases: Option<u8>,
    /// ± the power factor(s), absolute (a standard uncertainty: 0.05 for ±0.05).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub power_factor_uncertainty: Option<f64>,
    /// A spot reading of current and true power while loaded, to calibrate the power factor from.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub loaded_spot: Option<SpotReading>,
    /// The same while running unloaded (needs `unloaded_below_a`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub unloaded_spot: Option<SpotReading>,
    /// The line conditions of an actual-volume flow (`acfm`, `am3_min`, `am3_h`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub line: Option<LineConditions>,
    /// Where a pressure was measured (`discharge`, `after_treatment`, `header`: the default,
    /// `point_of_use`); pressure columns only.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub point: Option<String>,
    /// The measuring point's name (`press shop drop`): the channel's name, so that the same point
    /// logged in several files is one channel.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub label: Option<String>,
}

/// The longest measuring point's name a mapping may give.
pub const MAX_POINT_LABEL_CHARS: usize = 80;

/// A column's measuring point and the channel's name (its `label`, else its header name), checked:
/// `point` on a pressure column only, one of [`PressurePoint`]'s names; `label` short.
fn column_point(c: &ColumnMap, i: usize, header_name: &str) -> Result<(PressurePoint, String), IngestError> {
    let is_pressure = c.quantity.trim().eq_ignore_ascii_case("pressure");
    let point = match c.point.as_deref().map(str::trim).filter(|s| !s.is_empty()) {
        None => PressurePoint::Header,
        Some(_) if !is_pressure => {
            return Err(IngestError::field(
                format!("columns[{i}].point"),
                format!("column {:?} is not a pressure: only a pressure has a measuring point", c.column),
            )
            .with_column(c.column.clone()))
        }
        Some(p) => PressurePoint::parse(p).ok_or_else(|| {
            IngestError::field(
                format!("columns[{i}].point"),
                format!(
                    "measuring point {p:?} of column {:?} is not one of compressor discharge (discharge), \
                     after treatment (after_treatment), header (header) or point of use (point_of_use)",
                    c.column
                ),
            )
            .with_column(c.column.clone())
        })?,
    };
    let label = match c.label.as_deref().map(str::trim).filter(|s| !s.is_empty()) {
        None => header_name.to_string(),
        Some(l) if l.chars().count() > MAX_POINT_LABEL_CHARS || l.chars().any(char::is_control) => {
            return Err(IngestError::field(
                format!("columns[{i}].label"),
                format!(
                    "the name of column {:?}'s measuring point must be at most {MAX_POINT_LABEL_CHARS} \
                     characters on one line",
                    c.column
                ),
            )
            .with_column(c.column.clone()))
        }
        Some(l) => l.to_string(),
    };
    Ok((point, label))
}

/// A spot reading taken beside the current logger with a true-power meter: amps and kW.
#[derive(Debug, Clone, Copy, Serialize, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct SpotReading {
    pub a: f64,
    pub kw: f64,
}

/// Where an actual-volume flow meter sits: its line pressure (a fixed value, gauge or absolute, or
/// a mapped pressure column of the same file) and its line temperature, °C.
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq, Default)]
#[serde(deny_unknown_fields)]
pub struct LineConditions {
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pressure_bar_g: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pressure_bar_a: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub pressure_column: Option<String>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub temperature_c: Option<f64>,
}

impl ColumnMap {
    /// A column with just quantity and unit (and compressor), the rest unset.
    pub fn new(column: &str, quantity: &str, unit: &str, compressor: Option<&str>) -> Self {
        Self {
            column: column.into(),
            quantity: quantity.into(),
            unit: unit.into(),
            compressor: compressor.map(str::to_string),
            reference: None,
            volts: None,
            power_factor: None,
            unloaded_power_factor: None,
            unloaded_below_a: None,
            phases: None,
            power_factor_uncertainty: None,
            loaded_spot: None,
            unloaded_spot: None,
            line: None,
            point: None,
            label: None,
        }
    }
}

/// What a channel measures, in canonical SI: power W (current becomes power), energy J (a
/// counter), pressure Pa absolute, flow m³/s free air, temperature K.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Quantity {
    Power,
    Energy,
    Pressure,
    Flow,
    Temperature,
}

impl Quantity {
    pub fn as_str(self) -> &'static str {
        match self {
            Self::Power => "power",
            Self::Energy => "energy",
            Self::Pressure => "pressure",
            Self::Flow => "flow",
            Self::Temperature => "temperature",
        }
    }
}

/// One channel of a plan.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ChannelDef {
    pub quantity: Quantity,
    pub compressor: Option<String>,
    /// The channel's name: the mapping's `label`, else the column's header name.
    pub label: String,
    /// Where a pressure was measured (the header for every other quantity), and whether the
    /// mapping said so (else the channel keeps the point an earlier file gave it).
    pub point: PressurePoint,
    pub point_stated: bool,
    /// The unit as logged (`kW`, `psig`, `A`...).
    pub unit: String,
    /// 0-based field index in the row.
    pub column_index: usize,
    /// The basis its readings are stored on (`core::basis`).
    pub basis: Basis,
    /// Power made from current: how its power factor was known.
    pub current: Option<CurrentPf>,
}

/// A mapping resolved against a header.
#[derive(Debug, Clone)]
pub struct Plan {
    pub channels: Vec<ChannelDef>,
    /// Conversion rule per channel (same order as `channels`).
    pub rules: Vec<UnitRule>,
    /// Per channel: the channel whose readings are its line pressure (a line flow read against a
    /// mapped pressure column).
    pub line_pressure: Vec<Option<usize>>,
    pub delimiter: u8,
    pub decimal: u8,
    pub header_line: u32,
    /// Records starting before this 1-based line, after the header, are skipped (units row,
    /// aggregation row); 0 when nothing is skipped.
    pub data_from_line: u64,
    /// The mapping's extra missing-value markers, trimmed, as bytes.
    pub missing_markers: Vec<Vec<u8>>,
    /// Which end of an interval timestamp stamps the row.
    pub interval: Option<IntervalEnd>,
    pub encoding: Option<Encoding>,
    /// 0-based index of the timestamp (or date) column, and of the time column if separate.
    pub timestamp_index: usize,
    pub time_index: Option<usize>,
    pub timestamp_label: String,
    /// The mapping's timestamp format as written (for messages).
    pub timestamp_format: String,
    /// The ready timestamp reader (format, zone, clock offset).
    pub timestamps: TimestampParser,
}

impl Plan {
    /// The converters for a site, one per channel.
    pub fn converters(&self, site: &SiteAir) -> Vec<Converter> {
        self.rules.iter().map(|r| r.converter(site)).collect()
    }
}

/// Parse a delimiter spelling: `,` `;` `\t` (or `tab`) `|`.
pub fn delimiter_byte(d: &str) -> Option<u8> {
    match d {
        "," => Some(b','),
        ";" => Some(b';'),
        "\t" | "tab" | "\\t" | "TAB" => Some(b'\t'),
        "|" => Some(b'|'),
        _ => None,
    }
}

fn find_column(header: &[String], name: &str) -> Result<usize, String> {
    let want = name.trim();
    let exact: Vec<usize> =
        header.iter().enumerate().filter(|(_, h)| h.trim() == want).map(|(i, _)| i).collect();
    let hits = if exact.is_empty() {
        header
            .iter()
            .enumerate()
            .filter(|(_, h)| h.trim().eq_ignore_ascii_case(want))
            .map(|(i, _)| i)
            .collect()
    } else {
        exact
    };
    match hits.as_slice() {
        [i] => Ok(*i),
        [] => Err(format!("column {name:?} is not in the header")),
        _ => Err(format!("column {name:?} appears more than once in the header")),
    }
}

/// The channels a mapping writes, in the order the sink receives them (the order of
/// `mapping.columns`), before the file's header is read: the importer creates its channel rows
/// from these. Labels are the mapping's column names.
pub fn channel_defs(mapping: &Mapping) -> Result<Vec<ChannelDef>, IngestError> {
    if mapping.columns.is_empty() {
        return Err(IngestError::field("columns", "the mapping names no columns to read"));
    }
    mapping
        .columns
        .iter()
        .enumerate()
        .map(|(i, c)| {
            let (quantity, rule) = column_rule(c, i)?;
            line_pressure_channel(mapping, c, i)?;
            let (point, label) = column_point(c, i, c.column.trim())?;
            Ok(ChannelDef {
                quantity,
                compressor: c.compressor.as_ref().map(|s| s.trim().to_string()).filter(|s| !s.is_empty()),
                label,
                point,
                point_stated: c.point.is_some(),
                unit: c.unit.clone(),
                column_index: i,
                basis: rule.basis(),
                current: rule.current_pf(),
            })
        })
        .collect()
}

/// For a line flow read against `line.pressure_column`: the index (in the mapping's columns, the
/// order of the channels) of that column, which must be a mapped pressure column.
fn line_pressure_channel(mapping: &Mapping, c: &ColumnMap, i: usize) -> Result<Option<usize>, IngestError> {
    let Some(name) = c.line.as_ref().and_then(|l| l.pressure_column.as_deref()) else { return Ok(None) };
    let name = name.trim();
    mapping
        .columns
        .iter()
        .position(|p| p.column.trim() == name && p.quantity.trim().eq_ignore_ascii_case("pressure"))
        .map(Some)
        .ok_or_else(|| {
            IngestError::field(
                format!("columns[{i}].line.pressure_column"),
                format!(
                    "line pressure column {name:?} of flow column {:?} is not a mapped pressure column \
                     (map it with quantity \"pressure\" and its unit)",
                    c.column
                ),
            )
            .with_column(c.column.clone())
        })
}

/// The units the mapping form offers for each quantity, from [`unit_table::choices`]: the code
/// the mapping stores (API.md spellings) and the label a person reads, `{"power": [{"code": "kW",
/// "label": "kW"}, ...], "pressure": [{"code": "bar_g", "label": "bar(g)"}, ...]}`.
pub fn units_by_quantity() -> serde_json::Value {
    let mut by_quantity = serde_json::Map::new();
    for q in LoggedQuantity::ALL {
        let codes: Vec<serde_json::Value> =
            unit_table::choices(q).map(|u| serde_json::json!({"code": u.code, "label": u.label})).collect();
        by_quantity.insert(q.as_str().into(), codes.into());
    }
    serde_json::Value::Object(by_quantity)
}

/// What the mapping form puts in a current column's details before anyone types: assumptions, said
/// beside the fields as such, for the auditor to check against the motor's nameplate. Three phases
/// and a loaded power factor of 0.85 (a screw compressor's induction motor near full load, common
/// practice); the line voltage follows the audit's unit system: 400 V in an SI audit (IEC 60038's
/// low-voltage network), 460 V in a US audit (the motor rating for 480 V three-phase systems,
/// NEMA MG 1, from memory; common practice for US industrial plants). A wrong guess moves every kW
/// read from the column in proportion, hence the note.
pub fn current_defaults(units: crate::core::units::UnitSystem) -> serde_json::Value {
    let volts = match units {
        crate::core::units::UnitSystem::Si => 400.0,
        crate::core::units::UnitSystem::Us => 460.0,
    };
    serde_json::json!({
        "volts": volts,
        "phases": 3,
        "power_factor": 0.85,
        "note": format!(
            "Assumed, not read from the file: {volts} V between lines, 3 phases, power factor 0.85 loaded. \
             Check them against the motor's nameplate (or measure a spot reading of amps and kW): every kW \
             read from this column moves in proportion."
        ),
    })
}

/// Validate a mapping against a header and resolve it.
pub fn plan(mapping: &Mapping, header: &[String]) -> Result<Plan, IngestError> {
    let delimiter = delimiter_byte(&mapping.delimiter).ok_or_else(|| {
        IngestError::field("delimiter", format!("unknown delimiter {:?}", mapping.delimiter))
    })?;
    let decimal = match mapping.decimal.as_str() {
        "." => b'.',
        "," => b',',
        d => return Err(IngestError::field("decimal", format!("decimal mark must be . or , got {d:?}"))),
    };
    if decimal == delimiter {
        return Err(IngestError::field("decimal", "decimal mark and delimiter are both \",\""));
    }
    if mapping.header_line == 0 {
        return Err(IngestError::field("header_line", "header_line is 1-based, got 0"));
    }
    let data_from_line = data_from_line(mapping)?;
    let missing_markers = missing_markers(&mapping.missing_markers)?;
    let encoding = match &mapping.encoding {
        None => None,
        Some(e) => Some(
            Encoding::parse(e)
                .ok_or_else(|| IngestError::field("encoding", format!("unknown encoding {e:?}")))?,
        ),
    };
    let ts = &mapping.timestamp;
    let timestamp_index = find_column(header, &ts.column)
        .map_err(|m| IngestError::field("timestamp.column", m).with_column(ts.column.clone()))?;
    let time_index = match &ts.time_column {
        None => None,
        Some(t) => Some(
            find_column(header, t)
                .map_err(|m| IngestError::field("timestamp.time_column", m).with_column(t.clone()))?,
        ),
    };
    let timestamps = TimestampParser::new(&ts.format, &ts.timezone, mapping.clock_offset_s)?;
    let mut channels = Vec::with_capacity(mapping.columns.len());
    let mut rules = Vec::with_capacity(mapping.columns.len());
    let mut line_pressure = Vec::with_capacity(mapping.columns.len());
    for (i, c) in mapping.columns.iter().enumerate() {
        let column_index = find_column(header, &c.column).map_err(|m| {
            IngestError::field(format!("columns[{i}].column"), m).with_column(c.column.clone())
        })?;
        let (quantity, rule) = column_rule(c, i)?;
        line_pressure.push(line_pressure_channel(mapping, c, i)?);
        let (point, label) = column_point(c, i, header[column_index].trim())?;
        channels.push(ChannelDef {
            quantity,
            compressor: c.compressor.as_ref().map(|s| s.trim().to_string()),
            label,
            point,
            point_stated: c.point.is_some(),
            unit: c.unit.clone(),
            column_index,
            basis: rule.basis(),
            current: rule.current_pf(),
        });
        rules.push(rule);
    }
    if channels.is_empty() {
        return Err(IngestError::field("columns", "the mapping names no columns to read"));
    }
    Ok(Plan {
        channels,
        rules,
        line_pressure,
        delimiter,
        decimal,
        header_line: mapping.header_line,
        data_from_line,
        missing_markers,
        interval: ts.interval,
        encoding,
        timestamp_index,
        time_index,
        timestamp_label: header[timestamp_index].trim().to_string(),
        timestamp_format: ts.format.clone(),
        timestamps,
    })
}

/// The first line a data row may start on, from `units_line` and `first_data_line` (0: no skip).
fn data_from_line(mapping: &Mapping) -> Result<u64, IngestError> {
    let header = mapping.header_line;
    if let Some(u) = mapping.units_line {
        if u <= header {
            return Err(IngestError::field(
                "units_line",
                format!("units_line {u} must be below the header line {header}"),
            ));
        }
    }
    match (mapping.first_data_line, mapping.units_line) {
        (Some(f), _) if f <= header => Err(IngestError::field(
            "first_data_line",
            format!("first_data_line {f} must be below the header line {header}"),
        )),
        (Some(f), Some(u)) if f <= u => Err(IngestError::field(
            "first_data_line",
            format!("first_data_line {f} must be below the units line {u}"),
        )),
        (Some(f), _) => Ok(u64::from(f)),
        (None, Some(u)) => Ok(u64::from(u) + 1),
        (None, None) => Ok(0),
    }
}

/// At most this many extra markers, each at most this long (bytes).
const MAX_MARKERS: usize = 64;
const MAX_MARKER_BYTES: usize = 64;

fn missing_markers(markers: &[String]) -> Result<Vec<Vec<u8>>, IngestError> {
    if markers.len() > MAX_MARKERS {
        return Err(IngestError::field(
            "missing_markers",
            format!("at most {MAX_MARKERS} missing-value markers, got {}", markers.len()),
        ));
    }
    markers
        .iter()
        .enumerate()
        .map(|(i, m)| {
            let t = m.trim();
            if t.is_empty() || t.len() > MAX_MARKER_BYTES {
                return Err(IngestError::field(
                    format!("missing_markers[{i}]"),
                    format!("a missing-value marker is 1 to {MAX_MARKER_BYTES} bytes, got {m:?}"),
                ));
            }
            Ok(t.as_bytes().to_vec())
        })
        .collect()
}
