//! The JSON API and the pages over real HTTP (API.md's contract; issue 2's done-when list).

use crate::support::*;

/// Every page of an audit (the routes of `src/web/mod.rs` that answer GET with HTML), for audit 1.
const DEMO_PAGES: [&str; 7] = [
    "/",
    "/audits/1",
    "/audits/1/upload",
    "/audits/1/report",
    "/audits/1/findings",
    "/audits/1/tests",
    "/audits/1/scenarios",
];

#[test]
fn the_demo_serves_every_page_and_lists_its_audit() {
    // Arrange
    let s = Server::demo();
    // Act + Assert: every page answers 200 with HTML.
    for p in DEMO_PAGES {
        let r = s.get(p);
        assert_eq!(r.status, 200, "{p}: {}", r.text);
        assert!(r.content_type.starts_with("text/html"), "{p}: {}", r.content_type);
    }
    let list = s.get("/api/v1/audits").json();
    let audits = list["audits"].as_array().unwrap();
    assert_eq!(audits.len(), 1);
    assert!(audits[0]["name"].as_str().unwrap().contains("demo"));
    assert_eq!(audits[0]["compressors"], 3);
    // The report loads Chart.js from our own server, and the server has it.
    let report = s.get("/audits/1/report").text;
    assert!(report.contains("<script src=\"/static/vendor/chart.umd.min.js\"></script>"));
    let chart = s.get("/static/vendor/chart.umd.min.js");
    assert_eq!(chart.status, 200);
    assert!(chart.text.contains("Chart.js v4"), "the vendored file is Chart.js 4");
    assert!(!report.contains("https://"), "the report references nothing outside this server");
    // The demo's report shows real figures with units.
    assert!(report.contains("kW/(m³/min)"));
    assert!(report.contains("EUR"));
}

#[test]
fn unknown_ids_give_404_in_the_error_shape() {
    let s = Server::start();
    let r = s.get("/api/v1/audits/987654321");
    assert_eq!(r.status, 404);
    assert!(r.json()["error"]["message"].as_str().unwrap().contains("987654321"));
    assert_eq!(s.get("/audits/987654321").status, 404);
    assert_eq!(s.get("/api/v1/no-such-thing").status, 404);
    assert_eq!(s.get("/api/v1/audits/987654321/summary").status, 404);
}

#[test]
fn an_audit_takes_documented_site_defaults_and_the_iso_2533_atmosphere() {
    let s = Server::start();
    let r = s.post_json("/api/v1/audits", &json!({"name": "Altitude works", "site": {"altitude_m": 1000}}));
    assert_eq!(r.status, 201);
    let id = r.json()["id"].as_i64().unwrap();
    let a = s.get(&format!("/api/v1/audits/{id}")).json();
    // ASHRAE Handbook Fundamentals ch. 1 eq. 3 (the ISO 2533 standard atmosphere):
    // p = 101.325 (1 - 2.25577e-5 Z)^5.2559 kPa, 1000 m -> 89.875 kPa.
    let p = a["site"]["atmospheric_pressure_kpa_abs"].as_f64().unwrap();
    assert!((p - 89.875).abs() < 0.01, "{p}");
    assert_eq!(a["site"]["inlet_temperature_c"], 20.0);
    assert_eq!(a["site"]["currency"], "EUR");
    assert_eq!(a["site"]["operating_weeks_per_year"], 52.0);
    // A given atmosphere wins.
    let r = s.post_json(
        "/api/v1/audits",
        &json!({"name": "Given", "site": {"atmospheric_pressure_kpa_abs": 95.5}}),
    );
    let id2 = r.json()["id"].as_i64().unwrap();
    assert_eq!(s.get(&format!("/api/v1/audits/{id2}")).json()["site"]["atmospheric_pressure_kpa_abs"], 95.5);
}

