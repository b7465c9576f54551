#!/usr/bin/python3
"""`pleat certify NET --points FILE --claim N` against sympy's exact rank at the same points.

Usage: claim_sympy_test.py PLEAT_BINARY SOURCE_DIR (the ctest convention).

Outside source: sympy (Debian python3-sympy). For each network, the output F
is built as a sympy expression in the parameter symbols on each point's
activation pattern (decided here with Python fractions), differentiated with
sympy.diff, evaluated at the network's parameters, and the stacked Jacobian's
rank taken with sympy's DomainMatrix over QQ. Points files are written three
ways (a pandas-style header with an index column, numpy.savetxt's whitespace
form, a float64 .npy from numpy.save). Asserted:
  - batch_functional_dimension == sympy's rank;
  - regions_touched == the number of distinct patterns among the points;
  - --claim verdicts at the points (consistent / too-low / impossible) and
    the exit status (0 only when every verdict is consistent, else 1);
  - a point outside --box is exit 2 naming the point.
Exit 77 (skip) when sympy or numpy is missing.
"""
import json
import os
import random
import subprocess
import sys
import tempfile
from fractions import Fraction

SKIP = 77


def load(path):
    with open(path) as handle:
        document = json.load(handle)
    layers = []
    for index, layer in enumerate(document["layers"]):
        weights = [[Fraction(str(value)) for value in row] for row in layer["weights"]]
        bias = [Fraction(str(value)) for value in layer["bias"]]
        last = index == len(document["layers"]) - 1
        relu = layer.get("activation", "linear" if last else "relu") == "relu"
        layers.append((weights, bias, relu))
    return document["input_dim"], layers


def pattern_at(layers, point, allow_zero=False):
    """The on/off state of every ReLU neuron at the point; None when a pre-activation
    is 0 (the caller skips the point), unless allow_zero: then the neuron counts as
    off (for a neuron known to be identically zero around the point with zero
    backward signal, the rows do not depend on its state)."""
    values, states = list(point), []
    for weights, bias, relu in layers:
        pre = [sum(w * v for w, v in zip(row, values)) + b for row, b in zip(weights, bias)]
        if relu:
            if any(z == 0 for z in pre) and not allow_zero:
                return None
            states.extend(z > 0 for z in pre)
            values = [max(z, Fraction(0)) for z in pre]
        else:
            values = pre
    return tuple(states)


def jacobian_rows(sympy, layers, point, states):
    """Rows dF_o/dtheta at the point, in the spec's parameter order, with sympy.diff."""
    symbols, values, names = [], {}, 0
    symbolic_layers = []
    for weights, bias, relu in layers:
        w = [[sympy.Symbol(f"t{names + i * len(row) + j}") for j in range(len(row))] for i, row in enumerate(weights)]
        names += sum(len(row) for row in weights)
        b = [sympy.Symbol(f"t{names + i}") for i in range(len(bias))]
        names += len(bias)
        for i, row in enumerate(weights):
            for j, value in enumerate(row):
                values[w[i][j]] = sympy.Rational(value.numerator, value.denominator)
                symbols.append(w[i][j])
        for i, value in enumerate(bias):
            values[b[i]] = sympy.Rational(value.numerator, value.denominator)
            symbols.append(b[i])
        symbolic_layers.append((w, b, relu))
    current = [sympy.Rational(x.numerator, x.denominator) for x in point]
    neuron = 0
    for w, b, relu in symbolic_layers:
        pre = [sum(wij * v for wij, v in zip(row, current)) + bi for row, bi in zip(w, b)]
        if relu:
            current = [z if states[neuron + i] else sympy.Integer(0) for i, z in enumerate(pre)]
            neuron += len(pre)
        else:
            current = pre
    rows = []
    for output in current:
        rows.append([sympy.diff(output, symbol).subs(values) for symbol in symbols])
    return rows


def sympy_rank(rows, columns):
    from sympy import QQ
    from sympy.polys.matrices import DomainMatrix
    entries = [[QQ(int(sympy_value.p), int(sympy_value.q)) for sympy_value in row] for row in rows]
    return DomainMatrix(entries, (len(rows), columns), QQ).rank()


