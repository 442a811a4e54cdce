/*!
Finding the timestamp: one column, a date and a time column in either order, an interval
(`14.05.2026 08:00 - 14.05.2026 08:15`), or unix / spreadsheet numbers in a column whose name says
time; and day-first or month-first decided from the whole sample.

Rules:
- The first column (left to right) that reads with a candidate format wins; then a date column
  with its time column beside it (right of it or, as some level loggers write, left of it).
- An interval cell is read by its **start** (the row's period begins there; a mean over 00:00 to
  00:15 is stamped 00:00, as the analysis treats a reading as holding until the next one). The
  mapping can say `"interval": "end"`.
- Day-first or month-first (`03/02/2026`): a format that fails on some cell of the whole sample
  (a field above 12 anywhere in the head) is out; when both read every cell, the reading whose
  times run in order with steady steps wins (counting steps backwards or over 40 times the
  typical step: month-first `1/5 .. 1/11` read day-first jumps a month at every midnight); when
  both run the same, the sample cannot decide: day-first is proposed and flagged for the page to
  ask.
*/

use crate::ingest::mapping::IntervalEnd;
use crate::ingest::number::{parse_cell, Cell};
use crate::ingest::parse::interval_end;
use crate::ingest::timestamp::TimestampParser;

/// The candidate timestamp formats, in order of preference.
pub const FORMATS: &[&str] = &[
    "%Y-%m-%d %H:%M:%S",
    "%Y-%m-%d %H:%M:%S%.f",
    "%Y-%m-%dT%H:%M:%S",
    "rfc3339",
    "%Y-%m-%d %H:%M",
    "%Y/%m/%d %H:%M:%S",
    "%Y/%m/%d %H:%M:%S%.f",
    "%Y/%m/%d %H:%M",
    "%Y-%m-%d %I:%M:%S %p",
    "%d.%m.%Y %H:%M:%S",
    "%d.%m.%Y %H:%M:%S%.f",
    "%d.%m.%Y %H:%M",
    "%d.%m.%y %H:%M:%S",
    "%d.%m.%y %H:%M",
    "%d/%m/%Y %H:%M:%S",
    "%m/%d/%Y %H:%M:%S",
    "%d/%m/%Y %H:%M:%S%.f",
    "%m/%d/%Y %H:%M:%S%.f",
    "%d/%m/%Y %H:%M",
    "%m/%d/%Y %H:%M",
    "%m/%d/%Y %I:%M:%S %p",
    "%d/%m/%Y %I:%M:%S %p",
    "%m/%d/%Y %I:%M %p",
    "%d/%m/%Y %I:%M %p",
    "%d/%m/%y %H:%M:%S",
    "%m/%d/%y %H:%M:%S",
    "%d/%m/%y %H:%M",
    "%m/%d/%y %H:%M",
    "%d-%m-%Y %H:%M:%S",
    "%m-%d-%Y %H:%M:%S",
    "%d-%m-%Y %H:%M",
    "%m-%d-%Y %H:%M",
    "%d-%b-%Y %H:%M:%S",
    "%d-%b-%Y %H:%M",
    "%d %b %Y %H:%M:%S",
];

/// At most this many cells are tried against every format; the survivors are checked on all.
const PROBE: usize = 50;

/// What was found.
#[derive(Debug, Clone, PartialEq)]
pub struct Found {
    pub column: usize,
    pub time_column: Option<usize>,
    pub format: String,
    pub candidates: Vec<String>,
    pub interval: Option<IntervalEnd>,
    /// `day_first`, `month_first` for formats that have a twin, else `None`.
    pub date_order: Option<&'static str>,
    pub ambiguous: bool,
}

fn parser(format: &str) -> Option<TimestampParser> {
    TimestampParser::new(format, "UTC", 0.0).ok()
}

fn reads_all(format: &str, cells: &[&str]) -> bool {
    let Some(mut p) = parser(format) else { return false };
    !cells.is_empty() && cells.iter().all(|c| p.parse(c.as_bytes()).is_some())
}

