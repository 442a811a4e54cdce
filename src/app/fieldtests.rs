/*!
Field tests (bleed-down, load/unload, idle flow, pressure decay) evaluated by `core::fieldtest` and
stored with their result, and the windows of pressure decay in the logs proposed as tests.
*/

use serde::Deserialize;

use crate::core::analysis::{self, DecayEvent};
use crate::core::fieldtest::{self, FieldTestContext, FieldTestInput, FieldTestResult};
use crate::store::audits::{self, FieldTestRecord};

use super::{App, Error, Result};

/// A stored test's result, typed; `None` if it cannot be read as one (not written by this build's
/// rules).
pub fn result_of(t: &FieldTestRecord) -> Option<FieldTestResult> {
    FieldTestResult::deserialize(&t.result).ok()
}

fn no_test(id: i64, tid: i64) -> Error {
    Error::NotFound(format!("audit {id} has no field test {tid}"))
}

fn test_error(e: fieldtest::FieldError) -> Error {
    Error::field(&e.field, e.message)
}

impl App {
    /// Evaluate and store a field test; returns the stored record.
    pub async fn add_field_test(&self, id: i64, body: serde_json::Value) -> Result<FieldTestRecord> {
        let (method, result) = self.evaluate_field_test(id, &body).await?;
        let tid = audits::add_field_test(self.db(), id, method, &body, &result).await?;
        self.field_test(id, tid).await
    }

    /// Evaluate a field test again with a new body (`PUT`, the body of its `POST`) in place of the
    /// stored one; returns the stored record.
    pub async fn replace_field_test(
        &self,
        id: i64,
        tid: i64,
        body: serde_json::Value,
    ) -> Result<FieldTestRecord> {
        self.field_test(id, tid).await?;
        let (method, result) = self.evaluate_field_test(id, &body).await?;
        if !audits::replace_field_test(self.db(), id, tid, method, &body, &result).await? {
            return Err(no_test(id, tid));
        }
        self.field_test(id, tid).await
    }

    /// One stored field test, or [`Error::NotFound`].
    pub async fn field_test(&self, id: i64, tid: i64) -> Result<FieldTestRecord> {
        self.audit(id).await?;
        let rec = audits::field_tests(self.db(), id).await?.into_iter().find(|t| t.id == tid);
        rec.ok_or_else(|| no_test(id, tid))
    }

    /// A field test's method and result, evaluated on the audit's present data.
    async fn evaluate_field_test(
        &self,
        id: i64,
        body: &serde_json::Value,
    ) -> Result<(&'static str, serde_json::Value)> {
        let b = self.bundle(id).await?;
        self.evaluate_on(&b, body).await
    }

    /// Every stored test evaluated again from its stored input (what was measured) on the audit as
    /// it is now, after an edit of what a test reads (the site's air, the compressors, the system
    /// volume): a bleed-down's free air follows the site's atmosphere and inlet temperature. The
    /// results that changed are stored in one transaction; a test that no longer evaluates (its
    /// compressor removed) keeps the result it had.
    pub(crate) async fn rederive_field_tests(&self, id: i64) -> Result<usize> {
        let b = self.bundle(id).await?;
        let mut changed = Vec::new();
        for t in &b.field_tests {
            match self.evaluate_on(&b, &t.input).await {
                Ok((_, result)) if result != t.result => changed.push((t.id, result)),
                Ok(_) => {}
                Err(e) => tracing::info!(audit_id = id, test = t.id, error = %e, "field test kept as stored"),
            }
        }
        if !changed.is_empty() {
            audits::set_field_test_results(self.db(), id, &changed).await?;
        }
        Ok(changed.len())
    }

