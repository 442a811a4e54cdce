//! Layouts read as a person reads them (issue 14): padded preambles, units and aggregation rows,
//! blank lines, multi-row headers, intervals, time before date, day or month first from the whole
//! sample, markers, and units from neighbouring unit columns. Files are generated here.

use super::*;
use crate::core::units::SiteAir;
use crate::ingest::parse::parse_stream;
use proptest::prelude::*;

fn import(file: &[u8], s: &Sniffed) -> crate::ingest::ParseReport {
    let mut m = suggest_mapping(s);
    for c in &mut m.columns {
        if matches!(c.quantity.as_str(), "power" | "energy") && c.compressor.is_none() {
            c.compressor = Some("C1".into());
        }
    }
    let mut sink = Vec::new();
    parse_stream(file, &m, &SiteAir::new(101.325, 20.0), &mut sink, &mut |_| {}).unwrap()
}

fn col<'a>(s: &'a Sniffed, name: &str) -> &'a ColumnGuess {
    s.columns.iter().find(|c| c.column == name).unwrap_or_else(|| panic!("no column {name}"))
}

#[test]
fn a_preamble_padded_with_delimiters_is_not_data() {
    // Every preamble line padded to the data's five fields, one of them a bare number.
    let mut file = b"Logger serial:,,,,\n4410027,,,,\nSite:,,,,\nUNIT: ft,,,,\nUNIT: \xb0C,,,,\n\
        Date,Time,ms,STAGE,WATER_TEMPERATURE\n"
        .to_vec();
    for i in 0..40 {
        // Hourly rows from 3/11/2026 1:00 PM: the day passes 12 on the third day.
        let t = 13 * 60 + i * 60;
        let (d, h, m) = (11 + t / 1440, (t % 1440) / 60, t % 60);
        let (h12, pm) = (if h % 12 == 0 { 12 } else { h % 12 }, if h >= 12 { "PM" } else { "AM" });
        file.extend_from_slice(
            format!("3/{d}/2026,{h12}:{m:02}:00 {pm},0,-0.2{},21.{}\n", i % 7, i % 9).as_bytes(),
        );
    }
    let s = sniff(&file).unwrap();
    assert_eq!((s.header_line, s.units_line, s.first_data_line), (6, None, 7));
    assert_eq!(s.encoding, "windows-1252");
    let t = s.timestamp.as_ref().unwrap();
    assert_eq!((t.column.as_str(), t.time_column.as_deref()), ("Date", Some("Time")));
    assert_eq!((t.format.as_str(), t.date_order.as_deref()), ("%m/%d/%Y %I:%M:%S %p", Some("month_first")));
    assert!(!s.day_first_ambiguous);
    assert_eq!(s.lines.iter().find(|l| l.line == 5).map(|l| l.role.as_str()), Some("preamble"));
    let r = import(&file, &s);
    assert_eq!(r.rows, 40);
}

