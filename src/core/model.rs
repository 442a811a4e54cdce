/*!
The plain data an audit is made of: the site, its compressors and storage, as the analysis sees them.
Storage and the web layer fill these from SQLite rows and forms; the core never knows where they came from.
*/

use serde::{Deserialize, Serialize};

use super::units::SiteAir;

/// Compressor technology (API.md `kind`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum CompressorKind {
    LubricatedScrew,
    OilFreeScrew,
    Reciprocating,
    Centrifugal,
    Scroll,
    Vane,
}

/// Capacity control (API.md `control`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Control {
    LoadUnload,
    Modulation,
    VariableSpeed,
    StartStop,
}

/// How the package rejects its heat (API.md `cooling`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Cooling {
    Air,
    Water,
}

macro_rules! str_enum {
    ($t:ty { $($v:ident => $s:literal),* $(,)? }) => {
        impl $t {
            pub fn as_str(self) -> &'static str {
                match self { $(Self::$v => $s),* }
            }
            pub fn parse(s: &str) -> Option<Self> {
                match s { $($s => Some(Self::$v),)* _ => None }
            }
            pub const ALL: &'static [Self] = &[$(Self::$v),*];
            /// The name a person reads ("load/unload", "lubricated screw").
            pub fn label(self) -> String {
                human_label(self.as_str())
            }
        }
    };
}
/// A code as words: `load_unload` -> "load/unload", `lubricated_screw` -> "lubricated screw".
pub fn human_label(code: &str) -> String {
    match code {
        "load_unload" => "load/unload".into(),
        "start_stop" => "start/stop".into(),
        "bleed_down" => "bleed-down test".into(),
        "idle_flow" => "idle flow in a logged window".into(),
        "pressure_decay" => "pressure decay fitted in the logs".into(),
        "non_production_flow" => "mean flow out of production, an upper bound".into(),
        other => other.replace('_', " "),
    }
}

str_enum!(CompressorKind {
    LubricatedScrew => "lubricated_screw",
    OilFreeScrew => "oil_free_screw",
    Reciprocating => "reciprocating",
    Centrifugal => "centrifugal",
    Scroll => "scroll",
    Vane => "vane",
});
str_enum!(Control {
    LoadUnload => "load_unload",
    Modulation => "modulation",
    VariableSpeed => "variable_speed",
    StartStop => "start_stop",
});
str_enum!(Cooling { Air => "air", Water => "water" });

impl CompressorKind {
    /// Default unloaded power as a fraction of full-load power when the data sheet gives none.
    /// Lubricated screws 15-35 % (US DOE compressed-air sourcebook, from memory): we take 0.25; the
    /// others are common practice.
    pub fn default_unloaded_power_fraction(self) -> f64 {
        match self {
            Self::LubricatedScrew => 0.25,
            Self::OilFreeScrew => 0.20,
            Self::Reciprocating => 0.15,
            Self::Centrifugal => 0.30,
            Self::Scroll | Self::Vane => 0.25,
        }
    }
}

/// The header's low limit lies this far below the lowest rated pressure, bar (common practice):
/// the pressure figures' band, and the floor of a what-if's target pressure.
pub const LOW_LIMIT_BELOW_RATED_BAR: f64 = 1.0;

/// The plant's low limit, bar(g): its lowest rated pressure less [`LOW_LIMIT_BELOW_RATED_BAR`]
/// (`None`: no compressor on record).
pub fn low_limit_bar_g(compressors: &[CompressorSpec]) -> Option<f64> {
    compressors.iter().map(|c| c.rated_pressure_bar_g).reduce(f64::min).map(|p| p - LOW_LIMIT_BELOW_RATED_BAR)
}

/// One compressor as its data sheet states it: the one compressor type of the analysis, the replay
/// and the audit's records (`site::CompressorRecord` wraps it with its id and notes; a scenario's added
/// machine is posted in the same shape, `core::datasheet::DataSheetInput`, whose module doc gives the
/// meaning of each field, the defaults for blanks and the accepted ranges).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct CompressorSpec {
    pub tag: String,
    pub kind: CompressorKind,
    pub control: Control,
    pub cooling: Cooling,
    /// Package input power at full load and `rated_pressure_bar_g`, kW, as ISO 1217 data sheets state
    /// it (drive motor, fan and controls; not the motor's nameplate).
    pub rated_power_kw: f64,
    /// Free air delivery at full load, m³/min (ISO 1217).
    pub rated_flow_m3_min: f64,
    /// Full-load operating pressure, bar(g).
    pub rated_pressure_bar_g: f64,
    /// Unloaded (or minimum-speed idle) power / full-load power (from `no_load_power_kw` when given).
    pub unloaded_power_fraction: f64,
    /// Package input running unloaded, kW, as the data sheet gives it (`None`: blank, by default).
    #[serde(default)]
    pub no_load_power_kw: Option<f64>,
    /// The main motor's nameplate, kW: for reference only.
    #[serde(default)]
    pub nameplate_motor_kw: Option<f64>,
    /// Highest working pressure of the package, bar(g) (`None`: blank, by default).
    #[serde(default)]
    pub max_pressure_bar_g: Option<f64>,
    /// The auditor's correction of the unloaded and loaded power levels read in the log, kW: used in
    /// place of the levels found (`core::levels`); not data-sheet values.
    #[serde(default)]
    pub unloaded_level_kw: Option<f64>,
    #[serde(default)]
    pub loaded_level_kw: Option<f64>,
    pub stages: u32,
    /// Data-sheet specific package input power, kW/(m³/min); `None` means rated power / rated flow.
    pub rated_specific_power_kw_per_m3_min: Option<f64>,
    /// Variable speed: data-sheet points (free air m³/min, package kW), ascending in flow.
    pub power_curve: Vec<(f64, f64)>,
    pub year: Option<i32>,
}

