#!/usr/bin/env bash
# Benchmarks (not tests): prints tables of medians. Usage: tests/bench/run.sh BUILD_DIR
# PLEAT_BENCH_FULL=1 runs the whole grid (slow); PLEAT_BENCH_LIMIT=S caps each walk.
set -euo pipefail
build=${1:-build}
here=$(cd "$(dirname "$0")" && pwd)
echo "== lp queries (tests/bench/lp_bench.cpp) =="
"$build/tests/bench/lp_bench"
echo
echo "== walk, certify and sample (tests/bench/walk_bench.py) =="
/usr/bin/python3 "$here/walk_bench.py" "$build/cli/pleat"
echo
echo "== certify against the numpy float estimate (tests/bench/certify_vs_estimate.py) =="
/usr/bin/python3 "$here/certify_vs_estimate.py" "$build/cli/pleat"
for extra in "$here"/*_bench.sh; do
  [ -e "$extra" ] || continue
  echo; echo "== $(basename "$extra") =="
  bash "$extra" "$build"
done
