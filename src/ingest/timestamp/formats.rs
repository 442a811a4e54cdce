/*!
Timestamp text into local civil time (or an instant, for the unix formats): the formats of the
module doc of [`super`], parsed by hand.
*/

const MS_PER_DAY: i64 = 86_400_000;

/// One element of a strftime-like pattern.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Item {
    Year,
    Year2,
    Month,
    MonthName,
    Day,
    Hour24,
    Hour12,
    Minute,
    Second,
    /// `%.f`: optional `.`/`,` and digits.
    OptFrac,
    /// `%f`: digits.
    Frac,
    AmPm,
    Offset,
    Space,
    Lit(u8),
}

/// A parsed timestamp format.
#[derive(Debug, Clone, PartialEq)]
pub enum TimeFormat {
    Rfc3339,
    UnixS,
    UnixMs,
    ExcelDays,
    Pattern(Vec<Item>),
}

impl TimeFormat {
    /// Parse a mapping's `format` (see the module doc). Errors are lower-case with the format.
    pub fn parse(format: &str) -> Result<Self, String> {
        match format.trim().to_ascii_lowercase().as_str() {
            "rfc3339" | "iso8601" | "iso 8601" | "iso" => return Ok(Self::Rfc3339),
            "unix_s" | "unix" | "epoch" | "epoch_s" => return Ok(Self::UnixS),
            "unix_ms" | "epoch_ms" => return Ok(Self::UnixMs),
            "excel_days" | "excel" | "serial_days" => return Ok(Self::ExcelDays),
            _ => {}
        }
        let b = format.as_bytes();
        let mut items = Vec::new();
        let mut i = 0;
        while i < b.len() {
            let c = b[i];
            if c == b'%' {
                let Some(&n) = b.get(i + 1) else {
                    return Err(format!("format {format:?} ends with a lone '%'"));
                };
                i += 2;
                match n {
                    b'Y' => items.push(Item::Year),
                    b'y' => items.push(Item::Year2),
                    b'm' => items.push(Item::Month),
                    b'b' | b'h' => items.push(Item::MonthName),
                    b'd' | b'e' => items.push(Item::Day),
                    b'H' => items.push(Item::Hour24),
                    b'I' => items.push(Item::Hour12),
                    b'M' => items.push(Item::Minute),
                    b'S' => items.push(Item::Second),
                    b'f' => items.push(Item::Frac),
                    b'p' | b'P' => items.push(Item::AmPm),
                    b'z' => items.push(Item::Offset),
                    b'%' => items.push(Item::Lit(b'%')),
                    b'F' => {
                        items.extend([Item::Year, Item::Lit(b'-'), Item::Month, Item::Lit(b'-'), Item::Day])
                    }
                    b'T' => items.extend([
                        Item::Hour24,
                        Item::Lit(b':'),
                        Item::Minute,
                        Item::Lit(b':'),
                        Item::Second,
                    ]),
                    b'R' => items.extend([Item::Hour24, Item::Lit(b':'), Item::Minute]),
                    b'.' => {
                        // %.f, %.3f, %.6f ...: the digit count is not enforced.
                        let mut j = i;
                        while j < b.len() && b[j].is_ascii_digit() {
                            j += 1;
                        }
                        if b.get(j) != Some(&b'f') {
                            return Err(format!("format {format:?}: '%.' must be followed by 'f'"));
                        }
                        i = j + 1;
                        items.push(Item::OptFrac);
                    }
                    b'3' | b'6' | b'9' if b.get(i) == Some(&b'f') => {
                        i += 1;
                        items.push(Item::Frac);
                    }
                    other => {
                        return Err(format!("format {format:?}: unsupported directive '%{}'", other as char))
                    }
                }
            } else if c == b' ' {
                if items.last() != Some(&Item::Space) {
                    items.push(Item::Space);
                }
                i += 1;
            } else if c.is_ascii() {
                items.push(Item::Lit(c));
                i += 1;
            } else {
                return Err(format!("format {format:?}: non-ascii characters are not supported"));
            }
        }
        let has = |f: fn(&Item) -> bool| items.iter().any(f);
        if !has(|i| matches!(i, Item::Year | Item::Year2))
            || !has(|i| matches!(i, Item::Month | Item::MonthName))
            || !has(|i| matches!(i, Item::Day))
        {
            return Err(format!("format {format:?} needs a year, a month and a day"));
        }
        if items.contains(&Item::Hour12) != items.contains(&Item::AmPm) {
            return Err(format!("format {format:?}: '%I' and '%p' go together"));
        }
        Ok(Self::Pattern(items))
    }
}

