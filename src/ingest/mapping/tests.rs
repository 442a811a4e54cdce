use super::rules::column_rule;
use super::*;
use crate::core::units::{PressureAbs, M3_PER_FT3, PA_PER_PSI};

const API_EXAMPLE: &str = r#"{"delimiter": ",", "decimal": ".", "header_line": 1,
 "timestamp": {"column": "Time", "format": "%Y-%m-%d %H:%M:%S", "timezone": "UTC"},
 "columns": [
   {"column": "C1 kW", "quantity": "power", "unit": "kW", "compressor": "C1"},
   {"column": "Header", "quantity": "pressure", "unit": "psig"},
   {"column": "Flow", "quantity": "flow", "unit": "scfm",
    "reference": {"pressure_kpa_abs": 101.325, "temperature_c": 20}}]}"#;

fn header(names: &[&str]) -> Vec<String> {
    names.iter().map(|s| s.to_string()).collect()
}

fn convert(c: ColumnMap, site: &SiteAir, v: f64) -> f64 {
    let (_, rule) = column_rule(&c, 0).unwrap();
    rule.converter(site).apply(v)
}

#[test]
fn the_api_example_mapping_parses_and_plans() {
    let m: Mapping = serde_json::from_str(API_EXAMPLE).unwrap();
    assert_eq!(m.clock_offset_s, 0.0);
    assert_eq!(m.encoding, None);
    let p = plan(&m, &header(&["Time", "C1 kW", "Header", "Flow"])).unwrap();
    assert_eq!(p.channels.len(), 3);
    assert_eq!(p.channels[0].quantity, Quantity::Power);
    assert_eq!(p.channels[0].compressor.as_deref(), Some("C1"));
    assert_eq!(p.channels[2].column_index, 3);
    // Defaults: a minimal mapping.
    let min: Mapping = serde_json::from_str(
        r#"{"timestamp": {"column": "Time", "format": "rfc3339"},
            "columns": [{"column": "P", "quantity": "pressure", "unit": "bar_g"}]}"#,
    )
    .unwrap();
    assert_eq!((min.delimiter.as_str(), min.decimal.as_str(), min.header_line), (",", ".", 1));
    assert_eq!(min.timestamp.timezone, "UTC");
    let back: Mapping = serde_json::from_str(&serde_json::to_string(&m).unwrap()).unwrap();
    assert_eq!(back, m);
}

#[test]
fn plan_errors_name_the_field() {
    let m: Mapping = serde_json::from_str(API_EXAMPLE).unwrap();
    let e = plan(&m, &header(&["Time", "C1 kW", "Flow"])).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("columns[1].column"));
    assert_eq!(e.column.as_deref(), Some("Header"));
    let mut bad = m.clone();
    bad.columns[0].unit = "kVA".into();
    let e = plan(&bad, &header(&["Time", "C1 kW", "Header", "Flow"])).unwrap_err();
    assert_eq!(
        (e.field.as_deref(), e.message.as_str()),
        (Some("columns[0].unit"), "unknown power unit \"kVA\"")
    );
    let mut bad = m.clone();
    bad.columns[0].compressor = None;
    let e = plan(&bad, &header(&["Time", "C1 kW", "Header", "Flow"])).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("columns[0].compressor"));
    let mut bad = m.clone();
    bad.columns[1].quantity = "humidity".into();
    let e = plan(&bad, &header(&["Time", "C1 kW", "Header", "Flow"])).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("columns[1].quantity"));
    let mut bad = m.clone();
    bad.columns[1].unit = "bar".into();
    let e = plan(&bad, &header(&["Time", "C1 kW", "Header", "Flow"])).unwrap_err();
    assert!(e.message.contains("gauge or absolute"), "{}", e.message);
    let mut bad = m.clone();
    bad.timestamp.timezone = "Europe/Atlantis".into();
    let e = plan(&bad, &header(&["Time", "C1 kW", "Header", "Flow"])).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("timestamp.timezone"));
    let mut bad = m;
    bad.columns.push(ColumnMap::new("C1 kW", "current", "A", Some("C1")));
    let e = plan(&bad, &header(&["Time", "C1 kW", "Header", "Flow"])).unwrap_err();
    assert_eq!(e.field.as_deref(), Some("columns[3].volts"));
}

