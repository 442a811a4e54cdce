/*!
Data-quality findings collected in the one pass over a logger file.

Memory is bounded whatever the file's length: counts, and at most [`MAX_EXAMPLES`] examples of
each finding. Findings never reject a file (only unreadable input does, in `parse`); they are
reported, and summarised by [`QualityReport::warnings`] into the API's `warnings` list.

Per file: the median logging interval, gaps, duplicate and out-of-order timestamps, blank lines and
daylight-saving cases with how each was resolved. Per channel: missing cells, gaps in that
channel's readings, flat lines, values out of physical range, and counter resets/roll-overs.

Rules (common practice in reviewing logger data; the thresholds are ours, documented here):
- **Gap**: a spacing longer than 3x the median interval. The median comes from a histogram of the
  distinct intervals (capped at 4096 distinct values; beyond that rare values are left out of the
  median). The longest gap is exact, and so is the gap count while the file has fewer distinct
  spacings than the cap (always, for a logger with a fixed interval); the listed examples are the
  first gaps in file order, from candidates kept while reading (spacings above 2x the running
  typical interval).
- **Flat line**: the same value for at least 30 min and at least 30 readings in a row (a stuck
  sensor, or a compressor that is off: both worth a look).
- **Out of range** (kept, reported): power below -0.5 kW, flow below -0.05 m³/min (negative
  beyond noise), pressure above 100 bar g, temperature outside -50..200 °C, a negative counter.
- **Counter decrease**: an energy counter that goes down. A *roll-over* when the previous value was
  at least 90 % of the next power of ten (in the logged unit) and the new one below 10 % of it
  (a register wrapping at 99999 kWh, say); any other decrease is a *reset*.
*/

use crate::core::units::{PA_PER_BAR, T_ZERO_C};
use crate::ingest::mapping::{ChannelDef, Converter, Quantity};
use crate::ingest::timestamp::{format_local_ms, format_utc_ms, DstCase, DstResolution};
use serde::Serialize;
use std::collections::HashMap;

/// Examples kept per finding.
pub const MAX_EXAMPLES: usize = 20;
const MAX_DISTINCT_INTERVALS: usize = 4096;
const MAX_GAP_CANDIDATES: usize = 256;
const FLAT_MIN_MS: i64 = 30 * 60 * 1000;
const FLAT_MIN_READINGS: u64 = 30;

/// A count and the first few examples.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Findings<T> {
    pub count: u64,
    pub examples: Vec<T>,
}

impl<T> Default for Findings<T> {
    fn default() -> Self {
        Self { count: 0, examples: Vec::new() }
    }
}

impl<T> Findings<T> {
    fn push(&mut self, t: T) {
        self.push_with(|| t);
    }

    /// Count one, and build the example only while there is room (formatting times per row
    /// would cost more than the parse on a file full of one finding).
    #[inline]
    fn push_with(&mut self, f: impl FnOnce() -> T) {
        self.count += 1;
        if self.examples.len() < MAX_EXAMPLES {
            self.examples.push(f());
        }
    }
}

/// A place in the file.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct At {
    pub line: u64,
    pub time: String,
}

/// One gap.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Gap {
    pub start: String,
    pub end: String,
    pub duration_s: f64,
}

/// Gaps in a time series.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct GapReport {
    pub count: u64,
    /// The threshold used: 3x the median interval.
    pub threshold_s: Option<f64>,
    pub longest_s: Option<f64>,
    pub examples: Vec<Gap>,
}

/// A stretch of one repeated value.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FlatLine {
    pub start: String,
    pub end: String,
    pub duration_s: f64,
    pub readings: u64,
    /// In the logged unit (`unit`).
    pub value: f64,
    pub unit: String,
}

/// A reading outside its physical range.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OutOfRange {
    pub line: u64,
    pub time: String,
    pub value: f64,
    pub unit: String,
    pub reason: String,
}

