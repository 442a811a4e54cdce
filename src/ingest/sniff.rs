/*!
Guessing how a logger file is laid out, from its first ~64 KiB, to propose a mapping.

Nothing here is final: the upload page shows the guess, with the header, units and first data
rows marked, and the auditor confirms or corrects every part of it. The guesses, in order:

1. **Encoding**: valid UTF-8 is UTF-8, anything else Windows-1252 / Latin-1 (see `text`), so `°`,
   `³` and `µ` in names read right either way.
2. **Rows, delimiter, header, units row, first data row**: see [`layout`]. Each record of the head
   is read by the import's own reader ([`RecordReader`]) with each candidate delimiter, so quoted
   delimiters and line breaks, CR-only line ends and stray quotes preview exactly as they import.
   Lines are physical lines as the reader counts them (quoted line breaks included). A blank line
   is never a header.
3. **Decimal mark**: `.` with `,` as delimiter; otherwise `,` when more cells look like `12,5` than
   `12.5`.
4. **Timestamp**: see [`time`]: one column, a date and a time column in either order, an interval
   (stamped by its start), unix or spreadsheet numbers; day-first or month-first from the whole
   sample, asked only when it cannot decide.
5. **Missing markers**: the built-in ones (`number::MARKERS`: `#N/A`, `1.#QNAN`, `#-1`, `OL`,
   `Err`, `---`...) are listed as seen; any other text that repeats in a numeric column is
   proposed as an extra marker.
6. **Columns**: quantity, unit and compressor, see [`columns`].

[`suggest_mapping`] keeps the columns with a quantity and unit; power and energy columns without a
compressor tag are kept with none (the page asks for it), current columns are left out (volts and
power factor must come from the auditor). [`layout_key`] fingerprints a header so a mapping can be
remembered per logger layout.
*/

use crate::ingest::mapping::{ColumnMap, IntervalEnd, Mapping, TimestampSpec};
use crate::ingest::number::{is_missing_marker, parse_cell, Cell};
use crate::ingest::record::{Limits, RecordReader};
use crate::ingest::text::{decode_line, detect, strip_bom, Encoding};
use crate::ingest::IngestError;
use serde::Serialize;
use sha2::{Digest, Sha256};

pub mod columns;
pub mod layout;
pub mod physics;
pub mod time;

pub use columns::ColumnGuess;
use layout::RowKind;

/// How much of the head is looked at.
pub const SNIFF_BYTES: usize = 64 * 1024;
/// Data rows of the head read for the timestamp and the columns (the whole head, up to this).
const SAMPLE_ROWS: usize = 4000;
/// Data rows shown in the preview.
const PREVIEW_ROWS: usize = 10;

/// The guessed timestamp.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct TimestampGuess {
    /// The timestamp's column (the date's, when date and time are in two columns).
    pub column: String,
    /// When date and time are in two columns: the time column, left or right of the date (the
    /// format covers "date time").
    pub time_column: Option<String>,
    pub format: String,
    /// The formats that read every sampled cell (the first is proposed).
    pub candidates: Vec<String>,
    /// The cells are intervals; the proposed end that stamps the row (the start).
    pub interval: Option<IntervalEnd>,
    /// `day_first` or `month_first` for dates that could be written either way.
    pub date_order: Option<String>,
    /// The time zone the column's name states (`UTC`, `GMT`, `CET/CEST`), if any.
    pub timezone: Option<String>,
}

/// The zone a timestamp column's name states: `utc`/`gmt` as a word, or `utc` run together with a
/// word at either end (`TimeUTC`, `utc_time`), is UTC; `CET`, `CEST`, `MEZ`,
/// `MESZ` (central European time with its summer time) is read as `Europe/Berlin`, whose rules
/// every central European zone has followed since 1980.
fn zone_in_name(name: &str) -> Option<String> {
    let words: Vec<String> = name
        .split(|c: char| !c.is_ascii_alphanumeric())
        .filter(|w| !w.is_empty())
        .map(|w| w.to_ascii_lowercase())
        .collect();
    let has = |w: &str| words.iter().any(|x| x == w);
    if has("gmt") || words.iter().any(|w| w.starts_with("utc") || w.ends_with("utc")) {
        Some("UTC".into())
    } else if has("cet") || has("cest") || has("mez") || has("mesz") {
        Some("Europe/Berlin".into())
    } else {
        None
    }
}

#[cfg(test)]
mod zone_name_tests {
    use super::zone_in_name;

