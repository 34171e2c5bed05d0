/*
 * cmd_resolve.c - `bathychron resolve`: free-text ages to chart intervals
 * and numbers, one row per input. Thin: all matching is in the library.
 */
#include "cli.h"

#include <math.h>
#include <stdlib.h>
#include <string.h>

static const char resolve_help[] =
	"usage: bathychron resolve [--db DB] [--timescale NAME] [--aliases FILE]...\n"
	"                          [--format tsv|csv|json] [TEXT ...]\n"
	"\n"
	"Resolves free-text ages (\"upper Campanian\", \"Maastrichtien\", \"Senonian\",\n"
	"\"83-72 Ma\") against a chronostratigraphic chart. With no TEXT, reads one text\n"
	"per line from standard input. Prints a header and one row per input:\n"
	"  input, status, from, to, older_ma, younger_ma, note, chart, uncertain\n"
	"status: exact (a chart name or label in any language), alias (obsolete,\n"
	"regional or informal name from the alias table), range (two ages),\n"
	"qualified (early/middle/late = equal thirds of the interval, basal/uppermost =\n"
	"its first/last tenth: a convention, named in the note), numeric (numbers in\n"
	"Ma, ka or Ga), unknown (nearest chart names in the note).\n"
	"uncertain is 1 when the text carried '?', 'cf.', 'aff.', 'probably', 'c.'.\n"
	"Qualified and regional ages are conventions and correlations, not\n"
	"measurements: check the note before using the numbers.\n"
	"\n"
	"Options:\n"
	"  --db DB            use the charts stored in database DB (default chart\n"
	"                     of the database unless --timescale is given)\n"
	"  --timescale NAME   the chart to use (built-in: ics-2024-12, ics-2020)\n"
	"  --aliases FILE     extra alias table (TSV: alias, older, younger, note,\n"
	"                     source); may repeat; later rows win\n"
	"  --format F         tsv (default), csv or json\n"
	"  --help             this text\n"
	"\n"
	"Exit status: 0 all resolved, 1 some were unknown, 2 usage, 3 environment.\n";

/* Writes a TSV field: tabs and line breaks become spaces. */
/* A cell starting with = + - @ tab or CR gets a leading ' so a
 * spreadsheet shows it as text instead of running it (OWASP "CSV
 * Injection"); the input column echoes whatever text was given. */
static int formula_like(const char *s)
{
	return s[0] && strchr("=+-@\t\r", s[0]) != NULL;
}

static void put_tsv(const char *s)
{
	if (formula_like(s))
		putchar('\'');
	for (; *s; s++)
		putchar(*s == '\t' || *s == '\n' || *s == '\r' ? ' ' : *s);
}

/* Writes a CSV field, quoted when it must be (RFC 4180). */
static void put_csv(const char *s)
{
	if (!strpbrk(s, ",\"\r\n")) {
		if (formula_like(s))
			putchar('\'');
		fputs(s, stdout);
		return;
	}
	putchar('"');
	if (formula_like(s))
		putchar('\'');
	for (; *s; s++) {
		if (*s == '"')
			putchar('"');
		putchar(*s);
	}
	putchar('"');
}

static void put_json(const char *s)
{
	putchar('"');
	for (const unsigned char *p = (const unsigned char *)s; *p; p++) {
		if (*p == '"' || *p == '\\')
			printf("\\%c", *p);
		else if (*p == '\n')
			fputs("\\n", stdout);
		else if (*p == '\t')
			fputs("\\t", stdout);
		else if (*p < 0x20)
			printf("\\u%04x", *p);
		else
			putchar(*p);
	}
	putchar('"');
}

/* Replaces bytes that are not valid UTF-8 by '?' so that JSON output stays valid. */
static void utf8_sanitise(const char *in, char *out, size_t cap)
{
	size_t o = 0;
	const unsigned char *p = (const unsigned char *)in;
	while (*p && o + 5 < cap) {
		size_t n = *p < 0x80 ? 1 : (*p >> 5) == 6 ? 2 : (*p >> 4) == 14 ? 3 : (*p >> 3) == 30 ? 4 : 0;
		size_t k = 1;
		while (n && k < n && (p[k] & 0xc0) == 0x80)
			k++;
		if (!n || k < n) {
			out[o++] = '?';
			p++;
			continue;
		}
		memcpy(out + o, p, n);
		o += n;
		p += n;
	}
	out[o] = '\0';
}

static const char *const columns[] = {"input", "status", "from", "to", "older_ma", "younger_ma", "note", "chart", "uncertain"};
enum { NCOL = sizeof columns / sizeof columns[0] };

typedef struct out_state {
	bc_format fmt;
	int rows;
} out_state;

static void row(out_state *st, const char *input, const bc_age *a, const char *chart)
{
	char older[40] = "", younger[40] = "", inbuf[4096];
	int known = a->status != BC_AGE_UNKNOWN && !isnan(a->older_ma);
	if (known) {
		snprintf(older, sizeof older, "%.10g", a->older_ma);
		snprintf(younger, sizeof younger, "%.10g", a->younger_ma);
	}
	const char *v[NCOL] = {input, bc_age_status_name(a->status), a->from, a->to, older, younger, a->note, chart,
		a->uncertain ? "1" : "0"};
	if (st->fmt == BC_FORMAT_JSON) {
		utf8_sanitise(input, inbuf, sizeof inbuf);
		v[0] = inbuf;
		fputs(st->rows ? ",\n  {" : "[\n  {", stdout);
		for (int i = 0; i < NCOL; i++) {
			printf("%s\"%s\": ", i ? ", " : "", columns[i]);
			if (i == 4 || i == 5)
				fputs(known ? v[i] : "null", stdout);
			else if (i == 8)
				fputs(a->uncertain ? "true" : "false", stdout);
			else
				put_json(v[i]);
		}
		putchar('}');
	} else {
		for (int i = 0; i < NCOL; i++) {
			if (i)
				putchar(st->fmt == BC_FORMAT_CSV ? ',' : '\t');
			if (st->fmt == BC_FORMAT_CSV)
				put_csv(v[i]);
			else
				put_tsv(v[i]);
		}
		putchar('\n');
	}
	st->rows++;
}

