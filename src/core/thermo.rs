/*!
Compression of air: the ideal limits a plant is measured against, and the staged-compression
calculator of API.md `POST /api/v1/calc/compression`.

Air is an ideal gas here with R = 287.0 J/(kg K) (a common rounded value for dry air; the molar mass it
implies is M = 8.314462618 / 287 = 0.028970 kg/mol) and k = cp/cv = 1.4, so cp = k R / (k - 1) =
1004.5 J/(kg K). Pressure ratios r = p2/p1 are always of absolute pressures.

- isothermal work w = R T1 ln r, the limit no compressor reaches and the yardstick of **isothermal
  efficiency** (ideal isothermal power / measured input);
- isentropic work w = k/(k-1) R T1 (r^((k-1)/k) - 1), and polytropic work with the exponent n in
  place of k;
- stage discharge temperature T2 = T1 (1 + (r^((k-1)/k) - 1)/eta_s).

The ideal-gas isothermal work differs from real air (CoolProp) by about 0.1 % at 7 bar(g) and room
temperature, far inside the accuracy of any field measurement.
*/

use std::fmt;

use super::units::{FreeAirFlow, Power, PressureAbs, Temperature};

/// Specific gas constant of dry air, J/(kg K), the common rounded value.
pub const R_AIR: f64 = 287.0;
/// Ratio of specific heats of air.
pub const K_AIR: f64 = 1.4;
/// Specific heat at constant pressure of ideal-gas air, cp = k R / (k - 1), J/(kg K).
pub const CP_AIR: f64 = K_AIR * R_AIR / (K_AIR - 1.0);
/// Most stages the calculator accepts; real machines have at most four or five.
pub const MAX_STAGES: u32 = 6;

/// Ideal isothermal power to compress a flow of free air from `p_in` to `p_out`: P = p1 V1
/// ln(p2/p1), V1 the free-air volume flow at the inlet conditions (p1 = `p_in`).
pub fn isothermal_power(flow: FreeAirFlow, p_in: PressureAbs, p_out: PressureAbs) -> Power {
    Power(p_in.0 * flow.0 * (p_out.0 / p_in.0).ln())
}

/// Isothermal efficiency: ideal isothermal power / measured input power. NaN when the input is not
/// positive (nothing was measured), so that a caller cannot mistake it for a real figure.
pub fn isothermal_efficiency(isothermal: Power, input: Power) -> f64 {
    if input.0 > 0.0 {
        isothermal.0 / input.0
    } else {
        f64::NAN
    }
}

/// Reversible isothermal work per kg of air, J/kg: R T1 ln r.
pub fn isothermal_work_per_kg(t1: Temperature, r: f64) -> f64 {
    R_AIR * t1.0 * r.ln()
}

/// Isentropic (reversible adiabatic) work per kg of air, J/kg: k/(k-1) R T1 (r^((k-1)/k) - 1).
pub fn isentropic_work_per_kg(t1: Temperature, r: f64) -> f64 {
    polytropic_work_per_kg(K_AIR, t1, r)
}

/// Polytropic work per kg of air with exponent n, J/kg: n/(n-1) R T1 (r^((n-1)/n) - 1). With n = k
/// it is the isentropic work; n -> 1 tends to the isothermal work.
pub fn polytropic_work_per_kg(n: f64, t1: Temperature, r: f64) -> f64 {
    if (n - 1.0).abs() < 1e-12 {
        return isothermal_work_per_kg(t1, r);
    }
    n / (n - 1.0) * R_AIR * t1.0 * (r.powf((n - 1.0) / n) - 1.0)
}

/// Discharge temperature of an adiabatic stage with isentropic efficiency `eta_s`:
/// T2 = T1 (1 + (r^((k-1)/k) - 1)/eta_s).
pub fn isentropic_discharge_temperature(t1: Temperature, r: f64, eta_s: f64) -> Temperature {
    Temperature(t1.0 * (1.0 + (r.powf((K_AIR - 1.0) / K_AIR) - 1.0) / eta_s))
}

/// Isentropic work per kg of `stages` stages sharing the ratio `r` equally, each starting at `t1`
/// (intercooled back to the inlet temperature): N k/(k-1) R T1 (r^((k-1)/(k N)) - 1).
pub fn staged_isentropic_work_per_kg(t1: Temperature, r: f64, stages: u32) -> f64 {
    let n = f64::from(stages.max(1));
    n * isentropic_work_per_kg(t1, r.powf(1.0 / n))
}

