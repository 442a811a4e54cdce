/*!
Data sufficiency: whether the logged data can carry the annual figures, and which figures they
cannot support at all. The verdict (`summary.sufficiency`, API.md) is worked out before any annual
figure is priced; a figure the data cannot support is set to `null` with its reason
([`Withheld`]), never shown as a number.

ISO 11011 (compressed-air energy assessment) asks for measurements over a period representative of
the plant's operation, without fixing its length. Common practice (not a standard) is to log at
least one full production week, so that every shift, the weekend and the night are seen. The rules
below turn that into checks a practitioner can verify from the coverage the report prints. "Power
hours" are the hours in which every compressor with a power column was logged together: the system
figures add the machines up, so only those hours show the plant as one system.

**Insufficient** (no annual figure, no measure; the reasons say what is missing):
- no compressor power was logged: every energy and cost figure rests on power;
- power hours under [`MIN_POWER_HOURS`] (1 h): not even a few load/unload cycles of a trim machine
  (common practice) were seen together, so the plant's demand is unknown — this is the case of
  machines logged at different times, whose sum was never observed;
- power covering under [`MIN_PERIOD_COVERAGE`] (10 %) of the span from the first reading to the
  last: the files lie far apart in time (different weeks, seasons or years, or files of another
  system), and one annual figure would mix them. A window (`?from=&to=`) around one stretch of logging can be analysed on its own.
- the compressors' logged power (every machine's together, over one analysis step) never rising
  above [`MIN_RUNNING_SHARE`] (5 %) of their data sheets' rated power together: a screw compressor
  running unloaded draws 20-35 % of its full-load power (common practice, the US DOE sourcebook's
  part-load curves from memory), so no machine ran in the log, or the column is in another unit (W
  read as kW) or of another machine; an annual cost of such a log is no plant's.

**Thin** (annual figures given, to be read as indicative; each reason is listed):
- power hours under [`FULL_WEEK_HOURS`] (167 h: a logger week rarely spans exactly 168 h, the same
  allowance as the baseline's weekly rule; counted on the site's clock, so a week over a spring
  daylight-saving change, 167 h elapsed, is a whole week), or fewer than 7 weekdays logged: less than the full
  production week of common practice; the annual figure repeats what was seen;
- power covering under [`THIN_PERIOD_COVERAGE`] (50 %) of the span from the first reading to the
  last: the files leave large gaps or overlap little;
- no header pressure logged at all: the pressure profile, the pressure measure and the isothermal
  efficiency cannot be worked out (an assessment measures pressure across the system: ISO 11011,
  from memory); a missing flow meter is no reason, since the air is then read from the machines'
  states, a stated method;
- flow measured but logged together with power in under [`MIN_OVERLAP_SHARE`] (50 %) of the power
  hours; the same for the header pressure;
- a header pressure log that is not credible (below).

**Withheld figures** (whatever the verdict):
- specific power, its range, the cost of air, the isothermal efficiency and the specific-power
  degradation when a flow meter was logged but overlaps power for under [`MIN_OVERLAP_HOURS`]
  (30 min): a ratio of power and flow of different times means nothing;
- the isothermal efficiency and the pressure measure when the pressure log is not credible: a
  reading below [`MIN_CREDIBLE_BAR_G`] (-0.1 bar(g): a compressed-air header never runs below the
  atmosphere; 0.1 bar allows for a transmitter's zero error), or a median below half the lowest
  rated pressure of the compressors (a header that low is not the header of this plant, or the unit
  or the zero of the column is wrong; common practice);
- the time below the low limit and above the highest rated pressure when the pressure log is not
  credible (the pages print "not enough data" for the pressure bands too; the JSON keeps the log's
  percentiles, a description of the log itself, like its mean);
- the air, the mean flow (its range) and the peak flow when no flow can be known in the period
  (a window on a day that only an energy counter logged, with the flow meter logged on other
  days): no flow logged in it and none read from the compressors' states (none is read when a
  machine's power is only an energy counter, whose states are unknown); the peak flow alone
  when no minute holds enough flow readings. Never 0: the reason says which is missing. What of
  the treatment records needs the mean flow is then withheld too, the rest priced
  (`analysis::transmission`);
- the peak power when no 15-minute window holds every compressor's power, or when that peak falls
  below the mean power (the machines' logs do not overlap enough for a simultaneous peak); the
  demand charge, and with it the annual cost, when a demand charge is set and the peak is withheld;
- with the verdict insufficient: the cost of air, and the system specific power (its range, the
  part-load penalty) when the air is read from the machines' states, since the plant's demand is
  not known (a flow read from the states of machines logged years apart is no plant's air); a flow
  meter logged with power for 30 min or more measures that ratio itself, for the time logged, and
  it stands; every annual figure (baseline, heat, compressors, leak cost) and
  every measure, and every share of demand of the leaks (the adopted one and each estimate's);
- with the verdict insufficient, the production split (production and non-production mean flow
  and power): its means are over the production and other bins of the whole span, the mean flow
  over the bins logged, and on such data they disagree. The pages print "not enough data" for the
  production share of time beside it; the summary's JSON keeps that share;
- a leak share above 100 %, the adopted one or an estimate's: a leak flow above the mean demand it
  is compared with means the test and the flow log describe different conditions, and is no share;
- with any share withheld, the leak band read from it ("leaks above 20 % of demand ...").

- a compressor's states when its power is only an energy counter, and what rests on them
  ([`counter_only`]: the system specific power read from states, the marginal specific power of
  such a trim, every measure);
- the system specific power, with what is missing, when no rule above withholds it and it still
  cannot be worked out (no flow known, or none in the time steps with power: machines that never
  loaded, a meter that read nothing) ([`specific_power_unknown`]);
- the plant's mean power when the machines' power was logged together under [`MIN_POWER_HOURS`]:
  the sum of each machine's mean over its own log is no time of the plant (the JSON keeps the sum;
  the pages print "not enough data").

The pages also print "not enough data" for the marginal specific power when the verdict is
insufficient (it is read at the logged load, which such data do not carry); the summary's JSON
keeps it.
*/

