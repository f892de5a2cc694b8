-- 0003: the furnace or holder the sample came from (e.g. "IF-2", "holder H3").
ALTER TABLE samples ADD COLUMN furnace TEXT NOT NULL DEFAULT '';
