/*!
The audit's summary: worked out from the kept frame and data figures where they still fit, cached
in `summary_cache` per audit revision and per build (an upgraded binary never serves the old rules'
figures), and worked out in the background after an import or an edit of the site or compressors.

Two things are kept in memory, in the [`App`] (so they belong to its one pool): the last whole-log
frame (one at a time, so its memory is bounded) and the data figures of up to 16 audits with the
`DataSpec` they were made under. Both are keyed by [`frame_key`].
*/

use std::collections::{HashMap, VecDeque};
use std::sync::{Arc, Mutex, Weak};

use serde::{Deserialize, Serialize};

use crate::core::analysis::{self, AuditInput, DataFigures, DataSpec, LeakEstimate, Summary};
use crate::core::recommend::{self, CostOverrides, ScenarioCase};
use crate::core::series::Frame;
use crate::store::audits;
use crate::store::read;

use super::scenarios::ScenarioOutcome;
use super::{App, AuditBundle, Error, Result};

/// What an audit's whole-log frame is made of: the audit, its complete uploads, its channels (with
/// their compressor and span), the order of the analysis' compressors and, when a channel's basis
/// depends on it, the site's air. Uploads are never changed
/// once complete except by a later upload's `replace`, which adds its own id, so an equal key means
/// an equal frame.
fn frame_key(b: &AuditBundle) -> String {
    let mut key = format!("audit {} uploads", b.audit.id);
    for u in &b.uploads {
        key.push_str(&format!(" {}", u.id));
    }
    key.push_str(" channels");
    for c in &b.channels {
        key.push_str(&format!(" {}:{:?}:{}-{}:{}", c.id, c.compressor_id, c.first_ms, c.last_ms, c.readings));
    }
    key.push_str(&format!(" compressors {:?}", b.compressor_ids()));
    // Readings on a gauge, reference or line basis are made absolute or free air with the site's
    // air as it is now (`core::basis`): a frame holding any is the site's too. Frames of site-free
    // readings (power, absolute pressure, free-air flow) stay kept across an edit of the site.
    if b.channels.iter().any(|c| c.follows_site()) {
        let air = b.audit.site.air();
        key.push_str(&format!(
            " air {:016x} {:016x}",
            air.atmosphere.0.to_bits(),
            air.inlet_temperature.0.to_bits()
        ));
    }
    key
}

/// Values kept in memory by [`frame_key`], at most `cap`, the least recently stored dropped first.
struct Kept<T> {
    cap: usize,
    items: VecDeque<(String, Arc<T>)>,
}

impl<T> Kept<T> {
    fn new(cap: usize) -> Self {
        Self { cap, items: VecDeque::new() }
    }
    /// Drop everything kept of audit `id` (its keys start with [`frame_key`]'s `audit {id} `).
    fn forget(&mut self, id: i64) {
        let prefix = format!("audit {id} ");
        self.items.retain(|(k, _)| !k.starts_with(&prefix));
    }
    fn get(&self, key: &str, fits: impl Fn(&T) -> bool) -> Option<Arc<T>> {
        self.items.iter().find(|(k, v)| k == key && fits(v)).map(|(_, v)| v.clone())
    }
    fn put(&mut self, key: String, value: Arc<T>) {
        self.items.retain(|(k, _)| *k != key);
        self.items.push_back((key, value));
        while self.items.len() > self.cap {
            self.items.pop_front();
        }
    }
}

/// What the application keeps in memory to work summaries out again.
pub(super) struct KeptFigures {
    /// The last whole-log frame built, for the next computation of the same data. Decoding and
    /// aligning the readings is most of a cold summary, and an edit of the data's specs (rated data,
    /// time zone) needs the very same frame again. One frame at a time, so the memory it holds is
    /// bounded: at most `read::MAX_FRAME_BINS` × 4 bytes a channel.
    frames: Mutex<Kept<Frame>>,
    /// The data figures (`analysis::DataFigures`, a few kB each) of whole-log frames, one per audit
    /// for up to 16. They hold every pass over the bins, so an edit that leaves the data and the
    /// data's specs alone (prices, costs, operating year, field tests, scenarios, accuracies,
    /// heating) prices the kept figures again instead of analysing a million bins. They carry the
    /// `DataSpec` they were made under; after an edit of rated data, site air, time zone or
    /// production schedule they are made again from the (kept) frame.
    figures: Mutex<Kept<DataFigures>>,
    /// Held while a frame is built (see `frame_keyed`).
    building: tokio::sync::Mutex<()>,
}

