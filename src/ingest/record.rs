/*!
One record reader for logger files: where a record ends and what its fields are, for the sniffer
and the parser alike, in one pass with bounded memory and linear time on any input.

# What a record is
- Fields are separated by one delimiter byte; a record ends at a line break: `\n`, `\r\n` or a
  bare `\r`, mixed freely in one file, or at the end of the input.
- Quoting follows RFC 4180: a quote opens a quoted field only at the start of a field; inside it
  `""` is one quote and delimiters and line breaks are data (kept as they are in the file, `\r\n`
  included). A quote anywhere else is a literal byte: `12" main` is one field of 8 bytes.
- Two leniencies, both as the parser was before this reader:
  - spaces and tabs before an opening quote are dropped (`a, "b,c"` gives `a` and `b,c`); spaces
    and tabs not followed by a quote are data (` 7.2` stays ` 7.2`; the caller trims);
  - bytes after a closing quote up to the delimiter are kept as data (`"ab"cd` gives `abcd`,
    `"ab" ` gives `ab `), quotes among them included, instead of being an error.
- A blank line (nothing, or only spaces and tabs, on one physical line) is returned as a record
  for which [`Record::is_blank`] is true, so that a caller can count blank lines apart from rows
  and "rows read = rows in the file" can be checked. Rows of empty fields (`,,,`) are records like
  any other: whether they count as blank is the caller's rule.

# What it guarantees
- Every input byte is examined once; nothing is scanned again when a record spans lines, so the
  time is linear in the input whatever it holds (an unclosed quote followed by a million lines
  included).
- Memory: the caller's `BufRead` buffer plus one record: at most [`Limits::max_record_bytes`]
  bytes of field data and [`Limits::max_fields`] field ends. A longer record or one with more
  fields is an error naming the line where it starts; an unclosed quote is an error naming the
  line and column where the quote opened.
- Positions: each record knows the 1-based physical line where it starts and ends (lines counted
  by every line break, inside quoted fields too, so CR-only files count right) and its byte
  offset in the input.

# What it leaves to the caller
- Text encodings: fields are bytes. The delimiter, quote and line breaks must be single ASCII
  bytes, true of UTF-8, Windows-1252 and Latin-1; UTF-16 input must be transcoded to UTF-8 before
  it reaches this reader.
- A byte-order mark is not removed: it is part of the first field's bytes (and a quote after it is
  then literal). Skip it on the `BufRead` before handing it over (see `text::strip_bom`).
- Preamble lines are records like any other; the caller skips the ones it does not want.

# Why hand-written and not `csv`/`csv-core`
`csv-core`, which the `csv` crate is built on, skips empty lines without saying so, never reports
an unclosed quote (it returns the rest of the file as one field), counts lines by `\n` only (a
CR-only file is "line 1" throughout) and takes blanks before a quote as data. Each of these needs
a look at every byte again in a wrapper. On a 50 MB logger file (`record::tests::bench_50_mb`, on
a shared 2-core machine whose figures vary by ±30 % from run to run, 7 runs), `csv-core`'s bare
parse is faster than this reader (this reader at 0.45-0.94×, median 0.67-0.70×), but `csv-core`
plus only a line count over the bytes it consumed (still short of equal correctness) is about as
fast or slower (0.5-1.2× this reader). Against the splitting `parse.rs` did before it, this
reader is at 0.6-1.45× (median 0.91×) on plain rows and 0.9-1.44× (median about 1.2×) on quoted
ones. Room left: `memchr` scans and fields borrowed from the input buffer when a record lies in
one chunk.
*/

use std::fmt;
use std::io::{self, BufRead};

/// Caps that bound one record's memory.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Limits {
    /// The longest record, in bytes of the file (quotes and quoted line breaks included, the
    /// line break that ends it not).
    pub max_record_bytes: usize,
    /// The most fields in one record.
    pub max_fields: usize,
}

impl Limits {
    /// 1 MiB and 4,096 fields: far above any logger layout, small enough for a server.
    pub const DEFAULT: Limits = Limits { max_record_bytes: 1 << 20, max_fields: 4096 };
}

impl Default for Limits {
    fn default() -> Self {
        Self::DEFAULT
    }
}

/// What went wrong.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum RecordErrorKind {
    /// The record is longer than `limit` bytes.
    TooLong { limit: usize },
    /// The record has more than `limit` fields.
    TooManyFields { limit: usize },
    /// A quoted field is still open at the end of the input.
    UnclosedQuote,
    /// The underlying reader failed.
    Io { kind: io::ErrorKind, message: String },
}

/// A reader error, with where it happened.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RecordError {
    pub kind: RecordErrorKind,
    /// 1-based line: where the record starts; for [`RecordErrorKind::UnclosedQuote`] where the
    /// quote opened; for [`RecordErrorKind::Io`] the line being read.
    pub line: u64,
    /// 1-based byte column on `line` of the opening quote ([`RecordErrorKind::UnclosedQuote`]).
    pub column: Option<u64>,
    /// 1-based number of the field being read when it happened.
    pub field: usize,
    /// For a record that is too long: the line and column of a quote still open at that point,
    /// the likely cause.
    pub open_quote: Option<(u64, u64)>,
}

impl fmt::Display for RecordError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &self.kind {
            RecordErrorKind::TooLong { limit } => {
                write!(f, "the record starting at line {} is longer than {limit} bytes", self.line)?;
                if let Some((l, c)) = self.open_quote {
                    write!(f, "; the quote opened at line {l}, column {c} never closes before that")?;
                }
                Ok(())
            }
            RecordErrorKind::TooManyFields { limit } => {
                write!(f, "the record starting at line {} has more than {limit} fields", self.line)
            }
            RecordErrorKind::UnclosedQuote => write!(
                f,
                "the quote opened at line {}, column {} (field {}) never closes",
                self.line,
                self.column.unwrap_or(0),
                self.field
            ),
            RecordErrorKind::Io { message, .. } => {
                write!(f, "cannot read the file at line {}: {message}", self.line)
            }
        }
    }
}

impl std::error::Error for RecordError {}

/// One record: its fields (unescaped bytes) and where it is in the file.
#[derive(Debug, Clone, Copy)]
pub struct Record<'a> {
    data: &'a [u8],
    fields: &'a [(usize, usize)],
    line: u64,
    end_line: u64,
    offset: u64,
    blank: bool,
}

impl<'a> Record<'a> {
    /// The 1-based physical line where the record starts.
    pub fn line(&self) -> u64 {
        self.line
    }

    /// The 1-based physical line where the record ends (after `line` when a quoted field holds a
    /// line break).
    pub fn end_line(&self) -> u64 {
        self.end_line
    }

    /// The byte offset in the input where the record starts.
    pub fn offset(&self) -> u64 {
        self.offset
    }

    /// The number of fields (at least 1: an empty line is one empty field).
    pub fn len(&self) -> usize {
        self.fields.len()
    }

