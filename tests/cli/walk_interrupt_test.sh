#!/usr/bin/env bash
# An interrupted pleat walk (one SIGINT, as one Ctrl-C sends) exits 130, keeps
# the regions found so far in the -o file (header + at least one line, every
# line valid JSON, ids 0.., distinct patterns) and claims nothing certified,
# both in the human summary and in --json (complete false, certified false,
# stop_reason "interrupted"). The signal is sent with
# `timeout --foreground --preserve-status -s INT`, which signals only pleat itself; plain
# `timeout -s INT` signals it twice (see walk_interrupt_timeout_test.sh).
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipping"; exit 77; }

# Tens of thousands of regions, several seconds of work: far from done after 1 s
# (3,12,12,1 no longer was: 3-input cells skip the LPs, lp/space_cell.hpp).
big=$work/big.json
"$pleat" random --arch 3,20,20,20,1 --seed 3 -o "$big" || fail "pleat random exited $?"

check_partial_file() {  # FILE: header + >= 1 region lines, all valid
  "$python" - "$1" <<'PY' || fail "partial region file $1 is malformed"
import json, sys
lines = open(sys.argv[1]).read().splitlines()
assert json.loads(lines[0])["format"] == "pleat-regions/1"
regions = [json.loads(line) for line in lines[1:]]
assert len(regions) >= 1, "no region kept"
assert [r["id"] for r in regions] == list(range(len(regions)))
assert len({r["pattern"] for r in regions}) == len(regions)
print(len(regions))
PY
}

# Human summary.
timeout --foreground --preserve-status -s INT "$(scaled 1)" "$pleat" walk "$big" -o "$work/a.jsonl" > "$work/a.out" 2> "$work/a.err"
status=$?
[ $status -eq 130 ] || fail "interrupted walk exited $status, expected 130 (stderr: $(cat "$work/a.err"))"
kept=$(check_partial_file "$work/a.jsonl")
grep -q "stopped (interrupted)" "$work/a.out" || fail "summary does not say it was interrupted:"$'\n'"$(cat "$work/a.out")"
grep -q "status      certified" "$work/a.out" && fail "an interrupted walk claims certified"
grep -q "regions     >= $kept " "$work/a.out" || fail "summary does not give '>= $kept' regions:"$'\n'"$(cat "$work/a.out")"
grep -q "interrupted" "$work/a.err" || fail "no interruption note on standard error"

# --json.
timeout --foreground --preserve-status -s INT "$(scaled 1)" "$pleat" walk "$big" -o "$work/b.jsonl" --json > "$work/b.json" 2> "$work/b.err"
status=$?
[ $status -eq 130 ] || fail "interrupted --json walk exited $status, expected 130"
kept=$(check_partial_file "$work/b.jsonl")
"$python" - "$work/b.json" "$kept" <<'PY' || fail "interrupted --json summary is wrong: $(cat "$work/b.json")"
import json, sys
summary = json.load(open(sys.argv[1]))
assert summary["complete"] is False
assert summary["certified"] is False
assert summary["stop_reason"] == "interrupted"
assert summary["regions"] == int(sys.argv[2]), (summary["regions"], sys.argv[2])
PY
echo "walk interrupt: ok"
