-- The original bytes of each upload, deflated in pieces of 1 MiB (src/store/import/original.rs), so
-- that a file can be imported again with a corrected mapping without being sent again. Deleting the
-- upload deletes them.
CREATE TABLE upload_original (
    upload_id   INTEGER NOT NULL REFERENCES upload(id) ON DELETE CASCADE,
    seq         INTEGER NOT NULL,
    raw_bytes   INTEGER NOT NULL,
    data        BLOB NOT NULL,
    PRIMARY KEY (upload_id, seq)
);
