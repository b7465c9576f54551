#!/usr/bin/env python3
"""ONNX import of networks built with the ONNX Python helpers.

Outside references: the ONNX Python package (Debian python3-onnx 1.12,
onnx.helper builds the models, onnx.checker.check_model accepts them) and
numpy (float64 evaluation of each graph by the operator definitions of the
ONNX operator documentation: Gemm Y = alpha * A' B' + beta * C, MatMul,
Add with broadcasting, Relu). onnx 1.12 has no runtime of its own
(onnx.reference arrived in 1.13), so numpy is the float evaluation here.

Checked for each model: the imported weights are exactly the stored floats
(alpha and beta folded in exactly: W = alpha B'^T, b = beta C, computed here
in fractions from numpy's float values); pleat eval --json at random points
equals an exact fractions evaluation of those weights and is within float
tolerance of numpy's evaluation of the graph.

Models: Gemm with transB = 0, alpha 0.75 and beta 0.1 (a float32 that is not
1/10), C of shape [1, m]; Gemm transB = 1; MatMul + Add in float64 stored
in typed double_data with Identity and Reshape [0, n]; float16 weights in
raw bytes and in int32_data (subnormals included); bias added before or
after the product; a rank-1 input with Flatten axis 0.

Usage: onnx_helper_test.py PLEAT_BINARY SOURCE_DIR  (exit 77 = skipped)
"""
import os
import sys
import tempfile
from fractions import Fraction

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from onnx_reference import Checker, exact_forward, exact_layers, import_model, pleat_eval  # noqa: E402

try:
    import numpy as np
    import onnx
    from onnx import TensorProto, helper
except ImportError:
    print("onnx or numpy is not installed: skipping")
    sys.exit(77)

pleat = sys.argv[1]
checker = Checker()
rng = np.random.default_rng(8)
TYPES = {np.float32: TensorProto.FLOAT, np.float64: TensorProto.DOUBLE, np.float16: TensorProto.FLOAT16}


def tensor(name, array, raw=True):
    array = np.asarray(array)
    data_type = TYPES[array.dtype.type]
    values = array.tobytes() if raw else array.flatten().tolist()
    return helper.make_tensor(name, data_type, list(array.shape), values, raw=raw)


def exact(value):
    return Fraction(float(value))  # every float16/32/64 is exactly a double


