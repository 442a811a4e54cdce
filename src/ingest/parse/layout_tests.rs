//! The mapping's layout additions of issue 14, read by the parser: a units line, a first data
//! line, extra missing markers, interval timestamps, a time column before the date, and markers
//! and text in numeric cells counted as missing.

use super::*;
use crate::ingest::quality::MarkedCell;

fn mapping(json: &str) -> Mapping {
    serde_json::from_str(json).unwrap()
}

type Readings = Vec<(usize, i64, f64)>;

fn parse(bytes: &[u8], m: &Mapping) -> Result<(ParseReport, Readings), IngestError> {
    let mut sink = Vec::new();
    let r = parse_stream(bytes, m, &SiteAir::new(101.325, 20.0), &mut sink, &mut |_| {})?;
    Ok((r, sink))
}

fn ms(s: &str) -> i64 {
    s.parse::<jiff::Timestamp>().unwrap().as_millisecond()
}

#[test]
fn a_units_row_and_an_aggregation_row_are_skipped_through_first_data_line() {
    let file = b"\"station 4\",\"logger\"\n\"TIMESTAMP\",\"C1\",\"P\"\n\"TS\",\"kW\",\"bar\"\n\"\",\"Avg\",\"Smp\"\n\
        \"2026-03-02 06:00:00\",50.5,6.8\n\"2026-03-02 06:15:00\",51.5,6.9\n";
    let m = mapping(
        r#"{"header_line": 2, "units_line": 3, "first_data_line": 5,
            "timestamp": {"column": "TIMESTAMP", "format": "%Y-%m-%d %H:%M:%S"},
            "columns": [{"column": "C1", "quantity": "power", "unit": "kW", "compressor": "C1"},
                        {"column": "P", "quantity": "pressure", "unit": "bar_g"}]}"#,
    );
    let (r, got) = parse(file, &m).unwrap();
    assert_eq!((r.rows, r.readings, r.quality.file.blank_lines), (2, 4, 0));
    assert_eq!(got[0], (0, ms("2026-03-02T06:00:00Z"), 50_500.0));
    // Without first_data_line the aggregation row is read as data: its timestamp is refused.
    let mut m2 = m.clone();
    m2.first_data_line = None;
    let e = parse(file, &m2).unwrap_err();
    assert_eq!((e.line, e.column.as_deref()), (Some(4), Some("TIMESTAMP")));
    // The units line alone skips only itself.
    let file = b"Time,C1\n,[kW]\n2026-03-02 06:00:00,50.5\n";
    let mut m3 = m.clone();
    m3.header_line = 1;
    m3.first_data_line = None;
    m3.units_line = Some(2);
    m3.timestamp.column = "Time".into();
    m3.columns.truncate(1);
    assert_eq!(parse(file, &m3).unwrap().0.rows, 1);
}

