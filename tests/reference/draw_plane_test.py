#!/usr/bin/python3
"""pleat draw on the bundled 2-D example, checked from outside.

- The CSV polygons tile the view rectangle exactly (Python fractions): every
  polygon is counter-clockwise with positive area, the areas add up to the
  rectangle's, and every edge inside the rectangle is covered exactly by edges
  of polygons lying on its other side (so nothing overlaps and nothing is left
  out). V - E + F = 1 for the counts pleat prints (Euler, planar subdivision).
- The vertices of every region agree with scipy.spatial.HalfspaceIntersection
  (Qhull, float) computed from the region's facets in the saved walk.
- The SVG parses as XML (xml.etree); rendered without lines and labels by
  rsvg-convert (Debian librsvg2-bin), the pixel at the Chebyshev centre of every
  region whose inscribed radius is at least 3 pixels has that region's colour
  (centre and radius from scipy.optimize.linprog in pixel coordinates).
- Neighbouring regions (facets of the saved walk) never share a colour; the
  palette's colours differ by at least 6 in CIE L* (sRGB -> L* formulas of
  CIE 15 / IEC 61966-2-1), so they stay apart in greyscale.
- --from draws the saved walk with the same polygons as a fresh walk.
- The default view of a trained network (data/track/epoch40.json) and a dense
  random one: the regions pleat reports as under 3 px wide are those whose
  SVG polygons are (least width over the edges of scipy's ConvexHull), and
  they are fewer than a third.
Usage: draw_plane_test.py PLEAT_BINARY SOURCE_DIR
"""
import csv
import json
import os
import re
import shutil
import struct
import subprocess
import sys
import tempfile
import xml.etree.ElementTree as ET
import zlib
from fractions import Fraction

try:
    import numpy as np
    from scipy.optimize import linprog
    from scipy.spatial import HalfspaceIntersection
except ImportError as missing:  # pragma: no cover
    print(f"skip: {missing}")
    sys.exit(77)

PLEAT, SOURCE = sys.argv[1], sys.argv[2]
NET = os.path.join(SOURCE, "data", "fold2d.json")
VIEW = ("-2", "5/2", "-3/2", "2")
LOWER = (Fraction(VIEW[0]), Fraction(VIEW[2]))
UPPER = (Fraction(VIEW[1]), Fraction(VIEW[3]))
failures = []


def check(condition, message):
    if not condition:
        failures.append(message)


def run(*args):
    done = subprocess.run([PLEAT, *args], capture_output=True, text=True)
    if done.returncode != 0:
        sys.exit(f"pleat {' '.join(args)} failed: {done.stderr}")
    return done.stdout


def read_polygons(path):
    polygons = {}
    with open(path) as handle:
        for row in csv.DictReader(handle):
            entry = polygons.setdefault(int(row["region"]), {"pattern": row["pattern"], "vertices": []})
            check(int(row["vertex"]) == len(entry["vertices"]), f"vertex rows out of order in region {row['region']}")
            check(abs(float(Fraction(row["x_exact"])) - float(row["x"])) < 1e-12, "x and x_exact disagree")
            entry["vertices"].append((Fraction(row["x_exact"]), Fraction(row["y_exact"])))
    return polygons


def area(vertices):
    return sum(a[0] * b[1] - a[1] * b[0] for a, b in zip(vertices, vertices[1:] + vertices[:1])) / 2


def side(a, b, p):
    return (b[0] - a[0]) * (p[1] - a[1]) - (b[1] - a[1]) * (p[0] - a[0])


