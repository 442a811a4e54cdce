/*!
Audits and what belongs to them: site, compressors, receivers, field tests, cost overrides, the
summary cache and remembered mappings. Every change that can alter a computed figure bumps the audit's
`revision` in the same transaction, which invalidates the cached summary.
*/

use serde::Serialize;
use sqlx::{Row, SqlitePool};

use super::{begin_write, now_rfc3339, StoreError};
use crate::core::model::{CompressorKind, CompressorSpec, Control, Cooling};
use crate::core::units::UnitSystem;
use crate::site::{CompressorRecord, ReceiverRecord, SiteRecord};

/// An audit's header and site.
#[derive(Debug, Clone, Serialize)]
pub struct Audit {
    pub id: i64,
    pub name: String,
    pub auditor: String,
    pub notes: String,
    pub created_at: String,
    pub revision: i64,
    pub site: SiteRecord,
}

/// A line of the audit list.
#[derive(Debug, Clone, Serialize)]
pub struct AuditListItem {
    pub id: i64,
    pub name: String,
    pub created_at: String,
    pub compressors: i64,
    pub uploads: i64,
    /// The site's time zone (IANA), for the creation date as the site's calendar has it.
    #[serde(skip)]
    pub timezone: String,
}

impl AuditListItem {
    /// The creation date without the time, on the site's calendar ("4 Dec 2026").
    pub fn created_date(&self) -> String {
        let zone = jiff::tz::TimeZone::get(&self.timezone).unwrap_or(jiff::tz::TimeZone::UTC);
        match self.created_at.parse::<jiff::Timestamp>() {
            Ok(t) => t.to_zoned(zone).date().strftime("%-d %b %Y").to_string(),
            Err(_) => self.created_at.get(..10).unwrap_or(&self.created_at).to_string(),
        }
    }
}

/// A stored logger file.
#[derive(Debug, Clone, Serialize)]
pub struct UploadRecord {
    pub id: i64,
    pub filename: String,
    pub bytes: i64,
    pub rows: i64,
    pub readings: i64,
    pub first: Option<String>,
    pub last: Option<String>,
    pub created_at: String,
    pub warnings: Vec<String>,
    /// `warnings` in parts, one for one (empty for an upload stored before they were kept).
    pub warning_parts: Vec<Vec<crate::core::recommend::Part>>,
    pub sha256: String,
    /// The mapping it was imported with, as stored.
    pub mapping: serde_json::Value,
    /// Bytes its kept original takes in the database (deflated), `None` when it was imported
    /// before originals were kept (it cannot be imported again without the file).
    pub original_bytes_stored: Option<i64>,
    #[serde(skip)]
    pub quality_json: String,
}

pub fn ms_to_rfc3339(ms: i64) -> String {
    jiff::Timestamp::from_millisecond(ms).map(|t| t.to_string()).unwrap_or_default()
}

const SITE_COLUMNS: &str = "altitude_m, atmospheric_pressure_kpa_abs, inlet_temperature_c, timezone, \
    electricity_price_per_kwh, demand_charge_per_kw_month, currency, operating_weeks_per_year, \
    operating_hours_per_year, display_units, heating_fuel_price_per_kwh, heater_efficiency, \
    heating_months, heat_use, grid_co2_kg_per_kwh, fuel_co2_kg_per_kwh, other_volume_m3, \
    heating_degree_days_k_day, annual_space_heat_kwh";

