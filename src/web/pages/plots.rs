/*!
The findings' charts, drawn on the server as inline SVG (`core::plot`) so that they print on paper
and in a PDF as they show: the compressors' power and load (supply), the header pressure over the
log and its duration curve (transmission), the demand over the log, its typical day, its duration
curve and its split (demand). Every series is in the reader's units and every time in the site's
local time with the zone named. Logged series come from the rollups, downsampled to at most
[`POINTS`] buckets (`store::read::chart_series`); the rest are the summary's own figures.
*/

use crate::app::{App, AuditBundle};
use crate::core::analysis::Summary;
use crate::core::display::Fmt;
use crate::core::plot::{
    bar_chart_svg, duration_curve, line_chart_svg, Axis, BarChart, BarRow, LineChart, Mark, Tick,
};
use crate::core::units::{M3_PER_FT3, PA_PER_BAR, PA_PER_PSI};
use crate::store::read::ChannelInfo;
use crate::web::error::AppError;

/// Buckets of a series over the whole log.
pub const POINTS: usize = 400;
/// Buckets the pressure's duration curve is sorted from: per-minute means over two weeks (the
/// rollups keep nothing finer); hourly beyond.
const DURATION_BUCKETS: usize = 20_160;

/// One chart with its heading and a line saying what it is drawn from.
pub struct Plot {
    pub id: &'static str,
    pub heading: String,
    /// The `<svg>` element, every text in it escaped by `core::plot`.
    pub svg: String,
    pub note: String,
}

/// The findings' charts, by the section they belong to.
#[derive(Default)]
pub struct FindingsPlots {
    pub supply: Vec<Plot>,
    pub transmission: Vec<Plot>,
    pub demand: Vec<Plot>,
}

/// How the reader reads the SI values of the series and the summary.
struct Units {
    us: bool,
    atm_pa: f64,
}

impl Units {
    /// Pa absolute -> bar(g) or psig.
    fn pressure_abs(&self, pa: f64) -> f64 {
        (pa - self.atm_pa) / if self.us { PA_PER_PSI } else { PA_PER_BAR }
    }
    /// bar(g) -> bar(g) or psig (a gauge difference: the atmosphere cancels).
    fn pressure_bar_g(&self, bar_g: f64) -> f64 {
        if self.us {
            bar_g * PA_PER_BAR / PA_PER_PSI
        } else {
            bar_g
        }
    }
    /// m³/s -> m³/min or cfm.
    fn flow_m3_s(&self, q: f64) -> f64 {
        self.flow_m3_min(q * 60.0)
    }
    /// m³/min -> m³/min or cfm.
    fn flow_m3_min(&self, q: f64) -> f64 {
        if self.us {
            q / M3_PER_FT3
        } else {
            q
        }
    }
}

