"""Notebook widgets to edit orbit cases live: the case editor and the trade view.

``from orbitledger.widgets import CaseEditor, compare``; ``orbitledger.open_case(path).editor()``
opens the editor on a case file. See docs/widgets.md.
"""

from .casefigures import case_figures
from .compare import compare, trade_table
from .editor import CaseEditor

__all__ = ["CaseEditor", "case_figures", "compare", "trade_table"]
