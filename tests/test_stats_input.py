"""What the statistics functions accept, what they refuse, and how they treat extreme values.

Every refusal is checked for its exception type and for a fragment of its message that tells the
user what is wrong. Accepted inputs (pandas nullable dtypes, booleans, object arrays of numbers)
are checked against the same computation on plain float arrays.
"""

from __future__ import annotations

import datetime

import numpy as np
import pandas as pd
import pytest
from scipy import stats

import strayline
from strayline.stats import _input

# Entry points that read one column of data, each with the arguments it needs.
READERS = {
    "zscores": strayline.zscores,
    "robust_zscores": strayline.robust_zscores,
    "fences": strayline.fences,
    "adjusted_fences": strayline.adjusted_fences,
    "grubbs": strayline.grubbs,
    "gesd": lambda x: strayline.gesd(x, 1),
    "flag": strayline.flag,
    "qq": strayline.qq,
    "normality": strayline.normality,
    "medcouple": strayline.medcouple,
    "transform": lambda x: strayline.transform(x, "yeojohnson"),
}


@pytest.fixture(params=sorted(READERS))
def reader(request):
    return READERS[request.param]


# --- refused types ------------------------------------------------------------------------

def test_strings_are_refused(reader):
    with pytest.raises(TypeError, match=r"not numeric .*5 value\(s\) are not numbers"):
        reader(["a", "b", "c", "d", "e"])


def test_numeric_strings_are_refused_with_a_conversion_hint(reader):
    with pytest.raises(TypeError, match=r"pd\.to_numeric\(s, errors='coerce'\)"):
        reader(pd.Series(["1.5", "2", "3", "4", "5"], name="assay"))


def test_string_message_names_the_column(reader):
    with pytest.raises(TypeError, match=r"column 'assay' is not numeric"):
        reader(pd.Series(["x", "y", "z", "w"], name="assay"))


def test_mixed_numbers_and_strings_count_only_the_strings(reader):
    # one bad value among numbers: the message counts one and shows it
    with pytest.raises(TypeError, match=r"1 value\(s\) are not numbers, such as 'n/a'"):
        reader(pd.Series([1.0, 2.5, "n/a", 4.0, 5.0]))


def test_mixed_list_counts_only_the_strings(reader):
    # the same as a plain list, which numpy alone would turn into an array of strings
    with pytest.raises(TypeError, match=r"1 value\(s\) are not numbers, such as 'n/a'"):
        reader([1.0, 2.5, "n/a", 4.0, 5.0])


@pytest.mark.parametrize("data", [
    pd.Series(pd.date_range("2024-01-01", periods=6)),
    pd.Series(pd.date_range("2024-01-01", periods=6, tz="UTC")),
    np.array(["2024-01-01", "2024-01-02", "2024-01-03", "2024-01-04"], dtype="datetime64[D]"),
    pd.Series(pd.to_timedelta([1, 2, 3, 4, 5], unit="s")),
], ids=["datetime", "datetime-tz", "numpy-datetime", "timedelta"])
def test_dates_and_durations_are_refused(reader, data):
    with pytest.raises(TypeError, match=r"holds dates or durations .*convert to numbers first"):
        reader(data)


def test_python_dates_are_refused(reader):
    days = [datetime.date(2024, 1, d) for d in range(1, 7)]
    with pytest.raises(TypeError, match=r"not numeric \(date\)"):
        reader(days)


def test_categorical_is_refused(reader):
    with pytest.raises(TypeError, match=r"is categorical; .*s\.astype\(float\)"):
        reader(pd.Series([1.0, 2.0, 3.0, 2.0, 1.0], dtype="category"))


@pytest.mark.parametrize("data", [
    np.array([1 + 1j, 2.0, 3.0, 4.0, 5.0]),
    pd.Series(np.array([1 + 1j, 2.0, 3.0, 4.0, 5.0])),
], ids=["array", "series"])
def test_complex_is_refused(reader, data):
    with pytest.raises(TypeError, match=r"is complex; screen its real part, modulus or phase"):
        reader(data)


def test_dataframe_is_refused(reader):
    df = pd.DataFrame({"a": [1.0, 2.0, 3.0, 4.0], "b": [1.0, 2.0, 3.0, 4.0]})
    with pytest.raises(TypeError, match=r"got a DataFrame with 2 columns; pass df\[column\]"):
        reader(df)


def test_scalar_is_refused(reader):
    with pytest.raises(TypeError, match=r"one-dimensional array of numbers, got a scalar"):
        reader(3.0)


