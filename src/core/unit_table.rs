/*!
The one table of the units a logger column can be written in.

Each row is one unit: its code (the spelling of API.md and of stored mappings: `bar_g`, `psig`,
`m3_min`, `Nm3_h`...), the quantity it measures, a label for people (`bar(g)`, `m³/min`), the
spellings a mapping may use for it, the spellings the sniffer recognises in a column header, and its
conversion to SI. The mapping (`ingest::mapping`), the sniffer (`ingest::sniff`) and the upload form
(through [`choices`]) all read this table.

Spellings are compared in the normal form of [`normalize`]: lower case, `³` as `3`, `/`, spaces,
`-`, `(`, `)`, `.`, `[` and `]` as `_`, degree signs dropped (`Nm³/h` -> `nm3_h`, `bar(g)` ->
`bar_g`, `°C` -> `c`).

SI is: pressure in Pa on the logged basis (a gauge unit's readings are gauge; the analysis adds the
site's atmosphere, `core::basis`), flow in m³/s of free air at the site inlet, at reference
conditions (standard and normal units, made free air as dry ideal gas by
`SiteAir::free_air_from_reference`) or at line conditions (`LineFlow`, actual volume), power in W,
energy in J, temperature in K, current in A (made into power with the column's volts and power
factor by the mapping).

Sources of the factors: NIST Special Publication 811 (2008 edition), "Guide for the Use of the
International System of Units", appendix B.8 (bar = 1e5 Pa exactly; psi = 6.894 757 E+03 Pa, exact
as 6894.757293168 Pa from the international pound-force and inch; ft³ = 2.831 685 E-02 m³, exact as
0.3048³ = 0.028316846592 m³; litre = 1e-3 m³; kilowatt hour = 3.6e6 J exactly) and B.9 (T/K =
(t/°F + 459.67)/1.8 = t/°C + 273.15); the SI prefixes (k, M, m) of its chapter 4. The tests below
check the factors against pint 0.25.3 (tests/reference/fixture.json). Reference conditions: DIN
1343 normal (101.325 kPa, 0 °C), ISO 1217 standard inlet (100 kPa, 20 °C) and ASME standard air
(14.696 psia, 68 °F), see [`ReferenceConditions`].
*/

use super::units::{ReferenceConditions, J_PER_KWH, M3_PER_FT3, PA_PER_BAR, PA_PER_PSI, T_ZERO_C};

/// What a logger column measures, as a mapping names it (`current` becomes power on the way in).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum LoggedQuantity {
    Power,
    Energy,
    Current,
    Pressure,
    Flow,
    Temperature,
}

impl LoggedQuantity {
    /// Every quantity, in the order the upload form lists them.
    pub const ALL: [Self; 6] =
        [Self::Power, Self::Energy, Self::Current, Self::Pressure, Self::Flow, Self::Temperature];

    /// The mapping's spelling (`power`, `energy`, `current`, `pressure`, `flow`, `temperature`).
    pub fn as_str(self) -> &'static str {
        match self {
            Self::Power => "power",
            Self::Energy => "energy",
            Self::Current => "current",
            Self::Pressure => "pressure",
            Self::Flow => "flow",
            Self::Temperature => "temperature",
        }
    }
}

/// How a value in a unit becomes SI.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ToSi {
    /// SI = value × factor: W for power, J for energy, A for current.
    Scale(f64),
    /// Pa per unit; a gauge unit adds the site atmosphere.
    Pressure { pa_per_unit: f64, gauge: bool },
    /// m³/s per unit of volume flow at `reference` (free air at the site inlet when `None`).
    Flow { m3_s_per_unit: f64, reference: Option<ReferenceConditions> },
    /// m³/s per unit of actual volume flow at line pressure and temperature (the mapping's `line`).
    LineFlow { m3_s_per_unit: f64 },
    /// K = value × scale + offset.
    Temperature { scale: f64, offset: f64 },
}

