//! A bounded load test on loopback (issue 6): 8 clients ask for the demo plant's report for 20 s
//! while a 2,000,000-row logger file imports into another audit of the same database. Prints
//! requests per second, p50/p99 latency and errors (which must be 0). A benchmark, not a test:
//! `cargo bench --bench load`. It builds and runs the release binary; traffic stays on 127.0.0.1.

use std::io::{BufRead, BufReader, Write};
use std::net::TcpListener;
use std::process::{Command, Stdio};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;
use std::time::{Duration, Instant};

const CLIENTS: usize = 8;
const SECONDS: u64 = 20;
const ROWS: usize = 2_000_000;

fn agent() -> ureq::Agent {
    ureq::Agent::config_builder()
        .http_status_as_error(false)
        .timeout_global(Some(Duration::from_secs(600)))
        .build()
        .into()
}

fn main() {
    let root = env!("CARGO_MANIFEST_DIR");
    let status = Command::new("cargo")
        .args(["build", "--release", "--quiet"])
        .current_dir(root)
        .status()
        .expect("cargo");
    assert!(status.success(), "release build failed");
    let bin = format!("{root}/target/release/airledger");
    let dir = std::env::temp_dir().join(format!("airledger-load-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let db = dir.join("load.sqlite");
    let port = TcpListener::bind("127.0.0.1:0").unwrap().local_addr().unwrap().port();
    let base = format!("http://127.0.0.1:{port}");
    let mut child = Command::new(&bin)
        .args(["demo", "--db"])
        .arg(&db)
        .args(["--bind", &format!("127.0.0.1:{port}")])
        .stdout(Stdio::piped())
        .spawn()
        .expect("start");
    let out = child.stdout.take().unwrap();
    for line in BufReader::new(out).lines().map_while(Result::ok) {
        if line.starts_with("airledger is serving") {
            break;
        }
    }
    let a = agent();
    // A second audit to import into.
    let mut r = a
        .post(&format!("{base}/api/v1/audits"))
        .header("Origin", &base)
        .send_json(serde_json::json!({"name": "load"}))
        .unwrap();
    let id = serde_json::from_str::<serde_json::Value>(&r.body_mut().read_to_string().unwrap()).unwrap()
        ["id"]
        .as_i64()
        .unwrap();
    for tag in ["L1", "L2"] {
        a.post(&format!("{base}/api/v1/audits/{id}/compressors"))
            .header("Origin", &base)
            .send_json(serde_json::json!({"tag": tag, "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                "rated_power_kw": 75, "rated_flow_m3_min": 12.5, "rated_pressure_bar_g": 7.5}))
            .unwrap();
    }
    let mut csv = Vec::with_capacity(ROWS * 48);
    writeln!(csv, "time,L1 kW,L2 kW,header bar,flow m3/min").unwrap();
    let t0 = 1_772_400_000i64;
    for i in 0..ROWS as i64 {
        let l1 = if i % 200 < 80 { 76.3 } else { 21.0 } + (i % 7) as f64 * 0.1;
        let l2 = if i % 300 < 90 { 55.2 } else { 14.1 } + (i % 5) as f64 * 0.1;
        let t = t0 + i;
        writeln!(
            csv,
            "{},{l1:.1},{l2:.1},{:.2},{:.2}",
            t,
            6.9 + (i % 40) as f64 * 0.01,
            9.0 + (i % 90) as f64 * 0.05
        )
        .unwrap();
    }
    let mapping = serde_json::json!({"delimiter": ",", "decimal": ".", "header_line": 1,
        "timestamp": {"column": "time", "format": "unix_s", "timezone": "UTC"},
        "columns": [{"column": "L1 kW", "quantity": "power", "unit": "kW", "compressor": "L1"},
                    {"column": "L2 kW", "quantity": "power", "unit": "kW", "compressor": "L2"},
                    {"column": "header bar", "quantity": "pressure", "unit": "bar_g"},
                    {"column": "flow m3/min", "quantity": "flow", "unit": "m3_min"}]});
    let boundary = "loadBOUNDARY";
    let mut body = format!("--{boundary}\r\nContent-Disposition: form-data; name=\"mapping\"\r\n\r\n{mapping}\r\n--{boundary}\r\nContent-Disposition: form-data; name=\"file\"; filename=\"load.csv\"\r\n\r\n").into_bytes();
    body.extend_from_slice(&csv);
    body.extend_from_slice(format!("\r\n--{boundary}--\r\n").as_bytes());
    // Warm the report cache, as a manager's first visit would.
    a.get(&format!("{base}/audits/1/report")).call().unwrap();

    let importing = Arc::new(AtomicBool::new(true));
    let imp = {
        let base = base.clone();
        let importing = importing.clone();
        std::thread::spawn(move || {
            let start = Instant::now();
            let r = agent()
                .post(&format!("{base}/api/v1/audits/{id}/uploads"))
                .header("Origin", &base)
                .header("Content-Type", &format!("multipart/form-data; boundary={boundary}"))
                .send(&body[..]);
            importing.store(false, Ordering::Relaxed);
            (r.map(|r| r.status().as_u16()).unwrap_or(0), start.elapsed())
        })
    };
    let deadline = Instant::now() + Duration::from_secs(SECONDS);
    let clients: Vec<_> = (0..CLIENTS)
        .map(|_| {
            let url = format!("{base}/audits/1/report");
            std::thread::spawn(move || {
                let a = agent();
                let (mut lat, mut errors, mut during_import) = (Vec::new(), 0usize, 0usize);
                while Instant::now() < deadline {
                    let s = Instant::now();
                    match a.get(&url).call() {
                        Ok(mut r) if r.status() == 200 => {
                            let _ = r.body_mut().read_to_vec();
                            lat.push(s.elapsed());
                        }
                        _ => errors += 1,
                    }
                    during_import += 1;
                }
                (lat, errors, during_import)
            })
        })
        .collect();
    let mut all = Vec::new();
    let mut errors = 0;
    for c in clients {
        let (l, e, _) = c.join().unwrap();
        all.extend(l);
        errors += e;
    }
    let still_importing = importing.load(Ordering::Relaxed);
    let (status, import_time) = imp.join().unwrap();
    all.sort();
    let pct = |p: f64| {
        all.get(((all.len() as f64 - 1.0) * p) as usize).map(|d| d.as_secs_f64() * 1000.0).unwrap_or(f64::NAN)
    };
    println!("load test: {CLIENTS} clients for {SECONDS} s on GET /audits/1/report while {ROWS} rows (8 M readings) import");
    println!("  requests      {}", all.len());
    println!("  requests/s    {:.1}", all.len() as f64 / SECONDS as f64);
    println!("  p50 latency   {:.1} ms", pct(0.5));
    println!("  p99 latency   {:.1} ms", pct(0.99));
    println!("  errors        {errors} (must be 0)");
    println!("  import        HTTP {status} in {:.1} s (still importing when the clients stopped: {still_importing})", import_time.as_secs_f64());
    let _ = child.kill();
    let _ = child.wait();
    let _ = std::fs::remove_dir_all(&dir);
}
