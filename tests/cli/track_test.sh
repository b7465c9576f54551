#!/usr/bin/env bash
# pleat track on the shipped training run (data/track, made by
# scripts/make_track_checkpoints.py): every row equals 'pleat certify' and
# 'pleat walk' on that checkpoint; a resumed run (file cut after two rows,
# the third line half written) equals an uninterrupted one; ONNX checkpoints
# give the same row as their JSON; the CSV and SVG are written; a file from a
# different run, or of a checkpoint that has changed since, is refused.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }
checkpoints=("$source_dir"/data/track/epoch*.json)
[ ${#checkpoints[@]} -ge 4 ] || fail "expected the shipped checkpoints in data/track"

"$pleat" track "${checkpoints[@]}" --box -2,2 -o "$work/full.jsonl" --csv "$work/t.csv" --svg "$work/t.svg" \
  --json -q > "$work/table.json" || fail "track exited $?"

# Each row against certify and walk on the same checkpoint.
for i in "${!checkpoints[@]}"; do
  "$pleat" certify "${checkpoints[$i]}" --box -2,2 --json -q > "$work/c$i.json" || fail "certify $i exited $?"
  "$pleat" walk "${checkpoints[$i]}" --box -2,2 --json -q > "$work/w$i.json" || fail "walk $i exited $?"
done
"$python" - "$work" "${#checkpoints[@]}" <<'PY' || fail "track rows differ from certify/walk"
import json, sys
work, count = sys.argv[1], int(sys.argv[2])
table = json.load(open(f"{work}/table.json"))
assert table["format"] == "pleat-track-table/1"
rows = table["rows"]
assert [r["index"] for r in rows] == list(range(count)), rows
previous = None
for i, row in enumerate(rows):
    certify, walk = json.load(open(f"{work}/c{i}.json")), json.load(open(f"{work}/w{i}.json"))
    for key in ("functional_dimension", "scaling_bound", "parametric_dimension", "certified"):
        assert row[key] == certify[key], (i, key, row[key], certify[key])
    assert (row["regions"], row["linear_regions"]) == (walk["regions"], walk["linear_regions"]), (i, row, walk)
    expected_change = None if previous is None else row["functional_dimension"] - previous
    assert row["change"] == expected_change, (i, row["change"], expected_change)
    previous = row["functional_dimension"]
csv_lines = open(f"{work}/t.csv").read().splitlines()
assert csv_lines[0].startswith("index,checkpoint,functional_dimension,"), csv_lines[0]
assert len(csv_lines) == count + 1
svg = open(f"{work}/t.svg").read()
assert svg.startswith("<svg") and svg.count("<circle") == count, "one dot per checkpoint"
PY

# Resume: keep the header and two rows, then half of the third line.
strip_seconds() { "$python" -c 'import json,sys
for line in open(sys.argv[1]):
    d = json.loads(line); d.pop("seconds", None); print(json.dumps(d, sort_keys=True))' "$1"; }
head -n 3 "$work/full.jsonl" > "$work/resumed.jsonl"
sed -n 4p "$work/full.jsonl" | head -c 40 >> "$work/resumed.jsonl"
"$pleat" track "${checkpoints[@]}" --box -2,2 -o "$work/resumed.jsonl" -q > /dev/null 2> "$work/resumed.err" ||
  fail "resumed track exited $?"
# The cut line is dropped and its checkpoint run again, saying so (it was silent).
grep -q "resumed.jsonl: dropped a last line cut short by an earlier run" "$work/resumed.err" ||
  fail "the resume did not say it dropped the cut line: $(cat "$work/resumed.err")"
[ "$(strip_seconds "$work/resumed.jsonl")" = "$(strip_seconds "$work/full.jsonl")" ] ||
  fail "a resumed run differs from an uninterrupted one"$'\n'"$(diff <(strip_seconds "$work/resumed.jsonl") <(strip_seconds "$work/full.jsonl"))"

# A file from another run (different domain) is refused, untouched.
before=$(cat "$work/full.jsonl")
err=$("$pleat" track "${checkpoints[@]}" -o "$work/full.jsonl" -q 2>&1 >/dev/null)
[ $? = 2 ] || fail "a different run's file must be exit 2"
case "$err" in *"'domain' differs"*) ;; *) fail "message does not name the difference: $err" ;; esac
[ "$(cat "$work/full.jsonl")" = "$before" ] || fail "the other run's file was changed"

# ONNX checkpoints: the same row as the JSON they were exported from.
last=${checkpoints[$((${#checkpoints[@]} - 1))]}
"$pleat" export "$last" -o "$work/last.onnx" 2> /dev/null || fail "export exited $?"
"$pleat" track "$last" "$work/last.onnx" --box -2,2 --json -q > "$work/onnx.json" || fail "track on ONNX exited $?"
"$python" - "$work/onnx.json" <<'PY' || fail "ONNX row differs from the JSON row"
import json, sys
rows = json.load(open(sys.argv[1]))["rows"]
keys = ("functional_dimension", "scaling_bound", "regions", "linear_regions")
assert [rows[0][k] for k in keys] == [rows[1][k] for k in keys], rows
assert rows[1]["change"] == 0
PY
# A checkpoint file overwritten since it was tracked (training rerun): the kept
# row is another network's value, so the resumed run refuses the file rather
# than print that value as the new network's (the old binary printed it).
mkdir "$work/run"
cp "${checkpoints[0]}" "$work/run/a.json"
cp "${checkpoints[1]}" "$work/run/b.json"
"$pleat" track "$work/run/a.json" "$work/run/b.json" --box -2,2 -o "$work/run.jsonl" -q > /dev/null ||
  fail "track on the copies exited $?"
cp "$last" "$work/run/a.json"
before=$(cat "$work/run.jsonl")
err=$("$pleat" track "$work/run/a.json" "$work/run/b.json" --box -2,2 -o "$work/run.jsonl" -q 2>&1 >/dev/null)
[ $? = 2 ] || fail "a checkpoint that changed since must be exit 2 ($err)"
case "$err" in *"$work/run/a.json holds another network"*) ;; *) fail "message does not name the changed checkpoint: $err" ;; esac
[ "$(cat "$work/run.jsonl")" = "$before" ] || fail "the file of the changed checkpoint was changed"
cp "${checkpoints[0]}" "$work/run/a.json"
"$pleat" track "$work/run/a.json" "$work/run/b.json" --box -2,2 -o "$work/run.jsonl" -q > /dev/null ||
  fail "the same networks again must resume ($?)"
# A checkpoint cut short: bounds, '>=' regions, and no count of linear regions
# ('-', null): regions not found may join the pieces found (see walk_test.sh's
# min_quadrants2d), so their count is no lower bound (the old binary printed '>=').
"$pleat" random --arch 2,15,15,15,1 --seed 1 -o "$work/big.json" > /dev/null || fail "pleat random exited $?"
"$pleat" track "$work/big.json" --time-limit-each 0.001 --json -q > "$work/cut.json" || fail "track cut short exited $?"
[ "$(json_eval "$work/cut.json" '[(r["walk_complete"], r["certified"], r["linear_regions"]) for r in d["rows"]]')" \
  = "[(False, False, None)]" ] || fail "a checkpoint cut short: $(cat "$work/cut.json")"
table=$("$pleat" track "$work/big.json" --time-limit-each 0.001 -q) || fail "track cut short exited $?"
echo "$table" | tail -n 1 | grep -Eq ' >=[0-9]+ +- +[0-9.]+$' || fail "a cut row must show '>=' regions and '-' linear: $table"
# Interrupted during the second checkpoint (a 2,400,1 walk of seconds): the
# plot holds the first only, and its title says the run was interrupted (it
# said "(1 checkpoint)", as if one had been asked for). The CSV lists the
# checkpoints not reached, empty and not certified, and the JSON table says it
# was interrupted (both held the first row alone, like a run of one).
"$pleat" random --arch 2,400,1 --seed 1 -o "$work/long.json" || fail "pleat random exited $?"
timeout --preserve-status -s INT "$(scaled 2)" "$pleat" track "${checkpoints[0]}" "$work/long.json" "${checkpoints[1]}" \
  --threads 1 --svg "$work/cut.svg" --csv "$work/cut.csv" --json -q > "$work/cut_table.json" 2> "$work/cut.err"
status=$?
[ $status = 130 ] || fail "interrupted track exited $status, expected 130"
grep -q "along training (1 of 3 checkpoints; the run was interrupted)" "$work/cut.svg" ||
  fail "the interrupted run's plot: $(grep -o 'along training ([^)]*)' "$work/cut.svg")"
grep -qx "pleat: track interrupted; 1 of 3 checkpoints done" "$work/cut.err" || fail "stderr: $(cat "$work/cut.err")"
[ "$(tail -n 2 "$work/cut.csv")" = "1,\"$work/long.json\",,,,false,,,,,,false,
2,\"${checkpoints[1]}\",,,,false,,,,,,false," ] || fail "the interrupted run's CSV: $(cat "$work/cut.csv")"
[ "$(json_eval "$work/cut_table.json" '(d["interrupted"], len(d["rows"]), len(d["checkpoints"]))')" = "(True, 1, 3)" ] ||
  fail "the interrupted run's JSON table: $(cat "$work/cut_table.json")"
[ "$(json_eval "$work/cut.json" 'd["interrupted"]')" = "False" ] || fail "a run not interrupted: its JSON table says interrupted"
# Interrupted before any checkpoint finished: nothing is written, and stderr says so.
# An SVG an earlier run left there is named as stale (nothing said it was not this run's).
echo "<svg>earlier</svg>" > "$work/earlier.svg"
timeout --preserve-status -s INT "$(scaled 1)" "$pleat" track "$work/long.json" --threads 1 --csv "$work/none.csv" \
  --svg "$work/earlier.svg" -q > /dev/null 2> "$work/none.err"
status=$?
[ $status = 130 ] || fail "track interrupted in its first checkpoint exited $status, expected 130"
[ "$(cat "$work/none.err")" = "pleat: track interrupted; 0 of 1 checkpoint done: no table, CSV or plot written
pleat: $work/earlier.svg is stale: an earlier run's, not rewritten (interrupted before a checkpoint was done)" ] ||
  fail "stderr: $(cat "$work/none.err")"
[ ! -e "$work/none.csv" ] || fail "a CSV was written with no checkpoint done"
[ "$(cat "$work/earlier.svg")" = "<svg>earlier</svg>" ] || fail "the earlier SVG was changed"
# An unwritable --svg (its folder is missing) is refused before the run, as
# --csv is: no checkpoint certified, the CSV not written (it was, and then the
# run failed on the SVG), and an earlier CSV named as stale.
echo "<svg>earlier</svg>" > "$work/earlier2.svg"
echo "earlier" > "$work/earlier.csv"
"$pleat" track "${checkpoints[0]}" --box -2,2 --csv "$work/earlier.csv" --svg "$work/missing/t.svg" -q \
  > /dev/null 2> "$work/failed.err"
[ $? = 2 ] || fail "track with an unwritable --svg must exit 2: $(cat "$work/failed.err")"
[ "$(cat "$work/failed.err")" = "pleat: $work/earlier.csv is stale: an earlier run's, not rewritten (the run failed: see below)
pleat: $work/missing/t.svg: cannot open for writing (No such file or directory)" ] ||
  fail "stderr: $(cat "$work/failed.err")"
[ "$(cat "$work/earlier.csv")" = "earlier" ] || fail "the CSV was written though the SVG was refused"
# ... and stopped by an error before either was written (the CSV's folder is missing).
"$pleat" track "${checkpoints[0]}" --box -2,2 --csv "$work/missing/t.csv" --svg "$work/earlier2.svg" -q \
  > /dev/null 2> "$work/failed.err"
[ $? = 2 ] || fail "track with an unwritable --csv must exit 2: $(cat "$work/failed.err")"
[ "$(cat "$work/failed.err")" = "pleat: $work/earlier2.svg is stale: an earlier run's, not rewritten (the run failed: see below)
pleat: $work/missing/t.csv: cannot open for writing (No such file or directory)" ] ||
  fail "stderr: $(cat "$work/failed.err")"
[ "$(cat "$work/earlier2.svg")" = "<svg>earlier</svg>" ] || fail "the earlier SVG was changed"
# -o that is no regular file: a clear error, not "internal error" (a folder
# failed reading it; /dev/full, which reads zeros forever, ran out of memory).
"$pleat" track "${checkpoints[0]}" --box -2,2 -o "$work" -q > /dev/null 2> "$work/dir.err"
[ $? = 2 ] || fail "track -o FOLDER must exit 2: $(cat "$work/dir.err")"
[ "$(cat "$work/dir.err")" = "pleat: $work: cannot open for writing (Is a directory)" ] || fail "stderr: $(cat "$work/dir.err")"
if [ -w /dev/full ]; then
  timeout 60 "$pleat" track "${checkpoints[0]}" --box -2,2 -o /dev/full --svg "$work/earlier2.svg" -q > /dev/null 2> "$work/full.err"
  [ $? = 1 ] || fail "track -o /dev/full must exit 1: $(cat "$work/full.err")"
  [ "$(cat "$work/full.err")" = "pleat: $work/earlier2.svg is stale: an earlier run's, not rewritten (the run failed: see below)
pleat: /dev/full: cannot write (No space left on device)" ] || fail "stderr: $(cat "$work/full.err")"
fi
# A checkpoint listed twice, by any path, or standard input twice, is refused
# naming both positions, before any work (it was certified twice, its second
# row showing a change of 0; '- -' read an empty second network).
"$pleat" track "${checkpoints[0]}" "${checkpoints[1]}" "$(dirname "${checkpoints[0]}")/./$(basename "${checkpoints[0]}")" \
  --box -2,2 -q > "$work/twice.out" 2> "$work/twice.err"
[ $? = 2 ] || fail "a checkpoint listed twice must exit 2: $(cat "$work/twice.err")"
expect_contains "$(cat "$work/twice.err")" "checkpoint 3 (" "twice"
expect_contains "$(cat "$work/twice.err")" ") is checkpoint 1 (${checkpoints[0]}) again: list each checkpoint once" "twice"
[ ! -s "$work/twice.out" ] || fail "a refused track printed a table"
"$pleat" track - - --box -2,2 -q < "${checkpoints[0]}" > /dev/null 2> "$work/stdin2.err"
[ $? = 2 ] || fail "track - - must exit 2: $(cat "$work/stdin2.err")"
expect_contains "$(cat "$work/stdin2.err")" "checkpoint 2 (-) is checkpoint 1 (-) again (standard input can be read once)" "- -"
echo "track: all checks passed"
