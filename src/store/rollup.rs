/*!
Rollups written during the import so that reports and charts never scan raw readings.

- Per minute: one BLOB per channel, upload and UTC day. Each present minute is stored as
  `varint minute-of-day delta, varint count, f32 min, f32 max, f64 sum` (sums stay f64).
- Per hour: plain rows (`rollup_hour`), which SQL can aggregate directly.
*/

use super::chunk::ChunkError;
use super::varint::{self, VarintError};

pub const MINUTE_MS: i64 = 60_000;
pub const HOUR_MS: i64 = 3_600_000;
pub const DAY_MS: i64 = 86_400_000;

/// Count, min, max and sum of the readings of one bucket.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Acc {
    pub n: u32,
    pub min: f64,
    pub max: f64,
    pub sum: f64,
}

impl Acc {
    fn new(v: f64) -> Self {
        Self { n: 1, min: v, max: v, sum: v }
    }
    fn add(&mut self, v: f64) {
        self.n += 1;
        self.min = self.min.min(v);
        self.max = self.max.max(v);
        self.sum += v;
    }
    /// Merge another bucket into this one.
    pub fn merge(&mut self, o: &Acc) {
        self.n += o.n;
        self.min = self.min.min(o.min);
        self.max = self.max.max(o.max);
        self.sum += o.sum;
    }
    pub fn mean(&self) -> f64 {
        self.sum / f64::from(self.n.max(1))
    }
}

/// A finished day of minute buckets: `(minute start ms, bucket)`.
pub struct MinuteDay {
    pub day_ms: i64,
    pub minutes: Vec<(i64, Acc)>,
}

/// Builds both rollup levels for one channel from its time-ordered readings.
#[derive(Default)]
pub struct RollupBuilder {
    minute: Option<(i64, Acc)>,
    hour: Option<(i64, Acc)>,
    day: Vec<(i64, Acc)>,
    pub finished_days: Vec<MinuteDay>,
    pub finished_hours: Vec<(i64, Acc)>,
}

impl RollupBuilder {
    pub fn push(&mut self, t_ms: i64, v: f64) {
        let m = t_ms.div_euclid(MINUTE_MS) * MINUTE_MS;
        match &mut self.minute {
            Some((start, acc)) if *start == m => acc.add(v),
            _ => {
                self.close_minute();
                self.minute = Some((m, Acc::new(v)));
            }
        }
        let h = t_ms.div_euclid(HOUR_MS) * HOUR_MS;
        match &mut self.hour {
            Some((start, acc)) if *start == h => acc.add(v),
            _ => {
                if let Some(done) = self.hour.take() {
                    self.finished_hours.push(done);
                }
                self.hour = Some((h, Acc::new(v)));
            }
        }
    }

    fn close_minute(&mut self) {
        if let Some((m, acc)) = self.minute.take() {
            let day = m.div_euclid(DAY_MS) * DAY_MS;
            if let Some(&(first, _)) = self.day.first() {
                if first.div_euclid(DAY_MS) * DAY_MS != day {
                    self.close_day();
                }
            }
            self.day.push((m, acc));
        }
    }

    fn close_day(&mut self) {
        if let Some(&(first, _)) = self.day.first() {
            let day_ms = first.div_euclid(DAY_MS) * DAY_MS;
            self.finished_days.push(MinuteDay { day_ms, minutes: std::mem::take(&mut self.day) });
        }
    }

    /// Close every open bucket (end of the file).
    pub fn finish(&mut self) {
        self.close_minute();
        self.close_day();
        if let Some(done) = self.hour.take() {
            self.finished_hours.push(done);
        }
    }
}

/// Pack one day of minute buckets.
pub fn encode_day(day: &MinuteDay) -> Vec<u8> {
    let mut out = Vec::with_capacity(day.minutes.len() * 20 + 4);
    varint::put(&mut out, day.minutes.len() as u64);
    let mut prev = -1i64;
    for (m, acc) in &day.minutes {
        let idx = (m - day.day_ms) / MINUTE_MS;
        varint::put(&mut out, (idx - prev) as u64);
        prev = idx;
        varint::put(&mut out, u64::from(acc.n));
        out.extend_from_slice(&(acc.min as f32).to_le_bytes());
        out.extend_from_slice(&(acc.max as f32).to_le_bytes());
        out.extend_from_slice(&acc.sum.to_le_bytes());
    }
    out
}

