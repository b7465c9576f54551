#!/usr/bin/env bash
# A network that ignores one of its inputs, walked on a box, used to stop the
# process inside GLPK (assertion "k1 < k2", bflib/sgf.c): a warm-started LP
# kept the ignored coordinate's column basic after the rows that held it were
# rewritten (lp/detail/glpk_lp.cpp). Two such 3-input networks (found by a
# random search over small integer weights) must now walk, verify, and give
# the regions of the same network with the ignored input dropped: on the box
# (-2,2)^3 every region is a prism over a region of (-2,2)^2, so the counts
# are equal (plain geometry, no reference value needed).
set -u
source "$(dirname "$0")/lib.sh"

net() {  # name input_dim weights-of-first-layer
  cat > "$work/$1.json" <<JSON
{"format": "pleat-network/1", "input_dim": $2, "layers": [
  {"weights": $3, "bias": $4},
  $5]}
JSON
}
# x_1 ignored (first layer's first column is zero), and the same net without x_1.
net ignores_x1 3 '[["0","0","2"],["0","1","-1"]]' '["-1","1"]' \
  '{"weights": [["-1","2"],["2","2"]], "bias": ["-1","-1"]}, {"weights": [["2","2"],["2","-1"]], "bias": ["0","0"]}, {"weights": [["1","0"]], "bias": ["0"], "activation": "linear"}'
net without_x1 2 '[["0","2"],["1","-1"]]' '["-1","1"]' \
  '{"weights": [["-1","2"],["2","2"]], "bias": ["-1","-1"]}, {"weights": [["2","2"],["2","-1"]], "bias": ["0","0"]}, {"weights": [["1","0"]], "bias": ["0"], "activation": "linear"}'
# x_2 ignored, and the same net without x_2.
net ignores_x2 3 '[["2","0","0"],["1","0","1"]]' '["0","1"]' \
  '{"weights": [["1","1"],["1","2"]], "bias": ["-1","0"]}, {"weights": [["1","0"],["1","2"]], "bias": ["1","0"]}, {"weights": [["2","-1"]], "bias": ["1"], "activation": "linear"}'
net without_x2 2 '[["2","0"],["1","1"]]' '["0","1"]' \
  '{"weights": [["1","1"],["1","2"]], "bias": ["-1","0"]}, {"weights": [["1","0"],["1","2"]], "bias": ["1","0"]}, {"weights": [["2","-1"]], "bias": ["1"], "activation": "linear"}'

regions() {  # file box
  "$pleat" walk "$1" --box "$2" --json -q | /usr/bin/python3 -c 'import json, sys; print(json.load(sys.stdin)["regions"])'
}
for pair in "ignores_x1 without_x1" "ignores_x2 without_x2"; do
  set -- $pair
  "$pleat" walk "$work/$1.json" --box -2,2 -q --certificates -o "$work/$1.jsonl" > "$work/$1.out" 2>&1 ||
    fail "$1: walk on the box exited $?: $(tail -3 "$work/$1.out")"
  "$pleat" verify "$work/$1.json" "$work/$1.jsonl" > /dev/null || fail "$1: verify rejected the walk"
  three=$(regions "$work/$1.json" -2,2) || fail "$1: walk --json failed"
  two=$(regions "$work/$2.json" -2,2) || fail "$2: walk --json failed"
  [ "$three" = "$two" ] || fail "$1: $three regions on (-2,2)^3, but $two on (-2,2)^2 with the ignored input dropped"
  [ "$three" -gt 1 ] || fail "$1: only $three region"
done
echo "networks that ignore an input walk on a box: region counts equal the reduced networks'"
