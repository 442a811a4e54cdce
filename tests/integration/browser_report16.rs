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
    b.screenshot("report-supply-1280");
    let text = fit["text"].as_str().unwrap();
    // Nothing hidden: the variable-speed machine's load is still its mean capacity.
    assert!(text.contains("C3") && text.contains("mean capacity"), "the table lost text:\n{text}");
    assert!(table <= bx, "the Supply table is {table} px wide in a {bx} px box at 1280 px");
    let page = fit["page"].as_f64().unwrap();
    assert!(page <= 1280.0, "the page is {page} px wide at 1280 px");
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
