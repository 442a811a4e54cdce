//! What the summary is computed from besides the logged frame: the data spec the passes over the
//! bins read ([`DataSpec`]), the accepted field tests' leak estimates ([`LeakEstimate`]) and the
//! whole audit input that prices them ([`AuditInput`]).

use serde::{Deserialize, Serialize};

use super::uncertainty::Accuracy;
use crate::core::model::{CompressorSpec, SiteSpec, WeeklySchedule};
use crate::core::recommend::{self, CostOverrides};
use crate::core::units::SiteAir;

/// A leak estimate from an accepted field test.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct LeakEstimate {
    pub test_id: i64,
    pub method: String,
    /// At the operating or production pressure, m³/min free air.
    pub leak_flow_m3_min: f64,
    /// Its relative uncertainty as the test was evaluated (from its own inputs: a load/unload test's
    /// times, a bleed-down's fall); `None`: the method's default
    /// (`uncertainty::default_relative_uncertainty`).
    #[serde(default)]
    pub relative_uncertainty: Option<f64>,
    /// Its likely range as the test was evaluated, m³/min (a bleed-down's runs from the flow
    /// corrected for the air's cooling to the flow as read, each widened by the instruments);
    /// `None`: the flow ± its relative uncertainty.
    #[serde(default, skip_serializing_if = "Option::is_none")]
    pub range_m3_min: Option<(f64, f64)>,
    /// What its evaluation warned of (a bleed-down too fast to be near isothermal), repeated in the
    /// summary's `warnings`.
    #[serde(default)]
    pub warnings: Vec<String>,
}

/// What the passes over the bins read besides the frame: the compressors and the site's air, clock
/// and production schedule (the operating year is applied afterwards, to per-cell sums). [`data_figures`](super::data_figures) is given nothing else, so an equal `DataSpec` over an equal frame
/// gives an equal [`DataFigures`](super::DataFigures).
#[derive(Debug, Clone, PartialEq)]
pub struct DataSpec {
    pub compressors: Vec<CompressorSpec>,
    pub air: SiteAir,
    pub timezone: String,
    pub production: Option<WeeklySchedule>,
    /// System volume on record, m³ (0: none): the storage of the part-load model that reads the
    /// trim's air in the control case (`control`), as [`AuditInput::system_volume_m3`].
    pub system_volume_m3: f64,
}

impl DataSpec {
    /// The spec without a system volume on record (see [`DataSpec::with_system_volume`]).
    pub fn of(site: &SiteSpec, compressors: &[CompressorSpec]) -> Self {
        Self {
            compressors: compressors.to_vec(),
            air: site.air,
            timezone: site.timezone.clone(),
            production: site.production.clone(),
            system_volume_m3: 0.0,
        }
    }

    /// The same with the system volume on record, m³.
    pub fn with_system_volume(mut self, system_volume_m3: f64) -> Self {
        self.system_volume_m3 = system_volume_m3;
        self
    }
}

/// Everything the summary is computed from besides the logged frame.
#[derive(Debug, Clone)]
pub struct AuditInput<'a> {
    pub site: &'a SiteSpec,
    pub compressors: &'a [CompressorSpec],
    pub leak_estimates: Vec<LeakEstimate>,
    pub costs: &'a CostOverrides,
    pub accuracy: &'a Accuracy,
    /// Stored what-if results of the present data (`recommend::ScenarioCase`).
    pub scenarios: &'a [recommend::ScenarioCase],
    /// System volume on record, m³ (receivers, piping, vessels; 0: none, the part-load model then
    /// assumes `partload::ASSUMED_STORAGE_US_GAL_PER_CFM` and says so).
    pub system_volume_m3: f64,
    /// Free air drawn out of production by fixed users on record (dryer purge, timed drains),
    /// m³/min, subtracted from the non-production flow before it is read as leaks. The hook for the
    /// treatment records (dryers, drains: not kept yet); 0 until they are.
    pub purge_and_drains_m3_min: f64,
    /// What the dryers, drains and end uses on record offer the measures (`analysis::transmission::cuts`).
    pub treatment: recommend::TreatmentCuts,
}
