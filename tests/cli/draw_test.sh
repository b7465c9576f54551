#!/usr/bin/env bash
# pleat draw end to end: the bundled 2-D example as SVG, TikZ and CSV in every
# colouring; the 1-D example's CSV is exact (pieces meet at their breakpoints,
# slope times width equals the rise, breakpoints are the bends listed in
# data/ramp1d.json's meta, written by hand there); bad arguments exit 2.
set -u
source "$(dirname "$0")/lib.sh"
fold=$source_dir/data/fold2d.json
ramp=$source_dir/data/ramp1d.json

out=$("$pleat" draw "$fold" --out "$work/fold.svg" -q) || fail "draw svg failed"
case "$out" in *"complex "*regions*edges*vertices*) ;; *) fail "no counts printed: $out" ;; esac
/usr/bin/python3 -c "import sys, xml.etree.ElementTree as E; E.parse(sys.argv[1])" "$work/fold.svg" \
  || fail "SVG is not XML"
for mode in region gradient layer1 rank; do
  "$pleat" draw "$fold" --view -3,3,-3,3 --color-by $mode --labels --out "$work/$mode.svg" -q > /dev/null \
    || fail "--color-by $mode failed"
  grep -q '<polygon id="region-' "$work/$mode.svg" || fail "--color-by $mode drew no region"
  "$pleat" draw "$fold" --view -3,3,-3,3 --color-by $mode --out "$work/$mode.tex" -q > /dev/null \
    || fail "tikz --color-by $mode failed"
  grep -q '\\begin{tikzpicture}' "$work/$mode.tex" || fail "no tikzpicture"
done
grep -q 'data-pattern="[01|]*"' "$work/rank.svg" || fail "no pattern attribute"
grep -q 'New rows (walk order)' "$work/rank.svg" || fail "rank legend missing"
"$pleat" draw "$fold" --view=-3,3,-3,3 --out "$work/fold.csv" -q > /dev/null || fail "draw csv failed"
head -1 "$work/fold.csv" | grep -qx 'region,pattern,vertex,x,y,x_exact,y_exact' || fail "CSV header"

