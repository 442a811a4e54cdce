//! Dryers, filters, condensate drains and the end-use inventory of an audit (API.md "Additions"): the JSON
//! records as posted, checked by `core::treatment` before they are stored, and read back into the
//! core's types for the summary.

use serde::{Deserialize, Serialize};

use super::{App, Error, Result};
use crate::core::treatment::bounds;
use crate::core::treatment::{
    Drain, DrainKind, Dryer, DryerControl, DryerKind, EndUse, EndUseKind, Filter, FilterKind, Records,
    TreatmentError,
};
use crate::core::units::{FreeAirFlow, UnitSystem};
use crate::store::audits;

/// Which list a record belongs to: its table kind and its API path segment.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ItemKind {
    Dryer,
    Drain,
    EndUse,
    Filter,
}

impl ItemKind {
    /// The path segment (`dryers`, `drains`, `end-uses`, `filters`), or `None`.
    pub fn from_segment(s: &str) -> Option<ItemKind> {
        match s {
            "dryers" => Some(ItemKind::Dryer),
            "drains" => Some(ItemKind::Drain),
            "end-uses" => Some(ItemKind::EndUse),
            "filters" => Some(ItemKind::Filter),
            _ => None,
        }
    }
    pub fn stored(self) -> &'static str {
        match self {
            ItemKind::Dryer => "dryer",
            ItemKind::Drain => "drain",
            ItemKind::EndUse => "end_use",
            ItemKind::Filter => "filter",
        }
    }
    pub fn plural(self) -> &'static str {
        match self {
            ItemKind::Dryer => "dryers",
            ItemKind::Drain => "drains",
            ItemKind::EndUse => "end_uses",
            ItemKind::Filter => "filters",
        }
    }
}

fn default_control() -> String {
    "fixed_cycle".into()
}
fn one() -> u32 {
    1
}
fn full_duty() -> f64 {
    1.0
}

/// `POST /api/v1/audits/{id}/dryers`.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DryerInput {
    pub tag: String,
    pub kind: String,
    pub rated_flow_m3_min: f64,
    #[serde(default)]
    pub purge_fraction: Option<f64>,
    #[serde(default)]
    pub power_kw: f64,
    #[serde(default = "default_control")]
    pub control: String,
}

impl DryerInput {
    pub fn to_core(&self) -> std::result::Result<Dryer, TreatmentError> {
        let d = self.parsed()?;
        d.validate()?;
        Ok(d)
    }

    /// The record with its words read (kind, control), not yet checked.
    fn parsed(&self) -> std::result::Result<Dryer, TreatmentError> {
        let d = Dryer {
            tag: self.tag.trim().to_string(),
            kind: DryerKind::parse(&self.kind, "kind")?,
            rated_flow: FreeAirFlow::from_m3_min(self.rated_flow_m3_min),
            purge_fraction: self.purge_fraction,
            power_kw: self.power_kw,
            control: DryerControl::parse(&self.control, "control")?,
        };
        Ok(d)
    }
}

/// `POST /api/v1/audits/{id}/drains`.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct DrainInput {
    pub tag: String,
    pub kind: String,
    #[serde(default)]
    pub open_s: Option<f64>,
    #[serde(default)]
    pub interval_s: Option<f64>,
    #[serde(default)]
    pub orifice_mm: Option<f64>,
    #[serde(default)]
    pub discharge_coefficient: Option<f64>,
}

impl DrainInput {
    pub fn to_core(&self) -> std::result::Result<Drain, TreatmentError> {
        let d = self.parsed()?;
        d.validate()?;
        Ok(d)
    }

    /// The record with its words read (kind, control), not yet checked.
    fn parsed(&self) -> std::result::Result<Drain, TreatmentError> {
        let d = Drain {
            tag: self.tag.trim().to_string(),
            kind: DrainKind::parse(&self.kind, "kind")?,
            open_s: self.open_s,
            interval_s: self.interval_s,
            orifice_mm: self.orifice_mm,
            discharge_coefficient: self.discharge_coefficient,
        };
        Ok(d)
    }
}

