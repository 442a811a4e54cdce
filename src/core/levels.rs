/*!
The power levels a compressor's own log shows: off, running unloaded and loaded, found from the
distribution of its logged power (or power made from current) rather than read from assumed
fractions of the data sheet.

A person looking at a current or power trace of a load/unload machine sees three levels at once; the
data sheet's unloaded fraction (15-35 % for lubricated screws, US DOE compressed-air sourcebook, from
memory) is only a prior. Power made from current with one power factor overstates the unloaded level
badly (an induction motor's power factor falls steeply towards no load, common practice), so the
unloaded level in the data can sit near 60 % of the loaded one: thresholds from the data sheet then
read unloaded running as loaded.

# Method (per compressor, over its logged bins)
1. `top` = the 99.5th percentile of the logged power (robust to start-up spikes). Bins below 3 % of
   `top` are not running (a logger's noise floor, common practice).
2. The running bins are split in two by Otsu's method (N. Otsu, "A threshold selection method from
   gray-level histograms", IEEE Trans. SMC 9(1), 1979: the split that maximises the between-class
   variance). Each class's level is its median, its spread the median absolute deviation (MAD): robust
   to the few bins that a logger's interval catches between two levels (starts, blow-down). The two
   classes are two levels when they are well apart (our judgement): the lower median at most 85 %
   of the upper, and the gap between them above 4 × the sum of their MADs (one normal mode split in
   two gives about 1.7, a flat spread 1.0). Then **unloaded** = the lower median, **loaded** = the
   upper median.
3. Otherwise the running bins form one level `m` (their median); the data sheet decides which: loaded when `m` is
   above the midpoint of the data sheet's unloaded and full-load power, else unloaded. The missing
   level comes from the data sheet: the unloaded fraction × the loaded level found, or the rated
   power.
4. A level the auditor gives (`unloaded_level_kw`, `loaded_level_kw` of the compressor, read off the
   trace) replaces the one found (source `user`), for load/unload and start/stop machines.
5. **Off** below `max(3 % of loaded, unloaded / 2)` (the rule of `states`, on the levels found); the
   off level is the mean of the bins below it.

Load/unload and start/stop machines are classified on these levels (loaded at or above the midpoint of
unloaded and loaded). Modulation and variable speed spread over a range: their states keep the data
sheet's thresholds (`states::thresholds`) and the levels are reported as the means of the bins in each
state.
*/

use serde::{Deserialize, Serialize};

use super::model::{CompressorSpec, Control};
use super::states::{self, State, Thresholds};

/// Running below this share of the robust top is not running (step 1).
const RUNNING_FROM_SHARE_OF_TOP: f64 = 0.03;
/// Least gap between two running levels, in sums of their MADs (step 2).
const MIN_GAP_IN_MADS: f64 = 4.0;
/// Largest lower/upper ratio of two running levels (step 2).
const MAX_LEVEL_RATIO: f64 = 0.85;

/// Where a level comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum LevelSource {
    /// Found in the logged data.
    Data,
    /// Not in the data: from the data sheet (prior).
    DataSheet,
    /// Given by the auditor (`unloaded_level_kw`, `loaded_level_kw` of the compressor).
    User,
}

/// The levels found for one compressor, kW (API.md `levels_kw`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Levels {
    /// Mean power of the bins read as off (`None`: never off).
    pub off: Option<f64>,
    pub unloaded: f64,
    pub loaded: f64,
    pub unloaded_source: LevelSource,
    pub loaded_source: LevelSource,
}

/// Levels and the thresholds that classify the bins (module doc).
#[derive(Debug, Clone, PartialEq)]
pub struct Found {
    pub levels: Levels,
    pub thresholds: Thresholds,
}

/// Otsu's split of sorted values: the index of the first value of the upper class.
fn otsu(sorted: &[f64]) -> Option<usize> {
    let n = sorted.len();
    if n < 2 {
        return None;
    }
    let total: f64 = sorted.iter().sum();
    let (mut best, mut best_k, mut run) = (-1.0, 0, 0.0);
    for k in 1..n {
        run += sorted[k - 1];
        if sorted[k] == sorted[k - 1] {
            continue;
        }
        let w0 = k as f64 / n as f64;
        let m0 = run / k as f64;
        let m1 = (total - run) / (n - k) as f64;
        let between = w0 * (1.0 - w0) * (m1 - m0).powi(2);
        if between > best {
            best = between;
            best_k = k;
        }
    }
    (best_k > 0).then_some(best_k)
}

