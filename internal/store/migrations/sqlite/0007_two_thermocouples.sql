-- 0007: which channel was which in a cup with two thermocouples (the
-- sample's channel is the centre thermocouple's): the wall thermocouple's
-- channel, and both thermocouples' distances from the cup's axis in mm
-- (NULL: a cup with one thermocouple, or a radius not given), as the curve
-- file's tc_wall_channel, tc_centre_radius_mm and tc_wall_radius_mm say.
ALTER TABLE samples ADD COLUMN tc_wall_channel TEXT NOT NULL DEFAULT '';
ALTER TABLE samples ADD COLUMN tc_centre_radius_mm REAL;
ALTER TABLE samples ADD COLUMN tc_wall_radius_mm REAL;
