/*!
The site's air: the atmosphere at the site's altitude (ASHRAE Handbook Fundamentals ch. 1 eq. 3, a
fit to the ISO 2533 standard atmosphere), which turns every gauge pressure into an absolute one.

The units readings arrive in, with their spellings and conversions, are the one table of
[`super::unit_table`].
*/

use super::units::PressureAbs;

/// Site atmospheric pressure from altitude, ASHRAE Handbook Fundamentals ch. 1 eq. 3 (the ISO 2533
/// standard atmosphere in the troposphere): p = 101.325 (1 - 2.25577e-5 Z)^5.2559 kPa, Z in metres.
/// Valid in the troposphere (below 11 km), which covers every plant.
pub fn atmosphere_from_altitude(altitude_m: f64) -> PressureAbs {
    PressureAbs::from_kpa_abs(101.325 * (1.0 - 2.255_77e-5 * altitude_m).powf(5.2559))
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
        // ASHRAE Handbook Fundamentals ch. 1 eq. 3: 1000 m -> 89.875 kPa, 1500 m -> 84.556.
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
}
