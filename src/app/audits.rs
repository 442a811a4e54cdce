/*!
An audit with its records ([`AuditBundle`]), and the edits of the audit, its site and equipment.
An edit that changes what the passes over the bins read (the site, the compressors) starts the
summary's computation in the background (`summary`), so the next report reads the cache.
*/

use crate::core::analysis::{Accuracy, LeakEstimate};
use crate::core::display::Fmt;
use crate::core::model::{CompressorSpec, StorageSpec};
use crate::core::units::UnitSystem;
use crate::site::{CompressorInput, CompressorRecord, ReceiverInput, ReceiverRecord, SitePatch, SiteRecord};
use crate::store::audits::{self, Audit, AuditListItem, CompressorWrite, FieldTestRecord, UploadRecord};
use crate::store::read::{self, ChannelInfo, ChartPoint, UploadChannelStats};

use super::{App, Error, Result};

/// What the report reads from the stored readings beside the summary.
#[derive(Debug, Clone, Default)]
pub struct ReadFacts {
    /// The runs of UTC hours that hold readings (`read::logged_hour_spans`): the day selector
    /// lists the site's days these touch, and no other.
    pub logged_hours: Vec<(i64, i64)>,
    /// The least and greatest reading of the header pressure channel, Pa absolute: what the
    /// pressure chart's band reaches, every reading kept.
    pub header_extremes_pa: Option<(f64, f64)>,
}

/// The channel the summary reads as the header pressure, as `core::series::Frame::header_pressure`
/// picks its column (the frame's columns follow the channels' order): the first pressure measured
/// in the header and not tied to a compressor, else after treatment, else at a discharge, else
/// any but a point of use, else the first.
fn header_channel(chans: &[ChannelInfo]) -> Option<&ChannelInfo> {
    let p = || chans.iter().filter(|c| c.quantity == "pressure");
    let point = |c: &ChannelInfo| c.point.clone().unwrap_or_else(|| "header".into());
    let at = |pt: &str| p().find(|c| c.compressor_id.is_none() && point(c) == pt);
    at("header")
        .or_else(|| at("after_treatment"))
        .or_else(|| at("discharge"))
        .or_else(|| p().find(|c| point(c) != "point_of_use"))
        .or_else(|| p().next())
}

/// Everything stored about one audit except its readings.
pub struct AuditBundle {
    pub audit: Audit,
    pub compressors: Vec<CompressorRecord>,
    pub receivers: Vec<ReceiverRecord>,
    pub uploads: Vec<UploadRecord>,
    pub field_tests: Vec<FieldTestRecord>,
    pub channels: Vec<ChannelInfo>,
}

impl AuditBundle {
    pub fn storage(&self) -> StorageSpec {
        StorageSpec {
            receivers_m3: self.receivers.iter().map(|r| r.volume_m3).collect(),
            other_volume_m3: self.audit.site.other_volume_m3,
        }
    }
    pub fn specs(&self) -> Vec<CompressorSpec> {
        self.compressors.iter().map(|c| c.to_spec()).collect()
    }
    pub fn fmt(&self) -> Fmt {
        Fmt::new(self.audit.site.display_units, self.audit.site.air().atmosphere)
    }
    pub(crate) fn compressor_ids(&self) -> Vec<i64> {
        self.compressors.iter().map(|c| c.id).collect()
    }
    /// The instrument accuracies: defaults, with power from current flagged per compressor.
    pub fn accuracy(&self) -> Accuracy {
        let mut a = Accuracy::default();
        for c in &self.channels {
            let Some(t) = &c.compressor_tag else { continue };
            if c.quantity != "power" {
                continue;
            }
            let pfs: Vec<_> = c.parts.iter().filter_map(|p| p.form.current).collect();
            if c.unit.eq_ignore_ascii_case("a") || !pfs.is_empty() {
                a.current_derived_power.push(t.clone());
            }
            for pf in pfs {
                a.power_factor_rel.push((t.clone(), pf.pf_rel));
                if pf.single && !a.single_power_factor.contains(t) {
                    a.single_power_factor.push(t.clone());
                }
            }
        }
        a
    }
    /// Leak estimates from the stored field tests, at operating pressure.
    pub fn leak_estimates(&self) -> Vec<LeakEstimate> {
        self.field_tests
            .iter()
            .filter_map(|t| {
                let r = super::fieldtests::result_of(t)?;
                let q = r.leak_flow_m3_min();
                // A flow that was not finite is stored as null: no estimate, as it always was.
                q.is_finite().then(|| LeakEstimate {
                    test_id: t.id,
                    method: t.kind.clone(),
                    leak_flow_m3_min: q,
                    relative_uncertainty: r.relative_uncertainty(),
                    range_m3_min: Some(r.range_m3_min()),
                    warnings: r.warnings().to_vec(),
                })
            })
            .collect()
    }
}

