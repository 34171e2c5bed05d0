/*
 * age_number.c - numeric ages: "72 Ma", "83.6-72.1 Ma", "75 +/- 2 Ma",
 * "12 ka BP", units converted to Ma and the ends placed in the chart
 * (doc/age-resolution.md).
 */
#include "age.h"

#include <math.h>
#include <string.h>

/* ------------------------------------------------------------------ */
/* Numbers                                                             */
/* ------------------------------------------------------------------ */

static const struct { const char *u; double to_ma; const char *name; } age_unit[] = {
	{"millions of years", 1, "Ma"}, {"million years", 1, "Ma"}, {"m.y.a.", 1, "Ma"}, {"m.y.", 1, "Ma"},
	{"m.a.", 1, "Ma"}, {"myr", 1, "Ma"}, {"mya", 1, "Ma"}, {"my", 1, "Ma"}, {"ma", 1, "Ma"},
	{"thousand years", 1e-3, "ka"}, {"k.y.", 1e-3, "ka"}, {"kyr", 1e-3, "ka"}, {"kya", 1e-3, "ka"},
	{"ky", 1e-3, "ka"}, {"ka", 1e-3, "ka"},
	{"billion years", 1e3, "Ga"}, {"gyr", 1e3, "Ga"}, {"gya", 1e3, "Ga"}, {"byr", 1e3, "Ga"},
	{"bya", 1e3, "Ga"}, {"ga", 1e3, "Ga"},
	{"years", 1e-6, "years"}, {"yrs", 1e-6, "years"}, {"yr", 1e-6, "years"},
};

int bc_age__is_alpha(char c) { return (c >= 'a' && c <= 'z') || (c >= 'A' && c <= 'Z') || (unsigned char)c >= 0x80; }
int bc_age__is_digit(char c) { return c >= '0' && c <= '9'; }
const char *bc_age__skip_sp(const char *p)
{
	while (*p == ' ')
		p++;
	return p;
}

/* A number with '.' or ',' as the decimal mark (a ',' before exactly three digits
 * after a non-zero integer part is a thousands separator: "1,600" = 1600). */
static int parse_num(const char **pp, double *out)
{
	const char *p = *pp;
	if (!bc_age__is_digit(*p) && !(*p == '.' && bc_age__is_digit(p[1])))
		return 0;
	double v = 0;
	int intdigits = 0;
	while (bc_age__is_digit(*p)) {
		v = v * 10 + (*p++ - '0');
		intdigits++;
		if (intdigits > 15)
			return 0;
	}
	while (*p == ',' && intdigits && v != 0 && bc_age__is_digit(p[1]) && bc_age__is_digit(p[2]) && bc_age__is_digit(p[3]) && !bc_age__is_digit(p[4])) {
		v = v * 1000 + (p[1] - '0') * 100 + (p[2] - '0') * 10 + (p[3] - '0');
		p += 4;
		if (*p == '.' || *p == ',')
			break;
	}
	if ((*p == '.' || *p == ',') && bc_age__is_digit(p[1])) {
		double scale = 0.1;
		p++;
		int fd = 0;
		while (bc_age__is_digit(*p)) {
			if (fd++ < 15)
				v += (*p - '0') * scale;
			scale /= 10;
			p++;
		}
	}
	*pp = p;
	*out = v;
	return 1;
}

static int parse_unit(const char **pp, double *to_ma, const char **name)
{
	const char *p = bc_age__skip_sp(*pp);
	for (size_t i = 0; i < sizeof age_unit / sizeof age_unit[0]; i++) {
		size_t n = strlen(age_unit[i].u);
		if (strncmp(p, age_unit[i].u, n) == 0 && !bc_age__is_alpha(p[n])) {
			*to_ma = age_unit[i].to_ma;
			*name = age_unit[i].name;
			*pp = p + n;
			return 1;
		}
	}
	return 0;
}

/* Reads "72 Ma", "83.6-72.1 Ma", "75 ± 2 Ma", "75 +/- 2 Ma", "66 to 72 Ma", "12 ka BP".
 * Returns 1 on success, 0 if the text is not numbers, -1 if numbers but unreadable. */
