/*!
Ingest: logger CSV files into canonical SI readings.

A logger file takes one way through this module:

1. [`sniff`] looks at the first ~64 KiB and guesses encoding, delimiter, decimal mark, preamble,
   header, units row and first data row, timestamp (columns, interval, day or month first),
   missing markers and the quantity/unit/compressor of each column, and proposes a
   [`mapping::Mapping`] that the upload page shows for confirmation.
2. [`mapping::plan`] validates a mapping against the file's header (unknown column, unit or
   quantity, current without volts or power factor...) and resolves it into a [`mapping::Plan`].
3. [`parse::parse_stream`] reads the file once, line by line with bounded memory, and hands each
   reading to a [`parse::ReadingSink`] as `(channel, t_ms UTC, value_si)`: pressure in Pa absolute,
   flow in m³/s of free air at the site inlet, power in W, energy counters in J, temperature in K.
4. [`quality`] collects findings on the way (gaps, duplicates, flat lines, counter resets,
   daylight-saving cases...) with counts and a few examples each, and turns them into the short
   sentences of the API's `warnings` list.

[`text`] decodes UTF-8 (with or without BOM) and Windows-1252, [`number`] parses numbers with
either decimal mark, [`timestamp`] parses timestamps and resolves local times to UTC.

Architecture invariant: nothing here does network or database IO; the only IO is the
`BufRead` handed to [`parse::parse_stream`].
*/

pub mod mapping;
pub mod number;
pub mod parse;
pub mod quality;
pub mod record;
pub mod sniff;
pub mod text;
pub mod timestamp;

pub use mapping::{channel_defs, units_by_quantity, ChannelDef, Mapping, Quantity};
pub use parse::{parse_stream, ParseReport, ReadingSink};
pub use sniff::{layout_key, sniff, suggest_mapping, Sniffed};

use serde::Serialize;

/// An ingest error as the API reports it: a lower-case message with the bad value, and where it
/// applies the 1-based line of the file, the column's header name and the mapping field at fault.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct IngestError {
    pub message: String,
    pub line: Option<u64>,
    pub column: Option<String>,
    pub field: Option<String>,
}

impl IngestError {
    /// An error with a message only.
    pub fn new(message: impl Into<String>) -> Self {
        Self { message: message.into(), line: None, column: None, field: None }
    }

    /// An error in the mapping, naming the mapping field (e.g. `columns[2].unit`).
    pub fn field(field: impl Into<String>, message: impl Into<String>) -> Self {
        Self { message: message.into(), line: None, column: None, field: Some(field.into()) }
    }

    /// An error at a line of the file and, where known, a column (its header name).
    pub fn at(line: u64, column: Option<&str>, message: impl Into<String>) -> Self {
        Self { message: message.into(), line: Some(line), column: column.map(str::to_string), field: None }
    }

    /// The same error with the column set.
    pub fn with_column(mut self, column: impl Into<String>) -> Self {
        self.column = Some(column.into());
        self
    }
}

impl std::fmt::Display for IngestError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.message)?;
        if let Some(line) = self.line {
            write!(f, " (line {line}")?;
            if let Some(c) = &self.column {
                write!(f, ", column {c:?}")?;
            }
            f.write_str(")")?;
        } else if let Some(c) = &self.column {
            write!(f, " (column {c:?})")?;
        }
        if let Some(field) = &self.field {
            write!(f, " [{field}]")?;
        }
        Ok(())
    }
}

impl std::error::Error for IngestError {}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn display_names_line_column_and_field() {
        let e = IngestError::at(12, Some("C2 kW"), "cannot read number \"1x\"");
        assert_eq!(e.to_string(), "cannot read number \"1x\" (line 12, column \"C2 kW\")");
        let f = IngestError::field("columns[0].unit", "unknown power unit \"kw/h\"");
        assert_eq!(f.to_string(), "unknown power unit \"kw/h\" [columns[0].unit]");
    }
}

/// Hostile input: the sniffer, the number and timestamp parsers, the streaming parser and the
/// mapping JSON must answer every input with a value or an error, never a panic (issue 6). These
/// are property tests with many cases, run in CI in place of a coverage-guided fuzzer.
#[cfg(test)]
mod hostile_input {
    use super::*;
    use crate::core::units::SiteAir;
    use proptest::prelude::*;

    fn csvish() -> impl Strategy<Value = Vec<u8>> {
        // Bytes biased towards what logger files contain, so that the parsers get past the header.
        let piece = prop_oneof![
            Just(b",".to_vec()),
            Just(b";".to_vec()),
            Just(b"\t".to_vec()),
            Just(b"\n".to_vec()),
            Just(b"\r\n".to_vec()),
            Just(b"\"".to_vec()),
            Just(b"2026-03-29T02:30:00".to_vec()),
            Just(b"29.03.2026 02:30:00".to_vec()),
            Just(b"12/31/2026 11:59:59 PM".to_vec()),
            Just(b"1772000000".to_vec()),
            Just(b"45678.5".to_vec()),
            Just(b"-1e309".to_vec()),
            Just(b"7,25".to_vec()),
            Just(b"NaN".to_vec()),
            Just(b"---".to_vec()),
            Just(b"\xef\xbb\xbf".to_vec()),
            Just(b"\xb0C".to_vec()),
            Just(b"time".to_vec()),
            Just(b"C1 kW".to_vec()),
            proptest::collection::vec(any::<u8>(), 0..8),
        ];
        proptest::collection::vec(piece, 0..80).prop_map(|v| v.concat())
    }

    fn mapping() -> Mapping {
        serde_json::from_str(
            r#"{"delimiter": ",", "decimal": ".", "header_line": 1,
                "timestamp": {"column": "time", "format": "rfc3339", "timezone": "Europe/Berlin"},
                "columns": [{"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"}]}"#,
        )
        .expect("mapping")
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 2000, ..ProptestConfig::default() })]

        #[test]
        fn the_sniffer_never_panics(bytes in csvish()) {
            if let Ok(s) = sniff(&bytes) {
                let _ = suggest_mapping(&s);
                let _ = layout_key(&s.header);
            }
        }

        #[test]
        fn the_streaming_parser_never_panics(body in csvish()) {
            let mut file = b"time,C1 kW\n".to_vec();
            file.extend_from_slice(&body);
            let mut sink: Vec<(usize, i64, f64)> = Vec::new();
            let site = SiteAir::new(101.325, 20.0);
            let _ = parse_stream(std::io::Cursor::new(file), &mapping(), &site, &mut sink, &mut |_| {});
            for (_, _, v) in &sink {
                prop_assert!(v.is_finite());
            }
        }

        #[test]
        fn numbers_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..40)) {
            let _ = number::parse_cell(&bytes, b'.');
            let _ = number::parse_cell(&bytes, b',');
        }

        #[test]
        fn mapping_json_never_panics(text in "\\PC{0,300}", fmt in "[%a-zA-Z:./ -]{0,24}") {
            if let Ok(m) = serde_json::from_str::<Mapping>(&text) {
                let _ = channel_defs(&m);
            }
            let mut m = mapping();
            m.timestamp.format = fmt;
            let _ = mapping::plan(&m, &["time".to_string(), "C1 kW".to_string()]);
        }
    }
}
