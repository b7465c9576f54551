#!/usr/bin/env python3
"""ONNX import refuses what is not a fully connected ReLU network, and says why.

The bad models are built with the ONNX Python helpers (Debian python3-onnx,
onnx.helper); each must make `pleat import` exit with code 2 and a message
naming the node, its operator type and the reason (or, for file-level
faults, the file and the fault), and write no output file. Each case starts
from a valid two-layer network that imports, so a refusal is caused by the
one change the case makes.

Usage: onnx_reject_test.py PLEAT_BINARY SOURCE_DIR  (exit 77 = skipped)
"""
import atexit
import os
import shutil
import sys
import tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from onnx_reference import Checker, run  # noqa: E402

try:
    import numpy as np
    import onnx
    from onnx import TensorProto, helper
except ImportError:
    print("onnx or numpy is not installed: skipping")
    sys.exit(77)

pleat = sys.argv[1]
checker = Checker()
work = tempfile.mkdtemp(prefix="pleat-onnx-reject-")
atexit.register(shutil.rmtree, work, ignore_errors=True)
rng = np.random.default_rng(3)


def weights(name, shape, values=None):
    array = rng.normal(size=shape).astype(np.float32) if values is None else np.array(values, dtype=np.float32)
    return helper.make_tensor(name, TensorProto.FLOAT, list(array.shape), array.tobytes(), raw=True)


def save(name, nodes, initializers, inputs=None, outputs=None, opset=13):
    inputs = inputs or [helper.make_tensor_value_info("x", TensorProto.FLOAT, ["N", 3])]
    outputs = outputs or [helper.make_tensor_value_info("y", TensorProto.FLOAT, None)]
    graph = helper.make_graph(nodes, name, inputs, outputs, initializers)
    model = helper.make_model(graph, opset_imports=[helper.make_opsetid("", opset)])
    path = os.path.join(work, name + ".onnx")
    with open(path, "wb") as handle:
        handle.write(model.SerializeToString())
    return path


def base_initializers():
    return [weights("W1", (4, 3)), weights("b1", (4,)), weights("W2", (2, 4)), weights("b2", (2,))]


def gemm(name, data, w, b, out):
    return helper.make_node("Gemm", [data, w, b], [out], name=name, transB=1)


def expect_refused(case, path, *needles):
    output = os.path.join(work, case + ".json")
    code, out, err = run(pleat, "import", path, "-o", output)
    checker.check(code == 2, f"{case}: exit code {code}, expected 2 (stderr: {err.strip()})")
    for needle in needles:
        checker.check(needle in err, f"{case}: expected {needle!r} in: {err.strip()}")
    checker.check(not os.path.exists(output), f"{case}: an output file was written")
    checker.check("internal error" not in err, f"{case}: internal error: {err.strip()}")


# The valid starting point, so every refusal below is caused by its own change.
good = save("good", [gemm("gemm1", "x", "W1", "b1", "h"), helper.make_node("Relu", ["h"], ["r"], name="relu1"),
                     gemm("gemm2", "r", "W2", "b2", "y")], base_initializers())
code, _, err = run(pleat, "import", good, "-o", os.path.join(work, "good.json"))
checker.check(code == 0, f"the valid base model was refused: {err}")

# A convolution.
conv_path = save("conv", [helper.make_node("Conv", ["x", "K"], ["c"], name="conv1"),
                          gemm("gemm2", "c", "W2", "b2", "y")],
                 [weights("K", (1, 1, 1)), weights("W2", (2, 3)), weights("b2", (2,))],
                 inputs=[helper.make_tensor_value_info("x", TensorProto.FLOAT, [1, 1, 3])])
expect_refused("conv_input", conv_path, "graph input 'x'", "3 axes")
conv_path = save("conv2", [helper.make_node("Conv", ["x", "K"], ["c"], name="conv1"),
                           gemm("gemm2", "c", "W2", "b2", "y")],
                 [weights("K", (1, 1, 1)), weights("W2", (2, 3)), weights("b2", (2,))])
expect_refused("conv", conv_path, "node 'conv1' (Conv)", "convolution")

