"""Outlier rules: classical and robust z-scores, Tukey and skew-adjusted fences, Grubbs and
the generalized ESD test, and :func:`flag`, which applies any of them by name."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd
from scipy import special
from scipy import stats as sps

from ._input import (
    Column,
    check_alpha,
    check_positive,
    column,
    like_input,
    require,
    rescaled,
    scale_exponent,
)
from .location import moments, sorted_mad, sorted_median, sorted_quantile
from .medcouple import medcouple_sorted

#: Phi^{-1}(3/4) = 0.6745: the robust z-score constant of Iglewicz & Hoaglin (1993).
ROBUST_Z = 0.6744897501960817


# --- z-scores -------------------------------------------------------------------------------

def zscore_center_scale(values: np.ndarray, method: str = "the z-score rule", *,
                        ascending: bool = False) -> tuple[float, float]:
    """Mean and SD (ddof = 1) of present values (*ascending*: sorted, which saves a pass),
    refusing too few or constant values."""
    require(values.size, 3, method)
    m = moments(values, ascending=ascending)  # by blocks, scaled exactly near the float limits
    mean, sd = m.mean, m.sd
    if not sd > 0:
        raise ValueError(f"{method} cannot scale these data: all values are equal "
                         "(SD is zero)")
    return mean, sd


def zscores(x: Any) -> np.ndarray | pd.Series:
    """Classical z-scores (x - mean) / SD with the sample SD (ddof = 1); NaN stays NaN.

    Common practice flags |z| > 3. Returns a Series with the input's index for a Series input.
    """
    col = column(x)
    # on values scaled by a power of two (exact), so that x - mean cannot overflow near the
    # largest float and tiny (subnormal) values keep their precision
    e = scale_exponent(col.clean)
    mean, sd = zscore_center_scale(np.ldexp(col.clean, -e))
    return like_input((np.ldexp(col.values, -e) - mean) / sd, col)


def robust_center_scale(s: np.ndarray) -> tuple[float, float]:
    """Median and MAD of ascending values *s*, refusing a zero MAD."""
    require(s.size, 3, "the robust z-score rule")
    med = sorted_median(s)
    mad = sorted_mad(s, med)
    if not mad > 0:
        raise ValueError("the robust z-score rule cannot scale these data: the MAD is zero "
                         "(at least half the values are equal); try the fences or the "
                         "classical z-score")
    return med, mad


def robust_zscores(x: Any) -> np.ndarray | pd.Series:
    """Robust (modified) z-scores M = 0.6745 (x - median) / MAD of Iglewicz & Hoaglin [1]_.

    MAD is the median absolute deviation from the median. The authors recommend flagging
    |M| > 3.5. NaN stays NaN; a Series input gives a Series with its index.

    References
    ----------
    .. [1] B. Iglewicz and D. C. Hoaglin, How to Detect and Handle Outliers, ASQC Basic
       References in Quality Control 16, 1993.
    """
    col = column(x)
    e = scale_exponent(col.clean)  # as in zscores
    med, mad = robust_center_scale(np.sort(np.ldexp(col.clean, -e)))
    return like_input(ROBUST_Z * (np.ldexp(col.values, -e) - med) / mad, col)


# --- fences ---------------------------------------------------------------------------------

@dataclass(frozen=True)
class Fences:
    """Tukey's fences: lower = q1 - k·iqr, upper = q3 + k·iqr (type-7 quartiles)."""

    q1: float
    q3: float
    iqr: float
    lower: float
    upper: float
    k: float


@dataclass(frozen=True)
class AdjustedFences:
    """Skew-adjusted fences of Hubert & Vandervieren (2008), with the medcouple MC:
    MC >= 0: [q1 - k e^{-4 MC} iqr, q3 + k e^{3 MC} iqr];
    MC < 0:  [q1 - k e^{-3 MC} iqr, q3 + k e^{4 MC} iqr]."""

    q1: float
    q3: float
    iqr: float
    lower: float
    upper: float
    medcouple: float
    k: float


