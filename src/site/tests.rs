use super::*;

#[test]
fn site_atmosphere_follows_altitude_unless_given() {
    let mut s = SiteRecord::default();
    s.apply(&SitePatch { altitude_m: Some(1000.0), ..Default::default() }).unwrap();
    // ASHRAE Fundamentals ch. 1 eq. 3: 1000 m -> 89.875 kPa.
    assert!((s.atmospheric_pressure_kpa_abs() - 89.875).abs() < 0.01);
    s.apply(&SitePatch { atmospheric_pressure_kpa_abs: Some(95.0), ..Default::default() }).unwrap();
    assert_eq!(s.atmospheric_pressure_kpa_abs(), 95.0);
    s.apply(&SitePatch { atmospheric_from_altitude: Some(true), ..Default::default() }).unwrap();
    assert!((s.atmospheric_pressure_kpa_abs() - 89.875).abs() < 0.01);
}

#[test]
fn bad_site_values_name_their_field() {
    let mut s = SiteRecord::default();
    let e = s.apply(&SitePatch { timezone: Some("Mars/Olympus".into()), ..Default::default() });
    assert_eq!(e.unwrap_err().field, "timezone");
    let e = s.apply(&SitePatch { heater_efficiency: Some(0.0), ..Default::default() });
    assert_eq!(e.unwrap_err().field, "heater_efficiency");
}

#[test]
fn compressor_defaults_its_unloaded_fraction_by_kind() {
    let c = CompressorInput {
        tag: " C2 ".into(),
        kind: "lubricated_screw".into(),
        control: "load_unload".into(),
        cooling: "air".into(),
        rated_power_kw: 55.0,
        rated_flow_m3_min: 9.5,
        rated_pressure_bar_g: 7.5,
        ..Default::default()
    };
    let r = c.validate().unwrap();
    assert_eq!(r.tag, "C2");
    assert_eq!(r.unloaded_power_fraction, 0.25);
    let bad = CompressorInput { kind: "turbo".into(), ..c };
    assert_eq!(bad.validate().unwrap_err().field, "kind");
}
