/*!
Data-quality findings collected in the one pass over a logger file.

Memory is bounded whatever the file's length: counts, and at most [`MAX_EXAMPLES`] examples of
each finding. Findings never reject a file (only unreadable input does, in `parse`); they are
reported, and summarised by [`QualityReport::warnings`] into the API's `warnings` list.

Per file: the median logging interval, gaps, duplicate and out-of-order timestamps, blank lines and
daylight-saving cases with how each was resolved. Per channel: missing cells (with the markers and
text found where a number belongs: `#-1`, `1.#QNAN`, `OL`, `Err`...), gaps in that
channel's readings, flat lines, values out of physical range, and counter resets/roll-overs.

Rules (common practice in reviewing logger data; the thresholds are ours, documented here):
- **Gap**: a spacing longer than 3x the median interval. The median comes from a histogram of the
  distinct intervals (capped at 4096 distinct values; beyond that rare values are left out of the
  median). The gap count and the longest gap are exact whatever the number of distinct spacings:
  the spacings left out of the histogram are counted between the possible thresholds (see
  [`gaps`]). The listed examples are the first gaps in file order, from candidates kept while
  reading (spacings above 2x the running typical interval).
- **Flat line**: the same value for at least 30 min and at least 30 readings in a row (a stuck
  sensor, or a compressor that is off: both worth a look).
- **Out of range** (kept, reported): power below zero (a motor's active power never is: a
  current transformer turned round, a meter's zero offset or the wrong column), flow below -0.05 m³/min (negative
  beyond noise), pressure above 100 bar g or below -0.1 bar g (a compressed-air line never runs
  below the atmosphere; 0.1 bar allows for a transmitter's zero error, common practice),
  temperature outside -50..200 °C, a negative counter.
- **Implausible against the data sheets** ([`QualityReport::check_against_rated`], run when the
  file is stored, with the audit's compressors): a compressor's power (logged, or the power its
  energy counter stands for: the counter's rise over each span of a minute or more over the span's
  time, so that its last digit over a short interval makes no spike) above
  [`POWER_OVER_RATED`] (1.25) × its rated package power, a logged power by its mean over each span
  of a minute or more as a counter's (so a start's inrush of a second or two is no finding): a
  screw package draws at most some 10-20 % over its data sheet at raised pressure; its motor may
  run continuously at its service factor, 1.15 of its nameplate (NEMA MG 1 for motors with that
  service factor, from memory), and the fan and the motor's losses add a few per cent more (common
  practice): above 1.25, the column's unit, scale, current transformer ratio or compressor is
  wrong, or the machine is overloaded; a compressor whose power never reaches
  [`POWER_UNDER_RATED`] (5 %) of its rated package power over the whole file (its highest mean over
  a minute or more): a screw compressor running unloaded draws some 20-35 % of its full-load power
  (common practice), so a machine that ran reads more; below 5 %, the column is in kW read as W (a
  thousand times too low), the wrong column or compressor, or the machine did not run while the
  file was logged (said as a question, for the auditor to settle); a compressor's own flow above
  [`FLOW_OVER_RATED`] (1.5) × its rated free air delivery; a system flow above 1.5 × the sum of the
  compressors' rated free air delivery (a meter downstream of a receiver may briefly read more than
  the compressors make while the receiver empties, hence the margin). The highest reading of each
  channel is kept for it; the findings are reported, never dropped.
- **Counter decrease**: an energy counter that goes down. A *roll-over* when the previous value was
  at least 90 % of the next power of ten (in the logged unit) and the new one below 10 % of it
  (a register wrapping at 99999 kWh, say); any other decrease is a *reset*.
*/

mod gaps;
#[cfg(test)]
mod tests;
mod tracker;
mod warnings;

pub use tracker::QualityTracker;
pub use warnings::{span_warnings, SMALL_SHARE_OF_PERIOD};

use crate::core::recommend::{self as text, Part};
use crate::ingest::mapping::Quantity;
use serde::Serialize;

/// Examples kept per finding.
pub const MAX_EXAMPLES: usize = 20;

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
    /// True when `count` is a lower bound: see [`gaps`]. Left out of the JSON when false.
    #[serde(skip_serializing_if = "std::ops::Not::not")]
    pub count_at_least: bool,
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
    /// In SI as the analysis reads it (W, m³/s free air, Pa abs, K, J): for the warnings' figures.
    #[serde(skip)]
    pub si: f64,
}

