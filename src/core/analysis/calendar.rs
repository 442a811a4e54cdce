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

/// The log in the site's local time: its span in local clock hours (a log over a daylight-saving
/// change gains or loses the hour the clocks moved), and the mean of `values` over each whole local
/// week from its first bin (a week of which at least 167 local hours lie in the log, and at least
/// half its bins hold a value). A week over a daylight-saving change is a whole week: 167 or 169 h
/// of elapsed time, 168 h on the clock.
pub(super) fn local_weeks(grid: &Grid, timezone: &str, values: Option<&[f32]>) -> (f64, Vec<f64>) {
    const WEEK_MS: i64 = 7 * 86_400_000;
    const HOUR_MS: i64 = 3_600_000;
    if grid.len == 0 {
        return (0.0, Vec::new());
    }
    let tz = jiff::tz::TimeZone::get(timezone).unwrap_or(jiff::tz::TimeZone::UTC);
    let offset_ms = |ms: i64| {
        jiff::Timestamp::from_millisecond(ms).map_or(0, |t| i64::from(tz.to_offset(t).seconds()) * 1000)
    };
    let local0 = grid.start_ms + offset_ms(grid.start_ms);
    let local_end = grid.end_ms() + offset_ms(grid.end_ms());
    let local_hours = (local_end - local0) as f64 / HOUR_MS as f64;
    let Some(values) = values else { return (local_hours, Vec::new()) };
    let blocks = ((local_end - local0 + HOUR_MS) / WEEK_MS).max(0) as usize;
    let (mut sum, mut n) = (vec![0.0f64; blocks], vec![0usize; blocks]);
    // The offset changes only on the hour: look it up once per hour of bins.
    let (mut hour, mut off) = (i64::MIN, 0i64);
    for (i, &v) in values.iter().enumerate().take(grid.len) {
        let ms = grid.bin_start_ms(i);
        if ms.div_euclid(HOUR_MS) != hour {
            hour = ms.div_euclid(HOUR_MS);
            off = offset_ms(ms);
        }
        let b = ((ms + off - local0) / WEEK_MS) as usize;
        if b < blocks && v.is_finite() {
            sum[b] += v as f64;
            n[b] += 1;
        }
    }
    let bins_a_week = WEEK_MS as f64 / grid.step_ms.max(1) as f64;
    let means = (0..blocks)
        .filter(|&b| n[b] as f64 >= 0.5 * bins_a_week)
        .filter(|&b| {
            local_end.min(local0 + (b as i64 + 1) * WEEK_MS) - (local0 + b as i64 * WEEK_MS)
                >= WEEK_MS - HOUR_MS
        })
        .map(|b| sum[b] / n[b] as f64)
        .collect();
    (local_hours, means)
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
