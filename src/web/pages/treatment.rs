//! The technician's page for dryers, filters, drains and end uses (`core::treatment`): what is on
//! record, a form to add each kind and one to edit each record, in the reader's units
//! (`core::entry`: a value shown and posted unchanged keeps its stored bits), and removal behind a
//! confirmation box. The records go through the same check as the API (`app::treatment`).

use std::collections::HashMap;

use askama::Template;
use axum::extract::{Path, State};
use axum::http::StatusCode;
use axum::response::{IntoResponse, Redirect};
use axum::Form;
use serde_json::Value;

use super::inputs::Inputs;
use super::refusal::Refusal;
use super::{render, PageError, PageResult};
use crate::app::treatment::{
    DrainInput, DryerInput, EndUseInput, FilterInput, ItemKind, OutsideBounds, Plant, TreatmentInput,
};
use crate::core::display::Fmt;
use crate::core::entry::{self, Entry};
use crate::core::treatment::{DrainKind, DryerControl, DryerKind, EndUseKind, FilterKind};
use crate::core::units::UnitSystem;
use crate::site::FieldError;
use crate::store::audits::Audit;
use crate::web::error::AppError;
use crate::web::AppState;

/// One record as the page lists it, with its edit form's fields.
pub struct Row {
    pub list: &'static str,
    pub id: i64,
    pub name: String,
    pub what: String,
    pub fields: Vec<Field>,
    /// Stored before the checks of today and outside them: each refusal in words (empty: none).
    pub outside: Vec<String>,
}

/// One field of a record's edit form, filled with the stored value in the reader's units.
pub struct Field {
    pub name: &'static str,
    pub label: String,
    pub value: String,
    /// A choice: (code, words, selected); empty for a number or text field.
    pub options: Vec<(&'static str, String, bool)>,
    /// A checkbox (`value` unused) and whether it is ticked.
    pub check: bool,
    pub checked: bool,
    /// A number (else text).
    pub number: bool,
}

/// How a stored number is shown in a plain (unit-free) field: nine significant figures, a share as
/// a percentage.
fn plain_shown(v: f64, percent: bool) -> String {
    entry::short(if percent { v * 100.0 } else { v })
}

/// The edit form's fields of a stored record, in the reader's units.
fn edit_fields(kind: ItemKind, v: &Value, units: UnitSystem, currency: &str) -> Vec<Field> {
    let text = |name: &'static str, label: &str| Field {
        name,
        label: label.into(),
        value: v.get(name).and_then(Value::as_str).unwrap_or("").to_string(),
        options: vec![],
        check: false,
        checked: false,
        number: false,
    };
    let choice = |name: &'static str, label: &str, all: Vec<&'static str>| {
        let now = v.get(name).and_then(Value::as_str).unwrap_or("");
        Field {
            name,
            label: label.into(),
            value: now.to_string(),
            options: all.into_iter().map(|k| (k, words(k), k == now)).collect(),
            check: false,
            checked: false,
            number: false,
        }
    };
    let unit = |name: &'static str, label: &str, e: Entry| Field {
        name,
        label: format!("{label}, {}", e.unit(units).label),
        value: num(v, name).map_or(String::new(), |x| e.shown(units, x)),
        options: vec![],
        check: false,
        checked: false,
        number: true,
    };
    let plain = |field: &'static str, stored: &str, label: &str, percent: bool| Field {
        name: field,
        label: label.into(),
        value: num(v, stored).map_or(String::new(), |x| plain_shown(x, percent)),
        options: vec![],
        check: false,
        checked: false,
        number: true,
    };
    let codes = |all: &[&'static str]| all.to_vec();
    let check = |name: &'static str, label: &str| Field {
        name,
        label: label.into(),
        value: String::new(),
        options: vec![],
        check: true,
        checked: v.get(name).and_then(Value::as_bool).unwrap_or(false),
        number: false,
    };
    match kind {
        ItemKind::Dryer => vec![
            text("tag", "Tag"),
            choice("kind", "Kind", codes(&DryerKind::ALL.iter().map(|k| k.as_str()).collect::<Vec<_>>())),
            unit("rated_flow_m3_min", "Rated flow (free air)", Entry::FreeAirFlow),
            plain(
                "purge_percent",
                "purge_fraction",
                "Purge, % of rated flow (blank: the kind's usual share)",
                true,
            ),
            plain("power_kw", "power_kw", "Electrical input, kW", false),
            choice(
                "control",
                "Cycle",
                codes(&DryerControl::ALL.iter().map(|k| k.as_str()).collect::<Vec<_>>()),
            ),
        ],
        ItemKind::Filter => vec![
            text("tag", "Tag"),
            choice("kind", "Kind", codes(&FilterKind::ALL.iter().map(|k| k.as_str()).collect::<Vec<_>>())),
            unit("rated_flow_m3_min", "Rated flow (free air)", Entry::FreeAirFlow),
            unit("clean_drop_bar", "Clean drop at rated flow (data sheet)", Entry::PressureDrop),
            unit("measured_drop_bar", "Drop measured across it", Entry::PressureDrop),
            plain("element_change_months", "element_change_months", "Element changed every, months", false),
            plain("element_cost", "element_cost", &format!("One element change costs, {currency}"), false),
        ],
        ItemKind::Drain => vec![
            text("tag", "Tag"),
            choice("kind", "Kind", codes(&DrainKind::ALL.iter().map(|k| k.as_str()).collect::<Vec<_>>())),
            plain("open_s", "open_s", "Open, s (timer)", false),
            plain("interval_s", "interval_s", "Every, s (timer)", false),
            unit("orifice_mm", "Orifice or valve bore", Entry::Diameter),
        ],
        ItemKind::EndUse => vec![
            text("name", "Name"),
            choice("kind", "Kind", codes(&EndUseKind::ALL.iter().map(|k| k.as_str()).collect::<Vec<_>>())),
            plain("count", "count", "How many", false),
            unit("flow_m3_min", "Air per use while running (free air)", Entry::FreeAirFlow),
            unit("orifice_mm", "Opening", Entry::Diameter),
            unit("pressure_bar_g", "Pressure at the use", Entry::GaugePressure),
            plain("duty_percent", "duty", "Running, % of production time", true),
            check("regulated", "behind a regulator"),
            check("boosted", "fed through a booster"),
            plain(
                "alternative_kw",
                "alternative_kw",
                "Electric alternative, kW per use (blank: none known)",
                false,
            ),
        ],
    }
}

