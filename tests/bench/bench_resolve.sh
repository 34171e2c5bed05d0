#!/bin/sh
# bench_resolve.sh - builds and runs bench_resolve.c against build/libbathychron.a.
# A benchmark (run by `make bench`), never part of `make test`.
set -eu
top=$(cd "$(dirname "$0")/../.." && pwd)
PKGS="sqlite3 proj libxml-2.0 cairo libutf8proc libzip nettle"
# shellcheck disable=SC2046
${CC:-cc} -std=c11 -O2 -I"$top/src" -o "$top/build/bench_resolve" "$top/tests/bench/bench_resolve.c" \
	"$top/build/libbathychron.a" $(pkg-config --libs $PKGS) -lcsv -lm -lpthread
"$top/build/bench_resolve" "$@"
