"""pleat from Python: the linear regions of small ReLU networks, walked with
exact rational arithmetic, and their functional dimension, certified.

    >>> import pleat
    >>> net = pleat.Network.from_file("data/fold2d.json")
    >>> result = net.certify()
    >>> result.functional_dimension, result.certified
    (48, True)

Everything runs in-process in pleat's C++ library (the same code as the
``pleat`` command), without the GIL: other Python threads keep running, and
Ctrl-C (KeyboardInterrupt) stops a job cleanly, returning what it found as
bounds (``stop_reason == "interrupted"``, ``certified`` False).

Exact values are :class:`fractions.Fraction` (never rounded silently); every
result with exact numbers has an ``as_float()`` view as numpy arrays. Bad
input raises :class:`ValueError` with the command line's message, naming the
field (``layers[1].weights[2]: expected 3 numbers, found 2``); a documented
limit raises :class:`pleat.LimitError`.
"""

from __future__ import annotations

import dataclasses
import json
import math
import numbers
import os
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Any, Iterator, Optional, Sequence, Union

from . import _core

__all__ = [
    "Network", "WalkResult", "Region", "Facet", "AffineMap", "CertifyResult", "ExtraDirection",
    "ClaimVerdict", "BatchRank", "SampleResult", "Inspection", "RegionRecord", "Evaluation",
    "SurveySample", "SurveyResult", "survey", "read_survey", "LimitError", "__version__",
]

__version__: str = _core.__version__
LimitError = _core.LimitError
LimitError.__doc__ = "A documented limit of pleat was reached (not bad input, not a bug)."

Number = Union[int, Fraction, float, str]
DomainSpec = Union[None, Sequence[Any], str, "os.PathLike[str]", dict]


# ---- Exact numbers in and out ----------------------------------------------------

def _exact_text(value: Any, what: str) -> str:
    """The exact rational a Python number stands for, as text pleat reads.
    Floats (float, numpy float16/32/64) are dyadic rationals and are taken
    exactly; strings are read by pleat ("1/3", "0.1", "1e-3")."""
    if isinstance(value, bool):
        raise ValueError(f"{what}: expected a number, got a bool")
    if isinstance(value, str):
        return value.strip()
    if isinstance(value, Fraction):
        return f"{value.numerator}/{value.denominator}"
    if isinstance(value, numbers.Integral):
        return str(int(value))
    if isinstance(value, numbers.Rational):
        return f"{value.numerator}/{value.denominator}"
    if isinstance(value, numbers.Real):
        number = float(value)  # numpy float16/32 widen to float64 exactly
        if not math.isfinite(number):
            raise ValueError(f"{what}: {number} is not a finite number")
        numerator, denominator = number.as_integer_ratio()
        return f"{numerator}/{denominator}"
    raise ValueError(f"{what}: expected a number, got {type(value).__name__}")


def _tolist(values: Any) -> Any:
    return values.tolist() if hasattr(values, "tolist") else values


def _exact_vector(values: Any, what: str) -> list[str]:
    values = _tolist(values)
    if isinstance(values, (str, bytes)) or not isinstance(values, Sequence):
        raise ValueError(f"{what}: expected a sequence of numbers")
    return [_exact_text(v, f"{what}[{i}]") for i, v in enumerate(values)]


def _exact_matrix(values: Any, what: str) -> list[list[str]]:
    values = _tolist(values)
    if isinstance(values, (str, bytes)) or not isinstance(values, Sequence):
        raise ValueError(f"{what}: expected a matrix (a sequence of rows)")
    return [_exact_vector(row, f"{what}[{r}]") for r, row in enumerate(values)]


def _float_array(values: Any) -> "Any":
    import numpy
    return numpy.array(values, dtype=numpy.float64)


def _is_pair(value: Any) -> bool:
    value = _tolist(value)
    return (isinstance(value, Sequence) and not isinstance(value, (str, bytes)) and len(value) == 2
            and not any(isinstance(v, Sequence) and not isinstance(v, str) for v in value))


