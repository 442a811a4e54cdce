//! Issue 16 on the treatment page and the API: values the trade never sees are refused with the
//! reason in words and the limit in the reader's units, every refusal at once, and what was typed
//! is kept; an end use cannot get more pressure than the plant's compressors make unless a booster
//! feeds it.

use super::support::*;
use serde_json::json;

/// NIST SP 811 (2008), Appendix B.8: 1 psi = 6 894.757 293 168 Pa; 1 in = 25.4 mm exactly.
const PA_PER_PSI: f64 = 6_894.757_293_168;

/// The refusals of a 422 API reply, field -> message.
fn refusals(r: &Resp) -> Vec<(String, String)> {
    assert_eq!(r.status, 422, "{}", r.text);
    let e = &r.json()["error"];
    match e["errors"].as_array() {
        Some(all) => all
            .iter()
            .map(|x| (x["field"].as_str().unwrap().to_string(), x["message"].as_str().unwrap().to_string()))
            .collect(),
        None => vec![(e["field"].as_str().unwrap().to_string(), e["message"].as_str().unwrap().to_string())],
    }
}

/// The page's text as a reader sees it (no-break spaces as spaces, quotes unescaped).
fn page_text(r: &Resp) -> String {
    r.text.replace('\u{a0}', " ").replace("&quot;", "\"").replace("&#34;", "\"").replace("&#39;", "'")
}

#[test]
fn an_end_use_above_the_plants_pressure_needs_a_booster() {
    let s = Server::start();
    // C1 is rated 7.5 bar(g) with no highest working pressure on its data sheet: the plant's
    // highest is 7.5 bar(g) = 750 000 / 6 894.757 = 108.78 psig, quoted rounded inward to the
    // field's 0.1 psig so that the value quoted is itself accepted: 108.7 psig.
    let id = s.us_audit_in_chicago("boosted");
    let limit_psig = 7.5e5 / PA_PER_PSI;
    assert_eq!(format!("{:.1}", (limit_psig * 10.0).floor() / 10.0), "108.7");
    let page = s.get(&format!("/audits/{id}/treatment"));
    assert!(page_text(&page)
        .contains("(at most the plant's 108.7 psig, C1's highest, unless a booster feeds it)"));
    let form = |pressure: &str, boosted: bool| {
        let mut f = vec![
            ("entry_units", "us"),
            ("name", "blow-off"),
            ("kind", "open_blowing"),
            ("count", "2"),
            ("orifice_mm", "0.0625"),
            ("pressure_bar_g", pressure),
            ("duty_percent", "50"),
        ];
        if boosted {
            f.push(("boosted", "on"));
        }
        s.post_form(&format!("/audits/{id}/treatment/end-uses"), &f)
    };
    let r = form("300", false);
    assert_eq!(r.status, 422, "{}", r.text);
    let text = page_text(&r);
    assert!(
        text.contains("Pressure at the use: 300 psig is above the 108.7 psig the plant's compressors can make (C1's highest pressure on its data sheet)"),
        "{text}"
    );
    assert!(text.contains("tick \"fed through a booster\""), "the way out is named");
    // What was typed comes back with the refusal, in the units typed.
    assert!(text.contains("\"pressure_bar_g\":\"300\""), "the typed pressure is kept");
    let listed =
        || s.get(&format!("/api/v1/audits/{id}/end-uses")).json()["end_uses"].as_array().unwrap().clone();
    assert!(listed().is_empty(), "nothing stored");
    // At the plant's pressure it is taken; above it with a booster too.
    assert!(matches!(form("108", false).status, 200 | 303));
    let r = form("300", true);
    assert!(matches!(r.status, 200 | 303), "{} {}", r.status, r.text);
    let uses = listed();
    assert_eq!(uses.len(), 2);
    assert_eq!(uses[1]["boosted"], true);
    let bar_g = uses[1]["pressure_bar_g"].as_f64().unwrap();
    assert!((bar_g - 300.0 * PA_PER_PSI / 1e5).abs() < 1e-9, "{bar_g}");
    // A booster's highest, 50 bar(g) = 725.19 psig (725.1 inward), bounds every use.
    let r = form("900", true);
    assert!(page_text(&r).contains("must be at most 725.1 psig"), "{}", r.text);

    // The API refuses the same in the audit's units; a data sheet's highest working pressure
    // raises the plant's.
    let api = format!("/api/v1/audits/{id}/end-uses");
    let body = json!({"name": "n", "kind": "open_blowing", "orifice_mm": 1.6, "pressure_bar_g": 8.0});
    let all = refusals(&s.post_json(&api, &body));
    assert_eq!(all[0].0, "pressure_bar_g");
    // 8 bar(g) = 116.03 psig, said rounded as every figure is.
    assert!(all[0].1.starts_with("116 psig is above the 108.7 psig"), "{}", all[0].1);
    let c1 = json!({"tag": "C1", "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                    "rated_power_kw": 55, "rated_flow_m3_min": 9.5, "rated_pressure_bar_g": 7.5,
                    "max_pressure_bar_g": 8.5});
    let cid = s.get(&format!("/api/v1/audits/{id}")).json()["compressors"][0]["id"].as_i64().unwrap();
    let r = s.put_json(&format!("/api/v1/audits/{id}/compressors/{cid}"), &c1);
    assert_eq!(r.status, 200, "{}", r.text);
    assert_eq!(s.post_json(&api, &body).status, 201);
}

