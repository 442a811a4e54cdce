/*!
The site's clock: each bin's weekday-hour cell in the site's local time (IANA time zone, UTC if
unknown), the weekday × hour profiles, and the times written in the summary.
*/

use crate::core::series::Grid;

/// A bin outside every cell (a time the clock cannot place).
pub(super) const NO_CELL: u8 = u8::MAX;

/// The weekday-hour cell of each bin, and whether the site's time zone was known.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Calendar {
    /// 0..168, Monday 00 first; [`NO_CELL`] where the time cannot be placed.
    pub cells: Vec<u8>,
    /// `false`: the time zone was unknown and UTC was used.
    pub tz_ok: bool,
}

/// The weekday-hour cell (0..168, Monday 00 first) of each bin in local time.
pub(super) fn calendar(grid: &Grid, timezone: &str) -> Calendar {
    let (tz, ok) = match jiff::tz::TimeZone::get(timezone) {
        Ok(tz) => (tz, true),
        Err(_) => (jiff::tz::TimeZone::UTC, false),
    };
    let cells = (0..grid.len)
        .map(|i| {
            let ms = grid.bin_start_ms(i);
            let Ok(ts) = jiff::Timestamp::from_millisecond(ms) else { return NO_CELL };
            let local_s = ms.div_euclid(1000) + i64::from(tz.to_offset(ts).seconds());
            let day = local_s.div_euclid(86_400);
            // 1970-01-01 was a Thursday (Monday = 0 -> Thursday = 3).
            let weekday = (day + 3).rem_euclid(7);
            let hour = local_s.rem_euclid(86_400) / 3600;
            (weekday * 24 + hour) as u8
        })
        .collect();
    Calendar { cells, tz_ok: ok }
}

/// Weekday × hour means of a series, scaled by `k`.
pub(super) fn weekday_hour(values: &[f32], cells: &[u8], k: f64) -> Vec<Vec<Option<f64>>> {
    let (mut sum, mut n) = ([0.0f64; 168], [0usize; 168]);
    for (&v, &c) in values.iter().zip(cells) {
        if v.is_finite() && c != NO_CELL {
            sum[c as usize] += v as f64;
            n[c as usize] += 1;
        }
    }
    (0..7)
        .map(|d| {
            (0..24).map(|h| (n[d * 24 + h] > 0).then(|| sum[d * 24 + h] / n[d * 24 + h] as f64 * k)).collect()
        })
        .collect()
}

/// An RFC 3339 time of ms since the epoch (empty if out of range).
pub(super) fn ts_string(ms: i64) -> String {
    jiff::Timestamp::from_millisecond(ms).map(|t| t.to_string()).unwrap_or_default()
}
