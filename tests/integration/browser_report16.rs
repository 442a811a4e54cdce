//! Issue 16 on the report page in the browser: its Supply table fits a 1280 px window with a
//! variable-speed compressor's text in it, and the printed report carries the site's name and a
//! page number on its continuation pages (CSS print rules, read back from Chromium's PDF with
//! `pdftotext -layout`), with no number wrapped from its unit.

use super::*;

/// At 1280 x 900 the demo report's Supply table (the demo's C3 runs at variable speed, whose load
/// reads as a mean capacity share) is no wider than the box it sits in: nothing scrolls sideways
/// and every cell's text is still there.
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_supply_table_fits_1280_px() {
    let server = Server::demo();
    let b = Browser::start();
    b.set_window(1280, 900);
    b.goto(&server.url("/audits/1/report"));
    b.settle();
    let fit = b.js(
        "const t = document.querySelector('#supply table.data');
         return { table: t.scrollWidth, box: t.parentElement.clientWidth,
                  text: t.innerText, page: document.documentElement.scrollWidth };",
        json!([]),
    );
    let (table, bx) = (fit["table"].as_f64().unwrap(), fit["box"].as_f64().unwrap());
    eprintln!("the Supply table: {table} px wide in a {bx} px box at 1280 px");
    b.screenshot("report-supply-1280");
    let text = fit["text"].as_str().unwrap();
    // Nothing hidden: the variable-speed machine's load is still its mean capacity.
    assert!(text.contains("C3") && text.contains("mean capacity"), "the table lost text:\n{text}");
    assert!(table <= bx, "the Supply table is {table} px wide in a {bx} px box at 1280 px");
    let page = fit["page"].as_f64().unwrap();
    assert!(page <= 1280.0, "the page is {page} px wide at 1280 px");
}

/// The report's day charts tick at round times of the site's clock, not of UTC: a Berlin day
/// (CET = UTC+1 on 15 Mar 2026, CEST = UTC+2 from 02:00 on 29 Mar 2026, the last Sunday of March:
/// IANA tz database, EU summer-time rule) ticks at 00:00, 06:00, 12:00 and 18:00 local, where
/// multiples of six hours from the epoch fell at 01:00, 07:00... (walk16e, "Sun 15 Mar 01:00").
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn day_charts_tick_at_round_times_of_the_sites_clock() {
    let server = Server::demo();
    let b = Browser::start();
    b.goto(&server.url("/audits/1/report"));
    b.settle();
    // The chart's own afterBuildTicks on an axis 1000 px wide over one local day, read back as the
    // site's wall-clock hour and minute of each tick.
    let hours = |from: (i32, i32, i32, i32), to: (i32, i32, i32, i32)| {
        b.js(
            "const A = window.airledger, tz = 'Europe/Berlin';
             const [f, t] = arguments;
             const s = { min: Date.UTC(f[0], f[1] - 1, f[2], f[3]), max: Date.UTC(t[0], t[1] - 1, t[2], t[3]), width: 1000 };
             A.roundTicks(tz, 7)(s);
             return (s.ticks || []).map(k => { const w = A.wall(k.value, tz); return w.hour + ':' + w.minute; });",
            json!([[from.0, from.1, from.2, from.3], [to.0, to.1, to.2, to.3]]),
        )
    };
    // 15 Mar 2026 in Berlin: 14 Mar 23:00 UTC to 15 Mar 23:00 UTC.
    assert_eq!(
        hours((2026, 3, 14, 23), (2026, 3, 15, 23)),
        json!(["00:00", "06:00", "12:00", "18:00", "00:00"])
    );
    // 29 Mar 2026, a 23-hour day (28 Mar 23:00 UTC to 29 Mar 22:00 UTC): still round local hours.
    assert_eq!(
        hours((2026, 3, 28, 23), (2026, 3, 29, 22)),
        json!(["00:00", "06:00", "12:00", "18:00", "00:00"])
    );
}