fn check_name(name: &str) -> Result<()> {
    if name.is_empty() || name.chars().count() > 120 {
        return Err(Error::field("name", "the audit name must be 1 to 120 characters"));
    }
    Ok(())
}

impl App {
    /// Every audit, newest first.
    pub async fn list_audits(&self) -> Result<Vec<AuditListItem>> {
        Ok(audits::list_audits(self.db()).await?)
    }

    /// The audit alone, or [`Error::NotFound`].
    pub async fn audit(&self, id: i64) -> Result<Audit> {
        audits::get_audit(self.db(), id).await?.ok_or_else(|| Error::no_audit(id))
    }

    /// The audit with all its records, or [`Error::NotFound`].
    pub async fn bundle(&self, id: i64) -> Result<AuditBundle> {
        let db = self.db();
        let audit = self.audit(id).await?;
        Ok(AuditBundle {
            compressors: audits::compressors(db, id).await?,
            receivers: audits::receivers(db, id).await?,
            uploads: audits::uploads(db, id).await?,
            field_tests: audits::field_tests(db, id).await?,
            channels: read::channels(db, id).await?,
            audit,
        })
    }

    /// What the report reads from the stored readings beside the summary ([`ReadFacts`]).
    pub async fn read_facts(&self, b: &AuditBundle) -> Result<ReadFacts> {
        let header_extremes_pa = match header_channel(&b.channels) {
            Some(c) => read::reading_extremes(self.db(), &b.audit.site.air(), c).await?,
            None => None,
        };
        Ok(ReadFacts {
            logged_hours: read::logged_hour_spans(self.db(), b.audit.id).await?,
            header_extremes_pa,
        })
    }

    pub async fn create_audit(&self, name: &str, patch: &SitePatch) -> Result<i64> {
        let name = name.trim();
        check_name(name)?;
        let mut site = SiteRecord::default();
        // A new audit in US customary units prices in US dollars unless a currency is given.
        if patch.currency.is_none()
            && patch.display_units.as_deref().and_then(UnitSystem::parse) == Some(UnitSystem::Us)
        {
            site.currency = "USD".into();
        }
        site.apply(patch)?;
        Ok(audits::create_audit(self.db(), name, &site).await?)
    }

    /// Edit the audit's name, auditor, notes and site (`None` and empty patches keep what is stored).
    pub async fn update_audit(
        &self,
        id: i64,
        name: Option<&str>,
        auditor: Option<&str>,
        notes: Option<&str>,
        patch: &SitePatch,
    ) -> Result<()> {
        let a = self.audit(id).await?;
        let mut site = a.site.clone();
        site.apply(patch)?;
        let name = name.map(str::trim).unwrap_or(&a.name);
        check_name(name)?;
        audits::update_audit(
            self.db(),
            id,
            name,
            auditor.unwrap_or(&a.auditor),
            notes.unwrap_or(&a.notes),
            &site,
        )
        .await?;
        // What the meter measured is stored: the tests read on the site's air as it is now.
        if site != a.site {
            self.rederive_field_tests(id).await?;
        }
        Ok(())
    }

    /// Store a compressor (`id` 0: a new one); returns its id.
    pub async fn save_compressor(&self, audit_id: i64, id: i64, input: &CompressorInput) -> Result<i64> {
        let units = self.audit(audit_id).await?.site.display_units;
        let mut rec = CompressorRecord::from_input_in(input, units)?;
        rec.id = id;
        match audits::save_compressor(self.db(), audit_id, &rec).await? {
            CompressorWrite::Stored(id) => {
                // A load/unload test reads its compressor's rated free air delivery.
                self.rederive_field_tests(audit_id).await?;
                Ok(id)
            }
            CompressorWrite::TagTaken => {
                Err(Error::Conflict(format!("this audit has a compressor tagged {:?} already", rec.spec.tag)))
            }
        }
    }

    /// What goes with the audit if it is deleted: its files, readings, tests, scenarios and
    /// treatment records, counted.
    pub async fn audit_contents(&self, id: i64) -> Result<audits::AuditContents> {
        Ok(audits::audit_contents(self.db(), id).await?)
    }

    /// Delete a compressor; `false` if the audit has no such compressor.
    pub async fn delete_compressor(&self, audit_id: i64, id: i64) -> Result<bool> {
        self.audit(audit_id).await?;
        let gone = audits::delete_compressor(self.db(), audit_id, id).await?;
        self.rederive_field_tests(audit_id).await?;
        Ok(gone)
    }

    pub async fn add_receiver(&self, audit_id: i64, input: &ReceiverInput) -> Result<i64> {
        let units = self.audit(audit_id).await?.site.display_units;
        input.validate_in(units)?;
        let rid = audits::add_receiver(self.db(), audit_id, input.name.trim(), input.volume_m3, &input.notes)
            .await?;
        // A bleed-down without its own volume reads the system volume.
        self.rederive_field_tests(audit_id).await?;
        Ok(rid)
    }

