use super::time::FORMATS;
use super::*;

#[test]
fn a_utf16_file_sniffs_like_its_utf8_copy_and_a_gzip_file_is_named() {
    let text = "Time;C1 kW;Flow\n2026-03-02 06:00:00;50,5;8\n2026-03-02 06:01:00;51,5;9\n";
    let utf8 = sniff(text.as_bytes()).unwrap();
    for bom in [[0xFF, 0xFE], [0xFE, 0xFF]] {
        let mut file = bom.to_vec();
        for u in text.encode_utf16() {
            let b = if bom[0] == 0xFF { u.to_le_bytes() } else { u.to_be_bytes() };
            file.extend_from_slice(&b);
        }
        let s = sniff(&file).unwrap();
        assert_eq!(
            (s.header_line, &s.header, &s.delimiter),
            (utf8.header_line, &utf8.header, &utf8.delimiter)
        );
    }
    // RFC 1952: a gzip member starts with 1F 8B.
    let e = sniff(&[0x1F, 0x8B, 0x08, 0, 0, 0, 0, 0]).unwrap_err();
    assert!(e.message.contains("gzip"), "{}", e.message);
}
use crate::core::units::SiteAir;
use crate::ingest::parse::parse_stream;
use crate::ingest::timestamp::TimeFormat;

#[test]
fn every_candidate_format_is_valid() {
    assert!(FORMATS.iter().all(|f| TimeFormat::parse(f).is_ok()));
}

#[test]
fn a_latin1_semicolon_file_with_a_preamble() {
    let file = b"Logger 7;serial 42\nStart;02.03.2026\n\nZeit;C1 kW;Netzdruck [bar];Temp \xB0C\n\
        02.03.2026 06:00:00;50,5;6,8;21,0\n02.03.2026 06:00:10;50,7;6,9;21,5\n\
        02.03.2026 06:00:20;12,1;7,0;21,5\n";
    let s = sniff(file).unwrap();
    assert_eq!(s.encoding, "windows-1252");
    assert_eq!((s.delimiter.as_str(), s.decimal.as_str(), s.header_line), (";", ",", 4));
    assert_eq!(s.header, vec!["Zeit", "C1 kW", "Netzdruck [bar]", "Temp °C"]);
    let t = s.timestamp.as_ref().unwrap();
    assert_eq!((t.column.as_str(), t.format.as_str()), ("Zeit", "%d.%m.%Y %H:%M:%S"));
    assert!(!s.day_first_ambiguous);
    let c: Vec<_> = s
        .columns
        .iter()
        .map(|c| (c.quantity.as_deref(), c.unit.as_deref(), c.compressor.as_deref()))
        .collect();
    assert_eq!(
        c,
        vec![
            (Some("power"), Some("kW"), Some("C1")),
            (Some("pressure"), Some("bar_g"), None),
            (Some("temperature"), Some("C"), None)
        ]
    );
    assert!(s.columns[1].note.as_deref().unwrap().contains("gauge"));
    assert_eq!(s.preview.len(), 3);
    // The suggested mapping reads the file.
    let m = suggest_mapping(&s);
    let mut sink = Vec::new();
    let r = parse_stream(&file[..], &m, &SiteAir::new(101.325, 20.0), &mut sink, &mut |_| {}).unwrap();
    assert_eq!((r.rows, r.readings), (3, 9));
}

#[test]
fn a_comma_file_with_quotes_units_and_month_first_dates() {
    let file = b"\"Date/Time\",\"Compressor 2 Amps\",\"Header (psig)\",\"Flow scfm\",\"Note\"\r\n\
        \"03/14/2026 01:00:00 PM\",\"48.2\",\"101.5\",\"350\",\"ok\"\r\n\
        \"03/14/2026 01:00:05 PM\",\"12.0\",\"102.0\",\"\",\"\"\r\n";
    let s = sniff(file).unwrap();
    assert_eq!((s.delimiter.as_str(), s.decimal.as_str(), s.header_line), (",", ".", 1));
    assert_eq!(s.encoding, "utf-8");
    let t = s.timestamp.as_ref().unwrap();
    assert_eq!(t.format, "%m/%d/%Y %I:%M:%S %p"); // 14 > 12: month-first decided by the data
    assert!(!s.day_first_ambiguous);
    let g = |i: usize| (s.columns[i].quantity.as_deref(), s.columns[i].unit.as_deref());
    assert_eq!(g(0), (Some("current"), Some("A")));
    assert_eq!(s.columns[0].compressor.as_deref(), Some("C2"));
    assert_eq!(g(1), (Some("pressure"), Some("psig")));
    assert_eq!(g(2), (Some("flow"), Some("scfm")));
    assert_eq!(g(3), (None, None));
    let m = suggest_mapping(&s);
    // Current needs volts and power factor: left for the auditor.
    assert_eq!(
        m.columns.iter().map(|c| c.column.as_str()).collect::<Vec<_>>(),
        ["Header (psig)", "Flow scfm"]
    );
}

