//! The edit pages of a compressor and a receiver: the add form's fields filled with what is
//! stored, posted to the record's own address. A wrong value shows the form again with the
//! reason (422) and what was typed.

use std::collections::HashMap;

use askama::Template;
use axum::extract::{Path, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect};
use axum::Form;

use super::audit::{compressor_refusals, receiver_refusals};
use super::inputs::Inputs;
use super::refusal::Refusal;
use super::{render, PageResult};
use crate::core::datasheet::{DataSheetInput, NoLoadBasis};
use crate::core::entry;
use crate::core::model::{CompressorKind, CompressorSpec, Control};
use crate::site::{CompressorRecord, ReceiverRecord};
use crate::store::audits::Audit;
use crate::web::error::AppError;
use crate::web::AppState;

#[derive(Template)]
#[template(path = "edit.html")]
struct EditPage {
    audit: Audit,
    title: String,
    compressor: Option<CompressorRecord>,
    receiver: Option<ReceiverRecord>,
    curve: String,
    /// The unloaded-power fraction's box: blank when it is the default (kept a default, shown as
    /// the placeholder) or follows from a given no-load power, else the value given.
    fraction_value: String,
    fraction_placeholder: String,
    inp: Inputs,
    kinds: Vec<(&'static str, String)>,
    controls: Vec<(&'static str, String)>,
    /// A refused post: every refusal and what was typed (`refusal`).
    refused: Option<Refusal>,
}

fn page(
    inp: Inputs,
    audit: Audit,
    compressor: Option<CompressorRecord>,
    receiver: Option<ReceiverRecord>,
    refused: Option<Refusal>,
) -> EditPage {
    let title = match (&compressor, &receiver) {
        (Some(c), _) => format!("Edit compressor {}", c.spec.tag),
        (_, Some(r)) => format!("Edit receiver {}", r.name),
        _ => "Edit".into(),
    };
    let curve = compressor.as_ref().map(|c| inp.curve(&c.spec.power_curve)).unwrap_or_default();
    let (fraction_value, fraction_placeholder) =
        compressor.as_ref().map(|c| fraction_box(&c.spec)).unwrap_or_default();
    EditPage {
        audit,
        title,
        compressor,
        receiver,
        curve,
        fraction_value,
        fraction_placeholder,
        inp,
        kinds: CompressorKind::ALL.iter().map(|k| (k.as_str(), k.label())).collect(),
        controls: Control::ALL.iter().map(|k| (k.as_str(), k.label())).collect(),
        refused,
    }
}

/// The unloaded-power fraction's box for a stored compressor: (value, placeholder). The store keeps
/// the fraction worked out, not whether it was typed: one equal to what a blank gives (the kind's
/// typical share, or a variable-speed curve's power at minimum speed) is shown blank with that
/// default as the placeholder, so that saving the form keeps it a default (a change of kind then
/// takes the new kind's); one that follows from a given no-load power is left blank too (both
/// given would have to agree).
fn fraction_box(spec: &CompressorSpec) -> (String, String) {
    let blank =
        DataSheetInput { unloaded_power_fraction: None, no_load_power_kw: None, ..DataSheetInput::of(spec) };
    let default = blank.validate().map(|s| s.unloaded_power_fraction).ok();
    let placeholder = match default {
        Some(f) if spec.control == Control::VariableSpeed => {
            format!("{} (the curve's power at minimum speed)", entry::short(f))
        }
        Some(f) => format!("{} (typical for the kind)", entry::short(f)),
        None => String::new(),
    };
    if NoLoadBasis::of(spec) != NoLoadBasis::Fraction {
        (String::new(), placeholder)
    } else {
        (spec.unloaded_power_fraction.to_string(), placeholder)
    }
}

fn missing(what: &str, id: i64, item: i64) -> AppError {
    AppError::NotFound(format!("audit {id} has no {what} {item}"))
}

/// The page again with every refusal and the values as typed (put back by `common.js`), 422.
fn refused(p: EditPage, r: Refusal) -> PageResult {
    let mut res = render(&EditPage { refused: Some(r), ..p });
    *res.status_mut() = StatusCode::UNPROCESSABLE_ENTITY;
    Ok(res)
}

/// An application error as a refusal of the form posted to `action`; other errors as pages.
fn refused_by(p: EditPage, action: &str, form: &HashMap<String, String>, e: AppError) -> PageResult {
    match Refusal::of_error(action, form, &e) {
        Some(r) => refused(p, r),
        None => Err(e.into()),
    }
}

pub async fn edit_compressor(State(st): State<AppState>, Path((id, cid)): Path<(i64, i64)>) -> PageResult {
    let b = st.app.bundle(id).await?;
    let c =
        b.compressors.iter().find(|c| c.id == cid).cloned().ok_or_else(|| missing("compressor", id, cid))?;
    Ok(render(&page(Inputs::new(b.fmt().units), b.audit, Some(c), None, None)))
}

pub async fn save_compressor(
    State(st): State<AppState>,
    Path((id, cid)): Path<(i64, i64)>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let b = st.app.bundle(id).await?;
    let stored =
        b.compressors.iter().find(|c| c.id == cid).cloned().ok_or_else(|| missing("compressor", id, cid))?;
    let action = format!("/audits/{id}/compressors/{cid}");
    let units = Inputs::new(b.fmt().units);
    let input = match compressor_refusals(&form, Some(&stored.spec)) {
        Ok(i) => i,
        Err(all) => {
            return refused(page(units, b.audit, Some(stored), None, None), Refusal::new(action, &form, all))
        }
    };
    match st.app.save_compressor(id, cid, &input).await.map_err(AppError::from) {
        Ok(_) => {
            st.app.refresh_summary_in_background(id, "compressor edit");
            Ok(Redirect::to(&format!("/audits/{id}")).into_response())
        }
        Err(e) => refused_by(page(units, b.audit, Some(stored), None, None), &action, &form, e),
    }
}

pub async fn edit_receiver(State(st): State<AppState>, Path((id, rid)): Path<(i64, i64)>) -> PageResult {
    let b = st.app.bundle(id).await?;
    let r = b.receivers.iter().find(|r| r.id == rid).cloned().ok_or_else(|| missing("receiver", id, rid))?;
    Ok(render(&page(Inputs::new(b.fmt().units), b.audit, None, Some(r), None)))
}

pub async fn save_receiver(
    State(st): State<AppState>,
    Path((id, rid)): Path<(i64, i64)>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let b = st.app.bundle(id).await?;
    let stored =
        b.receivers.iter().find(|r| r.id == rid).cloned().ok_or_else(|| missing("receiver", id, rid))?;
    let action = format!("/audits/{id}/receivers/{rid}");
    let units = Inputs::new(b.fmt().units);
    let input = match receiver_refusals(&form, Some(&stored)) {
        Ok(i) => i,
        Err(all) => {
            return refused(page(units, b.audit, None, Some(stored), None), Refusal::new(action, &form, all))
        }
    };
    match st.app.update_receiver(id, rid, &input).await.map_err(AppError::from) {
        Ok(true) => Ok(Redirect::to(&format!("/audits/{id}")).into_response()),
        Ok(false) => Err(missing("receiver", id, rid).into()),
        Err(e) => refused_by(page(units, b.audit, None, Some(stored), None), &action, &form, e),
    }
}