/// One unit of the table.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct UnitSpelling {
    /// The code of API.md and of stored mappings (`bar_g`, `Nm3_h`).
    pub code: &'static str,
    pub quantity: LoggedQuantity,
    /// How people write it (`bar(g)`, `Nm³/h`).
    pub label: &'static str,
    /// The spellings a mapping may use, in the normal form of [`normalize`] (the code's included).
    pub written: &'static [&'static str],
    /// The spellings the sniffer recognises in a column header, in normal form.
    pub in_headers: &'static [&'static str],
    /// Header spellings that do not say gauge or absolute (`bar`, `psi`): the sniffer proposes this
    /// unit for them with a note (common shop practice: gauges show gauge pressure), and a mapping
    /// refuses them.
    pub unqualified: &'static [&'static str],
    pub to_si: ToSi,
    /// Offered by the upload form's unit list.
    pub offered: bool,
}

const MIN: f64 = 60.0;
const HOUR: f64 = 3600.0;

const fn unit(
    code: &'static str,
    quantity: LoggedQuantity,
    label: &'static str,
    written: &'static [&'static str],
    in_headers: &'static [&'static str],
    to_si: ToSi,
    offered: bool,
) -> UnitSpelling {
    UnitSpelling { code, quantity, label, written, in_headers, unqualified: &[], to_si, offered }
}

const fn pressure(pa_per_unit: f64, gauge: bool) -> ToSi {
    ToSi::Pressure { pa_per_unit, gauge }
}

const fn flow(m3_s_per_unit: f64, reference: Option<ReferenceConditions>) -> ToSi {
    ToSi::Flow { m3_s_per_unit, reference }
}

const fn line_flow(m3_s_per_unit: f64) -> ToSi {
    ToSi::LineFlow { m3_s_per_unit }
}

use LoggedQuantity::{Current, Energy, Flow, Power, Pressure, Temperature};

const NORMAL: Option<ReferenceConditions> = Some(ReferenceConditions::NORMAL_DIN_1343);
const STANDARD: Option<ReferenceConditions> = Some(ReferenceConditions::STANDARD_ISO_1217);
const SCFM: Option<ReferenceConditions> = Some(ReferenceConditions::STANDARD_ASME_SCFM);