/// Median of sorted values.
fn median(sorted: &[f64]) -> f64 {
    let n = sorted.len();
    if n % 2 == 1 {
        sorted[n / 2]
    } else {
        0.5 * (sorted[n / 2 - 1] + sorted[n / 2])
    }
}

/// Median and median absolute deviation of sorted values.
fn median_mad(sorted: &[f64]) -> (f64, f64) {
    let m = median(sorted);
    let mut dev: Vec<f64> = sorted.iter().map(|x| (x - m).abs()).collect();
    dev.sort_by(f64::total_cmp);
    (m, median(&dev))
}

/// Two running levels (lower, upper) if the split is well apart (module doc, step 2).
fn two_levels(running: &[f64]) -> Option<(f64, f64)> {
    let k = otsu(running)?;
    let ((lo, lo_mad), (hi, hi_mad)) = (median_mad(&running[..k]), median_mad(&running[k..]));
    (lo > 0.0 && lo <= MAX_LEVEL_RATIO * hi && hi - lo > MIN_GAP_IN_MADS * (lo_mad + hi_mad))
        .then_some((lo, hi))
}

/// Find the levels of one compressor's power column (W per bin; NaN where not logged).
pub fn find(spec: &CompressorSpec, power_w: &[f32]) -> Found {
    let mut v: Vec<f64> = power_w.iter().filter(|p| p.is_finite()).map(|&p| (p as f64).max(0.0)).collect();
    let sheet = states::thresholds(spec);
    let prior_fraction = spec.unloaded_power_fraction.clamp(0.0, 0.9);
    if v.is_empty() {
        return Found { levels: sheet_levels(&sheet, None), thresholds: sheet };
    }
    v.sort_by(f64::total_cmp);
    let top = v[((v.len() - 1) as f64 * 0.995).round() as usize];
    let running: &[f64] = {
        let from = v.partition_point(|&x| x < RUNNING_FROM_SHARE_OF_TOP * top);
        &v[from..]
    };
    let (unloaded_w, loaded_w, us, ls) = match two_levels(running) {
        Some((lo, hi)) => (lo, hi, LevelSource::Data, LevelSource::Data),
        _ if running.is_empty() => {
            (sheet.unloaded_w, sheet.full_w, LevelSource::DataSheet, LevelSource::DataSheet)
        }
        _ => {
            let m = median(running);
            if m >= 0.5 * (sheet.unloaded_w + sheet.full_w) {
                (prior_fraction * m, m, LevelSource::DataSheet, LevelSource::Data)
            } else {
                (m, sheet.full_w.max(m), LevelSource::Data, LevelSource::DataSheet)
            }
        }
    };
    // The auditor's correction replaces what was found.
    let (loaded_w, ls) = match spec.loaded_level_kw {
        Some(kw) => (kw * 1000.0, LevelSource::User),
        None => (loaded_w, ls),
    };
    let (unloaded_w, us) = match spec.unloaded_level_kw {
        Some(kw) => (kw * 1000.0, LevelSource::User),
        None => (unloaded_w, us),
    };
    let off_below = (0.03 * loaded_w).max(0.5 * unloaded_w);
    let n_off = v.partition_point(|&x| x < off_below);
    let off = (n_off > 0).then(|| v[..n_off].iter().sum::<f64>() / n_off as f64 / 1000.0);
    match spec.control {
        Control::LoadUnload | Control::StartStop => {
            let mid = 0.5 * (unloaded_w + loaded_w);
            let thresholds = Thresholds {
                full_w: loaded_w,
                unloaded_w,
                off_below_w: off_below,
                unloaded_below_w: mid,
                loaded_from_w: mid,
            };
            let levels = Levels {
                off,
                unloaded: unloaded_w / 1000.0,
                loaded: loaded_w / 1000.0,
                unloaded_source: us,
                loaded_source: ls,
            };
            Found { levels, thresholds }
        }
        Control::Modulation | Control::VariableSpeed => {
            let states = states::classify_with(&sheet, power_w);
            let mean_in = |s: State| {
                let (sum, n) = states
                    .iter()
                    .zip(power_w)
                    .filter(|(x, _)| **x == s)
                    .fold((0.0, 0usize), |(a, n), (_, &p)| (a + p as f64, n + 1));
                (n > 0).then(|| sum / n as f64 / 1000.0)
            };
            let levels = Levels {
                off: mean_in(State::Off),
                unloaded: mean_in(State::Unloaded).unwrap_or(sheet.unloaded_w / 1000.0),
                loaded: mean_in(State::Loaded).unwrap_or(sheet.full_w / 1000.0),
                unloaded_source: if mean_in(State::Unloaded).is_some() {
                    LevelSource::Data
                } else {
                    LevelSource::DataSheet
                },
                loaded_source: if mean_in(State::Loaded).is_some() {
                    LevelSource::Data
                } else {
                    LevelSource::DataSheet
                },
            };
            Found { levels, thresholds: sheet }
        }
    }
}

