//! The calculators (API.md "Calculators"): an orifice's leak and a compression's power, each
//! input checked in the units of the audit it is typed on, every refusal at once.

use axum::extract::State;
use axum::http::StatusCode;
use axum::response::Response;
use serde::Deserialize;

use super::super::error::AppError;
use super::super::AppState;
use super::{json, ApiJson};
use crate::core::entry::Entry;
use crate::core::units::{FreeAirFlow, PressureAbs, SiteAir, Temperature, UnitSystem};
use crate::core::{leaks, thermo};

/// Ranges of the calculators' inputs (`POST /calc/orifice`, `POST /calc/compression`): a number that
/// is not finite or lies outside its range is refused naming the field (422), as are unknown fields.
///
/// | value | range | why |
/// |---|---|---|
/// | `atmospheric_pressure_kpa_abs` | 40 ..= 110 kPa abs | as the site (`site` module: ISO 2533 at 6000 m is 47.2 kPa) |
/// | `inlet_temperature_c` | -40 ..= 60 °C | as the site (ambient rating range of compressor packages, common practice) |
/// | orifice `diameter_mm` | above 0 ..= 100 mm | leaks and open blow-offs up to a 4-inch pipe end (common practice) |
/// | orifice `pressure_bar_g` | atmosphere ..= 50 bar(g) | shop air and boosters (PET blowing at 40 bar(g)); common practice |
/// | orifice `discharge_coefficient` | above 0 ..= 1 | a flow coefficient (sharp-edged hole 0.61, rounded nozzle near 1) |
/// | orifice `upstream_temperature_c` | -40 ..= 250 °C | ambient to compressor discharge air (common practice) |
/// | compression `flow_m3_min` | above 0 ..= 2000 m³/min | the largest air compressors (`site` module) |
/// | compression `inlet_pressure_kpa_abs` | 10 ..= 5000 kPa abs | vacuum-fed inlets to the inlet of a 50 bar booster |
/// | compression `discharge_pressure_bar_g` | above the inlet ..= 50 bar(g) | as above |
/// | compression `stages` | 1 ..= 6 | as the compressors (`site` module) |
/// | compression `isentropic_efficiency` | above 0 ..= 1 | an efficiency |
/// | compression `intercooled_to_c` | -40 ..= 250 °C | as the upstream temperature |
pub mod calc_ranges {
    pub const ATMOSPHERE_KPA_ABS: (f64, f64) = (40.0, 110.0);
    pub const INLET_TEMPERATURE_C: (f64, f64) = (-40.0, 60.0);
    pub const MAX_ORIFICE_DIAMETER_MM: f64 = 100.0;
    pub const MAX_PRESSURE_BAR_G: f64 = 50.0;
    pub const AIR_TEMPERATURE_C: (f64, f64) = (-40.0, 250.0);
    pub const MAX_FLOW_M3_MIN: f64 = 2000.0;
    pub const INLET_PRESSURE_KPA_ABS: (f64, f64) = (10.0, 5000.0);
    pub const MAX_STAGES: u32 = 6;
}

/// `v` if finite and within `lo..=hi` (above `lo` when `lo_open`), else a 422 naming `field`.
fn calc_within(field: &str, v: f64, lo: f64, lo_open: bool, hi: f64, unit: &str) -> Result<f64, AppError> {
    let low_ok = if lo_open { v > lo } else { v >= lo };
    if v.is_finite() && low_ok && v <= hi {
        return Ok(v);
    }
    let from = if lo_open { format!("above {lo}") } else { format!("{lo}") };
    Err(AppError::field(field, format!("{field} must be a number from {from} to {hi}{unit}, got {v}")))
}

/// Every refusal at once: one names its field, several are `error.errors`.
fn refused(mut errs: Vec<crate::site::FieldError>) -> AppError {
    if errs.len() == 1 {
        let e = errs.swap_remove(0);
        return AppError::field(&e.field, e.message);
    }
    AppError::Refusals(errs)
}

