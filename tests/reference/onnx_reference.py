"""Shared helpers of the ONNX reference tests (onnx_*_test.py): running pleat,
reading the network it writes, and an exact evaluation of our own in Python
fractions (independent of pleat's C++ code)."""
import json
import subprocess
from fractions import Fraction


class Checker:
    """Collects failures so one run reports all of them."""

    def __init__(self):
        self.failures = []

    def check(self, condition, message):
        if not condition:
            self.failures.append(message)

    def finish(self, what):
        for failure in self.failures:
            print("FAIL:", failure)
        if self.failures:
            raise SystemExit(1)
        print("ok:", what)


def run(pleat, *args):
    """(exit code, stdout, stderr) of one pleat call."""
    done = subprocess.run([pleat, *args], capture_output=True, text=True, timeout=120)
    return done.returncode, done.stdout, done.stderr


def import_model(pleat, model_path, network_path):
    code, _, err = run(pleat, "import", model_path, "-o", network_path)
    if code != 0:
        raise SystemExit(f"FAIL: pleat import {model_path} exited {code}: {err}")
    with open(network_path) as handle:
        return json.load(handle)


def exact_layers(document):
    """[(weights rows, bias, activation)] with every number a Fraction."""
    layers = []
    for k, layer in enumerate(document["layers"]):
        weights = [[Fraction(v) for v in row] for row in layer["weights"]]
        bias = [Fraction(v) for v in layer["bias"]]
        is_last = k + 1 == len(document["layers"])
        layers.append((weights, bias, layer.get("activation", "linear" if is_last else "relu")))
    return layers


def exact_forward(layers, point):
    """The network's output at `point` (Fractions), computed exactly."""
    y = list(point)
    for weights, bias, activation in layers:
        z = [sum((w * v for w, v in zip(row, y)), Fraction(0)) + b for row, b in zip(weights, bias)]
        y = [max(v, Fraction(0)) for v in z] if activation == "relu" else z
    return y


def point_argument(point):
    """Exact coordinates for --at: 'p/q' strings (a float's repr would not be exact)."""
    return ",".join(f"{Fraction(v).numerator}/{Fraction(v).denominator}" for v in point)


def pleat_eval(pleat, network_path, point):
    """pleat eval --json output at an exact point, as Fractions."""
    code, out, err = run(pleat, "eval", network_path, "--at", point_argument(point), "--json")
    if code != 0:
        raise SystemExit(f"FAIL: pleat eval {network_path} exited {code}: {err}")
    return [Fraction(v) for v in json.loads(out)["output"]]


def close(exact, approximate, tolerance):
    return all(abs(float(e) - float(a)) <= tolerance * (1 + abs(float(e))) for e, a in zip(exact, approximate))
