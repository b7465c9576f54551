#!/usr/bin/python3
"""A plain pure-Python exact walk, the yardstick of `pleat walk`'s speed (a benchmark,
not a test): Python's `fractions` and a textbook simplex (dictionary form, Bland's rule,
the auxiliary-variable start for infeasible origins), nothing else.

The same walk as pleat's on a network in general position (random `pleat random` nets):
breadth-first from the region at the origin over all of R^n0; per region the cell's
constraints from the pattern's exact maps (tests/reference/walk_reference.py), one LP for
an interior point, one LP per constraint to decide whether it is a facet (maximise t with
that constraint = 0 and every other >= t), and each facet crossed by flipping its neurons
(in general position no other neuron vanishes at the facet point; that is checked).

Usage: walk_python.py NETWORK.json [TIME_LIMIT_SECONDS]
Prints one JSON line: {"regions": N, "seconds": S, "cpu_seconds": C, "complete": bool}.
"""
import json
import os
import sys
import time
from fractions import Fraction

sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "reference"))
import walk_reference as ref  # noqa: E402

ZERO = Fraction(0)
ONE = Fraction(1)


def simplex_max(c, rows, rhs):
    """maximise c.z subject to rows[i].z <= rhs[i], z >= 0 (textbook dictionary simplex,
    Bland's rule; phase one with one auxiliary variable when the origin is infeasible).
    Returns (value, z) or None when infeasible; raises on an unbounded objective."""
    m, n = len(rows), len(c)
    # Dictionary: basic_i = b_i - sum_j d[i][j] * nonbasic_j; objective = v + sum_j e_j * nonbasic_j.
    nonbasic = list(range(n))
    basic = list(range(n, n + m))
    d = [list(r) for r in rows]
    b = list(rhs)

    def pivot(r, s, e, v):
        a = d[r][s]
        row = [x / a for x in d[r]]
        row[s] = ONE / a
        br = b[r] / a
        for i in range(m):
            if i == r or d[i][s] == 0:
                continue
            f = d[i][s]
            di = d[i]
            for j in range(len(row)):
                di[j] -= f * row[j]
            di[s] = -f * row[s]
            b[i] -= f * br
        d[r], b[r] = row, br
        f = e[s]
        for j in range(len(row)):
            e[j] -= f * row[j]
        e[s] = -f * row[s]
        v += f * br
        basic[r], nonbasic[s] = nonbasic[s], basic[r]
        return v

    def optimise(e, v):
        while True:
            entering = [j for j in range(len(e)) if e[j] > 0]
            if not entering:
                return v
            s = min(entering, key=lambda j: nonbasic[j])
            best = None
            for i in range(m):
                if d[i][s] > 0:
                    ratio = b[i] / d[i][s]
                    if best is None or ratio < best[0] or (ratio == best[0] and basic[i] < basic[best[1]]):
                        best = (ratio, i)
            if best is None:
                raise ArithmeticError("unbounded LP")
            v = pivot(best[1], s, e, v)

    if m and min(b) < 0:
        aux = n + m  # the auxiliary variable x0: rows become rows.z - x0 <= rhs
        for r in d:
            r.append(-ONE)
        nonbasic.append(aux)
        e = [ZERO] * n + [-ONE]
        v = pivot(min(range(m), key=lambda i: b[i]), n, e, ZERO)
        v = optimise(e, v)
        if v < 0:
            return None
        if aux in basic:  # degenerate: pivot it out on any nonzero column
            r = basic.index(aux)
            s = next(j for j in range(len(nonbasic)) if d[r][j] != 0)
            pivot(r, s, [ZERO] * len(nonbasic), ZERO)
        s = nonbasic.index(aux)
        for r in d:
            del r[s]
        del nonbasic[s]
    # Express the objective in the current nonbasic variables.
    e = [ZERO] * len(nonbasic)
    v = ZERO
    for j, var in enumerate(nonbasic):
        if var < n:
            e[j] += c[var]
    for i, var in enumerate(basic):
        if var < n and c[var] != 0:
            v += c[var] * b[i]
            for j in range(len(nonbasic)):
                e[j] -= c[var] * d[i][j]
    v = optimise(e, v)
    z = [ZERO] * n
    for i, var in enumerate(basic):
        if var < n:
            z[var] = b[i]
    return v, z


