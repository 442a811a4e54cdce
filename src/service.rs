/*!
The few operations that join storage and the pure core, shared by the pages, the JSON API and the
command line: building an audit's analysis input from stored records and readings, the summary (cached
per audit revision, so that reports never recompute from raw data), field tests, decay events, and the
demo plant.
*/

use std::path::Path;
use std::sync::Arc;

use sha2::{Digest, Sha256};
use sqlx::SqlitePool;

use crate::core::analysis::{self, Accuracy, AuditInput, DataFigures, DataSpec, LeakEstimate, Summary};
use crate::core::display::Fmt;
use crate::core::fieldtest::{self, FieldTestContext, FieldTestInput};
use crate::core::model::{CompressorSpec, StorageSpec};
use crate::core::recommend::CostOverrides;
use crate::core::series::Frame;
use crate::core::units::SiteAir;
use crate::ingest::Mapping;
use crate::records::{CompressorInput, ReceiverInput, SitePatch, SiteRecord};
use crate::store::audits::{self, Audit, CompressorWrite, FieldTestRecord, UploadRecord};
use crate::store::import::{self, ImportOutcome, ImportRequest, Progress};
use crate::store::read::{self, ChannelInfo};
use crate::web::error::AppError;

/// Everything stored about one audit except its readings.
pub struct AuditBundle {
    pub audit: Audit,
    pub compressors: Vec<crate::records::CompressorRecord>,
    pub receivers: Vec<crate::records::ReceiverRecord>,
    pub uploads: Vec<UploadRecord>,
    pub field_tests: Vec<FieldTestRecord>,
    pub channels: Vec<ChannelInfo>,
}

impl AuditBundle {
    pub fn storage(&self) -> StorageSpec {
        StorageSpec {
            receivers_m3: self.receivers.iter().map(|r| r.volume_m3).collect(),
            other_volume_m3: self.audit.site.other_volume_m3,
        }
    }
    pub fn specs(&self) -> Vec<CompressorSpec> {
        self.compressors.iter().map(|c| c.to_spec()).collect()
    }
    pub fn fmt(&self) -> Fmt {
        Fmt::new(self.audit.site.display_units, self.audit.site.air().atmosphere)
    }
    fn compressor_ids(&self) -> Vec<i64> {
        self.compressors.iter().map(|c| c.id).collect()
    }
    /// The instrument accuracies: defaults, with power from current flagged per compressor.
    pub fn accuracy(&self) -> Accuracy {
        let mut a = Accuracy::default();
        for c in &self.channels {
            if c.quantity == "power" && c.unit.eq_ignore_ascii_case("a") {
                if let Some(t) = &c.compressor_tag {
                    a.current_derived_power.push(t.clone());
                }
            }
        }
        a
    }
    /// Leak estimates from the stored field tests, at operating pressure.
    pub fn leak_estimates(&self) -> Vec<LeakEstimate> {
        self.field_tests
            .iter()
            .filter_map(|t| {
                let q = t.result.get("leak_flow_m3_min")?.as_f64()?;
                Some(LeakEstimate { test_id: t.id, method: t.kind.clone(), leak_flow_m3_min: q })
            })
            .collect()
    }
}

/// The audit with all its records, or 404.
pub async fn bundle(db: &SqlitePool, id: i64) -> Result<AuditBundle, AppError> {
    let audit = audits::get_audit(db, id)
        .await?
        .ok_or_else(|| AppError::NotFound(format!("there is no audit {id}")))?;
    Ok(AuditBundle {
        compressors: audits::compressors(db, id).await?,
        receivers: audits::receivers(db, id).await?,
        uploads: audits::uploads(db, id).await?,
        field_tests: audits::field_tests(db, id).await?,
        channels: read::channels(db, id).await?,
        audit,
    })
}

pub async fn create_audit(db: &SqlitePool, name: &str, patch: &SitePatch) -> Result<i64, AppError> {
    let name = name.trim();
    if name.is_empty() || name.chars().count() > 120 {
        return Err(AppError::field("name", "the audit name must be 1 to 120 characters"));
    }
    let mut site = SiteRecord::default();
    site.apply(patch)?;
    Ok(audits::create_audit(db, name, &site).await?)
}

