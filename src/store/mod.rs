/*!
Storage: one SQLite file per database, through sqlx.

- WAL journal, foreign keys on, `synchronous = NORMAL`; every write transaction starts with
  `BEGIN IMMEDIATE` so that two writers queue instead of failing half-way.
- Migrations are embedded (`sqlx::migrate!()`) and applied at start-up.
- One process owns a database file at a time ([`open`]): it holds an exclusive lock on the lock file
  beside it (`<db>.lock`, see [`DbLock`]), which names its pid and start time. A second owner is
  refused at once with [`StoreError::InUse`], naming the file and that pid; the kernel drops the lock
  when the owner ends, however it ends (also on `kill -9`), so a stale lock file never blocks.
- At start-up `PRAGMA quick_check` must say `ok`, and uploads a crash left in state `importing` are
  removed with everything they wrote: nobody ever sees a partial upload. This clean-up runs only with
  the lock held, so those rows can only be a dead process's, never a live server's import in flight.
- A reader beside the owner ([`open_shared`], for `backup` and `report`) takes no lock it keeps,
  and neither migrates nor cleans up while an owner holds the file.

This layer holds no physics: it stores and fetches records, chunks and rollups.
*/

pub mod audits;
pub mod basis;
pub mod chunk;
pub mod import;
pub mod read;
pub mod rollup;
mod varint;

use std::fs::{File, TryLockError};
use std::io::{Read, Seek, SeekFrom, Write};
use std::path::{Path, PathBuf};
use std::str::FromStr;
use std::time::Duration;

use sqlx::sqlite::{SqliteConnectOptions, SqliteJournalMode, SqlitePoolOptions, SqliteSynchronous};
use sqlx::{Sqlite, SqlitePool, Transaction};

