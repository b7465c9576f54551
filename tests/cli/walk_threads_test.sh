#!/usr/bin/env bash
# pleat walk --threads: identical region files and identical --json (except
# timing keys) for 1 and 2 threads on a network with thousands of regions,
# and identical --certificates files on a medium one (spec: outputs.md).
set -u
source "$(dirname "$0")/lib.sh"
[ -x "$python" ] || { echo "no /usr/bin/python3: skipping"; exit 77; }

# json_key FILE KEY: one key of a JSON document, printed as JSON.
# check_region_file FILE REGIONS: header + REGIONS lines, each a JSON object, ids 0.., patterns distinct.
check_region_file() {
  "$python" - "$1" "$2" <<'PY' || fail "region file $1 is malformed"
import json, sys
lines = open(sys.argv[1]).read().splitlines()
header = json.loads(lines[0])
assert header["format"] == "pleat-regions/1", header
regions = [json.loads(line) for line in lines[1:]]
assert len(regions) == int(sys.argv[2]), (len(regions), sys.argv[2])
assert [r["id"] for r in regions] == list(range(len(regions)))
assert len({r["pattern"] for r in regions}) == len(regions)
PY
}
strip_timing() { grep -v -E '"([a-z_]*_)?seconds"' "$1"; }

# --- Threads: 3,12,12,1 seed 3 has 2244 regions (counted by pleat; at least
# 2000 is what matters here). Every byte of the region file and every
# non-timing key of --json must agree (spec: outputs.md).
big=$work/big.json
"$pleat" random --arch 3,12,12,1 --seed 3 -o "$big" || fail "pleat random exited $?"
for threads in 1 2; do
  "$pleat" walk "$big" --threads $threads --quiet --json -o "$work/t$threads.jsonl" > "$work/t$threads.json" ||
    fail "walk --threads $threads exited $?"
done
regions=$(json_key "$work/t1.json" regions)
[ "$regions" -ge 2000 ] || fail "expected >= 2000 regions for the thread test, got $regions"
[ "$(json_key "$work/t1.json" certified)" = true ] || fail "the big walk is not certified"
cmp -s "$work/t1.jsonl" "$work/t2.jsonl" || fail "region files differ between --threads 1 and --threads 2"
diff <(strip_timing "$work/t1.json") <(strip_timing "$work/t2.json") > /dev/null ||
  fail "--json differs between --threads 1 and --threads 2 (beyond timing keys)"
check_region_file "$work/t1.jsonl" "$regions"

# Certificates (LP multipliers) must not depend on the thread count either.
medium=$work/medium.json
"$pleat" random --arch 2,8,8,8,8,1 --seed 3 -o "$medium" || fail "pleat random exited $?"
for threads in 1 2; do
  "$pleat" walk "$medium" --threads $threads --quiet --certificates -o "$work/c$threads.jsonl" > /dev/null ||
    fail "walk --certificates --threads $threads exited $?"
done
cmp -s "$work/c1.jsonl" "$work/c2.jsonl" || fail "--certificates region files differ between 1 and 2 threads"

echo "walk threads: ok ($regions regions identical for 1 and 2 threads)"
