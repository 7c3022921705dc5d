"""Outlier rules: z-scores, robust z-scores, Tukey and skew-adjusted fences, Grubbs and the
generalized ESD test, and flag(), which applies them by name.

Each rule is checked against a computation outside the package (numpy, scipy, statsmodels,
the published worked examples) or against a plain re-implementation of its definition written
here; the property tests check invariances that any correct implementation has.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st
from scipy import stats
from statsmodels.stats.stattools import _medcouple_1d_legacy as pairwise_medcouple

import strayline

PROPERTY = settings(max_examples=60, deadline=None)

# Rosner (1983), Technometrics 25(2): the 54 values of the worked example of the generalized
# ESD test in the NIST/SEMATECH e-Handbook of Statistical Methods, section 1.3.5.17.3.
ROSNER = np.array([
    -0.25, 0.68, 0.94, 1.15, 1.20, 1.26, 1.26, 1.34, 1.38, 1.43, 1.49, 1.49, 1.55, 1.56,
    1.58, 1.65, 1.69, 1.70, 1.76, 1.77, 1.81, 1.91, 1.94, 1.96, 1.99, 2.06, 2.09, 2.10,
    2.14, 2.15, 2.23, 2.24, 2.26, 2.35, 2.37, 2.40, 2.47, 2.54, 2.62, 2.64, 2.90, 2.92,
    2.92, 2.93, 3.21, 3.26, 3.30, 3.59, 3.68, 4.30, 4.64, 5.34, 5.42, 6.01,
])

# Tietjen & Moore (1972): eight mass-spectrometer measurements of a uranium isotope, the worked
# example of Grubbs' test in the NIST/SEMATECH e-Handbook, section 1.3.5.17.1.
URANIUM = np.array([199.31, 199.53, 200.19, 200.82, 201.92, 201.95, 202.18, 245.57])


# --- the published worked examples ----------------------------------------------------------

def test_grubbs_nist_example():
    # NIST/SEMATECH e-Handbook 1.3.5.17.1 (values from memory): G = 2.4687, two-sided critical
    # value 2.1266 at alpha = 0.05, so 245.57 is an outlier
    g = strayline.grubbs(URANIUM, alpha=0.05)
    assert g.statistic == pytest.approx(2.4687, abs=1e-4)
    assert g.critical_value == pytest.approx(2.1266, abs=1e-4)
    assert g.outlier
    assert g.position == 7
    np.testing.assert_array_equal(g.mask, URANIUM == 245.57)
    f = strayline.flag(URANIUM, "grubbs", alpha=0.05)
    np.testing.assert_array_equal(f.mask, URANIUM == 245.57)
    assert f.upper == 202.18 and f.lower == 199.31  # the extremes the test kept


def test_gesd_nist_example():
    # NIST/SEMATECH e-Handbook 1.3.5.17.3, Rosner's data with at most 10 outliers at
    # alpha = 0.05. The handbook's table, from memory (printed to 3 decimals):
    # i:   1      2      3      4      5      6      7      8      9      10
    # R:   3.118  2.942  3.179  2.810  2.815  2.848  2.279  2.310  2.101  2.067
    # lam: 3.158  3.151  3.143  3.136  3.128  3.120  3.111  3.103  3.094  3.085
    # R_3 > lam_3 is the last exceedance, so there are 3 outliers.
    r_table = [3.118, 2.942, 3.179, 2.810, 2.815, 2.848, 2.279, 2.310, 2.101, 2.067]
    lam_table = [3.158, 3.151, 3.143, 3.136, 3.128, 3.120, 3.111, 3.103, 3.094, 3.085]
    res = strayline.gesd(ROSNER, max_outliers=10, alpha=0.05)
    np.testing.assert_allclose(res.statistics, r_table, atol=1.5e-3)
    np.testing.assert_allclose(res.critical_values, lam_table, atol=1.5e-3)
    assert res.n_outliers == 3
    np.testing.assert_array_equal(np.sort(ROSNER[res.removed]), [5.34, 5.42, 6.01])
    np.testing.assert_array_equal(ROSNER[res.removed], [6.01, 5.42, 5.34])  # removal order
    np.testing.assert_array_equal(res.mask, np.isin(ROSNER, [5.34, 5.42, 6.01]))
    f = strayline.flag(ROSNER, "gesd", alpha=0.05, max_outliers=10)
    np.testing.assert_array_equal(f.mask, res.mask)
    assert f.upper == 4.64 and f.lower == -0.25


@pytest.mark.parametrize("n, expected", [(8, 2.1266), (10, 2.290), (20, 2.708), (30, 2.908),
                                         (50, 3.128), (100, 3.384)])
def test_grubbs_critical_values_match_published_tables(n, expected):
    # two-sided alpha = 0.05 critical values of Grubbs' statistic (Grubbs 1969 tables, as
    # reproduced in the NIST/SEMATECH e-Handbook 1.3.5.17.1 example and in ASTM E178;
    # from memory, 3 to 4 decimals)
    rng = np.random.default_rng(n)
    g = strayline.grubbs(rng.normal(size=n), alpha=0.05)
    assert g.critical_value == pytest.approx(expected, abs=1.5e-3)


def test_grubbs_critical_value_formula():
    # NIST/SEMATECH e-Handbook 1.3.5.17.1: G_crit = (n-1)/sqrt(n) sqrt(t^2 / (n - 2 + t^2)),
    # t the upper alpha/(2n) critical value of Student's t with n - 2 degrees of freedom
    rng = np.random.default_rng(11)
    for n in (3, 7, 25, 300):
        for alpha in (0.1, 0.05, 0.01):
            t = stats.t.isf(alpha / (2 * n), n - 2)
            expected = (n - 1) / np.sqrt(n) * np.sqrt(t * t / (n - 2 + t * t))
            g = strayline.grubbs(rng.normal(size=n), alpha=alpha)
            assert g.critical_value == pytest.approx(expected, rel=1e-12)


# --- a plain generalized ESD, recomputing mean and SD after each removal --------------------

def gesd_loop(x, max_outliers, alpha):
    """Rosner's procedure as written in NIST/SEMATECH e-Handbook 1.3.5.17.3."""
    values = list(np.asarray(x, dtype=float))
    positions = list(range(len(values)))
    n = len(values)
    r_stats, lams, removed, gaps = [], [], [], []
    for i in range(1, max_outliers + 1):
        arr = np.array(values)
        dev = np.abs(arr - arr.mean())
        j = int(np.argmax(dev))
        # how far the chosen value is ahead of the nearest different value (ties need a rule)
        others = dev[arr != arr[j]]
        gaps.append(dev[j] - others.max() if others.size else np.inf)
        r_stats.append(dev[j] / arr.std(ddof=1))
        removed.append(positions[j])
        del values[j], positions[j]
        p = 1 - alpha / (2 * (n - i + 1))
        t = stats.t.ppf(p, n - i - 1)
        lams.append((n - i) * t / np.sqrt((n - i - 1 + t * t) * (n - i + 1)))
    exceed = [i for i in range(max_outliers) if r_stats[i] > lams[i]]
    n_out = exceed[-1] + 1 if exceed else 0
    return np.array(r_stats), np.array(lams), n_out, removed, np.array(gaps)