impl CompressorSpec {
    /// A single-stage machine of this rating with every optional field blank (tests and models).
    pub fn blank(
        kind: CompressorKind,
        control: Control,
        rated_power_kw: f64,
        rated_flow_m3_min: f64,
    ) -> Self {
        Self {
            tag: String::new(),
            kind,
            control,
            cooling: Cooling::Air,
            rated_power_kw,
            rated_flow_m3_min,
            rated_pressure_bar_g: 7.5,
            unloaded_power_fraction: kind.default_unloaded_power_fraction(),
            no_load_power_kw: None,
            nameplate_motor_kw: None,
            max_pressure_bar_g: None,
            unloaded_level_kw: None,
            loaded_level_kw: None,
            stages: 1,
            rated_specific_power_kw_per_m3_min: None,
            power_curve: vec![],
            year: None,
        }
    }

    pub fn rated_specific_power_kw_per_m3_min(&self) -> f64 {
        self.rated_specific_power_kw_per_m3_min.unwrap_or(self.rated_power_kw / self.rated_flow_m3_min)
    }

    /// Package input running unloaded, kW: the data sheet's, else the unloaded fraction's.
    pub fn no_load_kw(&self) -> f64 {
        self.no_load_power_kw.unwrap_or(self.unloaded_power_fraction * self.rated_power_kw)
    }

    /// Highest working pressure, bar(g): the data sheet's, else rated + 0.5 bar (`core::datasheet`).
    pub fn max_pressure_or_default_bar_g(&self) -> f64 {
        self.max_pressure_bar_g
            .unwrap_or(self.rated_pressure_bar_g + super::datasheet::DEFAULT_MAX_ABOVE_RATED_BAR)
    }
}

/// A weekly production schedule: `hours[weekday][hour]`, weekday 0 = Monday, local time.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct WeeklySchedule {
    pub hours: [[bool; 24]; 7],
}

/// The site: its air, prices and operating year.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SiteSpec {
    pub air: SiteAir,
    /// IANA time zone of the site's clocks (for weekday × hour profiles and heating months).
    pub timezone: String,
    pub electricity_price_per_kwh: f64,
    /// Demand charge per kW of monthly peak, per month.
    pub demand_charge_per_kw_month: f64,
    pub currency: String,
    /// Weeks a year the plant runs like the logged weeks (default 52).
    pub operating_weeks_per_year: f64,
    /// If given, annual figures scale mean power by these hours instead of the weekly pattern.
    pub operating_hours_per_year: Option<f64>,
    /// Price of the fuel that recovered heat would displace, per kWh of fuel.
    pub heating_fuel_price_per_kwh: f64,
    /// Efficiency of the heater whose fuel is displaced (0-1).
    pub heater_efficiency: f64,
    /// Months (1-12) in which the site needs space heat.
    pub heating_months: Vec<u8>,
    /// What recovered heat would serve (the stored `heat_use`): space heating in the heating
    /// months, or process water all year.
    #[serde(default)]
    pub heat_use: super::heat::HeatUseKind,
    /// Heating degree-days of each month, January first, K·d: when given, space heat is counted by
    /// the degree-day method (`heat::degree_day_use`) instead of the heating months.
    #[serde(default)]
    pub heating_degree_days_k_day: Option<[f64; 12]>,
    /// The space's heat need in a year, kWh of heat: the monthly cap of the degree-day method.
    #[serde(default)]
    pub annual_space_heat_kwh: Option<f64>,
    /// Grid emission factor, kg CO2 per kWh of electricity.
    pub grid_co2_kg_per_kwh: f64,
    /// Emission factor of the heating fuel, kg CO2 per kWh of fuel.
    pub fuel_co2_kg_per_kwh: f64,
    /// Production schedule, if the site gave one; otherwise production is detected from demand.
    pub production: Option<WeeklySchedule>,
}

/// The compressed-air storage: receivers plus piping and dryer vessels.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
pub struct StorageSpec {
    pub receivers_m3: Vec<f64>,
    /// Piping, dryer and filter vessel volume, m³ (often the weakest input of a bleed-down test).
    pub other_volume_m3: f64,
}

impl StorageSpec {
    /// Total system volume for bleed-down and decay tests, m³.
    pub fn system_volume_m3(&self) -> f64 {
        self.receivers_m3.iter().sum::<f64>() + self.other_volume_m3
    }
}
