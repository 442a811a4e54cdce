-- A replay enters the report's ranking only when the auditor marks it as the proposal; at most one
-- scenario of an audit is (src/store/audits.rs keeps it so).
ALTER TABLE scenario ADD COLUMN proposal INTEGER NOT NULL DEFAULT 0;
