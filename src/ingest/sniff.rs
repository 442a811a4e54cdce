/*!
Guessing how a logger file is laid out, from its first ~64 KiB, to propose a mapping.

Nothing here is final: the upload page shows the guess and the auditor confirms or corrects it.
The guesses, in order:

1. **Encoding**: valid UTF-8 is UTF-8, anything else Windows-1252 (see `text`).
2. **Delimiter**: `,` `;` or tab, the one whose field count stays constant over the most records
   at the end of the head (ties: tab, then `;`, then `,`: a `;` or a tab is rarely anything else).
   The head is read into records with each candidate by the import's own reader
   ([`RecordReader`]), so quoted delimiters and line breaks, CR-only line ends and stray quotes
   preview exactly as they import.
3. **Header and preamble**: within that constant block, the header is the last mostly-text record
   before the first mostly-data record (numbers, timestamps, missing markers); everything above it
   is preamble. `header_line` is the physical line where the header record starts, counted as the
   reader counts (every line break, quoted ones included).
4. **Decimal mark**: `.` with `,` as delimiter; otherwise `,` when more cells look like `12,5` than
   `12.5`.
5. **Timestamp**: the first column (or pair of adjacent date and time columns) whose sampled cells
   all read with one of the candidate formats; unix seconds/milliseconds and spreadsheet serial
   days only for a column whose name says time or date. Day-first or month-first (`03/02/2026`) is
   decided from the data (a first number above 12 means day-first); when nothing decides it,
   day-first is proposed and `day_first_ambiguous` is set so the page asks.
6. **Columns**: quantity and unit from the header text (`[kW]`, `(kW)`, `kW`, `psig`, `bar`,
   `scfm`, `m³/min`, `Nm3/h`, `A`, `Amps`, `kWh`, `°C` including the Latin-1 degree sign...) and a
   compressor from a tag such as `C1` or `Compressor 2`. A bare `bar`/`psi`/`kPa` is proposed as
   gauge (common shop practice; the note says so).

[`suggest_mapping`] keeps only columns with a confident quantity and unit, and leaves out power,
energy and current columns without a compressor tag and current columns (volts and power factor
must come from the auditor). [`layout_key`] fingerprints a header so a mapping can be remembered
per logger layout.
*/

use crate::core::unit_table;
use crate::ingest::mapping::{ColumnMap, Mapping, TimestampSpec};
use crate::ingest::number::{is_missing_marker, parse_cell, Cell};
use crate::ingest::record::{Limits, RecordReader};
use crate::ingest::text::{decode_line, detect, strip_bom, Encoding};
use crate::ingest::timestamp::TimestampParser;
use crate::ingest::IngestError;
use serde::Serialize;
use sha2::{Digest, Sha256};

/// How much of the head is looked at.
pub const SNIFF_BYTES: usize = 64 * 1024;
const SAMPLE_ROWS: usize = 50;

/// The guessed timestamp.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TimestampGuess {
    pub column: String,
    /// When date and time are in two columns: the time column (format covers "date time").
    pub time_column: Option<String>,
    pub format: String,
    /// The formats that read every sampled cell (the first is proposed).
    pub candidates: Vec<String>,
}

/// The guess for one column.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ColumnGuess {
    pub column: String,
    pub index: usize,
    /// Mostly numbers in the sampled rows.
    pub numeric: bool,
    /// `power`, `energy`, `current`, `pressure`, `flow` or `temperature`.
    pub quantity: Option<String>,
    /// The unit as the mapping spells it (`kW`, `psig`, `bar_g`, `Nm3_h`, `C`...).
    pub unit: Option<String>,
    pub compressor: Option<String>,
    /// Why a guess needs a look (`"bar" read as gauge`...).
    pub note: Option<String>,
}

/// Everything guessed about a file.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Sniffed {
    pub encoding: String,
    pub delimiter: String,
    pub decimal: String,
    pub header_line: u32,
    pub header: Vec<String>,
    /// The first 10 data rows.
    pub preview: Vec<Vec<String>>,
    pub timestamp: Option<TimestampGuess>,
    pub columns: Vec<ColumnGuess>,
    pub day_first_ambiguous: bool,
}