def check_tiling(polygons):
    total = Fraction(0)
    for region, entry in polygons.items():
        a = area(entry["vertices"])
        check(a > 0, f"region {region}: area {a} not positive (not counter-clockwise?)")
        for p in entry["vertices"]:
            check(LOWER[0] <= p[0] <= UPPER[0] and LOWER[1] <= p[1] <= UPPER[1], f"region {region}: vertex outside")
        total += a
    rectangle = (UPPER[0] - LOWER[0]) * (UPPER[1] - LOWER[1])
    check(total == rectangle, f"areas sum to {total}, the view has {rectangle}")
    # Every edge inside the view must be covered by edges of polygons on its other side.
    edges = []
    for region, entry in polygons.items():
        vs = entry["vertices"]
        centre = (sum(p[0] for p in vs) / len(vs), sum(p[1] for p in vs) / len(vs))
        for a, b in zip(vs, vs[1:] + vs[:1]):
            edges.append((region, a, b, centre))
    on_border = lambda a, b: (a[0] == b[0] and a[0] in (LOWER[0], UPPER[0])) or (
        a[1] == b[1] and a[1] in (LOWER[1], UPPER[1]))
    for region, a, b, centre in edges:
        if on_border(a, b):
            continue
        axis = 0 if a[0] != b[0] else 1
        low, high = sorted((a[axis], b[axis]))
        covers = []
        for other, c, d, other_centre in edges:
            if other == region or side(a, b, c) != 0 or side(a, b, d) != 0:
                continue
            if side(a, b, centre) * side(a, b, other_centre) >= 0:
                check(max(low, min(c[axis], d[axis])) >= min(high, max(c[axis], d[axis])),
                      f"regions {region} and {other} overlap along an edge")
                continue
            covers.append(tuple(sorted((c[axis], d[axis]))))
        reach = low
        for c_low, c_high in sorted(covers):
            if c_low <= reach:
                reach = max(reach, c_high)
        check(reach >= high, f"region {region}: edge {a}-{b} not covered from the other side")


def check_scipy_vertices(polygons, regions):
    for region in regions:
        entry = polygons.get(region["id"])
        check(entry is not None, f"region {region['id']} missing from the CSV")
        if entry is None:
            continue
        halfspaces = [[-float(Fraction(x)) for x in f["normal"]] + [-float(Fraction(f["offset"]))]
                      for f in region["facets"]]
        interior = np.array([float(Fraction(x)) for x in region["point"]])
        reference = HalfspaceIntersection(np.array(halfspaces), interior).intersections
        unique = []
        for p in reference:
            if all(np.hypot(*(p - q)) > 1e-9 for q in unique):
                unique.append(p)
        ours = [np.array([float(x), float(y)]) for x, y in entry["vertices"]]
        check(len(unique) == len(ours), f"region {region['id']}: scipy finds {len(unique)} vertices, pleat {len(ours)}")
        for p in ours:
            check(min(np.hypot(*(p - q)) for q in unique) < 1e-9, f"region {region['id']}: vertex {p} not in scipy's")


