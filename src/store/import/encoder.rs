/*!
The two threads before the writer: the parse thread's sink, which cuts each channel into runs of
at most [`CHUNK_READINGS`] (fewer when many columns are mapped, see [`run_length`]), and the
encoder, which builds the rollups and encodes the chunks.
*/

use std::sync::atomic::Ordering;
use std::sync::Arc;

use tokio::sync::mpsc;

use super::Progress;
use crate::ingest::{IngestError, ReadingSink};
use crate::store::chunk::{self, Precision, CHUNK_READINGS};
use crate::store::rollup::{encode_day, Acc, RollupBuilder};

pub(super) enum Msg {
    Chunk { channel: usize, t0: i64, t1: i64, n: usize, blob: Vec<u8> },
    Day { channel: usize, day_ms: i64, blob: Vec<u8> },
    Hours { channel: usize, hours: Vec<(i64, Acc)> },
}

/// What the parse thread keeps per channel: the open chunk and the span of accepted readings.
pub(super) struct ChannelBuf {
    pub(super) times: Vec<i64>,
    pub(super) values: Vec<f64>,
    pub(super) last_t: Option<i64>,
    pub(super) first_t: Option<i64>,
    pub(super) readings: u64,
    pub(super) dropped: u64,
}

/// A full (or last) run of one channel's readings, handed from the parse thread to the encoder.
pub(super) enum Work {
    Run { channel: usize, times: Vec<i64>, values: Vec<f64> },
    Finish,
}

/// How many runs may wait for the encoder: bounds memory (each run is at most 8192 × 16 bytes).
pub(super) const ENCODER_QUEUE: usize = 8;

/// Readings all the open runs of one import may hold together (16 bytes each: 4 MiB).
pub(super) const OPEN_RUNS_BUDGET: usize = 1 << 18;

/// Shortest run a channel is cut into: below this the per-chunk overhead (a row, a header, a
/// deflate stream) outweighs the readings.
pub(super) const MIN_RUN: usize = 64;

/// The run length for `channels` mapped columns: the open runs share [`OPEN_RUNS_BUDGET`], so
/// that memory does not grow with the number of columns (8192 readings × 2,000 columns was
/// 256 MB of buffers), within [`MIN_RUN`]..=[`CHUNK_READINGS`]. A chunk of fewer readings is a
/// valid chunk (the codec and the rollups take any length from 1): only the row count changes.
pub(super) fn run_length(channels: usize) -> usize {
    (OPEN_RUNS_BUDGET / channels.max(1)).clamp(MIN_RUN, CHUNK_READINGS)
}

/// First stage, on the parse thread: drops readings that are not later than the channel's previous
/// one, and cuts each channel into runs of `run_len` readings for the encoder.
pub(super) struct ChunkSink {
    pub(super) channels: Vec<ChannelBuf>,
    pub(super) run_len: usize,
    pub(super) tx: std::sync::mpsc::SyncSender<Work>,
    pub(super) progress: Arc<Progress>,
}

fn writer_stopped() -> IngestError {
    IngestError { message: "the database writer stopped".into(), line: None, column: None, field: None }
}

impl ChunkSink {
    fn hand_over(&mut self, ch: usize) -> Result<(), IngestError> {
        let b = &mut self.channels[ch];
        if b.times.is_empty() {
            return Ok(());
        }
        let times = std::mem::replace(&mut b.times, Vec::with_capacity(self.run_len));
        let values = std::mem::replace(&mut b.values, Vec::with_capacity(self.run_len));
        self.tx.send(Work::Run { channel: ch, times, values }).map_err(|_| writer_stopped())
    }

    pub(super) fn finish(&mut self) -> Result<(), IngestError> {
        for ch in 0..self.channels.len() {
            self.hand_over(ch)?;
        }
        self.tx.send(Work::Finish).map_err(|_| writer_stopped())
    }
}

impl ReadingSink for ChunkSink {
    fn reading(&mut self, channel: usize, t_ms: i64, value_si: f64) -> Result<(), IngestError> {
        let b = &mut self.channels[channel];
        if b.last_t.is_some_and(|l| t_ms <= l) || !value_si.is_finite() {
            b.dropped += 1;
            return Ok(());
        }
        b.last_t = Some(t_ms);
        b.first_t.get_or_insert(t_ms);
        b.readings += 1;
        b.times.push(t_ms);
        b.values.push(value_si);
        if b.times.len() >= self.run_len {
            self.progress.readings.fetch_add(self.run_len as u64, Ordering::Relaxed);
            self.hand_over(channel)?;
        }
        Ok(())
    }
}

/// Second stage, on its own thread so that parsing and encoding use two cores: builds the rollups
/// and encodes the chunks, and passes both to the writer in the order they were cut.
pub(super) fn encode_runs(
    precisions: Vec<Precision>,
    rx: std::sync::mpsc::Receiver<Work>,
    tx: mpsc::Sender<Msg>,
) -> Result<(), IngestError> {
    let mut rollups: Vec<RollupBuilder> = precisions.iter().map(|_| RollupBuilder::default()).collect();
    let send = |m: Msg| tx.blocking_send(m).map_err(|_| writer_stopped());
    let days_and_hours = |ch: usize, r: &mut RollupBuilder| -> Result<(), IngestError> {
        for d in r.finished_days.drain(..) {
            send(Msg::Day { channel: ch, day_ms: d.day_ms, blob: encode_day(&d) })?;
        }
        if !r.finished_hours.is_empty() {
            send(Msg::Hours { channel: ch, hours: std::mem::take(&mut r.finished_hours) })?;
        }
        Ok(())
    };
    while let Ok(work) = rx.recv() {
        match work {
            Work::Run { channel, times, values } => {
                let r = &mut rollups[channel];
                for (&t, &v) in times.iter().zip(&values) {
                    r.push(t, v);
                }
                let blob = chunk::encode(&times, &values, precisions[channel]);
                send(Msg::Chunk {
                    channel,
                    t0: times[0],
                    t1: *times.last().expect("a run is never empty"),
                    n: times.len(),
                    blob,
                })?;
                days_and_hours(channel, r)?;
            }
            Work::Finish => {
                for (ch, r) in rollups.iter_mut().enumerate() {
                    r.finish();
                    days_and_hours(ch, r)?;
                }
                return Ok(());
            }
        }
    }
    // The parser stopped without finishing (a bad file): nothing more to write.
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn runs_shrink_as_columns_grow_within_their_bounds() {
        assert_eq!(run_length(1), CHUNK_READINGS);
        assert_eq!(run_length(32), CHUNK_READINGS); // 262,144 / 32 = 8192
        assert_eq!(run_length(33), 7943);
        assert_eq!(run_length(2000), 131);
        assert_eq!(run_length(4096), MIN_RUN);
        assert_eq!(run_length(100_000), MIN_RUN);
        // Up to the record reader's 4,096 fields the open runs stay within the budget.
        for n in [1, 10, 100, 512, 1000, 2000, 4096] {
            assert!(run_length(n) * n <= OPEN_RUNS_BUDGET, "{n} columns");
        }
    }
}
