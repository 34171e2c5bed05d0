-- 001_core.sql: the GeoPackage core tables and the project's own tables.
-- Applied once, in one transaction, by bc_db_create / bc_db_open.
-- GeoPackage reserves PRAGMA application_id and user_version; the project's
-- schema version lives in bathychron_meta.

-- OGC GeoPackage 1.3 (OGC 12-128r17), Requirement 10.
CREATE TABLE gpkg_spatial_ref_sys (
  srs_name TEXT NOT NULL,
  srs_id INTEGER NOT NULL PRIMARY KEY,
  organization TEXT NOT NULL,
  organization_coordsys_id INTEGER NOT NULL,
  definition TEXT NOT NULL,
  description TEXT
);

-- Requirement 13.
CREATE TABLE gpkg_contents (
  table_name TEXT NOT NULL PRIMARY KEY,
  data_type TEXT NOT NULL,
  identifier TEXT UNIQUE,
  description TEXT DEFAULT '',
  last_change DATETIME NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%fZ','now')),
  min_x DOUBLE,
  min_y DOUBLE,
  max_x DOUBLE,
  max_y DOUBLE,
  srs_id INTEGER,
  CONSTRAINT fk_gc_r_srs_id FOREIGN KEY (srs_id) REFERENCES gpkg_spatial_ref_sys(srs_id)
);

-- Requirement 21.
CREATE TABLE gpkg_geometry_columns (
  table_name TEXT NOT NULL,
  column_name TEXT NOT NULL,
  geometry_type_name TEXT NOT NULL,
  srs_id INTEGER NOT NULL,
  z TINYINT NOT NULL,
  m TINYINT NOT NULL,
  CONSTRAINT pk_geom_cols PRIMARY KEY (table_name, column_name),
  CONSTRAINT uk_gc_table_name UNIQUE (table_name),
  CONSTRAINT fk_gc_tn FOREIGN KEY (table_name) REFERENCES gpkg_contents(table_name),
  CONSTRAINT fk_gc_srs FOREIGN KEY (srs_id) REFERENCES gpkg_spatial_ref_sys (srs_id)
);

-- The project's own metadata: key 'schema_version' and provenance.
CREATE TABLE bathychron_meta (
  key TEXT PRIMARY KEY,
  value TEXT NOT NULL
);

-- Loaded charts. Exactly one row has is_default = 1.
CREATE TABLE timescales (
  timescale_id INTEGER PRIMARY KEY,
  name TEXT NOT NULL UNIQUE,          -- e.g. 'ics-2024-12'
  source TEXT NOT NULL DEFAULT '',    -- citation of the release
  licence TEXT NOT NULL DEFAULT '',
  loaded_from TEXT NOT NULL DEFAULT '', -- file name or 'built-in'
  is_default INTEGER NOT NULL DEFAULT 0,
  loaded_at TEXT NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%SZ','now'))
);

-- Chart intervals. Bounds in Ma; uncertainty in Myr (NULL when not stated).
CREATE TABLE intervals (
  interval_id INTEGER PRIMARY KEY,
  timescale_id INTEGER NOT NULL REFERENCES timescales(timescale_id) ON DELETE CASCADE,
  seq INTEGER NOT NULL,               -- position in the chart as loaded
  name TEXT NOT NULL,                 -- English preferred label
  iri TEXT NOT NULL DEFAULT '',
  rank TEXT NOT NULL,                 -- eon, era, period, subperiod, epoch, age
  parent_id INTEGER REFERENCES intervals(interval_id),
  older_ma REAL NOT NULL,
  older_unc REAL,
  younger_ma REAL NOT NULL,
  younger_unc REAL,
  colour TEXT,                        -- '#RRGGBB' or NULL
  colour_source TEXT NOT NULL DEFAULT '',
  UNIQUE (timescale_id, name),
  CHECK (older_ma >= younger_ma)
);

-- Every label of every interval (skos:prefLabel in each language).
CREATE TABLE interval_aliases (
  timescale_id INTEGER NOT NULL REFERENCES timescales(timescale_id) ON DELETE CASCADE,
  interval_id INTEGER NOT NULL REFERENCES intervals(interval_id) ON DELETE CASCADE,
  label TEXT NOT NULL,
  lang TEXT NOT NULL DEFAULT ''
);
CREATE INDEX interval_aliases_by_interval ON interval_aliases(interval_id);

-- Vocabulary files in use (age aliases, environments, preservation),
-- recorded with their content hash so every table can name them.
CREATE TABLE vocabularies (
  vocabulary_id INTEGER PRIMARY KEY,
  kind TEXT NOT NULL,                 -- 'age-aliases', 'environments', 'preservation'
  name TEXT NOT NULL,                 -- file name or 'built-in'
  sha256 TEXT NOT NULL,
  n_terms INTEGER NOT NULL,
  loaded_at TEXT NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%SZ','now')),
  UNIQUE (kind, sha256)
);

-- The terms of each vocabulary, one row each, with its source.
CREATE TABLE vocabulary_terms (
  vocabulary_id INTEGER NOT NULL REFERENCES vocabularies(vocabulary_id) ON DELETE CASCADE,
  term TEXT NOT NULL,
  min_m REAL,                         -- environments: depth range in metres
  max_m REAL,
  class TEXT,                         -- preservation: articulation class
  older TEXT,                         -- age aliases: chart interval names
  younger TEXT,
  note TEXT NOT NULL DEFAULT '',
  source TEXT NOT NULL
);

