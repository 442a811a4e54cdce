//! Correct an upload's mapping: its columns as stored, each with its quantity, unit (as people
//! write it) and compressor to change or leave out, and the logger's time zone; posted, the kept
//! original is imported again with it (`App::remap_upload`). A refused mapping shows the page
//! again with the reason, and the earlier import stays. Opened from the upload page
//! (`?from=upload`, carried by the form), it comes back there.

use std::collections::HashMap;

use askama::Template;
use axum::extract::{Path, Query, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect};
use axum::Form;

use super::flash::Done;
use super::inputs::Inputs;
use super::{render, PageResult};
use crate::app::AuditBundle;
use crate::core::entry::Entry;
use crate::core::series::PressurePoint;
use crate::core::unit_table::{self, LoggedQuantity, ToSi};
use crate::ingest::mapping::LineConditions;
use crate::ingest::sniff::time::{date_readings, DateReading, ReadRow};
use crate::ingest::Mapping;
use crate::store::audits::Audit;
use crate::web::error::AppError;
use crate::web::AppState;

/// One mapped column as the form shows it.
struct ColumnRow {
    column: String,
    quantity: String,
    unit: String,
    compressor: Option<String>,
    /// An actual-volume flow's line, as the fields show it in the reader's units (blank if none).
    line_pressure: String,
    line_column: String,
    line_temperature: String,
    /// A pressure's measuring point (its code) and name, as the mapping gives them.
    point: String,
    label: String,
}

/// A column of the file that the mapping does not read, with the sniffer's guess.
struct ExtraColumn {
    column: String,
    quantity: String,
    unit: String,
}

/// Per quantity: its code, its name and its units (code, label), an `<optgroup>` of the unit box.
type UnitGroup = (&'static str, &'static str, Vec<(&'static str, &'static str)>);

#[derive(Template)]
#[template(path = "remap.html")]
struct RemapPage {
    extra: Vec<ExtraColumn>,
    audit: Audit,
    upload_id: i64,
    filename: String,
    columns: Vec<ColumnRow>,
    quantities: Vec<(&'static str, &'static str)>,
    units: Vec<UnitGroup>,
    compressors: Vec<String>,
    /// Pressure measuring points: code and words.
    points: Vec<(&'static str, &'static str)>,
    timezone: String,
    zones: Vec<String>,
    inp: Inputs,
    /// The file's other columns, for a line pressure logged in one of them.
    pressure_columns: Vec<String>,
    format: String,
    /// The readings of the dates that read the file's first rows, in words, the chosen first.
    readings: Vec<DateReading>,
    /// The first rows' times as the chosen format reads them.
    preview_rows: Vec<ReadRow>,
    /// For `static/js/remap.js`: the audit, the first rows' time cells and the interval end.
    page_data: serde_json::Value,
    error: Option<String>,
    /// The page it was opened from (`from=upload`, else empty), and the page to come back to.
    from: String,
    back: String,
}

/// The first data rows' time cells as mapping `m` reads them (a time column's after a space).
fn time_cells(sniffed: Option<&crate::ingest::Sniffed>, m: &Mapping) -> Vec<String> {
    let Some(sn) = sniffed else { return vec![] };
    sn.time_cells(&m.timestamp.column, m.timestamp.time_column.as_deref())
}

fn quantity_label(q: LoggedQuantity) -> &'static str {
    match q {
        LoggedQuantity::Power => "power",
        LoggedQuantity::Energy => "energy counter",
        LoggedQuantity::Current => "current",
        LoggedQuantity::Pressure => "pressure",
        LoggedQuantity::Flow => "flow",
        LoggedQuantity::Temperature => "temperature",
    }
}

/// Whether a flow unit is actual volume at line conditions (`acfm`, `am3_min`, `am3_h`).
fn is_line_flow(quantity: &str, unit: &str) -> bool {
    quantity == "flow"
        && unit_table::find(LoggedQuantity::Flow, unit)
            .is_some_and(|u| matches!(u.to_si, ToSi::LineFlow { .. }))
}

fn quantity(s: &str) -> Option<LoggedQuantity> {
    LoggedQuantity::ALL.into_iter().find(|q| q.as_str() == s)
}

/// The stored mapping of the upload, or 404.
fn stored(b: &AuditBundle, uid: i64) -> Result<(String, Mapping), AppError> {
    let u = b
        .uploads
        .iter()
        .find(|u| u.id == uid)
        .ok_or_else(|| AppError::NotFound(format!("audit {} has no upload {uid}", b.audit.id)))?;
    let m: Mapping = serde_json::from_value(u.mapping.clone()).map_err(|e| {
        AppError::Internal(anyhow::anyhow!("the stored mapping of upload {uid} cannot be read: {e}"))
    })?;
    Ok((u.filename.clone(), m))
}

