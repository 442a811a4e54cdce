/*!
The site's air and the units readings arrive in.

Two jobs live here, both at the edge between the outside world and the canonical SI types of
[`super::units`]:

- the site atmosphere from altitude (ASHRAE Handbook Fundamentals ch. 1 eq. 3, a fit to the ISO 2533
  standard atmosphere), which turns every gauge pressure into an absolute one;
- the pressure, flow, temperature, power and energy units that loggers and users name, parsed from
  the API.md spellings and from the common spellings found in logger headers, and converted once
  into [`PressureAbs`], [`FreeAirFlow`], [`Temperature`], [`Power`] and [`Energy`].

A bare pressure unit ("bar", "psi", "kPa", "MPa") is read as gauge: compressed-air loggers and
gauges show gauge pressure unless they say otherwise (common practice). A flow in "standard" or
"normal" units is converted to free air at the site inlet with its reference conditions
(FIELD-NOTES §2).
*/

use super::units::{
    Energy, FreeAirFlow, Power, PressureAbs, ReferenceConditions, SiteAir, Temperature, J_PER_KWH,
    M3_PER_FT3, PA_PER_BAR, PA_PER_PSI, T_ZERO_C,
};

/// Site atmospheric pressure from altitude, ASHRAE Handbook Fundamentals ch. 1 eq. 3 (the ISO 2533
/// standard atmosphere in the troposphere): p = 101.325 (1 - 2.25577e-5 Z)^5.2559 kPa, Z in metres.
/// Valid in the troposphere (below 11 km), which covers every plant.
pub fn atmosphere_from_altitude(altitude_m: f64) -> PressureAbs {
    PressureAbs::from_kpa_abs(101.325 * (1.0 - 2.255_77e-5 * altitude_m).powf(5.2559))
}

/// A unit label reduced to a comparable key: lower case, the superscript three and the degree signs
/// folded, and the separators that headers use freely ("m³/min", "m3 / min", "m3_min") removed.
fn unit_key(s: &str) -> String {
    s.trim()
        .chars()
        .filter_map(|c| match c {
            '³' => Some('3'),
            // The degree sign, the masculine ordinal that keyboards often put in its place, and the
            // ring above are all written for "degree" in headers.
            '°' | 'º' | '˚' => None,
            ' ' | '_' | '/' | '(' | ')' | '[' | ']' | '.' | '-' => None,
            c => Some(c.to_ascii_lowercase()),
        })
        .collect()
}

/// Pressure units of the API (`bar_g`, `psig`, `kPa_g`, `MPa_g`, `bar_a`, `psia`, `kPa_a`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum PressureUnit {
    BarG,
    Psig,
    KpaG,
    MpaG,
    BarA,
    Psia,
    KpaA,
}

impl PressureUnit {
    pub const ALL: &'static [Self] =
        &[Self::BarG, Self::Psig, Self::KpaG, Self::MpaG, Self::BarA, Self::Psia, Self::KpaA];

    /// Parses the API spelling or a common header spelling, case-insensitively: "bar_g", "barg",
    /// "bar(g)", "bar" (bare units are gauge), "psig", "psi", "kPa_g", "kPa", "MPa", "bar_a",
    /// "bara", "bar abs", "psia", "kPa_a", "kPa abs" ...
    pub fn parse(s: &str) -> Option<Self> {
        match unit_key(s).as_str() {
            "barg" | "bar" | "bargauge" => Some(Self::BarG),
            "psig" | "psi" | "psigauge" => Some(Self::Psig),
            "kpag" | "kpa" | "kpagauge" => Some(Self::KpaG),
            "mpag" | "mpa" | "mpagauge" => Some(Self::MpaG),
            "bara" | "barabs" | "barabsolute" => Some(Self::BarA),
            "psia" | "psiabs" | "psiabsolute" => Some(Self::Psia),
            "kpaa" | "kpaabs" | "kpaabsolute" => Some(Self::KpaA),
            _ => None,
        }
    }

