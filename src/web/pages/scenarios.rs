//! The scenarios page: the stored what-if replays, whether each is offered as the control measure,
//! and the form that adds one (`static/js/scenarios.js`).

use askama::Template;
use axum::extract::{Path, State};
use axum::response::Response;
use serde_json::Value;

use super::view::nan;
use super::{render, PageError};
use crate::app::scenarios::ScenarioOutcome;
use crate::core::recommend::MAX_SCENARIO_VALIDATION_ERROR;
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
    let sm = st.app.summary(id, None).await?;
    let sm = sm.figures();
    // The replayed period's saving, scaled to the year like the audit's baseline.
    let scale = sm.map_or(f64::NAN, |s| s.baseline.annual_energy_kwh / s.system.energy_kwh);
    let offered_id = sm.and_then(|s| s.recommendations.iter().find_map(|r| r.scenario_id));
    let rev = b.audit.revision;
    let outcomes: Vec<ScenarioOutcome> = list.iter().map(ScenarioOutcome::of).collect();
    let rows = list
        .iter()
        .zip(&outcomes)
        .map(|(sc, r)| {
            let saving = nan(r.energy_saving_kwh);
            let validation_error = nan(r.validation_error);
            let max_v = MAX_SCENARIO_VALIDATION_ERROR;
            let offer = if offered_id == Some(sc.id) {
                "offered as the control measure on the report".to_string()
            } else if sc.revision != rev {
                "replayed on earlier data: replay it again".into()
            } else if r.feasible != Some(true) {
                "not offered: the plant does not hold its pressure".into()
            } else if r.supply_side_only != Some(true) {
                "not offered: set-point and leak changes are measures of their own".into()
            } else if validation_error.abs().is_nan() || validation_error.abs() > max_v {
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
                energy: fmt.energy_kwh(nan(r.energy_kwh)),
                saving: fmt.energy_kwh(saving),
                cost_saving: if scale.is_finite() {
                    fmt.money(saving * scale * price, &cur)
                } else {
                    "–".into()
                },
                peak: fmt.power_kw(nan(r.peak_power_kw)),
                min_pressure: fmt.pressure_bar_g(nan(r.min_pressure_bar_g)),
                below: fmt.hours(nan(r.time_below_min_required_s) / 3600.0),
                validation: fmt.percent(validation_error),
                problems: r.problems.clone(),
                cost: format!(
                    "{} ({})",
                    fmt.money(nan(r.implementation_cost), &cur),
                    if r.implementation_cost_source.as_deref() == Some("given") {
                        "quoted"
                    } else {
                        "default estimate"
                    }
                ),
                offered: offered_id == Some(sc.id),
                offer,
            }
        })
        .collect();
    let traces: Vec<Value> = list
        .iter()
        .zip(&outcomes)
        .map(|(sc, r)| serde_json::json!({"name": sc.name, "points": r.pressure_trace}))
        .collect();
    Ok(render(&ScenariosPage {
        page_data: serde_json::json!({"audit_id": id, "traces": traces}),
        compressors: b.compressors.iter().map(|c| c.spec.tag.clone()).collect(),
        rows,
        audit: b.audit,
    }))
}
