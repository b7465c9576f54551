#!/usr/bin/env bash
# Nothing is lost silently when output cannot be written: every command fails
# (exit 1, a message) when standard output is /dev/full; -o /dev/full and -o
# into a missing directory name the file and the system's reason; survey
# merge never truncates one of its inputs. (Every command used to exit 0 on
# /dev/full, and walk -o /dev/full said "internal error: ... write failed".)
set -u
source "$(dirname "$0")/lib.sh"
[ -w /dev/full ] || { echo "no /dev/full here: skipped"; exit 77; }

fold=$source_dir/data/fold2d.json
"$pleat" random --arch 2,3,1 --seed 1 -o "$work/net.json" || fail "random exited $?"
net=$work/net.json

# stdout_full NEEDLE ARGS...: with stdout on /dev/full, exit 1 and a message.
stdout_full() {
  local needle=$1; shift
  "$pleat" "$@" > /dev/full 2> "$work/err"
  local code=$?
  local err; err=$(cat "$work/err")
  [ $code -eq 1 ] || fail "pleat $* > /dev/full: exit $code, expected 1 (stderr: $err)"
  case "$err" in *"$needle"*) ;; *) fail "pleat $* > /dev/full: expected '$needle' in: $err" ;; esac
  case "$err" in *"internal error"*) fail "pleat $* > /dev/full: $err" ;; esac
  return 0
}
space="No space left on device"
stdout_full "$space" random --arch 2,3,1 --seed 1
stdout_full "$space" eval "$net" --at 1,2
stdout_full "$space" walk "$net" -q
stdout_full "$space" walk "$net" -q --json
stdout_full "$space" certify "$net" -q
stdout_full "$space" sample "$net" --batch 5 --seed 1 -q
stdout_full "$space" inspect "$net" --at 1,2
stdout_full "$space" draw "$net" --out "$work/f.svg" -q
stdout_full "$space" export "$net" -o -
stdout_full "$space" survey --arch 2,3,1 --samples 2 --seed 1 -q
stdout_full "$space" --help
stdout_full "$space" walk --help
"$pleat" walk "$net" -q -o "$work/r.jsonl" --certificates > /dev/null || fail "walk -o exited $?"
stdout_full "$space" verify "$net" "$work/r.jsonl"
# Output past stdio's buffer fails mid-run, long before the check at exit:
# the reason is that write's, not "Input/output error" (errno was lost by then).
"$pleat" random --arch 2,30,30,1 --seed 1 -o "$work/wide.json" || fail "random exited $?"
[ "$(wc -c < "$work/wide.json")" -gt 8192 ] || fail "wide.json is too small to fail mid-run"
stdout_full "cannot write to standard output ($space)" random --arch 2,30,30,1 --seed 1
# A closed standard output: the system's reason for that, not /dev/full's nor "Input/output error".
for arch in 2,3,1 2,30,30,1; do
  "$pleat" random --arch $arch --seed 1 >&- 2> "$work/err"
  code=$?
  [ $code -eq 1 ] || fail "random --arch $arch >&-: exit $code, expected 1 ($(cat "$work/err"))"
  [ "$(cat "$work/err")" = "pleat: cannot write to standard output (Bad file descriptor)" ] ||
    fail "random --arch $arch >&-: $(cat "$work/err")"
done
# A pipe whose reader left (SIGPIPE ignored, as under some shells and launchers);
# the output (190 kB) is more than a pipe holds, so the reader leaves before its end.
(trap '' PIPE; "$pleat" random --arch 2,100,100,1 --seed 1 2> "$work/err" | head -c 1 > /dev/null)
[ "$(cat "$work/err")" = "pleat: cannot write to standard output (Broken pipe)" ] || fail "closed pipe: $(cat "$work/err")"

