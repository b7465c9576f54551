#!/usr/bin/env bash
# pleat draw with 3 inputs writes an OFF mesh: one closed surface per region
# clipped to the view box, faces counter-clockwise seen from outside. Witness:
# by the divergence theorem the signed volumes of all faces' fan tetrahedra
# (about the origin) add up to the regions' volumes, which tile the box, so
# the sum must be the box's volume (float, 1e-9 relative); taken about a
# second origin it must not change (it would for a surface with holes).
set -u
source "$(dirname "$0")/lib.sh"
out=$("$pleat" draw "$source_dir/data/sensor3d.json" --view -2,2,-1,3,-3/2,1 --out "$work/s.off" -q) \
  || fail "draw .off failed"
case "$out" in *"mesh "*regions*faces*) ;; *) fail "no mesh counts: $out" ;; esac
/usr/bin/python3 - "$work/s.off" <<'PY' || fail "mesh does not enclose the box's volume"
import sys
lines = [l for l in open(sys.argv[1]) if l.strip() and not l.startswith("#")]
assert lines[0].strip() == "OFF"
nv, nf, _ = map(int, lines[1].split())
vs = [tuple(map(float, l.split())) for l in lines[2:2 + nv]]
def enclosed(origin):
    total = 0.0
    for l in lines[2 + nv:2 + nv + nf]:
        items = l.split()
        k = int(items[0])
        assert len(items) == 1 + k + 3, "expected an RGB colour per face"
        face = [tuple(x - o for x, o in zip(vs[int(i)], origin)) for i in items[1:1 + k]]
        for b, c in zip(face[1:], face[2:]):
            a = face[0]
            total += (a[0] * (b[1] * c[2] - b[2] * c[1]) - a[1] * (b[0] * c[2] - b[2] * c[0])
                      + a[2] * (b[0] * c[1] - b[1] * c[0])) / 6
    return total
box = 4 * 4 * 2.5
for origin in [(0, 0, 0), (7, -5, 11)]:
    total = enclosed(origin)
    assert abs(total - box) < 1e-9 * box, (origin, total, box)
PY
# --table: the region of each face. Each region's own faces must close up:
# their signed volume is positive and the same about two origins.
"$pleat" draw "$source_dir/data/sensor3d.json" --view -2,2,-1,3,-3/2,1 --out "$work/t.off" --table "$work/t.csv" -q \
  > "$work/t.txt" || fail "draw --table exited $?"
/usr/bin/python3 - "$work/t.off" "$work/t.csv" "$work/t.txt" <<'PY' || fail "the face table does not give closed regions"
import csv, re, sys
lines = [l for l in open(sys.argv[1]) if l.strip() and not l.startswith("#")]
nv, nf, _ = map(int, lines[1].split())
vs = [tuple(map(float, l.split())) for l in lines[2:2 + nv]]
faces = [[vs[int(i)] for i in l.split()[1:1 + int(l.split()[0])]] for l in lines[2 + nv:2 + nv + nf]]
rows = list(csv.DictReader(open(sys.argv[2])))
assert [int(r["face"]) for r in rows] == list(range(nf)), "one row per face, in file order"
by_region = {}
for r, face in zip(rows, faces):
    by_region.setdefault(r["region"], []).append(face)
def volume(faces, origin):
    total = 0.0
    for face in faces:
        face = [tuple(x - o for x, o in zip(p, origin)) for p in face]
        a = face[0]
        for b, c in zip(face[1:], face[2:]):
            total += (a[0] * (b[1] * c[2] - b[2] * c[1]) - a[1] * (b[0] * c[2] - b[2] * c[0])
                      + a[2] * (b[0] * c[1] - b[1] * c[0])) / 6
    return total
for region, own in by_region.items():
    v0, v1 = volume(own, (0, 0, 0)), volume(own, (7, -5, 11))
    assert v0 > 0 and abs(v0 - v1) < 1e-9 * max(1.0, abs(v0)), (region, v0, v1)
printed = int(re.search(r"mesh +(\d+) regions", open(sys.argv[3]).read()).group(1))
assert len(by_region) == printed, (len(by_region), printed)
PY
# --from a walk of all of R^3: regions beyond the view are left out (the old
# binary stopped with "internal error: cddlib: no point in the V-representation"),
# and the mesh has the same faces as a walk of the view itself.
"$pleat" walk "$source_dir/data/sensor3d.json" -q -o "$work/whole.jsonl" > /dev/null || fail "walk exited $?"
"$pleat" draw "$source_dir/data/sensor3d.json" --from "$work/whole.jsonl" --view -2,2,-1,3,-3/2,1 \
  --out "$work/from.off" -q > "$work/from.txt" 2> "$work/from.err" || fail "draw --from exited $?: $(cat "$work/from.err")"
/usr/bin/python3 - "$work/from.off" "$work/s.off" <<'PY' || fail "--from of an R^3 walk differs from a walk of the view"
import sys
def faces(path):
    lines = [l for l in open(path) if l.strip() and not l.startswith("#")]
    nv, nf, _ = map(int, lines[1].split())
    vs = [l.strip() for l in lines[2:2 + nv]]
    out = set()
    for l in lines[2 + nv:2 + nv + nf]:
        items = l.split()
        corners = [vs[int(i)] for i in items[1:1 + int(items[0])]]
        start = corners.index(min(corners))  # the same face, whatever corner it starts at
        out.add(tuple(corners[start:] + corners[:start]))
    return out
a, b = faces(sys.argv[1]), faces(sys.argv[2])
assert a == b and a, (len(a), len(b))
PY
"$pleat" draw "$source_dir/data/fold2d.json" --out "$work/f.off" > /dev/null 2>&1; [ $? -eq 2 ] \
  || fail ".off accepted for 2 inputs"
# A mesh has no title, key, lines or labels, and is coloured by region: the
# options only a figure honours are refused (exit 2, naming the option).
for option in "--title T" --labels --no-lines --no-stats --no-legend "--color-by gradient"; do
  "$pleat" draw "$source_dir/data/sensor3d.json" --view -1,1,-1,1,-1,1 $option --out "$work/ignored.off" -q \
    > /dev/null 2> "$work/ignored.err"
  status=$?
  [ $status -eq 2 ] && grep -q -- "${option%% *}" "$work/ignored.err" || fail "$option with .off: exit $status, $(cat "$work/ignored.err")"
done
"$pleat" draw "$source_dir/data/sensor3d.json" --view -1,1,-1,1,-1,1 --color-by region --out "$work/region.off" -q \
  > /dev/null || fail "--color-by region with .off (what a mesh is coloured by) refused"
# A --view of the wrong length names the six numbers a 3-input view takes
# (it said 'expected 6 numbers (XMIN,XMAX)', the 1-input form).
"$pleat" draw "$source_dir/data/sensor3d.json" --view -1,1,-1,1 --out "$work/short.off" -q > /dev/null 2> "$work/short.err"
[ $? -eq 2 ] || fail "a 4-number --view accepted for 3 inputs"
grep -q -- "--view: expected 6 numbers (XMIN,XMAX,YMIN,YMAX,ZMIN,ZMAX), found 4" "$work/short.err" ||
  fail "3-input --view of 4 numbers: $(cat "$work/short.err")"
echo ok
