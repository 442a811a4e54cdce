/*!
What the report and the findings share: the cached summary turned into a view of formatted strings,
each with its unit, in the reader's unit system, and the chart data in the reader's units.
*/

use serde_json::Value;

use crate::app::AuditBundle;
use crate::core::display::{num, Fmt};
use crate::core::model::human_label;
use crate::core::recommend::{self, Text};
use crate::core::units::{M3_PER_FT3, PA_PER_PSI};

/// `path` like `system.energy_kwh` in the summary; NaN when missing or null.
pub(super) fn g(v: &Value, path: &str) -> f64 {
    let mut cur = v;
    for k in path.split('.') {
        cur = match cur.get(k) {
            Some(x) => x,
            None => return f64::NAN,
        };
    }
    cur.as_f64().unwrap_or(f64::NAN)
}

fn s<'a>(v: &'a Value, path: &str) -> &'a str {
    let mut cur = v;
    for k in path.split('.') {
        cur = match cur.get(k) {
            Some(x) => x,
            None => return "",
        };
    }
    cur.as_str().unwrap_or("")
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
    pub formula: String,
    pub source: String,
    pub caution: String,
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
    pub degradation: String,
    pub estimated: bool,
}

pub struct LeakRow {
    pub method: String,
    pub flow: String,
    pub share: String,
    pub automatic: bool,
}

/// Everything both report pages show.
pub struct ReportView {
    pub has_data: bool,
    pub period: String,
    pub coverage: String,
    pub flow_note: String,
    pub figures: Vec<FigureView>,
    pub recs: Vec<RecView>,
    pub total_saving: String,
    pub total_payback: String,
    pub compressors: Vec<CompressorRow>,
    pub leaks: Vec<LeakRow>,
    pub leak_note: String,
    pub pressure: Vec<(String, String)>,
    pub demand: Vec<(String, String)>,
    pub heat: Vec<(String, String)>,
    pub methods: Vec<(String, String, String)>,
    pub assumptions: Vec<String>,
    pub baseline_rule: String,
    pub chart_data: Value,
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
        other => return human_label(other.trim_end_matches("_kwh").trim_end_matches("_m3_min")),
    };
    words.to_string()
}

fn range(fmt_one: impl Fn(f64) -> String, v: f64, lo: f64, hi: f64) -> String {
    if lo.is_finite() && hi.is_finite() && hi > lo {
        format!("{} ({} to {})", fmt_one(v), fmt_one(lo), fmt_one(hi))
    } else {
        fmt_one(v)
    }
}

