//! Hostile and unlucky requests at the web edge (issue 15): each test is named for the class of
//! probe, drives the real server over HTTP, and reads its peak memory from `/proc` where memory is
//! the point.

use crate::support::*;

const BOUNDARY: &str = "hostileWEBboundary5c2e";

/// A multipart body from `(name, filename, content)` parts, with this file's boundary.
fn multipart(parts: &[(&str, Option<&str>, &[u8])]) -> Vec<u8> {
    multipart_body(BOUNDARY, parts)
}

fn post_multipart(s: &Server, path: &str, body: Vec<u8>) -> (u16, Value) {
    let head = format!(
        "POST {path} HTTP/1.1\r\nHost: {}\r\nContent-Type: multipart/form-data; boundary={BOUNDARY}",
        s.base.trim_start_matches("http://")
    );
    let len = body.len() as u64;
    let (status, _, text) = raw_request(s, &head, len, std::iter::once(body));
    (status, serde_json::from_str(&text).unwrap_or_else(|e| panic!("not JSON ({e}): {text}")))
}

fn uploads_of(s: &Server, audit: i64) -> usize {
    let r = s.get(&format!("/api/v1/audits/{audit}/uploads"));
    assert_eq!(r.status, 200, "{}", r.text);
    r.json()["uploads"].as_array().expect("uploads").len()
}

#[test]
fn probe_two_file_parts_is_refused_400() {
    let s = Server::start();
    let audit = s.audit_with_compressor("C1");
    let mapping = cycling_mapping().to_string();
    let first = cycling_csv(2);
    let second = cycling_csv_at(1_780_000_000, 2);
    let path = format!("/api/v1/audits/{audit}/uploads");
    // Before: 201 and only the second file imported. Now: 400 naming the part, nothing stored.
    let (status, body) = post_multipart(
        &s,
        &path,
        multipart(&[
            ("mapping", None, mapping.as_bytes()),
            ("file", Some("a.csv"), first.as_bytes()),
            ("file", Some("b.csv"), second.as_bytes()),
        ]),
    );
    assert_eq!(status, 400, "{body}");
    assert_eq!(body["error"]["field"], "file", "{body}");
    assert!(body["error"]["message"].as_str().unwrap().contains("more than one"), "{body}");
    // Two mapping parts, or none, or no file: 400 naming the part.
    let (status, body) = post_multipart(
        &s,
        &path,
        multipart(&[
            ("mapping", None, mapping.as_bytes()),
            ("mapping", None, mapping.as_bytes()),
            ("file", Some("a.csv"), first.as_bytes()),
        ]),
    );
    assert_eq!((status, body["error"]["field"].as_str()), (400, Some("mapping")), "{body}");
    let (status, body) = post_multipart(&s, &path, multipart(&[("file", Some("a.csv"), first.as_bytes())]));
    assert_eq!((status, body["error"]["field"].as_str()), (400, Some("mapping")), "{body}");
    let (status, body) = post_multipart(&s, &path, multipart(&[("mapping", None, mapping.as_bytes())]));
    assert_eq!((status, body["error"]["field"].as_str()), (400, Some("file")), "{body}");
    assert_eq!(uploads_of(&s, audit), 0, "nothing of the refused uploads was stored");
    // The sniffer also takes exactly one file part.
    let sniff = format!("/api/v1/audits/{audit}/sniff");
    let (status, body) = post_multipart(
        &s,
        &sniff,
        multipart(&[("file", Some("a.csv"), first.as_bytes()), ("file", Some("b.csv"), second.as_bytes())]),
    );
    assert_eq!((status, body["error"]["field"].as_str()), (400, Some("file")), "{body}");
    let (status, body) = post_multipart(&s, &sniff, multipart(&[("file", Some("a.csv"), first.as_bytes())]));
    assert_eq!(status, 200, "{body}");
    assert_eq!(body["sniffed"]["header"][0], "time", "{body}");
    // One of each still lands whole: every row of the file read.
    let (status, body) = post_multipart(
        &s,
        &path,
        multipart(&[("mapping", None, mapping.as_bytes()), ("file", Some("a.csv"), first.as_bytes())]),
    );
    assert_eq!(status, 201, "{body}");
    assert_eq!(body["rows"].as_u64(), Some(first.lines().count() as u64 - 1), "{body}");
    assert_eq!(uploads_of(&s, audit), 1);
}

