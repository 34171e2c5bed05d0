/*
 * skos.h - private helpers shared by skos.c and timescale.c.
 */
#ifndef BC_SKOS_H
#define BC_SKOS_H

#include "internal.h"

/** A chart name from a file name: "dir/ics-chart-2020.skos.rdf" -> "ics-chart-2020". Caller frees; NULL when out of memory. */
char *bc_chart__name_from_path(const char *path);

#endif
