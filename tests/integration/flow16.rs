//! Issue 16, figures the data cannot support, over HTTP: an audit whose only power is an energy
//! counter read every quarter hour has no demand to replay, and the what-if page says so in words
//! (never "0 kWh" and "-100 %"); a summary of a period in which no flow can be known gives no air
//! and no flow figure (`null` with the reason, "not enough data" on the pages), never 0.000.
//! Invented files; the expected values are worked by hand below.

use crate::support::*;
use crate::thin_counter::thin_counter_audit;

/// 2023-11-13T06:00:00Z, a Monday.
const NOV_13_2023: i64 = 1_699_855_200;

fn mapping(columns: Value) -> Value {
    json!({"delimiter": ",", "decimal": ".", "header_line": 1,
           "timestamp": {"column": "time", "format": "rfc3339", "timezone": "UTC"},
           "columns": columns})
}

/// An energy counter (kWh) read every 15 minutes from `start`, `readings` of them, rising `kw` ×
/// 0.25 h a reading.
fn quarter_hour_counter(start: i64, readings: i64, kw: f64) -> String {
    let mut s = String::from("time,E kWh\n");
    for i in 0..readings {
        s.push_str(&format!("{},{:.3}\n", jiff_like_rfc3339(start + i * 900), 1000.0 + i as f64 * kw * 0.25));
    }
    s
}

fn counter_columns(tag: &str) -> Value {
    json!([{"column": "E kWh", "quantity": "energy", "unit": "kWh", "compressor": tag}])
}

#[test]
fn a_counter_that_hides_the_loading_leaves_no_demand_to_replay_and_the_page_says_why() {
    // Arrange: C1 (55 kW, 9.5 m³/min, load/unload), a 1 m³ receiver, and its energy counter alone
    // for three days: 26 kW in every quarter hour, under the midpoint of its unloaded (25 % of
    // 55 kW, the data sheet's default) and full levels, so its states read unloaded throughout.
    let s = Server::start();
    let id = s.audit_in_chicago("counter only", "si");
    let r = s.post_json(&format!("/api/v1/audits/{id}/receivers"), &json!({"name": "R1", "volume_m3": 1.0}));
    assert_eq!(r.status, 201, "{}", r.text);
    let file = quarter_hour_counter(NOV_13_2023, 288, 26.0);
    let r = s.upload(id, "counter.csv", file.as_bytes(), &mapping(counter_columns("C1")), "");
    assert_eq!(r.status, 201, "{}", r.text);

    // The summary: no air read from the states of a machine known only through its counter (a
    // walk found a mean flow of 0.000 m³/min (estimated) beside 26 kW), with the reason, and the
    // report says "not enough data" with it.
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    assert!((sm["system"]["mean_power_kw"].as_f64().unwrap() - 26.0).abs() < 1e-6, "{}", sm["system"]);
    for f in ["air_m3", "mean_flow_m3_min", "peak_flow_m3_min"] {
        assert!(sm["system"][f].is_null(), "system.{f} = {}", sm["system"][f]);
    }
    let why = "no flow is known: no flow meter was logged, and the air cannot be read from the compressors' \
               states: C1's power was logged only as an energy counter, whose readings are means over each \
               interval and do not show when a machine loaded or unloaded";
    let withheld = sm["sufficiency"]["withheld"].as_array().unwrap();
    assert!(
        withheld.iter().any(|w| w["figure"] == "system.mean_flow_m3_min" && w["reason"] == why),
        "{withheld:?}"
    );
    let report = s.get(&format!("/audits/{id}/report")).text;
    let at = report.find("<dt>Mean flow</dt>").expect("the mean flow");
    let cell = &report[at + report[at..].find("<dd>").unwrap() + 4..];
    assert!(
        cell.starts_with(&format!("not enough data ({})", why.replace('\'', "&#39;"))),
        "{}",
        &cell[..300]
    );
    assert!(!report.contains("0.000 m³/min"), "a zero flow on the page");

    // Act: the baseline and one change.
    let base =
        s.post_json(&format!("/api/v1/audits/{id}/scenarios"), &json!({"name": "baseline", "changes": []}));
    assert_eq!(base.status, 201, "{}", base.text);
    let more = s.post_json(
        &format!("/api/v1/audits/{id}/scenarios"),
        &json!({"name": "more storage", "changes": [{"op": "add_storage", "volume_m3": 2.0}]}),
    );
    assert_eq!(more.status, 201, "{}", more.text);

    // Assert: no replay figure, the reason in words, and the energy logged: 26 kW over the 287
    // quarter hours between the first reading and the last, 26 × 71.75 h = 1,865.5 kWh.
    let b = &base.json()["result"];
    for f in [
        "energy_kwh",
        "mean_power_kw",
        "peak_power_kw",
        "validation_error",
        "baseline_energy_kwh",
        "energy_saving_kwh",
        "min_pressure_bar_g",
    ] {
        assert!(b[f].is_null(), "{f} = {}", b[f]);
    }
    let why = b["no_demand_reason"].as_str().expect("the reason");
    assert!(
        why.starts_with(
            "no demand to replay: no flow was logged, and the compressors' load states, read from their \
             logged power on the log's 15 min time step, show none of them loaded at any time"
        ),
        "{why}"
    );
    assert!((b["logged_energy_kwh"].as_f64().unwrap() - 1865.5).abs() < 0.01, "{b}");
    assert_eq!(b["compressors"], json!([]));

    // The page: the reason under each row, words in the energy column, no 0 kWh, no -100 %.
    let page = s.get(&format!("/audits/{id}/scenarios")).text;
    assert_eq!(
        page.matches("<p class=\"warn no-demand\">No demand to replay: no flow was logged").count(),
        2
    );
    assert_eq!(page.matches("<td class=\"num\">no demand to replay</td>").count(), 2);
    assert!(!page.contains("-100"), "a -100 % on the page");
    assert!(!page.contains("<td class=\"num\">0</td>"), "a 0 kWh on the page");
    assert!(page.contains("not offered: there is no demand to replay"));
    assert!(page.contains(
        "id=\"no-trace\">No pressure to draw: there is no demand to replay (why is said under each replay)."
    ));
    assert!(!page.contains("mark as the proposal"), "a replay of nothing offered as the proposal");
    // No replayed length to quote: the headings say "the period", never "the – replayed" (a walk).
    assert!(!page.contains("– of log") && !page.contains("the – "), "a dash for the period");
    assert!(page.contains("over the replayed period. "), "the time bases");
    assert!(page.contains("Energy over the period replayed,"), "the energy heading");

    // It cannot be the proposal, and the refusal says why.
    let sid = more.json()["id"].as_i64().unwrap();
    let r = s.patch_json(&format!("/api/v1/audits/{id}/scenarios/{sid}"), &json!({"proposal": true}));
    assert_eq!(r.status, 422, "{}", r.text);
    let e = &r.json()["error"];
    assert_eq!(e["field"], "proposal");
    assert!(e["message"].as_str().unwrap().starts_with("no demand to replay: no flow was logged"), "{e}");
}

