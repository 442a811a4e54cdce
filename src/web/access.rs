/*!
Who may use the server, and from where.

- **Token.** Bound to loopback, the server needs no token. Bound to any other address it refuses to
  start without one (`--token` or `AIRLEDGER_TOKEN`). With a token, every request but the sign-in
  page and the static files needs it: the API as `Authorization: Bearer TOKEN`, a browser as the
  HttpOnly, SameSite=Strict cookie the sign-in page sets. Without it: 401. Comparisons run in
  constant time.
- **Cross-site requests.** A state-changing request (POST, PUT, PATCH, DELETE) whose `Origin` names
  another host than the request's `Host` gets 403, as does one a browser marks
  `Sec-Fetch-Site: cross-site`. Clients that send neither header (scripts, the CLI) are not browsers
  and cannot be driven by another site.
*/

use axum::extract::{Form, Request, State};
use axum::http::{header, HeaderMap, Method, StatusCode};
use axum::middleware::Next;
use axum::response::{Html, IntoResponse, Redirect, Response};
use serde::Deserialize;
use sha2::{Digest, Sha256};

use super::error::AppError;
use super::AppState;

pub const COOKIE: &str = "airledger_session";

/// Equal in constant time for equal lengths (the lengths of hex digests are fixed).
pub fn constant_time_eq(a: &[u8], b: &[u8]) -> bool {
    if a.len() != b.len() {
        return false;
    }
    a.iter().zip(b).fold(0u8, |acc, (x, y)| acc | (x ^ y)) == 0
}

/// The cookie value for a token: its SHA-256, so the token itself is not stored in the browser.
pub fn session_value(token: &str) -> String {
    Sha256::digest(format!("airledger-session:{token}").as_bytes())
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

fn authorized(headers: &HeaderMap, token: &str) -> bool {
    if let Some(v) = headers.get(header::AUTHORIZATION).and_then(|v| v.to_str().ok()) {
        if let Some(given) = v.strip_prefix("Bearer ") {
            let a = Sha256::digest(given.trim().as_bytes());
            let b = Sha256::digest(token.as_bytes());
            return constant_time_eq(&a, &b);
        }
    }
    let want = session_value(token);
    headers
        .get_all(header::COOKIE)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(';'))
        .filter_map(|kv| kv.trim().split_once('='))
        .any(|(k, v)| k == COOKIE && constant_time_eq(v.as_bytes(), want.as_bytes()))
}

fn cross_site(req: &Request) -> bool {
    let h = req.headers();
    if h.get("sec-fetch-site").and_then(|v| v.to_str().ok()) == Some("cross-site") {
        return true;
    }
    let Some(origin) = h.get(header::ORIGIN).and_then(|v| v.to_str().ok()) else { return false };
    if origin == "null" {
        return true;
    }
    let host = h.get(header::HOST).and_then(|v| v.to_str().ok()).unwrap_or("");
    let origin_host = origin.split_once("://").map(|(_, rest)| rest).unwrap_or(origin).trim_end_matches('/');
    !origin_host.eq_ignore_ascii_case(host)
}

/// The access middleware: cross-site writes first (403), then the token (401).
pub async fn guard(State(st): State<AppState>, req: Request, next: Next) -> Response {
    let writes = matches!(*req.method(), Method::POST | Method::PUT | Method::PATCH | Method::DELETE);
    if writes && cross_site(&req) {
        return (
            StatusCode::FORBIDDEN,
            axum::Json(
                serde_json::json!({"error": {"message": "cross-site requests may not change anything"}}),
            ),
        )
            .into_response();
    }
    if let Some(token) = &st.config.token {
        let path = req.uri().path();
        let open = path == "/login" || path.starts_with("/static/") || path == "/favicon.ico";
        if !open && !authorized(req.headers(), token) {
            if path.starts_with("/api/") {
                return AppError::Unauthorized.into_response();
            }
            return (StatusCode::UNAUTHORIZED, Html(login_html(""))).into_response();
        }
    }
    next.run(req).await
}

fn login_html(message: &str) -> String {
    // A fixed page with no user text but the fixed message: no template needed.
    format!(
        "<!doctype html><html lang=\"en\"><head><meta charset=\"utf-8\"><meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\
         <title>Sign in · airledger</title><link rel=\"stylesheet\" href=\"/static/css/app.css\"></head><body><main>\
         <section class=\"panel\"><h1>Sign in to airledger</h1><p>{message}This dashboard is shared on the network: enter the access token its operator gave you.</p>\
         <form method=\"post\" action=\"/login\" class=\"inline-form\"><label>Access token <input name=\"token\" type=\"password\" required autocomplete=\"current-password\"></label>\
         <button type=\"submit\">Sign in</button></form></section></main></body></html>"
    )
}

pub async fn login_page() -> Html<String> {
    Html(login_html(""))
}

#[derive(Deserialize)]
pub struct LoginForm {
    token: String,
}

pub async fn login(State(st): State<AppState>, Form(f): Form<LoginForm>) -> Response {
    let Some(token) = &st.config.token else { return Redirect::to("/").into_response() };
    let a = Sha256::digest(f.token.trim().as_bytes());
    let b = Sha256::digest(token.as_bytes());
    if !constant_time_eq(&a, &b) {
        return (StatusCode::UNAUTHORIZED, Html(login_html("That token is not right. "))).into_response();
    }
    let cookie = format!("{COOKIE}={}; HttpOnly; SameSite=Strict; Path=/", session_value(token));
    ([(header::SET_COOKIE, cookie)], Redirect::to("/")).into_response()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn constant_time_comparison_is_exact() {
        assert!(constant_time_eq(b"abc", b"abc"));
        assert!(!constant_time_eq(b"abc", b"abd"));
        assert!(!constant_time_eq(b"abc", b"ab"));
    }

    #[test]
    fn bearer_and_cookie_both_authorize_and_nothing_else_does() {
        let mut h = HeaderMap::new();
        assert!(!authorized(&h, "s3cret"));
        h.insert(header::AUTHORIZATION, "Bearer s3cret".parse().unwrap());
        assert!(authorized(&h, "s3cret"));
        let mut h = HeaderMap::new();
        h.insert(header::COOKIE, format!("a=1; {COOKIE}={}", session_value("s3cret")).parse().unwrap());
        assert!(authorized(&h, "s3cret"));
        assert!(!authorized(&h, "other"));
    }
}
