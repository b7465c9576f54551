#!/usr/bin/env bash
# Faults in a walk across processes: a rank killed mid-walk ends the run with
# a non-zero exit and mpirun's message naming the rank, and nothing claims
# certified (the partial region file is incomplete for pleat verify);
# --time-limit and an interrupt (SIGINT to mpirun) stop every rank and rank 0
# reports bounds, never certified.
set -u
source "$(dirname "$0")/../cli/lib.sh"
source "$(dirname "$0")/lib.sh"

# A network whose walk with certificates takes minutes across 3 processes here
# (about 200 regions a second); the certificates let pleat verify judge the
# partial region files.
huge=$work/huge.json
"$pleat" random --arch 3,40,40,1 --seed 7 -o "$huge" || fail "pleat random exited $?"

# pid_of_rank MPIRUN_PID RANK: the process of that rank (a child of mpirun).
pid_of_rank() {
  local pid
  for pid in $(pgrep -P "$1"); do
    tr '\0' '\n' < "/proc/$pid/environ" 2> /dev/null | grep -qx "OMPI_COMM_WORLD_RANK=$2" && { echo "$pid"; return 0; }
  done
  return 1
}
# wait_for_lines FILE N: until FILE has N lines (the walk is under way), at most 60 s.
wait_for_lines() {
  for _ in $(seq 600); do
    [ -f "$1" ] && [ "$(wc -l < "$1")" -ge "$2" ] && return 0
    sleep 0.1
  done
  fail "$1 never reached $2 lines"
}
# check_not_certified SUMMARY REGION_FILE: nothing claims a complete walk:
# not the summary, and pleat verify rejects the region file (incomplete, or
# a last line cut short by a killed rank 0).
check_not_certified() {
  grep -q -E '"certified": true|status +certified' "$1" && fail "a stopped walk claims certified: $(cat "$1")"
  "$pleat" verify "$huge" "$2" > "$work/verify.out" 2>&1 &&
    fail "pleat verify accepts the partial region file $2: $(cat "$work/verify.out")"
  return 0
}

# --- A rank killed (SIGKILL) in the middle of the walk.
"${mpirun_cmd[@]}" -n 3 "$pleat" walk "$huge" --threads 1 --quiet --json --certificates -o "$work/killed.jsonl" \
  > "$work/killed.json" 2> "$work/killed.err" &
mpirun_pid=$!
wait_for_lines "$work/killed.jsonl" 50
victim=$(pid_of_rank "$mpirun_pid" 1) || fail "no process of rank 1 under mpirun"
kill -KILL "$victim"
wait "$mpirun_pid"
status=$?
[ $status -ne 0 ] || fail "a walk whose rank 1 was killed exited 0"
grep -q -i "rank 1" "$work/killed.err" || fail "no message names the killed rank: $(cat "$work/killed.err")"
check_not_certified "$work/killed.json" "$work/killed.jsonl"

# --- --time-limit: every rank stops; rank 0 reports bounds and exits 0.
"${mpirun_cmd[@]}" -n 3 "$pleat" walk "$huge" --threads 1 --quiet --json --certificates --time-limit 2 -o "$work/timed.jsonl" \
  > "$work/timed.json" 2> "$work/timed.err" || fail "a walk stopped by its time limit exited $? ($(cat "$work/timed.err"))"
"$python" - "$work/timed.json" "$work/timed.jsonl" <<'PY' || fail "the time-limited summary is wrong: $(cat "$work/timed.json")"
import json, sys
summary = json.load(open(sys.argv[1]))
assert summary["complete"] is False and summary["certified"] is False
assert summary["stop_reason"] == "time-limit", summary["stop_reason"]
lines = open(sys.argv[2]).read().splitlines()
assert len(lines) - 1 == summary["regions"], (len(lines), summary["regions"])
PY
check_not_certified "$work/timed.json" "$work/timed.jsonl"

# --- SIGINT to mpirun: it passes SIGTERM to every rank (after
# odls_base_sigkill_timeout seconds, then SIGKILL as long again); pleat takes
# it as an interrupt, rank 0 writes what it found as bounds.
timeout --foreground --preserve-status -s INT 3 "${mpirun_cmd[@]}" --mca odls_base_sigkill_timeout 3 -n 3 \
  "$pleat" walk "$huge" --threads 1 --quiet --certificates -o "$work/interrupted.jsonl" > "$work/interrupted.out" 2> "$work/interrupted.err"
status=$?
[ $status -ne 0 ] || fail "an interrupted walk exited 0"
grep -q "stopped (interrupted)" "$work/interrupted.out" ||
  fail "rank 0 did not report the interrupt:"$'\n'"$(cat "$work/interrupted.out" "$work/interrupted.err")"
check_not_certified "$work/interrupted.out" "$work/interrupted.jsonl"

echo "mpi faults: ok (killed rank: exit $status; time limit and interrupt: bounds)"
