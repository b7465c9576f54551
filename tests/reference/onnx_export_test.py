#!/usr/bin/env python3
"""pleat export: networks as ONNX models (Gemm + Relu, float64), and back.

Outside references: the ONNX Python package (Debian python3-onnx:
onnx.checker.check_model accepts the file, onnx.numpy_helper reads its
initializers), numpy (float64 evaluation of the exported graph), and
CPython's Fraction.__float__, which rounds a rational to the nearest double
with ties to even (it divides exact integers with correct rounding).

Checked:
- round trip: a network whose parameters are all float64 values (including
  2^-1074, 2^1000 and an output ReLU) exports without a warning and imports
  back to the identical network (input_dim, every weight and bias, every
  activation);
- a network with decimal parameters (data/fold2d.json) exports with one
  warning line per parameter that float64 cannot hold, and exactly those;
  each stored float64 is the nearest double, ties to even (1 + 2^-53 and
  3 * 2^-1075 are exact ties, the latter among subnormals, and
  2^-1075 + 2^-1140 must become 2^-1074, not the 0 a double rounding gives);
- the exported graph is Gemm/Relu with float64 initializers and numpy's
  evaluation of it agrees with pleat's exact output;
- a parameter beyond the float64 range is refused with its name.

Usage: onnx_export_test.py PLEAT_BINARY SOURCE_DIR  (exit 77 = skipped)
"""
import atexit
import json
import os
import random
import shutil
import sys
import tempfile
from fractions import Fraction

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from onnx_reference import Checker, exact_forward, exact_layers, pleat_eval, run  # noqa: E402

try:
    import numpy as np
    import onnx
    from onnx import numpy_helper
except ImportError:
    print("onnx or numpy is not installed: skipping")
    sys.exit(77)

pleat, source_dir = sys.argv[1], sys.argv[2]
checker = Checker()
work = tempfile.mkdtemp(prefix="pleat-onnx-export-")
atexit.register(shutil.rmtree, work, ignore_errors=True)
generator = random.Random(12)


def text(value):
    value = Fraction(value)
    return f"{value.numerator}/{value.denominator}" if value.denominator != 1 else str(value.numerator)


def parameter_names(document):
    """pleat's parameter names in order (spec: W1[i,j] row-major, then b1[i])."""
    names = []
    for k, layer in enumerate(document["layers"]):
        names += [(f"W{k + 1}[{i},{j}]", v) for i, row in enumerate(layer["weights"]) for j, v in enumerate(row)]
        names += [(f"b{k + 1}[{i}]", v) for i, v in enumerate(layer["bias"])]
    return names


def export(network_path, model_path):
    return run(pleat, "export", network_path, "-o", model_path)


def check_graph(case, model_path, document):
    model = onnx.load(model_path)
    onnx.checker.check_model(model)
    ops = [node.op_type for node in model.graph.node]
    relus = sum(layer.get("activation", "relu" if k + 1 < len(document["layers"]) else "linear") == "relu"
                for k, layer in enumerate(document["layers"]))
    checker.check(ops.count("Gemm") == len(document["layers"]) and ops.count("Relu") == relus,
                  f"{case}: graph ops {ops}")
    checker.check(all(t.data_type == onnx.TensorProto.DOUBLE for t in model.graph.initializer),
                  f"{case}: initializers not all float64")
    return {t.name: numpy_helper.to_array(t) for t in model.graph.initializer}


def numpy_forward(arrays, document, x):
    y = np.array(x, dtype=np.float64).reshape(1, -1)
    for k, layer in enumerate(document["layers"]):
        y = y @ arrays[f"W{k + 1}"].T + arrays[f"b{k + 1}"]  # Gemm, transB = 1
        if layer.get("activation", "relu" if k + 1 < len(document["layers"]) else "linear") == "relu":
            y = np.maximum(y, 0.0)
    return y.reshape(-1)


# ---- Round trip of a network whose parameters are all float64 values --------
layers, fan_in = [], 3
for k, width in enumerate((5, 4, 2)):
    weights = [[text(generator.gauss(0, 1)) for _ in range(fan_in)] for _ in range(width)]
    bias = [text(generator.gauss(0, 1)) for _ in range(width)]
    layers.append({"weights": weights, "bias": bias})
    fan_in = width
