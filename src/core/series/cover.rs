/*!
How much of each bin was logged: the share a column covers (whole, a gap's edge, nothing) and the
hours of the grid in which anything was logged, which a span of several files years apart can
make a small part of the grid's span.
*/

use super::{Frame, FrameColumn};

/// The share of bin `i` a column covers: 1 for a whole bin, the partial share of a bin at a gap's
/// edge (present or not bin by bin), 0 where nothing was logged.
pub(super) fn share(c: &FrameColumn, i: usize) -> f32 {
    match c.partial.binary_search_by_key(&(i as u32), |p| p.bin) {
        Ok(k) => c.partial[k].share,
        Err(_) if c.values.get(i).is_some_and(|v| v.is_finite()) => 1.0,
        Err(_) => 0.0,
    }
}

impl Frame {
    /// Hours in which at least one channel was logged: each bin for the largest share any column
    /// covers of it. Never more than [`super::Grid::hours`], the span from the first reading's bin
    /// to the last one's.
    pub fn logged_hours(&self) -> f64 {
        let mut bins = 0.0f64;
        for i in 0..self.grid.len {
            let mut best = 0.0f32;
            for c in &self.columns {
                best = best.max(share(c, i));
                if best >= 1.0 {
                    break;
                }
            }
            bins += best as f64;
        }
        bins * self.grid.step_s() / 3600.0
    }
}

#[cfg(test)]
mod tests {
    use crate::core::series::{Frame, FrameColumn, Grid, Partial, PressurePoint, Signal};

    #[test]
    fn logged_hours_count_bins_any_column_holds_once() {
        let nan = f32::NAN;
        let col = |signal, values: Vec<f32>, partial| FrameColumn {
            from_counter: false,
            signal,
            compressor: None,
            point: PressurePoint::Header,
            label: String::new(),
            values,
            partial,
        };
        // 10 bins of 15 min: power in bins 0-1, pressure in bins 1-2 and a quarter of bin 3, and
        // nothing in bins 4-9 (two files far apart with an empty span between them).
        let frame = Frame {
            grid: Grid { start_ms: 0, step_ms: 900_000, len: 10 },
            columns: vec![
                col(Signal::Power, vec![1.0, 1.0, nan, nan, nan, nan, nan, nan, nan, nan], vec![]),
                col(
                    Signal::Pressure,
                    vec![nan, 7.0, 7.0, nan, nan, nan, nan, nan, nan, nan],
                    vec![Partial { bin: 3, share: 0.25, mean: 7.0 }],
                ),
            ],
        };
        // By hand: bins 0, 1, 2 whole and a quarter of bin 3: 3.25 × 0.25 h = 0.8125 h of 2.5 h.
        assert!((frame.logged_hours() - 0.8125).abs() < 1e-12, "{}", frame.logged_hours());
        assert!((frame.grid.hours() - 2.5).abs() < 1e-12);
    }
}
