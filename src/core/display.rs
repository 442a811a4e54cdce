/*!
Every number a person sees, with its unit, in the reader's unit system. Pages and printed findings
format through [`Fmt`]; the JSON API never does (it is SI-canonical with units in field names).

Flows always say what they are: free air (volume at the site's inlet conditions, ISO 1217).
*/

use super::recommend::{Part, Quantity};
use super::units::{
    kw_per_100cfm, FreeAirFlow, PressureAbs, Temperature, UnitSystem, Volume, M3_PER_FT3, M3_PER_US_GAL,
    PA_PER_BAR,
};

/// A number written as [`num`] writes it, digits grouped ("8,375"), to the format's precision
/// (none: 0 decimals): `format!("{:.0} kWh/yr", Grouped(kwh))` in texts core builds in words.
pub struct Grouped(pub f64);

impl std::fmt::Display for Grouped {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&num(self.0, f.precision().unwrap_or(0)))
    }
}

/// A missing figure, alone: a dash with no unit after it ("– kW/(m³/min)" read as a value).
pub const MISSING: &str = "–";

/// A duration as a person writes it, to the minute: "20 h 44 min", "35 min", "3 h", "under a
/// minute", "none"; `–` for a missing value.
pub fn hours_minutes(seconds: f64) -> String {
    if !seconds.is_finite() || seconds < 0.0 {
        return "–".into();
    }
    let minutes = (seconds / 60.0).round();
    if minutes == 0.0 {
        return if seconds > 0.0 { "under a minute".into() } else { "none".into() };
    }
    let (h, m) = ((minutes / 60.0).floor(), minutes % 60.0);
    match (h > 0.0, m > 0.0) {
        (false, _) => format!("{m:.0} min"),
        (true, false) => format!("{} h", num(h, 0)),
        (true, true) => format!("{} h {m:.0} min", num(h, 0)),
    }
}

/// A number with thousands separators and `decimals` decimals; `-` for a missing value.
/// A duration in seconds as people say it: whole seconds (a tenth under 10 s), minutes to a tenth
/// from 2 min ("7.3 min", not "440 s").
pub fn seconds(s: f64) -> String {
    if s >= 120.0 {
        format!("{} min", num(s / 60.0, 1))
    } else {
        format!("{} s", num(s, if s >= 10.0 { 0 } else { 1 }))
    }
}

pub fn num(v: f64, decimals: usize) -> String {
    if !v.is_finite() {
        return "–".into();
    }
    let s = format!("{:.*}", decimals, v.abs());
    let (int, frac) = match s.split_once('.') {
        Some((i, f)) => (i.to_string(), Some(f.to_string())),
        None => (s.clone(), None),
    };
    let mut grouped = String::new();
    for (i, c) in int.chars().enumerate() {
        if i > 0 && (int.len() - i) % 3 == 0 {
            grouped.push(',');
        }
        grouped.push(c);
    }
    let sign = if v < 0.0 && s.chars().any(|c| c.is_ascii_digit() && c != '0') { "-" } else { "" };
    match frac {
        Some(f) => format!("{sign}{grouped}.{f}"),
        None => format!("{sign}{grouped}"),
    }
}

/// A range of two figures said with its unit once: "2.72–2.89 m³/min free air", "1,200–3,400 EUR",
/// "12.0–14.5 %"; "-5 to 3 °C" when a figure is negative (a dash beside a minus misreads), and
/// "a to b" whole when the two are not a number and the same unit.
pub fn span(lo: &str, hi: &str) -> String {
    fn split(s: &str) -> Option<(&str, &str)> {
        s.split_once(' ').filter(|(n, _)| {
            n.chars().any(|c| c.is_ascii_digit())
                && n.chars().all(|c| c.is_ascii_digit() || ",.-".contains(c))
        })
    }
    match (split(lo), split(hi)) {
        (Some((a, u)), Some((b, v))) if u == v => {
            if a.starts_with('-') || b.starts_with('-') {
                format!("{a} to {b} {u}")
            } else {
                format!("{a}–{b} {u}")
            }
        }
        _ => format!("{lo} to {hi}"),
    }
}

