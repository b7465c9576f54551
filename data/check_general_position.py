#!/usr/bin/env python3
"""Exact general-position check for the 2-input example networks in data/.

Usage: data/check_general_position.py data/fold2d.json

With Python's fractions module only (no floating point in the decision):
takes the affine piece of every ReLU neuron under every on/off pattern of the
layers below, intersects every pair of pieces, and reports any point where
three or more pre-activations vanish at once (a coincidence of bent lines),
any neuron that never changes sign on a random sample of (-30, 30)^2, parallel
first-layer neurons, and the exact pattern and output at (1/2, -1/3), the
demo point. Intended for networks with two ReLU layers of a few neurons.
"""
import json, sys, itertools
from fractions import Fraction as F
def load(path):
    d = json.load(open(path), parse_float=str, parse_int=str)
    L = []
    for i, l in enumerate(d["layers"]):
        W = [[F(x) for x in row] for row in l["weights"]]
        b = [F(x) for x in l["bias"]]
        act = l.get("activation", "relu" if i + 1 < len(d["layers"]) else "linear")
        L.append((W, b, act))
    return int(d["input_dim"]), L
def preacts(L, x):
    out = []
    h = x
    for W, b, act in L:
        z = [sum(w*v for w, v in zip(row, h)) + bb for row, bb in zip(W, b)]
        if act == "relu":
            out.extend(z); h = [max(v, 0) for v in z]
        else:
            h = z
    return out, h
def pieces(L, n0):
    # affine pieces (A row, c) of every relu neuron for every on/off pattern of the layers below
    relu_layers = [l for l in L if l[2] == "relu"]
    result = []  # (neuron id, a, c)
    # walk patterns layer by layer
    maps = [([[F(int(i == j)) for j in range(n0)] for i in range(n0)], [F(0)] * n0)]
    nid = 0
    for W, b, act in relu_layers:
        new_maps = []
        for A, c in maps:
            Z = [[sum(W[i][k] * A[k][j] for k in range(len(A))) for j in range(n0)] for i in range(len(W))]
            zc = [sum(W[i][k] * c[k] for k in range(len(c))) + b[i] for i in range(len(W))]
            for i in range(len(W)):
                result.append((nid + i, Z[i], zc[i]))
            for s in itertools.product([0, 1], repeat=len(W)):
                new_maps.append(([Z[i] if s[i] else [F(0)] * n0 for i in range(len(W))], [zc[i] if s[i] else F(0) for i in range(len(W))]))
        nid += len(W)
        maps = new_maps
        if len(maps) > 5000: break
    return result
def check2d(path, extra_points=()):
    n0, L = load(path)
    assert n0 == 2
    P = pieces(L, 2)
    uniq = {}
    for nid, a, c in P:
        if a[0] == 0 and a[1] == 0: continue
        uniq[(nid, tuple(a), c)] = (a, c)
    lines = list(uniq.values())
    print(path, "pieces", len(lines))
    bad = 0
    pts = set()
    for (a1, c1), (a2, c2) in itertools.combinations(lines, 2):
        det = a1[0] * a2[1] - a1[1] * a2[0]
        if det == 0: continue
        x = (-c1 * a2[1] + c2 * a1[1]) / det
        y = (-a1[0] * c2 + a2[0] * c1) / det
        pts.add((x, y))
    nrelu = len(preacts(L, [F(0), F(0)])[0])
    signs = [set() for _ in range(nrelu)]
    for p in pts:
        z, _ = preacts(L, list(p))
        zeros = [i for i, v in enumerate(z) if v == 0]
        if len(zeros) >= 3:
            bad += 1; print("  triple point", p, zeros)
    import random
    rng = random.Random(1)
    for _ in range(20000):
        p = [F(rng.uniform(-30, 30)).limit_denominator(1000), F(rng.uniform(-30, 30)).limit_denominator(1000)]
        z, _ = preacts(L, p)
        for i, v in enumerate(z): signs[i].add((v > 0) - (v < 0))
    for i, s in enumerate(signs):
        if not ({1, -1} <= s): print("  neuron", i, "never changes sign in the sample box", s); bad += 1
    for p in extra_points:
        z, out = preacts(L, p)
        zeros = [i for i, v in enumerate(z) if v == 0]
        print("  at", p, "pattern", "".join("1" if v > 0 else "0" if v < 0 else "=" for v in z), "output", out)
        if zeros: print("  on a bent line", zeros); bad += 1
    # duplicated or parallel first-layer lines
    W1, b1, _ = L[0]
    for i, j in itertools.combinations(range(len(W1)), 2):
        if W1[i][0] * W1[j][1] == W1[i][1] * W1[j][0]: print("  parallel first-layer neurons", i, j); bad += 1
    print("  generic" if bad == 0 else f"  {bad} problems")
    return bad
if __name__ == "__main__":
    check2d(sys.argv[1], [[F(1, 2), F(-1, 3)]])
