"""Exact rank of a matrix file, the outside reference of the end-to-end tests.

Usage: exact_rank.py FILE  -- FILE holds one row per line, exact numbers
(integers or fractions p/q) separated by commas; prints the rank over the
rationals. The reference is sympy's Matrix.rank on sympy Rationals (Debian
python3-sympy), not pleat's own elimination. Shared by certify_test.sh and
certify_kernel_out_test.sh through exact_rank in lib.sh."""
import sys

import sympy

rows = [[sympy.Rational(v) for v in line.strip().split(",")] for line in open(sys.argv[1]) if line.strip()]
print(sympy.Matrix(rows).rank() if rows else 0)