/// The states of a power column read on the levels found in it: the rule of the analysis, also used
/// by the decay events, the pressure-decay test's check and the replay's demand.
pub fn classify(spec: &CompressorSpec, power_w: &[f32]) -> Vec<State> {
    states::classify_with(&find(spec, power_w).thresholds, power_w)
}

fn sheet_levels(t: &Thresholds, off: Option<f64>) -> Levels {
    Levels {
        off,
        unloaded: t.unloaded_w / 1000.0,
        loaded: t.full_w / 1000.0,
        unloaded_source: LevelSource::DataSheet,
        loaded_source: LevelSource::DataSheet,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::core::states::tests::spec;

    #[test]
    fn three_levels_are_found_where_one_power_factor_lifts_the_unloaded_level() {
        // A 55 kW load/unload machine logged as current with one power factor: unloaded reads 65 %
        // of loaded (not the data sheet's 25 %), off ~0.1 kW. 20 % loaded, 50 % unloaded, 30 % off,
        // with ±2 % noise. Truth: the levels the series was made from.
        let c = spec("C", Control::LoadUnload, 55.0, 9.5);
        let noise = |i: usize| 1.0 + 0.02 * ((i as f64 * 0.7).sin());
        let p: Vec<f32> = (0..1000)
            .map(|i| match i % 10 {
                0 | 1 => 55_000.0 * noise(i),
                2..=6 => 36_000.0 * noise(i),
                _ => 100.0,
            } as f32)
            .collect();
        let f = find(&c, &p);
        assert!((f.levels.loaded - 55.0).abs() < 0.5, "{:?}", f.levels);
        assert!((f.levels.unloaded - 36.0).abs() < 0.5, "{:?}", f.levels);
        assert!((f.levels.off.unwrap() - 0.1).abs() < 1e-3, "{:?}", f.levels);
        assert_eq!(f.levels.unloaded_source, LevelSource::Data);
        let s = states::classify_with(&f.thresholds, &p);
        let loaded = s.iter().filter(|x| **x == State::Loaded).count();
        let unloaded = s.iter().filter(|x| **x == State::Unloaded).count();
        assert_eq!((loaded, unloaded), (200, 500));
        // The data sheet's thresholds alone read the unloaded running as loaded (the error).
        let old = states::classify(&c, &p);
        assert_eq!(old.iter().filter(|x| **x == State::Loaded).count(), 700);
    }

    #[test]
    fn one_running_level_is_placed_by_the_data_sheet() {
        // Always loaded at 57 kW: loaded from the data, unloaded from the data sheet's fraction.
        let c = spec("C", Control::LoadUnload, 55.0, 9.5);
        let p: Vec<f32> = (0..100).map(|i| 57_000.0 + (i % 3) as f32 * 100.0).collect();
        let f = find(&c, &p);
        assert!((f.levels.loaded - 57.1).abs() < 0.1);
        assert_eq!(f.levels.unloaded_source, LevelSource::DataSheet);
        assert!((f.levels.unloaded - 0.25 * f.levels.loaded).abs() < 1e-9);
        // Always unloaded at 14 kW: unloaded from the data, loaded from the rated power.
        let p: Vec<f32> = (0..100).map(|i| 14_000.0 + (i % 3) as f32 * 100.0).collect();
        let f = find(&c, &p);
        assert!((f.levels.unloaded - 14.1).abs() < 0.1);
        assert_eq!((f.levels.loaded, f.levels.loaded_source), (55.0, LevelSource::DataSheet));
        // The auditor says the machine loads at 60 kW: 14 kW then stays unloaded, and 58 kW reads loaded.
        let corrected = CompressorSpec { loaded_level_kw: Some(60.0), ..c.clone() };
        let f = find(&corrected, &p);
        assert_eq!((f.levels.loaded, f.levels.loaded_source), (60.0, LevelSource::User));
        let s = states::classify_with(&f.thresholds, &[14_000.0, 58_000.0]);
        assert_eq!(s, vec![State::Unloaded, State::Loaded]);
    }
}
