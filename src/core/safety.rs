/*!
The safety cautions, in one place: shown wherever a user plans a test or a measure that touches
pressure equipment or heat. The wording is common practice (isolation and lockout, vessel ratings,
drains and relief valves, hot surfaces, interlocks) and always defers to local codes and licensed
practice; it is not taken from any one standard.

- [`PRESSURE_TEST_CAUTIONS`]: before a bleed-down or pressure-decay test (`core::leaks`,
  `core::fieldtest`), on the field-test page and in the findings (`templates/macros.html` reads
  this list; the pages hold no wording of their own).
- [`TREATMENT_CAUTIONS`]: wherever dryers, drains and end uses are shown (report and findings), and
  [`TREATMENT_MEASURE_CAUTION`] as the one-line caution of the measures on them.
- [`HEAT_RECOVERY_CAUTIONS`]: wherever heat recovery is proposed (the summary's `heat.cautions`), and
  [`HEAT_RECOVERY_MEASURE_CAUTION`] as the one-line caution of the `recover_heat` measure.
*/

/// Shown wherever a user plans a bleed-down or pressure-decay test.
pub const PRESSURE_TEST_CAUTIONS: &[&str] = &[
    "Isolate and lock out the compressors as the site's procedures require; tell everyone who uses air.",
    "Never exceed a receiver's or any vessel's rated pressure; check relief valves are in date.",
    "Keep clear of drains, relief valves and hoses that may move when pressure changes.",
    "Follow local pressure-equipment codes and the site's licensed practice; they come first.",
];

/// Shown wherever a user plans a heat-recovery measure (the summary's `heat.cautions`).
pub const HEAT_RECOVERY_CAUTIONS: &[&str] = &[
    "Hot oil, hot ducts and water above 60 °C (140 °F) can burn: insulate, guard and label hot surfaces.",
    "Interlock the recovery circuit so that a blocked or closed circuit never stops the compressor's \
     own cooling.",
    "Design and installation by licensed practice under local codes (pressure equipment, potable \
     water, ducting, fire).",
];

/// The `recover_heat` measure's caution, in one line.
pub const HEAT_RECOVERY_MEASURE_CAUTION: &str =
    "hot oil, hot ducts and water above 60 °C (140 °F); interlock the recovery \
     circuit so a blocked circuit never stops the compressor's own cooling; defer to local codes and \
     licensed practice";

/// Shown wherever dryers, drains or end uses are recorded or a measure on them is proposed.
pub const TREATMENT_CAUTIONS: &[&str] = &[
    "Dryers, filters, drains and their piping hold pressure: isolate, lock out and vent them before any work.",
    "A heated or heat-of-compression dryer has hot surfaces: let it cool and guard it.",
    "Condensate is oily waste: collect it and dispose of it as local rules require.",
    "Follow local pressure-equipment codes and the site's licensed practice; they come first.",
];

/// The caution of a measure on dryers, filters, drains or the air supply to end uses
/// (`dew_point_control`, `zero_loss_drains`, `replace_inappropriate_uses`, `filter_change`,
/// `cycling_refrigerated_dryer`), in one line.
pub const TREATMENT_MEASURE_CAUTION: &str =
    "dryers, filters, drains and their piping hold pressure: isolate, lock out and vent them before work, \
     and depressurise a filter housing before opening it; \
     condensate is oily waste to be collected and disposed of as local rules require; defer to local \
     codes and licensed practice";

/// [`HEAT_RECOVERY_CAUTIONS`] as owned strings, as the summary carries them.
pub fn heat_recovery_cautions() -> Vec<String> {
    HEAT_RECOVERY_CAUTIONS.iter().map(|c| c.to_string()).collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_caution_list_defers_to_local_codes() {
        // The rule of the project: cautions defer to local codes and licensed practice.
        for list in [PRESSURE_TEST_CAUTIONS, HEAT_RECOVERY_CAUTIONS] {
            assert!(list.iter().any(|c| c.contains("local") && c.contains("licensed practice")), "{list:?}");
        }
        assert!(HEAT_RECOVERY_MEASURE_CAUTION.contains("local codes and licensed practice"));
        assert!(HEAT_RECOVERY_MEASURE_CAUTION.contains("60 °C"));
        assert_eq!(heat_recovery_cautions().len(), HEAT_RECOVERY_CAUTIONS.len());
    }
}
