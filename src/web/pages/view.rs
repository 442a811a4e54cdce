/*!
What the report and the findings share: the summary turned into a view of formatted strings, each
with its unit, in the reader's unit system, and the chart data in the reader's units. Every figure
is read from a field of [`Summary`], so a renamed field fails to compile; a figure the summary does
not have (`None`) shows as not available, as a NaN does.
*/

use serde_json::Value;

use super::words::Formula;

mod charts;
mod headline;
mod rows;
mod tables;
use crate::app::{AuditBundle, ReadFacts};
use crate::core::analysis::{Summary, Verdict};
use crate::core::display::{num, render_parts, span, Fmt};
use crate::core::levels::LevelSource;
use crate::core::model::human_label;
use crate::core::partload::PartLoadModel;
use crate::core::recommend::CostSource;
use crate::core::units::{M3_PER_FT3, PA_PER_PSI};
use charts::chart_data;
use headline::headline_figures;
use rows::{leak_note, leak_rows, leak_share_missing, leak_share_note, pressure_note, pressure_rows};
use tables::{
    compressor_rows, demand_rows, end_use_rows, heat_rows, isothermal_missing, no_measures, transmission_rows,
};
pub use tables::{follows_demand, load_words};

/// A figure the summary may not have, as the formatter takes it (NaN shows as not available).
pub(super) fn nan(v: Option<f64>) -> f64 {
    v.unwrap_or(f64::NAN)
}

/// One headline figure.
pub struct FigureView {
    pub label: String,
    pub value: String,
    pub note: String,
    pub estimated: bool,
}

/// One measure, formatted.
pub struct RecView {
    pub rank: usize,
    pub kind: String,
    pub title: String,
    pub description: String,
    pub energy: String,
    pub saving: String,
    pub cost: String,
    pub cost_value: f64,
    pub cost_source: String,
    pub payback: String,
    pub co2: String,
    pub basis: Vec<String>,
    pub formula: Formula,
    pub source: String,
    pub caution: String,
    /// The saving of the measure alone (money and energy).
    pub alone: String,
    pub alone_energy: String,
    /// The payback alone (cost / saving alone), which ranks the measures; `payback` is stacked.
    pub payback_alone: String,
    /// The stacked saving's range, money and energy.
    pub range: String,
    pub range_energy: String,
    /// One short line: method and sources.
    pub method: String,
}

pub struct CompressorRow {
    pub tag: String,
    pub control: String,
    pub energy: String,
    pub mean_power: String,
    pub loaded: String,
    pub unloaded: String,
    pub off: String,
    pub cycles: String,
    pub specific_power: String,
    pub rated_specific_power: String,
    /// Mean power and pressure while loaded.
    pub loaded_power: String,
    /// The data sheet's full-load power corrected to that pressure.
    pub datasheet_power: String,
    /// Loaded power against it, %.
    pub vs_datasheet: String,
    /// Off / unloaded / loaded levels found in the data.
    pub levels: String,
    pub estimated: bool,
}

pub struct LeakRow {
    pub method: String,
    pub flow: String,
    pub share: String,
    pub automatic: bool,
}

/// The data-sufficiency verdict as the pages show it, before any annual figure.
pub struct SufficiencyView {
    /// `enough`, `thin` or `insufficient` (also the CSS class).
    pub verdict: String,
    /// One sentence saying what the verdict means for the figures below it.
    pub headline: String,
    pub reasons: Vec<String>,
}

