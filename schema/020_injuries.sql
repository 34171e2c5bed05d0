-- 020_injuries.sql: samples of living or fossil animals examined for
-- regenerating arms, from which `bathychron encounter` estimates how often
-- they met predators. One row per imported row: either a sample summary
-- (individuals examined / regenerating) or one individual (its arms).
-- Batches are import_batches rows with kind 'injuries'; bad rows go to the
-- shared quarantine table. IF NOT EXISTS: test_db re-applies migrations
-- newer than 2 to a database that already has them.

CREATE TABLE IF NOT EXISTS injury_samples (
  injury_sample_pk INTEGER PRIMARY KEY,
  batch_id INTEGER NOT NULL REFERENCES import_batches(batch_id),
  line INTEGER NOT NULL,              -- physical line in the imported file
  sample_id TEXT NOT NULL DEFAULT '', -- as given (optional)
  site TEXT NOT NULL,                 -- locality / station name
  min_depth_m REAL NOT NULL,          -- water depth (Recent) or palaeodepth, metres
  max_depth_m REAL NOT NULL,
  -- age as written ('Recent' for living material) and as resolved
  age_text TEXT NOT NULL,
  age_status TEXT NOT NULL,           -- 'recent' or a resolver status (exact, alias, ...)
  age_from TEXT NOT NULL DEFAULT '',  -- chart interval names ('' for Recent and numbers)
  age_to TEXT NOT NULL DEFAULT '',
  older_ma REAL NOT NULL,             -- 0 for Recent
  younger_ma REAL NOT NULL,
  timescale TEXT NOT NULL DEFAULT '', -- chart used to resolve ('' for Recent)
  taxon TEXT NOT NULL,
  -- counts: a sample summary, or one individual (individuals_examined = 1,
  -- individuals_regenerating = 1 when any arm regenerates)
  record_kind TEXT NOT NULL CHECK (record_kind IN ('sample', 'individual')),
  individuals_examined INTEGER NOT NULL,
  individuals_regenerating INTEGER NOT NULL,
  arms_examined INTEGER,              -- NULL when arms were not counted
  arms_regenerating INTEGER,
  -- mean duration of the recognisable regenerating state, days
  duration_min_days REAL NOT NULL,
  duration_max_days REAL NOT NULL,
  duration_source TEXT NOT NULL,      -- 'given' or 'length/rate'
  regenerate_length_min_mm REAL,      -- when duration = length / rate
  regenerate_length_max_mm REAL,
  regeneration_rate_min_mm_day REAL,
  regeneration_rate_max_mm_day REAL,
  recorded_by TEXT NOT NULL DEFAULT '',
  reference_key TEXT NOT NULL DEFAULT '',
  extra TEXT NOT NULL DEFAULT '{}',   -- unknown columns, JSON object
  CHECK (min_depth_m >= 0 AND min_depth_m <= max_depth_m),
  CHECK (older_ma >= younger_ma AND younger_ma >= 0),
  CHECK (individuals_examined > 0),
  CHECK (individuals_regenerating >= 0 AND individuals_regenerating <= individuals_examined),
  CHECK ((arms_examined IS NULL) = (arms_regenerating IS NULL)),
  CHECK (arms_examined IS NULL OR (arms_regenerating >= 0 AND arms_regenerating <= arms_examined)),
  CHECK (duration_min_days > 0 AND duration_min_days <= duration_max_days)
);
CREATE INDEX IF NOT EXISTS injury_samples_by_batch ON injury_samples(batch_id);
CREATE INDEX IF NOT EXISTS injury_samples_by_site ON injury_samples(site);

-- Samples with the file they came from, for people who query from R or Python.
CREATE VIEW IF NOT EXISTS injury_sample_details AS
SELECT s.*, b.file AS batch_file, b.started_at AS imported_at
FROM injury_samples s JOIN import_batches b ON b.batch_id = s.batch_id;