def test_gesd_loop_reproduces_the_nist_example():
    r, lam, n_out, _, _ = gesd_loop(ROSNER, 10, 0.05)
    assert n_out == 3
    assert r[0] == pytest.approx(3.118, abs=1.5e-3) and lam[2] == pytest.approx(3.143, abs=1.5e-3)


# values rounded to 1e-6, so that the plain loop's sums of squares cannot underflow
samples = st.lists(
    st.one_of(st.integers(-400, 400).map(lambda v: v / 8.0),
              st.floats(-1e4, 1e4, allow_nan=False).map(lambda v: round(v, 6))),
    min_size=5, max_size=40)


@PROPERTY
@given(x=samples, data=st.data(), alpha=st.sampled_from([0.01, 0.05, 0.2]))
def test_gesd_equals_the_plain_loop(x, data, alpha):
    x = np.array(x)
    n = x.size
    r = data.draw(st.integers(1, n - 2), label="max_outliers")
    assume(np.unique(x).size > r + 1)  # some spread is left after every removal
    ref_r, ref_lam, ref_n, ref_removed, gaps = gesd_loop(x, r, alpha)
    spread = np.ptp(x)
    assume(np.all(gaps > 1e-9 * spread))  # no (near) tie for the most extreme value
    assume(np.all(np.abs(ref_r - ref_lam) > 1e-9))  # no decision on a knife edge
    res = strayline.gesd(x, max_outliers=r, alpha=alpha)
    np.testing.assert_allclose(res.statistics, ref_r, rtol=1e-9, atol=1e-12)
    np.testing.assert_allclose(res.critical_values, ref_lam, rtol=1e-10)
    assert res.n_outliers == ref_n
    # equal values are interchangeable: compare the removed values, then the mask's values
    np.testing.assert_array_equal(x[res.removed], x[ref_removed[:ref_n]])
    np.testing.assert_array_equal(np.sort(x[res.mask]), np.sort(x[ref_removed[:ref_n]]))
    f = strayline.flag(x, "gesd", alpha=alpha, max_outliers=r)
    np.testing.assert_array_equal(np.sort(x[f.mask]), np.sort(x[res.mask]))