    /// The API spelling.
    pub fn as_str(self) -> &'static str {
        match self {
            Self::BarG => "bar_g",
            Self::Psig => "psig",
            Self::KpaG => "kPa_g",
            Self::MpaG => "MPa_g",
            Self::BarA => "bar_a",
            Self::Psia => "psia",
            Self::KpaA => "kPa_a",
        }
    }

    /// True for gauge units, which need the site atmosphere to become absolute.
    pub fn is_gauge(self) -> bool {
        matches!(self, Self::BarG | Self::Psig | Self::KpaG | Self::MpaG)
    }

    /// Pa per unit of pressure difference.
    pub fn pa_per_unit(self) -> f64 {
        match self {
            Self::BarG | Self::BarA => PA_PER_BAR,
            Self::Psig | Self::Psia => PA_PER_PSI,
            Self::KpaG | Self::KpaA => 1_000.0,
            Self::MpaG => 1_000_000.0,
        }
    }

    /// A reading in this unit as absolute pressure; gauge readings add the site atmosphere.
    pub fn to_abs(self, value: f64, atm: PressureAbs) -> PressureAbs {
        let pa = value * self.pa_per_unit();
        if self.is_gauge() {
            PressureAbs(pa + atm.0)
        } else {
            PressureAbs(pa)
        }
    }
}

/// Flow units of the API. The first four are free air (volume at the site inlet); the others are
/// volumes at reference conditions.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum FlowUnit {
    M3Min,
    M3H,
    LS,
    Cfm,
    Scfm,
    Nm3H,
    Nm3Min,
    Sm3H,
    Sm3Min,
}

impl FlowUnit {
    pub const ALL: &'static [Self] = &[
        Self::M3Min,
        Self::M3H,
        Self::LS,
        Self::Cfm,
        Self::Scfm,
        Self::Nm3H,
        Self::Nm3Min,
        Self::Sm3H,
        Self::Sm3Min,
    ];

    /// Parses the API spelling or a common header spelling, case-insensitively: "m3_min", "m3/min",
    /// "m³/min", "m3/h", "m3/hr", "l/s", "cfm", "ft3/min", "acfm", "scfm", "Nm3/h", "Nm³/min",
    /// "Sm3/h" ...
    pub fn parse(s: &str) -> Option<Self> {
        match unit_key(s).as_str() {
            "m3min" => Some(Self::M3Min),
            "m3h" | "m3hr" => Some(Self::M3H),
            "ls" | "lps" => Some(Self::LS),
            // "acfm" (actual cfm) is volume at the inlet: free air.
            "cfm" | "acfm" | "ft3min" => Some(Self::Cfm),
            "scfm" => Some(Self::Scfm),
            "nm3h" | "nm3hr" => Some(Self::Nm3H),
            "nm3min" => Some(Self::Nm3Min),
            "sm3h" | "sm3hr" => Some(Self::Sm3H),
            "sm3min" => Some(Self::Sm3Min),
            _ => None,
        }
    }

    /// The API spelling.
    pub fn as_str(self) -> &'static str {
        match self {
            Self::M3Min => "m3_min",
            Self::M3H => "m3_h",
            Self::LS => "l_s",
            Self::Cfm => "cfm",
            Self::Scfm => "scfm",
            Self::Nm3H => "Nm3_h",
            Self::Nm3Min => "Nm3_min",
            Self::Sm3H => "Sm3_h",
            Self::Sm3Min => "Sm3_min",
        }
    }

    /// m³/s per unit of this flow, in the unit's own volume basis (before any reference
    /// conversion).
    pub fn m3_s_per_unit(self) -> f64 {
        match self {
            Self::M3Min | Self::Nm3Min | Self::Sm3Min => 1.0 / 60.0,
            Self::M3H | Self::Nm3H | Self::Sm3H => 1.0 / 3600.0,
            Self::LS => 1.0e-3,
            Self::Cfm | Self::Scfm => M3_PER_FT3 / 60.0,
        }
    }

    /// The reference conditions a unit implies when the mapping gives none: `None` for the free-air
    /// units, DIN 1343 normal for Nm³, ISO 1217 standard inlet for Sm³, ASME standard air for scfm.
    pub fn default_reference(self) -> Option<ReferenceConditions> {
        match self {
            Self::M3Min | Self::M3H | Self::LS | Self::Cfm => None,
            Self::Scfm => Some(ReferenceConditions::STANDARD_ASME_SCFM),
            Self::Nm3H | Self::Nm3Min => Some(ReferenceConditions::NORMAL_DIN_1343),
            Self::Sm3H | Self::Sm3Min => Some(ReferenceConditions::STANDARD_ISO_1217),
        }
    }

    /// A reading in this unit as free air at the site inlet. `reference` is the condition the meter
    /// refers its volume to; when given it wins (a meter set to its own "standard"), otherwise the
    /// unit's [`FlowUnit::default_reference`] applies. Free-air units without a reference are taken
    /// as they are. Dry-air, ideal-gas conversion (FIELD-NOTES §2).
    pub fn to_free_air(
        self,
        value: f64,
        reference: Option<ReferenceConditions>,
        site: &SiteAir,
    ) -> FreeAirFlow {
        let q = value * self.m3_s_per_unit();
        match reference.or(self.default_reference()) {
            Some(r) => FreeAirFlow(site.free_air_from_reference(q, r)),
            None => FreeAirFlow(q),
        }
    }
}

