#!/usr/bin/env bash
# pleat survey: the files of a survey split into tasks (--task-index K
# --task-count N, or a Slurm array job's SLURM_ARRAY_TASK_* variables), merged,
# equal the undivided run; tasks of different surveys, overlapping tasks and
# different splits are refused; a grid of
# architectures writes one file per architecture (1-D one-hidden-layer nets:
# every sample at 2m+1); samples cut by the time limit are counted, not in the
# histogram; plot writes SVG and CSV that agree with the summary.
set -u
source "$(dirname "$0")/lib.sh"
[ -x /usr/bin/python3 ] || { echo "no /usr/bin/python3"; exit 77; }

normal() {
  /usr/bin/python3 - "$1" <<'PY'
import json, sys
lines = open(sys.argv[1]).read().splitlines()
print(json.dumps(json.loads(lines[0]), sort_keys=True))
for d in sorted((json.loads(l) for l in lines[1:]), key=lambda d: d["sample"]):
    print(json.dumps({k: v for k, v in d.items() if k != "seconds"}, sort_keys=True))
PY
}

survey() { "$pleat" survey --arch 2,3,3,1 --samples 9 --seed 5 --box -2,2 -q "$@" > /dev/null; }
survey -o "$work/all.jsonl" || fail "unsharded survey exited $?"
survey --task-index 0 --task-count 3 -o "$work/part0.jsonl" || fail "task 0 of 3 exited $?"
# Tasks 1 and 2 as a Slurm array --array=1-3 would run them (ids from 1).
for id in 2 3; do
  SLURM_ARRAY_TASK_ID=$id SLURM_ARRAY_TASK_MIN=1 SLURM_ARRAY_TASK_COUNT=3 survey -o "$work/part$((id - 1)).jsonl" ||
    fail "Slurm task $id exited $?"
done
# The legacy spelling of the same split still runs (no longer documented).
survey --shard 2/3 -o "$work/legacy2.jsonl" || fail "--shard 2/3 exited $?"
cmp -s <(normal "$work/legacy2.jsonl") <(normal "$work/part2.jsonl") || fail "--shard 2/3 differs from task 2 of 3"
# --task-count 1 runs the whole survey even inside an array job.
SLURM_ARRAY_TASK_ID=1 SLURM_ARRAY_TASK_COUNT=3 survey --task-count 1 -o "$work/whole.jsonl" || fail "--task-count 1 exited $?"
head -n 1 "$work/whole.jsonl" | grep -q '"shard":"0/1"' || fail "--task-count 1 did not run the whole survey"
SLURM_ARRAY_TASK_ID=7 SLURM_ARRAY_TASK_COUNT=3 survey -o "$work/bad-task.jsonl" 2> "$work/task.err"
[ $? -eq 2 ] || fail "an array task id beyond the count should be refused"
grep -q "SLURM_ARRAY_TASK_ID - SLURM_ARRAY_TASK_MIN is 7, not below the task count 3" "$work/task.err" ||
  fail "unclear task message: $(cat "$work/task.err")"
survey --task-count 3 -o "$work/no-index.jsonl" 2> "$work/task.err"
[ $? -eq 2 ] && grep -q "give --task-index" "$work/task.err" || fail "--task-count without an index: $(cat "$work/task.err")"
head -n 1 "$work/part1.jsonl" | grep -q '"shard":"1/3"' || fail "task not recorded in the header"
/usr/bin/python3 -c '
import json, sys
samples = [json.loads(l)["sample"] for l in open(sys.argv[1]).read().splitlines()[1:]]
assert sorted(samples) == [1, 4, 7], samples' "$work/part1.jsonl" || fail "task 1 of 3 ran the wrong samples"

"$pleat" survey merge "$work/part2.jsonl" "$work/part0.jsonl" "$work/part1.jsonl" -o "$work/merged.jsonl" -q ||
  fail "merge exited $?"
cmp -s <(normal "$work/merged.jsonl") <(normal "$work/all.jsonl") || {
  diff <(normal "$work/merged.jsonl") <(normal "$work/all.jsonl") >&2; fail "merged tasks differ from the undivided run"; }
"$pleat" survey merge "$work/part0.jsonl" -o "$work/one.jsonl" 2> "$work/one.err" || fail "merging one file exited $?"
grep -qx "merged 1 file: 3 samples, task 0 of 3" "$work/one.err" ||
  fail "merge message: $(cat "$work/one.err")"
