/*!
Logger files over HTTP: the multipart upload (streamed to a spool file with its SHA-256, bounded
memory), the sniffer's preview for the mapping form, and import progress.

`POST /api/v1/audits/{id}/uploads?replace=true` replaces stored readings of the same channels inside
the new file's span instead of answering 409. `?token=T` (any short string the client picks) lets the
client poll `GET /api/v1/imports/T` for progress.
*/

use std::path::PathBuf;
use std::sync::atomic::{AtomicU64, Ordering};

use axum::extract::multipart::Field;
use axum::extract::{Multipart, Path, Query, State};

use super::api::ApiPath;
use axum::http::StatusCode;
use axum::response::{IntoResponse, Response};
use axum::Json;
use serde::Deserialize;
use sha2::{Digest, Sha256};
use tokio::io::AsyncWriteExt;

use super::error::AppError;
use super::AppState;
use crate::app::imports::SpooledFile;
use crate::ingest::{self, Mapping};
use crate::store::import::ImportOutcome;

#[derive(Deserialize)]
pub struct UploadQuery {
    #[serde(default)]
    replace: Option<String>,
    #[serde(default)]
    token: Option<String>,
}

/// A spooled upload, removed when dropped.
struct Spool {
    path: PathBuf,
}

impl Drop for Spool {
    fn drop(&mut self) {
        let _ = std::fs::remove_file(&self.path);
    }
}

static SPOOL_SEQ: AtomicU64 = AtomicU64::new(0);

fn multipart_error(e: axum::extract::multipart::MultipartError) -> AppError {
    if e.status() == StatusCode::PAYLOAD_TOO_LARGE {
        AppError::TooLarge("the file is larger than the upload limit (--max-upload-mb)".into())
    } else {
        AppError::BadRequest(format!("the upload cannot be read: {}", e.body_text()))
    }
}

async fn spool(state: &AppState, mut field: Field<'_>) -> Result<(Spool, String, u64), AppError> {
    tokio::fs::create_dir_all(&state.app.config().spool_dir)
        .await
        .map_err(|e| AppError::Internal(anyhow::anyhow!("cannot create the spool folder: {e}")))?;
    let name = format!(
        "upload-{}-{}-{}.part",
        std::process::id(),
        SPOOL_SEQ.fetch_add(1, Ordering::Relaxed),
        jiff::Timestamp::now().as_nanosecond()
    );
    let spool = Spool { path: state.app.config().spool_dir.join(name) };
    let mut file = tokio::fs::File::create(&spool.path)
        .await
        .map_err(|e| AppError::Internal(anyhow::anyhow!("cannot create a spool file: {e}")))?;
    let mut hasher = Sha256::new();
    let mut bytes = 0u64;
    while let Some(piece) = field.chunk().await.map_err(multipart_error)? {
        bytes += piece.len() as u64;
        if bytes > state.config.max_upload_bytes {
            return Err(AppError::TooLarge(format!(
                "the file is larger than the upload limit of {} MB",
                state.config.max_upload_bytes / (1024 * 1024)
            )));
        }
        hasher.update(&piece);
        file.write_all(&piece)
            .await
            .map_err(|e| AppError::Internal(anyhow::anyhow!("cannot write the spool file: {e}")))?;
    }
    file.flush().await.map_err(|e| AppError::Internal(e.into()))?;
    let digest = hasher.finalize();
    let hex: String = digest.iter().map(|b| format!("{b:02x}")).collect();
    Ok((spool, hex, bytes))
}

/// The largest `mapping` part read: a mapping of even a thousand columns is a few hundred KiB.
pub const MAPPING_LIMIT: usize = 1024 * 1024;

fn parse_mapping(text: &[u8]) -> Result<Mapping, AppError> {
    serde_json::from_slice(text).map_err(|e| AppError::Unprocessable {
        message: format!("the mapping is not valid: {e}"),
        line: None,
        column: None,
        field: Some("mapping".into()),
    })
}

/// The `mapping` part, read piece by piece and never past [`MAPPING_LIMIT`].
async fn read_mapping(field: &mut Field<'_>) -> Result<Vec<u8>, AppError> {
    let mut text = Vec::new();
    while let Some(piece) = field.chunk().await.map_err(multipart_error)? {
        if text.len() + piece.len() > MAPPING_LIMIT {
            return Err(AppError::TooLarge(format!(
                "the mapping part is larger than {} KiB: a mapping is a short JSON object",
                MAPPING_LIMIT / 1024
            )));
        }
        text.extend_from_slice(&piece);
    }
    Ok(text)
}

/// Read what is left of a refused upload without keeping it, so the client that is still sending
/// gets the answer instead of a reset connection. The body limit of the route bounds the time.
async fn drain(multipart: &mut Multipart) {
    while let Ok(Some(mut field)) = multipart.next_field().await {
        while let Ok(Some(_)) = field.chunk().await {}
    }
}

fn twice(part: &str) -> AppError {
    AppError::bad_field(part, format!("the upload has more than one part named {part}: send exactly one"))
}