use crate::core::recommend::{self, Part};
use crate::core::series::Grid;

mod whole;

use whole::{clear_shares, leak_cost_over_whole, leak_shares_over_whole};

use super::calendar::NO_CELL;
use super::figures::{PressureFigures, Sufficiency, Summary, Verdict, Withheld};

/// Below this many power hours the data are insufficient (module doc).
pub const MIN_POWER_HOURS: f64 = 1.0;
/// Below this many power hours the data are thin: less than a full week (module doc).
pub const FULL_WEEK_HOURS: f64 = 167.0;
/// Below this share of the span (first reading to last) covered by power the data are insufficient.
pub const MIN_PERIOD_COVERAGE: f64 = 0.10;
/// Below this share of the span (first reading to last) covered by power the data are thin.
pub const THIN_PERIOD_COVERAGE: f64 = 0.50;
/// Below this share of the power hours with flow (or pressure) logged too the data are thin.
pub const MIN_OVERLAP_SHARE: f64 = 0.50;
/// Below this many hours of power and measured flow together, specific power is withheld.
pub const MIN_OVERLAP_HOURS: f64 = 0.5;
/// A header reading below this gauge pressure makes the pressure log not credible, bar(g).
pub const MIN_CREDIBLE_BAR_G: f64 = -0.1;
/// Below this share of the rated power of the machines with power logged, their highest logged power
/// together says that no machine ran (module doc).
pub const MIN_RUNNING_SHARE: f64 = 0.05;