fn site_from_row(r: &sqlx::sqlite::SqliteRow) -> SiteRecord {
    let months: String = r.get("heating_months");
    let units: String = r.get("display_units");
    SiteRecord {
        altitude_m: r.get("altitude_m"),
        atmospheric_pressure_override_kpa_abs: r.get("atmospheric_pressure_kpa_abs"),
        inlet_temperature_c: r.get("inlet_temperature_c"),
        timezone: r.get("timezone"),
        electricity_price_per_kwh: r.get("electricity_price_per_kwh"),
        demand_charge_per_kw_month: r.get("demand_charge_per_kw_month"),
        currency: r.get("currency"),
        operating_weeks_per_year: r.get("operating_weeks_per_year"),
        operating_hours_per_year: r.get("operating_hours_per_year"),
        display_units: UnitSystem::parse(&units).unwrap_or_default(),
        heating_fuel_price_per_kwh: r.get("heating_fuel_price_per_kwh"),
        heater_efficiency: r.get("heater_efficiency"),
        heating_months: months.split(',').filter_map(|m| m.trim().parse().ok()).collect(),
        heat_use: r.get("heat_use"),
        heating_degree_days_k_day: {
            let d: String = r.get("heating_degree_days_k_day");
            d.split(',').filter_map(|x| x.trim().parse().ok()).collect()
        },
        annual_space_heat_kwh: r.get("annual_space_heat_kwh"),
        grid_co2_kg_per_kwh: r.get("grid_co2_kg_per_kwh"),
        fuel_co2_kg_per_kwh: r.get("fuel_co2_kg_per_kwh"),
        other_volume_m3: r.get("other_volume_m3"),
    }
}

fn months_text(m: &[u8]) -> String {
    m.iter().map(|x| x.to_string()).collect::<Vec<_>>().join(",")
}

/// Degree-days as stored: Rust's shortest round-trip text of each value, comma separated.
fn degree_days_text(d: &[f64]) -> String {
    d.iter().map(|x| x.to_string()).collect::<Vec<_>>().join(",")
}

/// The site's values bound in the order of [`SITE_COLUMNS`], after what `q` has bound already.
fn bind_site<'q>(q: SqliteQuery<'q>, site: &'q SiteRecord) -> SqliteQuery<'q> {
    q.bind(site.altitude_m)
        .bind(site.atmospheric_pressure_override_kpa_abs)
        .bind(site.inlet_temperature_c)
        .bind(&site.timezone)
        .bind(site.electricity_price_per_kwh)
        .bind(site.demand_charge_per_kw_month)
        .bind(&site.currency)
        .bind(site.operating_weeks_per_year)
        .bind(site.operating_hours_per_year)
        .bind(site.display_units.as_str())
        .bind(site.heating_fuel_price_per_kwh)
        .bind(site.heater_efficiency)
        .bind(months_text(&site.heating_months))
        .bind(&site.heat_use)
        .bind(site.grid_co2_kg_per_kwh)
        .bind(site.fuel_co2_kg_per_kwh)
        .bind(site.other_volume_m3)
        .bind(degree_days_text(&site.heating_degree_days_k_day))
        .bind(site.annual_space_heat_kwh)
}

type SqliteQuery<'q> = sqlx::query::Query<'q, sqlx::Sqlite, sqlx::sqlite::SqliteArguments<'q>>;

/// A column list `a, b, ...` as `a = ?, b = ?, ...` for an UPDATE.
fn assignments(columns: &str) -> String {
    columns.split(',').map(|c| format!("{} = ?", c.trim())).collect::<Vec<_>>().join(", ")
}

/// As many `?` as `columns` names, for an INSERT.
fn marks(columns: &str) -> String {
    vec!["?"; columns.split(',').count()].join(", ")
}

pub async fn create_audit(pool: &SqlitePool, name: &str, site: &SiteRecord) -> Result<i64, StoreError> {
    let mut tx = begin_write(pool).await?;
    let sql = format!(
        "INSERT INTO audit (name, created_at, {SITE_COLUMNS}) VALUES (?, ?, {})",
        marks(SITE_COLUMNS)
    );
    let id = bind_site(sqlx::query(&sql).bind(name).bind(now_rfc3339()), site)
        .execute(&mut *tx)
        .await?
        .last_insert_rowid();
    tx.commit().await?;
    Ok(id)
}

pub async fn update_audit(
    pool: &SqlitePool,
    id: i64,
    name: &str,
    auditor: &str,
    notes: &str,
    site: &SiteRecord,
) -> Result<(), StoreError> {
    let mut tx = begin_write(pool).await?;
    let sql = format!(
        "UPDATE audit SET name = ?, auditor = ?, notes = ?, {}, revision = revision + 1 WHERE id = ?",
        assignments(SITE_COLUMNS)
    );
    bind_site(sqlx::query(&sql).bind(name).bind(auditor).bind(notes), site)
        .bind(id)
        .execute(&mut *tx)
        .await?;
    tx.commit().await?;
    Ok(())
}

