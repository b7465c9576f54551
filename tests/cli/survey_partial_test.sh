#!/usr/bin/env bash
# A survey file with samples still to run (a run interrupted, or read while it
# runs): its plot and its report page say how many of the planned samples they
# hold. The plot's subtitle read "7 of 7 samples certified" for 7 of 20, and
# the page's summary "7: 7 certified", as if the survey were whole; the text
# summary said "7 of 20" already.
set -u
source "$(dirname "$0")/lib.sh"
"$pleat" survey --arch 2,4,4,1 --samples 20 --seed 1 -q -o "$work/whole.jsonl" > /dev/null || fail "survey exited $?"
head -n 8 "$work/whole.jsonl" > "$work/part.jsonl"  # the header and 7 samples

"$pleat" survey summary "$work/part.jsonl" | grep -qx "samples               7 of 20: 7 certified, 0 cut short by the time limit" ||
  fail "summary: $("$pleat" survey summary "$work/part.jsonl")"
"$pleat" survey plot "$work/part.jsonl" --out "$work/part.svg" > /dev/null || fail "survey plot exited $?"
grep -q ">2,4,4,1: 7 of 20 samples certified; init he, 6 digits, seed 1, domain R^2; 13 not run yet<" "$work/part.svg" ||
  fail "the plot of a partial survey: $(grep -o '2,4,4,1: [^<]*' "$work/part.svg")"
"$pleat" survey plot "$work/whole.jsonl" --out "$work/whole.svg" > /dev/null || fail "survey plot exited $?"
grep -q ">2,4,4,1: 20 of 20 samples certified; init he, 6 digits, seed 1, domain R^2<" "$work/whole.svg" ||
  fail "the plot of a whole survey: $(grep -o '2,4,4,1: [^<]*' "$work/whole.svg")"

"$pleat" report "$work/part.jsonl" -o "$work/part.html" -q > /dev/null || fail "report exited $?"
grep -q '"label":"samples","text":"7 of 20: 7 certified, 0 cut short (bounds only, not in the histogram), 13 not run yet"' \
  "$work/part.html" || fail "the page of a partial survey: $(grep -o '"label":"samples","text":"[^"]*"' "$work/part.html")"
"$pleat" report "$work/whole.jsonl" -o "$work/whole.html" -q > /dev/null || fail "report exited $?"
grep -q '"label":"samples","text":"20 of 20: 20 certified, 0 cut short (bounds only, not in the histogram)"' \
  "$work/whole.html" || fail "the page of a whole survey: $(grep -o '"label":"samples","text":"[^"]*"' "$work/whole.html")"
echo "ok"
