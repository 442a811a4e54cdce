/*!
What a technician may type for a dryer, drain, filter or end use beyond the records' own sense
(`Dryer::sound` and the like refuse a negative bore or a drain open longer than its interval):
values the trade never sees, refused with the reason in words and the limit in the reader's units
(`core::entry`), so that a bore of 5 in or an end use at 300 psig on a 110 psig plant is caught
where it is typed. Records stored before these bounds still read and are priced; an edit then
asks for a plausible value, and the treatment page and the findings flag such a record with the
bound it breaks (`App::treatment_outside_bounds`).

| value | bound | why |
|---|---|---|
| a drain's orifice or valve bore | at most [`MAX_DRAIN_ORIFICE_MM`] (¾ in, 19.05 mm) | timer drain valves have orifices of a few mm (2-5 mm); a manual drain valve on a large receiver is at most a ¾ in ball valve (common practice, from memory) |
| a drain's open time | at most [`MAX_DRAIN_OPEN_S`] (10 min) | a timer drain opens for a few seconds (0.5-10 s); longer is a valve left open, a `manual_open` drain (common practice) |
| a drain's interval | at most [`MAX_DRAIN_INTERVAL_S`] (1 day) | timers run from about a minute to 45 min (common practice) |
| an end use's opening | at most [`MAX_END_USE_OPENING_MM`] (1 in, 25.4 mm) | blow-off nozzles and leak holes are a few mm; an open pipe end blowing is at most about 1 in (common practice) |
| an end use's pressure | at most the plant's highest pressure (the compressors' data sheets: highest working pressure, else rated pressure), unless fed through a booster; always at most [`MAX_END_USE_PRESSURE_BAR_G`] (50 bar(g)) | air cannot reach a use at more than the header holds without a booster (physics); boosters for PET blowing reach 40 bar(g) (common practice) |
| an end use's count | at most [`MAX_USE_COUNT`] | a plant's inventory line (common practice) |
| air per use, a dryer's or filter's rated flow | at most [`MAX_FLOW_M3_MIN`] (2 000 m³/min) | the largest air compressors (as `site`) |
| running share (duty), purge share | 0 to 100 %; purge at most [`MAX_PURGE_FRACTION`] (50 %) of rated flow | a heatless desiccant dryer purges 15-20 % of rated flow (US DOE sourcebook, from memory), more at low pressure; a dryer purging over half of its rated flow is not drying air (common practice) |
| a dryer's electrical input | at most [`MAX_DRYER_KW_PER_M3_MIN`] (3 kW) per m³/min of rated flow | refrigerated dryers draw about 0.2 kW per m³/min, heated and blower-purge desiccant dryers under 1 (common practice, from memory) |
| an electric alternative | at most [`MAX_ALTERNATIVE_KW`] (1 000 kW) per use | a blower or motor for one use (common practice) |
| a filter's element interval | at most [`MAX_ELEMENT_MONTHS`] (10 years) | elements are changed yearly or by their drop (common practice) |

No record holds a dew point: dryers are priced by their purge and electricity, so there is none to bound.
*/

use super::{EndUse, TreatmentError};
use crate::core::entry::{short, Entry};
use crate::core::units::UnitSystem;

/// ¾ in: the largest bore of a condensate drain's valve (see the module's table).
pub const MAX_DRAIN_ORIFICE_MM: f64 = 19.05;
/// 10 min.
pub const MAX_DRAIN_OPEN_S: f64 = 600.0;
/// 1 day.
pub const MAX_DRAIN_INTERVAL_S: f64 = 86_400.0;
/// 1 in: an open pipe end.
pub const MAX_END_USE_OPENING_MM: f64 = 25.4;
/// A booster's highest (PET blowing at 40 bar(g)), as the calculators and field tests.
pub const MAX_END_USE_PRESSURE_BAR_G: f64 = 50.0;
pub const MAX_USE_COUNT: u32 = 10_000;
/// The largest air compressors (`site`).
pub const MAX_FLOW_M3_MIN: f64 = 2000.0;
pub const MAX_PURGE_FRACTION: f64 = 0.5;
pub const MAX_DRYER_KW_PER_M3_MIN: f64 = 3.0;
pub const MAX_ALTERNATIVE_KW: f64 = 1000.0;
pub const MAX_ELEMENT_MONTHS: f64 = 120.0;

/// A share as people type it on the pages: "150 %".
pub fn percent(v: f64) -> String {
    format!("{} %", short(v * 100.0))
}