#[derive(Template)]
#[template(path = "treatment.html")]
struct TreatmentPage {
    audit: Audit,
    inp: Inputs,
    rows: Vec<Row>,
    /// A refused form: its refusal and what was typed (`refusal`).
    refused: Option<Refusal>,
    dryer_kinds: Vec<(&'static str, String)>,
    drain_kinds: Vec<(&'static str, String)>,
    use_kinds: Vec<(&'static str, String)>,
    controls: Vec<(&'static str, String)>,
    filter_kinds: Vec<(&'static str, String)>,
    /// The plant's highest pressure in words ("125 psig, C1's highest"), for the end use's
    /// pressure label; `None` without a compressor.
    plant_pressure: Option<String>,
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
        ItemKind::Filter => (
            format!("Filter {}", s("tag")),
            format!(
                "{}; rated {}; clean drop {}, measured {}{}",
                words(&s("kind")),
                fmt.flow_m3_min(num(v, "rated_flow_m3_min").unwrap_or(0.0)),
                fmt.pressure_delta_bar(num(v, "clean_drop_bar").unwrap_or(0.0)),
                fmt.pressure_delta_bar(num(v, "measured_drop_bar").unwrap_or(0.0)),
                num(v, "element_change_months")
                    .map_or(String::new(), |m| format!("; element every {m} months")),
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
                "{} × {}, {}{}, {} of production time{}",
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
                if v.get("boosted").and_then(Value::as_bool) == Some(true) {
                    " through a booster"
                } else {
                    ""
                },
                fmt.percent(num(v, "duty").unwrap_or(1.0)),
                num(v, "alternative_kw")
                    .map_or(String::new(), |k| format!("; electric alternative {}", fmt.power_kw(k))),
            ),
        ),
    }
}

async fn page(st: &AppState, id: i64, refused: Option<Refusal>) -> Result<TreatmentPage, PageError> {
    let b = st.app.bundle(id).await?;
    let fmt = b.fmt();
    let outside = st.app.treatment_outside_bounds(id, fmt.units).await?;
    let mut rows = vec![];
    for (kind, list) in [
        (ItemKind::Dryer, "dryers"),
        (ItemKind::Filter, "filters"),
        (ItemKind::Drain, "drains"),
        (ItemKind::EndUse, "end-uses"),
    ] {
        for v in st.app.treatment_items(id, kind).await? {
            let (name, what) = describe(kind, &v, &fmt);
            let fields = edit_fields(kind, &v, fmt.units, &b.audit.site.currency);
            let id = v["id"].as_i64().unwrap_or(0);
            let outside = outside
                .iter()
                .find(|o| o.kind == kind && o.id == id)
                .map_or_else(Vec::new, |o| outside_words(o, fmt.units));
            rows.push(Row { list, id, name, what, fields, outside });
        }
    }
    let opts = |all: &[&'static str]| all.iter().map(|k| (*k, words(k))).collect::<Vec<_>>();
    let plant_pressure = st
        .app
        .treatment_plant(id)
        .await?
        .pressure
        .map(|(p, tag)| format!("{}, {tag}'s highest", Entry::GaugePressure.limit(fmt.units, p)));
    Ok(TreatmentPage {
        plant_pressure,
        inp: Inputs::new(fmt.units),
        audit: b.audit,
        rows,
        refused,
        dryer_kinds: opts(&DryerKind::ALL.iter().map(|k| k.as_str()).collect::<Vec<_>>()),
        drain_kinds: opts(&DrainKind::ALL.iter().map(|k| k.as_str()).collect::<Vec<_>>()),
        use_kinds: opts(&EndUseKind::ALL.iter().map(|k| k.as_str()).collect::<Vec<_>>()),
        controls: opts(&DryerControl::ALL.iter().map(|k| k.as_str()).collect::<Vec<_>>()),
        filter_kinds: opts(&FilterKind::ALL.iter().map(|k| k.as_str()).collect::<Vec<_>>()),
    })
}

pub async fn treatment(State(st): State<AppState>, Path(id): Path<i64>) -> PageResult {
    Ok(render(&page(&st, id, None).await?))
}

/// The posted form as a record, numbers read in the units the form was drawn in. `previous` is the
/// stored record an edit form was filled from: a field posted as it was shown keeps its stored value.
fn input(
    kind: ItemKind,
    form: &HashMap<String, String>,
    previous: Option<&Value>,
) -> Result<TreatmentInput, AppError> {
    let inp = Inputs::of_form(form);
    let before = |k: &str| previous.and_then(|v| num(v, k));
    let text = |k: &str| form.get(k).map(|s| s.trim().to_string()).unwrap_or_default();
    // A unit-free number; `stored` names the record's field, `percent` when the form shows a share.
    let plain_as = |k: &str, stored: &str, percent: bool| -> Result<Option<f64>, AppError> {
        match form.get(k).map(|s| s.trim()) {
            None | Some("") => Ok(None),
            Some(s) => {
                if let Some(p) = before(stored).filter(|p| plain_shown(*p, percent) == s) {
                    return Ok(Some(p));
                }
                let v = s.replace(',', ".").parse::<f64>().map_err(|_| {
                    AppError::from(crate::app::Error::field(k, format!("{s:?} is not a number")))
                })?;
                Ok(Some(if percent { v / 100.0 } else { v }))
            }
        }
    };
    let plain = |k: &str| plain_as(k, k, false);
    let entry = |k: &str, e: Entry| inp.opt(form, k, e, before(k)).map_err(AppError::from);
    Ok(match kind {
        ItemKind::Dryer => TreatmentInput::Dryer(DryerInput {
            tag: text("tag"),
            kind: text("kind"),
            control: text("control"),
            rated_flow_m3_min: entry("rated_flow_m3_min", Entry::FreeAirFlow)?.unwrap_or(f64::NAN),
            purge_fraction: plain_as("purge_percent", "purge_fraction", true)?,
            power_kw: plain("power_kw")?.unwrap_or(0.0),
        }),
        ItemKind::Filter => TreatmentInput::Filter(FilterInput {
            tag: text("tag"),
            kind: text("kind"),
            rated_flow_m3_min: entry("rated_flow_m3_min", Entry::FreeAirFlow)?.unwrap_or(f64::NAN),
            clean_drop_bar: entry("clean_drop_bar", Entry::PressureDrop)?.unwrap_or(f64::NAN),
            measured_drop_bar: entry("measured_drop_bar", Entry::PressureDrop)?.unwrap_or(f64::NAN),
            element_change_months: plain("element_change_months")?,
            element_cost: plain("element_cost")?,
        }),
        ItemKind::Drain => TreatmentInput::Drain(DrainInput {
            tag: text("tag"),
            kind: text("kind"),
            open_s: plain("open_s")?,
            interval_s: plain("interval_s")?,
            orifice_mm: entry("orifice_mm", Entry::Diameter)?,
            discharge_coefficient: previous.and_then(|v| num(v, "discharge_coefficient")),
        }),
        ItemKind::EndUse => TreatmentInput::EndUse(EndUseInput {
            name: text("name"),
            kind: text("kind"),
            count: plain("count")?.unwrap_or(1.0).round().max(0.0) as u32,
            flow_m3_min: entry("flow_m3_min", Entry::FreeAirFlow)?,
            orifice_mm: entry("orifice_mm", Entry::Diameter)?,
            pressure_bar_g: entry("pressure_bar_g", Entry::GaugePressure)?,
            duty: plain_as("duty_percent", "duty", true)?.unwrap_or(1.0),
            regulated: form.contains_key("regulated"),
            boosted: form.contains_key("boosted"),
            alternative_kw: plain("alternative_kw")?,
        }),
    })
}

/// A stored record's refusals of today ([`OutsideBounds`]), each as the page's refusal says it:
/// the field in words, the value and the bound in the reader's `units`.
pub(super) fn outside_words(o: &OutsideBounds, units: UnitSystem) -> Vec<String> {
    o.refusals
        .iter()
        .map(|e| format!("{}: {}", field_words(e.field), in_reader_units(&e.message, e.field, units)))
        .collect()
}

/// A stored record outside the checks of today in one line for the findings: "Dryer D1: ...".
pub(super) fn outside_line(o: &OutsideBounds, units: UnitSystem) -> String {
    let kind = match o.kind {
        ItemKind::Dryer => "Dryer",
        ItemKind::Drain => "Drain",
        ItemKind::EndUse => "End use",
        ItemKind::Filter => "Filter",
    };
    format!("{kind} {}: {}", o.name, outside_words(o, units).join("; "))
}

/// A record's field in words, for the page's refusal (the API names the code itself).
fn field_words(field: &str) -> String {
    match field {
        "purge_fraction" => "Purge (share of rated flow)".into(),
        "rated_flow_m3_min" => "Rated flow".into(),
        "clean_drop_bar" => "Clean drop".into(),
        "measured_drop_bar" => "Measured drop".into(),
        "orifice_mm" => "Orifice or opening".into(),
        "pressure_bar_g" => "Pressure at the use".into(),
        "flow_m3_min" => "Air per use".into(),
        "power_kw" => "Electrical input".into(),
        "duty" => "Running share of production time".into(),
        "count" => "How many".into(),
        "open_s" => "Open time".into(),
        "interval_s" => "Time between openings".into(),
        "alternative_kw" => "Electric alternative".into(),
        "element_change_months" => "Element change interval".into(),
        other => words(other),
    }
}

/// The unit a record's field is typed in on the page (`None`: a plain number or a word).
fn field_entry(field: &str) -> Option<Entry> {
    match field {
        "rated_flow_m3_min" | "flow_m3_min" => Some(Entry::FreeAirFlow),
        "clean_drop_bar" | "measured_drop_bar" => Some(Entry::PressureDrop),
        "orifice_mm" => Some(Entry::Diameter),
        "pressure_bar_g" => Some(Entry::GaugePressure),
        _ => None,
    }
}

/// A record's refusal (`core::treatment` speaks SI) in the reader's units: the value it quotes
/// (`got 3.175`) and a limit in bar (`at most 10 bar`) in the units the form was typed in.
fn in_reader_units(message: &str, field: &str, units: UnitSystem) -> String {
    let Some(e) = field_entry(field) else { return message.to_string() };
    let mut out = message.to_string();
    if let Some((head, got)) = out.rsplit_once("got ") {
        if let Ok(v) = got.trim().parse::<f64>() {
            out = format!("{head}got {}", e.said(units, v));
        }
    }
    if e == Entry::PressureDrop {
        let max = crate::core::treatment::MAX_FILTER_DROP_BAR;
        out = out.replace(&format!("at most {max} bar"), &format!("at most {}", e.limit(units, max)));
    }
    out
}

/// The form field a record's field is typed in (a share is typed as a percentage).
fn form_field(field: &str) -> &str {
    match field {
        "purge_fraction" => "purge_percent",
        "duty" => "duty_percent",
        other => other,
    }
}

/// Every refusal of a record read from its form, each in words and the units typed, beside the
/// form field it is typed in; `None` when the record passes its checks.
fn every_refusal(
    record: &TreatmentInput,
    plant: &Plant,
    action: &str,
    form: &HashMap<String, String>,
) -> Option<Refusal> {
    let units = plant.units;
    let all: Vec<FieldError> = record
        .refusals(plant)
        .into_iter()
        .map(|e| {
            let message =
                format!("{}: {}", field_words(e.field), in_reader_units(&e.message, e.field, units));
            FieldError::new(form_field(e.field), message)
        })
        .collect();
    (!all.is_empty()).then(|| Refusal::new(action, form, all))
}

/// What a posted record is checked against: the plant's highest pressure, the refusals in the units
/// the form was typed in.
async fn form_plant(st: &AppState, id: i64, form: &HashMap<String, String>) -> Result<Plant, AppError> {
    let plant = st.app.treatment_plant(id).await?;
    Ok(Plant { units: Inputs::of_form(form).units, ..plant })
}

/// The page again with a refused form (every refusal, what was typed), 422.
async fn show_refused(st: &AppState, id: i64, r: Refusal) -> PageResult {
    let mut res = render(&page(st, id, Some(r)).await?);
    *res.status_mut() = StatusCode::UNPROCESSABLE_ENTITY;
    Ok(res)
}

/// The page again with the refusal beside its field and what was typed in the form posted to
/// `action` (`refusal`), 422; other errors as pages.
async fn refused(
    st: &AppState,
    id: i64,
    action: &str,
    form: &HashMap<String, String>,
    e: AppError,
) -> PageResult {
    let units = Inputs::of_form(form).units;
    match e {
        AppError::Unprocessable { message, field, .. } => {
            let (field, message) = match field {
                Some(f) => (
                    form_field(&f).to_string(),
                    format!("{}: {}", field_words(&f), in_reader_units(&message, &f, units)),
                ),
                None => (String::new(), message),
            };
            let r = Refusal::new(action, form, vec![FieldError::new(&field, message)]);
            let mut res = render(&page(st, id, Some(r)).await?);
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
    let action = format!("/audits/{id}/treatment/{list}");
    let result = async {
        let record = input(kind, &form, None)?;
        let plant = form_plant(&st, id, &form).await?;
        if let Some(r) = every_refusal(&record, &plant, &action, &form) {
            return Ok(Err(r));
        }
        st.app.add_treatment_item(id, record).await.map(Ok).map_err(AppError::from)
    }
    .await;
    match result {
        Ok(Ok(_)) => Ok(Redirect::to(&format!("/audits/{id}/treatment")).into_response()),
        Ok(Err(r)) => show_refused(&st, id, r).await,
        Err(e) => refused(&st, id, &action, &form, e).await,
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
        return refused(&st, id, &format!("/audits/{id}/treatment/{list}/{iid}/delete"), &form, e).await;
    }
    if !st.app.delete_treatment_item(id, kind, iid).await? {
        return Err(PageError::from(AppError::NotFound(format!("audit {id} has no such record {iid}"))));
    }
    Ok(Redirect::to(&format!("/audits/{id}/treatment")).into_response())
}

/// An edit form posted: the record replaced through the API's check, its unchanged fields kept to
/// the bit (`input`'s `previous`).
pub async fn update(
    State(st): State<AppState>,
    Path((id, list, iid)): Path<(i64, String, i64)>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let Some(kind) = ItemKind::from_segment(&list) else {
        return Err(PageError::from(AppError::NotFound(format!("no list {list:?}"))));
    };
    let Some(stored) =
        st.app.treatment_items(id, kind).await?.into_iter().find(|v| v["id"].as_i64() == Some(iid))
    else {
        return Err(PageError::from(AppError::NotFound(format!("audit {id} has no such record {iid}"))));
    };
    let action = format!("/audits/{id}/treatment/{list}/{iid}");
    let result = async {
        let record = input(kind, &form, Some(&stored))?;
        let plant = form_plant(&st, id, &form).await?;
        if let Some(r) = every_refusal(&record, &plant, &action, &form) {
            return Ok(Err(r));
        }
        st.app.update_treatment_item(id, iid, record).await.map(Ok).map_err(AppError::from)
    }
    .await;
    match result {
        Ok(Ok(_)) => Ok(Redirect::to(&format!("/audits/{id}/treatment")).into_response()),
        Ok(Err(r)) => show_refused(&st, id, r).await,
        Err(e) => refused(&st, id, &action, &form, e).await,
    }
}
