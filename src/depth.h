/*
 * depth.h - numbers in cells and palaeodepth values (private).
 */
#ifndef BC_DEPTH_H
#define BC_DEPTH_H

#include "internal.h"

/**
 * Parses a whole cell as a finite decimal number ("12", "-3.5", "1e3";
 * spaces around allowed). Returns 0, or -1 with a reason in `why`
 * (e.g. a decimal comma, a unit left in the cell).
 */
int bc_depth__number(const char *s, double *out, const char **why);

/**
 * Parses a depth cell of the map-only term `depth`: "120" or a range
 * "100-200", "100 - 200", "100–200" (en dash), "100 to 200".
 * Returns 0, or -1 with the reason in `why`.
 */
int bc_depth__range(const char *s, double *min, double *max, const char **why);

/** Shortest decimal text that reads back to exactly `v` ("30.48", "1e-05"). */
void bc_depth__format(double v, char *out, size_t cap);

#endif
