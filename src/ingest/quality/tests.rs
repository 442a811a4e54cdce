use super::gaps::{Intervals, MAX_DISTINCT_INTERVALS};
use super::*;
use crate::core::units::T_ZERO_C;
use crate::ingest::mapping::{ChannelDef, Converter};

fn chan(q: Quantity, unit: &str) -> ChannelDef {
    ChannelDef {
        quantity: q,
        compressor: Some("C1".into()),
        label: format!("C1 {unit}"),
        point: Default::default(),
        point_stated: false,
        unit: unit.into(),
        column_index: 1,
        basis: crate::core::basis::Basis::Site,
        current: None,
    }
}

#[test]
fn gaps_duplicates_and_out_of_order_at_one_second() {
    let ch = [chan(Quantity::Power, "kW")];
    let conv = [Converter::Linear { scale: 1000.0, offset: 0.0 }];
    let mut q = QualityTracker::new(&ch, &conv, 101_325.0);
    let mut t = 0i64;
    let mut line = 1;
    let mut step = |q: &mut QualityTracker, t: i64| {
        line += 1;
        q.row(line, t);
        q.reading(0, line, t, 5000.0 + (t % 7) as f64);
    };
    for _ in 0..100 {
        t += 1000;
        step(&mut q, t);
    }
    t += 60_000; // a one-minute gap: > 3 x 1 s
    step(&mut q, t);
    step(&mut q, t); // duplicate
    step(&mut q, t - 500); // out of order
    for _ in 0..10 {
        t += 1000;
        step(&mut q, t);
    }
    let r = q.finish();
    assert_eq!(r.file.median_interval_s, Some(1.0));
    assert_eq!(r.file.gaps.count, 1);
    assert_eq!(r.file.gaps.longest_s, Some(60.0));
    assert_eq!(r.file.gaps.examples[0].start, "1970-01-01T00:01:40Z");
    assert_eq!(r.file.duplicate_timestamps.count, 1);
    assert_eq!(r.file.out_of_order.count, 1);
    let w = r.warnings("UTC");
    assert!(w[0].starts_with("1 gap longer than 3x the 1 s logging interval; the longest is 1 min"), "{w:?}");
    assert!(w.iter().any(|s| s.starts_with("1 duplicate timestamp (first at line 103")), "{w:?}");
}

#[test]
fn flat_line_needs_thirty_minutes_and_thirty_readings() {
    let ch = [chan(Quantity::Pressure, "bar_g")];
    let conv = [Converter::Linear { scale: 1e5, offset: 101_325.0 }];
    let mut q = QualityTracker::new(&ch, &conv, 101_325.0);
    // 40 readings 1 min apart at 7 bar g: 39 min, flat. Then 20 readings at 6 bar g 2 min apart
    // (38 min but only 20 readings): not flat.
    for i in 0..40 {
        q.reading(0, i + 2, i as i64 * 60_000, 7e5 + 101_325.0);
    }
    for i in 40..60 {
        q.reading(0, i + 2, (40 + (i as i64 - 40) * 2) * 60_000, 6e5 + 101_325.0);
    }
    let r = q.finish();
    let f = &r.channels[0].flat_lines;
    assert_eq!(f.count, 1);
    assert_eq!(f.examples[0].readings, 40);
    assert!((f.examples[0].value - 7.0).abs() < 1e-12);
    assert_eq!(f.examples[0].duration_s, 39.0 * 60.0);
    // Units as people write them (the mapping's bar_g is bar(g)).
    assert!(
        r.warnings("UTC")[0].contains("the longest is 7.00 bar(g) for 39 min"),
        "{:?}",
        r.warnings("UTC")
    );
}

#[test]
fn counter_reset_and_rollover_are_told_apart() {
    let ch = [chan(Quantity::Energy, "kWh")];
    let conv = [Converter::Linear { scale: 3.6e6, offset: 0.0 }];
    let mut q = QualityTracker::new(&ch, &conv, 101_325.0);
    for (i, kwh) in [99_990.0, 99_998.0, 3.0, 10.0, 5.0].iter().enumerate() {
        q.reading(0, i as u64 + 2, i as i64 * 1000, kwh * 3.6e6);
    }
    let r = q.finish();
    let d = &r.channels[0].counter_drops;
    assert_eq!(d.count, 2);
    assert_eq!((d.examples[0].kind.as_str(), d.examples[0].line), ("rollover", 4));
    assert_eq!((d.examples[1].kind.as_str(), d.examples[1].previous), ("reset", 10.0));
}

