#!/usr/bin/env bash
# mpirun -n P pleat survey: the samples split across the processes by index,
# rank 0 writing every line: the same summary as alone (byte for byte apart
# from timing keys), the same sample lines (in completion order, as with
# threads), resuming a cut file, a grid of two architectures, and survey
# summary printing once.
set -u
source "$(dirname "$0")/../cli/lib.sh"
source "$(dirname "$0")/lib.sh"

# same_samples A B: the same header and the same sample lines, in any order,
# timing apart.
same_samples() {
  "$python" - "$1" "$2" <<'PY' || fail "the sample lines of $1 and $2 differ"
import json, sys
def read(path):
    lines = [json.loads(line) for line in open(path).read().splitlines()]
    for line in lines[1:]:
        line.pop("seconds", None)
    return lines[0], sorted(json.dumps(line, sort_keys=True) for line in lines[1:])
header_a, samples_a = read(sys.argv[1])
header_b, samples_b = read(sys.argv[2])
assert header_a == header_b, (header_a, header_b)
assert samples_a == samples_b, "sample lines differ"
assert len(samples_a) > 0
PY
}

survey=(survey --arch 2,4,4,1 --samples 24 --seed 1 --quiet)
"$pleat" "${survey[@]}" --json -o "$work/alone.jsonl" > "$work/alone.json" || fail "pleat survey exited $?"
for ranks in 1 3; do
  "${mpirun_cmd[@]}" -n "$ranks" "$pleat" "${survey[@]}" --threads 1 --json -o "$work/mpi$ranks.jsonl" \
    > "$work/mpi$ranks.json" 2> "$work/mpi$ranks.err" || fail "mpirun -n $ranks pleat survey exited $? ($(cat "$work/mpi$ranks.err"))"
  diff <(strip_timing "$work/alone.json") <(strip_timing "$work/mpi$ranks.json") > "$work/diff" ||
    fail "the survey summary of $ranks processes differs:"$'\n'"$(head -20 "$work/diff")"
  same_samples "$work/alone.jsonl" "$work/mpi$ranks.jsonl"
done
[ "$(wc -l < "$work/mpi3.jsonl")" -eq 25 ] || fail "expected a header and 24 sample lines, got $(wc -l < "$work/mpi3.jsonl")"

# Resume: a file cut to its header and 7 samples is completed across 2 processes.
head -n 8 "$work/mpi3.jsonl" > "$work/resumed.jsonl"
"${mpirun_cmd[@]}" -n 2 "$pleat" "${survey[@]}" --threads 1 -o "$work/resumed.jsonl" > /dev/null 2> "$work/resume.err" ||
  fail "resuming across 2 processes exited $? ($(cat "$work/resume.err"))"
same_samples "$work/alone.jsonl" "$work/resumed.jsonl"
[ "$(wc -l < "$work/resumed.jsonl")" -eq 25 ] || fail "the resumed file has $(wc -l < "$work/resumed.jsonl") lines, not 25"

# A grid of two architectures: one file each, as alone.
grid=(survey --arch 1,3,1 --arch 2,3,1 --samples 8 --seed 2 --quiet)
"$pleat" "${grid[@]}" -o "$work/grid-alone-{arch}.jsonl" > "$work/grid.alone" || fail "pleat survey grid exited $?"
"${mpirun_cmd[@]}" -n 2 "$pleat" "${grid[@]}" --threads 1 -o "$work/grid-mpi-{arch}.jsonl" > "$work/grid.mpi" ||
  fail "mpirun pleat survey grid exited $?"
cmp -s "$work/grid.alone" "$work/grid.mpi" || fail "the grid's table differs across 2 processes"
for arch in 1-3-1 2-3-1; do same_samples "$work/grid-alone-$arch.jsonl" "$work/grid-mpi-$arch.jsonl"; done

# survey summary runs once, on rank 0.
"${mpirun_cmd[@]}" -n 3 "$pleat" survey summary "$work/alone.jsonl" > "$work/summary.mpi" || fail "mpirun pleat survey summary exited $?"
diff <("$pleat" survey summary "$work/alone.jsonl") "$work/summary.mpi" > /dev/null ||
  fail "survey summary under mpirun printed something else than once alone"

echo "mpi survey: ok (24 samples across 1 and 3 processes, resume, grid, summary)"