/// The demo's report printed by Chromium (A4, its own --print-to-pdf, no header or footer of its
/// own): page 2 carries the site's name and "page 2 of n", and no table cell holds a unit alone
/// (a number wrapped from its unit), in SI and US customary units.
#[test]
#[cfg_attr(
    not(any(all(has_browser, has_pdftools), ci)),
    ignore = "needs Debian's chromium, chromium-driver and poppler-utils: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_printed_report_carries_the_site_and_page_numbers() {
    let server = Server::demo();
    let site = server.get("/api/v1/audits/1").json()["name"].as_str().unwrap().to_string();
    for units in ["si", "us"] {
        let dir = TempDir::new("pdf-report");
        let pdf = dir.path().join("report.pdf");
        let profile = TempDir::new("chromium-print-report");
        let out = Command::new(chromium())
            .args(QUIET_FLAGS)
            .arg(format!("--user-data-dir={}", profile.path().display()))
            .arg(format!("--print-to-pdf={}", pdf.display()))
            .arg("--no-pdf-header-footer")
            .arg(server.url(&format!("/audits/1/report?units={units}")))
            .output()
            .expect("run chromium --print-to-pdf");
        assert!(pdf.exists(), "chromium wrote no PDF: {}", String::from_utf8_lossy(&out.stderr));
        let _ = std::fs::copy(&pdf, artifacts_dir().join(format!("report-{units}.pdf")));
        let p = pdf.to_str().unwrap();
        let pages: usize = run_tool(pdfinfo(), &[p])
            .lines()
            .find_map(|l| l.strip_prefix("Pages:").map(|n| n.trim().parse().unwrap()))
            .expect("page count");
        assert!(pages >= 2, "{units}: {pages} pages");
        let page2 = run_tool(pdftotext(), &["-layout", "-f", "2", "-l", "2", p, "-"]);
        assert!(squash(&page2).contains(&squash(&site)), "{units}: no site name on page 2:\n{page2}");
        assert!(page2.contains(&format!("page 2 of {pages}")), "{units}: no page number on page 2:\n{page2}");
        let all = run_tool(pdftotext(), &["-layout", p, "-"]);
        let alone = [
            "kWh",
            "MWh",
            "kW",
            "EUR",
            "USD",
            "bar(g)",
            "psig",
            "m³/min free air",
            "cfm free air",
            "%",
            "/h",
            "h",
            "kWh/yr",
            "MWh/yr",
        ];
        for line in all.lines() {
            for cell in line.split("  ").map(str::trim).filter(|c| !c.is_empty()) {
                assert!(!alone.contains(&cell), "{units}: a unit printed apart from its number: {line:?}");
            }
        }
        let split = super::findings::numbers_split_from_units(&run_tool(pdftotext(), &[p, "-"]));
        assert!(split.is_empty(), "{units}: numbers split from their units:\n{}", split.join("\n"));
    }
}

/// Fills the form matched by `selector` with `values` (name -> text, as a person types them) and
/// submits it; then waits until `n` refusals stand in it and returns, for each, the field it
/// stands beside and its text, and the fields' values as they are left.
fn refused_in(b: &Browser, selector: &str, values: Value, n: usize) -> Value {
    b.js(
        "const [sel, values] = arguments; const f = document.querySelector(sel);
         for (const [k, v] of Object.entries(values)) f.elements.namedItem(k).value = v;
         f.requestSubmit(); return true;",
        json!([selector, values]),
    );
    let read = "const f = document.querySelector(arguments[0]);
        return { errors: [...f.querySelectorAll('.field-error')].map((e) => ({ field: e.previousElementSibling.name, text: e.textContent })),
                 values: Object.fromEntries([...f.elements].filter((e) => e.name).map((e) => [e.name, e.value])) };";
    let ok = wait_until(Duration::from_secs(20), || {
        b.js(read, json!([selector]))["errors"].as_array().is_some_and(|a| a.len() >= n)
    });
    let got = b.js(read, json!([selector]));
    assert!(ok, "{selector}: fewer than {n} refusals: {got}");
    got
}

/// Issue 16: the field-test and what-if forms of a US audit, posted with several wrong fields,
/// show every refusal at once, each beside its field and in psig, °F and US gal, and keep what was
/// typed (the forms post JSON and stay on the page).
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_field_test_and_what_if_forms_give_every_refusal_at_once() {
    let s = Server::start();
    let id = s.us_audit_in_chicago("US plant");
    let b = Browser::start();
    b.goto(&s.url(&format!("/audits/{id}/tests")));
    b.settle();
    // 800 and 900 psig are above the 725.1 psig (50 bar(g), quoted inward) limit, 0 s is under 1 s and 300 °F
    // above 248 °F (120 °C).
    let typed = json!({"start_pressure_bar_g": "800", "end_pressure_bar_g": "900", "duration_s": "0",
                       "air_temperature_c": "300", "volume_m3": "500"});
    let got = refused_in(&b, "form[data-test-kind=bleed_down]", typed.clone(), 4);
    let errors = got["errors"].as_array().unwrap();
    let beside: Vec<&str> = errors.iter().map(|e| e["field"].as_str().unwrap()).collect();
    assert_eq!(beside, ["start_pressure_bar_g", "end_pressure_bar_g", "duration_s", "air_temperature_c"]);
    let text = |i: usize| errors[i]["text"].as_str().unwrap().to_string();
    assert!(text(0).contains("800 psig") && text(1).contains("900 psig"), "{got}");
    assert!(text(3).contains("300 °F"), "{got}");
    assert!(!errors.iter().any(|e| e["text"].as_str().unwrap().contains("bar")), "{got}");
    for (k, v) in typed.as_object().unwrap() {
        assert_eq!(&got["values"][k], v, "{k} not kept as typed");
    }
    // The load/unload form: both times wrong at once.
    let got =
        refused_in(&b, "form[data-test-kind=load_unload]", json!({"loaded_s": "0", "unloaded_s": "-5"}), 2);
    let beside: Vec<&str> =
        got["errors"].as_array().unwrap().iter().map(|e| e["field"].as_str().unwrap()).collect();
    assert_eq!(beside, ["loaded_s", "unloaded_s"]);

    // The what-if form: no name, a target of 1 psig under the plant's low limit (94.27 psig),
    // 10 US gal taken away, leaks reduced by 2, a machine added with no power.
    b.goto(&s.url(&format!("/audits/{id}/scenarios")));
    b.settle();
    let typed = json!({"name": "", "target_bar_g": "1", "add_storage_m3": "-10", "reduce_leaks": "2",
                       "add_tag": "N1", "add_power": "0", "add_flow": "350", "add_pressure": "110"});
    let got = refused_in(&b, "#scenario-form", typed.clone(), 5);
    let errors = got["errors"].as_array().unwrap();
    let beside: Vec<&str> = errors.iter().map(|e| e["field"].as_str().unwrap()).collect();
    assert_eq!(beside, ["name", "target_bar_g", "add_storage_m3", "reduce_leaks", "add_power"], "{got}");
    let text = |i: usize| errors[i]["text"].as_str().unwrap().to_string();
    assert!(text(1).contains("94.3 psig") && text(1).contains("1 psig"), "{got}");
    assert!(text(2).contains("US gal"), "{got}");
    for (k, v) in typed.as_object().unwrap() {
        assert_eq!(&got["values"][k], v, "{k} not kept as typed");
    }
    // The refusals themselves are 422 replies, which the console lists as failed loads.
    let severe: Vec<String> =
        b.severe_logs("refused forms").into_iter().filter(|m| !m.contains("status of 422")).collect();
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}