/// The candidate timestamp formats, in order of preference.
const FORMATS: &[&str] = &[
    "%Y-%m-%d %H:%M:%S",
    "%Y-%m-%d %H:%M:%S%.f",
    "%Y-%m-%dT%H:%M:%S",
    "rfc3339",
    "%Y-%m-%d %H:%M",
    "%Y/%m/%d %H:%M:%S",
    "%Y/%m/%d %H:%M:%S%.f",
    "%d.%m.%Y %H:%M:%S",
    "%d.%m.%Y %H:%M:%S%.f",
    "%d.%m.%Y %H:%M",
    "%d/%m/%Y %H:%M:%S",
    "%m/%d/%Y %H:%M:%S",
    "%d/%m/%Y %H:%M:%S%.f",
    "%m/%d/%Y %H:%M:%S%.f",
    "%d/%m/%Y %H:%M",
    "%m/%d/%Y %H:%M",
    "%m/%d/%Y %I:%M:%S %p",
    "%d/%m/%Y %I:%M:%S %p",
    "%m/%d/%Y %I:%M %p",
    "%d-%m-%Y %H:%M:%S",
    "%d-%b-%Y %H:%M:%S",
    "%d.%m.%y %H:%M:%S",
];

fn reads_all(format: &str, cells: &[&str]) -> bool {
    let Ok(mut p) = TimestampParser::new(format, "UTC", 0.0) else {
        return false;
    };
    !cells.is_empty() && cells.iter().all(|c| p.parse(c.as_bytes()).is_some())
}

/// The day-first twin of a month-first format and back, if it has one.
fn swap_day_month(f: &str) -> Option<String> {
    if f.starts_with("%d/%m/") {
        Some(f.replacen("%d/%m/", "%m/%d/", 1))
    } else if f.starts_with("%m/%d/") {
        Some(f.replacen("%m/%d/", "%d/%m/", 1))
    } else {
        None
    }
}

fn looks_like_data(cell: &str) -> bool {
    let t = cell.trim();
    if is_missing_marker(t.as_bytes()) {
        return true;
    }
    if parse_cell(t.as_bytes(), b'.').is_ok() || parse_cell(t.as_bytes(), b',').is_ok() {
        return true;
    }
    // Timestamp-ish: digits with date/time punctuation only (and AM/PM, T, Z).
    t.bytes().any(|b| b.is_ascii_digit())
        && t.bytes().all(|b| b.is_ascii_digit() || b":/.-+ ,TZ".contains(&b) || b"AMPamp".contains(&b))
}

fn mostly_data(fields: &[String]) -> bool {
    let n = fields.iter().filter(|f| looks_like_data(f)).count();
    n * 2 > fields.len() && fields.iter().any(|f| !f.trim().is_empty())
}

/// A unit hint from [`unit_table::in_header`]: (quantity, unit as the mapping spells it, note).
fn unit_hint(token: &str) -> Option<(&'static str, &'static str, Option<&'static str>)> {
    let (unit, unqualified) = unit_table::in_header(token)?;
    let note = unqualified.then_some("read as gauge pressure; say _a if the logger records absolute");
    Some((unit.quantity.as_str(), unit.code, note))
}

/// Tokens of a header name: bracketed parts first (`[kW]`, `(m³/min)`), then words.
fn header_tokens(name: &str) -> (Vec<String>, Vec<String>) {
    let mut bracketed = Vec::new();
    let mut rest = String::new();
    let mut depth_part = String::new();
    let mut in_b = false;
    for c in name.chars() {
        match c {
            '[' | '(' if !in_b => {
                in_b = true;
                depth_part.clear();
                rest.push(' ');
            }
            ']' | ')' if in_b => {
                in_b = false;
                bracketed.push(depth_part.trim().to_string());
            }
            c if in_b => depth_part.push(c),
            c => rest.push(c),
        }
    }
    let words = rest
        .split(|c: char| c.is_whitespace() || c == '_' || c == ',' || c == ';')
        .filter(|w| !w.is_empty())
        .map(str::to_string)
        .collect();
    (bracketed, words)
}

fn is_tag(w: &str) -> bool {
    let b = w.as_bytes();
    let letters = b.iter().take_while(|c| c.is_ascii_alphabetic()).count();
    let rest = &b[letters..];
    let rest = rest.strip_prefix(b"-").unwrap_or(rest);
    (1..=6).contains(&letters) && (1..=3).contains(&rest.len()) && rest.iter().all(u8::is_ascii_digit)
}

