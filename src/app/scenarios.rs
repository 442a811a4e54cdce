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
    /// What the replay left out of the logged data and why (`SimResult::note_parts`).
    #[serde(default)]
    pub note_parts: Vec<Vec<crate::core::recommend::Part>>,
    pub implementation_cost: Option<f64>,
    /// `given` or `default_estimate`.
    pub implementation_cost_source: Option<String>,
    /// `[t_ms, bar_g]` pairs, passed on to the page's chart as they are.
    #[serde(default)]
    pub pressure_trace: serde_json::Value,
    /// Why there was no demand to replay (`SimResult::no_demand_reason`): the figures are `null`.
    #[serde(default)]
    pub no_demand_reason: Option<String>,
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
        if proposal {
            may_propose(&r.changes, Some(r.result.feasible), r.result.no_demand_reason.as_deref())?;
        }
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
        let asked = take_proposal(&mut body)?;
        let r = self.replay(id, body).await?;
        let may = may_propose(&r.changes, Some(r.result.feasible), r.result.no_demand_reason.as_deref());
        // Asked for, a replay that cannot be the proposal is refused; kept from before, it is
        // withdrawn (the page says why it is not on the report).
        let proposal = match asked {
            Some(true) => may.map(|_| true)?,
            Some(false) => false,
            None => stored.proposal && may.is_ok(),
        };
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
        if proposal == Some(true) {
            let stored = self.scenario(id, sid).await?;
            let r = ScenarioOutcome::of(&stored);
            may_propose(&stored.changes, r.feasible, r.no_demand_reason.as_deref())?;
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

    /// The name of the proposal when it was replayed before the audit's last change: it is left out
    /// of the report's ranking (`scenario_cases`) until it is replayed, and the pages say so.
    pub async fn stale_proposal(&self, id: i64, revision: i64) -> Result<Option<String>> {
        Ok(self
            .scenarios(id)
            .await?
            .into_iter()
            .find(|s| s.proposal && s.revision != revision)
            .map(|s| s.name))
    }

    /// One stored scenario, or [`Error::NotFound`].
    pub async fn scenario(&self, id: i64, sid: i64) -> Result<ScenarioRecord> {
        self.scenarios(id).await?.into_iter().find(|s| s.id == sid).ok_or_else(|| no_scenario(id, sid))
    }

    /// Check and replay a scenario body against the audit's present data.
    async fn replay(&self, id: i64, body: serde_json::Value) -> Result<Replayed> {
        let b = self.bundle(id).await?;
        let scenario: Scenario = crate::site::read_json(body.clone(), "this scenario").map_err(|e| {
            let serde = e.message.split_once(&format!("{}: ", e.field)).map_or("", |(_, m)| m);
            Error::field(
                &e.field,
                format!("this scenario cannot be read: {}", field_in_words(&e.field, &body, serde)),
            )
        })?;
        // Checked before anything is read, so a wrong scenario gets its own error first.
        // Every refusal at once, each naming its field.
        let all = scenario.refusals_in(&b.specs(), b.audit.site.display_units);
        if !all.is_empty() {
            return Err(Error::fields(
                all.into_iter().map(|e| crate::site::FieldError::new(&e.field, e.message)).collect(),
            ));
        }
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
        // A pressure log the sufficiency verdict found not credible is not replayed against.
        let pressure_credible =
            summary.figures().and_then(|s| s.sufficiency.pressure_credible) != Some(false);
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
                    pressure_credible,
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

/// Whether a replay may be marked as the proposal: not the baseline (no change: it is what every
/// measure is measured against), not a replay without demand (`no_demand`: why there was none)
/// and not a plant that falls short of its demand.
pub fn may_propose(
    changes: &serde_json::Value,
    feasible: Option<bool>,
    no_demand: Option<&str>,
) -> Result<()> {
    if changes.as_array().is_none_or(Vec::is_empty) {
        return Err(Error::field(
            "proposal",
            "the baseline replays the plant as it is: every saving is measured against it, so it is not a \
             measure and cannot be the proposal",
        ));
    }
    if let Some(why) = no_demand {
        return Err(Error::field(
            "proposal",
            format!("{why}: this replay shows nothing of the plant, so it cannot be the proposal"),
        ));
    }
    if feasible == Some(false) {
        return Err(Error::field(
            "proposal",
            "this replay's plant does not hold its pressure (it falls short of its demand), so it cannot be \
             the proposal: change the room until it does",
        ));
    }
    Ok(())
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

/// A scenario body's field path as serde names it (`changes[2].compressor.power_curve[0][0]`), in
/// words with what it should hold and what the body holds there: "change 3 (add a compressor), the
/// added compressor's speed curve, point 1: each point is two numbers, flow and power; got nothing".
fn field_in_words(path: &str, body: &serde_json::Value, serde: &str) -> String {
    // The path's steps: object keys and array indexes.
    let mut steps: Vec<Result<usize, &str>> = Vec::new();
    for part in path.split('.') {
        let mut pieces = part.split('[');
        if let Some(key) = pieces.next().filter(|k| !k.is_empty()) {
            steps.push(Err(key));
        }
        for ix in pieces {
            match ix.trim_end_matches(']').parse() {
                Ok(i) => steps.push(Ok(i)),
                Err(_) => return format!("{path}: {serde}"),
            }
        }
    }
    let mut at = Some(body);
    let mut words: Vec<String> = Vec::new();
    let mut expect: Option<&str> = None;
    let mut prev: Option<&str> = None;
    for step in &steps {
        match *step {
            Ok(i) if prev == Some("changes") => {
                let op = at.and_then(|v| v.get(i)).and_then(|c| c.get("op")).and_then(|o| o.as_str());
                let what = match op {
                    Some("add") => " (add a compressor)",
                    Some("remove") => " (remove a compressor)",
                    Some("set_pressure") => " (target header pressure)",
                    Some("add_storage") => " (add storage)",
                    Some("reduce_leaks") => " (reduce leaks)",
                    Some("sequence") => " (sequence)",
                    _ => "",
                };
                words.push(format!("change {}{what}", i + 1));
            }
            Ok(i) if prev == Some("power_curve") => {
                words.push(format!("point {}", i + 1));
                expect = Some("each point is two numbers, flow and power");
            }
            Ok(i) if prev == Some("order") => words.push(format!("tag {}", i + 1)),
            Ok(_) => {}
            Err(key) => {
                let (w, e) = match key {
                    "changes" => ("", None),
                    "compressor" => ("", None),
                    "name" => ("the name", Some("a name")),
                    "implementation_cost" => ("the installed cost", Some("a number")),
                    "op" => ("the kind of change", None),
                    "tag" => ("the tag", Some("a tag")),
                    "power_curve" => {
                        ("speed curve", Some("a list of points, each two numbers, flow and power"))
                    }
                    "rated_power_kw" => ("rated power", Some("a number")),
                    "rated_flow_m3_min" => ("free air delivery", Some("a number")),
                    "rated_pressure_bar_g" => ("rated pressure", Some("a number")),
                    "target_bar_g" => ("the target pressure", Some("a number")),
                    "volume_m3" => ("the added storage", Some("a number")),
                    "fraction" => ("the leak reduction", Some("a number from 0 to 1")),
                    "order" => ("the sequence", Some("a list of tags")),
                    other => (other, None),
                };
                if !w.is_empty() {
                    let inside = prev == Some("compressor") || steps.first() == Some(&Err("compressor"));
                    words.push(if inside { format!("the added compressor's {w}") } else { w.to_string() });
                }
                expect = e;
            }
        }
        prev = (*step).err();
        at = at.and_then(|v| match *step {
            Ok(i) => v.get(i),
            Err(k) => v.get(k),
        });
    }
    let got = match at {
        None | Some(serde_json::Value::Null) => "nothing (empty, or not a number)".to_string(),
        Some(serde_json::Value::String(t)) => format!("\u{201c}{t}\u{201d}"),
        Some(v) => v.to_string(),
    };
    let place = if words.is_empty() { path.to_string() } else { words.join(", ") };
    match expect {
        Some(e) => format!("{place}: {e}; got {got}"),
        None => format!("{place}: {serde}"),
    }
}

#[cfg(test)]
mod words_tests {
    use super::field_in_words;
    use serde_json::json;

    #[test]
    fn a_speed_curve_point_is_named_in_words() {
        let body = json!({"name": "x", "changes": [{"op": "remove", "tag": "C1"}, {"op": "reduce_leaks", "fraction": 0.2},
            {"op": "add", "compressor": {"tag": "V9", "power_curve": [[null, 15.0]]}}]});
        let w = field_in_words(
            "changes[2].compressor.power_curve[0][0]",
            &body,
            "invalid type: null, expected f64",
        );
        assert_eq!(
            w,
            "change 3 (add a compressor), the added compressor's speed curve, point 1: each point is two \
             numbers, flow and power; got nothing (empty, or not a number)"
        );
        let w = field_in_words(
            "changes[1].fraction",
            &json!({"changes": [{}, {"op": "reduce_leaks", "fraction": "half"}]}),
            "",
        );
        assert_eq!(
            w,
            "change 2 (reduce leaks), the leak reduction: a number from 0 to 1; got \u{201c}half\u{201d}"
        );
    }
}
