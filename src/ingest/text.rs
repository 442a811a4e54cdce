/*!
Text encodings of logger files: UTF-8 (with or without a byte-order mark) and Windows-1252.

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
}
