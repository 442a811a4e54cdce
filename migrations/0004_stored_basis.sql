-- Readings follow the site (issue 14). Readings are stored as the meter measured them (gauge
-- pressure as gauge, standard and normal flow at their reference, actual flow at line conditions)
-- and the site's air is applied when they are read (src/core/basis.rs). What one upload holds of one
-- channel records how it is stored, as the JSON of `core::basis::StoredForm`:
--   {"basis": "gauge"}, {"basis": "reference", "reference": {...}}, {"basis": "line", ...},
--   {"basis": "site"} or {"basis": "free_air"}; readings stored before this migration carry the
--   affine step their import applied ("applied_scale", "applied_offset").
-- NULL: stored before this migration; start-up works it out from the upload's mapping with the
-- site's air as it is then (`store::basis::backfill`), so old readings read exactly as before.
ALTER TABLE upload_channel ADD COLUMN stored_form TEXT;
-- The channel's typical logging interval in this upload (the median of its steps), ms. Uploads from
-- before this migration take their file's median interval from the data-quality report.
ALTER TABLE upload_channel ADD COLUMN interval_ms INTEGER;
UPDATE upload_channel SET interval_ms = (
    SELECT CAST(round(json_extract(u.quality, '$.file.median_interval_s') * 1000) AS INTEGER)
    FROM upload u WHERE u.id = upload_channel.upload_id);