/// Issue 16: the upload page's reply after an import through the page gives the data-quality
/// warnings in the reader's units: a negative gauge pressure logged in bar(g) reads, on a US
/// audit, in psig with its limit (-0.273216 bar = -4.0 psig, -0.1 bar = -1.5 psig, NIST SP 811
/// B.8), the logged value only beside its line.
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_upload_reply_gives_quality_warnings_in_psig() {
    let s = Server::start();
    let r = s.post_json(
        "/api/v1/audits",
        &json!({"name": "US plant", "site": {"altitude_m": 0, "display_units": "us", "timezone": "America/Chicago"}}),
    );
    let id = r.json()["id"].as_i64().unwrap();
    let file = |start: i64| {
        let mut s = String::from("time,header bar\n");
        for i in 0..360 {
            let p = if i % 30 == 5 {
                "-0.273216".to_string()
            } else {
                format!("{:.3}", 6.9 + (i % 7) as f64 * 0.01)
            };
            s.push_str(&format!("{},{p}\n", jiff_like_rfc3339(start + i * 10)));
        }
        s
    };
    // The layout imported once over the API, so that the page fills its mapping (bar(g)).
    let mapping = json!({"delimiter": ",", "decimal": ".", "header_line": 1,
        "timestamp": {"column": "time", "format": "rfc3339", "timezone": "UTC"},
        "columns": [{"column": "header bar", "quantity": "pressure", "unit": "bar_g"}]});
    let r = s.upload(id, "day1.csv", file(1_777_881_600).as_bytes(), &mapping, "");
    assert_eq!(r.status, 201, "{}", r.text);
    let b = Browser::start();
    b.goto(&s.url(&format!("/audits/{id}/upload")));
    b.js(
        "const dt = new DataTransfer(); dt.items.add(new File([arguments[0]], 'day2.csv', {type: 'text/csv'}));
         const input = document.getElementById('file-input'); input.files = dt.files;
         input.dispatchEvent(new Event('change'));",
        json!([file(1_777_968_000)]),
    );
    let row = "document.querySelector('#columns-table tr[data-column=\"header bar\"]')";
    assert!(
        wait_until(Duration::from_secs(15), || b.js(&format!("return !!{row}"), json!([])) == json!(true)),
        "the mapping did not appear"
    );
    b.js("document.getElementById('import-button').click()", json!([]));
    let items = "return [...document.querySelectorAll('#result li')].map((l) => l.textContent).join('\\n')";
    assert!(
        wait_until(Duration::from_secs(30), || b.js_str(items).contains("out of range")),
        "no quality warning after the import: {}",
        b.js_str("return document.getElementById('result').textContent")
    );
    let text = b.js_str(items).replace('\u{a0}', " ");
    assert!(text.contains("below -1.5 psig"), "{text}");
    assert!(text.contains("the first is -4.0 psig at line 7 (as logged: -0.273216 bar(g))"), "{text}");
    // The file's own literal keeps the file's unit beside it; no figure is in bar(g).
    let figures = text.replace("(as logged: -0.273216 bar(g))", "");
    assert!(!figures.contains("bar(g)"), "bar(g) in a US audit's reply: {text}");
}
