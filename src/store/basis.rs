/*!
How each upload's readings of a channel are stored (`upload_channel.stored_form`, the JSON of
[`StoredForm`]), and the start-up step that works it out for uploads stored before it was kept.

Before migration 0004 every reading was stored with the site's air of its import applied (gauge
pressure made absolute, standard flow made free air), and that air was not recorded. The backfill
reads each old upload's mapping for the column's basis and records the affine step with the site's
air as it is at the migration ([`StoredForm::applied`]): the one choice under which every old
reading reads exactly as it did (a site edited between the import and the upgrade stays as it was
then, which is what those readings showed before; importing the file again puts it right). From
then on the old readings follow every site edit exactly as new ones do.
*/

use sqlx::{Row, SqlitePool};

use super::audits::get_audit;
use super::{begin_write, StoreError};
use crate::core::basis::{Basis, StoredForm};
use crate::ingest::{channel_defs, Mapping};

/// Fill `stored_form` where it is NULL (uploads stored before migration 0004). Returns the rows
/// filled.
pub async fn backfill(pool: &SqlitePool) -> Result<u64, StoreError> {
    let rows = sqlx::query(
        "SELECT uc.upload_id, uc.channel_id, u.audit_id, u.mapping, c.quantity, c.label, k.tag \
         FROM upload_channel uc JOIN upload u ON u.id = uc.upload_id JOIN channel c ON c.id = uc.channel_id \
         LEFT JOIN compressor k ON k.id = c.compressor_id WHERE uc.stored_form IS NULL",
    )
    .fetch_all(pool)
    .await?;
    if rows.is_empty() {
        return Ok(0);
    }
    let mut tx = begin_write(pool).await?;
    let mut filled = 0;
    for r in &rows {
        let audit_id: i64 = r.get("audit_id");
        let Some(audit) = get_audit(pool, audit_id).await? else { continue };
        let mapping: Option<Mapping> = serde_json::from_str(r.get::<&str, _>("mapping")).ok();
        let quantity: String = r.get("quantity");
        let label: String = r.get("label");
        let tag: Option<String> = r.get("tag");
        // The mapped column this channel came from: by compressor tag, or by its label.
        let basis = mapping
            .as_ref()
            .and_then(|m| channel_defs(m).ok())
            .and_then(|defs| {
                defs.into_iter().find(|d| {
                    d.quantity.as_str() == quantity
                        && match &tag {
                            Some(t) => d.compressor.as_deref() == Some(t.as_str()),
                            None => d.label == label,
                        }
                })
            })
            .map_or(Basis::Site, |d| d.basis);
        let form = StoredForm::applied(basis, &audit.site.air());
        sqlx::query("UPDATE upload_channel SET stored_form = ? WHERE upload_id = ? AND channel_id = ?")
            .bind(serde_json::to_string(&form).unwrap_or_default())
            .bind(r.get::<i64, _>("upload_id"))
            .bind(r.get::<i64, _>("channel_id"))
            .execute(&mut *tx)
            .await?;
        filled += 1;
    }
    tx.commit().await?;
    tracing::info!(rows = filled, "recorded how readings stored before the basis was kept are stored");
    Ok(filled)
}