/// A data sheet's full-load package power, stated at `rated` discharge pressure, corrected to
/// `at`: multiplied by the ratio of the isentropic (adiabatic) compression work per kg at the two
/// pressures, from the same inlet (the site's atmosphere `p_in` and inlet temperature `t_in`; with
/// equal-ratio intercooled stages when `stages` > 1).
///
/// The package's losses are taken to scale with its ideal work and its free air delivery to stay
/// the same at the two pressures: true of positive-displacement machines near their rating
/// (common practice), only approximate for centrifugal ones, whose delivery changes with pressure.
/// Near 7 bar(g) the work changes about 7 % per bar, the "1 % per 2 psi" of the US DOE's *Improving
/// Compressed Air System Performance: A Sourcebook for Industry*.
pub fn power_at_pressure(
    rated: Power,
    rated_at: PressureAbs,
    at: PressureAbs,
    p_in: PressureAbs,
    t_in: Temperature,
    stages: u32,
) -> Power {
    let w = |p: PressureAbs| staged_isentropic_work_per_kg(t_in, p.0 / p_in.0, stages);
    let (w_rated, w_at) = (w(rated_at), w(at));
    if !(w_rated > 0.0 && w_at.is_finite()) {
        return Power(f64::NAN);
    }
    Power(rated.0 * w_at / w_rated)
}

/// The compression calculator's input (API.md `POST /api/v1/calc/compression`).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CompressionInput {
    /// Volume flow at the inlet pressure and temperature below.
    pub flow: FreeAirFlow,
    pub inlet_pressure: PressureAbs,
    pub inlet_temperature: Temperature,
    pub discharge_pressure: PressureAbs,
    pub stages: u32,
    pub isentropic_efficiency: f64,
    /// Temperature the intercoolers and the aftercooler bring the air to.
    pub intercooled_to: Temperature,
}

/// One stage and the cooler after it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StageResult {
    pub pressure_ratio: f64,
    pub inlet_temperature: Temperature,
    pub discharge_temperature: Temperature,
    /// Heat the cooler after this stage removes (the aftercooler for the last stage).
    pub cooler_heat: Power,
    pub shaft_power: Power,
}

/// What the compression calculator returns.
#[derive(Debug, Clone, PartialEq)]
pub struct CompressionResult {
    pub mass_flow_kg_s: f64,
    pub isothermal_power: Power,
    /// Power of the same staging at isentropic efficiency 1.
    pub isentropic_power: Power,
    /// Isentropic power / isentropic efficiency.
    pub shaft_power: Power,
    pub stages: Vec<StageResult>,
}

/// A compression input that cannot be computed, naming the API field at fault.
#[derive(Debug, Clone, PartialEq)]
pub struct ThermoError {
    /// The API.md field name (`flow_m3_min`, `discharge_pressure_bar_g`, ...).
    pub field: &'static str,
    pub message: String,
}

impl ThermoError {
    fn new(field: &'static str, message: String) -> Self {
        Self { field, message }
    }
}

impl fmt::Display for ThermoError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}: {}", self.field, self.message)
    }
}

impl std::error::Error for ThermoError {}

