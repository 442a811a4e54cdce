//! What a bleed-down too fast to be near isothermal tells the reader, in the reader's units: the
//! cap of its overstatement and the longer fall to time.

use super::*;

/// When the first-order rule reached the fall's adiabatic limit, that cap in words, in the
/// reader's units (a clause to follow the overstatement); else nothing.
pub fn adiabatic_cap_words(
    iso: &leaks::IsothermalCheck,
    start_bar_g: f64,
    end_bar_g: f64,
    units: UnitSystem,
) -> String {
    if !iso.at_adiabatic_limit() {
        return String::new();
    }
    format!(
        " (the first-order rule, (k − 1)/k × thermal time constant / duration, would give more, so it is \
         capped at the adiabatic limit of a fall from {} to {}: the air left behind gaining no heat \
         from the walls, (1 − p₂/p₁)/(1 − (p₂/p₁)^(1/k)) − 1 absolute, the most such a fall can \
         overstate)",
        Entry::GaugePressure.said(units, start_bar_g),
        Entry::GaugePressure.said(units, end_bar_g),
    )
}

/// What to do after a bleed-down too fast to be near isothermal, in the reader's units: a longer
/// fall a technician can time (`leaks::longer_fall`: to half the start's gauge pressure, 15 min at
/// most), or, when none would help, the result read as high by the overstatement; with the basis.
pub fn longer_fall_advice(
    p1: PressureAbs,
    p2: PressureAbs,
    duration_s: f64,
    iso: &leaks::IsothermalCheck,
    atm: PressureAbs,
    units: UnitSystem,
) -> String {
    let said = |p: PressureAbs| Entry::GaugePressure.said(units, p.bar_g(atm));
    let max_min = leaks::BLEED_DOWN_MAX_ADVISED_S / 60.0;
    let basis = format!(
        "(basis: the overstatement, (k − 1)/k × thermal time constant / duration and at most the \
         fall's adiabatic limit, falls as the fall lengthens; the fall is timed to about half the start's gauge pressure, as \
         in the US DOE sourcebook's test, and for {max_min:.0} min at most, about as long as a stop of \
         production usually allows: a limit set by common practice, not by a published source)"
    );
    match leaks::longer_fall(p1, p2, duration_s, iso, atm) {
        Some(f) if f.limit == leaks::FallLimit::NearIsothermal => format!(
            "time a longer fall from the same start: about {:.0} min, to about {}, brings it under {:.0} % {basis}",
            (f.duration_s / 60.0).ceil(),
            said(f.end_pressure),
            100.0 * leaks::ISOTHERMAL_WARNING_FRACTION,
        ),
        Some(f) => format!(
            "time a longer fall from the same start, until the pressure reaches about {} or for {max_min:.0} min, \
             whichever comes first (about {:.0} min at this leak rate): the overstatement falls to about \
             {:.0} %, so that result too reads above the truth {basis}",
            said(PressureAbs(
                (atm.0 + leaks::BLEED_DOWN_END_SHARE_OF_START_GAUGE * (p1.0 - atm.0))
                    .max(leaks::CHOKED_PRESSURE_RATIO * atm.0)
            )),
            (f.duration_s / 60.0).ceil(),
            100.0 * f.overstatement,
        ),
        None => format!(
            "no longer fall that a technician can time (to about half the start's gauge pressure, \
             {max_min:.0} min at most) would read closer at this leak rate: the flow as read stays \
             about {:.0} % high, and the flow corrected for it the estimate {basis}",
            100.0 * iso.overstatement
        ),
    }
}
