#!/usr/bin/env bash
# pleat report end to end, without a browser (tests/reference/report_browser_test.py
# drives the pages in chromium): the data embedded in the page equals the walk's
# region file (pattern, interior point, affine map), the exact areas of the 2-D
# map add up to the box's area and each equals pleat inspect's, the summary's
# functional dimension is certify's, the slice of a 3-input network is the
# 2-input network got by fixing x3 (walked by hand from its JSON), the 1-D pieces
# meet at their breakpoints, a survey page's histogram is the survey summary's,
# the page fetches nothing, and bad arguments exit 2.
source "$(dirname "$0")/lib.sh"
fold=$source_dir/data/fold2d.json
ramp=$source_dir/data/ramp1d.json
sensor=$source_dir/data/sensor3d.json

# The embedded JSON of a page, on stdout.
page_data() {
  /usr/bin/python3 - "$1" <<'PY'
import re, sys
text = open(sys.argv[1], encoding="utf-8").read()
match = re.search(r'<script type="application/json" id="pleat-data">(.*?)</script>', text, re.S)
print(match.group(1).replace("<\\/", "</"))
PY
}

out=$("$pleat" report "$fold" --box -3,3 -o "$work/fold.html" -q) || fail "report failed: $out"
# A --box a float64 page cannot place is refused (its map's coordinates were infinite).
err=$("$pleat" report "$fold" --box 0,1e400,0,1 -o "$work/huge.html" -q 2>&1 > /dev/null)
[ $? = 2 ] || fail "report of a --box beyond float64 must exit 2 ($err)"
expect_contains "$err" "--box: x1 from 0 to about 1.00000e+400" "report --box beyond float64"
[ ! -e "$work/huge.html" ] || fail "report of a --box beyond float64 wrote a page"
case "$out" in *"functional dimension  48  certified"*"written"*) ;; *) fail "summary: $out" ;; esac
page_data "$work/fold.html" > "$work/fold.json" || fail "no embedded data"
"$pleat" walk "$fold" --box -3,3 -o "$work/fold.jsonl" -q > /dev/null || fail "walk failed"
"$pleat" certify "$fold" --box -3,3 --json > "$work/certify.json" || fail "certify failed"
/usr/bin/python3 - "$work/fold.json" "$work/fold.jsonl" "$work/certify.json" "$work/fold.html" <<'PY' || fail "fold2d: embedded data differs from the walk"
import json, sys
from fractions import Fraction as F
data = json.load(open(sys.argv[1]))
lines = open(sys.argv[2]).read().splitlines()
walk = {r["id"]: r for r in map(json.loads, lines[1:])}
certify = json.load(open(sys.argv[3]))
html = open(sys.argv[4], encoding="utf-8").read()
assert data["format"] == "pleat-report/1" and data["kind"] == "plane"
regions = data["map"]["regions"]
assert len(regions) == len(walk) == data["walk"]["regions"] == 74, (len(regions), len(walk))
for r in regions:
    w = walk[r["id"]]
    assert r["pattern"] == w["pattern"] and r["point"] == w["point"], r["id"]
    assert r["map"]["A"] == w["affine"]["A"] and r["map"]["c"] == w["affine"]["c"], r["id"]
    assert r["bounded"] == w["bounded"], r["id"]
    # The polygon's drawing coordinates hold the interior point (winding test in double).
    x, y = (float(F(v)) for v in r["point"])
    p = r["polygon"]
    assert all((p[i + 1 - len(p)][0] - p[i][0]) * (y - p[i][1]) - (p[i + 1 - len(p)][1] - p[i][1]) * (x - p[i][0]) > 0
               for i in range(len(p))), r["id"]
# The exact areas tile the box [-3,3]^2: they add up to 36 exactly.
total = sum(F(r["area"]) for r in regions)
assert total == 36, total
# The certified value and its bounds are certify's.
c = data["certify"]
assert c["certified"] and c["functional_dimension"] == certify["functional_dimension"] == 48
assert (c["lower_bound"], c["upper_bound"], c["scaling_bound"]) == (certify["lower_bound"], certify["upper_bound"], certify["scaling_bound"])
# The rows each region adds in walk order sum to at most the certified rank, and
# at least one region adds the most rows possible (3: one output, 2 inputs + 1).
assert sum(r["rows_new"] for r in regions) <= 48 and max(r["rows_first"] for r in regions) == 3
# No address the page could fetch: no http(s) but the SVG namespace name, no
# src=, no href= but the empty data: icon, no url() but the page's own #clip.
rest = html.replace('href="data:,"', "").replace("'http://www.w3.org/2000/svg'", "").replace("url(#plot-clip)", "")
for needle in ("http://", "https://", "src=", "href=", "@import", "url("):
    assert needle not in rest, needle
PY

