-- airledger schema, version 1. Applied migrations are never edited: add a new numbered file instead.
-- Canonical units: pressure Pa absolute, flow m3/s free air, power W, energy J, temperature K,
-- times epoch milliseconds UTC. Money in the audit's currency.

CREATE TABLE audit (
    id                              INTEGER PRIMARY KEY,
    name                            TEXT NOT NULL,
    created_at                      TEXT NOT NULL,
    -- bumped on every change that can alter a computed figure; the summary cache keys on it
    revision                        INTEGER NOT NULL DEFAULT 1,
    auditor                         TEXT NOT NULL DEFAULT '',
    notes                           TEXT NOT NULL DEFAULT '',
    altitude_m                      REAL NOT NULL DEFAULT 0,
    atmospheric_pressure_kpa_abs    REAL,            -- NULL: from altitude (ISO 2533)
    inlet_temperature_c             REAL NOT NULL DEFAULT 20,
    timezone                        TEXT NOT NULL DEFAULT 'UTC',
    electricity_price_per_kwh       REAL NOT NULL DEFAULT 0.15,
    demand_charge_per_kw_month      REAL NOT NULL DEFAULT 0,
    currency                        TEXT NOT NULL DEFAULT 'EUR',
    operating_weeks_per_year        REAL NOT NULL DEFAULT 52,
    operating_hours_per_year        REAL,
    display_units                   TEXT NOT NULL DEFAULT 'si' CHECK (display_units IN ('si', 'us')),
    heating_fuel_price_per_kwh      REAL NOT NULL DEFAULT 0.08,
    heater_efficiency               REAL NOT NULL DEFAULT 0.9,
    heating_months                  TEXT NOT NULL DEFAULT '1,2,3,4,10,11,12',
    heat_use                        TEXT NOT NULL DEFAULT 'space_heating'
                                    CHECK (heat_use IN ('space_heating', 'process_water')),
    grid_co2_kg_per_kwh             REAL NOT NULL DEFAULT 0.4,
    fuel_co2_kg_per_kwh             REAL NOT NULL DEFAULT 0.2,
    other_volume_m3                 REAL NOT NULL DEFAULT 0   -- piping, dryer and filter vessels
);

CREATE TABLE compressor (
    id                          INTEGER PRIMARY KEY,
    audit_id                    INTEGER NOT NULL REFERENCES audit(id) ON DELETE CASCADE,
    tag                         TEXT NOT NULL,
    kind                        TEXT NOT NULL,
    control                     TEXT NOT NULL,
    cooling                     TEXT NOT NULL,
    rated_power_kw              REAL NOT NULL,
    rated_flow_m3_min           REAL NOT NULL,
    rated_pressure_bar_g        REAL NOT NULL,
    unloaded_power_fraction     REAL NOT NULL,
    stages                      INTEGER NOT NULL DEFAULT 1,
    rated_specific_power_kw_per_m3_min REAL,
    power_curve                 TEXT NOT NULL DEFAULT '[]',   -- JSON [[flow_m3_min, kw], ...]
    year                        INTEGER,
    notes                       TEXT NOT NULL DEFAULT '',
    UNIQUE (audit_id, tag)
);

CREATE TABLE receiver (
    id          INTEGER PRIMARY KEY,
    audit_id    INTEGER NOT NULL REFERENCES audit(id) ON DELETE CASCADE,
    name        TEXT NOT NULL,
    volume_m3   REAL NOT NULL CHECK (volume_m3 > 0),
    notes       TEXT NOT NULL DEFAULT ''
);

-- One logger file. Rows in state 'importing' are invisible to every reader; start-up removes them
-- with their chunks, so a crash never leaves a partial upload behind.
CREATE TABLE upload (
    id              INTEGER PRIMARY KEY,
    audit_id        INTEGER NOT NULL REFERENCES audit(id) ON DELETE CASCADE,
    filename        TEXT NOT NULL,
    sha256          TEXT NOT NULL,
    bytes           INTEGER NOT NULL,
    state           TEXT NOT NULL CHECK (state IN ('importing', 'complete')),
    rows            INTEGER NOT NULL DEFAULT 0,
    readings        INTEGER NOT NULL DEFAULT 0,
    first_ms        INTEGER,
    last_ms         INTEGER,
    mapping         TEXT NOT NULL,
    quality         TEXT NOT NULL DEFAULT '{}',
    warnings        TEXT NOT NULL DEFAULT '[]',
    created_at      TEXT NOT NULL,
    UNIQUE (audit_id, sha256)
);

