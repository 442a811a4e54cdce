//! The scenarios page: the stored what-if replays against the baseline (the logged plant replayed
//! with no change), which one is the proposal on the report and why the others are not, the forms
//! that mark the proposal, rename and delete one (plain forms), and the form that adds or edits one
//! (`static/js/scenarios.js`, `?edit=ID` fills it with a stored scenario).

use std::collections::HashMap;

use askama::Template;
use axum::extract::{Path, Query, State};
use axum::response::{IntoResponse, Redirect, Response};
use axum::Form;
use serde::Deserialize;
use serde_json::Value;

use super::inputs::Inputs;
use super::view::nan;
use super::{render, PageError, PageResult};
use crate::app::scenarios::{may_propose, ScenarioOutcome};
use crate::core::analysis::Verdict;
use crate::core::display::{hours_minutes, EnergyUnit, Fmt};
use crate::core::recommend::{replayed_annual_saving_kwh, MAX_SCENARIO_VALIDATION_ERROR};
use crate::store::audits::Audit;
use crate::web::error::AppError;
use crate::web::AppState;

/// A scenario's changes in words, in the reader's units.
fn changes_in_words(changes: &Value, fmt: &Fmt) -> String {
    let Some(list) = changes.as_array().filter(|l| !l.is_empty()) else {
        return "no change: the baseline".into();
    };
    let num = |c: &Value, k: &str| c.get(k).and_then(Value::as_f64).unwrap_or(f64::NAN);
    let text = |c: &Value, k: &str| c.get(k).and_then(Value::as_str).unwrap_or("").to_string();
    list.iter()
        .map(|c| match c.get("op").and_then(Value::as_str).unwrap_or("") {
            "remove" => format!("without {}", text(c, "tag")),
            "add" => {
                let m = c.get("compressor").cloned().unwrap_or_default();
                format!(
                    "add {} ({}, {}, {} at {})",
                    text(&m, "tag"),
                    text(&m, "control").replace('_', " "),
                    fmt.power_kw(num(&m, "rated_power_kw")),
                    fmt.flow_m3_min(num(&m, "rated_flow_m3_min")),
                    fmt.pressure_bar_g(num(&m, "rated_pressure_bar_g"))
                )
            }
            "set_pressure" => format!("header pressure {}", fmt.pressure_bar_g(num(c, "target_bar_g"))),
            "add_storage" => format!("{} more storage", fmt.volume_m3(num(c, "volume_m3"))),
            "reduce_leaks" => format!("leaks reduced by {}", fmt.percent(num(c, "fraction"))),
            "sequence" => {
                let order: Vec<&str> = c
                    .get("order")
                    .and_then(Value::as_array)
                    .map_or(vec![], |o| o.iter().filter_map(Value::as_str).collect());
                format!("sequence {}", order.join(" \u{2192} "))
            }
            other => other.replace('_', " "),
        })
        .collect::<Vec<_>>()
        .join("; ")
}

#[derive(Deserialize, Default)]
pub struct ScenariosQuery {
    /// A stored scenario to fill the form with.
    edit: Option<i64>,
}

pub struct ScenarioRow {
    pub id: i64,
    pub name: String,
    pub changes: String,
    pub energy: String,
    pub saving: String,
    pub cost_saving: String,
    /// The cost over the cost saving a year (the report's payback alone).
    pub payback: String,
    pub peak: String,
    pub min_pressure: String,
    pub below: String,
    pub validation: String,
    pub problems: Vec<String>,
    /// What the replay left out of the logged data and why.
    pub notes: Vec<String>,
    /// Why there was no demand to replay ("no demand to replay: ..."): its figures are dashes.
    pub no_demand: Option<String>,
    pub cost: String,
    /// Where the cost is from: "quoted" or "default estimate".
    pub cost_source: &'static str,
    /// The cost saving is words ("none: ..."), not a figure.
    pub cost_saving_is_text: bool,
    /// Whether it is offered as the `improve_control` measure, and if not, why not.
    pub offer: String,
    pub offered: bool,
    pub proposal: bool,
    /// It may be marked as the proposal (`app::scenarios::may_propose`): not the baseline, not a
    /// plant short of air.
    pub may_propose: bool,
    /// Replayed on earlier data (the audit changed since): offered a replay as it stands.
    pub stale: bool,
}

