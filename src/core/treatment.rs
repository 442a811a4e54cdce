/*!
Transmission and demand beyond the compressors (ISO 11011's scope): dryers, condensate drains,
the end-use inventory and the split of the
metered demand into what is known to use it.

Pure arithmetic on records the user keeps (no IO). The record names and kinds are those of
`API.md` ("Additions"): a dryer's `kind` and `control`, a drain's `kind` and orifice, an end use's
`kind`, `count`, air per use (a rated `flow_m3_min` or an orifice at `pressure_bar_g`) and `duty`.

The physics and the rules used, each with where it comes from:
- **Purge**: a desiccant or membrane dryer on a fixed cycle purges its `purge_fraction` of rated
  flow whatever the load; with dew-point control the purge follows the moisture load, taken as
  proportional to the air flowing through the dryer (common practice). Default purge fractions
  where the data sheet is not at hand: heatless desiccant 0.15 (the US DOE sourcebook gives 15-20 %,
  from memory), heated desiccant 0.07, blower purge 0.02 (cooling purge only), membrane 0.15 (all
  three common practice, from memory); refrigerated dryers purge nothing.
- **Dryer electricity**: the data sheet's kW; a cycling refrigerated dryer follows the load, a
  non-cycling one runs at its kW whatever the load (common practice).
- **Timer drain**: air lost = the orifice's flow at line pressure × open time / interval (a drain
  blows for its whole open time whether or not there is condensate); the orifice flow is
  [`leaks::orifice_leak`], the compressible-nozzle equation already used for leaks. Zero-loss
  (level-sensing) and float drains lose no air; a drain left open manually is a leak at its full
  orifice flow.
- **Refrigerated dryer electricity saved by cycling**: a non-cycling unit draws its kW whatever the
  load; a cycling or variable one follows the load down to a floor, [`CYCLING_DRYER_FLOOR`] = 0.2 of
  its kW (fans, controls and the refrigeration circuit's minimum run; common practice, from memory),
  so it would save kW × (1 − max(load, floor)) (`cycling_saving_kw`).
- **Filters**: a filter's pressure drop scales about with the square of the flow through it
  (turbulent flow through the element and housing; common practice, the usual data-sheet
  correction): the clean drop at flow Q is the data sheet's clean drop at rated flow × (Q /
  Q_rated)². The measured drop is taken as read at the mean flow through the filter, so its
  **excess drop** is measured − clean at that flow (never below 0). Every filter on record is taken
  to sit on the main line and carry the whole mean flow (a stated simplification: filters in series
  after the compressors). The excess is discharge pressure the compressors make for nothing; it is
  priced like a set-point change by the pressure measure's own rule
  (`recommend::pressure_cut_fractions`: 1 % of loaded input per 2 psi, US DOE sourcebook, or the
  isentropic-work ratio), only on the loaded energy. An element is worth changing when its excess
  exceeds [`FILTER_CHANGE_ABOVE_BAR`] = 0.1 bar (common practice).
- **Pressure drop between points**: not priced here yet (pressure points are mapped elsewhere).
- **Demand split**: production uses + inappropriate uses + purge and drains + leaks + unexplained =
  the metered mean flow; the unexplained part is what is left (negative when the inventory claims
  more air than was metered: the inventory then overstates some use, and the split says so).

Safety: drains, dryers and filters are pressure equipment: isolate and vent before work on them
(`core::safety`).
*/

use std::fmt;

use super::leaks::orifice_leak;
use super::units::{FreeAirFlow, PressureAbs, SiteAir, UnitSystem};

/// A treatment or end-use record that cannot be used, naming the API field at fault.
#[derive(Debug, Clone, PartialEq)]
pub struct TreatmentError {
    pub field: &'static str,
    pub message: String,
}

impl TreatmentError {
    pub(crate) fn new(field: &'static str, message: impl Into<String>) -> Self {
        TreatmentError { field, message: message.into() }
    }
}

impl fmt::Display for TreatmentError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{}: {}", self.field, self.message)
    }
}

impl std::error::Error for TreatmentError {}

