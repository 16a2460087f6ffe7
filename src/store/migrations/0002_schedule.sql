-- Schema version 2: a drill's band schedule (filled from a plan for the next drill).
-- Each slot covers [start_minute, start_minute + minutes) of the UTC day.
CREATE TABLE schedule_slot (
    id             INTEGER PRIMARY KEY,
    drill_id       INTEGER NOT NULL REFERENCES drill(id),
    start_minute   INTEGER NOT NULL CHECK (start_minute BETWEEN 0 AND 1439),
    minutes        INTEGER NOT NULL CHECK (minutes > 0),
    primary_band   TEXT,
    alternate_band TEXT,
    note           TEXT NOT NULL DEFAULT ''
);
CREATE INDEX schedule_slot_by_drill ON schedule_slot(drill_id, start_minute);
