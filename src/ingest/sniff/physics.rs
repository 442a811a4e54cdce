/*!
Units chosen from physics when a file states none: what one logged machine can draw, and what a
compressor's flow costs in power. Every limit here is common practice from memory, to be checked
by the auditor (the column's note asks for it).

- **One machine's draw**: a single logged machine in a shop compressed-air system draws at most
  [`MAX_MACHINE_KW`] (2,000 kW). A power column without a unit is kW when no reading exceeds it,
  else W. An energy counter without a unit is kWh unless the mean power its increments imply,
  read as kWh, exceeds the same limit; then it is Wh. One limit for both, so a logger's power and
  its counter are read alike.
- **Specific power**: a compressor delivers one m³/min of free air for roughly 3 to 15 kW
  ([`SPECIFIC_KW_PER_M3_MIN`]; a loaded screw compressor near 7 bar(g) sits near 6 to 7, part load
  and small machines higher). A flow column without a unit, in a file that also logs power (or
  current and voltage), takes the one unit among m³/min, l/min and m³/h that puts the file's power
  over its flow inside that band; the candidates lie 16.7 to 1,000 times apart and the band is 5
  wide, so at most one fits. None fitting leaves the unit to the auditor.
- **Humidity**: temperatures with no unit are °C by their range, unless the file also logs a dew
  point and a relative humidity; then the unit among °C and °F in which the three agree by the
  Magnus formula (Alduchov and Eskridge, 1996) is taken ([`temperature_from_humidity`]).
*/

use super::columns::{self, ColumnGuess};
use crate::core::display::{render_parts, Fmt};
use crate::core::recommend::{self as text, Part};
use crate::core::unit_table::{self, LoggedQuantity};
use crate::core::units::{PressureAbs, UnitSystem, P_STD_ATM};

/// The most one logged machine draws, kW (common practice, from memory).
pub const MAX_MACHINE_KW: f64 = 2000.0;

/// Plausible specific power of compressed air, kW per m³/min of free air (common practice, from
/// memory).
pub const SPECIFIC_KW_PER_M3_MIN: (f64, f64) = (3.0, 15.0);

/// The unit of a power column without one: kW unless a reading exceeds [`MAX_MACHINE_KW`].
/// With no reading in the sample there is nothing to judge from: kW, the form's first choice
/// (the column stores nothing from this head; the note asks for a check).
pub fn power_unit(values: &[f64]) -> &'static str {
    if values.iter().all(|v| v.abs() <= MAX_MACHINE_KW) {
        "kW"
    } else {
        "W"
    }
}

/// The mean power, kW, that a counter's increments imply if it counts kWh: increases between
/// consecutive timed readings over steps no longer than three median steps (longer gaps are not
/// logged time), a decrease (a reset) left out with its step. `None` without two such readings.
pub fn counter_kw_as_kwh(values: &[f64], times: &[Option<f64>]) -> Option<f64> {
    let pts: Vec<(f64, f64)> = values.iter().zip(times).filter_map(|(v, t)| Some(((*t)?, *v))).collect();
    let mut steps: Vec<f64> = pts.windows(2).map(|w| w[1].0 - w[0].0).filter(|d| *d > 0.0).collect();
    if steps.is_empty() {
        return None;
    }
    steps.sort_by(f64::total_cmp);
    let limit = 3.0 * steps[steps.len() / 2];
    let (mut kwh, mut seconds) = (0.0, 0.0);
    for w in pts.windows(2) {
        let (dt, dv) = (w[1].0 - w[0].0, w[1].1 - w[0].1);
        if dt > 0.0 && dt <= limit && dv >= 0.0 {
            kwh += dv;
            seconds += dt;
        }
    }
    (seconds > 0.0).then(|| kwh / (seconds / 3600.0))
}

/// The unit of an energy counter without one: kWh, or Wh when kWh would mean more than one
/// machine draws. `None` when the sample has no two timed readings to judge from.
pub fn energy_unit(values: &[f64], times: &[Option<f64>]) -> Option<&'static str> {
    let kw = counter_kw_as_kwh(values, times)?;
    Some(if kw > MAX_MACHINE_KW { "Wh" } else { "kWh" })
}

/// A column of volts, by its name (`Voltage`, `Spannung`, `U [V]`, `Volts`).
fn is_voltage(name: &str) -> bool {
    let l = name.to_lowercase();
    let (bracketed, words) = columns::header_tokens(&l);
    l.contains("voltage")
        || l.contains("spannung")
        || bracketed.iter().chain(&words).any(|w| matches!(w.as_str(), "v" | "volt" | "volts"))
}

/// Where [`logged_kw`] found the file's electrical power.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum PowerFrom {
    /// Its power columns (which the proposed mapping reads).
    Power,
    /// Its volts times its amps: no power the mapping reads, only a rough electrical figure.
    VoltsAmps,
}

