/*!
Charts for paper: typed, downsampled figures turned into inline SVG that prints as it shows (no
script, no canvas). The caller gives each axis its range, ticks and title already in the reader's
units and times; this module only maps values to the plot box, writes the path data and escapes
every text it places. Pure: no IO, no formatting of figures.

A plot box is the chart's drawing area inside a `WIDTH` × `HEIGHT` view box: x grows to the right
from `left`, y grows downwards from `top`, so a value `v` on an axis from `min` to `max` is drawn at
`left + (v - min) / (max - min) × width` and at `top + (max - v) / (max - min) × height`.
*/

use std::fmt::Write;

/// The view box of every chart, in SVG user units (the page scales it to the line's width).
pub const WIDTH: f64 = 640.0;
pub const HEIGHT: f64 = 250.0;

/// The colours of the series, in order; dark enough for a grey-scale printer.
const PALETTE: [&str; 7] = ["#0f4c5c", "#d08a1e", "#5b8e7d", "#b3261e", "#7a5195", "#2f6690", "#8a6d3b"];

/// The drawing area inside the view box.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PlotBox {
    pub left: f64,
    pub top: f64,
    pub width: f64,
    pub height: f64,
}

impl PlotBox {
    /// The box of a line chart: room for the title and legend above, tick labels left and below.
    pub const LINES: PlotBox = PlotBox { left: 52.0, top: 40.0, width: 576.0, height: 168.0 };

    /// Where `v` lies on axis `a`, across.
    pub fn x(&self, a: &Axis, v: f64) -> f64 {
        self.left + a.share(v) * self.width
    }
    /// Where `v` lies on axis `a`, down from the top.
    pub fn y(&self, a: &Axis, v: f64) -> f64 {
        self.top + (1.0 - a.share(v)) * self.height
    }
}

/// One tick: where it stands and what it says.
#[derive(Debug, Clone, PartialEq)]
pub struct Tick {
    pub at: f64,
    pub label: String,
}

/// An axis: its title (quantity and unit), its range and ticks, in the reader's units.
#[derive(Debug, Clone, PartialEq)]
pub struct Axis {
    pub title: String,
    pub min: f64,
    pub max: f64,
    pub ticks: Vec<Tick>,
}

impl Axis {
    /// A numeric axis over `lo..hi` widened to round ticks (about `target` of them), labelled with
    /// as many decimals as the tick step needs.
    pub fn numeric(title: impl Into<String>, lo: f64, hi: f64, target: usize) -> Axis {
        let (min, max, step) = nice_range(lo, hi, target);
        // The fewest decimals that write the step exactly (0.25 needs two, 0.5 one), at most six.
        let decimals = (0..=6usize)
            .find(|&d| {
                let scaled = step * 10f64.powi(d as i32);
                (scaled - scaled.round()).abs() < 1e-6 * scaled.max(1.0)
            })
            .unwrap_or(6);
        let mut ticks = vec![];
        let n = ((max - min) / step).round() as i64;
        for k in 0..=n {
            let at = min + k as f64 * step;
            ticks.push(Tick {
                at,
                label: format!("{:.*}", decimals, if at.abs() < step * 1e-9 { 0.0 } else { at }),
            });
        }
        Axis { title: title.into(), min, max, ticks }
    }

    /// The share of the axis' span at which `v` lies (0 at `min`, 1 at `max`).
    pub fn share(&self, v: f64) -> f64 {
        let span = self.max - self.min;
        if span > 0.0 {
            (v - self.min) / span
        } else {
            0.5
        }
    }
}

/// A range from `lo` to `hi` widened to multiples of a round step (1, 2, 2.5 or 5 × 10ⁿ) giving
/// about `target` intervals: (min, max, step). An empty or flat range gets a unit's width.
pub fn nice_range(lo: f64, hi: f64, target: usize) -> (f64, f64, f64) {
    let (lo, hi) = if lo.is_finite() && hi.is_finite() { (lo.min(hi), lo.max(hi)) } else { (0.0, 1.0) };
    let (lo, hi) = if hi - lo <= f64::EPSILON * hi.abs().max(1.0) {
        let pad = (hi.abs() * 0.05).max(0.5);
        (lo - pad, hi + pad)
    } else {
        (lo, hi)
    };
    let raw = (hi - lo) / target.max(1) as f64;
    let mag = 10f64.powf(raw.log10().floor());
    let step =
        [1.0, 2.0, 2.5, 5.0, 10.0].iter().map(|m| m * mag).find(|s| *s >= raw * 0.999).unwrap_or(10.0 * mag);
    ((lo / step).floor() * step, (hi / step).ceil() * step, step)
}

