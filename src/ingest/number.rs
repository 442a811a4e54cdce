/*!
Numbers as loggers write them.

- The decimal mark is `.` or `,`, as the mapping says. Exponents (`1.5e3`, `1,5E-2`) are accepted.
- Missing-value markers are not errors: an empty cell, a run of `-`, `NaN`, `OL`, `-OL` (a meter's
  over-range), `N/A`, `#N/A`, `null`, `Err`, `#-1`, `1.#QNAN`, `#VALUE!`... ([`MARKERS`],
  case-insensitive) give [`Cell::Missing`]. Other text is an error here; the parser reads it as a
  missing value too and counts it apart (see `parse`).
- Thousands separators: accepted only where they cannot be misread, that is when the number also
  carries the mapped decimal mark after them and every group after the first has exactly three
  digits (`1,234.5` with `.`, `1.234,5` or `1 234,5` or `1'234,5` with `,`). A bare `1,234` with
  decimal `.` is rejected: it is a decimal comma just as often, and a mapping with the wrong decimal
  mark must fail loudly rather than read 12,5 as 125.
- Fast path: digits with at most one decimal mark and at most 15 significant digits are computed as
  an integer mantissa divided by an exact power of ten, which is correctly rounded (both operands
  are exact in f64, and IEEE division rounds once). Everything else goes through `str::parse`.
*/

/// One parsed cell.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Cell {
    Value(f64),
    Missing,
}

/// Exact powers of ten in f64 (10^0..10^22 are exactly representable).
const POW10: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16, 1e17, 1e18,
    1e19, 1e20, 1e21, 1e22,
];

/// The missing-value and error markers loggers and spreadsheets write where a number belongs,
/// compared ASCII case-insensitively with the trimmed cell (besides the empty cell and runs of
/// `-`): not-a-number as C runtimes and spreadsheets print it, over-range, device errors.
pub const MARKERS: &[&[u8]] = &[
    b"nan",
    b"-nan",
    b"n/a",
    b"#n/a",
    b"na",
    b"null",
    b"none",
    b"?",
    b"ol",
    b"-ol",
    b"+ol",
    b"err",
    b"error",
    b"#-1",
    b"1.#qnan",
    b"-1.#qnan",
    b"1.#snan",
    b"1.#ind",
    b"-1.#ind",
    b"1.#inf",
    b"-1.#inf",
    b"#value!",
    b"#div/0!",
    b"#ref!",
    b"#num!",
    b"#name?",
    b"#null!",
    b"---.-",
    b"overflow",
    b"underflow",
];

/// Whether a trimmed cell is one of the missing-value markers ([`MARKERS`], the empty cell, a run
/// of `-`).
pub fn is_missing_marker(s: &[u8]) -> bool {
    if s.is_empty() || s.iter().all(|&b| b == b'-') {
        return true;
    }
    s.len() <= 9 && MARKERS.iter().any(|m| m.eq_ignore_ascii_case(s))
}

/// Trim ASCII spaces and tabs.
pub fn trim(s: &[u8]) -> &[u8] {
    let mut a = 0;
    let mut b = s.len();
    while a < b && (s[a] == b' ' || s[a] == b'\t') {
        a += 1;
    }
    while b > a && (s[b - 1] == b' ' || s[b - 1] == b'\t') {
        b -= 1;
    }
    &s[a..b]
}

/// Parse one cell with the given decimal mark (`b'.'` or `b','`). The error is a lower-case
/// reason quoting the cell.
pub fn parse_cell(raw: &[u8], decimal: u8) -> Result<Cell, String> {
    let s = trim(raw);
    if let Some(v) = fast(s, decimal) {
        return Ok(Cell::Value(v));
    }
    if is_missing_marker(s) {
        return Ok(Cell::Missing);
    }
    slow(s, decimal).map(Cell::Value)
}

/// Digits with at most one decimal mark, an optional sign, <= 15 significant digits.
#[inline]
fn fast(s: &[u8], decimal: u8) -> Option<f64> {
    let (neg, body) = match s.first()? {
        b'-' => (true, &s[1..]),
        b'+' => (false, &s[1..]),
        _ => (false, s),
    };
    if body.is_empty() || body.len() > 16 {
        return None;
    }
    let mut mant: u64 = 0;
    let mut digits = 0usize;
    let mut frac = 0usize;
    let mut seen_mark = false;
    for &b in body {
        if b.is_ascii_digit() {
            mant = mant * 10 + (b - b'0') as u64;
            digits += 1;
            if seen_mark {
                frac += 1;
            }
        } else if b == decimal && !seen_mark {
            seen_mark = true;
        } else {
            return None;
        }
    }
    if digits == 0 || digits > 15 {
        return None;
    }
    let v = mant as f64 / POW10[frac];
    Some(if neg { -v } else { v })
}

