#!/usr/bin/env bash
# scripts/check_bundle.py against bundles forged around a true proof: the
# proof's numbers still check, but the document says something else than the
# checker checked, or the network is not the reader's.
#  - A hidden layer marked "linear" (pleat refuses it; the checker took every
#    hidden layer as ReLU and printed CHECKED for a function the document does
#    not describe), an unknown key in the network, a key written twice (json
#    keeps the last value, a reader may take the first), a number spelled in
#    a way pleat never writes, a box with fewer intervals than inputs, a key
#    the checker does not know at the top or in a bound.
#  - An empty region list marked every_region (closed under crossings, it
#    let any D vectors stand as the kernel: functional dimension 0).
#  - --network NET.json: the bundle's network must be that file's (a bundle of
#    another network, or with one weight changed, is rejected; the file's own
#    bundle is accepted and said to be equal).
#  - The report names the domain the value holds on.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }
checker=$source_dir/scripts/check_bundle.py
fold=$source_dir/data/fold2d.json

"$pleat" certify "$fold" --box -2,2 -q --bundle "$work/fold.json" > /dev/null || fail "certify fold2d exited $?"
"$pleat" certify "$source_dir/tests/data/dead2d.json" -q --bundle "$work/dead.json" > /dev/null ||
  fail "certify dead2d exited $?"

"$python" "$checker" "$work/fold.json" > "$work/fold.out" || fail "the true bundle: $(cat "$work/fold.out")"
grep -qx "domain       box (-2,2)x(-2,2)" "$work/fold.out" || fail "the domain is not named: $(cat "$work/fold.out")"
"$python" "$checker" --network "$fold" "$work/fold.json" > "$work/same.out" ||
  fail "--network with its own network: $(cat "$work/same.out")"
grep -q "^network .*, equal to $fold (every weight and bias)$" "$work/same.out" || fail "$(cat "$work/same.out")"

"$python" - "$work" <<'PY' || fail "could not write the forged bundles"
import json, sys
work = sys.argv[1]
def load(name): return json.load(open(f"{work}/{name}.json"))
def save(doc, name): open(f"{work}/f_{name}.json", "w").write(json.dumps(doc))

doc = load("fold"); assert len(doc["network"]["layers"]) == 3
doc["network"]["layers"][1]["activation"] = "linear"; save(doc, "linear_hidden")
doc = load("fold"); doc["network"]["layers"][0]["scale"] = "2"; save(doc, "unknown_key")
doc = load("fold"); doc["network"]["layers"][2]["activation"] = "tanh"; save(doc, "tanh_output")
doc = load("fold"); doc["domain"]["box"] = doc["domain"]["box"][:1]; save(doc, "short_box")
doc = load("fold"); doc["domain"]["box"][0] = ["2", "-2"]; save(doc, "reversed_box")
doc = load("fold"); doc["network"]["layers"][0]["bias"][0] = "\u0661/5"; save(doc, "arabic_digit")  # 1/5 in other digits
# A key written twice: the value a reader sees first is not the one json keeps.
text = json.dumps(load("fold"))
value = load("fold")["functional_dimension"]
open(f"{work}/f_twice.json", "w").write(
    text.replace('"functional_dimension": ', f'"functional_dimension": {value + 5}, "functional_dimension": ', 1))
# An empty list said to be every region: closed under crossings, so a kernel of
# all D unit vectors annihilated "every" region and value 0 was CHECKED.
doc = load("fold"); D = doc["parametric_dimension"]
doc.update(every_region=True, regions=[], functional_dimension=0, lower_bound={"rows": [], "columns": []},
           upper_bound={"method": "kernel", "kernel": [[str(int(i == j)) for j in range(D)] for i in range(D)]})
save(doc, "empty_list")
# A key the checker does not know (it was skipped, and CHECKED printed beside
# whatever it claimed): at the top, in a bound, in a minor row.
doc = load("fold"); doc["domain_of_validity"] = "R^2"; save(doc, "unknown_top")
doc = load("fold"); doc["upper_bound"]["note"] = "holds on R^2"; save(doc, "unknown_upper")
doc = load("fold"); doc["lower_bound"]["rows"][0]["regions"] = "all"; save(doc, "unknown_row")
# The true fold2d bundle, its network one weight off: with --network only.
doc = load("fold"); doc["network"]["layers"][2]["weights"][0][0] = "7"; save(doc, "other_weight")
PY

