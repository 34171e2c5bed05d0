/*
 * depth.c - numbers in cells: strict decimal parsing (nothing guessed),
 * depth ranges in one cell, and shortest round-trip formatting so that an
 * export imports back to the same stored values.
 */
#include "depth.h"

#include <errno.h>
#include <math.h>
#include <stdlib.h>
#include <string.h>

static const char *skip_space(const char *s)
{
	while (*s == ' ' || *s == '\t')
		s++;
	return s;
}

int bc_depth__number(const char *s, double *out, const char **why)
{
	const char *p = skip_space(s);
	if (!*p) {
		*why = "empty";
		return -1;
	}
	/* strtod would accept hex, "inf" and "nan": only plain decimals here */
	for (const char *q = p; *q; q++)
		if (!strchr("0123456789+-.eE \t", *q)) {
			*why = strchr(p, ',') ? "not a number (use a decimal point, not a comma)" : "not a number";
			return -1;
		}
	char *end;
	errno = 0;
	double d = strtod(p, &end);
	end = (char *)skip_space(end);
	if (end == p || *end || errno == ERANGE || !isfinite(d)) {
		*why = "not a number";
		return -1;
	}
	*out = d;
	return 0;
}

int bc_depth__range(const char *s, double *min, double *max, const char **why)
{
	const char *p = skip_space(s);
	if (bc_depth__number(p, min, why) == 0) {
		*max = *min;
		return 0;
	}
	/* find a separator after the first number: '-', en dash, or "to" */
	char *end;
	errno = 0;
	double a = strtod(p, &end);
	if (end == p || !isfinite(a)) {
		*why = "not a depth or a range like 100-200";
		return -1;
	}
	const char *q = skip_space(end);
	if (*q == '-')
		q++;
	else if (strncmp(q, "\xe2\x80\x93", 3) == 0)
		q += 3;
	else if (strncmp(q, "to", 2) == 0)
		q += 2;
	else {
		*why = "not a depth or a range like 100-200";
		return -1;
	}
	double b;
	if (bc_depth__number(q, &b, why) != 0) {
		*why = "not a depth or a range like 100-200";
		return -1;
	}
	*min = a;
	*max = b;
	return 0;
}

void bc_depth__format(double v, char *out, size_t cap)
{
	for (int prec = 15; prec <= 17; prec++) {
		snprintf(out, cap, "%.*g", prec, v);
		if (strtod(out, NULL) == v)
			return;
	}
}