layers[0]["weights"][0][0] = text(Fraction(1, 2 ** 1074))  # the smallest subnormal
layers[1]["bias"][1] = text(Fraction(2 ** 1000))
layers[2]["activation"] = "relu"
document = {"format": "pleat-network/1", "name": "round trip", "input_dim": 3, "layers": layers}
network_path = os.path.join(work, "dyadic.json")
with open(network_path, "w") as handle:
    json.dump(document, handle)
model_path = os.path.join(work, "dyadic.onnx")
code, _, err = export(network_path, model_path)
checker.check(code == 0 and err == "", f"round trip: export exited {code} with stderr {err!r}")
check_graph("round trip", model_path, document)
back_path = os.path.join(work, "dyadic_back.json")
code, _, err = run(pleat, "import", model_path, "-o", back_path)
checker.check(code == 0, f"round trip: import exited {code}: {err}")
with open(back_path) as handle:
    back = json.load(handle)
checker.check(back["input_dim"] == 3, "round trip: input_dim")
checker.check(exact_layers(back) == exact_layers(document), "round trip: the imported network differs")
checker.check(back.get("name") == "round trip", f"round trip: name {back.get('name')!r}")

# ---- Decimal parameters: warnings, nearest rounding, ties to even ----------
with open(os.path.join(source_dir, "data", "fold2d.json")) as handle:
    fold = json.load(handle, parse_float=str, parse_int=str)
fold["layers"][0]["bias"][0] = text(1 + Fraction(1, 2 ** 53))       # tie: rounds down to 1 (even)
fold["layers"][0]["bias"][1] = text(Fraction(3, 2 ** 1075))          # tie among subnormals: 2^-1073
fold["layers"][0]["bias"][2] = text(1 + Fraction(3, 2 ** 53))        # tie: rounds up to 1 + 2^-51 (even)
fold["layers"][0]["bias"][3] = text(Fraction(1, 2 ** 1075) + Fraction(1, 2 ** 1140))  # just above a tie: 2^-1074
network_path = os.path.join(work, "fold.json")
with open(network_path, "w") as handle:
    json.dump(fold, handle)
model_path = os.path.join(work, "fold.onnx")
code, _, err = export(network_path, model_path)
checker.check(code == 0, f"decimal: export exited {code}: {err}")
inexact = [name for name, value in parameter_names(fold) if Fraction(float(Fraction(value))) != Fraction(value)]
named = [line.split(" = ")[0].strip() for line in err.splitlines()[1:]]
checker.check(inexact and named == inexact, f"decimal: warned about {named}, float64 cannot hold {inexact}")
checker.check("rounded to nearest" in err and "fold.onnx" in err, f"decimal: warning header: {err.splitlines()[:1]}")
arrays = check_graph("decimal", model_path, fold)
for k, layer in enumerate(fold["layers"]):
    stored_w, stored_b = arrays[f"W{k + 1}"], arrays[f"b{k + 1}"]
    want_w = [[float(Fraction(v)) for v in row] for row in layer["weights"]]
    want_b = [float(Fraction(v)) for v in layer["bias"]]
    checker.check(stored_w.tolist() == want_w and stored_b.tolist() == want_b,
                  f"decimal: layer {k + 1} stored values are not the nearest doubles")
checker.check(arrays["b1"][0] == 1.0 and arrays["b1"][1] == 2.0 ** -1073 and arrays["b1"][2] == 1 + 2.0 ** -51
              and arrays["b1"][3] == 2.0 ** -1074, f"decimal: not nearest, ties to even: {arrays['b1'][:4].tolist()}")
fold_layers = exact_layers(fold)
for trial in range(5):
    point = [Fraction(generator.randint(-40, 40), 8) for _ in range(2)]
    exact = pleat_eval(pleat, network_path, point)
    checker.check(exact == exact_forward(fold_layers, point), "decimal: pleat eval differs from fractions")
    approximate = numpy_forward(arrays, fold, [float(v) for v in point])
    ok = all(abs(float(e) - a) <= 1e-12 * (1 + abs(float(e))) for e, a in zip(exact, approximate))
    checker.check(ok, f"decimal: numpy on the exported model {approximate} vs exact {exact}")

# ---- Beyond float64 ----------------------------------------------------------
fold["layers"][1]["weights"][0][2] = text(Fraction(2 ** 1100))
with open(network_path, "w") as handle:
    json.dump(fold, handle)
code, _, err = export(network_path, os.path.join(work, "huge.onnx"))
checker.check(code == 2 and "W2[0,2]" in err and "float64 range" in err, f"beyond float64: exit {code}, {err!r}")

checker.finish("export writes Gemm/Relu float64 models, warns on rounding, round-trips exactly")
