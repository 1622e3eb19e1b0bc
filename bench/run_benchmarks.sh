#!/usr/bin/env bash
# Runs every lobfix benchmark and the comparison yardstick; figures go in docs/performance.md.
#
#   bench/run_benchmarks.sh
#
# 1. Configures a Release build in build-bench/ with -DLOBFIX_BUILD_BENCH=ON and builds
#    lobfix_bench and the lobfix tool.
# 2. lobfix_bench (Google Benchmark): solve_fix at 30 / 1,000 / 10,000 bearings, the search area, CSV parsing;
#    lobfix_bench_planning: a 500 x 500 coverage map of 10 stations, 1,000 next-bearing spots.
# 3. The whole `lobfix solve FILE --quiet` process on 1,000 and 10,000 synthetic bearings
#    (bench/make_bearings.py), with hyperfine if installed, else a loop of /usr/bin/time.
# 4. The comparison yardstick (bench/yardstick_scipy.py, not part of lobfix) on the same files.
# 5. Peak resident memory of `lobfix solve` on 100,000 bearings (/usr/bin/time -v).
#
# Environment: BUILD_DIR (default <repo>/build-bench), JOBS (default 2), RUNS (process
# timings of lobfix, default 20), YARDSTICK_RUNS (default 3).
# Results (logs, JSON) are kept in $BUILD_DIR/bench-results/.
set -euo pipefail

ROOT="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
BUILD_DIR="${BUILD_DIR:-$ROOT/build-bench}"
JOBS="${JOBS:-2}"
RUNS="${RUNS:-20}"
YARDSTICK_RUNS="${YARDSTICK_RUNS:-3}"
PY=/usr/bin/python3  # Debian's, with python3-scipy and python3-geographiclib
OUT="$BUILD_DIR/bench-results"
DATA="$BUILD_DIR/bench-data"

say() { printf '\n=== %s\n' "$*"; }

for tool in cmake "$PY" /usr/bin/time; do
  command -v "$tool" >/dev/null || { echo "run_benchmarks.sh: $tool not found" >&2; exit 1; }
done

say "configure and build (Release) in $BUILD_DIR"
launcher=()
if command -v ccache >/dev/null; then launcher=(-DCMAKE_CXX_COMPILER_LAUNCHER=ccache); fi
cmake -S "$ROOT" -B "$BUILD_DIR" -DCMAKE_BUILD_TYPE=Release -DLOBFIX_BUILD_BENCH=ON \
  -DLOBFIX_BUILD_TESTS=OFF "${launcher[@]}"
cmake --build "$BUILD_DIR" -j"$JOBS" --target lobfix_bench lobfix_bench_planning lobfix_app
LOBFIX="$BUILD_DIR/lobfix"  # target lobfix_app, OUTPUT_NAME lobfix
[[ -x "$LOBFIX" ]] || LOBFIX="$BUILD_DIR/apps/lobfix/lobfix"
BENCH="$(find "$BUILD_DIR" -type f -name lobfix_bench -perm -u+x | head -n 1)"
BENCH_PLANNING="$(find "$BUILD_DIR" -type f -name lobfix_bench_planning -perm -u+x | head -n 1)"
[[ -x "$LOBFIX" && -x "$BENCH" && -x "$BENCH_PLANNING" ]] ||
  { echo "run_benchmarks.sh: binaries not found" >&2; exit 1; }

mkdir -p "$OUT" "$DATA"
say "machine"
{
  echo "date: $(date -u +%Y-%m-%dT%H:%M:%SZ)"
  echo "nproc: $(nproc)"
  echo "cpu: $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2- | sed 's/^ *//')"
  echo "compiler: $(c++ --version | head -n 1)"
  echo "load average before: $(cut -d' ' -f1-3 /proc/loadavg)"
} | tee "$OUT/machine.txt"

say "lobfix_bench (Google Benchmark, 5 repetitions)"
"$BENCH" --benchmark_repetitions=5 --benchmark_report_aggregates_only=true \
  --benchmark_out="$OUT/lobfix_bench.json" --benchmark_out_format=json | tee "$OUT/lobfix_bench.txt"