/// A share refused: from 0 to 100 % (at most `most`), in words; `None` when it is one.
pub fn share(v: f64, most: f64, why: &str) -> Option<String> {
    if v.is_finite() && (0.0..=most).contains(&v) {
        return None;
    }
    let got = if v.is_finite() { percent(v) } else { "no number".into() };
    Some(format!("must be from 0 % to {}{why}, got {got}", percent(most)))
}

/// `v` (stored in `e`'s unit) above `most`: the refusal in the reader's units, with `why`.
fn at_most(
    errs: &mut Vec<TreatmentError>,
    field: &'static str,
    e: Entry,
    units: UnitSystem,
    v: Option<f64>,
    most: f64,
    why: &str,
) {
    if let Some(v) = v.filter(|v| v.is_finite() && *v > most) {
        errs.push(TreatmentError::new(
            field,
            format!("must be at most {} ({why}), got {}", e.limit(units, most), e.said(units, v)),
        ));
    }
}

/// A plain number (seconds, kW, a count) above `most`.
fn plain_at_most(
    errs: &mut Vec<TreatmentError>,
    field: &'static str,
    unit: &str,
    v: Option<f64>,
    most: f64,
    why: &str,
) {
    if let Some(v) = v.filter(|v| v.is_finite() && *v > most) {
        let most = crate::core::display::num(most, 0);
        errs.push(TreatmentError::new(
            field,
            format!("must be at most {most}{unit} ({why}), got {}{unit}", short(v)),
        ));
    }
}

const FLOW_WHY: &str = "the largest air compressors deliver about that";

/// A dryer's values beyond the trade's (the module's table), in the reader's units.
pub fn dryer(d: &super::Dryer, units: UnitSystem) -> Vec<TreatmentError> {
    let mut errs = Vec::new();
    let rated = d.rated_flow.m3_min();
    at_most(
        &mut errs,
        "rated_flow_m3_min",
        Entry::FreeAirFlow,
        units,
        Some(rated),
        MAX_FLOW_M3_MIN,
        FLOW_WHY,
    );
    if let Some(p) = d.purge_fraction.filter(|p| p.is_finite() && (0.0..=1.0).contains(p)) {
        if let Some(m) = share(
            p,
            MAX_PURGE_FRACTION,
            " of rated flow (a heatless desiccant dryer purges 15–20 %; one purging more than half is not drying air)",
        ) {
            errs.push(TreatmentError::new("purge_fraction", m));
        }
    }
    if rated.is_finite() && rated > 0.0 && rated <= MAX_FLOW_M3_MIN {
        let most = MAX_DRYER_KW_PER_M3_MIN * rated;
        if d.power_kw.is_finite() && d.power_kw > most {
            errs.push(TreatmentError::new(
                "power_kw",
                format!(
                    "must be at most {} kW for a dryer rated {} (refrigerated dryers draw about a fifteenth of that, heated desiccant ones under a third), got {} kW",
                    short(most),
                    Entry::FreeAirFlow.limit(units, rated),
                    short(d.power_kw)
                ),
            ));
        }
    }
    errs
}

/// A drain's values beyond the trade's.
pub fn drain(d: &super::Drain, units: UnitSystem) -> Vec<TreatmentError> {
    let mut errs = Vec::new();
    plain_at_most(
        &mut errs,
        "open_s",
        " s",
        d.open_s,
        MAX_DRAIN_OPEN_S,
        "a timer drain opens for a few seconds; a valve left open is a drain open by hand",
    );
    plain_at_most(&mut errs, "interval_s", " s", d.interval_s, MAX_DRAIN_INTERVAL_S, "a day");
    at_most(
        &mut errs,
        "orifice_mm",
        Entry::Diameter,
        units,
        d.orifice_mm,
        MAX_DRAIN_ORIFICE_MM,
        "a timer drain's valve has an orifice of a few mm; a drain valve's bore is at most ¾ in",
    );
    errs
}

/// A filter's values beyond the trade's.
pub fn filter(f: &super::Filter, units: UnitSystem) -> Vec<TreatmentError> {
    let mut errs = Vec::new();
    let rated = Some(f.rated_flow.m3_min());
    at_most(&mut errs, "rated_flow_m3_min", Entry::FreeAirFlow, units, rated, MAX_FLOW_M3_MIN, FLOW_WHY);
    plain_at_most(
        &mut errs,
        "element_change_months",
        " months",
        f.element_change_months,
        MAX_ELEMENT_MONTHS,
        "ten years",
    );
    errs
}

