/*!
The aligners: readings streamed onto a [`Grid`] as time-weighted bin means (rules in the module doc
of `core::series`).
*/

use super::{Grid, Partial};

/// The part both aligners share: integral and covered time per bin.
#[derive(Debug, Clone)]
struct BinAccumulator {
    grid: Grid,
    /// Integral of the signal over the covered part of each bin (value × ms).
    integral: Vec<f64>,
    /// Covered time of each bin, ms. Sums of whole milliseconds are exact in `f32` up to 2^24 ms
    /// (4.6 h) a bin and within 1e-7 beyond; half the memory of `f64` for a coverage share.
    covered_ms: Vec<f32>,
}

impl BinAccumulator {
    fn new(grid: Grid) -> Self {
        Self { grid, integral: vec![0.0; grid.len], covered_ms: vec![0.0f32; grid.len] }
    }

    /// Add the straight line from `(t0, v0)` to `(t1, v1)`, cut at bin edges and at the grid's ends.
    fn add_line(&mut self, t0: i64, v0: f64, t1: i64, v1: f64) {
        let (g0, g1) = (self.grid.start_ms, self.grid.end_ms());
        let (a, b) = (t0.max(g0), t1.min(g1));
        if b <= a {
            return;
        }
        let slope = (v1 - v0) / (t1 - t0) as f64;
        let value_at = |t: i64| v0 + slope * (t - t0) as f64;
        let step = self.grid.step_ms;
        let mut i = ((a - g0) / step) as usize;
        let mut lo = a;
        while lo < b && i < self.grid.len {
            let hi = b.min(self.grid.bin_start_ms(i + 1));
            let dt = (hi - lo) as f64;
            self.integral[i] += 0.5 * (value_at(lo) + value_at(hi)) * dt;
            self.covered_ms[i] += dt as f32;
            lo = hi;
            i += 1;
        }
    }

    /// The bin that wholly holds the line from `t0` to `t1` (`t0 < t1`), its sums taken out to be
    /// added to in registers ([`OpenBin`]); a closed one when the line crosses a bin edge or a
    /// grid end.
    fn open(&self, t0: i64, t1: i64) -> OpenBin {
        let g = self.grid;
        if t0 < g.start_ms || t1 > g.end_ms() {
            return OpenBin::CLOSED;
        }
        // t0 < t1 <= the grid's end: bin i is on the grid.
        let i = ((t0 - g.start_ms) / g.step_ms) as usize;
        let (lo, hi) = (g.bin_start_ms(i), g.bin_start_ms(i + 1));
        if t1 > hi {
            return OpenBin::CLOSED;
        }
        OpenBin { bin: i, lo, hi, integral: self.integral[i], covered_ms: self.covered_ms[i] }
    }

    /// [`BinAccumulator::add_line`] through the open bin while the line lies in it; else that bin is
    /// put back and the one the line lies in opened, or the line cut at bin edges as ever.
    #[inline(always)]
    fn add_line_through(&mut self, open: &mut OpenBin, t0: i64, v0: f64, t1: i64, v1: f64) {
        if open.add(t0, v0, t1, v1) {
            return;
        }
        self.close(open);
        *open = self.open(t0, t1);
        if !open.add(t0, v0, t1, v1) {
            self.add_line(t0, v0, t1, v1);
        }
    }

    /// Put an open bin's sums back.
    fn close(&mut self, open: &OpenBin) {
        if open.lo <= open.hi {
            self.integral[open.bin] = open.integral;
            self.covered_ms[open.bin] = open.covered_ms;
        }
    }

    /// The means, written over the coverage (no third buffer of the grid's length at the peak), and
    /// the bins covered but not whole with their share and mean.
    fn finish(self) -> (Vec<f32>, Vec<Partial>) {
        let step = self.grid.step_ms as f64;
        let half = 0.5 * step;
        let Self { integral, covered_ms: mut out, .. } = self;
        let mut partial = Vec::new();
        for (i, (m, &s)) in out.iter_mut().zip(&integral).enumerate() {
            let c = *m as f64;
            let mean = if c > 0.0 { (s / c) as f32 } else { f32::NAN };
            if c > 0.0 && c < step {
                partial.push(Partial { bin: i as u32, share: (c / step) as f32, mean });
            }
            *m = if c >= half { mean } else { f32::NAN };
        }
        (out, partial)
    }
}