def test_two_dimensional_is_refused(reader):
    with pytest.raises(ValueError, match=r"one-dimensional array, got shape \(3, 4\)"):
        reader(np.arange(12.0).reshape(3, 4))


# --- missing, empty, infinite ---------------------------------------------------------------

@pytest.mark.parametrize("data", [[], np.array([], dtype=float), pd.Series([], dtype=float)],
                         ids=["list", "array", "series"])
def test_empty_input_is_refused(reader, data):
    with pytest.raises(ValueError, match=r"needs data, but there are no non-missing values"):
        reader(data)


@pytest.mark.parametrize("data", [
    [np.nan] * 6,
    [None] * 6,
    pd.Series([pd.NA] * 6, dtype="Float64"),
    pd.Series([pd.NA] * 6, dtype="Int64"),
], ids=["nan", "none", "Float64", "Int64"])
def test_all_missing_is_refused(reader, data):
    with pytest.raises(ValueError, match=r"no non-missing values"):
        reader(data)


@pytest.mark.parametrize("bad", [np.inf, -np.inf])
def test_infinite_values_are_refused(reader, bad):
    data = [1.0, 2.0, 3.0, bad, 4.0, 5.0, bad]
    with pytest.raises(ValueError, match=r"holds 2 infinite value\(s\); replace them with NaN"):
        reader(data)


def test_infinite_message_names_the_column():
    with pytest.raises(ValueError, match=r"column 'flow' holds 1 infinite value"):
        strayline.zscores(pd.Series([1.0, 2.0, np.inf, 3.0], name="flow"))


@pytest.mark.parametrize("call, needed, what", [
    (strayline.zscores, 3, "the z-score rule"),
    (strayline.robust_zscores, 3, "the robust z-score rule"),
    (strayline.fences, 4, "the fence rule"),
    (strayline.adjusted_fences, 4, "the fence rule"),
    (strayline.grubbs, 3, "Grubbs' test"),
    (lambda x: strayline.gesd(x, 1), 3, "the generalized ESD test"),
    (strayline.qq, 3, "a Q–Q plot"),
    (strayline.normality, 3, "normality diagnostics"),
    (lambda x: strayline.transform(x, "boxcox"), 3, "fitting Box–Cox λ"),
    (lambda x: strayline.transform(x, "yeojohnson"), 3, "fitting Yeo–Johnson λ"),
    (lambda x: strayline.flag(x, "zscore"), 3, "the z-score rule"),
    (lambda x: strayline.flag(x, "fences"), 4, "the fence rule"),
    (lambda x: strayline.flag(x, "grubbs"), 3, "Grubbs' test"),
])
def test_too_few_values_names_how_many(call, needed, what):
    # NaN does not count: needed - 1 present values among several missing ones
    data = [float(v) for v in range(1, needed)] + [np.nan, np.nan]
    with pytest.raises(ValueError, match=rf"{what} needs at least {needed} non-missing "
                                         rf"values, got {needed - 1}"):
        call(data)


def test_medcouple_of_one_value_is_zero():
    # a single value is its own median: the one pair is tied, h = sign(0 + 0 - 0) = 0
    assert strayline.medcouple([4.2]) == 0.0


@pytest.mark.parametrize("call, fragment", [
    (strayline.zscores, r"all values are equal \(SD is zero\)"),
    (strayline.grubbs, r"all values are equal \(SD is zero\)"),
    (lambda x: strayline.gesd(x, 2), r"all values are equal \(SD is zero\)"),
    (lambda x: strayline.flag(x, "zscore"), r"all values are equal \(SD is zero\)"),
    (strayline.fences, r"the interquartile range is zero"),
    (strayline.adjusted_fences, r"the interquartile range is zero"),
    (lambda x: strayline.flag(x, "fences"), r"the interquartile range is zero"),
    (strayline.robust_zscores, r"the MAD is zero"),
    (lambda x: strayline.flag(x, "robust_z"), r"the MAD is zero"),
    (strayline.normality, r"values that are not all equal"),
    (lambda x: strayline.transform(x, "boxcox"), r"Box–Cox λ cannot be fitted: all values"),
    (lambda x: strayline.transform(x, "yeojohnson"), r"Yeo–Johnson λ cannot be fitted"),
])
def test_constant_column_is_refused(call, fragment):
    with pytest.raises(ValueError, match=fragment):
        call([2.5] * 8 + [np.nan])


def test_scale_refusals_when_only_half_the_values_are_equal():
    # IQR and MAD are zero when more than half the values are equal, though the SD is not
    data = [3.0] * 6 + [1.0, 9.0, 4.0]
    with pytest.raises(ValueError, match=r"the MAD is zero \(at least half the values"):
        strayline.robust_zscores(data)
    with pytest.raises(ValueError, match=r"interquartile range is zero"):
        strayline.fences(data)
    z = strayline.zscores(data)  # the classical rule still works, as the messages suggest
    np.testing.assert_allclose(z, stats.zscore(data, ddof=1), rtol=1e-13)


