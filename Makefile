# bathychron - plain Makefile with pkg-config.
#   make deps    check (and on Debian as root, install) the dependencies
#   make         static and shared library and the program
#   make test    every test, plus the unit suite under ASan/UBSan
#   make test-san  every test again with the program built under ASan/UBSan
#   make demo    the main job on the invented demo data set
#   make bench   benchmarks (speed and memory; never part of make test)
#   make fuzz    libFuzzer targets for a set time each (FUZZ_SECONDS=60)
#   make fuzz-build  only build them (clang, libFuzzer + ASan/UBSan) in build-fuzz/
#   make install / uninstall  PREFIX=/usr/local DESTDIR=

PREFIX ?= /usr/local
DESTDIR ?=
CC ?= cc
VERSION := $(shell sed -n 's/^\#define BC_VERSION "\(.*\)"/\1/p' src/bathychron.h)

PKGS := sqlite3 proj libxml-2.0 cairo libutf8proc libzip nettle
# Debian package for each pkg-config name (same order), plus tools the tests use.
DEB_DEV := libsqlite3-dev libproj-dev libxml2-dev libcairo2-dev libutf8proc-dev libzip-dev nettle-dev libcsv-dev
DEB_TOOLS := pkg-config gcc make proj-data sqlite3 gdal-bin python3 python3-scipy python3-statsmodels \
	python3-pandas python3-lxml poppler-utils librsvg2-bin geographiclib-tools proj-bin zip unzip fonts-dejavu-core clang libclang-rt-14-dev python3-gdal

WARN := -Wall -Wextra -Wshadow -Wundef -Wwrite-strings -Wstrict-prototypes \
	-Wmissing-prototypes -Wformat=2 -Wno-format-nonliteral
WERROR ?= 1
ifeq ($(WERROR),1)
WARN += -Werror
endif
OPT ?= -O2 -g
PKG_CFLAGS = $(shell pkg-config --cflags $(PKGS) 2>/dev/null)
PKG_LIBS = $(shell pkg-config --libs $(PKGS) 2>/dev/null) -lcsv -lm -lpthread
CFLAGS_ALL = -std=c11 -D_POSIX_C_SOURCE=200809L -D_DEFAULT_SOURCE $(OPT) $(WARN) -Isrc -Ibuild $(PKG_CFLAGS) -MMD -MP $(CFLAGS)

