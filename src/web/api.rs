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
use crate::core::fieldtest::parse_time_ms;
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
    // Each window's ends on the site's clock as every page says a time (`core::display::local_ms`:
    // "CET", never the browser's "GMT+1").
    let tz = st.app.bundle(id).await?.audit.site.timezone;
    let mut events = serde_json::to_value(&ev).map_err(|e| AppError::Internal(e.into()))?;
    for e in events.as_array_mut().into_iter().flatten() {
        for (ms, local) in [("start_ms", "start_local"), ("end_ms", "end_local")] {
            if let Some(t) = e.get(ms).and_then(serde_json::Value::as_i64) {
                e[local] = crate::core::display::local_ms(t, &tz).into();
            }
        }
    }
    Ok(json(StatusCode::OK, &serde_json::json!({ "events": events })))
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

mod calc;
pub use calc::{calc_compression, calc_orifice, calc_ranges};

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
