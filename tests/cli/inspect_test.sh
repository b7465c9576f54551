#!/usr/bin/env bash
# pleat inspect on the bundled 2-D example, against the drawn complex:
# - at a vertex where bent hyperplanes meet, the regions listed are exactly
#   the drawn polygons whose closures contain the vertex (Python fractions);
# - at the midpoint of an interior edge, exactly the two polygons beside it;
# - inside a region: that region, its vertices are its polygon's (same
#   counter-clockwise cycle), its area is the polygon's shoelace area;
# - by pattern with --box: the clipped area equals the drawn polygon's;
# - a pattern with no region and a point outside the box exit 2.
set -u
source "$(dirname "$0")/lib.sh"
fold=$source_dir/data/fold2d.json
"$pleat" draw "$fold" --view -3,3,-3,3 --out "$work/fold.csv" -q > /dev/null || fail "draw failed"

/usr/bin/python3 - "$pleat" "$fold" "$work/fold.csv" <<'PY' || fail "inspect disagrees with the drawn complex"
import csv, json, subprocess, sys
from fractions import Fraction as F
pleat, net, table = sys.argv[1:4]
polygons = {}
for row in csv.DictReader(open(table)):
    polygons.setdefault(row["pattern"], []).append((F(row["x_exact"]), F(row["y_exact"])))

def inspect(*args):
    done = subprocess.run([pleat, "inspect", net, "--json", *args], capture_output=True, text=True)
    assert done.returncode == 0, done.stderr
    doc = json.loads(done.stdout)
    assert doc["format"] == "pleat-inspect/1"
    return doc

def cross(a, b, p):
    return (b[0] - a[0]) * (p[1] - a[1]) - (b[1] - a[1]) * (p[0] - a[0])

def contains(vertices, p):  # closed convex counter-clockwise polygon
    return all(cross(a, b, p) >= 0 for a, b in zip(vertices, vertices[1:] + vertices[:1]))

def text(p):
    return ",".join(str(c) for c in p)

inside_view = lambda p: all(-3 < c < 3 for c in p)
# A vertex shared by the most polygons (where 2+ bent hyperplanes meet).
counts = {}
for vs in polygons.values():
    for p in vs:
        if inside_view(p):
            counts[p] = counts.get(p, 0) + 1
vertex = max(counts, key=lambda p: (counts[p], p))
expected = {pattern for pattern, vs in polygons.items() if contains(vs, vertex)}
assert len(expected) >= 3, expected
doc = inspect("--at", text(vertex))
assert doc["on_boundary"] and len(doc["vanishing_neurons"]) >= 2, doc["vanishing_neurons"]
got = {r["pattern"] for r in doc["regions"]}
assert got == expected, (vertex, got, expected)
for r in doc["regions"]:
    assert any(F(f["offset"]) + sum(F(n) * c for n, c in zip(f["normal"], vertex)) == 0 for f in r["facets"])

