//! Issue 16's page defects in the browser: the what-if table fits a 1280 px window, and a refused
//! compressor form keeps what was typed, stays open and shows every field's refusal beside its field.

use super::*;

/// Wait until the browser shows `path` fully loaded.
fn wait_for(b: &Browser, path: &str) {
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
fn the_what_if_table_fits_a_1280_px_window() {
    let s = Server::demo();
    // Three replays of the demo: the baseline, a lower set-point with fewer leaks, and the plant
    // without its base-load machine (which falls short of its demand and lists its problems).
    for body in [
        json!({"name": "as is", "changes": []}),
        json!({"name": "lower and tighter", "changes": [{"op": "set_pressure", "target_bar_g": 6.6}, {"op": "reduce_leaks", "fraction": 0.5}]}),
        json!({"name": "no C1", "changes": [{"op": "remove", "tag": "C1"}]}),
    ] {
        let r = s.post_json("/api/v1/audits/1/scenarios", &body);
        assert_eq!(r.status, 201, "{}", r.text);
    }
    let b = Browser::start();
    b.set_window(1280, 900);
    b.goto(&s.url("/audits/1/scenarios"));
    wait_for(&b, "/audits/1/scenarios");
    b.screenshot("what-if-1280");
    let view = b.js_f64("return document.documentElement.clientWidth");
    assert!((1200.0..=1280.0).contains(&view), "the window is {view} px wide, not about 1280");
    // The table, and every cell, link and button in it, ends inside the window, and the table
    // needs no sideways scroll.
    let right = b.js_f64("return document.getElementById('scenario-table').getBoundingClientRect().right");
    assert!(right <= view, "the table ends at {right} px in a {view} px window");
    let furthest = b.js_f64(
        "return Math.max(...[...document.querySelectorAll('#scenario-table th, #scenario-table td, #scenario-table a, #scenario-table button, #scenario-table summary')]
           .map(e => e.getBoundingClientRect().right))",
    );
    assert!(furthest <= view, "a cell or action ends at {furthest} px in a {view} px window");
    let scroll = b.js("const w = document.getElementById('scenario-table').parentElement; return [w.scrollWidth, w.clientWidth]", json!([]));
    assert!(scroll[0].as_f64() <= scroll[1].as_f64(), "the table scrolls sideways: {scroll}");
    // Every scenario's actions are there: the proposal, edit, rename and delete.
    let actions = b.js_str(
        "return [...document.querySelectorAll('#scenario-table tbody[data-scenario]')].map(t =>
           [...t.querySelectorAll('.row-actions button, .row-actions a, .row-actions summary')].map(e => e.textContent.trim()).join('|')).join('\\n')",
    );
    assert_eq!(actions.lines().count(), 3, "{actions}");
    for (i, line) in actions.lines().enumerate() {
        assert!(line.contains("edit") && line.contains("rename") && line.contains("delete"), "{line}");
        // The baseline is no measure and the plant short of air cannot be one: only the second
        // replay may be marked as the proposal.
        assert_eq!(line.contains("mark as the proposal"), i == 1, "{line}");
    }
    // No row is tall with hidden text: the problems fold into a closed details element, so the
    // figures' row is a few lines high (under 160 px at this width).
    let tallest = b.js_f64(
        "return Math.max(...[...document.querySelectorAll('#scenario-table tr.scenario-figures')].map(r => r.getBoundingClientRect().height))",
    );
    assert!(tallest < 160.0, "a figures row is {tallest} px high");
    let problems = b.js(
        "return [...document.querySelectorAll('#scenario-table details.scenario-problems')].map(d => d.open)",
        json!([]),
    );
    assert_eq!(problems, json!([false]), "only the plant short of air lists problems, folded");
    // Rename is an ordinary action, in the colour of edit; delete alone is in the warning red.
    let colour = |sel: &str| {
        b.js_str(&format!("return getComputedStyle(document.querySelector({})).color", json!(sel)))
    };
    let edit = colour("#scenario-table .row-actions a[href*='edit=']");
    assert_eq!(colour("#scenario-table details.rename summary"), edit, "rename reads like edit");
    assert_ne!(colour("#scenario-table a.delete-link"), edit, "delete reads apart");
    // One unit per energy column: the unit in the heading, bare numbers in the cells.
    let heads = b.js_str("return [...document.querySelectorAll('#scenario-table thead th')].slice(2, 4).map(t => t.textContent).join('|')");
    assert!(heads.contains("replayed, kWh") || heads.contains("replayed, MWh"), "{heads}");
    let cells = b.js_str(
        "return [...document.querySelectorAll('#scenario-table tr.scenario-figures')].map(r => r.cells[2].textContent + ' ' + r.cells[3].textContent).join(' ')",
    );
    assert!(!cells.contains("Wh"), "energy cells carry no unit of their own: {cells}");
    let severe = b.severe_logs("/scenarios");
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn a_refused_compressor_keeps_what_was_typed_and_shows_every_refusal() {
    let s = Server::start();
    let r = s.post_json("/api/v1/audits", &json!({"name": "US plant", "site": {"display_units": "us"}}));
    assert_eq!(r.status, 201, "{}", r.text);
    let id = r.json()["id"].as_i64().unwrap();
    let b = Browser::start();
    b.set_window(1280, 900);
    let path = format!("/audits/{id}");
    b.goto(&s.url(&path));
    wait_for(&b, &path);
    // A flow of -120 cfm and a pressure of 2000 psig typed together with the rest right.
    b.js(
        "const f = document.querySelector('form[action$=\"/compressors\"]'); f.closest('details').open = true;
         const e = f.elements; e.tag.value = 'C9'; e.kind.value = 'oil_free_screw'; e.rated_power_kw.value = '75';
         e.rated_flow_m3_min.value = '-120'; e.rated_pressure_bar_g.value = '2000'; e.notes.value = 'north wall';
         f.requestSubmit();",
        json!([]),
    );
    let refused = format!("/audits/{id}/compressors");
    wait_for(&b, &refused);
    b.screenshot("compressor-refused");
    // The section is open and every field holds what was typed, in the units typed.
    let form = "document.querySelector('form[action$=\"/compressors\"]')";
    assert_eq!(b.js(&format!("return {form}.closest('details').open"), json!([])), json!(true));
    let typed = b.js_str(&format!(
        "const e = {form}.elements; return [e.tag.value, e.kind.value, e.rated_power_kw.value, e.rated_flow_m3_min.value, e.rated_pressure_bar_g.value, e.notes.value].join('|')"
    ));
    assert_eq!(typed, "C9|oil_free_screw|75|-120|2000|north wall");
    // Both refusals at once, each right after its own field, in cfm and psig as typed; the
    // limits are the data sheet's 0 to 50 bar(g) = 725.19 psig (NIST SP 811: 1 psi = 6.894757 kPa), quoted rounded down as 725.1 psig.
    let beside = b.js(
        &format!(
            "return ['rated_flow_m3_min', 'rated_pressure_bar_g'].map(n => {{ const i = {form}.elements[n];
               const s = i.nextElementSibling; return s && s.classList.contains('field-error') ? s.textContent : null; }})"
        ),
        json!([]),
    );
    let flow = beside[0].as_str().unwrap_or_else(|| panic!("no refusal beside the flow: {beside}"));
    let pressure = beside[1].as_str().unwrap_or_else(|| panic!("no refusal beside the pressure: {beside}"));
    assert!(flow.contains("-120 cfm"), "{flow}");
    assert!(pressure.contains("2000 psig") && pressure.contains("725.1 psig"), "{pressure}");
    assert_eq!(b.js_f64(&format!("return {form}.querySelectorAll('.field-error').length")), 2.0);
    assert_eq!(b.js_f64("return document.querySelectorAll('#form-refusal li').length"), 2.0);
    // Nothing was stored.
    let a = s.get(&format!("/api/v1/audits/{id}")).json();
    assert_eq!(a["compressors"].as_array().map(Vec::len), Some(0), "{a}");
    // Put right and sent again from the same form, it is stored as typed: 420 cfm = 11.893 m³/min
    // (1 ft³ = 0.028316846592 m³, NIST SP 811), 110 psig = 7.584 bar(g).
    b.js(
        &format!("const e = {form}.elements; e.rated_flow_m3_min.value = '420'; e.rated_pressure_bar_g.value = '110'; {form}.requestSubmit();"),
        json!([]),
    );
    wait_for(&b, &path);
    let a = s.get(&format!("/api/v1/audits/{id}")).json();
    let c = &a["compressors"][0];
    assert_eq!(c["tag"], "C9");
    assert!((c["rated_flow_m3_min"].as_f64().unwrap() - 420.0 * 0.028_316_846_592).abs() < 1e-9, "{c}");
    assert!((c["rated_pressure_bar_g"].as_f64().unwrap() - 110.0 * 0.068_947_572_931_68).abs() < 1e-9, "{c}");
    // The refused post's own 422 is the one error the console may show.
    let severe: Vec<String> =
        b.severe_logs("/audits").into_iter().filter(|l| !l.contains("status of 422")).collect();
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn a_refused_field_test_keeps_its_fields_and_shows_the_refusal_beside_the_field() {
    let s = Server::start();
    let r = s.post_json("/api/v1/audits", &json!({"name": "US", "site": {"display_units": "us"}}));
    let id = r.json()["id"].as_i64().unwrap();
    let b = Browser::start();
    b.set_window(1280, 900);
    b.goto(&s.url(&format!("/audits/{id}/tests")));
    // The end pressure typed above the start (the form posts JSON and stays on the page).
    let form = "document.querySelector('form[data-test-kind=bleed_down]')";
    b.js(
        &format!(
            "const f = {form}; f.elements.volume_m3.value = '660'; f.elements.start_pressure_bar_g.value = '90';
             f.elements.end_pressure_bar_g.value = '100'; f.elements.duration_s.value = '60'; f.requestSubmit();"
        ),
        json!([]),
    );
    let beside = || {
        b.js_str(&format!(
            "const s = {form}.elements.end_pressure_bar_g.nextElementSibling;
             return s && s.classList.contains('field-error') ? s.textContent : ''"
        ))
    };
    assert!(
        wait_until(Duration::from_secs(10), || !beside().is_empty()),
        "no refusal beside the end pressure"
    );
    assert!(beside().contains("100 psig") && beside().contains("90 psig"), "{}", beside());
    let kept = b.js_str(&format!(
        "const e = {form}.elements; return [e.volume_m3.value, e.start_pressure_bar_g.value, e.end_pressure_bar_g.value, e.duration_s.value].join('|')"
    ));
    assert_eq!(kept, "660|90|100|60");
    b.screenshot("field-test-refused");
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn a_typed_name_is_shown_once_and_a_bad_speed_curve_is_refused_in_words() {
    let s = Server::demo();
    let b = Browser::start();
    b.set_window(1280, 900);
    b.goto(&s.url("/audits/1/scenarios"));
    wait_for(&b, "/audits/1/scenarios");
    // A person types "baseline" at the end of whatever the box holds, and replays no change.
    b.js(
        "const f = document.getElementById('scenario-form'); f.elements.name.value += 'baseline'; f.requestSubmit();",
        json!([]),
    );
    let ok = wait_until(Duration::from_secs(60), || {
        b.js("return document.querySelectorAll('#scenario-table tbody[data-scenario]').length", json!([]))
            == json!(1)
    });
    assert!(
        ok,
        "no replay stored: {}",
        b.js_str("return document.getElementById('scenario-status')?.textContent || ''")
    );
    b.settle();
    let shown = b.js_str(
        "return document.querySelector('#scenario-table .scenario-name strong').textContent + '|' +
           Chart.getChart(document.getElementById('chart-scenarios')).data.datasets.map(d => d.label).join(',') + '|' +
           document.querySelector('#scenario-table tr.scenario-figures').cells[0].textContent",
    );
    assert_eq!(shown, "baseline|baseline|1", "table name | legend | row number");
    // A speed curve typed as "zz" in the third change: refused in the page, in words.
    b.js(
        "const e = document.getElementById('scenario-form').elements; e.name.value = 'with a VSD';
         e.remove.value = 'C1'; e.reduce_leaks.value = '0.2'; e.add_tag.value = 'V9'; e.add_power.value = '45';
         e.add_flow.value = '8'; e.add_curve.value = '2:15 zz'; document.getElementById('scenario-form').requestSubmit();",
        json!([]),
    );
    b.settle();
    let status = b.js_str("return document.getElementById('scenario-status').textContent");
    assert!(
        status.contains(
            "change 3, the added compressor's speed curve: each point is two numbers, flow and power"
        ) && status.contains("got \u{201c}zz\u{201d}"),
        "{status}"
    );
    let stored = s.get("/api/v1/audits/1/scenarios").json();
    assert_eq!(stored["scenarios"].as_array().map(Vec::len), Some(1), "nothing more stored: {stored}");
}