/// The file's columns that `m` does not read (nor takes its times from), as the sniffer saw them.
fn extra_columns(sniffed: Option<&crate::ingest::Sniffed>, m: &Mapping) -> Vec<ExtraColumn> {
    let Some(sn) = sniffed else { return vec![] };
    let used = |c: &str| {
        m.columns.iter().any(|x| x.column == c)
            || m.timestamp.column == c
            || m.timestamp.time_column.as_deref() == Some(c)
    };
    sn.header
        .iter()
        .filter(|h| !h.trim().is_empty() && !used(h))
        .map(|h| {
            let guess = sn.columns.iter().find(|g| &g.column == h);
            ExtraColumn {
                column: h.clone(),
                // No guess: "not read" and no unit, never a quantity with another's unit.
                quantity: guess.and_then(|g| g.quantity.clone()).unwrap_or_default(),
                unit: guess.and_then(|g| g.unit.clone()).unwrap_or_default(),
            }
        })
        .collect()
}

fn page(
    b: AuditBundle,
    uid: i64,
    filename: String,
    m: &Mapping,
    sniffed: Option<&crate::ingest::Sniffed>,
    error: Option<String>,
    from: Option<&str>,
) -> RemapPage {
    let extra = extra_columns(sniffed, m);
    let cells = time_cells(sniffed, m);
    let readings = date_readings(
        &cells,
        (&m.timestamp.timezone, &b.audit.site.timezone),
        Some(&m.timestamp.format),
        m.timestamp.interval,
    )
    .unwrap_or_default();
    let preview_rows = readings.first().map(|r| r.rows.clone()).unwrap_or_default();
    let page_data = serde_json::json!({
        "audit_id": b.audit.id,
        "time_cells": cells,
        "interval": m.timestamp.interval,
    });
    let inp = Inputs::new(b.audit.site.display_units);
    let columns = m
        .columns
        .iter()
        .map(|c| {
            // The unit's code as the table spells it, so the list shows it selected.
            let unit = quantity(&c.quantity)
                .and_then(|q| unit_table::find(q, &c.unit))
                .map_or_else(|| c.unit.clone(), |u| u.code.to_string());
            let line = c.line.clone().unwrap_or_default();
            ColumnRow {
                column: c.column.clone(),
                quantity: c.quantity.clone(),
                unit,
                compressor: c.compressor.clone(),
                line_pressure: line.pressure_bar_g.map(|p| inp.p(p)).unwrap_or_default(),
                line_column: line.pressure_column.unwrap_or_default(),
                line_temperature: line.temperature_c.map(|t| inp.t(t)).unwrap_or_default(),
                point: c.point.clone().unwrap_or_else(|| "header".into()),
                label: c.label.clone().unwrap_or_default(),
            }
        })
        .collect();
    RemapPage {
        extra,
        upload_id: uid,
        filename,
        columns,
        quantities: LoggedQuantity::ALL.iter().map(|q| (q.as_str(), quantity_label(*q))).collect(),
        units: LoggedQuantity::ALL
            .iter()
            .map(|q| {
                (q.as_str(), quantity_label(*q), unit_table::choices(*q).map(|u| (u.code, u.label)).collect())
            })
            .collect(),
        compressors: b.compressors.iter().map(|c| c.spec.tag.clone()).collect(),
        points: PressurePoint::ALL.iter().map(|p| (p.as_str(), p.label())).collect(),
        timezone: m.timestamp.timezone.clone(),
        zones: super::zone_names(),
        inp,
        pressure_columns: m
            .columns
            .iter()
            .filter(|c| c.quantity == "pressure")
            .map(|c| c.column.clone())
            .collect(),
        format: m.timestamp.format.clone(),
        readings,
        preview_rows,
        page_data,
        error,
        from: from.filter(|f| *f == "upload").unwrap_or_default().to_string(),
        back: super::files_page(b.audit.id, from),
        audit: b.audit,
    }
}

pub async fn remap(
    State(st): State<AppState>,
    Path((id, uid)): Path<(i64, i64)>,
    Query(q): Query<HashMap<String, String>>,
) -> PageResult {
    let b = st.app.bundle(id).await?;
    let (filename, m) = stored(&b, uid)?;
    let sniffed = st.app.sniff_original(uid).await?;
    Ok(render(&page(b, uid, filename, &m, sniffed.as_ref(), None, q.get("from").map(String::as_str))))
}

