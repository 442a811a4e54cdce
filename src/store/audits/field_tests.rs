//! Field tests as stored: each test's input as typed (SI) and its computed result; every write
//! bumps the audit's revision, since the leak figures follow the tests.

use super::*;

/// A stored field test with its computed result.
#[derive(Debug, Clone, Serialize)]
pub struct FieldTestRecord {
    pub id: i64,
    pub kind: String,
    pub input: serde_json::Value,
    pub result: serde_json::Value,
    pub created_at: String,
}

pub async fn field_tests(pool: &SqlitePool, audit_id: i64) -> Result<Vec<FieldTestRecord>, StoreError> {
    let rows = sqlx::query(
        "SELECT id, kind, input, result, created_at FROM field_test WHERE audit_id = ? ORDER BY id",
    )
    .bind(audit_id)
    .fetch_all(pool)
    .await?;
    Ok(rows
        .iter()
        .map(|r| {
            let i: String = r.get("input");
            let o: String = r.get("result");
            FieldTestRecord {
                id: r.get("id"),
                kind: r.get("kind"),
                input: serde_json::from_str(&i).unwrap_or_default(),
                result: serde_json::from_str(&o).unwrap_or_default(),
                created_at: r.get("created_at"),
            }
        })
        .collect())
}

pub async fn add_field_test(
    pool: &SqlitePool,
    audit_id: i64,
    kind: &str,
    input: &serde_json::Value,
    result: &serde_json::Value,
) -> Result<i64, StoreError> {
    let q = sqlx::query(
        "INSERT INTO field_test (audit_id, kind, input, result, created_at) VALUES (?, ?, ?, ?, ?)",
    )
    .bind(audit_id)
    .bind(kind)
    .bind(input.to_string())
    .bind(result.to_string())
    .bind(now_rfc3339());
    Ok(revise(pool, audit_id, q).await?.last_insert_rowid())
}

/// Replace a field test's input and result (an edit); `false` if the audit has no such test.
pub async fn replace_field_test(
    pool: &SqlitePool,
    audit_id: i64,
    id: i64,
    kind: &str,
    input: &serde_json::Value,
    result: &serde_json::Value,
) -> Result<bool, StoreError> {
    let q =
        sqlx::query("UPDATE field_test SET kind = ?, input = ?, result = ? WHERE id = ? AND audit_id = ?")
            .bind(kind)
            .bind(input.to_string())
            .bind(result.to_string())
            .bind(id)
            .bind(audit_id);
    Ok(revise(pool, audit_id, q).await?.rows_affected() > 0)
}

/// Store field tests' results evaluated again (`(id, result)`), in one transaction that bumps the
/// audit's revision once.
pub async fn set_field_test_results(
    pool: &SqlitePool,
    audit_id: i64,
    results: &[(i64, serde_json::Value)],
) -> Result<(), StoreError> {
    let mut tx = begin_write(pool).await?;
    for (id, result) in results {
        sqlx::query("UPDATE field_test SET result = ? WHERE id = ? AND audit_id = ?")
            .bind(result.to_string())
            .bind(id)
            .bind(audit_id)
            .execute(&mut *tx)
            .await?;
    }
    bump(&mut tx, audit_id).await?;
    tx.commit().await?;
    Ok(())
}

pub async fn delete_field_test(pool: &SqlitePool, audit_id: i64, id: i64) -> Result<bool, StoreError> {
    delete_owned(pool, "field_test", audit_id, id, After::Revised).await
}
