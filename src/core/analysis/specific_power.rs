/*!
The system's flow, specific power and isothermal efficiency, and each compressor's air and specific
power beside its data sheet.

- **Flow**: the system flow meters if any (`flow_source = "measured"`), else the flow estimated from
  each machine's states (`"estimated_from_compressor_states"`, `estimated: true` wherever shown).
- **Specific power** is interval-synchronous: Σ power / Σ flow over the bins where both exist, never a
  ratio of averages over different periods (ISO 1217 defines specific package input power as input
  power over free-air delivery at the same operating point; computing it bin by bin is common
  practice, since the product of averages is not the average of products).
- **Only what was measured**: a compressor whose power is not logged is left out of both sides, its
  air and its kW: its own flow meter is taken out of a system meter, and where it has none the
  figure is refused with the reason (`specific_power_note`), never mixed (the air of two machines
  over the kW of one would read about half the truth). Without a system meter the flow is the
  machines' own meters: each machine with logged power needs one, or the figure is refused.
- **Isothermal efficiency**: Σ isothermal power of the logged flow between the site atmosphere and the
  header pressure / Σ logged power, over bins where all three exist (ideal-gas isothermal work).
*/

use crate::core::model::CompressorSpec;
use crate::core::series::{integrate_weighted, sum_columns, Frame, Partial};
use crate::core::states::State;
use crate::core::thermo;
use crate::core::units::{FreeAirFlow, Power, PressureAbs};

use super::figures::{FlowSource, PartLoadPoint};
use super::machines::Logged;

/// The system flow, m³/s free air per bin, and where it comes from.
pub(super) struct SystemFlow {
    pub values: Option<Vec<f32>>,
    /// The metered flow's partly covered bins (one meter only; [`Frame::system_flow_partial`]).
    pub partial: Vec<Partial>,
    pub source: FlowSource,
    pub estimated: bool,
}

/// The metered system flow when there is one (taken, not copied), else the compressors' estimate:
/// none when a machine's power is known only from an energy counter (`FrameColumn::from_counter`),
/// whose readings are means over each interval and show no loading or unloading, so that machine's
/// air cannot be read from its states (a quarter-hour counter at 26 kW read 0.000 m³/min).
pub(super) fn system_flow(frame: &Frame, logged: &Logged) -> SystemFlow {
    let n = frame.grid.len;
    let partial = frame.system_flow_partial().to_vec();
    let (values, source, estimated) = match frame.system_flow() {
        Some(q) => (Some(q), FlowSource::Measured, false),
        None => (
            (!counter_logged(frame, logged))
                .then(|| sum_columns(n, logged.est_flow.iter().flatten().map(|v| v.as_slice())))
                .flatten(),
            FlowSource::EstimatedFromCompressorStates,
            true,
        ),
    };
    let partial = if estimated { Vec::new() } else { partial };
    SystemFlow { values, partial, source, estimated }
}

/// Whether some compressor's logged power is only an energy counter (its states unknown).
pub(super) fn counter_logged(frame: &Frame, logged: &Logged) -> bool {
    (0..logged.powers.len())
        .any(|i| logged.powers[i].is_some() && frame.power_of(i).is_some_and(|c| c.from_counter))
}

