/*
 * chart.c - a chronostratigraphic chart in memory: intervals with ranks,
 * parents, bounds, colours, and every label in every language.
 */
#include "internal.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>

struct bc_chart {
	char *name, *source, *licence;
	bc_interval *iv;
	size_t n, cap;
	bc_label *lab;
	size_t nlab, caplab;
};

static const char *const rank_names[] = {
	[BC_RANK_UNKNOWN] = "unknown", [BC_RANK_SUPEREON] = "supereon", [BC_RANK_EON] = "eon",
	[BC_RANK_ERA] = "era", [BC_RANK_PERIOD] = "period", [BC_RANK_SUBPERIOD] = "subperiod",
	[BC_RANK_EPOCH] = "epoch", [BC_RANK_AGE] = "age",
};

const char *bc_rank_name(bc_rank rank)
{
	return (unsigned)rank < sizeof rank_names / sizeof rank_names[0] ? rank_names[rank] : "unknown";
}

bc_rank bc_rank_parse(const char *name)
{
	static const struct { const char *s; bc_rank r; } syn[] = {
		{"super-eon", BC_RANK_SUPEREON}, {"supereonothem", BC_RANK_SUPEREON}, {"eonothem", BC_RANK_EON},
		{"erathem", BC_RANK_ERA}, {"system", BC_RANK_PERIOD}, {"subsystem", BC_RANK_SUBPERIOD},
		{"series", BC_RANK_EPOCH}, {"stage", BC_RANK_AGE},
	};
	if (!name)
		return BC_RANK_UNKNOWN;
	for (size_t i = 1; i < sizeof rank_names / sizeof rank_names[0]; i++)
		if (strcasecmp(name, rank_names[i]) == 0)
			return (bc_rank)i;
	for (size_t i = 0; i < sizeof syn / sizeof syn[0]; i++)
		if (strcasecmp(name, syn[i].s) == 0)
			return syn[i].r;
	return BC_RANK_UNKNOWN;
}

int bc_chart_new(bc_chart **out, const char *name, bc_err *err)
{
	*out = NULL;
	bc_chart *c = bc__calloc(1, sizeof *c);
	if (!c || !(c->name = bc__strdup(name ? name : "")) || !(c->source = bc__strdup("")) ||
	    !(c->licence = bc__strdup(""))) {
		bc_chart_free(c);
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	}
	*out = c;
	return BC_OK;
}

void bc_chart_free(bc_chart *c)
{
	if (!c)
		return;
	for (size_t i = 0; i < c->n; i++) {
		free((char *)c->iv[i].name);
		free((char *)c->iv[i].iri);
		free((char *)c->iv[i].colour_source);
	}
	for (size_t i = 0; i < c->nlab; i++) {
		free((char *)c->lab[i].text);
		free((char *)c->lab[i].lang);
	}
	free(c->iv);
	free(c->lab);
	free(c->name);
	free(c->source);
	free(c->licence);
	free(c);
}

int bc_chart_add_interval(bc_chart *c, const bc_interval *iv, bc_err *err)
{
	if (!iv->name || !*iv->name)
		return bc_err_set(err, BC_EINVALID, "chart %s: interval without a name", c->name);
	if (!(iv->older_ma >= iv->younger_ma))
		return bc_err_set(err, BC_EINVALID, "chart %s: interval %s: older bound %g Ma is younger than younger bound %g Ma",
			c->name, iv->name, iv->older_ma, iv->younger_ma);
	if (iv->parent >= (int)c->n)
		return bc_err_set(err, BC_EINVALID, "chart %s: interval %s: parent index %d out of range", c->name, iv->name, iv->parent);
	bc_interval *p = bc__grow(c->iv, c->n, &c->cap, sizeof *p, 64);
	if (!p)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	c->iv = p;
	bc_interval copy = *iv;
	copy.name = bc__strdup(iv->name);
	copy.iri = bc__strdup(iv->iri ? iv->iri : "");
	copy.colour_source = bc__strdup(iv->colour_source ? iv->colour_source : "");
	if (!copy.name || !copy.iri || !copy.colour_source) {
		free((char *)copy.name);
		free((char *)copy.iri);
		free((char *)copy.colour_source);
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	}
	c->iv[c->n] = copy;
	return (int)c->n++;
}

int bc_chart_add_label(bc_chart *c, int interval, const char *text, const char *lang, bc_err *err)
{
	if (interval < 0 || (size_t)interval >= c->n)
		return bc_err_set(err, BC_EINVALID, "chart %s: label '%s' for unknown interval %d", c->name, text, interval);
	bc_label *p = bc__grow(c->lab, c->nlab, &c->caplab, sizeof *p, 256);
	if (!p)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	c->lab = p;
	bc_label l = {interval, bc__strdup(text), bc__strdup(lang ? lang : "")};
	if (!l.text || !l.lang) {
		free((char *)l.text);
		free((char *)l.lang);
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	}
	c->lab[c->nlab++] = l;
	return BC_OK;
}

int bc_chart_set_source(bc_chart *c, const char *source, const char *licence, bc_err *err)
{
	char *s = bc__strdup(source ? source : ""), *l = bc__strdup(licence ? licence : "");
	if (!s || !l) {
		free(s);
		free(l);
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	}
	free(c->source);
	free(c->licence);
	c->source = s;
	c->licence = l;
	return BC_OK;
}

const char *bc_chart_name(const bc_chart *c) { return c->name; }
const char *bc_chart_source(const bc_chart *c) { return c->source; }
const char *bc_chart_licence(const bc_chart *c) { return c->licence; }
size_t bc_chart_count(const bc_chart *c) { return c->n; }
const bc_interval *bc_chart_interval(const bc_chart *c, size_t i) { return i < c->n ? &c->iv[i] : NULL; }
size_t bc_chart_label_count(const bc_chart *c) { return c->nlab; }
const bc_label *bc_chart_label(const bc_chart *c, size_t i) { return i < c->nlab ? &c->lab[i] : NULL; }

int bc_chart_find(const bc_chart *c, const char *name)
{
	for (size_t i = 0; i < c->n; i++)
		if (strcmp(c->iv[i].name, name) == 0)
			return (int)i;
	return -1;
}

int bc_chart_copy_colours(bc_chart *dst, const bc_chart *src, const char *colour_source, bc_err *err)
{
	int copied = 0;
	for (size_t i = 0; i < dst->n; i++) {
		bc_interval *d = &dst->iv[i];
		if (d->has_colour)
			continue;
		const bc_interval *s = NULL;
		for (size_t j = 0; j < src->n && !s && d->iri[0]; j++)
			if (src->iv[j].has_colour && strcmp(src->iv[j].iri, d->iri) == 0)
				s = &src->iv[j];
		int k = s ? -1 : bc_chart_find(src, d->name);
		if (k >= 0 && src->iv[k].has_colour)
			s = &src->iv[k];
		if (!s)
			continue;
		char *cs = bc__strdup(colour_source ? colour_source : "");
		if (!cs)
			return bc_err_set(err, BC_ENOMEM, "out of memory");
		free((char *)d->colour_source);
		d->colour_source = cs;
		d->colour = s->colour;
		d->has_colour = 1;
		copied++;
	}
	return copied;
}