/// A series drawn on a line chart.
#[derive(Debug, Clone, PartialEq)]
pub enum Mark {
    /// A line through (x, y); a non-finite y breaks it (a gap in the log).
    Line { name: String, points: Vec<(f64, f64)> },
    /// A shaded band from low to high at each x (least and greatest in each bucket); a
    /// non-finite bound breaks it.
    Band { name: String, points: Vec<(f64, f64, f64)> },
    /// A level across the whole chart, dashed (a limit or a set point).
    Level { name: String, y: f64 },
}

/// A line chart: axes, series, and what it shows (its accessible name).
#[derive(Debug, Clone, PartialEq)]
pub struct LineChart {
    pub id: String,
    pub title: String,
    pub x: Axis,
    pub y: Axis,
    pub marks: Vec<Mark>,
}

/// The path data of a line through `points` on the axes: "M x y" to start and after every gap,
/// "L x y" between, coordinates to 0.1 of a unit.
pub fn line_path(points: &[(f64, f64)], x: &Axis, y: &Axis, b: &PlotBox) -> String {
    let mut d = String::new();
    let mut pen_down = false;
    for &(px, py) in points {
        if !(px.is_finite() && py.is_finite()) {
            pen_down = false;
            continue;
        }
        let cmd = if pen_down { 'L' } else { 'M' };
        let _ = write!(d, "{cmd}{:.1} {:.1}", b.x(x, px), b.y(y, py));
        pen_down = true;
    }
    d
}

/// The path data of a band: for each unbroken run, along the high bounds and back along the low
/// ones, closed.
pub fn band_path(points: &[(f64, f64, f64)], x: &Axis, y: &Axis, b: &PlotBox) -> String {
    let mut d = String::new();
    let mut run: Vec<(f64, f64, f64)> = vec![];
    let flush = |run: &mut Vec<(f64, f64, f64)>, d: &mut String| {
        if !run.is_empty() {
            let top: Vec<(f64, f64)> = run.iter().map(|&(px, _, hi)| (px, hi)).collect();
            d.push_str(&line_path(&top, x, y, b));
            for &(px, lo, _) in run.iter().rev() {
                let _ = write!(d, "L{:.1} {:.1}", b.x(x, px), b.y(y, lo));
            }
            d.push('Z');
            run.clear();
        }
    };
    for &p in points {
        if p.0.is_finite() && p.1.is_finite() && p.2.is_finite() {
            run.push(p);
        } else {
            flush(&mut run, &mut d);
        }
    }
    flush(&mut run, &mut d);
    d
}

/// Text for XML: `&`, `<`, `>`, quotes and apostrophes as entities; control characters dropped.
pub fn esc(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c if c.is_control() => {}
            c => out.push(c),
        }
    }
    out
}

fn svg_open(out: &mut String, id: &str, title: &str, x: &Axis, y: &Axis, b: &PlotBox) {
    let _ = write!(
        out,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" class=\"plot\" id=\"{}\" viewBox=\"0 0 {WIDTH} {HEIGHT}\" role=\"img\" \
         aria-label=\"{}\" font-family=\"system-ui, sans-serif\" font-size=\"11\" \
         data-x-min=\"{}\" data-x-max=\"{}\" data-y-min=\"{}\" data-y-max=\"{}\" data-plot=\"{} {} {} {}\">",
        esc(id),
        esc(title),
        x.min,
        x.max,
        y.min,
        y.max,
        b.left,
        b.top,
        b.width,
        b.height
    );
    let _ = write!(out, "<title>{}</title>", esc(title));
}