macro_rules! kinds {
    ($(#[$m:meta])* $name:ident { $($v:ident = $s:literal),+ $(,)? }) => {
        $(#[$m])*
        #[derive(Debug, Clone, Copy, PartialEq, Eq)]
        pub enum $name { $($v),+ }
        impl $name {
            pub const ALL: &'static [$name] = &[$($name::$v),+];
            pub fn as_str(self) -> &'static str {
                match self { $($name::$v => $s),+ }
            }
            /// The kind named `s` (an API.md code), or an error listing the known ones.
            pub fn parse(s: &str, field: &'static str) -> Result<Self, TreatmentError> {
                match s {
                    $($s => Ok($name::$v),)+
                    other => Err(TreatmentError::new(field, format!(
                        "unknown {field} {other:?}; known: {}",
                        [$($s),+].join(", ")
                    ))),
                }
            }
        }
    };
}

kinds!(
    /// How a dryer dries (API.md `kind`).
    DryerKind {
        Refrigerated = "refrigerated",
        RefrigeratedCycling = "refrigerated_cycling",
        HeatlessDesiccant = "heatless_desiccant",
        HeatedDesiccant = "heated_desiccant",
        BlowerPurge = "blower_purge",
        Membrane = "membrane",
    }
);

kinds!(
    /// How a desiccant dryer's cycle is timed (API.md `control`).
    DryerControl { FixedCycle = "fixed_cycle", DewPoint = "dew_point" }
);

kinds!(
    /// What a filter takes out (its `kind`, the trade's names).
    FilterKind {
        Particulate = "particulate",
        Coalescing = "coalescing",
        ActivatedCarbon = "activated_carbon",
        WaterSeparator = "water_separator",
        Other = "other",
    }
);

kinds!(
    /// A condensate drain's kind (API.md `kind`).
    DrainKind { Timer = "timer", ZeroLoss = "zero_loss", Float = "float", ManualOpen = "manual_open" }
);

kinds!(
    /// An end use's kind (API.md `kind`).
    EndUseKind {
        Tool = "tool",
        OpenBlowing = "open_blowing",
        VortexCooler = "vortex_cooler",
        CabinetCooler = "cabinet_cooler",
        AirMotor = "air_motor",
        DiaphragmPump = "diaphragm_pump",
        Sparging = "sparging",
        Process = "process",
        Other = "other",
    }
);

impl DryerKind {
    /// The purge fraction of rated flow used when the record gives none (see the module's sources).
    pub fn default_purge_fraction(self) -> f64 {
        match self {
            DryerKind::Refrigerated | DryerKind::RefrigeratedCycling => 0.0,
            DryerKind::HeatlessDesiccant | DryerKind::Membrane => 0.15,
            DryerKind::HeatedDesiccant => 0.07,
            DryerKind::BlowerPurge => 0.02,
        }
    }

    /// Whether the dryer purges compressed air at all.
    pub fn purges(self) -> bool {
        self.default_purge_fraction() > 0.0
    }
}

impl EndUseKind {
    /// The uses the US DOE sourcebook names as often inappropriate: an electric drive, a blower or
    /// a fan would do the same work for a fraction of the electricity.
    pub fn inappropriate(self) -> bool {
        matches!(
            self,
            EndUseKind::OpenBlowing
                | EndUseKind::VortexCooler
                | EndUseKind::CabinetCooler
                | EndUseKind::AirMotor
                | EndUseKind::DiaphragmPump
                | EndUseKind::Sparging
        )
    }
}

/// The first of a record's refusals, as `validate` gives it.
fn first(errs: Vec<TreatmentError>) -> Result<(), TreatmentError> {
    match errs.into_iter().next() {
        Some(e) => Err(e),
        None => Ok(()),
    }
}

/// A check's value, its refusal collected.
fn take<T>(errs: &mut Vec<TreatmentError>, r: Result<T, TreatmentError>) -> Option<T> {
    r.map_err(|e| errs.push(e)).ok()
}

/// A share, 0 to 1; refused in the pages' words, as a percentage ("must be from 0 % to 100 %").
fn fraction(v: f64, field: &'static str) -> Result<f64, TreatmentError> {
    match bounds::share(v, 1.0, "") {
        None => Ok(v),
        Some(m) => Err(TreatmentError::new(field, m)),
    }
}

fn non_negative(v: f64, field: &'static str) -> Result<f64, TreatmentError> {
    if v.is_finite() && v >= 0.0 {
        Ok(v)
    } else {
        Err(TreatmentError::new(field, format!("must be zero or more, got {v}")))
    }
}

fn positive(v: f64, field: &'static str) -> Result<f64, TreatmentError> {
    if v.is_finite() && v > 0.0 {
        Ok(v)
    } else {
        Err(TreatmentError::new(field, format!("must be above zero, got {v}")))
    }
}

/// A dryer as the user records it.
#[derive(Debug, Clone, PartialEq)]
pub struct Dryer {
    pub tag: String,
    pub kind: DryerKind,
    /// Rated flow, free air.
    pub rated_flow: FreeAirFlow,
    /// Purge as a share of rated flow; `None`: the kind's default.
    pub purge_fraction: Option<f64>,
    /// Electrical input (heaters, blowers, refrigeration), kW.
    pub power_kw: f64,
    pub control: DryerControl,
}

/// What a dryer costs in air and electricity at a given mean flow through it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct DryerFigures {
    pub purge: FreeAirFlow,
    /// The purge the same dryer would use with dew-point control (equal to `purge` when it has it).
    pub purge_with_dew_point_control: FreeAirFlow,
    /// Mean electrical input, kW.
    pub power_kw: f64,
    /// Mean flow through the dryer over its rated flow, 0-1.
    pub load: f64,
    /// What a cycling or variable unit in place of this non-cycling refrigerated dryer would save,
    /// mean kW (0 for every other kind): kW × (1 − max(load, [`CYCLING_DRYER_FLOOR`])).
    pub cycling_saving_kw: f64,
}