/// A duration in words, whole units as people say them: "45 s", "0.5 s", "15 min",
/// "1 min 30 s", "9 h 40 min", "3 days 4 h". Below a minute it stays in seconds (to three
/// significant figures); from a minute it is rounded to the whole second, from an hour to the
/// whole minute, from two days to the whole hour, and a zero second part is left out.
pub fn duration_words(s: f64) -> String {
    if !s.is_finite() {
        return "–".into();
    }
    let pair = |big: i64, big_unit: &str, small: i64, small_unit: &str| {
        if small == 0 {
            format!("{big} {big_unit}")
        } else {
            format!("{big} {big_unit} {small} {small_unit}")
        }
    };
    if s < 60.0 {
        let d = if s >= 10.0 { 0 } else { 2 };
        let t = format!("{s:.d$}");
        let t = if t.contains('.') { t.trim_end_matches('0').trim_end_matches('.').to_string() } else { t };
        return format!("{t} s");
    }
    if s < 3600.0 {
        let secs = s.round() as i64;
        if secs < 3600 {
            return pair(secs / 60, "min", secs % 60, "s");
        }
    }
    if s < 172_800.0 {
        let mins = (s / 60.0).round() as i64;
        if mins < 2880 {
            return pair(mins / 60, "h", mins % 60, "min");
        }
    }
    let hours = (s / 3600.0).round() as i64;
    pair(hours / 24, "days", hours % 24, "h")
}

/// A power for a sentence, its digits grouped: kW to one decimal, MW (to three significant
/// figures, grouped) from 10,000 kW, where a figure in kW is too long to read, W to one decimal
/// under 0.1 kW, where a figure in kW would read 0.0 (a column in W read as kW on a machine).
pub fn power_words(w: f64) -> String {
    let kw = w / 1000.0;
    if w != 0.0 && kw.abs() < 0.1 {
        format!("{} W", num(w, 1))
    } else if kw.abs() >= 10_000.0 {
        let mw = kw / 1000.0;
        format!("{} MW", num(mw, sig(mw)))
    } else {
        format!("{} kW", num(kw, 1))
    }
}

/// One unit for a column of energies, so that a column never mixes kWh and MWh: the unit
/// [`Fmt::energy_kwh`] would give the column's largest value.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum EnergyUnit {
    Kwh,
    Mwh,
    Gwh,
}

impl EnergyUnit {
    /// The unit of a column holding these values (kWh when none is finite).
    pub fn for_column(values: impl IntoIterator<Item = f64>) -> Self {
        let max = values.into_iter().filter(|v| v.is_finite()).fold(0.0_f64, |m, v| m.max(v.abs()));
        if max >= 1.0e6 {
            Self::Gwh
        } else if max >= 10_000.0 {
            Self::Mwh
        } else {
            Self::Kwh
        }
    }

    /// The unit of a column of differences (savings against a baseline): chosen by the smallest
    /// one that is not zero, so that a saving of 72 kWh beside one of 40 MWh still reads "72", not
    /// "0.1" (kWh numbers are grouped, so a large one stays readable).
    pub fn for_differences(values: impl IntoIterator<Item = f64>) -> Self {
        let least = values
            .into_iter()
            .filter(|v| v.is_finite() && *v != 0.0)
            .fold(f64::INFINITY, |m, v| m.min(v.abs()));
        Self::for_column([if least.is_finite() { least } else { 0.0 }])
    }

    pub fn label(self) -> &'static str {
        match self {
            Self::Kwh => "kWh",
            Self::Mwh => "MWh",
            Self::Gwh => "GWh",
        }
    }

    /// The number alone (the column's heading carries the unit), with the decimals of
    /// [`Fmt::energy_kwh`] for the unit.
    pub fn number(self, kwh: f64) -> String {
        match self {
            Self::Kwh => num(kwh, 0),
            Self::Mwh => num(kwh / 1000.0, 1),
            Self::Gwh => num(kwh / 1.0e6, 2),
        }
    }
}

/// Decimals that keep about three significant figures for a value of this size.
fn sig(v: f64) -> usize {
    let a = v.abs();
    if a >= 100.0 {
        0
    } else if a >= 10.0 {
        1
    } else if a >= 1.0 {
        2
    } else {
        3
    }
}

/// A number a template may hand over by value or by reference.
pub trait Num {
    fn f(&self) -> f64;
}
impl Num for f64 {
    fn f(&self) -> f64 {
        *self
    }
}
impl<T: Num + ?Sized> Num for &T {
    fn f(&self) -> f64 {
        (**self).f()
    }
}

/// Formats figures for one reader.
#[derive(Debug, Clone, Copy)]
pub struct Fmt {
    pub units: UnitSystem,
    pub atmosphere: PressureAbs,
}

