//! Hostile uploads under load (issue 15): for a bounded time, several clients send the hostile
//! probes back to back while others upload normal files and read the summary and the report page
//! of the same audit. Every hostile request is refused with its status (never a 5xx) or, where the
//! server now reads it whole (CR-only line ends), lands with every row; every normal upload lands
//! with every row; the report answers 200 throughout; the server's peak memory stays within the
//! issue's bound; and the database file ends sound, holding exactly what was answered 201. Every
//! hostile file is generated here, never stored.

use std::sync::atomic::{AtomicBool, AtomicI64, Ordering};
use std::sync::Mutex;
use std::time::{Duration, Instant};

use crate::ingest::on_db;
use crate::support::*;

/// The issue's bound on the server's peak resident memory for any file, for the release build.
const RSS_LIMIT_MIB: f64 = 64.0;
/// Of it, what the server may hold for data: 64 MiB less the release build's code and libraries
/// resident (about 12 MiB under load, `RssFile` of `target/release/airledger`), as the debug build
/// under test carries some 8 MiB more code than that (see `support::peak_data_mib`).
const DATA_LIMIT_MIB: f64 = 52.0;
/// How long the clients keep sending (each also stops after `MAX_PER_CLIENT` requests).
const RUN_FOR: Duration = Duration::from_secs(25);
const MAX_PER_CLIENT: usize = 200;
const HOSTILE_CLIENTS: usize = 3;
const UPLOAD_CLIENTS: usize = 2;
const BOUNDARY: &str = "hostileLOADboundary3f9a";
/// 2026-05-04T08:00:00Z; normal files start here, 2 h apart (each is 1 h long).
const NORMAL_START: i64 = 1_777_881_600;
const NORMAL_STEP_S: i64 = 2 * 3600;
/// CR-only files start a year later, 6 days apart (each is 133 h long), clear of the normal files.
const CR_START: i64 = NORMAL_START + 365 * 86_400;
const CR_HOURS: u32 = 133;
const CR_STEP_S: i64 = 6 * 86_400;

/// The probes, each with the status it must get.
const HOSTILE: [(&str, u16); 7] = [
    ("unclosed quote 1 MB", 422),
    ("CR-only line ends", 201),
    ("5 MB header line", 422),
    ("gzip file", 422),
    ("mapping part over 1 MiB", 413),
    ("two file parts", 400),
    ("foreign Host", 421),
];

/// One answered request.
struct Outcome {
    class: &'static str,
    expected: u16,
    status: u16,
    took: Duration,
    /// What was wrong beside the status (empty when all is well).
    wrong: String,
}

/// A multipart body from `(name, filename, content)` parts, with this file's boundary.
fn multipart(parts: &[(&str, Option<&str>, &[u8])]) -> Vec<u8> {
    multipart_body(BOUNDARY, parts)
}

/// POST a multipart `body` to the uploads of `audit` with the given `Host`: status and body.
fn post_raw(s: &Server, audit: i64, host: &str, body: Vec<u8>) -> (u16, String) {
    let head = format!(
        "POST /api/v1/audits/{audit}/uploads HTTP/1.1\r\nHost: {host}\r\n\
         Content-Type: multipart/form-data; boundary={BOUNDARY}"
    );
    let len = body.len() as u64;
    let (status, _, text) = raw_request(s, &head, len, std::iter::once(body));
    (status, text)
}

/// The `rows` an upload answer reports, if it is JSON.
fn rows_of(text: &str) -> Option<i64> {
    serde_json::from_str::<Value>(text).ok()?["rows"].as_i64()
}

/// The files of the probes, made once and shared by every client.
struct HostileFiles {
    quote: Vec<u8>,
    header: Vec<u8>,
    gzip: Vec<u8>,
    big_mapping: Vec<u8>,
    small: Vec<u8>,
}

