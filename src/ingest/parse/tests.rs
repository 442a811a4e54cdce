use super::*;
use crate::core::units::{PressureAbs, ReferenceConditions, M3_PER_FT3, PA_PER_PSI};
use crate::ingest::mapping::ColumnMap;
use crate::ingest::quality::MarkedCell;

type Readings = Vec<(usize, i64, f64)>;

fn mapping(json: &str) -> Mapping {
    serde_json::from_str(json).unwrap()
}

fn parse(bytes: &[u8], m: &Mapping, site: &SiteAir) -> Result<(ParseReport, Readings), IngestError> {
    let mut sink = Vec::new();
    let mut seen = 0;
    let r = parse_stream(bytes, m, site, &mut sink, &mut |b| seen = b)?;
    assert_eq!(seen, bytes.len() as u64, "progress ends at the file's length");
    Ok((r, sink))
}

fn sea_level() -> SiteAir {
    SiteAir::new(101.325, 20.0)
}

fn ms(s: &str) -> i64 {
    s.parse::<jiff::Timestamp>().unwrap().as_millisecond()
}

#[test]
fn latin1_header_with_a_degree_sign_semicolons_and_decimal_commas() {
    let file =
        b"Zeit;Temp \xB0C;Netz bar\r\n02.03.2026 06:00:00;21,5;6,8\r\n02.03.2026 06:00:10;21,75;6,9\r\n";
    let m = mapping(
        r#"{"delimiter": ";", "decimal": ",",
            "timestamp": {"column": "Zeit", "format": "%d.%m.%Y %H:%M:%S", "timezone": "+01:00"},
            "columns": [{"column": "Temp °C", "quantity": "temperature", "unit": "°C"},
                        {"column": "Netz bar", "quantity": "pressure", "unit": "bar_g"}]}"#,
    );
    let (r, got) = parse(file, &m, &sea_level()).unwrap();
    assert_eq!((r.rows, r.readings), (2, 4));
    assert_eq!(got[0], (0, ms("2026-03-02T05:00:00Z"), 21.5 + 273.15));
    // Stored as logged, gauge: 6.8 bar(g) = 680,000 Pa(g) (NIST SP 811 B.8: bar = 1e5 Pa); the
    // site's 101.325 kPa makes it 781,325 Pa abs when read.
    assert!((got[1].2 - 680_000.0).abs() < 1e-6);
    let (k, o) = crate::core::basis::Basis::Gauge.affine(&sea_level());
    assert!((got[1].2 * k + o - 781_325.0).abs() < 1e-6);
    assert_eq!(got[2].2, 21.75 + 273.15);
    assert_eq!(r.median_interval_s, Some(10.0));
    assert_eq!(r.first_ms, Some(ms("2026-03-02T05:00:00Z")));
    assert_eq!(r.last_ms, Some(ms("2026-03-02T05:00:10Z")));
}

#[test]
fn utf16_files_with_a_byte_order_mark_read_as_their_utf8_twin() {
    let text = "Zeit;Temp °C;Netz bar\r\n02.03.2026 06:00:00;21,5;6,8\r\n02.03.2026 06:00:10;21,75;6,9\r\n";
    let m = mapping(
        r#"{"delimiter": ";", "decimal": ",", "encoding": "windows-1252",
            "timestamp": {"column": "Zeit", "format": "%d.%m.%Y %H:%M:%S", "timezone": "+01:00"},
            "columns": [{"column": "Temp °C", "quantity": "temperature", "unit": "°C"},
                        {"column": "Netz bar", "quantity": "pressure", "unit": "bar_g"}]}"#,
    );
    // The mapping's single-byte encoding does not apply: UTF-16 is transcoded to UTF-8 first.
    let mut utf8 = m.clone();
    utf8.encoding = None;
    let (want, want_readings) = parse(text.as_bytes(), &utf8, &sea_level()).unwrap();
    for (bom, be) in [([0xFF, 0xFE], false), ([0xFE, 0xFF], true)] {
        let mut file = bom.to_vec();
        for u in text.encode_utf16() {
            file.extend_from_slice(&if be { u.to_be_bytes() } else { u.to_le_bytes() });
        }
        let (r, got) = parse(&file, &m, &sea_level()).unwrap();
        assert_eq!((r.rows, &got), (2, &want_readings));
        assert_eq!(r.header, want.header);
    }
}