/// An energy counter going down.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CounterDrop {
    pub line: u64,
    pub time: String,
    pub previous: f64,
    pub value: f64,
    pub unit: String,
    /// `reset` or `rollover`.
    pub kind: String,
}

/// A daylight-saving case and its resolution.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct DstFinding {
    pub line: u64,
    pub local_time: String,
    pub utc: String,
    pub utc_offset_s: i32,
    /// `ambiguous_earlier_offset`, `ambiguous_later_offset` or `gap_shifted_forward`.
    pub resolution: String,
}

/// Daylight-saving cases met.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct DstReport {
    pub ambiguous_earlier: u64,
    pub ambiguous_later: u64,
    pub gap_shifted: u64,
    pub examples: Vec<DstFinding>,
}

/// Per-file findings.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct FileQuality {
    pub rows: u64,
    pub blank_lines: u64,
    pub median_interval_s: Option<f64>,
    pub gaps: GapReport,
    pub duplicate_timestamps: Findings<At>,
    pub out_of_order: Findings<At>,
    pub dst: DstReport,
}

/// Per-channel findings.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ChannelQuality {
    pub label: String,
    pub quantity: Quantity,
    pub compressor: Option<String>,
    pub unit: String,
    pub readings: u64,
    /// Lines with a missing-value cell.
    pub missing: Findings<u64>,
    pub gaps: GapReport,
    pub flat_lines: Findings<FlatLine>,
    pub out_of_range: Findings<OutOfRange>,
    pub counter_drops: Findings<CounterDrop>,
}

/// Everything found.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct QualityReport {
    pub file: FileQuality,
    pub channels: Vec<ChannelQuality>,
}

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

