#!/usr/bin/env bash
# Stop means stop before the walk too. On a network with 2 inputs and 3000
# hidden layers of width 2 (D = 18 003 parameters) certify used to spend its
# first minutes, deaf to --time-limit and Ctrl-C, on an exact rank of the
# 6000 x 18 003 matrix of scaling directions (and gigabytes to hold it). The
# scaling bound is now read off the network's zero pattern (O(D)), so the
# stop falls in the walk, whose per-region work polls it. Checked: the
# output is bounds, "time-limit" / "interrupted", never certified, with the
# documented exit status (0 for a time limit, 130 for an interrupt), and the
# scaling bound is D minus the 6000 hidden neurons (every neuron has a
# nonzero bias, so each direction is independent: core/jacobian.hpp). The
# wall bound (60 s) only catches the old minutes-long behaviour; it is
# generous so that a loaded machine does not fail it.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }

deep=$work/deep.json
"$python" - "$deep" <<'PY' || fail "could not write the deep network"
import json, random, sys
random.seed(11)
u = lambda a: "%.6f" % random.uniform(-a, a)
near_one = lambda: "%.6f" % (1 + random.uniform(-0.3, 0.3))
nonzero_bias = lambda: "%.6f" % (random.choice([-1, 1]) * random.uniform(0.05, 0.2))
layers = [{"weights": [[near_one(), u(0.5)], [u(0.5), near_one()]], "bias": [nonzero_bias(), nonzero_bias()],
           "activation": "relu"} for _ in range(3000)]
layers.append({"weights": [["1", "1"]], "bias": ["0"], "activation": "linear"})
json.dump({"format": "pleat-network/1", "input_dim": 2, "layers": layers}, open(sys.argv[1], "w"))
PY


within 60 "$pleat" certify "$deep" --time-limit 1 --threads 1 --json -q > "$work/limit.json"
status=$?
[ $status -eq 0 ] || fail "certify --time-limit 1 exited $status"
"$python" - "$work/limit.json" <<'PY' || fail "certify --time-limit 1: not bounds: $(head -c 400 "$work/limit.json")"
import json, sys
d = json.load(open(sys.argv[1]))
assert d["stop_reason"] == "time-limit" and not d["certified"] and d["functional_dimension"] is None, d
assert d["parametric_dimension"] == 18003 and d["scaling_bound"] == 18003 - 6000, d
assert d["lower_bound"] <= d["upper_bound"] <= d["scaling_bound"], d
PY

within 60 timeout --preserve-status -s INT "$(scaled 1)" "$pleat" certify "$deep" --threads 1 --json -q > "$work/int.json"
status=$?
[ $status -eq 130 ] || fail "certify under SIGINT exited $status, expected 130"
"$python" - "$work/int.json" <<'PY' || fail "certify under SIGINT: not bounds: $(head -c 400 "$work/int.json")"
import json, sys
d = json.load(open(sys.argv[1]))
assert d["stop_reason"] == "interrupted" and not d["certified"], d
PY

out=$(within 60 "$pleat" certify "$deep" --time-limit 1 --threads 1 -q) || fail "human output exited $?"
case "$out" in *"NOT certified ("*"time-limit)"*) ;; *) fail "human output: $out" ;; esac
case "$out" in *" certified"$'\n'*) fail "human output claims certified: $out" ;; esac
echo "certify on 3000 hidden layers: time limit and interrupt act, bounds only"