#[test]
fn out_of_range_values_are_reported_in_the_logged_unit() {
    let ch = [chan(Quantity::Temperature, "C"), chan(Quantity::Pressure, "psig")];
    let conv = [
        Converter::Linear { scale: 1.0, offset: T_ZERO_C },
        Converter::Linear { scale: 6894.757293168, offset: 101_325.0 },
    ];
    let mut q = QualityTracker::new(&ch, &conv, 101_325.0);
    q.reading(0, 2, 0, T_ZERO_C + 250.0);
    q.reading(0, 3, 1000, T_ZERO_C + 20.0);
    q.reading(1, 2, 0, 2000.0 * 6894.757293168 + 101_325.0); // 2000 psig > 100 bar g
    let r = q.finish();
    assert_eq!(r.channels[0].out_of_range.count, 1);
    assert!((r.channels[0].out_of_range.examples[0].value - 250.0).abs() < 1e-9);
    assert_eq!(r.channels[1].out_of_range.examples[0].reason, "above 100 bar(g)");
}

#[test]
fn the_median_interval_survives_clock_jitter_and_many_distinct_spacings() {
    let mut iv = Intervals::default();
    let mut t = 0;
    // 999/1000/1000/1001 ms repeating (median 1000), then 10,000 distinct spacings of an
    // event logger, fewer than the regular ones.
    for i in 0..40_000 {
        t += [999, 1000, 1000, 1001][i % 4];
        iv.observe(t);
    }
    for k in 0..10_000 {
        t += 5_000 + k;
        iv.observe(t);
    }
    assert_eq!(iv.median_ms(), Some(1000));
    let r = iv.report(Some(1000));
    // Every event spacing (5.000 to 14.999 s) is longer than 3 s: 10,000 gaps, although only
    // 4096 - 3 of them fit in the histogram of distinct spacings.
    assert_eq!(r.longest_s, Some(14.999));
    assert_eq!(r.count, 10_000);
    assert!(!r.count_at_least);
    assert_eq!(r.examples.len(), MAX_EXAMPLES);
}

#[test]
fn a_threshold_between_left_out_spacings_gives_a_lower_bound() {
    let mut iv = Intervals::default();
    let mut t = 0;
    // 1 s spacings, then distinct spacings from 10 s up until the histogram is full.
    for _ in 0..100 {
        t += 1000;
        iv.observe(t);
    }
    for k in 0..(MAX_DISTINCT_INTERVALS as i64 - 1) {
        t += 10_000 + k;
        iv.observe(t);
    }
    // Two spacings with no room left: 2 s and 5 s.
    for dt in [2000, 5000] {
        t += dt;
        iv.observe(t);
    }
    // Against 3x a spacing of this series (3 s) the count is exact: the 4095 long ones and 5 s.
    let r = iv.report(Some(1000));
    assert_eq!((r.count, r.count_at_least), (MAX_DISTINCT_INTERVALS as u64, false));
    // Against 4.5 s (3x another series' median), 5 s lies between the possible thresholds 3 s
    // and 30 s with nothing to tell it from a 4 s spacing: at least the 4095 long ones.
    let r = iv.report(Some(1500));
    assert_eq!((r.count, r.count_at_least), (MAX_DISTINCT_INTERVALS as u64 - 1, true));
    let mut report = QualityReport::default();
    report.file.gaps = r;
    report.file.median_interval_s = Some(1.5);
    let w = report.warnings("UTC");
    assert!(w[0].starts_with("at least 4095 gaps longer than 3x the 1.5 s logging interval"), "{w:?}");
    // The JSON names the lower bound only when there is one.
    let json = serde_json::to_value(&report.file.gaps).unwrap();
    assert_eq!(json["count_at_least"], true);
    let exact = serde_json::to_value(iv.report(Some(1000))).unwrap();
    assert!(exact.get("count_at_least").is_none());
}

