"""Normal quantile (Q–Q) plot coordinates, reference lines and the probability-plot correlation."""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from typing import Any, Literal

import numpy as np
from scipy import special

from ._input import column, require, scale_exponent

Positions = Literal["filliben", "blom", "weibull", "hazen"]
POSITIONS: tuple[str, ...] = ("filliben", "blom", "weibull", "hazen")
LINES: tuple[str, ...] = ("fit", "quartiles")


def plotting_positions(n: int, positions: str = "filliben") -> np.ndarray:
    """Probabilities p_i, i = 1..n, at which the i-th order statistic is plotted.

    - ``"filliben"``: Filliben's estimate of the uniform order-statistic medians [1]_,
      p_n = 0.5**(1/n), p_1 = 1 - p_n, p_i = (i - 0.3175) / (n + 0.365) otherwise
      (the positions of ``scipy.stats.probplot``).
    - ``"blom"``: (i - 3/8) / (n + 1/4) [2]_.
    - ``"weibull"``: i / (n + 1).
    - ``"hazen"``: (i - 1/2) / n.

    References
    ----------
    .. [1] J. J. Filliben, "The probability plot correlation coefficient test for normality",
       Technometrics 17(1), 111–117, 1975.
    .. [2] G. Blom, Statistical Estimates and Transformed Beta-Variables, Wiley, 1958.
    """
    if positions not in POSITIONS:
        raise ValueError(f"positions must be one of {POSITIONS}, got {positions!r}")
    n = int(n)
    if n < 1:
        raise ValueError(f"plotting positions need n >= 1, got {n}")
    i = np.arange(1, n + 1, dtype=float)
    if positions == "filliben":
        p = (i - 0.3175) / (n + 0.365)
        p[-1] = 0.5 ** (1.0 / n)
        p[0] = 1.0 - p[-1]
        return p
    if positions == "blom":
        return (i - 0.375) / (n + 0.25)
    if positions == "weibull":
        return i / (n + 1.0)
    return (i - 0.5) / n


@lru_cache(maxsize=8)
def _normal_quantiles(n: int, positions: str) -> np.ndarray:
    # every rule is symmetric, p_{n+1-i} = 1 - p_i, so only the lower half is computed and the
    # upper half mirrors it
    half = (n + 1) // 2
    m = np.empty(n)
    lower = m[:half]
    lower[:] = plotting_positions(half, positions) if n == half else _lower_positions(
        n, half, positions)
    special.ndtri(lower, out=lower)
    m[half:] = -m[: n - half][::-1]
    if n % 2:
        m[half - 1] = 0.0
    m.flags.writeable = False
    return m


def _lower_positions(n: int, half: int, positions: str) -> np.ndarray:
    """p_1..p_half of :func:`plotting_positions` for n values, without forming all n."""
    p = np.arange(1, half + 1, dtype=float)
    if positions == "filliben":
        p -= 0.3175
        p /= n + 0.365
        p[0] = 1.0 - 0.5 ** (1.0 / n)
    elif positions == "blom":
        p -= 0.375
        p /= n + 0.25
    elif positions == "weibull":
        p /= n + 1.0
    else:
        p -= 0.5
        p /= n
    return p


def normal_quantiles(n: int, positions: str = "filliben") -> np.ndarray:
    """Standard normal quantiles of the plotting positions (cached by n; read-only)."""
    if positions not in POSITIONS:
        raise ValueError(f"positions must be one of {POSITIONS}, got {positions!r}")
    return _normal_quantiles(int(n), positions)


@dataclass(frozen=True)
class QQ:
    """Coordinates of a normal Q–Q plot.

    Attributes
    ----------
    theoretical : standard normal quantiles of the plotting positions (x axis).
    ordered : the sorted non-missing values (y axis).
    order : positions in the input of the sorted values (``x[order] == ordered``).
    slope, intercept : the reference line ``y = intercept + slope * theoretical``.
    r : the probability-plot correlation coefficient (PPCC) between theoretical and ordered.
    positions, line : the plotting-position rule and the reference line used.
    """

    theoretical: np.ndarray
    ordered: np.ndarray
    order: np.ndarray
    slope: float
    intercept: float
    r: float
    positions: str
    line: str

    def __repr__(self) -> str:
        return (f"QQ(n={self.ordered.size}, slope={self.slope:.6g}, "
                f"intercept={self.intercept:.6g}, r={self.r:.6f}, positions={self.positions!r})")


