/*!
The findings as the short sentences of the API's `warnings` list.
*/

use super::QualityReport;
use crate::core::display::{duration_words, local_ms, local_time, render_parts, Fmt};
use crate::core::recommend::Part;
use crate::core::units::{PressureAbs, UnitSystem};
use crate::ingest::mapping::Quantity;

fn num(v: f64) -> String {
    if v == 0.0 {
        return "0".into();
    }
    let digits = (5 - v.abs().log10().floor() as i32).clamp(0, 6) as usize;
    let s = format!("{v:.digits$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// A unit as the mapping spells it (`bar_g`), as people write it (`bar(g)`).
fn unit_words(spelling: &str) -> String {
    use crate::core::unit_table::{find, LoggedQuantity};
    LoggedQuantity::ALL
        .iter()
        .find_map(|q| find(*q, spelling))
        .map_or_else(|| spelling.to_string(), |u| u.label.to_string())
}

fn plural(n: u64, one: &str, many: &str) -> String {
    if n == 1 {
        format!("1 {one}")
    } else {
        format!("{n} {many}")
    }
}

fn at_least(lower_bound: bool) -> &'static str {
    if lower_bound {
        "at least "
    } else {
        ""
    }
}

/// A reading of `quantity`, `si` as the analysis reads it (Pa abs with `atmosphere_pa`, m³/s
/// free air, K, W, J), as a figure the reader's units show (rounded as every page rounds it):
/// pressure, flow and temperature as figures, power and energy (the same in both systems) in words.
pub(super) fn reading_part(quantity: Quantity, si: f64, atmosphere_pa: f64) -> Part {
    use crate::core::recommend as text;
    match quantity {
        Quantity::Pressure => text::bar_g((si - atmosphere_pa) / crate::core::units::PA_PER_BAR),
        Quantity::Flow => text::flow(si * 60.0),
        Quantity::Temperature => text::temperature_c(si - crate::core::units::T_ZERO_C),
        Quantity::Power => crate::core::display::power_words(si).into(),
        Quantity::Energy => format!("{} kWh", crate::core::display::num(si / 3.6e6, 1)).into(),
    }
}

impl QualityReport {
    /// Short sentences (with units) for the API's `warnings` list, in SI: [`Self::warning_parts`]
    /// rendered in SI units.
    pub fn warnings(&self, tz: &str) -> Vec<String> {
        let fmt = Fmt::new(UnitSystem::Si, PressureAbs(self.atmosphere_pa));
        self.warning_parts(tz).iter().map(|p| render_parts(p, &fmt)).collect()
    }

    /// The warnings in parts (`warning_parts` of the API, one for one with `warnings`): a reading
    /// and the limit it broke are figures, each page shows them in its reader's units rounded as
    /// every figure; the value as the file logged it stays beside them in words, with its line,
    /// so that it can be found in the file. Every time in them is the site's local time in zone
    /// `tz`, with the zone named (`core::display::local_time`).
    pub fn warning_parts(&self, tz: &str) -> Vec<Vec<Part>> {
        let at = |t: &str| local_time(t, tz);
        let atm = self.atmosphere_pa;
        let mut w: Vec<Vec<Part>> = Vec::new();
        let f = &self.file;
        if f.gaps.count > 0 {
            let mut s = format!(
                "{}{} longer than 3x the {} logging interval",
                at_least(f.gaps.count_at_least),
                plural(f.gaps.count, "gap", "gaps"),
                duration_words(f.median_interval_s.unwrap_or(0.0))
            );
            if let Some(l) = f.gaps.longest_s {
                s += &format!("; the longest is {}", duration_words(l));
            }
            if let Some(g) = f.gaps.examples.first() {
                s += &format!(", the first starts {}", at(&g.start));
            }
            w.push(vec![s.into()]);
        }
        if let Some(a) = f.duplicate_timestamps.examples.first() {
            w.push(vec![Part::from(format!(
                "{} (first at line {}, {})",
                plural(f.duplicate_timestamps.count, "duplicate timestamp", "duplicate timestamps"),
                a.line,
                at(&a.time)
            ))]);
        }
        if let Some(a) = f.out_of_order.examples.first() {
            w.push(vec![Part::from(format!(
                "{} earlier than the row before (first at line {}, {})",
                plural(f.out_of_order.count, "timestamp is", "timestamps are"),
                a.line,
                at(&a.time)
            ))]);
        }
        if f.dst.gap_shifted > 0 {
            w.push(vec![Part::from(format!(
                "{} in the spring-forward gap of daylight saving did not exist and \
                 {} shifted forward by the gap",
                plural(f.dst.gap_shifted, "local time", "local times"),
                if f.dst.gap_shifted == 1 { "was" } else { "were" }
            ))]);
        }
        let amb = f.dst.ambiguous_earlier + f.dst.ambiguous_later;
        if amb > 0 {
            w.push(vec![Part::from(format!(
                "{} fell in the repeated fall-back hour: {} read as summer time (the earlier \
                 offset), {} as standard time after the clock stepped back",
                plural(amb, "local time", "local times"),
                f.dst.ambiguous_earlier,
                f.dst.ambiguous_later
            ))]);
        }
        for c in &self.channels {
            let name = &c.label;
            if let Some(line) = c.missing.examples.first() {
                w.push(vec![Part::from(format!(
                    "{name}: {} (first at line {line})",
                    plural(c.missing.count, "missing value", "missing values")
                ))]);
            }
            if let Some(m) = c.marked.examples.first() {
                let mut kinds: Vec<&str> = Vec::new();
                for e in &c.marked.examples {
                    if !kinds.contains(&e.text.as_str()) && kinds.len() < 3 {
                        kinds.push(&e.text);
                    }
                }
                let shown: Vec<String> = kinds.iter().map(|k| format!("{k:?}")).collect();
                w.push(vec![Part::from(format!(
                    "{name}: {} read as missing ({}; first at line {})",
                    plural(c.marked.count, "cell with a marker or text", "cells with a marker or text"),
                    shown.join(", "),
                    m.line
                ))]);
            }
            if c.gaps.count > 0 && c.gaps.count > f.gaps.count {
                w.push(vec![Part::from(format!(
                    "{name}: {}{} in its readings; the longest is {}",
                    at_least(c.gaps.count_at_least),
                    plural(c.gaps.count, "gap", "gaps"),
                    duration_words(c.gaps.longest_s.unwrap_or(0.0))
                ))]);
            }
            if let Some(fl) = c.flat_lines.examples.first() {
                let longest = c
                    .flat_lines
                    .examples
                    .iter()
                    .max_by(|a, b| a.duration_s.total_cmp(&b.duration_s))
                    .unwrap_or(fl);
                w.push(vec![
                    format!(
                        "{name}: {} of one repeated value; the longest is ",
                        plural(c.flat_lines.count, "flat stretch", "flat stretches")
                    )
                    .into(),
                    reading_part(c.quantity, longest.si, atm),
                    format!(" for {} from {}", duration_words(longest.duration_s), at(&longest.start)).into(),
                ]);
            }
            if let Some(o) = c.out_of_range.examples.first() {
                let mut p: Vec<Part> = vec![format!(
                    "{name}: {} out of range (",
                    plural(c.out_of_range.count, "reading", "readings")
                )
                .into()];
                p.extend(super::tracker::range_parts(c.quantity, o.below));
                p.push("), kept; the first is ".into());
                p.push(reading_part(c.quantity, o.si, atm));
                p.push(
                    format!(" at line {} (as logged: {} {})", o.line, num(o.value), unit_words(&c.unit))
                        .into(),
                );
                w.push(p);
            }
            for i in &c.implausible {
                let mut p: Vec<Part> = vec![format!("{name}: implausible: ").into()];
                p.extend(i.reason_parts.iter().cloned());
                p.push("; the highest is ".into());
                match c.highest.as_ref() {
                    Some(h) if h.line == i.line => p.push(reading_part(c.quantity, h.si, atm)),
                    _ => p.push(format!("{} {}", num(i.value), unit_words(&i.unit)).into()),
                }
                p.push(
                    format!(" at line {} (as logged: {} {})", i.line, num(i.value), unit_words(&i.unit))
                        .into(),
                );
                w.push(p);
            }
            if let Some(d) = c.counter_drops.examples.first() {
                w.push(vec![Part::from(format!(
                    "{name}: the counter went down {} (first a {} at line {}, {} {} -> {} {})",
                    plural(c.counter_drops.count, "time", "times"),
                    if d.kind == "rollover" { "roll-over" } else { "reset" },
                    d.line,
                    num(d.previous),
                    d.unit,
                    num(d.value),
                    d.unit
                ))]);
            }
        }
        w
    }
}

/// A file spanning less than this share of the audit's logged period (all its files together,
/// this one included) is reported: its figures cannot describe the period (common practice; the
/// threshold is ours).
pub const SMALL_SHARE_OF_PERIOD: f64 = 0.25;

/// Warnings on how a new file's span `[first, last]` (UTC ms) sits among the spans of the audit's
/// other files: when it overlaps none of them in time (readings of different times cannot be added
/// up into one system), and when it covers under [`SMALL_SHARE_OF_PERIOD`] of the logged period.
/// Times are the site's local time in zone `tz`, the zone named.
pub fn span_warnings(this: (i64, i64), others: &[(i64, i64)], tz: &str) -> Vec<String> {
    let t = |ms: i64| local_ms(ms, tz);
    let mut w = Vec::new();
    if others.is_empty() {
        return w;
    }
    let (first, last) = this;
    if !others.iter().any(|&(a, b)| a <= last && b >= first) {
        let (a, b) = others.iter().fold((i64::MAX, i64::MIN), |(a, b), &(x, y)| (a.min(x), b.max(y)));
        // The others' whole period would contain a file that lies between two of them, and the
        // sentence would contradict itself: such a file is placed between its two neighbours.
        let where_ = if a < first && b > last {
            let before = others.iter().map(|o| o.1).filter(|&e| e < first).max().unwrap_or(a);
            let after = others.iter().map(|o| o.0).filter(|&s| s > last).min().unwrap_or(b);
            format!(
                ": it lies in a gap between them, after one that ends {} and before one that starts {};",
                t(before),
                t(after)
            )
        } else {
            format!(" ({} to {}):", t(a), t(b))
        };
        w.push(format!(
            "this file ({} to {}) does not overlap in time any other file of the audit{where_} \
             readings of different times cannot be combined into figures of one system",
            t(first),
            t(last),
        ));
    }
    let start = others.iter().map(|o| o.0).fold(first, i64::min);
    let end = others.iter().map(|o| o.1).fold(last, i64::max);
    if end > start {
        let share = (last - first) as f64 / (end - start) as f64;
        if share < SMALL_SHARE_OF_PERIOD {
            w.push(format!(
                "this file covers {} % of the audit's logged period ({} to {}), under {:.0} %: \
                 its channels are missing from most of the period",
                crate::core::analysis::sufficiency::percent(share),
                t(start),
                t(end),
                SMALL_SHARE_OF_PERIOD * 100.0
            ));
        }
    }
    w
}

#[cfg(test)]
mod span_tests {
    use super::*;

    const DAY: i64 = 86_400_000;

    #[test]
    fn a_file_beside_the_others_in_time_is_reported_with_its_share() {
        // Others: days 0-7; this file: day 20 to 21. No overlap; 1 day of a 21-day period is 4.8 %.
        let w = span_warnings((20 * DAY, 21 * DAY), &[(0, 7 * DAY)], "UTC");
        assert_eq!(w.len(), 2, "{w:?}");
        assert!(
            w[0].starts_with(
                "this file (Wed 21 Jan 1970 00:00 UTC to Thu 22 Jan 1970 00:00 UTC) does not overlap"
            ),
            "{}",
            w[0]
        );
        assert!(w[1].starts_with("this file covers 4.8 % of the audit's logged period"), "{}", w[1]);
    }

    #[test]
    fn a_file_in_a_gap_between_the_others_is_placed_between_them() {
        // Others: days 0-7 and 30-37; this file: days 10-11. The others' whole period (days 0 to
        // 37) contains it, so it is placed after the one ending day 7 and before the one starting day 30.
        let w = span_warnings((10 * DAY, 11 * DAY), &[(0, 7 * DAY), (30 * DAY, 37 * DAY)], "UTC");
        assert_eq!(
            w[0],
            "this file (Sun 11 Jan 1970 00:00 UTC to Mon 12 Jan 1970 00:00 UTC) does not overlap in time any \
             other file of the audit: it lies in a gap between them, after one that ends Thu 8 Jan 1970 \
             00:00 UTC and before one that starts Sat 31 Jan 1970 00:00 UTC; readings of different times \
             cannot be combined into figures of one system"
        );
    }

    #[test]
    fn an_overlapping_file_of_the_same_week_gives_no_warning() {
        assert!(span_warnings((DAY, 7 * DAY), &[(0, 7 * DAY)], "UTC").is_empty());
        // The first file of an audit has nothing to be compared with.
        assert!(span_warnings((0, DAY), &[], "UTC").is_empty());
        // Two days of a week overlap but cover 2/7 = 28.6 %: above the 25 % threshold.
        assert!(span_warnings((0, 2 * DAY), &[(0, 7 * DAY)], "UTC").is_empty());
        // One day of it: 14.3 %, reported, though it overlaps.
        let w = span_warnings((0, DAY), &[(0, 7 * DAY)], "UTC");
        assert_eq!(w.len(), 1);
        assert!(w[0].starts_with("this file covers 14.3 %"), "{w:?}");
        // A minute of a year is 0.0002 %: said as under 0.1 %, never as 0.0 %.
        let w = span_warnings((0, 60_000), &[(0, 365 * DAY)], "UTC");
        assert!(w[0].starts_with("this file covers under 0.1 % of the audit's logged period"), "{w:?}");
    }

    #[test]
    fn span_times_are_the_sites_local_time_with_the_zone_named() {
        // 2026-11-23T20:05:00Z is 14:05 CST in Chicago (UTC-6 in winter, IANA tz database), as
        // Python's zoneinfo gives: datetime(2026,11,23,20,5,tzinfo=UTC).astimezone(ZoneInfo("America/Chicago")).
        let t = 1_795_464_300_000; // 2026-11-23T20:05:00Z
        let w = span_warnings((t, t + DAY), &[(t + 10 * DAY, t + 40 * DAY)], "America/Chicago");
        assert!(
            w[0].starts_with("this file (Mon 23 Nov 2026 14:05 CST to Tue 24 Nov 2026 14:05 CST)"),
            "{}",
            w[0]
        );
        assert!(!w.iter().any(|x| x.contains("T20:05") || x.contains('Z')), "{w:?}");
    }
}