# Above --detail-limit the page holds shapes only; the counts stay exact.
out=$("$pleat" report "$fold" --box -3,3 --detail-limit 50 -o "$work/shapes.html" -q) || fail "--detail-limit failed"
case "$out" in *"74 regions as shapes only: above 50 regions"*) ;; *) fail "--detail-limit summary: $out" ;; esac
page_data "$work/shapes.html" | /usr/bin/python3 -c "
import json, sys
d = json.load(sys.stdin)
r = d['map']['regions']
assert not d['map']['has_details'] and len(r) == 74 and d['walk']['regions'] == 74
assert all(set(x) == {'id', 'colour', 'polygon'} for x in r)
assert d['certify']['functional_dimension'] == 48
" || fail "--detail-limit: the page still holds details"

# Three regions' areas against pleat inspect (exact, its own V-representation).
for id in 0 17 40; do
  read -r pattern area < <(/usr/bin/python3 -c "
import json, sys
r = [r for r in json.load(open(sys.argv[1]))['map']['regions'] if r['id'] == int(sys.argv[2])][0]
print(r['pattern'], r['area'])" "$work/fold.json" $id)
  inspected=$("$pleat" inspect "$fold" --box -3,3 --pattern "$pattern" --json |
              /usr/bin/python3 -c "import json, sys; print(json.load(sys.stdin)['regions'][0]['volume'])") ||
    fail "inspect --pattern $pattern failed"
  [ "$inspected" = "$area" ] || fail "region $id: page area $area, inspect $inspected"
done

# A 3-input slice is the 2-input network with x3 fixed (built here from the
# network's JSON, not by pleat's slice code): the same regions and maps.
"$pleat" report "$sensor" --box -1,1 --slice x3=-1/2,1/4 -o "$work/sensor.html" -q > /dev/null || fail "slice report failed"
page_data "$work/sensor.html" > "$work/sensor.json"
/usr/bin/python3 - "$sensor" "$work/slice_net.json" <<'PY' || fail "could not build the slice network"
import json, sys
from fractions import Fraction as F
net = json.load(open(sys.argv[1]))
first = net["layers"][0]
first["bias"] = [str(F(str(b)) + F(str(row[2])) * F(1, 4)) for b, row in zip(first["bias"], first["weights"])]
first["weights"] = [row[:2] for row in first["weights"]]
net["input_dim"] = 2
json.dump(net, open(sys.argv[2], "w"))
PY
"$pleat" walk "$work/slice_net.json" --box -1,1 -o "$work/slice.jsonl" -q > /dev/null || fail "walk of the hand-made slice failed"
/usr/bin/python3 - "$work/sensor.json" "$work/slice.jsonl" <<'PY' || fail "sensor3d: the slice differs from the network with x3 = 1/4"
import json, sys
from fractions import Fraction as F
data = json.load(open(sys.argv[1]))
lines = open(sys.argv[2]).read().splitlines()
walk = {r["pattern"]: r for r in map(json.loads, lines[1:])}
assert data["kind"] == "slice" and [(c["axis"], c["value"]) for c in data["slices"]] == [(2, "-1/2"), (2, "1/4")]
cut = data["slices"][1]
regions = cut["map"]["regions"]
assert cut["regions"] == len(regions) == len(walk)
assert {r["pattern"] for r in regions} == set(walk), "patterns differ"
for r in regions:
    assert r["map"]["A"] == walk[r["pattern"]]["affine"]["A"] and r["map"]["c"] == walk[r["pattern"]]["affine"]["c"]
assert sum(F(r["area"]) for r in regions) == 4
# rank rows count the 3-input network's parameters: at most 1 * (3 + 1) per region.
assert max(r["rows_first"] for r in regions) == 4
PY

# One input: the pieces meet at their breakpoints exactly, slopes times widths are rises.
"$pleat" report "$ramp" --box -2,3 -o "$work/ramp.html" -q > /dev/null || fail "1-D report failed"
page_data "$work/ramp.html" | /usr/bin/python3 -c "
import json, sys
from fractions import Fraction as F
d = json.load(sys.stdin)
p = d['map']['regions']
assert d['kind'] == 'line' and F(p[0]['x_low']) == -2 and F(p[-1]['x_high']) == 3
for a, b in zip(p, p[1:]):
    assert a['x_high'] == b['x_low'] and a['value_high'] == b['value_low']
for q in p:
    assert F(q['map']['A'][0][0]) * (F(q['x_high']) - F(q['x_low'])) == F(q['value_high']) - F(q['value_low'])
" || fail "1-D pieces are not exact"

# A survey page: the histogram and statistics are pleat survey summary's.
"$pleat" survey --arch 2,3,1 --samples 6 --seed 1 -o "$work/s.jsonl" -q > /dev/null || fail "survey failed"
"$pleat" report "$work/s.jsonl" -o "$work/s.html" > /dev/null || fail "survey report failed"
"$pleat" survey summary "$work/s.jsonl" --json > "$work/summary.json" || fail "survey summary failed"
page_data "$work/s.html" | /usr/bin/python3 -c "
import json, sys
d = json.load(sys.stdin)
s = json.load(open(sys.argv[1]))
assert d['kind'] == 'survey'
for key in ('histogram', 'mean', 'variance', 'modes', 'at_scaling_bound', 'scaling_bound'):
    assert d['survey']['summary'][key] == s[key], key
assert sum(len(v) for v in d['survey']['samples_by_value'].values()) == s['certified']
" "$work/summary.json" || fail "survey page differs from survey summary"
# A survey file whose last line was cut by a kill: the page leaves it out and
# says so, as survey summary does (it was silent).
head -n 4 "$work/s.jsonl" > "$work/s_cut.jsonl"
sed -n 5p "$work/s.jsonl" | head -c 30 >> "$work/s_cut.jsonl"
"$pleat" report "$work/s_cut.jsonl" -o "$work/s_cut.html" > /dev/null 2> "$work/s_cut.err" || fail "report of a cut survey failed"
grep -q "s_cut.jsonl: ignoring a last line cut short" "$work/s_cut.err" ||
  fail "the report did not say it left out the cut line: $(cat "$work/s_cut.err")"
# A survey killed while writing its header (its one line cut short): the page
# and survey summary both name it (the report printed a JSON parse error).
head -n 1 "$work/s.jsonl" | head -c 60 > "$work/s_head.jsonl"
for command in report summary; do
  if [ $command = report ]; then
    "$pleat" report "$work/s_head.jsonl" -o "$work/s_head.html" > /dev/null 2> "$work/s_head.err"
  else
    "$pleat" survey summary "$work/s_head.jsonl" > /dev/null 2> "$work/s_head.err"
  fi
  [ $? -eq 2 ] || fail "$command of a cut survey header did not exit 2"
  grep -q "s_head.jsonl:1: a survey header cut short" "$work/s_head.err" ||
    fail "$command of a cut survey header: $(cat "$work/s_head.err")"
done
[ ! -e "$work/s_head.html" ] || fail "a page was written for a cut survey header"

# A network whose name holds markup cannot break out of the page's data or text.
/usr/bin/python3 - "$fold" "$work/named.json" <<'PY'
import json, sys
net = json.load(open(sys.argv[1]))
net["name"] = "</script><script>alert(1)</script> & <b>"
json.dump(net, open(sys.argv[2], "w"))
PY
"$pleat" report "$work/named.json" --box -3,3 -o "$work/named.html" -q > /dev/null || fail "report of a named network failed"
[ "$(grep -o '</script>' "$work/named.html" | wc -l)" -eq 2 ] || fail "the network's name closed a script element"
page_data "$work/named.html" | /usr/bin/python3 -c "
import json, sys
assert json.load(sys.stdin)['network']['name'] == '</script><script>alert(1)</script> & <b>'
" || fail "the name does not read back from the page's data"

# Bad arguments: exit 2 with a message naming the problem; nothing written.
expect_error() {
  local pattern=$1
  shift
  local err
  err=$("$pleat" "$@" 2>&1 > /dev/null)
  [ $? -eq 2 ] || fail "'$*' should exit 2"
  case "$err" in *"$pattern"*) ;; *) fail "'$*': message '$err' lacks '$pattern'" ;; esac
}
expect_error "--slice is for networks with 3 inputs" report "$fold" --slice x3=0 -o "$work/x.html"
expect_error "--slice: the axis must be x1 to x3" report "$sensor" --slice x4=0 -o "$work/x.html"
# An axis not of the form xK is named as one (it said 'expected a non-negative integer below 2^64').
expect_error "--slice: the axis must be x1 to x3, found 'X3'" report "$sensor" --slice X3=0 -o "$work/x.html"
# A plane given twice (by equal values) is refused: it drew the same slice at two slider steps.
expect_error "--slice: value 3 (0) repeats value 1: give each plane once" report "$sensor" --box -1,1 \
  --slice x3=0,1/2,0.0 -o "$work/x.html"
