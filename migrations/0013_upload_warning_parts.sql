-- An upload's data-quality warnings in parts (issue 16): one for one with `warnings`, each a list
-- of words and figures in canonical units (`core::recommend::Part`), so that a page shows a
-- reading and its limit in the reader's units. Uploads stored before hold none ('[]'): their
-- pages show the stored words.
ALTER TABLE upload ADD COLUMN warning_parts TEXT NOT NULL DEFAULT '[]';
