/*!
Browser suite: the pages as a reader sees them, in a real headless Chromium driven over WebDriver.

A small WebDriver client (plain HTTP with ureq against `chromedriver`) loads every page of the demo
audit and checks what only a browser can show: console errors, charts that actually draw, the units
switch, printing to A4 and Letter, layout at desktop and phone width, and escaping of hostile text.
Screenshots land in `artifacts/screenshots/` for a human to look at.

Without Chromium and chromedriver on `PATH` when the tests were built (`build.rs` looks), the tests
are compiled `#[ignore]`d with the reason and the packages to install, so `cargo test` lists them as
ignored, never as passed. Under `CI` (set when building) they are never ignored: a missing tool makes
them fail, naming it. The print test also needs poppler's `pdftotext` and `pdfinfo`.
*/

use crate::support::*;

use std::net::TcpListener;
use std::path::{Path, PathBuf};
use std::process::{Child, Command, Stdio};
use std::time::{Duration, Instant};

/// A tool's path as `build.rs` found it on `PATH`, or a failure naming what is missing. A test
/// reaches this only when the tool was found, or under `CI`, where a missing tool must fail.
fn tool(found: Option<&'static str>, name: &str, package: &str) -> &'static str {
    let path = found.unwrap_or_else(|| {
        panic!("{name} was not on PATH when the tests were built: apt-get install {package}, then touch build.rs")
    });
    assert!(Path::new(path).exists(), "{path} is gone since the tests were built: apt-get install {package}");
    path
}

fn chromium() -> &'static str {
    tool(option_env!("AIRLEDGER_CHROMIUM"), "chromium", "chromium")
}

fn chromedriver() -> &'static str {
    tool(option_env!("AIRLEDGER_CHROMEDRIVER"), "chromedriver", "chromium-driver")
}

fn pdftotext() -> &'static str {
    tool(option_env!("AIRLEDGER_PDFTOTEXT"), "pdftotext", "poppler-utils")
}

fn pdfinfo() -> &'static str {
    tool(option_env!("AIRLEDGER_PDFINFO"), "pdfinfo", "poppler-utils")
}

/// Every page of an audit (the routes of `src/web/mod.rs` that answer GET with HTML), by a short
/// name used for screenshots.
const PAGES: [(&str, &str); 8] = [
    ("index", "/"),
    ("audit", "/audits/1"),
    ("upload", "/audits/1/upload"),
    ("tests", "/audits/1/tests"),
    ("report", "/audits/1/report"),
    ("findings", "/audits/1/findings"),
    ("scenarios", "/audits/1/scenarios"),
    ("treatment", "/audits/1/treatment"),
];

/// Flags that keep Chromium from reaching out to the network or doing background work.
const QUIET_FLAGS: [&str; 8] = [
    "--headless=new",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-quic",
    "--no-first-run",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
];

fn artifacts_dir() -> PathBuf {
    let p = Path::new(env!("CARGO_MANIFEST_DIR")).join("artifacts").join("screenshots");
    std::fs::create_dir_all(&p).expect("create artifacts/screenshots");
    p
}

fn free_port() -> u16 {
    TcpListener::bind("127.0.0.1:0").expect("bind").local_addr().expect("addr").port()
}

fn agent() -> ureq::Agent {
    ureq::Agent::config_builder()
        .http_status_as_error(false)
        .timeout_global(Some(Duration::from_secs(120)))
        .build()
        .into()
}

fn read_reply(r: Result<ureq::http::Response<ureq::Body>, ureq::Error>, what: &str) -> Value {
    let mut r = r.unwrap_or_else(|e| panic!("WebDriver {what}: request failed: {e}"));
    let status = r.status().as_u16();
    let text = r
        .body_mut()
        .with_config()
        .limit(256 * 1024 * 1024)
        .read_to_string()
        .unwrap_or_else(|e| panic!("WebDriver {what}: reading the reply: {e}"));
    let v: Value =
        serde_json::from_str(&text).unwrap_or_else(|e| panic!("WebDriver {what}: not JSON ({e}): {text}"));
    assert!(status < 300, "WebDriver {what}: HTTP {status}: {text}");
    v["value"].clone()
}

/// Standard base64 (RFC 4648) as WebDriver sends screenshots and PDFs.
fn base64_decode(s: &str) -> Vec<u8> {
    let mut out = Vec::with_capacity(s.len() / 4 * 3);
    let mut acc = 0u32;
    let mut bits = 0;
    for c in s.bytes() {
        let v = match c {
            b'A'..=b'Z' => c - b'A',
            b'a'..=b'z' => c - b'a' + 26,
            b'0'..=b'9' => c - b'0' + 52,
            b'+' => 62,
            b'/' => 63,
            b'=' | b'\n' | b'\r' => continue,
            _ => panic!("not base64: byte {c}"),
        };
        acc = (acc << 6) | u32::from(v);
        bits += 6;
        if bits >= 8 {
            bits -= 8;
            out.push((acc >> bits) as u8);
        }
    }
    out
}