impl QualityReport {
    /// Short sentences (with units) for the API's `warnings` list.
    pub fn warnings(&self) -> Vec<String> {
        let mut w = Vec::new();
        let f = &self.file;
        if f.gaps.count > 0 {
            let mut s = format!(
                "{} longer than 3x the {} logging interval",
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
                    "{name}: {} in its readings; the longest is {}",
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

/// Spacing statistics of one time series, bounded memory.
#[derive(Debug, Clone, Default)]
struct Intervals {
    last_t: Option<i64>,
    /// Distinct interval (ms) -> count; `last` caches the most recent one (the common case: a
    /// logger's fixed interval) so the map is touched only when the spacing changes.
    hist: HashMap<i64, u64>,
    last: (i64, u64),
    best: (i64, u64),
    longest: Option<(i64, i64)>,
    candidates: Vec<(i64, i64)>,
}

impl Intervals {
    #[inline]
    fn observe(&mut self, t: i64) {
        let Some(prev) = self.last_t.replace(t) else {
            return;
        };
        let dt = t - prev;
        if dt <= 0 {
            return;
        }
        if dt == self.last.0 {
            self.last.1 += 1;
        } else {
            self.flush_last();
            match self.hist.get(&dt) {
                Some(&n) => self.last = (dt, n + 1),
                None if self.hist.len() < MAX_DISTINCT_INTERVALS => self.last = (dt, 1),
                None => self.last = (0, 0), // capped: left out of the median
            }
        }
        if self.last.0 == dt && self.last.1 > self.best.1 {
            self.best = self.last;
        }
        if self.longest.is_none_or(|l| dt > l.1) {
            self.longest = Some((prev, dt));
        }
        // Warm-up: until one interval has been seen 16 times, keep everything as a candidate.
        if (self.best.1 < 16 || dt > 2 * self.best.0) && self.candidates.len() < MAX_GAP_CANDIDATES {
            self.candidates.push((prev, dt));
        }
    }

    fn flush_last(&mut self) {
        if self.last.1 > 0 {
            self.hist.insert(self.last.0, self.last.1);
        }
    }

    /// The histogram including the cached interval, sorted by interval.
    fn sorted(&self) -> Vec<(i64, u64)> {
        let mut h: Vec<(i64, u64)> = self.hist.iter().map(|(&k, &v)| (k, v)).collect();
        if self.last.1 > 0 {
            match h.iter_mut().find(|e| e.0 == self.last.0) {
                Some(e) => e.1 = self.last.1,
                None => h.push(self.last),
            }
        }
        h.sort_unstable();
        h
    }

    fn median_ms(&self) -> Option<i64> {
        let h = self.sorted();
        let total: u64 = h.iter().map(|s| s.1).sum();
        if total == 0 {
            return None;
        }
        let half = total.div_ceil(2);
        let mut acc = 0;
        for (dt, n) in h {
            acc += n;
            if acc >= half {
                return Some(dt);
            }
        }
        None
    }

    fn report(&self, median_ms: Option<i64>) -> GapReport {
        let Some(m) = median_ms else {
            return GapReport::default();
        };
        let thr = 3 * m;
        let h = self.sorted();
        let mut count: u64 = h.iter().filter(|s| s.0 > thr).map(|s| s.1).sum();
        if let Some(l) = self.longest {
            // A longest gap outside the capped histogram still counts.
            if l.1 > thr && !h.iter().any(|s| s.0 == l.1) {
                count += 1;
            }
        }
        let examples = self
            .candidates
            .iter()
            .filter(|c| c.1 > thr)
            .take(MAX_EXAMPLES)
            .map(|&(s, dt)| Gap {
                start: format_utc_ms(s),
                end: format_utc_ms(s + dt),
                duration_s: dt as f64 / 1000.0,
            })
            .collect();
        GapReport {
            count,
            threshold_s: Some(thr as f64 / 1000.0),
            longest_s: self.longest.filter(|l| l.1 > thr).map(|l| l.1 as f64 / 1000.0),
            examples,
        }
    }
}

#[derive(Debug, Clone)]
struct Run {
    value: f64,
    start_t: i64,
    last_t: i64,
    count: u64,
}

#[derive(Debug, Clone)]
struct ChannelTracker {
    q: ChannelQuality,
    conv: Converter,
    display_unit: String,
    intervals: Intervals,
    run: Option<Run>,
    prev_counter: Option<f64>,
    range: Range,
}

#[derive(Debug, Clone, Copy)]
struct Range {
    min_si: f64,
    max_si: f64,
    below: &'static str,
    above: &'static str,
}

fn range_for(q: Quantity, atmosphere_pa: f64) -> Range {
    let none = f64::INFINITY;
    match q {
        Quantity::Power => Range { min_si: -500.0, max_si: none, below: "negative power", above: "" },
        Quantity::Flow => Range { min_si: -0.05 / 60.0, max_si: none, below: "negative flow", above: "" },
        Quantity::Pressure => Range {
            min_si: -none,
            max_si: 100.0 * PA_PER_BAR + atmosphere_pa,
            below: "",
            above: "above 100 bar g",
        },
        Quantity::Temperature => Range {
            min_si: T_ZERO_C - 50.0,
            max_si: T_ZERO_C + 200.0,
            below: "below -50 c",
            above: "above 200 c",
        },
        Quantity::Energy => Range { min_si: 0.0, max_si: none, below: "negative counter", above: "" },
    }
}

/// Collects findings while a file is parsed.
#[derive(Debug, Clone)]
pub struct QualityTracker {
    file: FileQuality,
    intervals: Intervals,
    last_t: Option<i64>,
    channels: Vec<ChannelTracker>,
}

impl QualityTracker {
    /// A tracker for the plan's channels with their converters (`atmosphere_pa` for the 100 bar g
    /// limit).
    pub fn new(channels: &[ChannelDef], converters: &[Converter], atmosphere_pa: f64) -> Self {
        let channels = channels
            .iter()
            .zip(converters)
            .map(|(c, conv)| {
                let display_unit = match conv {
                    Converter::Current { .. } => "kW".to_string(),
                    Converter::Linear { .. } => c.unit.clone(),
                };
                ChannelTracker {
                    q: ChannelQuality {
                        label: c.label.clone(),
                        quantity: c.quantity,
                        compressor: c.compressor.clone(),
                        unit: c.unit.clone(),
                        readings: 0,
                        missing: Findings::default(),
                        gaps: GapReport::default(),
                        flat_lines: Findings::default(),
                        out_of_range: Findings::default(),
                        counter_drops: Findings::default(),
                    },
                    conv: *conv,
                    display_unit,
                    intervals: Intervals::default(),
                    run: None,
                    prev_counter: None,
                    range: range_for(c.quantity, atmosphere_pa),
                }
            })
            .collect();
        Self { file: FileQuality::default(), intervals: Intervals::default(), last_t: None, channels }
    }

    pub fn blank_line(&mut self) {
        self.file.blank_lines += 1;
    }

    /// A data row with its UTC time.
    #[inline]
    pub fn row(&mut self, line: u64, t_ms: i64) {
        self.file.rows += 1;
        if let Some(prev) = self.last_t {
            if t_ms == prev {
                self.file.duplicate_timestamps.push_with(|| At { line, time: format_utc_ms(t_ms) });
            } else if t_ms < prev {
                self.file.out_of_order.push_with(|| At { line, time: format_utc_ms(t_ms) });
            }
        }
        self.last_t = Some(t_ms);
        self.intervals.observe(t_ms);
    }

    /// A daylight-saving case on a line.
    pub fn dst(&mut self, line: u64, case: DstCase, utc_ms: i64) {
        let d = &mut self.file.dst;
        let resolution = match case.resolution {
            DstResolution::AmbiguousEarlier => {
                d.ambiguous_earlier += 1;
                "ambiguous_earlier_offset"
            }
            DstResolution::AmbiguousLater => {
                d.ambiguous_later += 1;
                "ambiguous_later_offset"
            }
            DstResolution::GapShiftedForward => {
                d.gap_shifted += 1;
                "gap_shifted_forward"
            }
        };
        if d.examples.len() < MAX_EXAMPLES {
            d.examples.push(DstFinding {
                line,
                local_time: format_local_ms(case.local_ms),
                utc: format_utc_ms(utc_ms),
                utc_offset_s: case.offset_s,
                resolution: resolution.into(),
            });
        }
    }

    /// A missing-value cell.
    pub fn missing(&mut self, channel: usize, line: u64) {
        self.channels[channel].q.missing.push(line);
    }

    /// A reading in SI.
    #[inline]
    pub fn reading(&mut self, channel: usize, line: u64, t_ms: i64, si: f64) {
        let c = &mut self.channels[channel];
        c.q.readings += 1;
        c.intervals.observe(t_ms);
        // Flat lines.
        match &mut c.run {
            Some(r) if r.value == si => {
                r.count += 1;
                r.last_t = t_ms;
            }
            run => {
                if let Some(r) = run.take() {
                    Self::close_run(&mut c.q, &c.conv, &c.display_unit, &r);
                }
                *run = Some(Run { value: si, start_t: t_ms, last_t: t_ms, count: 1 });
            }
        }
        // Range.
        if si < c.range.min_si || si > c.range.max_si {
            let reason = if si < c.range.min_si { c.range.below } else { c.range.above };
            let (conv, unit) = (&c.conv, &c.display_unit);
            c.q.out_of_range.push_with(|| OutOfRange {
                line,
                time: format_utc_ms(t_ms),
                value: conv.to_logged(si),
                unit: unit.clone(),
                reason: reason.into(),
            });
        }
        // Counters.
        if c.q.quantity == Quantity::Energy {
            if let Some(prev) = c.prev_counter {
                if si < prev {
                    let (p, v) = (c.conv.to_logged(prev), c.conv.to_logged(si));
                    let next_pow = 10f64.powf(p.abs().max(1.0).log10().floor() + 1.0);
                    let kind = if p >= 0.9 * next_pow && v < 0.1 * next_pow { "rollover" } else { "reset" };
                    let unit = &c.display_unit;
                    c.q.counter_drops.push_with(|| CounterDrop {
                        line,
                        time: format_utc_ms(t_ms),
                        previous: p,
                        value: v,
                        unit: unit.clone(),
                        kind: kind.into(),
                    });
                }
            }
            c.prev_counter = Some(si);
        }
    }

    fn close_run(q: &mut ChannelQuality, conv: &Converter, unit: &str, r: &Run) {
        if r.last_t - r.start_t >= FLAT_MIN_MS && r.count >= FLAT_MIN_READINGS {
            q.flat_lines.push_with(|| FlatLine {
                start: format_utc_ms(r.start_t),
                end: format_utc_ms(r.last_t),
                duration_s: (r.last_t - r.start_t) as f64 / 1000.0,
                readings: r.count,
                value: conv.to_logged(r.value),
                unit: unit.to_string(),
            });
        }
    }

    /// The median row interval so far, s.
    pub fn median_interval_s(&self) -> Option<f64> {
        self.intervals.median_ms().map(|m| m as f64 / 1000.0)
    }

    /// Close open runs and build the report.
    pub fn finish(mut self) -> QualityReport {
        let median = self.intervals.median_ms();
        self.file.median_interval_s = median.map(|m| m as f64 / 1000.0);
        self.file.gaps = self.intervals.report(median);
        let channels = self
            .channels
            .into_iter()
            .map(|mut c| {
                if let Some(r) = c.run.take() {
                    Self::close_run(&mut c.q, &c.conv, &c.display_unit, &r);
                }
                // A channel's gaps are judged against the file's interval: a channel logged every
                // row has none beyond the file's own.
                c.q.gaps = c.intervals.report(median.or_else(|| c.intervals.median_ms()));
                c.q
            })
            .collect();
        QualityReport { file: self.file, channels }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn chan(q: Quantity, unit: &str) -> ChannelDef {
        ChannelDef {
            quantity: q,
            compressor: Some("C1".into()),
            label: format!("C1 {unit}"),
            unit: unit.into(),
            column_index: 1,
        }
    }

    #[test]
    fn gaps_duplicates_and_out_of_order_at_one_second() {
        let ch = [chan(Quantity::Power, "kW")];
        let conv = [Converter::Linear { scale: 1000.0, offset: 0.0 }];
        let mut q = QualityTracker::new(&ch, &conv, 101_325.0);
        let mut t = 0i64;
        let mut line = 1;
        let mut step = |q: &mut QualityTracker, t: i64| {
            line += 1;
            q.row(line, t);
            q.reading(0, line, t, 5000.0 + (t % 7) as f64);
        };
        for _ in 0..100 {
            t += 1000;
            step(&mut q, t);
        }
        t += 60_000; // a one-minute gap: > 3 x 1 s
        step(&mut q, t);
        step(&mut q, t); // duplicate
        step(&mut q, t - 500); // out of order
        for _ in 0..10 {
            t += 1000;
            step(&mut q, t);
        }
        let r = q.finish();
        assert_eq!(r.file.median_interval_s, Some(1.0));
        assert_eq!(r.file.gaps.count, 1);
        assert_eq!(r.file.gaps.longest_s, Some(60.0));
        assert_eq!(r.file.gaps.examples[0].start, "1970-01-01T00:01:40Z");
        assert_eq!(r.file.duplicate_timestamps.count, 1);
        assert_eq!(r.file.out_of_order.count, 1);
        let w = r.warnings();
        assert!(
            w[0].starts_with("1 gap longer than 3x the 1 s logging interval; the longest is 60 s"),
            "{w:?}"
        );
        assert!(w.iter().any(|s| s.starts_with("1 duplicate timestamp (first at line 103")), "{w:?}");
    }

    #[test]
    fn flat_line_needs_thirty_minutes_and_thirty_readings() {
        let ch = [chan(Quantity::Pressure, "bar_g")];
        let conv = [Converter::Linear { scale: 1e5, offset: 101_325.0 }];
        let mut q = QualityTracker::new(&ch, &conv, 101_325.0);
        // 40 readings 1 min apart at 7 bar g: 39 min, flat. Then 20 readings at 6 bar g 2 min apart
        // (38 min but only 20 readings): not flat.
        for i in 0..40 {
            q.reading(0, i + 2, i as i64 * 60_000, 7e5 + 101_325.0);
        }
        for i in 40..60 {
            q.reading(0, i + 2, (40 + (i as i64 - 40) * 2) * 60_000, 6e5 + 101_325.0);
        }
        let r = q.finish();
        let f = &r.channels[0].flat_lines;
        assert_eq!(f.count, 1);
        assert_eq!(f.examples[0].readings, 40);
        assert!((f.examples[0].value - 7.0).abs() < 1e-12);
        assert_eq!(f.examples[0].duration_s, 39.0 * 60.0);
        assert!(r.warnings()[0].contains("the longest is 7 bar_g for 39 min"), "{:?}", r.warnings());
    }

    #[test]
    fn counter_reset_and_rollover_are_told_apart() {
        let ch = [chan(Quantity::Energy, "kWh")];
        let conv = [Converter::Linear { scale: 3.6e6, offset: 0.0 }];
        let mut q = QualityTracker::new(&ch, &conv, 101_325.0);
        for (i, kwh) in [99_990.0, 99_998.0, 3.0, 10.0, 5.0].iter().enumerate() {
            q.reading(0, i as u64 + 2, i as i64 * 1000, kwh * 3.6e6);
        }
        let r = q.finish();
        let d = &r.channels[0].counter_drops;
        assert_eq!(d.count, 2);
        assert_eq!((d.examples[0].kind.as_str(), d.examples[0].line), ("rollover", 4));
        assert_eq!((d.examples[1].kind.as_str(), d.examples[1].previous), ("reset", 10.0));
    }

    #[test]
    fn out_of_range_values_are_reported_in_the_logged_unit() {
        let ch = [chan(Quantity::Temperature, "C"), chan(Quantity::Pressure, "psig")];
        let conv = [
            Converter::Linear { scale: 1.0, offset: T_ZERO_C },
            Converter::Linear { scale: 6894.757293168, offset: 101_325.0 },
        ];
        let mut q = QualityTracker::new(&ch, &conv, 101_325.0);
        q.reading(0, 2, 0, T_ZERO_C + 250.0);
        q.reading(0, 3, 1000, T_ZERO_C + 20.0);
        q.reading(1, 2, 0, 2000.0 * 6894.757293168 + 101_325.0); // 2000 psig > 100 bar g
        let r = q.finish();
        assert_eq!(r.channels[0].out_of_range.count, 1);
        assert!((r.channels[0].out_of_range.examples[0].value - 250.0).abs() < 1e-9);
        assert_eq!(r.channels[1].out_of_range.examples[0].reason, "above 100 bar g");
    }

    #[test]
    fn the_median_interval_survives_clock_jitter_and_many_distinct_spacings() {
        let mut iv = Intervals::default();
        let mut t = 0;
        // 999/1000/1000/1001 ms repeating (median 1000), then 10,000 distinct spacings of an
        // event logger, fewer than the regular ones.
        for i in 0..40_000 {
            t += [999, 1000, 1000, 1001][i % 4];
            iv.observe(t);
        }
        for k in 0..10_000 {
            t += 5_000 + k;
            iv.observe(t);
        }
        assert_eq!(iv.median_ms(), Some(1000));
        let r = iv.report(Some(1000));
        // Every spacing above 3 s is a gap, the capped ones included in the count only if they
        // made it into the histogram: 4096 - 3 regular values fit, the longest is counted too.
        assert_eq!(r.longest_s, Some(14.999));
        assert_eq!(r.count, (MAX_DISTINCT_INTERVALS - 3) as u64 + 1);
    }
}
