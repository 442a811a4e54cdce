/*!
Heat of compression: where a compressor's input goes, how much of it a heat-recovery system could
deliver, and what that heat is worth (US DOE heat-recovery fact sheet in the
"Improving Compressed Air System Performance" sourcebook).

Nearly all electrical input ends as heat. What does not leave through the coolers, the motor and the
casing is carried away by the compressed air, which leaves the package warmer than it came in:
m cp dT, with about 10 K of delivery rise for an aftercooled package (common practice). The heat
that can be recovered depends on the machine and its cooling; it counts only where and when the
site can use it (the heating months for space heat, all year for process or boiler make-up water).

Safety: heat recovery handles hot oil, hot ducts and water above 60 °C, and a blocked recovery
circuit must never stop the compressor's own cooling; see `core::safety::HEAT_RECOVERY_CAUTIONS`.
*/

use super::model::{CompressorKind, Cooling};
use super::thermo::CP_AIR;
use super::units::Energy;

/// Delivery-air temperature rise over the inlet for an aftercooled package, K (common practice).
pub const DEFAULT_DELIVERY_TEMPERATURE_RISE_K: f64 = 10.0;

/// Where the electrical input of a compressor package leaves, as fractions of the input (they sum
/// to 1).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HeatSplit {
    /// Oil cooler of an oil-injected machine, or intercoolers (with the gear and bearing oil
    /// cooler) of a dry multi-stage machine.
    pub oil_or_intercooler: f64,
    pub aftercooler: f64,
    /// Motor losses and radiation from the casing.
    pub motor_and_casing: f64,
    /// Left in the compressed air (delivered warmer than the inlet).
    pub in_air: f64,
}

impl HeatSplit {
    pub fn total(&self) -> f64 {
        self.oil_or_intercooler + self.aftercooler + self.motor_and_casing + self.in_air
    }
}

/// Typical split of the input by compressor kind.
///
/// - Oil-injected (lubricated screw, vane): 76 % oil cooler, 13 % aftercooler, 7 % motor and
///   casing, 4 % in the air: the middle of the usual 72-80 / 10-15 / 4-9 % (common practice,
///   from memory), the rest in the delivered air (about 3 % for 10 K at 18 kW/100 cfm, see the
///   tests).
/// - Oil-free screw, centrifugal, reciprocating: intercoolers (with the oil cooler of gears and
///   bearings, or the cylinder jackets) take the larger part, the aftercooler most of the rest
///   (common practice, estimates).
/// - Scroll: no oil and no intercooler; fan-cooled scroll fins and aftercooler (common practice).
///
/// The cooling medium changes where the heat can be captured ([`path_share`]), not how it
/// leaves the compression, so `_cooling` does not change the split.
pub fn heat_split(kind: CompressorKind, _cooling: Cooling) -> HeatSplit {
    let (oil_or_intercooler, aftercooler, motor_and_casing, in_air) = match kind {
        CompressorKind::LubricatedScrew | CompressorKind::Vane => (0.76, 0.13, 0.07, 0.04),
        CompressorKind::OilFreeScrew => (0.55, 0.33, 0.08, 0.04),
        CompressorKind::Centrifugal => (0.58, 0.32, 0.06, 0.04),
        CompressorKind::Reciprocating => (0.55, 0.30, 0.11, 0.04),
        CompressorKind::Scroll => (0.0, 0.55, 0.41, 0.04),
    };
    HeatSplit { oil_or_intercooler, aftercooler, motor_and_casing, in_air }
}

/// Heat rejected by the package over a period: the energy balance input - m cp dT, where m is the
/// air delivered (kg) and dT its delivery temperature rise over the inlet
/// ([`DEFAULT_DELIVERY_TEMPERATURE_RISE_K`] for an aftercooled package). Never below zero.
pub fn heat_rejected(input: Energy, air_mass_kg: f64, delivery_temperature_rise_k: f64) -> Energy {
    let in_air = air_mass_kg * CP_AIR * delivery_temperature_rise_k;
    Energy((input.0 - in_air).max(0.0))
}

