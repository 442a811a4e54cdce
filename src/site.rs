/*!
The site as people describe it: its air, prices and schedule, its compressors and receivers, and
their validation.

These are the shapes of the JSON API and of the edit forms. [`SitePatch`] and [`CompressorInput`] are
parsed and validated here, so an invalid value never reaches storage; the analysis gets the plain
`core::model` types built from them by [`SiteRecord::to_spec`] and [`CompressorRecord::to_spec`].

# Accepted ranges

Every number must be finite and lie in its range, or the whole input is refused (API 422 naming the
field). The ranges are wide enough for any factory air system and narrow enough that no figure
computed from them overflows (a price of 1e308 used to turn every cost into `null`).

| value | range | why |
|---|---|---|
| `altitude_m` | -500 ..= 6000 m | Dead Sea shore (about -430 m) to the highest industrial sites (common practice) |
| `atmospheric_pressure_kpa_abs` | 40 ..= 110 kPa abs | ISO 2533 gives 47.2 kPa at 6000 m; sea-level records stay below 109 kPa |
| `inlet_temperature_c` | -40 ..= 60 °C | the usual ambient rating range of air compressor packages (common practice) |
| `electricity_price_per_kwh`, `heating_fuel_price_per_kwh` | 0 ..= 1e6 per kWh | in the audit's currency: room for the weakest currencies, finite costs |
| `demand_charge_per_kw_month` | 0 ..= 1e8 per kW month | a demand charge is at most a few hundred times the kWh price (common practice) |
| `operating_weeks_per_year` | above 0 ..= 53 | weeks in a year |
| `operating_hours_per_year` | 0 ..= 8784 h | hours in a leap year; 0 means "from the weeks" |
| `heater_efficiency` | above 0 ..= 1.2 | condensing boilers exceed 1 on the net calorific value (EN 15502 ratings up to about 1.09) |
| `grid_co2_kg_per_kwh` | 0 ..= 2 kg/kWh | the most carbon-intensive grids (lignite) stay near 1.1 (IEA emission factors, from memory) |
| `fuel_co2_kg_per_kwh` | 0 ..= 1 kg/kWh | lignite 0.36, natural gas 0.20 kg/kWh (IPCC 2006 Guidelines, vol. 2 table 1.4) |
| `heating_degree_days_k_day` | 12 values, each 0 ..= 2500 K·d, or none | a month of 31 days 80 K below the base temperature; the coldest inhabited places stay near 1,800 (common practice, from memory) |
| `annual_space_heat_kwh` | 0 ..= 1e10 kWh (0: not known) | 10 TWh, far above any one site's heat need |
| `other_volume_m3` | 0 ..= 10 000 m³ | piping and vessels of the largest plants (common practice) |
| compressor fields | see `core::datasheet` | the one data-sheet shape, shared with the scenarios |
| receiver `volume_m3` | above 0 ..= 1000 m³ | the largest shop-built air receivers (common practice) |
*/

use serde::{Deserialize, Serialize};

use crate::core::air::atmosphere_from_altitude;
use crate::core::datasheet::SheetError;
use crate::core::entry::Entry;
use crate::core::model::{CompressorSpec, SiteSpec};
use crate::core::units::{SiteAir, UnitSystem};

/// Upper bounds of the table in the module doc.
pub const MAX_ENERGY_PRICE_PER_KWH: f64 = 1e6;
pub const MAX_DEMAND_CHARGE_PER_KW_MONTH: f64 = 1e8;
pub const MAX_GRID_CO2_KG_PER_KWH: f64 = 2.0;
pub const MAX_FUEL_CO2_KG_PER_KWH: f64 = 1.0;
pub const MAX_OTHER_VOLUME_M3: f64 = 10_000.0;
pub const MAX_DEGREE_DAYS_K_DAY_PER_MONTH: f64 = 2_500.0;
pub const MAX_ANNUAL_SPACE_HEAT_KWH: f64 = 1e10;
pub const MAX_RECEIVER_VOLUME_M3: f64 = 1_000.0;