[ ! -e "$work/x.html" ] || fail "a refused --slice wrote a page"
# A slice far out: vertices beyond the float64 range are refused by name (it
# was 'clip_rectangle: needs a non-empty 2-D rectangle'), ...
expect_error "the arrangement's vertices reach x1 = about" report "$sensor" --slice x3=1e400 -o "$work/x.html"
expect_error "report --box or --domain" report "$sensor" --slice x3=-1e400 -o "$work/x.html"
# ... and at 1e50 the fitted view holds them as at x3 = 1e10 (6 of 50 regions
# outside it; it was [-3.0000000000000002e46, 2.0e46] x ..., 49 outside).
for v in 1e10 1e50; do
  out=$("$pleat" report "$sensor" --slice x3=$v -o "$work/far.html" -q) || fail "--slice x3=$v failed"
  zeros=$(printf "%0${v#1e}d" 0)
  expect_contains "$out" "50 regions (6 outside the view [-3$zeros, 2$zeros] × [-5$zeros, 5$zeros])" "--slice x3=$v"
done
expect_error "misses the box" report "$sensor" --box -1,1 --slice x3=2 -o "$work/x.html"
expect_error "--slice: expected AXIS=VALUE" report "$sensor" --slice 1/2 -o "$work/x.html"
expect_error "carries its own domain" report "$work/s.jsonl" --box -1,1 -o "$work/x.html"
"$pleat" random --arch 4,3,1 --seed 1 -o "$work/four.json" > /dev/null
expect_error "report shows 1" report "$work/four.json" -o "$work/x.html"
[ ! -e "$work/x.html" ] || fail "a failed report wrote a page"
echo OK
