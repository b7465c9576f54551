#!/usr/bin/env bash
# pleat certify end to end: the --json keys of shared/spec/outputs.md
# (pleat-certify/1), --claim verdicts, --points (exact batch dimension, and a
# point on a bent hyperplane is exit 2 naming the point and the neuron),
# --rows-out/--kernel-out re-checked here with Python fractions, and the
# explanation of data/degenerate2d.json.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }
# json_eval FILE EXPRESSION: prints the Python expression evaluated with d = the document.

ramp=$source_dir/data/ramp1d.json
degenerate=$source_dir/data/degenerate2d.json

# ---- --json keys: exactly the spec's table (outputs.md, "pleat certify --json"),
# plus stop_reason (the walk's key of the same meaning, also printed here) and
# domain (as in pleat-walk/1).
"$pleat" certify "$ramp" --json -q > "$work/ramp.json" || fail "certify --json exited $?"
keys=$(json_eval "$work/ramp.json" '",".join(sorted(d.keys()))')
# Added since (docs/formats.md): certified_by, points_drawn, witness_points
# (certified from exact points without a walk), walk_seconds and points_seconds.
spec_keys="certified,certified_by,domain,early_stop,extra_kernel,extra_kernel_summary,format,functional_dimension,lower_bound,nonsmooth_regions,parametric_dimension,points_drawn,points_seconds,regions_contributing,regions_walked,scaling_bound,seconds,stop_reason,upper_bound,walk_complete,walk_seconds,witness_points"
[ "$keys" = "$spec_keys" ] || fail "certify --json keys: got $keys, spec $spec_keys"
# ramp1d (data/README.md): 1 -> 5 -> 1, D = 2*5 + 6 = 16; five distinct bends
# and nonzero outgoing weights: the generic shallow case, 2*5 + 1 = 11 (the
# derivation is in tests/enumerate/functional_dimension_test.cpp).
[ "$(json_eval "$work/ramp.json" 'd["format"]')" = "pleat-certify/1" ] || fail "format"
[ "$(json_eval "$work/ramp.json" 'd["parametric_dimension"]')" = 16 ] || fail "ramp1d D"
[ "$(json_eval "$work/ramp.json" 'd["scaling_bound"]')" = 11 ] || fail "ramp1d scaling bound"
[ "$(json_eval "$work/ramp.json" 'd["functional_dimension"]')" = 11 ] || fail "ramp1d value"
[ "$(json_eval "$work/ramp.json" '(d["lower_bound"], d["upper_bound"], d["certified"])')" = "(11, 11, True)" ] ||
  fail "ramp1d bounds"
[ "$(json_eval "$work/ramp.json" 'd["extra_kernel"]')" = "[]" ] || fail "ramp1d has no extra directions"

# ---- --claim on ramp1d (value 11, D = 16)
claim() {  # value -> "verdict|reason"; the exit status is 0 for consistent, else 1
  "$pleat" certify "$ramp" --json -q --claim "$1" > "$work/claim.json"
  status=$?
  verdict=$(json_eval "$work/claim.json" 'd["claim"]["verdict"]')
  expected=1; [ "$verdict" = consistent ] && expected=0
  [ "$status" = "$expected" ] || fail "--claim $1 ($verdict) exited $status, expected $expected"
  json_eval "$work/claim.json" 'd["claim"]["verdict"] + "|" + d["claim"]["reason"]'
}
out=$(claim 11); expect_contains "$out" "consistent|" "--claim 11"
out=$(claim 9);  expect_contains "$out" "too-low|" "--claim 9"; expect_contains "$out" "by 2" "--claim 9"
out=$(claim 12); expect_contains "$out" "impossible|" "--claim 12"; expect_contains "$out" "scaling bound" "--claim 12"
out=$(claim 17); expect_contains "$out" "impossible|" "--claim 17"; expect_contains "$out" "parametric dimension 16" "--claim 17"
out=$(claim 0);  expect_contains "$out" "too-low|" "--claim 0"
[ "$(json_eval "$work/claim.json" 'd["claim"]["value"]')" = 0 ] || fail "claim value echoed"
out=$("$pleat" certify "$ramp" -q --claim 9); [ $? = 1 ] || fail "human --claim 9 must exit 1"
expect_contains "$out" "too-low" "human --claim"
"$pleat" certify "$ramp" -q --claim -3 > /dev/null 2>&1 && fail "--claim -3 accepted"

