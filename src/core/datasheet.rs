/*!
A compressor as its data sheet states it: the one shape in which a compressor is posted, whether to an
audit (`POST /api/v1/audits/{id}/compressors`, the audit page's form) or to a what-if scenario
(`{"op": "add", "compressor": {...}}`), and its checks. [`DataSheetInput::validate`] turns it into the
one compressor type of the analysis, [`CompressorSpec`]; the audit's stored compressor
(`site::CompressorRecord`) wraps that spec with its id and notes.

# Meaning of the data-sheet fields
- `rated_power_kw`: **package input power at full load and the rated pressure**, as data sheets tested
  to ISO 1217 (annex C fixed speed, annex E variable speed) state it: drive motor, fan, controls, all
  that the package draws from the grid. It is not the motor's nameplate: packages draw 8-15 % above
  it (common practice). A logged loaded power is compared with it only after correcting it to the
  logged pressure (`core::thermo::power_at_pressure_kw`).
- `rated_flow_m3_min`: free air delivery at full load (ISO 1217).
- `rated_pressure_bar_g`: the full-load operating pressure at which the data sheet states power and flow.
- `no_load_power_kw`: package input running unloaded (load/unload, modulation at zero capacity idling).
- `nameplate_motor_kw`: the main motor's nameplate, kept for reference only; no figure uses it.
- `max_pressure_bar_g`: the highest working pressure of the package (unload pressure of a load/unload
  machine).
- `power_curve`: for variable speed, the data sheet's package input at several flows,
  `[[flow_m3_min, kw], ...]`.

# Defaults where a field is blank (shown on the audit page beside each compressor)
| field | default | source |
|---|---|---|
| `no_load_power_kw` | `unloaded_power_fraction` × rated power; the fraction by kind: lubricated screw 0.25, oil-free screw 0.20, reciprocating 0.15, centrifugal 0.30, scroll and vane 0.25 | lubricated screws 15-35 % (US DOE, *Improving Compressed Air System Performance: A Sourcebook for Industry*, from memory); the others common practice, from memory |
| `no_load_power_kw`, variable speed | the curve's power at its lowest flow (minimum speed) | common practice |
| `max_pressure_bar_g` | rated pressure + 0.5 bar | common practice, from memory: a load/unload package unloads about 0.5 bar above its full-load rating |
| `power_curve`, variable speed | `P/P_full = 0.12 + 0.88 Q/Q_full` from `min_speed_fraction` (default 0.20) of rated flow to full | common practice, approximate, from memory (`core::states`) |
| `stages` | 1 | a single-stage package (most shop screws) |
| `nameplate_motor_kw` | none | reference only |

# Accepted ranges
Every number must be finite and lie in its range, or the input is refused naming the field (API 422).

| value | range | why |
|---|---|---|
| `tag` | 1 ..= 32 characters | a label |
| `rated_power_kw` | above 0 ..= 20 000 kW | the largest centrifugal air compressors (common practice) |
| `rated_flow_m3_min` | above 0 ..= 2000 m³/min | same machines |
| `rated_pressure_bar_g` | above 0 ..= 50 bar(g) | shop air and boosters (PET blowing at 40 bar(g)); above is not an air audit |
| `max_pressure_bar_g` | `rated_pressure_bar_g` ..= 50 bar(g) | a package's highest pressure is not below its full-load rating |
| `no_load_power_kw` | 0 ..= 0.9 × `rated_power_kw` | the unloaded fraction's range below |
| `unloaded_power_fraction` | 0 ..= 0.9 | share of full-load power when unloaded (common practice); with `no_load_power_kw` also given the two must agree within 0.5 % of rated power |
| `nameplate_motor_kw` | above 0 ..= 20 000 kW | as rated power |
| `stages` | 1 ..= 6 | compression stages of air compressors (common practice) |
| `rated_specific_power_kw_per_m3_min` | above 0 ..= 50 kW/(m³/min) | about 6 for a good screw at 7 bar(g); 50 leaves room for small and high-pressure machines |
| `power_curve` | at most 64 points of flow 0 ..= 2000 m³/min, power 0 ..= 20 000 kW, flows all different | the rated ranges above |
| `min_speed_fraction` | above 0, below 1 | a share of the rated flow (variable speed without a curve) |
| `year` | 1900 ..= 2100 | |
| `loaded_level_kw` | above 0 ..= 20 000 kW | the auditor's correction of the loaded level found in the log (`core::levels`) |
| `unloaded_level_kw` | above 0, below `loaded_level_kw` (when given) | the same for the unloaded level |
*/