    #[test]
    fn a_time_columns_name_saying_utc_in_any_case_states_utc() {
        for name in ["Time (UTC)", "timestamp_utc", "TimeUTC", "UtcTime", "Date/Time [utc]", "GMT"] {
            assert_eq!(zone_in_name(name).as_deref(), Some("UTC"), "{name}");
        }
        assert_eq!(zone_in_name("Zeit (MEZ/MESZ)").as_deref(), Some("Europe/Berlin"));
        // "utc" inside a longer word is not a zone.
        assert_eq!(zone_in_name("Outcome time"), None);
        assert_eq!(zone_in_name("Timestamp"), None);
    }
}

/// One line of the head as the page shows it, with its role.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct HeadLine {
    /// 1-based physical line where the record starts.
    pub line: u32,
    /// `preamble`, `header_upper` (an upper row of a multi-row header), `header`, `units`,
    /// `skipped` (aggregation words or another row between names and data), `blank` or `data`.
    pub role: String,
    pub fields: Vec<String>,
}

/// Everything guessed about a file.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Sniffed {
    pub encoding: String,
    pub delimiter: String,
    pub decimal: String,
    pub header_line: u32,
    /// The line of units under the names, if there is one.
    pub units_line: Option<u32>,
    /// The line of the first data row.
    pub first_data_line: u32,
    pub header: Vec<String>,
    /// The first 10 data rows.
    pub preview: Vec<Vec<String>>,
    /// The lines around the header with their roles (up to 6 above it, all between it and the
    /// data, 10 data rows), for the page to mark.
    pub lines: Vec<HeadLine>,
    pub timestamp: Option<TimestampGuess>,
    pub columns: Vec<ColumnGuess>,
    pub day_first_ambiguous: bool,
    /// Built-in missing-value markers met in the sample's cells (`#-1`, `1.#QNAN`...).
    pub markers_seen: Vec<String>,
    /// Text that repeats in numeric columns and no built-in marker names: proposed as the
    /// mapping's extra `missing_markers`.
    pub missing_markers: Vec<String>,
}

impl Sniffed {
    /// The preview rows' cells of timestamp column `column` (with `time_column`'s cell after a
    /// space when the time is apart), trimmed, blank ones left out; none when `column` is not in
    /// the header.
    pub fn time_cells(&self, column: &str, time_column: Option<&str>) -> Vec<String> {
        let col = |name: &str| self.header.iter().position(|h| h == name);
        let Some(c) = col(column) else { return vec![] };
        let t = time_column.and_then(col);
        self.preview
            .iter()
            .filter_map(|r| {
                let d = r.get(c)?.trim();
                Some(match t {
                    Some(t) => format!("{d} {}", r.get(t).map_or("", |s| s.trim())),
                    None => d.to_string(),
                })
            })
            .filter(|s| !s.trim().is_empty())
            .collect()
    }
}