/// `v` if it is finite and within `lo..=hi` (above `lo` when `lo_open`), else the field's error.
fn within(field: &str, v: f64, lo: f64, lo_open: bool, hi: f64, unit: &str) -> Result<f64, FieldError> {
    let low_ok = if lo_open { v > lo } else { v >= lo };
    if v.is_finite() && low_ok && v <= hi {
        return Ok(v);
    }
    let g = |x: f64| crate::core::entry::grouped(x.to_string());
    let from = if lo_open { format!("above {}", g(lo)) } else { g(lo) };
    let hi = g(hi);
    let words = match field {
        "electricity_price_per_kwh" => "the electricity price",
        "heating_fuel_price_per_kwh" => "the heating fuel's price",
        "annual_space_heat_kwh" => "the space's heat need per year",
        "grid_co2_kg_per_kwh" => "the grid's CO₂ per kWh",
        "fuel_co2_kg_per_kwh" => "the fuel's CO₂ per kWh",
        other => other,
    };
    Err(FieldError::new(field, format!("{words} must be a number from {from} to {hi}{unit}, got {v}")))
}

/// Read a JSON body into `T`, naming the field at fault: a type error names the field whose value
/// has the wrong type (`changes[0].target_bar_g`), an unknown or missing field names that field.
///
/// `serde_path_to_error` tracks the path; axum's `Json` extractor uses the same crate, so it adds
/// nothing to the dependency tree. Inside an internally tagged enum (`kind`, `op`) serde buffers the
/// object and the path stops at it; the field is then the one in that object whose value is the one
/// the error calls unexpected ([`locate_unexpected`]).
pub fn read_json<T: serde::de::DeserializeOwned>(
    body: serde_json::Value,
    what: &str,
) -> Result<T, FieldError> {
    match serde_path_to_error::deserialize::<_, T>(&body) {
        Ok(v) => Ok(v),
        Err(e) => {
            let message = e.inner().to_string();
            let field = field_of_serde_in(&e.path().to_string(), &message, Some(&body))
                .unwrap_or_else(|| "body".to_string());
            Err(FieldError::new(&field, format!("{what} cannot be read: {field}: {message}")))
        }
    }
}

/// The field a serde error is about, from the path where it happened (`.` at the top) and its
/// message ("unknown field `x`", "missing field `x`" name a field inside the path's object).
pub fn field_of_serde(path: &str, message: &str) -> Option<String> {
    field_of_serde_in(path, message, None)
}

/// [`field_of_serde`], refined with the body the error came from: a type error whose path stops at an
/// object names the field of that object holding the unexpected value.
pub fn field_of_serde_in(path: &str, message: &str, body: Option<&serde_json::Value>) -> Option<String> {
    let path = path.trim_matches('.');
    let path = (!path.is_empty() && path != "?").then_some(path);
    let named = ["unknown field `", "missing field `"].iter().find_map(|p| {
        let start = message.find(p)? + p.len();
        let end = start + message[start..].find('`')?;
        Some(&message[start..end])
    });
    if let Some(n) = named {
        // Inside a tagged enum the path stops at the variant's object: find the nested object that
        // holds the unknown key.
        let at = body.and_then(|b| value_at(b, path.unwrap_or("")));
        if let (Some(obj), true) = (at, message.starts_with("unknown field `")) {
            if obj.get(n).is_none() {
                if let Some(inner) = locate_key(obj, n) {
                    return Some(match path {
                        Some(p) => format!("{p}.{inner}"),
                        None => inner,
                    });
                }
            }
        }
        return Some(match path {
            Some(p) if p == n || p.ends_with(&format!(".{n}")) => p.to_string(),
            Some(p) => format!("{p}.{n}"),
            None => n.to_string(),
        });
    }
    // A type error: if the path stops at an object, find the unexpected value in it.
    let at = body.and_then(|b| value_at(b, path.unwrap_or("")));
    if let Some(obj @ serde_json::Value::Object(_)) = at {
        if let Some(inner) = locate_unexpected(obj, message) {
            return Some(match path {
                Some(p) => format!("{p}.{inner}"),
                None => inner,
            });
        }
    }
    path.map(str::to_string)
}

