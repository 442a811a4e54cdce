//! The list of audits and the form that starts one.

use std::collections::HashMap;

use askama::Template;
use axum::extract::{Query, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect};
use axum::Form;

use super::audit::{opt_text, site_patch};
use super::flash::{Done, DoneQuery};
use super::inputs::Inputs;
use super::refusal::Refusal;
use super::{render, PageResult, ViewQuery};
use crate::core::units::UnitSystem;
use crate::site::{FieldError, SiteRecord};
use crate::store::audits::AuditListItem;
use crate::web::error::AppError;
use crate::web::AppState;

#[derive(Template)]
#[template(path = "index.html")]
struct IndexPage {
    audits: Vec<AuditListItem>,
    /// What was just done (an audit deleted), in words.
    done: Option<String>,
    zones: Vec<String>,
    /// A refused form: every refusal and what was typed (`refusal`).
    refused: Option<Refusal>,
    /// The units the new-audit form is drawn in (`?units=`, or the units a refused post was in).
    inp: Inputs,
    /// Both unit systems' entry tables, for the form's unit switch (`static/js/common.js`).
    page_data: serde_json::Value,
}

impl IndexPage {
    fn new(audits: Vec<AuditListItem>, inp: Inputs, refused: Option<Refusal>) -> Self {
        let page_data = serde_json::json!({
            "entry": inp.page_data(),
            "entry_tables": {
                "si": Inputs::new(UnitSystem::Si).page_data(),
                "us": Inputs::new(UnitSystem::Us).page_data(),
            },
        });
        Self { audits, done: None, zones: super::zone_names(), refused, inp, page_data }
    }
}

pub async fn index(
    State(st): State<AppState>,
    Query(q): Query<ViewQuery>,
    Query(done): Query<DoneQuery>,
) -> PageResult {
    let units = q.units.as_deref().and_then(UnitSystem::parse).unwrap_or(UnitSystem::Si);
    let page = IndexPage::new(st.app.list_audits().await?, Inputs::new(units), None);
    Ok(render(&IndexPage { done: Done::message(&done), ..page }))
}

pub async fn create_audit(
    State(st): State<AppState>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    // Every refusal at once: the name, and each site field on its own.
    let mut refusals = Vec::new();
    let name = opt_text(&form, "name");
    if name.is_none() {
        refusals.push(FieldError::new("name", "the audit needs a name"));
    }
    // Altitude and inlet temperature are read in the units the form says it was drawn in
    // (`entry_units`, which the unit switch keeps in step with the fields' labels).
    match site_patch(&form, None) {
        Err(e) => refusals.push(e),
        Ok(patch) => refusals.extend(SiteRecord::default().refusals(&patch)),
    }
    let result = match (name, refusals.is_empty()) {
        (Some(name), true) => async {
            let patch = site_patch(&form, None)?;
            st.app.create_audit(&name, &patch).await.map_err(AppError::from)
        }
        .await
        .map_err(|e| Refusal::of_error("/audits", &form, &e).ok_or(e)),
        _ => Err(Ok(Refusal::new("/audits", &form, refusals))),
    };
    match result {
        Ok(id) => Ok(Redirect::to(&format!("/audits/{id}")).into_response()),
        // A wrong field (a time zone not in the list, a number that is not one): the page again
        // with every reason and what was typed, 422, never a bare error page.
        Err(Ok(refusal)) => {
            let page = IndexPage::new(st.app.list_audits().await?, Inputs::of_form(&form), Some(refusal));
            let mut res = render(&page);
            *res.status_mut() = StatusCode::UNPROCESSABLE_ENTITY;
            Ok(res)
        }
        Err(Err(e)) => Err(e.into()),
    }
}
