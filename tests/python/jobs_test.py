#!/usr/bin/python3
"""walk, certify, sample, inspect and eval from Python against the CLI's JSON.

Outside references: the command line's own JSON output on the bundled
networks (the module must give the very same values, exact numbers as
Fractions of the CLI's strings); sympy's exact rank over QQ of the parameter
Jacobian at given points, built here from an independent exact forward pass
(sympy differentiates the network's expression with the ReLU masks fixed at
each point), for certify(points=...).
"""
import json
import os
import subprocess
import sys
import tempfile
import unittest
from fractions import Fraction

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import harness  # noqa: E402
import pleat  # noqa: E402
from harness import fractions  # noqa: E402

FOLD = harness.data("fold2d.json")


class WalkTest(unittest.TestCase):
    def test_summary_and_regions_equal_the_cli(self):
        with tempfile.TemporaryDirectory() as work:
            lines_path = os.path.join(work, "regions.jsonl")
            cli = harness.cli_json("walk", FOLD, "--box", "-2,2", "--patterns", "-q", "-o", lines_path)
            with open(lines_path) as handle:
                lines = [json.loads(line) for line in handle][1:]
        result = pleat.Network.from_file(FOLD).walk(domain=(-2, 2), threads=2)
        for key in ("bounded_regions", "linear_regions", "regions_per_layer", "facets", "complete", "certified"):
            self.assertEqual(getattr(result, key), cli[key], key)
        self.assertEqual(result.region_count, cli["regions"])
        self.assertEqual(len(result.regions), cli["regions"])
        self.assertEqual(sorted(r.pattern for r in result.regions), cli["patterns"])
        for region, line in zip(result.regions, lines):
            self.assertEqual(region.id, line["id"])
            self.assertEqual(region.pattern, line["pattern"])
            self.assertEqual(region.point, fractions(line["point"]))
            self.assertEqual(region.affine.A, [fractions(row) for row in line["affine"]["A"]])
            self.assertEqual(region.affine.c, fractions(line["affine"]["c"]))
            self.assertEqual([f.normal for f in region.facets], [fractions(f["normal"]) for f in line["facets"]])
            self.assertEqual([f.neighbor for f in region.facets], [f["neighbor"] for f in line["facets"]])
        # The affine map is the network on the region: check at the interior point.
        net = pleat.Network.from_file(FOLD)
        first = result.regions[0]
        self.assertEqual(first.affine(first.point), net.eval(first.point).output)

    def test_max_regions_gives_lower_bounds(self):
        result = pleat.Network.from_file(FOLD).walk(max_regions=3)
        self.assertEqual(result.region_count, 3)
        self.assertFalse(result.certified)
        self.assertEqual(result.stop_reason, "max-regions")
        self.assertEqual(repr(result.regions), "<3 regions>")
        self.assertEqual(repr(pleat.Network.from_file(FOLD).walk(max_regions=1).regions), "<1 region>")
        # Linear regions of a stopped walk bound nothing: the first 4 regions of
        # relu(min(x, y)) on this box are 4 pieces, the whole box has 3.
        quadrants = pleat.Network.from_file(harness.test_data("min_quadrants2d.json"))
        box = [(-1, 3), (-1, 2)]
        self.assertEqual(quadrants.walk(box).linear_regions, 3)
        self.assertIsNone(quadrants.walk(box, max_regions=4).linear_regions)

    def test_a_string_that_names_no_file_says_how_to_give_a_box(self):
        # A string is a pleat-domain/1 file name: "box:0,1" (sample --dist's
        # form) was reported as "box:0,1: cannot open (No such file or directory)".
        net = pleat.Network.from_file(FOLD)
        for text in ("box:0,1", "-1,1"):
            with self.assertRaises(ValueError) as caught:
                net.walk(text)
            self.assertIn(f"domain: no file {text!r} (a string names a pleat-domain/1 file; give a box as (LO, HI)",
                          str(caught.exception))
        with self.assertRaises(ValueError) as caught:
            net.sample(5, 1, dist=[1, 2, 3])
        self.assertEqual(str(caught.exception), "dist: expected (LO, HI) or a list of (LO, HI) per axis, got [1, 2, 3]")

    def test_records_and_pandas(self):
        result = pleat.Network.from_file(FOLD).walk()
        records = result.to_records()
        self.assertEqual(len(records), result.region_count)
        self.assertEqual(records[0]["x1"], float(result.regions[0].point[0]))
        try:
            import pandas  # noqa: F401
        except ImportError:
            return
        frame = result.to_pandas()
        self.assertEqual(list(frame["pattern"]), [r.pattern for r in result.regions])