impl HostileFiles {
    fn new() -> Self {
        // A 1 MB unclosed quote at line 12 followed by short lines.
        let mut quote = cycling_csv(1).lines().take(11).map(|l| format!("{l}\n")).collect::<String>();
        quote.push_str("2026-05-04T09:00:00Z,\"14,6.9,2.0\n");
        quote.push_str(&"1\n".repeat(500_000));
        // A 5 MB header line, then readings.
        let mut header = String::from("time,C1 kW,header bar,flow m3/min,");
        header.push_str(&"x".repeat(5 << 20));
        header.push('\n');
        header.push_str(&cycling_csv(1).lines().skip(1).map(|l| format!("{l}\n")).collect::<String>());
        // gzip (RFC 1952): magic, deflate, no flags; the body is a CSV deflated.
        let mut gzip = vec![0x1F, 0x8B, 8, 0, 0, 0, 0, 0, 0, 3];
        gzip.extend(miniz_oxide::deflate::compress_to_vec(cycling_csv(2).as_bytes(), 6));
        // A valid mapping padded to 1 MiB + 1 byte.
        let mut big_mapping = cycling_mapping().to_string().into_bytes();
        big_mapping.resize(1024 * 1024 + 1, b' ');
        let small = cycling_csv_at(CR_START - 30 * 86_400, 1).into_bytes();
        Self { quote: quote.into_bytes(), header: header.into_bytes(), gzip, big_mapping, small }
    }
}

/// Send probe `kind` (an index into [`HOSTILE`]), made distinct by `n`; CR-only files take their
/// start from `cr_seq`.
fn send_hostile(
    s: &Server,
    audit: i64,
    kind: usize,
    files: &HostileFiles,
    cr_seq: &AtomicI64,
    landed: &Mutex<Vec<(String, i64)>>,
    n: usize,
) -> Outcome {
    let (class, expected) = HOSTILE[kind];
    let own_host = s.base.trim_start_matches("http://").to_string();
    let mapping = cycling_mapping();
    let t = Instant::now();
    let mut wrong = String::new();
    let (status, text) = match kind {
        0 => {
            // A distinct last line: a file already stored is refused (409) before it is read.
            let mut quote = files.quote.clone();
            quote.extend_from_slice(format!("{n}\n").as_bytes());
            let r = s.upload(audit, "quote.csv", &quote, &mapping, "");
            let line = serde_json::from_str::<Value>(&r.text).ok().map(|v| v["error"]["line"].clone());
            if r.status == 422 && line != Some(json!(12)) {
                wrong = format!("the 422 does not name line 12: {}", r.text);
            }
            (r.status, r.text)
        }
        1 => {
            let j = cr_seq.fetch_add(1, Ordering::Relaxed);
            let csv = cycling_csv_at(CR_START + j * CR_STEP_S, CR_HOURS).replace('\n', "\r");
            let want = i64::from(CR_HOURS) * 360;
            let name = format!("cr-{j}.csv");
            let r = s.upload(audit, &name, csv.as_bytes(), &mapping, "");
            if r.status == 201 {
                if rows_of(&r.text) != Some(want) {
                    wrong = format!("{want} rows sent: {}", r.text);
                }
                landed.lock().unwrap().push((name, want));
            }
            (r.status, r.text)
        }
        2 => {
            let mut header = files.header.clone();
            header.extend_from_slice(format!("2026-05-04T09:00:00Z,14,6.9,2.0,{n}\n").as_bytes());
            let r = s.upload(audit, "wide.csv", &header, &mapping, "");
            let line = serde_json::from_str::<Value>(&r.text).ok().map(|v| v["error"]["line"].clone());
            if r.status == 422 && line != Some(json!(1)) {
                wrong = format!("the 422 does not name line 1: {}", r.text);
            }
            (r.status, r.text)
        }
        3 => {
            let mut gzip = files.gzip.clone();
            gzip.extend_from_slice(&(n as u64).to_le_bytes());
            let r = s.upload(audit, "log.csv.gz", &gzip, &mapping, "");
            if r.status == 422 && !r.text.contains("gzip") {
                wrong = format!("the 422 does not name gzip: {}", r.text);
            }
            (r.status, r.text)
        }
        4 => {
            let body =
                multipart(&[("mapping", None, &files.big_mapping), ("file", Some("a.csv"), &files.small)]);
            post_raw(s, audit, &own_host, body)
        }
        5 => {
            let m = mapping.to_string();
            let body = multipart(&[
                ("mapping", None, m.as_bytes()),
                ("file", Some("a.csv"), &files.small),
                ("file", Some("b.csv"), &files.small),
            ]);
            post_raw(s, audit, &own_host, body)
        }
        _ => {
            let m = mapping.to_string();
            let body = multipart(&[("mapping", None, m.as_bytes()), ("file", Some("a.csv"), &files.small)]);
            post_raw(s, audit, "evil.example", body)
        }
    };
    if status != expected && wrong.is_empty() {
        wrong = text;
    }
    Outcome { class, expected, status, took: t.elapsed(), wrong }
}

