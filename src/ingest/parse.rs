/*!
The streaming parse of a logger file: one pass, bounded memory, readings straight to a sink.

- Records come from the shared [`record`](crate::ingest::record) reader, the one the sniffer
  uses too: RFC 4180 quoting (a quote opens a field only at its start, so an inch mark in a note
  is a character), `\n`, `\r\n` and bare `\r` line ends, one pass in linear time, and a cap on a
  record's bytes and fields (a 422 naming the line). Fields are byte slices, never `String`s.
  Numbers and timestamps are ASCII in every supported encoding, so only the header (and values
  quoted in errors) is decoded (see `text`).
- A quoted field may hold a line break (the record then spans lines and is reported at its first
  line). Records before `header_line` are the preamble and are skipped; a quote in the preamble
  that runs into the header line is an error naming both lines.
- Blank lines (and rows whose timestamp and mapped cells are all empty) are skipped and counted.
- Records after the header that start before `first_data_line` (or on `units_line`) are
  skipped: units rows, aggregation rows, second header rows.
- Errors name the 1-based line of the file (preamble included) and the column's header name: a
  row too short for a mapped column, a timestamp that does not match the format (or an interval
  without its two ends), a pressure below zero absolute, and a column with more unreadable text
  than numbers (a wrong decimal mark). Missing-value cells (`""`, `NaN`, `---`, `#-1`,
  `1.#QNAN`, the mapping's `missing_markers`...) and other text in a numeric cell are not errors:
  they give no reading and are counted in the quality report with their line and text. The
  check for extra markers costs nothing when the mapping names none.
- `first_ms`/`last_ms` are the earliest and latest timestamps (not the first and last rows: a file
  with a clock stepping back is still reported over its full span).
*/

use crate::core::basis::line_to_reference;
use crate::core::units::{ReferenceConditions, SiteAir};
use crate::ingest::mapping::{plan, IntervalEnd, Mapping, Plan, Quantity, UnitRule};
use crate::ingest::number::{parse_cell, trim, Cell};
use crate::ingest::quality::{QualityReport, QualityTracker};
use crate::ingest::record::{Limits, RecordError, RecordReader};
use crate::ingest::text::{decode_line, not_text, utf16_bom, Encoding, Utf16Reader};
use crate::ingest::IngestError;
use serde::Serialize;

use std::io::{BufRead, BufReader};
use std::rc::Rc;

/// Receives every reading: channel index (into `Plan::channels`), UTC epoch ms, value in SI units
/// on the channel's logged basis (`ChannelDef::basis`: gauge pressure stays gauge, a standard flow
/// stays at its reference; nothing of the site applied).
pub trait ReadingSink {
    fn reading(&mut self, channel: usize, t_ms: i64, value_si: f64) -> Result<(), IngestError>;
}

/// A sink that collects everything into a `Vec` (tests and small files).
impl ReadingSink for Vec<(usize, i64, f64)> {
    fn reading(&mut self, channel: usize, t_ms: i64, value_si: f64) -> Result<(), IngestError> {
        self.push((channel, t_ms, value_si));
        Ok(())
    }
}

/// What a parse read.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ParseReport {
    pub rows: u64,
    pub readings: u64,
    pub first_ms: Option<i64>,
    pub last_ms: Option<i64>,
    pub median_interval_s: Option<f64>,
    pub quality: QualityReport,
    /// The header's column names (for remembering the mapping per logger layout).
    pub header: Option<Vec<String>>,
}

const PROGRESS_EVERY_BYTES: u64 = 1 << 20;

/// A reader error as the import reports it: a 422 naming the line.
fn record_error(e: RecordError) -> IngestError {
    IngestError::at(e.line, None, e.to_string())
}

/// Split a header line into names (decoded, trimmed), as the record reader splits it.
pub fn split_header(line: &[u8], delim: u8, encoding: Option<Encoding>) -> Vec<String> {
    let mut reader = RecordReader::new(line, delim, Limits::DEFAULT);
    match reader.next() {
        Ok(Some(rec)) => rec.iter().map(|f| decode_line(f, encoding).trim().to_string()).collect(),
        _ => vec![decode_line(line, encoding).trim().to_string()],
    }
}

