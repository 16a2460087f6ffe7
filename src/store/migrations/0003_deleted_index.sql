-- Schema version 3: a small index of the deleted contacts, so that counting what is not
-- deleted needs no scan of the whole table (total minus deleted, both from indexes).
CREATE INDEX contact_deleted ON contact(drill_id, band, start_utc) WHERE deleted = 1;