def _box_spec(box: Any, input_dim: int, what: str) -> tuple[list[str], list[str]]:
    """(LO, HI) for every axis, or one (LO, HI) per axis."""
    box = _tolist(box)
    if _is_pair(box):
        lo, hi = box
        return ([_exact_text(lo, what)] * input_dim, [_exact_text(hi, what)] * input_dim)
    if isinstance(box, Sequence) and not isinstance(box, (str, bytes)) and all(_is_pair(p) for p in box):
        pairs = [_tolist(p) for p in box]
        return ([_exact_text(p[0], f"{what}[{i}]") for i, p in enumerate(pairs)],
                [_exact_text(p[1], f"{what}[{i}]") for i, p in enumerate(pairs)])
    raise ValueError(f"{what}: expected (LO, HI), a list of (LO, HI) per axis, a pleat-domain/1 dict or a file path")


def _domain_spec(domain: DomainSpec, input_dim: int) -> Any:
    if domain is None:
        return None
    if isinstance(domain, (str, os.PathLike)):
        return ("file", os.fspath(domain))
    if isinstance(domain, dict):
        return ("polytope", json.dumps(domain), "domain")
    lower, upper = _box_spec(domain, input_dim, "domain")
    return ("box", lower, upper)


def _limit(value: Optional[float], what: str) -> float:
    if value is None:
        return 0.0
    if isinstance(value, bool) or not isinstance(value, numbers.Real) or not (0 < float(value) <= 1e9):
        raise ValueError(f"{what}: expected seconds above 0 and at most 1e9 (or None), got {value!r}")
    return float(value)


def _count(value: Optional[int], what: str, minimum: int = 0, maximum: int = 2**64 - 1) -> int:
    if value is None:
        return 0
    if isinstance(value, bool) or not isinstance(value, numbers.Integral) or not minimum <= int(value) <= maximum:
        raise ValueError(f"{what}: expected an integer from {minimum} to {maximum}, got {value!r}")
    return int(value)


def _threads(value: int) -> int:
    return _count(value, "threads", 0, 1024)


# ---- Results ---------------------------------------------------------------------

@dataclass(frozen=True)
class AffineMap:
    """The network on one region: F(x) = A x + c, exact."""
    A: list[list[Fraction]]
    c: list[Fraction]

    def __call__(self, x: Sequence[Number]) -> list[Fraction]:
        point = [Fraction(_exact_text(v, "x")) for v in _tolist(x)]
        return [sum((a * v for a, v in zip(row, point)), Fraction(0)) + ci for row, ci in zip(self.A, self.c)]

    def as_float(self) -> tuple[Any, Any]:
        """(A, c) as float64 numpy arrays (rounded to nearest)."""
        return _float_array(self.A).reshape(len(self.A), -1), _float_array(self.c)


@dataclass(frozen=True)
class Facet:
    """One facet of a region: the region lies on normal . x + offset > 0.

    neurons: the neurons whose bent hyperplane holds it; side: the index of the
    domain side it lies on (None inside the domain); neighbor: the pattern of
    the region across it (None on the domain boundary); point: an exact point
    in its relative interior."""
    normal: list[Fraction]
    offset: Fraction
    neurons: list[int]
    side: Optional[int]
    neighbor: Optional[str]
    other_neighbors: list[str]
    point: list[Fraction]
    layers: Optional[list[int]] = None  # 1-based layer of each neuron (inspect only)

    def as_float(self) -> tuple[Any, float]:
        """(normal, offset) as a float64 array and a float."""
        return _float_array(self.normal), float(self.offset)


@dataclass(frozen=True)
class Region:
    """One activation region, as the walk certified it.

    pattern: the activation pattern ("101|01"); point: an exact point strictly
    inside; bounded: bounded as a subset of R^n0; facets: its irredundant
    facets; affine: the network's exact map on it; nonsmooth_neurons: neurons
    identically zero there with a nonzero backward signal."""
    id: int
    pattern: str
    point: list[Fraction]
    bounded: bool
    touches_domain_boundary: bool
    facets: list[Facet]
    affine: AffineMap
    nonsmooth_neurons: list[int]

    def as_float(self) -> Any:
        """The interior point as a float64 numpy array."""
        return _float_array(self.point)

    def to_record(self) -> dict[str, Any]:
        """A flat record (one row of WalkResult.to_records())."""
        record: dict[str, Any] = {
            "id": self.id, "pattern": self.pattern, "bounded": self.bounded,
            "touches_domain_boundary": self.touches_domain_boundary, "facets": len(self.facets),
            "smooth": not self.nonsmooth_neurons, "point": tuple(self.point),
        }
        for i, value in enumerate(self.point):
            record[f"x{i + 1}"] = float(value)
        return record


