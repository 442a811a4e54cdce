//! The audit page: its site, compressors, receivers and files, with the forms that edit them.

use std::collections::HashMap;

use askama::Template;
use axum::extract::{Path, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect};
use axum::Form;

use super::{render, PageError, PageResult};
use crate::app::{App, AuditBundle};
use crate::core::display::Fmt;
use crate::core::model::{CompressorKind, Control};
use crate::site::{CompressorInput, CompressorRecord, FieldError, ReceiverInput, ReceiverRecord, SitePatch};
use crate::store::audits::{Audit, UploadRecord};
use crate::web::error::AppError;
use crate::web::AppState;

pub(super) fn opt_num(form: &HashMap<String, String>, key: &str) -> Result<Option<f64>, FieldError> {
    match form.get(key).map(|s| s.trim()) {
        None | Some("") => Ok(None),
        Some(s) => s
            .replace(',', ".")
            .parse::<f64>()
            .map(Some)
            .map_err(|_| FieldError::new(key, format!("{key} must be a number, got {s:?}"))),
    }
}

pub(super) fn opt_text(form: &HashMap<String, String>, key: &str) -> Option<String> {
    form.get(key).map(|s| s.trim().to_string()).filter(|s| !s.is_empty())
}

pub(super) fn site_patch(form: &HashMap<String, String>) -> Result<SitePatch, FieldError> {
    let months = match form.get("heating_months") {
        Some(s) => Some(
            s.split([',', ' ', ';'])
                .filter(|x| !x.trim().is_empty())
                .map(|x| {
                    x.trim().parse::<u8>().map_err(|_| {
                        FieldError::new(
                            "heating_months",
                            format!("heating months must be numbers 1 to 12, got {x:?}"),
                        )
                    })
                })
                .collect::<Result<Vec<u8>, _>>()?,
        ),
        None => None,
    };
    Ok(SitePatch {
        altitude_m: opt_num(form, "altitude_m")?,
        atmospheric_pressure_kpa_abs: opt_num(form, "atmospheric_pressure_kpa_abs")?,
        atmospheric_from_altitude: form
            .get("atmospheric_pressure_kpa_abs")
            .map(|s| s.trim().is_empty())
            .filter(|&blank| blank),
        inlet_temperature_c: opt_num(form, "inlet_temperature_c")?,
        timezone: opt_text(form, "timezone"),
        electricity_price_per_kwh: opt_num(form, "electricity_price_per_kwh")?,
        demand_charge_per_kw_month: opt_num(form, "demand_charge_per_kw_month")?,
        currency: opt_text(form, "currency"),
        operating_weeks_per_year: opt_num(form, "operating_weeks_per_year")?,
        operating_hours_per_year: if form.contains_key("operating_hours_per_year") {
            Some(opt_num(form, "operating_hours_per_year")?.unwrap_or(0.0))
        } else {
            None
        },
        display_units: opt_text(form, "display_units"),
        heating_fuel_price_per_kwh: opt_num(form, "heating_fuel_price_per_kwh")?,
        heater_efficiency: opt_num(form, "heater_efficiency")?,
        heating_months: months,
        heat_use: opt_text(form, "heat_use"),
        grid_co2_kg_per_kwh: opt_num(form, "grid_co2_kg_per_kwh")?,
        fuel_co2_kg_per_kwh: opt_num(form, "fuel_co2_kg_per_kwh")?,
        other_volume_m3: opt_num(form, "other_volume_m3")?,
    })
}

