//! Issue 16 on the field-tests page: the compression calculator, typed and read in the reader's
//! units, checked against the fixture's independent values (`tests/reference/make_reference.py`:
//! fluids 1.3.1 `isothermal_work_compression`, `isentropic_work_compression` and
//! `isentropic_T_rise_compression` per stage, for API.md's example: 10 m³/min free air at
//! 101.325 kPa and 20 °C to 7 bar(g), 2 stages, isentropic efficiency 0.8, coolers to 30 °C), and
//! every refusal at once beside its field.

use super::*;

fn fixture(name: &str) -> f64 {
    let f: Value = serde_json::from_str(include_str!("../reference/fixture.json")).unwrap();
    f["values"][name]["value"].as_f64().unwrap_or_else(|| panic!("fixture has no {name}"))
}

/// NIST SP 811 (2008), Appendix B.8: 1 psi = 6 894.757 293 168 Pa, 1 ft³ = 0.028 316 846 592 m³.
const PA_PER_PSI: f64 = 6_894.757_293_168;
const M3_PER_FT3: f64 = 0.028_316_846_592;

/// The kW figure after `label` in the calculator's result line ("Isothermal power 34.9 kW").
fn kw_after(text: &str, label: &str) -> f64 {
    let rest = &text[text.find(label).unwrap_or_else(|| panic!("no {label:?} in {text:?}")) + label.len()..];
    let n: String =
        rest.trim_start().chars().take_while(|c| c.is_ascii_digit() || *c == '.' || *c == ',').collect();
    n.replace(',', "").parse().unwrap_or_else(|_| panic!("no number after {label:?} in {text:?}"))
}

/// Fill the compression form with `fields` (name, value as typed) and submit it; the result's text.
fn calculate(b: &Browser, fields: &[(&str, &str)]) -> (String, String) {
    b.js(
        "const f = document.getElementById('compression-form');
         document.getElementById('compression-result').replaceChildren();
         for (const [k, v] of arguments[0]) f.elements[k].value = v;
         f.requestSubmit();",
        json!([fields]),
    );
    assert!(
        wait_until(Duration::from_secs(20), || {
            b.js("return !!document.getElementById('compression-powers')", json!([])) == true
        }),
        "no result"
    );
    let line =
        b.js_str("return document.getElementById('compression-powers').textContent").replace('\u{a0}', " ");
    let stages = b
        .js_str("const t = document.getElementById('compression-stages'); return t ? t.innerText : ''")
        .replace('\u{a0}', " ");
    (line, stages)
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn the_compression_calculator_works_in_the_readers_units() {
    let s = Server::start();
    let b = Browser::start();
    let iso = fixture("compress.isothermal_power_w") / 1000.0;
    let isentropic = fixture("compress.isentropic_power_w") / 1000.0;
    let shaft = fixture("compress.shaft_power_w") / 1000.0;
    let t1 = fixture("compress.stage1.discharge_temperature_k") - 273.15;
    let t2 = fixture("compress.stage2.discharge_temperature_k") - 273.15;
    for units in ["si", "us"] {
        // At sea level, inlet 20 °C: the site's air is the example's.
        let id = s.audit_in_chicago(&format!("calc {units}"), units);
        let page = s.url(&format!("/audits/{id}/tests"));
        b.goto(&page);
        let label = b.js_str("return document.getElementById('compression-form').innerText");
        let fields: Vec<(&str, String)> = if units == "si" {
            assert!(
                label.contains("Flow, m³/min free air") && label.contains("Discharge pressure, bar(g)"),
                "{label}"
            );
            vec![
                ("flow_m3_min", "10".into()),
                ("discharge_pressure_bar_g", "7".into()),
                ("intercooled_to_c", "30".into()),
            ]
        } else {
            assert!(
                label.contains("Flow, cfm free air") && label.contains("Discharge pressure, psig"),
                "{label}"
            );
            // The same example typed in US units: 10 m³/min = 353.147 cfm, 7 bar(g) = 101.526 psig,
            // 30 °C = 86 °F.
            vec![
                ("flow_m3_min", format!("{:.6}", 10.0 / M3_PER_FT3)),
                ("discharge_pressure_bar_g", format!("{:.6}", 7.0e5 / PA_PER_PSI)),
                ("intercooled_to_c", "86".into()),
            ]
        };
        let mut typed: Vec<(&str, &str)> = fields.iter().map(|(k, v)| (*k, v.as_str())).collect();
        typed.extend([("stages", "2"), ("isentropic_efficiency", "0.8")]);
        let (line, stages) = calculate(&b, &typed);
        for (label, want) in [
            ("Isothermal power", iso),
            ("isentropic power at these stages", isentropic),
            ("shaft power", shaft),
        ] {
            let got = kw_after(&line, label);
            assert!(
                (got - want).abs() <= 0.051,
                "{units}: {label} {got} kW against fluids' {want:.3}: {line}"
            );
        }
        // Each stage's discharge temperature in the reader's unit.
        let (t1, t2, unit, decimals) =
            if units == "si" { (t1, t2, "°C", 1) } else { (t1 * 1.8 + 32.0, t2 * 1.8 + 32.0, "°F", 0) };
        for t in [t1, t2] {
            let want = format!("{t:.decimals$} {unit}");
            assert!(stages.contains(&want), "{units}: no {want} in the stages:\n{stages}");
        }
        assert!(stages.contains(&format!("{:.3}", fixture("compress.stage1.pressure_ratio"))), "{stages}");

        // Three wrong fields: every refusal at once, beside each, in the reader's units.
        let (line, _) = calculate(
            &b,
            &[
                ("flow_m3_min", "-5"),
                ("discharge_pressure_bar_g", "900"),
                ("stages", "0"),
                ("intercooled_to_c", ""),
            ],
        );
        let beside = b.js(
            "return [...document.querySelectorAll('#compression-form .field-error')].map((e) => [e.previousElementSibling.name, e.textContent])",
            json!([]),
        );
        let names: Vec<&str> = beside.as_array().unwrap().iter().map(|p| p[0].as_str().unwrap()).collect();
        assert_eq!(names, ["flow_m3_min", "discharge_pressure_bar_g", "stages"], "{units}: {beside}");
        let (p_unit, q_unit) = if units == "si" { ("bar(g)", "m³/min") } else { ("psig", "cfm") };
        assert!(
            line.contains(&format!("got 900 {p_unit}")) && line.contains(&format!("got -5 {q_unit}")),
            "{units}: {line}"
        );
        // What was typed stays in the form.
        let kept = b.js_str(
            "return document.getElementById('compression-form').elements.discharge_pressure_bar_g.value",
        );
        assert_eq!(kept, "900");
        // The refusal's 422 is the browser's log of the reply asked for; nothing else may be.
        let severe: Vec<String> =
            b.severe_logs(&page).into_iter().filter(|l| !l.contains("status of 422")).collect();
        assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
    }
}
