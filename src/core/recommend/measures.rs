/*!
The measures one by one, each priced on a [`Plant`]: the plant as logged (a measure alone), or the
plant left by the measures stacked before it (`stack`). Each returns its draft and the plant it
leaves behind; `finish` costs a draft and gives its payback.
*/

use crate::core::display::Grouped;
use crate::core::model::Control;
use crate::core::safety;
use crate::core::thermo;
use crate::core::units::{PressureAbs, SiteAir};

use super::text::{bar_g, flow, pressure_drop, specific, Part};
use super::{
    CostContext, MeasureKind, PressureRule, RecommendInput, BAR_PER_2_PSI, PART_LOAD_SLOPE_REL,
    REPLACE_ABOVE_DATASHEET,
};

mod machines;
mod treatment;

pub(super) use machines::{recover_heat, replace_candidates, replace_compressor};
pub(super) use treatment::{
    cycling_refrigerated_dryer, dew_point_control, filter_change, replace_inappropriate_uses,
    zero_loss_drains,
};

/// Writes a measure's parts as words (in SI for the JSON's strings).
pub type Words<'a> = dyn Fn(&[Part]) -> String + 'a;

/// The plant a measure is priced on (annual figures).
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Plant {
    /// Per compressor: energy left, kWh/yr.
    pub energy_kwh: Vec<f64>,
    /// Per compressor: energy while delivering air (loaded or part load), kWh/yr.
    pub delivering_kwh: Vec<f64>,
    /// The trim machine's energy above idle left (the whole plant's without a trim), kWh/yr: the
    /// most a demand cut can still save.
    pub trim_above_idle_kwh: f64,
    /// Leak flow at the present pressure, m³/min.
    pub leak_m3_min: f64,
    /// Other unregulated demand at the present pressure, m³/min.
    pub unregulated_m3_min: f64,
    /// Mean and 5th-percentile header pressure, bar(g).
    pub pressure_bar_g: Option<f64>,
    pub p5_bar_g: Option<f64>,
    /// Loaded power per unit of air against the logged plant (below 1 once pressure is lowered).
    pub power_factor: f64,
    /// Hours a year in which a demand cut is priced (the running hours, less the non-production
    /// hours of a trim that is switched off then).
    pub demand_hours: f64,
    /// Of those, the trim's hours out of production (0 once it is switched off then), and its
    /// energy above idle left in them, kWh/yr.
    pub night_hours: f64,
    pub trim_above_idle_np_kwh: f64,
    /// The trim's unloaded energy out of production already switched off, kWh/yr.
    pub trim_idle_removed_kwh: f64,
    pub idle_off: bool,
    /// The trim was replaced by a variable-speed machine (rule-based control measure).
    pub trim_replaced: bool,
    pub scenario_applied: bool,
}

impl Plant {
    /// The plant as logged.
    pub fn of(r: &RecommendInput) -> Self {
        let energy_kwh: Vec<f64> = r.machines.iter().map(|m| m.annual_energy_kwh).collect();
        let trim_above_idle_kwh = r
            .trim
            .and_then(|t| r.machines.get(t))
            .map_or(r.annual_energy_kwh, |m| m.annual_above_idle_kwh)
            .min(r.annual_energy_kwh)
            .max(0.0);
        Self {
            delivering_kwh: r.machines.iter().map(|m| m.annual_delivering_kwh).collect(),
            energy_kwh,
            trim_above_idle_kwh,
            leak_m3_min: r.leak_flow_m3_min.unwrap_or(0.0).max(0.0),
            unregulated_m3_min: r.costs.options.unregulated_flow_m3_min.unwrap_or(0.0).max(0.0),
            pressure_bar_g: r.mean_pressure_bar_g,
            p5_bar_g: r.p5_pressure_bar_g,
            power_factor: 1.0,
            demand_hours: r.annual_running_hours,
            night_hours: r
                .trim
                .and_then(|t| r.machines.get(t))
                .map_or(0.0, |m| m.annual_running_non_production_hours.min(r.annual_running_hours)),
            trim_above_idle_np_kwh: r
                .trim
                .and_then(|t| r.machines.get(t))
                .map_or(0.0, |m| m.annual_above_idle_non_production_kwh.min(trim_above_idle_kwh)),
            trim_idle_removed_kwh: 0.0,
            idle_off: false,
            trim_replaced: false,
            scenario_applied: false,
        }
    }

