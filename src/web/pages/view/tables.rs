//! The report's and the findings' tables of facts: the compressors (with their load in words),
//! the demand, the heat of compression, the treatment records and the end uses, each row a label
//! and its figures in the reader's units.

use super::*;

/// A compressor's load in words, the same on the load chart (`plots`, its bar's note) and in the
/// compressor table ([`load_cell`]): the share of its logged time loaded for a machine that loads
/// and unloads (or starts and stops); for one that follows demand by speed or by capacity (variable
/// speed, modulation), whose time "loaded" (at full power) says little, its mean capacity share
/// (`CompressorFigures::mean_capacity_share`).
pub fn load_words(c: &crate::core::analysis::CompressorFigures, fmt: &Fmt) -> String {
    if !c.power_logged || c.logged_hours <= 0.0 {
        return "no power logged".into();
    }
    if c.power_from_counter {
        return format!(
            "{NOT_ENOUGH_DATA} (only an energy counter was logged: its states cannot be read from it)"
        );
    }
    if follows_demand(c) {
        format!("mean capacity {}", fmt.percent(c.mean_capacity_share.unwrap_or(f64::NAN)))
    } else {
        format!("loaded {}", fmt.percent(c.loaded_fraction))
    }
}

/// A machine that follows demand by speed or by capacity (variable speed, modulation).
pub fn follows_demand(c: &crate::core::analysis::CompressorFigures) -> bool {
    use crate::core::model::Control;
    matches!(c.control, Control::VariableSpeed | Control::Modulation)
}

/// The compressor table's load cell: [`load_words`], and the running hours of a machine that
/// follows demand (its mean capacity is over them).
pub(super) fn load_cell(c: &crate::core::analysis::CompressorFigures, fmt: &Fmt) -> String {
    let w = load_words(c, fmt);
    if follows_demand(c) && c.logged_hours > 0.0 && !c.power_from_counter {
        format!("{w} over {} h running", num(c.running_hours, 1))
    } else {
        w
    }
}

/// The compressor table: a machine without logged power has no figure of its own (a dash, never a
/// zero); one whose power is only an energy counter has its energy and mean power, and "not enough
/// data" for what its states would give (`sufficiency::counter_only`).
pub(super) fn compressor_rows(sm: &Summary, fmt: &Fmt) -> Vec<CompressorRow> {
    sm.compressors
        .iter()
        .map(|c| {
            let logged = c.power_logged && c.logged_hours > 0.0;
            let states = logged && !c.power_from_counter;
            let share = |x: f64| {
                if states {
                    fmt.percent(x)
                } else if logged {
                    NOT_ENOUGH_DATA.into()
                } else {
                    "–".into()
                }
            };
            let mut row = compressor_row(sm, c, fmt);
            if !logged {
                row.energy = "–".into();
                row.mean_power = "–".into();
            }
            row.unloaded = share(c.unloaded_fraction);
            row.off = share(c.off_fraction);
            row.cycles = if states { format!("{} /h", num(c.cycles_per_hour, 1)) } else { share(0.0) };
            if !states {
                // Its air would be read from its states.
                if c.estimated {
                    row.specific_power = share(0.0);
                    row.estimated = false;
                }
                row.loaded_power = fmt.power_kw(f64::NAN);
                row.vs_datasheet = num(f64::NAN, 1);
                row.levels = fmt.power_kw(f64::NAN);
            }
            row
        })
        .collect()
}

fn compressor_row(sm: &Summary, c: &crate::core::analysis::CompressorFigures, fmt: &Fmt) -> CompressorRow {
    CompressorRow {
        tag: c.tag.clone(),
        control: human_label(c.control.as_str()),
        energy: fmt.energy_kwh(c.energy_kwh),
        mean_power: fmt.power_kw(c.mean_power_kw),
        loaded: load_cell(c, fmt),
        unloaded: fmt.percent(c.unloaded_fraction),
        off: fmt.percent(c.off_fraction),
        cycles: format!("{} /h", num(c.cycles_per_hour, 1)),
        specific_power: fmt.specific_power(nan(c.specific_power_kw_per_m3_min)),
        rated_specific_power: fmt.specific_power(c.rated_specific_power_kw_per_m3_min),
        loaded_power: match (c.loaded_power_kw, c.loaded_pressure_bar_g) {
            (Some(p), Some(bar)) => format!("{} at {}", fmt.power_kw(p), fmt.pressure_bar_g(bar)),
            (Some(p), None) if sm.pressure.mean_bar_g.is_some() => {
                format!("{} (no pressure logged while it ran loaded)", fmt.power_kw(p))
            }
            (Some(p), None) => format!("{} (no pressure logged)", fmt.power_kw(p)),
            _ => fmt.power_kw(f64::NAN),
        },
        datasheet_power: fmt.power_kw(nan(c.datasheet_power_at_pressure_kw)),
        vs_datasheet: match c.loaded_power_vs_datasheet_percent {
            Some(v) => format!("{:+.1} %", v),
            None => num(f64::NAN, 1),
        },
        levels: match &c.levels_kw {
            Some(l) => {
                let mark = |s: LevelSource| if s == LevelSource::DataSheet { " (data sheet)" } else { "" };
                format!(
                    "{} / {}{} / {}{}",
                    fmt.power_kw(nan(l.off)),
                    fmt.power_kw(l.unloaded),
                    mark(l.unloaded_source),
                    fmt.power_kw(l.loaded),
                    mark(l.loaded_source)
                )
            }
            None => fmt.power_kw(f64::NAN),
        },
        estimated: c.estimated,
    }
}

