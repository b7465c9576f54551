#!/usr/bin/env bash
# One walk across MPI processes (a benchmark, not a test): regions per second
# of `mpirun -n P pleat walk NET --threads 1` for P = 1, 2, 4, next to the walk
# alone with 1 thread and with 2, all timed by hyperfine in ONE run (medians of
# wall time; the machine is shared, so only ratios within a run mean much),
# and the bytes the processes sent each other per region (pleat's own count:
# neighbour patterns to their owners, regions to rank 0, the per-level
# agreement). P above the core count is oversubscribed (mpirun --oversubscribe).
# Usage: tests/bench/mpi_bench.sh BUILD_DIR [ARCH] [SEED]
#   default network: 3,45,45,1 seed 1 (131808 regions, counted by pleat).
#   PLEAT_BENCH_RUNS=N hyperfine runs per command (default 3).
#   PLEAT_BENCH_COMMAND=certify times `certify NET --full-walk` instead (the
#   walk plus each rank's reduction of its regions' rows and its share of the
#   kernel check); its bytes are not counted (-).
set -euo pipefail
build=${1:-build}
arch=${2:-3,45,45,1}
seed=${3:-1}
pleat=$(cd "$build" && pwd)/cli/pleat
runs=${PLEAT_BENCH_RUNS:-3}
command=${PLEAT_BENCH_COMMAND:-walk}
case $command in
  walk) run="walk" ;;
  certify) run="certify --full-walk" ;;
  *) echo "PLEAT_BENCH_COMMAND must be walk or certify" >&2; exit 2 ;;
esac
mpirun=(mpirun --oversubscribe)
[ "$(id -u)" -eq 0 ] && mpirun+=(--allow-run-as-root)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
net=$work/net.json
"$pleat" random --arch "$arch" --seed "$seed" -o "$net"
regions=$("$pleat" walk "$net" --threads 1 --json --quiet |
  /usr/bin/python3 -c 'import json,sys; print(json.load(sys.stdin)["regions"])')
echo "pleat $run, network $arch seed $seed: $regions regions; $(nproc) cores"

# Bytes per region, from pleat's line on standard error (one run per P).
declare -A bytes=([1]=- [2]=- [4]=-)
if [ "$command" = walk ]; then
  for ranks in 1 2 4; do
    bytes[$ranks]=$("${mpirun[@]}" -n "$ranks" "$pleat" walk "$net" --threads 1 2>&1 >/dev/null |
      sed -n 's/.*(\([0-9]*\) per region).*/\1/p')
  done
fi

hyperfine --style none --runs "$runs" --export-json "$work/h.json" \
  -n "alone, 1 thread" "$pleat $run $net --quiet --threads 1" \
  -n "alone, 2 threads" "$pleat $run $net --quiet --threads 2" \
  -n "P=1" "${mpirun[*]} -n 1 $pleat $run $net --quiet --threads 1" \
  -n "P=2" "${mpirun[*]} -n 2 $pleat $run $net --quiet --threads 1" \
  -n "P=4" "${mpirun[*]} -n 4 $pleat $run $net --quiet --threads 1" > /dev/null

/usr/bin/python3 - "$work/h.json" "$regions" "${bytes[1]}" "${bytes[2]}" "${bytes[4]}" <<'EOF'
import json, sys
results = json.load(open(sys.argv[1]))["results"]
regions = int(sys.argv[2])
sent = {"P=1": sys.argv[3], "P=2": sys.argv[4], "P=4": sys.argv[5]}
base = results[0]["median"]
print(f"{'run':18} {'median s':>9} {'regions/s':>10} {'speed-up':>9} {'bytes/region':>13}")
for result in results:
    name, median = result["command"], result["median"]
    print(f"{name:18} {median:9.2f} {regions / median:10.0f} {base / median:9.2f} {sent.get(name, '-'):>13}")
EOF
