#!/usr/bin/python3
"""Cross-check of pleat's lp queries against an outside reference on small 2-D
systems: exact vertex enumeration with Python's standard-library `fractions`
(no LP, no floating point). scipy is not installed for /usr/bin/python3 here,
so the reference is the exact enumeration the issue names as the alternative.

For a 2-D system {a_i . x + c_i >= 0}, clipped to the big box [-M, M]^2 (M far
beyond every vertex of these small-coefficient systems):
  * the closed polygon's vertices are the feasible pairwise intersections;
  * the open cell is non-empty  iff  those vertices are not all collinear;
  * constraint i is a facet     iff  two distinct vertices lie on its line;
  * the cell is bounded         iff  no vertex lies on the box boundary;
  * the max-norm Chebyshev radius r* (capped at 1) is the best t over the
    vertices of the 3-D system a_i.x + c_i - t |a_i|_1 >= 0, t <= 1 (+ box),
    and pleat's centre must reach at least 0.9 r* (it promises 15/16 r*).
Every answer of pleat is compared; pleat's centre is also re-checked strictly
inside with fractions here.

Usage: lp_vertex_enumeration_test.py PLEAT_BINARY SOURCE_DIR (exit 77: skip).
"""

import itertools
import os
import random
import subprocess
import sys
from fractions import Fraction

BOX = Fraction(10**6)


def solve2(a, b, e, f, c1, c2):
    """Solves a x + b y = c1, e x + f y = c2; None if singular."""
    det = a * f - b * e
    if det == 0:
        return None
    return ((c1 * f - b * c2) / det, (a * c2 - c1 * e) / det)


def solve3(rows):
    """rows: 3 lists [p, q, r, s] for p x + q y + r t = s. None if singular."""
    m = [list(map(Fraction, row)) for row in rows]
    for col in range(3):
        pivot = next((r for r in range(col, 3) if m[r][col] != 0), None)
        if pivot is None:
            return None
        m[col], m[pivot] = m[pivot], m[col]
        for r in range(3):
            if r != col and m[r][col] != 0:
                factor = m[r][col] / m[col][col]
                m[r] = [u - factor * v for u, v in zip(m[r], m[col])]
    return tuple(m[i][3] / m[i][i] for i in range(3))


def boxed(cons):
    box = [((1, 0), BOX), ((-1, 0), BOX), ((0, 1), BOX), ((0, -1), BOX)]
    return list(cons) + [((Fraction(a), Fraction(b)), c) for (a, b), c in box]


def vertices(cons):
    rows = boxed(cons)
    found = set()
    for (n1, c1), (n2, c2) in itertools.combinations(rows, 2):
        point = solve2(n1[0], n1[1], n2[0], n2[1], -c1, -c2)
        if point is None:
            continue
        if all(n[0] * point[0] + n[1] * point[1] + c >= 0 for n, c in rows):
            found.add(point)
    return found


def is_collinear(points):
    points = list(points)
    if len(points) < 3:
        return True
    p0 = points[0]
    p1 = next((p for p in points if p != p0), None)
    if p1 is None:
        return True
    for p in points:
        cross = (p1[0] - p0[0]) * (p[1] - p0[1]) - (p1[1] - p0[1]) * (p[0] - p0[0])
        if cross != 0:
            return False
    return True


def chebyshev_radius(cons):
    rows = []
    for (a, b), c in boxed(cons):
        norm = abs(a) + abs(b)
        rows.append(([a, b, -norm], -c))  # a x + b y - norm t >= -c
    rows.append(([0, 0, -1], -1))         # t <= 1
    best = None
    for triple in itertools.combinations(rows, 3):
        point = solve3([coef + [rhs] for coef, rhs in triple])
        if point is None:
            continue
        if all(sum(u * v for u, v in zip(coef, point)) >= rhs for coef, rhs in rows):
            best = point[2] if best is None else max(best, point[2])
    return best


def random_system(rng):
    kind = rng.random()
    count = rng.randint(3, 7)
    cons = []
    if kind < 0.5:
        # Around a point: non-empty by construction (sometimes unbounded).
        px, py = Fraction(rng.randint(-6, 6), rng.randint(1, 3)), Fraction(rng.randint(-6, 6), rng.randint(1, 3))
        while len(cons) < count:
            a, b = rng.randint(-5, 5), rng.randint(-5, 5)
            if a == 0 and b == 0:
                continue
            c = Fraction(rng.randint(0, 6)) - (a * px + b * py)
            if c + a * px + b * py == 0:
                c += 1
            cons.append(((Fraction(a), Fraction(b)), c))
    else:
        # Unconstrained random: empty, thin, degenerate or not.
        while len(cons) < count:
            a, b = rng.randint(-4, 4), rng.randint(-4, 4)
            if a == 0 and b == 0:
                continue
            cons.append(((Fraction(a), Fraction(b)), Fraction(rng.randint(-6, 6))))
    # Degenerate extras: positive multiples, exact duplicates, opposite copies.
    if rng.random() < 0.4:
        (a, b), c = rng.choice(cons)
        k = rng.randint(2, 3)
        cons.append(((a * k, b * k), c * k))
    if rng.random() < 0.2:
        cons.append(rng.choice(cons))
    if rng.random() < 0.15:
        (a, b), c = rng.choice(cons)
        cons.append(((-a, -b), -c))  # closure becomes at most a line: empty interior
    rng.shuffle(cons)
    return cons