#[test]
fn probe_mapping_part_over_1_mib_gets_413() {
    let s = Server::start();
    let audit = s.audit_with_compressor("C1");
    let path = format!("/api/v1/audits/{audit}/uploads");
    let file = cycling_csv(2);
    // Just over the cap: a valid mapping padded with spaces to 1 MiB + 1 byte.
    let mapping = cycling_mapping().to_string();
    let mut padded = mapping.clone().into_bytes();
    padded.resize(1024 * 1024 + 1, b' ');
    let (status, body) = post_multipart(
        &s,
        &path,
        multipart(&[("mapping", None, &padded), ("file", Some("a.csv"), file.as_bytes())]),
    );
    assert_eq!(status, 413, "{body}");
    assert!(body["error"]["message"].as_str().unwrap().contains("mapping"), "{body}");
    // At the cap exactly it is read (and lands).
    padded.truncate(1024 * 1024);
    let (status, body) = post_multipart(
        &s,
        &path,
        multipart(&[("mapping", None, &padded), ("file", Some("a.csv"), file.as_bytes())]),
    );
    assert_eq!(status, 201, "{body}");

    // A 200 MB mapping part, streamed: before, read whole (411 MB peak); now 413 and the server's
    // peak RSS stays within 64 MB.
    let total_mapping: u64 = 200 * 1024 * 1024;
    let piece = vec![b'a'; 1024 * 1024];
    let open = multipart_part(BOUNDARY, "mapping", None);
    let close = format!("\r\n--{BOUNDARY}--\r\n");
    let len = open.len() as u64 + total_mapping + close.len() as u64;
    let pieces = std::iter::once(open.into_bytes())
        .chain((0..total_mapping / piece.len() as u64).map(|_| piece.clone()))
        .chain(std::iter::once(close.into_bytes()));
    let head = format!(
        "POST {path} HTTP/1.1\r\nHost: {}\r\nContent-Type: multipart/form-data; boundary={BOUNDARY}",
        s.base.trim_start_matches("http://")
    );
    let (status, _, text) = raw_request(&s, &head, len, pieces);
    assert_eq!(status, 413, "{text}");
    let peak = peak_rss_mb(&s);
    eprintln!("peak RSS after a 200 MB mapping part: {peak:.1} MB");
    assert!(peak <= 64.0, "peak RSS {peak:.1} MB");
    // The server still serves.
    assert_eq!(s.get("/api/v1/audits").status, 200);
}

/// A GET with the given `Host`; returns status, headers and body.
fn get_with_host(s: &Server, path: &str, host: &str) -> (u16, String, String) {
    raw_request(s, &format!("GET {path} HTTP/1.1\r\nHost: {host}"), 0, std::iter::empty())
}

