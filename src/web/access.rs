/*!
Who may use the server, and from where.

- **Host.** Every request must name this server in its `Host` header: the bound address (with or
  without its port), `localhost`, `127.0.0.1`, `[::1]` (any loopback address), or a name given with
  `--allow-host` (repeatable). Anything else gets 421 Misdirected Request (the JSON error shape under
  `/api`, a short plain page elsewhere) before any other check. The threat is **DNS rebinding**: a page
  on `evil.example` has its name re-resolved to 127.0.0.1 and then, being same-origin with itself,
  reads and writes this loopback dashboard from the victim's browser; neither the token (none on
  loopback) nor the cross-site check below (the browser sees no other origin) stops it. But the
  browser still sends `Host: evil.example`, which is what this check refuses. Only names are checked,
  not ports (a tunnel such as `ssh -L 9000:127.0.0.1:8080` makes the browser send `localhost:9000`):
  rebinding needs a name the attacker owns, and ports do not change whose name it is. Bound to an
  unspecified address (`0.0.0.0`, `::`), any IP literal is accepted, for the machine may have many
  addresses and an IP literal cannot be rebound; names still need `--allow-host`. A request without
  `Host` is refused too (every HTTP/1.1 client sends one).
- **Token.** Bound to loopback, the server needs no token. Bound to any other address it refuses to
  start without one (`--token` or `AIRLEDGER_TOKEN`). With a token, every request but the sign-in
  page and the static files needs it: the API as `Authorization: Bearer TOKEN`, a browser as the
  HttpOnly, SameSite=Strict session cookie the sign-in page sets. Without it: 401. Comparisons of the
  token run in constant time.
- **Sessions.** Signing in creates a session id of 32 random bytes read from `/dev/urandom` (the
  server is built for Linux; no random-number crate is in the tree), kept in memory with a fixed
  expiry of [`SESSION_LIFETIME`] from sign-in (fixed, not sliding, so a copied cookie dies on time
  however much it is used). The server keeps the SHA-256 of each id, not the id, so a lookup's timing
  says nothing about live ids. At most [`MAX_SESSIONS`] live at once; beyond that the one closest to
  expiry is dropped. A restart signs everyone out.
- **Slow-down.** A client that fails the token [`MAX_FAILURES`] times within [`FAILURE_WINDOW`]
  (wrong sign-in form, wrong `Bearer`) gets 429 with `Retry-After` on every further token check
  until the window it opened ends, even with the right token. Clients are told apart by IP address
  (IPv6 by its /64, which one host commonly holds whole); at most [`MAX_CLIENTS`] are tracked, and
  once that many are failing at once, newcomers share one bucket, so memory stays bounded and a
  flood of addresses slows itself down. A stale session cookie (after a restart) is not a failure.
- **Cross-site requests.** A state-changing request (POST, PUT, PATCH, DELETE) whose `Origin` names
  another host than the request's `Host` gets 403, as does one a browser marks
  `Sec-Fetch-Site: cross-site`. Clients that send neither header (scripts, the CLI) are not browsers
  and cannot be driven by another site.
*/

use std::collections::HashMap;
use std::io::Read;
use std::net::{IpAddr, Ipv6Addr, SocketAddr};
use std::sync::Mutex;
use std::time::{Duration, Instant};

use axum::extract::{ConnectInfo, Form, FromRequestParts, Request, State};
use axum::http::request::Parts;
use axum::http::{header, HeaderMap, Method, StatusCode};
use axum::middleware::Next;
use axum::response::{Html, IntoResponse, Redirect, Response};
use serde::Deserialize;
use sha2::{Digest, Sha256};

use super::error::AppError;
use super::{AppState, Config};

pub const COOKIE: &str = "airledger_session";
/// How long a sign-in lasts (a working day and then some).
pub const SESSION_LIFETIME: Duration = Duration::from_secs(12 * 3600);
/// Live sessions kept at most.
pub const MAX_SESSIONS: usize = 1024;
/// Failed token checks allowed per client within [`FAILURE_WINDOW`].
pub const MAX_FAILURES: u32 = 5;
pub const FAILURE_WINDOW: Duration = Duration::from_secs(60);
/// Clients whose failures are tracked at most.
pub const MAX_CLIENTS: usize = 4096;

