/*!
The mapping of a logger file (which column is which quantity, in which unit) and its validation
against the file's header into a [`Plan`].

Unit spellings and the conversions ingest needs live here, so that every logged value becomes
canonical SI on the way in (see `core::units`):

| quantity      | units (case-insensitive; `/` or `_`, `3` or `³`)                        | to            |
|---------------|-------------------------------------------------------------------------|---------------|
| `pressure`    | `bar_g` `bar_a` `psig` `psia` `kPa_g` `kPa_a` `MPa_g` `MPa_a` `mbar_g` `mbar_a` | Pa absolute |
| `flow`        | free air: `m3_min` `m3_h` `m3_s` `l_s` `l_min` `cfm` (`acfm`)           | m³/s free air |
|               | reference: `scfm` `Nm3_h` `Nm3_min` `Sm3_h` `Sm3_min` `Nl_min` `Nl_s`    | m³/s free air |
| `power`       | `W` `kW` `MW`                                                           | W             |
| `current`     | `A` (with `volts`, `power_factor`, `phases` 3 or 1)                     | W             |
| `energy`      | `Wh` `kWh` `MWh` `J` `kJ` `MJ` (a counter)                              | J             |
| `temperature` | `C` `F` `K`                                                             | K             |

- Gauge pressure is made absolute with the site's atmosphere. A bare `bar` or `psi` is refused: the
  mapping must say gauge or absolute (the sniffer proposes gauge, common shop practice).
- Reference-condition flows are converted to free air at the site inlet with their `reference`
  (dry ideal gas, `SiteAir::free_air_from_reference`). Defaults when `reference` is absent:
  `Nm3` DIN 1343 (101.325 kPa, 0 °C), `Sm3` ISO 1217 standard inlet (100 kPa, 20 °C), `scfm` ASME
  (14.696 psia, 68 °F). A `reference` on a free-air unit is refused rather than guessed at.
- Current to power: P = sqrt(3) V_LL I PF for three phases, V I PF for one (FIELD-NOTES §8);
  `phases` defaults to 3. With `unloaded_power_factor` and `unloaded_below_a`, a current below that
  threshold uses the unloaded power factor (PF falls steeply at no load).
- Power, energy and current columns must name their `compressor`.
*/

use crate::core::units::{
    ReferenceConditions, SiteAir, J_PER_KWH, M3_PER_FT3, PA_PER_BAR, PA_PER_PSI, T_ZERO_C,
};
use crate::ingest::text::Encoding;
use crate::ingest::timestamp::TimestampParser;
use crate::ingest::IngestError;
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
    /// The column's header name.
    pub label: String,
    /// The unit as logged (`kW`, `psig`, `A`...).
    pub unit: String,
    /// 0-based field index in the row.
    pub column_index: usize,
}

/// A unit's conversion rule, independent of the site.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum UnitRule {
    /// value * scale (power, energy).
    Scale(f64),
    /// Pressure: Pa per unit, gauge or absolute.
    Pressure { pa_per_unit: f64, gauge: bool },
    /// Flow: m³/s per unit of volume flow, at the reference conditions if any (else free air).
    Flow { m3_s_per_unit: f64, reference: Option<ReferenceConditions> },
    /// Temperature: K = value * scale + offset.
    Temperature { scale: f64, offset: f64 },
    /// Current to power: W = I * k, with k_unloaded below the threshold.
    Current { w_per_a: f64, w_per_a_unloaded: f64, unloaded_below_a: f64 },
}

/// A conversion to SI with the site applied.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Converter {
    Linear { scale: f64, offset: f64 },
    Current { w_per_a: f64, w_per_a_unloaded: f64, unloaded_below_a: f64 },
}

impl Converter {
    #[inline]
    pub fn apply(&self, v: f64) -> f64 {
        match *self {
            Self::Linear { scale, offset } => v * scale + offset,
            Self::Current { w_per_a, w_per_a_unloaded, unloaded_below_a } => {
                if v < unloaded_below_a {
                    v * w_per_a_unloaded
                } else {
                    v * w_per_a
                }
            }
        }
    }