    /// Never true for a record from [`RecordReader`] (it has at least one field); here because a
    /// `len` asks for it.
    pub fn is_empty(&self) -> bool {
        self.fields.is_empty()
    }

    /// A line with nothing, or only spaces and tabs, on it (one unquoted field).
    pub fn is_blank(&self) -> bool {
        self.blank
    }

    /// Field `i` (0-based), unescaped, or `None` past the last field.
    pub fn get(&self, i: usize) -> Option<&'a [u8]> {
        let &(start, end) = self.fields.get(i)?;
        Some(&self.data[start..end])
    }

    /// Field `i` (0-based), unescaped. Panics past the last field, as slice indexing does.
    pub fn field(&self, i: usize) -> &'a [u8] {
        match self.get(i) {
            Some(f) => f,
            None => panic!("field {i} of a record with {} fields", self.len()),
        }
    }

    /// The fields in order.
    pub fn iter(&self) -> impl Iterator<Item = &'a [u8]> + 'a {
        let data = self.data;
        self.fields.iter().map(move |&(a, b)| &data[a..b])
    }
}

/// Byte classes for the scans: 0 is plain data.
const PLAIN: u8 = 0;
const DELIM: u8 = 1;
const CR: u8 = 2;
const LF: u8 = 3;
const QUOTE: u8 = 4;

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum State {
    /// At the start of a field, nothing read.
    FieldStart,
    /// Only spaces and tabs since the start of the field (kept in `data` in case no quote follows).
    Blanks,
    /// In an unquoted field, or after a closing quote (lenient).
    Unquoted,
    /// In a quoted field.
    Quoted,
    /// A quote inside a quoted field: the closing one, or the first of `""`.
    QuoteInQuoted,
}

/// The parse state without the input (so that it can be borrowed beside the input's buffer).
struct Parser {
    delim: u8,
    limits: Limits,
    /// Classes outside quotes: delimiter, CR, LF.
    unquoted: [u8; 256],
    /// Classes inside quotes: quote, CR, LF.
    quoted: [u8; 256],
    /// The record's bytes: unquoted stretches as in the file (delimiters included), quoted
    /// fields unescaped. Never more than the record's length in the file, so at most
    /// `max_record_bytes`.
    data: Vec<u8>,
    /// Each field's range in `data`. At most `max_fields`.
    fields: Vec<(usize, usize)>,
    state: State,
    /// Where the current field starts in `data`.
    field_start: usize,
    /// Bytes consumed so far (the stream offset of the next byte).
    offset: u64,
    /// The physical line of the next byte, and the offset where that line starts.
    line: u64,
    line_start: u64,
    /// The last byte consumed was a CR: a LF right after it is the same line break.
    pending_cr: bool,
    /// Whether a record is under way (bytes of it consumed).
    in_record: bool,
    rec_line: u64,
    rec_offset: u64,
    rec_end_line: u64,
    rec_blank: bool,
    /// Where the open quote is: line and column.
    quote_at: (u64, u64),
}

enum Step {
    /// The input was used up before the record ended.
    More,
    /// The record ended after this many input bytes.
    Done(usize),
}

#[inline(always)]
fn is_blank(b: u8, delim: u8) -> bool {
    (b == b' ' || b == b'\t') && b != delim
}

impl Parser {
    fn new(delim: u8, limits: Limits) -> Self {
        let mut unquoted = [PLAIN; 256];
        unquoted[b'\r' as usize] = CR;
        unquoted[b'\n' as usize] = LF;
        unquoted[delim as usize] = DELIM;
        let mut quoted = [PLAIN; 256];
        quoted[b'\r' as usize] = CR;
        quoted[b'\n' as usize] = LF;
        quoted[b'"' as usize] = QUOTE;
        Parser {
            delim,
            limits,
            unquoted,
            quoted,
            data: Vec::new(),
            fields: Vec::new(),
            state: State::FieldStart,
            field_start: 0,
            offset: 0,
            line: 1,
            line_start: 0,
            pending_cr: false,
            in_record: false,
            rec_line: 1,
            rec_offset: 0,
            rec_end_line: 1,
            rec_blank: false,
            quote_at: (0, 0),
        }
    }

    fn begin_record(&mut self) {
        self.data.clear();
        self.fields.clear();
        self.state = State::FieldStart;
        self.field_start = 0;
        self.in_record = true;
        self.rec_line = self.line;
        self.rec_offset = self.offset;
    }

    #[cold]
    #[inline(never)]
    fn error(&self, kind: RecordErrorKind) -> RecordError {
        let open = self.state == State::Quoted || self.state == State::QuoteInQuoted;
        let field = self.fields.len() + 1;
        match kind {
            RecordErrorKind::UnclosedQuote => RecordError {
                kind,
                line: self.quote_at.0,
                column: Some(self.quote_at.1),
                field,
                open_quote: None,
            },
            RecordErrorKind::Io { .. } => {
                RecordError { kind, line: self.line, column: None, field, open_quote: None }
            }
            _ => RecordError {
                kind,
                line: self.rec_line,
                column: None,
                field,
                open_quote: open.then_some(self.quote_at),
            },
        }
    }

    /// Is the record longer than the cap once the input up to stream offset `at` is in it?
    #[inline(always)]
    fn check_len(&self, at: u64) -> Result<(), RecordError> {
        if at - self.rec_offset > self.limits.max_record_bytes as u64 {
            Err(self.error(RecordErrorKind::TooLong { limit: self.limits.max_record_bytes }))
        } else {
            Ok(())
        }
    }

    /// End the current field at `end` (in `data`) because a delimiter follows: an error when the
    /// next field would be one too many.
    #[inline(always)]
    fn end_field_at_delim(&mut self, end: usize) -> Result<(), RecordError> {
        self.fields.push((self.field_start, end));
        self.field_start = end;
        if self.fields.len() >= self.limits.max_fields {
            return Err(self.error(RecordErrorKind::TooManyFields { limit: self.limits.max_fields }));
        }
        Ok(())
    }

    /// End the last field at `end` and the record at a line break (`cr` says which) at stream
    /// offset `at`.
    #[inline(always)]
    fn end_record_at_break(&mut self, end: usize, cr: bool, at: u64) {
        self.rec_blank = self.fields.is_empty() && matches!(self.state, State::FieldStart | State::Blanks);
        self.fields.push((self.field_start, end));
        self.rec_end_line = self.line;
        self.line += 1;
        self.line_start = at + 1;
        self.pending_cr = cr;
        self.in_record = false;
    }

    /// Parse from `input` (which starts at stream offset `self.offset`) until the record ends or
    /// the input is used up. Consumes what it examined (`self.offset` moves on).
    fn feed(&mut self, input: &[u8]) -> Result<Step, RecordError> {
        let base = self.offset;
        let n = input.len();
        let mut i = 0usize;
        if !self.in_record {
            if self.pending_cr && i < n && input[i] == b'\n' {
                // The LF of a CRLF that ended the previous record.
                i += 1;
                self.line_start = base + 1;
            }
            self.pending_cr = false;
            if i == n {
                self.offset = base + n as u64;
                return Ok(Step::More);
            }
            self.offset = base + i as u64;
            self.begin_record();
        }
        let step = self.run(input, i, base)?;
        self.offset = base + if let Step::Done(k) = step { k } else { n } as u64;
        Ok(step)
    }