def _facet(data: dict) -> Facet:
    return Facet(normal=data["normal"], offset=data["offset"], neurons=list(data["neurons"]), side=data["side"],
                 neighbor=data["neighbor"], other_neighbors=list(data["other_neighbors"]), point=data["point"],
                 layers=data.get("layers"))


def _region(data: dict) -> Region:
    return Region(id=data["id"], pattern=data["pattern"], point=data["point"], bounded=data["bounded"],
                  touches_domain_boundary=data["touches_domain_boundary"],
                  facets=[_facet(f) for f in data["facets"]], affine=AffineMap(data["A"], data["c"]),
                  nonsmooth_neurons=list(data["nonsmooth_neurons"]))


class _Regions(Sequence[Region]):
    """The regions of a walk in output order, converted when looked at."""

    def __init__(self, native: Any) -> None:
        self._native = native

    def __len__(self) -> int:
        return len(self._native)

    def __getitem__(self, index: Any) -> Any:
        if isinstance(index, slice):
            return [self[i] for i in range(*index.indices(len(self)))]
        if index < 0:
            index += len(self)
        if not 0 <= index < len(self):
            raise IndexError("region index out of range")
        return _region(self._native.region(index))

    def __iter__(self) -> Iterator[Region]:
        for i in range(len(self)):
            yield self[i]

    def __repr__(self) -> str:
        return f"<{len(self)} regions>"


@dataclass(frozen=True)
class WalkResult:
    """What Network.walk found.

    regions: every region found, in output order (a lazy sequence of Region);
    complete: the walk ended by itself; certified: complete and every
    certificate checked exactly. A walk cut short (time_limit, max_regions,
    KeyboardInterrupt) has complete = certified = False and stop_reason set:
    its counts are lower bounds."""
    domain: str
    regions: Sequence[Region] = field(repr=False)
    region_count: int
    bounded_regions: int
    linear_regions: int
    regions_per_layer: list[int]
    nonsmooth_regions: list[dict]
    facets: int
    complete: bool
    certified: bool
    stop_reason: Optional[str]
    lp_queries: int = field(repr=False)
    filter_settled: int = field(repr=False)
    exact_fallbacks: int = field(repr=False)
    degenerate_crossings: int = field(repr=False)
    seconds: float = field(repr=False)

    def to_records(self) -> list[dict[str, Any]]:
        """One flat dict per region (id, pattern, bounded, facets, smooth,
        point as Fractions, x1.. as floats)."""
        return [region.to_record() for region in self.regions]

    def to_pandas(self) -> Any:
        """The records as a pandas DataFrame (pandas is optional: this is the
        only place pleat imports it)."""
        try:
            import pandas
        except ImportError as error:  # pragma: no cover - depends on the machine
            raise ImportError("to_pandas() needs pandas (Debian: apt-get install python3-pandas); "
                              "to_records() gives the same rows as dicts") from error
        return pandas.DataFrame.from_records(self.to_records())


@dataclass(frozen=True)
class ClaimVerdict:
    """A claimed value judged: verdict is "consistent", "too-low" or "impossible"."""
    verdict: str
    reason: str
    value: Optional[int] = None


@dataclass(frozen=True)
class BatchRank:
    """The exact batch functional dimension at given points: the rank over Q
    of the stacked parameter Jacobians there."""
    points: int
    batch_functional_dimension: int
    regions_touched: int
    claim: Optional[ClaimVerdict] = None


