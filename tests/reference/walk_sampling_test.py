#!/usr/bin/env python3
"""Sampling can refute a walk's completeness: every sampled pattern must be walked.

Outside source: numpy (Debian python3-numpy under /usr/bin/python3), a
float64 forward pass of the network file (numbers read exactly, rounded once
to double). For each network, 100k points: Gaussian clouds of three scales,
a uniform cube, and points uniform on the spheres of radius 10, 100 and 1000
around the origin (far regions, the unbounded ones, are where a walk of R^n
goes wrong). A point whose pre-activation is too close to zero for float64
to decide its sign (|z| < 1e-9 * max(1, sum of |terms|)) is skipped. The
pattern of every other point must be one of `pleat walk --json --patterns`.
Also: the walk's patterns are distinct and their number is `regions`, and on
a box only points inside the box are used (a second walk on --box -2,2).

Usage: walk_sampling_test.py PLEAT_BINARY SOURCE_DIR  (exit 77 = skipped)
"""
import json
import os
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
POINTS = 100_000


def float_layers(network):
    return [(np.array([[float(v) for v in row] for row in weights]).reshape(len(weights), -1),
             np.array([float(v) for v in bias]), is_relu) for weights, bias, is_relu in network.layers]


def sample_patterns(layers, points):
    """Sign matrix (points x ReLU neurons, True = on) and a mask of the points
    whose every ReLU pre-activation is clearly nonzero in float64."""
    y, y_abs = points, np.abs(points)
    signs, clear = [], np.ones(len(points), dtype=bool)
    for weights, bias, is_relu in layers:
        z = y @ weights.T + bias
        scale = y_abs @ np.abs(weights).T + np.abs(bias)
        if not is_relu:
            break
        clear &= np.all(np.abs(z) >= 1e-9 * np.maximum(1.0, scale), axis=1)
        signs.append(z > 0)
        y = np.maximum(z, 0.0)
        y_abs = y
    return np.concatenate(signs, axis=1), clear


def pattern_string(row, widths):
    text, start = [], 0
    for width in widths:
        text.append("".join("1" if v else "0" for v in row[start:start + width]))
        start += width
    return "|".join(text)


def draw_points(rng, n, box):
    if box is not None:
        return rng.uniform(box[0], box[1], size=(POINTS, n))
    per = POINTS // 7
    parts = [rng.normal(0.0, scale, size=(per, n)) for scale in (1.0, 3.0, 10.0)]
    parts.append(rng.uniform(-5.0, 5.0, size=(per, n)))
    for radius in (10.0, 100.0, 1000.0):
        g = rng.normal(size=(per, n))
        parts.append(radius * g / np.linalg.norm(g, axis=1, keepdims=True))
    parts.append(rng.normal(0.0, 2.0, size=(POINTS - 7 * per, n)))
    return np.concatenate(parts)


def check(path, rng, failures, box=None):
    network = ref.read_network(path)
    options = ["--box=" + ",".join(str(v) for v in box)] if box else []
    walk = ref.walk_json(pleat, path, *options)
    name = os.path.basename(path) + (f" --box {box[0]},{box[1]}" if box else "")
    walked = set(walk["patterns"])
    if len(walked) != walk["regions"]:
        failures.append(f"{name}: {walk['regions']} regions but {len(walked)} distinct patterns")
    if not walk["certified"]:
        failures.append(f"{name}: walk not certified ({walk['stop_reason']})")
    points = draw_points(rng, network.input_dim, box)
    signs, clear = sample_patterns(float_layers(network), points)
    widths = network.relu_layer_widths
    unique, first = np.unique(signs[clear], axis=0, return_index=True)
    clear_points = points[clear]
    missing = 0
    for row, index in zip(unique, first):
        pattern = pattern_string(row, widths)
        if pattern not in walked:
            missing += 1
            if missing <= 5:
                x = clear_points[index]
                # Re-decide the sign exactly at the double point before blaming the walk.
                exact = ref.forward_exact(network, [Fraction(float(v)) for v in x])[2]
                failures.append(f"{name}: point {x.tolist()} has pattern {pattern} "
                                f"(exact at that double: {exact}), not in the walk")
    if missing:
        failures.append(f"{name}: {missing} sampled patterns missing from the walk of {walk['regions']}")
    print(f"{name}: {clear.sum()} of {len(points)} points decided, {len(unique)} patterns seen, "
          f"walk has {walk['regions']}")


def main():
    rng = np.random.default_rng(20240611)
    failures = []
    data = os.path.join(source_dir, "data")
    with tempfile.TemporaryDirectory() as work:
        paths = [os.path.join(data, name) for name in ("fold2d.json", "sensor3d.json", "ramp1d.json",
                                                         "degenerate2d.json")]
        for seed in (1, 2):
            paths.append(ref.make_random(pleat, "2,8,8,8,1", seed, os.path.join(work, f"deep_{seed}.json")))
        paths.append(ref.make_random(pleat, "3,6,6,1", 5, os.path.join(work, "deep3d_5.json")))
        for path in paths:
            check(path, rng, failures)
        check(paths[0], rng, failures, box=(-2, 2))
        check(paths[4], rng, failures, box=(-2, 2))
    if failures:
        print("FAIL\n" + "\n".join(failures))
        return 1
    print("every sampled pattern is in its walk")
    return 0


sys.exit(main())
