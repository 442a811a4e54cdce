/*!
One logger file into the database: streaming, bounded memory, never half-visible.

The path: the file (already on disk, its SHA-256 known) is parsed by `ingest::parse` on a blocking
thread; readings arrive per channel in a [`ChunkSink`], which cuts them into runs of
[`CHUNK_READINGS`](super::chunk::CHUNK_READINGS) and hands them through a bounded queue to an encoder
thread ([`encode_runs`]), which builds the rollups and encodes the chunks, so that parsing and
encoding use two cores. Encoded chunks go through a second bounded queue to the writer, which
commits them in batches of [`BATCH`] so that the WAL stays small. The upload row is in state
`importing` all that time, which every reader ignores; the last transaction checks overlaps, marks
it `complete` and bumps the audit's revision. A crash before that leaves an `importing` row that the
next start-up deletes with its chunks ([`remove_unfinished`]).

Readings of one channel must arrive in time order: a reading not later than the channel's previous one
(a duplicate or out-of-order timestamp, which the data-quality report lists) is dropped, the first one
kept.
*/

use std::path::PathBuf;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::Arc;

use serde::Serialize;
use sqlx::{Row, SqlitePool};
use tokio::sync::mpsc;

use super::audits::{bump, ms_to_rfc3339};
use super::chunk::{self, Precision, CHUNK_READINGS};
use super::rollup::{encode_day, Acc, RollupBuilder};
use super::{begin_write, now_rfc3339, StoreError};
use crate::core::units::SiteAir;
use crate::ingest::{self, IngestError, Mapping, ReadingSink};

/// Chunks (or rollup pieces) committed per write transaction.
pub const BATCH: usize = 96;

/// What to import.
pub struct ImportRequest {
    pub audit_id: i64,
    pub filename: String,
    pub path: PathBuf,
    pub sha256: String,
    pub bytes: u64,
    pub mapping: Mapping,
    /// Replace stored readings of the same channels in the file's span instead of refusing (409).
    pub replace: bool,
    pub site: SiteAir,
    /// Compressor tags of the audit with their ids.
    pub compressors: Vec<(String, i64)>,
}

/// The result the API returns for a new upload.
#[derive(Debug, Clone, Serialize)]
pub struct ImportSummary {
    pub upload_id: i64,
    pub rows: u64,
    pub readings: u64,
    pub first: Option<String>,
    pub last: Option<String>,
    pub interval_s: Option<f64>,
    pub warnings: Vec<String>,
    pub quality: serde_json::Value,
    pub channels: Vec<ChannelSpan>,
}

#[derive(Debug, Clone, Serialize)]
pub struct ChannelSpan {
    pub label: String,
    pub quantity: String,
    pub compressor: Option<String>,
    pub readings: u64,
    pub first: String,
    pub last: String,
}

pub enum ImportOutcome {
    Created(ImportSummary),
    /// The same bytes were imported before into this audit: nothing added.
    Duplicate {
        upload_id: i64,
    },
}

