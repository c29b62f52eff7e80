"""The record: everything a calculation record carries, as one JSON document.

Sections: inputs (every case's canonical JSON, its fingerprint, the sources of its constants),
models and assumptions, named results, standard results per case (``orbitledger.analysis``),
figures, environment, fingerprints, revision, sign-offs, history. The HTML embeds this JSON
whole; the PDF attaches it; ``verify`` reads it back.

Fingerprints are SHA-256 over canonical JSON (sorted keys, no insignificant white space, UTF-8,
floats by ``repr``), the same rule as a case file's fingerprint (docs/case-file.md):

- inputs: of the list ``[{"name", "fingerprint"}]`` of the cases, sorted by name;
- results: of ``{"named": [...], "standard": [...]}``;
- notebook: of the study's cells ``[{"cell_type", "source"}]``, outputs left out (they are
  what the run produced, not what was asked).
"""

from __future__ import annotations

import hashlib
import importlib.metadata
import json
import math
import platform
import subprocess
import sys
from pathlib import Path
from typing import Any

from orbitledger._version import __version__
from orbitledger.case.canonical import canonical_json as canonical_dumps  # the one home

__all__ = [
    "RECORD_SCHEMA",
    "canonical_dumps",
    "cautions_for",
    "decision_of",
    "environment",
    "fingerprint_of",
    "inputs_fingerprint",
    "json_number",
    "models_and_assumptions",
    "notebook_cells",
    "notebook_fingerprint",
    "results_fingerprint",
    "standard_results",
]

RECORD_SCHEMA = "orbitledger.record/1"

# Packages whose versions a reader needs to reproduce the numbers.
_KEY_PACKAGES = (
    "numpy", "scipy", "pyerfa", "pydantic", "bokeh", "sgp4", "nbconvert", "nbclient", "ipykernel",
    "astropy-iers-data",
)  # fmt: skip

GENERAL_CAUTION = (
    "Preliminary analysis with the stated models and inputs. For collision avoidance, re-entry, "
    "disposal compliance or launch decisions, defer to authoritative ephemerides and data, the "
    "licensing authority and licensed practice."
)


def fingerprint_of(value: Any) -> str:
    """SHA-256 (FIPS 180-4) hex digest of the canonical JSON of ``value``."""
    return hashlib.sha256(canonical_dumps(value).encode("utf-8")).hexdigest()


def json_number(value: float) -> float | str:
    """A float JSON can carry: NaN and infinities as the strings ``float()`` reads back."""
    if isinstance(value, float) and not math.isfinite(value):
        return "NaN" if math.isnan(value) else ("Infinity" if value > 0 else "-Infinity")
    return value


def notebook_cells(nb: Any) -> list[dict[str, Any]]:
    """The study's cells as the record keeps them: type, source and tags, no outputs."""
    cells = []
    for cell in nb["cells"]:
        tags = list(cell.get("metadata", {}).get("tags", []))
        cells.append({"cell_type": cell["cell_type"], "source": cell["source"], "tags": tags})
    return cells


def notebook_fingerprint(cells: list[dict[str, Any]]) -> str:
    return fingerprint_of([{"cell_type": c["cell_type"], "source": c["source"]} for c in cells])


def inputs_fingerprint(inputs: list[dict[str, Any]]) -> str:
    pairs = sorted(
        ({"name": c["name"], "fingerprint": c["fingerprint"]} for c in inputs),
        key=lambda p: p["name"],
    )
    return fingerprint_of(pairs)


def results_fingerprint(named: list[dict[str, Any]], standard: list[dict[str, Any]]) -> str:
    return fingerprint_of({"named": named, "standard": standard})


def standard_results(case: Any) -> list[dict[str, Any]]:
    """The standard results of one case from ``orbitledger.analysis.case_results``, as JSON rows."""
    from orbitledger.analysis import case_results

    rows = []
    for r in case_results(case).values():
        rows.append(
            {
                "name": r.name,
                "value": json_number(float(r.value)),
                "unit": r.unit,
                "description": r.description,
                "group": r.group,
                "rel_tol": float(r.rel_tol),
                "abs_tol": float(r.abs_tol),
            }
        )
    return rows


def constants_of(case: Any) -> list[dict[str, Any]]:
    """The central body's constants with the source of each (from ``case.body_constants()``)."""
    body = case.body_constants()
    units = {"mu_km3_s2": "km^3/s^2", "radius_km": "km", "rotation_rate_rad_s": "rad/s"}
    rows = []
    for name in ("mu_km3_s2", "radius_km", "flattening", "j2", "j3", "j4", "rotation_rate_rad_s"):
        value = getattr(body, name, None)
        if value is None:
            continue
        source = body.sources.get(name, "")
        rows.append(
            {
                "body": body.name,
                "name": name,
                "value": float(value),
                "unit": units.get(name, ""),
                "source": source,
            }
        )
    return rows