impl Fmt {
    pub fn new(units: UnitSystem, atmosphere: PressureAbs) -> Self {
        Self { units, atmosphere }
    }
    pub fn is_us(&self) -> bool {
        self.units == UnitSystem::Us
    }

    pub fn pressure_bar_g(&self, bar_g: impl Num) -> String {
        let bar_g = bar_g.f();
        if !bar_g.is_finite() {
            return MISSING.into();
        }
        match self.units {
            UnitSystem::Si => format!("{} bar(g)", num(bar_g, 2)),
            UnitSystem::Us => {
                let p = PressureAbs(bar_g * PA_PER_BAR + self.atmosphere.0);
                format!("{} psig", num(p.psig(self.atmosphere), 1))
            }
        }
    }
    pub fn pressure_unit(&self) -> &'static str {
        if self.is_us() {
            "psig"
        } else {
            "bar(g)"
        }
    }
    pub fn pressure_delta_bar(&self, bar: impl Num) -> String {
        let bar = bar.f();
        if !bar.is_finite() {
            return MISSING.into();
        }
        match self.units {
            UnitSystem::Si => format!("{} bar", num(bar, 2)),
            UnitSystem::Us => format!("{} psi", num(bar * PA_PER_BAR / super::units::PA_PER_PSI, 1)),
        }
    }
    /// A temperature difference: K (SI), °F (US; NIST SP 811: 1 K = 1.8 °F as an interval).
    pub fn temperature_difference_k(&self, k: impl Num) -> String {
        let k = k.f();
        if !k.is_finite() {
            return MISSING.into();
        }
        match self.units {
            UnitSystem::Si => format!("{} K", num(k, sig(k).min(1))),
            UnitSystem::Us => format!("{} °F", num(k * 1.8, sig(k * 1.8).min(1))),
        }
    }
    /// An altitude or a length: m (SI), ft (US; NIST SP 811: 1 ft = 0.3048 m exactly).
    pub fn altitude_m(&self, m: impl Num) -> String {
        let m = m.f();
        if !m.is_finite() {
            return MISSING.into();
        }
        match self.units {
            UnitSystem::Si => format!("{} m", num(m, 0)),
            UnitSystem::Us => format!("{} ft", num(m / 0.3048, 0)),
        }
    }
    /// An absolute pressure given in kPa: kPa abs (SI), psia (US).
    pub fn pressure_abs_kpa(&self, kpa: impl Num) -> String {
        let kpa = kpa.f();
        if !kpa.is_finite() {
            return MISSING.into();
        }
        match self.units {
            UnitSystem::Si => format!("{} kPa abs", num(kpa, 2)),
            UnitSystem::Us => format!("{} psia", num(kpa * 1000.0 / super::units::PA_PER_PSI, 2)),
        }
    }
    /// Storage per unit of flow: m³ per m³/min (SI), US gal/cfm (US, the trade's rule-of-thumb unit).
    pub fn storage_per_flow(&self, m3_per_m3_min: impl Num) -> String {
        let v = m3_per_m3_min.f();
        if !v.is_finite() {
            return MISSING.into();
        }
        match self.units {
            UnitSystem::Si => format!("{} m³ per m³/min", num(v, 2)),
            UnitSystem::Us => format!("{} US gal/cfm", num(v * M3_PER_FT3 / M3_PER_US_GAL, 1)),
        }
    }
    pub fn flow_m3_min(&self, q: impl Num) -> String {
        let q = q.f();
        if !q.is_finite() {
            return MISSING.into();
        }
        match self.units {
            UnitSystem::Si => format!("{} m³/min free air", num(q, sig(q))),
            UnitSystem::Us => {
                let cfm = FreeAirFlow::from_m3_min(q).cfm();
                format!("{} cfm free air", num(cfm, sig(cfm).min(1)))
            }
        }
    }
    pub fn flow_unit(&self) -> &'static str {
        if self.is_us() {
            "cfm free air"
        } else {
            "m³/min free air"
        }
    }
    pub fn air_m3(&self, v: impl Num) -> String {
        let v = v.f();
        if !v.is_finite() {
            return MISSING.into();
        }
        match self.units {
            UnitSystem::Si => format!("{} m³ free air", num(v, 0)),
            UnitSystem::Us => format!("{} ft³ free air", num(v / M3_PER_FT3, 0)),
        }
    }
    pub fn power_kw(&self, kw: impl Num) -> String {
        let kw = kw.f();
        if !kw.is_finite() {
            return MISSING.into();
        }
        format!("{} kW", num(kw, sig(kw).min(1)))
    }
    pub fn energy_kwh(&self, kwh: impl Num) -> String {
        let kwh = kwh.f();
        if !kwh.is_finite() {
            return MISSING.into();
        }
        if kwh.abs() >= 1.0e6 {
            format!("{} GWh", num(kwh / 1.0e6, 2))
        } else if kwh.abs() >= 10_000.0 {
            format!("{} MWh", num(kwh / 1000.0, 1))
        } else {
            format!("{} kWh", num(kwh, 0))
        }
    }
    pub fn specific_power(&self, kw_per_m3_min: impl Num) -> String {
        let kw_per_m3_min = kw_per_m3_min.f();
        if !kw_per_m3_min.is_finite() {
            return MISSING.into();
        }
        match self.units {
            UnitSystem::Si => format!("{} kW/(m³/min)", num(kw_per_m3_min, 2)),
            UnitSystem::Us => format!("{} kW/100 cfm", num(kw_per_100cfm(kw_per_m3_min), 1)),
        }
    }
    pub fn specific_power_unit(&self) -> &'static str {
        if self.is_us() {
            "kW/100 cfm"
        } else {
            "kW/(m³/min)"
        }
    }
    pub fn volume_m3(&self, v: impl Num) -> String {
        let v = v.f();
        if !v.is_finite() {
            return MISSING.into();
        }
        match self.units {
            UnitSystem::Si => format!("{} m³", num(v, sig(v).min(2))),
            UnitSystem::Us => format!("{} US gal", num(Volume(v).us_gal(), 0)),
        }
    }
    pub fn temperature_c(&self, c: impl Num) -> String {
        let c = c.f();
        if !c.is_finite() {
            return MISSING.into();
        }
        match self.units {
            UnitSystem::Si => format!("{} °C", num(c, 1)),
            UnitSystem::Us => format!("{} °F", num(Temperature::from_c(c).f(), 0)),
        }
    }
    pub fn money(&self, v: impl Num, currency: &str) -> String {
        let v = v.f();
        if !v.is_finite() {
            return MISSING.into();
        }
        format!("{} {currency}", num(v, if v.abs() >= 100.0 { 0 } else { 2 }))
    }
    /// A price per unit (per kWh, per kW-month) as typed: at least two decimals and as many more,
    /// up to four, as the price has, so the printed price is the one the figures used (0.092 was
    /// printed 0.09).
    pub fn unit_price(&self, v: impl Num, currency: &str) -> String {
        let v = v.f();
        if !v.is_finite() {
            return MISSING.into();
        }
        let decimals = (2..=4)
            .find(|&d| {
                let scale = 10f64.powi(d as i32);
                ((v * scale).round() / scale - v).abs() <= 1e-9 * v.abs().max(1e-9)
            })
            .unwrap_or(4);
        format!("{} {currency}", num(v, decimals))
    }
    /// Cost of compressed air per 1000 m³ (SI) or per 1000 ft³ (US) of free air.
    pub fn air_cost(&self, per_1000_m3: impl Num, currency: &str) -> String {
        let per_1000_m3 = per_1000_m3.f();
        if !per_1000_m3.is_finite() {
            return MISSING.into();
        }
        match self.units {
            // No-break spaces hold the price with its unit on one line in print ("16.61 EUR per
            // 1000 m³"); "free air" may go to the next line, as after every flow.
            UnitSystem::Si => {
                format!("{}\u{a0}{currency}\u{a0}per\u{a0}1000\u{a0}m³ free air", num(per_1000_m3, 2))
            }
            UnitSystem::Us => {
                format!(
                    "{}\u{a0}{currency}\u{a0}per\u{a0}1000\u{a0}ft³ free air",
                    num(per_1000_m3 * M3_PER_FT3, 3)
                )
            }
        }
    }
    /// A count (rows, readings), digits grouped as every figure is: "1,999".
    pub fn count(&self, n: impl std::borrow::Borrow<i64>) -> String {
        num(*n.borrow() as f64, 0)
    }
    pub fn percent(&self, fraction: impl Num) -> String {
        let fraction = fraction.f();
        if !fraction.is_finite() {
            return MISSING.into();
        }
        format!("{} %", num(fraction * 100.0, 1))
    }
    pub fn years(&self, y: impl Num) -> String {
        let y = y.f();
        if !y.is_finite() {
            "no payback".into()
        } else if y < 1.0 {
            // Whole months, said as a person says them: "under 1 month", "1 month", "5 months".
            match (y * 12.0).round() {
                m if m < 1.0 => "under 1 month".into(),
                1.0 => "1 month".into(),
                m => format!("{} months", num(m, 0)),
            }
        } else {
            format!("{} years", num(y, 1))
        }
    }
    pub fn hours(&self, h: impl Num) -> String {
        let h = h.f();
        if !h.is_finite() {
            return MISSING.into();
        }
        format!("{} h", num(h, if h >= 100.0 { 0 } else { 1 }))
    }
    pub fn co2_t(&self, t: impl Num) -> String {
        let t = t.f();
        if !t.is_finite() {
            return MISSING.into();
        }
        format!("{} t CO₂", num(t, 1))
    }
}