/// `POST /api/v1/audits/{id}/uploads`: multipart, exactly one `file` and one `mapping` part.
/// Parts of other names are skipped unread.
pub async fn post_upload(
    State(state): State<AppState>,
    ApiPath(audit_id): ApiPath<i64>,
    Query(q): Query<UploadQuery>,
    mut multipart: Multipart,
) -> Result<Response, AppError> {
    let ctx = state.app.import_context(audit_id).await?;
    let mut mapping: Option<Mapping> = None;
    let mut file: Option<(Spool, String, u64, String)> = None;
    while let Some(field) = multipart.next_field().await.map_err(multipart_error)? {
        // The field is dropped at the end of this block, before any `drain` (multer reads no
        // further part while one is alive).
        let refused = {
            let mut field = field;
            match field.name() {
                Some("mapping") if mapping.is_some() => Err(twice("mapping")),
                Some("mapping") => match read_mapping(&mut field).await {
                    Ok(text) => parse_mapping(&text).map(|m| mapping = Some(m)),
                    Err(e) => Err(e),
                },
                Some("file") if file.is_some() => Err(twice("file")),
                Some("file") => {
                    let filename = field.file_name().unwrap_or("upload.csv").to_string();
                    let (s, sha, bytes) = spool(&state, field).await?;
                    file = Some((s, sha, bytes, filename));
                    Ok(())
                }
                _ => Ok(()),
            }
        };
        if let Err(e) = refused {
            drain(&mut multipart).await;
            return Err(e);
        }
    }
    let mapping = mapping
        .ok_or_else(|| AppError::bad_field("mapping", "the upload needs a part named mapping (JSON)"))?;
    let (spooled, sha256, bytes, filename) =
        file.ok_or_else(|| AppError::bad_field("file", "the upload needs a part named file"))?;
    let replace = matches!(q.replace.as_deref(), Some("true" | "1" | "yes" | "on"));

    let token = q.token.filter(|t| !t.is_empty() && t.len() <= 64);
    let file = SpooledFile { path: spooled.path.clone(), filename, sha256, bytes, replaces: None };
    let result = state.app.import_upload(audit_id, ctx, &file, mapping, replace, token).await;
    drop(spooled);
    Ok(upload_reply(result?))
}

/// The reply of an upload: 201 with what was imported, or 200 naming the earlier upload of the
/// same bytes and mapping.
fn upload_reply(outcome: ImportOutcome) -> Response {
    match outcome {
        ImportOutcome::Created(s) => (StatusCode::CREATED, Json(s)).into_response(),
        ImportOutcome::Duplicate { upload_id } => (
            StatusCode::OK,
            Json(serde_json::json!({
                "upload_id": upload_id,
                "duplicate": true,
                "rows": 0,
                "readings": 0,
                "warnings": ["this file was imported before with the same mapping: nothing was added"],
                "warning_parts": [["this file was imported before with the same mapping: nothing was added"]],
            })),
        )
            .into_response(),
    }
}

/// `DELETE /api/v1/audits/{id}/uploads/{upload_id}`: 204, the upload and everything it wrote gone.
pub async fn delete_upload(
    State(state): State<AppState>,
    ApiPath((audit_id, upload_id)): ApiPath<(i64, i64)>,
) -> Result<Response, AppError> {
    if !state.app.delete_upload(audit_id, upload_id).await? {
        return Err(AppError::NotFound(format!("audit {audit_id} has no upload {upload_id}")));
    }
    Ok(StatusCode::NO_CONTENT.into_response())
}

/// `POST /api/v1/audits/{id}/uploads/{upload_id}/remap` with a mapping as the JSON body: the kept
/// original imported again with it, replacing the earlier import (201, the reply of an upload;
/// 200 when the mapping is the stored one). `?replace=true` and `?token=` as for an upload.
pub async fn remap_upload(
    State(state): State<AppState>,
    ApiPath((audit_id, upload_id)): ApiPath<(i64, i64)>,
    Query(q): Query<UploadQuery>,
    body: axum::body::Bytes,
) -> Result<Response, AppError> {
    if body.len() > MAPPING_LIMIT {
        return Err(AppError::TooLarge(format!(
            "the mapping is larger than {} KiB: a mapping is a short JSON object",
            MAPPING_LIMIT / 1024
        )));
    }
    let mapping = parse_mapping(&body)?;
    let replace = matches!(q.replace.as_deref(), Some("true" | "1" | "yes" | "on"));
    let token = q.token.filter(|t| !t.is_empty() && t.len() <= 64);
    Ok(upload_reply(state.app.remap_upload(audit_id, upload_id, mapping, replace, token).await?))
}

