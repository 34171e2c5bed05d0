# setup.sh - sourced by every tests/cli/test_*.sh.
# Gives: $BC (the program, under $VALGRIND if set), $T (a temp dir removed
# at exit), $TOP (source tree), $SHARED (reference data beside it), and
# check NAME CMD... / expect_status N NAME CMD... / same_file NAME A B.
set -u
LC_ALL=C
export LC_ALL
TOP=${BC_SOURCE_DIR:-$(cd "$(dirname "$0")/../.." && pwd)}
SHARED=${BC_SHARED_DIR:-$TOP/../shared}
BC="${VALGRIND:-} ${BC_PROGRAM:-$TOP/build/bathychron}"
T=$(mktemp -d)
trap 'rm -rf "$T"' EXIT

ok() { echo "ok $1"; }
fail() { echo "FAIL $1: $2"; }

# check NAME CMD...: passes when CMD exits 0.
check() {
	name=$1; shift
	if "$@" >"$T/.out" 2>&1; then ok "$name"; else fail "$name" "$(head -c 400 "$T/.out")"; fi
}

# expect_status N NAME CMD...: runs CMD, stdout to $T/out, stderr to $T/err.
expect_status() {
	want=$1; name=$2; shift 2
	"$@" >"$T/out" 2>"$T/err"
	got=$?
	if [ "$got" -eq "$want" ]; then ok "$name"; else fail "$name" "exit $got, expected $want; stderr: $(head -c 400 "$T/err")"; fi
}

# same_text NAME FILE EXPECTED_TEXT: FILE's content equals the text exactly.
same_text() {
	printf '%s\n' "$3" >"$T/.expected"
	if cmp -s "$2" "$T/.expected"; then ok "$1"; else fail "$1" "got: $(head -c 600 "$2") | expected: $3"; fi
}

# contains NAME FILE FIXED_STRING
contains() {
	if grep -qF -- "$3" "$2"; then ok "$1"; else fail "$1" "'$3' not in: $(head -c 600 "$2")"; fi
}
