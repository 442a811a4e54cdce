//! Issues 16 and 19 in the browser: the printed findings carry their charts (inline SVG that a PDF
//! keeps as text), the charts plot the figures the summary reports, and the report and the findings
//! are grouped as an ISO 11011 assessment is: supply, transmission, demand, then the measures and
//! the methods.

use super::*;

/// NIST SP 811 (2008), Appendix B.8: 1 psi = 6 894.757 Pa (6 894.757 293 168 exactly).
const PA_PER_PSI: f64 = 6_894.757_293_168;

/// Print `path` of the demo with Chromium's own --print-to-pdf; the text of every page as laid out
/// (`pdftotext -layout`), in reading order (`pdftotext`), and the page count.
fn print_demo(server: &Server, path: &str, name: &str) -> (String, String, usize) {
    let dir = TempDir::new("pdf-plots");
    let pdf = dir.path().join(format!("{name}.pdf"));
    let profile = TempDir::new("chromium-print-plots");
    let out = Command::new(chromium())
        .args(QUIET_FLAGS)
        .arg(format!("--user-data-dir={}", profile.path().display()))
        .arg(format!("--print-to-pdf={}", pdf.display()))
        .arg("--no-pdf-header-footer")
        .arg(server.url(path))
        .output()
        .expect("run chromium --print-to-pdf");
    assert!(pdf.exists(), "chromium wrote no PDF: {}", String::from_utf8_lossy(&out.stderr));
    let _ = std::fs::copy(&pdf, artifacts_dir().join(format!("{name}.pdf")));
    let p = pdf.to_str().unwrap();
    let pages: usize = run_tool(pdfinfo(), &[p])
        .lines()
        .find_map(|l| l.strip_prefix("Pages:").map(|n| n.trim().parse().unwrap()))
        .expect("page count");
    (run_tool(pdftotext(), &["-layout", p, "-"]), run_tool(pdftotext(), &[p, "-"]), pages)
}

/// The PDF of the demo's findings holds the charts: their axis titles with the units of the
/// reader's system (SI, then US customary) and the site's time zone by name, and every page still
/// carries "page n of m".
#[test]
#[cfg_attr(
    not(any(all(has_browser, has_pdftools), ci)),
    ignore = "needs Debian's chromium, chromium-driver and poppler-utils: apt-get install chromium chromium-driver poppler-utils"
)]
fn printed_findings_carry_the_charts_in_the_readers_units() {
    let server = Server::demo();
    let audit = server.get("/api/v1/audits/1").json();
    let tz = audit["site"]["timezone"].as_str().expect("time zone").to_string();
    for (units, want) in [
        ("si", ["Pressure, bar(g)", "Flow, m³/min free air", "Power, kW"]),
        ("us", ["Pressure, psig", "Flow, cfm free air", "Power, kW"]),
    ] {
        let (text, _, pages) = print_demo(
            &server,
            &format!("/audits/1/findings?units={units}"),
            &format!("findings-plots-{units}"),
        );
        let flat = squash(&text);
        for w in want
            .iter()
            .chain(&["Share of the logged time at or above the pressure, %", "Share of the logged time, %"])
        {
            assert!(
                flat.contains(w),
                "{units}: no axis title {w:?} in the PDF:\n{}",
                &flat[..flat.len().min(4000)]
            );
        }
        assert!(flat.contains(&format!("Site time ({tz})")), "{units}: the time axis does not name {tz}");
        assert!(flat.contains(&format!("Hour of the day, site time ({tz})")), "{units}: no typical day");
        // The charts' headings print with them.
        for h in [
            "Pressure duration curve",
            "Compressor load: share of the logged time",
            "Typical day: mean demand by hour",
        ] {
            assert!(flat.contains(h), "{units}: no chart {h:?}");
        }
        let per_page: Vec<&str> = text.split('\u{c}').filter(|p| !p.trim().is_empty()).collect();
        assert_eq!(per_page.len(), pages, "{units}: pages of text against pdfinfo");
        let measures =
            server.get("/api/v1/audits/1/summary").json()["recommendations"].as_array().unwrap().len();
        measures_print_in_sensible_columns(&text, units, measures);
        for (i, page) in per_page.iter().enumerate() {
            assert!(
                page.contains(&format!("page {} of {pages}", i + 1)),
                "{units}: no page number on page {}",
                i + 1
            );
        }
    }
}

