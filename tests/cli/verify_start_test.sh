#!/usr/bin/env bash
# When the domain's centre lies on a bent hyperplane the walk starts next to
# it, at the first point of a fixed sequence of nearby points that lies off
# every bent hyperplane; those steps are not infinitesimal, so the start
# region's closure need not hold the centre. pleat verify used to demand that
# it did and rejected these two correct walks (found by a random search over
# small integer weights: 2 inputs on R^2, 4 inputs on the box (-2,2)^4). It
# now re-derives the start region by the walker's rule. Checked: the centre
# (the origin) is on a bent hyperplane (a first-layer neuron with bias 0),
# both walks verify, and a walk whose id 0 is another region is still refused.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }

cat > "$work/plane.json" <<'JSON'
{"format": "pleat-network/1", "input_dim": 2, "layers": [
 {"weights": [["-1","1"],["-2","2"],["2","1"],["-2","2"]], "bias": ["1","-1","0","1"]},
 {"weights": [["2","1","-1","2"],["0","-1","0","0"],["2","-2","0","2"],["2","-1","2","-1"]], "bias": ["-1","1","-1","1"]},
 {"weights": [["-1","-2","0","0"],["-1","-1","0","2"],["0","1","-1","-2"]], "bias": ["1","-1","0"]},
 {"weights": [["-2","0","0"]], "bias": ["0"], "activation": "linear"}]}
JSON
cat > "$work/four.json" <<'JSON'
{"format": "pleat-network/1", "input_dim": 4, "layers": [
 {"weights": [["2","-2","2","1"],["0","0","1","2"],["1","-1","2","0"]], "bias": ["0","0","1"]},
 {"weights": [["1","0","1"],["0","0","0"],["-2","-1","0"]], "bias": ["0","0","1"]},
 {"weights": [["1","0","-2"],["0","-1","-1"]], "bias": ["0","0"]},
 {"weights": [["0","0"]], "bias": ["0"], "activation": "linear"}]}
JSON

for case in "plane.json" "four.json --box -2,2"; do
  set -- $case
  net=$work/$1
  shift
  # The origin, the centre of R^n and of the box, is on a first-layer bent hyperplane.
  "$python" -c 'import json, sys; assert "0" in json.load(open(sys.argv[1]))["layers"][0]["bias"]' "$net" ||
    fail "$net: the origin is not on a first-layer bent hyperplane"
  "$pleat" walk "$net" "$@" -q --certificates -o "$work/r.jsonl" > /dev/null || fail "$net: walk exited $?"
  out=$("$pleat" verify "$net" "$work/r.jsonl" 2>&1) || fail "$net: verify rejected the walk: $out"
  # Another region as id 0 (lines 2 and 3 swapped, ids renumbered) is refused.
  "$python" - "$work/r.jsonl" "$work/swapped.jsonl" <<'PY' || fail "could not write the swapped file"
import json, sys
lines = open(sys.argv[1]).read().splitlines()
lines[1], lines[2] = lines[2], lines[1]
rows = [json.loads(l) for l in lines[1:]]
for k, row in enumerate(rows): row["id"] = k
open(sys.argv[2], "w").write("\n".join([lines[0]] + [json.dumps(r, separators=(",", ":")) for r in rows]) + "\n")
PY
  out=$("$pleat" verify "$net" "$work/swapped.jsonl" 2>&1) && fail "$net: a wrong start region was accepted"
  case "$out" in *"id 0 is not the region where the walk starts"*) ;; *) fail "$net: $out" ;; esac
done
echo "walks that start next to a centre on a bent hyperplane verify; a wrong start is refused"
