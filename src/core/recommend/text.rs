/*!
A measure's words in parts: words, or a figure in canonical SI units, so that each page renders them
in its reader's units (`core::display::render_parts`) and the JSON carries them as they are.
*/

use serde::{Deserialize, Serialize};

/// A figure inside a measure's words, in canonical units, so each page shows it in its reader's
/// units. Only the quantities whose unit differs between SI and US customary are figures; kWh, kW,
/// hours and money read the same in both and stay words.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Quantity {
    /// m³/min of free air (cfm of free air in US units).
    FlowM3Min,
    /// bar(g) (psig).
    PressureBarG,
    /// kW/(m³/min) (kW/100 cfm).
    SpecificPowerKwPerM3Min,
    /// A pressure difference, bar (psi).
    PressureDropBar,
    /// A volume, m³ (US gal).
    VolumeM3,
    /// Storage per flow, m³ per m³/min (US gal/cfm, the trade's rule-of-thumb unit).
    StorageM3PerM3Min,
    /// A temperature difference, K (°F).
    TemperatureDifferenceK,
    /// An absolute pressure, kPa abs (psia).
    PressureKpaAbs,
    /// A temperature, °C (°F): a logged reading's.
    TemperatureC,
}

/// Words, or a figure the reader's units show (JSON: a string, or `{"quantity", "value"}`).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(untagged)]
pub enum Part {
    Words(String),
    Figure { quantity: Quantity, value: f64 },
}

impl From<&str> for Part {
    fn from(w: &str) -> Self {
        Part::Words(w.into())
    }
}
impl From<String> for Part {
    fn from(w: String) -> Self {
        Part::Words(w)
    }
}

/// A free-air flow, m³/min.
pub fn flow(m3_min: f64) -> Part {
    Part::Figure { quantity: Quantity::FlowM3Min, value: m3_min }
}
/// A gauge pressure, bar(g).
pub fn bar_g(bar_g: f64) -> Part {
    Part::Figure { quantity: Quantity::PressureBarG, value: bar_g }
}
/// A pressure difference (a drop across equipment), bar.
pub fn pressure_drop(bar: f64) -> Part {
    Part::Figure { quantity: Quantity::PressureDropBar, value: bar }
}
/// A volume, m³.
pub fn volume(m3: f64) -> Part {
    Part::Figure { quantity: Quantity::VolumeM3, value: m3 }
}
/// Storage per unit of flow, m³ per m³/min.
pub fn storage_per_flow(m3_per_m3_min: f64) -> Part {
    Part::Figure { quantity: Quantity::StorageM3PerM3Min, value: m3_per_m3_min }
}
/// A temperature difference, K.
pub fn temperature_difference(k: f64) -> Part {
    Part::Figure { quantity: Quantity::TemperatureDifferenceK, value: k }
}
/// An absolute pressure, kPa abs.
pub fn kpa_abs(kpa: f64) -> Part {
    Part::Figure { quantity: Quantity::PressureKpaAbs, value: kpa }
}
/// A temperature, °C.
pub fn temperature_c(c: f64) -> Part {
    Part::Figure { quantity: Quantity::TemperatureC, value: c }
}
/// A specific power, kW/(m³/min).
pub fn specific(kw_per_m3_min: f64) -> Part {
    Part::Figure { quantity: Quantity::SpecificPowerKwPerM3Min, value: kw_per_m3_min }
}

/// A measure's words in parts: `title`, `description` and `basis` of [`super::Recommendation`] are their
/// SI rendering (API.md); pages render these in the reader's units.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct Text {
    pub title: Vec<Part>,
    pub description: Vec<Part>,
    pub basis: Vec<Vec<Part>>,
}

/// Words and figures: `text!["about ", flow(q)]`.
macro_rules! text {
    ($($p:expr),* $(,)?) => { vec![$(Part::from($p)),*] };
}