#[test]
fn a_gzip_file_is_refused_by_name_before_any_record() {
    let m = mapping(r#"{"timestamp": {"column": "Time", "format": "rfc3339"}, "columns": []}"#);
    let e = parse_stream(&[0x1F, 0x8B, 8, 0, 0, 0][..], &m, &sea_level(), &mut Vec::new(), &mut |_| {})
        .unwrap_err();
    assert!(e.message.contains("gzip-compressed"), "{e}");
}

#[test]
fn a_bom_does_not_stick_to_the_first_column_name() {
    let file = b"\xEF\xBB\xBFTime,C1 kW\n2026-03-02T06:00:00Z,55.5\n";
    let m = mapping(
        r#"{"timestamp": {"column": "Time", "format": "rfc3339"},
            "columns": [{"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"}]}"#,
    );
    let (_, got) = parse(file, &m, &sea_level()).unwrap();
    assert_eq!(got, vec![(0, ms("2026-03-02T06:00:00Z"), 55_500.0)]);
}

const PREAMBLE: &[u8] =
    b"Logger X-7 serial 0042\nSite: invented plant\nStart: 2026-03-02\n\nInterval: 1 min\n";

fn preamble_mapping() -> Mapping {
    mapping(
        r#"{"header_line": 6,
            "timestamp": {"column": "Time", "format": "%Y-%m-%d %H:%M:%S"},
            "columns": [{"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"},
                        {"column": "Flow", "quantity": "flow", "unit": "m3/min"}]}"#,
    )
}

#[test]
fn a_five_line_preamble_and_text_in_a_number_column_at_a_known_line_and_column() {
    // Text where a number belongs is a missing value, counted with its line and text.
    let mut file = PREAMBLE.to_vec();
    file.extend_from_slice(
        b"Time,C1 kW,Flow\n2026-03-02 06:00:00,50.0,8.5\n2026-03-02 06:01:00,50.1,8.4x\n\
          2026-03-02 06:02:00,50.2,8.3\n",
    );
    let (r, got) = parse(&file, &preamble_mapping(), &sea_level()).unwrap();
    assert_eq!((r.rows, got.len()), (3, 5));
    let flow = &r.quality.channels[1];
    // Line 1-5 preamble, 6 header, 7 first row, 8 the text cell.
    assert_eq!((flow.missing.count, flow.marked.count, flow.unreadable), (1, 1, 1));
    assert_eq!(flow.marked.examples[0], MarkedCell { line: 8, text: "8.4x".into() });
    // A column of more text than numbers is not numbers as mapped: refused at its first text.
    let mut file = PREAMBLE.to_vec();
    file.extend_from_slice(
        b"Time,C1 kW,Flow\n2026-03-02 06:00:00,50.0,8.5\n2026-03-02 06:01:00,50.1,8.4x\n\
          2026-03-02 06:02:00,50.2,8.3y\n",
    );
    let e = parse(&file, &preamble_mapping(), &sea_level()).unwrap_err();
    assert_eq!(e.line, Some(8));
    assert_eq!(e.column.as_deref(), Some("Flow"));
    assert!(e.message.starts_with("2 cells of column \"Flow\" are text"), "{}", e.message);
    let good = {
        let mut f = PREAMBLE.to_vec();
        f.extend_from_slice(b"Time,C1 kW,Flow\n2026-03-02 06:00:00,50.0,6\n");
        f
    };
    let (r, got) = parse(&good, &preamble_mapping(), &sea_level()).unwrap();
    assert_eq!(r.rows, 1);
    assert!((got[1].2 - 0.1).abs() < 1e-15); // 6 m3/min = 0.1 m3/s
}

