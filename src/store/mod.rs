/*!
Storage: one SQLite file per database, through sqlx.

- WAL journal, foreign keys on, `synchronous = NORMAL`; every write transaction starts with
  `BEGIN IMMEDIATE` so that two writers queue instead of failing half-way.
- Migrations are embedded (`sqlx::migrate!()`) and applied at start-up.
- At start-up `PRAGMA quick_check` must say `ok`, and uploads a crash left in state `importing` are
  removed with everything they wrote: nobody ever sees a partial upload.

This layer holds no physics: it stores and fetches records, chunks and rollups.
*/

pub mod audits;
pub mod chunk;
pub mod import;
pub mod read;
pub mod rollup;
mod varint;

use std::path::Path;
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
}

/// Open (creating if missing) the database at `path`, check it, migrate it, clean it.
pub async fn open(path: &Path) -> Result<SqlitePool, StoreError> {
    let opts = SqliteConnectOptions::from_str(&format!("sqlite://{}", path.display()))?
        .create_if_missing(true)
        .journal_mode(SqliteJournalMode::Wal)
        .synchronous(SqliteSynchronous::Normal)
        .foreign_keys(true)
        .busy_timeout(Duration::from_secs(30))
        .pragma("cache_size", "-16000")
        .pragma("temp_store", "memory");
    let pool = SqlitePoolOptions::new().max_connections(6).connect_with(opts).await?;
    let check: String = sqlx::query_scalar("PRAGMA quick_check").fetch_one(&pool).await?;
    if check != "ok" {
        return Err(StoreError::Damaged { path: path.display().to_string(), detail: check });
    }
    sqlx::migrate!("./migrations").run(&pool).await?;
    import::remove_unfinished(&pool).await?;
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
        pool.close().await;
        // Then open as the server does: every later migration applies and the data is there.
        let pool = open(&path).await.unwrap();
        let name: String =
            sqlx::query_scalar("SELECT name FROM audit WHERE id = 1").fetch_one(&pool).await.unwrap();
        assert_eq!(name, "kept");
        let n: i64 = sqlx::query_scalar("SELECT count(*) FROM compressor").fetch_one(&pool).await.unwrap();
        assert_eq!(n, 1);
        let applied: i64 =
            sqlx::query_scalar("SELECT count(*) FROM _sqlx_migrations").fetch_one(&pool).await.unwrap();
        assert_eq!(applied as usize, all.migrations.len());
        assert!(all.migrations.len() >= 2, "there is a later migration to apply");
        pool.close().await;
        let _ = std::fs::remove_dir_all(&dir);
    }
}