    /// A field test's method and result on the audit `b`.
    async fn evaluate_on(
        &self,
        b: &super::audits::AuditBundle,
        body: &serde_json::Value,
    ) -> Result<(&'static str, serde_json::Value)> {
        let input: FieldTestInput = crate::site::read_json(body.clone(), "this field test")
            .map_err(|e| Error::from(unreadable_in_words(e, body)))?;
        let site = b.audit.site.air();
        let specs = b.specs();
        let storage = b.storage();
        let site_spec = b.audit.site.to_spec();
        let mut ctx = FieldTestContext {
            site: &site,
            compressors: &specs,
            storage: &storage,
            frame: None,
            production: site_spec.production.as_ref(),
            timezone: &site_spec.timezone,
            units: b.audit.site.display_units,
        };
        // Every refusal of the test's own fields at once, before any log is read; then the checks
        // against the logs, one at a time.
        let all = fieldtest::refusals(&input, &ctx);
        if !all.is_empty() {
            return Err(Error::fields(
                all.into_iter().map(|e| crate::site::FieldError::new(&e.field, e.message)).collect(),
            ));
        }
        let window = match &input {
            FieldTestInput::IdleFlow { start, end, .. }
            | FieldTestInput::PressureDecay { start, end, .. } => Some((
                fieldtest::parse_time_ms("start", start).map_err(test_error)?,
                fieldtest::parse_time_ms("end", end).map_err(test_error)?,
            )),
            _ => None,
        };
        let frame = match window {
            Some(w) => self.frame_for(b, Some(w)).await?,
            None => None,
        };
        ctx.frame = frame.as_deref();
        let result = fieldtest::evaluate(&input, &ctx).map_err(test_error)?;
        let result = serde_json::to_value(&result).map_err(Error::internal)?;
        Ok((input.method(), result))
    }

    /// Delete a field test; `false` if the audit has no such test.
    pub async fn delete_field_test(&self, audit_id: i64, id: i64) -> Result<bool> {
        self.audit(audit_id).await?;
        Ok(audits::delete_field_test(self.db(), audit_id, id).await?)
    }

    /// Windows of pressure decay with every compressor off, or off or unloaded outside production,
    /// proposed as tests.
    pub async fn decay_events(&self, id: i64) -> Result<Vec<DecayEvent>> {
        let b = self.bundle(id).await?;
        let Some(frame) = self.frame_for(&b, None).await? else { return Ok(vec![]) };
        let spec = analysis::DataSpec::of(&b.audit.site.to_spec(), &b.specs())
            .with_system_volume(b.storage().system_volume_m3());
        let storage = b.storage();
        Ok(tokio::task::spawn_blocking(move || analysis::decay_events(&frame, &spec, &storage)).await?)
    }
}

/// A field of a field test in the form's words ("the duration"), `None` for one the form does not have.
fn field_words(field: &str) -> Option<&'static str> {
    Some(match field {
        "volume_m3" => "the volume",
        "start_pressure_bar_g" => "the start pressure",
        "end_pressure_bar_g" => "the end pressure",
        "duration_s" => "the duration",
        "operating_pressure_bar_g" => "the operating pressure",
        "air_temperature_c" => "the stored air's temperature",
        "compressor" => "the compressor",
        "loaded_s" => "the loaded time",
        "unloaded_s" => "the unloaded time",
        "start" => "the start",
        "end" => "the end",
        "production_pressure_bar_g" => "the production pressure",
        "purge_and_drains_m3_min" => "the purge and drains flow",
        _ => return None,
    })
}

/// A field test whose field holds text where a number belongs (a letter typed for a digit, "6O"),
/// said in words with the field's name and what was typed, never serde's "invalid type: string
/// \"6O\", expected f64"; any other error as `read_json` said it.
fn unreadable_in_words(e: crate::site::FieldError, body: &serde_json::Value) -> crate::site::FieldError {
    let Some(words) = field_words(&e.field) else { return e };
    let expected_number = e.message.contains("expected f64") || e.message.contains("expected a number");
    match body.get(&e.field) {
        Some(serde_json::Value::String(t)) if expected_number => crate::site::FieldError::new(
            &e.field,
            format!("this field test cannot be read: {words} must be a number, got \u{201c}{t}\u{201d}"),
        ),
        Some(v) if expected_number => crate::site::FieldError::new(
            &e.field,
            format!("this field test cannot be read: {words} must be a number, got {v}"),
        ),
        _ => e,
    }
}