@dataclass(frozen=True)
class ExtraDirection:
    """A kernel direction beyond the scaling ones (length D, parameter order),
    with the mechanism behind it when one is recognised."""
    vector: list[Fraction] = field(repr=False)
    mechanism: Optional[str]
    neurons: list[int]
    names: list[str] = field(repr=False, default_factory=list)

    def named(self) -> dict[str, Fraction]:
        """The nonzero entries by parameter name ("W2[0,3]", "b1[3]")."""
        return {name: value for name, value in zip(self.names, self.vector) if value != 0}

    def as_float(self) -> Any:
        return _float_array(self.vector)


@dataclass(frozen=True)
class CertifyResult:
    """What Network.certify proved.

    functional_dimension: the certified value, or None when not certified;
    lower_bound, upper_bound: proved bounds (equal when certified);
    certified: both bounds proved and equal, nothing cut short;
    evidence: how each bound was proved, in words;
    parametric_dimension: D, the number of parameters; scaling_bound: D minus
    the rank of the hidden neurons' rescaling directions;
    regions_walked, regions_contributing, walk_complete, early_stop (the rank
    met the scaling bound, so the walk stopped), stop_reason;
    nonsmooth_regions: regions left out (a neuron identically zero there);
    extra_kernel: flat directions beyond the scaling ones (ExtraDirection),
    extra_kernel_summary: them grouped by mechanism; kernel: the exact kernel
    basis checked on every smooth region (rows of length D);
    claim: the verdict on claim=N; batch: with points=..., the exact rank at
    those points (BatchRank); certified_by: "points" (exact points met the
    scaling bound, no walk), "walk" (the walk's rank met it), "kernel" (an
    exact kernel checked on every region) or None; points_drawn: exact points
    drawn before any walk; witness_points: those whose regions' rows raised
    the rank (re-check with points=...); seconds, walk_seconds (of which the
    walk, 0 when none ran)."""
    functional_dimension: Optional[int]
    certified: bool
    lower_bound: int
    upper_bound: int
    parametric_dimension: int
    scaling_bound: int
    evidence: dict[str, str] = field(repr=False)
    domain: str = field(repr=False)
    regions_walked: int = field(repr=False)
    regions_contributing: int = field(repr=False)
    regions_total: Optional[int] = field(repr=False)
    walk_complete: bool = field(repr=False)
    early_stop: bool = field(repr=False)
    stop_reason: Optional[str] = None
    nonsmooth_regions: list[dict] = field(repr=False, default_factory=list)
    extra_kernel: list[ExtraDirection] = field(repr=False, default_factory=list)
    extra_kernel_summary: list[dict] = field(repr=False, default_factory=list)
    kernel: list[list[Fraction]] = field(repr=False, default_factory=list)
    claim: Optional[ClaimVerdict] = None
    batch: Optional[BatchRank] = None
    seconds: float = field(repr=False, default=0.0)
    certified_by: Optional[str] = None
    points_drawn: int = field(repr=False, default=0)
    witness_points: list[list[Fraction]] = field(repr=False, default_factory=list)
    walk_seconds: float = field(repr=False, default=0.0)


def _evidence(data: dict) -> dict[str, str]:
    if data["certified_by"] == "points":
        return {"lower_bound": f"{len(data['witness_points'])} exact points met the scaling bound (the rows of their "
                               "regions have a nonsingular minor mod p)",
                "upper_bound": "the scaling directions, an exact kernel"}
    if data["certified"] and (data["early_stop"] or not data["walk_complete"]):
        return {"lower_bound": f"rows of {data['regions_contributing']} regions have a nonsingular minor (mod p)",
                "upper_bound": "the scaling directions, an exact kernel"}
    if data["certified"]:
        return {"lower_bound": f"exact rank of the rows of {data['regions_contributing']} regions",
                "upper_bound": "an exact kernel checked on every smooth region"}
    reason = data["stop_reason"] or "the walk could not be certified"
    return {"lower_bound": f"rank of the rows of the {data['regions_walked']} regions walked (not certified: {reason})",
            "upper_bound": "proved kernel directions only (not certified)"}


