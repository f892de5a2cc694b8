-- 0004: each sample's latest result, kept on the sample row so history
-- reads it without searching the results of every sample.
ALTER TABLE samples ADD COLUMN latest_result_id INTEGER REFERENCES results(id);
UPDATE samples SET latest_result_id = (SELECT max(r.id) FROM results r WHERE r.sample_id = samples.id);