/// `POST /api/v1/audits/{id}/end-uses`.
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct EndUseInput {
    pub name: String,
    pub kind: String,
    #[serde(default = "one")]
    pub count: u32,
    #[serde(default)]
    pub orifice_mm: Option<f64>,
    #[serde(default)]
    pub flow_m3_min: Option<f64>,
    #[serde(default)]
    pub pressure_bar_g: Option<f64>,
    #[serde(default = "full_duty")]
    pub duty: f64,
    #[serde(default)]
    pub regulated: bool,
    #[serde(default)]
    pub alternative_kw: Option<f64>,
    /// Fed through a booster: its pressure may then be above what the plant's compressors make.
    #[serde(default)]
    pub boosted: bool,
}

impl EndUseInput {
    pub fn to_core(&self) -> std::result::Result<EndUse, TreatmentError> {
        let u = self.parsed()?;
        u.validate()?;
        Ok(u)
    }

    /// The record with its words read (kind, control), not yet checked.
    fn parsed(&self) -> std::result::Result<EndUse, TreatmentError> {
        let u = EndUse {
            name: self.name.trim().to_string(),
            kind: EndUseKind::parse(&self.kind, "kind")?,
            count: self.count,
            flow_m3_min: self.flow_m3_min,
            orifice_mm: self.orifice_mm,
            pressure_bar_g: self.pressure_bar_g,
            duty: self.duty,
            regulated: self.regulated,
            alternative_kw: self.alternative_kw,
        };
        Ok(u)
    }
}

/// `POST /api/v1/audits/{id}/filters`: the data sheet's clean drop at rated flow and the drop read
/// across the filter, bar (a difference, not a gauge pressure).
#[derive(Debug, Clone, Serialize, Deserialize)]
#[serde(deny_unknown_fields)]
pub struct FilterInput {
    pub tag: String,
    pub kind: String,
    pub rated_flow_m3_min: f64,
    pub clean_drop_bar: f64,
    pub measured_drop_bar: f64,
    #[serde(default)]
    pub element_change_months: Option<f64>,
    #[serde(default)]
    pub element_cost: Option<f64>,
}

impl FilterInput {
    pub fn to_core(&self) -> std::result::Result<Filter, TreatmentError> {
        let f = self.parsed()?;
        f.validate()?;
        Ok(f)
    }

    /// The record with its words read (kind, control), not yet checked.
    fn parsed(&self) -> std::result::Result<Filter, TreatmentError> {
        let f = Filter {
            tag: self.tag.trim().to_string(),
            kind: FilterKind::parse(&self.kind, "kind")?,
            rated_flow: FreeAirFlow::from_m3_min(self.rated_flow_m3_min),
            clean_drop_bar: self.clean_drop_bar,
            measured_drop_bar: self.measured_drop_bar,
            element_change_months: self.element_change_months,
            element_cost: self.element_cost,
        };
        Ok(f)
    }
}

const MAX_TEXT: usize = 64;

/// One record as posted, of any of the four kinds.
#[derive(Debug, Clone)]
pub enum TreatmentInput {
    Dryer(DryerInput),
    Drain(DrainInput),
    EndUse(EndUseInput),
    Filter(FilterInput),
}

/// What a record is checked against beyond itself: the units its refusals quote and the highest
/// pressure the plant's compressors make (`bounds::plant_pressure`: bar(g) and the machine's tag).
#[derive(Debug, Clone)]
pub struct Plant {
    pub units: UnitSystem,
    pub pressure: Option<(f64, String)>,
}

impl TreatmentInput {
    /// Every refusal of the record at once (`core::treatment`'s `refusals_in`, then an end use's
    /// pressure against the plant's), in `plant.units`, for a form that shows each beside its
    /// field; a word that cannot be read (kind, control) alone.
    pub fn refusals(&self, plant: &Plant) -> Vec<TreatmentError> {
        let units = plant.units;
        let all = match self {
            TreatmentInput::Dryer(i) => i.parsed().map(|c| c.refusals_in(units)),
            TreatmentInput::Drain(i) => i.parsed().map(|c| c.refusals_in(units)),
            TreatmentInput::EndUse(i) => i.parsed().map(|c| {
                let mut all = c.refusals_in(units);
                let at_plant = plant.pressure.as_ref().map(|(p, tag)| (*p, tag.as_str()));
                if !all.iter().any(|e| e.field == "pressure_bar_g") {
                    all.extend(bounds::end_use_pressure(i.pressure_bar_g, i.boosted, at_plant, units));
                }
                all
            }),
            TreatmentInput::Filter(i) => i.parsed().map(|c| c.refusals_in(units)),
        };
        all.unwrap_or_else(|e| vec![e])
    }