#[derive(Template)]
#[template(path = "audit.html")]
struct AuditPage {
    audit: Audit,
    compressors: Vec<CompressorRecord>,
    receivers: Vec<ReceiverRecord>,
    uploads: Vec<UploadRecord>,
    fmt: Fmt,
    atmosphere: String,
    atmosphere_source: &'static str,
    system_volume_m3: f64,
    heating_months: String,
    kinds: Vec<(&'static str, String)>,
    controls: Vec<(&'static str, String)>,
    error: Option<String>,
}

fn audit_page(b: AuditBundle, error: Option<String>) -> AuditPage {
    let fmt = b.fmt();
    let atm = b.audit.site.atmospheric_pressure_kpa_abs();
    let system_volume_m3 = b.storage().system_volume_m3();
    let heating_months =
        b.audit.site.heating_months.iter().map(|m| m.to_string()).collect::<Vec<_>>().join(", ");
    AuditPage {
        atmosphere: format!("{:.2} kPa abs", atm),
        atmosphere_source: if b.audit.site.atmospheric_pressure_override_kpa_abs.is_some() {
            "as given"
        } else {
            "from the altitude by the ISO 2533 standard atmosphere"
        },
        fmt,
        system_volume_m3,
        heating_months,
        kinds: CompressorKind::ALL.iter().map(|k| (k.as_str(), k.label())).collect(),
        controls: Control::ALL.iter().map(|k| (k.as_str(), k.label())).collect(),
        audit: b.audit,
        compressors: b.compressors,
        receivers: b.receivers,
        uploads: b.uploads,
        error,
    }
}

pub async fn audit(State(st): State<AppState>, Path(id): Path<i64>) -> PageResult {
    let b = st.app.bundle(id).await?;
    Ok(render(&audit_page(b, None)))
}

/// Re-show the audit page with the error that stopped a form (422).
pub(super) async fn audit_with_error(app: &App, id: i64, e: AppError) -> PageResult {
    match e {
        AppError::Unprocessable { message, .. } | AppError::Conflict(message) => {
            let b = app.bundle(id).await?;
            let mut res = render(&audit_page(b, Some(message)));
            *res.status_mut() = StatusCode::UNPROCESSABLE_ENTITY;
            Ok(res)
        }
        other => Err(PageError(other)),
    }
}

pub async fn save_site(
    State(st): State<AppState>,
    Path(id): Path<i64>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let result = async {
        let patch = site_patch(&form)?;
        let name = opt_text(&form, "name");
        st.app
            .update_audit(
                id,
                name.as_deref(),
                form.get("auditor").map(|s| s.as_str()),
                form.get("notes").map(|s| s.as_str()),
                &patch,
            )
            .await
            .map_err(AppError::from)
    }
    .await;
    match result {
        Ok(()) => {
            st.app.refresh_summary_in_background(id, "site edit");
            Ok(Redirect::to(&format!("/audits/{id}")).into_response())
        }
        Err(e) => audit_with_error(&st.app, id, e).await,
    }
}

pub(super) fn parse_curve(s: &str) -> Result<Vec<(f64, f64)>, FieldError> {
    s.split_whitespace()
        .map(|p| {
            let (q, kw) = p.split_once(':').ok_or_else(|| {
                FieldError::new("power_curve", format!("write each point as flow:kW, got {p:?}"))
            })?;
            let q: f64 =
                q.parse().map_err(|_| FieldError::new("power_curve", format!("bad flow in {p:?}")))?;
            let kw: f64 =
                kw.parse().map_err(|_| FieldError::new("power_curve", format!("bad kW in {p:?}")))?;
            Ok((q, kw))
        })
        .collect()
}

/// A compressor as its form posts it (the add form and the edit page share the fields).
pub(super) fn compressor_input(form: &HashMap<String, String>) -> Result<CompressorInput, FieldError> {
    let need = |k: &str| -> Result<f64, FieldError> {
        opt_num(form, k)?.ok_or_else(|| FieldError::new(k, format!("{k} is required")))
    };
    Ok(CompressorInput {
        tag: form.get("tag").cloned().unwrap_or_default(),
        kind: form.get("kind").cloned().unwrap_or_default(),
        control: form.get("control").cloned().unwrap_or_default(),
        cooling: form.get("cooling").cloned().unwrap_or_default(),
        rated_power_kw: need("rated_power_kw")?,
        rated_flow_m3_min: need("rated_flow_m3_min")?,
        rated_pressure_bar_g: need("rated_pressure_bar_g")?,
        no_load_power_kw: opt_num(form, "no_load_power_kw")?,
        nameplate_motor_kw: opt_num(form, "nameplate_motor_kw")?,
        max_pressure_bar_g: opt_num(form, "max_pressure_bar_g")?,
        unloaded_power_fraction: opt_num(form, "unloaded_power_fraction")?,
        stages: opt_num(form, "stages")?.map(|s| s as u32),
        rated_specific_power_kw_per_m3_min: opt_num(form, "rated_specific_power_kw_per_m3_min")?,
        power_curve: parse_curve(form.get("power_curve").map(|s| s.as_str()).unwrap_or(""))?,
        min_speed_fraction: None,
        unloaded_level_kw: opt_num(form, "unloaded_level_kw")?,
        loaded_level_kw: opt_num(form, "loaded_level_kw")?,
        year: opt_num(form, "year")?.map(|y| y as i32),
        notes: form.get("notes").cloned().unwrap_or_default(),
    })
}

/// A receiver as its form posts it.
pub(super) fn receiver_input(form: &HashMap<String, String>) -> Result<ReceiverInput, FieldError> {
    Ok(ReceiverInput {
        name: form.get("name").cloned().unwrap_or_default(),
        volume_m3: opt_num(form, "volume_m3")?.unwrap_or(f64::NAN),
        notes: form.get("notes").cloned().unwrap_or_default(),
    })
}

pub async fn add_compressor(
    State(st): State<AppState>,
    Path(id): Path<i64>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let result = async {
        let input = compressor_input(&form)?;
        st.app.save_compressor(id, 0, &input).await.map_err(AppError::from)
    }
    .await;
    match result {
        Ok(_) => {
            st.app.refresh_summary_in_background(id, "compressor added");
            Ok(Redirect::to(&format!("/audits/{id}")).into_response())
        }
        Err(e) => audit_with_error(&st.app, id, e).await,
    }
}

pub async fn add_receiver(
    State(st): State<AppState>,
    Path(id): Path<i64>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let result = async {
        let input = receiver_input(&form)?;
        st.app.add_receiver(id, &input).await.map_err(AppError::from)
    }
    .await;
    match result {
        Ok(_) => Ok(Redirect::to(&format!("/audits/{id}")).into_response()),
        Err(e) => audit_with_error(&st.app, id, e).await,
    }
}
