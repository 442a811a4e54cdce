/*!
Leak estimates: the field tests of the US DOE sourcebook ("Improving Compressed Air System
Performance: A Sourcebook for Industry", leaks fact sheet), the flow through an
orifice, and the fit of a pressure decay found in the logs.

The physics that ties them together: a leak is a small orifice, and at shop pressures its flow is
choked, so its mass flow (and its free-air flow) is proportional to the absolute pressure upstream.
That is why a bleed-down's mean flow is scaled to the operating pressure by p_operating,abs /
p_mean,abs rather than by the DOE's fixed 1.25, and why a decay with every compressor off is an
exponential in time. The assumptions: the air in the system stays at the inlet temperature
(isothermal, slow tests), and the leaks stay choked (upstream above about 1.9 times the atmosphere,
i.e. above about 0.9 bar(g) at sea level).

Safety: a bleed-down or decay test means isolating compressors and holding a pressurised system; see
`core::safety::PRESSURE_TEST_CAUTIONS`.
*/

use std::fmt;

use super::thermo::{K_AIR, R_AIR};
use super::units::{FreeAirFlow, PressureAbs, SiteAir, Temperature, Volume};

/// The DOE sourcebook's rule-of-thumb factor from the mean bleed-down flow to the flow at operating
/// pressure (US DOE compressed-air sourcebook, leaks fact sheet).
pub const DOE_BLEED_DOWN_FACTOR: f64 = 1.25;

/// A leak-test input that cannot be used, naming the API field at fault.
#[derive(Debug, Clone, PartialEq)]
pub struct LeakError {
    /// The API.md field name (`volume_m3`, `start_pressure_bar_g`, `duration_s`, ...).
    pub field: &'static str,
    pub message: String,
}

impl LeakError {
    fn new(field: &'static str, message: String) -> Self {
        Self { field, message }
    }
}

impl fmt::Display for LeakError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}: {}", self.field, self.message)
    }
}

impl std::error::Error for LeakError {}

/// `!(x > 0)` also refuses NaN.
fn positive(x: f64) -> bool {
    x > 0.0 && x.is_finite()
}

fn check_absolute(p: PressureAbs, field: &'static str, site: &SiteAir) -> Result<(), LeakError> {
    if !(p.0 >= 0.0 && p.0.is_finite()) {
        return Err(LeakError::new(
            field,
            format!("pressure below zero absolute: {:.3} bar(g)", p.bar_g(site.atmosphere)),
        ));
    }
    Ok(())
}

/// A free-air leak flow measured at one absolute pressure, scaled to another: choked leaks flow in
/// proportion to absolute pressure (ideal-gas choked flow). For the idle-flow test (logged flow when nothing
/// but leaks draws air, corrected to production pressure) and for comparing tests made at different
/// pressures. `measured_at` must be positive.
pub fn scale_leak_flow(flow: FreeAirFlow, measured_at: PressureAbs, to: PressureAbs) -> FreeAirFlow {
    FreeAirFlow(flow.0 * to.0 / measured_at.0)
}

/// Result of a bleed-down test.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BleedDownResult {
    /// Mean leak flow over the test, V (p1 - p2) / (p_atm t).
    pub mean_leak_flow: FreeAirFlow,
    /// The mean scaled to the operating pressure by p_operating,abs / p_mean,abs.
    pub leak_flow_at_operating_pressure: FreeAirFlow,
    /// The mean times the DOE's 1.25, shown beside the physical scaling for comparison.
    pub doe_rule_of_thumb_flow: FreeAirFlow,
}