/// A cell read as missing because it held a marker or text instead of a number.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MarkedCell {
    pub line: u64,
    /// The cell as written (trimmed, at most 40 characters).
    pub text: String,
}

/// A reading outside its physical range.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct OutOfRange {
    pub line: u64,
    pub time: String,
    pub value: f64,
    pub unit: String,
    pub reason: String,
    /// In SI as the analysis reads it, for the warnings' figures.
    #[serde(skip)]
    pub si: f64,
    /// Below the range (else above it).
    #[serde(skip)]
    pub below: bool,
}

/// The highest reading of a channel (kept to check it against the data sheets).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Highest {
    pub line: u64,
    pub time: String,
    /// In the logged unit (`unit`).
    pub value: f64,
    pub unit: String,
    /// In SI (W, m³/s free air, Pa abs...).
    #[serde(skip)]
    pub si: f64,
}

/// A value implausible for its quantity against the audit's data sheets.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Implausible {
    pub reason: String,
    pub line: u64,
    pub time: String,
    pub value: f64,
    pub unit: String,
    /// The reason in parts, its figures in canonical units (`Part`), for the reader's units.
    #[serde(skip)]
    pub reason_parts: Vec<Part>,
}

/// A compressor's data-sheet figures, as the plausibility checks need them.
#[derive(Debug, Clone, PartialEq)]
pub struct RatedMachine {
    pub tag: String,
    pub rated_power_kw: f64,
    pub rated_flow_m3_min: f64,
}

/// A compressor's power above this multiple of its rated package power is implausible (module doc).
pub const POWER_OVER_RATED: f64 = 1.25;
/// Why [`POWER_OVER_RATED`], in the words of the quality report.
pub const POWER_OVER_RATED_BASIS: &str =
    "a motor's service factor of 1.15 and the fan's share allow some 25 % \
     over the data sheet at raised pressure, common practice";
/// A compressor whose power never reaches this share of its rated package power over the whole
/// file (its highest mean over a minute or more) did not run as logged (module doc).
pub const POWER_UNDER_RATED: f64 = 0.05;
/// Why [`POWER_UNDER_RATED`], in the words of the quality report.
pub const POWER_UNDER_RATED_BASIS: &str =
    "a screw compressor running unloaded draws some 20-35 % of its full-load power, common practice";
/// A flow above this multiple of the rated free air delivery is implausible (module doc).
pub const FLOW_OVER_RATED: f64 = 1.5;

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
    /// The channel's typical logging interval: the median of its steps between readings (a
    /// bounded histogram, see `gaps`), so night gaps do not stretch it.
    pub median_interval_s: Option<f64>,
    /// Lines with a missing-value cell (empty, a marker such as `#N/A` or `1.#QNAN`, or text).
    pub missing: Findings<u64>,
    /// The missing cells that held something, with their text: markers and text where a number
    /// belongs (a meter's `#-1`, `OL`, `Err`...). Counted in `missing` too.
    pub marked: Findings<MarkedCell>,
    /// How many of `marked` were text that no marker names (a word, `12..5`): when they outnumber
    /// the readings, the column is not numbers and the file is refused (a wrong decimal mark).
    pub unreadable: u64,
    pub gaps: GapReport,
    pub flat_lines: Findings<FlatLine>,
    pub out_of_range: Findings<OutOfRange>,
    pub counter_drops: Findings<CounterDrop>,
    /// The highest reading (`None`: no reading).
    pub highest: Option<Highest>,
    /// An energy counter's highest power, in kW: its rise over a span of a minute or more (the
    /// readings that close each span) over the span's time (`None`: not a counter, or no such span).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub counter_power: Option<Highest>,
    /// A power column's highest mean over a span of a minute or more (the readings of each span, the
    /// reading that closes it named), in the file's unit: what is checked against the data sheet,
    /// so a start's inrush of a second or two is not (`None`: not power, or no such span).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sustained_power: Option<Highest>,
    /// Findings against the data sheets ([`QualityReport::check_against_rated`]).
    pub implausible: Vec<Implausible>,
}

