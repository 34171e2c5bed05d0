/*
 * dwca.h - Darwin Core Archives (private): read an archive (zip file or
 * unpacked folder) as a stream of records keyed by design.md column names,
 * and write one (dwca_write.c). The reader: dwca.c (opening), dwca_entries.c
 * (zip or folder entries, limits), dwca_meta.c (meta.xml), dwca_text.c (data
 * files), dwca_join.c (extensions joined); they share dwca_impl.h.
 *
 * Reading. bc_dwca__open validates the whole archive before the first
 * record is returned, so a refused archive changes nothing:
 *  - meta.xml is parsed without network access, without loading any DTD
 *    and without expanding entities; a DOCTYPE of any kind is refused.
 *  - every zip entry name and every <location> must stay inside the
 *    archive: no absolute path, no "..", no backslash, no drive letter, no
 *    URL, no symbolic link (in a folder: no link leading out of it).
 *  - sizes: see bc_dwca_limits. Both the declared (zip directory) and the
 *    actual uncompressed size are checked.
 *  - each data file is held in memory while the archive is open.
 * The core must have rowType http://rs.tdwg.org/dwc/terms/Occurrence.
 * Extensions are joined to core rows by coreid:
 *  - MeasurementOrFact (dwc, or OBIS's ExtendedMeasurementOrFact): the
 *    measurementType values listed in docs/dwca.md (minimum/maximum
 *    palaeodepth, palaeodepth, depositional environment, preservation mode;
 *    units m, ft, fathom) fill the project's columns; other rows are kept
 *    as JSON in the column "measurementOrFact".
 *  - ChronometricAge (chrono: or dwc: namespace): earliest/latest ages
 *    converted to Ma from their reference system (Ma, ka, years / BP)
 *    fill earliestChronometricAge / latestChronometricAge.
 *  - any other extension: its rows kept as JSON in "extension:NAME".
 */
#ifndef BC_DWCA_H
#define BC_DWCA_H

#include "internal.h"
#include <stdint.h>

/** The project's own namespace for its five extension terms. */
#define BC_DWCA_NS "https://bathychron.invalid/terms/"
/** Namespace for the columns a user added (kept as extra), written back by export. */
#define BC_DWCA_COLUMN_NS "https://bathychron.invalid/columns/"

/** Size limits (zip-bomb and memory guards). */
typedef struct bc_dwca_limits {
	uint64_t max_entry;    /* largest uncompressed size of one file, bytes */
	uint64_t max_total;    /* largest uncompressed size of all files read */
	double max_ratio;      /* largest uncompressed/compressed ratio ... */
	uint64_t ratio_floor;  /* ... checked for entries larger than this many bytes */
	uint64_t max_entries;  /* most entries a zip may have */
	uint64_t max_xml;      /* largest meta.xml or eml.xml */
} bc_dwca_limits;
/** 1 GiB per file, 4 GiB in all, ratio 1000:1 above 1 MiB, 10000 entries, XML 16 MiB. */
#define BC_DWCA_LIMITS_INIT {UINT64_C(1) << 30, UINT64_C(4) << 30, 1000.0, UINT64_C(1) << 20, 10000, UINT64_C(16) << 20}

typedef struct bc_dwca bc_dwca;

/**
 * 1 when `path` looks like a Darwin Core Archive: a folder holding
 * meta.xml, or a file starting with the zip signature.
 */
int bc_dwca__detect(const char *path);

/**
 * Opens and validates the archive at `path` (zip file or folder). `name`
 * is used in messages ("NAME/occurrence.txt:LINE: ..."); NULL = path.
 * `limits` NULL = BC_DWCA_LIMITS_INIT. BC_EINVALID for a malformed or
 * refused archive, BC_ENOTFOUND / BC_EIO for a missing or unreadable one.
 * The reader is the caller's (bc_dwca__free).
 */
int bc_dwca__open(bc_dwca **out, const char *path, const char *name, const bc_dwca_limits *limits, bc_err *err);
void bc_dwca__free(bc_dwca *a);

/** SHA-256 over meta.xml, eml.xml and every data file read (64 hex digits). Borrowed. */
const char *bc_dwca__sha256(const bc_dwca *a);
/** The EML metadata document as text ("" when the archive has none). Borrowed. */
const char *bc_dwca__metadata(const bc_dwca *a);
/** A short JSON description of the archive layout (files, delimiters, extensions). Borrowed. */
const char *bc_dwca__layout_json(const bc_dwca *a);

/** The column names of every record (fixed when opened). Borrowed. */
size_t bc_dwca__ncolumns(const bc_dwca *a);
const char *bc_dwca__column(const bc_dwca *a, size_t i);

/**
 * Advances to the next record: each core row with its extension values,
 * then one record per extension row whose coreid matched no core row
 * (those carry a problem). Returns 1 when a record is ready, 0 at the end,
 * or a negative code (the data file cannot be read on).
 */
int bc_dwca__next(bc_dwca *a, bc_err *err);
/** Value of column i of the current record ("" when empty). Borrowed until the next call. */
const char *bc_dwca__value(const bc_dwca *a, size_t i);
/** "NAME/occurrence.txt": the data file the current record comes from. Borrowed. */
const char *bc_dwca__where(const bc_dwca *a);
/** Physical line (1-based) where the current record starts in that file. */
long bc_dwca__line(const bc_dwca *a);
/**
 * A problem found while joining the current record (an extension value
 * that cannot be converted or contradicts the core), or NULL. `*field`
 * gets the column concerned. Such a record belongs in the quarantine.
 * The text says what is wrong; when the problem lies in an extension row,
 * it ends with that row's place "(NAME/file:LINE)". The record's own place
 * is bc_dwca__where / bc_dwca__line.
 */
const char *bc_dwca__problem(const bc_dwca *a, const char **field);

/** Appends to `b` the term IRI a column is written under (Darwin Core,
 * BC_DWCA_NS for the project's five terms, BC_DWCA_COLUMN_NS for others). */
int bc_dwca__term_iri(bc_buf *b, const char *col);

/**
 * Writes an archive. `columns` are design.md/extra column names, `rows`
 * hold nrows x ncolumns values (row-major; NULL or "" for empty). `path`
 * ending in ".zip" writes a zip file, otherwise a folder (created; must
 * not exist or be empty). `eml` is the metadata document to write.
 */
int bc_dwca__write(const char *path, const char *const *columns, size_t ncolumns,
		   const char *const *rows, size_t nrows, const char *eml, bc_err *err);

#endif
