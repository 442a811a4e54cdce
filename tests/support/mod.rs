//! Test support: start the real `airledger` binary on a free port with a fresh SQLite file, and a
//! small HTTP client.

#![allow(dead_code)]

use std::io::{BufRead, BufReader};
use std::net::TcpListener;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::sync::atomic::{AtomicU32, Ordering};
use std::time::{Duration, Instant};

pub use serde_json::{json, Value};

static SEQ: AtomicU32 = AtomicU32::new(0);

/// A fresh folder under the system temp dir, removed on drop.
pub struct TempDir(pub PathBuf);

impl TempDir {
    pub fn new(name: &str) -> Self {
        let p = std::env::temp_dir().join(format!(
            "airledger-test-{}-{}-{}",
            name,
            std::process::id(),
            SEQ.fetch_add(1, Ordering::Relaxed)
        ));
        let _ = std::fs::remove_dir_all(&p);
        std::fs::create_dir_all(&p).expect("temp dir");
        Self(p)
    }
    pub fn path(&self) -> &Path {
        &self.0
    }
}

impl Drop for TempDir {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

pub fn binary() -> PathBuf {
    PathBuf::from(env!("CARGO_BIN_EXE_airledger"))
}

/// A running server with its own database.
pub struct Server {
    pub child: Child,
    pub base: String,
    pub dir: TempDir,
    pub db: PathBuf,
}

fn free_port() -> u16 {
    TcpListener::bind("127.0.0.1:0").expect("bind").local_addr().expect("addr").port()
}

impl Server {
    /// `airledger serve` on a fresh database.
    pub fn start() -> Self {
        Self::start_with(&["serve"], &[])
    }

    /// `airledger demo` (builds the demo plant, then serves).
    pub fn demo() -> Self {
        Self::start_with(&["demo"], &[])
    }

    pub fn start_with(cmd: &[&str], extra: &[&str]) -> Self {
        let dir = TempDir::new(cmd[0]);
        let db = dir.path().join("audit.sqlite");
        Self::start_on(dir, db, cmd, extra)
    }

    pub fn start_on(dir: TempDir, db: PathBuf, cmd: &[&str], extra: &[&str]) -> Self {
        let port = free_port();
        let bind = format!("127.0.0.1:{port}");
        let mut child = Command::new(binary())
            .args(cmd)
            .arg("--db")
            .arg(&db)
            .arg("--bind")
            .arg(&bind)
            .args(extra)
            .stdout(Stdio::piped())
            .stderr(Stdio::inherit())
            .spawn()
            .expect("start airledger");
        // The server prints its URL when it listens.
        let out = child.stdout.take().expect("stdout");
        let (tx, rx) = std::sync::mpsc::channel();
        std::thread::spawn(move || {
            for line in BufReader::new(out).lines().map_while(Result::ok) {
                if line.starts_with("airledger is serving") {
                    let _ = tx.send(());
                }
            }
        });
        rx.recv_timeout(Duration::from_secs(120)).expect("the server did not start within 120 s");
        Self { child, base: format!("http://{bind}"), dir, db }
    }

    pub fn url(&self, path: &str) -> String {
        format!("{}{}", self.base, path)
    }

    pub fn get(&self, path: &str) -> Resp {
        send(ureq_agent().get(&self.url(path)).header("Origin", &self.base).call())
    }

    pub fn post_json(&self, path: &str, body: &Value) -> Resp {
        send(ureq_agent().post(&self.url(path)).header("Origin", &self.base).send_json(body))
    }

    pub fn put_json(&self, path: &str, body: &Value) -> Resp {
        send(ureq_agent().put(&self.url(path)).header("Origin", &self.base).send_json(body))
    }

    pub fn delete(&self, path: &str) -> Resp {
        send(ureq_agent().delete(&self.url(path)).header("Origin", &self.base).call())
    }

    /// A page form posted as a browser would (`application/x-www-form-urlencoded`), redirects
    /// not followed.
    pub fn post_form(&self, path: &str, fields: &[(&str, &str)]) -> Resp {
        let agent: ureq::Agent =
            ureq::Agent::config_builder().http_status_as_error(false).max_redirects(0).build().into();
        send(agent.post(&self.url(path)).header("Origin", &self.base).send_form(fields.iter().copied()))
    }

    pub fn patch_json(&self, path: &str, body: &Value) -> Resp {
        send(ureq_agent().patch(&self.url(path)).header("Origin", &self.base).send_json(body))
    }