/// The printed measures table gives the measure's title a column it reads in and its method a row
/// of its own: the demo's measures take at most two pages (seven took three, three rows a page,
/// with a fifth of the line for the title and the method squeezed under it), each title's first
/// words share one line (“Lower the header” / “pressure from” was cut), and each method line runs
/// across the figures' columns.
fn measures_print_in_sensible_columns(layout: &str, units: &str, measures: usize) {
    let start = layout.find("Recommendations: measures stacked in order").expect("the measures in the PDF");
    let end =
        start + layout[start..].find("Methods and assumptions").expect("the methods after the measures");
    let table = &layout[start..end];
    let pages = table.matches('\u{c}').count() + 1;
    assert!(pages <= 2, "{units}: the measures run over {pages} pages:\n{table}");
    for title in
        ["Lower the header pressure from", "Switch off idling compressors", "Recover compressor heat for"]
    {
        assert!(squash(table).contains(title), "{units}: {title:?} is cut across lines:\n{table}");
        assert!(table.lines().any(|l| l.contains(title)), "{units}: {title:?} not on one line:\n{table}");
    }
    // The headings fit their columns: the savings' group heading whole on one line, every
    // column's heading on one line with the others (a sub-label may sit above or below), the whole
    // head in at most four lines ("Payback stacked after the ones above" took five, a word a line).
    let head_start = table.find("done in this order").expect("the rule above the table");
    let head: Vec<&str> = table[head_start..]
        .lines()
        .skip(1)
        .take_while(|l| !l.trim_start().starts_with("1 "))
        .filter(|l| !l.trim().is_empty())
        .collect();
    assert!(head.len() <= 4, "{units}: the headings take {} lines:\n{}", head.len(), head.join("\n"));
    assert!(
        head.iter().any(|l| l.contains("Saving a year")),
        "{units}: the group heading is cut:\n{}",
        head.join("\n")
    );
    let words = ["Order", "Measure", "alone", "stacked", "Cost", "CO₂"];
    assert!(
        head.iter().any(|l| {
            let mut at = 0;
            words.iter().all(|w| l[at..].find(w).map(|i| at += i + w.len()).is_some())
        }),
        "{units}: the column headings do not share a line:\n{}",
        head.join("\n")
    );
    let methods: Vec<&str> = table.lines().filter(|l| l.contains("Method and sources:")).collect();
    assert_eq!(methods.len(), measures, "{units}: one method row a measure:\n{table}");
    for l in methods {
        // The method row starts under the title and runs on past the title's column: over
        // 60 characters of its words on the line (the old column held some 25).
        let words = l.trim();
        assert!(words.len() > 60, "{units}: a method squeezed into a narrow column: {l:?}");
    }
}