# Tasks that have not run every sample: the message counts the samples of the
# survey (it read "8 samples, the whole survey, 1 sample still missing").
head -n 3 "$work/part1.jsonl" > "$work/part1_cut.jsonl"  # 2 of task 1's 3 samples
"$pleat" survey merge "$work/part0.jsonl" "$work/part1_cut.jsonl" "$work/part2.jsonl" -o "$work/partial.jsonl" \
  2> "$work/partial.err" || fail "merging a task with a sample not run exited $?"
grep -qx "merged 3 files: 8 of 9 samples, the whole survey (1 not run yet)" "$work/partial.err" ||
  fail "merge message: $(cat "$work/partial.err")"
# A merged file is a whole survey: rerunning the unsharded command adds nothing.
cp "$work/merged.jsonl" "$work/merged2.jsonl"
survey -o "$work/merged2.jsonl" || fail "resuming a merged survey exited $?"
cmp -s "$work/merged.jsonl" "$work/merged2.jsonl" || fail "resuming a complete merged survey changed it"

# Two of three shards merge into "0,2/3", which the third completes.
"$pleat" survey merge "$work/part0.jsonl" "$work/part2.jsonl" -o "$work/some.jsonl" -q || fail "partial merge exited $?"
head -n 1 "$work/some.jsonl" | grep -q '"shard":"0,2/3"' || fail "partial merge header: $(head -n 1 "$work/some.jsonl")"
"$pleat" survey merge "$work/some.jsonl" "$work/part1.jsonl" -o "$work/full.jsonl" -q || fail "merging a merge exited $?"
cmp -s <(normal "$work/full.jsonl") <(normal "$work/all.jsonl") || fail "merge of a merge differs"

refuse() {  # refuse MESSAGE-PART ARGS...: merge must exit 2 naming the problem
  local expected=$1; shift
  "$pleat" survey merge "$@" -o "$work/bad.jsonl" -q 2> "$work/bad.err" > /dev/null
  [ $? -eq 2 ] || fail "merge $* should be refused"
  grep -q "$expected" "$work/bad.err" || fail "merge $*: expected '$expected' in: $(cat "$work/bad.err")"
}
"$pleat" survey --arch 2,3,3,1 --samples 9 --seed 6 --box -2,2 --task-index 1 --task-count 3 -q -o "$work/other1.jsonl" > /dev/null ||
  fail "other survey exited $?"
refuse "different surveys" "$work/part0.jsonl" "$work/other1.jsonl"
"$pleat" survey --arch 2,3,3,1 --samples 9 --seed 5 --task-index 1 --task-count 3 -q -o "$work/whole1.jsonl" > /dev/null ||
  fail "survey on R^2 exited $?"
refuse "'domain'" "$work/part0.jsonl" "$work/whole1.jsonl"
refuse "overlapping" "$work/part0.jsonl" "$work/part1.jsonl" "$work/part0.jsonl"
survey --task-index 1 --task-count 2 -o "$work/half1.jsonl" || fail "task 1 of 2 exited $?"
refuse "cannot be merged" "$work/part0.jsonl" "$work/half1.jsonl"
"$pleat" survey --arch 2,3,3,1 --samples 9 --seed 5 --box -2,2 --task-index 3 --task-count 3 -q -o "$work/x.jsonl" 2> /dev/null
[ $? -eq 2 ] || fail "task 3 of 3 should be refused"
# Resuming a file with another task is refused.
survey --task-index 2 --task-count 3 -o "$work/part1.jsonl" 2> "$work/shard.err" && fail "another task's file was accepted"
grep -q "holds task 1 of 3, this command runs task 2 of 3" "$work/shard.err" || fail "unclear task message: $(cat "$work/shard.err")"

# A grid: one file per architecture; on R with one hidden layer, 1 input and
# 1 output, every sample is at the scaling bound 2m+1 (derivation in
# tests/enumerate/survey_test.cpp).
"$pleat" survey --arch 1,2,1 --arch 1,5,1 --samples 8 --seed 9 --json -q -o "$work/grid.jsonl" > "$work/grid.json" ||
  fail "grid survey exited $?"
