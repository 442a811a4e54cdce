//! Every delete on the pages takes two steps that work without JavaScript: the "remove…" link
//! opens a page that says what goes with the record, and only its form (which carries
//! `confirm=yes`) deletes. A post without it (an old bookmark, a stray form) only shows that page.
//! A file deleted from the upload page (`?from=upload`, carried by the form) comes back there.

use std::collections::HashMap;

use askama::Template;
use axum::extract::{Path, Query, State};
use axum::response::{IntoResponse, Redirect};
use axum::Form;

use super::flash::Done;
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
    /// The message's code once it is deleted (`flash::Done`).
    fn done(self) -> &'static str {
        match self {
            Self::Compressor => "compressor-deleted",
            Self::Receiver => "receiver-deleted",
            Self::Upload => "upload-deleted",
            Self::FieldTest => "test-deleted",
            Self::Scenario => "scenario-deleted",
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
            let readings = readings_in_words(
                b.channels
                    .iter()
                    .filter(|ch| ch.compressor_id == Some(item))
                    .map(|ch| (ch.quantity.as_str(), ch.readings)),
            );
            let mut lines = vec![format!(
                "{} ({}, {}, {}) is removed from the audit.",
                c.spec.tag,
                c.spec.kind.label(),
                fmt.power_kw(c.spec.rated_power_kw),
                fmt.flow_m3_min(c.spec.rated_flow_m3_min)
            )];
            // One paragraph: the sentences follow each other with their space, in any reading of
            // the page's text.
            if let Some(readings) = readings {
                lines[0].push_str(&format!(
                    " Its logged readings ({readings}) are deleted with it, and the figures are worked \
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
            let stats = st.app.upload_channel_stats(b, item).await?.unwrap_or_default();
            let per_quantity = readings_in_words(stats.iter().map(|c| (c.quantity.as_str(), c.readings)))
                .map_or(String::new(), |w| format!(" ({w})"));
            let lines = vec![
                format!(
                    "{}: {} rows, {} readings{per_quantity}, from {} to {}.",
                    u.filename,
                    fmt.count(u.rows),
                    fmt.count(u.readings),
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
            let name = super::words::test_name(t);
            // As the table of recorded tests shows it: its method and what was measured.
            let row =
                super::words::test_rows(std::slice::from_ref(t), &fmt, &b.audit.site.timezone).remove(0);
            let lines = vec![
                format!("{}: {}", row.method, row.input),
                format!(
                    "The {name}, leak flow {}; the leak estimate of the report no longer counts it.",
                    fmt.flow_m3_min(q)
                ),
            ];
            (format!("Delete the {name}?"), lines, "Delete the test".into())
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
    // What was deleted, named for the message on the page it goes back to.
    let b = app.bundle(id).await?;
    let what = match kind {
        Kind::Compressor => b.compressors.iter().find(|c| c.id == item).map(|c| c.spec.tag.clone()),
        Kind::Receiver => b.receivers.iter().find(|r| r.id == item).map(|r| r.name.clone()),
        Kind::Upload => b.uploads.iter().find(|u| u.id == item).map(|u| u.filename.clone()),
        Kind::FieldTest => b.field_tests.iter().find(|t| t.id == item).map(super::words::test_name),
        Kind::Scenario => app.scenario(id, item).await.ok().map(|s| s.name),
    }
    .unwrap_or_default();
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
    let done = Done { kind: kind.done(), what };
    Ok(Redirect::to(&format!("{}?{}", kind.back(id, from), done.query())).into_response())
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

/// The page that asks before a whole audit is deleted: what goes with it, counted in words.
pub async fn ask_audit(State(st): State<AppState>, Path(id): Path<i64>) -> PageResult {
    let b = st.app.bundle(id).await?;
    let c = st.app.audit_contents(id).await?;
    let fmt = b.fmt();
    let counted =
        |n: i64, one: &str, many: &str| format!("{} {}", fmt.count(n), if n == 1 { one } else { many });
    let lines = vec![
        format!(
            "\u{201c}{}\u{201d} is deleted with everything it holds: {}, {}, {} with {}, {}, {}, {} \
             (dryers, filters, drains and end uses), the edited costs and the plan of measures.",
            b.audit.name,
            counted(b.compressors.len() as i64, "compressor", "compressors"),
            counted(b.receivers.len() as i64, "receiver", "receivers"),
            counted(c.uploads, "logger file", "logger files"),
            counted(c.readings, "reading", "readings"),
            counted(c.field_tests, "field test", "field tests"),
            counted(c.scenarios, "what-if scenario", "what-if scenarios"),
            counted(c.treatment_items, "treatment record", "treatment records"),
        ),
        "Nothing of it can be brought back afterwards. To keep a copy, back up the database first.".into(),
    ];
    Ok(render(&ConfirmPage {
        title: format!("Delete the audit \u{201c}{}\u{201d}?", b.audit.name),
        lines,
        button: "Delete the audit".into(),
        action: format!("/audits/{id}/delete"),
        back: format!("/audits/{id}"),
        from: String::new(),
        audit: b.audit,
    }))
}

/// Delete a whole audit, only from its confirmation page's form (`confirm=yes`); then the list of
/// audits says what was deleted.
pub async fn delete_audit(
    State(st): State<AppState>,
    Path(id): Path<i64>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    if form.get("confirm").map(String::as_str) != Some("yes") {
        return Ok(Redirect::to(&format!("/audits/{id}/delete")).into_response());
    }
    let name = st.app.audit(id).await?.name;
    if !st.app.delete_audit(id).await? {
        return Err(PageError::from(AppError::NotFound(format!("no audit {id}"))));
    }
    let done = Done { kind: "audit-deleted", what: name };
    Ok(Redirect::to(&format!("/?{}", done.query())).into_response())
}

/// Readings counted per quantity in words ("5,237 energy-counter readings and 120 power
/// readings"), the quantities in a fixed order; `None` when there is none.
pub(super) fn readings_in_words<'a>(counts: impl IntoIterator<Item = (&'a str, i64)>) -> Option<String> {
    let order = ["power", "energy", "flow", "pressure", "temperature"];
    let mut per: Vec<(usize, &str, i64)> = Vec::new();
    for (q, n) in counts {
        let rank = order.iter().position(|o| *o == q).unwrap_or(order.len());
        match per.iter_mut().find(|(_, k, _)| *k == q) {
            Some(p) => p.2 += n,
            None => per.push((rank, q, n)),
        }
    }
    per.retain(|p| p.2 > 0);
    per.sort_by_key(|p| (p.0, p.1));
    let parts: Vec<String> = per
        .iter()
        .map(|(_, q, n)| {
            let words = match *q {
                "energy" => "energy-counter".to_string(),
                other => other.replace('_', " "),
            };
            let noun = if *n == 1 { "reading" } else { "readings" };
            format!("{} {words} {noun}", crate::core::display::num(*n as f64, 0))
        })
        .collect();
    match parts.len() {
        0 => None,
        1 => Some(parts[0].clone()),
        n => Some(format!("{} and {}", parts[..n - 1].join(", "), parts[n - 1])),
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn readings_are_counted_per_quantity_in_words() {
        // A compressor logged by an energy counter and by a power meter: each said as what it is.
        let w = super::readings_in_words([("energy", 5237), ("power", 120), ("energy", 3)]);
        assert_eq!(w.as_deref(), Some("120 power readings and 5,240 energy-counter readings"));
        assert_eq!(super::readings_in_words([("pressure", 1)]).as_deref(), Some("1 pressure reading"));
        assert_eq!(super::readings_in_words([("power", 0)]), None);
    }
}