/// The places where a printed line ends inside a figure: a number at a line's end whose unit
/// starts the next line ("168.0" / "h"), or a unit of several words broken between its words
/// ("14.9 t" / "CO₂", "1,981 US" / "gal", "free" / "air"). A flow's reference, "free air", may
/// start the next line after its unit ("12.5 m³/min" / "free air"), so that a table's flow column
/// fits an A4 line. A range ends no line at its en dash ("2.72–" / "2.89 m³/min").
pub(super) fn numbers_split_from_units(text: &str) -> Vec<String> {
    const UNITS: &[&str] = &[
        "h", "min", "s", "kW", "kWh", "MWh", "GWh", "%", "bar", "bar(g)", "psi", "psig", "psia", "cfm",
        "m³/min", "m³", "ft³", "US", "t", "°C", "°F", "K", "kPa", "ft", "m", "EUR", "USD", "years", "months",
    ];
    // A price per a quantity of air is one unit too: "16.61 EUR per 1000 m³" stays on one line.
    const JOINED: &[(&str, &str)] = &[
        ("t", "CO₂"),
        ("US", "gal"),
        ("kPa", "abs"),
        ("free", "air"),
        ("EUR", "per"),
        ("USD", "per"),
        ("per", "1000"),
    ];
    let lines: Vec<&str> = text.lines().map(str::trim).collect();
    let mut out = Vec::new();
    for w in lines.windows(2) {
        let (Some(last), Some(first)) = (w[0].split_whitespace().last(), w[1].split_whitespace().next())
        else {
            continue;
        };
        let number = last.chars().last().is_some_and(|c| c.is_ascii_digit());
        let unit = first.trim_end_matches([',', ';', ')', '.', ':']);
        let range = last.ends_with('–')
            && last.chars().any(|c| c.is_ascii_digit())
            && first.chars().next().is_some_and(|c| c.is_ascii_digit());
        if (number && UNITS.contains(&unit))
            || range
            || JOINED.iter().any(|&(a, b)| last == a && first.starts_with(b))
        {
            let before = w[0].split_whitespace().collect::<Vec<_>>();
            let ctx = before[before.len().saturating_sub(3)..].join(" ");
            out.push(format!("{ctx} / {}", w[1].split_whitespace().take(3).collect::<Vec<_>>().join(" ")));
        }
    }
    out
}

/// Issue 16: in the printed findings no number is split from its unit, nor a unit of several words
/// from itself, in SI and in US customary units: every printed line is read in the PDF's reading
/// order (`pdftotext`), and the figures that used to split (a CO₂ mass, a volume in US gallons)
/// print whole.
#[test]
#[cfg_attr(
    not(any(all(has_browser, has_pdftools), ci)),
    ignore = "needs Debian's chromium, chromium-driver and poppler-utils: apt-get install chromium chromium-driver poppler-utils"
)]
fn printed_findings_keep_every_number_with_its_unit() {
    let server = Server::demo();
    for units in ["si", "us"] {
        let (_, text, _) = print_demo(
            &server,
            &format!("/audits/1/findings?units={units}"),
            &format!("findings-units-{units}"),
        );
        let split = numbers_split_from_units(&text);
        assert!(
            split.is_empty(),
            "{units}: numbers split from their units in the PDF:\n{}",
            split.join("\n")
        );
        // A no-break space joins them (pdftotext writes it as U+00A0 or as a space, never a line end).
        for whole in ["t CO₂", "free air"] {
            let found = text.contains(whole) || text.contains(&whole.replace(' ', "\u{a0}"));
            assert!(found, "{units}: no {whole:?} on one line of the PDF");
        }
        // The leak's likely range prints on one line with its unit (the word joiner after the en
        // dash is invisible; pdftotext may write it), from the summary's own low and high.
        if units == "si" {
            let l = &server.get("/api/v1/audits/1/summary").json()["leaks"];
            let range = format!(
                "{:.2}–{:.2} m³/min",
                l["adopted_leak_flow_m3_min_low"].as_f64().unwrap(),
                l["adopted_leak_flow_m3_min_high"].as_f64().unwrap()
            );
            let mut whole = text.lines().map(|x| x.replace(['\u{2060}'], "").replace('\u{a0}', " "));
            assert!(whole.any(|x| x.contains(&range)), "{units}: {range:?} is not on one line of the PDF");
        }
    }
}

