//! Issue 19 in the browser: with US customary chosen, a dryer opened in its edit form on the
//! treatment page shows its rated flow in cfm; saved unchanged it keeps the stored SI value to the
//! bit, and a flow typed in cfm and a filter's drops typed in psi are stored as the SI the NIST
//! SP 811 factors give.

use super::*;

// NIST SP 811 (2008), Appendix B.8, written here from the standard: 1 ft³ = 0.028 316 846 592 m³
// (exact), 1 psi = 6 894.757 293 168 Pa.
const M3_PER_FT3: f64 = 0.028_316_846_592;
const BAR_PER_PSI: f64 = 6_894.757_293_168 / 1e5;

fn back_on(b: &Browser, path: &str) {
    let ok = wait_until(Duration::from_secs(30), || {
        b.js("return location.pathname", json!([])).as_str() == Some(path)
            && b.js("return document.readyState", json!([])) == "complete"
    });
    assert!(ok, "the page did not go back to {path}");
    b.settle();
}

#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn a_dryer_edited_in_us_units_keeps_its_si_value() {
    let s = Server::start();
    let r = s.post_json(
        "/api/v1/audits",
        &json!({"name": "US plant", "site": {"altitude_m": 0, "display_units": "us"}}),
    );
    let id = r.json()["id"].as_i64().unwrap();
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/dryers"),
        &json!({"tag": "D1", "kind": "heatless_desiccant", "rated_flow_m3_min": 10.3, "purge_fraction": 0.17,
                "power_kw": 0.3, "control": "fixed_cycle"}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let did = r.json()["id"].as_i64().unwrap();
    let dryers = format!("/api/v1/audits/{id}/dryers");
    let before = s.get(&dryers).json()["dryers"][0].clone();
    let page = format!("/audits/{id}/treatment");
    let b = Browser::start();
    b.goto(&s.url(&page));

    // The edit form, opened, shows the flow in cfm (10.3 / 0.028316846592 = 363.74... cfm, 363.7).
    let form = format!("edit-dryers-{did}");
    let shown = b.js(
        "const f = document.getElementById(arguments[0]); f.closest('details').open = true;
         return [f.elements.rated_flow_m3_min.value, f.elements.purge_percent.value,
                 f.elements.kind.value, f.closest('details').open];",
        json!([form]),
    );
    let cfm: f64 = shown[0].as_str().unwrap().parse().unwrap();
    // Shown to 0.1 cfm, the field's resolution (`core::entry`).
    assert!((cfm - 10.3 / M3_PER_FT3).abs() <= 0.05, "{shown}");
    assert_eq!(shown[1], "17");
    assert_eq!(shown[2], "heatless_desiccant");
    // Saved unchanged, twice: nothing moves, the stored 10.3 m³/min keeps its bits.
    for _ in 0..2 {
        b.js("document.getElementById(arguments[0]).requestSubmit()", json!([form]));
        back_on(&b, &page);
    }
    let after = s.get(&dryers).json()["dryers"][0].clone();
    assert_eq!(after, before, "an unchanged save moved the dryer");
    assert_eq!(after["rated_flow_m3_min"].as_f64().unwrap().to_bits(), 10.3f64.to_bits());

    // 400 cfm typed: 400 × 0.028316846592 m³/min.
    b.js(
        "const f = document.getElementById(arguments[0]); f.closest('details').open = true;
         f.elements.rated_flow_m3_min.value = '400'; f.requestSubmit();",
        json!([form]),
    );
    back_on(&b, &page);
    let d = s.get(&dryers).json()["dryers"][0].clone();
    assert!((d["rated_flow_m3_min"].as_f64().unwrap() - 400.0 * M3_PER_FT3).abs() < 1e-12, "{d}");
    assert_eq!(d["purge_fraction"], 0.17);

    // A filter added with its drops in psi: stored in bar.
    b.js(
        "const f = document.querySelector('form[action$=\"/treatment/filters\"]');
         f.elements.tag.value = 'F1'; f.elements.kind.value = 'coalescing';
         f.elements.rated_flow_m3_min.value = '350'; f.elements.clean_drop_bar.value = '1.5';
         f.elements.measured_drop_bar.value = '6'; f.requestSubmit();",
        json!([]),
    );
    back_on(&b, &page);
    let f = s.get(&format!("/api/v1/audits/{id}/filters")).json()["filters"][0].clone();
    assert!((f["clean_drop_bar"].as_f64().unwrap() - 1.5 * BAR_PER_PSI).abs() < 1e-12, "{f}");
    assert!((f["measured_drop_bar"].as_f64().unwrap() - 6.0 * BAR_PER_PSI).abs() < 1e-12, "{f}");
    assert!((f["rated_flow_m3_min"].as_f64().unwrap() - 350.0 * M3_PER_FT3).abs() < 1e-12, "{f}");
    let rows = b.js_str("return document.getElementById('treatment-items').innerText").replace('\u{a0}', " ");
    assert!(rows.contains("Filter F1") && rows.contains("6.0 psi"), "{rows}");
    let severe = b.severe_logs(&page);
    assert!(severe.is_empty(), "console errors (SEVERE):\n{}", severe.join("\n"));
}