pub(super) fn demand_rows(sm: &Summary, fmt: &Fmt) -> Vec<(String, String)> {
    let (sys, d) = (&sm.system, &sm.demand);
    let split_withheld = sm.sufficiency.withheld.iter().any(|w| w.figure == "demand.production_split");
    vec![
        (
            "Mean flow".into(),
            match sys.mean_flow_m3_min {
                Some(q) => range(
                    |x| fmt.flow_m3_min(x),
                    q,
                    nan(sys.mean_flow_m3_min_low),
                    nan(sys.mean_flow_m3_min_high),
                ),
                None => format!("{NOT_ENOUGH_DATA} ({})", withheld(sm, "system.mean_flow_m3_min")),
            },
        ),
        (
            format!("Peak flow, highest {} mean", window_words(sys.peak_flow_window_s)),
            match sys.peak_flow_m3_min {
                None => format!("{NOT_ENOUGH_DATA} ({})", withheld(sm, "system.peak_flow_m3_min")),
                Some(peak) if sys.peak_flow_window_s > sm.period.step_s => format!(
                    "{} (on the clock's minutes; a single {} time step and the top of the flow duration \
                     curve read higher)",
                    fmt.flow_m3_min(peak),
                    duration_s(sm.period.step_s)
                ),
                Some(peak) => format!(
                    "{} (one analysis time step: the analysis' steps are a minute or longer, so the top of \
                     the flow duration curve is this same figure)",
                    fmt.flow_m3_min(peak)
                ),
            },
        ),
        (
            "Production / non-production mean flow".into(),
            if split_withheld {
                format!("{NOT_ENOUGH_DATA} ({})", withheld(sm, "demand.production_split"))
            } else {
                format!(
                    "{} / {}",
                    fmt.flow_m3_min(nan(d.production_mean_flow_m3_min)),
                    fmt.flow_m3_min(nan(d.non_production_mean_flow_m3_min))
                )
            },
        ),
        (
            "Production share of time".into(),
            if split_withheld {
                format!("{NOT_ENOUGH_DATA} ({})", withheld(sm, "demand.production_split"))
            } else {
                format!("{} ({})", fmt.percent(d.production_share_of_time), d.production_rule)
            },
        ),
        (format!("Mean power / peak {} demand", window_words(sys.peak_power_window_s)), {
            // A mean over logs that never overlap describes no time of the plant.
            let mean = if has_withheld(sm, "system.mean_power_kw") {
                format!("{NOT_ENOUGH_DATA} ({})", withheld(sm, "system.mean_power_kw"))
            } else {
                fmt.power_kw(sys.mean_power_kw)
            };
            match sys.peak_power_kw {
                Some(p) => format!("{mean} / {} ({})", fmt.power_kw(p), peak_power_words(sm)),
                None => {
                    format!("{mean} / peak: {NOT_ENOUGH_DATA} ({})", withheld(sm, "system.peak_power_kw"))
                }
            }
        }),
    ]
}

/// What the peak power is: the highest mean over the clock's quarter hours, as the demand charge
/// bills it; when the analysis' steps do not fit 15 minutes, the window they allow, said as such.
fn peak_power_words(sm: &Summary) -> String {
    let w = sm.system.peak_power_window_s;
    if (w - 900.0).abs() < 0.5 {
        "the highest mean over 15 min on the clock's quarter hours, as the demand charge bills it".into()
    } else {
        format!(
            "the highest mean over {} on the clock's {} marks: the analysis step of {} does not fit the \
             demand charge's 15 minutes, so this is the nearest window it allows",
            duration_s(w),
            duration_s(w),
            duration_s(sm.period.step_s)
        )
    }
}