expect_reject() {
  local name=$1 status=$2 message=$3
  shift 3
  "$python" "$checker" "$@" "$work/f_$name.json" > "$work/f_$name.out" 2>&1
  local got=$?
  [ $got = "$status" ] || fail "forged $name: exit $got, expected $status: $(cat "$work/f_$name.out")"
  grep -q "$message" "$work/f_$name.out" || fail "forged $name: $(cat "$work/f_$name.out")"
}
expect_reject linear_hidden 1 "^REJECTED .*network.layers\[1\].activation: 'linear'"
expect_reject unknown_key 1 "^REJECTED .*network.layers\[0\]: a layer has weights, bias and activation only"
expect_reject tanh_output 1 "^REJECTED .*network.layers\[2\].activation: 'tanh'"
expect_reject short_box 1 "^REJECTED .*domain: a box needs 2 intervals, one per input"
expect_reject reversed_box 1 "^REJECTED .*the lower end 2 is not below the upper end -2"
expect_reject arabic_digit 1 "^REJECTED .*not a number as pleat writes one"
expect_reject empty_list 1 "^REJECTED .*every_region: the list is empty, but the domain holds at least one region"
expect_reject twice 2 "cannot read (the key 'functional_dimension' is written twice in one object)"
expect_reject unknown_top 1 "^REJECTED .*the bundle: unknown key 'domain_of_validity' (not checked; pleat writes format, network"
expect_reject unknown_upper 1 "^REJECTED .*upper_bound: unknown key 'note' (not checked; pleat writes method"
expect_reject unknown_row 1 "^REJECTED .*lower_bound.rows\[0\]: unknown key 'regions'"
expect_reject other_weight 1 "^REJECTED .*the bundle's network is not the one in $fold: layers\[2\].weights\[0\]\[0\] is 7 in the bundle" --network "$fold"

# A true proof of another network, handed over as fold2d's.
"$python" "$checker" --network "$fold" "$work/dead.json" > "$work/dead.out"
[ $? = 1 ] || fail "dead2d's bundle passed as fold2d's: $(cat "$work/dead.out")"
grep -q "^REJECTED .*the bundle.s network is not the one in $fold: layers .* against \[2, 6, 5, 1\]" "$work/dead.out" || fail "$(cat "$work/dead.out")"
# --network must name a network file.
"$python" "$checker" --network "$work/fold.json" "$work/fold.json" 2> "$work/notnet.err"
[ $? = 2 ] || fail "--network with a bundle must exit 2"
grep -q "not a pleat-network/1 document" "$work/notnet.err" || fail "$(cat "$work/notnet.err")"
# --network with an ONNX model (which pleat reads, the checker does not): exit 2
# naming the model and 'pleat import', which writes its JSON; no traceback (the
# old checker said "cannot read ('utf-8' codec can't decode byte ...)").
"$pleat" export "$fold" -o "$work/fold.onnx" 2> /dev/null || fail "export exited $?"
"$pleat" certify "$work/fold.onnx" --box -2,2 -q --bundle "$work/onnx_bundle.json" > /dev/null ||
  fail "certify fold.onnx exited $?"
"$python" "$checker" --network "$work/fold.onnx" "$work/onnx_bundle.json" > /dev/null 2> "$work/onnx.err"
[ $? = 2 ] || fail "--network with an ONNX model must exit 2: $(cat "$work/onnx.err")"
grep -qx "check_bundle: $work/fold.onnx: cannot read (an ONNX model; check_bundle.py reads pleat-network/1 JSON only: write that with 'pleat import $work/fold.onnx -o NET.json')" \
  "$work/onnx.err" || fail "$(cat "$work/onnx.err")"
"$pleat" import "$work/fold.onnx" -o "$work/fold_imported.json" || fail "import exited $?"
"$python" "$checker" --network "$work/fold_imported.json" "$work/onnx_bundle.json" > "$work/imported.out" ||
  fail "the bundle against its imported network: $(cat "$work/imported.out")"
# The checker runs from any directory, and its exact_json.py is found beside it.
(cd / && "$python" "$checker" "$work/fold.json" > /dev/null) || fail "check_bundle.py run from / exited $?"
echo "ok"
