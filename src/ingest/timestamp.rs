/*!
Logger timestamps into UTC epoch milliseconds.

## Formats
- strftime-like patterns: `%Y` (4 digits), `%y` (2 digits, 2000-2099), `%m`, `%d`/`%e`, `%H`, `%I`
  (12-hour, with `%p` AM/PM), `%M`, `%S`, `%b` (English month abbreviation), `%F` (= `%Y-%m-%d`),
  `%T` (= `%H:%M:%S`), `%R` (= `%H:%M`), `%.f` (an optional fraction after `.` or `,`), `%f`
  (fraction digits after a literal `.`, as in `%S.%f`), `%z` (`Z`, `+01:00`, `+0100`), `%%`. Numeric
  fields take one or two digits, so unpadded `3/2/2026 6:00:00 AM` reads too. A space in the pattern
  matches one or more spaces.
- `rfc3339` / `iso8601`: `2026-03-02T06:00:00`, with `T` or a space, optional seconds and fraction,
  optional offset (`Z`, `+01:00`, `+0100`). Without an offset the mapping's time zone applies.
- `unix_s` (seconds, fraction allowed) and `unix_ms`: UTC by definition; the time zone is not used.
- `excel_days`: spreadsheet serial days in the 1900 date system (day 1 = 1900-01-01, with the
  system's phantom 1900-02-29 at serial 60), a fraction for the time of day, in the mapping's zone.

These are parsed by hand: a strptime per row is too slow for multi-million-row files. jiff is used
only for the time-zone rules, with the UTC offset cached per local civil hour.

## Time zones and daylight saving
`UTC`, a fixed offset (`+01:00`, `-0600`, `UTC+01:00`), or an IANA name (`Europe/Berlin`) from
jiff's bundled database. Local times that a daylight-saving change makes impossible or ambiguous:

- **Impossible** (spring-forward gap, e.g. 02:30 on the last Sunday of March in Berlin): shifted
  forward by the length of the gap, i.e. read with the offset in force before the gap (02:30 CET
  -> 01:30 UTC = 03:30 CEST). This is jiff's "compatible" rule (and RFC 5545's).
- **Ambiguous** (fall-back fold, 02:00-02:59 twice in Berlin in October): the earlier offset
  (summer time, the first pass through the hour) until the file's local times step backwards
  within the repeated hour; from that step on, the later offset (standard time). A logger that
  writes local wall time through the change thus gets both passes right.

Every such case is reported through [`DstCase`] so the quality report can list it.
*/

use crate::ingest::IngestError;
use jiff::tz::{AmbiguousOffset, TimeZone};

const MS_PER_DAY: i64 = 86_400_000;
const MS_PER_HOUR: i64 = 3_600_000;

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

struct Cursor<'a> {
    s: &'a [u8],
    i: usize,
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
    fn offset(&mut self) -> Option<i32> {
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

/// How a daylight-saving case was resolved.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DstResolution {
    /// Ambiguous (fold), read with the earlier (summer-time) offset.
    AmbiguousEarlier,
    /// Ambiguous (fold), read with the later (standard-time) offset after the step back.
    AmbiguousLater,
    /// Impossible (gap), shifted forward by the gap.
    GapShiftedForward,
}

/// One daylight-saving case met while parsing.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DstCase {
    pub local_ms: i64,
    pub offset_s: i32,
    pub resolution: DstResolution,
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum Off {
    Unique(i32),
    Gap { before: i32 },
    Fold { before: i32, after: i32 },
}

fn off_of(a: AmbiguousOffset) -> Off {
    match a {
        AmbiguousOffset::Unambiguous { offset } => Off::Unique(offset.seconds()),
        AmbiguousOffset::Gap { before, .. } => Off::Gap { before: before.seconds() },
        AmbiguousOffset::Fold { before, after } => {
            Off::Fold { before: before.seconds(), after: after.seconds() }
        }
    }
}

/// A time zone of a mapping.
#[derive(Debug, Clone)]
pub enum Zone {
    Fixed(i32),
    Named(TimeZone),
}

