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

[`formats`] reads the text into a local civil time; [`zones`] resolves it to UTC.
*/

mod formats;
#[cfg(test)]
mod tests;
mod zones;

pub use formats::{days_from_civil, parse_written, Item, TimeFormat, Written};
pub use zones::{DstCase, DstResolution, Resolver, Zone};

use crate::ingest::IngestError;

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
