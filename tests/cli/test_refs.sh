#!/bin/sh
# test_refs.sh - bathychron refs: BibTeX in, bad entries with their line,
# reloads update, identical files refused.
. "$(dirname "$0")/setup.sh"
FIX=$TOP/tests/cli/fixtures
cd "$FIX" || exit 3

$BC init "$T/db" >/dev/null
expect_status 0 refs_help $BC refs --help
contains refs_help_text "$T/out" "usage: bathychron refs DB FILE.bib"
expect_status 2 refs_usage $BC refs "$T/db"

expect_status 1 refs_load $BC refs "$T/db" refs.bib
same_text refs_summary "$T/out" "refs.bib: 4 references read, 3 new, 0 updated, 1 bad"
same_text refs_bad_entry "$T/err" "bathychron: refs.bib:23: Broken2005: field title: expected ',' or '}' after the value"
v=$(sqlite3 "$T/db" "SELECT authors || ' | ' || journal || ' | ' || pages FROM \"references\" WHERE citation_key = 'Abel2001'")
same_text refs_accents_macros "$(printf '%s\n' "$v" >"$T/v"; echo "$T/v")" "Abel, Ann and Müller, Jörg | Journal of Fictional Palaeontology | 101–120"
v=$(sqlite3 "$T/db" "SELECT authors || ' | ' || title FROM \"references\" WHERE citation_key = 'Brun1999'")
[ "$v" = "François Brun and Straßer, Karl | Depth and time" ] && ok refs_cedilla_sz_concat || fail refs_cedilla_sz_concat "$v"

expect_status 1 refs_same_again $BC refs "$T/db" refs.bib
contains refs_same_again_message "$T/err" "bathychron: refs.bib: identical content was loaded already as batch 1 on "

printf '@article{Abel2001, author = {Abel, Ann}, title = {Corrected}, year = 2001}\n' >"$T/fix.bib"
expect_status 0 refs_reload $BC refs "$T/db" "$T/fix.bib"
same_text refs_reload_summary "$T/out" "$T/fix.bib: 1 references read, 0 new, 1 updated, 0 bad"
v=$(sqlite3 "$T/db" "SELECT title FROM \"references\" WHERE citation_key = 'Abel2001'")
[ "$v" = "Corrected" ] && ok refs_reload_updates || fail refs_reload_updates "$v"
expect_status 3 refs_missing $BC refs "$T/db" "$T/none.bib"
