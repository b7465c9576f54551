#!/usr/bin/env python3
"""The walk's set of regions against a brute force that shares no code with pleat.

Outside source: Python's standard `fractions` module (exact rationals) and
our own Fourier-Motzkin elimination in walk_reference.py, which never calls
pleat's lp/ code or any LP solver. For every sign pattern of random networks
with at most 12 hidden neurons (1-D, 2-D and 3-D inputs, one to four hidden
layers, on R^n and on open boxes), the brute force decides exactly whether
the pattern's open cell {x : s_j z_j(x) > 0 for every neuron j} is non-empty
(all 2^N patterns, pruned only where a prefix's cell is already empty), and
`pleat walk --json --patterns` must list exactly that set. Also compared:
the number of distinct pattern prefixes per layer (`regions_per_layer`), and
on 1-D and 2-D walks of R^n the number of bounded regions, each decided
exactly from the cell's recession cone {d : a_j . d >= 0} = {0}.

Random networks are in general position with probability 1, so no neuron is
identically zero on a region: the brute force would print 'z' states (it
supports them) and the walk must have none here.

Usage: walk_bruteforce_test.py PLEAT_BINARY SOURCE_DIR  (exit 77 = skipped)
"""
import os
import sys
import tempfile
import time

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import walk_reference as ref  # noqa: E402

pleat, source_dir = sys.argv[1], sys.argv[2]

# (arch, seed, init, box or None). At most 12 hidden neurons each.
CASES = [
    ("1,6,6,1", 5, "he", None),
    ("1,4,4,4,1", 8, "uniform", None),
    ("1,5,5,1", 9, "he", "-1,1"),
    ("2,12,1", 2, "he", None),
    ("2,6,5,1", 1, "he", None),
    ("2,6,5,1", 1, "he", "-1,1"),
    ("2,4,4,4,1", 3, "he", None),
    ("2,3,3,3,3,1", 12, "uniform", None),
    ("2,8,4,1", 21, "uniform", "-1/2,3"),
    ("3,6,5,1", 4, "he", None),
    ("3,4,4,2", 13, "uniform", "-1,1"),
]


def main():
    failures = []
    started = time.time()
    with tempfile.TemporaryDirectory() as work:
        for arch, seed, init, box in CASES:
            name = f"--arch {arch} --seed {seed} --init {init}" + (f" --box {box}" if box else "")
            path = ref.make_random(pleat, arch, seed, os.path.join(work, f"net_{seed}.json"), "--init", init)
            network = ref.read_network(path)
            assert network.relu_neurons <= 12, name
            n = network.input_dim
            domain_rows = []
            if box:
                lo, hi = (ref.Fraction(v) for v in box.split(","))
                domain_rows = ref.box_rows(n, lo, hi)
            brute = ref.brute_force_patterns(network, domain_rows)
            walk = ref.walk_json(pleat, path, *(["--box=" + box] if box else []))

            walked = walk.get("patterns", [])
            if not (walk["complete"] and walk["certified"]):
                failures.append(f"{name}: walk not complete/certified: {walk['stop_reason']}")
            if len(walked) != walk["regions"] or len(set(walked)) != len(walked):
                failures.append(f"{name}: {walk['regions']} regions but {len(walked)} patterns "
                                f"({len(set(walked))} distinct)")
            if any("z" in p for p in walked):
                failures.append(f"{name}: random network has 'z' states in the walk")
            missing = sorted(set(brute) - set(walked))
            extra = sorted(set(walked) - set(brute))
            for pattern in missing[:5]:
                point = ",".join(str(v) for v in brute[pattern])
                failures.append(f"{name}: the walk misses {pattern}; brute-force witness point ({point})")
            for pattern in extra[:5]:
                failures.append(f"{name}: the walk lists {pattern}, whose open cell is empty (exact Fourier-Motzkin)")
            if missing or extra:
                failures.append(f"{name}: {len(missing)} missing, {len(extra)} extra of {len(brute)} regions")

            layers = len(walk["regions_per_layer"])
            prefixes = [len({"|".join(p.split("|")[:k + 1]) for p in brute}) for k in range(layers)]
            if walk["regions_per_layer"] != prefixes:
                failures.append(f"{name}: regions_per_layer {walk['regions_per_layer']}, brute force {prefixes}")

            if box is None and n <= 2:
                bounded = sum(ref.is_cell_bounded(ref.cell_rows(network, p), n) for p in brute)
                if walk["bounded_regions"] != bounded:
                    failures.append(f"{name}: bounded_regions {walk['bounded_regions']}, exact recession cones say {bounded}")
            print(f"{name}: {len(brute)} regions, walk {walk['regions']}, "
                  f"{time.time() - started:.1f} s so far")
    if failures:
        print("FAIL\n" + "\n".join(failures))
        return 1
    print(f"all {len(CASES)} walks equal the brute force")
    return 0


sys.exit(main())
