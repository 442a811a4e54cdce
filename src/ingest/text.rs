/*!
Text encodings of logger files: UTF-8 (with or without a byte-order mark) and Windows-1252;
UTF-16 (little- or big-endian, with a byte-order mark) transcoded to UTF-8 on the way in; and the
files that are not text at all, named by their magic bytes and refused.

Loggers and the spreadsheets that touch their files write either UTF-8 or a Western Windows code
page; a Latin-1 degree sign (`0xB0`) in a header (`Temp °C`) is the usual giveaway. Detection: bytes
that are valid UTF-8 are UTF-8, anything else is Windows-1252. Windows-1252 is a superset of the
printable part of ISO 8859-1 (Latin-1), so `latin-1` is accepted as an alias; the C1 control range
0x80-0x9F is mapped by Windows-1252's table (typographic quotes, the euro sign...).

Each line is decoded on its own, so one odd line does not change how the rest of the file reads.
Numbers and timestamps are ASCII in both encodings, so the parser works on bytes and decodes only
headers and the values it quotes in error messages.
*/

use std::borrow::Cow;
use std::cell::Cell;
use std::io::{self, BufRead, Read};
use std::rc::Rc;

/// The encodings a logger file may be in.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Encoding {
    Utf8,
    Windows1252,
}

impl Encoding {
    /// Parse a mapping's `encoding` value (case-insensitive): `utf-8`/`utf8`, `windows-1252`/
    /// `cp1252`, `latin-1`/`iso-8859-1` (read as Windows-1252).
    pub fn parse(name: &str) -> Option<Self> {
        let n: String = name.trim().to_ascii_lowercase().chars().filter(|c| *c != '-' && *c != '_').collect();
        match n.as_str() {
            "utf8" => Some(Self::Utf8),
            "windows1252" | "cp1252" | "latin1" | "iso88591" | "l1" => Some(Self::Windows1252),
            _ => None,
        }
    }

    /// The name used in the API (`utf-8` or `windows-1252`).
    pub fn name(self) -> &'static str {
        match self {
            Self::Utf8 => "utf-8",
            Self::Windows1252 => "windows-1252",
        }
    }
}

/// The UTF-8 byte-order mark.
pub const BOM: &[u8] = b"\xEF\xBB\xBF";

/// The bytes without a leading UTF-8 byte-order mark.
pub fn strip_bom(bytes: &[u8]) -> &[u8] {
    bytes.strip_prefix(BOM).unwrap_or(bytes)
}

/// Detect the encoding of the head of a file: valid UTF-8 (an incomplete character cut off at the
/// very end of the head is allowed) is UTF-8, anything else Windows-1252.
pub fn detect(head: &[u8]) -> Encoding {
    let head = strip_bom(head);
    match std::str::from_utf8(head) {
        Ok(_) => Encoding::Utf8,
        // error_len() == None: the input ended in the middle of a character (the head was cut).
        Err(e) if e.error_len().is_none() => Encoding::Utf8,
        Err(_) => Encoding::Windows1252,
    }
}

/// Windows-1252 code points for bytes 0x80..=0x9F (by hand from the code page's published table;
/// the five unassigned bytes 0x81, 0x8D, 0x8F, 0x90, 0x9D map to the C1 controls like Latin-1).
const CP1252_80_9F: [char; 32] = [
    '\u{20AC}', '\u{0081}', '\u{201A}', '\u{0192}', '\u{201E}', '\u{2026}', '\u{2020}', '\u{2021}',
    '\u{02C6}', '\u{2030}', '\u{0160}', '\u{2039}', '\u{0152}', '\u{008D}', '\u{017D}', '\u{008F}',
    '\u{0090}', '\u{2018}', '\u{2019}', '\u{201C}', '\u{201D}', '\u{2022}', '\u{2013}', '\u{2014}',
    '\u{02DC}', '\u{2122}', '\u{0161}', '\u{203A}', '\u{0153}', '\u{009D}', '\u{017E}', '\u{0178}',
];

/// One Windows-1252 byte as a char.
pub fn cp1252_char(b: u8) -> char {
    match b {
        0x80..=0x9F => CP1252_80_9F[(b - 0x80) as usize],
        _ => b as char, // ASCII and 0xA0..=0xFF coincide with U+0000..U+00FF
    }
}

/// Decode Windows-1252 bytes (ASCII borrows).
pub fn decode_cp1252(bytes: &[u8]) -> Cow<'_, str> {
    if bytes.is_ascii() {
        // ASCII is valid UTF-8: no copy.
        return Cow::Borrowed(std::str::from_utf8(bytes).unwrap_or_default());
    }
    Cow::Owned(bytes.iter().map(|&b| cp1252_char(b)).collect())
}