/// Bleed-down test (DOE sourcebook, leaks fact sheet): with the compressors off and no production,
/// the header falls from `p_start` to `p_end` in `duration_s`. Mean free-air leak flow
/// Q = V (p1 - p2) / (p_atm t); at `operating` pressure it is scaled by p_operating,abs /
/// p_mean,abs, p_mean the mean of start and end (choked leaks flow in proportion to absolute
/// pressure).
pub fn bleed_down(
    volume: Volume,
    p_start: PressureAbs,
    p_end: PressureAbs,
    duration_s: f64,
    operating: PressureAbs,
    site: &SiteAir,
) -> Result<BleedDownResult, LeakError> {
    if !positive(volume.0) {
        return Err(LeakError::new("volume_m3", format!("volume must be positive, got {}", volume.0)));
    }
    if !positive(duration_s) {
        return Err(LeakError::new("duration_s", format!("duration must be positive, got {duration_s}")));
    }
    check_absolute(p_start, "start_pressure_bar_g", site)?;
    check_absolute(p_end, "end_pressure_bar_g", site)?;
    check_absolute(operating, "operating_pressure_bar_g", site)?;
    if p_end.0 >= p_start.0 {
        return Err(LeakError::new(
            "end_pressure_bar_g",
            format!(
                "end pressure {:.3} bar(g) must be below the start pressure {:.3} bar(g)",
                p_end.bar_g(site.atmosphere),
                p_start.bar_g(site.atmosphere)
            ),
        ));
    }
    let mean = volume.0 * (p_start.0 - p_end.0) / (site.atmosphere.0 * duration_s);
    let p_mean = PressureAbs(0.5 * (p_start.0 + p_end.0));
    Ok(BleedDownResult {
        mean_leak_flow: FreeAirFlow(mean),
        leak_flow_at_operating_pressure: scale_leak_flow(FreeAirFlow(mean), p_mean, operating),
        doe_rule_of_thumb_flow: FreeAirFlow(mean * DOE_BLEED_DOWN_FACTOR),
    })
}

/// Load/unload timing test (DOE sourcebook, leaks fact sheet): with no production demand, the
/// compressor loads for `loaded_s` and unloads for `unloaded_s` on average. Leak fraction =
/// T / (T + t) of the compressor's rated free air delivery. Returns the fraction and the flow.
pub fn load_unload(
    loaded_s: f64,
    unloaded_s: f64,
    rated_flow: FreeAirFlow,
) -> Result<(f64, FreeAirFlow), LeakError> {
    if !(loaded_s >= 0.0 && loaded_s.is_finite()) {
        return Err(LeakError::new("loaded_s", format!("loaded time must not be negative, got {loaded_s}")));
    }
    if !(unloaded_s >= 0.0 && unloaded_s.is_finite()) {
        return Err(LeakError::new(
            "unloaded_s",
            format!("unloaded time must not be negative, got {unloaded_s}"),
        ));
    }
    if loaded_s + unloaded_s <= 0.0 {
        return Err(LeakError::new("loaded_s", "loaded and unloaded times are both zero".to_string()));
    }
    if !positive(rated_flow.0) {
        return Err(LeakError::new(
            "rated_flow_m3_min",
            format!("the compressor's rated flow must be positive, got {} m3/min", rated_flow.m3_min()),
        ));
    }
    let fraction = loaded_s / (loaded_s + unloaded_s);
    Ok((fraction, FreeAirFlow(rated_flow.0 * fraction)))
}

/// Pressure ratio p_back/p0 below which flow through a nozzle is choked:
/// (2/(k+1))^(k/(k-1)) = 0.5283 for air.
pub fn critical_pressure_ratio() -> f64 {
    (2.0 / (K_AIR + 1.0)).powf(K_AIR / (K_AIR - 1.0))
}

/// Mass flow of ideal-gas air through an orifice of `area_m2` from stagnation `p0`, `t0` into
/// `p_back`, kg/s. Choked (p_back/p0 at or below the critical ratio):
/// m = Cd A p0 sqrt(k/(R T0)) (2/(k+1))^((k+1)/(2(k-1))). Subsonic: the isentropic nozzle equation
/// m = Cd A p0 sqrt(2k/((k-1) R T0) (x^(2/k) - x^((k+1)/k))), x = p_back/p0. The two agree at the
/// critical ratio, so the flow is continuous in pressure.
pub fn orifice_mass_flow_kg_s(
    area_m2: f64,
    p0: PressureAbs,
    t0: Temperature,
    p_back: PressureAbs,
    cd: f64,
) -> f64 {
    if p0.0 <= p_back.0 {
        return 0.0;
    }
    let k = K_AIR;
    let x = p_back.0 / p0.0;
    if x <= critical_pressure_ratio() {
        let choke = (2.0 / (k + 1.0)).powf((k + 1.0) / (2.0 * (k - 1.0)));
        cd * area_m2 * p0.0 * (k / (R_AIR * t0.0)).sqrt() * choke
    } else {
        let psi = x.powf(2.0 / k) - x.powf((k + 1.0) / k);
        cd * area_m2 * p0.0 * (2.0 * k / ((k - 1.0) * R_AIR * t0.0) * psi).sqrt()
    }
}

