//! Shared database files, probed: a second owner of one file (a server, the demo, a CLI import) is
//! refused at once while a server holds it, naming the file and the server's pid, and the server's
//! import in flight finishes; a server killed with SIGKILL mid-import leaves, after a restart on the
//! same file, no spool file, no unfinished upload and a sound file.

use std::path::{Path, PathBuf};
use std::time::Duration;

use crate::ingest::on_db;
use crate::support::*;

/// Rows of the big file (10 days at 1 s): long enough that its import is seen in flight.
const BIG_ROWS: i64 = 864_000;

/// Upload `csv` to audit `id` on another thread with progress `token`; the thread answers the
/// status, or an error if the connection broke (the server was killed).
fn upload_in_background(
    s: &Server,
    id: i64,
    token: &str,
    csv: Vec<u8>,
) -> std::thread::JoinHandle<Result<(u16, String), String>> {
    let url = s.url(&format!("/api/v1/audits/{id}/uploads?token={token}"));
    let origin = s.base.clone();
    std::thread::spawn(move || {
        let boundary = "hostileSTOREboundary";
        let mut body = format!(
            "--{boundary}\r\nContent-Disposition: form-data; name=\"mapping\"\r\n\r\n{}\r\n--{boundary}\r\n\
             Content-Disposition: form-data; name=\"file\"; filename=\"big.csv\"\r\n\r\n",
            cycling_mapping()
        )
        .into_bytes();
        body.extend_from_slice(&csv);
        body.extend_from_slice(format!("\r\n--{boundary}--\r\n").as_bytes());
        let agent: ureq::Agent = ureq::Agent::config_builder()
            .http_status_as_error(false)
            .timeout_global(Some(Duration::from_secs(600)))
            .build()
            .into();
        let mut r = agent
            .post(&url)
            .header("Origin", &origin)
            .header("Content-Type", &format!("multipart/form-data; boundary={boundary}"))
            .send(&body[..])
            .map_err(|e| e.to_string())?;
        let status = r.status().as_u16();
        Ok((status, r.body_mut().read_to_string().unwrap_or_default()))
    })
}

/// The import of `token` while it parses (`state` importing, `bytes_done < bytes_total`: it
/// commits nothing before the end of the file): `(bytes_done, bytes_total)`.
fn parsing(s: &Server, token: &str) -> Option<(f64, f64)> {
    let p = s.get(&format!("/api/v1/imports/{token}")).json();
    let done = p["bytes_done"].as_f64().unwrap_or(0.0);
    let total = p["bytes_total"].as_f64().unwrap_or(0.0);
    (p["state"] == "importing" && done > 0.0 && done < total).then_some((done, total))
}

/// Wait (at most two minutes) until the import of `token` is seen parsing between 5 % and 60 % of
/// its file, so that what the test does next lands while it is in flight.
fn wait_in_flight(s: &Server, token: &str) -> (f64, f64) {
    let mut seen = None;
    wait_until(Duration::from_secs(120), || {
        seen = parsing(s, token).filter(|(d, t)| *d >= 0.05 * t);
        seen.is_some()
    });
    let (done, total) = seen.expect("the import was never seen parsing");
    assert!(
        done <= 0.6 * total,
        "the import was first seen {:.0} % through: make the file longer",
        100.0 * done / total
    );
    (done, total)
}

/// Every file under the spool folders beside `db` (`.airledger-spool/`), with its size.
fn spool_files(db: &Path) -> Vec<(PathBuf, u64)> {
    fn walk(dir: &Path, out: &mut Vec<(PathBuf, u64)>) {
        for e in std::fs::read_dir(dir).into_iter().flatten().flatten() {
            let m = e.metadata().unwrap();
            if m.is_dir() {
                walk(&e.path(), out);
            } else {
                out.push((e.path(), m.len()));
            }
        }
    }
    let mut out = vec![];
    walk(&db.parent().unwrap().join(".airledger-spool"), &mut out);
    out
}

/// `(uploads left importing, PRAGMA integrity_check)` of the database file, read beside any server.
fn importing_rows_and_integrity(db: &Path) -> (i64, String) {
    on_db(db, |pool| async move {
        let importing: i64 = sqlx::query_scalar("SELECT count(*) FROM upload WHERE state = 'importing'")
            .fetch_one(&pool)
            .await
            .unwrap();
        let check: String = sqlx::query_scalar("PRAGMA integrity_check").fetch_one(&pool).await.unwrap();
        (importing, check)
    })
}