/// The value at a serde path such as `changes[0].compressor` (`""` is the whole body).
fn value_at<'v>(body: &'v serde_json::Value, path: &str) -> Option<&'v serde_json::Value> {
    let mut v = body;
    for seg in path.split('.').filter(|s| !s.is_empty()) {
        let (key, rest) = seg.split_once('[').map_or((seg, ""), |(k, r)| (k, r));
        if !key.is_empty() {
            v = v.get(key)?;
        }
        for idx in rest.split('[').filter(|s| !s.is_empty()) {
            v = v.get(idx.trim_end_matches(']').parse::<usize>().ok()?)?;
        }
    }
    Some(v)
}

/// The path (inside `v`) of the first object member named `key`, nested at any depth.
fn locate_key(v: &serde_json::Value, key: &str) -> Option<String> {
    match v {
        serde_json::Value::Object(m) => {
            if m.contains_key(key) {
                return Some(key.to_string());
            }
            m.iter().find_map(|(k, x)| {
                let inner = locate_key(x, key)?;
                Some(if inner.starts_with('[') { format!("{k}{inner}") } else { format!("{k}.{inner}") })
            })
        }
        serde_json::Value::Array(a) => {
            a.iter().enumerate().find_map(|(i, x)| Some(format!("[{i}].{}", locate_key(x, key)?)))
        }
        _ => None,
    }
}

/// The path (inside `obj`) of the first value that serde's "invalid type: X, expected Y" or
/// "invalid value: X, expected Y" calls X.
pub fn locate_unexpected(obj: &serde_json::Value, message: &str) -> Option<String> {
    let rest = message.strip_prefix("invalid type: ").or_else(|| message.strip_prefix("invalid value: "))?;
    let unexpected = &rest[..rest.rfind(", expected ")?];
    fn shown(v: &serde_json::Value) -> String {
        use serde_json::Value;
        match v {
            Value::Null => "null".into(),
            Value::Bool(b) => format!("boolean `{b}`"),
            Value::Number(n) if n.is_f64() => format!("floating point `{n}`"),
            Value::Number(n) => format!("integer `{n}`"),
            Value::String(s) => format!("string {s:?}"),
            Value::Array(_) => "sequence".into(),
            Value::Object(_) => "map".into(),
        }
    }
    fn walk(v: &serde_json::Value, unexpected: &str, at: String) -> Option<String> {
        match v {
            serde_json::Value::Object(m) => m.iter().find_map(|(k, x)| {
                let here = if at.is_empty() { k.clone() } else { format!("{at}.{k}") };
                if shown(x) == unexpected {
                    Some(here)
                } else {
                    walk(x, unexpected, here)
                }
            }),
            serde_json::Value::Array(a) => a.iter().enumerate().find_map(|(i, x)| {
                let here = format!("{at}[{i}]");
                if shown(x) == unexpected {
                    Some(here)
                } else {
                    walk(x, unexpected, here)
                }
            }),
            _ => None,
        }
    }
    walk(obj, unexpected, String::new())
}

/// A field-level validation failure (API: 422 with `field`).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct FieldError {
    pub field: String,
    pub message: String,
}

impl FieldError {
    pub fn new(field: &str, message: impl Into<String>) -> Self {
        Self { field: field.to_string(), message: message.into() }
    }
}

/// The site as stored: every field has a value (documented defaults on creation).
#[derive(Debug, Clone, Serialize, Deserialize, PartialEq)]
pub struct SiteRecord {
    pub altitude_m: f64,
    /// Given directly; `None` means it follows from the altitude (ISO 2533 standard atmosphere).
    pub atmospheric_pressure_override_kpa_abs: Option<f64>,
    pub inlet_temperature_c: f64,
    pub timezone: String,
    pub electricity_price_per_kwh: f64,
    pub demand_charge_per_kw_month: f64,
    pub currency: String,
    pub operating_weeks_per_year: f64,
    pub operating_hours_per_year: Option<f64>,
    pub display_units: UnitSystem,
    pub heating_fuel_price_per_kwh: f64,
    pub heater_efficiency: f64,
    pub heating_months: Vec<u8>,
    /// `space_heating` (counted in heating months) or `process_water` (all year).
    pub heat_use: String,
    /// Heating degree-days of each month, January first, K·d to the building's base temperature;
    /// empty when not given. Given, they replace the heating months.
    pub heating_degree_days_k_day: Vec<f64>,
    /// The space's heat need in a year, kWh of heat (`None`: not known).
    pub annual_space_heat_kwh: Option<f64>,
    pub grid_co2_kg_per_kwh: f64,
    pub fuel_co2_kg_per_kwh: f64,
    /// Piping, dryer and filter vessel volume, m³ (added to the receivers for bleed-down tests).
    pub other_volume_m3: f64,
}