/// Equal in constant time for equal lengths (the lengths of hex digests are fixed).
pub fn constant_time_eq(a: &[u8], b: &[u8]) -> bool {
    if a.len() != b.len() {
        return false;
    }
    a.iter().zip(b).fold(0u8, |acc, (x, y)| acc | (x ^ y)) == 0
}

fn token_matches(given: &str, token: &str) -> bool {
    let a = Sha256::digest(given.trim().as_bytes());
    let b = Sha256::digest(token.as_bytes());
    constant_time_eq(&a, &b)
}

// ---- Host ----

/// The name part of a `Host` value, lower-cased, without port, brackets or a final dot.
fn host_name(host: &str) -> String {
    let host = host.trim();
    let name = if let Some(rest) = host.strip_prefix('[') {
        rest.split(']').next().unwrap_or("")
    } else {
        match host.rsplit_once(':') {
            Some((n, port)) if port.bytes().all(|b| b.is_ascii_digit()) => n,
            _ => host,
        }
    };
    name.trim_end_matches('.').to_ascii_lowercase()
}

/// Whether a `Host` value names this server (see the module's notes).
pub fn host_allowed(host: &str, config: &Config) -> bool {
    let name = host_name(host);
    if name.is_empty() {
        return false;
    }
    if name == "localhost" {
        return true;
    }
    if let Ok(ip) = name.parse::<IpAddr>() {
        return ip.is_loopback() || config.bound.is_some_and(|b| b.ip() == ip || b.ip().is_unspecified());
    }
    config.allow_hosts.iter().any(|a| host_name(a) == name)
}

/// The Host middleware: 421 for a request that does not name this server.
pub async fn host_check(State(st): State<AppState>, req: Request, next: Next) -> Response {
    let host = req
        .headers()
        .get(header::HOST)
        .and_then(|v| v.to_str().ok())
        .map(str::to_string)
        .or_else(|| req.uri().authority().map(|a| a.as_str().to_string()));
    if host.as_deref().is_some_and(|h| host_allowed(h, &st.config)) {
        return next.run(req).await;
    }
    let shown: String = host.as_deref().unwrap_or("(none)").chars().take(100).collect();
    let message = format!(
        "this server does not answer to the name {shown:?}: use its address or localhost, \
         or start it with --allow-host NAME"
    );
    if req.uri().path().starts_with("/api/") {
        return (
            StatusCode::MISDIRECTED_REQUEST,
            axum::Json(serde_json::json!({"error": {"message": message}})),
        )
            .into_response();
    }
    (StatusCode::MISDIRECTED_REQUEST, [(header::CONTENT_TYPE, "text/plain; charset=utf-8")], message)
        .into_response()
}

// ---- Sessions and failures ----

#[derive(Clone, Copy, PartialEq, Eq, Hash)]
enum Client {
    Ip(IpAddr),
    /// Clients past [`MAX_CLIENTS`], and any whose address is unknown.
    Shared,
}

fn client_of(ip: Option<IpAddr>) -> Client {
    match ip {
        Some(IpAddr::V6(v6)) if v6.to_ipv4_mapped().is_none() => {
            let s = v6.segments();
            Client::Ip(IpAddr::V6(Ipv6Addr::new(s[0], s[1], s[2], s[3], 0, 0, 0, 0)))
        }
        Some(IpAddr::V6(v6)) => Client::Ip(IpAddr::V4(v6.to_ipv4_mapped().expect("mapped"))),
        Some(ip) => Client::Ip(ip),
        None => Client::Shared,
    }
}

struct Failures {
    count: u32,
    since: Instant,
}

#[derive(Default)]
struct Inner {
    /// SHA-256 of a session id -> when it ends.
    sessions: HashMap<[u8; 32], Instant>,
    failures: HashMap<Client, Failures>,
}

/// Signed-in sessions and failed attempts, in memory (see the module's notes).
#[derive(Default)]
pub struct Sessions {
    inner: Mutex<Inner>,
}