class Model:
    """A chain graph built node by node, with the layers it should import as."""

    def __init__(self, name, input_shape, dtype):
        self.name, self.dtype, self.nodes, self.initializers = name, dtype, [], []
        self.input = helper.make_tensor_value_info("x", TYPES[dtype], input_shape)
        self.current, self.count = "x", 0
        self.expected = []  # [(weights rows as Fractions, bias as Fractions, has_relu)]
        self.numpy_steps = []

    def value(self):
        self.count += 1
        return f"v{self.count}"

    def gemm(self, fan_in, width, trans_b, alpha, beta, c_shape, raw=True):
        b = rng.normal(size=(width, fan_in) if trans_b else (fan_in, width)).astype(self.dtype)
        c = rng.normal(size=c_shape).astype(self.dtype)
        out = self.value()
        self.initializers += [tensor(out + "_B", b, raw), tensor(out + "_C", c, raw)]
        self.nodes.append(helper.make_node("Gemm", [self.current, out + "_B", out + "_C"], [out], name="gemm_" + out,
                                           transB=trans_b, alpha=alpha, beta=beta))
        alpha32, beta32 = exact(np.float32(alpha)), exact(np.float32(beta))  # attributes are float32
        bt = b if trans_b else b.T  # W = alpha B'^T, rows = neurons
        c_flat = np.broadcast_to(c.reshape(-1), (width,))
        self.expected.append(([[alpha32 * exact(v) for v in row] for row in bt],
                              [beta32 * exact(v) for v in c_flat], False))
        self.numpy_steps.append(lambda y, bt=bt, c=c, a=float(np.float32(alpha)), be=float(np.float32(beta)):
                                a * (y @ bt.astype(np.float64).T) + be * c.astype(np.float64))
        self.current = out

    def matmul_add(self, fan_in, width, bias_first, raw=True, w=None):
        w = rng.normal(size=(fan_in, width)).astype(self.dtype) if w is None else w
        bias = rng.normal(size=(width,)).astype(self.dtype)
        product, out = self.value(), self.value()
        self.initializers += [tensor(out + "_W", w, raw), tensor(out + "_b", bias, raw)]
        self.nodes.append(helper.make_node("MatMul", [self.current, out + "_W"], [product], name="matmul_" + out))
        inputs = [out + "_b", product] if bias_first else [product, out + "_b"]
        self.nodes.append(helper.make_node("Add", inputs, [out], name="add_" + out))
        self.expected.append(([[exact(v) for v in row] for row in w.T], [exact(v) for v in bias], False))
        self.numpy_steps.append(lambda y, w=w, bias=bias: y @ w.astype(np.float64) + bias.astype(np.float64))
        self.current = out

    def relu(self):
        out = self.value()
        self.nodes.append(helper.make_node("Relu", [self.current], [out], name="relu_" + out))
        weights, bias, _ = self.expected[-1]
        self.expected[-1] = (weights, bias, True)
        self.numpy_steps.append(lambda y: np.maximum(y, 0.0))
        self.current = out

    def passthrough(self, op, extra_inputs=(), **attributes):
        out = self.value()
        self.nodes.append(helper.make_node(op, [self.current, *extra_inputs], [out], name=op.lower() + "_" + out,
                                           **attributes))
        self.current = out

    def check(self, input_dim, output_shape):
        output = helper.make_tensor_value_info(self.current, TYPES[self.dtype], output_shape)
        graph = helper.make_graph(self.nodes, self.name, [self.input], [output], self.initializers)
        model = helper.make_model(graph, producer_name="onnx-helper-test", opset_imports=[helper.make_opsetid("", 13)])
        onnx.checker.check_model(model)
        with tempfile.TemporaryDirectory() as work:
            model_path = os.path.join(work, self.name + ".onnx")
            network_path = os.path.join(work, self.name + ".json")
            onnx.save(model, model_path)
            document = import_model(pleat, model_path, network_path)
            layers = exact_layers(document)
            checker.check(document["input_dim"] == input_dim, f"{self.name}: input_dim")
            checker.check(len(layers) == len(self.expected), f"{self.name}: {len(layers)} layers")
            for k, ((weights, bias, activation), (want_w, want_b, has_relu)) in enumerate(zip(layers, self.expected)):
                checker.check(weights == want_w, f"{self.name}: layer {k + 1} weights are not the stored floats")
                checker.check(bias == want_b, f"{self.name}: layer {k + 1} bias is not the stored floats")
                checker.check((activation == "relu") == has_relu, f"{self.name}: layer {k + 1} activation")
            for trial in range(5):
                x = (rng.normal(size=input_dim) * 2).astype(self.dtype)
                point = [exact(v) for v in x]
                pleat_output = pleat_eval(pleat, model_path, point)
                reference = exact_forward(layers, point)
                checker.check(pleat_output == reference, f"{self.name}: pleat {pleat_output} != fractions {reference}")
                y = x.astype(np.float64).reshape(1, -1)
                for step in self.numpy_steps:
                    y = step(y)
                ok = all(abs(float(e) - v) <= 1e-9 * (1 + abs(v)) for e, v in zip(pleat_output, y.reshape(-1)))
                checker.check(ok, f"{self.name}: numpy {y.reshape(-1)} vs exact {[float(v) for v in pleat_output]}")


m = Model("gemm_alpha_beta", ["batch", 3], np.float32)
m.gemm(3, 5, trans_b=0, alpha=0.75, beta=0.1, c_shape=(1, 5))
m.relu()
m.gemm(5, 2, trans_b=1, alpha=1.0, beta=1.0, c_shape=(2,))
m.check(3, ["batch", 2])

m = Model("matmul_add_double_typed", [1, 4], np.float64)
m.matmul_add(4, 6, bias_first=False, raw=False)
m.relu()
m.passthrough("Identity")
shape = helper.make_tensor("shape", TensorProto.INT64, [2], [0, 6])
m.initializers.append(shape)
m.passthrough("Reshape", ["shape"])
m.matmul_add(6, 3, bias_first=True, raw=False)
m.check(4, [1, 3])

# float16 weights including a subnormal (5 * 2^-24) and the largest finite
# value (65504), which must come out exactly.
half_weights = np.array([[5 * 2.0 ** -24, 1, 65504, -0.5], [0.25, -3, 1e-3, 7.5]]).astype(np.float16)
for raw in (True, False):
    m = Model("half_" + ("raw" if raw else "typed"), [7, 2], np.float16)
    m.matmul_add(2, 4, bias_first=False, raw=raw, w=half_weights)
    m.relu()
    m.gemm(4, 3, trans_b=1, alpha=2.0, beta=-0.5, c_shape=(3,), raw=raw)
    m.relu()
    m.matmul_add(3, 1, bias_first=True, raw=raw)
    m.check(2, [7, 1])
    checker.check(m.expected[0][0][0][0] == Fraction(5, 2 ** 24) and m.expected[0][0][2][0] == 65504,
                  "float16 subnormal and maximum taken as themselves")

m = Model("vector_flatten", [3], np.float32)
m.passthrough("Flatten", axis=0)
m.gemm(3, 2, trans_b=1, alpha=1.0, beta=1.0, c_shape=(2,))
m.check(3, [1, 2])

checker.finish("onnx.helper models import exactly")
