#!/bin/bash
# certify's files (--rows-out, --kernel-out, --witness-out, --bundle) are
# written after the run; a path they cannot be written to (a missing
# directory, a directory) was found only then: --kernel-out and the others
# printed the result and exited 2 after the whole run, and --rows-out (its
# temporary file made at the first rows, after the walk and the proof)
# ended certify with no result printed at all. Now each is tried before the
# run: exit 2 at once, nothing on standard output, the path and the reason
# on standard error, nothing left behind.
set -u
source "$(dirname "$0")/lib.sh"

net="$source_dir/data/fold2d.json"
mkdir "$work/dir"
for option in --rows-out --kernel-out --witness-out --bundle; do
  for path in "$work/none/out.txt" "$work/dir"; do
    status=0
    "$pleat" certify "$net" -q "$option" "$path" > "$work/out.txt" 2> "$work/err.txt" || status=$?
    [ "$status" = 2 ] || fail "$option $path: exit status $status, expected 2"
    [ ! -s "$work/out.txt" ] || fail "$option $path: the run went ahead (its result printed): $(head -3 "$work/out.txt")"
    expect_contains "$(cat "$work/err.txt")" "$path: cannot open for writing (" "$option $path"
  done
done
[ -z "$(ls -A "$work/dir")" ] || fail "left in the directory: $(ls -A "$work/dir")"

# Before the walk, not after it: a full walk of this network takes over a
# minute on one thread (68 s here); the refusal, no time at all.
"$pleat" random --arch 3,40,40,40,1 --seed 1 -o "$work/net.json" || fail "random"
status=0
start=$SECONDS
timeout -s KILL 300 "$pleat" certify "$work/net.json" -q --full-walk --threads 1 --rows-out "$work/none/rows.txt" \
  > "$work/out.txt" 2> "$work/err.txt" || status=$?
took=$((SECONDS - start))
[ "$status" = 2 ] || fail "--rows-out in a missing directory: exit status $status, expected 2"
[ $took -le $((20 * time_scale)) ] || fail "--rows-out in a missing directory: refused after $took s, not before the walk"
expect_contains "$(cat "$work/err.txt")" "rows.txt: cannot open for writing (No such file or directory)" "before the walk"

# A writable path is still written (and a symbolic link followed to its file).
ln -s "$work/kernel_target.txt" "$work/kernel.txt"
"$pleat" certify "$net" -q --kernel-out "$work/kernel.txt" --rows-out "$work/rows.txt" > /dev/null ||
  fail "certify with writable outputs"
[ -L "$work/kernel.txt" ] && [ -s "$work/kernel_target.txt" ] && [ -s "$work/rows.txt" ] ||
  fail "the outputs were not written through the link"
leftover=$(ls -A "$work" | grep '^\.')
[ -z "$leftover" ] || fail "hidden files left: $leftover"
echo ok
