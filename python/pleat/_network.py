"""pleat.Network: a ReLU network with exact parameters and the jobs that run on
it (walk, certify, sample, inspect, evaluate)."""

from __future__ import annotations

import json
import os
from fractions import Fraction
from typing import Any, Optional, Sequence, Union

from . import _core
from ._exact import (DomainSpec, Number, _arch, _box_spec, _count, _domain_spec, _exact_matrix, _exact_vector, _limit,
                     _threads, _tolist)
from ._results import (CertifyResult, Evaluation, Inspection, SampleResult, WalkResult, _Regions,
                       _certify_result, _record, _sample_result)


# ---- Networks ----------------------------------------------------------------------

class Network:
    """A fully connected ReLU network with exact rational parameters.

    Build one with Network.from_torch(model), Network.from_arrays(weights,
    biases), Network.from_file(path) (pleat-network/1 JSON or ONNX),
    Network.from_json(text) or Network.random(arch, seed) (as `pleat random`). float32/float64 weights are converted exactly:
    every float is a dyadic rational, and that rational is the parameter.
    """

    def __init__(self, native: Any) -> None:
        self._native = native

    # -- construction --
    @staticmethod
    def from_json(text: str) -> "Network":
        """A pleat-network/1 document (text)."""
        return Network(_core.Network.from_json(text))

    @staticmethod
    def from_file(path: Union[str, "os.PathLike[str]"]) -> "Network":
        """A network file: pleat-network/1 JSON, or ONNX (by the .onnx extension)."""
        return Network(_core.Network.from_file(os.fspath(path)))

    @staticmethod
    def from_arrays(weights: Sequence[Any], biases: Sequence[Any], *, output_relu: bool = False,
                    name: str = "") -> "Network":
        """Layers from lists of weight matrices (n_k x n_{k-1}, numpy arrays or
        nested lists) and bias vectors. Entries may be floats (taken exactly),
        ints, Fractions or strings ("1/3"). Hidden layers are ReLU; the output
        layer is linear unless output_relu."""
        if len(weights) != len(biases):
            raise ValueError(f"biases: expected {len(weights)} bias vectors (one per weight matrix), got {len(biases)}")
        if not weights:
            raise ValueError("weights: give at least one layer")
        layers = []
        for k, (w, b) in enumerate(zip(weights, biases)):
            matrix = _exact_matrix(w, f"weights[{k}]")
            last = k == len(weights) - 1
            layers.append({"weights": matrix, "bias": _exact_vector(b, f"biases[{k}]"),
                           "activation": "relu" if (not last or output_relu) else "linear"})
        first = layers[0]["weights"]
        document: dict[str, Any] = {"format": "pleat-network/1", "input_dim": len(first[0]) if first else 0,
                                    "layers": layers}
        if name:
            document["name"] = name
        return Network.from_json(json.dumps(document))

    @staticmethod
    def random(arch: Sequence[int], seed: int, *, sample: int = 0, init: str = "he", digits: int = 6) -> "Network":
        """The reproducible random network that `pleat random --arch A --seed S
        --sample I --init INIT --digits N` writes, the same on every machine;
        it is sample I of a survey with seed S (pleat.survey), so an outlier of
        a survey can be walked, certified or drawn. init "he": weights
        N(0, 2/fan_in), biases N(0, 1/fan_in), never 0; "uniform": weights and
        biases U(-1/sqrt(fan_in), 1/sqrt(fan_in)). Each parameter is rounded to
        `digits` (1 to 40) significant decimal digits and is that exact
        rational. Hidden layers are ReLU, the output layer linear."""
        arch_list = _arch(arch)
        if init not in ("he", "uniform"):
            raise ValueError(f"init: expected he or uniform, got {init!r}")
        return Network(_core.Network.random(arch_list, _count(seed, "seed"), _count(sample, "sample"), init,
                                            _count(digits, "digits", 1, 40)))

    @staticmethod
    def from_torch(model: Any, *, name: str = "") -> "Network":
        """An nn.Sequential of Linear and ReLU (Flatten and Identity are
        skipped; nested Sequentials are flattened), or a single Linear. The
        weights (float32, float64, float16 or bfloat16) are taken exactly: each
        is a dyadic rational. A ReLU after the last Linear makes the output
        layer ReLU. Anything else (another activation, two Linear layers with
        no ReLU between them, a ReLU first) raises ValueError naming the
        module's position."""
        import torch
        modules: list[tuple[str, Any]] = []

        def collect(module: Any, prefix: str) -> None:
            if isinstance(module, torch.nn.Sequential):
                for key, child in module.named_children():
                    collect(child, f"{prefix}[{key}]")
            else:
                modules.append((prefix, module))

        collect(model, "model")
        weights: list[Any] = []
        biases: list[Any] = []
        relu_after: list[bool] = []
        for place, module in modules:
            if isinstance(module, (torch.nn.Flatten, torch.nn.Identity)):
                continue
            if isinstance(module, torch.nn.Linear):
                if weights and not relu_after[-1]:
                    raise ValueError(f"{place} (Linear): follows a Linear layer with no ReLU between them; "
                                     "pleat's hidden layers are ReLU")
                w = module.weight.detach().cpu().to(torch.float64)
                b = (module.bias.detach().cpu().to(torch.float64) if module.bias is not None
                     else torch.zeros(w.shape[0], dtype=torch.float64))
                weights.append(w.numpy())
                biases.append(b.numpy())
                relu_after.append(False)
            elif isinstance(module, torch.nn.ReLU):
                if not weights or relu_after[-1]:
                    raise ValueError(f"{place} (ReLU): expected a Linear layer before it")
                relu_after[-1] = True
            else:
                raise ValueError(f"{place} ({type(module).__name__}): only Linear, ReLU, Flatten and Identity "
                                 "modules can be read")
        if not weights:
            raise ValueError("model: no Linear layer found")
        return Network.from_arrays(weights, biases, output_relu=relu_after[-1], name=name)

    @staticmethod
    def from_onnx_bytes(data: bytes, name: str = "<bytes>") -> "Network":
        """A serialized ONNX model (as read from a .onnx file)."""
        return Network(_core.Network.from_onnx_bytes(bytes(data), name))

    # -- export --
    def to_json(self) -> str:
        """The canonical pleat-network/1 document (exact)."""
        return self._native.to_json()

    def save(self, path: Union[str, "os.PathLike[str]"]) -> None:
        """Writes the pleat-network/1 document to path."""
        with open(path, "w", encoding="utf-8") as out:
            out.write(self.to_json())

    def to_onnx_bytes(self) -> bytes:
        """An ONNX model (float64; a parameter float64 cannot hold is rounded to nearest)."""
        return self._native.to_onnx_bytes()

    def to_torch(self, dtype: Any = None) -> Any:
        """An nn.Sequential of Linear and ReLU with these parameters, rounded to
        nearest float64 (then to dtype when given, e.g. torch.float32)."""
        import torch
        dtype = dtype or torch.float64
        layers: list[Any] = []
        widths = self.widths
        for k, (w, b) in enumerate(zip(self.weights, self.biases)):
            linear = torch.nn.Linear(widths[k], widths[k + 1], dtype=torch.float64)
            with torch.no_grad():
                linear.weight.copy_(torch.tensor([[float(v) for v in row] for row in w], dtype=torch.float64))
                linear.bias.copy_(torch.tensor([float(v) for v in b], dtype=torch.float64))
            layers.append(linear.to(dtype))
            if k + 1 < len(widths) - 1 or self.output_relu:
                layers.append(torch.nn.ReLU())
        return torch.nn.Sequential(*layers)

    # -- properties --
    @property
    def input_dim(self) -> int:
        return self._native.input_dim

    @property
    def output_dim(self) -> int:
        return self._native.output_dim

    @property
    def widths(self) -> list[int]:
        """Layer widths, input first: [n0, n1, ..., nd]."""
        return list(self._native.widths)

    @property
    def output_relu(self) -> bool:
        return self._native.output_relu

    @property
    def name(self) -> str:
        return self._native.name

    @property
    def parametric_dimension(self) -> int:
        """D = sum_k (n_{k-1} + 1) n_k."""
        return self._native.parametric_dimension

    @property
    def scaling_bound(self) -> int:
        """D minus the rank of the hidden neurons' rescaling directions: an upper
        bound on the functional dimension."""
        return self._native.scaling_bound

    @property
    def weights(self) -> list[list[list[Fraction]]]:
        """Every layer's weight matrix (n_k x n_{k-1}), exact."""
        return self._native.weights()

    @property
    def biases(self) -> list[list[Fraction]]:
        return self._native.biases()

    def parameter_name(self, index: int) -> str:
        """"W2[0,3]" or "b1[3]" (layers from 1) for parameter index < D."""
        if not 0 <= index < self.parametric_dimension:
            raise IndexError(f"parameter index {index} is not below D = {self.parametric_dimension}")
        return self._native.parameter_name(index)

    def __eq__(self, other: object) -> bool:
        return isinstance(other, Network) and self._native == other._native

    __hash__ = None  # type: ignore[assignment]

    def __repr__(self) -> str:
        arch = ",".join(str(w) for w in self.widths)
        return f"pleat.Network({arch}{', output ReLU' if self.output_relu else ''}, D={self.parametric_dimension})"

    # -- jobs --
    def walk(self, domain: DomainSpec = None, *, threads: int = 0, time_limit: Optional[float] = None,
             max_regions: Optional[int] = None, keep_regions: bool = True) -> WalkResult:
        """Every linear region on the domain, each with an exact certificate.

        domain: None (all of R^n0), (LO, HI) for the box (LO, HI)^n0, a list of
        (LO, HI) per axis, a pleat-domain/1 dict or a domain file path.
        threads: worker threads (0: all cores); time_limit (seconds) and
        max_regions stop early, as does Ctrl-C: the result is then a lower
        bound, certified False. Returns a WalkResult (regions lazily, counts,
        certified); keep_regions=False keeps only the counts."""
        data, regions = _core.walk(self._native, _domain_spec(domain, self.input_dim), _threads(threads),
                                   _limit(time_limit, "time_limit"), _count(max_regions, "max_regions", 1),
                                   keep_regions)
        return WalkResult(domain=data["domain"], regions=_Regions(regions), region_count=data["regions"],
                          bounded_regions=data["bounded_regions"], linear_regions=data["linear_regions"],
                          regions_per_layer=list(data["regions_per_layer"]),
                          nonsmooth_regions=data["nonsmooth_regions"], facets=data["facets"],
                          complete=data["complete"], certified=data["certified"], stop_reason=data["stop_reason"],
                          lp_queries=data["lp_queries"], filter_settled=data["filter_settled"],
                          exact_fallbacks=data["exact_fallbacks"], degenerate_crossings=data["degenerate_crossings"],
                          seconds=data["seconds"])

    def certify(self, domain: DomainSpec = None, *, points: Optional[Sequence[Sequence[Number]]] = None,
                claim: Optional[int] = None, threads: int = 0, time_limit: Optional[float] = None,
                full_walk: bool = False) -> CertifyResult:
        """The functional dimension on the domain, certified exactly.

        Walks the regions, stacks each region's exact parameter-Jacobian rows
        and proves a lower bound (a nonsingular minor) and an upper bound (the
        scaling directions, or an exact kernel checked on every region).

        points: also the exact batch functional dimension at these points
        (result.batch; a point outside the domain, on its boundary or on a bent
        hyperplane is a ValueError naming it). claim: judge a claimed value (result.claim:
        "consistent", "too-low" or "impossible", with the reason).
        time_limit / Ctrl-C: the result holds proved bounds, certified False;
        time_limit covers the batch stage and the walk after it (a stop in the
        batch stage: result.batch holds bounds, and nothing is walked).

        The result (CertifyResult): functional_dimension (None unless
        certified), certified, lower_bound, upper_bound, evidence (how each
        bound was proved), parametric_dimension, scaling_bound,
        regions_walked, regions_contributing, walk_complete, early_stop,
        stop_reason, nonsmooth_regions, extra_kernel (ExtraDirection with
        mechanism: dead-neuron, always-active-neuron, zero-outgoing-weights,
        duplicate-neurons or None), extra_kernel_summary, kernel, claim, batch."""
        point_texts = None
        if points is not None:
            rows = _tolist(points)
            if len(rows) == 0:  # as pleat certify --points refuses an empty file
                raise ValueError("points: no points (give at least one, or None for no batch stage)")
            point_texts = [_exact_vector(p, f"points[{i}]") for i, p in enumerate(rows)]
        if claim is not None:
            claim = _count(claim, "claim")
        data = _core.certify(self._native, _domain_spec(domain, self.input_dim), _threads(threads),
                             _limit(time_limit, "time_limit"), full_walk, point_texts, claim)
        return _certify_result(data, self)

    def sample(self, batch: int, seed: int, *, dist: Any = "normal", dtype: str = "float64", threads: int = 0,
               time_limit: Optional[float] = None) -> SampleResult:
        """The usual floating-point estimate, beside the certified value.

        Draws batch points (dist "normal": N(0, 1) per coordinate, judged on
        R^n0; or a box (LO, HI) / per-axis list: uniform on it, judged on that
        box), stacks the float Jacobians and counts singular values above the
        customary tolerance; dtype "float32" does it all in float32 as training
        code does. The same seed gives the same points as `pleat sample`. Then
        walks the whole domain exactly for the certified value and the regions
        the sample missed. Returns a SampleResult."""
        if dtype not in ("float64", "float32"):
            raise ValueError(f"dtype: expected float64 or float32, got {dtype!r}")
        box = None
        if not (isinstance(dist, str) and dist == "normal"):
            if isinstance(dist, str):
                raise ValueError(f"dist: expected 'normal' or a box (LO, HI), got {dist!r}")
            box = _box_spec(dist, self.input_dim, "dist")
        data = _core.sample(self._native, _count(batch, "batch", 1), _count(seed, "seed"), box,
                            dtype == "float32", _threads(threads), _limit(time_limit, "time_limit"))
        return _sample_result(data)

    def inspect(self, at: Optional[Sequence[Number]] = None, pattern: Optional[str] = None,
                domain: DomainSpec = None) -> Inspection:
        """The exact record of the region at a point (at=) or with an
        activation pattern (pattern="001100/11100"): facets with neighbours,
        vertices, volume, affine map, rank contribution."""
        if (at is None) == (pattern is None):
            raise ValueError("inspect: give exactly one of at= or pattern=")
        at_texts = _exact_vector(at, "at") if at is not None else None
        data = _core.inspect(self._native, _domain_spec(domain, self.input_dim), at_texts, pattern)
        return Inspection(domain=data["domain"], regions=[_record(r) for r in data["regions"]], at=data.get("at"),
                          pattern=data.get("pattern"), on_boundary=data.get("on_boundary"),
                          vanishing_neurons=data.get("vanishing_neurons"))

    def eval(self, x: Sequence[Number]) -> Evaluation:
        """The exact output and activation pattern at the point x."""
        data = _core.evaluate(self._native, _exact_vector(x, "x"))
        return Evaluation(point=data["point"], output=data["output"], pattern=data["pattern"],
                          preactivations=data["preactivations"], zero_neurons=list(data["zero_neurons"]),
                          identically_zero_neurons=list(data["identically_zero_neurons"]))
