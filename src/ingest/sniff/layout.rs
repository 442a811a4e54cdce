/*!
Where the data is: the delimiter, the first data row, and the header rows above it, read as a
person reads a file (issue 14).

Every record of the head is first given a kind from its cells alone ([`RowKind`]): blank, data
(at least half of its filled cells numbers, timestamps or missing markers, one of them not a
marker, and at least two filled cells), units (mostly unit
spellings such as `[kW]`, `(bar)`, `kW`, `°F`), aggregation (mostly words such as `Avg`, `Min`,
`Max`, `Smp`), or text. Then:

1. **Delimiter**: for `\t`, `;` and `,`, the records are read by the import's own reader; the
   delimiter whose final run of data rows (from the end of the head upwards, across blank lines)
   is longest and splits into one typical field count wins (ties: tab, then `;`, then `,`).
2. **First data row**: the first record of that final run.
3. **Header block**: the non-blank records right above it (across blank lines), at most six,
   up to the first one that fills less than 40 % of the data's width (a preamble line padded
   with delimiters, `UNIT: ft,,,,`, fills one cell of five) or is data itself. In it the **names
   row** is the lowest text row that fills at least 60 % of the width (else the fullest text
   row); a units row below it is the **units row**; aggregation rows and any other rows between
   the names and the data are skipped through `first_data_line`. Text rows above the names row
   are the upper rows of a multi-row header: their words still hint at units.
*/

use super::HeadRecord;
use crate::core::unit_table;
use crate::ingest::number::{is_missing_marker, parse_cell};

/// What a record looks like from its cells alone.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RowKind {
    Blank,
    Data,
    Units,
    Aggregation,
    Text,
}

/// Words that say how a logger aggregated a value over its interval.
const AGGREGATION: &[&str] = &[
    "avg",
    "average",
    "mean",
    "min",
    "max",
    "minimum",
    "maximum",
    "smp",
    "sample",
    "spl",
    "tot",
    "total",
    "sum",
    "std",
    "stdev",
    "std_dev",
    "last",
    "first",
    "inst",
    "instant",
    "rms",
    "median",
    "mittel",
    "mittelwert",
    "wvc",
    "wvt",
    "cnt",
    "count",
];

/// Unit spellings of quantities the audit does not read but that loggers write in a units row.
const OTHER_UNITS: &[&str] = &[
    "%",
    "v",
    "volt",
    "volts",
    "mv",
    "ma",
    "hz",
    "va",
    "kva",
    "var",
    "kvar",
    "kvah",
    "kvarh",
    "m",
    "mm",
    "cm",
    "ft",
    "in",
    "m_s",
    "mph",
    "miles_hour",
    "km_h",
    "knots",
    "deg",
    "degrees",
    "db",
    "dbm",
    "bits",
    "ms_cm",
    "us_cm",
    "µs_cm",
    "mg_l",
    "ppm",
    "ntu",
    "lux",
    "w_m2",
    "w_m²",
    "rpm",
    "s",
    "sec",
    "min",
    "h",
    "ts",
    "rn",
    "pf",
    "ohm",
    "%rh",
    "rh",
    "g",
    "kg",
    "t",
    "m3",
    "l",
    "gal",
];

/// Whether a cell reads as data: a number with either decimal mark, a missing marker, or a
/// timestamp-looking string (digits with date and time punctuation, AM/PM, T, Z).
pub fn looks_like_data(cell: &str) -> bool {
    let t = cell.trim();
    if is_missing_marker(t.as_bytes()) {
        return true;
    }
    if parse_cell(t.as_bytes(), b'.').is_ok() || parse_cell(t.as_bytes(), b',').is_ok() {
        return true;
    }
    t.bytes().filter(u8::is_ascii_digit).count() >= 4
        && t.bytes().all(|b| b.is_ascii_digit() || b":/.-+ ,TZ".contains(&b) || b"AMPamp".contains(&b))
}

/// Whether a header or units-row cell is a unit spelling (bracketed or bare).
pub fn is_unit_cell(cell: &str) -> bool {
    let t = cell.trim();
    let inner = t
        .strip_prefix('[')
        .and_then(|s| s.strip_suffix(']'))
        .or_else(|| t.strip_prefix('(').and_then(|s| s.strip_suffix(')')));
    if let Some(i) = inner {
        return !i.trim().is_empty() && i.len() <= 16;
    }
    if t.len() > 16 {
        return false;
    }
    let n = unit_table::normalize(t);
    unit_table::in_header(t).is_some() || OTHER_UNITS.contains(&n.as_str())
}

fn is_aggregation_cell(cell: &str) -> bool {
    let n = unit_table::normalize(cell);
    AGGREGATION.contains(&n.as_str())
}