#[test]
fn day_first_or_month_first_undecidable_is_flagged() {
    let file = b"Time\tC1 kW\tFlow m3/min\n03/02/2026 06:00\t50\t8.1\n03/02/2026 06:01\t51\t8.2\n";
    let s = sniff(file).unwrap();
    assert_eq!(s.delimiter, "\t");
    assert!(s.day_first_ambiguous);
    let t = s.timestamp.unwrap();
    assert_eq!(t.format, "%d/%m/%Y %H:%M");
    assert!(t.candidates.contains(&"%m/%d/%Y %H:%M".to_string()));
}

#[test]
fn date_and_time_in_two_columns_and_a_bom() {
    let file =
        "\u{feff}Date,Time,K1 kWh,T [°C]\n2026-03-02,06:00:00,1234.5,20.5\n2026-03-02,06:01:00,1235.0,20.6\n";
    let s = sniff(file.as_bytes()).unwrap();
    let t = s.timestamp.as_ref().unwrap();
    assert_eq!((t.column.as_str(), t.time_column.as_deref()), ("Date", Some("Time")));
    assert_eq!(t.format, "%Y-%m-%d %H:%M:%S");
    assert_eq!(s.header[0], "Date");
    assert_eq!(s.columns.len(), 2);
    assert_eq!(s.columns[0].compressor.as_deref(), Some("K1"));
    assert_eq!(s.columns[0].quantity.as_deref(), Some("energy"));
    assert_eq!(s.columns[1].unit.as_deref(), Some("C"));
}

#[test]
fn unix_seconds_in_a_time_column() {
    let file = b"timestamp,C1 kW\n1772431200,50\n1772431201,50\n";
    let s = sniff(file).unwrap();
    assert_eq!(s.timestamp.unwrap().format, "unix_s");
}

#[test]
fn layout_key_is_stable_and_ignores_case_and_padding() {
    let a = layout_key(&["Time".into(), "C1 kW".into()]);
    let b = layout_key(&[" time".into(), "c1 KW ".into()]);
    let c = layout_key(&["C1 kW".into(), "Time".into()]);
    assert_eq!(a, b);
    assert_ne!(a, c);
    assert_eq!(a.len(), 32);
    // Pinned so a change of the fingerprint (which would forget remembered mappings) shows.
    let mut h = Sha256::new();
    h.update(b"airledger-layout-v1\x1ftime\x1fc1 kw");
    let want: String = h.finalize()[..16].iter().map(|b| format!("{b:02x}")).collect();
    assert_eq!(a, want);
}

#[test]
fn a_file_without_a_header_is_refused() {
    let e = sniff(b"2026-03-02 06:00:00,50\n2026-03-02 06:00:01,51\n").unwrap_err();
    assert!(e.message.contains("header"), "{}", e.message);
}

#[test]
fn a_cr_only_file_counts_its_lines() {
    // Line ends of a bare CR (as some older spreadsheet exports write): two preamble lines,
    // the header on line 3.
    let file = b"Site;Plant 4\rStart;02.03.2026\rZeit;C1 kW;Druck [bar]\r\
        02.03.2026 06:00:00;50,5;6,8\r02.03.2026 06:00:10;50,7;6,9\r";
    let s = sniff(file).unwrap();
    assert_eq!((s.delimiter.as_str(), s.decimal.as_str(), s.header_line), (";", ",", 3));
    assert_eq!(s.header, vec!["Zeit", "C1 kW", "Druck [bar]"]);
    assert_eq!(
        s.preview,
        vec![vec!["02.03.2026 06:00:00", "50,5", "6,8"], vec!["02.03.2026 06:00:10", "50,7", "6,9"]]
    );
    assert_eq!(s.columns.len(), 2);
    assert_eq!(s.timestamp.unwrap().format, "%d.%m.%Y %H:%M:%S");
}