    pub fn kind(&self) -> ItemKind {
        match self {
            TreatmentInput::Dryer(_) => ItemKind::Dryer,
            TreatmentInput::Drain(_) => ItemKind::Drain,
            TreatmentInput::EndUse(_) => ItemKind::EndUse,
            TreatmentInput::Filter(_) => ItemKind::Filter,
        }
    }

    /// The record checked (every refusal at once, [`Self::refusals`]) and put in its stored form
    /// (its text trimmed).
    fn checked(mut self, plant: &Plant) -> Result<String> {
        let (name, text) = match &self {
            TreatmentInput::EndUse(i) => ("name", i.name.as_str()),
            TreatmentInput::Dryer(DryerInput { tag, .. })
            | TreatmentInput::Drain(DrainInput { tag, .. })
            | TreatmentInput::Filter(FilterInput { tag, .. }) => ("tag", tag.as_str()),
        };
        if text.chars().count() > MAX_TEXT {
            return Err(Error::field(name, format!("at most {MAX_TEXT} characters")));
        }
        let all = self.refusals(plant);
        if !all.is_empty() {
            return Err(Error::fields(
                all.into_iter().map(|e| crate::site::FieldError::new(e.field, e.message)).collect(),
            ));
        }
        let field = |e: TreatmentError| Error::field(e.field, e.message);
        let v = match &mut self {
            TreatmentInput::Dryer(i) => {
                i.tag = i.to_core().map_err(field)?.tag;
                serde_json::to_value(&*i)
            }
            TreatmentInput::Drain(i) => {
                i.tag = i.to_core().map_err(field)?.tag;
                serde_json::to_value(&*i)
            }
            TreatmentInput::EndUse(i) => {
                i.name = i.to_core().map_err(field)?.name;
                serde_json::to_value(&*i)
            }
            TreatmentInput::Filter(i) => {
                i.tag = i.to_core().map_err(field)?.tag;
                serde_json::to_value(&*i)
            }
        };
        Ok(v.expect("a parsed record serialises").to_string())
    }
}

/// A stored record as the API lists it: its fields and `id`.
fn listed(r: &audits::TreatmentItemRecord) -> serde_json::Value {
    let mut v: serde_json::Value = serde_json::from_str(&r.body).unwrap_or_default();
    if let Some(o) = v.as_object_mut() {
        o.insert("id".into(), r.id.into());
    }
    v
}

/// The stored records read into the core's types; a record that no longer reads (it cannot, as
/// every one was checked before it was stored) is skipped.
pub fn records(items: &[audits::TreatmentItemRecord]) -> Records {
    let mut out = Records::default();
    for r in items {
        match r.kind.as_str() {
            "dryer" => {
                if let Some(d) =
                    serde_json::from_str::<DryerInput>(&r.body).ok().and_then(|i| i.to_core().ok())
                {
                    out.dryers.push(d);
                }
            }
            "drain" => {
                if let Some(d) =
                    serde_json::from_str::<DrainInput>(&r.body).ok().and_then(|i| i.to_core().ok())
                {
                    out.drains.push(d);
                }
            }
            "end_use" => {
                if let Some(u) =
                    serde_json::from_str::<EndUseInput>(&r.body).ok().and_then(|i| i.to_core().ok())
                {
                    out.end_uses.push(u);
                }
            }
            "filter" => {
                if let Some(f) =
                    serde_json::from_str::<FilterInput>(&r.body).ok().and_then(|i| i.to_core().ok())
                {
                    out.filters.push(f);
                }
            }
            _ => {}
        }
    }
    out
}