use serde::{Deserialize, Serialize};

use super::entry::Entry;
use super::model::{CompressorKind, CompressorSpec, Control, Cooling};
use super::states;
use super::units::UnitSystem;

/// Upper bounds of the table in the module doc.
pub const MAX_RATED_POWER_KW: f64 = 20_000.0;
pub const MAX_RATED_FLOW_M3_MIN: f64 = 2_000.0;
pub const MAX_PRESSURE_BAR_G: f64 = 50.0;
pub const MAX_UNLOADED_POWER_FRACTION: f64 = 0.9;
pub const MAX_POWER_CURVE_POINTS: usize = 64;
/// Default maximum pressure above the rated pressure, bar (module doc, from memory).
pub const DEFAULT_MAX_ABOVE_RATED_BAR: f64 = 0.5;

/// A data-sheet field that is wrong: the field's name and why.
#[derive(Debug, Clone, PartialEq)]
pub struct SheetError {
    pub field: String,
    pub message: String,
}

fn err<T>(field: &str, message: String) -> Result<T, SheetError> {
    Err(SheetError { field: field.to_string(), message })
}

/// `v` if finite and within `lo..=hi` (above `lo` when `lo_open`), else the field's error.
fn within(field: &str, v: f64, lo: f64, lo_open: bool, hi: f64, unit: &str) -> Result<f64, SheetError> {
    let low_ok = if lo_open { v > lo } else { v >= lo };
    if v.is_finite() && low_ok && v <= hi {
        return Ok(v);
    }
    let from = if lo_open { format!("above {lo}") } else { format!("{lo}") };
    let words = field_words(field);
    err(field, format!("{words} must be a number from {from} to {hi}{unit}, got {v}"))
}

/// A data-sheet field as the form's label says it: refusals are read beside the form's boxes, so
/// they never quote the API's field names.
pub fn field_words(field: &str) -> &str {
    match field {
        "tag" => "the tag",
        "rated_power_kw" => "the package power at rated pressure",
        "rated_flow_m3_min" => "the free air delivery",
        "rated_pressure_bar_g" => "the rated pressure",
        "max_pressure_bar_g" => "the maximum pressure",
        "nameplate_motor_kw" => "the motor's nameplate power",
        "loaded_level_kw" => "the loaded power level",
        "unloaded_level_kw" => "the unloaded power level",
        "no_load_power_kw" => "the no-load power",
        "unloaded_power_fraction" => "the unloaded power, as a fraction of full-load power (0.25 for 25 %),",
        "min_speed_fraction" => "the minimum speed, as a fraction of full speed (0.3 for 30 %),",
        "stages" => "the number of stages",
        "year" => "the year",
        "power_curve" => "the power curve",
        other => other,
    }
}

/// A compressor as posted (module doc): the API.md fields, the data-sheet additions and blanks.
#[derive(Debug, Clone, Default, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DataSheetInput {
    pub tag: String,
    pub kind: String,
    pub control: String,
    pub cooling: String,
    pub rated_power_kw: f64,
    pub rated_flow_m3_min: f64,
    pub rated_pressure_bar_g: f64,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub no_load_power_kw: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub nameplate_motor_kw: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub max_pressure_bar_g: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub unloaded_power_fraction: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub stages: Option<u32>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub rated_specific_power_kw_per_m3_min: Option<f64>,
    /// Variable speed: `[[flow_m3_min, kw], ...]`.
    #[serde(default, skip_serializing_if = "Vec::is_empty")]
    pub power_curve: Vec<(f64, f64)>,
    /// Variable speed without a curve: minimum flow / rated flow (default 0.20).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub min_speed_fraction: Option<f64>,
    /// The auditor's correction of the levels found in the log, kW (`core::levels`).
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub unloaded_level_kw: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub loaded_level_kw: Option<f64>,
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub year: Option<i32>,
    #[serde(default, skip_serializing_if = "String::is_empty")]
    pub notes: String,
}

