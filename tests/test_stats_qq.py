"""Normal Q–Q plot coordinates, plotting positions and reference lines."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

import strayline

RNG = np.random.default_rng(1958)


@pytest.mark.parametrize("n", [3, 4, 5, 6, 10, 11, 100, 1001])
@pytest.mark.parametrize("make", [
    lambda n: RNG.lognormal(size=n),
    lambda n: RNG.normal(10, 2, n),
    lambda n: RNG.integers(0, 4, n).astype(float),
], ids=["lognormal", "normal", "ties"])
def test_equals_scipy_probplot(n, make):
    x = make(n)
    if np.ptp(x) == 0:
        x[0] += 1.0
    (osm, osr), (slope, intercept, r) = stats.probplot(x, dist="norm", fit=True)
    q = strayline.qq(x)
    np.testing.assert_allclose(q.theoretical, osm, rtol=1e-13, atol=1e-15)
    np.testing.assert_array_equal(q.ordered, osr)
    assert q.slope == pytest.approx(slope, rel=1e-12)
    assert q.intercept == pytest.approx(intercept, rel=1e-12, abs=1e-12)
    assert q.r == pytest.approx(r, rel=1e-12)
    assert q.positions == "filliben" and q.line == "fit"


def test_filliben_positions_are_scipys_order_statistic_medians():
    # Filliben (1975): m_n = 0.5**(1/n), m_1 = 1 - m_n, m_i = (i - 0.3175)/(n + 0.365);
    # scipy.stats.probplot uses the same estimate
    for n in (1, 2, 3, 7, 50):
        i = np.arange(1, n + 1)
        expected = (i - 0.3175) / (n + 0.365)
        expected[-1] = 0.5 ** (1 / n)
        expected[0] = 1 - 0.5 ** (1 / n)
        np.testing.assert_allclose(strayline.plotting_positions(n, "filliben"), expected,
                                   rtol=1e-15)


@pytest.mark.parametrize("positions, formula", [
    ("blom", lambda i, n: (i - 3 / 8) / (n + 1 / 4)),     # Blom (1958)
    ("weibull", lambda i, n: i / (n + 1)),                 # Weibull (1939)
    ("hazen", lambda i, n: (i - 1 / 2) / n),               # Hazen (1914)
])
def test_plotting_position_formulas(positions, formula):
    for n in (1, 2, 5, 10, 333):
        i = np.arange(1, n + 1, dtype=float)
        np.testing.assert_allclose(strayline.plotting_positions(n, positions), formula(i, n),
                                   rtol=1e-15)
        x = RNG.normal(size=max(n, 3))
        q = strayline.qq(x, positions=positions)
        m = x.size
        j = np.arange(1, m + 1, dtype=float)
        np.testing.assert_allclose(q.theoretical, stats.norm.ppf(formula(j, m)), rtol=1e-12,
                                   atol=1e-15)


@pytest.mark.parametrize("positions", strayline.POSITIONS)
def test_normal_quantiles_are_symmetric_and_read_only(positions):
    for n in (1, 2, 9, 10):
        m = strayline.normal_quantiles(n, positions)
        np.testing.assert_allclose(m, stats.norm.ppf(strayline.plotting_positions(n, positions)),
                                   rtol=1e-12, atol=1e-15)
        np.testing.assert_array_equal(m, -m[::-1])
        assert np.all(np.diff(m) > 0)
        with pytest.raises(ValueError, match="read-only"):
            m[0] = 0.0


def test_quartile_line_passes_through_the_quartiles():
    x = RNG.lognormal(size=77)
    q = strayline.qq(x, line="quartiles")
    q1, q3 = np.quantile(x, [0.25, 0.75])
    z = stats.norm.ppf(0.75)
    assert q.intercept + q.slope * z == pytest.approx(q3, rel=1e-13)
    assert q.intercept - q.slope * z == pytest.approx(q1, rel=1e-13)
    # the correlation does not depend on the line drawn
    assert q.r == pytest.approx(stats.probplot(x)[1][2], rel=1e-12)
    assert q.line == "quartiles"


@settings(max_examples=60, deadline=None)
@given(x=st.lists(st.one_of(st.just(np.nan), st.integers(-5, 5).map(float),
                            st.floats(-1e6, 1e6, allow_nan=False)), min_size=3, max_size=50))
def test_order_points_back_into_the_input(x):
    x = np.array(x)
    present = x[~np.isnan(x)]
    if present.size < 3:
        return
    q = strayline.qq(x)
    np.testing.assert_array_equal(x[q.order], q.ordered)
    np.testing.assert_array_equal(q.ordered, np.sort(present))
    assert np.unique(q.order).size == present.size  # each present value once
    assert not np.isnan(x[q.order]).any()


def test_series_order_is_positional():
    s = pd.Series([3.0, np.nan, 1.0, 2.0], index=["c", "x", "a", "b"])
    q = strayline.qq(s)
    assert q.order.tolist() == [2, 3, 0]
    assert s.index[q.order].tolist() == ["a", "b", "c"]


def test_ppcc_of_exact_normal_quantiles_is_one():
    # values equal to their own plotting-position quantiles lie exactly on a line
    m = stats.norm.ppf(strayline.plotting_positions(40))
    q = strayline.qq(3.0 + 2.0 * m)
    assert q.r == pytest.approx(1.0, abs=1e-14)
    assert q.slope == pytest.approx(2.0, rel=1e-13)
    assert q.intercept == pytest.approx(3.0, rel=1e-13)


def test_fit_at_the_top_of_the_float_range():
    x = RNG.normal(size=50)
    big = np.ldexp(x / np.abs(x).max() * 1.9, 1023)  # up to 1.7e308, of both signs
    small = np.ldexp(x / np.abs(x).max() * 1.9, -1000)
    ref = strayline.qq(np.ldexp(big, -1023))
    with np.errstate(over="raise", invalid="raise"):
        for y, e in ((big, 1023), (small, -1000)):
            q = strayline.qq(y)
            assert q.r == pytest.approx(ref.r, rel=1e-13)
            assert q.slope == pytest.approx(np.ldexp(ref.slope, e), rel=1e-12)


@pytest.mark.parametrize("call, error, fragment", [
    (lambda: strayline.qq([1.0, 2.0, 3.0], positions="tukey"), ValueError,
     r"positions must be one of \('filliben', 'blom', 'weibull', 'hazen'\), got 'tukey'"),
    (lambda: strayline.qq([1.0, 2.0, 3.0], line="robust"), ValueError,
     r"line must be one of \('fit', 'quartiles'\), got 'robust'"),
    (lambda: strayline.plotting_positions(0), ValueError, r"plotting positions need n >= 1"),
    (lambda: strayline.plotting_positions(5, "median"), ValueError,
     r"positions must be one of"),
    (lambda: strayline.normal_quantiles(5, "median"), ValueError, r"positions must be one of"),
    (lambda: strayline.qq([1.0, np.nan, 2.0]), ValueError,
     r"a Q–Q plot needs at least 3 non-missing values, got 2"),
])
def test_refusals(call, error, fragment):
    with pytest.raises(error, match=fragment):
        call()


def test_constant_data_have_no_correlation():
    q = strayline.qq([2.0, 2.0, 2.0, 2.0])
    assert q.slope == 0.0 and q.intercept == 2.0
    assert np.isnan(q.r)


@pytest.mark.parametrize("n", [1, 2, 3, 10, 11, 1000, 1001])
def test_quantiles_held_as_a_half_read_like_the_whole_array(n):
    half = strayline.NormalQuantiles(n)
    full = stats.norm.ppf(strayline.plotting_positions(n))  # scipy, from the formula
    np.testing.assert_allclose(np.asarray(half), full, rtol=1e-12, atol=1e-15)
    whole = np.asarray(half)
    assert len(half) == half.size == n and whole[0] == half[0] and whole[-1] == half[-1]
    rng = np.random.default_rng(n)
    idx = rng.integers(-n, n, 50)
    np.testing.assert_array_equal(half[idx], whole[idx])
    np.testing.assert_array_equal(half[::3], whole[::3])
    mask = rng.random(n) < 0.5
    np.testing.assert_array_equal(half[mask], whole[mask])
    with pytest.raises(IndexError):
        half[n]
    with pytest.raises(IndexError):
        half[np.array([0, n])]
    for x in [*rng.normal(0, 2, 30), 0.0, *whole[: min(n, 5)], -np.inf, np.inf]:
        for side in ("left", "right"):
            assert half.searchsorted(x, side) == np.searchsorted(whole, x, side)


@pytest.mark.parametrize("n", [3, 4, 501, 300_000])
def test_the_line_from_the_half_equals_the_line_from_all_quantiles(n):
    y = np.sort(RNG.lognormal(size=n))
    from strayline.stats.qq import fit_line

    a = fit_line(strayline.NormalQuantiles(n), y)
    b = fit_line(strayline.normal_quantiles(n), y)
    np.testing.assert_allclose(a, b, rtol=1e-12)
    (_, _), (slope, intercept, r) = stats.probplot(y)
    np.testing.assert_allclose(a, (slope, intercept, r), rtol=1e-11)
