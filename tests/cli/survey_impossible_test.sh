#!/usr/bin/env bash
# Survey files that claim the impossible are refused by 'survey summary',
# 'survey merge' and a resumed run, naming the file and line: a functional
# dimension above the scaling bound, lower_bound > upper_bound, certified with
# unequal bounds, equal bounds not certified in a run that was not stopped,
# values above the parametric dimension, a parametric
# dimension that is not the header architecture's. The bounds come from the
# architecture 2,3,1: D = (2+1)*3 + (3+1)*1 = 13 parameters, 3 hidden neurons,
# so the scaling bound lies in [10, 13] (written here from the formula).
set -u
source "$(dirname "$0")/lib.sh"
[ -x /usr/bin/python3 ] || { echo "no /usr/bin/python3"; exit 77; }

survey=(survey --arch 2,3,1 --samples 4 --seed 1 -q)
"$pleat" "${survey[@]}" -o "$work/good.jsonl" > /dev/null || fail "survey failed"
"$pleat" survey summary "$work/good.jsonl" > /dev/null || fail "summary of the untouched file failed"

# edit NAME LINE PYTHON: set keys of the JSON object on file line LINE.
edit() { edit_json_line "$work/good.jsonl" "$work/$1.jsonl" "$2" "$3"; }

# expect_refused NAME LINE NEEDLE: summary, merge and resume each exit 2 and name FILE:LINE.
expect_refused() {
  local name=$1 line=$2 needle=$3 out
  local file="$work/$name.jsonl"
  out=$("$pleat" survey summary "$file" 2>&1) && fail "$name: summary accepted it: $out"
  case "$out" in *"$file:$line: "*"$needle"*) ;; *) fail "$name: summary said: $out" ;; esac
  out=$("$pleat" survey merge "$file" -o "$work/merged_$name.jsonl" -q 2>&1) && fail "$name: merge accepted it"
  case "$out" in *"$file:$line: "*"$needle"*) ;; *) fail "$name: merge said: $out" ;; esac
  cp "$file" "$work/resume_$name.jsonl"
  out=$("$pleat" "${survey[@]}" -o "$work/resume_$name.jsonl" 2>&1) && fail "$name: resume accepted it"
  case "$out" in *"resume_$name.jsonl:$line: "*"$needle"*) ;; *) fail "$name: resume said: $out" ;; esac
}

edit above_scaling 3 'd["functional_dimension"] = d["lower_bound"] = d["upper_bound"] = 1000'
expect_refused above_scaling 3 "upper_bound 1000 is above the scaling bound 10"
edit crossed 2 'd.update(certified=False, functional_dimension=None, lower_bound=10, upper_bound=9, early_stop=False)'
expect_refused crossed 2 "lower_bound 10 is above upper_bound 9"
edit unequal 4 'd.update(certified=True, functional_dimension=8, lower_bound=8, upper_bound=10, early_stop=False)'
expect_refused unequal 4 "certified with unequal bounds"
edit meet_uncertified 5 'd.update(certified=False, functional_dimension=None, early_stop=False)'
expect_refused meet_uncertified 5 "the bounds meet but the line is not certified"
# Bounds that meet in a stopped run are what pleat writes (a stop while naming
# the proved extra directions): not certified, and read back, not refused.
edit meet_stopped 5 'd.update(certified=False, functional_dimension=None, early_stop=False, stop_reason="time-limit")'
out=$("$pleat" survey summary "$work/meet_stopped.jsonl" 2>&1) || fail "a stopped line whose bounds meet was refused: $out"
expect_contains "$out" "samples               4 of 4: 3 certified, 1 cut short by the time limit" "meet_stopped summary"
# The one value is said once, with why it is not certified (was 'between 12 and 12').
sample=$(sed -n 5p "$work/meet_stopped.jsonl" | "$python" -c 'import json,sys; d=json.load(sys.stdin); print(d["sample"], d["lower_bound"])')
expect_contains "$out" "sample ${sample% *}: ${sample#* } (its proved bounds meet; not certified: the run was cut short, time-limit)" \
  "meet_stopped summary's cut short line"
edit parameters 2 'd["parametric_dimension"] = 99'
expect_refused parameters 2 "parametric_dimension 99, but the header's architecture has 13"
edit scaling_above 3 'd["scaling_bound"] = d["upper_bound"] = d["lower_bound"] = d["functional_dimension"] = 14'
expect_refused scaling_above 3 "scaling_bound 14 is outside [10, 13]"
edit scaling_below 3 'd.update(scaling_bound=9, upper_bound=9, lower_bound=9, functional_dimension=9)'
expect_refused scaling_below 3 "scaling_bound 9 is outside [10, 13]"
# Numbers that do not fit their key's integer type (a float far beyond an int,
# found by the survey reader's fuzzer; a negative count) are the file's error.
edit huge_digits 1 'd["digits"] = 3.3e54'
expect_refused huge_digits 1 "key 'digits' has the wrong type"
edit negative_regions 2 'd["regions"] = -1'
expect_refused negative_regions 2 "key 'regions' has the wrong type"
# A header's box domain that is not a list of ["lo", "hi"] string pairs, or
# an empty interval (an empty pair, found by the survey reader's fuzzer, was
# "internal error: array index 0 is out of range"), is the file's error.
edit box_empty_pair 1 'd["domain"] = {"box": [[]]}'
expect_refused box_empty_pair 1 "a 'box' interval is not a pair of exact numbers as strings"
edit box_number 1 'd["domain"] = {"box": 5}'
expect_refused box_number 1 "the domain's 'box' is not a list of intervals"
edit box_empty_axis 1 'd["domain"] = {"box": [["2", "1"], ["0", "1"]]}'
expect_refused box_empty_axis 1 "axis 0 has lower bound 2 not below upper bound 1"
edit value_differs 2 'd["functional_dimension"] = 7'
expect_refused value_differs 2 "functional_dimension 7 differs from its bounds 10"
edit early 4 'd.update(certified=False, functional_dimension=None, lower_bound=5, upper_bound=10, early_stop=True)'
expect_refused early 4 "early_stop without reaching the scaling bound"
echo "survey_impossible: every impossible line refused by summary, merge and resume"