/// One chromedriver process with one browser session; both end on drop.
struct Browser {
    driver: Child,
    base: String,
    session: String,
    agent: ureq::Agent,
    _profile: TempDir,
}

impl Browser {
    fn start() -> Self {
        let port = free_port();
        let driver = Command::new(chromedriver())
            .arg(format!("--port={port}"))
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .spawn()
            .expect("start chromedriver");
        let base = format!("http://127.0.0.1:{port}");
        let agent = agent();
        let ready = wait_until(Duration::from_secs(20), || {
            agent
                .get(&format!("{base}/status"))
                .call()
                .ok()
                .and_then(|mut r| r.body_mut().read_json::<Value>().ok())
                .is_some_and(|v| v["value"]["ready"] == true)
        });
        // Build the value first so that a failure below still kills chromedriver.
        let profile = TempDir::new("chromium-profile");
        let mut b = Browser { driver, base, session: String::new(), agent, _profile: profile };
        assert!(ready, "chromedriver did not become ready within 20 s");
        let mut args: Vec<String> = QUIET_FLAGS.iter().map(|s| s.to_string()).collect();
        args.push(format!("--user-data-dir={}", b._profile.path().display()));
        args.push("--window-size=1366,768".into());
        let caps = json!({"capabilities": {"alwaysMatch": {
            "browserName": "chrome",
            "goog:chromeOptions": {"binary": chromium(), "args": args},
            "goog:loggingPrefs": {"browser": "ALL"},
        }}});
        let v = read_reply(b.agent.post(&format!("{}/session", b.base)).send_json(&caps), "new session");
        b.session = v["sessionId"].as_str().expect("sessionId").to_string();
        b
    }

    fn post(&self, path: &str, body: &Value) -> Value {
        let url = format!("{}/session/{}{}", self.base, self.session, path);
        read_reply(self.agent.post(&url).send_json(body), path)
    }

    fn goto(&self, url: &str) {
        self.post("/url", &json!({ "url": url }));
        self.settle();
    }

    /// Run `script` (a function body; `arguments` holds `args`) and return its value.
    fn js(&self, script: &str, args: Value) -> Value {
        self.post("/execute/sync", &json!({"script": script, "args": args}))
    }

    fn js_str(&self, script: &str) -> String {
        let v = self.js(script, json!([]));
        v.as_str().unwrap_or_else(|| panic!("`{script}` gave {v}, not a string")).to_string()
    }

    fn js_f64(&self, script: &str) -> f64 {
        let v = self.js(script, json!([]));
        v.as_f64().unwrap_or_else(|| panic!("`{script}` gave {v}, not a number"))
    }

    /// Wait until the document is loaded and no new resource (fetch, script) has started for
    /// 400 ms, so errors from a page's own requests reach the log before it is read.
    fn settle(&self) {
        let script = "return document.readyState === 'complete' ? \
                      performance.getEntriesByType('resource').length : -1";
        let mut last = -2.0;
        let mut since = Instant::now();
        let ok = wait_until(Duration::from_secs(15), || {
            let n = self.js(script, json!([])).as_f64().unwrap_or(-1.0);
            if n != last {
                last = n;
                since = Instant::now();
            }
            n >= 0.0 && since.elapsed() > Duration::from_millis(400)
        });
        assert!(ok, "the page did not settle within 15 s");
    }

    /// Browser console entries since the last call (chromedriver hands each entry out once).
    fn logs(&self) -> Vec<Value> {
        let url = format!("{}/session/{}/se/log", self.base, self.session);
        let r = self.agent.post(&url).send_json(json!({"type": "browser"}));
        let v = match r {
            Ok(mut r) if r.status().is_success() => {
                r.body_mut().read_json::<Value>().expect("log JSON")["value"].clone()
            }
            // Older chromedrivers only know the legacy endpoint.
            _ => self.post("/log", &json!({"type": "browser"})),
        };
        v.as_array().cloned().unwrap_or_default()
    }

    /// Console entries of level SEVERE since the last call; warnings go to stderr.
    fn severe_logs(&self, page: &str) -> Vec<String> {
        let mut severe = Vec::new();
        for e in self.logs() {
            let level = e["level"].as_str().unwrap_or("");
            let msg = e["message"].as_str().unwrap_or("").to_string();
            if level == "SEVERE" {
                severe.push(format!("{page}: {msg}"));
            } else if level == "WARNING" {
                eprintln!("browser warning on {page}: {msg}");
            }
        }
        severe
    }

