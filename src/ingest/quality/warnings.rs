/*!
The findings as the short sentences of the API's `warnings` list.
*/

use super::QualityReport;

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

/// A duration for people: s, min, h or days.
pub fn human_duration(s: f64) -> String {
    if s < 120.0 {
        format!("{} s", num(s))
    } else if s < 7200.0 {
        format!("{} min", num(s / 60.0))
    } else if s < 172_800.0 {
        format!("{} h", num(s / 3600.0))
    } else {
        format!("{} days", num(s / 86_400.0))
    }
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

impl QualityReport {
    /// Short sentences (with units) for the API's `warnings` list.
    pub fn warnings(&self) -> Vec<String> {
        let mut w = Vec::new();
        let f = &self.file;
        if f.gaps.count > 0 {
            let mut s = format!(
                "{}{} longer than 3x the {} logging interval",
                at_least(f.gaps.count_at_least),
                plural(f.gaps.count, "gap", "gaps"),
                human_duration(f.median_interval_s.unwrap_or(0.0))
            );
            if let Some(l) = f.gaps.longest_s {
                s += &format!("; the longest is {}", human_duration(l));
            }
            if let Some(g) = f.gaps.examples.first() {
                s += &format!(", the first starts {}", g.start);
            }
            w.push(s);
        }
        if let Some(a) = f.duplicate_timestamps.examples.first() {
            w.push(format!(
                "{} (first at line {}, {})",
                plural(f.duplicate_timestamps.count, "duplicate timestamp", "duplicate timestamps"),
                a.line,
                a.time
            ));
        }
        if let Some(a) = f.out_of_order.examples.first() {
            w.push(format!(
                "{} earlier than the row before (first at line {}, {})",
                plural(f.out_of_order.count, "timestamp is", "timestamps are"),
                a.line,
                a.time
            ));
        }
        if f.dst.gap_shifted > 0 {
            w.push(format!(
                "{} in the spring-forward gap of daylight saving did not exist and \
                 {} shifted forward by the gap",
                plural(f.dst.gap_shifted, "local time", "local times"),
                if f.dst.gap_shifted == 1 { "was" } else { "were" }
            ));
        }
        let amb = f.dst.ambiguous_earlier + f.dst.ambiguous_later;
        if amb > 0 {
            w.push(format!(
                "{} fell in the repeated fall-back hour: {} read as summer time (the earlier \
                 offset), {} as standard time after the clock stepped back",
                plural(amb, "local time", "local times"),
                f.dst.ambiguous_earlier,
                f.dst.ambiguous_later
            ));
        }
        for c in &self.channels {
            let name = &c.label;
            if let Some(line) = c.missing.examples.first() {
                w.push(format!(
                    "{name}: {} (first at line {line})",
                    plural(c.missing.count, "missing value", "missing values")
                ));
            }
            if c.gaps.count > 0 && c.gaps.count > f.gaps.count {
                w.push(format!(
                    "{name}: {}{} in its readings; the longest is {}",
                    at_least(c.gaps.count_at_least),
                    plural(c.gaps.count, "gap", "gaps"),
                    human_duration(c.gaps.longest_s.unwrap_or(0.0))
                ));
            }
            if let Some(fl) = c.flat_lines.examples.first() {
                let longest = c
                    .flat_lines
                    .examples
                    .iter()
                    .max_by(|a, b| a.duration_s.total_cmp(&b.duration_s))
                    .unwrap_or(fl);
                w.push(format!(
                    "{name}: {} of one repeated value; the longest is {} {} for {} from {}",
                    plural(c.flat_lines.count, "flat stretch", "flat stretches"),
                    num(longest.value),
                    longest.unit,
                    human_duration(longest.duration_s),
                    longest.start
                ));
            }
            if let Some(o) = c.out_of_range.examples.first() {
                w.push(format!(
                    "{name}: {} out of range ({}), kept; the first is {} {} at line {}",
                    plural(c.out_of_range.count, "reading", "readings"),
                    o.reason,
                    num(o.value),
                    o.unit,
                    o.line
                ));
            }
            for i in &c.implausible {
                w.push(format!(
                    "{name}: implausible: {}; the highest is {} {} at line {}",
                    i.reason,
                    num(i.value),
                    i.unit,
                    i.line
                ));
            }
            if let Some(d) = c.counter_drops.examples.first() {
                w.push(format!(
                    "{name}: the counter went down {} (first a {} at line {}, {} {} -> {} {})",
                    plural(c.counter_drops.count, "time", "times"),
                    if d.kind == "rollover" { "roll-over" } else { "reset" },
                    d.line,
                    num(d.previous),
                    d.unit,
                    num(d.value),
                    d.unit
                ));
            }
        }
        w
    }
}