impl Default for SiteRecord {
    /// The documented defaults: sea level, 20 °C inlet, 0.15/kWh, no demand charge, EUR (USD for
    /// an audit created in US customary units without a currency, `App::create_audit`), 52 weeks,
    /// SI display, gas at 0.08/kWh in a 90 % heater, heating October to April, 0.4 kg CO2/kWh grid
    /// and 0.2 kg CO2/kWh fuel (natural gas, common practice).
    fn default() -> Self {
        Self {
            altitude_m: 0.0,
            atmospheric_pressure_override_kpa_abs: None,
            inlet_temperature_c: 20.0,
            timezone: "UTC".into(),
            electricity_price_per_kwh: 0.15,
            demand_charge_per_kw_month: 0.0,
            currency: "EUR".into(),
            operating_weeks_per_year: 52.0,
            operating_hours_per_year: None,
            display_units: UnitSystem::Si,
            heating_fuel_price_per_kwh: 0.08,
            heater_efficiency: 0.9,
            heating_months: vec![1, 2, 3, 4, 10, 11, 12],
            heat_use: "space_heating".into(),
            heating_degree_days_k_day: Vec::new(),
            annual_space_heat_kwh: None,
            grid_co2_kg_per_kwh: 0.4,
            fuel_co2_kg_per_kwh: 0.2,
            other_volume_m3: 0.0,
        }
    }
}

impl SiteRecord {
    /// Atmospheric pressure at the site, kPa absolute.
    pub fn atmospheric_pressure_kpa_abs(&self) -> f64 {
        self.atmospheric_pressure_override_kpa_abs
            .unwrap_or_else(|| atmosphere_from_altitude(self.altitude_m).kpa_abs())
    }

    pub fn air(&self) -> SiteAir {
        SiteAir::new(self.atmospheric_pressure_kpa_abs(), self.inlet_temperature_c)
    }

    pub fn to_spec(&self) -> SiteSpec {
        SiteSpec {
            air: self.air(),
            timezone: self.timezone.clone(),
            electricity_price_per_kwh: self.electricity_price_per_kwh,
            demand_charge_per_kw_month: self.demand_charge_per_kw_month,
            currency: self.currency.clone(),
            operating_weeks_per_year: self.operating_weeks_per_year,
            operating_hours_per_year: self.operating_hours_per_year,
            heating_fuel_price_per_kwh: self.heating_fuel_price_per_kwh,
            heater_efficiency: self.heater_efficiency,
            heating_months: self.heating_months.clone(),
            heat_use: crate::core::heat::HeatUseKind::parse(&self.heat_use).unwrap_or_default(),
            heating_degree_days_k_day: <[f64; 12]>::try_from(self.heating_degree_days_k_day.as_slice()).ok(),
            annual_space_heat_kwh: self.annual_space_heat_kwh,
            grid_co2_kg_per_kwh: self.grid_co2_kg_per_kwh,
            fuel_co2_kg_per_kwh: self.fuel_co2_kg_per_kwh,
            production: None,
        }
    }

    /// Every refusal of a patch at once, for a form that shows each one beside its field: each
    /// field the patch sets is applied alone (with the patch's unit system, in which refusals are
    /// quoted) to a copy of this site. The fields' checks are independent of one another, so these
    /// are exactly the refusals [`Self::apply`] would give one after the other.
    pub fn refusals(&self, p: &SitePatch) -> Vec<FieldError> {
        let mut errs = Vec::new();
        macro_rules! alone {
            ($($f:ident),* $(,)?) => {$(
                if p.$f.is_some() {
                    let mut one = SitePatch { display_units: p.display_units.clone(), ..SitePatch::default() };
                    one.$f = p.$f.clone();
                    if let Err(e) = self.clone().apply(&one) {
                        if !errs.contains(&e) {
                            errs.push(e);
                        }
                    }
                }
            )*};
        }
        alone!(
            altitude_m,
            atmospheric_pressure_kpa_abs,
            inlet_temperature_c,
            timezone,
            electricity_price_per_kwh,
            demand_charge_per_kw_month,
            currency,
            operating_weeks_per_year,
            operating_hours_per_year,
            display_units,
            heating_fuel_price_per_kwh,
            heater_efficiency,
            heating_months,
            heat_use,
            heating_degree_days_k_day,
            annual_space_heat_kwh,
            grid_co2_kg_per_kwh,
            fuel_co2_kg_per_kwh,
            other_volume_m3,
        );
        errs
    }

