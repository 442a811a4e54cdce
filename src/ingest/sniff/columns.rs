/*!
A column's quantity, unit and compressor, from everything a person would look at: the units row
under the names, the bracketed part of the name (`[kW]`, `(m³/min)`), a unit word in the name
(`C1 kW`, `Baro_inHg_mean`), a neighbouring column that holds the unit in its cells (analysers that
write `30,75 <tab> KW`), the upper rows of a multi-row header, and last the quantity's word in the
name with the unit guessed from the values' range (said in the note).

A name that says reactive, apparent or non-active (`reactive`, `apparent`, German `Blind-`,
`Schein-`, the symbols S, Q, N glued to `Power` or beside a sum or phase, `kVA`, `kvar`, power
factor, fundamental or harmonic parts; IEC 60050-131, IEEE 1459) is not proposed as power or
energy, even with a power unit: a compressor's draw is active power. A name for active power
(`PowerP`, `P_total`, `P L1`, `active`, `real`) is power without the word "power"; a bare `P` is not
(it is as often a pressure).

Rules for a pressure unit that does not say gauge or absolute (`bar`, `psi`, `mWS`): gauge
(common shop practice: gauges show gauge pressure), except inches of mercury whose values sit
near one atmosphere (25 to 32 inHg), which is a barometer's absolute reading (common practice:
barometric pressure is reported in inHg absolute).

Value ranges for a quantity named without a unit (common practice for compressed-air plants, to
be checked by the auditor, which the note asks): pressure up to 25 is bar(g), up to 250 psig, up
to 2,500 kPa(g); flow up to 60 is m³/min (no guess above); temperature -60 to 200 is °C. Pressure
between 850 and 1,100 is a barometer's absolute reading in hPa (= mbar). Power, energy counters,
and flow in a file that logs power: see [`super::physics`].
*/

use crate::core::unit_table;

/// The guess for one column.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ColumnGuess {
    pub column: String,
    pub index: usize,
    /// Mostly numbers in the sampled rows (missing markers left out of the count).
    pub numeric: bool,
    /// `power`, `energy`, `current`, `pressure`, `flow` or `temperature`.
    pub quantity: Option<String>,
    /// The unit as the mapping spells it (`kW`, `psig`, `bar_g`, `Nm3_h`, `C`...).
    pub unit: Option<String>,
    /// The unit as people write it (`bar(g)`, `m³/min`), from the unit table.
    pub unit_label: Option<String>,
    pub compressor: Option<String>,
    /// Where the unit came from: `units_row`, `name`, `unit_column`, `header_rows`, `values`.
    pub unit_from: Option<String>,
    /// Why a guess needs a look (`"bar" read as gauge`...).
    pub note: Option<String>,
    /// The note in parts when it quotes a figure whose unit differs between SI and US customary
    /// (a specific power), so that the server says it in the audit's units; `note` is its SI words.
    #[serde(skip)]
    pub note_parts: Vec<crate::core::recommend::Part>,
}

/// What the sniffer knows about a column besides its name.
pub struct Evidence<'a> {
    pub units_row: Option<&'a str>,
    pub unit_column: Option<&'a str>,
    pub upper_rows: Vec<&'a str>,
    /// The numbers of the sample (markers left out).
    pub values: Vec<f64>,
    /// Each number's row time, seconds (`None` where the timestamp did not read), when a
    /// timestamp was found; empty otherwise.
    pub times: Vec<Option<f64>>,
}

/// A unit hint: (unit, unqualified pressure).
fn unit_hint(token: &str) -> Option<(&'static unit_table::UnitSpelling, bool)> {
    let t = token.trim().trim_start_matches(['[', '(']).trim_end_matches([']', ')']);
    unit_table::in_header(t)
}

