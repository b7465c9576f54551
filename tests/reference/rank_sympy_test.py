#!/usr/bin/python3
"""Cross-check of pleat's exact rank, kernel and coefficient blocks against sympy.

Usage: rank_sympy_test.py PLEAT_BINARY SOURCE_DIR (the ctest convention).

Outside source: sympy (Debian python3-sympy), used two ways:
  - sympy.polys.matrices.DomainMatrix over QQ for exact rank, nullspace and
    rref (fast, exact; sympy's Matrix.rank is too slow for this);
  - sympy symbolic differentiation for the coefficient blocks: F on a fixed
    pattern is written out with one symbol per parameter, A and c are read
    off, and d/dtheta is taken by sympy, then evaluated at theta.
The C++ side runs through tests/reference/rank_driver (rank_driver.cpp),
found in the build tree of PLEAT_BINARY at <build>/tests/reference/, or at
$PLEAT_RANK_DRIVER. Exit 77 (skip) when sympy or the driver is missing.
"""
import json
import os
import random
import subprocess
import sys
import tempfile
from fractions import Fraction

SKIP = 77


def find_driver(pleat_binary):
    if os.environ.get("PLEAT_RANK_DRIVER"):
        return os.environ["PLEAT_RANK_DRIVER"]
    build_root = os.path.dirname(os.path.dirname(os.path.abspath(pleat_binary)))
    return os.path.join(build_root, "tests", "reference", "rank_driver")


def fraction_text(value):
    value = Fraction(value)
    return str(value.numerator) if value.denominator == 1 else f"{value.numerator}/{value.denominator}"


def run_driver(driver, requests):
    """Sends all requests at once; returns one list of lines per request."""
    result = subprocess.run([driver], input="".join(requests), capture_output=True, text=True, timeout=120)
    if result.returncode != 0:
        raise AssertionError(f"rank_driver failed: {result.stderr}")
    answers, current = [], []
    for line in result.stdout.splitlines():
        if line == "end":
            answers.append(current)
            current = []
        else:
            current.append(line)
    if len(answers) != len(requests):
        raise AssertionError(f"expected {len(requests)} answers, got {len(answers)}")
    return answers


def parse_rows(lines, count):
    return [[Fraction(entry) for entry in line.split()] for line in lines[:count]]


def keyed(lines):
    """'key value...' lines (outside matrix bodies) as a dict of strings."""
    return {line.split()[0]: line.split()[1:] for line in lines if line and not line[0].isdigit() and line[0] != "-"}


# ---- matrices -----------------------------------------------------------------

def random_fraction(rng, bound=9, denominators=7):
    return Fraction(rng.randint(-bound, bound), rng.randint(1, denominators))


def random_matrix(rng, rows, cols, **kwargs):
    return [[random_fraction(rng, **kwargs) for _ in range(cols)] for _ in range(rows)]


def multiply(a, b):
    return [[sum(a[i][k] * b[k][j] for k in range(len(b))) for j in range(len(b[0]))] for i in range(len(a))]


def test_matrices(driver, failures):
    from sympy import QQ, Rational
    from sympy.polys.matrices import DomainMatrix

    rng = random.Random(20240501)
    cases = []
    for _ in range(25):
        rows, cols = rng.randint(1, 12), rng.randint(1, 14)
        inner = rng.randint(1, min(rows, cols))
        cases.append(multiply(random_matrix(rng, rows, inner), random_matrix(rng, inner, cols)))
    for _ in range(5):  # big entries, sparse rows, duplicated rows
        m = random_matrix(rng, rng.randint(2, 8), rng.randint(2, 10), bound=10**25, denominators=10**12)
        m.append(list(m[0]))
        m.append([Fraction(0)] * len(m[0]))
        cases.append(m)
    requests = []
    for m in cases:
        body = "".join(" ".join(fraction_text(v) for v in row) + "\n" for row in m)
        requests.append(f"matrix {len(m)} {len(m[0])}\n{body}")
    answers = run_driver(driver, requests)
    for index, (m, lines) in enumerate(zip(cases, answers)):
        cols = len(m[0])
        reference = DomainMatrix([[QQ(v.numerator, v.denominator) for v in row] for row in m], (len(m), cols), QQ)
        sympy_rank = reference.rank()
        values = keyed(lines)
        ours = int(values["rank_exact"][0])
        naive = int(values["rank_naive"][0])
        if ours != sympy_rank or naive != sympy_rank:
            failures.append(f"matrix {index}: rank_exact {ours}, naive {naive}, sympy {sympy_rank}")
        if values["rank_mod"][0] != "none" and int(values["rank_mod"][0]) > sympy_rank:
            failures.append(f"matrix {index}: modular rank {values['rank_mod'][0]} exceeds {sympy_rank}")
        kernel_start = next(i for i, line in enumerate(lines) if line.startswith("kernel "))
        kernel_count = int(lines[kernel_start].split()[1])
        kernel = parse_rows(lines[kernel_start + 1:], kernel_count)
        if kernel_count != cols - sympy_rank:
            failures.append(f"matrix {index}: kernel has {kernel_count} rows, expected {cols - sympy_rank}")
            continue
        for v in kernel:
            if any(sum(row[j] * v[j] for j in range(cols)) != 0 for row in m):
                failures.append(f"matrix {index}: a kernel row does not annihilate M")
        # Canonical form: the rref of sympy's own nullspace basis.
        if kernel_count:
            basis = reference.nullspace()
            canonical = basis.rref()[0].to_Matrix()
            expected = [[Fraction(int(Rational(canonical[i, j]).p), int(Rational(canonical[i, j]).q))
                         for j in range(cols)] for i in range(kernel_count)]
            if expected != kernel:
                failures.append(f"matrix {index}: kernel basis differs from the rref of sympy's nullspace")
    return len(cases)


