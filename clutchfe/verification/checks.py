"""One verification row: a computed quantity against its reference, with the tolerance and source."""
from __future__ import annotations

import math
from dataclasses import asdict, dataclass


@dataclass(frozen=True)
class Check:
    case: str               # verification case, e.g. "Hertz sphere on flat"
    quantity: str           # what is compared, with its unit in the label
    computed: float
    reference: float
    error: float            # relative (|computed/reference - 1|) or absolute, see error_kind
    error_kind: str         # "relative" or "absolute"
    tolerance: float        # same kind and unit as error
    source: str             # where the reference comes from

    @property
    def passed(self) -> bool:
        return math.isfinite(self.error) and self.error <= self.tolerance

    def as_dict(self) -> dict:
        return {**asdict(self), "passed": self.passed}


def relative(case: str, quantity: str, computed: float, reference: float, tolerance: float, source: str) -> Check:
    error = abs(float(computed) / float(reference) - 1.0) if reference else math.inf
    return Check(case, quantity, float(computed), float(reference), error, "relative", tolerance, source)


def absolute(case: str, quantity: str, computed: float, reference: float, tolerance: float, source: str) -> Check:
    return Check(case, quantity, float(computed), float(reference), abs(float(computed) - float(reference)),
                 "absolute", tolerance, source)
