//! A bounded load test on loopback (issue 6): 8 clients ask for the demo plant's report for 20 s
//! while 2,000,000-row logger files import, one after another for the whole 20 s, into other audits
//! of the same database (one file takes under 2 s here, so a single one would leave most of the window
//! idle). Prints
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
    // Audits to import into, each with two compressors (the same file goes to each in turn).
    let new_audit = |n: usize| -> i64 {
        let mut r = a
            .post(&format!("{base}/api/v1/audits"))
            .header("Origin", &base)
            .send_json(serde_json::json!({"name": format!("load {n}")}))
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
        id
    };
    let targets: Vec<i64> = (0..40).map(new_audit).collect();
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
    let deadline = Instant::now() + Duration::from_secs(SECONDS);
    let imp = {
        let base = base.clone();
        let importing = importing.clone();
        std::thread::spawn(move || {
            let mut done = Vec::new();
            for id in targets {
                if Instant::now() >= deadline {
                    break;
                }
                let start = Instant::now();
                let r = agent()
                    .post(&format!("{base}/api/v1/audits/{id}/uploads"))
                    .header("Origin", &base)
                    .header("Content-Type", &format!("multipart/form-data; boundary={boundary}"))
                    .send(&body[..]);
                done.push((r.map(|r| r.status().as_u16()).unwrap_or(0), start.elapsed()));
            }
            importing.store(false, Ordering::Relaxed);
            done
        })
    };
    let clients: Vec<_> = (0..CLIENTS)
        .map(|_| {
            let url = format!("{base}/audits/1/report");
            let importing = importing.clone();
            std::thread::spawn(move || {
                let a = agent();
                let (mut lat, mut errors, mut during_import) = (Vec::new(), 0usize, 0usize);
                while Instant::now() < deadline {
                    let s = Instant::now();
                    let while_importing = importing.load(Ordering::Relaxed);
                    match a.get(&url).call() {
                        Ok(mut r) if r.status() == 200 => {
                            let _ = r.body_mut().read_to_vec();
                            lat.push(s.elapsed());
                        }
                        _ => errors += 1,
                    }
                    during_import += usize::from(while_importing);
                }
                (lat, errors, during_import)
            })
        })
        .collect();
    let mut all = Vec::new();
    let mut errors = 0;
    let mut during = 0;
    for c in clients {
        let (l, e, d) = c.join().unwrap();
        all.extend(l);
        errors += e;
        during += d;
    }
    let imports = imp.join().unwrap();
    let ok = imports.iter().filter(|(st, _)| *st == 201).count();
    let mean_s = imports.iter().map(|(_, t)| t.as_secs_f64()).sum::<f64>() / imports.len().max(1) as f64;
    all.sort();
    let pct = |p: f64| {
        all.get(((all.len() as f64 - 1.0) * p) as usize).map(|d| d.as_secs_f64() * 1000.0).unwrap_or(f64::NAN)
    };
    println!("load test: {CLIENTS} clients for {SECONDS} s on GET /audits/1/report while files of {ROWS} rows (8 M readings) import back to back");
    println!("  requests      {}", all.len());
    println!("  requests/s    {:.1}", all.len() as f64 / SECONDS as f64);
    println!("  p50 latency   {:.1} ms", pct(0.5));
    println!("  p99 latency   {:.1} ms", pct(0.99));
    println!("  errors        {errors} (must be 0)");
    println!("  asked while an import ran  {during} of {}", all.len() + errors);
    println!(
        "  imports       {} files, {ok} answered 201, {:.1} s each on average ({:.1} M readings/s under load)",
        imports.len(),
        mean_s,
        8.0 / mean_s
    );
    if ok != imports.len() {
        println!("  IMPORT ERRORS: {:?}", imports.iter().map(|x| x.0).collect::<Vec<_>>());
    }
    let _ = child.kill();
    let _ = child.wait();
    let _ = std::fs::remove_dir_all(&dir);
}
