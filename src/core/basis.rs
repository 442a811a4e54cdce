/*!
What a stored reading means, apart from the site: the basis a meter logged on, and how the site's
air as it is now turns it into the analysis' SI (Pa absolute, m³/s free air).

A logger measures a gauge pressure against the air around it and a standard-flow meter a volume at
its reference conditions; neither depends on what the audit later says about the site's altitude.
So readings are stored as measured (scaled to SI units, nothing of the site applied) and the site
is applied when they are read ([`StoredForm::to_site`]): an edit of the site's altitude or inlet
temperature re-derives exactly the channels whose basis depends on it.

- [`Basis::Site`]: the value is already site-free SI: power W, energy J, temperature K, absolute
  pressure Pa.
- [`Basis::FreeAir`]: a free-air flow meter, m³/s at the site inlet, read as logged.
- [`Basis::Gauge`]: Pa above the atmosphere; absolute = gauge + the site's atmosphere.
- [`Basis::Reference`]: m³/s at reference conditions (standard or normal volume, the same mass
  whatever the site); free air by `SiteAir::free_air_from_reference` (dry ideal gas).
- [`Basis::Line`]: m³/s of actual volume at line pressure and temperature; free air by the ideal gas
  relation Q_free = Q_line (p_line,abs / p_atm) (T_inlet / T_line) (Boyle's and Charles's laws for a
  fixed mass of dry air, as in ISO 1217 annex C's corrections to inlet conditions).

Readings stored before this form existed hold SI with the site of their import already applied; the
migration records that affine step (`applied_scale`, `applied_offset`), so they read exactly as
before until the site changes and then follow it like new readings.
*/

use serde::{Deserialize, Serialize};

use super::units::{ReferenceConditions, SiteAir, Temperature};

/// The pressure a line-condition flow meter sees: fixed, gauge or absolute (Pa).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum LinePressure {
    GaugePa(f64),
    AbsolutePa(f64),
}

/// The basis a channel was logged on (module doc).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(tag = "basis", rename_all = "snake_case")]
pub enum Basis {
    Site,
    FreeAir,
    Gauge,
    Reference { reference: ReferenceConditions },
    Line { pressure: LinePressure, temperature_k: f64 },
}

impl Basis {
    /// The affine step stored value → analysis SI with `site`: `si = stored × scale + offset`.
    pub fn affine(&self, site: &SiteAir) -> (f64, f64) {
        match *self {
            Self::Site | Self::FreeAir => (1.0, 0.0),
            Self::Gauge => (1.0, site.atmosphere.0),
            Self::Reference { reference } => (site.free_air_from_reference(1.0, reference), 0.0),
            Self::Line { pressure, temperature_k } => {
                (line_to_free_air(1.0, pressure, temperature_k, site), 0.0)
            }
        }
    }

    /// Whether the site's air changes what this basis reads as.
    pub fn follows_site(&self) -> bool {
        !matches!(self, Self::Site | Self::FreeAir)
    }
}

/// Free air from an actual volume flow at line conditions (module doc), m³/s.
pub fn line_to_free_air(q_line: f64, pressure: LinePressure, temperature_k: f64, site: &SiteAir) -> f64 {
    let p_abs = match pressure {
        LinePressure::GaugePa(g) => g + site.atmosphere.0,
        LinePressure::AbsolutePa(a) => a,
    };
    q_line * (p_abs / site.atmosphere.0) * (site.inlet_temperature.0 / temperature_k)
}

/// Normal volume (at `r`) from an actual volume at an absolute line pressure and temperature: the
/// same ideal-gas relation with the reference in place of the inlet, m³/s.
pub fn line_to_reference(q_line: f64, p_line_abs_pa: f64, temperature_k: f64, r: ReferenceConditions) -> f64 {
    q_line
        * (p_line_abs_pa / (r.pressure_kpa_abs * 1000.0))
        * (Temperature::from_c(r.temperature_c).0 / temperature_k)
}

/// Power made from logged current: how its power factor was known, for the uncertainty of the
/// compressor's power (`analysis::uncertainty`) and the summary's warnings.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct CurrentPf {
    /// Relative standard uncertainty of the power factor used (a fraction).
    pub pf_rel: f64,
    /// One power factor for loaded and unloaded running (no unloaded one, no spot reading).
    pub single: bool,
}

/// How one upload's readings of one channel are stored: the basis, and the affine step already
/// applied at import (`1`, `0` for readings stored as measured; the import site's step for readings
/// stored before the basis was kept).
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct StoredForm {
    #[serde(flatten)]
    pub basis: Basis,
    #[serde(default = "one", skip_serializing_if = "is_one")]
    pub applied_scale: f64,
    #[serde(default, skip_serializing_if = "is_zero")]
    pub applied_offset: f64,
    /// Power made from current: how its power factor was known.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub current: Option<CurrentPf>,
}

fn one() -> f64 {
    1.0
}
fn is_one(x: &f64) -> bool {
    *x == 1.0
}
fn is_zero(x: &f64) -> bool {
    *x == 0.0
}

impl StoredForm {
    /// Readings stored as measured.
    pub fn measured(basis: Basis) -> Self {
        Self { basis, applied_scale: 1.0, applied_offset: 0.0, current: None }
    }