#[test]
fn amps_to_kilowatts_three_phase_and_unloaded() {
    // sqrt(3) V I PF (IEC 60050 three-phase active power):
    // sqrt(3) x 400 V x 50 A x 0.85 = 29,444.9 W (hand calculation).
    let site = SiteAir::new(101.325, 20.0);
    let mut c = ColumnMap::new("C1 A", "current", "A", Some("C1"));
    c.volts = Some(400.0);
    c.power_factor = Some(0.85);
    assert!((convert(c.clone(), &site, 50.0) - 29_444.86).abs() < 0.01);
    c.unloaded_power_factor = Some(0.4);
    c.unloaded_below_a = Some(20.0);
    // Unloaded: sqrt(3) x 400 x 15 x 0.4 = 4156.9 W (hand calculation).
    assert!((convert(c.clone(), &site, 15.0) - 4_156.92).abs() < 0.01);
    assert!((convert(c.clone(), &site, 50.0) - 29_444.86).abs() < 0.01);
    c.phases = Some(1);
    c.unloaded_power_factor = None;
    c.unloaded_below_a = None;
    // Single phase: 230 V x 10 A x 0.85 = 1955 W (hand calculation).
    c.volts = Some(230.0);
    assert!((convert(c, &site, 10.0) - 1955.0).abs() < 1e-9);
}

#[test]
fn psig_becomes_pascal_absolute_with_the_site_atmosphere() {
    // 100 psig at 1000 m (ASHRAE/ISO 2533: 89.875 kPa): 689,475.7 Pa + 89,875 Pa.
    let site = SiteAir::new(89.875, 20.0);
    let p = convert(ColumnMap::new("P", "pressure", "psig", None), &site, 100.0);
    assert!((p - (689_475.729_316_8 + 89_875.0)).abs() < 1e-6);
    assert_eq!(p, PressureAbs::from_psig(100.0, site.atmosphere).0);
    let a = convert(ColumnMap::new("P", "pressure", "bar_a", None), &site, 7.0);
    assert_eq!(a, 700_000.0);
    let k = convert(ColumnMap::new("P", "pressure", "kPa_g", None), &site, 700.0);
    assert!((k - 789_875.0).abs() < 1e-9);
}

#[test]
fn standard_and_normal_flows_become_free_air_at_a_1000_m_site() {
    let site = SiteAir::new(89.875, 20.0);
    // 100 scfm (ASME 14.696 psia, 68 F) -> free air at 89.875 kPa, 20 C:
    // 100 x 0.0283168 m3 / 60 s x (101.3250 / 89.875) x (293.15 / 293.15) (hand calculation;
    // 14.696 psia = 101.3250 kPa).
    let q = convert(ColumnMap::new("F", "flow", "scfm", None), &site, 100.0);
    let p_ref = 14.696 * PA_PER_PSI;
    let want = 100.0 * M3_PER_FT3 / 60.0 * (p_ref / 89_875.0);
    assert!((q - want).abs() < 1e-12);
    assert!((q * 60.0 - 3.1925).abs() < 1e-3); // ~3.19 m3/min free air
                                               // 600 Nm3/h (DIN 1343, 0 C) -> 600/3600 x (101.325/89.875) x (293.15/273.15) m3/s.
    let n = convert(ColumnMap::new("F", "flow", "Nm3/h", None), &site, 600.0);
    let want = 600.0 / 3600.0 * (101.325 / 89.875) * (293.15 / 273.15);
    assert!((n - want).abs() < 1e-12);
    // Given reference conditions override the default.
    let mut c = ColumnMap::new("F", "flow", "Nm3_h", None);
    c.reference = Some(ReferenceConditions { pressure_kpa_abs: 101.325, temperature_c: 20.0 });
    let r = convert(c, &site, 600.0);
    assert!((r - 600.0 / 3600.0 * (101.325 / 89.875)).abs() < 1e-12);
    // Free air units are not corrected.
    let f = convert(ColumnMap::new("F", "flow", "m³/min", None), &site, 6.0);
    assert!((f - 0.1).abs() < 1e-15);
    let mut c = ColumnMap::new("F", "flow", "cfm", None);
    c.reference = Some(ReferenceConditions::NORMAL_DIN_1343);
    assert_eq!(column_rule(&c, 0).unwrap_err().field.as_deref(), Some("columns[0].reference"));
}

