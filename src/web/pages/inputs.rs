//! The forms' inputs in the reader's units (`core::entry`): the unit each field is labelled with,
//! the stored value as the field shows it, and the posted text read back to the stored value. A
//! form says which unit system it was drawn in (a hidden `entry_units` field), so a post is read
//! in the units its fields were labelled with even if the audit's switched in between; a form
//! without it (the API's clients, older pages) is SI.

use std::collections::HashMap;

use serde_json::{json, Value};

use crate::core::display::Num;
use crate::core::entry::{self, Entry};
use crate::core::units::UnitSystem;
use crate::site::FieldError;

/// The name of the hidden field that says which units a form was drawn in.
pub const UNITS_FIELD: &str = "entry_units";

#[derive(Debug, Clone, Copy)]
pub struct Inputs {
    pub units: UnitSystem,
}

impl Inputs {
    pub fn new(units: UnitSystem) -> Self {
        Self { units }
    }
    /// The units a posted form was drawn in.
    pub fn of_form(form: &HashMap<String, String>) -> Self {
        Self::new(form.get(UNITS_FIELD).and_then(|s| UnitSystem::parse(s.trim())).unwrap_or(UnitSystem::Si))
    }
    pub fn system(&self) -> &'static str {
        self.units.as_str()
    }
    pub fn is_us(&self) -> bool {
        self.units == UnitSystem::Us
    }

    // Labels of the fields' units.
    pub fn p_unit(&self) -> &'static str {
        Entry::GaugePressure.unit(self.units).label
    }
    pub fn q_unit(&self) -> &'static str {
        Entry::FreeAirFlow.unit(self.units).label
    }
    pub fn v_unit(&self) -> &'static str {
        Entry::Volume.unit(self.units).label
    }
    pub fn sp_unit(&self) -> &'static str {
        Entry::SpecificPower.unit(self.units).label
    }
    pub fn t_unit(&self) -> &'static str {
        Entry::Temperature.unit(self.units).label
    }
    pub fn alt_unit(&self) -> &'static str {
        Entry::Altitude.unit(self.units).label
    }
    pub fn d_unit(&self) -> &'static str {
        Entry::Diameter.unit(self.units).label
    }
    pub fn dp_unit(&self) -> &'static str {
        Entry::PressureDrop.unit(self.units).label
    }

    // Stored values as the fields show them.
    pub fn p(&self, bar_g: impl Num) -> String {
        Entry::GaugePressure.shown(self.units, bar_g.f())
    }
    pub fn q(&self, m3_min: impl Num) -> String {
        Entry::FreeAirFlow.shown(self.units, m3_min.f())
    }
    pub fn v(&self, m3: impl Num) -> String {
        Entry::Volume.shown(self.units, m3.f())
    }
    pub fn sp(&self, kw_per_m3_min: impl Num) -> String {
        Entry::SpecificPower.shown(self.units, kw_per_m3_min.f())
    }
    pub fn t(&self, c: impl Num) -> String {
        Entry::Temperature.shown(self.units, c.f())
    }
    pub fn atm_unit(&self) -> &'static str {
        Entry::Atmosphere.unit(self.units).label
    }
    pub fn atm(&self, kpa_abs: impl Num) -> String {
        Entry::Atmosphere.shown(self.units, kpa_abs.f())
    }
    pub fn alt(&self, m: impl Num) -> String {
        Entry::Altitude.shown(self.units, m.f())
    }
    /// A variable-speed curve as "flow:kW" pairs, the flow in these units.
    pub fn curve(&self, points: &[(f64, f64)]) -> String {
        points
            .iter()
            .map(|(q, kw)| format!("{}:{}", self.q(*q), entry::short(*kw)))
            .collect::<Vec<_>>()
            .join(" ")
    }

    /// An optional field of `kind`, read in these units; `previous` is kept when the text is
    /// what was shown for it.
    pub fn opt(
        &self,
        form: &HashMap<String, String>,
        key: &str,
        kind: Entry,
        previous: Option<f64>,
    ) -> Result<Option<f64>, FieldError> {
        match form.get(key).map(|s| s.trim()) {
            None | Some("") => Ok(None),
            Some(s) => kind.read(self.units, s, previous).map(Some).map_err(|e| {
                FieldError::new(
                    key,
                    format!("{} must be a number in {}: {e}", label_of(key), kind.unit(self.units).label),
                )
            }),
        }
    }

    /// A variable-speed curve "flow:kW flow:kW", the flow in these units; `previous` is kept when
    /// the text is what was shown for it.
    pub fn read_curve(
        &self,
        text: &str,
        previous: Option<&[(f64, f64)]>,
    ) -> Result<Vec<(f64, f64)>, FieldError> {
        let text = text.trim();
        if let Some(p) = previous {
            if text == self.curve(p) {
                return Ok(p.to_vec());
            }
        }
        text.split_whitespace()
            .map(|p| {
                let (q, kw) = p.split_once(':').ok_or_else(|| {
                    FieldError::new("power_curve", format!("write each point as flow:kW, got {p:?}"))
                })?;
                let q = Entry::FreeAirFlow
                    .read(self.units, q, None)
                    .map_err(|_| FieldError::new("power_curve", format!("bad flow in {p:?}")))?;
                let kw: f64 =
                    kw.parse().map_err(|_| FieldError::new("power_curve", format!("bad kW in {p:?}")))?;
                Ok((q, kw))
            })
            .collect()
    }

    pub fn dd_unit(&self) -> &'static str {
        Entry::DegreeDays.unit(self.units).label
    }
    /// Monthly heating degree-days as a field shows them: twelve numbers in these units, January
    /// first, or nothing.
    pub fn degree_days(&self, k_day: &[f64]) -> String {
        k_day.iter().map(|d| Entry::DegreeDays.shown(self.units, *d)).collect::<Vec<_>>().join(", ")
    }
    /// The degree-days field read back, K·d: blank clears them; `previous` is kept when the text is
    /// what was shown for it. Twelve values or none (the site's validation says so in words).
    pub fn read_degree_days(&self, text: &str, previous: &[f64]) -> Result<Vec<f64>, FieldError> {
        let text = text.trim();
        if !previous.is_empty() && text == self.degree_days(previous) {
            return Ok(previous.to_vec());
        }
        text.split([',', ';', ' '])
            .filter(|x| !x.trim().is_empty())
            .map(|x| {
                Entry::DegreeDays.read(self.units, x, None).map_err(|e| {
                    FieldError::new(
                        "heating_degree_days_k_day",
                        format!("heating degree-days must be numbers in {}: {e}", self.dd_unit()),
                    )
                })
            })
            .collect()
    }

    /// The factors the page scripts convert with (`static/js/common.js`, `airledger.entry`).
    pub fn page_data(&self) -> Value {
        let table: serde_json::Map<String, Value> = Entry::ALL
            .iter()
            .map(|e| {
                let u = e.unit(self.units);
                let d = e.decimals(self.units);
                (
                    e.as_str().to_string(),
                    json!({"label": u.label, "factor": u.factor, "offset": u.offset, "decimals": d}),
                )
            })
            .collect();
        json!({"system": self.system(), "fields": table})
    }
}

