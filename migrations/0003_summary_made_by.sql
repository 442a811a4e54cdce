-- A cached summary holds only for the build whose analysis made it: after an upgrade, figures worked
-- out by the old rules must not be served. Rows cached before this column read '' and so are worked
-- out again on their first read.
ALTER TABLE summary_cache ADD COLUMN made_by TEXT NOT NULL DEFAULT '';
