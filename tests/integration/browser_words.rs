//! The upload page's words agree with the server's: a timestamp column whose name says UTC is read
//! in UTC (the note says why), and the import's result names the zone as the file table does
//! ("CET", never the browser's "GMT+1").

use super::*;

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn a_utc_time_column_is_read_in_utc_and_the_result_names_the_sites_zone() {
    let s = Server::start();
    let r = s
        .post_json("/api/v1/audits", &json!({"name": "Berlin plant", "site": {"timezone": "Europe/Berlin"}}));
    assert_eq!(r.status, 201, "{}", r.text);
    let id = r.json()["id"].as_i64().unwrap();
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/compressors"),
        &json!({"tag": "C1", "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                "rated_power_kw": 55, "rated_flow_m3_min": 9.5, "rated_pressure_bar_g": 7.5}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    // 2026-01-12T06:00:00Z, 07:00 CET in Berlin (UTC+1 in winter, IANA tz database); 10 s rows
    // for an hour, the times written without a zone under a header that says UTC.
    let mut csv = String::from("TimeUTC,C1 kW,header bar,flow m3/min\n");
    for i in 0..360 {
        let t = jiff_like_rfc3339(1_768_197_600 + i * 10).replace('T', " ").replace('Z', "");
        csv.push_str(&format!("{t},40,6.9,3.0\n"));
    }
    let b = Browser::start();
    b.set_window(1366, 900);
    b.goto(&s.url(&format!("/audits/{id}/upload")));
    b.js(
        "const dt = new DataTransfer(); dt.items.add(new File([arguments[0]], 'utc.csv', {type: 'text/csv'}));
         const input = document.getElementById('file-input'); input.files = dt.files;
         input.dispatchEvent(new Event('change'));",
        json!([csv]),
    );
    assert!(
        wait_until(Duration::from_secs(10), || b
            .js("return !!document.querySelector('#columns-table tr[data-column=\"C1 kW\"]')", json!([]))
            == true),
        "no mapping table"
    );
    assert_eq!(b.js_str("return document.getElementById('m-ts-zone').value"), "UTC");
    let note = b.js_str("return document.getElementById('zone-note').textContent");
    assert!(note.contains("\u{201c}TimeUTC\u{201d} says UTC") && note.contains("Europe/Berlin"), "{note}");
    b.js("document.getElementById('import-button').click()", json!([]));
    let result = || b.js_str("return document.getElementById('result').textContent");
    assert!(
        wait_until(Duration::from_secs(30), || result().contains("Interval")),
        "no result: {}",
        b.js_str("return document.getElementById('import-status').textContent")
    );
    // The first row, 06:00 UTC, is 07:00 CET; the interval is 10 s.
    let r = result();
    assert!(r.contains("Mon 12 Jan 2026 07:00 CET"), "{r}");
    assert!(!r.contains("GMT"), "{r}");
    assert!(r.contains("Interval10 s"), "{r}");
}

/// Issue 16: a new audit's time zone is the browser's own when the list of IANA names offers it
/// (Chromium told its zone through the DevTools protocol's `Emulation.setTimezoneOverride`); the
/// page as served, without scripts, says UTC (`correct16`).
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn a_new_audits_zone_is_the_browsers_own() {
    let s = Server::start();
    let b = Browser::start();
    let zone_of = |tz: &str| {
        b.post(
            "/goog/cdp/execute",
            &json!({"cmd": "Emulation.setTimezoneOverride", "params": {"timezoneId": tz}}),
        );
        b.goto(&s.url("/"));
        let seen = b.js_str("return Intl.DateTimeFormat().resolvedOptions().timeZone");
        (seen, b.js_str("return document.querySelector('#new-audit [name=timezone]').value"))
    };
    let (seen, value) = zone_of("Asia/Tokyo");
    assert_eq!(seen, "Asia/Tokyo", "the browser was not told its zone");
    assert_eq!(value, "Asia/Tokyo");
    // Tokyo keeps SI and EUR.
    let form = |q: &str| b.js_str(&format!("return document.querySelector('#new-audit {q}').value"));
    assert_eq!((form("[name=display_units]"), form("[name=currency]")), ("si".into(), "EUR".into()));
    let (_, value) = zone_of("America/Chicago");
    assert_eq!(value, "America/Chicago");
    // A zone of the United States draws the form in US customary units and USD: the inlet
    // temperature's 20 °C reads 68 °F (9/5 × 20 + 32, NIST SP 811).
    assert_eq!((form("[name=display_units]"), form("[name=currency]")), ("us".into(), "USD".into()));
    assert_eq!(form("[name=inlet_temperature_c]"), "68");
    assert_eq!(form("[name=entry_units]"), "us");
    // Created with it, the audit keeps the zone (the form posts as typed).
    b.js(
        "document.querySelector('#new-audit [name=name]').value = 'zone plant'; \
          document.querySelector('#new-audit').submit();",
        json!([]),
    );
    b.settle();
    let audits = s.get("/api/v1/audits").json();
    let id = audits["audits"][0]["id"].as_i64().expect("the audit was created");
    assert_eq!(s.get(&format!("/api/v1/audits/{id}")).json()["site"]["timezone"], "America/Chicago");
    let severe = b.severe_logs("new audit");
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}
