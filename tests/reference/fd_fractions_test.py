#!/usr/bin/python3
"""certify, certify --full-walk and an independent exact rank agree on tiny networks.

Usage: fd_fractions_test.py PLEAT_BINARY SOURCE_DIR (the ctest convention).

Outside source: Python's fractions module (exact rationals) and, as a second
opinion on the rank, sympy's DomainMatrix over QQ (Debian python3-sympy). The
parameter Jacobian at a point is computed here by hand, exactly (forward pass
and back-propagation in Fractions, no pleat code); the functional dimension is
the rank of the Jacobians stacked over every smooth point. Within a region the
network is affine with its neurons' states held, so J(x) is affine in x: the
states read at a point of the region and J evaluated with them held at x = 0
and x = e_t span the Jacobians of the whole region (it is open). With one
point in every region, the rank of those rows is the functional dimension.
For tiny 1- and 2-input networks (`pleat random`, many with 1- or 2-digit
parameters: coincident and parallel bends, dead and always-active neurons;
three crafted ones, below) in the box (-1, 1)^n0, the points are one interior point per region (`pleat walk --points-out`)
and 60 random rational points of the box not on a bend. Asserted:
  - certify (which may finish from points, or give up on them for the walk:
    detail::PlanarPointsCost) and certify --full-walk are both certified and equal;
  - that value is the exact rank of the stacked rows here (Fractions
    elimination), and sympy's rank of the same rows agrees.
Exit 77 (skip) when sympy is missing.
"""
import json
import os
import random
import subprocess
import sys
import tempfile
from fractions import Fraction

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import walk_reference as ref  # noqa: E402  (read_network: the network format's exact reading and defaults)

SKIP = 77


def pattern_at(layers, point):
    """Each ReLU layer's on/off states at point, or None on a bend."""
    states, values = [], list(point)
    for weights, bias, is_relu in layers:
        z = [sum((w * a for w, a in zip(row, values)), Fraction(0)) + b for row, b in zip(weights, bias)]
        if is_relu:
            # A neuron of zero weights and bias is zero everywhere: off (the
            # crafted ones also send it nowhere). Any other zero: on a bend.
            identically_zero = [all(w == 0 for w in row) and b == 0 for row, b in zip(weights, bias)]
            if any(value == 0 and not zero for value, zero in zip(z, identically_zero)):
                return None
            states.append([value > 0 for value in z])
            values = [value if value > 0 else Fraction(0) for value in z]
        else:
            states.append([True] * len(z))
            values = z
    return states


def jacobian_rows(layers, states, point):
    """The exact parameter Jacobian of the network with its neurons held in
    `states`, at point (one row per output, parameters layer by layer:
    weights row by row, then biases): forward pass and back-propagation."""
    activations = [list(point)]
    for (weights, bias, _), on in zip(layers, states):
        z = [sum((w * a for w, a in zip(row, activations[-1])), Fraction(0)) + b for row, b in zip(weights, bias)]
        activations.append([value if is_on else Fraction(0) for value, is_on in zip(z, on)])
    outputs = len(layers[-1][1])
    rows = []
    for o in range(outputs):
        delta = [Fraction(1) if i == o else Fraction(0) for i in range(outputs)]
        pieces = []
        for index in range(len(layers) - 1, -1, -1):
            weights, bias, _ = layers[index]
            inputs = activations[index]
            pieces.append([d * a for d in delta for a in inputs] + list(delta))
            if index > 0:
                back = [sum((weights[i][j] * delta[i] for i in range(len(delta))), Fraction(0))
                        for j in range(len(inputs))]
                delta = [value if is_on else Fraction(0) for value, is_on in zip(back, states[index - 1])]
        rows.append([x for piece in reversed(pieces) for x in piece])
    return rows


def region_rows(layers, n0, point):
    """The rows spanning the Jacobians at every point of point's region: with
    the states held, J is affine in x, so its values at x = 0 and x = e_t
    (outside the region too) span them, the region being open. None on a bend."""
    states = pattern_at(layers, point)
    if states is None:
        return None
    rows = []
    for t in range(-1, n0):
        rows.extend(jacobian_rows(layers, states, [Fraction(1 if i == t else 0) for i in range(n0)]))
    return rows


def walk_points(pleat, net, points_file, where=()):
    """One exact interior point per region (pleat walk --points-out), as Fractions."""
    subprocess.run([pleat, "walk", net, "-q", "--points-out", points_file] + list(where), check=True,
                   stdout=subprocess.DEVNULL)
    with open(points_file) as handle:
        return [[Fraction(x) for x in line.strip().split(",")] for line in handle
                if line.strip() and not line.startswith("#")]


def rows_at(layers, n0, points):
    """region_rows of every point, those on a bent hyperplane left out."""
    rows = []
    for point in points:
        point_rows = region_rows(layers, n0, point)
        if point_rows is not None:
            rows.extend(point_rows)
    return rows


def rank_fractions(rows):
    """Exact rank by Gaussian elimination over Fractions."""
    basis = {}  # pivot column -> row with 1 there
    for row in rows:
        row = list(row)
        for column, pivot_row in basis.items():
            factor = row[column]
            if factor:
                row = [x - factor * y for x, y in zip(row, pivot_row)]
        lead = next((c for c, x in enumerate(row) if x), None)
        if lead is None:
            continue
        scale = row[lead]
        row = [x / scale for x in row]
        for column in list(basis):
            factor = basis[column][lead]
            if factor:
                basis[column] = [x - factor * y for x, y in zip(basis[column], row)]
        basis[lead] = row
    return len(basis)