/// Everything both report pages show.
pub struct ReportView {
    pub has_data: bool,
    pub sufficiency: SufficiencyView,
    pub period: String,
    pub coverage: String,
    pub flow_note: String,
    pub figures: Vec<FigureView>,
    pub recs: Vec<RecView>,
    pub total_saving: String,
    pub total_payback: String,
    pub total_cost: String,
    pub total_range: String,
    pub compressors: Vec<CompressorRow>,
    pub leaks: Vec<LeakRow>,
    /// Readings implausible for a compressed-air line, kept in figures and charts alike (empty
    /// when there are none).
    pub pressure_note: String,
    pub leak_note: String,
    /// Why the leak table's shares of demand read "not enough data" (empty when all are given).
    pub leak_share_note: String,
    pub pressure: Vec<(String, String)>,
    pub demand: Vec<(String, String)>,
    pub heat: Vec<(String, String)>,
    /// Dryers and drains (`summary.transmission`): the transmission section; empty without such
    /// records.
    pub transmission: Vec<(String, String)>,
    /// End uses and the demand split (`summary.transmission.end_uses`, `demand_split`): the demand
    /// section; empty without such records.
    pub end_uses: Vec<(String, String)>,
    pub methods: Vec<(String, Formula, String)>,
    pub assumptions: Vec<String>,
    /// Sources of error the summary warns of (`Summary::warnings`).
    pub warnings: Vec<String>,
    pub baseline_rule: String,
    pub chart_data: Value,
    /// What the flow duration curve's top is, beside the peak flow (a 1-minute mean).
    pub duration_note: String,
    /// Why no measure is listed, when none is.
    pub no_measures: String,
}

/// What a summary field is called on paper.
fn figure_label(code: &str) -> String {
    let words = match code {
        "energy_kwh" => "Energy of the compressors",
        "specific_power_kw_per_m3_min" => "System specific power",
        "isothermal_efficiency" => "Isothermal efficiency",
        "marginal_kw_per_m3_min" => "Marginal specific power (trim machine)",
        "annual_energy_kwh" => "Annual energy",
        "annual_cost" => "Annual cost",
        "cost_per_1000_m3" => "Cost of air",
        "annual_leak_cost" => "Annual cost of leaks",
        "air_m3" => "Free air delivered",
        "loaded_fraction" => "Loaded fraction",
        "heat_rejected_kwh" => "Heat rejected",
        "recoverable_kwh" => "Recoverable heat",
        "part_load_penalty_percent" => "Part-load penalty",
        "demand_split" => "Where the air goes",
        "measures_total" => "The measures together",
        "non_production_leak_flow_m3_min" => "Leak flow out of production",
        "sufficiency" => "Whether the data carry the figures",
        "pressure bands" => "Pressure bands and limits",
        "transmission.pressure_drops" => "Pressure drops between measuring points",
        "transmission.dryers" => "Dryers' purge",
        "transmission.dryers.cycling_saving_kwh" => "A cycling refrigerated dryer's saving",
        "transmission.drains" => "Condensate drains' air",
        "transmission.filters" => "Filters' excess pressure drop",
        other => return human_label(other.trim_end_matches("_kwh").trim_end_matches("_m3_min")),
    };
    words.to_string()
}

/// Shown in place of a figure the data cannot support.
pub const NOT_ENOUGH_DATA: &str = "not enough data";

/// The reason a figure was withheld: the entry for `prefix` itself, else the first whose path
/// starts with it.
/// With the verdict "insufficient" the reasons stand in the verdict above the figures, and are
/// pointed to rather than repeated on every card.
fn withheld(sm: &Summary, prefix: &str) -> String {
    let all = &sm.sufficiency.withheld;
    let w =
        all.iter().find(|w| w.figure == prefix).or_else(|| all.iter().find(|w| w.figure.starts_with(prefix)));
    match w {
        Some(w) if w.reason.starts_with("not enough data") => {
            "the logged data are not enough for annual figures (reasons above)".into()
        }
        Some(w) => w.reason.clone(),
        None => "the data cannot support this figure".into(),
    }
}

/// Whether a figure under `prefix` was withheld (`withheld` gives its reason).
fn has_withheld(sm: &Summary, prefix: &str) -> bool {
    sm.sufficiency.withheld.iter().any(|w| w.figure.starts_with(prefix))
}