fn session_key(id: &str) -> [u8; 32] {
    Sha256::digest(id.as_bytes()).into()
}

/// 32 bytes from the kernel's generator, as hex. Linux (and other Unix systems with `/dev/urandom`).
fn random_id() -> std::io::Result<String> {
    let mut bytes = [0u8; 32];
    std::fs::File::open("/dev/urandom")?.read_exact(&mut bytes)?;
    Ok(bytes.iter().map(|b| format!("{b:02x}")).collect())
}

impl Sessions {
    fn lock(&self) -> std::sync::MutexGuard<'_, Inner> {
        self.inner.lock().unwrap_or_else(|e| e.into_inner())
    }

    /// A new session id, live for [`SESSION_LIFETIME`].
    pub fn create(&self, now: Instant) -> std::io::Result<String> {
        let id = random_id()?;
        let mut inner = self.lock();
        inner.sessions.retain(|_, end| *end > now);
        if inner.sessions.len() >= MAX_SESSIONS {
            if let Some(k) = inner.sessions.iter().min_by_key(|(_, end)| **end).map(|(k, _)| *k) {
                inner.sessions.remove(&k);
            }
        }
        inner.sessions.insert(session_key(&id), now + SESSION_LIFETIME);
        Ok(id)
    }

    /// Whether an id is a live session.
    pub fn live(&self, id: &str, now: Instant) -> bool {
        self.lock().sessions.get(&session_key(id)).is_some_and(|end| *end > now)
    }

    fn bucket(inner: &mut Inner, client: Client, now: Instant) -> Client {
        if inner.failures.contains_key(&client) || inner.failures.len() < MAX_CLIENTS {
            return client;
        }
        inner.failures.retain(|_, f| now.duration_since(f.since) < FAILURE_WINDOW);
        if inner.failures.len() < MAX_CLIENTS {
            client
        } else {
            Client::Shared
        }
    }

    /// `Some(seconds to wait)` while a client is over its failures.
    pub fn blocked(&self, ip: Option<IpAddr>, now: Instant) -> Option<u64> {
        let mut inner = self.lock();
        let key = Self::bucket(&mut inner, client_of(ip), now);
        let f = inner.failures.get(&key)?;
        let elapsed = now.duration_since(f.since);
        if f.count >= MAX_FAILURES && elapsed < FAILURE_WINDOW {
            Some((FAILURE_WINDOW - elapsed).as_secs().max(1))
        } else {
            None
        }
    }

    /// Count a failed token check.
    pub fn failed(&self, ip: Option<IpAddr>, now: Instant) {
        let mut inner = self.lock();
        let key = Self::bucket(&mut inner, client_of(ip), now);
        let f = inner.failures.entry(key).or_insert(Failures { count: 0, since: now });
        if now.duration_since(f.since) >= FAILURE_WINDOW {
            *f = Failures { count: 0, since: now };
        }
        f.count += 1;
    }

    /// Forget a client's failures after it gave the right token.
    pub fn succeeded(&self, ip: Option<IpAddr>) {
        if let Client::Ip(ip) = client_of(ip) {
            self.lock().failures.remove(&Client::Ip(ip));
        }
    }
}

/// The client's IP address, when the server knows it (it does when serving a socket).
pub struct ClientIp(pub Option<IpAddr>);

impl<S: Send + Sync> FromRequestParts<S> for ClientIp {
    type Rejection = std::convert::Infallible;
    async fn from_request_parts(parts: &mut Parts, _: &S) -> Result<Self, Self::Rejection> {
        Ok(Self(parts.extensions.get::<ConnectInfo<SocketAddr>>().map(|c| c.0.ip())))
    }
}

fn too_many(seconds: u64, api: bool) -> Response {
    let message = format!("too many wrong tokens from this address: try again in {seconds} s");
    let retry = [(header::RETRY_AFTER, seconds.to_string())];
    if api {
        return (
            StatusCode::TOO_MANY_REQUESTS,
            retry,
            axum::Json(serde_json::json!({"error": {"message": message}})),
        )
            .into_response();
    }
    (StatusCode::TOO_MANY_REQUESTS, retry, Html(login_html(&format!("{message}. ")))).into_response()
}