fn validate(input: &CompressionInput) -> Result<(), ThermoError> {
    // `!(x > 0.0)` rather than `x <= 0.0` so that NaN is refused too.
    if !(input.flow.0 > 0.0 && input.flow.0.is_finite()) {
        let q = input.flow.m3_min();
        return Err(ThermoError::new("flow_m3_min", format!("flow must be positive, got {q}")));
    }
    if !(input.inlet_pressure.0 > 0.0 && input.inlet_pressure.0.is_finite()) {
        return Err(ThermoError::new(
            "inlet_pressure_kpa_abs",
            format!("inlet pressure must be above zero absolute, got {} kPa", input.inlet_pressure.kpa_abs()),
        ));
    }
    if !(input.inlet_temperature.0 > 0.0 && input.inlet_temperature.0.is_finite()) {
        return Err(ThermoError::new(
            "inlet_temperature_c",
            format!("inlet temperature must be above absolute zero, got {} °C", input.inlet_temperature.c()),
        ));
    }
    if !(input.intercooled_to.0 > 0.0 && input.intercooled_to.0.is_finite()) {
        return Err(ThermoError::new(
            "intercooled_to_c",
            format!(
                "cooler outlet temperature must be above absolute zero, got {} °C",
                input.intercooled_to.c()
            ),
        ));
    }
    if !(input.discharge_pressure.0 > 0.0 && input.discharge_pressure.0.is_finite()) {
        return Err(ThermoError::new(
            "discharge_pressure_bar_g",
            format!(
                "discharge pressure must be above zero absolute, got {} kPa",
                input.discharge_pressure.kpa_abs()
            ),
        ));
    }
    let r = input.discharge_pressure.0 / input.inlet_pressure.0;
    if r.is_nan() || r <= 1.0 {
        return Err(ThermoError::new(
            "discharge_pressure_bar_g",
            format!("pressure ratio must be above 1, got {r:.4}: discharge not above inlet pressure"),
        ));
    }
    if input.stages == 0 || input.stages > MAX_STAGES {
        return Err(ThermoError::new(
            "stages",
            format!("stages must be 1 to {MAX_STAGES}, got {}", input.stages),
        ));
    }
    let eta = input.isentropic_efficiency;
    if !(eta > 0.0 && eta <= 1.0) {
        return Err(ThermoError::new(
            "isentropic_efficiency",
            format!("isentropic efficiency must be in (0, 1], got {eta}"),
        ));
    }
    Ok(())
}

/// Staged compression as API.md fixes it: the stages share the overall pressure ratio equally (the
/// optimum for equal inlet temperatures, textbook thermodynamics); every stage after the first starts at
/// `intercooled_to`, and the last cooler (the aftercooler) brings the air to `intercooled_to` too.
/// `isentropic_power` is that staging at efficiency 1, `shaft_power` = isentropic / eta, each
/// stage's discharge temperature follows from eta, and a cooler removes m cp (T_discharge -
/// T_intercooled).
///
/// A stage whose discharge would be colder than `intercooled_to` is refused: its "cooler" would
/// have to heat the air, and the next stage would not start at `intercooled_to` as the staging
/// assumes.
pub fn compress(input: &CompressionInput) -> Result<CompressionResult, ThermoError> {
    validate(input)?;
    let eta = input.isentropic_efficiency;
    let mass_flow_kg_s = input.inlet_pressure.0 * input.flow.0 / (R_AIR * input.inlet_temperature.0);
    let r_total = input.discharge_pressure.0 / input.inlet_pressure.0;
    let r_stage = r_total.powf(1.0 / f64::from(input.stages));

    let mut stages = Vec::with_capacity(input.stages as usize);
    let mut isentropic_w = 0.0;
    for i in 0..input.stages {
        let t_in = if i == 0 { input.inlet_temperature } else { input.intercooled_to };
        let ideal_w = mass_flow_kg_s * isentropic_work_per_kg(t_in, r_stage);
        let t_out = isentropic_discharge_temperature(t_in, r_stage, eta);
        if t_out.0 < input.intercooled_to.0 {
            return Err(ThermoError::new(
                "intercooled_to_c",
                format!(
                    "cooler outlet {:.1} °C is above the discharge of stage {} ({:.1} °C)",
                    input.intercooled_to.c(),
                    i + 1,
                    t_out.c()
                ),
            ));
        }
        isentropic_w += ideal_w;
        stages.push(StageResult {
            pressure_ratio: r_stage,
            inlet_temperature: t_in,
            discharge_temperature: t_out,
            cooler_heat: Power(mass_flow_kg_s * CP_AIR * (t_out.0 - input.intercooled_to.0)),
            shaft_power: Power(ideal_w / eta),
        });
    }
    Ok(CompressionResult {
        mass_flow_kg_s,
        isothermal_power: isothermal_power(input.flow, input.inlet_pressure, input.discharge_pressure),
        isentropic_power: Power(isentropic_w),
        shaft_power: Power(isentropic_w / eta),
        stages,
    })
}

#[cfg(test)]
mod tests {
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

    /// Molar mass implied by R = 287: fluids works per mole with the universal gas constant.
    const M_AIR_KG_MOL: f64 = 8.314_462_618 / R_AIR;

