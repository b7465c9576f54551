#!/usr/bin/python3
"""Certified functional dimension (`pleat certify`) against the sampled float estimate
computed as researchers compute it: 2*D' points drawn from N(0, I) (D' = the scaling
bound), the double parameter Jacobian at each point (numpy, forward and backward pass
written out below), stacked, and numpy.linalg.matrix_rank at its default tolerance
(S.max() * max(M, N) * eps). Only compute time is counted for the estimate (drawing,
Jacobians, SVD; not Python start-up or file reading); certify's time is its own
"seconds" key (not process start-up either).

Networks: `pleat random --arch n0,w,...,w,1 --seed s` (He initialisation), n0 = 2 and
3, widths 5/10/15, 3 and 4 hidden layers, seeds 1..SEEDS (default 3). One thread
(--threads 1). Medians over seeds, each the median of REPEATS runs (default 3).
Columns: certify s; the share of certify before its walk (the exact points and lines
drawn first: certify's "points_seconds" key) and after it (the kernel lift, the check on
every region, the naming: what "points_seconds" and "walk_seconds" leave; a binary
older than the "points_seconds" key counts its points after the walk); the
estimate's s, their ratio, the certified value, the estimate's value and the scaling bound, and how
certify reached its value ("points": the no-walk path; "walk": a walk stopped when
the rank met the scaling bound; "kernel": a full walk and an exact kernel).
Then certify --threads 2 against --threads 1 on the 2,15,15,15,1 network (with --full-walk,
the issue's target, and by default), the two alternating run by run.

Usage: certify_vs_estimate.py PLEAT_BINARY   (env: SEEDS, REPEATS, PLEAT_BENCH_LIMIT)
"""
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from fractions import Fraction

import numpy as np

pleat = sys.argv[1]
seeds = range(1, int(os.environ.get("SEEDS", "3")) + 1)
repeats = int(os.environ.get("REPEATS", "3"))
limit = os.environ.get("PLEAT_BENCH_LIMIT", "300")
grid = [(n0, w, d) for n0 in (2, 3) for w in (5, 10, 15) for d in (3, 4)]


def load_network(path):
    """Layers as float64 (W, b, is_relu) from a pleat-network/1 file."""
    doc = json.load(open(path))
    layers = []
    for layer in doc["layers"]:
        w = np.array([[float(Fraction(v)) for v in row] for row in layer["weights"]], dtype=np.float64)
        b = np.array([float(Fraction(v)) for v in layer["bias"]], dtype=np.float64)
        layers.append((w, b, layer.get("activation", "relu") == "relu"))
    return layers


def jacobians(layers, x):
    """dF/dtheta at every row of x (points x n0), in pleat's parameter order
    (layer by layer: W row-major, then b). Returns (points * outputs) x D.
    The ReLU derivative at 0 is taken as 0, as automatic differentiation does."""
    inputs, masks = [x], []
    y = x
    for w, b, is_relu in layers:
        z = y @ w.T + b
        mask = (z > 0).astype(np.float64) if is_relu else np.ones_like(z)
        masks.append(mask)
        y = z * mask
        inputs.append(y)
    points, outputs = x.shape[0], layers[-1][0].shape[0]
    # g[p, o, i]: d F_o / d z_k[i] at point p, from the output backwards.
    g = np.broadcast_to(np.eye(outputs), (points, outputs, outputs)) * masks[-1][:, None, :]
    blocks = [None] * len(layers)
    for k in range(len(layers) - 1, -1, -1):
        dw = g[:, :, :, None] * inputs[k][:, None, None, :]  # p, o, i, j
        blocks[k] = np.concatenate([dw.reshape(points, outputs, -1), g], axis=2)
        if k > 0:
            g = (g @ layers[k][0]) * masks[k - 1][:, None, :]
    return np.concatenate(blocks, axis=2).reshape(points * outputs, -1)


