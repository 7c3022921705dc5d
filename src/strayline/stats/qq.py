"""Normal quantile (Q–Q) plot coordinates, reference lines and the probability-plot correlation."""

from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache
from typing import Any, Literal

import numpy as np
from scipy import special

from ._input import column, require, rescaled

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


_BLOCK = 1 << 18


@lru_cache(maxsize=8)
def _lower_quantiles(n: int, positions: str) -> np.ndarray:
    """m_1..m_h, h = ceil(n/2), of :class:`NormalQuantiles` (read-only), formed by blocks."""
    half = (n + 1) // 2
    lower = np.empty(half)
    for start in range(0, half, _BLOCK):
        stop = min(half, start + _BLOCK)
        lower[start:stop] = _lower_positions(n, start, stop, positions)
        special.ndtri(lower[start:stop], out=lower[start:stop])
    if n % 2:
        lower[-1] = 0.0  # the middle position is 1/2 in every rule
    lower.flags.writeable = False
    return lower


def _lower_positions(n: int, start: int, stop: int, positions: str) -> np.ndarray:
    """p_{start+1}..p_stop of :func:`plotting_positions` for n values (stop <= ceil(n/2))."""
    p = np.arange(start + 1, stop + 1, dtype=float)
    if positions == "filliben":
        p -= 0.3175
        p /= n + 0.365
        if start == 0:
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


class NormalQuantiles:
    """The n standard normal quantiles of the plotting positions, ascending, held as their
    lower half: every rule is symmetric, p_{n+1-i} = 1 - p_i, so m_{n+1-i} = -m_i.

    Reads like a read-only array (indexing, ``len``, ``numpy.asarray``, which forms all n);
    :meth:`searchsorted` and :func:`fit_line` use the half directly. Depends on n alone and is
    cached by n.
    """

    def __init__(self, n: int, positions: str = "filliben") -> None:
        if positions not in POSITIONS:
            raise ValueError(f"positions must be one of {POSITIONS}, got {positions!r}")
        self.n, self.positions = int(n), positions
        self.lower = _lower_quantiles(self.n, positions) if self.n else np.empty(0)

    @property
    def size(self) -> int:
        return self.n

    @property
    def shape(self) -> tuple[int]:
        return (self.n,)

    def __len__(self) -> int:
        return self.n

    def __array__(self, dtype: Any = None, copy: Any = None) -> np.ndarray:
        n, h = self.n, self.lower.size
        out = np.empty(n, dtype=float)
        out[:h] = self.lower
        out[h:] = -self.lower[:n - h][::-1]
        return out if dtype is None else out.astype(dtype)

    def __getitem__(self, key: Any) -> Any:
        n, h, lower = self.n, self.lower.size, self.lower
        if isinstance(key, (int, np.integer)):
            k = int(key) + (n if key < 0 else 0)
            if not 0 <= k < n:
                raise IndexError(f"index {int(key)} is out of bounds for {n} quantiles")
            return lower[k] if k < h else -lower[n - 1 - k]
        if isinstance(key, slice):
            return np.asarray(self)[key]
        k = np.asarray(key)
        if k.dtype == bool:
            k = np.flatnonzero(k)
        k = np.where(k < 0, k + n, k)
        if k.size and (k.min() < 0 or k.max() >= n):
            raise IndexError(f"an index is out of bounds for {n} quantiles")
        out = np.empty(k.shape)
        low = k < h
        out[low] = lower[k[low]]
        out[~low] = -lower[n - 1 - k[~low]]
        return out

    def searchsorted(self, x: float, side: str = "left") -> int:
        """As ``numpy.searchsorted`` on the n quantiles."""
        h, rest = self.lower.size, self.n - self.lower.size
        below = int(np.searchsorted(self.lower, x, side))
        # the upper part -lower[rest - 1], ..., -lower[0]: -lower[i] < x iff lower[i] > -x
        other = "right" if side == "left" else "left"
        if below < h:
            return below
        return h + rest - int(np.searchsorted(self.lower[:rest], -x, other))

    def __repr__(self) -> str:
        return f"NormalQuantiles(n={self.n}, positions={self.positions!r})"


def normal_quantiles(n: int, positions: str = "filliben") -> np.ndarray:
    """Standard normal quantiles of the plotting positions, as a read-only array (formed from
    the cached lower half of :class:`NormalQuantiles`)."""
    out = np.asarray(NormalQuantiles(int(n), positions))
    out.flags.writeable = False
    return out


@dataclass(frozen=True)
class QQ:
    """Coordinates of a normal Q–Q plot.

    Attributes
    ----------
    theoretical : standard normal quantiles of the plotting positions (x axis), a
        :class:`NormalQuantiles` (read-only, array-like; ``numpy.asarray`` gives all n).
    ordered : the sorted non-missing values (y axis).
    order : positions in the input of the sorted values (``x[order] == ordered``).
    slope, intercept : the reference line ``y = intercept + slope * theoretical``.
    r : the probability-plot correlation coefficient (PPCC) between theoretical and ordered.
    positions, line : the plotting-position rule and the reference line used.
    """

    theoretical: NormalQuantiles
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


def fit_line(theoretical: np.ndarray | NormalQuantiles,
             ordered: np.ndarray) -> tuple[float, float, float]:
    """Least-squares line of ordered on theoretical and their correlation (slope, intercept, r),
    as ``scipy.stats.probplot(..., fit=True)`` computes them.

    The sums of squared and crossed deviations are formed block by block (on values scaled by
    a power of two near the float limits, which is exact), so nothing overflows and the working
    memory stays small. With :class:`NormalQuantiles` their symmetry is used: the mean of the
    quantiles is 0, Σ m² = 2 Σ_lower m² and Σ m y = Σ_lower m_i (y_i - y_{n+1-i})."""
    y, e = rescaled(ordered, ascending=True)
    n = y.size
    my = float(y.mean())
    syy = 0.0
    for i in range(0, n, _BLOCK):
        dy = y[i:i + _BLOCK] - my
        syy += float(dy @ dy)
    if isinstance(theoretical, NormalQuantiles):
        mx = 0.0
        lower = theoretical.lower
        rest = n - lower.size  # pairs (i, n - 1 - i) with i < rest; an odd middle has m = 0
        sxx = 2.0 * float(lower @ lower)
        sxy = 0.0
        for i in range(0, rest, _BLOCK):
            j = min(rest, i + _BLOCK)
            sxy += float(lower[i:j] @ (y[i:j] - y[n - j:n - i][::-1]))
    else:
        mx = float(theoretical.mean())
        sxx = sxy = 0.0
        for i in range(0, n, _BLOCK):
            dx = theoretical[i:i + _BLOCK] - mx
            sxx += float(dx @ dx)
            sxy += float(dx @ (y[i:i + _BLOCK] - my))
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
    m = NormalQuantiles(n, positions)
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
