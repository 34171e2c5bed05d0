#!/bin/sh
# manpage.sh PROGRAM > bathychron.1
# Builds the man page from the program's own --help texts, so the manual
# cannot drift from the program.
set -eu
prog=$1
version=$("$prog" --version | sed 's/^bathychron \([^ ]*\).*/\1/')
esc() { sed -e 's/\\/\\e/g' -e 's/^\./\\\&./' -e "s/^'/\\\\\&'/" -e 's/^-/\\-/'; }
cat <<HEAD
.TH BATHYCHRON 1 "" "bathychron $version" "User Commands"
.SH NAME
bathychron \- fossil occurrences through time and depth: shallow-to-deep shift tables
.SH SYNOPSIS
.B bathychron
.I COMMAND
[\fIOPTIONS\fR] ...
.SH DESCRIPTION
HEAD
echo ".nf"
"$prog" --help | esc
echo ".fi"
for cmd in $("$prog" --help | sed -n 's/^  \([a-z][a-z-]*\)  .*/\1/p'); do
	echo ".SH COMMAND: $cmd"
	echo ".nf"
	"$prog" "$cmd" --help 2>&1 | esc
	echo ".fi"
done
cat <<'TAIL'
.SH EXIT STATUS
0 success; 1 data problems were reported; 2 usage error; 3 environment
failure (missing file, database locked, library error).
.SH CAUTIONS
Palaeodepths are interpretations, often derived from environment terms.
Bins with few occurrences are weak evidence, and a shift between bins can be
an artefact of sampling, age uncertainty, a few prolific references, or the
transport of loose ossicles. Every table carries a methods stamp saying which
records, chart, vocabularies and options produced it.
.SH SEE ALSO
The README.md and doc/ folder of the source distribution.
TAIL
