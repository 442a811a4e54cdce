/*!
What-if scenarios: the logged demand replayed through a changed compressor room (`core::simulate`),
stored with the audit revision they were replayed on.
*/

use serde::Deserialize;

use crate::core::simulate::{self, Scenario, SimInput, SimResult};
use crate::store::audits::{self, ScenarioRecord};

use super::{App, Error, Result};

/// A stored scenario's result as the application reads it back: the figures of
/// `core::simulate::SimResult` it uses, each `None` where the stored JSON has none (a figure that
/// was not a finite number is stored as `null`).
#[derive(Debug, Clone, Default, Deserialize)]
pub struct ScenarioOutcome {
    pub energy_kwh: Option<f64>,
    pub peak_power_kw: Option<f64>,
    pub min_pressure_bar_g: Option<f64>,
    pub time_below_min_required_s: Option<f64>,
    pub validation_error: Option<f64>,
    pub baseline_energy_kwh: Option<f64>,
    pub energy_saving_kwh: Option<f64>,
    pub simulated_hours: Option<f64>,
    pub feasible: Option<bool>,
    pub supply_side_only: Option<bool>,
    #[serde(default)]
    pub problems: Vec<String>,
    pub implementation_cost: Option<f64>,
    /// `given` or `default_estimate`.
    pub implementation_cost_source: Option<String>,
    /// `[t_ms, bar_g]` pairs, passed on to the page's chart as they are.
    #[serde(default)]
    pub pressure_trace: serde_json::Value,
}

impl ScenarioOutcome {
    /// The record's result; an unreadable one reads as no figures at all.
    pub fn of(rec: &ScenarioRecord) -> Self {
        Self::deserialize(&rec.result).unwrap_or_default()
    }
}

impl App {
    /// The audit's stored scenarios with their results.
    pub async fn scenarios(&self, id: i64) -> Result<Vec<ScenarioRecord>> {
        self.audit(id).await?;
        Ok(audits::scenarios(self.db(), id).await?)
    }

    /// Replay the logged demand through a changed compressor room and store it; returns its id and
    /// result.
    pub async fn add_scenario(&self, id: i64, body: serde_json::Value) -> Result<(i64, SimResult)> {
        let b = self.bundle(id).await?;
        let scenario: Scenario =
            crate::site::read_json(body.clone(), "this scenario").map_err(Error::from)?;
        // Checked before anything is read, so a wrong scenario gets its own error first.
        scenario.check().map_err(|e| Error::field(&e.field, e.message))?;
        let Some(frame) = self.frame_for(&b, None).await? else {
            return Err(Error::field("changes", "the audit has no logger data to replay yet"));
        };
        // The leak estimate the summary adopted, if any: it is the part of demand that follows
        // pressure. Read from the (cached) summary; a figure that is not finite counts as none.
        let summary = self.summary(id, None).await?;
        let leak = summary.figures().and_then(|s| s.leaks.adopted_leak_flow_m3_min).filter(|q| q.is_finite());
        let specs = b.specs();
        let storage = b.storage();
        let site = b.audit.site.air();
        let (name, r) = tokio::task::spawn_blocking(move || {
            simulate::run(
                &SimInput {
                    frame: &frame,
                    compressors: &specs,
                    storage: &storage,
                    site: &site,
                    leak_flow_m3_min: leak,
                },
                &scenario,
            )
            .map(|r| (scenario.name.clone(), r))
        })
        .await?
        .map_err(|e| Error::field(&e.field, e.message))?;
        let value = serde_json::to_value(&r).map_err(Error::internal)?;
        let changes = body.get("changes").cloned().unwrap_or(serde_json::json!([]));
        let sid = audits::add_scenario(self.db(), id, &name, &changes, &value, b.audit.revision).await?;
        Ok((sid, r))
    }
}
