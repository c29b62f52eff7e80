"""One named, unit-carrying result of a case, with the tolerance a recomputation must meet."""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass
from typing import Any

__all__ = ["Result"]


@dataclass(frozen=True)
class Result:
    """One named, unit-carrying result of a case.

    ``rel_tol`` and ``abs_tol`` (in ``unit``) bound how far a recomputation may differ before
    ``verify`` reports it: ``math.isclose(a, b, rel_tol=rel_tol, abs_tol=abs_tol)``.
    ``caution``: the warning to show beside the value where it could feed a safety decision.
    """

    name: str
    value: float
    unit: str
    description: str
    group: str
    rel_tol: float = 1e-9
    abs_tol: float = 0.0
    caution: str = ""

    def agrees_with(self, other_value: float) -> bool:
        if math.isnan(self.value) and math.isnan(other_value):
            return True
        if math.isinf(self.value) or math.isinf(other_value):
            return self.value == other_value
        return math.isclose(self.value, other_value, rel_tol=self.rel_tol, abs_tol=self.abs_tol)

    def as_dict(self) -> dict[str, Any]:
        return asdict(self)
