//! The list of audits and the form that starts one.

use std::collections::HashMap;

use askama::Template;
use axum::extract::{Query, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect};
use axum::Form;

use super::audit::{opt_text, site_patch};
use super::inputs::Inputs;
use super::{render, PageResult, ViewQuery};
use crate::core::units::UnitSystem;
use crate::site::FieldError;
use crate::store::audits::AuditListItem;
use crate::web::error::AppError;
use crate::web::AppState;

#[derive(Template)]
#[template(path = "index.html")]
struct IndexPage {
    audits: Vec<AuditListItem>,
    zones: Vec<String>,
    error: Option<String>,
    /// The units the new-audit form is drawn in (`?units=`, or the units a refused post was in).
    inp: Inputs,
    /// Both unit systems' entry tables, for the form's unit switch (`static/js/common.js`).
    page_data: serde_json::Value,
}

impl IndexPage {
    fn new(audits: Vec<AuditListItem>, inp: Inputs, error: Option<String>) -> Self {
        let page_data = serde_json::json!({
            "entry": inp.page_data(),
            "entry_tables": {
                "si": Inputs::new(UnitSystem::Si).page_data(),
                "us": Inputs::new(UnitSystem::Us).page_data(),
            },
        });
        Self { audits, zones: super::zone_names(), error, inp, page_data }
    }
}

pub async fn index(State(st): State<AppState>, Query(q): Query<ViewQuery>) -> PageResult {
    let units = q.units.as_deref().and_then(UnitSystem::parse).unwrap_or(UnitSystem::Si);
    Ok(render(&IndexPage::new(st.app.list_audits().await?, Inputs::new(units), None)))
}

pub async fn create_audit(
    State(st): State<AppState>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let result = async {
        let name =
            opt_text(&form, "name").ok_or_else(|| FieldError::new("name", "the audit needs a name"))?;
        // Altitude and inlet temperature are read in the units the form says it was drawn in
        // (`entry_units`, which the unit switch keeps in step with the fields' labels).
        let patch = site_patch(&form, None)?;
        st.app.create_audit(&name, &patch).await.map_err(AppError::from)
    }
    .await;
    match result {
        Ok(id) => Ok(Redirect::to(&format!("/audits/{id}")).into_response()),
        // A wrong field (a time zone not in the list, a number that is not one): the page again
        // with the reason, 422, never a bare error page.
        Err(AppError::Unprocessable { message, .. }) => {
            let page = IndexPage::new(st.app.list_audits().await?, Inputs::of_form(&form), Some(message));
            let mut res = render(&page);
            *res.status_mut() = StatusCode::UNPROCESSABLE_ENTITY;
            Ok(res)
        }
        Err(e) => Err(e.into()),
    }
}