fn slow(s: &[u8], decimal: u8) -> Result<f64, String> {
    let shown = || String::from_utf8_lossy(s).into_owned();
    let bad = || format!("cannot read number {:?}", shown());
    if !s.is_ascii() {
        return Err(bad());
    }
    let other_mark = if decimal == b'.' { b',' } else { b'.' };
    let mut text: Vec<u8> = Vec::with_capacity(s.len());
    // Split off the exponent first: grouping and decimal mark live in the mantissa only.
    let epos = s.iter().position(|&b| b == b'e' || b == b'E');
    let (mant, exp) = match epos {
        Some(p) => (&s[..p], Some(&s[p..])),
        None => (s, None),
    };
    let group_chars = [other_mark, b' ', b'\''];
    let has_group = mant.iter().any(|b| group_chars.contains(b));
    if has_group {
        let dec_pos = mant.iter().position(|&b| b == decimal);
        let Some(dec_pos) = dec_pos else {
            return Err(format!(
                "cannot read number {:?}: a thousands separator without the decimal mark {:?} \
                 is ambiguous",
                shown(),
                decimal as char
            ));
        };
        let int_part = &mant[..dec_pos];
        let (sign, int_digits) = match int_part.first() {
            Some(b'-') | Some(b'+') => (&int_part[..1], &int_part[1..]),
            _ => (&int_part[..0], int_part),
        };
        let sep = int_digits.iter().copied().find(|b| group_chars.contains(b));
        let groups: Vec<&[u8]> = match sep {
            Some(sep) => int_digits.split(|&b| b == sep).collect(),
            None => vec![int_digits],
        };
        let ok = groups.len() >= 2
            && (1..=3).contains(&groups[0].len())
            && groups[1..].iter().all(|g| g.len() == 3)
            && groups.iter().all(|g| g.iter().all(u8::is_ascii_digit));
        if !ok || mant[dec_pos + 1..].iter().any(|b| !b.is_ascii_digit()) {
            return Err(bad());
        }
        text.extend_from_slice(sign);
        for g in groups {
            text.extend_from_slice(g);
        }
        text.push(b'.');
        text.extend_from_slice(&mant[dec_pos + 1..]);
    } else {
        for &b in mant {
            if b == decimal {
                text.push(b'.');
            } else if b == b'.' {
                // A '.' when the decimal mark is ',' (and no grouping matched above) is wrong.
                return Err(bad());
            } else {
                text.push(b);
            }
        }
    }
    if let Some(e) = exp {
        text.extend_from_slice(e);
    }
    let t = std::str::from_utf8(&text).map_err(|_| bad())?;
    // str::parse accepts "inf" and "nan" spellings; a logger value must be a finite number.
    match t.parse::<f64>() {
        Ok(v) if v.is_finite() && t.bytes().any(|b| b.is_ascii_digit()) => Ok(v),
        _ => Err(bad()),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn v(s: &str, d: u8) -> f64 {
        match parse_cell(s.as_bytes(), d).unwrap() {
            Cell::Value(v) => v,
            Cell::Missing => panic!("missing for {s}"),
        }
    }

    #[test]
    fn both_decimal_marks_and_exponents() {
        assert_eq!(v("12.5", b'.'), 12.5);
        assert_eq!(v("12,5", b','), 12.5);
        assert_eq!(v(" -0,25 ", b','), -0.25);
        assert_eq!(v("1.5e3", b'.'), 1500.0);
        assert_eq!(v("1,5E-2", b','), 0.015);
        assert_eq!(v("+7", b'.'), 7.0);
        assert_eq!(v(".5", b'.'), 0.5);
        assert_eq!(v("5.", b'.'), 5.0);
    }

    #[test]
    fn thousands_separators_only_when_unambiguous() {
        assert_eq!(v("1,234.5", b'.'), 1234.5);
        assert_eq!(v("1.234,5", b','), 1234.5);
        assert_eq!(v("12 345,0", b','), 12345.0);
        assert_eq!(v("1'234'567.25", b'.'), 1234567.25);
        assert!(parse_cell(b"1,234", b'.').unwrap_err().contains("ambiguous"));
        assert!(parse_cell(b"12,5", b'.').is_err());
        assert!(parse_cell(b"1,23.5", b'.').is_err());
        assert!(parse_cell(b"12.5", b',').is_err());
    }

    #[test]
    fn missing_markers_are_not_errors() {
        for m in ["", "  ", "NaN", "nan", "---", "--", "OL", "-OL", "N/A", "#N/A", "null", "NULL"] {
            assert_eq!(parse_cell(m.as_bytes(), b'.'), Ok(Cell::Missing), "{m:?}");
        }
    }

    #[test]
    fn garbage_is_an_error_quoting_the_value() {
        let e = parse_cell(b"12.3x", b'.').unwrap_err();
        assert_eq!(e, "cannot read number \"12.3x\"");
        assert!(parse_cell(b"inf", b'.').is_err());
        assert!(parse_cell(b"-", b'.').is_ok()); // a lone dash is a missing marker (all dashes)
        assert!(parse_cell(b"1.2.3", b'.').is_err());
    }

    proptest! {
        // Reference: Rust's own correctly rounded decimal parser (str::parse::<f64>).
        #[test]
        fn fixed_point_numbers_parse_like_std_with_either_mark(
            int in 0u64..10_000_000_000, frac in 0u32..1_000_000, fd in 0usize..7, neg: bool,
            comma: bool,
        ) {
            let mark = if comma { ',' } else { '.' };
            let frac_s = format!("{frac:06}");
            let frac_s = &frac_s[..fd];
            let sign = if neg { "-" } else { "" };
            let dotted = if fd == 0 { format!("{sign}{int}") } else { format!("{sign}{int}.{frac_s}") };
            let written = dotted.replace('.', &mark.to_string());
            let expected: f64 = dotted.parse().unwrap();
            prop_assert_eq!(parse_cell(written.as_bytes(), mark as u8), Ok(Cell::Value(expected)));
        }

        #[test]
        fn any_finite_f64_round_trips_through_its_display_and_exponent_forms(x in -1e300f64..1e300) {
            let shown = format!("{x}");
            prop_assert_eq!(parse_cell(shown.as_bytes(), b'.'), Ok(Cell::Value(x)));
            let with_comma = shown.replace('.', ",");
            prop_assert_eq!(parse_cell(with_comma.as_bytes(), b','), Ok(Cell::Value(x)));
            let exp = format!("{x:e}");
            prop_assert_eq!(parse_cell(exp.as_bytes(), b'.'), Ok(Cell::Value(x)));
        }
    }
}