/// The verdict's words.
fn sufficiency_view(sm: &Summary, fmt: &Fmt) -> SufficiencyView {
    let s = &sm.sufficiency;
    let headline = match s.verdict {
        Verdict::Enough => "The logged data are enough for the annual figures below.",
        Verdict::Thin => "The logged data are thin: the annual figures below are indicative only.",
        Verdict::Insufficient => {
            "The logged data are not enough for annual figures or measures: this report gives none."
        }
    };
    SufficiencyView {
        verdict: s.verdict.as_str().into(),
        headline: headline.into(),
        reasons: in_parts(&s.reasons, &s.reason_parts, fmt),
    }
}

/// A figure the data may not support: its formatted value, or "not enough data".
fn or_nd(v: Option<f64>, f: impl Fn(f64) -> String) -> String {
    v.map_or_else(|| NOT_ENOUGH_DATA.to_string(), f)
}

fn range(fmt_one: impl Fn(f64) -> String, v: f64, lo: f64, hi: f64) -> String {
    if lo.is_finite() && hi.is_finite() && hi > lo {
        format!("{} ({})", fmt_one(v), span(&fmt_one(lo), &fmt_one(hi)))
    } else {
        fmt_one(v)
    }
}

/// The view of an audit without logger data: nothing but the notice.
fn empty_view() -> ReportView {
    ReportView {
        has_data: false,
        sufficiency: SufficiencyView { verdict: String::new(), headline: String::new(), reasons: vec![] },
        period: String::new(),
        coverage: String::new(),
        flow_note: String::new(),
        figures: vec![],
        recs: vec![],
        total_saving: String::new(),
        total_payback: String::new(),
        total_cost: String::new(),
        total_range: String::new(),
        compressors: vec![],
        leaks: vec![],
        leak_note: String::new(),
        pressure_note: String::new(),
        leak_share_note: String::new(),
        pressure: vec![],
        demand: vec![],
        heat: vec![],
        transmission: vec![],
        end_uses: vec![],
        methods: vec![],
        assumptions: vec![],
        warnings: vec![],
        baseline_rule: String::new(),
        chart_data: Value::Null,
        duration_note: String::new(),
        no_measures: String::new(),
    }
}

/// The report's view of the summary (`None`: the audit has no logger data yet).
/// `facts`: what was read from the stored readings beside the summary (the days logged, the header
/// pressure's extremes).
pub fn report_view(b: &AuditBundle, fmt: &Fmt, sm: Option<&Summary>, facts: &ReadFacts) -> ReportView {
    let Some(sm) = sm else { return empty_view() };
    let cur = &b.audit.site.currency;
    let estimated = sm.system.estimated;
    let flow_note = if estimated {
        "No flow meter was logged: flows are ESTIMATED from compressor states and rated free air delivery."
            .to_string()
    } else {
        "Flows are measured (free air at the site's inlet conditions).".to_string()
    };
    let money = |v: f64| fmt.money(v, cur);
    let mut figures = headline_figures(sm, fmt, cur);
    let (recs, tot_save, tot_cost) = measures(sm, fmt, cur);
    if !recs.is_empty() {
        figures.push(FigureView {
            label: "Savings of all measures, done in order".into(),
            value: format!("{} a year", money(tot_save)),
            note: format!(
                "for {} in all: combined simple payback {}; each measure priced on the plant the ones before it leave{}",
                money(tot_cost),
                fmt.years(tot_cost / tot_save),
                sm.measures_total.as_ref().map_or(String::new(), |t| format!(
                    " (range {})",
                    span(&money(t.annual_cost_saving_low), &money(t.annual_cost_saving_high))
                ))
            ),
            estimated: false,
        });
    }
    let p = &sm.period;
    // Logged time and the calendar span apart: files years apart span far more than they log.
    let period = format!(
        "{} to {}, site time ({} h logged in a span of {} h, {} analysis step)",
        super::words::local_time(&p.start, &b.audit.site.timezone),
        super::words::local_time(&p.end, &b.audit.site.timezone),
        num(p.logged_hours, 1),
        num(p.hours, 1),
        crate::core::display::duration_words(p.step_s)
    );
    let c = &sm.coverage;
    // A share that is not zero never prints as 0.0 % (files years apart log a sliver of the span).
    let share = |x: f64| format!("{} %", crate::core::analysis::sufficiency::percent(x));
    let coverage = format!(
        "power in {} of the time, flow in {}, pressure in {}",
        share(c.power),
        share(c.flow),
        share(c.pressure)
    );
    ReportView {
        has_data: true,
        sufficiency: sufficiency_view(sm, fmt),
        period,
        coverage,
        flow_note,
        figures,
        recs,
        total_saving: money(tot_save),
        total_payback: fmt.years(tot_cost / tot_save),
        total_cost: money(tot_cost),
        total_range: sm.measures_total.as_ref().map_or(String::new(), |t| {
            span(&money(t.annual_cost_saving_low), &money(t.annual_cost_saving_high))
        }),
        compressors: compressor_rows(sm, fmt),
        leaks: leak_rows(sm, fmt),
        leak_note: leak_note(sm, fmt),
        leak_share_note: leak_share_note(sm),
        pressure: pressure_rows(sm, fmt, facts.header_extremes_pa),
        pressure_note: pressure_note(sm, fmt, facts.header_extremes_pa),
        demand: demand_rows(sm, fmt),
        heat: heat_rows(sm, fmt, cur),
        transmission: transmission_rows(sm, fmt, cur),
        end_uses: end_use_rows(sm, fmt),
        methods: sm
            .methods
            .iter()
            .map(|m| {
                let formula = if m.formula_parts.is_empty() {
                    m.formula.clone()
                } else {
                    render_parts(&m.formula_parts, fmt)
                };
                (figure_label(&m.figure), Formula(formula), m.source.clone())
            })
            .collect(),
        assumptions: assumptions(sm, fmt),
        warnings: warnings(sm, fmt),
        // No annual figure is given on such data: no rule of extrapolation is said either.
        baseline_rule: if sm.sufficiency.verdict == Verdict::Insufficient {
            "none, the logged data are not enough (the verdict above)".into()
        } else {
            sm.baseline.rule.clone()
        },
        chart_data: chart_data(b, fmt, sm, &facts.logged_hours),
        duration_note: duration_note(sm.period.step_s),
        no_measures: no_measures(sm),
    }
}