# --- accepted types give the numbers of the float equivalent -------------------------------

def _all_outputs(x):
    """Everything the rules compute from one column, as plain floats and masks."""
    out = {
        "z": np.asarray(strayline.zscores(x), dtype=float),
        "robust_z": np.asarray(strayline.robust_zscores(x), dtype=float),
        "fences": (strayline.fences(x).lower, strayline.fences(x).upper),
        "adjusted": (strayline.adjusted_fences(x).lower, strayline.adjusted_fences(x).upper),
        "grubbs": strayline.grubbs(x).statistic,
        "gesd": tuple(strayline.gesd(x, 2).statistics),
        "qq_r": strayline.qq(x).r,
        "mc": strayline.medcouple(x),
        "skew": strayline.normality(x).skewness,
    }
    for rule in ("zscore", "robust_z", "fences", "adjusted_fences", "grubbs"):
        f = strayline.flag(x, rule)
        out[rule + "_mask"] = np.asarray(f.mask, dtype=bool)
        out[rule + "_scores"] = np.asarray(f.scores, dtype=float)
    return out


def _assert_same(a, b):
    assert a.keys() == b.keys()
    for key in a:
        np.testing.assert_array_equal(np.asarray(a[key]), np.asarray(b[key]), err_msg=key)


FLOATS = [3.0, 7.0, np.nan, 4.0, 5.0, 41.0, 6.0, 5.0, np.nan, 2.0, 8.0, 1.0]


@pytest.mark.parametrize("dtype", ["Int64", "Int32", "UInt16"])
def test_nullable_integers_give_the_float_numbers(dtype):
    ints = pd.Series([pd.NA if np.isnan(v) else int(v) for v in FLOATS], dtype=dtype)
    _assert_same(_all_outputs(ints), _all_outputs(np.array(FLOATS)))


def test_nullable_float_with_na_gives_the_float_numbers():
    nullable = pd.Series([pd.NA if np.isnan(v) else v for v in FLOATS], dtype="Float64")
    _assert_same(_all_outputs(nullable), _all_outputs(np.array(FLOATS)))


def test_object_array_with_none_gives_the_float_numbers():
    objects = np.array([None if np.isnan(v) else v for v in FLOATS], dtype=object)
    _assert_same(_all_outputs(objects), _all_outputs(np.array(FLOATS)))


def test_plain_integers_give_the_float_numbers():
    ints = np.array([3, 7, 4, 5, 41, 6, 5, 2, 8, 1], dtype=np.int16)
    _assert_same(_all_outputs(ints), _all_outputs(ints.astype(float)))


@pytest.mark.parametrize("make", [
    lambda b: np.array(b, dtype=bool),
    lambda b: pd.Series(b, dtype=bool),
    lambda b: pd.Series(b, dtype="boolean"),
], ids=["numpy", "series", "nullable"])
def test_booleans_count_as_zero_and_one(make):
    flags = [True, False, False, True, False, False, False, True, False, False]
    as_float = np.array(flags, dtype=float)
    z = np.asarray(strayline.zscores(make(flags)), dtype=float)
    np.testing.assert_array_equal(z, np.asarray(strayline.zscores(as_float)))
    # and these agree with scipy's z-score with ddof = 1
    np.testing.assert_allclose(z, stats.zscore(as_float, ddof=1), rtol=1e-13)


def test_nullable_boolean_with_na():
    b = pd.Series([True, pd.NA, False, False, True, False, True], dtype="boolean")
    z = strayline.zscores(b)
    expected = np.array([1.0, np.nan, 0.0, 0.0, 1.0, 0.0, 1.0])
    np.testing.assert_array_equal(z.to_numpy(), strayline.zscores(expected))
    assert np.isnan(z.iloc[1])


def test_input_is_never_modified():
    s = pd.Series([5.0, np.nan, 1.0, 3.0, 9.0, 2.0, 4.0], index=list("abcdefg"), name="v")
    keep = s.copy()
    arr = np.array([5.0, np.nan, 1.0, 3.0, 9.0, 2.0, 4.0])
    keep_arr = arr.copy()
    for x in (s, arr):
        strayline.zscores(x)
        strayline.robust_zscores(x)
        strayline.flag(x, "adjusted_fences")
        strayline.qq(x)
        strayline.transform(x, "boxcox")
        same = strayline.transform(x, "none").values
        assert not np.shares_memory(np.asarray(same), np.asarray(x))
    pd.testing.assert_series_equal(s, keep)
    np.testing.assert_array_equal(arr, keep_arr)


