use super::*;
use crate::core::units::{PressureAbs, Temperature};

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

fn sea_level() -> SiteAir {
    SiteAir { atmosphere: PressureAbs(101_325.0), inlet_temperature: Temperature::from_c(20.0) }
}

/// The published orifice table's basis: free air at 14.7 psia, 20 °C.
fn us_site() -> SiteAir {
    SiteAir {
        atmosphere: PressureAbs::from_psig(14.7, PressureAbs(0.0)),
        inlet_temperature: Temperature::from_c(20.0),
    }
}

fn timer(orifice_mm: f64, open_s: f64, interval_s: f64, cd: Option<f64>) -> Drain {
    Drain {
        tag: "T1".into(),
        kind: DrainKind::Timer,
        open_s: Some(open_s),
        interval_s: Some(interval_s),
        orifice_mm: Some(orifice_mm),
        discharge_coefficient: cd,
    }
}

#[test]
fn timer_drain_matches_fluids() {
    // fixture: fluids 1.3.1 API 520 nozzle (Kd 1) x Cd 0.61 at 7 bar(g), 3 mm, open 5 s in 300 s.
    let site = sea_level();
    let line = PressureAbs::from_bar_g(7.0, site.atmosphere);
    let q = timer(3.0, 5.0, 300.0, None).air(line, &site).unwrap();
    let want = reference("treatment.timer_drain_3mm_7barg_5s_300s_m3_min");
    assert!(rel(q.m3_min(), want) < 1e-3, "{} vs {want}", q.m3_min());
}

#[test]
fn timer_drain_follows_the_published_orifice_table() {
    // The orifice discharge table quoted in the US DOE sourcebook's leaks fact sheet (from
    // memory): a 1/8 in orifice at 100 psig, coefficient 1, passes 26.01 cfm. Open 10 s every
    // 10 min, the drain loses 1/60 of it.
    let site = us_site();
    let line = PressureAbs::from_psig(100.0, site.atmosphere);
    let q = timer(25.4 / 8.0, 10.0, 600.0, Some(1.0)).air(line, &site).unwrap();
    assert!(rel(q.cfm(), 26.01 / 60.0) < 0.01, "{} cfm", q.cfm());
    // A level-sensing drain loses nothing; a drain left open loses the whole orifice flow.
    let zero = Drain { kind: DrainKind::ZeroLoss, ..timer(3.0, 5.0, 300.0, None) };
    assert_eq!(zero.air(line, &site).unwrap().m3_min(), 0.0);
    let open = Drain { kind: DrainKind::ManualOpen, ..timer(25.4 / 8.0, 10.0, 600.0, Some(1.0)) };
    assert!(rel(open.air(line, &site).unwrap().cfm(), 26.01) < 0.01);
}

#[test]
fn heatless_dryer_purge_and_dew_point_saving_by_hand() {
    // A heatless desiccant dryer rated 10 m³/min purging 15 % on a fixed cycle, 4 m³/min through it.
    let d = Dryer {
        tag: "D1".into(),
        kind: DryerKind::HeatlessDesiccant,
        rated_flow: FreeAirFlow::from_m3_min(10.0),
        purge_fraction: Some(0.15),
        power_kw: 0.3,
        control: DryerControl::FixedCycle,
    };
    let f = d.figures(FreeAirFlow::from_m3_min(4.0));
    // Written out: purge = 10 x 0.15 = 1.5 m³/min whatever the load; with dew-point control it
    // follows the load 4/10: 1.5 x 0.4 = 0.6 m³/min; the saving is 0.9 m³/min.
    assert!((f.purge.m3_min() - 1.5).abs() < 1e-12);
    assert!((f.purge_with_dew_point_control.m3_min() - 0.6).abs() < 1e-12);
    assert!((f.load - 0.4).abs() < 1e-12);
    // Its cost at 6.0 kW per m³/min marginal, 8,760 h, 0.15 per kWh: 1.5 x 6 x 8760 x 0.15 = 11,826.
    let cost = f.purge.m3_min() * 6.0 * 8760.0 * 0.15;
    assert!((cost - 11_826.0).abs() < 1e-6);
    // The same dryer with dew-point control purges 0.6.
    let dp = Dryer { control: DryerControl::DewPoint, ..d.clone() };
    assert!((dp.figures(FreeAirFlow::from_m3_min(4.0)).purge.m3_min() - 0.6).abs() < 1e-12);
    // Defaults by kind where the record gives no purge.
    let blank = Dryer { purge_fraction: None, ..d.clone() };
    assert_eq!(blank.purge_fraction(), 0.15);
    let refrigerated = Dryer { kind: DryerKind::Refrigerated, purge_fraction: Some(0.2), ..d };
    assert_eq!(refrigerated.figures(FreeAirFlow::from_m3_min(4.0)).purge.m3_min(), 0.0);
}