impl DataSheetInput {
    /// The data sheet of a spec (the demo plant's machines are posted through this shape).
    pub fn of(c: &CompressorSpec) -> Self {
        Self {
            tag: c.tag.clone(),
            kind: c.kind.as_str().into(),
            control: c.control.as_str().into(),
            cooling: c.cooling.as_str().into(),
            rated_power_kw: c.rated_power_kw,
            rated_flow_m3_min: c.rated_flow_m3_min,
            rated_pressure_bar_g: c.rated_pressure_bar_g,
            no_load_power_kw: c.no_load_power_kw,
            nameplate_motor_kw: c.nameplate_motor_kw,
            max_pressure_bar_g: c.max_pressure_bar_g,
            unloaded_power_fraction: Some(c.unloaded_power_fraction),
            stages: Some(c.stages),
            rated_specific_power_kw_per_m3_min: c.rated_specific_power_kw_per_m3_min,
            power_curve: c.power_curve.clone(),
            min_speed_fraction: None,
            unloaded_level_kw: c.unloaded_level_kw,
            loaded_level_kw: c.loaded_level_kw,
            year: c.year,
            notes: String::new(),
        }
    }

    /// Check every field (module doc ranges) and fill the blanks (module doc defaults); a
    /// refusal quotes figures in SI.
    pub fn validate(&self) -> Result<CompressorSpec, SheetError> {
        self.validate_in(UnitSystem::Si)
    }

    /// [`Self::validate`], a refusal quoting flows, pressures and specific powers in `units`, as
    /// the reader's form labelled them (`core::entry`): the first of [`Self::validate_all_in`]'s
    /// refusals.
    pub fn validate_in(&self, units: UnitSystem) -> Result<CompressorSpec, SheetError> {
        self.validate_all_in(units).map_err(|mut all| all.swap_remove(0))
    }

