#!/usr/bin/env bash
# Outputs never destroy what the user already had.
# 1. An output over a data file the command read is refused before any work,
#    the file intact: certify --points P --witness-out P (the old binary
#    replaced the points with the witnesses), draw --from R --table R / --out R
#    (the walk replaced by the table), survey plot S --out S.
# 2. A whole-file output that fails while being written (here: the file-size
#    limit, EFBIG, as a full disk would) leaves the earlier file whole, and no
#    temporary file: the old binary truncated it to the limit (1 KB).
# 3. Two outputs of one command on one file are refused before the run.
set -u
source "$(dirname "$0")/lib.sh"
fold=$source_dir/data/fold2d.json

run_refused() {  # WHAT FILE command...: exit 2 naming FILE as WHAT, FILE unchanged
  local what=$1 file=$2
  shift 2
  cp "$file" "$work/before"
  "$pleat" "$@" > "$work/out" 2> "$work/err"
  local status=$?
  [ $status -eq 2 ] || fail "$*: exit $status, expected 2 (stderr: $(cat "$work/err"))"
  expect_contains "$(cat "$work/err")" "$file: is the $what this command read" "$*"
  cmp -s "$file" "$work/before" || fail "$*: $file was changed"
}

printf -- '-1/3,1/7\n1/2,-2/9\n' > "$work/pts.txt"
run_refused "points file" "$work/pts.txt" certify "$fold" -q --points "$work/pts.txt" --witness-out "$work/pts.txt"
run_refused "points file" "$work/pts.txt" certify "$fold" -q --points "$work/pts.txt" --rows-out "$work/pts.txt"

"$pleat" walk "$fold" --box -3,3 -q -o "$work/walk.jsonl" > /dev/null || fail "walk exited $?"
run_refused "region file" "$work/walk.jsonl" draw "$fold" --from "$work/walk.jsonl" --out "$work/f.svg" --table "$work/walk.jsonl" -q
cp "$work/walk.jsonl" "$work/walk.csv"
run_refused "region file" "$work/walk.csv" draw "$fold" --from "$work/walk.csv" --out "$work/walk.csv" -q

"$pleat" survey --arch 2,3,1 --samples 2 --seed 1 -q -o "$work/s.csv" > /dev/null || fail "survey exited $?"
run_refused "survey file" "$work/s.csv" survey plot "$work/s.csv" --out "$work/s.csv"

# A failed write keeps the earlier file. ulimit -f 1: files up to 1 KB; with
# SIGXFSZ ignored a longer write fails with EFBIG.
"$pleat" random --arch 2,3,1 --seed 1 -o "$work/net.json" || fail "random exited $?"
cp "$work/net.json" "$work/good.json"
(ulimit -f 1; trap '' XFSZ; "$pleat" random --arch 2,40,40,1 --seed 2 -o "$work/net.json") 2> "$work/err"
status=$?
[ $status -eq 1 ] || fail "a write past the size limit: exit $status, expected 1 ($(cat "$work/err"))"
expect_contains "$(cat "$work/err")" "net.json: cannot write" "the failed write"
cmp -s "$work/net.json" "$work/good.json" || fail "the failed write changed net.json ($(wc -c < "$work/net.json") bytes)"
[ -z "$(ls -A "$work" | grep '^\.net\.json\.')" ] || fail "a temporary file was left: $(ls -A "$work")"
# Through a symbolic link the file it names is replaced, not the link.
mkdir "$work/real"
ln -s "$work/real/target.json" "$work/link.json"
"$pleat" random --arch 2,3,1 --seed 1 -o "$work/link.json" || fail "-o through a link exited $?"
[ -L "$work/link.json" ] || fail "the link was replaced by a file"
cmp -s "$work/real/target.json" "$work/good.json" || fail "the link's target was not written"
# The replacement keeps the mode of the file it replaces (a private file stayed
# private only until pleat wrote it: the temporary's mode was 0666 less the
# umask); a new file gets 0666 less the umask.
chmod 600 "$work/good.json"
"$pleat" random --arch 2,3,1 --seed 1 -o "$work/good.json" || fail "random over a 0600 file exited $?"
[ "$(stat -c %a "$work/good.json")" = 600 ] || fail "a 0600 file became $(stat -c %a "$work/good.json")"
chmod 640 "$work/real/target.json"
"$pleat" random --arch 2,3,1 --seed 1 -o "$work/link.json" || fail "-o through a link exited $?"
[ "$(stat -c %a "$work/real/target.json")" = 640 ] || fail "a 0640 file became $(stat -c %a "$work/real/target.json")"
(umask 027; "$pleat" random --arch 2,3,1 --seed 1 -o "$work/new.json") || fail "random to a new file exited $?"
[ "$(stat -c %a "$work/new.json")" = 640 ] || fail "a new file under umask 027 is $(stat -c %a "$work/new.json")"
# Two outputs of one command on one file are refused before the run: the later
# replaced the earlier while both "written" lines were printed (walk -o R
# --points-out R left the points and said "written R (N region lines)").
shared_refused() {  # NEEDLE command...: exit 2 with NEEDLE, nothing written
  local needle=$1
  shift
  rm -f "$work/shared.out" "$work/shared.svg"
  "$pleat" "$@" > /dev/null 2> "$work/err"
  local status=$?
  [ $status -eq 2 ] || fail "$*: exit $status, expected 2 (stderr: $(cat "$work/err"))"
  expect_contains "$(cat "$work/err")" "$needle" "$*"
  [ ! -e "$work/shared.out" ] && [ ! -e "$work/shared.svg" ] || fail "$*: the shared file was written"
}
shared_refused "--points-out: $work/./shared.out is also -o's file; give each output its own" \
  walk "$fold" -q -o "$work/shared.out" --points-out "$work/./shared.out"
shared_refused "--witness-out: $work/shared.out is also --rows-out's file" \
  certify "$fold" -q --rows-out "$work/shared.out" --witness-out "$work/shared.out"
shared_refused "--bundle: $work/shared.out is also --kernel-out's file" \
  certify "$fold" -q --kernel-out "$work/shared.out" --bundle "$work/shared.out"
shared_refused "--table: $work/shared.svg is also --out's file" \
  draw "$fold" -q --out "$work/shared.svg" --table "$work/shared.svg"
shared_refused "--svg: $work/shared.out is also --csv's file" \
  track "$fold" -q --csv "$work/shared.out" --svg "$work/shared.out"
ln -s "$work/shared.out" "$work/shared_link.out"
shared_refused "--points-out: $work/shared_link.out is also -o's file" \
  walk "$fold" -q -o "$work/shared.out" --points-out "$work/shared_link.out"
# Two outputs on standard output would interleave their lines.
"$pleat" walk "$fold" -q -o - --points-out - > "$work/both.out" 2> "$work/err"
status=$?
[ $status -eq 2 ] || fail "walk -o - --points-out -: exit $status, expected 2"
expect_contains "$(cat "$work/err")" "--points-out: standard output is also -o's" "walk -o - --points-out -"
[ ! -s "$work/both.out" ] || fail "walk -o - --points-out -: wrote to standard output"
# Devices are still written in place.
"$pleat" random --arch 2,3,1 --seed 1 -o /dev/null || fail "-o /dev/null exited $?"
echo "outputs keep inputs and earlier files: ok"