#[test]
fn a_units_row_and_an_aggregation_row_under_quoted_names() {
    let mut file = b"\"TABLE\",\"station\",\"program\"\n\
        \"Stamp\",\"Row\",\"Hall_T_mean\",\"Baro_mean\",\"Flow\"\n\
        \"stamp\",\"no.\",\"\xc2\xb0F\",\"inHg\",\"m3/min\"\n\
        \"\",\"\",\"Mean\",\"Mean\",\"Sample\"\n"
        .to_vec();
    for i in 0..30 {
        file.extend_from_slice(
            format!(
                "\"2026-10-06 {:02}:{:02}:00\",{i},50.{i},29.7{},12.{}\n",
                10 + i / 4,
                (i % 4) * 15,
                i % 10,
                i % 10
            )
            .as_bytes(),
        );
    }
    let s = sniff(&file).unwrap();
    assert_eq!((s.header_line, s.units_line, s.first_data_line), (2, Some(3), 5));
    let roles: Vec<(u32, &str)> = s.lines.iter().take(5).map(|l| (l.line, l.role.as_str())).collect();
    // The station line above the names is the header table's first row.
    assert_eq!(roles, [(1, "header_upper"), (2, "header"), (3, "units"), (4, "skipped"), (5, "data")]);
    // Units come from the units row; inches of mercury near one atmosphere are a barometer's.
    let g = |n| {
        let c = col(&s, n);
        (c.quantity.as_deref(), c.unit.as_deref(), c.unit_from.as_deref())
    };
    assert_eq!(g("Hall_T_mean"), (Some("temperature"), Some("F"), Some("units_row")));
    assert_eq!(g("Baro_mean"), (Some("pressure"), Some("inHg_a"), Some("units_row")));
    assert_eq!(g("Flow"), (Some("flow"), Some("m3_min"), Some("units_row")));
    assert_eq!(col(&s, "Hall_T_mean").unit_label.as_deref(), Some("°F"));
    let m = suggest_mapping(&s);
    assert_eq!((m.units_line, m.first_data_line), (Some(3), Some(5)));
    assert_eq!(import(&file, &s).rows, 30);
}

#[test]
fn a_blank_line_between_header_and_data_is_never_the_header() {
    let mut file = b"Messung\tHalle 3\r\n\r\nDatum\t05.06.2026\r\n\r\n\
        Datum\tZeit\tLuftstrom [l/s]\tT [\xb0C]\t\r\n\r\n"
        .to_vec();
    for i in 0..20 {
        let v = if i % 3 == 0 { "#-1".to_string() } else { format!("{},{}", i, i % 10) };
        file.extend_from_slice(format!("05.06.2026\t11:{:02}:00\t{v}\t8,{}\t\r\n", i * 2, i % 10).as_bytes());
    }
    let s = sniff(&file).unwrap();
    assert_eq!((s.delimiter.as_str(), s.decimal.as_str()), ("\t", ","));
    assert_eq!((s.header_line, s.first_data_line), (5, 7));
    assert_eq!(s.markers_seen, ["#-1"]);
    let flow = col(&s, "Luftstrom [l/s]");
    assert!(flow.numeric);
    assert_eq!((flow.quantity.as_deref(), flow.unit.as_deref()), (Some("flow"), Some("l_s")));
    let r = import(&file, &s);
    assert_eq!(r.rows, 20);
    assert_eq!(r.quality.channels[0].marked.count, 7);
}

#[test]
fn a_three_row_header_takes_the_lowest_full_row_for_names() {
    let mut file = b"Printed on:;02.11.2026\r\nInstrument;probe 4\r\n\r\nLogged values:\r\nCount;20\r\n\r\n\
        ;;Probe: EC;Probe: T;\r\n;Elapsed;Serial 5501;Serial 5501;\r\n\
        Date & time;Seconds;Specific Conductance (\xb5S);Temperature (C);\r\n"
        .to_vec();
    for i in 0..20 {
        file.extend_from_slice(
            format!(
                "21.10.2026 16:{:02}:22;{:>12};{:>20};{:>12};\r\n",
                i,
                i * 60,
                590 + i,
                9.0 + i as f64 / 10.0
            )
            .as_bytes(),
        );
    }
    let s = sniff(&file).unwrap();
    assert_eq!((s.delimiter.as_str(), s.header_line, s.units_line, s.first_data_line), (";", 9, None, 10));
    let roles: Vec<&str> =
        s.lines.iter().filter(|l| l.line >= 7 && l.line <= 10).map(|l| l.role.as_str()).collect();
    assert_eq!(roles, ["header_upper", "header_upper", "header", "data"]);
    assert_eq!(col(&s, "Temperature (C)").unit.as_deref(), Some("C"));
    assert_eq!(import(&file, &s).rows, 20);
}