/// The electrical power a file logs, kW: the sum of the mean power of its power columns, else the
/// mean volts of its first voltage column times the summed mean amps of its current columns (a
/// rough figure: the phase count and power factor are not known; the band is wide for it).
/// `means` holds each column's mean reading by index.
pub fn logged_kw(columns: &[ColumnGuess], header: &[String], means: &[Option<f64>]) -> Option<f64> {
    logged_kw_from(columns, header, means).map(|(kw, _)| kw)
}

fn logged_kw_from(
    columns: &[ColumnGuess],
    header: &[String],
    means: &[Option<f64>],
) -> Option<(f64, PowerFrom)> {
    let mean = |i: usize| means.get(i).copied().flatten();
    let mut power = None;
    for c in columns.iter().filter(|c| c.quantity.as_deref() == Some("power")) {
        let (Some(m), Some(code)) = (mean(c.index), c.unit.as_deref()) else { continue };
        let Some(u) = unit_table::find(LoggedQuantity::Power, code) else { continue };
        if let unit_table::ToSi::Scale(w) = u.to_si {
            *power.get_or_insert(0.0) += m * w / 1e3;
        }
    }
    if let Some(kw) = power {
        return Some((kw, PowerFrom::Power));
    }
    let volts = header.iter().enumerate().find(|(_, h)| is_voltage(h)).and_then(|(i, _)| mean(i))?;
    let amps: Vec<f64> = columns
        .iter()
        .filter(|c| c.quantity.as_deref() == Some("current"))
        .filter_map(|c| mean(c.index))
        .collect();
    (!amps.is_empty()).then(|| (volts * amps.iter().sum::<f64>() / 1e3, PowerFrom::VoltsAmps))
}

