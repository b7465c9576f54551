#!/usr/bin/python3
"""The certified functional dimension against sympy's exact rank of the same rows.

Usage: fd_sympy_test.py PLEAT_BINARY SOURCE_DIR (the ctest convention).

Outside source: sympy (Debian python3-sympy), sympy.polys.matrices.DomainMatrix
over QQ (exact rational rank and nullspace; Matrix.rank is too slow here).
For a few small random networks (`pleat random`) and the bundled examples,
`pleat certify NET --full-walk --rows-out rows.csv --kernel-out kernel.csv
--json` writes the exact rows of the regions that raised the rank and the
exact kernel it checked on every region. Asserted:
  - DomainMatrix rank of the rows == functional_dimension <= scaling_bound;
  - the kernel file has D - value rows of rank D - value, and rows * kernel^T
    is exactly 0 (so the rows' nullspace is exactly the kernel);
  - sympy's own nullspace of the rows has dimension D - value.
Exit 77 (skip) when sympy is missing.
"""
import json
import os
import subprocess
import sys
import tempfile
from fractions import Fraction

SKIP = 77


def read_matrix(path):
    with open(path) as handle:
        return [[Fraction(entry) for entry in line.strip().split(",")] for line in handle if line.strip()]


def domain_matrix(rows, columns):
    from sympy import QQ
    from sympy.polys.matrices import DomainMatrix
    return DomainMatrix([[QQ(entry.numerator, entry.denominator) for entry in row] for row in rows],
                        (len(rows), columns), QQ)


def check(pleat, network_path, work, label):
    rows_path = os.path.join(work, "rows.csv")
    kernel_path = os.path.join(work, "kernel.csv")
    result = subprocess.run([pleat, "certify", network_path, "--full-walk", "--rows-out", rows_path,
                             "--kernel-out", kernel_path, "--json", "-q"],
                            capture_output=True, text=True, timeout=300)
    if result.returncode != 0:
        raise AssertionError(f"{label}: pleat certify exited {result.returncode}: {result.stderr}")
    document = json.loads(result.stdout)
    assert document["certified"], f"{label}: not certified"
    value = document["functional_dimension"]
    parameters = document["parametric_dimension"]
    rows, kernel = read_matrix(rows_path), read_matrix(kernel_path)
    assert all(len(row) == parameters for row in rows + kernel), f"{label}: row length is not D"

    rows_matrix = domain_matrix(rows, parameters)
    rank = rows_matrix.rank() if rows else 0
    assert rank == value, f"{label}: sympy rank {rank}, pleat certified {value}"
    assert value <= document["scaling_bound"], f"{label}: value above the scaling bound"
    assert len(kernel) == parameters - value, f"{label}: kernel has {len(kernel)} rows, expected {parameters - value}"
    if kernel:
        kernel_matrix = domain_matrix(kernel, parameters)
        assert kernel_matrix.rank() == len(kernel), f"{label}: kernel rows dependent"
        if rows:
            product = rows_matrix * kernel_matrix.transpose()
            assert product.is_zero_matrix, f"{label}: rows * kernel^T is not zero"
    if rows:
        nullity = rows_matrix.nullspace().shape[0]
        assert nullity == parameters - value, f"{label}: sympy nullspace dimension {nullity}"
    print(f"{label}: D {parameters}, value {value} (bound {document['scaling_bound']}), "
          f"{len(rows)} rows from {document['regions_contributing']} regions: sympy agrees")


def main():
    if len(sys.argv) != 3:
        print(__doc__)
        return 2
    pleat, source_dir = sys.argv[1], sys.argv[2]
    try:
        import sympy  # noqa: F401
        from sympy.polys.matrices import DomainMatrix  # noqa: F401
    except ImportError:
        print("sympy (python3-sympy) is not installed: skipped")
        return SKIP
    with tempfile.TemporaryDirectory() as work:
        cases = [("2,4,3,1", 21), ("2,4,3,1", 22), ("2,5,1", 23), ("3,4,3,1", 24), ("2,3,3,2", 25),
                 ("1,4,4,1", 26), ("2,3,3,3,1", 27)]
        for arch, seed in cases:
            path = os.path.join(work, "net.json")
            subprocess.run([pleat, "random", "--arch", arch, "--seed", str(seed), "-o", path], check=True)
            check(pleat, path, work, f"random {arch} seed {seed}")
        for name in ("ramp1d", "degenerate2d", "fold2d"):
            check(pleat, os.path.join(source_dir, "data", name + ".json"), work, name)
    return 0


if __name__ == "__main__":
    sys.exit(main())