/// Days since 1970-01-01 of a proleptic Gregorian date (H. Hinnant's `days_from_civil`).
pub fn days_from_civil(y: i64, m: u32, d: u32) -> i64 {
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let mp = (m as i64 + 9) % 12;
    let doy = (153 * mp + 2) / 5 + d as i64 - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

fn days_in_month(y: i64, m: u32) -> u32 {
    match m {
        1 | 3 | 5 | 7 | 8 | 10 | 12 => 31,
        4 | 6 | 9 | 11 => 30,
        _ if (y % 4 == 0 && y % 100 != 0) || y % 400 == 0 => 29,
        _ => 28,
    }
}

/// A timestamp as written: local civil time in ms (as if the zone were UTC) and, if the text
/// carried one, its UTC offset in seconds; or an absolute instant (unix formats).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Written {
    Local { local_ms: i64, offset_s: Option<i32> },
    Utc(i64),
}

pub(super) struct Cursor<'a> {
    pub(super) s: &'a [u8],
    pub(super) i: usize,
}

impl Cursor<'_> {
    #[inline]
    fn digits(&mut self, min: usize, max: usize) -> Option<(u32, usize)> {
        let mut v: u32 = 0;
        let mut n = 0;
        while n < max {
            match self.s.get(self.i) {
                Some(&b) if b.is_ascii_digit() => {
                    v = v * 10 + (b - b'0') as u32;
                    self.i += 1;
                    n += 1;
                }
                _ => break,
            }
        }
        (n >= min).then_some((v, n))
    }
    #[inline]
    fn eat(&mut self, c: u8) -> bool {
        if self.s.get(self.i) == Some(&c) {
            self.i += 1;
            true
        } else {
            false
        }
    }
    fn peek(&self) -> Option<u8> {
        self.s.get(self.i).copied()
    }
    /// Fraction digits as milliseconds (rounded half up at the 4th digit; extra digits ignored).
    fn frac_ms(&mut self) -> Option<i64> {
        let start = self.i;
        let mut ms: i64 = 0;
        let mut n = 0;
        let mut round = false;
        while let Some(b) = self.peek().filter(u8::is_ascii_digit) {
            if n < 3 {
                ms = ms * 10 + (b - b'0') as i64;
            } else if n == 3 {
                round = b >= b'5';
            }
            n += 1;
            self.i += 1;
        }
        if self.i == start {
            return None;
        }
        for _ in n..3 {
            ms *= 10;
        }
        Some(ms + round as i64)
    }
    pub(super) fn offset(&mut self) -> Option<i32> {
        match self.peek()? {
            b'Z' | b'z' => {
                self.i += 1;
                Some(0)
            }
            s @ (b'+' | b'-') => {
                self.i += 1;
                let (h, _) = self.digits(2, 2)?;
                self.eat(b':');
                let m = self.digits(2, 2).map(|x| x.0).unwrap_or(0);
                if h > 23 || m > 59 {
                    return None;
                }
                let o = (h * 3600 + m * 60) as i32;
                Some(if s == b'-' { -o } else { o })
            }
            _ => None,
        }
    }
    fn rest_is_blank(&self) -> bool {
        self.s[self.i..].iter().all(|&b| b == b' ' || b == b'\t')
    }
}

const MONTHS: [&[u8; 3]; 12] =
    [b"jan", b"feb", b"mar", b"apr", b"may", b"jun", b"jul", b"aug", b"sep", b"oct", b"nov", b"dec"];

struct Civil {
    y: i64,
    mo: u32,
    d: u32,
    h: u32,
    mi: u32,
    s: u32,
    ms: i64,
}

impl Civil {
    fn local_ms(&self) -> Option<i64> {
        if !(1..=12).contains(&self.mo)
            || self.d < 1
            || self.d > days_in_month(self.y, self.mo)
            || self.h > 23
            || self.mi > 59
            || self.s > 59
        {
            return None;
        }
        let days = days_from_civil(self.y, self.mo, self.d);
        Some(
            days * MS_PER_DAY + (self.h as i64 * 3600 + self.mi as i64 * 60 + self.s as i64) * 1000 + self.ms,
        )
    }
}

