//! Issue 16 in the browser: with US customary chosen, a bleed-down typed in psig and US gal, a
//! what-if typed in psig and US gal, and an actual-volume flow column with its line in psig and °F
//! are stored as the SI the NIST SP 811 factors give; a recorded test opened to edit shows what was
//! typed and saving it unchanged moves nothing; the logger's zone defaults to the audit's.

use super::*;

// NIST SP 811 (2008), Appendix B.8/B.9, written here from the standard: 1 psi = 6 894.757 Pa
// (6 894.757 293 168 exactly), 1 US gal = 3.785 412 E-03 m³ (0.003 785 411 784 exactly),
// t/°C = (t/°F − 32)/1.8.
const BAR_PER_PSI: f64 = 6_894.757_293_168 / 1e5;
const M3_PER_GAL: f64 = 0.003_785_411_784;

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * b.abs().max(1.0)
}

fn wait_for_path(b: &Browser, path: &str) {
    let ok = wait_until(Duration::from_secs(30), || {
        b.js("return location.pathname + location.search", json!([])).as_str() == Some(path)
            && b.js("return document.readyState", json!([])) == "complete"
    });
    assert!(ok, "the page did not go to {path}");
    b.settle();
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn us_units_on_the_field_test_what_if_and_upload_forms() {
    let s = Server::start();
    let id = s.us_audit_in_chicago("US plant");
    let r = s.post_json(&format!("/api/v1/audits/{id}/receivers"), &json!({"name": "wet", "volume_m3": 2.0}));
    assert_eq!(r.status, 201, "{}", r.text);
    let r = s.upload(id, "plant.csv", cycling_csv(2).as_bytes(), &cycling_mapping(), "");
    assert_eq!(r.status, 201, "{}", r.text);
    let b = Browser::start();

    // A bleed-down in psig, seconds and US gal.
    b.goto(&s.url(&format!("/audits/{id}/tests")));
    b.js(
        "const f = document.querySelector('form[data-test-kind=bleed_down]');
         f.elements.volume_m3.value = '660'; f.elements.start_pressure_bar_g.value = '100';
         f.elements.end_pressure_bar_g.value = '90'; f.elements.duration_s.value = '60';
         f.requestSubmit();",
        json!([]),
    );
    assert!(
        wait_until(Duration::from_secs(20), || !s.get(&format!("/api/v1/audits/{id}")).json()["field_tests"]
            .as_array()
            .unwrap()
            .is_empty()),
        "the bleed-down was not recorded: {}",
        b.js_str("return document.getElementById('test-status').textContent")
    );
    let t = s.get(&format!("/api/v1/audits/{id}")).json()["field_tests"][0].clone();
    let input = t["input"].clone();
    assert!(close(input["start_pressure_bar_g"].as_f64().unwrap(), 100.0 * BAR_PER_PSI), "{input}");
    assert!(close(input["end_pressure_bar_g"].as_f64().unwrap(), 90.0 * BAR_PER_PSI), "{input}");
    assert!(close(input["volume_m3"].as_f64().unwrap(), 660.0 * M3_PER_GAL), "{input}");
    assert_eq!(input["duration_s"], 60.0);
    // Opened to edit: the form shows what was typed; saved unchanged, nothing moves.
    let tid = t["id"].as_i64().unwrap();
    b.goto(&s.url(&format!("/audits/{id}/tests?edit={tid}")));
    let shown = b.js_str(
        "const f = document.querySelector('form[data-test-kind=bleed_down]');
         return [f.elements.start_pressure_bar_g.value, f.elements.volume_m3.value].join(' ')",
    );
    assert_eq!(shown, "100 660");
    b.js("document.querySelector('form[data-test-kind=bleed_down]').requestSubmit()", json!([]));
    wait_for_path(&b, &format!("/audits/{id}/tests"));
    let again = s.get(&format!("/api/v1/audits/{id}")).json()["field_tests"][0]["input"].clone();
    assert_eq!(again, input, "an unchanged save moved the test");
    // Numbers are bound to their units by a no-break space on the page.
    let row =
        b.js_str("return document.querySelector('table.data tbody tr').innerText").replace('\u{a0}', " ");
    assert!(row.contains("100.0 psig") && row.contains("660 US gal"), "{row}");

    // A what-if in psig and US gal.
    b.goto(&s.url(&format!("/audits/{id}/scenarios")));
    b.js(
        "const f = document.getElementById('scenario-form');
         f.elements.name.value = 'lower and store'; f.elements.target_bar_g.value = '95';
         f.elements.add_storage_m3.value = '500'; f.requestSubmit();",
        json!([]),
    );
    let stored = wait_until(Duration::from_secs(60), || {
        s.get(&format!("/api/v1/audits/{id}/scenarios")).json()["scenarios"]
            .as_array()
            .is_some_and(|a| !a.is_empty())
    });
    assert!(
        stored,
        "no scenario: {}",
        b.js_str("return document.getElementById('scenario-status').textContent")
    );
    let sc = s.get(&format!("/api/v1/audits/{id}/scenarios")).json()["scenarios"][0].clone();
    let changes = sc["changes"].as_array().unwrap();
    let of = |op: &str| changes.iter().find(|c| c["op"] == op).cloned().unwrap_or_default();
    assert!(close(of("set_pressure")["target_bar_g"].as_f64().unwrap(), 95.0 * BAR_PER_PSI), "{sc}");
    assert!(close(of("add_storage")["volume_m3"].as_f64().unwrap(), 500.0 * M3_PER_GAL), "{sc}");

    // An actual-volume flow column: refused without its line, stored with it in SI.
    b.goto(&s.url(&format!("/audits/{id}/upload")));
    assert_eq!(b.js_str("return document.getElementById('m-ts-zone').value"), "America/Chicago");
    let csv = cycling_csv_at(1_777_881_600 + 86_400, 1).replace("flow m3/min", "flow acfm");
    b.js(
        "const dt = new DataTransfer(); dt.items.add(new File([arguments[0]], 'line.csv', {type: 'text/csv'}));
         const input = document.getElementById('file-input'); input.files = dt.files;
         input.dispatchEvent(new Event('change'));",
        json!([csv]),
    );
    assert!(
        wait_until(Duration::from_secs(10), || b.js(
            "return !!document.querySelector('#columns-table tr[data-column=\"flow acfm\"]')",
            json!([])
        ) == true),
        "no mapping table"
    );
    // The file logs UTC: say so, then choose acfm for the flow column.
    b.js(
        "document.getElementById('m-ts-zone').value = 'UTC';
         const tr = document.querySelector('#columns-table tr[data-column=\"flow acfm\"]');
         const q = tr.querySelector('.q'); q.value = 'flow'; q.dispatchEvent(new Event('change'));
         const u = tr.querySelector('.u'); u.value = 'acfm'; u.dispatchEvent(new Event('change'));",
        json!([]),
    );
    let label = b.js_str(
        "const tr = document.querySelector('#columns-table tr[data-column=\"flow acfm\"]');
         return tr.querySelector('.details').innerText",
    );
    assert!(label.contains("line pressure, psig") && label.contains("line temperature, °F"), "{label}");
    b.js("document.getElementById('import-button').click()", json!([]));
    let status = b.js_str("return document.getElementById('import-status').textContent");
    assert!(status.contains("logs actual volume"), "{status}");
    b.js(
        "const tr = document.querySelector('#columns-table tr[data-column=\"flow acfm\"]');
         tr.querySelector('.linep').value = '100'; tr.querySelector('.linet').value = '86';
         document.getElementById('import-button').click();",
        json!([]),
    );
    let done = wait_until(Duration::from_secs(30), || {
        b.js_str("return document.getElementById('import-status').textContent").starts_with("Imported")
    });
    assert!(
        done,
        "not imported: {}",
        b.js_str("return document.getElementById('import-status').textContent")
    );
    let uploads = s.get(&format!("/api/v1/audits/{id}")).json()["uploads"].clone();
    let m =
        uploads.as_array().unwrap().iter().find(|u| u["filename"] == "line.csv").unwrap()["mapping"].clone();
    let col = m["columns"].as_array().unwrap().iter().find(|c| c["column"] == "flow acfm").unwrap().clone();
    assert_eq!(col["unit"], "acfm");
    assert!(close(col["line"]["pressure_bar_g"].as_f64().unwrap(), 100.0 * BAR_PER_PSI), "{col}");
    // 86 °F = 30 °C (NIST SP 811 B.9).
    assert!(close(col["line"]["temperature_c"].as_f64().unwrap(), 30.0), "{col}");
    let result = b.js_str("return document.getElementById('result').innerText");
    assert!(
        result.contains("CDT") || result.contains("CST"),
        "the result's times name the site's zone: {result}"
    );
    let severe = b.severe_logs("forms in US units");
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}

/// The printed findings (Chromium's PDF, read with `pdftotext -layout`): the site's name and the
/// page number on page 2, no table cell holding a unit alone (a number wrapped from its unit), and
/// the measures not pushed to a page of their own after a mostly blank one.
#[test]
#[cfg_attr(
    not(any(all(has_browser, has_pdftools), ci)),
    ignore = "needs Debian's chromium, chromium-driver and poppler-utils: apt-get install chromium chromium-driver poppler-utils"
)]
fn printed_findings_carry_the_site_and_page_numbers_and_keep_numbers_with_units() {
    let server = Server::demo();
    let site = server.get("/api/v1/audits/1").json()["name"].as_str().unwrap().to_string();
    let dir = TempDir::new("pdf-units");
    let pdf = dir.path().join("findings.pdf");
    let profile = TempDir::new("chromium-print-units");
    let out = Command::new(chromium())
        .args(QUIET_FLAGS)
        .arg(format!("--user-data-dir={}", profile.path().display()))
        .arg(format!("--print-to-pdf={}", pdf.display()))
        .arg("--no-pdf-header-footer")
        .arg(server.url("/audits/1/findings"))
        .output()
        .expect("run chromium --print-to-pdf");
    assert!(pdf.exists(), "chromium wrote no PDF: {}", String::from_utf8_lossy(&out.stderr));
    let p = pdf.to_str().unwrap();
    let pages: usize = run_tool(pdfinfo(), &[p])
        .lines()
        .find_map(|l| l.strip_prefix("Pages:").map(|n| n.trim().parse().unwrap()))
        .expect("page count");
    assert!(pages >= 2, "{pages} pages");
    let page2 = run_tool(pdftotext(), &["-layout", "-f", "2", "-l", "2", p, "-"]);
    assert!(squash(&page2).contains(&squash(&site)), "no site name on page 2:\n{page2}");
    assert!(page2.contains(&format!("page 2 of {pages}")), "no page number on page 2:\n{page2}");
    let all = run_tool(pdftotext(), &["-layout", p, "-"]);
    let units =
        ["kWh", "MWh", "kW", "EUR", "bar(g)", "psig", "m³/min free air", "cfm free air", "%", "/h", "h"];
    for line in all.lines() {
        for cell in line.split("  ").map(str::trim).filter(|c| !c.is_empty()) {
            assert!(!units.contains(&cell), "a unit printed apart from its number: {line:?}");
        }
    }
    // The page before the measures is not left mostly blank: it holds at least 25 lines of text.
    let per_page: Vec<&str> = all.split('\u{c}').collect();
    let at = per_page
        .iter()
        .position(|t| t.contains("Recommendations: measures stacked"))
        .expect("measures printed");
    if at > 0 {
        let before = per_page[at - 1].lines().filter(|l| !l.trim().is_empty()).count();
        assert!(before >= 25, "page {} before the measures holds {before} lines", at);
    }
}

