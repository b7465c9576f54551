#!/bin/bash
# The progress line: on a terminal, certify and walk show it on standard
# error ("certifying: ...", "walking: ...") and clear it before they end;
# with -q, or when standard error is no terminal, nothing is written there.
# Its text is made only when shown (cli/progress.hpp): a lazily made line
# that were never shown would fail the first checks.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }

"$pleat" random --arch 3,10,10,10,1 --seed 1 -o "$work/net.json" || fail "random"

# on_terminal ARGS...: runs pleat with standard error on a pseudo-terminal
# and prints what it wrote there.
on_terminal() {
  "$python" - "$pleat" "$@" <<'PY'
import sys
from terminal import run_on_terminal
status, seen = run_on_terminal(sys.argv[1:])
sys.stdout.write(seen)
sys.exit(status)
PY
}

seen=$(on_terminal certify "$work/net.json" --box -1,1 --full-walk) || fail "certify on a terminal exited $?"
expect_contains "$seen" "certifying: " "certify's progress line"
case "$seen" in *$'\r\033[K') ;; *) fail "certify did not clear its progress line: $(printf '%q' "$seen")" ;; esac

# A walk of about 2 s, on one thread and on two: its levels are processed in
# chunks well under 0.2 s, and the line was shown only when one chunk took
# longer, which was never here.
"$pleat" random --arch 3,15,15,15,15,1 --seed 1 -o "$work/wide.json" || fail "random"
for threads in 1 2; do
  seen=$(on_terminal walk "$work/wide.json" --box -2,2 --threads $threads -o "$work/regions.jsonl") ||
    fail "walk on a terminal exited $?"
  expect_contains "$seen" "walking: " "walk's progress line, $threads threads"
done

seen=$(on_terminal certify "$work/net.json" --box -1,1 --full-walk -q) || fail "certify -q exited $?"
[ -z "$seen" ] || fail "certify -q wrote to the terminal: $(printf '%q' "$seen")"

err=$("$pleat" certify "$work/net.json" --box -1,1 --full-walk 2>&1 >/dev/null) || fail "certify exited $?"
[ -z "$err" ] || fail "certify wrote progress to a non-terminal: $(printf '%q' "$err")"
echo "progress line: shown and cleared on a terminal, silent with -q or off a terminal"
