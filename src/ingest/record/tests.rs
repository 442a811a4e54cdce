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
    let (bytewise, e2, n2) = collect(RecordReader::new(BufReader::with_capacity(1, input), delim, limits));
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
    assert_eq!(fields(&r), [vec!["t", "line1\nline2", "x"], vec!["next"], vec!["a\r\nb\rc", "y"], vec!["z"]]);
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

mod props;
