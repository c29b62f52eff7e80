"""The JavaScript orbitledger's own figures run in the browser: declared here, allowed in records.

A record runs no code written by a study: ``reporting.safe_bokeh`` refuses a figure with a
``CustomJS`` callback. A figure builder of this package whose figure needs one (the inertial
view's sliders) declares its script here with :func:`declare_script` when its module loads; a
record then allows a ``CustomJS`` whose code is exactly a declared script, and nothing else.
``DECLARING_MODULES`` lists the modules that declare scripts, so :func:`declared_scripts` is
complete even in a process that built no figure (the build checks figures made in the study's
kernel); ``tests/test_figures_scripts.py`` checks the list against the source.
"""

from __future__ import annotations

import importlib

from ..kernel.errors import InputError

__all__ = ["DECLARING_MODULES", "declare_script", "declared_scripts"]

DECLARING_MODULES = ("orbitledger.figures.inertial",)

_SCRIPTS: dict[str, str] = {}


def declare_script(name: str, code: str) -> str:
    """Declare ``code`` as the browser script ``name`` of one of our figures; returns ``code``.

    Declaring the same name again with other code is refused (one script, one name).
    """
    if not isinstance(code, str) or not code.strip():
        raise InputError(f"script {name!r}", code, "needs the JavaScript text")
    known = _SCRIPTS.get(name)
    if known is not None and known != code:
        raise InputError(f"script {name!r}", code[:40], "is declared already with other code")
    _SCRIPTS[name] = code
    return code


def declared_scripts() -> dict[str, str]:
    """``{name: code}`` of every script our figures declare (their modules loaded first)."""
    for module in DECLARING_MODULES:
        importlib.import_module(module)
    return dict(_SCRIPTS)
