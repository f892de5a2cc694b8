-- 0005: a column for the Record's pour_superheat_c (added to the Record
-- after 0001). The pattern for every key the Record gains: add its column,
-- copy it from the record JSON, and clear the packed copies (results.packed,
-- samples.summary) so that they are rebuilt from the JSON with the new key.
ALTER TABLE results ADD COLUMN pour_superheat_c REAL;
UPDATE results SET pour_superheat_c = json_extract(record, '$.pour_superheat_c'), packed = NULL;
UPDATE samples SET summary = NULL;
