#!/usr/bin/env bash
# Whole-walk speed (a benchmark, not a test): `pleat walk --threads 1` timed by
# hyperfine (several runs), reported as microseconds per region, next to the
# plain pure-Python exact walk (tests/bench/walk_python.py, one run capped at
# PLEAT_BENCH_PYTHON_LIMIT seconds, default 60; its rate is that run's regions per
# CPU second) on the same `pleat random` networks (seed 1). On a shared machine
# CPU time (user + system, mean of the runs) is the fairer clock; the wall-clock
# median is printed too.
# Usage: tests/bench/walk_speed_bench.sh BUILD_DIR
#   PLEAT_BENCH_FULL=1: the whole grid (2 inputs x widths 5/10/15, 3 inputs x
#   widths 5/10, each with 3 and 4 hidden layers); default: five nets of it,
#   plus 2,15x6,1 (the deeper net surveys use) either way.
#   PLEAT_BENCH_RUNS=N hyperfine runs per net (default 5).
#   PLEAT_BENCH_GRID="ARCH ..." those nets instead (may be " " for none).
#   PLEAT_BENCH_SCALED_ARCHS="ARCH ..." the nets whose huge/tiny-coefficient variants are
#   measured (default 2,5,5,5,1 and 3,5,5,5,5,1; "" for none).
set -euo pipefail
build=${1:-build}
here=$(cd "$(dirname "$0")" && pwd)
pleat=$(cd "$build" && pwd)/cli/pleat
runs=${PLEAT_BENCH_RUNS:-5}
python_limit=${PLEAT_BENCH_PYTHON_LIMIT:-60}
if [ -n "${PLEAT_BENCH_GRID:-}" ]; then
  grid=$PLEAT_BENCH_GRID
elif [ "${PLEAT_BENCH_FULL:-0}" = 1 ]; then
  grid="2,5,5,5,1 2,5,5,5,5,1 2,10,10,10,1 2,10,10,10,10,1 2,15,15,15,1 2,15,15,15,15,1
        3,5,5,5,1 3,5,5,5,5,1 3,10,10,10,1 3,10,10,10,10,1 2,15,15,15,15,15,15,1"
else
  grid="2,5,5,5,1 2,10,10,10,10,1 2,15,15,15,1 3,5,5,5,5,1 3,10,10,10,1 2,15,15,15,15,15,15,1"
fi
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
# Two ratios to the Python walk, whose clock covers its walk alone (not the
# interpreter's start or reading the network): "ratio" divides by pleat's whole
# process, start-up included; "walk ratio" by pleat's CPU time minus that of the
# same process walking a one-neuron network of as many inputs (start-up, reading,
# writing: measured in the same hyperfine run), per region.
printf '%-36s %8s %9s %9s %10s %11s %14s %8s %10s\n' arch regions "wall s" "cpu s" "cpu us/reg" "walk us/reg" \
  "python us/reg" ratio "walk ratio"
# One row: hyperfine's CPU time per region of `pleat walk`, next to the Python walk's.
measure() {
  local label=$1 net=$2 regions python inputs
  regions=$("$pleat" walk "$net" --threads 1 --json --quiet |
    /usr/bin/python3 -c 'import json,sys; print(json.load(sys.stdin)["regions"])')
  inputs=$(/usr/bin/python3 -c 'import json,sys; print(json.load(open(sys.argv[1]))["input_dim"])' "$net")
  "$pleat" random --arch "$inputs,1,1" --seed 1 -o "$work/start-up.json"
  hyperfine --style none --runs "$runs" --warmup 1 --export-json "$work/h.json" \
    "$pleat walk $net --threads 1 --quiet" "$pleat walk $work/start-up.json --threads 1 --quiet" >/dev/null
  python=$(/usr/bin/python3 "$here/walk_python.py" "$net" "$python_limit")
  /usr/bin/python3 - "$label" "$regions" "$work/h.json" "$python" <<'EOF'
import json, sys
arch, regions, timing, python = sys.argv[1], int(sys.argv[2]), json.load(open(sys.argv[3])), json.loads(sys.argv[4])
result, start_up = timing["results"]
cpu = result["user"] + result["system"]
per = 1e6 * cpu / regions
walk_per = max(1e6 * (cpu - start_up["user"] - start_up["system"]) / regions, 1e-3)
py = 1e6 * python["cpu_seconds"] / max(python["regions"], 1)
print(f"{arch:<36} {regions:>8} {result['median']:>9.3f} {cpu:>9.3f} {per:>10.1f} {walk_per:>11.1f} {py:>14.0f}"
      f" {py / per:>8.1f} {py / walk_per:>10.1f}")
EOF
}

for arch in $grid; do
  "$pleat" random --arch "$arch" --seed 1 -o "$work/net.json"
  measure "$arch" "$work/net.json"
done

# Huge and tiny coefficients, on 2,5,5,5,1 and 3,5,5,5,5,1 (seed 1; the nets of
# PLEAT_BENCH_SCALED_ARCHS, empty for none): one hidden layer's weights and
# bias multiplied by c, the first hidden layer by 10^12, the second by 10^-24, the
# third by 1/(2^61 - 1) (a Mersenne prime). "+comp": the next layer's weights are
# multiplied by 1/c, so every bent hyperplane and the regions stay and only the
# numbers get long. Without: the next layer's bent hyperplanes move to within about
# 1/c of the scaled layer's (c = 10^12) or pile up (10^-24), giving thin regions
# that the double filter cannot decide and the exact fallback must.
for base_arch in ${PLEAT_BENCH_SCALED_ARCHS-2,5,5,5,1 3,5,5,5,5,1}; do
  "$pleat" random --arch "$base_arch" --seed 1 -o "$work/base.json"
  for scaled in "0 1000000000000 1" "1 1/1000000000000000000000000 1" "2 1/2305843009213693951 1" \
                "0 1000000000000 0" "1 1/1000000000000000000000000 0"; do
    set -- $scaled
    /usr/bin/python3 - "$work/base.json" "$1" "$2" "$3" "$work/net.json" <<'EOF'
import json, sys
from fractions import Fraction
net = json.load(open(sys.argv[1]))
k, factor, compensate = int(sys.argv[2]), Fraction(sys.argv[3]), sys.argv[4] == "1"
times = lambda value, c: str(Fraction(str(value)) * c)
layer, after = net["layers"][k], net["layers"][k + 1]
layer["weights"] = [[times(w, factor) for w in row] for row in layer["weights"]]
layer["bias"] = [times(b, factor) for b in layer["bias"]]
if compensate:
    after["weights"] = [[times(w, 1 / factor) for w in row] for row in after["weights"]]
json.dump(net, open(sys.argv[5], "w"))
EOF
    label="$base_arch L$(( $1 + 1 ))x$2"
    [ "$3" = 1 ] && label="$label+comp"
    measure "$label" "$work/net.json"
  done
done