/// `POST /api/v1/audits/{id}/sniff`: multipart, exactly one `file` part; only its first 64 KiB are
/// kept (the rest is read and dropped, to see that no second `file` part follows).
pub async fn post_sniff(
    State(state): State<AppState>,
    ApiPath(audit_id): ApiPath<i64>,
    mut multipart: Multipart,
) -> Result<Response, AppError> {
    state.app.import_context(audit_id).await?;
    let mut head = Vec::with_capacity(64 * 1024);
    let mut files = 0;
    while let Some(mut field) = multipart.next_field().await.map_err(multipart_error)? {
        if field.name() != Some("file") {
            continue;
        }
        files += 1;
        if files > 1 {
            drop(field);
            drain(&mut multipart).await;
            return Err(twice("file"));
        }
        while let Some(piece) = field.chunk().await.map_err(multipart_error)? {
            let room = 64 * 1024 - head.len();
            head.extend_from_slice(&piece[..piece.len().min(room)]);
        }
    }
    if files == 0 {
        return Err(AppError::bad_field("file", "the request needs a part named file"));
    }
    if head.is_empty() {
        return Err(AppError::field("file", "the file is empty"));
    }
    let mut sniffed = ingest::sniff(&head)?;
    let suggested = ingest::suggest_mapping(&sniffed);
    let audit = state.app.audit(audit_id).await?;
    // A note that quotes a specific power says it in the audit's units.
    let fmt = crate::core::display::Fmt::new(audit.site.display_units, audit.site.air().atmosphere);
    for c in sniffed.columns.iter_mut().filter(|c| !c.note_parts.is_empty()) {
        c.note = Some(crate::core::display::render_parts(&c.note_parts, &fmt));
    }
    // How the first rows' times read, in the logger's zone as proposed (the audit's).
    let timezone = audit.site.timezone;
    let date_readings = sniffed_readings(&sniffed, &timezone);
    let key = ingest::layout_key(&sniffed.header);
    let remembered: Option<serde_json::Value> =
        state.app.remembered_mapping(&key).await?.and_then(|m| serde_json::from_str(&m).ok());
    Ok(Json(serde_json::json!({
        "sniffed": sniffed,
        "suggested_mapping": suggested,
        "remembered_mapping": remembered,
        "layout_key": key,
        "date_readings": date_readings,
        "timezone": timezone,
    }))
    .into_response())
}

/// `GET /api/v1/imports/{token}`: progress of a running import.
pub async fn import_progress(
    State(state): State<AppState>,
    Path(token): Path<String>,
) -> Json<serde_json::Value> {
    let p = state.app.import_progress(&token);
    Json(match p {
        Some(p) => {
            let done = p.bytes_done.load(Ordering::Relaxed);
            let total = p.bytes_total.load(Ordering::Relaxed);
            serde_json::json!({
                "state": if done == 0 { "waiting" } else { "importing" },
                "bytes_done": done,
                "bytes_total": total,
                "readings": p.readings.load(Ordering::Relaxed),
            })
        }
        None => serde_json::json!({"state": "unknown"}),
    })
}

/// The readings of the sniffed timestamp column's first rows in zone `tz` (none when the sniffer
/// found no timestamp or the zone is not one).
pub fn sniffed_readings(sniffed: &ingest::Sniffed, tz: &str) -> Vec<ingest::sniff::time::DateReading> {
    let Some(ts) = &sniffed.timestamp else { return vec![] };
    let cells = sniffed.time_cells(&ts.column, ts.time_column.as_deref());
    ingest::sniff::time::date_readings(&cells, (tz, tz), Some(&ts.format), ts.interval).unwrap_or_default()
}

/// The body of `POST /api/v1/audits/{id}/date-readings`.
#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DateReadingsRequest {
    /// The timestamp column's first cells (a time column's cell after a space), as written.
    pub cells: Vec<String>,
    /// The format chosen now (shown first); absent: only the formats that read the cells.
    #[serde(default)]
    pub format: Option<String>,
    /// The logger's IANA zone; absent: the audit's.
    #[serde(default)]
    pub timezone: Option<String>,
    #[serde(default)]
    pub interval: Option<ingest::mapping::IntervalEnd>,
}

/// `POST /api/v1/audits/{id}/date-readings`: how the first rows' times read under each format
/// that reads them, in words, logged in the zone given and shown on the site's clock: the mapping
/// form's preview.
pub async fn post_date_readings(
    State(state): State<AppState>,
    ApiPath(audit_id): ApiPath<i64>,
    super::extract::ApiJson(req): super::extract::ApiJson<DateReadingsRequest>,
) -> Result<Response, AppError> {
    let audit = state.app.audit(audit_id).await?;
    if req.cells.len() > 200 || req.cells.iter().any(|c| c.len() > 200) {
        return Err(AppError::field("cells", "send at most 200 cells of at most 200 bytes each"));
    }
    let site = audit.site.timezone;
    let tz = req.timezone.filter(|t| !t.trim().is_empty()).unwrap_or_else(|| site.clone());
    let tz = tz.trim().to_string();
    let readings =
        ingest::sniff::time::date_readings(&req.cells, (&tz, &site), req.format.as_deref(), req.interval)
            .map_err(|m| AppError::field("timezone", m))?;
    Ok(Json(serde_json::json!({ "timezone": tz, "site_timezone": site, "readings": readings }))
        .into_response())
}
