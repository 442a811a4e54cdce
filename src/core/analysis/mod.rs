/*!
The audit's figures: one pass over the logged [`Frame`] that yields the [`Summary`] the summary page and
`GET /api/v1/audits/{id}/summary` show (API.md "The audit's figures"), plus the decay events proposed as
pressure-decay tests.

[`data_figures`] makes every pass over the bins and keeps small per-room results ([`DataFigures`]);
[`summary_of`] prices them, weighs their uncertainties, reads the field tests and proposes the measures,
without touching a bin. Each rule is documented in its room and listed in [`Summary::methods`] /
[`Summary::assumptions`]:

- [`uncertainty`]: instrument accuracies ([`Accuracy`]) and their combination in quadrature;
- `calendar`: weekday-hour cells in the site's time zone (`site.timezone`, IANA; UTC if unknown);
- `machines`: per-compressor power, states, energy, the trim machine and the measures' inputs;
- `specific_power`: system flow, interval-synchronous specific power, isothermal efficiency;
- `production`: production hours from the schedule or detected from the demand;
- `control`: the trim machine on a variable-speed curve;
- `pressure`: pressure bands; `demand`: peaks, duration curve, weekday × hour profiles;
- `baseline`: annualisation, cost and CO₂; `leaks`: the estimates and the adopted leak flow;
- `heat`: heat rejected and recoverable and its value; `decay`: decay events in the logs;
- `sufficiency`: whether the data carry the annual figures (the verdict, before any annual figure),
  and the figures withheld (`null` with a reason) because the data cannot support them;
- `figures`: the summary's shape (serialised and read back typed).

Invariants every summary keeps (checked over the demo and randomised plants in `tests`): a peak
(power or flow) is never below its mean; a target pressure is never below the plant's low limit
nor below 0 bar(g); a measure never saves more than the energy it acts on.
*/

/// Words and figures as parts: `parts!["about ", recommend::flow(q)]`.
macro_rules! parts {
    ($($p:expr),* $(,)?) => { vec![$($crate::core::recommend::Part::from($p)),*] };
}

mod baseline;
mod calendar;
mod control;
#[cfg(test)]
mod control_tests;
mod decay;
mod demand;
mod drops;
mod figures;
#[cfg(test)]
mod guard_tests;
mod heat;
mod input;
mod leaks;
mod machines;
mod pressure;
mod production;
#[cfg(test)]
mod range_tests;
mod specific_power;
mod stats;
pub mod sufficiency;
#[cfg(test)]
mod tests;
#[cfg(test)]
mod thin_tests;
pub mod transmission;
pub mod uncertainty;

pub use decay::{
    decay_events, DecayEvent, DECAY_MAX_EVENTS, DECAY_MIN_DURATION_S, DECAY_MIN_FALL_BAR, DECAY_NOISE_BAR,
};
pub use figures::{
    Baseline, CompressorFigures, Coverage, Demand, DurationPoint, FlowSource, HeatFigures, LeakDisagreement,
    LeakEstimateFigure, LeakFigures, Method, NonProductionLeak, PartLoadPoint, Period, PowerSource,
    PressureFigures, ProductionSource, Sufficiency, Summary, SystemFigures, Verdict, Withheld,
};
pub use input::{AuditInput, DataSpec, LeakEstimate};
pub use production::NON_PRODUCTION_SHARE_OF_PEAK;
pub use uncertainty::Accuracy;

use super::display::{self, Fmt};
use super::recommend::{self, ControlCase, Part, RecommendInput};
use super::series::{integrate, Frame, PressurePoint};
use super::treatment::PressureDropFigure;
use super::units::{kw_per_100cfm, UnitSystem};

use baseline::CellSums;
use calendar::ts_string;
use control::ControlCells;
use demand::FlowTotals;
use machines::{MachineCells, MachineEnergy};
use specific_power::{CompressorAir, SystemSpecificPower};
use uncertainty::{band, power_rel, quad};

