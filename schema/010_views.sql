-- 010_views.sql: views for the common joins, for people who query the
-- database from R or Python.

-- Occurrences with their locality and reference in one row.
CREATE VIEW occurrence_details AS
SELECT o.occurrence_pk, o.occurrence_id, o.scientific_name, o.taxon_group,
       o."order", o.family, o.genus,
       l.name AS locality, l.country, l.longitude, l.latitude,
       o.age_from, o.age_to, o.older_ma, o.younger_ma, o.age_status,
       o.age_note, o.age_conflict, o.timescale,
       o.formation, o.member, o.bed,
       o.min_depth_m, o.max_depth_m, o.depth_source, o.environment,
       o.preservation, o.articulation, o.individual_count,
       o.reference_key, r.authors AS reference_authors, r.year AS reference_year,
       r.title AS reference_title,
       b.file AS batch_file, o.line AS batch_line, o.batch_id
FROM occurrences o
LEFT JOIN localities l ON l.fid = o.locality_id
LEFT JOIN "references" r ON r.citation_key = o.reference_key
JOIN import_batches b ON b.batch_id = o.batch_id;

-- Quarantined rows with the batch they came from.
CREATE VIEW quarantine_details AS
SELECT q.quarantine_id, q.batch_id, b.started_at, q.file, q.line, q.field,
       q.reason, q.raw_row
FROM quarantine q JOIN import_batches b ON b.batch_id = q.batch_id;

-- Chart intervals with the chart name.
CREATE VIEW chart_intervals AS
SELECT t.name AS timescale, t.is_default, i.seq, i.name, i.rank,
       p.name AS parent, i.older_ma, i.older_unc, i.younger_ma, i.younger_unc,
       i.colour
FROM intervals i JOIN timescales t ON t.timescale_id = i.timescale_id
LEFT JOIN intervals p ON p.interval_id = i.parent_id;
