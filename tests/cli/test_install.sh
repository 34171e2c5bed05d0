#!/bin/sh
# test_install.sh - make install / uninstall honour PREFIX and DESTDIR; the
# installed program runs, the header and pkg-config file build a program,
# the man page renders and lists every command.
. "$(dirname "$0")/setup.sh"
stage="$T/stage"
make -s -C "$TOP" install PREFIX=/opt/bc DESTDIR="$stage" >"$T/log" 2>&1
check install_ran test $? -eq 0
for f in bin/bathychron lib/libbathychron.a lib/libbathychron.so.0 include/bathychron.h \
	lib/pkgconfig/bathychron.pc share/man/man1/bathychron.1 share/bash-completion/completions/bathychron; do
	check "installed_$(echo "$f" | tr / _)" test -e "$stage/opt/bc/$f"
done
check installed_program_runs "$stage/opt/bc/bin/bathychron" --version
contains pc_prefix "$stage/opt/bc/lib/pkgconfig/bathychron.pc" "prefix=/opt/bc"
# a program built only from the installed header and pkg-config file
cat >"$T/use.c" <<'C'
#include <bathychron.h>
#include <stdio.h>
int main(void) { printf("%s %d\n", BC_VERSION, bc_db_schema_version()); return 0; }
C
PKG_CONFIG_PATH="$stage/opt/bc/lib/pkgconfig" PKG_CONFIG_SYSROOT_DIR="$stage" \
	cc -o "$T/use" "$T/use.c" $(PKG_CONFIG_PATH="$stage/opt/bc/lib/pkgconfig" PKG_CONFIG_SYSROOT_DIR="$stage" pkg-config --cflags --static --libs bathychron) -static-libgcc >"$T/cc.log" 2>&1 \
	|| cc -o "$T/use" "$T/use.c" -I"$stage/opt/bc/include" "$stage/opt/bc/lib/libbathychron.a" \
		$(pkg-config --libs sqlite3 proj libxml-2.0 cairo libutf8proc libzip nettle) -lcsv -lm -lpthread >>"$T/cc.log" 2>&1
check pkgconfig_builds_a_program "$T/use"
for c in $("$TOP/build/bathychron" --help | sed -n 's/^  \([a-z][a-z-]*\)  .*/\1/p'); do
	contains "man_lists_$c" "$stage/opt/bc/share/man/man1/bathychron.1" ".SH COMMAND: $c"
done
make -s -C "$TOP" uninstall PREFIX=/opt/bc DESTDIR="$stage" >"$T/log" 2>&1
left=$(find "$stage" -type f | wc -l)
check uninstall_removes_every_file test "$left" -eq 0
