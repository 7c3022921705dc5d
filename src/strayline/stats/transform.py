"""Transformations towards normality: log, square root, reciprocal, Box–Cox and Yeo–Johnson,
with maximum-likelihood λ and an inverse."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd
from scipy import optimize

from ._input import column, like_input, require

TRANSFORMS: tuple[str, ...] = ("none", "log", "sqrt", "reciprocal", "boxcox", "yeojohnson")
#: Transformations whose direction reverses the order of the values.
DECREASING: frozenset[str] = frozenset({"reciprocal"})


@dataclass(frozen=True)
class Transformed:
    """Values on a transformed scale.

    values : the transformed values (NaN where missing); kind : the transformation;
    lmbda : λ for Box–Cox / Yeo–Johnson (None for the others). ``inverse(y)`` maps back.
    """

    values: np.ndarray | pd.Series
    kind: str
    lmbda: float | None

    def inverse(self, y: Any) -> np.ndarray:
        """Map values from the transformed scale back to the original one."""
        return inverse(np.asarray(y, dtype=float), self.kind, self.lmbda)

    def __repr__(self) -> str:
        lm = "" if self.lmbda is None else f", lmbda={self.lmbda:.6g}"
        return f"Transformed(kind={self.kind!r}{lm}, n={np.size(self.values)})"


def _zero(lmbda: float) -> bool:
    """λ so close to 0 that (x^λ - 1)/λ is log x to double precision (its products with log x
    would be subnormal and lose every digit)."""
    return abs(lmbda) < 1e-150


def check_domain(values: np.ndarray, kind: str) -> None:
    """Refuse values outside the domain of *kind*, naming how many and what to do instead."""
    if kind in ("log", "boxcox"):
        bad = values <= 0
        need = "positive values"
    elif kind == "sqrt":
        bad = values < 0
        need = "values that are not negative"
    elif kind == "reciprocal":
        bad = values == 0
        need = "values that are not zero"
    else:
        return
    count = int(np.count_nonzero(bad))
    if count:
        name = {"log": "the log", "boxcox": "Box–Cox", "sqrt": "the square root",
                "reciprocal": "the reciprocal"}[kind]
        worst = float(values[bad].min())
        hint = ("use Yeo–Johnson, which accepts any real values, or add an offset first"
                if kind != "reciprocal" else "drop or offset the zeros, or use Yeo–Johnson")
        raise ValueError(f"{name} transformation needs {need}: {count} value(s) are not "
                         f"(smallest {worst:g}); {hint}")


def _log_variance(y: np.ndarray) -> float:
    d = y - y.mean()
    return float(np.log((d @ d) / y.size))


def boxcox_llf(logx: np.ndarray, lmbda: float, shift: tuple[float, float]) -> float:
    """Box–Cox profile log-likelihood (Box & Cox, 1964, eq. 8) up to a constant,
    (λ - 1) Σ log x - n/2 log σ²(λ), from log x.

    σ²(λ) = Var((x^λ - 1)/λ) = e^{2λc} Var(expm1(λ(log x - c))) / λ², with c the largest
    log x for λ > 0 and the smallest for λ < 0, so that nothing overflows.
    """
    n = logx.size
    if lmbda == 0.0:
        logvar = _log_variance(logx)
    else:
        c = shift[1] if lmbda > 0 else shift[0]
        z = np.expm1(lmbda * (logx - c))
        logvar = 2 * lmbda * c + _log_variance(z) - 2 * np.log(abs(lmbda))
    return float((lmbda - 1) * logx.sum() - n / 2 * logvar)


class _YeoJohnsonLikelihood:
    """Yeo–Johnson profile log-likelihood (Yeo & Johnson, 2000) up to a constant,
    -n/2 log σ²(ψ_λ(x)) + (λ - 1) Σ sign(x) log(|x| + 1), from log(1 + |x|) computed once and
    evaluated in one work buffer: about six passes over the data per λ."""

    def __init__(self, log_pos: np.ndarray, log_neg: np.ndarray):
        self.a, self.b = log_pos, log_neg
        self.split = log_pos.size
        self.work = np.empty(log_pos.size + log_neg.size)
        self.jacobian = float(log_pos.sum() - log_neg.sum())

    def __call__(self, lmbda: float) -> float:
        w, k = self.work, self.split
        up, down = w[:k], w[k:]
        with np.errstate(over="ignore", invalid="ignore"):
            if lmbda == 0:
                up[:] = self.a
            else:
                np.multiply(self.a, lmbda, out=up)
                np.expm1(up, out=up)
                up /= lmbda
            two = 2.0 - lmbda
            if two == 0:
                np.negative(self.b, out=down)
            else:
                np.multiply(self.b, two, out=down)
                np.expm1(down, out=down)
                down /= -two
            mean = w.mean()
            if not np.isfinite(mean):
                return -np.inf
            w -= mean
            var = float(w @ w) / w.size
        return float(-w.size / 2 * np.log(var) + (lmbda - 1) * self.jacobian)


def yeojohnson_llf(log_pos: np.ndarray, log_neg: np.ndarray, lmbda: float) -> float:
    """Yeo–Johnson profile log-likelihood at one λ (see :class:`_YeoJohnsonLikelihood`)."""
    return _YeoJohnsonLikelihood(log_pos, log_neg)(lmbda)


def _maximise(llf: Any) -> float:
    res = optimize.minimize_scalar(lambda lm: -llf(lm), bracket=(-2.0, 2.0), method="brent",
                                   options={"xtol": 1e-10})
    return float(res.x)


def boxcox_lambda(values: np.ndarray) -> float:
    """Maximum-likelihood Box–Cox λ for positive values, from log x computed once."""
    require(values.size, 3, "fitting Box–Cox λ")
    check_domain(values, "boxcox")
    logx = np.log(values)
    if np.ptp(logx) == 0:
        raise ValueError("Box–Cox λ cannot be fitted: all values are equal")
    shift = (float(logx.min()), float(logx.max()))
    return _maximise(lambda lm: boxcox_llf(logx, lm, shift))


def yeojohnson_lambda(values: np.ndarray) -> float:
    """Maximum-likelihood Yeo–Johnson λ, from log(1 + |x|) computed once."""
    require(values.size, 3, "fitting Yeo–Johnson λ")
    if np.ptp(values) == 0:
        raise ValueError("Yeo–Johnson λ cannot be fitted: all values are equal")
    pos = values >= 0
    log_pos = np.log1p(values[pos])
    log_neg = np.log1p(-values[~pos])
    return _maximise(_YeoJohnsonLikelihood(log_pos, log_neg))


def apply(values: np.ndarray, kind: str, lmbda: float | None) -> np.ndarray:
    """Transform float values (NaN passes through) with a known λ."""
    if kind == "none":
        return values  # shared, never written to
    if kind == "log":
        return np.log(values)
    if kind == "sqrt":
        return np.sqrt(values)
    if kind == "reciprocal":
        return 1.0 / values
    assert lmbda is not None
    if kind == "boxcox":
        return np.log(values) if _zero(lmbda) else np.expm1(lmbda * np.log(values)) / lmbda
    out = np.empty_like(values)
    pos = values >= 0
    neg = values < 0
    a = np.log1p(values[pos])
    out[pos] = a if _zero(lmbda) else np.expm1(lmbda * a) / lmbda
    b = np.log1p(-values[neg])
    out[neg] = -b if _zero(2 - lmbda) else -np.expm1((2 - lmbda) * b) / (2 - lmbda)
    out[np.isnan(values)] = np.nan
    return out


def inverse(y: np.ndarray, kind: str, lmbda: float | None) -> np.ndarray:
    """Inverse of :func:`apply`."""
    y = np.asarray(y, dtype=float)
    if kind == "none":
        return y.copy()
    if kind == "log":
        return np.exp(y)
    if kind == "sqrt":
        return np.where(y >= 0, y * y, np.nan)
    if kind == "reciprocal":
        return 1.0 / y
    assert lmbda is not None
    if kind == "boxcox":
        if _zero(lmbda):
            return np.exp(y)
        with np.errstate(invalid="ignore"):
            return np.exp(np.log1p(lmbda * y) / lmbda)
    out = np.full_like(y, np.nan)
    pos = y >= 0
    neg = y < 0
    with np.errstate(invalid="ignore"):
        out[pos] = np.expm1(y[pos]) if _zero(lmbda) else np.expm1(np.log1p(lmbda * y[pos]) / lmbda)
        two = 2 - lmbda
        out[neg] = (-np.expm1(-y[neg]) if _zero(two)
                    else -np.expm1(np.log1p(-two * y[neg]) / two))
    return out


def fit(values: np.ndarray, kind: str,
        lmbda: float | None = None) -> tuple[np.ndarray, float | None]:
    """Check the domain, fit λ when needed, and transform clean float values."""
    if kind not in TRANSFORMS:
        raise ValueError(f"unknown transformation {kind!r}; choose one of {TRANSFORMS}")
    present = values[~np.isnan(values)]
    check_domain(present, kind)
    if kind in ("boxcox", "yeojohnson"):
        if lmbda is None:
            lmbda = boxcox_lambda(present) if kind == "boxcox" else yeojohnson_lambda(present)
        else:
            lmbda = float(lmbda)
            if not np.isfinite(lmbda):
                raise ValueError(f"lmbda must be a finite number, got {lmbda!r}")
    elif lmbda is not None:
        raise ValueError(f"the {kind} transformation takes no lmbda")
    return apply(values, kind, lmbda), lmbda


def transform(x: Any, kind: str, lmbda: float | None = None) -> Transformed:
    """Transform *x* by *kind*: ``"log"`` (natural), ``"sqrt"``, ``"reciprocal"`` (1/x),
    ``"boxcox"`` [1]_ or ``"yeojohnson"`` [2]_ (or ``"none"``).

    For Box–Cox and Yeo–Johnson, λ is the maximum-likelihood estimate when not given; it agrees
    with ``scipy.stats.boxcox`` / ``scipy.stats.yeojohnson``. NaN stays NaN. Values outside a
    transformation's domain raise a ValueError that says how many and what to use instead.

    References
    ----------
    .. [1] G. E. P. Box and D. R. Cox, "An analysis of transformations", JRSS B 26(2),
       211–252, 1964.
    .. [2] I.-K. Yeo and R. A. Johnson, "A new family of power transformations to improve
       normality or symmetry", Biometrika 87(4), 954–959, 2000.
    """
    col = column(x)
    values, lm = fit(col.values, kind, lmbda)
    if values is col.values and col.index is not None:
        values = values.copy()  # never hand out a view of the caller's data
    return Transformed(values=like_input(values, col), kind=kind, lmbda=lm)
