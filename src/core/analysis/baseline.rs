/*!
The baseline: the logged figures annualised and priced.

- **Annualisation**: if `operating_hours_per_year` is set, mean × those hours; else, for a log of at
  least a week, the logged weekly pattern (mean of each weekday-hour cell; a cell never logged takes the
  overall mean) repeated over `operating_weeks_per_year`; for a shorter log, the mean × 168 h ×
  weeks. A log's length is counted on the site's clock, so a week over a daylight-saving change (167
  or 169 h elapsed) is a whole week. Annual cost = energy × price + demand charge × peak 15-min kW × 12
  (US DOE compressed-air tip sheet 1, annual energy cost).
- **Ranges**: annual energy carries the meters' uncertainty and the extrapolation's, in quadrature
  (JCGM 100:2008, uncorrelated inputs). The extrapolation's: with two or more whole weeks logged, the
  standard error of their mean power, s / (mean √N) (a Type A evaluation, GUM 4.2; the logged weeks
  taken as a sample of the operating year's); with one week, [`ONE_WEEK_EXTRAPOLATION_REL`]; with less,
  [`PART_WEEK_EXTRAPOLATION_REL`] (our stated defaults, module constants). The annual cost carries the
  same on its energy part and the meters' on the demand charge.
*/

use crate::core::model::SiteSpec;
use crate::core::states::State;
use crate::core::units::M3_PER_FT3;

use super::calendar::{Calendar, NO_CELL};
use super::figures::{Baseline, Method};
use super::machines::Logged;
use super::uncertainty::{band, quad};
use super::{method, DataFigures};

/// Relative standard uncertainty of a year extrapolated from one logged week: 10 %. Our stated
/// default, not a published figure: the week-to-week and seasonal swing of a plant's compressed-air
/// energy (order books, holidays, heating and cooling of the plant) is commonly of this order (from
/// memory); logging several weeks replaces it with their measured spread.
pub const ONE_WEEK_EXTRAPOLATION_REL: f64 = 0.10;
/// The same for a log shorter than a week (weekdays unseen): 20 %, our stated default.
pub const PART_WEEK_EXTRAPOLATION_REL: f64 = 0.20;

/// The extrapolation's relative uncertainty from the mean power of each whole logged week, and its
/// words (module doc).
pub(super) fn extrapolation(weekly_mean_kw: &[f64], local_hours: f64) -> (f64, String) {
    let n = weekly_mean_kw.len();
    if n >= 2 {
        let mean = weekly_mean_kw.iter().sum::<f64>() / n as f64;
        let var = weekly_mean_kw.iter().map(|w| (w - mean).powi(2)).sum::<f64>() / (n - 1) as f64;
        let u = if mean > 0.0 { var.sqrt() / (mean * (n as f64).sqrt()) } else { 0.0 };
        (u, format!("the spread of the {n} whole weeks logged: s / (mean √{n}) = ±{:.1} %", 100.0 * u))
    } else if n == 1 || local_hours >= 167.0 {
        let u = ONE_WEEK_EXTRAPOLATION_REL;
        (u, format!("one week logged: a stated default of ±{:.0} % for the weeks not logged", 100.0 * u))
    } else {
        let u = PART_WEEK_EXTRAPOLATION_REL;
        (
            u,
            format!(
                "less than a week logged: a stated default of ±{:.0} % for the time not logged",
                100.0 * u
            ),
        )
    }
}

/// How logged means become annual figures (module doc).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(super) enum AnnualRule {
    Hours(f64),
    Weekly(f64),
    Scaled(f64),
}

impl AnnualRule {
    pub(super) fn hours(self) -> f64 {
        match self {
            Self::Hours(h) => h,
            Self::Weekly(w) | Self::Scaled(w) => 168.0 * w,
        }
    }
}

/// A binned series summed per weekday-hour cell: all that its annual figure needs under any rule,
/// so an edit of the operating year re-prices instead of passing over the bins again.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct CellSums {
    sum: [f64; 168],
    n: [u32; 168],
    /// Over all cells, summed in bin order.
    all: f64,
    count: usize,
}