    /// The outermost elements of `main` that reach past the viewport's right edge, outside the
    /// `.scroll` boxes meant to scroll: what to fix when a page is too wide.
    fn sticking_out(&self) -> Value {
        self.js(
            "const out = (e) => e.getBoundingClientRect().right > innerWidth + 1;
             return [...document.querySelectorAll('main *')]
                .filter(e => out(e) && !e.closest('.scroll') && !out(e.parentElement))
                .slice(0, 8).map(e => {
                    const sec = e.closest('section');
                    const h = sec && sec.querySelector('h2, h3');
                    return e.tagName + (e.id ? '#' + e.id : '')
                        + (e.className ? '.' + String(e.className).replace(/ /g, '.') : '')
                        + ' right=' + Math.round(e.getBoundingClientRect().right)
                        + (h ? ' in section: ' + h.innerText : '');
                })",
            json!([]),
        )
    }

    fn set_window(&self, width: u32, height: u32) {
        self.post("/window/rect", &json!({"width": width, "height": height}));
        let inner = self.js_f64("return window.innerWidth");
        assert_eq!(inner, f64::from(width), "the viewport did not take the window width");
    }

    /// A PNG of the viewport, saved as `artifacts/screenshots/{name}.png`.
    fn screenshot(&self, name: &str) -> PathBuf {
        let url = format!("{}/session/{}/screenshot", self.base, self.session);
        let v = read_reply(self.agent.get(&url).call(), "screenshot");
        self.save_png(name, v.as_str().expect("base64 PNG"))
    }

    /// A PNG of the whole page beyond the viewport (Chrome DevTools protocol through
    /// chromedriver), saved as `artifacts/screenshots/{name}.png`, for a human to read.
    fn screenshot_full(&self, name: &str) -> PathBuf {
        let v = self.post(
            "/goog/cdp/execute",
            &json!({"cmd": "Page.captureScreenshot",
                    "params": {"format": "png", "captureBeyondViewport": true}}),
        );
        self.save_png(name, v["data"].as_str().expect("base64 PNG"))
    }

    fn save_png(&self, name: &str, b64: &str) -> PathBuf {
        let png = base64_decode(b64);
        assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n", "{name}: not a PNG");
        let path = artifacts_dir().join(format!("{name}.png"));
        std::fs::write(&path, &png).expect("write screenshot");
        path
    }

    /// The current page printed to PDF on paper of `width_cm` x `height_cm` (WebDriver print).
    fn print_pdf(&self, width_cm: f64, height_cm: f64) -> Vec<u8> {
        let v = self
            .post("/print", &json!({"page": {"width": width_cm, "height": height_cm}, "background": true}));
        let pdf = base64_decode(v.as_str().expect("base64 PDF"));
        assert!(pdf.starts_with(b"%PDF-"), "the print reply is not a PDF");
        pdf
    }
}

impl Drop for Browser {
    fn drop(&mut self) {
        if !self.session.is_empty() {
            let url = format!("{}/session/{}", self.base, self.session);
            let _ = self.agent.delete(&url).call();
        }
        let _ = self.driver.kill();
        let _ = self.driver.wait();
    }
}

/// Every page of the demo audit, at desktop width: no SEVERE console entry, Chart.js only from
/// our own `/static/vendor/`, nothing wider than the window; a screenshot of each.
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn demo_pages_load_without_console_errors() {
    let server = Server::demo();
    let b = Browser::start();
    b.set_window(1366, 768);
    let mut severe = Vec::new();
    for (name, path) in PAGES {
        b.goto(&server.url(path));
        if name == "report" {
            assert!(wait_for_drawn_canvases(&b).is_ok(), "the report's charts did not draw");
        }
        severe.extend(b.severe_logs(path));

        let title = b.js_str("return document.title");
        assert!(title.contains("airledger"), "{path}: title {title:?}");
        // Every script comes from this server; Chart.js from the vendored copy.
        let srcs =
            b.js("return [...document.scripts].map(s => s.getAttribute('src')).filter(s => s)", json!([]));
        let srcs: Vec<String> =
            srcs.as_array().expect("srcs").iter().map(|s| s.as_str().unwrap().to_string()).collect();
        for s in &srcs {
            assert!(s.starts_with("/static/"), "{path}: script from elsewhere: {s}");
        }
        let chart_srcs: Vec<&String> = srcs.iter().filter(|s| s.to_lowercase().contains("chart")).collect();
        for s in &chart_srcs {
            assert!(s.starts_with("/static/vendor/"), "{path}: Chart.js not vendored: {s}");
        }
        if name == "report" {
            assert_eq!(chart_srcs.len(), 1, "{path}: Chart.js script tags: {chart_srcs:?}");
            let t = b.js_str("return typeof window.Chart");
            assert_eq!(t, "function", "{path}: window.Chart is {t}");
            let v = b.js_str("return String(window.Chart.version)");
            assert!(v.starts_with('4'), "{path}: Chart.js version {v}");
        }
        let sw = b.js_f64("return document.documentElement.scrollWidth");
        assert!(
            sw <= 1366.0,
            "{path}: the page is {sw} px wide in a 1366 px window; sticking out: {}",
            b.sticking_out()
        );
        b.screenshot(&format!("desktop-{name}"));
        b.screenshot_full(&format!("desktop-{name}-full"));
    }
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}

