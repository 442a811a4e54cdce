/*!
Replacing stored readings: the span of a new upload cut out of the other uploads of a channel.
*/

use super::ImportError;
use crate::store::chunk::{self, Precision, CHUNK_READINGS};
use crate::store::rollup::{encode_day, RollupBuilder};
use crate::store::StoreError;

/// Replace: remove the readings of `channel` within `first..=last` from every other upload,
/// re-encoding the chunks that straddle the span and rebuilding those uploads' rollups of it.
pub(super) async fn cut_out(
    tx: &mut sqlx::SqliteConnection,
    channel: i64,
    new_upload: i64,
    first: i64,
    last: i64,
) -> Result<(), ImportError> {
    let others: Vec<i64> = sqlx::query_scalar(
        "SELECT uc.upload_id FROM upload_channel uc WHERE uc.channel_id = ? AND uc.upload_id != ? \
         AND uc.first_ms <= ? AND uc.last_ms >= ?",
    )
    .bind(channel)
    .bind(new_upload)
    .bind(last)
    .bind(first)
    .fetch_all(&mut *tx)
    .await?;
    for other in others {
        let blobs: Vec<Vec<u8>> = sqlx::query_scalar(
            "SELECT data FROM chunk WHERE channel_id = ? AND upload_id = ? ORDER BY t_start_ms",
        )
        .bind(channel)
        .bind(other)
        .fetch_all(&mut *tx)
        .await?;
        let precision: String = sqlx::query_scalar("SELECT quantity FROM channel WHERE id = ?")
            .bind(channel)
            .fetch_one(&mut *tx)
            .await?;
        let precision = if precision == "energy" { Precision::F64 } else { Precision::F32 };
        let mut kept: Vec<(i64, f64)> = vec![];
        let mut decoder = chunk::Decoder::default();
        for b in &blobs {
            let (times, values) = decoder.decode(b).map_err(StoreError::from)?;
            kept.extend(
                times
                    .iter()
                    .zip(values.iter())
                    .filter(|(&t, _)| t < first || t > last)
                    .map(|(&t, &v)| (t, v)),
            );
        }
        for table in ["chunk", "rollup_minute", "rollup_hour"] {
            sqlx::query(&format!("DELETE FROM {table} WHERE channel_id = ? AND upload_id = ?"))
                .bind(channel)
                .bind(other)
                .execute(&mut *tx)
                .await?;
        }
        sqlx::query("DELETE FROM upload_channel WHERE channel_id = ? AND upload_id = ?")
            .bind(channel)
            .bind(other)
            .execute(&mut *tx)
            .await?;
        if kept.is_empty() {
            continue;
        }
        let mut rollup = RollupBuilder::default();
        for part in kept.chunks(CHUNK_READINGS) {
            let times: Vec<i64> = part.iter().map(|p| p.0).collect();
            let values: Vec<f64> = part.iter().map(|p| p.1).collect();
            for p in part {
                rollup.push(p.0, p.1);
            }
            sqlx::query("INSERT INTO chunk (channel_id, t_start_ms, upload_id, t_end_ms, n, data) VALUES (?, ?, ?, ?, ?, ?)")
                .bind(channel)
                .bind(times[0])
                .bind(other)
                .bind(*times.last().expect("non-empty"))
                .bind(times.len() as i64)
                .bind(chunk::encode(&times, &values, precision))
                .execute(&mut *tx)
                .await?;
        }
        rollup.finish();
        for d in &rollup.finished_days {
            sqlx::query(
                "INSERT INTO rollup_minute (channel_id, day_ms, upload_id, data) VALUES (?, ?, ?, ?)",
            )
            .bind(channel)
            .bind(d.day_ms)
            .bind(other)
            .bind(encode_day(d))
            .execute(&mut *tx)
            .await?;
        }
        for (h, a) in &rollup.finished_hours {
            sqlx::query("INSERT INTO rollup_hour (channel_id, hour_ms, upload_id, n, min, max, sum) VALUES (?, ?, ?, ?, ?, ?, ?)")
                .bind(channel)
                .bind(h)
                .bind(other)
                .bind(i64::from(a.n))
                .bind(a.min)
                .bind(a.max)
                .bind(a.sum)
                .execute(&mut *tx)
                .await?;
        }
        sqlx::query("INSERT INTO upload_channel (upload_id, channel_id, first_ms, last_ms, readings) VALUES (?, ?, ?, ?, ?)")
            .bind(other)
            .bind(channel)
            .bind(kept[0].0)
            .bind(kept[kept.len() - 1].0)
            .bind(kept.len() as i64)
            .execute(&mut *tx)
            .await?;
    }
    Ok(())
}