#[derive(Template)]
#[template(path = "scenarios.html")]
struct ScenariosPage {
    audit: Audit,
    rows: Vec<ScenarioRow>,
    compressors: Vec<String>,
    page_data: Value,
    inp: Inputs,
    has_data: bool,
    /// Said above the table when the logged data are not enough for annual figures.
    insufficient: Option<String>,
    /// Said instead of the pressure chart when no replay has two points to draw.
    no_trace: Option<String>,
    editing: Option<String>,
    /// The target pressure's floor in the reader's units: the plant's low limit, else 0 gauge
    /// (`Scenario::check_plant_in`).
    target_min: String,
    /// The one unit of the energy column.
    energy_unit: &'static str,
    /// The one unit of the saving column, set by its least saving (`EnergyUnit::for_differences`).
    saving_unit: &'static str,
    /// The replayed period's length (the energy columns' time base), e.g. "168 h"; "period" when
    /// no replay has demand, so that no heading reads "over the – replayed".
    period: String,
    /// Whether `period` is a length (a replay with demand exists).
    period_known: bool,
    /// What the yearly columns are: the replayed share applied to the plant's annual energy, or why
    /// they are not given (the annual energy withheld).
    annual_basis: String,
    /// What was just done (`flash`).
    done: Option<String>,
}