/// Issue 16: the report's weekday × hour map says its unit in its legend, in the reader's units:
/// the darkest cell's value is the summary's highest weekday-hour mean flow, turned into cfm with
/// NIST SP 811 (2008) B.8 (1 ft³ = 0.028 316 846 592 m³) for a US reader.
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_heat_maps_legend_names_its_unit() {
    let server = Server::demo();
    let sm = server.get("/api/v1/audits/1/summary").json();
    let max_m3_min = sm["demand"]["weekday_hour_mean_flow_m3_min"]
        .as_array()
        .unwrap()
        .iter()
        .flat_map(|row| row.as_array().unwrap().iter().filter_map(Value::as_f64))
        .fold(f64::NEG_INFINITY, f64::max);
    let b = Browser::start();
    for (units, max, unit) in
        [("si", max_m3_min, "m³/min free air"), ("us", max_m3_min / 0.028_316_846_592, "cfm free air")]
    {
        b.goto(&server.url(&format!("/audits/1/report?units={units}")));
        b.settle();
        let legend = b.js_str("return document.getElementById('chart-heatmap').dataset.legend || ''");
        assert_eq!(legend, format!("{max:.1} {unit}"), "{units}");
        let label = b.js_str("return document.getElementById('chart-heatmap').getAttribute('aria-label')");
        assert!(label.contains(&format!("to {max:.1} {unit} (darkest)")), "{units}: {label}");
    }
}
