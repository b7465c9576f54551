"""Independent exact reference for the walk tests (not a test itself).

Everything here uses Python's `fractions` only (standard library), never
pleat's lp/ code: the network is read from its literal number text, forward
passes are exact, and whether an open polyhedron {x : a_i . x + b_i > 0} is
non-empty is decided by Fourier-Motzkin elimination (exact for strict and
non-strict inequalities: x_v exists between every lower and every upper bound
iff each lower bound is below each upper bound), with a back-substituted
witness point that is then re-checked against the original rows.
"""
import json
import math
import subprocess
from fractions import Fraction


# ---------------------------------------------------------------- networks

class Network:
    """Layers as lists of Fraction rows; `relu` flags per layer."""

    def __init__(self, input_dim, layers):
        self.input_dim = input_dim
        self.layers = layers  # list of (weights rows, bias, is_relu)

    @property
    def relu_layer_widths(self):
        return [len(bias) for _, bias, is_relu in self.layers if is_relu]

    @property
    def relu_neurons(self):
        return sum(self.relu_layer_widths)


def read_network(path):
    with open(path) as handle:
        doc = json.load(handle, parse_float=Fraction, parse_int=Fraction)
    layers = []
    for k, layer in enumerate(doc["layers"]):
        weights = [[Fraction(str(v)) if not isinstance(v, Fraction) else v for v in row] for row in layer["weights"]]
        bias = [Fraction(str(v)) if not isinstance(v, Fraction) else v for v in layer["bias"]]
        is_last = k + 1 == len(doc["layers"])
        activation = layer.get("activation", "linear" if is_last else "relu")
        layers.append((weights, bias, activation == "relu"))
    return Network(int(doc["input_dim"]), layers)


def format_pattern(groups):
    """groups: list of per-layer strings of '0', '1', 'z'."""
    return "|".join(groups)


def pattern_groups(pattern):
    return pattern.split("|")


def forward_exact(network, x):
    """Exact output, the per-layer pre-activations and the pattern at x ('=' where zero)."""
    y = list(x)
    pre_all, groups = [], []
    for weights, bias, is_relu in network.layers:
        z = [sum((w * v for w, v in zip(row, y)), Fraction(0)) + b for row, b in zip(weights, bias)]
        pre_all.append(z)
        if is_relu:
            groups.append("".join("1" if v > 0 else "0" if v < 0 else "=" for v in z))
            y = [max(v, Fraction(0)) for v in z]
        else:
            y = z
    return y, pre_all, "|".join(groups)


def affine_on_pattern(network, pattern):
    """The network's output on a pattern's cell as (A rows, c), exact, and the
    pre-activation affine maps [(rows, offsets)] of every ReLU layer."""
    n = network.input_dim
    groups = pattern_groups(pattern)
    matrix = [[Fraction(int(i == j)) for j in range(n)] for i in range(n)]  # y = M x + v
    vector = [Fraction(0)] * n
    pre_maps = []
    relu_index = 0
    for weights, bias, is_relu in network.layers:
        rows = [[sum((w * matrix[t][j] for t, w in enumerate(row)), Fraction(0)) for j in range(n)] for row in weights]
        offsets = [sum((w * vector[t] for t, w in enumerate(row)), Fraction(0)) + b for row, b in zip(weights, bias)]
        if is_relu:
            pre_maps.append((rows, offsets))
            states = groups[relu_index]
            relu_index += 1
            rows = [row if s == "1" else [Fraction(0)] * n for row, s in zip(rows, states)]
            offsets = [o if s == "1" else Fraction(0) for o, s in zip(offsets, states)]
        matrix, vector = rows, offsets
    return (matrix, vector), pre_maps


# ------------------------------------------------ exact Fourier-Motzkin

def _integer_row(row):
    """A row (a_1..a_n, b, strict) of Fractions scaled by a positive factor to
    coprime integers (integer arithmetic keeps the elimination fast)."""
    values, strict = row[:-1], row[-1]
    common = 1
    for v in values:
        common = common * v.denominator // math.gcd(common, v.denominator)
    integers = [int(v * common) for v in values]
    return _primitive(integers, strict)