#[test]
fn a_too_short_row_and_a_bad_timestamp_are_errors_with_line_and_column() {
    let file = b"Time,C1 kW,Flow\n2026-03-02 06:00:00,50.0,8.5\n2026-03-02 06:01:00,50.1\n";
    let e = parse(file, &preamble_mapping_at(1), &sea_level()).unwrap_err();
    assert_eq!((e.line, e.column.as_deref()), (Some(3), Some("Flow")));
    assert_eq!(e.message, "row has 2 fields; column \"Flow\" is field 3");
    let file = b"Time,C1 kW,Flow\n2026-03-02 06:00:00,50.0,8.5\n2026-03-02 6h01,50.1,8\n";
    let e = parse(file, &preamble_mapping_at(1), &sea_level()).unwrap_err();
    assert_eq!((e.line, e.column.as_deref()), (Some(3), Some("Time")));
    assert_eq!(e.message, "cannot read timestamp \"2026-03-02 6h01\" as \"%Y-%m-%d %H:%M:%S\"");
}

fn preamble_mapping_at(line: u32) -> Mapping {
    let mut m = preamble_mapping();
    m.header_line = line;
    m
}

#[test]
fn quoted_fields_with_escapes_and_a_line_break() {
    let file = b"\"Time\",\"C1 kW\",\"Note\",\"Flow\"\n\
        \"2026-03-02 06:00:00\",\"50.5\",\"said \"\"hi\"\"\",\"1,234.5\"\n\
        \"2026-03-02 06:01:00\",51,\"two\nlines\",7\n\
        2026-03-02 06:02:00,52,,bad\n";
    let m = preamble_mapping_at(1);
    let (r, _) = parse(file, &m, &sea_level()).unwrap();
    // The quoted line break makes the second record span lines 3-4; the text is on line 5.
    assert_eq!(r.quality.channels[1].marked.examples[0], MarkedCell { line: 5, text: "bad".into() });
    let ok = &file[..file.len() - "2026-03-02 06:02:00,52,,bad\n".len()];
    let (r, got) = parse(ok, &m, &sea_level()).unwrap();
    assert_eq!(r.rows, 2);
    assert_eq!(got[0].2, 50_500.0);
    assert!((got[1].2 - 1234.5 / 60.0).abs() < 1e-12);
    assert_eq!(got[3].2, 7.0 / 60.0);
}

#[test]
fn an_inch_mark_in_an_unmapped_last_column_loses_no_row() {
    // Every 100th row carries `12" main` in its note: a quote inside an unquoted field is a
    // character (RFC 4180, section 2), so all 1,000 rows are read.
    let mut file = String::from("Time,C1 kW,Flow,Note\n");
    for i in 0..1000 {
        let note = if i % 100 == 0 { "12\" main" } else { "" };
        file.push_str(&format!("2026-03-02 {:02}:{:02}:00,{},8,{note}\n", 6 + i / 60, i % 60, 50 + i % 7));
    }
    let (r, got) = parse(file.as_bytes(), &preamble_mapping_at(1), &sea_level()).unwrap();
    assert_eq!((r.rows, got.len()), (1000, 2000));
}

#[test]
fn cr_only_line_ends_read_row_by_row_and_an_unclosed_quote_names_its_line() {
    let file = b"Time,C1 kW,Flow\r2026-03-02 06:00:00,50,8\r2026-03-02 06:01:00,51,9\r";
    let (r, got) = parse(file, &preamble_mapping_at(1), &sea_level()).unwrap();
    assert_eq!((r.rows, got[2].2), (2, 51_000.0));
    let bad = b"Time,C1 kW,Flow\n2026-03-02 06:00:00,50,\"8\n2026-03-02 06:01:00,51,9\n";
    let e = parse(bad, &preamble_mapping_at(1), &sea_level()).unwrap_err();
    assert_eq!(e.line, Some(2), "{}", e.message);
    assert!(e.message.contains("never closes"), "{}", e.message);
}

