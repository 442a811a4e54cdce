//! The leak figures that cannot be a part of their whole: a leak flow above the mean demand is no
//! share of it, and leaks priced over the year above the plant's whole energy are no part of it.

use super::*;

/// The adopted leak flow's shares of demand, withheld, and the band read from them ("leaks above
/// 20 % of demand ...") with them.
pub(super) fn clear_shares(l: &mut crate::core::analysis::figures::LeakFigures) {
    l.band = None;
    l.band_description = None;
    for f in [
        &mut l.share_of_mean_demand,
        &mut l.share_of_mean_demand_low,
        &mut l.share_of_mean_demand_high,
        &mut l.share_of_production_demand,
        &mut l.share_of_non_production_demand,
    ] {
        *f = None;
    }
}

/// A leak flow above the mean demand it is compared with is no share of it (a test of one day
/// against another day's flow log read as 1,883 %): such a share is withheld, the adopted one and
/// each estimate's alike.
pub(super) fn leak_shares_over_whole(s: &mut Summary, w: &mut Vec<Withheld>) {
    let why = "the leak flow is more than the logged mean demand: the leak test and the flow log do not \
               describe the plant under the same conditions, so it is no share of that demand";
    let l = &mut s.leaks;
    if l.share_of_mean_demand.is_some_and(|x| x > 1.0) {
        clear_shares(l);
        withhold(w, "leaks.share_of_mean_demand", why);
    }
    for e in &mut l.estimates {
        if e.share_of_mean_demand.is_some_and(|x| x > 1.0) {
            e.share_of_mean_demand = None;
            withhold(w, "leaks.estimates[].share_of_mean_demand", why);
        }
    }
}

/// The leaks priced at the trim's marginal specific power over the year cannot take more energy
/// than the whole plant's annual energy: when they would, the leak test and the power log describe
/// different plants (or the marginal rate is read at a load too low to carry it), and the leak's
/// annual energy and cost are withheld. The leak measure is held at the trim's energy above idle
/// (`recommend`) and stands.
pub(super) fn leak_cost_over_whole(s: &mut Summary, w: &mut Vec<Withheld>) {
    let (Some(leak), Some(whole)) = (s.leaks.annual_leak_energy_kwh, s.baseline.annual_energy_kwh) else {
        return;
    };
    if leak <= whole {
        return;
    }
    let why = format!(
        "the leak flow priced at the trim machine's marginal specific power would take {} kWh a year, more \
         than the plant's whole {} kWh: the leak test and the power log do not describe the same plant, or \
         the marginal rate is read at a load too low to carry it",
        crate::core::display::Grouped(leak),
        crate::core::display::Grouped(whole)
    );
    let l = &mut s.leaks;
    l.annual_leak_energy_kwh = None;
    l.annual_leak_cost = None;
    l.annual_leak_cost_low = None;
    l.annual_leak_cost_high = None;
    withhold(w, "leaks.annual_leak_cost", &why);
}