/// The table. Within a quantity, the units the form offers come first, in the form's order.
pub static UNITS: &[UnitSpelling] = &[
    // Power. NIST SP 811 ch. 4 (SI prefixes).
    unit("kW", Power, "kW", &["kw"], &["kw"], ToSi::Scale(1e3), true),
    unit("W", Power, "W", &["w"], &["w", "watt", "watts"], ToSi::Scale(1.0), true),
    unit("MW", Power, "MW", &["mw"], &["mw"], ToSi::Scale(1e6), true),
    // Energy counters. NIST SP 811 B.8: kilowatt hour = 3.6 E+06 J.
    unit("kWh", Energy, "kWh", &["kwh"], &["kwh"], ToSi::Scale(J_PER_KWH), true),
    unit("Wh", Energy, "Wh", &["wh"], &["wh"], ToSi::Scale(J_PER_KWH / 1000.0), true),
    unit("MWh", Energy, "MWh", &["mwh"], &["mwh"], ToSi::Scale(J_PER_KWH * 1000.0), true),
    unit("J", Energy, "J", &["j"], &[], ToSi::Scale(1.0), false),
    unit("kJ", Energy, "kJ", &["kj"], &[], ToSi::Scale(1e3), false),
    unit("MJ", Energy, "MJ", &["mj"], &[], ToSi::Scale(1e6), false),
    // Current (the mapping makes power of it with volts and power factor).
    unit(
        "A",
        Current,
        "A",
        &["a", "amp", "amps", "ampere", "amperes"],
        &["a", "amp", "amps", "ampere", "amperes"],
        ToSi::Scale(1.0),
        true,
    ),
    // Pressure. NIST SP 811 B.8: bar = 1.0 E+05 Pa; psi = 6.894 757 E+03 Pa (6894.757293168 exact).
    // `bar_ü` is the German "Überdruck" (gauge) written in headers.
    UnitSpelling {
        unqualified: &["bar"],
        ..unit(
            "bar_g",
            Pressure,
            "bar(g)",
            &["bar_g", "barg"],
            &["barg", "bar_g", "bar_ü", "barü"],
            pressure(PA_PER_BAR, true),
            true,
        )
    },
    UnitSpelling {
        unqualified: &["psi"],
        ..unit(
            "psig",
            Pressure,
            "psig",
            &["psi_g", "psig"],
            &["psig", "psi_g"],
            pressure(PA_PER_PSI, true),
            true,
        )
    },
    UnitSpelling {
        unqualified: &["kpa"],
        ..unit(
            "kPa_g",
            Pressure,
            "kPa(g)",
            &["kpa_g", "kpag"],
            &["kpa_g", "kpag"],
            pressure(1000.0, true),
            true,
        )
    },
    UnitSpelling {
        unqualified: &["mpa"],
        ..unit("MPa_g", Pressure, "MPa(g)", &["mpa_g", "mpag"], &[], pressure(1.0e6, true), true)
    },
    unit(
        "bar_a",
        Pressure,
        "bar(a)",
        &["bar_a", "bara", "bar_abs"],
        &["bara", "bar_a", "bar_abs"],
        pressure(PA_PER_BAR, false),
        true,
    ),
    unit(
        "psia",
        Pressure,
        "psia",
        &["psi_a", "psia", "psi_abs"],
        &["psia", "psi_a"],
        pressure(PA_PER_PSI, false),
        true,
    ),
    unit(
        "kPa_a",
        Pressure,
        "kPa(a)",
        &["kpa_a", "kpaa", "kpa_abs"],
        &["kpa_a", "kpaa"],
        pressure(1000.0, false),
        true,
    ),
    unit("MPa_a", Pressure, "MPa(a)", &["mpa_a", "mpaa", "mpa_abs"], &[], pressure(1.0e6, false), false),
    unit("mbar_g", Pressure, "mbar(g)", &["mbar_g", "mbarg"], &[], pressure(PA_PER_BAR / 1000.0, true), true),
    unit(
        "mbar_a",
        Pressure,
        "mbar(a)",
        &["mbar_a", "mbara", "mbar_abs"],
        &[],
        pressure(PA_PER_BAR / 1000.0, false),
        true,
    ),
    unit("Pa_g", Pressure, "Pa(g)", &["pa_g", "pag"], &[], pressure(1.0, true), false),
    unit("Pa_a", Pressure, "Pa(a)", &["pa_a", "paa", "pa_abs"], &[], pressure(1.0, false), false),
    // Flow. Free air: volume at the site inlet. NIST SP 811 B.8: ft³ = 2.831 685 E-02 m³ (0.3048³
    // exact); litre = 1.0 E-03 m³.
    unit("m3_min", Flow, "m³/min", &["m3_min", "m3min"], &["m3_min", "m3min"], flow(1.0 / MIN, None), true),
    unit("m3_h", Flow, "m³/h", &["m3_h", "m3h", "m3_hr"], &["m3_h", "m3h"], flow(1.0 / HOUR, None), true),
    unit("l_s", Flow, "l/s", &["l_s", "ls"], &["l_s"], flow(1e-3, None), true),
    unit("cfm", Flow, "cfm", &["cfm", "ft3_min"], &["cfm"], flow(M3_PER_FT3 / MIN, None), true),
    // Reference volumes: ASME standard air for scfm, DIN 1343 normal for Nm³ and Nl, ISO 1217
    // standard inlet for Sm³ (the defaults when a mapping gives no `reference`).
    unit("scfm", Flow, "scfm", &["scfm"], &["scfm"], flow(M3_PER_FT3 / MIN, SCFM), true),
    unit("Nm3_h", Flow, "Nm³/h", &["nm3_h", "nm3h"], &["nm3_h", "nm3h"], flow(1.0 / HOUR, NORMAL), true),
    unit("Nm3_min", Flow, "Nm³/min", &["nm3_min"], &["nm3_min"], flow(1.0 / MIN, NORMAL), true),
    unit("Sm3_h", Flow, "Sm³/h", &["sm3_h", "sm3h"], &["sm3_h"], flow(1.0 / HOUR, STANDARD), true),
    unit("Sm3_min", Flow, "Sm³/min", &["sm3_min"], &["sm3_min"], flow(1.0 / MIN, STANDARD), true),
    unit("m3_s", Flow, "m³/s", &["m3_s"], &[], flow(1.0, None), false),
    unit("l_min", Flow, "l/min", &["l_min", "lpm"], &["l_min", "lpm"], flow(1e-3 / MIN, None), true),
    unit("Nl_min", Flow, "Nl/min", &["nl_min"], &[], flow(1e-3 / MIN, NORMAL), false),
    unit("Nl_s", Flow, "Nl/s", &["nl_s"], &[], flow(1e-3, NORMAL), false),
    // --- Line-condition flow (issue 14, readings that follow the site) -------------------------
    // Actual volume at the line's pressure and temperature, which the mapping's `line` gives; the
    // analysis makes free air of it with the site's air (`core::basis`). NIST SP 811 B.8 factors.
    // Offered by the upload form, which asks for the line's pressure (a value or a logged pressure
    // column) and temperature beside them.
    unit(
        "acfm",
        Flow,
        "acfm (actual)",
        &["acfm", "actual_cfm"],
        &["acfm"],
        line_flow(M3_PER_FT3 / MIN),
        true,
    ),
    unit(
        "am3_min",
        Flow,
        "am³/min (actual)",
        &["am3_min", "am3min"],
        &["am3_min", "am3min"],
        line_flow(1.0 / MIN),
        true,
    ),
    unit(
        "am3_h",
        Flow,
        "am³/h (actual)",
        &["am3_h", "am3h"],
        &["am3_h", "am3h"],
        line_flow(1.0 / HOUR),
        true,
    ),
    // --- end of line-condition flow ------------------------------------------------------------
    // Temperature. NIST SP 811 B.9: T/K = t/°C + 273.15 = (t/°F + 459.67)/1.8.
    unit(
        "C",
        Temperature,
        "°C",
        &["c", "degc", "celsius"],
        &["c", "degc"],
        ToSi::Temperature { scale: 1.0, offset: T_ZERO_C },
        true,
    ),
    unit(
        "F",
        Temperature,
        "°F",
        &["f", "degf", "fahrenheit"],
        &["f", "degf"],
        ToSi::Temperature { scale: 5.0 / 9.0, offset: T_ZERO_C - 32.0 * 5.0 / 9.0 },
        true,
    ),
    unit("K", Temperature, "K", &["k", "kelvin"], &[], ToSi::Temperature { scale: 1.0, offset: 0.0 }, true),
    // ---- Water and mercury columns (issue 14). -------------------------------------------------
    // Level and barometric loggers write pressure as a liquid column. NIST SP 811 (2008) B.8:
    // "meter of water, conventional (mH2O)" = 9.806 65 E+03 Pa (1000 kg/m³ × 9.806 65 m/s²),
    // "inch of water, conventional (inH2O)" = 2.490 889 E+02 Pa (0.0254 m of it), "inch of
    // mercury, conventional (inHg)" = 3.386 389 E+03 Pa (13 595.1 kg/m³, mercury at 0 °C, × 0.0254
    // m × 9.806 65 m/s²). `mWS` is the German "Meter Wassersäule". Each is gauge (`_g`) or absolute
    // (`_a`); a bare spelling in a header is proposed as gauge, except inches of mercury near one
    // atmosphere, which the sniffer reads as a barometer's absolute pressure.
    UnitSpelling {
        unqualified: &["mh2o", "m_h2o", "mws", "mwc", "m_wc"],
        ..unit(
            "mH2O_g",
            Pressure,
            "mH₂O(g)",
            &["mh2o_g", "mh2og", "mws_g", "mwc_g"],
            &["mh2o_g", "mh2og", "mws_g", "mwc_g", "mws_rel", "mh2o_rel", "mwg"],
            pressure(PA_PER_M_H2O, true),
            true,
        )
    },
    unit(
        "mH2O_a",
        Pressure,
        "mH₂O(a)",
        &["mh2o_a", "mh2oa", "mh2o_abs", "mws_a", "mwc_a"],
        &["mh2o_a", "mh2o_abs", "mws_a", "mws_abs", "mwc_a"],
        pressure(PA_PER_M_H2O, false),
        true,
    ),
    UnitSpelling {
        unqualified: &["inh2o", "in_h2o", "inwc", "in_wc", "iwc", "inches_h2o"],
        ..unit(
            "inH2O_g",
            Pressure,
            "inH₂O(g)",
            &["inh2o_g", "inh2og", "inwc_g", "in_h2o_g"],
            &["inh2o_g", "inh2og", "in_h2o_g", "inwc_g", "inwg", "in_wg"],
            pressure(PA_PER_IN_H2O, true),
            true,
        )
    },
    unit(
        "inH2O_a",
        Pressure,
        "inH₂O(a)",
        &["inh2o_a", "inh2oa", "inh2o_abs", "in_h2o_a"],
        &["inh2o_a", "inh2o_abs", "in_h2o_a"],
        pressure(PA_PER_IN_H2O, false),
        true,
    ),
    UnitSpelling {
        unqualified: &["inhg", "in_hg", "inches_hg"],
        ..unit(
            "inHg_g",
            Pressure,
            "inHg(g)",
            &["inhg_g", "inhgg", "in_hg_g"],
            &["inhg_g", "inhgg", "in_hg_g", "inhgv", "inhg_vac"],
            pressure(PA_PER_IN_HG, true),
            true,
        )
    },
    unit(
        "inHg_a",
        Pressure,
        "inHg(a)",
        &["inhg_a", "inhga", "inhg_abs", "in_hg_a"],
        &["inhg_a", "inhga", "inhg_abs", "in_hg_a"],
        pressure(PA_PER_IN_HG, false),
        true,
    ),
    // ---- End of the water and mercury columns. --------------------------------------------------
];