pub async fn get_audit(pool: &SqlitePool, id: i64) -> Result<Option<Audit>, StoreError> {
    let row = sqlx::query(&format!(
        "SELECT id, name, auditor, notes, created_at, revision, {SITE_COLUMNS} FROM audit WHERE id = ?"
    ))
    .bind(id)
    .fetch_optional(pool)
    .await?;
    Ok(row.map(|r| Audit {
        id: r.get("id"),
        name: r.get("name"),
        auditor: r.get("auditor"),
        notes: r.get("notes"),
        created_at: r.get("created_at"),
        revision: r.get("revision"),
        site: site_from_row(&r),
    }))
}

pub async fn list_audits(pool: &SqlitePool) -> Result<Vec<AuditListItem>, StoreError> {
    let rows = sqlx::query(
        "SELECT a.id, a.name, a.created_at, a.timezone, \
         (SELECT count(*) FROM compressor c WHERE c.audit_id = a.id) AS compressors, \
         (SELECT count(*) FROM upload u WHERE u.audit_id = a.id AND u.state = 'complete') AS uploads \
         FROM audit a ORDER BY a.id",
    )
    .fetch_all(pool)
    .await?;
    Ok(rows
        .iter()
        .map(|r| AuditListItem {
            id: r.get("id"),
            name: r.get("name"),
            created_at: r.get("created_at"),
            compressors: r.get("compressors"),
            uploads: r.get("uploads"),
            timezone: r.get("timezone"),
        })
        .collect())
}

pub async fn find_audit_by_name(pool: &SqlitePool, name: &str) -> Result<Option<i64>, StoreError> {
    Ok(sqlx::query_scalar("SELECT id FROM audit WHERE name = ? ORDER BY id LIMIT 1")
        .bind(name)
        .fetch_optional(pool)
        .await?)
}

fn compressor_from_row(r: &sqlx::sqlite::SqliteRow) -> CompressorRecord {
    let curve: String = r.get("power_curve");
    let kind: String = r.get("kind");
    let control: String = r.get("control");
    let cooling: String = r.get("cooling");
    let stages: i64 = r.get("stages");
    CompressorRecord {
        id: r.get("id"),
        spec: CompressorSpec {
            tag: r.get("tag"),
            kind: CompressorKind::parse(&kind).unwrap_or(CompressorKind::LubricatedScrew),
            control: Control::parse(&control).unwrap_or(Control::LoadUnload),
            cooling: Cooling::parse(&cooling).unwrap_or(Cooling::Air),
            rated_power_kw: r.get("rated_power_kw"),
            rated_flow_m3_min: r.get("rated_flow_m3_min"),
            rated_pressure_bar_g: r.get("rated_pressure_bar_g"),
            unloaded_power_fraction: r.get("unloaded_power_fraction"),
            no_load_power_kw: r.get("no_load_power_kw"),
            nameplate_motor_kw: r.get("nameplate_motor_kw"),
            max_pressure_bar_g: r.get("max_pressure_bar_g"),
            unloaded_level_kw: r.get("unloaded_level_kw"),
            loaded_level_kw: r.get("loaded_level_kw"),
            stages: stages as u32,
            rated_specific_power_kw_per_m3_min: r.get("rated_specific_power_kw_per_m3_min"),
            power_curve: serde_json::from_str(&curve).unwrap_or_default(),
            year: r.get::<Option<i64>, _>("year").map(|y| y as i32),
        },
        notes: r.get("notes"),
    }
}

pub async fn compressors(pool: &SqlitePool, audit_id: i64) -> Result<Vec<CompressorRecord>, StoreError> {
    let rows = sqlx::query("SELECT * FROM compressor WHERE audit_id = ? ORDER BY tag")
        .bind(audit_id)
        .fetch_all(pool)
        .await?;
    Ok(rows.iter().map(compressor_from_row).collect())
}

/// Why a compressor could not be stored.
pub enum CompressorWrite {
    Stored(i64),
    TagTaken,
}

