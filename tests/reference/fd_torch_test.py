#!/usr/bin/python3
"""The certified functional dimension against torch's autograd Jacobian in float64.

Usage: fd_torch_test.py PLEAT_BINARY SOURCE_DIR (the ctest convention).

Outside source: torch (Debian python3-torch), torch.autograd.functional.jacobian
of the network's outputs with respect to one flat float64 parameter vector in
the spec's parameter order (layer by layer: W_k row-major, then b_k), and
torch.linalg.svdvals for the singular values.

For small generic random networks (`pleat random`), `pleat walk -o` lists every
region with an exact interior point and its facets. In each region we take
n0 + 1 affinely independent points strictly inside, chosen and checked with
Python fractions: the region's point p, and for each axis i, p + delta e_i with
delta halved until every facet inequality normal . x + offset > 0 holds
exactly; plus the midpoints between p and each facet's relative-interior
point (inside by convexity). The Jacobians at all these points, stacked, must
have float64 rank (tolerance sigma_max * max(M, N) * eps) equal to pleat's
certified value, with a clear singular-value gap sigma_r / sigma_{r+1} > 1e6.

Also (when a batch is reproducible): `pleat sample --points-out` writes its
points exactly; torch's Jacobian at them, ranked by numpy.linalg.matrix_rank
(numpy's default tolerance is the same customary one), equals the sample's
`rank`.
Exit 77 (skip) when torch is missing.
"""
import json
import os
import subprocess
import sys
import tempfile
from fractions import Fraction

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import walk_reference as ref  # noqa: E402  (read_network: the network format's exact reading and defaults)

SKIP = 77
GAP = 1e6


def flat_parameters(layers):
    theta = []
    for weights, bias, _ in layers:
        for row in weights:
            theta.extend(float(x) for x in row)
        theta.extend(float(x) for x in bias)
    return theta


def forward(torch, layers, theta, points):
    """F at each point (points: K x n0 tensor), parameters read from theta in spec order."""
    y = points
    offset = 0
    for weights, bias, is_relu in layers:
        rows, cols = len(weights), len(weights[0])
        w = theta[offset:offset + rows * cols].reshape(rows, cols)
        offset += rows * cols
        b = theta[offset:offset + rows]
        offset += rows
        y = y @ w.T + b
        if is_relu:
            y = torch.relu(y)
    return y


def stacked_jacobian(torch, layers, theta, points):
    x = torch.tensor([[float(c) for c in p] for p in points], dtype=torch.float64)
    jacobian = torch.autograd.functional.jacobian(lambda t: forward(torch, layers, t, x), theta)
    return jacobian.reshape(-1, theta.shape[0])  # (K * nd) x D


def is_inside(point, facets):
    return all(sum(Fraction(n) * c for n, c in zip(f["normal"], point)) + Fraction(f["offset"]) > 0 for f in facets)


def interior_points(region):
    p = [Fraction(c) for c in region["point"]]
    facets = region["facets"]
    assert is_inside(p, facets), f"region {region['id']}: its own point is not inside"
    points = [p]
    for i in range(len(p)):
        delta = Fraction(1, 4)
        while True:
            q = list(p)
            q[i] += delta
            if is_inside(q, facets):
                points.append(q)
                break
            delta /= 2
    for facet in facets:
        midpoint = [(a + Fraction(b)) / 2 for a, b in zip(p, facet["point"])]
        assert is_inside(midpoint, facets), f"region {region['id']}: a midpoint left the region"
        points.append(midpoint)
    return points


def rank_and_gap(torch, matrix):
    sigma = torch.linalg.svdvals(matrix)
    tolerance = sigma[0].item() * max(matrix.shape) * torch.finfo(torch.float64).eps
    rank = int((sigma > tolerance).sum().item())
    if rank == 0 or rank == sigma.shape[0]:
        return rank, float("inf")
    below = sigma[rank].item()
    return rank, (sigma[rank - 1].item() / below if below > 0 else float("inf"))


