#!/usr/bin/env bash
# pleat walk end to end: --max-regions; both --box spellings, per-axis boxes
# and bad boxes; 1-D and 3-D walks; region files agree with the summary.
# (Threads: walk_threads_test.sh; interruption: walk_interrupt_test.sh.)
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

# --- --max-regions 10: 10 region lines plus the header, exit 0, a lower bound.
fold=$source_dir/data/fold2d.json
"$pleat" walk "$fold" --max-regions 10 --json --quiet -o "$work/max.jsonl" > "$work/max.json" ||
  fail "--max-regions 10 exited $?"
[ "$(wc -l < "$work/max.jsonl")" -eq 11 ] || fail "--max-regions 10 wrote $(wc -l < "$work/max.jsonl") lines, expected 11"
check_region_file "$work/max.jsonl" 10
[ "$(json_key "$work/max.json" regions)" = 10 ] || fail "--max-regions 10: regions is not 10"
[ "$(json_key "$work/max.json" complete)" = false ] || fail "--max-regions 10: complete is not false"
[ "$(json_key "$work/max.json" certified)" = false ] || fail "--max-regions 10: certified is not false"
[ "$(json_key "$work/max.json" stop_reason)" = '"max-regions"' ] || fail "--max-regions 10: stop_reason is not max-regions"
out=$("$pleat" walk "$fold" --max-regions 10 --quiet) || fail "--max-regions 10 (summary) exited $?"
case "$out" in *"regions     >= 10"*) ;; *) fail "--max-regions summary does not say '>= 10':"$'\n'"$out" ;; esac
case "$out" in *"status      certified"*) fail "--max-regions summary claims certified" ;; esac
# The interior points of a walk cut short are those of the regions found: the
# text file's comment says the regions are missing (it said "one exact
# interior point per region", as for a whole walk).
out=$("$pleat" walk "$fold" --max-regions 10 --quiet --points-out "$work/max_points.txt") ||
  fail "--max-regions 10 --points-out exited $?"
expect_contains "$out" "(10 interior points, one per region found)" "--points-out of a stopped walk, summary"
expect_contains "$(head -1 "$work/max_points.txt")" "the walk stopped (max-regions), so regions are missing" \
  "--points-out of a stopped walk, file comment"
"$pleat" walk "$fold" --quiet --points-out "$work/all_points.txt" > /dev/null || fail "--points-out exited $?"
[ "$(head -1 "$work/all_points.txt")" = "# pleat walk --points-out: one exact interior point per region" ] ||
  fail "--points-out of a whole walk: $(head -1 "$work/all_points.txt")"

# A stopped walk's linear regions bound nothing: on tests/data/min_quadrants2d.json
# (relu(min(x, y))) the first 4 regions are 4 pieces of different maps (the zero
# quadrants 4 and 2 meet only through quadrant 3, not yet found), while the whole
# box has 3 linear regions. JSON gives null, not 4 (the old binary gave 4).
quadrants=$source_dir/tests/data/min_quadrants2d.json
"$pleat" walk "$quadrants" --box -1,3,-1,2 --json -q > "$work/quadrants.json" || fail "walk exited $?"
[ "$(json_eval "$work/quadrants.json" '(d["regions"], d["linear_regions"])')" = "(5, 3)" ] ||
  fail "the whole box: $(cat "$work/quadrants.json")"
"$pleat" walk "$quadrants" --box -1,3,-1,2 --max-regions 4 --json -q > "$work/quadrants4.json" || fail "walk exited $?"
[ "$(json_eval "$work/quadrants4.json" '(d["regions"], d["complete"], d["linear_regions"])')" = "(4, False, None)" ] ||
  fail "a walk stopped after 4 regions gives linear_regions $(json_key "$work/quadrants4.json" linear_regions), not null"