/// Free-air leak flow through a round orifice of `diameter_m` (the orifice-leak calculator of
/// API.md): the mass flow of [`orifice_mass_flow_kg_s`] into the site
/// atmosphere, as free air m R T_in / p_atm. Cd 1 for the ideal nozzle of the published tables,
/// about 0.97 for a well-rounded entrance and 0.61-0.65 for a sharp edge (common practice, from memory).
pub fn orifice_leak(
    diameter_m: f64,
    upstream: PressureAbs,
    upstream_temperature: Temperature,
    discharge_coefficient: f64,
    site: &SiteAir,
) -> Result<FreeAirFlow, LeakError> {
    if !positive(diameter_m) {
        return Err(LeakError::new(
            "diameter_mm",
            format!("diameter must be positive, got {} mm", diameter_m * 1000.0),
        ));
    }
    if !(upstream.0 >= site.atmosphere.0 && upstream.0.is_finite()) {
        return Err(LeakError::new(
            "pressure_bar_g",
            format!(
                "pressure must not be below the atmosphere, got {:.3} bar(g)",
                upstream.bar_g(site.atmosphere)
            ),
        ));
    }
    if !(discharge_coefficient > 0.0 && discharge_coefficient <= 1.0) {
        return Err(LeakError::new(
            "discharge_coefficient",
            format!("discharge coefficient must be in (0, 1], got {discharge_coefficient}"),
        ));
    }
    if !positive(upstream_temperature.0) {
        return Err(LeakError::new(
            "inlet_temperature_c",
            format!("temperature must be above absolute zero, got {} °C", upstream_temperature.c()),
        ));
    }
    let area = std::f64::consts::PI / 4.0 * diameter_m * diameter_m;
    let m =
        orifice_mass_flow_kg_s(area, upstream, upstream_temperature, site.atmosphere, discharge_coefficient);
    Ok(FreeAirFlow(m * R_AIR * site.inlet_temperature.0 / site.atmosphere.0))
}

/// Least-squares fit of a pressure decay.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DecayFit {
    /// c x the first sample's pressure.
    pub leak_flow_at_start: FreeAirFlow,
    /// Free-air leak flow per Pa of absolute pressure: Q_FAD = c p_abs.
    pub leak_coefficient_m3_s_per_pa: f64,
    /// r² of the fit of ln p against t.
    pub fit_r2: f64,
    /// First and last samples as logged.
    pub start_pressure: PressureAbs,
    pub end_pressure: PressureAbs,
    pub duration_s: f64,
}