_BLOCK = 1 << 18


def fit_line(theoretical: np.ndarray, ordered: np.ndarray) -> tuple[float, float, float]:
    """Least-squares line of ordered on theoretical and their correlation (slope, intercept, r),
    as ``scipy.stats.probplot(..., fit=True)`` computes them.

    The sums of squared and crossed deviations are formed block by block on values scaled by one
    power of two (exact), so nothing overflows and the working memory stays small."""
    e = scale_exponent(ordered)
    n = ordered.size
    mx = float(theoretical.mean())
    my = float(np.ldexp(ordered, -e).mean()) if n <= _BLOCK else float(
        sum(np.ldexp(ordered[i:i + _BLOCK], -e).sum() for i in range(0, n, _BLOCK)) / n)
    sxx = sxy = syy = 0.0
    for i in range(0, n, _BLOCK):
        dx = theoretical[i:i + _BLOCK] - mx
        dy = np.ldexp(ordered[i:i + _BLOCK], -e)
        dy -= my
        sxx += float(dx @ dx)
        sxy += float(dx @ dy)
        syy += float(dy @ dy)
    slope = sxy / sxx
    intercept = float(my - slope * mx)
    r = sxy / np.sqrt(sxx * syy) if syy > 0 else np.nan
    return float(np.ldexp(slope, e)), float(np.ldexp(intercept, e)), float(r)


def quartile_line(ordered: np.ndarray) -> tuple[float, float]:
    """Line through the first and third quartiles (type 7) at the normal quartiles ±0.6745."""
    from .location import sorted_quantile

    q1 = sorted_quantile(ordered, 0.25)
    q3 = sorted_quantile(ordered, 0.75)
    z = float(special.ndtri(0.75))
    slope = (q3 - q1) / (2 * z)
    return float(slope), float((q1 + q3) / 2)


def qq_sorted(ordered: np.ndarray, positions: str = "filliben", line: str = "fit",
              order: np.ndarray | None = None) -> QQ:
    """:func:`qq` for values already sorted ascending with no missing values."""
    if line not in LINES:
        raise ValueError(f"line must be one of {LINES}, got {line!r}")
    n = ordered.size
    require(n, 3, "a Q–Q plot")
    m = normal_quantiles(n, positions)
    slope, intercept, r = fit_line(m, ordered)
    if line == "quartiles":
        slope, intercept = quartile_line(ordered)
    if order is None:
        order = np.arange(n)
    return QQ(theoretical=m, ordered=ordered, order=order, slope=slope, intercept=intercept,
              r=r, positions=positions, line=line)


def qq(x: Any, positions: str = "filliben", line: str = "fit") -> QQ:
    """Normal Q–Q plot of the non-missing values of *x*.

    Parameters
    ----------
    x : array-like or Series; NaN / NA are left out.
    positions : ``"filliben"`` (default, as ``scipy.stats.probplot``), ``"blom"``,
        ``"weibull"`` or ``"hazen"``; see :func:`plotting_positions`.
    line : ``"fit"`` for the least-squares line (as ``probplot``) or ``"quartiles"`` for the
        line through the first and third quartiles.

    Returns
    -------
    QQ

    Notes
    -----
    ``r`` is Filliben's probability-plot correlation coefficient [1]_: the Pearson correlation
    between the ordered values and the normal quantiles of their plotting positions; values
    near 1 indicate near-normal data.

    References
    ----------
    .. [1] J. J. Filliben, Technometrics 17(1), 111–117, 1975.

    Examples
    --------
    >>> import strayline
    >>> round(strayline.qq([2.1, 3.5, 2.9, 4.0, 3.1]).r, 4)
    0.9893
    """
    col = column(x)
    present = np.flatnonzero(col.present)
    values = col.values[present]
    idx = np.argsort(values)
    return qq_sorted(values[idx], positions, line, order=present[idx])
