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
/// Shortest bleed-down, s (module doc table): a fall timed by hand on a stopwatch and read off a
/// falling gauge needle carries about a second of error at its start and end, so under half a
/// minute the timing alone is several per cent off; the test itself takes minutes (US DOE
/// sourcebook, leaks fact sheet). The bound is common practice, not a published figure.
pub const MIN_BLEED_DOWN_S: f64 = 30.0;

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

/// Which pressure a field holds, in the form's words ("the start pressure").
fn pressure_words(field: &str) -> &'static str {
    match field {
        "start_pressure_bar_g" => "the start pressure",
        "end_pressure_bar_g" => "the end pressure",
        "operating_pressure_bar_g" => "the operating pressure",
        "production_pressure_bar_g" => "the production pressure",
        _ => "the pressure",
    }
}

/// A gauge pressure checked (module doc table), the refusal naming which pressure it is.
pub(super) fn pressure(
    field: &str,
    bar_g: f64,
    site: &SiteAir,
    units: UnitSystem,
) -> Result<PressureAbs, FieldError> {
    let say = |v: f64| Entry::GaugePressure.said(units, v);
    let which = pressure_words(field);
    if !(bar_g.is_finite() && bar_g <= MAX_PRESSURE_BAR_G) {
        let got = if bar_g.is_finite() { say(bar_g) } else { "no number".into() };
        return Err(err(
            field,
            format!(
                "{which} must be a number up to {}, got {got}",
                Entry::GaugePressure.limit(units, MAX_PRESSURE_BAR_G)
            ),
        ));
    }
    let p = PressureAbs::from_bar_g(bar_g, site.atmosphere);
    if p.0 <= 0.0 {
        return Err(err(
            field,
            format!("{which}, {}, is below zero absolute at this site's atmosphere", say(bar_g)),
        ));
    }
    Ok(p)
}

/// A bleed-down's duration, checked (module doc table): a fall under [`MIN_BLEED_DOWN_S`] is
/// refused with the reason.
pub(super) fn bleed_down_duration(duration_s: f64) -> Result<f64, FieldError> {
    within("duration_s", "the duration", duration_s, (MIN_BLEED_DOWN_S, MAX_DURATION_S), Quoted::Seconds)
        .map_err(|e| {
            if duration_s.is_finite() && duration_s > 0.0 && duration_s < MIN_BLEED_DOWN_S {
                err(
                    "duration_s",
                    format!(
                        "{}: a fall shorter than half a minute cannot be timed by hand and read off a \
                         gauge closely enough (a second at each end is several per cent of it); time the \
                         fall for minutes, or check that the duration is in seconds",
                        e.message
                    ),
                )
            } else {
                e
            }
        })
}

/// Why a load/unload test does not apply to a compressor (`None`: it does): a variable-speed
/// machine follows the demand with its speed instead of loading and unloading, so its loaded and
/// unloaded times say nothing of the leaks (US DOE sourcebook, leaks fact sheet: the test is for
/// load/unload control; start/stop machines cycle on and off alike and are timed the same way).
pub(super) fn load_unload_applies(c: &CompressorSpec) -> Option<String> {
    (c.control == crate::core::model::Control::VariableSpeed).then(|| {
        format!(
            "{} runs at variable speed: it follows the demand with its speed instead of loading and \
             unloading, so a load/unload test does not apply to it; time a bleed-down, take the idle \
             flow in the logs, or time a load/unload or start/stop machine",
            c.tag
        )
    })
}

