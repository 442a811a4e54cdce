/*!
The application: one database and everything kept in memory around it. [`App`] is built once
([`App::open`] or [`App::from_pool`]) and shared, a cheap clone, by the server, the command line and
the benches. It owns the pool, the kept frame and data figures, the per-audit summary locks, the
imports running now and the import slots, so nothing of it lives in a process-wide static.

Its rooms, by topic: [`audits`] (an audit with its records, and the edits), [`imports`] (files in,
with progress), [`summary`] (the summary, its cache and what is kept to work it out again),
[`fieldtests`] (field tests and the decay events proposed as tests), [`scenarios`] (what-if replays),
[`demo_install`] (the demo plant through the normal paths) and [`error`]. It returns its own
[`Error`]; the web layer turns it into HTTP at the edge, and `app` imports nothing from `web`.

One application owns its database file ([`App::open`]): it holds the file's lock
([`store::DbLock`], `<db>.lock` beside it) for as long as it lives, so a second server, demo or
import on the same file stops at once, naming the file and the pid that holds it. With the lock
held, whatever the start-up finds unfinished is a dead process's: the uploads left `importing`
(removed by [`store::open`]) and every file in the database's spool folder (a `.part` upload or a
demo file a `kill -9` left behind), which [`App::open`] removes, logging how much. A backup or a
report opens beside a running owner with [`App::open_shared`], which neither keeps the lock nor
cleans up what is not its own.
*/

pub mod audits;
pub mod demo_install;
pub mod error;
pub mod fieldtests;
pub mod imports;
pub mod scenarios;
pub mod summary;
pub mod treatment;

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex};

use sqlx::SqlitePool;

pub use audits::{AuditBundle, ReadFacts};
pub use error::{Error, Result};
pub use summary::{build_id, AuditSummary};

use crate::store;

/// Settings of the application fixed at start-up.
#[derive(Debug, Clone)]
pub struct Config {
    /// Where files are spooled before import (uploads, the demo's logger files). The folder is this
    /// database's alone: [`App::open`] empties it, with the database's lock held.
    pub spool_dir: PathBuf,
    /// At most this many uploads parse at once; the others wait (their progress says so).
    pub import_slots: usize,
}

impl Config {
    /// The database's own spool folder beside its file (`.airledger-spool/<db file name>/`, so that
    /// databases in one folder never share one), two import slots.
    pub fn beside(db_path: &Path) -> Self {
        let db = store::canonical_db_path(db_path);
        let dir = db.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
        let name = db.file_name().map(|n| n.to_os_string()).unwrap_or_else(|| "airledger.sqlite".into());
        Self { spool_dir: dir.join(".airledger-spool").join(name), import_slots: 2 }
    }
}

/// The application: the database and everything kept in memory around it.
#[derive(Clone)]
pub struct App {
    inner: Arc<Inner>,
}

struct Inner {
    db: SqlitePool,
    db_path: PathBuf,
    config: Config,
    /// The last whole-log frame and the kept data figures (`summary`).
    kept: summary::KeptFigures,
    /// One summary computation per audit at a time (`summary`).
    summary_locks: summary::AuditLocks,
    /// Audits whose background summary refresh is queued and has not started yet: one each, so a
    /// burst of imports queues one refresh, not one per import (`summary`).
    refresh_queued: Mutex<std::collections::HashSet<i64>>,
    /// Imports running now, by the token the client chose, for progress bars.
    imports: Mutex<HashMap<String, Arc<store::import::Progress>>>,
    /// At most `config.import_slots` uploads parse at once.
    import_slots: tokio::sync::Semaphore,
    /// The database file's lock, held as long as the application lives (none for a reader beside
    /// a running owner, or over a pool the caller opened).
    _lock: Option<store::DbLock>,
}

impl App {
    /// Own the database at `db_path` (creating and migrating it if needed): refused at once with
    /// [`store::StoreError::InUse`] while another process owns it; then what a dead owner left
    /// unfinished is removed, the spool folder's files included.
    pub async fn open(db_path: &Path, config: Config) -> Result<Self> {
        let (pool, lock) = store::open(db_path).await?;
        imports::clear_spool(&config.spool_dir);
        Ok(Self::with_lock(pool, db_path, config, Some(lock)))
    }

    /// Open the database at `db_path` to read it (a backup, a report), also beside a running owner:
    /// see [`store::open_shared`]. When no process owns the file, this cleans up as [`App::open`]
    /// does and then lets go of the lock, so that a server can start meanwhile.
    pub async fn open_shared(db_path: &Path, config: Config) -> Result<Self> {
        let (pool, lock) = store::open_shared(db_path).await?;
        if let Some(lock) = lock {
            imports::clear_spool(&config.spool_dir);
            drop(lock);
        }
        Ok(Self::with_lock(pool, db_path, config, None))
    }