/// Bins with the signals together, counted in one pass by [`overlap`].
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub(super) struct Overlap {
    pub step_s: f64,
    pub bins: usize,
    /// Bins with every compressor's power.
    pub power: usize,
    /// Bins with power and measured flow (`None`: flow not measured).
    pub power_flow: Option<usize>,
    /// Bins with power and header pressure (`None`: no pressure).
    pub power_pressure: Option<usize>,
    /// Bit `d` set when weekday `d` (Monday 0, site time) has power.
    pub weekdays: u8,
    /// Hours the site's clock gained over the log (1 over a spring daylight-saving change, else 0):
    /// a week over the change is a whole week on the clock (`calendar::local_weeks`).
    pub clock_gain_h: f64,
    /// The highest of the compressors' power together over one bin, W (0 with none logged).
    pub highest_power_w: f64,
}

impl Overlap {
    fn hours(&self, bins: usize) -> f64 {
        bins as f64 * self.step_s / 3600.0
    }
}

/// Count the bins with power, flow and pressure together. `measured_flow` is `None` when the flow is
/// estimated from the compressors' states (it then always overlaps power).
pub(super) fn overlap(
    grid: &Grid,
    cells: &[u8],
    total_power: Option<&[f32]>,
    measured_flow: Option<&[f32]>,
    pressure: Option<&[f32]>,
) -> Overlap {
    let mut o = Overlap {
        step_s: grid.step_s(),
        bins: grid.len,
        power_flow: measured_flow.map(|_| 0),
        power_pressure: pressure.map(|_| 0),
        ..Default::default()
    };
    let Some(p) = total_power else { return o };
    for (k, v) in p.iter().enumerate() {
        if !v.is_finite() {
            continue;
        }
        o.power += 1;
        o.highest_power_w = o.highest_power_w.max(f64::from(*v));
        if let Some(c) = cells.get(k).filter(|&&c| c != NO_CELL) {
            o.weekdays |= 1 << (c / 24);
        }
        if let (Some(n), Some(q)) = (o.power_flow.as_mut(), measured_flow) {
            *n += usize::from(q[k].is_finite());
        }
        if let (Some(n), Some(pr)) = (o.power_pressure.as_mut(), pressure) {
            *n += usize::from(pr[k].is_finite());
        }
    }
    o
}

/// Whether the header pressure log is credible, and why not (module doc). `None`: nothing logged.
pub(super) fn pressure_credible(
    p: &PressureFigures,
    lowest_rated_bar_g: Option<f64>,
) -> Option<Result<(), Vec<Part>>> {
    if !p.logged {
        return None;
    }
    if let Some(min) = p.min_bar_g.filter(|&m| m < MIN_CREDIBLE_BAR_G) {
        return Some(Err(parts![
            "the pressure log goes down to ",
            recommend::bar_g(min),
            ", below the atmosphere: a compressed-air header never does, so the column is not a header \
             pressure or its unit or zero is wrong"
        ]));
    }
    if let (Some(med), Some(rated)) = (p.p50_bar_g, lowest_rated_bar_g) {
        if med < 0.5 * rated {
            return Some(Err(parts![
                "the median logged pressure ",
                recommend::bar_g(med),
                " is under half the lowest rated pressure of the compressors (",
                recommend::bar_g(rated),
                "): it is not this plant's header, or its unit or zero is wrong"
            ]));
        }
    }
    Some(Ok(()))
}

