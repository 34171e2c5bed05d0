/*
 * age_chart.c - the hand-made chart of age_chart.h.
 */
#include "age_chart.h"

#include <string.h>

static int add(bc_chart *c, const char *name, const char *iri, bc_rank rank, int parent, double o, double y)
{
	bc_interval iv = {0};
	iv.name = name;
	iv.iri = iri;
	iv.rank = rank;
	iv.parent = parent;
	iv.older_ma = o;
	iv.younger_ma = y;
	return bc_chart_add_interval(c, &iv, NULL);
}

#define ICS "http://resource.geosciml.org/classifier/ics/ischart/"

bc_chart *age_test_chart(void)
{
	bc_chart *c = NULL;
	if (bc_chart_new(&c, "test-chart", NULL))
		return NULL;
	int phan = add(c, "Phanerozoic", ICS "Phanerozoic", BC_RANK_EON, -1, 538.8, 0);
	int paleoz = add(c, "Paleozoic", ICS "Paleozoic", BC_RANK_ERA, phan, 538.8, 251.902);
	int meso = add(c, "Mesozoic", ICS "Mesozoic", BC_RANK_ERA, phan, 251.902, 66.0);
	int ceno = add(c, "Cenozoic", ICS "Cenozoic", BC_RANK_ERA, phan, 66.0, 0);
	int perm = add(c, "Permian", ICS "Permian", BC_RANK_PERIOD, paleoz, 298.9, 251.902);
	add(c, "Lopingian", ICS "Lopingian", BC_RANK_EPOCH, perm, 259.51, 251.902);
	int jur = add(c, "Jurassic", ICS "Jurassic", BC_RANK_PERIOD, meso, 201.4, 143.1);
	add(c, "Early Jurassic", ICS "LowerJurassic", BC_RANK_EPOCH, jur, 201.4, 174.7);
	int mj = add(c, "Middle Jurassic", ICS "MiddleJurassic", BC_RANK_EPOCH, jur, 174.7, 161.5);
	add(c, "Aalenian", ICS "Aalenian", BC_RANK_AGE, mj, 174.7, 170.9);
	add(c, "Late Jurassic", ICS "UpperJurassic", BC_RANK_EPOCH, jur, 161.5, 143.1);
	int cret = add(c, "Cretaceous", ICS "Cretaceous", BC_RANK_PERIOD, meso, 143.1, 66.0);
	int lk = add(c, "Lower Cretaceous", ICS "LowerCretaceous", BC_RANK_EPOCH, cret, 143.1, 100.5);
	int uk = add(c, "Upper Cretaceous", ICS "UpperCretaceous", BC_RANK_EPOCH, cret, 100.5, 66.0);
	add(c, "Aptian", ICS "Aptian", BC_RANK_AGE, lk, 121.4, 113.2);
	add(c, "Albian", ICS "Albian", BC_RANK_AGE, lk, 113.2, 100.5);
	add(c, "Cenomanian", ICS "Cenomanian", BC_RANK_AGE, uk, 100.5, 93.9);
	add(c, "Turonian", ICS "Turonian", BC_RANK_AGE, uk, 93.9, 89.8);
	add(c, "Coniacian", ICS "Coniacian", BC_RANK_AGE, uk, 89.8, 86.3);
	add(c, "Santonian", ICS "Santonian", BC_RANK_AGE, uk, 86.3, 83.6);
	int camp = add(c, "Campanian", ICS "Campanian", BC_RANK_AGE, uk, 83.6, 72.2);
	int maas = add(c, "Maastrichtian", ICS "Maastrichtian", BC_RANK_AGE, uk, 72.2, 66.0);
	int pg = add(c, "Paleogene", ICS "Paleogene", BC_RANK_PERIOD, ceno, 66.0, 23.04);
	int pc = add(c, "Paleocene", ICS "Paleocene", BC_RANK_EPOCH, pg, 66.0, 56.0);
	add(c, "Danian", ICS "Danian", BC_RANK_AGE, pc, 66.0, 61.6);
	int eo = add(c, "Eocene", ICS "Eocene", BC_RANK_EPOCH, pg, 56.0, 33.9);
	add(c, "Ypresian", ICS "Ypresian", BC_RANK_AGE, eo, 56.0, 48.07);
	int ng = add(c, "Neogene", ICS "Neogene", BC_RANK_PERIOD, ceno, 23.04, 2.58);
	(void)ng;
	int q = add(c, "Quaternary", ICS "Quaternary", BC_RANK_PERIOD, ceno, 2.58, 0);
	int ple = add(c, "Pleistocene", ICS "Pleistocene", BC_RANK_EPOCH, q, 2.58, 0.0117);
	add(c, "Upper Pleistocene", ICS "UpperPleistocene", BC_RANK_AGE, ple, 0.129, 0.0117);
	if (maas < 0 || camp < 0)
		goto fail;
	static const char *const maas_labels[][2] = {
		{"fr", "Maastrichtien"}, {"de", "Maastrichtium"}, {"pt", "Maastrichtiano"}, {"es", "Maastrichtiense"},
		{"ru", "\xd0\x9c\xd0\xb0\xd0\xb0\xd1\x81\xd1\x82\xd1\x80\xd0\xb8\xd1\x85\xd1\x82\xd1\x81\xd0\xba\xd0\xb8\xd0\xb9"},
		{"en", "Maastrichtian"},
	};
	for (size_t i = 0; i < sizeof maas_labels / sizeof maas_labels[0]; i++)
		if (bc_chart_add_label(c, maas, maas_labels[i][1], maas_labels[i][0], NULL))
			goto fail;
	if (bc_chart_add_label(c, camp, "Campanien", "fr", NULL) || bc_chart_add_label(c, camp, "Campaniano", "es", NULL) ||
	    bc_chart_add_label(c, cret, "Kreide", "de", NULL) || bc_chart_add_label(c, cret, "Cr\xc3\xa9tac\xc3\xa9", "fr", NULL) ||
	    bc_chart_add_label(c, cret, "Cret\xc3\xa1\x63ico", "es", NULL))
		goto fail;
	return c;
fail:
	bc_chart_free(c);
	return NULL;
}