/// The data-heavy half of the summary: every pass over the frame's bins, and nothing that prices,
/// weighs an uncertainty or reads a field test. Small (a few kB whatever the log's length), so the
/// service keeps it beside the frame: an edit of prices, costs, tests, scenarios or accuracies then
/// re-runs only [`summary_of`], which never touches a bin.
#[derive(Debug, Clone, PartialEq)]
pub struct DataFigures {
    /// What it was computed from besides the frame.
    pub spec: DataSpec,
    period: Period,
    /// The log's span on the site's clock, h, and the mean power of each whole week logged, kW
    /// (`calendar::local_weeks`).
    local_hours: f64,
    weekly_mean_kw: Vec<f64>,
    tz_ok: bool,
    /// Per compressor.
    stats: Vec<Option<crate::core::states::StateStats>>,
    /// Per compressor: the levels found in its power, and its mean pressure while loaded, bar(g).
    levels: Vec<Option<crate::core::levels::Levels>>,
    loaded_pressure_bar_g: Vec<Option<f64>>,
    /// Per compressor: the band and blow-down its log showed (`partload::fit`; load/unload only).
    fits: Vec<Option<crate::core::partload::fit::Calibration>>,
    power_logged: Vec<bool>,
    /// Per compressor: its power known only from an energy counter (`FrameColumn::from_counter`).
    power_from_counter: Vec<bool>,
    energy: MachineEnergy,
    /// Power, W, per compressor (`None`: not logged).
    power_cells: Vec<Option<CellSums>>,
    air: Vec<CompressorAir>,
    machines: Vec<MachineCells>,
    without_power: Vec<String>,
    flow_source: FlowSource,
    flow_estimated: bool,
    totals: FlowTotals,
    system: SystemSpecificPower,
    /// Why the system's specific power is refused, if it is.
    sp_note: Option<String>,
    rated_sp: Option<f64>,
    trim: Option<usize>,
    prod_share: f64,
    q_prod: Option<f64>,
    q_nonprod: Option<f64>,
    /// Mean header pressure in and out of production, Pa absolute.
    p_prod: Option<f64>,
    p_nonprod: Option<f64>,
    /// 1 while some compressor runs (`None`: no states, every hour counts).
    running_cells: Option<CellSums>,
    control: Option<ControlCells>,
    /// `uncertainty_bar` is set by [`summary_of`].
    pressure: PressureFigures,
    /// The drops from the most upstream pressure point to each point downstream.
    drops: Vec<drops::DropStats>,
    demand: Demand,
    coverage: Coverage,
    overlap: sufficiency::Overlap,
}

/// The start of the assumption that states the trim's part-load model (the pages leave it out when
/// they do not give the marginal specific power it prices).
pub const PART_LOAD_ASSUMPTION: &str = "part-load model behind the marginal specific power: ";

