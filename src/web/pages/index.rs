//! The list of audits and the form that starts one.

use std::collections::HashMap;

use askama::Template;
use axum::extract::State;
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect};
use axum::Form;

use super::audit::{opt_text, site_patch};
use super::{render, PageResult};
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
}

pub async fn index(State(st): State<AppState>) -> PageResult {
    Ok(render(&IndexPage { audits: st.app.list_audits().await?, zones: super::zone_names(), error: None }))
}

pub async fn create_audit(
    State(st): State<AppState>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let result = async {
        let name =
            opt_text(&form, "name").ok_or_else(|| FieldError::new("name", "the audit needs a name"))?;
        let patch = site_patch(&form, None)?;
        st.app.create_audit(&name, &patch).await.map_err(AppError::from)
    }
    .await;
    match result {
        Ok(id) => Ok(Redirect::to(&format!("/audits/{id}")).into_response()),
        // A wrong field (a time zone not in the list, a number that is not one): the page again
        // with the reason, 422, never a bare error page.
        Err(AppError::Unprocessable { message, .. }) => {
            let page = IndexPage {
                audits: st.app.list_audits().await?,
                zones: super::zone_names(),
                error: Some(message),
            };
            let mut res = render(&page);
            *res.status_mut() = StatusCode::UNPROCESSABLE_ENTITY;
            Ok(res)
        }
        Err(e) => Err(e.into()),
    }
}