#[test]
fn quoted_delimiters_and_line_breaks_preview_as_one_field() {
    // The preamble's second record is a quoted cell over two physical lines (2 and 3), so
    // the header starts on physical line 5, not on the fifth record.
    let file = b"Audit,plant 4\n\"Note\",\"first line\nsecond line\"\n\n\
        time,C1 kW,remark\n\
        2026-03-02 06:00:00,50.5,\"valve A, closed\"\n\
        2026-03-02 06:00:10,50.7,\"drain\nopen\"\n\
        2026-03-02 06:00:20,50.9,ok\n";
    let s = sniff(file).unwrap();
    assert_eq!((s.delimiter.as_str(), s.header_line), (",", 5));
    assert_eq!(s.header, vec!["time", "C1 kW", "remark"]);
    assert_eq!(s.preview.len(), 3);
    assert_eq!(s.preview[0], vec!["2026-03-02 06:00:00", "50.5", "valve A, closed"]);
    assert_eq!(s.preview[1], vec!["2026-03-02 06:00:10", "50.7", "drain\nopen"]);
    assert_eq!(s.preview[2][2], "ok");
    assert_eq!(s.timestamp.as_ref().unwrap().column, "time");
    // The import reads the file with the proposed mapping: the header is where the sniff
    // says, and all three rows are read.
    let m = suggest_mapping(&s);
    let mut sink = Vec::new();
    let r = parse_stream(&file[..], &m, &SiteAir::new(101.325, 20.0), &mut sink, &mut |_| {}).unwrap();
    assert_eq!((r.rows, r.readings), (3, 3));
}

#[test]
fn a_stray_inch_mark_in_the_last_column_swallows_no_row() {
    // `12" main` is a pipe size: a quote in the middle of an unquoted field is a literal
    // (RFC 4180 opens quotes only at the start of a field).
    let file = b"time,C1 kW,pipe\n2026-03-02 06:00:00,50.5,12\" main\n\
        2026-03-02 06:00:10,50.7,x\n2026-03-02 06:00:20,50.9,y\n";
    let s = sniff(file).unwrap();
    assert_eq!((s.delimiter.as_str(), s.header_line), (",", 1));
    assert_eq!(s.preview.len(), 3);
    assert_eq!(s.preview[0][2], "12\" main");
    assert_eq!(s.preview[1], vec!["2026-03-02 06:00:10", "50.7", "x"]);
    assert_eq!(s.preview[2], vec!["2026-03-02 06:00:20", "50.9", "y"]);
}

#[test]
fn a_head_cut_inside_a_quoted_field_ends_the_sample_there() {
    // A 64 KiB head that stops inside an open quote: the rows before it are the sample.
    let mut file = b"time,C1 kW,remark\n".to_vec();
    let mut rows = 0;
    while file.len() < SNIFF_BYTES - 100 {
        file.extend_from_slice(
            format!("2026-03-02 06:{:02}:00,{}.5,ok\n", rows % 60, 40 + rows % 20).as_bytes(),
        );
        rows += 1;
    }
    file.extend_from_slice(b"2026-03-02 07:00:00,51.5,\"");
    file.resize(SNIFF_BYTES, b'x');
    let s = sniff(&file).unwrap();
    assert_eq!((s.delimiter.as_str(), s.header_line), (",", 1));
    assert_eq!(s.header, vec!["time", "C1 kW", "remark"]);
    assert_eq!(s.preview.len(), 10);
    // A head cut inside the first field of a row: that partial row (one field) is dropped;
    // kept, it would end the constant block and no delimiter would be found.
    let row = b"2026-03-02 06:00:10,50.7,ok\n";
    let mut file = b"time,C1 kW,remark\n2026-03-02 06:00:00,50.5,".to_vec();
    let pad = (SNIFF_BYTES - file.len() - 1 - 5) % row.len();
    file.extend(std::iter::repeat_n(b'o', pad));
    file.push(b'\n');
    while file.len() <= SNIFF_BYTES {
        file.extend_from_slice(row);
    }
    let head = &file[..SNIFF_BYTES];
    let tail = &head[head.iter().rposition(|&b| b == b'\n').unwrap() + 1..];
    assert_eq!(tail, b"2026-", "the cut lands in a first field");
    let s = sniff(&file).unwrap();
    assert_eq!((s.delimiter.as_str(), s.header_line), (",", 1));
    assert_eq!(s.header, vec!["time", "C1 kW", "remark"]);
    assert!(s.preview.iter().all(|r| r.len() == 3));
}