#[test]
fn names_and_bracketed_units_rows_after_a_long_preamble() {
    let mut file = Vec::new();
    for i in 0..36 {
        file.extend_from_slice(format!("PARAM {i:02}          : {}\r\n", i * 3).as_bytes());
    }
    file.extend_from_slice(
        b"\\DATA\r\n\\*\tSTAMP_AT\tFLOW_VOL\tC_SOUND\tGAIN\t\r\n\\#\t\t[m3/h]\t[m/s]\t[dB]\t\r\n",
    );
    for i in 0..30 {
        file.extend_from_slice(format!("A\t14.05.2026 12:25:{i:02}\t87,{i}\t1482,3\t72\t\r\n").as_bytes());
    }
    let s = sniff(&file).unwrap();
    assert_eq!((s.header_line, s.units_line, s.first_data_line), (38, Some(39), 40));
    let m = col(&s, "FLOW_VOL");
    assert_eq!(
        (m.quantity.as_deref(), m.unit.as_deref(), m.unit_label.as_deref()),
        (Some("flow"), Some("m3_h"), Some("m³/h"))
    );
    assert_eq!(import(&file, &s).rows, 30);
}

#[test]
fn interval_timestamps_are_proposed_with_their_start_and_the_named_zone() {
    let mut file = b"\"Interval (CET/CEST)\",\"Feeder load [MW] - west\"\n".to_vec();
    for i in 0..20 {
        let (a, b) = (i * 15, i * 15 + 15);
        file.extend_from_slice(
            format!(
                "\"01.01.2026 {:02}:{:02} - 01.01.2026 {:02}:{:02}\",\"{}\"\n",
                a / 60,
                a % 60,
                b / 60,
                b % 60,
                43_000 + i
            )
            .as_bytes(),
        );
    }
    let s = sniff(&file).unwrap();
    let t = s.timestamp.as_ref().unwrap();
    assert_eq!((t.format.as_str(), t.interval), ("%d.%m.%Y %H:%M", Some(IntervalEnd::Start)));
    assert_eq!(t.timezone.as_deref(), Some("Europe/Berlin"));
    assert_eq!(col(&s, "Feeder load [MW] - west").unit.as_deref(), Some("MW"));
    let r = import(&file, &s);
    // 00:00 CET is 23:00 UTC on the day before.
    assert_eq!(r.first_ms, Some("2025-12-31T23:00:00Z".parse::<jiff::Timestamp>().unwrap().as_millisecond()));
}

#[test]
fn a_time_column_left_of_the_date_column() {
    let mut file = b"Station: bore 2\tserial 17\r\nLowest 7.335 mWS\tHighest 7.349 mWS\t\r\n\
        Time\tDate\tPressure [mWS]\tTemperature [\xb0C]\t\r\n"
        .to_vec();
    for i in 0..20 {
        file.extend_from_slice(format!("08:15:{i:02}\t14.05.2026\t7.34{}\t\r\n", i % 10).as_bytes());
    }
    let s = sniff(&file).unwrap();
    let t = s.timestamp.as_ref().unwrap();
    assert_eq!((t.column.as_str(), t.time_column.as_deref()), ("Date", Some("Time")));
    assert_eq!(t.format, "%d.%m.%Y %H:%M:%S");
    let p = col(&s, "Pressure [mWS]");
    assert_eq!((p.unit.as_deref(), p.unit_label.as_deref()), (Some("mH2O_g"), Some("mH₂O(g)")));
    assert!(p.note.as_deref().unwrap().contains("gauge"));
    assert_eq!(import(&file, &s).rows, 20);
}

fn dated(rows: &[(u32, u32)], step_min: u32) -> Vec<u8> {
    // Month-first dates (m/d/yyyy H:MM, no seconds) at a fixed step through each day listed.
    let mut file = b"Timestamp,C1 Power [kW]\n".to_vec();
    for &(m, d) in rows {
        for k in 0..(1440 / step_min) {
            let t = k * step_min;
            file.extend_from_slice(
                format!("{m}/{d}/2022 {}:{:02},{}\n", t / 60, t % 60, 50 + k % 9).as_bytes(),
            );
        }
    }
    file
}