impl Default for KeptFigures {
    fn default() -> Self {
        Self {
            frames: Mutex::new(Kept::new(1)),
            figures: Mutex::new(Kept::new(16)),
            building: tokio::sync::Mutex::new(()),
        }
    }
}

/// The locks that serialise summary computations, one per audit while someone holds it: entries
/// nobody holds any more are dropped whenever a lock is handed out, so the map stays as small as
/// the number of audits being worked on.
#[derive(Default)]
pub(super) struct AuditLocks {
    locks: Mutex<HashMap<i64, Weak<tokio::sync::Mutex<()>>>>,
}

impl AuditLocks {
    fn get(&self, id: i64) -> Arc<tokio::sync::Mutex<()>> {
        let mut m = self.locks.lock().expect("summary locks");
        m.retain(|_, w| w.strong_count() > 0);
        if let Some(l) = m.get(&id).and_then(Weak::upgrade) {
            return l;
        }
        let l = Arc::new(tokio::sync::Mutex::new(()));
        m.insert(id, Arc::downgrade(&l));
        l
    }

    #[cfg(test)]
    fn len(&self) -> usize {
        self.locks.lock().expect("summary locks").len()
    }
}

/// Which build computes summaries: the package version and the running executable's size and
/// modification time, so a rebuilt or upgraded binary never serves a summary cached by another
/// one (its rules may differ). Falls back to the version alone if the executable cannot be read.
/// A fact of the process, worked out once.
pub fn build_id() -> &'static str {
    static ID: std::sync::OnceLock<String> = std::sync::OnceLock::new();
    ID.get_or_init(|| {
        let version = env!("CARGO_PKG_VERSION");
        let exe = std::env::current_exe().and_then(std::fs::metadata);
        match exe {
            Ok(m) => {
                let mtime = m
                    .modified()
                    .ok()
                    .and_then(|t| t.duration_since(std::time::UNIX_EPOCH).ok())
                    .map_or(0, |d| d.as_nanos());
                format!("{version} {} {mtime}", m.len())
            }
            Err(_) => version.to_string(),
        }
    })
}

impl App {
    /// Delete the audit with everything it holds in one transaction (`store::audits::delete_audit`),
    /// once no summary of it is being worked out, and drop what memory kept of it; `false` if there
    /// is no such audit.
    pub async fn delete_audit(&self, id: i64) -> Result<bool> {
        let _turn = self.inner.summary_locks.get(id).lock_owned().await;
        let deleted = audits::delete_audit(self.db(), id).await?;
        self.inner.kept.frames.lock().expect("kept frames").forget(id);
        self.inner.kept.figures.lock().expect("kept figures").forget(id);
        Ok(deleted)
    }

    /// The audit's frame over `window`; the whole-log frame may be the kept one.
    pub(super) async fn frame_for(
        &self,
        b: &AuditBundle,
        window: Option<(i64, i64)>,
    ) -> Result<Option<Arc<Frame>>> {
        let key = window.is_none().then(|| frame_key(b));
        self.frame_keyed(b, window, key.as_deref()).await
    }

    /// [`App::frame_for`] with its [`frame_key`] worked out (`None`: a window, built fresh and never
    /// kept).
    async fn frame_keyed(
        &self,
        b: &AuditBundle,
        window: Option<(i64, i64)>,
        key: Option<&str>,
    ) -> Result<Option<Arc<Frame>>> {
        let frames = &self.inner.kept.frames;
        if let Some(f) = key.and_then(|k| frames.lock().expect("frame cache").get(k, |_| true)) {
            return Ok(Some(f));
        }
        // One frame is built at a time, whatever asks for it (a summary, a report's scenarios, a
        // field test's window): a build holds up to 600,000 bins a column, and two at once put
        // the server past its memory bound. A caller that waited finds the frame kept meanwhile.
        let _building = self.inner.kept.building.lock().await;
        if let Some(f) = key.and_then(|k| frames.lock().expect("frame cache").get(k, |_| true)) {
            return Ok(Some(f));
        }
        let frame =
            read::load_frame(self.db(), &b.audit.site.air(), &b.channels, &b.compressor_ids(), window)
                .await?
                .map(Arc::new);
        if let (Some(key), Some(f)) = (key, &frame) {
            frames.lock().expect("frame cache").put(key.to_string(), f.clone());
        }
        Ok(frame)
    }

