#!/usr/bin/env bash
# certify --bundle stopped in its second walk (the one that gathers the
# evidence after certifying from exact points, no walk): stderr says that no
# bundle was written and why (the time limit, an interrupt), and when the
# --bundle file is an earlier run's, that the file there is that run's, not
# overwritten. The old binary said only "the walk that gathers the evidence
# was stopped", leaving an earlier bundle there to pass for this run's.
set -u
source "$(dirname "$0")/lib.sh"
net=$work/wide.json
# 4,60,1: the points certify it in milliseconds; the second walk takes minutes.
"$pleat" random --arch 4,60,1 --seed 1 -o "$net" > /dev/null || fail "pleat random exited $?"
earlier=$work/earlier.json
echo '{"earlier": true}' > "$earlier"

# --time-limit: the value is certified from points, the walk for the bundle runs out.
"$pleat" certify "$net" -q --threads 1 --time-limit "$(scaled 1)" --bundle "$work/none.json" > "$work/limit.out" \
  2> "$work/limit.err" || fail "time-limited certify exited $?"
grep -q "^functional dimension  301  certified" "$work/limit.out" && grep -q "none walked" "$work/limit.out" ||
  fail "expected a value certified from points: $(cat "$work/limit.out")"
[ ! -e "$work/none.json" ] || fail "a bundle was written"
[ "$(cat "$work/limit.err")" = "pleat: no bundle written to $work/none.json: the second walk, which gathers the evidence, ran out of --time-limit (the value above stands)" ] ||
  fail "stderr: $(cat "$work/limit.err")"
"$pleat" certify "$net" -q --threads 1 --time-limit "$(scaled 1)" --bundle "$earlier" > /dev/null 2> "$work/limit2.err" ||
  fail "time-limited certify exited $?"
[ "$(cat "$work/limit2.err")" = "pleat: no bundle written to $earlier: the second walk, which gathers the evidence, ran out of --time-limit (the value above stands)
pleat: $earlier is an earlier run's bundle, not this run's (not overwritten)" ] || fail "stderr: $(cat "$work/limit2.err")"
[ "$(cat "$earlier")" = '{"earlier": true}' ] || fail "the earlier bundle was changed"

# Ctrl-C in the second walk: exit 130, and the same two lines, naming the interrupt.
timeout --preserve-status -s INT "$(scaled 1)" "$pleat" certify "$net" -q --threads 1 --bundle "$earlier" \
  > "$work/int.out" 2> "$work/int.err"
status=$?
[ $status = 130 ] || fail "interrupted certify exited $status, expected 130: $(cat "$work/int.err")"
[ "$(cat "$work/int.err")" = "pleat: no bundle written to $earlier: the second walk, which gathers the evidence, was interrupted (the value above stands)
pleat: $earlier is an earlier run's bundle, not this run's (not overwritten)" ] || fail "stderr: $(cat "$work/int.err")"
[ "$(cat "$earlier")" = '{"earlier": true}' ] || fail "the earlier bundle was changed"

# Not certified (stopped in the first walk): an earlier bundle is named too.
"$pleat" certify "$net" -q --full-walk --time-limit 0.2 --bundle "$earlier" > /dev/null 2> "$work/bounds.err" ||
  fail "certify --full-walk exited $?"
[ "$(cat "$work/bounds.err")" = "pleat: no bundle written to $earlier: the functional dimension was not certified (bounds only)
pleat: $earlier is an earlier run's bundle, not this run's (not overwritten)" ] || fail "stderr: $(cat "$work/bounds.err")"
echo "bundle_stop: an unwritten bundle says why, and names an earlier file as not this run's"