/// One record of the head as the sniffer looks at it.
pub struct HeadRecord {
    /// The 1-based physical line where it starts (as the parser counts).
    pub line: u64,
    /// Nothing but spaces and tabs on its line.
    pub blank: bool,
    /// The fields, decoded.
    pub fields: Vec<String>,
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

fn decimal_of(delim: char, data: &[&Vec<String>]) -> char {
    if delim == ',' {
        return '.';
    }
    let (mut comma, mut dot) = (0, 0);
    for r in data.iter().take(200) {
        for f in r.iter() {
            let t = f.trim();
            let digits_around = |m: char| {
                t.split_once(m).is_some_and(|(a, b)| {
                    let a = a.trim_start_matches('-');
                    !a.is_empty()
                        && a.chars().all(|c| c.is_ascii_digit())
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
}

/// Text that reads as a logger's marker rather than a word: short, and with a sign or symbol
/// (`Err:502`, `####`, `*`) or in capitals (`OVER`, `NO DATA`).
fn looks_like_marker(t: &str) -> bool {
    let n = t.chars().count();
    (1..=12).contains(&n)
        && (t.chars().any(|c| c.is_ascii_punctuation()) || !t.chars().any(|c| c.is_lowercase()))
}

fn clip(s: &str) -> String {
    let t = s.trim();
    if t.chars().count() > 60 {
        t.chars().take(60).collect::<String>() + "…"
    } else {
        t.to_string()
    }
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
    // Delimiter: the longest final run of data rows of one width (ties by preference).
    let mut best: Option<(char, Vec<HeadRecord>, Vec<RowKind>, usize)> = None;
    for d in ['\t', ';', ','] {
        let records = read_head(body, d as u8, encoding, cut);
        let kinds: Vec<RowKind> = records.iter().map(layout::row_kind).collect();
        let score = layout::delimiter_score(&records, &kinds);
        if score > 0 && best.as_ref().is_none_or(|b| score > b.3) {
            best = Some((d, records, kinds, score));
        }
    }
    let Some((delim, records, kinds, _)) = best else {
        return Err(IngestError::new(
            "cannot find data rows: no run of rows splits into numbers and times by ',', ';' or tab",
        ));
    };
    let Some((first_data, _, width)) = layout::final_data_run(&records, &kinds) else {
        return Err(IngestError::new("cannot find data rows below a header in the first 64 kib"));
    };
    let Some(lay) = layout::find_layout(&records, &kinds, first_data, width) else {
        return Err(IngestError::new(
            "cannot find a header line: the first rows are data; add a line with the column names",
        ));
    };
    let header: Vec<String> = records[lay.header].fields.iter().map(|h| h.trim().to_string()).collect();
    let data: Vec<&Vec<String>> = records[first_data..]
        .iter()
        .zip(&kinds[first_data..])
        .filter(|(_, k)| **k == RowKind::Data)
        .map(|(r, _)| &r.fields)
        .take(SAMPLE_ROWS)
        .collect();
    let decimal = decimal_of(delim, &data);
    let dec = decimal as u8;
    let ncols = header.len();
    let column_cells = |i: usize| -> Vec<&str> {
        data.iter().filter_map(|r| r.get(i)).map(|s| s.trim()).filter(|s| !s.is_empty()).collect()
    };
    // Numbers per column, and the text found among them.
    let mut values: Vec<Vec<f64>> = Vec::with_capacity(ncols);
    let mut numeric = Vec::with_capacity(ncols);
    let mut markers_seen: Vec<String> = Vec::new();
    let mut texts: Vec<(String, usize)> = Vec::new();
    // Each number's data row, for the times.
    let mut rows_of: Vec<Vec<usize>> = Vec::with_capacity(ncols);
    for i in 0..ncols {
        let mut vals = Vec::new();
        let mut rows = Vec::new();
        let mut other: Vec<&str> = Vec::new();
        let mut missing = 0;
        for (row, c) in data.iter().enumerate().filter_map(|(n, r)| Some((n, r.get(i)?.trim()))) {
            if c.is_empty() {
                continue;
            }
            match parse_cell(c.as_bytes(), dec) {
                Ok(Cell::Value(v)) => {
                    vals.push(v);
                    rows.push(row);
                }
                Ok(Cell::Missing) => {
                    missing += 1;
                    if markers_seen.len() < 16 && !markers_seen.iter().any(|m| m == c) {
                        markers_seen.push(c.to_string());
                    }
                }
                Err(_) => other.push(c),
            }
        }
        // A column of nothing but missing markers is a numeric column with no reading.
        let is_num = (!vals.is_empty() || missing > 0) && vals.len() * 2 >= vals.len() + other.len();
        if is_num {
            for t in other {
                if let Some(e) = texts.iter_mut().find(|(x, _)| x == t) {
                    e.1 += 1;
                } else if texts.len() < 64 {
                    texts.push((t.to_string(), 1));
                }
            }
        }
        numeric.push(is_num);
        values.push(vals);
        rows_of.push(rows);
    }
    let missing_markers: Vec<String> = texts
        .into_iter()
        .filter(|(t, n)| *n >= 2 && looks_like_marker(t) && !is_missing_marker(t.as_bytes()))
        .map(|(t, _)| t)
        .take(8)
        .collect();
    // Timestamp.
    let found = time::find(&header, &data, &numeric, dec);
    let ts_cols: Vec<usize> =
        found.iter().flat_map(|f| std::iter::once(f.column).chain(f.time_column)).collect();
    // Columns: the units row, a neighbouring unit column, the header's upper rows.
    let units_row = lay.units.map(|u| &records[u].fields);
    let unit_column = |i: usize| -> Option<&str> {
        let name = header.get(i + 1)?.to_lowercase();
        if !["unit", "units", "einheit"].contains(&name.as_str()) {
            return None;
        }
        let cells = column_cells(i + 1);
        let first = *cells.first()?;
        cells.iter().all(|c| *c == first).then_some(first)
    };
    let row_secs = found.as_ref().map(|f| time::row_seconds(f, &data)).unwrap_or_default();
    let means: Vec<Option<f64>> = values
        .iter()
        .map(|v| (!v.is_empty()).then(|| v.iter().map(|x| x.abs()).sum::<f64>() / v.len() as f64))
        .collect();
    let samples: Vec<Vec<(usize, f64)>> =
        (0..ncols).map(|i| rows_of[i].iter().copied().zip(values[i].iter().copied()).collect()).collect();
    let humidity_unit = physics::temperature_from_humidity(&header, &samples);
    let mut columns: Vec<ColumnGuess> = (0..ncols)
        .filter(|i| !ts_cols.contains(i))
        .map(|i| {
            let ev = columns::Evidence {
                units_row: units_row.and_then(|r| r.get(i)).map(|s| s.trim()).filter(|s| !s.is_empty()),
                unit_column: unit_column(i),
                upper_rows: lay
                    .upper
                    .iter()
                    .filter_map(|&u| records[u].fields.get(i))
                    .map(|s| s.trim())
                    .collect(),
                values: std::mem::take(&mut values[i]),
                times: rows_of[i].iter().map(|&r| row_secs.get(r).copied().flatten()).collect(),
            };
            columns::guess(&header[i], i, numeric[i], &ev)
        })
        .collect();
    physics::settle_flow(&mut columns, &header, &means);
    physics::settle_temperature(&mut columns, humidity_unit);
    // The lines for the page.
    let mut lines = Vec::new();
    let from = lay.upper.iter().copied().min().unwrap_or(lay.header).saturating_sub(3);
    let mut data_shown = 0;
    for (i, r) in records.iter().enumerate().skip(from) {
        let role = if i < first_data {
            if i == lay.header {
                "header"
            } else if Some(i) == lay.units {
                "units"
            } else if lay.upper.contains(&i) {
                "header_upper"
            } else if lay.skipped.contains(&i) {
                "skipped"
            } else if kinds[i] == RowKind::Blank {
                "blank"
            } else {
                "preamble"
            }
        } else if kinds[i] == RowKind::Blank {
            "blank"
        } else {
            data_shown += 1;
            "data"
        };
        lines.push(HeadLine {
            line: r.line as u32,
            role: role.into(),
            fields: r.fields.iter().map(|f| clip(f)).collect(),
        });
        if data_shown == PREVIEW_ROWS {
            break;
        }
    }
    let preview =
        data.iter().take(PREVIEW_ROWS).map(|r| r.iter().map(|f| f.trim().to_string()).collect()).collect();
    let (timestamp, day_first_ambiguous) = match found {
        Some(f) => (
            Some(TimestampGuess {
                column: header[f.column].clone(),
                time_column: f.time_column.map(|t| header[t].clone()),
                format: f.format,
                candidates: f.candidates,
                interval: f.interval,
                date_order: f.date_order.map(str::to_string),
                timezone: zone_in_name(&header[f.column]),
            }),
            f.ambiguous,
        ),
        None => (None, false),
    };
    // At most 65,537 lines in a 64 KiB head: no truncation.
    let header_line = records[lay.header].line as u32;
    let units_line = lay.units.map(|u| records[u].line as u32);
    let first_data_line = records[first_data].line as u32;
    Ok(Sniffed {
        encoding: encoding.name().to_string(),
        delimiter: if delim == '\t' { "\t".into() } else { delim.to_string() },
        decimal: decimal.to_string(),
        header_line,
        units_line,
        first_data_line,
        header,
        preview,
        lines,
        timestamp,
        columns,
        day_first_ambiguous,
        markers_seen,
        missing_markers,
    })
}

/// The mapping the page proposes from a sniff (time zone UTC unless the timestamp's name states
/// one, until the auditor says otherwise).
pub fn suggest_mapping(s: &Sniffed) -> Mapping {
    let timestamp = match &s.timestamp {
        Some(t) => TimestampSpec {
            column: t.column.clone(),
            format: t.format.clone(),
            timezone: t.timezone.clone().unwrap_or_else(|| "UTC".into()),
            time_column: t.time_column.clone(),
            interval: t.interval,
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
            // A column name the header repeats cannot be named by a mapping.
            let unique = s.header.iter().filter(|h| h.trim() == c.column.trim()).count() == 1;
            match q {
                "current" => None,
                _ if !unique => None,
                _ => Some(ColumnMap::new(&c.column, q, u, c.compressor.as_deref())),
            }
        })
        .collect();
    // The data starts right below the header or its units row unless rows lie between.
    let next = s.units_line.unwrap_or(s.header_line) + 1;
    Mapping {
        delimiter: s.delimiter.clone(),
        decimal: s.decimal.clone(),
        header_line: s.header_line,
        units_line: s.units_line,
        first_data_line: (s.first_data_line > next).then_some(s.first_data_line),
        missing_markers: s.missing_markers.clone(),
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
mod layout_tests;
#[cfg(test)]
mod physics_tests;
#[cfg(test)]
mod tests;
