/*!
A column's quantity, unit and compressor, from everything a person would look at: the units row
under the names, the bracketed part of the name (`[kW]`, `(m³/min)`), a unit word in the name
(`C1 kW`, `BP_inHg_Avg`), a neighbouring column that holds the unit in its cells (analysers that
write `30,75 <tab> KW`), the upper rows of a multi-row header, and last the quantity's word in the
name with the unit guessed from the values' range (said in the note).

A name that says reactive or apparent (`reactive`, `apparent`, German `Blind-`, `Schein-`) is
not proposed as power or energy: a compressor's draw is active power.

Rules for a pressure unit that does not say gauge or absolute (`bar`, `psi`, `mWS`): gauge
(common shop practice: gauges show gauge pressure), except inches of mercury whose values sit
near one atmosphere (25 to 32 inHg), which is a barometer's absolute reading (common practice:
barometric pressure is reported in inHg absolute).

Value ranges for a quantity named without a unit (common practice for compressed-air plants, to
be checked by the auditor, which the note asks): pressure up to 25 is bar(g), up to 250 psig, up
to 2,500 kPa(g); power up to 2,000 is kW, above it W; flow up to 60 is m³/min (no guess above);
temperature -60 to 200 is °C; an energy counter is kWh. Pressure between 850 and 1,100 is a
barometer's absolute reading in hPa (= mbar).
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
}

/// What the sniffer knows about a column besides its name.
pub struct Evidence<'a> {
    pub units_row: Option<&'a str>,
    pub unit_column: Option<&'a str>,
    pub upper_rows: Vec<&'a str>,
    /// The numbers of the sample (markers left out).
    pub values: Vec<f64>,
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

/// The quantity a name's words say, without a unit.
fn quantity_word(name: &str) -> Option<&'static str> {
    let l = name.to_lowercase();
    let has = |ws: &[&str]| ws.iter().any(|w| l.contains(w));
    if has(&["reactive", "apparent", "blind", "schein"]) {
        // Reactive and apparent power and energy (kvar, kVA) are not what a compressor draws.
        None
    } else if has(&["energy", "energie", "arbeit", "kwh"]) {
        Some("energy")
    } else if has(&["power", "leistung"]) {
        Some("power")
    } else if has(&["pressure", "druck"]) {
        Some("pressure")
    } else if has(&["flow", "durchfluss", "volumenstrom", "fad"]) {
        Some("flow")
    } else if has(&["temperature", "temperatur", "temp"]) {
        Some("temperature")
    } else if has(&["current", "amps", "strom"]) {
        Some("current")
    } else {
        None
    }
}

fn from_range(quantity: &str, values: &[f64]) -> Option<&'static str> {
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
        "power" if max <= 2000.0 => Some("kW"),
        "power" => Some("W"),
        "flow" if max <= 60.0 => Some("m3_min"),
        "temperature" if values.iter().all(|v| (-60.0..=200.0).contains(v)) => Some("C"),
        "energy" => Some("kWh"),
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
            let contradicted = quantity_word(name).is_some_and(|qw| qw != u.quantity.as_str());
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
        if let Some(code) = from_range(q, &ev.values) {
            let lq = unit_table::LoggedQuantity::ALL.into_iter().find(|l| l.as_str() == q);
            unit = lq.and_then(|lq| unit_table::find(lq, code));
            from = Some("values");
            let label = unit.map_or(code, |u| u.label);
            note =
                Some(format!("no unit in the file: {label} guessed from the name and the values; check it"));
        } else {
            note = Some(format!("looks like {q}, but the file gives no unit: choose it"));
        }
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
    }
}
