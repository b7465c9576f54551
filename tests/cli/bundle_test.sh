#!/usr/bin/env bash
# certify --bundle and scripts/check_bundle.py (standard library only): the
# checker accepts the bundle of every network in tests/data and data/ (on a
# box, and on R^n), with the value certify prints; both kinds of upper bound
# occur (scaling directions; an exact kernel over a complete region list).
# Tampered bundles are rejected, each with its own message: a changed minor
# row, a dropped region, a kernel vector that fails one region, a value one
# too high, a point moved out of its region, a broken non-facet certificate,
# a changed weight. A certify that stops writes no bundle.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }
checker=$source_dir/scripts/check_bundle.py

# The checker never imports pleat: its imports are the standard library's and
# its own exact_json.py beside it, which imports json, re and fractions.
imports=$(grep -E '^\s*(import|from) ' "$checker" | sort | tr '\n' ' ')
[ "$imports" = "from exact_json import Rejected, load, number, numbers  # noqa: E402  (standard library only, too) from fractions import Fraction import os import sys " ] ||
  fail "check_bundle.py imports: $imports"
imports=$(grep -E '^\s*(import|from) ' "$source_dir/scripts/exact_json.py" | sort | tr '\n' ' ')
[ "$imports" = "from fractions import Fraction import json import re " ] || fail "exact_json.py imports: $imports"