/// A compressor's stored columns, in the order [`bind_compressor`] binds them.
const COMPRESSOR_COLUMNS: &str = "tag, kind, control, cooling, rated_power_kw, rated_flow_m3_min, \
    rated_pressure_bar_g, unloaded_power_fraction, stages, rated_specific_power_kw_per_m3_min, \
    power_curve, year, notes, no_load_power_kw, nameplate_motor_kw, max_pressure_bar_g, \
    unloaded_level_kw, loaded_level_kw";

/// A compressor's values bound in the order of [`COMPRESSOR_COLUMNS`], after what `q` has bound.
fn bind_compressor<'q>(q: SqliteQuery<'q>, rec: &'q CompressorRecord) -> SqliteQuery<'q> {
    let c = &rec.spec;
    q.bind(&c.tag)
        .bind(c.kind.as_str())
        .bind(c.control.as_str())
        .bind(c.cooling.as_str())
        .bind(c.rated_power_kw)
        .bind(c.rated_flow_m3_min)
        .bind(c.rated_pressure_bar_g)
        .bind(c.unloaded_power_fraction)
        .bind(c.stages as i64)
        .bind(c.rated_specific_power_kw_per_m3_min)
        .bind(serde_json::to_string(&c.power_curve).unwrap_or_else(|_| "[]".into()))
        .bind(c.year.map(i64::from))
        .bind(&rec.notes)
        .bind(c.no_load_power_kw)
        .bind(c.nameplate_motor_kw)
        .bind(c.max_pressure_bar_g)
        .bind(c.unloaded_level_kw)
        .bind(c.loaded_level_kw)
}

/// Insert a compressor, or update the one with the same id (`c.id != 0`).
pub async fn save_compressor(
    pool: &SqlitePool,
    audit_id: i64,
    rec: &CompressorRecord,
) -> Result<CompressorWrite, StoreError> {
    let mut tx = begin_write(pool).await?;
    let clash: Option<i64> =
        sqlx::query_scalar("SELECT id FROM compressor WHERE audit_id = ? AND tag = ? AND id != ?")
            .bind(audit_id)
            .bind(&rec.spec.tag)
            .bind(rec.id)
            .fetch_optional(&mut *tx)
            .await?;
    if clash.is_some() {
        return Ok(CompressorWrite::TagTaken);
    }
    let id = if rec.id == 0 {
        let sql = format!(
            "INSERT INTO compressor (audit_id, {COMPRESSOR_COLUMNS}) VALUES (?, {})",
            marks(COMPRESSOR_COLUMNS)
        );
        bind_compressor(sqlx::query(&sql).bind(audit_id), rec).execute(&mut *tx).await?.last_insert_rowid()
    } else {
        let old_tag: Option<String> =
            sqlx::query_scalar("SELECT tag FROM compressor WHERE id = ? AND audit_id = ?")
                .bind(rec.id)
                .bind(audit_id)
                .fetch_optional(&mut *tx)
                .await?;
        let sql = format!(
            "UPDATE compressor SET {} WHERE id = ? AND audit_id = ?",
            assignments(COMPRESSOR_COLUMNS)
        );
        bind_compressor(sqlx::query(&sql), rec).bind(rec.id).bind(audit_id).execute(&mut *tx).await?;
        if let Some(old) = old_tag.filter(|t| *t != rec.spec.tag) {
            retag::retag_mappings(&mut tx, rec.id, &old, &rec.spec.tag).await?;
        }
        rec.id
    };
    bump(&mut tx, audit_id).await?;
    tx.commit().await?;
    Ok(CompressorWrite::Stored(id))
}

pub async fn delete_compressor(pool: &SqlitePool, audit_id: i64, id: i64) -> Result<bool, StoreError> {
    delete_owned(pool, "compressor", audit_id, id, After::Revised).await
}

pub async fn receivers(pool: &SqlitePool, audit_id: i64) -> Result<Vec<ReceiverRecord>, StoreError> {
    let rows = sqlx::query("SELECT id, name, volume_m3, notes FROM receiver WHERE audit_id = ? ORDER BY id")
        .bind(audit_id)
        .fetch_all(pool)
        .await?;
    Ok(rows
        .iter()
        .map(|r| ReceiverRecord {
            id: r.get("id"),
            name: r.get("name"),
            volume_m3: r.get("volume_m3"),
            notes: r.get("notes"),
        })
        .collect())
}