/// The share of its rated kW a cycling or variable refrigerated dryer still draws at light load
/// (fans, controls, the refrigeration circuit's minimum run; common practice, from memory).
pub const CYCLING_DRYER_FLOOR: f64 = 0.2;

impl Dryer {
    /// The record's first fault (what [`Self::sound`] lists): a stored record that passes it is
    /// priced, even one typed before the bounds of [`bounds`].
    pub fn validate(&self) -> Result<(), TreatmentError> {
        first(self.sound())
    }

    /// Every refusal at once, refusals quoting SI (as [`Self::refusals_in`]).
    pub fn refusals(&self) -> Vec<TreatmentError> {
        self.refusals_in(UnitSystem::Si)
    }

    /// Every refusal at once: the record's faults, then the values beyond the trade's
    /// ([`bounds`]) in the reader's `units`.
    pub fn refusals_in(&self, units: UnitSystem) -> Vec<TreatmentError> {
        let mut all = self.sound();
        all.extend(bounds::dryer(self, units));
        all
    }

    /// The record's faults (a value that makes no sense), every one at once.
    pub fn sound(&self) -> Vec<TreatmentError> {
        let mut errs = Vec::new();
        take(&mut errs, positive(self.rated_flow.m3_min(), "rated_flow_m3_min"));
        if let Some(p) = self.purge_fraction {
            take(&mut errs, fraction(p, "purge_fraction"));
        }
        take(&mut errs, non_negative(self.power_kw, "power_kw"));
        if self.tag.trim().is_empty() {
            errs.push(TreatmentError::new("tag", "a dryer needs a tag"));
        }
        errs
    }

    /// Whether its purge or its electricity follows the air through it: a purging dryer under
    /// dew-point control, or a cycling refrigerated one. Such a dryer needs the plant's mean flow.
    pub fn follows_load(&self) -> bool {
        (self.control == DryerControl::DewPoint && self.purge_fraction() > 0.0)
            || self.kind == DryerKind::RefrigeratedCycling
    }

    pub fn purge_fraction(&self) -> f64 {
        if self.kind.purges() {
            self.purge_fraction.unwrap_or(self.kind.default_purge_fraction())
        } else {
            0.0
        }
    }

