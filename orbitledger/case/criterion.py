"""Criteria written as in a requirement: ``"propellant_margin_kg >= 0"``.

One text form serves the trade studies (``orbitledger.trade.parse_criterion``: a metric column
against a number) and the criteria a case states on its own results (the case file's
``criteria`` list, judged in the record's findings): ``RESULT OP THRESHOLD`` with ``OP`` one of
``>=``, ``<=``, ``>``, ``<``. In a case the threshold may also name a number of the same case
by its field path, so that a requirement follows its input:
``"lifetime_years <= budget.disposal.lifetime_limit_years"``.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from typing import Any

from .errors import MISSING, CaseError

__all__ = ["OPERATORS", "StatedCriterion", "split_criterion", "stated_criteria"]

OPERATORS = (">=", "<=", ">", "<")
_TEXT = re.compile(r"^\s*([A-Za-z_][\w.\[\]]*)\s*(>=|<=|>|<)\s*(\S+)\s*$")
_NUMBER = re.compile(r"^[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?$")
_PATH = re.compile(r"^[A-Za-z_][\w]*(\.[A-Za-z_]\w*|\[\d+\]|\.\d+)*$")


def split_criterion(text: Any) -> tuple[str, str, str]:
    """``"contact_min_per_day >= 20"`` -> ``("contact_min_per_day", ">=", "20")``.

    Raises ValueError saying how to write one.
    """
    match = _TEXT.match(str(text)) if isinstance(text, str) else None
    if not match:
        raise ValueError(
            "write RESULT >= VALUE (or <=, >, <), e.g. 'propellant_margin_kg >= 0'"
        )
    return match.group(1), match.group(2), match.group(3)


def is_number_text(text: str) -> bool:
    return bool(_NUMBER.match(text))


@dataclass(frozen=True)
class StatedCriterion:
    """A case's criterion with its threshold resolved: ``threshold_from`` is the field path
    the threshold was read from ("" when the text gives the number itself)."""

    text: str
    metric: str
    op: str
    threshold: float
    threshold_from: str


def _number_at(data: Any, path: str) -> Any:
    from .changes import parse_path

    node = data
    for token in parse_path(path):
        if isinstance(node, list) and isinstance(token, int) and 0 <= token < len(node):
            node = node[token]
        elif isinstance(node, dict) and isinstance(token, str) and token in node:
            node = node[token]
        else:
            return MISSING
    return node


def stated_criteria(data: dict[str, Any], *, file: str | None = None) -> list[StatedCriterion]:
    """The criteria of the case data ``data`` (a case as JSON data), thresholds resolved.

    Raises CaseError naming ``criteria[k]`` for a text that is not a criterion or a threshold
    path that is not a number in this case.
    """
    out = []
    for k, text in enumerate(data.get("criteria") or []):
        where = f"criteria[{k}]"
        try:
            metric, op, limit = split_criterion(text)
        except ValueError as err:
            raise CaseError(where, text, str(err), file=file) from None
        if is_number_text(limit):
            threshold, source = float(limit), ""
        elif _PATH.match(limit):
            value = _number_at(data, limit)
            if value is MISSING or value is None:
                raise CaseError(
                    where, text, f"the threshold {limit} is not set in this case", file=file
                )
            if isinstance(value, bool) or not isinstance(value, int | float):
                raise CaseError(where, text, f"the threshold {limit} is not a number", file=file)
            threshold, source = float(value), limit
        else:
            raise CaseError(
                where,
                text,
                "the threshold must be a number or the path of a number of this case "
                "(e.g. budget.disposal.lifetime_limit_years)",
                file=file,
            )
        if not math.isfinite(threshold):
            raise CaseError(where, text, "the threshold must be a finite number", file=file)
        out.append(StatedCriterion(" ".join(str(text).split()), metric, op, threshold, source))
    return out
