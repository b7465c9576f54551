#!/usr/bin/env bash
# Stop means stop in certify's kernel phase on a deep network too. With 2
# inputs and 1000 hidden layers of width 2 (random, He init) most neurons die
# a few layers in: the walk sees a handful of regions, and the phase after it
# faces a kernel of about 4000 dense flat directions (its elimination modulo
# p, reconstruction and exact check against every region). Certify took
# about 4 s in all on the 2-core development machine after the allocator
# and proof work of 2026-12-03 (it was 25 s), and about 1.2 s (1.3 GB) after
# the sparse candidate and faster check of the same day's proof round, of
# which the points and the walk take the first 0.07 s: so the limit and the
# interrupt below fall at 0.5 s, in the phase after the walk. A 20 s limit
# used to end after 32 s there; the elimination now runs in FLINT calls of
# well under a second with a poll between them, and the check and
# reconstruction poll per vector and per prime. Checked: bounds,
# "time-limit" / "interrupted", never certified, exit 0 / 130. The wall
# bounds (limit + 12 s) are generous so that a loaded machine does not fail
# them.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }

net=$work/deep1000.json
"$pleat" random --arch "2$(printf ',2%.0s' $(seq 1000)),1" --seed 1 -o "$net" || fail "pleat random exited $?"

within 13 "$pleat" certify "$net" --time-limit 0.5 --threads 2 --json -q > "$work/limit.json"
status=$?
[ $status = 0 ] || fail "time-limited certify exited $status"
[ "$(json_eval "$work/limit.json" '(d["certified"], d["functional_dimension"], d["stop_reason"])')" \
  = "(False, None, 'time-limit')" ] || fail "time limit: $(head -c 600 "$work/limit.json")"
[ "$(json_eval "$work/limit.json" 'd["lower_bound"] <= d["upper_bound"] <= d["scaling_bound"]')" = True ] ||
  fail "bounds out of order"
after_walk=$(json_eval "$work/limit.json" 'd["walk_complete"]')

# An interrupt 0.5 s in: exit 130 within seconds, bounds, not certified.
within 13 interrupt_when_ready 0.5 "$pleat" certify "$net" --threads 2 --json -q > "$work/int.json"
status=$?
[ $status = 130 ] || fail "interrupted certify exited $status, expected 130"
[ "$(json_eval "$work/int.json" '(d["certified"], d["stop_reason"])')" = "(False, 'interrupted')" ] ||
  fail "interrupt: $(head -c 600 "$work/int.json")"
echo "certify on a deep network: stops within seconds with bounds (walk complete when the limit fell: $after_walk)"