/// An end use's values beyond the trade's (its pressure against the plant: [`end_use_pressure`]).
pub fn end_use(u: &EndUse, units: UnitSystem) -> Vec<TreatmentError> {
    let mut errs = Vec::new();
    if u.count > MAX_USE_COUNT {
        errs.push(TreatmentError::new(
            "count",
            format!(
                "must be at most {} (one line of the inventory), got {}",
                crate::core::display::num(MAX_USE_COUNT as f64, 0),
                u.count
            ),
        ));
    }
    at_most(&mut errs, "flow_m3_min", Entry::FreeAirFlow, units, u.flow_m3_min, MAX_FLOW_M3_MIN, FLOW_WHY);
    at_most(
        &mut errs,
        "orifice_mm",
        Entry::Diameter,
        units,
        u.orifice_mm,
        MAX_END_USE_OPENING_MM,
        "a nozzle's bore is a few mm; an open pipe end blowing is at most 1 in",
    );
    at_most(
        &mut errs,
        "pressure_bar_g",
        Entry::GaugePressure,
        units,
        u.pressure_bar_g,
        MAX_END_USE_PRESSURE_BAR_G,
        "a booster's highest; PET blowing runs at 40 bar(g)",
    );
    plain_at_most(
        &mut errs,
        "alternative_kw",
        " kW",
        u.alternative_kw,
        MAX_ALTERNATIVE_KW,
        "a blower or motor for one use",
    );
    errs
}

/// The highest pressure the plant's compressors can make: the highest of their data sheets'
/// highest working pressure (else their rated pressure), bar(g), with the tag that makes it;
/// `None` without a compressor on record.
pub fn plant_pressure<'a>(
    compressors: impl IntoIterator<Item = (&'a str, f64, Option<f64>)>,
) -> Option<(f64, &'a str)> {
    compressors
        .into_iter()
        .map(|(tag, rated, max)| (max.unwrap_or(rated), tag))
        .filter(|(p, _)| p.is_finite())
        .max_by(|a, b| a.0.total_cmp(&b.0))
}

/// An end use's pressure above what the plant can make (`plant`, from [`plant_pressure`]) without
/// a booster: a refusal naming the compressor and the booster, in the reader's units.
pub fn end_use_pressure(
    pressure_bar_g: Option<f64>,
    boosted: bool,
    plant: Option<(f64, &str)>,
    units: UnitSystem,
) -> Option<TreatmentError> {
    let (p, (most, tag)) = (pressure_bar_g?, plant?);
    if boosted || !p.is_finite() || p <= most || p > MAX_END_USE_PRESSURE_BAR_G {
        return None;
    }
    let g = Entry::GaugePressure;
    Some(TreatmentError::new(
        "pressure_bar_g",
        format!(
            "{} is above the {} the plant's compressors can make ({tag}'s highest pressure on its data sheet): air reaches a use at no more than the header holds; if a booster feeds this use, tick \"fed through a booster\"",
            g.said(units, p),
            g.limit(units, most)
        ),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_plants_pressure_is_its_compressors_highest() {
        // A data sheet's highest working pressure counts before its rated pressure.
        let plant = plant_pressure([("C1", 7.5, None), ("C2", 7.0, Some(8.5)), ("C3", 8.0, None)]);
        assert_eq!(plant, Some((8.5, "C2")));
        assert_eq!(plant_pressure(std::iter::empty()), None);
    }

    #[test]
    fn a_use_above_the_plant_is_refused_unless_boosted_in_the_readers_units() {
        let plant = Some((7.5, "C1"));
        // 300 psig = 300 × 6 894.757 Pa = 20.684 bar(g) (NIST SP 811, B.8).
        let p = 300.0 * 6_894.757_293_168 / 1e5;
        let e = end_use_pressure(Some(p), false, plant, UnitSystem::Us).expect("refused");
        assert_eq!(e.field, "pressure_bar_g");
        // 7.5 bar(g) = 108.78 psig, quoted rounded inward to the input's 0.1 psig so that the
        // figure quoted is itself accepted (`Entry::limit`).
        assert!(e.message.starts_with("300 psig is above the 108.7 psig"), "{}", e.message);
        assert_eq!(end_use_pressure(Some(p), true, plant, UnitSystem::Us), None);
        assert_eq!(end_use_pressure(Some(7.5), false, plant, UnitSystem::Si), None);
        assert_eq!(end_use_pressure(Some(p), false, None, UnitSystem::Si), None);
    }

    #[test]
    fn shares_are_refused_as_percentages() {
        assert_eq!(share(1.5, 1.0, ""), Some("must be from 0 % to 100 %, got 150 %".into()));
        assert_eq!(share(0.2, MAX_PURGE_FRACTION, ""), None);
        assert!(share(0.8, MAX_PURGE_FRACTION, "").unwrap().starts_with("must be from 0 % to 50 %"));
    }
}
