-- The auditor's plan of measures (core::recommend::MeasureOptions as JSON): the order in which the
-- measures are stacked, the kinds left out, and the options of the measures (leak repair fraction,
-- critical pressure, pressure rule, heat-recovery effectiveness per cooling path). No row: the
-- documented defaults, so every audit stored before this migration reads as it did.
CREATE TABLE measure_plan (
    audit_id INTEGER PRIMARY KEY REFERENCES audit(id) ON DELETE CASCADE,
    options  TEXT NOT NULL
);