def max_margin(cell, n, equal=None):
    """maximise t <= 1 with a_i.x + b_i >= t for every row (i != equal) and
    a_equal.x + b_equal = 0; x free (x = p - q). Returns (t, x) or None."""
    c = [ZERO] * (2 * n) + [ONE]
    rows, rhs = [], []
    for i, r in enumerate(cell):
        a, off = r[:n], r[n]
        if i == equal:
            rows.append(list(a) + [-v for v in a] + [ZERO])
            rhs.append(-off)
            rows.append([-v for v in a] + list(a) + [ZERO])
            rhs.append(off)
        else:  # -a.x + t <= b
            rows.append([-v for v in a] + list(a) + [ONE])
            rhs.append(off)
    rows.append([ZERO] * (2 * n) + [ONE])
    rhs.append(ONE)
    result = simplex_max(c, rows, rhs)
    if result is None:
        return None
    t, z = result
    return t, [z[k] - z[n + k] for k in range(n)]


def pattern_rows(network, pattern):
    """The cell's rows with the neuron index of each (general position: no 'z', no constants)."""
    n = network.input_dim
    _, pre_maps = ref.affine_on_pattern(network, pattern)
    states = pattern.replace("|", "")
    rows, neurons, index = [], [], 0
    for layer_rows, offsets in pre_maps:
        for a, off in zip(layer_rows, offsets):
            s = states[index]
            sign = 1 if s == "1" else -1
            if any(v != 0 for v in a):
                rows.append(tuple(sign * v for v in a) + (sign * off,))
                neurons.append(index)
            elif s == "z" or sign * off <= 0:
                raise ValueError(f"{pattern}: not in general position")
            index += 1
    return rows, neurons


def flip(pattern, neurons):
    chars = list(pattern)
    positions = [i for i, ch in enumerate(chars) if ch != "|"]
    for neuron in neurons:
        p = positions[neuron]
        chars[p] = "0" if chars[p] == "1" else "1"
    return "".join(chars)


def walk(network, time_limit):
    n = network.input_dim
    started = time.monotonic()
    cpu_started = time.process_time()
    start = [Fraction(1, 7 + k) for k in range(n)]  # off the bent hyperplanes of a random net
    _, _, first = ref.forward_exact(network, start)
    if "=" in first:
        raise ValueError("start point on a bent hyperplane")
    seen, level, regions = {first}, [first], 0
    while level:
        next_level = []
        for pattern in level:
            if time_limit and time.monotonic() - started > time_limit:
                return regions, time.monotonic() - started, time.process_time() - cpu_started, False
            cell, neurons = pattern_rows(network, pattern)
            centre = max_margin(cell, n)
            if centre is None or centre[0] <= 0:
                raise ValueError(f"{pattern}: empty cell")
            regions += 1
            for j in range(len(cell)):
                result = max_margin(cell, n, equal=j)
                if result is None or result[0] <= 0:
                    continue  # not a facet
                q = result[1]
                _, pre, at_q = ref.forward_exact(network, q)
                zero = [i for i, ch in enumerate(at_q.replace("|", "")) if ch == "="]
                if zero != [neurons[j]]:
                    raise ValueError(f"{pattern}: degenerate crossing at {q}")
                neighbor = flip(pattern, zero)
                if neighbor not in seen:
                    seen.add(neighbor)
                    next_level.append(neighbor)
        level = sorted(next_level)
    return regions, time.monotonic() - started, time.process_time() - cpu_started, True


def main():
    network = ref.read_network(sys.argv[1])
    limit = float(sys.argv[2]) if len(sys.argv) > 2 else 0.0
    regions, seconds, cpu_seconds, complete = walk(network, limit)
    print(json.dumps({"regions": regions, "seconds": round(seconds, 3), "cpu_seconds": round(cpu_seconds, 3),
                      "complete": complete}))


if __name__ == "__main__":
    main()
