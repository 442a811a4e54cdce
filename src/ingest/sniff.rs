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
            interval: None,
        },
        None => TimestampSpec {
            column: s.header.first().cloned().unwrap_or_default(),
            format: "%Y-%m-%d %H:%M:%S".into(),
            timezone: "UTC".into(),
            time_column: None,
            interval: None,
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
        units_line: None,
        first_data_line: None,
        missing_markers: Vec::new(),
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
mod tests;