/// Tokens of a header name: bracketed parts first (`[kW]`, `(m³/min)`), then words.
pub fn header_tokens(name: &str) -> (Vec<String>, Vec<String>) {
    let mut bracketed = Vec::new();
    let mut rest = String::new();
    let mut part = String::new();
    let mut in_b = false;
    for c in name.chars() {
        match c {
            '[' | '(' if !in_b => {
                in_b = true;
                part.clear();
                rest.push(' ');
            }
            ']' | ')' if in_b => {
                in_b = false;
                bracketed.push(part.trim().to_string());
            }
            c if in_b => part.push(c),
            c => rest.push(c),
        }
    }
    let words = rest
        .split(|c: char| c.is_whitespace() || c == '_' || c == ',' || c == ';')
        .filter(|w| !w.is_empty())
        .map(str::to_string)
        .collect();
    (bracketed, words)
}

fn is_tag(w: &str) -> bool {
    let b = w.as_bytes();
    let letters = b.iter().take_while(|c| c.is_ascii_alphabetic()).count();
    let rest = &b[letters..];
    let rest = rest.strip_prefix(b"-").unwrap_or(rest);
    (1..=6).contains(&letters) && (1..=3).contains(&rest.len()) && rest.iter().all(u8::is_ascii_digit)
}

/// A unit word of the name: the last word that is a unit (single letters only for A, and for C
/// or F after another word, or with a degree sign).
fn unit_word(words: &[String]) -> Option<(usize, &'static unit_table::UnitSpelling, bool)> {
    for (i, w) in words.iter().enumerate().rev() {
        let single = w.trim_start_matches(['°', 'º']).chars().count() == 1;
        if let Some((u, unq)) = unit_hint(w) {
            let q = u.quantity.as_str();
            let ok = !single
                || w.starts_with(['°', 'º'])
                || (q == "current" && w == "A")
                || (q == "temperature" && i > 0);
            if ok {
                return Some((i, u, unq));
            }
        }
    }
    None
}

/// What a name says of an electrical power or energy: active (what a compressor draws), or not.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Electrical {
    /// Active (real) power or energy: `active`, `real`, German `Wirk-`, `PowerP`, `P_total`.
    Active,
    /// Apparent (S, VA), reactive (Q, var), non-active (N), fundamental or harmonic parts, and
    /// power factor: IEC 60050-131 and IEEE 1459 name these apart from active power P.
    NotActive,
}

/// Active power or not, from the name's words (`None` when the name says neither).
pub fn electrical(name: &str) -> Option<Electrical> {
    let l = name.to_lowercase();
    let words: Vec<&str> = l.split(|c: char| !c.is_alphanumeric()).filter(|w| !w.is_empty()).collect();
    let has_word = |ws: &[&str]| words.iter().any(|w| ws.contains(w));
    let sub = |ss: &[&str]| ss.iter().any(|s| l.contains(s));
    // The symbol glued to `power` (`PowerP_L1_mean`, `PowerS_Sum`, `PowerQfund_L2`).
    let symbol = words.iter().find_map(|w| w.strip_prefix("power").filter(|r| !r.is_empty()));
    let not_active = sub(&[
        "apparent", "reactive", "nonactive", "non-active", "non active", "blind", "schein", "factor",
        "cosphi", "cos phi", "fundamental", "harmonic",
    ]) || has_word(&["kva", "va", "mva", "kvar", "var", "mvar", "kvah", "vah", "kvarh", "varh", "pf"])
        || symbol.is_some_and(|r| r != "p" && r != "kw" && r != "w")
        // `S` or `Q` beside `power`, a sum or a phase: apparent or reactive power.
        || (has_word(&["s", "q"]) && has_word(&["power", "total", "tot", "sum", "l1", "l2", "l3"]));
    // `P` beside a sum or a phase conductor (IEC 60445: L1, L2, L3), not alone: a bare `P` is as
    // often a pressure in a compressor room.
    let p_total = (has_word(&["p"]) && has_word(&["total", "tot", "sum", "l1", "l2", "l3"]))
        || has_word(&["ptot", "psum", "ptotal"]);
    let active_word = words.iter().any(|w| {
        ["active", "real", "wirk"].iter().any(|a| {
            w == a
                || w.strip_prefix(a).is_some_and(|r| {
                    ["power", "energy", "leistung", "energie", "arbeit"].iter().any(|q| r.starts_with(q))
                })
        })
    });
    if not_active {
        Some(Electrical::NotActive)
    } else if symbol.is_some() || p_total || active_word {
        Some(Electrical::Active)
    } else {
        None
    }
}

