# build_geo_driver.sh - sourced by tests/external/test_geo_*.sh after
# tests/cli/setup.sh: builds $T/geo_driver against build/libbathychron.a.
DRIVER="$T/geo_driver"
LIBS="$(pkg-config --libs sqlite3 proj libxml-2.0 cairo libutf8proc libzip nettle) -lcsv -lm -lpthread"
# shellcheck disable=SC2086
if ! ${CC:-cc} -std=c11 -D_POSIX_C_SOURCE=200809L -I"$TOP/src" -o "$DRIVER" \
	"$TOP/tests/external/geo_driver.c" "$TOP/build/libbathychron.a" $LIBS 2>"$T/cc.err"; then
	fail build_geo_driver "$(head -c 600 "$T/cc.err")"
	exit 1
fi
