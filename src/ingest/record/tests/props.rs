//! Properties of the record reader, and its timing run.

use super::*;

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
        let (kw, bar, flow) = (40 + i * 7 % 30, 7.0 + (i % 50) as f64 / 100.0, 9.0 + (i % 97) as f64 / 100.0);
        if quoted {
            let note = if i.is_multiple_of(10) { "12\"\" main" } else { "" };
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
