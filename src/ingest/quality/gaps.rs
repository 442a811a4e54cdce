/*!
Spacings of one time series with bounded memory: the median interval and the gaps longer than 3x
it.
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

    pub(super) fn report(&self, median_ms: Option<i64>) -> GapReport {
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
