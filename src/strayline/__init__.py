"""strayline: screen a table's numeric columns for outliers and non-normality in a notebook.

A flag is a prompt to look, not a reason to delete: record why a value is excluded and follow
your own procedures.
"""

from . import demo, stats
from ._version import __version__
from .evaluate import Settings
from .ledger import Ledger, LedgerError, LedgerWarning
from .screen import Screen
from .stats import *  # noqa: F403
from .stats import __all__ as _stats_all
from .view.writeback import write_mask


def panel(*args, **kwargs):
    """Show the screening panel for a DataFrame; see :class:`strayline.view.panel.Panel`."""
    from .view.panel import panel as _panel

    return _panel(*args, **kwargs)


__all__ = ["Ledger", "LedgerError", "LedgerWarning", "Screen", "Settings", "__version__", "demo",
           "panel", "stats", "write_mask", *_stats_all]
