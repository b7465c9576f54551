#!/usr/bin/env python3
"""Exact geometry of saved 2-D walks: the regions' polygons tile the box.

Outside source: Python's `fractions` (exact rationals) for all geometry, and
numpy (Debian python3-numpy) for a float64 forward pass. From the region lines
of `pleat walk NET --box ... -o regions.jsonl --json`, each region's polygon is
built exactly by clipping the box with the region's facet half-planes
(normal . x + offset >= 0, Sutherland-Hodgman), and then:

- every polygon has positive area and contains its `point` strictly; the
  point's exact pattern is the region's pattern;
- every polygon vertex satisfies every sign constraint of the region's pattern
  (s_j z_j(v) >= 0 with the pattern's own affine maps), so the polygon lies in
  the closure of the pattern's cell; distinct patterns have disjoint open
  cells, so the polygons do not overlap; and the exact areas sum to the box's
  area exactly, so nothing is missing (a missed region or a missed facet
  would break the sum);
- every facet is an edge of positive length of its polygon, its normal is a
  primitive integer vector, its `point` lies strictly inside that edge, and
  each neuron it names has a pre-activation (on the region's pattern) that
  vanishes on the whole edge; domain facets lie on the box and name their side;
- mutual neighbours: the neighbour across a facet lists this region back
  across the same line with the opposite normal (and, for these general
  position networks, over the same segment);
- Euler's relation V - E + F = 1 for the complex of the closed box (a disk):
  vertices are all polygon corners, edges are polygon edges split at every
  vertex lying on them (each interior sub-edge must border exactly two
  polygons, each boundary one exactly one and lie on the box boundary),
  faces are the regions;
- the summary's `facets` (interior, each once) and `linear_regions` (adjacent
  regions with equal affine maps merged, counted here by union-find) agree;
  `bounded` agrees with an exact recession-cone check of the unclipped cell;
  `touches_domain_boundary` says whether a facet lies on the box;
- the affine map (A, c) equals the exact product of the pattern's maps,
  A p + c equals the exact Fraction forward pass at the point, and numpy's
  float64 forward pass at the point to 1e-9 relative.

Usage: walk_tiling_test.py PLEAT_BINARY SOURCE_DIR  (exit 77 = skipped)
"""
import json
import math
import os
import subprocess
import sys
import tempfile
from fractions import Fraction

try:
    import numpy as np
except ImportError:
    print("numpy is not installed: skipping")
    sys.exit(77)

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import walk_reference as ref  # noqa: E402

pleat, source_dir = sys.argv[1], sys.argv[2]


# ------------------------------------------------------------ plane geometry

def clip(polygon, normal, offset):
    """Sutherland-Hodgman: the part of a convex polygon with normal . x + offset >= 0."""
    out = []
    for i, p in enumerate(polygon):
        q = polygon[(i + 1) % len(polygon)]
        fp = normal[0] * p[0] + normal[1] * p[1] + offset
        fq = normal[0] * q[0] + normal[1] * q[1] + offset
        if fp >= 0:
            out.append(p)
        if (fp > 0 > fq) or (fp < 0 < fq):
            t = fp / (fp - fq)
            out.append((p[0] + t * (q[0] - p[0]), p[1] + t * (q[1] - p[1])))
    return clean(out)


def cross(o, a, b):
    return (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0])


def clean(polygon):
    """Drops repeated and collinear vertices (a convex polygon keeps its corners)."""
    points = []
    for p in polygon:
        if not points or points[-1] != p:
            points.append(p)
    while len(points) > 1 and points[0] == points[-1]:
        points.pop()
    changed = True
    while changed and len(points) >= 3:
        changed = False
        for i in range(len(points)):
            if cross(points[i - 1], points[i], points[(i + 1) % len(points)]) == 0:
                points.pop(i)
                changed = True
                break
    return points


def area(polygon):
    return sum(cross((Fraction(0), Fraction(0)), polygon[i], polygon[(i + 1) % len(polygon)])
               for i in range(len(polygon))) / 2


