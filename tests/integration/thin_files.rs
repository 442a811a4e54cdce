//! Files years apart (issue 16, "thin or mismatched data"): one compressor's power from a file of
//! logged power and, years later, from a file with both a power column and an energy counter. Every
//! logged reading of the machine's power counts once; the period says logged hours apart from the
//! calendar span; the day selector lists only the days that hold data; charts break at the gap and
//! carry years on their axis. Invented files in those shapes; the expected values are worked by
//! hand below.

use crate::support::*;

/// 2019-06-03T08:00:00Z, a Monday (03:00 CDT in Chicago).
pub(crate) const JUN_3_2019: i64 = 1_559_548_800;
/// 2024-03-04T12:00:00Z, a Monday (06:00 CST in Chicago: daylight saving starts on 10 March).
pub(crate) const MAR_4_2024: i64 = 1_709_553_600;

/// The first file: C1 at 30 kW, a reading a minute for 600 minutes (599 minutes from first to last).
pub(crate) fn power_file() -> String {
    let mut s = String::from("time,C1 kW\n");
    for i in 0..600 {
        s.push_str(&format!("{},30\n", jiff_like_rfc3339(JUN_3_2019 + i * 60)));
    }
    s
}

/// The second file, years later: a three-phase meter's active power, 40 kW, and its energy counter
/// (kWh, rising 40 kW × 2 s = 0.0222 kWh a step) every 2 s for 1,620 readings (3,238 s).
pub(crate) fn meter_file() -> String {
    let mut s = String::from("time,P kW,E kWh\n");
    for i in 0..1620 {
        let kwh = 100.0 + i as f64 * 40.0 * 2.0 / 3600.0;
        s.push_str(&format!("{},40,{kwh:.6}\n", jiff_like_rfc3339(MAR_4_2024 + i * 2)));
    }
    s
}

fn mapping(columns: Value) -> Value {
    json!({"delimiter": ",", "decimal": ".", "header_line": 1,
           "timestamp": {"column": "time", "format": "rfc3339", "timezone": "UTC"},
           "columns": columns})
}