/// Fits a pressure decay logged while every compressor was off (a bleed-down that happened anyway,
/// ideal-gas choked flow). With choked leaks Q_FAD = c p_abs and V dp/dt = -p_atm Q_FAD, so
/// p = p0 exp(-c p_atm t / V): ln p is fitted against t by least squares and c = -slope V / p_atm.
/// `samples` are (seconds, absolute pressure) in increasing time; at least 3 are needed and the
/// pressure must fall.
pub fn fit_pressure_decay(
    samples: &[(f64, PressureAbs)],
    volume: Volume,
    site: &SiteAir,
) -> Result<DecayFit, LeakError> {
    if !positive(volume.0) {
        return Err(LeakError::new("volume_m3", format!("volume must be positive, got {}", volume.0)));
    }
    if samples.len() < 3 {
        return Err(LeakError::new(
            "start",
            format!("the window holds {} readings, at least 3 are needed", samples.len()),
        ));
    }
    for w in samples.windows(2) {
        if w[1].0.is_nan() || w[1].0 <= w[0].0 {
            return Err(LeakError::new("start", format!("readings out of time order at t = {} s", w[1].0)));
        }
    }
    if let Some((t, p)) = samples.iter().find(|(t, p)| !(p.0 > 0.0 && p.0.is_finite() && t.is_finite())) {
        return Err(LeakError::new(
            "start",
            format!("reading at t = {t} s is not a positive absolute pressure: {} Pa", p.0),
        ));
    }
    let n = samples.len() as f64;
    let mean_t = samples.iter().map(|s| s.0).sum::<f64>() / n;
    let mean_y = samples.iter().map(|s| s.1 .0.ln()).sum::<f64>() / n;
    let (mut sxy, mut sxx, mut syy) = (0.0, 0.0, 0.0);
    for (t, p) in samples {
        let dx = t - mean_t;
        let dy = p.0.ln() - mean_y;
        sxy += dx * dy;
        sxx += dx * dx;
        syy += dy * dy;
    }
    let slope = sxy / sxx;
    let (first, last) = (samples[0], samples[samples.len() - 1]);
    if slope.is_nan() || slope >= 0.0 || last.1 .0 >= first.1 .0 {
        return Err(LeakError::new(
            "end",
            format!(
                "pressure does not fall in the window ({:.3} to {:.3} bar(g))",
                first.1.bar_g(site.atmosphere),
                last.1.bar_g(site.atmosphere)
            ),
        ));
    }
    // r² = explained / total variation of ln p; syy > 0 since the pressure falls.
    let fit_r2 = (sxy * sxy) / (sxx * syy);
    let c = -slope * volume.0 / site.atmosphere.0;
    Ok(DecayFit {
        leak_flow_at_start: FreeAirFlow(c * first.1 .0),
        leak_coefficient_m3_s_per_pa: c,
        fit_r2,
        start_pressure: first.1,
        end_pressure: last.1,
        duration_s: last.0 - first.0,
    })
}

/// How a system's leak share compares with the DOE sourcebook's benchmarks.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum LeakShareBand {
    /// Below 10 % of demand: a well-maintained system.
    WellMaintained,
    /// 10-20 %: room to improve.
    Moderate,
    /// Above 20 %: a poorly maintained system (20-30 % is typical of those).
    PoorlyMaintained,
}

/// The band of a leak share (a fraction of demand, 0-1): < 0.10, 0.10-0.20, > 0.20.
pub fn leak_share_band(share: f64) -> LeakShareBand {
    if share < 0.10 {
        LeakShareBand::WellMaintained
    } else if share <= 0.20 {
        LeakShareBand::Moderate
    } else {
        LeakShareBand::PoorlyMaintained
    }
}