impl CellSums {
    /// The sums of the series whose value in bin `k` is `value(k)`, without making it (the masked
    /// series of the measures would otherwise cost 4 bytes a bin each).
    pub(super) fn of(cells: &[u8], value: impl Fn(usize) -> f32) -> Self {
        let mut c = Self { sum: [0.0; 168], n: [0; 168], all: 0.0, count: 0 };
        for (k, &cell) in cells.iter().enumerate() {
            let v = value(k);
            if v.is_finite() && cell != NO_CELL {
                c.sum[cell as usize] += v as f64;
                c.n[cell as usize] += 1;
                c.all += v as f64;
                c.count += 1;
            }
        }
        c
    }

    /// Annual integral (value × h) under the rule (module doc).
    pub(super) fn annual(&self, rule: AnnualRule) -> f64 {
        if self.count == 0 {
            return 0.0;
        }
        let mean = self.all / self.count as f64;
        match rule {
            AnnualRule::Hours(h) => mean * h,
            AnnualRule::Scaled(w) => mean * 168.0 * w,
            AnnualRule::Weekly(w) => {
                (0..168)
                    .map(|c| if self.n[c] > 0 { self.sum[c] / self.n[c] as f64 } else { mean })
                    .sum::<f64>()
                    * w
            }
        }
    }
}

/// How the site's operating year turns a log of `hours` into annual figures, and its words.
pub(super) fn annual_rule(site: &SiteSpec, hours: f64) -> (AnnualRule, String) {
    let rule = match site.operating_hours_per_year {
        Some(h) => AnnualRule::Hours(h),
        // A logger week rarely spans exactly 168 h (its first reading comes one interval after the
        // hour); a weekday-hour cell without data takes the overall mean (see `CellSums::annual`).
        None if hours >= 167.0 => AnnualRule::Weekly(site.operating_weeks_per_year),
        None => AnnualRule::Scaled(site.operating_weeks_per_year),
    };
    let text = match rule {
        AnnualRule::Hours(h) => format!("mean over the log × {h} operating hours per year"),
        AnnualRule::Weekly(w) => {
            format!("the logged weekly pattern (weekday × hour means) repeated over {w} weeks")
        }
        AnnualRule::Scaled(w) => format!("log shorter than a week: mean over the log × 168 h × {w} weeks"),
    };
    (rule, text)
}

/// The operating year applied to the data figures.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Annual {
    pub rule: AnnualRule,
    pub rule_text: String,
    /// kWh/yr of each compressor.
    pub per_compressor_kwh: Vec<f64>,
    /// kWh/yr of the system.
    pub kwh: f64,
    /// Hours a year with some compressor running (every hour without states).
    pub running_hours: f64,
    /// Relative standard uncertainty of extrapolating the log to the year, and its words.
    pub extrapolation_rel: f64,
    pub extrapolation_text: String,
    pub weeks_logged: usize,
}

/// Annual figures.
pub(super) fn annual(site: &SiteSpec, d: &DataFigures) -> Annual {
    let (rule, rule_text) = annual_rule(site, d.local_hours);
    let (extrapolation_rel, extrapolation_text) = extrapolation(&d.weekly_mean_kw, d.local_hours);
    let annual_kwh_c: Vec<f64> =
        d.power_cells.iter().map(|c| c.as_ref().map_or(0.0, |c| c.annual(rule) / 1000.0)).collect();
    let annual_kwh: f64 = annual_kwh_c.iter().sum();
    let annual_running_hours = d.running_cells.as_ref().map_or(rule.hours(), |c| c.annual(rule));
    Annual {
        rule,
        rule_text,
        per_compressor_kwh: annual_kwh_c,
        kwh: annual_kwh,
        running_hours: annual_running_hours,
        extrapolation_rel,
        extrapolation_text,
        weeks_logged: d.weekly_mean_kw.len(),
    }
}

