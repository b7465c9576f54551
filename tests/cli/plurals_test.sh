#!/usr/bin/env bash
# Counts of one are printed in the singular ("1 region", "1 point"), not
# "1 regions": a view inside one region, a walk cut to one region, a batch of
# one point. Each line below used to print the plural.
set -u
source "$(dirname "$0")/lib.sh"
fold=$source_dir/data/fold2d.json
ramp=$source_dir/data/ramp1d.json

out=$("$pleat" draw "$fold" --view 0,1/1000,0,1/1000 --out "$work/one.svg" -q) || fail "draw exited $?"
expect_contains "$out" "complex     1 region, 4 edges, 4 vertices (exact" "draw, one region"
out=$("$pleat" draw "$ramp" --view 0,1/1000 --out "$work/one.svg" -q) || fail "draw 1-D exited $?"
expect_contains "$out" "graph       1 piece, 0 breakpoints (exact" "draw, one piece"

out=$("$pleat" walk "$fold" --max-regions 1 -o "$work/r.jsonl" --points-out "$work/p.txt" -q) || fail "walk exited $?"
# A walk cut short says its region file misses regions (it read "(1 region line)",
# as for a whole walk of one region).
expect_contains "$out" "(1 region line, one per region found; regions are missing)" "walk -o, one region"
expect_contains "$out" "(1 interior point, one per region found)" "walk --points-out, one region"
out=$("$pleat" walk "$fold" --box 0,1/1000 -o "$work/whole.jsonl" -q) || fail "walk of a tiny box exited $?"
expect_contains "$out" "written     $work/whole.jsonl (1 region line)" "walk -o, a whole walk of one region"

out=$("$pleat" sample "$fold" --batch 1 --seed 1 -q) || fail "sample exited $?"
expect_contains "$out" "Jacobian at 1 point, 1 x 59;" "sample, a batch of one"

echo "1/3 1/7" > "$work/one.txt"
out=$("$pleat" certify "$fold" --box -3,3 --points "$work/one.txt" -q) || fail "certify --points exited $?"
expect_contains "$out" "coefficient-block rows of the 1 region:" "certify --points, one region"
out=$("$pleat" certify "$source_dir/tests/data/zero_quadrant2d.json" --full-walk -q) || fail "certify exited $?"
expect_contains "$out" "left out              1 non-smooth region (a neuron" "certify, one non-smooth region"
# ramp1d's last piece starts at 25/6: a view up to 4 leaves exactly it out.
"$pleat" walk "$ramp" -o "$work/ramp.jsonl" -q > /dev/null || fail "walk -o exited $?"
err=$("$pleat" draw "$ramp" --from "$work/ramp.jsonl" --view -2,4 --out "$work/ramp.svg" -q 2>&1 > /dev/null) ||
  fail "draw --from exited $?"
expect_contains "$err" "1 of 6 regions lies outside the view" "draw, one region outside"
# A network file whose one-output layer has two biases, or a one-input layer
# rows of two: "1 number", "1 neuron" (they read "expected 1 numbers", "1 neurons").
"$python" - "$work/bias.json" "$work/cols.json" <<'PY'
import json, sys
json.dump({"format": "pleat-network/1", "input_dim": 2, "layers": [
    {"weights": [["1", "2"]], "bias": ["0", "1"], "activation": "identity"}]}, open(sys.argv[1], "w"))
json.dump({"format": "pleat-network/1", "input_dim": 1, "layers": [
    {"weights": [["1"]], "bias": ["0"], "activation": "relu"},
    {"weights": [["1", "2"]], "bias": ["0"], "activation": "identity"}]}, open(sys.argv[2], "w"))
PY
err=$("$pleat" eval "$work/bias.json" --at 0,0 2>&1 > /dev/null); [ $? -eq 2 ] || fail "eval of two biases for one row did not exit 2"
expect_contains "$err" "bias: expected 1 number, found 2" "one bias expected"
err=$("$pleat" eval "$work/cols.json" --at 0 2>&1 > /dev/null); [ $? -eq 2 ] || fail "eval of a row of two after width 1 did not exit 2"
expect_contains "$err" "weights[0]: expected 1 number, found 2 (layers[0] has 1 neuron)" "one neuron before"
echo "plurals: ok"