def test_gesd_after_a_gross_outlier():
    # removing 1e9 from unit-scale data must not spoil the statistics of the later steps
    # (running sums of squares lose every digit of the remaining variance here)
    rng = np.random.default_rng(0)
    x = np.concatenate([rng.normal(size=30), [1e9, 5.0]])
    ref_r, _, ref_n, ref_removed, _ = gesd_loop(x, 4, 0.05)
    res = strayline.gesd(x, 4)
    np.testing.assert_allclose(res.statistics, ref_r, rtol=1e-9)
    assert res.n_outliers == ref_n == 2
    np.testing.assert_array_equal(res.removed, ref_removed[:2])
    assert strayline.flag(x, "gesd", max_outliers=4).mask.sum() == 2


# --- z-scores and robust z-scores ------------------------------------------------------------

def test_zscores_equal_scipy_with_ddof_1():
    rng = np.random.default_rng(1)
    x = rng.normal(10, 3, 200)
    x[[5, 50]] = np.nan
    np.testing.assert_allclose(strayline.zscores(x), stats.zscore(x, ddof=1, nan_policy="omit"),
                               rtol=1e-12, atol=1e-14)


def test_robust_zscores_follow_iglewicz_hoaglin():
    # M_i = 0.6745 (x_i - median) / MAD, MAD = median |x_i - median| (Iglewicz & Hoaglin 1993,
    # p. 12); 0.6745 is the normal quartile Phi^{-1}(0.75), taken from scipy here
    rng = np.random.default_rng(2)
    x = rng.standard_t(3, 101)
    clean = x.copy()
    x[7] = np.nan
    clean = np.delete(clean, 7)
    med = np.median(clean)
    mad = stats.median_abs_deviation(clean)
    expected = stats.norm.ppf(0.75) * (x - med) / mad
    np.testing.assert_allclose(strayline.robust_zscores(x), expected, rtol=1e-12, atol=1e-14)


def test_zscore_rule_flags_beyond_three_sd():
    # common practice: |z| > 3
    rng = np.random.default_rng(3)
    x = np.concatenate([rng.normal(0, 1, 300), [4.5, -5.0, 3.5]])
    z = stats.zscore(x, ddof=1)
    f = strayline.flag(x, "zscore")
    np.testing.assert_array_equal(f.mask, np.abs(z) > 3)
    assert f.mask.sum() >= 2
    np.testing.assert_allclose(f.scores, z, rtol=1e-12)
    assert f.lower == pytest.approx(x.mean() - 3 * x.std(ddof=1), rel=1e-12)
    assert f.upper == pytest.approx(x.mean() + 3 * x.std(ddof=1), rel=1e-12)
    g = strayline.flag(x, "zscore", threshold=2.0)
    np.testing.assert_array_equal(g.mask, np.abs(z) > 2)


def test_robust_z_rule_flags_beyond_3_5():
    # Iglewicz & Hoaglin (1993) recommend |M| > 3.5
    rng = np.random.default_rng(4)
    x = np.concatenate([rng.normal(50, 2, 120), [70.0, 30.0, 58.0]])
    med = np.median(x)
    m = stats.norm.ppf(0.75) * (x - med) / stats.median_abs_deviation(x)
    f = strayline.flag(x, "robust_z")
    np.testing.assert_array_equal(f.mask, np.abs(m) > 3.5)
    assert f.mask.sum() >= 2
    np.testing.assert_allclose(f.scores, m, rtol=1e-12)


# --- Tukey's fences -----------------------------------------------------------------------

