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