/// Why the database could not be opened or used.
#[derive(Debug, thiserror::Error)]
pub enum StoreError {
    /// SQLite or sqlx reported a failure.
    #[error("database error: {0}")]
    Sqlx(#[from] sqlx::Error),
    /// A migration failed to apply.
    #[error("migration failed: {0}")]
    Migrate(#[from] sqlx::migrate::MigrateError),
    /// `PRAGMA quick_check` found damage.
    #[error("the database file {path} is damaged ({detail}); restore it from a backup")]
    Damaged { path: String, detail: String },
    /// A stored chunk or rollup could not be decoded.
    #[error("{0}")]
    Chunk(#[from] chunk::ChunkError),
    /// Another live process owns the database file (its lock file is locked).
    #[error(
        "the database file {path} is in use by another airledger process ({holder}); stop that \
         process first, or give another --db file (lock file {lock})"
    )]
    InUse { path: String, lock: String, holder: String },
    /// The lock file beside the database could not be opened or locked.
    #[error("cannot lock the database file {path} (lock file {lock}): {source}")]
    Lock { path: String, lock: String, source: std::io::Error },
}

/// The exclusive hold of this process on one database file, for as long as the value lives.
///
/// It is an OS file lock (`flock` on Unix, `LockFileEx` on Windows) on `<db>.lock` beside the
/// database, whose text is the owner's pid and start time, for the message a second owner gets.
/// The lock, not the file, is what counts: the kernel releases it when the process ends, however it
/// ends, so the lock file is left in place (removing it would let a third process lock a new file
/// while a second still waits on the old one).
#[derive(Debug)]
pub struct DbLock {
    _file: File,
    path: PathBuf,
}

impl DbLock {
    /// The lock file.
    pub fn path(&self) -> &Path {
        &self.path
    }
}

/// The database file's path with its folder resolved (symbolic links, `..`), so that two spellings
/// of one file name one lock file and one spool folder; as given when the folder does not exist.
pub fn canonical_db_path(db: &Path) -> PathBuf {
    if let Ok(p) = std::fs::canonicalize(db) {
        return p;
    }
    let parent = db.parent().filter(|p| !p.as_os_str().is_empty()).unwrap_or(Path::new("."));
    match (std::fs::canonicalize(parent), db.file_name()) {
        (Ok(dir), Some(name)) => dir.join(name),
        _ => db.to_path_buf(),
    }
}

/// The lock file of the database at `db`: `<db>.lock` beside it.
pub fn lock_path(db: &Path) -> PathBuf {
    let mut name = canonical_db_path(db).into_os_string();
    name.push(".lock");
    PathBuf::from(name)
}

/// Take the exclusive lock of the database at `db`, or say at once who holds it.
pub fn lock(db: &Path) -> Result<DbLock, StoreError> {
    let lock = lock_path(db);
    let io = |source: std::io::Error| StoreError::Lock {
        path: db.display().to_string(),
        lock: lock.display().to_string(),
        source,
    };
    // Not truncated on open: the text is the holder's until the lock is ours.
    let mut file =
        File::options().read(true).write(true).create(true).truncate(false).open(&lock).map_err(io)?;
    match file.try_lock() {
        Ok(()) => {}
        Err(TryLockError::WouldBlock) => {
            return Err(StoreError::InUse {
                path: db.display().to_string(),
                lock: lock.display().to_string(),
                holder: holder(&mut file),
            })
        }
        Err(TryLockError::Error(e)) => return Err(io(e)),
    }
    let text = format!("pid {}\nstarted {}\n", std::process::id(), now_rfc3339());
    file.set_len(0).map_err(io)?;
    file.seek(SeekFrom::Start(0)).map_err(io)?;
    file.write_all(text.as_bytes()).map_err(io)?;
    file.flush().map_err(io)?;
    Ok(DbLock { _file: file, path: lock })
}

/// Who holds a locked lock file, from its text: `pid N, started T`. The holder writes its text just
/// after it takes the lock, so an empty file is read again for a moment before giving up.
fn holder(file: &mut File) -> String {
    for _ in 0..20 {
        let mut text = String::new();
        let _ = file.seek(SeekFrom::Start(0));
        let _ = file.read_to_string(&mut text);
        let field = |key: &str| text.lines().find_map(|l| l.strip_prefix(key).map(|v| v.trim().to_string()));
        if let Some(pid) = field("pid ") {
            return match field("started ") {
                Some(t) => format!("pid {pid}, started {t}"),
                None => format!("pid {pid}"),
            };
        }
        std::thread::sleep(Duration::from_millis(10));
    }
    "a process whose pid could not be read".to_string()
}

/// Own the database at `path`: take its lock ([`lock`]; refused at once if another process holds
/// it), then open it (creating it if missing), check it, migrate it and remove what a dead process
/// left unfinished. The pool is the caller's for as long as it keeps the returned [`DbLock`].
pub async fn open(path: &Path) -> Result<(SqlitePool, DbLock), StoreError> {
    let lock = lock(path)?;
    let pool = connect(path, true).await?;
    sqlx::migrate!("./migrations").run(&pool).await?;
    import::remove_unfinished(&pool).await?;
    basis::backfill(&pool).await?;
    Ok((pool, lock))
}

/// Open the database at `path` beside an owner that may be running (a backup, a report): when no
/// process holds the file, as [`open`] does, returning the lock for the caller to release when it
/// has cleaned up what it owns; when a live process holds it, without the lock, without migrating
/// and without any clean-up (the `importing` rows are that process's imports in flight), and
/// without creating the file.
pub async fn open_shared(path: &Path) -> Result<(SqlitePool, Option<DbLock>), StoreError> {
    match open(path).await {
        Ok((pool, lock)) => Ok((pool, Some(lock))),
        Err(StoreError::InUse { .. }) => Ok((connect(path, false).await?, None)),
        Err(e) => Err(e),
    }
}

/// A pool over the database at `path`, its `PRAGMA quick_check` passed.
async fn connect(path: &Path, create: bool) -> Result<SqlitePool, StoreError> {
    let opts = SqliteConnectOptions::from_str(&format!("sqlite://{}", path.display()))?
        .create_if_missing(create)
        .journal_mode(SqliteJournalMode::Wal)
        .synchronous(SqliteSynchronous::Normal)
        .foreign_keys(true)
        .busy_timeout(Duration::from_secs(30))
        // Memory and disk set deliberately, not left to the build's defaults (DEVELOPERS.md,
        // "Storage design and why"): four connections of 2 MB of page cache each, no memory map (its pages
        // count in the server's RSS as the file grows), a checkpoint every 1000 pages of WAL, and
        // the WAL cut back to 16 MB after each, so a year's import does not leave a WAL its size.
        .pragma("cache_size", "-2000")
        .pragma("mmap_size", "0")
        .pragma("wal_autocheckpoint", "1000")
        .pragma("journal_size_limit", "16777216")
        .pragma("temp_store", "memory");
    let pool = SqlitePoolOptions::new().max_connections(4).connect_with(opts).await?;
    let check: String = sqlx::query_scalar("PRAGMA quick_check").fetch_one(&pool).await?;
    if check != "ok" {
        return Err(StoreError::Damaged { path: path.display().to_string(), detail: check });
    }
    Ok(pool)
}

/// Begin a write transaction that takes the write lock at once.
pub async fn begin_write(pool: &SqlitePool) -> Result<Transaction<'static, Sqlite>, sqlx::Error> {
    pool.begin_with("BEGIN IMMEDIATE").await
}

