#!/usr/bin/env bash
# pleat survey: the same lines at --threads 1 and 2; a resumed survey (file cut
# after some lines and inside a line, or inside the header) equals an
# uninterrupted one, also with the projection's timed samples (no -q); a different survey in the file is refused,
# and so are a one-line file that is no survey and a whole line (newline and all) that is no JSON; each sample
# equals 'pleat certify' on 'pleat random --sample i'; the summary's mean and
# variance equal Python's exact fractions.
set -u
source "$(dirname "$0")/lib.sh"
[ -x /usr/bin/python3 ] || { echo "no /usr/bin/python3"; exit 77; }

arch=2,4,4,1
seed=3
samples=10
run() { "$pleat" survey --arch $arch --samples $samples --seed $seed -q "$@" > /dev/null; }

# The lines without timing keys, sorted by sample, header first.
normal() {
  /usr/bin/python3 - "$1" <<'PY'
import json, sys
lines = open(sys.argv[1]).read().splitlines()
header, rest = json.loads(lines[0]), [json.loads(l) for l in lines[1:]]
def strip(d):
    return {k: v for k, v in d.items() if k != "seconds" and not k.endswith("_seconds")}
print(json.dumps(header, sort_keys=True))
for d in sorted(rest, key=lambda d: d["sample"]):
    print(json.dumps(strip(d), sort_keys=True))
PY
}

run --threads 1 -o "$work/one.jsonl" || fail "survey at 1 thread exited $?"
run --threads 2 -o "$work/two.jsonl" || fail "survey at 2 threads exited $?"
[ "$(wc -l < "$work/one.jsonl")" -eq $((samples + 1)) ] || fail "expected a header and $samples lines"
normal "$work/one.jsonl" > "$work/one.norm"
normal "$work/two.jsonl" > "$work/two.norm"
cmp -s "$work/one.norm" "$work/two.norm" || { diff "$work/one.norm" "$work/two.norm" >&2; fail "1 and 2 threads differ"; }

# Resume after a kill: keep the header, 4 lines and half of the fifth.
head -n 5 "$work/two.jsonl" > "$work/cut.jsonl"
sed -n 6p "$work/two.jsonl" | head -c 40 >> "$work/cut.jsonl"
run --threads 2 -o "$work/cut.jsonl" 2> "$work/cut.err" || fail "resume exited $?"
grep -q "cut short" "$work/cut.err" || fail "resume did not report the cut line: $(cat "$work/cut.err")"
[ "$(wc -l < "$work/cut.jsonl")" -eq $((samples + 1)) ] || fail "resumed file has $(wc -l < "$work/cut.jsonl") lines"
normal "$work/cut.jsonl" > "$work/cut.norm" || fail "resumed file does not parse"
cmp -s "$work/cut.norm" "$work/one.norm" || { diff "$work/cut.norm" "$work/one.norm" >&2; fail "resumed survey differs"; }
# The 4 kept lines were not recomputed: they are byte for byte the old ones.
cmp -s <(head -n 5 "$work/cut.jsonl") <(head -n 5 "$work/two.jsonl") || fail "resume rewrote finished lines"

# Without -q a run first times one sample per thread of each architecture
# (written once, not rerun) and prints the projected CPU time for the samples
# still to run: the same file as above, fresh and resumed after 4 samples.
"$pleat" survey --arch $arch --samples $samples --seed $seed --threads 2 -o "$work/probe.jsonl" \
  > /dev/null 2> "$work/probe.err" || fail "survey without -q exited $?"
grep -q "projected CPU time .* for $samples samples ($arch .* per sample; timed on 2 threads)" "$work/probe.err" ||
  fail "no projection: $(cat "$work/probe.err")"
[ "$(wc -l < "$work/probe.jsonl")" -eq $((samples + 1)) ] || fail "probed file has $(wc -l < "$work/probe.jsonl") lines"
cmp -s <(normal "$work/probe.jsonl") "$work/one.norm" || fail "the survey with a projection differs"
head -n 5 "$work/two.jsonl" > "$work/probe_resume.jsonl"
"$pleat" survey --arch $arch --samples $samples --seed $seed --threads 2 -o "$work/probe_resume.jsonl" \
  > /dev/null 2> "$work/probe_resume.err" || fail "resumed survey without -q exited $?"
