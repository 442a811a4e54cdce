-- What-if scenarios: the audit's compressor room with changes, replayed against the logged demand.
CREATE TABLE scenario (
    id          INTEGER PRIMARY KEY,
    audit_id    INTEGER NOT NULL REFERENCES audit(id) ON DELETE CASCADE,
    name        TEXT NOT NULL,
    changes     TEXT NOT NULL,   -- JSON as posted
    result      TEXT NOT NULL,   -- JSON as computed
    revision    INTEGER NOT NULL, -- the audit revision the result was computed for
    created_at  TEXT NOT NULL
);
CREATE INDEX scenario_audit ON scenario(audit_id);