/// The quantity a name's words name, active or not (`PowerP`, `P_total` name power; `real` or
/// `active` alone only when no other quantity is named).
fn named_quantity(name: &str) -> Option<&'static str> {
    let l = name.to_lowercase();
    let has = |ws: &[&str]| ws.iter().any(|w| l.contains(w));
    let other = if has(&["pressure", "druck"]) {
        Some("pressure")
    } else if has(&["flow", "durchfluss", "volumenstrom", "fad"]) {
        Some("flow")
    } else if has(&["temperature", "temperatur", "temp", "dew", "taupunkt"]) {
        Some("temperature")
    } else if has(&["current", "amps", "strom", "irms"]) {
        Some("current")
    } else {
        None
    };
    if has(&["energy", "energie", "arbeit", "kwh"]) {
        Some("energy")
    } else if has(&["power", "leistung"]) || (other.is_none() && electrical(name) == Some(Electrical::Active))
    {
        Some("power")
    } else {
        other
    }
}

/// The quantity a name's words say, without a unit. Reactive, apparent and other non-active
/// power and energy (kvar, kVA) are not what a compressor draws: none.
pub fn quantity_word(name: &str) -> Option<&'static str> {
    let q = named_quantity(name)?;
    let electric = q == "power" || q == "energy";
    (!(electric && electrical(name) == Some(Electrical::NotActive))).then_some(q)
}

fn from_range(quantity: &str, values: &[f64], times: &[Option<f64>]) -> Option<&'static str> {
    match quantity {
        "power" => return Some(super::physics::power_unit(values)),
        "energy" => return super::physics::energy_unit(values, times),
        _ => {}
    }
    let max = values.iter().fold(f64::NEG_INFINITY, |m, v| m.max(v.abs()));
    if !max.is_finite() {
        return None;
    }
    let near = |a: f64, b: f64| values.iter().all(|v| (a..=b).contains(v));
    match quantity {
        // Barometric pressure in hPa (= mbar) near one atmosphere is absolute.
        "pressure" if near(850.0, 1100.0) => Some("mbar_a"),
        "pressure" if max <= 25.0 => Some("bar_g"),
        "pressure" if max <= 250.0 => Some("psig"),
        "pressure" if max <= 2500.0 => Some("kPa_g"),
        "flow" if max <= 60.0 => Some("m3_min"),
        "temperature" if values.iter().all(|v| (-60.0..=200.0).contains(v)) => Some("C"),
        "current" => Some("A"),
        _ => None,
    }
}