    /// Multipart upload of `file` with `mapping`; `query` like `?replace=true`.
    pub fn upload(&self, audit: i64, name: &str, file: &[u8], mapping: &Value, query: &str) -> Resp {
        let boundary = "airledgerTESTboundary7d1a";
        let mut body = Vec::new();
        body.extend_from_slice(
            format!("--{boundary}\r\nContent-Disposition: form-data; name=\"mapping\"\r\n\r\n{mapping}\r\n")
                .as_bytes(),
        );
        body.extend_from_slice(
            format!("--{boundary}\r\nContent-Disposition: form-data; name=\"file\"; filename=\"{name}\"\r\nContent-Type: text/csv\r\n\r\n")
                .as_bytes(),
        );
        body.extend_from_slice(file);
        body.extend_from_slice(format!("\r\n--{boundary}--\r\n").as_bytes());
        send(
            ureq_agent()
                .post(&self.url(&format!("/api/v1/audits/{audit}/uploads{query}")))
                .header("Origin", &self.base)
                .header("Content-Type", &format!("multipart/form-data; boundary={boundary}"))
                .send(&body[..]),
        )
    }

    /// `POST /api/v1/audits/{audit}/sniff` with `file` as its one part: the sniffer's proposal.
    pub fn sniff(&self, audit: i64, name: &str, file: &[u8]) -> Resp {
        let boundary = "airledgerTESTboundary7d1a";
        let body = multipart_body(boundary, &[("file", Some(name), file)]);
        send(
            ureq_agent()
                .post(&self.url(&format!("/api/v1/audits/{audit}/sniff")))
                .header("Origin", &self.base)
                .header("Content-Type", &format!("multipart/form-data; boundary={boundary}"))
                .send(&body[..]),
        )
    }

    /// Create an audit with one load/unload compressor `tag`; returns the audit id.
    pub fn audit_with_compressor(&self, tag: &str) -> i64 {
        self.audit_with_site_and_compressor("test plant", json!({"altitude_m": 0}), tag)
    }

    /// A US-units audit in Chicago at sea level named `name`, with the load/unload compressor C1.
    pub fn us_audit_in_chicago(&self, name: &str) -> i64 {
        self.audit_in_chicago(name, "us")
    }

    /// An audit in Chicago at sea level named `name`, read in `units` (`si` or `us`), with the
    /// load/unload compressor C1.
    pub fn audit_in_chicago(&self, name: &str, units: &str) -> i64 {
        let site = json!({"altitude_m": 0, "display_units": units, "timezone": "America/Chicago"});
        self.audit_with_site_and_compressor(name, site, "C1")
    }