    /// Edit a receiver; `false` if the audit has no such receiver.
    pub async fn update_receiver(&self, audit_id: i64, id: i64, input: &ReceiverInput) -> Result<bool> {
        let units = self.audit(audit_id).await?.site.display_units;
        input.validate_in(units)?;
        let found = audits::update_receiver(
            self.db(),
            audit_id,
            id,
            input.name.trim(),
            input.volume_m3,
            &input.notes,
        )
        .await?;
        self.rederive_field_tests(audit_id).await?;
        Ok(found)
    }

    /// Delete a receiver; `false` if the audit has no such receiver.
    pub async fn delete_receiver(&self, audit_id: i64, id: i64) -> Result<bool> {
        self.audit(audit_id).await?;
        let gone = audits::delete_receiver(self.db(), audit_id, id).await?;
        self.rederive_field_tests(audit_id).await?;
        Ok(gone)
    }

    /// Set (or with `None` clear) the implementation cost an auditor gave for a kind of measure.
    pub async fn set_cost(&self, audit_id: i64, kind: &str, cost: Option<f64>) -> Result<()> {
        self.audit(audit_id).await?;
        if crate::core::recommend::MeasureKind::parse(kind).is_none() {
            return Err(Error::field("kind", format!("unknown recommendation kind {kind:?}")));
        }
        if let Some(c) = cost {
            crate::core::recommend::check_implementation_cost(c)
                .map_err(|m| Error::field("implementation_cost", m))?;
        }
        audits::set_cost_override(self.db(), audit_id, kind, cost).await?;
        Ok(())
    }

    /// The audit's measure plan: order, kinds left out and options (the defaults when none is stored).
    pub async fn measure_plan(&self, audit_id: i64) -> Result<crate::core::recommend::MeasureOptions> {
        self.audit(audit_id).await?;
        Ok(audits::measure_plan(self.db(), audit_id)
            .await?
            .and_then(|t| serde_json::from_str(&t).ok())
            .unwrap_or_default())
    }

    /// Store the audit's measure plan after checking it (`MeasureOptions::check`); the stack is
    /// priced again with the next summary.
    pub async fn set_measure_plan(
        &self,
        audit_id: i64,
        plan: &crate::core::recommend::MeasureOptions,
    ) -> Result<()> {
        self.audit(audit_id).await?;
        plan.check().map_err(|(field, m)| Error::field(field, m))?;
        let text = serde_json::to_string(plan).expect("a plan serialises");
        audits::set_measure_plan(self.db(), audit_id, &text).await?;
        Ok(())
    }

    /// Min/mean/max buckets of one channel from the rollups, SI.
    /// The site's air applied as the audit's site has it now (`core::basis`). An energy counter's
    /// buckets are the power it stands for, W (`read::counter_power_series`), as in the figures.
    pub async fn chart_series(
        &self,
        b: &AuditBundle,
        channel: &read::ChannelInfo,
        from_ms: i64,
        to_ms: i64,
        points: usize,
    ) -> Result<Vec<ChartPoint>> {
        let site = b.audit.site.air();
        Ok(if channel.quantity == "energy" {
            read::counter_power_series(self.db(), &site, channel, from_ms, to_ms, points).await?
        } else {
            read::chart_series(self.db(), &site, channel, from_ms, to_ms, points).await?
        })
    }

    /// The channels one complete upload wrote, with the count and mean of their readings in SI
    /// with the site's air applied (Pa absolute, m³/s of free air): stored on the meter's basis,
    /// converted here as the chart series are. `None` when the audit has no such upload.
    pub async fn upload_channel_stats(
        &self,
        b: &AuditBundle,
        upload_id: i64,
    ) -> Result<Option<Vec<UploadChannelStats>>> {
        let Some(mut stats) = read::upload_channel_stats(self.db(), b.audit.id, upload_id).await? else {
            return Ok(None);
        };
        let site = b.audit.site.air();
        for s in &mut stats {
            if let Some(c) = b.channels.iter().find(|c| c.id == s.channel_id) {
                let (k, o) = c.to_site(upload_id, &site);
                // k > 0 for every basis: the order of least and greatest holds.
                (s.mean_si, s.min_si, s.max_si) = (s.mean_si * k + o, s.min_si * k + o, s.max_si * k + o);
            }
        }
        Ok(Some(stats))
    }

    /// The mapping remembered for a file layout, as stored (JSON text).
    pub async fn remembered_mapping(&self, layout_key: &str) -> Result<Option<String>> {
        Ok(audits::remembered_mapping(self.db(), layout_key).await?)
    }
}