pub(super) fn heat_rows(sm: &Summary, fmt: &Fmt, cur: &str) -> Vec<(String, String)> {
    let h = &sm.heat;
    vec![
        ("Heat rejected in the logged period".into(), fmt.energy_kwh(h.heat_rejected_kwh)),
        ("Recoverable in the logged period".into(), fmt.energy_kwh(h.recoverable_kwh)),
        ("Recoverable at full load".into(), fmt.power_kw(h.recoverable_kw_at_full_load)),
        (
            "Useful heat per year".into(),
            format!(
                "{} ({})",
                or_nd(h.useful_heat_kwh_per_year, |v| fmt.energy_kwh(v)),
                h.use_kind.as_str().replace('_', " ")
            ),
        ),
        ("Fuel displaced per year".into(), or_nd(h.displaced_fuel_kwh_per_year, |v| fmt.energy_kwh(v))),
        (
            "Value per year / as process water all year".into(),
            format!(
                "{} / {}",
                or_nd(h.annual_value, |v| fmt.money(v, cur)),
                or_nd(h.process_water_annual_value, |v| fmt.money(v, cur))
            ),
        ),
    ]
}

/// The transmission records priced, in the reader's units: dryers, drains, filters and the
/// pressure drops between measuring points.
pub(super) fn transmission_rows(sm: &Summary, fmt: &Fmt, cur: &str) -> Vec<(String, String)> {
    let t = &sm.transmission;
    let mut rows = vec![];
    // Records left unpriced for a reason of their own (no mean flow known: those that need it,
    // their reason naming them); on insufficient data the section says so in its own words.
    if sm.sufficiency.verdict != Verdict::Insufficient {
        for (figure, label) in
            [("transmission.dryers[]", "Dryers not priced"), ("transmission.filters[]", "Filters not priced")]
        {
            if let Some(w) = sm.sufficiency.withheld.iter().find(|w| w.figure == figure) {
                rows.push((label.into(), format!("{NOT_ENOUGH_DATA} ({})", w.reason)));
            }
        }
    }
    let savings_withheld =
        sm.sufficiency.withheld.iter().find(|w| w.figure == "transmission.dryers[].savings");
    let words = crate::core::model::human_label;
    for d in &t.dryers {
        rows.push((
            format!("Dryer {} ({}, {})", d.tag, words(&d.kind), words(&d.control)),
            format!(
                "{}; electricity {}{}",
                // A dryer that purges no air (refrigerated, or a purge of 0) says so, not zeros.
                if d.purge_m3_min > 0.0 {
                    format!(
                        "purge {} ({} a year, {})",
                        fmt.flow_m3_min(d.purge_m3_min),
                        fmt.energy_kwh(d.annual_purge_kwh),
                        fmt.money(d.annual_purge_cost, cur)
                    )
                } else {
                    "no purge air".to_string()
                },
                fmt.power_kw(d.power_kw),
                match (d.dew_point_control_saving_m3_min, d.cycling_saving_kw, d.cycling_saving_kwh) {
                    (None, _, _) | (_, None, _) => savings_withheld.map_or(String::new(), |w| {
                        format!("; what a change of control would save: {NOT_ENOUGH_DATA} ({})", w.reason)
                    }),
                    (Some(q), _, _) if q > 0.0 => {
                        format!("; dew-point control would purge {} less", fmt.flow_m3_min(q))
                    }
                    (_, Some(kw), Some(kwh)) if kw > 0.0 => format!(
                        "; a cycling unit would draw {} less ({} a year)",
                        fmt.power_kw(kw),
                        fmt.energy_kwh(kwh)
                    ),
                    _ => String::new(),
                }
            ),
        ));
    }
    for d in &t.drains {
        rows.push((
            format!("Drain {} ({})", d.tag, words(&d.kind)),
            format!(
                "air lost {} ({} a year, {})",
                fmt.flow_m3_min(d.air_m3_min),
                fmt.energy_kwh(d.annual_kwh),
                fmt.money(d.annual_cost, cur)
            ),
        ));
    }
    for f in &t.filters {
        rows.push((
            format!("Filter {} ({})", f.tag, words(&f.kind)),
            format!(
                "drop {} measured against {} clean at {} ({} clean at its rated {}, drop ∝ flow²): {} excess{}{}",
                fmt.pressure_delta_bar(f.measured_drop_bar),
                fmt.pressure_delta_bar(f.clean_drop_at_flow_bar),
                fmt.flow_m3_min(f.flow_m3_min),
                fmt.pressure_delta_bar(f.clean_drop_bar),
                fmt.flow_m3_min(f.rated_flow_m3_min),
                fmt.pressure_delta_bar(f.excess_drop_bar),
                match (f.annual_kwh, f.annual_cost) {
                    (Some(k), Some(c)) => format!(
                        ", costing {} a year of loaded compressor energy ({})",
                        fmt.energy_kwh(k),
                        fmt.money(c, cur)
                    ),
                    _ => String::new(),
                },
                if f.change_recommended { "; change the element" } else { "" }
            ),
        ));
    }
    for d in &t.pressure_drops {
        // The duration curve's 5 % point: the drop exceeded for 5 % of the logged time.
        let p5_time = d.duration_curve_bar.get(1).copied();
        rows.push((
            format!(
                "Pressure drop: {} ({}) to {} ({})",
                d.from,
                d.from_point.label(),
                d.to,
                d.to_point.label()
            ),
            format!(
                "mean {}{}{}; {}",
                fmt.pressure_delta_bar(d.mean_bar),
                d.at_peak_flow_bar.map_or(String::new(), |x| {
                    format!(", at high flow (the 95th percentile and above) {}", fmt.pressure_delta_bar(x))
                }),
                p5_time.map_or(String::new(), |x| format!(
                    ", exceeded 5 % of the time {}",
                    fmt.pressure_delta_bar(x)
                )),
                match (d.annual_energy_kwh, d.annual_cost) {
                    (Some(k), Some(c)) => format!(
                        "costs {} a year ({}) of extra discharge pressure",
                        fmt.energy_kwh(k),
                        fmt.money(c, cur)
                    ),
                    _ => format!("its annual cost: {NOT_ENOUGH_DATA}"),
                }
            ),
        ));
    }
    rows
}

