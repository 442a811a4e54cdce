/*!
Units as types. Inside airledger every quantity lives in one canonical SI set:

| quantity     | type            | canonical unit                         |
|--------------|-----------------|----------------------------------------|
| pressure     | [`PressureAbs`] | Pa, **absolute**                       |
| temperature  | [`Temperature`] | K                                      |
| power        | [`Power`]       | W                                      |
| energy       | [`Energy`]      | J                                      |
| volume       | [`Volume`]      | m³                                     |
| flow         | [`FreeAirFlow`] | m³/s of **free air** at the site inlet |

Gauge pressure and reference-condition flows ("standard", "normal") exist only at the edges: they are
converted here, once, with the site's atmosphere ([`SiteAir`]). A plain `f64` that crosses a module
boundary carries its unit in its name (`flow_m3_min`, `pressure_bar_g`).
*/

use serde::{Deserialize, Serialize};

/// Standard atmosphere at sea level, Pa (ISO 2533).
pub const P_STD_ATM: f64 = 101_325.0;
/// 0 °C in kelvin.
pub const T_ZERO_C: f64 = 273.15;
/// Pa per bar (exact).
pub const PA_PER_BAR: f64 = 100_000.0;
/// Pa per psi (exact from the avoirdupois pound and the inch: 6894.757293168 Pa).
pub const PA_PER_PSI: f64 = 6_894.757_293_168;
/// m³ per ft³ (exact: 0.3048³).
pub const M3_PER_FT3: f64 = 0.028_316_846_592;
/// J per kWh (exact).
pub const J_PER_KWH: f64 = 3.6e6;
/// m³ per US gallon (exact: 231 in³).
pub const M3_PER_US_GAL: f64 = 0.003_785_411_784;

macro_rules! si_newtype {
    ($(#[$doc:meta])* $name:ident, $unit:literal) => {
        $(#[$doc])*
        #[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default, Serialize, Deserialize)]
        pub struct $name(pub f64);
        impl $name {
            #[doc = concat!("The value in ", $unit, ".")]
            pub fn si(self) -> f64 {
                self.0
            }
        }
        impl std::ops::Add for $name {
            type Output = Self;
            fn add(self, o: Self) -> Self {
                Self(self.0 + o.0)
            }
        }
        impl std::ops::Sub for $name {
            type Output = Self;
            fn sub(self, o: Self) -> Self {
                Self(self.0 - o.0)
            }
        }
        impl std::ops::Mul<f64> for $name {
            type Output = Self;
            fn mul(self, k: f64) -> Self {
                Self(self.0 * k)
            }
        }
    };
}

si_newtype!(
    /// Absolute pressure, Pa.
    PressureAbs, "Pa (absolute)"
);
si_newtype!(
    /// Thermodynamic temperature, K.
    Temperature, "K"
);
si_newtype!(
    /// Power, W.
    Power, "W"
);
si_newtype!(
    /// Energy, J.
    Energy, "J"
);
si_newtype!(
    /// Volume, m³ (geometric, e.g. a receiver).
    Volume, "m³"
);
si_newtype!(
    /// Volume flow of free air (ISO 1217 free air delivery: volume at the site's inlet pressure and
    /// temperature), m³/s.
    FreeAirFlow, "m³/s free air"
);

impl PressureAbs {
    pub fn from_kpa_abs(kpa: f64) -> Self {
        Self(kpa * 1000.0)
    }
    pub fn kpa_abs(self) -> f64 {
        self.0 / 1000.0
    }
    pub fn from_bar_g(bar_g: f64, atm: PressureAbs) -> Self {
        Self(bar_g * PA_PER_BAR + atm.0)
    }
    pub fn bar_g(self, atm: PressureAbs) -> f64 {
        (self.0 - atm.0) / PA_PER_BAR
    }
    pub fn from_psig(psig: f64, atm: PressureAbs) -> Self {
        Self(psig * PA_PER_PSI + atm.0)
    }
    pub fn psig(self, atm: PressureAbs) -> f64 {
        (self.0 - atm.0) / PA_PER_PSI
    }
    pub fn bar_abs(self) -> f64 {
        self.0 / PA_PER_BAR
    }
    pub fn psia(self) -> f64 {
        self.0 / PA_PER_PSI
    }
}

impl Temperature {
    pub fn from_c(c: f64) -> Self {
        Self(c + T_ZERO_C)
    }
    pub fn from_f(f: f64) -> Self {
        Self((f - 32.0) * 5.0 / 9.0 + T_ZERO_C)
    }
    pub fn c(self) -> f64 {
        self.0 - T_ZERO_C
    }
    pub fn f(self) -> f64 {
        self.c() * 9.0 / 5.0 + 32.0
    }
}

impl Power {
    pub fn from_kw(kw: f64) -> Self {
        Self(kw * 1000.0)
    }
    pub fn kw(self) -> f64 {
        self.0 / 1000.0
    }
}

impl Energy {
    pub fn from_kwh(kwh: f64) -> Self {
        Self(kwh * J_PER_KWH)
    }
    pub fn kwh(self) -> f64 {
        self.0 / J_PER_KWH
    }
}

impl Volume {
    pub fn from_ft3(ft3: f64) -> Self {
        Self(ft3 * M3_PER_FT3)
    }
    pub fn ft3(self) -> f64 {
        self.0 / M3_PER_FT3
    }
    pub fn us_gal(self) -> f64 {
        self.0 / M3_PER_US_GAL
    }
}

impl FreeAirFlow {
    pub fn from_m3_min(q: f64) -> Self {
        Self(q / 60.0)
    }
    pub fn m3_min(self) -> f64 {
        self.0 * 60.0
    }
    pub fn cfm(self) -> f64 {
        self.0 * 60.0 / M3_PER_FT3
    }
}

/// Specific power in kW/(m³/min) of free air into kW/100 cfm: kW/(m³/min) = kW/100 cfm × 0.353147
/// (NIST SP 811 conversions; 100 cfm = 2.8317 m³/min).
pub fn kw_per_100cfm(kw_per_m3_min: f64) -> f64 {
    kw_per_m3_min * 100.0 * M3_PER_FT3
}

/// Reference conditions that give a "standard" or "normal" volume its meaning.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct ReferenceConditions {
    pub pressure_kpa_abs: f64,
    pub temperature_c: f64,
}

impl ReferenceConditions {
    /// Normal cubic metre, DIN 1343: 101.325 kPa, 0 °C.
    pub const NORMAL_DIN_1343: Self = Self { pressure_kpa_abs: 101.325, temperature_c: 0.0 };
    /// "Standard" cubic metre as ISO 1217's standard inlet: 100 kPa, 20 °C, dry (from memory).
    pub const STANDARD_ISO_1217: Self = Self { pressure_kpa_abs: 100.0, temperature_c: 20.0 };
    /// ASME "standard air" for scfm: 14.696 psia, 68 °F (humidity ignored: dry-air conversion).
    pub const STANDARD_ASME_SCFM: Self =
        Self { pressure_kpa_abs: 14.696 * PA_PER_PSI / 1000.0, temperature_c: 20.0 };
}

/// The air at the site's compressor inlets: what "free air" refers to.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct SiteAir {
    pub atmosphere: PressureAbs,
    pub inlet_temperature: Temperature,
}