/// Share of the rejected heat that leaves through the cooling path a recovery unit taps: all of it
/// for an air-cooled package (its cooling air, ducted, carries the coolers', motor's and casing's
/// heat), the coolers' share (oil or intercoolers and aftercooler, [`heat_split`]) for a
/// water-cooled one, whose motor and casing still warm the room.
pub fn path_share(kind: CompressorKind, cooling: Cooling) -> f64 {
    let s = heat_split(kind, cooling);
    match cooling {
        Cooling::Air => 1.0,
        Cooling::Water => (s.oil_or_intercooler + s.aftercooler) / (1.0 - s.in_air),
    }
}

/// Heat a recovery unit could deliver: rejected heat (energy balance, [`heat_rejected`]) × the
/// share on its cooling path ([`path_share`]) × the unit's effectiveness on that path (the US DOE
/// heat-recovery fact sheet: a well-designed unit recovers 50-90 % of the heat; the defaults are
/// `recommend::DEFAULT_RECOVERY_EFFECTIVENESS_AIR` / `_WATER`).
pub fn heat_recoverable(
    rejected: Energy,
    kind: CompressorKind,
    cooling: Cooling,
    effectiveness: f64,
) -> Energy {
    Energy(rejected.0 * path_share(kind, cooling) * effectiveness.clamp(0.0, 1.0))
}

/// What the recovered heat would serve (JSON `space_heating`, `process_water`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default, serde::Serialize, serde::Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum HeatUseKind {
    /// Space heating: useful only in the heating months.
    #[default]
    SpaceHeating,
    /// Process or boiler make-up water: useful all year.
    ProcessWater,
}

impl HeatUseKind {
    pub fn as_str(self) -> &'static str {
        match self {
            Self::SpaceHeating => "space_heating",
            Self::ProcessWater => "process_water",
        }
    }
    /// The use in words.
    pub fn words(self) -> &'static str {
        match self {
            Self::SpaceHeating => "space heating",
            Self::ProcessWater => "process or boiler make-up water",
        }
    }
    pub fn parse(s: &str) -> Option<Self> {
        match s {
            "space_heating" => Some(Self::SpaceHeating),
            "process_water" => Some(Self::ProcessWater),
            _ => None,
        }
    }
}

/// What recovered heat is worth in a year.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RecoveredHeat {
    /// Heat used, kWh.
    pub useful_kwh: f64,
    /// Fuel the heater no longer burns, kWh.
    pub fuel_kwh: f64,
    /// That fuel's price, in the audit's currency.
    pub money: f64,
}

/// Days of the months of a common year, January first: the annual recoverable heat is spread over
/// the months by their length ([`by_month`]).
pub const MONTH_DAYS: [f64; 12] = [31.0, 28.0, 31.0, 30.0, 31.0, 30.0, 31.0, 31.0, 30.0, 31.0, 30.0, 31.0];

/// An annual quantity spread over the months of a common year by their days.
pub fn by_month(annual: f64) -> [f64; 12] {
    MONTH_DAYS.map(|d| annual * d / 365.0)
}

/// A use for recovered heat.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct HeatUse {
    pub kind: HeatUseKind,
    /// Months (1 = January ... 12 = December) in which space heat is needed; ignored for process
    /// water, and when degree-days are given. Values outside 1-12 and repeats are ignored.
    pub heating_months: Vec<u8>,
    /// Heating degree-days of each month (January first), K·d to the building's base temperature:
    /// when given (12 values), they replace the heating months.
    pub degree_days_k_day: Option<[f64; 12]>,
    /// The heat the space needs in a year, kWh (the heater's fuel × its efficiency): with degree-days,
    /// the cap on what can be used each month.
    pub annual_space_heat_kwh: Option<f64>,
}