    /// Readings stored with `site` already applied (written before the basis was kept).
    pub fn applied(basis: Basis, site: &SiteAir) -> Self {
        let (applied_scale, applied_offset) = basis.affine(site);
        Self { basis, applied_scale, applied_offset, current: None }
    }

    /// The affine step stored value → analysis SI with the site as it is now. Exactly `(1, 0)` when
    /// the readings were stored with this very step, so they read bit for bit as stored.
    pub fn to_site(&self, site: &SiteAir) -> (f64, f64) {
        let (a1, b1) = self.basis.affine(site);
        let (a0, b0) = (self.applied_scale, self.applied_offset);
        if a1 == a0 && b1 == b0 {
            return (1.0, 0.0);
        }
        let scale = a1 / a0;
        (scale, b1 - b0 * scale)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::core::air::atmosphere_from_altitude;

    fn site_at(altitude_m: f64) -> SiteAir {
        SiteAir {
            atmosphere: atmosphere_from_altitude(altitude_m),
            inlet_temperature: Temperature::from_c(20.0),
        }
    }

    #[test]
    fn a_site_edit_from_sea_level_to_1000_m_scales_normal_flow_by_the_two_atmospheres() {
        // ISO 2533 standard atmosphere: 101.325 kPa at 0 m, 89.875 kPa at 1000 m.
        let (sea, high) = (SiteAir::new(101.325, 20.0), SiteAir::new(89.875, 20.0));
        let normal =
            StoredForm::measured(Basis::Reference { reference: ReferenceConditions::NORMAL_DIN_1343 });
        let (a0, b0) = normal.to_site(&sea);
        let (a1, b1) = normal.to_site(&high);
        // Free air at a thinner atmosphere is more volume for the same mass: ratio p0 / p1.
        assert!((a1 / a0 - 101.325 / 89.875).abs() < 1e-12, "{}", a1 / a0);
        assert_eq!((b0, b1), (0.0, 0.0));
        // The atmosphere the site form derives from the altitude (ASHRAE's fit to ISO 2533) gives
        // the same ratio within the table's rounding (0.0005 kPa in 89.875, 6e-6).
        let (z0, _) = normal.to_site(&site_at(0.0));
        let (z1, _) = normal.to_site(&site_at(1000.0));
        assert!((z1 / z0 - 101.325 / 89.875).abs() < 1e-5, "{}", z1 / z0);
        // A gauge reading keeps its gauge value: absolute moves with the atmosphere, gauge does not.
        let gauge = StoredForm::measured(Basis::Gauge);
        let logged_pa_g = 6.8e5;
        for site in [sea, high] {
            let (k, o) = gauge.to_site(&site);
            let abs = logged_pa_g * k + o;
            assert_eq!(abs - site.atmosphere.0, logged_pa_g);
        }
        assert_eq!(gauge.to_site(&high).1, 89_875.0);
    }

    #[test]
    fn readings_stored_with_the_import_site_read_unchanged_until_the_site_moves() {
        let basis = Basis::Reference { reference: ReferenceConditions::NORMAL_DIN_1343 };
        let then = site_at(0.0);
        let old = StoredForm::applied(basis, &then);
        assert_eq!(old.to_site(&then), (1.0, 0.0));
        // Moved to 1000 m, the old readings follow exactly as the new ones do.
        let now = site_at(1000.0);
        let stored_free_air = 0.2 * old.applied_scale;
        let (a, b) = old.to_site(&now);
        let new = StoredForm::measured(basis).to_site(&now);
        assert!((stored_free_air * a + b - 0.2 * new.0).abs() < 1e-15);
        let gauge = StoredForm::applied(Basis::Gauge, &then);
        let (a, b) = gauge.to_site(&now);
        assert!(((6e5 + 101_325.0) * a + b - (6e5 + now.atmosphere.0)).abs() < 1e-6);
    }

    #[test]
    fn line_flow_to_free_air_by_the_ideal_gas_relation_worked_by_hand() {
        // 1 m³/min actual at 7 bar(g), 30 °C, at a sea-level site with 20 °C inlet air.
        // Step 1: p_line,abs = 700 kPa + 101.325 kPa = 801.325 kPa.
        // Step 2: p ratio = 801.325 / 101.325 = 7.908463.
        // Step 3: T ratio = 293.15 K / 303.15 K = 0.967013.
        // Step 4: Q_free = 1 × 7.908463 × 0.967013 = 7.647587 m³/min.
        let site = site_at(0.0);
        let q = line_to_free_air(1.0, LinePressure::GaugePa(7e5), Temperature::from_c(30.0).0, &site);
        assert!((q - 7.647_587).abs() < 1e-5, "{q}");
        let b =
            Basis::Line { pressure: LinePressure::GaugePa(7e5), temperature_k: Temperature::from_c(30.0).0 };
        assert_eq!(b.affine(&site).0, q);
        // At 1000 m (ISO 2533: 89.875 kPa) the same gauge reading is less absolute pressure but
        // the inlet air is thinner still: 789.875 / 89.875 = 8.788595; × 0.967013 = 8.498686.
        let q1000 = line_to_free_air(1.0, LinePressure::GaugePa(7e5), 303.15, &SiteAir::new(89.875, 20.0));
        assert!((q1000 - 8.498_686).abs() < 1e-5, "{q1000}");
    }
}
