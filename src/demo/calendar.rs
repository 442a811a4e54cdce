//! Time in the demo: the proleptic Gregorian calendar, the Europe/Berlin rule, the time stamps the
//! loggers write, and the plant's shifts by local weekday and hour.

use std::fmt::Write as _;

/// Monday 2026-03-09 00:00 CET as Unix seconds (UTC 2026-03-08T23:00:00Z).
pub(super) fn period_start_unix_s() -> i64 {
    days_from_civil(2026, 3, 9) * 86_400 - 3_600
}

// ---------------------------------------------------------------------------------------------------
// Calendar (proleptic Gregorian, Howard Hinnant's algorithms) and the Europe/Berlin rule (EU summer
// time: last Sunday of March 01:00 UTC to last Sunday of October 01:00 UTC, UTC+1 otherwise).

pub(super) fn days_from_civil(y: i64, m: u32, d: u32) -> i64 {
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let m = i64::from(m);
    let doy = (153 * (if m > 2 { m - 3 } else { m + 9 }) + 2) / 5 + i64::from(d) - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    era * 146_097 + doe - 719_468
}

/// Civil date (year, month, day) from days since 1970-01-01 (H. Hinnant's algorithm).
pub fn civil_from_days(z: i64) -> (i64, u32, u32) {
    let z = z + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    let y = yoe + era * 400 + i64::from(m <= 2);
    (y, m, d)
}

/// Weekday, 0 = Monday (1970-01-01 was a Thursday).
pub(super) fn weekday_monday0(days: i64) -> u32 {
    (days + 3).rem_euclid(7) as u32
}

fn last_sunday_unix_s(year: i64, month: u32) -> i64 {
    // March and October both have 31 days.
    let d31 = days_from_civil(year, month, 31);
    let sunday = d31 - i64::from((weekday_monday0(d31) + 1) % 7);
    sunday * 86_400
}

fn berlin_offset_s(unix_s: i64) -> i64 {
    let (year, _, _) = civil_from_days(unix_s.div_euclid(86_400));
    let summer_from = last_sunday_unix_s(year, 3) + 3_600;
    let summer_to = last_sunday_unix_s(year, 10) + 3_600;
    if (summer_from..summer_to).contains(&unix_s) {
        7_200
    } else {
        3_600
    }
}

/// Local (Europe/Berlin) day number and seconds into the day.
pub(super) fn berlin_local(unix_s: i64) -> (i64, i64) {
    let local = unix_s + berlin_offset_s(unix_s);
    (local.div_euclid(86_400), local.rem_euclid(86_400))
}

pub(super) fn push_rfc3339_utc(out: &mut String, unix_s: i64) {
    let (y, mo, d) = civil_from_days(unix_s.div_euclid(86_400));
    let s = unix_s.rem_euclid(86_400);
    let _ = write!(out, "{y:04}-{mo:02}-{d:02}T{:02}:{:02}:{:02}Z", s / 3600, s / 60 % 60, s % 60);
}

pub(super) fn rfc3339_utc(unix_s: i64) -> String {
    let mut s = String::new();
    push_rfc3339_utc(&mut s, unix_s);
    s
}

pub(super) fn push_berlin_dmy(out: &mut String, unix_s: i64) {
    let (day, s) = berlin_local(unix_s);
    let (y, mo, d) = civil_from_days(day);
    let _ = write!(out, "{d:02}.{mo:02}.{y:04} {:02}:{:02}:{:02}", s / 3600, s / 60 % 60, s % 60);
}

// ---------------------------------------------------------------------------------------------------
// Demand

/// Mean production draw of the early shift, the late shift and the Saturday shift, m³/min.
const SHIFT_1_M3_MIN: f64 = 17.5;
const SHIFT_2_M3_MIN: f64 = 12.0;
const SATURDAY_M3_MIN: f64 = 5.0;
/// Draw during a break, as a fraction of the shift's.
const BREAK_FACTOR: f64 = 0.6;

/// Production draw before noise, m³/min free air, by local weekday (0 = Monday) and second of day.
pub(super) fn production_base_m3_min(weekday: u32, second_of_day: i64) -> f64 {
    let h = second_of_day as f64 / 3600.0;
    match weekday {
        0..=4 => {
            if (6.0..14.0).contains(&h) {
                if (11.75..12.25).contains(&h) {
                    SHIFT_1_M3_MIN * BREAK_FACTOR
                } else {
                    SHIFT_1_M3_MIN
                }
            } else if (14.0..22.0).contains(&h) {
                if (18.0..18.5).contains(&h) {
                    SHIFT_2_M3_MIN * BREAK_FACTOR
                } else {
                    SHIFT_2_M3_MIN
                }
            } else {
                0.0
            }
        }
        5 if (6.0..12.0).contains(&h) => SATURDAY_M3_MIN,
        _ => 0.0,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_calendar_and_the_berlin_rule_hold() {
        // 2026-03-09 is a Monday; EU summer time 2026 runs from 29 March to 25 October, changing at
        // 01:00 UTC (Directive 2000/84/EC).
        let d = days_from_civil(2026, 3, 9);
        assert_eq!(weekday_monday0(d), 0);
        assert_eq!(civil_from_days(d), (2026, 3, 9));
        assert_eq!(civil_from_days(0), (1970, 1, 1));
        assert_eq!(days_from_civil(2000, 3, 1), 11_017);
        let change = days_from_civil(2026, 3, 29) * 86_400 + 3_600;
        assert_eq!(berlin_offset_s(change - 1), 3_600);
        assert_eq!(berlin_offset_s(change), 7_200);
        let back = days_from_civil(2026, 10, 25) * 86_400 + 3_600;
        assert_eq!(berlin_offset_s(back - 1), 7_200);
        assert_eq!(berlin_offset_s(back), 3_600);
        assert_eq!(rfc3339_utc(period_start_unix_s()), "2026-03-08T23:00:00Z");
    }
}
