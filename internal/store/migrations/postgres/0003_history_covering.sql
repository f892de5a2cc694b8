-- 0003: the index of history by alloy and time holds the history row too
-- (latest_result_id, summary), so that a month of one alloy across the
-- plant is read from the index alone (an index-only scan, in time order),
-- not row by row from the table: for 30,000 rows of 90,000 it replaces a
-- scan and sort of the whole table (see BenchmarkPlantHistoryMonth and
-- docs/plant-database.md). The rows' visibility is what autovacuum
-- records; rows written since its last run are checked in the table.
-- Older decks keep writing while it runs, as for 0002: the tables are
-- locked in a deck's order first, the new index is built while history
-- can still be read, and the old one is dropped.
LOCK TABLE samples, results, latest IN SHARE MODE;
CREATE INDEX latest_alloy_covering ON latest(alloy, recorded_at, id) INCLUDE (latest_result_id, summary);
DROP INDEX latest_alloy_recorded;
