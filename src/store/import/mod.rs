/*!
One logger file into the database: streaming, bounded memory, never half-visible.

The path: the file (already on disk, its SHA-256 known) is parsed by `ingest::parse` on a blocking
thread; readings arrive per channel in a [`ChunkSink`], which cuts them into runs of at most
[`CHUNK_READINGS`](super::chunk::CHUNK_READINGS) (shorter when many columns are mapped; at most
[`MAX_MAPPED_COLUMNS`] per file) and hands them through a bounded queue to an encoder
thread ([`encoder`]), which builds the rollups and encodes the chunks, so that parsing and
encoding use two cores. Encoded chunks go through a second bounded queue to the writer, which
commits them in batches of [`BATCH`] ([`writer`]) so that the WAL stays small. The upload row is in state
`importing` all that time, which every reader ignores; the last transaction checks overlaps, marks
it `complete` and bumps the audit's revision. A crash before that leaves an `importing` row that the
next start-up deletes with its chunks ([`remove_unfinished`]). Replacing overlapping readings
(`replace=true`) re-encodes the other uploads' chunks around the new span ([`replace`]).

Readings of one channel must arrive in time order: a reading not later than the channel's previous one
(a duplicate or out-of-order timestamp, which the data-quality report lists) is dropped, the first one
kept.
*/

mod columns;
mod encoder;
pub mod original;
mod replace;
mod writer;

use std::path::PathBuf;
use std::sync::atomic::{AtomicU64, Ordering};
use std::sync::Arc;

use serde::Serialize;
use sqlx::{Row, SqlitePool};

use super::{begin_write, now_rfc3339, StoreError};
use crate::core::units::SiteAir;
use crate::ingest::{self, IngestError, Mapping};
use writer::run_import;

/// The most mapped columns (channels) one file may write. Each channel holds, besides its open run
/// (which shrinks as channels grow, see `encoder::run_length`), the minute rollups of its open day:
/// up to 1,440 buckets of 40 bytes, about 57 KB. 512 channels keep that under 30 MB, so that an
/// import stays within the 64 MB the server allows itself for any file (2,000 channels logged at
/// 1 min over a day took 116 MB); 512 is far above the channels of one logger file in practice.
pub const MAX_MAPPED_COLUMNS: usize = 512;

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
    /// The upload this file's import replaces (`remap`: the same bytes with another mapping). The
    /// earlier upload is deleted in the transaction that completes this one, so a failed import
    /// leaves it as it was. The same bytes sent again with another mapping set it by themselves.
    pub replaces: Option<i64>,
}

/// The result the API returns for a new upload.
#[derive(Debug, Clone, Serialize)]
pub struct ImportSummary {
    pub upload_id: i64,
    /// Data rows read (every line of the file is a data row, a blank line, the header or the
    /// preamble: nothing is dropped silently).
    pub rows: u64,
    /// Blank lines (and rows of empty cells only), counted apart from `rows`.
    pub blank_lines: u64,
    pub readings: u64,
    pub first: Option<String>,
    pub last: Option<String>,
    pub interval_s: Option<f64>,
    /// `first`, `last` and `interval_s` as every page words them: the site's local time with
    /// the zone's abbreviation ("Mon 4 May 2026 03:00 CDT"), the interval in whole units
    /// ("15 min"), so that the upload page shows what the file table and preview show.
    pub first_local: Option<String>,
    pub last_local: Option<String>,
    pub interval_words: Option<String>,
    pub warnings: Vec<String>,
    /// `warnings` in parts, one for one: their readings and limits as figures for the reader's
    /// units (`core::recommend::Part`).
    pub warning_parts: Vec<Vec<crate::core::recommend::Part>>,
    pub quality: serde_json::Value,
    pub channels: Vec<ChannelSpan>,
    /// The earlier import of the same bytes that this one replaced (a corrected mapping).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub replaced_upload_id: Option<i64>,
}

#[derive(Debug, Clone, Serialize)]
pub struct ChannelSpan {
    pub label: String,
    pub quantity: String,
    pub compressor: Option<String>,
    pub readings: u64,
    pub first: String,
    pub last: String,
    /// `first` and `last` in the site's local time, the zone named as the pages name it.
    pub first_local: String,
    pub last_local: String,
}

/// An import's outcome: one a file, moved once to its reply, so the size of the summary beside a
/// duplicate's id costs nothing worth a box.
#[allow(clippy::large_enum_variant)]
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
    #[error("readings of {channel} from {first} to {last} overlap upload {upload_id} ({other_first} to {other_last}); import it again choosing to replace them")]
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
    /// The upload a corrected mapping was to replace was deleted meanwhile (409).
    #[error("upload {0} was deleted while its file was being imported again: nothing was changed")]
    ReplacedGone(i64),
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

/// A channel this file writes, resolved against the audit.
struct PlannedChannel {
    id: i64,
    /// The file's column it is read from, for a refusal in words.
    column: String,
    label: String,
    quantity: &'static str,
    compressor: Option<String>,
}

/// Two columns of one file read as the same thing (one machine's power, one measuring point), said
/// with both columns' names: one of them is to be left out, or given another machine or point.
fn same_reading_twice(first: &str, second: &str, quantity: &str, d: &ingest::ChannelDef) -> String {
    let what = match (quantity, d.compressor.as_deref()) {
        ("power", Some(tag)) => format!("the power of {tag} (a current is read as power)"),
        ("energy", Some(tag)) => format!("the energy counter of {tag}"),
        (q, Some(tag)) => format!("the {q} of {tag}"),
        (q, None) => format!("the {q} \u{201c}{}\u{201d}", d.label),
    };
    format!(
        "the columns \u{201c}{first}\u{201d} and \u{201c}{second}\u{201d} are both read as {what}: leave one \
         out, or give it another compressor or measuring point's name"
    )
}

