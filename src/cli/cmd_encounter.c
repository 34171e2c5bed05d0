/*
 * cmd_encounter.c - bathychron encounter DB: injury incidence and the mean
 * interval between injuring encounters per depth zone, site or age bin.
 */
#include "cli.h"

#include <stdlib.h>
#include <string.h>

static const char help[] =
	"usage: bathychron encounter DB [--by zone|site|bin] [--split METRES | --zones A,B,...]\n"
	"                           [--taxon NAME] [--model steady-state|poisson]\n"
	"                           [--draws N] [--seed S] [--level L] [--shared-duration]\n"
	"                           [--format csv|tsv|md|latex|json] [-o FILE]\n"
	"                           [--figure FILE.svg|FILE.pdf|FILE.png [--width MM]]\n\n"
	"From samples stored by 'bathychron injuries import', per group: the prevalence\n"
	"of regeneration (Wilson interval); the injury incidence from the steady-state\n"
	"relation P/(1-P) = I x D (Freeman & Hutchison 1980), or with --model poisson\n"
	"from P = 1 - exp(-lambda x D); the mean interval between injuring encounters\n"
	"1/I in days; and the ratio of each group's rate to the shallowest group's.\n"
	"Per individual, and per arm where arms were counted. Rate intervals come from\n"
	"a seeded Monte Carlo over the prevalence and the duration range.\n\n"
	"  --by zone|site|bin   one row per depth zone (default), per site and zone, or\n"
	"                       per resolved age (Recent apart) and zone\n"
	"  --split METRES       two zones at METRES (default 200)\n"
	"  --zones A,B,...      zones at several increasing boundaries (metres)\n"
	"                       A depth range [min, max] is above a boundary S when\n"
	"                       max <= S and min < S, below it when min >= S; samples\n"
	"                       crossing a boundary are left out and counted.\n"
	"  --taxon NAME         only this taxon (or genus)\n"
	"  --model M            steady-state (default) or poisson\n"
	"  --draws N            Monte Carlo draws (default 10000; 0 = no rate intervals)\n"
	"  --seed S             Monte Carlo seed (default 1); the same seed gives the same output\n"
	"  --level L            confidence level (default 0.95)\n"
	"  --shared-duration    one duration draw for all groups (the same regeneration\n"
	"                       time everywhere; it then cancels in the ratios)\n"
	"  --format F           csv (default), tsv, md, latex, json\n"
	"  -o FILE              write to FILE instead of standard output\n"
	"  --figure FILE        also draw the interval between encounters per row (log\n"
	"                       scale, with intervals) as SVG, PDF or PNG by extension\n"
	"  --width MM           figure width in mm: 85 (one column, default) or 180 (two),\n"
	"                       as for 'bathychron plot'\n\n"
	"Cautions (also in the output's stamp): steady state assumed; regenerates\n"
	"recognisable for the whole duration; every regenerate counted as a survived\n"
	"predatory attack; animals damaged by collecting gear must be excluded before import.\n";

static int parse_zones(const char *s, double *out, size_t max, size_t *n)
{
	char buf[512];
	if (strlen(s) >= sizeof buf)
		return -1;
	strcpy(buf, s);
	*n = 0;
	for (char *save = NULL, *tok = strtok_r(buf, ",", &save); tok; tok = strtok_r(NULL, ",", &save)) {
		if (*n >= max || cli_parse_double(tok, &out[*n]) != 0)
			return -1;
		(*n)++;
	}
	return *n ? 0 : -1;
}