/// Share of each month's recoverable heat that space heating can use, by the degree-day method
/// (ASHRAE Handbook, Fundamentals, energy estimating: a building's heating load over a period is
/// proportional to its heating degree-days, Q = UA × HDD × 24 h).
///
/// - With the space's annual heat need `H`: the month's need is `H × HDD_m / ΣHDD`, and the heat
///   used is the recoverable heat up to that need.
/// - Without it: the recovery unit is taken as sized to the coldest month's mean load (its whole
///   heat used then), and in any other month the share used is that month's degree-days per day
///   over the coldest month's (airledger's stated, conservative assumption: the heat a compressor
///   rejects is steady, the load it meets is not).
///
/// Returns the heat used each month, kWh.
pub fn degree_day_use(
    recoverable_by_month_kwh: &[f64; 12],
    degree_days_k_day: &[f64; 12],
    annual_space_heat_kwh: Option<f64>,
) -> [f64; 12] {
    let hdd = degree_days_k_day.map(|d| if d.is_finite() { d.max(0.0) } else { 0.0 });
    let total: f64 = hdd.iter().sum();
    let mut used = [0.0; 12];
    if total <= 0.0 {
        return used;
    }
    match annual_space_heat_kwh {
        Some(h) if h.is_finite() && h >= 0.0 => {
            for m in 0..12 {
                used[m] = recoverable_by_month_kwh[m].min(h * hdd[m] / total);
            }
        }
        _ => {
            let per_day: Vec<f64> = hdd.iter().zip(MONTH_DAYS).map(|(d, n)| d / n).collect();
            let coldest = per_day.iter().copied().fold(0.0, f64::max);
            for m in 0..12 {
                used[m] = recoverable_by_month_kwh[m] * (per_day[m] / coldest);
            }
        }
    }
    used
}