/// Temperature units of the API (`C`, `F`, `K`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum TemperatureUnit {
    C,
    F,
    K,
}

impl TemperatureUnit {
    /// Parses "C", "°C", "degC", "deg C", "celsius", "F", "°F", "degF", "fahrenheit", "K",
    /// "kelvin", case-insensitively.
    pub fn parse(s: &str) -> Option<Self> {
        match unit_key(s).as_str() {
            "c" | "degc" | "celsius" | "degcelsius" => Some(Self::C),
            "f" | "degf" | "fahrenheit" | "degfahrenheit" => Some(Self::F),
            "k" | "kelvin" => Some(Self::K),
            _ => None,
        }
    }

    pub fn as_str(self) -> &'static str {
        match self {
            Self::C => "C",
            Self::F => "F",
            Self::K => "K",
        }
    }

    pub fn to_si(self, value: f64) -> Temperature {
        match self {
            Self::C => Temperature(value + T_ZERO_C),
            Self::F => Temperature::from_f(value),
            Self::K => Temperature(value),
        }
    }
}

/// Power units of the API (`kW`, `W`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum PowerUnit {
    Kw,
    W,
}

impl PowerUnit {
    /// Parses "kW", "KW", "kw", "kilowatt", "W", "watt", case-insensitively.
    pub fn parse(s: &str) -> Option<Self> {
        match unit_key(s).as_str() {
            "kw" | "kilowatt" | "kilowatts" => Some(Self::Kw),
            "w" | "watt" | "watts" => Some(Self::W),
            _ => None,
        }
    }

    pub fn as_str(self) -> &'static str {
        match self {
            Self::Kw => "kW",
            Self::W => "W",
        }
    }

    pub fn to_si(self, value: f64) -> Power {
        match self {
            Self::Kw => Power(value * 1_000.0),
            Self::W => Power(value),
        }
    }
}

/// Energy (counter) units of the API (`kWh`, `Wh`, `MWh`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum EnergyUnit {
    Kwh,
    Wh,
    Mwh,
}

impl EnergyUnit {
    /// Parses "kWh", "KWH", "Wh", "MWh", case-insensitively, except "mWh", which would be milliwatt
    /// hours and is refused rather than read as megawatt hours.
    pub fn parse(s: &str) -> Option<Self> {
        if s.trim() == "mWh" {
            return None;
        }
        match unit_key(s).as_str() {
            "kwh" => Some(Self::Kwh),
            "wh" => Some(Self::Wh),
            "mwh" => Some(Self::Mwh),
            _ => None,
        }
    }

    pub fn as_str(self) -> &'static str {
        match self {
            Self::Kwh => "kWh",
            Self::Wh => "Wh",
            Self::Mwh => "MWh",
        }
    }

    /// J per unit.
    pub fn j_per_unit(self) -> f64 {
        match self {
            Self::Kwh => J_PER_KWH,
            Self::Wh => J_PER_KWH / 1_000.0,
            Self::Mwh => J_PER_KWH * 1_000.0,
        }
    }

    pub fn to_si(self, value: f64) -> Energy {
        Energy(value * self.j_per_unit())
    }
}

#[cfg(test)]
mod tests {
    use super::super::units::P_STD_ATM;
    use super::*;

    fn fixture() -> serde_json::Value {
        serde_json::from_str(include_str!("../../tests/reference/fixture.json")).unwrap()
    }