def random_points(layers, dimension, count, seed, scale):
    generator = random.Random(seed)
    points, patterns = [], []
    while len(points) < count:
        point = [Fraction(generator.randint(-40 * scale, 40 * scale), 8) for _ in range(dimension)]
        pattern = pattern_at(layers, point)
        if pattern is not None:
            points.append(point)
            patterns.append(pattern)
    return points, patterns


def write_points(numpy, path, points, style):
    array = numpy.array([[float(x) for x in point] for point in points])  # k/8: exact in binary
    if style == "pandas":
        with open(path, "w") as handle:  # what DataFrame.to_csv writes: an unnamed index column
            handle.write("," + ",".join(f"x{i}" for i in range(array.shape[1])) + "\n")
            for index, row in enumerate(array):
                handle.write(str(index) + "," + ",".join(repr(float(x)) for x in row) + "\n")
    elif style == "savetxt":
        numpy.savetxt(path, array)
    else:
        numpy.save(path, array)


def run(pleat, *arguments):
    return subprocess.run([pleat, "certify", *arguments, "-q"], capture_output=True, text=True, timeout=300)


def main():
    pleat, source = sys.argv[1], sys.argv[2]
    try:
        import numpy
        import sympy
    except ImportError:
        print("sympy or numpy missing: skipped")
        return SKIP
    cases = [
        ("data/ramp1d.json", 5, "savetxt"),
        ("data/fold2d.json", 6, "pandas"),
        ("data/degenerate2d.json", 12, "npy"),
        ("tests/data/zero_signal1d.json", 3, "savetxt"),
    ]
    with tempfile.TemporaryDirectory() as work:
        for relative, count, style in cases:
            network = os.path.join(source, relative)
            dimension, layers = load(network)
            points, patterns = random_points(layers, dimension, count, seed=count, scale=1)
            if relative.endswith("zero_signal1d.json"):
                points[0], patterns[0] = [Fraction(-3, 2)], pattern_at(layers, [Fraction(-3, 2)], allow_zero=True)
            rows = []
            for point, pattern in zip(points, patterns):
                rows += jacobian_rows(sympy, layers, point, pattern)
            expected = sympy_rank(rows, len(rows[0]))
            path = os.path.join(work, "points" + (".npy" if style == "npy" else ".txt"))
            write_points(numpy, path, points, style)

            result = run(pleat, network, "--points", path, "--json")
            assert result.returncode == 0, f"{relative}: exit {result.returncode}: {result.stderr}"
            document = json.loads(result.stdout)
            assert document["format"] == "pleat-batch/1"
            assert document["batch_functional_dimension"] == expected, \
                f"{relative}: pleat {document['batch_functional_dimension']}, sympy {expected}"
            assert document["regions_touched"] == len(set(patterns)), f"{relative}: regions_touched"
            assert document["regions_total"] >= document["regions_touched"]
            value = document["functional_dimension"]
            assert value is not None and value >= expected, f"{relative}: certified {value} below the batch rank"

            for claim, at_points in ((expected, "consistent"), (expected - 1, "too-low"), (expected + 1, "impossible")):
                result = run(pleat, network, "--points", path, "--claim", str(claim), "--json")
                document = json.loads(result.stdout)
                verdicts = (document["claim"]["at_points"]["verdict"], document["claim"]["verdict"])
                assert verdicts[0] == at_points, f"{relative} --claim {claim}: {verdicts}"
                against_network = "consistent" if claim == value else "too-low" if claim < value else "impossible"
                assert verdicts[1] == against_network, f"{relative} --claim {claim}: {verdicts}"
                status = 0 if verdicts == ("consistent", "consistent") else 1
                assert result.returncode == status, f"{relative} --claim {claim}: exit {result.returncode}, expected {status}"

        # A point outside --box is an error naming it (exit 2).
        ramp = os.path.join(source, "data/ramp1d.json")
        outside = os.path.join(work, "outside.csv")
        with open(outside, "w") as handle:
            handle.write("0.5\n3\n")
        result = run(pleat, ramp, "--points", outside, "--box", "-2,2")
        assert result.returncode == 2, f"outside point: exit {result.returncode}"
        assert "outside.csv:2" in result.stderr and "(3)" in result.stderr, result.stderr
    print("ok")
    return 0


if __name__ == "__main__":
    sys.exit(main())