/// The legend above the plot, items side by side (wrapping to a second row when long).
fn legend(out: &mut String, items: &[(String, &str, bool)]) {
    let (mut lx, mut ly) = (4.0, 12.0);
    for (name, colour, band) in items {
        let w = 22.0 + 6.2 * name.chars().count() as f64;
        if lx + w > WIDTH && lx > 4.0 {
            lx = 4.0;
            ly += 13.0;
        }
        if *band {
            let _ = write!(out, "<rect x=\"{lx}\" y=\"{}\" width=\"14\" height=\"8\" fill=\"{colour}\" fill-opacity=\"0.25\"/>", ly - 8.0);
        } else {
            let _ = write!(
                out,
                "<rect x=\"{lx}\" y=\"{}\" width=\"14\" height=\"3\" fill=\"{colour}\"/>",
                ly - 5.0
            );
        }
        let _ = write!(out, "<text x=\"{}\" y=\"{ly}\">{}</text>", lx + 18.0, esc(name));
        lx += w + 10.0;
    }
}

/// Where a tick's label runs across, from its left end to its right (as [`anchor`] places it).
fn label_extent(tx: f64, label: &str) -> (f64, f64) {
    let w = 6.2 * label.chars().count() as f64;
    match anchor(tx, label) {
        "end" => (tx - w, tx),
        "start" => (tx, tx + w),
        _ => (tx - w / 2.0, tx + w / 2.0),
    }
}

/// How a tick's label is anchored at `tx`: centred, unless centring would cut it at an edge of
/// the view box (6.2 units a character at 11 units of type, about).
fn anchor(tx: f64, label: &str) -> &'static str {
    let half = 3.1 * label.chars().count() as f64;
    if tx + half > WIDTH {
        "end"
    } else if tx - half < 0.0 {
        "start"
    } else {
        "middle"
    }
}

fn axes(out: &mut String, x: &Axis, y: &Axis, b: &PlotBox) {
    let (bottom, right) = (b.top + b.height, b.left + b.width);
    for t in &y.ticks {
        let ty = b.y(y, t.at);
        let _ = write!(
            out,
            "<line x1=\"{:.1}\" y1=\"{ty:.1}\" x2=\"{right:.1}\" y2=\"{ty:.1}\" stroke=\"#ddd\" stroke-width=\"0.6\"/>\
             <text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\">{}</text>",
            b.left,
            b.left - 4.0,
            ty + 3.5,
            esc(&t.label)
        );
    }
    // A label that would run into the one before it (the last one, pushed left from the edge,
    // say) is left out; its tick stays.
    let mut last_right = f64::NEG_INFINITY;
    for t in &x.ticks {
        let tx = b.x(x, t.at);
        let _ = write!(
            out,
            "<line x1=\"{tx:.1}\" y1=\"{bottom:.1}\" x2=\"{tx:.1}\" y2=\"{:.1}\" stroke=\"#888\" stroke-width=\"0.6\"/>",
            bottom + 4.0,
        );
        let (from, to) = label_extent(tx, &t.label);
        if from < last_right + 6.0 {
            continue;
        }
        last_right = to;
        let _ = write!(
            out,
            "<text x=\"{tx:.1}\" y=\"{:.1}\" text-anchor=\"{}\">{}</text>",
            bottom + 15.0,
            anchor(tx, &t.label),
            esc(&t.label)
        );
    }
    let _ = write!(
        out,
        "<path d=\"M{:.1} {:.1}V{bottom:.1}H{right:.1}\" fill=\"none\" stroke=\"#555\" stroke-width=\"0.8\"/>",
        b.left, b.top
    );
    // Titles level (a turned title prints as scattered letters in a PDF's text): the y axis'
    // above the plot, right of its tick labels (so never on the top one), the x axis' below its
    // labels.
    let _ = write!(
        out,
        "<text x=\"{:.1}\" y=\"{:.1}\" font-weight=\"600\">{}</text>",
        b.left + 4.0,
        b.top - 6.0,
        esc(&y.title)
    );
    let _ = write!(
        out,
        "<text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"middle\" font-weight=\"600\">{}</text>",
        b.left + b.width / 2.0,
        bottom + 30.0,
        esc(&x.title)
    );
}