/// One bin's sums held apart while consecutive lines fall inside it ([`Aligner::push_run`]).
struct OpenBin {
    bin: usize,
    /// The bin's span `[lo, hi]`; `lo > hi` when no bin is open.
    lo: i64,
    hi: i64,
    integral: f64,
    covered_ms: f32,
}

impl OpenBin {
    const CLOSED: OpenBin = OpenBin { bin: 0, lo: i64::MAX, hi: i64::MIN, integral: 0.0, covered_ms: 0.0 };

    /// Add the line from `(t0, v0)` to `(t1, v1)` if it lies in this bin: the very operations of
    /// [`BinAccumulator::add_line`] for a line that no bin edge cuts, so the sums are the same to
    /// the last bit.
    #[inline(always)]
    fn add(&mut self, t0: i64, v0: f64, t1: i64, v1: f64) -> bool {
        if t0 < self.lo || t1 > self.hi {
            return false;
        }
        let slope = (v1 - v0) / (t1 - t0) as f64;
        let value_at = |t: i64| v0 + slope * (t - t0) as f64;
        let dt = (t1 - t0) as f64;
        self.integral += 0.5 * (value_at(t0) + value_at(t1)) * dt;
        self.covered_ms += dt as f32;
        true
    }
}

/// Streams one channel's instantaneous readings onto a grid (rules in the module doc).
#[derive(Debug, Clone)]
pub struct Aligner {
    acc: BinAccumulator,
    max_gap_ms: i64,
    prev: Option<(i64, f64)>,
}

impl Aligner {
    pub fn new(grid: Grid, max_gap_ms: i64) -> Self {
        Self { acc: BinAccumulator::new(grid), max_gap_ms, prev: None }
    }

    /// The longest step drawn as a line from here on (the next readings' own logging interval × 3).
    pub fn set_max_gap(&mut self, max_gap_ms: i64) {
        self.max_gap_ms = max_gap_ms;
    }

    /// One reading, in time order. A reading earlier than the one before is ignored (the storage
    /// layer sorts; this keeps a stray one from producing a negative interval); one at the same time
    /// replaces it.
    pub fn push(&mut self, t_ms: i64, v: f64) {
        if !v.is_finite() {
            self.prev = None;
            return;
        }
        match self.prev {
            Some((t0, _)) if t_ms < t0 => return,
            Some((t0, v0)) if t_ms > t0 && t_ms - t0 <= self.max_gap_ms => self.acc.add_line(t0, v0, t_ms, v),
            _ => {}
        }
        self.prev = Some((t_ms, v));
    }

    /// Readings in time order, `times[i]` with `values[i]`: the same as [`Aligner::push`] for
    /// each, to the last bit (the same additions in the same order), but the bin being filled is
    /// summed in registers instead of read and written back for every reading, and found without
    /// a division while the readings stay in it (a 30 s bin takes 30 readings at 1 s).
    pub fn push_run(&mut self, times: &[i64], values: &[f64]) {
        let mut open = OpenBin::CLOSED;
        for (&t, &v) in times.iter().zip(values) {
            if !v.is_finite() {
                self.prev = None;
                continue;
            }
            match self.prev {
                Some((t0, _)) if t < t0 => continue,
                Some((t0, v0)) if t > t0 && t - t0 <= self.max_gap_ms => {
                    self.acc.add_line_through(&mut open, t0, v0, t, v)
                }
                _ => {}
            }
            self.prev = Some((t, v));
        }
        self.acc.close(&open);
    }

    /// Time-weighted bin means; `NaN` where a bin is covered < 50 %.
    pub fn finish(self) -> Vec<f32> {
        self.acc.finish().0
    }

    /// [`Aligner::finish`] with the present bins not wholly covered and their share.
    pub fn finish_with_partial(self) -> (Vec<f32>, Vec<Partial>) {
        self.acc.finish()
    }
}