grep -q "projected CPU time .* for $((samples - 4)) samples" "$work/probe_resume.err" ||
  fail "the projection does not count only the samples to run: $(cat "$work/probe_resume.err")"
cmp -s <(normal "$work/probe_resume.jsonl") "$work/one.norm" || fail "the resumed survey with a projection differs"

# A cut exactly at a line end, and a file holding only half a header.
head -n 3 "$work/one.jsonl" > "$work/end.jsonl"
run -o "$work/end.jsonl" || fail "resume at a line end exited $?"
cmp -s <(normal "$work/end.jsonl") "$work/one.norm" || fail "resume at a line end differs"
head -c 30 "$work/one.jsonl" > "$work/header.jsonl"
run -o "$work/header.jsonl" || fail "resume from half a header exited $?"
cmp -s <(normal "$work/header.jsonl") "$work/one.norm" || fail "resume from half a header differs"
# A complete file: nothing to run, nothing changes.
cp "$work/one.jsonl" "$work/again.jsonl"
run -o "$work/again.jsonl" || fail "rerun of a complete survey exited $?"
cmp -s "$work/again.jsonl" "$work/one.jsonl" || fail "rerunning a complete survey changed its file"

# Another survey's file is refused, and left alone.
"$pleat" survey --arch $arch --samples $samples --seed 4 -q -o "$work/one.jsonl" > /dev/null 2> "$work/other.err"
[ $? -eq 2 ] || fail "a different seed on an existing file should exit 2"
grep -q "different survey" "$work/other.err" || fail "unclear message: $(cat "$work/other.err")"
grep -q "seed" "$work/other.err" || fail "the message does not name the key that differs"
cmp -s <(normal "$work/one.jsonl") "$work/one.norm" || fail "the refused run touched the file"
# A one-line file without a newline that is no survey header (a network
# json.dump wrote) was taken for a cut header and replaced: refused, kept.
printf '{"format":"pleat-network/1","layers":[]}' > "$work/oneline.json"
run -o "$work/oneline.json" 2> "$work/oneline.err" && fail "a one-line non-survey file was replaced"
grep -q "oneline.json: is not a survey file" "$work/oneline.err" || fail "unclear message: $(cat "$work/oneline.err")"
[ "$(cat "$work/oneline.json")" = '{"format":"pleat-network/1","layers":[]}' ] || fail "the refused run touched the file"
# A broken line in the middle is an error, not silently dropped.
sed '3s/.*/{"sample": oops/' "$work/one.jsonl" > "$work/broken.jsonl"
run -o "$work/broken.jsonl" 2> "$work/broken.err" && fail "a broken middle line was accepted"
grep -q "broken.jsonl:3" "$work/broken.err" || fail "the message does not name the line: $(cat "$work/broken.err")"
# So is a whole last line (ended by its newline) that is no JSON: an
# interrupted run leaves a cut line without a newline; this one was dropped
# and its sample run again, the file no longer holding what it held.
sed '$s/.*/{"sample": oops/' "$work/one.jsonl" > "$work/broken_last.jsonl"
cp "$work/broken_last.jsonl" "$work/broken_last.before"
run -o "$work/broken_last.jsonl" 2> "$work/broken_last.err" && fail "a whole non-JSON last line was dropped"
grep -q "broken_last.jsonl:$((samples + 1)): not a JSON line (a whole line" "$work/broken_last.err" ||
  fail "the message does not name the line: $(cat "$work/broken_last.err")"
cmp -s "$work/broken_last.jsonl" "$work/broken_last.before" || fail "the refused run touched the file"