/// The verdict and its reasons (module doc), before any figure is withheld.
/// The verdict and its reasons. `rated_kw` is the data sheets' rated power of the machines whose
/// power was logged, together (0: none known).
pub(super) fn assess(
    o: &Overlap,
    power_logged: bool,
    rated_kw: f64,
    pressure: Option<&Result<(), Vec<Part>>>,
) -> Sufficiency {
    let power_h = o.hours(o.power);
    let total_h = o.hours(o.bins);
    let share = if o.bins == 0 { 0.0 } else { o.power as f64 / o.bins as f64 };
    let weekdays = o.weekdays.count_ones();
    // In parts (`recommend::Part`): a reason that quotes a pressure is read in the reader's units.
    let mut insufficient: Vec<Vec<Part>> = Vec::new();
    let mut thin: Vec<Vec<Part>> = Vec::new();
    if !power_logged {
        insufficient
            .push(parts!["no compressor power was logged: energy, cost and every measure rest on it"]);
    } else if power_h < MIN_POWER_HOURS {
        insufficient.push(parts![format!(
            "the compressors' power was logged together for {power_h:.1} h (less than {MIN_POWER_HOURS:.0} h): \
             the plant's demand as one system was never seen"
        )]);
    } else if share < MIN_PERIOD_COVERAGE {
        insufficient.push(parts![format!(
            "power covers {} % of the span from the first reading to the last ({:.0} h of {:.0} h, under \
             {:.0} %): the files lie far apart in time and one annual figure would mix them; analyse one stretch \
             of logging at a time",
            percent(share),
            crate::core::display::Grouped(power_h),
            crate::core::display::Grouped(total_h),
            MIN_PERIOD_COVERAGE * 100.0
        )]);
    }
    let highest_kw = o.highest_power_w / 1000.0;
    if power_logged && o.power > 0 && rated_kw > 0.0 && highest_kw < MIN_RUNNING_SHARE * rated_kw {
        insufficient.push(parts![format!(
            "the compressors' logged power never rose above {} kW, {} % of the {} kW on their data sheets \
             (a screw compressor running unloaded draws 20 to 35 % of its full-load power): no machine ran in \
             the log, or the power column is in another unit (W read as kW) or of another machine",
            crate::core::display::num(highest_kw, if highest_kw < 1.0 { 3 } else { 1 }),
            percent(highest_kw / rated_kw),
            crate::core::display::Grouped(rated_kw)
        )]);
    }
    if power_logged && power_h >= MIN_POWER_HOURS {
        if power_h + o.clock_gain_h < FULL_WEEK_HOURS || weekdays < 7 {
            thin.push(parts![format!(
                "{:.1} days of logging on {weekdays} of the 7 weekdays; common practice is at least one \
                 full production week, so that every shift and the weekend are seen",
                power_h / 24.0
            )]);
        }
        if (MIN_PERIOD_COVERAGE..THIN_PERIOD_COVERAGE).contains(&share) {
            thin.push(parts![format!(
                "power covers {:.0} % of the span from the first reading to the last (under {:.0} %): the \
                 files leave large gaps",
                share * 100.0,
                THIN_PERIOD_COVERAGE * 100.0
            )]);
        }
        if o.power_pressure.is_none() {
            thin.push(parts![
                "no header pressure was logged: the pressure profile, the pressure measure and the \
                 isothermal efficiency rest on it (an assessment measures pressure across the system, \
                 ISO 11011, from memory)"
            ]);
        }
        for (what, n) in [("flow", o.power_flow), ("header pressure", o.power_pressure)] {
            if let Some(n) = n {
                let s = n as f64 / o.power as f64;
                if s < MIN_OVERLAP_SHARE {
                    thin.push(parts![format!(
                        "{what} was logged together with power in {:.0} % of the power hours (under {:.0} %)",
                        s * 100.0,
                        MIN_OVERLAP_SHARE * 100.0
                    )]);
                }
            }
        }
    }
    if let Some(Err(why)) = pressure {
        thin.push(why.clone());
    }
    let verdict = if !insufficient.is_empty() {
        Verdict::Insufficient
    } else if !thin.is_empty() {
        Verdict::Thin
    } else {
        Verdict::Enough
    };
    insufficient.extend(thin);
    Sufficiency {
        verdict,
        reasons: insufficient.iter().map(|r| super::figures::si_words(r)).collect(),
        reason_parts: insufficient,
        withheld: Vec::new(),
        power_hours: power_h,
        power_flow_hours: o.power_flow.map(|n| o.hours(n)),
        power_pressure_hours: o.power_pressure.map(|n| o.hours(n)),
        weekdays_logged: weekdays,
        pressure_credible: pressure.map(Result::is_ok),
    }
}