def _certify_result(data: dict, network: "Network") -> CertifyResult:
    names = [network.parameter_name(i) for i in range(network.parametric_dimension)] if data["extra_kernel"] else []
    claim = ClaimVerdict(**data["claim"]) if data["claim"] else None
    batch = None
    if data["batch"]:
        b = dict(data["batch"])
        b["claim"] = ClaimVerdict(**b["claim"]) if "claim" in b else None
        batch = BatchRank(**b)
    return CertifyResult(
        functional_dimension=data["functional_dimension"], certified=data["certified"],
        lower_bound=data["lower_bound"], upper_bound=data["upper_bound"],
        parametric_dimension=data["parametric_dimension"], scaling_bound=data["scaling_bound"],
        evidence=_evidence(data), domain=data["domain"], regions_walked=data["regions_walked"],
        regions_contributing=data["regions_contributing"], regions_total=data["regions_total"],
        walk_complete=data["walk_complete"], early_stop=data["early_stop"], stop_reason=data["stop_reason"],
        nonsmooth_regions=data["nonsmooth_regions"],
        extra_kernel=[ExtraDirection(vector=d["vector"], mechanism=d["mechanism"], neurons=list(d["neurons"]),
                                     names=names) for d in data["extra_kernel"]],
        extra_kernel_summary=data["extra_kernel_summary"], kernel=data["kernel"], claim=claim, batch=batch,
        seconds=data["seconds"], certified_by=data["certified_by"], points_drawn=data["points_drawn"],
        witness_points=data["witness_points"], walk_seconds=data["walk_seconds"])


@dataclass(frozen=True)
class SampleResult:
    """The usual sampled (floating-point SVD) estimate beside the certified value.

    rank: numerical rank of the stacked float Jacobian at the customary
    tolerance sigma_max * max(M, N) * eps; rank_rtol_1e6 / rank_rtol_1e10 at
    relative tolerances; certified_value: the exact functional dimension of
    the same domain (None when not certified); verdict: "equal", "below",
    "above-impossible" or None (undecided); regions_touched of regions_total:
    distinct regions the points fell in, decided exactly; first_batch_reaching:
    the smallest m whose first m points reach the certified value; points: the
    sampled points exactly. A run interrupted while drawing points has
    rank None and stop_reason "interrupted"."""
    rank: Optional[int]
    certified_value: Optional[int]
    verdict: Optional[str]
    regions_touched: Optional[int]
    regions_total: Optional[int]
    batch: int
    seed: int
    dtype: str
    domain: str = field(repr=False)
    rank_rtol_1e6: Optional[int] = field(repr=False, default=None)
    rank_rtol_1e10: Optional[int] = field(repr=False, default=None)
    first_batch_reaching: Optional[int] = field(repr=False, default=None)
    certified: bool = field(repr=False, default=False)
    lower_bound: Optional[int] = field(repr=False, default=None)
    upper_bound: Optional[int] = field(repr=False, default=None)
    scaling_bound: Optional[int] = field(repr=False, default=None)
    parametric_dimension: Optional[int] = field(repr=False, default=None)
    points_on_bent_hyperplanes: int = field(repr=False, default=0)
    stop_reason: Optional[str] = None
    points: list[list[Fraction]] = field(repr=False, default_factory=list)
    seconds: float = field(repr=False, default=0.0)

    def as_float(self) -> Any:
        """The sampled points as a float64 numpy array (exactly the doubles drawn)."""
        return _float_array(self.points).reshape(len(self.points), -1)


def _sample_result(data: dict) -> SampleResult:
    common = dict(batch=data["batch"], seed=data["seed"], dtype=data["dtype"], domain=data["domain"])
    if data["interrupted_while_sampling"]:
        return SampleResult(rank=None, certified_value=None, verdict=None, regions_touched=None, regions_total=None,
                            stop_reason="interrupted", **common)
    return SampleResult(
        rank=data["rank"], certified_value=data["certified_value"], verdict=data["verdict"],
        regions_touched=data["regions_touched"], regions_total=data["regions_total"],
        rank_rtol_1e6=data["rank_rtol_1e-6"], rank_rtol_1e10=data["rank_rtol_1e-10"],
        first_batch_reaching=data["first_batch_reaching"], certified=data["certified"],
        lower_bound=data["lower_bound"], upper_bound=data["upper_bound"], scaling_bound=data["scaling_bound"],
        parametric_dimension=data["parametric_dimension"],
        points_on_bent_hyperplanes=data["points_on_bent_hyperplanes"], stop_reason=data["stop_reason"],
        points=data["points"], seconds=data["seconds"], **common)