// ---- The guard ----

enum Credential {
    Valid,
    WrongBearer,
    Missing,
}

fn credential(headers: &HeaderMap, token: &str, sessions: &Sessions, now: Instant) -> Credential {
    if let Some(v) = headers.get(header::AUTHORIZATION).and_then(|v| v.to_str().ok()) {
        if let Some(given) = v.strip_prefix("Bearer ") {
            return if token_matches(given, token) { Credential::Valid } else { Credential::WrongBearer };
        }
    }
    let signed_in = headers
        .get_all(header::COOKIE)
        .iter()
        .filter_map(|v| v.to_str().ok())
        .flat_map(|v| v.split(';'))
        .filter_map(|kv| kv.trim().split_once('='))
        .any(|(k, v)| k == COOKIE && sessions.live(v, now));
    if signed_in {
        Credential::Valid
    } else {
        Credential::Missing
    }
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

/// The access middleware: cross-site writes first (403), then the token (401, or 429 while a
/// client is over its failures).
pub async fn guard(State(st): State<AppState>, ClientIp(ip): ClientIp, req: Request, next: Next) -> Response {
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
        let api = path.starts_with("/api/");
        let open = path == "/login" || path.starts_with("/static/") || path == "/favicon.ico";
        if !open {
            let now = Instant::now();
            match credential(req.headers(), token, &st.sessions, now) {
                Credential::Valid => {}
                Credential::WrongBearer => {
                    if let Some(s) = st.sessions.blocked(ip, now) {
                        return too_many(s, api);
                    }
                    st.sessions.failed(ip, now);
                    return unauthorized(api);
                }
                Credential::Missing => return unauthorized(api),
            }
        }
    }
    next.run(req).await
}