    /// Every field checked, every refusal returned at once (in the order of the fields), so that a
    /// form can show each one beside its field. A check that leans on another field (the maximum
    /// pressure on the rated one, the no-load power on the package power) is made against that
    /// field only when it passed, so that one wrong value is refused once.
    pub fn validate_all_in(&self, units: UnitSystem) -> Result<CompressorSpec, Vec<SheetError>> {
        let mut errs: Vec<SheetError> = Vec::new();
        fn take<T>(errs: &mut Vec<SheetError>, r: Result<T, SheetError>) -> Option<T> {
            r.map_err(|e| errs.push(e)).ok()
        }
        let tag = self.tag.trim();
        if tag.is_empty() || tag.chars().count() > 32 {
            take(
                &mut errs,
                err::<()>("tag", format!("the tag must be 1 to 32 characters, got {:?}", self.tag)),
            );
        }
        let kind = CompressorKind::parse(&self.kind);
        if kind.is_none() {
            take(
                &mut errs,
                err::<()>("kind", format!("the kind {:?} is not one this form offers", self.kind)),
            );
        }
        let control = Control::parse(&self.control);
        if control.is_none() {
            take(
                &mut errs,
                err::<()>("control", format!("the control {:?} is not one this form offers", self.control)),
            );
        }
        let cooling = Cooling::parse(&self.cooling);
        if cooling.is_none() {
            take(
                &mut errs,
                err::<()>("cooling", format!("the cooling {:?} is not one this form offers", self.cooling)),
            );
        }
        let positive = |field: &str, v: f64, max: f64, unit: &str| within(field, v, 0.0, true, max, unit);
        let rated_power_kw =
            take(&mut errs, positive("rated_power_kw", self.rated_power_kw, MAX_RATED_POWER_KW, " kW"));
        // A field typed in the reader's units is refused in them, named in words.
        let entry = |field: &str, words: &str, kind: Entry, v: f64, (lo, lo_open): (f64, bool), hi: f64| {
            let low_ok = if lo_open { v > lo } else { v >= lo };
            if v.is_finite() && low_ok && v <= hi {
                Ok(v)
            } else {
                err(field, format!("{words} {}", kind.out_of_range(units, v, lo, lo_open, hi)))
            }
        };
        let rated_flow_m3_min = take(
            &mut errs,
            entry(
                "rated_flow_m3_min",
                "the free air delivery",
                Entry::FreeAirFlow,
                self.rated_flow_m3_min,
                (0.0, true),
                MAX_RATED_FLOW_M3_MIN,
            ),
        );
        let rated_pressure_bar_g = take(
            &mut errs,
            entry(
                "rated_pressure_bar_g",
                "the rated pressure",
                Entry::GaugePressure,
                self.rated_pressure_bar_g,
                (0.0, true),
                MAX_PRESSURE_BAR_G,
            ),
        );
        if let Some(p) = self.max_pressure_bar_g {
            // Not below the rated pressure when that one is right; else only within the range.
            let (lo, words) = match rated_pressure_bar_g {
                Some(r) => (r, "the maximum pressure (not below the rated pressure)"),
                None => (0.0, "the maximum pressure"),
            };
            take(
                &mut errs,
                entry("max_pressure_bar_g", words, Entry::GaugePressure, p, (lo, false), MAX_PRESSURE_BAR_G),
            );
        }
        if let Some(kw) = self.nameplate_motor_kw {
            take(&mut errs, positive("nameplate_motor_kw", kw, MAX_RATED_POWER_KW, " kW"));
        }
        let loaded_ok = match self.loaded_level_kw {
            Some(kw) => take(&mut errs, positive("loaded_level_kw", kw, MAX_RATED_POWER_KW, " kW")).is_some(),
            None => true,
        };
        if let Some(kw) = self.unloaded_level_kw {
            let hi = self.loaded_level_kw.filter(|_| loaded_ok).unwrap_or(MAX_RATED_POWER_KW);
            if !(kw.is_finite() && kw > 0.0 && kw < hi) {
                take(
                    &mut errs,
                    err::<()>(
                        "unloaded_level_kw",
                        format!(
                            "the unloaded power level must be above 0 kW and below the loaded level, {hi} kW, got {kw} kW"
                        ),
                    ),
                );
            }
        }
        let stages = self.stages.unwrap_or(1);
        if !(1..=6).contains(&stages) {
            take(
                &mut errs,
                err::<()>("stages", format!("the number of stages must be 1 to 6, got {stages}")),
            );
        }
        if let Some(sp) = self.rated_specific_power_kw_per_m3_min {
            take(
                &mut errs,
                entry(
                    "rated_specific_power_kw_per_m3_min",
                    "the data-sheet specific power",
                    Entry::SpecificPower,
                    sp,
                    (0.0, true),
                    50.0,
                ),
            );
        }
        if let Some(y) = self.year {
            if !(1900..=2100).contains(&y) {
                take(&mut errs, err::<()>("year", format!("the year must be from 1900 to 2100, got {y}")));
            }
        }
        let mut curve = self.power_curve.clone();
        let in_range = |q: f64, p: f64| {
            (0.0..=MAX_RATED_FLOW_M3_MIN).contains(&q) && (0.0..=MAX_RATED_POWER_KW).contains(&p)
        };
        curve.sort_by(|a, b| a.0.total_cmp(&b.0));
        if curve.len() > MAX_POWER_CURVE_POINTS {
            take(
                &mut errs,
                err::<()>(
                    "power_curve",
                    format!("a power curve has at most {MAX_POWER_CURVE_POINTS} points, got {}", curve.len()),
                ),
            );
        } else if curve.iter().any(|&(q, p)| !in_range(q, p)) {
            take(
                &mut errs,
                err::<()>(
                    "power_curve",
                    format!(
                        "the power curve's points must each have a flow from 0 to {MAX_RATED_FLOW_M3_MIN} m³/min \
                         and a power from 0 to {MAX_RATED_POWER_KW} kW"
                    ),
                ),
            );
        } else if curve.windows(2).any(|w| w[1].0 == w[0].0) {
            take(&mut errs, err::<()>("power_curve", "the flows of a power curve must all differ".into()));
        }
        if let Some(f) = self.min_speed_fraction {
            if !(f.is_finite() && f > 0.0 && f < 1.0) {
                take(
                    &mut errs,
                    err::<()>(
                        "min_speed_fraction",
                        format!("{} must be above 0 and below 1, got {f}", field_words("min_speed_fraction")),
                    ),
                );
            }
        }
        // No-load power: given as kW, as a fraction, or by default (module doc).
        let fraction_given = self.unloaded_power_fraction.and_then(|f| {
            take(&mut errs, within("unloaded_power_fraction", f, 0.0, false, MAX_UNLOADED_POWER_FRACTION, ""))
        });
        let no_load_given = match (self.no_load_power_kw, rated_power_kw) {
            (Some(kw), Some(rated)) => take(
                &mut errs,
                within(
                    "no_load_power_kw",
                    kw,
                    0.0,
                    false,
                    MAX_UNLOADED_POWER_FRACTION * rated,
                    " kW (0.9 of the rated power)",
                ),
            ),
            (Some(kw), None) => {
                take(&mut errs, within("no_load_power_kw", kw, 0.0, false, MAX_RATED_POWER_KW, " kW"))
            }
            (None, _) => None,
        };
        if let (Some(kw), Some(f), Some(rated)) = (no_load_given, fraction_given, rated_power_kw) {
            if (kw - f * rated).abs() > 0.005 * rated {
                take(
                    &mut errs,
                    err::<()>(
                        "no_load_power_kw",
                        format!(
                            "the no-load power, {kw} kW, and the unloaded fraction, {f} ({:.2} kW), disagree: \
                             give one of them",
                            f * rated
                        ),
                    ),
                );
            }
        }
        let (
            Some(kind),
            Some(control),
            Some(cooling),
            Some(rated_power_kw),
            Some(rated_flow_m3_min),
            Some(rated_pressure_bar_g),
            true,
        ) = (
            kind,
            control,
            cooling,
            rated_power_kw,
            rated_flow_m3_min,
            rated_pressure_bar_g,
            errs.is_empty(),
        )
        else {
            return Err(errs);
        };
        if control == Control::VariableSpeed && curve.is_empty() {
            if let Some(f) = self.min_speed_fraction {
                let (q, p) = (rated_flow_m3_min, rated_power_kw);
                curve = vec![(f * q, p * (states::VSD_TYPICAL_A + states::VSD_TYPICAL_B * f)), (q, p)];
            }
        }
        let unloaded_power_fraction = match (no_load_given, fraction_given) {
            (Some(kw), _) => kw / rated_power_kw,
            (None, Some(f)) => f,
            (None, None) if control == Control::VariableSpeed => {
                let spec_curve = CompressorSpec {
                    power_curve: curve.clone(),
                    ..CompressorSpec::blank(kind, control, rated_power_kw, rated_flow_m3_min)
                };
                (states::vsd_curve(&spec_curve)[0].1 / rated_power_kw).min(MAX_UNLOADED_POWER_FRACTION)
            }
            (None, None) => kind.default_unloaded_power_fraction(),
        };
        Ok(CompressorSpec {
            tag: tag.to_string(),
            kind,
            control,
            cooling,
            rated_power_kw,
            rated_flow_m3_min,
            rated_pressure_bar_g,
            unloaded_power_fraction,
            no_load_power_kw: no_load_given,
            nameplate_motor_kw: self.nameplate_motor_kw,
            max_pressure_bar_g: self.max_pressure_bar_g,
            unloaded_level_kw: self.unloaded_level_kw,
            loaded_level_kw: self.loaded_level_kw,
            stages,
            rated_specific_power_kw_per_m3_min: self.rated_specific_power_kw_per_m3_min,
            power_curve: curve,
            year: self.year,
        })
    }
}