/// The words of a measure's `parts` (`core::recommend::Part`) with every figure in `fmt`'s units.
pub fn render_parts(parts: &[Part], fmt: &Fmt) -> String {
    parts
        .iter()
        .map(|p| match p {
            Part::Words(w) => w.clone(),
            Part::Figure { quantity: Quantity::FlowM3Min, value } => fmt.flow_m3_min(*value),
            Part::Figure { quantity: Quantity::PressureBarG, value } => fmt.pressure_bar_g(*value),
            Part::Figure { quantity: Quantity::SpecificPowerKwPerM3Min, value } => fmt.specific_power(*value),
            Part::Figure { quantity: Quantity::PressureDropBar, value } => fmt.pressure_delta_bar(*value),
            Part::Figure { quantity: Quantity::VolumeM3, value } => fmt.volume_m3(*value),
            Part::Figure { quantity: Quantity::StorageM3PerM3Min, value } => fmt.storage_per_flow(*value),
            Part::Figure { quantity: Quantity::TemperatureDifferenceK, value } => {
                fmt.temperature_difference_k(*value)
            }
            Part::Figure { quantity: Quantity::PressureKpaAbs, value } => fmt.pressure_abs_kpa(*value),
            Part::Figure { quantity: Quantity::TemperatureC, value } => fmt.temperature_c(*value),
        })
        .collect()
}