pub async fn add_receiver(
    pool: &SqlitePool,
    audit_id: i64,
    name: &str,
    volume_m3: f64,
    notes: &str,
) -> Result<i64, StoreError> {
    let q = sqlx::query("INSERT INTO receiver (audit_id, name, volume_m3, notes) VALUES (?, ?, ?, ?)")
        .bind(audit_id)
        .bind(name)
        .bind(volume_m3)
        .bind(notes);
    Ok(revise(pool, audit_id, q).await?.last_insert_rowid())
}

/// Edit a receiver; `false` if the audit has no such receiver.
pub async fn update_receiver(
    pool: &SqlitePool,
    audit_id: i64,
    id: i64,
    name: &str,
    volume_m3: f64,
    notes: &str,
) -> Result<bool, StoreError> {
    let q =
        sqlx::query("UPDATE receiver SET name = ?, volume_m3 = ?, notes = ? WHERE id = ? AND audit_id = ?")
            .bind(name)
            .bind(volume_m3)
            .bind(notes)
            .bind(id)
            .bind(audit_id);
    Ok(revise(pool, audit_id, q).await?.rows_affected() > 0)
}

pub async fn delete_receiver(pool: &SqlitePool, audit_id: i64, id: i64) -> Result<bool, StoreError> {
    delete_owned(pool, "receiver", audit_id, id, After::Revised).await
}

pub async fn uploads(pool: &SqlitePool, audit_id: i64) -> Result<Vec<UploadRecord>, StoreError> {
    let rows = sqlx::query(
        "SELECT id, filename, bytes, rows, readings, first_ms, last_ms, created_at, warnings, warning_parts, \
         quality, sha256, \
         mapping, (SELECT sum(length(o.data)) FROM upload_original o WHERE o.upload_id = upload.id) AS kept \
         FROM upload WHERE audit_id = ? AND state = 'complete' ORDER BY id",
    )
    .bind(audit_id)
    .fetch_all(pool)
    .await?;
    Ok(rows
        .iter()
        .map(|r| {
            let w: String = r.get("warnings");
            let m: String = r.get("mapping");
            UploadRecord {
                id: r.get("id"),
                filename: r.get("filename"),
                bytes: r.get("bytes"),
                rows: r.get("rows"),
                readings: r.get("readings"),
                first: r.get::<Option<i64>, _>("first_ms").map(ms_to_rfc3339),
                last: r.get::<Option<i64>, _>("last_ms").map(ms_to_rfc3339),
                created_at: r.get("created_at"),
                warnings: serde_json::from_str(&w).unwrap_or_default(),
                warning_parts: serde_json::from_str(&r.get::<String, _>("warning_parts")).unwrap_or_default(),
                sha256: r.get("sha256"),
                mapping: serde_json::from_str(&m).unwrap_or_default(),
                original_bytes_stored: r.get("kept"),
                quality_json: r.get("quality"),
            }
        })
        .collect())
}

/// Delete a complete upload of the audit; the cascade takes its chunks, rollups, spans, kept
/// original and (a column of the row) its quality report, all in one transaction that also bumps
/// the revision. `false` if the audit has no such complete upload.
pub async fn delete_upload(pool: &SqlitePool, audit_id: i64, id: i64) -> Result<bool, StoreError> {
    let mut tx = begin_write(pool).await?;
    // The mapping this import used is remembered for its layout; a person deletes an import most
    // often because that mapping was wrong, so it is forgotten with the import unless another
    // import (of any audit) still uses the very same mapping.
    sqlx::query(
        "DELETE FROM remembered_mapping WHERE mapping = \
           (SELECT mapping FROM upload WHERE id = ?1 AND audit_id = ?2 AND state = 'complete') \
         AND NOT EXISTS (SELECT 1 FROM upload u WHERE u.mapping = remembered_mapping.mapping \
           AND u.id <> ?1 AND u.state = 'complete')",
    )
    .bind(id)
    .bind(audit_id)
    .execute(&mut *tx)
    .await?;
    let n = sqlx::query("DELETE FROM upload WHERE id = ? AND audit_id = ? AND state = 'complete'")
        .bind(id)
        .bind(audit_id)
        .execute(&mut *tx)
        .await?
        .rows_affected();
    if n > 0 {
        bump(&mut tx, audit_id).await?;
    }
    tx.commit().await?;
    Ok(n > 0)
}

