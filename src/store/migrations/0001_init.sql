-- nearsky logbook, schema version 1. Never edit a migration that has shipped: add a new one.
-- Times are UTC, stored as integer seconds since 1970-01-01T00:00:00Z.
-- Frequencies in Hz (integer), power in W, distances in km.

CREATE TABLE setting (
    key   TEXT PRIMARY KEY,
    value TEXT NOT NULL
);

CREATE TABLE drill (
    id          INTEGER PRIMARY KEY,
    name        TEXT NOT NULL UNIQUE,
    starts_at   INTEGER,
    ends_at     INTEGER,
    net_control TEXT,
    description TEXT NOT NULL DEFAULT '',
    created_at  INTEGER NOT NULL
);

-- Own station profiles: one per call used by this logbook's operator.
CREATE TABLE station (
    id            INTEGER PRIMARY KEY,
    call          TEXT NOT NULL UNIQUE,
    operator      TEXT,
    usual_power_w REAL,
    antenna       TEXT,
    rig           TEXT
);

-- Where a station was from a given time on: portable stations move during a drill.
CREATE TABLE station_location (
    id         INTEGER PRIMARY KEY,
    station_id INTEGER NOT NULL REFERENCES station(id),
    since      INTEGER NOT NULL,
    locator    TEXT NOT NULL
);
CREATE INDEX station_location_by_time ON station_location(station_id, since);

-- Other stations of the net.
CREATE TABLE roster (
    id       INTEGER PRIMARY KEY,
    call     TEXT NOT NULL UNIQUE,
    tactical TEXT NOT NULL DEFAULT '',
    locator  TEXT,
    role     TEXT NOT NULL DEFAULT '',
    position INTEGER NOT NULL DEFAULT 0
);

CREATE TABLE channel (
    id       INTEGER PRIMARY KEY,
    drill_id INTEGER NOT NULL REFERENCES drill(id),
    name     TEXT NOT NULL,
    band     TEXT NOT NULL,
    freq_hz  INTEGER NOT NULL,
    mode     TEXT NOT NULL,
    submode  TEXT,
    UNIQUE (drill_id, name)
);

CREATE TABLE contact (
    id            INTEGER PRIMARY KEY,
    uuid          TEXT NOT NULL UNIQUE,
    drill_id      INTEGER REFERENCES drill(id),
    own_call      TEXT NOT NULL,
    own_operator  TEXT,
    own_locator   TEXT,
    own_power_w   REAL,
    own_antenna   TEXT,
    call          TEXT NOT NULL,
    locator       TEXT,
    start_utc     INTEGER NOT NULL,
    end_utc       INTEGER,
    band          TEXT NOT NULL,
    freq_hz       INTEGER,
    mode          TEXT NOT NULL,
    submode       TEXT,
    rst_sent      TEXT,
    rst_rcvd      TEXT,
    other_power_w REAL,
    outcome       TEXT NOT NULL CHECK (outcome IN ('worked', 'partial', 'none')),
    via           TEXT,
    note          TEXT NOT NULL DEFAULT '',
    -- NULL origin_station: logged here; otherwise imported from that station's file.
    origin_station TEXT,
    origin_file    TEXT,
    revision      INTEGER NOT NULL DEFAULT 1,
    deleted       INTEGER NOT NULL DEFAULT 0,
    logged_at     INTEGER NOT NULL
);
-- Paging newest first, overall and per drill and band.
CREATE INDEX contact_by_time ON contact(start_utc, id);
CREATE INDEX contact_by_drill_band_time ON contact(drill_id, band, start_utc, id);
-- Duplicate warnings: same call, band and mode near in time.
CREATE INDEX contact_by_call ON contact(call, band, mode, start_utc);

-- Every edit and delete keeps the previous version, with when and why.
CREATE TABLE contact_revision (
    id         INTEGER PRIMARY KEY,
    contact_id INTEGER NOT NULL REFERENCES contact(id),
    revision   INTEGER NOT NULL,
    changed_at INTEGER NOT NULL,
    kind       TEXT NOT NULL CHECK (kind IN ('edit', 'delete')),
    reason     TEXT NOT NULL,
    previous   TEXT NOT NULL
);
CREATE INDEX contact_revision_by_contact ON contact_revision(contact_id, revision);

CREATE TABLE propagation_note (
    id       INTEGER PRIMARY KEY,
    uuid     TEXT NOT NULL UNIQUE,
    drill_id INTEGER REFERENCES drill(id),
    at_utc   INTEGER NOT NULL,
    band     TEXT,
    station  TEXT NOT NULL,
    text     TEXT NOT NULL
);
CREATE INDEX propagation_note_by_time ON propagation_note(at_utc);