/// A flow column without a unit in the file, given the file's power: the one unit among m³/min,
/// l/min and m³/h whose specific power falls in the band, with its figure.
pub fn flow_unit(mean_flow: f64, kw: f64) -> Option<(&'static str, f64)> {
    if !(mean_flow > 0.0 && kw > 0.0) {
        return None;
    }
    let (lo, hi) = SPECIFIC_KW_PER_M3_MIN;
    let fits: Vec<(&'static str, f64)> = [("m3_min", 1.0), ("l_min", 1e-3), ("m3_h", 1.0 / 60.0)]
        .into_iter()
        .map(|(code, m3_min)| (code, kw / (mean_flow * m3_min)))
        .filter(|(_, sp)| (lo..=hi).contains(sp))
        .collect();
    (fits.len() == 1).then(|| fits[0])
}

/// Flow columns named as flow with no unit in the file: when the file logs power (or current and
/// voltage), the unit comes from the specific power, replacing a guess from the values' range;
/// when no unit fits, none is proposed.
pub fn settle_flow(columns: &mut [ColumnGuess], header: &[String], means: &[Option<f64>]) {
    let Some((kw, from)) = logged_kw_from(columns, header, means) else { return };
    let (lo, hi) = SPECIFIC_KW_PER_M3_MIN;
    let si = Fmt::new(UnitSystem::Si, PressureAbs(P_STD_ATM));
    // Only a power the file logs in a power column (one the mapping reads) is quoted as power;
    // volts times amps is not one (phases and power factor unknown), and is said as what it is.
    let source = match from {
        PowerFrom::Power => format!("the file's power ({kw:.3} kW)"),
        PowerFrom::VoltsAmps => {
            "the file's volts times amps (taken as power, no power column logged)".to_string()
        }
    };
    for c in columns.iter_mut() {
        let unitless = c.unit_from.is_none() || c.unit_from.as_deref() == Some("values");
        if !c.numeric || !unitless || columns::quantity_word(&c.column) != Some("flow") {
            continue;
        }
        let Some(mean) = means.get(c.index).copied().flatten() else { continue };
        match flow_unit(mean, kw)
            .and_then(|(code, sp)| Some((unit_table::find(LoggedQuantity::Flow, code)?, sp)))
        {
            Some((u, sp)) => {
                c.quantity = Some("flow".into());
                c.unit = Some(u.code.into());
                c.unit_label = Some(u.label.into());
                c.unit_from = Some("values".into());
                let parts = vec![
                    Part::from(format!(
                        "no unit in the file: {} chosen so that {source} over this flow is ",
                        u.label
                    )),
                    text::specific(sp),
                    Part::from(", within "),
                    text::specific(lo),
                    Part::from(" to "),
                    text::specific(hi),
                    Part::from(" as compressed air usually is; check it"),
                ];
                c.note = Some(render_parts(&parts, &si));
                c.note_parts = parts;
            }
            None => {
                c.quantity = None;
                c.unit = None;
                c.unit_label = None;
                c.unit_from = None;
                let parts = vec![
                    Part::from(format!(
                        "looks like flow, but the file gives no unit and no unit puts {source} at "
                    )),
                    text::specific(lo),
                    Part::from(" to "),
                    text::specific(hi),
                    Part::from(": choose it"),
                ];
                c.note = Some(render_parts(&parts, &si));
                c.note_parts = parts;
            }
        }
    }
}

/// Relative humidity (0 to 1) from air temperature and dew point, °C, by the Magnus formula over
/// water with Alduchov and Eskridge's coefficients (J. Appl. Meteor. 35, 1996, 601-609:
/// e_s = 6.1094 exp(17.625 t / (t + 243.04)) hPa); the ratio of the two vapour pressures.
pub fn relative_humidity(t_c: f64, dew_c: f64) -> f64 {
    let ln_es = |t: f64| 17.625 * t / (t + 243.04);
    (ln_es(dew_c) - ln_es(t_c)).exp()
}

/// Fahrenheit to Celsius (NIST SP 811, B.9: t/°C = (t/°F - 32) / 1.8).
fn f_to_c(f: f64) -> f64 {
    (f - 32.0) / 1.8
}

/// How far the Magnus humidity of (temperature, dew point) read in one unit stays from the logged
/// humidity: the mean absolute difference over the rows that log all three.
fn humidity_misfit(rows: &[(f64, f64, f64)], to_c: impl Fn(f64) -> f64) -> f64 {
    let err: f64 = rows.iter().map(|&(t, d, rh)| (relative_humidity(to_c(t), to_c(d)) - rh).abs()).sum();
    err / rows.len() as f64
}

/// The temperature unit of a file whose temperatures carry none, from the humidity it logs: when a
/// file logs an air temperature, a dew point and a relative humidity (as a fraction or in %), only
/// one of °C and °F makes the three agree by the Magnus formula. `columns` holds each column's
/// sample as (row, value). `Some(("C" or "F", misfit of the chosen unit, misfit of the other))`
/// when one unit fits within 0.05 and the other is at least three times further off (a rule of
/// our own, wide against the formula's 0.4 % error over -40 to 50 °C).
pub fn temperature_from_humidity(
    header: &[String],
    columns: &[Vec<(usize, f64)>],
) -> Option<(&'static str, f64, f64)> {
    let named = |w: &[&str]| -> Vec<usize> {
        (0..header.len())
            .filter(|&i| {
                let l = header[i].to_lowercase();
                w.iter().any(|x| l.contains(x))
            })
            .collect()
    };
    let dews = named(&["dew", "taupunkt"]);
    let humids = named(&["humid", "feuchte"]);
    let temps: Vec<usize> = (0..header.len())
        .filter(|i| !dews.contains(i) && columns::quantity_word(&header[*i]) == Some("temperature"))
        .collect();
    let at = |i: usize| -> std::collections::HashMap<usize, f64> { columns[i].iter().copied().collect() };
    let mut best: Option<(&'static str, f64, f64)> = None;
    for &h in &humids {
        let rh = at(h);
        let percent = rh.values().any(|v| *v > 1.0);
        for &d in &dews {
            let dew = at(d);
            for &t in &temps {
                let rows: Vec<(f64, f64, f64)> = columns[t]
                    .iter()
                    .filter_map(|&(r, tv)| {
                        let (dv, hv) = (*dew.get(&r)?, *rh.get(&r)?);
                        Some((tv, dv, if percent { hv / 100.0 } else { hv }))
                    })
                    .filter(|&(_, _, h)| (0.0..=1.0).contains(&h))
                    .collect();
                if rows.len() < 3 {
                    continue;
                }
                let (c, f) = (humidity_misfit(&rows, |x| x), humidity_misfit(&rows, f_to_c));
                let pick = if c <= 0.05 && f >= 3.0 * c {
                    Some(("C", c, f))
                } else if f <= 0.05 && c >= 3.0 * f {
                    Some(("F", f, c))
                } else {
                    None
                };
                if let Some(p) = pick {
                    if best.is_none_or(|b| p.1 < b.1) {
                        best = Some(p);
                    }
                }
            }
        }
    }
    best
}

/// Temperature columns with no unit in the file take the unit the logged humidity decided
/// ([`temperature_from_humidity`]), with a note saying how.
pub fn settle_temperature(columns: &mut [ColumnGuess], decided: Option<(&'static str, f64, f64)>) {
    let Some((code, fit, other)) = decided else { return };
    let Some(u) = unit_table::find(LoggedQuantity::Temperature, code) else { return };
    for c in columns.iter_mut() {
        let unitless = c.unit_from.is_none() || c.unit_from.as_deref() == Some("values");
        if !c.numeric || !unitless || c.quantity.as_deref() != Some("temperature") {
            continue;
        }
        c.unit = Some(u.code.into());
        c.unit_label = Some(u.label.into());
        c.unit_from = Some("values".into());
        c.note = Some(format!(
            "no unit in the file: {} chosen because the file's temperature, dew point and humidity agree \
             by the Magnus formula in it (mean misfit {fit:.3} against {other:.3} in the other unit); check it",
            u.label
        ));
    }
}
