#!/usr/bin/env python3
"""Degenerate networks: the walk against the exact brute force, 'z' states included.

Outside source: Python's `fractions` and the brute force of walk_reference.py
(no pleat code), which decides every sign pattern exactly and gives a neuron
the single state 'z' when its pre-activation is identically zero on a prefix
cell (the spec's pattern notation). Checked on

- every hand-built network in tests/data/ (coincident, parallel and concurrent
  hyperplanes, dead and always-active neurons, second-layer bends on
  first-layer hyperplanes, all-zero neurons, a ReLU output layer, a 1e-20
  sliver, repeated rows that once made GLPK abort);
- 40 random networks with weights in {-2,...,2} and biases in {-1,0,1}
  (fixed seed), full of coincidences and 'z' states, on R^n and on a box.

For each: the walk's patterns equal the brute force's; regions_per_layer
equals the brute force's distinct prefixes; the non-smooth regions are
exactly the patterns with a 'z' neuron whose backward signal (e_j pushed
through the later layers with the pattern's 0/1 masks, 'z' counted as 0) is
nonzero, naming exactly those neurons (spec, pattern notation). For 2-D
networks the saved walk on the box (-3,3)^2 must also pass the exact tiling
checks of walk_tiling_test.py (areas, mutual neighbours, Euler, facet edges).

Usage: walk_degenerate_test.py PLEAT_BINARY SOURCE_DIR  (exit 77 = skipped)
"""
import json
import os
import random
import sys
import tempfile
from fractions import Fraction

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import walk_reference as ref  # noqa: E402
import walk_tiling_test as tiling  # noqa: E402  (exits 77 itself without numpy)

pleat, source_dir = sys.argv[1], sys.argv[2]


def nonsmooth_neurons(network, pattern):
    """Neurons in state 'z' whose backward signal to the output is nonzero."""
    groups = pattern.split("|")
    relu_layers = [k for k, layer in enumerate(network.layers) if layer[2]]
    found, first = [], 0
    for index, k in enumerate(relu_layers):
        for j, state in enumerate(groups[index]):
            if state != "z":
                continue
            signal = [Fraction(int(i == j)) for i in range(len(groups[index]))]
            for later in range(k + 1, len(network.layers)):
                weights, _, is_relu = network.layers[later]
                signal = [sum((w * s for w, s in zip(row, signal)), Fraction(0)) for row in weights]
                if is_relu:
                    mask = groups[relu_layers.index(later)]
                    signal = [s if m == "1" else Fraction(0) for s, m in zip(signal, mask)]
            if any(s != 0 for s in signal):
                found.append(first + j)
        first += len(groups[index])
    return found


def check(name, path, failures, box=None):
    network = ref.read_network(path)
    n = network.input_dim
    domain_rows = ref.box_rows(n, *box) if box else []
    brute = ref.brute_force_patterns(network, domain_rows)
    options = [f"--box={box[0]},{box[1]}"] if box else []
    walk = ref.walk_json(pleat, path, *options)
    label = name + (f" --box {box[0]},{box[1]}" if box else "")
    if not walk["certified"]:
        failures.append(f"{label}: walk not certified")
    missing = sorted(set(brute) - set(walk["patterns"]))
    extra = sorted(set(walk["patterns"]) - set(brute))
    if missing or extra:
        failures.append(f"{label}: walk misses {missing[:6]} (witnesses "
                        f"{[[str(v) for v in brute[p]] for p in missing[:3]]}), lists empty cells {extra[:6]}")
    prefixes = [len({"|".join(p.split("|")[:k + 1]) for p in brute}) for k in range(len(walk["regions_per_layer"]))]
    if walk["regions_per_layer"] != prefixes:
        failures.append(f"{label}: regions_per_layer {walk['regions_per_layer']}, brute force {prefixes}")
    expected = {p: nonsmooth_neurons(network, p) for p in brute}
    expected = {p: v for p, v in expected.items() if v}
    got = {entry["pattern"]: entry["neurons"] for entry in walk["nonsmooth_regions"]}
    if got != expected:
        failures.append(f"{label}: nonsmooth_regions {got}, backward signals say {expected}")
    return len(brute)


def random_small_integer_network(rng):
    n = rng.choice([1, 2, 2, 2, 3])
    widths = [rng.randint(1, 4) for _ in range(rng.choice([1, 2, 3]))]
    while sum(widths) > 10:
        widths.pop()
    dims = [n] + widths + [1]
    layers = []
    for k in range(1, len(dims)):
        layer = {"weights": [[str(rng.choice([-2, -1, -1, 0, 0, 1, 1, 2])) for _ in range(dims[k - 1])]
                             for _ in range(dims[k])],
                 "bias": [str(rng.choice([-1, 0, 0, 1])) for _ in range(dims[k])]}
        if k == len(dims) - 1:
            layer["activation"] = rng.choice(["linear", "linear", "relu"])
        layers.append(layer)
    return {"format": "pleat-network/1", "input_dim": n, "layers": layers}


def main():
    failures = []
    data = os.path.join(source_dir, "tests", "data")
    names = sorted(f for f in os.listdir(data) if f.endswith(".json"))
    if len(names) < 10:
        print(f"FAIL: expected the hand-built networks in {data}, found {names}")
        return 1
    box = (Fraction(-3), Fraction(3))
    for name in names:
        path = os.path.join(data, name)
        check(name, path, failures)
        if ref.read_network(path).input_dim == 2:
            tiling.check_walk(name + " tiling", path, box, failures, general_position=False)

    rng = random.Random(20240611)
    with tempfile.TemporaryDirectory() as work:
        z_networks = 0
        for trial in range(40):
            doc = random_small_integer_network(rng)
            path = os.path.join(work, f"small_{trial}.json")
            with open(path, "w") as handle:
                json.dump(doc, handle)
            label = f"small-integer network {trial} {json.dumps(doc)}"
            with_box = trial % 3 == 0
            before = len(failures)
            check(label, path, failures, box=(Fraction(-2), Fraction(3)) if with_box else None)
            if doc["input_dim"] == 2 and trial % 2 == 0:
                tiling.check_walk(label + " tiling", path, box, failures, general_position=False)
            if len(failures) == before and any("z" in p for p in ref.walk_json(pleat, path)["patterns"]):
                z_networks += 1
    print(f"{len(names)} hand-built networks and 40 small-integer ones ({z_networks} with 'z' states) checked")
    if failures:
        print("FAIL\n" + "\n".join(failures[:30]))
        return 1
    return 0


sys.exit(main())