#[test]
fn cycling_refrigerated_dryer_follows_the_load() {
    let d = Dryer {
        tag: "D2".into(),
        kind: DryerKind::RefrigeratedCycling,
        rated_flow: FreeAirFlow::from_m3_min(20.0),
        purge_fraction: None,
        power_kw: 4.0,
        control: DryerControl::FixedCycle,
    };
    assert!((d.figures(FreeAirFlow::from_m3_min(5.0)).power_kw - 1.0).abs() < 1e-12);
    let fixed = Dryer { kind: DryerKind::Refrigerated, ..d };
    assert_eq!(fixed.figures(FreeAirFlow::from_m3_min(5.0)).power_kw, 4.0);
}

#[test]
fn an_end_use_without_its_air_or_with_both_is_refused_in_the_forms_words() {
    let use_ = |flow: Option<f64>, orifice: Option<f64>| EndUse {
        name: "blow-off".into(),
        kind: EndUseKind::OpenBlowing,
        count: 1,
        flow_m3_min: flow,
        orifice_mm: orifice,
        pressure_bar_g: Some(6.0),
        duty: 0.5,
        regulated: false,
        alternative_kw: None,
    };
    for (flow, orifice, words) in [
        (None, None, "give a flow per use while running or an opening"),
        (Some(0.2), Some(2.0), "give a flow per use or an opening, not both"),
    ] {
        let e = use_(flow, orifice).validate().unwrap_err();
        assert_eq!((e.field, e.message.as_str()), ("flow_m3_min", words));
        assert!(!e.message.contains('_'), "an internal field name: {}", e.message);
    }
}

#[test]
fn end_uses_by_orifice_and_by_rated_flow() {
    let site = us_site();
    // Four 1/16 in nozzles at 100 psig, blowing half the time: the orifice table's 6.502 cfm each
    // (US DOE sourcebook, from memory) x 4 x 0.5 = 13.0 cfm.
    let psig100 = PressureAbs::from_psig(100.0, site.atmosphere).bar_g(site.atmosphere);
    let nozzles = EndUse {
        name: "blow-off".into(),
        kind: EndUseKind::OpenBlowing,
        count: 4,
        flow_m3_min: None,
        orifice_mm: Some(25.4 / 16.0),
        pressure_bar_g: Some(psig100),
        duty: 0.5,
        regulated: false,
        alternative_kw: Some(0.75),
    };
    assert!(rel(nozzles.mean_flow(&site).unwrap().cfm(), 13.004) < 0.01);
    let tools = EndUse {
        name: "nutrunners".into(),
        kind: EndUseKind::Tool,
        count: 10,
        flow_m3_min: Some(0.5),
        orifice_mm: None,
        pressure_bar_g: Some(6.0),
        duty: 0.2,
        regulated: true,
        alternative_kw: None,
    };
    // Ten tools of 0.5 m³/min running a fifth of the time: 1.0 m³/min.
    assert!((tools.mean_flow(&site).unwrap().m3_min() - 1.0).abs() < 1e-12);
    // The electric alternative, by hand: air q m³/min x 6 kW/(m³/min) x 4000 h, less 0.75 kW x 4
    // x 0.5 x 4000 h = 6,000 kWh.
    let q = nozzles.mean_flow(&site).unwrap().m3_min();
    let saving = inappropriate_use_saving_kwh(&nozzles, &site, 6.0, 4000.0).unwrap().unwrap();
    assert!((saving - (q * 6.0 * 4000.0 - 6000.0)).abs() < 1e-6);
}

