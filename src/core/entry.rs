/*!
What a person types into a form, in the reader's unit system, and the stored value it stands for.

Every input field of the compressor, receiver, site, field-test and what-if forms is one
[`Entry`]: the quantity it holds in the unit the records keep (bar(g), m³/min of free air, m³,
kW/(m³/min), °C, m, mm, bar for a pressure difference) and, for US customary, the unit a US reader writes (psig, cfm, US gal,
kW/100 cfm, °F, ft, in, psi). The step between them is affine, `stored = typed × factor + offset`, with
the exact definitions behind the NIST SP 811 (2008) Appendix B factors:
1 psi = 6 894.757 Pa, 1 ft³ = 2.831 685 × 10⁻² m³, 1 US gal = 3.785 412 × 10⁻³ m³,
1 ft = 0.3048 m, 1 in = 25.4 mm, t/°C = (t/°F − 32)/1.8; psia to kPa abs by the psi factor.

A gauge pressure stays gauge: psig to bar(g) is the psi factor alone, whatever the site's
atmosphere, since both count from it.

A value shown in a form is rounded to its unit's resolution ([`Entry::decimals`]: 0.001 bar(g),
0.1 psig, 0.1 °C or °F...), with at least three significant figures for a small value, so that a
value converted from the other unit system reads as people write it (75 °F is 23.9 °C, not
23.8888889); and [`read`] keeps the stored value itself when the text posted is the text that was
shown, so that saving an unchanged form never moves a record, however many times it is saved or
whichever unit system it is shown in. A limit (a refusal's, an input's `min`) is rounded inward at
that resolution and to four figures ([`Entry::limit`], [`Entry::lower_limit`]), so that the value it
quotes is itself accepted: 50 bar(g) is "at most 725.1 psig", since 725.2 psig is above it.
*/

use super::units::{UnitSystem, M3_PER_FT3, M3_PER_US_GAL, PA_PER_BAR, PA_PER_PSI};

/// One kind of form input.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Entry {
    /// Gauge pressure; stored in bar(g).
    GaugePressure,
    /// Flow of free air; stored in m³/min.
    FreeAirFlow,
    /// A vessel's or a pipe network's volume; stored in m³.
    Volume,
    /// Specific power; stored in kW/(m³/min) of free air.
    SpecificPower,
    /// Temperature; stored in °C.
    Temperature,
    /// Altitude; stored in m.
    Altitude,
    /// A hole's diameter; stored in mm.
    Diameter,
    /// The site's atmospheric (absolute) pressure; stored in kPa abs.
    Atmosphere,
    /// Heating degree-days; stored in K·d (°F·d for a US reader: a temperature interval, 1 °F = 1/1.8 K).
    DegreeDays,
    /// A pressure difference (a drop across a filter); stored in bar.
    PressureDrop,
}

/// The unit a field is typed in and its step to the stored unit.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EntryUnit {
    /// The unit as people write it, for the field's label.
    pub label: &'static str,
    /// stored = typed × factor + offset.
    pub factor: f64,
    pub offset: f64,
}

impl Entry {
    pub const ALL: [Entry; 10] = [
        Entry::GaugePressure,
        Entry::FreeAirFlow,
        Entry::Volume,
        Entry::SpecificPower,
        Entry::Temperature,
        Entry::Altitude,
        Entry::Diameter,
        Entry::Atmosphere,
        Entry::DegreeDays,
        Entry::PressureDrop,
    ];