/// A time as the site's clocks show it, with the zone's abbreviation: "Mon 23 Nov 2026 14:05 CST".
/// The one helper for times a person sees (pages, printed findings, the data-quality warnings).
/// Accepts RFC 3339 text; a text that is not one is given back as it is.
pub fn local_time(rfc3339: &str, tz: &str) -> String {
    let Ok(ts) = rfc3339.trim().parse::<jiff::Timestamp>() else {
        return rfc3339.to_string();
    };
    local_ms(ts.as_millisecond(), tz)
}

/// A time in ms since 1970 UTC as the site's clocks show it, with the zone's abbreviation.
pub fn local_ms(ms: i64, tz: &str) -> String {
    let Ok(ts) = jiff::Timestamp::from_millisecond(ms) else {
        return String::new();
    };
    let zone = jiff::tz::TimeZone::get(tz).unwrap_or(jiff::tz::TimeZone::UTC);
    ts.to_zoned(zone).strftime("%a %-d %b %Y %H:%M %Z").to_string()
}

/// [`local_ms`] to the second: for reading a logger's time stamps back, where rows a second apart
/// must not look the same.
pub fn local_ms_seconds(ms: i64, tz: &str) -> String {
    let Ok(ts) = jiff::Timestamp::from_millisecond(ms) else {
        return String::new();
    };
    let zone = jiff::tz::TimeZone::get(tz).unwrap_or(jiff::tz::TimeZone::UTC);
    ts.to_zoned(zone).strftime("%a %-d %b %Y %H:%M:%S %Z").to_string()
}

#[cfg(test)]
mod tests {
    #[test]
    fn a_range_says_its_unit_once() {
        use super::{span, Fmt, UnitSystem};
        let (si, us) = (
            Fmt::new(UnitSystem::Si, super::PressureAbs(101_325.0)),
            Fmt::new(UnitSystem::Us, super::PressureAbs(101_325.0)),
        );
        let r = |f: &Fmt| span(&f.flow_m3_min(2.72), &f.flow_m3_min(2.89));
        assert_eq!(r(&si), "2.72–2.89 m³/min free air");
        // 2.72 and 2.89 m³/min are 96.06 and 102.06 cfm (1 ft³ = 0.028 316 846 592 m³, NIST SP 811).
        assert_eq!(r(&us), "96.1–102 cfm free air");
        assert_eq!(span("-5 °C", "3 °C"), "-5 to 3 °C");
        assert_eq!(span("not enough data", "3 °C"), "not enough data to 3 °C");
    }

