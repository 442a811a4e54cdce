/*!
One timeline for every logged channel.

Loggers have their own clocks, intervals and start times (common practice of logger audits). The storage layer streams
each channel's readings, time-sorted and already in SI units, into an [`Aligner`] (or a
[`CounterAligner`] for energy counters); the analysis then works on a [`Frame`]: equal bins on one
[`Grid`], one `Vec<f32>` per channel, `NaN` where a bin is missing.

# Alignment rules
- A reading is the **instantaneous value** of the signal at its time stamp.
- Between two consecutive readings closer than `max_gap_ms` (the caller passes 3 × the channel's median
  interval) the signal is taken as **linear** between them, so a bin receives the exact integral of that
  straight line over the part of the interval inside the bin (the trapezoid rule).
- Across a longer gap **nothing is filled**: the bins there get no coverage. A reading that is not a
  finite number breaks the series the same way.
- A bin's value is its **time-weighted mean**: integral / covered time.
- A bin covered for **less than 50 %** of its length is **missing** (`NaN`) for the bin-by-bin
  passes (states, cycles). Every bin covered but not whole (at the edge of a gap, at the log's
  ends) is listed in its column's `partial` with its share and its mean, so that time-weighted
  integrals ([`integrate_weighted`]: energy, mean power) count it for the time it was logged: a
  half-empty bin at dawn neither counts as a full bin nor vanishes.
- A compressor's logged power and its energy counter make **one** power column
  ([`merge_power`]): each bin from the one that logged more of it, so every reading counts once.
- Energy counters (J): the mean power over the interval between two readings is the difference / the
  time between them, spread evenly over that interval (a step, not a line). A decrease (reset or
  roll-over) breaks the series there: no negative power is ever produced.

The integration helper ([`integrate`]) skips missing bins and
reports the coverage, so a gap never counts as zero.

Memory: a column is a `Vec<f32>` (4 bytes a bin); an aligner keeps two `f64` per bin while it runs.
Grids of about 1.5 M bins (a month at 2 s) are the design size.
*/

mod align;
mod cover;
mod merge;
pub use align::{Aligner, CounterAligner};
pub use merge::merge_power;

/// Bin steps [`Grid::choose`] picks from, ms: steps that divide minutes, hours and days, so bins line
/// up with the clock.
const NICE_STEPS_MS: &[i64] = &[
    1_000, 2_000, 5_000, 10_000, 15_000, 20_000, 30_000, 60_000, 120_000, 300_000, 600_000, 900_000,
    1_800_000, 3_600_000, 7_200_000, 10_800_000, 21_600_000, 43_200_000, 86_400_000,
];

/// Equal bins `[start_ms + i step_ms, start_ms + (i + 1) step_ms)`, ms since the Unix epoch (UTC).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Grid {
    pub start_ms: i64,
    pub step_ms: i64,
    pub len: usize,
}

impl Grid {
    /// A grid that covers `first_ms..=last_ms` with bins no finer than the loggers' native interval
    /// and no more than `max_bins` of them. The step is the smallest "clock" step (1 s, 2 s, 5 s, ...,
    /// 1 h, ..., 1 day) not below either limit; the start is floored to a multiple of the step, so
    /// hourly and daily bins begin on the hour (UTC).
    pub fn choose(first_ms: i64, last_ms: i64, native_step_ms: i64, max_bins: usize) -> Grid {
        let last_ms = last_ms.max(first_ms);
        let span = last_ms - first_ms;
        let max_bins = max_bins.max(1) as i64;
        let need = native_step_ms.max(1).max((span + max_bins - 1) / max_bins);
        let mut step = NICE_STEPS_MS
            .iter()
            .copied()
            .find(|&s| s >= need)
            .unwrap_or_else(|| (need + 86_399_999) / 86_400_000 * 86_400_000);
        loop {
            let start = first_ms.div_euclid(step) * step;
            // The last reading must fall inside the grid: one bin past its start when it lies on a
            // bin boundary would hold nothing but that instant, so it ends the grid instead.
            let len = ((last_ms - start) / step + 1) as usize;
            let len = if (last_ms - start) % step == 0 && last_ms > start { len - 1 } else { len };
            if len as i64 <= max_bins || step >= 86_400_000 * 366 {
                return Grid { start_ms: start, step_ms: step, len: len.max(1) };
            }
            // Flooring the start can add one bin; step up once more if that breaks the limit.
            step = NICE_STEPS_MS.iter().copied().find(|&s| s > step).unwrap_or(step * 2);
        }
    }

