#!/usr/bin/env bash
# Stop means stop after the walk too: a time limit or an interrupt that
# arrives during certify's kernel phase (lifting and checking the extra flat
# directions) ends the run within seconds with bounds, never "certified";
# an interrupt exits 130. The network has one input and two wide layers: its
# walk is short (few regions) and its kernel large (thousands of flat
# directions), so the limit falls in the phase after the walk.
# --rows-out of a stopped run holds the rows found before the stop: its first
# line says it is partial, and so does stderr (it read as a certified run's).
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }

net=$work/wide.json
"$pleat" random --arch 1,64,64,1 --seed 1 -o "$net" || fail "pleat random exited $?"

# --time-limit 2: on an idle machine the walk ends well before and the kernel
# phase is cut; on a loaded one the walk may be cut instead (then only the
# timing and the bounds are asserted, as for any stopped run).
start=$(now)
"$pleat" certify "$net" --json -q --full-walk --time-limit 2 --rows-out "$work/rows.csv" \
  --witness-out "$work/witnesses.txt" > "$work/limit.json" 2> "$work/limit.err"
status=$?
elapsed=$("$python" -c "print($(now) - $start)")
[ $status = 0 ] || fail "time-limited certify exited $status"
"$python" -c "import sys; sys.exit(0 if $elapsed < $(scaled 10) else 1)" || fail "--time-limit 2 took $elapsed s"
[ "$(json_eval "$work/limit.json" '(d["certified"], d["functional_dimension"], d["stop_reason"])')" \
  = "(False, None, 'time-limit')" ] || fail "time limit: $(head -c 600 "$work/limit.json")"
[ "$(json_eval "$work/limit.json" 'd["walk_complete"]')" = True ] && after_walk=1 || after_walk=0
[ "$(json_eval "$work/limit.json" 'd["lower_bound"] <= d["upper_bound"] <= d["scaling_bound"]')" = True ] ||
  fail "bounds out of order"
lower=$(json_eval "$work/limit.json" 'd["lower_bound"]')
contributing=$(json_eval "$work/limit.json" 'd["regions_contributing"]')
partial="# partial: the run was not certified (stopped: time-limit); the exact rows of the $contributing regions that contributed before it ended, of rank $lower, the proved lower bound"
[ "$(head -n 1 "$work/rows.csv")" = "$partial" ] || fail "--rows-out of a stopped run: $(head -c 300 "$work/rows.csv")"
grep -qF "pleat: $work/rows.csv: ${partial#\# }" "$work/limit.err" || fail "stderr: $(cat "$work/limit.err")"
[ "$(grep -c '^#' "$work/rows.csv")" = 1 ] || fail "one comment line only"
# --witness-out of a stopped run: its points prove the lower bound only, and
# its first line says so (it read as a certified run's evidence), as does
# stderr; the points still re-check to that bound with --points.
witnesses=$(json_eval "$work/limit.json" 'len(d["witness_points"])')
partial="# partial: the run was not certified (stopped: time-limit); the $witnesses points whose regions' rows raised the rank before it ended, to $lower, the proved lower bound, not the functional dimension"
[ "$(head -n 1 "$work/witnesses.txt")" = "$partial" ] || fail "--witness-out of a stopped run: $(head -c 300 "$work/witnesses.txt")"
grep -qF "pleat: $work/witnesses.txt: ${partial#\# }" "$work/limit.err" || fail "stderr: $(cat "$work/limit.err")"
"$pleat" certify "$net" --points "$work/witnesses.txt" --json -q > "$work/recheck.json" || fail "re-check exited $?"
[ "$(json_eval "$work/recheck.json" 'd["regions_rank"]')" = "$lower" ] || fail "witnesses re-check: $(head -c 300 "$work/recheck.json")"

# An interrupt 2 s in: exit 130 within seconds, bounds, not certified.
start=$(now)
timeout --preserve-status -s INT "$(scaled 2)" "$pleat" certify "$net" --json -q --full-walk > "$work/int.json"
status=$?
elapsed=$("$python" -c "print($(now) - $start)")
[ $status = 130 ] || fail "interrupted certify exited $status, expected 130"
"$python" -c "import sys; sys.exit(0 if $elapsed < $(scaled 10) else 1)" || fail "the interrupt took $elapsed s to act"
[ "$(json_eval "$work/int.json" '(d["certified"], d["stop_reason"])')" = "(False, 'interrupted')" ] ||
  fail "interrupt: $(head -c 600 "$work/int.json")"
out=$("$pleat" certify "$net" -q --full-walk --time-limit 2) || fail "human output exited $?"
case "$out" in *"NOT certified ("*"time-limit)"*) ;; *) fail "human output: $out" ;; esac
echo "certify: stops within seconds with bounds (time limit fell after the walk: $after_walk)"
