/*
 * dwca_write.c - writes a Darwin Core Archive (zip or folder): meta.xml,
 * eml.xml, an occurrence core with Darwin Core terms and the project's own
 * terms under BC_DWCA_NS, and the chronometric ages as a ChronometricAge
 * extension, so that `import` reads it back to the same values.
 */
#include "db.h"
#include "dwca.h"

#include <errno.h>
#include <stdlib.h>
#include <string.h>
#include <strings.h>
#include <sys/stat.h>
#include <zip.h>

#define NS_TEXT "http://rs.tdwg.org/dwc/text/"
#define NS_DWC "http://rs.tdwg.org/dwc/terms/"
#define NS_CHRONO "http://rs.tdwg.org/chrono/terms/"

static int xml_escape(bc_buf *b, const char *s)
{
	int rc = 0;
	for (; *s && !rc; s++) {
		switch (*s) {
		case '&': rc = bc__buf_puts(b, "&amp;"); break;
		case '<': rc = bc__buf_puts(b, "&lt;"); break;
		case '>': rc = bc__buf_puts(b, "&gt;"); break;
		case '"': rc = bc__buf_puts(b, "&quot;"); break;
		case '\'': rc = bc__buf_puts(b, "&apos;"); break;
		default: rc = bc__buf_append(b, s, 1);
		}
	}
	return rc;
}

/* One CSV cell: quoted when it holds the delimiter, a quote or a line end. */
static int csv_cell(bc_buf *b, const char *s)
{
	if (!s)
		s = "";
	if (!strpbrk(s, ",\"\r\n"))
		return bc__buf_puts(b, s);
	int rc = bc__buf_puts(b, "\"");
	for (; *s && !rc; s++)
		rc = *s == '"' ? bc__buf_puts(b, "\"\"") : bc__buf_append(b, s, 1);
	return rc || bc__buf_puts(b, "\"");
}

#define META_ATTRS "encoding=\"UTF-8\" fieldsTerminatedBy=\",\" linesTerminatedBy=\"\\n\" fieldsEnclosedBy=\"&quot;\" ignoreHeaderLines=\"1\""

static int write_file(const char *dir, zip_t *z, const char *name, bc_buf *content, bc_err *err)
{
	if (z) {
		zip_source_t *src = zip_source_buffer(z, content->data ? content->data : "", content->len, 0);
		if (!src || zip_file_add(z, name, src, ZIP_FL_ENC_UTF_8) < 0) {
			zip_source_free(src);
			return bc_err_set(err, BC_EIO, "writing %s into the zip: %s", name, zip_strerror(z));
		}
		return BC_OK;
	}
	bc_buf p = {0};
	if (bc__buf_printf(&p, "%s/%s", dir, name))
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	FILE *fp = fopen(p.data, "wx");
	int rc = BC_OK;
	if (!fp || (content->len && fwrite(content->data, 1, content->len, fp) != content->len))
		rc = bc_err_set(err, BC_EIO, "%s: %s", p.data, strerror(errno));
	if (fp && fclose(fp) != 0 && !rc)
		rc = bc_err_set(err, BC_EIO, "%s: %s", p.data, strerror(errno));
	bc__buf_free(&p);
	return rc;
}

static int default_eml(bc_buf *b)
{
	return bc__buf_puts(b,
		"<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
		"<eml:eml xmlns:eml=\"eml://ecoinformatics.org/eml-2.1.1\" packageId=\"bathychron-export\" system=\"bathychron\">\n"
		"  <dataset>\n"
		"    <title>Fossil occurrences exported by bathychron " BC_VERSION "</title>\n"
		"    <creator><organizationName>bathychron user</organizationName></creator>\n"
		"    <contact><organizationName>bathychron user</organizationName></contact>\n"
		"    <abstract><para>Occurrences with ages, palaeodepths and preservation. Palaeodepths "
		"(minimumPaleodepthInMeters, maximumPaleodepthInMeters in " BC_DWCA_NS ") are interpretations "
		"from the literature or from depositional environment terms, not measurements. "
		"Chronometric ages are in Ma.</para></abstract>\n"
		"  </dataset>\n"
		"</eml:eml>\n");
}