    /// The dryer at a mean flow `through` (free air): purge and electricity.
    pub fn figures(&self, through: FreeAirFlow) -> DryerFigures {
        let load = (through.m3_min() / self.rated_flow.m3_min()).clamp(0.0, 1.0);
        let full = self.rated_flow.m3_min() * self.purge_fraction();
        let with_control = full * load;
        let purge = match self.control {
            DryerControl::FixedCycle => full,
            DryerControl::DewPoint => with_control,
        };
        let cycling_share = load.max(CYCLING_DRYER_FLOOR);
        let power_kw = match self.kind {
            DryerKind::RefrigeratedCycling => self.power_kw * cycling_share,
            _ => self.power_kw,
        };
        let cycling_saving_kw = match self.kind {
            DryerKind::Refrigerated => self.power_kw * (1.0 - cycling_share),
            _ => 0.0,
        };
        DryerFigures {
            purge: FreeAirFlow::from_m3_min(purge),
            purge_with_dew_point_control: FreeAirFlow::from_m3_min(with_control),
            power_kw,
            load,
            cycling_saving_kw,
        }
    }
}

/// A condensate drain as the user records it.
#[derive(Debug, Clone, PartialEq)]
pub struct Drain {
    pub tag: String,
    pub kind: DrainKind,
    /// Seconds open per cycle (timer drains).
    pub open_s: Option<f64>,
    /// Seconds between openings (timer drains).
    pub interval_s: Option<f64>,
    /// Orifice or valve bore, mm.
    pub orifice_mm: Option<f64>,
    /// 0.61 for a sharp-edged orifice (common practice) when not given.
    pub discharge_coefficient: Option<f64>,
}

/// The discharge coefficient of a sharp-edged orifice (common practice, from memory: 0.61-0.65).
pub const SHARP_EDGE_CD: f64 = 0.61;

impl Drain {
    /// The record's first fault (what [`Self::sound`] lists): a stored record that passes it is
    /// priced, even one typed before the bounds of [`bounds`].
    pub fn validate(&self) -> Result<(), TreatmentError> {
        first(self.sound())
    }

    /// Every refusal at once, refusals quoting SI (as [`Self::refusals_in`]).
    pub fn refusals(&self) -> Vec<TreatmentError> {
        self.refusals_in(UnitSystem::Si)
    }

    /// Every refusal at once: the record's faults, then the values beyond the trade's
    /// ([`bounds`]) in the reader's `units`.
    pub fn refusals_in(&self, units: UnitSystem) -> Vec<TreatmentError> {
        let mut all = self.sound();
        all.extend(bounds::drain(self, units));
        all
    }

    /// The record's faults (a value that makes no sense), every one at once.
    pub fn sound(&self) -> Vec<TreatmentError> {
        let mut errs = Vec::new();
        if self.tag.trim().is_empty() {
            errs.push(TreatmentError::new("tag", "a drain needs a tag"));
        }
        if let Some(cd) = self.discharge_coefficient {
            if !(cd > 0.0 && cd <= 1.0) {
                errs.push(TreatmentError::new(
                    "discharge_coefficient",
                    format!("must be in (0, 1], got {cd}"),
                ));
            }
        }
        match self.kind {
            DrainKind::Timer => {
                let open = take(&mut errs, positive(self.open_s.unwrap_or(f64::NAN), "open_s"));
                let every = take(&mut errs, positive(self.interval_s.unwrap_or(f64::NAN), "interval_s"));
                if let (Some(open), Some(every)) = (open, every) {
                    if open > every {
                        errs.push(TreatmentError::new(
                            "open_s",
                            format!("the drain cannot be open {open} s in every {every} s"),
                        ));
                    }
                }
                take(&mut errs, positive(self.orifice_mm.unwrap_or(f64::NAN), "orifice_mm"));
            }
            DrainKind::ManualOpen => {
                take(&mut errs, positive(self.orifice_mm.unwrap_or(f64::NAN), "orifice_mm"));
            }
            DrainKind::ZeroLoss | DrainKind::Float => {
                if let Some(d) = self.orifice_mm {
                    take(&mut errs, non_negative(d, "orifice_mm"));
                }
            }
        }
        errs
    }

