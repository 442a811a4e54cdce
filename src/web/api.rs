/*!
The JSON API, version 1 (`/api/v1`), as `API.md` fixes it: SI-canonical numbers with units in the
field names, RFC 3339 times, and the error shape of [`AppError`].
*/

use axum::extract::{Query, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Response};
use serde::{Deserialize, Serialize};

use super::error::AppError;
pub use super::extract::{ApiJson, ApiPath};
use super::AppState;
use crate::core::entry::Entry;
use crate::core::fieldtest::parse_time_ms;
use crate::core::units::{FreeAirFlow, PressureAbs, SiteAir, Temperature, UnitSystem};
use crate::core::{leaks, thermo};
use crate::site::{CompressorInput, ReceiverInput, SitePatch};

fn json<T: Serialize>(status: StatusCode, v: &T) -> Response {
    (status, axum::Json(v)).into_response()
}

pub async fn not_found() -> AppError {
    AppError::NotFound("there is no such API endpoint".into())
}

pub async fn list_audits(State(st): State<AppState>) -> Result<Response, AppError> {
    let list = st.app.list_audits().await?;
    Ok(json(StatusCode::OK, &serde_json::json!({ "audits": list })))
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub struct NewAudit {
    name: String,
    #[serde(default)]
    site: SitePatch,
    #[serde(default)]
    auditor: Option<String>,
    #[serde(default)]
    notes: Option<String>,
}

pub async fn create_audit(
    State(st): State<AppState>,
    ApiJson(body): ApiJson<NewAudit>,
) -> Result<Response, AppError> {
    let id = st.app.create_audit(&body.name, &body.site).await?;
    if body.auditor.is_some() || body.notes.is_some() {
        st.app
            .update_audit(id, None, body.auditor.as_deref(), body.notes.as_deref(), &SitePatch::default())
            .await?;
    }
    Ok(json(StatusCode::CREATED, &serde_json::json!({ "id": id })))
}

/// The audit as the API shows it: site (with the atmosphere that follows from it), equipment, files.
pub async fn get_audit(State(st): State<AppState>, ApiPath(id): ApiPath<i64>) -> Result<Response, AppError> {
    let b = st.app.bundle(id).await?;
    let site = &b.audit.site;
    let storage = b.storage();
    Ok(json(
        StatusCode::OK,
        &serde_json::json!({
            "id": b.audit.id,
            "name": b.audit.name,
            "auditor": b.audit.auditor,
            "notes": b.audit.notes,
            "created_at": b.audit.created_at,
            "revision": b.audit.revision,
            "currency": site.currency,
            "site": {
                "altitude_m": site.altitude_m,
                "atmospheric_pressure_kpa_abs": site.atmospheric_pressure_kpa_abs(),
                "atmospheric_pressure_source": if site.atmospheric_pressure_override_kpa_abs.is_some() { "given" } else { "iso_2533_from_altitude" },
                "inlet_temperature_c": site.inlet_temperature_c,
                "timezone": site.timezone,
                "electricity_price_per_kwh": site.electricity_price_per_kwh,
                "demand_charge_per_kw_month": site.demand_charge_per_kw_month,
                "currency": site.currency,
                "operating_weeks_per_year": site.operating_weeks_per_year,
                "operating_hours_per_year": site.operating_hours_per_year,
                "display_units": site.display_units,
                "heating_fuel_price_per_kwh": site.heating_fuel_price_per_kwh,
                "heater_efficiency": site.heater_efficiency,
                "heating_months": site.heating_months,
                "heat_use": site.heat_use,
                "heating_degree_days_k_day": site.heating_degree_days_k_day,
                "annual_space_heat_kwh": site.annual_space_heat_kwh,
                "grid_co2_kg_per_kwh": site.grid_co2_kg_per_kwh,
                "fuel_co2_kg_per_kwh": site.fuel_co2_kg_per_kwh,
                "other_volume_m3": site.other_volume_m3,
            },
            "compressors": b.compressors,
            "receivers": b.receivers,
            "storage": { "system_volume_m3": storage.system_volume_m3(), "receivers_m3": storage.receivers_m3, "other_volume_m3": storage.other_volume_m3 },
            "uploads": b.uploads,
            "channels": b.channels,
            "field_tests": b.field_tests,
        }),
    ))
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub struct AuditPatch {
    name: Option<String>,
    auditor: Option<String>,
    notes: Option<String>,
    #[serde(default)]
    site: SitePatch,
}

pub async fn patch_audit(
    State(st): State<AppState>,
    ApiPath(id): ApiPath<i64>,
    ApiJson(p): ApiJson<AuditPatch>,
) -> Result<Response, AppError> {
    st.app.update_audit(id, p.name.as_deref(), p.auditor.as_deref(), p.notes.as_deref(), &p.site).await?;
    st.app.refresh_summary_in_background(id, "site edit");
    get_audit(State(st), ApiPath(id)).await
}

/// `DELETE /api/v1/audits/{id}`: the audit with everything it holds, in one transaction -> 204.
pub async fn delete_audit(
    State(st): State<AppState>,
    ApiPath(id): ApiPath<i64>,
) -> Result<Response, AppError> {
    if !st.app.delete_audit(id).await? {
        return Err(AppError::NotFound(format!("no audit {id}")));
    }
    Ok(StatusCode::NO_CONTENT.into_response())
}

pub async fn add_compressor(
    State(st): State<AppState>,
    ApiPath(id): ApiPath<i64>,
    ApiJson(c): ApiJson<CompressorInput>,
) -> Result<Response, AppError> {
    let cid = st.app.save_compressor(id, 0, &c).await?;
    st.app.refresh_summary_in_background(id, "compressor added");
    Ok(json(StatusCode::CREATED, &serde_json::json!({ "id": cid })))
}

pub async fn update_compressor(
    State(st): State<AppState>,
    ApiPath((id, cid)): ApiPath<(i64, i64)>,
    ApiJson(c): ApiJson<CompressorInput>,
) -> Result<Response, AppError> {
    let b = st.app.bundle(id).await?;
    if !b.compressors.iter().any(|x| x.id == cid) {
        return Err(AppError::NotFound(format!("audit {id} has no compressor {cid}")));
    }
    st.app.save_compressor(id, cid, &c).await?;
    st.app.refresh_summary_in_background(id, "compressor edit");
    Ok(json(StatusCode::OK, &serde_json::json!({ "id": cid })))
}

pub async fn delete_compressor(
    State(st): State<AppState>,
    ApiPath((id, cid)): ApiPath<(i64, i64)>,
) -> Result<Response, AppError> {
    if !st.app.delete_compressor(id, cid).await? {
        return Err(AppError::NotFound(format!("audit {id} has no compressor {cid}")));
    }
    st.app.refresh_summary_in_background(id, "compressor deleted");
    Ok(StatusCode::NO_CONTENT.into_response())
}

pub async fn add_receiver(
    State(st): State<AppState>,
    ApiPath(id): ApiPath<i64>,
    ApiJson(r): ApiJson<ReceiverInput>,
) -> Result<Response, AppError> {
    let rid = st.app.add_receiver(id, &r).await?;
    Ok(json(StatusCode::CREATED, &serde_json::json!({ "id": rid })))
}

/// `PUT /audits/{id}/receivers/{rid}`: the body of its `POST`.
pub async fn update_receiver(
    State(st): State<AppState>,
    ApiPath((id, rid)): ApiPath<(i64, i64)>,
    ApiJson(r): ApiJson<ReceiverInput>,
) -> Result<Response, AppError> {
    if !st.app.update_receiver(id, rid, &r).await? {
        return Err(AppError::NotFound(format!("audit {id} has no receiver {rid}")));
    }
    Ok(json(StatusCode::OK, &serde_json::json!({ "id": rid })))
}

pub async fn delete_receiver(
    State(st): State<AppState>,
    ApiPath((id, rid)): ApiPath<(i64, i64)>,
) -> Result<Response, AppError> {
    if !st.app.delete_receiver(id, rid).await? {
        return Err(AppError::NotFound(format!("audit {id} has no receiver {rid}")));
    }
    Ok(StatusCode::NO_CONTENT.into_response())
}

pub async fn list_uploads(
    State(st): State<AppState>,
    ApiPath(id): ApiPath<i64>,
) -> Result<Response, AppError> {
    let b = st.app.bundle(id).await?;
    let uploads: Vec<serde_json::Value> = b
        .uploads
        .iter()
        .map(|u| {
            let mut v = serde_json::to_value(u).unwrap_or_default();
            v["quality"] = serde_json::from_str(&u.quality_json).unwrap_or_default();
            v
        })
        .collect();
    Ok(json(StatusCode::OK, &serde_json::json!({ "uploads": uploads })))
}

/// `GET /api/v1/audits/{id}/uploads/{upload_id}`: one upload as the list shows it, with
/// `channels`: each channel it wrote, its `readings` and the arithmetic `mean_si`, `min_si` and
/// `max_si` of the stored readings in the SI unit `unit_si` (as `series`).
pub async fn get_upload(
    State(st): State<AppState>,
    ApiPath((id, upload_id)): ApiPath<(i64, i64)>,
) -> Result<Response, AppError> {
    let b = st.app.bundle(id).await?;
    let no_upload = || AppError::NotFound(format!("audit {id} has no upload {upload_id}"));
    let u = b.uploads.iter().find(|u| u.id == upload_id).ok_or_else(no_upload)?;
    let stats = st.app.upload_channel_stats(&b, upload_id).await?.ok_or_else(no_upload)?;
    let mut v = serde_json::to_value(u).unwrap_or_default();
    v["quality"] = serde_json::from_str(&u.quality_json).unwrap_or_default();
    v["channels"] = stats
        .iter()
        .map(|c| {
            let mut c_json = serde_json::to_value(c).unwrap_or_default();
            c_json["unit_si"] = unit_si(&c.quantity).into();
            c_json
        })
        .collect();
    Ok(json(StatusCode::OK, &v))
}

/// The SI unit a channel's readings are stored in, as the API names it.
fn unit_si(quantity: &str) -> &'static str {
    match quantity {
        "power" => "W",
        "energy" => "J",
        "pressure" => "Pa_abs",
        "flow" => "m3_s_free_air",
        _ => "K",
    }
}

pub async fn channels(State(st): State<AppState>, ApiPath(id): ApiPath<i64>) -> Result<Response, AppError> {
    let b = st.app.bundle(id).await?;
    Ok(json(StatusCode::OK, &serde_json::json!({ "channels": b.channels })))
}

#[derive(Deserialize)]
pub struct Window {
    from: Option<String>,
    to: Option<String>,
}

fn window(w: &Window) -> Result<Option<(i64, i64)>, AppError> {
    match (&w.from, &w.to) {
        (None, None) => Ok(None),
        (f, t) => {
            let from = match f {
                Some(s) => parse_time_ms("from", s).map_err(|e| AppError::field("from", e.message))?,
                None => i64::MIN / 4,
            };
            let to = match t {
                Some(s) => parse_time_ms("to", s).map_err(|e| AppError::field("to", e.message))?,
                None => i64::MAX / 4,
            };
            if to <= from {
                return Err(AppError::field("to", "the end of the window must be after its start"));
            }
            Ok(Some((from, to)))
        }
    }
}

pub async fn summary(
    State(st): State<AppState>,
    ApiPath(id): ApiPath<i64>,
    Query(w): Query<Window>,
) -> Result<Response, AppError> {
    let win = window(&w)?;
    Ok(json(StatusCode::OK, &st.app.summary(id, win).await?.to_json()?))
}

#[derive(Deserialize)]
pub struct SeriesQuery {
    channel: i64,
    from: Option<String>,
    to: Option<String>,
    points: Option<usize>,
}

/// Downsampled min/mean/max of one channel from the rollups (SI units, see `unit_si`).
pub async fn series(
    State(st): State<AppState>,
    ApiPath(id): ApiPath<i64>,
    Query(q): Query<SeriesQuery>,
) -> Result<Response, AppError> {
    let b = st.app.bundle(id).await?;
    let c = b
        .channels
        .iter()
        .find(|c| c.id == q.channel)
        .ok_or_else(|| AppError::NotFound(format!("audit {id} has no channel {}", q.channel)))?;
    let w = window(&Window { from: q.from.clone(), to: q.to.clone() })?.unwrap_or((c.first_ms, c.last_ms));
    let points = q.points.unwrap_or(600).clamp(10, 2000);
    let (from, to) = (w.0.max(c.first_ms), w.1.min(c.last_ms));
    let pts = st.app.chart_series(&b, c, from, to, points).await?;
    // An energy counter's series is the power it stands for (`App::chart_series`).
    let counter = c.quantity == "energy";
    let unit = if counter { "W" } else { unit_si(&c.quantity) };
    Ok(json(
        StatusCode::OK,
        &serde_json::json!({
            "channel": c, "unit_si": unit, "power_from_counter": counter,
            // Points further apart than this lie across a gap in the log: a line breaks there.
            "gap_ms": crate::store::read::chart_gap_ms(c, from, to, points),
            "t_ms": pts.iter().map(|p| p.t_ms).collect::<Vec<_>>(),
            "min": pts.iter().map(|p| p.min).collect::<Vec<_>>(),
            "mean": pts.iter().map(|p| p.mean).collect::<Vec<_>>(),
            "max": pts.iter().map(|p| p.max).collect::<Vec<_>>(),
        }),
    ))
}

pub async fn list_field_tests(
    State(st): State<AppState>,
    ApiPath(id): ApiPath<i64>,
) -> Result<Response, AppError> {
    let b = st.app.bundle(id).await?;
    Ok(json(StatusCode::OK, &serde_json::json!({ "field_tests": b.field_tests })))
}

pub async fn add_field_test(
    State(st): State<AppState>,
    ApiPath(id): ApiPath<i64>,
    ApiJson(body): ApiJson<serde_json::Value>,
) -> Result<Response, AppError> {
    let rec = st.app.add_field_test(id, body).await?;
    Ok(json(StatusCode::CREATED, &rec))
}

/// `PUT /audits/{id}/field-tests/{tid}`: the body of its `POST`, evaluated again.
pub async fn replace_field_test(
    State(st): State<AppState>,
    ApiPath((id, tid)): ApiPath<(i64, i64)>,
    ApiJson(body): ApiJson<serde_json::Value>,
) -> Result<Response, AppError> {
    let rec = st.app.replace_field_test(id, tid, body).await?;
    Ok(json(StatusCode::OK, &rec))
}

pub async fn delete_field_test(
    State(st): State<AppState>,
    ApiPath((id, tid)): ApiPath<(i64, i64)>,
) -> Result<Response, AppError> {
    if !st.app.delete_field_test(id, tid).await? {
        return Err(AppError::NotFound(format!("audit {id} has no field test {tid}")));
    }
    Ok(StatusCode::NO_CONTENT.into_response())
}

pub async fn decay_events(
    State(st): State<AppState>,
    ApiPath(id): ApiPath<i64>,
) -> Result<Response, AppError> {
    let ev = st.app.decay_events(id).await?;
    Ok(json(StatusCode::OK, &serde_json::json!({ "events": ev })))
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub struct CostBody {
    /// `null` goes back to the documented default.
    implementation_cost: Option<f64>,
}

pub async fn put_cost(
    State(st): State<AppState>,
    ApiPath((id, kind)): ApiPath<(i64, String)>,
    ApiJson(body): ApiJson<CostBody>,
) -> Result<Response, AppError> {
    st.app.set_cost(id, &kind, body.implementation_cost).await?;
    Ok(json(
        StatusCode::OK,
        &serde_json::json!({ "kind": kind, "implementation_cost": body.implementation_cost }),
    ))
}

/// `GET /api/v1/audits/{id}/measures`: the audit's measure plan (order, kinds left out, options).
pub async fn get_measure_plan(
    State(st): State<AppState>,
    ApiPath(id): ApiPath<i64>,
) -> Result<Response, AppError> {
    let plan = st.app.measure_plan(id).await?;
    Ok(json(StatusCode::OK, &plan))
}

/// `PUT /api/v1/audits/{id}/measures` with a `MeasureOptions` body (fields not given take their
/// defaults): the plan is stored and the stack priced again with the next summary.
pub async fn put_measure_plan(
    State(st): State<AppState>,
    ApiPath(id): ApiPath<i64>,
    ApiJson(plan): ApiJson<crate::core::recommend::MeasureOptions>,
) -> Result<Response, AppError> {
    st.app.set_measure_plan(id, &plan).await?;
    Ok(json(StatusCode::OK, &plan))
}

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
    match errs.len() {
        0 => {}
        1 => return Err(AppError::field(&errs[0].field, errs[0].message.clone())),
        _ => return Err(AppError::Refusals(errs)),
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
    if let Some(p) = b.inlet_pressure_kpa_abs {
        let (lo, hi) = INLET_PRESSURE_KPA_ABS;
        calc_within("inlet_pressure_kpa_abs", p, lo, false, hi, " kPa abs")?;
    }
    calc_within("flow_m3_min", b.flow_m3_min, 0.0, true, MAX_FLOW_M3_MIN, " m³/min")?;
    calc_within(
        "discharge_pressure_bar_g",
        b.discharge_pressure_bar_g,
        f64::MIN,
        false,
        MAX_PRESSURE_BAR_G,
        " bar(g)",
    )?;
    if !(1..=MAX_STAGES).contains(&b.stages) {
        return Err(AppError::field("stages", format!("stages must be 1 to {MAX_STAGES}, got {}", b.stages)));
    }
    calc_within("isentropic_efficiency", b.isentropic_efficiency, 0.0, true, 1.0, "")?;
    if let Some(t) = b.intercooled_to_c {
        let (lo, hi) = AIR_TEMPERATURE_C;
        calc_within("intercooled_to_c", t, lo, false, hi, " °C")?;
    }
    // Without an atmosphere the inlet pressure stands for it (as before), within the inlet's range.
    let atmosphere_range = match (b.atmospheric_pressure_kpa_abs, b.inlet_pressure_kpa_abs) {
        (None, Some(_)) => ("inlet_pressure_kpa_abs", INLET_PRESSURE_KPA_ABS),
        _ => ("atmospheric_pressure_kpa_abs", ATMOSPHERE_KPA_ABS),
    };
    let site = calc_site(
        &st,
        b.audit_id,
        b.atmospheric_pressure_kpa_abs.or(b.inlet_pressure_kpa_abs),
        b.inlet_temperature_c,
        atmosphere_range,
    )
    .await?;
    let inlet = b.inlet_pressure_kpa_abs.map(PressureAbs::from_kpa_abs).unwrap_or(site.atmosphere);
    let discharge = PressureAbs::from_bar_g(b.discharge_pressure_bar_g, site.atmosphere);
    if discharge.0 <= 0.0 {
        return Err(AppError::field(
            "discharge_pressure_bar_g",
            format!("{} bar(g) is below zero absolute", b.discharge_pressure_bar_g),
        ));
    }
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

pub async fn add_scenario(
    State(st): State<AppState>,
    ApiPath(id): ApiPath<i64>,
    ApiJson(body): ApiJson<serde_json::Value>,
) -> Result<Response, AppError> {
    let (sid, result) = st.app.add_scenario(id, body).await?;
    let result = serde_json::to_value(&result).map_err(|e| AppError::Internal(e.into()))?;
    Ok(json(StatusCode::CREATED, &serde_json::json!({ "id": sid, "result": result })))
}

pub async fn list_scenarios(
    State(st): State<AppState>,
    ApiPath(id): ApiPath<i64>,
) -> Result<Response, AppError> {
    let list = st.app.scenarios(id).await?;
    Ok(json(StatusCode::OK, &serde_json::json!({ "scenarios": list })))
}

/// `PUT /audits/{id}/scenarios/{sid}`: the body of its `POST`, replayed again.
pub async fn replace_scenario(
    State(st): State<AppState>,
    ApiPath((id, sid)): ApiPath<(i64, i64)>,
    ApiJson(body): ApiJson<serde_json::Value>,
) -> Result<Response, AppError> {
    let result = st.app.replace_scenario(id, sid, body).await?;
    let result = serde_json::to_value(&result).map_err(|e| AppError::Internal(e.into()))?;
    Ok(json(StatusCode::OK, &serde_json::json!({ "id": sid, "result": result })))
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ScenarioPatch {
    name: Option<String>,
    proposal: Option<bool>,
}

/// `PATCH /audits/{id}/scenarios/{sid}` `{"name": "...", "proposal": true}`: rename, or put it
/// forward as the control measure (or withdraw it), without replaying.
pub async fn patch_scenario(
    State(st): State<AppState>,
    ApiPath((id, sid)): ApiPath<(i64, i64)>,
    ApiJson(p): ApiJson<ScenarioPatch>,
) -> Result<Response, AppError> {
    st.app.edit_scenario(id, sid, p.name.as_deref(), p.proposal).await?;
    Ok(json(StatusCode::OK, &st.app.scenario(id, sid).await?))
}

pub async fn get_scenario(
    State(st): State<AppState>,
    ApiPath((id, sid)): ApiPath<(i64, i64)>,
) -> Result<Response, AppError> {
    Ok(json(StatusCode::OK, &st.app.scenario(id, sid).await?))
}

pub async fn delete_scenario(
    State(st): State<AppState>,
    ApiPath((id, sid)): ApiPath<(i64, i64)>,
) -> Result<Response, AppError> {
    if !st.app.delete_scenario(id, sid).await? {
        return Err(AppError::NotFound(format!("audit {id} has no scenario {sid}")));
    }
    Ok(StatusCode::NO_CONTENT.into_response())
}

// Dryers, filters, drains and end uses (API.md "Additions"): one set of handlers, the list named by
// the route (`/dryers`, `/filters`, `/drains`, `/end-uses`).

macro_rules! treatment_routes {
    ($kind:expr, $variant:ident, $input:ident, $list:ident, $add:ident, $put:ident, $del:ident) => {
        pub async fn $list(State(st): State<AppState>, ApiPath(id): ApiPath<i64>) -> Result<Response, AppError> {
            let items = st.app.treatment_items(id, $kind).await?;
            Ok(json(StatusCode::OK, &serde_json::json!({ $kind.plural(): items })))
        }
        pub async fn $add(
            State(st): State<AppState>,
            ApiPath(id): ApiPath<i64>,
            ApiJson(body): ApiJson<treatment::$input>,
        ) -> Result<Response, AppError> {
            let iid = st.app.add_treatment_item(id, TreatmentInput::$variant(body)).await?;
            Ok(json(StatusCode::CREATED, &serde_json::json!({ "id": iid })))
        }
        pub async fn $put(
            State(st): State<AppState>,
            ApiPath((id, iid)): ApiPath<(i64, i64)>,
            ApiJson(body): ApiJson<treatment::$input>,
        ) -> Result<Response, AppError> {
            if !st.app.update_treatment_item(id, iid, TreatmentInput::$variant(body)).await? {
                return Err(AppError::NotFound(format!("audit {id} has no {} {iid}", $kind.stored())));
            }
            Ok(json(StatusCode::OK, &serde_json::json!({ "id": iid })))
        }
        pub async fn $del(
            State(st): State<AppState>,
            ApiPath((id, iid)): ApiPath<(i64, i64)>,
        ) -> Result<Response, AppError> {
            if !st.app.delete_treatment_item(id, $kind, iid).await? {
                return Err(AppError::NotFound(format!("audit {id} has no {} {iid}", $kind.stored())));
            }
            Ok(StatusCode::NO_CONTENT.into_response())
        }
    };
}

use crate::app::treatment::{self, ItemKind, TreatmentInput};
treatment_routes!(ItemKind::Dryer, Dryer, DryerInput, list_dryers, add_dryer, update_dryer, delete_dryer);
treatment_routes!(ItemKind::Drain, Drain, DrainInput, list_drains, add_drain, update_drain, delete_drain);
treatment_routes!(
    ItemKind::Filter,
    Filter,
    FilterInput,
    list_filters,
    add_filter,
    update_filter,
    delete_filter
);
treatment_routes!(
    ItemKind::EndUse,
    EndUse,
    EndUseInput,
    list_end_uses,
    add_end_use,
    update_end_use,
    delete_end_use
);
