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
mod tests;