#[test]
fn lines_out_of_order_are_refused_on_their_field() {
    let base = r#""timestamp": {"column": "T", "format": "rfc3339"},
        "columns": [{"column": "F", "quantity": "flow", "unit": "m3_min"}]"#;
    let e = plan(
        &mapping(&format!(r#"{{"header_line": 3, "units_line": 2, {base}}}"#)),
        &["T".into(), "F".into()],
    )
    .unwrap_err();
    assert_eq!(e.field.as_deref(), Some("units_line"));
    let e = plan(
        &mapping(&format!(r#"{{"header_line": 1, "units_line": 3, "first_data_line": 3, {base}}}"#)),
        &["T".into(), "F".into()],
    )
    .unwrap_err();
    assert_eq!(e.field.as_deref(), Some("first_data_line"));
    let e = plan(&mapping(&format!(r#"{{"missing_markers": [" "], {base}}}"#)), &["T".into(), "F".into()])
        .unwrap_err();
    assert_eq!(e.field.as_deref(), Some("missing_markers[0]"));
}

#[test]
fn error_markers_and_text_are_missing_values_counted_per_column() {
    let file = b"Time;Flow [l/s];T [C]\n\
        2026-03-02 06:00:00;1,5;20,0\n\
        2026-03-02 06:01:00;#-1;1.#QNAN\n\
        2026-03-02 06:02:00;Err;#VALUE!\n\
        2026-03-02 06:03:00;-9999;21,0\n\
        2026-03-02 06:04:00;2,5;20,5\n";
    let m = mapping(
        r#"{"delimiter": ";", "decimal": ",", "missing_markers": ["-9999"],
            "timestamp": {"column": "Time", "format": "%Y-%m-%d %H:%M:%S"},
            "columns": [{"column": "Flow [l/s]", "quantity": "flow", "unit": "l_s"},
                        {"column": "T [C]", "quantity": "temperature", "unit": "C"}]}"#,
    );
    let (r, got) = parse(file, &m).unwrap();
    assert_eq!((r.rows, got.len()), (5, 5));
    let flow = &r.quality.channels[0];
    assert_eq!((flow.readings, flow.missing.count, flow.marked.count, flow.unreadable), (2, 3, 3, 0));
    let texts: Vec<(u64, &str)> = flow.marked.examples.iter().map(|m| (m.line, m.text.as_str())).collect();
    assert_eq!(texts, [(3, "#-1"), (4, "Err"), (5, "-9999")]);
    let t = &r.quality.channels[1];
    assert_eq!(t.marked.examples[1], MarkedCell { line: 4, text: "#VALUE!".into() });
    let w = r.quality.warnings("UTC");
    assert!(
        w.contains(&"Flow [l/s]: 3 cells with a marker or text read as missing (\"#-1\", \"Err\", \"-9999\"; first at line 3)".into()),
        "{w:?}"
    );
}

#[test]
fn interval_timestamps_are_stamped_by_the_end_the_mapping_names() {
    let file = b"\"Interval (CET/CEST)\",\"Load [MW]\"\n\"01.01.2026 00:00 - 01.01.2026 00:15\",\"41200\"\n\
        \"01.01.2026 00:15 - 01.01.2026 00:30\",\"41090\"\n";
    let json = |end: &str| {
        format!(
            r#"{{"timestamp": {{"column": "Interval (CET/CEST)", "format": "%d.%m.%Y %H:%M", "timezone": "Europe/Berlin",
                "interval": "{end}"}},
                "columns": [{{"column": "Load [MW]", "quantity": "power", "unit": "MW", "compressor": "G"}}]}}"#
        )
    };
    let (r, got) = parse(file, &mapping(&json("start"))).unwrap();
    // 00:00 CET = 23:00 UTC the day before (UTC+1 in winter); MW to W by 1e6 (SI prefix M).
    assert_eq!(got[0], (0, ms("2025-12-31T23:00:00Z"), 41_200e6));
    assert_eq!(r.first_ms, Some(ms("2025-12-31T23:00:00Z")));
    let (_, got) = parse(file, &mapping(&json("end"))).unwrap();
    assert_eq!(got[0].1, ms("2025-12-31T23:15:00Z"));
    assert_eq!(got[1].1, ms("2025-12-31T23:30:00Z"));
    // A cell that is no interval names its line.
    let bad = b"\"Interval (CET/CEST)\",\"Load [MW]\"\n\"01.01.2026 00:00\",\"1\"\n";
    let e = parse(bad, &mapping(&json("start"))).unwrap_err();
    assert_eq!((e.line, e.column.as_deref()), (Some(2), Some("Interval (CET/CEST)")));
}

#[test]
fn a_time_column_before_the_date_column_reads_as_date_then_time() {
    let file = b"Time\tDate\tPressure [mWS]\t\n08:15:30\t14.05.2026\t7.342\n08:15:31\t14.05.2026\t7.341\n";
    let m = mapping(
        r#"{"delimiter": "\t",
            "timestamp": {"column": "Date", "time_column": "Time", "format": "%d.%m.%Y %H:%M:%S"},
            "columns": [{"column": "Pressure [mWS]", "quantity": "pressure", "unit": "mH2O_g"}]}"#,
    );
    let (_, got) = parse(file, &m).unwrap();
    assert_eq!(got[0].1, ms("2026-05-14T08:15:30Z"));
    // 7.342 m of water, conventional (NIST SP 811 B.8: 9.806 65 E+03 Pa per m), stored gauge as
    // logged (`core::basis`: the site's atmosphere is added when read).
    assert!((got[0].2 - 7.342 * 9806.65).abs() < 1e-6);
}
