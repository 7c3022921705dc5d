"""Writing the mask into the notebook's namespace."""

from __future__ import annotations

import weakref
from typing import Any

import pandas as pd

#: The Series this module wrote, by variable name: only those may be replaced without asking
#: (a tag in ``Series.attrs`` would not do: pandas copies attrs onto derived results).
_WRITTEN: dict[tuple[int, str], weakref.ref[pd.Series]] = {}


def _user_namespace() -> dict[str, Any]:
    try:
        from IPython import get_ipython
    except ImportError:  # pragma: no cover - IPython comes with ipywidgets
        get_ipython = None  # type: ignore[assignment]
    shell = get_ipython() if get_ipython is not None else None
    if shell is None:
        raise RuntimeError("write_mask works inside IPython or Jupyter only; outside them use "
                           "the mask directly (panel.mask or screen.mask)")
    return shell.user_ns


def is_written_mask(value: Any, name: str | None = None, namespace: dict | None = None) -> bool:
    """Whether *value* is the very Series that :func:`write_mask` put there."""
    if name is None or namespace is None:
        return any(ref() is value for ref in _WRITTEN.values())
    ref = _WRITTEN.get((id(namespace), name))
    return ref is not None and ref() is value


def write_mask(name: str, series: pd.Series, *, overwrite: bool = False,
               namespace: dict[str, Any] | None = None) -> None:
    """Put *series* into the notebook's namespace as the variable *name*.

    It refuses to replace a variable that is not a mask it wrote before, unless
    ``overwrite=True``. *namespace* defaults to the IPython user namespace; outside IPython a
    RuntimeError explains what to use instead.
    """
    if not isinstance(name, str) or not name.isidentifier() or name.startswith("__"):
        raise ValueError(f"mask name must be a valid Python variable name, got {name!r}")
    import keyword

    if keyword.iskeyword(name):
        raise ValueError(f"mask name {name!r} is a Python keyword")
    if not isinstance(series, pd.Series) or not pd.api.types.is_bool_dtype(series.dtype):
        raise TypeError("write_mask writes a boolean pandas Series")
    ns = _user_namespace() if namespace is None else namespace
    if name in ns and not overwrite and not is_written_mask(ns[name], name, ns):
        raise ValueError(f"the notebook already has a variable {name!r} that strayline did not "
                         "write; choose another mask name or pass overwrite=True")
    out = series.copy()
    out.name = name
    ns[name] = out
    _WRITTEN[(id(ns), name)] = weakref.ref(out)