int bc_dwca__write(const char *path, const char *const *columns, size_t ncolumns,
		   const char *const *rows, size_t nrows, const char *eml, bc_err *err)
{
	bc_buf core = {0}, chrono = {0}, meta = {0}, emlb = {0}, term = {0};
	zip_t *z = NULL;
	int rc = BC_OK;
	size_t n = strlen(path);
	int zip = n > 4 && strcasecmp(path + n - 4, ".zip") == 0;
	int ce = -1, cl = -1, has_basis = 0;
	for (size_t c = 0; c < ncolumns; c++) {
		if (strcmp(columns[c], "earliestChronometricAge") == 0)
			ce = (int)c;
		else if (strcmp(columns[c], "latestChronometricAge") == 0)
			cl = (int)c;
		else if (strcmp(columns[c], "basisOfRecord") == 0)
			has_basis = 1;
	}
	struct stat sb;
	if (stat(path, &sb) == 0)
		return bc_err_set(err, BC_EEXISTS, "%s: already exists; not overwritten (remove it or choose another name)", path);
	/* meta.xml */
	int e = bc__buf_puts(&meta, "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n"
		"<archive xmlns=\"" NS_TEXT "\" metadata=\"eml.xml\">\n"
		"  <core rowType=\"" NS_DWC "Occurrence\" " META_ATTRS ">\n"
		"    <files><location>occurrence.txt</location></files>\n"
		"    <id index=\"0\"/>\n");
	e |= bc__buf_puts(&core, "id");
	size_t k = 1;
	for (size_t c = 0; c < ncolumns; c++) {
		if ((int)c == ce || (int)c == cl)
			continue;
		term.len = 0;
		e |= bc_dwca__term_iri(&term, columns[c]) || bc__buf_append(&term, "", 1);
		e |= bc__buf_printf(&meta, "    <field index=\"%zu\" term=\"", k++);
		e |= xml_escape(&meta, term.data ? term.data : "");
		e |= bc__buf_puts(&meta, "\"/>\n");
		e |= bc__buf_puts(&core, ",");
		e |= csv_cell(&core, columns[c]);
	}
	if (!has_basis)
		e |= bc__buf_puts(&meta, "    <field term=\"" NS_DWC "basisOfRecord\" default=\"FossilSpecimen\"/>\n");
	e |= bc__buf_puts(&meta, "  </core>\n");
	e |= bc__buf_puts(&core, "\n");
	if (ce >= 0 || cl >= 0) {
		e |= bc__buf_puts(&meta,
			"  <extension rowType=\"" NS_CHRONO "ChronometricAge\" " META_ATTRS ">\n"
			"    <files><location>chronometricage.txt</location></files>\n"
			"    <coreid index=\"0\"/>\n"
			"    <field index=\"1\" term=\"" NS_CHRONO "earliestChronometricAge\"/>\n"
			"    <field index=\"2\" term=\"" NS_CHRONO "earliestChronometricAgeReferenceSystem\"/>\n"
			"    <field index=\"3\" term=\"" NS_CHRONO "latestChronometricAge\"/>\n"
			"    <field index=\"4\" term=\"" NS_CHRONO "latestChronometricAgeReferenceSystem\"/>\n"
			"  </extension>\n");
		e |= bc__buf_puts(&chrono, "coreid,earliestChronometricAge,earliestChronometricAgeReferenceSystem,"
			"latestChronometricAge,latestChronometricAgeReferenceSystem\n");
	}
	e |= bc__buf_puts(&meta, "</archive>\n");
	for (size_t r = 0; r < nrows && !e; r++) {
		const char *const *row = rows + r * ncolumns;
		e |= bc__buf_printf(&core, "%zu", r + 1);
		for (size_t c = 0; c < ncolumns; c++) {
			if ((int)c == ce || (int)c == cl)
				continue;
			e |= bc__buf_puts(&core, ",");
			e |= csv_cell(&core, row[c]);
		}
		e |= bc__buf_puts(&core, "\n");
		const char *ev = ce >= 0 && row[ce] ? row[ce] : "", *lv = cl >= 0 && row[cl] ? row[cl] : "";
		if (*ev || *lv) {
			e |= bc__buf_printf(&chrono, "%zu,", r + 1);
			e |= csv_cell(&chrono, ev);
			e |= bc__buf_puts(&chrono, *ev ? ",Ma," : ",,");
			e |= csv_cell(&chrono, lv);
			e |= bc__buf_puts(&chrono, *lv ? ",Ma\n" : ",\n");
		}
	}
	e |= eml && *eml ? bc__buf_puts(&emlb, eml) : default_eml(&emlb);
	if (e) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		goto done;
	}
	if (zip) {
		int zerr = 0;
		z = zip_open(path, ZIP_CREATE | ZIP_EXCL, &zerr);
		if (!z) {
			zip_error_t ze;
			zip_error_init_with_code(&ze, zerr);
			rc = bc_err_set(err, BC_EIO, "%s: cannot create the zip: %s", path, zip_error_strerror(&ze));
			zip_error_fini(&ze);
			goto done;
		}
	} else {
		if (mkdir(path, 0777) != 0) {
			rc = bc_err_set(err, BC_EIO, "%s: cannot create the folder: %s", path, strerror(errno));
			goto done;
		}
	}
	if ((rc = write_file(path, z, "meta.xml", &meta, err)) ||
		(rc = write_file(path, z, "eml.xml", &emlb, err)) ||
		(rc = write_file(path, z, "occurrence.txt", &core, err)) ||
		(chrono.len && (rc = write_file(path, z, "chronometricage.txt", &chrono, err))))
		goto done;
	if (z) {
		if (zip_close(z) != 0) {
			rc = bc_err_set(err, BC_EIO, "%s: writing the zip: %s", path, zip_strerror(z));
			goto done;
		}
		z = NULL;
	}
done:
	if (z)
		zip_discard(z);
	bc__buf_free(&core);
	bc__buf_free(&chrono);
	bc__buf_free(&meta);
	bc__buf_free(&emlb);
	bc__buf_free(&term);
	return rc;
}