/// The chart as an inline `<svg>` element. The element carries its axes' ranges and its plot box
/// (`data-x-min`, `data-x-max`, `data-y-min`, `data-y-max`, `data-plot`) so that a reader (or a
/// test) can turn a drawn coordinate back into a value; each series' path names it in
/// `data-series`.
pub fn line_chart_svg(c: &LineChart) -> String {
    let b = PlotBox::LINES;
    let mut out = String::new();
    svg_open(&mut out, &c.id, &c.title, &c.x, &c.y, &b);
    let mut items = vec![];
    let mut colour_of = std::collections::HashMap::new();
    for m in &c.marks {
        let (name, band) = match m {
            Mark::Line { name, .. } | Mark::Level { name, .. } => (name, false),
            Mark::Band { name, .. } => (name, true),
        };
        let n = colour_of.len();
        // A band and the line of the same series (its name up to " (") share a colour.
        let key = name.split(" (").next().unwrap_or(name).to_string();
        let colour = *colour_of.entry(key).or_insert(PALETTE[n % PALETTE.len()]);
        items.push((name.clone(), colour, band));
    }
    legend(&mut out, &items);
    axes(&mut out, &c.x, &c.y, &b);
    // Nothing is drawn outside the plot box: a reading beyond the axis' range runs off its edge.
    let _ = write!(
        out,
        "<clipPath id=\"{}-clip\"><rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\"/></clipPath><g clip-path=\"url(#{}-clip)\">",
        esc(&c.id),
        b.left,
        b.top,
        b.width,
        b.height,
        esc(&c.id)
    );
    // Bands first, lines over them.
    for band_pass in [true, false] {
        for (m, (name, colour, _)) in c.marks.iter().zip(&items) {
            match m {
                Mark::Band { points, .. } if band_pass => {
                    let _ = write!(
                        out,
                        "<path class=\"band\" data-series=\"{}\" d=\"{}\" fill=\"{colour}\" fill-opacity=\"0.25\" stroke=\"none\"/>",
                        esc(name),
                        band_path(points, &c.x, &c.y, &b)
                    );
                }
                Mark::Line { points, .. } if !band_pass => {
                    let _ = write!(
                        out,
                        "<path class=\"line\" data-series=\"{}\" d=\"{}\" fill=\"none\" stroke=\"{colour}\" stroke-width=\"1.4\" stroke-linejoin=\"round\"/>",
                        esc(name),
                        line_path(points, &c.x, &c.y, &b)
                    );
                }
                Mark::Level { y, .. } if !band_pass => {
                    let py = b.y(&c.y, *y);
                    let _ = write!(
                        out,
                        "<path class=\"level\" data-series=\"{}\" d=\"M{:.1} {py:.1}H{:.1}\" stroke=\"{colour}\" stroke-width=\"1.2\" stroke-dasharray=\"6 4\"/>",
                        esc(name),
                        b.left,
                        b.left + b.width
                    );
                }
                _ => {}
            }
        }
    }
    out.push_str("</g></svg>");
    out
}

/// One bar of a bar chart: its label and its parts, stacked from zero in order (a negative part
/// is drawn left of zero), each with the text written after the bar.
#[derive(Debug, Clone, PartialEq)]
pub struct BarRow {
    pub label: String,
    pub parts: Vec<f64>,
    pub note: String,
}

/// Horizontal bars, one row each: stacked parts named in the legend (`parts`).
#[derive(Debug, Clone, PartialEq)]
pub struct BarChart {
    pub id: String,
    pub title: String,
    /// The value axis (shares or flows), its title with the unit.
    pub x: Axis,
    /// What each part of a bar is, in order.
    pub parts: Vec<String>,
    pub rows: Vec<BarRow>,
}

/// The bar chart's plot box for `rows` bars: 22 units a bar, labels at the left, room above for
/// a legend when there is one.
pub fn bar_box(rows: usize, legend: bool) -> PlotBox {
    PlotBox {
        left: 150.0,
        top: if legend { 40.0 } else { 12.0 },
        width: 330.0,
        height: 22.0 * rows.max(1) as f64,
    }
}