    /// Mean free-air loss at line pressure `line` (absolute), inlet air at the site's temperature.
    pub fn air(&self, line: PressureAbs, site: &SiteAir) -> Result<FreeAirFlow, TreatmentError> {
        self.validate()?;
        let share = match self.kind {
            DrainKind::ZeroLoss | DrainKind::Float => return Ok(FreeAirFlow::from_m3_min(0.0)),
            DrainKind::ManualOpen => 1.0,
            DrainKind::Timer => self.open_s.unwrap_or(0.0) / self.interval_s.unwrap_or(1.0),
        };
        let d_m = self.orifice_mm.unwrap_or(0.0) / 1000.0;
        let cd = self.discharge_coefficient.unwrap_or(SHARP_EDGE_CD);
        let open = orifice_leak(d_m, line, site.inlet_temperature, cd, site)
            .map_err(|e| TreatmentError::new("orifice_mm", e.to_string()))?;
        Ok(FreeAirFlow::from_m3_min(open.m3_min() * share))
    }
}

/// A filter as the user records it: the data sheet's clean drop at rated flow and the drop read
/// across it (gauges or a differential indicator).
#[derive(Debug, Clone, PartialEq)]
pub struct Filter {
    pub tag: String,
    pub kind: FilterKind,
    /// Rated flow, free air.
    pub rated_flow: FreeAirFlow,
    /// The data sheet's pressure drop of a clean element at rated flow, bar.
    pub clean_drop_bar: f64,
    /// The drop read across the filter, bar (taken at the mean flow through it).
    pub measured_drop_bar: f64,
    /// Months between element changes, if the site has a rule.
    pub element_change_months: Option<f64>,
    /// What one element change costs (element and labour), in the audit's currency, if known.
    pub element_cost: Option<f64>,
}

/// Excess drop above which an element is worth changing, bar (common practice).
pub const FILTER_CHANGE_ABOVE_BAR: f64 = 0.1;

/// Highest pressure drop accepted on a filter record, bar: beyond it the reading is not a drop
/// across a filter in service (a gauge pressure typed in the wrong field, most likely).
pub const MAX_FILTER_DROP_BAR: f64 = 10.0;

/// A filter at a mean flow through it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct FilterFigures {
    /// The clean drop at that flow: clean drop × (flow / rated flow)², bar.
    pub clean_drop_at_flow_bar: f64,
    /// Measured − clean at that flow, never below 0, bar.
    pub excess_drop_bar: f64,
}

/// A pressure drop at `flow` when it is `drop_rated` at `rated` (drop ∝ flow², common practice).
pub fn drop_at_flow(drop_rated: f64, rated: FreeAirFlow, flow: FreeAirFlow) -> f64 {
    let r = flow.m3_min() / rated.m3_min();
    drop_rated * r * r
}

impl Filter {
    /// The record's first fault (what [`Self::sound`] lists): a stored record that passes it is
    /// priced, even one typed before the bounds of [`bounds`].
    pub fn validate(&self) -> Result<(), TreatmentError> {
        first(self.sound())
    }

    /// Every refusal at once, refusals quoting SI (as [`Self::refusals_in`]).
    pub fn refusals(&self) -> Vec<TreatmentError> {
        self.refusals_in(UnitSystem::Si)
    }

    /// Every refusal at once: the record's faults, then the values beyond the trade's
    /// ([`bounds`]) in the reader's `units`.
    pub fn refusals_in(&self, units: UnitSystem) -> Vec<TreatmentError> {
        let mut all = self.sound();
        all.extend(bounds::filter(self, units));
        all
    }

