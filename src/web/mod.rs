/*!
The web layer: an axum router over one [`AppState`]. Pages (askama templates) and the JSON API are
two faces of the same application (`crate::app::App`); handlers only parse, call and render, and
turn the application's errors into HTTP at the edge (`error`).
*/

pub mod access;
pub mod api;
pub mod assets;
pub mod error;
pub mod extract;
pub mod pages;
pub mod upload;

use std::net::SocketAddr;
use std::sync::Arc;

use axum::extract::DefaultBodyLimit;
use axum::http::{header, HeaderValue, Request};
use axum::middleware::{self, Next};
use axum::response::Response;
use axum::routing::{get, post};
use axum::Router;

use crate::app::App;

/// Settings of the web face fixed at start-up (the application's own are `app::Config`).
#[derive(Debug, Clone)]
pub struct Config {
    pub max_upload_bytes: u64,
    /// Required from every client when set (see `access`).
    pub token: Option<String>,
    /// The address the server listens on (set by [`run_server`] once bound); its IP is a name
    /// the Host check accepts (see `access`).
    pub bound: Option<SocketAddr>,
    /// Further names the Host check accepts (`--allow-host`).
    pub allow_hosts: Vec<String>,
}

/// What every handler gets: the application and the web's settings.
#[derive(Clone)]
pub struct AppState {
    pub app: App,
    pub config: Arc<Config>,
    /// Signed-in sessions and failed sign-ins (see `access`).
    pub sessions: Arc<access::Sessions>,
}

impl AppState {
    pub fn new(app: App, config: Config) -> Self {
        Self { app, config: Arc::new(config), sessions: Arc::default() }
    }
}

/// The largest JSON body the API reads (axum's default, named here); beyond it 413.
pub const JSON_BODY_LIMIT: usize = 2 * 1024 * 1024;

/// Content-Security-Policy: no inline script, nothing from elsewhere.
const CSP: &str = "default-src 'self'; script-src 'self'; style-src 'self'; img-src 'self' data:; \
    connect-src 'self'; object-src 'none'; base-uri 'none'; form-action 'self'; frame-ancestors 'none'";

async fn security_headers(req: Request<axum::body::Body>, next: Next) -> Response {
    let mut res = next.run(req).await;
    let h = res.headers_mut();
    h.insert(header::CONTENT_SECURITY_POLICY, HeaderValue::from_static(CSP));
    h.insert(header::X_CONTENT_TYPE_OPTIONS, HeaderValue::from_static("nosniff"));
    h.insert(header::REFERRER_POLICY, HeaderValue::from_static("same-origin"));
    h.insert(header::X_FRAME_OPTIONS, HeaderValue::from_static("DENY"));
    res
}

/// Every request but an upload must be answered within this time.
const REQUEST_TIMEOUT: std::time::Duration = std::time::Duration::from_secs(120);

async fn timeout(req: Request<axum::body::Body>, next: Next) -> Response {
    use axum::response::IntoResponse;
    // Uploads stream gigabytes on slow links; they are bounded by size instead.
    // A remap imports a kept file again, as long as an upload of it.
    if req.uri().path().ends_with("/uploads") || req.uri().path().ends_with("/remap") {
        return next.run(req).await;
    }
    match tokio::time::timeout(REQUEST_TIMEOUT, next.run(req)).await {
        Ok(r) => r,
        Err(_) => (axum::http::StatusCode::SERVICE_UNAVAILABLE, "the request took too long").into_response(),
    }
}