fn unauthorized(api: bool) -> Response {
    if api {
        return AppError::Unauthorized.into_response();
    }
    (StatusCode::UNAUTHORIZED, Html(login_html(""))).into_response()
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

pub async fn login(State(st): State<AppState>, ClientIp(ip): ClientIp, Form(f): Form<LoginForm>) -> Response {
    let Some(token) = &st.config.token else { return Redirect::to("/").into_response() };
    let now = Instant::now();
    if let Some(s) = st.sessions.blocked(ip, now) {
        return too_many(s, false);
    }
    if !token_matches(&f.token, token) {
        st.sessions.failed(ip, now);
        return (StatusCode::UNAUTHORIZED, Html(login_html("That token is not right. "))).into_response();
    }
    st.sessions.succeeded(ip);
    let id = match st.sessions.create(now) {
        Ok(id) => id,
        Err(e) => {
            return AppError::Internal(anyhow::anyhow!("cannot read /dev/urandom: {e}")).into_response()
        }
    };
    let cookie =
        format!("{COOKIE}={id}; HttpOnly; SameSite=Strict; Path=/; Max-Age={}", SESSION_LIFETIME.as_secs());
    ([(header::SET_COOKIE, cookie)], Redirect::to("/")).into_response()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn config(bound: &str, allow: &[&str]) -> Config {
        Config {
            max_upload_bytes: 0,
            token: None,
            bound: Some(bound.parse().unwrap()),
            allow_hosts: allow.iter().map(|s| s.to_string()).collect(),
        }
    }

    #[test]
    fn constant_time_comparison_is_exact() {
        assert!(constant_time_eq(b"abc", b"abc"));
        assert!(!constant_time_eq(b"abc", b"abd"));
        assert!(!constant_time_eq(b"abc", b"ab"));
    }

    #[test]
    fn bearer_and_session_cookie_both_authorize_and_nothing_else_does() {
        let sessions = Sessions::default();
        let now = Instant::now();
        let mut h = HeaderMap::new();
        assert!(matches!(credential(&h, "s3cret", &sessions, now), Credential::Missing));
        h.insert(header::AUTHORIZATION, "Bearer s3cret".parse().unwrap());
        assert!(matches!(credential(&h, "s3cret", &sessions, now), Credential::Valid));
        assert!(matches!(credential(&h, "other", &sessions, now), Credential::WrongBearer));
        let id = sessions.create(now).unwrap();
        assert_eq!(id.len(), 64);
        let mut h = HeaderMap::new();
        h.insert(header::COOKIE, format!("a=1; {COOKIE}={id}").parse().unwrap());
        assert!(matches!(credential(&h, "s3cret", &sessions, now), Credential::Valid));
        // Expired, or never issued: not signed in.
        let later = now + SESSION_LIFETIME + Duration::from_secs(1);
        assert!(matches!(credential(&h, "s3cret", &sessions, later), Credential::Missing));
        let mut h = HeaderMap::new();
        h.insert(header::COOKIE, format!("{COOKIE}={}", "0".repeat(64)).parse().unwrap());
        assert!(matches!(credential(&h, "s3cret", &sessions, now), Credential::Missing));
    }

    #[test]
    fn session_ids_differ_and_their_number_is_bounded() {
        let sessions = Sessions::default();
        let now = Instant::now();
        let a = sessions.create(now).unwrap();
        let b = sessions.create(now).unwrap();
        assert_ne!(a, b);
        for _ in 0..MAX_SESSIONS + 10 {
            sessions.create(now).unwrap();
        }
        assert_eq!(sessions.lock().sessions.len(), MAX_SESSIONS);
    }

    #[test]
    fn five_failures_in_a_minute_block_until_the_window_ends() {
        let s = Sessions::default();
        let ip = Some("10.0.0.7".parse().unwrap());
        let t0 = Instant::now();
        for i in 0..MAX_FAILURES {
            assert_eq!(s.blocked(ip, t0), None, "after {i} failures");
            s.failed(ip, t0);
        }
        assert_eq!(s.blocked(ip, t0), Some(60));
        assert_eq!(s.blocked(ip, t0 + Duration::from_secs(45)), Some(15));
        assert_eq!(s.blocked(Some("10.0.0.8".parse().unwrap()), t0), None, "another client");
        assert_eq!(s.blocked(ip, t0 + FAILURE_WINDOW), None);
        // One IPv6 /64 is one client.
        let a = Some("2001:db8::1".parse().unwrap());
        let b = Some("2001:db8::ffff:2".parse().unwrap());
        for _ in 0..MAX_FAILURES {
            s.failed(a, t0);
        }
        assert!(s.blocked(b, t0).is_some());
    }

    #[test]
    fn failures_from_many_addresses_use_bounded_memory() {
        let s = Sessions::default();
        let t0 = Instant::now();
        for i in 0..(MAX_CLIENTS as u32 + 100) {
            s.failed(Some(IpAddr::V4(i.into())), t0);
        }
        assert!(s.lock().failures.len() <= MAX_CLIENTS + 1);
        // The newcomers shared one bucket, which is now over its failures.
        assert!(s.blocked(Some(IpAddr::V4((MAX_CLIENTS as u32 + 50).into())), t0).is_some());
    }

    #[test]
    fn only_this_servers_names_pass_the_host_check() {
        let c = config("127.0.0.1:8080", &["audit-pc.plant.local"]);
        for ok in [
            "127.0.0.1:8080",
            "127.0.0.1",
            "localhost",
            "LOCALHOST:9000",
            "localhost.",
            "[::1]:8080",
            "[::1]",
            "audit-pc.plant.local",
            "Audit-PC.plant.local:8080",
        ] {
            assert!(host_allowed(ok, &c), "{ok}");
        }
        for bad in
            ["evil.example", "evil.example:8080", "localhost.evil.example", "10.1.2.3", "", "[", ":8080"]
        {
            assert!(!host_allowed(bad, &c), "{bad}");
        }
        let lan = config("192.168.1.20:8080", &[]);
        assert!(host_allowed("192.168.1.20:8080", &lan));
        assert!(!host_allowed("192.168.1.21:8080", &lan));
        let any = config("0.0.0.0:8080", &[]);
        assert!(host_allowed("192.168.1.21:8080", &any));
        assert!(!host_allowed("audit-pc:8080", &any));
    }
}