    /// A reference value from the fixture written by tests/reference/make_reference.py.
    fn reference(name: &str) -> f64 {
        fixture()["values"][name]["value"].as_f64().unwrap_or_else(|| panic!("fixture has no value {name}"))
    }

    fn rel(a: f64, b: f64) -> f64 {
        ((a - b) / b).abs()
    }

    #[test]
    fn altitude_gives_the_ashrae_standard_atmosphere() {
        // FIELD-NOTES §11, ASHRAE Fundamentals ch. 1 eq. 3: 1000 m -> 89.875 kPa, 1500 m -> 84.556.
        assert!((atmosphere_from_altitude(1000.0).kpa_abs() - 89.875).abs() < 0.0005);
        assert!((atmosphere_from_altitude(1500.0).kpa_abs() - 84.556).abs() < 0.0005);
        // Sea level is the ISO 2533 standard atmosphere, 101.325 kPa exactly.
        assert!((atmosphere_from_altitude(0.0).0 - P_STD_ATM).abs() < 1e-9);
    }

    #[test]
    fn altitude_agrees_with_the_1976_standard_atmosphere_of_fluids() {
        // fixture: fluids 1.3.1 ATMOSPHERE_1976(Z).P. ASHRAE eq. 3 is a fit to this model (with
        // geometric altitude where eq. 3 behaves like geopotential altitude, a difference that
        // grows with height): within 0.01 % up to 1500 m and 0.03 % at 3000 m.
        for (z, tolerance) in [(0.0, 1e-9), (250.0, 1e-4), (1000.0, 1e-4), (1500.0, 1e-4), (3000.0, 3e-4)] {
            let expected = reference(&format!("air.atmosphere_1976_{}m_pa", z as i64));
            assert!(rel(atmosphere_from_altitude(z).0, expected) < tolerance, "at {z} m");
        }
    }

    #[test]
    fn pressure_units_parse_from_api_and_header_spellings() {
        for u in PressureUnit::ALL {
            assert_eq!(PressureUnit::parse(u.as_str()), Some(*u));
        }
        let cases = [
            ("bar_g", PressureUnit::BarG),
            ("barg", PressureUnit::BarG),
            ("bar", PressureUnit::BarG),
            ("Bar(g)", PressureUnit::BarG),
            ("BAR G", PressureUnit::BarG),
            ("psi", PressureUnit::Psig),
            ("PSIG", PressureUnit::Psig),
            ("kPa", PressureUnit::KpaG),
            ("kPa_g", PressureUnit::KpaG),
            ("MPa", PressureUnit::MpaG),
            ("bara", PressureUnit::BarA),
            ("bar abs", PressureUnit::BarA),
            ("bar(a)", PressureUnit::BarA),
            ("psia", PressureUnit::Psia),
            ("kPa_a", PressureUnit::KpaA),
            ("kPa abs", PressureUnit::KpaA),
        ];
        for (s, u) in cases {
            assert_eq!(PressureUnit::parse(s), Some(u), "{s}");
        }
        assert_eq!(PressureUnit::parse("inHg"), None);
        assert_eq!(PressureUnit::parse(""), None);
    }

    #[test]
    fn pressure_factors_match_pint() {
        // fixture: pint 0.25.3 Quantity(1, unit).to('Pa').
        assert!(rel(PressureUnit::BarG.pa_per_unit(), reference("unit.pa_per_bar")) < 1e-12);
        assert!(rel(PressureUnit::Psia.pa_per_unit(), reference("unit.pa_per_psi")) < 1e-12);
        assert!(rel(PressureUnit::KpaA.pa_per_unit(), reference("unit.pa_per_kpa")) < 1e-12);
        assert!(rel(PressureUnit::MpaG.pa_per_unit(), reference("unit.pa_per_mpa")) < 1e-12);
    }

