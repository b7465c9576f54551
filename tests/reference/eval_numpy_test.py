#!/usr/bin/env python3
"""Cross-check of exact evaluation against an outside implementation.

Source of the reference values: numpy (Debian python3-numpy, under
/usr/bin/python3) evaluating the same network file in float64, with the
network's numbers converted from their exact text to the nearest double.
For every example network in data/ and two random networks from
`pleat random`, 25 points each (150 in all): pleat eval --json must agree with numpy's
output to float tolerance, and every pre-activation that numpy sees clearly
away from zero must have the sign pleat's pattern says.

Usage: eval_numpy_test.py PLEAT_BINARY SOURCE_DIR  (exit 77 = skipped)
"""
import json
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

pleat, source_dir = sys.argv[1], sys.argv[2]
failures = []


def read_network(path):
    """The network as float64 arrays; numbers read exactly, then rounded once."""
    with open(path) as handle:
        doc = json.load(handle, parse_float=Fraction, parse_int=Fraction)
    layers = []
    for k, layer in enumerate(doc["layers"]):
        weights = np.array([[float(Fraction(v)) for v in row] for row in layer["weights"]])
        bias = np.array([float(Fraction(v)) for v in layer["bias"]])
        is_last = k + 1 == len(doc["layers"])
        activation = layer.get("activation", "linear" if is_last else "relu")
        layers.append((weights, bias, activation))
    return int(doc["input_dim"]), layers


def numpy_forward(layers, x):
    """Pre-activations per layer, and a magnitude bound for each (sum of |terms|)."""
    pre, scale = [], []
    y, y_abs = x, np.abs(x)
    for weights, bias, activation in layers:
        z = weights @ y + bias
        z_scale = np.abs(weights) @ y_abs + np.abs(bias)
        pre.append(z)
        scale.append(z_scale)
        if activation == "relu":
            y, y_abs = np.maximum(z, 0.0), np.abs(np.maximum(z, 0.0))
        else:
            y, y_abs = z, z_scale
    return pre, scale, y


def pleat_eval(path, point):
    at = ",".join(f"{p.numerator}/{p.denominator}" for p in point)
    result = subprocess.run([pleat, "eval", path, "--at=" + at, "--json"],
                            capture_output=True, text=True, timeout=60)
    if result.returncode != 0:
        raise RuntimeError(f"pleat eval {path} --at={at}: exit {result.returncode}: {result.stderr}")
    return json.loads(result.stdout)


def check_network(path, rng, count=25):
    input_dim, layers = read_network(path)
    relu_layers = [k for k, layer in enumerate(layers) if layer[2] == "relu"]
    for _ in range(count):
        # Exact decimal points in [-3, 3]: numpy sees each coordinate's double.
        point = [Fraction(int(v), 1000) for v in rng.integers(-3000, 3001, size=input_dim)]
        x = np.array([float(p) for p in point])
        pre, scale, output = numpy_forward(layers, x)
        doc = pleat_eval(path, point)
        name = f"{os.path.basename(path)} at {[str(p) for p in point]}"

        exact_output = [Fraction(v) for v in doc["output"]]
        tolerance = 1e-12 * (1.0 + scale[-1])
        for i, value in enumerate(exact_output):
            if abs(float(value) - output[i]) > tolerance[i]:
                failures.append(f"{name}: output {i} exact {value} numpy {output[i]!r}")
            if abs(doc["output_double"][i] - float(value)) > 0.0:
                failures.append(f"{name}: output_double {i} is not the double of the exact output")

        for k, layer_pre in enumerate(doc["preactivations"]):
            for j, value in enumerate(layer_pre):
                if abs(float(Fraction(value)) - pre[k][j]) > 1e-12 * (1.0 + scale[k][j]):
                    failures.append(f"{name}: pre-activation [{k}][{j}] exact {value} numpy {pre[k][j]!r}")

        # Pattern signs wherever numpy is clearly away from zero.
        states = doc["pattern"].replace("|", "")
        expected = []
        for k in relu_layers:
            for j, z in enumerate(pre[k]):
                if abs(z) <= 1e-9 * (1.0 + scale[k][j]):
                    expected.append(None)  # too close for float64 to say
                else:
                    expected.append("1" if z > 0 else "0")
        if len(expected) != len(states):
            failures.append(f"{name}: pattern {doc['pattern']} has {len(states)} states, expected {len(expected)}")
            continue
        for neuron, (want, got) in enumerate(zip(expected, states)):
            if want is not None and want != got:
                failures.append(f"{name}: neuron {neuron} is '{got}' in pleat's pattern, numpy says '{want}'")


def main():
    rng = np.random.default_rng(20240607)
    data_dir = os.path.join(source_dir, "data")
    networks = sorted(os.path.join(data_dir, f) for f in os.listdir(data_dir) if f.endswith(".json"))
    with tempfile.TemporaryDirectory() as work:
        for arch, seed, init in (("2,8,8,1", "7", "he"), ("3,6,5,2", "11", "uniform")):
            path = os.path.join(work, f"random_{seed}.json")
            subprocess.run([pleat, "random", "--arch", arch, "--seed", seed, "--init", init, "-o", path],
                           check=True, timeout=60)
            networks.append(path)
        if not networks:
            print("no networks to check")
            return 1
        for path in networks:
            check_network(path, rng)
        print(f"checked {len(networks)} networks x 25 points against numpy")
    if failures:
        print("\n".join(failures[:30]))
        print(f"{len(failures)} disagreements")
        return 1
    return 0


sys.exit(main())
