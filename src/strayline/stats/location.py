"""Location, scale and shape from sorted values: quantiles, MAD, skewness and kurtosis."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ._input import scale_exponent

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


@dataclass(frozen=True)
class Moments:
    """Sample moments of a set of values.

    mean; sd with ddof = 1; skewness G1 and excess kurtosis G2, the bias-corrected estimates
    of Joanes & Gill (1998), as ``scipy.stats.skew(bias=False)`` and
    ``scipy.stats.kurtosis(bias=False)``.
    """

    n: int
    mean: float
    sd: float
    skewness: float
    excess_kurtosis: float


def moments(values: np.ndarray) -> Moments:
    """Mean, SD, G1 and G2 in three passes over the data.

    G1 = sqrt(n(n-1))/(n-2) · m3/m2^1.5,
    G2 = (n-1)/((n-2)(n-3)) · ((n+1) m4/m2² − 3(n-1)) (Joanes & Gill, 1998, The Statistician 47).
    NaN where n is too small (skewness needs 3 values, kurtosis 4) or the values are constant.
    """
    n = values.size
    if n == 0:
        return Moments(0, np.nan, np.nan, np.nan, np.nan)
    # two exact power-of-two scalings (of the values, then of the deviations) keep the sums of
    # squares and fourth powers finite and normal from 1e-308 to 1e308
    e1 = scale_exponent(values)
    scaled = np.ldexp(values, -e1)
    mean_s = float(scaled.mean())
    d = scaled - mean_s
    e2 = scale_exponent(d)
    d = np.ldexp(d, -e2, out=d)
    d2 = d * d
    m2 = float(d2.sum()) / n
    m3 = float(d2 @ d) / n
    m4 = float(d2 @ d2) / n
    mean = float(np.ldexp(mean_s, e1))
    sd = float(np.ldexp(np.sqrt(m2 * n / (n - 1)), e1 + e2)) if n > 1 else np.nan
    skew = kurt = np.nan
    if m2 > 0 and n > 2:
        skew = float(np.sqrt(n * (n - 1.0)) / (n - 2.0) * m3 / m2**1.5)
    if m2 > 0 and n > 3:
        kurt = float((n - 1.0) / ((n - 2.0) * (n - 3.0))
                     * ((n + 1.0) * m4 / m2**2 - 3.0 * (n - 1.0)))
    return Moments(n, mean, sd, skew, kurt)
