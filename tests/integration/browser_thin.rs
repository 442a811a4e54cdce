//! Files years apart on the report in the browser (issue 16): the day selector lists only the
//! days that hold readings, the power chart breaks its line at the gap between the files, and its
//! time axis names the years. The audit is `thin_files::audit_years_apart`; expected values worked
//! by hand there.

use super::*;
use crate::thin_files::audit_years_apart;

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_report_of_files_years_apart_lists_their_days_and_breaks_its_lines() {
    // Arrange
    let s = Server::start();
    let id = audit_years_apart(&s);
    let b = Browser::start();
    let page = format!("/audits/{id}/report");

    // Act
    b.goto(&s.url(&page));
    let drawn = wait_until(Duration::from_secs(20), || {
        b.js(
            "const c = Chart.getChart(document.getElementById('chart-power')); \
             return !!c && c.data.datasets.length > 0 && c.data.datasets[0].data.length > 0",
            json!([]),
        ) == json!(true)
    });
    assert!(drawn, "the power chart was not drawn");

    // Assert: the whole log and the two days logged (Chicago time), not the 1,736 between them.
    let options = b.js(
        "return [...document.querySelectorAll('#period-select option')].map(o => o.textContent)",
        json!([]),
    );
    assert_eq!(options, json!(["whole log", "Mon 3 Jun 2019", "Mon 4 Mar 2024"]));
    // The power line: one point per file at 83 h buckets (see `thin_files`), with a null between
    // them that breaks the line, and no gap spanned.
    let ys = b.js(
        "const c = Chart.getChart(document.getElementById('chart-power')); \
         return [c.data.datasets[0].data.map(p => p.y), !!c.options.spanGaps]",
        json!([]),
    );
    let y: Vec<Option<f64>> = ys[0].as_array().unwrap().iter().map(Value::as_f64).collect();
    assert_eq!(y, [Some(30.0), None, Some(40.0)], "{ys}");
    assert_eq!(ys[1], json!(false));
    // The time axis crosses five years: every tick label carries its year.
    let ticks = b.js(
        "return Chart.getChart(document.getElementById('chart-power')).scales.x.ticks.map(t => t.label)",
        json!([]),
    );
    let labels: Vec<&str> = ticks.as_array().unwrap().iter().filter_map(|t| t.as_str()).collect();
    assert!(labels.len() >= 2, "{ticks}");
    assert!(
        labels.iter().all(|l| (2019..=2024).any(|y| l.contains(&y.to_string()))),
        "a tick without its year: {labels:?}"
    );
    // A day picked: only that day's readings, the axis within one day and without a year.
    b.js(
        "const s = document.getElementById('period-select'); s.selectedIndex = 2; \
         s.dispatchEvent(new Event('change'))",
        json!([]),
    );
    let one_day = wait_until(Duration::from_secs(10), || {
        b.js(
            "const c = Chart.getChart(document.getElementById('chart-power')); \
             return c.data.datasets[0].data.every(p => p.y === null || p.y === 40)",
            json!([]),
        ) == json!(true)
    });
    assert!(one_day, "the day's chart still shows the other file");
    b.screenshot("thin-years-apart-report");
    let severe = b.severe_logs(&page);
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn a_day_logged_by_an_energy_counter_alone_draws_its_power_and_a_day_without_power_says_so() {
    // Arrange: the thin audit of `thin_counter` (C2's power only from its energy counter, 34 kW, on
    // Mon 13 Sep 2021, 12:00 to 12:53 CDT; a pressure and flow log on Sat 4 Feb 2023).
    let s = Server::start();
    let (id, _) = crate::thin_counter::thin_counter_audit(&s);
    let b = Browser::start();
    let page = format!("/audits/{id}/report");
    b.goto(&s.url(&page));
    let ready = wait_until(Duration::from_secs(20), || {
        b.js("return !!Chart.getChart(document.getElementById('chart-power'))", json!([])) == json!(true)
    });
    assert!(ready, "the power chart was not drawn");
    let pick = |label: &str| {
        b.js(
            "const s = document.getElementById('period-select'); \
             s.value = [...s.options].find(o => o.textContent === arguments[0]).value; \
             s.dispatchEvent(new Event('change'))",
            json!([label]),
        );
    };
    let state = || {
        b.js(
            "const c = Chart.getChart(document.getElementById('chart-power')); \
             const note = document.getElementById('chart-power-empty'); \
             return {sets: c.data.datasets.map(d => [d.label, d.data.filter(p => p.y !== null).map(p => p.y)]), \
                     ticks: c.scales.x.ticks.map(t => t.label), note: note.hidden ? null : note.textContent}",
            json!([]),
        )
    };

    // Act + Assert: the counter's day. Its power is drawn, 34 kW a minute, from 12:00 CDT.
    pick("Mon 13 Sep 2021");
    let on_the_day = |st: &Value| {
        let ticks = st["ticks"].as_array().unwrap();
        !ticks.is_empty() && ticks.iter().all(|t| t.as_str().is_some_and(|t| t.starts_with("Mon 13 Sep")))
    };
    let drawn = wait_until(Duration::from_secs(10), || {
        let st = state();
        on_the_day(&st)
            && st["sets"].as_array().unwrap().iter().any(|d| {
                d[0].as_str().unwrap().contains("from its energy counter")
                    && !d[1].as_array().unwrap().is_empty()
            })
    });
    assert!(drawn, "no counter power on its day: {}", state());
    let st = state();
    let counter =
        st["sets"].as_array().unwrap().iter().find(|d| d[0].as_str().unwrap().contains("C2")).unwrap();
    let ys: Vec<f64> = counter[1].as_array().unwrap().iter().map(|y| y.as_f64().unwrap()).collect();
    assert_eq!(ys.len(), 54, "{st}");
    assert!(ys.iter().all(|y| (y - 34.0).abs() < 1e-3), "{ys:?}");
    assert_eq!(st["note"], Value::Null, "{st}");
    // Every tick on that day's clock, none at the epoch (Wed 31 Dec 1969 18:00 in Chicago); the
    // browser's British month may read "Sept".
    let ticks: Vec<&str> = st["ticks"].as_array().unwrap().iter().filter_map(|t| t.as_str()).collect();
    assert!(ticks.iter().all(|t| t.starts_with("Mon 13 Sep") && t.contains(" 12:")), "{ticks:?}");
    // At round times, none at the data's own first or last instant (their labels ran into the
    // round tick beside them): 54 minutes of data take ticks every 10 minutes.
    assert!(ticks.iter().all(|t| t.ends_with('0')), "{ticks:?}");

    // The pressure log's day has no power: the chart says so in words, its axis on that day.
    pick("Sat 4 Feb 2023");
    let said = wait_until(Duration::from_secs(10), || state()["note"].is_string());
    let st = state();
    assert!(said, "{st}");
    assert_eq!(st["note"], "No compressor power was logged on Sat 4 Feb 2023.");
    let ticks: Vec<&str> = st["ticks"].as_array().unwrap().iter().filter_map(|t| t.as_str()).collect();
    assert!(
        !ticks.is_empty() && ticks.iter().all(|t| t.contains("4 Feb") || t.contains("5 Feb")),
        "{ticks:?}"
    );
    assert!(ticks.iter().all(|t| !t.contains("31 Dec") && !t.contains("1 Jan")), "{ticks:?}");
    b.screenshot("thin-counter-day-report");
    let severe = b.severe_logs(&page);
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}