fn guess_column(name: &str, index: usize, numeric: bool) -> ColumnGuess {
    let (bracketed, words) = header_tokens(name);
    let lower: Vec<String> = words.iter().map(|w| w.to_lowercase()).collect();
    let mut hint = bracketed.iter().find_map(|t| unit_hint(t));
    let mut unit_word: Option<usize> = None;
    if hint.is_none() {
        // The last word that is a unit (single letters only for A / C / F after a quantity word).
        for (i, w) in words.iter().enumerate().rev() {
            let single = w.trim_start_matches(['°', 'º']).len() == 1;
            if let Some(h) = unit_hint(w) {
                let ok = !single
                    || w.starts_with(['°', 'º'])
                    || (h.0 == "current" && w == "A")
                    || (h.0 == "temperature" && i > 0);
                if ok {
                    hint = Some(h);
                    unit_word = Some(i);
                    break;
                }
            }
        }
    }
    if hint.is_none() && lower.iter().any(|w| w == "amps" || w == "current" || w == "strom") {
        hint = Some(("current", "A", None));
    }
    let mut compressor = None;
    for (i, w) in words.iter().enumerate() {
        if Some(i) == unit_word {
            continue;
        }
        let l = &lower[i];
        if (l == "compressor" || l == "comp" || l == "kompressor" || l == "verdichter")
            && words.get(i + 1).is_some_and(|n| n.chars().all(|c| c.is_ascii_digit()))
        {
            compressor = Some(format!("C{}", words[i + 1]));
            break;
        }
        if is_tag(w) && unit_hint(w).is_none() {
            compressor = Some(w.to_string());
            break;
        }
    }
    let (quantity, unit, note) = match hint {
        Some((q, u, n)) if numeric => (Some(q.to_string()), Some(u.to_string()), n.map(str::to_string)),
        _ => (None, None, None),
    };
    let compressor = match quantity.as_deref() {
        Some("power" | "energy" | "current") => compressor,
        _ => None,
    };
    ColumnGuess { column: name.to_string(), index, numeric, quantity, unit, compressor, note }
}

fn block_of(counts: &[usize]) -> (usize, usize) {
    // (start, field count) of the constant block at the end, skipping trailing blank records.
    let mut end = counts.len();
    while end > 0 && counts[end - 1] == 0 {
        end -= 1;
    }
    if end == 0 {
        return (0, 0);
    }
    let c = counts[end - 1];
    let mut start = end - 1;
    while start > 0 && counts[start - 1] == c {
        start -= 1;
    }
    (start, c)
}

/// One record of the head as the sniffer looks at it.
struct HeadRecord {
    /// The 1-based physical line where it starts (as the parser counts).
    line: u64,
    /// Nothing but spaces and tabs on its line.
    blank: bool,
    /// The fields, decoded.
    fields: Vec<String>,
}

/// The records of the head with one candidate delimiter, read as the import reads them, and
/// without trailing blank records. When the head was `cut` at [`SNIFF_BYTES`], a last record not
/// ended by a line break may be incomplete and is dropped (unless it is all there is); a reader
/// error (an unclosed quote, most likely one cut off with the head) ends the sample there: the
/// records before it stand, and the import reports the error with its line.
fn read_head(body: &[u8], delim: u8, encoding: Encoding, cut: bool) -> Vec<HeadRecord> {
    let mut reader = RecordReader::new(body, delim, Limits::DEFAULT);
    let mut out = Vec::new();
    let complete = loop {
        match reader.next() {
            Ok(Some(rec)) => out.push(HeadRecord {
                line: rec.line(),
                blank: rec.is_blank(),
                fields: rec.iter().map(|f| decode_line(f, Some(encoding)).into_owned()).collect(),
            }),
            Ok(None) => break true,
            Err(_) => break false,
        }
    };
    if complete && cut && !body.ends_with(b"\n") && !body.ends_with(b"\r") && out.len() > 1 {
        out.pop();
    }
    while out.last().is_some_and(|r| r.blank) {
        out.pop();
    }
    out
}

