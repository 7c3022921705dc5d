"""Transformations: log, square root, reciprocal, Box–Cox and Yeo–Johnson.

λ and the transformed values are compared with scipy.stats.boxcox / yeojohnson; every
transformation must invert exactly enough to give the data back; values outside a
transformation's domain are refused with a message that counts them and names an alternative.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

import strayline

RNG = np.random.default_rng(20240601)
POSITIVE = {
    "lognormal": RNG.lognormal(1.0, 0.8, 200),
    "gamma": RNG.gamma(2.0, 3.0, 150),
    "gamma-small-shape": RNG.gamma(0.7, 1.0, 40),
    "chi-square": RNG.chisquare(3, 300),
    "left-skewed-beta": RNG.beta(5.0, 1.0, 100),
    "large-lognormal": RNG.lognormal(10.0, 1.0, 100),
    "three-values": np.array([1.0, 2.0, 5.0]),
}
ANY_SIGN = {
    "normal-shifted-negative": RNG.normal(-3.0, 2.0, 200),
    "lognormal-minus-2": RNG.lognormal(0.0, 1.0, 200) - 2.0,
    "negative-gamma": -RNG.gamma(2.0, 1.0, 150),
    "mixed-exponentials": np.concatenate([-RNG.exponential(1.0, 50), RNG.exponential(5.0, 100)]),
}


@pytest.mark.parametrize("name", sorted(POSITIVE))
def test_boxcox_lambda_agrees_with_scipy(name):
    x = POSITIVE[name]
    _, expected = stats.boxcox(x)
    t = strayline.transform(x, "boxcox")
    assert t.lmbda == pytest.approx(expected, abs=1e-4)
    np.testing.assert_allclose(t.values, stats.boxcox(x, t.lmbda), rtol=1e-12, atol=1e-12)


@pytest.mark.parametrize("name", sorted(POSITIVE) + sorted(ANY_SIGN))
def test_yeojohnson_lambda_agrees_with_scipy(name):
    x = {**POSITIVE, **ANY_SIGN}[name]
    _, expected = stats.yeojohnson(x)
    t = strayline.transform(x, "yeojohnson")
    assert t.lmbda == pytest.approx(expected, abs=1e-4)
    np.testing.assert_allclose(t.values, stats.yeojohnson(x, t.lmbda), rtol=1e-12, atol=1e-12)


@pytest.mark.parametrize("lmbda", [-2.0, -1.0, -0.5, 0.0, 0.25, 0.5, 1.0, 1.5, 2.0, 3.0])
def test_values_for_a_given_lambda_equal_scipy(lmbda):
    x = POSITIVE["lognormal"]
    both = np.concatenate([x, -x, [0.0]])
    np.testing.assert_allclose(strayline.transform(x, "boxcox", lmbda).values,
                               stats.boxcox(x, lmbda), rtol=1e-12, atol=1e-14)
    np.testing.assert_allclose(strayline.transform(both, "yeojohnson", lmbda).values,
                               stats.yeojohnson(both, lmbda), rtol=1e-12, atol=1e-14)


def test_fixed_transformations_are_the_textbook_functions():
    x = POSITIVE["gamma"]
    np.testing.assert_array_equal(strayline.transform(x, "log").values, np.log(x))
    np.testing.assert_array_equal(strayline.transform(x, "sqrt").values, np.sqrt(x))
    np.testing.assert_array_equal(strayline.transform(x, "reciprocal").values, 1.0 / x)
    np.testing.assert_array_equal(strayline.transform(x, "none").values, x)
    # Box–Cox with λ = 0 is the log, with λ = 1 a shift (Box & Cox 1964, eq. 1)
    np.testing.assert_allclose(strayline.transform(x, "boxcox", 0.0).values, np.log(x),
                               rtol=1e-15)
    np.testing.assert_allclose(strayline.transform(x, "boxcox", 1.0).values, x - 1.0,
                               rtol=1e-13)
    for kind in ("log", "sqrt", "reciprocal", "none"):
        assert strayline.transform(x, kind).lmbda is None


def test_reciprocal_accepts_negative_values():
    x = np.array([-4.0, -0.5, 0.25, 2.0, 10.0])
    np.testing.assert_array_equal(strayline.transform(x, "reciprocal").values, 1.0 / x)


KINDS_AND_DATA = [
    ("none", POSITIVE["gamma"]), ("log", POSITIVE["gamma"]), ("sqrt", POSITIVE["gamma"]),
    ("reciprocal", ANY_SIGN["normal-shifted-negative"]),
    ("boxcox", POSITIVE["lognormal"]), ("boxcox", POSITIVE["large-lognormal"]),
    ("boxcox", POSITIVE["left-skewed-beta"]),
    ("yeojohnson", ANY_SIGN["mixed-exponentials"]), ("yeojohnson", ANY_SIGN["negative-gamma"]),
    ("yeojohnson", POSITIVE["large-lognormal"]), ("yeojohnson", POSITIVE["left-skewed-beta"]),
]


@pytest.mark.parametrize("kind, x", KINDS_AND_DATA)
def test_inverse_gives_the_data_back(kind, x):
    t = strayline.transform(x, kind)
    np.testing.assert_allclose(t.inverse(t.values), x, rtol=1e-10, atol=1e-12)


@settings(max_examples=60, deadline=None)
@given(x=st.lists(st.floats(-50, 50, allow_nan=False, allow_subnormal=False), min_size=1,
                  max_size=30),
       lmbda=st.floats(-3, 3, allow_nan=False))
def test_yeojohnson_inverse_for_any_lambda(x, lmbda):
    x = np.array(x)
    t = strayline.transform(x, "yeojohnson", lmbda)
    np.testing.assert_allclose(t.values, stats.yeojohnson(x, lmbda), rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(t.inverse(t.values), x, rtol=1e-10, atol=1e-10)


@settings(max_examples=60, deadline=None)
@given(x=st.lists(st.floats(1e-3, 1e3, allow_nan=False), min_size=1, max_size=30),
       lmbda=st.floats(-2, 2, allow_nan=False))
def test_boxcox_inverse_for_any_lambda(x, lmbda):
    x = np.array(x)
    t = strayline.transform(x, "boxcox", lmbda)
    np.testing.assert_allclose(t.values, stats.boxcox(x, lmbda), rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(t.inverse(t.values), x, rtol=1e-10)


def test_missing_values_pass_through_and_do_not_affect_lambda():
    x = POSITIVE["gamma"].copy()
    with_nan = np.insert(x, [3, 50, 100], np.nan)
    for kind in ("boxcox", "yeojohnson", "log", "sqrt", "reciprocal"):
        a = strayline.transform(with_nan, kind)
        b = strayline.transform(x, kind)
        assert a.lmbda == b.lmbda
        assert np.isnan(a.values[[3, 51, 102]]).all()
        np.testing.assert_array_equal(a.values[~np.isnan(with_nan)], b.values)


def test_series_in_series_out():
    s = pd.Series([1.0, np.nan, 3.0, 4.0, 7.0, 2.5], index=list("abcdef"), name="conc")
    for kind in ("none", "log", "boxcox", "yeojohnson"):
        t = strayline.transform(s, kind)
        assert isinstance(t.values, pd.Series)
        pd.testing.assert_index_equal(t.values.index, s.index)
        assert t.values.name == "conc"
    _, lm = stats.boxcox(s.dropna().to_numpy())
    assert strayline.transform(s, "boxcox").lmbda == pytest.approx(lm, abs=1e-4)


def test_nullable_integers_transform_like_floats():
    s = pd.Series([3, 1, pd.NA, 8, 20, 5, 2], dtype="Int64")
    f = pd.Series([3.0, 1.0, np.nan, 8.0, 20.0, 5.0, 2.0])
    for kind in ("log", "boxcox", "yeojohnson"):
        a, b = strayline.transform(s, kind), strayline.transform(f, kind)
        assert a.lmbda == b.lmbda
        np.testing.assert_array_equal(a.values.to_numpy(), b.values.to_numpy())


# --- refusals ---------------------------------------------------------------------------------

@pytest.mark.parametrize("kind, name", [("log", "the log"), ("boxcox", "Box–Cox")])
def test_log_and_boxcox_of_non_positive_values(kind, name):
    x = [2.0, 0.0, 5.0, -1.5, np.nan, 3.0, -0.25]
    with pytest.raises(ValueError, match=rf"{name} transformation needs positive values: "
                                         r"3 value\(s\) are not \(smallest -1.5\); "
                                         r"use Yeo–Johnson"):
        strayline.transform(x, kind)


def test_boxcox_with_a_given_lambda_still_checks_the_domain():
    with pytest.raises(ValueError, match=r"1 value\(s\) are not .*use Yeo–Johnson"):
        strayline.transform([1.0, 2.0, 0.0, 4.0], "boxcox", 0.5)


def test_sqrt_of_negative_values():
    with pytest.raises(ValueError, match=r"square root transformation needs values that are not "
                                         r"negative: 2 value\(s\) are not \(smallest -4\); "
                                         r"use Yeo–Johnson"):
        strayline.transform([1.0, -4.0, 0.0, 9.0, -1.0], "sqrt")


def test_sqrt_of_zero_is_allowed():
    np.testing.assert_array_equal(strayline.transform([0.0, 4.0], "sqrt").values, [0.0, 2.0])


def test_reciprocal_of_zero():
    with pytest.raises(ValueError, match=r"reciprocal transformation needs values that are not "
                                         r"zero: 2 value\(s\) are not .*drop or offset the zeros"):
        strayline.transform([1.0, 0.0, 3.0, -0.0, 2.0], "reciprocal")


@pytest.mark.parametrize("kind", ["cube", "Log", "box-cox", "", None])
def test_unknown_transformation(kind):
    with pytest.raises(ValueError, match=r"unknown transformation .*; choose one of \('none', "
                                         r"'log', 'sqrt', 'reciprocal', 'boxcox', 'yeojohnson'\)"):
        strayline.transform([1.0, 2.0, 3.0], kind)


@pytest.mark.parametrize("kind", ["log", "sqrt", "reciprocal", "none"])
def test_lambda_given_to_a_fixed_transformation(kind):
    with pytest.raises(ValueError, match=rf"the {kind} transformation takes no lmbda"):
        strayline.transform([1.0, 2.0, 3.0], kind, lmbda=0.5)


@pytest.mark.parametrize("lmbda", [np.nan, np.inf, -np.inf])
def test_lambda_must_be_finite(lmbda):
    with pytest.raises(ValueError, match=r"lmbda must be a finite number"):
        strayline.transform([1.0, 2.0, 3.0], "boxcox", lmbda)


def test_fitting_lambda_needs_three_distinct_values():
    with pytest.raises(ValueError, match=r"fitting Box–Cox λ needs at least 3 non-missing "
                                         r"values, got 2"):
        strayline.transform([1.0, 2.0, np.nan], "boxcox")
    with pytest.raises(ValueError, match=r"Yeo–Johnson λ cannot be fitted: all values are equal"):
        strayline.transform([-1.0, -1.0, -1.0, -1.0], "yeojohnson")
    # with λ given, no fit is needed
    np.testing.assert_allclose(strayline.transform([1.0, 2.0], "boxcox", 0.5).values,
                               stats.boxcox(np.array([1.0, 2.0]), 0.5))