    /// The field kind's name in page data (`data-entry` attributes of the page scripts).
    pub fn as_str(self) -> &'static str {
        match self {
            Entry::GaugePressure => "gauge_pressure",
            Entry::FreeAirFlow => "free_air_flow",
            Entry::Volume => "volume",
            Entry::SpecificPower => "specific_power",
            Entry::Temperature => "temperature",
            Entry::Altitude => "altitude",
            Entry::Diameter => "diameter",
            Entry::Atmosphere => "atmosphere",
            Entry::DegreeDays => "degree_days",
            Entry::PressureDrop => "pressure_drop",
        }
    }

    /// The unit this kind of field is typed in for a reader of `units`.
    pub fn unit(self, units: UnitSystem) -> EntryUnit {
        let linear = |label, factor| EntryUnit { label, factor, offset: 0.0 };
        match (self, units) {
            (Entry::GaugePressure, UnitSystem::Si) => linear("bar(g)", 1.0),
            (Entry::GaugePressure, UnitSystem::Us) => linear("psig", PA_PER_PSI / PA_PER_BAR),
            (Entry::FreeAirFlow, UnitSystem::Si) => linear("m³/min", 1.0),
            (Entry::FreeAirFlow, UnitSystem::Us) => linear("cfm", M3_PER_FT3),
            (Entry::Volume, UnitSystem::Si) => linear("m³", 1.0),
            (Entry::Volume, UnitSystem::Us) => linear("US gal", M3_PER_US_GAL),
            (Entry::SpecificPower, UnitSystem::Si) => linear("kW/(m³/min)", 1.0),
            // 1 kW per 100 cfm = 1 kW per (100 × 0.028 316 846 592) m³/min.
            (Entry::SpecificPower, UnitSystem::Us) => linear("kW/100 cfm", 1.0 / (100.0 * M3_PER_FT3)),
            (Entry::Temperature, UnitSystem::Si) => linear("°C", 1.0),
            (Entry::Temperature, UnitSystem::Us) => {
                EntryUnit { label: "°F", factor: 1.0 / 1.8, offset: -32.0 / 1.8 }
            }
            (Entry::Altitude, UnitSystem::Si) => linear("m", 1.0),
            (Entry::Altitude, UnitSystem::Us) => linear("ft", 0.3048),
            (Entry::Diameter, UnitSystem::Si) => linear("mm", 1.0),
            (Entry::Diameter, UnitSystem::Us) => linear("in", 25.4),
            (Entry::Atmosphere, UnitSystem::Si) => linear("kPa abs", 1.0),
            (Entry::Atmosphere, UnitSystem::Us) => linear("psia", PA_PER_PSI / 1000.0),
            (Entry::DegreeDays, UnitSystem::Si) => linear("K·d", 1.0),
            (Entry::DegreeDays, UnitSystem::Us) => linear("°F·d", 1.0 / 1.8),
            (Entry::PressureDrop, UnitSystem::Si) => linear("bar", 1.0),
            (Entry::PressureDrop, UnitSystem::Us) => linear("psi", PA_PER_PSI / PA_PER_BAR),
        }
    }

    /// The stored value of a value typed in `units`.
    pub fn to_stored(self, units: UnitSystem, typed: f64) -> f64 {
        let u = self.unit(units);
        if u.factor == 1.0 && u.offset == 0.0 {
            return typed;
        }
        typed * u.factor + u.offset
    }

    /// A stored value in the unit a reader of `units` types.
    pub fn from_stored(self, units: UnitSystem, stored: f64) -> f64 {
        let u = self.unit(units);
        if u.factor == 1.0 && u.offset == 0.0 {
            return stored;
        }
        (stored - u.offset) / u.factor
    }

    /// The decimals this field is typed to in `units`: finer than any reading of the quantity
    /// and no finer (common practice: gauges read to 0.01 bar or 0.1 psi, thermometers to 0.1°).
    pub fn decimals(self, units: UnitSystem) -> i32 {
        let us = units == UnitSystem::Us;
        match self {
            Entry::GaugePressure | Entry::PressureDrop => {
                if us {
                    1
                } else {
                    3
                }
            }
            Entry::FreeAirFlow | Entry::Volume => {
                if us {
                    1
                } else {
                    3
                }
            }
            Entry::SpecificPower | Entry::Atmosphere | Entry::Diameter => 2,
            Entry::Temperature | Entry::DegreeDays => 1,
            Entry::Altitude => 0,
        }
    }

    /// The stored value as a form field shows it: rounded to [`Entry::decimals`], or to three
    /// significant figures when that is finer, no trailing zeros.
    pub fn shown(self, units: UnitSystem, stored: f64) -> String {
        let v = self.from_stored(units, stored);
        if !v.is_finite() || v == 0.0 {
            return short(v);
        }
        let d = self.decimals(units).max(2 - v.abs().log10().floor() as i32).clamp(0, 15) as usize;
        trimmed(format!("{v:.d$}"))
    }

    /// A limit in the reader's unit rounded inward (`up`: a lower limit, rounded up) to the
    /// field's decimals and four figures, so that the number quoted is itself within the limit.
    fn limit_value(self, units: UnitSystem, stored: f64, up: bool) -> f64 {
        let v = self.from_stored(units, stored);
        if v == 0.0 || !v.is_finite() {
            return v;
        }
        let d = self.decimals(units).min((3 - v.abs().log10().floor() as i32).max(0));
        let scale = 10f64.powi(d);
        let x = v * scale;
        // A value already on the grid but for the conversion's last bits stays where it is.
        let x = if (x - x.round()).abs() <= 1e-9 * x.abs().max(1.0) {
            x.round()
        } else if up {
            x.ceil()
        } else {
            x.floor()
        };
        x / scale
    }

    /// A lower limit as a form's `min` holds it (the number alone), rounded up.
    pub fn min_text(self, units: UnitSystem, stored: f64) -> String {
        short(self.limit_value(units, stored, true))
    }

    /// A lower limit as a refusal quotes it, rounded up: "at least 110.5 psig".
    pub fn lower_limit(self, units: UnitSystem, stored: f64) -> String {
        format!("{} {}", grouped(short(self.limit_value(units, stored, true))), self.unit(units).label)
    }

    /// A stored value as a refusal quotes it to a reader of `units`: the number as the field would
    /// show it, and the unit ("90 psig", "6.2 bar(g)").
    pub fn said(self, units: UnitSystem, stored: f64) -> String {
        format!("{} {}", self.shown(units, stored), self.unit(units).label)
    }

    /// An upper limit as a refusal quotes it to a reader of `units`: at the field's decimals and
    /// four significant figures at most (a whole number keeps its digits), rounded down, so that
    /// 50 bar(g) reads "725.1 psig" (725.19 psig) and 100 mm "3.93 in".
    pub fn limit(self, units: UnitSystem, stored: f64) -> String {
        format!("{} {}", grouped(short(self.limit_value(units, stored, false))), self.unit(units).label)
    }

    /// A refusal of `stored` outside `lo..=hi` (`lo` itself refused when `lo_open`), in the
    /// reader's units: "must be above 0 psig and at most 725.1 psig, got 800 psig". The caller
    /// names the field in words before it.
    pub fn out_of_range(self, units: UnitSystem, stored: f64, lo: f64, lo_open: bool, hi: f64) -> String {
        let got = if stored.is_finite() { self.said(units, stored) } else { "no number".into() };
        let low = if lo_open { "above" } else { "at least" };
        let lo = if lo_open { self.limit(units, lo) } else { self.lower_limit(units, lo) };
        format!("must be {low} {lo} and at most {}, got {got}", self.limit(units, hi))
    }

    /// The stored value of a posted text. `previous` is the record's stored value: when the text
    /// is what [`Entry::shown`] gave for it, it is kept exactly. Commas read as decimal points.
    pub fn read(self, units: UnitSystem, text: &str, previous: Option<f64>) -> Result<f64, String> {
        let text = text.trim();
        if let Some(p) = previous {
            if p.is_finite() && text == self.shown(units, p) {
                return Ok(p);
            }
        }
        let v: f64 = text.replace(',', ".").parse().map_err(|_| format!("{text:?} is not a number"))?;
        if !v.is_finite() {
            return Err(format!("{text:?} is not a number"));
        }
        Ok(self.to_stored(units, v))
    }
}