/// The twin of a day-first format (month-first) and back, if it has one.
pub fn swap_day_month(f: &str) -> Option<String> {
    for (a, b) in [("%d/%m/", "%m/%d/"), ("%m/%d/", "%d/%m/"), ("%d-%m-", "%m-%d-"), ("%m-%d-", "%d-%m-")] {
        if f.starts_with(a) {
            return Some(f.replacen(a, b, 1));
        }
    }
    None
}

/// Steps backwards or longer than 40 typical steps, reading the cells with `format`.
fn odd_steps(format: &str, cells: &[&str]) -> usize {
    let Some(mut p) = parser(format) else { return usize::MAX };
    let times: Vec<i64> = cells.iter().filter_map(|c| p.parse(c.as_bytes()).map(|t| t.0)).collect();
    let mut steps: Vec<i64> = times.windows(2).map(|w| w[1] - w[0]).collect();
    if steps.is_empty() {
        return 0;
    }
    let mut pos: Vec<i64> = steps.iter().copied().filter(|s| *s > 0).collect();
    pos.sort_unstable();
    let typical = pos.get(pos.len() / 2).copied().unwrap_or(1);
    steps.retain(|s| *s < 0 || *s > typical.saturating_mul(40));
    steps.len()
}

/// The formats that read the probe, ordered, with day/month settled over all `cells`.
fn settle(probe: &[&str], cells: &[&str]) -> Option<(Vec<String>, Option<&'static str>, bool)> {
    let mut formats: Vec<String> =
        FORMATS.iter().filter(|f| reads_all(f, probe)).map(|f| f.to_string()).collect();
    if formats.is_empty() {
        return None;
    }
    formats.retain(|f| reads_all(f, cells));
    let first = formats.first()?.clone();
    let Some(twin) = swap_day_month(&first) else {
        return Some((formats, None, false));
    };
    let day_first = if first.starts_with("%d") { first.clone() } else { twin.clone() };
    let month_first = if first.starts_with("%d") { twin.clone() } else { first.clone() };
    let (chosen, ambiguous) = if !formats.contains(&twin) {
        (first, false)
    } else {
        let (d, m) = (odd_steps(&day_first, cells), odd_steps(&month_first, cells));
        match d.cmp(&m) {
            std::cmp::Ordering::Less => (day_first.clone(), false),
            std::cmp::Ordering::Greater => (month_first.clone(), false),
            std::cmp::Ordering::Equal => (day_first.clone(), true),
        }
    };
    formats.retain(|f| f != &chosen);
    formats.insert(0, chosen.clone());
    let order = if chosen == day_first { "day_first" } else { "month_first" };
    Some((formats, Some(order), ambiguous))
}