class CertifyTest(unittest.TestCase):
    def compare(self, path, *options, **kwargs):
        cli = harness.cli_json("certify", path, "-q", *options)
        result = pleat.Network.from_file(path).certify(**kwargs)
        for key in ("functional_dimension", "lower_bound", "upper_bound", "certified", "parametric_dimension",
                    "scaling_bound", "regions_walked", "regions_contributing", "walk_complete", "early_stop",
                    "stop_reason", "nonsmooth_regions", "extra_kernel_summary", "certified_by", "points_drawn"):
            self.assertEqual(getattr(result, key), cli[key], f"{path}: {key}")
        self.assertEqual(result.witness_points, [[Fraction(v) for v in point] for point in cli["witness_points"]])
        self.assertGreaterEqual(result.walk_seconds, 0)
        self.assertLessEqual(result.walk_seconds, result.seconds)
        # Points are drawn first unless the walk is full (and then none are).
        self.assertEqual(result.points_seconds > 0, cli["points_drawn"] > 0)
        self.assertLessEqual(result.walk_seconds + result.points_seconds, result.seconds)
        self.assertEqual(len(result.extra_kernel), len(cli["extra_kernel"]))
        for mine, theirs in zip(result.extra_kernel, cli["extra_kernel"]):
            self.assertEqual(mine.named(), {k: Fraction(v) for k, v in theirs["vector"].items()})
            self.assertEqual(mine.mechanism, theirs["mechanism"])
        return result, cli

    def test_bundled_networks_equal_the_cli(self):
        for name in ("ramp1d.json", "fold2d.json", "degenerate2d.json"):
            result, _ = self.compare(harness.data(name))
            self.assertTrue(result.certified, name)
        self.compare(harness.data("fold2d.json"), "--full-walk", full_walk=True)
        self.compare(harness.data("fold2d.json"), "--box", "-1,1", domain=(-1, 1))
        self.compare(harness.test_data("dead2d.json"), "--full-walk", full_walk=True)

    def test_kernel_equals_the_kernel_file(self):
        # Entry by entry, zeros included (one shared Fraction(0) stands for every
        # zero: python/src/convert.cpp), as certify --kernel-out writes the kernel:
        # the scaling directions, then the extra ones (dead2d.json has extra ones).
        for path in (FOLD, harness.test_data("dead2d.json")):
            with tempfile.TemporaryDirectory() as work:
                kernel_file = os.path.join(work, "kernel.txt")
                harness.cli_json("certify", path, "-q", "--full-walk", "--kernel-out", kernel_file)
                with open(kernel_file) as text:
                    expected = [fractions(line.split(",")) for line in text.read().splitlines()]
            kernel = pleat.Network.from_file(path).certify(full_walk=True).kernel
            self.assertEqual(kernel, expected, path)
            self.assertTrue(all(type(v) is Fraction for row in kernel for v in row), path)
            self.assertTrue(any(v == 0 for row in kernel for v in row) and any(v != 0 for row in kernel for v in row))

    def test_kernel_and_evidence_of_each_outcome(self):
        net = pleat.Network.from_file(FOLD)
        by_points, walked = net.certify(), net.certify(full_walk=True)
        self.assertEqual((by_points.certified_by, by_points.functional_dimension), ("points", 48))
        # Certified at the scaling bound from points: the kernel is the 59 - 48
        # scaling directions, as the full walk's proof gives (it was empty).
        self.assertEqual(len(by_points.kernel), net.parametric_dimension - 48)
        self.assertEqual(by_points.kernel, walked.kernel)
        with tempfile.TemporaryDirectory() as work:
            path = os.path.join(work, "big.json")
            subprocess.run([harness.PLEAT, "random", "--arch", "2,15,15,15,1", "--seed", "1", "-o", path],
                           check=True, capture_output=True)
            cut = pleat.Network.from_file(path).certify(time_limit=0.001)
        self.assertFalse(cut.certified)
        self.assertEqual(cut.kernel, [])
        # The lower bound of a run cut short is the rank of the rows of the
        # regions that raised it (their points: witness_points), not of the
        # regions walked (none, when the points phase was cut).
        self.assertEqual(cut.regions_contributing, len(cut.witness_points))
        self.assertIn(f"rows of {cut.regions_contributing} regions have a nonsingular minor",
                      cut.evidence["lower_bound"])
        self.assertEqual(cut.upper_bound, cut.scaling_bound)
        self.assertTrue(cut.evidence["upper_bound"].startswith("the scaling directions (not certified"))

    def test_claim_verdicts_equal_the_cli(self):
        for claim in (1, 47, 500):
            result = pleat.Network.from_file(FOLD).certify(claim=claim)
            completed = subprocess.run([harness.PLEAT, "certify", FOLD, "--claim", str(claim), "--json", "-q"],
                                       capture_output=True, text=True)
            cli = json.loads(completed.stdout)["claim"]
            self.assertEqual((result.claim.verdict, result.claim.reason, result.claim.value),
                             (cli["verdict"], cli["reason"], cli["value"]))

    def test_points_rank_equals_sympy(self):
        net = pleat.Network.from_file(FOLD)
        points = [[Fraction(k, 3) - 2, Fraction(5 - 2 * k, 4)] for k in range(9)]
        result = net.certify(points=points, claim=20)
        self.assertEqual(result.batch.batch_functional_dimension, sympy_batch_rank(net, points))
        self.assertEqual(result.batch.points, len(points))
        with tempfile.TemporaryDirectory() as work:
            path = os.path.join(work, "points.csv")
            with open(path, "w") as out:
                out.writelines(",".join(str(c) for c in p) + "\n" for p in points)
            completed = subprocess.run([harness.PLEAT, "certify", FOLD, "--points", path, "--claim", "20",
                                        "--json", "-q"], capture_output=True, text=True)
            cli = json.loads(completed.stdout)
        self.assertEqual(result.batch.batch_functional_dimension, cli["batch_functional_dimension"])
        self.assertEqual(result.batch.regions_touched, cli["regions_touched"])
        self.assertEqual(result.batch.claim.verdict, cli["claim"]["at_points"]["verdict"])
        self.assertEqual(result.claim.verdict, cli["claim"]["verdict"])

    def test_point_on_a_bent_hyperplane_is_named(self):
        net = pleat.Network.from_arrays([[[1, 0], [0, 1]], [[1, 1]]], [[0, 0], [0]])
        with self.assertRaises(ValueError) as caught:
            net.certify(points=[[1, 1], [0, 3]])
        self.assertIn("points[1]", str(caught.exception))

    def test_no_points_is_refused_as_the_cli_refuses_an_empty_file(self):
        # points=[] gave a batch rank 0 and, with a claim, 'impossible: exceeds
        # the exact rank at these points, 0 (a floating-point rank above it was
        # invented by rounding)'; pleat certify --points of an empty file exits 2.
        net = pleat.Network.from_file(FOLD)
        for empty in ([], (), [[]][1:]):
            with self.assertRaisesRegex(ValueError, "points: no points"):
                net.certify(points=empty, claim=20)


