//! The upload page: the file, the sniffer's preview and the column mapping (`static/js/upload.js`).

use askama::Template;
use axum::extract::{Path, Query, State};

use super::flash::{Done, DoneQuery};
use super::inputs::Inputs;
use super::words::local_time;
use super::{render, PageResult};
use crate::core::display::Fmt;
use crate::store::audits::{Audit, UploadRecord};
use crate::web::AppState;

#[derive(Template)]
#[template(path = "upload.html")]
struct UploadPage {
    audit: Audit,
    uploads: Vec<UploadRecord>,
    max_upload_mb: u64,
    page_data: serde_json::Value,
    zones: Vec<String>,
    /// Each file's first and last reading in the site's time.
    spans: Vec<(String, String, Vec<String>)>,
    /// Counts as every page writes them.
    fmt: Fmt,
    /// What was just done (`flash`: a delete or a re-map started from this page comes back here).
    done: Option<String>,
}

pub async fn upload(
    State(st): State<AppState>,
    Path(id): Path<i64>,
    Query(q): Query<DoneQuery>,
) -> PageResult {
    let b = st.app.bundle(id).await?;
    let page_data = serde_json::json!({
        "audit_id": id,
        "compressors": b.compressors.iter().map(|c| c.spec.tag.clone()).collect::<Vec<_>>(),
        "units": crate::ingest::units_by_quantity(),
        "entry": Inputs::new(b.audit.site.display_units).page_data(),
        "timezone": b.audit.site.timezone,
        "current_defaults": crate::ingest::mapping::current_defaults(b.audit.site.display_units),
    });
    let tz = b.audit.site.timezone.clone();
    let spans = b
        .uploads
        .iter()
        .map(|u| {
            let at = |t: &Option<String>| t.as_deref().map(|t| local_time(t, &tz)).unwrap_or_default();
            (at(&u.first), at(&u.last), super::read_as::mapping_in_words(&u.mapping, &tz))
        })
        .collect();
    let fmt = b.fmt();
    let uploads = super::words::uploads_in_local_time(b.uploads, &tz, &fmt);
    Ok(render(&UploadPage {
        fmt,
        done: Done::message(&q),
        max_upload_mb: st.config.max_upload_bytes / (1024 * 1024),
        audit: b.audit,
        uploads,
        page_data,
        zones: super::zone_names(),
        spans,
    }))
}