    /// The inverse (SI back to the logged unit), for messages. For current, SI back to kW.
    pub fn to_logged(&self, si: f64) -> f64 {
        match *self {
            Self::Linear { scale, offset } => (si - offset) / scale,
            Self::Current { .. } => si / 1000.0,
        }
    }
}

impl UnitRule {
    /// The converter for a site.
    pub fn converter(&self, site: &SiteAir) -> Converter {
        match *self {
            Self::Scale(scale) => Converter::Linear { scale, offset: 0.0 },
            Self::Pressure { pa_per_unit, gauge } => {
                Converter::Linear { scale: pa_per_unit, offset: if gauge { site.atmosphere.0 } else { 0.0 } }
            }
            Self::Flow { m3_s_per_unit, reference } => Converter::Linear {
                scale: match reference {
                    Some(r) => site.free_air_from_reference(m3_s_per_unit, r),
                    None => m3_s_per_unit,
                },
                offset: 0.0,
            },
            Self::Temperature { scale, offset } => Converter::Linear { scale, offset },
            Self::Current { w_per_a, w_per_a_unloaded, unloaded_below_a } => {
                Converter::Current { w_per_a, w_per_a_unloaded, unloaded_below_a }
            }
        }
    }
}

/// A unit spelling in a normal form: lower case, `³` -> `3`, `/`, ` `, `-`, `(`, `)`, `.` -> `_`,
/// `°` dropped, runs of `_` collapsed, no leading/trailing `_`.
pub fn normalize_unit(unit: &str) -> String {
    let mut out = String::with_capacity(unit.len());
    for ch in unit.trim().chars() {
        let c = match ch {
            '³' => '3',
            '/' | ' ' | '-' | '(' | ')' | '.' | '[' | ']' => '_',
            '°' | 'º' => continue,
            c => c.to_ascii_lowercase(),
        };
        if c == '_' && (out.is_empty() || out.ends_with('_')) {
            continue;
        }
        out.push(c);
    }
    while out.ends_with('_') {
        out.pop();
    }
    out
}

/// Pressure unit: (Pa per unit, gauge).
pub fn pressure_unit(unit: &str) -> Option<(f64, bool)> {
    let n = normalize_unit(unit);
    let (base, gauge) = if let Some(b) = n.strip_suffix("_g").or_else(|| n.strip_suffix("g")) {
        (b, true)
    } else if let Some(b) = n.strip_suffix("_a").or_else(|| n.strip_suffix("a")) {
        (b, false)
    } else if let Some(b) = n.strip_suffix("_abs") {
        (b, false)
    } else {
        return None;
    };
    let base = base.trim_end_matches('_');
    let pa = match base {
        "bar" => PA_PER_BAR,
        "mbar" => PA_PER_BAR / 1000.0,
        "psi" => PA_PER_PSI,
        "kpa" => 1000.0,
        "mpa" => 1.0e6,
        "pa" => 1.0,
        _ => return None,
    };
    Some((pa, gauge))
}

/// Flow unit: (m³/s per unit, default reference conditions if it is a standard/normal unit).
/// Returns `Some((scale, None))` for free air units.
pub fn flow_unit(unit: &str) -> Option<(f64, Option<ReferenceConditions>)> {
    let n = normalize_unit(unit);
    let n = n.replace("per_", "");
    const MIN: f64 = 60.0;
    const H: f64 = 3600.0;
    let r = match n.as_str() {
        "m3_min" | "m3min" => (1.0 / MIN, None),
        "m3_h" | "m3h" | "m3_hr" => (1.0 / H, None),
        "m3_s" => (1.0, None),
        "l_s" | "ls" => (1e-3, None),
        "l_min" | "lpm" => (1e-3 / MIN, None),
        "cfm" | "acfm" | "ft3_min" => (M3_PER_FT3 / MIN, None),
        "scfm" => (M3_PER_FT3 / MIN, Some(ReferenceConditions::STANDARD_ASME_SCFM)),
        "nm3_h" | "nm3h" => (1.0 / H, Some(ReferenceConditions::NORMAL_DIN_1343)),
        "nm3_min" => (1.0 / MIN, Some(ReferenceConditions::NORMAL_DIN_1343)),
        "nl_min" => (1e-3 / MIN, Some(ReferenceConditions::NORMAL_DIN_1343)),
        "nl_s" => (1e-3, Some(ReferenceConditions::NORMAL_DIN_1343)),
        "sm3_h" | "sm3h" => (1.0 / H, Some(ReferenceConditions::STANDARD_ISO_1217)),
        "sm3_min" => (1.0 / MIN, Some(ReferenceConditions::STANDARD_ISO_1217)),
        _ => return None,
    };
    Some(r)
}

