# Shared preamble of the end-to-end tests, sourced as
#   source "$(dirname "$0")/lib.sh"
# by a script run as SCRIPT PLEAT_BINARY [SOURCE_DIR]: sets pleat and
# source_dir, a scratch directory $work removed on exit, fail(), within(),
# expect_contains, json_key, json_eval ($python is Debian's /usr/bin/python3)
# and now (seconds since the epoch, with nanoseconds, for timing a stop).
pleat=$1
source_dir=${2:-}
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
fail() { echo "FAIL: $*" >&2; exit 1; }
python=/usr/bin/python3
# The scripts' Python parts import this folder's helpers (terminal.py).
export PYTHONPATH="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)${PYTHONPATH:+:$PYTHONPATH}"
now() { date +%s.%N; }

# expect_contains TEXT NEEDLE WHAT: fails unless TEXT contains NEEDLE.
expect_contains() {
  case "$1" in *"$2"*) ;; *) fail "$3: expected '$2' in:"$'\n'"$1" ;; esac
}

# json_key FILE KEY: the value of a top-level key, as JSON.
json_key() { "$python" -c 'import json,sys; print(json.dumps(json.load(open(sys.argv[1]))[sys.argv[2]]))' "$1" "$2"; }

# edit_json_line SOURCE TARGET LINE PYTHON: SOURCE (JSON lines) written to
# TARGET with line LINE's object `d` changed by the Python statements.
edit_json_line() {
  "$python" - "$1" "$2" "$3" "$4" <<'PY'
import json, sys
lines = open(sys.argv[1]).read().splitlines()
k = int(sys.argv[3]) - 1
d = json.loads(lines[k])
exec(sys.argv[4])
lines[k] = json.dumps(d, separators=(",", ":"))
open(sys.argv[2], "w").write("\n".join(lines) + "\n")
PY
}

# json_eval FILE EXPR: a Python expression over the parsed file `d`, printed.
json_eval() { "$python" -c 'import json,sys; d=json.load(open(sys.argv[1])); print(eval(sys.argv[2]))' "$1" "$2"; }

# A sanitized build (PLEAT_SANITIZED, set by tests/CMakeLists.txt) starts and
# runs several times slower: a 300 MB binary takes seconds to start on a loaded
# machine. Tests that interrupt a run after a delay, or bound its wall time,
# scale both by time_scale (scaled SECONDS prints the scaled delay), so the
# signal still falls inside the run and not before the handler is installed.
time_scale=1
[ -n "${PLEAT_SANITIZED:-}" ] && time_scale=5
scaled() { awk -v s="$1" -v k="$time_scale" 'BEGIN { print s * k }'; }

# within SECONDS command...: runs it (killed after 300 s; a shell function such as
# interrupt_when_ready runs as it is), fails when it takes longer than SECONDS
# (scaled); returns the command's status.
within() {
  local limit=$(($1 * time_scale))
  shift
  local start=$SECONDS
  if declare -F "$1" > /dev/null; then "$@"; else timeout -s KILL 300 "$@"; fi
  local status=$?
  local took=$((SECONDS - start))
  [ $took -le "$limit" ] || fail "$* took $took s (limit $limit s)"
  return $status
}

# exact_rank FILE: the exact rank over the rationals of a comma-separated
# matrix file (one row per line), by sympy (tests/cli/exact_rank.py).
exact_rank() { "$python" "$(dirname "${BASH_SOURCE[0]}")/exact_rank.py" "$1"; }

# interrupt_when_ready SECONDS command...: runs the command in the background and
# sends it one SIGINT SECONDS (scaled) after it has installed its handler (SIGINT
# caught in /proc/PID/status), then returns its status (killed after 300 s). A
# plain `timeout -s INT` counts from the start: on a loaded machine pleat can
# take longer than that to start, and the default action then ends it with 130
# and no output, which is not the clean stop under test.
interrupt_when_ready() {
  local delay
  delay=$(scaled "$1")
  shift
  "$@" &
  local pid=$!
  (sleep 300 && kill -KILL $pid) 2> /dev/null &
  local watchdog=$!
  local polls=0
  until catches_sigint $pid; do
    kill -0 $pid 2> /dev/null && [ $polls -lt 6000 ] || break
    polls=$((polls + 1))
    sleep 0.005
  done
  sleep "$delay"
  kill -INT $pid 2> /dev/null
  wait $pid
  local status=$?
  kill $watchdog 2> /dev/null
  return $status
}

# catches_sigint PID: the process has a handler for SIGINT (bit 1 of SigCgt).
catches_sigint() {
  local mask
  mask=$(awk '/^SigCgt:/ { print $2 }' "/proc/$1/status" 2> /dev/null)
  [ -n "$mask" ] && (( (16#$mask >> 1) & 1 ))
}