/// The whole application, without a socket (tests may drive it directly).
pub fn build_app(state: AppState) -> Router {
    let upload_limit = DefaultBodyLimit::max(state.config.max_upload_bytes as usize + 64 * 1024);
    let api = Router::new()
        .route("/audits", get(api::list_audits).post(api::create_audit))
        .route("/audits/{id}", get(api::get_audit).patch(api::patch_audit).delete(api::delete_audit))
        .route("/audits/{id}/compressors", post(api::add_compressor))
        .route(
            "/audits/{id}/compressors/{cid}",
            axum::routing::put(api::update_compressor).delete(api::delete_compressor),
        )
        .route("/audits/{id}/receivers", post(api::add_receiver))
        .route(
            "/audits/{id}/receivers/{rid}",
            axum::routing::put(api::update_receiver).delete(api::delete_receiver),
        )
        .route("/audits/{id}/uploads", get(api::list_uploads).post(upload::post_upload).layer(upload_limit))
        .route("/audits/{id}/uploads/{upload_id}", get(api::get_upload).delete(upload::delete_upload))
        .route("/audits/{id}/uploads/{upload_id}/remap", post(upload::remap_upload))
        .route("/audits/{id}/sniff", post(upload::post_sniff).layer(upload_limit))
        .route("/audits/{id}/date-readings", post(upload::post_date_readings))
        .route("/imports/{token}", get(upload::import_progress))
        .route("/audits/{id}/summary", get(api::summary))
        .route("/audits/{id}/channels", get(api::channels))
        .route("/audits/{id}/series", get(api::series))
        .route("/audits/{id}/field-tests", get(api::list_field_tests).post(api::add_field_test))
        .route(
            "/audits/{id}/field-tests/{tid}",
            axum::routing::put(api::replace_field_test).delete(api::delete_field_test),
        )
        .route("/audits/{id}/decay-events", get(api::decay_events))
        .route("/audits/{id}/dryers", get(api::list_dryers).post(api::add_dryer))
        .route("/audits/{id}/dryers/{iid}", axum::routing::put(api::update_dryer).delete(api::delete_dryer))
        .route("/audits/{id}/filters", get(api::list_filters).post(api::add_filter))
        .route(
            "/audits/{id}/filters/{iid}",
            axum::routing::put(api::update_filter).delete(api::delete_filter),
        )
        .route("/audits/{id}/drains", get(api::list_drains).post(api::add_drain))
        .route("/audits/{id}/drains/{iid}", axum::routing::put(api::update_drain).delete(api::delete_drain))
        .route("/audits/{id}/end-uses", get(api::list_end_uses).post(api::add_end_use))
        .route(
            "/audits/{id}/end-uses/{iid}",
            axum::routing::put(api::update_end_use).delete(api::delete_end_use),
        )
        .route("/audits/{id}/costs/{kind}", axum::routing::put(api::put_cost))
        .route("/audits/{id}/measures", get(api::get_measure_plan).put(api::put_measure_plan))
        .route("/audits/{id}/scenarios", get(api::list_scenarios).post(api::add_scenario))
        .route(
            "/audits/{id}/scenarios/{sid}",
            get(api::get_scenario)
                .put(api::replace_scenario)
                .patch(api::patch_scenario)
                .delete(api::delete_scenario),
        )
        .route("/calc/orifice-leak", post(api::calc_orifice))
        .route("/calc/compression", post(api::calc_compression))
        .fallback(api::not_found)
        .layer(DefaultBodyLimit::max(JSON_BODY_LIMIT));
    Router::new()
        .route("/", get(pages::index::index))
        .route("/login", get(access::login_page).post(access::login))
        .route("/audits", get(pages::back_to_form).post(pages::index::create_audit))
        .route("/audits/{id}", get(pages::audit::audit))
        .route("/audits/{id}/delete", get(pages::confirm::ask_audit).post(pages::confirm::delete_audit))
        .route("/audits/{id}/site", get(pages::back_to_form).post(pages::audit::save_site))
        .route("/audits/{id}/compressors", get(pages::back_to_form).post(pages::audit::add_compressor))
        .route("/audits/{id}/compressors/{cid}", get(pages::back_to_form).post(pages::edit::save_compressor))
        .route("/audits/{id}/compressors/{cid}/edit", get(pages::edit::edit_compressor))
        .route(
            "/audits/{id}/compressors/{cid}/delete",
            get(pages::confirm::ask_compressor).post(pages::confirm::delete_compressor),
        )
        .route("/audits/{id}/receivers", get(pages::back_to_form).post(pages::audit::add_receiver))
        .route("/audits/{id}/receivers/{rid}", get(pages::back_to_form).post(pages::edit::save_receiver))
        .route("/audits/{id}/receivers/{rid}/edit", get(pages::edit::edit_receiver))
        .route(
            "/audits/{id}/receivers/{rid}/delete",
            get(pages::confirm::ask_receiver).post(pages::confirm::delete_receiver),
        )
        .route(
            "/audits/{id}/uploads/{uid}/delete",
            get(pages::confirm::ask_upload).post(pages::confirm::delete_upload),
        )
        .route("/audits/{id}/uploads/{uid}/remap", get(pages::remap::remap).post(pages::remap::save_remap))
        .route(
            "/audits/{id}/tests/{tid}/delete",
            get(pages::confirm::ask_field_test).post(pages::confirm::delete_field_test),
        )
        .route(
            "/audits/{id}/scenarios/{sid}/proposal",
            get(pages::back_to_form).post(pages::scenarios::set_proposal),
        )
        .route("/audits/{id}/scenarios/{sid}/rename", get(pages::back_to_form).post(pages::scenarios::rename))
        .route("/audits/{id}/scenarios/{sid}/replay", get(pages::back_to_form).post(pages::scenarios::replay))
        .route(
            "/audits/{id}/scenarios/{sid}/delete",
            get(pages::confirm::ask_scenario).post(pages::confirm::delete_scenario),
        )
        .route("/audits/{id}/upload", get(pages::upload::upload))
        .route("/audits/{id}/treatment", get(pages::treatment::treatment))
        .route("/audits/{id}/treatment/{list}", get(pages::back_to_form).post(pages::treatment::add))
        .route(
            "/audits/{id}/treatment/{list}/{iid}/delete",
            get(pages::back_to_form).post(pages::treatment::remove),
        )
        .route("/audits/{id}/treatment/{list}/{iid}", get(pages::back_to_form).post(pages::treatment::update))
        .route("/audits/{id}/report", get(pages::report::report))
        .route("/audits/{id}/findings", get(pages::findings::findings))
        .route("/audits/{id}/findings.css", get(pages::findings::print_css))
        .route("/audits/{id}/report.css", get(pages::findings::report_print_css))
        .route("/audits/{id}/tests", get(pages::tests::tests))
        .route("/audits/{id}/scenarios", get(pages::scenarios::scenarios))
        .route("/static/{*path}", get(assets::serve))
        .route("/favicon.ico", get(assets::favicon))
        .nest("/api/v1", api)
        .fallback(pages::not_found)
        .layer(middleware::from_fn_with_state(state.clone(), access::guard))
        .layer(middleware::from_fn_with_state(state.clone(), access::host_check))
        .layer(middleware::from_fn(timeout))
        .layer(middleware::from_fn(security_headers))
        .with_state(state)
}

/// Bind and serve until Ctrl-C. Prints the URL.
pub async fn run_server(mut state: AppState, bind: SocketAddr) -> anyhow::Result<()> {
    let listener = tokio::net::TcpListener::bind(bind).await?;
    let addr = listener.local_addr()?;
    let mut config = (*state.config).clone();
    config.bound = Some(addr);
    state.config = Arc::new(config);
    println!("airledger is serving {} at http://{addr}/", state.app.db_path().display());
    let app = build_app(state).into_make_service_with_connect_info::<SocketAddr>();
    axum::serve(listener, app)
        .with_graceful_shutdown(async {
            let _ = tokio::signal::ctrl_c().await;
        })
        .await?;
    Ok(())
}
