//! Issue 16's walk (walk16f) in the browser: the upload form's current details start from the
//! audit's own voltage and say they are assumptions, and a refusal ends in words, not a code.

use super::*;

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_current_details_follow_a_us_audit_and_a_refusal_names_no_code() {
    let s = Server::start();
    let id = s.us_audit_in_chicago("Current plant");
    let mut csv = String::from("time,C1 A\n");
    for i in 0..120 {
        csv.push_str(&format!("{},{}\n", jiff_like_rfc3339(1_777_881_600 + i * 60), 60 + i % 7));
    }
    let b = Browser::start();
    b.set_window(1366, 900);
    b.goto(&s.url(&format!("/audits/{id}/upload")));
    b.js(
        "const dt = new DataTransfer(); dt.items.add(new File([arguments[0]], 'amps.csv', {type: 'text/csv'}));
         const input = document.getElementById('file-input'); input.files = dt.files;
         input.dispatchEvent(new Event('change'));",
        json!([csv]),
    );
    let row = "document.querySelector('#columns-table tr[data-column=\"C1 A\"]')";
    assert!(
        wait_until(Duration::from_secs(15), || b.js(&format!("return !!{row}"), json!([])) == json!(true)),
        "the mapping did not appear"
    );
    // Mapped as current: 460 V in a US audit (common practice for US industrial three-phase; the
    // walk found 400 V), said beside the fields as an assumption to check on the nameplate.
    b.js(
        &format!(
            "const q = {row}.querySelector('.q'); q.value = 'current'; q.dispatchEvent(new Event('change'));"
        ),
        json!([]),
    );
    assert_eq!(b.js_str(&format!("return {row}.querySelector('.volts').value")), "460");
    assert_eq!(b.js_str(&format!("return {row}.querySelector('.pf').value")), "0.85");
    let note = b.js_str(&format!("return {row}.querySelector('.current-assumed').textContent"));
    assert!(
        note.starts_with("Assumed, not read from the file: 460 V") && note.contains("nameplate"),
        "{note}"
    );
    // Nothing mapped: the refusal says so in words, without "(columns)" after it.
    b.js(
        &format!("const q = {row}.querySelector('.q'); q.value = ''; q.dispatchEvent(new Event('change'));"),
        json!([]),
    );
    b.js("document.getElementById('import-button').click()", json!([]));
    let status = || b.js_str("return document.getElementById('import-status').textContent");
    assert!(wait_until(Duration::from_secs(15), || status().starts_with("Not imported")), "{}", status());
    let st = status();
    assert!(st.contains("the mapping names no columns to read"), "{st}");
    assert!(!st.contains("(columns)"), "{st}");
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_decay_table_names_the_zone_as_every_page_does() {
    // A walk saw "Sun 15 Mar 2026 10:00 GMT+1" in the decay table, "CET" everywhere else.
    let s = Server::demo();
    let b = Browser::start();
    b.goto(&s.url("/audits/1/tests"));
    let cells =
        || b.js_str("const t = document.querySelector('#decay-events table'); return t ? t.textContent : ''");
    assert!(wait_until(Duration::from_secs(30), || !cells().is_empty()), "no decay table");
    let text = cells();
    assert!(text.contains(" CET") || text.contains(" CEST"), "{text}");
    assert!(!text.contains("GMT"), "{text}");
}