/// Poll up to 15 s until every canvas on the page has at least one non-transparent pixel; the
/// number of canvases, or on timeout the ids of the blank ones.
fn wait_for_drawn_canvases(b: &Browser) -> Result<usize, Vec<String>> {
    let script = "
        const out = [];
        for (const c of document.querySelectorAll('canvas')) {
            let drawn = false;
            if (c.width > 0 && c.height > 0) {
                const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
                for (let i = 3; i < d.length; i += 4) { if (d[i] > 0) { drawn = true; break; } }
            }
            out.push([c.id, drawn]);
        }
        return out;";
    let mut blank = vec!["(no canvas yet)".to_string()];
    let mut count = 0;
    let ok = wait_until(Duration::from_secs(15), || {
        let v = b.js(script, json!([]));
        let list = v.as_array().cloned().unwrap_or_default();
        count = list.len();
        blank =
            list.iter().filter(|e| e[1] != true).map(|e| e[0].as_str().unwrap_or("?").to_string()).collect();
        count > 0 && blank.is_empty()
    });
    if ok {
        Ok(count)
    } else {
        Err(blank)
    }
}

/// The report draws every chart: at least 8 canvases, each with drawn pixels and a Chart.js chart
/// holding data points.
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn report_charts_draw_pixels() {
    let server = Server::demo();
    let b = Browser::start();
    b.goto(&server.url("/audits/1/report"));
    let n = wait_for_drawn_canvases(&b)
        .unwrap_or_else(|blank| panic!("canvases still blank after 15 s: {blank:?}"));
    assert!(n >= 8, "the report has {n} canvases, expected at least 8");
    // Pixels could be axes alone: each Chart.js chart also holds data points, and a canvas drawn
    // by hand (the weekday/hour heat map) shows more than a few colours.
    let points = b.js(
        "return [...document.querySelectorAll('canvas')].map(c => {
            const ch = Chart.getChart(c);
            if (ch) return [c.id, 'points', ch.data.datasets.reduce((n, d) => n + d.data.length, 0)];
            const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
            const colours = new Set();
            for (let i = 0; i < d.length && colours.size < 1000; i += 4) {
                if (d[i + 3] === 255) colours.add((d[i] << 16) | (d[i + 1] << 8) | d[i + 2]);
            }
            return [c.id, 'colours', colours.size];
        })",
        json!([]),
    );
    for e in points.as_array().expect("points") {
        let n = e[2].as_i64().unwrap_or(0);
        let min = if e[1] == "points" { 1 } else { 8 };
        assert!(n >= min, "canvas {}: {n} {} (expected at least {min})", e[0], e[1]);
    }
    let severe = b.severe_logs("/audits/1/report");
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}

/// The units switch turns the SI headline (bar(g), m³/min) into US units (psig, cfm).
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn units_switch_changes_headline() {
    let server = Server::demo();
    let b = Browser::start();
    b.goto(&server.url("/audits/1/report"));
    let before = b.js_str("return document.getElementById('headline').innerText");
    assert!(
        before.contains("bar(g)") || before.contains("m³/min"),
        "the demo audit is SI, but the headline reads: {before}"
    );
    let href = b.js_str("return document.getElementById('units-switch').getAttribute('href')");
    assert!(href.contains("units="), "units switch href {href:?}");
    b.js("document.getElementById('units-switch').click()", json!([]));
    let switched = wait_until(Duration::from_secs(15), || {
        b.js("return location.search.includes('units=') && document.readyState", json!([])) == "complete"
    });
    assert!(switched, "clicking #units-switch did not load the page in the other units");
    b.settle();
    let after = b.js_str("return document.getElementById('headline').innerText");
    assert_ne!(before, after, "the headline did not change with the units");
    assert!(
        after.contains("psig") || after.contains("cfm") || after.contains("kW/100 cfm"),
        "after switching to US units the headline reads: {after}"
    );
    assert!(!after.contains("m³/min"), "SI flow left in the US headline: {after}");
    // The switch now offers the way back.
    let back = b.js_str("return document.getElementById('units-switch').getAttribute('href')");
    assert_ne!(back, href, "the switch should point back to the other units");
    let severe = b.severe_logs("/audits/1/report?units=us");
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}