/// The stored mapping with the form's changes: columns left out are dropped, the others take the
/// quantity, unit and compressor chosen, and columns the file has but the mapping did not read are
/// added where ticked; everything else of the stored mapping stays.
fn changed(mut m: Mapping, form: &HashMap<String, String>) -> Mapping {
    let inputs = Inputs::of_form(form);
    let extra = |j: usize, f: &str| form.get(&format!("extra{j}_{f}")).map(|s| s.trim().to_string());
    let mut added = vec![];
    for j in 0.. {
        let Some(column) = form.get(&format!("extra{j}_column")) else { break };
        // Read only when ticked with a quantity chosen ("not read" leaves it out).
        if extra(j, "use").is_none() || extra(j, "quantity").unwrap_or_default().is_empty() {
            continue;
        }
        let compressor = extra(j, "compressor").filter(|t| !t.is_empty());
        added.push(crate::ingest::mapping::ColumnMap::new(
            column,
            &extra(j, "quantity").unwrap_or_default(),
            &extra(j, "unit").unwrap_or_default(),
            compressor.as_deref(),
        ));
    }
    let field = |i: usize, f: &str| form.get(&format!("col{i}_{f}")).map(|s| s.trim().to_string());
    let mut kept = Vec::with_capacity(m.columns.len());
    for (i, mut c) in std::mem::take(&mut m.columns).into_iter().enumerate() {
        if field(i, "skip").is_some() {
            continue;
        }
        if let Some(q) = field(i, "quantity") {
            c.quantity = q;
        }
        if let Some(u) = field(i, "unit") {
            c.unit = u;
        }
        // An actual-volume flow takes its line from the form (in the units it was drawn in); any
        // other unit has none, or the mapping would be refused for a line it does not use.
        if is_line_flow(&c.quantity, &c.unit) {
            let prev = c.line.clone().unwrap_or_default();
            let column = field(i, "line_column").filter(|s| !s.is_empty());
            let pressure = field(i, "line_pressure").and_then(|t| {
                Entry::GaugePressure
                    .read(inputs.units, &t, prev.pressure_bar_g)
                    .ok()
                    .filter(|_| !t.is_empty())
            });
            let temperature = field(i, "line_temperature").and_then(|t| {
                Entry::Temperature.read(inputs.units, &t, prev.temperature_c).ok().filter(|_| !t.is_empty())
            });
            c.line = Some(LineConditions {
                pressure_bar_g: if column.is_some() { None } else { pressure },
                pressure_bar_a: None,
                pressure_column: column,
                temperature_c: temperature,
            });
        } else if c.line.is_some() && field(i, "unit").is_some() {
            c.line = None;
        }
        if let Some(t) = field(i, "compressor") {
            c.compressor = (!t.is_empty()).then_some(t);
        }
        // A pressure's point and name; any other quantity has none.
        if c.quantity == "pressure" {
            if let Some(p) = field(i, "point") {
                c.point = (!p.is_empty()).then_some(p);
            }
            if let Some(l) = field(i, "label") {
                c.label = (!l.is_empty()).then_some(l);
            }
        } else {
            (c.point, c.label) = (None, None);
        }
        kept.push(c);
    }
    kept.extend(added);
    m.columns = kept;
    if let Some(tz) = form.get("timezone").map(|s| s.trim()).filter(|s| !s.is_empty()) {
        m.timestamp.timezone = tz.to_string();
    }
    // The format: the advanced field when it was changed, else the reading chosen in words.
    let typed = form.get("format").map(|s| s.trim()).filter(|s| !s.is_empty());
    let reading = form.get("date_reading").map(|s| s.trim()).filter(|s| !s.is_empty());
    match (typed, reading) {
        (Some(f), _) if f != m.timestamp.format => m.timestamp.format = f.to_string(),
        (_, Some(r)) => m.timestamp.format = r.to_string(),
        _ => {}
    }
    m
}

pub async fn save_remap(
    State(st): State<AppState>,
    Path((id, uid)): Path<(i64, i64)>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let b = st.app.bundle(id).await?;
    let (filename, m) = stored(&b, uid)?;
    let m = changed(m, &form);
    let from = form.get("from").map(String::as_str);
    // "Show how the times read": the page again with the choices made, nothing imported.
    if form.contains_key("preview") {
        let sniffed = st.app.sniff_original(uid).await?;
        return Ok(render(&page(b, uid, filename, &m, sniffed.as_ref(), None, from)));
    }
    let error = if m.columns.is_empty() {
        AppError::field("columns", "leave at least one column in: a file of no columns holds no readings")
    } else {
        match st.app.remap_upload(id, uid, m.clone(), false, None).await {
            Ok(_) => {
                let done = Done { kind: "upload-remapped", what: filename };
                return Ok(Redirect::to(&format!("{}?{}", super::files_page(id, from), done.query()))
                    .into_response());
            }
            Err(e) => AppError::from(e),
        }
    };
    let message = match &error {
        AppError::Unprocessable { message, line, column, .. } => {
            let mut place = vec![];
            if let Some(l) = line {
                place.push(format!("line {l}"));
            }
            if let Some(c) = column {
                place.push(format!("column \u{201c}{c}\u{201d}"));
            }
            if place.is_empty() {
                message.clone()
            } else {
                format!("{message} ({})", place.join(", "))
            }
        }
        AppError::Conflict(message) => message.clone(),
        _ => return Err(error.into()),
    };
    let sniffed = st.app.sniff_original(uid).await?;
    let shown = Some(format!("The file was not read again: {message}"));
    let mut res = render(&page(b, uid, filename, &m, sniffed.as_ref(), shown, from));
    *res.status_mut() = StatusCode::UNPROCESSABLE_ENTITY;
    Ok(res)
}