/// A load/unload test's unloaded time, checked: at least [`MIN_DURATION_S`], since 0 s unloaded
/// is no measured cycle (with no production demand a machine that never unloads feeds more than
/// the leaks, or leaks at or above its capacity: T / (T + t) would read 100 %).
pub(super) fn unloaded_time(unloaded_s: f64) -> Result<f64, FieldError> {
    within("unloaded_s", "the unloaded time", unloaded_s, (MIN_DURATION_S, MAX_DURATION_S), Quoted::Seconds)
        .map_err(|e| {
            if unloaded_s == 0.0 {
                err(
                    "unloaded_s",
                    format!(
                        "{}: a compressor that never unloads with no production demand is not timing a \
                         cycle (it feeds more than the leaks, or leaks at or above its capacity, and \
                         would read 100 %); time whole cycles, loaded and unloaded, or time a bleed-down",
                        e.message
                    ),
                )
            } else {
                e
            }
        })
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
                errs.push(err(
                    "end",
                    format!("the end must be after the start ({})", window_words(start, end, ctx.timezone)),
                ));
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
            take(&mut errs, bleed_down_duration(*duration_s));
            if let Some(op) = operating_pressure_bar_g {
                take(&mut errs, pressure("operating_pressure_bar_g", *op, site, units));
            }
            if volume_m3.is_some() {
                take(&mut errs, volume("volume_m3", *volume_m3, ctx.storage, units));
            }
            take(&mut errs, air_temperature(*air_temperature_c, units));
        }
        FieldTestInput::LoadUnload { compressor, loaded_s, unloaded_s } => {
            match ctx.compressors.iter().find(|c| &c.tag == compressor) {
                None => {
                    errs.push(err("compressor", format!("no compressor tagged {compressor:?} in this audit")))
                }
                Some(c) => {
                    if let Some(why) = load_unload_applies(c) {
                        errs.push(err("compressor", why));
                    }
                }
            }
            take(&mut errs, seconds("loaded_s", "the loaded time", *loaded_s, MIN_DURATION_S));
            take(&mut errs, unloaded_time(*unloaded_s));
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

/// The compressors' rated free air together, m³/min (`None`: none on record).
pub(super) fn installed_m3_min(compressors: &[CompressorSpec]) -> Option<f64> {
    let q: f64 = compressors.iter().map(|c| c.rated_flow_m3_min).filter(|q| q.is_finite() && *q > 0.0).sum();
    (q > 0.0).then_some(q)
}

/// A bleed-down whose leak flow at the operating pressure, even at its lowest (`lowest_m3_min`:
/// the reading less the most the air's cooling can overstate it, the fall's adiabatic limit), is
/// above what every compressor on record delivers together: the plant could not have held its
/// pressure against such leaks, so a figure is wrong (most often the duration). Refused naming the
/// duration, with the figures in the reader's units: `fall` is the start and end pressure,
/// bar(g), the duration, s, and the system volume, m³.
pub(super) fn within_capacity(
    lowest_m3_min: f64,
    compressors: &[CompressorSpec],
    units: UnitSystem,
    (p1_bar_g, p2_bar_g, duration_s, volume_m3): (f64, f64, f64, f64),
) -> Result<(), FieldError> {
    let Some(installed) = installed_m3_min(compressors) else { return Ok(()) };
    if lowest_m3_min <= installed {
        return Ok(());
    }
    // Worked-out flows as the pages print them (the atmosphere plays no part in a flow).
    let fmt = crate::core::display::Fmt::new(units, PressureAbs(101_325.0));
    let said = |q: f64| fmt.flow_m3_min(q);
    let fall = format!(
        "a fall from {} to {} in {} of {}",
        Entry::GaugePressure.said(units, p1_bar_g),
        Entry::GaugePressure.said(units, p2_bar_g),
        Quoted::Seconds.say(duration_s),
        Entry::Volume.said(units, volume_m3)
    );
    Err(err(
        "duration_s",
        format!(
            "{fall} means leaks of at least {} at the operating pressure, more than the {} all the \
             compressors on record deliver together: the plant could not have held its pressure against \
             them, so a figure is wrong; check the duration (in seconds), the system volume and the \
             pressures",
            said(lowest_m3_min),
            said(installed)
        ),
    ))
}

/// The lowest header pressure at which a logged window's flow or fall can be the leaks at working
/// pressure: half the lowest rated pressure of the compressors (the report's rule for a credible
/// pressure log, `analysis::sufficiency`), and never below the pressure above which leaks are
/// choked and flow in proportion to absolute pressure (`leaks::CHOKED_PRESSURE_RATIO` × the
/// atmosphere, ideal-gas critical ratio), the basis of the correction to working pressure.
pub(super) fn held_pressure_floor(compressors: &[CompressorSpec], site: &SiteAir) -> PressureAbs {
    let atm = site.atmosphere;
    let choked = leaks::CHOKED_PRESSURE_RATIO * atm.0;
    let half_rated = compressors
        .iter()
        .map(|c| c.rated_pressure_bar_g)
        .filter(|p| p.is_finite() && *p > 0.0)
        .reduce(f64::min)
        .map_or(0.0, |p| PressureAbs::from_bar_g(0.5 * p, atm).0);
    PressureAbs(choked.max(half_rated))
}

/// A logged window refused when its header pressure `p` (`what`: "averaged", "started at") is
/// under [`held_pressure_floor`]: the system was not held at its working pressure, or the pressure
/// log's unit or zero is wrong, so the window is not the leaks at working pressure. `when` says the
/// window in the site's time.
pub(super) fn held_at_pressure(
    p: PressureAbs,
    ctx: &FieldTestContext,
    what: &str,
    when: &str,
) -> Result<(), FieldError> {
    let floor = held_pressure_floor(ctx.compressors, ctx.site);
    if p.0 >= floor.0 {
        return Ok(());
    }
    let atm = ctx.site.atmosphere;
    let fmt = crate::core::display::Fmt::new(ctx.units, atm);
    let said = |p: PressureAbs| fmt.pressure_bar_g(p.bar_g(atm));
    let basis = if ctx.compressors.is_empty() {
        "the pressure below which leaks are no longer choked"
    } else {
        "half the lowest rated pressure of the compressors, or the pressure below which leaks are no longer choked"
    };
    Err(err(
        "start",
        format!(
            "the header pressure {what} {} {when}, under {} ({basis}): the system was not held at its \
             working pressure, or the pressure log's unit or zero is wrong (the report's data check says \
             whether it is credible), so this window does not measure the leaks; choose a window with the \
             system at its working pressure",
            said(p),
            said(floor)
        ),
    ))
}

/// A logged window in words, on the site's clock with the zone named ("between Fri 24 Jun 2011
/// 10:00 CDT and Fri 24 Jun 2011 10:30 CDT").
pub(super) fn window_words(start: &str, end: &str, tz: &str) -> String {
    use crate::core::display::local_time;
    format!("between {} and {}", local_time(start, tz), local_time(end, tz))
}