/// A time axis over `[from, to]` (ms UTC) with ticks at round local times of the site: hours
/// when the span is short, midnights when it is days long (walked a calendar day at a time, so a
/// span of years gets its ticks to the end), with the year in every label when the span crosses
/// one ("13 Dec 2006" and "3 Sep 2013", never two bare "13 Dec").
pub fn time_axis(from_ms: i64, to_ms: i64, tz: &str) -> Axis {
    let zone = jiff::tz::TimeZone::get(tz).unwrap_or(jiff::tz::TimeZone::UTC);
    let span_min = (to_ms - from_ms).max(1) as f64 / 60_000.0;
    // The step in minutes: at most 7 intervals over the span.
    let step = [
        5i64, 10, 15, 30, 60, 120, 180, 360, 720, 1440, 2880, 10_080, 20_160, 43_200, 129_600, 525_600,
        1_051_200, 2_628_000,
    ]
    .into_iter()
    .find(|s| span_min / *s as f64 <= 7.0)
    .unwrap_or(5_256_000);
    let by_day = step >= 1440;
    let mut ticks = vec![];
    let title = format!("Site time ({tz})");
    let (Ok(start), Ok(end)) =
        (jiff::Timestamp::from_millisecond(from_ms), jiff::Timestamp::from_millisecond(to_ms))
    else {
        return Axis { title, min: from_ms as f64, max: to_ms as f64, ticks };
    };
    let start = start.to_zoned(zone.clone());
    let year = if start.year() != end.to_zoned(zone).year() { " %Y" } else { "" };
    // Walk local times a minute step at a time under an hour, an hour at a time under a day, a
    // calendar day at a time above (from the start's midnight).
    let walk = if by_day { jiff::Span::new().days(1) } else { jiff::Span::new().minutes(step.min(60)) };
    let first = if by_day { start.with().hour(0) } else { start.with() };
    let Ok(mut t) = first.minute(0).second(0).subsec_nanosecond(0).build() else {
        return Axis { title, min: from_ms as f64, max: to_ms as f64, ticks };
    };
    let mut days = 0i64;
    // At most a few years of hours, or decades of days.
    for _ in 0..30_000 {
        let ms = t.timestamp().as_millisecond();
        if ms > to_ms {
            break;
        }
        let (hour, minute) = (i64::from(t.hour()), i64::from(t.minute()));
        let midnight = hour == 0 && minute == 0;
        if midnight && ms >= from_ms {
            days += 1;
        }
        let on_tick = if step < 60 {
            minute % step == 0
        } else if step < 1440 {
            minute == 0 && hour % (step / 60) == 0
        } else {
            midnight && (days - 1).rem_euclid(step / 1440) == 0
        };
        if ms >= from_ms && on_tick {
            let label = if step >= 10_080 {
                t.strftime(&format!("%-d %b{year}")).to_string()
            } else if midnight {
                t.strftime(&format!("%a %-d %b{year}")).to_string()
            } else {
                t.strftime("%H:%M").to_string()
            };
            ticks.push(Tick { at: ms as f64, label });
        }
        match t.checked_add(walk) {
            Ok(n) => t = n,
            Err(_) => break,
        }
    }
    Axis { title, min: from_ms as f64, max: to_ms as f64, ticks }
}

/// A numeric axis fitted to every finite value of the marks (and `floor`, when given: power and
/// flow start at zero), leaving out values below `least` (they run off the chart's foot).
fn value_axis(title: String, marks: &[Mark], floor: Option<f64>, least: Option<f64>) -> Axis {
    let mut lo = floor.unwrap_or(f64::INFINITY);
    let mut hi = f64::NEG_INFINITY;
    let least = least.unwrap_or(f64::NEG_INFINITY);
    let mut see = |v: f64| {
        if v.is_finite() && v >= least {
            lo = lo.min(v);
            hi = hi.max(v);
        }
    };
    for m in marks {
        match m {
            Mark::Line { points, .. } => points.iter().for_each(|p| see(p.1)),
            Mark::Band { points, .. } => points.iter().for_each(|p| {
                see(p.1);
                see(p.2)
            }),
            Mark::Level { y, .. } => see(*y),
        }
    }
    Axis::numeric(title, lo, hi, 5)
}

/// The channels of `quantity` over the whole log: a mean line each, and a least-to-greatest band
/// when `band`; values through `conv`. `None` when no such channel is logged.
async fn logged_chart(
    app: &App,
    b: &AuditBundle,
    quantity: &str,
    conv: &(dyn Fn(f64) -> f64 + Sync),
    band: bool,
) -> Result<Option<(Vec<Mark>, i64, i64)>, AppError> {
    // An energy counter is drawn as the power it stands for (`App::chart_series`), after the
    // logged power.
    let counters = b.channels.iter().filter(|c| quantity == "power" && c.quantity == "energy");
    let chans: Vec<&ChannelInfo> =
        b.channels.iter().filter(|c| c.quantity == quantity).chain(counters).collect();
    if chans.is_empty() {
        return Ok(None);
    }
    // The band goes with the channel the summary's figures describe: the header pressure (not tied
    // to a compressor, measured in the header or at no stated point), else the first; the other
    // points are lines, so that several stay readable.
    let banded = chans
        .iter()
        .find(|c| c.compressor_tag.is_none() && c.point.as_deref().is_none_or(|p| p == "header"))
        .or(chans.first())
        .map(|c| c.id);
    let from = chans.iter().map(|c| c.first_ms).min().unwrap_or(0);
    let to = chans.iter().map(|c| c.last_ms).max().unwrap_or(from);
    let mut marks = vec![];
    for c in chans {
        let mut name = super::words::channel_name(c, &b.channels);
        if c.quantity == "energy" {
            name.push_str(", from its energy counter");
        }
        let pts = app.chart_series(b, c, from, to, POINTS).await?;
        // A bucket that follows a longer silence than the chart's gap is across a gap in the log
        // (`read::chart_gap_ms`: by the bucket length and the logging interval, never by the span
        // over the number of points, which files years apart make years long).
        let gap = crate::store::read::chart_gap_ms(c, from, to, POINTS);
        let mut line = vec![];
        let mut spread = vec![];
        let mut last: Option<i64> = None;
        for p in &pts {
            if last.is_some_and(|l| p.t_ms - l > gap) {
                line.push((f64::NAN, f64::NAN));
                spread.push((f64::NAN, f64::NAN, f64::NAN));
            }
            line.push((p.t_ms as f64, conv(p.mean)));
            spread.push((p.t_ms as f64, conv(p.min), conv(p.max)));
            last = Some(p.t_ms);
        }
        if band && banded == Some(c.id) {
            marks.push(Mark::Band { name: format!("{name} (lowest to highest)"), points: spread });
        }
        marks.push(Mark::Line { name: format!("{name} (mean)"), points: line });
    }
    Ok(Some((marks, from, to)))
}

