#!/usr/bin/env bash
# pleat verify accepts saved walks (R^n, a box, a polytope) and rejects
# tampered ones: a moved point, a dropped region, a wrong neighbour, a changed
# multiplier, a changed affine map.
set -u
source "$(dirname "$0")/lib.sh"

fold=$source_dir/data/fold2d.json
"$pleat" walk "$fold" --box -1,1 -q -o "$work/box.jsonl" --certificates > /dev/null || fail "walk failed"
"$pleat" walk "$fold" -q -o "$work/whole.jsonl" --certificates > /dev/null || fail "walk failed"
cat > "$work/triangle.json" <<'JSON'
{ "format": "pleat-domain/1", "input_dim": 2,
  "constraints": [ { "normal": ["1","0"], "offset": "2" },
                   { "normal": ["0","1"], "offset": "2" },
                   { "normal": ["-1","-1"], "offset": "1" } ] }
JSON
"$pleat" walk "$fold" --domain "$work/triangle.json" -q -o "$work/triangle.jsonl" --certificates > /dev/null \
  || fail "walk on a polytope failed"

for f in box whole triangle; do
  out=$("$pleat" verify "$fold" "$work/$f.jsonl") || fail "verify rejected the untouched $f walk: $out"
  case "$out" in verified:*) ;; *) fail "verify printed: $out" ;; esac
done

# tamper FILE PYTHON-EXPR-ON-LINES NEEDLE: edit the region lines with Python,
# then verify must fail (exit 1) and name the fault.
tamper() {
  local name=$1 code=$2 needle=$3
  /usr/bin/python3 - "$work/box.jsonl" "$work/$name.jsonl" "$code" <<'PY'
import json, sys
lines = [json.loads(l) for l in open(sys.argv[1])]
exec(sys.argv[3])
with open(sys.argv[2], "w") as out:
    for l in lines: out.write(json.dumps(l) + "\n")
PY
  local out
  out=$("$pleat" verify "$fold" "$work/$name.jsonl")
  local code_=$?
  [ "$code_" -eq 1 ] || fail "$name: verify exit code $code_, expected 1 ($out)"
  case "$out" in *"$needle"*) ;; *) fail "$name: expected '$needle' in: $out" ;; esac
}

# A point moved onto a facet's hyperplane is no longer strictly inside.
tamper moved 'lines[3]["point"] = lines[3]["facets"][0]["point"]' "not strictly inside"
# A dropped region (ids renumbered) leaves a neighbour missing; without the
# renumbering the ids give it away.
tamper dropped '
del lines[5]
for k, l in enumerate(lines[1:]): l["id"] = k' "is missing"
tamper dropped_ids 'del lines[5]' "id 5 is out of place"
# A wrong neighbour: the facet point is not in that region's closure, or it is absent.
tamper neighbour '
f = next(f for f in lines[2]["facets"] if f["neighbor"])
f["neighbor"] = lines[-1]["pattern"] if lines[-1]["pattern"] != f["neighbor"] else lines[-2]["pattern"]' "neighbour"
# A changed non-facet multiplier breaks its Motzkin certificate.
tamper multiplier '
r = next(r for r in lines[1:] if r["certificate"]["non_facets"] and r["certificate"]["non_facets"][0]["multipliers"])
m = r["certificate"]["non_facets"][0]["multipliers"]
k = next(iter(m)); m[k] = "1000"' "classification"
# A changed affine map.
tamper affine 'lines[1]["affine"]["c"][0] = "12345"' "affine map"
# The header's "network" is a label: a changed one still verifies (against the
# network given) but is pointed out.
sed '1s/"network":"[^"]*"/"network":"elsewhere.json"/' "$work/box.jsonl" > "$work/label.jsonl"
out=$("$pleat" verify "$fold" "$work/label.jsonl") || fail "a changed label failed: $out"
case "$out" in *'note: the file names its network "elsewhere.json"'*) ;; *) fail "no note on the label: $out" ;; esac
# Another of pleat's files given as the region file is named, with where it
# belongs: it said 'line 1: not JSON (... parse error at line 1, column 2 ...)'
# for --json output (a document over several lines) and 'expected the header
# line ...' for a proof bundle.
"$pleat" walk "$fold" --box -1,1 --json -q > "$work/walk.json" || fail "walk --json failed"
"$pleat" certify "$fold" --box -1,1 -q --bundle "$work/bundle.json" > /dev/null || fail "certify --bundle failed"
err=$("$pleat" verify "$fold" "$work/walk.json" 2>&1)
[ $? = 2 ] || fail "verify of walk --json output must exit 2: $err"
expect_contains "$err" "walk.json: line 1: '{' alone: a JSON document written over several lines (as --json prints), not a region file of one JSON object per line (a region file is written by pleat walk NETWORK -o FILE --certificates)" "--json output"
err=$("$pleat" verify "$fold" "$work/bundle.json" 2>&1)
[ $? = 2 ] || fail "verify of a bundle must exit 2: $err"
expect_contains "$err" "found a proof bundle (pleat-bundle/1: check it with python3 scripts/check_bundle.py FILE)" "bundle"
echo "verify: all checks passed"
