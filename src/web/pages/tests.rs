//! The field-tests page: the stored tests with their results, and the forms that add one
//! (`static/js/tests.js`).

use askama::Template;
use axum::extract::{Path, Query, State};
use axum::response::Response;
use serde_json::Value;

use super::inputs::Inputs;
use super::words::{test_rows, TestRow};
use super::{render, PageError};
use crate::core::display::Fmt;
use crate::store::audits::Audit;
use crate::web::AppState;

#[derive(Template)]
#[template(path = "tests.html")]
struct TestsPage {
    audit: Audit,
    fmt: Fmt,
    inp: Inputs,
    tests: Vec<TestRow>,
    compressors: Vec<String>,
    system_volume_m3: f64,
    page_data: Value,
    /// The test whose form is filled to be edited (`?edit=ID`).
    editing: Option<i64>,
    /// What was just done (`flash`).
    done: Option<String>,
    /// An example time for the window fields: 02:00 on the log's first day (else today) on the
    /// site's clock, in RFC 3339 with the site's offset then.
    example_time: String,
    /// Two hours after it, on the same clock.
    example_time_end: String,
}

/// 02:00 on the site's calendar day of `ms` (UTC), in RFC 3339 with the site's offset at that time.
fn example_time(ms: i64, tz: &str) -> String {
    example_time_at(ms, tz, 2)
}

/// The same at `hour`.
fn example_time_at(ms: i64, tz: &str, hour: i8) -> String {
    let zone = jiff::tz::TimeZone::get(tz).unwrap_or(jiff::tz::TimeZone::UTC);
    let day = jiff::Timestamp::from_millisecond(ms)
        .unwrap_or(jiff::Timestamp::UNIX_EPOCH)
        .to_zoned(zone.clone())
        .date();
    match day.at(hour, 0, 0, 0).to_zoned(zone) {
        Ok(z) => z.strftime("%Y-%m-%dT%H:%M:%S%:z").to_string(),
        Err(_) => "2026-03-15T02:00:00+00:00".into(),
    }
}

#[derive(serde::Deserialize, Default)]
pub struct TestsQuery {
    edit: Option<i64>,
}

pub async fn tests(
    State(st): State<AppState>,
    Path(id): Path<i64>,
    Query(q): Query<TestsQuery>,
    Query(d): Query<super::flash::DoneQuery>,
) -> Result<Response, PageError> {
    let b = st.app.bundle(id).await?;
    let edit = q.edit.and_then(|e| b.field_tests.iter().find(|t| t.id == e));
    let editing = edit.map(|t| t.id);
    let edit = edit.map(|t| serde_json::json!({"id": t.id, "kind": t.kind, "input": t.input}));
    let fmt = b.fmt();
    let tests = test_rows(&b.field_tests, &fmt, &b.audit.site.timezone);
    let first = b
        .channels
        .iter()
        .map(|c| c.first_ms)
        .min()
        .unwrap_or_else(|| jiff::Timestamp::now().as_millisecond());
    Ok(render(&TestsPage {
        example_time: example_time(first, &b.audit.site.timezone),
        example_time_end: example_time_at(first, &b.audit.site.timezone, 4),
        system_volume_m3: b.storage().system_volume_m3(),
        compressors: b.compressors.iter().map(|c| c.spec.tag.clone()).collect(),
        page_data: serde_json::json!({"audit_id": id, "atmosphere_pa": b.audit.site.atmospheric_pressure_kpa_abs() * 1000.0, "edit": edit, "entry": Inputs::new(fmt.units).page_data(), "timezone": b.audit.site.timezone}),
        editing,
        done: super::flash::Done::message(&d),
        inp: Inputs::new(fmt.units),
        tests,
        fmt,
        audit: b.audit,
    }))
}

#[cfg(test)]
mod example_tests {
    use super::example_time;

    #[test]
    fn the_example_time_carries_the_sites_offset_on_that_day() {
        // IANA tz database: Chicago is UTC-6 in winter (CST) and UTC-5 in summer (CDT); Berlin +1
        // in winter. 2026-01-10T12:00Z and 2026-07-10T12:00Z.
        assert_eq!(example_time(1_768_046_400_000, "America/Chicago"), "2026-01-10T02:00:00-06:00");
        assert_eq!(example_time(1_783_684_800_000, "America/Chicago"), "2026-07-10T02:00:00-05:00");
        assert_eq!(example_time(1_768_046_400_000, "Europe/Berlin"), "2026-01-10T02:00:00+01:00");
    }
}