/// The kind of a record.
pub fn row_kind(r: &HeadRecord) -> RowKind {
    if r.blank {
        return RowKind::Blank;
    }
    let filled: Vec<&str> = r.fields.iter().map(|f| f.trim()).filter(|f| !f.is_empty()).collect();
    if filled.is_empty() {
        return RowKind::Blank;
    }
    let data = filled.iter().filter(|f| looks_like_data(f)).count();
    let nonmarker_data =
        filled.iter().filter(|f| looks_like_data(f) && !is_missing_marker(f.as_bytes())).count();
    if filled.len() >= 2 && nonmarker_data >= 1 && data * 2 >= filled.len() {
        return RowKind::Data;
    }
    let units = filled.iter().filter(|f| is_unit_cell(f)).count();
    let aggregation = filled.iter().filter(|f| is_aggregation_cell(f)).count();
    if aggregation * 5 >= filled.len() * 3 {
        RowKind::Aggregation
    } else if units * 5 >= filled.len() * 3 {
        RowKind::Units
    } else {
        RowKind::Text
    }
}

/// How many cells of a record are filled, and its width without trailing empty cells.
fn filled(r: &HeadRecord) -> usize {
    r.fields.iter().filter(|f| !f.trim().is_empty()).count()
}

fn width(r: &HeadRecord) -> usize {
    r.fields.iter().rposition(|f| !f.trim().is_empty()).map_or(0, |i| i + 1)
}

/// The final run of data rows: (index of its first record, number of data rows, typical width).
/// Walks up from the last record across blank lines; a record of another kind ends the run.
pub fn final_data_run(records: &[HeadRecord], kinds: &[RowKind]) -> Option<(usize, usize, usize)> {
    let mut first = None;
    let mut n = 0;
    for i in (0..records.len()).rev() {
        match kinds[i] {
            RowKind::Blank => continue,
            RowKind::Data => {
                first = Some(i);
                n += 1;
            }
            _ => break,
        }
    }
    let first = first?;
    // The typical width: the most common one among the run's data rows.
    let mut counts: Vec<(usize, usize)> = Vec::new();
    for (r, _) in records[first..].iter().zip(&kinds[first..]).filter(|(_, k)| **k == RowKind::Data) {
        let w = width(r);
        match counts.iter_mut().find(|(cw, _)| *cw == w) {
            Some(c) => c.1 += 1,
            None => counts.push((w, 1)),
        }
    }
    let w = counts.iter().max_by_key(|c| (c.1, c.0)).map_or(0, |c| c.0);
    Some((first, n, w))
}

/// The delimiter's score: data rows in the final run that have the typical width (at least 2).
pub fn delimiter_score(records: &[HeadRecord], kinds: &[RowKind]) -> usize {
    match final_data_run(records, kinds) {
        Some((first, _, w)) if w >= 2 => records[first..]
            .iter()
            .zip(&kinds[first..])
            .filter(|(r, k)| **k == RowKind::Data && width(r) == w)
            .count(),
        _ => 0,
    }
}

/// The rows found above the data.
#[derive(Debug, Clone, PartialEq)]
pub struct Layout {
    /// Index of the names row.
    pub header: usize,
    /// Index of the units row below the names, if any.
    pub units: Option<usize>,
    /// Indexes of aggregation and other rows between the names and the data (skipped).
    pub skipped: Vec<usize>,
    /// Indexes of the header's upper rows (text rows above the names).
    pub upper: Vec<usize>,
    /// Index of the first data row.
    pub first_data: usize,
}

/// The header block above the first data row, as described in the module doc.
pub fn find_layout(
    records: &[HeadRecord],
    kinds: &[RowKind],
    first_data: usize,
    data_width: usize,
) -> Option<Layout> {
    let mut block: Vec<usize> = Vec::new(); // bottom-up
    let min_fill = (data_width * 2).div_ceil(5).max(1);
    for i in (0..first_data).rev() {
        match kinds[i] {
            RowKind::Blank => continue,
            RowKind::Data => break,
            _ => {}
        }
        if filled(&records[i]) < min_fill && kinds[i] != RowKind::Aggregation {
            // A units or aggregation row may leave the timestamp columns empty; a preamble
            // line padded with delimiters fills one cell.
            let sparse_annotation = kinds[i] == RowKind::Units && filled(&records[i]) * 3 >= data_width;
            if !sparse_annotation {
                break;
            }
        }
        block.push(i);
        if block.len() == 6 {
            break;
        }
    }
    let wide = (data_width * 3).div_ceil(5).max(1);
    let names = block
        .iter()
        .copied()
        .find(|&i| kinds[i] == RowKind::Text && filled(&records[i]) >= wide)
        .or_else(|| {
            block
                .iter()
                .copied()
                .filter(|&i| kinds[i] == RowKind::Text)
                .max_by_key(|&i| (filled(&records[i]), i))
        })
        // Names that are all unit words (`Time,kW,bar`): the top row of the block.
        .or_else(|| block.iter().copied().filter(|&i| kinds[i] == RowKind::Units).min())?;
    let below: Vec<usize> = block.iter().copied().filter(|&i| i > names).collect();
    let units = below.iter().copied().filter(|&i| kinds[i] == RowKind::Units).min();
    let skipped = below.iter().copied().filter(|&i| Some(i) != units).rev().collect();
    let upper = block.iter().copied().filter(|&i| i < names).rev().collect();
    Some(Layout { header: names, units, skipped, upper, first_data })
}