    /// Apply a patch, validating every field it sets.
    pub fn apply(&mut self, p: &SitePatch) -> Result<(), FieldError> {
        fn finite(field: &str, v: f64) -> Result<f64, FieldError> {
            if v.is_finite() {
                Ok(v)
            } else {
                Err(FieldError::new(field, format!("{field} must be a number")))
            }
        }
        // A refusal quotes altitude, atmosphere, inlet temperature and volume in the units the
        // site is read in: the patch's, else the site's.
        let units = p.display_units.as_deref().and_then(UnitSystem::parse).unwrap_or(self.display_units);
        let refuse = |field: &str, words: &str, kind: Entry, v: f64, lo: f64, hi: f64| {
            FieldError::new(field, format!("{words} {}", kind.out_of_range(units, v, lo, false, hi)))
        };
        if let Some(v) = p.altitude_m {
            if !(-500.0..=6000.0).contains(&finite("altitude_m", v)?) {
                return Err(refuse("altitude_m", "the altitude", Entry::Altitude, v, -500.0, 6000.0));
            }
            self.altitude_m = v;
        }
        if let Some(v) = p.atmospheric_pressure_kpa_abs {
            if !(40.0..=110.0).contains(&finite("atmospheric_pressure_kpa_abs", v)?) {
                return Err(refuse(
                    "atmospheric_pressure_kpa_abs",
                    "the atmospheric pressure",
                    Entry::Atmosphere,
                    v,
                    40.0,
                    110.0,
                ));
            }
            self.atmospheric_pressure_override_kpa_abs = Some(v);
        }
        if p.atmospheric_from_altitude == Some(true) {
            self.atmospheric_pressure_override_kpa_abs = None;
        }
        if let Some(v) = p.inlet_temperature_c {
            if !(-40.0..=60.0).contains(&finite("inlet_temperature_c", v)?) {
                return Err(refuse(
                    "inlet_temperature_c",
                    "the inlet temperature",
                    Entry::Temperature,
                    v,
                    -40.0,
                    60.0,
                ));
            }
            self.inlet_temperature_c = v;
        }
        if let Some(tz) = &p.timezone {
            if jiff::tz::TimeZone::get(tz).is_err() {
                return Err(FieldError::new("timezone", format!("unknown time zone {tz:?}: choose an IANA name from the list, such as America/Chicago or Europe/Vienna (an abbreviation such as CST names no rules for daylight saving)")));
            }
            self.timezone = tz.clone();
        }
        if let Some(v) = p.electricity_price_per_kwh {
            self.electricity_price_per_kwh =
                within("electricity_price_per_kwh", v, 0.0, false, MAX_ENERGY_PRICE_PER_KWH, " per kWh")?;
        }
        if let Some(v) = p.demand_charge_per_kw_month {
            self.demand_charge_per_kw_month = within(
                "demand_charge_per_kw_month",
                v,
                0.0,
                false,
                MAX_DEMAND_CHARGE_PER_KW_MONTH,
                " per kW month",
            )?;
        }
        if let Some(c) = &p.currency {
            let c = c.trim();
            if c.is_empty() || c.len() > 8 {
                return Err(FieldError::new(
                    "currency",
                    format!("currency must be a short code such as EUR, got {c:?}"),
                ));
            }
            self.currency = c.to_string();
        }
        if let Some(v) = p.operating_weeks_per_year {
            if !(0.0..=53.0).contains(&finite("operating_weeks_per_year", v)?) || v == 0.0 {
                return Err(FieldError::new(
                    "operating_weeks_per_year",
                    format!("the operating weeks per year must be above 0 and at most 53, got {v}"),
                ));
            }
            self.operating_weeks_per_year = v;
        }
        if let Some(v) = p.operating_hours_per_year {
            if !(0.0..=8784.0).contains(&finite("operating_hours_per_year", v)?) {
                return Err(FieldError::new(
                    "operating_hours_per_year",
                    format!("the operating hours per year must be from 0 to 8,784 h, got {v} h"),
                ));
            }
            self.operating_hours_per_year = if v > 0.0 { Some(v) } else { None };
        }
        if let Some(u) = &p.display_units {
            self.display_units = UnitSystem::parse(u).ok_or_else(|| {
                FieldError::new("display_units", format!("display units must be si or us, got {u:?}"))
            })?;
        }
        if let Some(v) = p.heating_fuel_price_per_kwh {
            self.heating_fuel_price_per_kwh =
                within("heating_fuel_price_per_kwh", v, 0.0, false, MAX_ENERGY_PRICE_PER_KWH, " per kWh")?;
        }
        if let Some(v) = p.heater_efficiency {
            if !(v > 0.0 && v <= 1.2) {
                return Err(FieldError::new(
                    "heater_efficiency",
                    format!("the heater efficiency must be above 0 and at most 1.2, got {v}"),
                ));
            }
            self.heater_efficiency = v;
        }
        if let Some(m) = &p.heating_months {
            if m.iter().any(|&x| !(1..=12).contains(&x)) {
                return Err(FieldError::new("heating_months", "heating months must be numbers 1 to 12"));
            }
            let mut m = m.clone();
            m.sort_unstable();
            m.dedup();
            self.heating_months = m;
        }
        if let Some(h) = &p.heat_use {
            if h != "space_heating" && h != "process_water" {
                return Err(FieldError::new(
                    "heat_use",
                    format!("heat use must be space_heating or process_water, got {h:?}"),
                ));
            }
            self.heat_use = h.clone();
        }
        if let Some(d) = &p.heating_degree_days_k_day {
            if !(d.is_empty() || d.len() == 12) {
                return Err(FieldError::new(
                    "heating_degree_days_k_day",
                    format!(
                        "heating degree-days must be given for all 12 months, January first (or none), got {}",
                        d.len()
                    ),
                ));
            }
            for (m, &v) in d.iter().enumerate() {
                within(
                    &format!("heating_degree_days_k_day[{m}]"),
                    v,
                    0.0,
                    false,
                    MAX_DEGREE_DAYS_K_DAY_PER_MONTH,
                    " K·d",
                )?;
            }
            self.heating_degree_days_k_day = d.clone();
        }
        if let Some(v) = p.annual_space_heat_kwh {
            self.annual_space_heat_kwh = if v == 0.0 {
                None
            } else {
                Some(within("annual_space_heat_kwh", v, 0.0, false, MAX_ANNUAL_SPACE_HEAT_KWH, " kWh")?)
            };
        }
        if let Some(v) = p.grid_co2_kg_per_kwh {
            self.grid_co2_kg_per_kwh =
                within("grid_co2_kg_per_kwh", v, 0.0, false, MAX_GRID_CO2_KG_PER_KWH, " kg/kWh")?;
        }
        if let Some(v) = p.fuel_co2_kg_per_kwh {
            self.fuel_co2_kg_per_kwh =
                within("fuel_co2_kg_per_kwh", v, 0.0, false, MAX_FUEL_CO2_KG_PER_KWH, " kg/kWh")?;
        }
        if let Some(v) = p.other_volume_m3 {
            if !(v.is_finite() && (0.0..=MAX_OTHER_VOLUME_M3).contains(&v)) {
                return Err(refuse(
                    "other_volume_m3",
                    "the piping, dryer and filter volume",
                    Entry::Volume,
                    v,
                    0.0,
                    MAX_OTHER_VOLUME_M3,
                ));
            }
            self.other_volume_m3 = v;
        }
        Ok(())
    }
}

