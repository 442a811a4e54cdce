//! The rules of `physics` and of the power names (`columns::electrical`), on small invented files.
//! The limits checked are the module's (common practice, from memory); the unit factors are NIST
//! SP 811 (2008) B.8 (1 kWh = 1,000 Wh; 1 m³ = 1,000 l; 1 h = 60 min).

use super::columns::{electrical, quantity_word, Electrical};
use super::physics::{counter_kw_as_kwh, energy_unit, flow_unit, power_unit, MAX_MACHINE_KW};
use super::*;

fn col<'a>(s: &'a Sniffed, name: &str) -> &'a ColumnGuess {
    s.columns.iter().find(|c| c.column == name).unwrap_or_else(|| panic!("no column {name}"))
}

fn q_u(s: &Sniffed, name: &str) -> (Option<String>, Option<String>) {
    let c = col(s, name);
    (c.quantity.clone(), c.unit.clone())
}

fn some(q: &str, u: &str) -> (Option<String>, Option<String>) {
    (Some(q.into()), Some(u.into()))
}

/// A `;` file with a minute timestamp, the header, and one row per `rows` entry.
fn file(header: &str, rows: &[String]) -> Vec<u8> {
    let mut f = format!("Time;{header}\n");
    for (i, r) in rows.iter().enumerate() {
        f.push_str(&format!("2026-05-04 {:02}:{:02}:00;{r}\n", 8 + i / 60, i % 60));
    }
    f.into_bytes()
}

#[test]
fn names_of_apparent_reactive_and_active_power() {
    // IEC 60050-131 / IEEE 1459: S apparent (VA), Q reactive (var), N non-active, P active.
    for n in [
        "PowerS_C_peak",
        "PowerQ_Sum_mean",
        "PowerN_A_low",
        "PowerSfund_B",
        "PowerPfund_Sum_mean",
        "S_total",
        "Q L2",
        "Apparent power",
        "kVA L1",
        "Line 2 kvar",
        "NonActiveEnergy_Sum",
        "Blindleistung",
        "PowerFactor_L1",
        "PF total",
    ] {
        assert_eq!(electrical(n), Some(Electrical::NotActive), "{n}");
        assert_eq!(quantity_word(n), None, "{n}");
    }
    for n in ["PowerP_B_low", "P_total", "Ptot", "P L3", "Active power", "real_power", "ActiveEnergy_L3"] {
        assert_eq!(electrical(n), Some(Electrical::Active), "{n}");
    }
    assert_eq!(quantity_word("PowerP_C_mean"), Some("power"));
    assert_eq!(quantity_word("P_sum"), Some("power"));
    // `Irms_C`: an rms current on phase C, not degrees Celsius.
    assert_eq!(quantity_word("Irms_C_peak"), Some("current"));
    assert_eq!(quantity_word("ActiveEnergy_Sum"), Some("energy"));
    // A bare `P` is as often a pressure: no guess. `real` beside another quantity is that one.
    assert_eq!(quantity_word("P1"), None);
    assert_eq!(quantity_word("Real time flow"), Some("flow"));
    // `Q` beside a flow word stays a flow.
    assert_eq!(quantity_word("Flow Q"), Some("flow"));
}

#[test]
fn active_power_is_proposed_and_apparent_or_reactive_never() {
    let rows: Vec<String> = (0..12).map(|i| format!("{};{};{};{}", 30 + i, 36 + i, 12, 40 + i)).collect();
    let s = sniff(&file("PowerP_L1_mean;PowerS_L1_mean;PowerQ_L1_mean;Apparent power [kW]", &rows)).unwrap();
    assert_eq!(q_u(&s, "PowerP_L1_mean"), some("power", "kW"));
    for n in ["PowerS_L1_mean", "PowerQ_L1_mean", "Apparent power [kW]"] {
        assert_eq!(q_u(&s, n), (None, None), "{n}");
        assert!(col(&s, n).note.as_deref().unwrap().contains("apparent"), "{n}");
    }
    let m = suggest_mapping(&s);
    assert_eq!(m.columns.iter().map(|c| c.column.as_str()).collect::<Vec<_>>(), vec!["PowerP_L1_mean"]);
    // The same names with readings in watts: above one machine's kW, so W.
    let rows: Vec<String> = (0..12).map(|i| format!("{};{}", 3_000 + 10 * i, 3_600 + 10 * i)).collect();
    let s = sniff(&file("P_total;S_total", &rows)).unwrap();
    assert_eq!(q_u(&s, "P_total"), some("power", "W"));
    assert_eq!(q_u(&s, "S_total"), (None, None));
}