/// Site air for a calculator: an audit's, or the given (default 101.325 kPa, 20 °C).
async fn calc_site(
    st: &AppState,
    audit_id: Option<i64>,
    p: Option<f64>,
    t: Option<f64>,
    (atmosphere_field, (lo_kpa, hi_kpa)): (&str, (f64, f64)),
) -> Result<SiteAir, AppError> {
    let (mut pk, mut tc) = (101.325, 20.0);
    if let Some(id) = audit_id {
        let a = st.app.audit(id).await?;
        pk = a.site.atmospheric_pressure_kpa_abs();
        tc = a.site.inlet_temperature_c;
    }
    use calc_ranges::*;
    let pk = p.unwrap_or(pk);
    let tc = t.unwrap_or(tc);
    calc_within(atmosphere_field, pk, lo_kpa, false, hi_kpa, " kPa abs")?;
    let (lo, hi) = INLET_TEMPERATURE_C;
    calc_within("inlet_temperature_c", tc, lo, false, hi, " °C")?;
    Ok(SiteAir::new(pk, tc))
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub struct OrificeBody {
    diameter_mm: f64,
    pressure_bar_g: f64,
    #[serde(default = "default_cd")]
    discharge_coefficient: f64,
    upstream_temperature_c: Option<f64>,
    atmospheric_pressure_kpa_abs: Option<f64>,
    inlet_temperature_c: Option<f64>,
    audit_id: Option<i64>,
}

fn default_cd() -> f64 {
    // A sharp-edged hole, the usual leak: Cd 0.61-0.65 (thin-plate orifice, common practice).
    0.61
}

pub async fn calc_orifice(
    State(st): State<AppState>,
    ApiJson(b): ApiJson<OrificeBody>,
) -> Result<Response, AppError> {
    use calc_ranges::*;
    let site = calc_site(
        &st,
        b.audit_id,
        b.atmospheric_pressure_kpa_abs,
        b.inlet_temperature_c,
        ("atmospheric_pressure_kpa_abs", ATMOSPHERE_KPA_ABS),
    )
    .await?;
    // Typed on an audit's page, the figures are refused in that audit's units (`core::entry`).
    let units = match b.audit_id {
        Some(id) => st.app.audit(id).await?.site.display_units,
        None => UnitSystem::Si,
    };
    let entry = |field: &str, words: &str, kind: Entry, v: f64, (lo, lo_open): (f64, bool), hi: f64| {
        let low_ok = if lo_open { v > lo } else { v >= lo };
        if v.is_finite() && low_ok && v <= hi {
            Ok(v)
        } else {
            Err(AppError::field(field, format!("{words} {}", kind.out_of_range(units, v, lo, lo_open, hi))))
        }
    };
    // Every refusal of the hole's figures at once, each naming its field.
    let mut errs: Vec<crate::site::FieldError> = Vec::new();
    let mut take = |r: Result<f64, AppError>| {
        if let Err(AppError::Unprocessable { message, field, .. }) = r {
            errs.push(crate::site::FieldError::new(field.as_deref().unwrap_or(""), message));
        }
    };
    take(entry(
        "diameter_mm",
        "the hole's diameter",
        Entry::Diameter,
        b.diameter_mm,
        (0.0, true),
        MAX_ORIFICE_DIAMETER_MM,
    ));
    let upstream = PressureAbs::from_bar_g(b.pressure_bar_g, site.atmosphere);
    if !(b.pressure_bar_g.is_finite() && b.pressure_bar_g <= MAX_PRESSURE_BAR_G) {
        let most = Entry::GaugePressure.limit(units, MAX_PRESSURE_BAR_G);
        let got = Entry::GaugePressure.said(units, b.pressure_bar_g);
        take(Err(AppError::field(
            "pressure_bar_g",
            format!("the pressure must be at most {most}, got {got}"),
        )));
    } else if upstream.0 <= 0.0 {
        take(Err(AppError::field(
            "pressure_bar_g",
            format!("{} is below zero absolute", Entry::GaugePressure.said(units, b.pressure_bar_g)),
        )));
    }
    take(calc_within("discharge_coefficient", b.discharge_coefficient, 0.0, true, 1.0, ""));
    if let Some(t) = b.upstream_temperature_c {
        let (lo, hi) = AIR_TEMPERATURE_C;
        take(entry(
            "upstream_temperature_c",
            "the air's temperature",
            Entry::Temperature,
            t,
            (lo, false),
            hi,
        ));
    }
    if !errs.is_empty() {
        return Err(refused(errs));
    }
    let t0 = b.upstream_temperature_c.map(Temperature::from_c).unwrap_or(site.inlet_temperature);
    let q = leaks::orifice_leak(b.diameter_mm / 1000.0, upstream, t0, b.discharge_coefficient, &site)
        .map_err(|e| AppError::field(e.field, e.message))?;
    Ok(json(
        StatusCode::OK,
        &serde_json::json!({
            "leak_flow_m3_min": q.m3_min(),
            "leak_flow_cfm_free_air": q.cfm(),
            "atmospheric_pressure_kpa_abs": site.atmosphere.kpa_abs(),
            "inlet_temperature_c": site.inlet_temperature.c(),
            "choked": site.atmosphere.0 / upstream.0 <= leaks::critical_pressure_ratio(),
            "formula": "choked: m = Cd A p0 sqrt(k/(R T0)) (2/(k+1))^((k+1)/(2(k-1))); free air V = m R T_in / p_atm",
            "source": "isentropic nozzle flow of an ideal gas (k = 1.4, R = 287 J/(kg K)); checked against the published orifice discharge table (US DOE compressed-air sourcebook)",
        }),
    ))
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CompressionBody {
    flow_m3_min: f64,
    inlet_pressure_kpa_abs: Option<f64>,
    inlet_temperature_c: Option<f64>,
    discharge_pressure_bar_g: f64,
    #[serde(default = "one")]
    stages: u32,
    #[serde(default = "default_eta")]
    isentropic_efficiency: f64,
    intercooled_to_c: Option<f64>,
    atmospheric_pressure_kpa_abs: Option<f64>,
    audit_id: Option<i64>,
}

fn one() -> u32 {
    1
}
fn default_eta() -> f64 {
    0.8
}

pub async fn calc_compression(
    State(st): State<AppState>,
    ApiJson(b): ApiJson<CompressionBody>,
) -> Result<Response, AppError> {
    use calc_ranges::*;
    // Typed on an audit's page, the figures are refused in that audit's units (`core::entry`),
    // every one at once, each naming its field.
    let units = match b.audit_id {
        Some(id) => st.app.audit(id).await?.site.display_units,
        None => UnitSystem::Si,
    };
    let mut errs: Vec<crate::site::FieldError> = Vec::new();
    let check = |field: &str, words: &str, kind: Entry, v: f64, (lo, lo_open): (f64, bool), hi: f64| {
        let low_ok = if lo_open { v > lo } else { v >= lo };
        let why = format!("{words} {}", kind.out_of_range(units, v, lo, lo_open, hi));
        (!(v.is_finite() && low_ok && v <= hi)).then(|| crate::site::FieldError::new(field, why))
    };
    errs.extend(check(
        "flow_m3_min",
        "the flow",
        Entry::FreeAirFlow,
        b.flow_m3_min,
        (0.0, true),
        MAX_FLOW_M3_MIN,
    ));
    if let Some(p) = b.inlet_pressure_kpa_abs {
        let (lo, hi) = INLET_PRESSURE_KPA_ABS;
        errs.extend(check(
            "inlet_pressure_kpa_abs",
            "the inlet pressure",
            Entry::Atmosphere,
            p,
            (lo, false),
            hi,
        ));
    }
    if let Some(t) = b.inlet_temperature_c {
        let (lo, hi) = INLET_TEMPERATURE_C;
        errs.extend(check(
            "inlet_temperature_c",
            "the inlet temperature",
            Entry::Temperature,
            t,
            (lo, false),
            hi,
        ));
    }
    if let Some(p) = b.atmospheric_pressure_kpa_abs {
        let (lo, hi) = ATMOSPHERE_KPA_ABS;
        errs.extend(check(
            "atmospheric_pressure_kpa_abs",
            "the atmosphere",
            Entry::Atmosphere,
            p,
            (lo, false),
            hi,
        ));
    }
    if !(b.discharge_pressure_bar_g.is_finite() && b.discharge_pressure_bar_g <= MAX_PRESSURE_BAR_G) {
        let most = Entry::GaugePressure.limit(units, MAX_PRESSURE_BAR_G);
        let got = if b.discharge_pressure_bar_g.is_finite() {
            Entry::GaugePressure.said(units, b.discharge_pressure_bar_g)
        } else {
            "no number".into()
        };
        errs.push(crate::site::FieldError::new(
            "discharge_pressure_bar_g",
            format!("the discharge pressure must be at most {most}, got {got}"),
        ));
    }
    if !(1..=MAX_STAGES).contains(&b.stages) {
        errs.push(crate::site::FieldError::new(
            "stages",
            format!("the stages must be 1 to {MAX_STAGES}, got {}", b.stages),
        ));
    }
    let eta = b.isentropic_efficiency;
    if !(eta.is_finite() && eta > 0.0 && eta <= 1.0) {
        errs.push(crate::site::FieldError::new(
            "isentropic_efficiency",
            format!(
                "the isentropic efficiency must be above 0 and at most 1 (0.8 for 80 %), got {}",
                crate::core::entry::short(eta)
            ),
        ));
    }
    if let Some(t) = b.intercooled_to_c {
        let (lo, hi) = AIR_TEMPERATURE_C;
        errs.extend(check("intercooled_to_c", "the coolers' outlet", Entry::Temperature, t, (lo, false), hi));
    }
    // Without an atmosphere the inlet pressure stands for it (as before), within the inlet's range.
    let atmosphere_range = match (b.atmospheric_pressure_kpa_abs, b.inlet_pressure_kpa_abs) {
        (None, Some(_)) => ("inlet_pressure_kpa_abs", INLET_PRESSURE_KPA_ABS),
        _ => ("atmospheric_pressure_kpa_abs", ATMOSPHERE_KPA_ABS),
    };
    let site = if errs.is_empty() {
        Some(
            calc_site(
                &st,
                b.audit_id,
                b.atmospheric_pressure_kpa_abs.or(b.inlet_pressure_kpa_abs),
                b.inlet_temperature_c,
                atmosphere_range,
            )
            .await?,
        )
    } else {
        None
    };
    let discharge = site.map(|s| PressureAbs::from_bar_g(b.discharge_pressure_bar_g, s.atmosphere));
    if discharge.is_some_and(|d| d.0 <= 0.0) {
        errs.push(crate::site::FieldError::new(
            "discharge_pressure_bar_g",
            format!(
                "the discharge pressure {} is below zero absolute",
                Entry::GaugePressure.said(units, b.discharge_pressure_bar_g)
            ),
        ));
    }
    let (Some(site), Some(discharge)) = (site, discharge) else {
        return Err(refused(errs));
    };
    if !errs.is_empty() {
        return Err(refused(errs));
    }
    let inlet = b.inlet_pressure_kpa_abs.map(PressureAbs::from_kpa_abs).unwrap_or(site.atmosphere);
    let input = thermo::CompressionInput {
        flow: FreeAirFlow::from_m3_min(b.flow_m3_min),
        inlet_pressure: inlet,
        inlet_temperature: site.inlet_temperature,
        discharge_pressure: discharge,
        stages: b.stages,
        isentropic_efficiency: b.isentropic_efficiency,
        intercooled_to: Temperature::from_c(b.intercooled_to_c.unwrap_or(site.inlet_temperature.c())),
    };
    let r = thermo::compress(&input).map_err(|e| AppError::field(e.field, e.message))?;
    Ok(json(
        StatusCode::OK,
        &serde_json::json!({
            "mass_flow_kg_s": r.mass_flow_kg_s,
            "isothermal_power_kw": r.isothermal_power.kw(),
            "isentropic_power_kw": r.isentropic_power.kw(),
            "shaft_power_kw": r.shaft_power.kw(),
            "isothermal_efficiency_of_shaft": r.isothermal_power.0 / r.shaft_power.0,
            "stages": r.stages.iter().map(|s| serde_json::json!({
                "pressure_ratio": s.pressure_ratio,
                "inlet_temperature_c": s.inlet_temperature.c(),
                "discharge_temperature_c": s.discharge_temperature.c(),
                "cooler_heat_kw": s.cooler_heat.kw(),
                "shaft_power_kw": s.shaft_power.kw(),
            })).collect::<Vec<_>>(),
            "assumptions": "ideal gas air, k = 1.4, R = 287 J/(kg K); equal stage pressure ratios; each stage after the first and the aftercooler outlet at intercooled_to_c",
        }),
    ))
}