    pub fn total_energy_kwh(&self) -> f64 {
        self.energy_kwh.iter().sum()
    }

    /// A demand cut of `dq` m³/min at the trim's marginal power: (in production, out of
    /// production) kWh/yr, each held at the trim's energy above idle left in those hours.
    fn demand_cut(&self, r: &RecommendInput, dq: f64) -> (f64, f64) {
        let per = dq * r.marginal_kw_per_m3_min * self.power_factor;
        let h_n = self.night_hours.min(self.demand_hours);
        let h_p = self.demand_hours - h_n;
        let a_n = self.trim_above_idle_np_kwh.min(self.trim_above_idle_kwh);
        let a_p = (self.trim_above_idle_kwh - a_n).max(0.0);
        ((per * h_p).min(a_p).max(0.0), (per * h_n).min(a_n).max(0.0))
    }

    /// Take a demand cut's (in production, out of production) saving off the trim.
    fn take_demand(&mut self, trim: Option<usize>, (p, n): (f64, f64)) {
        self.take_from_trim(trim, p + n);
        self.trim_above_idle_np_kwh = (self.trim_above_idle_np_kwh - n).max(0.0);
    }

    /// Take a saving off the trim machine (off every machine by its delivering energy without one).
    fn take_from_trim(&mut self, trim: Option<usize>, kwh: f64) {
        match trim.filter(|&t| t < self.energy_kwh.len()) {
            Some(t) => {
                self.energy_kwh[t] = (self.energy_kwh[t] - kwh).max(0.0);
                self.delivering_kwh[t] = (self.delivering_kwh[t] - kwh).max(0.0);
            }
            None => {
                let total: f64 = self.delivering_kwh.iter().sum();
                if total > 0.0 {
                    for i in 0..self.energy_kwh.len() {
                        let part = kwh * self.delivering_kwh[i] / total;
                        self.energy_kwh[i] = (self.energy_kwh[i] - part).max(0.0);
                        self.delivering_kwh[i] = (self.delivering_kwh[i] - part).max(0.0);
                    }
                }
            }
        }
        self.trim_above_idle_kwh = (self.trim_above_idle_kwh - kwh).max(0.0);
    }
}

/// A measure before its cost and payback are worked out.
pub(super) struct Draft {
    pub kind: MeasureKind,
    pub title: Vec<Part>,
    pub description: Vec<Part>,
    pub saving_kwh: f64,
    /// The saving's range, kWh/yr.
    pub low_kwh: f64,
    pub high_kwh: f64,
    /// The annual energy the measure acts on, kWh: the saving never exceeds it (module doc of
    /// `recommend`).
    pub acts_on_kwh: f64,
    /// The money saved when it is not electricity at the site's price (recovered heat).
    pub money: Option<f64>,
    pub cost_ctx: CostContext,
    pub basis: Vec<Vec<Part>>,
    pub formula: &'static str,
    pub source: &'static str,
    pub method: &'static str,
    pub caution: Option<String>,
    pub scenario_id: Option<i64>,
}

/// `x` with relative deviations `lo`, `hi` as a (low, high) pair.
fn band(x: f64, lo: f64, hi: f64) -> (f64, f64) {
    (x * (1.0 - lo).max(0.0), x * (1.0 + hi))
}

fn quad(parts: &[f64]) -> f64 {
    parts.iter().map(|p| p * p).sum::<f64>().sqrt()
}

