-- Treatment equipment and the end-use inventory (ISO 11011's transmission and demand): dryers,
-- condensate drains and end uses, one row each, the validated record as JSON (core::treatment reads
-- it; the fields are those of API.md). They go with their audit.
CREATE TABLE treatment_item (
    id INTEGER PRIMARY KEY,
    audit_id INTEGER NOT NULL REFERENCES audit(id) ON DELETE CASCADE,
    kind TEXT NOT NULL CHECK (kind IN ('dryer', 'drain', 'end_use')),
    body TEXT NOT NULL,
    created_at TEXT NOT NULL
);
CREATE INDEX treatment_item_audit ON treatment_item(audit_id, kind, id);