@dataclass(frozen=True)
class RegionRecord(Region):
    """A region with its geometry (Network.inspect): vertices (counter-clockwise
    for 2 inputs), rays and lines when unbounded, volume (length/area/volume
    within the domain; None when unbounded or above 4 inputs), and how many
    independent rows it adds to the functional-dimension rank."""
    bounded_in_domain: bool = False
    vertices: list[list[Fraction]] = field(default_factory=list)
    vertex_order: Optional[str] = None
    rays: list[list[Fraction]] = field(default_factory=list)
    lines: list[list[Fraction]] = field(default_factory=list)
    volume: Optional[Fraction] = None
    rank_contribution: int = 0

    def vertices_as_float(self) -> Any:
        return _float_array(self.vertices).reshape(len(self.vertices), -1)


def _record(data: dict) -> RegionRecord:
    base = _region(data)
    return RegionRecord(**{f.name: getattr(base, f.name) for f in dataclasses.fields(Region)},
                        bounded_in_domain=data["bounded_in_domain"], vertices=data["vertices"],
                        vertex_order=data["vertex_order"], rays=data["rays"], lines=data["lines"],
                        volume=data["volume"], rank_contribution=data["rank_contribution"])


@dataclass(frozen=True)
class Inspection:
    """Network.inspect: the region(s) at a point or with a pattern. A point on
    bent hyperplanes (on_boundary) lists the neurons that vanish there and
    every region whose closure contains it."""
    domain: str
    regions: list[RegionRecord]
    at: Optional[list[Fraction]] = None
    pattern: Optional[str] = None
    on_boundary: Optional[bool] = None
    vanishing_neurons: Optional[list[int]] = None

    @property
    def region(self) -> RegionRecord:
        """The only region (raises ValueError when the point has several)."""
        if len(self.regions) != 1:
            raise ValueError(f"{len(self.regions)} regions contain the point; see .regions")
        return self.regions[0]


@dataclass(frozen=True)
class Evaluation:
    """The network at one point, exactly: output, activation pattern ('=' on a
    bent hyperplane, 'z' identically zero around the point), every layer's
    pre-activations (output layer last)."""
    point: list[Fraction]
    output: list[Fraction]
    pattern: str
    preactivations: list[list[Fraction]] = field(repr=False)
    zero_neurons: list[int] = field(repr=False)
    identically_zero_neurons: list[int] = field(repr=False)

    def as_float(self) -> Any:
        """The output as a float64 numpy array."""
        return _float_array(self.output)


# ---- Networks ----------------------------------------------------------------------

