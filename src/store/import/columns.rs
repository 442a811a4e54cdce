/*!
A reversible column transform of delimited text, applied to each piece of a kept original before it
is deflated (`original`).

Deflate looks back 32 KiB and codes what it finds row by row; a logger file's rows repeat column
by column instead: a timestamp differs from the one above it in its last characters, a reading
from the one above it in its last digits. So a piece is cut into lines at every `\n` byte and each
line into fields at every delimiter byte (quotes mean nothing here: the cut is on bytes, so any
input comes back byte for byte, quoted fields, `\r\n` line ends, a piece that starts or ends in
the middle of a line and bytes that are not text included), and the fields of each column go to a
stream of their own, each written as the length of the prefix it shares with the field above it in
the same column and the rest of its bytes (front coding). On the bench's logger file this makes the
original 1.49 bytes a reading at deflate level 1 instead of 2.90, 1.18 at level 2 (2026-12-04,
`benches/README.md`), and deflate has about half the bytes to code.

Layout (varints as in `store::varint`):
- the delimiter byte, the number of lines `L` (one more than the `\n` bytes of the piece), the
  number of column streams `C` (at most [`MAX_COLUMNS`]; the fields of a line past the last
  column stay joined in the last one);
- the fields per line: its byte length, then `L` varints;
- each column stream: its byte length, then one entry per line that has that column: the shared
  prefix length (one byte, at most 255), the remaining bytes and a `\n` (which no field holds).
*/

use crate::store::varint;

/// Column streams at most; the fields of a line past them stay joined (with their delimiters) in
/// the last stream.
pub(super) const MAX_COLUMNS: usize = 64;

/// Cut `piece` into column streams (see the module's notes). One pass over the bytes; fields are
/// compared with the field above eight bytes at a time.
pub(super) fn split(piece: &[u8], delim: u8) -> Vec<u8> {
    let n = piece.len();
    let mut counts = Vec::with_capacity(n / 16 + 8);
    let mut streams: Vec<Vec<u8>> = vec![];
    // Where each column's field above sits in `piece`.
    let mut prev: Vec<(usize, usize)> = vec![];
    let mut lines = 0u64;
    let mut pos = 0usize;
    while pos <= n {
        lines += 1;
        let mut c = 0usize;
        loop {
            let start = pos;
            let mut end = start;
            if c + 1 == MAX_COLUMNS {
                while end < n && piece[end] != b'\n' {
                    end += 1;
                }
            } else {
                while end < n && piece[end] != b'\n' && piece[end] != delim {
                    end += 1;
                }
            }
            if c == streams.len() {
                streams.push(Vec::with_capacity(n / 8));
                prev.push((0, 0));
            }
            let field = &piece[start..end];
            let (p_start, p_len) = prev[c];
            let shared = shared_prefix(field, &piece[p_start..p_start + p_len]);
            let s = &mut streams[c];
            s.push(shared as u8);
            s.extend_from_slice(&field[shared..]);
            s.push(b'\n');
            prev[c] = (start, end - start);
            c += 1;
            // Past the delimiter or the line break (past the end when the piece ends here).
            pos = end + 1;
            if end == n || piece[end] == b'\n' {
                break;
            }
        }
        varint::put(&mut counts, c as u64);
    }
    let mut out = Vec::with_capacity(counts.len() + streams.iter().map(Vec::len).sum::<usize>() + 32);
    out.push(delim);
    varint::put(&mut out, lines);
    varint::put(&mut out, streams.len() as u64);
    varint::put(&mut out, counts.len() as u64);
    out.extend_from_slice(&counts);
    for s in &streams {
        varint::put(&mut out, s.len() as u64);
        out.extend_from_slice(s);
    }
    out
}

