/*!
What-if scenarios: the logged demand replayed through a changed compressor room (`core::simulate`),
stored with the audit revision they were replayed on.
*/

use crate::core::simulate::{self, Scenario, SimInput};
use crate::store::audits::{self, ScenarioRecord};

use super::{App, Error, Result};

impl App {
    /// The audit's stored scenarios with their results.
    pub async fn scenarios(&self, id: i64) -> Result<Vec<ScenarioRecord>> {
        self.audit(id).await?;
        Ok(audits::scenarios(self.db(), id).await?)
    }

    /// Replay the logged demand through a changed compressor room and store it; returns its id and
    /// result.
    pub async fn add_scenario(&self, id: i64, body: serde_json::Value) -> Result<(i64, serde_json::Value)> {
        let b = self.bundle(id).await?;
        let scenario: Scenario = serde_json::from_value(body.clone()).map_err(|e| Error::Unprocessable {
            message: format!("this scenario cannot be read: {e}"),
            line: None,
            column: None,
            field: Some("changes".into()),
        })?;
        if scenario.name.trim().is_empty() {
            return Err(Error::field("name", "the scenario needs a name"));
        }
        let Some(frame) = self.frame_for(&b, None).await? else {
            return Err(Error::field("changes", "the audit has no logger data to replay yet"));
        };
        // The leak estimate the summary adopted, if any: it is the part of demand that follows pressure.
        let summary = self.summary_json(id, None).await?;
        let leak = summary["leaks"]["adopted_leak_flow_m3_min"].as_f64();
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
        Ok((sid, value))
    }
}