/// Issue 16: an end use at 300 psig on a plant whose compressor makes 7.5 bar(g) (108.78 psig, quoted 108.7 inward) and
/// a 5 in opening are refused beside their fields, in psig and inches, with what was typed kept
/// in the form; ticking "fed through a booster" then stores it.
#[test]
#[cfg_attr(
    not(any(has_browser, ci)),
    ignore = "needs Debian's chromium and chromium-driver: apt-get install chromium chromium-driver poppler-utils"
)]
fn an_implausible_end_use_is_refused_beside_its_fields_keeping_what_was_typed() {
    let s = Server::start();
    let id = s.us_audit_in_chicago("guardrails");
    let b = Browser::start();
    let page = format!("/audits/{id}/treatment");
    b.goto(&s.url(&page));
    let fill = "const f = document.querySelector('form[action$=\"/treatment/end-uses\"]');
         f.elements.name.value = 'blow-off'; f.elements.kind.value = 'open_blowing';
         f.elements.orifice_mm.value = arguments[0]; f.elements.pressure_bar_g.value = '300';
         f.elements.boosted.checked = arguments[1]; f.requestSubmit();";
    b.js(fill, json!(["5", false]));
    let refused = wait_until(Duration::from_secs(30), || {
        b.js(
            "return document.readyState === 'complete' && document.querySelectorAll('.field-error').length",
            json!([]),
        ) == 2
    });
    assert!(refused, "no refusals beside the fields");
    let beside = b.js(
        "const f = document.querySelector('form[action$=\"/treatment/end-uses\"]');
         return [...f.querySelectorAll('.field-error')].map((e) => [e.previousElementSibling.name, e.textContent,
                 e.previousElementSibling.value]);",
        json!([]),
    );
    let rows = beside.as_array().unwrap();
    let by = |name: &str| {
        rows.iter().find(|r| r[0] == name).unwrap_or_else(|| panic!("nothing beside {name}: {beside}"))
    };
    let opening = by("orifice_mm");
    assert!(
        opening[1].as_str().unwrap().contains("must be at most 1 in")
            && opening[1].as_str().unwrap().ends_with("got 5 in"),
        "{beside}"
    );
    assert_eq!(opening[2], "5", "the typed bore is kept");
    let pressure = by("pressure_bar_g");
    assert!(pressure[1].as_str().unwrap().contains("300 psig is above the 108.7 psig"), "{beside}");
    assert_eq!(pressure[2], "300", "the typed pressure is kept");
    assert!(s.get(&format!("/api/v1/audits/{id}/end-uses")).json()["end_uses"]
        .as_array()
        .unwrap()
        .is_empty());
    // A plausible opening through a booster is taken.
    b.js(fill, json!(["0.0625", true]));
    back_on(&b, &page);
    let uses = s.get(&format!("/api/v1/audits/{id}/end-uses")).json();
    assert_eq!(uses["end_uses"][0]["boosted"], true, "{uses}");
    let rows = b.js_str("return document.getElementById('treatment-items').innerText");
    assert!(rows.contains("through a booster"), "{rows}");

    // A duty of 150 % and a dryer's purge of 150 %: the forms are `novalidate` and their boxes are
    // decimal text boxes, so no bubble of the browser's own (an input's max of 100) stops the post
    // one field at a time, and our refusal stands beside the field, the typed value kept.
    for (list, fill, field) in [
        (
            "end-uses",
            "f.elements.name.value = 'nozzles'; f.elements.kind.value = 'tool'; f.elements.flow_m3_min.value = '10'; \
             f.elements.duty_percent.value = '150';",
            "duty_percent",
        ),
        (
            "dryers",
            "f.elements.tag.value = 'D9'; f.elements.kind.value = 'heatless_desiccant'; \
             f.elements.rated_flow_m3_min.value = '350'; f.elements.purge_percent.value = '150';",
            "purge_percent",
        ),
    ] {
        b.goto(&s.url(&page));
        let form = format!("form[action$=\"/treatment/{list}\"]");
        let valid = b.js(
            &format!("const f = document.querySelector(arguments[0]); {fill} return [f.noValidate, f.checkValidity()];"),
            json!([form]),
        );
        assert_eq!(valid[0], true, "{list}: the form is not novalidate");
        // Decimal text boxes (no browser number box, which misreads a decimal comma) carry no limit
        // of the browser's own: our refusal is the only one.
        assert_eq!(valid[1], true, "{list}: a limit of the browser's own would stop the post");
        b.js("document.querySelector(arguments[0]).requestSubmit()", json!([form]));
        let refused = wait_until(Duration::from_secs(30), || {
            b.js(
                "return document.readyState === 'complete' && document.querySelectorAll('.field-error').length > 0",
                json!([]),
            ) == true
        });
        assert!(refused, "{list}: no refusal beside the field");
        let beside = b.js(
            "const f = document.querySelector(arguments[0]);
             return [...f.querySelectorAll('.field-error')].map((e) => [e.previousElementSibling.name,
                     e.textContent, e.previousElementSibling.value]);",
            json!([form]),
        );
        let row = beside.as_array().unwrap().iter().find(|r| r[0] == field).cloned();
        let row = row.unwrap_or_else(|| panic!("{list}: nothing beside {field}: {beside}"));
        assert!(row[1].as_str().unwrap().contains("150"), "{beside}");
        assert_eq!(row[2], "150", "the typed value is kept");
    }
}
