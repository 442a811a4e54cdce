//! The thin audit of issue 16's second walk, over HTTP: a US-units audit in Chicago from three files
//! logged years apart, one of which gives a compressor's power only as an energy counter. The
//! counter's power is drawn on its day; the baseline replay meets the logged peak and says what it
//! leaves out; the counter's power is checked against the data sheet. Invented files in the walk's
//! shapes; the expected values are worked by hand below.

use crate::support::*;
use crate::thin_files::JUN_3_2019;

/// 2021-09-13T17:00:00Z, a Monday: 12:00 CDT in Chicago (UTC-5 in September, IANA tz database).
const SEP_13_2021: i64 = 1_631_552_400;
/// 2023-02-04T19:30:00Z, a Saturday: 13:30 CST in Chicago (UTC-6 in February).
const FEB_4_2023: i64 = 1_675_539_000;
/// C2 draws this, kW, all through its counter file.
const C2_KW: f64 = 34.0;

/// C1's power, a reading a minute for 600 minutes: 6.5 kW loaded 3 minutes in 10, else 2.5 kW.
fn power_file() -> String {
    let mut s = String::from("time,C1 kW\n");
    for i in 0..600 {
        let kw = if i % 10 < 3 { "6.5" } else { "2.5" };
        s.push_str(&format!("{},{kw}\n", jiff_like_rfc3339(JUN_3_2019 + i * 60)));
    }
    s
}

/// C2's energy counter alone (kWh), every 2 s for 1,620 readings (3,238 s): 34 kW is 34 × 2 / 3600
/// = 0.018889 kWh a step.
fn counter_file() -> String {
    let mut s = String::from("time,E kWh\n");
    for i in 0..1620 {
        let kwh = 50.0 + i as f64 * C2_KW * 2.0 / 3600.0;
        s.push_str(&format!("{},{kwh:.6}\n", jiff_like_rfc3339(SEP_13_2021 + i * 2)));
    }
    s
}

/// A pressure and flow log of another system: a reading a second for 36 min, 0.05 bar(g) with
/// every 30th reading at -0.30 bar(g), and a steady 0.12 m³/min.
fn header_file() -> String {
    let mut s = String::from("time,header bar,flow m3/min\n");
    for i in 0..2160 {
        let bar = if i % 30 == 0 { "-0.30" } else { "0.05" };
        s.push_str(&format!("{},{bar},0.12\n", jiff_like_rfc3339(FEB_4_2023 + i)));
    }
    s
}

fn mapping(columns: Value) -> Value {
    json!({"delimiter": ",", "decimal": ".", "header_line": 1,
           "timestamp": {"column": "time", "format": "rfc3339", "timezone": "UTC"},
           "columns": columns})
}

/// The audit (US units, Chicago), C1 rated 7.5 kW and C2 rated 8 kW, a 1 m³ receiver, and the
/// three files; the upload replies in file order.
fn thin_counter_audit(s: &Server) -> (i64, Vec<Value>) {
    let r = s.post_json(
        "/api/v1/audits",
        &json!({"name": "thin counter", "site": {"altitude_m": 0, "timezone": "America/Chicago",
                "display_units": "us", "currency": "USD"}}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let id = r.json()["id"].as_i64().unwrap();
    for (tag, kw, m3) in [("C1", 7.5, 1.0), ("C2", 8.0, 1.2)] {
        let r = s.post_json(
            &format!("/api/v1/audits/{id}/compressors"),
            &json!({"tag": tag, "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                    "rated_power_kw": kw, "rated_flow_m3_min": m3, "rated_pressure_bar_g": 7.5}),
        );
        assert_eq!(r.status, 201, "{}", r.text);
    }
    let r = s.post_json(&format!("/api/v1/audits/{id}/receivers"), &json!({"name": "R1", "volume_m3": 1.0}));
    assert_eq!(r.status, 201, "{}", r.text);
    let files = [
        (
            "c1-2019.csv",
            power_file(),
            json!([{"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"}]),
        ),
        (
            "c2-2021.csv",
            counter_file(),
            json!([{"column": "E kWh", "quantity": "energy", "unit": "kWh", "compressor": "C2"}]),
        ),
        (
            "header-2023.csv",
            header_file(),
            json!([{"column": "header bar", "quantity": "pressure", "unit": "bar_g"},
                                                  {"column": "flow m3/min", "quantity": "flow", "unit": "m3_min"}]),
        ),
    ];
    let mut replies = vec![];
    for (name, file, columns) in files {
        let r = s.upload(id, name, file.as_bytes(), &mapping(columns), "");
        assert_eq!(r.status, 201, "{name}: {}", r.text);
        replies.push(r.json());
    }
    (id, replies)
}

#[test]
fn a_counters_power_far_above_its_data_sheet_is_flagged_at_import() {
    // Arrange + Act
    let s = Server::start();
    let (_, replies) = thin_counter_audit(&s);

    // Assert: C2's counter rises 34 kW × 60 s a minute: 34.0 kW against 1.5 × 8 kW = 12 kW. The
    // counter's readings (kWh) are not power; the power they stand for is what is checked.
    let counter = &replies[1];
    let q = &counter["quality"]["channels"][0];
    assert_eq!(q["quantity"], "energy");
    let p = q["counter_power"]["value"].as_f64().expect("the counter's power");
    assert!((p - C2_KW).abs() < 1e-3, "{p} kW");
    let flag = &q["implausible"][0];
    assert_eq!(
        flag["reason"],
        "power of C2 from its energy counter (the mean over a minute or more) up to 34.0 kW, above 1.5 x its \
         rated 8 kW: check the unit, the scale or the compressor of the column"
    );
    let warnings: Vec<&str> =
        counter["warnings"].as_array().unwrap().iter().map(|w| w.as_str().unwrap()).collect();
    assert!(
        warnings.iter().any(|w| w.starts_with("E kWh: implausible: power of C2 from its energy counter")),
        "{warnings:?}"
    );
    // C1's power, 6.5 kW at most, is under 1.5 × 7.5 = 11.25 kW: not flagged.
    assert_eq!(replies[0]["quality"]["channels"][0]["implausible"], json!([]));
}