/// The flow that specific power may divide the logged power by: the air of the compressors whose
/// power is logged, and only theirs (module doc). With every compressor's power logged, or with the
/// flow estimated from the states of the logged machines, it is the system flow. Otherwise a metered
/// flow that holds the air of a machine without logged power has that machine's own meter taken
/// out, or, where the machine has none, the figure is refused with the reason.
pub(super) fn flow_for_specific_power<'a>(
    frame: &Frame,
    cs: &[CompressorSpec],
    logged: &Logged,
    flow: &'a SystemFlow,
) -> Result<Option<std::borrow::Cow<'a, [f32]>>, String> {
    use std::borrow::Cow;
    let Some(q) = flow.values.as_deref() else { return Ok(None) };
    if flow.estimated {
        return Ok(Some(Cow::Borrowed(q)));
    }
    let has_system_meter =
        frame.columns.iter().any(|c| c.signal == crate::core::series::Signal::Flow && c.compressor.is_none());
    let powered = |i: usize| logged.powers[i].is_some();
    if has_system_meter {
        if logged.without_power.is_empty() {
            return Ok(Some(Cow::Borrowed(q)));
        }
        // The system meter minus the unpowered machines' own meters.
        let unpowered: Vec<usize> = (0..cs.len()).filter(|&i| !powered(i)).collect();
        let missing: Vec<&str> =
            unpowered.iter().filter(|&&i| frame.flow_of(i).is_none()).map(|&i| cs[i].tag.as_str()).collect();
        if !missing.is_empty() {
            return Err(format!(
                "specific power refused: no power is logged for {} and the metered flow holds their air, \
                 which cannot be taken out without a meter of their own",
                missing.join(", ")
            ));
        }
        let mut out = q.to_vec();
        for &i in &unpowered {
            let own = &frame.flow_of(i).expect("checked above").values;
            for (a, &b) in out.iter_mut().zip(own) {
                *a -= b;
            }
        }
        return Ok(Some(Cow::Owned(out)));
    }
    // No system meter: the flow is the machines' own meters summed. Keep the meters of the machines
    // with logged power; each of them needs one, or its kW would be divided by others' air.
    let unmetered: Vec<&str> = (0..cs.len())
        .filter(|&i| powered(i) && frame.flow_of(i).is_none())
        .map(|i| cs[i].tag.as_str())
        .collect();
    if !unmetered.is_empty() {
        return Err(format!(
            "specific power refused: {} have logged power but no flow meter, and there is no system meter",
            unmetered.join(", ")
        ));
    }
    if logged.without_power.is_empty() {
        return Ok(Some(Cow::Borrowed(q)));
    }
    let meters = (0..cs.len()).filter(|&i| powered(i)).filter_map(|i| frame.flow_of(i));
    Ok(sum_columns(frame.grid.len, meters.map(|c| c.values.as_slice())).map(Cow::Owned))
}

/// The system's interval-synchronous figures.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct SystemSpecificPower {
    /// kW/(m³/min).
    pub sp: Option<f64>,
    pub part_load_curve: Vec<PartLoadPoint>,
    pub iso: Option<f64>,
    /// Mean header pressure over the isothermal bins, Pa(abs) (sets its uncertainty).
    pub iso_mean_pa: f64,
}

/// Interval-synchronous specific power, part-load curve, isothermal efficiency.
pub(super) fn system_specific_power(
    n: usize,
    total_power: Option<&[f32]>,
    flow: Option<&[f32]>,
    pressure: Option<&[f32]>,
    atm: PressureAbs,
) -> SystemSpecificPower {
    let (mut sp_p, mut sp_q) = (0.0, 0.0);
    // The header pressure's sum and count over those bins (its mean sets the pressure's share of
    // the isothermal efficiency's uncertainty).
    let (mut iso_w, mut iso_p, mut iso_pa_sum, mut iso_pa_n) = (0.0, 0.0, 0.0f64, 0usize);
    let q_max =
        flow.map_or(0.0, |q| q.iter().filter(|x| x.is_finite()).fold(0.0f64, |a, &b| a.max(b as f64)));
    let mut curve = [(0.0f64, 0.0f64, 0usize); 10];
    let mut both = 0usize;
    if let (Some(p), Some(q)) = (total_power, flow) {
        for i in 0..n {
            let (pw, qq) = (p[i] as f64, q[i] as f64);
            if !(pw.is_finite() && qq.is_finite()) {
                continue;
            }
            sp_p += pw;
            sp_q += qq;
            both += 1;
            if q_max > 0.0 {
                let k = ((qq / q_max * 10.0) as usize).min(9);
                curve[k].0 += pw;
                curve[k].1 += qq;
                curve[k].2 += 1;
            }
            if let Some(pr) = pressure {
                let pa = pr[i] as f64;
                if pa.is_finite() && pa > atm.0 && pw > 0.0 {
                    iso_w += thermo::isothermal_power(FreeAirFlow(qq), atm, PressureAbs(pa)).0;
                    iso_p += pw;
                    iso_pa_sum += pa;
                    iso_pa_n += 1;
                }
            }
        }
    }
    let sp = (sp_q > 0.0).then(|| (sp_p / 1000.0) / (sp_q * 60.0));
    let part_load_curve: Vec<PartLoadPoint> = curve
        .iter()
        .enumerate()
        .filter(|(_, c)| c.2 > 0 && c.1 > 0.0)
        .map(|(k, c)| PartLoadPoint {
            flow_m3_min: (k as f64 + 0.5) * q_max / 10.0 * 60.0,
            specific_power_kw_per_m3_min: (c.0 / 1000.0) / (c.1 * 60.0),
            share_of_time: c.2 as f64 / both.max(1) as f64,
        })
        .collect();
    let iso = (iso_p > 0.0).then(|| thermo::isothermal_efficiency(Power(iso_w), Power(iso_p)));
    let iso_mean_pa = if iso_pa_n == 0 { 8e5 } else { iso_pa_sum / iso_pa_n as f64 };
    SystemSpecificPower { sp, part_load_curve, iso, iso_mean_pa }
}