def sorted_fences(s: np.ndarray, k: float = 1.5) -> Fences:
    """:func:`fences` for ascending values with no missing values."""
    k = check_positive(k, "k")
    require(s.size, 4, "the fence rule")
    q1 = sorted_quantile(s, 0.25)
    q3 = sorted_quantile(s, 0.75)
    iqr = q3 - q1
    if not iqr > 0:
        raise ValueError("the fences cannot be placed: the interquartile range is zero "
                         "(at least half the values are equal); try the classical z-score")
    return Fences(q1=q1, q3=q3, iqr=iqr, lower=q1 - k * iqr, upper=q3 + k * iqr, k=k)


def fences(x: Any, k: float = 1.5) -> Fences:
    """Tukey's fences [1]_ at k interquartile ranges beyond the quartiles.

    Common practice: k = 1.5 marks "outside" values and k = 3 "far out" values. Quartiles are
    numpy's default (type 7). A value is outside when x < lower or x > upper.

    References
    ----------
    .. [1] J. W. Tukey, Exploratory Data Analysis, Addison-Wesley, 1977.
    """
    return sorted_fences(np.sort(column(x).clean), k)


def sorted_adjusted_fences(s: np.ndarray, k: float = 1.5) -> AdjustedFences:
    """:func:`adjusted_fences` for ascending values with no missing values."""
    base = sorted_fences(s, k)
    # the medcouple is scale-free: near the float limits it works on exactly rescaled values
    mc = medcouple_sorted(rescaled(s, ascending=True)[0])
    a, b = (-4.0, 3.0) if mc >= 0 else (-3.0, 4.0)
    return AdjustedFences(q1=base.q1, q3=base.q3, iqr=base.iqr,
                          lower=base.q1 - base.k * np.exp(a * mc) * base.iqr,
                          upper=base.q3 + base.k * np.exp(b * mc) * base.iqr,
                          medcouple=mc, k=base.k)


def adjusted_fences(x: Any, k: float = 1.5) -> AdjustedFences:
    """Fences adjusted for skewness with the medcouple, for the skewed box plot [1]_.

    References
    ----------
    .. [1] M. Hubert and E. Vandervieren, "An adjusted boxplot for skewed distributions",
       Computational Statistics & Data Analysis 52, 5186–5201, 2008, eq. (3.1)–(3.2).
    """
    return sorted_adjusted_fences(np.sort(column(x).clean), k)


# --- Grubbs and generalized ESD ---------------------------------------------------------------

def grubbs_critical(n: int, alpha: float) -> float:
    """Two-sided Grubbs critical value (n-1)/sqrt(n) · sqrt(t² / (n - 2 + t²)),
    t the upper alpha/(2n) point of Student's t with n - 2 degrees of freedom (NIST/SEMATECH
    e-Handbook of Statistical Methods, section 1.3.5.17.1)."""
    t = sps.t.isf(alpha / (2 * n), n - 2)
    return float((n - 1) / np.sqrt(n) * np.sqrt(t * t / (n - 2 + t * t)))


@dataclass(frozen=True)
class Grubbs:
    """Result of the two-sided Grubbs test for one outlier.

    statistic : G = max |x - mean| / SD; critical_value : see :func:`grubbs_critical`;
    mask : True at the most extreme value when G > critical_value; position : its position.
    """

    statistic: float
    critical_value: float
    mask: np.ndarray | pd.Series
    position: int
    alpha: float

    @property
    def outlier(self) -> bool:
        return bool(self.statistic > self.critical_value)


def grubbs(x: Any, alpha: float = 0.05) -> Grubbs:
    """Grubbs' test [1]_ for a single outlier, two-sided, at level *alpha*.

    References
    ----------
    .. [1] F. E. Grubbs, "Procedures for detecting outlying observations in samples",
       Technometrics 11(1), 1–21, 1969; NIST/SEMATECH e-Handbook, 1.3.5.17.1.
    """
    alpha = check_alpha(alpha)
    col = column(x)
    present = np.flatnonzero(col.present)
    values = col.values[present]
    require(values.size, 3, "Grubbs' test")
    e = scale_exponent(values)  # as in zscores
    mean, sd = zscore_center_scale(np.ldexp(values, -e), "Grubbs' test")
    dev = np.abs(np.ldexp(values, -e) - mean)
    i = int(np.argmax(dev))
    g = float(dev[i] / sd)
    crit = grubbs_critical(values.size, alpha)
    mask = np.zeros(col.values.size, dtype=bool)
    mask[present[i]] = g > crit
    return Grubbs(statistic=g, critical_value=crit, mask=like_input(mask, col),
                  position=int(present[i]), alpha=alpha)