#[test]
fn missing_value_markers_give_no_reading_and_are_counted() {
    let file = b"Time,C1 kW,Flow\n\
        2026-03-02 06:00:00,50,8\n\
        2026-03-02 06:01:00,---,NaN\n\
        2026-03-02 06:02:00,OL,\n\
        \n\
        2026-03-02 06:03:00,#N/A,null\n\
        2026-03-02 06:04:00,-OL,N/A\n\
        ,,\n";
    let (r, got) = parse(file, &preamble_mapping_at(1), &sea_level()).unwrap();
    assert_eq!((r.rows, r.readings, got.len()), (5, 2, 2));
    assert_eq!(r.quality.channels[0].missing.count, 4);
    assert_eq!(r.quality.channels[1].missing.count, 4);
    assert_eq!(r.quality.channels[0].missing.examples, vec![3, 4, 6, 7]);
    assert_eq!(r.quality.file.blank_lines, 2);
    assert!(r.quality.warnings("UTC").contains(&"C1 kW: 4 missing values (first at line 3)".to_string()));
}

#[test]
fn amps_become_watts_with_loaded_and_unloaded_power_factors() {
    let file = b"Time,C1 A\n2026-03-02 06:00:00,50\n2026-03-02 06:00:01,15\n";
    let mut m = preamble_mapping_at(1);
    let mut c = ColumnMap::new("C1 A", "current", "A", Some("C1"));
    c.volts = Some(400.0);
    c.power_factor = Some(0.85);
    c.unloaded_power_factor = Some(0.4);
    c.unloaded_below_a = Some(20.0);
    m.columns = vec![c];
    let (_, got) = parse(file, &m, &sea_level()).unwrap();
    // sqrt(3) V I PF, IEC 60050 three-phase active power: 400 V, 50 A, 0.85 -> 29.44 kW;
    // unloaded 15 A at PF 0.4 -> 4.157 kW (hand calculation).
    assert!((got[0].2 / 1000.0 - 29.445).abs() < 0.001);
    assert!((got[1].2 / 1000.0 - 4.157).abs() < 0.001);
}

#[test]
fn a_kwh_counter_with_a_reset_is_kept_exactly_and_reported() {
    let file = b"Time,C1 kWh\n\
        2026-03-02 06:00:00,12345.6\n\
        2026-03-02 06:01:00,12346.5\n\
        2026-03-02 06:02:00,0.2\n\
        2026-03-02 06:03:00,1.1\n";
    let mut m = preamble_mapping_at(1);
    m.columns = vec![ColumnMap::new("C1 kWh", "energy", "kWh", Some("C1"))];
    let (r, got) = parse(file, &m, &sea_level()).unwrap();
    assert_eq!(got[0].2, 12345.6 * 3.6e6);
    let d = &r.quality.channels[0].counter_drops;
    assert_eq!((d.count, d.examples[0].kind.as_str(), d.examples[0].line), (1, "reset", 4));
    let w = r.quality.warnings("UTC");
    assert!(
        w.contains(
            &"C1 kWh: the counter went down 1 time (first a reset at line 4, 12346.5 kWh -> 0.2 kWh)"
                .to_string()
        ),
        "{w:?}"
    );
}

