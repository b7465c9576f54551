"""Exact numbers, domains and limits from Python values into the forms the C++ core
reads (private to the package)."""

from __future__ import annotations

import collections.abc
import json
import math
import numbers
import os
import reprlib
from fractions import Fraction
from typing import Any, Optional, Sequence, Union


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
    others = ", a pleat-domain/1 dict or a file path" if what == "domain" else ""
    raise ValueError(f"{what}: expected (LO, HI) or a list of (LO, HI) per axis{others}, got {reprlib.repr(box)}")


def _domain_spec(domain: DomainSpec, input_dim: int) -> Any:
    if domain is None:
        return None
    if isinstance(domain, (str, os.PathLike)):
        path = os.fspath(domain)
        if isinstance(path, str) and not os.path.exists(path):
            # A string is a file name: 'box:0,1' or '-1,1' is no box here.
            raise ValueError(f"domain: no file {path!r} (a string names a pleat-domain/1 file; give a box as "
                             f"(LO, HI) for every axis or a list of (LO, HI) per axis, a pleat-domain/1 dict, "
                             f"or None for all of R^n0)")
        return ("file", path)
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


def _arch(arch: Any) -> list[int]:
    """Layer widths, input first. A string ("2,8,1", as `pleat random
    --arch` takes it) was taken apart character by character ("arch[0]:
    expected an integer ..., got '2'"), a number was "not iterable"."""
    if isinstance(arch, (str, bytes)) or not isinstance(arch, collections.abc.Iterable):
        raise ValueError(f"arch: expected a list of layer widths, input first, such as [2, 8, 8, 1], got {arch!r}")
    return [_count(w, f"arch[{i}]", 1, 2**20) for i, w in enumerate(arch)]


def _threads(value: int) -> int:
    return _count(value, "threads", 0, 1024)