#[derive(Debug, thiserror::Error)]
pub enum ImportError {
    /// The file or the mapping is wrong (422, with line and column where known).
    #[error("{0}")]
    Bad(IngestError),
    /// Readings overlap stored readings of the same channel (409).
    #[error("readings of {channel} from {first} to {last} overlap upload {upload_id} ({other_first} to {other_last}); send replace=true to replace them")]
    Overlap {
        channel: String,
        first: String,
        last: String,
        upload_id: i64,
        other_first: String,
        other_last: String,
    },
    /// The same file is being imported right now (409).
    #[error("this file is being imported already (upload {0})")]
    InProgress(i64),
    #[error(transparent)]
    Store(#[from] StoreError),
}

impl From<sqlx::Error> for ImportError {
    fn from(e: sqlx::Error) -> Self {
        Self::Store(StoreError::Sqlx(e))
    }
}

/// Progress of an import, readable from another task.
#[derive(Debug, Default)]
pub struct Progress {
    pub bytes_total: AtomicU64,
    pub bytes_done: AtomicU64,
    pub readings: AtomicU64,
}

enum Msg {
    Chunk { channel: usize, t0: i64, t1: i64, n: usize, blob: Vec<u8> },
    Day { channel: usize, day_ms: i64, blob: Vec<u8> },
    Hours { channel: usize, hours: Vec<(i64, Acc)> },
}

/// What the parse thread keeps per channel: the open chunk and the span of accepted readings.
struct ChannelBuf {
    times: Vec<i64>,
    values: Vec<f64>,
    last_t: Option<i64>,
    first_t: Option<i64>,
    readings: u64,
    dropped: u64,
}

/// A full (or last) run of one channel's readings, handed from the parse thread to the encoder.
enum Work {
    Run { channel: usize, times: Vec<i64>, values: Vec<f64> },
    Finish,
}

/// How many runs may wait for the encoder: bounds memory (each run is 8192 × 16 bytes).
const ENCODER_QUEUE: usize = 8;

/// First stage, on the parse thread: drops readings that are not later than the channel's previous
/// one, and cuts each channel into runs of [`CHUNK_READINGS`] for the encoder.
struct ChunkSink {
    channels: Vec<ChannelBuf>,
    tx: std::sync::mpsc::SyncSender<Work>,
    progress: Arc<Progress>,
}

fn writer_stopped() -> IngestError {
    IngestError { message: "the database writer stopped".into(), line: None, column: None, field: None }
}

impl ChunkSink {
    fn hand_over(&mut self, ch: usize) -> Result<(), IngestError> {
        let b = &mut self.channels[ch];
        if b.times.is_empty() {
            return Ok(());
        }
        let times = std::mem::replace(&mut b.times, Vec::with_capacity(CHUNK_READINGS));
        let values = std::mem::replace(&mut b.values, Vec::with_capacity(CHUNK_READINGS));
        self.tx.send(Work::Run { channel: ch, times, values }).map_err(|_| writer_stopped())
    }