#[test]
fn psig_scfm_and_nm3h_at_a_1000_m_site() {
    // ASHRAE Handbook Fundamentals ch. 1 eq. 3 (the ISO 2533 standard atmosphere): 1000 m ->
    // 89.875 kPa.
    let site = SiteAir::new(89.875, 20.0);
    let file = b"Time,Header,Flow A,Flow B\n2026-03-02 06:00:00,100,100,600\n";
    let mut m = preamble_mapping_at(1);
    let mut b = ColumnMap::new("Flow B", "flow", "Nm3/h", None);
    b.reference = None;
    m.columns = vec![
        ColumnMap::new("Header", "pressure", "psig", None),
        ColumnMap::new("Flow A", "flow", "scfm", None),
        b,
    ];
    let (_, got) = parse(file, &m, &site).unwrap();
    // Stored as measured, nothing of the site applied; the analysis applies the site's air
    // through each channel's basis (`core::basis`), which must give what the old at-import
    // conversion gave.
    let plan = plan(&m, &["Time".into(), "Header".into(), "Flow A".into(), "Flow B".into()]).unwrap();
    let si = |i: usize| {
        let (k, o) = plan.channels[i].basis.affine(&site);
        got[i].2 * k + o
    };
    assert_eq!(got[0].2, 100.0 * PA_PER_PSI);
    assert!((si(0) - PressureAbs::from_psig(100.0, site.atmosphere).0).abs() < 1e-9);
    // 689,475.73 + 89,875 Pa (hand calculation).
    assert!((si(0) - 779_350.73).abs() < 0.01);
    // V_FAD = V_ref (p_ref/p_in)(T_in/T_ref) (dry air as an ideal gas); ASME standard air for
    // scfm: 14.696 psia, 68 F.
    let scfm = 100.0 * M3_PER_FT3 / 60.0 * (14.696 * PA_PER_PSI / 89_875.0);
    assert!((si(1) - scfm).abs() < 1e-12);
    let nm3 = site.free_air_from_reference(600.0 / 3600.0, ReferenceConditions::NORMAL_DIN_1343);
    assert!((si(2) - nm3).abs() < 1e-15);
    // Stored as normal volume: 600 Nm3/h = 1/6 Nm3/s.
    assert!((got[2].2 - 600.0 / 3600.0).abs() < 1e-15);
    // 600 Nm3/h -> 12.10 m3/min free air at 1000 m, 20 C (hand calculation:
    // 10 x 101.325/89.875 x 293.15/273.15).
    assert!((si(2) * 60.0 - 12.0996).abs() < 1e-3);
}

#[test]
fn actual_flow_against_a_pressure_column_is_stored_as_normal_volume() {
    // 1 am³/min at the row's line pressure, 30 °C. By hand, the ideal-gas relation for a fixed
    // mass of dry air (Boyle and Charles) to DIN 1343 normal conditions (101.325 kPa, 0 °C):
    // step 1: 6 bar(g) + 101.325 kPa = 701.325 kPa abs;
    // step 2: pressure ratio 701.325 / 101.325 = 6.921540;
    // step 3: temperature ratio 273.15 / 303.15 = 0.901039;
    // step 4: 1/60 m³/s × 6.921540 × 0.901039 = 0.103943 Nm³/s.
    let file = b"Time,P1,Q\n2026-03-02 06:00:00,6,1\n2026-03-02 06:00:01,,1\n";
    let m = mapping(
        r#"{"timestamp": {"column": "Time", "format": "%Y-%m-%d %H:%M:%S"},
            "columns": [{"column": "P1", "quantity": "pressure", "unit": "bar_g"},
                        {"column": "Q", "quantity": "flow", "unit": "am3_min",
                         "line": {"pressure_column": "P1", "temperature_c": 30}}]}"#,
    );
    let (r, got) = parse(file, &m, &sea_level()).unwrap();
    assert!((got[1].2 - 0.103_943).abs() < 1e-6, "{}", got[1].2);
    // A row without its line pressure gives no flow reading: counted missing.
    assert_eq!((got.len(), r.quality.channels[1].missing.count), (2, 1));
    // Fixed line conditions are stored as logged and converted when read (`core::basis`).
    let fixed = mapping(
        r#"{"timestamp": {"column": "Time", "format": "%Y-%m-%d %H:%M:%S"},
            "columns": [{"column": "Q", "quantity": "flow", "unit": "acfm",
                         "line": {"pressure_bar_a": 8, "temperature_c": 20}}]}"#,
    );
    let (_, got) = parse(file, &fixed, &sea_level()).unwrap();
    assert_eq!(got[0].2, M3_PER_FT3 / 60.0);
    // Without the line, refused naming the column.
    let mut bare = fixed.clone();
    bare.columns[0].line = None;
    let e = parse(file, &bare, &sea_level()).unwrap_err();
    assert_eq!((e.field.as_deref(), e.column.as_deref()), (Some("columns[0].line"), Some("Q")));
    // A pressure column that is not mapped is refused too.
    let mut unmapped = m.clone();
    unmapped.columns.remove(0);
    let e = parse(file, &unmapped, &sea_level()).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("columns[0].line.pressure_column"), "{}", e.message);
}