/// Record `figure` as withheld, once (the first rule that withholds it gives its reason).
fn withhold(w: &mut Vec<Withheld>, figure: &str, reason: &str) {
    if !w.iter().any(|x| x.figure == figure) {
        w.push(Withheld { figure: figure.into(), reason: reason.into() });
    }
}

/// The air and the flow (mean, its range, peak) recorded as withheld for `why`: no flow can be
/// known in the period (`summary_of` leaves them `None`).
pub(super) fn withhold_flow(w: &mut Vec<Withheld>, why: &str) {
    let why = format!("no flow is known: {why}");
    for f in ["system.mean_flow_m3_min", "system.peak_flow_m3_min", "system.air_m3"] {
        withhold(w, f, &why);
    }
}

/// A share in percent for people: one decimal, and "under 0.1" for a share that is not zero but
/// would print as 0.0 (the "0.0 % coverage" hid that something was logged).
pub fn percent(share: f64) -> String {
    let p = share * 100.0;
    if p > 0.0 && p < 0.05 {
        "under 0.1".into()
    } else {
        format!("{p:.1}")
    }
}

/// Set to `None` every figure of `s` the data cannot support (module doc), recording each with its
/// reason in `s.sufficiency.withheld`. `demand_charge_set`: the site bills peak demand.
pub(super) fn apply(s: &mut Summary, demand_charge_set: bool) {
    let mut w = std::mem::take(&mut s.sufficiency.withheld);
    let (power_flow_hours, pressure_credible, verdict) =
        (s.sufficiency.power_flow_hours, s.sufficiency.pressure_credible, s.sufficiency.verdict);
    // Specific power needs power and measured flow at the same times.
    if let Some(h) = power_flow_hours.filter(|&h| h < MIN_OVERLAP_HOURS) {
        let why = format!(
            "power and measured flow were logged together for {h:.1} h (less than {:.0} min)",
            MIN_OVERLAP_HOURS * 60.0
        );
        clear_specific_power(s, &mut w, &why);
        s.system.isothermal_efficiency = None;
        s.system.isothermal_efficiency_low = None;
        s.system.isothermal_efficiency_high = None;
        withhold(&mut w, "system.isothermal_efficiency", &why);
    }
    // Power over air read from the machines' states, on data that do not carry the plant's demand,
    // is no plant's figure (machines logged years apart gave 23.30 kW/(m³/min)). A flow meter
    // logged with power for half an hour or more measures the ratio itself, for the time logged:
    // it stands, but not its price, the cost of air, which rests on the annual cost.
    if verdict == Verdict::Insufficient {
        let why = format!(
            "the logged data are not enough to set the plant's power against its air: {}",
            s.sufficiency.reasons.first().map_or("", String::as_str)
        );
        if power_flow_hours.is_none() {
            clear_specific_power(s, &mut w, &why);
        } else {
            s.baseline.cost_per_1000_m3 = None;
            s.baseline.cost_per_1000_ft3 = None;
            withhold(&mut w, "baseline.cost_per_1000_m3", &why);
        }
    }
    if pressure_credible == Some(false) {
        let why = "the pressure log is not credible: it cannot be this plant's header pressure";
        let sys = &mut s.system;
        sys.isothermal_efficiency = None;
        withhold(&mut w, "system.isothermal_efficiency", why);
        sys.isothermal_efficiency_low = None;
        sys.isothermal_efficiency_high = None;
        withhold(&mut w, "recommendations[lower_pressure]", why);
        // Time below the plant's low limit or above its rated pressure, of a log that is not its
        // header, is no time of this plant (a walk found "100.0 %" below the limit).
        s.pressure.share_below_low_limit = None;
        s.pressure.share_above_highest_rated = None;
        withhold(&mut w, "pressure.share_below_low_limit", why);
    }
    // A peak is never below the mean: a flow known over bins too few for any whole minute has a
    // mean and no peak.
    if s.system.mean_flow_m3_min.is_some()
        && s.system.peak_flow_m3_min.is_none_or(|p| p + 1e-9 < s.system.mean_flow_m3_min.unwrap_or(0.0))
    {
        s.system.peak_flow_m3_min = None;
        s.demand.peak_flow_m3_min = None;
        withhold(
            &mut w,
            "system.peak_flow_m3_min",
            "no minute of the period holds enough flow readings for a peak",
        );
    }
    match s.system.peak_power_kw {
        Some(p) if p + 1e-9 >= s.system.mean_power_kw => {}
        Some(_) | None => {
            s.system.peak_power_kw = None;
            let why = if s.system.mean_power_kw > 0.0 {
                "the compressors' power logs do not overlap enough for a simultaneous 15-minute peak"
            } else {
                "no compressor power was logged"
            };
            withhold(&mut w, "system.peak_power_kw", why);
            if demand_charge_set {
                let b = &mut s.baseline;
                b.annual_demand_charge = None;
                b.annual_cost = None;
                b.annual_cost_low = None;
                b.annual_cost_high = None;
                withhold(&mut w, "baseline.annual_cost", "the demand charge needs the peak power, withheld");
            }
        }
    }
    if verdict == Verdict::Insufficient {
        // The first reason names what is missing; all of them are in `sufficiency.reasons`.
        let why = format!("not enough data: {}", s.sufficiency.reasons.first().map_or("", String::as_str));
        let b = &mut s.baseline;
        for f in [
            &mut b.annual_energy_kwh,
            &mut b.annual_energy_kwh_low,
            &mut b.annual_energy_kwh_high,
            &mut b.annual_energy_cost,
            &mut b.annual_demand_charge,
            &mut b.annual_cost,
            &mut b.annual_cost_low,
            &mut b.annual_cost_high,
            &mut b.annual_co2_t,
        ] {
            *f = None;
        }
        withhold(&mut w, "baseline", &why);
        let h = &mut s.heat;
        for f in [
            &mut h.annual_heat_rejected_kwh,
            &mut h.annual_recoverable_kwh,
            &mut h.useful_heat_kwh_per_year,
            &mut h.displaced_fuel_kwh_per_year,
            &mut h.annual_value,
            &mut h.process_water_annual_value,
        ] {
            *f = None;
        }
        withhold(&mut w, "heat", &why);
        for c in &mut s.compressors {
            c.annual_energy_kwh = None;
            c.annual_heat_rejected_kwh = None;
            c.annual_recoverable_kwh = None;
        }
        withhold(&mut w, "compressors[].annual_energy_kwh", &why);
        let l = &mut s.leaks;
        l.annual_leak_energy_kwh = None;
        l.annual_leak_cost = None;
        l.annual_leak_cost_low = None;
        l.annual_leak_cost_high = None;
        withhold(&mut w, "leaks.annual_leak_cost", &why);
        // A share of a mean flow the data cannot carry is no share (a leak test against a few
        // minutes of flow read as 4,500 %).
        clear_shares(l);
        withhold(&mut w, "leaks.share_of_mean_demand", &why);
        for e in &mut l.estimates {
            e.share_of_mean_demand = None;
        }
        withhold(&mut w, "leaks.estimates[].share_of_mean_demand", &why);
        // The split's means are over the production and other bins of the whole span, the mean
        // flow over the bins logged: on such data they cannot both be true (a walk found a mean of
        // 0.134 m³/min beside a production mean of 4.57 and a non-production one of 0.000).
        let d = &mut s.demand;
        for f in [
            &mut d.production_mean_flow_m3_min,
            &mut d.non_production_mean_flow_m3_min,
            &mut d.production_mean_power_kw,
            &mut d.non_production_mean_power_kw,
        ] {
            *f = None;
        }
        withhold(&mut w, "demand.production_split", &why);
        for d in &mut s.transmission.pressure_drops {
            d.annual_energy_kwh = None;
            d.annual_cost = None;
        }
        if !s.recommendations.is_empty() {
            s.recommendations.clear();
        }
        s.measures_total = None;
        withhold(&mut w, "recommendations", &why);
    }
    counter_only(s, &mut w);
    // A plant's mean power is over the time its power is known, every machine's together: the sum
    // of the machines' means over logs that never overlap (a walk found 33.5 kW from two files
    // years apart) describes no time of the plant.
    let with_power = s.compressors.iter().filter(|c| c.power_logged).count();
    if with_power > 1 && s.sufficiency.power_hours < MIN_POWER_HOURS {
        withhold(
            &mut w,
            "system.mean_power_kw",
            &format!(
                "the compressors' power was logged together for {:.1} h (less than {MIN_POWER_HOURS:.0} h): a \
                 plant's mean power is over the time every machine's power is known, and the sum of each \
                 machine's mean over its own log describes no time of the plant",
                s.sufficiency.power_hours
            ),
        );
    }
    leak_shares_over_whole(s, &mut w);
    leak_cost_over_whole(s, &mut w);
    specific_power_unknown(s, &mut w);
    s.sufficiency.withheld = w;
}

