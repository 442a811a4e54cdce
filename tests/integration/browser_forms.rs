//! Issue 16 in the browser, the forms a person fills: the new-audit form follows the unit system
//! chosen on it, the mapping form previews how the first rows' times read (in words, in the
//! logger's zone), a field test typed in psig is refused in psig, and no page of the demo shows a
//! code (a snake_case name) anywhere in its text.

use super::*;

fn wait_for_path_prefix(b: &Browser, prefix: &str) -> String {
    let ok = wait_until(Duration::from_secs(30), || {
        let p = b.js_str("return location.pathname");
        p.starts_with(prefix) && p != "/" && b.js("return document.readyState", json!([])) == "complete"
    });
    assert!(ok, "the page did not go to {prefix}...: {}", b.js_str("return location.href"));
    b.settle();
    b.js_str("return location.pathname")
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn a_new_audit_in_us_units_stores_the_altitude_typed_in_feet() {
    let s = Server::start();
    let b = Browser::start();
    b.goto(&s.url("/"));
    let units = || {
        b.js_str(
            "return [...document.querySelectorAll('#new-audit [data-unit-of]')].map(e => e.textContent).join(' ')",
        )
    };
    assert_eq!(units(), "m °C");
    // US customary chosen on the form: the fields' units follow, their values carried across
    // (20 °C = 68 °F: t/°F = 1.8 t/°C + 32, NIST SP 811 B.9).
    b.js(
        "const f = document.getElementById('new-audit'); const u = f.elements.display_units;
         u.value = 'us'; u.dispatchEvent(new Event('change'));",
        json!([]),
    );
    assert_eq!(units(), "ft °F");
    assert_eq!(
        b.js_str("return String(document.querySelector('#new-audit .no-script-hint').offsetHeight)"),
        "0",
        "the no-script hint shows beside a working switch"
    );
    b.js("document.getElementById('new-audit').scrollIntoView()", json!([]));
    b.screenshot("new-audit-us");
    assert_eq!(
        b.js_str("return document.getElementById('new-audit').elements.inlet_temperature_c.value"),
        "68"
    );
    b.js(
        "const f = document.getElementById('new-audit');
         f.elements.name.value = 'Mile-high plant'; f.elements.altitude_m.value = '5280';
         f.elements.timezone.value = 'America/Denver'; f.requestSubmit();",
        json!([]),
    );
    let path = wait_for_path_prefix(&b, "/audits/");
    let id: i64 = path.trim_start_matches("/audits/").parse().unwrap();
    let site = s.get(&format!("/api/v1/audits/{id}")).json()["site"].clone();
    // NIST SP 811 (2008) B.8: 1 ft = 0.3048 m exactly, so 5,280 ft = 1,609.344 m.
    let alt = site["altitude_m"].as_f64().unwrap();
    assert!((alt - 1_609.344).abs() < 1e-9, "{site}");
    assert!((site["inlet_temperature_c"].as_f64().unwrap() - 20.0).abs() < 1e-9, "{site}");
    assert_eq!(site["display_units"], "us");
    // The site form shows the altitude in feet as typed; saved unchanged, the stored value keeps
    // its bits.
    let shown =
        b.js_str("return document.querySelector('form[action$=\"/site\"]').elements.altitude_m.value");
    assert_eq!(shown, "5280");
    let revision = || s.get(&format!("/api/v1/audits/{id}")).json()["revision"].as_i64().unwrap();
    let before = revision();
    b.js("document.querySelector('form[action$=\"/site\"]').requestSubmit()", json!([]));
    assert!(wait_until(Duration::from_secs(10), || revision() > before), "the site form was not saved");
    let again = s.get(&format!("/api/v1/audits/{id}")).json()["site"]["altitude_m"].as_f64().unwrap();
    assert_eq!(again.to_bits(), alt.to_bits(), "{again} after saving the site form unchanged, was {alt}");
}

/// A file written day first, logged in Chicago: `rows` rows at 10 s from 23/11/2026 14:05:00.
fn day_first_csv(rows: u32) -> String {
    let mut s = String::from("time,C1 kW,header bar,flow m3/min\n");
    for i in 0..rows {
        let (m, sec) = (5 + i * 10 / 60, i * 10 % 60);
        s.push_str(&format!("23/11/2026 14:{m:02}:{sec:02},{},7.1,4.2\n", if i % 6 < 2 { 56 } else { 14 }));
    }
    s
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_mapping_forms_read_a_day_first_files_times_in_the_loggers_zone() {
    let s = Server::start();
    let r =
        s.post_json("/api/v1/audits", &json!({"name": "Chicago", "site": {"timezone": "America/Chicago"}}));
    let id = r.json()["id"].as_i64().unwrap();
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/compressors"),
        &json!({"tag": "C1", "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                "rated_power_kw": 55, "rated_flow_m3_min": 9.5, "rated_pressure_bar_g": 7.5}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let csv = day_first_csv(120);
    // 23 November 2026 is a Monday (Python: datetime.date(2026, 11, 23).strftime("%a")), and
    // Chicago keeps CST, UTC-6, in November (IANA tz database; zoneinfo gives
    // datetime(2026,11,23,14,5,tzinfo=ZoneInfo("America/Chicago")).tzname() == "CST").
    let chicago = "23/11/2026 14:05:00 \u{2192} Mon 23 Nov 2026 14:05:00 CST, America/Chicago";
    let b = Browser::start();

    // The upload page: the logger's zone defaults to the audit's, the reading is offered in words.
    b.goto(&s.url(&format!("/audits/{id}/upload")));
    b.js(
        "const dt = new DataTransfer(); dt.items.add(new File([arguments[0]], 'dayfirst.csv', {type: 'text/csv'}));
         const input = document.getElementById('file-input'); input.files = dt.files;
         input.dispatchEvent(new Event('change'));",
        json!([csv]),
    );
    let first_row =
        || b.js_str("const li = document.querySelector('#date-preview li'); return li ? li.textContent : ''");
    assert!(
        wait_until(Duration::from_secs(15), || first_row() == chicago),
        "the upload page's preview reads {:?}",
        first_row()
    );
    let chosen =
        || b.js_str("const s = document.getElementById('m-reading'); return s.options[s.selectedIndex].text");
    assert_eq!(chosen(), "day/month/year, hh:mm:ss");
    // The logger's clock said to keep Berlin time: the rows read as Berlin times, shown on the
    // site's clock, 14:05 CET = 07:05 CST (Python: datetime(2026,11,23,14,5,
    // tzinfo=ZoneInfo("Europe/Berlin")).astimezone(ZoneInfo("America/Chicago"))).
    b.js(
        "const z = document.getElementById('m-ts-zone'); z.value = 'Europe/Berlin'; z.dispatchEvent(new Event('change'));",
        json!([]),
    );
    let berlin = "23/11/2026 14:05:00 \u{2192} Mon 23 Nov 2026 07:05:00 CST, America/Chicago";
    assert!(
        wait_until(Duration::from_secs(10), || first_row() == berlin),
        "after the zone: {:?}",
        first_row()
    );
    b.js("document.getElementById('m-reading').scrollIntoView({block: 'center'})", json!([]));
    b.screenshot("upload-date-readings");
    let severe = b.severe_logs("/upload");
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));

    // The remap page of the same file imported with the format the page proposed.
    let mapping = json!({"delimiter": ",", "decimal": ".", "header_line": 1,
        "timestamp": {"column": "time", "format": "%d/%m/%Y %H:%M:%S", "timezone": "America/Chicago"},
        "columns": [{"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"}]});
    let r = s.upload(id, "dayfirst.csv", csv.as_bytes(), &mapping, "");
    assert_eq!(r.status, 201, "{}", r.text);
    let uid = r.json()["upload_id"].as_i64().unwrap();
    b.goto(&s.url(&format!("/audits/{id}/uploads/{uid}/remap")));
    assert_eq!(first_row(), chicago, "the remap page's preview, drawn by the server");
    assert_eq!(chosen(), "day/month/year, hh:mm:ss");
    b.js(
        "const z = document.getElementById('m-ts-zone'); z.value = 'Europe/Berlin'; z.dispatchEvent(new Event('change'));",
        json!([]),
    );
    assert!(
        wait_until(Duration::from_secs(10), || first_row() == berlin),
        "after the zone: {:?}",
        first_row()
    );
    let severe = b.severe_logs("/remap");
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn a_bleed_down_and_a_what_if_typed_in_psig_are_refused_in_psig() {
    let s = Server::start();
    let r = s.post_json("/api/v1/audits", &json!({"name": "US", "site": {"display_units": "us"}}));
    let id = r.json()["id"].as_i64().unwrap();
    let b = Browser::start();
    b.goto(&s.url(&format!("/audits/{id}/tests")));
    // The end pressure typed above the start: refused, in the units typed.
    b.js(
        "const f = document.querySelector('form[data-test-kind=bleed_down]');
         f.elements.volume_m3.value = '660'; f.elements.start_pressure_bar_g.value = '90';
         f.elements.end_pressure_bar_g.value = '100'; f.elements.duration_s.value = '60';
         f.requestSubmit();",
        json!([]),
    );
    let status = || b.js_str("return document.getElementById('test-status').textContent");
    assert!(wait_until(Duration::from_secs(10), || status().starts_with("Not recorded")), "{}", status());
    assert!(
        status()
            .starts_with("Not recorded: the end pressure 100 psig must be below the start pressure 90 psig"),
        "{}",
        status()
    );
    assert!(!status().contains("bar(g)") && !status().contains("_bar_g"), "{}", status());

    // A what-if target above the 50 bar(g) limit (725.19 psig by the NIST SP 811 psi factor),
    // typed in psig: refused in psig, the change named in words, not as changes[0].
    b.goto(&s.url(&format!("/audits/{id}/scenarios")));
    b.js(
        "const f = document.getElementById('scenario-form');
         f.elements.name.value = 'too high'; f.elements.target_bar_g.value = '800'; f.requestSubmit();",
        json!([]),
    );
    let status = || b.js_str("return document.getElementById('scenario-status').textContent");
    assert!(wait_until(Duration::from_secs(10), || status().starts_with("Not replayed")), "{}", status());
    assert_eq!(
        status(),
        "Not replayed: the target pressure must be above 0 psig and at most 725.1 psig, got 800 psig"
    );
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn no_page_of_the_demo_shows_a_code() {
    let s = Server::demo();
    // Records of every kind the pages say in words: field tests of each method, and a replay with
    // changes (the demo plant's own data, our invented scenario).
    for t in [
        json!({"kind": "bleed_down", "volume_m3": 6.0, "start_pressure_bar_g": 7.0, "end_pressure_bar_g": 6.0,
               "duration_s": 300, "air_temperature_c": 30}),
        json!({"kind": "load_unload", "compressor": "C1", "loaded_s": 40, "unloaded_s": 120}),
    ] {
        let r = s.post_json("/api/v1/audits/1/field-tests", &t);
        assert_eq!(r.status, 201, "{}", r.text);
    }
    let r = s.post_json(
        "/api/v1/audits/1/scenarios",
        &json!({"name": "lower and store", "changes": [{"op": "set_pressure", "target_bar_g": 6.5},
                                                         {"op": "add_storage", "volume_m3": 3.0}]}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let audit = s.get("/api/v1/audits/1").json();
    let mut pages: Vec<String> = PAGES.iter().map(|(_, p)| p.to_string()).collect();
    pages.extend(
        ["/audits/1/findings?units=us", "/audits/1/report?units=us", "/audits/1/treatment"].map(String::from),
    );
    for u in audit["uploads"].as_array().unwrap() {
        pages.push(format!("/audits/1/uploads/{}/remap", u["id"]));
    }
    for c in audit["compressors"].as_array().unwrap() {
        pages.push(format!("/audits/1/compressors/{}/edit", c["id"]));
    }
    for r in audit["receivers"].as_array().unwrap() {
        pages.push(format!("/audits/1/receivers/{}/edit", r["id"]));
    }
    let b = Browser::start();
    b.set_window(1366, 900);
    let mut found = vec![];
    for p in &pages {
        b.goto(&s.url(p));
        b.settle();
        // Every text a person sees once the scripts ran (table cells they filled, and the charts'
        // labels, legends and titles, drawn on canvas), with what comes from the user's files left out:
        // their names and, on the remap page, their own column names (the first cell of each row
        // of the mapping's tables).
        let codes = b.js(
            "const charts = typeof Chart === 'undefined' ? [] : Object.values(Chart.instances).flatMap(c =>
               [...(c.data.labels || []).map(String), ...c.data.datasets.map(d => String(d.label || '')),
                String((c.options.plugins && c.options.plugins.title && c.options.plugins.title.text) || '')]);
             const t = document.body.innerText + '\\n' + charts.join('\\n');
             const own = [...document.querySelectorAll('#remap-form tbody tr td:first-child')].map(td => td.textContent.trim());
             return [...t.matchAll(/[A-Za-z0-9]+_[A-Za-z0-9_]+(\\.[a-z]+)?/g)].map(m => m[0])
               .filter(x => !/\\.(csv|txt)$/.test(x) && !own.some(o => o.includes(x)));",
            json!([]),
        );
        for c in codes.as_array().unwrap() {
            found.push(format!("{p}: {}", c.as_str().unwrap()));
        }
    }
    assert!(found.is_empty(), "codes on the demo's pages:\n{}", found.join("\n"));
}

/// Issue 16's second walk: in a browser's number box an English locale reads "6,5" as 65 (the
/// comma a digit-group separator) and drops a typed letter, so a typo was stored as another
/// number without a word. The forms' number boxes are text boxes for decimals: a decimal comma
/// reads as a point (6,5 is 6.5, as the server has always read it) and a letter is refused beside
/// its field, nothing stored; the same on a page posted without scripts (the site form).
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn a_decimal_comma_is_read_and_a_letter_refused_never_another_number() {
    let s = Server::start();
    let r = s.post_json("/api/v1/audits", &json!({"name": "commas", "site": {"display_units": "si"}}));
    let id = r.json()["id"].as_i64().unwrap();
    let b = Browser::start();
    b.goto(&s.url(&format!("/audits/{id}/tests")));
    let submit = |volume: &str, end: &str, duration: &str| {
        b.js(
            "const f = document.querySelector('form[data-test-kind=bleed_down]');
             f.elements.volume_m3.value = arguments[0]; f.elements.start_pressure_bar_g.value = '7';
             f.elements.end_pressure_bar_g.value = arguments[1]; f.elements.duration_s.value = arguments[2];
             document.getElementById('test-status').textContent = '';
             f.requestSubmit();",
            json!([volume, end, duration]),
        );
    };
    let status = || b.js_str("return document.getElementById('test-status').textContent");
    let tests = || s.get(&format!("/api/v1/audits/{id}/field-tests")).json()["field_tests"].clone();
    // A letter for a zero ("6O" s): refused, in words, and nothing stored.
    submit("2,5", "5,5", "6O");
    assert!(wait_until(Duration::from_secs(10), || status().starts_with("Not recorded")), "{}", status());
    assert!(status().contains("must be a number, got “6O”"), "{}", status());
    assert_eq!(tests().as_array().unwrap().len(), 0);
    // Decimal commas: 2.5 m³ and 5.5 bar(g), over 95 s.
    submit("2,5", "5,5", "95");
    assert!(wait_until(Duration::from_secs(10), || tests().as_array().unwrap().len() == 1), "{}", status());
    let input = &tests()[0]["input"];
    assert_eq!((input["volume_m3"].as_f64(), input["end_pressure_bar_g"].as_f64()), (Some(2.5), Some(5.5)));
    assert_eq!(input["duration_s"].as_f64(), Some(95.0));
    // The site form, posted by the browser itself: 21,5 °C is 21.5 °C; "2l" is refused in words.
    b.goto(&s.url(&format!("/audits/{id}")));
    b.js(
        "const f = document.querySelector('input[name=inlet_temperature_c]').form;
         f.elements.inlet_temperature_c.value = '21,5'; f.submit();",
        json!([]),
    );
    b.settle();
    let site = || s.get(&format!("/api/v1/audits/{id}")).json()["site"].clone();
    assert_eq!(site()["inlet_temperature_c"].as_f64(), Some(21.5));
    b.js(
        "const f = document.querySelector('input[name=electricity_price_per_kwh]').form;
         f.elements.electricity_price_per_kwh.value = '0.l5'; f.submit();",
        json!([]),
    );
    b.settle();
    let page = b.js_str("return document.body.innerText");
    assert!(page.contains("the electricity price must be a number, got “0.l5”"), "{page}");
    assert!(!page.contains("electricity_price_per_kwh"), "{page}");
}

/// Issue 16's second walk: a blank free air delivery for a compressor added in a what-if was
/// refused as "got 0 cfm" (an empty box read as the number 0). It is now said as nothing typed.
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn a_blank_box_is_refused_as_nothing_typed_never_as_zero() {
    let s = Server::demo();
    let b = Browser::start();
    b.goto(&s.url("/audits/1/scenarios"));
    b.js(
        "const f = document.getElementById('scenario-form');
         f.elements.name.value = 'one more'; f.elements.add_tag.value = 'C9';
         f.elements.add_control.value = 'load_unload'; f.elements.add_power.value = '55';
         f.elements.add_flow.value = ''; f.requestSubmit();",
        json!([]),
    );
    let status = || b.js_str("return document.getElementById('scenario-status').textContent");
    assert!(wait_until(Duration::from_secs(20), || status().starts_with("Not replayed")), "{}", status());
    assert!(status().contains("got nothing"), "{}", status());
    assert!(!status().contains("got 0"), "{}", status());
}