#[test]
fn negative_gauge_pressure_on_a_compressed_air_line_is_out_of_range() {
    // 7.5 bar g, then -0.4 bar g (a mismapped column), then -0.05 bar g: a transmitter's zero error
    // on a vented line, within the 0.1 bar allowance.
    let ch = [ChannelDef { compressor: None, ..chan(Quantity::Pressure, "bar_g") }];
    let conv = [Converter::Linear { scale: 1e5, offset: 101_325.0 }];
    let mut q = QualityTracker::new(&ch, &conv, 101_325.0);
    for (i, bar_g) in [7.5, -0.4, -0.05].into_iter().enumerate() {
        q.reading(0, i as u64 + 2, i as i64 * 60_000, bar_g * 1e5 + 101_325.0);
    }
    let r = q.finish();
    let o = &r.channels[0].out_of_range;
    assert_eq!(o.count, 1);
    assert_eq!((o.examples[0].line, o.examples[0].value), (3, -0.4));
    assert!(o.examples[0].reason.starts_with("negative gauge pressure"));
    assert!(r.warnings("UTC").iter().any(|w| w.contains("negative gauge pressure") && w.contains("line 3")));
}

#[test]
fn power_and_flow_far_above_the_data_sheets_are_implausible() {
    // C1 rated 55 kW and 9.5 m³/min, C2 6 m³/min: 69 kW > 1.25 x 55 = 68.75 kW (module doc: a
    // motor's service factor of 1.15 and the fan, common practice); a system flow of 24 m³/min > 1.5
    // x 15.5 = 23.25 m³/min. 68 kW and 23 m³/min would pass. A reading a minute: each is the mean
    // over its minute, the last one too.
    let ch = [
        chan(Quantity::Power, "kW"),
        ChannelDef { compressor: None, label: "Flow".into(), ..chan(Quantity::Flow, "m3_min") },
    ];
    let conv = [
        Converter::Linear { scale: 1000.0, offset: 0.0 },
        Converter::Linear { scale: 1.0 / 60.0, offset: 0.0 },
    ];
    let rated = [
        RatedMachine { tag: "C1".into(), rated_power_kw: 55.0, rated_flow_m3_min: 9.5 },
        RatedMachine { tag: "C2".into(), rated_power_kw: 37.0, rated_flow_m3_min: 6.0 },
    ];
    let report = |kw: f64, m3_min: f64| {
        let mut q = QualityTracker::new(&ch, &conv, 101_325.0);
        q.reading(0, 2, 0, 40_000.0);
        q.reading(0, 3, 60_000, kw * 1000.0);
        q.reading(1, 3, 60_000, m3_min / 60.0);
        let mut r = q.finish();
        r.check_against_rated(&rated);
        r
    };
    let r = report(69.0, 24.0);
    assert_eq!(r.channels[0].implausible.len(), 1);
    assert_eq!((r.channels[0].implausible[0].line, r.channels[0].implausible[0].value), (3, 69.0));
    assert!(r.channels[0].implausible[0].reason.contains(
        "power of C1 (the mean over a minute or more) up to 69.0 kW, above 1.25 x its rated 55 kW (a motor's \
         service factor of 1.15"
    ));
    assert!(r.channels[1].implausible[0]
        .reason
        .starts_with("system flow up to 24.0 m³/min free air, above 1.5 x the 15.5 m³/min free air"));
    assert!(r.warnings("UTC").iter().any(|w| w.starts_with("C1 kW: implausible: power of C1 (the mean")));
    let r = report(68.0, 23.0);
    assert!(r.channels.iter().all(|c| c.implausible.is_empty()));
    // A column in W read as kW: 78,899,000 kW is said grouped and in MW (78,899,000 / 1,000).
    let r = report(78_899_000.0, 1.0);
    assert!(
        r.channels[0].implausible[0].reason.starts_with(
            "power of C1 (the mean over a minute or more) up to 78,899 MW, above 1.25 x its rated 55 kW"
        ),
        "{}",
        r.channels[0].implausible[0].reason
    );
}

