//! The auditor's printed findings (A4 and Letter): the report's view laid out for paper, with the
//! site, equipment and files it rests on. Also written as a file by `airledger report --format html`.

use askama::Template;
use axum::extract::{Path, Query, State};
use axum::http::header;
use axum::response::{IntoResponse, Response};

use super::plots::{findings_plots, FindingsPlots};
use super::view::{report_view, ReportView};
use super::words::{local_time, test_rows, TestRow};
use super::{reader_fmt, render, PageError, ViewQuery};
use crate::app::App;
use crate::core::display::Fmt;
use crate::store::audits::Audit;
use crate::web::error::AppError;
use crate::web::AppState;

#[derive(Template)]
#[template(path = "findings.html")]
struct FindingsPage {
    audit: Audit,
    fmt: Fmt,
    view: ReportView,
    b_compressors: Vec<crate::site::CompressorRecord>,
    b_receivers: Vec<crate::site::ReceiverRecord>,
    b_uploads: Vec<crate::store::audits::UploadRecord>,
    system_volume_m3: f64,
    atmosphere: String,
    printed: String,
    other_units: &'static str,
    other_units_label: &'static str,
    tests: Vec<TestRow>,
    /// Each file's first and last reading in the site's time.
    spans: Vec<(String, String)>,
    /// The charts, by section, drawn as inline SVG.
    plots: FindingsPlots,
}

async fn findings_page(app: &App, id: i64, q: &ViewQuery) -> Result<FindingsPage, AppError> {
    let b = app.bundle(id).await?;
    let sm = app.summary(id, None).await?;
    let fmt = reader_fmt(&b, q);
    let view = report_view(&b, &fmt, sm.figures());
    let plots = match sm.figures() {
        Some(s) => findings_plots(app, &b, &fmt, s).await?,
        None => FindingsPlots::default(),
    };
    let (other_units, other_units_label) = if fmt.is_us() {
        ("si", "Show SI units (bar, m³/min)")
    } else {
        ("us", "Show US customary units (psig, cfm)")
    };
    let tz = b.audit.site.timezone.clone();
    let spans = b
        .uploads
        .iter()
        .map(|u| {
            let at = |t: &Option<String>| t.as_deref().map(|t| local_time(t, &tz)).unwrap_or_default();
            (at(&u.first), at(&u.last))
        })
        .collect();
    Ok(FindingsPage {
        other_units,
        other_units_label,
        tests: test_rows(&b.field_tests, &fmt, &tz),
        spans,
        plots,
        system_volume_m3: b.storage().system_volume_m3(),
        atmosphere: format!("{:.2} kPa abs", b.audit.site.atmospheric_pressure_kpa_abs()),
        printed: jiff::Zoned::now().date().to_string(),
        fmt,
        view,
        b_compressors: b.compressors,
        b_receivers: b.receivers,
        b_uploads: b.uploads,
        audit: b.audit,
    })
}

pub async fn findings(
    State(st): State<AppState>,
    Path(id): Path<i64>,
    Query(q): Query<ViewQuery>,
) -> Result<Response, PageError> {
    Ok(render(&findings_page(&st.app, id, &q).await?))
}

/// The findings page as a file (`airledger report --format html`).
pub async fn findings_html(app: &App, id: i64) -> anyhow::Result<String> {
    let page = findings_page(app, id, &ViewQuery::default()).await.map_err(|e| anyhow::anyhow!("{e}"))?;
    Ok(page.render()?)
}

/// A CSS string literal of any text: quotes, backslashes and control characters as CSS escapes
/// (CSS Syntax Level 3, 4.3.7), so a site's name cannot end the string.
fn css_string(text: &str) -> String {
    let mut out = String::from("\"");
    for c in text.chars() {
        match c {
            '"' | '\\' => out.push_str(&format!("\\{:x} ", c as u32)),
            c if c.is_control() => out.push_str(&format!("\\{:x} ", c as u32)),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// The printed findings' running head and page numbers: the site's name at the top of every page
/// and "page n of m" at the foot, as `@page` margin boxes. A stylesheet of its own (the pages
/// allow no inline style), linked by the findings page for print.
pub async fn print_css(State(st): State<AppState>, Path(id): Path<i64>) -> Result<Response, PageError> {
    let b = st.app.bundle(id).await?;
    let head = css_string(&format!("{} \u{b7} compressed-air findings", b.audit.name));
    let css = format!(
        "@page {{\n  @top-left {{ content: {head}; font: 8pt system-ui, sans-serif; color: #555; }}\n  \
         @bottom-right {{ content: \"page \" counter(page) \" of \" counter(pages); font: 8pt system-ui, sans-serif; color: #555; }}\n}}\n"
    );
    Ok(([(header::CONTENT_TYPE, "text/css; charset=utf-8"), (header::CACHE_CONTROL, "no-store")], css)
        .into_response())
}

#[cfg(test)]
mod tests {
    #[test]
    fn a_site_name_cannot_end_the_css_string() {
        assert_eq!(super::css_string("Plant \"A\" \\ B"), "\"Plant \\22 A\\22  \\5c  B\"");
        assert_eq!(super::css_string("Werk Süd\n"), "\"Werk Süd\\a \"");
    }
}
