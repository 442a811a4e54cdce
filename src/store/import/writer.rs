/*!
The writer: runs the parse and encoder threads, commits what they send in batches of [`BATCH`],
and in a last transaction checks overlaps, records the spans and marks the upload complete.
*/

use std::sync::atomic::Ordering;
use std::sync::Arc;

use sqlx::{Row, SqlitePool};
use tokio::sync::mpsc;

use super::encoder::{encode_runs, run_length, ChannelBuf, ChunkSink, Msg, Work, ENCODER_QUEUE};
use super::replace::cut_out;
use super::{
    bad, ChannelSpan, ImportError, ImportRequest, ImportSummary, Keeper, PlannedChannel, Progress, Replacing,
    BATCH,
};
use crate::core::basis::StoredForm;
use crate::ingest::quality::{self, RatedMachine};
use crate::ingest::{self, IngestError};
use crate::store::audits::{bump, ms_to_rfc3339};
use crate::store::chunk::Precision;
use crate::store::{begin_write, now_rfc3339};

pub(super) async fn run_import(
    pool: &SqlitePool,
    req: &ImportRequest,
    upload_id: i64,
    planned: &[PlannedChannel],
    defs: &[ingest::ChannelDef],
    progress: Arc<Progress>,
    (keeper, replacing): (&mut Option<Keeper>, Option<Replacing>),
) -> Result<ImportSummary, ImportError> {
    let (tx, mut rx) = mpsc::channel::<Msg>(32);
    let precisions: Vec<Precision> = defs
        .iter()
        .map(|d| if d.quantity == ingest::Quantity::Energy { Precision::F64 } else { Precision::F32 })
        .collect();
    let run_len = run_length(defs.len());
    let channels = defs
        .iter()
        .map(|_| ChannelBuf {
            times: Vec::with_capacity(run_len),
            values: Vec::with_capacity(run_len),
            last_t: None,
            first_t: None,
            readings: 0,
            dropped: 0,
        })
        .collect();
    let path = req.path.clone();
    let mapping = req.mapping.clone();
    let site = req.site;
    let prog = progress.clone();
    let parser = tokio::task::spawn_blocking(move || {
        let (work_tx, work_rx) = std::sync::mpsc::sync_channel::<Work>(ENCODER_QUEUE);
        std::thread::scope(|scope| {
            let encoder = scope.spawn(move || encode_runs(precisions, work_rx, tx));
            let parsed = (|| {
                let mut sink = ChunkSink { channels, run_len, tx: work_tx, progress: prog.clone() };
                let file = std::fs::File::open(&path).map_err(|e| IngestError {
                    message: format!("cannot read the uploaded file: {e}"),
                    line: None,
                    column: None,
                    field: None,
                })?;
                let reader = std::io::BufReader::with_capacity(256 * 1024, file);
                let report = ingest::parse_stream(reader, &mapping, &site, &mut sink, &mut |b| {
                    prog.bytes_done.store(b, Ordering::Relaxed)
                })?;
                sink.finish()?;
                let spans: Vec<(Option<i64>, Option<i64>, u64, u64)> =
                    sink.channels.iter().map(|c| (c.first_t, c.last_t, c.readings, c.dropped)).collect();
                Ok::<_, IngestError>((report, spans))
            })();
            // The sink (and with it the encoder's queue) is dropped by now, so the encoder ends.
            let encoded = encoder.join().unwrap_or_else(|_| {
                Err(IngestError {
                    message: "the encoder failed".into(),
                    line: None,
                    column: None,
                    field: None,
                })
            });
            let parsed = parsed?;
            encoded?;
            Ok::<_, IngestError>(parsed)
        })
    });

    // The writer: batches of chunks and rollups, one short transaction each.
    let mut batch = Vec::with_capacity(BATCH);
    let mut write_error = None;
    while let Some(m) = rx.recv().await {
        batch.push(m);
        if batch.len() >= BATCH {
            if let Err(e) = write_batch(pool, upload_id, planned, &mut batch).await {
                write_error = Some(e);
                break;
            }
        }
    }
    if write_error.is_none() && !batch.is_empty() {
        if let Err(e) = write_batch(pool, upload_id, planned, &mut batch).await {
            write_error = Some(e);
        }
    }
    drop(rx);
    let parsed = parser.await.map_err(|e| bad(format!("the parser failed: {e}"), None))?;
    if let Some(e) = write_error {
        return Err(e);
    }
    let (mut report, spans) = parsed.map_err(ImportError::Bad)?;
    // The original must be all there before the upload can be complete.
    if let Some(k) = keeper.take() {
        k.handle.await.map_err(|e| bad(format!("the original could not be kept: {e}"), None))??;
    }

    // The last transaction: the replaced upload out, overlap check, spans, completion.
    let mut tx = begin_write(pool).await?;
    if let Some(r) = &replacing {
        let state: Option<String> =
            sqlx::query_scalar("SELECT state FROM upload WHERE id = ? AND audit_id = ?")
                .bind(r.old)
                .bind(req.audit_id)
                .fetch_optional(&mut *tx)
                .await?;
        if state.as_deref() != Some("complete") {
            return Err(ImportError::ReplacedGone(r.old));
        }
        if r.move_original {
            sqlx::query("UPDATE upload_original SET upload_id = ? WHERE upload_id = ?")
                .bind(upload_id)
                .bind(r.old)
                .execute(&mut *tx)
                .await?;
        }
        // The cascade takes its chunks, rollups, spans and quality report.
        sqlx::query("DELETE FROM upload WHERE id = ?").bind(r.old).execute(&mut *tx).await?;
        // The channels now read as this mapping says (the unit is shown as logged).
        for (p, d) in planned.iter().zip(defs) {
            sqlx::query("UPDATE channel SET unit = ? WHERE id = ?")
                .bind(&d.unit)
                .bind(p.id)
                .execute(&mut *tx)
                .await?;
        }
    }
    let mut channel_spans = vec![];
    let mut readings = 0u64;
    let mut dropped_total = 0u64;
    for (i, ((p, def), (first, last, n, dropped))) in planned.iter().zip(defs).zip(&spans).enumerate() {
        dropped_total += dropped;
        let (Some(first), Some(last)) = (*first, *last) else { continue };
        readings += n;
        let clash = sqlx::query(
            "SELECT uc.upload_id, uc.first_ms, uc.last_ms FROM upload_channel uc JOIN upload u ON u.id = uc.upload_id \
             WHERE uc.channel_id = ? AND u.state = 'complete' AND uc.first_ms <= ? AND uc.last_ms >= ? LIMIT 1",
        )
        .bind(p.id)
        .bind(last)
        .bind(first)
        .fetch_optional(&mut *tx)
        .await?;
        if let Some(c) = clash {
            let other: i64 = c.get("upload_id");
            if !req.replace {
                return Err(ImportError::Overlap {
                    channel: channel_name(p),
                    first: ms_to_rfc3339(first),
                    last: ms_to_rfc3339(last),
                    upload_id: other,
                    other_first: ms_to_rfc3339(c.get("first_ms")),
                    other_last: ms_to_rfc3339(c.get("last_ms")),
                });
            }
            cut_out(&mut tx, p.id, upload_id, first, last).await?;
        }
        // Stored as measured; the site's air is applied when read (`core::basis`).
        let form = StoredForm { current: def.current, ..StoredForm::measured(def.basis) };
        let interval_ms = report
            .quality
            .channels
            .get(i)
            .and_then(|q| q.median_interval_s)
            .map(|s| (s * 1000.0).round() as i64)
            .filter(|&ms| ms > 0);
        sqlx::query(
            "INSERT INTO upload_channel (upload_id, channel_id, first_ms, last_ms, readings, stored_form, interval_ms) \
             VALUES (?, ?, ?, ?, ?, ?, ?)",
        )
        .bind(upload_id)
        .bind(p.id)
        .bind(first)
        .bind(last)
        .bind(*n as i64)
        .bind(serde_json::to_string(&form).unwrap_or_default())
        .bind(interval_ms)
        .execute(&mut *tx)
        .await?;
        channel_spans.push(ChannelSpan {
            label: p.label.clone(),
            quantity: p.quantity.to_string(),
            compressor: p.compressor.clone(),
            readings: *n,
            first: ms_to_rfc3339(first),
            last: ms_to_rfc3339(last),
            first_local: String::new(),
            last_local: String::new(),
        });
    }
    // A file of rows whose mapped cells are all missing (a meter's error code in every cell) lands
    // with its quality report and a warning: markers are missing values, never a refusal. A file
    // with no data row at all is refused.
    if readings == 0 && report.rows == 0 {
        return Err(bad("the file holds no data rows below its header".into(), None));
    }
    let first = spans.iter().filter_map(|s| s.0).min();
    let last = spans.iter().filter_map(|s| s.1).max();
    // Readings implausible against the audit's data sheets, and how the file sits in time among the
    // audit's other files (`ingest::quality`).
    let rated: Vec<RatedMachine> =
        sqlx::query("SELECT tag, rated_power_kw, rated_flow_m3_min FROM compressor WHERE audit_id = ?")
            .bind(req.audit_id)
            .fetch_all(&mut *tx)
            .await?
            .iter()
            .map(|r| RatedMachine {
                tag: r.get("tag"),
                rated_power_kw: r.get("rated_power_kw"),
                rated_flow_m3_min: r.get("rated_flow_m3_min"),
            })
            .collect();
    report.quality.check_against_rated(&rated);
    // Times in the warnings are the site's, as every time a person sees.
    let tz: String = sqlx::query_scalar("SELECT timezone FROM audit WHERE id = ?")
        .bind(req.audit_id)
        .fetch_optional(&mut *tx)
        .await?
        .unwrap_or_else(|| "UTC".into());
    for c in &mut channel_spans {
        c.first_local = crate::core::display::local_time(&c.first, &tz);
        c.last_local = crate::core::display::local_time(&c.last, &tz);
    }
    // In parts (figures for the reader's units) and in SI words, one for one.
    let mut parts = report.quality.warning_parts(&tz);
    if readings == 0 {
        parts.insert(
            0,
            vec![format!(
                "no readings: every cell of the mapped columns in the file's {} rows is missing \
                 (see the quality report); nothing of this file enters the figures",
                report.rows
            )
            .into()],
        );
    }
    if let (Some(f), Some(l)) = (first, last) {
        let others: Vec<(i64, i64)> = sqlx::query(
            "SELECT first_ms, last_ms FROM upload WHERE audit_id = ? AND id != ? AND state = 'complete' \
             AND first_ms IS NOT NULL AND last_ms IS NOT NULL",
        )
        .bind(req.audit_id)
        .bind(upload_id)
        .fetch_all(&mut *tx)
        .await?
        .iter()
        .map(|r| (r.get("first_ms"), r.get("last_ms")))
        .collect();
        parts.extend(quality::span_warnings((f, l), &others, &tz).into_iter().map(|w| vec![w.into()]));
    }
    if dropped_total > 0 {
        parts.push(vec![format!(
            "{dropped_total} readings at duplicate or out-of-order timestamps were dropped (the first reading of each time was kept)"
        )
        .into()]);
    }
    let si = crate::core::display::Fmt::new(
        crate::core::units::UnitSystem::Si,
        crate::core::units::PressureAbs(report.quality.atmosphere_pa),
    );
    let warnings: Vec<String> = parts.iter().map(|p| crate::core::display::render_parts(p, &si)).collect();
    let quality = serde_json::to_value(&report.quality).unwrap_or_default();
    sqlx::query(
        "UPDATE upload SET state = 'complete', sha256 = ?, rows = ?, readings = ?, first_ms = ?, last_ms = ?, \
         quality = ?, warnings = ?, warning_parts = ? WHERE id = ?",
    )
    .bind(&req.sha256)
    .bind(report.rows as i64)
    .bind(readings as i64)
    .bind(first)
    .bind(last)
    .bind(quality.to_string())
    .bind(serde_json::to_string(&warnings).unwrap_or_default())
    .bind(serde_json::to_string(&parts).unwrap_or_else(|_| "[]".into()))
    .bind(upload_id)
    .execute(&mut *tx)
    .await?;
    if let Some(header) = &report.header {
        sqlx::query(
            "INSERT INTO remembered_mapping (layout_key, mapping, updated_at) VALUES (?, ?, ?) \
             ON CONFLICT (layout_key) DO UPDATE SET mapping = excluded.mapping, updated_at = excluded.updated_at",
        )
        .bind(ingest::layout_key(header))
        .bind(serde_json::to_string(&req.mapping).unwrap_or_default())
        .bind(now_rfc3339())
        .execute(&mut *tx)
        .await?;
    }
    bump(&mut tx, req.audit_id).await?;
    tx.commit().await?;
    progress.readings.store(readings, Ordering::Relaxed);
    Ok(ImportSummary {
        upload_id,
        rows: report.rows,
        blank_lines: report.quality.file.blank_lines,
        readings,
        first: first.map(ms_to_rfc3339),
        last: last.map(ms_to_rfc3339),
        interval_s: report.median_interval_s,
        first_local: first.map(|t| crate::core::display::local_ms(t, &tz)),
        last_local: last.map(|t| crate::core::display::local_ms(t, &tz)),
        interval_words: report.median_interval_s.map(crate::core::display::duration_words),
        warnings,
        warning_parts: parts,
        quality,
        channels: channel_spans,
        replaced_upload_id: replacing.map(|r| r.old),
    })
}

