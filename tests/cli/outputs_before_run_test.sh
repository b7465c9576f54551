#!/bin/bash
# The files written after a long run (walk --points-out, draw --out and
# --table, sample --points-out, report -o, track --csv and --svg, survey -o
# for every architecture of a grid) were tried only when written: a missing
# directory or a directory as the path ended the command after its whole
# walk, with its result lost. Now each is tried before the run
# (refuse_unwritable_output, as certify's files): exit 2 at once, nothing on
# standard output, the path and the reason on standard error, no other
# output written, nothing left behind.
set -u
source "$(dirname "$0")/lib.sh"

# A walk of this network takes 15 s on one thread, a figure or a page of it 45 s.
"$pleat" random --arch 2,400,1 --seed 1 -o "$work/long.json" || fail "random"
long=$work/long.json
mkdir "$work/dir"

# refused PATH ARGS...: pleat ARGS exits 2 at once, naming PATH.
refused() {
  local path=$1; shift
  local status=0 start=$SECONDS
  timeout -s KILL $((60 * time_scale)) "$pleat" "$@" > "$work/out.txt" 2> "$work/err.txt" || status=$?
  local took=$((SECONDS - start))
  [ "$status" = 2 ] || fail "pleat $*: exit status $status, expected 2 ($(cat "$work/err.txt"))"
  [ $took -le $((5 * time_scale)) ] || fail "pleat $*: refused after $took s, not before the run"
  [ ! -s "$work/out.txt" ] || fail "pleat $*: the run went ahead (its result printed): $(head -3 "$work/out.txt")"
  expect_contains "$(cat "$work/err.txt")" "$path: cannot open for writing (" "pleat $*"
}

for path in "$work/none/out.txt" "$work/dir"; do
  refused "$path" walk "$long" -q --threads 1 --points-out "$path"
  refused "$path" sample "$long" --batch 10 --seed 1 -q --threads 1 --points-out "$path"
  refused "$path" report "$long" -q --threads 1 -o "$path"
  refused "$path" track "$long" -q --threads 1 --csv "$path"
  refused "$path" track "$long" -q --threads 1 --svg "$path"
done
refused "$work/none/f.svg" draw "$long" -q --threads 1 --out "$work/none/f.svg"
refused "$work/none/t.csv" draw "$long" -q --threads 1 --out "$work/f.svg" --table "$work/none/t.csv"
[ ! -e "$work/f.svg" ] || fail "draw wrote its figure though its --table was refused"
# draw --from R --table R: the saved walk it reads is refused as an output
# before the drawing (it was refused only when the table was written, after
# the figure had been).
"$pleat" walk "$source_dir/data/fold2d.json" -q -o "$work/saved.jsonl" > /dev/null || fail "walk -o saved.jsonl"
cp "$work/saved.jsonl" "$work/saved.copy"
status=0
"$pleat" draw "$source_dir/data/fold2d.json" -q --from "$work/saved.jsonl" --out "$work/g.svg" --table "$work/saved.jsonl" \
  > /dev/null 2> "$work/err.txt" || status=$?
[ "$status" = 2 ] || fail "draw --table over its --from file: exit status $status, expected 2"
expect_contains "$(cat "$work/err.txt")" "saved.jsonl: is the region file this command read" "draw --table over --from"
[ ! -e "$work/g.svg" ] || fail "draw wrote its figure though its --table (the --from file) was refused"
cmp -s "$work/saved.jsonl" "$work/saved.copy" || fail "draw changed the --from file"
rm "$work/saved.jsonl" "$work/saved.copy"
# The other output of the run is not written either (walk -o wrote every region).
refused "$work/none/p.txt" walk "$long" -q --threads 1 -o "$work/regions.jsonl" --points-out "$work/none/p.txt"
[ ! -e "$work/regions.jsonl" ] || fail "walk wrote its -o file though its --points-out was refused"
[ -z "$(ls -A "$work/dir")" ] || fail "left in the directory: $(ls -A "$work/dir")"
leftover=$(ls -A "$work" | grep '^\.')
[ -z "$leftover" ] || fail "hidden files left: $leftover"

# survey: every architecture's file is tried before any sample runs. The
# second's folder missing, or its file another survey's, was found after the
# first architecture had run (its file written) and the projection's samples.
mkdir "$work/grid" "$work/grid/2-3-1"
for quiet in -q ""; do
  status=0
  "$pleat" survey --arch 2,3,1 --arch 2,4,1 --samples 3 --seed 1 $quiet -o "$work/grid/{arch}/s.jsonl" \
    > "$work/out.txt" 2> "$work/err.txt" || status=$?
  [ "$status" = 2 ] || fail "survey grid with a missing folder: exit status $status, expected 2"
  expect_contains "$(cat "$work/err.txt")" "$work/grid/2-4-1/s.jsonl: cannot open for writing (No such file or directory)" \
    "survey grid with a missing folder"
  [ ! -e "$work/grid/2-3-1/s.jsonl" ] || fail "survey ran its first architecture though the second's file was refused"
  [ ! -s "$work/out.txt" ] || fail "survey printed a report: $(cat "$work/out.txt")"
done
"$pleat" survey --arch 2,4,1 --samples 3 --seed 2 -q -o "$work/grid/s.2-4-1.jsonl" > /dev/null || fail "survey 2,4,1"
cp "$work/grid/s.2-4-1.jsonl" "$work/grid/other.jsonl"
status=0
"$pleat" survey --arch 2,3,1 --arch 2,4,1 --samples 3 --seed 1 -q -o "$work/grid/s.jsonl" > /dev/null 2> "$work/err.txt" ||
  status=$?
[ "$status" = 2 ] || fail "survey grid with another survey's file: exit status $status, expected 2"
expect_contains "$(cat "$work/err.txt")" "s.2-4-1.jsonl: holds a different survey ('seed' is 2 there, 1 here)" "survey grid"
[ ! -e "$work/grid/s.2-3-1.jsonl" ] || fail "survey ran its first architecture though the second's file was refused"
cmp -s "$work/grid/s.2-4-1.jsonl" "$work/grid/other.jsonl" || fail "survey changed another survey's file"

# A writable path is still written, and so is the output a run wrote in the
# folder it was given (a fresh file in an existing directory).
fold=$source_dir/data/fold2d.json
"$pleat" walk "$fold" -q --points-out "$work/dir/p.txt" > /dev/null || fail "walk --points-out"
"$pleat" draw "$fold" -q --out "$work/dir/f.svg" --table "$work/dir/t.csv" > /dev/null || fail "draw"
"$pleat" sample "$fold" --batch 4 --seed 1 -q --points-out "$work/dir/s.txt" > /dev/null || fail "sample"
"$pleat" report "$fold" -q -o "$work/dir/r.html" > /dev/null || fail "report"
"$pleat" track "$fold" -q --csv "$work/dir/t2.csv" --svg "$work/dir/t.svg" > /dev/null || fail "track"
for file in p.txt f.svg t.csv s.txt r.html t2.csv t.svg; do
  [ -s "$work/dir/$file" ] || fail "$file was not written"
done
[ -z "$(ls -A "$work/dir" | grep '^\.')" ] || fail "hidden files left: $(ls -A "$work/dir")"
echo ok