/// One compressor's delivered air and specific power.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) struct CompressorAir {
    /// Air delivered over the log, m³ free air (0 without power).
    pub air_m3: f64,
    /// Σ P / Σ Q over its bins with both, kW/(m³/min).
    pub specific_power: Option<f64>,
    /// Its flow is estimated from its states (no meter on the machine).
    pub estimated: bool,
    /// Specific power over its loaded bins (else its loaded power over the rated flow).
    pub full_load: Option<f64>,
}

/// Air per compressor (meter on the machine, else estimated) and the data-sheet comparison.
pub(super) fn compressor_air(frame: &Frame, cs: &[CompressorSpec], logged: &Logged) -> Vec<CompressorAir> {
    let grid = frame.grid;
    let n = grid.len;
    let mut out = Vec::new();
    for (i, c) in cs.iter().enumerate() {
        let own = frame.flow_of(i).map(|col| col.values.as_slice());
        let q = own.or(logged.est_flow[i].as_deref());
        let estimated = own.is_none();
        let mut air_m3 = 0.0;
        let (mut sp_pp, mut sp_qq, mut fl_p, mut fl_q) = (0.0, 0.0, 0.0, 0.0);
        if let (Some(p), Some(q), Some(s)) = (logged.powers[i], q, &logged.states[i]) {
            for k in 0..n {
                let (pw, qq) = (p[k] as f64, q[k] as f64);
                if pw.is_finite() && qq.is_finite() {
                    sp_pp += pw;
                    sp_qq += qq;
                    if s[k] == State::Loaded {
                        fl_p += pw;
                        fl_q += qq;
                    }
                }
            }
            let partial = frame.flow_of(i).map_or(&[][..], |c| c.partial.as_slice());
            air_m3 = integrate_weighted(&grid, q, partial).total;
        }
        let sp_c = (sp_qq > 0.0).then(|| (sp_pp / 1000.0) / (sp_qq * 60.0));
        let full = (fl_q > 0.0).then(|| (fl_p / 1000.0) / (fl_q * 60.0));
        // Without a loaded bin with flow, the loaded power over the rated flow.
        let full = full.or_else(|| {
            logged.stats[i].as_ref().and_then(|s| s.mean_loaded_power_kw).map(|p| p / c.rated_flow_m3_min)
        });
        out.push(CompressorAir { air_m3, specific_power: sp_c, estimated, full_load: full });
    }
    out
}

/// Air-weighted data-sheet specific power of the machines that ran.
pub(super) fn rated_specific_power(cs: &[CompressorSpec], air: &[CompressorAir]) -> Option<f64> {
    let air_total: f64 = air.iter().map(|a| a.air_m3).sum();
    (air_total > 0.0).then(|| {
        cs.iter().zip(air).map(|(c, a)| c.rated_specific_power_kw_per_m3_min() * a.air_m3).sum::<f64>()
            / air_total
    })
}
