"""Surveys of the functional dimension over random networks: pleat.survey and
pleat.read_survey."""

from __future__ import annotations

import dataclasses
import os
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Any, Optional, Sequence, Union

from . import _core
from ._exact import _arch, _domain_spec, _limit, _count, _threads, DomainSpec


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
    fraction. Uncertified samples (cut short) are bounds, out of the histogram.
    dropped_partial_line: the file's last line was cut short by a killed run and
    left out (read_survey) or dropped and its sample run again (survey)."""
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
    interrupted: bool  # shown: a survey stopped by Ctrl-C holds fewer samples than samples_total
    header: str = field(repr=False)
    dropped_partial_line: bool = field(repr=False, default=False)

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
                        resumed=data["resumed"], interrupted=data["interrupted"], header=data["header"],
                        dropped_partial_line=data["dropped_partial_line"])


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
    arch_list = _arch(arch)
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