/// Assert that `out` is a refusal that names the database file and the pid holding it.
fn assert_refused(what: &str, out: &std::process::Output, took: Duration, db: &Path, pid: u32) {
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(!out.status.success(), "{what} on a held file succeeded: {err}");
    assert_eq!(out.status.code(), Some(1), "{what}: exit code; {err}");
    assert!(took < Duration::from_secs(10), "{what} took {took:?} to refuse: {err}");
    assert!(err.contains(&db.display().to_string()), "{what}: the message names the file: {err}");
    assert!(err.contains(&format!("pid {pid},")), "{what}: the message names the holder's pid {pid}: {err}");
    assert!(err.contains("in use"), "{what}: {err}");
}

/// Before: the second server started, and its start-up clean-up deleted the first server's import
/// in flight (a 500, `FOREIGN KEY constraint failed`). After: the second server and a second demo
/// exit at once with code 1, naming the file and the first server's pid, and the first server's
/// import, seen parsing before and after they ran, finishes 201 with every reading.
#[test]
fn probe_second_server_on_the_same_file_refuses_at_once() {
    let dir = TempDir::new("second");
    let db = dir.path().join("shared.sqlite");
    let s = Server::start_on(dir, db.clone(), &["serve"], &[]);
    let id = s.audit_with_compressor("C1");
    let uploader = upload_in_background(&s, id, "first", big_csv(BIG_ROWS).into_bytes());
    wait_in_flight(&s, "first");
    for cmd in ["serve", "demo"] {
        let (out, took) = run_within(
            std::process::Command::new(binary()).arg(cmd).arg("--db").arg(&db).arg("--bind").arg(free_bind()),
            Duration::from_secs(60),
        );
        assert_refused(cmd, &out, took, &db, s.child.id());
    }
    assert!(
        parsing(&s, "first").is_some(),
        "the first server's import ended before the second servers were refused: make the file longer"
    );
    let (status, text) = uploader.join().unwrap().expect("the first server's upload got an answer");
    assert_eq!(status, 201, "{text}");
    let answer: Value = serde_json::from_str(&text).unwrap();
    assert_eq!(answer["readings"], BIG_ROWS * 3, "{text}");
    assert_eq!(importing_rows_and_integrity(&s.db), (0, "ok".to_string()));
}

/// Before: after a SIGKILL mid-import the upload's `.part` spool file stayed for good (48 MB in
/// the probe). After: the restart on the same file removes it, and the unfinished upload, and the
/// file passes `PRAGMA integrity_check`. That the kill left both behind is checked before the
/// restart, so the test never passes without having killed an import in flight.
#[test]
fn probe_kill_9_during_import_leaves_no_spool_file_after_restart() {
    let dir = TempDir::new("kill9");
    let db = dir.path().join("kill9.sqlite");
    let mut s = Server::start_on(dir, db.clone(), &["serve"], &[]);
    let id = s.audit_with_compressor("C1");
    let csv = big_csv(BIG_ROWS).into_bytes();
    let uploader = upload_in_background(&s, id, "killed", csv.clone());
    wait_in_flight(&s, "killed");
    s.kill(); // Child::kill is SIGKILL on Unix
    assert!(uploader.join().unwrap().is_err(), "the upload was answered: the import ended before the kill");
    let left = spool_files(&db);
    assert!(
        left.iter().any(|(p, n)| p.extension().is_some_and(|e| e == "part") && *n == csv.len() as u64),
        "the kill left the upload's whole spool file: {left:?}"
    );
    let (importing, check) = importing_rows_and_integrity(&db);
    assert_eq!(importing, 1, "the kill left the upload importing");
    assert_eq!(check, "ok");
    // Restart on the same file.
    let s2 = Server::start_on(TempDir::new("kill9-restart"), db.clone(), &["serve"], &[]);
    assert_eq!(spool_files(&db), vec![], "no spool file is left after the restart");
    assert_eq!(importing_rows_and_integrity(&db), (0, "ok".to_string()));
    let a = s2.get(&format!("/api/v1/audits/{id}")).json();
    assert_eq!(a["uploads"].as_array().unwrap().len(), 0, "no partial upload is visible");
    drop(s2);
    drop(s);
}