#[test]
fn demand_split_sums_to_the_metered_flow() {
    let f = FreeAirFlow::from_m3_min;
    let s = DemandSplit::new(f(20.0), f(11.0), f(1.3), f(1.9), f(4.2));
    assert!((s.total_m3_min() - 20.0).abs() < 1e-12);
    assert!((s.unexplained_m3_min - 1.6).abs() < 1e-12);
    assert!(!s.over_explained());
    let over = DemandSplit::new(f(10.0), f(11.0), f(0.0), f(0.0), f(1.0));
    assert!((over.total_m3_min() - 10.0).abs() < 1e-12);
    assert!(over.over_explained());
}

#[test]
fn bad_records_name_their_field() {
    let d = Dryer {
        tag: "D1".into(),
        kind: DryerKind::HeatlessDesiccant,
        rated_flow: FreeAirFlow::from_m3_min(10.0),
        purge_fraction: Some(1.5),
        power_kw: 0.3,
        control: DryerControl::FixedCycle,
    };
    assert_eq!(d.validate().unwrap_err().field, "purge_fraction");
    assert_eq!(timer(-3.0, 5.0, 300.0, None).validate().unwrap_err().field, "orifice_mm");
    assert_eq!(timer(3.0, 400.0, 300.0, None).validate().unwrap_err().field, "open_s");
    let e = DryerKind::parse("silica", "kind").unwrap_err();
    assert_eq!(e.field, "kind");
    assert!(e.message.contains("heatless_desiccant"), "{}", e.message);
    assert_eq!(EndUseKind::parse("vortex_cooler", "kind").unwrap(), EndUseKind::VortexCooler);
    assert_eq!(DrainKind::parse("zero_loss", "kind").unwrap(), DrainKind::ZeroLoss);
}