fn run_tool(cmd: &str, args: &[&str]) -> String {
    let out = Command::new(cmd).args(args).output().unwrap_or_else(|e| panic!("{cmd}: {e}"));
    assert!(out.status.success(), "{cmd} {args:?}: {}", String::from_utf8_lossy(&out.stderr));
    String::from_utf8_lossy(&out.stdout).into_owned()
}

/// Whitespace runs to single spaces, so text compares across PDF line breaks.
fn squash(s: &str) -> String {
    s.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// Every page's size in points (width, height), as `pdfinfo` reports it.
fn pdf_page_sizes(pdf: &Path) -> Vec<(f64, f64)> {
    let p = pdf.to_str().expect("path");
    let info = run_tool(pdfinfo(), &["-f", "1", "-l", "9999", p]);
    let sizes: Vec<(f64, f64)> = info
        .lines()
        .filter(|l| l.starts_with("Page") && l.contains(" size:"))
        .map(|l| {
            // "Page    1 size: 595.44 x 841.68 pts (A4)"
            let v = l.split_once("size:").expect("size").1;
            let nums: Vec<f64> = v.split_whitespace().filter_map(|w| w.parse::<f64>().ok()).collect();
            assert!(nums.len() >= 2, "pdfinfo size line {l:?}");
            (nums[0], nums[1])
        })
        .collect();
    assert!(!sizes.is_empty(), "pdfinfo gave no page size: {info}");
    sizes
}

/// Paper sizes in points (1 pt = 1/72 in): A4 210 x 297 mm (ISO 216) = 595 x 842, Letter
/// 8.5 x 11 in = 612 x 792. Chromium rounds the page to whole device pixels, so allow 1 pt.
fn check_pdf(pdf: &Path, paper: &str, expect_pts: (f64, f64), must_contain: &[&str]) {
    let text = squash(&run_tool(pdftotext(), &[pdf.to_str().expect("path"), "-"]));
    for want in must_contain {
        assert!(
            text.contains(&squash(want)),
            "{paper} PDF {}: no {want:?} in its text:\n{}",
            pdf.display(),
            &text[..text.len().min(3000)]
        );
    }
    // The header bar and navigation stay out of print.
    assert!(!text.contains("Print A4 and Letter"), "{paper} PDF shows the print toolbar");
    for (i, (w, h)) in pdf_page_sizes(pdf).into_iter().enumerate() {
        assert!(
            (w - expect_pts.0).abs() <= 1.0 && (h - expect_pts.1).abs() <= 1.0,
            "{paper} PDF {}: page {} is {w} x {h} pts, expected {} x {}",
            pdf.display(),
            i + 1,
            expect_pts.0,
            expect_pts.1
        );
    }
}

/// The report's plan form stacks the measures in the order typed and leaves out the one ticked;
/// the stored plan and the summary follow.
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_report_reorders_and_leaves_out_measures() {
    let server = Server::demo();
    let b = Browser::start();
    b.goto(&server.url("/audits/1/report"));
    b.settle();
    let kinds = |s: &Value| -> Vec<String> {
        s["recommendations"]
            .as_array()
            .unwrap()
            .iter()
            .map(|r| r["kind"].as_str().unwrap().to_string())
            .collect()
    };
    let before = kinds(&server.get("/api/v1/audits/1/summary").json());
    assert!(before.len() >= 3, "{before:?}");
    // The last measure first, the first one left out.
    let (first, last) = (before[0].clone(), before[before.len() - 1].clone());
    b.js(
        "const [first, last] = arguments;
         document.querySelector(`#plan-form input[data-kind='${last}']`).value = '1';
         document.querySelector(`#plan-form input[data-exclude='${first}']`).checked = true;
         document.querySelector('#plan-form button[type=submit]').click();",
        json!([first, last]),
    );
    let done = wait_until(Duration::from_secs(15), || {
        server.get("/api/v1/audits/1/measures").json()["excluded"] == json!([first])
    });
    assert!(done, "the plan was not stored: {}", server.get("/api/v1/audits/1/measures").text);
    let after = kinds(&server.get("/api/v1/audits/1/summary").json());
    assert_eq!(after[0], last, "{after:?}");
    assert!(!after.contains(&first), "{after:?}");
    let severe = b.severe_logs("/audits/1/report");
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}

/// The findings print to A4 and Letter with the headline figures and the recommendations, every
/// page the size of the paper, nothing wider than the window or the printed page.
#[test]
#[cfg_attr(
    not(any(all(has_browser, has_pdftools), ci)),
    ignore = "needs Debian's chromium, chromium-driver and poppler-utils: apt-get install chromium chromium-driver poppler-utils"
)]
fn findings_print_to_a4_and_letter() {
    let server = Server::demo();
    let b = Browser::start();
    let url = server.url("/audits/1/findings");
    b.goto(&url);
    // The figures as the page shows them.
    let rows = b.js(
        "return [...document.querySelectorAll('#findings-figures tr')]
            .map(r => [r.querySelector('th').innerText, r.querySelector('td.num').innerText])",
        json!([]),
    );
    let rows = rows.as_array().expect("rows").clone();
    assert!(rows.len() >= 4, "#findings-figures has {} rows", rows.len());
    let first_value = rows[0][1].as_str().expect("first figure").to_string();
    let cost = rows
        .iter()
        .find(|r| r[0].as_str().unwrap_or("").to_lowercase().contains("annual cost"))
        .unwrap_or_else(|| panic!("no annual cost row in #findings-figures: {rows:?}"));
    let cost_value = cost[1].as_str().expect("cost").to_string();
    assert!(cost_value.chars().any(|c| c.is_ascii_digit()), "annual cost {cost_value:?}");
    let sw = b.js_f64("return document.documentElement.scrollWidth");
    assert!(sw <= 1366.0, "findings: {sw} px wide in a 1366 px window");

    let dir = TempDir::new("pdf");
    let want = [cost_value.as_str(), first_value.as_str(), "Recommendations"];

    // Chromium's own --print-to-pdf, with no paper size given: its default paper is Letter
    // (8.5 x 11 in, the DevTools printToPDF default) as the page sets no @page size.
    let cli_pdf = dir.path().join("findings-default.pdf");
    let profile = TempDir::new("chromium-print");
    let out = Command::new(chromium())
        .args(QUIET_FLAGS)
        .arg(format!("--user-data-dir={}", profile.path().display()))
        .arg(format!("--print-to-pdf={}", cli_pdf.display()))
        .arg("--no-pdf-header-footer")
        .arg(&url)
        .output()
        .expect("run chromium --print-to-pdf");
    assert!(cli_pdf.exists(), "chromium wrote no PDF: {}", String::from_utf8_lossy(&out.stderr));
    check_pdf(&cli_pdf, "default (chromium --print-to-pdf)", (612.0, 792.0), &want);

    // WebDriver print on explicit paper: A4 (21.0 x 29.7 cm) and Letter (21.59 x 27.94 cm).
    for (paper, w, h, size) in
        [("A4", 21.0, 29.7, (595.28, 841.89)), ("Letter", 21.59, 27.94, (612.0, 792.0))]
    {
        let pdf = dir.path().join(format!("findings-{paper}.pdf"));
        std::fs::write(&pdf, b.print_pdf(w, h)).expect("write pdf");
        check_pdf(&pdf, paper, size, &want);
        // Keep a copy for people to read next to the screenshots.
        let _ = std::fs::copy(&pdf, artifacts_dir().join(format!("findings-{paper}.pdf")));
    }
    let severe = b.severe_logs("/audits/1/findings");
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
    // Last, so that the PDF checks above report first. In print media at the width of A4 less its
    // margins (210 - 2 x 14 mm = 182 mm, 688 CSS px) nothing may run wider than the line:
    // Chromium would shrink the whole page to fit, with smaller type on every page.
    b.post("/goog/cdp/execute", &json!({"cmd": "Emulation.setEmulatedMedia", "params": {"media": "print"}}));
    b.set_window(688, 900);
    assert_eq!(b.js("return matchMedia('print').matches", json!([])), true);
    let print_sw = b.js_f64("return document.documentElement.scrollWidth");
    let print_wide = b.sticking_out();
    assert!(
        print_sw <= 688.0 + 1.0,
        "findings in print media: {print_sw} px wide on a 688 px A4 line; sticking out: {print_wide}"
    );
}

