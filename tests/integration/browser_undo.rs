//! Issue 16 in the browser: a technician corrects a file imported with the wrong unit and deletes
//! another through the audit page, and the audit's figures follow each step. The figures are
//! compared with twin audits built right from the start over the API.

use super::*;

/// C1 cycling at 10 s from `start` for 3 h: `loaded_kw` 4 readings in 20, `unloaded_kw` otherwise.
fn plant_csv(start: i64, loaded_kw: f64, unloaded_kw: f64) -> String {
    let mut s = String::from("time,C1 kW,header bar,flow m3/min\n");
    for i in 0..(3 * 360) {
        let loaded = (i % 20) < 4;
        s.push_str(&format!(
            "{},{},{:.2},{:.2}\n",
            jiff_like_rfc3339(start + i * 10),
            if loaded { loaded_kw } else { unloaded_kw },
            if loaded { 7.2 } else { 6.9 },
            if loaded { 9.5 } else { 1.9 }
        ));
    }
    s
}

fn mapping(unit: &str) -> Value {
    let mut m = cycling_mapping();
    m["columns"][0]["unit"] = json!(unit);
    m
}

fn mean_power_kw(s: &Server, audit: i64) -> f64 {
    s.get(&format!("/api/v1/audits/{audit}/summary")).json()["system"]["mean_power_kw"]
        .as_f64()
        .expect("mean power")
}

fn upload(s: &Server, audit: i64, name: &str, csv: &str, unit: &str) -> i64 {
    let r = s.upload(audit, name, csv.as_bytes(), &mapping(unit), "");
    assert_eq!(r.status, 201, "{name}: {}", r.text);
    r.json()["upload_id"].as_i64().unwrap()
}

/// Wait until the browser shows `path` fully loaded.
fn wait_for_path(b: &Browser, path: &str) {
    let ok = wait_until(Duration::from_secs(30), || {
        b.js("return location.pathname + '|' + document.readyState", json!([]))
            == json!(format!("{path}|complete"))
    });
    assert!(ok, "the browser did not reach {path}: it shows {}", b.js_str("return location.href"));
    b.settle();
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn a_file_is_remapped_and_another_deleted_through_the_audit_page() {
    // Arrange: day 1 logged in kW but imported as W (mean power a thousand times too low), day 2
    // right; twins: both days right, and day 1 alone right.
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let both_right = s.audit_with_compressor("C1");
    let day1_right = s.audit_with_compressor("C1");
    let day1 = plant_csv(1_777_881_600, 56.0, 14.0);
    let day2 = plant_csv(1_777_968_000, 70.0, 20.0);
    let wrong = upload(&s, id, "day1.csv", &day1, "W");
    let second = upload(&s, id, "day2.csv", &day2, "kW");
    upload(&s, both_right, "day1.csv", &day1, "kW");
    upload(&s, both_right, "day2.csv", &day2, "kW");
    upload(&s, day1_right, "day1.csv", &day1, "kW");
    let before = mean_power_kw(&s, id);
    let want_both = mean_power_kw(&s, both_right);
    assert!((before - want_both).abs() > 1.0, "the wrong unit shows: {before} against {want_both}");

    let b = Browser::start();
    b.set_window(1366, 900);
    let audit_path = format!("/audits/{id}");
    b.goto(&s.url(&audit_path));

    // Act 1: "correct the mapping" on day 1, kW chosen, read again.
    b.js(&format!("document.querySelector('tr[data-upload=\"{wrong}\"] .remap-link').click()"), json!([]));
    wait_for_path(&b, &format!("/audits/{id}/uploads/{wrong}/remap"));
    let shown = b.js_str(
        "const s = document.querySelector('select[name=col0_unit]'); return s.options[s.selectedIndex].text",
    );
    assert_eq!(shown, "W", "the form shows the unit the file was read with");
    // Each row offers only its quantity's units (a walk found a power column offered psig, then
    // refused on saving), and a pressure column belongs to no compressor.
    let offered = |col: usize| {
        b.js(
            &format!(
                "return [...document.querySelectorAll('select[name=col{col}_unit] option')]\
                 .filter(o => !o.disabled && !o.parentElement.hidden).map(o => o.value)"
            ),
            json!([]),
        )
    };
    let power_units = offered(0);
    let pressure_units = offered(1);
    assert!(power_units.as_array().unwrap().contains(&json!("kW")), "{power_units}");
    assert!(!power_units.as_array().unwrap().contains(&json!("psig")), "{power_units}");
    assert!(pressure_units.as_array().unwrap().contains(&json!("psig")), "{pressure_units}");
    assert!(!pressure_units.as_array().unwrap().contains(&json!("kW")), "{pressure_units}");
    assert_eq!(b.js_str("return document.querySelector('select[name=col1_compressor]').value"), "");
    b.screenshot("undo-remap-form");
    b.js("document.querySelector('select[name=col0_unit]').value = 'kW'; document.getElementById('remap-submit').click()", json!([]));
    wait_for_path(&b, &audit_path);

    // Assert 1: one import of day 1 again, now read in kW: the figures of the twin built right.
    let rows = b.js_f64("return document.querySelectorAll('tr[data-upload]').length");
    assert_eq!(rows, 2.0, "two files listed after the remap");
    let after_remap = mean_power_kw(&s, id);
    assert!((after_remap - want_both).abs() <= 1e-9 * want_both, "{after_remap} against {want_both}");

    // Act 2: delete day 2 through its confirmation page.
    b.js(&format!("document.querySelector('tr[data-upload=\"{second}\"] .delete-link').click()"), json!([]));
    wait_for_path(&b, &format!("/audits/{id}/uploads/{second}/delete"));
    let question = b.js_str("return document.getElementById('confirm').innerText");
    assert!(question.contains("day2.csv"), "the confirmation names the file: {question}");
    b.screenshot("undo-delete-confirm");
    b.js("document.getElementById('confirm-delete').click()", json!([]));
    wait_for_path(&b, &audit_path);

    // Assert 2: day 1 alone is left, with the figures of the twin holding day 1 only.
    let files = b.js_str("return [...document.querySelectorAll('tr[data-upload] td:first-child')].map(t => t.innerText).join(',')");
    assert_eq!(files, "day1.csv");
    let want_day1 = mean_power_kw(&s, day1_right);
    let left = mean_power_kw(&s, id);
    assert!((left - want_day1).abs() <= 1e-9 * want_day1, "{left} against {want_day1}");
    // The report's page shows the figure that followed.
    b.goto(&s.url(&format!("/audits/{id}/report")));
    // Numbers are bound to their units by a no-break space on the page.
    let report = b.js_str("return document.body.innerText").replace('\u{a0}', " ");
    let kw = format!("{want_day1:.1} kW");
    assert!(report.contains(&kw), "the report shows {kw}:\n{}", &report[..report.len().min(2000)]);
    b.screenshot("undo-report-after");
    let severe = b.severe_logs(&audit_path);
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}
