#!/usr/bin/env bash
# certify --time-limit at --threads 2 ends at the limit, not seconds after it:
# the walk stopped on time, but the regions' rows it had queued for the basis
# (up to 64 MB) were then all reduced with nothing polled (on 2,30,30,30,1 a
# limit of 1 s gave "seconds" 3.9, walk_seconds 1.0). Now the rows not yet
# reduced are dropped and the walk is reported cut at the last region whose
# rows were reduced: bounds, not certified, witnesses only of those regions.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }

net=$work/deep.json
"$pleat" random --arch 2,40,40,40,1 --seed 1 -o "$net" || fail "pleat random exited $?"

limit=$(scaled 1)
for run in 1 2; do
  "$pleat" certify "$net" --full-walk --threads 2 --time-limit "$limit" --json -q > "$work/cut$run.json" ||
    fail "certify --threads 2 --time-limit exited $?"
  [ "$(json_eval "$work/cut$run.json" '(d["certified"], d["stop_reason"], d["walk_complete"])')" \
    = "(False, 'time-limit', False)" ] || fail "expected a walk cut by the time limit: $(head -c 400 "$work/cut$run.json")"
  seconds=$(json_eval "$work/cut$run.json" 'd["seconds"]')
  "$python" -c "import sys; sys.exit(0 if $seconds < $limit + $(scaled 0.5) else 1)" ||
    fail "--time-limit $limit at --threads 2 ran $seconds s (walk $(json_eval "$work/cut$run.json" 'd["walk_seconds"]') s)"
  [ "$(json_eval "$work/cut$run.json" 'd["lower_bound"] <= d["upper_bound"] == d["scaling_bound"]')" = True ] ||
    fail "bounds out of order: $(head -c 400 "$work/cut$run.json")"
  [ "$(json_eval "$work/cut$run.json" 'd["regions_contributing"] <= d["regions_walked"]')" = True ] ||
    fail "more regions contributed than were walked: $(head -c 400 "$work/cut$run.json")"
done
echo "certify --threads 2: the time limit holds after the walk's stop"