fn parse_pattern(items: &[Item], s: &[u8]) -> Option<Written> {
    let mut c = Cursor { s, i: 0 };
    // Leading blanks are common in fixed-width logger exports.
    while matches!(c.peek(), Some(b' ' | b'\t')) {
        c.i += 1;
    }
    let mut t = Civil { y: 0, mo: 0, d: 0, h: 0, mi: 0, s: 0, ms: 0 };
    let mut pm: Option<bool> = None;
    let mut offset = None;
    for item in items {
        match *item {
            Item::Year => t.y = c.digits(4, 4)?.0 as i64,
            Item::Year2 => t.y = 2000 + c.digits(2, 2)?.0 as i64,
            Item::Month => t.mo = c.digits(1, 2)?.0,
            Item::Day => t.d = c.digits(1, 2)?.0,
            Item::Hour24 | Item::Hour12 => t.h = c.digits(1, 2)?.0,
            Item::Minute => t.mi = c.digits(1, 2)?.0,
            Item::Second => t.s = c.digits(1, 2)?.0,
            Item::Frac => t.ms = c.frac_ms()?,
            Item::OptFrac => {
                if matches!(c.peek(), Some(b'.' | b',')) && c.s.get(c.i + 1).is_some_and(u8::is_ascii_digit) {
                    c.i += 1;
                    t.ms = c.frac_ms()?;
                }
            }
            Item::MonthName => {
                let w = c.s.get(c.i..c.i + 3)?;
                let lower = [w[0].to_ascii_lowercase(), w[1].to_ascii_lowercase(), w[2] | 0x20];
                t.mo = MONTHS.iter().position(|m| **m == lower)? as u32 + 1;
                c.i += 3;
                // Full month names ("March"): skip the rest of the word.
                while c.peek().is_some_and(|b| b.is_ascii_alphabetic()) {
                    c.i += 1;
                }
            }
            Item::AmPm => {
                let w = c.s.get(c.i..c.i + 2)?;
                pm = Some(match [w[0].to_ascii_lowercase(), w[1].to_ascii_lowercase()] {
                    [b'a', b'm'] => false,
                    [b'p', b'm'] => true,
                    _ => return None,
                });
                c.i += 2;
            }
            Item::Offset => offset = Some(c.offset()?),
            Item::Space => {
                if !matches!(c.peek(), Some(b' ' | b'\t')) {
                    return None;
                }
                while matches!(c.peek(), Some(b' ' | b'\t')) {
                    c.i += 1;
                }
            }
            Item::Lit(l) => {
                if !c.eat(l) {
                    return None;
                }
            }
        }
    }
    if let Some(pm) = pm {
        if t.h == 0 || t.h > 12 {
            return None;
        }
        t.h = match (t.h, pm) {
            (12, false) => 0,
            (12, true) => 12,
            (h, false) => h,
            (h, true) => h + 12,
        };
    }
    if !c.rest_is_blank() {
        return None;
    }
    Some(Written::Local { local_ms: t.local_ms()?, offset_s: offset })
}

fn parse_rfc3339(s: &[u8]) -> Option<Written> {
    let s = crate::ingest::number::trim(s);
    let mut c = Cursor { s, i: 0 };
    let mut t = Civil { y: 0, mo: 0, d: 0, h: 0, mi: 0, s: 0, ms: 0 };
    t.y = c.digits(4, 4)?.0 as i64;
    if !c.eat(b'-') {
        return None;
    }
    t.mo = c.digits(2, 2)?.0;
    if !c.eat(b'-') {
        return None;
    }
    t.d = c.digits(2, 2)?.0;
    if !(c.eat(b'T') || c.eat(b't') || c.eat(b' ')) {
        return None;
    }
    t.h = c.digits(2, 2)?.0;
    if !c.eat(b':') {
        return None;
    }
    t.mi = c.digits(2, 2)?.0;
    if c.eat(b':') {
        t.s = c.digits(2, 2)?.0;
        if matches!(c.peek(), Some(b'.' | b',')) {
            c.i += 1;
            t.ms = c.frac_ms()?;
        }
    }
    let offset = if c.i < s.len() { Some(c.offset()?) } else { None };
    if c.i != s.len() {
        return None;
    }
    Some(Written::Local { local_ms: t.local_ms()?, offset_s: offset })
}

/// Milliseconds from a decimal number of units (`unit_ms` per unit), rounded to the nearest ms.
fn scaled_ms(s: &[u8], unit_ms: f64) -> Option<f64> {
    match crate::ingest::number::parse_cell(s, b'.').ok()? {
        crate::ingest::number::Cell::Value(v) => Some((v * unit_ms).round()),
        crate::ingest::number::Cell::Missing => None,
    }
}

/// Parse one timestamp cell (for two-column formats, the date and time joined by one space).
pub fn parse_written(format: &TimeFormat, s: &[u8]) -> Option<Written> {
    match format {
        TimeFormat::Pattern(items) => parse_pattern(items, s),
        TimeFormat::Rfc3339 => parse_rfc3339(s),
        TimeFormat::UnixS => {
            let ms = scaled_ms(s, 1000.0)?;
            (ms.abs() < 1e15).then_some(Written::Utc(ms as i64))
        }
        TimeFormat::UnixMs => {
            let ms = scaled_ms(s, 1.0)?;
            (ms.abs() < 1e15).then_some(Written::Utc(ms as i64))
        }
        TimeFormat::ExcelDays => {
            let days = match crate::ingest::number::parse_cell(s, b'.').ok()? {
                crate::ingest::number::Cell::Value(v) => v,
                crate::ingest::number::Cell::Missing => return None,
            };
            // Serial 1 = 1900-01-01; the 1900 system counts a 1900-02-29 that never was (serial
            // 60), so from serial 61 on day 0 is 1899-12-30, before it 1899-12-31.
            if !(1.0..2_958_466.0).contains(&days) || (60.0..61.0).contains(&days) {
                return None;
            }
            let epoch_days = if days >= 61.0 { -25_569.0 } else { -25_568.0 };
            let local_ms = ((days + epoch_days) * MS_PER_DAY as f64).round() as i64;
            Some(Written::Local { local_ms, offset_s: None })
        }
    }
}
