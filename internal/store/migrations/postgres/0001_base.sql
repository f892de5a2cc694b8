-- 0001: the plant's records: the samples and results of every deck, as
-- each deck keeps them in its own file, with the site and deck, the id
-- that is the same on every copy (uid; forwarding or importing the same
-- row twice is a no-op), who wrote each row (written_by, the login role)
-- and when it arrived. Decks (members of undercool_deck) insert and read
-- their own rows; the quality office (members of undercool_reader) reads
-- all. Create those two roles before this migration runs (see
-- docs/plant-database.md); the owner of the tables runs it.
CREATE TABLE samples (
    id                 bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
    uid                text        NOT NULL UNIQUE,
    site               text        NOT NULL DEFAULT '',
    deck               text        NOT NULL DEFAULT '',
    created_at         timestamptz NOT NULL,            -- when the deck stored it
    recorded_at        timestamptz NOT NULL,            -- when the sample was taken (pour)
    received_at        timestamptz NOT NULL DEFAULT now(),
    sample             text        NOT NULL DEFAULT '',
    ladle              text        NOT NULL DEFAULT '',
    alloy              text        NOT NULL DEFAULT '',
    furnace            text        NOT NULL DEFAULT '',
    operator           text        NOT NULL DEFAULT '',
    channel            text        NOT NULL DEFAULT '',
    thermocouple       text        NOT NULL DEFAULT '',
    note               text        NOT NULL DEFAULT '',
    curve_path         text        NOT NULL DEFAULT '', -- on the deck that recorded it
    curve_sha256       text        NOT NULL DEFAULT '',
    interrupted        boolean     NOT NULL DEFAULT false,
    simulated          boolean     NOT NULL DEFAULT false,
    written_by         name        NOT NULL DEFAULT current_user
);

CREATE TABLE results (
    id                   bigint GENERATED ALWAYS AS IDENTITY PRIMARY KEY,
    uid                  text        NOT NULL UNIQUE,
    sample_uid           text        NOT NULL REFERENCES samples(uid),
    sample_id            bigint      NOT NULL REFERENCES samples(id), -- set by results_link
    analysed_at          timestamptz NOT NULL,
    received_at          timestamptz NOT NULL DEFAULT now(),
    limits_version       text        NOT NULL DEFAULT '',
    verdict              text        NOT NULL,
    reasons              text        NOT NULL DEFAULT '',
    problems             text        NOT NULL DEFAULT '',
    file                 text        NOT NULL DEFAULT '',
    samples              integer     NOT NULL DEFAULT 0,
    skipped_lines        integer     NOT NULL DEFAULT 0,
    despiked             integer     NOT NULL DEFAULT 0,
    rate_hz              double precision,
    pour_peak_c            double precision,
    pour_peak_s            double precision,
    liquidus_min_c         double precision,
    liquidus_min_s         double precision,
    liquidus_c             double precision,
    liquidus_s             double precision,
    eutectic_min_c         double precision,
    eutectic_min_s         double precision,
    eutectic_max_c         double precision,
    eutectic_max_s         double precision,
    recalescence_c         double precision,
    solidus_c              double precision,
    solidus_s              double precision,
    plateau_s              double precision,
    cooling_rate_c_per_s   double precision,
    freezing_time_s        double precision,
    stable_eutectic_c      double precision,
    metastable_eutectic_c  double precision,
    undercooling_c         double precision,
    chill_margin_c         double precision,
    ce                     double precision,
    ce_classic             double precision,
    cel_koriyama2020       double precision,
    cel_heine              double precision,
    cel_shop               double precision,
    white_eutectic_c       double precision,
    c_pct                  double precision,
    si_pct                 double precision,
    liquidus_ref_c         double precision,
    alpha_undercooling_c   double precision,
    alpha_recalescence_c   double precision,
    eutectic_ref_c         double precision,
    eutectic_depression_c  double precision,
    plateau_c              double precision,
    fixed_point_c          double precision,
    fixed_point_error_c    double precision,
    pour_superheat_c       double precision,
    packed               bytea,
    summary              bytea,      -- the sample's history row with this result
    record               jsonb       NOT NULL, -- the whole result (the truth)
    written_by           name        NOT NULL DEFAULT current_user
);