#[test]
fn bad_audit_and_compressor_input_is_422_with_the_field_and_409_on_a_taken_tag() {
    let s = Server::start();
    let r = s.post_json("/api/v1/audits", &json!({"name": "x", "site": {"timezone": "Nowhere/Land"}}));
    assert_eq!(r.status, 422);
    assert_eq!(r.json()["error"]["field"], "timezone");
    let r = s.post_json("/api/v1/audits", &json!({"site": {}}));
    assert_eq!(r.status, 422, "{}", r.text);
    let id = s.audit_with_compressor("C2");
    let url = format!("/api/v1/audits/{id}/compressors");
    let base = json!({"tag": "C3", "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                      "rated_power_kw": 55, "rated_flow_m3_min": 9.5, "rated_pressure_bar_g": 7.5});
    let mut bad = base.clone();
    bad["kind"] = json!("turbo");
    let r = s.post_json(&url, &bad);
    assert_eq!(r.status, 422);
    assert_eq!(r.json()["error"]["field"], "kind");
    let mut bad = base.clone();
    bad["rated_flow_m3_min"] = json!(-1);
    assert_eq!(s.post_json(&url, &bad).json()["error"]["field"], "rated_flow_m3_min");
    let mut taken = base.clone();
    taken["tag"] = json!("C2");
    assert_eq!(s.post_json(&url, &taken).status, 409);
    let r = ureq_raw_post(&s, &url, "{not json");
    assert_eq!(r, 400);
    // The stored compressor carries its defaults.
    let a = s.get(&format!("/api/v1/audits/{id}")).json();
    assert_eq!(a["compressors"][0]["tag"], "C2");
    assert_eq!(a["compressors"][0]["unloaded_power_fraction"], 0.25);
}

fn ureq_raw_post(s: &Server, path: &str, body: &str) -> u16 {
    let agent: ureq::Agent = ureq::Agent::config_builder().http_status_as_error(false).build().into();
    agent
        .post(&s.url(path))
        .header("Content-Type", "application/json")
        .header("Origin", &s.base)
        .send(body)
        .map(|r| r.status().as_u16())
        .unwrap_or(0)
}

#[test]
fn pages_edit_the_site_and_equipment_and_escape_what_people_type() {
    let s = Server::start();
    let name = "<script>alert('x')</script> & Co";
    let r = s.post_json("/api/v1/audits", &json!({"name": name}));
    let id = r.json()["id"].as_i64().unwrap();
    let page = s.get(&format!("/audits/{id}")).text;
    assert!(!page.contains("<script>alert"), "the name must be escaped");
    assert!(
        page.contains("&#60;script&#62;alert(") && page.contains("&#60;/script&#62; &#38; Co"),
        "askama escapes it"
    );
    let index = s.get("/").text;
    assert!(!index.contains("<script>alert"));
    // A form post edits the site; US units then show on the page.
    let agent: ureq::Agent =
        ureq::Agent::config_builder().http_status_as_error(false).max_redirects(0).build().into();
    let r = agent
        .post(&s.url(&format!("/audits/{id}/site")))
        .header("Origin", &s.base)
        .send_form([
            ("name", "Renamed plant"),
            ("display_units", "us"),
            ("altitude_m", "500"),
            ("heating_months", "1, 2, 12"),
        ])
        .unwrap();
    assert_eq!(r.status().as_u16(), 303);
    let a = s.get(&format!("/api/v1/audits/{id}")).json();
    assert_eq!(a["name"], "Renamed plant");
    assert_eq!(a["site"]["display_units"], "us");
    assert_eq!(a["site"]["heating_months"], json!([1, 2, 12]));
    // A receiver and a compressor through the forms.
    let r = agent
        .post(&s.url(&format!("/audits/{id}/receivers")))
        .header("Origin", &s.base)
        .send_form([("name", "wet receiver"), ("volume_m3", "3")])
        .unwrap();
    assert_eq!(r.status().as_u16(), 303);
    let r = agent
        .post(&s.url(&format!("/audits/{id}/compressors")))
        .header("Origin", &s.base)
        .send_form([
            ("tag", "K9"),
            ("kind", "oil_free_screw"),
            ("control", "variable_speed"),
            ("cooling", "water"),
            ("rated_power_kw", "90"),
            ("rated_flow_m3_min", "15"),
            ("rated_pressure_bar_g", "8"),
            ("power_curve", "5:35 10:60 15:90"),
        ])
        .unwrap();
    assert_eq!(r.status().as_u16(), 303);
    let a = s.get(&format!("/api/v1/audits/{id}")).json();
    assert_eq!(a["storage"]["system_volume_m3"], 3.0);
    assert_eq!(a["compressors"][0]["power_curve"], json!([[5.0, 35.0], [10.0, 60.0], [15.0, 90.0]]));
    let page = s.get(&format!("/audits/{id}")).text;
    // 15 m³/min = 529.7 cfm, shown to three figures (1 ft = 0.3048 m exactly, NIST SP 811:
    // 1 m³/min = 35.3147 ft³/min).
    assert!(page.contains("530 cfm free air"), "US units on the page");
    // A bad form value re-shows the page with the reason, 422.
    let r = agent
        .post(&s.url(&format!("/audits/{id}/receivers")))
        .header("Origin", &s.base)
        .send_form([("name", "bad"), ("volume_m3", "-2")])
        .unwrap();
    assert_eq!(r.status().as_u16(), 422);
}

#[test]
fn responses_carry_the_security_headers() {
    let s = Server::start();
    let r = s.get("/");
    let csp = r.header("content-security-policy").unwrap();
    assert!(csp.contains("script-src 'self'") && csp.contains("frame-ancestors 'none'"));
    assert!(!csp.contains("unsafe-inline"));
    assert_eq!(r.header("x-content-type-options"), Some("nosniff"));
    assert_eq!(r.header("referrer-policy"), Some("same-origin"));
}

#[test]
fn the_summary_of_an_audit_without_data_says_so() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    assert_eq!(sm["no_data"], true);
    let report = s.get(&format!("/audits/{id}/report")).text;
    assert!(report.contains("No logger data yet"));
}

#[test]
fn edited_implementation_costs_change_the_payback() {
    let s = Server::demo();
    let sm = s.get("/api/v1/audits/1/summary").json();
    let recs = sm["recommendations"].as_array().unwrap();
    assert!(!recs.is_empty(), "the demo plant has measures");
    let first = &recs[0];
    let kind = first["kind"].as_str().unwrap().to_string();
    let alone = first["standalone_annual_cost_saving"].as_f64().unwrap();
    let r = s.put_json(&format!("/api/v1/audits/1/costs/{kind}"), &json!({"implementation_cost": 12345.0}));
    assert_eq!(r.status, 200, "{}", r.text);
    let sm = s.get("/api/v1/audits/1/summary").json();
    let rec = sm["recommendations"]
        .as_array()
        .unwrap()
        .iter()
        .find(|r| r["kind"] == kind.as_str())
        .unwrap()
        .clone();
    assert_eq!(rec["implementation_cost"], 12345.0);
    // The saving alone does not change; the payback is on the saving where it now stands.
    assert_eq!(rec["standalone_annual_cost_saving"].as_f64().unwrap(), alone);
    let payback = rec["simple_payback_years"].as_f64().unwrap();
    let saving = rec["annual_cost_saving"].as_f64().unwrap();
    assert!((payback - 12345.0 / saving).abs() < 1e-9, "payback = cost / saving (API.md)");
    // In the order they are stacked, and the total is their sum.
    let recs = sm["recommendations"].as_array().unwrap();
    for (i, r) in recs.iter().enumerate() {
        assert_eq!(r["stack_position"], i + 1);
    }
    let sum: f64 = recs.iter().map(|r| r["annual_cost_saving"].as_f64().unwrap()).sum();
    let total = sm["measures_total"]["annual_cost_saving"].as_f64().unwrap();
    assert!((total - sum).abs() < 1e-6 * sum, "{total} {sum}");
    assert_eq!(
        s.put_json("/api/v1/audits/1/costs/paint_pipes", &json!({"implementation_cost": 1})).status,
        422
    );
}

#[test]
fn the_auditor_reorders_and_leaves_out_measures_and_the_stack_is_priced_again() {
    let s = Server::demo();
    let sm = s.get("/api/v1/audits/1/summary").json();
    let kinds = |sm: &Value| -> Vec<String> {
        sm["recommendations"]
            .as_array()
            .unwrap()
            .iter()
            .map(|r| r["kind"].as_str().unwrap().to_string())
            .collect()
    };
    let before = kinds(&sm);
    assert!(before.contains(&"repair_leaks".to_string()) && before.contains(&"lower_pressure".to_string()));
    assert_eq!(s.get("/api/v1/audits/1/measures").json()["order"], json!([]));
    // Pressure first, heat recovery left out.
    let plan = json!({"order": ["lower_pressure", "repair_leaks"], "excluded": ["recover_heat"]});
    let r = s.put_json("/api/v1/audits/1/measures", &plan);
    assert_eq!(r.status, 200, "{}", r.text);
    assert_eq!(s.get("/api/v1/audits/1/measures").json()["order"], plan["order"]);
    let sm = s.get("/api/v1/audits/1/summary").json();
    let after = kinds(&sm);
    assert_eq!(&after[..2], &["lower_pressure".to_string(), "repair_leaks".to_string()]);
    assert!(!after.contains(&"recover_heat".to_string()));
    assert_eq!(sm["measures_total"]["excluded"], json!(["recover_heat"]));
    let recs = sm["recommendations"].as_array().unwrap();
    let f = |v: &Value| v.as_f64().unwrap();
    // First in the stack: its saving is its saving alone; below it, never more than alone.
    assert_eq!(f(&recs[0]["annual_energy_saving_kwh"]), f(&recs[0]["standalone_annual_energy_saving_kwh"]));
    for r in recs {
        assert!(
            f(&r["annual_energy_saving_kwh"]) <= f(&r["standalone_annual_energy_saving_kwh"]) + 1e-6,
            "{r}"
        );
        assert!(f(&r["annual_energy_saving_kwh_low"]) <= f(&r["annual_energy_saving_kwh"]));
        assert!(f(&r["annual_energy_saving_kwh_high"]) >= f(&r["annual_energy_saving_kwh"]));
        assert!(!r["method_and_sources"].as_str().unwrap().is_empty());
    }
    let sum: f64 = recs.iter().map(|r| f(&r["annual_energy_saving_kwh"])).sum();
    assert!((f(&sm["measures_total"]["annual_energy_saving_kwh"]) - sum).abs() < 1e-6 * sum);
    // A bad plan is refused naming its field; an unknown field too.
    let r = s.put_json("/api/v1/audits/1/measures", &json!({"heat_recovery_effectiveness_air": 2.0}));
    assert_eq!(r.status, 422, "{}", r.text);
    assert_eq!(r.json()["error"]["field"], "heat_recovery_effectiveness_air");
    assert_eq!(s.put_json("/api/v1/audits/1/measures", &json!({"sort": []})).status, 422);
    assert_eq!(s.put_json("/api/v1/audits/9/measures", &json!({})).status, 404);
    // The findings page shows both columns and the order.
    let page = s.get("/audits/1/findings").text;
    assert!(
        page.contains("Saving a year")
            && page.contains("<th class=\"num\">alone</th><th class=\"num\">stacked</th>")
            && page.contains("Method and sources")
    );
}

/// The measures' own words (title, description, the figures behind them) of the report page, one
/// string per measure; the formula and source lines are equations and citations, left out.
fn measure_words(page: &str) -> Vec<String> {
    page.split("<details class=\"rec\"")
        .skip(1)
        .map(|m| {
            m.split("<p><b>Formula:").next().unwrap_or("").to_string()
                + m.split("<p><b>From the figures:</b></p>")
                    .nth(1)
                    .and_then(|r| r.split("</ul>").next())
                    .unwrap_or("")
        })
        .collect()
}

#[test]
fn the_measures_words_follow_the_units_switch() {
    let s = Server::demo();
    let si = measure_words(&s.get("/audits/1/report?units=si").text);
    let us = measure_words(&s.get("/audits/1/report?units=us").text);
    assert!(si.len() >= 3, "the demo plant has measures: {}", si.len());
    assert_eq!(si.len(), us.len());
    // The demo's leak measure names its flow; the pressure measure its two pressures.
    let leak_si = si.iter().find(|m| m.contains("rec-repair_leaks")).expect("leak measure");
    assert!(leak_si.contains("m³/min free air"), "{leak_si}");
    let leak_us = us.iter().find(|m| m.contains("rec-repair_leaks")).unwrap();
    assert!(leak_us.contains("cfm free air"), "{leak_us}");
    let p_us = us.iter().find(|m| m.contains("rec-lower_pressure")).expect("pressure measure");
    assert!(p_us.matches("psig").count() >= 2, "{p_us}");
    for m in &us {
        assert!(!m.contains("m³") && !m.contains("bar(g)"), "SI left in a measure shown in US units: {m}");
    }
}

#[test]
fn report_json_from_the_cli_matches_the_api() {
    let s = Server::demo();
    let api = s.get("/api/v1/audits/1/summary").json();
    let out = std::process::Command::new(binary())
        .args(["report", "--db"])
        .arg(&s.db)
        .args(["--audit", "1", "--format", "json"])
        .output()
        .unwrap();
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    let cli: Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(cli["system"]["energy_kwh"], api["system"]["energy_kwh"]);
    let html = std::process::Command::new(binary())
        .args(["report", "--db"])
        .arg(&s.db)
        .args(["--audit", "1", "--format", "html"])
        .output()
        .unwrap();
    let html = String::from_utf8_lossy(&html.stdout);
    assert!(html.contains("Recommendations: measures stacked in order"));
}

#[test]
fn a_token_guards_every_page_and_endpoint_and_a_cookie_signs_in() {
    let s = Server::start_with(&["serve"], &["--token", "plant-floor-7"]);
    // Without the token: 401 on the API and on pages; static files stay open.
    let r = s.get("/api/v1/audits");
    assert_eq!(r.status, 401);
    assert!(r.json()["error"]["message"].as_str().unwrap().contains("token"));
    assert_eq!(s.get("/static/css/app.css").status, 200);
    let agent: ureq::Agent =
        ureq::Agent::config_builder().http_status_as_error(false).max_redirects(0).build().into();
    // Every route of `src/web/mod.rs` with each of its methods, without the token: 401 (before any
    // 404 or 422 of its own), and nothing is stored.
    let mut routes: Vec<(&str, String)> = DEMO_PAGES.iter().map(|p| ("GET", p.to_string())).collect();
    for p in ["/audits", "/audits/1/site", "/audits/1/compressors", "/audits/1/compressors/1/delete"] {
        routes.push(("POST", p.into()));
    }
    for p in ["/audits/1/receivers", "/audits/1/receivers/1/delete"] {
        routes.push(("POST", p.into()));
    }
    for p in [
        "/audits/1/treatment/filters",
        "/audits/1/treatment/dryers/1",
        "/audits/1/treatment/filters/1/delete",
    ] {
        routes.push(("POST", p.into()));
    }
    let api = [
        ("GET", "/audits"),
        ("POST", "/audits"),
        ("GET", "/audits/1"),
        ("PATCH", "/audits/1"),
        ("POST", "/audits/1/compressors"),
        ("PUT", "/audits/1/compressors/1"),
        ("DELETE", "/audits/1/compressors/1"),
        ("POST", "/audits/1/receivers"),
        ("DELETE", "/audits/1/receivers/1"),
        ("GET", "/audits/1/uploads"),
        ("GET", "/audits/1/uploads/1"),
        ("POST", "/audits/1/uploads"),
        ("POST", "/audits/1/sniff"),
        ("GET", "/imports/some-token"),
        ("GET", "/audits/1/summary"),
        ("GET", "/audits/1/channels"),
        ("GET", "/audits/1/series"),
        ("GET", "/audits/1/field-tests"),
        ("POST", "/audits/1/field-tests"),
        ("DELETE", "/audits/1/field-tests/1"),
        ("GET", "/audits/1/decay-events"),
        ("GET", "/audits/1/filters"),
        ("POST", "/audits/1/filters"),
        ("PUT", "/audits/1/filters/1"),
        ("DELETE", "/audits/1/filters/1"),
        ("PUT", "/audits/1/costs/repair_leaks"),
        ("GET", "/audits/1/scenarios"),
        ("POST", "/audits/1/scenarios"),
        ("POST", "/calc/orifice-leak"),
        ("POST", "/calc/compression"),
        ("GET", "/no-such-endpoint"),
    ];
    routes.extend(api.iter().map(|(m, p)| (*m, format!("/api/v1{p}"))));
    for (method, path) in &routes {
        let url = s.url(path);
        let r = match *method {
            "GET" => agent.get(&url).call(),
            "DELETE" => agent.delete(&url).header("Origin", &s.base).call(),
            "POST" => agent.post(&url).header("Origin", &s.base).send_json(json!({"name": "planted"})),
            "PUT" => agent.put(&url).header("Origin", &s.base).send_json(json!({"implementation_cost": 1})),
            "PATCH" => agent.patch(&url).header("Origin", &s.base).send_json(json!({"name": "planted"})),
            m => unreachable!("{m}"),
        };
        let status = r.unwrap_or_else(|e| panic!("{method} {path}: {e}")).status().as_u16();
        assert_eq!(status, 401, "{method} {path} without the token");
    }
    // A bearer token opens the API; a wrong one does not.
    let ok =
        agent.get(&s.url("/api/v1/audits")).header("Authorization", "Bearer plant-floor-7").call().unwrap();
    assert_eq!(ok.status().as_u16(), 200);
    let bad =
        agent.get(&s.url("/api/v1/audits")).header("Authorization", "Bearer plant-floor-8").call().unwrap();
    assert_eq!(bad.status().as_u16(), 401);
    // The sign-in page sets an HttpOnly, SameSite=Strict cookie that opens the pages.
    let r = agent
        .post(&s.url("/login"))
        .header("Origin", &s.base)
        .send_form([("token", "plant-floor-7")])
        .unwrap();
    assert_eq!(r.status().as_u16(), 303);
    let cookie = r.headers().get("set-cookie").unwrap().to_str().unwrap().to_string();
    assert!(cookie.contains("HttpOnly") && cookie.contains("SameSite=Strict"), "{cookie}");
    assert!(!cookie.contains("plant-floor-7"), "the cookie does not hold the token itself");
    let pair = cookie.split(';').next().unwrap();
    let page = agent.get(&s.url("/")).header("Cookie", pair).call().unwrap();
    assert_eq!(page.status().as_u16(), 200);
    // Nothing of the refused writes above was stored.
    let list = agent.get(&s.url("/api/v1/audits")).header("Cookie", pair).call().unwrap();
    let list: Value = serde_json::from_str(&list.into_body().read_to_string().unwrap()).unwrap();
    assert_eq!(list["audits"].as_array().map(Vec::len), Some(0), "{list}");
    let r = agent.post(&s.url("/login")).header("Origin", &s.base).send_form([("token", "guess")]).unwrap();
    assert_eq!(r.status().as_u16(), 401);
}

#[test]
fn a_non_loopback_bind_without_a_token_refuses_to_start() {
    let out = std::process::Command::new(binary())
        .args(["serve", "--db"])
        .arg(std::env::temp_dir().join(format!("airledger-refuse-{}.sqlite", std::process::id())))
        .args(["--bind", "0.0.0.0:0"])
        .env_remove("AIRLEDGER_TOKEN")
        .output()
        .unwrap();
    assert!(!out.status.success());
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(err.contains("--token") && err.contains("AIRLEDGER_TOKEN"), "{err}");
}

#[test]
fn a_cross_origin_write_is_403_and_changes_nothing() {
    let s = Server::start();
    let agent: ureq::Agent = ureq::Agent::config_builder().http_status_as_error(false).build().into();
    let r = agent
        .post(&s.url("/api/v1/audits"))
        .header("Origin", "http://evil.example")
        .send_json(json!({"name": "planted"}))
        .unwrap();
    assert_eq!(r.status().as_u16(), 403);
    let r = agent
        .post(&s.url("/audits"))
        .header("Sec-Fetch-Site", "cross-site")
        .send_form([("name", "planted")])
        .unwrap();
    assert_eq!(r.status().as_u16(), 403);
    assert_eq!(s.get("/api/v1/audits").json()["audits"].as_array().unwrap().len(), 0);
    // Reads from anywhere are harmless and still answered.
    let r = agent.get(&s.url("/api/v1/audits")).header("Origin", "http://evil.example").call().unwrap();
    assert_eq!(r.status().as_u16(), 200);
}

#[test]
fn a_scenario_replays_the_demo_and_reports_its_validation_error() {
    let s = Server::demo();
    let r = s.post_json("/api/v1/audits/1/scenarios", &json!({"name": "as is", "changes": []}));
    assert_eq!(r.status, 201, "{}", r.text);
    let res = &r.json()["result"];
    // The unchanged plant must reproduce its logged energy (issue 7: under 3 %).
    let v = res["validation_error"].as_f64().unwrap();
    assert!(v.abs() < 0.03, "validation error {v}");
    assert_eq!(res["compressors"].as_array().unwrap().len(), 3);
    let r = s.post_json(
        "/api/v1/audits/1/scenarios",
        &json!({"name": "lower and tighter", "changes": [{"op": "set_pressure", "target_bar_g": 6.6}, {"op": "reduce_leaks", "fraction": 0.5}]}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let res = r.json()["result"].clone();
    assert!(res["energy_saving_kwh"].as_f64().unwrap() > 0.0, "lower pressure and fewer leaks save energy");
    assert!(res["validation_error"].as_f64().unwrap().abs() < 0.03, "shown beside every result");
    // Without its base-load machine the plant cannot meet its peak: reported, not hidden.
    let r = s.post_json(
        "/api/v1/audits/1/scenarios",
        &json!({"name": "no C1", "changes": [{"op": "remove", "tag": "C1"}]}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    assert_eq!(r.json()["result"]["feasible"], false);
    // Short of capacity, its lower energy is air not delivered: the page prices no saving for it.
    let page = s.get("/audits/1/scenarios").text;
    assert!(
        page.contains("none: the plant falls short of its demand"),
        "an infeasible scenario is not priced"
    );
    let r = s.post_json(
        "/api/v1/audits/1/scenarios",
        &json!({"name": "typo", "changes": [{"op": "remove", "tag": "C9"}]}),
    );
    assert_eq!(r.status, 422);
    assert!(r.json()["error"]["field"].as_str().unwrap().starts_with("changes[0]"));
    let list = s.get("/api/v1/audits/1/scenarios").json();
    assert_eq!(list["scenarios"].as_array().unwrap().len(), 3);
    // None of these may be the control measure: one changes pressure and leaks (measures of their own),
    // one cannot hold the pressure, and "as is" saves nothing.
    let recs = s.get("/api/v1/audits/1/summary").json()["recommendations"].clone();
    assert!(recs.as_array().unwrap().iter().all(|r| r.get("scenario_id").is_none()), "{recs}");
    // More storage calms the load/unload cycling: a supply-side saving, offered with its own cost
    // once it is put forward as the proposal.
    let r = s.post_json(
        "/api/v1/audits/1/scenarios",
        &json!({"name": "more storage", "changes": [{"op": "add_storage", "volume_m3": 4.0}], "implementation_cost": 5000, "proposal": true}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let res = r.json()["result"].clone();
    let sid = r.json()["id"].as_i64().unwrap();
    assert_eq!(res["implementation_cost"], 5000.0);
    assert_eq!(res["supply_side_only"], true);
    let saved = res["energy_saving_kwh"].as_f64().unwrap();
    assert!(saved > 0.0, "{res}");
    let sm = s.get("/api/v1/audits/1/summary").json();
    let ctl: Vec<_> = sm["recommendations"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|r| r["kind"] == "improve_control")
        .cloned()
        .collect();
    assert_eq!(ctl.len(), 1, "{ctl:?}");
    assert_eq!(ctl[0]["scenario_id"].as_i64(), Some(sid));
    assert_eq!(ctl[0]["implementation_cost"], 5000.0);
    // Annualised like the baseline: alone, the replayed share of the baseline times the annual
    // energy; stacked, the same share of the energy the measures before it leave.
    let share = saved / res["baseline_energy_kwh"].as_f64().unwrap();
    let annual = sm["baseline"]["annual_energy_kwh"].as_f64().unwrap();
    let kwh = ctl[0]["standalone_annual_energy_saving_kwh"].as_f64().unwrap();
    assert!((kwh - share * annual).abs() < 1e-6 * annual, "{kwh} vs {}", share * annual);
    assert!(ctl[0]["annual_energy_saving_kwh"].as_f64().unwrap() <= kwh + 1e-6);
    let page = s.get("/audits/1/scenarios");
    assert_eq!(page.status, 200);
    assert!(page.text.contains("the proposal: on the report as the control measure"));
}

/// `GET /api/v1/audits/{id}/uploads/{upload_id}` gives each channel's readings and the arithmetic
/// mean of what was stored, in SI. Truth: the file's own numbers, averaged here (the test file
/// holds 4 loaded rows at 56 kW, 7.20 bar(g), 9.50 m³/min for every 16 unloaded at 14 kW,
/// 6.90 bar(g), 1.90 m³/min), and the ISO 2533 sea-level atmosphere, 101.325 kPa, for gauge.
#[test]
fn one_upload_reports_the_mean_of_each_channel_it_wrote() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    let csv = cycling_csv(2);
    let r = s.upload(id, "cycle.csv", csv.as_bytes(), &cycling_mapping(), "");
    assert_eq!(r.status, 201, "{}", r.text);
    let upload_id = r.json()["upload_id"].as_i64().expect("upload_id");
    let rows: Vec<Vec<f64>> = csv
        .lines()
        .skip(1)
        .map(|l| l.split(',').skip(1).map(|f| f.parse().expect("number")).collect())
        .collect();
    let mean = |i: usize| rows.iter().map(|r| r[i]).sum::<f64>() / rows.len() as f64;

    let r = s.get(&format!("/api/v1/audits/{id}/uploads/{upload_id}"));
    assert_eq!(r.status, 200, "{}", r.text);
    let u = r.json();
    assert_eq!(u["id"], upload_id, "{u}");
    let channels = u["channels"].as_array().expect("channels");
    assert_eq!(channels.len(), 3, "{u}");
    let ch =
        |q: &str| channels.iter().find(|c| c["quantity"] == q).unwrap_or_else(|| panic!("no {q} in {u}"));
    for (q, unit_si, want) in [
        ("power", "W", mean(0) * 1e3),
        ("pressure", "Pa_abs", mean(1) * 1e5 + 101_325.0),
        ("flow", "m3_s_free_air", mean(2) / 60.0),
    ] {
        let c = ch(q);
        assert_eq!(c["readings"], rows.len(), "{c}");
        assert_eq!(c["unit_si"], unit_si, "{c}");
        let got = c["mean_si"].as_f64().expect("mean_si");
        assert!((got - want).abs() <= 1e-6 * want, "{q}: mean {got} vs {want} from the file");
    }
    assert_eq!(ch("power")["compressor_tag"], "C1");

    // Another audit's upload, or none, is not found.
    let other = s.audit_with_compressor("C1");
    assert_eq!(s.get(&format!("/api/v1/audits/{other}/uploads/{upload_id}")).status, 404);
    assert_eq!(s.get(&format!("/api/v1/audits/{id}/uploads/{}", upload_id + 99)).status, 404);
}

#[test]
fn compressors_take_the_data_sheet_fields_and_refuse_bad_ones_by_name() {
    // Issue 17: the data-sheet fields of API.md "Additions", stored and read back; a value out of
    // its documented range (core::datasheet) is a 422 naming the field.
    let s = Server::start();
    let id = s.audit_with_compressor("C2");
    let url = format!("/api/v1/audits/{id}/compressors");
    let base = json!({"tag": "C3", "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                      "rated_power_kw": 55, "rated_flow_m3_min": 9.5, "rated_pressure_bar_g": 7.5,
                      "no_load_power_kw": 11, "nameplate_motor_kw": 45, "max_pressure_bar_g": 8.0,
                      "loaded_level_kw": 57.5});
    for (field, value) in [
        ("no_load_power_kw", json!(60)),
        ("no_load_power_kw", json!(-1)),
        ("max_pressure_bar_g", json!(7.0)),
        ("max_pressure_bar_g", json!(51)),
        ("nameplate_motor_kw", json!(0)),
        ("power_curve", json!([[2, 10], [2, 12]])),
        ("unloaded_level_kw", json!(70)),
        ("loaded_level_kw", json!(-5)),
    ] {
        let mut bad = base.clone();
        bad[field] = value.clone();
        let r = s.post_json(&url, &bad);
        assert_eq!(r.status, 422, "{field} = {value}: {}", r.text);
        assert_eq!(r.json()["error"]["field"], field, "{field} = {value}: {}", r.text);
    }
    let r = s.post_json(&url, &base);
    assert_eq!(r.status, 201, "{}", r.text);
    let a = s.get(&format!("/api/v1/audits/{id}")).json();
    let c3 = a["compressors"].as_array().unwrap().iter().find(|c| c["tag"] == "C3").unwrap().clone();
    assert_eq!(c3["no_load_power_kw"], 11.0);
    assert_eq!(c3["nameplate_motor_kw"], 45.0);
    assert_eq!(c3["max_pressure_bar_g"], 8.0);
    assert_eq!(c3["loaded_level_kw"], 57.5);
    assert!(c3["unloaded_level_kw"].is_null());
    // 11 kW of 55: the unloaded fraction follows the no-load power.
    assert!((c3["unloaded_power_fraction"].as_f64().unwrap() - 0.2).abs() < 1e-12, "{c3}");
    // A scenario's added machine is posted in the same shape and checked the same way.
    let mut added = base.clone();
    added["tag"] = json!("N1");
    added["max_pressure_bar_g"] = json!(7.0);
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/scenarios"),
        &json!({"name": "bad add", "changes": [{"op": "add", "compressor": added}]}),
    );
    assert_eq!(r.status, 422, "{}", r.text);
    assert_eq!(r.json()["error"]["field"], "changes[0].compressor.max_pressure_bar_g", "{}", r.text);
}

#[test]
fn the_data_sheet_comparison_and_part_load_penalty_show_in_both_unit_systems() {
    // Issue 17: the report and the findings show each machine's loaded power at its loaded pressure,
    // the data sheet at that pressure and the difference, and the system's part-load penalty, in SI
    // and US units. Truth: the API's own figures, converted here (1 psi = 6894.757 Pa, NIST SP 811).
    let s = Server::demo();
    let sum = s.get("/api/v1/audits/1/summary").json();
    let c1 = sum["compressors"].as_array().unwrap().iter().find(|c| c["tag"] == "C1").unwrap().clone();
    let p = c1["loaded_pressure_bar_g"].as_f64().expect("C1 loaded pressure");
    let vs = c1["loaded_power_vs_datasheet_percent"].as_f64().expect("C1 against its data sheet");
    let pen = sum["system"]["part_load_penalty_percent"].as_f64().expect("part-load penalty");
    assert!(sum["system"].get("specific_power_degradation_percent").is_none(), "the old figure is gone");
    for page in ["report", "findings"] {
        let si = s.get(&format!("/audits/1/{page}?units=si")).text;
        let us = s.get(&format!("/audits/1/{page}?units=us")).text;
        assert!(si.contains(&format!("at {:.2} bar(g)", p)), "{page} SI: C1's loaded pressure");
        let psig = p * 1e5 / 6_894.757;
        assert!(us.contains(&format!("at {psig:.1} psig")), "{page} US: C1's loaded pressure {psig:.1} psig");
        for text in [&si, &us] {
            assert!(text.contains(&format!("{vs:+.1} %")), "{page}: C1 against its data sheet {vs:+.1} %");
            assert!(text.contains(&format!("part-load penalty {pen:.1} %")), "{page}: penalty {pen:.1} %");
        }
    }
}

/// The demand charge at two prices, and heat valued by degree-days, over HTTP on a logged week.
#[test]
fn the_demand_charge_bills_the_clock_quarter_hour_peak_and_heat_follows_degree_days() {
    let s = Server::start();
    let id = s.audit_with_compressor("C1");
    // A week at 1-minute readings from Monday 2026-05-04 00:00 UTC: C1 draws 40 kW, and 100 kW for
    // fifteen minutes from 10:07 to 10:21 on the Wednesday.
    let start = 1_777_852_800i64; // 2026-05-04T00:00:00Z
    let burst = start + 2 * 86_400 + 10 * 3600 + 7 * 60;
    let mut csv = String::from("time,C1 kW\n");
    for i in 0..7 * 1440 {
        let t = start + i * 60;
        let kw = if (burst..burst + 15 * 60).contains(&t) { 100 } else { 40 };
        csv.push_str(&format!("{},{kw}\n", jiff_like_rfc3339(t)));
    }
    let mapping = json!({"delimiter": ",", "decimal": ".", "header_line": 1,
        "timestamp": {"column": "time", "format": "rfc3339", "timezone": "UTC"},
        "columns": [{"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"}]});
    let r = s.upload(id, "week.csv", csv.as_bytes(), &mapping, "");
    assert_eq!(r.status, 201, "{}", r.text);
    let audit = format!("/api/v1/audits/{id}");
    let summary = || s.get(&format!("{audit}/summary")).json();
    // The utility's meter averages the clock's quarter hours (common practice of demand metering).
    // The readings are samples joined by straight lines (the trapezoid rule), so the power climbs
    // from 40 to 100 kW between 10:06 and 10:07: 10:00-10:15 holds the equivalent of 8.5 minutes at
    // 100 kW and 6.5 at 40 kW, (850 + 260) / 15 = 74 kW, the week's highest interval (10:15-10:30:
    // 66 kW). A sliding 15-minute window would bill nearly 100 kW.
    for rate in [9.5, 15.0] {
        let r = s.patch_json(&audit, &json!({"site": {"demand_charge_per_kw_month": rate}}));
        assert_eq!(r.status, 200, "{}", r.text);
        let sm = summary();
        let peak = sm["system"]["peak_power_kw"].as_f64().unwrap();
        assert!((peak - 74.0).abs() < 1e-6, "peak {peak} kW");
        // Annual demand charge = peak kW × charge per kW-month × 12 (US DOE compressed-air
        // sourcebook, the cost of compressed air; annual cost = energy × price + demand charge).
        let dc = sm["baseline"]["annual_demand_charge"].as_f64().expect("demand charge");
        assert!((dc - 74.0 * rate * 12.0).abs() < 1e-6, "{dc} at {rate}");
        let energy = sm["baseline"]["annual_energy_cost"].as_f64().unwrap();
        let cost = sm["baseline"]["annual_cost"].as_f64().unwrap();
        assert!((cost - (energy + dc)).abs() < 1e-6);
    }

    // Degree-days replace the heating months: January 620 K·d is the coldest month per day (20),
    // February 448 / 28 = 16 per day (0.8 of it), the rest none; without the space's annual need
    // the unit is sized to the coldest month (airledger's stated assumption), so the heat used is
    // the year's recoverable heat × (31 + 28 × 0.8) / 365 (the days of a common year).
    let hdd = [620.0, 448.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0];
    let r = s.patch_json(&audit, &json!({"site": {"heating_degree_days_k_day": hdd}}));
    assert_eq!(r.status, 200, "{}", r.text);
    let sm = summary();
    let rec = sm["heat"]["annual_recoverable_kwh"].as_f64().unwrap();
    let used = sm["heat"]["useful_heat_kwh_per_year"].as_f64().unwrap();
    assert!((used - rec * (31.0 + 28.0 * 0.8) / 365.0).abs() < 1e-6 * rec, "{used} of {rec}");
    // With the space's need (kWh of heat a year) shared by degree-days: January's share is
    // 620 / 1068 of 12,000 = 6,966 kWh, February's 5,034; each month uses no more than that.
    let r = s.patch_json(&audit, &json!({"site": {"annual_space_heat_kwh": 12_000.0}}));
    assert_eq!(r.status, 200, "{}", r.text);
    let sm = summary();
    let month = |m: usize| rec * [31.0, 28.0][m] / 365.0;
    let want = month(0).min(12_000.0 * 620.0 / 1068.0) + month(1).min(12_000.0 * 448.0 / 1068.0);
    let used = sm["heat"]["useful_heat_kwh_per_year"].as_f64().unwrap();
    assert!((used - want).abs() < 1e-6 * rec, "{used} vs {want}");
    let a = s.get(&audit).json();
    assert_eq!(a["site"]["heating_degree_days_k_day"].as_array().unwrap().len(), 12);
    assert_eq!(a["site"]["annual_space_heat_kwh"], 12_000.0);
    // Eleven months, or a negative one, are refused naming the field.
    let r = s.patch_json(&audit, &json!({"site": {"heating_degree_days_k_day": vec![1.0; 11]}}));
    assert_eq!(r.status, 422);
    assert_eq!(r.json()["error"]["field"], "heating_degree_days_k_day", "{}", r.text);
    let mut bad = hdd;
    bad[3] = -5.0;
    let r = s.patch_json(&audit, &json!({"site": {"heating_degree_days_k_day": bad}}));
    assert_eq!(r.status, 422);
    assert!(r.json()["error"]["field"].as_str().unwrap().contains("heating_degree_days_k_day"), "{}", r.text);
}