/// A field's name in words for an error message.
fn label_of(key: &str) -> &'static str {
    match key {
        "rated_flow_m3_min" => "Free air delivery",
        "rated_pressure_bar_g" => "Rated pressure",
        "max_pressure_bar_g" => "Maximum pressure",
        "rated_specific_power_kw_per_m3_min" => "Data-sheet specific power",
        "volume_m3" => "Volume",
        "other_volume_m3" => "Piping, dryer and filter volume",
        "inlet_temperature_c" => "Inlet temperature",
        "altitude_m" => "Altitude",
        "atmospheric_pressure_kpa_abs" => "Atmospheric pressure",
        _ => "This field",
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn form(pairs: &[(&str, &str)]) -> HashMap<String, String> {
        pairs.iter().map(|(k, v)| (k.to_string(), v.to_string())).collect()
    }

    #[test]
    fn a_form_is_read_in_the_units_it_was_drawn_in() {
        let f = form(&[(UNITS_FIELD, "us"), ("rated_pressure_bar_g", "100")]);
        let i = Inputs::of_form(&f);
        let p = i.opt(&f, "rated_pressure_bar_g", Entry::GaugePressure, None).unwrap().unwrap();
        // NIST SP 811: 1 psi = 6 894.757 Pa, so 100 psig = 6.894757 bar(g).
        assert!((p - 6.894_757).abs() < 1e-6);
        let si = Inputs::of_form(&form(&[("rated_pressure_bar_g", "7")]));
        assert_eq!(si.units, UnitSystem::Si);
    }

    #[test]
    fn a_curve_in_cfm_reads_to_m3_min_and_back() {
        let i = Inputs::new(UnitSystem::Us);
        let c = i.read_curve("100:20 200:35.5", None).unwrap();
        // 100 cfm = 2.8316847 m³/min (NIST SP 811: 1 ft³ = 0.02831685 m³).
        assert!((c[0].0 - 2.831_684_7).abs() < 1e-7);
        assert_eq!(c[1].1, 35.5);
        assert_eq!(i.curve(&c), "100:20 200:35.5");
        assert_eq!(i.read_curve(&i.curve(&c), Some(&c)).unwrap(), c);
        assert!(i.read_curve("100-20", None).is_err());
    }

    #[test]
    fn degree_days_in_fahrenheit_read_to_kelvin_days_and_back() {
        let i = Inputs::new(UnitSystem::Us);
        let text = "900, 810, 630, 360, 90, 0, 0, 0, 45, 270, 540, 810";
        let d = i.read_degree_days(text, &[]).unwrap();
        // NIST SP 811 B.9: a temperature interval of 1 °F is 1/1.8 K: 900 °F·d = 500 K·d.
        assert!((d[0] - 500.0).abs() < 1e-9 && (d[8] - 25.0).abs() < 1e-9);
        // Shown again and posted unchanged, it is kept exactly.
        assert_eq!(i.read_degree_days(&i.degree_days(&d), &d).unwrap(), d);
        assert!(i.read_degree_days("", &d).unwrap().is_empty());
        assert_eq!(i.read_degree_days("12, x", &[]).unwrap_err().field, "heating_degree_days_k_day");
    }

    #[test]
    fn a_bad_number_names_the_field_in_words_and_its_unit() {
        let f = form(&[(UNITS_FIELD, "us"), ("volume_m3", "lots")]);
        let e = Inputs::of_form(&f).opt(&f, "volume_m3", Entry::Volume, None).unwrap_err();
        assert!(e.message.contains("Volume must be a number in US gal"), "{}", e.message);
    }
}
