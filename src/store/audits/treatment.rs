//! Treatment and end-use records as stored (`treatment_item`): dryers, filters, drains and end uses,
//! each a validated record's JSON; every write bumps the audit's revision.

use super::*;

/// One stored treatment or end-use record (`treatment_item`): `kind` is `dryer`, `drain` or
/// `end_use`, `body` the validated record as JSON (API.md field names).
#[derive(Debug, Clone)]
pub struct TreatmentItemRecord {
    pub id: i64,
    pub kind: String,
    pub body: String,
}

pub async fn treatment_items(
    pool: &SqlitePool,
    audit_id: i64,
) -> Result<Vec<TreatmentItemRecord>, StoreError> {
    let rows = sqlx::query("SELECT id, kind, body FROM treatment_item WHERE audit_id = ? ORDER BY id")
        .bind(audit_id)
        .fetch_all(pool)
        .await?;
    Ok(rows
        .iter()
        .map(|r| TreatmentItemRecord { id: r.get("id"), kind: r.get("kind"), body: r.get("body") })
        .collect())
}

/// Add a treatment or end-use record; the audit's revision goes up with it (the figures change).
pub async fn add_treatment_item(
    pool: &SqlitePool,
    audit_id: i64,
    kind: &'static str,
    body: &str,
) -> Result<i64, StoreError> {
    let q = sqlx::query("INSERT INTO treatment_item (audit_id, kind, body, created_at) VALUES (?, ?, ?, ?)")
        .bind(audit_id)
        .bind(kind)
        .bind(body)
        .bind(now_rfc3339());
    Ok(revise(pool, audit_id, q).await?.last_insert_rowid())
}

/// Replace a record's body; `false` if the audit has no such record of that kind.
pub async fn update_treatment_item(
    pool: &SqlitePool,
    audit_id: i64,
    kind: &'static str,
    id: i64,
    body: &str,
) -> Result<bool, StoreError> {
    let q = sqlx::query("UPDATE treatment_item SET body = ? WHERE id = ? AND audit_id = ? AND kind = ?")
        .bind(body)
        .bind(id)
        .bind(audit_id)
        .bind(kind);
    Ok(revise(pool, audit_id, q).await?.rows_affected() > 0)
}

/// Delete a record; `false` if the audit has no such record of that kind.
pub async fn delete_treatment_item(
    pool: &SqlitePool,
    audit_id: i64,
    kind: &'static str,
    id: i64,
) -> Result<bool, StoreError> {
    let q = sqlx::query("DELETE FROM treatment_item WHERE id = ? AND audit_id = ? AND kind = ?")
        .bind(id)
        .bind(audit_id)
        .bind(kind);
    Ok(revise(pool, audit_id, q).await?.rows_affected() > 0)
}