/// Power unit: W per unit.
pub fn power_unit(unit: &str) -> Option<f64> {
    match normalize_unit(unit).as_str() {
        "w" => Some(1.0),
        "kw" => Some(1e3),
        "mw" => Some(1e6),
        _ => None,
    }
}

/// Energy unit: J per unit.
pub fn energy_unit(unit: &str) -> Option<f64> {
    match normalize_unit(unit).as_str() {
        "wh" => Some(J_PER_KWH / 1000.0),
        "kwh" => Some(J_PER_KWH),
        "mwh" => Some(J_PER_KWH * 1000.0),
        "j" => Some(1.0),
        "kj" => Some(1e3),
        "mj" => Some(1e6),
        _ => None,
    }
}

/// Temperature unit: (scale, offset) with K = v * scale + offset.
pub fn temperature_unit(unit: &str) -> Option<(f64, f64)> {
    match normalize_unit(unit).as_str() {
        "c" | "degc" | "celsius" => Some((1.0, T_ZERO_C)),
        "f" | "degf" | "fahrenheit" => Some((5.0 / 9.0, T_ZERO_C - 32.0 * 5.0 / 9.0)),
        "k" | "kelvin" => Some((1.0, 0.0)),
        _ => None,
    }
}

fn is_current_unit(unit: &str) -> bool {
    matches!(normalize_unit(unit).as_str(), "a" | "amp" | "amps" | "ampere" | "amperes")
}