    async fn data_figures_for(
        &self,
        b: &AuditBundle,
        window: Option<(i64, i64)>,
        spec: DataSpec,
    ) -> Result<Option<Arc<DataFigures>>> {
        // Only whole-log frames and data figures are kept; a window is analysed fresh each time.
        let figures = &self.inner.kept.figures;
        let key = window.is_none().then(|| frame_key(b));
        if let Some(d) = key
            .as_deref()
            .and_then(|k| figures.lock().expect("data figures cache").get(k, |d| d.spec == spec))
        {
            return Ok(Some(d));
        }
        let Some(frame) = self.frame_keyed(b, window, key.as_deref()).await? else { return Ok(None) };
        let d = tokio::task::spawn_blocking(move || analysis::data_figures(&frame, &spec)).await?;
        let d = Arc::new(d);
        if let Some(key) = key {
            figures.lock().expect("data figures cache").put(key, d.clone());
        }
        Ok(Some(d))
    }

    /// Compute the summary (no summary cache; the frame and its data figures may be kept ones).
    async fn compute_summary(&self, b: &AuditBundle, window: Option<(i64, i64)>) -> Result<Option<Summary>> {
        let site = b.audit.site.to_spec();
        let specs = b.specs();
        let Some(figures) = self
            .data_figures_for(
                b,
                window,
                DataSpec::of(&site, &specs).with_system_volume(b.storage().system_volume_m3()),
            )
            .await?
        else {
            return Ok(None);
        };
        // Rates stay the documented defaults; totals an auditor edited replace them, before the
        // measures are ranked and stacked; the stored plan gives the order and options.
        let options = audits::measure_plan(self.db(), b.audit.id)
            .await?
            .and_then(|t| serde_json::from_str(&t).ok())
            .unwrap_or_default();
        let costs = CostOverrides {
            edited_totals: audits::cost_overrides(self.db(), b.audit.id).await?.into_iter().collect(),
            options,
            ..Default::default()
        };
        let accuracy = b.accuracy();
        let scenarios = self.scenario_cases(b).await?;
        let records = super::treatment::records(&audits::treatment_items(self.db(), b.audit.id).await?);
        let air = b.audit.site.air();
        // No bin is read from here on: well under a millisecond, so it runs in place. With purging
        // dryers or drains on record the summary is priced twice: their air depends on the plant's
        // figures, and the leaks read from the non-production flow are what is left after it.
        let price = |purge_and_drains_m3_min: f64, treatment: recommend::TreatmentCuts| {
            analysis::summary_of(
                &figures,
                &AuditInput {
                    purge_and_drains_m3_min,
                    treatment,
                    site: &site,
                    compressors: &specs,
                    leak_estimates: b.leak_estimates(),
                    costs: &costs,
                    accuracy: &accuracy,
                    scenarios: &scenarios,
                    system_volume_m3: b.storage().system_volume_m3(),
                },
            )
        };
        let mut s = price(0.0, Default::default());
        if !records.is_empty() {
            let (purge, cuts) = analysis::transmission::first_pass(&s, &records, &air);
            s = price(purge, cuts);
        }
        analysis::transmission::apply(&mut s, &records, &air);
        Ok(Some(s))
    }

