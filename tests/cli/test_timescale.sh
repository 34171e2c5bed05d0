#!/bin/sh
# test_timescale.sh - bathychron timescale load/list/convert from the command line.
. "$(dirname "$0")/setup.sh"
FIX=$TOP/tests/fixtures/charts
DB=$T/a.gpkg

expect_status 0 timescale_help $BC timescale --help
contains timescale_help_text "$T/out" "usage: bathychron timescale load DB FILE"
for sub in load list convert; do
	expect_status 0 timescale_${sub}_help $BC timescale $sub --help
	contains timescale_${sub}_help_text "$T/out" "usage: bathychron timescale $sub"
done
expect_status 2 timescale_no_subcommand $BC timescale
expect_status 2 timescale_bad_option $BC timescale list "$DB" --colour
expect_status 2 timescale_bad_format $BC timescale list "$DB" --format json

$BC init "$DB" >/dev/null

# (d) A fresh database lists both shipped charts, and the default chart's
# intervals: more than 100 stages, each with bounds and a colour.
expect_status 0 list_fresh $BC timescale list "$DB"
awk -F'\t' 'NR==2' "$T/out" >"$T/first"
contains list_default_first "$T/first" "ics-2024-12	yes	178	Cohen, K.M., Finney, S.C., Gibbard, P.L. & Fan, J.-X. (2013; updated)"
contains list_has_2020 "$T/out" "ics-2020	no	178	"
contains list_interval_header "$T/out" "name	rank	older_ma	younger_ma	colour	older_unc	younger_unc	parent	iri"
n=$(awk -F'\t' '$2 == "age" && $3 != "" && $4 != "" && $5 ~ /^#[0-9A-F][0-9A-F][0-9A-F][0-9A-F][0-9A-F][0-9A-F]$/' "$T/out" | wc -l)
if [ "$n" -gt 100 ]; then ok list_more_than_100_stages; else fail list_more_than_100_stages "only $n stages with bounds and colour"; fi
# ics-chart-2024-12.skos.rdf: Maastrichtian 72.2 +/- 0.2 to 66.00 Ma, #F2FA8C, in Late (Upper) Cretaceous.
contains list_maastrichtian "$T/out" "Maastrichtian	age	72.2	66	#F2FA8C	0.2		Late Cretaceous	http://resource.geosciml.org/classifier/ics/ischart/Maastrichtian"

expect_status 0 list_csv $BC timescale list "$DB" --name ics-2020 --format csv
contains list_csv_header "$T/out" "name,rank,older_ma,younger_ma,colour,older_unc,younger_unc,parent,iri"
# ics-chart-2020.skos.rdf: BaseMaastrichtianTime 72.1, uncertainty 0.2; colour from the 2024-12 chart.
contains list_csv_2020 "$T/out" "Maastrichtian,age,72.1,66,#F2FA8C,0.2,,Late Cretaceous,"
expect_status 0 list_charts_only $BC timescale list "$DB" --charts
n=$(wc -l <"$T/out")
if [ "$n" -eq 3 ]; then ok list_charts_only_lines; else fail list_charts_only_lines "$n lines"; fi

# Loading: a hand-written SKOS file, then refusals that leave the database unchanged.
expect_status 0 load_mini $BC timescale load "$DB" "$FIX/mini.skos.rdf"
same_text load_mini_message "$T/out" "loaded mini (5 intervals, 10 labels)"
expect_status 0 list_mini $BC timescale list "$DB" --name mini
contains list_mini_bp_bound "$T/out" "Betan	period	300.5	201.3		0.7		Alphazoic	http://example.org/mini/Betan"
expect_status 3 load_mini_again $BC timescale load "$DB" "$FIX/mini.skos.rdf"
same_text load_mini_again_message "$T/err" "bathychron: $DB: a chart named 'mini' is already loaded; load it under another name, or replace it explicitly (timescale load --replace)"
expect_status 0 load_mini_replace $BC timescale load "$DB" "$FIX/mini.skos.rdf" --replace --default
expect_status 0 list_after_replace $BC timescale list "$DB" --charts
contains list_mini_default "$T/out" "mini	yes	5	"