    const T1: Temperature = Temperature(293.15);
    // The reference case of the fluids 1.3.1 checks below: p1 = 101325 Pa, p2 = 790801.08 Pa.
    const R_11: f64 = 790_801.08 / 101_325.0;

    #[test]
    fn the_air_constants_are_those_of_the_field_notes() {
        // Ideal-gas air, R = 287, k = 1.4: cp = k R/(k-1) = 1004.5 by hand.
        assert!((CP_AIR - 1004.5).abs() < 1e-9);
        // fixture: the molar mass the script used is the one these tests use.
        assert!(rel(M_AIR_KG_MOL, reference("thermo.molar_mass_kg_mol")) < 1e-12);
    }

    #[test]
    fn isothermal_work_matches_fluids_and_the_field_notes() {
        let w = isothermal_work_per_kg(T1, R_11);
        // Python library fluids 1.3.1, isothermal_work_compression: 5008.13 J/mol.
        assert!((w * M_AIR_KG_MOL - 5008.13).abs() < 0.01);
        // fixture: fluids 1.3.1 isothermal_work_compression.
        assert!(rel(w * M_AIR_KG_MOL, reference("thermo.isothermal_work_j_mol")) < 1e-9);
    }

    #[test]
    fn ideal_gas_isothermal_work_is_within_half_a_percent_of_coolprop_real_air() {
        // fixture: CoolProp 8.0.0 real air, w = dh - T ds = 172.69 kJ/kg. Our
        // ideal gas gives 172.87 kJ/kg: +0.10 %. Tolerance stated: 0.5 %.
        let w = isothermal_work_per_kg(T1, R_11);
        let real = reference("thermo.coolprop_isothermal_work_j_kg");
        assert!((real - 172_690.0).abs() < 5.0);
        assert!(rel(w, real) < 0.005, "deviation {}", rel(w, real));
    }

    #[test]
    fn isentropic_work_and_discharge_temperature_match_fluids() {
        let w = isentropic_work_per_kg(T1, R_11);
        // Python library fluids 1.3.1, isentropic_work_compression: 6813.54 J/mol.
        assert!((w * M_AIR_KG_MOL - 6813.54).abs() < 0.01);
        // fixture: fluids 1.3.1 isentropic_work_compression, eta 1.
        assert!(rel(w * M_AIR_KG_MOL, reference("thermo.isentropic_work_j_mol")) < 1e-9);
        // fixture: the same with eta = 0.8, which fluids divides the ideal work by.
        let w08 = reference("thermo.isentropic_work_eta_0_8_j_mol");
        assert!(rel(w / 0.8 * M_AIR_KG_MOL, w08) < 1e-9);

        // Python library fluids 1.3.1, isentropic_T_rise_compression: 527.29 K (the function
        // returns the discharge temperature).
        let t2 = isentropic_discharge_temperature(T1, R_11, 1.0);
        assert!((t2.0 - 527.29).abs() < 0.005);
        assert!((t2.0 - reference("thermo.isentropic_t2_k")).abs() < 1e-6);
        // fixture: fluids 1.3.1 isentropic_T_rise_compression with eta = 0.8.
        let t2_08 = isentropic_discharge_temperature(T1, R_11, 0.8);
        assert!((t2_08.0 - reference("thermo.isentropic_t2_eta_0_8_k")).abs() < 1e-6);
    }

    #[test]
    fn isentropic_work_is_cp_times_the_ideal_temperature_rise() {
        // Energy balance of an adiabatic ideal stage (textbook identity): w = cp (T2s - T1).
        let w = isentropic_work_per_kg(T1, R_11);
        let t2 = isentropic_discharge_temperature(T1, R_11, 1.0);
        assert!(rel(w, CP_AIR * (t2.0 - T1.0)) < 1e-12);
    }

    #[test]
    fn polytropic_work_matches_fluids_and_lies_between_the_limits() {
        // fixture: fluids 1.3.1 polytropic_exponent(1.4, eta_p=0.85) and
        // isentropic_work_compression with k = n.
        let n = reference("thermo.polytropic_n_eta_p_0_85");
        let w = polytropic_work_per_kg(n, T1, R_11);
        assert!(rel(w * M_AIR_KG_MOL, reference("thermo.polytropic_work_j_mol")) < 1e-9);
        // Textbook ordering: n > k needs more work than isentropic; n = 1 is the isothermal limit.
        assert!(w > isentropic_work_per_kg(T1, R_11));
        let iso = isothermal_work_per_kg(T1, R_11);
        assert!((polytropic_work_per_kg(1.0, T1, R_11) - iso).abs() < 1e-9);
        assert!(rel(polytropic_work_per_kg(1.000_001, T1, R_11), iso) < 1e-5);
    }