pub async fn update_audit(
    db: &SqlitePool,
    id: i64,
    name: Option<&str>,
    auditor: Option<&str>,
    notes: Option<&str>,
    patch: &SitePatch,
) -> Result<(), AppError> {
    let a = audits::get_audit(db, id)
        .await?
        .ok_or_else(|| AppError::NotFound(format!("there is no audit {id}")))?;
    let mut site = a.site.clone();
    site.apply(patch)?;
    let name = name.map(str::trim).unwrap_or(&a.name);
    if name.is_empty() || name.chars().count() > 120 {
        return Err(AppError::field("name", "the audit name must be 1 to 120 characters"));
    }
    audits::update_audit(db, id, name, auditor.unwrap_or(&a.auditor), notes.unwrap_or(&a.notes), &site)
        .await?;
    Ok(())
}

pub async fn save_compressor(
    db: &SqlitePool,
    audit_id: i64,
    id: i64,
    input: &CompressorInput,
) -> Result<i64, AppError> {
    audits::get_audit(db, audit_id)
        .await?
        .ok_or_else(|| AppError::NotFound(format!("there is no audit {audit_id}")))?;
    let mut rec = input.validate()?;
    rec.id = id;
    match audits::save_compressor(db, audit_id, &rec).await? {
        CompressorWrite::Stored(id) => Ok(id),
        CompressorWrite::TagTaken => {
            Err(AppError::Conflict(format!("this audit has a compressor tagged {:?} already", rec.tag)))
        }
    }
}

pub async fn add_receiver(db: &SqlitePool, audit_id: i64, input: &ReceiverInput) -> Result<i64, AppError> {
    audits::get_audit(db, audit_id)
        .await?
        .ok_or_else(|| AppError::NotFound(format!("there is no audit {audit_id}")))?;
    input.validate()?;
    Ok(audits::add_receiver(db, audit_id, input.name.trim(), input.volume_m3, &input.notes).await?)
}

/// What the importer needs to know of the audit.
pub struct ImportContext {
    pub site: SiteAir,
    pub compressors: Vec<(String, i64)>,
}

pub async fn import_context(db: &SqlitePool, audit_id: i64) -> Result<ImportContext, AppError> {
    let a = audits::get_audit(db, audit_id)
        .await?
        .ok_or_else(|| AppError::NotFound(format!("there is no audit {audit_id}")))?;
    let compressors = audits::compressors(db, audit_id).await?.into_iter().map(|c| (c.tag, c.id)).collect();
    Ok(ImportContext { site: a.site.air(), compressors })
}

/// Import a file from disk (the CLI and the demo use this; uploads spool first and call the store).
pub async fn import_path(
    db: &SqlitePool,
    audit_id: i64,
    path: &Path,
    mapping: Mapping,
    replace: bool,
    progress: Arc<Progress>,
) -> anyhow::Result<ImportOutcome> {
    let ctx = import_context(db, audit_id).await.map_err(|e| anyhow::anyhow!("{e}"))?;
    let p = path.to_path_buf();
    let (sha256, bytes) = tokio::task::spawn_blocking(move || -> std::io::Result<(String, u64)> {
        let mut f = std::fs::File::open(&p)?;
        let mut h = Sha256::new();
        let n = std::io::copy(&mut f, &mut h)?;
        Ok((h.finalize().iter().map(|b| format!("{b:02x}")).collect(), n))
    })
    .await??;
    let req = ImportRequest {
        audit_id,
        filename: path.file_name().map(|n| n.to_string_lossy().into_owned()).unwrap_or_default(),
        path: path.to_path_buf(),
        sha256,
        bytes,
        mapping,
        replace,
        site: ctx.site,
        compressors: ctx.compressors,
    };
    import::import_file(db, req, progress).await.map_err(|e| match e {
        import::ImportError::Bad(i) => anyhow::anyhow!(
            "{}{}{}",
            i.message,
            i.line.map(|l| format!(" (line {l}")).unwrap_or_default(),
            i.column.map(|c| format!(", column {c:?})")).unwrap_or_else(|| if i.line.is_some() {
                ")".into()
            } else {
                String::new()
            })
        ),
        other => anyhow::anyhow!("{other}"),
    })
}

