"""The results of a case, and the translation of a case into the kernel's arguments.

Sits between the case model and the kernel below, and the figures, widgets, records and trade
studies above: every face computes a case's results here, so they agree.
"""

from .inputs import (
    ballistic_coefficient_kg_m2,
    case_earth_orientation,
    case_force_model,
    case_stations,
    case_trajectory,
)
from .manoeuvres import budget_for_case, burn_plan_for_case
from .result import Result
from .results import ALL_GROUPS, FAST_GROUPS, STANDARD_GROUPS, case_results, results_as_values

__all__ = [
    "ALL_GROUPS",
    "FAST_GROUPS",
    "STANDARD_GROUPS",
    "Result",
    "ballistic_coefficient_kg_m2",
    "budget_for_case",
    "burn_plan_for_case",
    "case_earth_orientation",
    "case_force_model",
    "case_results",
    "case_stations",
    "case_trajectory",
    "results_as_values",
]
