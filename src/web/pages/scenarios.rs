//! The scenarios page: the stored what-if replays, whether each is offered as the control measure,
//! and the form that adds one (`static/js/scenarios.js`).

use askama::Template;
use axum::extract::{Path, State};
use axum::response::Response;
use serde_json::Value;

use super::view::g;
use super::{render, PageError};
use crate::store::audits::Audit;
use crate::web::AppState;

pub struct ScenarioRow {
    pub id: i64,
    pub name: String,
    pub changes: String,
    pub energy: String,
    pub saving: String,
    pub cost_saving: String,
    pub peak: String,
    pub min_pressure: String,
    pub below: String,
    pub validation: String,
    pub problems: Vec<String>,
    pub cost: String,
    /// Whether it is offered as the `improve_control` measure, and if not, why not.
    pub offer: String,
    pub offered: bool,
}

#[derive(Template)]
#[template(path = "scenarios.html")]
struct ScenariosPage {
    audit: Audit,
    rows: Vec<ScenarioRow>,
    compressors: Vec<String>,
    page_data: Value,
}

pub async fn scenarios(State(st): State<AppState>, Path(id): Path<i64>) -> Result<Response, PageError> {
    let b = st.app.bundle(id).await?;
    let fmt = b.fmt();
    let list = st.app.scenarios(id).await?;
    let cur = b.audit.site.currency.clone();
    let price = b.audit.site.electricity_price_per_kwh;
    let sm = st.app.summary_json(id, None).await?;
    // The replayed period's saving, scaled to the year like the audit's baseline.
    let scale = g(&sm, "baseline.annual_energy_kwh") / g(&sm, "system.energy_kwh");
    let offered_id =
        sm["recommendations"].as_array().and_then(|a| a.iter().find_map(|r| r["scenario_id"].as_i64()));
    let rev = b.audit.revision;
    let rows = list
        .iter()
        .map(|sc| {
            let r = &sc.result;
            let saving = g(r, "energy_saving_kwh");
            let max_v = crate::core::recommend::MAX_SCENARIO_VALIDATION_ERROR;
            let offer = if offered_id == Some(sc.id) {
                "offered as the control measure on the report".to_string()
            } else if sc.revision != rev {
                "replayed on earlier data: replay it again".into()
            } else if r["feasible"] != Value::Bool(true) {
                "not offered: the plant does not hold its pressure".into()
            } else if r["supply_side_only"] != Value::Bool(true) {
                "not offered: set-point and leak changes are measures of their own".into()
            } else if g(r, "validation_error").abs().is_nan() || g(r, "validation_error").abs() > max_v {
                format!("not offered: validation error above {}", fmt.percent(max_v))
            } else if saving.is_nan() || saving <= 0.0 {
                "not offered: it saves no energy".into()
            } else {
                "not offered: another scenario pays back sooner".into()
            };
            ScenarioRow {
                id: sc.id,
                name: sc.name.clone(),
                changes: sc.changes.to_string(),
                energy: fmt.energy_kwh(g(r, "energy_kwh")),
                saving: fmt.energy_kwh(saving),
                cost_saving: if scale.is_finite() {
                    fmt.money(saving * scale * price, &cur)
                } else {
                    "–".into()
                },
                peak: fmt.power_kw(g(r, "peak_power_kw")),
                min_pressure: fmt.pressure_bar_g(g(r, "min_pressure_bar_g")),
                below: fmt.hours(g(r, "time_below_min_required_s") / 3600.0),
                validation: fmt.percent(g(r, "validation_error")),
                problems: r["problems"]
                    .as_array()
                    .map(|a| a.iter().filter_map(|x| x.as_str().map(String::from)).collect())
                    .unwrap_or_default(),
                cost: format!(
                    "{} ({})",
                    fmt.money(g(r, "implementation_cost"), &cur),
                    if r["implementation_cost_source"] == "given" { "quoted" } else { "default estimate" }
                ),
                offered: offered_id == Some(sc.id),
                offer,
            }
        })
        .collect();
    let traces: Vec<Value> = list
        .iter()
        .map(|sc| serde_json::json!({"name": sc.name, "points": sc.result["pressure_trace"]}))
        .collect();
    Ok(render(&ScenariosPage {
        page_data: serde_json::json!({"audit_id": id, "traces": traces}),
        compressors: b.compressors.iter().map(|c| c.tag.clone()).collect(),
        rows,
        audit: b.audit,
    }))
}
