-- Where a pressure channel was measured (ISO 11011: supply, transmission, demand): 'discharge',
-- 'after_treatment', 'header' or 'point_of_use'. NULL for other quantities and for pressures stored
-- before points could be mapped, which read as the header.
ALTER TABLE channel ADD COLUMN point TEXT
    CHECK (point IS NULL OR point IN ('discharge', 'after_treatment', 'header', 'point_of_use'));
