"""The result classes of walks, certificates, samples and inspections (exact
values as Fractions), and their construction from the core's records."""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from fractions import Fraction
from typing import TYPE_CHECKING, Any, Iterator, Optional, Sequence

from ._exact import Number, _exact_text, _float_array, _tolist

if TYPE_CHECKING:
    from ._network import Network


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

    id: its number in the walk (None from Network.inspect, which walks
    nothing); pattern: the activation pattern ("101|01"); point: an exact
    point strictly inside; bounded: bounded as a subset of R^n0; facets: its
    irredundant facets; affine: the network's exact map on it;
    nonsmooth_neurons: neurons identically zero there with a nonzero backward
    signal."""
    id: Optional[int]
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
        return f"<{len(self)} region{'' if len(self) == 1 else 's'}>"


@dataclass(frozen=True)
class WalkResult:
    """What Network.walk found.

    regions: every region found, in output order (a lazy sequence of Region);
    complete: the walk ended by itself; certified: complete and every
    certificate checked exactly. A walk cut short (time_limit, max_regions,
    KeyboardInterrupt) has complete = certified = False and stop_reason set:
    its counts are lower bounds, except linear_regions, which is then None
    (regions not found may join the pieces found into fewer)."""
    domain: str
    regions: Sequence[Region] = field(repr=False)
    region_count: int
    bounded_regions: int
    linear_regions: Optional[int]
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
    of the stacked parameter Jacobians there. lower_bound and upper_bound are
    proved bounds on it, equal to it when it is exact; when time_limit or
    Ctrl-C stopped the batch stage, batch_functional_dimension is None,
    points_checked counts the points whose regions were decided before the
    stop (regions_touched counts theirs) and nothing was walked."""
    points: int
    batch_functional_dimension: Optional[int]
    lower_bound: int
    upper_bound: int
    points_checked: int
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
    extra_kernel_summary: them grouped by mechanism; kernel: a basis of the exact
    kernel (rows of length D): the scaling directions, then the extra ones
    checked on every smooth region; empty when no kernel was proved (a run
    cut short before its proof);
    claim: the verdict on claim=N; batch: with points=..., the exact rank at
    those points (BatchRank); certified_by: "points" (exact points met the
    scaling bound, no walk), "walk" (the walk's rank met it), "kernel" (an
    exact kernel checked on every region) or None; points_drawn: exact points
    drawn before any walk; witness_points: those whose regions' rows raised
    the rank (re-check with points=...); seconds, walk_seconds (of which the
    walk, 0 when none ran), points_seconds (of which the exact points and
    lines before any walk; the rest is the proof after the walk)."""
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
    points_seconds: float = field(repr=False, default=0.0)


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
    # Bounds only: the lower bound is the rank of the rows of the regions that
    # raised it (points drawn first, then walked regions: witness_points),
    # the upper bound the scaling directions or, when it is below them, the
    # scaling and extra directions proved on every smooth region.
    reason = data["stop_reason"] or "the walk could not be certified"
    upper = ("the scaling directions" if data["upper_bound"] == data["scaling_bound"]
             else "an exact kernel checked on every smooth region")
    return {"lower_bound": f"rows of {data['regions_contributing']} regions have a nonsingular minor (mod p); "
                          f"their points: witness_points (not certified: {reason})",
            "upper_bound": f"{upper} (not certified: {reason})"}


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
        witness_points=data["witness_points"], walk_seconds=data["walk_seconds"],
        points_seconds=data["points_seconds"])


@dataclass(frozen=True)
class SampleResult:
    """The usual sampled (floating-point SVD) estimate beside the certified value.

    rank: numerical rank of the stacked float Jacobian at the customary
    tolerance sigma_max * max(M, N) * eps; rank_rtol_1e6 / rank_rtol_1e10 at
    relative tolerances; certified_value: the exact functional dimension of
    the same domain (None when not certified); verdict: "equal", "below",
    "above-impossible" or None (undecided); regions_touched of regions_total:
    distinct regions the points fell in, decided exactly; first_batch_reaching:
    the smallest m whose first m points reach the certified value (None when
    the batch never does, or without a certified value); points: the
    sampled points exactly. A run interrupted while drawing points has
    rank None and stop_reason "interrupted"; one interrupted after a
    certified walk, in the search for first_batch_reaching, keeps its
    certified_value, with first_batch_reaching None (not known) and
    stop_reason "interrupted"."""
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
    base = dataclasses.replace(_region(data), id=None)  # no walk numbered it
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