/// An audit in Chicago with C1, its power file and, years later, its meter file (power and counter).
pub(crate) fn audit_years_apart(s: &Server) -> i64 {
    let r = s.post_json(
        "/api/v1/audits",
        &json!({"name": "years apart", "site": {"altitude_m": 0, "timezone": "America/Chicago"}}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let id = r.json()["id"].as_i64().unwrap();
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/compressors"),
        &json!({"tag": "C1", "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                "rated_power_kw": 45, "rated_flow_m3_min": 7.5, "rated_pressure_bar_g": 7.5}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let first = mapping(json!([{"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"}]));
    let r = s.upload(id, "c1-2019.csv", power_file().as_bytes(), &first, "");
    assert_eq!(r.status, 201, "{}", r.text);
    let meter = mapping(json!([
        {"column": "P kW", "quantity": "power", "unit": "kW", "compressor": "C1"},
        {"column": "E kWh", "quantity": "energy", "unit": "kWh", "compressor": "C1"}]));
    let r = s.upload(id, "c1-2024.csv", meter_file().as_bytes(), &meter, "");
    assert_eq!(r.status, 201, "{}", r.text);
    id
}

fn script_json(html: &str, id: &str) -> Value {
    let open = format!("id=\"{id}\">");
    let at = html.find(&open).unwrap_or_else(|| panic!("no {id}")) + open.len();
    let end = at + html[at..].find("</script>").unwrap();
    serde_json::from_str(&html[at..end]).unwrap()
}

#[test]
fn a_power_file_and_a_counter_file_years_apart_count_every_reading_once() {
    // Arrange + Act
    let s = Server::start();
    let id = audit_years_apart(&s);
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();

    // Assert: energy. The first file: 30 kW over 599 min = 299.5 kWh. The second: 40 kW over
    // 3,238 s = 35.978 kWh, logged twice (power and counter) and counted once. 335.478 kWh in all;
    // counting the counter alone (the fault) gave 35.98, counting both files' power and the
    // counter 371.46.
    let want = 30.0 * 599.0 / 60.0 + 40.0 * 3238.0 / 3600.0;
    let e = sm["system"]["energy_kwh"].as_f64().unwrap();
    assert!((e - want).abs() < 1e-4 * want, "{e} kWh against {want}");
    // Mean power over the logged time: 335.478 kWh / (9.9833 + 0.8994) h = 30.83 kW.
    let logged = 599.0 / 60.0 + 3238.0 / 3600.0;
    let mean = sm["system"]["mean_power_kw"].as_f64().unwrap();
    assert!((mean - want / logged).abs() < 1e-3, "{mean} kW against {}", want / logged);
    // The compressor's own logged hours hold both files: 10.88 h, to the 5-minute bins' edges.
    let c1 = &sm["compressors"][0];
    let h = c1["logged_hours"].as_f64().unwrap();
    assert!((h - logged).abs() < 0.1, "C1 logged {h} h against {logged}");

    // The period: logged hours apart from the span. The grid steps 300 s (4.75 years in at most
    // 600,000 bins needs 250 s; the next clock step is 300 s), from 2019-06-03T08:00Z to the end of
    // the bin of the last reading (2024-03-04T12:53:58Z), 12:55Z: 150,008,100 s = 41,668.92 h.
    let p = &sm["period"];
    assert_eq!(p["step_s"], 300.0);
    assert!((p["hours"].as_f64().unwrap() - 150_008_100.0 / 3600.0).abs() < 1e-9, "{p}");
    assert!((p["logged_hours"].as_f64().unwrap() - logged).abs() < 1e-3, "{p}");
    let report = s.get(&format!("/audits/{id}/report")).text;
    assert!(report.contains("(10.9 h logged in a span of 41,668.9 h, 5 min analysis step)"), "period line");

    // The day selector: the site's days that hold readings, and no other. The first file is 03:00 to
    // 12:59 CDT on Mon 3 Jun 2019, the second 06:00 to 06:53 CST on Mon 4 Mar 2024; the calendar
    // between them (1,736 days, capped at 1,000) is not listed.
    let days = &script_json(&report, "chart-data")["days"];
    let labels: Vec<&str> = days.as_array().unwrap().iter().map(|d| d["label"].as_str().unwrap()).collect();
    assert_eq!(labels, ["Mon 3 Jun 2019", "Mon 4 Mar 2024"]);
    // Each day is cut at Chicago's midnights: 3 Jun 2019 00:00 CDT = 05:00Z.
    assert_eq!(days[0]["start_ms"], (JUN_3_2019 - 3 * 3600) * 1000);
    assert_eq!(days[0]["end_ms"], (JUN_3_2019 + 21 * 3600) * 1000);
}

#[test]
fn charts_break_at_the_gap_between_files_and_name_the_years() {
    let s = Server::start();
    let id = audit_years_apart(&s);
    let channels = s.get(&format!("/api/v1/audits/{id}/channels")).json();
    let power = channels["channels"]
        .as_array()
        .unwrap()
        .iter()
        .find(|c| c["quantity"] == "power")
        .unwrap_or_else(|| panic!("a power channel in {channels}"));

    // The series API says where a line breaks. Over the channel's span, 2019-06-03T08:00Z to
    // 2024-03-04T12:53:58Z = 150,008,038 s, 500 points make buckets of 300,016.1 s, whole hours
    // from the hourly rollups: 83 h. A silence over two buckets (166 h; three logging intervals,
    // 6 s, are less) is a gap. Each file falls in one bucket: two points, years apart.
    let r = s.get(&format!("/api/v1/audits/{id}/series?channel={}&points=500", power["id"]));
    assert_eq!(r.status, 200, "{}", r.text);
    let v = r.json();
    assert_eq!(v["gap_ms"], 2 * 83 * 3_600_000i64, "{v}");
    let t: Vec<i64> = v["t_ms"].as_array().unwrap().iter().map(|x| x.as_i64().unwrap()).collect();
    assert_eq!(t.len(), 2, "{v}");
    assert!(t[1] - t[0] > v["gap_ms"].as_i64().unwrap());

    // The findings' power chart lifts the pen at the gap: two moves, no line drawn across it.
    let findings = s.get(&format!("/audits/{id}/findings")).text;
    let at = findings.find("id=\"plot-power\"").expect("the power chart");
    let svg = &findings[at..at + findings[at..].find("</svg>").unwrap()];
    let line = svg.find("class=\"line\"").expect("a line");
    let d_at = line + svg[line..].find(" d=\"").unwrap() + 4;
    let d = &svg[d_at..d_at + svg[d_at..].find('"').unwrap()];
    assert_eq!(d.matches('M').count(), 2, "path {d}");
    assert!(!d.contains('L'), "a line drawn across years: {d}");
    // Its time axis ticks every 365 days from the first Chicago midnight after the start,
    // Tue 4 Jun 2019; 2020's leap day moves the rest a day: 3 Jun 2020, 2021, 2022, 2023 (the
    // next, 2 Jun 2024, is after the end). Each label has its year.
    for label in ["4 Jun 2019", "3 Jun 2020", "3 Jun 2021", "3 Jun 2022", "3 Jun 2023"] {
        assert!(svg.contains(&format!(">{label}</text>")), "no tick {label} in the power chart");
    }
}

#[test]
fn every_share_of_demand_reads_not_enough_data_with_the_reason() {
    // The thin audit of `guard` (three files apart, a pressure log of another system with readings
    // at -0.30 bar(g)) and a bleed-down: 4 m³ from 7.0 to 6.0 bar(g) in 60 s.
    let s = Server::start();
    let (id, _) = super::guard::thin_audit(&s);
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/field-tests"),
        &json!({"kind": "bleed_down", "start_pressure_bar_g": 7.0, "end_pressure_bar_g": 6.0, "duration_s": 60,
                "volume_m3": 4.0}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    assert_eq!(sm["sufficiency"]["verdict"], "insufficient");
    // The leak flow stands; no share of demand does, the test's own included, each with its reason.
    let l = &sm["leaks"];
    assert!(l["adopted_leak_flow_m3_min"].as_f64().is_some(), "{l}");
    assert!(l["share_of_mean_demand"].is_null(), "{l}");
    // Nor the band read from a share ("leaks above 20 % of demand ..."): no share, no band.
    assert!(l["band"].is_null() && l["band_description"].is_null(), "{l}");
    let est = l["estimates"].as_array().unwrap();
    assert!(!est.is_empty() && est.iter().all(|e| e["share_of_mean_demand"].is_null()), "{l}");
    let withheld = sm["sufficiency"]["withheld"].as_array().unwrap();
    let w = withheld
        .iter()
        .find(|w| w["figure"] == "leaks.estimates[].share_of_mean_demand")
        .unwrap_or_else(|| panic!("{withheld:?}"));
    assert!(w["reason"].as_str().unwrap().starts_with("not enough data: "), "{w}");

    // The report: the Leaks card and the table agree, and say why; no share printed as a number.
    let report = s.get(&format!("/audits/{id}/report")).text;
    assert!(!report.contains("no mean flow to compare with"), "the card claims no mean flow");
    assert!(!report.contains("% of demand, as in"), "the card names a band of a share it withholds");
    // Nor a marginal rate read at a load the data cannot carry.
    let card = &report[report.find("Marginal specific power (trim machine)").unwrap()..];
    assert!(card[..200].contains("<div class=\"figure-value\">not enough data</div>"), "{}", &card[..200]);
    assert!(report.contains(
        "share of demand: not enough data (the logged data are not enough for annual figures (reasons above))"
    ));
    let table = &report[report.find("Share of mean demand").unwrap()..];
    let table = &table[..table.find("</table>").unwrap()];
    assert!(table.contains("<td class=\"num\">not enough data</td>"), "{table}");
    assert!(!table.contains(" %</td>"), "a share printed: {table}");
    assert!(report.contains("id=\"leak-share-note\">Share of demand: not enough data"));

    // The pressure: the readings at -0.30 bar(g) are kept in the figures and the charts alike, the
    // table gives the least reading beside the least mean, and the page says so.
    assert!(report.contains("Least / greatest reading"), "the readings' extremes");
    let least = &report[report.find("Least / greatest reading").unwrap()..];
    assert!(least[..200].contains("-0.30 bar(g) / 0.11 bar(g)"), "{}", &least[..200]);
    assert!(report.contains("id=\"pressure-note\">The log holds readings below -0.10 bar(g)"));
    let findings = s.get(&format!("/audits/{id}/findings")).text;
    assert!(findings.contains("id=\"pressure-note\">"));
    assert!(findings.contains("id=\"leak-share-note\">"));
}

/// The data-sheet row of a machine whose power was logged when no pressure was (the thin audit's
/// pressure log is another file, years away) says exactly that, not "no pressure logged": the
/// audit has pressure readings, just none while it ran loaded.
#[test]
fn a_loaded_level_without_pressure_beside_it_says_when_pressure_was_missing() {
    let s = Server::start();
    let (id, _) = super::guard::thin_audit(&s);
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    assert!(sm["pressure"]["mean_bar_g"].as_f64().is_some(), "the thin audit logs a pressure");
    let c = &sm["compressors"][0];
    assert!(c["loaded_power_kw"].as_f64().is_some() && c["loaded_pressure_bar_g"].is_null(), "{c}");
    let report = s.get(&format!("/audits/{id}/report")).text;
    assert!(report.contains("(no pressure logged while it ran loaded)"), "the data-sheet row");
    assert!(!report.contains("(no pressure logged)"), "the data-sheet row");
}

/// An audit that logged no pressure at all says so in its verdict, and its pressure table quotes no
/// transmitter's uncertainty and no time below the limit (a walk found "± 1.2 psi" and "– %" there).
#[test]
fn an_audit_without_a_pressure_log_says_so_and_quotes_no_transmitter() {
    let s = Server::start();
    let id = audit_years_apart(&s);
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    assert!(sm["pressure"]["mean_bar_g"].is_null(), "no pressure in this audit");
    let reasons = sm["sufficiency"]["reasons"].as_array().unwrap();
    assert!(
        reasons.iter().any(|r| r.as_str().unwrap().starts_with("no header pressure was logged")),
        "{reasons:?}"
    );
    let report = s.get(&format!("/audits/{id}/report")).text;
    assert!(report.contains("no header pressure was logged"), "the verdict's list");
    assert!(report.contains("not logged (no pressure column was read)"), "the pressure table");
    assert!(!report.contains("Uncertainty of the transmitter"), "a transmitter that was never there");
}

/// A dryer on record in an audit whose data are not enough is not priced, and the report and the
/// findings say so: a walk found "No dryer, drain, filter or pressure drop on record" beside the
/// dryers the technician had just recorded.
#[test]
fn records_left_unpriced_on_thin_data_are_not_called_absent() {
    let s = Server::start();
    let (id, _) = super::guard::thin_audit(&s);
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/dryers"),
        &json!({"tag": "D1", "kind": "heatless_desiccant", "rated_flow_m3_min": 10, "purge_fraction": 0.15,
                "control": "fixed_cycle"}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    for page in ["report", "findings"] {
        let html = s.get(&format!("/audits/{id}/{page}")).text;
        assert!(!html.contains("No dryer, drain, filter or pressure drop on record."), "{page}");
        assert!(html.contains("id=\"transmission-withheld\">Dryers, drains, filters and end uses on record, if any, are not priced: not enough data"), "{page}");
    }
}

/// With the verdict insufficient the plant's demand is unknown: no system specific power, no
/// part-load penalty and no cost of air, on the API (null, with the reason) and the report (a walk
/// found "23.30 kW/(m³/min) … part-load penalty 1,371.4 %" on air read from machines' states).
#[test]
fn an_insufficient_audit_gives_no_specific_power_nor_cost_of_air() {
    let s = Server::start();
    let id = audit_years_apart(&s);
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    assert_eq!(sm["sufficiency"]["verdict"], "insufficient");
    for f in ["specific_power_kw_per_m3_min", "specific_power_kw_per_m3_min_low", "part_load_penalty_percent"]
    {
        assert!(sm["system"][f].is_null(), "system.{f} = {}", sm["system"][f]);
    }
    assert!(sm["baseline"]["cost_per_1000_m3"].is_null(), "{}", sm["baseline"]);
    let withheld = sm["sufficiency"]["withheld"].as_array().unwrap();
    for f in ["system.specific_power_kw_per_m3_min", "baseline.cost_per_1000_m3"] {
        let w = withheld.iter().find(|w| w["figure"] == f).unwrap_or_else(|| panic!("{f}: {withheld:?}"));
        assert!(
            w["reason"]
                .as_str()
                .unwrap()
                .starts_with("the logged data are not enough to set the plant's power"),
            "{w}"
        );
    }
    let report = s.get(&format!("/audits/{id}/report")).text;
    for label in ["figure-label\">System specific power", "figure-label\">Cost of air"] {
        let card = &report[report.find(label).unwrap_or_else(|| panic!("{label}"))..];
        assert!(
            card[..300].contains("<div class=\"figure-value\">not enough data</div>"),
            "{}",
            &card[..300]
        );
        assert!(card[..600].contains("not enough to set the plant"), "{}", &card[..600]);
    }
    assert!(!report.contains("part-load penalty"), "a penalty of a withheld figure");
}

/// A pressure log that is not taken as the plant's header (the thin audit's, of another system)
/// gives no time below the plant's low limit and no pressure bands: null on the API with the reason,
/// "not enough data" in the report (a walk found "Time below the low limit 100.0 %" there).
#[test]
fn a_pressure_log_not_the_plants_header_gives_no_time_below_the_limit() {
    let s = Server::start();
    let (id, _) = super::guard::thin_audit(&s);
    let sm = s.get(&format!("/api/v1/audits/{id}/summary")).json();
    assert_eq!(sm["sufficiency"]["pressure_credible"], false);
    assert!(sm["pressure"]["share_below_low_limit"].is_null(), "{}", sm["pressure"]);
    assert!(sm["pressure"]["share_above_highest_rated"].is_null(), "{}", sm["pressure"]);
    let withheld = sm["sufficiency"]["withheld"].as_array().unwrap();
    let w = withheld.iter().find(|w| w["figure"] == "pressure.share_below_low_limit").expect("withheld");
    assert!(w["reason"].as_str().unwrap().starts_with("the pressure log is not credible"), "{w}");
    let report = s.get(&format!("/audits/{id}/report")).text;
    for row in ["<dt>Time below the low limit</dt>", "<dt>5 % / 50 % / 95 % of time below</dt>"] {
        let at = &report[report.find(row).unwrap_or_else(|| panic!("{row}"))..];
        assert!(
            at[row.len()..].starts_with("<dd>not enough data (the pressure log is not credible"),
            "{}",
            &at[..300]
        );
    }
}