/// Streams an energy counter (J, rising) onto a grid as mean power per bin (W).
#[derive(Debug, Clone)]
pub struct CounterAligner {
    acc: BinAccumulator,
    max_gap_ms: i64,
    prev: Option<(i64, f64)>,
    breaks: usize,
}

impl CounterAligner {
    pub fn new(grid: Grid, max_gap_ms: i64) -> Self {
        Self { acc: BinAccumulator::new(grid), max_gap_ms, prev: None, breaks: 0 }
    }

    /// The longest step between counter readings that is spread as power (× 3 the interval).
    pub fn set_max_gap(&mut self, max_gap_ms: i64) {
        self.max_gap_ms = max_gap_ms;
    }

    /// One counter reading in J, in time order.
    pub fn push(&mut self, t_ms: i64, counter_j: f64) {
        if !counter_j.is_finite() {
            self.prev = None;
            return;
        }
        match self.prev {
            Some((t0, _)) if t_ms <= t0 => {
                if t_ms == t0 {
                    self.prev = Some((t_ms, counter_j));
                }
                return;
            }
            // A reset or roll-over: start again from this reading, produce nothing for the interval.
            Some((_, c0)) if counter_j < c0 => self.breaks += 1,
            Some((t0, c0)) if t_ms - t0 <= self.max_gap_ms => {
                let w = (counter_j - c0) / ((t_ms - t0) as f64 / 1000.0);
                self.acc.add_line(t0, w, t_ms, w);
            }
            _ => {}
        }
        self.prev = Some((t_ms, counter_j));
    }

    /// How many times the counter went down (resets, roll-overs) so far.
    pub fn breaks(&self) -> usize {
        self.breaks
    }

    /// Mean power per bin, W; `NaN` where a bin is covered < 50 %.
    pub fn finish(self) -> Vec<f32> {
        self.acc.finish().0
    }

    /// [`CounterAligner::finish`] with the present bins not wholly covered and their share.
    pub fn finish_with_partial(self) -> (Vec<f32>, Vec<Partial>) {
        self.acc.finish()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `push_run` against `push`, bit for bit, over readings that do everything a log does: steps
    /// inside a bin and across bin edges, gaps over the limit, repeated and earlier times, missing
    /// values, and readings before and after the grid.
    #[test]
    fn a_run_of_readings_lands_bit_for_bit_as_pushed_one_by_one() {
        let g = Grid { start_ms: 10_000, step_ms: 7_000, len: 40 };
        for seed in 1..40u64 {
            let mut x = seed;
            let mut next = |m: u64| {
                x = x.wrapping_mul(6_364_136_223_846_793_005).wrapping_add(1_442_695_040_888_963_407);
                (x >> 33) % m
            };
            let (mut times, mut values) = (vec![], vec![]);
            let mut t = 0i64;
            while t < g.end_ms() + 20_000 {
                times.push(t);
                let v = match next(40) {
                    0 => f64::NAN,
                    1 => f64::INFINITY,
                    _ => (next(1_000_000) as f64 - 300_000.0) / 7.0,
                };
                values.push(v);
                t += match next(20) {
                    0 => 0,
                    1 => -1_500,
                    2 => 9_000 + next(9_000) as i64,
                    _ => 1 + next(2_500) as i64,
                };
            }
            let mut one = Aligner::new(g, 6_000);
            let mut run = Aligner::new(g, 6_000);
            for (&t, &v) in times.iter().zip(&values) {
                one.push(t, v);
            }
            // In runs of uneven length, as chunks of different sizes come.
            let mut at = 0;
            while at < times.len() {
                let end = (at + 1 + next(50) as usize).min(times.len());
                run.push_run(&times[at..end], &values[at..end]);
                at = end;
            }
            let (a, b) = (one.acc, run.acc);
            assert!(
                a.integral.iter().zip(&b.integral).all(|(p, q)| p.to_bits() == q.to_bits()),
                "seed {seed}"
            );
            assert!(
                a.covered_ms.iter().zip(&b.covered_ms).all(|(p, q)| p.to_bits() == q.to_bits()),
                "seed {seed}"
            );
            assert!(a.covered_ms.iter().any(|&c| c > 0.0));
        }
    }
}
