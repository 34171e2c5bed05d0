-- 030_occurrence_snapshot.sql: a compact copy of the occurrence columns
-- that `shift` reads, one row per column, written by the first `shift`
-- after the occurrences change (src/snapshot.c; doc/shift.md, "Speed").
-- It is a cache: deleting its rows loses nothing, the next `shift`
-- writes it again. It is trusted only while it covers as many
-- occurrences, up to the same highest occurrence_pk, as the table holds,
-- and the triggers below empty it whenever a row is inserted, changed or
-- deleted (the importer suspends the insert trigger inside its own
-- transaction and empties the copy itself). IF NOT EXISTS: test_db
-- re-applies migrations newer than 2 to a database that already has them.

CREATE TABLE IF NOT EXISTS occurrence_snapshot (
  part TEXT PRIMARY KEY,      -- 'meta', a column name, or 'strings'
  rows INTEGER NOT NULL,      -- occurrences covered (the same in every part)
  max_pk INTEGER NOT NULL,    -- highest occurrence_pk covered, 0 when none
  layout TEXT NOT NULL,       -- 'int64le', 'float64le' (NaN = NULL), 'uint32le' (index into 'strings'), 'utf8z' (NUL-terminated strings), 'v1' (meta)
  data BLOB NOT NULL
);

CREATE TRIGGER IF NOT EXISTS occurrence_snapshot_stale_on_insert AFTER INSERT ON occurrences
BEGIN DELETE FROM occurrence_snapshot; END;
CREATE TRIGGER IF NOT EXISTS occurrence_snapshot_stale_on_update AFTER UPDATE ON occurrences
BEGIN DELETE FROM occurrence_snapshot; END;
CREATE TRIGGER IF NOT EXISTS occurrence_snapshot_stale_on_delete AFTER DELETE ON occurrences
BEGIN DELETE FROM occurrence_snapshot; END;
