"""Case data for the case-model tests: the starter data with sections or orbit fields replaced,
and the check that a refusal is one CaseError line naming the file."""

from __future__ import annotations

import copy

import pytest

from orbitledger.case import CaseError, case_from_data
from orbitledger.case.starter import STARTER_DATA
from orbitledger.kernel import InputError


def data(**sections):
    """Starter data with whole sections replaced (None removes one)."""
    result = copy.deepcopy(STARTER_DATA)
    for key, value in sections.items():
        if value is None:
            result.pop(key, None)
        else:
            result[key] = value
    return result


def orbit(**fields):
    base = dict(STARTER_DATA["orbit"])
    base.update(fields)
    return {k: v for k, v in base.items() if v is not None}


def refused(raw) -> CaseError:
    with pytest.raises(CaseError) as caught:
        case_from_data(raw, file="cand.case.json")
    err = caught.value
    assert isinstance(err, InputError) and isinstance(err, ValueError)
    assert "\n" not in str(err)
    assert str(err).startswith("cand.case.json: ")
    return err