static void header(const out_state *st)
{
	if (st->fmt == BC_FORMAT_JSON)
		return;
	for (int i = 0; i < NCOL; i++)
		printf("%s%s", i ? (st->fmt == BC_FORMAT_CSV ? "," : "\t") : "", columns[i]);
	putchar('\n');
}

int cmd_resolve(int argc, char **argv)
{
	const char *dbpath = NULL, *tsname = NULL;
	const char **aliases = calloc((size_t)argc + 1, sizeof *aliases);
	const char **texts = calloc((size_t)argc + 1, sizeof *texts);
	int naliases = 0, ntexts = 0, status = CLI_OK, unknown = 0;
	out_state st = {BC_FORMAT_TSV, 0};
	bc_db *db = NULL;
	bc_chart *chart = NULL;
	bc_resolver *r = NULL;
	bc_err err = {0};
	char *line = NULL;
	size_t cap = 0;
	if (!aliases || !texts) {
		cli_error("out of memory");
		status = CLI_ENV;
		goto done;
	}
	for (int i = 1; i < argc; i++) {
		const char *a = argv[i];
		if (strcmp(a, "--help") == 0 || strcmp(a, "-h") == 0) {
			fputs(resolve_help, stdout);
			goto done;
		} else if (strcmp(a, "--") == 0) {
			while (++i < argc)
				texts[ntexts++] = argv[i];
		} else if (strcmp(a, "--db") == 0 || strcmp(a, "--timescale") == 0 || strcmp(a, "--aliases") == 0 ||
			   strcmp(a, "--format") == 0) {
			if (i + 1 >= argc) {
				status = cli_usage("resolve", "%s needs a value", a);
				goto done;
			}
			const char *v = argv[++i];
			if (a[2] == 'd')
				dbpath = v;
			else if (a[2] == 't')
				tsname = v;
			else if (a[2] == 'a')
				aliases[naliases++] = v;
			else if (bc_format_parse(&st.fmt, v) != BC_OK ||
				 (st.fmt != BC_FORMAT_TSV && st.fmt != BC_FORMAT_CSV && st.fmt != BC_FORMAT_JSON)) {
				status = cli_usage("resolve", "--format must be tsv, csv or json, not '%s'", v);
				goto done;
			}
		} else if (a[0] == '-' && a[1] == '-') {
			status = cli_usage("resolve", "unknown option '%s'", a);
			goto done;
		} else {
			texts[ntexts++] = a;
		}
	}
	int rc;
	if (dbpath && (rc = bc_db_open(&db, dbpath, &err)) != BC_OK) {
		status = cli_fail(&err);
		goto done;
	}
	rc = db ? bc_timescale_get(&chart, db, tsname, &err) : bc_chart_builtin(&chart, tsname, &err);
	if (rc != BC_OK) {
		/* A chart name that does not exist is a mistake on the command line. */
		cli_error("%s", err.msg[0] ? err.msg : bc_strerror(rc));
		status = rc == BC_ENOTFOUND && tsname ? CLI_USAGE : cli_exit_for(rc);
		goto done;
	}
	if ((rc = bc_resolver_new(&r, chart, &err)) != BC_OK) {
		status = cli_fail(&err);
		goto done;
	}
	for (int i = 0; i < naliases; i++)
		if ((rc = bc_resolver_load_aliases(r, aliases[i], &err)) != BC_OK) {
			cli_error("%s", err.msg);
			status = rc == BC_EINVALID ? CLI_DATA : CLI_ENV;
			goto done;
		}
	const char *cname = bc_chart_name(chart);
	header(&st);
	bc_age a;
	if (ntexts) {
		for (int i = 0; i < ntexts; i++) {
			bc_age_resolve(r, texts[i], &a);
			unknown += a.status == BC_AGE_UNKNOWN;
			row(&st, texts[i], &a, cname);
		}
	} else {
		ssize_t n;
		while ((n = getline(&line, &cap, stdin)) >= 0) {
			while (n > 0 && (line[n - 1] == '\n' || line[n - 1] == '\r'))
				line[--n] = '\0';
			bc_age_resolve(r, line, &a);
			unknown += a.status == BC_AGE_UNKNOWN;
			row(&st, line, &a, cname);
		}
		if (ferror(stdin)) {
			cli_error("reading standard input failed");
			status = CLI_ENV;
			goto done;
		}
	}
	if (st.fmt == BC_FORMAT_JSON)
		fputs(st.rows ? "\n]\n" : "[]\n", stdout);
	if (unknown) {
		cli_error("%d of %d texts not resolved (status unknown)", unknown, st.rows);
		status = CLI_DATA;
	}
done:
	free(line);
	bc_resolver_free(r);
	bc_chart_free(chart);
	bc_db_close(db);
	free(aliases);
	free(texts);
	return status;
}