/// The system specific power when it is `None` and neither a rule above nor its note
/// (`specific_power_note`) says why: recorded with the reason read from what is missing, so that
/// the pages never fall back on "the data cannot support this figure".
fn specific_power_unknown(s: &Summary, w: &mut Vec<Withheld>) {
    let (sys, figure) = (&s.system, "system.specific_power_kw_per_m3_min");
    if sys.specific_power_kw_per_m3_min.is_some()
        || sys.specific_power_note.is_some()
        || w.iter().any(|x| x.figure == figure)
    {
        return;
    }
    let why = if let Some(air) = w.iter().find(|x| x.figure == "system.air_m3") {
        format!(
            "it needs the compressors' power and the air they delivered at the same times, and {}",
            air.reason
        )
    } else if !s.compressors.iter().any(|c| c.power_logged) {
        "no compressor power was logged".to_string()
    } else if sys.estimated {
        "no flow meter was logged, and the compressors' states show no air delivered in the time steps with \
         their power (none of them loaded)"
            .to_string()
    } else {
        "the flow meter read no flow in the time steps with the compressors' power".to_string()
    };
    withhold(w, figure, &why);
}

/// The figures that need a machine's states, withheld when its power is known only from an energy
/// counter (`CompressorFigures::power_from_counter`). A counter gives the energy, and so the mean
/// power over each reading interval, but not when the machine loaded, unloaded or stopped: its
/// loaded, unloaded and off shares, cycles and running hours cannot be read from it (nor the air
/// read from its states), whatever the verdict. What rests on those:
/// - the system specific power and the cost of air when the air is read from the machines' states
///   (no flow meter): the air of that machine is unknown;
/// - the marginal specific power (the pages print "not enough data"; the JSON keeps it) and the
///   annual cost of leaks priced at it, when that machine is the trim: it is read at the trim's
///   load, which is its running power over its running time;
/// - every measure: they are priced on the machines' states (idling, control, loaded power) or at
///   the marginal rate, and heat recovery's unit is sized on the full-load heat of the machines that
///   run; a payback on them would be advice the data do not carry. The energy and the heat rejected
///   stand: a counter gives them.
fn counter_only(s: &mut Summary, w: &mut Vec<Withheld>) {
    let tags: Vec<String> =
        s.compressors.iter().filter(|c| c.power_from_counter).map(|c| c.tag.clone()).collect();
    if tags.is_empty() {
        return;
    }
    let names = tags.join(", ");
    let whose = format!("{names}'s");
    let verb = if tags.len() == 1 { "was" } else { "were" };
    let states = format!(
        "{whose} power {verb} logged only as an energy counter, which gives the mean power over each reading \
         interval, not when the machine loaded, unloaded or stopped: its states cannot be read from it"
    );
    withhold(w, "compressors[].states", &states);
    if s.system.flow_source == super::figures::FlowSource::EstimatedFromCompressorStates {
        let why = format!(
            "no flow meter was logged and the air would be read from the machines' states, which cannot be \
             read from an energy counter ({whose} power)"
        );
        clear_specific_power(s, w, &why);
    }
    let trim = s.part_load_model.as_ref().map(|m| m.machine.clone());
    if let Some(t) = trim.filter(|t| tags.contains(t)) {
        let why = format!(
            "it is read at the trim machine's load, its running power over its running time, and {t}'s \
             running time cannot be read from an energy counter"
        );
        withhold(w, "leaks.marginal_kw_per_m3_min", &why);
        let l = &mut s.leaks;
        if l.annual_leak_cost.is_some() {
            l.annual_leak_energy_kwh = None;
            l.annual_leak_cost = None;
            l.annual_leak_cost_low = None;
            l.annual_leak_cost_high = None;
            withhold(w, "leaks.annual_leak_cost", &format!("priced at the marginal specific power: {why}"));
        }
    }
    if !s.recommendations.is_empty() || s.measures_total.is_some() {
        s.recommendations.clear();
        s.measures_total = None;
        withhold(
            w,
            "recommendations",
            &format!(
                "the measures are priced on the machines' states (idling, control, loaded power) or at the trim \
                 machine's marginal specific power, and a heat-recovery unit is sized on the full-load heat of \
                 the machines that run: {states}. Log {names}'s power (kW, or current) at a minute or finer to \
                 price them"
            ),
        );
    }
}

