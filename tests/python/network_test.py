#!/usr/bin/python3
"""pleat.Network: construction from files, arrays and torch; export; errors.

Outside references: the ONNX import of the command-line tool's own C++
reader (via a file torch.onnx.export wrote) must give the very same rationals
as from_torch (bit for bit: every float32 is a dyadic rational); torch's own
forward pass must agree with the exact output rounded; the CLI's messages are
the reference for the Python exceptions. Network.random: `pleat random`'s
file and pleat.survey's samples are the references, and scipy.stats' KS test
checks the draws against the documented distributions.
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


class FileTest(unittest.TestCase):
    def test_json_file_matches_cli_description(self):
        net = pleat.Network.from_file(harness.data("fold2d.json"))
        self.assertEqual(net.widths, [2, 6, 5, 1])
        self.assertFalse(net.output_relu)
        # D = sum (n_{k-1} + 1) n_k = 3*6 + 7*5 + 6*1 (formula from the network format).
        self.assertEqual(net.parametric_dimension, 3 * 6 + 7 * 5 + 6 * 1)
        self.assertEqual(net.weights[0][0], [Fraction("-1.1"), Fraction("0.3")])
        self.assertEqual(net.biases[0][3], Fraction("0.55"))
        self.assertEqual(pleat.Network.from_json(net.to_json()), net)

    def test_missing_file_raises_the_cli_message(self):
        missing = os.path.join(tempfile.gettempdir(), "pleat-no-such-network.json")
        expected = harness.cli_error("walk", missing)
        with self.assertRaises(ValueError) as caught:
            pleat.Network.from_file(missing)
        self.assertEqual(str(caught.exception), expected)

    def test_onnx_round_trip_is_exact(self):
        net = pleat.Network.from_file(harness.data("fold2d.json"))
        back = pleat.Network.from_onnx_bytes(net.to_onnx_bytes())
        # fold2d's decimals are not dyadic, so ONNX (float64) rounds them: the
        # import is the exact value of each rounded double.
        for row_back, row in zip(back.weights[0], net.weights[0]):
            for b, a in zip(row_back, row):
                self.assertEqual(b, Fraction(float(a)))


class ArrayTest(unittest.TestCase):
    def test_floats_are_taken_exactly(self):
        import numpy
        w1 = numpy.array([[0.1, -0.7], [1.5, 0.25]], dtype=numpy.float32)
        net = pleat.Network.from_arrays([w1, [[1, -2]]], [numpy.zeros(2), ["1/3"]])
        # Fraction(float) is the exact value of the double (Python's own conversion).
        self.assertEqual(net.weights[0][0][0], Fraction(float(numpy.float32(0.1))))
        self.assertNotEqual(net.weights[0][0][0], Fraction(1, 10))
        self.assertEqual(net.biases[1], [Fraction(1, 3)])

    def test_bad_shape_names_the_field(self):
        with self.assertRaises(ValueError) as caught:
            pleat.Network.from_arrays([[[1, 2], [3, 4]], [[1, 2, 3]]], [[0, 0], [0]])
        self.assertIn("layers[1].weights[0]", str(caught.exception))

    def test_nan_is_refused(self):
        with self.assertRaises(ValueError) as caught:
            pleat.Network.from_arrays([[[float("nan")]]], [[0]])
        self.assertIn("weights[0][0][0]", str(caught.exception))


class TorchTest(unittest.TestCase):
    def model(self):
        import torch
        torch.manual_seed(5)
        return torch.nn.Sequential(torch.nn.Flatten(), torch.nn.Linear(3, 5), torch.nn.ReLU(),
                                   torch.nn.Linear(5, 4), torch.nn.ReLU(), torch.nn.Identity(),
                                   torch.nn.Linear(4, 2))

    def test_from_torch_equals_the_onnx_import_bit_for_bit(self):
        import torch
        model = self.model()
        with tempfile.TemporaryDirectory() as work:
            path = os.path.join(work, "model.onnx")
            torch.onnx.export(model, torch.zeros(1, 3), path, input_names=["x"], output_names=["y"])
            from_onnx = pleat.Network.from_file(path)
        from_torch = pleat.Network.from_torch(model)
        self.assertEqual(from_torch.weights, from_onnx.weights)
        self.assertEqual(from_torch.biases, from_onnx.biases)
        # and each is the float32 value itself
        self.assertEqual(from_torch.weights[1][2][3], Fraction(float(model[3].weight[2, 3])))

    def test_exact_output_agrees_with_torch(self):
        import torch
        model = self.model().double()
        net = pleat.Network.from_torch(model)
        x = [0.5, -1.25, 2.0]
        exact = net.eval(x).output
        with torch.no_grad():
            y = model(torch.tensor([x], dtype=torch.float64))[0].tolist()
        for e, f in zip(exact, y):
            self.assertAlmostEqual(float(e), f, places=12)

    def test_to_torch_round_trip(self):
        model = self.model()
        net = pleat.Network.from_torch(model)
        self.assertEqual(pleat.Network.from_torch(net.to_torch()), net)  # float64 holds float32 exactly

    def test_output_relu_and_refusals(self):
        import torch
        net = pleat.Network.from_torch(torch.nn.Sequential(torch.nn.Linear(2, 3), torch.nn.ReLU(),
                                                           torch.nn.Linear(3, 1), torch.nn.ReLU()))
        self.assertTrue(net.output_relu)
        with self.assertRaises(ValueError) as caught:
            pleat.Network.from_torch(torch.nn.Sequential(torch.nn.Linear(2, 3), torch.nn.Tanh()))
        self.assertIn("model[1] (Tanh)", str(caught.exception))
        with self.assertRaises(ValueError) as caught:
            pleat.Network.from_torch(torch.nn.Sequential(torch.nn.Linear(2, 3), torch.nn.Linear(3, 1)))
        self.assertIn("model[1] (Linear)", str(caught.exception))


class RandomTest(unittest.TestCase):
    def cli_random(self, *arguments):
        result = subprocess.run([harness.PLEAT, "random", *arguments], capture_output=True, text=True,
                                check=True, timeout=60)
        return result.stdout

    def test_same_network_as_the_cli(self):
        net = pleat.Network.random([2, 5, 4, 1], 7, sample=3, init="uniform", digits=3)
        self.assertEqual(net.to_json(), self.cli_random("--arch", "2,5,4,1", "--seed", "7", "--sample", "3",
                                                        "--init", "uniform", "--digits", "3"))
        default = pleat.Network.random([3, 4, 1], 2**64 - 1)
        self.assertEqual(json.loads(default.to_json()),
                         json.loads(self.cli_random("--arch", "3,4,1", "--seed", str(2**64 - 1))))
        self.assertNotEqual(pleat.Network.random([3, 4, 1], 1, sample=1), pleat.Network.random([3, 4, 1], 1))

    def test_is_the_survey_sample(self):
        survey = pleat.survey([2, 4, 3, 1], 4, 11, threads=1)
        for record in survey.samples:
            result = pleat.Network.random([2, 4, 3, 1], 11, sample=record.sample).certify(threads=1)
            self.assertTrue(result.certified)
            self.assertEqual(result.functional_dimension, record.functional_dimension)

    def test_draws_follow_the_documented_distributions(self):
        from scipy import stats  # outside reference: scipy's Kolmogorov-Smirnov test
        he = pleat.Network.random([50, 200, 1], 3, digits=12)
        weights = [float(w) for row in he.weights[0] for w in row]  # 10000 draws, fan-in 50
        self.assertGreater(stats.kstest(weights, stats.norm(scale=(2 / 50) ** 0.5).cdf).pvalue, 1e-3)
        self.assertLess(stats.kstest(weights, stats.norm(scale=(1 / 50) ** 0.5).cdf).pvalue, 1e-6)
        uniform = pleat.Network.random([50, 200, 1], 3, init="uniform", digits=12)
        bound = 50 ** -0.5
        draws = [float(w) for row in uniform.weights[0] for w in row] + [float(b) for b in uniform.biases[0]]
        self.assertLessEqual(max(abs(x) for x in draws), bound)
        self.assertGreater(stats.kstest(draws, stats.uniform(loc=-bound, scale=2 * bound).cdf).pvalue, 1e-3)

    def test_bad_arguments_name_the_argument(self):
        for arguments, expected in (((([2], 1)), "arch: give the input width"),
                                    ((([2, 0, 1], 1)), "arch[1]: expected an integer from 1"),
                                    # A string was taken apart character by character, a number "not iterable".
                                    ((("2,3,1", 1)), "arch: expected a list of layer widths, input first, such as "
                                                     "[2, 8, 8, 1], got '2,3,1'"),
                                    (((5, 1)), "arch: expected a list of layer widths"),
                                    ((([2, 3, 1], -1)), "seed: expected an integer from 0"),
                                    ((([2, 3, 1], 1.5)), "seed: expected an integer")):
            with self.assertRaises(ValueError) as caught:
                pleat.Network.random(*arguments)
            self.assertIn(expected, str(caught.exception))
        with self.assertRaises(ValueError) as caught:
            pleat.Network.random([2, 3, 1], 1, digits=41)
        self.assertIn("digits: expected an integer from 1 to 40", str(caught.exception))
        with self.assertRaises(ValueError) as caught:
            pleat.Network.random([2, 3, 1], 1, init="xavier")
        self.assertEqual(str(caught.exception), "init: expected he or uniform, got 'xavier'")


class DocumentationTest(unittest.TestCase):
    def test_certify_help_explains_the_result_fields(self):
        text = pleat.Network.certify.__doc__
        for name in ("functional_dimension", "lower_bound", "upper_bound", "certified", "evidence", "extra_kernel"):
            self.assertIn(name, text)

    def test_module_docstring_example_runs(self):
        import doctest
        here = os.getcwd()
        os.chdir(harness.SOURCE)  # the example reads data/fold2d.json
        try:
            failures, tried = doctest.testmod(pleat)
        finally:
            os.chdir(here)
        self.assertGreater(tried, 0)
        self.assertEqual(failures, 0)

    def test_stub_files_are_installed_next_to_the_module(self):
        folder = os.path.dirname(pleat.__file__)
        self.assertTrue(os.path.exists(os.path.join(folder, "_core.pyi")))
        self.assertTrue(os.path.exists(os.path.join(folder, "py.typed")))


if __name__ == "__main__":
    harness.main()
