-- 0001: the base tables. One samples row per finished sample; one results
-- row per analysis of it (re-analysis after a limits change adds a row and
-- keeps the old one). Times are UTC text, fixed width
-- (2006-01-02T15:04:05.000Z), so text order is time order.
CREATE TABLE samples (
    id           INTEGER PRIMARY KEY,
    created_at   TEXT    NOT NULL,            -- when the row was written
    recorded_at  TEXT    NOT NULL,            -- when the sample was taken (pour)
    sample       TEXT    NOT NULL DEFAULT '', -- sample id, e.g. "L-2417 cup 1"
    ladle        TEXT    NOT NULL DEFAULT '', -- ladle or tap id, e.g. "L-2417"
    alloy        TEXT    NOT NULL DEFAULT '',
    operator     TEXT    NOT NULL DEFAULT '',
    channel      TEXT    NOT NULL DEFAULT '',
    thermocouple TEXT    NOT NULL DEFAULT '',
    note         TEXT    NOT NULL DEFAULT '',
    curve_path   TEXT    NOT NULL DEFAULT '', -- absolute path of the curve file
    curve_sha256 TEXT    NOT NULL DEFAULT '', -- hex SHA-256 of the file when stored
    interrupted  INTEGER NOT NULL DEFAULT 0,  -- recording ended before freezing was done
    simulated    INTEGER NOT NULL DEFAULT 0   -- from the simulator, not a real cup
);

CREATE TABLE results (
    id                   INTEGER PRIMARY KEY,
    sample_id            INTEGER NOT NULL REFERENCES samples(id) ON DELETE CASCADE,
    analysed_at          TEXT    NOT NULL,
    limits_version       TEXT    NOT NULL DEFAULT '',
    verdict              TEXT    NOT NULL,
    reasons              TEXT    NOT NULL DEFAULT '', -- plain-language lines, one a line
    problems             TEXT    NOT NULL DEFAULT '', -- the record's problems, one a line
    file                 TEXT    NOT NULL DEFAULT '', -- the record's file key
    samples              INTEGER NOT NULL DEFAULT 0,
    skipped_lines        INTEGER NOT NULL DEFAULT 0,
    despiked             INTEGER NOT NULL DEFAULT 0,
    rate_hz              REAL,
    pour_peak_c          REAL,
    pour_peak_s          REAL,
    liquidus_min_c       REAL,
    liquidus_min_s       REAL,
    liquidus_c           REAL,
    liquidus_s           REAL,
    eutectic_min_c       REAL,
    eutectic_min_s       REAL,
    eutectic_max_c       REAL,
    eutectic_max_s       REAL,
    recalescence_c       REAL,
    solidus_c            REAL,
    solidus_s            REAL,
    plateau_s            REAL,
    cooling_rate_c_per_s REAL,
    freezing_time_s      REAL,
    stable_eutectic_c    REAL,
    metastable_eutectic_c REAL,
    undercooling_c       REAL,
    chill_margin_c       REAL,
    ce                   REAL,
    ce_classic           REAL,
    cel_koriyama2020     REAL,
    cel_heine            REAL,
    cel_shop             REAL,
    white_eutectic_c     REAL,
    c_pct                REAL,
    si_pct               REAL,
    liquidus_ref_c       REAL,
    alpha_undercooling_c REAL,
    alpha_recalescence_c REAL,
    eutectic_ref_c       REAL,
    eutectic_depression_c REAL,
    plateau_c            REAL,
    fixed_point_c        REAL,
    fixed_point_error_c  REAL,
    packed               BLOB,             -- the numbers above packed for fast history reads
    record               TEXT    NOT NULL  -- the whole assess.Record as JSON (the truth; the
                                           -- columns above are copies for queries)
);
