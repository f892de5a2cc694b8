-- 0006: plant-wide records. Each sample carries its site and deck, and
-- each sample and result an id that is the same on every copy (uid), so
-- that forwarding one to the plant database twice, or importing a file
-- twice, is a no-op: a sample's uid is the SHA-256 of its curve file (the
-- first sample stored with that file keeps it), else one made when it was
-- stored; a result's is a hash of its sample's uid, time, limits version
-- and record. Rows of earlier versions (uid '') get theirs when the
-- program opens the database, and their results join the outbox: the
-- results not yet forwarded to the plant database, oldest first.
-- Summaries are rebuilt in format 2 (with site and deck).
ALTER TABLE samples ADD COLUMN site TEXT NOT NULL DEFAULT '';
ALTER TABLE samples ADD COLUMN deck TEXT NOT NULL DEFAULT '';
ALTER TABLE samples ADD COLUMN uid TEXT NOT NULL DEFAULT '';
ALTER TABLE results ADD COLUMN uid TEXT NOT NULL DEFAULT '';
UPDATE samples SET uid = curve_sha256 WHERE curve_sha256 != ''
    AND id = (SELECT min(s2.id) FROM samples s2 WHERE s2.curve_sha256 = samples.curve_sha256);
CREATE UNIQUE INDEX samples_uid ON samples(uid) WHERE uid != '';
CREATE UNIQUE INDEX results_uid ON results(uid) WHERE uid != '';
CREATE INDEX samples_no_uid ON samples(id) WHERE uid = '';
CREATE INDEX results_no_uid ON results(id) WHERE uid = '';
CREATE INDEX samples_deck_recorded ON samples(site, deck, recorded_at);
CREATE INDEX samples_furnace ON samples(furnace);
CREATE TABLE outbox (
    result_id INTEGER PRIMARY KEY REFERENCES results(id) ON DELETE CASCADE,
    queued_at TEXT NOT NULL
);
UPDATE samples SET summary = NULL;
