/*!
Logger files in: the import of a spooled upload (in one of the import slots, its progress visible by
the client's token), and of a file on disk (the command line, the demo). The store's import keeps
a half-imported file invisible; after a new upload the summary is worked out in the background.
*/

use std::path::{Path, PathBuf};
use std::sync::atomic::Ordering;
use std::sync::Arc;

use sha2::{Digest, Sha256};

use crate::core::units::SiteAir;
use crate::ingest::Mapping;
use crate::store::audits;
use crate::store::import::{self, ImportOutcome, ImportRequest, Progress};

use super::{App, Error, Result};

/// What the importer needs to know of the audit.
pub struct ImportContext {
    pub site: SiteAir,
    pub compressors: Vec<(String, i64)>,
}

/// A file written to the spool folder, with what the upload said of it.
pub struct SpooledFile {
    pub path: PathBuf,
    pub filename: String,
    pub sha256: String,
    pub bytes: u64,
    /// The upload whose import this file replaces (a corrected mapping), if any.
    pub replaces: Option<i64>,
}

/// A spool file of this application's, removed when dropped.
struct SpoolGuard(PathBuf);

impl Drop for SpoolGuard {
    fn drop(&mut self) {
        let _ = std::fs::remove_file(&self.0);
    }
}

impl App {
    /// What the importer needs of the audit, or [`Error::NotFound`].
    pub async fn import_context(&self, audit_id: i64) -> Result<ImportContext> {
        let a = self.audit(audit_id).await?;
        let compressors =
            audits::compressors(self.db(), audit_id).await?.into_iter().map(|c| (c.spec.tag, c.id)).collect();
        Ok(ImportContext { site: a.site.air(), compressors })
    }

    /// Import an uploaded file: it waits for an import slot, its progress can be read by `token`
    /// meanwhile, and a new upload's summary is worked out in the background afterwards.
    pub async fn import_upload(
        &self,
        audit_id: i64,
        ctx: ImportContext,
        file: &SpooledFile,
        mapping: Mapping,
        replace: bool,
        token: Option<String>,
    ) -> Result<ImportOutcome> {
        let progress = Arc::new(Progress::default());
        progress.bytes_total.store(file.bytes, Ordering::Relaxed);
        if let Some(t) = &token {
            self.inner.imports.lock().expect("imports lock").insert(t.clone(), progress.clone());
        }
        let result = async {
            let _slot = self.inner.import_slots.acquire().await.map_err(Error::internal)?;
            let req = ImportRequest {
                audit_id,
                filename: file.filename.clone(),
                path: file.path.clone(),
                sha256: file.sha256.clone(),
                bytes: file.bytes,
                mapping,
                replace,
                site: ctx.site,
                compressors: ctx.compressors,
                replaces: file.replaces,
            };
            Ok::<_, Error>(import::import_file(self.db(), req, progress).await?)
        }
        .await;
        if let Some(t) = &token {
            self.inner.imports.lock().expect("imports lock").remove(t);
        }
        let outcome = result?;
        if let ImportOutcome::Created(_) = outcome {
            // A replacing import changed the figures as much as a new one.
            // Work out the summary now, off the request, so that the first report after an upload
            // is read from the cache instead of decoding every reading while the manager waits.
            self.refresh_summary_in_background(audit_id, "import");
        }
        Ok(outcome)
    }

    /// Delete an upload with everything it wrote (readings, rollups, spans, quality report, kept
    /// original) in one transaction, and work the summary out again; `false` if the audit has no
    /// such complete upload. Readings that the upload replaced in other uploads (`replace=true`)
    /// do not come back.
    pub async fn delete_upload(&self, audit_id: i64, upload_id: i64) -> Result<bool> {
        self.audit(audit_id).await?;
        let deleted = audits::delete_upload(self.db(), audit_id, upload_id).await?;
        if deleted {
            self.refresh_summary_in_background(audit_id, "upload deleted");
        }
        Ok(deleted)
    }

