"""Normality diagnostics: Shapiro–Wilk, Anderson–Darling, D'Agostino–Pearson, moments, PPCC."""

from __future__ import annotations

from collections.abc import Iterator, Mapping
from dataclasses import dataclass, fields
from typing import Any

import numpy as np
from scipy import special
from scipy import stats as sps

from ._input import column, require, rescaled
from .location import Moments, moments
from .qq import NormalQuantiles, fit_line

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


_BLOCK = 1 << 16


def anderson_sorted(s: np.ndarray, mean: float, sd: float) -> AndersonDarling:
    """A² = -n - (1/n) Σ (2i - 1)[ln Φ(z_i) + ln(1 - Φ(z_{n+1-i}))], z = (x - mean)/sd with the
    sample SD (ddof = 1), as ``scipy.stats.anderson(x, 'norm')`` (Stephens, 1974).

    Regrouped by value, A² = -n - (1/n) Σ_i [(2i - 1) ln Φ(z_i) + (2n + 1 - 2i) ln(1 - Φ(z_i))];
    both logarithms come from the smaller tail t_i = Φ(-|z_i|), as ln t_i and ln(1 - t_i),
    one normal tail per value, by blocks of values.
    """
    n = s.size
    total = 0.0
    for start in range(0, n, _BLOCK):
        z = s[start:start + _BLOCK] - mean
        z /= sd
        np.abs(z, out=z)
        np.negative(z, out=z)
        tail = special.ndtr(z)
        with np.errstate(divide="ignore"):
            near = np.log(tail)
        far = tail < 1e-300  # beyond the reach of the plain logarithm's accuracy
        if far.any():
            near[far] = special.log_ndtr(z[far])
        rest = np.log1p(-tail)
        neg = int(np.searchsorted(s[start:start + _BLOCK], mean, side="left"))
        w = np.arange(2 * start + 1, 2 * (start + z.size), 2, dtype=float)  # 2i - 1
        # below the mean ln Φ(z) is the near tail, above it the rest; 2n + 1 - 2i = 2n - w
        low_cdf = float(w[:neg] @ near[:neg]) + float(w[neg:] @ rest[neg:])
        low_sf = float(w[:neg] @ rest[:neg]) + float(w[neg:] @ near[neg:])
        sum_sf = float(rest[:neg].sum()) + float(near[neg:].sum())
        total += low_cdf + 2.0 * n * sum_sf - low_sf
    a2 = float(-n - total / n)
    crit = np.around(_AD_VALUES / (1.0 + 0.75 / n + 2.25 / n / n), 3)
    return AndersonDarling(a2, crit, _AD_LEVELS.copy(), _ad_pvalue(a2, n))


def dagostino_pearson(m: Moments) -> TestResult:
    """K² = Z(√b1)² + Z(b2)² and its chi-squared (2 df) p-value, from the moment ratios.

    Z(√b1) is D'Agostino's transformation of the sample skewness and Z(b2) the Anscombe &
    Glynn transformation of the sample kurtosis, as in D'Agostino, Belanger & D'Agostino,
    "A suggestion for using powerful and informative tests of normality", The American
    Statistician 44(4), 316–321, 1990 (and ``scipy.stats.normaltest``). Needs n >= 20.
    """
    n = float(m.n)
    y = m.sqrt_b1 * np.sqrt((n + 1) * (n + 3) / (6.0 * (n - 2)))
    beta2 = (3.0 * (n * n + 27 * n - 70) * (n + 1) * (n + 3)
             / ((n - 2.0) * (n + 5) * (n + 7) * (n + 9)))
    w2 = -1.0 + np.sqrt(2 * (beta2 - 1))
    delta = 1.0 / np.sqrt(0.5 * np.log(w2))
    alpha = np.sqrt(2.0 / (w2 - 1))
    y = 1.0 if y == 0 else y
    z_skew = delta * np.log(y / alpha + np.sqrt((y / alpha) ** 2 + 1))
    expect = 3.0 * (n - 1) / (n + 1)
    var_b2 = 24.0 * n * (n - 2) * (n - 3) / ((n + 1) * (n + 1) * (n + 3) * (n + 5))
    x = (m.b2 - expect) / np.sqrt(var_b2)
    root_beta1 = (6.0 * (n * n - 5 * n + 2) / ((n + 7) * (n + 9))
                  * np.sqrt(6.0 * (n + 3) * (n + 5) / (n * (n - 2) * (n - 3))))
    a = 6.0 + 8.0 / root_beta1 * (2.0 / root_beta1 + np.sqrt(1 + 4.0 / root_beta1**2))
    denom = 1 + x * np.sqrt(2 / (a - 4.0))
    term2 = np.sign(denom) * ((1 - 2.0 / a) / abs(denom)) ** (1 / 3.0) if denom else np.nan
    z_kurt = ((1 - 2 / (9.0 * a)) - term2) / np.sqrt(2 / (9.0 * a))
    k2 = float(z_skew**2 + z_kurt**2)
    return TestResult(k2, float(sps.chi2.sf(k2, 2)))


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


def normality_sorted(s: np.ndarray, *, ppcc: float | None = None,
                     m: Moments | None = None) -> Normality:
    """:func:`normality` for ascending values with no missing values; *ppcc* (the Q–Q plot's
    r with Filliben positions) and *m* (:func:`moments` of *s*) when the caller has them."""
    n = s.size
    require(n, 3, "normality diagnostics")
    if s[0] == s[-1]:
        raise ValueError("normality diagnostics need values that are not all equal")
    # every result is scale-free: near the float limits work on values scaled by a power of
    # two (exact), so that sums of squares cannot overflow
    s, e = rescaled(s, 240, ascending=True)
    if m is None or e:
        m = moments(s, ascending=True)
    shapiro = None
    if n <= SHAPIRO_MAX_N:
        w, p = sps.shapiro(s)
        shapiro = TestResult(float(w), float(p))
    dago = dagostino_pearson(m) if n >= 20 else None
    ad = anderson_sorted(s, m.mean, m.sd)
    if ppcc is None:
        ppcc = fit_line(NormalQuantiles(n, "filliben"), s)[2]
    return Normality(n=n, shapiro=shapiro, anderson=ad, dagostino=dago, skewness=m.skewness,
                     excess_kurtosis=m.excess_kurtosis, ppcc=float(ppcc))


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