/// Find the timestamp among `ncols` columns of the data rows.
pub fn find(header: &[String], data: &[&Vec<String>], numeric: &[bool], decimal: u8) -> Option<Found> {
    let ncols = header.len();
    let cells_of = |i: usize| -> Vec<&str> {
        data.iter().filter_map(|r| r.get(i)).map(|s| s.trim()).filter(|s| !s.is_empty()).collect()
    };
    let joined = |date: usize, time: usize| -> Vec<String> {
        data.iter()
            .filter_map(|r| {
                let (d, t) = (r.get(date)?.trim(), r.get(time)?.trim());
                (!d.is_empty() || !t.is_empty()).then(|| format!("{d} {t}"))
            })
            .collect()
    };
    let found =
        |column, time_column, (candidates, date_order, ambiguous): (Vec<String>, _, bool), interval| {
            Some(Found {
                column,
                time_column,
                format: candidates[0].clone(),
                candidates,
                interval,
                date_order,
                ambiguous,
            })
        };
    for i in 0..ncols {
        let cells = cells_of(i);
        if cells.is_empty() {
            continue;
        }
        let probe = &cells[..cells.len().min(PROBE)];
        if let Some(s) = settle(probe, &cells) {
            return found(i, None, s, None);
        }
        // An interval: both ends read with one format; the start stamps the row.
        let starts: Option<Vec<&str>> = cells
            .iter()
            .map(|c| interval_end(c.as_bytes(), IntervalEnd::Start).and_then(|b| std::str::from_utf8(b).ok()))
            .collect();
        let ends: Option<Vec<&str>> = cells
            .iter()
            .map(|c| interval_end(c.as_bytes(), IntervalEnd::End).and_then(|b| std::str::from_utf8(b).ok()))
            .collect();
        if let (Some(starts), Some(ends)) = (starts, ends) {
            let probe = &starts[..starts.len().min(PROBE)];
            if let Some(s) = settle(probe, &starts) {
                if reads_all(&s.0[0], &ends) {
                    return found(i, None, s, Some(IntervalEnd::Start));
                }
            }
        }
        // A date column with its time column on either side.
        for other in [i + 1, i.wrapping_sub(1)] {
            if other >= ncols {
                continue;
            }
            let j = joined(i, other);
            let refs: Vec<&str> = j.iter().map(String::as_str).collect();
            let probe = &refs[..refs.len().min(PROBE)];
            if let Some(s) = settle(probe, &refs) {
                return found(i, Some(other), s, None);
            }
        }
        if numeric[i] {
            let name = header[i].to_lowercase();
            let timey =
                ["time", "zeit", "date", "datum", "epoch", "unix", "stamp"].iter().any(|w| name.contains(w));
            let vals: Vec<f64> = cells
                .iter()
                .filter_map(|c| match parse_cell(c.as_bytes(), decimal) {
                    Ok(Cell::Value(v)) => Some(v),
                    _ => None,
                })
                .collect();
            let within = |a: f64, b: f64| !vals.is_empty() && vals.iter().all(|v| (a..b).contains(v));
            let format = if !timey {
                None
            } else if within(1e12, 4.2e12) {
                Some("unix_ms")
            } else if within(1e9, 4.2e9) {
                Some("unix_s")
            } else if within(20_000.0, 80_000.0) {
                Some("excel_days")
            } else {
                None
            };
            if let Some(f) = format {
                return found(i, None, (vec![f.to_string()], None, false), None);
            }
        }
    }
    None
}

/// Each data row's time, seconds since the epoch (UTC as read; only steps matter), where the
/// found timestamp reads.
pub fn row_seconds(f: &Found, data: &[&Vec<String>]) -> Vec<Option<f64>> {
    let Some(mut p) = parser(&f.format) else { return vec![None; data.len()] };
    data.iter()
        .map(|r| {
            let d = r.get(f.column)?.trim();
            let cell = match f.time_column {
                Some(t) => format!("{d} {}", r.get(t)?.trim()),
                None => d.to_string(),
            };
            let cell = match f.interval {
                Some(end) => interval_end(cell.as_bytes(), end)?.to_vec(),
                None => cell.into_bytes(),
            };
            p.parse(&cell).map(|(ms, _)| ms as f64 / 1e3)
        })
        .collect()
}

/// The rows a date reading shows: the first few.
pub const READING_ROWS: usize = 3;

/// One way of reading the dates of a file's first rows: its format, the format in words, and how
/// each of the first rows reads with it in the site's zone.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct DateReading {
    pub format: String,
    /// "day/month/year, hh:mm:ss".
    pub words: String,
    /// Whether every cell given reads with this format.
    pub reads_all: bool,
    pub rows: Vec<ReadRow>,
}

/// One row's time as written and as it will be read.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ReadRow {
    pub text: String,
    /// "Mon 23 Nov 2026 14:05:00 CST, America/Chicago"; `None` when the format does not read it.
    pub reads_as: Option<String>,
}

