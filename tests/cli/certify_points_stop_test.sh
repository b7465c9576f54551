#!/usr/bin/env bash
# certify --points honours --time-limit and Ctrl-C in its batch stage. It used
# to build every point's exact Jacobian and take rank_exact of the stack with
# no stop polled: 20 000 points on a 2,15,15,15,1 network ran 37 s under
# --time-limit 1 (and as long after a SIGINT), then walked with a fresh
# limit. Now the limit covers the whole command and a stop in the batch stage
# prints proved bounds (that contain the value an unstopped run proves),
# "time-limit" / "interrupted", nothing certified, exit 0 / 130. The wall
# bounds (15 s) only catch the old behaviour; generous for a loaded machine.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }

# 2,15,15,15,15,1: 20 000 points take ~2 s there (~1 s on 2,15,15,15,1 since
# the span proof), so the stops at 0.3 s act in the batch stage.
"$pleat" random --arch 2,15,15,15,15,1 --seed 1 -o "$work/net.json" || fail "random"
"$python" - "$work/points.txt" <<'PY' || fail "could not write the points"
import random, sys
random.seed(5)
with open(sys.argv[1], "w") as out:
    for _ in range(20000):
        out.write("%.6f,%.6f\n" % (random.uniform(-2, 2), random.uniform(-2, 2)))
PY
run=("$pleat" certify "$work/net.json" --box -2.5,2.5 --points "$work/points.txt" --threads 1 -q)

# bounds FILE REASON: the batch stage stopped for REASON with proved bounds
# around the unstopped run's values, and nothing certified.
bounds() {
  "$python" - "$1" "$2" "$value" "$regions" <<'PY' || fail "$2: not bounds: $(head -c 600 "$1")"
import json, sys
d = json.load(open(sys.argv[1]))
value, regions = int(sys.argv[3]), int(sys.argv[4])
assert d["format"] == "pleat-batch/1" and d["stop_reason"] == sys.argv[2], d
assert d["batch_lower_bound"] <= value <= d["batch_upper_bound"] <= d["scaling_bound"], d
assert d["regions_rank_lower_bound"] <= regions <= d["regions_rank_upper_bound"], d
if d["batch_functional_dimension"] is not None:
    assert d["batch_lower_bound"] == d["batch_upper_bound"] == d["batch_functional_dimension"], d
assert not d["certified"] and d["functional_dimension"] is None, d
assert d["points_checked"] <= d["points"] == 20000, d
PY
}

within 15 "${run[@]}" --time-limit 0.3 --json > "$work/limit.json"
status=$?
[ $status -eq 0 ] || fail "--time-limit 0.3 exited $status"
within 60 "${run[@]}" --json > "$work/full.json" || fail "the unstopped run exited $?"
value=$(json_eval "$work/full.json" 'd["batch_functional_dimension"]')
regions=$(json_eval "$work/full.json" 'd["regions_rank"]')
[ "$(json_eval "$work/full.json" 'd["stop_reason"]')" = None ] || fail "unstopped run: $(cat "$work/full.json")"

bounds "$work/limit.json" time-limit

within 15 interrupt_when_ready 0.3 "${run[@]}" --json > "$work/int.json"
status=$?
[ $status -eq 130 ] || fail "certify --points under SIGINT exited $status, expected 130"
bounds "$work/int.json" interrupted

out=$(within 15 "${run[@]}" --time-limit 0.3) || fail "human output exited $?"
expect_contains "$out" "batch functional dimension between " "human output"
expect_contains "$out" "(stopped: time-limit; proved bounds)" "human output"
case "$out" in *"  certified"*) fail "human output claims certified: $out" ;; esac

# --rows-out of a run stopped in the batch stage: no region was walked, and the
# file's first line says so (it said "the exact rows of the 0 regions that
# contributed before it ended, of rank 0, the proved lower bound", as if the
# walk had run and found nothing), and so does stderr.
within 15 "${run[@]}" --time-limit 0.3 --rows-out "$work/rows.csv" --witness-out "$work/witnesses.txt" > /dev/null \
  2> "$work/rows.err" || fail "--rows-out under --time-limit exited $?"
partial="# partial: the run was not certified (stopped: time-limit in the --points batch stage, before the walk); no region was walked, so no rows: the batch's proved bounds are in the output, not here"
[ "$(cat "$work/rows.csv")" = "$partial" ] || fail "--rows-out stopped in the batch stage: $(head -c 300 "$work/rows.csv")"
grep -qF "pleat: $work/rows.csv: ${partial#\# }" "$work/rows.err" || fail "stderr: $(cat "$work/rows.err")"
# --witness-out there: no points were drawn, and the first line says so (the
# file held only the comment that witnesses follow).
partial="# partial: the run was not certified (stopped: time-limit in the --points batch stage, before the walk); no points were drawn, so none follow: the batch's proved bounds are in the output, not here"
[ "$(head -n 1 "$work/witnesses.txt")" = "$partial" ] || fail "--witness-out stopped in the batch stage: $(head -c 300 "$work/witnesses.txt")"
grep -qF "pleat: $work/witnesses.txt: ${partial#\# }" "$work/rows.err" || fail "stderr: $(cat "$work/rows.err")"

# --claim against bounds: a value outside them is judged, one inside is consistent.
out=$(within 15 "${run[@]}" --time-limit 0.3 --claim 1)
[ $? -eq 1 ] || fail "--claim 1 under bounds: exit not 1: $out"
expect_contains "$out" "too-low: below the proved lower bound" "claim under bounds"
echo "certify --points: time limit and interrupt act in the batch stage, bounds only"