    #[test]
    fn gauge_pressure_adds_the_site_atmosphere_and_absolute_does_not() {
        let atm = PressureAbs::from_kpa_abs(89.875);
        // By hand: 7 bar(g) at 89.875 kPa = 700 000 + 89 875 Pa.
        assert!((PressureUnit::BarG.to_abs(7.0, atm).0 - 789_875.0).abs() < 1e-6);
        assert!((PressureUnit::KpaG.to_abs(700.0, atm).0 - 789_875.0).abs() < 1e-6);
        assert!((PressureUnit::MpaG.to_abs(0.7, atm).0 - 789_875.0).abs() < 1e-6);
        // By hand: 100 psig = 689 475.729 Pa above the atmosphere.
        let p = PressureUnit::Psig.to_abs(100.0, atm);
        assert!((p.0 - (689_475.729_316_8 + 89_875.0)).abs() < 1e-6);
        // Absolute units ignore the atmosphere: 8 bar(a) is 800 kPa anywhere.
        assert!((PressureUnit::BarA.to_abs(8.0, atm).0 - 800_000.0).abs() < 1e-9);
        assert!((PressureUnit::Psia.to_abs(14.7, atm).0 - 101_352.932).abs() < 1e-3);
        assert!(PressureUnit::Psig.is_gauge() && !PressureUnit::KpaA.is_gauge());
    }

    #[test]
    fn flow_units_parse_from_api_and_header_spellings() {
        for u in FlowUnit::ALL {
            assert_eq!(FlowUnit::parse(u.as_str()), Some(*u));
        }
        let cases = [
            ("m3/min", FlowUnit::M3Min),
            ("m³/min", FlowUnit::M3Min),
            ("M3/MIN", FlowUnit::M3Min),
            ("m3/h", FlowUnit::M3H),
            ("m³/h", FlowUnit::M3H),
            ("l/s", FlowUnit::LS),
            ("L/s", FlowUnit::LS),
            ("CFM", FlowUnit::Cfm),
            ("ft³/min", FlowUnit::Cfm),
            ("SCFM", FlowUnit::Scfm),
            ("Nm3/h", FlowUnit::Nm3H),
            ("Nm³/h", FlowUnit::Nm3H),
            ("Nm3/min", FlowUnit::Nm3Min),
            ("Sm3/h", FlowUnit::Sm3H),
            ("Sm³/min", FlowUnit::Sm3Min),
        ];
        for (s, u) in cases {
            assert_eq!(FlowUnit::parse(s), Some(u), "{s}");
        }
        assert_eq!(FlowUnit::parse("gpm"), None);
    }

    #[test]
    fn flow_factors_match_pint() {
        // fixture: pint 0.25.3 Quantity(1, unit).to('m^3/s').
        assert!(rel(FlowUnit::M3Min.m3_s_per_unit(), reference("unit.m3_s_per_m3_min")) < 1e-12);
        assert!(rel(FlowUnit::Nm3H.m3_s_per_unit(), reference("unit.m3_s_per_m3_h")) < 1e-12);
        assert!(rel(FlowUnit::LS.m3_s_per_unit(), reference("unit.m3_s_per_l_s")) < 1e-12);
        assert!(rel(FlowUnit::Scfm.m3_s_per_unit(), reference("unit.m3_s_per_cfm")) < 1e-12);
    }

    #[test]
    fn free_air_units_pass_through_and_reference_units_need_their_conditions() {
        let site = SiteAir::new(89.875, 20.0);
        assert_eq!(FlowUnit::Cfm.default_reference(), None);
        assert_eq!(FlowUnit::M3H.default_reference(), None);
        assert_eq!(FlowUnit::Nm3Min.default_reference(), Some(ReferenceConditions::NORMAL_DIN_1343));
        assert_eq!(FlowUnit::Sm3H.default_reference(), Some(ReferenceConditions::STANDARD_ISO_1217));
        // By hand: 12 m³/min of free air is 0.2 m³/s whatever the site.
        assert!((FlowUnit::M3Min.to_free_air(12.0, None, &site).0 - 0.2).abs() < 1e-12);
        // By hand: 1 Sm³/min (100 kPa, 20 °C) at 89.875 kPa, 20 °C = 100 / 89.875 m³/min free air.
        let q = FlowUnit::Sm3Min.to_free_air(1.0, None, &site);
        assert!((q.m3_min() - 100.0 / 89.875).abs() < 1e-12);
    }

    #[test]
    fn scfm_converts_to_free_air_like_pint() {
        // fixture: pint 0.25.3, 100 scfm (ASME 14.696 psia, 68 °F) at an 89.875 kPa, 20 °C site.
        let site = SiteAir::new(89.875, 20.0);
        let q = FlowUnit::Scfm.to_free_air(100.0, None, &site);
        assert!(rel(q.m3_min(), reference("air.scfm_100_to_free_air_m3_min")) < 1e-9);
    }

