"""Monte Carlo dispersions of case inputs: injection errors and their spread in the metrics.

Each dispersed input is named by its JSON path and given a distribution:

- ``Normal(sigma)``: the base case's value plus a normal error of standard deviation
  ``sigma`` (in the input's unit): ``"normal:SIGMA"`` on the command line;
- ``Uniform(low, high)``: values drawn uniformly in [low, high), absolute bounds in the
  input's unit (not offsets): ``"uniform:LOW:HIGH"``.

Every sample is drawn up front, in the calling process, from numpy's ``Generator`` with the
PCG64 bit generator seeded with ``seed``, input after input in the order given, ``samples``
values each. So a study is reproducible from its seed across runs and across the local and
Dask runs (workers never draw). The seed, the bit generator and the distributions are
recorded in the result's ``attrs``.
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np

from ..kernel.errors import InputError

__all__ = ["Normal", "Uniform", "disperse", "draw_samples", "parse_disperse"]


@dataclass(frozen=True)
class Normal:
    """A normal error of standard deviation ``sigma`` about the base case's value."""

    sigma: float

    def __post_init__(self) -> None:
        if not (math.isfinite(self.sigma) and self.sigma > 0.0):
            raise InputError("sigma", self.sigma, "must be a finite standard deviation > 0")

    def draw(self, rng: np.random.Generator, centre: float, samples: int) -> np.ndarray:
        return rng.normal(centre, self.sigma, samples)

    def describe(self) -> dict[str, Any]:
        return {"distribution": "normal", "sigma": self.sigma}


@dataclass(frozen=True)
class Uniform:
    """Values uniform in [low, high) (absolute bounds, in the input's unit)."""

    low: float
    high: float

    def __post_init__(self) -> None:
        if not (math.isfinite(self.low) and math.isfinite(self.high) and self.high > self.low):
            raise InputError(
                "uniform", (self.low, self.high), "needs finite bounds with low < high"
            )

    def draw(self, rng: np.random.Generator, centre: float, samples: int) -> np.ndarray:
        return rng.uniform(self.low, self.high, samples)

    def describe(self) -> dict[str, Any]:
        return {"distribution": "uniform", "low": self.low, "high": self.high}


def parse_disperse(text: str) -> tuple[str, Normal | Uniform]:
    """``"orbit.altitude_km=normal:2.0"`` or ``"orbit.i_deg=uniform:97.4:97.6"``."""
    path, sep, spec = text.partition("=")
    path = path.strip()
    if not sep or not path:
        raise InputError("--disperse", text, "write PATH=normal:SIGMA or PATH=uniform:LOW:HIGH")
    parts = [p.strip() for p in spec.split(":")]
    try:
        numbers = [float(p) for p in parts[1:]]
    except ValueError:
        raise InputError(path, spec, "the distribution's parameters must be numbers") from None
    try:
        if parts[0] == "normal" and len(numbers) == 1:
            return path, Normal(numbers[0])
        if parts[0] == "uniform" and len(numbers) == 2:
            return path, Uniform(*numbers)
    except InputError as err:
        raise InputError(path, spec, err.reason) from None
    raise InputError(path, spec, "write normal:SIGMA or uniform:LOW:HIGH")


def draw_samples(
    base: Any, dispersions: Mapping[str, Normal | Uniform], samples: int, seed: int
) -> dict[str, np.ndarray]:
    """The input columns of a Monte Carlo run: ``{path: samples values}``, drawn up front."""
    from ..case.changes import check_input_path

    if isinstance(samples, bool) or not isinstance(samples, int | np.integer) or samples < 1:
        raise InputError("samples", samples, "must be a whole number of cases >= 1")
    if isinstance(seed, bool) or not isinstance(seed, int | np.integer) or seed < 0:
        raise InputError("seed", seed, "must be a whole number >= 0")
    if not dispersions:
        raise InputError("dispersions", {}, "name at least one input to disperse")
    rng = np.random.Generator(np.random.PCG64(int(seed)))
    out: dict[str, np.ndarray] = {}
    for path, distribution in dispersions.items():
        if not isinstance(distribution, Normal | Uniform):
            raise InputError(path, distribution, "needs Normal(sigma) or Uniform(low, high)")
        centre = check_input_path(base, path)
        if centre is None and isinstance(distribution, Normal):
            raise InputError(path, None, "is not set in the base case: no value to disperse about")
        out[path] = distribution.draw(rng, float(centre or 0.0), int(samples))
    return out


def disperse(
    base: Any,
    dispersions: Mapping[str, Normal | Uniform],
    samples: int,
    seed: int,
    metrics: Any = ("orbit", "j2"),
    **options: Any,
):
    """A Monte Carlo run: ``samples`` cases with the inputs drawn from ``dispersions``.

    Returns the DataFrame of :func:`orbitledger.trade.evaluate.evaluate_cases` (inputs, then
    metrics); ``attrs`` also hold ``seed``, ``bit_generator`` ("PCG64"), ``samples`` and the
    ``dispersions`` and, with the lifetime group, ``lifetime_percentiles``
    (``orbitledger.trade.lifetime_spread``). ``options``: ``scheduler``, ``chunk_size``,
    ``progress``, ``repeat``, ``max_memory_bytes``.
    """
    from .evaluate import as_case, evaluate_cases, refuse_if_too_large

    case = as_case(base)
    if isinstance(samples, int | np.integer) and not isinstance(samples, bool):
        refuse_if_too_large(
            int(samples), len(dispersions), metrics, options.get("max_memory_bytes"),
            field="samples",
        )  # fmt: skip
    inputs = draw_samples(case, dispersions, samples, seed)
    attrs = {
        "seed": int(seed),
        "bit_generator": "PCG64",
        "samples": int(samples),
        "dispersions": {p: d.describe() for p, d in dispersions.items()},
    }
    frame = evaluate_cases(case, inputs, metrics, kind="monte-carlo", attrs=attrs, **options)
    from .lifetime_spread import lifetime_percentiles

    spread = lifetime_percentiles(frame)  # 5/50/95 % of the lifetime, when it was computed
    if spread is not None:
        frame.attrs["lifetime_percentiles"] = spread
    return frame
