//! Issue 16 on the field-tests page, in the browser: the window chart of an audit that logged flow
//! and power but no pressure draws both to their ends and says in words that pressure is not
//! logged (no empty pressure axis); the idle-flow window is typed as a date and time on the site's
//! clock (the zone named), and the API still receives RFC 3339 with the site's offset.

use super::*;

/// 2 h from 2026-05-04T08:00Z (03:00 CDT in Chicago, UTC-5 in May: IANA tz database), every 10 s:
/// C1's power all along, the flow only for the first 90 min (its cells blank after), no pressure.
fn flow_and_power_csv() -> String {
    let start = 1_777_881_600i64;
    let mut s = String::from("time,C1 kW,flow m3/min\n");
    for i in 0..720i64 {
        let loaded = (i % 20) < 4;
        let flow = if i < 540 { format!("{:.2}", if loaded { 9.5 } else { 1.9 }) } else { String::new() };
        s.push_str(&format!(
            "{},{},{flow}\n",
            jiff_like_rfc3339(start + i * 10),
            if loaded { 56.0 } else { 14.0 }
        ));
    }
    s
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_window_chart_draws_what_is_logged_and_the_idle_window_is_typed_on_the_sites_clock() {
    let s = Server::start();
    let id = s.us_audit_in_chicago("no pressure");
    let mapping = json!({"delimiter": ",", "decimal": ".", "header_line": 1,
        "timestamp": {"column": "time", "format": "rfc3339", "timezone": "UTC"},
        "columns": [{"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"},
                    {"column": "flow m3/min", "quantity": "flow", "unit": "m3_min"}]});
    let b = window_chart(&s, id, &flow_and_power_csv(), &mapping);
    // Two series, flow and C1's power; no pressure axis; the x axis reaches the power's last
    // reading (09:59:50Z), not the flow's (09:29:50Z).
    let chart = b.js(
        "const c = Chart.getChart(document.getElementById('chart-window'));
         return {labels: c.data.datasets.map((d) => d.label), axes: Object.keys(c.options.scales),
                 max: c.options.scales.x.max,
                 last: c.data.datasets.map((d) => d.data[d.data.length - 1].x)};",
        json!([]),
    );
    let labels: Vec<&str> = chart["labels"].as_array().unwrap().iter().map(|v| v.as_str().unwrap()).collect();
    assert_eq!(labels.len(), 2, "{chart}");
    assert!(
        labels.iter().any(|l| l.starts_with("C1 power")) && labels.iter().any(|l| l.starts_with("flow")),
        "{chart}"
    );
    assert!(!chart["axes"].as_array().unwrap().iter().any(|a| a == "p"), "an empty pressure axis: {chart}");
    let power_end = (1_777_881_600i64 + 7_190) * 1000;
    assert!(chart["max"].as_f64().unwrap() >= (power_end - 600_000) as f64, "the chart stops early: {chart}");
    let note = b.js_str("return document.getElementById('window-absent').textContent");
    assert_eq!(note, "Not logged in this audit: pressure; the chart shows flow and power.");

    // The idle-flow window on the site's clock: 03:10 to 03:40 CDT is 08:10Z to 08:40Z.
    let label = b.js_str("return document.querySelector('form[data-test-kind=idle_flow] input[name=start]').closest('label').textContent");
    assert!(label.contains("America/Chicago"), "{label}");
    b.js(
        "const f = document.querySelector('form[data-test-kind=idle_flow]');
         if (f.elements.start.type !== 'datetime-local') throw new Error('not a date-time input');
         f.elements.start.value = '2026-05-04T03:10:00'; f.elements.end.value = '2026-05-04T03:40:00';
         f.requestSubmit();",
        json!([]),
    );
    let recorded = wait_until(Duration::from_secs(20), || {
        !s.get(&format!("/api/v1/audits/{id}")).json()["field_tests"].as_array().unwrap().is_empty()
    });
    assert!(
        recorded,
        "not recorded: {}",
        b.js_str("return document.getElementById('test-status').textContent")
    );
    let t = s.get(&format!("/api/v1/audits/{id}")).json()["field_tests"][0].clone();
    assert_eq!(t["input"]["start"], "2026-05-04T03:10:00-05:00", "{t}");
    assert_eq!(t["input"]["end"], "2026-05-04T03:40:00-05:00", "{t}");
    assert!(t["result"]["leak_flow_m3_min"].as_f64().is_some_and(|q| q > 0.0), "{t}");
    // Opened to edit, the fields show the site's clock again (the browser drops zero seconds).
    b.goto(&s.url(&format!("/audits/{id}/tests?edit={}", t["id"])));
    let shown = b.js_str("const f = document.querySelector('form[data-test-kind=idle_flow]'); return f.elements.start.value + ' ' + f.elements.end.value");
    assert_eq!(shown, "2026-05-04T03:10 2026-05-04T03:40");
}

/// 1 h from 2026-05-04T08:00Z, every 10 s: C1's energy counter alone (kWh, 30 kW: 30 × 10 / 3600
/// = 0.083333 kWh a step) and the header pressure at 6.5 bar(g); no power column, no flow.
fn counter_and_pressure_csv() -> String {
    let start = 1_777_881_600i64;
    let mut s = String::from("time,E kWh,header bar\n");
    for i in 0..360i64 {
        s.push_str(&format!(
            "{},{:.6},6.5\n",
            jiff_like_rfc3339(start + i * 10),
            500.0 + i as f64 * 30.0 * 10.0 / 3600.0
        ));
    }
    s
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_window_chart_draws_a_machine_whose_power_comes_only_from_its_energy_counter() {
    let s = Server::start();
    let id = s.audit_in_chicago("counter only", "si");
    let mapping = json!({"delimiter": ",", "decimal": ".", "header_line": 1,
        "timestamp": {"column": "time", "format": "rfc3339", "timezone": "UTC"},
        "columns": [{"column": "E kWh", "quantity": "energy", "unit": "kWh", "compressor": "C1"},
                    {"column": "header bar", "quantity": "pressure", "unit": "bar_g"}]});
    let b = window_chart(&s, id, &counter_and_pressure_csv(), &mapping);
    let chart = b.js(
        "const c = Chart.getChart(document.getElementById('chart-window'));
         return {labels: c.data.datasets.map((d) => d.label), axes: Object.keys(c.options.scales),
                 ys: c.data.datasets.map((d) => d.data.map((p) => p.y).filter((y) => y !== null))};",
        json!([]),
    );
    let labels: Vec<&str> = chart["labels"].as_array().unwrap().iter().map(|v| v.as_str().unwrap()).collect();
    assert_eq!(labels.len(), 2, "{chart}");
    let k = labels
        .iter()
        .position(|l| *l == "C1 power, from its energy counter, kW")
        .expect("the counter's power");
    assert!(chart["axes"].as_array().unwrap().iter().any(|a| a == "w"), "no power axis: {chart}");
    // The counter's rise stands for 30 kW all along (the series API's power_from_counter).
    let ys: Vec<f64> = chart["ys"][k].as_array().unwrap().iter().map(|y| y.as_f64().unwrap()).collect();
    assert!(ys.len() > 10 && ys.iter().all(|y| (y - 30.0).abs() < 0.01), "{ys:?}");
    let note = b.js_str("return document.getElementById('window-absent').textContent");
    assert_eq!(note, "Not logged in this audit: flow; the chart shows pressure and power.");
}

/// 2 h from 2026-03-11T09:33:20Z (04:33:20 CDT in Chicago, UTC-5 after the change of 8 March: IANA
/// tz database), every 10 s: C1, C2 and C3's power and two header pressures.
fn three_machines_two_pressures_csv() -> String {
    let start = 1_773_221_600i64;
    let mut s = String::from("time,C1 kW,C2 kW,C3 kW,main header,press shop\n");
    for i in 0..720i64 {
        let on = |k: i64| if (i + k) % 20 < 4 { 56.0 } else { 14.0 };
        s.push_str(&format!(
            "{},{},{},{},{:.2},{:.2}\n",
            jiff_like_rfc3339(start + i * 10),
            on(0),
            on(5),
            on(10),
            7.0 - 0.001 * (i % 30) as f64,
            6.6 - 0.001 * (i % 30) as f64
        ));
    }
    s
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_window_chart_names_its_series_in_words_gives_each_machine_its_colour_and_ticks_at_round_times() {
    // Issue 16's walk: legends quoted column names with mixed quotes, C1, C2 and C3 shared a colour,
    // and the first tick sat at the data's own odd start ("Wed 11 Mar 04:33"). Each machine now
    // takes the colour the report's power chart gives it (the i-th power channel the i-th of
    // `A.palette`); ticks fall on whole multiples of a round step (the report's rule, common
    // practice for a time axis).
    let s = Server::start();
    let id = s.us_audit_in_chicago("three machines");
    for tag in ["C2", "C3"] {
        let r = s.post_json(
            &format!("/api/v1/audits/{id}/compressors"),
            &json!({"tag": tag, "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                    "rated_power_kw": 55, "rated_flow_m3_min": 9.5, "rated_pressure_bar_g": 7.5}),
        );
        assert_eq!(r.status, 201, "{}", r.text);
    }
    let mapping = json!({"delimiter": ",", "decimal": ".", "header_line": 1,
        "timestamp": {"column": "time", "format": "rfc3339", "timezone": "UTC"},
        "columns": [{"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"},
                    {"column": "C2 kW", "quantity": "power", "unit": "kW", "compressor": "C2"},
                    {"column": "C3 kW", "quantity": "power", "unit": "kW", "compressor": "C3"},
                    {"column": "main header", "quantity": "pressure", "unit": "bar_g"},
                    {"column": "press shop", "quantity": "pressure", "unit": "bar_g"}]});
    let b = window_chart(&s, id, &three_machines_two_pressures_csv(), &mapping);
    let chart = b.js(
        "const c = Chart.getChart(document.getElementById('chart-window'));
         return {labels: c.data.datasets.map((d) => d.label), colors: c.data.datasets.map((d) => d.borderColor),
                 palette: window.airledger.palette, ticks: c.scales.x.ticks.map((t) => t.value),
                 first: Math.min(...c.data.datasets.map((d) => d.data[0].x))};",
        json!([]),
    );
    let labels: Vec<&str> = chart["labels"].as_array().unwrap().iter().map(|v| v.as_str().unwrap()).collect();
    let colors: Vec<&str> = chart["colors"].as_array().unwrap().iter().map(|v| v.as_str().unwrap()).collect();
    let palette: Vec<&str> =
        chart["palette"].as_array().unwrap().iter().map(|v| v.as_str().unwrap()).collect();
    assert_eq!(labels.len(), 5, "{chart}");
    for l in &labels {
        assert!(!l.contains("column") && !l.contains('"') && !l.contains('\u{201c}'), "{chart}");
    }
    assert!(
        labels.contains(&"pressure, main header, psig") && labels.contains(&"pressure, press shop, psig"),
        "{chart}"
    );
    let power = |tag: &str| labels.iter().position(|l| l.starts_with(&format!("{tag} power"))).unwrap();
    let (c1, c2, c3) = (colors[power("C1")], colors[power("C2")], colors[power("C3")]);
    assert_eq!([c1, c2, c3], [palette[0], palette[1], palette[2]], "{chart}");
    // No other series takes a machine's colour.
    let others: Vec<&str> =
        labels.iter().zip(&colors).filter(|(l, _)| !l.contains(" power")).map(|(_, c)| *c).collect();
    assert!(others.iter().all(|c| ![c1, c2, c3].contains(c)), "{chart}");
    // Round ticks: whole minutes, none at the data's first instant (04:33:20 CDT).
    let ticks: Vec<f64> = chart["ticks"].as_array().unwrap().iter().map(|v| v.as_f64().unwrap()).collect();
    assert!(ticks.len() >= 2, "{chart}");
    assert!(ticks.iter().all(|t| t % 300_000.0 == 0.0), "ticks off a 5-minute multiple: {chart}");
    assert!(!ticks.contains(&chart["first"].as_f64().unwrap()), "{chart}");
}

/// Uploads `csv` with `mapping` into audit `id` and opens its field-tests page until the window
/// chart is drawn.
fn window_chart(s: &Server, id: i64, csv: &str, mapping: &serde_json::Value) -> Browser {
    let r = s.upload(id, "plant.csv", csv.as_bytes(), mapping, "");
    assert_eq!(r.status, 201, "{}", r.text);
    let b = Browser::start();
    b.goto(&s.url(&format!("/audits/{id}/tests")));
    let drawn = wait_until(Duration::from_secs(20), || {
        b.js("const c = Chart.getChart(document.getElementById('chart-window')); return !!c", json!([]))
            == true
    });
    assert!(drawn, "no window chart");
    b
}