/// Everything found.
#[derive(Debug, Clone, PartialEq, Serialize, Default)]
pub struct QualityReport {
    pub file: FileQuality,
    pub channels: Vec<ChannelQuality>,
    /// The atmosphere the readings' absolute pressures were read with, Pa: a gauge figure in the
    /// warnings is the absolute reading less it.
    #[serde(skip)]
    pub atmosphere_pa: f64,
}

impl QualityReport {
    /// Flag readings implausible against the audit's compressors (module doc): a machine's power or
    /// flow far above its data sheet, a system flow far above all machines together.
    pub fn check_against_rated(&mut self, machines: &[RatedMachine]) {
        let total_flow: f64 = machines.iter().map(|m| m.rated_flow_m3_min).sum();
        for c in &mut self.channels {
            let machine = c.compressor.as_ref().and_then(|t| machines.iter().find(|m| &m.tag == t));
            // An energy counter is checked by the power it stands for, with the same threshold.
            let (h, counter) = match (c.quantity, &c.counter_power) {
                (Quantity::Energy, Some(p)) => (p, true),
                (Quantity::Energy, None) => continue,
                // A logged power by its mean over a minute or more, else (a file under a minute
                // long) its highest reading.
                _ => match c.sustained_power.as_ref().or(c.highest.as_ref()) {
                    Some(h) => (h, false),
                    None => continue,
                },
            };
            let check = "check the unit, the scale or the compressor of the column";
            let over = if counter {
                " from its energy counter (the mean over a minute or more)"
            } else if c.sustained_power.is_some() {
                " (the mean over a minute or more)"
            } else {
                ""
            };
            // The unit mistake each direction points to: a thousand times too high or too low.
            let (logged, big, small) =
                if counter { ("an energy", "kWh", "Wh") } else { ("a power", "kW", "W") };
            let reason_parts: Vec<Part> = match (c.quantity, machine) {
                (Quantity::Power | Quantity::Energy, Some(m))
                    if h.si > POWER_OVER_RATED * m.rated_power_kw * 1000.0 =>
                {
                    vec![format!(
                        "power of {}{over} up to {}, above {POWER_OVER_RATED} x its rated {} kW ({POWER_OVER_RATED_BASIS}): \
                         {logged} logged in {small} read as {big}? {check}",
                        m.tag,
                        crate::core::display::power_words(h.si),
                        m.rated_power_kw
                    )
                    .into()]
                }
                (Quantity::Power | Quantity::Energy, Some(m))
                    if m.rated_power_kw > 0.0 && h.si < POWER_UNDER_RATED * m.rated_power_kw * 1000.0 =>
                {
                    vec![format!(
                        "power of {}{over} never above {}, under {} % of its rated {} kW ({POWER_UNDER_RATED_BASIS}): \
                         {logged} logged in {big} read as {small}, the wrong column or compressor, or a machine \
                         that did not run while the file was logged? {check}",
                        m.tag,
                        crate::core::display::power_words(h.si),
                        POWER_UNDER_RATED * 100.0,
                        m.rated_power_kw
                    )
                    .into()]
                }
                (Quantity::Flow, Some(m)) if h.si * 60.0 > FLOW_OVER_RATED * m.rated_flow_m3_min => vec![
                    format!("flow of {} up to ", m.tag).into(),
                    text::flow(h.si * 60.0),
                    format!(", above {FLOW_OVER_RATED} x its rated ").into(),
                    text::flow(m.rated_flow_m3_min),
                ],
                (Quantity::Flow, None) if total_flow > 0.0 && h.si * 60.0 > FLOW_OVER_RATED * total_flow => {
                    vec![
                        "system flow up to ".into(),
                        text::flow(h.si * 60.0),
                        format!(", above {FLOW_OVER_RATED} x the ").into(),
                        text::flow(total_flow),
                        " all compressors deliver together: check the unit and the reference conditions"
                            .into(),
                    ]
                }
                _ => continue,
            };
            let reason = crate::core::display::render_parts(
                &reason_parts,
                &crate::core::display::Fmt::new(
                    crate::core::units::UnitSystem::Si,
                    crate::core::units::PressureAbs(self.atmosphere_pa),
                ),
            );
            c.implausible.push(Implausible {
                reason,
                line: h.line,
                time: h.time.clone(),
                value: h.value,
                unit: h.unit.clone(),
                reason_parts,
            });
        }
    }
}