/// Every pass over the bins (the rooms' docs: energy, flow, specific power, states, production hours,
/// annualisation, the control case, pressure and demand).
pub fn data_figures(frame: &Frame, spec: &DataSpec) -> DataFigures {
    let cs = spec.compressors.as_slice();
    let grid = frame.grid;
    let n = grid.len;
    let atm = spec.air.atmosphere;

    let cal = calendar::calendar(&grid, &spec.timezone);
    let logged = machines::logged(frame, cs);
    let total_power = logged.total_power.as_deref();
    let flow = specific_power::system_flow(frame, &logged);
    let q = flow.values.as_deref();
    let pressure = frame.header_pressure().map(|c| c.values.as_slice());

    let energy = machines::energy(frame, &logged);
    let (local_hours, weekly_mean_w) = calendar::local_weeks(&grid, &spec.timezone, total_power);
    let totals = demand::flow_totals(&grid, q, &flow.partial, total_power);
    let (sp_flow, sp_note) = match specific_power::flow_for_specific_power(frame, cs, &logged, &flow) {
        Ok(f) => (f, None),
        Err(why) => (None, Some(why)),
    };
    let system = specific_power::system_specific_power(n, total_power, sp_flow.as_deref(), pressure, atm);
    let air = specific_power::compressor_air(frame, cs, &logged);
    let rated_sp = specific_power::rated_specific_power(cs, &air);
    let trim = machines::trim(cs, &logged.stats);
    let production = production::production(spec.production.as_ref(), &cal, q, total_power, pressure, n);
    let running_cells = baseline::running_cells(&cal, &logged);
    let power_cells = baseline::power_cells(&cal, &logged);
    let machines = machines::machine_cells(cs, &logged, &cal, &production.is_prod, grid.step_s());
    let loaded_pressure_bar_g = machines::loaded_pressure(frame, &logged, atm);
    let fits = machines::fits(frame, cs, &logged);
    let control = control::control_case(&grid, spec, &logged, &cal, trim, &fits);
    let pressure_fig = pressure::pressure_figures(pressure, atm, cs);
    let timezone = if cal.tz_ok { spec.timezone.clone() } else { "UTC".into() };
    let demand =
        demand::demand(&cal, timezone, q, flow.estimated, total_power, &production, totals.peak_flow);
    let mut overlap =
        sufficiency::overlap(&grid, &cal.cells, total_power, if flow.estimated { None } else { q }, pressure);
    overlap.clock_gain_h = (local_hours - grid.hours()).max(0.0);
    let coverage = Coverage {
        power: total_power.map_or(0.0, |p| integrate(&grid, p).coverage),
        flow: if flow.estimated { 0.0 } else { q.map_or(0.0, |q| integrate(&grid, q).coverage) },
        pressure: pressure.map_or(0.0, |p| integrate(&grid, p).coverage),
    };

    DataFigures {
        spec: spec.clone(),
        period: Period {
            start: ts_string(grid.start_ms),
            end: ts_string(grid.end_ms()),
            hours: grid.hours(),
            step_s: grid.step_s(),
            bins: n,
            logged_hours: frame.logged_hours(),
        },
        local_hours,
        weekly_mean_kw: weekly_mean_w.iter().map(|w| w / 1000.0).collect(),
        tz_ok: cal.tz_ok,
        power_logged: logged.powers.iter().map(Option::is_some).collect(),
        power_from_counter: (0..spec.compressors.len())
            .map(|i| frame.power_of(i).is_some_and(|c| c.from_counter))
            .collect(),
        stats: logged.stats,
        levels: logged.levels,
        loaded_pressure_bar_g,
        fits,
        energy,
        power_cells,
        air,
        machines,
        without_power: logged.without_power,
        flow_source: flow.source,
        flow_estimated: flow.estimated,
        totals,
        system,
        sp_note,
        rated_sp,
        trim,
        prod_share: production.share,
        q_prod: production.q_prod,
        q_nonprod: production.q_nonprod,
        p_prod: production.p_prod,
        p_nonprod: production.p_nonprod,
        running_cells,
        control,
        pressure: pressure_fig,
        drops: drops::drops(frame, q, atm),
        demand,
        coverage,
        overlap,
    }
}

/// A method line of the summary.
fn method(figure: &str, formula: &str, source: &str) -> Method {
    Method { figure: figure.into(), formula: formula.into(), source: source.into(), formula_parts: vec![] }
}

/// A method whose formula quotes a figure with a unit: its parts, and their SI words.
fn method_parts(figure: &str, formula: Vec<Part>, source: &str) -> Method {
    Method { formula: figures::si_words(&formula), formula_parts: formula, ..method(figure, "", source) }
}