/// The methods of the annual figures, in the summary's order.
pub(super) fn methods(a: &Annual) -> [Method; 3] {
    [
        method(
            "annual_energy_kwh",
            &a.rule_text,
            "the logged weekly pattern repeated over the operating weeks (common practice for a representative logging period)",
        ),
        method(
            "annual_cost",
            "annual kWh × price + demand charge × peak 15-min kW × 12",
            "US DOE compressed-air tip sheet 1 (annual energy cost)",
        ),
        method(
            "cost_per_1000_m3",
            "specific power / 60 (kWh/m³) × 1000 × price; per\u{a0}1000\u{a0}ft³ = kW/100\u{a0}cfm / 6 × price",
            "kW/(m³/min) = kW/100 cfm × 0.353147; US DOE tip sheet 1",
        ),
    ]
}

/// The baseline: annual energy, cost and CO₂, with ± one combined uncertainty of the meters (power,
/// `u_power`) and of the extrapolation (module doc).
/// Without a peak (`None`) the demand charge, and with it the annual cost, is known only when the
/// site has no demand charge.
pub(super) fn baseline(
    site: &SiteSpec,
    a: &Annual,
    peak_kw: Option<f64>,
    sp: Option<f64>,
    u_power: f64,
) -> Baseline {
    let annual_kwh = a.kwh;
    let energy_cost = annual_kwh * site.electricity_price_per_kwh;
    let rate = site.demand_charge_per_kw_month;
    let demand_charge = if rate == 0.0 { Some(0.0) } else { peak_kw.map(|p| rate * p * 12.0) };
    let annual_cost = demand_charge.map(|d| energy_cost + d);
    let cost_per_1000_m3 = sp.map(|s| s / 60.0 * 1000.0 * site.electricity_price_per_kwh);
    let u_energy = quad(&[u_power, a.extrapolation_rel]);
    let (ae_lo, ae_hi) = band(annual_kwh, u_energy);
    let ac_band = demand_charge.zip(annual_cost).map(|(dc, c)| {
        let u = (energy_cost * u_energy).hypot(dc * u_power);
        (c - u, c + u)
    });
    Baseline {
        rule: a.rule_text.clone(),
        annual_hours: a.rule.hours(),
        annual_running_hours: a.running_hours,
        annual_energy_kwh: Some(annual_kwh),
        annual_energy_kwh_low: Some(ae_lo),
        annual_energy_kwh_high: Some(ae_hi),
        meter_relative_uncertainty: u_power,
        extrapolation_relative_uncertainty: a.extrapolation_rel,
        extrapolation_rule: a.extrapolation_text.clone(),
        weeks_logged: a.weeks_logged,
        annual_energy_cost: Some(energy_cost),
        annual_demand_charge: demand_charge,
        annual_cost,
        annual_cost_low: ac_band.map(|b| b.0),
        annual_cost_high: ac_band.map(|b| b.1),
        cost_per_1000_m3,
        cost_per_1000_ft3: cost_per_1000_m3.map(|c| c * M3_PER_FT3),
        annual_co2_t: Some(annual_kwh * site.grid_co2_kg_per_kwh / 1000.0),
        electricity_price_per_kwh: site.electricity_price_per_kwh,
        currency: site.currency.clone(),
    }
}

/// 1 while some compressor runs, 0 while every logged one is known to be stopped, as cell sums
/// (`None`: no states, every hour counts).
pub(super) fn running_cells(cal: &Calendar, logged: &Logged) -> Option<CellSums> {
    let st = &logged.states;
    let running_any = |k: usize| {
        let mut known = false;
        for s in st.iter().flatten() {
            match s[k] {
                State::Unknown => {}
                x if x.running() => return 1.0,
                _ => known = true,
            }
        }
        if known {
            0.0
        } else {
            f32::NAN
        }
    };
    st.iter().flatten().next().is_some().then(|| CellSums::of(&cal.cells, running_any))
}

/// Power, W, per compressor as cell sums (`None`: not logged).
pub(super) fn power_cells(cal: &Calendar, logged: &Logged) -> Vec<Option<CellSums>> {
    logged.powers.iter().map(|p| p.map(|p| CellSums::of(&cal.cells, |k| p[k]))).collect()
}