    /// Import an upload's kept original again with `mapping`, replacing the earlier import: the
    /// earlier one stays as it was unless the new import completes (a 422 leaves it). The same
    /// mapping as stored gives [`ImportOutcome::Duplicate`] and changes nothing.
    pub async fn remap_upload(
        &self,
        audit_id: i64,
        upload_id: i64,
        mapping: Mapping,
        replace: bool,
        token: Option<String>,
    ) -> Result<ImportOutcome> {
        let ctx = self.import_context(audit_id).await?;
        let u = audits::uploads(self.db(), audit_id)
            .await?
            .into_iter()
            .find(|u| u.id == upload_id)
            .ok_or_else(|| Error::NotFound(format!("audit {audit_id} has no upload {upload_id}")))?;
        let dir = &self.config().spool_dir;
        std::fs::create_dir_all(dir)
            .map_err(|e| Error::internal(anyhow::anyhow!("cannot create the spool folder: {e}")))?;
        let path = dir.join(format!(
            "remap-{}-{upload_id}-{}.part",
            std::process::id(),
            jiff::Timestamp::now().as_nanosecond()
        ));
        let _guard = SpoolGuard(path.clone());
        let Some(restored) = import::original::restore(self.db(), upload_id, &path).await? else {
            return Err(Error::Conflict(format!(
                "the file of upload {upload_id} ({}) was imported before airledger kept original files: \
                 upload the file again with the corrected mapping",
                u.filename
            )));
        };
        if restored.sha256 != u.sha256 {
            return Err(Error::internal(anyhow::anyhow!(
                "the kept original of upload {upload_id} does not match its SHA-256"
            )));
        }
        let file = SpooledFile {
            path: restored.path,
            filename: u.filename,
            sha256: restored.sha256,
            bytes: restored.bytes,
            replaces: Some(upload_id),
        };
        self.import_upload(audit_id, ctx, &file, mapping, replace, token).await
    }

    /// The sniffer's reading of an upload's kept original (its first 64 KiB): the file's columns,
    /// also those its mapping left out; `None` when no original is kept or it cannot be sniffed.
    pub async fn sniff_original(&self, upload_id: i64) -> Result<Option<crate::ingest::Sniffed>> {
        let Some(head) = import::original::head(self.db(), upload_id, 64 * 1024).await? else {
            return Ok(None);
        };
        Ok(crate::ingest::sniff(&head).ok())
    }

    /// The progress of the upload sent with `token`, while it runs.
    pub fn import_progress(&self, token: &str) -> Option<Arc<Progress>> {
        self.inner.imports.lock().expect("imports lock").get(token).cloned()
    }

    /// Import a file from disk (the command line and the demo; uploads spool first).
    pub async fn import_path(
        &self,
        audit_id: i64,
        path: &Path,
        mapping: Mapping,
        replace: bool,
        progress: Arc<Progress>,
    ) -> anyhow::Result<ImportOutcome> {
        let ctx = self.import_context(audit_id).await.map_err(|e| anyhow::anyhow!("{e}"))?;
        let p = path.to_path_buf();
        let (sha256, bytes) = tokio::task::spawn_blocking(move || -> std::io::Result<(String, u64)> {
            let mut f = std::fs::File::open(&p)?;
            let mut h = Sha256::new();
            let n = std::io::copy(&mut f, &mut h)?;
            Ok((h.finalize().iter().map(|b| format!("{b:02x}")).collect(), n))
        })
        .await??;
        let req = ImportRequest {
            audit_id,
            filename: path.file_name().map(|n| n.to_string_lossy().into_owned()).unwrap_or_default(),
            path: path.to_path_buf(),
            sha256,
            bytes,
            mapping,
            replace,
            site: ctx.site,
            compressors: ctx.compressors,
            replaces: None,
        };
        import::import_file(self.db(), req, progress).await.map_err(|e| match e {
            import::ImportError::Bad(i) => anyhow::anyhow!(
                "{}{}{}",
                i.message,
                i.line.map(|l| format!(" (line {l}")).unwrap_or_default(),
                i.column.map(|c| format!(", column {c:?})")).unwrap_or_else(|| if i.line.is_some() {
                    ")".into()
                } else {
                    String::new()
                })
            ),
            other => anyhow::anyhow!("{other}"),
        })
    }
}

/// Remove every file and folder in the spool folder `dir`, logging how many and how much; called
/// only with the database's lock held, when all of it is a dead process's (an upload's `.part` file
/// or a demo file that a `kill -9` left). A folder that is missing is already clean; a file that
/// cannot be removed is logged and left.
pub(crate) fn clear_spool(dir: &Path) -> (u64, u64) {
    let Ok(entries) = std::fs::read_dir(dir) else { return (0, 0) };
    let (mut files, mut bytes) = (0u64, 0u64);
    for entry in entries.flatten() {
        let path = entry.path();
        let Ok(meta) = std::fs::symlink_metadata(&path) else { continue };
        let removed =
            if meta.is_dir() { std::fs::remove_dir_all(&path) } else { std::fs::remove_file(&path) };
        match removed {
            Ok(()) => {
                files += 1;
                bytes += if meta.is_dir() { 0 } else { meta.len() };
            }
            Err(e) => {
                tracing::warn!(path = %path.display(), "cannot remove a spool file left by an earlier stop: {e}")
            }
        }
    }
    if files > 0 {
        tracing::warn!(
            files,
            bytes,
            folder = %dir.display(),
            "removed spool files left by an earlier stop ({:.1} MB)",
            bytes as f64 / 1e6
        );
    }
    (files, bytes)
}