# ---- --points: bends of ramp1d at -1/2, -1/3, 3/8, 2/3, 25/6 (data/README.md).
# Two points in each of the 6 intervals: 12 Jacobian rows, rank 11.
printf '%s\n' "# two per interval" -1 -2 -5/12 -0.45 0 1/10 1/2 3/5 1 4 5 10 > "$work/good.csv"
out=$("$pleat" certify "$ramp" --points "$work/good.csv" --json) || fail "--points exited $?"
echo "$out" > "$work/batch.json"
[ "$(json_eval "$work/batch.json" 'd["batch_functional_dimension"]')" = 11 ] || fail "batch at 12 points: $out"
printf '%s\n' -1 -2 > "$work/one_region.csv"
out=$("$pleat" certify "$ramp" --points "$work/one_region.csv") || fail "--points exited $?"
expect_contains "$out" "batch functional dimension 2" "two points in one interval give its 2 rows"
# 3/8 is neuron 1's bend (-0.8 x + 0.3 = 0): the third point, on line 3.
printf '%s\n' -1 5 3/8 0 > "$work/bent.csv"
err=$("$pleat" certify "$ramp" --points "$work/bent.csv" 2>&1 >/dev/null)
status=$?
[ "$status" = 2 ] || fail "point on a bent hyperplane: exit $status, expected 2 ($err)"
expect_contains "$err" "bent.csv:3 (point 3)" "the point is named"
expect_contains "$err" "neuron 1" "the neuron is named"
printf '%s\n' 1,2 > "$work/wrong_dim.csv"
"$pleat" certify "$ramp" --points "$work/wrong_dim.csv" > /dev/null 2>&1
[ $? = 2 ] || fail "a 2-D point for a 1-input network must be exit 2"

# ---- degenerate2d: 17 with 7 named directions (derivation in
# tests/enumerate/functional_dimension_test.cpp).
"$pleat" certify "$degenerate" --json -q --rows-out "$work/rows.csv" --kernel-out "$work/kernel.csv" \
  > "$work/degenerate.json" || fail "certify degenerate2d exited $?"
[ "$(json_eval "$work/degenerate.json" '(d["functional_dimension"], d["scaling_bound"], len(d["extra_kernel"]))')" \
  = "(17, 24, 7)" ] || fail "degenerate2d: $(cat "$work/degenerate.json")"
[ "$(json_eval "$work/degenerate.json" 'sorted(set((e["mechanism"], tuple(e["neurons"])) for e in d["extra_kernel"]))')" \
  = "[('dead-neuron', (5,)), ('duplicate-neurons', (1, 2))]" ] || fail "degenerate2d mechanisms"
out=$("$pleat" certify "$degenerate" -q) || fail "human certify exited $?"
expect_contains "$out" "functional dimension  17  certified" "human summary"
# The terminal shows the directions summarised by mechanism with counts
# (5 for the dead neuron: its 3 incoming weights, bias and outgoing weight;
# 2 for the duplicates: one per downstream neuron), never the vectors.
expect_contains "$out" "dead neuron 5: 5 directions" "human explanation"
expect_contains "$out" "duplicate neurons 1, 2: 2 directions" "human explanation"
case "$out" in *"W2[1,1]"*) fail "the terminal lists a full direction: $out" ;; esac
[ "$(json_eval "$work/degenerate.json" '[(e["mechanism"], e["neurons"], e["directions"]) for e in d["extra_kernel_summary"]]')" \
  = "[('duplicate-neurons', [1, 2], 2), ('dead-neuron', [5], 5)]" ] || fail "extra_kernel_summary"

# The written rows and kernel, re-checked exactly with Python fractions:
# kernel has D - 17 = 14 rows and every row times every kernel vector is 0;
# the rows have rank 17 and the kernel rank 14 (sympy: exact_rank).
"$python" - "$work/rows.csv" "$work/kernel.csv" <<'PY' || fail "rows/kernel re-check"
import sys
from fractions import Fraction
def read(path):
    return [[Fraction(x) for x in line.strip().split(",")] for line in open(path) if line.strip()]