/// What the flow duration curve's top is (the report's chart and the findings' plot).
pub fn duration_note(step_s: f64) -> String {
    if step_s >= 60.0 {
        return format!(
            "From the analysis' own time steps ({}), highest first: its top is the highest single step, \
             the peak flow.",
            duration_s(step_s)
        );
    }
    format!(
        "From the analysis' own time steps ({}), highest first: its top is the highest single step, above \
         the peak flow (the highest 1-minute mean on the clock's minutes).",
        duration_s(step_s)
    )
}

/// A mean's window as an adjective: "1-minute", "15-minute", "30-second".
fn window_words(s: f64) -> String {
    if s >= 60.0 && (s / 60.0).fract() == 0.0 {
        format!("{}-minute", num(s / 60.0, 0))
    } else {
        format!("{}-second", num(s, 0))
    }
}

/// A window or time step in words: "15 min", "60 s", "5 s".
fn duration_s(s: f64) -> String {
    if s >= 120.0 && (s / 60.0).fract() == 0.0 {
        format!("{} min", num(s / 60.0, 0))
    } else {
        format!("{} s", num(s, 0))
    }
}

/// Lines in the reader's units: their parts when the summary has them one for one, else their SI
/// words (a summary cached before the parts existed).
/// Whether the pages give the marginal specific power: read at the logged load on the trim's
/// part-load curve, it is not given with the verdict insufficient (that load is not the plant's)
/// nor when a rule withheld it.
fn marginal_shown(sm: &Summary) -> bool {
    sm.part_load_model.is_some()
        && sm.sufficiency.verdict != Verdict::Insufficient
        && !has_withheld(sm, "leaks.marginal_kw_per_m3_min")
}