/// Decode one line. `Some(Utf8)` falls back to Windows-1252 for a line that is not valid UTF-8
/// (never fails: a stray byte in a comment must not stop an upload); `None` detects per line.
pub fn decode_line(bytes: &[u8], encoding: Option<Encoding>) -> Cow<'_, str> {
    match encoding {
        Some(Encoding::Windows1252) => decode_cp1252(bytes),
        Some(Encoding::Utf8) | None => match std::str::from_utf8(bytes) {
            Ok(s) => Cow::Borrowed(s),
            Err(_) => decode_cp1252(bytes),
        },
    }
}

/// The UTF-16 byte order of a file that starts with a UTF-16 byte-order mark.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Utf16 {
    Le,
    Be,
}

/// The UTF-16 byte order named by the file's first two bytes (`FF FE` little-endian, `FE FF`
/// big-endian, the byte-order mark U+FEFF written in each order; Unicode Standard, section 23.8).
pub fn utf16_bom(head: &[u8]) -> Option<Utf16> {
    match head {
        [0xFF, 0xFE, ..] => Some(Utf16::Le),
        [0xFE, 0xFF, ..] => Some(Utf16::Be),
        _ => None,
    }
}

/// Transcode UTF-16 code units (`bytes`, an even-length prefix is used) to UTF-8 into `out`;
/// returns how many bytes of `bytes` were used. A high surrogate at the very end is left for the
/// next call unless `last`; unpaired surrogates and a lone last byte become U+FFFD.
fn transcode_utf16(bytes: &[u8], order: Utf16, last: bool, out: &mut Vec<u8>) -> usize {
    let unit = |i: usize| -> u16 {
        let pair = [bytes[i], bytes[i + 1]];
        match order {
            Utf16::Le => u16::from_le_bytes(pair),
            Utf16::Be => u16::from_be_bytes(pair),
        }
    };
    let mut end = bytes.len() & !1;
    if !last && end >= 2 && (0xD800..0xDC00).contains(&unit(end - 2)) {
        end -= 2; // a high surrogate whose low half is in the next read
    }
    let units = (0..end).step_by(2).map(unit);
    let mut buf = [0u8; 4];
    for c in char::decode_utf16(units) {
        let c = c.unwrap_or(char::REPLACEMENT_CHARACTER);
        out.extend_from_slice(c.encode_utf8(&mut buf).as_bytes());
    }
    if last && bytes.len() > end && bytes.len() - end == 1 {
        out.extend_from_slice(char::REPLACEMENT_CHARACTER.encode_utf8(&mut buf).as_bytes());
        return bytes.len();
    }
    end
}

/// The head of a file that starts with a UTF-16 byte-order mark, as UTF-8 without the mark (for
/// the sniffer's look at the first 64 KiB); `None` for any other head. A character cut off at the
/// end of the head is left out.
pub fn transcode_utf16_head(head: &[u8]) -> Option<Vec<u8>> {
    let order = utf16_bom(head)?;
    let mut out = Vec::with_capacity(head.len());
    transcode_utf16(&head[2..], order, false, &mut out);
    Some(out)
}

/// A streaming UTF-16 to UTF-8 adapter: reads UTF-16 from `src` (after its byte-order mark) in
/// pieces of at most 64 KiB and gives UTF-8, so that the record reader sees the same bytes as for
/// a UTF-8 file and memory stays bounded whatever the file's size. `consumed` counts the bytes of
/// `src` used so far (progress is reported in bytes of the file, not of the UTF-8).
pub struct Utf16Reader<R> {
    src: R,
    order: Utf16,
    carry: Vec<u8>,
    out: Vec<u8>,
    pos: usize,
    eof: bool,
    consumed: Rc<Cell<u64>>,
}

impl<R: BufRead> Utf16Reader<R> {
    /// `src` positioned after the byte-order mark.
    pub fn new(src: R, order: Utf16, consumed: Rc<Cell<u64>>) -> Self {
        Self { src, order, carry: Vec::new(), out: Vec::new(), pos: 0, eof: false, consumed }
    }

    fn refill(&mut self) -> io::Result<()> {
        self.out.clear();
        self.pos = 0;
        while self.out.is_empty() && !self.eof {
            let chunk = self.src.fill_buf()?;
            let n = chunk.len().min(64 * 1024);
            if n == 0 {
                self.eof = true;
                let carry = std::mem::take(&mut self.carry);
                transcode_utf16(&carry, self.order, true, &mut self.out);
                break;
            }
            self.carry.extend_from_slice(&chunk[..n]);
            self.src.consume(n);
            self.consumed.set(self.consumed.get() + n as u64);
            let used = transcode_utf16(&self.carry, self.order, false, &mut self.out);
            self.carry.drain(..used);
        }
        Ok(())
    }
}