/// At phone width (390 x 844) no page of the demo audit scrolls sideways as a whole (wide tables
/// scroll inside their `.scroll` boxes); a screenshot of each.
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn phone_width_has_no_page_scroll() {
    let server = Server::demo();
    let b = Browser::start();
    b.set_window(390, 844);
    let mut too_wide = Vec::new();
    for (name, path) in PAGES {
        b.goto(&server.url(path));
        if name == "report" {
            assert!(wait_for_drawn_canvases(&b).is_ok(), "the report's charts did not draw");
        }
        let sw = b.js_f64("return document.documentElement.scrollWidth");
        if sw > 391.0 {
            too_wide.push(format!("{path}: {sw} px wide; sticking out: {}", b.sticking_out()));
        }
        b.screenshot(&format!("phone-{name}"));
        b.screenshot_full(&format!("phone-{name}-full"));
    }
    let severe = b.severe_logs("phone pages");
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
    // After the screenshots, so that they are all there to look at when this fails.
    assert!(too_wide.is_empty(), "pages wider than a 390 px phone:\n{}", too_wide.join("\n"));
}

/// An audit named with markup shows the name as text: no `<img src=x>` in the DOM, no script run.
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn hostile_audit_name_is_escaped() {
    let server = Server::start();
    let name = "<img src=x onerror=alert(1)>\"&'";
    let r = server.post_json("/api/v1/audits", &json!({"name": name, "site": {"altitude_m": 0}}));
    assert_eq!(r.status, 201, "{}", r.text);
    let id = r.json()["id"].as_i64().expect("id");
    let b = Browser::start();
    for path in ["/".to_string(), format!("/audits/{id}")] {
        b.goto(&server.url(&path));
        // An alert would have opened a prompt, and this script would fail with "unexpected alert".
        let imgs =
            b.js("return [...document.querySelectorAll('img')].map(i => i.getAttribute('src'))", json!([]));
        let imgs = imgs.as_array().expect("imgs");
        assert!(!imgs.iter().any(|s| s == "x"), "{path}: an <img src=x> made it into the DOM");
        let text = b.js_str("return document.body.innerText");
        assert!(text.contains(name), "{path}: the literal name is not in the page text:\n{text}");
        let severe = b.severe_logs(&path);
        assert!(severe.is_empty(), "{path}: console errors (SEVERE):\n{}", severe.join("\n"));
    }
    let title = b.js_str("return document.title");
    assert!(title.contains(name), "the audit page title {title:?} lacks the literal name");
}