int bc_age__resolve_numbers(const bc_resolver *r, const char *s, span *sp, char *note, size_t cap)
{
	const char *p = s;
	double v1, v2 = NAN, e = NAN, u1 = NAN, u2 = NAN, u;
	const char *n1 = NULL, *n2 = NULL, *nm;
	if (!parse_num(&p, &v1))
		return 0;
	if (parse_unit(&p, &u, &nm)) {
		u1 = u;
		n1 = nm;
	}
	p = bc_age__skip_sp(p);
	int kind = 0; /* 0 point, 1 range, 2 plus-minus */
	if (strncmp(p, "\xc2\xb1", 2) == 0 || strncmp(p, "+/-", 3) == 0 || strncmp(p, "+-", 2) == 0 ||
	    strncmp(p, "+ / -", 5) == 0) {
		p += p[0] == '+' ? (p[1] == '/' ? 3 : (p[1] == '-' ? 2 : 5)) : 2;
		kind = 2;
		p = bc_age__skip_sp(p);
		if (!parse_num(&p, &e))
			return -1;
	} else if (*p == '-' || strncmp(p, "to ", 3) == 0 || strncmp(p, "bis ", 4) == 0 || strncmp(p, "a ", 2) == 0 ||
		   strncmp(p, "and ", 4) == 0 || *p == '/') {
		p += *p == '-' || *p == '/' ? 1 : (p[0] == 't' ? 3 : (p[0] == 'b' ? 4 : (p[0] == 'a' && p[1] == 'n' ? 4 : 2)));
		kind = 1;
		p = bc_age__skip_sp(p);
		if (!parse_num(&p, &v2))
			return -1;
	}
	if (parse_unit(&p, &u, &nm)) {
		u2 = u;
		n2 = nm;
	}
	p = bc_age__skip_sp(p);
	static const char *const tail[] = {"ago", "bp", "b.p.", "before present", "b2k"};
	for (size_t i = 0; i < sizeof tail / sizeof tail[0]; i++) {
		size_t n = strlen(tail[i]);
		if (strncmp(p, tail[i], n) == 0 && !bc_age__is_alpha(p[n])) {
			p = bc_age__skip_sp(p + n);
			break;
		}
	}
	while (*p == '.' || *p == ')' || *p == ' ')
		p++;
	if (*p)
		return -1;
	if (isnan(u1) && isnan(u2)) {
		u1 = u2 = 1;
		bc__note_add(note, cap, "no unit given: Ma assumed");
	} else if (isnan(u1)) {
		u1 = u2;
		n1 = n2;
	} else if (isnan(u2)) {
		u2 = u1;
		n2 = n1;
	}
	if ((n1 && strcmp(n1, "Ma") != 0) || (n2 && strcmp(n2, "Ma") != 0))
		bc__note_add(note, cap, "converted from %s to Ma", n1 && strcmp(n1, "Ma") != 0 ? n1 : n2);
	double older, younger;
	if (kind == 0) {
		older = younger = v1 * u1;
	} else if (kind == 2) {
		older = (v1 + e) * u2;
		younger = (v1 - e) * u2;
		if (younger < 0)
			younger = 0;
		bc__note_add(note, cap, "central value %g with stated error %g", v1 * u2, e * u2);
	} else {
		double a = v1 * u1, b = v2 * u2;
		older = a > b ? a : b;
		younger = a > b ? b : a;
		if (a < b)
			bc__note_add(note, cap, "written younger end first; put in order");
	}
	double limit = r->max_ma > 0 ? r->max_ma : 4600;
	if (older > limit) {
		bc__note_add(note, cap, "%g Ma is older than the chart (%g Ma)", older, limit);
		return -2;
	}
	sp->older = older;
	sp->younger = younger;
	sp->from = bc_age__finest_at(r, older, 1);
	sp->to = bc_age__finest_at(r, younger, 0);
	return 1;
}