@pytest.mark.parametrize("k", [1.5, 3.0, 0.7])
def test_fences_use_type_7_quartiles(k):
    # Tukey (1977): inner fences at 1.5 IQR and outer at 3 IQR beyond the quartiles
    # (common practice); quartiles are numpy.quantile's default (Hyndman & Fan type 7)
    rng = np.random.default_rng(5)
    for n in (4, 5, 6, 7, 10, 33, 1000):
        x = rng.lognormal(size=n)
        q1, q3 = np.quantile(x, [0.25, 0.75])
        f = strayline.fences(x, k=k)
        assert f.q1 == q1 and f.q3 == q3
        assert f.iqr == pytest.approx(q3 - q1, rel=1e-15)
        assert f.lower == pytest.approx(q1 - k * (q3 - q1), rel=1e-14, abs=1e-14)
        assert f.upper == pytest.approx(q3 + k * (q3 - q1), rel=1e-14)
        fl = strayline.flag(x, "fences", k=k)
        np.testing.assert_array_equal(fl.mask, (x < q1 - k * (q3 - q1)) | (x > q3 + k * (q3 - q1)))


def test_a_value_on_the_fence_is_not_flagged():
    # sorted: q1 = s[2] = 2 and q3 = s[6] = 4 (type 7, n = 9), so the fences are -1 and 7
    x = np.array([-1.0, 2.0, 2.0, 2.0, 4.0, 4.0, 4.0, 6.0, 7.0])
    assert tuple(np.quantile(x, [0.25, 0.75])) == (2.0, 4.0)
    f = strayline.flag(x, "fences")
    assert (f.lower, f.upper) == (-1.0, 7.0)
    assert not f.mask.any()
    y = x.copy()
    y[-1] = np.nextafter(7.0, 8.0)
    y[0] = np.nextafter(-1.0, -2.0)
    assert strayline.flag(y, "fences").mask.tolist() == [True] + [False] * 7 + [True]


def test_fence_scores_are_iqr_units_beyond_the_box():
    x = np.array([1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 30.0, -20.0])
    q1, q3 = np.quantile(x, [0.25, 0.75])
    iqr = q3 - q1
    expected = np.where(x > q3, (x - q3) / iqr, np.where(x < q1, (x - q1) / iqr, 0.0))
    f = strayline.flag(x, "fences", k=1.5)
    np.testing.assert_allclose(f.scores, expected, rtol=1e-13)
    np.testing.assert_array_equal(f.mask, np.abs(f.scores) > 1.5)


# --- skew-adjusted fences ---------------------------------------------------------------------

def _adjusted_reference(x, k):
    """Hubert & Vandervieren (2008), eq. (3.1)-(3.2), with statsmodels' pairwise medcouple."""
    q1, q3 = np.quantile(x, [0.25, 0.75])
    iqr = q3 - q1
    mc = pairwise_medcouple(x)
    if mc >= 0:
        return q1 - k * np.exp(-4 * mc) * iqr, q3 + k * np.exp(3 * mc) * iqr, mc
    return q1 - k * np.exp(-3 * mc) * iqr, q3 + k * np.exp(4 * mc) * iqr, mc


@pytest.mark.parametrize("make", [
    lambda r: r.lognormal(0, 0.8, 150),           # right skew, MC > 0
    lambda r: -r.gamma(2.0, 1.0, 151),            # left skew, MC < 0
    lambda r: r.normal(0, 1, 99),                 # near symmetric
    lambda r: r.integers(0, 6, 80).astype(float),  # heavy ties
    lambda r: r.exponential(1, 12),
], ids=["lognormal", "neg-gamma", "normal", "ties", "small"])
@pytest.mark.parametrize("k", [1.5, 3.0])
def test_adjusted_fences_recomputed_from_statsmodels_medcouple(make, k):
    x = make(np.random.default_rng(6))
    lower, upper, mc = _adjusted_reference(x, k)
    f = strayline.adjusted_fences(x, k=k)
    assert f.medcouple == pytest.approx(mc, abs=1e-12)
    assert f.lower == pytest.approx(lower, rel=1e-12, abs=1e-12)
    assert f.upper == pytest.approx(upper, rel=1e-12, abs=1e-12)
    fl = strayline.flag(x, "adjusted_fences", k=k)
    np.testing.assert_array_equal(fl.mask, (x < lower) | (x > upper))
    # scores: distance beyond the box in units of the fence's distance per unit k
    q1, q3 = np.quantile(x, [0.25, 0.75])
    expected = np.where(x > q3, (x - q3) / ((upper - q3) / k),
                        np.where(x < q1, (x - q1) / ((q1 - lower) / k), 0.0))
    np.testing.assert_allclose(fl.scores, expected, rtol=1e-10, atol=1e-12)


