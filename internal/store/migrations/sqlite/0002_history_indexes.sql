-- 0002: indexes for the history, trend and verify queries.
CREATE INDEX samples_recorded ON samples(recorded_at);
CREATE INDEX samples_alloy_recorded ON samples(alloy, recorded_at);
CREATE INDEX samples_ladle ON samples(ladle);
CREATE INDEX results_sample ON results(sample_id, id);
CREATE INDEX results_verdict ON results(verdict);
CREATE INDEX samples_curve_sha256 ON samples(curve_sha256);