/// How many leading bytes `a` and `b` share, at most 255.
fn shared_prefix(a: &[u8], b: &[u8]) -> usize {
    let m = a.len().min(b.len()).min(255);
    let mut i = 0;
    while i + 8 <= m {
        let x = u64::from_le_bytes(a[i..i + 8].try_into().expect("8 bytes"))
            ^ u64::from_le_bytes(b[i..i + 8].try_into().expect("8 bytes"));
        if x != 0 {
            return i + (x.trailing_zeros() / 8) as usize;
        }
        i += 8;
    }
    while i < m && a[i] == b[i] {
        i += 1;
    }
    i
}

/// Put a piece cut by [`split`] back together; `limit` bounds its length (the piece's recorded
/// length). Damage is an error, never a panic.
pub(super) fn join(packed: &[u8], limit: usize) -> Result<Vec<u8>, String> {
    let bad = |what: &str| format!("column streams: {what}");
    let mut pos = 0usize;
    let &delim = packed.first().ok_or_else(|| bad("empty"))?;
    pos += 1;
    let get = |pos: &mut usize| varint::get(packed, pos).map_err(|_| bad("a length does not read"));
    let lines = get(&mut pos)?;
    let columns = get(&mut pos)? as usize;
    if columns > MAX_COLUMNS || lines > limit as u64 + 1 {
        return Err(bad("more lines or columns than a piece can hold"));
    }
    let take = |pos: &mut usize| -> Result<&[u8], String> {
        let len = varint::get(packed, pos).map_err(|_| bad("a length does not read"))? as usize;
        let end = pos.checked_add(len).filter(|&e| e <= packed.len()).ok_or_else(|| bad("cut short"))?;
        let s = &packed[*pos..end];
        *pos = end;
        Ok(s)
    };
    let counts = take(&mut pos)?;
    let mut streams = Vec::with_capacity(columns);
    for _ in 0..columns {
        streams.push((take(&mut pos)?, 0usize));
    }
    // Where each column's field above sits in `out`.
    let mut prev: Vec<(usize, usize)> = vec![(0, 0); columns];
    let mut out: Vec<u8> = Vec::with_capacity(limit);
    let mut cpos = 0usize;
    for line in 0..lines {
        if line > 0 {
            out.push(b'\n');
        }
        let n = varint::get(counts, &mut cpos).map_err(|_| bad("a field count does not read"))? as usize;
        if n == 0 || n > columns {
            return Err(bad("a line with no fields or more than the columns"));
        }
        for (c, (stream, at)) in streams.iter_mut().enumerate().take(n) {
            if c > 0 {
                out.push(delim);
            }
            let &shared = stream.get(*at).ok_or_else(|| bad("a column ends early"))?;
            let rest = &stream[*at + 1..];
            let len = rest.iter().position(|&b| b == b'\n').ok_or_else(|| bad("an entry is not closed"))?;
            let (p_start, p_len) = prev[c];
            if usize::from(shared) > p_len {
                return Err(bad("a prefix longer than the field above"));
            }
            let start = out.len();
            out.extend_from_within(p_start..p_start + usize::from(shared));
            out.extend_from_slice(&rest[..len]);
            prev[c] = (start, out.len() - start);
            *at += len + 2;
            if out.len() > limit {
                return Err(bad("longer than the piece"));
            }
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn round_trip(piece: &[u8], delim: u8) -> Vec<u8> {
        let packed = split(piece, delim);
        join(&packed, piece.len()).expect("joins")
    }

    #[test]
    fn logger_rows_come_back_and_shrink() {
        let mut text = Vec::new();
        for i in 0..2000u32 {
            text.extend_from_slice(
                format!(
                    "2026-01-05T00:{:02}:{:02}Z,{}.{},7.{}\r\n",
                    i / 60 % 60,
                    i % 60,
                    40 + i % 17,
                    i % 10,
                    i % 7
                )
                .as_bytes(),
            );
        }
        assert_eq!(round_trip(&text, b','), text);
        // The timestamp column shares all but its last characters with the row above.
        assert!(split(&text, b',').len() < text.len() * 2 / 3);
    }

    #[test]
    fn edge_pieces_come_back() {
        let many: Vec<u8> = (0..200).map(|i| format!("{i};")).collect::<String>().into_bytes();
        for piece in [
            &b""[..],
            b"\n",
            b"\n\n\n",
            b"a",
            b"no newline at the end",
            b",,,\n,,\n,\n",
            b"\"quoted, with a comma\",\"and a\nline break\",3\n",
            b"mid-line start,1\nfull,2\nmid-line e",
            &[0u8, 255, 10, 13, 44, 10, 10, 255, 254],
            &many,
        ] {
            for delim in [b',', b';', b'\t'] {
                assert_eq!(round_trip(piece, delim), piece, "{:?}", String::from_utf8_lossy(piece));
            }
        }
        // A field longer than 255 bytes repeated: the shared prefix is capped, the rest kept.
        let long = format!("{0}\n{0}x\n{0}", "z".repeat(600)).into_bytes();
        assert_eq!(round_trip(&long, b','), long);
    }

    #[test]
    fn damage_is_an_error() {
        let packed = split(b"2026-01-05,1.5\n2026-01-05,1.6\n", b',');
        for cut in 0..packed.len() {
            assert!(join(&packed[..cut], 100).is_err(), "cut at {cut}");
        }
        assert!(join(&packed, 5).is_err(), "longer than its recorded length");
    }

    /// The cut as the module's notes say it, written plainly: the fast one must give the same bytes.
    fn split_plainly(piece: &[u8], delim: u8) -> Vec<u8> {
        let mut counts = vec![];
        let mut streams: Vec<Vec<u8>> = vec![];
        let mut prev: Vec<&[u8]> = vec![];
        let mut lines = 0u64;
        for line in piece.split(|&b| b == b'\n') {
            lines += 1;
            let mut n = 0;
            for (c, field) in line.splitn(MAX_COLUMNS, |&b| b == delim).enumerate() {
                if c == streams.len() {
                    streams.push(vec![]);
                    prev.push(&[]);
                }
                let shared = field.iter().zip(prev[c]).take(255).take_while(|(a, b)| a == b).count();
                streams[c].push(shared as u8);
                streams[c].extend_from_slice(&field[shared..]);
                streams[c].push(b'\n');
                prev[c] = field;
                n += 1;
            }
            varint::put(&mut counts, n as u64);
        }
        let mut out = vec![delim];
        varint::put(&mut out, lines);
        varint::put(&mut out, streams.len() as u64);
        varint::put(&mut out, counts.len() as u64);
        out.extend_from_slice(&counts);
        for s in &streams {
            varint::put(&mut out, s.len() as u64);
            out.extend_from_slice(s);
        }
        out
    }

    #[test]
    fn wide_lines_keep_their_last_delimiters_in_the_last_column() {
        let line: Vec<u8> = (0..150).map(|i| format!("{i},")).collect::<String>().into_bytes();
        let piece = [&line[..], b"\n", &line[..]].concat();
        assert_eq!(split(&piece, b','), split_plainly(&piece, b','));
        assert_eq!(round_trip(&piece, b','), piece);
    }

    proptest! {
        /// The fast cut gives the same bytes as the plain one.
        #[test]
        fn the_fast_cut_is_the_plain_one(piece in proptest::collection::vec(prop_oneof![
            Just(b'\n'), Just(b','), Just(b'1'), Just(b'2'), any::<u8>()
        ], 0..600)) {
            prop_assert_eq!(split(&piece, b','), split_plainly(&piece, b','));
        }


        /// Any bytes come back byte for byte (lines and fields cut on bytes, quotes meaning nothing).
        #[test]
        fn any_bytes_come_back(piece in proptest::collection::vec(prop_oneof![
            Just(b'\n'), Just(b','), Just(b'"'), Just(b'\r'), Just(b'1'), Just(b'2'), any::<u8>()
        ], 0..400)) {
            prop_assert_eq!(round_trip(&piece, b','), piece);
        }
    }
}