/// The end uses on record and the mean demand split by what uses it (ISO 11011's demand side).
pub(super) fn end_use_rows(sm: &Summary, fmt: &Fmt) -> Vec<(String, String)> {
    let mut rows = vec![];
    let words = crate::core::model::human_label;
    for u in &sm.transmission.end_uses {
        rows.push((
            format!(
                "End use: {} ({}{})",
                u.name,
                words(&u.kind),
                if u.inappropriate { ", inappropriate" } else { "" }
            ),
            format!(
                "{} in production ({} a year of compressor energy){}",
                fmt.flow_m3_min(u.production_mean_flow_m3_min),
                fmt.energy_kwh(u.annual_air_kwh),
                u.alternative_saving_kwh.map_or(String::new(), |k| format!(
                    "; an electric alternative saves {} a year",
                    fmt.energy_kwh(k)
                ))
            ),
        ));
    }
    if let Some(w) = sm.sufficiency.withheld.iter().find(|w| w.figure == "demand_split") {
        rows.push(("Mean demand split".into(), format!("{NOT_ENOUGH_DATA} ({})", w.reason)));
    }
    if let Some(s) = &sm.demand_split {
        let total = s.total_m3_min();
        let part = |q: f64| {
            if total > 0.0 {
                format!("{} ({})", fmt.flow_m3_min(q), fmt.percent(q / total))
            } else {
                fmt.flow_m3_min(q)
            }
        };
        rows.push(("Mean demand: production uses".into(), part(s.production_m3_min)));
        rows.push(("Mean demand: inappropriate uses".into(), part(s.inappropriate_m3_min)));
        rows.push(("Mean demand: dryer purge and drains".into(), part(s.purge_and_drains_m3_min)));
        rows.push(("Mean demand: leaks".into(), part(s.leaks_m3_min)));
        rows.push(("Mean demand: not yet explained".into(), part(s.unexplained_m3_min)));
    }
    rows
}

/// Why no measure is listed: the data are not enough, a measure's basis was withheld (its reason),
/// or nothing saves.
pub(super) fn no_measures(sm: &Summary) -> String {
    if sm.sufficiency.verdict == Verdict::Insufficient {
        "No measure is proposed: the logged data are not enough (see the data sufficiency verdict).".into()
    } else if has_withheld(sm, "recommendations") {
        format!("No measure is proposed: {}.", withheld(sm, "recommendations"))
    } else {
        "No measure with a positive saving was found in this data.".into()
    }
}

/// Why the isothermal efficiency is not given when no rule withheld it: it needs the header
/// pressure, a flow meter and the compressors' power logged together, and says which is missing.
pub(super) fn isothermal_missing(sm: &Summary) -> String {
    let mut missing = vec![];
    if sm.pressure.mean_bar_g.is_none() {
        missing.push("no header pressure was logged");
    }
    if sm.system.estimated {
        missing.push("no flow meter was logged");
    }
    if missing.is_empty() {
        missing.push("the header pressure, the flow and the power were never logged together");
    }
    format!(
        "it needs the header pressure, a flow meter and the compressors' power logged together: {}",
        missing.join(" and ")
    )
}
