/*!
The tracker the parser feeds, row by row and reading by reading: duplicates, out-of-order times,
daylight-saving cases, missing cells, flat lines, ranges and counter drops.
*/

use super::gaps::Intervals;
use super::{
    At, ChannelQuality, CounterDrop, DstFinding, FileQuality, Findings, FlatLine, GapReport, Highest,
    MarkedCell, OutOfRange, QualityReport, MAX_EXAMPLES,
};
use crate::core::recommend::Part;
use crate::core::units::{PA_PER_BAR, T_ZERO_C};
use crate::ingest::mapping::{ChannelDef, Converter, Quantity};
use crate::ingest::number::is_missing_marker;
use crate::ingest::timestamp::{format_local_ms, format_utc_ms, DstCase, DstResolution};

const FLAT_MIN_MS: i64 = 30 * 60 * 1000;
const FLAT_MIN_READINGS: u64 = 30;
/// An energy counter's power is read over spans of at least a minute (the readings that close
/// each span), so that the counter's last digit over a short interval makes no spike: a counter
/// in whole Wh read every 2 s steps by 1.8 kW, over a minute by 0.06 kW. The minute is the peak
/// flow's window too.
pub(super) const COUNTER_POWER_SPAN_MS: i64 = 60_000;

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
    /// SI value, line and time of the highest reading.
    highest: Option<(f64, u64, i64)>,
    /// An energy counter's reading (time, J) that opens the span its power is taken over.
    counter_anchor: Option<(i64, f64)>,
    /// An energy counter's highest power (W) over a span of at least [`COUNTER_POWER_SPAN_MS`],
    /// with the line and time that close the span.
    counter_power: Option<(f64, u64, i64)>,
    /// A power column's open span: its first reading's time and line, the sum and count of its
    /// readings.
    power_span: Option<(i64, u64, f64, u32)>,
    /// A power column's highest mean (W) over a span of at least [`COUNTER_POWER_SPAN_MS`], with
    /// the line and time of the reading that opens the span.
    power_sustained: Option<(f64, u64, i64)>,
}

#[derive(Debug, Clone, Copy)]
struct Range {
    min_si: f64,
    max_si: f64,
    below: &'static str,
    above: &'static str,
}

/// Why a negative power is out of range, in the quality report's words.
const NEGATIVE_POWER: &str = "negative power: a compressor's motor never draws less than nothing; \
     a current transformer turned round, a meter's zero offset or the wrong column";

fn range_for(q: Quantity, atmosphere_pa: f64) -> Range {
    let none = f64::INFINITY;
    match q {
        // Below zero at all: a motor's active power is never negative (module doc).
        Quantity::Power => Range { min_si: 0.0, max_si: none, below: NEGATIVE_POWER, above: "" },
        Quantity::Flow => Range { min_si: -0.05 / 60.0, max_si: none, below: "negative flow", above: "" },
        Quantity::Pressure => Range {
            min_si: atmosphere_pa - 0.1 * PA_PER_BAR,
            max_si: 100.0 * PA_PER_BAR + atmosphere_pa,
            below: "negative gauge pressure, below -0.1 bar(g): a compressed-air line never runs below the atmosphere",
            above: "above 100 bar(g)",
        },
        Quantity::Temperature => Range {
            min_si: T_ZERO_C - 50.0,
            max_si: T_ZERO_C + 200.0,
            below: "below -50 °C",
            above: "above 200 °C",
        },
        Quantity::Energy => Range { min_si: 0.0, max_si: none, below: "negative counter", above: "" },
    }
}

/// The limit a reading of `q` broke (below it, else above), in parts: figures in canonical units
/// that the reader's units show (the same limits as [`range_for`]).
pub(super) fn range_parts(q: Quantity, below: bool) -> Vec<Part> {
    use crate::core::recommend as text;
    match (q, below) {
        (Quantity::Pressure, true) => vec![
            "negative gauge pressure, below ".into(),
            text::bar_g(-0.1),
            ": a compressed-air line never runs below the atmosphere".into(),
        ],
        (Quantity::Pressure, false) => vec!["above ".into(), text::bar_g(100.0)],
        (Quantity::Power, _) => vec![NEGATIVE_POWER.into()],
        (Quantity::Flow, _) => vec!["negative flow, below ".into(), text::flow(-0.05)],
        (Quantity::Temperature, true) => vec!["below ".into(), text::temperature_c(-50.0)],
        (Quantity::Temperature, false) => vec!["above ".into(), text::temperature_c(200.0)],
        (Quantity::Energy, _) => vec!["negative counter".into()],
    }
}