/// A timestamp format in words, the date's order first: `%d/%m/%Y %H:%M:%S` is
/// "day/month/year, hh:mm:ss".
pub fn format_words(format: &str) -> String {
    match format {
        "rfc3339" => return "year-month-day, hh:mm:ss and the UTC offset (ISO 8601)".into(),
        "unix_s" | "unix" | "epoch" | "epoch_s" => {
            return "seconds since 1970-01-01 00:00 UTC (Unix time)".into()
        }
        "unix_ms" | "epoch_ms" => return "milliseconds since 1970-01-01 00:00 UTC (Unix time)".into(),
        _ => {}
    }
    let split = format.find([' ', 'T']).unwrap_or(format.len());
    let (date, time) = format.split_at(split);
    let mut words = date
        .replace("%d", "day")
        .replace("%m", "month")
        .replace("%b", "month name")
        .replace("%Y", "year")
        .replace("%y", "two-digit year");
    let time = time.trim_start_matches(['T', ' ']);
    if !time.is_empty() {
        let t = time
            .replace("%H", "hh")
            .replace("%I", "hh")
            .replace("%M", "mm")
            .replace("%S", "ss")
            .replace("%.f", ".fff")
            .replace("%p", "AM/PM");
        words = format!("{words}, {t}");
    }
    if words.contains('%') {
        format!("as written: {format}")
    } else {
        words
    }
}

/// How the first rows' times read under every candidate format that reads all of `cells` (the
/// timestamp column's first cells, a time column's cell joined after a space, as the parser
/// joins them), `chosen` first (kept even when it does not read them), a local time read in the
/// logger's zone `timezone` (IANA) and shown in the site's, `site` ("Mon 23 Nov 2026 07:05:00 CST,
/// America/Chicago" for 14:05 logged in Berlin), so a person sees what each reading will mean on
/// the site's clock. An interval cell is read by `interval`'s end. A zone that is not one is an
/// error in words.
pub fn date_readings(
    cells: &[String],
    (timezone, site): (&str, &str),
    chosen: Option<&str>,
    interval: Option<IntervalEnd>,
) -> Result<Vec<DateReading>, String> {
    let zone_ok = TimestampParser::new("%Y-%m-%d %H:%M:%S", timezone, 0.0).is_ok();
    if !zone_ok {
        return Err(format!("{timezone:?} is not a time zone of the IANA list (such as America/Chicago)"));
    }
    let cells: Vec<String> = cells
        .iter()
        .map(|c| c.trim())
        .filter(|c| !c.is_empty())
        .take(PROBE)
        .map(|c| match interval {
            Some(end) => interval_end(c.as_bytes(), end)
                .map_or_else(|| c.to_string(), |b| String::from_utf8_lossy(b).into_owned()),
            None => c.to_string(),
        })
        .collect();
    let refs: Vec<&str> = cells.iter().map(String::as_str).collect();
    let mut formats: Vec<String> =
        chosen.filter(|c| !c.trim().is_empty()).map(|c| vec![c.to_string()]).unwrap_or_default();
    if let Some((found, _, _)) = settle(&refs, &refs) {
        formats.extend(found);
    }
    let mut seen = std::collections::HashSet::new();
    formats.retain(|f| seen.insert(f.clone()));
    Ok(formats
        .into_iter()
        .filter_map(|format| {
            let mut p = TimestampParser::new(&format, timezone, 0.0).ok()?;
            let reads_all = reads_all(&format, &refs);
            let rows = cells
                .iter()
                .take(READING_ROWS)
                .map(|c| ReadRow {
                    text: c.clone(),
                    reads_as: p.parse(c.as_bytes()).map(|(ms, _)| {
                        format!("{}, {site}", crate::core::display::local_ms_seconds(ms, site))
                    }),
                })
                .collect();
            Some(DateReading { words: format_words(&format), format, reads_all, rows })
        })
        .collect())
}

#[cfg(test)]
mod reading_tests {
    use super::*;