/// The assumptions in the reader's units, less the part-load model behind a marginal specific power
/// the page does not give (an assumption printing "marginal 34.2 kW/100 cfm" beside a figure that
/// reads "not enough data").
fn assumptions(sm: &Summary, fmt: &Fmt) -> Vec<String> {
    let shown = marginal_shown(sm);
    in_parts(&sm.assumptions, &sm.assumption_parts, fmt)
        .into_iter()
        .zip(&sm.assumptions)
        .filter(|(_, si)| shown || !si.starts_with(crate::core::analysis::PART_LOAD_ASSUMPTION))
        .map(|(line, _)| line)
        .collect()
}

/// The summary's warnings in the reader's units, a fast bleed-down's said in one line: its whole
/// paragraph (the air's cooling, the correction, the longer fall to time) stands once, in the
/// field test's own result on the tests page and in the findings' field-test notes, not again in
/// the report's verdict and the findings' sources of error.
fn warnings(sm: &Summary, fmt: &Fmt) -> Vec<String> {
    const FAST: &str = "): test too short to be near isothermal";
    in_parts(&sm.warnings, &sm.warning_parts, fmt)
        .into_iter()
        .zip(&sm.warnings)
        .map(|(line, si)| match si.find(FAST) {
            Some(at) if si.starts_with("field test ") => format!(
                "{}): too short to be near isothermal; its flow is corrected for the air's cooling, and \
                 the field test's own notes say by how much and which longer fall to time",
                &si[..at]
            ),
            _ => line,
        })
        .collect()
}

fn in_parts(si: &[String], parts: &[Vec<crate::core::recommend::Part>], fmt: &Fmt) -> Vec<String> {
    if parts.len() == si.len() {
        parts.iter().map(|p| render_parts(p, fmt)).collect()
    } else {
        si.to_vec()
    }
}

/// Which curve and storage price leaks, artificial demand and pressure, in the reader's units.
fn part_load_note(m: &PartLoadModel, fmt: &Fmt) -> String {
    let mut parts = vec![format!(
        "what a change of demand costs on {}'s part-load curve ({}), at {} load",
        m.machine,
        m.curve_words(),
        fmt.percent(m.load_fraction)
    )];
    if let (Some(v), Some(per), Some(gal)) = (m.storage_m3, m.storage_m3_per_m3_min, m.storage_us_gal_per_cfm)
    {
        let per = if fmt.is_us() {
            format!("{} US gal/cfm", num(gal, 1))
        } else {
            format!("{} m³ per m³/min", num(per, 2))
        };
        let from = |src: &Option<String>| match src.as_deref() {
            Some("log") => "fitted from the log",
            _ => "assumed, common practice",
        };
        parts.push(format!(
            "storage {} ({per} of trim capacity{}), band {} ({}), sump blow-down from {} of full power over τ = {} s ({})",
            fmt.volume_m3(v),
            if m.storage_assumed {
                ", assumed, common practice: no receiver or other volume on the audit's record; a volume \
                 given with a field test serves that test only"
            } else {
                ""
            },
            fmt.pressure_delta_bar(m.pressure_band_bar.unwrap_or(f64::NAN)),
            from(&m.pressure_band_source),
            fmt.percent(m.blowdown_start_fraction.unwrap_or(f64::NAN)),
            num(m.blowdown_tau_s.unwrap_or(f64::NAN), 1),
            from(&m.blowdown_source)
        ));
    }
    parts.push(format!("the ideal line would give {}", fmt.specific_power(m.ideal_marginal_kw_per_m3_min)));
    parts.join("; ")
}