# Each sample equals pleat certify on pleat random --sample i.
for i in 0 4 7; do
  "$pleat" random --arch $arch --seed $seed --sample $i -o "$work/net$i.json" || fail "pleat random exited $?"
  certified=$("$pleat" certify "$work/net$i.json" --json -q | /usr/bin/python3 -c 'import json,sys; print(json.load(sys.stdin)["functional_dimension"])')
  surveyed=$(/usr/bin/python3 -c '
import json, sys
for line in open(sys.argv[1]).read().splitlines()[1:]:
    d = json.loads(line)
    if d["sample"] == int(sys.argv[2]): print(d["functional_dimension"])' "$work/one.jsonl" $i)
  [ -n "$certified" ] && [ "$certified" = "$surveyed" ] || fail "sample $i: survey $surveyed, certify $certified"
done

# Mean and variance (n - 1) against Python's fractions.Fraction and
# statistics.variance (the standard library's sample variance, exact on Fractions).
"$pleat" survey summary "$work/one.jsonl" --json > "$work/summary.json" || fail "summary exited $?"
/usr/bin/python3 - "$work/one.jsonl" "$work/summary.json" <<'PY' || fail "summary statistics disagree with Python's fractions"
import json, sys, statistics
from fractions import Fraction
values = [Fraction(json.loads(l)["functional_dimension"]) for l in open(sys.argv[1]).read().splitlines()[1:]]
summary = json.load(open(sys.argv[2]))
assert summary["format"] == "pleat-survey-summary/1"
assert Fraction(summary["mean"]) == sum(values) / len(values), (summary["mean"], sum(values) / len(values))
assert Fraction(summary["variance"]) == statistics.variance(values), (summary["variance"], statistics.variance(values))
assert "/" in summary["mean"] or Fraction(summary["mean"]).denominator == 1
counts = {}
for v in values: counts[str(v)] = counts.get(str(v), 0) + 1
assert summary["histogram"] == counts, (summary["histogram"], counts)
top = max(counts.values())
assert summary["modes"] == sorted(int(k) for k, c in counts.items() if c == top)
bound = summary["scaling_bound"]
assert bound == 29  # D = 3*4 + 5*4 + 5 = 37, minus 8 hidden neurons
assert Fraction(summary["at_scaling_bound"]) == Fraction(sum(1 for v in values if v == bound), len(values))
assert summary["samples"] == len(values) and summary["missing"] == 0 and summary["uncertified"] == 0
PY
# A sample's stop_reason is one of the spec's words (read into an enum): any
# other is refused, naming it.
/usr/bin/python3 - "$work/one.jsonl" "$work/odd_stop.jsonl" <<'PY'
import json, sys
lines = open(sys.argv[1]).read().splitlines()
sample = json.loads(lines[1])
sample["stop_reason"] = "sideways"
lines[1] = json.dumps(sample)
open(sys.argv[2], "w").write("\n".join(lines) + "\n")
PY
if "$pleat" survey summary "$work/odd_stop.jsonl" > /dev/null 2> "$work/odd_stop.err"; then
  fail "a sample with stop_reason \"sideways\" was accepted"
fi
grep -q 'unknown "stop_reason" "sideways"' "$work/odd_stop.err" || fail "message: $(cat "$work/odd_stop.err")"
# Samples cut short by a time limit stay bounds on a rerun without it: the
# resume line says so (it read "3 samples already there, 0 to run", and the
# summary "3 cut short by the time limit" from a run given none).
"$pleat" survey --arch 2,20,20,1 --samples 3 --seed 1 --time-limit-each 0.000001 -q -o "$work/limited.jsonl" > /dev/null ||
  fail "time-limited survey exited $?"
cut=$(grep -c '"functional_dimension":null' "$work/limited.jsonl")
[ "$cut" -ge 1 ] || fail "no sample of 2,20,20,1 was cut short in 1 us"
"$pleat" survey --arch 2,20,20,1 --samples 3 --seed 1 -o "$work/limited.jsonl" > /dev/null 2> "$work/limited.err" ||
  fail "the rerun exited $?"
grep -q "resuming, 3 samples already there ($cut of them cut short by a time limit, kept as bounds), 0 to run" \
  "$work/limited.err" || fail "resume line: $(cat "$work/limited.err")"
echo "survey run: ok"