    /// The application over a pool already opened on `db_path`; it holds no lock, so the caller
    /// keeps the file to itself (prefer [`App::open`]).
    pub fn from_pool(db: SqlitePool, db_path: &Path, config: Config) -> Self {
        Self::with_lock(db, db_path, config, None)
    }

    fn with_lock(db: SqlitePool, db_path: &Path, config: Config, lock: Option<store::DbLock>) -> Self {
        Self {
            inner: Arc::new(Inner {
                db,
                db_path: db_path.to_path_buf(),
                import_slots: tokio::sync::Semaphore::new(config.import_slots.max(1)),
                config,
                kept: summary::KeptFigures::default(),
                summary_locks: summary::AuditLocks::default(),
                refresh_queued: Mutex::default(),
                imports: Mutex::default(),
                _lock: lock,
            }),
        }
    }

    /// The database.
    pub fn db(&self) -> &SqlitePool {
        &self.inner.db
    }

    /// The database file.
    pub fn db_path(&self) -> &Path {
        &self.inner.db_path
    }

    pub fn config(&self) -> &Config {
        &self.inner.config
    }

    /// Write a consistent copy of the database to `out`, also while the server runs.
    pub async fn backup(&self, out: &Path) -> Result<()> {
        Ok(store::backup(&self.inner.db, out).await?)
    }

    /// Close the pool (the benches reopen the file afterwards).
    pub async fn close(&self) {
        self.inner.db.close().await;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::site::{CompressorInput, SitePatch};
    use serde_json::json;

    /// Two hours at 10 s of one compressor drawing a constant `kw`, with flow and pressure.
    fn logger_file(path: &Path, kw: f64) {
        let mut csv = String::from("Time,C1 kW,Flow m3/min,Header bar\n");
        let t0 = jiff::Timestamp::from_second(1_767_571_200).unwrap(); // 2026-01-05 00:00 UTC
        for i in 0..=720 {
            let t = t0 + jiff::SignedDuration::from_secs(10 * i);
            csv.push_str(&format!("{t},{kw},6,7\n"));
        }
        std::fs::write(path, csv).unwrap();
    }

    /// Each application keeps its own frame and data figures: two databases whose audit, upload,
    /// channel ids and spans are all equal, but whose readings differ, never serve each other's
    /// figures, also after an edit that re-prices the kept figures (the statics this replaced
    /// needed the database file's name in their keys for that).
    #[tokio::test(flavor = "multi_thread", worker_threads = 2)]
    async fn two_applications_keep_their_own_figures() {
        let dir = std::env::temp_dir().join(format!("airledger-app-{}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let mapping: crate::ingest::Mapping = serde_json::from_value(json!({
            "delimiter": ",", "decimal": ".", "header_line": 1,
            "timestamp": {"column": "Time", "format": "rfc3339", "timezone": "UTC"},
            "columns": [
                {"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"},
                {"column": "Flow m3/min", "quantity": "flow", "unit": "m3_min"},
                {"column": "Header bar", "quantity": "pressure", "unit": "bar_g"}]
        }))
        .unwrap();
        let c1: CompressorInput = serde_json::from_value(json!({
            "tag": "C1", "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
            "rated_power_kw": 75, "rated_flow_m3_min": 12, "rated_pressure_bar_g": 7.5}))
        .unwrap();
        let mut plants = vec![];
        for (i, kw) in [40.0, 60.0].into_iter().enumerate() {
            let db = dir.join(format!("plant{i}.sqlite"));
            let app = App::open(&db, Config::beside(&db)).await.unwrap();
            let id = app.create_audit("plant", &SitePatch::default()).await.unwrap();
            app.save_compressor(id, 0, &c1).await.unwrap();
            let file = dir.join(format!("plant{i}.csv"));
            logger_file(&file, kw);
            app.import_path(id, &file, mapping.clone(), false, Arc::default()).await.unwrap();
            plants.push((app, id, kw));
        }
        let price: SitePatch = serde_json::from_value(json!({"electricity_price_per_kwh": 0.2})).unwrap();
        for round in 0..2 {
            for (app, id, kw) in &plants {
                if round == 1 {
                    // A price edit: the summary is priced again from the kept data figures.
                    app.update_audit(*id, None, None, None, &price).await.unwrap();
                }
                let s = app.summary(*id, None).await.unwrap();
                let s = s.figures().expect("the plant has readings");
                // Constant power over the file's two hours, within one logging interval.
                assert!(
                    (s.system.energy_kwh - kw * 2.0).abs() <= kw * 10.0 / 3600.0 + 1e-9,
                    "round {round}: {} kWh logged for {kw} kW over 2 h",
                    s.system.energy_kwh
                );
                assert!(
                    (s.system.mean_power_kw - kw).abs() < 1e-6,
                    "round {round}: {}",
                    s.system.mean_power_kw
                );
            }
        }
        for (app, _, _) in &plants {
            app.close().await;
        }
        let _ = std::fs::remove_dir_all(&dir);
    }
}
