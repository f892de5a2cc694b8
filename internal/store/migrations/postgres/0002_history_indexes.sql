-- 0002: indexes for the history, trend and verify queries (plant-wide:
-- by alloy, by deck, by time, by ladle and furnace). Older decks keep
-- writing while it runs: their inserts wait for it, then go in (the
-- tables are locked first, in the order a deck's insert takes them, so
-- that the two never wait for each other).
LOCK TABLE samples, results, latest IN SHARE MODE;
CREATE INDEX latest_recorded ON latest(recorded_at, id);
CREATE INDEX latest_alloy_recorded ON latest(alloy, recorded_at, id);
CREATE INDEX latest_deck_recorded ON latest(site, deck, recorded_at, id);
CREATE INDEX latest_ladle ON latest(ladle);
CREATE INDEX latest_furnace ON latest(furnace);
CREATE INDEX latest_written_by ON latest(written_by);
CREATE INDEX samples_recorded ON samples(recorded_at, id);
CREATE INDEX samples_alloy_recorded ON samples(alloy, recorded_at, id);
CREATE INDEX samples_deck_recorded ON samples(site, deck, recorded_at, id);
CREATE INDEX samples_ladle ON samples(ladle);
CREATE INDEX samples_curve_sha256 ON samples(curve_sha256);
CREATE INDEX samples_written_by ON samples(written_by);
CREATE INDEX results_sample ON results(sample_id, id);
CREATE INDEX results_written_by ON results(written_by);
