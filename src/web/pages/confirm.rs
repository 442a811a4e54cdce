//! Every delete on the pages takes two steps that work without JavaScript: the "remove…" link
//! opens a page that says what goes with the record, and only its form (which carries
//! `confirm=yes`) deletes. A post without it (an old bookmark, a stray form) only shows that page.
//! A file deleted from the upload page (`?from=upload`, carried by the form) comes back there.

use std::collections::HashMap;

use askama::Template;
use axum::extract::{Path, Query, State};
use axum::response::{IntoResponse, Redirect};
use axum::Form;

use super::{render, PageError, PageResult};
use crate::app::AuditBundle;
use crate::store::audits::Audit;
use crate::web::error::AppError;
use crate::web::AppState;

#[derive(Template)]
#[template(path = "confirm.html")]
struct ConfirmPage {
    audit: Audit,
    title: String,
    lines: Vec<String>,
    action: String,
    back: String,
    button: String,
    /// The page the delete came from (`from`), carried by the form.
    from: String,
}

/// What can be deleted from the pages.
#[derive(Clone, Copy)]
enum Kind {
    Compressor,
    Receiver,
    Upload,
    FieldTest,
    Scenario,
}

impl Kind {
    fn segment(self) -> &'static str {
        match self {
            Self::Compressor => "compressors",
            Self::Receiver => "receivers",
            Self::Upload => "uploads",
            Self::FieldTest => "tests",
            Self::Scenario => "scenarios",
        }
    }
    /// The page the record is listed on (a file is listed on the upload page too: `from`).
    fn back(self, id: i64, from: Option<&str>) -> String {
        match self {
            Self::Upload => super::files_page(id, from),
            Self::Compressor | Self::Receiver => format!("/audits/{id}"),
            Self::FieldTest => format!("/audits/{id}/tests"),
            Self::Scenario => format!("/audits/{id}/scenarios"),
        }
    }
}

fn gone(what: &str, id: i64, item: i64) -> PageError {
    PageError::from(AppError::NotFound(format!("audit {id} has no {what} {item}")))
}

/// The confirmation page's title, lines and button, or 404.
async fn describe(
    st: &AppState,
    b: &AuditBundle,
    kind: Kind,
    item: i64,
) -> Result<(String, Vec<String>, String), PageError> {
    let id = b.audit.id;
    let fmt = b.fmt();
    Ok(match kind {
        Kind::Compressor => {
            let c =
                b.compressors.iter().find(|c| c.id == item).ok_or_else(|| gone("compressor", id, item))?;
            let readings: i64 =
                b.channels.iter().filter(|ch| ch.compressor_id == Some(item)).map(|ch| ch.readings).sum();
            let mut lines = vec![format!(
                "{} ({}, {}, {}) is removed from the audit.",
                c.spec.tag,
                c.spec.kind.label(),
                fmt.power_kw(c.spec.rated_power_kw),
                fmt.flow_m3_min(c.spec.rated_flow_m3_min)
            )];
            if readings > 0 {
                lines.push(format!(
                    "Its {readings} logged power readings are deleted with it, and the figures are worked \
                     out again without them. To correct its data-sheet values instead, edit it."
                ));
            }
            (format!("Remove compressor {}?", c.spec.tag), lines, format!("Remove {}", c.spec.tag))
        }
        Kind::Receiver => {
            let r = b.receivers.iter().find(|r| r.id == item).ok_or_else(|| gone("receiver", id, item))?;
            let left = b.storage().system_volume_m3() - r.volume_m3;
            let lines = vec![format!(
                "{} ({}) is removed; the system volume for bleed-down tests becomes {}.",
                r.name,
                fmt.volume_m3(r.volume_m3),
                fmt.volume_m3(left)
            )];
            (format!("Remove receiver {}?", r.name), lines, "Remove the receiver".into())
        }
        Kind::Upload => {
            let u = b.uploads.iter().find(|u| u.id == item).ok_or_else(|| gone("upload", id, item))?;
            let lines = vec![
                format!(
                    "{}: {} rows, {} readings, from {} to {}.",
                    u.filename,
                    u.rows,
                    u.readings,
                    u.first
                        .as_deref()
                        .map_or_else(|| "–".into(), |t| super::words::local_time(t, &b.audit.site.timezone)),
                    u.last
                        .as_deref()
                        .map_or_else(|| "–".into(), |t| super::words::local_time(t, &b.audit.site.timezone))
                ),
                "Its readings, their summaries and its data-quality report are deleted, and the audit's \
                 figures are worked out again from the other files. The same file can be uploaded again \
                 afterwards. Readings it replaced in other files do not come back."
                    .into(),
                "To read the file with another unit, time zone or compressor instead, correct its mapping."
                    .into(),
            ];
            (format!("Delete the file {}?", u.filename), lines, "Delete the file".into())
        }
        Kind::FieldTest => {
            let t =
                b.field_tests.iter().find(|t| t.id == item).ok_or_else(|| gone("field test", id, item))?;
            let q = crate::app::fieldtests::result_of(t).map_or(f64::NAN, |r| r.leak_flow_m3_min());
            let lines = vec![format!(
                "Test {} ({}), leak flow {}; the leak estimate of the report no longer counts it.",
                t.id,
                t.kind.replace('_', " "),
                fmt.flow_m3_min(q)
            )];
            (format!("Delete field test {}?", t.id), lines, "Delete the test".into())
        }
        Kind::Scenario => {
            let s = st.app.scenario(id, item).await?;
            let mut lines =
                vec![format!("The replay \u{201c}{}\u{201d} and its results are deleted.", s.name)];
            if s.proposal {
                lines.push(
                    "It is the proposal: the report's control measure falls back to the estimate by rule."
                        .into(),
                );
            }
            (format!("Delete scenario \u{201c}{}\u{201d}?", s.name), lines, "Delete the scenario".into())
        }
    })
}

