#!/usr/bin/env bash
# Bad input gives one clear line "pleat: <message>" on stderr and exit code 2,
# never a crash, an abort or a stack trace.
set -u
source "$(dirname "$0")/lib.sh"

# run_bad NEEDLE ARGS...: expects exit 2 and NEEDLE in stderr.
run_bad() {
  local needle=$1; shift
  "$pleat" "$@" > "$work/out" 2> "$work/err"
  local code=$?
  local err; err=$(cat "$work/err")
  [ "$code" -eq 2 ] || fail "pleat $*: exit code $code, expected 2 (stderr: $err)"
  case "$err" in "pleat: "*) ;; *) fail "pleat $*: stderr does not start with 'pleat: ': $err" ;; esac
  case "$err" in *"$needle"*) ;; *) fail "pleat $*: expected '$needle' in the message: $err" ;; esac
  case "$err" in *terminate*|*Aborted*|*"core dumped"*|*what\(\)*) fail "pleat $*: crashed: $err" ;; esac
  [ -s "$work/out" ] && fail "pleat $*: printed to stdout on error: $(cat "$work/out")"
  return 0
}

fold=$source_dir/data/fold2d.json

run_bad "$work/missing.json" eval "$work/missing.json" --at 1,2
run_bad "No such file" eval "$work/missing.json" --at 1,2

printf '{"format": "pleat-network/1", "input_dim": 2,' > "$work/truncated.json"
run_bad "truncated.json" eval "$work/truncated.json" --at 1,2
run_bad "malformed JSON" eval "$work/truncated.json" --at 1,2

cat > "$work/shape.json" <<'JSON'
{ "format": "pleat-network/1", "input_dim": 2,
  "layers": [ { "weights": [["1", "2"], ["3"]], "bias": ["0", "0"] },
              { "weights": [["1", "1"]], "bias": ["0"] } ] }
JSON
run_bad "layers[0].weights[1]" eval "$work/shape.json" --at 1,2

run_bad "--at" eval "$fold" --at 1,2,3
run_bad "3 coordinates" eval "$fold" --at 1,2,3
run_bad "item 2" eval "$fold" --at 1,abc
run_bad "zero" eval "$fold" --at 1/0,1
run_bad "--at" eval "$fold"
run_bad "not expected" eval "$fold" --at 1,2 extra
run_bad "not expected" no-such-command
run_bad "--arch" random --arch 2,0,1 --seed 1
run_bad "--arch" random --arch 2 --seed 1
run_bad "--seed" random --arch 2,1 --seed -1
run_bad "--seed" random --arch 2,1 --seed 0x10
run_bad "--seed" random --arch 2,1 --seed 18446744073709551616
run_bad "--seed" random --arch 2,1
run_bad "--init" random --arch 2,1 --seed 1 --init glorot
run_bad "--digits" random --arch 2,1 --seed 1 --digits 0
run_bad "$work/no/such/dir/x.json" random --arch 2,1 --seed 1 -o "$work/no/such/dir/x.json"

# A directory given as the network.
run_bad "$work" eval "$work" --at 1,2

# An output over the network the command read is refused, the network intact
# (the old binary replaced it with the walk, the kernel, the bundle, the ONNX).
cp "$source_dir/data/fold2d.json" "$work/net.json"
ln -s "$work/net.json" "$work/link.json"
refused="is the network this command read"
run_bad "$work/net.json: $refused ($work/net.json); write the output elsewhere" walk "$work/net.json" -q -o "$work/net.json"
run_bad "$work/net.json: $refused ($work/link.json)" walk "$work/link.json" -q -o "$work/net.json"
run_bad "$refused" certify "$work/net.json" -q --kernel-out "$work/net.json"
run_bad "$refused" certify "$work/net.json" -q --bundle "$work/net.json"
run_bad "$refused" export "$work/net.json" -o "$work/net.json"
run_bad "$refused" track "$work/net.json" -q --csv "$work/net.json"
grep -q stale "$work/err" && fail "track names its checkpoint a stale CSV: $(cat "$work/err")"
cmp -s "$work/net.json" "$source_dir/data/fold2d.json" || fail "the network file was changed"
"$pleat" export "$work/net.json" -o "$work/net.onnx" 2> /dev/null || fail "export exited $?"
cp "$work/net.onnx" "$work/net_before.onnx"
run_bad "$work/net.onnx: $refused" import "$work/net.onnx" -o "$work/net.onnx"
cmp -s "$work/net.onnx" "$work/net_before.onnx" || fail "the ONNX model was changed"
echo "errors: ok"
