/*
 * ranges.h - private pieces of the per-taxon depth ranges, exposed for the
 * unit tests: the range-extension factor and the relation of two ranges.
 */
#ifndef BC_RANGES_H
#define BC_RANGES_H

#include "internal.h"

/**
 * Strauss & Sadler (1989) / Marshall (1990) one-sided confidence interval on
 * one end of a stratigraphic range from `h` horizons at confidence `level`:
 * the end lies within r times the observed range beyond the last horizon,
 * r = (1 - level)^(-1/(h-1)) - 1. NaN when h < 2 or level is not in (0, 1).
 */
double bc_ranges__extension(size_t h, double level);

/**
 * The BC_RANGE_* relations the age bounds allow between a shallow range
 * ending in [s_young, s_old] (smallest younger and older bounds) and a deep
 * range starting in [f_young, f_old] and ending in [l_young, l_old]. Ages
 * that only touch (a shared bound) do not make a relation possible; when
 * none is left (identical point ages) the ends coincide: BC_RANGE_OVERLAPS.
 */
unsigned bc_ranges__relation(double s_young, double s_old, double f_young, double f_old, double l_young, double l_old);

/**
 * How far back a first-occurrence limit may reach from the oldest horizon
 * at age `t` (Ma): the older bound of the chart's eon holding `t` (an older
 * bound belongs to the interval below it), else the oldest bound of the
 * chart; +infinity when `t` lies beyond the chart or there is no chart.
 */
double bc_ranges__first_cap(const bc_chart *c, double t);

#endif
