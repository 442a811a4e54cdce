/*!
One power column per compressor.

A compressor's power may come from two channels: logged power (kW or W, or current made power) and
an energy counter (differences become power, [`super::CounterAligner`]). Both are the same draw of
the same machine, so where both logged a bin it must count once, and where only one did it must
count: every logged reading of a machine's power counts once. [`merge_power`] takes, bin by bin,
the column that covers more of the bin (a tie goes to the logged power, whose readings are the
instantaneous draw rather than a counter's steps), with that column's partly covered bin if it has
one.
*/

use super::cover::share;
use super::{FrameColumn, Partial};

/// `power` and `counter` (one compressor's logged power and energy counter on one grid) as one
/// column: each bin from the one that covers more of it, ties to `power` (module doc). The
/// result keeps `power`'s signal, compressor, point and label, and is not `from_counter`: the
/// logged power shows the machine's states.
pub fn merge_power(power: FrameColumn, counter: &FrameColumn) -> FrameColumn {
    let len = power.values.len();
    let mut values = Vec::with_capacity(len);
    let mut partial: Vec<Partial> = Vec::with_capacity(power.partial.len() + counter.partial.len());
    for i in 0..len {
        let (sp, sc) = (share(&power, i), share(counter, i));
        let from = if sc > sp { counter } else { &power };
        values.push(from.values[i]);
        if let Ok(k) = from.partial.binary_search_by_key(&(i as u32), |p| p.bin) {
            partial.push(from.partial[k]);
        }
    }
    FrameColumn { values, partial, ..power }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::core::series::{integrate_weighted, Grid, PressurePoint, Signal};

    fn col(label: &str, values: Vec<f32>, partial: Vec<Partial>) -> FrameColumn {
        FrameColumn {
            from_counter: false,
            signal: Signal::Power,
            compressor: Some(0),
            point: PressurePoint::Header,
            label: label.into(),
            values,
            partial,
        }
    }

    #[test]
    fn each_bin_counts_once_from_the_column_that_logged_more_of_it() {
        let nan = f32::NAN;
        // 6 bins of 1 h. Power logged bins 0-2 (bin 2 for a quarter of it, 20 kW); the counter
        // logged bins 1-4 (bin 1 at 30 kW, bin 4 for half of it at 40 kW).
        let power = col(
            "C1 power",
            vec![10_000.0, 12_000.0, nan, nan, nan, nan],
            vec![Partial { bin: 2, share: 0.25, mean: 20_000.0 }],
        );
        let counter = col(
            "C1 energy",
            vec![nan, 30_000.0, 16_000.0, 18_000.0, 40_000.0, nan],
            vec![Partial { bin: 4, share: 0.5, mean: 40_000.0 }],
        );
        let m = merge_power(power, &counter);
        assert_eq!(m.label, "C1 power");
        // Bin 1: both whole, the logged power wins the tie; bin 2: the counter covers it whole
        // against the power's quarter; bin 4: only the counter, half.
        assert_eq!(m.values[..5], [10_000.0, 12_000.0, 16_000.0, 18_000.0, 40_000.0]);
        assert!(m.values[5].is_nan());
        assert_eq!(m.partial, vec![Partial { bin: 4, share: 0.5, mean: 40_000.0 }]);
        // Energy by hand: 10 + 12 + 16 + 18 kWh + 40 kW × 0.5 h = 76 kWh, over 4.5 h logged.
        let grid = Grid { start_ms: 0, step_ms: 3_600_000, len: 6 };
        let i = integrate_weighted(&grid, &m.values, &m.partial);
        assert!((i.total / 3.6e6 - 76.0).abs() < 1e-9, "{}", i.total / 3.6e6);
        assert!((i.covered_s / 3600.0 - 4.5).abs() < 1e-9);
    }
}
