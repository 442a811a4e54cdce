-- Filters join the treatment records (issue 19): the kind's CHECK takes 'filter'. SQLite cannot
-- change a CHECK in place, so the table is built again with its rows.
CREATE TABLE treatment_item_new (
    id INTEGER PRIMARY KEY,
    audit_id INTEGER NOT NULL REFERENCES audit(id) ON DELETE CASCADE,
    kind TEXT NOT NULL CHECK (kind IN ('dryer', 'drain', 'end_use', 'filter')),
    body TEXT NOT NULL,
    created_at TEXT NOT NULL
);
INSERT INTO treatment_item_new (id, audit_id, kind, body, created_at)
    SELECT id, audit_id, kind, body, created_at FROM treatment_item;
DROP TABLE treatment_item;
ALTER TABLE treatment_item_new RENAME TO treatment_item;
CREATE INDEX treatment_item_audit ON treatment_item(audit_id, kind, id);
