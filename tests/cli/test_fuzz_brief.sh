#!/bin/sh
# test_fuzz_brief.sh - every libFuzzer target (build-fuzz/fuzz/, built by
# make test) replays its committed corpus tests/fuzz/<name>/ (seeds and
# regressions of past findings), then fuzzes briefly from it. Any crash,
# leak, sanitizer report or failed invariant fails the check.
# FUZZ_BRIEF_SECONDS (default 4) per target keeps the whole file short.
. "$(dirname "$0")/setup.sh"
secs=${FUZZ_BRIEF_SECONDS:-4}
n=0
for src in "$TOP"/tests/fuzz/fuzz_*.c; do
	t=$(basename "$src" .c)
	name=${t#fuzz_}
	exe=$TOP/build-fuzz/fuzz/$t
	seeds=$TOP/tests/fuzz/$name
	n=$((n + 1))
	if [ ! -x "$exe" ]; then
		fail "${name}_built" "$exe missing (make fuzz-build; needs clang and libclang-rt-14-dev)"
		continue
	fi
	if [ ! -d "$seeds" ] || [ -z "$(ls "$seeds")" ]; then
		fail "${name}_corpus" "no seed corpus in $seeds"
		continue
	fi
	# Replay: each committed input once.
	if "$exe" -runs=0 -timeout=20 "$seeds" >"$T/$t.replay" 2>&1; then
		files=$(ls "$seeds" | wc -l)
		if grep -q "seed corpus: files: $files " "$T/$t.replay"; then
			ok "${name}_corpus_replays"
		else
			fail "${name}_corpus_replays" "did not read all $files inputs: $(grep 'seed corpus' "$T/$t.replay")"
			continue
		fi
	else
		fail "${name}_corpus_replays" "$(grep -E 'ERROR|SUMMARY|runtime error|abort' "$T/$t.replay" | head -3)"
		continue
	fi
	mkdir -p "$T/corpus-$name" "$T/crash-$name"
	dict=
	[ -f "$TOP/tests/fuzz/$name.dict" ] && dict="-dict=$TOP/tests/fuzz/$name.dict"
	if "$exe" -max_total_time="$secs" -timeout=10 -max_len=65536 -artifact_prefix="$T/crash-$name/" $dict \
		"$T/corpus-$name" "$seeds" >"$T/$t.fuzz" 2>&1; then
		ok "${name}_fuzz_${secs}s"
	else
		fail "${name}_fuzz_${secs}s" "$(grep -E 'ERROR|SUMMARY|runtime error' "$T/$t.fuzz" | head -3); input (base64): $(grep '^Base64:' "$T/$t.fuzz" | head -c 300)"
	fi
done
[ "$n" -ge 2 ] && ok fuzz_targets_found || fail fuzz_targets_found "only $n targets"
