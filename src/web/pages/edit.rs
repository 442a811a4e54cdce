//! The edit pages of a compressor and a receiver: the add form's fields filled with what is
//! stored, posted to the record's own address. A wrong value shows the form again with the
//! reason (422) and what was typed.

use std::collections::HashMap;

use askama::Template;
use axum::extract::{Path, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect};
use axum::Form;

use super::audit::{compressor_input, receiver_input};
use super::inputs::Inputs;
use super::{render, PageResult};
use crate::core::model::{CompressorKind, Control};
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
    inp: Inputs,
    kinds: Vec<(&'static str, String)>,
    controls: Vec<(&'static str, String)>,
    error: Option<String>,
}

fn page(
    inp: Inputs,
    audit: Audit,
    compressor: Option<CompressorRecord>,
    receiver: Option<ReceiverRecord>,
    error: Option<String>,
) -> EditPage {
    let title = match (&compressor, &receiver) {
        (Some(c), _) => format!("Edit compressor {}", c.spec.tag),
        (_, Some(r)) => format!("Edit receiver {}", r.name),
        _ => "Edit".into(),
    };
    let curve = compressor.as_ref().map(|c| inp.curve(&c.spec.power_curve)).unwrap_or_default();
    EditPage {
        audit,
        title,
        compressor,
        receiver,
        curve,
        inp,
        kinds: CompressorKind::ALL.iter().map(|k| (k.as_str(), k.label())).collect(),
        controls: Control::ALL.iter().map(|k| (k.as_str(), k.label())).collect(),
        error,
    }
}

fn missing(what: &str, id: i64, item: i64) -> AppError {
    AppError::NotFound(format!("audit {id} has no {what} {item}"))
}

/// The page again with the error and the values as typed, 422; other errors as pages.
fn refused(p: EditPage, e: AppError) -> PageResult {
    match e {
        AppError::Unprocessable { message, .. } | AppError::Conflict(message) => {
            let mut res = render(&EditPage { error: Some(message), ..p });
            *res.status_mut() = StatusCode::UNPROCESSABLE_ENTITY;
            Ok(res)
        }
        other => Err(other.into()),
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
    let result = async {
        let input = compressor_input(&form, Some(&stored.spec))?;
        st.app.save_compressor(id, cid, &input).await.map_err(AppError::from)
    }
    .await;
    match result {
        Ok(_) => {
            st.app.refresh_summary_in_background(id, "compressor edit");
            Ok(Redirect::to(&format!("/audits/{id}")).into_response())
        }
        Err(e) => {
            // What was typed, shown again where it reads back into the record.
            let typed = compressor_input(&form, Some(&stored.spec)).map(|i| CompressorRecord::from_input(&i));
            let shown = match typed {
                Ok(Ok(v)) => CompressorRecord { id: cid, ..v },
                _ => stored,
            };
            refused(page(Inputs::new(b.fmt().units), b.audit, Some(shown), None, None), e)
        }
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
    let result = async {
        let input = receiver_input(&form, Some(&stored))?;
        st.app.update_receiver(id, rid, &input).await.map_err(AppError::from)
    }
    .await;
    match result {
        Ok(true) => Ok(Redirect::to(&format!("/audits/{id}")).into_response()),
        Ok(false) => Err(missing("receiver", id, rid).into()),
        Err(e) => {
            let shown = ReceiverRecord {
                name: form.get("name").cloned().unwrap_or_default(),
                notes: form.get("notes").cloned().unwrap_or_default(),
                ..stored
            };
            refused(page(Inputs::new(b.fmt().units), b.audit, None, Some(shown), None), e)
        }
    }
}
