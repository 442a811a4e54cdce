//! A compressor's rename carried into the stored mappings of the files that hold its readings.

use crate::store::StoreError;

/// A renamed compressor's new tag in the stored mappings of the files that hold its readings, so
/// that the files table says which machine a column is read as by the name it has now, and a
/// correction of the mapping (which reads the stored mapping) finds the machine. Only the uploads
/// holding a channel of this compressor are touched: a stale tag of a deleted machine stays.
pub(super) async fn retag_mappings(
    tx: &mut sqlx::Transaction<'_, sqlx::Sqlite>,
    compressor_id: i64,
    old: &str,
    new: &str,
) -> Result<(), StoreError> {
    let rows: Vec<(i64, String)> = sqlx::query_as(
        "SELECT DISTINCT u.id, u.mapping FROM upload u JOIN upload_channel uc ON uc.upload_id = u.id \
         JOIN channel ch ON ch.id = uc.channel_id WHERE ch.compressor_id = ?",
    )
    .bind(compressor_id)
    .fetch_all(&mut **tx)
    .await?;
    for (upload_id, text) in rows {
        let Ok(mut mapping) = serde_json::from_str::<serde_json::Value>(&text) else { continue };
        let mut changed = false;
        if let Some(columns) = mapping.get_mut("columns").and_then(|c| c.as_array_mut()) {
            for c in columns {
                if c.get("compressor").and_then(|t| t.as_str()) == Some(old) {
                    c["compressor"] = serde_json::Value::String(new.to_string());
                    changed = true;
                }
            }
        }
        if changed {
            sqlx::query("UPDATE upload SET mapping = ? WHERE id = ?")
                .bind(mapping.to_string())
                .bind(upload_id)
                .execute(&mut **tx)
                .await?;
        }
    }
    Ok(())
}
