/*!
Measures on the machines themselves: replacing a compressor that draws more than its data sheet, and
recovering the heat of compression.
*/

use super::*;

/// The machines flagged against their data sheet (indices).
pub(in crate::core::recommend) fn replace_candidates(r: &RecommendInput) -> Vec<usize> {
    r.compressors
        .iter()
        .zip(r.machines)
        .enumerate()
        .filter(|(_, (_, m))| {
            match (m.mean_loaded_power_kw, m.datasheet_power_at_pressure_kw, m.loaded_pressure_bar_g) {
                (Some(p_meas), Some(p_sheet), Some(_)) => {
                    p_sheet > 0.0 && p_meas > (1.0 + REPLACE_ABOVE_DATASHEET) * p_sheet
                }
                _ => false,
            }
        })
        .map(|(i, _)| i)
        .collect()
}

pub(in crate::core::recommend) fn replace_compressor(
    r: &RecommendInput,
    p: &Plant,
    first: &Plant,
    i: usize,
) -> Option<(Draft, Plant)> {
    let (spec, m) = (&r.compressors[i], &r.machines[i]);
    let (Some(p_meas), Some(p_sheet), Some(p_bar_g)) =
        (m.mean_loaded_power_kw, m.datasheet_power_at_pressure_kw, m.loaded_pressure_bar_g)
    else {
        return None;
    };
    if p.trim_replaced && Some(i) == r.trim {
        return None;
    }
    let excess_kw = p_meas - p_sheet;
    let percent = (p_meas / p_sheet - 1.0) * 100.0;
    let d0 = first.delivering_kwh.get(i).copied().unwrap_or(0.0);
    let ratio = if d0 > 0.0 { p.delivering_kwh[i] / d0 } else { 1.0 };
    let kwh = excess_kw * m.annual_loaded_hours * ratio;
    let mut next = p.clone();
    if i < next.energy_kwh.len() {
        next.energy_kwh[i] = (next.energy_kwh[i] - kwh).max(0.0);
        next.delivering_kwh[i] = (next.delivering_kwh[i] - kwh).max(0.0);
    }
    // The meter's error on the measured power is all in the difference.
    let amp = if excess_kw > 0.0 { p_meas / excess_kw } else { 1.0 };
    let (lo, hi) = (
        quad(&[r.annual_energy_rel_low * amp, r.annual_energy_rel_low]),
        quad(&[r.annual_energy_rel_high * amp, r.annual_energy_rel_high]),
    );
    let (low_kwh, high_kwh) = band(kwh, lo, hi);
    let draft = Draft {
        kind: MeasureKind::ReplaceCompressor,
        title: text![format!("Overhaul or replace {}", spec.tag)],
        description: text![
            format!("{} draws {p_meas:.1} kW loaded at ", spec.tag),
            bar_g(p_bar_g),
            format!(", {percent:.0} % above the {p_sheet:.1} kW its data sheet gives at that pressure."),
        ],
        saving_kwh: kwh,
        low_kwh,
        high_kwh,
        acts_on_kwh: p.energy_kwh.get(i).copied().unwrap_or(m.annual_energy_kwh),
        money: None,
        cost_ctx: CostContext { rated_kw: spec.rated_power_kw, ..Default::default() },
        basis: vec![
            text![format!("measured loaded power {p_meas:.2} kW")],
            text!["mean pressure while loaded ", bar_g(p_bar_g)],
            text![
                format!("data-sheet package power {:.2} kW at ", spec.rated_power_kw),
                bar_g(spec.rated_pressure_bar_g),
                format!(", {p_sheet:.2} kW at the logged pressure")
            ],
            text![format!("loaded hours {:.0} h/yr, × {ratio:.3} for the loaded energy left", Grouped(m.annual_loaded_hours))],
        ],
        formula: "saving = loaded hours × (measured loaded kW - data-sheet full-load kW corrected to the loaded pressure by the ratio of isentropic work) × loaded energy left / logged",
        source: "ISO 1217 data-sheet package input power; correction by isentropic compression work; threshold 10 % above it (common practice: beyond ISO 1217 annex C test tolerances of 4-8 %, from memory, and instrument accuracy)",
        method: "measured loaded power against the data sheet at the same pressure; range from the power meter's error on the difference (ISO 1217)",
        caution: Some("check the measurement (power factor, clamp placement) and the discharge pressure first".into()),
        scenario_id: None,
    };
    Some((draft, next))
}