#[test]
fn an_active_power_column_of_nothing_but_markers_is_proposed_with_a_note() {
    let rows: Vec<String> = (0..6).map(|i| format!("1.#QNAN;{};1.#QNAN", 20 + i)).collect();
    let s = sniff(&file("PowerP_Sum_peak;PowerS_Sum_peak;Irms_C_mean", &rows)).unwrap();
    // A current on phase C, not a temperature in °C.
    assert_ne!(col(&s, "Irms_C_mean").quantity.as_deref(), Some("temperature"));
    let p = col(&s, "PowerP_Sum_peak");
    assert!(p.numeric);
    assert_eq!(q_u(&s, "PowerP_Sum_peak"), some("power", "kW"));
    assert!(p.note.as_deref().unwrap().contains("no reading"), "{:?}", p.note);
    assert_eq!(q_u(&s, "PowerS_Sum_peak"), (None, None));
    // An energy counter with no reading has nothing to judge its unit from: not proposed.
    let s = sniff(&file("ActiveEnergy_Sum;x;y", &rows)).unwrap();
    assert_eq!(q_u(&s, "ActiveEnergy_Sum"), (None, None));
}

#[test]
fn power_without_a_unit_is_kw_up_to_one_machines_draw() {
    assert_eq!(power_unit(&[0.0, 55.0, MAX_MACHINE_KW]), "kW");
    assert_eq!(power_unit(&[0.0, 55.0, MAX_MACHINE_KW + 1.0]), "W");
    assert_eq!(power_unit(&[]), "kW");
}

#[test]
fn an_energy_counter_reads_wh_when_kwh_would_exceed_one_machine() {
    // 10-minute steps: 15 units each, i.e. 90 kW if kWh.
    let t: Vec<Option<f64>> = (0..5).map(|i| Some(600.0 * i as f64)).collect();
    let slow = [100.0, 115.0, 130.0, 145.0, 160.0];
    assert!((counter_kw_as_kwh(&slow, &t).unwrap() - 90.0).abs() < 1e-9);
    assert_eq!(energy_unit(&slow, &t), Some("kWh"));
    // 450 units every 10 minutes: 2,700 kW if kWh, more than one machine: Wh (2.7 kW).
    let fast = [0.0, 450.0, 900.0, 1350.0, 1800.0];
    assert_eq!(energy_unit(&fast, &t), Some("Wh"));
    // A reset (decrease) and a step longer than three median steps are not logged time.
    let t2 = [Some(0.0), Some(600.0), Some(1200.0), Some(90_000.0), Some(90_600.0), Some(91_200.0)];
    let reset = [10.0, 25.0, 40.0, 0.0, 15.0, 30.0];
    assert!((counter_kw_as_kwh(&reset, &t2).unwrap() - 90.0).abs() < 1e-9);
    // No times, or one reading: nothing to judge from.
    assert_eq!(energy_unit(&slow, &[None; 5]), None);
    assert_eq!(energy_unit(&[5.0], &[Some(0.0)]), None);
}

#[test]
fn a_sniffed_counter_without_a_unit_takes_its_unit_from_its_increments() {
    // One-minute rows: +0.5 a minute is 30 kW as kWh; +50 a minute would be 3,000 kW: Wh.
    let rows: Vec<String> = (0..30).map(|i| format!("{};{}", 1000.0 + 0.5 * i as f64, 50 * i)).collect();
    let s = sniff(&file("energy_a;energy_b", &rows)).unwrap();
    assert_eq!(q_u(&s, "energy_a"), some("energy", "kWh"));
    assert_eq!(q_u(&s, "energy_b"), some("energy", "Wh"));
    assert_eq!(col(&s, "energy_b").unit_from.as_deref(), Some("values"));
}

#[test]
fn flow_without_a_unit_takes_the_unit_that_gives_a_plausible_specific_power() {
    // 45 kW over 7.5 m³/min is 6 kW per m³/min; the same flow as 7,500 l/min or 450 m³/h.
    assert_eq!(flow_unit(7.5, 45.0).map(|f| f.0), Some("m3_min"));
    assert_eq!(flow_unit(7_500.0, 45.0).map(|f| f.0), Some("l_min"));
    assert_eq!(flow_unit(450.0, 45.0).map(|f| f.0), Some("m3_h"));
    assert!((flow_unit(450.0, 45.0).unwrap().1 - 6.0).abs() < 1e-9);
    // 45 kW over 100: 0.45, 450 or 27 kW per m³/min; none plausible.
    assert_eq!(flow_unit(100.0, 45.0), None);
    assert_eq!(flow_unit(0.0, 45.0), None);
}