    fn finish(&mut self) -> Result<(), IngestError> {
        for ch in 0..self.channels.len() {
            self.hand_over(ch)?;
        }
        self.tx.send(Work::Finish).map_err(|_| writer_stopped())
    }
}

impl ReadingSink for ChunkSink {
    fn reading(&mut self, channel: usize, t_ms: i64, value_si: f64) -> Result<(), IngestError> {
        let b = &mut self.channels[channel];
        if b.last_t.is_some_and(|l| t_ms <= l) || !value_si.is_finite() {
            b.dropped += 1;
            return Ok(());
        }
        b.last_t = Some(t_ms);
        b.first_t.get_or_insert(t_ms);
        b.readings += 1;
        b.times.push(t_ms);
        b.values.push(value_si);
        if b.times.len() >= CHUNK_READINGS {
            self.progress.readings.fetch_add(CHUNK_READINGS as u64, Ordering::Relaxed);
            self.hand_over(channel)?;
        }
        Ok(())
    }
}

/// Second stage, on its own thread so that parsing and encoding use two cores: builds the rollups
/// and encodes the chunks, and passes both to the writer in the order they were cut.
fn encode_runs(
    precisions: Vec<Precision>,
    rx: std::sync::mpsc::Receiver<Work>,
    tx: mpsc::Sender<Msg>,
) -> Result<(), IngestError> {
    let mut rollups: Vec<RollupBuilder> = precisions.iter().map(|_| RollupBuilder::default()).collect();
    let send = |m: Msg| tx.blocking_send(m).map_err(|_| writer_stopped());
    let days_and_hours = |ch: usize, r: &mut RollupBuilder| -> Result<(), IngestError> {
        for d in r.finished_days.drain(..) {
            send(Msg::Day { channel: ch, day_ms: d.day_ms, blob: encode_day(&d) })?;
        }
        if !r.finished_hours.is_empty() {
            send(Msg::Hours { channel: ch, hours: std::mem::take(&mut r.finished_hours) })?;
        }
        Ok(())
    };
    while let Ok(work) = rx.recv() {
        match work {
            Work::Run { channel, times, values } => {
                let r = &mut rollups[channel];
                for (&t, &v) in times.iter().zip(&values) {
                    r.push(t, v);
                }
                let blob = chunk::encode(&times, &values, precisions[channel]);
                send(Msg::Chunk {
                    channel,
                    t0: times[0],
                    t1: *times.last().expect("a run is never empty"),
                    n: times.len(),
                    blob,
                })?;
                days_and_hours(channel, r)?;
            }
            Work::Finish => {
                for (ch, r) in rollups.iter_mut().enumerate() {
                    r.finish();
                    days_and_hours(ch, r)?;
                }
                return Ok(());
            }
        }
    }
    // The parser stopped without finishing (a bad file): nothing more to write.
    Ok(())
}

/// A channel this file writes, resolved against the audit.
struct PlannedChannel {
    id: i64,
    label: String,
    quantity: &'static str,
    compressor: Option<String>,
}

fn bad(message: String, field: Option<String>) -> ImportError {
    ImportError::Bad(IngestError { message, line: None, column: None, field })
}

/// Import one file. The same bytes twice give [`ImportOutcome::Duplicate`].
pub async fn import_file(
    pool: &SqlitePool,
    req: ImportRequest,
    progress: Arc<Progress>,
) -> Result<ImportOutcome, ImportError> {
    progress.bytes_total.store(req.bytes, Ordering::Relaxed);
    if let Some(r) = sqlx::query("SELECT id, state FROM upload WHERE audit_id = ? AND sha256 = ?")
        .bind(req.audit_id)
        .bind(&req.sha256)
        .fetch_optional(pool)
        .await?
    {
        let id: i64 = r.get("id");
        let state: String = r.get("state");
        return if state == "complete" {
            Ok(ImportOutcome::Duplicate { upload_id: id })
        } else {
            Err(ImportError::InProgress(id))
        };
    }

    // Resolve the mapped columns to channels before reading a single row.
    let defs = ingest::channel_defs(&req.mapping).map_err(ImportError::Bad)?;
    let mut tx = begin_write(pool).await?;
    let upload_id = match sqlx::query(
        "INSERT INTO upload (audit_id, filename, sha256, bytes, state, mapping, created_at) \
         VALUES (?, ?, ?, ?, 'importing', ?, ?)",
    )
    .bind(req.audit_id)
    .bind(&req.filename)
    .bind(&req.sha256)
    .bind(req.bytes as i64)
    .bind(serde_json::to_string(&req.mapping).unwrap_or_default())
    .bind(now_rfc3339())
    .execute(&mut *tx)
    .await
    {
        Ok(r) => r.last_insert_rowid(),
        Err(e) if e.as_database_error().is_some_and(|d| d.is_unique_violation()) => {
            return Err(ImportError::InProgress(0));
        }
        Err(e) => return Err(e.into()),
    };
    let mut planned = Vec::with_capacity(defs.len());
    for (i, d) in defs.iter().enumerate() {
        let compressor_id = match &d.compressor {
            Some(tag) => {
                Some(req.compressors.iter().find(|(t, _)| t == tag).map(|(_, id)| *id).ok_or_else(|| {
                    bad(
                        format!(
                            "column {:?} names compressor {tag:?}, which this audit does not have",
                            d.label
                        ),
                        Some(format!("columns[{i}].compressor")),
                    )
                })?)
            }
            None => None,
        };
        // A compressor's power is one channel whatever file or column it comes from.
        let label = if compressor_id.is_some() { String::new() } else { d.label.clone() };
        let quantity = d.quantity.as_str();
        sqlx::query(
            "INSERT INTO channel (audit_id, quantity, compressor_id, label, unit) VALUES (?, ?, ?, ?, ?) \
             ON CONFLICT DO NOTHING",
        )
        .bind(req.audit_id)
        .bind(quantity)
        .bind(compressor_id)
        .bind(&label)
        .bind(&d.unit)
        .execute(&mut *tx)
        .await?;
        let id: i64 = sqlx::query_scalar(
            "SELECT id FROM channel WHERE audit_id = ? AND quantity = ? AND compressor_id IS ? AND label = ?",
        )
        .bind(req.audit_id)
        .bind(quantity)
        .bind(compressor_id)
        .bind(&label)
        .fetch_one(&mut *tx)
        .await?;
        if planned.iter().any(|p: &PlannedChannel| p.id == id) {
            return Err(bad(
                format!(
                    "two columns map to the same channel ({} {})",
                    quantity,
                    d.compressor.as_deref().unwrap_or(&d.label)
                ),
                Some(format!("columns[{i}]")),
            ));
        }
        planned.push(PlannedChannel {
            id,
            label: d.label.clone(),
            quantity,
            compressor: d.compressor.clone(),
        });
    }
    tx.commit().await?;

    let result = run_import(pool, &req, upload_id, &planned, &defs, progress).await;
    match result {
        Ok(summary) => Ok(ImportOutcome::Created(summary)),
        Err(e) => {
            // Nothing of a failed file stays: the cascade removes its chunks and rollups.
            let mut tx = begin_write(pool).await?;
            sqlx::query("DELETE FROM upload WHERE id = ?").bind(upload_id).execute(&mut *tx).await?;
            tx.commit().await?;
            Err(e)
        }
    }
}

async fn run_import(
    pool: &SqlitePool,
    req: &ImportRequest,
    upload_id: i64,
    planned: &[PlannedChannel],
    defs: &[ingest::ChannelDef],
    progress: Arc<Progress>,
) -> Result<ImportSummary, ImportError> {
    let (tx, mut rx) = mpsc::channel::<Msg>(32);
    let precisions: Vec<Precision> = defs
        .iter()
        .map(|d| if d.quantity == ingest::Quantity::Energy { Precision::F64 } else { Precision::F32 })
        .collect();
    let channels = defs
        .iter()
        .map(|_| ChannelBuf {
            times: Vec::with_capacity(CHUNK_READINGS),
            values: Vec::with_capacity(CHUNK_READINGS),
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
                let mut sink = ChunkSink { channels, tx: work_tx, progress: prog.clone() };
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
    let (report, spans) = parsed.map_err(ImportError::Bad)?;

    // The last transaction: overlap check, spans, completion.
    let mut tx = begin_write(pool).await?;
    let mut channel_spans = vec![];
    let mut readings = 0u64;
    let mut dropped_total = 0u64;
    for (p, (first, last, n, dropped)) in planned.iter().zip(&spans) {
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
        sqlx::query("INSERT INTO upload_channel (upload_id, channel_id, first_ms, last_ms, readings) VALUES (?, ?, ?, ?, ?)")
            .bind(upload_id)
            .bind(p.id)
            .bind(first)
            .bind(last)
            .bind(*n as i64)
            .execute(&mut *tx)
            .await?;
        channel_spans.push(ChannelSpan {
            label: p.label.clone(),
            quantity: p.quantity.to_string(),
            compressor: p.compressor.clone(),
            readings: *n,
            first: ms_to_rfc3339(first),
            last: ms_to_rfc3339(last),
        });
    }
    if readings == 0 {
        return Err(bad("the file holds no readings in the mapped columns".into(), None));
    }
    let mut warnings = report.quality.warnings();
    if dropped_total > 0 {
        warnings.push(format!(
            "{dropped_total} readings at duplicate or out-of-order timestamps were dropped (the first reading of each time was kept)"
        ));
    }
    let quality = serde_json::to_value(&report.quality).unwrap_or_default();
    let first = spans.iter().filter_map(|s| s.0).min();
    let last = spans.iter().filter_map(|s| s.1).max();
    sqlx::query(
        "UPDATE upload SET state = 'complete', rows = ?, readings = ?, first_ms = ?, last_ms = ?, quality = ?, warnings = ? \
         WHERE id = ?",
    )
    .bind(report.rows as i64)
    .bind(readings as i64)
    .bind(first)
    .bind(last)
    .bind(quality.to_string())
    .bind(serde_json::to_string(&warnings).unwrap_or_default())
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
        readings,
        first: first.map(ms_to_rfc3339),
        last: last.map(ms_to_rfc3339),
        interval_s: report.median_interval_s,
        warnings,
        quality,
        channels: channel_spans,
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

/// Replace: remove the readings of `channel` within `first..=last` from every other upload,
/// re-encoding the chunks that straddle the span and rebuilding those uploads' rollups of it.
async fn cut_out(
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
        for b in &blobs {
            chunk::decode(b, |t, v| {
                if t < first || t > last {
                    kept.push((t, v));
                }
            })
            .map_err(StoreError::from)?;
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

/// Remove uploads that a crash left unfinished, with everything they wrote.
pub async fn remove_unfinished(pool: &SqlitePool) -> Result<u64, StoreError> {
    let mut tx = begin_write(pool).await?;
    let n =
        sqlx::query("DELETE FROM upload WHERE state = 'importing'").execute(&mut *tx).await?.rows_affected();
    tx.commit().await?;
    if n > 0 {
        tracing::warn!(uploads = n, "removed uploads left unfinished by an earlier stop");
    }
    Ok(n)
}