/// Issue 14: a file with a preamble, names, units and aggregation rows and error markers, chosen on
/// the upload page: the preview marks the names, units and first data rows, follows a corrected
/// line number, shows unit labels rather than codes, and the import lists the markers as missing.
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_upload_page_marks_the_layout_and_imports_markers_as_missing() {
    let server = Server::start();
    let id = server.audit_with_compressor("C1");
    let b = Browser::start();
    b.set_window(1366, 900);
    b.goto(&server.url(&format!("/audits/{id}/upload")));
    let mut csv =
        String::from("Logger;7;;\nTime;C1 Power;Line pressure;Flow\n;[kW];[bar];[m3/min]\n;Avg;Smp;Avg\n");
    for i in 0..60 {
        let p = if i % 10 == 3 { "#-1".to_string() } else { format!("4{},5", i % 10) };
        csv.push_str(&format!("02.03.2026 06:{i:02}:00;{p};6,{};8,{}\n", i % 9, i % 7));
    }
    b.js(
        "const dt = new DataTransfer(); dt.items.add(new File([arguments[0]], 'layout.csv', {type: 'text/csv'}));
         const input = document.getElementById('file-input'); input.files = dt.files;
         input.dispatchEvent(new Event('change'));",
        json!([csv]),
    );
    let marked = || {
        b.js(
            "return [...document.querySelectorAll('#preview tbody tr')].map(tr => [Number(tr.dataset.line), tr.className])",
            json!([]),
        )
    };
    assert!(
        wait_until(Duration::from_secs(10), || marked().as_array().is_some_and(|a| !a.is_empty())),
        "the preview did not appear: {}",
        b.js_str("return document.getElementById('choose-status').textContent")
    );
    let rows = marked();
    let class_of = |rows: &serde_json::Value, line: u64| {
        rows.as_array().unwrap().iter().find(|r| r[0] == line).map(|r| r[1].as_str().unwrap().to_string())
    };
    assert_eq!(class_of(&rows, 2).as_deref(), Some("role-header"), "{rows}");
    assert_eq!(class_of(&rows, 3).as_deref(), Some("role-units"), "{rows}");
    assert_eq!(class_of(&rows, 4).as_deref(), Some("role-skip"), "{rows}");
    assert_eq!(class_of(&rows, 5).as_deref(), Some("role-first"), "{rows}");
    // The form holds the proposal; units show as people write them.
    assert_eq!(b.js_str("return document.getElementById('m-units-line').value"), "3");
    assert_eq!(b.js_str("return document.getElementById('m-first-data').value"), "5");
    let unit = b.js_str(
        "const tr = document.querySelector('#columns-table tr[data-column=\"Line pressure\"]');
         const s = tr.querySelector('.u'); return s.options[s.selectedIndex].textContent",
    );
    assert_eq!(unit, "bar(g)");
    // Correcting the first data line moves the marks at once.
    b.js(
        "const e = document.getElementById('m-first-data'); e.value = '6'; e.dispatchEvent(new Event('input'));",
        json!([]),
    );
    let rows = marked();
    assert_eq!(class_of(&rows, 5).as_deref(), Some("role-skip"), "{rows}");
    assert_eq!(class_of(&rows, 6).as_deref(), Some("role-first"), "{rows}");
    // A pressure says where it was measured, in words, and takes the point's name (issue 19).
    let points = b.js_str(
        "const tr = document.querySelector('#columns-table tr[data-column=\"Line pressure\"]');
         return [...tr.querySelectorAll('.point option')].map(o => o.textContent).join('|')",
    );
    assert_eq!(points, "compressor discharge|after treatment|header|point of use");
    b.js(
        "const tr = document.querySelector('#columns-table tr[data-column=\"Line pressure\"]');
         tr.querySelector('.point').value = 'point_of_use'; tr.querySelector('.plabel').value = 'line end';
         const e = document.getElementById('m-first-data'); e.value = '5'; e.dispatchEvent(new Event('input'));
         document.getElementById('import-button').click();",
        json!([]),
    );
    let done = wait_until(Duration::from_secs(20), || {
        b.js_str("return document.getElementById('import-status').textContent").starts_with("Imported")
    });
    assert!(
        done,
        "not imported: {}",
        b.js_str("return document.getElementById('import-status').textContent")
    );
    let quality = b.js_str("return document.getElementById('result').textContent");
    assert!(quality.contains("C1 Power: 6 cells with a marker or text read as missing"), "{quality}");
    let audit = server.get(&format!("/api/v1/audits/{id}")).json();
    let ch = audit["channels"].as_array().unwrap().iter().find(|c| c["quantity"] == "pressure").cloned();
    let ch = ch.expect("a pressure channel");
    assert_eq!(
        (ch["label"].as_str(), ch["point"].as_str()),
        (Some("line end"), Some("point_of_use")),
        "{ch}"
    );
    b.screenshot("upload-layout-marked");
    let severe = b.severe_logs("/upload");
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}

