#!/usr/bin/env bash
# mpirun -n P pleat walk: for P = 1..4 (oversubscribed on a small machine) the
# same bytes as the single-process walk: region file, --json apart from its
# timing keys, the human summary apart from its time line, --certificates
# files; pleat verify accepts the region file; ranks other than 0 print
# nothing (their output would show up twice in mpirun's standard output).
set -u
source "$(dirname "$0")/../cli/lib.sh"
source "$(dirname "$0")/lib.sh"

# walk_both NAME NET [OPTIONS...]: the walk alone and across 1..4 processes;
# every output must be byte-identical (timing apart).
walk_both() {
  local name=$1 net=$2
  shift 2
  "$pleat" walk "$net" --quiet --json --patterns -o "$work/$name.alone.jsonl" "$@" > "$work/$name.alone.json" ||
    fail "$name: pleat walk exited $?"
  for ranks in ${ranks_list:-1 2 3 4}; do
    "${mpirun_cmd[@]}" -n "$ranks" "$pleat" walk "$net" --quiet --json --patterns --threads 1 \
      -o "$work/$name.$ranks.jsonl" "$@" > "$work/$name.$ranks.json" 2> "$work/$name.$ranks.err" ||
      fail "$name: mpirun -n $ranks pleat walk exited $? ($(cat "$work/$name.$ranks.err"))"
    cmp -s "$work/$name.alone.jsonl" "$work/$name.$ranks.jsonl" ||
      fail "$name: the region file of $ranks processes differs from the single-process one"
    diff <(strip_timing "$work/$name.alone.json") <(strip_timing "$work/$name.$ranks.json") > "$work/diff" ||
      fail "$name: --json of $ranks processes differs:"$'\n'"$(head -20 "$work/diff")"
  done
}

# A random network with a few thousand regions (2764, counted by pleat alone
# below; what matters is that there are thousands, over many levels).
big=$work/big.json
"$pleat" random --arch 2,40,30,1 --seed 5 -o "$big" || fail "pleat random exited $?"
walk_both big "$big"
regions=$("$python" -c 'import json,sys; print(json.load(open(sys.argv[1]))["regions"])' "$work/big.alone.json")
[ "$regions" -ge 2000 ] || fail "expected thousands of regions, got $regions"
grep -q '"certified": true' "$work/big.3.json" || fail "the walk across 3 processes is not certified"

# Certificates travel whole: the --certificates file is the same, and pleat
# verify accepts it (a smaller network: every region's certificates are kept).
medium=$work/medium.json
"$pleat" random --arch 2,10,10,1 --seed 5 -o "$medium" || fail "pleat random exited $?"
ranks_list="2 3" walk_both medium "$medium" --certificates --box -3,3
"$pleat" verify "$medium" "$work/medium.3.jsonl" > "$work/verify.out" ||
  fail "pleat verify rejects the 3-process region file: $(cat "$work/verify.out")"

# The example networks and degenerate ones (coincident, concurrent and dead
# neurons: branched crossings, 'z' states), 2 and 3 inputs.
ranks_list="2 3"
for net in data/fold2d.json data/sensor3d.json tests/data/coincident2d.json tests/data/concurrent2d.json \
  tests/data/dead2d.json tests/data/five_coincident2d.json tests/data/zero_quadrant2d.json; do
  walk_both "$(basename "$net" .json)" "$source_dir/$net"
done

# The human summary (and --points-out) are the same too, time apart.
"$pleat" walk "$big" --quiet --points-out "$work/points.txt" > "$work/alone.out" || fail "pleat walk exited $?"
mv "$work/points.txt" "$work/alone.txt"
"${mpirun_cmd[@]}" -n 4 "$pleat" walk "$big" --quiet --threads 1 --points-out "$work/points.txt" > "$work/four.out" ||
  fail "mpirun -n 4 pleat walk exited $?"
diff <(strip_time_line "$work/alone.out") <(strip_time_line "$work/four.out") > "$work/diff" ||
  fail "the summary of 4 processes differs:"$'\n'"$(cat "$work/diff")"
cmp -s "$work/alone.txt" "$work/points.txt" || fail "--points-out differs between 1 and 4 processes"

# A command that does not run across processes runs once, on rank 0.
"${mpirun_cmd[@]}" -n 3 "$pleat" eval "$source_dir/data/fold2d.json" --at 0,0 > "$work/eval.out" || fail "mpirun pleat eval exited $?"
diff <("$pleat" eval "$source_dir/data/fold2d.json" --at 0,0) "$work/eval.out" > /dev/null ||
  fail "pleat eval under mpirun -n 3 printed something else than once alone:"$'\n'"$(cat "$work/eval.out")"

echo "mpi walk: ok ($regions regions identical for 1-4 processes; example and degenerate networks)"