#[test]
fn day_or_month_first_is_decided_by_the_whole_sample_and_asked_only_when_it_cannot_be() {
    // January 5 to 7, every 15 minutes: no field above 12; read day-first the dates jump a
    // month at every midnight, month-first they run in steady 15-minute steps.
    let s = sniff(&dated(&[(1, 5), (1, 6), (1, 7)], 15)).unwrap();
    let t = s.timestamp.as_ref().unwrap();
    assert_eq!((t.format.as_str(), t.date_order.as_deref()), ("%m/%d/%Y %H:%M", Some("month_first")));
    assert!(!s.day_first_ambiguous);
    // A day above 12 far down the sample (past the first 50 rows) decides it too.
    let s = sniff(&dated(&[(1, 12), (1, 13)], 30)).unwrap();
    assert_eq!(s.timestamp.as_ref().unwrap().format, "%m/%d/%Y %H:%M");
    assert!(!s.day_first_ambiguous);
    // One day only: both readings run the same; day-first is proposed and the page asks.
    let s = sniff(&dated(&[(3, 2)], 30)).unwrap();
    let t = s.timestamp.as_ref().unwrap();
    assert!(s.day_first_ambiguous);
    assert_eq!((t.format.as_str(), t.date_order.as_deref()), ("%d/%m/%Y %H:%M", Some("day_first")));
    assert!(t.candidates.contains(&"%m/%d/%Y %H:%M".to_string()));
}

#[test]
fn a_value_column_followed_by_a_unit_column_takes_its_unit() {
    let mut file = b"Slot\tDate\tTime\tP(TOT)\tUnit\tEP\tUnit\tFREQ\tUnit\r\n".to_vec();
    for i in 0..20 {
        file.extend_from_slice(
            format!("0\t14.05.2026\t12:30:{:02}\t30,{i}\tKW  \t3,{i}\tKWH   \t50\tHz  \r\n", i * 2)
                .as_bytes(),
        );
    }
    let s = sniff(&file).unwrap();
    let g = |n| {
        let c = col(&s, n);
        (c.quantity.as_deref(), c.unit.as_deref(), c.unit_from.as_deref())
    };
    assert_eq!(g("P(TOT)"), (Some("power"), Some("kW"), Some("unit_column")));
    assert_eq!(g("EP"), (Some("energy"), Some("kWh"), Some("unit_column")));
    assert_eq!(g("FREQ"), (None, None, None));
    // The repeated "Unit" names cannot be named by a mapping; the mapped ones are unique.
    let m = suggest_mapping(&s);
    assert_eq!(m.columns.iter().map(|c| c.column.as_str()).collect::<Vec<_>>(), ["P(TOT)", "EP"]);
    assert_eq!(import(&file, &s).rows, 20);
}

#[test]
fn markers_and_repeated_text_in_numeric_columns() {
    let mut file = b"Interval_Start;PowerP_Sum_mean;Flow [m3/min];Note\n".to_vec();
    for i in 0..20 {
        let (p, f) = match i % 5 {
            0 => ("1.#QNAN", "Err:502"),
            1 => ("#VALUE!", "7,5"),
            _ => ("41,5", "7,9"),
        };
        file.extend_from_slice(format!("2026-04-14 17:09:{i:02};{p};{f};ok\n").as_bytes());
    }
    let s = sniff(&file).unwrap();
    assert_eq!(s.decimal, ",");
    assert_eq!(s.markers_seen, ["1.#QNAN", "#VALUE!"]);
    assert_eq!(s.missing_markers, ["Err:502"]);
    let p = col(&s, "PowerP_Sum_mean");
    assert!(p.numeric);
    assert_eq!((p.quantity.as_deref(), p.unit.as_deref()), (Some("power"), Some("kW")));
    assert!(p.note.as_deref().unwrap().contains("no unit in the file"));
    assert_eq!(col(&s, "Note").quantity, None);
    let r = import(&file, &s);
    assert_eq!(r.rows, 20);
    let flow = r.quality.channels.iter().find(|c| c.label == "Flow [m3/min]").unwrap();
    assert_eq!((flow.marked.count, flow.unreadable), (4, 0));
}