    /// The record's faults (a value that makes no sense), every one at once.
    pub fn sound(&self) -> Vec<TreatmentError> {
        let mut errs = Vec::new();
        if self.tag.trim().is_empty() {
            errs.push(TreatmentError::new("tag", "a filter needs a tag"));
        }
        take(&mut errs, positive(self.rated_flow.m3_min(), "rated_flow_m3_min"));
        for (v, field) in
            [(self.clean_drop_bar, "clean_drop_bar"), (self.measured_drop_bar, "measured_drop_bar")]
        {
            if take(&mut errs, non_negative(v, field)).is_some() && v > MAX_FILTER_DROP_BAR {
                errs.push(TreatmentError::new(
                    field,
                    format!("a drop across a filter is at most {MAX_FILTER_DROP_BAR} bar, got {v}"),
                ));
            }
        }
        if let Some(m) = self.element_change_months {
            take(&mut errs, positive(m, "element_change_months"));
        }
        if let Some(c) = self.element_cost {
            take(&mut errs, non_negative(c, "element_cost"));
        }
        errs
    }

    /// The filter at a mean flow `through` it (free air).
    pub fn figures(&self, through: FreeAirFlow) -> FilterFigures {
        let clean = drop_at_flow(self.clean_drop_bar, self.rated_flow, through);
        FilterFigures {
            clean_drop_at_flow_bar: clean,
            excess_drop_bar: (self.measured_drop_bar - clean).max(0.0),
        }
    }
}

/// One line of the end-use inventory.
#[derive(Debug, Clone, PartialEq)]
pub struct EndUse {
    pub name: String,
    pub kind: EndUseKind,
    pub count: u32,
    /// Air per use while it runs, free air (a rated figure); or give `orifice_mm`.
    pub flow_m3_min: Option<f64>,
    /// Nozzle or opening bore, mm, blowing at `pressure_bar_g`.
    pub orifice_mm: Option<f64>,
    /// The pressure the use needs (or is fed at), bar(g).
    pub pressure_bar_g: Option<f64>,
    /// Share of production time the use runs, 0-1.
    pub duty: f64,
    pub regulated: bool,
    /// The electric alternative's input per use while running, kW (blower, fan, motor), if known.
    pub alternative_kw: Option<f64>,
}

/// The discharge coefficient taken for an end use's orifice: 1, the ideal nozzle of the published
/// orifice tables (the same basis as the leak calculator).
pub const END_USE_CD: f64 = 1.0;

impl EndUse {
    /// The record's first fault (what [`Self::sound`] lists): a stored record that passes it is
    /// priced, even one typed before the bounds of [`bounds`].
    pub fn validate(&self) -> Result<(), TreatmentError> {
        first(self.sound())
    }

    /// Every refusal at once, refusals quoting SI (as [`Self::refusals_in`]).
    pub fn refusals(&self) -> Vec<TreatmentError> {
        self.refusals_in(UnitSystem::Si)
    }

    /// Every refusal at once: the record's faults, then the values beyond the trade's
    /// ([`bounds`]) in the reader's `units`.
    pub fn refusals_in(&self, units: UnitSystem) -> Vec<TreatmentError> {
        let mut all = self.sound();
        all.extend(bounds::end_use(self, units));
        all
    }

    /// The record's faults (a value that makes no sense), every one at once.
    pub fn sound(&self) -> Vec<TreatmentError> {
        let mut errs = Vec::new();
        if self.name.trim().is_empty() {
            errs.push(TreatmentError::new("name", "an end use needs a name"));
        }
        take(&mut errs, fraction(self.duty, "duty"));
        if self.count == 0 {
            errs.push(TreatmentError::new("count", "must be at least 1"));
        }
        let by_orifice = self.flow_m3_min.is_none() && self.orifice_mm.is_some();
        match (self.flow_m3_min, self.orifice_mm) {
            (Some(q), None) => {
                take(&mut errs, non_negative(q, "flow_m3_min"));
            }
            (None, Some(d)) => {
                take(&mut errs, positive(d, "orifice_mm"));
                // The pressure drives an orifice's flow: above zero.
                take(&mut errs, positive(self.pressure_bar_g.unwrap_or(f64::NAN), "pressure_bar_g"));
            }
            (Some(_), Some(_)) => {
                errs.push(TreatmentError::new("flow_m3_min", "give a flow per use or an opening, not both"))
            }
            (None, None) => errs
                .push(TreatmentError::new("flow_m3_min", "give a flow per use while running or an opening")),
        }
        if let Some(p) = self.pressure_bar_g.filter(|_| !by_orifice) {
            take(&mut errs, non_negative(p, "pressure_bar_g"));
        }
        if let Some(k) = self.alternative_kw {
            take(&mut errs, non_negative(k, "alternative_kw"));
        }
        errs
    }

