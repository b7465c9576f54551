#!/usr/bin/env bash
# Survey throughput: samples per second of 'pleat survey' for 2-input networks
# of widths 5, 10, 15 at 3 to 6 hidden layers (He init, seed 1, on R^2).
# Not a ctest case; run by hand:
#   tests/bench/survey_bench.sh BUILD/cli/pleat [TIME_LIMIT_EACH]
# One thread (the rate of one core; a survey runs one sample per thread, so
# T idle cores give about T times this). Per architecture it prints the median
# seconds per sample and its inverse, the median regions walked, and how many
# samples the time limit cut short (then the rate is an upper bound on the
# true one: the cut samples counted only up to the limit). Sample counts shrink
# as the networks grow so that the whole table stays within about 15 minutes
# on a quiet machine with the default limit of 120 s per sample.
set -u
pleat=${1:?usage: survey_bench.sh PLEAT_BINARY [TIME_LIMIT_EACH]}
limit=${2:-120}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

samples_for() {  # width depth -> samples
  case $1 in
    5) echo 9 ;;
    10) [ "$2" -le 4 ] && echo 3 || echo 2 ;;
    *) [ "$2" -le 4 ] && echo 2 || echo 1 ;;
  esac
}

printf '%-24s %7s %9s %11s %10s %9s %6s %8s\n' arch samples certified "median s" "samples/s" regions cut "wall s"
for width in 5 10 15; do
  for depth in 3 4 5 6; do
    arch=2
    for ((k = 0; k < depth; ++k)); do arch=$arch,$width; done
    arch=$arch,1
    n=$(samples_for $width $depth)
    start=$(date +%s.%N)
    "$pleat" survey --arch $arch --samples "$n" --seed 1 --threads 1 --time-limit-each "$limit" -q \
      -o "$work/s.jsonl" > /dev/null || { echo "$arch: pleat survey exited $?"; continue; }
    end=$(date +%s.%N)
    /usr/bin/python3 - "$work/s.jsonl" "$arch" "$start" "$end" <<'PY'
import json, statistics, sys
lines = [json.loads(l) for l in open(sys.argv[1]).read().splitlines()[1:]]
seconds = statistics.median(d["seconds"] for d in lines)
regions = statistics.median(d["regions"] for d in lines)
certified = sum(1 for d in lines if d["certified"])
cut = len(lines) - certified
print("%-24s %7d %9d %11.3f %10.3f %9g %6d %8.1f" % (
    sys.argv[2], len(lines), certified, seconds, 1 / seconds, regions, cut,
    float(sys.argv[4]) - float(sys.argv[3])))
PY
    rm -f "$work/s.jsonl"
  done
done