#[test]
fn plant_figures_by_hand() {
    // One heatless dryer (10 m³/min, 15 %, fixed cycle), one level-sensing drain, production uses
    // of 4 m³/min and 1 m³/min of open blowing over a 50 % production share, 3 m³/min of leaks, on a
    // plant metered at 10 m³/min mean, 6 kW/(m³/min) marginal, 6,000 running h, 0.2 per kWh.
    let site = sea_level();
    let records = Records {
        dryers: vec![Dryer {
            tag: "D1".into(),
            kind: DryerKind::HeatlessDesiccant,
            rated_flow: FreeAirFlow::from_m3_min(10.0),
            purge_fraction: Some(0.15),
            power_kw: 0.2,
            control: DryerControl::FixedCycle,
        }],
        drains: vec![Drain { kind: DrainKind::ZeroLoss, ..timer(3.0, 5.0, 300.0, None) }],
        filters: vec![],
        end_uses: vec![
            tools(),
            EndUse {
                name: "blow-off".into(),
                kind: EndUseKind::OpenBlowing,
                count: 2,
                flow_m3_min: Some(0.5),
                orifice_mm: None,
                pressure_bar_g: None,
                duty: 1.0,
                regulated: false,
                alternative_kw: Some(0.5),
            },
        ],
    };
    let plant = PlantFigures {
        mean_flow_m3_min: Some(10.0),
        production_share_of_time: 0.5,
        annual_running_hours: 6000.0,
        annual_production_hours: 4000.0,
        marginal_kw_per_m3_min: 6.0,
        price_per_kwh: 0.2,
        line_pressure_bar_g: 7.0,
        leak_flow_m3_min: Some(3.0),
    };
    let (t, split) = figures(&records, &plant, &site).unwrap();
    let split = split.expect("a split of the known mean flow");
    // Purge 1.5 m³/min x 6 x 6000 = 54,000 kWh, 10,800 a year; the dryer sees 10 of 10 m³/min,
    // so dew-point control saves nothing at full load.
    assert!((t.dryers[0].annual_purge_kwh - 54_000.0).abs() < 1e-6);
    assert!((t.dryers[0].annual_purge_cost - 10_800.0).abs() < 1e-6);
    assert!(t.dryers[0].dew_point_control_saving_kwh.unwrap().abs() < 1e-9);
    assert_eq!(t.drains[0].air_m3_min, 0.0);
    // Blow-off: 1.0 m³/min over 4000 h x 6 = 24,000 kWh of air, less 0.5 x 2 x 4000 = 4,000 kWh.
    assert!((t.end_uses[1].alternative_saving_kwh.unwrap() - 20_000.0).abs() < 1e-6);
    // Split: production 4 x 0.5 = 2, inappropriate 1 x 0.5 = 0.5, purge 1.5, leaks 3, rest 3.
    assert!((split.production_m3_min - 2.0).abs() < 1e-12);
    assert!((split.inappropriate_m3_min - 0.5).abs() < 1e-12);
    assert!((split.purge_and_drains_m3_min - 1.5).abs() < 1e-12);
    assert!((split.unexplained_m3_min - 3.0).abs() < 1e-12);
    assert!((split.total_m3_min() - 10.0).abs() < 1e-12);
}

fn filter(clean: f64, measured: f64) -> Filter {
    Filter {
        tag: "F1".into(),
        kind: FilterKind::Coalescing,
        rated_flow: FreeAirFlow::from_m3_min(10.0),
        clean_drop_bar: clean,
        measured_drop_bar: measured,
        element_change_months: None,
        element_cost: None,
    }
}

#[test]
fn filter_excess_drop_follows_the_flow_squared_rule_by_hand() {
    // Drop ∝ flow² (common practice): a filter rated 10 m³/min, 0.10 bar clean, at 8 m³/min drops
    // 0.10 × (8/10)² = 0.064 bar clean; read at 0.45 bar, its excess is 0.386 bar.
    let f = filter(0.10, 0.45).figures(FreeAirFlow::from_m3_min(8.0));
    assert!((f.clean_drop_at_flow_bar - 0.064).abs() < 1e-12, "{}", f.clean_drop_at_flow_bar);
    assert!((f.excess_drop_bar - 0.386).abs() < 1e-12, "{}", f.excess_drop_bar);
    // At 12 m³/min, above rating: 0.10 × 1.44 = 0.144 bar clean; 0.45 - 0.144 = 0.306 bar.
    let f = filter(0.10, 0.45).figures(FreeAirFlow::from_m3_min(12.0));
    assert!((f.excess_drop_bar - 0.306).abs() < 1e-12);
    // A drop read below the clean drop at that flow is no excess (a clean element, lightly loaded).
    assert_eq!(filter(0.10, 0.05).figures(FreeAirFlow::from_m3_min(10.0)).excess_drop_bar, 0.0);
    // In the transmission figures: the whole mean flow passes the filter; change above 0.1 bar.
    let records = Records { filters: vec![filter(0.10, 0.45), filter(0.10, 0.15)], ..Default::default() };
    let plant = PlantFigures {
        mean_flow_m3_min: Some(8.0),
        production_share_of_time: 1.0,
        annual_running_hours: 8000.0,
        annual_production_hours: 8000.0,
        marginal_kw_per_m3_min: 6.0,
        price_per_kwh: 0.2,
        line_pressure_bar_g: 7.0,
        leak_flow_m3_min: None,
    };
    let (t, split) = figures(&records, &plant, &sea_level()).unwrap();
    let split = split.expect("a split of the known mean flow");
    assert!((t.filters[0].excess_drop_bar - 0.386).abs() < 1e-12);
    assert!(t.filters[0].change_recommended);
    // 0.15 - 0.064 = 0.086 bar: under the 0.1 bar threshold.
    assert!((t.filters[1].excess_drop_bar - 0.086).abs() < 1e-12);
    assert!(!t.filters[1].change_recommended);
    // Filters use no air: the whole mean flow stays unexplained.
    assert!((split.unexplained_m3_min - 8.0).abs() < 1e-12);
}