# Degenerate arrangements (coincident, parallel, concurrent, dead and
# identically-zero neurons): the polygons still tile the view exactly and the
# printed counts satisfy Euler's V - E + F = 1.
for net in "$source_dir"/tests/data/*2d.json "$source_dir"/data/degenerate2d.json; do
  out=$("$pleat" draw "$net" --view -2,2,-2,2 --out "$work/d.csv" -q) || fail "draw $net failed"
  /usr/bin/python3 - "$work/d.csv" "$out" <<'PY' || fail "$net: not an exact tiling: $out"
import csv, re, sys
from fractions import Fraction as F
polygons = {}
for r in csv.DictReader(open(sys.argv[1])):
    polygons.setdefault(r["region"], []).append((F(r["x_exact"]), F(r["y_exact"])))
areas = [sum(p[0] * q[1] - p[1] * q[0] for p, q in zip(v, v[1:] + v[:1])) / 2 for v in polygons.values()]
assert all(a > 0 for a in areas) and sum(areas) == 16, areas
f, e, v = map(int, re.search(r"(\d+) regions, (\d+) edges, (\d+) vertices", sys.argv[2]).groups())
assert v - e + f == 1 and f == len(polygons), (v, e, f)
PY
done

# A saved walk of all of R^2, clipped to the view, gives the same polygons
# (by pattern and vertex set) as a walk of the view itself.
"$pleat" walk "$fold" -q -o "$work/whole.jsonl" > /dev/null || fail "walk failed"
"$pleat" draw "$fold" --from "$work/whole.jsonl" --view -3,3,-3,3 --out "$work/from.csv" > /dev/null \
  || fail "--from failed"
/usr/bin/python3 - "$work/from.csv" "$work/fold.csv" <<'PY' || fail "--from of an R^2 walk differs"
import csv, sys
def load(name):
    polygons = {}
    for r in csv.DictReader(open(name)):
        polygons.setdefault(r["pattern"], set()).add((r["x_exact"], r["y_exact"]))
    return polygons
assert load(sys.argv[1]) == load(sys.argv[2])
PY

# A walk cut short (--max-regions 40 of fold2d's 84) is not drawn: its figure
# would state 40 regions in the view (the old binary drew it so). Nor is a
# file that holds a region twice. Nothing is written; the message names the line.
"$pleat" walk "$fold" -q --max-regions 40 -o "$work/cut.jsonl" > /dev/null || fail "walk --max-regions failed"
err=$("$pleat" draw "$fold" --from "$work/cut.jsonl" --out "$work/cut.svg" 2>&1 > /dev/null)
[ $? = 2 ] || fail "draw --from a walk cut short must exit 2 ($err)"
case "$err" in *"line "*": neighbour "*" is not in the file"*) ;; *) fail "unexpected message: $err" ;; esac
[ ! -e "$work/cut.svg" ] || fail "a figure of a walk cut short was written"
{ cat "$work/whole.jsonl"; sed -n 2p "$work/whole.jsonl"; } > "$work/twice.jsonl"
err=$("$pleat" draw "$fold" --from "$work/twice.jsonl" --out "$work/twice.svg" 2>&1 > /dev/null)
[ $? = 2 ] || fail "draw --from a file with a region twice must exit 2 ($err)"
case "$err" in *"appears twice"*) ;; *) fail "unexpected message: $err" ;; esac
# A walk of another network (2,3,1: 13 parameters, not fold2d's 59) is named
# as such, by draw --from and by verify, beside the pattern that does not fit
# (they said only 'group 1 has 3 states, expected 6').
"$pleat" random --arch 2,3,1 --seed 1 -o "$work/small.json" > /dev/null
"$pleat" walk "$work/small.json" -q -o "$work/small.jsonl" > /dev/null || fail "walk of 2,3,1 failed"
err=$("$pleat" draw "$fold" --from "$work/small.jsonl" --out "$work/other.svg" 2>&1 > /dev/null)
[ $? = 2 ] || fail "draw --from a walk of another network must exit 2 ($err)"
expect_contains "$err" 'line 1 says "parametric_dimension": 13, the network given has 59 parameters: the file holds a walk of another network' "draw --from another network's walk"
err=$("$pleat" verify "$fold" "$work/small.jsonl" 2>&1 > /dev/null)
[ $? = 2 ] || fail "verify of a walk of another network must exit 2 ($err)"
expect_contains "$err" "the file holds a walk of another network" "verify of another network's walk"
# A --view off the saved walk's box is refused as one off --box is (it drew an
# empty figure, '0 regions', exit 0); one that overlaps it is drawn.
"$pleat" walk "$fold" --box -1,1 -q -o "$work/box.jsonl" > /dev/null || fail "walk --box failed"
err=$("$pleat" draw "$fold" --from "$work/box.jsonl" --view 2,3,2,3 --out "$work/off.svg" 2>&1 > /dev/null)
[ $? = 2 ] || fail "draw --from with a view off the walk's box must exit 2 ($err)"
expect_contains "$err" "the view and the domain of the walk in $work/box.jsonl (box:(-1,1)x(-1,1)) do not overlap" "view off --from"
[ ! -e "$work/off.svg" ] || fail "a figure of a view off the walk was written"
"$pleat" draw "$fold" --from "$work/box.jsonl" --view 0,3,0,3 --out "$work/part.svg" -q > /dev/null 2>&1 ||
  fail "draw --from with a view overlapping the walk's box failed"
# A view a float64 drawing cannot place is refused before the walk: beyond the
# float64 range, or narrower than its steps (both wrote an SVG and a TikZ file of
# NaN coordinates, "written", exit 0); a box used as the view likewise.
for bad in "--view 0,1e400,0,1" "--view -1e308,1e308,0,1" "--view 1,1.00000000000000000000001,0,1" "--box 0,1e400,0,1"; do
  for out in undrawable.svg undrawable.tex; do
    err=$("$pleat" draw "$fold" $bad --out "$work/$out" 2>&1 > /dev/null)
    [ $? = 2 ] || fail "draw $bad --out $out must exit 2 ($err)"
    expect_contains "$err" "the float64" "draw $bad"
    [ ! -e "$work/$out" ] || fail "draw $bad wrote $out"
  done
done
# Each refusal names where the view came from: the saved walk's box (it said
# only "the view"), a bounded --domain's bounding box.
"$pleat" walk "$fold" --box -1,1,1,1.00000000000000000000001 -q -o "$work/thin.jsonl" > /dev/null || fail "walk of a thin box failed"
err=$("$pleat" draw "$fold" --from "$work/thin.jsonl" --out "$work/thin.svg" 2>&1 > /dev/null)
[ $? = 2 ] || fail "draw --from a walk of a box too thin to draw must exit 2 ($err)"
expect_contains "$err" "the box of the walk in $work/thin.jsonl: x2 from 1 to" "draw --from a thin box"
cat > "$work/huge.json" <<'DOMAIN'
{ "format": "pleat-domain/1", "input_dim": 2,
  "constraints": [ { "normal": ["1","0"], "offset": "0" }, { "normal": ["-1","0"], "offset": "1e400" },
                   { "normal": ["0","1"], "offset": "0" }, { "normal": ["0","-1"], "offset": "1" } ] }
DOMAIN
err=$("$pleat" draw "$fold" --domain "$work/huge.json" --out "$work/huge.svg" 2>&1 > /dev/null)
[ $? = 2 ] || fail "draw of a --domain beyond float64 must exit 2 ($err)"
expect_contains "$err" "the --domain's bounding box: x1 from 0 to about 1.00000e+400" "draw --domain beyond float64"
"$pleat" draw "$fold" --view 0,1e-300,0,1 --out "$work/tiny.svg" -q > /dev/null 2>&1 || fail "a tiny but drawable view was refused"
! grep -qi nan "$work/tiny.svg" || fail "the tiny view's SVG has NaN coordinates"
# A walk of another network is not drawn as this one's: one of the same widths
# (its file reads without a fault; the old binary drew fold2d's 84 regions as
# its own), and fold2d with one output weight changed (the same regions, other
# maps: a 1-D graph or --color-by gradient would show fold2d's function).
"$pleat" random --arch 2,6,5,1 --seed 7 -o "$work/same_widths.json" > /dev/null || fail "pleat random exited $?"
err=$("$pleat" draw "$work/same_widths.json" --from "$work/whole.jsonl" --out "$work/other.svg" 2>&1 > /dev/null)
[ $? = 2 ] || fail "draw --from another network's walk must exit 2 ($err)"
case "$err" in *"$work/whole.jsonl: line "*": the region's point does not lie in the region of pattern "*"a walk of another network is not drawn"*) ;;
  *) fail "unexpected message: $err" ;; esac
"$python" -c 'import json, sys
d = json.load(open(sys.argv[1])); d["layers"][-1]["bias"][0] = "7"; json.dump(d, open(sys.argv[2], "w"))' \
  "$fold" "$work/other_output.json" || fail "could not write the changed network"
err=$("$pleat" draw "$work/other_output.json" --from "$work/whole.jsonl" --out "$work/other.svg" 2>&1 > /dev/null)
[ $? = 2 ] || fail "draw --from a walk with other maps must exit 2 ($err)"
case "$err" in *"line 2: the region's affine map is not this network's on its pattern"*) ;; *) fail "unexpected message: $err" ;; esac
[ ! -e "$work/other.svg" ] || fail "a figure of another network's walk was written"

# One input: exact pieces.
"$pleat" draw "$ramp" --view -2,5 --out "$work/ramp.csv" -q > /dev/null || fail "1-D csv failed"
"$pleat" draw "$ramp" --view -2,5 --out "$work/ramp.svg" -q > /dev/null || fail "1-D svg failed"
grep -q 'class="breakpoint"' "$work/ramp.svg" || fail "1-D svg has no breakpoints"
/usr/bin/python3 - "$work/ramp.csv" <<'PY' || fail "1-D CSV not exact"
import csv, sys
from fractions import Fraction as F
rows = list(csv.DictReader(open(sys.argv[1])))
assert rows[0]["x_left_exact"] == "-2" and rows[-1]["x_right_exact"] == "5", "pieces must span the view"
for a, b in zip(rows, rows[1:]):
    assert a["x_right_exact"] == b["x_left_exact"], "gap between pieces"
    assert a["value_right_exact"] == b["value_left_exact"], "graph not continuous"
for r in rows:
    rise = F(r["value_right_exact"]) - F(r["value_left_exact"])
    assert F(r["slope_exact"]) * (F(r["x_right_exact"]) - F(r["x_left_exact"])) == rise, "slope"
bends = {F(r["x_left_exact"]) for r in rows[1:]}
assert bends == {F(-1, 2), F(-1, 3), F(3, 8), F(2, 3), F(25, 6)}, bends
PY

# Ticks: round values in plain decimals (a wide view once printed "8e+02"),
# zero included, and no frame rectangle around the plot (house style).
"$pleat" draw "$fold" --view -1000,1000,-0.05,0.05 --out "$work/wide.svg" -q > /dev/null || fail "wide view failed"
/usr/bin/python3 - "$work/wide.svg" <<'PY' || fail "tick labels not plain round values"
import sys, xml.etree.ElementTree as ET
ns = {"s": "http://www.w3.org/2000/svg"}
axes = ET.parse(sys.argv[1]).getroot().find(".//s:g[@id='axes']", ns)
ticks = [t.text for t in axes.findall("s:text", ns) if t.text]
assert ticks and not any("e" in t for t in ticks), ticks
assert {"-1000", "-500", "0", "500", "1000", "-0.04", "0.04"} <= set(ticks), ticks
assert axes.find("s:rect", ns) is None, "closed frame drawn"
PY

# The default view of a trained network (data/track/epoch40.json: a few
# nearly parallel hyperplanes meet hundreds of units out) holds the bulk of
# the vertices, not all: stderr names the view around every vertex and how
# many regions lie outside, which must be the walk of R^2's count minus the
# regions drawn (the figure's note says the same).
trained=$source_dir/data/track/epoch40.json
"$pleat" draw "$trained" --out "$work/trained.csv" -q > "$work/trained.txt" 2> "$work/trained.err" ||
  fail "draw epoch40 exited $?"
"$pleat" draw "$trained" --out "$work/trained.svg" -q > /dev/null 2>&1 || fail "draw epoch40 svg exited $?"
"$pleat" walk "$trained" --json -q > "$work/trained_walk.json" || fail "walk epoch40 exited $?"
/usr/bin/python3 - "$work" <<'PY' || fail "default view of epoch40: $(cat "$work/trained.txt" "$work/trained.err")"
import csv, json, re, sys
from fractions import Fraction as F
work = sys.argv[1]
total = json.load(open(f"{work}/trained_walk.json"))["regions_per_layer"][-1]
drawn = len({r["region"] for r in csv.DictReader(open(f"{work}/trained.csv"))})
err = open(f"{work}/trained.err").read()
outside = int(re.search(r"(\d+) of (\d+) regions lie outside the view", err).group(1))
assert f"of {total} regions lie outside" in err, err
assert outside == total - drawn > 0, (outside, total, drawn)
every = re.search(r"every vertex: --view ([-0-9/,]+)\)", err).group(1).split(",")
view = re.search(r"view +\[([-0-9/]+),([-0-9/]+)\]x\[([-0-9/]+),([-0-9/]+)\]", open(f"{work}/trained.txt").read()).groups()
# The bulk view is at most a tenth as wide as the one around every vertex, on both axes.
for axis in (0, 1):
    assert 10 * (F(view[2 * axis + 1]) - F(view[2 * axis])) <= F(every[2 * axis + 1]) - F(every[2 * axis]), (view, every)
assert f"{outside} regions outside the view" in open(f"{work}/trained.svg").read()
PY
# --box is the view (and the walk's domain); --domain: the view is the
# polytope's bounding box and the polygons tile the polytope (exact areas:
# the triangle x > -2, y > -2, x + y < 2 has area 6 * 6 / 2 = 18); neither with --from.
"$pleat" draw "$trained" --box -3,3 --out "$work/boxed.csv" -q > "$work/boxed.txt" 2> "$work/boxed.err" ||
  fail "draw --box exited $?"
grep -q '^view        \[-3,3\]x\[-3,3\]$' "$work/boxed.txt" || fail "--box view: $(cat "$work/boxed.txt")"
[ ! -s "$work/boxed.err" ] || fail "--box: unexpected stderr $(cat "$work/boxed.err")"
cat > "$work/triangle.json" <<'JSON'
{"format": "pleat-domain/1", "input_dim": 2, "constraints": [
  {"normal": ["1", "0"], "offset": "2"}, {"normal": ["0", "1"], "offset": "2"}, {"normal": ["-1", "-1"], "offset": "2"}]}
JSON
"$pleat" draw "$fold" --domain "$work/triangle.json" --out "$work/triangle.csv" -q > "$work/triangle.txt" ||
  fail "draw --domain exited $?"
grep -q '^view        \[-2,4\]x\[-2,4\]$' "$work/triangle.txt" || fail "--domain view: $(cat "$work/triangle.txt")"
/usr/bin/python3 - "$work/triangle.csv" <<'PY' || fail "--domain polygons do not tile the triangle"
import csv, sys
from fractions import Fraction as F
polygons = {}
for r in csv.DictReader(open(sys.argv[1])):
    polygons.setdefault(r["region"], []).append((F(r["x_exact"]), F(r["y_exact"])))
areas = [sum(p[0] * q[1] - p[1] * q[0] for p, q in zip(v, v[1:] + v[:1])) / 2 for v in polygons.values()]
assert all(a > 0 for a in areas) and sum(areas) == 18, sum(areas)
assert all(x >= -2 and y >= -2 and x + y <= 2 for v in polygons.values() for x, y in v)
PY
"$pleat" walk "$fold" --box -3,3 -q -o "$work/boxwalk.jsonl" > /dev/null || fail "walk failed"
"$pleat" draw "$fold" --from "$work/boxwalk.jsonl" --box -1,1 --out "$work/f.svg" > /dev/null 2>&1
[ $? -eq 2 ] || fail "--from with --box accepted"

# --size: the SVG is that size (96 px to the inch); bad sizes exit 2.
"$pleat" draw "$fold" --view -3,3,-3,3 --size 10cm,7cm --out "$work/sized.svg" -q > /dev/null || fail "--size exited $?"
grep -q '<svg [^>]*width="377.95" height="264.57"' "$work/sized.svg" || fail "--size 10cm,7cm: $(grep -o '<svg [^>]*' "$work/sized.svg")"
"$pleat" draw "$fold" --view -3,3,-3,3 --size 500,300px --out "$work/sized.svg" -q > /dev/null || fail "--size px exited $?"
grep -q '<svg [^>]*width="500" height="300"' "$work/sized.svg" || fail "--size 500,300px"
# The thin-region note counts pixels of an SVG: a TikZ picture (sized in cm)
# gets none; before, 12cm,8cm was measured as 12 by 8 px and 50 of fold2d's
# 74 regions were called under 3 px wide "in the SVG".
"$pleat" draw "$fold" --view -3,3,-3,3 --size 12cm,8cm --out "$work/sized.tex" -q > /dev/null 2> "$work/sized.err" ||
  fail "--size with .tex exited $?"
! grep -q "px wide" "$work/sized.err" || fail "a TikZ picture got the SVG's thin-region note: $(cat "$work/sized.err")"
"$pleat" draw "$fold" --view -3,3,-3,3 --size 12cm,8cm --out "$work/sized12.svg" -q > /dev/null 2> "$work/sized.err" ||
  fail "--size 12cm,8cm exited $?"
grep -q "are under 3 px wide in the SVG" "$work/sized.err" || fail "no thin-region note for the SVG: $(cat "$work/sized.err")"
for bad in 10,7 1cm,7cm 10cm 10cm,7in x,7cm; do
  "$pleat" draw "$fold" --size $bad --out "$work/f.svg" > /dev/null 2> "$work/size.err"; status=$?
  [ $status -eq 2 ] && grep -q -- "--size" "$work/size.err" || fail "--size $bad: exit $status, $(cat "$work/size.err")"
done
"$pleat" draw "$fold" --size 10cm,7cm --out "$work/f.csv" > /dev/null 2>&1; [ $? -eq 2 ] || fail "--size with .csv accepted"
# A saved walk is drawn without walking: --threads with --from would be
# ignored, so it is refused (exit 2).
"$pleat" walk "$fold" --box -3,3 -o "$work/saved.jsonl" -q > /dev/null || fail "walk -o exited $?"
"$pleat" draw "$fold" --from "$work/saved.jsonl" --threads 2 --out "$work/saved.svg" -q > /dev/null 2> "$work/saved.err"
status=$?
[ $status -eq 2 ] && grep -q -- "--threads" "$work/saved.err" || fail "--threads with --from: exit $status, $(cat "$work/saved.err")"
# A CSV has no title, key, lines, labels or colours: the options that only a
# figure honours are refused (exit 2, naming the option), not silently
# ignored, and nothing is written.
for option in "--title T" --labels --no-lines --no-stats --no-legend "--color-by rank" "--color-by region"; do
  rm -f "$work/ignored.csv"
  "$pleat" draw "$fold" --view -3,3,-3,3 $option --out "$work/ignored.csv" -q > /dev/null 2> "$work/ignored.err"
  status=$?
  [ $status -eq 2 ] && grep -q -- "${option%% *}" "$work/ignored.err" || fail "$option with .csv: exit $status, $(cat "$work/ignored.err")"
  [ ! -e "$work/ignored.csv" ] || fail "$option with .csv wrote the file"
done

# --labels and --table: a region shows its pattern or its number (never
# both), both kinds occur on fold2d; the table lists every polygon of the
# CSV once, with an exact point strictly inside it (Python fractions).
"$pleat" draw "$fold" --view -3,3,-3,3 --labels --table "$work/table.csv" --out "$work/labels.svg" -q > /dev/null ||
  fail "--labels --table exited $?"
grep -q 'labels: the activation pattern,' "$work/labels.svg" || fail "the key does not explain the labels"
"$pleat" draw "$fold" --view -3,3,-3,3 --out "$work/labels.csv" -q > /dev/null || fail "csv exited $?"
/usr/bin/python3 - "$work" <<'PY' || fail "--labels / --table"
import csv, sys, xml.etree.ElementTree as ET
from fractions import Fraction as F
work = sys.argv[1]
ns = {"s": "http://www.w3.org/2000/svg"}
root = ET.parse(f"{work}/labels.svg").getroot()
patterns = {p.get("id")[len("region-"):]: p.get("data-pattern") for p in root.iter("{http://www.w3.org/2000/svg}polygon")}
texts = root.find(".//s:g[@id='labels']", ns).findall("s:text", ns)
shown_patterns = [t.text for t in texts if t.get("class") == "pattern"]
shown_numbers = [t.text for t in texts if t.get("class") == "number"]
assert shown_patterns and shown_numbers, (len(shown_patterns), len(shown_numbers))
assert set(shown_patterns) <= set(patterns.values()) and set(shown_numbers) <= set(patterns)
labelled = [p for p, q in patterns.items() if q in shown_patterns] + shown_numbers
assert len(labelled) == len(set(labelled)), "a region labelled twice"
polygons = {}
for r in csv.DictReader(open(f"{work}/labels.csv")):
    polygons.setdefault(r["region"], []).append((F(r["x_exact"]), F(r["y_exact"])))
table = list(csv.DictReader(open(f"{work}/table.csv")))
assert sorted(r["region"] for r in table) == sorted(polygons) == sorted(patterns), "one row per region drawn"
for r in table:
    assert patterns[r["region"]] == r["pattern"]
    p, v = (F(r["x_exact"]), F(r["y_exact"])), polygons[r["region"]]
    # Strictly left of every counter-clockwise edge.
    assert all((b[0] - a[0]) * (p[1] - a[1]) - (b[1] - a[1]) * (p[0] - a[0]) > 0 for a, b in zip(v, v[1:] + v[:1])), r
    assert abs(float(r["x"]) - float(p[0])) < 1e-12 and abs(float(r["y"]) - float(p[1])) < 1e-12
PY

# --color-by rank on the trained network: regions coloured by the rows they
# add to the rank of the regions before them in walk order (region ids). The
# legend's histogram must equal one recomputed here: each region's
# coefficient-block rows from scripts/check_bundle.py (Python fractions, no
# pleat code), added in id order to an exact echelon basis; the total must
# be sympy's rank of all rows (outside reference) and certify's value on the
# same box, and the regions must not all share a colour.
"$pleat" draw "$trained" --color-by rank --table "$work/rank_table.csv" --out "$work/trained_rank.svg" -q \
  > "$work/rank_view.txt" 2> /dev/null || fail "draw --color-by rank exited $?"
box=$(sed -n 's/^view *\[\([-0-9]*\),\([-0-9]*\)\]x\[\([-0-9]*\),\([-0-9]*\)\]$/\1,\2,\3,\4/p' "$work/rank_view.txt")
"$pleat" certify "$trained" --box "$box" --json -q > "$work/rank_certify.json" || fail "certify --box $box exited $?"
/usr/bin/python3 - "$work" "$source_dir" "$trained" <<'PY' || fail "--color-by rank histogram"
import csv, importlib.util, json, re, sys
from collections import Counter
from fractions import Fraction
import sympy
work, source, net_path = sys.argv[1:]
spec = importlib.util.spec_from_file_location("check_bundle", f"{source}/scripts/check_bundle.py")
cb = importlib.util.module_from_spec(spec); spec.loader.exec_module(cb)
net = cb.Network(json.load(open(net_path)))
basis, added, everything = [], [], []  # basis: (pivot, row) in reduced form
for r in sorted(csv.DictReader(open(f"{work}/rank_table.csv")), key=lambda r: int(r["region"])):
    pattern = net.parse_pattern(r["pattern"], "")
    new = 0
    if net.is_smooth(pattern):
        for row in net.coefficient_blocks(pattern):
            everything.append(row)
            for pivot, b in basis:
                if row[pivot] != 0:
                    f = row[pivot] / b[pivot]
                    row = [x - f * y for x, y in zip(row, b)]
            pivot = next((c for c, x in enumerate(row) if x != 0), None)
            if pivot is not None:
                basis.append((pivot, row)); new += 1
    added.append(new)
svg = open(f"{work}/trained_rank.svg").read()
legend = {int(a): int(b) for a, b in re.findall(r">(\d+) rows?: (\d+) regions?<", svg)}
assert legend == dict(Counter(added)), (legend, Counter(added))
assert len(legend) >= 2, legend
total = sum(added)
assert total == sympy.Matrix(everything).rank(), "sympy rank"
assert total == json.load(open(f"{work}/rank_certify.json"))["functional_dimension"], total
assert f"rank {total} or more" in svg
PY

# Bad arguments.
"$pleat" draw "$fold" --out "$work/fold.png" > /dev/null 2>&1; [ $? -eq 2 ] || fail ".png accepted"
"$pleat" draw "$fold" --out "$work/f.svg" --view 1,2,3 > /dev/null 2>&1; [ $? -eq 2 ] || fail "3-number view accepted"
"$pleat" draw "$fold" --out "$work/f.svg" --view 2,1,0,1 > /dev/null 2>&1; [ $? -eq 2 ] || fail "empty view accepted"
"$pleat" draw "$fold" --out "$work/f.svg" --color-by hue > /dev/null 2>&1; [ $? -eq 2 ] || fail "bad --color-by accepted"
"$pleat" draw "$source_dir/data/sensor3d.json" --out "$work/f.svg" > /dev/null 2>&1; [ $? -eq 2 ] \
  || fail "3 inputs accepted"
# --title over the plot (escaped), --no-stats leaves the counts out of the
# figure (the printed summary keeps them).
"$pleat" draw "$fold" --out "$work/titled.svg" --title "fold & <2d>" --no-stats -q > "$work/titled.txt" ||
  fail "draw --title --no-stats exited $?"
grep -q '<text id="title"[^>]*>fold &amp; &lt;2d&gt;</text>' "$work/titled.svg" || fail "no escaped title in the SVG"
grep -q "regions, .* edges" "$work/titled.svg" && fail "--no-stats left the counts in the figure"
grep -q "^complex .* regions, .* edges" "$work/titled.txt" || fail "the summary lost the counts: $(cat "$work/titled.txt")"
"$pleat" draw "$fold" --out "$work/stats.svg" -q > /dev/null || fail "draw exited $?"
grep -q "regions, [0-9]* edges," "$work/stats.svg" || fail "the counts are missing from the default figure"
grep -q "id=\"title\"" "$work/stats.svg" && fail "a title without --title"
# --no-legend: no key, and a narrower picture than with it.
"$pleat" draw "$fold" --out "$work/bare.svg" --no-legend -q > /dev/null || fail "draw --no-legend exited $?"
grep -q 'id="legend"' "$work/bare.svg" && fail "--no-legend left the legend in"
grep -q 'id="legend"' "$work/stats.svg" || fail "the default figure has no legend"
width() { sed -n 's/.*<svg[^>]* width="\([0-9.]*\)".*/\1/p' "$1" | head -n 1; }
/usr/bin/python3 -c "import sys; sys.exit(0 if float('$(width "$work/bare.svg")') + 150 < float('$(width "$work/stats.svg")') else 1)" ||
  fail "--no-legend did not narrow the picture: $(width "$work/bare.svg") vs $(width "$work/stats.svg")"
echo ok