#[test]
fn power_energy_temperature_units() {
    let site = SiteAir::new(101.325, 20.0);
    assert_eq!(convert(ColumnMap::new("x", "power", "kW", Some("C1")), &site, 2.5), 2500.0);
    // 1 kWh = 3.6 MJ exactly (SI definition of the watt-hour).
    assert_eq!(convert(ColumnMap::new("x", "energy", "kWh", Some("C1")), &site, 12.5), 45.0e6);
    let t = convert(ColumnMap::new("x", "temperature", "°F", None), &site, 212.0);
    assert!((t - 373.15).abs() < 1e-9);
    let t = convert(ColumnMap::new("x", "temperature", "C", None), &site, 20.0);
    assert!((t - 293.15).abs() < 1e-9);
}

#[test]
fn unit_spellings_read_through_the_unit_table() {
    let site = SiteAir::new(100.0, 20.0);
    let p = |unit: &str| convert(ColumnMap::new("P", "pressure", unit, None), &site, 1.0);
    // Gauge adds the site's 100 kPa, absolute does not (factors: NIST SP 811 B.8).
    assert_eq!(p("barg"), 200_000.0);
    assert_eq!(p("bar(g)"), 200_000.0);
    assert_eq!(p("psia"), PA_PER_PSI);
    assert_eq!(p("MPa_g"), 1_100_000.0);
    assert_eq!(p("kPa abs"), 1_000.0);
    let q = convert(ColumnMap::new("F", "flow", "m3 per min", None), &site, 60.0);
    assert!((q - 1.0).abs() < 1e-15);
    let bad = ColumnMap::new("F", "flow", "furlongs/fortnight", None);
    assert_eq!(column_rule(&bad, 0).unwrap_err().message, "unknown flow unit \"furlongs/fortnight\"");
}

#[test]
fn the_form_gets_the_api_units_by_quantity() {
    // The API's codes (API.md, "Logger files") come first within each quantity, in its order.
    let codes = |q: &str| -> Vec<String> {
        units_by_quantity()[q]
            .as_array()
            .unwrap()
            .iter()
            .map(|u| u["code"].as_str().unwrap().into())
            .collect()
    };
    assert_eq!(codes("power")[..2], ["kW", "W"]);
    assert_eq!(codes("energy")[..1], ["kWh"]);
    assert_eq!(codes("current"), ["A"]);
    assert_eq!(codes("pressure")[..7], ["bar_g", "psig", "kPa_g", "MPa_g", "bar_a", "psia", "kPa_a"]);
    assert_eq!(
        codes("flow")[..9],
        ["m3_min", "m3_h", "l_s", "cfm", "scfm", "Nm3_h", "Nm3_min", "Sm3_h", "Sm3_min"]
    );
    assert_eq!(codes("temperature"), ["C", "F", "K"]);
    // People read labels, not codes.
    assert_eq!(units_by_quantity()["pressure"][0], serde_json::json!({"code": "bar_g", "label": "bar(g)"}));
    assert_eq!(units_by_quantity()["flow"][5]["label"], "Nm³/h");
}
