/*!
The HTML pages, one file each: [`index`] (the list of audits), [`audit`] (the audit with its site
and equipment forms), [`edit`] (a compressor's or receiver's edit form), [`confirm`] (the second
step of every delete), [`remap`] (an upload's mapping corrected), [`upload`], [`report`] (the manager's report), [`findings`] (the auditor's
printed findings), [`tests`] (field tests) and [`scenarios`] (what-if replays); [`view`] holds what
the report and the findings share. Handlers fetch through the application (`crate::app::App`),
format through `core::display::Fmt`, and render; askama escapes every value, so a user's text
(audit names, column names, notes) can never become markup.
*/

pub mod audit;
pub mod confirm;
pub mod edit;
pub mod findings;
pub mod flash;
pub mod index;
pub mod inputs;
pub mod plots;
pub mod read_as;
pub mod refusal;
pub mod remap;
pub mod report;
pub mod scenarios;
pub mod tests;
pub mod treatment;
pub mod upload;
pub mod view;
pub mod words;

use askama::Template;
use axum::http::StatusCode;
use axum::response::{Html, IntoResponse, Response};
use serde::Deserialize;

use super::error::AppError;
use crate::app::AuditBundle;
use crate::core::display::Fmt;
use crate::core::units::UnitSystem;

/// A page-side error: the same [`AppError`], shown as HTML.
pub struct PageError(AppError);

impl<E: Into<AppError>> From<E> for PageError {
    fn from(e: E) -> Self {
        Self(e.into())
    }
}

#[derive(Template)]
#[template(path = "error.html")]
struct ErrorPage {
    title: String,
    message: String,
}

impl IntoResponse for PageError {
    fn into_response(self) -> Response {
        self.0.log_if_internal();
        let status = self.0.status();
        let title = match status {
            StatusCode::NOT_FOUND => "Not found".to_string(),
            StatusCode::INTERNAL_SERVER_ERROR => "Something went wrong".to_string(),
            _ => "This did not work".to_string(),
        };
        let page = ErrorPage { title, message: self.0.to_string() };
        (status, render(&page)).into_response()
    }
}

pub(crate) type PageResult = Result<Response, PageError>;

/// Render a template; a template error is an internal error page.
pub fn render<T: Template>(t: &T) -> Response {
    match t.render() {
        Ok(html) => Html(html).into_response(),
        Err(e) => {
            tracing::error!(error = %e, "template failed");
            (StatusCode::INTERNAL_SERVER_ERROR, "internal error").into_response()
        }
    }
}

pub async fn not_found() -> PageError {
    PageError(AppError::NotFound("there is no such page".into()))
}

/// The page that holds the form a URL receives: a refused form answers at the URL it was posted
/// to, so opening that address again (reload from the address bar, a bookmark) is a GET on a
/// POST-only route. It goes back to the form's page instead of a bare 405.
pub(crate) fn form_page_of(path: &str) -> String {
    let parts: Vec<&str> = path.trim_matches('/').split('/').collect();
    match parts.as_slice() {
        ["audits", id, "compressors" | "receivers", item] => format!("/audits/{id}/{}/{item}/edit", parts[2]),
        ["audits", id, "scenarios", ..] => format!("/audits/{id}/scenarios"),
        ["audits", id, "treatment", ..] => format!("/audits/{id}/treatment"),
        ["audits", id, ..] => format!("/audits/{id}"),
        _ => "/".to_string(),
    }
}

/// A GET on a form's POST-only URL: see [`form_page_of`].
pub async fn back_to_form(uri: axum::http::Uri) -> axum::response::Redirect {
    axum::response::Redirect::to(&form_page_of(uri.path()))
}

/// The page an upload's delete or remap comes back to: the upload page when it was started there
/// (`from=upload`), else the audit's page.
pub(crate) fn files_page(id: i64, from: Option<&str>) -> String {
    if from == Some("upload") {
        format!("/audits/{id}/upload")
    } else {
        format!("/audits/{id}")
    }
}

/// `?units=si|us`: the reader's unit system for one view.
#[derive(Deserialize, Default)]
pub struct ViewQuery {
    units: Option<String>,
}

/// The reader's formatter: the audit's unit system unless the query names another.
pub(crate) fn reader_fmt(b: &AuditBundle, q: &ViewQuery) -> Fmt {
    let units = q.units.as_deref().and_then(UnitSystem::parse).unwrap_or(b.audit.site.display_units);
    Fmt::new(units, b.audit.site.air().atmosphere)
}

/// The reader's unit choice for the links between the report and the findings (`?units=us`), so
/// that following one keeps the units read; empty when the reader reads the audit's own units.
pub(crate) fn units_query(b: &AuditBundle, q: &ViewQuery) -> String {
    match q.units.as_deref().and_then(UnitSystem::parse) {
        Some(u) if u != b.audit.site.display_units => format!("?units={}", u.as_str()),
        _ => String::new(),
    }
}

/// The IANA time-zone names a person chooses from (the form's datalist, searched as one types):
/// the zones of the bundled database that name a place, and UTC; sorted.
pub(crate) fn zone_names() -> Vec<String> {
    let mut names: Vec<String> = jiff::tz::db()
        .available()
        .map(|n| n.to_string())
        .filter(|n| {
            n.contains('/')
                && !["Etc/", "posix/", "right/", "SystemV/", "US/", "Brazil/", "Canada/", "Chile/", "Mexico/"]
                    .iter()
                    .any(|p| n.starts_with(p))
        })
        .collect();
    names.push("UTC".into());
    names.sort();
    names.dedup();
    names
}

#[cfg(test)]
mod zone_tests {
    #[test]
    fn the_zone_list_holds_the_iana_names_people_use() {
        let z = super::zone_names();
        // Names of the IANA time zone database (tzdata), checked by hand against its zone1970.tab.
        for name in ["America/Chicago", "Europe/Vienna", "Asia/Kolkata", "Australia/Sydney", "UTC"] {
            assert!(z.iter().any(|n| n == name), "{name} missing");
        }
        assert!(!z.iter().any(|n| n == "CST" || n.starts_with("Etc/")));
        assert!(z.len() > 300, "{} zones", z.len());
    }
}