int cmd_encounter(int argc, char **argv)
{
	bc_encounter_options opts = BC_ENCOUNTER_OPTIONS_INIT;
	bc_format format = BC_FORMAT_CSV;
	const char *db_path = NULL, *out_path = NULL, *figure = NULL;
	double width_mm = 85;
	double zones[32];
	size_t n_zones = 0;
	int have_split = 0, have_zones = 0;
	for (int i = 1; i < argc; i++) {
		const char *a = argv[i];
		const char *v = i + 1 < argc ? argv[i + 1] : NULL;
		if (strcmp(a, "--help") == 0 || strcmp(a, "-h") == 0) {
			fputs(help, stdout);
			return CLI_OK;
		}
		if (a[0] != '-') {
			if (db_path)
				return cli_usage("encounter", "expected one database, got '%s' too", a);
			db_path = a;
			continue;
		}
		if (strcmp(a, "--shared-duration") == 0) {
			opts.mc.shared_duration = 1;
			continue;
		}
		if (!v)
			return cli_usage("encounter", "%s needs a value", a);
		i++;
		if (strcmp(a, "--by") == 0) {
			if (bc_encounter_by_parse(&opts.by, v))
				return cli_usage("encounter", "--by: '%s' is not zone, site or bin", v);
		} else if (strcmp(a, "--split") == 0) {
			if (cli_parse_double(v, &zones[0]) || !(zones[0] > 0))
				return cli_usage("encounter", "--split: '%s' is not a positive depth in metres", v);
			n_zones = 1;
			have_split = 1;
		} else if (strcmp(a, "--zones") == 0) {
			if (parse_zones(v, zones, 32, &n_zones))
				return cli_usage("encounter", "--zones: '%s' is not a list of depths in metres such as 200,1000", v);
			have_zones = 1;
		} else if (strcmp(a, "--taxon") == 0) {
			opts.taxon = v;
		} else if (strcmp(a, "--model") == 0) {
			if (bc_incidence_model_parse(&opts.mc.model, v))
				return cli_usage("encounter", "--model: '%s' is not steady-state or poisson", v);
		} else if (strcmp(a, "--draws") == 0) {
			long n;
			if (cli_parse_long(v, &n) || n > 10000000)
				return cli_usage("encounter", "--draws: '%s' is not a count up to 10000000", v);
			opts.mc.draws = n;
		} else if (strcmp(a, "--seed") == 0) {
			long s;
			if (cli_parse_long(v, &s))
				return cli_usage("encounter", "--seed: '%s' is not a non-negative integer", v);
			opts.mc.seed = (uint64_t)s;
		} else if (strcmp(a, "--level") == 0) {
			if (cli_parse_double(v, &opts.mc.level) || !(opts.mc.level > 0 && opts.mc.level < 1))
				return cli_usage("encounter", "--level: '%s' is not between 0 and 1", v);
		} else if (strcmp(a, "--format") == 0) {
			if (bc_format_parse(&format, v))
				return cli_usage("encounter", "--format: '%s' is not csv, tsv, md, latex or json", v);
		} else if (strcmp(a, "--figure") == 0) {
			figure = v;
		} else if (strcmp(a, "--width") == 0) {
			if (cli_parse_double(v, &width_mm) || width_mm < 40 || width_mm > 400)
				return cli_usage("encounter", "--width: '%s' is not a width between 40 and 400 mm", v);
		} else if (strcmp(a, "-o") == 0 || strcmp(a, "--output") == 0) {
			out_path = v;
		} else {
			return cli_usage("encounter", "unknown option '%s'", a);
		}
	}
	if (!db_path)
		return cli_usage("encounter", "expected the database file");
	bc_err err = {0};
	if (figure) {
		bc_plot_format pf;
		if (bc_plot_format_from_path(&pf, figure, &err) != BC_OK)
			return cli_usage("encounter", "--figure: %s", err.msg);
	}
	if (have_split && have_zones)
		return cli_usage("encounter", "give --split or --zones, not both");
	if (n_zones) {
		opts.zones = zones;
		opts.n_zones = n_zones;
	}
	bc_db *db = NULL;
	bc_encounter_report *rep = NULL;
	FILE *f = stdout;
	int status = CLI_OK;
	if (bc_db_open(&db, db_path, &err) != BC_OK)
		return cli_fail(&err);
	if (bc_encounter_report_build(&rep, db, &opts, &err) != BC_OK) {
		status = err.code == BC_ENOTFOUND ? CLI_DATA : cli_exit_for(err.code);
		cli_error("%s", err.msg);
		goto done;
	}
	if (out_path && !(f = fopen(out_path, "w"))) {
		cli_error("%s: cannot write", out_path);
		status = CLI_ENV;
		goto done;
	}
	if (bc_encounter_report_write(rep, f, format, &err) != BC_OK)
		status = cli_fail(&err);
	if (out_path && fclose(f) != 0 && status == CLI_OK) {
		cli_error("%s: writing failed", out_path);
		status = CLI_ENV;
	}
	if (status == CLI_OK && figure && bc_encounter_plot(rep, figure, width_mm, &err) != BC_OK)
		status = cli_fail(&err);
	if (status == CLI_OK && bc_encounter_report_straddling(rep) > 0)
		cli_error("note: %ld samples cross a zone boundary and were left out", bc_encounter_report_straddling(rep));
done:
	if (figure)
		bc_plot_cleanup();
	bc_encounter_report_free(rep);
	bc_db_close(db);
	return status;
}