/* ------------------------------------------------------------------ */
/* Export of the stored occurrences.                                   */
/* ------------------------------------------------------------------ */

/* Cells of the CSV export (RFC 4180, as bc_export_csv writes it), each
 * NUL-terminated in one buffer. */
typedef struct csv_table {
	bc_buf text;
	size_t *off;
	size_t n, cap, width;
} csv_table;

static int table_cell(csv_table *t)
{
	size_t *no = bc__grow(t->off, t->n, &t->cap, sizeof *no, 1024);
	if (!no)
		return BC_ENOMEM;
	t->off = no;
	t->off[t->n++] = t->text.len;
	return BC_OK;
}

/* The export's spreadsheet guard (a ' before = + - @ tab CR) protects
 * spreadsheets, not archives: it is taken off again here, exactly as
 * import takes it off. */
static int parse_export(csv_table *t, const char *d, size_t n, bc_err *err)
{
	size_t i = 0, row_cells = 0;
	while (i < n) {
		if (table_cell(t))
			return bc_err_set(err, BC_ENOMEM, "out of memory");
		row_cells++;
		size_t start = t->text.len;
		if (d[i] == '"') {
			i++;
			while (i < n && !(d[i] == '"' && (i + 1 >= n || d[i + 1] != '"'))) {
				if (d[i] == '"')
					i++;
				if (bc__buf_append(&t->text, &d[i], 1))
					return bc_err_set(err, BC_ENOMEM, "out of memory");
				i++;
			}
			i++;
		}
		while (i < n && d[i] != ',' && d[i] != '\r' && d[i] != '\n') {
			if (bc__buf_append(&t->text, &d[i], 1))
				return bc_err_set(err, BC_ENOMEM, "out of memory");
			i++;
		}
		if (bc__buf_append(&t->text, "", 1))
			return bc_err_set(err, BC_ENOMEM, "out of memory");
		char *cell = t->text.data + start;
		if (cell[0] == '\'' && cell[1] && strchr("=+-@\t\r", cell[1]))
			memmove(cell, cell + 1, strlen(cell));
		if (i < n && d[i] == ',') {
			i++;
			continue;
		}
		if (i < n && d[i] == '\r')
			i++;
		if (i < n && d[i] == '\n')
			i++;
		if (!t->width)
			t->width = row_cells;
		else if (row_cells != t->width)
			return bc_err_set(err, BC_ERROR, "internal: export row with %zu cells, header has %zu", row_cells, t->width);
		row_cells = 0;
	}
	return BC_OK;
}

int bc_export_dwca(bc_db *db, const char *path, long long *n_rows, bc_err *err)
{
	char *mem = NULL, *eml = NULL;
	size_t len = 0;
	csv_table t = {0};
	const char **cells = NULL;
	sqlite3_stmt *st = NULL;
	long long n = 0;
	int rc = BC_OK;
	struct stat sb;
	if (stat(path, &sb) == 0)
		return bc_err_set(err, BC_EEXISTS, "%s: already exists; not overwritten (remove it or choose another name)", path);
	FILE *fp = open_memstream(&mem, &len);
	if (!fp)
		return bc_err_set(err, BC_ENOMEM, "out of memory");
	rc = bc_export_csv(db, fp, &n, err);
	if (fclose(fp) != 0 && !rc)
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
	if (rc)
		goto done;
	if ((rc = parse_export(&t, mem, len, err)))
		goto done;
	/* the EML of the imported archive, when every occurrence came from
	 * batches that carried the same one */
	if ((rc = bc_db__prepare(db, &st,
		     "SELECT DISTINCT b.metadata FROM occurrences o JOIN import_batches b ON b.batch_id = o.batch_id LIMIT 2", err)))
		goto done;
	int k = 0, step;
	while ((step = sqlite3_step(st)) == SQLITE_ROW) {
		const char *m = (const char *)sqlite3_column_text(st, 0);
		if (k++ == 0 && m && *m && !(eml = bc__strdup(m))) {
			rc = bc_err_set(err, BC_ENOMEM, "out of memory");
			goto done;
		}
	}
	if (step != SQLITE_DONE) {
		rc = bc_db__error(db, err, "reading import batches");
		goto done;
	}
	if (k != 1) {
		free(eml);
		eml = NULL;
	}
	if (!t.width) {
		rc = bc_err_set(err, BC_ERROR, "internal: the CSV export wrote no header");
		goto done;
	}
	cells = bc__calloc(t.n, sizeof *cells);
	if (!cells) {
		rc = bc_err_set(err, BC_ENOMEM, "out of memory");
		goto done;
	}
	for (size_t i = 0; i < t.n; i++)
		cells[i] = t.text.data + t.off[i];
	rc = bc_dwca__write(path, cells, t.width, cells + t.width, t.n / t.width - 1, eml, err);
	if (!rc && n_rows)
		*n_rows = n;
done:
	sqlite3_finalize(st);
	free(mem);
	free(eml);
	free(cells);
	free(t.off);
	bc__buf_free(&t.text);
	return rc;
}