pub async fn scenarios(
    State(st): State<AppState>,
    Path(id): Path<i64>,
    Query(q): Query<ScenariosQuery>,
    Query(d): Query<super::flash::DoneQuery>,
) -> Result<Response, PageError> {
    let b = st.app.bundle(id).await?;
    let fmt = b.fmt();
    let list = st.app.scenarios(id).await?;
    let cur = b.audit.site.currency.clone();
    let price = b.audit.site.electricity_price_per_kwh;
    let sm = st.app.summary(id, None).await?;
    let sm = sm.figures();
    // The replayed period's saving over a year: its share of the baseline replay times the
    // plant's annual energy, the rule of the report's saving alone (`replayed_annual_saving_kwh`).
    let annual_kwh = sm.map_or(f64::NAN, |s| nan(s.baseline.annual_energy_kwh));
    let offered = sm.and_then(|s| s.recommendations.iter().find(|r| r.scenario_id.is_some()));
    let offered_id = offered.and_then(|r| r.scenario_id);
    // The verdict stands before the replays as before any annual figure (`analysis::sufficiency`).
    let insufficient = sm.is_some_and(|s| s.sufficiency.verdict == Verdict::Insufficient);
    let rev = b.audit.revision;
    let outcomes: Vec<ScenarioOutcome> = list.iter().map(ScenarioOutcome::of).collect();
    // One unit for each energy column, whatever the rows' sizes: the savings' by the least of them
    // (a difference of 72 kWh must not read "0.1" because another replay's energy passed 10 MWh).
    let energy_unit = EnergyUnit::for_column(outcomes.iter().map(|r| nan(r.energy_kwh)));
    let saving_unit = EnergyUnit::for_differences(outcomes.iter().map(|r| nan(r.energy_saving_kwh)));
    let rows = list
        .iter()
        .zip(&outcomes)
        .map(|(sc, r)| {
            let saving = nan(r.energy_saving_kwh);
            let validation_error = nan(r.validation_error);
            let max_v = MAX_SCENARIO_VALIDATION_ERROR;
            let may_propose = may_propose(&sc.changes, r.feasible, r.no_demand_reason.as_deref()).is_ok();
            let baseline = sc.changes.as_array().is_none_or(Vec::is_empty);
            let no_demand = r.no_demand_reason.clone();
            let offer = if offered_id == Some(sc.id) {
                "the proposal: on the report as the control measure".to_string()
            } else if baseline {
                "the baseline: every saving here is measured against it; it is not a measure".into()
            } else if no_demand.is_some() {
                "not offered: there is no demand to replay".into()
            } else if insufficient {
                // Before any judgement of the replay itself: on such data no replay is a measure.
                "not offered: the logged data are not enough for annual figures".into()
            } else if r.feasible == Some(false) {
                "not offered: the plant does not hold its pressure, so it cannot be the proposal".into()
            } else if sc.revision != rev {
                "replayed on earlier data: replay it again".into()
            } else if r.simulated_hours.is_none_or(|h| h.is_nan() || h <= 0.0) {
                "no data to replay".into()
            } else if !sc.proposal {
                "not proposed: mark it as the proposal to put it on the report".into()
            } else if r.feasible != Some(true) {
                "not offered: the replay does not say whether the plant holds its pressure".into()
            } else if r.supply_side_only != Some(true) {
                "not offered: set-point and leak changes are measures of their own".into()
            } else if validation_error.is_nan() {
                "not offered: no logged power to check the replay against".into()
            } else if validation_error.abs() > max_v {
                format!("not offered: validation error above {}", fmt.percent(max_v))
            } else if saving.is_nan() || saving <= 0.0 {
                "not offered: it saves no energy".into()
            } else {
                "not offered: the estimate by rule pays back sooner".into()
            };
            let cost = nan(r.implementation_cost);
            // The offered row reads the report's own figures, so the two pages agree to the cent.
            let (year_saving, payback) = match offered.filter(|o| o.scenario_id == Some(sc.id)) {
                Some(o) => (o.standalone_annual_cost_saving, nan(o.standalone_simple_payback_years)),
                None => {
                    let y =
                        replayed_annual_saving_kwh(saving, nan(r.baseline_energy_kwh), annual_kwh) * price;
                    (y, if y > 0.0 { cost / y } else { f64::INFINITY })
                }
            };
            ScenarioRow {
                id: sc.id,
                name: sc.name.clone(),
                changes: changes_in_words(&sc.changes, &fmt),
                // No demand to replay: said in words, never a plant that never loaded (0 kWh).
                energy: match &no_demand {
                    Some(_) => "no demand to replay".into(),
                    None => energy_unit.number(nan(r.energy_kwh)),
                },
                saving: saving_unit.number(saving),
                cost_saving_is_text: r.feasible == Some(false) && no_demand.is_none(),
                // A plant that does not hold its pressure delivers less air than the log asked of
                // it: its lower energy is no saving, and it is not priced as one.
                cost_saving: if baseline || no_demand.is_some() {
                    "–".into()
                } else if r.feasible == Some(false) {
                    "none: the plant falls short of its demand".into()
                } else if year_saving.is_finite() {
                    fmt.money(year_saving, &cur)
                } else {
                    "–".into()
                },
                payback: if baseline || no_demand.is_some() {
                    "–".into()
                } else if r.feasible == Some(false) {
                    "none".into()
                } else if payback.is_nan() {
                    "–".into()
                } else {
                    fmt.years(payback)
                },
                peak: fmt.power_kw(nan(r.peak_power_kw)),
                min_pressure: fmt.pressure_bar_g(nan(r.min_pressure_bar_g)),
                below: hours_minutes(nan(r.time_below_min_required_s)),
                validation: fmt.percent(validation_error),
                problems: if r.problem_parts.len() == r.problems.len() {
                    r.problem_parts.iter().map(|p| crate::core::display::render_parts(p, &fmt)).collect()
                } else {
                    r.problems.clone()
                },
                notes: r.note_parts.iter().map(|p| crate::core::display::render_parts(p, &fmt)).collect(),
                cost: if baseline { "none".into() } else { fmt.money(cost, &cur) },
                cost_source: if baseline {
                    "no change"
                } else if r.implementation_cost_source.as_deref() == Some("given") {
                    "quoted"
                } else {
                    "default estimate"
                },
                // As a sentence: "No demand to replay: ...".
                no_demand: no_demand.map(|w| {
                    let mut c = w.chars();
                    c.next().map_or(String::new(), |f| f.to_uppercase().chain(c).collect::<String>() + ".")
                }),
                offered: offered_id == Some(sc.id),
                proposal: sc.proposal,
                may_propose,
                stale: sc.revision != rev,
                offer,
            }
        })
        .collect();
    let traces: Vec<Value> = list
        .iter()
        .zip(&outcomes)
        .map(|(sc, r)| serde_json::json!({"name": sc.name, "points": r.pressure_trace}))
        .collect();
    // A line needs two points: a replay of one time step (or none) draws nothing, and says so.
    let drawable = outcomes.iter().any(|r| r.pressure_trace.as_array().is_some_and(|p| p.len() >= 2));
    let no_trace = (!drawable && !outcomes.is_empty()).then(|| {
        if outcomes.iter().all(|r| r.no_demand_reason.is_some()) {
            return "No pressure to draw: there is no demand to replay (why is said under each replay)."
                .into();
        }
        let hours =
            outcomes.iter().filter_map(|r| r.simulated_hours).filter(|h| h.is_finite()).fold(0.0, f64::max);
        format!(
            "No pressure to draw: no replay covers two time steps of the log (the longest replays {}).",
            fmt.hours(hours)
        )
    });
    // The scenario to edit, as the form reads it back.
    let edit = q.edit.and_then(|e| list.iter().find(|s| s.id == e)).map(|s| {
        let r = ScenarioOutcome::of(s);
        let quoted = (r.implementation_cost_source.as_deref() == Some("given"))
            .then_some(r.implementation_cost)
            .flatten();
        serde_json::json!({"id": s.id, "name": s.name, "changes": s.changes, "implementation_cost": quoted})
    });
    let editing = q.edit.and_then(|e| list.iter().find(|s| s.id == e)).map(|s| s.name.clone());
    // The longest replay with demand: the energy columns' time base.
    let period_hours = outcomes
        .iter()
        .filter(|r| r.no_demand_reason.is_none())
        .filter_map(|r| r.simulated_hours)
        .fold(None, |m: Option<f64>, h| Some(m.map_or(h, |m| m.max(h))));
    Ok(render(&ScenariosPage {
        page_data: serde_json::json!({"audit_id": id, "traces": traces, "edit": edit,
            "entry": Inputs::new(fmt.units).page_data(), "timezone": b.audit.site.timezone}),
        inp: Inputs::new(fmt.units),
        has_data: !b.uploads.is_empty(),
        insufficient: insufficient.then(|| {
            "The logged data are not enough for annual figures (the report says why): a replay shows how \
             the plant would run through these readings, and none is offered as a measure."
                .to_string()
        }),
        no_trace,
        editing,
        target_min: crate::core::entry::Entry::GaugePressure
            .min_text(fmt.units, crate::core::model::low_limit_bar_g(&b.specs()).unwrap_or(0.0).max(0.0)),
        energy_unit: energy_unit.label(),
        saving_unit: saving_unit.label(),
        period_known: period_hours.is_some(),
        period: period_hours.map_or("period".into(), |h| fmt.hours(h)),
        annual_basis: if annual_kwh.is_finite() {
            format!(
                "The cost saving and payback are a year's: the share a replay saves of the baseline replay, \
                 applied to the plant's {} a year, as the report's saving alone.",
                fmt.energy_kwh(annual_kwh)
            )
        } else {
            format!(
                "The cost saving and payback would be a year's, the share a replay saves applied to the plant's \
                 annual energy; {}, so they are not given.",
                sm.and_then(|s| s.sufficiency.withheld.iter().find(|w| w.figure == "baseline"))
                    .map_or("the plant's annual energy is not known yet".to_string(), |w| format!(
                        "the logged data cannot support the annual energy ({})",
                        w.reason.trim_start_matches("not enough data: ")
                    ))
            )
        },
        done: super::flash::Done::message(&d),
        compressors: b.compressors.iter().map(|c| c.spec.tag.clone()).collect(),
        rows,
        audit: b.audit,
    }))
}

