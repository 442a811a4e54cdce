/*!
The demo plant (`crate::demo`) installed as an audit through the normal paths: the audit, its
compressors and receivers through the same edits as the forms, its logger files through the same
import as the command line, and its summary worked out so the first report reads the cache.
*/

use std::sync::Arc;

use crate::ingest::Mapping;
use crate::site::{CompressorInput, ReceiverInput, SitePatch};
use crate::store::audits;
use crate::store::import::Progress;

use super::App;

impl App {
    /// Build the demo plant's audit if the database has none; returns its id.
    pub async fn ensure_demo(&self) -> anyhow::Result<i64> {
        let plant = crate::demo::demo_plant();
        if let Some(id) = audits::find_audit_by_name(self.db(), &plant.audit_name).await? {
            return Ok(id);
        }
        let s = &plant.site;
        let patch = SitePatch {
            altitude_m: Some(s.altitude_m),
            inlet_temperature_c: Some(s.inlet_temperature_c),
            timezone: Some(s.timezone.clone()),
            electricity_price_per_kwh: Some(s.electricity_price_per_kwh),
            demand_charge_per_kw_month: Some(s.demand_charge_per_kw_month),
            currency: Some(s.currency.clone()),
            operating_weeks_per_year: Some(s.operating_weeks_per_year),
            heating_fuel_price_per_kwh: Some(s.heating_fuel_price_per_kwh),
            heater_efficiency: Some(s.heater_efficiency),
            heating_months: Some(s.heating_months.clone()),
            grid_co2_kg_per_kwh: Some(s.grid_co2_kg_per_kwh),
            fuel_co2_kg_per_kwh: Some(s.fuel_co2_kg_per_kwh),
            other_volume_m3: Some(plant.other_volume_m3),
            ..Default::default()
        };
        let id = self.create_audit(&plant.audit_name, &patch).await?;
        self.update_audit(id, None, Some(&s.auditor), Some(&s.notes), &SitePatch::default()).await?;
        for c in &plant.compressors {
            let input = CompressorInput::of(c);
            self.save_compressor(id, 0, &input).await?;
        }
        for (name, v) in &plant.receivers {
            self.add_receiver(id, &ReceiverInput { name: name.clone(), volume_m3: *v, notes: String::new() })
                .await?;
        }
        for (list, body) in crate::demo::demo_treatment() {
            use super::treatment::TreatmentInput as T;
            let record = match list {
                "dryers" => T::Dryer(serde_json::from_value(body)?),
                "drains" => T::Drain(serde_json::from_value(body)?),
                _ => T::EndUse(serde_json::from_value(body)?),
            };
            self.add_treatment_item(id, record).await?;
        }
        let spool_dir = &self.config().spool_dir;
        std::fs::create_dir_all(spool_dir)?;
        for f in &plant.files {
            let path = spool_dir.join(&f.filename);
            std::fs::write(&path, f.csv.as_bytes())?;
            let mapping: Mapping = serde_json::from_value(f.mapping.clone())?;
            let outcome = self.import_path(id, &path, mapping, false, Arc::new(Progress::default())).await;
            let _ = std::fs::remove_file(&path);
            outcome?;
        }
        self.summary(id, None).await?;
        Ok(id)
    }
}