impl Zone {
    /// `UTC`/`Z`, a fixed offset (`+01:00`, `-0600`, `UTC+01:00`) or an IANA name.
    pub fn parse(name: &str) -> Result<Self, String> {
        let n = name.trim();
        if n.eq_ignore_ascii_case("utc") || n.eq_ignore_ascii_case("z") || n == "GMT" {
            return Ok(Self::Fixed(0));
        }
        let off_text = n
            .strip_prefix("UTC")
            .or_else(|| n.strip_prefix("utc"))
            .or_else(|| n.strip_prefix("GMT"))
            .unwrap_or(n);
        if off_text.starts_with(['+', '-']) {
            let mut c = Cursor { s: off_text.as_bytes(), i: 0 };
            return match c.offset() {
                Some(o) if c.i == off_text.len() => Ok(Self::Fixed(o)),
                _ => Err(format!("cannot read utc offset {name:?}")),
            };
        }
        TimeZone::get(n)
            .map(Self::Named)
            .map_err(|_| format!("unknown time zone {name:?} (use UTC, +01:00 or an IANA name)"))
    }
}

/// Resolves local civil times to UTC with the daylight-saving rule of the module doc, caching the
/// zone's offset per local civil hour.
#[derive(Debug, Clone)]
pub struct Resolver {
    zone: Zone,
    cache_hour: i64,
    /// `None`: the offset changes inside that hour; ask jiff per timestamp.
    cache: Option<Off>,
    fold: Option<FoldState>,
}

#[derive(Debug, Clone, Copy)]
struct FoldState {
    before: i32,
    after: i32,
    last_local_ms: i64,
    stepped_back: bool,
}

impl Resolver {
    pub fn new(zone: Zone) -> Self {
        Self { zone, cache_hour: i64::MIN, cache: None, fold: None }
    }

    fn lookup(tz: &TimeZone, local_ms: i64) -> Option<Off> {
        let dt = jiff::Timestamp::from_millisecond(local_ms).ok()?.to_zoned(TimeZone::UTC);
        Some(off_of(tz.to_ambiguous_timestamp(dt.datetime()).offset()))
    }

    /// UTC ms for a written timestamp, and the daylight-saving case if there was one.
    #[inline]
    pub fn resolve(&mut self, w: Written) -> Option<(i64, Option<DstCase>)> {
        let (local_ms, explicit) = match w {
            Written::Utc(ms) => return Some((ms, None)),
            Written::Local { local_ms, offset_s } => (local_ms, offset_s),
        };
        if let Some(o) = explicit {
            return Some((local_ms - o as i64 * 1000, None));
        }
        let tz = match &self.zone {
            Zone::Fixed(o) => return Some((local_ms - *o as i64 * 1000, None)),
            Zone::Named(tz) => tz,
        };
        let hour = local_ms.div_euclid(MS_PER_HOUR);
        if hour != self.cache_hour {
            let a = Self::lookup(tz, hour * MS_PER_HOUR)?;
            let b = Self::lookup(tz, hour * MS_PER_HOUR + MS_PER_HOUR - 1)?;
            self.cache_hour = hour;
            self.cache = (a == b).then_some(a);
        }
        let off = match self.cache {
            Some(o) => o,
            None => Self::lookup(tz, local_ms)?,
        };
        match off {
            Off::Unique(o) => {
                self.fold = None;
                Some((local_ms - o as i64 * 1000, None))
            }
            Off::Gap { before } => {
                self.fold = None;
                let case =
                    DstCase { local_ms, offset_s: before, resolution: DstResolution::GapShiftedForward };
                Some((local_ms - before as i64 * 1000, Some(case)))
            }
            Off::Fold { before, after } => {
                let st = match self.fold {
                    Some(mut st) if st.before == before && st.after == after => {
                        if local_ms < st.last_local_ms {
                            st.stepped_back = true;
                        }
                        st.last_local_ms = local_ms;
                        st
                    }
                    _ => FoldState { before, after, last_local_ms: local_ms, stepped_back: false },
                };
                self.fold = Some(st);
                let (o, resolution) = if st.stepped_back {
                    (after, DstResolution::AmbiguousLater)
                } else {
                    (before, DstResolution::AmbiguousEarlier)
                };
                Some((local_ms - o as i64 * 1000, Some(DstCase { local_ms, offset_s: o, resolution })))
            }
        }
    }
}

/// Format UTC ms as RFC 3339 (`2026-03-02T06:00:00Z`, milliseconds only when not zero).
pub fn format_utc_ms(ms: i64) -> String {
    match jiff::Timestamp::from_millisecond(ms) {
        Ok(t) if ms % 1000 == 0 => t.strftime("%Y-%m-%dT%H:%M:%SZ").to_string(),
        Ok(t) => t.strftime("%Y-%m-%dT%H:%M:%S%.3fZ").to_string(),
        Err(_) => format!("{ms} ms"),
    }
}

/// Format local civil ms (no zone) as `2026-10-25 02:30:00`.
pub fn format_local_ms(ms: i64) -> String {
    let s = format_utc_ms(ms);
    s.trim_end_matches('Z').replacen('T', " ", 1)
}

