#!/usr/bin/env bash
# mpirun -n P pleat certify: the same result as alone, byte for byte apart
# from the timing keys, whether the value comes from the walk (--full-walk:
# every region walked, each rank reducing its own regions' rows and checking
# the kernel on them), from points first, or from points and then a walk
# that starts from their rows; the rows and kernel files are the same. A
# wrong candidate checked by one rank (a test hook) is not certified.
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
for ranks in 1 2 3 4; do
  certify_both "big$ranks" "$big" "$ranks" --full-walk --rows-out "$work/rows.$ranks.csv" --kernel-out "$work/kernel.$ranks.csv"
done
"$pleat" certify "$big" --quiet --full-walk --rows-out "$work/rows.alone.csv" --kernel-out "$work/kernel.alone.csv" > /dev/null ||
  fail "pleat certify --rows-out exited $?"
for ranks in 1 2 3 4; do
  cmp -s "$work/rows.alone.csv" "$work/rows.$ranks.csv" || fail "--rows-out differs for $ranks processes"
  cmp -s "$work/kernel.alone.csv" "$work/kernel.$ranks.csv" || fail "--kernel-out differs for $ranks processes"
done
value=$("$python" -c 'import json,sys; print(json.load(open(sys.argv[1]))["functional_dimension"])' "$work/big4.4.json")
[ "$value" != None ] || fail "the big network's value is not certified across 4 processes"

# Below the scaling bound the points stall and the walk adds the rest: every
# rank starts from the points' rows.
certify_both big_points "$big" 3 --rows-out "$work/rows.points.3.csv"
"$pleat" certify "$big" --quiet --rows-out "$work/rows.points.alone.csv" > /dev/null || fail "pleat certify exited $?"
cmp -s "$work/rows.points.alone.csv" "$work/rows.points.3.csv" || fail "--rows-out after points differs for 3 processes"
grep -q '"points_drawn": [1-9]' "$work/big_points.3.json" || fail "the points phase drew no points before the walk"

# Rank 2 of 3 checks a wrong candidate (PLEAT_TEST_ALTER_CANDIDATE_ON_RANK):
# its rejection alone must stop the value from being certified; bounds stay.
PLEAT_TEST_ALTER_CANDIDATE_ON_RANK=2 "${mpirun_cmd[@]}" -x PLEAT_TEST_ALTER_CANDIDATE_ON_RANK -n 3 "$pleat" certify "$big" \
  --quiet --json --full-walk --threads 1 > "$work/altered.json" 2> "$work/altered.err" ||
  fail "mpirun -n 3 pleat certify with a wrong candidate on rank 2 exited $? ($(cat "$work/altered.err"))"
"$python" - "$work/altered.json" "$work/big3.3.json" <<'PY' || fail "a candidate rank 2 rejected was certified"
import json, sys
altered, right = (json.load(open(path)) for path in sys.argv[1:])
assert right["certified"] and right["upper_bound"] < right["scaling_bound"], right
assert altered["certified"] is False and altered["functional_dimension"] is None, altered
assert altered["lower_bound"] == right["lower_bound"], altered  # proved by rank 0's rows
assert altered["upper_bound"] == altered["scaling_bound"], altered  # the extra directions were not proved
PY

# The default: points first, then the walk only if needed; and the text output.
certify_both fold_points "$source_dir/data/fold2d.json" 2
"$pleat" certify "$source_dir/data/sensor3d.json" --quiet > "$work/alone.out" || fail "pleat certify exited $?"
"${mpirun_cmd[@]}" -n 3 "$pleat" certify "$source_dir/data/sensor3d.json" --quiet --threads 1 > "$work/three.out" ||
  fail "mpirun -n 3 pleat certify exited $?"
cmp -s "$work/alone.out" "$work/three.out" || fail "certify's text differs across 3 processes:"$'\n'"$(diff "$work/alone.out" "$work/three.out")"

# certify --points stopped in its batch stage walks nothing; rank 0 must still
# release the others (they waited for a walk forever: the job never ended).
"$python" - "$work/points.txt" <<'PY' || fail "could not write the points"
import random, sys
random.seed(5)
with open(sys.argv[1], "w") as out:
    for _ in range(20000):
        out.write("%.6f,%.6f\n" % (random.uniform(-2, 2), random.uniform(-2, 2)))
PY
"$pleat" random --arch 2,15,15,15,1 --seed 1 -o "$work/wide.json" || fail "pleat random exited $?"
within 60 "${mpirun_cmd[@]}" -n 2 "$pleat" certify "$work/wide.json" --box -2.5,2.5 --points "$work/points.txt" \
  --time-limit 0.3 --quiet --json --threads 1 > "$work/batch.json" 2> "$work/batch.err" ||
  fail "mpirun -n 2 pleat certify --points --time-limit 0.3 exited $? ($(cat "$work/batch.err"))"
grep -q '"stop_reason": "time-limit"' "$work/batch.json" || fail "not stopped by the time limit: $(cat "$work/batch.json")"

echo "mpi certify: ok (value $value identical for 1, 2 and 4 processes; rows and kernel files too)"