/// Site fields as posted: any subset.
#[derive(Debug, Clone, Default, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct SitePatch {
    pub altitude_m: Option<f64>,
    pub atmospheric_pressure_kpa_abs: Option<f64>,
    /// `true` drops a given atmospheric pressure so that it follows the altitude again.
    pub atmospheric_from_altitude: Option<bool>,
    pub inlet_temperature_c: Option<f64>,
    pub timezone: Option<String>,
    pub electricity_price_per_kwh: Option<f64>,
    pub demand_charge_per_kw_month: Option<f64>,
    pub currency: Option<String>,
    pub operating_weeks_per_year: Option<f64>,
    pub operating_hours_per_year: Option<f64>,
    pub display_units: Option<String>,
    pub heating_fuel_price_per_kwh: Option<f64>,
    pub heater_efficiency: Option<f64>,
    pub heating_months: Option<Vec<u8>>,
    pub heat_use: Option<String>,
    /// 12 values (January first) or none (`[]` clears them).
    pub heating_degree_days_k_day: Option<Vec<f64>>,
    /// 0 clears it.
    pub annual_space_heat_kwh: Option<f64>,
    pub grid_co2_kg_per_kwh: Option<f64>,
    pub fuel_co2_kg_per_kwh: Option<f64>,
    pub other_volume_m3: Option<f64>,
}

