//! The field-tests page: the stored tests with their results, and the forms that add one
//! (`static/js/tests.js`).

use askama::Template;
use axum::extract::{Path, Query, State};
use axum::response::Response;
use serde_json::Value;

use super::{render, PageError};
use crate::app::fieldtests::result_of;
use crate::core::display::Fmt;
use crate::store::audits::Audit;
use crate::web::AppState;

pub struct TestRow {
    pub id: i64,
    pub method: String,
    pub input: String,
    pub result: String,
    pub leak_flow: String,
}

#[derive(Template)]
#[template(path = "tests.html")]
struct TestsPage {
    audit: Audit,
    fmt: Fmt,
    tests: Vec<TestRow>,
    compressors: Vec<String>,
    system_volume_m3: f64,
    page_data: Value,
    /// The test whose form is filled to be edited (`?edit=ID`).
    editing: Option<i64>,
}

#[derive(serde::Deserialize, Default)]
pub struct TestsQuery {
    edit: Option<i64>,
}

pub async fn tests(
    State(st): State<AppState>,
    Path(id): Path<i64>,
    Query(q): Query<TestsQuery>,
) -> Result<Response, PageError> {
    let b = st.app.bundle(id).await?;
    let edit = q.edit.and_then(|e| b.field_tests.iter().find(|t| t.id == e));
    let editing = edit.map(|t| t.id);
    let edit = edit.map(|t| serde_json::json!({"id": t.id, "kind": t.kind, "input": t.input}));
    let fmt = b.fmt();
    let tests = b
        .field_tests
        .iter()
        .map(|t| {
            let mut input = t.input.clone();
            if let Some(o) = input.as_object_mut() {
                o.remove("kind");
            }
            TestRow {
                id: t.id,
                method: t.kind.clone(),
                input: input.to_string(),
                result: t.result.to_string(),
                leak_flow: fmt.flow_m3_min(result_of(t).map_or(f64::NAN, |r| r.leak_flow_m3_min())),
            }
        })
        .collect();
    Ok(render(&TestsPage {
        system_volume_m3: b.storage().system_volume_m3(),
        compressors: b.compressors.iter().map(|c| c.spec.tag.clone()).collect(),
        page_data: serde_json::json!({"audit_id": id, "atmosphere_pa": b.audit.site.atmospheric_pressure_kpa_abs() * 1000.0, "edit": edit}),
        editing,
        tests,
        fmt,
        audit: b.audit,
    }))
}