/// A stored record that the checks of today refuse: stored before them (`core::treatment::bounds`,
/// or an end use above a plant's pressure since lowered), it still reads and is priced, and the
/// pages flag it so that the user edits it.
#[derive(Debug, Clone)]
pub struct OutsideBounds {
    pub kind: ItemKind,
    pub id: i64,
    /// Its tag, or an end use's name.
    pub name: String,
    /// Every refusal its values would get now, in the units asked for.
    pub refusals: Vec<TreatmentError>,
}

/// A stored record read back as the input it was posted as.
fn stored_input(r: &audits::TreatmentItemRecord) -> Option<TreatmentInput> {
    let body = r.body.as_str();
    match r.kind.as_str() {
        "dryer" => serde_json::from_str(body).ok().map(TreatmentInput::Dryer),
        "drain" => serde_json::from_str(body).ok().map(TreatmentInput::Drain),
        "end_use" => serde_json::from_str(body).ok().map(TreatmentInput::EndUse),
        "filter" => serde_json::from_str(body).ok().map(TreatmentInput::Filter),
        _ => None,
    }
}

impl App {
    /// The audit's stored records outside the checks of today ([`OutsideBounds`]), their refusals
    /// in `units`, in the order they are stored.
    pub async fn treatment_outside_bounds(
        &self,
        audit_id: i64,
        units: UnitSystem,
    ) -> Result<Vec<OutsideBounds>> {
        let plant = Plant { units, ..self.treatment_plant(audit_id).await? };
        let items = audits::treatment_items(self.db(), audit_id).await?;
        Ok(items
            .iter()
            .filter_map(|r| {
                let input = stored_input(r)?;
                let refusals = input.refusals(&plant);
                let name = match &input {
                    TreatmentInput::EndUse(i) => i.name.clone(),
                    TreatmentInput::Dryer(DryerInput { tag, .. })
                    | TreatmentInput::Drain(DrainInput { tag, .. })
                    | TreatmentInput::Filter(FilterInput { tag, .. }) => tag.clone(),
                };
                (!refusals.is_empty()).then(|| OutsideBounds { kind: input.kind(), id: r.id, name, refusals })
            })
            .collect())
    }

    /// What an audit's records are checked against: its units and its plant's highest pressure.
    pub async fn treatment_plant(&self, audit_id: i64) -> Result<Plant> {
        let units = self.audit(audit_id).await?.site.display_units;
        let compressors = audits::compressors(self.db(), audit_id).await?;
        let pressure = bounds::plant_pressure(
            compressors
                .iter()
                .map(|c| (c.spec.tag.as_str(), c.spec.rated_pressure_bar_g, c.spec.max_pressure_bar_g)),
        )
        .map(|(p, tag)| (p, tag.to_string()));
        Ok(Plant { units, pressure })
    }

    /// Add a dryer, filter, drain or end use; its id.
    pub async fn add_treatment_item(&self, audit_id: i64, input: TreatmentInput) -> Result<i64> {
        let plant = self.treatment_plant(audit_id).await?;
        let kind = input.kind();
        let stored = input.checked(&plant)?;
        Ok(audits::add_treatment_item(self.db(), audit_id, kind.stored(), &stored).await?)
    }

    /// Replace a record; `false` if the audit has no such record of that kind.
    pub async fn update_treatment_item(&self, audit_id: i64, id: i64, input: TreatmentInput) -> Result<bool> {
        let plant = self.treatment_plant(audit_id).await?;
        let kind = input.kind();
        let stored = input.checked(&plant)?;
        Ok(audits::update_treatment_item(self.db(), audit_id, kind.stored(), id, &stored).await?)
    }

    /// Delete a record; `false` if the audit has no such record of that kind.
    pub async fn delete_treatment_item(&self, audit_id: i64, kind: ItemKind, id: i64) -> Result<bool> {
        self.audit(audit_id).await?;
        Ok(audits::delete_treatment_item(self.db(), audit_id, kind.stored(), id).await?)
    }

    /// The records of one kind, as the API lists them.
    pub async fn treatment_items(&self, audit_id: i64, kind: ItemKind) -> Result<Vec<serde_json::Value>> {
        self.audit(audit_id).await?;
        Ok(audits::treatment_items(self.db(), audit_id)
            .await?
            .iter()
            .filter(|r| r.kind == kind.stored())
            .map(listed)
            .collect())
    }
}
