/*!
Spacings of one time series with bounded memory: the median interval, and the gaps longer than
3x it, counted exactly.

The median comes from a histogram of the distinct spacings, capped at [`MAX_DISTINCT_INTERVALS`]
keys. Once the cap is reached the key set never changes again, so the threshold that [`report`]
will use, 3x the median, is already one of at most that many values: 3x a key. A spacing left out of
the histogram is then counted in the bucket between the two possible thresholds around it, and the
gap count adds the buckets above the threshold actually used. Memory: two vectors of the cap's
length, made only for a series that reaches the cap.

[`report`]: Intervals::report
*/

use super::{Gap, GapReport, MAX_EXAMPLES};
use crate::ingest::timestamp::format_utc_ms;
use std::collections::HashMap;

pub(super) const MAX_DISTINCT_INTERVALS: usize = 4096;
const MAX_GAP_CANDIDATES: usize = 256;

/// Spacing statistics of one time series, bounded memory.
#[derive(Debug, Clone, Default)]
pub(super) struct Intervals {
    last_t: Option<i64>,
    /// Distinct interval (ms) -> count; `last` caches the most recent one (the common case: a
    /// logger's fixed interval) so the map is touched only when the spacing changes.
    hist: HashMap<i64, u64>,
    last: (i64, u64),
    best: (i64, u64),
    longest: Option<(i64, i64)>,
    candidates: Vec<(i64, i64)>,
    /// The spacings left out of the full histogram, counted between the possible thresholds.
    left_out: Option<Box<LeftOut>>,
}

/// Spacings left out of the histogram once it is full. `thresholds` are 3x every key of the
/// (then frozen) histogram, sorted; `counts[i]` counts the left-out spacings with exactly `i`
/// thresholds below them, i.e. those in `(thresholds[i - 1], thresholds[i]]`.
#[derive(Debug, Clone)]
struct LeftOut {
    thresholds: Vec<i64>,
    counts: Vec<u64>,
}

impl Intervals {
    #[inline]
    pub(super) fn observe(&mut self, t: i64) {
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
                None => {
                    // Capped: left out of the median, but counted.
                    self.last = (0, 0);
                    self.leave_out(dt);
                }
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

    /// Count a spacing that the full histogram has no room for. The histogram's keys no longer
    /// change once it is full (a new spacing is added only while there is room), so the
    /// thresholds are made once.
    #[cold]
    fn leave_out(&mut self, dt: i64) {
        let hist = &self.hist;
        let l = self.left_out.get_or_insert_with(|| {
            let mut thresholds: Vec<i64> = hist.keys().map(|&k| 3 * k).collect();
            thresholds.sort_unstable();
            Box::new(LeftOut { counts: vec![0; thresholds.len() + 1], thresholds })
        });
        l.counts[l.thresholds.partition_point(|&t| t < dt)] += 1;
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

    pub(super) fn median_ms(&self) -> Option<i64> {
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

    /// The gaps longer than 3x `median_ms`. The count is exact when the threshold is one this
    /// series could have (3x one of its spacings: always for the file's own median); otherwise
    /// left-out spacings between the two possible thresholds around it may or may not be gaps,
    /// and the count is the number that surely are, marked `count_at_least`.
    pub(super) fn report(&self, median_ms: Option<i64>) -> GapReport {
        let Some(m) = median_ms else {
            return GapReport::default();
        };
        let thr = 3 * m;
        let h = self.sorted();
        let mut count: u64 = h.iter().filter(|s| s.0 > thr).map(|s| s.1).sum();
        let mut count_at_least = false;
        if let Some(l) = &self.left_out {
            // Bucket i holds spacings above `thresholds[i - 1]`: all gaps once that is >= thr.
            let surely = l.thresholds.partition_point(|&t| t < thr) + 1;
            count += l.counts[surely.min(l.counts.len())..].iter().sum::<u64>();
            // When thr is itself a threshold, the bucket below `surely` holds no gap; otherwise
            // it straddles thr.
            let straddling = surely - 1;
            if l.thresholds.get(straddling) != Some(&thr) && l.counts[straddling] > 0 {
                count_at_least = true;
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
            count_at_least,
            threshold_s: Some(thr as f64 / 1000.0),
            longest_s: self.longest.filter(|l| l.1 > thr).map(|l| l.1 as f64 / 1000.0),
            examples,
        }
    }
}
