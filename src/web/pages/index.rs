//! The list of audits and the form that starts one.

use std::collections::HashMap;

use askama::Template;
use axum::extract::State;
use axum::response::{IntoResponse, Redirect};
use axum::Form;

use super::audit::{opt_text, site_patch};
use super::{render, PageResult};
use crate::site::FieldError;
use crate::store::audits::AuditListItem;
use crate::web::AppState;

#[derive(Template)]
#[template(path = "index.html")]
struct IndexPage {
    audits: Vec<AuditListItem>,
}

pub async fn index(State(st): State<AppState>) -> PageResult {
    Ok(render(&IndexPage { audits: st.app.list_audits().await? }))
}

pub async fn create_audit(
    State(st): State<AppState>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let name = opt_text(&form, "name").ok_or_else(|| FieldError::new("name", "the audit needs a name"))?;
    let patch = site_patch(&form, None)?;
    let id = st.app.create_audit(&name, &patch).await?;
    Ok(Redirect::to(&format!("/audits/{id}")).into_response())
}
