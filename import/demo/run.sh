#!/bin/sh
# run.sh - `make demo`: the main job on the INVENTED demo data set
# (import/demo/: invented taxa, localities, people and references).
# Writes everything into demo-output/: a database, the check report, the
# shift table (md, latex, csv), the methods paragraph, the figure (svg, pdf,
# png) and the per-taxon range table and figure. A few demo rows are
# deliberately bad: they end in the quarantine and `check` explains them.
set -u
top=$(cd "$(dirname "$0")/../.." && pwd)
bc="$top/build/bathychron"
out="$top/demo-output"
demo="$top/import/demo"
rm -rf "$out"
mkdir -p "$out"
cd "$top"
db=demo-output/demo.gpkg
step() { printf '\n== %s\n' "$*"; }
run() { printf '$ bathychron %s\n' "$*"; "$bc" "$@"; }
must() { "$@" || { echo "demo: step failed: $*" >&2; exit 3; }; }

step "1. create the database (an OGC GeoPackage) with the ICS chart 2024-12"
must run init $db

step "2. load the references (BibTeX)"
must run refs $db import/demo/references.bib

step "3. import the compilation (7 rows are deliberately bad: expect exit status 1)"
run import $db import/demo/occurrences.csv
echo "(exit status $?: rows were quarantined, nothing was lost)"

step "4. import a lab's own spreadsheet through a column map (headers Stage, Depth (ft), Lat, Ref ...)"
must run import $db import/demo/lab-sheet.csv --map example

step "5. the check report (quarantined rows with file, line, field and reason)"
run check $db
run check $db --quarantine -o demo-output/quarantine.csv >/dev/null
echo "(quarantined rows written to demo-output/quarantine.csv, ready to fix and re-import)"

step "6. the shift table: stalked forms, stage bins, shallow/deep split at 200 m"
must run shift $db --group stalked --format md -o demo-output/shift.md
must run shift $db --group stalked --format latex -o demo-output/shift.tex
must run shift $db --group stalked --format csv -o demo-output/shift.csv
must run shift $db --group stalked --methods > demo-output/methods.txt
sed -n '1,12p' demo-output/shift.md

step "6b. the same table under uncertainty: 1000 draws of age and depth with a bootstrap (seed 2026), reference weighting, and the taphonomic sensitivity table"
must run shift $db --group stalked --bins epoch --draws 1000 --seed 2026 --bootstrap --weight-references --background binned --format md -o demo-output/shift-draws.md
must run shift $db --group stalked --bins epoch --draws 1000 --seed 2026 --bootstrap --weight-references --background binned --format latex -o demo-output/shift-draws.tex
must run shift $db --group stalked --bins epoch --taphonomy --table taphonomy --format md -o demo-output/taphonomy.md
must run shift $db --group stalked --bins epoch --taphonomy --table taphonomy --format latex -o demo-output/taphonomy.tex
sed -n '1,8p' demo-output/taphonomy.md

step "7. the figure, in three formats"
for f in svg pdf png; do
	must run plot $db --group stalked -o demo-output/shift.$f
done
must run plot $db --group stalked --bins epoch --draws 1000 --seed 2026 --bootstrap --width 180 -o demo-output/shift-draws.png

step "8. per-taxon depth ranges (genus) with their figure"
must run ranges $db --group stalked --rank genus --format md -o demo-output/ranges.md --figure demo-output/ranges.png
step "9. injuries: an invented survey of regenerating arms (two rows deliberately bad), and the interval between predator encounters by depth"
run injuries import $db import/demo/injuries.csv
must run encounter $db --by bin --format md -o demo-output/encounter.md --figure demo-output/encounter.png
sed -n '1,6p' demo-output/encounter.md
step "10. the same compilation as a Darwin Core Archive, into a second database"
must run init demo-output/from-archive.gpkg
must run refs demo-output/from-archive.gpkg import/demo/references.bib
run import demo-output/from-archive.gpkg import/demo/archive
echo "(the archive carries the same deliberately bad rows as the spreadsheet)"
must run export $db --format dwca -o demo-output/demo-archive.zip

echo
echo "demo finished: every file is in demo-output/"
ls demo-output