def _primitive(integers, strict):
    divisor = 0
    for v in integers:
        divisor = math.gcd(divisor, v)
    if divisor > 1:
        integers = [v // divisor for v in integers]
    return tuple(integers) + (strict,)


def fm_witness(rows, n):
    """A point x with a.x + b > 0 (strict rows) or >= 0 (non-strict) for
    every row (a_1..a_n, b, strict), or None when there is none. Exact."""
    levels = []
    current = []
    for r in {_integer_row(tuple(Fraction(v) for v in r[:-1]) + (r[-1],)) for r in rows}:
        if all(c == 0 for c in r[:n]):
            if r[n] < 0 or (r[n] == 0 and r[-1]):
                return None
        else:
            current.append(r)
    for var in reversed(range(n)):
        levels.append(current)
        lower, upper, rest = [], [], []
        for r in current:
            (lower if r[var] > 0 else upper if r[var] < 0 else rest).append(r)
        new_rows = set(rest)
        for lo in lower:
            a = lo[var]
            for up in upper:
                b = -up[var]
                combined = [b * p + a * q for p, q in zip(lo[:var], up[:var])]
                combined.append(b * lo[n] + a * up[n])
                combined = _primitive(combined, lo[-1] or up[-1])
                new_rows.add(combined[:var] + (0,) * (n - var) + combined[var:])
        current = []
        for r in new_rows:
            if all(c == 0 for c in r[:var]):  # constant rows decide at once
                if r[n] < 0 or (r[n] == 0 and r[-1]):
                    return None
            else:
                current.append(r)
    # Back-substitute: variable v from the rows that existed before it was eliminated.
    point = [Fraction(0)] * n
    for var in range(n):
        lo, lo_strict, hi, hi_strict = None, False, None, False
        for r in levels[n - 1 - var]:
            c = r[var]
            if c == 0:
                continue
            rest = sum((r[j] * point[j] for j in range(var)), Fraction(0)) + r[n]
            bound = -rest / c
            if c > 0 and (lo is None or bound > lo or (bound == lo and r[-1])):
                lo, lo_strict = bound, r[-1]
            if c < 0 and (hi is None or bound < hi or (bound == hi and r[-1])):
                hi, hi_strict = bound, r[-1]
        if lo is None and hi is None:
            value = Fraction(0)
        elif lo is None:
            value = hi - 1 if hi_strict else hi
        elif hi is None:
            value = lo + 1 if lo_strict else lo
        else:
            value = (lo + hi) / 2
        point[var] = value
    for r in rows:
        value = sum((Fraction(a) * x for a, x in zip(r[:n], point)), Fraction(0)) + Fraction(r[n])
        if value < 0 or (value == 0 and r[-1]):
            raise AssertionError(f"Fourier-Motzkin witness {point} violates row {r}: self-check failed")
    return point


def open_cell_witness(rows, n):
    """rows: (a_1..a_n, b); a point with every a.x + b > 0, or None."""
    return fm_witness([tuple(r) + (True,) for r in rows], n)


def is_cell_bounded(rows, n):
    """Whether {x : a.x + b > 0} (assumed non-empty) is bounded: its recession
    cone {d : a.d >= 0} is {0}. Decided by 2n exact feasibility problems."""
    cone = [tuple(r[:n]) + (Fraction(0), False) for r in rows]
    for j in range(n):
        for sign in (1, -1):
            unit = tuple(Fraction(sign if i == j else 0) for i in range(n)) + (Fraction(-1), False)
            if fm_witness(cone + [unit], n) is not None:
                return False
    return True


def box_rows(n, lo, hi):
    rows = []
    for i in range(n):
        e = [Fraction(int(i == j)) for j in range(n)]
        rows.append(tuple(e) + (-Fraction(lo),))
        rows.append(tuple(-v for v in e) + (Fraction(hi),))
    return rows


# ------------------------------------------------ brute-force enumeration

def brute_force_patterns(network, domain_rows=()):
    """Every pattern whose cell has non-empty interior (inside the open domain
    given by domain_rows), with a witness point each. Decides each neuron's
    two signs depth first; a prefix with an empty cell is not extended (its
    extensions are empty too), which is the same as deciding all 2^N sign
    patterns. A neuron whose pre-activation is identically zero on a prefix
    cell gets the single state 'z' (the spec's notation) and no constraint."""
    n = network.input_dim
    relu_layers = [k for k, layer in enumerate(network.layers) if layer[2]]
    found = {}

    def layer_pre(k, matrix, vector):
        weights, bias, _ = network.layers[k]
        rows = [[sum((w * matrix[t][j] for t, w in enumerate(row)), Fraction(0)) for j in range(n)] for row in weights]
        offsets = [sum((w * vector[t] for t, w in enumerate(row)), Fraction(0)) + b for row, b in zip(weights, bias)]
        return rows, offsets

    def recurse_layer(index, matrix, vector, groups, rows, witness):
        if index == len(relu_layers):
            found["|".join(groups)] = witness
            return
        pre_rows, pre_offsets = layer_pre(relu_layers[index], matrix, vector)

        def recurse_neuron(j, states, rows, witness):
            if j == len(pre_offsets):
                new_matrix = [r if s == "1" else [Fraction(0)] * n for r, s in zip(pre_rows, states)]
                new_vector = [o if s == "1" else Fraction(0) for o, s in zip(pre_offsets, states)]
                recurse_layer(index + 1, new_matrix, new_vector, groups + ["".join(states)], rows, witness)
                return
            a, b = pre_rows[j], pre_offsets[j]
            if all(v == 0 for v in a) and b == 0:
                recurse_neuron(j + 1, states + ["z"], rows, witness)
                return
            value = sum((p * q for p, q in zip(a, witness)), Fraction(0)) + b
            for sign, state in ((1, "1"), (-1, "0")):
                row = tuple(sign * v for v in a) + (sign * b,)
                child_rows = rows + [row]
                if sign * value > 0:
                    child_witness = witness  # the parent's witness already lies in this child
                else:
                    child_witness = open_cell_witness(child_rows, n)
                    if child_witness is None:
                        continue
                recurse_neuron(j + 1, states + [state], child_rows, child_witness)

        recurse_neuron(0, [], rows, witness)

    identity = [[Fraction(int(i == j)) for j in range(n)] for i in range(n)]
    start = open_cell_witness(list(domain_rows), n)
    if start is None:
        raise ValueError("empty domain")
    recurse_layer(0, identity, [Fraction(0)] * n, [], list(domain_rows), start)
    return found


def cell_rows(network, pattern):
    """The strict rows s * z_j(x) > 0 of a pattern's cell (none for 'z' neurons
    and for constant rows that hold), using the pattern's own affine maps."""
    n = network.input_dim
    _, pre_maps = affine_on_pattern(network, pattern)
    states = pattern.replace("|", "")
    rows, index = [], 0
    for layer_rows, offsets in pre_maps:
        for a, b in zip(layer_rows, offsets):
            s = states[index]
            index += 1
            if s == "z":
                continue
            sign = 1 if s == "1" else -1
            rows.append(tuple(sign * v for v in a) + (sign * b,))
    return rows


# ------------------------------------------------ running pleat

def run_pleat(pleat, *arguments, timeout=120):
    result = subprocess.run([pleat, *arguments], capture_output=True, text=True, timeout=timeout)
    if result.returncode != 0:
        raise RuntimeError(f"pleat {' '.join(arguments)}: exit {result.returncode}: {result.stderr.strip()}")
    return result.stdout


def walk_json(pleat, path, *options):
    return json.loads(run_pleat(pleat, "walk", path, "--json", "--patterns", "--quiet", *options))


def make_random(pleat, arch, seed, path, *options):
    run_pleat(pleat, "random", "--arch", arch, "--seed", str(seed), "-o", path, *options)
    return path


def read_region_lines(path):
    with open(path) as handle:
        lines = [json.loads(line) for line in handle if line.strip()]
    return lines[0], lines[1:]