#[test]
fn bad_filters_name_their_field() {
    let field = |f: Filter| f.validate().unwrap_err().field;
    assert_eq!(field(filter(-0.1, 0.3)), "clean_drop_bar");
    assert_eq!(field(filter(0.1, -0.2)), "measured_drop_bar");
    assert_eq!(field(filter(0.1, f64::NAN)), "measured_drop_bar");
    // A gauge pressure typed as a drop.
    assert_eq!(field(filter(0.1, 70.0)), "measured_drop_bar");
    assert_eq!(
        field(Filter { rated_flow: FreeAirFlow::from_m3_min(0.0), ..filter(0.1, 0.3) }),
        "rated_flow_m3_min"
    );
    assert_eq!(field(Filter { element_cost: Some(-5.0), ..filter(0.1, 0.3) }), "element_cost");
    assert_eq!(
        field(Filter { element_change_months: Some(0.0), ..filter(0.1, 0.3) }),
        "element_change_months"
    );
    assert_eq!(field(Filter { tag: " ".into(), ..filter(0.1, 0.3) }), "tag");
    let e = FilterKind::parse("sintered", "kind").unwrap_err();
    assert_eq!(e.field, "kind");
    assert!(e.message.contains("coalescing"), "{}", e.message);
}

#[test]
fn non_cycling_refrigerated_dryer_saving_by_hand() {
    // 4 kW non-cycling, rated 20 m³/min. At 5 m³/min through it (load 0.25) a cycling unit draws
    // 4 × 0.25 = 1 kW: 3 kW saved, 24 000 kWh over 8000 h. At 2 m³/min (load 0.10) the floor of
    // 0.2 holds: 4 × 0.8 = 3.2 kW saved. (Floor: common practice, from memory.)
    let d = Dryer {
        tag: "R1".into(),
        kind: DryerKind::Refrigerated,
        rated_flow: FreeAirFlow::from_m3_min(20.0),
        purge_fraction: None,
        power_kw: 4.0,
        control: DryerControl::FixedCycle,
    };
    assert!((d.figures(FreeAirFlow::from_m3_min(5.0)).cycling_saving_kw - 3.0).abs() < 1e-12);
    assert!((d.figures(FreeAirFlow::from_m3_min(2.0)).cycling_saving_kw - 3.2).abs() < 1e-12);
    // The cycling unit itself draws the floor at light load, and has nothing left to save.
    let cycling = Dryer { kind: DryerKind::RefrigeratedCycling, ..d.clone() };
    assert!((cycling.figures(FreeAirFlow::from_m3_min(2.0)).power_kw - 0.8).abs() < 1e-12);
    assert_eq!(cycling.figures(FreeAirFlow::from_m3_min(5.0)).cycling_saving_kw, 0.0);
    let plant = PlantFigures {
        mean_flow_m3_min: Some(5.0),
        production_share_of_time: 1.0,
        annual_running_hours: 8000.0,
        annual_production_hours: 8000.0,
        marginal_kw_per_m3_min: 6.0,
        price_per_kwh: 0.2,
        line_pressure_bar_g: 7.0,
        leak_flow_m3_min: None,
    };
    let (t, _) = figures(&Records { dryers: vec![d], ..Default::default() }, &plant, &sea_level()).unwrap();
    assert!((t.dryers[0].cycling_saving_kwh.unwrap() - 24_000.0).abs() < 1e-9);
    assert!((t.dryers[0].load.unwrap() - 0.25).abs() < 1e-12);
}