# --- Boxes: a leading minus is a number (spec: outputs.md, Domains).
"$pleat" walk "$fold" --box -2,2 --json --quiet > "$work/box_a.json" || fail "--box -2,2 exited $?"
"$pleat" walk "$fold" --box=-2,2 --json --quiet > "$work/box_b.json" || fail "--box=-2,2 exited $?"
"$pleat" walk "$fold" --box=-2,2,-2,2 --json --quiet > "$work/box_c.json" || fail "--box=-2,2,-2,2 exited $?"
diff <(strip_timing "$work/box_a.json") <(strip_timing "$work/box_b.json") > /dev/null ||
  fail "--box -2,2 and --box=-2,2 differ"
diff <(strip_timing "$work/box_a.json") <(strip_timing "$work/box_c.json") > /dev/null ||
  fail "--box -2,2 and the per-axis --box=-2,2,-2,2 differ"
[ "$(json_key "$work/box_a.json" domain)" = '{"box": [["-2", "2"], ["-2", "2"]]}' ] ||
  fail "--box -2,2: domain is $(json_key "$work/box_a.json" domain)"
box_regions=$(json_key "$work/box_a.json" regions)
fold_regions=$("$pleat" walk "$fold" --json --quiet | "$python" -c 'import json,sys; print(json.load(sys.stdin)["regions"])')
[ "$box_regions" -lt "$fold_regions" ] || fail "a box walk found $box_regions regions, R^2 only $fold_regions"

for bad in "2,-2" "1,2,3" "1,1" "a,b"; do
  "$pleat" walk "$fold" --box "$bad" > "$work/bad.out" 2> "$work/bad.err"
  status=$?
  [ $status -eq 2 ] || fail "--box $bad exited $status, expected 2"
  grep -q -- "--box" "$work/bad.err" || fail "--box $bad: the message does not name --box: $(cat "$work/bad.err")"
  [ -s "$work/bad.out" ] && fail "--box $bad printed to standard output"
done

# --- 1-D: ramp1d's five bends (data/README.md, computed there with fractions)
# split the line into 6 regions; on (0,1) only the bends 3/8 and 2/3 lie inside: 3.
ramp=$source_dir/data/ramp1d.json
"$pleat" walk "$ramp" --json --quiet -o "$work/ramp.jsonl" > "$work/ramp.json" || fail "1-D walk exited $?"
[ "$(json_key "$work/ramp.json" regions)" = 6 ] || fail "ramp1d: $(json_key "$work/ramp.json" regions) regions, expected 6"
[ "$(json_key "$work/ramp.json" bounded_regions)" = 4 ] || fail "ramp1d: bounded regions not 4 (4 intervals, 2 rays)"
[ "$(json_key "$work/ramp.json" certified)" = true ] || fail "ramp1d: not certified"
check_region_file "$work/ramp.jsonl" 6
"$pleat" walk "$ramp" --box 0,1 --json --quiet > "$work/ramp_box.json" || fail "1-D box walk exited $?"
[ "$(json_key "$work/ramp_box.json" regions)" = 3 ] || fail "ramp1d on (0,1): expected 3 regions"

# --- 3-D: sensor3d walks, certified, and the region file matches the summary.
sensor=$source_dir/data/sensor3d.json
"$pleat" walk "$sensor" --json --quiet --certificates -o "$work/sensor.jsonl" > "$work/sensor.json" ||
  fail "3-D walk exited $?"
[ "$(json_key "$work/sensor.json" certified)" = true ] || fail "sensor3d: not certified"
check_region_file "$work/sensor.jsonl" "$(json_key "$work/sensor.json" regions)"
"$pleat" walk "$sensor" --box=-1,1 --quiet > "$work/sensor_box.txt" || fail "3-D box walk exited $?"
grep -q "box:(-1,1)x(-1,1)x(-1,1)" "$work/sensor_box.txt" || fail "3-D box summary: $(cat "$work/sensor_box.txt")"
# --certificates goes into the region lines of -o: without -o the
# certificates would be computed and written nowhere, so it is refused (2).
"$pleat" walk "$sensor" --box=-1,1 --certificates --quiet > /dev/null 2> "$work/certificates.err"
status=$?
[ $status -eq 2 ] && grep -q -- "--certificates requires --output" "$work/certificates.err" ||
  fail "walk --certificates without -o: exit $status, $(cat "$work/certificates.err")"
echo "walk end to end: ok"
