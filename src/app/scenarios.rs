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
    /// `problems` in parts, one for one (none in a result stored before they were kept).
    #[serde(default)]
    pub problem_parts: Vec<Vec<crate::core::recommend::Part>>,
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
    /// result. The body is a [`Scenario`] and may say `"proposal": true` to put it forward as the
    /// control measure (withdrawing any other proposal).
    pub async fn add_scenario(&self, id: i64, mut body: serde_json::Value) -> Result<(i64, SimResult)> {
        let proposal = take_proposal(&mut body)?.unwrap_or(false);
        let r = self.replay(id, body).await?;
        let w = r.write(proposal);
        let sid = audits::add_scenario(self.db(), id, &w).await?;
        Ok((sid, r.result))
    }

    /// Replay a stored scenario again with a new body (`PUT`, the body of its `POST`); without
    /// `proposal` in the body it stays proposed or not as it was.
    pub async fn replace_scenario(
        &self,
        id: i64,
        sid: i64,
        mut body: serde_json::Value,
    ) -> Result<SimResult> {
        let stored = self.scenario(id, sid).await?;
        let proposal = take_proposal(&mut body)?.unwrap_or(stored.proposal);
        let r = self.replay(id, body).await?;
        if !audits::replace_scenario(self.db(), id, sid, &r.write(proposal)).await? {
            return Err(no_scenario(id, sid));
        }
        Ok(r.result)
    }

    /// Rename a scenario or mark it as the proposal (or withdraw it), without replaying it.
    pub async fn edit_scenario(
        &self,
        id: i64,
        sid: i64,
        name: Option<&str>,
        proposal: Option<bool>,
    ) -> Result<()> {
        self.audit(id).await?;
        let name = name.map(str::trim);
        if let Some(n) = name {
            if n.is_empty() || n.chars().count() > 100 {
                return Err(Error::field("name", "the scenario needs a name of 1 to 100 characters"));
            }
        }
        if !audits::edit_scenario(self.db(), id, sid, name, proposal).await? {
            return Err(no_scenario(id, sid));
        }
        Ok(())
    }

    /// Delete a scenario; `false` if the audit has no such scenario.
    pub async fn delete_scenario(&self, id: i64, sid: i64) -> Result<bool> {
        self.audit(id).await?;
        Ok(audits::delete_scenario(self.db(), id, sid).await?)
    }

    /// One stored scenario, or [`Error::NotFound`].
    pub async fn scenario(&self, id: i64, sid: i64) -> Result<ScenarioRecord> {
        self.scenarios(id).await?.into_iter().find(|s| s.id == sid).ok_or_else(|| no_scenario(id, sid))
    }

    /// Check and replay a scenario body against the audit's present data.
    async fn replay(&self, id: i64, body: serde_json::Value) -> Result<Replayed> {
        let b = self.bundle(id).await?;
        let scenario: Scenario =
            crate::site::read_json(body.clone(), "this scenario").map_err(Error::from)?;
        // Checked before anything is read, so a wrong scenario gets its own error first.
        scenario.check_in(b.audit.site.display_units).map_err(|e| Error::field(&e.field, e.message))?;
        scenario
            .check_plant_in(&b.specs(), b.audit.site.display_units)
            .map_err(|e| Error::field(&e.field, e.message))?;
        let Some(frame) = self.frame_for(&b, None).await? else {
            return Err(Error::field(
                "changes",
                "no data to replay: upload a logger file of the plant first",
            ));
        };
        // The leak estimate the summary adopted, if any: it is the part of demand that follows
        // pressure. Read from the (cached) summary; a figure that is not finite counts as none.
        let summary = self.summary(id, None).await?;
        let leak = summary.figures().and_then(|s| s.leaks.adopted_leak_flow_m3_min).filter(|q| q.is_finite());
        let specs = b.specs();
        let storage = b.storage();
        let site = b.audit.site.air();
        let (name, result) = tokio::task::spawn_blocking(move || {
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
            .map(|r| (scenario.name.trim().to_string(), r))
        })
        .await?
        .map_err(|e| Error::field(&e.field, e.message))?;
        let value = serde_json::to_value(&result).map_err(Error::internal)?;
        let changes = body.get("changes").cloned().unwrap_or(serde_json::json!([]));
        Ok(Replayed { name, changes, value, result, revision: b.audit.revision })
    }
}

/// A replay ready to store.
struct Replayed {
    name: String,
    changes: serde_json::Value,
    value: serde_json::Value,
    result: SimResult,
    revision: i64,
}

impl Replayed {
    fn write(&self, proposal: bool) -> audits::ScenarioWrite<'_> {
        audits::ScenarioWrite {
            name: &self.name,
            changes: &self.changes,
            result: &self.value,
            revision: self.revision,
            proposal,
        }
    }
}

fn no_scenario(id: i64, sid: i64) -> Error {
    Error::NotFound(format!("audit {id} has no scenario {sid}"))
}

/// `proposal` taken out of a scenario body (the replay itself does not read it): `None` when absent.
fn take_proposal(body: &mut serde_json::Value) -> Result<Option<bool>> {
    match body.as_object_mut().and_then(|o| o.remove("proposal")) {
        None | Some(serde_json::Value::Null) => Ok(None),
        Some(serde_json::Value::Bool(b)) => Ok(Some(b)),
        Some(other) => Err(Error::field("proposal", format!("proposal must be true or false, got {other}"))),
    }
}