    #[inline(always)]
    fn run(&mut self, input: &[u8], mut i: usize, base: u64) -> Result<Step, RecordError> {
        let n = input.len();
        let delim = self.delim;
        while i < n {
            match self.state {
                State::FieldStart | State::Blanks => {
                    let b = input[i];
                    if b == delim {
                        self.check_len(base + i as u64 + 1)?;
                        self.end_field_at_delim(self.data.len())?;
                        self.state = State::FieldStart;
                        i += 1;
                    } else if b == b'\r' || b == b'\n' {
                        self.end_record_at_break(self.data.len(), b == b'\r', base + i as u64);
                        return Ok(Step::Done(i + 1));
                    } else if b == b'"' {
                        self.check_len(base + i as u64 + 1)?;
                        self.data.truncate(self.field_start);
                        self.quote_at = (self.line, base + i as u64 - self.line_start + 1);
                        self.state = State::Quoted;
                        i += 1;
                    } else if is_blank(b, delim) {
                        self.check_len(base + i as u64 + 1)?;
                        self.data.push(b);
                        self.state = State::Blanks;
                        i += 1;
                    } else {
                        self.state = State::Unquoted;
                    }
                }
                State::Unquoted => {
                    // A stretch of unquoted fields, copied to `data` in one piece (delimiters
                    // included), until a line break, a field that starts with a quote or a
                    // blank, or the end of the input.
                    let tab = &self.unquoted;
                    let start = i;
                    let d0 = self.data.len();
                    let mut brk = None;
                    loop {
                        while i < n && tab[input[i] as usize] == PLAIN {
                            i += 1;
                        }
                        if i == n {
                            break;
                        }
                        let b = input[i];
                        if b != delim {
                            brk = Some(b == b'\r');
                            break;
                        }
                        // As `end_field_at_delim`, spelt out beside the borrow of `tab`; the
                        // length is checked first, as at any byte, so that the error does not
                        // depend on where the input's chunks end.
                        self.check_len(base + i as u64 + 1)?;
                        self.fields.push((self.field_start, d0 + (i - start)));
                        if self.fields.len() >= self.limits.max_fields {
                            let limit = self.limits.max_fields;
                            return Err(self.error(RecordErrorKind::TooManyFields { limit }));
                        }
                        i += 1;
                        self.field_start = d0 + (i - start);
                        if i == n || input[i] == b'"' || is_blank(input[i], delim) {
                            self.state = State::FieldStart;
                            break;
                        }
                    }
                    self.check_len(base + i as u64)?;
                    self.data.extend_from_slice(&input[start..i]);
                    if let Some(cr) = brk {
                        self.end_record_at_break(self.data.len(), cr, base + i as u64);
                        return Ok(Step::Done(i + 1));
                    }
                }
                State::Quoted => {
                    let tab = &self.quoted;
                    let start = i;
                    while i < n && tab[input[i] as usize] == PLAIN {
                        i += 1;
                    }
                    if i > start {
                        self.pending_cr = false;
                    }
                    self.check_len(base + i as u64)?;
                    self.data.extend_from_slice(&input[start..i]);
                    if i == n {
                        break;
                    }
                    let b = input[i];
                    self.check_len(base + i as u64 + 1)?;
                    i += 1;
                    match b {
                        b'"' => {
                            self.pending_cr = false;
                            if i < n && input[i] == b'"' {
                                self.check_len(base + i as u64 + 1)?;
                                self.data.push(b'"');
                                i += 1;
                            } else if i < n {
                                // The closing quote: a delimiter or line break ends the field
                                // as after an unquoted one; other bytes are kept (lenient).
                                let c = input[i];
                                if c == delim {
                                    self.check_len(base + i as u64 + 1)?;
                                    self.end_field_at_delim(self.data.len())?;
                                    self.state = State::FieldStart;
                                    i += 1;
                                } else if c == b'\r' || c == b'\n' {
                                    self.state = State::Unquoted;
                                    self.end_record_at_break(self.data.len(), c == b'\r', base + i as u64);
                                    return Ok(Step::Done(i + 1));
                                } else {
                                    self.state = State::Unquoted;
                                }
                            } else {
                                self.state = State::QuoteInQuoted;
                            }
                        }
                        b'\r' => {
                            self.data.push(b);
                            self.line += 1;
                            self.line_start = base + i as u64;
                            self.pending_cr = true;
                        }
                        _ => {
                            // LF
                            self.data.push(b);
                            if !self.pending_cr {
                                self.line += 1;
                            }
                            self.line_start = base + i as u64;
                            self.pending_cr = false;
                        }
                    }
                }
                State::QuoteInQuoted => {
                    // A quote ended the previous input: the first of `""`, or the closing one.
                    if input[i] == b'"' {
                        self.check_len(base + i as u64 + 1)?;
                        self.data.push(b'"');
                        self.state = State::Quoted;
                        i += 1;
                    } else {
                        self.state = State::Unquoted;
                    }
                }
            }
        }
        Ok(Step::More)
    }

    /// The input has ended: the record under way, if any, ends here.
    fn finish(&mut self) -> Result<bool, RecordError> {
        if !self.in_record {
            self.pending_cr = false;
            return Ok(false);
        }
        if self.state == State::Quoted {
            return Err(self.error(RecordErrorKind::UnclosedQuote));
        }
        self.rec_blank = self.fields.is_empty() && matches!(self.state, State::FieldStart | State::Blanks);
        self.fields.push((self.field_start, self.data.len()));
        self.rec_end_line = self.line;
        self.in_record = false;
        Ok(true)
    }

    fn record(&self) -> Record<'_> {
        Record {
            data: &self.data,
            fields: &self.fields,
            line: self.rec_line,
            end_line: self.rec_end_line,
            offset: self.rec_offset,
            blank: self.rec_blank,
        }
    }
}

/// Reads records from a `BufRead`, one at a time, into one reused buffer.
pub struct RecordReader<R> {
    src: R,
    parser: Parser,
    failed: Option<RecordError>,
    done: bool,
}

impl<R: BufRead> RecordReader<R> {
    /// A reader of `src` with fields separated by `delimiter` (an ASCII byte other than `"`, CR
    /// and LF; `,`, `;`, tab, `|` in practice). `src` is read in the chunks its `fill_buf` gives:
    /// wrap a file in a `BufReader`; a byte slice is read as it is.
    pub fn new(src: R, delimiter: u8, limits: Limits) -> Self {
        assert!(
            !matches!(delimiter, b'"' | b'\r' | b'\n'),
            "the delimiter cannot be a quote or a line break"
        );
        assert!(limits.max_fields >= 1, "a record has at least one field");
        RecordReader { src, parser: Parser::new(delimiter, limits), failed: None, done: false }
    }

