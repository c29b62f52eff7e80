"""Progress bars and the notebook check: the one home of both (CLI verbs, trade runs, builds).

A bar shows only where someone is watching: tqdm's notebook widget in a Jupyter kernel, tqdm on
stderr when stderr is a terminal; elsewhere (pipes, CI, a record's headless run) there is none.
tqdm is imported only when a bar is shown, so the command line starts fast.
"""

from __future__ import annotations

import sys
from collections.abc import Callable, Iterator
from contextlib import contextmanager
from typing import Any

__all__ = ["fraction_bar", "in_notebook", "progress_bar"]


def in_notebook() -> bool:
    """Whether this code runs in a Jupyter kernel (ipykernel's shell)."""
    shell_module = sys.modules.get("IPython")
    if shell_module is None:
        return False
    try:
        shell = shell_module.get_ipython()  # type: ignore[attr-defined]
    except AttributeError:
        return False
    return shell is not None and hasattr(shell, "kernel")


class _NoBar:
    def update(self, n: int) -> None:
        pass

    def close(self) -> None:
        pass


def progress_bar(total: int, desc: str, enabled: bool | None = None, *, unit: str = "case") -> Any:
    """A bar counting ``total`` items: tqdm.auto in a notebook, tqdm on a terminal's stderr.

    ``enabled``: None decides by the surroundings, True forces a bar (on stderr outside a
    notebook), False gives none (an object with the same ``update``/``close`` that shows nothing).
    """
    notebook = in_notebook()
    if enabled is False or (enabled is None and not (notebook or sys.stderr.isatty())):
        return _NoBar()
    if notebook:
        from tqdm.auto import tqdm as auto_tqdm

        return auto_tqdm(total=total, desc=desc, unit=unit)
    from tqdm import tqdm

    return tqdm(total=total, desc=desc, unit=unit, file=sys.stderr, leave=False)


@contextmanager
def fraction_bar(desc: str, enabled: bool = True) -> Iterator[Callable[[float], None] | None]:
    """A tqdm bar on stderr fed with fractions 0..1, or None when stderr is no terminal."""
    if not enabled or not sys.stderr.isatty():
        yield None
        return
    from tqdm import tqdm

    with tqdm(total=100, file=sys.stderr, unit="%", desc=desc, leave=False) as bar:

        def update(fraction: float) -> None:
            bar.update(int(round(fraction * 100)) - bar.n)

        yield update
