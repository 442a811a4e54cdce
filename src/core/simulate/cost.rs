//! The default implementation cost of a scenario (the module doc's "Implementation cost").

use super::plant::Change;
use crate::core::costs;
use crate::core::model::Control;

/// The default implementation cost of a scenario's changes (module doc) and the lines it adds up.
pub fn default_cost(changes: &[Change], leak_flow_m3_min: Option<f64>) -> (f64, Vec<String>) {
    let mut total = 0.0;
    let mut lines = Vec::new();
    let mut leak_share = 0.0;
    for c in changes {
        let (cost, line) = match c {
            Change::Remove { tag } => (0.0, format!("remove {tag}: 0")),
            Change::Add { compressor: a } => {
                let rate = if Control::parse(&a.control) == Some(Control::VariableSpeed) {
                    costs::PER_KW_VARIABLE_SPEED
                } else {
                    costs::PER_KW_FIXED_SPEED
                };
                let cost = rate * a.rated_power_kw.max(0.0);
                (cost, format!("add {} ({:.0} kW at {rate:.0} per kW): {cost:.0}", a.tag, a.rated_power_kw))
            }
            Change::Sequence { .. } => (costs::SEQUENCER, format!("new sequence: {:.0}", costs::SEQUENCER)),
            Change::AddStorage { volume_m3 } => {
                let cost = costs::STORAGE_FIXED + costs::STORAGE_PER_M3 * volume_m3.max(0.0);
                (cost, format!("add {volume_m3:.2} m³ of storage: {cost:.0}"))
            }
            Change::SetPressure { target_bar_g } => (
                costs::SET_PRESSURE,
                format!("set-point {target_bar_g:.2} bar(g): {:.0}", costs::SET_PRESSURE),
            ),
            Change::ReduceLeaks { fraction } => {
                leak_share = 1.0 - (1.0 - leak_share) * (1.0 - fraction.clamp(0.0, 1.0));
                continue;
            }
        };
        total += cost;
        lines.push(line);
    }
    if leak_share > 0.0 {
        let repaired = leak_flow_m3_min.unwrap_or(0.0) * leak_share;
        let cost = costs::LEAK_SURVEY + costs::LEAK_PER_M3_MIN * repaired;
        total += cost;
        lines.push(format!(
            "repair {:.0} % of the leaks ({repaired:.2} m³/min free air): {cost:.0}",
            leak_share * 100.0
        ));
    }
    (total, lines)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::core::simulate::{AddedCompressor, Scenario};

    #[test]
    fn default_cost_adds_up_the_documented_rates() {
        let vsd = AddedCompressor {
            tag: "V".into(),
            kind: "lubricated_screw".into(),
            control: "variable_speed".into(),
            cooling: "air".into(),
            rated_power_kw: 30.0,
            rated_flow_m3_min: 5.0,
            rated_pressure_bar_g: 7.5,
            ..Default::default()
        };
        let changes = vec![
            Change::Remove { tag: "C1".into() },
            Change::Add { compressor: Box::new(vsd) },
            Change::AddStorage { volume_m3: 2.0 },
            Change::ReduceLeaks { fraction: 0.5 },
            Change::ReduceLeaks { fraction: 0.5 },
        ];
        let (c, lines) = default_cost(&changes, Some(4.0));
        // 30 kW x 550 + (1000 + 2 x 1500) + (1500 + 1000 x 4 x 0.75)
        assert_eq!(c, 16_500.0 + 4_000.0 + 4_500.0);
        assert_eq!(lines.len(), 4, "{lines:?}");
        let sc = Scenario { name: "x".into(), changes, implementation_cost: None };
        assert!(!sc.supply_side_only());
        let sc = Scenario {
            name: "y".into(),
            changes: vec![Change::Sequence { order: vec!["C2".into()] }],
            implementation_cost: None,
        };
        assert!(sc.supply_side_only());
        assert_eq!(default_cost(&sc.changes, None).0, costs::SEQUENCER);
    }
}
