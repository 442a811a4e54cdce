/*!
Static files, embedded in the binary: our CSS and page scripts, the favicon, and the vendored Chart.js
(4.x, from the npm registry, with its licence). Nothing is ever fetched from elsewhere.
*/

use axum::extract::Path;
use axum::http::{header, StatusCode};
use axum::response::{IntoResponse, Response};

struct Asset {
    path: &'static str,
    mime: &'static str,
    body: &'static [u8],
}

macro_rules! asset {
    ($path:literal, $mime:literal) => {
        Asset { path: $path, mime: $mime, body: include_bytes!(concat!("../../static/", $path)) }
    };
}

const ASSETS: &[Asset] = &[
    asset!("css/app.css", "text/css; charset=utf-8"),
    asset!("js/common.js", "text/javascript; charset=utf-8"),
    asset!("js/upload.js", "text/javascript; charset=utf-8"),
    asset!("js/report.js", "text/javascript; charset=utf-8"),
    asset!("js/tests.js", "text/javascript; charset=utf-8"),
    asset!("js/scenarios.js", "text/javascript; charset=utf-8"),
    asset!("js/remap.js", "text/javascript; charset=utf-8"),
    asset!("favicon.svg", "image/svg+xml"),
    asset!("vendor/chart.umd.min.js", "text/javascript; charset=utf-8"),
    asset!("vendor/chart.js.LICENSE.md", "text/plain; charset=utf-8"),
];

/// `GET /static/{*path}`.
pub async fn serve(Path(path): Path<String>) -> Response {
    match ASSETS.iter().find(|a| a.path == path) {
        Some(a) => {
            ([(header::CONTENT_TYPE, a.mime), (header::CACHE_CONTROL, "public, max-age=3600")], a.body)
                .into_response()
        }
        None => (StatusCode::NOT_FOUND, "no such file").into_response(),
    }
}

/// An embedded text file by its path under `static/` (`css/app.css`), for a page written as a
/// standalone file that must carry its styles and scripts inline.
pub fn text(path: &str) -> Option<&'static str> {
    ASSETS.iter().find(|a| a.path == path).and_then(|a| std::str::from_utf8(a.body).ok())
}

/// `GET /favicon.ico` (browsers ask for it by that name).
pub async fn favicon() -> Response {
    serve(Path("favicon.svg".to_string())).await
}