/// Guess the layout of a file from its head (the first ~64 KiB).
pub fn sniff(head: &[u8]) -> Result<Sniffed, IngestError> {
    let head = &head[..head.len().min(SNIFF_BYTES)];
    // A compressed, workbook or other binary file is named as what it is, as the import does.
    if let Some(what) = crate::ingest::text::not_text(head) {
        return Err(IngestError::new(what));
    }
    let cut = head.len() == SNIFF_BYTES;
    // UTF-16 (with its byte-order mark) is read as the import reads it: transcoded to UTF-8.
    let utf8 = crate::ingest::text::transcode_utf16_head(head);
    let head = utf8.as_deref().unwrap_or(head);
    let encoding = detect(head);
    let body = strip_bom(head);
    if body.iter().all(|b| matches!(b, b' ' | b'\t' | b'\r' | b'\n')) {
        return Err(IngestError::new("the file is empty"));
    }
    // Delimiter: the longest constant block with >= 2 fields; ties by preference.
    let mut best: Option<(char, Vec<HeadRecord>, usize)> = None; // (delim, records, block start)
    for d in ['\t', ';', ','] {
        let records = read_head(body, d as u8, encoding, cut);
        let counts: Vec<usize> = records.iter().map(|r| if r.blank { 0 } else { r.fields.len() }).collect();
        let (start, c) = block_of(&counts);
        if c < 2 {
            continue;
        }
        let len = records.len() - start;
        if best.as_ref().is_none_or(|(_, br, bs)| len > br.len() - bs) {
            best = Some((d, records, start));
        }
    }
    let Some((delim, records, block_start)) = best else {
        return Err(IngestError::new(
            "cannot find a delimiter: no run of records splits into the same number of fields by \
             ',', ';' or tab",
        ));
    };
    let (lines, rows): (Vec<u64>, Vec<Vec<String>>) = records.into_iter().map(|r| (r.line, r.fields)).unzip();
    // Header: the last mostly-text line before the first mostly-data line of the block.
    let first_data = (block_start..rows.len()).find(|&i| mostly_data(&rows[i]));
    let header_ix = match first_data {
        Some(i) if i > block_start => i - 1,
        Some(i) if i > 0 && !mostly_data(&rows[i - 1]) => i - 1,
        Some(_) => {
            return Err(IngestError::new(
                "cannot find a header line: the first rows are data; add a line with the column \
                 names",
            ))
        }
        None => return Err(IngestError::new("cannot find data rows below a header in the first 64 kib")),
    };
    let header: Vec<String> = rows[header_ix].iter().map(|h| h.trim().to_string()).collect();
    let data: Vec<&Vec<String>> = rows[header_ix + 1..]
        .iter()
        .filter(|r| r.iter().any(|f| !f.trim().is_empty()))
        .take(SAMPLE_ROWS)
        .collect();
    // Decimal mark.
    let decimal = if delim == ',' {
        '.'
    } else {
        let (mut comma, mut dot) = (0, 0);
        for r in &data {
            for f in r.iter() {
                let t = f.trim();
                let digits_around = |m: char| {
                    t.split_once(m).is_some_and(|(a, b)| {
                        !a.trim_start_matches('-').is_empty()
                            && a.trim_start_matches('-').chars().all(|c| c.is_ascii_digit())
                            && !b.is_empty()
                            && b.chars().all(|c| c.is_ascii_digit())
                    })
                };
                if digits_around(',') {
                    comma += 1;
                } else if digits_around('.') {
                    dot += 1;
                }
            }
        }
        if comma > dot {
            ','
        } else {
            '.'
        }
    };
    let dec = decimal as u8;
    let ncols = header.len();
    let column_cells = |i: usize| -> Vec<&str> {
        data.iter().filter_map(|r| r.get(i)).map(|s| s.trim()).filter(|s| !s.is_empty()).collect()
    };
    let numeric: Vec<bool> = (0..ncols)
        .map(|i| {
            let cells = column_cells(i);
            let n =
                cells.iter().filter(|c| matches!(parse_cell(c.as_bytes(), dec), Ok(Cell::Value(_)))).count();
            n > 0 && n * 2 >= cells.len()
        })
        .collect();
    // Timestamp.
    let mut timestamp = None;
    let mut day_first_ambiguous = false;
    let mut ts_cols: Vec<usize> = Vec::new();
    'cols: for i in 0..ncols {
        let cells = column_cells(i);
        let mut single: Vec<String> =
            FORMATS.iter().filter(|f| reads_all(f, &cells)).map(|f| f.to_string()).collect();
        let mut time_column = None;
        if single.is_empty() && i + 1 < ncols {
            let joined: Vec<String> = data
                .iter()
                .filter_map(|r| Some(format!("{} {}", r.get(i)?.trim(), r.get(i + 1)?.trim())))
                .collect();
            let refs: Vec<&str> = joined.iter().map(String::as_str).collect();
            single = FORMATS.iter().filter(|f| reads_all(f, &refs)).map(|f| f.to_string()).collect();
            if !single.is_empty() {
                time_column = Some(header[i + 1].clone());
            }
        }
        if single.is_empty() && numeric[i] {
            let name = header[i].to_lowercase();
            let timey =
                ["time", "zeit", "date", "datum", "epoch", "unix", "stamp"].iter().any(|w| name.contains(w));
            let vals: Vec<f64> = cells
                .iter()
                .filter_map(|c| match parse_cell(c.as_bytes(), dec) {
                    Ok(Cell::Value(v)) => Some(v),
                    _ => None,
                })
                .collect();
            let within = |a: f64, b: f64| !vals.is_empty() && vals.iter().all(|v| (a..b).contains(v));
            if timey {
                if within(1e12, 4.2e12) {
                    single.push("unix_ms".into());
                } else if within(1e9, 4.2e9) {
                    single.push("unix_s".into());
                } else if within(20_000.0, 80_000.0) {
                    single.push("excel_days".into());
                }
            }
        }
        if single.is_empty() {
            continue;
        }
        // Day-first vs month-first: if both read everything, the data does not decide.
        let first = single[0].clone();
        if let Some(twin) = swap_day_month(&first) {
            if single.contains(&twin) {
                day_first_ambiguous = true;
                let day_first = if first.starts_with("%d") { first.clone() } else { twin };
                single.retain(|f| f != &day_first);
                single.insert(0, day_first);
            }
        }
        ts_cols.push(i);
        if let Some(t) = &time_column {
            ts_cols.push(header.iter().position(|h| h == t).unwrap_or(i + 1));
        }
        timestamp = Some(TimestampGuess {
            column: header[i].clone(),
            time_column,
            format: single[0].clone(),
            candidates: single,
        });
        break 'cols;
    }
    let columns = (0..ncols)
        .filter(|i| !ts_cols.contains(i))
        .map(|i| guess_column(&header[i], i, numeric[i]))
        .collect();
    let preview = data.iter().take(10).map(|r| r.iter().map(|f| f.trim().to_string()).collect()).collect();
    Ok(Sniffed {
        encoding: encoding.name().to_string(),
        delimiter: if delim == '\t' { "\t".into() } else { delim.to_string() },
        decimal: decimal.to_string(),
        // At most 65,537 lines in a 64 KiB head: no truncation.
        header_line: lines[header_ix] as u32,
        header,
        preview,
        timestamp,
        columns,
        day_first_ambiguous,
    })
}