/// A compressor as posted: the one data-sheet shape of `core::datasheet` (API.md fields, the
/// data-sheet additions and `notes`), shared with the scenarios' added machines.
pub use crate::core::datasheet::DataSheetInput as CompressorInput;

impl From<SheetError> for FieldError {
    fn from(e: SheetError) -> Self {
        FieldError { field: e.field, message: e.message }
    }
}

/// A stored compressor: its data sheet (the analysis' [`CompressorSpec`]) with its id and notes. The
/// JSON has the spec's fields at the top level beside `id` and `notes`.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct CompressorRecord {
    pub id: i64,
    #[serde(flatten)]
    pub spec: CompressorSpec,
    pub notes: String,
}

impl CompressorRecord {
    /// Validate a posted compressor into a record (id 0 until stored).
    pub fn from_input(input: &CompressorInput) -> Result<Self, FieldError> {
        Self::from_input_in(input, UnitSystem::Si)
    }

    /// [`Self::from_input`], a refusal quoting figures in `units` (the audit's).
    pub fn from_input_in(input: &CompressorInput, units: UnitSystem) -> Result<Self, FieldError> {
        Ok(Self { id: 0, spec: input.validate_in(units)?, notes: input.notes.clone() })
    }

    pub fn to_spec(&self) -> CompressorSpec {
        self.spec.clone()
    }
}

/// A stored receiver.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct ReceiverRecord {
    pub id: i64,
    pub name: String,
    pub volume_m3: f64,
    pub notes: String,
}

/// A receiver as posted.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct ReceiverInput {
    pub name: String,
    pub volume_m3: f64,
    #[serde(default)]
    pub notes: String,
}

impl ReceiverInput {
    pub fn validate(&self) -> Result<(), FieldError> {
        self.validate_in(UnitSystem::Si)
    }

    /// [`Self::validate`], a refusal quoting the volume in `units` (the audit's).
    pub fn validate_in(&self, units: UnitSystem) -> Result<(), FieldError> {
        match self.refusals_in(units).into_iter().next() {
            Some(e) => Err(e),
            None => Ok(()),
        }
    }

    /// Every refusal at once (name, then volume), for a form that shows each beside its field.
    pub fn refusals_in(&self, units: UnitSystem) -> Vec<FieldError> {
        let mut errs = Vec::new();
        if self.name.trim().is_empty() || self.name.chars().count() > 64 {
            errs.push(FieldError::new("name", "receiver name must be 1 to 64 characters"));
        }
        let v = self.volume_m3;
        if !(v.is_finite() && v > 0.0 && v <= MAX_RECEIVER_VOLUME_M3) {
            let why = Entry::Volume.out_of_range(units, v, 0.0, true, MAX_RECEIVER_VOLUME_M3);
            errs.push(FieldError::new("volume_m3", format!("the receiver's volume {why}")));
        }
        errs
    }
}

#[cfg(test)]
mod tests;

#[cfg(test)]
mod read_json_tests;