#[test]
fn a_window_on_the_counter_only_day_gives_no_flow_and_says_why() {
    // The thin audit: C1's power in 2019, C2's counter alone on Mon 13 Sep 2021, the header's
    // pressure and flow meter in 2023. Chicago's 13 Sep 2021 (CDT, UTC-5) is 05:00Z to 05:00Z.
    let s = Server::start();
    let (id, _) = thin_counter_audit(&s);
    let (from, to) = ("2021-09-13T05:00:00Z", "2021-09-14T05:00:00Z");
    let sm = s.get(&format!("/api/v1/audits/{id}/summary?from={from}&to={to}")).json();
    let sys = &sm["system"];
    // The counter's energy is there: 34 kW over 3,238 s = 30.58 kWh.
    assert!((sys["energy_kwh"].as_f64().unwrap() - 34.0 * 3238.0 / 3600.0).abs() < 0.05, "{sys}");
    for f in [
        "air_m3",
        "air_m3_low",
        "air_m3_high",
        "mean_flow_m3_min",
        "mean_flow_m3_min_low",
        "mean_flow_m3_min_high",
        "peak_flow_m3_min",
    ] {
        assert!(sys[f].is_null(), "system.{f} = {}", sys[f]);
    }
    assert!(sm["demand"]["peak_flow_m3_min"].is_null());
    let withheld = sm["sufficiency"]["withheld"].as_array().unwrap();
    for f in ["system.mean_flow_m3_min", "system.peak_flow_m3_min", "system.air_m3"] {
        let w = withheld.iter().find(|w| w["figure"] == f).unwrap_or_else(|| panic!("{f} not withheld"));
        assert_eq!(
            w["reason"],
            "no flow is known: the flow meters on record logged no reading in the period analysed, and with \
             a flow meter on record the air is not read from the compressors' states"
        );
    }
    // The whole log keeps the meter's flow: 0.12 m³/min.
    let whole = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    assert!((whole["system"]["mean_flow_m3_min"].as_f64().unwrap() - 0.12).abs() < 1e-6);
}