    /// The stored scenarios replayed on the audit's present data, as the recommendations read them.
    async fn scenario_cases(&self, b: &AuditBundle) -> Result<Vec<ScenarioCase>> {
        let nan = |v: Option<f64>| v.unwrap_or(f64::NAN);
        Ok(audits::scenarios(self.db(), b.audit.id)
            .await?
            .into_iter()
            .filter(|s| s.revision == b.audit.revision)
            .map(|s| {
                let r = ScenarioOutcome::of(&s);
                ScenarioCase {
                    id: s.id,
                    energy_saving_kwh: nan(r.energy_saving_kwh),
                    baseline_energy_kwh: nan(r.baseline_energy_kwh),
                    validation_error: nan(r.validation_error),
                    feasible: r.feasible.unwrap_or(false),
                    supply_side_only: r.supply_side_only.unwrap_or(false),
                    implementation_cost: nan(r.implementation_cost),
                    cost_quoted: r.implementation_cost_source.as_deref() == Some("given"),
                    simulated_hours: nan(r.simulated_hours),
                    proposal: s.proposal,
                    name: s.name,
                }
            })
            .collect())
    }

    /// Work the summary out off the request, after something that may need a pass over the bins
    /// (an import, an edit of the compressors or the site), so the next report reads the cache
    /// instead of waiting on the decoding and analysis. A request that arrives meanwhile waits on
    /// the audit's summary lock and then reads what this stored.
    pub fn refresh_summary_in_background(&self, audit_id: i64, after: &'static str) {
        // One refresh queued per audit: while one waits for the audit's lock, the imports that
        // land meanwhile are covered by it (it reads the revision once it holds the lock). Without
        // this, a burst of imports queued one computation each, and a report asked for meanwhile
        // waited behind all of them.
        if !self.inner.refresh_queued.lock().expect("refresh queue").insert(audit_id) {
            return;
        }
        let app = self.clone();
        tokio::spawn(async move {
            let turn = app.inner.summary_locks.get(audit_id).lock_owned().await;
            app.inner.refresh_queued.lock().expect("refresh queue").remove(&audit_id);
            // Without readings there is nothing worth working out ahead (the no-data answer is
            // immediate), and an audit being set up should not hold connections while it imports.
            match audits::has_complete_upload(app.db(), audit_id).await {
                Ok(true) => {}
                Ok(false) => return,
                Err(e) => {
                    tracing::warn!(audit_id, after, error = %e, "summary in the background: no audit");
                    return;
                }
            }
            if let Err(e) = app.summary_in_turn(audit_id, None, turn).await {
                tracing::warn!(audit_id, after, error = %e, "summary worked out in the background failed");
            }
        });
    }

    /// The audit's summary: from the cache when the audit has not changed, else computed and
    /// cached. A window (`from`/`to`) is always computed fresh.
    pub async fn summary(&self, id: i64, window: Option<(i64, i64)>) -> Result<AuditSummary> {
        // One computation per audit at a time: a request that arrives while the summary is being
        // worked out (after an import, say) waits for it and reads the cache instead of repeating it.
        match window {
            None => {
                let turn = self.inner.summary_locks.get(id).lock_owned().await;
                self.summary_in_turn(id, None, turn).await
            }
            Some(_) => self.summary_unlocked(id, window).await,
        }
    }

    /// [`App::summary`] for the holder of the audit's summary lock (`_turn`, held to the end).
    async fn summary_in_turn(
        &self,
        id: i64,
        window: Option<(i64, i64)>,
        _turn: tokio::sync::OwnedMutexGuard<()>,
    ) -> Result<AuditSummary> {
        self.summary_unlocked(id, window).await
    }

    async fn summary_unlocked(&self, id: i64, window: Option<(i64, i64)>) -> Result<AuditSummary> {
        let db = self.db();
        let b = self.bundle(id).await?;
        if window.is_none() {
            if let Some(text) = audits::cached_summary(db, id, b.audit.revision, build_id()).await? {
                match serde_json::from_str::<AuditSummary>(&text) {
                    Ok(s) => return Ok(s),
                    // Worked out again (and stored again) rather than served wrong or not at all.
                    Err(e) => tracing::warn!(audit_id = id, error = %e, "the cached summary cannot be read"),
                }
            }
        }
        let summary = match self.compute_summary(&b, window).await? {
            Some(s) => AuditSummary::Figures(Box::new(s)),
            None => AuditSummary::NoData { leak_estimates: b.leak_estimates() },
        };
        if window.is_none() {
            audits::put_summary(db, id, b.audit.revision, build_id(), &summary.to_json()?.to_string())
                .await?;
        }
        Ok(summary)
    }
}