#[test]
fn a_counters_power_far_above_the_data_sheet_is_implausible_and_its_last_digit_is_not() {
    // An energy counter in kWh with a resolution of 0.1 kWh, read every 2 s for 10 min while the
    // machine draws 36 kW: 0.02 kWh a reading, so the register steps 0.1 kWh every 10 s. Between
    // two readings that is 0.1 kWh in 2 s = 180 kW; over each minute it is 0.6 kWh = 36 kW exactly
    // (the register is read at whole minutes, a step falls on each). Then a reset to zero and the
    // same again: no span runs across the reset.
    let ch = [chan(Quantity::Energy, "kWh")];
    let conv = [Converter::Linear { scale: 3.6e6, offset: 0.0 }];
    let report = |rated_kw: f64| {
        let mut q = QualityTracker::new(&ch, &conv, 101_325.0);
        let mut line = 1;
        for (start_kwh, t0) in [(500.0, 0i64), (0.0, 600_000)] {
            for i in 0..=300i64 {
                line += 1;
                let kwh = start_kwh + ((i as f64 * 0.02) * 10.0).floor() / 10.0;
                q.reading(0, line, t0 + i * 2000, kwh * 3.6e6);
            }
        }
        let mut r = q.finish();
        r.check_against_rated(&[RatedMachine {
            tag: "C1".into(),
            rated_power_kw: rated_kw,
            rated_flow_m3_min: 3.0,
        }]);
        r
    };
    // Rated 20 kW: 36 kW > 1.25 x 20 = 25 kW.
    let r = report(20.0);
    let c = &r.channels[0];
    let p = c.counter_power.as_ref().expect("the counter's power");
    assert!((p.value - 36.0).abs() < 1e-9, "{p:?}");
    assert_eq!(p.unit, "kW");
    assert_eq!(c.implausible.len(), 1, "{:?}", c.implausible);
    assert_eq!(
        c.implausible[0].reason,
        "power of C1 from its energy counter (the mean over a minute or more) up to 36.0 kW, above 1.25 x \
         its rated 20 kW (a motor's service factor of 1.15 and the fan's share allow some 25 % over the data \
         sheet at raised pressure, common practice): an energy logged in Wh read as kWh? check the unit, the \
         scale or the compressor of the column"
    );
    assert!(r
        .warnings("UTC")
        .iter()
        .any(|w| w.starts_with("C1 kWh: implausible: power of C1 from its energy counter")
            && w.contains("36 kW")));
    // Rated 30 kW: 36 kW < 37.5 kW. Read reading by reading, the last digit's 180 kW would flag it.
    assert!(report(30.0).channels[0].implausible.is_empty());
}

#[test]
fn a_power_column_is_checked_by_its_mean_over_a_minute_so_a_start_is_not_flagged() {
    // C1 rated 62 kW: 1.25 x 62 = 77.5 kW. At 1 s: 60 kW with a start's 3 s at 150 kW in the first
    // minute (mean (57 x 60 + 3 x 150) / 60 = 64.5 kW: no finding, though the highest reading is
    // 150 kW), then a minute at 84.3 kW (136 % of the data sheet, a walk's C2): flagged at 84.3 kW.
    let ch = [chan(Quantity::Power, "kW")];
    let conv = [Converter::Linear { scale: 1000.0, offset: 0.0 }];
    let report = |second_minute_kw: f64| {
        let mut q = QualityTracker::new(&ch, &conv, 101_325.0);
        for i in 0..180i64 {
            let kw = match i {
                0..=2 => 150.0,
                60..=119 => second_minute_kw,
                _ => 60.0,
            };
            q.reading(0, i as u64 + 2, i * 1000, kw * 1000.0);
        }
        let mut r = q.finish();
        r.check_against_rated(&[RatedMachine {
            tag: "C1".into(),
            rated_power_kw: 62.0,
            rated_flow_m3_min: 10.0,
        }]);
        r
    };
    let r = report(60.0);
    assert_eq!(r.channels[0].highest.as_ref().unwrap().value, 150.0);
    assert!((r.channels[0].sustained_power.as_ref().unwrap().value - 64.5).abs() < 1e-9);
    assert!(r.channels[0].implausible.is_empty(), "{:?}", r.channels[0].implausible);
    let r = report(84.3);
    let f = &r.channels[0].implausible[0];
    // The minute from line 62 (t = 60 s).
    assert_eq!(f.line, 62);
    assert!((f.value - 84.3).abs() < 1e-9, "{f:?}");
    assert!(f.reason.starts_with(
        "power of C1 (the mean over a minute or more) up to 84.3 kW, above 1.25 x its rated 62 kW"
    ));
}

