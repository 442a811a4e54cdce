//! What an import's reply says in words: durations in whole units, a large power grouped and in
//! MW, and times in the site's zone named by its abbreviation, as the pages write them.

use crate::support::*;
use serde_json::json;

/// 2026-01-12T06:00:00Z, a Monday of winter: 07:00 CET in Berlin (UTC+1 from the last Sunday of
/// October to the last Sunday of March, IANA tz database).
const START: i64 = 1_768_197_600;

#[test]
fn an_import_reply_words_its_interval_gap_power_and_times_as_the_pages_do() {
    let s = Server::start();
    let r = s.post_json(
        "/api/v1/audits",
        &json!({"name": "Berlin plant", "site": {"timezone": "Europe/Berlin", "display_units": "si"}}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    let id = r.json()["id"].as_i64().unwrap();
    let r = s.post_json(
        &format!("/api/v1/audits/{id}/compressors"),
        &json!({"tag": "C1", "kind": "lubricated_screw", "control": "load_unload", "cooling": "air",
                "rated_power_kw": 55, "rated_flow_m3_min": 9.5, "rated_pressure_bar_g": 7.5}),
    );
    assert_eq!(r.status, 201, "{}", r.text);
    // A 15-minute log of 40 rows with one gap of 34,800 s (9 h 40 min) after row 19, one reading
    // of a column in W read as kW: 78,899,000 kW.
    let mut csv = String::from("time,C1 kW\n");
    let mut t = START;
    for i in 0..40 {
        let kw = if i == 5 { 78_899_000.0 } else { 40.0 };
        csv.push_str(&format!("{},{kw}\n", jiff_like_rfc3339(t)));
        t += if i == 19 { 34_800 } else { 900 };
    }
    let mapping = json!({"delimiter": ",", "decimal": ".", "header_line": 1,
        "timestamp": {"column": "time", "format": "rfc3339", "timezone": "UTC"},
        "columns": [{"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"}]});
    let r = s.upload(id, "quarter-hours.csv", csv.as_bytes(), &mapping, "");
    assert_eq!(r.status, 201, "{}", r.text);
    let j = r.json();
    assert_eq!(j["interval_s"], 900.0);
    assert_eq!(j["interval_words"], "15 min");
    // First row 07:00 CET; last row 19 x 900 s + 34,800 s + 19 x 900 s = 69,000 s later, 02:10
    // CET the next day (datetime(2026,1,12,6,tzinfo=UTC) + timedelta(seconds=69000), in Berlin).
    assert_eq!(j["first_local"], "Mon 12 Jan 2026 07:00 CET");
    assert_eq!(j["last_local"], "Tue 13 Jan 2026 02:10 CET");
    assert_eq!(j["channels"][0]["first_local"], "Mon 12 Jan 2026 07:00 CET");
    assert_eq!(j["channels"][0]["last_local"], "Tue 13 Jan 2026 02:10 CET");
    let w: Vec<&str> = j["warnings"].as_array().unwrap().iter().map(|w| w.as_str().unwrap()).collect();
    assert!(w.iter().any(|x| x.contains("logging interval; the longest is 9 h 40 min")), "{w:?}");
    assert!(w.iter().any(|x| x.contains("up to 78,899 MW, above 1.25 x its rated 55 kW")), "{w:?}");
    assert!(w.iter().any(|x| x.contains("the highest is 78,899 MW at line 7")), "{w:?}");
    assert!(!w.iter().any(|x| x.contains("900 s") || x.contains("78,899,000.0 kW")), "{w:?}");
}
