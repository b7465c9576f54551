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

from . import _core
from ._network import Network
from ._results import (AffineMap, BatchRank, CertifyResult, ClaimVerdict, Evaluation, ExtraDirection, Facet,
                       Inspection, Region, RegionRecord, SampleResult, WalkResult)
from ._survey import SurveyResult, SurveySample, read_survey, survey

__all__ = [
    "Network", "WalkResult", "Region", "Facet", "AffineMap", "CertifyResult", "ExtraDirection",
    "ClaimVerdict", "BatchRank", "SampleResult", "Inspection", "RegionRecord", "Evaluation",
    "SurveySample", "SurveyResult", "survey", "read_survey", "LimitError", "__version__",
]

__version__: str = _core.__version__
LimitError = _core.LimitError
LimitError.__doc__ = "A documented limit of pleat was reached (not bad input, not a bug)."
