use super::*;
use crate::core::units::SiteAir;

fn fixture() -> serde_json::Value {
    serde_json::from_str(include_str!("../../../tests/reference/fixture.json")).unwrap()
}

/// A reference value from the fixture written by tests/reference/make_reference.py.
fn reference(name: &str) -> f64 {
    fixture()["values"][name]["value"].as_f64().unwrap_or_else(|| panic!("fixture has no value {name}"))
}

fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

fn unit_of(code: &str) -> &'static UnitSpelling {
    UNITS.iter().find(|u| u.code == code).unwrap_or_else(|| panic!("no unit {code}"))
}

fn scale(code: &str) -> f64 {
    match unit_of(code).to_si {
        ToSi::Scale(k) => k,
        ToSi::Pressure { pa_per_unit, .. } => pa_per_unit,
        ToSi::Flow { m3_s_per_unit, .. } | ToSi::LineFlow { m3_s_per_unit } => m3_s_per_unit,
        ToSi::Temperature { scale, .. } => scale,
    }
}

fn kelvin(code: &str, v: f64) -> f64 {
    match unit_of(code).to_si {
        ToSi::Temperature { scale, offset } => v * scale + offset,
        other => panic!("{code} is not a temperature: {other:?}"),
    }
}

#[test]
fn the_api_codes_are_in_the_table_and_offered() {
    // The JSON API's contract (DEVELOPERS.md, "JSON API"; "Logger files"): the unit codes a mapping may name.
    let api = [
        (Power, &["kW", "W"][..]),
        (Energy, &["kWh"][..]),
        (Current, &["A"][..]),
        (Pressure, &["bar_g", "psig", "kPa_g", "bar_a", "psia", "kPa_a", "MPa_g"][..]),
        (Flow, &["m3_min", "m3_h", "l_s", "cfm", "scfm", "Nm3_h", "Nm3_min", "Sm3_h", "Sm3_min"][..]),
        (Temperature, &["C", "F", "K"][..]),
    ];
    for (q, codes) in api {
        for code in codes {
            let u = find(q, code).unwrap_or_else(|| panic!("{code} is not a {q:?} unit"));
            assert_eq!(u.code, *code);
            assert!(choices(q).any(|c| c.code == *code), "the form does not offer {code}");
        }
    }
}

#[test]
fn every_code_reads_as_itself_and_no_spelling_names_two_units() {
    for u in UNITS {
        assert_eq!(find(u.quantity, u.code).map(|f| f.code), Some(u.code));
        assert!(!u.label.is_empty());
        for s in u.written.iter().chain(u.in_headers).chain(u.unqualified) {
            assert_eq!(normalize(s), *s, "{} lists {s:?}, which is not in normal form", u.code);
        }
        for v in UNITS.iter().filter(|v| v.code != u.code) {
            let same_quantity = v.quantity == u.quantity;
            for s in u.written {
                assert!(!(same_quantity && v.written.contains(s)), "{s} names {} and {}", u.code, v.code);
            }
            for s in u.in_headers.iter().chain(u.unqualified) {
                assert!(
                    !v.in_headers.contains(s) && !v.unqualified.contains(s),
                    "header spelling {s} names {} and {}",
                    u.code,
                    v.code
                );
            }
        }
        assert!(!u.written.is_empty(), "{} cannot be written in a mapping", u.code);
    }
    assert_eq!(UNITS.iter().filter(|u| u.code == "bar_g").count(), 1);
}

#[test]
fn spellings_normalize_and_find_their_unit() {
    assert_eq!(normalize(" Nm³/h "), "nm3_h");
    assert_eq!(normalize("bar(g)"), "bar_g");
    assert_eq!(normalize("[°C]"), "c");
    assert_eq!(
        find(Pressure, "barg").map(|u| u.to_si),
        Some(ToSi::Pressure { pa_per_unit: PA_PER_BAR, gauge: true })
    );
    assert_eq!(
        find(Pressure, "psia").map(|u| u.to_si),
        Some(ToSi::Pressure { pa_per_unit: PA_PER_PSI, gauge: false })
    );
    assert_eq!(find(Pressure, "MPa_g").map(|u| u.code), Some("MPa_g"));
    assert_eq!(find(Pressure, "kPa abs").map(|u| u.code), Some("kPa_a"));
    assert_eq!(find(Pressure, "bar"), None);
    assert!(
        is_unqualified_pressure("Bar") && is_unqualified_pressure("kPa") && !is_unqualified_pressure("psig")
    );
    assert_eq!(find(Flow, "m3 per min").map(|u| u.code), Some("m3_min"));
    assert_eq!(find(Flow, "Nm³/h").map(|u| u.code), Some("Nm3_h"));
    assert_eq!(find(Flow, "furlongs/fortnight"), None);
    assert_eq!(find(Power, "m3_min"), None);
    assert_eq!(find(Temperature, "°F").map(|u| u.code), Some("F"));
    assert_eq!(in_header("Nm³/h").map(|(u, a)| (u.code, a)), Some(("Nm3_h", false)));
    assert_eq!(in_header("bar").map(|(u, a)| (u.code, a)), Some(("bar_g", true)));
    assert_eq!(in_header("Watts").map(|(u, a)| (u.code, a)), Some(("W", false)));
    // The sniffer does not take a bare K in a header for kelvin.
    assert_eq!(in_header("K"), None);
}