[ -f "$work/grid.1-2-1.jsonl" ] && [ -f "$work/grid.1-5-1.jsonl" ] || fail "grid files missing: $(ls "$work")"
/usr/bin/python3 - "$work/grid.json" <<'PY' || fail "grid summary wrong"
import json, sys
grid = json.load(open(sys.argv[1]))
assert grid["format"] == "pleat-survey-grid/1"
assert [s["arch"] for s in grid["surveys"]] == [[1, 2, 1], [1, 5, 1]]
for s, m in zip(grid["surveys"], (2, 5)):
    assert s["histogram"] == {str(2 * m + 1): 8}, s["histogram"]
    assert s["scaling_bound"] == 2 * m + 1 and s["at_scaling_bound"] == "1" and s["variance"] == "0"
PY
"$pleat" survey --arch 1,3,1 --arch 1,4,1 --samples 2 --seed 9 -q -o "$work/g-{arch}-s.jsonl" > "$work/grid.txt" ||
  fail "grid with {arch} exited $?"
[ -f "$work/g-1-3-1-s.jsonl" ] && [ -f "$work/g-1-4-1-s.jsonl" ] || fail "{arch} not replaced: $(ls "$work")"
grep -q "^1,4,1 " "$work/grid.txt" || fail "no grid row for 1,4,1: $(cat "$work/grid.txt")"
"$pleat" survey summary "$work/g-1-3-1-s.jsonl" "$work/g-1-4-1-s.jsonl" > "$work/grid2.txt" || fail "summary of two files exited $?"
cmp -s "$work/grid.txt" "$work/grid2.txt" || fail "summary of the grid files differs from the run's table"

# A per-sample time limit far below a walk's cost (1 us): samples that need a
# walk are cut short, kept with their bounds, and out of the histogram. A
# sample whose exact points meet the scaling bound may still finish before
# its first stop check; it is then certified at that bound.
"$pleat" survey --arch 2,5,5,5,1 --samples 3 --seed 1 --time-limit-each 0.000001 --json -q -o "$work/cut.jsonl" \
  > "$work/cut.json" || fail "time-limited survey exited $?"
/usr/bin/python3 - "$work/cut.json" "$work/cut.jsonl" <<'PY' || fail "time-limited samples reported wrongly"
import json, sys
s = json.load(open(sys.argv[1]))
lines = [json.loads(line) for line in open(sys.argv[2]).read().splitlines()[1:]]
cut = [d for d in lines if not d["certified"]]
assert len(lines) == 3 and len(cut) >= 1, s
assert s["uncertified"] == len(cut) and s["certified"] == 3 - len(cut), s
assert sorted(u["sample"] for u in s["uncertified_samples"]) == sorted(d["sample"] for d in cut)
assert sum(s["histogram"].values()) == 3 - len(cut), s
for d in lines:
    if d["certified"]:
        assert d["functional_dimension"] == s["scaling_bound"], d
    else:
        assert d["functional_dimension"] is None and d["stop_reason"] == "time-limit", d
        assert d["lower_bound"] <= d["upper_bound"]
PY

# Plot: SVG with the bound marked, CSV whose counts are the histogram.
"$pleat" survey plot "$work/all.jsonl" --out "$work/hist.svg" || fail "plot svg exited $?"
"$pleat" survey plot "$work/all.jsonl" --out "$work/hist.csv" || fail "plot csv exited $?"
"$pleat" survey summary "$work/all.jsonl" --json > "$work/all.json" || fail "summary exited $?"
/usr/bin/python3 - "$work/hist.svg" "$work/hist.csv" "$work/all.json" <<'PY' || fail "plot output wrong"
import csv, json, sys
import xml.etree.ElementTree as ET
root = ET.parse(sys.argv[1]).getroot()  # well-formed XML
text = open(sys.argv[1]).read()
summary = json.load(open(sys.argv[3]))
assert "scaling bound %d" % summary["scaling_bound"] in text
bars = [e for e in root.iter("{http://www.w3.org/2000/svg}rect") if e.find("{http://www.w3.org/2000/svg}title") is not None]
assert len(bars) == len(summary["histogram"]), (len(bars), summary["histogram"])
rows = list(csv.DictReader(open(sys.argv[2])))
counts = {r["functional_dimension"]: int(r["count"]) for r in rows if int(r["count"])}
assert counts == summary["histogram"], (counts, summary["histogram"])
assert [r["functional_dimension"] for r in rows if r["is_scaling_bound"] == "true"] == [str(summary["scaling_bound"])]
PY
"$pleat" survey plot "$work/all.jsonl" --out "$work/hist.png" 2> /dev/null
[ $? -eq 2 ] || fail "plot to .png should be refused"
echo "survey shards: ok"