#[test]
fn pressure_below_zero_absolute_is_rejected_at_its_line() {
    let file = b"Time,Header\n2026-03-02 06:00:00,7\n2026-03-02 06:00:01,-2\n";
    let mut m = preamble_mapping_at(1);
    m.columns = vec![ColumnMap::new("Header", "pressure", "bar_g", None)];
    let e = parse(file, &m, &sea_level()).unwrap_err();
    assert_eq!((e.line, e.column.as_deref()), (Some(3), Some("Header")));
    assert!(e.message.starts_with("pressure -2 bar_g is below zero absolute"), "{}", e.message);
}

#[test]
fn date_and_time_in_two_columns_in_chicago_with_a_clock_offset() {
    let file = b"Date\tTime\tC1 kW\n03/02/2026\t06:00:00 AM\t40\n03/02/2026\t06:00:05 AM\t41\n";
    let m = mapping(
        r#"{"delimiter": "tab", "clock_offset_s": 30,
            "timestamp": {"column": "Date", "time_column": "Time", "format": "%m/%d/%Y %I:%M:%S %p",
                          "timezone": "America/Chicago"},
            "columns": [{"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"}]}"#,
    );
    let (_, got) = parse(file, &m, &sea_level()).unwrap();
    // 06:00 CST (UTC-6) = 12:00 UTC, plus 30 s of clock offset.
    assert_eq!(got[0].1, ms("2026-03-02T12:00:30Z"));
    assert_eq!(got[1].1, ms("2026-03-02T12:00:35Z"));
}

#[test]
fn a_berlin_fall_back_night_is_read_in_order_and_reported() {
    let mut file = b"Time;C1 kW\n".to_vec();
    for (h, m) in [(1, 30), (2, 0), (2, 30), (2, 0), (2, 30), (3, 0)] {
        file.extend_from_slice(format!("2026-10-25 {h:02}:{m:02}:00;10\n").as_bytes());
    }
    let m = mapping(
        r#"{"delimiter": ";", "timestamp": {"column": "Time", "format": "%Y-%m-%d %H:%M:%S",
            "timezone": "Europe/Berlin"},
            "columns": [{"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"}]}"#,
    );
    let (r, got) = parse(&file, &m, &sea_level()).unwrap();
    let times: Vec<i64> = got.iter().map(|g| g.1).collect();
    // Half-hour steps in UTC from 23:30Z to 02:00Z, no duplicates (EU rule, 01:00 UTC change).
    let want: Vec<i64> = (0..6).map(|i| ms("2026-10-24T23:30:00Z") + i * 1_800_000).collect();
    assert_eq!(times, want);
    assert_eq!(r.quality.file.dst.ambiguous_earlier, 2);
    assert_eq!(r.quality.file.dst.ambiguous_later, 2);
    assert_eq!(r.quality.file.out_of_order.count, 0);
    assert_eq!(r.quality.file.dst.examples[2].local_time, "2026-10-25 02:00:00");
    assert_eq!(r.quality.file.dst.examples[2].utc_offset_s, 3600);
    assert!(r.quality.warnings("UTC").iter().any(|w| w.starts_with("4 local times fell in the repeated")));
}

#[test]
fn the_sink_may_stop_the_parse_and_its_error_gets_the_line() {
    struct Full;
    impl ReadingSink for Full {
        fn reading(&mut self, _: usize, _: i64, _: f64) -> Result<(), IngestError> {
            Err(IngestError::new("storage full"))
        }
    }
    let file: &[u8] = b"Time,C1 kW,Flow\n2026-03-02 06:00:00,50.0,8.5\n";
    let e = parse_stream(file, &preamble_mapping_at(1), &sea_level(), &mut Full, &mut |_| {}).unwrap_err();
    assert_eq!((e.message.as_str(), e.line), ("storage full", Some(2)));
}

#[test]
fn a_header_line_beyond_the_file_is_an_error_on_that_field() {
    let e = parse(PREAMBLE, &preamble_mapping(), &sea_level()).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("header_line"));
}
