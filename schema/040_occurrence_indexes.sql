-- 040_occurrence_indexes.sql: the three indexes 001 put on occurrences
-- (batch_id, locality_id, reference_key) go. No query of the tool needs
-- them: `check` finds duplicates in one windowed pass, everything else
-- reads occurrences in key order or looks a parent row up by its own key,
-- and the tool never deletes a batch or a locality. Each cost a sort of
-- the whole table on every large import (about 0.3 s per million rows)
-- and about 20 bytes per row in the file. For a very large database
-- queried by hand by batch, locality or reference, create the index you
-- need: `import` keeps any index on occurrences (it drops and rebuilds
-- them around a load larger than what is stored).

DROP INDEX IF EXISTS occurrences_by_batch;
DROP INDEX IF EXISTS occurrences_by_locality;
DROP INDEX IF EXISTS occurrences_by_reference;