def main():
    if len(sys.argv) < 2:
        print(__doc__)
        return 2
    try:
        from sympy import QQ
        from sympy.polys.matrices import DomainMatrix
    except ImportError:
        print("no sympy: skipped")
        return SKIP
    pleat = sys.argv[1]
    cases = [("2,3,1", 1, 2, "he"), ("2,3,1", 4, 1, "uniform"), ("2,2,6,1", 2, 1, "he"), ("2,3,10,1", 3, 1, "uniform"),
             ("2,4,4,1", 5, 2, "he"), ("2,6,2,1", 6, 1, "uniform"), ("2,5,5,2", 7, 1, "he"), ("2,1,8,1", 8, 1, "he"),
             ("2,8,1,4,1", 9, 2, "uniform"), ("2,3,3,3,1", 10, 1, "he"), ("2,7,1", 11, 1, "he"), ("2,2,2,2,2,1", 12, 6, "he"),
             ("1,4,3,1", 13, 1, "he"), ("1,2,5,2", 14, 1, "uniform"), ("2,4,3,1", 15, 6, "he"), ("2,3,1", 16, 1, "he")]
    # Crafted (the walk's start decided in integers, 9957430): the box's centre
    # on bent hyperplanes of both layers, the first steps off it on another
    # one, an identically zero neuron, exact zeros, weights of 3e29 and 7e-31
    # as exact fractions, near-parallel bends.
    big, tiny = "1000000000000000000000000000001/3", "7/10000000000000000000000000000000"
    crafted = {
        "origin": [([["1", "-1"], ["0", "0"], [big, "-" + big], ["1", tiny], ["0", "1"]], ["0"] * 5, "relu"),
                   ([["1", "0", "0", "-1", "1"], [tiny, "0", "1", "0", "0"], ["0"] * 5], ["0", "0", "1"], "relu"),
                   ([["1", "-2", "3"]], ["0"], "linear")],
        "steps": [([["2", "-11"], ["1", "1"], ["-3", "1/2"], [tiny, big]], ["0", "-13/88", "0", "0"], "relu"),
                  ([["1", "1", "-1", "0"], ["0", "1", "1", "1"]], ["0", "-1/100"], "relu"),
                  ([["1", "1"]], ["0"], "linear")],
        "deep": [([["1", "0"], ["0", "1"], ["1", "1"]], ["1", "1", "0"], "relu"),
                 ([["1", "-1", "0"], ["-1", "-1", "-1"], ["1", "1", "1"]], ["0", "-1", "-2"], "relu"),
                 ([["1", "1", "1"]], ["0"], "linear")],
    }
    cases += [(name, None, None, None) for name in crafted]
    box = (Fraction(-1), Fraction(1))
    generator = random.Random(20261205)
    failures, at_bound = [], 0
    with tempfile.TemporaryDirectory() as work:
        for arch, seed, digits, init in cases:
            net = os.path.join(work, "net.json")
            if arch in crafted:
                layers_json = [{"weights": w, "bias": b, "activation": a} for w, b, a in crafted[arch]]
                with open(net, "w") as handle:
                    json.dump({"format": "pleat-network/1", "input_dim": 2, "layers": layers_json}, handle)
            else:
                subprocess.run([pleat, "random", "--arch", arch, "--seed", str(seed), "--digits", str(digits),
                                "--init", init, "-o", net], check=True)
            network = ref.read_network(net)
            n0, layers = network.input_dim, network.layers
            where = ["--box", "%s,%s" % (box[0], box[1])]
            values = []
            for extra in ([], ["--full-walk"]):
                out = subprocess.run([pleat, "certify", net, "--json", "-q", "--threads", "1"] + where + extra,
                                     capture_output=True, text=True, check=True).stdout
                document = json.loads(out)
                values.append((document["certified"], document["functional_dimension"], document["certified_by"]))
                scaling = document["scaling_bound"]
            points_file = os.path.join(work, "points.csv")
            points = walk_points(pleat, net, points_file, where)
            for _ in range(60):
                points.append([Fraction(generator.randrange(-999, 1000), 1000) for _ in range(n0)])
            rows = rows_at(layers, n0, points)
            rank = rank_fractions(rows)
            sympy_rank = DomainMatrix([[QQ(x.numerator, x.denominator) for x in row] for row in rows],
                                      (len(rows), len(rows[0])), QQ).rank()
            label = arch if arch in crafted else "%s seed %d digits %d %s" % (arch, seed, digits, init)
            print("%s: certify %s, --full-walk %s, exact rank %d (sympy %d) at %d points, scaling bound %d"
                  % (label, values[0], values[1], rank, sympy_rank, len(points), scaling))
            at_bound += rank == scaling
            if not (values[0][0] and values[1][0]):
                failures.append(label + ": not certified")
            if not (values[0][1] == values[1][1] == rank == sympy_rank):
                failures.append(label + ": values differ")
    print("%d networks, %d at their scaling bound" % (len(cases), at_bound))
    if at_bound == 0 or at_bound == len(cases):
        failures.append("the cases should include networks at and below their bound")
    for failure in failures:
        print("FAIL:", failure)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