#[test]
fn bores_shares_and_times_beyond_the_trades_are_refused_in_words_all_at_once() {
    let s = Server::start();
    let id = s.us_audit_in_chicago("bounds");
    // A drain of 5 in: timer drain valves have orifices of a few mm, a drain valve's bore is at
    // most ¾ in (common practice); 3 600 s open is a valve left open.
    let r = s.post_form(
        &format!("/audits/{id}/treatment/drains"),
        &[
            ("entry_units", "us"),
            ("tag", "T1"),
            ("kind", "timer"),
            ("open_s", "3600"),
            ("interval_s", "7200"),
            ("orifice_mm", "5"),
        ],
    );
    assert_eq!(r.status, 422, "{}", r.text);
    let text = page_text(&r);
    assert!(text.contains("Orifice or opening: must be at most 0.75 in ("), "{text}");
    assert!(text.contains("a drain valve's bore is at most ¾ in), got 5 in"), "{text}");
    assert!(text.contains("Open time: must be at most 600 s ("), "both at once: {text}");
    assert!(text.contains("\"orifice_mm\":\"5\""), "the typed bore is kept");
    assert!(!text.contains("127"), "no millimetres on a US form");
    // An end use's running share above 100 %, a nozzle of 2 in and a dryer purging 80 %.
    let r = s.post_form(
        &format!("/audits/{id}/treatment/end-uses"),
        &[
            ("entry_units", "us"),
            ("name", "nozzle"),
            ("kind", "open_blowing"),
            ("count", "1"),
            ("orifice_mm", "2"),
            ("pressure_bar_g", "90"),
            ("duty_percent", "150"),
        ],
    );
    let text = page_text(&r);
    assert!(
        text.contains("Running share of production time: must be from 0 % to 100 %, got 150 %"),
        "{text}"
    );
    assert!(text.contains("Orifice or opening: must be at most 1 in ("), "{text}");
    let r = s.post_form(
        &format!("/audits/{id}/treatment/dryers"),
        &[
            ("entry_units", "us"),
            ("tag", "D1"),
            ("kind", "heatless_desiccant"),
            ("rated_flow_m3_min", "353.1466672"),
            ("purge_percent", "80"),
            ("power_kw", "500"),
            ("control", "fixed_cycle"),
        ],
    );
    let text = page_text(&r);
    assert!(text.contains("Purge (share of rated flow): must be from 0 % to 50 % of rated flow"), "{text}");
    // 3 kW per m³/min of a 10 m³/min (353.1 cfm) dryer.
    assert!(text.contains("Electrical input: must be at most 30 kW for a dryer rated 353.1 cfm"), "{text}");
    for list in ["drains", "end-uses", "dryers"] {
        let v = s.get(&format!("/api/v1/audits/{id}/{list}")).json();
        assert_eq!(v.as_object().unwrap().values().next().unwrap().as_array().unwrap().len(), 0, "{v}");
    }
    // The API gives every refusal at once, in the audit's units (US): 127 mm is 5 in.
    let all = refusals(&s.post_json(
        &format!("/api/v1/audits/{id}/drains"),
        &json!({"tag": "T1", "kind": "timer", "open_s": 3600, "interval_s": 7200, "orifice_mm": 127.0}),
    ));
    let fields: Vec<&str> = all.iter().map(|(f, _)| f.as_str()).collect();
    assert_eq!(fields, ["open_s", "orifice_mm"], "{all:?}");
    assert!(all[1].1.contains("at most 0.75 in") && all[1].1.ends_with("got 5 in"), "{all:?}");
    // Plausible values of the trade are taken: a 1/8 in timer drain, 5 s every 300 s.
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/drains"),
        &json!({"tag": "T1", "kind": "timer", "open_s": 5, "interval_s": 300, "orifice_mm": 3.175}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
}

/// What the meter measured is stored, and what depends on the site is derived again when the site
/// changes: a bleed-down recorded at sea level reads more free air once the site is set at 1000 m
/// and a warmer inlet, as V Δp / p_atm × T_inlet / T_air says (US DOE sourcebook, leaks fact
/// sheet); a load/unload test follows its compressor's rated flow.
#[test]
fn a_site_edit_derives_stored_field_tests_again() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let tests = format!("/api/v1/audits/{id}/field-tests");
    let r = s.post_json(
        &tests,
        &json!({"kind": "bleed_down", "volume_m3": 2.0, "start_pressure_bar_g": 7.0,
                "end_pressure_bar_g": 5.0, "duration_s": 120.0, "air_temperature_c": 20.0}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let r = s.post_json(
        &tests,
        &json!({"kind": "load_unload", "compressor": "C1", "loaded_s": 30.0, "unloaded_s": 90.0}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let results = || {
        let a = s.get(&format!("/api/v1/audits/{id}")).json();
        let t = a["field_tests"].as_array().unwrap().clone();
        (t[0]["result"].clone(), t[1]["result"].clone())
    };
    let mean = |r: &serde_json::Value| r["mean_leak_flow_m3_min"].as_f64().unwrap();
    // Sea level (101.325 kPa), inlet 20 °C = the stored air's: 2 m³ × 2 bar / 1.01325 bar / 2 min.
    let (bleed, load) = results();
    let before = bleed.clone();
    let at_sea = 2.0 * 2.0e5 / 101_325.0 / 2.0;
    assert!((mean(&bleed) - at_sea).abs() < 1e-9 * at_sea, "{bleed}");
    // T / (T + t) × 9.5 m³/min = 2.375 m³/min (US DOE sourcebook, leaks fact sheet).
    assert!((load["leak_flow_m3_min"].as_f64().unwrap() - 2.375).abs() < 1e-9, "{load}");

    // The site at 1000 m (89.875 kPa: ASHRAE Fundamentals, chapter 1, eq. 3) and a 35 °C inlet.
    let r = s.patch_json(
        &format!("/api/v1/audits/{id}"),
        &json!({"site": {"altitude_m": 1000, "inlet_temperature_c": 35}}),
    );
    assert_eq!(r.status, 200, "{}", r.text);
    let (bleed, _) = results();
    let up_hill = 2.0 * 2.0e5 / 89_875.0 / 2.0 * (308.15 / 293.15);
    let got = mean(&bleed);
    assert!((got - up_hill).abs() < 1e-4 * up_hill, "{got} against {up_hill}: {bleed}");
    assert!((got / at_sea - 1.185).abs() < 0.001, "the flow follows the site: {got} against {at_sea}");
    // The flow at operating pressure, read from the same stored figures, moved with it.
    let op = |r: &serde_json::Value| r["leak_flow_at_operating_pressure_m3_min"].as_f64().unwrap();
    assert!(op(&bleed) > 1.1 * op(&before), "{bleed} against {before}");

    // A compressor's rated flow edited: the load/unload test reads the new one, 30/120 × 12.
    let cid = s.get(&format!("/api/v1/audits/{id}")).json()["compressors"][0]["id"].as_i64().unwrap();
    let c1 = json!({"tag": "C1", "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                    "rated_power_kw": 55, "rated_flow_m3_min": 12.0, "rated_pressure_bar_g": 7.5});
    assert_eq!(s.put_json(&format!("/api/v1/audits/{id}/compressors/{cid}"), &c1).status, 200);
    let (_, load) = results();
    assert!((load["leak_flow_m3_min"].as_f64().unwrap() - 3.0).abs() < 1e-9, "{load}");
}

/// The findings say a flow's range with its unit once ("2.72–2.89 m³/min free air"), in both unit
/// systems: the leak note's likely range and the leak table's, from the summary's own low and high
/// figures (1 ft³ = 0.028 316 846 592 m³, NIST SP 811).
#[test]
fn the_findings_say_a_ranges_unit_once() {
    let s = Server::demo();
    let sm = s.get("/api/v1/audits/1/summary").json();
    let l = &sm["leaks"];
    let (lo, hi) = (
        l["adopted_leak_flow_m3_min_low"].as_f64().unwrap(),
        l["adopted_leak_flow_m3_min_high"].as_f64().unwrap(),
    );
    // Three significant figures, as every figure prints; cfm with at most one decimal.
    let cfm = |q: f64| {
        let v = q / 0.028_316_846_592;
        if v >= 100.0 {
            format!("{v:.0}")
        } else {
            format!("{v:.1}")
        }
    };
    for (units, want) in [
        ("si", format!("(likely {lo:.2}–{hi:.2} m³/min free air)")),
        ("us", format!("(likely {}–{} cfm free air)", cfm(lo), cfm(hi))),
    ] {
        let page = s.get(&format!("/audits/1/findings?units={units}")).text.replace('\u{a0}', " ");
        assert!(page.contains(&want), "{units}: no {want:?} in the leak note");
        assert!(!page.contains("free air to "), "{units}: a range repeats its unit");
    }
}

/// Issue 16: a record stored before today's checks (a purge of 60 % of rated flow, written into
/// the database as an older version would have kept it) and an end use above a plant's pressure
/// since lowered (C1's highest working pressure removed from its data sheet) still read and are
/// priced as stored, and the treatment page and the findings flag each with the bound it breaks,
/// in the reader's units, so that the user edits it; a record within them is not flagged.
#[test]
fn records_stored_before_the_bounds_are_flagged_with_the_bound() {
    let s = Server::start();
    let id = s.us_audit_in_chicago("old records");
    let cid = s.get(&format!("/api/v1/audits/{id}")).json()["compressors"][0]["id"].as_i64().unwrap();
    let c1 = |max: Option<f64>| {
        json!({"tag": "C1", "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
               "rated_power_kw": 55, "rated_flow_m3_min": 9.5, "rated_pressure_bar_g": 7.5,
               "max_pressure_bar_g": max})
    };
    assert_eq!(s.put_json(&format!("/api/v1/audits/{id}/compressors/{cid}"), &c1(Some(8.5))).status, 200);
    let post = |list: &str, body: Value| {
        let r = s.post_json(&format!("/api/v1/audits/{id}/{list}"), &body);
        assert_eq!(r.status, 201, "{list}: {}", r.text);
    };
    post(
        "dryers",
        json!({"tag": "D1", "kind": "heatless_desiccant", "rated_flow_m3_min": 10, "purge_fraction": 0.15,
               "power_kw": 0.3, "control": "fixed_cycle"}),
    );
    post(
        "end-uses",
        json!({"name": "blow-off", "kind": "open_blowing", "orifice_mm": 1.6, "pressure_bar_g": 8.0}),
    );
    post("drains", json!({"tag": "T1", "kind": "timer", "open_s": 5, "interval_s": 300, "orifice_mm": 3.0}));
    // The dryer as an older version stored it: a purge of 60 %, refused today.
    let db = s.db.clone();
    crate::ingest::on_db(&db, |pool| async move {
        let body: String = sqlx::query_scalar("SELECT body FROM treatment_item WHERE kind = 'dryer'")
            .fetch_one(&pool)
            .await
            .unwrap();
        let mut v: Value = serde_json::from_str(&body).unwrap();
        v["purge_fraction"] = json!(0.6);
        sqlx::query("UPDATE treatment_item SET body = ? WHERE kind = 'dryer'")
            .bind(v.to_string())
            .execute(&pool)
            .await
            .unwrap();
    });
    assert_eq!(s.put_json(&format!("/api/v1/audits/{id}/compressors/{cid}"), &c1(None)).status, 200);
    assert_eq!(s.get(&format!("/api/v1/audits/{id}/dryers")).json()["dryers"][0]["purge_fraction"], 0.6);
    // A day of C1 cycling with a flow meter: the records are priced, the dryer as stored, 0.6 × 10
    // = 6 m³/min of purge on its fixed cycle.
    let r = s.upload(id, "cycle.csv", cycling_csv(24).as_bytes(), &cycling_mapping(), "");
    assert_eq!(r.status, 201, "{}", r.text);
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    let purged = sm["transmission"]["dryers"][0]["purge_m3_min"].as_f64().unwrap();
    assert!((purged - 6.0).abs() < 1e-9, "{}", sm["transmission"]);

    // The bounds, from `core::treatment::bounds`: a purge at most 50 % of rated flow; a use at most
    // the plant's 7.5 bar(g) = 108.78 psig, quoted 108.7 (inward); 8 bar(g) = 116.03 psig said 116.
    let purge = "Purge (share of rated flow): must be from 0 % to 50 % of rated flow (a heatless desiccant \
                 dryer purges 15–20 %; one purging more than half is not drying air), got 60 %";
    let pressure = "Pressure at the use: 116 psig is above the 108.7 psig the plant's compressors can make";
    let page = s.get(&format!("/audits/{id}/treatment"));
    let text = page_text(&page);
    assert_eq!(
        text.matches("class=\"warn outside-bounds\"").count(),
        2,
        "the drain within the bounds flagged"
    );
    assert!(text.contains(&format!("Outside the bounds checked now (stored before them, it is still priced as stored): {purge}. Edit it")), "{text}");
    assert!(text.contains(pressure), "{text}");
    let findings = page_text(&s.get(&format!("/audits/{id}/findings")));
    let at = findings.find("id=\"outside-bounds\"").expect("the findings flag the records");
    let list = &findings[at..at + findings[at..].find("</div>").unwrap()];
    assert!(list.contains(&format!("<li>Dryer D1: {purge}</li>")), "{list}");
    assert!(list.contains(&format!("<li>End use blow-off: {pressure}")), "{list}");
    assert!(!list.contains("T1"), "{list}");
}
