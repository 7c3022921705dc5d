"""Location, scale and shape from sorted values: quantiles, MAD, skewness and kurtosis."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._input import exponent_of

_BLOCK = 1 << 16  # values per block of the sums: the temporaries stay in cache

#: 1 / Phi^{-1}(3/4): makes the MAD a consistent estimate of the SD for normal data.
MAD_TO_SD = 1.482602218505602


def sorted_quantile(s: np.ndarray, q: float) -> float:
    """Type-7 (linear) quantile of ascending values *s*, as ``numpy.quantile``'s default [1]_.

    h = (n - 1) q; Q = s[floor h] + (h - floor h)(s[floor h + 1] - s[floor h]), evaluated with
    numpy's two-sided interpolation so that results agree with ``numpy.quantile`` to the last bit.

    References
    ----------
    .. [1] R. J. Hyndman and Y. Fan, "Sample quantiles in statistical packages",
       The American Statistician 50(4), 361–365, 1996 (definition 7).
    """
    n = s.size
    h = (n - 1) * q
    lo = int(np.floor(h))
    hi = min(lo + 1, n - 1)
    t = h - lo
    a, b = float(s[lo]), float(s[hi])
    diff = b - a
    return b - diff * (1 - t) if t >= 0.5 else a + diff * t


def sorted_median(s: np.ndarray) -> float:
    """Median of ascending values."""
    n = s.size
    mid = n // 2
    if n % 2:
        return float(s[mid])
    a, b = float(s[mid - 1]), float(s[mid])
    m = (a + b) / 2
    return m if np.isfinite(m) else 0.5 * a + 0.5 * b  # a + b beyond the largest float


def mad(values: np.ndarray, center: float) -> float:
    """Median absolute deviation from *center* (raw, not scaled), in O(n)."""
    return float(np.median(np.abs(values - center)))


def sorted_mad(s: np.ndarray, center: float) -> float:
    """Median of |s_i - center| for ascending *s* (raw, not scaled), in O(log n).

    The deviations form two ascending runs, center - s_j read backwards from the last value
    below the centre and s_j - center from the first value at or above it; the middle order
    statistics of their union are found by binary search on how many come from each run, and
    equal ``numpy.median(numpy.abs(s - center))`` to the last bit.
    """
    n = s.size
    if n == 0:
        return float("nan")
    c = int(np.searchsorted(s, center, side="left"))

    def left(i: int) -> float:
        return center - float(s[c - 1 - i])

    def right(i: int) -> float:
        return float(s[c + i]) - center

    def kth(k: int) -> float:
        lo, hi = max(0, k + 1 - (n - c)), min(k + 1, c)  # how many of the k + 1 are left
        while lo < hi:
            i = (lo + hi) // 2
            if left(i) < right(k - i):
                lo = i + 1
            else:
                hi = i
        taken = [left(lo - 1)] if lo else []
        if lo <= k:
            taken.append(right(k - lo))
        return max(taken)

    if n % 2:
        return kth(n // 2)
    return (kth(n // 2 - 1) + kth(n // 2)) / 2


@dataclass(frozen=True)
class Moments:
    """Sample moments of a set of values.

    mean; sd with ddof = 1; skewness G1 and excess kurtosis G2, the bias-corrected estimates
    of Joanes & Gill (1998), as ``scipy.stats.skew(bias=False)`` and
    ``scipy.stats.kurtosis(bias=False)``; sqrt_b1 = m3/m2^1.5 and b2 = m4/m2², the moment
    ratios that the tests of D'Agostino and of Anscombe & Glynn start from.
    """

    n: int
    mean: float
    sd: float
    skewness: float
    excess_kurtosis: float
    sqrt_b1: float = float("nan")
    b2: float = float("nan")


def moments(values: np.ndarray, *, ascending: bool = False) -> Moments:
    """Mean, SD, G1 and G2 in two passes over the data (the second by blocks, in cache).

    G1 = sqrt(n(n-1))/(n-2) · m3/m2^1.5,
    G2 = (n-1)/((n-2)(n-3)) · ((n+1) m4/m2² − 3(n-1)) (Joanes & Gill, 1998, The Statistician 47).
    NaN where n is too small (skewness needs 3 values, kurtosis 4) or the values are constant.
    """
    n = values.size
    if n == 0:
        return Moments(0, np.nan, np.nan, np.nan, np.nan)
    # exact power-of-two scalings (of the values, then of the deviations), made only near the
    # float limits, keep the fourth powers finite and normal from 1e-308 to 1e308
    lo, hi = (float(values[0]), float(values[-1])) if ascending else (
        float(values.min()), float(values.max()))
    e1 = exponent_of(max(-lo, hi), 240)
    x = np.ldexp(values, -e1) if e1 else values
    mean_s = float(x.mean())
    e2 = exponent_of(max(mean_s - np.ldexp(lo, -e1), np.ldexp(hi, -e1) - mean_s), 240)
    m2 = m3 = m4 = 0.0
    for start in range(0, n, _BLOCK):
        d = x[start:start + _BLOCK] - mean_s
        if e2:
            d = np.ldexp(d, -e2, out=d)
        d2 = d * d
        m2 += float(d2.sum())
        m3 += float(d2 @ d)
        m4 += float(d2 @ d2)
    sd = float(np.ldexp(np.sqrt(m2 / (n - 1)), e1 + e2)) if n > 1 else np.nan
    m2, m3, m4 = m2 / n, m3 / n, m4 / n
    mean = float(np.ldexp(mean_s, e1))
    skew = kurt = root_b1 = b2 = np.nan
    if m2 > 0:
        root_b1, b2 = m3 / m2**1.5, m4 / m2**2
    if m2 > 0 and n > 2:
        skew = float(np.sqrt(n * (n - 1.0)) / (n - 2.0) * root_b1)
    if m2 > 0 and n > 3:
        kurt = float((n - 1.0) / ((n - 2.0) * (n - 3.0)) * ((n + 1.0) * b2 - 3.0 * (n - 1.0)))
    return Moments(n, mean, sd, skew, kurt, float(root_b1), float(b2))
