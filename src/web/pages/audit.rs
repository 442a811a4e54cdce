//! The audit page: its site, compressors, receivers and files, with the forms that edit them.

use std::cell::RefCell;
use std::collections::HashMap;

use askama::Template;
use axum::extract::{Path, Query, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect};
use axum::Form;

use super::flash::{Done, DoneQuery};
use super::inputs::Inputs;
use super::refusal::Refusal;
use super::words::local_time;
use super::{render, PageError, PageResult};
use crate::app::{App, AuditBundle};
use crate::core::datasheet::NoLoadBasis;
use crate::core::display::Fmt;
use crate::core::entry::Entry;
use crate::core::model::{CompressorKind, CompressorSpec, Control};
use crate::site::{
    CompressorInput, CompressorRecord, FieldError, ReceiverInput, ReceiverRecord, SitePatch, SiteRecord,
};
use crate::store::audits::{Audit, UploadRecord};
use crate::web::error::AppError;
use crate::web::AppState;

pub(super) fn opt_num(form: &HashMap<String, String>, key: &str) -> Result<Option<f64>, FieldError> {
    match form.get(key).map(|s| s.trim()) {
        None | Some("") => Ok(None),
        Some(s) => {
            s.replace(',', ".").parse::<f64>().map(Some).map_err(|_| {
                FieldError::new(key, format!("{} must be a number, got “{s}”", number_words(key)))
            })
        }
    }
}

/// A numeric field of the site and compressor forms in words, as its label says it (a refusal is
/// read beside the box, never with the form's field name).
fn number_words(key: &str) -> &str {
    match key {
        "electricity_price_per_kwh" => "the electricity price",
        "demand_charge_per_kw_month" => "the demand charge",
        "heater_efficiency" => "the heater's efficiency",
        "heating_fuel_price_per_kwh" => "the heating fuel's price",
        "annual_space_heat_kwh" => "the space heat a year",
        "operating_hours_per_year" => "the operating hours a year",
        "operating_weeks_per_year" => "the operating weeks a year",
        other => crate::core::datasheet::field_words(other),
    }
}

pub(super) fn opt_text(form: &HashMap<String, String>, key: &str) -> Option<String> {
    form.get(key).map(|s| s.trim().to_string()).filter(|s| !s.is_empty())
}

/// The site form's fields; altitude, inlet temperature and the piping volume in the units the form
/// was drawn in, `previous` the stored site (a value shown and posted unchanged is kept as stored).
pub(super) fn site_patch(
    form: &HashMap<String, String>,
    previous: Option<&SiteRecord>,
) -> Result<SitePatch, FieldError> {
    let inputs = Inputs::of_form(form);
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
        altitude_m: inputs.opt(form, "altitude_m", Entry::Altitude, previous.map(|s| s.altitude_m))?,
        atmospheric_pressure_kpa_abs: inputs.opt(
            form,
            "atmospheric_pressure_kpa_abs",
            Entry::Atmosphere,
            previous.and_then(|s| s.atmospheric_pressure_override_kpa_abs),
        )?,
        atmospheric_from_altitude: form
            .get("atmospheric_pressure_kpa_abs")
            .map(|s| s.trim().is_empty())
            .filter(|&blank| blank),
        inlet_temperature_c: inputs.opt(
            form,
            "inlet_temperature_c",
            Entry::Temperature,
            previous.map(|s| s.inlet_temperature_c),
        )?,
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
        heating_degree_days_k_day: match form.get("heating_degree_days_k_day") {
            Some(t) => Some(inputs.read_degree_days(
                t,
                previous.map(|s| s.heating_degree_days_k_day.as_slice()).unwrap_or(&[]),
            )?),
            None => None,
        },
        annual_space_heat_kwh: if form.contains_key("annual_space_heat_kwh") {
            Some(opt_num(form, "annual_space_heat_kwh")?.unwrap_or(0.0))
        } else {
            None
        },
        grid_co2_kg_per_kwh: opt_num(form, "grid_co2_kg_per_kwh")?,
        fuel_co2_kg_per_kwh: opt_num(form, "fuel_co2_kg_per_kwh")?,
        other_volume_m3: inputs.opt(
            form,
            "other_volume_m3",
            Entry::Volume,
            previous.map(|s| s.other_volume_m3),
        )?,
    })
}