/// The current time as RFC 3339, for `created_at` columns.
pub fn now_rfc3339() -> String {
    jiff::Timestamp::now().round(jiff::Unit::Second).unwrap_or(jiff::Timestamp::now()).to_string()
}

/// A consistent copy of the database while the server may be running (`VACUUM INTO`).
pub async fn backup(pool: &SqlitePool, out: &Path) -> Result<(), StoreError> {
    sqlx::query("VACUUM INTO ?").bind(out.display().to_string()).execute(pool).await?;
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Schema changes are tested from the first shipped schema forward on a database with data.
    #[tokio::test]
    async fn migrations_apply_forward_from_the_first_schema_keeping_data() {
        let dir = std::env::temp_dir().join(format!("airledger-migrate-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).unwrap();
        let path = dir.join("m.sqlite");
        let opts = SqliteConnectOptions::from_str(&format!("sqlite://{}", path.display()))
            .unwrap()
            .create_if_missing(true)
            .foreign_keys(true);
        let pool = SqlitePoolOptions::new().max_connections(1).connect_with(opts).await.unwrap();
        // The first shipped schema only, with data in it.
        let all = sqlx::migrate!("./migrations");
        let mut first = sqlx::migrate!("./migrations");
        first.migrations = std::borrow::Cow::Owned(all.migrations.iter().take(1).cloned().collect());
        first.run(&pool).await.unwrap();
        sqlx::query("INSERT INTO audit (name, created_at) VALUES ('kept', '2026-01-01T00:00:00Z')")
            .execute(&pool)
            .await
            .unwrap();
        sqlx::query(
            "INSERT INTO compressor (audit_id, tag, kind, control, cooling, rated_power_kw, rated_flow_m3_min, \
             rated_pressure_bar_g, unloaded_power_fraction) VALUES (1, 'C1', 'lubricated_screw', 'load_unload', 'air', 55, 9.5, 7.5, 0.25)",
        )
        .execute(&pool)
        .await
        .unwrap();
        // An upload of the first schema: a gauge pressure and a normal flow, stored with the site's
        // air applied (1000 m) and the air not recorded.
        sqlx::query("UPDATE audit SET altitude_m = 1000 WHERE id = 1").execute(&pool).await.unwrap();
        let mapping = r#"{"timestamp": {"column": "Time", "format": "rfc3339"}, "columns": [
            {"column": "Header", "quantity": "pressure", "unit": "bar_g"},
            {"column": "Flow", "quantity": "flow", "unit": "Nm3_h"},
            {"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"}]}"#;
        sqlx::query(
            "INSERT INTO upload (audit_id, filename, sha256, bytes, state, mapping, quality, created_at) \
             VALUES (1, 'old.csv', 'x', 1, 'complete', ?, '{\"file\": {\"median_interval_s\": 60.0}}', 'now')",
        )
        .bind(mapping)
        .execute(&pool)
        .await
        .unwrap();
        for (id, q, k, label) in
            [(1, "pressure", None, "Header"), (2, "flow", None, "Flow"), (3, "power", Some(1), "")]
        {
            sqlx::query("INSERT INTO channel (id, audit_id, quantity, compressor_id, label, unit) VALUES (?, 1, ?, ?, ?, '')")
                .bind(id)
                .bind(q)
                .bind(k)
                .bind(label)
                .execute(&pool)
                .await
                .unwrap();
            sqlx::query("INSERT INTO upload_channel VALUES (1, ?, 0, 3600000, 61)")
                .bind(id)
                .execute(&pool)
                .await
                .unwrap();
        }
        pool.close().await;
        // Then open as the server does: every later migration applies and the data is there.
        let (pool, _lock) = open(&path).await.unwrap();
        let name: String =
            sqlx::query_scalar("SELECT name FROM audit WHERE id = 1").fetch_one(&pool).await.unwrap();
        assert_eq!(name, "kept");
        let n: i64 = sqlx::query_scalar("SELECT count(*) FROM compressor").fetch_one(&pool).await.unwrap();
        assert_eq!(n, 1);
        let applied: i64 =
            sqlx::query_scalar("SELECT count(*) FROM _sqlx_migrations").fetch_one(&pool).await.unwrap();
        assert_eq!(applied as usize, all.migrations.len());
        assert!(all.migrations.len() >= 2, "there is a later migration to apply");
        // The old upload's channels got their basis from its mapping and the step its import
        // applied (the site's air now), so they read exactly as stored; its interval came from
        // the quality report.
        let air = audits::get_audit(&pool, 1).await.unwrap().unwrap().site.air();
        let forms: Vec<(String, i64)> =
            sqlx::query_as("SELECT stored_form, interval_ms FROM upload_channel ORDER BY channel_id")
                .fetch_all(&pool)
                .await
                .unwrap();
        let form = |i: usize| serde_json::from_str::<crate::core::basis::StoredForm>(&forms[i].0).unwrap();
        use crate::core::basis::Basis;
        assert_eq!(form(0).basis, Basis::Gauge);
        assert_eq!(form(0).applied_offset, air.atmosphere.0);
        assert!(matches!(form(1).basis, Basis::Reference { .. }));
        assert_eq!(form(2).basis, Basis::Site);
        for (i, (_, interval_ms)) in forms.iter().enumerate() {
            assert_eq!(form(i).to_site(&air), (1.0, 0.0));
            assert_eq!(*interval_ms, 60_000);
        }
        pool.close().await;
        let _ = std::fs::remove_dir_all(&dir);
    }

    /// A second owner of one database file is refused at once, naming the file and the first
    /// owner's pid (here this very process: two `flock`s on two opens of one file conflict also
    /// within a process), under another spelling of the path too; once the first lock is dropped,
    /// the file can be owned again.
    #[test]
    fn a_second_owner_of_a_database_file_is_refused_until_the_first_lets_go() {
        let dir = std::env::temp_dir().join(format!("airledger-lock-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(dir.join("sub")).unwrap();
        let db = dir.join("a.sqlite");
        let first = lock(&db).unwrap();
        assert_eq!(first.path(), lock_path(&db));
        for spelling in [db.clone(), dir.join("sub").join("..").join("a.sqlite")] {
            let e = lock(&spelling).unwrap_err();
            let text = e.to_string();
            assert!(matches!(e, StoreError::InUse { .. }), "{text}");
            assert!(text.contains(&spelling.display().to_string()), "{text}");
            assert!(text.contains(&format!("pid {},", std::process::id())), "{text}");
        }
        drop(first);
        let again = lock(&db).unwrap();
        let text = std::fs::read_to_string(again.path()).unwrap();
        assert!(text.starts_with(&format!("pid {}\nstarted ", std::process::id())), "{text}");
        drop(again);
        let _ = std::fs::remove_dir_all(&dir);
    }
}