impl<R: BufRead> Read for Utf16Reader<R> {
    fn read(&mut self, buf: &mut [u8]) -> io::Result<usize> {
        if self.pos >= self.out.len() {
            self.refill()?;
        }
        let n = buf.len().min(self.out.len() - self.pos);
        buf[..n].copy_from_slice(&self.out[self.pos..self.pos + n]);
        self.pos += n;
        Ok(n)
    }
}

/// What a file that is not text is, by the magic bytes it starts with (the formats' published
/// signatures: gzip RFC 1952, zip APPNOTE 4.3.7, OLE compound file [MS-CFB] 2.2, PDF ISO 32000-1
/// 7.5.2, PNG ISO/IEC 15948 5.2, JPEG ITU-T T.81 B.1.1.2 (SOI), bzip2, xz, 7z and Zstandard
/// RFC 8878 3.1.1), else a NUL byte in the head (never in a text file in a single-byte encoding or
/// UTF-8); `None` for a file that may be text. The message says what the file is and what to do.
/// A head that starts with a UTF-16 byte-order mark is text (see [`Utf16Reader`]).
pub fn not_text(head: &[u8]) -> Option<&'static str> {
    if utf16_bom(head).is_some() {
        return None;
    }
    let contains = |needle: &[u8]| head.windows(needle.len()).any(|w| w == needle);
    let msg = if head.starts_with(&[0x1F, 0x8B]) {
        "this is a gzip-compressed file: unpack it first and upload the CSV file inside"
    } else if head.starts_with(b"PK\x03\x04")
        || head.starts_with(b"PK\x05\x06")
        || head.starts_with(b"PK\x07\x08")
    {
        if contains(b"xl/") || contains(b"opendocument.spreadsheet") {
            "this is a spreadsheet workbook (zip): export the sheet as CSV and upload that"
        } else if contains(b"word/") || contains(b"opendocument.text") {
            "this is a word-processor document (zip), not a logger file: export the data as CSV"
        } else {
            "this is a zip archive: unpack it first and upload the CSV file inside"
        }
    } else if head.starts_with(&[0xD0, 0xCF, 0x11, 0xE0, 0xA1, 0xB1, 0x1A, 0xE1]) {
        "this is a legacy spreadsheet workbook (OLE compound file, .xls): export the sheet as CSV and upload that"
    } else if head.starts_with(b"%PDF-") {
        "this is a PDF document, not a logger file: upload the logger's CSV export"
    } else if head.starts_with(b"\x89PNG\r\n\x1a\n") {
        "this is a PNG image, not a logger file: upload the logger's CSV export"
    } else if head.starts_with(&[0xFF, 0xD8, 0xFF]) {
        "this is a JPEG image, not a logger file: upload the logger's CSV export"
    } else if head.len() >= 10 && head.starts_with(b"BZh") && &head[4..10] == b"1AY&SY" {
        "this is a bzip2-compressed file: unpack it first and upload the CSV file inside"
    } else if head.starts_with(&[0xFD, b'7', b'z', b'X', b'Z', 0x00]) {
        "this is an xz-compressed file: unpack it first and upload the CSV file inside"
    } else if head.starts_with(&[b'7', b'z', 0xBC, 0xAF, 0x27, 0x1C]) {
        "this is a 7z archive: unpack it first and upload the CSV file inside"
    } else if head.starts_with(&[0x28, 0xB5, 0x2F, 0xFD]) {
        "this is a Zstandard-compressed file: unpack it first and upload the CSV file inside"
    } else if looks_utf16_without_bom(head) {
        "this looks like UTF-16 text without a byte-order mark: save it as UTF-8 (or UTF-16 with a byte-order mark)"
    } else if head.contains(&0) {
        "this is a binary file (it holds NUL bytes), not a text CSV file: upload the logger's CSV export"
    } else {
        return None;
    };
    Some(msg)
}

