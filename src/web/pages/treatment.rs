//! The technician's page for dryers, drains and end uses (`core::treatment`): what is on record,
//! a form for each, in the reader's units, and removal behind a confirmation box. The records go
//! through the same check as the API (`app::treatment`).

use std::collections::HashMap;

use askama::Template;
use axum::extract::{Path, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect};
use axum::Form;
use serde_json::Value;

use super::inputs::Inputs;
use super::{render, PageError, PageResult};
use crate::app::treatment::{DrainInput, DryerInput, EndUseInput, ItemKind, TreatmentInput};
use crate::core::display::Fmt;
use crate::core::entry::Entry;
use crate::core::treatment::{DrainKind, DryerControl, DryerKind, EndUseKind};
use crate::store::audits::Audit;
use crate::web::error::AppError;
use crate::web::AppState;

/// One record as the page lists it.
pub struct Row {
    pub list: &'static str,
    pub id: i64,
    pub name: String,
    pub what: String,
}

#[derive(Template)]
#[template(path = "treatment.html")]
struct TreatmentPage {
    audit: Audit,
    inp: Inputs,
    rows: Vec<Row>,
    error: Option<String>,
    dryer_kinds: Vec<(&'static str, String)>,
    drain_kinds: Vec<(&'static str, String)>,
    use_kinds: Vec<(&'static str, String)>,
    controls: Vec<(&'static str, String)>,
}

/// A kind's code in words (`core::model::human_label`), capitalised.
fn words(code: &str) -> String {
    let w = crate::core::model::human_label(code);
    let mut c = w.chars();
    c.next().map(|f| f.to_uppercase().collect::<String>() + c.as_str()).unwrap_or_default()
}

/// A bore in the reader's units (mm or in).
fn diameter(fmt: &Fmt, mm: f64) -> String {
    format!("{} {}", Entry::Diameter.shown(fmt.units, mm), Entry::Diameter.unit(fmt.units).label)
}

fn num(v: &Value, k: &str) -> Option<f64> {
    v.get(k).and_then(Value::as_f64)
}

/// A record in words and the reader's units.
fn describe(kind: ItemKind, v: &Value, fmt: &Fmt) -> (String, String) {
    let s = |k: &str| v.get(k).and_then(Value::as_str).unwrap_or("").to_string();
    match kind {
        ItemKind::Dryer => (
            format!("Dryer {}", s("tag")),
            format!(
                "{}, {}; rated {}{}; {}",
                words(&s("kind")),
                words(&s("control")).to_lowercase(),
                fmt.flow_m3_min(num(v, "rated_flow_m3_min").unwrap_or(0.0)),
                num(v, "purge_fraction").map_or(String::new(), |p| format!(", purge {}", fmt.percent(p))),
                fmt.power_kw(num(v, "power_kw").unwrap_or(0.0)),
            ),
        ),
        ItemKind::Drain => (
            format!("Drain {}", s("tag")),
            match (num(v, "open_s"), num(v, "interval_s"), num(v, "orifice_mm")) {
                (Some(o), Some(i), Some(d)) => {
                    format!("{}: open {o} s every {i} s through {}", words(&s("kind")), diameter(fmt, d))
                }
                (_, _, Some(d)) => format!("{} through {}", words(&s("kind")), diameter(fmt, d)),
                _ => words(&s("kind")),
            },
        ),
        ItemKind::EndUse => (
            s("name"),
            format!(
                "{} × {}, {}, {} of production time{}",
                num(v, "count").unwrap_or(1.0),
                words(&s("kind")).to_lowercase(),
                match (num(v, "flow_m3_min"), num(v, "orifice_mm")) {
                    (Some(q), _) => format!("{} each", fmt.flow_m3_min(q)),
                    (None, Some(d)) => format!(
                        "{} opening at {}",
                        diameter(fmt, d),
                        fmt.pressure_bar_g(num(v, "pressure_bar_g").unwrap_or(0.0))
                    ),
                    _ => String::new(),
                },
                fmt.percent(num(v, "duty").unwrap_or(1.0)),
                num(v, "alternative_kw")
                    .map_or(String::new(), |k| format!("; electric alternative {}", fmt.power_kw(k))),
            ),
        ),
    }
}

async fn page(st: &AppState, id: i64, error: Option<String>) -> Result<TreatmentPage, PageError> {
    let b = st.app.bundle(id).await?;
    let fmt = b.fmt();
    let mut rows = vec![];
    for (kind, list) in
        [(ItemKind::Dryer, "dryers"), (ItemKind::Drain, "drains"), (ItemKind::EndUse, "end-uses")]
    {
        for v in st.app.treatment_items(id, kind).await? {
            let (name, what) = describe(kind, &v, &fmt);
            rows.push(Row { list, id: v["id"].as_i64().unwrap_or(0), name, what });
        }
    }
    let opts = |all: &[&'static str]| all.iter().map(|k| (*k, words(k))).collect::<Vec<_>>();
    Ok(TreatmentPage {
        inp: Inputs::new(fmt.units),
        audit: b.audit,
        rows,
        error,
        dryer_kinds: opts(&DryerKind::ALL.iter().map(|k| k.as_str()).collect::<Vec<_>>()),
        drain_kinds: opts(&DrainKind::ALL.iter().map(|k| k.as_str()).collect::<Vec<_>>()),
        use_kinds: opts(&EndUseKind::ALL.iter().map(|k| k.as_str()).collect::<Vec<_>>()),
        controls: opts(&DryerControl::ALL.iter().map(|k| k.as_str()).collect::<Vec<_>>()),
    })
}

pub async fn treatment(State(st): State<AppState>, Path(id): Path<i64>) -> PageResult {
    Ok(render(&page(&st, id, None).await?))
}

/// The posted form as a record, numbers read in the units the form was drawn in.
fn input(kind: ItemKind, form: &HashMap<String, String>) -> Result<TreatmentInput, AppError> {
    let inp = Inputs::of_form(form);
    let text = |k: &str| form.get(k).map(|s| s.trim().to_string()).unwrap_or_default();
    let plain = |k: &str| -> Result<Option<f64>, AppError> {
        match form.get(k).map(|s| s.trim()) {
            None | Some("") => Ok(None),
            Some(s) => s
                .parse::<f64>()
                .map(Some)
                .map_err(|_| AppError::from(crate::app::Error::field(k, format!("{s:?} is not a number")))),
        }
    };
    let entry = |k: &str, e: Entry| inp.opt(form, k, e, None).map_err(AppError::from);
    let share = |k: &str| -> Result<Option<f64>, AppError> { Ok(plain(k)?.map(|p| p / 100.0)) };
    Ok(match kind {
        ItemKind::Dryer => TreatmentInput::Dryer(DryerInput {
            tag: text("tag"),
            kind: text("kind"),
            control: text("control"),
            rated_flow_m3_min: entry("rated_flow_m3_min", Entry::FreeAirFlow)?.unwrap_or(f64::NAN),
            purge_fraction: share("purge_percent")?,
            power_kw: plain("power_kw")?.unwrap_or(0.0),
        }),
        ItemKind::Drain => TreatmentInput::Drain(DrainInput {
            tag: text("tag"),
            kind: text("kind"),
            open_s: plain("open_s")?,
            interval_s: plain("interval_s")?,
            orifice_mm: entry("orifice_mm", Entry::Diameter)?,
            discharge_coefficient: None,
        }),
        ItemKind::EndUse => TreatmentInput::EndUse(EndUseInput {
            name: text("name"),
            kind: text("kind"),
            count: plain("count")?.unwrap_or(1.0).round().max(0.0) as u32,
            flow_m3_min: entry("flow_m3_min", Entry::FreeAirFlow)?,
            orifice_mm: entry("orifice_mm", Entry::Diameter)?,
            pressure_bar_g: entry("pressure_bar_g", Entry::GaugePressure)?,
            duty: share("duty_percent")?.unwrap_or(1.0),
            regulated: form.contains_key("regulated"),
            alternative_kw: plain("alternative_kw")?,
        }),
    })
}

async fn refused(st: &AppState, id: i64, e: AppError) -> PageResult {
    match e {
        AppError::Unprocessable { message, .. } => {
            let mut res = render(&page(st, id, Some(message)).await?);
            *res.status_mut() = StatusCode::UNPROCESSABLE_ENTITY;
            Ok(res)
        }
        other => Err(PageError::from(other)),
    }
}

pub async fn add(
    State(st): State<AppState>,
    Path((id, list)): Path<(i64, String)>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let Some(kind) = ItemKind::from_segment(&list) else {
        return Err(PageError::from(AppError::NotFound(format!("no list {list:?}"))));
    };
    let result = async {
        let record = input(kind, &form)?;
        st.app.add_treatment_item(id, record).await.map_err(AppError::from)
    }
    .await;
    match result {
        Ok(_) => Ok(Redirect::to(&format!("/audits/{id}/treatment")).into_response()),
        Err(e) => refused(&st, id, e).await,
    }
}

pub async fn remove(
    State(st): State<AppState>,
    Path((id, list, iid)): Path<(i64, String, i64)>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let Some(kind) = ItemKind::from_segment(&list) else {
        return Err(PageError::from(AppError::NotFound(format!("no list {list:?}"))));
    };
    if !form.contains_key("confirm") {
        let e = AppError::from(crate::app::Error::field("confirm", "tick the box beside remove to confirm"));
        return refused(&st, id, e).await;
    }
    if !st.app.delete_treatment_item(id, kind, iid).await? {
        return Err(PageError::from(AppError::NotFound(format!("audit {id} has no such record {iid}"))));
    }
    Ok(Redirect::to(&format!("/audits/{id}/treatment")).into_response())
}