/// Before: `airledger import` ran beside the server, writing behind its back (and its start-up
/// clean-up could delete the server's import in flight). After: it refuses at once while a server
/// holds the file, naming the file and the server's pid, and adds nothing; `backup` and `report`,
/// which only read, still run beside the server; once the server has stopped the import runs.
#[test]
fn probe_cli_import_while_a_server_holds_the_file_refuses() {
    let dir = TempDir::new("cli-held");
    let db = dir.path().join("held.sqlite");
    let csv = dir.path().join("c.csv");
    std::fs::write(&csv, cycling_csv(1)).unwrap();
    let map = dir.path().join("m.json");
    std::fs::write(&map, cycling_mapping().to_string()).unwrap();
    let backup = dir.path().join("copy.sqlite");
    let mut s = Server::start_on(TempDir::new("cli-held-srv"), db.clone(), &["serve"], &[]);
    let id = s.audit_with_compressor("C1");
    let import = || {
        let mut cmd = std::process::Command::new(binary());
        cmd.args(["import", "--db"])
            .arg(&db)
            .args(["--audit", &id.to_string(), "--mapping"])
            .arg(&map)
            .arg(&csv);
        run_within(&mut cmd, Duration::from_secs(120))
    };
    let (out, took) = import();
    assert_refused("import", &out, took, &db, s.child.id());
    let a = s.get(&format!("/api/v1/audits/{id}")).json();
    assert_eq!(a["uploads"].as_array().unwrap().len(), 0, "the refused import added nothing");
    // The readers run beside the server.
    let (out, _) = run_within(
        std::process::Command::new(binary()).args(["backup", "--db"]).arg(&db).arg("--out").arg(&backup),
        Duration::from_secs(60),
    );
    assert!(out.status.success(), "backup beside the server: {}", String::from_utf8_lossy(&out.stderr));
    assert!(backup.metadata().unwrap().len() > 0);
    let (out, _) = run_within(
        std::process::Command::new(binary())
            .args(["report", "--db"])
            .arg(&db)
            .args(["--audit", &id.to_string()]),
        Duration::from_secs(60),
    );
    assert!(out.status.success(), "report beside the server: {}", String::from_utf8_lossy(&out.stderr));
    // The server still owns the file after the readers: a second import is refused again.
    let (out, took) = import();
    assert_refused("import after the readers", &out, took, &db, s.child.id());
    s.kill();
    let (out, _) = import();
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    assert!(String::from_utf8_lossy(&out.stdout).contains("360 rows, 1080 readings"));
}

/// A client that hangs up half-way through an upload (a browser tab closed, a laptop put to sleep)
/// must leave nothing: no upload row, no readings, no spool file, and the import's progress says it
/// failed. The request is sent by hand over TCP with the full `Content-Length` and only part of
/// the body, then the socket is closed.
#[test]
fn probe_upload_cut_off_mid_body_leaves_nothing() {
    use std::io::Write;
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let boundary = "cutOFFboundary";
    let csv = big_csv(200_000).into_bytes();
    let mut body = format!(
        "--{boundary}\r\nContent-Disposition: form-data; name=\"mapping\"\r\n\r\n{}\r\n--{boundary}\r\n\
         Content-Disposition: form-data; name=\"file\"; filename=\"cut.csv\"\r\n\r\n",
        cycling_mapping()
    )
    .into_bytes();
    body.extend_from_slice(&csv);
    body.extend_from_slice(format!("\r\n--{boundary}--\r\n").as_bytes());
    let host = s.base.trim_start_matches("http://").to_string();
    let mut tcp = std::net::TcpStream::connect(&host).unwrap();
    let head = format!(
        "POST /api/v1/audits/{id}/uploads?token=cut HTTP/1.1\r\nHost: {host}\r\nOrigin: {}\r\n\
         Content-Type: multipart/form-data; boundary={boundary}\r\nContent-Length: {}\r\n\r\n",
        s.base,
        body.len()
    );
    tcp.write_all(head.as_bytes()).unwrap();
    tcp.write_all(&body[..body.len() / 2]).unwrap();
    tcp.flush().unwrap();
    std::thread::sleep(Duration::from_millis(300));
    drop(tcp);
    // The server notices the hang-up; give it a moment to clean up, then look.
    let settled = wait_until(Duration::from_secs(30), || {
        spool_files(&s.db).is_empty() && importing_rows_and_integrity(&s.db).0 == 0
    });
    assert!(
        settled,
        "spool files {:?}, importing rows {:?}",
        spool_files(&s.db),
        importing_rows_and_integrity(&s.db)
    );
    let a = s.get(&format!("/api/v1/audits/{id}")).json();
    assert_eq!(a["uploads"].as_array().unwrap().len(), 0, "no upload is visible: {a}");
    let readings: i64 = on_db(&s.db, |pool| async move {
        sqlx::query_scalar("SELECT count(*) FROM chunk").fetch_one(&pool).await.unwrap()
    });
    assert_eq!(readings, 0, "no readings were kept");
    assert_eq!(importing_rows_and_integrity(&s.db).1, "ok");
    let p = s.get("/api/v1/imports/cut");
    if p.status == 200 {
        assert_ne!(p.json()["state"], "done", "the cut-off import is not reported done: {}", p.text);
    }
}