/// Read the header of a file for a mapping: skip the preamble, return the header's names.
fn read_header<R: BufRead>(
    records: &mut RecordReader<R>,
    mapping: &Mapping,
    encoding: Option<Encoding>,
) -> Result<Vec<String>, IngestError> {
    let header_line = u64::from(mapping.header_line.max(1));
    loop {
        let Some(rec) = records.next().map_err(record_error)? else {
            return Err(IngestError::field(
                "header_line",
                format!("the file ends at line {} before the header line {header_line}", records.line()),
            ));
        };
        if rec.line() == header_line {
            return Ok(rec.iter().map(|f| decode_line(f, encoding).trim().to_string()).collect());
        }
        if rec.line() > header_line || rec.end_line() >= header_line {
            return Err(IngestError::at(
                rec.line(),
                None,
                format!(
                    "a quoted field opened in the preamble at line {} runs into the header line {header_line}",
                    rec.line()
                ),
            ));
        }
    }
}

fn shown(b: &[u8]) -> String {
    decode_line(b, None).into_owned()
}

/// Parse a whole logger file, handing every reading to `sink`; `progress` gets the bytes read so
/// far about every MiB and at the end.
pub fn parse_stream<R: BufRead>(
    reader: R,
    mapping: &Mapping,
    site: &SiteAir,
    sink: &mut dyn ReadingSink,
    progress: &mut dyn FnMut(u64),
) -> Result<ParseReport, IngestError> {
    let delim = crate::ingest::mapping::delimiter_byte(&mapping.delimiter).ok_or_else(|| {
        IngestError::field("delimiter", format!("unknown delimiter {:?}", mapping.delimiter))
    })?;
    let encoding = mapping.encoding.as_deref().and_then(Encoding::parse);
    let mut reader = reader;
    let head = reader.fill_buf().map_err(|e| IngestError::new(format!("cannot read the file: {e}")))?;
    let head = &head[..head.len().min(HEAD_BYTES)];
    // A compressed file, a workbook or an image is refused by name before a record is read.
    if let Some(what) = not_text(head) {
        return Err(IngestError::new(what));
    }
    if let Some(order) = utf16_bom(head) {
        // UTF-16 is transcoded to UTF-8 on the way in; progress counts bytes of the file.
        reader.consume(2);
        let consumed = Rc::new(std::cell::Cell::new(2u64));
        let utf8 = BufReader::with_capacity(HEAD_BYTES, Utf16Reader::new(reader, order, consumed.clone()));
        let records = RecordReader::new(utf8, delim, Limits::DEFAULT);
        return parse_records(records, mapping, Some(Encoding::Utf8), site, sink, &mut |_| {
            progress(consumed.get())
        });
    }
    // A byte-order mark belongs to the file, not to the first column's name.
    let bom_bytes = if head.starts_with(b"\xef\xbb\xbf") { 3 } else { 0 };
    reader.consume(bom_bytes);
    let records = RecordReader::new(reader, delim, Limits::DEFAULT);
    parse_records(records, mapping, encoding, site, sink, &mut |b| progress(b + bom_bytes as u64))
}

/// The bytes looked at for magic numbers and a UTF-16 byte-order mark (the sniffer's head too).
const HEAD_BYTES: usize = 64 * 1024;

fn parse_records<R: BufRead>(
    mut records: RecordReader<R>,
    mapping: &Mapping,
    encoding: Option<Encoding>,
    site: &SiteAir,
    sink: &mut dyn ReadingSink,
    progress: &mut dyn FnMut(u64),
) -> Result<ParseReport, IngestError> {
    let header = read_header(&mut records, mapping, encoding)?;
    let mut plan: Plan = plan(mapping, &header)?;
    let mut report = run(&mut records, &mut plan, site, sink, progress)?;
    report.header = Some(header);
    Ok(report)
}