pub fn report_view(b: &AuditBundle, fmt: &Fmt, sm: &Value) -> ReportView {
    let cur = b.audit.site.currency.clone();
    let has_data = sm.get("no_data").is_none() && sm.get("system").is_some();
    if !has_data {
        return ReportView {
            has_data,
            period: String::new(),
            coverage: String::new(),
            flow_note: String::new(),
            figures: vec![],
            recs: vec![],
            total_saving: String::new(),
            total_payback: String::new(),
            compressors: vec![],
            leaks: vec![],
            leak_note: String::new(),
            pressure: vec![],
            demand: vec![],
            heat: vec![],
            methods: vec![],
            assumptions: vec![],
            baseline_rule: String::new(),
            chart_data: Value::Null,
        };
    }
    let estimated = sm["system"]["estimated"].as_bool().unwrap_or(false);
    let flow_note = if estimated {
        "No flow meter was logged: flows are ESTIMATED from compressor states and rated free air delivery."
            .to_string()
    } else {
        "Flows are measured (free air at the site's inlet conditions).".to_string()
    };
    let money = |v: f64| fmt.money(v, &cur);
    let mut figures = vec![];
    figures.push(FigureView {
        label: "Annual energy of the compressors".into(),
        value: fmt.energy_kwh(g(sm, "baseline.annual_energy_kwh")),
        note: format!(
            "range {} to {}; logged {}",
            fmt.energy_kwh(g(sm, "baseline.annual_energy_kwh_low")),
            fmt.energy_kwh(g(sm, "baseline.annual_energy_kwh_high")),
            fmt.energy_kwh(g(sm, "system.energy_kwh"))
        ),
        estimated: false,
    });
    figures.push(FigureView {
        label: "Annual cost of compressed air".into(),
        value: money(g(sm, "baseline.annual_cost")),
        note: format!(
            "range {} to {}; energy {} + demand charge {}",
            money(g(sm, "baseline.annual_cost_low")),
            money(g(sm, "baseline.annual_cost_high")),
            money(g(sm, "baseline.annual_energy_cost")),
            money(g(sm, "baseline.annual_demand_charge"))
        ),
        estimated: false,
    });
    let sp = g(sm, "system.specific_power_kw_per_m3_min");
    let rated = g(sm, "system.rated_specific_power_kw_per_m3_min");
    figures.push(FigureView {
        label: "System specific power".into(),
        value: fmt.specific_power(sp),
        note: format!(
            "range {} to {}; data sheet {} ({} %)",
            fmt.specific_power(g(sm, "system.specific_power_kw_per_m3_min_low")),
            fmt.specific_power(g(sm, "system.specific_power_kw_per_m3_min_high")),
            fmt.specific_power(rated),
            num(g(sm, "system.specific_power_degradation_percent"), 1)
        ),
        estimated,
    });
    figures.push(FigureView {
        label: "Cost of air".into(),
        value: fmt.air_cost(g(sm, "baseline.cost_per_1000_m3"), &cur),
        note: format!("at {} per kWh", fmt.money(g(sm, "baseline.electricity_price_per_kwh"), &cur)),
        estimated,
    });
    let leak_share = g(sm, "leaks.share_of_mean_demand");
    figures.push(FigureView {
        label: "Leaks, share of demand".into(),
        value: format!(
            "{} ({})",
            fmt.percent(leak_share),
            fmt.flow_m3_min(g(sm, "leaks.adopted_leak_flow_m3_min"))
        ),
        note: format!(
            "{}; annual leak cost {} at the trim machine's marginal specific power",
            s(sm, "leaks.band_description"),
            money(g(sm, "leaks.annual_leak_cost"))
        ),
        estimated,
    });
    figures.push(FigureView {
        label: "Heat discarded per year".into(),
        value: fmt.energy_kwh(g(sm, "heat.annual_heat_rejected_kwh")),
        note: format!(
            "recoverable {}; worth {} a year as displaced fuel",
            fmt.energy_kwh(g(sm, "heat.annual_recoverable_kwh")),
            money(g(sm, "heat.annual_value"))
        ),
        estimated: false,
    });
    figures.push(FigureView {
        label: "Isothermal efficiency".into(),
        value: fmt.percent(g(sm, "system.isothermal_efficiency")),
        note: format!(
            "range {} to {}: the share of input power the ideal isothermal compression needs",
            fmt.percent(g(sm, "system.isothermal_efficiency_low")),
            fmt.percent(g(sm, "system.isothermal_efficiency_high"))
        ),
        estimated,
    });
    let recs_v = sm["recommendations"].as_array().cloned().unwrap_or_default();
    let (mut tot_save, mut tot_cost) = (0.0, 0.0);
    let recs: Vec<RecView> = recs_v
        .iter()
        .enumerate()
        .map(|(i, r)| {
            tot_save += g(r, "annual_cost_saving");
            tot_cost += g(r, "implementation_cost");
            let electricity = r["electricity"].as_bool().unwrap_or(true);
            // The words in parts, each figure in the reader's units (every cached summary has
            // them: summaries are cached per build, `service::build_id`).
            let t: Text = serde_json::from_value(r["text"].clone()).unwrap_or_default();
            let (title, description) =
                (recommend::render(&t.title, fmt), recommend::render(&t.description, fmt));
            let basis = t.basis.iter().map(|b| recommend::render(b, fmt)).collect();
            RecView {
                rank: i + 1,
                kind: s(r, "kind").into(),
                title,
                description,
                energy: format!(
                    "{}{}",
                    fmt.energy_kwh(g(r, "annual_energy_saving_kwh")),
                    if electricity { " electricity" } else { " fuel" }
                ),
                saving: money(g(r, "annual_cost_saving")),
                cost: money(g(r, "implementation_cost")),
                cost_value: g(r, "implementation_cost"),
                cost_source: if s(r, "implementation_cost_source") == "edited" {
                    "edited for this audit".into()
                } else {
                    "default estimate".into()
                },
                payback: fmt.years(g(r, "simple_payback_years")),
                co2: fmt.co2_t(g(r, "annual_co2_saving_t")),
                basis,
                formula: s(r, "formula").into(),
                source: s(r, "source").into(),
                caution: s(r, "caution").into(),
            }
        })
        .collect();
    if !recs.is_empty() {
        figures.push(FigureView {
            label: "Savings of all measures".into(),
            value: format!("{} a year", money(tot_save)),
            note: format!(
                "for {} in all: combined simple payback {} (measures overlap: the sum is an upper bound)",
                money(tot_cost),
                fmt.years(tot_cost / tot_save)
            ),
            estimated: false,
        });
    }
    let compressors = sm["compressors"]
        .as_array()
        .map(|a| {
            a.iter()
                .map(|c| CompressorRow {
                    tag: s(c, "tag").into(),
                    control: human_label(s(c, "control")),
                    energy: fmt.energy_kwh(g(c, "energy_kwh")),
                    mean_power: fmt.power_kw(g(c, "mean_power_kw")),
                    loaded: fmt.percent(g(c, "loaded_fraction") + g(c, "part_load_fraction").max(0.0)),
                    unloaded: fmt.percent(g(c, "unloaded_fraction")),
                    off: fmt.percent(g(c, "off_fraction")),
                    cycles: format!("{} /h", num(g(c, "cycles_per_hour"), 1)),
                    specific_power: fmt.specific_power(g(c, "specific_power_kw_per_m3_min")),
                    rated_specific_power: fmt.specific_power(g(c, "rated_specific_power_kw_per_m3_min")),
                    degradation: format!("{} %", num(g(c, "specific_power_degradation_percent"), 1)),
                    estimated: c["estimated"].as_bool().unwrap_or(false),
                })
                .collect()
        })
        .unwrap_or_default();
    let leak_est = sm["leaks"]["estimates"].as_array().cloned().unwrap_or_default();
    let leaks = leak_est
        .iter()
        .map(|e| LeakRow {
            method: match e["test_id"].as_i64() {
                Some(id) => format!("{} (test {id})", human_label(s(e, "method"))),
                None => human_label(s(e, "method")),
            },
            flow: range(
                |x| fmt.flow_m3_min(x),
                g(e, "leak_flow_m3_min"),
                g(e, "leak_flow_m3_min_low"),
                g(e, "leak_flow_m3_min_high"),
            ),
            share: fmt.percent(g(e, "share_of_mean_demand")),
            automatic: e["automatic"].as_bool().unwrap_or(false),
        })
        .collect();
    let pressure = vec![
        ("Mean".into(), fmt.pressure_bar_g(g(sm, "pressure.mean_bar_g"))),
        (
            "Minimum / maximum".into(),
            format!(
                "{} / {}",
                fmt.pressure_bar_g(g(sm, "pressure.min_bar_g")),
                fmt.pressure_bar_g(g(sm, "pressure.max_bar_g"))
            ),
        ),
        (
            "5 % / 50 % / 95 % of time below".into(),
            format!(
                "{} / {} / {}",
                fmt.pressure_bar_g(g(sm, "pressure.p5_bar_g")),
                fmt.pressure_bar_g(g(sm, "pressure.p50_bar_g")),
                fmt.pressure_bar_g(g(sm, "pressure.p95_bar_g"))
            ),
        ),
        (
            "Uncertainty of the transmitter".into(),
            format!("± {}", fmt.pressure_delta_bar(g(sm, "pressure.uncertainty_bar"))),
        ),
        (
            "Time below the low limit".into(),
            format!(
                "{} (limit {})",
                fmt.percent(g(sm, "pressure.share_below_low_limit")),
                fmt.pressure_bar_g(g(sm, "pressure.low_limit_bar_g"))
            ),
        ),
    ];
    let demand = vec![
        (
            "Mean flow".into(),
            range(
                |x| fmt.flow_m3_min(x),
                g(sm, "system.mean_flow_m3_min"),
                g(sm, "system.mean_flow_m3_min_low"),
                g(sm, "system.mean_flow_m3_min_high"),
            ),
        ),
        (
            "Peak flow".into(),
            format!(
                "{} (mean over {} s)",
                fmt.flow_m3_min(g(sm, "system.peak_flow_m3_min")),
                num(g(sm, "system.peak_flow_window_s"), 0)
            ),
        ),
        (
            "Production / non-production mean flow".into(),
            format!(
                "{} / {}",
                fmt.flow_m3_min(g(sm, "demand.production_mean_flow_m3_min")),
                fmt.flow_m3_min(g(sm, "demand.non_production_mean_flow_m3_min"))
            ),
        ),
        (
            "Production share of time".into(),
            format!(
                "{} ({})",
                fmt.percent(g(sm, "demand.production_share_of_time")),
                s(sm, "demand.production_rule")
            ),
        ),
        (
            "Mean and peak power".into(),
            format!(
                "{} / {}",
                fmt.power_kw(g(sm, "system.mean_power_kw")),
                fmt.power_kw(g(sm, "system.peak_power_kw"))
            ),
        ),
    ];
    let heat = vec![
        ("Heat rejected in the logged period".into(), fmt.energy_kwh(g(sm, "heat.heat_rejected_kwh"))),
        ("Recoverable in the logged period".into(), fmt.energy_kwh(g(sm, "heat.recoverable_kwh"))),
        ("Recoverable at full load".into(), fmt.power_kw(g(sm, "heat.recoverable_kw_at_full_load"))),
        (
            "Useful heat per year".into(),
            format!(
                "{} ({})",
                fmt.energy_kwh(g(sm, "heat.useful_heat_kwh_per_year")),
                s(sm, "heat.use_kind").replace('_', " ")
            ),
        ),
        ("Fuel displaced per year".into(), fmt.energy_kwh(g(sm, "heat.displaced_fuel_kwh_per_year"))),
        (
            "Value per year / as process water all year".into(),
            format!(
                "{} / {}",
                money(g(sm, "heat.annual_value")),
                money(g(sm, "heat.process_water_annual_value"))
            ),
        ),
    ];
    let methods = sm["methods"]
        .as_array()
        .map(|a| {
            a.iter()
                .map(|m| {
                    (figure_label(s(m, "figure")), s(m, "formula").to_string(), s(m, "source").to_string())
                })
                .collect()
        })
        .unwrap_or_default();
    let assumptions = sm["assumptions"]
        .as_array()
        .map(|a| a.iter().filter_map(|x| x.as_str().map(String::from)).collect())
        .unwrap_or_default();

    // Chart data: converted to the reader's units here, so the page only draws.
    let us = fmt.is_us();
    let atm = b.audit.site.atmospheric_pressure_kpa_abs() * 1000.0;
    let flow_k = if us { 1.0 / M3_PER_FT3 } else { 1.0 }; // m³/min -> cfm
    let sp_k = if us { 100.0 * M3_PER_FT3 } else { 1.0 };
    let part_load: Vec<Value> = sm["system"]["part_load_curve"]
        .as_array()
        .map(|a| a.iter().map(|p| serde_json::json!({"x": g(p, "flow_m3_min") * flow_k, "y": g(p, "specific_power_kw_per_m3_min") * sp_k})).collect())
        .unwrap_or_default();
    let duration: Vec<Value> = sm["demand"]["flow_duration_curve"]
        .as_array()
        .map(|a| a.iter().map(|p| serde_json::json!({"x": g(p, "share_of_time") * 100.0, "y": g(p, "flow_m3_min") * flow_k})).collect())
        .unwrap_or_default();
    let heatmap: Vec<Vec<Option<f64>>> = sm["demand"]["weekday_hour_mean_flow_m3_min"]
        .as_array()
        .map(|d| {
            d.iter()
                .map(|h| {
                    h.as_array()
                        .map(|hs| hs.iter().map(|x| x.as_f64().map(|v| v * flow_k)).collect())
                        .unwrap_or_default()
                })
                .collect()
        })
        .unwrap_or_default();
    let rated_points: Vec<Value> = b
        .compressors
        .iter()
        .map(|c| serde_json::json!({"x": c.rated_flow_m3_min * flow_k, "y": c.to_spec().rated_specific_power_kw_per_m3_min() * sp_k, "label": c.tag}))
        .collect();
    let channels: Vec<Value> = b
        .channels
        .iter()
        .filter(|c| c.quantity != "temperature")
        .map(|c| {
            let name = match (&c.compressor_tag, c.quantity.as_str()) {
                (Some(t), _) => t.clone(),
                (None, "pressure") => format!("pressure at {}", c.label),
                (None, q) => format!("{q} at {}", c.label),
            };
            serde_json::json!({"id": c.id, "quantity": if c.quantity == "energy" { "power" } else { c.quantity.as_str() }, "name": name, "counter": c.quantity == "energy"})
        })
        .collect();
    let input_kwh = g(sm, "baseline.annual_energy_kwh");
    let chart_data = serde_json::json!({
        "audit_id": b.audit.id,
        "timezone": b.audit.site.timezone,
        "first_ms": b.channels.iter().map(|c| c.first_ms).min(),
        "last_ms": b.channels.iter().map(|c| c.last_ms).max(),
        "channels": channels,
        "units": {
            "system": if us { "us" } else { "si" },
            "pressure": fmt.pressure_unit(),
            "flow": fmt.flow_unit(),
            "specific_power": fmt.specific_power_unit(),
            // display = (SI value - offset) * scale
            "pressure_offset_pa": atm,
            "pressure_scale": if us { 1.0 / PA_PER_PSI } else { 1.0e-5 },
            "flow_scale": 60.0 * flow_k,
        },
        "estimated_flow": estimated,
        "part_load": part_load,
        "rated_points": rated_points,
        "duration": duration,
        "heatmap": heatmap,
        "leaks": leak_est.iter().map(|e| serde_json::json!({
            "label": s(e, "method"), "y": g(e, "leak_flow_m3_min") * flow_k,
            "low": g(e, "leak_flow_m3_min_low") * flow_k, "high": g(e, "leak_flow_m3_min_high") * flow_k})).collect::<Vec<_>>(),
        "heat_balance": {
            "labels": ["electrical input", "heat rejected", "recoverable", "used (displaces fuel)"],
            "mwh": [input_kwh / 1000.0, g(sm, "heat.annual_heat_rejected_kwh") / 1000.0, g(sm, "heat.annual_recoverable_kwh") / 1000.0, g(sm, "heat.useful_heat_kwh_per_year") / 1000.0],
        },
    });
    let period = format!(
        "{} to {} ({} h logged, {} s analysis step)",
        s(sm, "period.start"),
        s(sm, "period.end"),
        num(g(sm, "period.hours"), 1),
        num(g(sm, "period.step_s"), 0)
    );
    let coverage = format!(
        "power in {} of the time, flow in {}, pressure in {}",
        fmt.percent(g(sm, "coverage.power")),
        fmt.percent(g(sm, "coverage.flow")),
        fmt.percent(g(sm, "coverage.pressure"))
    );
    ReportView {
        has_data,
        period,
        coverage,
        flow_note,
        figures,
        recs,
        total_saving: money(tot_save),
        total_payback: fmt.years(tot_cost / tot_save),
        compressors,
        leaks,
        leak_note: s(sm, "leaks.adopted_rule").into(),
        pressure,
        demand,
        heat,
        methods,
        assumptions,
        baseline_rule: s(sm, "baseline.rule").into(),
        chart_data,
    }
}
