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
    /// The reader's unit choice for the nav's report and findings links (`units_query`).
    units_query: String,
    other_units: &'static str,
    other_units_label: &'static str,
    tests: Vec<TestRow>,
    /// Each file's first and last reading in the site's time.
    spans: Vec<(String, String)>,
    /// The charts, by section, drawn as inline SVG.
    plots: FindingsPlots,
    /// The proposal's name when it was replayed on earlier data and is left out of the measures.
    stale_proposal: Option<String>,
    /// Treatment records stored before the checks of today and outside them, in words.
    outside_bounds: Vec<String>,
}

async fn findings_page(app: &App, id: i64, q: &ViewQuery) -> Result<FindingsPage, AppError> {
    let b = app.bundle(id).await?;
    let sm = app.summary(id, None).await?;
    let fmt = reader_fmt(&b, q);
    let facts = app.read_facts(&b).await?;
    let view = report_view(&b, &fmt, sm.figures(), &facts);
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
    let outside_bounds = app
        .treatment_outside_bounds(id, fmt.units)
        .await?
        .iter()
        .map(|o| super::treatment::outside_line(o, fmt.units))
        .collect();
    Ok(FindingsPage {
        stale_proposal: app.stale_proposal(id, b.audit.revision).await?,
        outside_bounds,
        units_query: super::units_query(&b, q),
        other_units,
        other_units_label,
        tests: test_rows(&b.field_tests, &fmt, &tz),
        spans,
        plots,
        system_volume_m3: b.storage().system_volume_m3(),
        atmosphere: fmt.pressure_abs_kpa(b.audit.site.atmospheric_pressure_kpa_abs()),
        printed: jiff::Timestamp::now()
            .to_zoned(jiff::tz::TimeZone::get(&tz).unwrap_or(jiff::tz::TimeZone::UTC))
            .strftime("%a %-d %b %Y")
            .to_string(),
        fmt,
        view,
        b_compressors: b.compressors,
        b_receivers: b.receivers,
        b_uploads: super::words::uploads_in_local_time(b.uploads, &tz, &fmt),
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

/// The findings page as a file (`airledger report --format html`): opened from disk, it has no
/// server to ask for its styles and scripts, so they are carried inline ([`standalone`]).
pub async fn findings_html(app: &App, id: i64) -> anyhow::Result<String> {
    let page = findings_page(app, id, &ViewQuery::default()).await.map_err(|e| anyhow::anyhow!("{e}"))?;
    let html = page.render()?;
    Ok(standalone(&html, &print_css_text(&page.audit.name, "compressed-air findings")))
}

/// A rendered page made to stand alone: every stylesheet and script it links by a server path is
/// put inline from the embedded files (the findings' print stylesheet from `print_css`), the
/// favicon link is dropped, and so is the page's top bar, whose links lead to the server.
pub fn standalone(html: &str, print_css: &str) -> String {
    let mut out = String::with_capacity(html.len() + 64 * 1024);
    let mut rest = html;
    while let Some(i) = rest.find('<') {
        out.push_str(&rest[..i]);
        rest = &rest[i..];
        let end = rest.find('>').map_or(rest.len(), |e| e + 1);
        let tag = &rest[..end];
        let attr = |name: &str| {
            let key = format!("{name}=\"");
            tag.find(&key).map(|a| {
                let v = &tag[a + key.len()..];
                &v[..v.find('"').unwrap_or(v.len())]
            })
        };
        if tag.starts_with("<link") {
            match (attr("rel"), attr("href")) {
                (Some("stylesheet"), Some(href)) if href.starts_with('/') => {
                    let css = match href.strip_prefix("/static/") {
                        Some(p) => crate::web::assets::text(p).unwrap_or_default().to_string(),
                        None => print_css.to_string(),
                    };
                    match attr("media") {
                        Some(media) => out.push_str(&format!("<style media=\"{media}\">\n{css}</style>")),
                        None => out.push_str(&format!("<style>\n{css}</style>")),
                    }
                }
                (_, Some(href)) if href.starts_with('/') => {}
                _ => out.push_str(tag),
            }
            rest = &rest[end..];
        } else if tag.starts_with("<script") && attr("src").is_some_and(|s| s.starts_with('/')) {
            let js = attr("src").and_then(|s| s.strip_prefix("/static/")).and_then(crate::web::assets::text);
            // `</script` inside a script would end it early: written `<\/script` (the same string in JS).
            out.push_str(&format!(
                "<script>\n{}</script>",
                js.unwrap_or_default().replace("</script", "<\\/script")
            ));
            rest = &rest[end..];
            rest = rest.strip_prefix("</script>").unwrap_or(rest);
        } else if tag.starts_with("<header class=\"topbar") {
            rest = rest.find("</header>").map_or(&rest[end..], |e| &rest[e + "</header>".len()..]);
        } else {
            out.push_str(tag);
            rest = &rest[end..];
        }
    }
    out.push_str(rest);
    out
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
    print_css_of(&st, id, "compressed-air findings").await
}

/// The printed report's running head and page numbers, as the findings' (`print_css`).
pub async fn report_print_css(
    State(st): State<AppState>,
    Path(id): Path<i64>,
) -> Result<Response, PageError> {
    print_css_of(&st, id, "compressed-air report").await
}

async fn print_css_of(st: &AppState, id: i64, what: &str) -> Result<Response, PageError> {
    let b = st.app.bundle(id).await?;
    let css = print_css_text(&b.audit.name, what);
    Ok(([(header::CONTENT_TYPE, "text/css; charset=utf-8"), (header::CACHE_CONTROL, "no-store")], css)
        .into_response())
}

/// The print stylesheet's text for a site named `name`, its running head saying `what` the
/// printed page is.
fn print_css_text(name: &str, what: &str) -> String {
    let head = css_string(&format!("{name} \u{b7} {what}"));
    format!(
        "@page {{\n  @top-left {{ content: {head}; font: 8pt system-ui, sans-serif; color: #555; }}\n  \
         @bottom-right {{ content: \"page \" counter(page) \" of \" counter(pages); font: 8pt system-ui, sans-serif; color: #555; }}\n}}\n"
    )
}

#[cfg(test)]
mod tests {
    #[test]
    fn a_site_name_cannot_end_the_css_string() {
        assert_eq!(super::css_string("Plant \"A\" \\ B"), "\"Plant \\22 A\\22  \\5c  B\"");
        assert_eq!(super::css_string("Werk Süd\n"), "\"Werk Süd\\a \"");
    }
}
