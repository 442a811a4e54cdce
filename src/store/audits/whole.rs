//! A whole audit deleted at once: the audit's row, and through the schema's cascades everything
//! that hangs from it (compressors, receivers, uploads with their channels, readings, rollups and
//! kept originals, field tests, scenarios, treatment records, edited costs, the measure plan and
//! the cached summary), in one transaction. The remembered mappings stay: they belong to a file
//! layout, not to an audit, and another audit's next file of that layout is read with them.

use super::*;

/// Counted rows of what goes with an audit, for the confirmation page.
#[derive(Debug, Clone, Copy, Default)]
pub struct AuditContents {
    pub uploads: i64,
    pub readings: i64,
    pub field_tests: i64,
    pub scenarios: i64,
    pub treatment_items: i64,
}

pub async fn audit_contents(pool: &SqlitePool, audit_id: i64) -> Result<AuditContents, StoreError> {
    let r = sqlx::query(
        "SELECT \
           (SELECT COUNT(*) FROM upload WHERE audit_id = ?1 AND state = 'complete') AS uploads, \
           (SELECT COALESCE(SUM(readings), 0) FROM upload WHERE audit_id = ?1 AND state = 'complete') AS readings, \
           (SELECT COUNT(*) FROM field_test WHERE audit_id = ?1) AS tests, \
           (SELECT COUNT(*) FROM scenario WHERE audit_id = ?1) AS scenarios, \
           (SELECT COUNT(*) FROM treatment_item WHERE audit_id = ?1) AS items",
    )
    .bind(audit_id)
    .fetch_one(pool)
    .await?;
    Ok(AuditContents {
        uploads: r.get("uploads"),
        readings: r.get("readings"),
        field_tests: r.get("tests"),
        scenarios: r.get("scenarios"),
        treatment_items: r.get("items"),
    })
}

/// Delete the audit with everything it holds, in one transaction; `false` if there is no such
/// audit. Foreign keys are on for every connection (`store::connect`), so the cascades run.
pub async fn delete_audit(pool: &SqlitePool, audit_id: i64) -> Result<bool, StoreError> {
    let mut tx = begin_write(pool).await?;
    let n =
        sqlx::query("DELETE FROM audit WHERE id = ?").bind(audit_id).execute(&mut *tx).await?.rows_affected();
    tx.commit().await?;
    Ok(n > 0)
}
