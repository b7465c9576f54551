#!/usr/bin/env bash
# A stop acts within seconds even when one region takes many seconds of exact
# arithmetic. On a network with 2 inputs and 3000 hidden layers of width 2
# whose neurons stay alive, one region's exact maps and LP take about 15 s; the
# time limit and an interrupt used to be seen only between regions (an audit's
# --time-limit 150 walk ran over 430 s, a Ctrl-C took 284 s). Now the walker
# polls inside a region's work. Checked: walk with --time-limit 1 ends within
# 8 s with bounds (not certified, exit 0); under SIGINT it exits 130 within 8 s.
set -u
source "$(dirname "$0")/lib.sh"

deep=$work/deep.json
# Weights near the identity (1 +- 0.3 on the diagonal, +-0.5 off it), small
# biases: most inputs keep both neurons of every layer on, so the composed
# maps grow long exact coefficients layer after layer.
/usr/bin/python3 - "$deep" <<'PY' || fail "could not write the deep network"
import json, random, sys
random.seed(7)
u = lambda a: "%.6f" % random.uniform(-a, a)
near_one = lambda: "%.6f" % (1 + random.uniform(-0.3, 0.3))
layers = [{"weights": [[near_one(), u(0.5)], [u(0.5), near_one()]], "bias": [u(0.2), u(0.2)],
           "activation": "relu"} for _ in range(3000)]
layers.append({"weights": [["1", "1"]], "bias": ["0"], "activation": "linear"})
json.dump({"format": "pleat-network/1", "input_dim": 2, "layers": layers}, open(sys.argv[1], "w"))
PY


within 8 "$pleat" walk "$deep" --time-limit 1 --threads 1 --json -q > "$work/walk.json"
status=$?
[ $status -eq 0 ] || fail "walk --time-limit 1 exited $status"
/usr/bin/python3 - "$work/walk.json" <<'PY' || fail "walk --time-limit 1: summary is not bounds"
import json, sys
d = json.load(open(sys.argv[1]))
assert d["stop_reason"] == "time-limit" and not d["certified"] and not d["complete"], d
PY

within 8 timeout --preserve-status -s INT "$(scaled 1)" "$pleat" walk "$deep" --threads 1 --json -q > "$work/interrupted.json"
status=$?
[ $status -eq 130 ] || fail "walk under SIGINT exited $status, expected 130"
grep -q '"interrupted"' "$work/interrupted.json" || fail "walk under SIGINT: no interrupted summary"
echo "deep network: time limit and interrupt act within seconds"