#[test]
fn machines_logged_apart_without_a_meter_give_no_flow_and_the_pages_say_not_enough_data() {
    // C1's counter on Monday from 06:00Z, C2's on Tuesday, a day apart, no flow meter: a counter's
    // readings are means over each quarter hour, so no machine's states, and no air, can be read
    // from them (each rises 40 kW a quarter hour for 8 h, which would read loaded: above the
    // midpoint of 25 % and 100 % of 55 kW).
    let s = Server::start();
    let id = s.audit_in_chicago("apart", "us");
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/compressors"),
        &json!({"tag": "C2", "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                "rated_power_kw": 55, "rated_flow_m3_min": 9.5, "rated_pressure_bar_g": 7.5}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    for (tag, start) in [("C1", NOV_13_2023), ("C2", NOV_13_2023 + 86_400)] {
        let file = quarter_hour_counter(start, 33, 40.0);
        let r = s.upload(id, &format!("{tag}.csv"), file.as_bytes(), &mapping(counter_columns(tag)), "");
        assert_eq!(r.status, 201, "{}", r.text);
    }
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    assert_eq!(sm["system"]["flow_source"], "estimated_from_compressor_states");
    assert!(sm["system"]["mean_flow_m3_min"].is_null() && sm["system"]["peak_flow_m3_min"].is_null());
    let why = "no flow is known: no flow meter was logged, and the air cannot be read from the compressors' \
               states: the power of C1, C2 was logged only as energy counters, whose readings are means over \
               each interval and do not show when a machine loaded or unloaded";
    let withheld = sm["sufficiency"]["withheld"].as_array().unwrap();
    assert!(withheld.iter().any(|w| w["figure"] == "system.mean_flow_m3_min" && w["reason"] == why));

    // The report and the findings: "not enough data" with the reason (HTML-escaped), no 0 cfm.
    let said = format!("not enough data ({})", why.replace('\'', "&#39;"));
    let row = |html: &str, label: &str, close: &str, open: &str| {
        let at = html.find(label).unwrap_or_else(|| panic!("no {label}"));
        let after = &html[at..];
        let cell = &after[after.find(close).unwrap() + close.len()..];
        assert!(cell.starts_with(&format!("{open}{said}")), "{label}: {}", &cell[..200.min(cell.len())]);
    };
    let report = s.get(&format!("/audits/{id}/report")).text;
    row(&report, "<dt>Mean flow</dt>", "</dt>", "<dd>");
    row(&report, "<dt>Peak flow, highest", "</dt>", "<dd>");
    let findings = s.get(&format!("/audits/{id}/findings")).text;
    row(&findings, "<th>Mean flow</th>", "</th>", "<td>");
    row(&findings, "<th>Peak flow, highest", "</th>", "<td>");
}

/// A purging dryer on a fixed cycle, another under dew-point control, a timer drain, a filter and
/// an end use rated on its own.
fn post_records(s: &Server, id: i64) {
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
        "dryers",
        json!({"tag": "D2", "kind": "heatless_desiccant", "rated_flow_m3_min": 10, "purge_fraction": 0.15,
                "power_kw": 0.3, "control": "dew_point"}),
    );
    post(
        "drains",
        json!({"tag": "T1", "kind": "timer", "open_s": 5, "interval_s": 300, "orifice_mm": 3.0,
               "discharge_coefficient": 0.61}),
    );
    post(
        "filters",
        json!({"tag": "F1", "kind": "coalescing", "rated_flow_m3_min": 10, "clean_drop_bar": 0.1,
               "measured_drop_bar": 0.6}),
    );
    post(
        "end-uses",
        json!({"name": "nutrunners", "kind": "tool", "count": 2, "flow_m3_min": 0.5, "duty": 0.5,
               "regulated": true}),
    );
}

