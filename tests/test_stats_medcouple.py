"""The medcouple against its pairwise definition (Brys, Hubert & Struyf, 2004).

The package computes it by selection in O(n log n); here it is compared with a plain O(n^2)
evaluation of the definition written in this file and with statsmodels' pairwise version,
on data with and without heavy ties, and with the sampling path forced on small data.
"""

from __future__ import annotations

import importlib

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from statsmodels.stats.stattools import _medcouple_1d_legacy as statsmodels_pairwise

import strayline
from strayline.stats.medcouple import medcouple_sorted

medcouple_module = importlib.import_module("strayline.stats.medcouple")


def medcouple_by_definition(x):
    """Median of h(x_i, x_j) = ((x_i - m) - (m - x_j)) / (x_i - x_j) over x_i >= m >= x_j.

    For the k values tied at the median m, numbered a = 0..k-1 among the x_i (from the
    smallest) and b = 0..k-1 among the x_j (from the smallest), h = sign(a + b - (k - 1))
    (Brys, Hubert & Struyf 2004, definition 1 and its footnote on ties).
    """
    s = sorted(float(v) for v in x)
    n = len(s)
    m = s[n // 2] if n % 2 else (s[n // 2 - 1] + s[n // 2]) / 2
    upper = [v for v in s if v >= m]  # ascending; the tied values come first
    lower = [v for v in s if v <= m]  # ascending; the tied values come last
    k = sum(1 for v in s if v == m)
    first_tie_in_lower = len(lower) - k
    h = []
    for a, xi in enumerate(upper):
        for j, xj in enumerate(lower):
            if xi == m and xj == m:
                b = j - first_tie_in_lower
                h.append(float(np.sign(a + b - (k - 1))))
            else:
                h.append(((xi - m) - (m - xj)) / (xi - xj))
    return float(np.median(h))


# --- small worked examples ------------------------------------------------------------------

def test_hand_worked_example_with_right_skew():
    # x = 1, 2, 3, 5, 10, 11: m = 4, x_i in {5, 10, 11}, x_j in {1, 2, 3}; the nine kernel
    # values are -1/2, -1/3, 0, 1/3, 2/5, 1/2, 5/9, 5/7, 3/4, whose median is 2/5
    assert strayline.medcouple([1.0, 2.0, 3.0, 5.0, 10.0, 11.0]) == pytest.approx(0.4, abs=1e-15)


def test_hand_worked_example_with_a_value_at_the_median():
    # x = 1, 2, 3, 4, 10: m = 3 (one tie, h(3, 3) = sign(0) = 0); the kernel values are
    # -1, -1, -1/3, 0, 0, 5/9, 3/4, 1, 1, whose median is 0
    assert strayline.medcouple([1.0, 2.0, 3.0, 4.0, 10.0]) == 0.0
    assert medcouple_by_definition([1.0, 2.0, 3.0, 4.0, 10.0]) == 0.0


def test_hand_worked_example_with_three_ties():
    # x = 0, 1, 1, 1, 5: m = 1, k = 3 ties; upper = 1, 1, 1, 5 and lower = 0, 1, 1, 1.
    # h(1, 0) = (0 - 1)/1 = -1 for each tied x_i (3 values); the tied block
    # sign(a + b - 2), a, b = 0..2, gives -1, -1, 0, -1, 0, 1, 0, 1, 1;
    # h(5, 0) = ((5 - 1) - (1 - 0))/(5 - 0) = 3/5 and h(5, 1) = 4/4 = 1 (3 values). The 16
    # values are six -1, three 0, 3/5 and six 1: the 8th and 9th are both 0, so MC = 0
    x = [0.0, 1.0, 1.0, 1.0, 5.0]
    assert medcouple_by_definition(x) == 0.0
    assert strayline.medcouple(x) == 0.0
    # with one more high value: m = (1 + 1)/2 = 1, upper = 1, 1, 1, 5, 6, lower = 0, 1, 1, 1
    # adds h(6, 0) = (5 - 1)/6 = 2/3 and h(6, 1) = 1 (3 values): 20 values, six -1, three 0,
    # 3/5, 2/3 and nine 1; the 10th and 11th are 3/5 and 2/3, so MC = 19/30
    y = [0.0, 1.0, 1.0, 1.0, 5.0, 6.0]
    assert medcouple_by_definition(y) == pytest.approx(19 / 30, abs=1e-15)
    assert strayline.medcouple(y) == pytest.approx(19 / 30, abs=1e-15)


def test_symmetric_data_have_medcouple_zero():
    for x in ([-3.0, -1.0, 0.0, 1.0, 3.0], [-2.0, -2.0, 1.0, 1.0, 4.0, 4.0],
              [1.0, 2.0, 4.0, 8.0, 12.0, 14.0, 15.0]):
        assert strayline.medcouple(x) == 0.0


def test_bounds_and_sign():
    rng = np.random.default_rng(0)
    right = strayline.medcouple(rng.exponential(size=500))
    left = strayline.medcouple(-rng.exponential(size=500))
    assert 0.1 < right < 1 and -1 < left < -0.1
    # the median in a cluster of ties with the other values all on one side: m = 0 below
    # gives 12 pairs h(1, 0) = +1 and a tied block of 16 with six +1, four 0 and six -1,
    # so MC = +1; the mirror image gives -1
    assert strayline.medcouple([0.0, 0.0, 0.0, 0.0, 1.0, 1.0, 1.0]) == 1.0
    assert strayline.medcouple([0.0, 0.0, 0.0, 1.0, 1.0, 1.0, 1.0]) == -1.0


def test_missing_values_are_left_out():
    x = np.array([1.0, np.nan, 2.0, 3.0, 5.0, np.nan, 10.0, 11.0])
    assert strayline.medcouple(x) == strayline.medcouple(x[~np.isnan(x)])


# --- against the pairwise definition -------------------------------------------------------

@pytest.mark.parametrize("seed", range(6))
def test_random_data_against_both_pairwise_versions(seed):
    rng = np.random.default_rng(seed)
    for n in (2, 3, 4, 5, 10, 11, 50, 101):
        for x in (rng.lognormal(size=n), rng.integers(0, 5, n).astype(float),
                  np.round(rng.normal(size=n), 1)):
            ours = strayline.medcouple(x)
            assert ours == pytest.approx(medcouple_by_definition(x), abs=1e-12)
            assert ours == pytest.approx(statsmodels_pairwise(x), abs=1e-12)


tied = st.lists(st.integers(0, 4).map(float), min_size=1, max_size=60)
mixed = st.lists(st.one_of(st.integers(-3, 3).map(float),
                           st.floats(-100, 100, allow_nan=False, allow_subnormal=False)),
                 min_size=1, max_size=60)


@settings(max_examples=150, deadline=None)
@given(x=st.one_of(tied, mixed))
def test_equals_the_definition(x):
    assert strayline.medcouple(x) == pytest.approx(medcouple_by_definition(x), abs=1e-12)


@settings(max_examples=40, deadline=None)
@given(x=st.one_of(tied, mixed))
def test_sampling_path_equals_the_definition(x):
    # enumerate_limit=0 makes the selection sample and bracket even on a handful of pairs
    got = medcouple_sorted(np.sort(np.array(x)), enumerate_limit=0)
    assert got == pytest.approx(medcouple_by_definition(x), abs=1e-12)


@settings(max_examples=40, deadline=None)
@given(x=st.one_of(tied, mixed), limit=st.sampled_from([1, 7, 40, 300]))
def test_partial_enumeration_equals_the_definition(x, limit):
    got = medcouple_sorted(np.sort(np.array(x)), enumerate_limit=limit)
    assert got == pytest.approx(medcouple_by_definition(x), abs=1e-12)


@settings(max_examples=60, deadline=None)
@given(x=st.one_of(tied, mixed), shift=st.sampled_from([0.0, 3.5, -1e3]),
       scale=st.sampled_from([1.0, 0.125, 8.0]))
def test_shift_scale_and_reflection(x, shift, scale):
    # MC(a x + b) = sign(a) MC(x); with a a power of two and small shifts the map is exact
    x = np.array(x)
    y = scale * x + shift
    if np.unique(y).size != np.unique(x).size:
        return  # rounding merged two values: not the same data any more
    mc = strayline.medcouple(x)
    assert strayline.medcouple(y) == pytest.approx(mc, abs=1e-9)
    assert strayline.medcouple(-x) == pytest.approx(-mc, abs=1e-12)


@pytest.mark.parametrize("make", [
    lambda r: r.lognormal(0, 1, 3001),
    lambda r: r.integers(0, 30, 3000).astype(float),
    lambda r: np.concatenate([np.zeros(1500), r.exponential(size=1600)]),
], ids=["lognormal", "ties", "half-at-zero"])
def test_large_n_uses_selection_and_matches_statsmodels(make):
    # about 2.25 million pairs: more than the package lists at once, so it selects by sampling
    x = make(np.random.default_rng(1))
    assert strayline.medcouple(x) == pytest.approx(statsmodels_pairwise(x), abs=1e-12)


def test_extreme_magnitudes():
    # the medcouple is scale-free: values near the largest float or subnormal give the same
    x = np.array([-1.0, 0.2, 0.3, 0.35, 0.5, 0.9, 1.7, 1.9, -0.4, 0.45])
    mc = strayline.medcouple(x)
    assert mc == pytest.approx(statsmodels_pairwise(x), abs=1e-12)
    with np.errstate(over="raise", invalid="raise"):
        assert strayline.medcouple(np.ldexp(x, 1023)) == mc
        tiny = np.ldexp(x, -1040)  # subnormal: rounded to about 34 bits
        back = np.ldexp(tiny, 1040)  # exact
        assert strayline.medcouple(tiny) == pytest.approx(medcouple_by_definition(back),
                                                          abs=1e-12)


# --- the two selections: windowed cuts with a certificate, and the exact sampling rounds ---

MAKERS = {
    "lognormal": lambda r, n: r.lognormal(0, 1, n),
    "normal": lambda r, n: r.normal(size=n),
    "ties": lambda r, n: r.integers(0, 30, n).astype(float),
    "few-values": lambda r, n: r.integers(0, 4, n).astype(float),
    "rounded": lambda r, n: np.round(r.normal(size=n), 1),
    "half-at-zero": lambda r, n: np.concatenate([np.zeros(n // 2), r.exponential(size=n - n // 2)]),
}


@pytest.mark.parametrize("kind", sorted(MAKERS))
@pytest.mark.parametrize("n", [3000, 3001])
def test_windowed_selection_equals_the_exact_one_and_statsmodels(kind, n, monkeypatch):
    # 2.25 million pairs: more than are listed at once, so the windowed selection cuts rows
    s = np.sort(MAKERS[kind](np.random.default_rng(n), n))
    fast = medcouple_sorted(s)
    monkeypatch.setattr(medcouple_module, "_select_fast", lambda *a: None)
    exact = medcouple_sorted(s)
    assert fast == exact  # the same kernel value, to the last bit
    assert fast == pytest.approx(statsmodels_pairwise(s), abs=1e-12)


def test_a_rank_inside_a_block_of_equal_kernel_values_is_decided_by_exact_counts(monkeypatch):
    # integers 0..3: the kernel takes few values, so the middle rank sits inside a run of
    # equal values far longer than the window that may be listed
    s = np.sort(np.random.default_rng(5).integers(0, 4, 2999).astype(float))
    calls = []
    tied = medcouple_module._tied

    def spy(*a):
        calls.append(tied(*a))
        return calls[-1]

    monkeypatch.setattr(medcouple_module, "_tied", spy)
    got = medcouple_sorted(s, enumerate_limit=1000)
    assert calls and calls[0] is not None
    assert got == pytest.approx(statsmodels_pairwise(s), abs=1e-12)


def test_subnormal_magnitudes_leave_the_windowed_selection_to_the_exact_one():
    # the windowed cuts rely on relative rounding bounds that subnormal values do not have
    x = np.random.default_rng(2).lognormal(size=1501)
    tiny = np.sort(np.ldexp(x, -1060))
    assert medcouple_module._select_fast(tiny[tiny > np.median(tiny)], np.sort(-tiny[:10]), 0, 3, 3,
                                         1 << 20) is None
    back = np.ldexp(tiny, 1060)  # exact: rounding happened on the way down only
    assert medcouple_sorted(tiny) == pytest.approx(statsmodels_pairwise(back), abs=1e-12)