/// Heat recovery, valued on the energy `p` leaves (the plant after the electrical measures).
pub(in crate::core::recommend) fn recover_heat(
    r: &RecommendInput,
    p: &Plant,
    first: &Plant,
) -> Option<Draft> {
    let h = r.heat.as_ref()?;
    let ratio = |i: usize| {
        let e0 = first.energy_kwh.get(i).copied().unwrap_or(0.0);
        if e0 > 0.0 {
            p.energy_kwh[i] / e0
        } else {
            1.0
        }
    };
    let left = |v: &[f64]| v.iter().enumerate().map(|(i, x)| x * ratio(i)).sum::<f64>();
    let (rec, rec_lo, rec_hi) = (
        left(&h.per_machine_recoverable_kwh),
        left(&h.per_machine_recoverable_kwh_low),
        left(&h.per_machine_recoverable_kwh_high),
    );
    let eff = r.site.heater_efficiency;
    if eff.is_nan() || eff <= 0.0 {
        return None;
    }
    let fuel = |rec: f64| rec * h.used_share / eff;
    let (f, f_lo, f_hi) = (fuel(rec), fuel(rec_lo), fuel(rec_hi));
    let price = r.site.heating_fuel_price_per_kwh;
    let (low_kwh, high_kwh) =
        (f_lo * (1.0 - r.annual_energy_rel_low).max(0.0), f_hi * (1.0 + r.annual_energy_rel_high));
    Some(Draft {
        kind: MeasureKind::RecoverHeat,
        title: text![format!("Recover compressor heat for {}", h.use_kind.as_str().replace('_', " "))],
        description: text![format!(
            "Use about {:.0} kWh/yr of the compressors' heat in place of fuel ({:.0} kWh/yr of fuel).",
            Grouped(rec * h.used_share),
            Grouped(f)
        )],
        saving_kwh: f,
        low_kwh,
        high_kwh,
        // Fuel displaced, not electricity: bounded by the recoverable heat upstream.
        acts_on_kwh: f,
        money: Some(f * price),
        cost_ctx: CostContext { recoverable_heat_kw: h.recoverable_kw, ..Default::default() },
        basis: vec![
            text![format!("recoverable heat of the running machines {:.0} kWh/yr on the energy left after the electrical measures", Grouped(rec))],
            text![format!(
                "recovery effectiveness {:.2} (air cooling), {:.2} (water cooling)",
                r.costs.options.heat_recovery_effectiveness_air, r.costs.options.heat_recovery_effectiveness_water
            )],
            text![format!("share of the year the heat is used {:.2} ({})", h.used_share, h.use_kind.as_str().replace('_', " "))],
            text![format!("heater efficiency {:.2}", eff)],
            text![format!("fuel price {} {} per kWh", price, r.site.currency)],
            text![format!("recoverable heat {:.1} kW at full load (running machines)", h.recoverable_kw)],
        ],
        formula: "saving = (input - m cp ΔT) × effectiveness × share used / heater efficiency × fuel price",
        source: "US DOE compressed-air sourcebook, heat-recovery fact sheet (a unit recovers 50-90 % of the heat)",
        method: "heat rejected by the energy balance × the unit's effectiveness, used in the months of use; range from the effectiveness ±0.10 and the annual hours (US DOE heat-recovery fact sheet)",
        caution: Some(safety::HEAT_RECOVERY_MEASURE_CAUTION.into()),
        scenario_id: None,
    })
}