# Non-ReLU activations.
for op in ("Sigmoid", "Tanh", "LeakyRelu"):
    path = save("act_" + op, [gemm("gemm1", "x", "W1", "b1", "h"), helper.make_node(op, ["h"], ["r"], name="act"),
                              gemm("gemm2", "r", "W2", "b2", "y")], base_initializers())
    expect_refused("activation " + op, path, f"node 'act' ({op})", "not a ReLU activation")

# A skip connection: the ReLU output feeds the next layer and a later Add.
skip = save("skip", [gemm("gemm1", "x", "W1", "b1", "h"), helper.make_node("Relu", ["h"], ["r"], name="relu1"),
                     gemm("gemm2", "r", "W_sq", "b1", "g"), helper.make_node("Add", ["g", "r"], ["s"], name="skip_add"),
                     gemm("gemm3", "s", "W2", "b2", "y")], base_initializers() + [weights("W_sq", (4, 4))])
expect_refused("skip connection", skip, "node 'gemm2' (Gemm)", "node 'skip_add' (Add)", "skip connection")
# A residual on the input x + f(x), written with the input twice in one Add.
twice = save("twice", [helper.make_node("Add", ["x", "x"], ["d"], name="double"),
                       gemm("gemm1", "d", "W1", "b1", "y")], base_initializers()[:2])
expect_refused("same value twice", twice, "node 'double' (Add)", "skip connection")

# Two graph inputs.
two = save("two_inputs", [gemm("gemm1", "x", "W1", "b1", "h"), helper.make_node("Add", ["h", "z"], ["y"], name="add")],
           base_initializers()[:2], inputs=[helper.make_tensor_value_info("x", TensorProto.FLOAT, ["N", 3]),
                                            helper.make_tensor_value_info("z", TensorProto.FLOAT, ["N", 4])])
expect_refused("two inputs", two, "2 inputs", "'x'", "'z'", "exactly one input")

# NaN and infinite weights, named with their node and element.
for label, bad in (("nan", float("nan")), ("inf", float("inf")), ("-inf", float("-inf"))):
    values = rng.normal(size=(4, 3))
    values[1, 2] = bad
    path = save("weight_" + label, [gemm("gemm1", "x", "W1", "b1", "h"),
                                    helper.make_node("Relu", ["h"], ["r"], name="relu1"),
                                    gemm("gemm2", "r", "W2", "b2", "y")],
                [weights("W1", (4, 3), values)] + base_initializers()[1:])
    expect_refused("weight " + label, path, "node 'gemm1' (Gemm)", "input 'W1'", "element 5", "NaN or infinite")
path = save("alpha_nan", [helper.make_node("Gemm", ["x", "W1", "b1"], ["y"], name="g", transB=1, alpha=float("nan"))],
            base_initializers()[:2])
expect_refused("alpha NaN", path, "node 'g' (Gemm)", "alpha", "NaN")

# A symbolic feature dimension.
path = save("symbolic_features", [gemm("gemm1", "x", "W1", "b1", "y")], base_initializers()[:2],
            inputs=[helper.make_tensor_value_info("x", TensorProto.FLOAT, ["N", "features"])])
expect_refused("symbolic features", path, "'features'", "not a fixed positive number")

# Two affine layers with no ReLU between them; a ReLU with no layer before it.
path = save("no_relu", [gemm("gemm1", "x", "W1", "b1", "h"), gemm("gemm2", "h", "W2", "b2", "y")], base_initializers())
expect_refused("no relu", path, "node 'gemm2' (Gemm)", "no Relu between")
path = save("relu_first", [helper.make_node("Relu", ["x"], ["r"], name="r0"), gemm("gemm1", "r", "W1", "b1", "y")],
            base_initializers()[:2])
expect_refused("relu first", path, "node 'r0' (Relu)", "no layer before")

# A Gemm whose weight input is left empty (found by the ONNX fuzzer: it once
# ended in "internal error: map::at"; fuzz/regressions/onnx/ keeps that file).
path = save("empty_weight", [helper.make_node("Gemm", ["x", "", "b1"], ["y"], name="g", transB=1)],
            base_initializers()[:2])
expect_refused("empty weight input", path, "node 'g' (Gemm)", "expected a constant", "found none")