def sympy_batch_rank(net, points):
    """Exact rank over QQ of the stacked parameter Jacobians (sympy)."""
    import sympy
    weights, biases = net.weights, net.biases
    symbols, values = [], {}
    symbolic_layers = []
    for k, (w, b) in enumerate(zip(weights, biases)):
        ws = [[sympy.Symbol(f"w{k}_{i}_{j}") for j in range(len(w[0]))] for i in range(len(w))]
        bs = [sympy.Symbol(f"b{k}_{i}") for i in range(len(b))]
        for i, row in enumerate(w):
            for j, v in enumerate(row):
                values[ws[i][j]] = sympy.Rational(v.numerator, v.denominator)
            values[bs[i]] = sympy.Rational(b[i].numerator, b[i].denominator)
        symbols += [s for row in ws for s in row] + bs
        symbolic_layers.append((ws, bs))
    rows = []
    for point in points:
        x_exact = list(point)
        x_symbolic = [sympy.Rational(v.numerator, v.denominator) for v in point]
        for k, ((w, b), (ws, bs)) in enumerate(zip(zip(weights, biases), symbolic_layers)):
            pre_exact = [sum((wij * xj for wij, xj in zip(row, x_exact)), Fraction(0)) + bi for row, bi in zip(w, b)]
            pre_symbolic = [sum(wij * xj for wij, xj in zip(row, x_symbolic)) + bi for row, bi in zip(ws, bs)]
            last = k == len(weights) - 1
            if last and not net.output_relu:
                x_exact, x_symbolic = pre_exact, pre_symbolic
                continue
            assert all(p != 0 for p in pre_exact), "a test point lies on a bent hyperplane"
            x_exact = [p if p > 0 else Fraction(0) for p in pre_exact]
            x_symbolic = [s if p > 0 else sympy.Integer(0) for s, p in zip(pre_symbolic, pre_exact)]
        jacobian = sympy.Matrix(x_symbolic).jacobian(symbols).subs(values)
        rows += jacobian.tolist()
    from sympy import QQ
    from sympy.polys.matrices import DomainMatrix
    matrix = DomainMatrix([[QQ(sympy.Rational(e).p, sympy.Rational(e).q) for e in row] for row in rows],
                          (len(rows), len(symbols)), QQ)
    return matrix.rank()