/// A mapping resolved against a header.
#[derive(Debug, Clone)]
pub struct Plan {
    pub channels: Vec<ChannelDef>,
    /// Conversion rule per channel (same order as `channels`).
    pub rules: Vec<UnitRule>,
    pub delimiter: u8,
    pub decimal: u8,
    pub header_line: u32,
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

fn positive(v: Option<f64>, field: &str, what: &str) -> Result<f64, IngestError> {
    match v {
        Some(x) if x.is_finite() && x > 0.0 => Ok(x),
        Some(x) => Err(IngestError::field(field, format!("{what} must be positive, got {x}"))),
        None => Err(IngestError::field(field, format!("a current column needs {what}"))),
    }
}

fn power_factor(v: f64, field: &str) -> Result<f64, IngestError> {
    if v.is_finite() && v > 0.0 && v <= 1.0 {
        Ok(v)
    } else {
        Err(IngestError::field(field, format!("power factor must be in (0, 1], got {v}")))
    }
}

fn column_rule(c: &ColumnMap, i: usize) -> Result<(Quantity, UnitRule), IngestError> {
    let f = |name: &str| format!("columns[{i}].{name}");
    let unit_err = |q: &str| {
        IngestError::field(f("unit"), format!("unknown {q} unit {:?}", c.unit)).with_column(c.column.clone())
    };
    let quantity = c.quantity.trim().to_ascii_lowercase();
    let needs_compressor = matches!(quantity.as_str(), "power" | "energy" | "current");
    if needs_compressor && c.compressor.as_deref().is_none_or(|s| s.trim().is_empty()) {
        return Err(IngestError::field(
            f("compressor"),
            format!("a {quantity} column needs its compressor (column {:?})", c.column),
        )
        .with_column(c.column.clone()));
    }
    if c.reference.is_some() && quantity != "flow" {
        return Err(IngestError::field(f("reference"), "reference conditions apply to flow only"));
    }
    Ok(match quantity.as_str() {
        "power" => (Quantity::Power, UnitRule::Scale(power_unit(&c.unit).ok_or_else(|| unit_err("power"))?)),
        "energy" => {
            (Quantity::Energy, UnitRule::Scale(energy_unit(&c.unit).ok_or_else(|| unit_err("energy"))?))
        }
        "pressure" => {
            let n = normalize_unit(&c.unit);
            if n == "bar" || n == "psi" || n == "kpa" || n == "mpa" {
                return Err(IngestError::field(
                    f("unit"),
                    format!(
                        "pressure unit {:?} does not say gauge or absolute (use {}_g or {}_a)",
                        c.unit, c.unit, c.unit
                    ),
                )
                .with_column(c.column.clone()));
            }
            let (pa_per_unit, gauge) = pressure_unit(&c.unit).ok_or_else(|| unit_err("pressure"))?;
            (Quantity::Pressure, UnitRule::Pressure { pa_per_unit, gauge })
        }
        "flow" => {
            let (m3_s_per_unit, default_ref) = flow_unit(&c.unit).ok_or_else(|| unit_err("flow"))?;
            let reference = match (default_ref, c.reference) {
                (None, Some(_)) => {
                    return Err(IngestError::field(
                        f("reference"),
                        format!(
                            "flow unit {:?} is free air and takes no reference conditions (use a \
                             standard or normal unit such as scfm or Nm3_h)",
                            c.unit
                        ),
                    ))
                }
                (None, None) => None,
                (Some(d), r) => Some(r.unwrap_or(d)),
            };
            if let Some(r) = reference {
                let physical = r.pressure_kpa_abs > 0.0
                    && r.pressure_kpa_abs.is_finite()
                    && r.temperature_c > -T_ZERO_C
                    && r.temperature_c.is_finite();
                if !physical {
                    return Err(IngestError::field(
                        f("reference"),
                        format!(
                            "reference conditions {} kPa, {} c are not physical",
                            r.pressure_kpa_abs, r.temperature_c
                        ),
                    ));
                }
            }
            (Quantity::Flow, UnitRule::Flow { m3_s_per_unit, reference })
        }
        "temperature" => {
            let (scale, offset) = temperature_unit(&c.unit).ok_or_else(|| unit_err("temperature"))?;
            (Quantity::Temperature, UnitRule::Temperature { scale, offset })
        }
        "current" => {
            if !is_current_unit(&c.unit) {
                return Err(unit_err("current"));
            }
            let volts = positive(c.volts, &f("volts"), "volts")?;
            let pf = power_factor(
                c.power_factor.ok_or_else(|| {
                    IngestError::field(f("power_factor"), "a current column needs power_factor")
                })?,
                &f("power_factor"),
            )?;
            let phases = c.phases.unwrap_or(3);
            let k = match phases {
                3 => 3f64.sqrt() * volts,
                1 => volts,
                p => return Err(IngestError::field(f("phases"), format!("phases must be 1 or 3, got {p}"))),
            };
            let (pf_unloaded, below) = match (c.unloaded_power_factor, c.unloaded_below_a) {
                (None, None) => (pf, f64::NEG_INFINITY),
                (Some(u), Some(b)) if b.is_finite() && b >= 0.0 => {
                    (power_factor(u, &f("unloaded_power_factor"))?, b)
                }
                (Some(_), Some(b)) => {
                    return Err(IngestError::field(
                        f("unloaded_below_a"),
                        format!("unloaded_below_a must be a current >= 0, got {b}"),
                    ))
                }
                (Some(_), None) => {
                    return Err(IngestError::field(
                        f("unloaded_below_a"),
                        "unloaded_power_factor needs unloaded_below_a (the current below which \
                         the compressor runs unloaded)",
                    ))
                }
                (None, Some(_)) => {
                    return Err(IngestError::field(
                        f("unloaded_power_factor"),
                        "unloaded_below_a needs unloaded_power_factor",
                    ))
                }
            };
            (
                Quantity::Power,
                UnitRule::Current {
                    w_per_a: k * pf,
                    w_per_a_unloaded: k * pf_unloaded,
                    unloaded_below_a: below,
                },
            )
        }
        other => {
            return Err(IngestError::field(
                f("quantity"),
                format!(
                    "unknown quantity {other:?} (power, energy, current, pressure, flow, \
                     temperature)"
                ),
            ))
        }
    })
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
            let (quantity, _) = column_rule(c, i)?;
            Ok(ChannelDef {
                quantity,
                compressor: c.compressor.as_ref().map(|s| s.trim().to_string()).filter(|s| !s.is_empty()),
                label: c.column.trim().to_string(),
                unit: c.unit.clone(),
                column_index: i,
            })
        })
        .collect()
}

