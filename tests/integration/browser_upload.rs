//! Issue 16, the upload page walked again: its list of the audit's files carries the same actions
//! as the audit page's (correct the mapping, delete with confirmation, each coming back to the
//! upload page) and shows a file imported through the page at once, without a reload; the
//! mapping's notes, when a remembered mapping of the layout fills the form, say so and agree with
//! the form.

use super::*;

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_upload_pages_file_list_follows_an_import_and_carries_remap_and_delete() {
    // Arrange: the layout imported once over the API with its pressure column read as psig (not
    // what the header's "bar" would suggest), so the audit remembers that mapping.
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let mut mapping = cycling_mapping();
    mapping["columns"][1]["unit"] = json!("psig");
    let first = s.upload(id, "day1.csv", cycling_csv_at(1_777_881_600, 1).as_bytes(), &mapping, "");
    assert_eq!(first.status, 201, "{}", first.text);
    let first_id = first.json()["upload_id"].as_i64().unwrap();

    let b = Browser::start();
    b.set_window(1366, 900);
    let page = format!("/audits/{id}/upload");
    b.goto(&s.url(&page));
    assert_eq!(b.js_f64("return document.querySelectorAll('#files tr[data-upload]').length"), 1.0);
    // Act 1: the same layout, a later day, chosen on the page.
    b.js("window.stillTheSamePage = true", json!([]));
    b.js(
        "const dt = new DataTransfer(); dt.items.add(new File([arguments[0]], 'day2.csv', {type: 'text/csv'}));
         const input = document.getElementById('file-input'); input.files = dt.files;
         input.dispatchEvent(new Event('change'));",
        json!([cycling_csv_at(1_777_968_000, 1)]),
    );
    let row = "document.querySelector('#columns-table tr[data-column=\"header bar\"]')";
    assert!(
        wait_until(Duration::from_secs(15), || b.js(&format!("return !!{row}"), json!([])) == json!(true)),
        "the mapping did not appear: {}",
        b.js_str("return document.getElementById('choose-status').textContent")
    );
    // Assert 1 (item 5): the form holds the remembered unit, and the note says where it came from
    // and names that same unit, never the header's guess.
    let unit = b.js_str(&format!(
        "const s = {row}.querySelector('.u'); return s.options[s.selectedIndex].textContent"
    ));
    let note = b.js_str(&format!("return {row}.querySelector('td.hint').textContent"));
    assert!(unit.contains("psi"), "the remembered unit is filled in: {unit}");
    assert!(note.starts_with("From the remembered mapping of this layout"), "{note}");
    assert!(
        note.contains(&format!("pressure in {unit}")),
        "the note names the unit the form shows ({unit}): {note}"
    );
    assert!(!note.contains("bar"), "the note must not contradict the form: {note}");
    // With one compressor on record, its power row takes it, and the pressure row shows the dash:
    // a walk found "C1" shown on every row, pressure and unread columns too.
    let comp = |column: &str| {
        b.js_str(&format!(
            "return document.querySelector('#columns-table tr[data-column=\"{column}\"] .c').value"
        ))
    };
    assert_eq!(comp("C1 kW"), "C1");
    assert_eq!(comp("header bar"), "", "a pressure column belongs to no compressor");
    b.screenshot("upload-remembered-notes");

    // Act 2: import through the page.
    b.js("document.getElementById('import-button').click()", json!([]));
    let listed = || b.js_f64("return document.querySelectorAll('#files tr[data-upload]').length");
    assert!(
        wait_until(Duration::from_secs(30), || listed() == 2.0),
        "the list still shows {} files; status: {}",
        listed(),
        b.js_str("return document.getElementById('import-status').textContent")
    );
    // Assert 2 (item 1): listed at once, on the same page (no reload), with both actions.
    assert_eq!(
        b.js("return window.stillTheSamePage === true", json!([])),
        json!(true),
        "the page was reloaded"
    );
    let names = b.js_str("return [...document.querySelectorAll('#files tr[data-upload] td:first-child')].map(t => t.textContent).join(',')");
    assert!(names.contains("day1.csv") && names.contains("day2.csv"), "{names}");
    let links = b.js(
        "return [...document.querySelectorAll('#files tr[data-upload]')].map(tr => [
            tr.dataset.upload, tr.querySelector('.remap-link')?.getAttribute('href'), tr.querySelector('.delete-link')?.getAttribute('href')])",
        json!([]),
    );
    for l in links.as_array().unwrap() {
        let uid = l[0].as_str().unwrap();
        assert_eq!(l[1], json!(format!("/audits/{id}/uploads/{uid}/remap?from=upload")), "{links}");
        assert_eq!(l[2], json!(format!("/audits/{id}/uploads/{uid}/delete?from=upload")), "{links}");
    }
    b.screenshot("upload-list-after-import");

    // Act 3: delete the first file from this list, through its confirmation page.
    b.js(
        &format!("document.querySelector('#files tr[data-upload=\"{first_id}\"] .delete-link').click()"),
        json!([]),
    );
    let at = |path: &str| {
        wait_until(Duration::from_secs(30), || {
            b.js("return location.pathname + '|' + document.readyState", json!([]))
                == json!(format!("{path}|complete"))
        })
    };
    assert!(at(&format!("/audits/{id}/uploads/{first_id}/delete")), "{}", b.js_str("return location.href"));
    assert!(b.js_str("return document.getElementById('confirm').innerText").contains("day1.csv"));
    assert_eq!(b.js_str("return document.getElementById('confirm-keep').getAttribute('href')"), page);
    b.js("document.getElementById('confirm-delete').click()", json!([]));
    // Assert 3: back on the upload page, the file gone, and gone from the audit.
    assert!(at(&page), "not back on the upload page: {}", b.js_str("return location.href"));
    b.settle();
    let names = b.js_str("return [...document.querySelectorAll('#files tr[data-upload] td:first-child')].map(t => t.textContent).join(',')");
    assert_eq!(names, "day2.csv");
    let uploads = s.get(&format!("/api/v1/audits/{id}/uploads")).json();
    assert_eq!(uploads["uploads"].as_array().map(|a| a.len()), Some(1), "{uploads}");
    let severe = b.severe_logs(&page);
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_one_compressor_goes_to_the_first_power_column_only() {
    // Two power columns in a file of an audit with one compressor: giving both to it makes the
    // same channel twice, which the import refuses ("two columns map to the same channel"), as a
    // walk found. The first takes it, the second shows the dash for the technician to choose.
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let mut csv = String::from("time,planned kW,actual kW\n");
    for i in 0..120 {
        csv.push_str(&format!("{},30.0,12.5\n", jiff_like_rfc3339(1_777_881_600 + i * 60)));
    }
    let b = Browser::start();
    b.set_window(1366, 900);
    b.goto(&s.url(&format!("/audits/{id}/upload")));
    b.js(
        "const dt = new DataTransfer(); dt.items.add(new File([arguments[0]], 'two-meters.csv', {type: 'text/csv'}));
         const input = document.getElementById('file-input'); input.files = dt.files;
         input.dispatchEvent(new Event('change'));",
        json!([csv]),
    );
    let row = |c: &str| format!("document.querySelector('#columns-table tr[data-column=\"{c}\"]')");
    assert!(
        wait_until(Duration::from_secs(15), || b.js(&format!("return !!{}", row("actual kW")), json!([]))
            == json!(true)),
        "the mapping did not appear"
    );
    let q = |c: &str| b.js_str(&format!("return {}.querySelector('.q').value", row(c)));
    let comp = |c: &str| b.js_str(&format!("return {}.querySelector('.c').value", row(c)));
    assert_eq!((q("planned kW"), q("actual kW")), ("power".to_string(), "power".to_string()), "both power");
    assert_eq!(comp("planned kW"), "C1");
    assert_eq!(comp("actual kW"), "", "the second power column is not given the same machine");
}