#[test]
fn the_form_offers_the_api_units_in_order() {
    let codes = |q| choices(q).map(|u| u.code).collect::<Vec<_>>();
    assert_eq!(
        codes(Pressure),
        [
            "bar_g", "psig", "kPa_g", "MPa_g", "bar_a", "psia", "kPa_a", "mbar_g", "mbar_a", "mH2O_g",
            "mH2O_a", "inH2O_g", "inH2O_a", "inHg_g", "inHg_a"
        ]
    );
    assert_eq!(
        codes(Flow),
        [
            "m3_min", "m3_h", "l_s", "cfm", "scfm", "Nm3_h", "Nm3_min", "Sm3_h", "Sm3_min", "l_min", "acfm",
            "am3_min", "am3_h"
        ]
    );
    assert_eq!(codes(Current), ["A"]);
    assert_eq!(choices(Flow).nth(5).map(|u| u.label), Some("Nm³/h"));
}

#[test]
fn pressure_factors_match_pint() {
    // fixture: pint 0.25.3 Quantity(1, unit).to('Pa').
    assert!(rel(scale("bar_g"), reference("unit.pa_per_bar")) < 1e-12);
    assert!(rel(scale("bar_a"), reference("unit.pa_per_bar")) < 1e-12);
    assert!(rel(scale("psig"), reference("unit.pa_per_psi")) < 1e-12);
    assert!(rel(scale("psia"), reference("unit.pa_per_psi")) < 1e-12);
    assert!(rel(scale("kPa_a"), reference("unit.pa_per_kpa")) < 1e-12);
    assert!(rel(scale("MPa_g"), reference("unit.pa_per_mpa")) < 1e-12);
    // By hand (SI prefixes): a millibar is a hundred pascals.
    assert_eq!(scale("mbar_g"), 100.0);
}

#[test]
fn flow_factors_match_pint() {
    // fixture: pint 0.25.3 Quantity(1, unit).to('m^3/s').
    assert!(rel(scale("m3_min"), reference("unit.m3_s_per_m3_min")) < 1e-12);
    assert!(rel(scale("Nm3_h"), reference("unit.m3_s_per_m3_h")) < 1e-12);
    assert!(rel(scale("l_s"), reference("unit.m3_s_per_l_s")) < 1e-12);
    assert!(rel(scale("cfm"), reference("unit.m3_s_per_cfm")) < 1e-12);
    assert!(rel(scale("scfm"), reference("unit.m3_s_per_cfm")) < 1e-12);
}

#[test]
fn temperature_power_and_energy_match_pint() {
    // fixture: pint 0.25.3 Quantity(v, 'degF'/'degC').to('K').
    assert!((kelvin("F", 68.0) - reference("unit.degf_68_in_k")).abs() < 1e-9);
    assert!((kelvin("C", 20.0) - reference("unit.degc_20_in_k")).abs() < 1e-9);
    assert!((kelvin("F", -40.0) - reference("unit.degf_minus_40_in_k")).abs() < 1e-9);
    assert!((kelvin("K", 300.0) - 300.0).abs() < 1e-12);
    // fixture: pint 0.25.3 Quantity(1, 'kW').to('W'), Quantity(1, 'kW*h' / 'W*h' / 'MW*h').to('J').
    assert!(rel(scale("kW"), reference("unit.w_per_kw")) < 1e-12);
    assert!(rel(scale("kWh"), reference("unit.j_per_kwh")) < 1e-12);
    assert!(rel(scale("Wh"), reference("unit.j_per_wh")) < 1e-12);
    assert!(rel(scale("MWh"), reference("unit.j_per_mwh")) < 1e-12);
}

fn free_air(code: &str, value: f64, site: &SiteAir) -> f64 {
    match unit_of(code).to_si {
        ToSi::Flow { m3_s_per_unit, reference: Some(r) } => {
            value * site.free_air_from_reference(m3_s_per_unit, r)
        }
        ToSi::Flow { m3_s_per_unit, reference: None } => value * m3_s_per_unit,
        other => panic!("{code} is not a flow: {other:?}"),
    }
}