#[derive(Template)]
#[template(path = "audit.html")]
struct AuditPage {
    audit: Audit,
    compressors: Vec<CompressorRecord>,
    receivers: Vec<ReceiverRecord>,
    uploads: Vec<UploadRecord>,
    /// Each file's first and last reading in the site's time.
    spans: Vec<(String, String, Vec<String>)>,
    fmt: Fmt,
    inp: Inputs,
    zones: Vec<String>,
    atmosphere: String,
    atmosphere_source: &'static str,
    system_volume_m3: f64,
    heating_months: String,
    kinds: Vec<(&'static str, String)>,
    controls: Vec<(&'static str, String)>,
    /// A refused form: every refusal, and what was typed (`refusal`).
    refused: Option<Refusal>,
    /// What was just done (`flash`).
    done: Option<String>,
}

fn audit_page(b: AuditBundle, refused: Option<Refusal>) -> AuditPage {
    let fmt = b.fmt();
    let atm = b.audit.site.atmospheric_pressure_kpa_abs();
    let system_volume_m3 = b.storage().system_volume_m3();
    let heating_months =
        b.audit.site.heating_months.iter().map(|m| m.to_string()).collect::<Vec<_>>().join(", ");
    let tz = &b.audit.site.timezone;
    let tz_owned = tz.clone();
    let spans = b
        .uploads
        .iter()
        .map(|u| {
            let at = |t: &Option<String>| t.as_deref().map(|t| local_time(t, tz)).unwrap_or_default();
            (at(&u.first), at(&u.last), super::read_as::mapping_in_words(&u.mapping, tz))
        })
        .collect();
    AuditPage {
        spans,
        atmosphere: fmt.pressure_abs_kpa(atm),
        atmosphere_source: if b.audit.site.atmospheric_pressure_override_kpa_abs.is_some() {
            "as given"
        } else {
            "from the altitude by the ISO 2533 standard atmosphere"
        },
        inp: Inputs::new(fmt.units),
        zones: super::zone_names(),
        fmt,
        system_volume_m3,
        heating_months,
        kinds: CompressorKind::ALL.iter().map(|k| (k.as_str(), k.label())).collect(),
        controls: Control::ALL.iter().map(|k| (k.as_str(), k.label())).collect(),
        audit: b.audit,
        compressors: b.compressors,
        receivers: b.receivers,
        uploads: super::words::uploads_in_local_time(b.uploads, &tz_owned, &fmt),
        refused,
        done: None,
    }
}

pub async fn audit(
    State(st): State<AppState>,
    Path(id): Path<i64>,
    Query(q): Query<DoneQuery>,
) -> PageResult {
    let b = st.app.bundle(id).await?;
    Ok(render(&AuditPage { done: Done::message(&q), ..audit_page(b, None) }))
}

/// Re-show the audit page with a refused form: every refusal and what was typed (422).
pub(super) async fn audit_refused(app: &App, id: i64, refusal: Refusal) -> PageResult {
    let b = app.bundle(id).await?;
    let mut res = render(&audit_page(b, Some(refusal)));
    *res.status_mut() = StatusCode::UNPROCESSABLE_ENTITY;
    Ok(res)
}

/// Re-show the audit page with the error that stopped a form posted to `action` (422); other
/// errors as error pages.
pub(super) async fn audit_with_error(
    app: &App,
    id: i64,
    action: &str,
    form: &HashMap<String, String>,
    e: AppError,
) -> PageResult {
    match Refusal::of_error(action, form, &e) {
        Some(r) => audit_refused(app, id, r).await,
        None => Err(PageError(e)),
    }
}

pub async fn save_site(
    State(st): State<AppState>,
    Path(id): Path<i64>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let action = format!("/audits/{id}/site");
    let stored = st.app.bundle(id).await?.audit.site;
    // Every field's refusal at once: the fields that cannot be read, else each field's check.
    let refusals = match site_patch(&form, Some(&stored)) {
        Err(e) => vec![e],
        Ok(patch) => {
            let mut all = stored.refusals(&patch);
            if opt_text(&form, "name").is_none() && form.contains_key("name") {
                all.insert(0, FieldError::new("name", "the audit needs a name"));
            }
            all
        }
    };
    if !refusals.is_empty() {
        return audit_refused(&st.app, id, Refusal::new(action, &form, refusals)).await;
    }
    let result = async {
        let patch = site_patch(&form, Some(&stored))?;
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
        Err(e) => audit_with_error(&st.app, id, &action, &form, e).await,
    }
}

/// A compressor as its form posts it (the add form and the edit page share the fields): flows,
/// pressures and specific power in the units the form was drawn in; `previous` is the stored
/// compressor, whose values come back exactly when their fields are posted as shown. Every field
/// that cannot be read is refused at once.
pub(super) fn compressor_input(
    form: &HashMap<String, String>,
    previous: Option<&CompressorSpec>,
) -> Result<CompressorInput, Vec<FieldError>> {
    let inputs = Inputs::of_form(form);
    let errs = RefCell::new(Vec::new());
    let keep = |r: Result<Option<f64>, FieldError>| {
        r.unwrap_or_else(|e| {
            errs.borrow_mut().push(e);
            None
        })
    };
    let need_kw =
        |k: &str| {
            keep(opt_num(form, k).and_then(|v| {
                v.ok_or_else(|| FieldError::new(k, format!("{} is required", words(k)))).map(Some)
            }))
            .unwrap_or(f64::NAN)
        };
    let need =
        |k: &str, kind: Entry, prev: Option<f64>| {
            keep(inputs.opt(form, k, kind, prev).and_then(|v| {
                v.ok_or_else(|| FieldError::new(k, format!("{} is required", words(k)))).map(Some)
            }))
            .unwrap_or(f64::NAN)
        };
    let input = CompressorInput {
        tag: form.get("tag").cloned().unwrap_or_default(),
        kind: form.get("kind").cloned().unwrap_or_default(),
        control: form.get("control").cloned().unwrap_or_default(),
        cooling: form.get("cooling").cloned().unwrap_or_default(),
        rated_power_kw: need_kw("rated_power_kw"),
        rated_flow_m3_min: need(
            "rated_flow_m3_min",
            Entry::FreeAirFlow,
            previous.map(|c| c.rated_flow_m3_min),
        ),
        rated_pressure_bar_g: need(
            "rated_pressure_bar_g",
            Entry::GaugePressure,
            previous.map(|c| c.rated_pressure_bar_g),
        ),
        no_load_power_kw: keep(opt_num(form, "no_load_power_kw")),
        nameplate_motor_kw: keep(opt_num(form, "nameplate_motor_kw")),
        max_pressure_bar_g: keep(inputs.opt(
            form,
            "max_pressure_bar_g",
            Entry::GaugePressure,
            previous.and_then(|c| c.max_pressure_bar_g),
        )),
        unloaded_power_fraction: keep(opt_num(form, "unloaded_power_fraction")),
        stages: keep(opt_num(form, "stages")).map(|s| s as u32),
        rated_specific_power_kw_per_m3_min: keep(inputs.opt(
            form,
            "rated_specific_power_kw_per_m3_min",
            Entry::SpecificPower,
            previous.and_then(|c| c.rated_specific_power_kw_per_m3_min),
        )),
        power_curve: inputs
            .read_curve(
                form.get("power_curve").map(|s| s.as_str()).unwrap_or(""),
                previous.map(|c| c.power_curve.as_slice()),
            )
            .unwrap_or_else(|e| {
                errs.borrow_mut().push(e);
                Vec::new()
            }),
        min_speed_fraction: None,
        unloaded_level_kw: keep(opt_num(form, "unloaded_level_kw")),
        loaded_level_kw: keep(opt_num(form, "loaded_level_kw")),
        year: keep(opt_num(form, "year")).map(|y| y as i32),
        notes: form.get("notes").cloned().unwrap_or_default(),
    };
    let errs = errs.into_inner();
    if errs.is_empty() {
        Ok(input)
    } else {
        Err(errs)
    }
}

/// Every refusal of a posted compressor at once: the fields that cannot be read, else every
/// data-sheet check (`DataSheetInput::validate_all_in`), quoted in the units the form was typed in.
pub(super) fn compressor_refusals(
    form: &HashMap<String, String>,
    previous: Option<&CompressorSpec>,
) -> Result<CompressorInput, Vec<FieldError>> {
    let input = compressor_input(form, previous)?;
    match input.validate_all_in(Inputs::of_form(form).units) {
        Ok(_) => Ok(input),
        Err(all) => Err(all.into_iter().map(FieldError::from).collect()),
    }
}

/// A required field's name in words.
fn words(key: &str) -> &'static str {
    match key {
        "rated_power_kw" => "The package input power",
        "rated_flow_m3_min" => "The free air delivery",
        "rated_pressure_bar_g" => "The rated pressure",
        "volume_m3" => "The volume",
        _ => "This field",
    }
}

/// Every refusal of a posted receiver at once (name and volume), in the units it was typed in.
pub(super) fn receiver_refusals(
    form: &HashMap<String, String>,
    previous: Option<&ReceiverRecord>,
) -> Result<ReceiverInput, Vec<FieldError>> {
    let input = receiver_input(form, previous).map_err(|e| vec![e])?;
    let all = input.refusals_in(Inputs::of_form(form).units);
    if all.is_empty() {
        Ok(input)
    } else {
        Err(all)
    }
}

/// A receiver as its form posts it, the volume in the units the form was drawn in.
pub(super) fn receiver_input(
    form: &HashMap<String, String>,
    previous: Option<&ReceiverRecord>,
) -> Result<ReceiverInput, FieldError> {
    let inputs = Inputs::of_form(form);
    Ok(ReceiverInput {
        name: form.get("name").cloned().unwrap_or_default(),
        volume_m3: inputs
            .opt(form, "volume_m3", Entry::Volume, previous.map(|r| r.volume_m3))?
            .unwrap_or(f64::NAN),
        notes: form.get("notes").cloned().unwrap_or_default(),
    })
}

pub async fn add_compressor(
    State(st): State<AppState>,
    Path(id): Path<i64>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let action = format!("/audits/{id}/compressors");
    let input = match compressor_refusals(&form, None) {
        Ok(i) => i,
        Err(all) => return audit_refused(&st.app, id, Refusal::new(action, &form, all)).await,
    };
    match st.app.save_compressor(id, 0, &input).await.map_err(AppError::from) {
        Ok(_) => {
            st.app.refresh_summary_in_background(id, "compressor added");
            Ok(Redirect::to(&format!("/audits/{id}")).into_response())
        }
        Err(e) => audit_with_error(&st.app, id, &action, &form, e).await,
    }
}

pub async fn add_receiver(
    State(st): State<AppState>,
    Path(id): Path<i64>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let action = format!("/audits/{id}/receivers");
    let input = match receiver_refusals(&form, None) {
        Ok(i) => i,
        Err(all) => return audit_refused(&st.app, id, Refusal::new(action, &form, all)).await,
    };
    match st.app.add_receiver(id, &input).await.map_err(AppError::from) {
        Ok(_) => Ok(Redirect::to(&format!("/audits/{id}")).into_response()),
        Err(e) => audit_with_error(&st.app, id, &action, &form, e).await,
    }
}