    #[test]
    fn a_payback_under_a_year_is_said_in_whole_months_with_its_number() {
        let f = super::Fmt::new(super::UnitSystem::Si, crate::core::units::PressureAbs(101_325.0));
        // 0.09 years is 1.08 months: one month, singular.
        assert_eq!(f.years(0.09), "1 month");
        assert_eq!(f.years(0.5), "6 months");
        assert_eq!(f.years(0.01), "under 1 month");
        assert_eq!(f.years(2.4), "2.4 years");
    }

    #[test]
    fn savings_keep_their_kwh_beside_a_large_one() {
        use super::EnergyUnit;
        // Savings of -72, 484 and 15,230 kWh: the least sets kWh, each reads whole.
        let u = EnergyUnit::for_differences([-72.0, 484.0, 15_230.0, 0.0, f64::NAN]);
        assert_eq!(u, EnergyUnit::Kwh);
        assert_eq!(u.number(-72.0), "-72");
        assert_eq!(u.number(15_230.0), "15,230");
        // Only large savings: MWh as before.
        assert_eq!(EnergyUnit::for_differences([42_000.0, 15_230.0]), EnergyUnit::Mwh);
    }

    #[test]
    fn durations_are_said_in_whole_units_as_people_say_them() {
        use super::duration_words as d;
        // 9.66667 h is 9 h 40 min (0.66667 x 60 = 40); 900 s is 15 min; 34,800 s is 9 h 40 min.
        assert_eq!(d(9.666_67 * 3600.0), "9 h 40 min");
        assert_eq!(d(34_800.0), "9 h 40 min");
        assert_eq!(d(900.0), "15 min");
        assert_eq!(d(60.0), "1 min");
        assert_eq!(d(90.0), "1 min 30 s");
        assert_eq!(d(7200.0), "2 h");
        assert_eq!(d(45.0), "45 s");
        assert_eq!(d(1.0), "1 s");
        assert_eq!(d(0.5), "0.5 s");
        // Rounding never says "60 min" or "24 h": 3599.6 s is 1 h, 2 days less 10 s is 2 days.
        assert_eq!(d(3599.6), "1 h");
        assert_eq!(d(172_790.0), "2 days");
        assert_eq!(d(3.0 * 86_400.0 + 4.0 * 3600.0), "3 days 4 h");
    }

    #[test]
    fn a_large_power_is_grouped_and_said_in_mw() {
        use super::power_words as p;
        assert_eq!(p(78_899_000.0 * 1000.0), "78,899 MW");
        assert_eq!(p(12_345_000.0), "12.3 MW");
        assert_eq!(p(9_876_500.0), "9,876.5 kW");
        assert_eq!(p(75_000.0), "75.0 kW");
        // Under 0.1 kW in W, so a power logged in kW read as W does not read "0.0 kW".
        assert_eq!(p(4.2), "4.2 W");
        assert_eq!(p(-2.7), "-2.7 W");
        assert_eq!(p(99.9), "99.9 W");
        assert_eq!(p(100.0), "0.1 kW");
        assert_eq!(p(0.0), "0.0 kW");
    }

    use super::*;

    #[test]
    fn a_missing_figure_is_a_dash_with_no_unit() {
        // A walk found "– kW/(m³/min)" and "0.000 / – m³/min free air": the unit says a value is there.
        for units in [UnitSystem::Si, UnitSystem::Us] {
            let f = Fmt::new(units, PressureAbs(101_325.0));
            assert_eq!(f.specific_power(f64::NAN), "–");
            assert_eq!(f.flow_m3_min(f64::NAN), "–");
            assert_eq!(f.pressure_bar_g(f64::INFINITY), "–");
            assert_eq!(f.money(f64::NAN, "EUR"), "–");
            assert_eq!(f.percent(f64::NAN), "–");
        }
    }

