#!/bin/bash
# A --rows-out file that cannot be written does not take the certified value
# with it. The rows are written as the run forms them; a write that fails
# then (here the file-size limit, as a full disk would) ended the run: no
# result was printed, exit 1, and hours of certify were lost. Now the
# temporary file is removed at once, the run goes on, its result is printed,
# and certify exits 1 naming the file and the reason (the rows of the
# regions after that are no longer formed). The same for a device
# that refuses the text at the end (/dev/full). Whatever the path held
# before stays.
set -u
source "$(dirname "$0")/lib.sh"

"$pleat" random --arch 2,25,25,2,1 --seed 1 -o "$work/net.json" || fail "random"
"$pleat" certify "$work/net.json" --json -q > "$work/plain.json" || fail "certify without --rows-out"
echo "earlier" > "$work/rows.txt"

# The file-size limit (ulimit -f, 1024-byte blocks in bash) fails a write to
# the rows (about 11 MB) with EFBIG once it passes 1 MB; SIGXFSZ ignored, so
# that the write fails instead of the signal ending the process.
status=0
(trap '' XFSZ; ulimit -f 1024; exec "$pleat" certify "$work/net.json" --json -q --rows-out "$work/rows.txt" \
   > "$work/out.json" 2> "$work/err.txt") || status=$?
[ "$status" = 1 ] || fail "exit status $status with the rows unwritable, expected 1"
grep -q "rows.txt" "$work/err.txt" && grep -qi "too large" "$work/err.txt" ||
  fail "stderr does not name the file and the reason: $(cat "$work/err.txt")"
"$python" - "$work" <<'PY' || fail "the printed result (above)"
import json, sys
work = sys.argv[1]
out, plain = json.load(open(work + "/out.json")), json.load(open(work + "/plain.json"))
if not out["certified"] or out["functional_dimension"] != plain["functional_dimension"]:
    sys.exit(f"printed {out.get('functional_dimension')}, certified {out.get('certified')}; "
             f"without --rows-out {plain['functional_dimension']}")
# The whole result, not only the value: once the file is dropped no more rows
# are formed (FunctionalDimensionOptions::on_region_rows), after the value.
timings = lambda d: {k: v for k, v in d.items() if not k.endswith("seconds")}
if timings(out) != timings(plain):
    sys.exit("the printed result differs from the run without --rows-out: " +
             str([k for k in timings(plain) if out.get(k) != plain[k]]))
PY
[ "$(cat "$work/rows.txt")" = "earlier" ] || fail "the earlier file at the path was changed"
leftover=$(ls -A "$work" | grep -v -x -e net.json -e plain.json -e rows.txt -e out.json -e err.txt)
[ -z "$leftover" ] || fail "left beside the rows: $leftover"

if [ -w /dev/full ]; then
  status=0
  "$pleat" certify "$work/net.json" --json -q --rows-out /dev/full > "$work/out.json" 2> "$work/err.txt" || status=$?
  [ "$status" = 1 ] || fail "exit status $status with --rows-out /dev/full, expected 1"
  grep -q "/dev/full" "$work/err.txt" || fail "stderr does not name /dev/full: $(cat "$work/err.txt")"
  "$python" -c 'import json, sys; sys.exit(0 if json.load(open(sys.argv[1]))["certified"] else 1)' "$work/out.json" ||
    fail "--rows-out /dev/full: no certified result printed"
fi
echo ok