    /// Start of bin `i`, ms since the epoch.
    pub fn bin_start_ms(&self, i: usize) -> i64 {
        self.start_ms + i as i64 * self.step_ms
    }

    /// End of the grid (exclusive), ms.
    pub fn end_ms(&self) -> i64 {
        self.bin_start_ms(self.len)
    }

    /// The bin holding `t_ms`, if it lies on the grid.
    pub fn index_of(&self, t_ms: i64) -> Option<usize> {
        if t_ms < self.start_ms {
            return None;
        }
        let i = ((t_ms - self.start_ms) / self.step_ms) as usize;
        (i < self.len).then_some(i)
    }

    /// Length of one bin, s.
    pub fn step_s(&self) -> f64 {
        self.step_ms as f64 / 1000.0
    }

    /// Hours the grid spans.
    pub fn hours(&self) -> f64 {
        self.len as f64 * self.step_ms as f64 / 3.6e6
    }
}

/// What a frame column holds (SI: W, Pa absolute, m³/s free air, K).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Signal {
    Power,
    Pressure,
    Flow,
    Temperature,
}

/// Where along the air's way a pressure was measured (ISO 11011's supply, transmission and demand):
/// at a compressor's discharge, after the treatment (dryers, filters), in the header (the default),
/// or at a point of use.
#[derive(
    Debug, Clone, Copy, PartialEq, Eq, Hash, Default, PartialOrd, Ord, serde::Serialize, serde::Deserialize,
)]
#[serde(rename_all = "snake_case")]
pub enum PressurePoint {
    Discharge,
    AfterTreatment,
    #[default]
    Header,
    PointOfUse,
}

impl PressurePoint {
    pub const ALL: [PressurePoint; 4] = [
        PressurePoint::Discharge,
        PressurePoint::AfterTreatment,
        PressurePoint::Header,
        PressurePoint::PointOfUse,
    ];
    pub fn as_str(self) -> &'static str {
        match self {
            Self::Discharge => "discharge",
            Self::AfterTreatment => "after_treatment",
            Self::Header => "header",
            Self::PointOfUse => "point_of_use",
        }
    }
    pub fn parse(s: &str) -> Option<Self> {
        Self::ALL.into_iter().find(|p| p.as_str() == s)
    }
    /// In words, for pages.
    pub fn label(self) -> &'static str {
        match self {
            Self::Discharge => "compressor discharge",
            Self::AfterTreatment => "after treatment",
            Self::Header => "header",
            Self::PointOfUse => "point of use",
        }
    }
}

#[derive(Debug, Clone, PartialEq)]
pub struct FrameColumn {
    pub signal: Signal,
    /// Index into the audit's compressors slice, for a channel that belongs to one machine.
    pub compressor: Option<usize>,
    /// Where a pressure was measured (the header for every other signal).
    pub point: PressurePoint,
    pub label: String,
    pub values: Vec<f32>,
    /// Bins covered for part of their length (module doc). Empty when every bin is whole or empty.
    pub partial: Vec<Partial>,
    /// A compressor's power known only from its energy counter: the mean over each reading
    /// interval, from which the machine's states (loaded, unloaded, off) cannot be read.
    pub from_counter: bool,
}

/// A bin covered for part of its length: a gap's edge, the log's ends.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Partial {
    pub bin: u32,
    /// Covered share of the bin, in (0, 1).
    pub share: f32,
    /// Time-weighted mean over the covered part.
    pub mean: f32,
}

/// Logged data on one grid.
#[derive(Debug, Clone, PartialEq)]
pub struct Frame {
    pub grid: Grid,
    pub columns: Vec<FrameColumn>,
}

impl Frame {
    /// The power column of compressor `i`.
    pub fn power_of(&self, i: usize) -> Option<&FrameColumn> {
        self.columns.iter().find(|c| c.signal == Signal::Power && c.compressor == Some(i))
    }

    /// The flow column of compressor `i` (a meter on that machine's discharge).
    pub fn flow_of(&self, i: usize) -> Option<&FrameColumn> {
        self.columns.iter().find(|c| c.signal == Signal::Flow && c.compressor == Some(i))
    }