    /// Air per use while it runs, free air.
    pub fn flow_per_use(&self, site: &SiteAir) -> Result<FreeAirFlow, TreatmentError> {
        self.validate()?;
        if let Some(q) = self.flow_m3_min {
            return Ok(FreeAirFlow::from_m3_min(q));
        }
        let p = PressureAbs::from_bar_g(self.pressure_bar_g.unwrap_or(0.0), site.atmosphere);
        orifice_leak(self.orifice_mm.unwrap_or(0.0) / 1000.0, p, site.inlet_temperature, END_USE_CD, site)
            .map_err(|e| TreatmentError::new("orifice_mm", e.to_string()))
    }

    /// Mean air over production time: count × air per use × duty.
    pub fn mean_flow(&self, site: &SiteAir) -> Result<FreeAirFlow, TreatmentError> {
        Ok(FreeAirFlow::from_m3_min(self.flow_per_use(site)?.m3_min() * self.count as f64 * self.duty))
    }
}

/// The metered mean flow split by what uses it (API.md `summary.demand_split`), free air m³/min.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DemandSplit {
    pub production_m3_min: f64,
    pub inappropriate_m3_min: f64,
    pub purge_and_drains_m3_min: f64,
    pub leaks_m3_min: f64,
    /// The metered mean flow less the rest; negative when the inventory claims more than was metered.
    pub unexplained_m3_min: f64,
}

impl DemandSplit {
    /// Split `metered_mean` into the inventory's parts; the parts sum to it exactly.
    pub fn new(
        metered_mean: FreeAirFlow,
        production: FreeAirFlow,
        inappropriate: FreeAirFlow,
        purge_and_drains: FreeAirFlow,
        leaks: FreeAirFlow,
    ) -> DemandSplit {
        let known = production.m3_min() + inappropriate.m3_min() + purge_and_drains.m3_min() + leaks.m3_min();
        DemandSplit {
            production_m3_min: production.m3_min(),
            inappropriate_m3_min: inappropriate.m3_min(),
            purge_and_drains_m3_min: purge_and_drains.m3_min(),
            leaks_m3_min: leaks.m3_min(),
            unexplained_m3_min: metered_mean.m3_min() - known,
        }
    }

    pub fn total_m3_min(&self) -> f64 {
        self.production_m3_min
            + self.inappropriate_m3_min
            + self.purge_and_drains_m3_min
            + self.leaks_m3_min
            + self.unexplained_m3_min
    }

    /// Whether the inventory claims more air than was metered (beyond 1 % of it).
    pub fn over_explained(&self) -> bool {
        self.unexplained_m3_min < -0.01 * self.total_m3_min().abs()
    }
}

/// The yearly electricity an inappropriate use would save if an electric alternative took over:
/// the air's share of the compressors' energy at the marginal specific power, less the
/// alternative's own electricity; `None` without the alternative's kW.
pub fn inappropriate_use_saving_kwh(
    u: &EndUse,
    site: &SiteAir,
    marginal_kw_per_m3_min: f64,
    production_hours: f64,
) -> Result<Option<f64>, TreatmentError> {
    let air = u.mean_flow(site)?.m3_min();
    Ok(u.alternative_kw.map(|kw| {
        let air_kwh = air * marginal_kw_per_m3_min * production_hours;
        let alt_kwh = kw * u.count as f64 * u.duty * production_hours;
        air_kwh - alt_kwh
    }))
}

pub mod bounds;
mod figures;
pub use figures::*;

#[cfg(test)]
#[path = "treatment_tests.rs"]
mod tests;
