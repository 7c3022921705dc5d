"""Writing the mask into the notebook's namespace."""

from __future__ import annotations

from typing import Any

import pandas as pd

#: Attribute set on every Series this module writes, so that it can recognise its own.
_TAG = "_strayline_mask"


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


def is_written_mask(value: Any) -> bool:
    return isinstance(value, pd.Series) and bool(value.attrs.get(_TAG, False))


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
    if name in ns and not overwrite and not is_written_mask(ns[name]):
        raise ValueError(f"the notebook already has a variable {name!r} that strayline did not "
                         "write; choose another mask name or pass overwrite=True")
    out = series.copy()
    out.name = name
    out.attrs[_TAG] = True
    ns[name] = out