fn bad(message: String, field: Option<String>) -> ImportError {
    ImportError::Bad(IngestError { message, line: None, column: None, field })
}

/// How a replacing import ends: the earlier upload it replaces, and whether that upload's kept
/// original moves over to the new one (the same bytes) instead of being kept again.
pub(super) struct Replacing {
    pub(super) old: i64,
    pub(super) move_original: bool,
}

/// The original being kept beside the parse (`original::keep`), awaited before the upload is marked
/// complete. An import that fails raises `stop` and waits for it to end before deleting the upload:
/// the keeper then ends after the piece it is writing, its transaction committed, rather than being
/// cancelled in the middle of one.
pub(super) struct Keeper {
    pub(super) handle: tokio::task::JoinHandle<Result<(u64, u64), ImportError>>,
    pub(super) stop: Arc<std::sync::atomic::AtomicBool>,
}

/// Import one file. The same bytes twice with the same mapping give [`ImportOutcome::Duplicate`];
/// with another mapping, the new import replaces the earlier one (as `req.replaces` asks).
pub async fn import_file(
    pool: &SqlitePool,
    mut req: ImportRequest,
    progress: Arc<Progress>,
) -> Result<ImportOutcome, ImportError> {
    progress.bytes_total.store(req.bytes, Ordering::Relaxed);
    if let Some(r) = sqlx::query("SELECT id, state, mapping FROM upload WHERE audit_id = ? AND sha256 = ?")
        .bind(req.audit_id)
        .bind(&req.sha256)
        .fetch_optional(pool)
        .await?
    {
        let id: i64 = r.get("id");
        let state: String = r.get("state");
        if state != "complete" {
            return Err(ImportError::InProgress(id));
        }
        let stored: Option<Mapping> = serde_json::from_str(r.get::<&str, _>("mapping")).ok();
        if stored.as_ref() == Some(&req.mapping) {
            return Ok(ImportOutcome::Duplicate { upload_id: id });
        }
        req.replaces = Some(id);
    }
    let replacing = match req.replaces {
        Some(old) => Some(Replacing { old, move_original: original::is_kept(pool, old).await? }),
        None => None,
    };

    // Resolve the mapped columns to channels before reading a single row.
    let defs = ingest::channel_defs(&req.mapping).map_err(ImportError::Bad)?;
    if defs.len() > MAX_MAPPED_COLUMNS {
        return Err(bad(
            format!(
                "the mapping maps {} columns; one file may map at most {MAX_MAPPED_COLUMNS}: \
                 split the file or map fewer columns",
                defs.len()
            ),
            Some("columns".into()),
        ));
    }
    let mut tx = begin_write(pool).await?;
    let upload_id = match sqlx::query(
        "INSERT INTO upload (audit_id, filename, sha256, bytes, state, mapping, created_at) \
         VALUES (?, ?, ?, ?, 'importing', ?, ?)",
    )
    .bind(req.audit_id)
    .bind(&req.filename)
    // A replacing import holds its row under a name of its own until the earlier one is gone.
    .bind(match req.replaces {
        Some(old) => format!("{}~replaces-{old}", req.sha256),
        None => req.sha256.clone(),
    })
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
        let point = (quantity == "pressure").then(|| d.point.as_str());
        sqlx::query(
            "INSERT INTO channel (audit_id, quantity, compressor_id, label, unit, point) VALUES (?, ?, ?, ?, ?, ?) \
             ON CONFLICT DO NOTHING",
        )
        .bind(req.audit_id)
        .bind(quantity)
        .bind(compressor_id)
        .bind(&label)
        .bind(&d.unit)
        .bind(point)
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
        // A point the mapping states is where the channel was measured, for every file of it.
        if d.point_stated && point.is_some() {
            sqlx::query("UPDATE channel SET point = ? WHERE id = ?")
                .bind(point)
                .bind(id)
                .execute(&mut *tx)
                .await?;
        }
        let column = req.mapping.columns.get(i).map_or_else(|| d.label.clone(), |c| c.column.clone());
        if let Some(first) = planned.iter().find(|p: &&PlannedChannel| p.id == id) {
            return Err(bad(
                same_reading_twice(&first.column, &column, quantity, d),
                Some(format!("columns[{i}]")),
            ));
        }
        planned.push(PlannedChannel {
            id,
            column,
            label: d.label.clone(),
            quantity,
            compressor: d.compressor.clone(),
        });
    }
    tx.commit().await?;

    // The original is deflated and stored beside the parse, unless the one kept moves over.
    let mut keeper = match &replacing {
        Some(r) if r.move_original => None,
        _ => {
            let (pool, path) = (pool.clone(), req.path.clone());
            let delim = ingest::mapping::delimiter_byte(&req.mapping.delimiter).unwrap_or(b',');
            let stop = Arc::new(std::sync::atomic::AtomicBool::new(false));
            let flag = stop.clone();
            let handle =
                tokio::spawn(async move { original::keep(&pool, upload_id, &path, delim, &flag).await });
            Some(Keeper { handle, stop })
        }
    };
    let result = run_import(pool, &req, upload_id, &planned, &defs, progress, (&mut keeper, replacing)).await;
    match result {
        Ok(summary) => Ok(ImportOutcome::Created(summary)),
        Err(e) => {
            if let Some(k) = keeper.take() {
                k.stop.store(true, Ordering::Relaxed);
                let _ = k.handle.await;
            }
            // Nothing of a failed file stays: the cascade removes its chunks and rollups.
            let mut tx = begin_write(pool).await?;
            sqlx::query("DELETE FROM upload WHERE id = ?").bind(upload_id).execute(&mut *tx).await?;
            tx.commit().await?;
            Err(e)
        }
    }
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