# ---- networks and coefficient blocks -----------------------------------------

def random_network(rng, widths, output_relu):
    layers = []
    for k in range(1, len(widths)):
        weights = [[random_fraction(rng) for _ in range(widths[k - 1])] for _ in range(widths[k])]
        bias = [random_fraction(rng) or Fraction(1, 2) for _ in range(widths[k])]
        layer = {"weights": [[fraction_text(v) for v in row] for row in weights],
                 "bias": [fraction_text(v) for v in bias]}
        if k == len(widths) - 1:
            layer["activation"] = "relu" if output_relu else "linear"
        layers.append(layer)
    return {"format": "pleat-network/1", "input_dim": widths[0], "layers": layers}


def symbolic_blocks(network, states, force_on=None):
    """Coefficient blocks by sympy differentiation (rows as in core/jacobian.hpp).

    states: one of '0', '1', 'z' per ReLU neuron. force_on: a neuron id to
    treat as on (for the backward signal of a 'z' neuron). Returns (blocks,
    symbols, values) with blocks a list of rows of Fractions."""
    import sympy

    n0 = network["input_dim"]
    x = sympy.symbols(f"x0:{n0}")
    theta, values = [], {}
    y = list(x)
    neuron = 0
    layers = network["layers"]
    for k, layer in enumerate(layers):
        rows, cols = len(layer["weights"]), len(layer["weights"][0])
        w = [[sympy.Symbol(f"W{k + 1}_{i}_{j}") for j in range(cols)] for i in range(rows)]
        b = [sympy.Symbol(f"b{k + 1}_{i}") for i in range(rows)]
        for i in range(rows):
            for j in range(cols):
                theta.append(w[i][j])
                values[w[i][j]] = sympy.Rational(layer["weights"][i][j])
        for i in range(rows):
            theta.append(b[i])
            values[b[i]] = sympy.Rational(layer["bias"][i])
        z = [sum(w[i][j] * y[j] for j in range(cols)) + b[i] for i in range(rows)]
        is_relu = k + 1 < len(layers) or layer.get("activation") == "relu"
        if is_relu:
            y = []
            for i in range(rows):
                passes = states[neuron] == "1" or neuron == force_on
                y.append(z[i] if passes else sympy.Integer(0))
                neuron += 1
        else:
            y = z
    blocks = []
    zero = {symbol: 0 for symbol in x}
    for output in y:
        output = sympy.expand(output)
        coefficients = [output.subs(zero)] + [sympy.diff(output, x[t]) for t in range(n0)]
        for expression in coefficients:
            row = []
            for parameter in theta:
                value = sympy.Rational(sympy.diff(expression, parameter).subs(values))
                row.append(Fraction(int(value.p), int(value.q)))
            blocks.append(row)
    return blocks, theta, values


def bias_column(network, neuron):
    """Column index of the bias of ReLU neuron `neuron` in the parameter order."""
    offset = 0
    for layer in network["layers"]:
        rows, cols = len(layer["weights"]), len(layer["weights"][0])
        if neuron < rows:
            return offset + rows * cols + neuron
        neuron -= rows
        offset += rows * cols + rows
    raise ValueError("no such neuron")


