/*!
Leak estimates: the field tests of the US DOE sourcebook ("Improving Compressed Air System
Performance: A Sourcebook for Industry", leaks fact sheet), the flow through an
orifice, and the fit of a pressure decay found in the logs.

The physics that ties them together: a leak is a small orifice, and at shop pressures its flow is
choked, so its mass flow (and its free-air flow) is proportional to the absolute pressure upstream.
That is why a decay with every compressor off is an exponential in time, and why a bleed-down's
mean flow is scaled to the operating pressure by p_operating,abs / p_log-mean,abs (the log-mean of
the start and end pressures, [`log_mean_pressure`]) rather than by the DOE's fixed 1.25 or the
arithmetic mean. The assumptions: the stored air keeps one temperature (the inlet's, or the
`air_temperature_c` given, [`stored_air_factor`]) through the test (isothermal: slow tests; a fast
one is flagged by [`non_isothermal_overstatement`], its overstatement never above the fall's
adiabatic limit, [`adiabatic_overstatement`], so the isothermal reading is an upper bound), and the leaks stay choked (upstream above about
1.9 times the atmosphere, i.e. above about 0.9 bar(g) at sea level).

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
    /// Mean leak flow over the test, V (p1 - p2) / (p_atm t) × T_inlet / T_air (free air).
    pub mean_leak_flow: FreeAirFlow,
    /// The leak flow at the operating pressure: the mean × p_operating,abs / p_log-mean,abs.
    pub leak_flow_at_operating_pressure: FreeAirFlow,
    /// The DOE formula as printed, V (p1 - p2) / (p_atm t) × 1.25, beside the physical scaling for
    /// comparison (no temperature correction).
    pub doe_rule_of_thumb_flow: FreeAirFlow,
    /// Log-mean absolute pressure of the test, (p1 - p2) / ln(p1 / p2).
    pub log_mean_pressure: PressureAbs,
    /// T_inlet / T_air: the stored air's mass per volume relative to free air at the inlet (1 when
    /// the stored air's temperature is not given).
    pub temperature_factor: f64,
    /// The estimate of how far the test was from isothermal ([`non_isothermal_overstatement`]).
    pub isothermal: IsothermalCheck,
}

/// Log-mean absolute pressure of a decay from `p1` to `p2` (both absolute, p1 > p2 > 0):
/// (p1 - p2) / ln(p1 / p2). With choked leaks (Q = c p) the decay is exponential and the leak
/// coefficient is c = V ln(p1 / p2) / (p_atm t), so the leak flow at any pressure p is the mean flow
/// V (p1 - p2) / (p_atm t) × p / p_log-mean. The arithmetic mean is always above it (2.7 % for
/// 100 -> 50 psig, 7.9 % for 7 -> 2 bar(g) at sea level), so scaling by it understates the leak.
pub fn log_mean_pressure(p1: PressureAbs, p2: PressureAbs) -> PressureAbs {
    let r = p1.0 / p2.0;
    if (r - 1.0).abs() < 1e-9 {
        return PressureAbs(0.5 * (p1.0 + p2.0));
    }
    PressureAbs((p1.0 - p2.0) / r.ln())
}

/// T_inlet / T_air: stored air warmer than the inlet holds less mass per volume (ideal gas, m = pV /
/// (R T)), so the free air that leaked while the pressure fell by dp is V dp / p_atm × T_inlet / T_air.
/// `None` (not measured): the stored air is taken at the inlet temperature, factor 1.
pub fn stored_air_factor(air_temperature: Option<Temperature>, site: &SiteAir) -> f64 {
    air_temperature.map_or(1.0, |t| site.inlet_temperature.0 / t.0)
}

/// Heat-transfer coefficient between the stored air and the vessel's wall, W/(m² K): natural
/// convection of a gas in a closed vessel, of the order of a few W/(m² K) (textbook order of
/// magnitude, from memory). A low value: it makes the thermal time constant long, so the warning
/// errs on the side of warning.
pub const VESSEL_HEAT_TRANSFER_W_M2_K: f64 = 5.0;
/// Overstatement of the leak flow above which a bleed-down is flagged as too fast to be near
/// isothermal (our choice: the size of the test's other uncertainties).
pub const ISOTHERMAL_WARNING_FRACTION: f64 = 0.05;

/// How far a bleed-down was from isothermal.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IsothermalCheck {
    /// Thermal time constant of the stored air, m c_p / (h A), s.
    pub thermal_time_constant_s: f64,
    /// Estimated overstatement of the leak flow, a fraction (0.05 = 5 %): the first-order rule,
    /// never above `adiabatic_limit`.
    pub overstatement: f64,
    /// The most this fall can overstate ([`adiabatic_overstatement`]).
    pub adiabatic_limit: f64,
    /// The overstatement is above [`ISOTHERMAL_WARNING_FRACTION`].
    pub too_fast: bool,
}

impl IsothermalCheck {
    /// The first-order rule reached the adiabatic limit: the fall was about as fast as the air
    /// could cool, and the overstatement is that limit.
    pub fn at_adiabatic_limit(&self) -> bool {
        self.overstatement >= self.adiabatic_limit * (1.0 - 1e-12)
    }
}

/// The most a bleed-down from `p_start` to `p_end` (absolute) can overstate the leak: the stored
/// air gains no heat from the walls, so what stays behind expands isentropically (ideal gas,
/// p / rho^k constant, k = 1.4: any thermodynamics text; checked against CoolProp's real air in
/// `tests/reference`). The mass left is m1 (p2 / p1)^(1/k), while the isothermal reading takes it as
/// m1 p2 / p1, so the reading is (1 - r) / (1 - r^(1/k)) times the mass that left, r = p2 / p1:
/// the overstatement is that less 1. It tends to k - 1 = 40 % as the fall vanishes and is smaller
/// for a wider one (36.7 % for 105 -> 85 psig, 30 % for 100 -> 50 psig at sea level). Any heat the
/// walls give brings the truth between the two readings, so the isothermal result is an upper bound
/// and the reading corrected by this limit a lower one.
pub fn adiabatic_overstatement(p_start: PressureAbs, p_end: PressureAbs) -> f64 {
    let r = p_end.0 / p_start.0;
    if !(r > 0.0 && r < 1.0 - 1e-9) {
        return K_AIR - 1.0;
    }
    (1.0 - r) / (1.0 - r.powf(1.0 / K_AIR)) - 1.0
}

/// The rule for a bleed-down too fast to be near isothermal (our first-order model, stated on the
/// page). Air that flows out expands, and the air left behind cools unless the wall warms it; the
/// wall does so with the thermal time constant tau_th = m c_p / (h A). After a start-up transient the
/// air settles at a deficit dT / T = (k - 1) / k × tau_th / tau (tau the decay's time constant), so the
/// pressure falls by that share more than the mass does: the leak read from the pressure is
/// overstated by about (k - 1) / k × tau_th / t. The rule holds for t well above tau_th; a faster
/// fall is capped at the fall's adiabatic limit ([`adiabatic_overstatement`]: no heat from the wall
/// at all), which it can never pass. tau_th is estimated for the whole volume as one receiver, a
/// cylinder twice as long as wide, with m at the start pressure and h =
/// [`VESSEL_HEAT_TRANSFER_W_M2_K`]; pipework exchanges heat faster, so this is an upper estimate.
/// Flagged when the overstatement exceeds [`ISOTHERMAL_WARNING_FRACTION`]: for 3 m³ at 7 bar(g)
/// (tau_th about 8 min) a test under about 45 min.
pub fn non_isothermal_overstatement(
    volume: Volume,
    p_start: PressureAbs,
    p_end: PressureAbs,
    duration_s: f64,
    air_temperature: Temperature,
) -> IsothermalCheck {
    // Cylinder with L = 2 D: V = pi D^3 / 2, A = pi D L + 2 pi D^2 / 4 = 2.5 pi D^2.
    let d = (2.0 * volume.0 / std::f64::consts::PI).cbrt();
    let area = 2.5 * std::f64::consts::PI * d * d;
    let mass = p_start.0 * volume.0 / (R_AIR * air_temperature.0);
    let cp = K_AIR / (K_AIR - 1.0) * R_AIR;
    let tau_th = mass * cp / (VESSEL_HEAT_TRANSFER_W_M2_K * area);
    let limit = adiabatic_overstatement(p_start, p_end);
    let overstatement = ((K_AIR - 1.0) / K_AIR * tau_th / duration_s).min(limit);
    IsothermalCheck {
        thermal_time_constant_s: tau_th,
        overstatement,
        adiabatic_limit: limit,
        too_fast: overstatement > ISOTHERMAL_WARNING_FRACTION,
    }
}

/// The longest bleed-down the advice asks of a technician, s (our judgement: what a stop of
/// production and a held system usually allow).
pub const BLEED_DOWN_MAX_ADVISED_S: f64 = 15.0 * 60.0;
/// The advised fall ends at this share of the start's gauge pressure: the DOE sourcebook's test
/// times the fall to about half the operating pressure (leaks fact sheet; from memory).
pub const BLEED_DOWN_END_SHARE_OF_START_GAUGE: f64 = 0.5;
/// Absolute pressure over the atmosphere above which a leak stays choked, ((k + 1)/2)^(k/(k-1)) =
/// 1.893 for k = 1.4 (ideal-gas critical pressure ratio, any gas-dynamics text).
pub const CHOKED_PRESSURE_RATIO: f64 = 1.893;

/// Why the advised longer fall ends where it does.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FallLimit {
    /// Long enough for the overstatement to fall to [`ISOTHERMAL_WARNING_FRACTION`].
    NearIsothermal,
    /// The pressure reaches half the start's gauge pressure (or the choked limit) first.
    EndPressure,
    /// [`BLEED_DOWN_MAX_ADVISED_S`] comes first.
    MaxDuration,
}

/// A longer bleed-down a technician can time, at the leak rate the test showed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LongerFall {
    pub duration_s: f64,
    /// Where the pressure will be by then (choked leaks: an exponential fall).
    pub end_pressure: PressureAbs,
    /// The overstatement [`non_isothermal_overstatement`] estimates for that duration.
    pub overstatement: f64,
    pub limit: FallLimit,
}

/// The longer fall to advise after a bleed-down flagged as too fast (`None`: no longer fall that a
/// technician can time would bring the overstatement down by a tenth or more, so the result stands
/// as an upper bound). The test's leak rate sets the decay's time constant, tau = t / ln(p1 / p2) (choked
/// leaks, as in [`bleed_down`]); the fall is timed from the same start for the shortest of: the
/// time at which the overstatement falls to [`ISOTHERMAL_WARNING_FRACTION`], (k - 1)/k × tau_th /
/// 0.05; the time to reach half the start's gauge pressure ([`BLEED_DOWN_END_SHARE_OF_START_GAUGE`],
/// and never below the choked limit, [`CHOKED_PRESSURE_RATIO`]); and [`BLEED_DOWN_MAX_ADVISED_S`].
pub fn longer_fall(
    p_start: PressureAbs,
    p_end: PressureAbs,
    duration_s: f64,
    check: &IsothermalCheck,
    atmosphere: PressureAbs,
) -> Option<LongerFall> {
    let (p1, p2, atm) = (p_start.0, p_end.0, atmosphere.0);
    if !(p1 > p2 && p2 > 0.0 && duration_s > 0.0 && atm > 0.0) {
        return None;
    }
    let tau = duration_s / (p1 / p2).ln();
    let floor = (atm + BLEED_DOWN_END_SHARE_OF_START_GAUGE * (p1 - atm)).max(CHOKED_PRESSURE_RATIO * atm);
    let to_floor = if floor < p1 { tau * (p1 / floor).ln() } else { 0.0 };
    let needed = (K_AIR - 1.0) / K_AIR * check.thermal_time_constant_s / ISOTHERMAL_WARNING_FRACTION;
    let (t, limit) = [
        (needed, FallLimit::NearIsothermal),
        (to_floor, FallLimit::EndPressure),
        (BLEED_DOWN_MAX_ADVISED_S, FallLimit::MaxDuration),
    ]
    .into_iter()
    .min_by(|a, b| a.0.total_cmp(&b.0))?;
    let end_pressure = PressureAbs(p1 * (-t / tau).exp());
    let overstatement = ((K_AIR - 1.0) / K_AIR * check.thermal_time_constant_s / t)
        .min(adiabatic_overstatement(p_start, end_pressure));
    // Worth asking for only when it is longer and reads clearly closer to the truth (by a tenth of
    // the overstatement at least: our judgement, the rule's own precision).
    if !(t > duration_s && overstatement < 0.9 * check.overstatement) {
        return None;
    }
    Some(LongerFall { duration_s: t, end_pressure, overstatement, limit })
}

/// Bleed-down test (DOE sourcebook, leaks fact sheet): with the compressors off and no production,
/// the header falls from `p_start` to `p_end` in `duration_s`. Mean free-air leak flow
/// Q = V (p1 - p2) / (p_atm t) × T_inlet / T_air ([`stored_air_factor`]); at `operating` pressure it
/// is scaled by p_operating,abs / p_log-mean,abs ([`log_mean_pressure`]: choked leaks flow in
/// proportion to absolute pressure, so the decay is exponential). `air_temperature` is the stored
/// air's, `None` for the inlet's.
pub fn bleed_down(
    volume: Volume,
    p_start: PressureAbs,
    p_end: PressureAbs,
    duration_s: f64,
    operating: PressureAbs,
    air_temperature: Option<Temperature>,
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
    if let Some(t) = air_temperature {
        if !positive(t.0) {
            return Err(LeakError::new(
                "air_temperature_c",
                format!("temperature must be above absolute zero, got {} °C", t.c()),
            ));
        }
    }
    if p_end.0 >= p_start.0 || p_end.0 <= 0.0 {
        return Err(LeakError::new(
            "end_pressure_bar_g",
            format!(
                "end pressure {:.3} bar(g) must be below the start pressure {:.3} bar(g) and above zero absolute",
                p_end.bar_g(site.atmosphere),
                p_start.bar_g(site.atmosphere)
            ),
        ));
    }
    let k_t = stored_air_factor(air_temperature, site);
    let raw = volume.0 * (p_start.0 - p_end.0) / (site.atmosphere.0 * duration_s);
    let mean = raw * k_t;
    let p_lm = log_mean_pressure(p_start, p_end);
    let t_air = air_temperature.unwrap_or(site.inlet_temperature);
    Ok(BleedDownResult {
        mean_leak_flow: FreeAirFlow(mean),
        leak_flow_at_operating_pressure: scale_leak_flow(FreeAirFlow(mean), p_lm, operating),
        doe_rule_of_thumb_flow: FreeAirFlow(raw * DOE_BLEED_DOWN_FACTOR),
        log_mean_pressure: p_lm,
        temperature_factor: k_t,
        isothermal: non_isothermal_overstatement(volume, p_start, p_end, duration_s, t_air),
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
mod tests;
