"""Monte Carlo dispersions: seeded reproducibility, the draws themselves, and the statistics
of linear metrics against their analytic mean and spread.

Statistical tolerance: 5 standard errors of each estimator (a false failure about once in
1.7 million runs for a normal estimator). Standard errors (common practice; e.g. Kendall &
Stuart, *The Advanced Theory of Statistics*, from memory): sample mean sigma / sqrt(N); sample
standard deviation of a normal population sigma / sqrt(2 (N - 1)); of a uniform population of
width w, sqrt((mu4 - sigma^4) / N) / (2 sigma) with sigma^2 = w^2 / 12 and mu4 = w^4 / 80.
"""

from __future__ import annotations

import math
import warnings
from pathlib import Path

import numpy as np
import pytest

from orbitledger.case import load_case
from orbitledger.kernel.errors import InputError
from orbitledger.trade import Normal, Uniform, disperse, draw_samples, parse_disperse

EXAMPLES = Path(__file__).resolve().parent.parent / "examples"
R_WGS84 = 6378.137  # km, WGS-84 equatorial radius (NIMA TR8350.2, 3rd ed., Table 3.1)
N = 20_000


@pytest.fixture(scope="module")
def base():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return load_case(EXAMPLES / "candidate-a.case.json")


def test_draws_are_numpys_pcg64_stream(base):
    dispersions = {"orbit.altitude_km": Normal(2.0), "orbit.i_deg": Uniform(97.4, 97.6)}
    samples = draw_samples(base, dispersions, 1000, seed=42)
    # Reference: numpy's Generator on PCG64, drawn input after input in the order given.
    rng = np.random.Generator(np.random.PCG64(42))
    np.testing.assert_array_equal(samples["orbit.altitude_km"], rng.normal(540.0, 2.0, 1000))
    np.testing.assert_array_equal(samples["orbit.i_deg"], rng.uniform(97.4, 97.6, 1000))


def test_same_seed_same_table_other_seed_other_table(base):
    spec = {"orbit.altitude_km": Normal(2.0), "orbit.raan_deg": Uniform(150.0, 165.0)}
    first = disperse(base, spec, 500, seed=7, progress=False)
    again = disperse(base, spec, 500, seed=7, progress=False)
    other = disperse(base, spec, 500, seed=8, progress=False)
    assert first.equals(again)
    assert not first.equals(other)
    assert first.attrs["seed"] == 7 and first.attrs["bit_generator"] == "PCG64"
    assert first.attrs["dispersions"]["orbit.altitude_km"] == {
        "distribution": "normal",
        "sigma": 2.0,
    }


def test_normal_altitude_gives_the_analytic_mean_and_spread(base):
    sigma = 2.0
    frame = disperse(base, {"orbit.altitude_km": Normal(sigma)}, N, seed=2027, progress=False)
    e = 0.001
    a = frame["semi_major_axis_km"].to_numpy()
    # a = R + altitude (docs/case-file.md): mean R + 540 km, spread sigma.
    assert abs(a.mean() - (R_WGS84 + 540.0)) < 5 * sigma / math.sqrt(N)
    assert abs(a.std(ddof=1) - sigma) < 5 * sigma / math.sqrt(2 * (N - 1))
    # Periapsis altitude a (1 - e) - R is linear in the altitude: mean and spread follow.
    hp = frame["periapsis_alt_km"].to_numpy()
    assert abs(hp.mean() - ((R_WGS84 + 540.0) * (1 - e) - R_WGS84)) < 5 * sigma / math.sqrt(N)
    assert abs(hp.std(ddof=1) - sigma * (1 - e)) < 5 * sigma / math.sqrt(2 * (N - 1))


def test_uniform_inclination_gives_the_analytic_offset_statistics(base):
    low, high = 97.4, 97.6
    frame = disperse(
        base, {"orbit.i_deg": Uniform(low, high)}, N, seed=11, metrics=["j2"], progress=False
    )
    i_sso = frame["sun_synchronous_inclination_deg"].to_numpy()
    assert np.ptp(i_sso) == 0.0  # a and e are not dispersed: one sun-synchronous inclination
    offset = frame["sun_synchronous_offset_deg"].to_numpy()
    width = high - low
    sigma = width / math.sqrt(12.0)
    mu4 = width**4 / 80.0
    se_std = math.sqrt((mu4 - sigma**4) / N) / (2 * sigma)
    assert abs(offset.mean() - ((low + high) / 2 - i_sso[0])) < 5 * sigma / math.sqrt(N)
    assert abs(offset.std(ddof=1) - sigma) < 5 * se_std
    assert offset.min() >= low - i_sso[0] and offset.max() < high - i_sso[0]


@pytest.mark.parametrize(
    ("text", "field", "words"),
    [
        ("orbit.altitude_km=normal:0", "orbit.altitude_km", "standard deviation > 0"),
        ("orbit.altitude_km=normal:-1", "orbit.altitude_km", "standard deviation > 0"),
        ("orbit.i_deg=uniform:98:97", "orbit.i_deg", "low < high"),
        ("orbit.i_deg=gauss:1", "orbit.i_deg", "normal:SIGMA or uniform:LOW:HIGH"),
        ("orbit.i_deg=normal:x", "orbit.i_deg", "must be numbers"),
        ("normal:1", "--disperse", "PATH=normal:SIGMA"),
    ],
)
def test_bad_dispersions_are_named(text, field, words):
    with pytest.raises(InputError) as err:
        parse_disperse(text)
    assert err.value.field == field and words in str(err.value)


def test_bad_samples_seed_and_paths_are_named(base):
    spec = {"orbit.altitude_km": Normal(1.0)}
    for samples, seed, field in ((0, 1, "samples"), (10, -1, "seed"), (10, 1.5, "seed")):
        with pytest.raises(InputError) as err:
            disperse(base, spec, samples, seed)
        assert err.value.field == field
    with pytest.raises(InputError) as err:
        disperse(base, {"orbit.altitude": Normal(1.0)}, 10, 1)
    assert err.value.field == "orbit.altitude"


def test_a_draw_outside_a_fields_range_is_named(base):
    # e ~ N(0.001, 0.01) draws negative eccentricities, which the case model refuses.
    with pytest.raises(InputError) as err:
        disperse(base, {"orbit.e": Normal(0.01)}, 200, seed=1)
    assert err.value.field == "orbit.e"