def models_and_assumptions(case_data: dict[str, Any]) -> list[dict[str, str]]:
    """What a reader must know to reproduce a case: force model, frames, time scales, EOP."""
    fm = case_data.get("force_model") or {"propagator": "two-body"}
    eop = case_data.get("earth_orientation") or {}
    prop = fm.get("propagator", "two-body")
    force = {
        "two-body": "Two-body (point-mass central body)",
        "j2-mean": "Two-body plus J2 secular drift of RAAN, argument of periapsis and mean anomaly",
        "numerical": (
            f"Numerical integration: zonal harmonics to J{fm.get('zonal_degree', 2)}"
            + (", atmospheric drag" if fm.get("drag") else "")
            + (f", third bodies: {', '.join(fm['third_body'])}" if fm.get("third_body") else "")
            + f"; rtol {fm.get('rtol')}, atol {fm.get('atol_km')} km"
        ),
        "sgp4": "SGP4 (Vallado et al. 2006, AIAA 2006-6753) from TLE mean elements",
    }.get(prop, prop)
    from orbitledger.analysis.flux_scenario import density_statement

    density, flux = density_statement(case_data)
    return [
        {"topic": "Force model", "value": force},
        {"topic": "Propagator setting", "value": prop},
        {
            "topic": "Inertial frame",
            "value": "GCRF (IAU 2006/2000A precession-nutation via pyerfa / SOFA)",
        },
        {
            "topic": "Earth-fixed frame",
            "value": "ITRF via pyerfa: Earth rotation angle, polar motion xp/yp",
        },
        {
            "topic": "Time scales",
            "value": "UTC input; TAI, TT from pyerfa (leap seconds from its table); UT1 = UTC + dUT1",
        },
        *_earth_orientation_rows(case_data, eop),
        *_site_rows(case_data),
        *_imaging_rows(case_data),
        {"topic": "Density model", "value": density},
        {"topic": "Solar activity", "value": flux},
    ]


def _earth_orientation_rows(case_data: dict[str, Any], eop: dict[str, Any]) -> list[dict[str, str]]:
    """dUT1 and the pole: the stated values, or the IERS table and the values looked up."""
    if eop.get("source", "values") != "iers":
        return [
            {"topic": "dUT1", "value": f"{eop.get('dut1_s', 0.0)} s"},
            {
                "topic": "Polar motion",
                "value": f"xp {eop.get('xp_arcsec', 0.0)} arcsec, yp {eop.get('yp_arcsec', 0.0)} arcsec",
            },
        ]
    from orbitledger.analysis.earth_orientation import earth_orientation_rows
    from orbitledger.case import case_from_data

    return earth_orientation_rows(case_from_data(case_data))


def _site_rows(case_data: dict[str, Any]) -> list[dict[str, str]]:
    from orbitledger.analysis.contacts import site_rows

    return site_rows(case_data.get("stations") or [])


def _imaging_rows(case_data: dict[str, Any]) -> list[dict[str, str]]:
    from orbitledger.analysis.imaging import imaging_rows

    return imaging_rows(case_data)


def cautions_for(cases: list[dict[str, Any]]) -> list[str]:
    """The general caution, and the specific ones the inputs call for (design.md)."""
    out = [GENERAL_CAUTION]
    text = json.dumps(cases).lower()
    if any((c.get("budget") or {}).get("disposal") for c in cases):
        out.append(
            "Disposal and orbital-lifetime figures depend strongly on solar activity and drag "
            "inputs; compliance with a disposal rule is for the licensing authority to judge."
        )
    if any((c.get("force_model") or {}).get("drag") for c in cases) or "reentry" in text:
        out.append(
            "Drag-driven results (decay, re-entry) come from a simple density model; they are "
            "not a re-entry prediction."
        )
    if "collision" in text:
        out.append(
            "Collision-avoidance allowances are budget lines only; conjunction assessment needs "
            "authoritative ephemerides and screening services."
        )
    return out


def decision_of(cells: list[dict[str, Any]], metas: list[dict[str, Any]]) -> dict[str, Any]:
    """The record's decision: markdown cells tagged decision / rationale, else the first case's meta.

    ``cells`` as ``notebook_cells`` gives them; ``metas`` the ``meta`` of each case, in order.
    """

    def tagged(tag: str) -> str:
        return "\n\n".join(
            c["source"] for c in cells if c["cell_type"] == "markdown" and tag in c.get("tags", [])
        )

    first = metas[0] if metas else {}
    decision_md = tagged("decision")
    return {
        "decision": decision_md or first.get("decision", ""),
        "rationale": tagged("rationale") or first.get("rationale", ""),
        "alternatives": [a for m in metas for a in m.get("alternatives", [])],
        "source": "notebook cells tagged decision/rationale" if decision_md else "case meta",
    }


def _git(folder: Path, *args: str) -> str | None:
    try:
        done = subprocess.run(
            ["git", "-C", str(folder), *args],
            capture_output=True,
            text=True,
            timeout=20,
            check=False,
        )
    except (OSError, subprocess.SubprocessError):
        return None
    return done.stdout.strip() if done.returncode == 0 else None


def environment(study_folder: Path, built_utc: str) -> dict[str, Any]:
    """Software and platform: orbitledger, Python, key packages, git state of the study folder."""
    packages = {}
    for name in _KEY_PACKAGES:
        try:
            packages[name] = importlib.metadata.version(name)
        except importlib.metadata.PackageNotFoundError:
            packages[name] = "not installed"
    commit = _git(study_folder, "rev-parse", "HEAD")
    dirty = None
    if commit is not None:
        status = _git(study_folder, "status", "--porcelain", "--untracked-files=no", "--", ".")
        dirty = bool(status)
    return {
        "orbitledger": __version__,
        "python": sys.version.split()[0],
        "python_implementation": platform.python_implementation(),
        "packages": packages,
        "platform": platform.platform(),
        "git_commit": commit,
        "git_dirty": dirty,
        "built_utc": built_utc,
    }