def read_png(path):
    """RGBA pixels of an 8-bit non-interlaced PNG (what rsvg-convert writes)."""
    data = open(path, "rb").read()
    assert data[:8] == b"\x89PNG\r\n\x1a\n"
    position, idat, width = 8, b"", None
    while position < len(data):
        length, kind = struct.unpack(">I4s", data[position:position + 8])
        body = data[position + 8:position + 8 + length]
        if kind == b"IHDR":
            width, height, depth, colour_type = struct.unpack(">IIBB", body[:10])
            assert depth == 8 and colour_type in (2, 6), "unexpected PNG format"
            channels = 4 if colour_type == 6 else 3
        elif kind == b"IDAT":
            idat += body
        position += 12 + length
    raw = zlib.decompress(idat)
    stride = width * channels
    rows, previous, offset = [], bytearray(stride), 0
    for _ in range(height):
        kind, line = raw[offset], bytearray(raw[offset + 1:offset + 1 + stride])
        offset += 1 + stride
        for i in range(stride):
            left = line[i - channels] if i >= channels else 0
            up = previous[i]
            up_left = previous[i - channels] if i >= channels else 0
            if kind == 1:
                line[i] = (line[i] + left) & 255
            elif kind == 2:
                line[i] = (line[i] + up) & 255
            elif kind == 3:
                line[i] = (line[i] + (left + up) // 2) & 255
            elif kind == 4:
                p = left + up - up_left
                pa, pb, pc = abs(p - left), abs(p - up), abs(p - up_left)
                line[i] = (line[i] + (left if pa <= pb and pa <= pc else up if pb <= pc else up_left)) & 255
        rows.append(line)
        previous = line
    return lambda x, y: tuple(rows[y][x * channels:x * channels + 3])


def lightness(hex_colour):
    def linear(c):
        c /= 255
        return c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4
    r, g, b = (int(hex_colour[i:i + 2], 16) for i in (1, 3, 5))
    y = 0.2126 * linear(r) + 0.7152 * linear(g) + 0.0722 * linear(b)
    f = y ** (1 / 3) if y > 216 / 24389 else (24389 / 27 * y + 16) / 116
    return 116 * f - 16


def check_svg(svg_path, regions, scratch):
    tree = ET.parse(svg_path)
    ns = {"s": "http://www.w3.org/2000/svg"}
    plot = tree.getroot().find(".//s:rect[@id='plot-area']", ns)
    check(plot is not None, "SVG has no plot-area")
    x0, y0, w, h = (float(plot.get(k)) for k in ("x", "y", "width", "height"))
    xmin, xmax, ymin, ymax = (float(v) for v in plot.get("data-view").split(","))
    to_pixel = lambda x, y: (x0 + (x - xmin) / (xmax - xmin) * w, y0 + (ymax - y) / (ymax - ymin) * h)
    fills = {}
    for polygon in tree.getroot().iter("{http://www.w3.org/2000/svg}polygon"):
        fills[int(polygon.get("id").split("-")[1])] = polygon.get("fill")
    check(set(fills) == {r["id"] for r in regions}, "SVG regions differ from the walk's")
    by_pattern = {r["pattern"]: r["id"] for r in regions}
    for r in regions:
        for facet in r["facets"]:
            if facet["neighbor"] is not None:
                check(fills[r["id"]] != fills[by_pattern[facet["neighbor"]]],
                      f"neighbours {r['pattern']} and {facet['neighbor']} share a colour")
    palette = sorted(set(fills.values()))
    check(2 <= len(palette) <= 6, f"{len(palette)} colours for a planar map")
    for i, a in enumerate(palette):
        for b in palette[i + 1:]:
            check(abs(lightness(a) - lightness(b)) >= 6, f"colours {a} and {b} are too close in greyscale")
    if shutil.which("rsvg-convert") is None:
        print("note: rsvg-convert missing (Debian librsvg2-bin); pixel check skipped")
        return
    png = os.path.join(scratch, "fill.png")
    subprocess.run(["rsvg-convert", "-o", png, svg_path], check=True)
    pixel = read_png(png)
    tested = 0
    for r in regions:
        # Chebyshev centre in pixel coordinates: maximise t with n.p + c >= t |n|.
        rows, bounds = [], []
        for facet in r["facets"]:
            nx, ny = (float(Fraction(v)) for v in facet["normal"])
            c = float(Fraction(facet["offset"]))
            # x = xmin + (px - x0) (xmax - xmin) / w;  y = ymax - (py - y0) (ymax - ymin) / h
            ax, ay = nx * (xmax - xmin) / w, -ny * (ymax - ymin) / h
            b = c + nx * (xmin - x0 * (xmax - xmin) / w) + ny * (ymax + y0 * (ymax - ymin) / h)
            norm = (ax * ax + ay * ay) ** 0.5
            rows.append([-ax, -ay, norm])
            bounds.append(b)
        result = linprog([0, 0, -1], A_ub=rows, b_ub=bounds, bounds=[(None, None)] * 3)
        if not result.success or result.x[2] < 3:
            continue
        px, py = result.x[0], result.x[1]
        colour = pixel(int(px), int(py))
        expected = tuple(int(fills[r["id"]][i:i + 2], 16) for i in (1, 3, 5))
        check(all(abs(a - b) <= 2 for a, b in zip(colour, expected)),
              f"region {r['pattern']}: pixel ({px:.1f},{py:.1f}) is {colour}, expected {expected}")
        tested += 1
    check(tested >= 10, f"only {tested} regions were wide enough to test")


def least_width(points):
    """Least width of a convex polygon (numpy): over the edges of its convex
    hull (scipy.spatial.ConvexHull, Qhull), the farthest vertex from the
    edge's line; the least of those."""
    from scipy.spatial import ConvexHull
    points = np.array(points)
    try:
        hull = points[ConvexHull(points).vertices]
    except Exception:  # degenerate (collinear) polygon
        return 0.0
    least = float("inf")
    for a, b in zip(hull, np.roll(hull, -1, axis=0)):
        edge = b - a
        distances = np.abs(edge[0] * (hull[:, 1] - a[1]) - edge[1] * (hull[:, 0] - a[0])) / np.hypot(*edge)
        least = min(least, distances.max())
    return least


def check_thin(name, args, scratch):
    """The default view of a trained or dense network: pleat's stderr count of
    regions under 3 px wide equals one recomputed from the SVG's polygons
    (within the 0.01 px rounding of their coordinates)."""
    svg = os.path.join(scratch, "thin.svg")
    done = subprocess.run([PLEAT, "draw", *args, "--out", svg, "-q"], capture_output=True, text=True)
    check(done.returncode == 0, f"{name}: draw failed: {done.stderr}")
    reported = re.search(r"(\d+) regions? of (\d+) (?:is|are) under 3 px wide", done.stderr)
    widths = []
    for polygon in ET.parse(svg).getroot().iter("{http://www.w3.org/2000/svg}polygon"):
        widths.append(least_width([tuple(map(float, p.split(","))) for p in polygon.get("points").split()]))
    surely, maybe = sum(w < 3 - 0.05 for w in widths), sum(w < 3 + 0.05 for w in widths)
    count = int(reported.group(1)) if reported else 0
    check(surely <= count <= maybe, f"{name}: pleat reports {count} thin regions, recomputed {surely}..{maybe}")
    check(not reported or int(reported.group(2)) == len(widths), f"{name}: {reported.group(2)} regions vs {len(widths)}")
    check(count < len(widths) / 3, f"{name}: {count} of {len(widths)} regions are too thin to see")


def main():
    scratch = tempfile.mkdtemp()
    try:
        view = ",".join(VIEW)
        walk_file = os.path.join(scratch, "regions.jsonl")
        run("walk", NET, "--box", f"{VIEW[0]},{VIEW[1]},{VIEW[2]},{VIEW[3]}", "-o", walk_file, "-q", "--threads", "1")
        with open(walk_file) as handle:
            regions = [json.loads(line) for line in handle][1:]
        fresh_csv = os.path.join(scratch, "fresh.csv")
        out = run("draw", NET, "--view", view, "--out", fresh_csv, "-q", "--threads", "1")
        counts = re.search(r"(\d+) regions, (\d+) edges, (\d+) vertices", out)
        check(counts is not None, f"no counts in: {out}")
        faces, edges, vertices = (int(counts.group(i)) for i in (1, 2, 3))
        check(vertices - edges + faces == 1, f"Euler: V - E + F = {vertices - edges + faces}, expected 1")
        check(faces == len(regions), f"{faces} regions drawn, the walk has {len(regions)}")
        saved_csv = os.path.join(scratch, "saved.csv")
        run("draw", NET, "--from", walk_file, "--out", saved_csv)
        check(open(saved_csv).read() == open(fresh_csv).read(), "--from draws different polygons than a fresh walk")
        polygons = read_polygons(saved_csv)
        check_tiling(polygons)
        check_scipy_vertices(polygons, regions)
        svg = os.path.join(scratch, "fill.svg")
        run("draw", NET, "--from", walk_file, "--no-lines", "--out", svg)
        check_svg(svg, regions, scratch)
        check_thin("epoch40", [os.path.join(SOURCE, "data", "track", "epoch40.json")], scratch)
        dense = os.path.join(scratch, "dense.json")
        run("random", "--arch", "2,16,16,1", "--seed", "3", "-o", dense)
        check_thin("random 2,16,16,1", [dense], scratch)
    finally:
        shutil.rmtree(scratch)
    for failure in failures[:20]:
        print("FAIL:", failure)
    if failures:
        sys.exit(1)
    print("ok: tiling, scipy vertices, SVG pixels, proper colouring, palette lightness")


main()