#[test]
fn barometric_hectopascals_and_watts_from_the_values_range() {
    let mut file = b"time,supply_power,pressure,reactive_power\n".to_vec();
    for i in 0..20 {
        file.extend_from_slice(
            format!("2026-03-18 04:{i:02}:00,{},101{}.5,0.4\n", 3000 + i * 50, i % 10).as_bytes(),
        );
    }
    let s = sniff(&file).unwrap();
    // Reactive power is not a compressor's power draw.
    assert_eq!(col(&s, "reactive_power").quantity, None);
    assert_eq!(col(&s, "supply_power").unit.as_deref(), Some("W"));
    let p = col(&s, "pressure");
    assert_eq!((p.unit.as_deref(), p.unit_from.as_deref()), (Some("mbar_a"), Some("values")));
    assert!(p.note.as_deref().unwrap().contains("mbar(a)"), "{:?}", p.note);
}

/// One generated layout: what the sniffer must find.
#[derive(Debug, Clone)]
struct Layout {
    delim: char,
    preamble: usize,
    padded: bool,
    upper_rows: usize,
    units_row: bool,
    aggregation_row: bool,
    blanks: usize,
    rows: usize,
}

fn layouts() -> impl Strategy<Value = Layout> {
    (
        prop_oneof![Just(','), Just(';'), Just('\t')],
        0usize..8,
        any::<bool>(),
        0usize..3,
        any::<bool>(),
        any::<bool>(),
        0usize..3,
        3usize..60,
    )
        .prop_map(|(delim, preamble, padded, upper_rows, units_row, aggregation_row, blanks, rows)| {
            Layout { delim, preamble, padded, upper_rows, units_row, aggregation_row, blanks, rows }
        })
}