# The data in Gemm's second input; transA = 1.
path = save("data_as_b", [helper.make_node("Gemm", ["W1", "x", "b1"], ["y"], name="g")], base_initializers()[:2])
expect_refused("data as B", path, "node 'g' (Gemm)", "the data must be input 0")
path = save("trans_a", [helper.make_node("Gemm", ["x", "W1", "b1"], ["y"], name="g", transA=1, transB=1)],
            base_initializers()[:2])
expect_refused("transA", path, "node 'g' (Gemm)", "transA")

# Shapes that do not match; a Reshape that changes the vector.
path = save("mismatch", [gemm("gemm1", "x", "W2", "b2", "y")], base_initializers()[2:])
expect_refused("shape mismatch", path, "node 'gemm1' (Gemm)", "take 4 features, the input has 3")
shape = helper.make_tensor("shape", TensorProto.INT64, [1], [-1])
path = save("reshape_merge", [helper.make_node("Reshape", ["x", "shape"], ["f"], name="flat"),
                              gemm("gemm1", "f", "W1", "b1", "y")], base_initializers()[:2] + [shape])
expect_refused("reshape merges batch", path, "node 'flat' (Reshape)", "batch")

# A node off the path; weights in an external file.
path = save("dead", [gemm("gemm1", "x", "W1", "b1", "y"), helper.make_node("Relu", ["W2"], ["unused"], name="dead")],
            base_initializers())
expect_refused("node off the path", path, "node 'dead' (Relu)", "not on the path")
external = weights("W1", (4, 3))
external.ClearField("raw_data")
external.data_location = TensorProto.EXTERNAL
entry = external.external_data.add()
entry.key, entry.value = "location", "weights.bin"
path = save("external", [gemm("gemm1", "x", "W1", "b1", "y")], [external] + base_initializers()[1:2])
expect_refused("external data", path, "node 'gemm1' (Gemm)", "external file")

# Declared sizes: a weight tensor claiming 2^40 x 2^40 elements, raw bytes
# shorter than the shape, an opset before 7.
def raw_tensor(name, dims, data):
    """A float32 tensor whose shape need not match its bytes (helper.make_tensor checks)."""
    tensor = TensorProto(name=name, data_type=TensorProto.FLOAT, dims=dims)
    tensor.raw_data = data
    return tensor


huge = raw_tensor("W1", [2 ** 40, 2 ** 40], b"\0" * 16)
path = save("huge_dims", [gemm("gemm1", "x", "W1", "b1", "y")], [huge] + base_initializers()[1:2])
expect_refused("huge declared tensor", path, "node 'gemm1' (Gemm)", "declared size")
short = raw_tensor("W1", [4, 3], b"\0" * 40)
path = save("short_raw", [gemm("gemm1", "x", "W1", "b1", "y")], [short] + base_initializers()[1:2])
expect_refused("short raw data", path, "node 'gemm1' (Gemm)", "40 bytes", "need 48")
path = save("old_opset", [gemm("gemm1", "x", "W1", "b1", "y")], base_initializers()[:2], opset=6)
expect_refused("old opset", path, "opset 6")

# Files that are not ONNX models: text, a truncated model, a protobuf length
# field claiming 2 GiB, an empty file, and a file above 512 MiB (sparse, so
# creating it costs nothing; it must be refused before reading).
with open(good, "rb") as handle:
    good_bytes = handle.read()
cases = {"text": b"not a model at all\n", "truncated": good_bytes[: len(good_bytes) // 2],
         "length_2GiB": b"\x08\x07\x3a\xff\xff\xff\xff\x07" + b"\0" * 32, "empty": b""}
for case, data in cases.items():
    path = os.path.join(work, case + ".onnx")
    with open(path, "wb") as handle:
        handle.write(data)
    expect_refused("file " + case, path, path + ": ", "not an ONNX model")
big = os.path.join(work, "big.onnx")
with open(big, "wb") as handle:
    handle.truncate(513 * 2 ** 20)
expect_refused("file above 512 MiB", big, big + ": ", "larger than the 512 MiB")
os.remove(big)
expect_refused("missing file", os.path.join(work, "missing.onnx"), "missing.onnx: cannot read")

checker.finish("every malformed or unsupported ONNX model is refused with its reason")
