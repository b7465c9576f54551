#!/usr/bin/env bash
# Every numeric option is range-checked with a message naming it (exit 2),
# sizes are checked before anything is allocated, and a tiny domain is valid
# input. Each case below used to crash, wrap or pass silently (issue audit):
# --threads 1000000 aborted, --threads 4294967297 was taken modulo 2^32,
# --max-regions 0 meant no limit, --time-limit nan meant no limit, a bad
# --time-limit printed the largest double in 309 digits, random --arch
# 2,99999999999,1 ended in std::bad_alloc, sample --batch 100000000 grew until
# killed, --box=-1e-4,1e-4 ended in "internal error: could not find a start
# point".
set -u
source "$(dirname "$0")/lib.sh"

# run_bad NEEDLE ARGS...: exit 2, one "pleat: " line naming NEEDLE, no crash,
# a short message (no 309-digit numbers), finished within 20 s.
run_bad() {
  local needle=$1; shift
  timeout -s KILL 20 "$pleat" "$@" > "$work/out" 2> "$work/err"
  local code=$?
  local err; err=$(cat "$work/err")
  [ "$code" -eq 2 ] || fail "pleat $*: exit code $code, expected 2 (stderr: ${err:0:300})"
  case "$err" in "pleat: "*) ;; *) fail "pleat $*: stderr does not start with 'pleat: ': ${err:0:300}" ;; esac
  case "$err" in *"$needle"*) ;; *) fail "pleat $*: expected '$needle' in the message: ${err:0:300}" ;; esac
  case "$err" in *terminate*|*Aborted*|*"internal error"*|*bad_alloc*) fail "pleat $*: crashed: $err" ;; esac
  [ ${#err} -le 300 ] || fail "pleat $*: a ${#err}-character message: ${err:0:300}"
  return 0
}

fold=$source_dir/data/fold2d.json

for command in walk certify sample draw; do
  extra=()
  [ $command = sample ] && extra=(--batch 3 --seed 1)
  [ $command = draw ] && extra=(--out "$work/f.svg")
  run_bad "--threads" $command "$fold" "${extra[@]}" --threads 1000000
  run_bad "--threads" $command "$fold" "${extra[@]}" --threads 4294967297
  run_bad "--threads" $command "$fold" "${extra[@]}" --threads -1
done
run_bad "--threads" survey --arch 2,3,1 --samples 2 --seed 1 --threads 1000000

run_bad "--max-regions" walk "$fold" --max-regions 0
for command in walk certify sample; do
  extra=()
  [ $command = sample ] && extra=(--batch 3 --seed 1)
  for bad in nan inf -1 0 1e400 1e10 abc ""; do
    run_bad "--time-limit" $command "$fold" "${extra[@]}" --time-limit "$bad"
  done
done
run_bad "--time-limit-each" survey --arch 2,3,1 --samples 2 --seed 1 --time-limit-each nan
# track took any --threads (1000000 started that many per walk) and a time
# limit through CLI11's own number check (0 meant none); now the same helper
# as the other walking commands (cli/walk_options.hpp).
run_bad "--threads" track "$fold" --threads 1000000
for bad in nan inf -1 0 1e400 abc; do
  run_bad "--time-limit-each" track "$fold" --time-limit-each "$bad"
done

run_bad "--arch" random --arch 2,99999999999,1 --seed 1
run_bad "--arch" random --arch 2,99999999999,99999999999,1 --seed 1
run_bad "--arch" survey --arch 2,99999999999,1 --samples 2 --seed 1
run_bad "--batch" sample "$fold" --batch 100000000 --seed 1

# Valid limits still work.
"$pleat" walk "$fold" --time-limit 1e9 --threads 1024 --max-regions 1 -q > /dev/null ||
  fail "walk --time-limit 1e9 --threads 1024 --max-regions 1 exited $?"

# A tiny domain is valid input: the start point is found exactly however small
# the domain. Every bent hyperplane of this network passes through the origin.
cat > "$work/star.json" <<'JSON'
{ "format": "pleat-network/1", "input_dim": 2,
  "layers": [ { "weights": [["1","0"],["0","1"],["1","-1"],["1","1"]], "bias": ["0","0","0","0"], "activation": "relu" },
              { "weights": [["1","1","1","1"]], "bias": ["0"], "activation": "linear" } ] }
JSON
for box in -1e-4,1e-4 -1e-30,1e-30; do
  "$pleat" walk "$work/star.json" --box=$box --json -q > "$work/tiny.json" 2> "$work/err" ||
    fail "walk --box=$box exited $?: $(cat "$work/err")"
  grep -q '"regions": 8,' "$work/tiny.json" || fail "walk --box=$box: not 8 regions: $(cat "$work/tiny.json")"
  grep -q '"certified": true' "$work/tiny.json" || fail "walk --box=$box: not certified"
done
cat > "$work/tiny_domain.json" <<'JSON'
{ "format": "pleat-domain/1", "input_dim": 2,
  "constraints": [ { "normal": ["1","0"], "offset": "1e-6" }, { "normal": ["0","1"], "offset": "1e-6" },
                   { "normal": ["-1","-1"], "offset": "1e-6" } ] }
JSON
"$pleat" walk "$work/star.json" --domain "$work/tiny_domain.json" --json -q > "$work/poly.json" 2> "$work/err" ||
  fail "walk on a tiny polytope exited $?: $(cat "$work/err")"
grep -q '"regions": 8,' "$work/poly.json" || fail "tiny polytope: not 8 regions: $(cat "$work/poly.json")"
"$pleat" draw "$work/star.json" --view=-1e-4,1e-4,-1e-4,1e-4 --out "$work/tiny.svg" -q > "$work/draw.out" 2> "$work/err" ||
  fail "draw with a tiny --view exited $?: $(cat "$work/err")"
grep -q "8 regions" "$work/draw.out" || fail "draw with a tiny --view: $(cat "$work/draw.out")"
echo "options range-checked, sizes checked up front, tiny domains walked"