/// Guess one column.
pub fn guess(name: &str, index: usize, numeric: bool, ev: &Evidence) -> ColumnGuess {
    let (bracketed, words) = header_tokens(name);
    let mut skip_word = None;
    let mut hint: Option<(&'static unit_table::UnitSpelling, bool, &str)> = None;
    if let Some((u, unq)) = ev.units_row.and_then(unit_hint) {
        hint = Some((u, unq, "units_row"));
    }
    if hint.is_none() {
        hint = bracketed.iter().find_map(|t| unit_hint(t)).map(|(u, q)| (u, q, "name"));
    }
    if hint.is_none() {
        hint = ev.unit_column.and_then(unit_hint).map(|(u, q)| (u, q, "unit_column"));
    }
    if hint.is_none() {
        if let Some((i, u, q)) = unit_word(&words) {
            skip_word = Some(i);
            // A lone letter that a quantity word of the name contradicts is a phase or a
            // channel letter (`PowerS_A_avg`), not a unit.
            let letter = words[i].chars().count() == 1;
            let contradicted = named_quantity(name).is_some_and(|qw| qw != u.quantity.as_str());
            if !(letter && contradicted) {
                hint = Some((u, q, "name"));
            }
        }
    }
    if hint.is_none() {
        hint = ev
            .upper_rows
            .iter()
            .find_map(|c| {
                let (b, w) = header_tokens(c);
                b.iter().find_map(|t| unit_hint(t)).or_else(|| unit_word(&w).map(|(_, u, q)| (u, q)))
            })
            .map(|(u, q)| (u, q, "header_rows"));
    }
    let lower: Vec<String> = words.iter().map(|w| w.to_lowercase()).collect();
    let mut compressor = None;
    for (i, w) in words.iter().enumerate() {
        if Some(i) == skip_word {
            continue;
        }
        let l = &lower[i];
        if (l == "compressor" || l == "comp" || l == "kompressor" || l == "verdichter")
            && words.get(i + 1).is_some_and(|n| n.chars().all(|c| c.is_ascii_digit()))
        {
            compressor = Some(format!("C{}", words[i + 1]));
            break;
        }
        if is_tag(w) && unit_hint(w).is_none() {
            compressor = Some(w.to_string());
            break;
        }
    }
    let mut note = None;
    let mut unit: Option<&'static unit_table::UnitSpelling> = None;
    let mut from = None;
    let electric = |u: &unit_table::UnitSpelling| {
        matches!(u.quantity, unit_table::LoggedQuantity::Power | unit_table::LoggedQuantity::Energy)
    };
    if hint.is_some_and(|(u, _, _)| electric(u)) && electrical(name) == Some(Electrical::NotActive) {
        // Apparent, reactive or another non-active part: not what a compressor draws.
        hint = None;
        note = Some("apparent, reactive or non-active power: not a compressor's draw".into());
    }
    if let Some((u, unqualified, f)) = hint {
        unit = Some(u);
        from = Some(f);
        if unqualified {
            let barometric = u.code == "inHg_g"
                && !ev.values.is_empty()
                && ev.values.iter().all(|v| (25.0..=32.0).contains(v));
            if barometric {
                unit = unit_table::find(unit_table::LoggedQuantity::Pressure, "inHg_a");
                note = Some(
                    "inches of mercury near one atmosphere: read as a barometer's absolute pressure".into(),
                );
            } else {
                note = Some("read as gauge pressure; say absolute if the logger records absolute".into());
            }
        }
    } else if let Some(q) = quantity_word(name) {
        if let Some(code) = from_range(q, &ev.values, &ev.times) {
            let lq = unit_table::LoggedQuantity::ALL.into_iter().find(|l| l.as_str() == q);
            unit = lq.and_then(|lq| unit_table::find(lq, code));
            from = Some("values");
            let label = unit.map_or(code, |u| u.label);
            note = Some(if ev.values.is_empty() {
                format!("no unit in the file and no reading in the sample: {label} proposed; check it")
            } else {
                format!("no unit in the file: {label} guessed from the name and the values; check it")
            });
        } else {
            note = Some(format!("looks like {q}, but the file gives no unit: choose it"));
        }
    } else if named_quantity(name).is_some() && electrical(name) == Some(Electrical::NotActive) {
        note = Some("apparent, reactive or non-active power: not a compressor's draw".into());
    }
    let (quantity, unit, unit_label) = match unit {
        Some(u) if numeric => {
            (Some(u.quantity.as_str().to_string()), Some(u.code.to_string()), Some(u.label.to_string()))
        }
        _ => (None, None, None),
    };
    if quantity.is_none() {
        from = None;
        if !numeric {
            note = None;
        }
    }
    let compressor = match quantity.as_deref() {
        Some("power" | "energy" | "current") => compressor,
        _ => None,
    };
    ColumnGuess {
        column: name.to_string(),
        index,
        numeric,
        quantity,
        unit,
        unit_label,
        compressor,
        unit_from: from.map(str::to_string),
        note,
        note_parts: Vec::new(),
    }
}