#[test]
fn probe_foreign_host_header_is_refused_421() {
    let s = Server::start();
    let port = s.base.rsplit(':').next().unwrap().to_string();
    // DNS rebinding: a foreign name for this loopback server. Before: 200 and 201. Now: 421.
    let (status, headers, body) = get_with_host(&s, "/api/v1/audits", "evil.example");
    assert_eq!(status, 421, "{body}");
    assert!(headers.contains("content-type: application/json"), "{headers}");
    let v: Value = serde_json::from_str(&body).expect("JSON");
    assert!(v["error"]["message"].as_str().unwrap().contains("--allow-host"), "{v}");
    let (status, headers, _) = get_with_host(&s, "/", &format!("evil.example:{port}"));
    assert_eq!(status, 421);
    assert!(headers.contains("content-type: text/plain"), "{headers}");
    let (status, _, _) = get_with_host(&s, "/static/css/app.css", "localhost.evil.example");
    assert_eq!(status, 421, "static files too");
    let create = "{\"name\": \"planted\"}";
    let (status, _, body) = raw_request(
        &s,
        "POST /api/v1/audits HTTP/1.1\r\nHost: evil.example\r\nContent-Type: application/json",
        create.len() as u64,
        std::iter::once(create.as_bytes().to_vec()),
    );
    assert_eq!(status, 421, "{body}");
    assert_eq!(s.get("/api/v1/audits").json()["audits"].as_array().map(Vec::len), Some(0));
    // No Host at all (HTTP/1.0): refused too.
    let (status, _, _) = raw_request(&s, "GET /api/v1/audits HTTP/1.0", 0, std::iter::empty());
    assert_eq!(status, 421);
    // This server's own names pass.
    for host in [format!("127.0.0.1:{port}"), "127.0.0.1".into(), format!("localhost:{port}"), "[::1]".into()]
    {
        let (status, _, body) = get_with_host(&s, "/api/v1/audits", &host);
        assert_eq!(status, 200, "{host}: {body}");
    }
    drop(s);
    // A name given with --allow-host passes; others still do not.
    let s = Server::start_with(&["serve"], &["--allow-host", "audit-pc.plant.local"]);
    assert_eq!(get_with_host(&s, "/api/v1/audits", "audit-pc.plant.local").0, 200);
    assert_eq!(get_with_host(&s, "/", "Audit-PC.plant.local:8080").0, 200);
    assert_eq!(get_with_host(&s, "/api/v1/audits", "evil.example").0, 421);
}

fn login(s: &Server, token: &str) -> (u16, String, String) {
    let form = format!("token={token}");
    raw_request(
        s,
        &format!(
            "POST /login HTTP/1.1\r\nHost: {}\r\nContent-Type: application/x-www-form-urlencoded",
            s.base.trim_start_matches("http://")
        ),
        form.len() as u64,
        std::iter::once(form.into_bytes()),
    )
}

fn session_cookie(headers: &str) -> String {
    let line = headers.lines().find(|l| l.starts_with("set-cookie:")).expect("set-cookie");
    line.trim_start_matches("set-cookie:").trim().split(';').next().unwrap().to_string()
}

#[test]
fn probe_sign_in_slows_down_after_failures() {
    let s = Server::start_with(&["serve"], &["--token", "plant-floor-7"]);
    let host = s.base.trim_start_matches("http://").to_string();
    // Two sign-ins get two different random session ids (before: one fixed hash of the token), each
    // opening the pages, each with an expiry.
    let (status, h1, _) = login(&s, "plant-floor-7");
    assert_eq!(status, 303);
    assert!(h1.contains("max-age=43200") && h1.contains("httponly"), "{h1}");
    let (_, h2, _) = login(&s, "plant-floor-7");
    let (c1, c2) = (session_cookie(&h1), session_cookie(&h2));
    assert_ne!(c1, c2);
    assert_eq!(c1.len(), "airledger_session=".len() + 64, "{c1}");
    for c in [&c1, &c2] {
        let (status, _, _) =
            raw_request(&s, &format!("GET / HTTP/1.1\r\nHost: {host}\r\nCookie: {c}"), 0, std::iter::empty());
        assert_eq!(status, 200);
    }
    // A made-up session id does not open anything, and is not counted as a failure.
    let forged = format!("airledger_session={}", "ab".repeat(32));
    for _ in 0..6 {
        let (status, _, _) = raw_request(
            &s,
            &format!("GET / HTTP/1.1\r\nHost: {host}\r\nCookie: {forged}"),
            0,
            std::iter::empty(),
        );
        assert_eq!(status, 401);
    }
    // Five wrong tokens: 401 each. Before: no limit. Now the sixth try, even with the right token,
    // is 429 with Retry-After, on the sign-in form and with a bearer token alike.
    for i in 0..5 {
        let (status, _, _) = login(&s, &format!("guess-{i}"));
        assert_eq!(status, 401, "try {i}");
    }
    let (status, headers, body) = login(&s, "plant-floor-7");
    assert_eq!(status, 429, "{body}");
    let retry: u64 = headers
        .lines()
        .find_map(|l| l.strip_prefix("retry-after:"))
        .and_then(|v| v.trim().parse().ok())
        .expect("Retry-After");
    assert!((1..=60).contains(&retry), "{retry}");
    let (status, _, body) = raw_request(
        &s,
        &format!("GET /api/v1/audits HTTP/1.1\r\nHost: {host}\r\nAuthorization: Bearer plant-floor-8"),
        0,
        std::iter::empty(),
    );
    assert_eq!(status, 429, "{body}");
    let v: Value = serde_json::from_str(&body).expect("JSON");
    assert!(v["error"]["message"].as_str().unwrap().contains("try again"), "{v}");
    // A session signed in before stays open.
    let (status, _, _) =
        raw_request(&s, &format!("GET / HTTP/1.1\r\nHost: {host}\r\nCookie: {c1}"), 0, std::iter::empty());
    assert_eq!(status, 200);
}

