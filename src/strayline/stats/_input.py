"""Turning what the user passes into a clean float array, with errors that say what to do."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd


@dataclass(frozen=True)
class Column:
    """A one-dimensional input as floats.

    Attributes
    ----------
    values : ndarray of float64, the same length as the input, NaN where the input is missing.
    present : ndarray of bool, True where a value is present.
    index : the pandas index when the input was a Series, else None.
    name : the Series name, else None.
    """

    values: np.ndarray
    present: np.ndarray
    index: pd.Index | None
    name: Any

    @property
    def clean(self) -> np.ndarray:
        """The present values, in input order."""
        return self.values[self.present]

    @property
    def n(self) -> int:
        """How many values are present."""
        return int(np.count_nonzero(self.present))


def _describe(name: Any) -> str:
    return "the data" if name is None else f"column {name!r}"


def to_float(x: Any, name: Any = None) -> np.ndarray:
    """Convert a 1-D array-like or Series to float64 with NaN for missing values.

    Booleans become 0.0 / 1.0; pandas nullable integers and floats keep pd.NA as NaN.
    Strings, mixed objects, categoricals, dates, durations and complex numbers are refused
    with a TypeError that says how to convert them. The input is never modified.
    """
    label = _describe(name if name is not None else getattr(x, "name", None))
    if isinstance(x, pd.DataFrame):
        raise TypeError(f"expected one column, got a DataFrame with {x.shape[1]} columns; "
                        "pass df[column] instead")
    if isinstance(x, pd.Series):
        dtype = x.dtype
        if isinstance(dtype, pd.CategoricalDtype):
            raise TypeError(f"{label} is categorical; screen its numeric codes or values "
                            "explicitly, e.g. s.astype(float) when the categories are numbers")
        if pd.api.types.is_datetime64_any_dtype(dtype) or pd.api.types.is_timedelta64_dtype(dtype):
            raise TypeError(f"{label} holds dates or durations ({dtype}); convert to numbers "
                            "first, e.g. s.dt.total_seconds() or (s - s.min()).dt.days")
        if pd.api.types.is_complex_dtype(dtype):
            raise TypeError(f"{label} is complex; screen its real part, modulus or phase "
                            "explicitly")
        if pd.api.types.is_bool_dtype(dtype):
            return x.astype("float64").to_numpy(dtype="float64", na_value=np.nan)
        if pd.api.types.is_numeric_dtype(dtype) and not pd.api.types.is_complex_dtype(dtype):
            return x.to_numpy(dtype="float64", na_value=np.nan)
        return _from_objects(x.to_numpy(dtype=object), label)
    arr = np.asarray(x)
    if arr.dtype.kind in "US" and not isinstance(x, np.ndarray):
        # a list mixing numbers and strings: numpy would turn the numbers into strings too
        arr = np.asarray(x, dtype=object)
    if arr.ndim == 0:
        raise TypeError(f"expected a one-dimensional array of numbers, got a scalar {arr!r}")
    if arr.ndim != 1:
        arr = np.squeeze(arr)
        if arr.ndim != 1:
            raise ValueError(f"expected a one-dimensional array, got shape {np.shape(x)}")
    kind = arr.dtype.kind
    if kind == "b":
        return arr.astype("float64")
    if kind in "iuf":
        return arr.astype("float64", copy=True)
    if kind in "mM":
        raise TypeError(f"{label} holds dates or durations ({arr.dtype}); convert to numbers first")
    if kind == "c":
        raise TypeError(f"{label} is complex; screen its real part, modulus or phase explicitly")
    return _from_objects(arr.astype(object), label)


def _from_objects(arr: np.ndarray, label: str) -> np.ndarray:
    """Convert an object array that holds only numbers and missing markers; refuse the rest."""
    inferred = pd.api.types.infer_dtype(arr, skipna=True)
    if inferred in {"integer", "floating", "mixed-integer-float", "boolean", "decimal", "empty"}:
        return pd.to_numeric(pd.Series(arr, dtype=object)).to_numpy(dtype="float64",
                                                                     na_value=np.nan)
    missing = pd.isna(arr)
    example = next((v for v, m in zip(arr, missing, strict=True)
                    if not m and not isinstance(v, (int, float, np.number))), None)
    count = int(np.count_nonzero(~missing & ~pd.Series(arr, dtype=object).map(
        lambda v: isinstance(v, (int, float, np.number))).to_numpy(dtype=bool)))
    raise TypeError(f"{label} is not numeric ({inferred}): {count} value(s) are not numbers, "
                    f"such as {str(example)[:40]!r}; convert or drop them first, "
                    "e.g. pd.to_numeric(s, errors='coerce')")


def column(x: Any, name: Any = None) -> Column:
    """Read a 1-D input into a :class:`Column`, refusing infinities.

    Missing values (NaN, None, pd.NA) are kept as NaN and marked absent; infinite values are
    refused because no rule can place them: replace them by NaN or by a bound first.
    """
    values = to_float(x, name)
    present = ~np.isnan(values)
    infinite = np.isinf(values)
    if infinite.any():
        label = _describe(name if name is not None else getattr(x, "name", None))
        raise ValueError(f"{label} holds {int(infinite.sum())} infinite value(s); replace them "
                         "with NaN (s.replace([np.inf, -np.inf], np.nan)) or a finite bound first")
    index = x.index if isinstance(x, pd.Series) else None
    return Column(values=values, present=present, index=index, name=getattr(x, "name", name))


def require(n: int, needed: int, method: str) -> None:
    """Raise a ValueError when fewer than *needed* present values are available."""
    if n == 0:
        raise ValueError(f"{method} needs data, but there are no non-missing values")
    if n < needed:
        raise ValueError(f"{method} needs at least {needed} non-missing values, got {n}")


def check_alpha(alpha: float) -> float:
    alpha = float(alpha)
    if not 0.0 < alpha < 1.0:
        raise ValueError(f"alpha must lie strictly between 0 and 1, got {alpha!r}")
    return alpha


def check_positive(value: float, what: str) -> float:
    value = float(value)
    if not np.isfinite(value) or value <= 0.0:
        raise ValueError(f"{what} must be a positive number, got {value!r}")
    return value


def scale_exponent(values: np.ndarray, *, ascending: bool = False) -> int:
    """A power of two that brings the largest magnitude near 1, so sums of squares never
    overflow or underflow; multiplying by 2**-e is exact for normal floats. For *ascending*
    values the two ends hold the largest magnitude, and nothing else is read."""
    if values.size == 0:
        return 0
    if ascending:
        return exponent_of(max(-float(values[0]), float(values[-1])))
    return exponent_of(max(-float(np.min(values)), float(np.max(values))))


def exponent_of(biggest: float, limit: int = 0) -> int:
    """The power of two that brings the magnitude *biggest* near 1 (0 for 0 or non-finite);
    with a *limit*, 0 as well unless it lies beyond 2**±limit (no rescaling is needed)."""
    if not 0.0 < biggest < np.inf:
        return 0
    e = int(np.frexp(biggest)[1])
    return 0 if limit and -limit < e < limit else e


def rescaled(values: np.ndarray, limit: int = 500, *,
             ascending: bool = False) -> tuple[np.ndarray, int]:
    """*values* times 2**-e and e, where e is 0 (and no copy is made) unless the values come
    within 2**±limit of the limits of the floating-point range. Scaling by a power of two is
    exact, so results computed either way agree to the last bit; the default suits sums of
    squares, fourth powers need ``limit=240``."""
    e = scale_exponent(values, ascending=ascending)
    if -limit < e < limit:
        return values, 0
    return np.ldexp(values, -e), e


def like_input(result: np.ndarray, col: Column, name: Any = None) -> np.ndarray | pd.Series:
    """Return *result* as a Series with the input's index when the input was a Series."""
    if col.index is None:
        return result
    return pd.Series(result, index=col.index, name=col.name if name is None else name)