def gesd_critical(n: int, max_outliers: int, alpha: float) -> np.ndarray:
    """Rosner's critical values λ_i = (n-i) t_{p, n-i-1} / sqrt((n-i-1+t²)(n-i+1)),
    p = 1 - alpha / (2(n-i+1)), i = 1..r (NIST/SEMATECH e-Handbook, 1.3.5.17.3)."""
    i = np.arange(1, max_outliers + 1, dtype=float)
    t = special.stdtrit(n - i - 1, 1 - alpha / (2 * (n - i + 1)))
    return (n - i) * t / np.sqrt((n - i - 1 + t * t) * (n - i + 1))


def gesd_count(statistics: np.ndarray, critical_values: np.ndarray) -> int:
    """Number of outliers: the largest i with R_i > λ_i (Rosner, 1983), 0 if there is none."""
    beyond = np.flatnonzero(statistics > critical_values)
    return int(beyond[-1] + 1) if beyond.size else 0


@dataclass(frozen=True)
class GESD:
    """Result of the generalized ESD test.

    statistics : R_1..R_r, the largest |x - mean|/SD after removing the i-1 values before;
    critical_values : λ_1..λ_r; n_outliers : the largest i with R_i > λ_i (0 if none);
    mask : True at the n_outliers values removed first; removed : their positions, in order.
    """

    statistics: np.ndarray
    critical_values: np.ndarray
    n_outliers: int
    mask: np.ndarray | pd.Series
    removed: np.ndarray
    alpha: float = field(default=0.05)


