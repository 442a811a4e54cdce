/*!
A column's unit into its conversion to SI, read from [`crate::core::unit_table`], and the checks of
the column's other fields (compressor, reference conditions, volts and power factors).
*/

use super::{ColumnMap, Quantity};
use crate::core::basis::{Basis, CurrentPf, LinePressure};
use crate::core::unit_table::{self, LoggedQuantity, ToSi};
use crate::core::units::{ReferenceConditions, SiteAir, Temperature, PA_PER_BAR, T_ZERO_C};
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
    /// Actual volume flow at line conditions: m³/s per unit, at a fixed line pressure (`None`: the
    /// row's value of a mapped pressure column) and line temperature, K.
    LineFlow { m3_s_per_unit: f64, pressure: Option<LinePressure>, temperature_k: f64 },
    /// Temperature: K = value * scale + offset.
    Temperature { scale: f64, offset: f64 },
    /// Current to power: W = I * k, with k_unloaded below the threshold; the power factors'
    /// relative uncertainty and whether one power factor serves both states.
    Current { w_per_a: f64, w_per_a_unloaded: f64, unloaded_below_a: f64, pf_rel: f64, single: bool },
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
    /// For power made from current: how its power factor was known.
    pub fn current_pf(&self) -> Option<CurrentPf> {
        match *self {
            Self::Current { pf_rel, single, .. } => Some(CurrentPf { pf_rel, single }),
            _ => None,
        }
    }

    /// The basis the readings are stored on (`core::basis`): what the meter measured, nothing of the
    /// site applied. A line flow read against a pressure column is stored as normal volume (DIN
    /// 1343), made of each row's line pressure on the way in.
    pub fn basis(&self) -> Basis {
        match *self {
            Self::Scale(_) | Self::Temperature { .. } | Self::Current { .. } => Basis::Site,
            Self::Pressure { gauge: true, .. } => Basis::Gauge,
            Self::Pressure { gauge: false, .. } => Basis::Site,
            Self::Flow { reference: Some(reference), .. } => Basis::Reference { reference },
            Self::Flow { reference: None, .. } => Basis::FreeAir,
            Self::LineFlow { pressure: Some(pressure), temperature_k, .. } => {
                Basis::Line { pressure, temperature_k }
            }
            Self::LineFlow { pressure: None, .. } => {
                Basis::Reference { reference: ReferenceConditions::NORMAL_DIN_1343 }
            }
        }
    }

    /// The converter to the stored form: SI units on the logged basis, nothing of the site applied.
    pub fn stored(&self) -> Converter {
        match *self {
            Self::Scale(scale) => Converter::Linear { scale, offset: 0.0 },
            Self::Pressure { pa_per_unit, .. } => Converter::Linear { scale: pa_per_unit, offset: 0.0 },
            Self::Flow { m3_s_per_unit, .. } | Self::LineFlow { m3_s_per_unit, .. } => {
                Converter::Linear { scale: m3_s_per_unit, offset: 0.0 }
            }
            Self::Temperature { scale, offset } => Converter::Linear { scale, offset },
            Self::Current { w_per_a, w_per_a_unloaded, unloaded_below_a, .. } => {
                Converter::Current { w_per_a, w_per_a_unloaded, unloaded_below_a }
            }
        }
    }

    /// The converter to the analysis' SI with `site` applied (Pa absolute, m³/s free air): what the
    /// data-quality report judges and quotes. A line flow read against a pressure column gets its
    /// row's factor apart (`parse`).
    pub fn converter(&self, site: &SiteAir) -> Converter {
        match *self {
            Self::LineFlow { m3_s_per_unit, .. } => {
                let (scale, _) = self.basis().affine(site);
                Converter::Linear { scale: m3_s_per_unit * scale, offset: 0.0 }
            }
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
            Self::Current { w_per_a, w_per_a_unloaded, unloaded_below_a, .. } => {
                Converter::Current { w_per_a, w_per_a_unloaded, unloaded_below_a }
            }
        }
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

/// A power or energy unit's factor.
fn scale(to_si: ToSi) -> UnitRule {
    match to_si {
        ToSi::Scale(k) => UnitRule::Scale(k),
        other => unreachable!("the unit table lists power and energy units with factors, not {other:?}"),
    }
}

/// A column's quantity and conversion rule; `i` is its index in the mapping, for messages.
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
            format!("a {quantity} column needs its compressor: choose the machine it was logged on"),
        )
        .with_column(c.column.clone()));
    }
    if c.line.is_some() && quantity != "flow" {
        return Err(IngestError::field(f("line"), "line conditions apply to flow only"));
    }
    if c.reference.is_some() && quantity != "flow" {
        return Err(IngestError::field(f("reference"), "reference conditions apply to flow only"));
    }
    let table =
        |q: LoggedQuantity| unit_table::find(q, &c.unit).map(|u| u.to_si).ok_or_else(|| unit_err(q.as_str()));
    Ok(match quantity.as_str() {
        "power" => (Quantity::Power, scale(table(LoggedQuantity::Power)?)),
        "energy" => (Quantity::Energy, scale(table(LoggedQuantity::Energy)?)),
        "pressure" => {
            if unit_table::is_unqualified_pressure(&c.unit) {
                return Err(IngestError::field(
                    f("unit"),
                    format!(
                        "pressure unit {:?} does not say gauge or absolute (use {}_g or {}_a)",
                        c.unit, c.unit, c.unit
                    ),
                )
                .with_column(c.column.clone()));
            }
            let ToSi::Pressure { pa_per_unit, gauge } = table(LoggedQuantity::Pressure)? else {
                unreachable!("the unit table lists pressure units with pressure factors")
            };
            (Quantity::Pressure, UnitRule::Pressure { pa_per_unit, gauge })
        }
        "flow" if matches!(table(LoggedQuantity::Flow)?, ToSi::LineFlow { .. }) => {
            let ToSi::LineFlow { m3_s_per_unit } = table(LoggedQuantity::Flow)? else {
                unreachable!("matched as a line flow above")
            };
            if c.reference.is_some() {
                return Err(IngestError::field(
                    f("reference"),
                    format!("flow unit {:?} is actual volume at line conditions and takes `line`, not a reference", c.unit),
                ));
            }
            let (pressure, temperature_k) = line_conditions(c, i)?;
            (Quantity::Flow, UnitRule::LineFlow { m3_s_per_unit, pressure, temperature_k })
        }
        "flow" => {
            if c.line.is_some() {
                return Err(IngestError::field(
                    f("line"),
                    format!(
                        "flow unit {:?} is not an actual volume at line conditions; `line` applies to \
                         acfm, am3_min and am3_h",
                        c.unit
                    ),
                ));
            }
            let ToSi::Flow { m3_s_per_unit, reference: default_ref } = table(LoggedQuantity::Flow)? else {
                unreachable!("the unit table lists flow units with flow factors")
            };
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
            let ToSi::Temperature { scale, offset } = table(LoggedQuantity::Temperature)? else {
                unreachable!("the unit table lists temperature units with temperature factors")
            };
            (Quantity::Temperature, UnitRule::Temperature { scale, offset })
        }
        "current" => {
            table(LoggedQuantity::Current)?;
            let volts = positive(c.volts, &f("volts"), "volts")?;
            let phases = c.phases.unwrap_or(3);
            let k = match phases {
                3 => 3f64.sqrt() * volts,
                1 => volts,
                p => return Err(IngestError::field(f("phases"), format!("phases must be 1 or 3, got {p}"))),
            };
            // A spot reading calibrates a state's power factor: PF = P / (k I).
            let spot = |s: &Option<super::SpotReading>, name: &str| -> Result<Option<f64>, IngestError> {
                let Some(s) = s else { return Ok(None) };
                if !(s.a.is_finite() && s.a > 0.0 && s.kw.is_finite() && s.kw > 0.0) {
                    return Err(IngestError::field(
                        f(name),
                        format!(
                            "a spot reading needs a current and a power above 0, got {} A, {} kW",
                            s.a, s.kw
                        ),
                    ));
                }
                power_factor(s.kw * 1000.0 / (k * s.a), &f(name)).map(Some)
            };
            let loaded_spot = spot(&c.loaded_spot, "loaded_spot")?;
            let unloaded_spot = spot(&c.unloaded_spot, "unloaded_spot")?;
            let pf =
                match (loaded_spot, c.power_factor) {
                    (Some(p), None) => p,
                    (None, Some(p)) => power_factor(p, &f("power_factor"))?,
                    (Some(_), Some(_)) => {
                        return Err(IngestError::field(
                            f("power_factor"),
                            "give power_factor or loaded_spot, not both",
                        ))
                    }
                    (None, None) => return Err(IngestError::field(
                        f("power_factor"),
                        "a current column needs power_factor (or loaded_spot, a spot reading of amps and kW)",
                    )),
                };
            let unloaded = match (unloaded_spot, c.unloaded_power_factor) {
                (Some(_), Some(_)) => {
                    return Err(IngestError::field(
                        f("unloaded_power_factor"),
                        "give unloaded_power_factor or unloaded_spot, not both",
                    ))
                }
                (s, p) => s.or(p),
            };
            let (pf_unloaded, below) = match (unloaded, c.unloaded_below_a) {
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
            let pf_rel =
                pf_uncertainty(c, pf, pf_unloaded, loaded_spot.is_some(), unloaded_spot.is_some(), &f)?;
            (
                Quantity::Power,
                UnitRule::Current {
                    w_per_a: k * pf,
                    w_per_a_unloaded: k * pf_unloaded,
                    unloaded_below_a: below,
                    pf_rel,
                    single: unloaded.is_none(),
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

/// The line conditions of an actual-volume flow column: a fixed pressure (gauge or absolute) or a
/// mapped pressure column (`None`, resolved by `plan`), and the temperature in K. Refused, naming the
/// column, when either is missing: an actual volume read as free air would be several times too small.
fn line_conditions(c: &ColumnMap, i: usize) -> Result<(Option<LinePressure>, f64), IngestError> {
    let f = |name: &str| format!("columns[{i}].line{name}");
    let need = |what: &str| {
        IngestError::field(
            f(""),
            format!(
                "column {:?} logs actual volume ({}), which is free air only once the line conditions \
                 are known: give the line's {what} (the pressure as a fixed value or a logged pressure \
                 column, and the temperature)",
                c.column,
                unit_table::find(LoggedQuantity::Flow, &c.unit).map_or(c.unit.as_str(), |u| u.label)
            ),
        )
        .with_column(c.column.clone())
    };
    let Some(line) = &c.line else { return Err(need("pressure and temperature")) };
    let pressure = match (line.pressure_bar_g, line.pressure_bar_a, &line.pressure_column) {
        (Some(g), None, None) if g.is_finite() && (-1.0..=1000.0).contains(&g) => {
            Some(LinePressure::GaugePa(g * PA_PER_BAR))
        }
        (None, Some(a), None) if a.is_finite() && a > 0.0 && a <= 1000.0 => {
            Some(LinePressure::AbsolutePa(a * PA_PER_BAR))
        }
        (None, None, Some(col)) if !col.trim().is_empty() => None,
        (None, None, None) => return Err(need("pressure")),
        (Some(v), None, None) | (None, Some(v), None) => {
            return Err(IngestError::field(f(".pressure"), format!("line pressure {v} bar is out of range"))
                .with_column(c.column.clone()))
        }
        _ => {
            return Err(IngestError::field(
                f(""),
                "give one of pressure_bar_g, pressure_bar_a and pressure_column",
            )
            .with_column(c.column.clone()))
        }
    };
    let t = match line.temperature_c {
        Some(t) if t.is_finite() && t > -100.0 && t < 500.0 => Temperature::from_c(t).0,
        Some(t) => {
            return Err(IngestError::field(
                f(".temperature_c"),
                format!("line temperature {t} c is out of range"),
            )
            .with_column(c.column.clone()))
        }
        None => return Err(need("temperature")),
    };
    Ok((pressure, t))
}

/// Relative standard uncertainty of the power factors of a current column, the larger of the two
/// states'. A spot reading with a true-power meter: 2 % (the meter's class 1 with the power factor's
/// drift within a state; common practice, from memory). A typed power factor: the mapping's
/// `power_factor_uncertainty` over it, else 5 % (a nameplate full-load power factor against the
/// running one, about ±0.04 on 0.85; from memory). One power factor for both states: at least 15 %,
/// since the power factor falls steeply unloaded (about 0.85 loaded against 0.3-0.6 unloaded, from
/// memory) and the unloaded power is overstated.
fn pf_uncertainty(
    c: &ColumnMap,
    pf: f64,
    pf_unloaded: f64,
    loaded_spot: bool,
    unloaded_spot: bool,
    f: &dyn Fn(&str) -> String,
) -> Result<f64, IngestError> {
    let typed = match c.power_factor_uncertainty {
        None => None,
        Some(u) if (0.0..1.0).contains(&u) => Some(u),
        Some(u) => {
            return Err(IngestError::field(
                f("power_factor_uncertainty"),
                format!("power_factor_uncertainty must be in [0, 1), got {u}"),
            ))
        }
    };
    let rel = |spot: bool, p: f64| if spot { 0.02 } else { typed.map_or(0.05, |u| u / p) };
    let single = c.unloaded_power_factor.is_none() && c.unloaded_spot.is_none();
    let r = rel(loaded_spot, pf).max(if single { 0.0 } else { rel(unloaded_spot, pf_unloaded) });
    Ok(if single { r.max(0.15) } else { r })
}