/// The system specific power, its range and penalty, and the cost of air, withheld for `why`.
fn clear_specific_power(s: &mut Summary, w: &mut Vec<Withheld>, why: &str) {
    let sys = &mut s.system;
    sys.specific_power_kw_per_m3_min = None;
    sys.specific_power_kw_per_m3_min_low = None;
    sys.specific_power_kw_per_m3_min_high = None;
    sys.specific_power_kw_per_100cfm = None;
    sys.specific_power_kwh_per_m3 = None;
    sys.part_load_penalty_percent = None;
    sys.full_load_specific_power_at_pressure_kw_per_m3_min = None;
    sys.part_load_curve.clear();
    withhold(w, "system.specific_power_kw_per_m3_min", why);
    s.baseline.cost_per_1000_m3 = None;
    s.baseline.cost_per_1000_ft3 = None;
    withhold(w, "baseline.cost_per_1000_m3", why);
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::core::display::{render_parts, Fmt};
    use crate::core::units::{PressureAbs, UnitSystem};

    /// A pressure log that is not credible says why with its pressures in the reader's units.
    #[test]
    fn an_incredible_pressure_log_is_said_in_the_readers_units() {
        let p = PressureFigures {
            logged: true,
            mean_bar_g: Some(1.0),
            min_bar_g: Some(-0.5),
            max_bar_g: Some(2.0),
            p5_bar_g: Some(0.0),
            p50_bar_g: Some(1.0),
            p95_bar_g: Some(2.0),
            std_dev_bar: None,
            uncertainty_bar: 0.08,
            low_limit_bar_g: None,
            share_below_low_limit: None,
            highest_rated_bar_g: None,
            share_above_highest_rated: None,
        };
        let Some(Err(why)) = pressure_credible(&p, Some(7.5)) else { panic!("credible") };
        let atm = PressureAbs(101_325.0);
        // NIST SP 811 (2008) B.8: 1 psi = 6 894.757 Pa, so -0.5 bar = -7.25 psi.
        let us = render_parts(&why, &Fmt::new(UnitSystem::Us, atm));
        assert!(us.contains("goes down to -7.3 psig, below the atmosphere"), "{us}");
        let si = render_parts(&why, &Fmt::new(UnitSystem::Si, atm));
        assert!(si.contains("goes down to -0.50 bar(g)"), "{si}");
        let s = assess(&Overlap::default(), true, 0.0, Some(&Err(why)));
        assert_eq!(s.reasons.len(), s.reason_parts.len());
        assert_eq!(s.reasons.last().unwrap(), &si);
    }
}