def sorted_gesd_steps(s: np.ndarray, max_outliers: int) -> tuple[np.ndarray, np.ndarray]:
    """Removal order and R statistics of the generalized ESD procedure on *s*, whose
    ``max_outliers + 1`` smallest and largest values are in ascending order at its two ends (the
    middle may be in any order: it enters only through sums).

    The most extreme value about the current mean is always the current smallest or largest,
    so the procedure walks inwards from both ends with running sums: O(r) after the sort.
    When removing a far value has cancelled most digits of the running sum of squares, the
    sums are formed again over the values left (about a middle one), so a gross outlier
    cannot spoil the statistics of the steps after it.
    Returns (indices into s in removal order, R statistics).
    """
    n = s.size
    y = np.ldexp(s, -scale_exponent(s))

    def form(lo: int, hi: int) -> tuple[float, int, float, float]:
        """Sums of (y - c) * 2**-u over y[lo..hi], about a middle value c, scaled near 1."""
        c = float(y[(lo + hi + 1) // 2])
        w = y[lo:hi + 1] - c
        u = scale_exponent(w)
        if u:
            w = np.ldexp(w, -u)
        return c, u, float(w.sum()), float(w @ w)

    lo, hi = 0, n - 1
    c, u, total, squares = form(lo, hi)
    formed = squares
    order = np.empty(max_outliers, dtype=np.int64)
    stats_ = np.empty(max_outliers)
    for step in range(max_outliers):
        m = n - step
        mean = total / m
        if squares - total * mean < 1e-4 * formed:
            c, u, total, squares = form(lo, hi)
            formed = squares
            mean = total / m
        var = max((squares - total * mean) / (m - 1), 0.0)
        sd = np.sqrt(var)
        y_lo, y_hi = float(np.ldexp(y[lo] - c, -u)), float(np.ldexp(y[hi] - c, -u))
        d_lo, d_hi = mean - y_lo, y_hi - mean
        pick = hi if d_hi >= d_lo else lo
        stats_[step] = (max(d_lo, d_hi) / sd) if sd > 0 else 0.0
        order[step] = pick
        gone = y_hi if pick == hi else y_lo
        total -= gone
        squares -= gone * gone
        if pick == hi:
            hi -= 1
        else:
            lo += 1
    return order, stats_


def _ends_in_order(values: np.ndarray, k: int) -> np.ndarray:
    """An ordering of *values* whose k smallest and k largest are in ascending order at the two
    ends, the middle in any order: O(n + k log k) by partition, not a full sort."""
    n = values.size
    if 2 * k >= n:
        return np.argsort(values)
    idx = np.argpartition(values, (k - 1, n - k))
    for part in (slice(0, k), slice(n - k, n)):
        idx[part] = idx[part][np.argsort(values[idx[part]])]
    return idx


def gesd(x: Any, max_outliers: int, alpha: float = 0.05) -> GESD:
    """Rosner's generalized extreme Studentized deviate test [1]_ for up to *max_outliers*.

    R_i = max |x - mean| / SD over the values left after i - 1 removals; the number of outliers
    is the largest i with R_i > λ_i (:func:`gesd_critical`). Runs in O(n + r log r): only the
    r + 1 most extreme values at each end need to be in order.

    References
    ----------
    .. [1] B. Rosner, "Percentage points for a generalized ESD many-outlier procedure",
       Technometrics 25(2), 165–172, 1983; NIST/SEMATECH e-Handbook, section 1.3.5.17.3.
    """
    alpha = check_alpha(alpha)
    col = column(x)
    present = np.flatnonzero(col.present)
    values = col.values[present]
    n = values.size
    r = _check_max_outliers(max_outliers, n)
    idx = _ends_in_order(values, r + 1)
    s = values[idx]
    zscore_center_scale(s, "the generalized ESD test")  # refuses constant data
    order, stats_ = sorted_gesd_steps(s, r)
    crit = gesd_critical(n, r, alpha)
    n_out = gesd_count(stats_, crit)
    removed = present[idx[order[:n_out]]]
    mask = np.zeros(col.values.size, dtype=bool)
    mask[removed] = True
    return GESD(statistics=stats_, critical_values=crit, n_outliers=n_out,
                mask=like_input(mask, col), removed=removed, alpha=alpha)


def _whole(m: Any) -> int:
    """*m* as an int when it is a whole number (2 or 2.0), else TypeError."""
    if isinstance(m, (float, np.floating)) and float(m).is_integer():
        m = int(m)
    if isinstance(m, (bool, np.bool_)) or not isinstance(m, (int, np.integer)):
        raise TypeError(f"max_outliers must be a whole number, got {m!r}")
    return int(m)


def _check_max_outliers(max_outliers: Any, n: int) -> int:
    require(n, 3, "the generalized ESD test")
    r = _whole(max_outliers)
    if not 1 <= r <= n - 2:
        raise ValueError(f"max_outliers must be between 1 and n - 2 = {n - 2} for "
                         f"{n} values, got {r}")
    return r


# --- one entry point ------------------------------------------------------------------------

RULES: dict[str, dict[str, float]] = {
    "zscore": {"threshold": 3.0},
    "robust_z": {"threshold": 3.5},
    "fences": {"k": 1.5},
    "adjusted_fences": {"k": 1.5},
    "grubbs": {"alpha": 0.05},
    "gesd": {"alpha": 0.05, "max_outliers": 10},
}


@dataclass(frozen=True)
class Flags:
    """What a rule says about each value.

    mask : True where the value is outlying (strictly outside [lower, upper], or rejected by
        the test); NaN inputs are never flagged. A Series with the input's index for a Series.
    scores : the rule's score per value (z, robust z, or distance beyond the box in units of
        the fence width for the fences), NaN where missing.
    lower, upper : the bounds on the data's scale (for the tests: the most extreme values
        the test kept).
    reason : a short statement of the rule, e.g. ``"|z| > 3"``.
    rule, params : the rule's name and the parameters used.
    """

    mask: np.ndarray | pd.Series
    scores: np.ndarray | pd.Series
    lower: float
    upper: float
    reason: str
    rule: str
    params: dict[str, float]


def check_rule(rule: str, params: dict[str, Any]) -> dict[str, Any]:
    """Validate a rule name and its parameters; return them with defaults filled in."""
    if rule not in RULES:
        raise ValueError(f"unknown rule {rule!r}; choose one of {sorted(RULES)}")
    unknown = set(params) - set(RULES[rule])
    if unknown:
        raise TypeError(f"rule {rule!r} takes {sorted(RULES[rule])}, not {sorted(unknown)}")
    out: dict[str, Any] = {**RULES[rule], **params}
    if "threshold" in out:
        out["threshold"] = check_positive(out["threshold"], "threshold")
    if "k" in out:
        out["k"] = check_positive(out["k"], "k")
    if "alpha" in out:
        out["alpha"] = check_alpha(out["alpha"])
    if "max_outliers" in out:
        m = _whole(out["max_outliers"])
        if m < 1:
            raise ValueError(f"max_outliers must be at least 1, got {m}")
        out["max_outliers"] = int(m)
    return out


@dataclass(frozen=True)
class Bounds:
    """A rule's result on ascending values: bounds, and the score as center and scale."""

    lower: float
    upper: float
    flagged: np.ndarray  # indices into the ascending values that the rule flags
    center: float
    scale_lo: float
    scale_hi: float
    info: dict[str, float]


#: Entries of Bounds.info on the data's scale (the others are scale-free).
_SCALED_INFO = frozenset({"q1", "q3", "iqr", "box_lo", "box_hi"})


def sorted_bounds(s: np.ndarray, rule: str, params: dict[str, Any]) -> Bounds:
    """Apply *rule* to ascending values with no missing values (params already checked).

    Near the float limits the rule is evaluated on the values scaled by a power of two, which
    is exact and changes no result, so that nothing overflows near the largest float or loses
    precision among tiny values; the bounds are scaled back (a bound beyond the float range
    becomes ±inf). Elsewhere the values are used as they are, without a copy.
    """
    scaled, e = rescaled(s, ascending=True)
    if e == 0:
        return _sorted_bounds(s, rule, params)
    b = _sorted_bounds(scaled, rule, params)
    with np.errstate(over="ignore"):
        back = [float(np.ldexp(v, e)) for v in (b.lower, b.upper, b.center, b.scale_lo,
                                                 b.scale_hi)]
        info = {k: float(np.ldexp(v, e)) if k in _SCALED_INFO else v for k, v in b.info.items()}
    return Bounds(back[0], back[1], b.flagged, back[2], back[3], back[4], info)


def _sorted_bounds(s: np.ndarray, rule: str, params: dict[str, Any]) -> Bounds:
    n = s.size
    if rule in ("zscore", "robust_z"):
        t = params["threshold"]
        if rule == "zscore":
            center, sd = zscore_center_scale(s, ascending=True)
            scale = sd
        else:
            center, mad = robust_center_scale(s)
            scale = mad / ROBUST_Z
        lower, upper = center - t * scale, center + t * scale
        return _by_bounds(s, lower, upper, center, scale, scale, {})
    if rule in ("fences", "adjusted_fences"):
        f = sorted_fences(s, params["k"]) if rule == "fences" else sorted_adjusted_fences(
            s, params["k"])
        k = params["k"]
        info = {"q1": f.q1, "q3": f.q3, "iqr": f.iqr}
        if isinstance(f, AdjustedFences):
            info["medcouple"] = f.medcouple
        b = _by_bounds(s, f.lower, f.upper, 0.0, (f.q1 - f.lower) / k, (f.upper - f.q3) / k, info)
        return Bounds(b.lower, b.upper, b.flagged, 0.0, b.scale_lo, b.scale_hi,
                      {**info, "box_lo": f.q1, "box_hi": f.q3})
    if rule == "grubbs":
        require(n, 3, "Grubbs' test")
        center, sd = zscore_center_scale(s, "Grubbs' test", ascending=True)
        i = n - 1 if s[-1] - center >= center - s[0] else 0
        g = abs(s[i] - center) / sd
        crit = grubbs_critical(n, params["alpha"])
        flagged = np.array([i] if g > crit else [], dtype=np.int64)
        return _kept_extremes(s, flagged, center, sd, {"statistic": g, "critical_value": crit})
    # gesd
    r = _check_max_outliers(params["max_outliers"], n)
    center, sd = zscore_center_scale(s, "the generalized ESD test", ascending=True)
    order, stats_ = sorted_gesd_steps(s, r)
    n_out = gesd_count(stats_, gesd_critical(n, r, params["alpha"]))
    return _kept_extremes(s, np.sort(order[:n_out]), center, sd, {"n_outliers": float(n_out)})


def _by_bounds(s: np.ndarray, lower: float, upper: float, center: float, scale_lo: float,
               scale_hi: float, info: dict[str, float]) -> Bounds:
    a = int(np.searchsorted(s, lower, side="left"))
    b = int(np.searchsorted(s, upper, side="right"))
    flagged = np.concatenate([np.arange(a), np.arange(b, s.size)]).astype(np.int64)
    return Bounds(float(lower), float(upper), flagged, center, scale_lo, scale_hi, info)


def _kept_extremes(s: np.ndarray, flagged: np.ndarray, center: float, sd: float,
                   info: dict[str, float]) -> Bounds:
    keep = np.ones(s.size, dtype=bool)
    keep[flagged] = False
    kept = s[keep]
    return Bounds(float(kept[0]), float(kept[-1]), flagged, center, sd, sd, info)


def scores_for(values: np.ndarray, rule: str, b: Bounds) -> np.ndarray:
    """Score of each value under a rule's result (vectorised; NaN stays NaN).

    Near the limits of the floating-point range the values and bounds are first scaled by one
    power of two (exact), so that differences such as x - center cannot overflow; elsewhere the
    scores are formed in one output array without copies of the data.
    """
    refs = [b.center, b.scale_lo, b.scale_hi, b.info.get("box_lo", 0.0),
            b.info.get("box_hi", 0.0)]
    with np.errstate(invalid="ignore"):
        top = float(np.nanmax(np.abs([np.nanmax(values), np.nanmin(values)]))) \
            if values.size and not np.isnan(values).all() else 0.0
    biggest = max([top, *(abs(r) for r in refs if np.isfinite(r))])
    e = int(np.frexp(biggest)[1]) if 0.0 < biggest < np.inf else 0
    if -500 < e < 500:
        e = 0  # nothing can overflow or lose precision: no scaled copy needed
    else:
        values = np.ldexp(values, -e)
    center, scale_lo, scale_hi, lo_box, hi_box = (float(np.ldexp(r, -e)) for r in refs)
    if rule in ("fences", "adjusted_fences"):
        out = values - hi_box
        out /= scale_hi
        with np.errstate(invalid="ignore"):
            below = values < lo_box
            out[below] = (values[below] - lo_box) / scale_lo
            out[(values >= lo_box) & (values <= hi_box)] = 0.0
        return out
    out = values - center
    out /= scale_lo
    return out


def describe_rule(rule: str, params: dict[str, Any]) -> str:
    """Plain statement of a rule, e.g. ``"|z| > 3"`` or ``"Tukey fences, k = 1.5"``."""
    if rule == "zscore":
        return f"|z| > {params['threshold']:g}"
    if rule == "robust_z":
        return f"|robust z| > {params['threshold']:g}"
    if rule == "fences":
        return f"Tukey fences, k = {params['k']:g}"
    if rule == "adjusted_fences":
        return f"skew-adjusted fences, k = {params['k']:g}"
    if rule == "grubbs":
        return f"Grubbs' test, alpha = {params['alpha']:g}"
    return (f"generalized ESD, alpha = {params['alpha']:g}, "
            f"up to {params['max_outliers']} outliers")


def flag(x: Any, rule: str = "fences", **params: Any) -> Flags:
    """Flag outlying values of *x* with a rule chosen by name.

    Rules and defaults: ``"zscore"`` (threshold = 3, common practice), ``"robust_z"``
    (threshold = 3.5, Iglewicz & Hoaglin), ``"fences"`` (k = 1.5, Tukey), ``"adjusted_fences"``
    (k = 1.5, Hubert & Vandervieren), ``"grubbs"`` (alpha = 0.05), ``"gesd"`` (alpha = 0.05,
    max_outliers = 10). A value is flagged when it lies strictly outside its bounds. NaN / NA
    values are never flagged.

    Examples
    --------
    >>> import strayline
    >>> strayline.flag([9.8, 10.1, 10.0, 9.9, 10.2, 10.0, 14.0], "fences").mask.tolist()
    [False, False, False, False, False, False, True]
    """
    p = check_rule(rule, params)
    col: Column = column(x)
    present = np.flatnonzero(col.present)
    values = col.values[present]
    idx = np.argsort(values)
    b = sorted_bounds(values[idx], rule, p)
    mask = np.zeros(col.values.size, dtype=bool)
    mask[present[idx[b.flagged]]] = True
    scores = scores_for(col.values, rule, b)
    return Flags(mask=like_input(mask, col), scores=like_input(scores, col), lower=b.lower,
                 upper=b.upper, reason=describe_rule(rule, p), rule=rule, params=p)