/// The file and its (header line, units line, first data line).
fn write(l: &Layout) -> (Vec<u8>, (u32, Option<u32>, u32)) {
    let d = l.delim;
    let join = |cells: &[&str]| cells.join(&d.to_string()) + "\r\n";
    let mut out = String::new();
    let mut line = 0u32;
    for i in 0..l.preamble {
        let cell = if i % 3 == 0 { format!("{}", 1000 + i) } else { format!("Setting {i}: on") };
        out += &if l.padded { join(&[&cell, "", "", ""]) } else { cell + "\r\n" };
        line += 1;
    }
    for i in 0..l.upper_rows {
        out += &join(&["", &format!("Sensor {i}"), &format!("SN {i}"), &format!("SN {i}")]);
        line += 1;
    }
    out += &join(&["Time", "C1 Power", "Line pressure", "Flow"]);
    line += 1;
    let header = line;
    let mut units = None;
    if l.units_row {
        out += &join(&["", "kW", "bar", "m3/min"]);
        line += 1;
        units = Some(line);
    }
    if l.aggregation_row {
        out += &join(&["", "Avg", "Max", "Avg"]);
        line += 1;
    }
    for _ in 0..l.blanks {
        out += "\r\n";
        line += 1;
    }
    let dec = if d == ',' { '.' } else { ',' };
    for i in 0..l.rows {
        out += &join(&[
            &format!("2026-03-02 06:{:02}:{:02}", i / 60, i % 60),
            &format!("5{}{dec}{}", i % 10, i % 7),
            &format!("6{dec}{}", i % 10),
            &format!("1{}{dec}5", i % 10),
        ]);
    }
    (out.into_bytes(), (header, units, line + 1))
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 200, ..ProptestConfig::default() })]

    #[test]
    fn generated_layouts_are_found_and_import_every_row(l in layouts()) {
        let (file, want) = write(&l);
        let s = sniff(&file).unwrap();
        prop_assert_eq!((s.header_line, s.units_line, s.first_data_line), want);
        prop_assert_eq!(s.delimiter.as_str(), if l.delim == '\t' { "\t".to_string() } else { l.delim.to_string() });
        prop_assert!(s.lines.iter().all(|h| h.role != "header" || h.line == want.0));
        if l.units_row {
            let c = col(&s, "C1 Power");
            prop_assert_eq!((c.unit.as_deref(), c.unit_from.as_deref()), (Some("kW"), Some("units_row")));
        }
        let r = import(&file, &s);
        prop_assert_eq!(r.rows, l.rows as u64);
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 120, ..ProptestConfig::default() })]

    /// Dates with every field at most 12, written day-first or month-first over two or three
    /// days: the row order alone decides, and the proposal reads them as written.
    #[test]
    fn the_row_order_decides_day_or_month_first(
        month in 1u32..=12, day in 1u32..=9, days in 2u32..=3, step in prop_oneof![Just(15u32), Just(30), Just(60)],
        day_first in any::<bool>(), sep in prop_oneof![Just('/'), Just('-')],
    ) {
        let mut file = b"Date;Time;C1 Power [kW]\n".to_vec();
        for dd in day..day + days {
            for k in 0..(1440 / step) {
                let t = k * step;
                let date = if day_first { format!("{dd}{sep}{month}{sep}2022") } else { format!("{month}{sep}{dd}{sep}2022") };
                file.extend_from_slice(format!("{date};{}:{:02};5{}\n", t / 60, t % 60, k % 10).as_bytes());
            }
        }
        let s = sniff(&file).unwrap();
        let t = s.timestamp.as_ref().unwrap();
        prop_assert!(!s.day_first_ambiguous);
        prop_assert_eq!(t.date_order.as_deref(), Some(if day_first { "day_first" } else { "month_first" }));
        let r = import(&file, &s);
        let first = format!("2022-{month:02}-{day:02}T00:00:00Z").parse::<jiff::Timestamp>().unwrap().as_millisecond();
        prop_assert_eq!(r.first_ms, Some(first));
    }
}

#[test]
fn latin1_superscript_three_and_degree_signs_in_a_units_row() {
    // Windows-1252 / Latin-1: 0xB3 is "³", 0xB0 is "°".
    let mut file = b"Zeit;Verdichter 2;Netz;Menge;Temp\r\n;kW;bar(\xfc);Nm\xb3/h;\xb0C\r\n".to_vec();
    for i in 0..20 {
        file.extend_from_slice(
            format!("02.03.2026 06:{i:02}:00;5{},0;6,{};60{};2{}\r\n", i % 10, i % 10, i % 10, i % 10)
                .as_bytes(),
        );
    }
    let s = sniff(&file).unwrap();
    assert_eq!((s.encoding.as_str(), s.header_line, s.units_line), ("windows-1252", 1, Some(2)));
    let g = |n| {
        let c = col(&s, n);
        (c.quantity.as_deref(), c.unit.as_deref(), c.compressor.as_deref())
    };
    assert_eq!(g("Verdichter 2"), (Some("power"), Some("kW"), Some("C2")));
    // "bar(ü)": the German "Überdruck", gauge.
    assert_eq!(g("Netz"), (Some("pressure"), Some("bar_g"), None));
    assert_eq!(g("Menge"), (Some("flow"), Some("Nm3_h"), None));
    assert_eq!(col(&s, "Menge").unit_label.as_deref(), Some("Nm³/h"));
    assert_eq!(g("Temp"), (Some("temperature"), Some("C"), None));
    assert_eq!(import(&file, &s).rows, 20);
}
