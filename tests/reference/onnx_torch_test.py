#!/usr/bin/env python3
"""ONNX import of networks built and exported by PyTorch.

Outside reference: PyTorch (Debian python3-torch, torch.onnx.export of an
nn.Sequential of Linear and ReLU layers, and torch's own float32 forward
pass). For each exported model:
- the weights pleat imports equal torch's float32 weights bit for bit as
  rationals (fractions.Fraction(float(w)) == the rational pleat wrote);
- at random float32 points, pleat eval --json (on the imported file and on
  the .onnx file directly) equals an exact evaluation in Python fractions of
  torch's weights, and agrees with torch's float32 output to float tolerance.
Exports covered: a batch axis that is symbolic (dynamic_axes), fixed 1 and
fixed 4 (both Gemm with transB = 1), a 1-D input (torch writes MatMul + Add,
bias first), a leading nn.Flatten, and an output ReLU.

Usage: onnx_torch_test.py PLEAT_BINARY SOURCE_DIR  (exit 77 = skipped)
"""
import json
import os
import sys
import tempfile
import warnings
from fractions import Fraction

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from onnx_reference import Checker, exact_forward, exact_layers, import_model, pleat_eval  # noqa: E402

try:
    import onnx
    import torch
except ImportError:
    print("torch or onnx is not installed: skipping")
    sys.exit(77)

warnings.filterwarnings("ignore")
pleat = sys.argv[1]
checker = Checker()


def linear_layers(model):
    return [m for m in model if isinstance(m, torch.nn.Linear)]


def export_and_check(name, model, example, export_options, input_dim, has_output_relu=False):
    model.eval()
    with tempfile.TemporaryDirectory() as work:
        model_path = os.path.join(work, name + ".onnx")
        network_path = os.path.join(work, name + ".json")
        torch.onnx.export(model, example, model_path, input_names=["x"], output_names=["y"], **export_options)
        ops = [node.op_type for node in onnx.load(model_path).graph.node]
        document = import_model(pleat, model_path, network_path)
        layers = exact_layers(document)

        checker.check(document["input_dim"] == input_dim, f"{name}: input_dim {document['input_dim']}")
        linears = linear_layers(model)
        checker.check(len(layers) == len(linears), f"{name}: {len(layers)} layers for {len(linears)} Linear")
        # Bit for bit: each float32 weight of torch is the rational pleat wrote.
        for k, (linear, (weights, bias, activation)) in enumerate(zip(linears, layers)):
            torch_weights = linear.weight.detach().numpy()
            torch_bias = linear.bias.detach().numpy()
            same = all(Fraction(float(torch_weights[i, j])) == weights[i][j]
                       for i in range(torch_weights.shape[0]) for j in range(torch_weights.shape[1]))
            same = same and all(Fraction(float(torch_bias[i])) == bias[i] for i in range(len(torch_bias)))
            checker.check(same and len(weights) == torch_weights.shape[0], f"{name}: layer {k + 1} weights differ")
            expected = "relu" if k + 1 < len(linears) or has_output_relu else "linear"
            checker.check(activation == expected, f"{name}: layer {k + 1} activation {activation}")

        meta = json.loads(json.dumps(document.get("meta", {}))).get("source", {})
        checker.check(meta.get("file") == name + ".onnx" and meta.get("producer_name") == "pytorch"
                      and meta.get("opset") == onnx.load(model_path).opset_import[0].version,
                      f"{name}: meta.source {meta}")

        generator = torch.Generator().manual_seed(len(name))
        for trial in range(6):
            x = (torch.randn(input_dim, generator=generator) * 3).float()
            point = [Fraction(float(v)) for v in x]
            with torch.no_grad():
                batch = x if example.dim() == 1 else x.reshape(1, input_dim)
                torch_output = model(batch).reshape(-1).double().tolist()
            reference = exact_forward(layers, point)
            from_json = pleat_eval(pleat, network_path, point)
            from_onnx = pleat_eval(pleat, model_path, point)
            checker.check(from_json == reference, f"{name}: exact output {from_json} != fractions {reference}")
            checker.check(from_onnx == from_json, f"{name}: eval of the .onnx file differs from the imported file")
            # float32 accumulation in torch: relative error a few ulps of 2^-24 per term.
            ok = all(abs(float(e) - t) <= 1e-5 * (1 + abs(float(e))) for e, t in zip(reference, torch_output))
            checker.check(ok, f"{name}: torch float32 {torch_output} vs exact {[float(v) for v in reference]}")
        return ops


torch.manual_seed(20240601)
relu = torch.nn.ReLU
deep = torch.nn.Sequential(torch.nn.Linear(3, 6), relu(), torch.nn.Linear(6, 5), relu(), torch.nn.Linear(5, 2))
ops = export_and_check("dynamic_batch", deep, torch.randn(2, 3),
                       {"dynamic_axes": {"x": {0: "batch"}, "y": {0: "batch"}}}, 3)
checker.check(ops.count("Gemm") == 3 and ops.count("Relu") == 2, f"dynamic_batch: expected Gemm/Relu, got {ops}")
export_and_check("batch_one", deep, torch.randn(1, 3), {}, 3)
export_and_check("batch_four", deep, torch.randn(4, 3), {}, 3)

vector = torch.nn.Sequential(torch.nn.Linear(4, 7), relu(), torch.nn.Linear(7, 1))
ops = export_and_check("vector_input", vector, torch.randn(4), {}, 4)
checker.check("MatMul" in ops and "Add" in ops and "Gemm" not in ops, f"vector_input: expected MatMul+Add, got {ops}")

flat = torch.nn.Sequential(torch.nn.Flatten(), torch.nn.Linear(2, 4), relu(), torch.nn.Linear(4, 3), relu())
ops = export_and_check("flatten_output_relu", flat, torch.randn(1, 2),
                       {"dynamic_axes": {"x": {0: "n"}}}, 2, has_output_relu=True)
checker.check("Flatten" in ops, f"flatten_output_relu: expected a Flatten node, got {ops}")

checker.finish("PyTorch-exported networks import exactly")