impl SiteAir {
    pub fn new(atmospheric_pressure_kpa_abs: f64, inlet_temperature_c: f64) -> Self {
        Self {
            atmosphere: PressureAbs::from_kpa_abs(atmospheric_pressure_kpa_abs),
            inlet_temperature: Temperature::from_c(inlet_temperature_c),
        }
    }

    /// Free air volume from a volume at reference conditions (dry air, ideal gas):
    /// V_FAD = V_ref (p_ref / p_in) (T_in / T_ref) (ideal gas, dry air).
    pub fn free_air_from_reference(&self, v_ref: f64, r: ReferenceConditions) -> f64 {
        v_ref
            * (r.pressure_kpa_abs * 1000.0 / self.atmosphere.0)
            * (self.inlet_temperature.0 / Temperature::from_c(r.temperature_c).0)
    }

    /// The inverse of [`SiteAir::free_air_from_reference`].
    pub fn reference_from_free_air(&self, v_fad: f64, r: ReferenceConditions) -> f64 {
        v_fad / self.free_air_from_reference(1.0, r)
    }
}

/// Which unit system a person reads figures in. The API is always SI-canonical.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum UnitSystem {
    #[default]
    Si,
    Us,
}

impl UnitSystem {
    pub fn parse(s: &str) -> Option<Self> {
        match s {
            "si" | "SI" | "metric" => Some(Self::Si),
            "us" | "US" | "imperial" | "us_customary" => Some(Self::Us),
            _ => None,
        }
    }
    pub fn as_str(self) -> &'static str {
        match self {
            Self::Si => "si",
            Self::Us => "us",
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn specific_power_conversion_matches_field_notes_worked_value() {
        // NIST SP 811 conversions: 18 kW/100 cfm = 6.357 kW/(m³/min).
        let kw_per_m3_min: f64 = 18.0 * 0.353_147;
        assert!((kw_per_m3_min - 6.357).abs() < 0.001);
        assert!((kw_per_100cfm(6.357) - 18.0).abs() < 0.01);
    }

    #[test]
    fn one_cubic_metre_per_minute_is_35_3147_cfm() {
        // NIST SP 811 conversions: 1 m³/min = 35.3147 cfm.
        assert!((FreeAirFlow::from_m3_min(1.0).cfm() - 35.3147).abs() < 1e-4);
    }

    #[test]
    fn gauge_and_absolute_round_trip_through_the_site_atmosphere() {
        let atm = PressureAbs::from_kpa_abs(89.875);
        let p = PressureAbs::from_bar_g(7.0, atm);
        assert!((p.0 - 789_875.0).abs() < 1e-6);
        assert!((p.bar_g(atm) - 7.0).abs() < 1e-12);
        let q = PressureAbs::from_psig(100.0, PressureAbs(P_STD_ATM));
        assert!((q.psia() - (100.0 + P_STD_ATM / PA_PER_PSI)).abs() < 1e-9);
    }

    #[test]
    fn normal_cubic_metres_convert_to_more_free_air_at_altitude() {
        // 1 Nm³ (0 °C, 101.325 kPa) at a 1000 m site (89.875 kPa) and 20 °C inlet.
        let site = SiteAir::new(89.875, 20.0);
        let v = site.free_air_from_reference(1.0, ReferenceConditions::NORMAL_DIN_1343);
        let expected = (101.325 / 89.875) * (293.15 / 273.15);
        assert!((v - expected).abs() < 1e-12);
        assert!((site.reference_from_free_air(v, ReferenceConditions::NORMAL_DIN_1343) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn fahrenheit_and_celsius_agree_at_the_fixed_points() {
        assert!((Temperature::from_f(212.0).c() - 100.0).abs() < 1e-12);
        assert!((Temperature::from_c(-40.0).f() + 40.0).abs() < 1e-12);
    }
}