    #[test]
    fn formats_read_in_words() {
        assert_eq!(format_words("%d/%m/%Y %H:%M:%S"), "day/month/year, hh:mm:ss");
        assert_eq!(format_words("%m/%d/%Y %I:%M %p"), "month/day/year, hh:mm AM/PM");
        assert_eq!(format_words("%Y-%m-%dT%H:%M:%S"), "year-month-day, hh:mm:ss");
        assert_eq!(format_words("%d-%b-%Y %H:%M"), "day-month name-year, hh:mm");
        assert_eq!(format_words("%s"), "as written: %s");
        // A walk saw the option "unix_s" in the list of how the dates are written.
        assert_eq!(format_words("unix_s"), "seconds since 1970-01-01 00:00 UTC (Unix time)");
        assert_eq!(format_words("unix_ms"), "milliseconds since 1970-01-01 00:00 UTC (Unix time)");
    }

    #[test]
    fn a_day_first_file_offers_its_readings_and_shows_the_first_rows_in_the_sites_zone() {
        // 23/11/2026 14:05:00 day first is Monday 23 November 2026 (a Monday by the Gregorian
        // calendar: Python's datetime.date(2026, 11, 23).strftime("%a") gives "Mon"); in Chicago
        // in November the zone is CST (UTC-6, IANA tz database).
        let cells: Vec<String> =
            ["23/11/2026 14:05:00", "23/11/2026 14:06:00", "23/11/2026 14:07:00"].map(String::from).to_vec();
        let r = date_readings(&cells, ("America/Chicago", "America/Chicago"), None, None).unwrap();
        assert_eq!(r[0].format, "%d/%m/%Y %H:%M:%S");
        assert_eq!(r[0].words, "day/month/year, hh:mm:ss");
        assert!(r[0].reads_all);
        assert_eq!(r[0].rows[0].reads_as.as_deref(), Some("Mon 23 Nov 2026 14:05:00 CST, America/Chicago"));
        // Month first cannot read a 23rd month: not offered.
        assert!(!r.iter().any(|x| x.format.starts_with("%m/%d")), "{r:?}");
        // A date both ways (3 February or 2 March) offers both readings.
        let both: Vec<String> = ["03/02/2026 08:00:00", "03/02/2026 08:01:00"].map(String::from).to_vec();
        let r = date_readings(&both, ("Europe/Berlin", "Europe/Berlin"), None, None).unwrap();
        let words: Vec<&str> = r.iter().map(|x| x.words.as_str()).collect();
        assert!(
            words.contains(&"day/month/year, hh:mm:ss") && words.contains(&"month/day/year, hh:mm:ss"),
            "{words:?}"
        );
        // Day first: Tuesday 3 February; month first: Monday 2 March (Python's datetime.date gives
        // the weekdays); CET (UTC+1) in Berlin in both months (IANA tz database).
        let day_first = r.iter().find(|x| x.format.starts_with("%d/%m")).unwrap();
        assert_eq!(day_first.rows[0].reads_as.as_deref(), Some("Tue 3 Feb 2026 08:00:00 CET, Europe/Berlin"));
        let month_first = r.iter().find(|x| x.format.starts_with("%m/%d")).unwrap();
        assert_eq!(
            month_first.rows[0].reads_as.as_deref(),
            Some("Mon 2 Mar 2026 08:00:00 CET, Europe/Berlin")
        );
        // A chosen format that does not read the cells is kept first and says so.
        let r = date_readings(&cells, ("UTC", "UTC"), Some("%Y-%m-%d %H:%M:%S"), None).unwrap();
        assert_eq!(r[0].rows[0].reads_as, None);
        assert!(!r[0].reads_all);
        assert!(date_readings(&cells, ("CST", "UTC"), None, None).is_err());
        // Logged in Berlin (CET, UTC+1), shown on a Chicago site's clock (CST, UTC-6): 14:05 is
        // 07:05 there (Python: datetime(2026,11,23,14,5,tzinfo=ZoneInfo("Europe/Berlin"))
        // .astimezone(ZoneInfo("America/Chicago"))).
        let r = date_readings(&cells, ("Europe/Berlin", "America/Chicago"), None, None).unwrap();
        assert_eq!(r[0].rows[0].reads_as.as_deref(), Some("Mon 23 Nov 2026 07:05:00 CST, America/Chicago"));
    }
}