/// A number's text with its whole part's digits grouped in threes by commas, as every figure on the
/// pages ("2,641,720"; "725.1" stays): for limits quoted in words, never a form's `min` or value.
pub fn grouped(s: String) -> String {
    let (sign, rest) = s.strip_prefix('-').map_or(("", s.as_str()), |r| ("-", r));
    let (int, frac) = rest.split_once('.').map_or((rest, None), |(i, f)| (i, Some(f)));
    if int.len() <= 3 || !int.bytes().all(|b| b.is_ascii_digit()) {
        return s;
    }
    let mut out = String::from(sign);
    for (i, c) in int.chars().enumerate() {
        if i > 0 && (int.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    if let Some(f) = frac {
        out.push('.');
        out.push_str(f);
    }
    out
}

/// A number's decimal text without trailing zeros ("-0" is "0").
fn trimmed(s: String) -> String {
    let s = if s.contains('.') { s.trim_end_matches('0').trim_end_matches('.').to_string() } else { s };
    if s == "-0" {
        "0".into()
    } else {
        s
    }
}

/// A number with nine significant figures and no trailing zeros.
pub fn short(v: f64) -> String {
    if !v.is_finite() {
        return String::new();
    }
    if v == 0.0 {
        return "0".into();
    }
    let magnitude = v.abs().log10().floor() as i32;
    let decimals = (8 - magnitude).clamp(0, 15) as usize;
    trimmed(format!("{v:.decimals$}"))
}

/// The table the page scripts convert with: for each field kind, its label, factor and offset in
/// `units`. The scripts read it from the page data, so the factors exist in one place.
pub fn table(units: UnitSystem) -> Vec<(&'static str, EntryUnit)> {
    Entry::ALL.iter().map(|e| (e.as_str(), e.unit(units))).collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use UnitSystem::{Si, Us};

    // NIST SP 811 (2008), Appendix B.8, factors for units listed alphabetically, to seven digits:
    // psi -> Pa 6.894 757 E+03; cubic foot -> m³ 2.831 685 E-02; gallon (U.S.) -> m³
    // 3.785 412 E-03; cubic foot per minute -> m³/s 4.719 474 E-04; foot -> m 3.048 E-01 (exact);
    // inch -> m 2.54 E-02 (exact); °F: t/°C = (t/°F - 32)/1.8 (B.9).
    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * b.abs().max(1e-300)
    }

    #[test]
    fn a_limit_groups_its_digits_as_every_figure() {
        // A walk read "at most 2641720 US gal" and "at most 70629 cfm free air".
        assert_eq!(grouped("2641720".into()), "2,641,720");
        assert_eq!(grouped("-1640".into()), "-1,640");
        assert_eq!(grouped("725.1".into()), "725.1");
        assert_eq!(grouped("12345.67".into()), "12,345.67");
        assert_eq!(grouped("1000000".into()), "1,000,000");
        // 10,000 m³ = 2,641,720.5 US gal (NIST SP 811: 1 US gal = 3.785 412 E-03 m³), rounded down.
        assert_eq!(Entry::Volume.limit(Us, 10_000.0), "2,641,720 US gal");
        // The form's `min` stays a plain number the browser can read.
        assert_eq!(Entry::Altitude.min_text(Us, -500.0), "-1640");
        assert_eq!(Entry::Altitude.lower_limit(Us, -500.0), "-1,640 ft");
    }

    #[test]
    fn factors_agree_with_nist_sp_811() {
        assert!(close(Entry::GaugePressure.to_stored(Us, 1.0) * 1e5, 6.894_757e3, 1e-7));
        // A drop across a filter: 5 psi = 0.344 738 bar (a difference: the psi factor, no atmosphere).
        assert!(close(Entry::PressureDrop.to_stored(Us, 5.0) * 1e5, 5.0 * 6.894_757e3, 1e-7));
        assert!(close(Entry::FreeAirFlow.to_stored(Us, 1.0), 2.831_685e-2, 1e-6));
        // cfm to m³/s: 4.719 474 E-04.
        assert!(close(Entry::FreeAirFlow.to_stored(Us, 1.0) / 60.0, 4.719_474e-4, 1e-6));
        assert!(close(Entry::Volume.to_stored(Us, 1.0), 3.785_412e-3, 1e-6));
        assert_eq!(Entry::Altitude.to_stored(Us, 1000.0), 304.8);
        assert_eq!(Entry::Diameter.to_stored(Us, 0.0625), 1.5875);
        assert!(close(Entry::Temperature.to_stored(Us, 212.0), 100.0, 1e-12));
        // The standard atmosphere, 101.325 kPa, is 14.696 psia (NIST SP 811 psi factor).
        assert!(close(Entry::Atmosphere.to_stored(Us, 14.695_95), 101.325, 1e-6));
        assert!(close(Entry::Temperature.to_stored(Us, -40.0), -40.0, 1e-12));
        // Degree-days count a temperature interval: 1 °F (interval) = 5/9 K (NIST SP 811 B.9); a
        // US month of 900 °F·d is 500 K·d.
        assert!(close(Entry::DegreeDays.to_stored(Us, 900.0), 500.0, 1e-12));
        // 18 kW/100 cfm = 6.357 kW/(m³/min), the same NIST factors (1 m³/min = 35.3147 cfm).
        assert!(close(Entry::SpecificPower.to_stored(Us, 18.0), 6.3566, 1e-4));
        for e in Entry::ALL {
            assert_eq!(e.to_stored(Si, 7.25), 7.25, "{e:?} is stored as typed in SI");
        }
    }

    #[test]
    fn common_shop_values_read_as_people_know_them() {
        // 100 psig = 6.895 bar(g); 125 psig = 8.618 bar(g) (from the psi factor above).
        assert!(close(Entry::GaugePressure.to_stored(Us, 100.0), 6.894_757, 1e-6));
        assert!(close(Entry::GaugePressure.to_stored(Us, 125.0), 8.618_447, 1e-6));
        // 1,000 cfm = 28.32 m³/min; a 660 US gal receiver = 2.498 m³ (NIST SP 811).
        assert!(close(Entry::FreeAirFlow.to_stored(Us, 1000.0), 28.316_85, 1e-6));
        assert!(close(Entry::Volume.to_stored(Us, 660.0), 2.498_372, 1e-6));
    }

    #[test]
    fn labels_are_units_as_people_write_them() {
        let us: Vec<&str> = Entry::ALL.iter().map(|e| e.unit(Us).label).collect();
        assert_eq!(us, ["psig", "cfm", "US gal", "kW/100 cfm", "°F", "ft", "in", "psia", "°F·d", "psi"]);
        let si: Vec<&str> = Entry::ALL.iter().map(|e| e.unit(Si).label).collect();
        assert_eq!(si, ["bar(g)", "m³/min", "m³", "kW/(m³/min)", "°C", "m", "mm", "kPa abs", "K·d", "bar"]);
    }

    #[test]
    fn a_typed_value_reads_back_as_typed() {
        for (e, typed) in [
            (Entry::GaugePressure, "100"),
            (Entry::GaugePressure, "117.5"),
            (Entry::FreeAirFlow, "1250"),
            (Entry::FreeAirFlow, "88.3"),
            (Entry::Volume, "660"),
            (Entry::SpecificPower, "18.2"),
            (Entry::Temperature, "68"),
            (Entry::Temperature, "-4"),
            (Entry::Altitude, "5280"),
        ] {
            let stored = e.read(Us, typed, None).unwrap();
            assert_eq!(e.shown(Us, stored), typed, "{e:?}");
        }
    }

    #[test]
    fn saving_an_unchanged_form_never_moves_the_record() {
        // Stored in SI, shown in US (and back): the posted text is the shown text, so the stored
        // value comes back bit for bit, however often it is saved.
        for stored in [7.0_f64, 2.5, 13.37, 0.1 + 0.2, 6.894_757_293_168] {
            for units in [Si, Us] {
                for e in Entry::ALL {
                    let mut v = stored;
                    for _ in 0..5 {
                        let text = e.shown(units, v);
                        v = e.read(units, &text, Some(v)).unwrap();
                    }
                    assert_eq!(v.to_bits(), stored.to_bits(), "{e:?} {units:?}");
                }
            }
        }
        // A changed text is read anew.
        let v = Entry::GaugePressure.read(Us, "101", Some(7.0)).unwrap();
        assert!(close(v, 101.0 * 6_894.757_293_168 / 1e5, 1e-12));
    }

    #[test]
    fn a_value_typed_in_us_units_survives_the_round_trip_through_storage() {
        // Typed once, saved, shown, saved again: no drift at all.
        let first = Entry::FreeAirFlow.read(Us, "425", None).unwrap();
        let again = Entry::FreeAirFlow.read(Us, &Entry::FreeAirFlow.shown(Us, first), None).unwrap();
        assert_eq!(first.to_bits(), again.to_bits());
    }

    #[test]
    fn short_numbers_keep_nine_figures() {
        assert_eq!(short(6.894_757_293_168), "6.89475729");
        assert_eq!(short(100.000_000_000_01), "100");
        assert_eq!(short(0.0), "0");
        assert_eq!(short(-0.000_000_000_1), "-0.0000000001");
        assert_eq!(short(1_234_567_890.4), "1234567890");
        assert_eq!(short(f64::NAN), "");
    }

    #[test]
    fn a_refusal_quotes_the_value_as_it_was_typed() {
        // 90 psig typed: stored 90 × 0.06894757 bar(g) (NIST SP 811), said back as 90 psig.
        let stored = Entry::GaugePressure.read(Us, "90", None).unwrap();
        assert_eq!(Entry::GaugePressure.said(Us, stored), "90 psig");
        assert_eq!(Entry::GaugePressure.said(Si, 6.5), "6.5 bar(g)");
        assert_eq!(Entry::Volume.said(Us, Entry::Volume.read(Us, "660", None).unwrap()), "660 US gal");
    }

    #[test]
    fn a_range_refusal_speaks_the_readers_units() {
        // 50 bar(g) = 725.19 psig and 2,000 m³/min = 70,629 cfm (NIST SP 811 psi and ft³ factors).
        let p = Entry::GaugePressure.read(Us, "800", None).unwrap();
        assert_eq!(
            Entry::GaugePressure.out_of_range(Us, p, 0.0, true, 50.0),
            "must be above 0 psig and at most 725.1 psig, got 800 psig"
        );
        assert_eq!(Entry::FreeAirFlow.limit(Us, 2000.0), "70,629 cfm");
        assert_eq!(
            Entry::Volume.out_of_range(Si, -1.0, 0.0, false, 10_000.0),
            "must be at least 0 m³ and at most 10,000 m³, got -1 m³"
        );
    }

    #[test]
    fn converted_values_and_limits_read_as_people_write_them() {
        // 75 °F = (75 - 32) / 1.8 = 23.888... °C (NIST SP 811 B.9): shown to 0.1 °C.
        let t = Entry::Temperature.read(Us, "75", None).unwrap();
        assert_eq!(Entry::Temperature.shown(Si, t), "23.9");
        // Saved unchanged, the record keeps its bits.
        assert_eq!(Entry::Temperature.read(Si, "23.9", Some(t)).unwrap().to_bits(), t.to_bits());
        // A plant low limit of 7.62 bar(g) is 110.5187 psig (psi factor 6.894757 kPa): the
        // input's min, rounded up to 0.1 psig, lets no lower value through.
        assert_eq!(Entry::GaugePressure.min_text(Us, 7.62), "110.6");
        assert_eq!(Entry::GaugePressure.lower_limit(Si, 6.8999999999999995), "6.9 bar(g)");
        // 100 mm = 3.937 in (1 in = 25.4 mm, exact): at most 3.93 in, which is itself below it.
        assert_eq!(Entry::Diameter.limit(Us, 100.0), "3.93 in");
        assert!(Entry::Diameter.to_stored(Us, 3.93) <= 100.0);
        // A small value keeps three figures: a 1/16 in hole.
        assert_eq!(Entry::Diameter.shown(Us, 1.5875), "0.0625");
        assert_eq!(Entry::Altitude.shown(Us, 100.0), "328");
    }

    #[test]
    fn bad_text_is_refused() {
        assert!(Entry::Volume.read(Us, "ten", None).is_err());
        assert!(Entry::Volume.read(Us, "inf", None).is_err());
        assert_eq!(Entry::Volume.read(Si, "2,5", None).unwrap(), 2.5);
    }
}