/// Every chart of the findings, from the bundle, the summary and the logged series.
pub async fn findings_plots(
    app: &App,
    b: &AuditBundle,
    fmt: &Fmt,
    sm: &Summary,
) -> Result<FindingsPlots, AppError> {
    let u = Units { us: fmt.is_us(), atm_pa: fmt.atmosphere.0 };
    let tz = b.audit.site.timezone.as_str();
    let mut out = FindingsPlots::default();
    let bucket_note = |from: i64, to: i64| {
        let minutes = ((to - from) as f64 / POINTS as f64 / 60_000.0).max(1.0);
        if minutes >= 90.0 {
            format!("{:.0}-hour", (minutes / 60.0).round())
        } else {
            format!("{minutes:.0}-minute")
        }
    };

    // Supply: the compressors' power over the log, and their time loaded, unloaded and off.
    if let Some((marks, from, to)) = logged_chart(app, b, "power", &|w| w / 1000.0, false).await? {
        let chart = LineChart {
            id: "plot-power".into(),
            title: "Compressor power over the logged period".into(),
            y: value_axis("Power, kW".into(), &marks, Some(0.0), None),
            x: time_axis(from, to, tz),
            marks,
        };
        out.supply.push(Plot {
            id: "plot-power",
            heading: "Compressor power over the logged period".into(),
            svg: line_chart_svg(&chart),
            note: format!("Means of {} buckets, in the site's time ({tz}).", bucket_note(from, to)),
        });
    }
    if !sm.compressors.is_empty() {
        // A machine that follows demand by speed or capacity is running, not loaded, between off
        // and full power: its bar shows that share, and its note the same words as the table.
        let variable = super::view::follows_demand;
        let has_variable = sm.compressors.iter().any(variable);
        let mut parts = vec!["loaded".to_string()];
        if has_variable {
            parts.push("running (variable speed or capacity)".into());
        }
        parts.extend(["unloaded".to_string(), "off".to_string()]);
        let rows = sm
            .compressors
            .iter()
            .map(|c| {
                let running = (c.loaded_fraction + c.part_load_fraction.max(0.0)) * 100.0;
                let mut v = vec![if variable(c) { 0.0 } else { running }];
                if has_variable {
                    v.push(if variable(c) { running } else { 0.0 });
                }
                v.extend([c.unloaded_fraction * 100.0, c.off_fraction * 100.0]);
                // No bar for states not read (no power, or only an energy counter): its note says why.
                if !c.power_logged || c.power_from_counter {
                    v.iter_mut().for_each(|x| *x = 0.0);
                }
                BarRow { label: c.tag.clone(), parts: v, note: super::view::load_words(c, fmt) }
            })
            .collect();
        let chart = BarChart {
            id: "plot-load".into(),
            title: "Each compressor's share of the logged time loaded (or running, at variable speed or capacity), unloaded and off".into(),
            x: Axis::numeric("Share of the logged time, %", 0.0, 100.0, 5),
            parts,
            rows,
        };
        out.supply.push(Plot {
            id: "plot-load",
            heading: "Compressor load: share of the logged time".into(),
            svg: bar_chart_svg(&chart),
            note: "From the states found in each machine's logged power. A machine at variable speed or capacity runs between off and full power: its bar shows the time it ran, its note its mean capacity (the free air it delivered over its running hours against its rated free air delivery), as in the compressor table.".into(),
        });
    }

    // Transmission: the header pressure over the log and its duration curve.
    let p_unit = fmt.pressure_unit();
    let conv_p = |pa: f64| u.pressure_abs(pa);
    // The plant's low limit drawn across; the axis reaches down to twice the 5-95 % spread below
    // the 5th percentile or to the low limit, so that a rare dip (a start-up, a shut-down) does not
    // flatten the working band; the caption names the least reading when it runs off the foot.
    let pf = &sm.pressure;
    let low_limit = pf.low_limit_bar_g.map(|l| u.pressure_bar_g(l));
    let least = match (pf.p5_bar_g, pf.p95_bar_g) {
        (Some(p5), Some(p95)) => {
            let f = p5 - 2.0 * (p95 - p5).max(0.05);
            Some(u.pressure_bar_g(pf.low_limit_bar_g.map_or(f, |l| f.min(l - 0.2))))
        }
        _ => None,
    };
    let off_foot = match (least, pf.min_bar_g) {
        (Some(l), Some(m)) if u.pressure_bar_g(m) < l => {
            format!(" Readings down to {} run off the foot of the chart.", fmt.pressure_bar_g(m))
        }
        _ => String::new(),
    };
    let with_limit = |mut marks: Vec<Mark>| {
        if let Some(l) = low_limit {
            marks.push(Mark::Level { name: "low limit".into(), y: l });
        }
        marks
    };
    if let Some((marks, from, to)) = logged_chart(app, b, "pressure", &conv_p, true).await? {
        let marks = with_limit(marks);
        let chart = LineChart {
            id: "plot-pressure".into(),
            title: "Pressure over the logged period".into(),
            y: value_axis(format!("Pressure, {p_unit}"), &marks, None, least),
            x: time_axis(from, to, tz),
            marks,
        };
        out.transmission.push(Plot {
            id: "plot-pressure",
            heading: "Pressure over the logged period".into(),
            svg: line_chart_svg(&chart),
            note: format!(
                "Mean of {} buckets, shaded from the least to the greatest reading in each; site time ({tz}); the low limit is the lowest rated pressure less {} (common practice).{off_foot}",
                bucket_note(from, to),
                fmt.pressure_delta_bar(1.0)
            ),
        });
        // The duration curve from the finest buckets the rollups give, drawn at 101 points.
        let mut marks = vec![];
        for c in b.channels.iter().filter(|c| c.quantity == "pressure") {
            // Beyond two weeks, hourly means: the minute rollups of a year are not read for a page.
            let span_h = ((c.last_ms - c.first_ms) / 3_600_000).max(1) as usize;
            let n = if span_h <= 14 * 24 { DURATION_BUCKETS } else { span_h.min(DURATION_BUCKETS) };
            let pts = app.chart_series(b, c, c.first_ms, c.last_ms, n).await?;
            let means: Vec<f64> = pts.iter().map(|p| conv_p(p.mean)).collect();
            let curve = duration_curve(&means, 101).into_iter().map(|(s, v)| (s * 100.0, v)).collect();
            marks.push(Mark::Line { name: super::words::channel_name(c, &b.channels), points: curve });
        }
        let marks = with_limit(marks);
        let chart = LineChart {
            id: "plot-pressure-duration".into(),
            title: "Pressure duration curve".into(),
            y: value_axis(format!("Pressure, {p_unit}"), &marks, None, least),
            x: Axis::numeric("Share of the logged time at or above the pressure, %", 0.0, 100.0, 10),
            marks,
        };
        out.transmission.push(Plot {
            id: "plot-pressure-duration",
            heading: "Pressure duration curve".into(),
            svg: line_chart_svg(&chart),
            note: format!("One-minute means (hourly beyond two weeks of log), highest first.{off_foot}"),
        });
    }

    // Demand: the flow over the log (when a meter logged it), the typical day, the duration curve
    // and the split.
    let f_unit = fmt.flow_unit();
    let conv_q = |q: f64| u.flow_m3_s(q);
    if let Some((marks, from, to)) = logged_chart(app, b, "flow", &conv_q, true).await? {
        let chart = LineChart {
            id: "plot-flow".into(),
            title: "Demand over the logged period".into(),
            y: value_axis(format!("Flow, {f_unit}"), &marks, Some(0.0), None),
            x: time_axis(from, to, tz),
            marks,
        };
        out.demand.push(Plot {
            id: "plot-flow",
            heading: "Demand over the logged period".into(),
            svg: line_chart_svg(&chart),
            note: format!(
                "Mean of {} buckets, shaded from the least to the greatest reading in each; site time ({tz}).",
                bucket_note(from, to)
            ),
        });
    }
    let cells = &sm.demand.weekday_hour_mean_flow_m3_min;
    let mut mean = vec![];
    let mut spread = vec![];
    for h in 0..24 {
        let vals: Vec<f64> =
            cells.iter().filter_map(|day| day.get(h).copied().flatten()).map(|q| u.flow_m3_min(q)).collect();
        let x = h as f64 + 0.5;
        if vals.is_empty() {
            mean.push((x, f64::NAN));
            spread.push((x, f64::NAN, f64::NAN));
        } else {
            mean.push((x, vals.iter().sum::<f64>() / vals.len() as f64));
            let lo = vals.iter().copied().fold(f64::INFINITY, f64::min);
            let hi = vals.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            spread.push((x, lo, hi));
        }
    }
    if mean.iter().any(|p| p.1.is_finite()) {
        let est = if sm.demand.estimated { " (estimated from the compressors' states)" } else { "" };
        let marks = vec![
            Mark::Band { name: "mean flow (range over the days of the week)".into(), points: spread },
            Mark::Line { name: "mean flow (mean over the days of the week)".into(), points: mean },
        ];
        let ticks =
            (0..=8).map(|k| Tick { at: f64::from(k * 3), label: format!("{:02}:00", k * 3) }).collect();
        let chart = LineChart {
            id: "plot-typical-day".into(),
            title: "Typical day: mean demand by hour".into(),
            y: value_axis(format!("Flow, {f_unit}{est}"), &marks, Some(0.0), None),
            x: Axis { title: format!("Hour of the day, site time ({tz})"), min: 0.0, max: 24.0, ticks },
            marks,
        };
        out.demand.push(Plot {
            id: "plot-typical-day",
            heading: "Typical day: mean demand by hour".into(),
            svg: line_chart_svg(&chart),
            note:
                "Each hour's mean flow on each day of the week logged (Monday to Sunday); the line is their mean, the shade their range."
                    .into(),
        });
    }
    if !sm.demand.flow_duration_curve.is_empty() {
        let est = if sm.demand.estimated { " (estimated)" } else { "" };
        let marks = vec![Mark::Line {
            name: format!("flow{est}"),
            points: sm
                .demand
                .flow_duration_curve
                .iter()
                .map(|p| (p.share_of_time * 100.0, u.flow_m3_min(p.flow_m3_min)))
                .collect(),
        }];
        let chart = LineChart {
            id: "plot-flow-duration".into(),
            title: "Flow duration curve".into(),
            y: value_axis(format!("Flow, {f_unit}"), &marks, Some(0.0), None),
            x: Axis::numeric("Share of the logged time at or above the flow, %", 0.0, 100.0, 10),
            marks,
        };
        out.demand.push(Plot {
            id: "plot-flow-duration",
            heading: "Flow duration curve".into(),
            svg: line_chart_svg(&chart),
            note: super::view::duration_note(sm.period.step_s),
        });
    }
    if let Some(s) = &sm.demand_split {
        let total = s.total_m3_min();
        let parts = [
            ("production uses", s.production_m3_min),
            ("inappropriate uses", s.inappropriate_m3_min),
            ("dryer purge and drains", s.purge_and_drains_m3_min),
            ("leaks", s.leaks_m3_min),
            ("not yet explained", s.unexplained_m3_min),
        ];
        let rows: Vec<BarRow> = parts
            .iter()
            .map(|(label, q)| BarRow {
                label: (*label).to_string(),
                parts: vec![u.flow_m3_min(*q)],
                note: if total > 0.0 {
                    format!("{} ({})", fmt.flow_m3_min(*q), fmt.percent(q / total))
                } else {
                    fmt.flow_m3_min(*q)
                },
            })
            .collect();
        let lo = rows.iter().map(|r| r.parts[0]).fold(0.0, f64::min);
        let hi = rows.iter().map(|r| r.parts[0]).fold(0.0, f64::max);
        let chart = BarChart {
            id: "plot-demand-split".into(),
            title: "The mean demand split by what uses it".into(),
            x: Axis::numeric(format!("Mean flow, {f_unit}"), lo, hi, 5),
            parts: vec!["mean flow".into()],
            rows,
        };
        out.demand.push(Plot {
            id: "plot-demand-split",
            heading: "Demand split".into(),
            svg: bar_chart_svg(&chart),
            note: "The logged mean flow split by the end uses, treatment and leaks on record; the parts sum to it.".into(),
        });
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::time_axis;

    #[test]
    fn time_ticks_fall_on_the_sites_midnights_across_a_clock_change() {
        // Europe/Berlin moves from CET (UTC+1) to CEST (UTC+2) at 01:00 UTC on Sun 29 Mar 2026
        // (EU summer time: the last Sunday of March). Four days from 2026-03-28T00:00Z: a tick a
        // day, at local midnight: 28 Mar 23:00Z (CET), then 22:00Z on 29, 30 and 31 Mar (CEST).
        let h = 3_600_000i64;
        let from = 1_774_656_000_000i64; // 2026-03-28T00:00:00Z
        let a = time_axis(from, from + 96 * h, "Europe/Berlin");
        let got: Vec<(i64, &str)> = a.ticks.iter().map(|t| (t.at as i64, t.label.as_str())).collect();
        assert_eq!(
            got,
            vec![
                (from + 23 * h, "Sun 29 Mar"),
                (from + 46 * h, "Mon 30 Mar"),
                (from + 70 * h, "Tue 31 Mar"),
                (from + 94 * h, "Wed 1 Apr"),
            ]
        );
        assert_eq!(a.title, "Site time (Europe/Berlin)");
        // Twelve hours in UTC: a tick every two hours on the hour (12 / 2 = 6 intervals).
        let a = time_axis(from, from + 12 * h, "UTC");
        let labels: Vec<&str> = a.ticks.iter().map(|t| t.label.as_str()).collect();
        assert_eq!(labels, ["Sat 28 Mar", "02:00", "04:00", "06:00", "08:00", "10:00", "12:00"]);
        // Ninety minutes from 00:10: 90 / 15 = 6 intervals, ticks on the quarter hours.
        let a = time_axis(from + 600_000, from + 600_000 + 90 * 60_000, "UTC");
        let labels: Vec<&str> = a.ticks.iter().map(|t| t.label.as_str()).collect();
        assert_eq!(labels, ["00:15", "00:30", "00:45", "01:00", "01:15", "01:30"]);
    }

    #[test]
    fn a_span_of_years_is_ticked_to_its_end_with_the_year_in_every_label() {
        // An invented span, 2006-12-12T21:10Z (15:10 CST) to 2013-09-03T16:40Z: 2,456 days, about
        // 3.5 million minutes, so the step is 365 days (3.5e6 / 525,600 = 6.7 intervals). Ticks at
        // local midnights 365 days apart from the first one after the start, 13 Dec 2006; the leap
        // days of 2008 and 2012 move them a day earlier each: 13 Dec 2007, 12 Dec 2008, 12 Dec 2009,
        // 12 Dec 2010, 12 Dec 2011, 11 Dec 2012 (the next, 11 Dec 2013, is after the end). Worked
        // with Python's zoneinfo (IANA tz database).
        let from = 1_165_957_800_000i64; // 2006-12-12T21:10:00Z
        let to = 1_378_226_400_000i64; // 2013-09-03T16:40:00Z
        let a = time_axis(from, to, "America/Chicago");
        let labels: Vec<&str> = a.ticks.iter().map(|t| t.label.as_str()).collect();
        assert_eq!(
            labels,
            [
                "13 Dec 2006",
                "13 Dec 2007",
                "12 Dec 2008",
                "12 Dec 2009",
                "12 Dec 2010",
                "12 Dec 2011",
                "11 Dec 2012"
            ]
        );
        // The first tick is local midnight, CST (UTC-6): 2006-12-13T06:00Z.
        assert_eq!(a.ticks[0].at as i64, 1_165_989_600_000);
        // Within one year the labels carry none.
        let a = time_axis(from + 20 * 86_400_000, from + 60 * 86_400_000, "America/Chicago");
        assert!(!a.ticks.is_empty() && a.ticks.iter().all(|t| !t.label.contains("2007")), "{:?}", a.ticks);
    }
}