/// The worth of recovered heat (US DOE heat-recovery fact sheet): `recoverable_by_month_kwh[0]` is January. Counts
/// the heat used (all of it for process water; for space heating, the heating months' or, with
/// degree-days, [`degree_day_use`]), and values it as the fuel the heater no longer burns:
/// fuel = useful / heater efficiency, money = fuel x price. A heater efficiency that is not positive
/// displaces nothing (0 fuel, 0 money).
pub fn recovered_value(
    recoverable_by_month_kwh: &[f64; 12],
    use_: &HeatUse,
    heater_efficiency: f64,
    fuel_price_per_kwh: f64,
) -> RecoveredHeat {
    let useful_kwh: f64 = match (use_.kind, use_.degree_days_k_day) {
        (HeatUseKind::ProcessWater, _) => recoverable_by_month_kwh.iter().sum(),
        (HeatUseKind::SpaceHeating, Some(hdd)) => {
            degree_day_use(recoverable_by_month_kwh, &hdd, use_.annual_space_heat_kwh).iter().sum()
        }
        (HeatUseKind::SpaceHeating, None) => {
            let mut used = [false; 12];
            for &m in &use_.heating_months {
                if (1..=12).contains(&m) {
                    used[usize::from(m - 1)] = true;
                }
            }
            recoverable_by_month_kwh.iter().zip(used).filter(|(_, u)| *u).map(|(kwh, _)| kwh).sum()
        }
    };
    let fuel_kwh = if heater_efficiency > 0.0 { useful_kwh / heater_efficiency } else { 0.0 };
    RecoveredHeat { useful_kwh, fuel_kwh, money: fuel_kwh * fuel_price_per_kwh }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn fixture() -> serde_json::Value {
        serde_json::from_str(include_str!("../../tests/reference/fixture.json")).unwrap()
    }

    /// A reference value from the fixture written by tests/reference/make_reference.py.
    fn reference(name: &str) -> f64 {
        fixture()["values"][name]["value"].as_f64().unwrap_or_else(|| panic!("fixture has no value {name}"))
    }

    fn rel(a: f64, b: f64) -> f64 {
        ((a - b) / b).abs()
    }

    /// Mass flow of 100 cfm of free air at 101.325 kPa and 20 °C, kg/s (ideal gas, R = 287).
    fn mass_flow_100_cfm() -> f64 {
        let v_m3_s = 100.0 * 0.028_316_846_592 / 60.0;
        101_325.0 * v_m3_s / (287.0 * 293.15)
    }

    #[test]
    fn every_split_accounts_for_the_whole_input() {
        for &kind in CompressorKind::ALL {
            for &cooling in Cooling::ALL {
                let s = heat_split(kind, cooling);
                assert!((s.total() - 1.0).abs() < 1e-12, "{kind:?}");
            }
        }
    }

    #[test]
    fn oil_injected_screw_split_lies_in_the_field_notes_ranges() {
        // Common practice, from memory: 72-80 % oil cooler, 10-15 % aftercooler, 4-9 % motor.
        let s = heat_split(CompressorKind::LubricatedScrew, Cooling::Air);
        assert!((0.72..=0.80).contains(&s.oil_or_intercooler));
        assert!((0.10..=0.15).contains(&s.aftercooler));
        assert!((0.04..=0.09).contains(&s.motor_and_casing));
    }

    #[test]
    fn the_split_left_in_the_air_agrees_with_the_energy_balance() {
        // 18 kW/100 cfm (a typical lubricated screw, common practice), one hour at full load,
        // delivered 10 K above the inlet (common practice): m cp dT = 0.0568 x 1004.5 x 10 = 571 W,
        // 3.2 % of the input; the split's 4 % is within one percentage point of it.
        let input = Energy::from_kwh(18.0);
        let air_kg = mass_flow_100_cfm() * 3600.0;
        let rejected = heat_rejected(input, air_kg, DEFAULT_DELIVERY_TEMPERATURE_RISE_K);
        let in_air_fraction = 1.0 - rejected.0 / input.0;
        assert!((in_air_fraction - 0.0317).abs() < 0.0005, "{in_air_fraction}");
        let split = heat_split(CompressorKind::LubricatedScrew, Cooling::Air);
        assert!((split.in_air - in_air_fraction).abs() < 0.01);
    }

    #[test]
    fn heat_rejected_is_the_input_less_what_the_air_carries() {
        // By hand: 100 kWh in, 1000 kg of air 10 K warmer: 1000 x 1004.5 x 10 J = 2.790 kWh.
        let r = heat_rejected(Energy::from_kwh(100.0), 1000.0, 10.0);
        assert!((r.kwh() - (100.0 - 10_045_000.0 / 3.6e6)).abs() < 1e-9);
        // No delivery rise: every joule is rejected; never negative.
        assert_eq!(heat_rejected(Energy(5.0), 1000.0, 0.0), Energy(5.0));
        assert_eq!(heat_rejected(Energy(5.0), 1000.0, 10.0), Energy(0.0));
    }

    #[test]
    fn ideal_gas_cp_is_close_to_coolprop_real_air() {
        // fixture: CoolProp 8.0.0 Cpmass of air at 20 °C, 1 atm = 1006.1 J/(kg K); ours 1004.5:
        // 0.16 % low. Tolerance stated: 0.5 %.
        assert!(rel(CP_AIR, reference("thermo.coolprop_cp_20c_j_kg_k")) < 0.005);
    }

    #[test]
    fn recoverable_heat_agrees_with_the_doe_50000_btu_per_100_cfm_rule() {
        // US DOE heat-recovery fact sheet ("Heat Recovery with Compressed Air Systems", in
        // "Improving Compressed Air System Performance: A Sourcebook for Industry"): about
        // 50,000 Btu/h is available for each 100 cfm of capacity at full-load operation.
        // fixture: pint 0.25.3, 50 000 Btu/h = 14.654 kW.
        // A lubricated screw, air cooled, at 18 kW/100 cfm (typical full-load package input,
        // common practice, from memory), delivered air 10 K above the inlet:
        // rejected = 18 - 0.571 = 17.43 kW; × path share 1 (air cooled) × 0.80 = 13.94 kW,
        // 4.8 % below the rule, which is "about". Tolerance stated: 10 %.
        let rule_w = reference("heat.doe_rule_50000_btu_h_in_w");
        assert!((rule_w - 14_654.0).abs() < 1.0);
        let input = Energy::from_kwh(18.0);
        let air_kg = mass_flow_100_cfm() * 3600.0;
        let rejected = heat_rejected(input, air_kg, DEFAULT_DELIVERY_TEMPERATURE_RISE_K);
        let rec = heat_recoverable(
            rejected,
            CompressorKind::LubricatedScrew,
            Cooling::Air,
            crate::core::recommend::DEFAULT_RECOVERY_EFFECTIVENESS_AIR,
        );
        let recoverable_w = rec.0 / 3600.0;
        assert!((recoverable_w - 13_943.0).abs() < 5.0, "{recoverable_w} W");
        assert!(rel(recoverable_w, rule_w) < 0.10, "{recoverable_w} W");
        // Water cooled: only the coolers' 89 % of the input (of 96 % rejected) reaches the water.
        let water = heat_recoverable(rejected, CompressorKind::LubricatedScrew, Cooling::Water, 0.75);
        assert!((water.0 / rejected.0 - 0.89 / 0.96 * 0.75).abs() < 1e-12);
    }

    #[test]
    fn rejected_heat_closes_the_energy_balance_within_one_percent() {
        // Energy balance of the package (first law, steady flow): electrical input = heat rejected
        // + enthalpy rise of the delivered air. The enthalpy rise is taken independently from
        // CoolProp 8.0.0's real-air cp at 20 °C, 1 atm (fixture: 1006.1 J/(kg K)); our rejected
        // heat uses the ideal-gas cp. 100 cfm, 18 kW, one hour, 10 K rise.
        let input = Energy::from_kwh(18.0);
        let air_kg = mass_flow_100_cfm() * 3600.0;
        let rejected = heat_rejected(input, air_kg, DEFAULT_DELIVERY_TEMPERATURE_RISE_K);
        let in_air =
            air_kg * reference("thermo.coolprop_cp_20c_j_kg_k") * DEFAULT_DELIVERY_TEMPERATURE_RISE_K;
        let closure = (rejected.0 + in_air - input.0).abs() / input.0;
        assert!(closure < 0.01, "{closure}");
    }

    #[test]
    fn default_effectiveness_lies_in_the_doe_range() {
        // US DOE heat-recovery fact sheet: a properly designed unit recovers 50-90 % of the heat.
        use crate::core::recommend::{
            DEFAULT_RECOVERY_EFFECTIVENESS_AIR as A, DEFAULT_RECOVERY_EFFECTIVENESS_WATER as W,
        };
        for e in [A, W] {
            assert!((0.50..=0.90).contains(&e));
        }
        // Nothing recovered beyond the heat that leaves through the path.
        for &kind in CompressorKind::ALL {
            for &c in Cooling::ALL {
                assert!(path_share(kind, c) <= 1.0 + 1e-12, "{kind:?}");
            }
        }
    }

    #[test]
    fn space_heat_counts_only_in_the_heating_months() {
        // Months 1..12 recover 100, 200, ... 1200 kWh.
        let by_month: [f64; 12] = std::array::from_fn(|i| 100.0 * (i as f64 + 1.0));
        let winter = HeatUse {
            kind: HeatUseKind::SpaceHeating,
            heating_months: vec![1, 2, 3, 11, 12],
            ..Default::default()
        };
        let RecoveredHeat { useful_kwh: useful, fuel_kwh: fuel, money } =
            recovered_value(&by_month, &winter, 0.9, 0.08);
        // By hand: 100 + 200 + 300 + 1100 + 1200 = 2900 kWh; / 0.9 = 3222.2 kWh; x 0.08 = 257.78.
        assert!((useful - 2900.0).abs() < 1e-9);
        assert!((fuel - 2900.0 / 0.9).abs() < 1e-9);
        assert!((money - 2900.0 / 0.9 * 0.08).abs() < 1e-9);
        // Repeats and impossible months are ignored.
        let odd = HeatUse {
            kind: HeatUseKind::SpaceHeating,
            heating_months: vec![1, 1, 0, 13],
            ..Default::default()
        };
        assert!((recovered_value(&by_month, &odd, 0.9, 0.08).useful_kwh - 100.0).abs() < 1e-9);
    }

    #[test]
    fn process_water_counts_all_year() {
        let by_month = [500.0; 12];
        let water =
            HeatUse { kind: HeatUseKind::ProcessWater, heating_months: vec![1], ..Default::default() };
        let RecoveredHeat { useful_kwh: useful, fuel_kwh: fuel, money } =
            recovered_value(&by_month, &water, 0.8, 0.10);
        // By hand: 6000 kWh; / 0.8 = 7500 kWh of fuel; x 0.10 = 750.
        assert!((useful - 6000.0).abs() < 1e-9);
        assert!((fuel - 7500.0).abs() < 1e-9);
        assert!((money - 750.0).abs() < 1e-9);
        // A heater efficiency that is not positive displaces nothing.
        assert_eq!(
            recovered_value(&by_month, &water, 0.0, 0.10),
            RecoveredHeat { useful_kwh: 6000.0, fuel_kwh: 0.0, money: 0.0 }
        );
    }

    #[test]
    fn degree_days_share_the_heat_as_the_degree_day_method_does() {
        // ASHRAE Handbook, Fundamentals, energy estimating (degree-day method): a space's heating load
        // over a period is UA × HDD × 24 h. A hall of UA = 2 kW/K (invented), HDD to its base
        // temperature: January 500, February 420, March 300, April 150, May 40, summer 0, October 120,
        // November 300, December 450 K·d (invented, a central European pattern).
        let hdd = [500.0, 420.0, 300.0, 150.0, 40.0, 0.0, 0.0, 0.0, 0.0, 120.0, 300.0, 450.0];
        let ua_kw_per_k = 2.0;
        let need: Vec<f64> = hdd.iter().map(|d| ua_kw_per_k * d * 24.0).collect();
        let annual_need: f64 = need.iter().sum();
        // By hand: ΣHDD = 2280 K·d, so the annual need is 2 × 2280 × 24 = 109,440 kWh; January
        // 24,000, May 1,920 kWh.
        assert!((annual_need - 109_440.0).abs() < 1e-9);
        // A compressor whose recoverable heat is 10,000 kWh in each month.
        let rec = [10_000.0; 12];
        let used = degree_day_use(&rec, &hdd, Some(annual_need));
        // Capped by the need: January uses all 10,000; April 7,200 (2 × 150 × 24); May 1,920;
        // summer nothing.
        assert!((used[0] - 10_000.0).abs() < 1e-9);
        assert!((used[3] - 7_200.0).abs() < 1e-9);
        assert!((used[4] - 1_920.0).abs() < 1e-9);
        assert_eq!(used[6], 0.0);
        // By hand, month by month:
        // Jan 10,000; Feb min(10,000, 20,160) 10,000; Mar min(10,000, 14,400) 10,000; Apr 7,200;
        // May 1,920; Oct 5,760; Nov 10,000 (14,400 needed); Dec 10,000 (21,600): 64,880 kWh.
        let total: f64 = used.iter().sum();
        assert!((total - 64_880.0).abs() < 1e-9, "{total}");
        let v = recovered_value(
            &rec,
            &HeatUse {
                kind: HeatUseKind::SpaceHeating,
                heating_months: vec![7],
                degree_days_k_day: Some(hdd),
                annual_space_heat_kwh: Some(annual_need),
            },
            0.9,
            0.08,
        );
        // The degree-days replace the heating months (July, given above, has none).
        assert!((v.useful_kwh - 64_880.0).abs() < 1e-9);
        assert!((v.money - 64_880.0 / 0.9 * 0.08).abs() < 1e-9);
    }

    #[test]
    fn without_the_space_need_the_coldest_month_sets_the_share() {
        // airledger's stated assumption: the unit is sized to the coldest month's mean load. January
        // 620 K·d over 31 days = 20 K·d per day, the coldest; April 150 / 30 = 5 per day: a quarter.
        let mut hdd = [0.0; 12];
        hdd[0] = 620.0;
        hdd[3] = 150.0;
        let rec = by_month(36_500.0);
        // by_month spreads by the days of a common year: 100 kWh a day, January 3,100, April 3,000.
        assert!((rec[0] - 3_100.0).abs() < 1e-9 && (rec[3] - 3_000.0).abs() < 1e-9);
        let used = degree_day_use(&rec, &hdd, None);
        assert!((used[0] - 3_100.0).abs() < 1e-9);
        assert!((used[3] - 750.0).abs() < 1e-9);
        assert!(used.iter().enumerate().all(|(m, u)| m == 0 || m == 3 || *u == 0.0));
        // No degree-days at all: nothing is used.
        assert_eq!(degree_day_use(&rec, &[0.0; 12], None), [0.0; 12]);
    }
}