B ?= build
LIB_SRC := $(sort $(wildcard src/*.c))
CLI_SRC := $(sort $(wildcard src/cli/*.c))
RESOURCES := $(sort $(wildcard schema/*.sql) $(shell find reference import/maps -type f \( -name '*.tsv' -o -name '*.map' \) 2>/dev/null))
LIB_OBJ := $(LIB_SRC:src/%.c=$(B)/lib/%.o) $(B)/lib/resources.o
CLI_OBJ := $(CLI_SRC:src/cli/%.c=$(B)/cli/%.o)
UNIT_SRC := $(sort $(wildcard tests/unit/*.c))
UNIT_OBJ := $(UNIT_SRC:tests/unit/%.c=$(B)/unit/%.o)

.PHONY: all deps test test-unit test-san demo bench fuzz fuzz-build fuzz-targets install uninstall clean check-header
all: $(B)/libbathychron.a $(B)/libbathychron.so $(B)/bathychron $(B)/bathychron.1

# The man page is made from the program's own --help texts.
$(B)/bathychron.1: $(B)/bathychron src/gen/manpage.sh
	@sh src/gen/manpage.sh $(B)/bathychron > $@

deps:
	@sh tests/deps.sh "$(PKGS)" "$(DEB_DEV) $(DEB_TOOLS)"

$(B)/embed: src/gen/embed.c
	@mkdir -p $(B)
	$(CC) -std=c11 -O1 -o $@ $<

$(B)/lib/resources.c: $(B)/embed $(RESOURCES)
	@mkdir -p $(B)/lib
	@$(B)/embed $@ $(RESOURCES)

$(B)/lib/%.o: src/%.c
	@mkdir -p $(dir $@)
	@echo '  CC   $<'
	@$(CC) $(CFLAGS_ALL) -fPIC -c -o $@ $<

$(B)/lib/resources.o: $(B)/lib/resources.c
	@$(CC) $(CFLAGS_ALL) -Wno-overlength-strings -fPIC -c -o $@ $<

$(B)/cli/%.o: src/cli/%.c
	@mkdir -p $(dir $@)
	@echo '  CC   $<'
	@$(CC) $(CFLAGS_ALL) -c -o $@ $<

$(B)/libbathychron.a: $(LIB_OBJ)
	rm -f $@
	ar rcs $@ $^

$(B)/libbathychron.so: $(LIB_OBJ)
	$(CC) -shared -Wl,-soname,libbathychron.so.0 -o $@ $^ $(PKG_LIBS) $(LDFLAGS)

$(B)/bathychron: $(CLI_OBJ) $(B)/libbathychron.a
	$(CC) -o $@ $(CLI_OBJ) $(B)/libbathychron.a $(PKG_LIBS) $(LDFLAGS) $(CFLAGS_ALL_LD)

# Unit tests: every TEST(name) in tests/unit/*.c is registered automatically.
$(B)/unit/tests.list: $(UNIT_SRC)
	@mkdir -p $(B)/unit
	@grep -ho '^TEST([a-z0-9_]*)' $(UNIT_SRC) | sed 's/^TEST(\(.*\))/X(\1)/' > $@

$(B)/unit/%.o: tests/unit/%.c $(B)/unit/tests.list
	@mkdir -p $(B)/unit
	@echo '  CC   $<'
	@$(CC) $(CFLAGS_ALL) -Itests/unit -I$(B)/unit -c -o $@ $<

$(B)/unit-tests: $(UNIT_OBJ) $(B)/libbathychron.a
	$(CC) -o $@ $(UNIT_OBJ) $(B)/libbathychron.a $(PKG_LIBS) $(LDFLAGS) $(CFLAGS_ALL_LD)

check-header:
	@mkdir -p $(B)
	printf '#include "bathychron.h"\nint main(void){return 0;}\n' > $(B)/headertest.c
	$(CC) -std=c11 -pedantic -Wall -Wextra -Werror -Isrc -o $(B)/headertest $(B)/headertest.c

test: deps
	@$(MAKE) --no-print-directory all $(B)/unit-tests check-header
	@$(MAKE) --no-print-directory B=build-san OPT="-O1 -g -fsanitize=address,undefined -fno-omit-frame-pointer -fno-sanitize-recover=undefined" \
		CFLAGS_ALL_LD="-fsanitize=address,undefined" build-san/unit-tests build-san/bathychron
	@$(MAKE) --no-print-directory fuzz-targets
	@sh tests/run.sh

# The whole suite again with the program built under ASan/UBSan: every CLI
# test runs build-san/bathychron; a sanitizer report fails the test it is in.
SAN_ENV := ASAN_OPTIONS=detect_leaks=1:exitcode=86 UBSAN_OPTIONS=halt_on_error=1:print_stacktrace=1
test-san: deps
	@$(MAKE) --no-print-directory all $(B)/unit-tests
	@$(MAKE) --no-print-directory B=build-san OPT="-O1 -g -fsanitize=address,undefined -fno-omit-frame-pointer -fno-sanitize-recover=undefined" \
		CFLAGS_ALL_LD="-fsanitize=address,undefined" build-san/unit-tests build-san/bathychron
	@$(MAKE) --no-print-directory fuzz-targets
	@$(SAN_ENV) BC_PROGRAM=$(CURDIR)/build-san/bathychron sh tests/run.sh

test-unit: all $(B)/unit-tests
	$(B)/unit-tests

demo: deps all
	@sh import/demo/run.sh

bench: deps all
	@sh tests/bench/run.sh

# Fuzzing: every tests/fuzz/fuzz_<name>.c is a libFuzzer target built with
# clang against a library compiled with coverage and ASan/UBSan; its seed
# corpus is tests/fuzz/<name>/.
FUZZ_SRC := $(sort $(wildcard tests/fuzz/fuzz_*.c))
FUZZ_CC ?= clang
FUZZ_OPT := -O1 -g -fsanitize=fuzzer-no-link,address,undefined -fno-sanitize-recover=undefined -fno-omit-frame-pointer

$(B)/fuzz/%: tests/fuzz/%.c tests/fuzz/fuzz.h $(B)/libbathychron.a
	@mkdir -p $(dir $@)
	@echo '  FUZZ $<'
	@$(CC) $(CFLAGS_ALL) -fsanitize=fuzzer -o $@ $< $(B)/libbathychron.a $(PKG_LIBS) $(LDFLAGS) $(CFLAGS_ALL_LD)

fuzz-targets:
	@$(MAKE) --no-print-directory B=build-fuzz CC=$(FUZZ_CC) OPT="$(FUZZ_OPT)" \
		CFLAGS_ALL_LD="-fsanitize=address,undefined" $(FUZZ_SRC:tests/fuzz/%.c=build-fuzz/fuzz/%)

fuzz-build: deps fuzz-targets

fuzz: fuzz-build
	@sh tests/fuzz/run.sh $${FUZZ_SECONDS:-60}

install: all
	install -d $(DESTDIR)$(PREFIX)/bin $(DESTDIR)$(PREFIX)/lib $(DESTDIR)$(PREFIX)/include \
		$(DESTDIR)$(PREFIX)/lib/pkgconfig $(DESTDIR)$(PREFIX)/share/man/man1 \
		$(DESTDIR)$(PREFIX)/share/bash-completion/completions
	install -m 755 $(B)/bathychron $(DESTDIR)$(PREFIX)/bin/bathychron
	install -m 644 $(B)/libbathychron.a $(DESTDIR)$(PREFIX)/lib/libbathychron.a
	install -m 755 $(B)/libbathychron.so $(DESTDIR)$(PREFIX)/lib/libbathychron.so.0
	ln -sf libbathychron.so.0 $(DESTDIR)$(PREFIX)/lib/libbathychron.so
	install -m 644 src/bathychron.h $(DESTDIR)$(PREFIX)/include/bathychron.h
	sed -e 's|@PREFIX@|$(PREFIX)|' -e 's|@VERSION@|$(VERSION)|' src/bathychron.pc.in > $(DESTDIR)$(PREFIX)/lib/pkgconfig/bathychron.pc
	install -m 644 $(B)/bathychron.1 $(DESTDIR)$(PREFIX)/share/man/man1/bathychron.1
	install -m 644 doc/bathychron.bash-completion $(DESTDIR)$(PREFIX)/share/bash-completion/completions/bathychron

uninstall:
	rm -f $(DESTDIR)$(PREFIX)/bin/bathychron $(DESTDIR)$(PREFIX)/lib/libbathychron.a \
		$(DESTDIR)$(PREFIX)/lib/libbathychron.so.0 $(DESTDIR)$(PREFIX)/lib/libbathychron.so \
		$(DESTDIR)$(PREFIX)/include/bathychron.h $(DESTDIR)$(PREFIX)/lib/pkgconfig/bathychron.pc \
		$(DESTDIR)$(PREFIX)/share/man/man1/bathychron.1 \
		$(DESTDIR)$(PREFIX)/share/bash-completion/completions/bathychron

clean:
	rm -rf build build-san build-fuzz demo-output

-include $(wildcard $(B)/lib/*.d $(B)/cli/*.d $(B)/unit/*.d $(B)/fuzz/*.d)