# Midpoint of an interior edge: exactly the polygons on its two sides.
vs = polygons[sorted(polygons)[len(polygons) // 2]]
for a, b in zip(vs, vs[1:] + vs[:1]):
    mid = ((a[0] + b[0]) / 2, (a[1] + b[1]) / 2)
    if inside_view(a) and inside_view(b):
        break
expected = {pattern for pattern, ws in polygons.items() if contains(ws, mid)}
doc = inspect("--at", text(mid))
assert {r["pattern"] for r in doc["regions"]} == expected and len(expected) == 2, (mid, expected)

# Inside a bounded region: vertices, order and area.
for pattern, vs in sorted(polygons.items()):
    if all(inside_view(p) for p in vs):
        break
centre = (sum(p[0] for p in vs) / len(vs), sum(p[1] for p in vs) / len(vs))
doc = inspect("--at", text(centre))
assert not doc["on_boundary"] and len(doc["regions"]) == 1
r = doc["regions"][0]
assert r["pattern"] == pattern and r["bounded"] and r["vertex_order"] == "counter-clockwise"
ours = [(F(x), F(y)) for x, y in r["vertices"]]
start = ours.index(vs[0])
assert ours[start:] + ours[:start] == vs, (ours, vs)
shoelace = sum(a[0] * b[1] - a[1] * b[0] for a, b in zip(vs, vs[1:] + vs[:1])) / 2
assert F(r["volume"]) == shoelace, (r["volume"], shoelace)
assert 0 <= r["rank_contribution"] <= 3

# By pattern, clipped to the box: a region touching the view's border.
for pattern, vs in sorted(polygons.items()):
    if not all(inside_view(p) for p in vs):
        break
doc = inspect("--pattern", pattern, "--box", "-3,3")
r = doc["regions"][0]
shoelace = sum(a[0] * b[1] - a[1] * b[0] for a, b in zip(vs, vs[1:] + vs[:1])) / 2
assert r["volume"] is not None and F(r["volume"]) == shoelace, (pattern, r["volume"], shoelace)
assert any(f["side"] is not None for f in r["facets"])
PY

out=$("$pleat" inspect "$fold" --at 0.1,0.2) || fail "text inspect failed"
for key in region interior bounded facets vertices area map rank; do
  printf '%s\n' "$out" | grep -q "^$key " || fail "text output lacks '$key': $out"
done
"$pleat" inspect "$fold" --pattern 000000/00000 > /dev/null 2>&1; [ $? -eq 2 ] || fail "empty pattern accepted"
"$pleat" inspect "$fold" --at 5,0 --box -3,3 > /dev/null 2>&1; [ $? -eq 2 ] || fail "point outside the box accepted"
"$pleat" inspect "$fold" > /dev/null 2>&1; [ $? -eq 2 ] || fail "neither --at nor --pattern accepted"

# A decimal view beside each fraction for people, none with --exact-only
# (1/2,-1 lies in region 001100|11100 of fold2d; its interior point is (3/4, -8/3)).
out=$("$pleat" inspect "$fold" --at 1/2,-1) || fail "inspect exited $?"
case "$out" in *"-8/3 (≈ -2.66667)"*) ;; *) fail "no decimal view beside -8/3: $out" ;; esac
out=$("$pleat" inspect "$fold" --at 1/2,-1 --exact-only) || fail "inspect --exact-only exited $?"
case "$out" in *"≈"*) fail "--exact-only printed a decimal: $out" ;; esac
case "$out" in *"-8/3)"*) ;; *) fail "--exact-only lost the exact point: $out" ;; esac

# The region's own interior point is labelled so: printed as "point" after
# --at 1/3,1/5 it read as the point asked about, which it is not (5/9, 0).
out=$("$pleat" inspect "$fold" --at 1/3,1/5 --exact-only) || fail "inspect --at 1/3,1/5 exited $?"
grep -q '^point' <<< "$out" && fail "a line labelled point: $out"
grep -q '^interior    (.*)  (a point strictly inside the region' <<< "$out" || fail "no interior line: $out"

# A region that contains lines has no vertex; its V-representation's point is
# on the boundary here (x1 > 0 of a one-neuron network: the point (0, 0)), so it
# is not called a vertex nor a point of the (open) region.
cat > "$work/half.json" <<'JSON'
{"format": "pleat-network/1", "input_dim": 2, "layers": [
  {"weights": [["1", "0"]], "bias": ["0"], "activation": "relu"},
  {"weights": [["1"]], "bias": ["0"], "activation": "linear"}]}
JSON
out=$("$pleat" inspect "$work/half.json" --at 1,0 --exact-only) || fail "inspect of a half-plane exited $?"
grep -q '^vertices    none (the region contains lines); its closure is this point plus the rays and lines$' <<< "$out" ||
  fail "a half-plane's vertices line: $out"
grep -q '^lines       (0, 1)$' <<< "$out" || fail "a half-plane's lines: $out"

echo ok