def test_networks(driver, failures, directory):
    from sympy import QQ
    from sympy.polys.matrices import DomainMatrix

    rng = random.Random(77)
    shapes = [([2, 3, 1], False), ([2, 3, 2, 2], False), ([1, 2, 2, 1], False),
              ([3, 2, 2], True), ([2, 2, 2, 1], True)]
    cases = []
    for index, (widths, output_relu) in enumerate(shapes):
        network = random_network(rng, widths, output_relu)
        path = os.path.join(directory, f"network{index}.json")
        with open(path, "w") as handle:
            json.dump(network, handle)
        relu_widths = widths[1:] if output_relu else widths[1:-1]
        for trial in range(3):
            alphabet = "01z" if trial == 2 else "01"
            groups = ["".join(rng.choice(alphabet) for _ in range(w)) for w in relu_widths]
            cases.append((network, path, "|".join(groups)))
    answers = run_driver(driver, [f"blocks {path} {pattern}\n" for _, path, pattern in cases])
    nonsmooth_seen = 0
    for (network, path, pattern), lines in zip(cases, answers):
        rows, cols = map(int, lines[0].split()[1:])
        ours = parse_rows(lines[1:], rows)
        values = keyed(lines[1 + rows:])
        states = pattern.replace("|", "")
        expected, theta, _ = symbolic_blocks(network, states)
        if expected != ours:
            failures.append(f"{pattern} on {path}: coefficient blocks differ from sympy's derivatives")
        reference = DomainMatrix([[QQ(v.numerator, v.denominator) for v in row] for row in ours], (rows, cols), QQ)
        sympy_rank = reference.rank()
        if int(values["rank_exact"][0]) != sympy_rank:
            failures.append(f"{pattern} on {path}: rank_exact {values['rank_exact'][0]}, sympy {sympy_rank}")
        if int(values["rank_mod"][0]) > sympy_rank:
            failures.append(f"{pattern} on {path}: modular rank exceeds the exact rank")
        # Non-smooth rule: a 'z' neuron whose backward signal (dF/db of that
        # neuron with it forced on, constant on the region) is nonzero.
        expected_nonsmooth = []
        for neuron, state in enumerate(states):
            if state != "z":
                continue
            forced, _, _ = symbolic_blocks(network, states, force_on=neuron)
            column = bias_column(network, neuron)
            n0 = network["input_dim"]
            if any(forced[o * (n0 + 1)][column] != 0 for o in range(len(forced) // (n0 + 1))):
                expected_nonsmooth.append(neuron)
        nonsmooth_seen += bool(expected_nonsmooth)
        if [int(v) for v in values["nonsmooth"]] != expected_nonsmooth:
            failures.append(f"{pattern} on {path}: nonsmooth {values['nonsmooth']}, sympy {expected_nonsmooth}")
        # Scaling directions annihilate every row; the bound is D - their rank.
        scaling_start = next(i for i, line in enumerate(lines) if line.startswith("scaling "))
        scaling = parse_rows(lines[scaling_start + 1:], int(lines[scaling_start].split()[1]))
        for v in scaling:
            if any(sum(row[j] * v[j] for j in range(cols)) != 0 for row in ours):
                failures.append(f"{pattern} on {path}: a scaling direction does not annihilate the blocks")
        scaling_rank = DomainMatrix([[QQ(e.numerator, e.denominator) for e in row] for row in scaling],
                                    (len(scaling), cols), QQ).rank() if scaling else 0
        if int(values["scaling_bound"][0]) != cols - scaling_rank or len(theta) != cols:
            failures.append(f"{path}: scaling bound {values['scaling_bound'][0]}, expected {cols - scaling_rank}")
    if nonsmooth_seen == 0:
        failures.append("no pattern exercised the non-smooth rule (change the seed)")
    return len(cases)


def main():
    if len(sys.argv) < 3:
        print("usage: rank_sympy_test.py PLEAT_BINARY SOURCE_DIR", file=sys.stderr)
        return 2
    try:
        import sympy  # noqa: F401
        from sympy.polys.matrices import DomainMatrix  # noqa: F401
    except ImportError:
        print("skip: sympy (python3-sympy) is not installed")
        return SKIP
    driver = find_driver(sys.argv[1])
    if not os.access(driver, os.X_OK):
        print(f"skip: rank driver not built at {driver} (tests/CMakeLists.txt needs add_subdirectory(reference))")
        return SKIP
    failures = []
    matrices = test_matrices(driver, failures)
    with tempfile.TemporaryDirectory() as directory:
        patterns = test_networks(driver, failures, directory)
    for failure in failures:
        print("FAIL:", failure)
    print(f"checked {matrices} matrices and {patterns} network patterns against sympy: "
          f"{'ok' if not failures else f'{len(failures)} failures'}")
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
