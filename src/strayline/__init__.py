"""strayline: screen a table's numeric columns for outliers and non-normality in a notebook.

A flag is a prompt to look, not a reason to delete: record why a value is excluded and follow
your own procedures.
"""

from . import stats
from ._version import __version__
from .stats import *  # noqa: F403
from .stats import __all__ as _stats_all

__all__ = ["__version__", "stats", *_stats_all]