class Network:
    """A fully connected ReLU network with exact rational parameters.

    Build one with Network.from_torch(model), Network.from_arrays(weights,
    biases), Network.from_file(path) (pleat-network/1 JSON or ONNX) or
    Network.from_json(text). float32/float64 weights are converted exactly:
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
        (result.batch; a point outside the domain or on a bent hyperplane is a
        ValueError naming it). claim: judge a claimed value (result.claim:
        "consistent", "too-low" or "impossible", with the reason).
        time_limit / Ctrl-C: the result holds proved bounds, certified False.

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


# ---- Surveys -------------------------------------------------------------------------

@dataclass(frozen=True)
class SurveySample:
    """One survey sample: the certified functional dimension of random network i."""
    sample: int
    functional_dimension: Optional[int]
    certified: bool
    lower_bound: int
    upper_bound: int
    scaling_bound: int
    parametric_dimension: int
    regions: int
    early_stop: bool
    stop_reason: Optional[str]
    seconds: float = field(repr=False)


@dataclass(frozen=True)
class SurveyResult:
    """A survey's samples and exact statistics over the certified ones: histogram
    (value -> count), mean and variance (Fractions; variance divides by n - 1),
    modes, at_scaling_bound (how many equal their scaling bound) and its
    fraction. Uncertified samples (cut short) are bounds, out of the histogram."""
    arch: list[int]
    samples: list[SurveySample] = field(repr=False)
    samples_total: int
    certified: int
    uncertified: int
    histogram: dict[int, int]
    mean: Optional[Fraction]
    variance: Optional[Fraction] = field(repr=False)
    modes: list[int] = field(repr=False)
    at_scaling_bound: int = field(repr=False)
    at_scaling_bound_fraction: Optional[Fraction] = field(repr=False)
    scaling_bound: Optional[int] = field(repr=False)
    domain: str = field(repr=False)
    path: Optional[str] = field(repr=False)
    resumed: int = field(repr=False)
    interrupted: bool = field(repr=False)
    header: str = field(repr=False)

    def to_records(self) -> list[dict[str, Any]]:
        return [dataclasses.asdict(s) for s in self.samples]

    def to_pandas(self) -> Any:
        """The samples as a pandas DataFrame (pandas is optional)."""
        try:
            import pandas
        except ImportError as error:  # pragma: no cover
            raise ImportError("to_pandas() needs pandas (Debian: apt-get install python3-pandas)") from error
        return pandas.DataFrame.from_records(self.to_records())


def _survey_result(data: dict) -> SurveyResult:
    return SurveyResult(arch=list(data["arch"]), samples=[SurveySample(**s) for s in data["samples"]],
                        samples_total=data["samples_total"], certified=data["certified"],
                        uncertified=data["uncertified"], histogram=dict(data["histogram"]), mean=data["mean"],
                        variance=data["variance"], modes=list(data["modes"]),
                        at_scaling_bound=data["at_scaling_bound"],
                        at_scaling_bound_fraction=data["at_scaling_bound_fraction"],
                        scaling_bound=data["scaling_bound"], domain=data["domain"], path=data["path"],
                        resumed=data["resumed"], interrupted=data["interrupted"], header=data["header"])


def survey(arch: Sequence[int], samples: int, seed: int, *, init: str = "he", digits: int = 6,
           domain: DomainSpec = None, threads: int = 0, time_limit_each: Optional[float] = None,
           output: Optional[Union[str, "os.PathLike[str]"]] = None, task_index: int = 0,
           task_count: int = 1) -> SurveyResult:
    """The certified functional dimension of many random networks of one
    architecture (sample i is `pleat random --arch A --seed S --sample i`).

    With output=FILE the samples go to the same resumable pleat-survey/1 file
    as `pleat survey -o FILE`: each finished sample is one line at once, and
    calling again with the same arguments resumes (samples in the file are
    skipped, a cut last line is rewritten); the CLI can resume it too.
    For a cluster job array, task_index=K, task_count=N runs only the samples
    i with i % N == K (as `pleat survey --task-index K --task-count N`);
    `pleat survey merge` joins the tasks' files. Ctrl-C keeps the finished
    samples (result.interrupted)."""
    arch_list = [_count(w, f"arch[{i}]", 1, 2**20) for i, w in enumerate(arch)]
    count = _count(task_count, "task_count", 1)
    index = _count(task_index, "task_index")
    if index >= count:
        raise ValueError(f"task_index: expected 0 to {count - 1} (task_count is {count}), got {index}")
    if init not in ("he", "uniform"):
        raise ValueError(f"init: expected he or uniform, got {init!r}")
    data = _core.survey(arch_list, _count(samples, "samples", 1), _count(seed, "seed"), init,
                        _count(digits, "digits", 1, 40),
                        _domain_spec(domain, arch_list[0] if arch_list else 0), _threads(threads),
                        _limit(time_limit_each, "time_limit_each"), os.fspath(output) if output else "", f"{index}/{count}")
    return _survey_result(data)


def read_survey(path: Union[str, "os.PathLike[str]"]) -> SurveyResult:
    """A pleat-survey/1 file (from `pleat survey -o` or pleat.survey) with its statistics."""
    return _survey_result(_core.read_survey(os.fspath(path)))