#[test]
fn probe_unparseable_path_id_gets_json_400() {
    let s = Server::start();
    let audit = s.audit_with_compressor("C1");
    // Before: axum's plain-text 400. Now: the JSON shape naming the route's parameter.
    for bad in ["1e3", "0x10", "99999999999999999999", "1.0", "%20"] {
        let r = s.get(&format!("/api/v1/audits/{bad}"));
        assert_eq!(r.status, 400, "{bad}: {}", r.text);
        assert!(r.content_type.starts_with("application/json"), "{bad}: {}", r.content_type);
        assert_eq!(r.json()["error"]["field"], "id", "{bad}: {}", r.text);
        let r = s.get(&format!("/api/v1/audits/{bad}/summary"));
        assert_eq!((r.status, r.json()["error"]["field"].as_str()), (400, Some("id")), "{bad}");
    }
    let r = s.put_json(&format!("/api/v1/audits/{audit}/compressors/0x10"), &json!({}));
    assert_eq!((r.status, r.json()["error"]["field"].as_str()), (400, Some("cid")), "{}", r.text);
    let r = send_delete(&s, &format!("/api/v1/audits/{audit}/field-tests/1e3"));
    assert_eq!((r.0, r.1["error"]["field"].as_str()), (400, Some("tid")), "{}", r.1);
    // A whole number that names nothing stays a 404.
    assert_eq!(s.get("/api/v1/audits/9223372036854775807").status, 404);
}

fn send_delete(s: &Server, path: &str) -> (u16, Value) {
    let host = s.base.trim_start_matches("http://");
    let (status, _, body) =
        raw_request(s, &format!("DELETE {path} HTTP/1.1\r\nHost: {host}"), 0, std::iter::empty());
    (status, serde_json::from_str(&body).unwrap_or_else(|e| panic!("not JSON ({e}): {body}")))
}

#[test]
fn probe_oversize_json_body_gets_413() {
    let s = Server::start();
    // A 5 MB JSON body: before 400; now 413 in the JSON shape, and nothing stored.
    let body = json!({"name": "x".repeat(5 * 1024 * 1024)});
    let r = s.post_json("/api/v1/audits", &body);
    assert_eq!(r.status, 413, "{}", &r.text[..r.text.len().min(300)]);
    assert!(r.json()["error"]["message"].as_str().unwrap().contains("KiB"), "{}", r.text);
    assert_eq!(s.get("/api/v1/audits").json()["audits"].as_array().map(Vec::len), Some(0));
}

#[test]
fn probe_json_type_error_names_the_field() {
    let s = Server::start();
    // Before: no field, or the value in backticks taken for one. Now: the field serde reports.
    let r = s.post_json("/api/v1/audits", &json!({"name": 5}));
    assert_eq!((r.status, r.json()["error"]["field"].as_str()), (422, Some("name")), "{}", r.text);
    let r = s.post_json("/api/v1/audits", &json!({"name": "a", "site": {"altitude_m": "high"}}));
    assert_eq!((r.status, r.json()["error"]["field"].as_str()), (422, Some("site.altitude_m")), "{}", r.text);
    let r = s.post_json("/api/v1/audits", &json!({"site": {}}));
    assert_eq!((r.status, r.json()["error"]["field"].as_str()), (422, Some("name")), "{}", r.text);
}