    #[test]
    fn a_unit_price_keeps_the_digits_it_was_typed_with() {
        let f = Fmt::new(UnitSystem::Si, PressureAbs(101_325.0));
        assert_eq!(f.unit_price(0.092, "USD"), "0.092 USD");
        assert_eq!(f.unit_price(0.15, "EUR"), "0.15 EUR");
        assert_eq!(f.unit_price(0.12345, "EUR"), "0.1235 EUR");
        assert_eq!(f.unit_price(12.5, "EUR"), "12.50 EUR");
        assert_eq!(f.unit_price(1250.0, "EUR"), "1,250.00 EUR");
    }

    #[test]
    fn numbers_group_thousands_and_round() {
        assert_eq!(num(1234567.891, 2), "1,234,567.89");
        assert_eq!(num(-0.004, 2), "0.00");
        assert_eq!(num(-12.5, 1), "-12.5");
        assert_eq!(num(f64::NAN, 1), "–");
    }

    #[test]
    fn durations_read_in_hours_and_minutes() {
        // 1 h = 60 min = 3,600 s (SI Brochure, table 8, units accepted for use with the SI).
        assert_eq!(hours_minutes(1244.0 * 60.0), "20 h 44 min");
        assert_eq!(hours_minutes(35.0 * 60.0), "35 min");
        assert_eq!(hours_minutes(3.0 * 3600.0), "3 h");
        assert_eq!(hours_minutes(20.0), "under a minute");
        assert_eq!(hours_minutes(0.0), "none");
        assert_eq!(hours_minutes(1000.0 * 3600.0), "1,000 h");
        assert_eq!(hours_minutes(f64::NAN), "–");
    }

    #[test]
    fn a_column_of_energies_takes_one_unit() {
        // 9,930 kWh and 11,600 kWh in one column: both in MWh (1 MWh = 1,000 kWh), not one of each.
        let u = EnergyUnit::for_column([9_930.0, 11_600.0, f64::NAN]);
        assert_eq!(u, EnergyUnit::Mwh);
        assert_eq!((u.number(9_930.0).as_str(), u.number(11_600.0).as_str()), ("9.9", "11.6"));
        let small = EnergyUnit::for_column([133.0, 9_797.0]);
        assert_eq!((small.label(), small.number(9_797.0).as_str()), ("kWh", "9,797"));
        assert_eq!(EnergyUnit::for_column([]), EnergyUnit::Kwh);
    }

    #[test]
    fn both_unit_systems_carry_units_and_reference_conditions() {
        let atm = PressureAbs(101_325.0);
        let si = Fmt::new(UnitSystem::Si, atm);
        let us = Fmt::new(UnitSystem::Us, atm);
        assert_eq!(si.pressure_bar_g(7.0), "7.00 bar(g)");
        // 7 bar = 101.5 psi (hand calculation: 700 kPa / 6.894757 kPa/psi).
        assert_eq!(us.pressure_bar_g(7.0), "101.5 psig");
        assert_eq!(si.flow_m3_min(10.0), "10.0 m³/min free air");
        // 10 m³/min = 353.1 cfm (NIST SP 811 conversions), shown to three significant figures.
        assert_eq!(us.flow_m3_min(10.0), "353 cfm free air");
        // NIST SP 811 conversions: 6.357 kW/(m³/min) = 18 kW/100 cfm.
        assert_eq!(us.specific_power(6.357), "18.0 kW/100 cfm");
        assert_eq!(si.temperature_c(20.0), "20.0 °C");
        assert_eq!(us.temperature_c(20.0), "68 °F");
        // NIST SP 811 B.8: 1 psi = 6.894757 kPa, so 99.18 kPa = 14.385 psia; 1 K = 1.8 °F as an interval.
        assert_eq!(si.pressure_abs_kpa(99.18), "99.18 kPa abs");
        assert_eq!(us.pressure_abs_kpa(99.18), "14.38 psia");
        assert_eq!(si.temperature_difference_k(10.0), "10.0 K");
        // 180 m / 0.3048 m/ft = 590.55 ft.
        assert_eq!(us.altitude_m(180.0), "591 ft");
        assert_eq!(si.altitude_m(180.0), "180 m");
        assert_eq!(us.temperature_difference_k(10.0), "18.0 °F");
        // 1 m³ per m³/min = 1 ft³/cfm = 7.48052 US gal/cfm (231 in³ a gallon, 1728 in³ a cubic foot).
        assert_eq!(us.storage_per_flow(0.5), "3.7 US gal/cfm");
        assert_eq!(si.storage_per_flow(0.5), "0.50 m³ per m³/min");
    }
}