/// ASCII text in UTF-16 without a mark: a NUL in every other byte of the head.
fn looks_utf16_without_bom(head: &[u8]) -> bool {
    let pairs = head.len() / 2;
    if pairs < 8 {
        return false;
    }
    let nul_at = |k: usize| head.chunks_exact(2).filter(|p| p[k] == 0 && p[1 - k] != 0).count();
    nul_at(0) * 10 >= pairs * 9 || nul_at(1) * 10 >= pairs * 9
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn latin1_degree_sign_is_detected_and_decoded() {
        // 0xB0 is the degree sign in ISO 8859-1 and Windows-1252 (code page table).
        let line = b"Time;Temp \xB0C";
        assert_eq!(detect(line), Encoding::Windows1252);
        assert_eq!(decode_line(line, None), "Time;Temp °C");
    }

    #[test]
    fn utf8_with_bom_is_utf8_and_the_bom_strips() {
        let bytes = b"\xEF\xBB\xBFTime,Temp \xC2\xB0C\n";
        assert_eq!(detect(bytes), Encoding::Utf8);
        assert_eq!(strip_bom(bytes), b"Time,Temp \xC2\xB0C\n");
        assert_eq!(decode_line(&strip_bom(bytes)[..13], None), "Time,Temp °C");
    }

    #[test]
    fn a_head_cut_inside_a_character_is_still_utf8() {
        assert_eq!(detect(b"Temp \xC2"), Encoding::Utf8);
    }

    #[test]
    fn cp1252_high_range_uses_the_windows_table() {
        // 0x80 euro sign, 0x93/0x94 curly double quotes, 0x96 en dash (Windows-1252 table).
        assert_eq!(decode_cp1252(b"\x80 \x93x\x94 \x96"), "€ \u{201C}x\u{201D} \u{2013}");
        assert_eq!(cp1252_char(0xE9), 'é');
    }

    #[test]
    fn encoding_names_and_aliases() {
        assert_eq!(Encoding::parse("UTF-8"), Some(Encoding::Utf8));
        assert_eq!(Encoding::parse("latin-1"), Some(Encoding::Windows1252));
        assert_eq!(Encoding::parse("windows-1252"), Some(Encoding::Windows1252));
        assert_eq!(Encoding::parse("ebcdic"), None);
    }

    fn utf16(text: &str, order: Utf16) -> Vec<u8> {
        let mut v = match order {
            Utf16::Le => vec![0xFF, 0xFE],
            Utf16::Be => vec![0xFE, 0xFF],
        };
        for u in text.encode_utf16() {
            v.extend_from_slice(&match order {
                Utf16::Le => u.to_le_bytes(),
                Utf16::Be => u.to_be_bytes(),
            });
        }
        v
    }

    #[test]
    fn utf16_streams_to_the_same_utf8_in_any_piece_size() {
        // A degree sign, a euro sign and U+1F321 (a surrogate pair in UTF-16) across piece edges.
        let text = "Zeit;Temp °C;€\n2026-03-02 06:00:00;21,5;\u{1F321}\n".repeat(5000);
        for order in [Utf16::Le, Utf16::Be] {
            let bytes = utf16(&text, order);
            assert_eq!(transcode_utf16_head(&bytes).unwrap(), text.as_bytes());
            for cap in [1, 3, 4096, 1 << 20] {
                let consumed = Rc::new(Cell::new(0));
                let src = io::BufReader::with_capacity(cap, &bytes[2..]);
                let mut r = Utf16Reader::new(src, order, consumed.clone());
                let mut got = Vec::new();
                r.read_to_end(&mut got).unwrap();
                assert_eq!(got, text.as_bytes(), "{order:?} in pieces of {cap}");
                assert_eq!(consumed.get(), bytes.len() as u64 - 2);
            }
        }
    }

    #[test]
    fn a_utf16_head_cut_inside_a_pair_drops_the_half() {
        let bytes = utf16("a\u{1F321}", Utf16::Le);
        assert_eq!(transcode_utf16_head(&bytes[..6]).unwrap(), b"a");
        assert_eq!(transcode_utf16_head(b"time,kW"), None);
    }

    #[test]
    fn binary_files_are_named_by_their_magic_bytes() {
        let gz = [0x1F, 0x8B, 0x08, 0x00];
        assert!(not_text(&gz).unwrap().contains("gzip"));
        let mut xlsx = b"PK\x03\x04\x14\x00\x06\x00".to_vec();
        xlsx.extend_from_slice(b"\x00\x00[Content_Types].xml...xl/workbook.xml");
        assert!(not_text(&xlsx).unwrap().contains("spreadsheet workbook (zip)"));
        assert!(not_text(b"PK\x03\x04\x14\x00data.csv").unwrap().contains("zip archive"));
        let xls = [0xD0, 0xCF, 0x11, 0xE0, 0xA1, 0xB1, 0x1A, 0xE1, 0, 0];
        assert!(not_text(&xls).unwrap().contains("legacy spreadsheet"));
        assert!(not_text(b"%PDF-1.7\n").unwrap().contains("PDF"));
        assert!(not_text(b"\x89PNG\r\n\x1a\n\0\0").unwrap().contains("PNG"));
        assert!(not_text(&[0xFF, 0xD8, 0xFF, 0xE0]).unwrap().contains("JPEG"));
        assert!(not_text(b"time,kW\n1,\x002\n").unwrap().contains("NUL"));
        let no_bom: Vec<u8> = "time,kW\n2026,5\n".bytes().flat_map(|b| [b, 0]).collect();
        assert!(not_text(&no_bom).unwrap().contains("UTF-16"));
        assert_eq!(not_text(b"time,kW\n2026-03-02T06:00:00Z,5\n"), None);
        assert_eq!(not_text(&utf16("time,kW\n", Utf16::Be)), None);
        assert_eq!(not_text(b"PKW,C1\n"), None, "text that starts with PK is text");
    }
}