/// A ready timestamp reader: format, zone resolver and the file's clock offset.
#[derive(Debug, Clone)]
pub struct TimestampParser {
    pub format: TimeFormat,
    pub resolver: Resolver,
    pub clock_offset_ms: i64,
}

impl TimestampParser {
    pub fn new(format: &str, timezone: &str, clock_offset_s: f64) -> Result<Self, IngestError> {
        let format = TimeFormat::parse(format).map_err(|m| IngestError::field("timestamp.format", m))?;
        let zone = Zone::parse(timezone).map_err(|m| IngestError::field("timestamp.timezone", m))?;
        if !clock_offset_s.is_finite() || clock_offset_s.abs() > 366.0 * 86_400.0 {
            return Err(IngestError::field(
                "clock_offset_s",
                format!("clock offset {clock_offset_s} s is not a plausible clock error"),
            ));
        }
        Ok(Self {
            format,
            resolver: Resolver::new(zone),
            clock_offset_ms: (clock_offset_s * 1000.0).round() as i64,
        })
    }

    /// UTC ms after the clock offset, and the daylight-saving case if any; `None` when the text
    /// does not match the format.
    #[inline]
    pub fn parse(&mut self, s: &[u8]) -> Option<(i64, Option<DstCase>)> {
        let w = parse_written(&self.format, s)?;
        let (ms, case) = self.resolver.resolve(w)?;
        Some((ms + self.clock_offset_ms, case))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn utc(format: &str, tz: &str, s: &str) -> i64 {
        let mut p = TimestampParser::new(format, tz, 0.0).unwrap();
        p.parse(s.as_bytes()).unwrap_or_else(|| panic!("no parse {s:?} with {format:?}")).0
    }

    /// Reference instant from jiff's own RFC 3339 parser.
    fn jiff_ms(s: &str) -> i64 {
        s.parse::<jiff::Timestamp>().unwrap().as_millisecond()
    }

    #[test]
    fn the_common_formats_read_the_same_instant() {
        let want = jiff_ms("2026-03-02T18:04:05Z");
        assert_eq!(utc("%Y-%m-%d %H:%M:%S", "UTC", "2026-03-02 18:04:05"), want);
        assert_eq!(utc("%d.%m.%Y %H:%M:%S", "UTC", "02.03.2026 18:04:05"), want);
        assert_eq!(utc("%m/%d/%Y %I:%M:%S %p", "UTC", "3/2/2026 6:04:05 PM"), want);
        assert_eq!(utc("%d/%m/%Y %H:%M", "UTC", "02/03/2026 18:04"), want - 5000);
        assert_eq!(utc("rfc3339", "UTC", "2026-03-02T18:04:05Z"), want);
        assert_eq!(utc("rfc3339", "UTC", "2026-03-02T19:04:05+01:00"), want);
        assert_eq!(utc("rfc3339", "+01:00", "2026-03-02 19:04:05"), want);
        assert_eq!(utc("%Y-%m-%dT%H:%M:%S%z", "UTC", "2026-03-02T12:04:05-0600"), want);
        assert_eq!(utc("unix_s", "Europe/Berlin", "1772474645"), want);
        assert_eq!(utc("unix_ms", "UTC", "1772474645000"), want);
        assert_eq!(utc("%d-%b-%Y %H:%M:%S", "UTC", "02-Mar-2026 18:04:05"), want);
        assert_eq!(utc("%F %T", "UTC", "2026-03-02 18:04:05"), want);
    }

    #[test]
    fn twelve_oclock_am_and_pm() {
        let f = "%m/%d/%Y %I:%M:%S %p";
        assert_eq!(utc(f, "UTC", "03/02/2026 12:00:00 AM"), jiff_ms("2026-03-02T00:00:00Z"));
        assert_eq!(utc(f, "UTC", "03/02/2026 12:00:00 PM"), jiff_ms("2026-03-02T12:00:00Z"));
        let mut p = TimestampParser::new(f, "UTC", 0.0).unwrap();
        assert!(p.parse(b"03/02/2026 13:00:00 PM").is_none());
    }

    #[test]
    fn fractional_seconds_both_ways() {
        let want = jiff_ms("2026-03-02T18:04:05.250Z");
        assert_eq!(utc("%Y-%m-%d %H:%M:%S%.f", "UTC", "2026-03-02 18:04:05.25"), want);
        assert_eq!(utc("%Y-%m-%d %H:%M:%S%.f", "UTC", "2026-03-02 18:04:05,250"), want);
        assert_eq!(utc("%Y-%m-%d %H:%M:%S%.f", "UTC", "2026-03-02 18:04:05"), want - 250);
        assert_eq!(utc("%Y-%m-%d %H:%M:%S.%f", "UTC", "2026-03-02 18:04:05.250000"), want);
        assert_eq!(utc("rfc3339", "UTC", "2026-03-02T18:04:05.2504Z"), want);
        assert_eq!(utc("rfc3339", "UTC", "2026-03-02T18:04:05.2496Z"), want);
    }

    #[test]
    fn excel_serial_days_in_the_1900_system() {
        // Serial 46083 = 2026-03-02 (1900 date system: 1899-12-30 + 46083 days; hand calculation
        // checked against jiff's civil arithmetic below).
        let d0 = jiff::civil::date(1899, 12, 30);
        let d = d0.checked_add(jiff::Span::new().days(46_083)).unwrap();
        assert_eq!(d, jiff::civil::date(2026, 3, 2));
        assert_eq!(utc("excel_days", "UTC", "46083.75"), jiff_ms("2026-03-02T18:00:00Z"));
        assert_eq!(utc("excel_days", "+01:00", "46083.75"), jiff_ms("2026-03-02T17:00:00Z"));
        // Serial 1 is 1900-01-01 (the system's day one).
        assert_eq!(utc("excel_days", "UTC", "1"), jiff_ms("1900-01-01T00:00:00Z"));
    }

    #[test]
    fn clock_offset_is_added() {
        let mut p = TimestampParser::new("rfc3339", "UTC", -2.5).unwrap();
        let (ms, _) = p.parse(b"2026-03-02T18:04:05Z").unwrap();
        assert_eq!(ms, jiff_ms("2026-03-02T18:04:02.500Z"));
    }

    #[test]
    fn bad_text_and_bad_dates_do_not_parse() {
        let mut p = TimestampParser::new("%Y-%m-%d %H:%M:%S", "UTC", 0.0).unwrap();
        for s in [
            "2026-02-29 00:00:00",
            "2026-13-01 00:00:00",
            "2026-03-02 24:00:00",
            "garbage",
            "2026-03-02 18:04:05 x",
            "2026-03-02",
        ] {
            assert!(p.parse(s.as_bytes()).is_none(), "{s}");
        }
        assert!(TimeFormat::parse("%H:%M").is_err());
        assert!(TimeFormat::parse("%Y-%m-%d %Q").is_err());
        assert!(Zone::parse("Mars/Olympus").is_err());
        assert!(matches!(Zone::parse("+05:30"), Ok(Zone::Fixed(19_800))));
        assert!(matches!(Zone::parse("UTC-06:00"), Ok(Zone::Fixed(-21_600))));
    }

    /// Parse a series of local times in a zone, returning UTC instants and the cases met.
    fn series(tz: &str, locals: &[&str]) -> Vec<(String, Option<DstResolution>)> {
        let mut p = TimestampParser::new("%Y-%m-%d %H:%M:%S", tz, 0.0).unwrap();
        locals
            .iter()
            .map(|s| {
                let (ms, case) = p.parse(s.as_bytes()).unwrap();
                (format_utc_ms(ms), case.map(|c| c.resolution))
            })
            .collect()
    }

    #[test]
    fn berlin_spring_forward_gap_shifts_forward_by_the_gap() {
        // 2026-03-29: clocks go 02:00 CET -> 03:00 CEST (EU rule: last Sunday of March, 01:00 UTC).
        let got =
            series("Europe/Berlin", &["2026-03-29 01:59:00", "2026-03-29 02:30:00", "2026-03-29 03:00:00"]);
        assert_eq!(got[0], ("2026-03-29T00:59:00Z".into(), None));
        // 02:30 does not exist; shifted one hour forward to 03:30 CEST = 01:30 UTC (jiff
        // "compatible", checked against jiff's own answer below).
        assert_eq!(got[1], ("2026-03-29T01:30:00Z".into(), Some(DstResolution::GapShiftedForward)));
        let jiff_compat = jiff::civil::datetime(2026, 3, 29, 2, 30, 0, 0)
            .to_zoned(TimeZone::get("Europe/Berlin").unwrap())
            .unwrap()
            .timestamp();
        assert_eq!(got[1].0, jiff_compat.strftime("%Y-%m-%dT%H:%M:%SZ").to_string());
        assert_eq!(got[2], ("2026-03-29T01:00:00Z".into(), None));
    }

    #[test]
    fn berlin_fall_back_fold_takes_summer_time_until_the_clock_steps_back() {
        // 2026-10-25: 03:00 CEST -> 02:00 CET (EU rule: last Sunday of October, 01:00 UTC).
        let got = series(
            "Europe/Berlin",
            &[
                "2026-10-25 01:30:00",
                "2026-10-25 02:00:00",
                "2026-10-25 02:30:00",
                "2026-10-25 02:00:00", // the step back: second pass, CET
                "2026-10-25 02:30:00",
                "2026-10-25 03:00:00",
            ],
        );
        let want = [
            ("2026-10-24T23:30:00Z", None),
            ("2026-10-25T00:00:00Z", Some(DstResolution::AmbiguousEarlier)),
            ("2026-10-25T00:30:00Z", Some(DstResolution::AmbiguousEarlier)),
            ("2026-10-25T01:00:00Z", Some(DstResolution::AmbiguousLater)),
            ("2026-10-25T01:30:00Z", Some(DstResolution::AmbiguousLater)),
            ("2026-10-25T02:00:00Z", None),
        ];
        for (g, w) in got.iter().zip(want) {
            assert_eq!((g.0.as_str(), g.1), w);
        }
    }

    #[test]
    fn chicago_gap_and_fold() {
        // US rule since 2007: second Sunday of March 02:00 CST -> 03:00 CDT; first Sunday of
        // November 02:00 CDT -> 01:00 CST.
        let spring = series("America/Chicago", &["2026-03-08 02:15:00"]);
        assert_eq!(spring[0], ("2026-03-08T08:15:00Z".into(), Some(DstResolution::GapShiftedForward)));
        let fall = series(
            "America/Chicago",
            &[
                "2026-11-01 00:59:00",
                "2026-11-01 01:00:00",
                "2026-11-01 01:59:00",
                "2026-11-01 01:00:00",
                "2026-11-01 02:00:00",
            ],
        );
        assert_eq!(fall[0], ("2026-11-01T05:59:00Z".into(), None));
        assert_eq!(fall[1], ("2026-11-01T06:00:00Z".into(), Some(DstResolution::AmbiguousEarlier)));
        assert_eq!(fall[2], ("2026-11-01T06:59:00Z".into(), Some(DstResolution::AmbiguousEarlier)));
        assert_eq!(fall[3], ("2026-11-01T07:00:00Z".into(), Some(DstResolution::AmbiguousLater)));
        assert_eq!(fall[4], ("2026-11-01T08:00:00Z".into(), None));
    }

    proptest! {
        // Reference: jiff's strftime/Zoned for formatting and its tz database for the offset.
        #[test]
        fn timestamps_round_trip_through_the_formats(
            secs in 0i64..4_102_444_800, ms in 0i64..1000, zone_ix in 0usize..4, fmt_ix in 0usize..5,
        ) {
            let zones = ["UTC", "+05:30", "Europe/Berlin", "America/Chicago"];
            let formats = ["%Y-%m-%d %H:%M:%S%.f", "%d.%m.%Y %H:%M:%S%.f", "%m/%d/%Y %I:%M:%S%.f %p",
                           "rfc3339", "%Y-%m-%dT%H:%M:%S%.f%z"];
            let ts = jiff::Timestamp::from_millisecond(secs * 1000 + ms).unwrap();
            let tz = match zones[zone_ix] {
                "+05:30" => TimeZone::fixed(jiff::tz::offset(5).checked_add(
                    jiff::SignedDuration::from_mins(30)).unwrap()),
                name => TimeZone::get(name).unwrap(),
            };
            let z = ts.to_zoned(tz.clone());
            let f = formats[fmt_ix];
            let text = match f {
                "rfc3339" => z.strftime("%Y-%m-%dT%H:%M:%S%.3f%:z").to_string(),
                other => z.strftime(&other.replace("%.f", "%.3f")).to_string(),
            };
            let mut p = TimestampParser::new(f, zones[zone_ix], 0.0).unwrap();
            let (got, case) = p.parse(text.as_bytes()).unwrap();
            let has_offset = f == "rfc3339" || f.ends_with("%z");
            // A local time in a fold read alone takes the earlier offset: only then may it differ.
            let folded = matches!(case, Some(DstCase { resolution: DstResolution::AmbiguousEarlier, .. }));
            if has_offset || !folded {
                prop_assert_eq!(got, ts.as_millisecond(), "{}", text);
            } else {
                let earlier = z.datetime()
                    .to_zoned(tz).unwrap().timestamp().as_millisecond();
                prop_assert_eq!(got, earlier);
            }
        }
    }
}