-- Each sample's latest result (by analysis time, then arrival) with its
-- history row and the columns history filters on: history reads this
-- narrow table, one row per sample, and the samples rows are never
-- updated. Kept by the results_latest trigger.
CREATE TABLE latest (
    id                 bigint      PRIMARY KEY REFERENCES samples(id), -- the sample's
    latest_result_id   bigint      NOT NULL REFERENCES results(id),
    latest_analysed_at timestamptz NOT NULL,
    latest_verdict     text        NOT NULL,
    recorded_at        timestamptz NOT NULL,
    site               text        NOT NULL,
    deck               text        NOT NULL,
    alloy              text        NOT NULL,
    ladle              text        NOT NULL,
    furnace            text        NOT NULL,
    written_by         name        NOT NULL, -- the sample's
    summary            bytea
);

-- A result names its sample by uid (a deck may not see another deck's
-- rows); its sample_id is looked up here, as the tables' owner.
CREATE FUNCTION results_link() RETURNS trigger LANGUAGE plpgsql SECURITY DEFINER SET search_path FROM CURRENT AS $$
BEGIN
    SELECT id INTO NEW.sample_id FROM samples WHERE uid = NEW.sample_uid;
    IF NEW.sample_id IS NULL THEN
        RAISE EXCEPTION 'no sample with uid %', NEW.sample_uid USING ERRCODE = 'foreign_key_violation';
    END IF;
    RETURN NEW;
END $$;
CREATE TRIGGER results_link BEFORE INSERT ON results FOR EACH ROW EXECUTE FUNCTION results_link();

-- The latest result of a sample is kept in latest, as the tables' owner:
-- decks need no right to update.
CREATE FUNCTION results_latest() RETURNS trigger LANGUAGE plpgsql SECURITY DEFINER SET search_path FROM CURRENT AS $$
BEGIN
    INSERT INTO latest (id, latest_result_id, latest_analysed_at, latest_verdict, recorded_at, site, deck, alloy, ladle, furnace, written_by, summary)
    SELECT s.id, NEW.id, NEW.analysed_at, NEW.verdict, s.recorded_at, s.site, s.deck, s.alloy, s.ladle, s.furnace, s.written_by, NEW.summary
      FROM samples s WHERE s.id = NEW.sample_id
    ON CONFLICT (id) DO UPDATE SET latest_result_id = EXCLUDED.latest_result_id, latest_analysed_at = EXCLUDED.latest_analysed_at,
        latest_verdict = EXCLUDED.latest_verdict, summary = EXCLUDED.summary
     WHERE (latest.latest_analysed_at, latest.latest_result_id) < (EXCLUDED.latest_analysed_at, EXCLUDED.latest_result_id);
    RETURN NULL;
END $$;
CREATE TRIGGER results_latest AFTER INSERT ON results FOR EACH ROW EXECUTE FUNCTION results_latest();

ALTER TABLE samples ENABLE ROW LEVEL SECURITY;
ALTER TABLE results ENABLE ROW LEVEL SECURITY;
ALTER TABLE latest ENABLE ROW LEVEL SECURITY;
CREATE POLICY deck_reads   ON latest FOR SELECT TO undercool_deck USING (written_by = current_user);
CREATE POLICY office_reads ON latest FOR SELECT TO undercool_reader USING (true);
CREATE POLICY deck_inserts ON samples FOR INSERT TO undercool_deck WITH CHECK (written_by = current_user);
CREATE POLICY deck_reads   ON samples FOR SELECT TO undercool_deck USING (written_by = current_user);
CREATE POLICY office_reads ON samples FOR SELECT TO undercool_reader USING (true);
CREATE POLICY deck_inserts ON results FOR INSERT TO undercool_deck WITH CHECK (written_by = current_user);
CREATE POLICY deck_reads   ON results FOR SELECT TO undercool_deck USING (written_by = current_user);
CREATE POLICY office_reads ON results FOR SELECT TO undercool_reader USING (true);
GRANT SELECT, INSERT ON samples, results TO undercool_deck;
GRANT SELECT ON latest TO undercool_deck;
GRANT SELECT ON samples, results, latest TO undercool_reader;
GRANT SELECT ON schema_version TO undercool_deck, undercool_reader;
DO $$ BEGIN
    EXECUTE format('GRANT USAGE ON SCHEMA %I TO undercool_deck, undercool_reader', current_schema());
    EXECUTE format('REVOKE CREATE ON SCHEMA %I FROM PUBLIC', current_schema());
END $$;