sqlite3 "$DB" .dump >"$T/before.sql"
expect_status 1 load_malformed $BC timescale load "$DB" "$FIX/malformed.rdf"
same_text load_malformed_message "$T/err" "bathychron: $FIX/malformed.rdf:6: XML: not well-formed: Opening and ending tag mismatch: prefLabel line 5 and Concept"
expect_status 1 load_billion_laughs $BC timescale load "$DB" "$FIX/billion-laughs.rdf"
same_text load_billion_laughs_message "$T/err" "bathychron: $FIX/billion-laughs.rdf:3: DOCTYPE: refused: the document type declaration declares entity 'lol' (entities are never expanded; a chart file needs no DTD)"
expect_status 1 load_external_entity $BC timescale load "$DB" "$FIX/external-entity.rdf"
same_text load_external_entity_message "$T/err" "bathychron: $FIX/external-entity.rdf:3: DOCTYPE: refused: the document type declaration declares external entity 'xxe' (file:///etc/passwd) (entities are never expanded; a chart file needs no DTD)"
if grep -q 'root:' "$T/out" "$T/err"; then fail external_entity_not_read "/etc/passwd content in output"; else ok external_entity_not_read; fi
sqlite3 "$DB" .dump >"$T/after.sql"
if cmp -s "$T/before.sql" "$T/after.sql"; then ok refused_loads_leave_db_unchanged; else fail refused_loads_leave_db_unchanged "dump differs"; fi
expect_status 3 load_missing $BC timescale load "$DB" "$T/none.rdf"
expect_status 3 list_unknown $BC timescale list "$DB" --name nope
same_text list_unknown_message "$T/err" "bathychron: $DB: no chart named 'nope' (loaded: mini, ics-2020, ics-2024-12)"

# convert writes the chart TSV; loading that TSV gives the same intervals.
expect_status 0 convert_mini $BC timescale convert "$FIX/mini.skos.rdf" --name mini2
cp "$T/out" "$T/mini2.tsv"
contains convert_header "$T/mini2.tsv" "# chart: mini2"
expect_status 0 load_tsv $BC timescale load "$DB" "$T/mini2.tsv"
same_text load_tsv_message "$T/out" "loaded mini2 (5 intervals, 10 labels)"
$BC timescale list "$DB" --name mini | tail -n +2 | cut -f1-8 >"$T/l1"
$BC timescale list "$DB" --name mini2 | tail -n +2 | cut -f1-8 >"$T/l2"
if cmp -s "$T/l1" "$T/l2"; then ok tsv_load_same_as_skos; else fail tsv_load_same_as_skos "$(diff "$T/l1" "$T/l2" | head -5)"; fi

# The shipped TSVs are what the loader makes of the releases today.
R=$SHARED/reference-data
if [ -r "$R/ics-chart-2024-12.skos.rdf" ]; then
	BC_PROGRAM="${BC_PROGRAM:-$TOP/build/bathychron}"
	mkdir -p "$T/regen/reference/charts"
	(cd "$T/regen" && BC_PROGRAM=$BC_PROGRAM sh "$TOP/reference/charts/regenerate.sh" "$R" 2>"$T/regen.err")
	for c in ics-2024-12 ics-2020; do
		if cmp -s "$T/regen/reference/charts/$c.tsv" "$TOP/reference/charts/$c.tsv"; then ok regenerate_$c; else fail regenerate_$c "$(cat "$T/regen.err") $(diff "$T/regen/reference/charts/$c.tsv" "$TOP/reference/charts/$c.tsv" | head -3)"; fi
	done
else
	fail reference_data_available "$R/ics-chart-2024-12.skos.rdf not readable (set BC_SHARED_DIR)"
fi