class SampleTest(unittest.TestCase):
    def test_sample_equals_the_cli(self):
        net = pleat.Network.from_file(FOLD)
        for dtype in ("float64", "float32"):
            cli = harness.cli_json("sample", FOLD, "--batch", "40", "--seed", "1", "--dtype", dtype, "-q")
            result = net.sample(40, 1, dtype=dtype)
            for key in ("rank", "regions_touched", "regions_total", "certified_value", "verdict",
                        "first_batch_reaching", "lower_bound", "upper_bound", "scaling_bound",
                        "points_on_bent_hyperplanes", "batch", "seed", "dtype"):
                self.assertEqual(getattr(result, key), cli[key], f"{dtype}: {key}")
            self.assertEqual(result.rank_rtol_1e6, cli["rank_rtol_1e-6"])
            self.assertEqual(result.domain, cli["domain"])

    def test_box_points_equal_the_cli_points(self):
        net = pleat.Network.from_file(FOLD)
        with tempfile.TemporaryDirectory() as work:
            path = os.path.join(work, "points.csv")
            harness.cli_json("sample", FOLD, "--batch", "5", "--seed", "3", "--dist", "box:-1,1", "-q",
                             "--points-out", path)
            with open(path) as handle:
                cli_points = [fractions(line.strip().split(",")) for line in handle]
        result = net.sample(5, 3, dist=(-1, 1))
        self.assertEqual(result.points, cli_points)
        self.assertEqual(result.as_float().shape, (5, 2))


class InspectEvalTest(unittest.TestCase):
    def test_inspect_equals_the_cli(self):
        net = pleat.Network.from_file(FOLD)
        cli = harness.cli_json("inspect", FOLD, "--at", "1/2,-1")
        mine = net.inspect(at=[Fraction(1, 2), -1])
        self.assertEqual(len(mine.regions), len(cli["regions"]))
        for record, theirs in zip(mine.regions, cli["regions"]):
            self.assertEqual(record.pattern, theirs["pattern"])
            self.assertEqual(record.vertices, [fractions(v) for v in theirs["vertices"]])
            self.assertEqual(record.volume, None if theirs["volume"] is None else Fraction(theirs["volume"]))
            self.assertEqual(record.rank_contribution, theirs["rank_contribution"])
            self.assertEqual([f.layers for f in record.facets], [f["layers"] for f in theirs["facets"]])
        pattern = mine.region.pattern
        cli = harness.cli_json("inspect", FOLD, "--pattern", pattern, "--box", "-3,3")
        record = net.inspect(pattern=pattern, domain=[(-3, 3), (-3, 3)]).region
        self.assertEqual(record.volume, Fraction(cli["regions"][0]["volume"]))
        self.assertEqual(record.vertices, [fractions(v) for v in cli["regions"][0]["vertices"]])

    def test_point_on_a_bent_hyperplane_lists_every_region(self):
        net = pleat.Network.from_arrays([[[1, 0], [0, 1]], [[1, 1]]], [[0, 0], [0]])
        cli_path = os.path.join(tempfile.gettempdir(), f"pleat-quadrants-{os.getpid()}.json")
        net.save(cli_path)
        try:
            cli = harness.cli_json("inspect", cli_path, "--at", "0,0")
        finally:
            os.remove(cli_path)
        mine = net.inspect(at=[0, 0])
        self.assertTrue(mine.on_boundary)
        self.assertEqual(mine.vanishing_neurons, cli["vanishing_neurons"])
        self.assertEqual([r.pattern for r in mine.regions], [r["pattern"] for r in cli["regions"]])
        with self.assertRaises(ValueError):
            _ = mine.region
        # inspect walks nothing, so no region has a walk number: every record
        # read id=0, as if each were the walk's first region.
        self.assertEqual([r.id for r in mine.regions], [None] * 4)
        self.assertNotIn("id=0", repr(mine))

    def test_eval_equals_the_cli(self):
        net = pleat.Network.from_file(FOLD)
        cli = harness.cli_json("eval", FOLD, "--at", "0.5,-1/3")
        mine = net.eval(["0.5", Fraction(-1, 3)])
        self.assertEqual(mine.output, fractions(cli["output"]))
        self.assertEqual(mine.pattern, cli["pattern"])
        self.assertEqual(mine.preactivations, [fractions(layer) for layer in cli["preactivations"]])
        self.assertEqual(mine.as_float().tolist(), cli["output_double"])

    def test_bad_point_message_names_the_argument(self):
        net = pleat.Network.from_file(FOLD)
        with self.assertRaises(ValueError) as caught:
            net.eval([1, 2, 3])
        self.assertEqual(str(caught.exception), harness.cli_error("eval", FOLD, "--at", "1,2,3").replace("--at", "x"))


if __name__ == "__main__":
    harness.main()
