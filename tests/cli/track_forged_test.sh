#!/usr/bin/env bash
# pleat track -o FILE resumes from the rows in FILE: a row no run on its
# checkpoint can write is refused (exit 2, naming the line), and the file is
# left as it was. The old reader showed any row it could parse: a value 30
# bounded by [21, 21], a value 60 above the scaling bound 48, "certified":
# false with a value (shown certified), linear regions of a cut walk, -1
# regions (read as 2^64 - 1), a checkpoint twice (the last kept). A one-line
# file with no newline (a network json.dump wrote) was taken for a header cut
# short and emptied; a header really cut short is started over. Bounds that
# meet in a row not certified (a run stopped after they met) are read back.
# The values: data/track/epoch00.json on (-1,1)^2 certifies 21 with
# D = 59 and scaling bound 48 (pleat certify, run when this was written).
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }
a=$source_dir/data/track/epoch00.json
b=$source_dir/data/track/epoch40.json
run() { "$pleat" track "$a" "$b" --box -1,1 -q "$@"; }
run -o "$work/good.jsonl" > /dev/null || fail "track exited $?"
[ "$(json_eval <(sed -n 2p "$work/good.jsonl") '(d["functional_dimension"], d["scaling_bound"])')" = "(21, 48)" ] ||
  fail "epoch00 is no longer 21 of 48: $(sed -n 2p "$work/good.jsonl")"

# edit NAME LINE PYTHON: the good file with line LINE's object changed.
edit() { edit_json_line "$work/good.jsonl" "$work/$1.jsonl" "$2" "$3"; }
expect_refused() {
  local name=$1 needle=$2 out before
  before=$(cat "$work/$name.jsonl")
  out=$(run -o "$work/$name.jsonl" 2>&1) && fail "$name: accepted: $out"
  expect_contains "$out" "$needle" "$name"
  [ "$(cat "$work/$name.jsonl")" = "$before" ] || fail "$name: the refused file was changed"
}
edit value_off 2 'd["functional_dimension"] = 30'
expect_refused value_off "value_off.jsonl:2: impossible row: certified 30 but bounded by [21, 21]"
edit above_scaling 2 'd.update(functional_dimension=60, lower_bound=60, upper_bound=60)'
expect_refused above_scaling "above_scaling.jsonl:2: impossible row: the bounds 60 <= 60 <= scaling_bound 48 do not hold"
edit not_certified 2 'd["certified"] = False'
expect_refused not_certified "not_certified.jsonl:2: 'certified' and 'functional_dimension' disagree"
edit cut_linear 2 'd["walk_complete"] = False'
expect_refused cut_linear "cut_linear.jsonl:2: impossible row: linear regions of a walk cut short"
edit scaling_off 2 'd.update(scaling_bound=59, upper_bound=59)'
expect_refused scaling_off "scaling_off.jsonl:2: impossible row: parametric_dimension 59 and scaling_bound 59, but the network has 59 and 48"
edit negative 3 'd["regions"] = -1'
expect_refused negative "negative.jsonl:3: 'regions' is not a count (a non-negative integer): -1"
edit huge 3 'd["lower_bound"] = 3.3e54'
expect_refused huge "huge.jsonl:3: 'lower_bound' is not a count"
"$python" -c 'import sys; l = open(sys.argv[1]).read().splitlines(); open(sys.argv[2], "w").write("\n".join(l + [l[1]]) + "\n")' \
  "$work/good.jsonl" "$work/twice.jsonl"
expect_refused twice "twice.jsonl:4: checkpoint 0 appears twice"
printf '{"format":"pleat-network/1","layers":[]}' > "$work/oneline.jsonl"
expect_refused oneline "oneline.jsonl: is not a track file"

# A header cut short is started over; a stopped row whose bounds meet is kept.
head -c 20 "$work/good.jsonl" > "$work/cut.jsonl"
run -o "$work/cut.jsonl" > /dev/null || fail "a cut header: exit $?"
cmp -s <(cut -d, -f1-12 "$work/cut.jsonl") <(cut -d, -f1-12 "$work/good.jsonl") ||
  fail "the run from a cut header differs: $(cat "$work/cut.jsonl")"
edit stopped 2 'd.update(functional_dimension=None, certified=False)'
out=$(run -o "$work/stopped.jsonl") || fail "a stopped row whose bounds meet was refused: $out"
expect_contains "$out" "[21,21]" "the stopped row"
echo "track: forged rows refused"