/// The summary from a [`DataFigures`] of the audit's frame: prices, costs, uncertainties, heat value,
/// leaks (field tests and logs side by side) and the recommendations. Reads no bin, so it costs
/// well under a millisecond whatever the log's length. `d` must be the data figures of the audit's frame
/// under `DataSpec::of(input.site, input.compressors).with_system_volume(input.system_volume_m3)`; the compressors and the site's air are
/// taken from `d.spec`.
pub fn summary_of(d: &DataFigures, input: &AuditInput) -> Summary {
    debug_assert!(
        d.spec == DataSpec::of(input.site, input.compressors).with_system_volume(input.system_volume_m3),
        "data figures of other specs"
    );
    let (site, cs, acc) = (input.site, d.spec.compressors.as_slice(), input.accuracy);
    let atm = d.spec.air.atmosphere;
    let mut methods: Vec<Method> = Vec::new();
    // Assumptions and warnings in parts (`recommend::Part`): the pages render their figures in the
    // reader's units, the JSON's strings are their SI rendering.
    let mut assumptions: Vec<Vec<Part>> = Vec::new();
    if !d.tz_ok {
        assumptions.push(parts![format!(
            "time zone {:?} unknown: weekday and hour profiles use UTC",
            d.spec.timezone
        )]);
    }
    if !d.without_power.is_empty() {
        assumptions.push(parts![format!(
            "no power logged for {}: left out of energy and cost",
            d.without_power.join(", ")
        )]);
    }
    let (flow_estimated, mean_flow) = (d.flow_estimated, d.totals.mean_flow);
    if flow_estimated {
        assumptions
            .push(parts!["no flow meter: flow estimated from compressor states and rated free air delivery"]);
    }
    let u_flow = if flow_estimated { acc.flow_estimated_rel } else { acc.flow_rel };
    let mut warnings: Vec<Vec<Part>> = cs
        .iter()
        .filter(|c| acc.single_power_factor.contains(&c.tag))
        .map(|c| {
            parts![format!(
                "{}: power from current with one power factor for loaded and unloaded running; the power \
                 factor falls unloaded, so unloaded power is overstated (energy ±{:.0} %): give \
                 the power factor when unloaded, or a spot kW reading in each state",
                c.tag,
                100.0 * power_rel(acc, c)
            )]
        })
        .collect();
    warnings.extend(input.leak_estimates.iter().flat_map(|e| {
        e.warnings.iter().map(move |w| {
            parts![format!("field test {} ({}): {w}", e.test_id, super::model::human_label(&e.method))]
        })
    }));
    warnings.extend(leaks::disagreement_warning(&input.leak_estimates, acc));
    let energy_kwh = &d.energy.energy_kwh;
    let sys_energy: f64 = energy_kwh.iter().sum();
    let sys_mean_kw: f64 = d.energy.mean_kw.iter().sum();
    let u_power = if sys_energy > 0.0 {
        cs.iter().zip(energy_kwh).map(|(c, e)| (power_rel(acc, c) * e).powi(2)).sum::<f64>().sqrt()
            / sys_energy
    } else {
        acc.power_true_rel
    };
    methods.push(method(
        "energy_kwh",
        "Σ over compressors of ∫ P dt over the analysis steps logged",
        "time-weighted integration of synchronised logger intervals (ISO 11011 measurement practice)",
    ));
    let (sp, iso) = (d.system.sp, d.system.iso);
    let u_sp = quad(&[u_power, u_flow]);
    let u_iso = {
        let pm = d.system.iso_mean_pa;
        let ln_r = (pm / atm.0).ln().max(1e-6);
        quad(&[u_power, u_flow, acc.pressure_abs_bar() * 1e5 / pm / ln_r])
    };
    methods.push(method(
        "specific_power_kw_per_m3_min",
        "Σ P / Σ Q over the analysis steps where both power and flow were logged (interval-synchronous)",
        "ISO 1217 specific package input power, computed interval by interval",
    ));
    methods.push(method(
        "isothermal_efficiency",
        "Σ p_atm Q ln(p_header / p_atm) / Σ P over the analysis steps with power, flow and pressure logged",
        "ideal-gas isothermal compression work, W = p₁ V₁ ln(p₂/p₁) (any thermodynamics textbook)",
    ));
    let trim = d.trim;
    let part_load_model = machines::trim_model(d, input.system_volume_m3);
    let marginal = part_load_model.as_ref().map_or(0.0, |m| m.marginal_kw_per_m3_min);
    methods.push(method(
        "marginal_kw_per_m3_min",
        "slope dP/dQ of the trim machine's part-load model at its logged operating point: load/unload \
         on storage (cycle-mean power with the sump blow-down, from system volume per trim capacity \
         and pressure band); modulation 0.30 P/Q; variable speed the data-sheet curve's local slope; \
         start/stop P/Q",
        "US DOE compressed-air sourcebook: part-load behaviour by control, load/unload curves by storage \
         (checked against a time-domain blow-down cycle)",
    ));
    if let Some(m) = &part_load_model {
        let mut line = parts![PART_LOAD_ASSUMPTION];
        line.extend(m.describe_parts());
        assumptions.push(line);
    }

    let annual = baseline::annual(site, d);
    methods.extend(baseline::methods(&annual));
    let baseline = baseline::baseline(site, &annual, d.totals.peak_kw, sp, u_power);

    let heat_c = heat::compressor_heat(d, &annual.per_compressor_kwh, &input.costs.options);
    let comp_fig =
        machines::compressor_figures(d, acc, &annual.per_compressor_kwh, &heat_c, input.system_volume_m3);
    let machines = machines::machine_uses(d, annual.rule, &annual.per_compressor_kwh);
    let heat = heat::heat_value(site, &heat_c);
    if heat.no_heating_months {
        assumptions.push(parts![
            "heat use is space heating but no heating months are given: recovered heat is valued at nothing \
             until they are (or the heat use is set to process water)"
        ]);
    }
    methods.push(method_parts(
        "heat_rejected_kwh",
        parts![
            "input energy - m cp ΔT of the delivered air (ΔT ",
            recommend::temperature_difference(crate::core::heat::DEFAULT_DELIVERY_TEMPERATURE_RISE_K),
            ")"
        ],
        "energy balance of the package (first law); delivery rise common practice",
    ));
    methods.push(method(
        "recoverable_kwh",
        &format!(
            "heat rejected × share on the cooling path × recovery effectiveness ({:.2} air, {:.2} water), \
             machines that ran; valued as fuel displaced {}",
            input.costs.options.heat_recovery_effectiveness_air,
            input.costs.options.heat_recovery_effectiveness_water,
            heat::use_words(site)
        ),
        if site.heat_use == crate::core::heat::HeatUseKind::SpaceHeating
            && site.heating_degree_days_k_day.is_some()
        {
            "US DOE heat-recovery fact sheet (a unit recovers 50-90 % of the heat); ASHRAE Handbook, \
             Fundamentals, degree-day method (heating load ∝ heating degree-days)"
        } else {
            "US DOE heat-recovery fact sheet (a unit recovers 50-90 % of the heat)"
        },
    ));

    let leaks = leaks::leak_figures(
        &input.leak_estimates,
        &leaks::LeakContext {
            acc,
            mean_flow,
            q_prod: d.q_prod,
            q_nonprod: d.q_nonprod,
            p_prod: d.p_prod,
            p_nonprod: d.p_nonprod,
            atmosphere_pa: atm.0,
            purge_and_drains_m3_min: input.purge_and_drains_m3_min,
            production_share: d.prod_share,
            flow_estimated,
            u_flow,
            marginal_kw_per_m3_min: marginal,
            marginal_machine: trim.map(|t| cs[t].tag.as_str()),
            annual_running_hours: annual.running_hours,
            electricity_price_per_kwh: site.electricity_price_per_kwh,
        },
    );
    methods.push(method(
        "non_production_leak_flow_m3_min",
        "(mean flow out of production - purge and drains on record) × p_production,abs / p_non-production,abs",
        "choked leak flow is proportional to absolute upstream pressure (ideal-gas choked orifice flow, \
         API 520 Part I gas sizing); US DOE sourcebook, leaks fact sheet",
    ));
    methods.push(method(
        "annual_leak_cost",
        "leak flow × marginal specific power × annual running hours × price",
        "US DOE sourcebook, leaks fact sheet; priced at the marginal (trim) specific power, not the average",
    ));

    let mut pressure_fig = d.pressure.clone();
    pressure_fig.uncertainty_bar = acc.pressure_abs_bar();
    // The verdict comes before any measure: measures rest on annual figures and, for the pressure
    // measure, on a credible pressure log.
    let lowest_rated = cs.iter().map(|c| c.rated_pressure_bar_g).reduce(f64::min);
    let pressure_ok = sufficiency::pressure_credible(&pressure_fig, lowest_rated);
    let rated_kw_logged =
        cs.iter().zip(&d.power_logged).filter(|(_, &p)| p).map(|(c, _)| c.rated_power_kw).sum();
    let sufficiency = sufficiency::assess(
        &d.overlap,
        d.power_logged.iter().any(|&p| p),
        rated_kw_logged,
        pressure_ok.as_ref(),
    );
    let credible_mean_pressure = pressure_fig.mean_bar_g.filter(|_| pressure_ok == Some(Ok(())));
    methods.push(method(
        "sufficiency",
        "enough, thin or insufficient from the hours with every compressor's power logged together \
         (under 1 h: insufficient; under 167 h or fewer than 7 weekdays: thin), their share of the \
         logged period (under 10 %: insufficient; under 50 %: thin), the overlap of power with flow \
         and with pressure (under 50 % of the power hours: thin), a credible pressure log, and the \
         machines' logged power reaching 5 % of their rated power together (else no machine ran: \
         insufficient)",
        "ISO 11011 (a period representative of operation); one full production week of logging is \
         common practice",
    ));
    methods.push(method_parts(
        "pressure bands",
        parts![
            "p5/p50/p95 of header pressure; low limit = lowest rated pressure - ",
            recommend::pressure_drop(super::model::LOW_LIMIT_BELOW_RATED_BAR)
        ],
        "common practice",
    ));

    // The measures' words in SI for the JSON's strings (pages render the parts in their own units).
    let si = Fmt::new(UnitSystem::Si, site.air.atmosphere);
    let rel = |x: Option<f64>, base: Option<f64>| match (x, base) {
        (Some(x), Some(b)) if b > 0.0 => ((x - b) / b).abs(),
        _ => u_power,
    };
    let (energy_rel_low, energy_rel_high) = (
        rel(baseline.annual_energy_kwh_low, baseline.annual_energy_kwh),
        rel(baseline.annual_energy_kwh_high, baseline.annual_energy_kwh),
    );
    let credible_p5 = pressure_fig.p5_bar_g.filter(|_| credible_mean_pressure.is_some());
    let points_of_use: Vec<(String, f64)> = d
        .drops
        .iter()
        .filter(|x| x.to_point == PressurePoint::PointOfUse && credible_mean_pressure.is_some())
        .map(|x| (x.to.clone(), x.to_p5_bar_g))
        .collect();
    // The extra discharge pressure's price: the pressure measure's rule on the loaded energy (the
    // filters' excess is priced the same way, `analysis::transmission`).
    let discharge = recommend::DischargeBasis {
        machines: cs.iter().zip(&machines).map(|(c, m)| (c.stages, m.annual_delivering_kwh)).collect(),
        rule: input.costs.options.pressure_rule,
        air: site.air,
    };
    let pressure_drops: Vec<PressureDropFigure> = d
        .drops
        .iter()
        .map(|x| {
            let kwh = if x.mean_bar > 0.0 {
                discharge.drop_kwh(x.from_mean_bar_g - x.mean_bar, x.mean_bar).0
            } else {
                0.0
            };
            PressureDropFigure {
                from: x.from.clone(),
                to: x.to.clone(),
                mean_bar: x.mean_bar,
                at_peak_flow_bar: x.at_peak_flow_bar,
                from_point: x.from_point,
                to_point: x.to_point,
                duration_curve_bar: x.duration_bar.clone(),
                to_p5_bar_g: x.to_p5_bar_g,
                annual_energy_kwh: Some(kwh),
                annual_cost: Some(kwh * site.electricity_price_per_kwh),
            }
        })
        .collect();
    if !pressure_drops.is_empty() {
        methods.push(method(
            "transmission.pressure_drops",
            "drop = upstream − downstream pressure step by step; at high flow: mean over the steps at or above the \
             95th-percentile flow; cost = loaded energy × (1 % per 2 psi, or the isentropic-work ratio) for the mean drop",
            "US DOE compressed-air sourcebook (1 % of input per 2 psi; a well-designed system loses well under 10 % \
             of the discharge pressure on its way to the points of use)",
        ));
    }
    let recs = recommend::recommend(
        &RecommendInput {
            site,
            compressors: cs,
            machines: &machines,
            trim,
            marginal_kw_per_m3_min: marginal,
            annual_running_hours: annual.running_hours,
            annual_energy_kwh: annual.kwh,
            leak_flow_m3_min: leaks.adopted_leak_flow_m3_min,
            leak_flow_m3_min_low: leaks.adopted_leak_flow_m3_min_low,
            leak_flow_m3_min_high: leaks.adopted_leak_flow_m3_min_high,
            annual_energy_rel_low: energy_rel_low,
            annual_energy_rel_high: energy_rel_high,
            mean_pressure_bar_g: credible_mean_pressure,
            p5_pressure_bar_g: credible_p5,
            pressure_uncertainty_bar: pressure_fig.uncertainty_bar,
            low_limit_bar_g: pressure_fig.low_limit_bar_g,
            points_of_use,
            control: d.control.as_ref().map(|c| ControlCase {
                logged_annual_kwh: c.logged.annual(annual.rule) / 1000.0,
                modelled_annual_kwh: c.modelled.annual(annual.rule) / 1000.0,
                curve: c.curve.clone(),
                model: c.model.clone(),
                simultaneous_cycling_share: c.simultaneous_cycling_share,
            }),
            heat: heat.case,
            costs: input.costs,
            scenarios: input.scenarios,
            treatment: input.treatment,
        },
        &|p| display::render_parts(p, &si),
    );
    let measures_total = recommend::stack_total(&recs, &input.costs.options.excluded);
    methods.push(method(
        "measures_total",
        "each measure priced on the plant the measures before it leave (leaks repaired, pressure lowered, \
         idle machines off, trim replaced); heat recovery on the energy left after the electrical \
         measures; total = Σ stacked savings, its range the sum of the ranges",
        "US DOE compressed-air sourcebook (interactions of measures); common practice",
    ));

    assumptions.push(parts![
        format!(
            "instrument accuracy: true power ±{:.0} %, current-derived power ±{:.0} %, flow ±{:.0} % of reading, \
             pressure ±{:.1} % of a ",
            acc.power_true_rel * 100.0,
            acc.power_current_rel * 100.0,
            acc.flow_rel * 100.0,
            acc.pressure_rel_of_span * 100.0,
        ),
        recommend::pressure_drop(acc.pressure_span_bar),
        format!(" span, system volume ±{:.0} %; combined in quadrature", acc.volume_rel * 100.0)
    ]);
    assumptions.push(parts![
        "delivery air ",
        recommend::temperature_difference(crate::core::heat::DEFAULT_DELIVERY_TEMPERATURE_RISE_K),
        " above inlet for the heat balance (common practice)"
    ]);

    let full_load_sp = machines::full_load_specific_power_at_pressure(d);
    methods.push(method(
        "part_load_penalty_percent",
        "(system specific power / Σ air_i × P_sheet,i(p_loaded,i) / Q_rated,i ÷ Σ air_i - 1) × 100, over the machines with logged power",
        "data-sheet full-load power (ISO 1217) corrected to the logged pressure by the ratio of isentropic work; the rest is control (part-load) loss",
    ));
    if let Some(why) = &d.sp_note {
        assumptions.push(parts![why.clone()]);
    }
    let (e_lo, e_hi) = band(sys_energy, u_power);
    let (p_lo, p_hi) = band(sys_mean_kw, u_power);
    let (a_lo, a_hi) = d.totals.air_m3.map(|a| band(a, u_flow)).unzip();
    let (q_lo, q_hi) = mean_flow.map(|q| band(q, u_flow)).unzip();
    let mut summary = Summary {
        period: d.period.clone(),
        coverage: d.coverage.clone(),
        flow_source: d.flow_source,
        system: SystemFigures {
            energy_kwh: sys_energy,
            energy_kwh_low: e_lo,
            energy_kwh_high: e_hi,
            mean_power_kw: sys_mean_kw,
            mean_power_kw_low: p_lo,
            mean_power_kw_high: p_hi,
            peak_power_kw: d.totals.peak_kw,
            peak_power_window_s: d.totals.peak_kw_window,
            air_m3: d.totals.air_m3,
            air_m3_low: a_lo,
            air_m3_high: a_hi,
            mean_flow_m3_min: mean_flow,
            mean_flow_m3_min_low: q_lo,
            mean_flow_m3_min_high: q_hi,
            peak_flow_m3_min: d.totals.peak_flow,
            peak_flow_window_s: d.totals.peak_flow_window,
            flow_source: d.flow_source,
            estimated: flow_estimated,
            specific_power_kw_per_m3_min: sp,
            specific_power_kw_per_m3_min_low: sp.map(|s| s * (1.0 - u_sp)),
            specific_power_kw_per_m3_min_high: sp.map(|s| s * (1.0 + u_sp)),
            specific_power_kw_per_100cfm: sp.map(kw_per_100cfm),
            specific_power_kwh_per_m3: sp.map(|s| s / 60.0),
            rated_specific_power_kw_per_m3_min: d.rated_sp,
            full_load_specific_power_at_pressure_kw_per_m3_min: full_load_sp,
            part_load_penalty_percent: sp.zip(full_load_sp).map(|(s, f)| (s / f - 1.0) * 100.0),
            specific_power_note: d.sp_note.clone(),
            isothermal_efficiency: iso,
            isothermal_efficiency_low: iso.map(|x| x * (1.0 - u_iso)),
            isothermal_efficiency_high: iso.map(|x| x * (1.0 + u_iso)),
            part_load_curve: d.system.part_load_curve.clone(),
            compressors_without_power: d.without_power.clone(),
        },
        pressure: pressure_fig,
        part_load_model,
        compressors: comp_fig,
        demand: d.demand.clone(),
        baseline,
        leaks,
        heat: heat.figures,
        recommendations: recs,
        measures_total,
        transmission: crate::core::treatment::Transmission { pressure_drops, ..Default::default() },
        demand_split: None,
        discharge: Some(discharge),
        sufficiency,
        methods,
        assumptions: assumptions.iter().map(|a| figures::si_words(a)).collect(),
        warnings: warnings.iter().map(|w| figures::si_words(w)).collect(),
        assumption_parts: assumptions,
        warning_parts: warnings,
    };
    if let Some(why) = demand::flow_unknown(d) {
        sufficiency::withhold_flow(&mut summary.sufficiency.withheld, &why);
    }
    sufficiency::apply(&mut summary, site.demand_charge_per_kw_month != 0.0);
    summary
}