    #[test]
    fn normal_cubic_metres_convert_to_free_air_like_pint() {
        // fixture: pint 0.25.3, 120 Nm³/h (DIN 1343) at a 95 kPa, 30 °C site.
        let site = SiteAir::new(95.0, 30.0);
        let q = FlowUnit::Nm3H.to_free_air(120.0, None, &site);
        assert!(rel(q.0, reference("air.nm3_h_120_to_free_air_m3_s")) < 1e-9);
    }

    #[test]
    fn a_given_reference_overrides_the_default() {
        // A meter set to 101.325 kPa and 20 °C reading "scfm": by hand, at a 101.325 kPa, 20 °C
        // site that is free air already, so 100 scfm = 100 cfm.
        let site = SiteAir::new(101.325, 20.0);
        let r = ReferenceConditions { pressure_kpa_abs: 101.325, temperature_c: 20.0 };
        let q = FlowUnit::Scfm.to_free_air(100.0, Some(r), &site);
        assert!((q.cfm() - 100.0).abs() < 1e-9);
    }

    #[test]
    fn temperature_units_parse_and_convert_like_pint() {
        for s in ["C", "°C", "degC", "deg C", "ºC", "celsius"] {
            assert_eq!(TemperatureUnit::parse(s), Some(TemperatureUnit::C), "{s}");
        }
        for s in ["F", "°F", "degF", "Fahrenheit"] {
            assert_eq!(TemperatureUnit::parse(s), Some(TemperatureUnit::F), "{s}");
        }
        assert_eq!(TemperatureUnit::parse("K"), Some(TemperatureUnit::K));
        assert_eq!(TemperatureUnit::parse("R"), None);
        // fixture: pint 0.25.3 Quantity(v, 'degF'/'degC').to('K').
        let f68 = TemperatureUnit::F.to_si(68.0).0;
        assert!((f68 - reference("unit.degf_68_in_k")).abs() < 1e-9);
        let c20 = TemperatureUnit::C.to_si(20.0).0;
        assert!((c20 - reference("unit.degc_20_in_k")).abs() < 1e-9);
        let f40 = TemperatureUnit::F.to_si(-40.0).0;
        assert!((f40 - reference("unit.degf_minus_40_in_k")).abs() < 1e-9);
        assert!((TemperatureUnit::K.to_si(300.0).0 - 300.0).abs() < 1e-12);
    }

    #[test]
    fn power_and_energy_units_parse_and_convert_like_pint() {
        for s in ["kW", "KW", "kw", "kilowatt"] {
            assert_eq!(PowerUnit::parse(s), Some(PowerUnit::Kw), "{s}");
        }
        assert_eq!(PowerUnit::parse("W"), Some(PowerUnit::W));
        assert_eq!(PowerUnit::parse("hp"), None);
        // fixture: pint 0.25.3 Quantity(1, 'kW').to('W').
        assert!(rel(PowerUnit::Kw.to_si(1.0).0, reference("unit.w_per_kw")) < 1e-12);
        assert!((PowerUnit::W.to_si(1500.0).kw() - 1.5).abs() < 1e-12);

        for s in ["kWh", "KWH", "kwh"] {
            assert_eq!(EnergyUnit::parse(s), Some(EnergyUnit::Kwh), "{s}");
        }
        assert_eq!(EnergyUnit::parse("Wh"), Some(EnergyUnit::Wh));
        assert_eq!(EnergyUnit::parse("MWh"), Some(EnergyUnit::Mwh));
        // Milliwatt hours are not megawatt hours.
        assert_eq!(EnergyUnit::parse("mWh"), None);
        // fixture: pint 0.25.3 Quantity(1, 'kW*h' / 'W*h' / 'MW*h').to('J').
        assert!(rel(EnergyUnit::Kwh.to_si(1.0).0, reference("unit.j_per_kwh")) < 1e-12);
        assert!(rel(EnergyUnit::Wh.to_si(1.0).0, reference("unit.j_per_wh")) < 1e-12);
        assert!(rel(EnergyUnit::Mwh.to_si(1.0).0, reference("unit.j_per_mwh")) < 1e-12);
    }
}