/// The value a point of a chart stands for: from the SVG's own axis range and plot box
/// (`data-y-min`, `data-y-max`, `data-plot`) and the drawn geometry Chromium reports
/// (`getBBox` of the series' path): the top of the path is its greatest value, the bottom its least.
const PLOTTED: &str = "
    const [id, cls] = arguments;
    const svg = document.getElementById(id);
    if (!svg) return null;
    const [left, top, width, height] = svg.dataset.plot.split(' ').map(Number);
    const y0 = Number(svg.dataset.yMin), y1 = Number(svg.dataset.yMax);
    const x0 = Number(svg.dataset.xMin), x1 = Number(svg.dataset.xMax);
    const value = (py) => y1 - (py - top) / height * (y1 - y0);
    const paths = [...svg.querySelectorAll('path.' + cls)];
    const boxes = paths.map(p => p.getBBox());
    const points = paths.flatMap(p => {
        const out = [];
        for (const m of p.getAttribute('d').matchAll(/[ML]([-0-9.]+) ([-0-9.]+)/g)) {
            out.push([x0 + (Number(m[1]) - left) / width * (x1 - x0), value(Number(m[2]))]);
        }
        return out;
    });
    return {
        max: Math.max(...boxes.map(b => value(b.y))),
        min: Math.min(...boxes.map(b => value(b.y + b.height))),
        points: points,
        pixel: (y1 - y0) / height,
    };";

/// The findings' pressure chart plots the pressures the summary reports (its JSON over HTTP, an
/// independent read of the same log): the greatest reading shaded on the chart and the greatest
/// bucket mean bracket the summary's greatest pressure (the summary's time steps are finer than the
/// chart's buckets and coarser than the readings), the duration curve (of one-minute means) at 5 %
/// and 95 % of the time is the summary's 95th and 5th percentile (of its finer time steps) within a
/// tenth of their spread, and the US chart is the SI one in psig.
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_plotted_pressure_is_the_summarys() {
    let server = Server::demo();
    let sm = server.get("/api/v1/audits/1/summary").json();
    let p = &sm["pressure"];
    let (max, p95, p5) = (
        p["max_bar_g"].as_f64().expect("max pressure"),
        p["p95_bar_g"].as_f64().expect("p95"),
        p["p5_bar_g"].as_f64().expect("p5"),
    );
    let b = Browser::start();
    let mut si_max = 0.0;
    for (units, k) in [("si", 1.0), ("us", 1e5 / PA_PER_PSI)] {
        b.goto(&server.url(&format!("/audits/1/findings?units={units}")));
        let band = b.js(PLOTTED, json!(["plot-pressure", "band"]));
        let line = b.js(PLOTTED, json!(["plot-pressure", "line"]));
        let curve = b.js(PLOTTED, json!(["plot-pressure-duration", "line"]));
        let f = |v: &Value, key: &str| v[key].as_f64().unwrap_or_else(|| panic!("{units}: {key} of {v}"));
        let pixel = f(&band, "pixel");
        eprintln!(
            "{units}: summary max {:.4}, p95 {:.4}; plotted band max {:.4}, mean line max {:.4}, pixel {pixel:.4}",
            max * k,
            p95 * k,
            f(&band, "max"),
            f(&line, "max")
        );
        // Half a pixel of drawing, 0.05 of a unit of path rounding.
        let tol = pixel;
        assert!(
            f(&band, "max") >= max * k - tol,
            "{units}: the shaded band tops out below the summary's greatest pressure"
        );
        assert!(
            f(&line, "max") <= max * k + tol,
            "{units}: a bucket mean above the summary's greatest pressure"
        );
        // The greatest reading is a few hundredths of a bar above the greatest time step at most
        // (the demo's pressure swings about 0.5 bar over a load cycle of minutes).
        assert!(
            f(&band, "max") - max * k <= 0.1 * k + tol,
            "{units}: the band's top is far above the summary's"
        );
        // The duration curve: at 5 % of the time, the 95th percentile; at 95 %, the 5th.
        let pts = curve["points"].as_array().expect("points");
        let at = |share: f64| {
            pts.iter()
                .map(|p| (p[0].as_f64().unwrap(), p[1].as_f64().unwrap()))
                .min_by(|a, b| (a.0 - share).abs().total_cmp(&(b.0 - share).abs()))
                .unwrap()
                .1
        };
        let spread = (p95 - p5) * k;
        eprintln!(
            "{units}: curve at 5 % {:.4} (p95 {:.4}), at 95 % {:.4} (p5 {:.4})",
            at(5.0),
            p95 * k,
            at(95.0),
            p5 * k
        );
        assert!((at(5.0) - p95 * k).abs() <= 0.10 * spread + tol, "{units}: the curve at 5 % is not the p95");
        assert!((at(95.0) - p5 * k).abs() <= 0.10 * spread + tol, "{units}: the curve at 95 % is not the p5");
        if units == "si" {
            si_max = f(&band, "max");
        } else {
            let psig = si_max * 1e5 / PA_PER_PSI;
            assert!(
                (f(&band, "max") - psig).abs() <= 2.0 * pixel,
                "US {:.3} psig against SI {psig:.3} psig",
                f(&band, "max")
            );
        }
    }
    let severe = b.severe_logs("/audits/1/findings");
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}

