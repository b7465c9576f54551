#!/usr/bin/env bash
# Ctrl-C in pleat sample's last phase: after a certified walk, the search for
# the first batch reaching the certified value is a binary search over SVDs
# of prefixes of the batch (seconds here, minutes on larger batches). It
# polled nothing: an interrupt there was ignored, the run went on for ~11 s
# and exited 0. Now it stops before the next SVD: exit 130, the certified
# value kept, first_batch_reaching null ("not known (interrupted while
# searching)"), stop_reason "interrupted". The interrupt is sent a while
# after the points are written (--points-out: end of the drawing); on a busy
# machine it may fall in the main SVD or the walk instead, which must also
# give 130 with no certified value.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }

net=$work/n.json
"$pleat" random --arch 1,30,30,1 --seed 1 -o "$net" || fail "pleat random exited $?"
# Uninterrupted, this batch reaches the certified value 70 at 1948 points.
"$pleat" sample "$net" --batch 2000 --seed 1 --dist box:-1,1 -q --json --points-out "$work/p.csv" \
  > "$work/s.json" 2> "$work/s.err" &
pid=$!
for _ in $(seq 1 $((1200 * time_scale))); do [ -s "$work/p.csv" ] && break; sleep 0.05; done
[ -s "$work/p.csv" ] || { kill -9 $pid; fail "no points written"; }
sleep "$(scaled 4)"
kill -INT $pid
start=$(now)
wait $pid
status=$?
elapsed=$("$python" -c "print($(now) - $start)")
[ $status = 130 ] || fail "sample interrupted in its last phase exited $status, expected 130 ($(cat "$work/s.err"))"
"$python" -c "import sys; sys.exit(0 if $elapsed < $(scaled 6) else 1)" || fail "the interrupt took $elapsed s to act"
result=$(json_eval "$work/s.json" '(d["certified_value"], d["first_batch_reaching"], d["stop_reason"])')
case "$result" in
  "(70, None, 'interrupted')") ;;
  "(None, None, 'interrupted')") echo "note: the interrupt fell before the search (busy machine)" ;;
  *) fail "interrupted sample: $result" ;;
esac

# The human output says it is not known.
"$pleat" sample "$net" --batch 2000 --seed 1 --dist box:-1,1 -q --points-out "$work/p2.csv" > "$work/h.txt" &
pid=$!
for _ in $(seq 1 $((1200 * time_scale))); do [ -s "$work/p2.csv" ] && break; sleep 0.05; done
sleep "$(scaled 4)"
kill -INT $pid
wait $pid
status=$?
[ $status = 130 ] || fail "human output: exited $status, expected 130"
if grep -q "certified value       70" "$work/h.txt"; then
  grep -q "first batch reaching  not known (interrupted while searching)" "$work/h.txt" || fail "$(cat "$work/h.txt")"
fi
echo "sample_interrupt: all checks passed"