async fn ask(st: &AppState, kind: Kind, id: i64, item: i64, from: Option<&str>) -> PageResult {
    let b = st.app.bundle(id).await?;
    let (title, lines, button) = describe(st, &b, kind, item).await?;
    Ok(render(&ConfirmPage {
        title,
        lines,
        button,
        action: format!("/audits/{id}/{}/{item}/delete", kind.segment()),
        back: kind.back(id, from),
        from: from.filter(|f| *f == "upload").unwrap_or_default().to_string(),
        audit: b.audit,
    }))
}

async fn delete(st: &AppState, kind: Kind, id: i64, item: i64, form: &HashMap<String, String>) -> PageResult {
    let from = form.get("from").map(String::as_str);
    if form.get("confirm").map(String::as_str) != Some("yes") {
        let again = format!("/audits/{id}/{}/{item}/delete", kind.segment());
        let again = if from == Some("upload") { again + "?from=upload" } else { again };
        return Ok(Redirect::to(&again).into_response());
    }
    let app = &st.app;
    let found = match kind {
        Kind::Compressor => {
            let found = app.delete_compressor(id, item).await?;
            app.refresh_summary_in_background(id, "compressor deleted");
            found
        }
        Kind::Receiver => app.delete_receiver(id, item).await?,
        Kind::Upload => app.delete_upload(id, item).await?,
        Kind::FieldTest => app.delete_field_test(id, item).await?,
        Kind::Scenario => app.delete_scenario(id, item).await?,
    };
    if !found {
        return Err(gone(kind.segment().trim_end_matches('s'), id, item));
    }
    Ok(Redirect::to(&kind.back(id, from)).into_response())
}

macro_rules! confirm_routes {
    ($($ask:ident, $delete:ident, $kind:expr;)*) => {$(
        pub async fn $ask(
            State(st): State<AppState>,
            Path((id, item)): Path<(i64, i64)>,
            Query(q): Query<HashMap<String, String>>,
        ) -> PageResult {
            ask(&st, $kind, id, item, q.get("from").map(String::as_str)).await
        }
        pub async fn $delete(
            State(st): State<AppState>,
            Path((id, item)): Path<(i64, i64)>,
            Form(form): Form<HashMap<String, String>>,
        ) -> PageResult {
            delete(&st, $kind, id, item, &form).await
        }
    )*};
}

confirm_routes! {
    ask_compressor, delete_compressor, Kind::Compressor;
    ask_receiver, delete_receiver, Kind::Receiver;
    ask_upload, delete_upload, Kind::Upload;
    ask_field_test, delete_field_test, Kind::FieldTest;
    ask_scenario, delete_scenario, Kind::Scenario;
}