    fn audit_with_site_and_compressor(&self, name: &str, site: Value, tag: &str) -> i64 {
        let r = self.post_json("/api/v1/audits", &json!({"name": name, "site": site}));
        assert_eq!(r.status, 201, "{}", r.text);
        let id = r.json()["id"].as_i64().expect("id");
        let r = self.post_json(
            &format!("/api/v1/audits/{id}/compressors"),
            &json!({"tag": tag, "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                    "rated_power_kw": 55, "rated_flow_m3_min": 9.5, "rated_pressure_bar_g": 7.5}),
        );
        assert_eq!(r.status, 201, "{}", r.text);
        id
    }

    pub fn kill(&mut self) {
        let _ = self.child.kill();
        let _ = self.child.wait();
    }
}

impl Drop for Server {
    fn drop(&mut self) {
        self.kill();
    }
}

/// An HTTP answer.
pub struct Resp {
    pub status: u16,
    pub text: String,
    pub content_type: String,
    pub headers: Vec<(String, String)>,
}

impl Resp {
    pub fn json(&self) -> Value {
        serde_json::from_str(&self.text).unwrap_or_else(|e| panic!("not JSON ({e}): {}", self.text))
    }
    pub fn header(&self, name: &str) -> Option<&str> {
        self.headers.iter().find(|(k, _)| k.eq_ignore_ascii_case(name)).map(|(_, v)| v.as_str())
    }
}

fn ureq_agent() -> ureq::Agent {
    ureq::Agent::config_builder()
        .http_status_as_error(false)
        .timeout_global(Some(Duration::from_secs(300)))
        .build()
        .into()
}

fn send(r: Result<ureq::http::Response<ureq::Body>, ureq::Error>) -> Resp {
    let mut r = r.expect("request failed");
    let status = r.status().as_u16();
    let headers = r
        .headers()
        .iter()
        .map(|(k, v)| (k.as_str().to_string(), v.to_str().unwrap_or("").to_string()))
        .collect();
    let content_type =
        r.headers().get("content-type").and_then(|v| v.to_str().ok()).unwrap_or("").to_string();
    let text = r.body_mut().with_config().limit(64 * 1024 * 1024).read_to_string().unwrap_or_default();
    Resp { status, text, content_type, headers }
}

/// Wait for a condition, polling.
pub fn wait_until(timeout: Duration, mut f: impl FnMut() -> bool) -> bool {
    let start = Instant::now();
    while start.elapsed() < timeout {
        if f() {
            return true;
        }
        std::thread::sleep(Duration::from_millis(50));
    }
    false
}

/// A small logger CSV: one compressor cycling 40 s loaded / 160 s unloaded at 10 s, header
/// pressure and flow; `hours` long from 2026-05-04T08:00Z.
pub fn cycling_csv(hours: u32) -> String {
    cycling_csv_at(1_777_881_600, hours) // 2026-05-04T08:00:00Z
}

/// [`cycling_csv`] from `start` (Unix seconds).
pub fn cycling_csv_at(start: i64, hours: u32) -> String {
    let mut s = String::from("time,C1 kW,header bar,flow m3/min\n");
    for i in 0..(hours as i64 * 360) {
        let loaded = (i % 20) < 4;
        let t = start + i * 10;
        let ts = jiff_like_rfc3339(t);
        s.push_str(&format!(
            "{ts},{},{:.2},{:.2}\n",
            if loaded { 56.0 } else { 14.0 },
            if loaded { 7.2 } else { 6.9 },
            if loaded { 9.5 } else { 1.9 }
        ));
    }
    s
}

/// A long file at 1 s for the [`cycling_mapping`] layout: `rows` rows from 2026-05-04T08:00Z.
pub fn big_csv(rows: i64) -> String {
    let mut csv = String::with_capacity(rows as usize * 40);
    csv.push_str("time,C1 kW,header bar,flow m3/min\n");
    let start = 1_777_881_600i64;
    for i in 0..rows {
        csv.push_str(&format!(
            "{},{},{:.2},{:.2}\n",
            jiff_like_rfc3339(start + i),
            14 + (i % 40),
            6.9 + (i % 30) as f64 / 100.0,
            2.0 + (i % 9) as f64 / 10.0
        ));
    }
    csv
}

/// RFC 3339 in UTC for whole seconds since the epoch (days-from-civil, Hinnant).
pub fn jiff_like_rfc3339(t: i64) -> String {
    let days = t.div_euclid(86_400);
    let secs = t.rem_euclid(86_400);
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = doy - (153 * mp + 2) / 5 + 1;
    let m = if mp < 10 { mp + 3 } else { mp - 9 };
    let y = if m <= 2 { y + 1 } else { y };
    format!("{y:04}-{m:02}-{d:02}T{:02}:{:02}:{:02}Z", secs / 3600, secs / 60 % 60, secs % 60)
}

pub fn cycling_mapping() -> Value {
    json!({"delimiter": ",", "decimal": ".", "header_line": 1,
           "timestamp": {"column": "time", "format": "rfc3339", "timezone": "UTC"},
           "columns": [{"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"},
                       {"column": "header bar", "quantity": "pressure", "unit": "bar_g"},
                       {"column": "flow m3/min", "quantity": "flow", "unit": "m3_min"}]})
}

/// The bytes of `name` in the folder of real logger files named by `AIRLEDGER_REAL_DATA` (read at
/// run time, else the value it had when the tests were built). Such files are other people's data
/// and never part of this repository; the tests that read them are `#[ignore]`d unless the variable
/// was set at build time (`build.rs`), and fail here, naming the path, when the file is not there.
pub fn real_data_file(name: &str) -> Vec<u8> {
    let dir = real_data_dir();
    let path = dir.join(name);
    std::fs::read(&path).unwrap_or_else(|e| {
        panic!("cannot read {} (AIRLEDGER_REAL_DATA={}): {e}", path.display(), dir.display())
    })
}

/// The folder of real logger files named by `AIRLEDGER_REAL_DATA` (at run time, else the value it
/// had when the tests were built); a failure saying so when neither is set.
pub fn real_data_dir() -> PathBuf {
    std::env::var_os("AIRLEDGER_REAL_DATA")
        .filter(|v| !v.is_empty())
        .map(PathBuf::from)
        .or_else(|| option_env!("AIRLEDGER_REAL_DATA").filter(|v| !v.is_empty()).map(PathBuf::from))
        .unwrap_or_else(|| {
            panic!(
                "AIRLEDGER_REAL_DATA is not set: set it to the folder of real logger files (its \
                 README.md describes them; realfiles/ beside it)"
            )
        })
}

/// Run `cmd` (its output captured) and wait at most `limit` for it to end: its output and how long
/// it ran; a command still running at `limit` is killed and the test fails saying so.
pub fn run_within(cmd: &mut Command, limit: Duration) -> (std::process::Output, Duration) {
    let start = Instant::now();
    let mut child =
        cmd.stdin(Stdio::null()).stdout(Stdio::piped()).stderr(Stdio::piped()).spawn().expect("spawn");
    while child.try_wait().expect("try_wait").is_none() {
        if start.elapsed() > limit {
            let _ = child.kill();
            let out = child.wait_with_output().expect("output");
            panic!("{cmd:?} still ran after {limit:?}; it printed {}", String::from_utf8_lossy(&out.stderr));
        }
        std::thread::sleep(Duration::from_millis(20));
    }
    let took = start.elapsed();
    (child.wait_with_output().expect("output"), took)
}

/// A free loopback address to bind a server to.
pub fn free_bind() -> String {
    format!("127.0.0.1:{}", free_port())
}

/// The peak resident set size of process `pid` in MiB (`VmHWM` in `/proc/<pid>/status`, Linux).
pub fn peak_rss_mib(pid: u32) -> f64 {
    let status = std::fs::read_to_string(format!("/proc/{pid}/status")).expect("read /proc/<pid>/status");
    let kb: f64 = status
        .lines()
        .find_map(|l| l.strip_prefix("VmHWM:"))
        .and_then(|v| v.trim().trim_end_matches("kB").trim().parse().ok())
        .expect("VmHWM in /proc/<pid>/status");
    kb / 1024.0
}

/// The resident memory of process `pid` that is not its program's own file-backed pages, at its
/// peak, MiB: `VmHWM` less `RssFile` (Linux `/proc/<pid>/status`). With SQLite's `mmap_size` 0 the
/// only file-backed pages are the binary's and its libraries' code, which only grow while the
/// process runs on a machine with memory to spare; so this is the peak of what the server holds
/// for its data (heap, stacks, page caches), without the code, which in a debug build under
/// `cargo test` is some 8 MiB larger than in the release build people run.
pub fn peak_data_mib(pid: u32) -> f64 {
    let status = std::fs::read_to_string(format!("/proc/{pid}/status")).expect("read /proc/<pid>/status");
    let field = |name: &str| -> f64 {
        status
            .lines()
            .find_map(|l| l.strip_prefix(name))
            .and_then(|v| v.trim().trim_end_matches("kB").trim().parse().ok())
            .unwrap_or_else(|| panic!("{name} in /proc/<pid>/status"))
    };
    (field("VmHWM:") - field("RssFile:")) / 1024.0
}

/// The server process's peak resident memory in MB (MiB): [`peak_rss_mib`] of its process.
pub fn peak_rss_mb(s: &Server) -> f64 {
    peak_rss_mib(s.child.id())
}

/// An HTTP/1.1 request written by hand (for a `Host` of our choosing, or a body streamed in pieces
/// too large to hold): `head` is the request line and headers without the final blank line; the
/// body comes from `pieces`. Write errors are ignored (the server may answer before reading it
/// all). Returns the status, the headers (lower-cased names) and the body.
pub fn raw_request(
    s: &Server,
    head: &str,
    body_len: u64,
    pieces: impl Iterator<Item = Vec<u8>>,
) -> (u16, String, String) {
    use std::io::{Read, Write};
    let addr = s.base.strip_prefix("http://").expect("base");
    let mut stream = std::net::TcpStream::connect(addr).expect("connect");
    stream.set_read_timeout(Some(Duration::from_secs(300))).expect("timeout");
    let head = format!("{head}\r\nContent-Length: {body_len}\r\nConnection: close\r\n\r\n");
    let mut ok = stream.write_all(head.as_bytes()).is_ok();
    for piece in pieces {
        if !ok {
            break;
        }
        ok = stream.write_all(&piece).is_ok();
    }
    let mut answer = Vec::new();
    let _ = stream.read_to_end(&mut answer);
    let text = String::from_utf8_lossy(&answer).to_string();
    let (headers, body) = text.split_once("\r\n\r\n").unwrap_or((&text, ""));
    let status = headers.split(' ').nth(1).and_then(|c| c.parse().ok()).unwrap_or(0);
    (status, headers.to_ascii_lowercase(), body.to_string())
}

/// One multipart part: its header block for `name` (and a file name if given).
pub fn multipart_part(boundary: &str, name: &str, filename: Option<&str>) -> String {
    match filename {
        Some(f) => format!(
            "--{boundary}\r\nContent-Disposition: form-data; name=\"{name}\"; filename=\"{f}\"\r\nContent-Type: text/csv\r\n\r\n"
        ),
        None => format!("--{boundary}\r\nContent-Disposition: form-data; name=\"{name}\"\r\n\r\n"),
    }
}

/// A multipart body from `(name, filename, content)` parts, closed by `--boundary--`.
pub fn multipart_body(boundary: &str, parts: &[(&str, Option<&str>, &[u8])]) -> Vec<u8> {
    let mut body = Vec::new();
    for (name, filename, content) in parts {
        body.extend_from_slice(multipart_part(boundary, name, *filename).as_bytes());
        body.extend_from_slice(content);
        body.extend_from_slice(b"\r\n");
    }
    body.extend_from_slice(format!("--{boundary}--\r\n").as_bytes());
    body
}