impl LeakShareBand {
    pub fn as_str(self) -> &'static str {
        match self {
            Self::WellMaintained => "well_maintained",
            Self::Moderate => "moderate",
            Self::PoorlyMaintained => "poorly_maintained",
        }
    }

    /// A sentence for reports (DOE sourcebook benchmarks).
    pub fn describe(self) -> &'static str {
        match self {
            Self::WellMaintained => {
                "leaks below 10 % of demand, as in a well-maintained system (DOE sourcebook)"
            }
            Self::Moderate => {
                "leaks of 10-20 % of demand: above the under-10 % of a well-maintained system, \
                 so a leak survey and repair programme pays (DOE sourcebook)"
            }
            Self::PoorlyMaintained => {
                "leaks above 20 % of demand, as in a poorly maintained system (typically 20-30 %, \
                 DOE sourcebook): repairing leaks is usually the first measure"
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    fn fixture() -> serde_json::Value {
        serde_json::from_str(include_str!("../../tests/reference/fixture.json")).unwrap()
    }

    /// A reference value from the fixture written by tests/reference/make_reference.py.
    fn reference(name: &str) -> f64 {
        fixture()["values"][name]["value"].as_f64().unwrap_or_else(|| panic!("fixture has no value {name}"))
    }

    fn input(name: &str, key: &str) -> f64 {
        fixture()["values"][name]["inputs"][key].as_f64().unwrap()
    }

    fn rel(a: f64, b: f64) -> f64 {
        ((a - b) / b).abs()
    }

    const INCH_M: f64 = 0.0254;

    /// The US table's site: free air at 14.7 psia and 20 °C.
    fn us_site() -> SiteAir {
        SiteAir {
            atmosphere: PressureAbs::from_psig(14.7, PressureAbs(0.0)),
            inlet_temperature: Temperature::from_c(20.0),
        }
    }

    #[test]
    fn bleed_down_matches_the_doe_worked_check() {
        // US DOE compressed-air sourcebook, leaks fact sheet (bleed-down formula): V = 5 ft³, 100 -> 50 psig in 60 min, at
        // 14.7 psia: 5 x 50 / (60 x 14.7) x 1.25 = 0.354 cfm.
        let site = us_site();
        let atm = site.atmosphere;
        let r = bleed_down(
            Volume::from_ft3(5.0),
            PressureAbs::from_psig(100.0, atm),
            PressureAbs::from_psig(50.0, atm),
            3600.0,
            PressureAbs::from_psig(100.0, atm),
            &site,
        )
        .unwrap();
        assert!((r.doe_rule_of_thumb_flow.cfm() - 0.354).abs() < 0.0005);
        // fixture: pint 0.25.3 evaluation of the DOE formula.
        assert!(rel(r.doe_rule_of_thumb_flow.cfm(), reference("leaks.doe_bleed_down_cfm")) < 1e-9);
        // Choked leak flow is proportional to absolute pressure: for 100 -> 50 psig the physical scaling is 1.28 (114.7 / 89.7 = 1.2787).
        let scale = r.leak_flow_at_operating_pressure.0 / r.mean_leak_flow.0;
        assert!((scale - 1.28).abs() < 0.005);
    }

    #[test]
    fn a_narrow_bleed_down_scales_by_only_1_05() {
        // Choked leak flow is proportional to absolute pressure: 100 -> 90 psig scales by 1.05 (114.7 / 109.7 = 1.0456), not 1.25.
        let site = us_site();
        let atm = site.atmosphere;
        let p100 = PressureAbs::from_psig(100.0, atm);
        let r = bleed_down(Volume(1.0), p100, PressureAbs::from_psig(90.0, atm), 60.0, p100, &site).unwrap();
        let scale = r.leak_flow_at_operating_pressure.0 / r.mean_leak_flow.0;
        assert!((scale - 1.05).abs() < 0.005);
    }

    #[test]
    fn idle_flow_scales_to_production_pressure_with_absolute_pressure() {
        // Choked leak flow is proportional to absolute pressure: correct idle flow to production pressure like the bleed-down. By hand:
        // 1.0 m³/min at 5 bar(g) (601.325 kPa) is 1.0 x 801.325 / 601.325 = 1.3326 at 7 bar(g).
        let atm = PressureAbs::from_kpa_abs(101.325);
        let q = scale_leak_flow(
            FreeAirFlow::from_m3_min(1.0),
            PressureAbs::from_bar_g(5.0, atm),
            PressureAbs::from_bar_g(7.0, atm),
        );
        assert!((q.m3_min() - 801.325 / 601.325).abs() < 1e-12);
    }

    #[test]
    fn si_bleed_down_matches_pint() {
        // API.md example: 3 m³, 7.0 -> 5.5 bar(g) in 95 s at 101.325 kPa.
        // fixture: pint 0.25.3, V dp / (p_atm t) = 2.805 m³/min.
        let name = "leaks.si_bleed_down_mean_m3_min";
        let site = SiteAir::new(input(name, "atm_kpa_abs"), 20.0);
        let atm = site.atmosphere;
        let start = PressureAbs::from_bar_g(input(name, "start_bar_g"), atm);
        let r = bleed_down(
            Volume(input(name, "volume_m3")),
            start,
            PressureAbs::from_bar_g(input(name, "end_bar_g"), atm),
            input(name, "duration_s"),
            start,
            &site,
        )
        .unwrap();
        assert!(rel(r.mean_leak_flow.m3_min(), reference(name)) < 1e-9);
        // By hand: scaled to 7 bar(g) by 801.325 / 726.325.
        let expected = reference(name) * 801.325 / 726.325;
        assert!(rel(r.leak_flow_at_operating_pressure.m3_min(), expected) < 1e-9);
    }

    #[test]
    fn bleed_down_refuses_bad_inputs_by_field() {
        let site = SiteAir::new(101.325, 20.0);
        let atm = site.atmosphere;
        let p7 = PressureAbs::from_bar_g(7.0, atm);
        let p5 = PressureAbs::from_bar_g(5.0, atm);
        let f = |v: f64, a: PressureAbs, b: PressureAbs, t: f64| {
            bleed_down(Volume(v), a, b, t, p7, &site).unwrap_err().field
        };
        assert_eq!(f(3.0, p5, p7, 60.0), "end_pressure_bar_g");
        assert_eq!(f(3.0, p7, p7, 60.0), "end_pressure_bar_g");
        assert_eq!(f(3.0, p7, p5, 0.0), "duration_s");
        assert_eq!(f(0.0, p7, p5, 60.0), "volume_m3");
        assert_eq!(f(3.0, PressureAbs(-1.0), p5, 60.0), "start_pressure_bar_g");
        assert_eq!(f(3.0, p7, PressureAbs(-1.0), 60.0), "end_pressure_bar_g");
    }

    #[test]
    fn load_unload_matches_the_doe_example() {
        // US DOE compressed-air sourcebook, leaks fact sheet: 7.5 min on-load in a 30 min cycle -> 25 % leakage.
        let rated = FreeAirFlow::from_m3_min(9.5);
        let (fraction, flow) = load_unload(7.5 * 60.0, 22.5 * 60.0, rated).unwrap();
        assert!((fraction - 0.25).abs() < 1e-12);
        assert!((flow.m3_min() - 2.375).abs() < 1e-12);
        // API.md example: 40 s loaded, 160 s unloaded -> 0.2.
        assert!((load_unload(40.0, 160.0, rated).unwrap().0 - 0.2).abs() < 1e-12);
        assert_eq!(load_unload(-1.0, 10.0, rated).unwrap_err().field, "loaded_s");
        assert_eq!(load_unload(10.0, f64::NAN, rated).unwrap_err().field, "unloaded_s");
        assert_eq!(load_unload(0.0, 0.0, rated).unwrap_err().field, "loaded_s");
    }

    #[test]
    fn orifice_flow_reproduces_the_published_table() {
        // The published "discharge of air through an orifice" table (as quoted in the US DOE
        // compressed-air sourcebook's leaks fact sheet, from memory),
        // coefficient 1.0, free air at 14.7 psia, reproduced with T0 = 20 °C: within 1 %.
        let site = us_site();
        let atm = site.atmosphere;
        let t0 = Temperature::from_c(20.0);
        let p100 = PressureAbs::from_psig(100.0, atm);
        for (d_in, cfm) in
            [(1.0 / 64.0, 0.406), (1.0 / 32.0, 1.625), (1.0 / 16.0, 6.502), (0.125, 26.01), (0.25, 104.0)]
        {
            let q = orifice_leak(d_in * INCH_M, p100, t0, 1.0, &site).unwrap();
            assert!(rel(q.cfm(), cfm) < 0.01, "{d_in} in: {} cfm", q.cfm());
        }
        // The same orifice table: at 70 psig a 1/16" hole gives 4.79 cfm.
        let p70 = PressureAbs::from_psig(70.0, atm);
        let q70 = orifice_leak(INCH_M / 16.0, p70, t0, 1.0, &site).unwrap();
        assert!(rel(q70.cfm(), 4.79) < 0.01, "{}", q70.cfm());
    }

    #[test]
    fn orifice_mass_flow_matches_fluids_api520() {
        // fixture: fluids 1.3.1 API520_A_g (Kd 1) inverted for the mass flow. Its critical branch
        // is the same ideal nozzle equation (agreement to 1e-4, its constants are given to 4
        // digits); its subcritical branch uses a rounded coefficient form (agreement to 0.5 %).
        for (name, tolerance) in [
            ("orifice.api520_choked_100psig_1_16in_kg_s", 1e-4),
            ("orifice.api520_choked_70psig_1_16in_kg_s", 1e-4),
            ("orifice.api520_choked_100psig_1_4in_kg_s", 1e-4),
            ("orifice.api520_subsonic_5psig_1_8in_kg_s", 5e-3),
        ] {
            let d = input(name, "diameter_m");
            let m = orifice_mass_flow_kg_s(
                PI / 4.0 * d * d,
                PressureAbs(input(name, "upstream_pa_abs")),
                Temperature(input(name, "t0_k")),
                PressureAbs(input(name, "back_pressure_pa_abs")),
                1.0,
            );
            assert!(rel(m, reference(name)) < tolerance, "{name}: {m} vs {}", reference(name));
        }
    }

    #[test]
    fn orifice_flow_is_continuous_at_the_critical_ratio() {
        // The choked and subsonic branches meet at x = 0.5283 (textbook gas dynamics).
        assert!((critical_pressure_ratio() - 0.528_28).abs() < 1e-5);
        let t0 = Temperature(293.15);
        let back = PressureAbs(100_000.0);
        let p_crit = back.0 / critical_pressure_ratio();
        let below = orifice_mass_flow_kg_s(1e-6, PressureAbs(p_crit * (1.0 - 1e-9)), t0, back, 1.0);
        let above = orifice_mass_flow_kg_s(1e-6, PressureAbs(p_crit * (1.0 + 1e-9)), t0, back, 1.0);
        assert!(rel(below, above) < 1e-6);
        // No flow without a pressure difference, and subsonic flow rises with pressure.
        assert_eq!(orifice_mass_flow_kg_s(1e-6, back, t0, back, 1.0), 0.0);
        let m1 = orifice_mass_flow_kg_s(1e-6, PressureAbs(120_000.0), t0, back, 1.0);
        let m2 = orifice_mass_flow_kg_s(1e-6, PressureAbs(150_000.0), t0, back, 1.0);
        assert!(0.0 < m1 && m1 < m2);
    }

    #[test]
    fn orifice_flow_scales_with_the_discharge_coefficient_and_refuses_bad_inputs() {
        // API.md example: 1.6 mm at 6.9 bar(g), Cd 0.61, at 101.325 kPa and 20 °C.
        let site = SiteAir::new(101.325, 20.0);
        let p = PressureAbs::from_bar_g(6.9, site.atmosphere);
        let t0 = Temperature::from_c(20.0);
        let ideal = orifice_leak(1.6e-3, p, t0, 1.0, &site).unwrap();
        let sharp = orifice_leak(1.6e-3, p, t0, 0.61, &site).unwrap();
        assert!(rel(sharp.0, 0.61 * ideal.0) < 1e-12);
        // By hand (choked): 0.61 x 2.0106e-6 m² x 791 325 Pa x 4.0792e-3 x 0.57870 = 2.2911e-3
        // kg/s; x 287 x 293.15 / 101 325 = 1.9024e-3 m³/s = 0.1141 m³/min.
        assert!((sharp.m3_min() - 0.1141).abs() < 0.0005, "{}", sharp.m3_min());
        let err = |d: f64, p: PressureAbs, cd: f64| orifice_leak(d, p, t0, cd, &site).unwrap_err().field;
        assert_eq!(err(0.0, p, 0.61), "diameter_mm");
        assert_eq!(err(1e-3, PressureAbs(50_000.0), 0.61), "pressure_bar_g");
        assert_eq!(err(1e-3, p, 0.0), "discharge_coefficient");
        assert_eq!(err(1e-3, p, 1.2), "discharge_coefficient");
    }

    /// An exponential decay with leak coefficient `c`, as the model of [`fit_pressure_decay`]
    /// predicts it.
    fn synthetic_decay(c: f64, v: f64, site: &SiteAir, noise_pa: f64) -> Vec<(f64, PressureAbs)> {
        let p0 = PressureAbs::from_bar_g(7.0, site.atmosphere).0;
        // A fixed linear congruential sequence: deterministic "noise" in [-1, 1).
        let mut state: u64 = 0x2545_f491_4f6c_dd1d;
        (0..=120)
            .map(|i| {
                state = state.wrapping_mul(6_364_136_223_846_793_005).wrapping_add(1_442_695_040_888_963_407);
                let u = (state >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0;
                let t = f64::from(i) * 5.0;
                (t, PressureAbs(p0 * (-c * site.atmosphere.0 * t / v).exp() + noise_pa * u))
            })
            .collect()
    }

    #[test]
    fn decay_fit_recovers_a_known_leak_coefficient() {
        let site = SiteAir::new(101.325, 20.0);
        let v = 3.0;
        // c chosen so that 1 m³/min free air leaks at 7 bar(g).
        let p0 = PressureAbs::from_bar_g(7.0, site.atmosphere);
        let c = (1.0 / 60.0) / p0.0;
        let fit = fit_pressure_decay(&synthetic_decay(c, v, &site, 0.0), Volume(v), &site).unwrap();
        assert!(rel(fit.leak_coefficient_m3_s_per_pa, c) < 1e-6);
        assert!((fit.leak_flow_at_start.m3_min() - 1.0).abs() < 1e-6);
        assert!((fit.fit_r2 - 1.0).abs() < 1e-9);
        assert!((fit.duration_s - 600.0).abs() < 1e-12);
        assert!(fit.end_pressure.0 < fit.start_pressure.0);
    }

    #[test]
    fn decay_fit_tolerates_logger_noise() {
        // ±2 kPa of noise (a 0.25 % class 10 bar transmitter) on the same decay: c within 1 %.
        let site = SiteAir::new(101.325, 20.0);
        let v = 3.0;
        let c = (1.0 / 60.0) / PressureAbs::from_bar_g(7.0, site.atmosphere).0;
        let fit = fit_pressure_decay(&synthetic_decay(c, v, &site, 2_000.0), Volume(v), &site).unwrap();
        assert!(rel(fit.leak_coefficient_m3_s_per_pa, c) < 0.01, "{}", fit.leak_coefficient_m3_s_per_pa / c);
        assert!(fit.fit_r2 > 0.99 && fit.fit_r2 < 1.0);
    }

    #[test]
    fn decay_fit_refuses_short_rising_or_unordered_windows() {
        let site = SiteAir::new(101.325, 20.0);
        let p = |bar_g: f64| PressureAbs::from_bar_g(bar_g, site.atmosphere);
        let v = Volume(3.0);
        let two = [(0.0, p(7.0)), (10.0, p(6.9))];
        assert_eq!(fit_pressure_decay(&two, v, &site).unwrap_err().field, "start");
        let rising = [(0.0, p(6.0)), (10.0, p(6.5)), (20.0, p(7.0))];
        assert_eq!(fit_pressure_decay(&rising, v, &site).unwrap_err().field, "end");
        let unordered = [(0.0, p(7.0)), (20.0, p(6.9)), (10.0, p(6.8))];
        assert_eq!(fit_pressure_decay(&unordered, v, &site).unwrap_err().field, "start");
        let falling = [(0.0, p(7.0)), (10.0, p(6.9)), (20.0, p(6.8))];
        assert_eq!(fit_pressure_decay(&falling, Volume(0.0), &site).unwrap_err().field, "volume_m3");
    }

    #[test]
    fn leak_share_bands_follow_the_doe_benchmarks() {
        // US DOE compressed-air sourcebook, leaks fact sheet: well maintained < 10 %, poorly maintained 20-30 %.
        assert_eq!(leak_share_band(0.05), LeakShareBand::WellMaintained);
        assert_eq!(leak_share_band(0.10), LeakShareBand::Moderate);
        assert_eq!(leak_share_band(0.20), LeakShareBand::Moderate);
        assert_eq!(leak_share_band(0.25), LeakShareBand::PoorlyMaintained);
        assert!(LeakShareBand::WellMaintained.describe().contains("10 %"));
        assert!(LeakShareBand::PoorlyMaintained.describe().contains("20-30 %"));
    }
}