# -o FILE that cannot be written: the file and the reason, never "internal error".
file_bad() {
  local code_wanted=$1 needle=$2; shift 2
  "$pleat" "$@" > /dev/null 2> "$work/err"
  local code=$?
  local err; err=$(cat "$work/err")
  [ $code -eq "$code_wanted" ] || fail "pleat $*: exit $code, expected $code_wanted (stderr: $err)"
  case "$err" in *"$needle"*) ;; *) fail "pleat $*: expected '$needle' in: $err" ;; esac
  case "$err" in *"internal error"*) fail "pleat $*: $err" ;; esac
  return 0
}
missing=$work/no/such/dir/out
file_bad 1 "/dev/full: cannot write ($space)" walk "$net" -q -o /dev/full
file_bad 1 "/dev/full: cannot write ($space)" random --arch 2,3,1 --seed 1 -o /dev/full
file_bad 1 "/dev/full: cannot write ($space)" survey --arch 2,3,1 --samples 2 --seed 1 -q -o /dev/full
file_bad 2 "$missing.jsonl: cannot open for writing (No such file or directory)" walk "$net" -q -o "$missing.jsonl"
file_bad 2 "$missing.json: cannot open for writing (No such file or directory)" random --arch 2,3,1 --seed 1 -o "$missing.json"
file_bad 2 "$missing.jsonl: cannot open for writing (No such file or directory)" survey --arch 2,3,1 --samples 2 --seed 1 -q -o "$missing.jsonl"

# A file that fails at the end of a run (a full disk) loses itself, not the
# run's result: the summary or table is printed first (walk printed nothing,
# track no table: every checkpoint's certified value was lost), no "written"
# line is printed for it, and a device is not named as an earlier run's file.
"$pleat" walk "$net" -q --points-out /dev/full > "$work/out" 2> "$work/err"
code=$?
[ $code -eq 1 ] || fail "walk --points-out /dev/full: exit $code, expected 1"
grep -q "^regions     " "$work/out" || fail "walk --points-out /dev/full printed no summary: $(cat "$work/out")"
grep -q "^written" "$work/out" && fail "walk --points-out /dev/full said it was written: $(cat "$work/out")"
[ "$(cat "$work/err")" = "pleat: /dev/full: cannot write ($space)" ] || fail "walk --points-out /dev/full: $(cat "$work/err")"
"$pleat" track "$fold" "$net" --box -2,2 -q --csv /dev/full > "$work/out" 2> "$work/err"
code=$?
[ $code -eq 1 ] || fail "track --csv /dev/full: exit $code, expected 1"
[ "$(grep -c "json  *[0-9]" "$work/out")" = 2 ] || fail "track --csv /dev/full printed no table: $(cat "$work/out")"
[ "$(cat "$work/err")" = "pleat: /dev/full: cannot write ($space)" ] || fail "track --csv /dev/full: $(cat "$work/err")"

# survey merge -o: one of its inputs is refused and left intact; an existing
# other file is replaced whole.
"$pleat" survey --arch 2,3,1 --samples 4 --seed 1 --task-index 0 --task-count 2 -q -o "$work/s0.jsonl" > /dev/null || fail "survey shard 0"
"$pleat" survey --arch 2,3,1 --samples 4 --seed 1 --task-index 1 --task-count 2 -q -o "$work/s1.jsonl" > /dev/null || fail "survey shard 1"
cp "$work/s0.jsonl" "$work/s0.copy"
file_bad 2 "one of the files to merge" survey merge "$work/s0.jsonl" "$work/s1.jsonl" -o "$work/s0.jsonl"
cmp -s "$work/s0.jsonl" "$work/s0.copy" || fail "survey merge -o INPUT changed the input"
file_bad 2 "one of the files to merge" survey merge "$work/s0.jsonl" "$work/s1.jsonl" -o "$work/./s1.jsonl"
ln -s "$work/s1.jsonl" "$work/link.jsonl"
file_bad 2 "one of the files to merge" survey merge "$work/s0.jsonl" "$work/s1.jsonl" -o "$work/link.jsonl"
echo old > "$work/merged.jsonl"
"$pleat" survey merge "$work/s0.jsonl" "$work/s1.jsonl" -o "$work/merged.jsonl" -q || fail "survey merge exited $?"
[ "$(wc -l < "$work/merged.jsonl")" -eq 5 ] || fail "survey merge: expected a header and 4 samples"
ls -a "$work" | grep -q '^\.merged' && fail "survey merge left a temporary file"
echo "output failures reported, inputs never truncated"