/// The bars as an inline `<svg>` element, as tall as its rows need (same data attributes as
/// [`line_chart_svg`]; each part's rectangle names its row and part).
pub fn bar_chart_svg(c: &BarChart) -> String {
    let b = bar_box(c.rows.len(), c.parts.len() > 1);
    let height = b.top + b.height + 40.0;
    let y = Axis { title: String::new(), min: 0.0, max: c.rows.len() as f64, ticks: vec![] };
    let mut out = String::new();
    svg_open(&mut out, &c.id, &c.title, &c.x, &y, &b);
    // The view box of bars is as tall as their rows.
    out = out.replacen(
        &format!("viewBox=\"0 0 {WIDTH} {HEIGHT}\""),
        &format!("viewBox=\"0 0 {WIDTH} {height}\""),
        1,
    );
    let items: Vec<(String, &str, bool)> =
        c.parts.iter().enumerate().map(|(i, p)| (p.clone(), PALETTE[i % PALETTE.len()], false)).collect();
    if items.len() > 1 {
        legend(&mut out, &items);
    }
    let bottom = b.top + b.height;
    for t in &c.x.ticks {
        let tx = b.x(&c.x, t.at);
        let _ = write!(
            out,
            "<line x1=\"{tx:.1}\" y1=\"{:.1}\" x2=\"{tx:.1}\" y2=\"{:.1}\" stroke=\"#ddd\" stroke-width=\"0.6\"/>\
             <text x=\"{tx:.1}\" y=\"{:.1}\" text-anchor=\"middle\">{}</text>",
            b.top,
            bottom + 4.0,
            bottom + 15.0,
            esc(&t.label)
        );
    }
    let _ = write!(
        out,
        "<text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"middle\" font-weight=\"600\">{}</text>",
        b.left + b.width / 2.0,
        bottom + 30.0,
        esc(&c.x.title)
    );
    for (i, r) in c.rows.iter().enumerate() {
        let top = b.top + 22.0 * i as f64 + 4.0;
        let _ = write!(
            out,
            "<text x=\"{:.1}\" y=\"{:.1}\" text-anchor=\"end\">{}</text>",
            b.left - 6.0,
            top + 11.0,
            esc(&r.label)
        );
        let (mut pos, mut neg) = (0.0, 0.0);
        for (k, &v) in r.parts.iter().enumerate() {
            if !v.is_finite() || v == 0.0 {
                continue;
            }
            let (from, to) = if v > 0.0 {
                pos += v;
                (pos - v, pos)
            } else {
                neg += v;
                (neg, neg - v)
            };
            let (x0, x1) = (b.x(&c.x, from), b.x(&c.x, to));
            let _ = write!(
                out,
                "<rect class=\"bar\" data-row=\"{}\" data-part=\"{}\" x=\"{x0:.1}\" y=\"{top:.1}\" width=\"{:.1}\" height=\"14\" fill=\"{}\"/>",
                esc(&r.label),
                esc(c.parts.get(k).map_or("", |s| s.as_str())),
                (x1 - x0).max(0.0),
                PALETTE[k % PALETTE.len()]
            );
        }
        let end = b.x(&c.x, pos.max(0.0)).max(b.x(&c.x, 0.0));
        let _ = write!(out, "<text x=\"{:.1}\" y=\"{:.1}\">{}</text>", end + 5.0, top + 11.0, esc(&r.note));
    }
    let zero = b.x(&c.x, 0.0);
    let _ =
        write!(out, "<path d=\"M{zero:.1} {:.1}V{bottom:.1}\" stroke=\"#555\" stroke-width=\"0.8\"/>", b.top);
    out.push_str("</svg>");
    out
}