/// The leak flow's relative range (adopted estimate's low and high).
fn leak_rel(r: &RecommendInput) -> (f64, f64) {
    match r.leak_flow_m3_min.filter(|q| *q > 0.0) {
        Some(q) => (
            r.leak_flow_m3_min_low.map_or(0.0, |l| ((q - l) / q).max(0.0)),
            r.leak_flow_m3_min_high.map_or(0.0, |h| ((h - q) / q).max(0.0)),
        ),
        None => (0.0, 0.0),
    }
}

/// A demand cut's relative range: leak flow, part-load slope, annual hours.
fn demand_rel(r: &RecommendInput, with_leak: bool) -> (f64, f64) {
    let (l_lo, l_hi) = if with_leak { leak_rel(r) } else { (0.0, 0.0) };
    (
        quad(&[l_lo, PART_LOAD_SLOPE_REL, r.annual_energy_rel_low]),
        quad(&[l_hi, PART_LOAD_SLOPE_REL, r.annual_energy_rel_high]),
    )
}

pub(super) fn repair_leaks(r: &RecommendInput, p: &Plant) -> Option<(Draft, Plant)> {
    let opts = &r.costs.options;
    let leak = p.leak_m3_min;
    if leak <= 0.0 {
        return None;
    }
    let trim_tag = r.trim.map(|t| r.compressors[t].tag.clone()).unwrap_or_default();
    let frac = opts.leak_repair_fraction.clamp(0.0, 1.0);
    let dq = frac * leak;
    let per = r.marginal_kw_per_m3_min * p.power_factor;
    let cut = p.demand_cut(r, dq);
    let kwh = cut.0 + cut.1;
    // The repaired air at the marginal rate over every hour priced: what the Leaks card's cost
    // says of this share of the leaks. Below it when the trim has less than that above idle.
    let uncapped = dq * per * p.demand_hours;
    let (lo, hi) = demand_rel(r, true);
    let (low_kwh, high_kwh) = band(kwh, lo, hi);
    let mut next = p.clone();
    next.leak_m3_min -= dq;
    next.take_demand(r.trim, cut);
    let draft = Draft {
        kind: MeasureKind::RepairLeaks,
        title: text!["Repair leaks: about ", flow(dq)],
        description: text![
            format!("Find and repair {:.0} % of the estimated ", frac * 100.0),
            flow(leak),
            format!(" of leaks; the trim compressor {trim_tag} then delivers less air."),
        ],
        saving_kwh: kwh,
        low_kwh,
        high_kwh: high_kwh.min(p.trim_above_idle_kwh.max(kwh)),
        acts_on_kwh: p.trim_above_idle_kwh,
        money: None,
        cost_ctx: CostContext { leak_repaired_m3_min: dq, ..Default::default() },
        basis: vec![
            text!["leak flow ", flow(leak), " at the pressure of this step"],
            text![format!("repair fraction {frac:.2}")],
            text![
                "marginal specific power ",
                specific(per),
                format!(" ({trim_tag}, × {:.3} for the pressure)", p.power_factor)
            ],
            text![format!("hours priced {:.0} h/yr", Grouped(p.demand_hours))],
        ]
        .into_iter()
        .chain((kwh < 0.99 * uncapped).then(|| {
            text![format!(
                "held at what {trim_tag} draws above idle: {:.0} kWh/yr of the {:.0} kWh/yr \
                 the repaired air takes at the marginal rate (the Leaks card's rate); below idle the \
                 trim saves no more, and what the other machines would save depends on their control",
                Grouped(kwh),
                Grouped(uncapped)
            )]
        }))
        .collect(),
        formula: "saving = f × Q_leak × marginal specific power × hours (≤ trim energy above idle)",
        source: "US DOE compressed-air sourcebook (leaks fact sheet); priced at the marginal (trim) specific power",
        method: "air not made, at the trim's part-load slope, over the hours left; range from the leak estimate, ±15 % slope and the annual hours (US DOE sourcebook, leaks)",
        caution: None,
        scenario_id: None,
    };
    Some((draft, next))
}