    /// The header pressure: the first pressure column measured in the header and not tied to a
    /// compressor; else the nearest point to it upstream (after treatment, then a discharge not tied
    /// to a compressor, then any); else the first pressure column.
    pub fn header_pressure(&self) -> Option<&FrameColumn> {
        let p = || self.columns.iter().filter(|c| c.signal == Signal::Pressure);
        let at = |pt: PressurePoint| p().find(|c| c.point == pt && c.compressor.is_none());
        at(PressurePoint::Header)
            .or_else(|| at(PressurePoint::AfterTreatment))
            .or_else(|| at(PressurePoint::Discharge))
            .or_else(|| p().find(|c| c.point != PressurePoint::PointOfUse))
            .or_else(|| p().next())
    }

    /// The pressure columns, in the air's order (discharge first, points of use last).
    pub fn pressure_points(&self) -> Vec<&FrameColumn> {
        let mut p: Vec<&FrameColumn> = self.columns.iter().filter(|c| c.signal == Signal::Pressure).collect();
        p.sort_by_key(|c| c.point);
        p
    }

    /// System flow, m³/s free air: the system meters (flow columns not tied to a compressor) summed;
    /// if there are none, the per-compressor meters summed. A bin is missing if any meter summed is.
    pub fn system_flow(&self) -> Option<Vec<f32>> {
        sum_columns(self.grid.len, self.system_flow_columns().iter().map(|c| c.values.as_slice()))
    }

    /// The partly covered bins of the system flow when one meter makes it (as [`FrameColumn::partial`]);
    /// empty when several meters are summed (a sum has no one covered share; its bins count whole).
    pub fn system_flow_partial(&self) -> &[Partial] {
        match self.system_flow_columns().as_slice() {
            [one] => &one.partial,
            _ => &[],
        }
    }

    fn system_flow_columns(&self) -> Vec<&FrameColumn> {
        let flows: Vec<&FrameColumn> = self.columns.iter().filter(|c| c.signal == Signal::Flow).collect();
        let system: Vec<&FrameColumn> = flows.iter().copied().filter(|c| c.compressor.is_none()).collect();
        if system.is_empty() {
            flows
        } else {
            system
        }
    }
}

/// Bin-wise sum of columns; a bin is `NaN` if any input is. `None` for no inputs.
pub fn sum_columns<'a>(len: usize, cols: impl Iterator<Item = &'a [f32]>) -> Option<Vec<f32>> {
    let mut out: Option<Vec<f32>> = None;
    for c in cols {
        let o = out.get_or_insert_with(|| vec![0.0; len]);
        for (a, &b) in o.iter_mut().zip(c) {
            *a += b;
        }
    }
    out
}

/// The integral of a binned signal over the bins that are present.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Integral {
    /// Σ value × bin length over present bins (value·s).
    pub total: f64,
    /// Time covered by present bins, s.
    pub covered_s: f64,
    /// Present bins / all bins.
    pub coverage: f64,
    /// total / covered_s (`NaN` if nothing is present).
    pub mean: f64,
}

/// Integrate a binned signal over the time it was logged: whole bins for their length, a partly
/// covered bin (`partial`, as in [`FrameColumn::partial`]) for its covered share, whether or not it
/// reached the 50 % that makes it present bin by bin. `coverage` is the logged share of the grid.
pub fn integrate_weighted(grid: &Grid, values: &[f32], partial: &[Partial]) -> Integral {
    let whole = integrate(grid, values);
    if partial.is_empty() {
        return whole;
    }
    let step = grid.step_s();
    let (mut total, mut covered) = (whole.total, whole.covered_s);
    for p in partial {
        let (v, m) = (values.get(p.bin as usize).copied().unwrap_or(f32::NAN), p.mean as f64);
        if !m.is_finite() {
            continue;
        }
        let share = p.share as f64;
        if v.is_finite() {
            // Counted whole above: take back the part that was not logged.
            total -= v as f64 * (1.0 - share) * step;
            covered -= (1.0 - share) * step;
        } else if values.get(p.bin as usize).is_some() {
            // Missing bin by bin (under 50 %), but logged for its share.
            total += m * share * step;
            covered += share * step;
        }
    }
    Integral {
        total,
        covered_s: covered,
        coverage: if grid.len == 0 { 0.0 } else { covered / (grid.len as f64 * step) },
        mean: if covered > 0.0 { total / covered } else { f64::NAN },
    }
}

