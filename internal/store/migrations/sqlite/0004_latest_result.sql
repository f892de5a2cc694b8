-- 0004: each sample's latest result, kept on the sample row so that
-- history reads one row per sample without a join: its id, its verdict
-- (for the --verdict filter) and a packed summary of the history row
-- (written by the program; rows migrated from earlier versions get theirs
-- when the program first opens the database after this migration).
ALTER TABLE samples ADD COLUMN latest_result_id INTEGER REFERENCES results(id);
ALTER TABLE samples ADD COLUMN latest_verdict TEXT NOT NULL DEFAULT '';
ALTER TABLE samples ADD COLUMN summary BLOB;
UPDATE samples SET latest_result_id = (SELECT max(r.id) FROM results r WHERE r.sample_id = samples.id);
UPDATE samples SET latest_verdict = coalesce((SELECT r.verdict FROM results r WHERE r.id = samples.latest_result_id), '');
CREATE INDEX samples_no_summary ON samples(id) WHERE summary IS NULL;