#[path = "browser_undo.rs"]
mod undo;

#[path = "browser_walkfix16.rs"]
mod walkfix16;

#[path = "browser_thin.rs"]
mod thin;

#[path = "browser_units.rs"]
mod units;

#[path = "browser_calc16.rs"]
mod calc16;
#[path = "browser_findings.rs"]
mod findings;

#[path = "browser_forms.rs"]
mod forms;
#[path = "browser_pages.rs"]
mod pages;
#[path = "browser_report16.rs"]
mod report16;
#[path = "browser_tests_page.rs"]
mod tests_page;
#[path = "browser_treatment.rs"]
mod treatment;
#[path = "browser_upload.rs"]
mod upload;
#[path = "browser_words.rs"]
mod words;

/// The report of an audit built from three files that never overlap in time (issue 16) opens with
/// the sufficiency verdict and its reasons, above the figures, and shows no annual figure: each
/// reads "not enough data" with the reason.
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_report_of_a_thin_audit_shows_the_verdict_and_no_annual_figure() {
    let server = Server::start();
    let (id, _) = crate::guard::thin_audit(&server);
    let b = Browser::start();
    let page = format!("/audits/{id}/report");
    b.goto(&server.url(&page));
    b.settle();
    // A figure's number and unit are joined by a no-break space on the page (`common.js`).
    let verdict = b.js_str("return document.getElementById('sufficiency').innerText").replace('\u{a0}', " ");
    assert!(verdict.contains("Is the data enough? not enough"), "{verdict}");
    assert!(verdict.contains("logged together for 0.0 h"), "{verdict}");
    // The verdict comes before the headline figures (DOCUMENT_POSITION_FOLLOWING = 4).
    let order = b.js_f64(
        "return document.getElementById('sufficiency')\
         .compareDocumentPosition(document.getElementById('headline'))",
    );
    assert_eq!(order as u32 & 4, 4, "the headline figures come after the verdict");
    let value_of = |label: &str| {
        b.js(
            "for (const f of document.querySelectorAll('#headline .figure')) { \
               if (f.querySelector('.figure-label').innerText.startsWith(arguments[0])) \
                 return [f.querySelector('.figure-value').innerText, f.querySelector('.figure-note').innerText]; } \
             return null",
            json!([label]),
        )
    };
    for label in
        ["Annual energy of the compressors", "Annual cost of compressed air", "Heat discarded per year"]
    {
        let v = value_of(label);
        assert_eq!(v[0], "not enough data", "{label}: {v}");
        assert!(
            v[1].as_str().unwrap().contains("not enough for annual figures (reasons above)"),
            "{label}: {v}"
        );
    }
    let headline = b.js_str("return document.getElementById('headline').innerText");
    assert!(!headline.contains("MWh") && !headline.contains(" a year"), "an annual figure shows: {headline}");
    let measures = b.js_str("return document.body.innerText");
    assert!(measures.contains("No measure is proposed: the logged data are not enough"));
    // No bare axes where the heat balance would be: its figures are withheld, and it says so.
    assert_eq!(b.js_f64("return document.querySelectorAll('#chart-heat').length"), 0.0);
    assert!(b
        .js_str("return document.getElementById('heat-chart-note').innerText")
        .starts_with("No heat balance"));
    b.screenshot_full("thin-audit-report");
    let severe = b.severe_logs(&page);
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}