#[test]
fn reference_units_convert_to_free_air_like_pint() {
    // fixture: pint 0.25.3, 100 scfm (ASME 14.696 psia, 68 °F) at an 89.875 kPa, 20 °C site.
    let site = SiteAir::new(89.875, 20.0);
    assert!(rel(free_air("scfm", 100.0, &site) * 60.0, reference("air.scfm_100_to_free_air_m3_min")) < 1e-9);
    // fixture: pint 0.25.3, 120 Nm³/h (DIN 1343) at a 95 kPa, 30 °C site.
    let site = SiteAir::new(95.0, 30.0);
    assert!(rel(free_air("Nm3_h", 120.0, &site), reference("air.nm3_h_120_to_free_air_m3_s")) < 1e-9);
    // By hand: 1 Sm³/min (ISO 1217, 100 kPa, 20 °C) at 89.875 kPa, 20 °C = 100 / 89.875 m³/min.
    let site = SiteAir::new(89.875, 20.0);
    assert!((free_air("Sm3_min", 1.0, &site) * 60.0 - 100.0 / 89.875).abs() < 1e-12);
    // Free air passes through: 12 m³/min is 0.2 m³/s whatever the site.
    assert!((free_air("m3_min", 12.0, &site) - 0.2).abs() < 1e-12);
}

#[test]
fn water_and_mercury_columns_have_the_nist_sp_811_factors() {
    // NIST SP 811 (2008) appendix B.8, "Factors for units listed alphabetically":
    // meter of water, conventional (mH2O) = 9.806 65 E+03 Pa;
    assert!(rel(scale("mH2O_g"), 9.806_65e3) < 1e-12);
    assert!(rel(scale("mH2O_a"), 9.806_65e3) < 1e-12);
    // inch of water, conventional (inH2O) = 2.490 889 E+02 Pa (7 significant digits given);
    assert!(rel(scale("inH2O_g"), 2.490_889e2) < 5e-7);
    assert!(rel(scale("inH2O_a"), 2.490_889e2) < 5e-7);
    // inch of mercury, conventional (inHg) = 3.386 389 E+03 Pa (7 significant digits given).
    assert!(rel(scale("inHg_g"), 3.386_389e3) < 5e-7);
    assert!(rel(scale("inHg_a"), 3.386_389e3) < 5e-7);
    // Gauge adds the site atmosphere, absolute does not.
    for (g, a) in [("mH2O_g", "mH2O_a"), ("inH2O_g", "inH2O_a"), ("inHg_g", "inHg_a")] {
        assert!(matches!(unit_of(g).to_si, ToSi::Pressure { gauge: true, .. }), "{g}");
        assert!(matches!(unit_of(a).to_si, ToSi::Pressure { gauge: false, .. }), "{a}");
    }
    // Header spellings: German "mWS" (Meter Wassersäule) and inches of mercury are unqualified.
    assert_eq!(in_header("[mWS]").map(|(u, a)| (u.code, a)), Some(("mH2O_g", true)));
    assert_eq!(in_header("inHg").map(|(u, a)| (u.code, a)), Some(("inHg_g", true)));
    assert_eq!(in_header("inWC").map(|(u, a)| (u.code, a)), Some(("inH2O_g", true)));
    assert_eq!(find(Pressure, "inHg_a").map(|u| u.code), Some("inHg_a"));
    assert!(is_unqualified_pressure("mH2O"));
}

#[test]
fn watts_megawatts_and_litres_per_minute_have_their_si_factors() {
    // NIST SP 811 (2008) chapter 4, table 5 (SI prefixes): M = 1e6, k = 1e3; B.8: litre = 1.0 E-03 m³.
    assert_eq!(scale("W"), 1.0);
    assert_eq!(scale("MW"), 1.0e6);
    assert!(rel(scale("l_min"), 1.0e-3 / 60.0) < 1e-15);
    // B.8: watt hour = 3.6 E+03 J.
    assert!(rel(scale("Wh"), 3.6e3) < 1e-15);
    assert!(rel(scale("MWh"), 3.6e9) < 1e-15);
    assert_eq!(in_header("[MW]").map(|(u, _)| u.code), Some("MW"));
    assert_eq!(in_header("l/min").map(|(u, _)| u.code), Some("l_min"));
    // B.9: t/°F = 1.8 t/°C + 32, so 212 °F is 373.15 K.
    assert!((kelvin("F", 212.0) - 373.15).abs() < 1e-9);
}
