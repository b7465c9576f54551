#!/usr/bin/python3
"""certify's exact kernel (--kernel-out) annihilates every region's rows, checked outside pleat.

Usage: kernel_fractions_test.py PLEAT_BINARY SOURCE_DIR (the ctest convention).

certify proves its extra kernel directions by checking them on every smooth
region, except rows it spares: rows with no term on any region, and the rows
B that its always-active plan fills (enumerate/detail/extra_proof.cpp,
9cb0fb7), each E_s = sum_t C_B^-1[s, t] (g'_t - sum over j outside B of
C[t, j] E_j), a combination of generators from neurons on in every region
and of the checked rows, so never checked itself. A fault in that argument
or in the fill would print a wrong kernel, and a wrong value, as certified.
Here every printed kernel row is checked against every region's Jacobian
rows, computed outside pleat: one interior point per region (pleat walk
--points-out), the network's states read there and its parameter Jacobian
at x = 0 and x = e_t with those states held, by a hand-written forward pass
and back-propagation in Python Fractions (fd_fractions_test.py's helpers),
which span the region's Jacobians. Asserted: every kernel row times every
such row is exactly 0; the kernel has D - value rows, of full rank. The
networks are deep and narrow (neurons on in every region, so the plan has
rows to fill: on 2,5,5,5,5,1 seed 1 two rows of fewer than 8 entries,
spared only since 9cb0fb7; on 2,4,4,4,4,1 seed 1 too: with every filled row
changed by 1/3 in its last entry, certify printed both kernels as certified,
and this test fails on both). The check itself is shown to catch a kernel row
changed in one entry at a parameter some region depends on.
"""
import json
import os
import subprocess
import sys
import tempfile
from fractions import Fraction

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import fd_fractions_test as fd  # noqa: E402  (walk_points, rows_at, rank_fractions: exact, no pleat code)
import walk_reference as ref  # noqa: E402  (read_network)


def first_nonzero_product(kernel, rows):
    """(kernel row, region row) of the first nonzero product, or None."""
    for r, row in enumerate(rows):
        support = [(i, x) for i, x in enumerate(row) if x]
        for k, vector in enumerate(kernel):
            if sum(x * vector[i] for i, x in support) != 0:
                return k, r
    return None


def main():
    if len(sys.argv) < 2:
        print(__doc__)
        return 2
    pleat = sys.argv[1]
    failures = []
    with tempfile.TemporaryDirectory() as work:
        net, kernel_file, points_file = (os.path.join(work, name) for name in ("net.json", "k.txt", "p.txt"))
        for arch, seed in (("2,5,5,5,5,1", 1), ("2,4,4,4,4,1", 1)):
            label = "%s seed %d" % (arch, seed)
            subprocess.run([pleat, "random", "--arch", arch, "--seed", str(seed), "-o", net], check=True)
            out = json.loads(subprocess.run([pleat, "certify", net, "--json", "-q", "--threads", "1",
                                             "--kernel-out", kernel_file],
                                            capture_output=True, text=True, check=True).stdout)
            if not out["certified"] or out["certified_by"] != "kernel":
                failures.append(label + ": expected a value certified by its kernel")
                continue
            with open(kernel_file) as handle:
                kernel = [[Fraction(x) for x in line.split(",")] for line in handle if line.strip()]
            points = fd.walk_points(pleat, net, points_file)
            network = ref.read_network(net)
            rows = fd.rows_at(network.layers, network.input_dim, points)
            bad = first_nonzero_product(kernel, rows)
            dimension = out["parametric_dimension"]
            print("%s: value %d, D %d, %d kernel rows checked on %d rows of %d regions: %s"
                  % (label, out["functional_dimension"], dimension, len(kernel), len(rows), len(points),
                     "all 0" if bad is None else "kernel row %d times row %d is not 0" % bad))
            if bad is not None:
                failures.append(label + ": a certified kernel row does not annihilate a region")
            if len(kernel) != dimension - out["functional_dimension"] or fd.rank_fractions(kernel) != len(kernel):
                failures.append(label + ": the kernel is not D - value independent rows")
            # The check catches a kernel row changed in one entry: the last
            # row with an entry at a parameter some region's rows depend on,
            # at its last such entry.
            live = {i for row in rows for i, x in enumerate(row) if x}
            changed = [list(vector) for vector in kernel]
            k = max(k for k, vector in enumerate(changed) if any(x and i in live for i, x in enumerate(vector)))
            changed[k][max(i for i, x in enumerate(changed[k]) if x and i in live)] += Fraction(1, 3)
            if first_nonzero_product(changed, rows) is None:
                failures.append(label + ": a changed kernel row passed the check")
    for failure in failures:
        print("FAIL:", failure)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