say "lobfix_bench_planning (Google Benchmark, 5 repetitions)"
"$BENCH_PLANNING" --benchmark_repetitions=5 --benchmark_report_aggregates_only=true \
  --benchmark_out="$OUT/lobfix_bench_planning.json" --benchmark_out_format=json |
  tee "$OUT/lobfix_bench_planning.txt"

say "synthetic bearing files (bench/make_bearings.py)"
for n in 1000 10000 100000; do
  [[ -s "$DATA/bearings_$n.csv" ]] || "$PY" "$ROOT/bench/make_bearings.py" "$n" "$DATA/bearings_$n.csv"
  echo "$DATA/bearings_$n.csv: $(($(wc -l <"$DATA/bearings_$n.csv") - 1)) bearings"
done
for n in 1000 10000; do  # a fix must come out, else the timing means nothing
  "$LOBFIX" solve "$DATA/bearings_$n.csv" --json >"$OUT/fix_$n.json"
done

# time_runs NAME RUNS WARMUP CMD...: mean wall time of CMD in seconds, into $OUT/NAME.*
time_runs() {
  local name="$1" runs="$2" warmup="$3"
  shift 3
  if command -v hyperfine >/dev/null; then
    hyperfine --warmup "$warmup" --runs "$runs" --export-json "$OUT/$name.json" \
      --command-name "$name" "$(printf '%q ' "$@")"
  else
    local i
    for ((i = 0; i < warmup; i++)); do "$@" >/dev/null; done
    : >"$OUT/$name.times"
    for ((i = 0; i < runs; i++)); do
      /usr/bin/time -f %e -a -o "$OUT/$name.times" "$@" >/dev/null
    done
    awk -v n="$name" '{s += $1; if (NR == 1 || $1 < m) m = $1}
      END {printf "%s: mean %.3f s, min %.3f s over %d runs\n", n, s / NR, m, NR}' \
      "$OUT/$name.times"
  fi
}

say "whole process: lobfix solve FILE --quiet"
time_runs lobfix_solve_1000 "$RUNS" 3 "$LOBFIX" solve "$DATA/bearings_1000.csv" --quiet
time_runs lobfix_solve_10000 "$RUNS" 3 "$LOBFIX" solve "$DATA/bearings_10000.csv" --quiet

say "comparison yardstick (bench/yardstick_scipy.py, not part of lobfix)"
for n in 1000 10000; do
  "$PY" "$ROOT/bench/yardstick_scipy.py" "$DATA/bearings_$n.csv" | tee "$OUT/yardstick_$n.txt"
done
time_runs yardstick_1000 "$YARDSTICK_RUNS" 1 "$PY" "$ROOT/bench/yardstick_scipy.py" \
  "$DATA/bearings_1000.csv"
time_runs yardstick_10000 "$YARDSTICK_RUNS" 0 "$PY" "$ROOT/bench/yardstick_scipy.py" \
  "$DATA/bearings_10000.csv"

say "peak resident memory: lobfix solve on 100,000 bearings"
/usr/bin/time -v "$LOBFIX" solve "$DATA/bearings_100000.csv" --quiet 2>"$OUT/rss_100000.txt"
grep -E 'Maximum resident|Elapsed' "$OUT/rss_100000.txt"

say "summary"
echo "load average after: $(cut -d' ' -f1-3 /proc/loadavg)" | tee -a "$OUT/machine.txt"
if command -v hyperfine >/dev/null; then
  "$PY" - "$OUT" <<'PYEOF'
import json, sys
out = sys.argv[1]
def mean(name):
    return json.load(open(f"{out}/{name}.json"))["results"][0]["mean"]
for n in (1000, 10000):
    lob, yard = mean(f"lobfix_solve_{n}"), mean(f"yardstick_{n}")
    print(f"{n:>6} bearings: lobfix solve {lob:.3f} s, yardstick {yard:.3f} s, "
          f"speed-up {yard / lob:.0f}x")
PYEOF
fi
echo "results in $OUT"