def main():
    pleat = sys.argv[1] if len(sys.argv) > 1 else ""
    build_root = os.path.dirname(os.path.dirname(os.path.abspath(pleat))) if pleat else ""
    driver = os.path.join(build_root, "tests", "bench", "lp_reference_driver")
    if not os.path.exists(driver):
        print("skip: lp_reference_driver not built at", driver)
        return 77
    rng = random.Random(20240607)
    systems = [random_system(rng) for _ in range(200)]
    text = [str(len(systems))]
    for cons in systems:
        text.append("2 %d" % len(cons))
        for (a, b), c in cons:
            text.append("%s %s %s" % (a, b, c))
    result = subprocess.run([driver], input="\n".join(text) + "\n", capture_output=True, text=True, timeout=120)
    if result.returncode != 0:
        print("driver failed:", result.stderr)
        return 1
    blocks = result.stdout.split("case ")[1:]
    if len(blocks) != len(systems):
        print("expected %d cases, got %d" % (len(systems), len(blocks)))
        return 1
    failures = 0
    kinds = {"empty": 0, "bounded": 0, "unbounded": 0}
    for index, (cons, block) in enumerate(zip(systems, blocks)):
        lines = dict(line.split(" ", 1) if " " in line else (line, "") for line in block.strip().splitlines()[1:])
        verts = vertices(cons)
        is_nonempty = not is_collinear(verts)
        problems = []
        if lines.get("checked") != "yes":
            problems.append("a certificate failed pleat's own checker")
        if (lines.get("open") == "interior") != is_nonempty:
            problems.append("open: pleat %s, reference %s" % (lines.get("open"), "interior" if is_nonempty else "empty"))
        if is_nonempty and lines.get("open") == "interior":
            centre = tuple(Fraction(v) for v in lines["centre"].split())
            slacks = [(n[0] * centre[0] + n[1] * centre[1] + c) for n, c in cons]
            if min(slacks) <= 0:
                problems.append("centre %s not strictly inside (fractions)" % (centre,))
            radius = min(s / (abs(n[0]) + abs(n[1])) for s, (n, c) in zip(slacks, cons))
            best = chebyshev_radius(cons)
            if radius < Fraction(9, 10) * best:
                problems.append("centre radius %s below 0.9 * reference %s" % (radius, best))
            facets = set()
            for i, ((a, b), c) in enumerate(cons):
                on_line = [v for v in verts if a * v[0] + b * v[1] + c == 0]
                if len(set(on_line)) >= 2:
                    facets.add(i)
            reported = set(int(v) for v in lines.get("facets", "").split())
            # pleat reports one representative per group of positive multiples.
            groups = [list(map(int, g.split(","))) for g in lines.get("groups", "").split()]
            expected = set()
            for group in groups:
                states = {m in facets for m in group}
                if len(states) != 1:
                    problems.append("group %s mixes facets and non-facets in the reference" % group)
                if group[0] in facets:
                    expected.add(group[0])
            if sorted(m for g in groups for m in g) != list(range(len(cons))):
                problems.append("groups do not partition the constraints")
            if reported != expected:
                problems.append("facets: pleat %s, reference %s" % (sorted(reported), sorted(expected)))
            is_bounded = all(abs(v[0]) < BOX and abs(v[1]) < BOX for v in verts)
            if (lines.get("bounded") == "yes") != is_bounded:
                problems.append("bounded: pleat %s, reference %s" % (lines.get("bounded"), is_bounded))
            kinds["bounded" if is_bounded else "unbounded"] += 1
        else:
            kinds["empty"] += 1
        if problems:
            failures += 1
            print("case %d %s:\n  %s" % (index, cons, "\n  ".join(problems)))
    print("compared %d systems (%s); %s; failures: %d"
          % (len(systems), kinds, result.stdout.strip().splitlines()[-1], failures))
    # The comparison must cover every outcome, or it proves little.
    if min(kinds.values()) < 20:
        print("too few cases of some kind:", kinds)
        return 1
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