def run_json(command):
    result = subprocess.run(command, capture_output=True, text=True, timeout=300)
    if result.returncode != 0:
        raise AssertionError(f"{' '.join(command)} exited {result.returncode}: {result.stderr}")
    return json.loads(result.stdout)


def check_regions(torch, pleat, network_path, work, label):
    regions_path = os.path.join(work, "regions.jsonl")
    subprocess.run([pleat, "walk", network_path, "-o", regions_path, "-q"], check=True, capture_output=True)
    certified = run_json([pleat, "certify", network_path, "--json", "-q"])
    assert certified["certified"], f"{label}: not certified"
    value = certified["functional_dimension"]
    layers = ref.read_network(network_path).layers
    theta = torch.tensor(flat_parameters(layers), dtype=torch.float64)
    with open(regions_path) as handle:
        lines = [json.loads(line) for line in handle if line.strip()]
    regions = lines[1:]
    points = [q for region in regions for q in interior_points(region)]
    jacobian = stacked_jacobian(torch, layers, theta, points)
    rank, gap = rank_and_gap(torch, jacobian)
    assert rank == value, f"{label}: torch float64 rank {rank} at {len(points)} interior points, pleat {value}"
    assert gap > GAP, f"{label}: singular-value gap only {gap:.3g} at rank {rank}"
    print(f"{label}: {len(regions)} regions, {len(points)} interior points, torch rank {rank} "
          f"(gap {gap:.2e}) = certified {value}")


def check_sample(torch, pleat, network_path, work, label, batch, seed):
    import numpy
    points_path = os.path.join(work, "points.csv")
    sample = run_json([pleat, "sample", network_path, "--batch", str(batch), "--seed", str(seed), "--json", "-q",
                       "--points-out", points_path])
    with open(points_path) as handle:
        points = [[Fraction(c) for c in line.strip().split(",")] for line in handle if line.strip()]
    assert len(points) == batch, f"{label}: {len(points)} points written, batch {batch}"
    # Every written point is a double exactly (the sample's own coordinates).
    assert all(Fraction(float(c)) == c for p in points for c in p), f"{label}: a point is not a double"
    layers = ref.read_network(network_path).layers
    theta = torch.tensor(flat_parameters(layers), dtype=torch.float64)
    jacobian = stacked_jacobian(torch, layers, theta, points).numpy()
    rank = int(numpy.linalg.matrix_rank(jacobian))
    assert rank == sample["rank"], f"{label}: numpy rank {rank}, pleat sample {sample['rank']}"
    print(f"{label}: pleat sample rank {sample['rank']} at {batch} points = numpy matrix_rank of torch's Jacobian")


def main():
    if len(sys.argv) != 3:
        print(__doc__)
        return 2
    pleat, source_dir = sys.argv[1], sys.argv[2]
    try:
        import torch
    except ImportError:
        print("torch (python3-torch) is not installed: skipped")
        return SKIP
    torch.set_num_threads(1)
    with tempfile.TemporaryDirectory() as work:
        cases = [("2,4,3,1", 31), ("2,5,1", 32), ("2,3,3,1", 33), ("3,4,3,1", 34), ("2,3,3,2", 35), ("1,4,4,1", 36)]
        for arch, seed in cases:
            path = os.path.join(work, "net.json")
            subprocess.run([pleat, "random", "--arch", arch, "--seed", str(seed), "-o", path], check=True)
            check_regions(torch, pleat, path, work, f"random {arch} seed {seed}")
        fold = os.path.join(source_dir, "data", "fold2d.json")
        check_regions(torch, pleat, fold, work, "fold2d")
        for batch, seed in ((40, 1), (200, 2)):
            check_sample(torch, pleat, fold, work, f"fold2d sample batch {batch} seed {seed}", batch, seed)
        check_sample(torch, pleat, os.path.join(source_dir, "data", "degenerate2d.json"), work,
                     "degenerate2d sample", 60, 3)
    return 0


if __name__ == "__main__":
    sys.exit(main())