#[test]
fn a_window_with_power_and_no_flow_prices_only_the_records_that_do_not_need_it() {
    // C1 (55 kW) cycling every 200 s, 40 s loaded at 56 kW, else 14 kW, for two days at 10 s; the
    // flow meter logged the second day only (9.5 m³/min loaded, 0 unloaded). On record: a purging
    // dryer on a fixed cycle, another under dew-point control, a timer drain, a filter and an end
    // use rated on its own. The first day alone: a day of power is thin data, and no flow is known
    // in it.
    let s = Server::start();
    let id = s.audit_in_chicago("meter on day 2", "si");
    let mut file = String::from("time,C1 kW,flow m3/min\n");
    for i in 0..17_280i64 {
        let loaded = i % 20 < 4;
        let flow = if i >= 8_640 {
            if loaded {
                "9.5"
            } else {
                "0"
            }
        } else {
            ""
        };
        file.push_str(&format!(
            "{},{},{flow}\n",
            jiff_like_rfc3339(NOV_13_2023 + i * 10),
            if loaded { 56 } else { 14 }
        ));
    }
    let columns = json!([{"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"},
                         {"column": "flow m3/min", "quantity": "flow", "unit": "m3_min"}]);
    let r = s.upload(id, "plant.csv", file.as_bytes(), &mapping(columns), "");
    assert_eq!(r.status, 201, "{}", r.text);
    post_records(&s, id);

    let day =
        format!("from={}&to={}", jiff_like_rfc3339(NOV_13_2023), jiff_like_rfc3339(NOV_13_2023 + 86_400));
    let sm = s.get(&format!("/api/v1/audits/{id}/summary?{day}")).json();
    assert_eq!(sm["sufficiency"]["verdict"], "thin");
    assert!(sm["system"]["mean_flow_m3_min"].is_null());
    let t = &sm["transmission"];
    // D1 purges 0.15 x 10 = 1.5 m³/min on its fixed cycle at any flow; what dew-point control
    // would save of it, and its load, follow the air through it.
    let dryers = t["dryers"].as_array().unwrap();
    assert_eq!(dryers.len(), 1, "{t}");
    assert_eq!(dryers[0]["tag"], "D1");
    assert!((dryers[0]["purge_m3_min"].as_f64().unwrap() - 1.5).abs() < 1e-9, "{t}");
    assert!(dryers[0]["annual_purge_kwh"].as_f64().unwrap() > 0.0);
    assert!(dryers[0]["load"].is_null() && dryers[0]["dew_point_control_saving_m3_min"].is_null());
    // The tools: 2 x 0.5 x 0.5 = 0.5 m³/min in production, their own rating.
    assert!((t["end_uses"][0]["production_mean_flow_m3_min"].as_f64().unwrap() - 0.5).abs() < 1e-9, "{t}");
    assert_eq!(t["filters"], json!([]));
    assert!(sm["demand_split"].is_null());
    let withheld = sm["sufficiency"]["withheld"].as_array().unwrap();
    let reason = |f: &str| {
        withheld.iter().find(|w| w["figure"] == f).unwrap_or_else(|| panic!("{f} not withheld: {withheld:?}"))
            ["reason"]
            .as_str()
            .unwrap()
            .to_string()
    };
    let why = "(no flow is known: the flow meters on record logged no reading in the period analysed, and \
               with a flow meter on record the air is not read from the compressors' states)";
    assert_eq!(
        reason("transmission.dryers[]"),
        format!(
            "D2: the purge under dew-point control, or a cycling unit's electricity, follows the air through \
             the dryer, a share of the plant's mean flow {why}"
        )
    );
    assert!(reason("transmission.dryers[].savings").starts_with("D1: what dew-point control"));
    assert!(reason("transmission.filters[]")
        .starts_with("F1: a filter's clean drop is read at the plant's mean flow"));
    assert_eq!(reason("demand_split"), format!("the split is of the plant's mean flow {why}"));
    assert!(!withheld.iter().any(|w| w["figure"] == "transmission"), "the records as a whole withheld");
    // The whole log prices every record on the metered day's mean, 9.5 × 40 / 200 = 1.9 m³/min:
    // the fixed cycle purges 1.5 m³/min of it; the drain loses what it loses in the window (no
    // pressure logged: both at C1's rated pressure), and the filter is read at that flow.
    let whole = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    assert!((whole["system"]["mean_flow_m3_min"].as_f64().unwrap() - 1.9).abs() < 0.01);
    let wt = &whole["transmission"];
    assert!((wt["dryers"][0]["purge_m3_min"].as_f64().unwrap() - 1.5).abs() < 1e-9);
    assert_eq!(wt["dryers"].as_array().unwrap().len(), 2);
    assert_eq!(wt["filters"].as_array().unwrap().len(), 1);
    let drain = t["drains"][0]["air_m3_min"].as_f64().unwrap();
    assert!(drain > 0.0 && drain == wt["drains"][0]["air_m3_min"].as_f64().unwrap(), "{t} {wt}");
    assert!(whole["demand_split"].is_object());

    // The report of an audit whose whole log knows no flow (a quarter-hour counter, no meter)
    // says each in words beside the records it prices.
    let id = s.audit_in_chicago("counter and records", "si");
    let file = quarter_hour_counter(NOV_13_2023, 288, 26.0);
    let r = s.upload(id, "counter.csv", file.as_bytes(), &mapping(counter_columns("C1")), "");
    assert_eq!(r.status, 201, "{}", r.text);
    post_records(&s, id);
    let report = s.get(&format!("/audits/{id}/report")).text.replace("&#39;", "'");
    assert!(report.contains("Dryer D1 (heatless desiccant"), "D1 priced");
    assert!(report.contains("Dryers not priced"), "no row for D2");
    assert!(report.contains("not enough data (D2: the purge under dew-point control"));
    assert!(
        report.contains("what a change of control would save: not enough data (D1: what dew-point control")
    );
    assert!(report.contains("not enough data (F1: a filter's clean drop"));
    assert!(report.contains("Mean demand split"));
}