/// What an audit's whole-log frame is made of: the database file, the audit, its complete uploads,
/// its channels (with their compressor and span) and the order of the analysis' compressors.
/// Uploads are never changed once complete except by a later upload's `replace`, which adds its own
/// id, so an equal key means an equal frame.
fn frame_key(db: &SqlitePool, b: &AuditBundle) -> String {
    let mut key = format!("{} audit {} uploads", db.connect_options().get_filename().display(), b.audit.id);
    for u in &b.uploads {
        key.push_str(&format!(" {}", u.id));
    }
    key.push_str(" channels");
    for c in &b.channels {
        key.push_str(&format!(" {}:{:?}:{}-{}:{}", c.id, c.compressor_id, c.first_ms, c.last_ms, c.readings));
    }
    key.push_str(&format!(" compressors {:?}", b.compressor_ids()));
    key
}

/// Values kept in memory by [`frame_key`], at most `cap`, the least recently stored dropped first.
struct Kept<T> {
    cap: usize,
    items: std::collections::VecDeque<(String, Arc<T>)>,
}

impl<T> Kept<T> {
    const fn new(cap: usize) -> Self {
        Self { cap, items: std::collections::VecDeque::new() }
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

/// The last whole-log frame built, for the next computation of the same data. Decoding and aligning
/// the readings is most of a cold summary, and an edit of the data's specs (rated data, time zone)
/// needs the very same frame again. One frame at a time, so the memory it holds is bounded: at most
/// `read::MAX_FRAME_BINS` × 4 bytes a channel.
static FRAMES: std::sync::Mutex<Kept<Frame>> = std::sync::Mutex::new(Kept::new(1));

/// The data figures (`analysis::DataFigures`, a few kB each) of whole-log frames, one per audit
/// and database for up to 16. They hold every pass over the bins, so an edit that leaves the data
/// and the data's specs alone (prices, costs, operating year, field tests, scenarios, accuracies,
/// heating) prices the kept figures again instead of analysing a million bins. They carry the
/// `DataSpec` they were made under; after an edit of rated data, site air, time zone or production
/// schedule they are made again from the (kept) frame.
static FIGURES: std::sync::Mutex<Kept<DataFigures>> = std::sync::Mutex::new(Kept::new(16));

/// The audit's frame over `window`; the whole-log frame may be the kept one.
async fn frame_for(
    db: &SqlitePool,
    b: &AuditBundle,
    window: Option<(i64, i64)>,
) -> Result<Option<Arc<Frame>>, AppError> {
    let key = window.is_none().then(|| frame_key(db, b));
    frame_keyed(db, b, window, key.as_deref()).await
}

/// [`frame_for`] with its [`frame_key`] worked out (`None`: a window, built fresh and never kept).
async fn frame_keyed(
    db: &SqlitePool,
    b: &AuditBundle,
    window: Option<(i64, i64)>,
    key: Option<&str>,
) -> Result<Option<Arc<Frame>>, AppError> {
    if let Some(f) = key.and_then(|k| FRAMES.lock().expect("frame cache").get(k, |_| true)) {
        return Ok(Some(f));
    }
    let frame = read::load_frame(db, &b.channels, &b.compressor_ids(), window).await?.map(Arc::new);
    if let (Some(key), Some(f)) = (key, &frame) {
        FRAMES.lock().expect("frame cache").put(key.to_string(), f.clone());
    }
    Ok(frame)
}

async fn data_figures_for(
    db: &SqlitePool,
    b: &AuditBundle,
    window: Option<(i64, i64)>,
    spec: DataSpec,
) -> Result<Option<Arc<DataFigures>>, AppError> {
    // Only whole-log frames and data figures are kept; a window is analysed fresh each time.
    let key = window.is_none().then(|| frame_key(db, b));
    if let Some(d) =
        key.as_deref().and_then(|k| FIGURES.lock().expect("data figures cache").get(k, |d| d.spec == spec))
    {
        return Ok(Some(d));
    }
    let Some(frame) = frame_keyed(db, b, window, key.as_deref()).await? else { return Ok(None) };
    let d = tokio::task::spawn_blocking(move || analysis::data_figures(&frame, &spec))
        .await
        .map_err(|e| AppError::Internal(e.into()))?;
    let d = Arc::new(d);
    if let Some(key) = key {
        FIGURES.lock().expect("data figures cache").put(key, d.clone());
    }
    Ok(Some(d))
}

/// Compute the summary (no summary cache; the frame and its data figures may be kept ones).
async fn compute_summary(
    db: &SqlitePool,
    b: &AuditBundle,
    window: Option<(i64, i64)>,
) -> Result<Option<Summary>, AppError> {
    let site = b.audit.site.to_spec();
    let specs = b.specs();
    let Some(figures) = data_figures_for(db, b, window, DataSpec::of(&site, &specs)).await? else {
        return Ok(None);
    };
    // Rates stay the documented defaults; totals an auditor edited replace them afterwards.
    let costs = CostOverrides::default();
    let edited: std::collections::BTreeMap<String, f64> =
        audits::cost_overrides(db, b.audit.id).await?.into_iter().collect();
    let accuracy = b.accuracy();
    let scenarios = scenario_cases(db, b).await?;
    // No bin is read from here on: well under a millisecond, so it runs in place.
    let mut s = analysis::summary_of(
        &figures,
        &AuditInput {
            site: &site,
            compressors: &specs,
            leak_estimates: b.leak_estimates(),
            costs: &costs,
            accuracy: &accuracy,
            scenarios: &scenarios,
        },
    );
    crate::core::recommend::apply_implementation_costs(&mut s.recommendations, &edited);
    Ok(Some(s))
}

/// The stored scenarios replayed on the audit's present data, as the recommendations read them.
async fn scenario_cases(
    db: &SqlitePool,
    b: &AuditBundle,
) -> Result<Vec<crate::core::recommend::ScenarioCase>, AppError> {
    let f = |v: &serde_json::Value, k: &str| v[k].as_f64().unwrap_or(f64::NAN);
    Ok(audits::scenarios(db, b.audit.id)
        .await?
        .into_iter()
        .filter(|s| s.revision == b.audit.revision)
        .map(|s| crate::core::recommend::ScenarioCase {
            id: s.id,
            energy_saving_kwh: f(&s.result, "energy_saving_kwh"),
            baseline_energy_kwh: f(&s.result, "baseline_energy_kwh"),
            validation_error: f(&s.result, "validation_error"),
            feasible: s.result["feasible"].as_bool().unwrap_or(false),
            supply_side_only: s.result["supply_side_only"].as_bool().unwrap_or(false),
            implementation_cost: f(&s.result, "implementation_cost"),
            simulated_hours: f(&s.result, "simulated_hours"),
            name: s.name,
        })
        .collect())
}

/// The lock that serialises summary computations of one audit.
fn summary_lock(id: i64) -> Arc<tokio::sync::Mutex<()>> {
    static LOCKS: std::sync::OnceLock<
        std::sync::Mutex<std::collections::HashMap<i64, Arc<tokio::sync::Mutex<()>>>>,
    > = std::sync::OnceLock::new();
    let mut m = LOCKS.get_or_init(Default::default).lock().expect("summary locks");
    m.entry(id).or_default().clone()
}

/// Which build computes summaries: the package version and the running executable's size and
/// modification time, so a rebuilt or upgraded binary never serves a summary cached by another
/// one (its rules may differ). Falls back to the version alone if the executable cannot be read.
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

/// Work the summary out off the request, after something that may need a pass over the bins (an
/// import, an edit of the compressors or the site), so the next report reads the cache instead of
/// waiting on the decoding and analysis. A request that arrives meanwhile waits on the audit's
/// summary lock and then reads what this stored.
pub fn refresh_summary_in_background(db: &SqlitePool, audit_id: i64, after: &'static str) {
    let db = db.clone();
    tokio::spawn(async move {
        // Without readings there is nothing worth working out ahead (the no-data answer is
        // immediate), and an audit being set up should not hold connections while it imports.
        match audits::has_complete_upload(&db, audit_id).await {
            Ok(true) => {}
            Ok(false) => return,
            Err(e) => {
                tracing::warn!(audit_id, after, error = %e, "summary in the background: no audit");
                return;
            }
        }
        if let Err(e) = summary_json(&db, audit_id, None).await {
            tracing::warn!(audit_id, after, error = %e, "summary worked out in the background failed");
        }
    });
}

/// The summary as JSON: from the cache when the audit has not changed, else computed and cached.
/// A window (`from`/`to`) is always computed fresh.
pub async fn summary_json(
    db: &SqlitePool,
    id: i64,
    window: Option<(i64, i64)>,
) -> Result<serde_json::Value, AppError> {
    // One computation per audit at a time: a request that arrives while the summary is being worked
    // out (after an import, say) waits for it and reads the cache instead of repeating it.
    let _turn = if window.is_none() { Some(summary_lock(id).lock_owned().await) } else { None };
    let b = bundle(db, id).await?;
    if window.is_none() {
        if let Some(json) = audits::cached_summary(db, id, b.audit.revision, build_id()).await? {
            return serde_json::from_str(&json).map_err(|e| AppError::Internal(e.into()));
        }
    }
    let value = match compute_summary(db, &b, window).await? {
        Some(s) => serde_json::to_value(&s).map_err(|e| AppError::Internal(e.into()))?,
        None => serde_json::json!({
            "no_data": true,
            "message": "no logger data yet: upload a file to compute the audit's figures",
            "period": null,
            "recommendations": [],
            "leaks": {"estimates": b.leak_estimates()},
        }),
    };
    if window.is_none() {
        audits::put_summary(db, id, b.audit.revision, build_id(), &value.to_string()).await?;
    }
    Ok(value)
}

/// Evaluate and store a field test; returns the stored record.
pub async fn add_field_test(
    db: &SqlitePool,
    id: i64,
    body: serde_json::Value,
) -> Result<FieldTestRecord, AppError> {
    let b = bundle(db, id).await?;
    let input: FieldTestInput =
        serde_json::from_value(body.clone()).map_err(|e| AppError::Unprocessable {
            message: format!("this field test cannot be read: {e}"),
            line: None,
            column: None,
            field: Some("kind".into()),
        })?;
    let window = match &input {
        FieldTestInput::IdleFlow { start, end, .. } | FieldTestInput::PressureDecay { start, end, .. } => {
            let s = fieldtest::parse_time_ms("start", start).map_err(test_error)?;
            let e = fieldtest::parse_time_ms("end", end).map_err(test_error)?;
            if e <= s {
                return Err(AppError::field("end", format!("the end {end} must be after the start {start}")));
            }
            Some((s, e))
        }
        _ => None,
    };
    let frame = match window {
        Some(w) => frame_for(db, &b, Some(w)).await?,
        None => None,
    };
    let site = b.audit.site.air();
    let specs = b.specs();
    let storage = b.storage();
    let ctx =
        FieldTestContext { site: &site, compressors: &specs, storage: &storage, frame: frame.as_deref() };
    let result = fieldtest::evaluate(&input, &ctx).map_err(test_error)?;
    let result = serde_json::to_value(&result).map_err(|e| AppError::Internal(e.into()))?;
    let tid = audits::add_field_test(db, id, input.method(), &body, &result).await?;
    let rec = audits::field_tests(db, id).await?.into_iter().find(|t| t.id == tid);
    rec.ok_or_else(|| AppError::Internal(anyhow::anyhow!("field test {tid} vanished")))
}

fn test_error(e: fieldtest::FieldError) -> AppError {
    AppError::field(&e.field, e.message)
}

/// Windows of pressure decay with every compressor off or unloaded, proposed as tests.
pub async fn decay_events(db: &SqlitePool, id: i64) -> Result<Vec<analysis::DecayEvent>, AppError> {
    let b = bundle(db, id).await?;
    let Some(frame) = frame_for(db, &b, None).await? else { return Ok(vec![]) };
    let specs = b.specs();
    let storage = b.storage();
    let site = b.audit.site.air();
    tokio::task::spawn_blocking(move || analysis::decay_events(&frame, &specs, &storage, &site))
        .await
        .map_err(|e| AppError::Internal(e.into()))
}

/// Build the demo plant's audit if the database has none, through the normal import path.
pub async fn ensure_demo(db: &SqlitePool, spool_dir: &Path) -> anyhow::Result<i64> {
    let plant = crate::demo::demo_plant();
    if let Some(id) = audits::find_audit_by_name(db, &plant.audit_name).await? {
        return Ok(id);
    }
    let s = &plant.site;
    let patch = SitePatch {
        altitude_m: Some(s.altitude_m),
        inlet_temperature_c: Some(s.inlet_temperature_c),
        timezone: Some(s.timezone.clone()),
        electricity_price_per_kwh: Some(s.electricity_price_per_kwh),
        demand_charge_per_kw_month: Some(s.demand_charge_per_kw_month),
        currency: Some(s.currency.clone()),
        operating_weeks_per_year: Some(s.operating_weeks_per_year),
        heating_fuel_price_per_kwh: Some(s.heating_fuel_price_per_kwh),
        heater_efficiency: Some(s.heater_efficiency),
        heating_months: Some(s.heating_months.clone()),
        grid_co2_kg_per_kwh: Some(s.grid_co2_kg_per_kwh),
        fuel_co2_kg_per_kwh: Some(s.fuel_co2_kg_per_kwh),
        other_volume_m3: Some(plant.other_volume_m3),
        ..Default::default()
    };
    let id = create_audit(db, &plant.audit_name, &patch).await.map_err(|e| anyhow::anyhow!("{e}"))?;
    update_audit(db, id, None, Some(&s.auditor), Some(&s.notes), &SitePatch::default())
        .await
        .map_err(|e| anyhow::anyhow!("{e}"))?;
    for c in &plant.compressors {
        let input = CompressorInput {
            tag: c.tag.clone(),
            kind: c.kind.as_str().into(),
            control: c.control.as_str().into(),
            cooling: c.cooling.as_str().into(),
            rated_power_kw: c.rated_power_kw,
            rated_flow_m3_min: c.rated_flow_m3_min,
            rated_pressure_bar_g: c.rated_pressure_bar_g,
            unloaded_power_fraction: Some(c.unloaded_power_fraction),
            stages: Some(c.stages),
            rated_specific_power_kw_per_m3_min: c.rated_specific_power_kw_per_m3_min,
            power_curve: c.power_curve.clone(),
            year: c.year,
            notes: String::new(),
        };
        save_compressor(db, id, 0, &input).await.map_err(|e| anyhow::anyhow!("{e}"))?;
    }
    for (name, v) in &plant.receivers {
        add_receiver(db, id, &ReceiverInput { name: name.clone(), volume_m3: *v, notes: String::new() })
            .await
            .map_err(|e| anyhow::anyhow!("{e}"))?;
    }
    std::fs::create_dir_all(spool_dir)?;
    for f in &plant.files {
        let path = spool_dir.join(&f.filename);
        std::fs::write(&path, f.csv.as_bytes())?;
        let mapping: Mapping = serde_json::from_value(f.mapping.clone())?;
        let outcome = import_path(db, id, &path, mapping, false, Arc::new(Progress::default())).await;
        let _ = std::fs::remove_file(&path);
        outcome?;
    }
    summary_json(db, id, None).await.map_err(|e| anyhow::anyhow!("{e}"))?;
    Ok(id)
}

/// Replay the logged demand through a changed compressor room (`core::simulate`) and store it.
pub async fn add_scenario(
    db: &SqlitePool,
    id: i64,
    body: serde_json::Value,
) -> Result<(i64, serde_json::Value), AppError> {
    use crate::core::simulate::{self, Scenario, SimInput};
    let b = bundle(db, id).await?;
    let scenario: Scenario = serde_json::from_value(body.clone()).map_err(|e| AppError::Unprocessable {
        message: format!("this scenario cannot be read: {e}"),
        line: None,
        column: None,
        field: Some("changes".into()),
    })?;
    if scenario.name.trim().is_empty() {
        return Err(AppError::field("name", "the scenario needs a name"));
    }
    let Some(frame) = frame_for(db, &b, None).await? else {
        return Err(AppError::field("changes", "the audit has no logger data to replay yet"));
    };
    // The leak estimate the summary adopted, if any: it is the part of demand that follows pressure.
    let summary = summary_json(db, id, None).await?;
    let leak = summary["leaks"]["adopted_leak_flow_m3_min"].as_f64();
    let specs = b.specs();
    let storage = b.storage();
    let site = b.audit.site.air();
    let result = tokio::task::spawn_blocking(move || {
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
    .await
    .map_err(|e| AppError::Internal(e.into()))?
    .map_err(|e| AppError::field(&e.field, e.message))?;
    let (name, r) = result;
    let value = serde_json::to_value(&r).map_err(|e| AppError::Internal(e.into()))?;
    let changes = body.get("changes").cloned().unwrap_or(serde_json::json!([]));
    let sid = audits::add_scenario(db, id, &name, &changes, &value, b.audit.revision).await?;
    Ok((sid, value))
}
