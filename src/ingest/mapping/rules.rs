/*!
A column's unit into its conversion to SI, and the checks of the column's other fields (compressor,
reference conditions, volts and power factors).
*/

use super::{ColumnMap, Quantity};
use crate::core::units::{
    ReferenceConditions, SiteAir, J_PER_KWH, M3_PER_FT3, PA_PER_BAR, PA_PER_PSI, T_ZERO_C,
};
use crate::ingest::IngestError;

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

pub(super) fn column_rule(c: &ColumnMap, i: usize) -> Result<(Quantity, UnitRule), IngestError> {
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