/// Integrate a binned signal, skipping missing bins; every present bin counts whole.
pub fn integrate(grid: &Grid, values: &[f32]) -> Integral {
    let mut sum = 0.0;
    let mut n = 0usize;
    for &v in values {
        if v.is_finite() {
            sum += v as f64;
            n += 1;
        }
    }
    let covered_s = n as f64 * grid.step_s();
    Integral {
        total: sum * grid.step_s(),
        covered_s,
        coverage: if grid.len == 0 { 0.0 } else { n as f64 / grid.len as f64 },
        mean: if n == 0 { f64::NAN } else { sum / n as f64 },
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    #[test]
    fn grid_uses_native_step_when_it_fits_and_clock_steps_otherwise() {
        // A week at 1 s native: 604 800 bins exceed 200 000, so the step becomes 5 s (nice steps).
        let g = Grid::choose(0, 7 * 86_400_000, 1_000, 200_000);
        assert_eq!(g.step_ms, 5_000);
        assert_eq!(g.len, 7 * 86_400 / 5);
        assert!(close(g.hours(), 168.0, 1e-9));
        // Start floored to the step; the last reading is inside the grid.
        let g = Grid::choose(61_500, 3_600_000 + 61_500, 60_000, 1_000_000);
        assert_eq!(g.start_ms, 60_000);
        assert!(g.index_of(3_600_000 + 61_500).is_some());
        assert_eq!(g.index_of(59_999), None);
        assert_eq!(g.index_of(g.end_ms()), None);
        assert!(g.len <= 1_000_000);
    }

    #[test]
    fn aligner_integrates_a_ramp_exactly_by_trapezoids() {
        // A line v = t/1000 sampled every 3 s onto 10 s bins: the bin mean of a line is its mid value.
        let g = Grid { start_ms: 0, step_ms: 10_000, len: 3 };
        let mut a = Aligner::new(g, 9_000);
        for k in 0..=10 {
            let t = k * 3_000;
            a.push(t, t as f64 / 1000.0);
        }
        let v = a.finish();
        assert!(close(v[0] as f64, 5.0, 1e-5));
        assert!(close(v[1] as f64, 15.0, 1e-5));
        assert!(close(v[2] as f64, 25.0, 1e-5));
    }

    #[test]
    fn irregular_readings_of_a_line_still_give_the_bin_midpoint_value() {
        // Property (plain loop, no proptest): for any sampling of a straight line with no gap over
        // max_gap, the trapezoid bin mean equals the line's value at the bin's middle.
        let g = Grid { start_ms: 0, step_ms: 60_000, len: 30 };
        for seed in 1..20u64 {
            let mut x = seed;
            let mut a = Aligner::new(g, 10_000);
            let mut t = 0i64;
            // Read until a reading at or past the grid's end, so the last bin is fully covered.
            loop {
                a.push(t, 3.0 + 0.002 * t as f64);
                if t >= g.end_ms() {
                    break;
                }
                // A small linear-congruential step between 1 and 10 s.
                x = x.wrapping_mul(6_364_136_223_846_793_005).wrapping_add(1_442_695_040_888_963_407);
                t += 1_000 + ((x >> 33) % 9_000) as i64;
            }
            for (i, v) in a.finish().iter().enumerate() {
                let mid = g.bin_start_ms(i) as f64 + 30_000.0;
                assert!(close(*v as f64, 3.0 + 0.002 * mid, 1e-2), "seed {seed} bin {i}: {v}");
            }
        }
    }

    #[test]
    fn aligner_leaves_long_gaps_unfilled_and_marks_thin_bins_missing() {
        let g = Grid { start_ms: 0, step_ms: 10_000, len: 6 };
        let mut a = Aligner::new(g, 3_000);
        // Readings every 1 s over 0..20 s, then nothing until 44 s, then 44..60 s.
        for t in 0..=20 {
            a.push(t * 1000, 2.0);
        }
        for t in 44..=60 {
            a.push(t * 1000, 4.0);
        }
        let v = a.finish();
        assert_eq!(v[0], 2.0);
        assert_eq!(v[1], 2.0);
        assert!(v[2].is_nan(), "the 20-44 s gap is not filled");
        // Bin 40-50 s is covered 44-50 s = 60 %: present; bin 3 has no coverage.
        assert!(v[3].is_nan());
        assert_eq!(v[4], 4.0);
        assert_eq!(v[5], 4.0);
        let i = integrate(&g, &v);
        assert!(close(i.coverage, 4.0 / 6.0, 1e-12));
        assert!(close(i.total, 10.0 * (2.0 + 2.0 + 4.0 + 4.0), 1e-9));
        assert!(close(i.mean, 3.0, 1e-12));
    }

    #[test]
    fn partly_covered_bins_count_for_the_time_they_were_logged() {
        // 10 s bins; a ramp v = t/1000 read every second from 3 s to 27 s, then nothing.
        // By hand: logged 3..27 s (24 s), integral of t over it = (27² - 3²)/2 = 360, mean 15.
        // Bin 0 is covered 7 s (70 %, mean 6.5), bin 1 whole (mean 15), bin 2 covered 7 s (70 %,
        // mean 23.5). Counted whole, the bins would give (6.5 + 15 + 23.5)/3 = 15 over 30 s.
        let g = Grid { start_ms: 0, step_ms: 10_000, len: 3 };
        let mut a = Aligner::new(g, 3_000);
        for t in 3..=27 {
            a.push(t * 1000, t as f64);
        }
        let (v, partial) = a.finish_with_partial();
        assert_eq!(partial.len(), 2);
        assert!(close(partial[0].share as f64, 0.7, 1e-6) && close(partial[0].mean as f64, 6.5, 1e-5));
        let i = integrate_weighted(&g, &v, &partial);
        assert!(close(i.total, 360.0, 1e-3), "{i:?}");
        assert!(close(i.covered_s, 24.0, 1e-5));
        assert!(close(i.mean, 15.0, 1e-5));
        // Bins under half covered are missing bin by bin but still count for their share: a ramp
        // read 0..13 s leaves bin 1 covered 3 s (30 %, mean 11.5); logged integral 13²/2 = 84.5.
        let mut a = Aligner::new(g, 3_000);
        for t in 0..=13 {
            a.push(t * 1000, t as f64);
        }
        let (v, partial) = a.finish_with_partial();
        assert!(v[1].is_nan());
        let i = integrate_weighted(&g, &v, &partial);
        assert!(close(i.total, 84.5, 1e-3) && close(i.covered_s, 13.0, 1e-5), "{i:?}");
        assert!(close(i.mean, 6.5, 1e-5));
    }

    #[test]
    fn a_bin_covered_under_half_is_missing() {
        let g = Grid { start_ms: 0, step_ms: 10_000, len: 1 };
        let mut a = Aligner::new(g, 10_000);
        a.push(0, 1.0);
        a.push(4_000, 1.0);
        assert!(a.finish()[0].is_nan());
        let mut a = Aligner::new(g, 10_000);
        a.push(0, 1.0);
        a.push(5_000, 3.0);
        assert_eq!(a.finish()[0], 2.0);
    }

    #[test]
    fn counter_differences_become_power_and_a_reset_breaks_the_series() {
        // 55 kW for 120 s as a J counter read every 10 s, reset to 0 at 60 s, then rising again.
        let g = Grid { start_ms: 0, step_ms: 30_000, len: 4 };
        let mut c = CounterAligner::new(g, 30_000);
        let w = 55_000.0;
        for k in 0..=12i64 {
            let t = k * 10_000;
            let counter =
                if t < 60_000 { 1e9 + w * t as f64 / 1000.0 } else { w * (t - 60_000) as f64 / 1000.0 };
            c.push(t, counter);
        }
        assert_eq!(c.breaks(), 1);
        let v = c.finish();
        // Bin 1 (30-60 s) loses the 50-60 s interval to the reset: 20 of 30 s covered, still 55 kW.
        for x in &v {
            assert!(close(*x as f64, w, 1e-2), "{x}");
        }
        let e = integrate(&g, &v);
        assert_eq!(e.coverage, 1.0);
        assert!(close(e.total, w * 120.0, 1.0));
    }

    #[test]
    fn frame_sums_system_meters_and_finds_the_header() {
        let g = Grid { start_ms: 0, step_ms: 1_000, len: 2 };
        let col = |signal, compressor, v: Vec<f32>| FrameColumn {
            from_counter: false,
            point: Default::default(),
            signal,
            compressor,
            label: String::new(),
            values: v,
            partial: vec![],
        };
        let f = Frame {
            grid: g,
            columns: vec![
                col(Signal::Pressure, Some(0), vec![8e5, 8e5]),
                col(Signal::Pressure, None, vec![7e5, 7e5]),
                col(Signal::Flow, Some(0), vec![0.1, 0.1]),
                col(Signal::Flow, None, vec![0.2, f32::NAN]),
                col(Signal::Flow, None, vec![0.05, 0.05]),
            ],
        };
        assert_eq!(f.header_pressure().unwrap().values[0], 7e5);
        let q = f.system_flow().unwrap();
        assert!(close(q[0] as f64, 0.25, 1e-6));
        assert!(q[1].is_nan());
        let air = integrate(&g, &q);
        assert!(close(air.total, 0.25, 1e-6));
        assert_eq!(air.coverage, 0.5);
    }
}