def line_key(u, w):
    """The line through u and w as a canonical primitive integer (a, b, c): a x + b y + c = 0."""
    a, b = -(w[1] - u[1]), w[0] - u[0]
    c = -(a * u[0] + b * u[1])
    common = 1
    for v in (a, b, c):
        common = common * v.denominator // math.gcd(common, v.denominator)
    values = [int(v * common) for v in (a, b, c)]
    divisor = math.gcd(math.gcd(values[0], values[1]), values[2])
    values = [v // divisor for v in values]
    if values[0] < 0 or (values[0] == 0 and values[1] < 0):
        values = [-v for v in values]
    return tuple(values)


# ------------------------------------------------------------ checks

def check_walk(name, network_path, box, failures, general_position=True):
    def fail(message):
        failures.append(f"{name}: {message}")

    network = ref.read_network(network_path)
    if network.input_dim != 2:
        raise ValueError("2-D networks only")
    lo, hi = box
    with tempfile.TemporaryDirectory() as work:
        regions_path = os.path.join(work, "regions.jsonl")
        summary = json.loads(ref.run_pleat(pleat, "walk", network_path, f"--box={lo},{hi}", "-o", regions_path,
                                           "--json", "--quiet"))
        header, lines = ref.read_region_lines(regions_path)
    if header.get("format") != "pleat-regions/1":
        fail(f"header format {header.get('format')}")
    if not summary["certified"] or len(lines) != summary["regions"]:
        fail(f"{len(lines)} region lines, summary {summary['regions']}, certified {summary['certified']}")

    box_polygon = [(lo, lo), (hi, lo), (hi, hi), (lo, hi)]
    by_pattern = {}
    for line in lines:
        if line["pattern"] in by_pattern:
            fail(f"pattern {line['pattern']} appears twice")
        by_pattern[line["pattern"]] = line
    if [line["id"] for line in lines] != list(range(len(lines))):
        fail("ids are not 0, 1, 2, ... in file order")

    polygons, total_area = {}, Fraction(0)
    float_layers = [(np.array([[float(v) for v in row] for row in w]), np.array([float(v) for v in b]), relu)
                    for w, b, relu in network.layers]
    for line in lines:
        pattern = line["pattern"]
        point = [Fraction(v) for v in line["point"]]
        polygon = list(box_polygon)
        facets = []
        for facet in line["facets"]:
            normal = [Fraction(v) for v in facet["normal"]]
            offset = Fraction(facet["offset"])
            if any(v.denominator != 1 for v in normal) or math.gcd(*(int(v) for v in normal)) != 1:
                fail(f"{pattern}: facet normal {facet['normal']} is not a primitive integer vector")
            facets.append((normal, offset, facet))
            polygon = clip(polygon, normal, offset)
        polygons[pattern] = polygon
        if len(polygon) < 3 or area(polygon) <= 0:
            fail(f"{pattern}: degenerate polygon {polygon}")
            continue
        total_area += area(polygon)

        # The point strictly inside: inside the open box and strictly on every facet's side.
        if not all(lo < v < hi for v in point) or any(n[0] * point[0] + n[1] * point[1] + o <= 0 for n, o, _ in facets):
            fail(f"{pattern}: point {line['point']} is not strictly inside its polygon")
        exact_output, _, exact_pattern = ref.forward_exact(network, point)
        if exact_pattern != pattern.replace("z", "="):  # a 'z' neuron is exactly zero at every point
            fail(f"{pattern}: the exact pattern at its point is {exact_pattern}")

        # The polygon lies in the closed cell of its pattern.
        rows = ref.cell_rows(network, pattern)
        for v in polygon:
            for r in rows:
                if r[0] * v[0] + r[1] * v[1] + r[2] < 0:
                    fail(f"{pattern}: polygon vertex {v} violates a sign constraint of the pattern")
                    break

        # Every facet is a real edge, its point inside it, its neurons vanish along it.
        _, pre_maps = ref.affine_on_pattern(network, pattern)
        flat_maps = [(r, o) for rows_k, offsets_k in pre_maps for r, o in zip(rows_k, offsets_k)]
        touches = False
        for normal, offset, facet in facets:
            on_line = [i for i, v in enumerate(polygon) if normal[0] * v[0] + normal[1] * v[1] + offset == 0]
            if len(on_line) != 2:
                fail(f"{pattern}: facet {facet['normal']},{facet['offset']} is not an edge (touches {len(on_line)} corners)")
                continue
            u, w = polygon[on_line[0]], polygon[on_line[1]]
            q = [Fraction(v) for v in facet["point"]]
            if cross(u, w, q) != 0 or not (0 < (q[0] - u[0]) * (w[0] - u[0]) + (q[1] - u[1]) * (w[1] - u[1])
                                           < (w[0] - u[0]) ** 2 + (w[1] - u[1]) ** 2):
                fail(f"{pattern}: facet point {facet['point']} is not inside its edge {u}-{w}")
            if facet["side"] is not None:
                touches = True
                if facet["neighbor"] is not None or not all(
                        any(v[axis] in (lo, hi) and u[axis] == w[axis] for axis in (0, 1)) for v in (u, w)):
                    fail(f"{pattern}: domain facet {facet} is not on the box boundary or has a neighbour")
            else:
                if facet["neighbor"] is None or not facet["neurons"]:
                    fail(f"{pattern}: interior facet without neighbour or neurons: {facet}")
                for neuron in facet["neurons"]:
                    r, o = flat_maps[neuron]
                    if any(r[0] * v[0] + r[1] * v[1] + o != 0 for v in (u, w)):
                        fail(f"{pattern}: facet names neuron {neuron}, whose pre-activation is not zero on it")
            facet["_segment"] = {u, w}
        if touches != line["touches_domain_boundary"]:
            fail(f"{pattern}: touches_domain_boundary {line['touches_domain_boundary']}, facets say {touches}")

        # Boundedness of the unclipped cell (neuron constraints only), exact.
        if ref.is_cell_bounded(rows, 2) != line["bounded"]:
            fail(f"{pattern}: bounded is {line['bounded']}, the exact recession cone says otherwise")

        # The affine map: exact product of the pattern's maps, exact and numpy forward passes.
        (matrix, vector), _ = ref.affine_on_pattern(network, pattern)
        a = [[Fraction(v) for v in row] for row in line["affine"]["A"]]
        c = [Fraction(v) for v in line["affine"]["c"]]
        if a != matrix or c != vector:
            fail(f"{pattern}: affine map differs from the exact product of the pattern's maps")
        value = [sum((ai * pi for ai, pi in zip(row, point)), Fraction(0)) + ci for row, ci in zip(a, c)]
        if value != exact_output:
            fail(f"{pattern}: A p + c = {value} but the exact forward pass gives {exact_output}")
        # numpy's forward pass is accurate to about 1e-16 of the sums of absolute
        # terms it adds (|W| |y| + |b|, layer by layer), not of its result: on a net
        # whose layers cancel terms of 1e12 that bound, not |f|, sets the tolerance.
        y = np.array([float(v) for v in point])
        size = np.abs(y)
        for weights, bias, relu in float_layers:
            size = np.abs(weights) @ size + np.abs(bias)
            y = weights @ y + bias
            if relu:
                y = np.maximum(y, 0.0)
        if any(abs(float(v) - f) > 1e-9 * max(1.0, abs(f), bound) for v, f, bound in zip(value, y, size)):
            fail(f"{pattern}: A p + c = {[float(v) for v in value]}, numpy says {y.tolist()}")

    if total_area != (hi - lo) ** 2:
        fail(f"areas sum to {total_area} = {float(total_area)}, the box has {(hi - lo) ** 2}")

    # Mutual neighbours and the summary's facet count.
    interior = 0
    for line in lines:
        for facet in line["facets"]:
            neighbor = facet["neighbor"]
            if neighbor is None:
                continue
            interior += 1
            other = by_pattern.get(neighbor)
            if other is None:
                fail(f"{line['pattern']}: neighbour {neighbor} is not a region of the walk")
                continue
            back = [f for f in other["facets"]
                    if f["normal"] == [str(-Fraction(v)) for v in facet["normal"]]
                    and Fraction(f["offset"]) == -Fraction(facet["offset"])
                    and (f["neighbor"] == line["pattern"] or line["pattern"] in f.get("other_neighbors", []))]
            if len(back) != 1:
                fail(f"{line['pattern']}: neighbour {neighbor} does not list it back across the same line")
            elif general_position and back[0].get("_segment") != facet.get("_segment"):
                fail(f"{line['pattern']}: facet towards {neighbor} is not the same segment from both sides")
    if interior % 2 or interior // 2 != summary["facets"]:
        fail(f"{interior} facet sides with neighbours, summary facets {summary['facets']}")

    # Linear regions: adjacent regions with equal affine maps merged (union-find).
    parent = {p: p for p in by_pattern}

    def find(p):
        while parent[p] != p:
            parent[p] = parent[parent[p]]
            p = parent[p]
        return p
    for line in lines:
        for facet in line["facets"]:
            if facet["neighbor"] in by_pattern and by_pattern[facet["neighbor"]]["affine"] == line["affine"]:
                parent[find(line["pattern"])] = find(facet["neighbor"])
    components = len({find(p) for p in parent})
    if components != summary["linear_regions"]:
        fail(f"linear_regions {summary['linear_regions']}, union-find over equal-map neighbours gives {components}")

    # Euler: V - E + F = 1 on the closed box.
    line_points = {}
    for polygon in polygons.values():
        for i, u in enumerate(polygon):
            w = polygon[(i + 1) % len(polygon)]
            key = line_key(u, w)
            line_points.setdefault(key, set()).update((u, w))
    vertices = set(v for polygon in polygons.values() for v in polygon)
    edge_use = {}
    for polygon in polygons.values():
        for i, u in enumerate(polygon):
            w = polygon[(i + 1) % len(polygon)]
            d = (w[0] - u[0], w[1] - u[1])
            length = d[0] * d[0] + d[1] * d[1]
            inner = [p for p in line_points[line_key(u, w)]
                     if 0 < (p[0] - u[0]) * d[0] + (p[1] - u[1]) * d[1] < length]
            inner.sort(key=lambda p: (p[0] - u[0]) * d[0] + (p[1] - u[1]) * d[1])
            chain = [u] + inner + [w]
            for s, t in zip(chain, chain[1:]):
                edge = frozenset((s, t))
                edge_use[edge] = edge_use.get(edge, 0) + 1
    for edge, uses in edge_use.items():
        s, t = tuple(edge)
        on_boundary = any(s[axis] == t[axis] and s[axis] in (lo, hi) for axis in (0, 1))
        if uses != (1 if on_boundary else 2):
            fail(f"edge {s}-{t} borders {uses} polygons (on the box boundary: {on_boundary})")
            break
    euler = len(vertices) - len(edge_use) + len(polygons)
    if euler != 1:
        fail(f"V - E + F = {len(vertices)} - {len(edge_use)} + {len(polygons)} = {euler}, expected 1")
    print(f"{name}: {len(lines)} regions tile ({lo},{hi})^2; V={len(vertices)} E={len(edge_use)} "
          f"F={len(polygons)}; {summary['facets']} interior facets, {summary['linear_regions']} linear regions")


def main():
    failures = []
    data = os.path.join(source_dir, "data")
    with tempfile.TemporaryDirectory() as work:
        check_walk("fold2d.json", os.path.join(data, "fold2d.json"), (Fraction(-3), Fraction(3)), failures)
        check_walk("degenerate2d.json", os.path.join(data, "degenerate2d.json"), (Fraction(-3), Fraction(3)),
                   failures, general_position=False)
        for arch, seed, box in (("2,8,8,8,1", 1, (Fraction(-3), Fraction(3))),
                                ("2,6,6,6,6,1", 4, (Fraction(-5, 2), Fraction(7, 3))),
                                ("2,10,10,1", 6, (Fraction(-4), Fraction(4)))):
            path = ref.make_random(pleat, arch, seed, os.path.join(work, f"net_{seed}.json"))
            check_walk(f"random {arch} seed {seed}", path, box, failures)
    if failures:
        print("FAIL\n" + "\n".join(failures[:40]))
        print(f"{len(failures)} failures")
        return 1
    print("every walk tiles its box exactly")
    return 0


if __name__ == "__main__":
    sys.exit(main())