    /// The next record, `None` at the end of the input. After an error every call returns the
    /// same error.
    #[allow(clippy::should_implement_trait)]
    pub fn next(&mut self) -> Result<Option<Record<'_>>, RecordError> {
        if let Some(e) = &self.failed {
            return Err(e.clone());
        }
        if self.done {
            return Ok(None);
        }
        loop {
            let chunk = match self.src.fill_buf() {
                Ok(c) => c,
                Err(e) if e.kind() == io::ErrorKind::Interrupted => continue,
                Err(e) => {
                    let err =
                        self.parser.error(RecordErrorKind::Io { kind: e.kind(), message: e.to_string() });
                    self.failed = Some(err.clone());
                    return Err(err);
                }
            };
            if chunk.is_empty() {
                self.done = true;
                return match self.parser.finish() {
                    Ok(true) => Ok(Some(self.parser.record())),
                    Ok(false) => Ok(None),
                    Err(e) => {
                        self.failed = Some(e.clone());
                        Err(e)
                    }
                };
            }
            let n = chunk.len();
            match self.parser.feed(chunk) {
                Ok(Step::More) => self.src.consume(n),
                Ok(Step::Done(k)) => {
                    self.src.consume(k);
                    return Ok(Some(self.parser.record()));
                }
                Err(e) => {
                    self.failed = Some(e.clone());
                    return Err(e);
                }
            }
        }
    }

    /// Bytes read so far (for progress reports).
    pub fn bytes_read(&self) -> u64 {
        self.parser.offset
    }

    /// The 1-based line the next record starts on (or where reading stopped).
    pub fn line(&self) -> u64 {
        self.parser.line
    }

    /// The underlying reader.
    pub fn into_inner(self) -> R {
        self.src
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;
    use std::io::BufReader;

    /// One record as the tests compare it: first line, last line, blank, fields.
    type Rec = (u64, u64, bool, Vec<Vec<u8>>);

    /// A table to write: each record's fields (bytes, quoted even when not needed) and its line
    /// end (0 LF, 1 CRLF, 2 CR).
    type Table = Vec<(Vec<(Vec<u8>, bool)>, u8)>;

    fn collect<R: BufRead>(mut r: RecordReader<R>) -> (Vec<Rec>, Option<RecordError>, u64) {
        let mut out = Vec::new();
        loop {
            match r.next() {
                Ok(Some(rec)) => {
                    assert_eq!(rec.iter().count(), rec.len());
                    out.push((
                        rec.line(),
                        rec.end_line(),
                        rec.is_blank(),
                        rec.iter().map(<[u8]>::to_vec).collect(),
                    ))
                }
                Ok(None) => return (out, None, r.bytes_read()),
                Err(e) => {
                    assert_eq!(r.next().unwrap_err(), e, "an error is sticky");
                    return (out, Some(e), r.bytes_read());
                }
            }
        }
    }

    /// Reads `input` whole and one byte at a time (every chunk boundary), and checks that both
    /// give the same records and the same error.
    fn read_with(input: &[u8], delim: u8, limits: Limits) -> (Vec<Rec>, Option<RecordError>) {
        let (whole, e1, n1) = collect(RecordReader::new(input, delim, limits));
        let (bytewise, e2, n2) =
            collect(RecordReader::new(BufReader::with_capacity(1, input), delim, limits));
        assert_eq!(whole, bytewise, "chunking changes nothing");
        assert_eq!(e1, e2, "chunking changes nothing");
        if e1.is_none() {
            assert_eq!(n1, input.len() as u64, "every byte read");
            assert_eq!(n2, input.len() as u64, "every byte read");
        }
        (whole, e1)
    }

    fn read(input: &[u8]) -> Vec<Rec> {
        let (recs, err) = read_with(input, b',', Limits::DEFAULT);
        assert_eq!(err, None);
        recs
    }

    fn fields(recs: &[Rec]) -> Vec<Vec<&str>> {
        recs.iter().map(|r| r.3.iter().map(|f| std::str::from_utf8(f).unwrap()).collect()).collect()
    }

    fn lines(recs: &[Rec]) -> Vec<(u64, u64)> {
        recs.iter().map(|r| (r.0, r.1)).collect()
    }

    #[test]
    fn plain_records_with_their_lines() {
        let r = read(b"time,kW\n2026-05-04T08:00:00Z,56\n2026-05-04T08:00:01Z,57\n");
        assert_eq!(
            fields(&r),
            [vec!["time", "kW"], vec!["2026-05-04T08:00:00Z", "56"], vec!["2026-05-04T08:00:01Z", "57"]]
        );
        assert_eq!(lines(&r), [(1, 1), (2, 2), (3, 3)]);
        assert!(r.iter().all(|x| !x.2));
    }

    #[test]
    fn empty_input_and_a_last_line_without_a_break() {
        assert!(read(b"").is_empty());
        let r = read(b"a,b\nc,");
        assert_eq!(fields(&r), [vec!["a", "b"], vec!["c", ""]]);
        assert_eq!(lines(&r), [(1, 1), (2, 2)]);
    }

    #[test]
    fn a_quote_opens_only_at_the_start_of_a_field() {
        let r = read(b"\"a,b\",c\n");
        assert_eq!(fields(&r), [vec!["a,b", "c"]]);
        // An inch mark in the middle or at the end of an unquoted field is a literal byte.
        let r = read(b"t1,12\" main,5\nt2,pipe 3/4\",6\nt3,x,7\n");
        assert_eq!(
            fields(&r),
            [vec!["t1", "12\" main", "5"], vec!["t2", "pipe 3/4\"", "6"], vec!["t3", "x", "7"]]
        );
        assert_eq!(lines(&r), [(1, 1), (2, 2), (3, 3)]);
    }

    #[test]
    fn a_stray_inch_mark_in_the_last_column_loses_no_row() {
        // The silent loss of issue 15: every 100th row ends in `12" main`.
        let mut file = b"time,kW,note\n".to_vec();
        for i in 0..10_000 {
            let note = if i % 100 == 0 { "12\" main" } else { "" };
            file.extend_from_slice(format!("2026-05-04T08:00:{:02}Z,{},{note}\n", i % 60, i).as_bytes());
        }
        let r = read(&file);
        assert_eq!(r.len(), 10_001);
        assert_eq!(r[1].3[2], b"12\" main");
        assert_eq!(r[10_000].0, 10_001);
        assert!(r.iter().all(|x| x.3.len() == 3));
    }

    #[test]
    fn doubled_quotes_inside_a_quoted_field() {
        let r = read(b"\"say \"\"hi\"\"\",x\n\"\",\"\"\"\"\n\"\"\"\"\"\"\n");
        assert_eq!(fields(&r), [vec!["say \"hi\"", "x"], vec!["", "\""], vec!["\"\""]]);
    }

    #[test]
    fn text_after_a_closing_quote_is_kept() {
        let r = read(b"\"ab\"cd,e\n\"ab\" ,e\n\"a\"b\"c\",d\n");
        assert_eq!(fields(&r), [vec!["abcd", "e"], vec!["ab ", "e"], vec!["ab\"c\"", "d"]]);
    }

    #[test]
    fn blanks_before_an_opening_quote_are_dropped_other_blanks_kept() {
        let r = read(b"a, \"b,c\",\t\"d\", e ,  \n");
        assert_eq!(fields(&r), [vec!["a", "b,c", "d", " e ", "  "]]);
        // With a tab delimiter, a tab is a delimiter, not a blank.
        let (r, e) = read_with(b"a\t \"b\tc\"\n", b'\t', Limits::DEFAULT);
        assert_eq!(e, None);
        assert_eq!(fields(&r), [vec!["a", "b\tc"]]);
    }

    #[test]
    fn an_unclosed_quote_names_the_line_and_column_where_it_opened() {
        let (r, e) = read_with(b"a,b\nc,\"d\ne,f\ng\n", b',', Limits::DEFAULT);
        assert_eq!(fields(&r), [vec!["a", "b"]]);
        let e = e.unwrap();
        assert_eq!(e.kind, RecordErrorKind::UnclosedQuote);
        assert_eq!((e.line, e.column, e.field), (2, Some(3), 2));
        assert_eq!(e.to_string(), "the quote opened at line 2, column 3 (field 2) never closes");
        // A quote after a closing one is literal, not an opening one.
        let r = read(b"\"a\" \"x\n");
        assert_eq!(fields(&r), [vec!["a \"x"]]);
    }

    /// 100,000 short lines after an unclosed quote: one pass, an error naming line 1, memory
    /// bounded by the cap (the parser before this reader re-counted the quotes of the whole
    /// record at every line: quadratic).
    #[test]
    fn an_unclosed_quote_before_100000_lines_is_rejected_in_one_pass() {
        let mut file = b"time,\"note\n".to_vec();
        for _ in 0..100_000 {
            file.extend_from_slice(b"1,2,3,4,5\n");
        }
        assert!(file.len() < Limits::DEFAULT.max_record_bytes);
        let mut r = RecordReader::new(BufReader::with_capacity(4096, &file[..]), b',', Limits::DEFAULT);
        let e = r.next().unwrap_err();
        assert_eq!((e.kind.clone(), e.line, e.column), (RecordErrorKind::UnclosedQuote, 1, Some(6)));
        // Every byte was examined once: the reader only ever moves forward through the input.
        assert_eq!(r.bytes_read(), file.len() as u64);
        assert_eq!(r.line(), 100_002);
        // With a smaller cap the same file stops at the cap, and says where the quote opened.
        let limits = Limits { max_record_bytes: 64 << 10, ..Limits::DEFAULT };
        let mut r = RecordReader::new(BufReader::with_capacity(4096, &file[..]), b',', limits);
        let e = r.next().unwrap_err();
        assert_eq!(e.kind, RecordErrorKind::TooLong { limit: 64 << 10 });
        assert_eq!((e.line, e.open_quote), (1, Some((1, 6))));
        assert!(r.parser.data.capacity() <= 2 * (64 << 10), "memory bounded by the cap");
        assert!(r.bytes_read() <= (64 << 10) + 4096, "stopped at the cap, not at the end");
        assert_eq!(
            e.to_string(),
            "the record starting at line 1 is longer than 65536 bytes; the quote opened at line 1, \
             column 6 never closes before that"
        );
    }

    #[test]
    fn cr_only_crlf_and_mixed_line_ends() {
        let cr = read(b"a,b\rc,d\re\r");
        assert_eq!(fields(&cr), [vec!["a", "b"], vec!["c", "d"], vec!["e"]]);
        assert_eq!(lines(&cr), [(1, 1), (2, 2), (3, 3)]);
        let crlf = read(b"a,b\r\nc,d\r\ne\r\n");
        assert_eq!(fields(&crlf), fields(&cr));
        assert_eq!(lines(&crlf), lines(&cr));
        // LF, CRLF, CR, then LF CR (two breaks: a blank line between).
        let mixed = read(b"a\nb\r\nc\rd\n\re");
        assert_eq!(fields(&mixed), [vec!["a"], vec!["b"], vec!["c"], vec!["d"], vec![""], vec!["e"]]);
        assert_eq!(lines(&mixed), [(1, 1), (2, 2), (3, 3), (4, 4), (5, 5), (6, 6)]);
        assert_eq!(mixed.iter().map(|x| x.2).collect::<Vec<_>>(), [false, false, false, false, true, false]);
    }

    #[test]
    fn a_cr_only_file_is_read_one_record_at_a_time() {
        let mut file = Vec::new();
        for i in 0..50_000 {
            file.extend_from_slice(format!("2026-05-04T08:00:00Z,{i}\r").as_bytes());
        }
        let mut r = RecordReader::new(BufReader::with_capacity(8192, &file[..]), b',', Limits::DEFAULT);
        let mut n = 0u64;
        while let Some(rec) = r.next().unwrap() {
            n += 1;
            assert_eq!(rec.line(), n);
        }
        assert_eq!(n, 50_000);
        assert!(r.parser.data.capacity() < 1024, "one record held, not the file");
    }

    #[test]
    fn a_quoted_line_break_spans_lines_and_keeps_its_bytes() {
        let r = read(b"t,\"line1\nline2\",x\nnext\n\"a\r\nb\rc\",y\nz\n");
        assert_eq!(
            fields(&r),
            [vec!["t", "line1\nline2", "x"], vec!["next"], vec!["a\r\nb\rc", "y"], vec!["z"]]
        );
        assert_eq!(lines(&r), [(1, 2), (3, 3), (4, 6), (7, 7)]);
    }

    #[test]
    fn a_record_over_the_byte_cap_names_its_first_line() {
        let limits = Limits { max_record_bytes: 10, max_fields: 100 };
        // Exactly 10 bytes pass (the line break is not counted); 11 do not.
        let (r, e) = read_with(b"0123456789\r\n\"a\nb\",c\n0123456789A\n", b',', limits);
        assert_eq!(fields(&r), [vec!["0123456789"], vec!["a\nb", "c"]]);
        let e = e.unwrap();
        assert_eq!((e.kind, e.line, e.open_quote), (RecordErrorKind::TooLong { limit: 10 }, 4, None));
        // Quotes and quoted line breaks count as bytes of the file.
        let (_, e) = read_with(b"\"\"\"\"\"\"\"\"\"\"\"\"\n", b',', limits);
        assert_eq!(e.unwrap().line, 1);
        // Delimiters count too.
        let (_, e) = read_with(b",,,,,,,,,,,\n", b',', limits);
        assert_eq!(e.unwrap().kind, RecordErrorKind::TooLong { limit: 10 });
    }

    #[test]
    fn too_many_fields_names_the_line() {
        let limits = Limits { max_record_bytes: 1 << 20, max_fields: 3 };
        let (r, e) = read_with(b"a,b,c\n\"x\ny\",b,c,d\n", b',', limits);
        assert_eq!(fields(&r), [vec!["a", "b", "c"]]);
        let e = e.unwrap();
        assert_eq!((e.kind.clone(), e.line, e.field), (RecordErrorKind::TooManyFields { limit: 3 }, 2, 4));
        assert_eq!(e.to_string(), "the record starting at line 2 has more than 3 fields");
        // A wide header row with 4,096 fields passes the default; 4,097 do not.
        let wide = vec![&b"x"[..]; 4096].join(&b","[..]);
        assert_eq!(read(&wide)[0].3.len(), 4096);
        let wider = vec![&b"x"[..]; 4097].join(&b","[..]);
        let (_, e) = read_with(&wider, b',', Limits::DEFAULT);
        assert_eq!(e.unwrap().field, 4097);
    }

    #[test]
    fn blank_lines_are_reported_and_counted_apart() {
        let r = read(b"a,b\n\n  \n\t\n,\n\"\"\nc,d\n\n");
        assert_eq!(lines(&r), [(1, 1), (2, 2), (3, 3), (4, 4), (5, 5), (6, 6), (7, 7), (8, 8)]);
        assert_eq!(
            r.iter().map(|x| x.2).collect::<Vec<_>>(),
            [false, true, true, true, false, false, false, true]
        );
        assert_eq!(fields(&r)[2], ["  "]);
        // With a tab delimiter a line of tabs is a row of empty fields, not blank.
        let (r, _) = read_with(b"\t\n \n", b'\t', Limits::DEFAULT);
        assert_eq!((r[0].2, r[0].3.len(), r[1].2), (false, 2, true));
    }

    #[test]
    fn a_byte_order_mark_is_left_to_the_caller() {
        // Not stripped: it stays in the first field, and the quote after it is then literal.
        let r = read(b"\xef\xbb\xbf\"time\",kW\n");
        assert_eq!(r[0].3[0], b"\xef\xbb\xbf\"time\"");
        // Skipped on the `BufRead` first, the header reads as it should.
        let mut src: &[u8] = b"\xef\xbb\xbf\"time\",kW\n";
        if src.fill_buf().unwrap().starts_with(b"\xef\xbb\xbf") {
            src.consume(3);
        }
        let (r, _, _) = collect(RecordReader::new(src, b',', Limits::DEFAULT));
        assert_eq!(fields(&r), [vec!["time", "kW"]]);
        assert_eq!(r[0].0, 1);
    }

    #[test]
    fn record_accessors() {
        let mut r = RecordReader::new(&b"a,\"b\"\"\"\nc\n"[..], b',', Limits::DEFAULT);
        let rec = r.next().unwrap().unwrap();
        assert_eq!((rec.len(), rec.is_empty(), rec.offset()), (2, false, 0));
        assert_eq!((rec.field(0), rec.get(1), rec.get(2)), (&b"a"[..], Some(&b"b\""[..]), None));
        let rec = r.next().unwrap().unwrap();
        assert_eq!((rec.offset(), rec.line(), rec.field(0)), (8, 2, &b"c"[..]));
        assert!(r.next().unwrap().is_none());
        assert!(r.next().unwrap().is_none());
    }

    /// A reader that fails after `ok` bytes.
    struct Failing<'a> {
        data: &'a [u8],
        ok: usize,
    }

    impl io::Read for Failing<'_> {
        fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
            if self.ok == 0 {
                return Err(io::Error::other("disk gone"));
            }
            let n = buf.len().min(self.ok).min(self.data.len());
            buf[..n].copy_from_slice(&self.data[..n]);
            self.data = &self.data[n..];
            self.ok -= n;
            Ok(n)
        }
    }

    #[test]
    fn a_read_error_names_the_line_and_sticks() {
        let src = BufReader::with_capacity(4, Failing { data: b"a,b\nc,d\ne,f\n", ok: 6 });
        let mut r = RecordReader::new(src, b',', Limits::DEFAULT);
        assert_eq!(r.next().unwrap().unwrap().field(1), b"b");
        let e = r.next().unwrap_err();
        assert_eq!(
            (e.line, e.kind.clone()),
            (2, RecordErrorKind::Io { kind: io::ErrorKind::Other, message: "disk gone".into() })
        );
        assert_eq!(e.to_string(), "cannot read the file at line 2: disk gone");
        assert_eq!(r.next().unwrap_err(), e);
    }

    // ---- properties ----

    /// A field's bytes, biased towards the bytes that matter.
    fn field_bytes() -> impl Strategy<Value = Vec<u8>> {
        let b = prop_oneof![
            Just(b'"'),
            Just(b','),
            Just(b';'),
            Just(b'\r'),
            Just(b'\n'),
            Just(b' '),
            Just(b'\t'),
            Just(b'a'),
            Just(b'7'),
            any::<u8>(),
        ];
        proptest::collection::vec(b, 0..8)
    }

    /// Line breaks in a quoted field's bytes: CRLF counts once.
    fn breaks(f: &[u8]) -> u64 {
        let mut n = 0;
        for (i, &b) in f.iter().enumerate() {
            if b == b'\r' || (b == b'\n' && (i == 0 || f[i - 1] != b'\r')) {
                n += 1;
            }
        }
        n
    }

    /// Writes a table with RFC 4180 quoting (a field is quoted when it must be, or when `force`
    /// says so) and the given line ends; returns the file and the expected records.
    fn write_table(table: &Table, delim: u8, last_break: bool) -> (Vec<u8>, Vec<Rec>) {
        let mut file = Vec::new();
        let mut expected = Vec::new();
        let mut line = 1u64;
        let mut prev_cr = false;
        for (k, (fields, end)) in table.iter().enumerate() {
            let start = line;
            let mut blank = fields.len() == 1;
            for (j, (f, force)) in fields.iter().enumerate() {
                if j > 0 {
                    file.push(delim);
                }
                let first = f.iter().find(|&&b| b != b' ' && b != b'\t' || b == delim);
                let must = f.iter().any(|&b| b == delim || b == b'\r' || b == b'\n') || first == Some(&b'"');
                if must || *force {
                    blank = false;
                    file.push(b'"');
                    for &b in f {
                        if b == b'"' {
                            file.push(b'"');
                        }
                        file.push(b);
                    }
                    file.push(b'"');
                    line += breaks(f);
                } else {
                    blank &= f.iter().all(|&b| b == b' ' || b == b'\t');
                    file.extend_from_slice(f);
                }
            }
            let empty_line = blank && fields[0].0.is_empty();
            let mut end = *end;
            // A CR ending the previous line and a LF ending an empty one would be one CRLF.
            if prev_cr && empty_line && end == 0 {
                end = 1;
            }
            let last = k + 1 == table.len();
            if !last || last_break || empty_line {
                file.extend_from_slice([&b"\n"[..], b"\r\n", b"\r"][end as usize]);
                prev_cr = end == 2;
            }
            expected.push((start, line, blank, fields.iter().map(|f| f.0.clone()).collect()));
            line += 1;
        }
        (file, expected)
    }

    fn table() -> impl Strategy<Value = Table> {
        let record = (proptest::collection::vec((field_bytes(), any::<bool>()), 1..6), 0u8..3);
        // Some records are blank lines.
        let blank = (Just(vec![(Vec::new(), false)]), 0u8..3);
        proptest::collection::vec(prop_oneof![4 => record, 1 => blank], 0..24)
    }

    /// Records from `csv-core` (the parser the `csv` crate is built on), as an independent check.
    fn csv_core_records(input: &[u8], delim: u8) -> Vec<Vec<Vec<u8>>> {
        use csv_core::{ReadRecordResult, ReaderBuilder};
        let mut rdr = ReaderBuilder::new().delimiter(delim).build();
        let (mut out, mut ends) = (vec![0u8; input.len() + 1], vec![0usize; input.len() + 2]);
        let mut input = input;
        let mut recs = Vec::new();
        // `read_record` writes each call's output and field ends after the previous call's.
        let (mut nout, mut nend) = (0, 0);
        loop {
            let (res, nin, o, e) = rdr.read_record(input, &mut out[nout..], &mut ends[nend..]);
            input = &input[nin..];
            (nout, nend) = (nout + o, nend + e);
            match res {
                ReadRecordResult::Record => {
                    let mut start = 0;
                    let n = std::mem::take(&mut nend);
                    nout = 0;
                    recs.push(
                        ends[..n]
                            .iter()
                            .map(|&e| {
                                let f = out[start..e].to_vec();
                                start = e;
                                f
                            })
                            .collect(),
                    );
                }
                ReadRecordResult::End => return recs,
                ReadRecordResult::InputEmpty => {}
                r => panic!("buffers are large enough: {r:?}"),
            }
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 2000, ..ProptestConfig::default() })]

        /// Written with RFC 4180 quoting and read back: the same fields, blank lines where they
        /// were written and the same line numbers, whatever the delimiter and line ends.
        #[test]
        fn written_tables_read_back_the_same(
            t in table(),
            delim in prop_oneof![Just(b','), Just(b';'), Just(b'\t')],
            last_break in any::<bool>(),
        ) {
            let (file, expected) = write_table(&t, delim, last_break);
            let (got, err) = read_with(&file, delim, Limits::DEFAULT);
            prop_assert_eq!(err, None);
            prop_assert_eq!(got, expected);
        }

        /// On any mix of data, delimiters, quotes and line ends, the same fields as `csv-core`,
        /// except where this reader is meant to differ: it reports empty lines (`csv-core` skips
        /// them) and stops at an unclosed quote (`csv-core` takes the rest as a field).
        #[test]
        fn the_same_fields_as_csv_core(
            bytes in proptest::collection::vec(
                prop_oneof![Just(b'a'), Just(b'7'), Just(b','), Just(b'"'), Just(b'\r'), Just(b'\n'), Just(0xffu8)],
                0..120,
            )
        ) {
            let (ours, err) = read_with(&bytes, b',', Limits::DEFAULT);
            let ours: Vec<Vec<Vec<u8>>> =
                ours.into_iter().filter(|r| !(r.2 && r.3[0].is_empty())).map(|r| r.3).collect();
            let theirs = csv_core_records(&bytes, b',');
            match err {
                None => prop_assert_eq!(ours, theirs),
                Some(e) => {
                    prop_assert_eq!(e.kind, RecordErrorKind::UnclosedQuote);
                    prop_assert_eq!(ours.len() + 1, theirs.len());
                    prop_assert_eq!(&ours[..], &theirs[..ours.len()]);
                }
            }
        }

        /// Any bytes, any small limits, any chunking: no panic, the same answer, caps kept.
        #[test]
        fn any_input_any_limits(
            bytes in proptest::collection::vec(any::<u8>(), 0..300),
            max_record_bytes in 0usize..40,
            max_fields in 1usize..6,
        ) {
            let limits = Limits { max_record_bytes, max_fields };
            let (recs, _) = read_with(&bytes, b',', limits);
            for r in &recs {
                prop_assert!(r.3.len() <= max_fields);
                prop_assert!(r.3.iter().map(Vec::len).sum::<usize>() <= max_record_bytes);
                prop_assert!(r.0 <= r.1);
            }
            for w in recs.windows(2) {
                prop_assert!(w[0].1 < w[1].0, "lines go forward");
            }
        }
    }
    // ---- benchmark ----

    /// What a reader saw: records, fields, bytes of field data. The readers compared must agree.
    type Tally = (u64, u64, u64);

    fn ours(data: &[u8], delim: u8) -> Tally {
        let mut r = RecordReader::new(BufReader::with_capacity(64 << 10, data), delim, Limits::DEFAULT);
        let mut t = (0, 0, 0);
        while let Some(rec) = r.next().expect("valid file") {
            t.0 += 1;
            t.1 += rec.len() as u64;
            t.2 += rec.iter().map(|f| f.len() as u64).sum::<u64>();
        }
        t
    }

    /// `csv-core`'s bare parse into reused buffers of the same caps: no line numbers, no blank
    /// lines, no unclosed-quote check (what a `csv-core`-based reader would start from).
    ///
    /// With `lines`, it also counts physical lines (LF, CRLF, CR) over the bytes it consumed: the
    /// least a `csv-core`-based reader must add to give a record's line in a CR-only file (still
    /// without blank lines or an unclosed-quote error).
    fn csv_core(data: &[u8], delim: u8, lines: bool) -> Tally {
        use csv_core::{ReadRecordResult, ReaderBuilder};
        let mut rdr = ReaderBuilder::new().delimiter(delim).build();
        let mut src = BufReader::with_capacity(64 << 10, data);
        let (mut out, mut ends) = (vec![0u8; Limits::DEFAULT.max_record_bytes], vec![0usize; 4096]);
        let (mut nout, mut nend) = (0, 0);
        let (mut line, mut prev_cr) = (1u64, false);
        let mut t = (0, 0, 0);
        loop {
            let input = src.fill_buf().unwrap();
            let (res, nin, o, e) = rdr.read_record(input, &mut out[nout..], &mut ends[nend..]);
            if lines {
                // CRs, plus LFs that do not follow a CR (counted so that the loops vectorise).
                let used = &input[..nin];
                let cr = used.iter().filter(|&&b| b == b'\r').count();
                let lf = used.iter().filter(|&&b| b == b'\n').count();
                let crlf = used.windows(2).filter(|w| w[0] == b'\r' && w[1] == b'\n').count()
                    + usize::from(prev_cr && used.first() == Some(&b'\n'));
                line += (cr + lf - crlf) as u64;
                prev_cr = used.last().map_or(prev_cr, |&b| b == b'\r');
            }
            src.consume(nin);
            (nout, nend) = (nout + o, nend + e);
            match res {
                ReadRecordResult::Record => {
                    std::hint::black_box(line);
                    t.0 += 1;
                    t.1 += nend as u64;
                    t.2 += ends[nend - 1] as u64;
                    (nout, nend) = (0, 0);
                }
                ReadRecordResult::InputEmpty => {}
                ReadRecordResult::End => return t,
                r => panic!("over the caps: {r:?}"),
            }
        }
    }

    /// Today's `parse.rs` record finding and splitting (`Lines::next_record` and `split` at
    /// commit cd9a181, errors reduced to panics), as the baseline.
    fn before(data: &[u8], delim: u8) -> Tally {
        fn read_physical<R: BufRead>(r: &mut R, buf: &mut Vec<u8>) -> bool {
            let start = buf.len();
            if r.read_until(b'\n', buf).unwrap() == 0 {
                return false;
            }
            if buf.last() == Some(&b'\n') {
                buf.pop();
            }
            if buf.len() > start && buf.last() == Some(&b'\r') {
                buf.pop();
            }
            true
        }
        fn split(line: &[u8], delim: u8, out: &mut Vec<(u32, u32)>, scratch: &mut Vec<u8>) -> bool {
            out.clear();
            if !line.contains(&b'"') {
                let mut start = 0usize;
                for (i, &b) in line.iter().enumerate() {
                    if b == delim {
                        out.push((start as u32, i as u32));
                        start = i + 1;
                    }
                }
                out.push((start as u32, line.len() as u32));
                return false;
            }
            scratch.clear();
            let mut i = 0usize;
            loop {
                let fstart = scratch.len();
                let mut j = i;
                while j < line.len() && (line[j] == b' ' || line[j] == b'\t') && line[j] != delim {
                    j += 1;
                }
                if j < line.len() && line[j] == b'"' {
                    i = j + 1;
                    while i < line.len() {
                        if line[i] == b'"' {
                            if line.get(i + 1) == Some(&b'"') {
                                scratch.push(b'"');
                                i += 2;
                            } else {
                                i += 1;
                                break;
                            }
                        } else {
                            scratch.push(line[i]);
                            i += 1;
                        }
                    }
                    while i < line.len() && line[i] != delim {
                        scratch.push(line[i]);
                        i += 1;
                    }
                } else {
                    while i < line.len() && line[i] != delim {
                        scratch.push(line[i]);
                        i += 1;
                    }
                }
                out.push((fstart as u32, scratch.len() as u32));
                if i >= line.len() {
                    break;
                }
                i += 1;
            }
            true
        }
        let mut r = BufReader::with_capacity(64 << 10, data);
        let (mut buf, mut ranges, mut scratch) = (Vec::with_capacity(512), Vec::new(), Vec::new());
        let mut t = (0, 0, 0);
        loop {
            buf.clear();
            if !read_physical(&mut r, &mut buf) {
                return t;
            }
            if buf.contains(&b'"') {
                while buf.iter().filter(|&&b| b == b'"').count() % 2 == 1 {
                    buf.push(b'\n');
                    assert!(read_physical(&mut r, &mut buf), "a quoted field never closes");
                }
            }
            split(&buf, delim, &mut ranges, &mut scratch);
            t.0 += 1;
            t.1 += ranges.len() as u64;
            t.2 += ranges.iter().map(|&(a, b)| (b - a) as u64).sum::<u64>();
        }
    }

    /// A logger file of about `mb` MB: `2026-05-04T08:00:00Z,56,7.21,9.50` rows at 1 s; with
    /// `quoted`, every field quoted, `;` between them, decimal commas, CRLF and a note with an
    /// inch mark written as `""`.
    fn logger_file(mb: usize, quoted: bool) -> Vec<u8> {
        use std::io::Write;
        let mut f = Vec::with_capacity(mb * 1_000_000 + 100);
        let mut i = 0u64;
        while f.len() < mb * 1_000_000 {
            let (h, m, s) = (8 + i / 3600 % 16, i / 60 % 60, i % 60);
            let (kw, bar, flow) =
                (40 + i * 7 % 30, 7.0 + (i % 50) as f64 / 100.0, 9.0 + (i % 97) as f64 / 100.0);
            if quoted {
                let note = if i % 10 == 0 { "12\"\" main" } else { "" };
                write!(
                    f,
                    "\"2026-05-04 {h:02}:{m:02}:{s:02}\";\"{kw}\";\"{bar:.2}\";\"{flow:.2}\";\"{note}\"\r\n"
                )
                .unwrap();
                let n = f.len();
                // Decimal commas.
                for b in &mut f[n - 30..n] {
                    if *b == b'.' {
                        *b = b',';
                    }
                }
            } else {
                writeln!(f, "2026-05-04T{h:02}:{m:02}:{s:02}Z,{kw},{bar:.2},{flow:.2}").unwrap();
            }
            i += 1;
        }
        f
    }

    fn best_of_5(data: &[u8], f: impl Fn(&[u8]) -> Tally) -> (f64, Tally) {
        let mut best = f64::INFINITY;
        let mut tally = (0, 0, 0);
        for _ in 0..5 {
            let t0 = std::time::Instant::now();
            tally = std::hint::black_box(f(std::hint::black_box(data)));
            best = best.min(t0.elapsed().as_secs_f64());
        }
        (data.len() as f64 / 1e6 / best, tally)
    }

    /// Throughput on a 50 MB logger file, plain and quoted: this reader, `csv-core`'s bare
    /// parse (alone and with a line count) and the splitting of `parse.rs` before this reader. Prints MB/s (best of 5);
    /// asserts only that the three agree on what they read. Run with
    /// `cargo test --release --lib record::tests::bench_50_mb -- --ignored --nocapture`.
    #[test]
    #[ignore]
    fn bench_50_mb() {
        for (quoted, delim) in [(false, b','), (true, b';')] {
            let data = logger_file(50, quoted);
            let (a, ta) = best_of_5(&data, |d| ours(d, delim));
            let (b, tb) = best_of_5(&data, |d| csv_core(d, delim, false));
            let (bl, tbl) = best_of_5(&data, |d| csv_core(d, delim, true));
            let (c, tc) = best_of_5(&data, |d| before(d, delim));
            assert_eq!(ta, tb, "csv-core reads the same");
            assert_eq!(ta, tbl, "csv-core reads the same");
            assert_eq!(ta, tc, "the old splitting reads the same");
            println!(
                "{} file, {:.1} MB, {} records: record reader {a:.0} MB/s, csv-core bare {b:.0} MB/s, \
                 csv-core + line count {bl:.0} MB/s, parse.rs before {c:.0} MB/s",
                if quoted { "quoted" } else { "plain" },
                data.len() as f64 / 1e6,
                ta.0
            );
        }
    }
}
