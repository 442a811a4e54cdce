//! A field test's own fields checked against the module doc's table, each refusal in the reader's
//! units and the form's words; every refusal at once ([`refusals`]), before any check against the
//! logged data.

use super::*;

/// Highest pressure a test may name, bar(g) (module doc table).
pub const MAX_PRESSURE_BAR_G: f64 = 50.0;
/// Shortest timed spell, s (module doc table).
pub const MIN_DURATION_S: f64 = 1.0;
/// Longest timed spell, s: seven days (module doc table).
pub const MAX_DURATION_S: f64 = 7.0 * 86_400.0;
/// Largest system volume, m³ (module doc table).
pub const MAX_VOLUME_M3: f64 = 10_000.0;
/// Stored-air temperature range, °C (module doc table).
pub const MIN_AIR_TEMPERATURE_C: f64 = -40.0;
pub const MAX_AIR_TEMPERATURE_C: f64 = 120.0;
/// Largest purge and drain flow, m³/min (module doc table).
pub const MAX_PURGE_M3_MIN: f64 = 1_000.0;

/// The stored air's temperature, checked (module doc table).
pub(super) fn air_temperature(
    given: Option<f64>,
    units: UnitSystem,
) -> Result<Option<Temperature>, FieldError> {
    given
        .map(|c| {
            within(
                "air_temperature_c",
                "the stored air's temperature",
                c,
                (MIN_AIR_TEMPERATURE_C, MAX_AIR_TEMPERATURE_C),
                Quoted::Entry(Entry::Temperature, units),
            )
            .map(Temperature::from_c)
        })
        .transpose()
}

/// How a refusal quotes a value: in the reader's units of a form's field, or in seconds.
#[derive(Clone, Copy)]
pub(super) enum Quoted {
    Entry(Entry, UnitSystem),
    Seconds,
}

impl Quoted {
    /// A value as typed.
    fn say(self, v: f64) -> String {
        match self {
            Quoted::Entry(e, units) => e.said(units, v),
            Quoted::Seconds => format!("{} s", crate::core::entry::short(v)),
        }
    }
    /// A limit, to four figures, rounded inward (`lower`: up).
    fn limit(self, v: f64, lower: bool) -> String {
        match self {
            Quoted::Entry(e, units) if lower => e.lower_limit(units, v),
            Quoted::Entry(e, units) => e.limit(units, v),
            // A long limit as a person says it: "7 days", not "604800 s".
            Quoted::Seconds if v >= 3_600.0 => crate::core::display::duration_words(v),
            Quoted::Seconds => self.say(v),
        }
    }
}

/// `v` if finite and within `lo..=hi`, else the field's error, the field named in `words` and
/// the values in the reader's units.
pub(super) fn within(
    field: &str,
    words: &str,
    v: f64,
    (lo, hi): (f64, f64),
    q: Quoted,
) -> Result<f64, FieldError> {
    if v.is_finite() && (lo..=hi).contains(&v) {
        Ok(v)
    } else {
        let got = if v.is_finite() { q.say(v) } else { "no number".into() };
        Err(err(
            field,
            format!("{words} must be from {} to {}, got {got}", q.limit(lo, true), q.limit(hi, false)),
        ))
    }
}

pub(super) fn pressure(
    field: &str,
    bar_g: f64,
    site: &SiteAir,
    units: UnitSystem,
) -> Result<PressureAbs, FieldError> {
    let say = |v: f64| Entry::GaugePressure.said(units, v);
    if !(bar_g.is_finite() && bar_g <= MAX_PRESSURE_BAR_G) {
        let got = if bar_g.is_finite() { say(bar_g) } else { "no number".into() };
        return Err(err(
            field,
            format!(
                "pressure must be a number up to {}, got {got}",
                Entry::GaugePressure.limit(units, MAX_PRESSURE_BAR_G)
            ),
        ));
    }
    let p = PressureAbs::from_bar_g(bar_g, site.atmosphere);
    if p.0 <= 0.0 {
        return Err(err(field, format!("{} is below zero absolute at this site's atmosphere", say(bar_g))));
    }
    Ok(p)
}

pub(super) fn volume(
    field: &str,
    given: Option<f64>,
    storage: &StorageSpec,
    units: UnitSystem,
) -> Result<(f64, VolumeSource), FieldError> {
    let (v, src) = match given {
        Some(v) => (v, VolumeSource::Given),
        None => (storage.system_volume_m3(), VolumeSource::SystemVolume),
    };
    if !(v.is_finite() && v > 0.0 && v <= MAX_VOLUME_M3) {
        let say = |v: f64| Entry::Volume.said(units, v);
        let whose = match src {
            VolumeSource::Given => "as given",
            VolumeSource::SystemVolume => "the receivers and piping on record",
        };
        let got = if v.is_finite() { say(v) } else { "no number".into() };
        return Err(err(
            field,
            format!(
                "the system volume must be above 0 and at most {}, got {got} ({whose})",
                Entry::Volume.limit(units, MAX_VOLUME_M3)
            ),
        ));
    }
    Ok((v, src))
}