/// `(p50, p99)` of `took` in milliseconds (nearest rank).
fn percentiles(mut took: Vec<Duration>) -> (f64, f64) {
    if took.is_empty() {
        return (f64::NAN, f64::NAN);
    }
    took.sort();
    let rank = |p: f64| {
        let i = ((p / 100.0) * took.len() as f64).ceil() as usize;
        took[i.clamp(1, took.len()) - 1].as_secs_f64() * 1000.0
    };
    (rank(50.0), rank(99.0))
}

#[test]
fn probe_mix_of_hostile_uploads_leaves_normal_uploads_served() {
    let s = Server::start();
    let audit = s.audit_with_compressor("C1");
    let files = HostileFiles::new();
    let outcomes: Mutex<Vec<Outcome>> = Mutex::new(Vec::new());
    let landed: Mutex<Vec<(String, i64)>> = Mutex::new(Vec::new());
    let normal_seq = AtomicI64::new(0);
    let cr_seq = AtomicI64::new(0);
    let uploading = AtomicBool::new(true);
    let start = Instant::now();
    let going = |n: usize| n < MAX_PER_CLIENT && start.elapsed() < RUN_FOR;

    std::thread::scope(|sc| {
        let mut senders = Vec::new();
        for c in 0..HOSTILE_CLIENTS {
            let (s, files, outcomes, landed, cr_seq) = (&s, &files, &outcomes, &landed, &cr_seq);
            senders.push(sc.spawn(move || {
                let mut n = 0;
                while going(n) {
                    let seq = c * MAX_PER_CLIENT + n;
                    let kind = (c * 2 + n) % HOSTILE.len();
                    let o = send_hostile(s, audit, kind, files, cr_seq, landed, seq);
                    outcomes.lock().unwrap().push(o);
                    n += 1;
                }
            }));
        }
        for _ in 0..UPLOAD_CLIENTS {
            let (s, outcomes, landed, normal_seq) = (&s, &outcomes, &landed, &normal_seq);
            senders.push(sc.spawn(move || {
                let mut n = 0;
                while going(n) {
                    let k = normal_seq.fetch_add(1, Ordering::Relaxed);
                    let csv = cycling_csv_at(NORMAL_START + k * NORMAL_STEP_S, 1);
                    let want = (csv.lines().count() - 1) as i64;
                    let name = format!("normal-{k}.csv");
                    let t = Instant::now();
                    let r = s.upload(audit, &name, csv.as_bytes(), &cycling_mapping(), "");
                    let took = t.elapsed();
                    let mut wrong = String::new();
                    if r.status == 201 {
                        if rows_of(&r.text) != Some(want) {
                            wrong = format!("{want} rows sent: {}", r.text);
                        }
                        landed.lock().unwrap().push((name, want));
                    } else {
                        wrong = r.text;
                    }
                    let o = Outcome { class: "normal upload", expected: 201, status: r.status, took, wrong };
                    outcomes.lock().unwrap().push(o);
                    n += 1;
                }
            }));
        }
        // The reader asks for the summary and the report page until every sender has stopped.
        let reader = {
            let (s, outcomes, uploading) = (&s, &outcomes, &uploading);
            sc.spawn(move || {
                let mut n = 0usize;
                while uploading.load(Ordering::Relaxed) {
                    let (class, path) = if n.is_multiple_of(2) {
                        ("summary", format!("/api/v1/audits/{audit}/summary"))
                    } else {
                        ("report page", format!("/audits/{audit}/report"))
                    };
                    let t = Instant::now();
                    let r = s.get(&path);
                    let took = t.elapsed();
                    let wrong = if r.status == 200 { String::new() } else { r.text };
                    outcomes.lock().unwrap().push(Outcome {
                        class,
                        expected: 200,
                        status: r.status,
                        took,
                        wrong,
                    });
                    n += 1;
                }
            })
        };
        for h in senders {
            h.join().expect("a client thread panicked");
        }
        uploading.store(false, Ordering::Relaxed);
        reader.join().expect("the reader thread panicked");
    });
    let ran = start.elapsed();
    let peak = peak_rss_mb(&s);
    let data = peak_data_mib(s.child.id());
    let outcomes = outcomes.into_inner().unwrap();

    // The figures, by class.
    eprintln!("hostile load: {ran:.1?} of traffic, {} requests", outcomes.len());
    let classes: Vec<&str> =
        HOSTILE.iter().map(|(c, _)| *c).chain(["normal upload", "summary", "report page"]).collect();
    for class in &classes {
        let of: Vec<&Outcome> = outcomes.iter().filter(|o| o.class == *class).collect();
        let mut statuses: Vec<u16> = of.iter().map(|o| o.status).collect();
        statuses.sort();
        statuses.dedup();
        let counts: Vec<String> = statuses
            .iter()
            .map(|st| format!("{st} x{}", of.iter().filter(|o| o.status == *st).count()))
            .collect();
        let (p50, p99) = percentiles(of.iter().map(|o| o.took).collect());
        eprintln!(
            "  {class:<24} {:>4} requests, {:<16} p50 {p50:>8.0} ms, p99 {p99:>8.0} ms",
            of.len(),
            counts.join(", ")
        );
    }
    eprintln!("  server peak RSS (VmHWM): {peak:.1} MiB");

    // Every class was exercised, and every answer was the one expected.
    for class in &classes {
        assert!(outcomes.iter().any(|o| o.class == *class), "no {class} was sent in {ran:?}");
    }
    let server_errors: Vec<String> = outcomes
        .iter()
        .filter(|o| o.status >= 500 || o.status == 0)
        .map(|o| format!("{}: {}", o.class, o.status))
        .collect();
    assert!(server_errors.is_empty(), "answered 5xx or not at all: {server_errors:?}");
    let wrong: Vec<String> = outcomes
        .iter()
        .filter(|o| o.status != o.expected || !o.wrong.is_empty())
        .map(|o| format!("{} -> {} (expected {}): {:.300}", o.class, o.status, o.expected, o.wrong))
        .collect();
    assert!(wrong.is_empty(), "{} wrong answers: {wrong:#?}", wrong.len());

    // The database file: sound, and holding exactly the uploads answered 201, each complete with
    // every row.
    let mut want = landed.into_inner().unwrap();
    want.sort();
    let db = s.db.clone();
    let (check, mut stored): (String, Vec<(String, i64, String)>) = on_db(&db, |pool| async move {
        let check: String = sqlx::query_scalar("PRAGMA integrity_check").fetch_one(&pool).await.unwrap();
        let stored = sqlx::query_as("SELECT filename, rows, state FROM upload WHERE audit_id = ?")
            .bind(audit)
            .fetch_all(&pool)
            .await
            .unwrap();
        (check, stored)
    });
    assert_eq!(check, "ok", "PRAGMA integrity_check");
    stored.sort();
    assert!(stored.iter().all(|(_, _, state)| state == "complete"), "{stored:?}");
    let stored: Vec<(String, i64)> = stored.into_iter().map(|(f, r, _)| (f, r)).collect();
    eprintln!(
        "  database: integrity ok, {} uploads ({} normal, {} CR-only), {} rows",
        stored.len(),
        stored.iter().filter(|(f, _)| f.starts_with("normal-")).count(),
        stored.iter().filter(|(f, _)| f.starts_with("cr-")).count(),
        stored.iter().map(|(_, r)| r).sum::<i64>()
    );
    assert_eq!(stored, want, "the database holds exactly the uploads answered 201");
    // Last, so that a failure here still shows the checks of the database above.
    eprintln!("  server peak less its code (VmHWM - RssFile): {data:.1} MiB");
    assert!(
        data <= DATA_LIMIT_MIB,
        "peak data {data:.1} MiB over {DATA_LIMIT_MIB} MiB (peak RSS {peak:.1} MiB of {RSS_LIMIT_MIB} with the debug build's code)"
    );
}
