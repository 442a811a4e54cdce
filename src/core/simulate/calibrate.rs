//! The replay's machines calibrated from the log (the module doc's "Calibration"): a load/unload
//! machine's unloaded power is read where its log shows it settled, after the blow-down, and its
//! blow-down is the one the part-load model fitted from the same log (`partload::fit`), where the log
//! is fine enough to show it.

use super::SimInput;
use crate::core::levels;
use crate::core::model::{CompressorSpec, Control};
use crate::core::partload::{fit, BlowDown, BLOWDOWN_TAU_S};
use crate::core::states::State;

/// Bins after an unloading that still hold blow-down: three time constants (5 % of the decay left).
const SETTLED_AFTER_TAUS: f64 = 3.0;
/// A settled bin differs from both neighbours by less than this share of rated power.
const FLAT_SHARE_OF_RATED: f64 = 0.01;
/// Fewest settled unloaded bins that calibrate a machine.
pub(super) const MIN_SETTLED_BINS: usize = 30;

/// Each compressor as the replay runs it: a load/unload machine whose log shows at least
/// [`MIN_SETTLED_BINS`] unloaded bins more than three blow-down time constants after its last loaded
/// bin, before its next and within 1 % of rated power of both neighbours (flat), takes their median power as its unloaded power (`unloaded_power_fraction` = that / rated power);
/// the others keep their data sheet. Returns the specs, one line per calibrated machine, and the
/// blow-down of each load/unload machine whose log showed one (by tag; the others replay the
/// default, `partload::BlowDown::default`).
pub(super) fn calibrated(input: &SimInput) -> (Vec<CompressorSpec>, Vec<String>, Vec<(String, BlowDown)>) {
    let step_s = input.frame.grid.step_s();
    let settle_bins = (SETTLED_AFTER_TAUS * BLOWDOWN_TAU_S / step_s).ceil() as usize;
    let mut notes = Vec::new();
    let mut blowdowns = Vec::new();
    let specs = input
        .compressors
        .iter()
        .enumerate()
        .map(|(i, c)| {
            let mut c = c.clone();
            let Some(col) = input.frame.power_of(i) else { return c };
            if c.control != Control::LoadUnload || c.rated_power_kw <= 0.0 {
                return c;
            }
            let found = levels::find(&c, &col.values);
            let states = crate::core::states::classify_with(&found.thresholds, &col.values);
            // The blow-down the part-load model reads from this log (not on a log too coarse).
            let fitted = fit::calibrate(&col.values, &states, found.levels.loaded * 1000.0, None, step_s);
            if let Some(f) = fitted.blowdown {
                notes.push(format!(
                    "{}: blow-down from its log, from {:.0} % of loaded power with τ = {:.1} s",
                    c.tag,
                    f.blowdown.start_fraction * 100.0,
                    f.blowdown.tau_s
                ));
                blowdowns.push((c.tag.clone(), f.blowdown));
            }
            let mut settled: Vec<f64> = Vec::new();
            let mut since_loaded = None::<usize>;
            for (k, (s, &p)) in states.iter().zip(&col.values).enumerate() {
                since_loaded = match s {
                    State::Loaded | State::PartLoad => Some(0),
                    State::Unloaded => since_loaded.map(|k| k + 1),
                    // Off or not logged: the next unloaded run has no known start.
                    _ => None,
                };
                // The next bin unloaded too, and the power flat on both sides: this bin holds no
                // reloading, nor a load burst too short to reach the loaded threshold in its bin.
                let next_unloaded = states.get(k + 1) == Some(&State::Unloaded);
                let flat = k > 0
                    && [col.values[k - 1], col.values.get(k + 1).copied().unwrap_or(f32::NAN)]
                        .iter()
                        .all(|&q| ((q - p).abs() as f64) < FLAT_SHARE_OF_RATED * c.rated_power_kw * 1000.0);
                if next_unloaded && flat && since_loaded.is_some_and(|k| k > settle_bins) && p.is_finite() {
                    settled.push(p as f64);
                }
            }
            let n = settled.len();
            if n >= MIN_SETTLED_BINS {
                // The median: a bin that caught a short load burst below the loaded threshold is rare
                // and must not pull the level up.
                settled.sort_by(f64::total_cmp);
                let kw = settled[n / 2] / 1000.0;
                let u = (kw / c.rated_power_kw).clamp(0.0, 1.0);
                notes.push(format!(
                    "{}: unloaded power {kw:.1} kW from {n} settled unloaded analysis steps of its log ({:.0} % of rated, data sheet {:.0} %)",
                    c.tag,
                    u * 100.0,
                    c.unloaded_power_fraction * 100.0
                ));
                c.unloaded_power_fraction = u;
            }
            c
        })
        .collect();
    (specs, notes, blowdowns)
}
