#!/usr/bin/env bash
# pleat eval end to end: the demo point of data/fold2d.json, both ways of
# writing a negative coordinate, a point on a bent hyperplane ('='), --json,
# and standard input.
set -u
source "$(dirname "$0")/lib.sh"

fold=$source_dir/data/fold2d.json
if [ ! -f "$fold" ]; then
  fail "data/fold2d.json is missing"
fi

# Reference values from data/README.md (computed there with Python fractions,
# not by pleat): at (1/2, -1/3) the pattern is 001100|11101, output -1519/1000.
out=$("$pleat" eval "$fold" --at 1/2,-1/3) || fail "eval exited $?"
expect_contains "$out" "pattern  001100|11101" "demo point"
expect_contains "$out" '"-1519/1000"' "demo point"
expect_contains "$out" "-1.519" "double approximation beside the exact output"

# 0.5 and -0.333... as decimals: 0.5 is exactly 1/2 and gives the same result.
out_decimal=$("$pleat" eval "$fold" --at 0.5,-1/3) || fail "eval with 0.5 exited $?"
[ "$out_decimal" = "$out" ] || fail "--at 0.5,-1/3 and --at 1/2,-1/3 differ"

# A leading minus sign is a number, not an option, in every position.
a=$("$pleat" eval "$fold" --at=-1/3,2) || fail "--at=-1/3,2 exited $?"
b=$("$pleat" eval "$fold" --at -1/3,2) || fail "--at -1/3,2 exited $?"
c=$("$pleat" eval --at -1/3,2 "$fold") || fail "--at -1/3,2 before the file exited $?"
d=$("$pleat" eval "$fold" --at -.5e0,-2) || fail "--at -.5e0,-2 exited $?"
[ "$a" = "$b" ] || fail "--at=-1/3,2 and --at -1/3,2 differ"
[ "$a" = "$c" ] || fail "option before the file gives a different answer"
expect_contains "$a" 'point    ["-1/3", "2"]' "negative coordinate"
expect_contains "$d" 'point    ["-1/2", "-2"]' "negative decimal coordinates"

# Neuron 0 of fold2d is -1.1 x + 0.3 y + 0.2: zero exactly at (0, -2/3).
out=$("$pleat" eval "$fold" --at 0,-2/3) || fail "eval on a hyperplane exited $?"
expect_contains "$out" "pattern  =" "point on neuron 0's bent hyperplane"
expect_contains "$out" "neuron 0" "point on neuron 0's bent hyperplane"
# A nearby point off the hyperplane has no '='.
out=$("$pleat" eval "$fold" --at 0,-2/3+0 2>&1) && fail "a malformed number was accepted"
out=$("$pleat" eval "$fold" --at 1/1000,-2/3) || fail "eval near the hyperplane exited $?"
case "$out" in *"pattern  "*=*) fail "'=' printed off the hyperplane: $out" ;; esac

# A network of our own with an output ReLU: 1 -> 2 -> 1, hidden x and -x + 1,
# output relu(h0 - h1); at x = 1/2 both hidden are 1/2 and the output is 0.
cat > "$work/tent.json" <<'JSON'
{ "format": "pleat-network/1", "input_dim": 1,
  "layers": [ { "weights": [["1"], ["-1"]], "bias": ["0", "1"] },
              { "weights": [["1", "-1"]], "bias": ["0"], "activation": "relu" } ] }
JSON
out=$("$pleat" eval "$work/tent.json" --at 1/2) || fail "eval of the tent exited $?"
expect_contains "$out" "pattern  11|=" "output ReLU at its kink"
expect_contains "$out" '["0"]' "output ReLU at its kink"

# --json: the documented keys, rationals as strings.
json=$("$pleat" eval "$fold" --at 1/2,-1/3 --json) || fail "eval --json exited $?"
if [ -x /usr/bin/python3 ]; then
  /usr/bin/python3 - "$json" <<'PY' || fail "eval --json does not have the documented shape"
import json, sys
doc = json.loads(sys.argv[1])
assert doc["format"] == "pleat-eval/1", doc
assert doc["point"] == ["1/2", "-1/3"], doc["point"]
assert doc["pattern"] == "001100|11101", doc["pattern"]
assert doc["output"] == ["-1519/1000"], doc["output"]
assert abs(doc["output_double"][0] + 1.519) < 1e-15
assert [len(layer) for layer in doc["preactivations"]] == [6, 5, 1]
assert all(isinstance(v, str) for layer in doc["preactivations"] for v in layer)
assert doc["preactivations"][-1] == doc["output"]
assert doc["zero_neurons"] == []
PY
else
  expect_contains "$json" '"format": "pleat-eval/1"' "eval --json"
fi

# Standard input.
out_stdin=$("$pleat" eval - --at 1/2,-1/3 < "$fold") || fail "eval - exited $?"
expect_contains "$out_stdin" "pattern  001100|11101" "network read from standard input"
echo "eval: ok"