/// The fractional cut of loaded energy for one machine of `stages` from `p_now` to `p_target`
/// (bar(g)) at the site's air, by each rule: (1 % per 2 psi, US DOE sourcebook; the ratio of
/// isentropic work, ideal gas k = 1.4). The one pressure rule of the pressure measure, the filter
/// measure and the filters' figures.
pub fn pressure_cut_fractions(air: &SiteAir, stages: u32, p_now: f64, p_target: f64) -> (f64, f64) {
    let atm = air.atmosphere;
    let doe = 0.01 * (p_now - p_target) / BAR_PER_2_PSI;
    let w = |bar: f64| {
        thermo::staged_isentropic_work_per_kg(
            air.inlet_temperature,
            PressureAbs::from_bar_g(bar, atm).0 / atm.0,
            stages,
        )
    };
    let (w_now, w_t) = (w(p_now), w(p_target));
    let isen = if w_now > 0.0 { 1.0 - w_t / w_now } else { 0.0 };
    (doe.clamp(0.0, 1.0), isen.clamp(0.0, 1.0))
}

/// "1 dryer", "2 dryers": a count with its noun.
fn counted(n: usize, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

/// [`pressure_cut_fractions`] at the audit's site.
pub(super) fn pressure_cut(r: &RecommendInput, stages: u32, p_now: f64, p_target: f64) -> (f64, f64) {
    pressure_cut_fractions(&r.site.air, stages, p_now, p_target)
}

/// The loaded energy a discharge pressure from `p_now` to `p_target` saves on `p`, taken off `next`:
/// (by the plan's rule, by the other rule, the loaded energy it acted on), kWh/yr. `next`'s power
/// per unit of air falls by the single-stage fraction of the plan's rule.
fn scale_loaded(
    r: &RecommendInput,
    p: &Plant,
    next: &mut Plant,
    p_now: f64,
    p_target: f64,
) -> (f64, f64, f64) {
    let rule = r.costs.options.pressure_rule;
    let pick = |(doe, isen): (f64, f64)| match rule {
        PressureRule::OnePercentPerTwoPsi => (doe, isen),
        PressureRule::IsentropicWork => (isen, doe),
    };
    let (mut chosen, mut other, mut delivering) = (0.0, 0.0, 0.0);
    for (i, c) in r.compressors.iter().enumerate() {
        let d = p.delivering_kwh.get(i).copied().unwrap_or(0.0);
        let (a, b) = pick(pressure_cut(r, c.stages, p_now, p_target));
        chosen += d * a;
        other += d * b;
        delivering += d;
        if i < next.energy_kwh.len() {
            next.energy_kwh[i] = (next.energy_kwh[i] - d * a).max(0.0);
            next.delivering_kwh[i] = d * (1.0 - a);
        }
        if Some(i) == r.trim {
            next.trim_above_idle_kwh = (next.trim_above_idle_kwh - d * a).max(0.0);
            next.trim_above_idle_np_kwh *= 1.0 - a;
        }
    }
    next.power_factor *= 1.0 - pick(pressure_cut(r, 1, p_now, p_target)).0;
    (chosen, other, delivering)
}

pub(super) fn lower_pressure(r: &RecommendInput, p: &Plant) -> Option<(Draft, Plant)> {
    let opts = &r.costs.options;
    let (Some(p_now), Some(p5)) = (p.pressure_bar_g, p.p5_bar_g) else { return None };
    let critical = opts.critical_pressure().or(r.low_limit_bar_g).unwrap_or(0.0).max(0.0);
    let margin = r.pressure_uncertainty_bar.max(0.0);
    // The step keeps the 5th percentile, shifted down by it, above the critical pressure plus the
    // transmitter's uncertainty; never past an auditor's target, never below the plant's low limit
    // nor 0 bar(g).
    let mut step = p5 - (critical + margin);
    // A logged point of use keeps its own 5th percentile, shifted down by the step, above the same
    // need: the critical point of use is the one with the least room.
    let mut binding: Option<(&str, f64)> = None;
    for (label, p5_use) in &r.points_of_use {
        let room = p5_use - (critical + margin);
        if room < step {
            step = room;
            binding = Some((label.as_str(), *p5_use));
        }
    }
    if let Some(t) = opts.target_pressure_bar_g {
        step = step.min(p_now - t);
    }
    step = step.min(p_now - r.low_limit_bar_g.unwrap_or(0.0).max(0.0)).min(p_now);
    if step.is_nan() || step <= 0.0 {
        return None;
    }
    let target = p_now - step;
    let mut next = p.clone();
    let (chosen, other, delivering) = scale_loaded(r, p, &mut next, p_now, target);
    // Unregulated demand and leaks fall with the header's absolute pressure.
    let p_abs = p_now + r.site.air.atmosphere.0 / 1e5;
    let q_unreg = p.unregulated_m3_min + p.leak_m3_min;
    let dq = q_unreg * step / p_abs;
    let cut = next.demand_cut(r, dq);
    let artificial = cut.0 + cut.1;
    next.take_demand(r.trim, cut);
    next.leak_m3_min *= 1.0 - step / p_abs;
    next.unregulated_m3_min *= 1.0 - step / p_abs;
    next.pressure_bar_g = Some(target);
    next.p5_bar_g = Some(p5 - step);
    let saving = chosen + artificial;
    let (lo_rule, hi_rule) = if chosen > 0.0 {
        ((chosen - other).max(0.0) / chosen, (other - chosen).max(0.0) / chosen)
    } else {
        (0.0, 0.0)
    };
    let (lo, hi) = (quad(&[lo_rule, r.annual_energy_rel_low]), quad(&[hi_rule, r.annual_energy_rel_high]));
    let (low_kwh, high_kwh) = band(saving, lo, hi);
    let rule = match opts.pressure_rule {
        PressureRule::OnePercentPerTwoPsi => "1 % of loaded input per 2 psi",
        PressureRule::IsentropicWork => "the ratio of isentropic work",
    };
    let draft = Draft {
        kind: MeasureKind::LowerPressure,
        title: text!["Lower the header pressure from ", bar_g(p_now), " to ", bar_g(target)],
        description: match binding {
            Some((label, p5_use)) => text![
                format!("Lower the compressors' set points in steps while watching the pressure at the critical point of use ({label}); its logged 5th percentile then stays at "),
                bar_g(p5_use - step),
                ", above the critical end use's ",
                bar_g(critical),
                " plus the transmitter's uncertainty."
            ],
            None => text![
                "Lower the compressors' set points in steps while watching the pressure at the farthest point of use; the logged 5th percentile then stays at ",
                bar_g(p5 - step),
                ", above the critical end use's ",
                bar_g(critical),
                " plus the transmitter's uncertainty."
            ],
        },
        saving_kwh: saving,
        low_kwh,
        high_kwh,
        acts_on_kwh: delivering + p.trim_above_idle_kwh.min(p.total_energy_kwh()),
        money: None,
        cost_ctx: CostContext::default(),
        basis: vec![
            text!["mean header pressure ", bar_g(p_now), ", 5th percentile ", bar_g(p5)],
            match binding {
                Some((label, p5_use)) => {
                    text![format!("critical point of use {label}: 5th percentile "), bar_g(p5_use), " (logged)"]
                }
                None if r.points_of_use.is_empty() => text!["no point of use logged: the header's 5th percentile sets the step"],
                None => text!["the points of use logged keep more room than the header"],
            },
            text![
                "critical end use ",
                bar_g(critical),
                " + transmitter uncertainty ",
                pressure_drop(margin)
            ],
            text![format!("loaded (delivering) energy {:.0} kWh/yr, scaled by {rule}: {:.0} kWh/yr (the other rule {:.0})", Grouped(delivering), Grouped(chosen), Grouped(other))],
            text!["unregulated demand incl. leaks ", flow(q_unreg), ": ", flow(dq), " less at the lower pressure"],
            text!["marginal specific power ", specific(r.marginal_kw_per_m3_min * next.power_factor)],
        ],
        formula: "saving = Σ loaded energy × (1 % per 2 psi, or the isentropic-work ratio) + Q_unreg Δp / p_abs × marginal specific power × hours; Δp = p5 - (p_critical + u_p)",
        source: "US DOE compressed-air sourcebook (1 % of input per 2 psi); isentropic compression work (ideal gas, k = 1.4)",
        method: "loaded energy of the machines making the air scaled by the rule; range from the other rule and the annual hours (US DOE sourcebook; isentropic work)",
        caution: Some("check that every point of use keeps the pressure its tools need; lower in steps".into()),
        scenario_id: None,
    };
    Some((draft, next))
}

pub(super) fn shut_off_idle(r: &RecommendInput, p: &Plant) -> Option<(Draft, Plant)> {
    if p.idle_off {
        return None;
    }
    let idle: Vec<(usize, f64)> = r
        .machines
        .iter()
        .enumerate()
        .map(|(i, m)| {
            (i, m.annual_unloaded_non_production_kwh.min(p.energy_kwh.get(i).copied().unwrap_or(0.0)))
        })
        .filter(|(_, kwh)| *kwh > 0.0)
        .collect();
    if idle.is_empty() {
        return None;
    }
    let unloaded: f64 = idle.iter().map(|x| x.1).sum();
    let trim_off = r.trim.filter(|t| idle.iter().any(|(i, _)| i == t));
    // The trim off out of production: the leaks left draw nothing then (held at its energy above
    // idle in those hours).
    let (night_hours, night_leak) = match trim_off {
        Some(_) => (p.night_hours, p.demand_cut(r, p.leak_m3_min).1),
        None => (0.0, 0.0),
    };
    let mut next = p.clone();
    for (i, k) in &idle {
        next.energy_kwh[*i] = (next.energy_kwh[*i] - k).max(0.0);
    }
    if let Some(t) = trim_off {
        next.take_from_trim(Some(t), night_leak);
        // What the trim spent above idle out of production is gone with it: later demand cuts are
        // priced in production only.
        next.trim_above_idle_kwh =
            (next.trim_above_idle_kwh - (p.trim_above_idle_np_kwh - night_leak)).max(0.0);
        next.trim_above_idle_np_kwh = 0.0;
        next.night_hours = 0.0;
        next.demand_hours = (next.demand_hours - night_hours).max(0.0);
        next.trim_idle_removed_kwh = idle.iter().find(|(i, _)| *i == t).map_or(0.0, |x| x.1);
    }
    next.idle_off = true;
    let saving = unloaded + night_leak;
    let (d_lo, d_hi) = demand_rel(r, true);
    let low = unloaded * (1.0 - r.annual_energy_rel_low) + night_leak * (1.0 - d_lo).max(0.0);
    let high = unloaded * (1.0 + r.annual_energy_rel_high) + night_leak * (1.0 + d_hi);
    let tags: Vec<String> = idle.iter().map(|(i, _)| r.compressors[*i].tag.clone()).collect();
    let mut basis: Vec<Vec<Part>> = idle
        .iter()
        .map(|(i, k)| {
            text![format!("{} unloaded out of production {:.0} kWh/yr", r.compressors[*i].tag, Grouped(*k))]
        })
        .collect();
    if trim_off.is_some() {
        basis.push(text![
            format!("the trim is off out of production ({:.0} h/yr): the leaks left, ", Grouped(night_hours)),
            flow(p.leak_m3_min),
            format!(", draw nothing then: {:.0} kWh/yr", Grouped(night_leak))
        ]);
    }
    let draft = Draft {
        kind: MeasureKind::ShutOffIdle,
        title: text![format!("Switch off idling compressors out of production ({})", tags.join(", "))],
        description: text!["Outside production hours these machines run unloaded; a timer or sequencer rule stops them."],
        saving_kwh: saving,
        low_kwh: low,
        high_kwh: high,
        acts_on_kwh: p.total_energy_kwh(),
        money: None,
        cost_ctx: CostContext { compressors: idle.len() as f64, ..Default::default() },
        basis,
        formula: "saving = Σ energy spent unloaded in non-production hours + (trim off) leaks left × marginal specific power × its non-production hours",
        source: "US DOE sourcebook (unloaded power 15-35 % of full load); common practice",
        method: "logged unloaded energy out of production, annualised; range from the annual hours (US DOE sourcebook, part load)",
        caution: Some("only where nothing needs air at those hours; leaks and dryers still draw while pressurized".into()),
        scenario_id: None,
    };
    Some((draft, next))
}

pub(super) fn improve_control(r: &RecommendInput, p: &Plant, first: &Plant) -> Option<(Draft, Plant)> {
    let price = r.site.electricity_price_per_kwh;
    let has_vsd = r.compressors.iter().any(|c| c.control == Control::VariableSpeed);
    if p.trim_replaced || p.scenario_applied {
        return None;
    }
    let best = r
        .scenarios
        .iter()
        .filter(|s| s.qualifies())
        .map(|s| (s, s.annual_saving_kwh(r.annual_energy_kwh)))
        .filter(|(s, kwh)| *kwh * price > 0.0 && s.implementation_cost >= 0.0)
        .min_by(|(a, ka), (b, kb)| {
            (a.implementation_cost / (ka * price))
                .total_cmp(&(b.implementation_cost / (kb * price)))
                .then(kb.total_cmp(ka))
        });
    let e_now = p.total_energy_kwh();
    if let Some((s, _)) = best {
        let share = s.energy_saving_kwh / s.baseline_energy_kwh;
        let kwh = share * if r.machines.is_empty() { r.annual_energy_kwh } else { e_now };
        let mut next = p.clone();
        for i in 0..next.energy_kwh.len() {
            next.energy_kwh[i] *= 1.0 - share;
            next.delivering_kwh[i] *= 1.0 - share;
        }
        next.trim_above_idle_kwh *= 1.0 - share;
        next.scenario_applied = true;
        let (lo, hi) = (
            quad(&[s.validation_error.abs(), r.annual_energy_rel_low]),
            quad(&[s.validation_error.abs(), r.annual_energy_rel_high]),
        );
        let (low_kwh, high_kwh) = band(kwh, lo, hi);
        let draft = Draft {
            kind: MeasureKind::ImproveControl,
            title: text![format!("Change the compressor room as in scenario \u{201c}{}\u{201d}", s.name)],
            description: text![format!(
                "The logged demand replayed through the changed room (scenario {}) takes {:.1} % less \
                 energy than the baseline, the same replay of the room as it is.",
                s.id,
                share * 100.0
            )],
            saving_kwh: kwh,
            low_kwh,
            high_kwh,
            acts_on_kwh: r.annual_energy_kwh,
            money: None,
            cost_ctx: CostContext {
                scenario_cost: Some(s.implementation_cost),
                scenario_cost_quoted: s.cost_quoted,
                ..Default::default()
            },
            basis: vec![
                text![format!(
                    "the replay saves {:.0} kWh in the {:.0} h of log, against {:.0} kWh for the baseline \
                     replay (the same demand through the room as it is)",
                    Grouped(s.energy_saving_kwh),
                    Grouped(s.simulated_hours),
                    Grouped(s.baseline_energy_kwh)
                )],
                text![format!(
                    "{} {:.0} kWh a year",
                    if e_now < first.total_energy_kwh() * (1.0 - 1e-9) {
                        "that share of the energy the measures above leave,"
                    } else {
                        "that share of the plant's energy,"
                    },
                    Grouped(if r.machines.is_empty() { r.annual_energy_kwh } else { e_now })
                )],
                text![format!(
                    "the baseline replay comes within {:.1} % of the logged energy",
                    s.validation_error.abs() * 100.0
                )],
                text![format!(
                    "installed cost {:.0} {}, {}",
                    Grouped(s.implementation_cost),
                    r.site.currency,
                    if s.cost_quoted { "quoted for the scenario" } else { "a default estimate" }
                )],
            ],
            formula: "saving = (baseline replay − scenario replay) / baseline replay × the year's energy left",
            source: "the logged demand replayed second by second through the receiver, whose pressure rises and \
                     falls with the difference between the air supplied and the air used, each machine following \
                     its control (part-load behaviour by control: US DOE compressed-air sourcebook); checked \
                     against the logged energy",
            method: "replayed share of the energy left; range from the replay's validation error and the annual \
                     hours (receiver pressure replayed; US DOE sourcebook)",
            caution: None,
            scenario_id: Some(s.id),
        };
        return Some((draft, next));
    }
    let (Some(c), Some(t)) = (&r.control, r.trim) else { return None };
    let base = c.logged_annual_kwh - c.modelled_annual_kwh;
    // The trim's energy above idle left, against the logged: demand cuts and a lower pressure
    // shrink what a variable-speed trim can save; its unloaded energy out of production, once
    // switched off, is not saved twice.
    let ratio =
        if first.trim_above_idle_kwh > 0.0 { p.trim_above_idle_kwh / first.trim_above_idle_kwh } else { 1.0 };
    let kwh = (base * ratio - p.trim_idle_removed_kwh).max(0.0);
    let spec = &r.compressors[t];
    let mut next = p.clone();
    next.take_from_trim(Some(t), kwh);
    next.trim_replaced = true;
    let (lo, hi) = demand_rel(r, false);
    let (low_kwh, high_kwh) = band(kwh, lo, hi);
    let draft = Draft {
        kind: MeasureKind::ImproveControl,
        title: text![if has_vsd {
            format!("Sequence the variable-speed machine as trim instead of {}", spec.tag)
        } else {
            format!("Trim with a variable-speed compressor instead of {}", spec.tag)
        }],
        description: text![format!(
            "{} runs loaded {:.0} % of its time and cycles {:.1} times an hour; {}",
            spec.tag,
            r.machines[t].loaded_fraction * 100.0,
            r.machines[t].cycles_per_hour,
            if c.simultaneous_cycling_share > 0.1 {
                format!("two machines part-load at once {:.0} % of the time", c.simultaneous_cycling_share * 100.0)
            } else {
                "its part-load power is high for the air it delivers".into()
            }
        )],
        saving_kwh: kwh,
        low_kwh,
        high_kwh,
        acts_on_kwh: c.logged_annual_kwh.min(r.annual_energy_kwh),
        money: None,
        cost_ctx: CostContext { rated_kw: spec.rated_power_kw, has_vsd, ..Default::default() },
        basis: vec![
            text![format!("logged trim energy {:.0} kWh/yr", Grouped(c.logged_annual_kwh))],
            text![format!("same demand on {}: {:.0} kWh/yr", c.curve, Grouped(c.modelled_annual_kwh))],
            c.model.clone(),
            text![format!(
                "× {ratio:.3} for the trim energy left above idle, less {:.0} kWh/yr already switched off",
                Grouped(p.trim_idle_removed_kwh)
            )],
        ],
        formula: "saving = (logged trim energy - Σ P_vsd(Q_w) × time) × trim energy left / logged - unloaded energy already switched off; Q_w the trim's air in each 5 min from its mean running power through its part-load model",
        source: "US DOE sourcebook: part-load behaviour by control, load/unload curves by storage",
        method: "logged trim energy against the same air on a variable-speed curve, the air read through the trim's part-load model (load/unload on storage with its blow-down); range ±15 % curve and the annual hours (US DOE sourcebook, part load)",
        caution: None,
        scenario_id: None,
    };
    Some((draft, next))
}
