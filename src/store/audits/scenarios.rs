//! What-if scenarios as stored: their changes, their last replay and the one marked as the
//! proposal. A scenario changes no logged figure: its writes drop the cached summary (the
//! ranking may change) instead of bumping the audit's revision.

use super::*;

/// A stored what-if scenario with its result.
#[derive(Debug, Clone, Serialize)]
pub struct ScenarioRecord {
    pub id: i64,
    pub name: String,
    pub changes: serde_json::Value,
    pub result: serde_json::Value,
    pub revision: i64,
    pub created_at: String,
    /// Marked as the proposal: only this replay may enter the report's ranking.
    pub proposal: bool,
}

pub async fn scenarios(pool: &SqlitePool, audit_id: i64) -> Result<Vec<ScenarioRecord>, StoreError> {
    let rows = sqlx::query(
        "SELECT id, name, changes, result, revision, created_at, proposal FROM scenario WHERE audit_id = ? ORDER BY id",
    )
    .bind(audit_id)
    .fetch_all(pool)
    .await?;
    Ok(rows
        .iter()
        .map(|r| {
            let c: String = r.get("changes");
            let o: String = r.get("result");
            ScenarioRecord {
                id: r.get("id"),
                name: r.get("name"),
                changes: serde_json::from_str(&c).unwrap_or_default(),
                result: serde_json::from_str(&o).unwrap_or_default(),
                revision: r.get("revision"),
                created_at: r.get("created_at"),
                proposal: r.get::<i64, _>("proposal") != 0,
            }
        })
        .collect())
}

/// A scenario's stored replay, for [`add_scenario`] and [`replace_scenario`].
pub struct ScenarioWrite<'a> {
    pub name: &'a str,
    pub changes: &'a serde_json::Value,
    pub result: &'a serde_json::Value,
    /// The audit revision it was replayed on.
    pub revision: i64,
    pub proposal: bool,
}

/// Store a scenario. It does not bump the revision (the audit's data and the other scenarios stay
/// current), but it drops the cached summary, since the proposed scenario may become the
/// `improve_control` measure. A scenario stored as the proposal withdraws any other.
pub async fn add_scenario(
    pool: &SqlitePool,
    audit_id: i64,
    w: &ScenarioWrite<'_>,
) -> Result<i64, StoreError> {
    let mut tx = begin_write(pool).await?;
    let id = sqlx::query(
        "INSERT INTO scenario (audit_id, name, changes, result, revision, created_at) VALUES (?, ?, ?, ?, ?, ?)",
    )
    .bind(audit_id)
    .bind(w.name)
    .bind(w.changes.to_string())
    .bind(w.result.to_string())
    .bind(w.revision)
    .bind(now_rfc3339())
    .execute(&mut *tx)
    .await?
    .last_insert_rowid();
    set_proposal(&mut tx, audit_id, id, w.proposal).await?;
    tx.commit().await?;
    Ok(id)
}

/// Replace a scenario's changes and replay (`PUT`); `false` if the audit has no such scenario.
pub async fn replace_scenario(
    pool: &SqlitePool,
    audit_id: i64,
    id: i64,
    w: &ScenarioWrite<'_>,
) -> Result<bool, StoreError> {
    let mut tx = begin_write(pool).await?;
    let n = sqlx::query(
        "UPDATE scenario SET name = ?, changes = ?, result = ?, revision = ? WHERE id = ? AND audit_id = ?",
    )
    .bind(w.name)
    .bind(w.changes.to_string())
    .bind(w.result.to_string())
    .bind(w.revision)
    .bind(id)
    .bind(audit_id)
    .execute(&mut *tx)
    .await?
    .rows_affected();
    if n > 0 {
        set_proposal(&mut tx, audit_id, id, w.proposal).await?;
    }
    tx.commit().await?;
    Ok(n > 0)
}

/// Rename a scenario or mark it as the proposal (or withdraw it) without replaying it; `false` if
/// the audit has no such scenario.
pub async fn edit_scenario(
    pool: &SqlitePool,
    audit_id: i64,
    id: i64,
    name: Option<&str>,
    proposal: Option<bool>,
) -> Result<bool, StoreError> {
    let mut tx = begin_write(pool).await?;
    let exists: Option<i64> = sqlx::query_scalar("SELECT id FROM scenario WHERE id = ? AND audit_id = ?")
        .bind(id)
        .bind(audit_id)
        .fetch_optional(&mut *tx)
        .await?;
    if exists.is_none() {
        return Ok(false);
    }
    if let Some(name) = name {
        sqlx::query("UPDATE scenario SET name = ? WHERE id = ?")
            .bind(name)
            .bind(id)
            .execute(&mut *tx)
            .await?;
    }
    match proposal {
        Some(p) => set_proposal(&mut tx, audit_id, id, p).await?,
        None => drop_summary(&mut tx, audit_id).await?,
    }
    tx.commit().await?;
    Ok(true)
}

pub async fn delete_scenario(pool: &SqlitePool, audit_id: i64, id: i64) -> Result<bool, StoreError> {
    delete_owned(pool, "scenario", audit_id, id, After::Repriced).await
}

/// Mark scenario `id` as the audit's one proposal (withdrawing any other), or withdraw it; the
/// cached summary goes, as its ranking may change.
async fn set_proposal(
    tx: &mut sqlx::SqliteConnection,
    audit_id: i64,
    id: i64,
    proposal: bool,
) -> Result<(), sqlx::Error> {
    if proposal {
        sqlx::query("UPDATE scenario SET proposal = (id = ?) WHERE audit_id = ?")
            .bind(id)
            .bind(audit_id)
            .execute(&mut *tx)
            .await?;
    } else {
        sqlx::query("UPDATE scenario SET proposal = 0 WHERE id = ?").bind(id).execute(&mut *tx).await?;
    }
    drop_summary(tx, audit_id).await
}
