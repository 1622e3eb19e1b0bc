#!/usr/bin/env bash
# Runs one lobfix fuzz target for a while on a copy of its seed corpus (fuzz/README.md).
#   fuzz/run.sh TARGET SECONDS [libFuzzer options...]
# TARGET is csv, jsonl, nmea, gpx, time or live; fuzz/dict/TARGET.dict is used as the dictionary.
# The target is (re)built first in
# $LOBFIX_FUZZ_BUILD (default build-fuzz/); the run works in a fresh directory under
# $LOBFIX_FUZZ_BUILD/runs/, so the committed corpus in fuzz/corpus/TARGET is never changed.
# At the end it prints executions, exec/s, corpus size and findings (crash-, leak-, timeout-,
# oom- and slow-unit- files). Exit status: 0 when the run ended without a finding, else 1
# (2 for a usage or build problem).
set -uo pipefail

root="$(cd "$(dirname "$0")/.." && pwd)"
build="${LOBFIX_FUZZ_BUILD:-$root/build-fuzz}"
targets=(csv jsonl nmea gpx time live)

usage() {
  echo "usage: fuzz/run.sh TARGET SECONDS [libFuzzer options...]  (TARGET: ${targets[*]})" >&2
  exit 2
}
[ $# -ge 2 ] || usage
target="$1"
seconds="$2"
shift 2
[[ " ${targets[*]} " == *" $target "* ]] || usage
[[ "$seconds" =~ ^[0-9]+$ ]] && [ "$seconds" -gt 0 ] || usage

# Build (a no-op when up to date). CXX may name another clang++.
if [ ! -f "$build/CMakeCache.txt" ]; then
  launcher=()
  if command -v ccache >/dev/null; then launcher=(-DCMAKE_CXX_COMPILER_LAUNCHER=ccache); fi
  cmake -S "$root/fuzz" -B "$build" -DCMAKE_CXX_COMPILER="${CXX:-clang++}" "${launcher[@]}" \
    >/dev/null || exit 2
fi
cmake --build "$build" --target "fuzz_$target" >/dev/null || exit 2
binary="$build/fuzz_$target"

# Per target: the largest input tried, and how long one input may take before it counts as a
# hang. GDAL opens a file per input: GPX inputs are kept small and get more time.
max_len=4096
timeout_s=10
if [ "$target" = gpx ]; then timeout_s=30; fi
# Words of the format (column names, sentence addresses, tags), to reach deeper faster.
dict=()
if [ -f "$root/fuzz/dict/$target.dict" ]; then dict=(-dict="$root/fuzz/dict/$target.dict"); fi

work="$build/runs/$target-$(date +%Y%m%d-%H%M%S)-$$"
mkdir -p "$work/corpus" "$work/artifacts"
cp "$root/fuzz/corpus/$target/"* "$work/corpus/"
seeds=$(find "$work/corpus" -type f | wc -l)
log="$work/fuzz.log"

echo "fuzz $target: ${seconds} s on a copy of fuzz/corpus/$target ($seeds seeds), log $log"
"$binary" -max_total_time="$seconds" -max_len="$max_len" -timeout="$timeout_s" \
  -rss_limit_mb=2048 -print_final_stats=1 -artifact_prefix="$work/artifacts/" "${dict[@]}" \
  "$@" "$work/corpus" >"$log" 2>&1
status=$?

stat() { sed -n "s/^stat::$1: *//p" "$log" | tail -1; }
executions="$(stat number_of_executed_units)"
exec_per_s="$(stat average_exec_per_sec)"
corpus=$(find "$work/corpus" -type f | wc -l)
coverage="$(grep -Eo 'cov: [0-9]+ ft: [0-9]+' "$log" | tail -1)"
mapfile -t findings < <(find "$work/artifacts" -type f \( -name 'crash-*' -o -name 'leak-*' \
  -o -name 'timeout-*' -o -name 'oom-*' -o -name 'slow-unit-*' \) | sort)

echo "fuzz $target: executions ${executions:-?}, exec/s ${exec_per_s:-?}, corpus $corpus" \
  "(from $seeds seeds), ${coverage:-cov: ?}, findings ${#findings[@]}"
if [ ${#findings[@]} -gt 0 ] || [ "$status" -ne 0 ]; then
  for f in "${findings[@]}"; do echo "  finding: $f"; done
  echo "fuzz $target: libFuzzer exit status $status; the end of its log:"
  grep -E 'ERROR:|SUMMARY:|lobfix fuzz:|^    #[0-9]' "$log" | head -40 | sed 's/^/  /'
  exit 1
fi
exit 0