#[test]
fn a_sniffed_flow_without_a_unit_uses_the_files_power_or_volts_and_amps() {
    let rows: Vec<String> = (0..10).map(|i| format!("{};{}", 44 + i % 3, 440 + i * 2)).collect();
    let s = sniff(&file("Power;Flow", &rows)).unwrap();
    assert_eq!(q_u(&s, "Flow"), some("flow", "m3_h"));
    assert!(
        col(&s, "Flow").note.as_deref().unwrap().contains("the file's power (44.9"),
        "{:?}",
        col(&s, "Flow").note
    );
    // 400 V × 20 A = 8 kW over 1,300 l/min = 1.3 m³/min: 6.2 kW per m³/min.
    let rows: Vec<String> = (0..10).map(|i| format!("{};{};{}", 400 + i % 2, 20, 1_300 + i)).collect();
    let s = sniff(&file("Voltage;Current;Flow rate", &rows)).unwrap();
    assert_eq!(q_u(&s, "Flow rate"), some("flow", "l_min"));
    // No power column: the note quotes no power figure, only what the unit was judged by.
    let note = col(&s, "Flow rate").note.clone().unwrap();
    assert!(note.contains("volts times amps") && !note.contains(" kW)"), "{note}");
    // Its specific power in US units: 6.15 kW per m³/min is 6.15 / 35.3147 × 100 = 17.4 kW/100 cfm
    // (NIST SP 811 ft³ factor).
    let us = crate::core::display::Fmt::new(
        crate::core::units::UnitSystem::Us,
        crate::core::units::PressureAbs(crate::core::units::P_STD_ATM),
    );
    let said = crate::core::display::render_parts(&col(&s, "Flow rate").note_parts, &us);
    assert!(said.contains("17.4 kW/100 cfm") && !said.contains("m³"), "{said}");
    // A flow no unit makes plausible stays for the auditor.
    let rows: Vec<String> = (0..10).map(|i| format!("{};{}", 45, 100 + i)).collect();
    let s = sniff(&file("Power;Flow", &rows)).unwrap();
    assert_eq!(q_u(&s, "Flow"), (None, None));
    assert!(col(&s, "Flow").note.as_deref().unwrap().contains("choose it"));
    // A stated unit is kept whatever the power.
    let s = sniff(&file("Power;Flow [m3/min]", &rows)).unwrap();
    assert_eq!(q_u(&s, "Flow [m3/min]"), some("flow", "m3_min"));
    // Without power or volts and amps, the values' range rule stands: up to 60 is m³/min.
    let rows: Vec<String> = (0..10).map(|i| format!("{}", 7 + i % 2)).collect();
    let s = sniff(&file("Flow", &rows)).unwrap();
    assert_eq!(q_u(&s, "Flow"), some("flow", "m3_min"));
}

/// A value of tests/reference/fixture.json (written by make_reference.py).
fn reference(name: &str) -> f64 {
    let f: serde_json::Value =
        serde_json::from_str(include_str!("../../../tests/reference/fixture.json")).unwrap();
    f["values"][name]["value"].as_f64().unwrap_or_else(|| panic!("fixture has no value {name}"))
}

#[test]
fn magnus_humidity_matches_coolprop_humid_air() {
    // CoolProp 8.0.0 HAPropsSI (Hyland-Wexler with enhancement factor) at 101,325 Pa; the Magnus
    // form with Alduchov and Eskridge's coefficients stays within 0.01 of it over this range
    // (dew points above 0 °C: below it CoolProp reads a frost point, over ice).
    for (t, d, name) in [
        (20.0, 10.0, "humidity.rh_t20_dew10"),
        (36.0, 24.0, "humidity.rh_t36_dew24"),
        (8.0, 2.0, "humidity.rh_t8_dew2"),
        (45.0, 20.0, "humidity.rh_t45_dew20"),
    ] {
        let rh = super::physics::relative_humidity(t, d);
        assert!((rh - reference(name)).abs() < 0.01, "{t} °C, dew {d} °C: {rh} against {}", reference(name));
    }
}

/// Rows of (temperature, dew point, humidity %) logged in `unit`, from air states chosen in °C
/// with the humidity computed by the formula and rounded as a weather logger rounds.
fn weather_rows(unit: &str) -> Vec<String> {
    let states = [(2.0, -4.0), (5.0, 1.0), (9.0, 3.0), (12.0, 2.0), (15.0, 9.0), (18.0, 14.0), (21.0, 10.0)];
    states
        .iter()
        .map(|&(t, d): &(f64, f64)| {
            let rh = super::physics::relative_humidity(t, d) * 100.0;
            let show = |c: f64| if unit == "F" { c * 1.8 + 32.0 } else { c };
            format!("{:.2};{:.2};{:.0}", show(t), show(d), rh)
        })
        .collect()
}

#[test]
fn temperatures_without_unit_follow_the_logged_humidity() {
    // The same air logged in °F and in °C, no unit anywhere: only the right unit makes temperature,
    // dew point and humidity agree (°F readings of 35-70 also sit inside the °C range).
    for unit in ["F", "C"] {
        let s = sniff(&file("temperature;dewPoint;humidity", &weather_rows(unit))).unwrap();
        assert_eq!(q_u(&s, "temperature"), some("temperature", unit), "logged in {unit}");
        assert_eq!(q_u(&s, "dewPoint"), some("temperature", unit), "logged in {unit}");
        assert!(col(&s, "temperature").note.as_deref().unwrap_or("").contains("Magnus"));
    }
    // Without a humidity column nothing decides: the range rule's °C stays, with no such note.
    let rows: Vec<String> =
        weather_rows("F").iter().map(|r| r.rsplit_once(';').unwrap().0.to_string()).collect();
    let s = sniff(&file("temperature;dewPoint", &rows)).unwrap();
    assert_eq!(q_u(&s, "temperature"), some("temperature", "C"));
}