pub async fn cost_overrides(pool: &SqlitePool, audit_id: i64) -> Result<Vec<(String, f64)>, StoreError> {
    let rows = sqlx::query("SELECT kind, implementation_cost FROM cost_override WHERE audit_id = ?")
        .bind(audit_id)
        .fetch_all(pool)
        .await?;
    Ok(rows.iter().map(|r| (r.get("kind"), r.get("implementation_cost"))).collect())
}

/// The audit's stored measure plan (`core::recommend::MeasureOptions` as JSON), if any.
pub async fn measure_plan(pool: &SqlitePool, audit_id: i64) -> Result<Option<String>, StoreError> {
    let row = sqlx::query("SELECT options FROM measure_plan WHERE audit_id = ?")
        .bind(audit_id)
        .fetch_optional(pool)
        .await?;
    Ok(row.map(|r| r.get("options")))
}

/// Store the audit's measure plan (JSON) and bump its revision.
pub async fn set_measure_plan(pool: &SqlitePool, audit_id: i64, options: &str) -> Result<(), StoreError> {
    let mut tx = begin_write(pool).await?;
    sqlx::query(
        "INSERT INTO measure_plan (audit_id, options) VALUES (?, ?) \
         ON CONFLICT (audit_id) DO UPDATE SET options = excluded.options",
    )
    .bind(audit_id)
    .bind(options)
    .execute(&mut *tx)
    .await?;
    bump(&mut tx, audit_id).await?;
    tx.commit().await?;
    Ok(())
}

pub async fn set_cost_override(
    pool: &SqlitePool,
    audit_id: i64,
    kind: &str,
    cost: Option<f64>,
) -> Result<(), StoreError> {
    let mut tx = begin_write(pool).await?;
    match cost {
        Some(c) => {
            sqlx::query(
                "INSERT INTO cost_override (audit_id, kind, implementation_cost) VALUES (?, ?, ?) \
                 ON CONFLICT (audit_id, kind) DO UPDATE SET implementation_cost = excluded.implementation_cost",
            )
            .bind(audit_id)
            .bind(kind)
            .bind(c)
            .execute(&mut *tx)
            .await?;
        }
        None => {
            sqlx::query("DELETE FROM cost_override WHERE audit_id = ? AND kind = ?")
                .bind(audit_id)
                .bind(kind)
                .execute(&mut *tx)
                .await?;
        }
    }
    bump(&mut tx, audit_id).await?;
    tx.commit().await?;
    Ok(())
}

/// Whether the audit has readings: a complete upload.
pub async fn has_complete_upload(pool: &SqlitePool, audit_id: i64) -> Result<bool, StoreError> {
    Ok(sqlx::query_scalar::<_, i64>(
        "SELECT EXISTS (SELECT 1 FROM upload WHERE audit_id = ? AND state = 'complete')",
    )
    .bind(audit_id)
    .fetch_one(pool)
    .await?
        != 0)
}

/// The cached summary of this revision, if the build `made_by` made it (`service::build_id`).
pub async fn cached_summary(
    pool: &SqlitePool,
    audit_id: i64,
    revision: i64,
    made_by: &str,
) -> Result<Option<String>, StoreError> {
    Ok(sqlx::query_scalar(
        "SELECT summary FROM summary_cache WHERE audit_id = ? AND revision = ? AND made_by = ?",
    )
    .bind(audit_id)
    .bind(revision)
    .bind(made_by)
    .fetch_optional(pool)
    .await?)
}