    #[test]
    fn isothermal_power_is_p1_v1_ln_r() {
        // By hand: 10 m³/min at 101.325 kPa to 801.325 kPa:
        // 101 325 x 10/60 x ln(7.90846) = 34 922.2 W.
        let p =
            isothermal_power(FreeAirFlow::from_m3_min(10.0), PressureAbs(101_325.0), PressureAbs(801_325.0));
        assert!((p.kw() - 34.922).abs() < 0.001);
        assert!(rel(p.0, reference("compress.isothermal_power_w")) < 1e-9);
        // Isothermal efficiency of a 60 kW package delivering that air: 0.582.
        assert!((isothermal_efficiency(p, Power::from_kw(60.0)) - 0.582_04).abs() < 1e-4);
        assert!(isothermal_efficiency(p, Power(0.0)).is_nan());
    }

    #[test]
    fn a_data_sheet_corrected_to_6_5_7_5_and_8_5_bar_g_matches_fluids_and_coolprop() {
        // A 55 kW package rated at 7.5 bar(g) at a sea-level site, 20 °C inlet.
        let atm = PressureAbs(101_325.0);
        let t = Temperature(293.15);
        let at = |bar_g: f64, stages: u32| {
            power_at_pressure(
                Power::from_kw(55.0),
                PressureAbs::from_bar_g(7.5, atm),
                PressureAbs::from_bar_g(bar_g, atm),
                atm,
                t,
                stages,
            )
            .kw()
        };
        for (bar_g, tag) in [(6.5, "65"), (7.5, "75"), (8.5, "85")] {
            // fixture: fluids 1.3.1 isentropic_work_compression at the two pressures, ideal-gas air.
            let ideal = reference(&format!("datasheet.power_at_{tag}_bar_g_kw"));
            assert!(rel(at(bar_g, 1), ideal) < 1e-9, "{bar_g} bar(g): {} vs {ideal}", at(bar_g, 1));
            // fixture: CoolProp 8.0.0 real air, isentropic enthalpy rise; ideal gas within 0.1 %.
            let real = reference(&format!("datasheet.coolprop_power_at_{tag}_bar_g_kw"));
            assert!(rel(at(bar_g, 1), real) < 1e-3, "{bar_g} bar(g): {} vs real air {real}", at(bar_g, 1));
        }
        // fixture: fluids 1.3.1, two equal-ratio stages intercooled to the inlet temperature.
        let two = reference("datasheet.two_stage_power_at_85_bar_g_kw");
        assert!(rel(at(8.5, 2), two) < 1e-9, "{} vs {two}", at(8.5, 2));
        // US DOE compressed-air sourcebook: about 1 % of input per 2 psi near 100 psig, i.e. about
        // 7.3 % per bar; the isentropic ratio from 7.5 to 8.5 bar(g) gives 7.1 %.
        let per_bar = at(8.5, 1) / 55.0 - 1.0;
        assert!((per_bar - 0.0725).abs() < 0.005, "{per_bar}");
    }

    fn api_example() -> CompressionInput {
        // API.md example: 10 m³/min, 101.325 kPa, 20 °C, 7 bar(g), 2 stages, 0.8, 30 °C.
        CompressionInput {
            flow: FreeAirFlow::from_m3_min(10.0),
            inlet_pressure: PressureAbs::from_kpa_abs(101.325),
            inlet_temperature: Temperature::from_c(20.0),
            discharge_pressure: PressureAbs::from_bar_g(7.0, PressureAbs::from_kpa_abs(101.325)),
            stages: 2,
            isentropic_efficiency: 0.8,
            intercooled_to: Temperature::from_c(30.0),
        }
    }