/// `POST /audits/{id}/scenarios/{sid}/proposal` with `proposal` = `1` (mark it) or `0` (withdraw).
pub async fn set_proposal(
    State(st): State<AppState>,
    Path((id, sid)): Path<(i64, i64)>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let on = form.get("proposal").map(String::as_str) == Some("1");
    st.app.edit_scenario(id, sid, None, Some(on)).await?;
    Ok(Redirect::to(&format!("/audits/{id}/scenarios")).into_response())
}

/// `POST /audits/{id}/scenarios/{sid}/replay`: replay a stored scenario again, as it stands, on the
/// audit's present data (after any later change made it a replay of earlier data); a proposal
/// stays the proposal when it still may be one.
pub async fn replay(State(st): State<AppState>, Path((id, sid)): Path<(i64, i64)>) -> PageResult {
    let sc = st.app.scenario(id, sid).await?;
    let body = serde_json::json!({"name": sc.name, "changes": sc.changes});
    st.app.replace_scenario(id, sid, body).await?;
    Ok(Redirect::to(&format!("/audits/{id}/scenarios#scenario-table")).into_response())
}

/// `POST /audits/{id}/scenarios/{sid}/rename` with `name`.
pub async fn rename(
    State(st): State<AppState>,
    Path((id, sid)): Path<(i64, i64)>,
    Form(form): Form<HashMap<String, String>>,
) -> PageResult {
    let name = form.get("name").map(String::as_str).unwrap_or("");
    st.app.edit_scenario(id, sid, Some(name), None).await.map_err(AppError::from)?;
    let done = super::flash::Done { kind: "scenario-renamed", what: name.trim().to_string() };
    Ok(Redirect::to(&format!("/audits/{id}/scenarios?{}", done.query())).into_response())
}
