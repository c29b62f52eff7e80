"""Every error class of the package survives a pickle round trip.

Dask workers and multiprocessing pools send a worker's exception back to the caller by pickling
it (the ``pickle`` module's documentation: an exception is rebuilt from ``__reduce__``, by
default from ``self.args``); a class whose ``__init__`` takes keyword-only or several
arguments must say how to rebuild itself, or the caller gets a TypeError instead of the error.
"""

from __future__ import annotations

import importlib
import inspect
import pickle
import pkgutil

import pytest

import orbitledger
from orbitledger.case.errors import MISSING, CaseError, CaseFileChanged, CaseFileNotFound
from orbitledger.kernel.errors import InputError


def _samples() -> dict[str, BaseException]:
    """One instance of each error class, built the way the package raises it."""
    from orbitledger.reporting.render_pdf import BrowserMissing
    from orbitledger.reporting.run import BuildError
    from orbitledger.widgets.background import JobCancelled
    from orbitledger.widgets.fields import FieldParseError

    from orbitledger.cli.main import CheckFailed, UsageError

    inner = CaseError("orbit.i_deg", 200.0, "must be <= 180.0", file="b.case.json")
    samples = [
        InputError("orbit.e", 1.5, "must be < 1", file="a.case.json"),
        InputError("tof_s", MISSING, "required"),
        CaseError("stations[1].lat_deg", 95.0, "must be <= 90.0", file="a.case.json"),
        CaseError("", MISSING, "malformed JSON: expecting value", file="x.json", line=3, column=7),
        CaseError("orbit.e", -1.0, "must be >= 0.0", file="c.case.json", others=(inner,)),
        CaseFileChanged("", MISSING, "changed on disk since it was loaded", file="d.case.json"),
        CaseFileNotFound("", MISSING, "no such case file", file="e.case.json"),
        UsageError("give --vary or --disperse"),
        CheckFailed("record.html: the results differ"),
        BuildError("cell 3 failed: NameError"),
        BrowserMissing("no Chromium to print with"),
        FieldParseError("orbit.e", "abc", "not a number"),
        JobCancelled(),
    ]
    return {type(sample).__qualname__: sample for sample in samples}


def _error_classes() -> set[type[BaseException]]:
    """Every exception class (warnings excepted) defined in a module of the package."""
    found = set()
    for info in pkgutil.walk_packages(orbitledger.__path__, "orbitledger."):
        if info.name.startswith("orbitledger.examples") or info.name.endswith("__main__"):
            continue
        module = importlib.import_module(info.name)
        for _, value in inspect.getmembers(module, inspect.isclass):
            if (
                issubclass(value, BaseException)
                and not issubclass(value, Warning)
                and value.__module__ == module.__name__
            ):
                found.add(value)
    return found


def test_every_error_class_has_a_sample():
    names = {cls.__qualname__ for cls in _error_classes()}
    missing = names - set(_samples())
    assert not missing, f"add a pickle sample for: {sorted(missing)}"


@pytest.mark.parametrize("name", sorted(_samples()))
def test_round_trip_keeps_type_message_and_fields(name):
    error = _samples()[name]
    copy = pickle.loads(pickle.dumps(error))
    assert type(copy) is type(error)
    assert str(copy) == str(error)
    for attribute in ("field", "value", "reason", "file", "line", "column", "path", "text"):
        if hasattr(error, attribute):
            assert getattr(copy, attribute) == getattr(error, attribute), attribute
    if isinstance(error, CaseError):
        assert [str(e) for e in copy.others] == [str(e) for e in error.others]


def test_missing_stays_the_one_marker():
    copy = pickle.loads(pickle.dumps(InputError("tof_s", MISSING, "required")))
    assert copy.value is MISSING
    assert str(copy) == "tof_s: required"


def test_a_worker_error_reaches_the_caller_through_a_process_pool():
    """The real path: multiprocessing pickles the exception raised in the worker."""
    import multiprocessing

    context = multiprocessing.get_context("spawn")
    with context.Pool(1) as pool:
        with pytest.raises(CaseError) as caught:
            pool.apply(_raise_case_error)
    assert caught.value.field == "orbit.e"
    assert caught.value.file == "w.case.json"


def _raise_case_error():
    raise CaseError("orbit.e", 2.0, "must be < 1", file="w.case.json")