/// The mapping the page proposes from a sniff (time zone UTC until the auditor says otherwise).
pub fn suggest_mapping(s: &Sniffed) -> Mapping {
    let timestamp = match &s.timestamp {
        Some(t) => TimestampSpec {
            column: t.column.clone(),
            format: t.format.clone(),
            timezone: "UTC".into(),
            time_column: t.time_column.clone(),
        },
        None => TimestampSpec {
            column: s.header.first().cloned().unwrap_or_default(),
            format: "%Y-%m-%d %H:%M:%S".into(),
            timezone: "UTC".into(),
            time_column: None,
        },
    };
    let columns = s
        .columns
        .iter()
        .filter_map(|c| {
            let (q, u) = (c.quantity.as_deref()?, c.unit.as_deref()?);
            match q {
                "current" => None,
                "power" | "energy" if c.compressor.is_none() => None,
                _ => Some(ColumnMap::new(&c.column, q, u, c.compressor.as_deref())),
            }
        })
        .collect();
    Mapping {
        delimiter: s.delimiter.clone(),
        decimal: s.decimal.clone(),
        header_line: s.header_line,
        encoding: Some(s.encoding.clone()),
        timestamp,
        columns,
        clock_offset_s: 0.0,
    }
}

/// A stable fingerprint of a header layout (column names trimmed and lower-cased, in order):
/// the first 16 bytes of their SHA-256, hex.
pub fn layout_key(header: &[String]) -> String {
    let mut h = Sha256::new();
    h.update(b"airledger-layout-v1");
    for name in header {
        h.update([0x1f]);
        h.update(name.trim().to_lowercase().as_bytes());
    }
    h.finalize()[..16].iter().map(|b| format!("{b:02x}")).collect()
}

#[cfg(test)]
mod tests {
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
        let file = "\u{feff}Date,Time,K1 kWh,T [°C]\n2026-03-02,06:00:00,1234.5,20.5\n2026-03-02,06:01:00,1235.0,20.6\n";
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
}