/// Pa per conventional metre of water: 1000 kg/m³ × 9.806 65 m/s² (NIST SP 811 B.8, 9.806 65 E+03).
pub const PA_PER_M_H2O: f64 = 1000.0 * 9.806_65;
/// Pa per conventional inch of water: 0.0254 m of it (NIST SP 811 B.8, 2.490 889 E+02).
pub const PA_PER_IN_H2O: f64 = 0.0254 * PA_PER_M_H2O;
/// Pa per conventional inch of mercury: 13 595.1 kg/m³ × 9.806 65 m/s² × 0.0254 m (NIST SP 811
/// B.8, 3.386 389 E+03).
pub const PA_PER_IN_HG: f64 = 13_595.1 * 9.806_65 * 0.0254;

/// A unit spelling in its normal form: lower case, `³` -> `3`, `/`, ` `, `-`, `(`, `)`, `.`, `[`,
/// `]` -> `_`, `°` and `º` dropped, runs of `_` collapsed, no leading or trailing `_`.
pub fn normalize(spelling: &str) -> String {
    let mut out = String::with_capacity(spelling.len());
    for ch in spelling.trim().chars() {
        let c = match ch {
            '³' => '3',
            '/' | ' ' | '-' | '(' | ')' | '.' | '[' | ']' => '_',
            '°' | 'º' => continue,
            c => c.to_ascii_lowercase(),
        };
        if c == '_' && (out.is_empty() || out.ends_with('_')) {
            continue;
        }
        out.push(c);
    }
    while out.ends_with('_') {
        out.pop();
    }
    out
}