#[test]
fn without_a_mean_flow_only_what_needs_it_is_left_out() {
    // A fixed-cycle heatless dryer (10 m³/min, 15 %), the same under dew-point control, a timer
    // drain, 8 tools of 1 m³/min at a duty of 0.5, a filter; 6 kW/(m³/min) marginal, 6,000 running
    // h. No mean flow known: the fixed cycle purges 10 × 0.15 = 1.5 m³/min at any flow (1.5 × 6 ×
    // 6,000 = 54,000 kWh a year), the drain loses what its orifice and line pressure give, the
    // tools use 8 × 1 × 0.5 = 4 m³/min in production; the dew-point dryer's purge, the filter's
    // drop at the flow, the fixed cycle's saving by dew-point control and the split need the flow.
    let site = sea_level();
    let dryer = Dryer {
        tag: "D1".into(),
        kind: DryerKind::HeatlessDesiccant,
        rated_flow: FreeAirFlow::from_m3_min(10.0),
        purge_fraction: Some(0.15),
        power_kw: 0.2,
        control: DryerControl::FixedCycle,
    };
    let records = Records {
        dryers: vec![dryer.clone(), Dryer { tag: "D2".into(), control: DryerControl::DewPoint, ..dryer }],
        drains: vec![timer(3.0, 5.0, 300.0, None)],
        filters: vec![filter(0.10, 0.45)],
        end_uses: vec![tools()],
    };
    let known = PlantFigures {
        mean_flow_m3_min: Some(8.0),
        production_share_of_time: 0.5,
        annual_running_hours: 6000.0,
        annual_production_hours: 4000.0,
        marginal_kw_per_m3_min: 6.0,
        price_per_kwh: 0.2,
        line_pressure_bar_g: 7.0,
        leak_flow_m3_min: None,
    };
    let (t, split) = figures(&records, &PlantFigures { mean_flow_m3_min: None, ..known }, &site).unwrap();
    assert!(split.is_none(), "no split of an unknown flow");
    assert_eq!(t.dryers.len(), 1, "the dew-point dryer's purge follows the flow");
    let d = &t.dryers[0];
    assert_eq!(d.tag, "D1");
    assert!((d.purge_m3_min - 1.5).abs() < 1e-12);
    assert!((d.annual_purge_kwh - 54_000.0).abs() < 1e-6);
    assert_eq!(
        (d.load, d.dew_point_control_saving_m3_min, d.dew_point_control_saving_kwh),
        (None, None, None)
    );
    assert_eq!(d.cycling_saving_kw, Some(0.0), "no cycling saving on a desiccant dryer at any flow");
    assert!(t.filters.is_empty());
    assert!((t.end_uses[0].production_mean_flow_m3_min - 4.0).abs() < 1e-12);
    // The drain's loss and the tools' air are those of the same records with the flow known.
    let (with, _) = figures(&records, &known, &site).unwrap();
    assert!(t.drains[0].air_m3_min > 0.0);
    assert_eq!(t.drains, with.drains);
    assert_eq!(t.end_uses, with.end_uses);
    assert_eq!(with.dryers.len(), 2);
}

/// Eight regulated tools of 1 m³/min each at a 50 % duty.
fn tools() -> EndUse {
    EndUse {
        name: "tools".into(),
        kind: EndUseKind::Tool,
        count: 8,
        flow_m3_min: Some(1.0),
        orifice_mm: None,
        pressure_bar_g: None,
        duty: 0.5,
        regulated: true,
        alternative_kw: None,
    }
}
