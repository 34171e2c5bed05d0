/*
 * colmap.h - canonical input columns and column-map profiles (private):
 * a lab's own headers mapped onto design.md's terms, with depth units and
 * constant defaults.
 */
#ifndef BC_COLMAP_H
#define BC_COLMAP_H

#include "vocab.h"

/* The canonical input columns of design.md, in its order. */
typedef enum bc_term {
	BC_T_OCCURRENCE_ID = 0, BC_T_SCIENTIFIC_NAME, BC_T_TAXON_GROUP, BC_T_ORDER, BC_T_FAMILY, BC_T_GENUS,
	BC_T_LOCALITY, BC_T_COUNTRY, BC_T_LAT, BC_T_LON, BC_T_DATUM, BC_T_COORD_UNC,
	BC_T_VERBATIM_COORDS, BC_T_VERBATIM_SRS,
	BC_T_EARLIEST_STAGE, BC_T_LATEST_STAGE, BC_T_EARLIEST_SERIES, BC_T_LATEST_SERIES,
	BC_T_EARLIEST_SYSTEM, BC_T_LATEST_SYSTEM, BC_T_EARLIEST_MA, BC_T_LATEST_MA,
	BC_T_FORMATION, BC_T_MEMBER, BC_T_BED,
	BC_T_MIN_DEPTH, BC_T_MAX_DEPTH, BC_T_ENVIRONMENT, BC_T_PRESERVATION,
	BC_T_INDIVIDUAL_COUNT, BC_T_REFERENCES,
	BC_TERM_COUNT,
	BC_T_DEPTH = BC_TERM_COUNT /* map-only pseudo-term: one cell "d" or "a-b" -> min and max */
} bc_term;

/** The term's name as design.md writes it ("scientificName"). */
const char *bc_colmap__term_name(int term);
/** Term index for a header (case-insensitive, optional "dwc:" prefix), or -1. */
int bc_colmap__term_find(const char *name);

typedef struct bc_colmap bc_colmap;

/**
 * Loads a profile: `spec` is a file path (contains '/' or ends in ".map")
 * or the name of a shipped profile (import/maps/NAME.map). Units are
 * looked up in `units`. Bad lines give "FILE:LINE: what".
 */
int bc_colmap__load(bc_colmap **out, const char *spec, const bc_vocab *units, bc_err *err);
/** Parses profile text; `name` is used in messages. */
int bc_colmap__parse(bc_colmap **out, const char *name, const char *text, size_t len, const bc_vocab *units, bc_err *err);
void bc_colmap__free(bc_colmap *m);
/** Name as given, and the SHA-256 of its text. Borrowed. */
const char *bc_colmap__name(const bc_colmap *m);
const char *bc_colmap__sha256(const bc_colmap *m);

/** How each column of one file is read. */
typedef struct bc_colplan {
	size_t ncols;
	int *col_term;        /* per column: a bc_term, BC_T_DEPTH, or -1 (kept in extra) */
	double *col_factor;   /* per column: metres per unit (depth terms), else 1 */
	int term_col[BC_TERM_COUNT]; /* per term: its column or -1 */
	int depth_col;        /* column mapped to the pseudo-term depth, or -1 */
	double depth_factor;
	const char *defaults[BC_TERM_COUNT]; /* borrowed from the map; NULL = none */
} bc_colplan;

/**
 * Matches a header row against the canonical terms and the map (NULL =
 * none). Duplicate or empty headers and two columns giving one term are
 * errors "FILE:LINE: header: what".
 */
int bc_colmap__bind(bc_colplan *plan, const bc_colmap *m, const char *const *headers, size_t n,
	const char *file, long line, bc_err *err);
void bc_colplan__free(bc_colplan *plan);

#endif
