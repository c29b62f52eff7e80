"""The case model: validated inputs of an orbit analysis, canonical JSON, fingerprints, files.

The pydantic models here are the one validator of case files (``docs/case-file.md``). A
refused input raises :class:`CaseError` (an ``InputError``, so a ``ValueError``) naming the
field's JSON path, the value and the reason.
"""

from .errors import CaseError, CaseFileChanged, CaseFileNotFound
from .io import CaseFile, atomic_write_text, load_case, open_case, parse_case, write_new_case
from .model import SCHEMA_ID, Case, case_from_data, case_json_schema
from .orbit import ORBIT_FORMS, ApsidesOrbit, CartesianOrbit, ClassicalOrbit
from .plan import (
    Allowance,
    AtApsis,
    AtEpoch,
    AtNode,
    Budget,
    Burn,
    CircularTransfer,
    Disposal,
    InclinationTransfer,
)
from .sections import BodySection, EarthOrientation, ForceModel, Meta, Spacecraft, Station, Window
from .source import OpmSource, TleSource, text_fingerprint
from .starter import starter_case

__all__ = [
    "SCHEMA_ID",
    "Case",
    "CaseError",
    "CaseFile",
    "CaseFileChanged",
    "CaseFileNotFound",
    "load_case",
    "parse_case",
    "open_case",
    "case_from_data",
    "case_json_schema",
    "starter_case",
    "write_new_case",
    "atomic_write_text",
    "text_fingerprint",
    "ORBIT_FORMS",
    "ClassicalOrbit",
    "ApsidesOrbit",
    "CartesianOrbit",
    "Meta",
    "BodySection",
    "Spacecraft",
    "Station",
    "Window",
    "EarthOrientation",
    "ForceModel",
    "Burn",
    "AtEpoch",
    "AtApsis",
    "AtNode",
    "CircularTransfer",
    "InclinationTransfer",
    "Budget",
    "Allowance",
    "Disposal",
    "TleSource",
    "OpmSource",
]
