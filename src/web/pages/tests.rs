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
    /// The site's air, which the compression calculator's blank inlet fields take.
    atmosphere_kpa: f64,
    inlet_c: f64,
    page_data: Value,
    /// The test whose form is filled to be edited (`?edit=ID`).
    editing: Option<i64>,
    /// What was just done (`flash`).
    done: Option<String>,
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
    Ok(render(&TestsPage {
        system_volume_m3: b.storage().system_volume_m3(),
        atmosphere_kpa: b.audit.site.atmospheric_pressure_kpa_abs(),
        inlet_c: b.audit.site.inlet_temperature_c,
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