def test_adjusted_fences_on_right_skewed_data_flag_fewer_high_values():
    # the point of the adjustment (Hubert & Vandervieren 2008, section 4): lognormal data
    # have many values above Tukey's upper fence and far fewer above the adjusted one
    x = np.random.default_rng(7).lognormal(0, 1, 2000)
    tukey = strayline.flag(x, "fences").mask
    adjusted = strayline.flag(x, "adjusted_fences").mask
    assert adjusted.sum() < tukey.sum() / 3


# --- Grubbs -----------------------------------------------------------------------------------

def test_grubbs_against_its_definition():
    rng = np.random.default_rng(8)
    for n in (5, 12, 60):
        x = rng.normal(size=n)
        x[n // 2] += 6
        dev = np.abs(x - x.mean())
        g_expected = dev.max() / x.std(ddof=1)
        t = stats.t.isf(0.05 / (2 * n), n - 2)
        crit = (n - 1) / np.sqrt(n) * np.sqrt(t * t / (n - 2 + t * t))
        g = strayline.grubbs(x)
        assert g.statistic == pytest.approx(g_expected, rel=1e-12)
        assert g.position == int(np.argmax(dev))
        expected_mask = (np.arange(n) == np.argmax(dev)) & (g_expected > crit)
        np.testing.assert_array_equal(g.mask, expected_mask)
        np.testing.assert_array_equal(strayline.flag(x, "grubbs").mask, g.mask)


def test_grubbs_without_an_outlier_flags_nothing():
    x = np.linspace(-1, 1, 21)
    g = strayline.grubbs(x)
    assert not g.outlier and not g.mask.any()
    assert not strayline.flag(x, "grubbs").mask.any()


# --- properties --------------------------------------------------------------------------

affine_data = st.lists(
    st.one_of(st.integers(-200, 200).map(lambda v: v / 4.0), st.integers(0, 4).map(float),
              st.floats(-1e4, 1e4, allow_nan=False, allow_subnormal=False)),
    min_size=6, max_size=40)
BOUND_RULES = ["zscore", "robust_z", "fences", "adjusted_fences"]


def _flags_or_none(x, rule, **params):
    try:
        return strayline.flag(x, rule, **params)
    except ValueError:
        return None


def _assert_same_mask_up_to_rounding(x, fx, fy):
    differ = np.flatnonzero(fx.mask != fy.mask)
    if differ.size:
        width = fx.upper - fx.lower
        near = np.minimum(np.abs(x[differ] - fx.lower), np.abs(x[differ] - fx.upper))
        assert np.all(near <= 1e-9 * max(width, 1.0)), (x[differ], fx.lower, fx.upper)


@PROPERTY
@given(x=affine_data, rule=st.sampled_from(BOUND_RULES),
       a=st.sampled_from([0.25, 2.0, 3.7, 1e3, 1e-3, -1.0, -0.5, -7.3, -1e3]),
       b=st.sampled_from([0.0, 1.0, -250.5, 1e5]))
def test_bound_rules_are_affine_invariant(x, rule, a, b):
    # x -> a x + b: with a > 0 every rule, and with a < 0 the symmetric z and fence rules,
    # flag the same values; only values within rounding of a bound may change side
    x = np.array(x)
    y = a * x + b
    # rounding in a x + b must not merge distinct values (a tie is not a near-tie to the
    # medcouple, nor to the median); the map itself is one-to-one
    assume(np.unique(y).size == np.unique(x).size)
    fx, fy = _flags_or_none(x, rule), _flags_or_none(y, rule)
    assume(fx is not None and fy is not None)
    _assert_same_mask_up_to_rounding(x, fx, fy)
    if rule in ("zscore", "robust_z"):
        sign = 1.0 if a > 0 else -1.0
        np.testing.assert_allclose(fy.scores, sign * fx.scores, rtol=1e-7, atol=1e-7)


@PROPERTY
@given(x=affine_data, a=st.sampled_from([0.25, 2.0, 3.7, 1e3, 1e-3]),
       b=st.sampled_from([0.0, 1.0, -250.5, 1e5]), rule=st.sampled_from(["grubbs", "gesd"]))
def test_tests_are_invariant_under_increasing_affine_maps(x, a, b, rule):
    x = np.array(x)
    y = a * x + b
    assume(np.unique(y).size == np.unique(x).size)
    r = min(3, x.size - 2)
    assume(np.unique(x).size > r + 1)
    ref_r, ref_lam, _, _, gaps = gesd_loop(x, r, 0.05)
    assume(np.all(gaps > 1e-9 * np.ptp(x)) and np.all(np.abs(ref_r - ref_lam) > 1e-7))
    g1 = strayline.grubbs(x)
    assume(abs(g1.statistic - g1.critical_value) > 1e-7)
    params = {"max_outliers": r} if rule == "gesd" else {}
    np.testing.assert_array_equal(strayline.flag(x, rule, **params).mask,
                                  strayline.flag(y, rule, **params).mask)


nan_data = st.lists(
    st.one_of(st.just(np.nan), st.integers(-50, 50).map(float),
              st.floats(-1e3, 1e3, allow_nan=False, allow_subnormal=False)),
    min_size=1, max_size=40)


@PROPERTY
@given(x=nan_data, rule=st.sampled_from(sorted(strayline.RULES)))
def test_missing_values_are_never_flagged(x, rule):
    x = np.array(x)
    missing = np.isnan(x)
    clean = x[~missing]
    params = {"max_outliers": 1} if rule == "gesd" else {}
    try:
        expected = strayline.flag(clean, rule, **params)
    except ValueError:
        with pytest.raises(ValueError):
            strayline.flag(x, rule, **params)
        return
    f = strayline.flag(x, rule, **params)
    assert not f.mask[missing].any()
    assert np.all(np.isnan(f.scores[missing]))
    # the present values get exactly what they get without the missing ones
    np.testing.assert_array_equal(f.mask[~missing], expected.mask)
    np.testing.assert_array_equal(f.scores[~missing], expected.scores)
    assert (f.lower, f.upper) == (expected.lower, expected.upper)


# --- pandas in, pandas out --------------------------------------------------------------------

def _series():
    idx = pd.Index([f"r{i}" for i in range(12)], name="sample")
    vals = [5.0, 6.1, np.nan, 5.5, 4.9, 25.0, 5.2, 5.8, 6.0, np.nan, 4.7, 5.3]
    return pd.Series(vals, index=idx, name="yield")


@pytest.mark.parametrize("call", [
    strayline.zscores,
    strayline.robust_zscores,
    lambda s: strayline.grubbs(s).mask,
    lambda s: strayline.gesd(s, 2).mask,
    *(lambda s, r=r: strayline.flag(s, r).mask for r in [*BOUND_RULES, "grubbs"]),
    *(lambda s, r=r: strayline.flag(s, r).scores for r in [*BOUND_RULES, "grubbs"]),
])
def test_series_keep_their_index_and_name(call):
    s = _series()
    out = call(s)
    assert isinstance(out, pd.Series)
    pd.testing.assert_index_equal(out.index, s.index)
    assert out.name == "yield"
    expected = call(s.to_numpy())
    np.testing.assert_array_equal(out.to_numpy(), expected)


def test_series_with_a_shuffled_integer_index():
    s = _series()
    s.index = [11, 3, 7, 0, 5, 1, 9, 2, 10, 4, 8, 6]
    z = strayline.zscores(s)
    clean = s.dropna()
    np.testing.assert_allclose(z.loc[clean.index], stats.zscore(clean, ddof=1), rtol=1e-12)
    assert z.index.tolist() == s.index.tolist()
    assert strayline.flag(s, "fences").mask.loc[1]  # the value 25.0 has label 1


# --- parameters refused -----------------------------------------------------------------------

X = [4.1, 5.0, 5.2, 4.8, 5.1, 4.9, 5.3, 9.0]


@pytest.mark.parametrize("alpha", [0.0, 1.0, -0.05, 1.5, np.nan])
@pytest.mark.parametrize("call", [
    lambda a: strayline.grubbs(X, alpha=a),
    lambda a: strayline.gesd(X, 2, alpha=a),
    lambda a: strayline.flag(X, "grubbs", alpha=a),
    lambda a: strayline.flag(X, "gesd", alpha=a, max_outliers=2),
])
def test_alpha_outside_the_unit_interval_is_refused(call, alpha):
    with pytest.raises(ValueError, match=r"alpha must lie strictly between 0 and 1"):
        call(alpha)


@pytest.mark.parametrize("k", [0.0, -1.5, np.inf, np.nan])
@pytest.mark.parametrize("call", [
    lambda k: strayline.fences(X, k=k),
    lambda k: strayline.adjusted_fences(X, k=k),
    lambda k: strayline.flag(X, "fences", k=k),
    lambda k: strayline.flag(X, "adjusted_fences", k=k),
])
def test_non_positive_k_is_refused(call, k):
    with pytest.raises(ValueError, match=r"k must be a positive number"):
        call(k)


@pytest.mark.parametrize("rule", ["zscore", "robust_z"])
@pytest.mark.parametrize("threshold", [0.0, -3.0])
def test_non_positive_threshold_is_refused(rule, threshold):
    with pytest.raises(ValueError, match=r"threshold must be a positive number"):
        strayline.flag(X, rule, threshold=threshold)


@pytest.mark.parametrize("m", [7, 8, 100])
def test_max_outliers_of_n_minus_1_or_more_is_refused(m):
    with pytest.raises(ValueError, match=r"max_outliers must be between 1 and n - 2 = 6 for 8 "
                                         rf"values, got {m}"):
        strayline.gesd(X, m)
    with pytest.raises(ValueError, match=r"between 1 and n - 2 = 6"):
        strayline.flag(X, "gesd", max_outliers=m)


def test_max_outliers_of_n_minus_2_is_accepted():
    res = strayline.gesd(X, 6)
    assert res.statistics.size == 6


@pytest.mark.parametrize("m", [0, -2])
def test_max_outliers_below_one_is_refused(m):
    with pytest.raises(ValueError, match=rf"max_outliers must be between 1 and n - 2 = 6 for 8 "
                                         rf"values, got {m}"):
        strayline.gesd(X, m)
    with pytest.raises(ValueError, match=rf"max_outliers must be at least 1, got {m}"):
        strayline.flag(X, "gesd", max_outliers=m)


@pytest.mark.parametrize("m", [2.5, "3", True, None])
def test_max_outliers_that_is_not_a_whole_number_is_refused(m):
    with pytest.raises(TypeError, match=r"max_outliers must be a whole number"):
        strayline.gesd(X, m)
    with pytest.raises(TypeError, match=r"max_outliers must be a whole number"):
        strayline.flag(X, "gesd", max_outliers=m)


def test_a_whole_number_written_as_a_float_is_taken_by_both_entry_points():
    # 2.0 reads as 2 in gesd() as in flag(), as a number read back from a file may come
    a, b = strayline.gesd(X, 2.0), strayline.gesd(X, 2)
    np.testing.assert_array_equal(a.statistics, b.statistics)
    np.testing.assert_array_equal(strayline.flag(X, "gesd", max_outliers=np.float64(2.0)).mask,
                                  b.mask)


def test_default_gesd_bound_needs_twelve_values():
    # flag's default max_outliers is 10, which needs n >= 12
    with pytest.raises(ValueError, match=r"between 1 and n - 2 = 6 for 8 values, got 10"):
        strayline.flag(X, "gesd")


def test_unknown_rule_is_refused():
    with pytest.raises(ValueError, match=r"unknown rule 'iqr'; choose one of \['adjusted_fences', "
                                         r"'fences', 'gesd', 'grubbs', 'robust_z', 'zscore'\]"):
        strayline.flag(X, "iqr")


@pytest.mark.parametrize("rule, bad", [("fences", "alpha"), ("zscore", "k"),
                                       ("grubbs", "max_outliers"), ("gesd", "threshold")])
def test_unknown_parameter_is_refused(rule, bad):
    with pytest.raises(TypeError, match=rf"rule '{rule}' takes \[.*\], not \['{bad}'\]"):
        strayline.flag(X, rule, **{bad: 1})


def test_flags_record_the_parameters_used():
    f = strayline.flag(X, "gesd", max_outliers=3)
    assert f.rule == "gesd"
    assert f.params == {"alpha": 0.05, "max_outliers": 3}
    assert strayline.flag(X, "fences", k=3).params == {"k": 3.0}