/// The unit of `quantity` that a mapping's `unit` names, if any. A flow may also be written with
/// "per" (`m3 per min`).
pub fn find(quantity: LoggedQuantity, spelling: &str) -> Option<&'static UnitSpelling> {
    let mut n = normalize(spelling);
    if quantity == Flow {
        n = n.replace("per_", "");
    }
    UNITS.iter().find(|u| u.quantity == quantity && u.written.contains(&n.as_str()))
}

/// True for a pressure spelling that does not say gauge or absolute (`bar`, `psi`, `kPa`, `MPa`).
pub fn is_unqualified_pressure(spelling: &str) -> bool {
    let n = normalize(spelling);
    UNITS.iter().any(|u| u.unqualified.contains(&n.as_str()))
}

/// The unit a header token names (`kW`, `[psig]`'s `psig`, `Nm³/h`), and whether it was an
/// unqualified pressure read as gauge.
pub fn in_header(token: &str) -> Option<(&'static UnitSpelling, bool)> {
    let n = normalize(token);
    UNITS.iter().find_map(|u| {
        if u.in_headers.contains(&n.as_str()) {
            Some((u, false))
        } else if u.unqualified.contains(&n.as_str()) {
            Some((u, true))
        } else {
            None
        }
    })
}

/// The units the upload form offers for a quantity, in its order: `code` is what the mapping
/// stores, `label` what a person reads.
pub fn choices(quantity: LoggedQuantity) -> impl Iterator<Item = &'static UnitSpelling> {
    UNITS.iter().filter(move |u| u.quantity == quantity && u.offered)
}

#[cfg(test)]
mod tests;