/// Collects findings while a file is parsed.
#[derive(Debug, Clone)]
pub struct QualityTracker {
    file: FileQuality,
    intervals: Intervals,
    last_t: Option<i64>,
    channels: Vec<ChannelTracker>,
    atmosphere_pa: f64,
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
                        median_interval_s: None,
                        missing: Findings::default(),
                        marked: Findings::default(),
                        unreadable: 0,
                        gaps: GapReport::default(),
                        flat_lines: Findings::default(),
                        out_of_range: Findings::default(),
                        counter_drops: Findings::default(),
                        highest: None,
                        counter_power: None,
                        sustained_power: None,
                        implausible: Vec::new(),
                    },
                    conv: *conv,
                    display_unit,
                    intervals: Intervals::default(),
                    run: None,
                    prev_counter: None,
                    range: range_for(c.quantity, atmosphere_pa),
                    highest: None,
                    counter_anchor: None,
                    counter_power: None,
                    power_span: None,
                    power_sustained: None,
                }
            })
            .collect();
        Self {
            file: FileQuality::default(),
            intervals: Intervals::default(),
            last_t: None,
            channels,
            atmosphere_pa,
        }
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

    /// A missing-value cell that held a marker or text (`known`: a marker, built in or the
    /// mapping's; otherwise text no marker names). `raw` is the cell, trimmed.
    pub fn marked(&mut self, channel: usize, line: u64, raw: &[u8], known: bool) {
        let q = &mut self.channels[channel].q;
        q.missing.push(line);
        if !known {
            q.unreadable += 1;
        }
        q.marked.push_with(|| {
            let text = String::from_utf8_lossy(raw);
            MarkedCell { line, text: text.chars().take(40).collect() }
        });
    }

    /// The first channel whose unreadable text cells outnumber its readings: (label, count,
    /// first example). Such a column is not numbers as mapped (a wrong decimal mark, a text column).
    pub fn mostly_unreadable(&self) -> Option<(&str, u64, Option<&MarkedCell>)> {
        self.channels.iter().map(|c| &c.q).find(|q| q.unreadable > 0 && q.unreadable > q.readings).map(|q| {
            (q.label.as_str(), q.unreadable, q.marked.examples.iter().find(|m| !is_marker_text(&m.text)))
        })
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
        // The highest reading, for the checks against the data sheets (formatted once, at the end).
        if c.highest.is_none_or(|(h, _, _)| si > h) {
            c.highest = Some((si, line, t_ms));
        }
        // Range.
        if si < c.range.min_si || si > c.range.max_si {
            let below = si < c.range.min_si;
            let reason = if below { c.range.below } else { c.range.above };
            let (conv, unit) = (&c.conv, &c.display_unit);
            c.q.out_of_range.push_with(|| OutOfRange {
                line,
                time: format_utc_ms(t_ms),
                value: conv.to_logged(si),
                unit: unit.clone(),
                reason: reason.into(),
                si,
                below,
            });
        }
        // A power column's mean over each span of a minute or more (the readings from the one that
        // opens it to the one a minute later, which opens the next), as a counter's power is taken:
        // a start's inrush over a second or two is no draw above the data sheet.
        if c.q.quantity == Quantity::Power {
            match &mut c.power_span {
                Some((t0, line0, sum, n)) if t_ms - *t0 >= COUNTER_POWER_SPAN_MS => {
                    let w = *sum / f64::from(*n);
                    if c.power_sustained.is_none_or(|(p, _, _)| w > p) {
                        c.power_sustained = Some((w, *line0, *t0));
                    }
                    c.power_span = Some((t_ms, line, si, 1));
                }
                Some((_, _, sum, n)) => {
                    *sum += si;
                    *n += 1;
                }
                None => c.power_span = Some((t_ms, line, si, 1)),
            }
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
            // Its power: the rise over each span of a minute or more, from one reading to the
            // first one a minute later. A decrease (reset, roll-over) starts a new span; a gap
            // inside a span only lowers its mean, so it can never make power that was not drawn.
            match c.counter_anchor {
                Some((t0, c0)) if si >= c0 && t_ms - t0 >= COUNTER_POWER_SPAN_MS => {
                    let w = (si - c0) / ((t_ms - t0) as f64 / 1000.0);
                    if c.counter_power.is_none_or(|(p, _, _)| w > p) {
                        c.counter_power = Some((w, line, t_ms));
                    }
                    c.counter_anchor = Some((t_ms, si));
                }
                Some((_, c0)) if si >= c0 => {}
                _ => c.counter_anchor = Some((t_ms, si)),
            }
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
                si: r.value,
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
                c.q.median_interval_s = c.intervals.median_ms().map(|m| m as f64 / 1000.0);
                c.q.highest = c.highest.map(|(si, line, t)| Highest {
                    line,
                    time: format_utc_ms(t),
                    value: c.conv.to_logged(si),
                    unit: c.display_unit.clone(),
                    si,
                });
                // The open span at the end counts when its readings stand for a minute or more (a
                // log at a minute or longer: each reading is a span of its own).
                if let (Some((t0, line0, sum, n)), Some(step)) = (c.power_span, c.intervals.median_ms()) {
                    let w = sum / f64::from(n);
                    let whole = i64::from(n) * step >= COUNTER_POWER_SPAN_MS;
                    if whole && c.power_sustained.is_none_or(|(p, _, _)| w > p) {
                        c.power_sustained = Some((w, line0, t0));
                    }
                }
                let (conv, unit) = (&c.conv, &c.display_unit);
                c.q.sustained_power = c.power_sustained.map(|(w, line, t)| Highest {
                    line,
                    time: format_utc_ms(t),
                    value: conv.to_logged(w),
                    unit: unit.clone(),
                    si: w,
                });
                c.q.counter_power = c.counter_power.map(|(w, line, t)| Highest {
                    line,
                    time: format_utc_ms(t),
                    value: w / 1000.0,
                    unit: "kW".into(),
                    si: w,
                });
                c.q
            })
            .collect();
        QualityReport { file: self.file, channels, atmosphere_pa: self.atmosphere_pa }
    }
}

fn is_marker_text(t: &str) -> bool {
    is_missing_marker(t.as_bytes())
}