/// Where a stored compressor's no-load power comes from, for the words beside it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NoLoadBasis {
    /// The data sheet's no-load kW, as typed.
    Given,
    /// A fraction of full-load power, as typed.
    Fraction,
    /// The kind's typical fraction (the module doc's table), nothing typed.
    TypicalForKind,
    /// A variable-speed machine's curve at its minimum speed, nothing typed.
    CurveAtMinimumSpeed,
}

impl NoLoadBasis {
    /// What a blank no-load field of `spec` would have given, against what is stored.
    pub fn of(spec: &CompressorSpec) -> Self {
        if spec.no_load_power_kw.is_some() {
            return Self::Given;
        }
        let blank = DataSheetInput {
            unloaded_power_fraction: None,
            no_load_power_kw: None,
            ..DataSheetInput::of(spec)
        };
        match blank.validate().map(|s| s.unloaded_power_fraction) {
            Ok(f) if (f - spec.unloaded_power_fraction).abs() <= 1e-12 => {
                if spec.control == Control::VariableSpeed {
                    Self::CurveAtMinimumSpeed
                } else {
                    Self::TypicalForKind
                }
            }
            _ => Self::Fraction,
        }
    }

    /// The words beside the figure; none when the kW was typed.
    pub fn words(self) -> &'static str {
        match self {
            Self::Given => "",
            Self::Fraction => "from the fraction",
            Self::TypicalForKind => "typical for the kind",
            Self::CurveAtMinimumSpeed => "the curve at minimum speed",
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn c2() -> DataSheetInput {
        DataSheetInput {
            tag: " C2 ".into(),
            kind: "lubricated_screw".into(),
            control: "load_unload".into(),
            cooling: "air".into(),
            rated_power_kw: 55.0,
            rated_flow_m3_min: 9.5,
            rated_pressure_bar_g: 7.5,
            ..Default::default()
        }
    }

    #[test]
    fn the_no_load_basis_names_where_a_blank_field_took_its_power() {
        let basis = |d: DataSheetInput| NoLoadBasis::of(&d.validate().unwrap());
        assert_eq!(basis(c2()), NoLoadBasis::TypicalForKind);
        assert_eq!(
            basis(DataSheetInput { unloaded_power_fraction: Some(0.3), ..c2() }),
            NoLoadBasis::Fraction
        );
        assert_eq!(basis(DataSheetInput { no_load_power_kw: Some(11.0), ..c2() }), NoLoadBasis::Given);
        // A variable-speed machine with a curve: the blank takes the curve's lowest point (7 kW of
        // 22 kW here), which is not "a fraction" anyone typed.
        let vsd = DataSheetInput {
            control: "variable_speed".into(),
            rated_power_kw: 22.0,
            rated_flow_m3_min: 3.4,
            power_curve: vec![(0.85, 7.0), (1.7, 11.0), (2.55, 16.0), (3.4, 22.0)],
            ..c2()
        };
        let spec = vsd.clone().validate().unwrap();
        assert!((spec.no_load_kw() - 7.0).abs() < 1e-9, "{}", spec.no_load_kw());
        assert_eq!(NoLoadBasis::of(&spec), NoLoadBasis::CurveAtMinimumSpeed);
        assert_eq!(
            basis(DataSheetInput { unloaded_power_fraction: Some(0.2), ..vsd }),
            NoLoadBasis::Fraction
        );
    }

    #[test]
    fn blanks_take_the_documented_defaults_by_kind_and_control() {
        let s = c2().validate().unwrap();
        assert_eq!(s.tag, "C2");
        // Lubricated screw: 0.25 of full load (module doc table).
        assert_eq!(s.unloaded_power_fraction, 0.25);
        assert_eq!(s.no_load_kw(), 13.75);
        assert_eq!(s.max_pressure_or_default_bar_g(), 8.0);
        assert_eq!(s.no_load_power_kw, None);
        // Variable speed without a curve or a no-load power: the typical curve's minimum-speed power.
        let v = DataSheetInput { control: "variable_speed".into(), ..c2() }.validate().unwrap();
        assert!((v.unloaded_power_fraction - (0.12 + 0.88 * 0.2)).abs() < 1e-12);
        // A given no-load power sets the fraction.
        let n = DataSheetInput { no_load_power_kw: Some(11.0), ..c2() }.validate().unwrap();
        assert!((n.unloaded_power_fraction - 0.2).abs() < 1e-12);
    }

    #[test]
    fn bad_data_sheet_values_name_their_field() {
        let field = |i: DataSheetInput| i.validate().unwrap_err().field;
        assert_eq!(field(DataSheetInput { kind: "turbo".into(), ..c2() }), "kind");
        assert_eq!(field(DataSheetInput { no_load_power_kw: Some(50.0), ..c2() }), "no_load_power_kw");
        assert_eq!(field(DataSheetInput { no_load_power_kw: Some(-1.0), ..c2() }), "no_load_power_kw");
        assert_eq!(field(DataSheetInput { max_pressure_bar_g: Some(7.0), ..c2() }), "max_pressure_bar_g");
        assert_eq!(
            field(DataSheetInput { max_pressure_bar_g: Some(f64::NAN), ..c2() }),
            "max_pressure_bar_g"
        );
        assert_eq!(field(DataSheetInput { nameplate_motor_kw: Some(0.0), ..c2() }), "nameplate_motor_kw");
        let both =
            DataSheetInput { no_load_power_kw: Some(11.0), unloaded_power_fraction: Some(0.3), ..c2() };
        assert_eq!(field(both), "no_load_power_kw");
        let dup = DataSheetInput { power_curve: vec![(2.0, 14.0), (2.0, 15.0)], ..c2() };
        assert_eq!(field(dup), "power_curve");
    }

    #[test]
    fn every_wrong_field_is_refused_at_once() {
        // -120 cfm and 2000 psig typed together (the form's example): both refused, in the order
        // of the fields; 2000 psig = 137.9 bar(g) (NIST SP 811: 1 psi = 6.894757 kPa), above the
        // 50 bar(g) limit; -120 cfm is below zero whatever its factor.
        let both = DataSheetInput {
            rated_flow_m3_min: -120.0 * 0.028_316_846_592,
            rated_pressure_bar_g: 2000.0 * 0.068_947_572_93,
            ..c2()
        };
        let errs = both.validate_all_in(UnitSystem::Us).unwrap_err();
        let fields: Vec<&str> = errs.iter().map(|e| e.field.as_str()).collect();
        assert_eq!(fields, ["rated_flow_m3_min", "rated_pressure_bar_g"]);
        assert!(errs[0].message.contains("cfm") && errs[1].message.contains("psig"), "{errs:?}");
        // The first of them is what `validate_in` gives (the API's one refusal).
        assert_eq!(both.validate_in(UnitSystem::Us).unwrap_err().field, "rated_flow_m3_min");
        // A maximum pressure is not refused again for a rated pressure that was refused itself.
        let max = DataSheetInput { rated_pressure_bar_g: -1.0, max_pressure_bar_g: Some(8.0), ..c2() };
        let fields: Vec<String> =
            max.validate_all_in(UnitSystem::Si).unwrap_err().into_iter().map(|e| e.field).collect();
        assert_eq!(fields, ["rated_pressure_bar_g"]);
    }
}