/// A duration curve of equally weighted values: the values from highest to lowest against the
/// share of them at or above each, at `points` evenly spaced shares from 0 to 1 (the nearest rank).
pub fn duration_curve(values: &[f64], points: usize) -> Vec<(f64, f64)> {
    let mut v: Vec<f64> = values.iter().copied().filter(|x| x.is_finite()).collect();
    if v.is_empty() || points < 2 {
        return vec![];
    }
    v.sort_unstable_by(|a, b| b.total_cmp(a));
    (0..points)
        .map(|k| {
            let share = k as f64 / (points - 1) as f64;
            let idx = ((share * (v.len() - 1) as f64).round() as usize).min(v.len() - 1);
            (share, v[idx])
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn axis(min: f64, max: f64) -> Axis {
        Axis { title: "t".into(), min, max, ticks: vec![] }
    }

    #[test]
    fn a_known_series_maps_to_known_coordinates() {
        // Box: left 52, top 40, 576 wide, 168 high. x from 0 to 10, y from 6 to 8.
        // (0, 6): x = 52 + 0 = 52.0, y = 40 + (1 - 0) × 168 = 208.0
        // (5, 7.5): x = 52 + 0.5 × 576 = 340.0, y = 40 + (1 - 0.75) × 168 = 82.0
        // (10, 8): x = 52 + 576 = 628.0, y = 40 + 0 = 40.0
        let (x, y) = (axis(0.0, 10.0), axis(6.0, 8.0));
        let d = line_path(&[(0.0, 6.0), (5.0, 7.5), (10.0, 8.0)], &x, &y, &PlotBox::LINES);
        assert_eq!(d, "M52.0 208.0L340.0 82.0L628.0 40.0");
        // A gap (NaN) lifts the pen: (2.5, 6.5) at x = 52 + 0.25 × 576 = 196.0, y = 40 + 0.75 × 168 = 166.0.
        let d = line_path(&[(0.0, 6.0), (1.0, f64::NAN), (2.5, 6.5)], &x, &y, &PlotBox::LINES);
        assert_eq!(d, "M52.0 208.0M196.0 166.0");
        // A band: along the highs, back along the lows, closed. (0; 6.5..7) and (10; 7..8):
        // highs y = 40 + (1 - 0.5) × 168 = 124.0 and 40.0; lows 208 - 0.25 × 168 = 166.0 and 124.0.
        let d = band_path(&[(0.0, 6.5, 7.0), (10.0, 7.0, 8.0)], &x, &y, &PlotBox::LINES);
        assert_eq!(d, "M52.0 124.0L628.0 40.0L628.0 124.0L52.0 166.0Z");
    }

    #[test]
    fn round_ticks_cover_the_range() {
        // 6.12..7.93 bar in about 5 steps: raw step 0.362 -> 0.5; 6.0 to 8.0.
        let a = Axis::numeric("p", 6.12, 7.93, 5);
        assert_eq!((a.min, a.max), (6.0, 8.0));
        let labels: Vec<&str> = a.ticks.iter().map(|t| t.label.as_str()).collect();
        assert_eq!(labels, ["6.0", "6.5", "7.0", "7.5", "8.0"]);
        // 0..37 kW in about 4 steps: raw 9.25 -> 10.
        assert_eq!(nice_range(0.0, 37.0, 4), (0.0, 40.0, 10.0));
        // A flat series gets a width.
        let (lo, hi, _) = nice_range(7.0, 7.0, 4);
        assert!(lo < 7.0 && hi > 7.0);
    }

    #[test]
    fn text_is_escaped_and_the_svg_carries_its_axes() {
        let c = LineChart {
            id: "p".into(),
            title: "<script>\"x\" & 'y'".into(),
            x: axis(0.0, 10.0),
            y: Axis::numeric("Pressure, bar(g)", 6.0, 8.0, 4),
            marks: vec![
                Mark::Line { name: "a <b>".into(), points: vec![(0.0, 6.0), (10.0, 8.0)] },
                Mark::Level { name: "low limit".into(), y: 7.0 },
            ],
        };
        let svg = line_chart_svg(&c);
        // The level at 7.0 of 6..8: y = 40 + (1 - 0.5) × 168 = 124.0, across the box (52 to 628).
        assert!(svg.contains("d=\"M52.0 124.0H628.0\""), "{svg}");
        // Everything drawn is clipped to the box.
        assert!(
            svg.contains("<clipPath id=\"p-clip\"><rect x=\"52\" y=\"40\" width=\"576\" height=\"168\"/>"),
            "{svg}"
        );
        assert!(!svg.contains("<script>") && !svg.contains("<b>"), "{svg}");
        assert!(svg.contains("&lt;script&gt;&quot;x&quot; &amp; &#39;y&#39;"), "{svg}");
        assert!(svg.contains("data-y-min=\"6\" data-y-max=\"8\""), "{svg}");
        assert!(svg.contains("d=\"M52.0 208.0L628.0 40.0\""), "{svg}");
        assert!(svg.contains(">Pressure, bar(g)</text>"), "{svg}");
    }

    #[test]
    fn tick_labels_never_run_into_each_other_nor_the_axis_title() {
        // Ticks 30 units apart (576 / 19.2) with 10-character labels (62 units at 6.2 a
        // character, 6 between): a label fits at every third tick (0, 3, ..., 18: x = 52 + 90 k),
        // and the last tick (19, x = 622, its label pushed left from the edge to 560..622) loses
        // its label to the one at 18 (561..623). Every tick keeps its line.
        let ticks: Vec<Tick> =
            (0..=19).map(|i| Tick { at: i as f64, label: format!("Mon {i:02} Mar") }).collect();
        let x = Axis { title: "time".into(), min: 0.0, max: 19.2, ticks };
        let c = LineChart {
            id: "t".into(),
            title: "t".into(),
            x,
            y: Axis::numeric("Power, kW", 0.0, 100.0, 4),
            marks: vec![],
        };
        let svg = line_chart_svg(&c);
        let labels: Vec<f64> = svg
            .split("<text x=\"")
            .skip(1)
            .filter(|t| t.contains(" Mar<"))
            .map(|t| t.split('"').next().unwrap().parse().unwrap())
            .collect();
        assert_eq!(labels, [52.0, 142.0, 232.0, 322.0, 412.0, 502.0, 592.0]);
        assert_eq!(svg.matches("stroke=\"#888\"").count(), 20, "a tick line per tick inside the box");
        // The y title starts right of the tick labels' end (52 - 4): x = 56.
        assert!(svg.contains("<text x=\"56.0\" y=\"34.0\" font-weight=\"600\">Power, kW</text>"), "{svg}");
    }

    #[test]
    fn bars_stack_from_zero() {
        // x from 0 to 100 over 330 units from 150: parts 60 and 40 end at 150 + 198 = 348 and 480.
        let c = BarChart {
            id: "b".into(),
            title: "load".into(),
            x: axis(0.0, 100.0),
            parts: vec!["loaded".into(), "off".into()],
            rows: vec![BarRow { label: "C1".into(), parts: vec![60.0, 40.0], note: String::new() }],
        };
        let svg = bar_chart_svg(&c);
        assert!(svg.contains("data-part=\"loaded\" x=\"150.0\" y=\"44.0\" width=\"198.0\""), "{svg}");
        assert!(svg.contains("data-part=\"off\" x=\"348.0\" y=\"44.0\" width=\"132.0\""), "{svg}");
        // One part, no legend: the bar starts 12 + 4 from the top; a negative part runs left of
        // zero. x from -50 to 100: zero at 150 + 330/3 = 260, -25 at 150 + 330/6 = 205.
        let c = BarChart {
            id: "b".into(),
            title: "split".into(),
            x: axis(-50.0, 100.0),
            parts: vec!["flow".into()],
            rows: vec![BarRow { label: "rest".into(), parts: vec![-25.0], note: String::new() }],
        };
        let svg = bar_chart_svg(&c);
        assert!(svg.contains("x=\"205.0\" y=\"16.0\" width=\"55.0\""), "{svg}");
    }

    #[test]
    fn a_duration_curve_runs_from_the_highest_to_the_lowest() {
        let c = duration_curve(&[3.0, 1.0, f64::NAN, 2.0, 4.0, 5.0], 5);
        assert_eq!(c, vec![(0.0, 5.0), (0.25, 4.0), (0.5, 3.0), (0.75, 2.0), (1.0, 1.0)]);
    }
}

#[cfg(test)]
mod tick_tests {
    use super::Axis;

    #[test]
    fn every_tick_label_reads_back_as_its_tick() {
        // Ticks 0.25 apart written with one decimal would read 6.2, 6.5, 6.8, 7.0: uneven steps.
        // Over ranges whose round steps are 0.25, 0.5, 2.5 and 0.025, every label is its tick.
        let mut quarter = false;
        for (lo, hi) in [(6.2, 7.8), (6.0, 7.1), (0.0, 13.0), (6.21, 6.34), (5.9, 8.1), (0.0, 1.9)] {
            let a = Axis::numeric("p", lo, hi, 7);
            quarter |= a.ticks.len() > 1
                && ((a.ticks[1].at - a.ticks[0].at) * 4.0).fract().abs() < 1e-9
                && (a.ticks[1].at - a.ticks[0].at).fract() != 0.0
                && ((a.ticks[1].at - a.ticks[0].at) * 2.0).fract().abs() > 1e-9;
            for t in &a.ticks {
                assert!(
                    (t.label.parse::<f64>().unwrap() - t.at).abs() < 1e-9,
                    "{} at {} ({lo}..{hi})",
                    t.label,
                    t.at
                );
            }
        }
        assert!(quarter, "no range above gave a quarter step");
    }
}