# --- extreme magnitudes ---------------------------------------------------------------------

def _z_reference(y):
    y = np.asarray(y, dtype=float)
    return (y - y.mean()) / y.std(ddof=1)


def _robust_reference(y):
    # Iglewicz & Hoaglin (1993): M = 0.6745 (x - median) / MAD, with 0.6745 = Phi^{-1}(3/4)
    y = np.asarray(y, dtype=float)
    med = np.median(y)
    return stats.norm.ppf(0.75) * (y - med) / np.median(np.abs(y - med))


# Mostly large positive values and two negative ones: at the top of the float range the
# distance of the negative values from the mean exceeds the largest float.
BASE = np.array([-1.9, 0.7, 1.2, 1.6, 1.8, 1.86, 1.9, 1.5, 1.1, 1.95, -0.8, 1.75])
OVERFLOW = {"over": "raise", "invalid": "raise", "divide": "raise"}


@pytest.mark.parametrize("scale_exp", [1023, 1020, -1022, -1030, -1060])
def test_z_scores_at_the_ends_of_the_float_range(scale_exp):
    # values up to 1.75e308, or near 1e-308 and below (subnormal). Scaling by a power of two
    # back up is exact, so the reference is the plain computation on x * 2**-scale_exp.
    x = np.ldexp(BASE, scale_exp)
    assert np.all(np.isfinite(x)) and np.all(x != 0)
    back = np.ldexp(x, -scale_exp)
    np.testing.assert_array_equal(np.ldexp(back, scale_exp), x)
    with np.errstate(**OVERFLOW):
        z = strayline.zscores(x)
        rz = strayline.robust_zscores(x)
        fz = strayline.flag(x, "zscore").scores
        frz = strayline.flag(x, "robust_z").scores
        g = strayline.grubbs(x).statistic
    for got, ref in ((z, _z_reference(back)), (rz, _robust_reference(back))):
        assert np.all(np.isfinite(got))
        np.testing.assert_allclose(got, ref, rtol=1e-12, atol=1e-12)
    # flag() reports its centre and scale on the data's scale; deep in the subnormal range
    # (2**-1060, about 1e-319) a float there holds only about 16 significant bits
    tol = 1e-12 if scale_exp > -1040 else 1e-4
    for got, ref in ((fz, _z_reference(back)), (frz, _robust_reference(back))):
        assert np.all(np.isfinite(got))
        np.testing.assert_allclose(got, ref, rtol=tol, atol=tol)
    assert g == pytest.approx(np.max(np.abs(_z_reference(back))), rel=1e-12)


@pytest.mark.parametrize("x", [
    np.array([1.7e308, 1.6e308, 1.75e308, 1.65e308, 1.72e308, 1.0e308, 1.69e308, 1.71e308]),
    np.array([2.3e-308, 2.5e-308, 2.2e-308, 2.45e-308, 9.9e-308, 2.4e-308, 2.35e-308]),
    np.array([1e-310, 3e-310, 2e-310, 2.5e-310, 8e-310, 2.2e-310, 2.7e-310]),
], ids=["near-max", "near-min-normal", "subnormal"])
def test_z_scores_of_same_signed_extreme_values(x):
    # compared with the same computation on the values scaled exactly by a power of two
    e = int(np.frexp(np.max(np.abs(x)))[1])
    scaled = np.ldexp(x, -e)
    np.testing.assert_array_equal(np.ldexp(scaled, e), x)  # the scaling is exact
    with np.errstate(**OVERFLOW):
        np.testing.assert_allclose(strayline.zscores(x), _z_reference(scaled), rtol=1e-12,
                                   atol=1e-12)
        np.testing.assert_allclose(strayline.robust_zscores(x), _robust_reference(scaled),
                                   rtol=1e-12, atol=1e-12)
        for rule in ("zscore", "robust_z", "fences", "adjusted_fences", "grubbs"):
            np.testing.assert_array_equal(strayline.flag(x, rule).mask,
                                          strayline.flag(scaled, rule).mask, err_msg=rule)


def test_scale_exponent_scaling_is_exact():
    for v in (1.7e308, 1e-308, 5e-324, 3.0, -2.5e-300):
        x = np.array([v, v / 3])
        e = _input.scale_exponent(x)
        y = np.ldexp(x, -e)
        assert 0.5 <= np.max(np.abs(y)) < 1.0
        np.testing.assert_array_equal(np.ldexp(y, e), x)
