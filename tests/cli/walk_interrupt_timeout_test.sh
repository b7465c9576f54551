#!/usr/bin/env bash
# `timeout -s INT T pleat walk ...` must stop the walk cleanly (exit 130,
# summary printed, regions kept). GNU timeout sends the signal to the command
# and then to its whole process group (without --foreground), so pleat receives
# SIGINT twice within microseconds; cli/signals.cpp treats a repeat within one
# second as the same request (it used to die silently from the second one in
# about 1 run in 5). This test tries 20 times and fails at the first death.
set -u
source "$(dirname "$0")/lib.sh"

big=$work/big.json
# Several seconds of walk (3,12,12,1 now takes about 0.3 s: 3-input cells skip the LPs);
# the signal comes after 1 s, so that a start-up slowed by a loaded machine is
# over before it (a signal before the handler is installed ends the process).
"$pleat" random --arch 3,20,20,20,1 --seed 3 -o "$big" || fail "pleat random exited $?"
for try in $(seq 20); do
  timeout --preserve-status -s INT "$(scaled 1.0)" "$pleat" walk "$big" -o "$work/r.jsonl" --json > "$work/out" 2> "$work/err"
  status=$?
  [ $status -eq 130 ] || fail "try $try: exited $status, expected 130"
  [ -s "$work/out" ] ||
    fail "try $try: pleat died from the second SIGINT sent by timeout: no --json summary" \
         "($(($(wc -l < "$work/r.jsonl") - 1)) region lines written)"
  grep -q "interrupted" "$work/err" || fail "try $try: no interruption note on standard error"
done
echo "walk under timeout -s INT: 20 clean stops"