bundles=()
for net in "$source_dir"/tests/data/*.json "$source_dir"/data/*.json; do
  name=$(basename "$net" .json)
  for domain in "--box -2,2" ""; do
    tag=$name${domain:+_box}
    # shellcheck disable=SC2086
    "$pleat" certify "$net" $domain -q --json --bundle "$work/$tag.json" > "$work/$tag.certify.json" 2> "$work/$tag.err" ||
      fail "certify $tag exited $?: $(cat "$work/$tag.err")"
    if [ ! -f "$work/$tag.json" ]; then
      # Only an uncertified value may go without a bundle, and stderr says so.
      grep -q '"certified": false' "$work/$tag.certify.json" || fail "$tag: certified but no bundle"
      grep -q "no bundle written" "$work/$tag.err" || fail "$tag: no bundle and no message"
      continue
    fi
    bundles+=("$work/$tag.json")
  done
done
# One checker run for all (Python's start-up dominates on small bundles).
"$python" "$checker" "${bundles[@]}" > "$work/all.check" || fail "check_bundle rejects: $(grep REJECTED "$work/all.check")"
"$python" - "${bundles[@]}" > "$work/expected.txt" <<'PY' || fail "reading the certify results"
import json, sys
for path in sys.argv[1:]:
    value = json.load(open(path.replace(".json", ".certify.json")))["functional_dimension"]
    print(f"CHECKED {path}: functional dimension {value}")
PY
methods=$("$python" -c 'import json,sys; print(" ".join(json.load(open(p))["upper_bound"]["method"] for p in sys.argv[1:]))' "${bundles[@]}")
diff <(grep '^CHECKED' "$work/all.check") "$work/expected.txt" || fail "checked values differ from certify's"
case $methods in *scaling*kernel*|*kernel*scaling*) ;; *) fail "expected both upper-bound methods, got:$methods" ;; esac

# Tampering: each bundle below must be rejected with the message given.
"$pleat" certify "$source_dir/tests/data/dead2d.json" --box -2,2 -q --bundle "$work/dead.json" > /dev/null ||
  fail "certify dead2d exited $?"
"$pleat" certify "$source_dir/data/fold2d.json" -q --bundle "$work/fold.json" > /dev/null || fail "certify fold2d exited $?"
"$python" - "$work" <<'PY' || fail "could not write the tampered bundles"
import json, sys
from fractions import Fraction
work = sys.argv[1]
def load(name): return json.load(open(f"{work}/{name}.json"))
def save(doc, name): json.dump(doc, open(f"{work}/t_{name}.json", "w"))
dead = load("dead")
assert dead["upper_bound"]["method"] == "kernel", dead["upper_bound"]["method"]

doc = load("dead"); row = doc["lower_bound"]["rows"][0]["values"]
row[0] = str(Fraction(row[0]) + 1); save(doc, "row")

# Drop a region that the minor does not use (indices stay valid).
doc = load("dead"); used = {r["region"] for r in doc["lower_bound"]["rows"]}
drop = max(i for i in range(len(doc["regions"])) if i not in used)
del doc["regions"][drop]; save(doc, "dropped")

# Add to a kernel vector the unit vector of a minor column: some region's row
# is nonzero there (the minor is nonsingular), so that row fails the vector.
doc = load("dead"); column = doc["lower_bound"]["columns"][0]
vector = doc["upper_bound"]["kernel"][-1]
vector[column] = str(Fraction(vector[column]) + 1); save(doc, "kernel")

doc = load("dead"); doc["functional_dimension"] += 1; save(doc, "value")

doc = load("dead"); region = doc["regions"][-1]
region["point"] = doc["regions"][0]["point"] if region is not doc["regions"][0] else region["point"]
save(doc, "point")

doc = load("dead")
victim = next(r for r in doc["regions"] if r["certificate"]["non_facets"])
group = victim["certificate"]["non_facets"][0]
group["equality_multiplier"] = str(Fraction(group["equality_multiplier"]) * 2); save(doc, "nonfacet")

doc = load("fold"); assert doc["upper_bound"]["method"] == "scaling"
# An output weight: the cells stay, the rows change.
weights = doc["network"]["layers"][-1]["weights"]
weights[0][0] = str(Fraction(weights[0][0]) + Fraction(1, 7))
save(doc, "weight")
PY
expect_reject() {
  local name=$1 message=$2
  "$python" "$checker" "$work/t_$name.json" > "$work/t_$name.out"
  local status=$?
  [ $status = 1 ] || fail "tampered $name: exit $status, expected 1: $(cat "$work/t_$name.out")"
  grep -q "^REJECTED .*$message" "$work/t_$name.out" || fail "tampered $name: $(cat "$work/t_$name.out")"
}
expect_reject row "minor row 0 differs from row"
expect_reject dropped "is not in the list: the list is incomplete"
expect_reject kernel "kernel vector .* is not orthogonal to row"
expect_reject value "the minor is not"
expect_reject point "the point is not strictly inside"
expect_reject nonfacet "non-facet certificate of group .* does not check"
expect_reject weight "differs from row"

# empty_across. At a facet point the far side is one pattern (the argument is
# in check_bundle.py's check_crossings), so no bundle pleat writes needs an
# empty_across proof: assert that on every bundle above, with the checker's own
# crossing code. The proofs are then checked where they are needed, at the
# vertex (0,0) of tests/data/opposite_pair2d.json (relu(x), relu(y), relu(-y)),
# reasoned by hand: crossing x = 0 from the region x > 0, y > 0 (pattern 110)
# there leaves every y-state open, so four patterns 0ab; 011 (y > 0 and
# -y > 0) and 000 (y < 0 and -y < 0) are empty, each by the multipliers
# (0, 1, 1) over the normals (-1, 0), (0, 1), (0, -1) / (-1, 0), (0, -1), (0, 1).
# A bundle that claims its true neighbour empty is rejected.
"$pleat" certify "$source_dir/tests/data/opposite_pair2d.json" -q --bundle "$work/pair.json" > /dev/null ||
  fail "certify opposite_pair2d exited $?"
"$python" - "$checker" "$work" "${bundles[@]}" <<'PY' || fail "empty_across checks"
import importlib.util, json, sys
from fractions import Fraction as Q
spec = importlib.util.spec_from_file_location("check_bundle", sys.argv[1])
cb = importlib.util.module_from_spec(spec); spec.loader.exec_module(cb)
work = sys.argv[2]

crossings = 0
for path in sys.argv[3:]:
    doc = json.load(open(path))
    if not doc["every_region"]:
        continue
    net = cb.Network(doc["network"])
    domain = cb.domain_constraints(doc["domain"], net.n0)
    listed = {net.parse_pattern(r["pattern"], "") for r in doc["regions"]}
    for r in doc["regions"]:
        pattern = net.parse_pattern(r["pattern"], "")
        assert not any("empty_across" in f for f in r["facets"]), (path, r["pattern"])
        cell = net.cell(pattern, domain)
        for members, q in cb.check_classification(cell, r["certificate"], ""):
            if any(cell[1][m] is None for m in members):
                continue
            across = net.patterns_across(pattern, q, cell[0][members[0]][0])
            assert len(across) == 1 and across[0] in listed, (path, r["pattern"], across)
            crossings += 1
assert crossings > 100, crossings

doc = json.load(open(f"{work}/pair.json"))
net = cb.Network(doc["network"])
P = lambda text: net.parse_pattern(text, "")
near, origin = P("110"), [Q(0), Q(0)]
cell = net.cell(near, [])
assert cell[0][0] == ([Q(1), Q(0)], Q(0)), cell  # constraint 0 is x > 0
across = net.patterns_across(near, origin, [Q(1), Q(0)])
assert across == sorted(P(t) for t in ("000", "001", "010", "011")), across
for empty in ("011", "000"):
    cb.check_empty_across(net, [], P(empty), origin, ["0", "1", "1"], "t")

def rejected(call, message):
    try:
        call()
    except cb.Rejected as failure:
        assert message in str(failure), str(failure)
        return
    raise AssertionError(f"accepted; expected {message!r}")

rejected(lambda: cb.check_empty_across(net, [], P("011"), origin, ["1", "0", "0"], "t"), "does not check")
rejected(lambda: cb.check_empty_across(net, [], P("011"), origin, ["0", "-1", "-1"], "t"), "does not check")
rejected(lambda: cb.check_empty_across(net, [], P("010"), origin, ["0", "1", "1"], "t"), "does not check")
claims = [{"pattern": "011", "multipliers": ["0", "1", "1"]}, {"pattern": "000", "multipliers": ["0", "5", "5"]}]
listed = {near, P("010"), P("001")}
def crossing(empty_across):
    region = {"pattern": "110", "facets": [{"empty_across": empty_across}]}
    cb.check_crossings(net, [], 0, region, near, cell, [([0], origin)], listed)
crossing(claims)
rejected(lambda: crossing(claims[:1]), "region 000 lies across its facet 0 at the facet point but is not in the list")
rejected(lambda: crossing(claims + [{"pattern": "010", "multipliers": ["0", "1", "1"]}]), "010 is empty next to")
rejected(lambda: crossing(claims + [{"pattern": "111", "multipliers": ["1"]}]), "cannot reach")

# A whole bundle claiming the true neighbour across an interior facet empty.
region = doc["regions"][0]
facet = next(f for f in region["facets"] if f["side"] is None)
facet["empty_across"] = [{"pattern": facet["neighbor"], "multipliers": ["1"]}]
json.dump(doc, open(f"{work}/t_neighbour.json", "w"))
PY
expect_reject neighbour "is empty next to the facet point does not check"

# Unreadable input: exit 2.
echo "{" > "$work/broken.json"
"$python" "$checker" "$work/broken.json" 2> /dev/null; [ $? = 2 ] || fail "a broken file must exit 2"

# A stopped certify writes no bundle (bounds only), and says so.
"$pleat" random --arch 1,64,64,1 --seed 1 -o "$work/wide.json" || fail "pleat random exited $?"
"$pleat" certify "$work/wide.json" -q --full-walk --time-limit 0.5 --bundle "$work/stopped.json" > "$work/stopped.out" \
  2> "$work/stopped.err" || fail "time-limited certify exited $?"
grep -q "NOT certified" "$work/stopped.out" || fail "expected bounds: $(cat "$work/stopped.out")"
[ ! -e "$work/stopped.json" ] || fail "a stopped certify wrote a bundle"
grep -q "no bundle written to $work/stopped.json: the functional dimension was not certified" "$work/stopped.err" ||
  fail "stderr: $(cat "$work/stopped.err")"

# --bundle with --points is refused.
"$pleat" certify "$source_dir/data/fold2d.json" --points /dev/null --bundle "$work/x.json" 2> /dev/null
[ $? = 2 ] || fail "--bundle with --points must be refused"
echo "ok"