/// The units the mapping form offers for each quantity (API.md spellings).
pub fn units_by_quantity() -> serde_json::Value {
    serde_json::json!({
        "power": ["kW", "W"],
        "energy": ["kWh", "Wh", "MWh"],
        "current": ["A"],
        "pressure": ["bar_g", "psig", "kPa_g", "MPa_g", "bar_a", "psia", "kPa_a"],
        "flow": ["m3_min", "m3_h", "l_s", "cfm", "scfm", "Nm3_h", "Nm3_min", "Sm3_h", "Sm3_min"],
        "temperature": ["C", "F", "K"],
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
    for (i, c) in mapping.columns.iter().enumerate() {
        let column_index = find_column(header, &c.column).map_err(|m| {
            IngestError::field(format!("columns[{i}].column"), m).with_column(c.column.clone())
        })?;
        let (quantity, rule) = column_rule(c, i)?;
        channels.push(ChannelDef {
            quantity,
            compressor: c.compressor.as_ref().map(|s| s.trim().to_string()),
            label: header[column_index].trim().to_string(),
            unit: c.unit.clone(),
            column_index,
        });
        rules.push(rule);
    }
    if channels.is_empty() {
        return Err(IngestError::field("columns", "the mapping names no columns to read"));
    }
    Ok(Plan {
        channels,
        rules,
        delimiter,
        decimal,
        header_line: mapping.header_line,
        encoding,
        timestamp_index,
        time_index,
        timestamp_label: header[timestamp_index].trim().to_string(),
        timestamp_format: ts.format.clone(),
        timestamps,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::core::units::PressureAbs;

    const API_EXAMPLE: &str = r#"{"delimiter": ",", "decimal": ".", "header_line": 1,
     "timestamp": {"column": "Time", "format": "%Y-%m-%d %H:%M:%S", "timezone": "UTC"},
     "columns": [
       {"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"},
       {"column": "Header", "quantity": "pressure", "unit": "psig"},
       {"column": "Flow", "quantity": "flow", "unit": "scfm",
        "reference": {"pressure_kpa_abs": 101.325, "temperature_c": 20}}]}"#;

    fn header(names: &[&str]) -> Vec<String> {
        names.iter().map(|s| s.to_string()).collect()
    }

    fn convert(c: ColumnMap, site: &SiteAir, v: f64) -> f64 {
        let (_, rule) = column_rule(&c, 0).unwrap();
        rule.converter(site).apply(v)
    }

    #[test]
    fn the_api_example_mapping_parses_and_plans() {
        let m: Mapping = serde_json::from_str(API_EXAMPLE).unwrap();
        assert_eq!(m.clock_offset_s, 0.0);
        assert_eq!(m.encoding, None);
        let p = plan(&m, &header(&["Time", "C1 kW", "Header", "Flow"])).unwrap();
        assert_eq!(p.channels.len(), 3);
        assert_eq!(p.channels[0].quantity, Quantity::Power);
        assert_eq!(p.channels[0].compressor.as_deref(), Some("C1"));
        assert_eq!(p.channels[2].column_index, 3);
        // Defaults: a minimal mapping.
        let min: Mapping = serde_json::from_str(
            r#"{"timestamp": {"column": "Time", "format": "rfc3339"},
                "columns": [{"column": "P", "quantity": "pressure", "unit": "bar_g"}]}"#,
        )
        .unwrap();
        assert_eq!((min.delimiter.as_str(), min.decimal.as_str(), min.header_line), (",", ".", 1));
        assert_eq!(min.timestamp.timezone, "UTC");
        let back: Mapping = serde_json::from_str(&serde_json::to_string(&m).unwrap()).unwrap();
        assert_eq!(back, m);
    }

    #[test]
    fn plan_errors_name_the_field() {
        let m: Mapping = serde_json::from_str(API_EXAMPLE).unwrap();
        let e = plan(&m, &header(&["Time", "C1 kW", "Flow"])).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("columns[1].column"));
        assert_eq!(e.column.as_deref(), Some("Header"));
        let mut bad = m.clone();
        bad.columns[0].unit = "kVA".into();
        let e = plan(&bad, &header(&["Time", "C1 kW", "Header", "Flow"])).unwrap_err();
        assert_eq!(
            (e.field.as_deref(), e.message.as_str()),
            (Some("columns[0].unit"), "unknown power unit \"kVA\"")
        );
        let mut bad = m.clone();
        bad.columns[0].compressor = None;
        let e = plan(&bad, &header(&["Time", "C1 kW", "Header", "Flow"])).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("columns[0].compressor"));
        let mut bad = m.clone();
        bad.columns[1].quantity = "humidity".into();
        let e = plan(&bad, &header(&["Time", "C1 kW", "Header", "Flow"])).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("columns[1].quantity"));
        let mut bad = m.clone();
        bad.columns[1].unit = "bar".into();
        let e = plan(&bad, &header(&["Time", "C1 kW", "Header", "Flow"])).unwrap_err();
        assert!(e.message.contains("gauge or absolute"), "{}", e.message);
        let mut bad = m.clone();
        bad.timestamp.timezone = "Europe/Atlantis".into();
        let e = plan(&bad, &header(&["Time", "C1 kW", "Header", "Flow"])).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("timestamp.timezone"));
        let mut bad = m;
        bad.columns.push(ColumnMap::new("C1 kW", "current", "A", Some("C1")));
        let e = plan(&bad, &header(&["Time", "C1 kW", "Header", "Flow"])).unwrap_err();
        assert_eq!(e.field.as_deref(), Some("columns[3].volts"));
    }

    #[test]
    fn amps_to_kilowatts_three_phase_and_unloaded() {
        // sqrt(3) V I PF (IEC 60050 three-phase active power; FIELD-NOTES §8):
        // sqrt(3) x 400 V x 50 A x 0.85 = 29,444.9 W (hand calculation).
        let site = SiteAir::new(101.325, 20.0);
        let mut c = ColumnMap::new("C1 A", "current", "A", Some("C1"));
        c.volts = Some(400.0);
        c.power_factor = Some(0.85);
        assert!((convert(c.clone(), &site, 50.0) - 29_444.86).abs() < 0.01);
        c.unloaded_power_factor = Some(0.4);
        c.unloaded_below_a = Some(20.0);
        // Unloaded: sqrt(3) x 400 x 15 x 0.4 = 4156.9 W (hand calculation).
        assert!((convert(c.clone(), &site, 15.0) - 4_156.92).abs() < 0.01);
        assert!((convert(c.clone(), &site, 50.0) - 29_444.86).abs() < 0.01);
        c.phases = Some(1);
        c.unloaded_power_factor = None;
        c.unloaded_below_a = None;
        // Single phase: 230 V x 10 A x 0.85 = 1955 W (hand calculation).
        c.volts = Some(230.0);
        assert!((convert(c, &site, 10.0) - 1955.0).abs() < 1e-9);
    }

    #[test]
    fn psig_becomes_pascal_absolute_with_the_site_atmosphere() {
        // 100 psig at 1000 m (ASHRAE/ISO 2533: 89.875 kPa): 689,475.7 Pa + 89,875 Pa.
        let site = SiteAir::new(89.875, 20.0);
        let p = convert(ColumnMap::new("P", "pressure", "psig", None), &site, 100.0);
        assert!((p - (689_475.729_316_8 + 89_875.0)).abs() < 1e-6);
        assert_eq!(p, PressureAbs::from_psig(100.0, site.atmosphere).0);
        let a = convert(ColumnMap::new("P", "pressure", "bar_a", None), &site, 7.0);
        assert_eq!(a, 700_000.0);
        let k = convert(ColumnMap::new("P", "pressure", "kPa_g", None), &site, 700.0);
        assert!((k - 789_875.0).abs() < 1e-9);
    }

    #[test]
    fn standard_and_normal_flows_become_free_air_at_a_1000_m_site() {
        let site = SiteAir::new(89.875, 20.0);
        // 100 scfm (ASME 14.696 psia, 68 F) -> free air at 89.875 kPa, 20 C:
        // 100 x 0.0283168 m3 / 60 s x (101.3250 / 89.875) x (293.15 / 293.15) (hand calculation;
        // 14.696 psia = 101.3250 kPa).
        let q = convert(ColumnMap::new("F", "flow", "scfm", None), &site, 100.0);
        let p_ref = 14.696 * PA_PER_PSI;
        let want = 100.0 * M3_PER_FT3 / 60.0 * (p_ref / 89_875.0);
        assert!((q - want).abs() < 1e-12);
        assert!((q * 60.0 - 3.1925).abs() < 1e-3); // ~3.19 m3/min free air
                                                   // 600 Nm3/h (DIN 1343, 0 C) -> 600/3600 x (101.325/89.875) x (293.15/273.15) m3/s.
        let n = convert(ColumnMap::new("F", "flow", "Nm3/h", None), &site, 600.0);
        let want = 600.0 / 3600.0 * (101.325 / 89.875) * (293.15 / 273.15);
        assert!((n - want).abs() < 1e-12);
        // Given reference conditions override the default.
        let mut c = ColumnMap::new("F", "flow", "Nm3_h", None);
        c.reference = Some(ReferenceConditions { pressure_kpa_abs: 101.325, temperature_c: 20.0 });
        let r = convert(c, &site, 600.0);
        assert!((r - 600.0 / 3600.0 * (101.325 / 89.875)).abs() < 1e-12);
        // Free air units are not corrected.
        let f = convert(ColumnMap::new("F", "flow", "m³/min", None), &site, 6.0);
        assert!((f - 0.1).abs() < 1e-15);
        let mut c = ColumnMap::new("F", "flow", "cfm", None);
        c.reference = Some(ReferenceConditions::NORMAL_DIN_1343);
        assert_eq!(column_rule(&c, 0).unwrap_err().field.as_deref(), Some("columns[0].reference"));
    }

    #[test]
    fn power_energy_temperature_units() {
        let site = SiteAir::new(101.325, 20.0);
        assert_eq!(convert(ColumnMap::new("x", "power", "kW", Some("C1")), &site, 2.5), 2500.0);
        // 1 kWh = 3.6 MJ exactly (SI definition of the watt-hour).
        assert_eq!(convert(ColumnMap::new("x", "energy", "kWh", Some("C1")), &site, 12.5), 45.0e6);
        let t = convert(ColumnMap::new("x", "temperature", "°F", None), &site, 212.0);
        assert!((t - 373.15).abs() < 1e-9);
        let t = convert(ColumnMap::new("x", "temperature", "C", None), &site, 20.0);
        assert!((t - 293.15).abs() < 1e-9);
    }

    #[test]
    fn unit_spellings_normalize() {
        assert_eq!(normalize_unit(" Nm³/h "), "nm3_h");
        assert_eq!(normalize_unit("bar(g)"), "bar_g");
        assert_eq!(pressure_unit("barg"), Some((PA_PER_BAR, true)));
        assert_eq!(pressure_unit("psia"), Some((PA_PER_PSI, false)));
        assert_eq!(pressure_unit("MPa_g"), Some((1e6, true)));
        assert_eq!(pressure_unit("kPa_a"), Some((1e3, false)));
        assert!(flow_unit("m3/min").is_some());
        assert!(flow_unit("furlongs/fortnight").is_none());
    }
}
