//! The manager's report: the headline figures, the measures, the charts.

use askama::Template;
use axum::extract::{Path, Query, State};
use axum::response::Response;

use super::view::{report_view, ReportView};
use super::{reader_fmt, render, PageError, ViewQuery};
use crate::core::display::Fmt;
use crate::store::audits::Audit;
use crate::web::AppState;

#[derive(Template)]
#[template(path = "report.html")]
struct ReportPage {
    audit: Audit,
    fmt: Fmt,
    view: ReportView,
    other_units: &'static str,
    other_units_label: &'static str,
    /// The proposal's name when it was replayed on earlier data and is left out of the measures.
    stale_proposal: Option<String>,
    /// The reader's unit choice for the nav's report and findings links (`units_query`).
    units_query: String,
}

pub async fn report(
    State(st): State<AppState>,
    Path(id): Path<i64>,
    Query(q): Query<ViewQuery>,
) -> Result<Response, PageError> {
    let b = st.app.bundle(id).await?;
    let sm = st.app.summary(id, None).await?;
    let fmt = reader_fmt(&b, &q);
    let facts = st.app.read_facts(&b).await?;
    let view = report_view(&b, &fmt, sm.figures(), &facts);
    let stale_proposal = st.app.stale_proposal(id, b.audit.revision).await?;
    let (other_units, other_units_label) = if fmt.is_us() {
        ("si", "Show SI units (bar, m³/min)")
    } else {
        ("us", "Show US customary units (psig, cfm)")
    };
    let units_query = super::units_query(&b, &q);
    Ok(render(&ReportPage {
        audit: b.audit,
        fmt,
        view,
        other_units,
        other_units_label,
        stale_proposal,
        units_query,
    }))
}
