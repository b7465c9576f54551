#!/usr/bin/env bash
# Readers fail fast and say why: a 1 GiB file of NUL bytes (sparse, no disk
# used) and a file of 80 MiB of spaces are refused as a network, a region
# file, a points file and a survey file without being read whole (within a
# few seconds and far less memory than the file); a directory is named as
# one; a bare JSON integer of 100 000 digits gets a short message naming the
# limit, and the same number as a string is read exactly; a stopped walk's
# text summary marks every count as a lower bound.
set -u
source "$(dirname "$0")/lib.sh"
fold=$source_dir/data/fold2d.json

truncate -s 1G "$work/nul.bin" || { echo "no truncate"; exit 77; }
head -c 80M /dev/zero | tr '\0' ' ' > "$work/spaces.txt"
mkdir "$work/folder"

# refused NAME NEEDLE COMMAND...: exit 2, message contains NEEDLE, at most
# 15 s of CPU time and 200 MB of memory (the files are 1 GiB and 80 MiB; 600 MB
# in a sanitized build, whose shadow memory and quarantine alone take over 300 MB
# here, still far below reading the 1 GiB file whole). CPU
# time, not wall time, so that a loaded machine does not fail the test; reading
# the 1 GiB file whole would take several times that bound (about 1.7 s per
# 64 MiB here), and 15 s leaves room for the sanitizer build.
memory_limit_kb=200000
[ -n "${PLEAT_SANITIZED:-}" ] && memory_limit_kb=600000
refused() {
  local name=$1 needle=$2
  shift 2
  local out code cpu
  out=$(/usr/bin/time -f "cpu %U %S rss %M" "$@" 2>&1 > /dev/null)
  code=$?
  cpu=$(printf '%s\n' "$out" | sed -n 's/^cpu \([0-9.]*\) \([0-9.]*\) rss.*/\1 \2/p' | awk '{printf "%d", ($1 + $2) * 1000}')
  [ "$code" -eq 2 ] || fail "$name: exit $code, expected 2 ($out)"
  case "$out" in *"$needle"*) ;; *) fail "$name: expected '$needle' in: $out" ;; esac
  [ -n "$cpu" ] && [ "$cpu" -lt 15000 ] || fail "$name: took ${cpu:-?} ms of CPU time"
  out=$(printf '%s\n' "$out" | sed 's/^cpu [0-9.]* [0-9.]* rss/rss/')
  local rss=${out##*rss }
  [ "$rss" -lt "$memory_limit_kb" ] || fail "$name: used $rss KB (limit $memory_limit_kb KB)"
  [ "${#out}" -lt 500 ] || fail "$name: a ${#out}-character message"
}

refused network-nul "larger than the 64 MiB limit for network and domain files" "$pleat" walk "$work/nul.bin"
refused network-spaces "larger than the 64 MiB limit" "$pleat" walk "$work/spaces.txt"
refused network-stdin "larger than the 64 MiB limit" sh -c "\"$pleat\" walk - < \"$work/nul.bin\""
refused domain-nul "larger than the 64 MiB limit" "$pleat" walk "$fold" --domain "$work/nul.bin"
refused regions-nul "line 1: a NUL byte (byte 1 of the file): not a region file" "$pleat" verify "$fold" "$work/nul.bin"
refused regions-spaces "line 1 is longer than 64 MiB, the limit for one line of a region file" \
  "$pleat" verify "$fold" "$work/spaces.txt"
refused draw-nul "a NUL byte" "$pleat" draw "$fold" --from "$work/nul.bin" --out "$work/x.svg"
refused points-nul "a NUL byte" "$pleat" certify "$fold" --points "$work/nul.bin"
refused points-spaces "longer than 16 MiB, the limit for one line of a points file" \
  "$pleat" certify "$fold" --points "$work/spaces.txt"
refused survey-nul "a NUL byte" "$pleat" survey summary "$work/nul.bin"
refused survey-spaces "longer than 16 MiB, the limit for one line of a survey file" \
  "$pleat" survey summary "$work/spaces.txt"

refused points-folder "folder: is a directory, not a points file" "$pleat" certify "$fold" --points "$work/folder"
refused regions-folder "folder: is a directory, not a region file" "$pleat" verify "$fold" "$work/folder"
refused survey-folder "folder: is a directory, not a survey file" "$pleat" survey summary "$work/folder"
# A header's text is quoted in the message: a newline in it must not print a
# line of its own, e.g. a forged "functional dimension 99 certified" (the old
# binary printed it raw).
printf '%s\n' '{"format":"pleat-survey/1","generator":"pleat-random/1","arch":[2,4,1],"init":"he\nfunctional dimension  99 certified","digits":6,"seed":1,"samples":1,"domain":"R^2","shard":"0/1"}' \
  > "$work/init.jsonl"
# A control character quoted in a message is shown as \xHH: an escape
# sequence from a file must not reach the terminal (ESC [2K erases the line).
printf '1,2\033[2Kverified\n' > "$work/escape.csv"
refused points-escape "('2\\x1b[2Kverified')" "$pleat" certify "$fold" --points "$work/escape.csv"
err=$("$pleat" certify "$fold" --points "$work/escape.csv" 2>&1 >/dev/null)
case "$err" in *$'\033'*) fail "a raw escape character reached standard error" ;; esac
# Bytes that are no well-formed UTF-8 (a Latin-1 file) and the C1 control
# U+009B (a one-character escape sequence) are shown as \xHH too; they were
# printed raw. Well-formed text (1/2 sign, emoji) stays as it is.
printf '1,2\xff\xc2\x9b2K\xc2\xbd\xf0\x9f\x98\x80\n' > "$work/bytes.csv"
refused points-bytes "('2\\xff\\xc2\\x9b2K½😀')" "$pleat" certify "$fold" --points "$work/bytes.csv"
refused survey-init 'unknown initialization "he\nfunctional dimension  99 certified"' "$pleat" survey summary "$work/init.jsonl"
refused network-folder "folder: cannot open: is a directory" "$pleat" walk "$work/folder"

digits=$(head -c 100000 /dev/zero | tr '\0' '7')
printf '{"format":"pleat-network/1","input_dim":1,"layers":[{"weights":[[%s]],"bias":["0"]}]}\n' "$digits" \
  > "$work/bare.json"
refused bare-number "beyond about 1e4900, the limit for numbers written without quotes" \
  "$pleat" eval "$work/bare.json" --at 1
printf '{"format":"pleat-network/1","input_dim":1,"layers":[{"weights":[["%s"]],"bias":["0"]}]}\n' "$digits" \
  > "$work/quoted.json"
out=$("$pleat" eval "$work/quoted.json" --at 1 --json) || fail "the quoted number was refused"
case "$out" in *"\"$digits\""*) ;; *) fail "eval at 1 did not print the 100 000-digit weight exactly" ;; esac

# A walk stopped by --max-regions: every count of the text summary is a lower bound.
out=$("$pleat" walk "$fold" --max-regions 5 -q)
# (a partial count of linear regions is no bound: found pieces of one linear
# region may be joined by regions not found, so it is not printed)
case "$out" in *"regions     >= 5 (>= "*" bounded), linear regions not counted"*) ;; *) fail "regions line: $out" ;; esac
case "$out" in *"per layer   >= "*", >= "*", >= "*) ;; *) fail "per-layer line: $out" ;; esac
echo "readers: all checks passed"