rows, kernel = read(sys.argv[1]), read(sys.argv[2])
assert all(len(r) == 31 for r in rows + kernel), "31 columns"
assert len(kernel) == 14, len(kernel)
for r in rows:
    for k in kernel:
        assert sum(a * b for a, b in zip(r, k)) == 0, "a kernel vector is not orthogonal to a row"
PY
[ "$(exact_rank "$work/rows.csv")" = 17 ] || fail "the rows have rank $(exact_rank "$work/rows.csv"), expected 17"
[ "$(exact_rank "$work/kernel.csv")" = 14 ] || fail "the kernel has rank $(exact_rank "$work/kernel.csv"), expected 14"

# ---- an output ReLU whose zero level hides both bends (tests/data): value 4
# below the scaling bound 5, and the one extra direction (move b2 while both
# hidden biases follow) has no named mechanism; derivation in
# tests/enumerate/functional_dimension_test.cpp.
hidden=$source_dir/tests/data/fd_relu_output_hidden_middle.json
"$pleat" certify "$hidden" --json -q > "$work/hidden.json" || fail "certify hidden-middle exited $?"
[ "$(json_eval "$work/hidden.json" '(d["parametric_dimension"], d["scaling_bound"], d["functional_dimension"])')" \
  = "(7, 5, 4)" ] || fail "hidden-middle: $(cat "$work/hidden.json")"
[ "$(json_eval "$work/hidden.json" '[(e["vector"], e["mechanism"]) for e in d["extra_kernel"]]')" \
  = "[({'b1[0]': '1', 'b1[1]': '1', 'b2[0]': '-1'}, None)]" ] || fail "hidden-middle extra direction"
out=$("$pleat" certify "$hidden" -q) || fail "human certify exited $?"
expect_contains "$out" "no recognised mechanism: 1 direction" "unnamed mechanism"

# ---- too few regions is a mechanism: ramp1d on (0,1) has 3 regions of 2 rows
# each, 6 < scaling bound 11 (bends at 3/8 and 2/3 inside, data/README.md).
out=$("$pleat" certify "$ramp" --box 0,1 -q) || fail "certify ramp1d on (0,1) exited $?"
expect_contains "$out" "rank limited by the number of regions: 3 smooth regions x 2 rows per region = 6 < scaling bound 11" \
  "region-count mechanism"

# ---- a run cut short never says certified (fold2d has 84 regions).
"$pleat" certify "$source_dir/data/fold2d.json" --json -q --full-walk --time-limit 0.000001 > "$work/cut.json" ||
  fail "time-limited certify exited $?"
if [ "$(json_eval "$work/cut.json" 'd["walk_complete"]')" = False ]; then
  [ "$(json_eval "$work/cut.json" '(d["certified"], d["functional_dimension"], d["lower_bound"] <= d["upper_bound"])')" \
    = "(False, None, True)" ] || fail "a cut run: $(cat "$work/cut.json")"
fi

# ---- a walk's lower bound is exportable: the interior points of the walked
# regions that raised the rank are witnesses too, one per contributing region,
# and certifying with them re-checks the rank of their regions' rows (exact, in
# the batch report) as the lower bound. degenerate2d is below its scaling bound,
# so the walk runs after the points stall.
degenerate=$source_dir/data/degenerate2d.json
"$pleat" certify "$degenerate" --json -q --witness-out "$work/walk-witnesses.txt" > "$work/walked.json" ||
  fail "certify degenerate2d exited $?"
[ "$(json_eval "$work/walked.json" '(d["certified_by"], len(d["witness_points"]) == d["regions_contributing"] > 0)')" \
  = "('kernel', True)" ] || fail "walk witnesses: $(head -c 600 "$work/walked.json")"
lower=$(json_eval "$work/walked.json" 'd["lower_bound"]')
"$pleat" certify "$degenerate" --points "$work/walk-witnesses.txt" --json -q > "$work/rechecked.json" ||
  fail "certify --points with the walk's witnesses exited $?"
[ "$(json_eval "$work/rechecked.json" 'd["regions_rank"]')" = "$lower" ] ||
  fail "the walk's witnesses re-check to $(json_eval "$work/rechecked.json" 'd["regions_rank"]'), not $lower"

echo "certify: all checks passed"