/// The report and the findings are grouped as ISO 11011 groups an assessment: supply, then
/// transmission, then demand, then the measures and the methods, in that order on the page.
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_report_and_the_findings_run_supply_transmission_demand() {
    let server = Server::demo();
    let b = Browser::start();
    for (page, measures) in [("report", "Measures"), ("findings", "Recommendations")] {
        b.goto(&server.url(&format!("/audits/1/{page}")));
        let heads: Vec<String> = b
            .js("return [...document.querySelectorAll('main h2')].map(h => h.innerText)", json!([]))
            .as_array()
            .expect("headings")
            .iter()
            .map(|h| h.as_str().unwrap_or("").to_string())
            .collect();
        let at = |start: &str| {
            heads
                .iter()
                .position(|h| h.starts_with(start))
                .unwrap_or_else(|| panic!("{page}: no heading starting {start:?} in {heads:?}"))
        };
        let order = [at("Supply"), at("Transmission"), at("Demand"), at(measures), at("Methods")];
        assert!(order.windows(2).all(|w| w[0] < w[1]), "{page}: headings out of order: {heads:?}");
        // Each section holds its own figures: the compressors under supply, the pressure under
        // transmission, the leaks under demand.
        for (section, inside) in [
            ("supply", "Against the data sheets"),
            ("transmission-section", "Pressure"),
            ("demand-section", "Leaks"),
        ] {
            let text = b.js_str(&format!("return document.getElementById('{section}').innerText"));
            let inside = if page == "findings" && inside == "Against the data sheets" {
                "Compressors against their data sheets"
            } else {
                inside
            };
            assert!(
                text.to_lowercase().contains(&inside.to_lowercase()),
                "{page}: {section} does not hold {inside:?}"
            );
        }
    }
    let severe = b.severe_logs("report and findings");
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}