-- A logged quantity: a compressor's power or energy counter, or a named pressure/flow/temperature
-- sensor. The same channel in two files may not overlap in time (409) unless replaced.
CREATE TABLE channel (
    id              INTEGER PRIMARY KEY,
    audit_id        INTEGER NOT NULL REFERENCES audit(id) ON DELETE CASCADE,
    quantity        TEXT NOT NULL CHECK (quantity IN ('power', 'energy', 'pressure', 'flow', 'temperature')),
    compressor_id   INTEGER REFERENCES compressor(id) ON DELETE CASCADE,
    label           TEXT NOT NULL,
    unit            TEXT NOT NULL,            -- as logged, for display of provenance
    UNIQUE (audit_id, quantity, compressor_id, label)
);

-- What one upload holds of one channel: its span, for overlap checks and listings.
CREATE TABLE upload_channel (
    upload_id   INTEGER NOT NULL REFERENCES upload(id) ON DELETE CASCADE,
    channel_id  INTEGER NOT NULL REFERENCES channel(id) ON DELETE CASCADE,
    first_ms    INTEGER NOT NULL,
    last_ms     INTEGER NOT NULL,
    readings    INTEGER NOT NULL,
    PRIMARY KEY (upload_id, channel_id)
) WITHOUT ROWID;

-- Raw readings: per-channel time chunks, encoded by src/store/chunk.rs (delta-encoded times,
-- lossless value coding at f32 precision or f64 for counters, deflate).
CREATE TABLE chunk (
    channel_id  INTEGER NOT NULL REFERENCES channel(id) ON DELETE CASCADE,
    t_start_ms  INTEGER NOT NULL,
    upload_id   INTEGER NOT NULL REFERENCES upload(id) ON DELETE CASCADE,
    t_end_ms    INTEGER NOT NULL,
    n           INTEGER NOT NULL,
    data        BLOB NOT NULL,
    PRIMARY KEY (channel_id, t_start_ms, upload_id)
) WITHOUT ROWID;
CREATE INDEX chunk_upload ON chunk(upload_id);

-- Per-minute rollups, one BLOB per channel, upload and UTC day (src/store/rollup.rs).
CREATE TABLE rollup_minute (
    channel_id  INTEGER NOT NULL REFERENCES channel(id) ON DELETE CASCADE,
    day_ms      INTEGER NOT NULL,
    upload_id   INTEGER NOT NULL REFERENCES upload(id) ON DELETE CASCADE,
    data        BLOB NOT NULL,
    PRIMARY KEY (channel_id, day_ms, upload_id)
) WITHOUT ROWID;
CREATE INDEX rollup_minute_upload ON rollup_minute(upload_id);

-- Per-hour rollups as plain rows: min/mean/max/count, sums in f64.
CREATE TABLE rollup_hour (
    channel_id  INTEGER NOT NULL REFERENCES channel(id) ON DELETE CASCADE,
    hour_ms     INTEGER NOT NULL,
    upload_id   INTEGER NOT NULL REFERENCES upload(id) ON DELETE CASCADE,
    n           INTEGER NOT NULL,
    min         REAL NOT NULL,
    max         REAL NOT NULL,
    sum         REAL NOT NULL,
    PRIMARY KEY (channel_id, hour_ms, upload_id)
) WITHOUT ROWID;
CREATE INDEX rollup_hour_upload ON rollup_hour(upload_id);

CREATE TABLE field_test (
    id          INTEGER PRIMARY KEY,
    audit_id    INTEGER NOT NULL REFERENCES audit(id) ON DELETE CASCADE,
    kind        TEXT NOT NULL,
    input       TEXT NOT NULL,   -- JSON as posted
    result      TEXT NOT NULL,   -- JSON as computed
    created_at  TEXT NOT NULL
);

-- A mapping remembered per header layout (a logger's column set), offered for its next file.
CREATE TABLE remembered_mapping (
    layout_key  TEXT PRIMARY KEY,
    mapping     TEXT NOT NULL,
    updated_at  TEXT NOT NULL
);

-- Implementation costs edited per audit, by recommendation kind.
CREATE TABLE cost_override (
    audit_id            INTEGER NOT NULL REFERENCES audit(id) ON DELETE CASCADE,
    kind                TEXT NOT NULL,
    implementation_cost REAL NOT NULL CHECK (implementation_cost >= 0),
    PRIMARY KEY (audit_id, kind)
) WITHOUT ROWID;

-- The computed summary for an audit revision: reports never recompute from raw data.
CREATE TABLE summary_cache (
    audit_id    INTEGER PRIMARY KEY REFERENCES audit(id) ON DELETE CASCADE,
    revision    INTEGER NOT NULL,
    summary     TEXT NOT NULL
);