/// The measures in the order they are stacked, with the sums of their stacked savings and costs.
fn measures(sm: &Summary, fmt: &Fmt, cur: &str) -> (Vec<RecView>, f64, f64) {
    let (mut tot_save, mut tot_cost) = (0.0, 0.0);
    let recs = sm
        .recommendations
        .iter()
        .map(|r| {
            tot_save += r.annual_cost_saving;
            tot_cost += r.implementation_cost;
            let kind_of = if r.electricity { " electricity" } else { " fuel" };
            // The words in parts, each figure in the reader's units.
            let t = &r.text;
            RecView {
                alone: fmt.money(r.standalone_annual_cost_saving, cur),
                payback_alone: fmt.years(nan(r.standalone_simple_payback_years)),
                alone_energy: format!("{}{kind_of}", fmt.energy_kwh(r.standalone_annual_energy_saving_kwh)),
                range: span(
                    &fmt.money(r.annual_cost_saving_low, cur),
                    &fmt.money(r.annual_cost_saving_high, cur),
                ),
                range_energy: span(
                    &fmt.energy_kwh(r.annual_energy_saving_kwh_low),
                    &fmt.energy_kwh(r.annual_energy_saving_kwh_high),
                ),
                method: r.method_and_sources.clone(),
                rank: r.stack_position,
                kind: r.kind.as_str().into(),
                title: render_parts(&t.title, fmt),
                description: render_parts(&t.description, fmt),
                energy: format!(
                    "{}{}",
                    fmt.energy_kwh(r.annual_energy_saving_kwh),
                    if r.electricity { " electricity" } else { " fuel" }
                ),
                saving: fmt.money(r.annual_cost_saving, cur),
                cost: fmt.money(r.implementation_cost, cur),
                cost_value: r.implementation_cost,
                cost_source: match r.implementation_cost_source {
                    CostSource::Edited => "edited for this audit".into(),
                    CostSource::Quoted => "quoted".into(),
                    CostSource::DefaultEstimate => "default estimate".into(),
                },
                payback: fmt.years(nan(r.simple_payback_years)),
                co2: fmt.co2_t(r.annual_co2_saving_t),
                basis: t.basis.iter().map(|b| render_parts(b, fmt)).collect(),
                formula: Formula(r.formula.clone()),
                source: r.source.clone(),
                caution: r.caution.clone().unwrap_or_default(),
            }
        })
        .collect();
    (recs, tot_save, tot_cost)
}

#[cfg(test)]
mod peak_words_tests {
    use super::{duration_note, window_words};

    #[test]
    fn a_peak_says_its_window_and_the_duration_curve_agrees_with_it() {
        // One minute of 60 s, a quarter hour of 900 s; a 15 s step leaves the peak a 1-minute mean
        // under the curve's top, a 900 s step makes them the same figure.
        assert_eq!(window_words(60.0), "1-minute");
        assert_eq!(window_words(900.0), "15-minute");
        assert_eq!(window_words(30.0), "30-second");
        assert!(duration_note(15.0).contains("above the peak flow (the highest 1-minute mean"));
        assert!(duration_note(900.0).ends_with("its top is the highest single step, the peak flow."));
    }
}

#[cfg(test)]
mod part_load_note_tests {
    use super::*;
    use crate::core::model::{CompressorKind, CompressorSpec, Control};
    use crate::core::partload::{Machine, Storage};
    use crate::core::units::{PressureAbs, UnitSystem};

    #[test]
    fn the_note_names_the_curve_and_the_assumed_storage_in_the_readers_units() {
        let spec = CompressorSpec::blank(CompressorKind::LubricatedScrew, Control::LoadUnload, 37.0, 6.0);
        let m = Machine {
            spec: &spec,
            full_kw: 37.0,
            unloaded_fraction: 0.25,
            storage: Storage::of(0.0, 6.0, 1.01325),
            blowdown: Default::default(),
        };
        let model = PartLoadModel::of(&m, 3.0, ("log", "log"));
        let atm = PressureAbs::from_kpa_abs(101.325);
        let si = part_load_note(&model, &Fmt::new(UnitSystem::Si, atm));
        let us = part_load_note(&model, &Fmt::new(UnitSystem::Us, atm));
        // 3 US gal/cfm = 3 × 3.785411784 l / 28.316846592 l = 0.40 m³ per m³/min (NIST SP 811 definitions).
        assert!(si.contains("0.40 m³ per m³/min") && si.contains("assumed"), "{si}");
        assert!(si.contains("load/unload on its storage") && si.contains("kW/(m³/min)"), "{si}");
        assert!(us.contains("3.0 US gal/cfm") && us.contains("kW/100 cfm") && us.contains("psi"), "{us}");
        assert!(!us.contains("m³"), "{us}");
    }
}
