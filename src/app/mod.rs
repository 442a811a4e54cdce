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
*/

pub mod audits;
pub mod demo_install;
pub mod error;
pub mod fieldtests;
pub mod imports;
pub mod scenarios;
pub mod summary;

use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex};

use sqlx::SqlitePool;

pub use audits::AuditBundle;
pub use error::{Error, Result};
pub use summary::{build_id, AuditSummary};

use crate::store;

/// Settings of the application fixed at start-up.
#[derive(Debug, Clone)]
pub struct Config {
    /// Where files are spooled before import (uploads, the demo's logger files).
    pub spool_dir: PathBuf,
    /// At most this many uploads parse at once; the others wait (their progress says so).
    pub import_slots: usize,
}

impl Config {
    /// The spool folder beside the database file, two import slots.
    pub fn beside(db_path: &Path) -> Self {
        let dir = db_path.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
        Self { spool_dir: dir.join(".airledger-spool"), import_slots: 2 }
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
    /// Imports running now, by the token the client chose, for progress bars.
    imports: Mutex<HashMap<String, Arc<store::import::Progress>>>,
    /// At most `config.import_slots` uploads parse at once.
    import_slots: tokio::sync::Semaphore,
}

impl App {
    /// Open (creating and migrating if needed) the database at `db_path`.
    pub async fn open(db_path: &Path, config: Config) -> Result<Self> {
        let pool = store::open(db_path).await?;
        Ok(Self::from_pool(pool, db_path, config))
    }

    /// The application over a pool already opened by `store::open` on `db_path`.
    pub fn from_pool(db: SqlitePool, db_path: &Path, config: Config) -> Self {
        Self {
            inner: Arc::new(Inner {
                db,
                db_path: db_path.to_path_buf(),
                import_slots: tokio::sync::Semaphore::new(config.import_slots.max(1)),
                config,
                kept: summary::KeptFigures::default(),
                summary_locks: summary::AuditLocks::default(),
                imports: Mutex::default(),
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
