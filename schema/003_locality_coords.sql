-- 003_locality_coords.sql: how rows name localities, and every coordinate
-- pair any row gave for a locality, so that `check` can report a locality
-- given different coordinates. Written to be safe to apply twice.

-- One row per named locality: its normalised name and country (Unicode
-- NFKC, case-folded, runs of white space collapsed). Rows whose locality
-- and country normalise alike share one localities record. Unnamed
-- localities have no row here.
CREATE TABLE IF NOT EXISTS locality_keys (
  name_key TEXT NOT NULL,
  country_key TEXT NOT NULL,
  fid INTEGER NOT NULL UNIQUE REFERENCES localities(fid) ON DELETE CASCADE,
  PRIMARY KEY (name_key, country_key)
);

-- Every coordinate pair given for a locality, in the order given, with the
-- import batch and line it came from. The locality keeps the first pair;
-- the others stay here so a disagreement is never lost.
CREATE TABLE IF NOT EXISTS locality_coordinates (
  coord_id INTEGER PRIMARY KEY,
  fid INTEGER NOT NULL REFERENCES localities(fid) ON DELETE CASCADE,
  batch_id INTEGER REFERENCES import_batches(batch_id),
  line INTEGER,                       -- physical line in the batch's file
  longitude REAL NOT NULL,            -- WGS 84 decimal degrees
  latitude REAL NOT NULL,
  verbatim_coordinates TEXT NOT NULL DEFAULT '',
  verbatim_srs TEXT NOT NULL DEFAULT '',
  uncertainty_m REAL
);
CREATE INDEX IF NOT EXISTS locality_coordinates_by_fid ON locality_coordinates(fid, longitude, latitude);
CREATE INDEX IF NOT EXISTS localities_unnamed_by_place ON localities(longitude, latitude) WHERE name = '';