fn run<R: BufRead>(
    records: &mut RecordReader<R>,
    plan: &mut Plan,
    site: &SiteAir,
    sink: &mut dyn ReadingSink,
    progress: &mut dyn FnMut(u64),
) -> Result<ParseReport, IngestError> {
    // Readings go to the sink as measured (`stored`); the quality report and the check below judge
    // them with the site's air as it is now (`convs`).
    let convs = plan.converters(site);
    let stored: Vec<_> = plan.rules.iter().map(|r| r.stored()).collect();
    // A line flow against a pressure column: (pressure channel, its site converter, line K).
    let line: Vec<Option<(usize, usize, f64)>> = plan
        .line_pressure
        .iter()
        .zip(&plan.rules)
        .map(|(p, r)| match (p, r) {
            (Some(pc), UnitRule::LineFlow { temperature_k, .. }) => {
                Some((plan.channels[*pc].column_index, *pc, *temperature_k))
            }
            _ => None,
        })
        .collect();
    let normal_to_free_air = site.free_air_from_reference(1.0, ReferenceConditions::NORMAL_DIN_1343);
    let mut quality = QualityTracker::new(&plan.channels, &convs, site.atmosphere.0);
    let chans: Vec<(usize, bool)> =
        plan.channels.iter().map(|c| (c.column_index, c.quantity == Quantity::Pressure)).collect();
    let needed = chans
        .iter()
        .map(|c| c.0)
        .chain(std::iter::once(plan.timestamp_index))
        .chain(plan.time_index)
        .max()
        .unwrap_or(0);
    let decimal = plan.decimal;
    let has_markers = !plan.missing_markers.is_empty();
    let mut joined: Vec<u8> = Vec::with_capacity(64);
    let (mut rows, mut readings) = (0u64, 0u64);
    let (mut first, mut last): (Option<i64>, Option<i64>) = (None, None);
    let mut next_progress = PROGRESS_EVERY_BYTES;

    while let Some(rec) = records.next().map_err(record_error)? {
        if rec.offset() >= next_progress {
            progress(rec.offset());
            next_progress = rec.offset() + PROGRESS_EVERY_BYTES;
        }
        let line_no = rec.line();
        if line_no < plan.data_from_line {
            // The units row, an aggregation row or a second header row between header and data.
            continue;
        }
        if rec.is_blank() {
            quality.blank_line();
            continue;
        }
        let field = |i: usize| rec.get(i);
        if rec.len() <= needed {
            // Rows of empty cells only (",,,,") are blank; otherwise too short.
            if rec.iter().all(|f| trim(f).is_empty()) {
                quality.blank_line();
                continue;
            }
            let missing = chans
                .iter()
                .map(|c| c.0)
                .chain(std::iter::once(plan.timestamp_index))
                .chain(plan.time_index)
                .find(|&i| i >= rec.len())
                .unwrap_or(needed);
            let label = header_label(plan, missing);
            return Err(IngestError::at(
                line_no,
                Some(&label),
                format!("row has {} fields; column {:?} is field {}", rec.len(), label, missing + 1),
            ));
        }
        let ts_raw = field(plan.timestamp_index).unwrap_or_default();
        let ts: &[u8] = match plan.time_index {
            None => ts_raw,
            Some(ti) => {
                joined.clear();
                joined.extend_from_slice(trim(ts_raw));
                joined.push(b' ');
                joined.extend_from_slice(trim(field(ti).unwrap_or_default()));
                &joined
            }
        };
        if trim(ts_raw).is_empty() && chans.iter().all(|c| trim(field(c.0).unwrap_or_default()).is_empty()) {
            quality.blank_line();
            continue;
        }
        let ts = match plan.interval {
            None => ts,
            Some(end) => interval_end(ts, end).ok_or_else(|| {
                IngestError::at(
                    line_no,
                    Some(&plan.timestamp_label),
                    format!("cannot find the two ends of the interval {:?} (\"start - end\")", shown(ts)),
                )
            })?,
        };
        let Some((t, dst)) = plan.timestamps.parse(ts) else {
            return Err(IngestError::at(
                line_no,
                Some(&plan.timestamp_label),
                format!("cannot read timestamp {:?} as {:?}", shown(ts), plan.timestamp_format),
            ));
        };
        rows += 1;
        quality.row(line_no, t);
        if let Some(case) = dst {
            quality.dst(line_no, case, t);
        }
        first = Some(first.map_or(t, |f| f.min(t)));
        last = Some(last.map_or(t, |l| l.max(t)));
        for (ch, &(ci, is_pressure)) in chans.iter().enumerate() {
            let raw = field(ci).unwrap_or_default();
            if has_markers && plan.missing_markers.iter().any(|m| m.eq_ignore_ascii_case(trim(raw))) {
                quality.marked(ch, line_no, trim(raw), true);
                continue;
            }
            match parse_cell(raw, decimal) {
                Ok(Cell::Value(v)) => {
                    let (value, si) = match line[ch] {
                        None => (stored[ch].apply(v), convs[ch].apply(v)),
                        Some((pi, pc, t_line)) => {
                            // The row's line pressure, absolute with the site's atmosphere.
                            let raw_p = field(pi).unwrap_or_default();
                            let p_abs = match parse_cell(raw_p, decimal) {
                                Ok(Cell::Value(p)) => convs[pc].apply(p),
                                _ => {
                                    quality.missing(ch, line_no);
                                    continue;
                                }
                            };
                            let normal = line_to_reference(
                                stored[ch].apply(v),
                                p_abs,
                                t_line,
                                ReferenceConditions::NORMAL_DIN_1343,
                            );
                            (normal, normal * normal_to_free_air)
                        }
                    };
                    if is_pressure && si < 0.0 {
                        let c = &plan.channels[ch];
                        return Err(IngestError::at(
                            line_no,
                            Some(&c.label),
                            format!(
                                "pressure {} {} is below zero absolute ({} pa abs)",
                                shown(trim(raw)),
                                c.unit,
                                si.round()
                            ),
                        ));
                    }
                    quality.reading(ch, line_no, t, si);
                    sink.reading(ch, t, value).map_err(|mut e| {
                        e.line = e.line.or(Some(line_no));
                        e
                    })?;
                    readings += 1;
                }
                Ok(Cell::Missing) if trim(raw).is_empty() => quality.missing(ch, line_no),
                Ok(Cell::Missing) => quality.marked(ch, line_no, trim(raw), true),
                // Text where a number belongs is a missing value, counted apart (refused below
                // only when a column holds more of it than numbers).
                Err(_) => quality.marked(ch, line_no, trim(raw), false),
            }
        }
    }
    if let Some((label, count, first)) = quality.mostly_unreadable() {
        let (line, text) = first.map_or((None, String::new()), |m| (Some(m.line), m.text.clone()));
        return Err(IngestError {
            message: format!(
                "{count} cells of column {label:?} are text, more than its numbers (first {text:?}); \
                 check the decimal mark, or name the marker in missing_markers"
            ),
            line,
            column: Some(label.to_string()),
            field: None,
        });
    }
    progress(records.bytes_read());
    let quality = quality.finish();
    Ok(ParseReport {
        rows,
        readings,
        first_ms: first,
        last_ms: last,
        median_interval_s: quality.file.median_interval_s,
        quality,
        header: None,
    })
}

/// One end of an interval timestamp (`14.05.2026 08:00 - 14.05.2026 08:15`), split at ` - `, an
/// en dash or ` to `; `None` when the cell holds no such separator.
pub fn interval_end(ts: &[u8], end: IntervalEnd) -> Option<&[u8]> {
    const SEPARATORS: [&[u8]; 4] = [b" - ", " \u{2013} ".as_bytes(), b" to ", b" bis "];
    SEPARATORS.iter().find_map(|sep| {
        let at = ts.windows(sep.len()).position(|w| w == *sep)?;
        Some(match end {
            IntervalEnd::Start => trim(&ts[..at]),
            IntervalEnd::End => trim(&ts[at + sep.len()..]),
        })
    })
}

fn header_label(plan: &Plan, index: usize) -> String {
    if index == plan.timestamp_index {
        return plan.timestamp_label.clone();
    }
    plan.channels
        .iter()
        .find(|c| c.column_index == index)
        .map(|c| c.label.clone())
        .unwrap_or_else(|| format!("field {}", index + 1))
}

#[cfg(test)]
mod layout_tests;

#[cfg(test)]
mod tests;