/// A 55 kW machine at one reading a minute for an hour, each reading `kw(i)`, checked against its
/// data sheet, the column mapped in W.
fn a_55_kw_machine_in_w(kw: impl Fn(i64) -> f64) -> QualityReport {
    let ch = [chan(Quantity::Power, "W")];
    let conv = [Converter::Linear { scale: 1.0, offset: 0.0 }];
    let mut q = QualityTracker::new(&ch, &conv, 101_325.0);
    for i in 0..60i64 {
        q.reading(0, i as u64 + 2, i * 60_000, kw(i) * 1000.0);
    }
    let mut r = q.finish();
    r.check_against_rated(&[RatedMachine { tag: "C1".into(), rated_power_kw: 55.0, rated_flow_m3_min: 9.5 }]);
    r
}

#[test]
fn a_power_that_never_reaches_a_twentieth_of_the_data_sheet_is_implausible() {
    // A walk mapped a column logged in kW (up to about 4 kW) as W on a 55 kW machine: it read at
    // most 4 W and the quality report found nothing. An unloaded screw draws some 20-35 % of its
    // full-load power (common practice), so a machine that ran reads more than 5 % of its data
    // sheet: 5 % of 55 kW is 2.75 kW.
    let r = a_55_kw_machine_in_w(|i| if i == 30 { 0.0042 } else { 0.001 });
    let c = &r.channels[0];
    assert_eq!(c.implausible.len(), 1, "{:?}", c.implausible);
    let f = &c.implausible[0];
    assert_eq!((f.line, f.value), (32, 4.2));
    assert_eq!(
        f.reason,
        "power of C1 (the mean over a minute or more) never above 4.2 W, under 5 % of its rated 55 kW (a \
         screw compressor running unloaded draws some 20-35 % of its full-load power, common practice): a \
         power logged in kW read as W, the wrong column or compressor, or a machine that did not run while \
         the file was logged? check the unit, the scale or the compressor of the column"
    );
    let w = r.warnings("UTC");
    assert!(
        w.iter().any(|w| w.starts_with("C1 W: implausible: power of C1")
            && w.contains("at line 32 (as logged: 4.2 W)")),
        "{w:?}"
    );
    // An unloaded machine at 20 % of its data sheet, loaded once at 100 %: no finding; nor one
    // that only ever ran unloaded (11 kW, above 2.75 kW).
    assert!(a_55_kw_machine_in_w(|i| if i == 10 { 55.0 } else { 11.0 }).channels[0].implausible.is_empty());
    assert!(a_55_kw_machine_in_w(|_| 11.0).channels[0].implausible.is_empty());
    // Just above and just below the line.
    assert!(a_55_kw_machine_in_w(|i| if i == 5 { 2.76 } else { 0.0 }).channels[0].implausible.is_empty());
    assert_eq!(a_55_kw_machine_in_w(|i| if i == 5 { 2.74 } else { 0.0 }).channels[0].implausible.len(), 1);
}

#[test]
fn a_negative_power_is_out_of_range() {
    // A walk's file logged -2.7 W on a compressor and nothing said so: a motor's active power is
    // never below zero, so any negative reading is a finding (kept, as every finding).
    let r = a_55_kw_machine_in_w(|i| match i {
        3 => -0.0027,
        4 => -0.0001,
        _ => 40.0,
    });
    let o = &r.channels[0].out_of_range;
    assert_eq!(o.count, 2);
    assert_eq!((o.examples[0].line, o.examples[0].value), (5, -2.7));
    assert!(o.examples[0].reason.starts_with("negative power"));
    let w = r.warnings("UTC");
    assert!(
        w.iter().any(|w| w.starts_with("C1 W: 2 readings out of range (negative power")
            && w.contains("the first is -2.7 W at line 5 (as logged: -2.7 W)")),
        "{w:?}"
    );
    // Zero is no finding: a machine that is off.
    assert!(a_55_kw_machine_in_w(|i| if i < 30 { 0.0 } else { 40.0 }).channels[0].out_of_range.count == 0);
}