-- One row per import (or refs load): what, when, with which options.
CREATE TABLE import_batches (
  batch_id INTEGER PRIMARY KEY,
  kind TEXT NOT NULL,                 -- 'occurrences', 'references', 'injuries'
  file TEXT NOT NULL,
  sha256 TEXT NOT NULL,
  options TEXT NOT NULL DEFAULT '',
  tool_version TEXT NOT NULL,
  timescale TEXT NOT NULL DEFAULT '',
  metadata TEXT NOT NULL DEFAULT '',  -- e.g. eml.xml of a Darwin Core Archive
  n_read INTEGER NOT NULL DEFAULT 0,
  n_stored INTEGER NOT NULL DEFAULT 0,
  n_quarantined INTEGER NOT NULL DEFAULT 0,
  started_at TEXT NOT NULL DEFAULT (strftime('%Y-%m-%dT%H:%M:%SZ','now')),
  UNIQUE (kind, sha256)
);

-- Rows that could not be used: never dropped, kept with their reason.
CREATE TABLE quarantine (
  quarantine_id INTEGER PRIMARY KEY,
  batch_id INTEGER NOT NULL REFERENCES import_batches(batch_id),
  file TEXT NOT NULL,
  line INTEGER NOT NULL,              -- physical line where the record starts
  field TEXT NOT NULL,
  reason TEXT NOT NULL,
  raw_row TEXT NOT NULL               -- the record as read (JSON object of header -> cell)
);

-- BibTeX references.
CREATE TABLE "references" (
  reference_id INTEGER PRIMARY KEY,
  citation_key TEXT NOT NULL UNIQUE,
  entry_type TEXT NOT NULL DEFAULT '',
  authors TEXT NOT NULL DEFAULT '',
  year TEXT NOT NULL DEFAULT '',
  title TEXT NOT NULL DEFAULT '',
  journal TEXT NOT NULL DEFAULT '',
  volume TEXT NOT NULL DEFAULT '',
  pages TEXT NOT NULL DEFAULT '',
  doi TEXT NOT NULL DEFAULT '',
  batch_id INTEGER REFERENCES import_batches(batch_id)
);

-- Localities: a GeoPackage point feature table (WGS 84, EPSG:4326).
-- geom is a GeoPackageBinary point, NULL when the locality has no coordinates.
CREATE TABLE localities (
  fid INTEGER PRIMARY KEY AUTOINCREMENT,
  geom POINT,                         -- GeoPackage Req. 25: declared type is the geometry type name
  name TEXT NOT NULL DEFAULT '',
  country TEXT NOT NULL DEFAULT '',
  formation TEXT NOT NULL DEFAULT '',
  longitude REAL,                     -- WGS 84 decimal degrees
  latitude REAL,
  verbatim_coordinates TEXT NOT NULL DEFAULT '',
  verbatim_srs TEXT NOT NULL DEFAULT '',
  uncertainty_m REAL
);
CREATE INDEX localities_by_name ON localities(name);

-- Occurrences: one stored row of an import.
CREATE TABLE occurrences (
  occurrence_pk INTEGER PRIMARY KEY,
  batch_id INTEGER NOT NULL REFERENCES import_batches(batch_id),
  line INTEGER NOT NULL,              -- physical line in the imported file
  occurrence_id TEXT NOT NULL DEFAULT '',   -- dwc:occurrenceID as given
  scientific_name TEXT NOT NULL DEFAULT '',
  taxon_group TEXT NOT NULL DEFAULT '',
  "order" TEXT NOT NULL DEFAULT '',
  family TEXT NOT NULL DEFAULT '',
  genus TEXT NOT NULL DEFAULT '',
  locality_id INTEGER REFERENCES localities(fid),
  -- age as written
  earliest_stage TEXT NOT NULL DEFAULT '',
  latest_stage TEXT NOT NULL DEFAULT '',
  earliest_series TEXT NOT NULL DEFAULT '',
  latest_series TEXT NOT NULL DEFAULT '',
  earliest_system TEXT NOT NULL DEFAULT '',
  latest_system TEXT NOT NULL DEFAULT '',
  earliest_ma_given REAL,
  latest_ma_given REAL,
  -- age as resolved
  age_from TEXT NOT NULL DEFAULT '',  -- chart interval names
  age_to TEXT NOT NULL DEFAULT '',
  older_ma REAL NOT NULL,
  younger_ma REAL NOT NULL,
  age_status TEXT NOT NULL,           -- exact, alias, range, qualified, numeric
  age_note TEXT NOT NULL DEFAULT '',
  age_conflict INTEGER NOT NULL DEFAULT 0,
  timescale TEXT NOT NULL,            -- chart used to resolve
  -- stratigraphy
  formation TEXT NOT NULL DEFAULT '',
  member TEXT NOT NULL DEFAULT '',
  bed TEXT NOT NULL DEFAULT '',
  -- palaeodepth in metres, as given or from the environment vocabulary
  min_depth_m REAL,
  max_depth_m REAL,
  depth_source TEXT NOT NULL DEFAULT '', -- 'given', 'environment', '' (none)
  environment TEXT NOT NULL DEFAULT '',
  -- preservation
  preservation TEXT NOT NULL DEFAULT '',
  articulation TEXT NOT NULL DEFAULT '', -- articulated, partly articulated, disarticulated, unknown
  individual_count INTEGER,
  reference_key TEXT NOT NULL DEFAULT '',
  extra TEXT NOT NULL DEFAULT '{}',   -- unknown columns, JSON object
  CHECK (older_ma >= younger_ma),
  CHECK (min_depth_m IS NULL OR max_depth_m IS NULL OR min_depth_m <= max_depth_m)
);
CREATE INDEX occurrences_by_batch ON occurrences(batch_id);
CREATE INDEX occurrences_by_locality ON occurrences(locality_id);
CREATE INDEX occurrences_by_reference ON occurrences(reference_key);