/// Unpack one day of minute buckets, calling `each(minute_start_ms, bucket)`.
pub fn decode_day(day_ms: i64, blob: &[u8], mut each: impl FnMut(i64, Acc)) -> Result<(), ChunkError> {
    let mut pos = 0usize;
    let varint = |pos: &mut usize| {
        varint::get(blob, pos).map_err(|e| match e {
            VarintError::Truncated => ChunkError::Corrupt("truncated rollup"),
            VarintError::TooLong => ChunkError::Corrupt("rollup varint"),
        })
    };
    let count = varint(&mut pos)?;
    let mut idx = -1i64;
    for _ in 0..count {
        idx += varint(&mut pos)? as i64;
        let n = varint(&mut pos)? as u32;
        let bytes = blob.get(pos..pos + 16).ok_or(ChunkError::Corrupt("truncated rollup"))?;
        pos += 16;
        let min = f32::from_le_bytes(bytes[0..4].try_into().expect("4 bytes"));
        let max = f32::from_le_bytes(bytes[4..8].try_into().expect("4 bytes"));
        let sum = f64::from_le_bytes(bytes[8..16].try_into().expect("8 bytes"));
        each(day_ms + idx * MINUTE_MS, Acc { n, min: f64::from(min), max: f64::from(max), sum });
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_known_day_encodes_to_the_bytes_of_the_documented_layout() {
        // By hand from the layout in the module doc: count 1; minute 1 of the day, a delta of 2
        // from the start value -1; n = 2; min 1.0 and max 3.0 as little-endian IEEE 754 binary32
        // (3f800000, 40400000); sum 4.0 as binary64 (4010000000000000).
        let day =
            MinuteDay { day_ms: 0, minutes: vec![(60_000, Acc { n: 2, min: 1.0, max: 3.0, sum: 4.0 })] };
        let blob = encode_day(&day);
        let mut want = vec![0x01, 0x02, 0x02, 0x00, 0x00, 0x80, 0x3f, 0x00, 0x00, 0x40, 0x40];
        want.extend_from_slice(&[0, 0, 0, 0, 0, 0, 0x10, 0x40]);
        assert_eq!(blob, want);
        let mut back = vec![];
        decode_day(0, &blob, |m, a| back.push((m, a))).unwrap();
        assert_eq!(back, day.minutes);
    }

    #[test]
    fn minute_and_hour_buckets_hold_exact_counts_and_means_across_midnight() {
        // 1 s readings from 23:30 to 00:30 UTC: 3600 readings, 60 minutes, 2 hours, 2 days.
        let start = 1_772_407_800_000i64; // 2026-03-01T23:30:00Z
        let mut b = RollupBuilder::default();
        for i in 0..3600 {
            b.push(start + i * 1000, i as f64);
        }
        b.finish();
        assert_eq!(b.finished_days.len(), 2);
        let minutes: usize = b.finished_days.iter().map(|d| d.minutes.len()).sum();
        assert_eq!(minutes, 60);
        assert_eq!(b.finished_hours.len(), 2);
        let total: u32 = b.finished_hours.iter().map(|(_, a)| a.n).sum();
        assert_eq!(total, 3600);
        let first = b.finished_days[0].minutes[0].1;
        assert_eq!((first.n, first.min, first.max), (60, 0.0, 59.0));
        assert_eq!(first.mean(), 29.5);

        let blob = encode_day(&b.finished_days[1]);
        let mut back = vec![];
        decode_day(b.finished_days[1].day_ms, &blob, |m, a| back.push((m, a))).unwrap();
        assert_eq!(back.len(), 30);
        assert_eq!(back[0].0, start + 30 * 60_000);
        assert_eq!(back[0].1.sum, (1800..1860).map(f64::from).sum::<f64>());
    }
}