/// An audit's figures, or the answer that there are none yet.
#[derive(Debug, Clone, PartialEq)]
pub enum AuditSummary {
    Figures(Box<Summary>),
    /// No logger data yet; the field tests' leak estimates are known all the same.
    NoData {
        leak_estimates: Vec<LeakEstimate>,
    },
}

impl AuditSummary {
    /// The figures, if the audit has logger data.
    pub fn figures(&self) -> Option<&Summary> {
        match self {
            Self::Figures(s) => Some(s),
            Self::NoData { .. } => None,
        }
    }

    /// The API's JSON, as it is also stored in the cache (a JSON value: its keys in order).
    pub fn to_json(&self) -> Result<serde_json::Value> {
        serde_json::to_value(self).map_err(Error::internal)
    }
}

/// The no-data answer as the API shows it.
#[derive(Serialize, Deserialize)]
struct NoDataJson {
    no_data: bool,
    message: String,
    period: Option<()>,
    recommendations: Vec<()>,
    leaks: NoDataLeaks,
}

#[derive(Serialize, Deserialize)]
struct NoDataLeaks {
    estimates: Vec<LeakEstimate>,
}

const NO_DATA_MESSAGE: &str = "no logger data yet: upload a file to compute the audit's figures";

impl Serialize for AuditSummary {
    fn serialize<S: serde::Serializer>(&self, s: S) -> std::result::Result<S::Ok, S::Error> {
        match self {
            Self::Figures(f) => f.serialize(s),
            Self::NoData { leak_estimates } => NoDataJson {
                no_data: true,
                message: NO_DATA_MESSAGE.into(),
                period: None,
                recommendations: vec![],
                leaks: NoDataLeaks { estimates: leak_estimates.clone() },
            }
            .serialize(s),
        }
    }
}

impl<'de> Deserialize<'de> for AuditSummary {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> std::result::Result<Self, D::Error> {
        #[derive(Deserialize)]
        #[serde(untagged)]
        enum Stored {
            NoData(NoDataJson),
            Figures(Box<Summary>),
        }
        Ok(match Stored::deserialize(d)? {
            Stored::NoData(n) => Self::NoData { leak_estimates: n.leaks.estimates },
            Stored::Figures(f) => Self::Figures(f),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn audit_locks_are_shared_while_held_and_dropped_after() {
        let locks = AuditLocks::default();
        let a = locks.get(1);
        let again = locks.get(1);
        assert!(Arc::ptr_eq(&a, &again), "one lock per audit while it is held");
        let _b = locks.get(2);
        assert_eq!(locks.len(), 2);
        drop((a, again));
        // Handing out another lock drops the entries nobody holds.
        let _c = locks.get(3);
        assert_eq!(locks.len(), 2, "audit 1's lock is gone, 2 and 3 remain");
    }

    #[test]
    fn the_no_data_answer_keeps_its_json() {
        let estimates = vec![LeakEstimate {
            test_id: 3,
            method: "bleed_down".into(),
            leak_flow_m3_min: 1.25,
            relative_uncertainty: None,
            range_m3_min: None,
            warnings: vec![],
        }];
        // The shape the API and the cache have always had for an audit without readings.
        let before = serde_json::json!({
            "no_data": true,
            "message": NO_DATA_MESSAGE,
            "period": null,
            "recommendations": [],
            "leaks": {"estimates": estimates},
        });
        let s = AuditSummary::NoData { leak_estimates: estimates };
        assert_eq!(s.to_json().unwrap().to_string(), before.to_string());
        let back: AuditSummary = serde_json::from_str(&before.to_string()).unwrap();
        assert_eq!(back, s);
    }

    #[test]
    fn kept_values_drop_the_oldest_beyond_the_cap() {
        let mut k = Kept::new(2);
        k.put("a".into(), Arc::new(1));
        k.put("b".into(), Arc::new(2));
        k.put("a".into(), Arc::new(3));
        k.put("c".into(), Arc::new(4));
        assert_eq!(k.get("a", |_| true).as_deref(), Some(&3));
        assert_eq!(k.get("b", |_| true), None, "b was the least recently stored");
        assert_eq!(k.get("c", |v| *v == 4).as_deref(), Some(&4));
        assert_eq!(k.get("c", |v| *v == 5), None, "a value that does not fit is not served");
    }
}