/// Every refusal of a test's own fields at once (API 422 `errors`, each beside its field on the
/// tests page), in the reader's units: each number against its range, and a check that leans on
/// another field (the end pressure below the start, the end after the start) only when that field
/// passed. The checks against the logged data (the window, the compressors' states) need the
/// fields right and stay [`evaluate`]'s, one at a time. Empty when every field is right.
pub fn refusals(input: &FieldTestInput, ctx: &FieldTestContext) -> Vec<FieldError> {
    let (site, units) = (ctx.site, ctx.units);
    let mut errs = Vec::new();
    fn take<T>(errs: &mut Vec<FieldError>, r: Result<T, FieldError>) -> Option<T> {
        r.map_err(|e| errs.push(e)).ok()
    }
    let seconds = |field: &str, words: &str, v: f64, lo: f64| {
        within(field, words, v, (lo, MAX_DURATION_S), Quoted::Seconds)
    };
    let times = |errs: &mut Vec<FieldError>, start: &str, end: &str| {
        let s = take(errs, parse_time_ms("start", start));
        let e = take(errs, parse_time_ms("end", end));
        if let (Some(s), Some(e)) = (s, e) {
            if e <= s {
                errs.push(err("end", format!("the end {end} must be after the start {start}")));
            }
        }
    };
    match input {
        FieldTestInput::BleedDown {
            volume_m3,
            start_pressure_bar_g,
            end_pressure_bar_g,
            duration_s,
            operating_pressure_bar_g,
            air_temperature_c,
        } => {
            let p1 = take(&mut errs, pressure("start_pressure_bar_g", *start_pressure_bar_g, site, units));
            let p2 = take(&mut errs, pressure("end_pressure_bar_g", *end_pressure_bar_g, site, units));
            if let (Some(p1), Some(p2)) = (p1, p2) {
                if p2.0 >= p1.0 {
                    errs.push(err(
                        "end_pressure_bar_g",
                        format!(
                            "the end pressure {} must be below the start pressure {}",
                            Entry::GaugePressure.said(units, *end_pressure_bar_g),
                            Entry::GaugePressure.said(units, *start_pressure_bar_g)
                        ),
                    ));
                }
            }
            take(&mut errs, seconds("duration_s", "the duration", *duration_s, MIN_DURATION_S));
            if let Some(op) = operating_pressure_bar_g {
                take(&mut errs, pressure("operating_pressure_bar_g", *op, site, units));
            }
            if volume_m3.is_some() {
                take(&mut errs, volume("volume_m3", *volume_m3, ctx.storage, units));
            }
            take(&mut errs, air_temperature(*air_temperature_c, units));
        }
        FieldTestInput::LoadUnload { compressor, loaded_s, unloaded_s } => {
            if !ctx.compressors.iter().any(|c| &c.tag == compressor) {
                errs.push(err("compressor", format!("no compressor tagged {compressor:?} in this audit")));
            }
            take(&mut errs, seconds("loaded_s", "the loaded time", *loaded_s, MIN_DURATION_S));
            take(&mut errs, seconds("unloaded_s", "the unloaded time", *unloaded_s, 0.0));
        }
        FieldTestInput::IdleFlow { start, end, production_pressure_bar_g, purge_and_drains_m3_min } => {
            times(&mut errs, start, end);
            if let Some(pp) = production_pressure_bar_g {
                take(&mut errs, pressure("production_pressure_bar_g", *pp, site, units));
            }
            take(
                &mut errs,
                within(
                    "purge_and_drains_m3_min",
                    "the purge and drains flow",
                    purge_and_drains_m3_min.unwrap_or(0.0),
                    (0.0, MAX_PURGE_M3_MIN),
                    Quoted::Entry(Entry::FreeAirFlow, units),
                ),
            );
        }
        FieldTestInput::PressureDecay {
            start,
            end,
            volume_m3,
            operating_pressure_bar_g,
            air_temperature_c,
        } => {
            times(&mut errs, start, end);
            if volume_m3.is_some() {
                take(&mut errs, volume("volume_m3", *volume_m3, ctx.storage, units));
            }
            if let Some(op) = operating_pressure_bar_g {
                take(&mut errs, pressure("operating_pressure_bar_g", *op, site, units));
            }
            take(&mut errs, air_temperature(*air_temperature_c, units));
        }
    }
    errs
}
