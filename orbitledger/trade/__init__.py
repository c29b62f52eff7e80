"""Trade studies: parameter sweeps, Monte Carlo dispersions, criteria and candidate tables.

``sweep(case, {"orbit.altitude_km": "500:600:10"}, metrics=["orbit", "contacts"])`` and
``disperse(case, {"orbit.altitude_km": Normal(2.0)}, samples=1000, seed=7)`` return pandas
DataFrames (inputs named by their case-file paths, metrics with their units in their names);
``scheduler=`` runs the per-case metrics on a Dask cluster with identical results.
``apply_criteria`` marks each case pass/fail with its reasons; ``rank_candidates`` ranks the
passing ones; ``candidates_to_cases`` turns them into cases for the widgets' trade view.
``case_findings`` judges the criteria a case file states on its own results (a record's
findings).
See docs/trade.md.
"""

from .criteria import (
    Criterion,
    apply_criteria,
    candidates_to_cases,
    parse_criterion,
    rank_candidates,
)
from .dispersion import Normal, Uniform, disperse, draw_samples, parse_disperse
from .evaluate import estimate_bytes, evaluate_cases
from .findings import case_findings
from .metrics import CASE_GROUPS, METRIC_GROUPS, VECTOR_GROUPS, repeat_track_metrics
from .sweep import grid, parse_values, parse_vary, sweep, sweep_inputs
from .tables import load_table, save_table

__all__ = [
    "CASE_GROUPS",
    "METRIC_GROUPS",
    "VECTOR_GROUPS",
    "Criterion",
    "Normal",
    "Uniform",
    "apply_criteria",
    "candidates_to_cases",
    "case_findings",
    "disperse",
    "draw_samples",
    "estimate_bytes",
    "evaluate_cases",
    "grid",
    "load_table",
    "parse_criterion",
    "parse_disperse",
    "parse_values",
    "parse_vary",
    "rank_candidates",
    "repeat_track_metrics",
    "save_table",
    "sweep",
    "sweep_inputs",
]