fn channel_name(p: &PlannedChannel) -> String {
    match &p.compressor {
        Some(tag) => format!("{} of compressor {tag}", p.quantity),
        None => format!("{} {:?}", p.quantity, p.label),
    }
}

async fn write_batch(
    pool: &SqlitePool,
    upload_id: i64,
    planned: &[PlannedChannel],
    batch: &mut Vec<Msg>,
) -> Result<(), ImportError> {
    let mut tx = begin_write(pool).await?;
    for m in batch.drain(..) {
        match m {
            Msg::Chunk { channel, t0, t1, n, blob } => {
                sqlx::query("INSERT INTO chunk (channel_id, t_start_ms, upload_id, t_end_ms, n, data) VALUES (?, ?, ?, ?, ?, ?)")
                    .bind(planned[channel].id)
                    .bind(t0)
                    .bind(upload_id)
                    .bind(t1)
                    .bind(n as i64)
                    .bind(blob)
                    .execute(&mut *tx)
                    .await?;
            }
            Msg::Day { channel, day_ms, blob } => {
                sqlx::query(
                    "INSERT INTO rollup_minute (channel_id, day_ms, upload_id, data) VALUES (?, ?, ?, ?)",
                )
                .bind(planned[channel].id)
                .bind(day_ms)
                .bind(upload_id)
                .bind(blob)
                .execute(&mut *tx)
                .await?;
            }
            Msg::Hours { channel, hours } => {
                for (h, a) in hours {
                    sqlx::query(
                        "INSERT INTO rollup_hour (channel_id, hour_ms, upload_id, n, min, max, sum) VALUES (?, ?, ?, ?, ?, ?, ?)",
                    )
                    .bind(planned[channel].id)
                    .bind(h)
                    .bind(upload_id)
                    .bind(i64::from(a.n))
                    .bind(a.min)
                    .bind(a.max)
                    .bind(a.sum)
                    .execute(&mut *tx)
                    .await?;
                }
            }
        }
    }
    tx.commit().await?;
    Ok(())
}