    #[test]
    fn two_stage_api_example_matches_fluids_stage_by_stage() {
        let out = compress(&api_example()).unwrap();
        // fixture: ideal-gas mass flow and fluids 1.3.1 isothermal_work_compression x molar flow.
        assert!(rel(out.mass_flow_kg_s, reference("compress.mass_flow_kg_s")) < 1e-9);
        assert!(rel(out.isothermal_power.0, reference("compress.isothermal_power_w")) < 1e-9);
        // fixture: fluids 1.3.1 isentropic_work_compression per stage, summed.
        assert!(rel(out.isentropic_power.0, reference("compress.isentropic_power_w")) < 1e-9);
        assert!(rel(out.shaft_power.0, reference("compress.shaft_power_w")) < 1e-9);
        assert_eq!(out.stages.len(), 2);
        for (i, s) in out.stages.iter().enumerate() {
            let key = |k: &str| format!("compress.stage{}.{k}", i + 1);
            assert!(rel(s.pressure_ratio, reference(&key("pressure_ratio"))) < 1e-12);
            // fixture: fluids 1.3.1 isentropic_T_rise_compression with eta 0.8.
            let t = reference(&key("discharge_temperature_k"));
            assert!((s.discharge_temperature.0 - t).abs() < 1e-6);
            // fixture: m cp (T2 - T_ic) with cp = k R_u/(k-1) per mole.
            assert!(rel(s.cooler_heat.0, reference(&key("cooler_heat_w"))) < 1e-9);
            assert!(rel(s.shaft_power.0, reference(&key("shaft_power_w"))) < 1e-9);
        }
        // The second stage starts at the intercooler outlet.
        assert!((out.stages[1].inlet_temperature.c() - 30.0).abs() < 1e-9);
        let stage_sum: f64 = out.stages.iter().map(|s| s.shaft_power.0).sum();
        assert!(rel(stage_sum, out.shaft_power.0) < 1e-12);
    }

    #[test]
    fn staging_energy_balance_closes() {
        // First law over the whole machine (ideal gas, steady flow): shaft power = heat removed by
        // the coolers + the enthalpy rise of the air from inlet to the aftercooler outlet.
        let out = compress(&api_example()).unwrap();
        let coolers: f64 = out.stages.iter().map(|s| s.cooler_heat.0).sum();
        let air = out.mass_flow_kg_s * CP_AIR * (30.0 - 20.0);
        assert!(rel(out.shaft_power.0, coolers + air) < 1e-9);
        // Intercooling saves work against a single stage, and stays above the isothermal limit.
        let single = compress(&CompressionInput { stages: 1, ..api_example() }).unwrap();
        assert!(out.isentropic_power.0 < single.isentropic_power.0);
        assert!(out.isentropic_power.0 > out.isothermal_power.0);
    }

    #[test]
    fn bad_inputs_name_their_field() {
        let bad = |f: fn(&mut CompressionInput)| {
            let mut input = api_example();
            f(&mut input);
            compress(&input).unwrap_err().field
        };
        assert_eq!(bad(|i| i.discharge_pressure = i.inlet_pressure), "discharge_pressure_bar_g");
        assert_eq!(bad(|i| i.isentropic_efficiency = 0.0), "isentropic_efficiency");
        assert_eq!(bad(|i| i.isentropic_efficiency = 1.01), "isentropic_efficiency");
        assert_eq!(bad(|i| i.isentropic_efficiency = f64::NAN), "isentropic_efficiency");
        assert_eq!(bad(|i| i.stages = 0), "stages");
        assert_eq!(bad(|i| i.stages = 7), "stages");
        assert_eq!(bad(|i| i.flow = FreeAirFlow(0.0)), "flow_m3_min");
        assert_eq!(bad(|i| i.inlet_pressure = PressureAbs(-1.0)), "inlet_pressure_kpa_abs");
        assert_eq!(bad(|i| i.inlet_temperature = Temperature(0.0)), "inlet_temperature_c");
        assert_eq!(bad(|i| i.intercooled_to = Temperature(-5.0)), "intercooled_to_c");
        // A cooler "to" 200 °C after a stage that only reaches ~146 °C would have to heat the air.
        assert_eq!(bad(|i| i.intercooled_to = Temperature::from_c(200.0)), "intercooled_to_c");
        let e = compress(&CompressionInput { stages: 9, ..api_example() }).unwrap_err();
        assert_eq!(e.to_string(), "stages: stages must be 1 to 6, got 9");
        // Efficiency 1 is allowed: the ideal machine.
        assert!(compress(&CompressionInput { isentropic_efficiency: 1.0, ..api_example() }).is_ok());
    }
}
