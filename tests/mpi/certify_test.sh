#!/usr/bin/env bash
# mpirun -n P pleat certify: the same result as alone, byte for byte apart
# from the timing keys, whether the value comes from the walk (--full-walk:
# every region walked; rows, kernel and proof on rank 0) or from points
# first; the rows and kernel files are the same.
set -u
source "$(dirname "$0")/../cli/lib.sh"
source "$(dirname "$0")/lib.sh"

# certify_both NAME NET RANKS [OPTIONS...]
certify_both() {
  local name=$1 net=$2 ranks=$3
  shift 3
  "$pleat" certify "$net" --quiet --json "$@" > "$work/$name.alone.json" || fail "$name: pleat certify exited $?"
  "${mpirun_cmd[@]}" -n "$ranks" "$pleat" certify "$net" --quiet --json --threads 1 "$@" \
    > "$work/$name.$ranks.json" 2> "$work/$name.err" ||
    fail "$name: mpirun -n $ranks pleat certify exited $? ($(cat "$work/$name.err"))"
  diff <(strip_timing "$work/$name.alone.json") <(strip_timing "$work/$name.$ranks.json") > "$work/diff" ||
    fail "$name: certify across $ranks processes differs:"$'\n'"$(head -20 "$work/diff")"
}

# A network whose value needs the walk and an extra kernel direction (a dead
# neuron), and a random one with hundreds of regions (415) whose value is
# below the scaling bound (an exact kernel checked on every region).
certify_both dead "$source_dir/tests/data/dead2d.json" 3 --full-walk
grep -q '"certified": true' "$work/dead.3.json" || fail "dead2d is not certified across 3 processes"
big=$work/big.json
"$pleat" random --arch 2,16,12,1 --seed 5 -o "$big" || fail "pleat random exited $?"
for ranks in 1 2 4; do
  certify_both "big$ranks" "$big" "$ranks" --full-walk --rows-out "$work/rows.$ranks.csv" --kernel-out "$work/kernel.$ranks.csv"
done
"$pleat" certify "$big" --quiet --full-walk --rows-out "$work/rows.alone.csv" --kernel-out "$work/kernel.alone.csv" > /dev/null ||
  fail "pleat certify --rows-out exited $?"
for ranks in 1 2 4; do
  cmp -s "$work/rows.alone.csv" "$work/rows.$ranks.csv" || fail "--rows-out differs for $ranks processes"
  cmp -s "$work/kernel.alone.csv" "$work/kernel.$ranks.csv" || fail "--kernel-out differs for $ranks processes"
done
value=$("$python" -c 'import json,sys; print(json.load(open(sys.argv[1]))["functional_dimension"])' "$work/big4.4.json")
[ "$value" != None ] || fail "the big network's value is not certified across 4 processes"

# The default: points first, then the walk only if needed; and the text output.
certify_both fold_points "$source_dir/data/fold2d.json" 2
"$pleat" certify "$source_dir/data/sensor3d.json" --quiet > "$work/alone.out" || fail "pleat certify exited $?"
"${mpirun_cmd[@]}" -n 3 "$pleat" certify "$source_dir/data/sensor3d.json" --quiet --threads 1 > "$work/three.out" ||
  fail "mpirun -n 3 pleat certify exited $?"
cmp -s "$work/alone.out" "$work/three.out" || fail "certify's text differs across 3 processes:"$'\n'"$(diff "$work/alone.out" "$work/three.out")"

echo "mpi certify: ok (value $value identical for 1, 2 and 4 processes; rows and kernel files too)"