def float_estimate(layers, n0, count, seed):
    """(rank, seconds): the sampled estimate at `count` N(0, I) points."""
    start = time.perf_counter()
    x = np.random.default_rng(seed).standard_normal((count, n0))
    rank = int(np.linalg.matrix_rank(jacobians(layers, x)))
    return rank, time.perf_counter() - start


def run_json(*args):
    out = subprocess.run([pleat, *args, "--json", "--quiet"], check=True, capture_output=True, text=True)
    return json.loads(out.stdout)


def how(cert):
    if not cert["certified"]:
        return "cut"  # stopped by PLEAT_BENCH_LIMIT: bounds only
    if cert.get("certified_by") == "points":
        return "points"
    return "walk" if cert["early_stop"] else "kernel"


ratios = []
print(f"{'net':>12} {'certify s':>9} {'before walk':>11} {'after walk':>10} {'estimate s':>10} {'ratio':>7} "
      f"{'fd':>4} {'estimate':>8} {'bound':>5} {'how':>6}")
with tempfile.TemporaryDirectory() as work:
    for n0, width, depth in grid:
        rows = []
        for seed in seeds:
            arch = ",".join([str(n0)] + [str(width)] * depth + ["1"])
            net = os.path.join(work, f"net_{n0}_{width}_{depth}_{seed}.json")
            subprocess.run([pleat, "random", "--arch", arch, "--seed", str(seed), "-o", net], check=True)
            certs = [run_json("certify", net, "--threads", "1", "--time-limit", limit) for _ in range(repeats)]
            layers = load_network(net)
            bound = certs[0]["scaling_bound"]
            estimates = [float_estimate(layers, n0, 2 * bound, seed) for _ in range(repeats)]
            cert_s = statistics.median(c["seconds"] for c in certs)
            before = statistics.median(c.get("points_seconds", 0) / max(c["seconds"], 1e-9) for c in certs)
            after = statistics.median((c["seconds"] - c["walk_seconds"] - c.get("points_seconds", 0)) / max(c["seconds"], 1e-9)
                                      for c in certs)
            est_s = statistics.median(e[1] for e in estimates)
            rows.append(dict(cert_s=cert_s, before=before, after=after, est_s=est_s, ratio=cert_s / max(est_s, 1e-9),
                             fd=certs[0]["functional_dimension"], est=estimates[0][0], bound=bound,
                             how=how(certs[0])))
        med = lambda key: statistics.median(r[key] for r in rows)
        ratio = med("ratio")
        if n0 == 2:
            ratios.append(ratio)
        hows = "/".join(sorted({r["how"] for r in rows}))
        fds = "/".join(str(r["fd"]) for r in rows)
        ests = "/".join(str(r["est"]) for r in rows)
        print(f"{f'{n0},{width},{depth}':>12} {med('cert_s'):>9.4f} {med('before'):>10.0%} {med('after'):>9.0%} {med('est_s'):>10.4f} "
              f"{ratio:>7.2f} {fds:>4} {ests:>8} {rows[0]['bound']:>5} {hows:>6}", flush=True)
    print(f"median certify/estimate ratio over the 2-input networks: {statistics.median(ratios):.2f}")

    net = os.path.join(work, "threads.json")
    subprocess.run([pleat, "random", "--arch", "2,15,15,15,1", "--seed", "1", "-o", net], check=True)
    for mode in (["--full-walk"], []):
        # Alternating, so that a load change hits both thread counts alike.
        runs = [run_json("certify", net, "--threads", t, *mode, "--time-limit", limit)["seconds"]
                for _ in range(repeats) for t in ("1", "2")]
        times = {"1": statistics.median(runs[0::2]), "2": statistics.median(runs[1::2])}
        label = " ".join(["certify"] + mode)
        print(f"{label} 2,15,15,15,1: --threads 1 {times['1']:.3f} s, --threads 2 {times['2']:.3f} s, "
              f"speed-up {times['1'] / times['2']:.2f}x")
