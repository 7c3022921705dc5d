"""Normality diagnostics: Shapiro–Wilk, Anderson–Darling, D'Agostino–Pearson, moments, PPCC."""

from __future__ import annotations

from collections.abc import Iterator, Mapping
from dataclasses import dataclass, fields
from typing import Any

import numpy as np
from scipy import special
from scipy import stats as sps

from ._input import column, require, scale_exponent
from .location import moments
from .qq import fit_line, normal_quantiles

#: Shapiro–Wilk is computed up to this n; beyond it scipy's p-value is not reliable.
SHAPIRO_MAX_N = 5000
#: Anderson–Darling critical values for the normal case with estimated mean and variance,
#: at 15, 10, 5, 2.5 and 1 %, divided by (1 + 0.75/n + 2.25/n²) (Stephens, 1974; as scipy).
_AD_LEVELS = np.array([15.0, 10.0, 5.0, 2.5, 1.0])
_AD_VALUES = np.array([0.561, 0.631, 0.752, 0.873, 1.035])


@dataclass(frozen=True)
class TestResult:
    statistic: float
    pvalue: float


@dataclass(frozen=True)
class AndersonDarling:
    """A² of the normal Anderson–Darling test, its critical values at the significance
    levels (in %), and an approximate p-value (D'Agostino & Stephens, 1986, table 4.9)."""

    statistic: float
    critical_values: np.ndarray
    significance_levels: np.ndarray
    pvalue: float


@dataclass(frozen=True)
class Normality(Mapping):
    """Normality diagnostics of one set of values; also readable as a mapping.

    shapiro : Shapiro–Wilk W and p (None when n < 3 or n > 5000);
    anderson : :class:`AndersonDarling`; dagostino : D'Agostino–Pearson K² and p
    (None when n < 20); skewness, excess_kurtosis : bias-corrected G1 and G2;
    ppcc : probability-plot correlation with Filliben positions; n : values used.
    """

    n: int
    shapiro: TestResult | None
    anderson: AndersonDarling
    dagostino: TestResult | None
    skewness: float
    excess_kurtosis: float
    ppcc: float

    def __getitem__(self, key: str) -> Any:
        if key not in self._keys():
            raise KeyError(key)
        return getattr(self, key)

    def __iter__(self) -> Iterator[str]:
        return iter(self._keys())

    def __len__(self) -> int:
        return len(self._keys())

    @classmethod
    def _keys(cls) -> tuple[str, ...]:
        return tuple(f.name for f in fields(cls))


def anderson_sorted(s: np.ndarray, mean: float, sd: float) -> AndersonDarling:
    """A² = -n - (1/n) Σ (2i - 1)[ln Φ(z_i) + ln(1 - Φ(z_{n+1-i}))], z = (x - mean)/sd with the
    sample SD (ddof = 1), as ``scipy.stats.anderson(x, 'norm')`` (Stephens, 1974)."""
    n = s.size
    z = (s - mean) / sd
    w = 2.0 * np.arange(1, n + 1) - 1.0
    a2 = float(-n - (w @ special.log_ndtr(z) + w @ special.log_ndtr(-z[::-1])) / n)
    crit = np.around(_AD_VALUES / (1.0 + 0.75 / n + 2.25 / n / n), 3)
    return AndersonDarling(a2, crit, _AD_LEVELS.copy(), _ad_pvalue(a2, n))


def _ad_pvalue(a2: float, n: int) -> float:
    """Approximate p-value of A² for the normal case with estimated parameters
    (D'Agostino & Stephens, Goodness-of-Fit Techniques, 1986, table 4.9; from memory)."""
    a = a2 * (1 + 0.75 / n + 2.25 / n**2)
    if a >= 13.0:  # beyond the table's reach the p-value is below 1e-30
        return 0.0
    if a >= 0.6:
        p = np.exp(1.2937 - 5.709 * a + 0.0186 * a * a)
    elif a >= 0.34:
        p = np.exp(0.9177 - 4.279 * a - 1.38 * a * a)
    elif a >= 0.2:
        p = 1 - np.exp(-8.318 + 42.796 * a - 59.938 * a * a)
    else:
        p = 1 - np.exp(-13.436 + 101.14 * a - 223.73 * a * a)
    return float(min(max(p, 0.0), 1.0))


def normality_sorted(s: np.ndarray) -> Normality:
    """:func:`normality` for ascending values with no missing values."""
    n = s.size
    require(n, 3, "normality diagnostics")
    if s[0] == s[-1]:
        raise ValueError("normality diagnostics need values that are not all equal")
    # every result is scale-free: work on values scaled by a power of two (exact), so that
    # sums of squares cannot overflow near the largest float
    s = np.ldexp(s, -scale_exponent(s))
    m = moments(s)
    shapiro = None
    if n <= SHAPIRO_MAX_N:
        w, p = sps.shapiro(s)
        shapiro = TestResult(float(w), float(p))
    dago = None
    if n >= 20:
        k2, p = sps.normaltest(s)
        dago = TestResult(float(k2), float(p))
    ad = anderson_sorted(s, m.mean, m.sd)
    r = fit_line(normal_quantiles(n, "filliben"), s)[2]
    return Normality(n=n, shapiro=shapiro, anderson=ad, dagostino=dago, skewness=m.skewness,
                     excess_kurtosis=m.excess_kurtosis, ppcc=r)


def normality(x: Any) -> Normality:
    """Normality diagnostics of the non-missing values of *x*.

    Returns a mapping (and frozen dataclass) with ``"shapiro"`` (W, p; n ≤ 5000 only),
    ``"anderson"`` (A², critical values, approximate p), ``"dagostino"`` (K², p; n ≥ 20),
    ``"skewness"`` and ``"excess_kurtosis"`` (bias-corrected sample estimates, as
    ``scipy.stats.skew(bias=False)`` and ``kurtosis(bias=False)``) and ``"ppcc"``.
    With many values every test rejects for trivial departures: read the Q–Q plot and the
    size of the skewness and kurtosis, not only the p-values.
    """
    return normality_sorted(np.sort(column(x).clean))
