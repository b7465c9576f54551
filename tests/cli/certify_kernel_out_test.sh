#!/usr/bin/env bash
# --kernel-out writes a basis of the kernel of a certified value, however it
# was certified. data/fold2d.json is certified from exact points alone (no
# walk, no kernel proof): its kernel is then the span of the 11 independent
# scaling directions (D 59 - value 48), the same rows --full-walk writes after
# proving the kernel on every region. The old binary wrote an empty file there
# (and an empty kernel in the Python result), as if the kernel were {0}.
# A run cut short proves no kernel: no file is written and stderr says why.
# With --points, the output files are written too.
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipped"; exit 77; }
fold=$source_dir/data/fold2d.json

"$pleat" certify "$fold" --json -q --kernel-out "$work/points.csv" > "$work/points.json" || fail "certify exited $?"
[ "$(json_eval "$work/points.json" '(d["certified"], d["certified_by"], d["functional_dimension"], d["parametric_dimension"])')" \
  = "(True, 'points', 48, 59)" ] || fail "expected 48 certified by points: $(head -c 400 "$work/points.json")"
"$pleat" certify "$fold" --json -q --full-walk --kernel-out "$work/walk.csv" > "$work/walk.json" || fail "certify --full-walk exited $?"
[ "$(wc -l < "$work/points.csv")" -eq 11 ] || fail "the kernel of 48 of 59 has 11 rows; --kernel-out wrote $(wc -l < "$work/points.csv")"
cmp -s "$work/points.csv" "$work/walk.csv" || fail "the kernel written after the points differs from --full-walk's"

# The rows span an 11-dimensional space (exact rank by sympy: exact_rank).
rank=$(exact_rank "$work/points.csv") || fail "exact_rank failed"
[ "$rank" = 11 ] || fail "the kernel rows have rank $rank, expected 11"

# With --points the network's run is a whole walk, as --full-walk: its
# --kernel-out, --rows-out and --witness-out are those of --full-walk (the old
# binary silently wrote none of them).
printf '%s\n' 0,0 1/3,1/7 > "$work/points.txt"
"$pleat" certify "$fold" -q --full-walk --rows-out "$work/walk_rows.csv" --witness-out "$work/walk_witness.txt" \
  > /dev/null || fail "certify --full-walk exited $?"
"$pleat" certify "$fold" -q --points "$work/points.txt" --kernel-out "$work/p_kernel.csv" --rows-out "$work/p_rows.csv" \
  --witness-out "$work/p_witness.txt" > /dev/null || fail "certify --points exited $?"
for pair in "p_kernel.csv walk.csv" "p_rows.csv walk_rows.csv" "p_witness.txt walk_witness.txt"; do
  set -- $pair
  [ -s "$work/$1" ] || fail "certify --points did not write $1"
  cmp -s "$work/$1" "$work/$2" || fail "certify --points wrote another $1 than --full-walk's $2"
done

# Cut short: bounds, and no kernel file.
net=$work/big.json
"$pleat" random --arch 2,15,15,15,1 --seed 1 -o "$net" || fail "pleat random exited $?"
err=$("$pleat" certify "$net" -q --full-walk --time-limit 0.001 --kernel-out "$work/cut.csv" 2>&1 > "$work/cut.txt") ||
  fail "time-limited certify exited $?"
expect_contains "$(cat "$work/cut.txt")" "NOT certified" "a run cut short"
[ ! -e "$work/cut.csv" ] || fail "a run cut short wrote a kernel file: $(wc -l < "$work/cut.csv") rows"
expect_contains "$err" "no kernel written to $work/cut.csv" "stderr of a run cut short"
# A kernel file an earlier run left there is named as that run's: nothing said
# it was not this run's kernel (of another network, perhaps).
echo "1,2,3" > "$work/earlier.csv"
"$pleat" certify "$net" -q --full-walk --time-limit 0.001 --kernel-out "$work/earlier.csv" > /dev/null 2> "$work/earlier.err" ||
  fail "time-limited certify exited $?"
[ "$(cat "$work/earlier.err")" = "pleat: no kernel written to $work/earlier.csv: the functional dimension was not certified (bounds only)
pleat: $work/earlier.csv is an earlier run's kernel, not this run's (not overwritten)" ] || fail "stderr: $(cat "$work/earlier.err")"
[ "$(cat "$work/earlier.csv")" = "1,2,3" ] || fail "the earlier kernel file was changed"
echo "certify_kernel_out: the kernel of a value certified by points is the 11 scaling directions; none for bounds"
