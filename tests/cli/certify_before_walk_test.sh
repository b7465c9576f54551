#!/usr/bin/env bash
# A certify stopped while it draws points, before any walk began, says so: the
# old binary printed "walk stopped: time-limit" and "0 walked (walk cut
# short)" for a walk that never started. Its lower bound comes from the points'
# regions (their witnesses), which the regions line names.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }
net=$work/big.json
"$pleat" random --arch 3,10,10,10,1 --seed 1 -o "$net" > /dev/null || fail "pleat random exited $?"

# 1 ms: the points phase (hundreds of exact points on this 3-input network, about
# 6 ms; on a plane they may now give up within 1 ms and the walk start) cannot end.
"$pleat" certify "$net" -q --json --time-limit 0.001 > "$work/cut.json" || fail "certify exited $?"
[ "$(json_eval "$work/cut.json" '(d["certified"], d["regions_walked"], d["walk_seconds"], d["stop_reason"])')" \
  = "(False, 0, 0.0, 'time-limit')" ] || fail "expected a stop before the walk: $(head -c 600 "$work/cut.json")"
out=$("$pleat" certify "$net" -q --time-limit 0.001) || fail "certify exited $?"
expect_contains "$out" "NOT certified (stopped before the walk: time-limit)" "a stop before the walk"
expect_contains "$out" "regions               none walked (" "a stop before the walk"
case "$out" in *"walk cut short"*|*"walk stopped"*) fail "a walk that never started is said to be cut short: $out" ;; esac
echo "certify_before_walk: a stop while drawing points is not called a walk cut short"
