#!/usr/bin/env bash
# An ONNX weight whose dims declare billions of values but whose data holds
# few is refused without reserving room for the declared count. The file is
# the ONNX reader's fuzzer's (fuzz/regressions/onnx/forged-dims-reserve.onnx):
# a Gemm weight of undefined data type whose dims multiply to about 5e8, so
# the reader used to reserve 16 GB of exact values before its type check and
# ended in "internal error: std::bad_alloc" (exit 1) under an address-space
# limit; now it names the node, the input and the type (exit 2). Skipped in
# sanitized builds, whose shadow memory needs more address space than the
# limit allows.
set -u
source "$(dirname "$0")/lib.sh"
[ -n "${PLEAT_SANITIZED:-}" ] && { echo "sanitized build: skipped (ulimit -v)"; exit 77; }
file=$source_dir/fuzz/regressions/onnx/forged-dims-reserve.onnx
out=$( (ulimit -v 3000000; "$pleat" walk "$file" 2>&1) )
status=$?
[ $status = 2 ] || fail "exited $status, expected 2: $out"
expect_contains "$out" "node 'gemm1' (Gemm): input 'W1': stored as ONNX data type 0" "the forged weight's message"
echo "onnx_forged_size: refused with exit 2 within a 3 GB address space"