/// Each recorded field test prints with what was measured (pressures, duration, volume) and what it
/// found. A bleed-down of 3.0 m³ from 7.0 to 5.5 bar(g) in 95 s: mean leak flow
/// V (p1 - p2) / (p_atm t), free air (US DOE, Improving Compressed Air System Performance: A
/// Sourcebook for Industry, 2003, on estimating leakage; cited from memory), with p_atm at the site's altitude by the
/// ISO 2533 troposphere formula; a load/unload test of 40 s loaded and 160 s unloaded: leaks take
/// 40 / (40 + 160) = 20 % of the machine's rated flow (same source).
#[test]
#[cfg_attr(
    not(any(all(has_browser, has_pdftools), ci)),
    ignore = "needs Debian's chromium, chromium-driver and poppler-utils: apt-get install chromium chromium-driver poppler-utils"
)]
fn printed_findings_carry_each_field_tests_inputs_and_result() {
    let server = Server::demo();
    let r = server.post_json(
        "/api/v1/audits/1/field-tests",
        &json!({"kind": "bleed_down", "volume_m3": 3.0, "start_pressure_bar_g": 7.0, "end_pressure_bar_g": 5.5, "duration_s": 95}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let r = server.post_json(
        "/api/v1/audits/1/field-tests",
        &json!({"kind": "load_unload", "compressor": "C2", "loaded_s": 40, "unloaded_s": 160}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let site = &server.get("/api/v1/audits/1").json()["site"];
    let p_atm_kpa = site["atmospheric_pressure_kpa_abs"].as_f64().unwrap_or_else(|| {
        let h = site["altitude_m"].as_f64().unwrap_or(0.0);
        101.325 * (1.0 - 2.255_77e-5 * h).powf(5.255_88)
    });
    let q = 3.0 * 1.5 / (p_atm_kpa / 100.0 * 95.0 / 60.0);
    // The layout text: a table's cells side by side, line by line, as the page prints them (the
    // plain text flows the cells' blocks in an order that shifts as their lengths change).
    let (text, _, _) = print_demo(&server, "/audits/1/findings?units=si", "findings-field-tests");
    let flat = squash(&text);
    // A table's cells side by side interleave their lines in the PDF's text: each piece apart, its
    // words in order, a cell's line apart from its next by at most a line of the cells beside it.
    let words: Vec<&str> = flat.split_whitespace().collect();
    let in_order = |want: &str| {
        let w: Vec<&str> = want.split_whitespace().collect();
        (0..words.len()).any(|start| {
            let mut at = start;
            w.iter().enumerate().all(|(k, x)| {
                let reach = if k == 0 { 1 } else { 16 };
                match words[at..words.len().min(at + reach)].iter().position(|y| {
                    y.trim_end_matches([';', ',', '.']) == *x || (k + 1 == w.len() && y.starts_with(*x))
                }) {
                    Some(i) => {
                        at += i + 1;
                        true
                    }
                    None => false,
                }
            })
        })
    };
    for want in [
        "Pressure fell from 7.00 bar(g)",
        "to 5.50 bar(g) in 95 s",
        "system volume 3.00 m³ (as measured)",
        "Compressor C2: loaded for 40 s and unloaded for 2.7 min",
        "Leaks take 20.0 % of C2",
    ] {
        let at = flat.find("Pressure fell").unwrap_or(0);
        assert!(
            in_order(want),
            "no {want:?} in the printed findings:\n{}",
            &flat[at..flat.len().min(at + 1500)]
        );
    }
    let printed: f64 = flat
        .split("Mean leak flow ")
        .nth(1)
        .and_then(|t| t.split_whitespace().next())
        .and_then(|n| n.parse().ok())
        .unwrap_or_else(|| panic!("no mean leak flow printed"));
    // Printed to three significant figures or so: half a unit of the last place, and the atmosphere.
    assert!(
        (printed - q).abs() <= 0.005 * q + 0.005,
        "printed mean leak flow {printed} against {q:.4} m³/min"
    );
}

/// A compressor's tag is the user's text: on the findings' charts (legend, bar labels, data
/// attributes) it is escaped like everywhere else, never markup.
#[test]
fn a_hostile_tag_on_the_charts_is_escaped() {
    let server = Server::demo();
    let audit = server.get("/api/v1/audits/1").json();
    let c1 = audit["compressors"]
        .as_array()
        .expect("compressors")
        .iter()
        .find(|c| c["tag"] == "C1")
        .expect("C1")
        .clone();
    let mut body = c1.clone();
    let tag = "C1 <b>x</b> & \"q\"";
    body["tag"] = json!(tag);
    for k in ["id", "notes_html"] {
        if let Some(o) = body.as_object_mut() {
            o.remove(k);
        }
    }
    let r = server.put_json(&format!("/api/v1/audits/1/compressors/{}", c1["id"]), &body);
    assert_eq!(r.status, 200, "{}", r.text);
    let html = server.get("/audits/1/findings").text;
    let svgs: Vec<&str> =
        html.split("<svg").skip(1).map(|s| s.split("</svg>").next().unwrap_or("")).collect();
    assert!(svgs.len() >= 6, "{} charts", svgs.len());
    let load = svgs.iter().find(|s| s.contains("id=\"plot-load\"")).expect("the load chart");
    assert!(
        load.contains("C1 &lt;b&gt;x&lt;/b&gt; &amp; &quot;q&quot;"),
        "the tag is not on the load chart, escaped:\n{load}"
    );
    assert!(!html.contains("<b>x</b>"), "the tag became markup");
}