pub async fn put_summary(
    pool: &SqlitePool,
    audit_id: i64,
    revision: i64,
    made_by: &str,
    json: &str,
) -> Result<(), StoreError> {
    let mut tx = begin_write(pool).await?;
    sqlx::query(
        "INSERT INTO summary_cache (audit_id, revision, made_by, summary) VALUES (?, ?, ?, ?) \
         ON CONFLICT (audit_id) DO UPDATE SET revision = excluded.revision, made_by = excluded.made_by, \
         summary = excluded.summary",
    )
    .bind(audit_id)
    .bind(revision)
    .bind(made_by)
    .bind(json)
    .execute(&mut *tx)
    .await?;
    tx.commit().await?;
    Ok(())
}

pub async fn remembered_mapping(pool: &SqlitePool, layout_key: &str) -> Result<Option<String>, StoreError> {
    Ok(sqlx::query_scalar("SELECT mapping FROM remembered_mapping WHERE layout_key = ?")
        .bind(layout_key)
        .fetch_optional(pool)
        .await?)
}

/// Mark the audit changed (inside the caller's write transaction).
/// Run one write of audit `audit_id`'s records in its own transaction, with a new revision of the
/// audit when it changed a row (every figure that follows the records is then worked out again).
pub(crate) async fn revise(
    pool: &SqlitePool,
    audit_id: i64,
    q: SqliteQuery<'_>,
) -> Result<sqlx::sqlite::SqliteQueryResult, StoreError> {
    let mut tx = begin_write(pool).await?;
    let done = q.execute(&mut *tx).await?;
    if done.rows_affected() > 0 {
        bump(&mut tx, audit_id).await?;
    }
    tx.commit().await?;
    Ok(done)
}

pub async fn bump(tx: &mut sqlx::SqliteConnection, audit_id: i64) -> Result<(), sqlx::Error> {
    sqlx::query("UPDATE audit SET revision = revision + 1 WHERE id = ?")
        .bind(audit_id)
        .execute(&mut *tx)
        .await?;
    Ok(())
}

async fn drop_summary(tx: &mut sqlx::SqliteConnection, audit_id: i64) -> Result<(), sqlx::Error> {
    sqlx::query("DELETE FROM summary_cache WHERE audit_id = ?").bind(audit_id).execute(&mut *tx).await?;
    Ok(())
}

/// What a delete of an audit's record does to the audit besides: a new revision (the figures change)
/// or only the cached summary dropped (a scenario: the ranking may change, the data does not).
enum After {
    Revised,
    Repriced,
}

/// Delete row `id` of `table` if it belongs to audit `audit_id`, in one transaction with `after`;
/// whether there was such a row. `table` is one of this module's own table names, never user text.
async fn delete_owned(
    pool: &SqlitePool,
    table: &'static str,
    audit_id: i64,
    id: i64,
    after: After,
) -> Result<bool, StoreError> {
    let mut tx = begin_write(pool).await?;
    let n = sqlx::query(&format!("DELETE FROM {table} WHERE id = ? AND audit_id = ?"))
        .bind(id)
        .bind(audit_id)
        .execute(&mut *tx)
        .await?
        .rows_affected();
    match after {
        After::Revised => bump(&mut tx, audit_id).await?,
        After::Repriced => drop_summary(&mut tx, audit_id).await?,
    }
    tx.commit().await?;
    Ok(n > 0)
}

mod field_tests;
mod retag;
mod scenarios;
mod treatment;
mod whole;

pub use field_tests::*;
pub use scenarios::*;
pub use treatment::*;
pub use whole::*;

#[cfg(test)]
mod list_tests {
    use super::AuditListItem;

    #[test]
    fn an_audit_is_dated_on_the_sites_calendar() {
        // 2026-12-05T03:00Z is 21:00 on 4 December in Chicago (CST, UTC-6, IANA tz database).
        let item = |tz: &str| AuditListItem {
            id: 1,
            name: "x".into(),
            created_at: "2026-12-05T03:00:00Z".into(),
            compressors: 0,
            uploads: 0,
            timezone: tz.into(),
        };
        assert_eq!(item("America/Chicago").created_date(), "4 Dec 2026");
        assert_eq!(item("Europe/Berlin").created_date(), "5 Dec 2026");
    }
}
