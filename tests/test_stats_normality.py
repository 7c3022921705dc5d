"""Normality diagnostics against scipy and statsmodels."""

from __future__ import annotations

import warnings

import numpy as np
import pandas as pd
import pytest
from scipy import stats
from statsmodels.stats.diagnostic import normal_ad

import strayline

RNG = np.random.default_rng(1975)
DATA = {
    "normal-25": RNG.normal(5.0, 2.0, 25),
    "normal-400": RNG.normal(0.0, 1.0, 400),
    "lognormal-60": RNG.lognormal(0.0, 1.0, 60),
    "uniform-200": RNG.uniform(0.0, 1.0, 200),
    "t3-1000": RNG.standard_t(3, 1000),
    "ties-90": RNG.integers(0, 7, 90).astype(float),
    "small-8": RNG.normal(size=8),
    "tiny-3": np.array([1.0, 2.0, 4.0]),
}


def _anderson_legacy(x):
    """scipy's A² with the critical values at 15, 10, 5, 2.5 and 1 %."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", FutureWarning)  # the legacy fields are deprecated
        return stats.anderson(x, "norm")


@pytest.mark.parametrize("name", sorted(DATA))
def test_against_scipy_and_statsmodels(name):
    x = DATA[name]
    nm = strayline.normality(x)
    assert nm.n == x.size
    w, p = stats.shapiro(x)
    assert nm.shapiro.statistic == pytest.approx(w, rel=1e-12)
    assert nm.shapiro.pvalue == pytest.approx(p, rel=1e-9, abs=1e-300)
    assert nm.skewness == pytest.approx(stats.skew(x, bias=False), rel=1e-10, abs=1e-14)
    if x.size >= 4:
        assert nm.excess_kurtosis == pytest.approx(stats.kurtosis(x, bias=False), rel=1e-10)
    else:
        assert np.isnan(nm.excess_kurtosis)
    ad = _anderson_legacy(x)
    assert nm.anderson.statistic == pytest.approx(ad.statistic, rel=1e-10)
    np.testing.assert_allclose(nm.anderson.critical_values, ad.critical_values, rtol=1e-12)
    np.testing.assert_allclose(nm.anderson.significance_levels, ad.significance_level)
    # the p-value of A² with estimated mean and variance (D'Agostino & Stephens 1986,
    # table 4.9) as statsmodels computes it
    a2, p_ad = normal_ad(x)
    if np.isfinite(a2):  # statsmodels takes log(Phi(z)) directly, -inf far in the tails
        assert nm.anderson.statistic == pytest.approx(a2, rel=1e-10)
    assert nm.anderson.pvalue == pytest.approx(p_ad, rel=1e-9, abs=1e-300)
    # PPCC: the correlation of scipy's probability plot
    assert nm.ppcc == pytest.approx(stats.probplot(x)[1][2], rel=1e-12)
    if x.size >= 20:
        k2, p = stats.normaltest(x)
        assert nm.dagostino.statistic == pytest.approx(k2, rel=1e-10)
        assert nm.dagostino.pvalue == pytest.approx(p, rel=1e-9, abs=1e-300)
    else:
        assert nm.dagostino is None


def test_anderson_interpolated_pvalue_is_in_scipys_bracket():
    # scipy's method='interpolate' reads the p-value off the same table, clipped to
    # [0.01, 0.15]; ours, from the continuous approximation, lies in the same bracket
    for name in ("normal-400", "lognormal-60", "uniform-200"):
        x = DATA[name]
        res = stats.anderson(x, "norm", method="interpolate")
        ours = strayline.normality(x).anderson.pvalue
        if res.pvalue <= 0.01:
            assert ours <= 0.011
        elif res.pvalue >= 0.15:
            assert ours >= 0.14
        else:
            assert ours == pytest.approx(res.pvalue, abs=0.02)


def test_clear_departures_are_detected():
    nm = strayline.normality(DATA["lognormal-60"])
    assert nm.shapiro.pvalue < 1e-4 and nm.anderson.pvalue < 1e-4
    assert nm.skewness > 1
    ok = strayline.normality(DATA["normal-400"])
    assert ok.shapiro.pvalue > 0.01 and ok.ppcc > 0.99


def test_shapiro_is_left_out_beyond_5000_values():
    x = RNG.normal(size=5001)
    nm = strayline.normality(x)
    assert nm.shapiro is None
    assert nm.dagostino.statistic == pytest.approx(stats.normaltest(x).statistic, rel=1e-10)
    assert strayline.normality(x[:5000]).shapiro is not None


def test_missing_values_are_left_out():
    x = DATA["normal-25"].copy()
    with_nan = np.insert(x, [0, 10], np.nan)
    a, b = strayline.normality(with_nan), strayline.normality(x)
    assert a.n == 25
    assert a.shapiro == b.shapiro and a.skewness == b.skewness and a.ppcc == b.ppcc


def test_reads_as_a_mapping():
    nm = strayline.normality(pd.Series(DATA["normal-25"]))
    assert set(nm) == {"n", "shapiro", "anderson", "dagostino", "skewness",
                       "excess_kurtosis", "ppcc"}
    assert len(nm) == 7
    assert nm["skewness"] == nm.skewness
    assert dict(nm)["ppcc"] == nm.ppcc
    with pytest.raises(KeyError):
        nm["kurtosis"]


def test_scale_free_at_the_ends_of_the_float_range():
    x = DATA["lognormal-60"]
    ref = strayline.normality(x)
    e = int(np.frexp(x.max())[1])
    for shift in (1023 - e, -1020 - e):
        scaled = np.ldexp(x, shift)  # exact: a power of two, normal floats throughout
        with np.errstate(over="raise", invalid="raise"):
            nm = strayline.normality(scaled)
        assert nm.skewness == pytest.approx(ref.skewness, rel=1e-12)
        assert nm.excess_kurtosis == pytest.approx(ref.excess_kurtosis, rel=1e-12)
        assert nm.ppcc == pytest.approx(ref.ppcc, rel=1e-12)
        assert nm.anderson.statistic == pytest.approx(ref.anderson.statistic, rel=1e-10)
        assert nm.shapiro.statistic == pytest.approx(ref.shapiro.statistic, rel=1e-10)


@pytest.mark.parametrize("x, fragment", [
    ([1.0, 2.0], r"normality diagnostics needs at least 3 non-missing values, got 2"),
    ([np.nan, np.nan], r"no non-missing values"),
    ([3.0, 3.0, 3.0, 3.0], r"values that are not all equal"),
])
def test_refusals(x, fragment):
    with pytest.raises(ValueError, match=fragment):
        strayline.normality(x)


@pytest.mark.parametrize("n", [6000, 70_001])
def test_large_samples_with_a_far_outlier_against_scipy(n):
    # one value about 50 SDs out puts Φ(z) below the smallest float: the far tail is taken
    # from log Φ directly; blocks of values and the regrouped weights give scipy's A² and K²
    x = np.random.default_rng(n).normal(10.0, 2.0, n)
    x[7] = 10.0 + 2.0 * 0.9 * np.sqrt(n)
    nm = strayline.normality(x)
    assert stats.zscore(x, ddof=1).max() > 38  # Φ(-38) < 1e-300
    assert nm.anderson.statistic == pytest.approx(_anderson_legacy(x).statistic, rel=1e-10)
    k2, p = stats.normaltest(x)
    assert nm.dagostino.statistic == pytest.approx(k2, rel=1e-10)
    assert nm.dagostino.pvalue == pytest.approx(p, rel=1e-9, abs=1e-300)
    assert nm.skewness == pytest.approx(stats.skew(x, bias=False), rel=1e-10)
    assert nm.ppcc == pytest.approx(stats.probplot(x)[1][2], rel=1e-12)


def test_the_ppcc_handed_in_is_the_one_reported():
    x = np.sort(DATA["normal-400"])
    from strayline.stats.normality import normality_sorted

    r = stats.probplot(x)[1][2]
    assert normality_sorted(x, ppcc=r).ppcc == r
    assert normality_sorted(x).ppcc == pytest.approx(r, rel=1e-12)
