"""Exchange with other flight-dynamics tools: TLE/SGP4, CCSDS OPM and OEM, CSV.

Imports make cases (``tle_case``, ``opm_case``) whose orbit is an osculating GCRF state and
whose ``source`` section keeps the imported text and its fingerprint; exports write a case as
an OPM (``opm_text``), its ephemeris as an OEM (``oem_text``) or CSV (``case_csv``); an OEM
read back (``parse_oem``) is compared with our own propagation by ``ephemeris_difference``.
See docs/exchange.md.
"""

from .compare import EphemerisDifference, ephemeris_difference
from .csv_export import CSV_KINDS, case_csv, columns_csv, rows_csv
from .importing import ImportedCase, opm_case, tle_case
from .oem import Oem, OemSegment, oem_text, parse_oem
from .opm import Opm, OpmManeuver, opm_state_gcrf, parse_opm
from .opm_export import opm_text
from .tle_fit import TleFit, fit_tle
from .tle_format import format_tle
from .tle import (
    SGP4_ERROR_WORDS,
    TleEpochWarning,
    TwoLineElements,
    case_tle_trajectory,
    parse_tle,
    tle_checksum,
    tle_gcrf_states,
    tle_teme_states,
    tle_trajectory,
)

__all__ = [
    "CSV_KINDS",
    "SGP4_ERROR_WORDS",
    "EphemerisDifference",
    "ImportedCase",
    "Oem",
    "OemSegment",
    "Opm",
    "OpmManeuver",
    "TleEpochWarning",
    "TleFit",
    "TwoLineElements",
    "case_csv",
    "case_tle_trajectory",
    "columns_csv",
    "ephemeris_difference",
    "fit_tle",
    "format_tle",
    "oem_text",
    "opm_case",
    "opm_state_gcrf",
    "opm_text",
    "parse_oem",
    "parse_opm",
    "parse_tle",
    "rows_csv",
    "tle_case",
    "tle_checksum",
    "tle_gcrf_states",
    "tle_teme_states",
    "tle_trajectory",
]
