"""Bad input, faults and hostile data, through the Screen, the Ledger and the Panel.

Each case of the matrix either is refused with an exact error type and a message fragment, or
gives an exact mask. The reference mask is Tukey's fences (k = 1.5, common practice) computed
with numpy.quantile (default linear interpolation) on the column as floats, NaN never flagged.
The panel is driven headless: ``strayline.panel(df, mask="m", namespace={})``.

Decisions taken here (what a careful analyst would expect):
- A column that the rule cannot be fitted to (no rows, one row, all NaN, all values equal)
  does not make the screen unusable: the Screen and the Panel open, the column contributes
  nothing to the mask, and the reason is visible (Summary.error / the evaluation's bounds
  error, the panel's summary or status). A ledger applied to such a batch gives the same mask
  and a LedgerWarning that names the column.
- Infinite values are refused everywhere (Screen, Ledger.apply, Panel): no rule can place them.
- Text, mixed text and numbers, categoricals, dates and durations are refused when named and
  left out when the columns are chosen by default; booleans are left out by default and
  screened as 0/1 when named; nullable Int64 / Float64 are screened with pd.NA as missing.
- Duplicate column names are left out by default and refused by name when asked for.
"""

from __future__ import annotations

import json
import re
import warnings
from collections.abc import Callable
from contextlib import contextmanager
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
import pytest
from scipy import stats

import strayline
from strayline import Ledger, LedgerError, LedgerWarning

# --- the user's frame is never modified -----------------------------------------------------


@contextmanager
def no_ledger_warning():
    with warnings.catch_warnings():
        warnings.simplefilter("error", LedgerWarning)
        yield


# --- references and data -------------------------------------------------------------------------

N = 60


def as_float(s: pd.Series) -> np.ndarray:
    return s.astype("float64").to_numpy()


def tukey_flags(values: np.ndarray, k: float = 1.5) -> np.ndarray:
    """Tukey's fences with numpy's default quantiles; NaN is never flagged."""
    v = values[~np.isnan(values)]
    if v.size == 0:
        return np.zeros(values.size, dtype=bool)
    q1, q3 = np.quantile(v, [0.25, 0.75])
    with np.errstate(invalid="ignore"):
        return (values < q1 - k * (q3 - q1)) | (values > q3 + k * (q3 - q1))


def fences_of(*names: Any) -> Callable[[pd.DataFrame], np.ndarray]:
    def expected(df: pd.DataFrame) -> np.ndarray:
        out = np.zeros(len(df), dtype=bool)
        for name in names:
            out |= tukey_flags(as_float(df[name]))
        return out

    return expected


def nothing(df: pd.DataFrame) -> np.ndarray:
    return np.zeros(len(df), dtype=bool)


def good(seed: int = 0, n: int = N, loc: float = 50.0, sd: float = 4.0) -> np.ndarray:
    """Normal readings with two gross errors."""
    v = np.random.default_rng(seed).normal(loc, sd, n)
    v[[3, 17]] = [loc + 10 * sd, loc - 9 * sd]
    return v


@dataclass(frozen=True)
class Refused:
    exc: type | tuple[type, ...]
    match: str


@dataclass(frozen=True)
class Gives:
    expected: Callable[[pd.DataFrame], np.ndarray]
    shows: str | None = None  # text that must be visible (reason a column is not screened)
    warn: str | None = None  # for a ledger: a LedgerWarning must name this


@dataclass(frozen=True)
class Case:
    make: Callable[[], pd.DataFrame]
    screen: Refused | Gives
    ledger: Refused | Gives
    panel: Refused | Gives
    columns: Any = None
    template: Callable[[], pd.DataFrame] | None = None  # the data the ledger was made on


def frame(**cols: Any) -> Callable[[], pd.DataFrame]:
    return lambda: pd.DataFrame(cols)


def good_frame(*names: Any) -> Callable[[], pd.DataFrame]:
    return lambda: pd.DataFrame({name: good(i) for i, name in enumerate(names)})


def with_inf(value: float, count: int) -> Callable[[], pd.DataFrame]:
    def make() -> pd.DataFrame:
        v = good(1)
        v[5:5 + count] = value
        return pd.DataFrame({"turbidity": v})

    return make


def scaled(exponent: int, positive: bool) -> Callable[[], pd.DataFrame]:
    def make() -> pd.DataFrame:
        x = good(2, loc=0.0, sd=1.0)
        return pd.DataFrame({"turbidity": np.ldexp(np.abs(x) + 1 if positive else x, exponent)})

    return make


def two_values() -> pd.DataFrame:
    rng = np.random.default_rng(3)
    return pd.DataFrame({"turbidity": rng.permutation(np.r_[np.ones(30), np.full(30, 2.0)])})


def nullable(dtype: str) -> Callable[[], pd.DataFrame]:
    def make() -> pd.DataFrame:
        rng = np.random.default_rng(4)
        v = rng.poisson(40, N).astype(object)
        v[[3, 17]] = [140, 2]
        v[rng.random(N) < 0.15] = None
        return pd.DataFrame({"count": pd.array(v, dtype=dtype)})

    return make


def mixed() -> pd.DataFrame:
    v = good(5).astype(object)
    v[11] = "n/a"
    return pd.DataFrame({"reading": pd.Series(v, dtype=object)})


def strings(dtype: Any) -> Callable[[], pd.DataFrame]:
    return lambda: pd.DataFrame({"probe": pd.Series([f"P-{i % 7}" for i in range(N)],
                                                    dtype=dtype), "turbidity": good(6)})


def categorical() -> pd.DataFrame:
    rng = np.random.default_rng(7)
    return pd.DataFrame({"grade": pd.Categorical(rng.choice([1, 2, 3], N)),
                         "turbidity": good(7)})


def dates() -> pd.DataFrame:
    return pd.DataFrame({"taken": pd.date_range("2025-05-01", periods=N, freq="h"),
                         "duration": pd.to_timedelta(np.arange(N), unit="s"),
                         "turbidity": good(8)})


def booleans() -> pd.DataFrame:
    rng = np.random.default_rng(9)
    return pd.DataFrame({"valve_open": rng.permutation(np.r_[np.ones(30, bool),
                                                             np.zeros(30, bool)]),
                         "turbidity": good(9)})


def repeated_names(*names: str) -> Callable[[], pd.DataFrame]:
    return lambda: pd.DataFrame(np.column_stack([good(i) for i in range(len(names))]),
                                columns=list(names))


def indexed(kind: str) -> Callable[[], pd.DataFrame]:
    def make() -> pd.DataFrame:
        rng = np.random.default_rng(10)
        index = {
            "duplicate": pd.Index([f"lot{i}" for i in rng.integers(0, 15, N)]),
            "multi": pd.MultiIndex.from_arrays([rng.choice(["a", "b"], N), rng.permutation(N)]),
            "datetime": pd.date_range("2025-01-01", periods=N, freq="15min"),
            "unsorted": pd.Index(rng.permutation(N) * 10),
            "unsorted_datetime": pd.DatetimeIndex(pd.date_range(
                "2025-01-01", periods=N, freq="D")[rng.permutation(N)]),
        }[kind]
        return pd.DataFrame({"turbidity": good(10), "oxygen": good(11, loc=9.0, sd=0.5)},
                            index=index)

    return make


T = fences_of("turbidity")
CASES: dict[str, Case] = {
    "empty frame": Case(
        frame(turbidity=pd.Series([], dtype="float64")),
        Gives(nothing, shows="no values"), Gives(nothing, warn="turbidity"),
        Gives(nothing, shows="no values"), template=good_frame("turbidity")),
    "one row": Case(
        frame(turbidity=[12.5]),
        Gives(nothing, shows="at least 4"), Gives(nothing, warn="turbidity"),
        Gives(nothing, shows="at least 4"), template=good_frame("turbidity")),
    "all NaN": Case(
        frame(turbidity=np.full(N, np.nan), oxygen=good(12, loc=9.0, sd=0.5)),
        Gives(fences_of("oxygen"), shows="no values"),
        Gives(fences_of("oxygen"), warn="turbidity"),
        Gives(fences_of("oxygen"), shows="no values"),
        template=good_frame("turbidity", "oxygen")),
    "all equal": Case(
        frame(turbidity=np.full(N, 7.25)),
        Gives(nothing, shows="interquartile range is zero"), Gives(nothing, warn="turbidity"),
        Gives(nothing, shows="interquartile range is zero"), template=good_frame("turbidity")),
    "two distinct values": Case(two_values, Gives(T), Gives(T), Gives(T)),
    "+inf": Case(with_inf(np.inf, 1), Refused(ValueError, "holds 1 infinite value"),
                 Refused(ValueError, "infinite"), Refused(ValueError, "holds 1 infinite value"),
                 template=good_frame("turbidity")),
    "-inf": Case(with_inf(-np.inf, 2), Refused(ValueError, "holds 2 infinite value"),
                 Refused(ValueError, "infinite"), Refused(ValueError, "holds 2 infinite value"),
                 template=good_frame("turbidity")),
    "near 1e308": Case(scaled(1020, False), Gives(T), Gives(T), Gives(T)),
    "near 1e-308": Case(scaled(-1021, True), Gives(T), Gives(T), Gives(T)),
    "text left out by default": Case(strings("str"), Gives(T), Gives(T), Gives(T)),
    "text column named": Case(
        strings(object), Refused(TypeError, "column 'probe' is not numeric"),
        Refused(TypeError, "column 'probe' is not numeric"),
        Refused(TypeError, "column 'probe' is not numeric"), columns="probe",
        template=good_frame("probe")),
    "numbers and text": Case(
        mixed, Refused(TypeError, "1 value(s) are not numbers, such as 'n/a'"),
        Refused(TypeError, "such as 'n/a'"),
        Refused(TypeError, "1 value(s) are not numbers, such as 'n/a'"),
        template=good_frame("reading"), columns="reading"),
    "booleans left out by default": Case(booleans, Gives(T), Gives(T), Gives(T)),
    "booleans named (as 0/1)": Case(booleans, Gives(fences_of("valve_open")),
                                    Gives(fences_of("valve_open")),
                                    Gives(fences_of("valve_open")), columns="valve_open"),
    "Int64 with pd.NA": Case(nullable("Int64"), Gives(fences_of("count")),
                             Gives(fences_of("count")), Gives(fences_of("count"))),
    "Float64 with pd.NA": Case(nullable("Float64"), Gives(fences_of("count")),
                               Gives(fences_of("count")), Gives(fences_of("count"))),
    "categorical left out by default": Case(categorical, Gives(T), Gives(T), Gives(T)),
    "categorical named": Case(
        categorical, Refused(TypeError, "is categorical"), Refused(TypeError, "is categorical"),
        Refused(TypeError, "is categorical"), columns="grade", template=good_frame("grade")),
    "dates left out by default": Case(dates, Gives(T), Gives(T), Gives(T)),
    "datetime named": Case(
        dates, Refused(TypeError, "holds dates or durations"),
        Refused(TypeError, "holds dates or durations"),
        Refused(TypeError, "holds dates or durations"), columns="taken",
        template=good_frame("taken")),
    "timedelta named": Case(
        dates, Refused(TypeError, "holds dates or durations"),
        Refused(TypeError, "holds dates or durations"),
        Refused(TypeError, "holds dates or durations"), columns="duration",
        template=good_frame("duration")),
    "integer column names": Case(good_frame(0, 1), Gives(fences_of(0, 1)),
                                 Gives(fences_of(0, 1)), Gives(fences_of(0, 1))),
    "tuple column names": Case(
        lambda: pd.DataFrame({("turbidity", "NTU"): good(13), ("oxygen", "mg/l"): good(14)}),
        Gives(fences_of(("turbidity", "NTU"), ("oxygen", "mg/l"))),
        Gives(fences_of(("turbidity", "NTU"), ("oxygen", "mg/l"))),
        Gives(fences_of(("turbidity", "NTU"), ("oxygen", "mg/l")))),
    "repeated names left out by default": Case(
        repeated_names("turbidity", "turbidity", "oxygen"), Gives(fences_of("oxygen")),
        Gives(fences_of("oxygen")), Gives(fences_of("oxygen"))),
    "repeated name asked for": Case(
        repeated_names("turbidity", "turbidity", "oxygen"),
        Refused(ValueError, "'turbidity' appears more than once"),
        Refused(ValueError, "more than once"),
        Refused(ValueError, "'turbidity' appears more than once"), columns="turbidity",
        template=good_frame("turbidity")),
    "only repeated names": Case(
        repeated_names("turbidity", "turbidity"), Refused(ValueError, "more than once"),
        Refused(ValueError, "more than once"), Refused(ValueError, "more than once"),
        template=good_frame("turbidity")),
    **{f"index: {kind}": Case(indexed(kind), Gives(fences_of("turbidity", "oxygen")),
                              Gives(fences_of("turbidity", "oxygen")),
                              Gives(fences_of("turbidity", "oxygen")))
       for kind in ("duplicate", "multi", "datetime", "unsorted", "unsorted_datetime")},
}


def cases(surface: str) -> list:
    out = []
    for name, case in CASES.items():
        out.append(pytest.param(case, id=name))
    return out


def screened_columns(case: Case, df: pd.DataFrame) -> list:
    if case.columns is None:
        return list(strayline.Screen(df).columns)
    return [case.columns]


# --- the matrix: Screen ----------------------------------------------------------------------


@pytest.mark.parametrize("case", cases("screen"))
def test_matrix_screen(case: Case, hold) -> None:
    df = hold(case.make())
    if isinstance(case.screen, Refused):
        with pytest.raises(case.screen.exc, match=re.escape(case.screen.match)):
            strayline.Screen(df, columns=case.columns)
        return
    s = strayline.Screen(df, columns=case.columns)
    m = s.mask
    assert m.dtype == bool and m.index.equals(df.index)
    np.testing.assert_array_equal(m.to_numpy(), case.screen.expected(df))
    # every other operation works too
    shown = []
    for c in s.columns:
        sm = s.summary(c)
        shown += [sm.error, s.evaluation(c).bounds.error]
        s.rows(c, which="all")
        s.histogram(c)
        s.box(c)
        s.qq_coordinates(c)
        assert len(s.states(c)) == len(df)
    json.loads(s.ledger.to_json())
    if case.screen.shows:
        assert any(case.screen.shows in text for text in shown), shown
    # hand decisions on rows with a value reach the mask; rows without one never do
    if len(df):
        c = s.columns[0]
        s.mark_positions(np.arange(len(df)), c)
        present = ~np.isnan(s.raw(c))
        np.testing.assert_array_equal(s.mask.to_numpy(), case.screen.expected(df) | present)
        s.undo()
        np.testing.assert_array_equal(s.mask.to_numpy(), case.screen.expected(df))


# --- the matrix: Ledger ----------------------------------------------------------------------


@pytest.mark.parametrize("case", cases("ledger"))
def test_matrix_ledger(case: Case, hold) -> None:
    df = hold(case.make())
    template = hold((case.template or case.make)())
    made_on = strayline.Screen(template, columns=case.columns)
    ledger = Ledger.from_dict(json.loads(made_on.ledger.to_json()))
    if isinstance(case.ledger, Refused):
        with pytest.raises(case.ledger.exc, match=re.escape(case.ledger.match)):
            ledger.apply(df)
        return
    if case.ledger.warn:
        with pytest.warns(LedgerWarning, match=re.escape(case.ledger.warn)):
            m = ledger.apply(df)
    else:
        with no_ledger_warning():
            m = ledger.apply(df)
    assert m.dtype == bool and m.index.equals(df.index) and m.name == "suspect"
    np.testing.assert_array_equal(m.to_numpy(), case.ledger.expected(df))


@pytest.mark.parametrize("name", ["empty frame", "one row", "all NaN", "all equal"])
def test_frozen_bounds_apply_to_any_batch(name: str, hold) -> None:
    case = CASES[name]
    df, template = hold(case.make()), hold(case.template())
    ledger = strayline.Screen(template).ledger
    with no_ledger_warning():
        m = ledger.apply(df, refit=False)
    expected = np.zeros(len(df), dtype=bool)
    for c in template.columns:
        t = as_float(template[c])
        q1, q3 = np.quantile(t, [0.25, 0.75])
        v = as_float(df[c])
        with np.errstate(invalid="ignore"):
            expected |= (v < q1 - 1.5 * (q3 - q1)) | (v > q3 + 1.5 * (q3 - q1))
    np.testing.assert_array_equal(m.to_numpy(), expected)


# --- the matrix: Panel -------------------------------------------------------------------------


def visible(p) -> str:
    return " ".join([p.summary_html.value, p.status.value, p.last_error, p.table.error])


@pytest.mark.parametrize("case", cases("panel"))
def test_matrix_panel(case: Case, hold) -> None:
    df = hold(case.make())
    ns: dict = {}
    if isinstance(case.panel, Refused):
        with pytest.raises(case.panel.exc, match=re.escape(case.panel.match)):
            strayline.panel(df, columns=case.columns, mask="m", namespace=ns)
        assert ns == {}
        return
    p = strayline.panel(df, columns=case.columns, mask="m", namespace=ns)
    expected = case.panel.expected(df)
    assert p.last_error == ""
    np.testing.assert_array_equal(p.mask.to_numpy(), expected)
    assert p.mask.index.equals(df.index)
    pd.testing.assert_series_equal(ns["m"], p.mask)
    if case.panel.shows:
        assert case.panel.shows in visible(p), visible(p)
    # a brush over the whole plot marks every row with a value in the current column
    present = ~np.isnan(p.screen.raw())
    if present.any():
        y = p.screen.values()[present]
        lo, hi = float(y.min()), float(y.max())
        pad = (hi - lo) * 0.1 or 1.0
        p.brush(-9.0, 9.0, lo - pad, hi + pad, "add")
        assert p.last_error == ""
        np.testing.assert_array_equal(ns["m"].to_numpy(), expected | present)
        p.undo_button.click()
        np.testing.assert_array_equal(ns["m"].to_numpy(), expected)
    # looking at every column works
    for c in p.screen.columns:
        p.column_select.value = c
        assert p.last_error == "", p.last_error


# --- transformations outside their domain --------------------------------------------------


def positive(seed: int = 20, n: int = 80) -> np.ndarray:
    return np.random.default_rng(seed).lognormal(1.0, 0.5, n)


def spoiled(zeros: int, negatives: int) -> np.ndarray:
    v = positive()
    v[:zeros] = 0.0
    v[zeros:zeros + negatives] = -np.arange(1.0, negatives + 1)
    v[70] = np.nan
    return v


DOMAIN = [
    ("log", spoiled(3, 0), ["the log transformation", "3 value(s) are not", "Yeo–Johnson",
                            "offset"]),
    ("log", spoiled(1, 4), ["the log transformation", "5 value(s) are not", "Yeo–Johnson",
                            "offset"]),
    ("boxcox", spoiled(2, 0), ["Box–Cox", "2 value(s) are not", "Yeo–Johnson", "offset"]),
    ("boxcox", spoiled(0, 6), ["Box–Cox", "6 value(s) are not", "Yeo–Johnson", "offset"]),
    ("sqrt", spoiled(5, 2), ["square root", "2 value(s) are not", "Yeo–Johnson", "offset"]),
    ("reciprocal", spoiled(4, 3), ["reciprocal", "4 value(s) are not", "offset the zeros"]),
]
DOMAIN_IDS = ["log zeros", "log negatives", "boxcox zeros", "boxcox negatives",
              "sqrt negatives", "reciprocal zeros"]


@pytest.mark.parametrize("kind,values,fragments", DOMAIN, ids=DOMAIN_IDS)
def test_transform_outside_its_domain_screen(kind, values, fragments, hold) -> None:
    df = hold(pd.DataFrame({"v": values}))
    s = strayline.Screen(df)
    s.mark_positions([10])
    before = (s.settings(), s.mask.to_numpy().copy(), s.values().copy())
    with pytest.raises(ValueError) as info:
        s.configure(transform=kind)
    for fragment in fragments:
        assert fragment in str(info.value), str(info.value)
    assert s.settings() == before[0]
    np.testing.assert_array_equal(s.mask.to_numpy(), before[1])
    np.testing.assert_array_equal(s.values(), before[2])
    # Yeo–Johnson, as suggested, takes these values (λ as scipy.stats.yeojohnson fits it)
    if kind != "reciprocal":
        s.configure(transform="yeojohnson")
        lm = s.evaluation().settings.lmbda
        assert lm == pytest.approx(stats.yeojohnson(values[~np.isnan(values)])[1], abs=1e-5)


@pytest.mark.parametrize("kind,values,fragments", DOMAIN, ids=DOMAIN_IDS)
def test_transform_outside_its_domain_ledger(kind, values, fragments, hold) -> None:
    template = hold(pd.DataFrame({"v": positive(21)}))
    s = strayline.Screen(template)
    s.configure(transform=kind)
    ledger = Ledger.from_dict(json.loads(s.ledger.to_json()))
    batch = hold(pd.DataFrame({"v": values}))
    for refit in (True, False):
        with pytest.raises(ValueError) as info:
            ledger.apply(batch, refit=refit)
        for fragment in fragments:
            assert fragment in str(info.value), str(info.value)


@pytest.mark.parametrize("kind,values,fragments", DOMAIN, ids=DOMAIN_IDS)
def test_transform_outside_its_domain_panel(kind, values, fragments, hold) -> None:
    df = hold(pd.DataFrame({"v": values}))
    ns: dict = {}
    p = strayline.panel(df, mask="m", namespace=ns)
    p.brush(-9, 9, 5.0, 50.0, "replace")
    before = (p.screen.settings(), p.mask.copy(), ns["m"].copy())
    p.transform_select.value = kind  # the kernel keeps running: nothing is raised here
    for fragment in fragments:
        assert fragment in p.last_error and fragment in p.table.error
        assert fragment in p.status.value
    assert p.screen.settings() == before[0] and p.transform_select.value == "none"
    pd.testing.assert_series_equal(p.mask, before[1])
    pd.testing.assert_series_equal(ns["m"], before[2])
    # the panel goes on working and the error goes away with the next good action
    p.transform_select.value = "yeojohnson"
    assert p.last_error == "" and p.table.error == ""
    assert p.screen.settings().transform == "yeojohnson"


# --- rule parameters ---------------------------------------------------------------------------


RULE_ERRORS = [
    ("grubbs", {"alpha": 0.0}, 30, ValueError, "alpha must lie strictly between 0 and 1"),
    ("grubbs", {"alpha": 1.0}, 30, ValueError, "alpha must lie strictly between 0 and 1"),
    ("gesd", {"alpha": -0.05}, 30, ValueError, "alpha must lie strictly between 0 and 1"),
    ("gesd", {"alpha": 1.5}, 30, ValueError, "alpha must lie strictly between 0 and 1"),
    ("grubbs", {"alpha": float("nan")}, 30, ValueError, "alpha must lie strictly between"),
    ("fences", {"k": 0.0}, 30, ValueError, "k must be a positive number"),
    ("fences", {"k": -1.5}, 30, ValueError, "k must be a positive number"),
    ("adjusted_fences", {"k": 0}, 30, ValueError, "k must be a positive number"),
    ("fences", {"k": float("inf")}, 30, ValueError, "k must be a positive number"),
    ("zscore", {"threshold": 0}, 30, ValueError, "threshold must be a positive number"),
    ("robust_z", {"threshold": -3.5}, 30, ValueError, "threshold must be a positive number"),
    ("gesd", {"max_outliers": 30}, 30, ValueError, "max_outliers must be between 1 and n - 2"),
    ("gesd", {"max_outliers": 29}, 30, ValueError, "n - 2 = 28 for 30 values, got 29"),
    ("gesd", {}, 8, ValueError, "n - 2 = 6 for 8 values, got 10"),
    ("gesd", {"max_outliers": 0}, 30, ValueError, "max_outliers must be at least 1"),
    ("gesd", {"max_outliers": 2.5}, 30, TypeError, "max_outliers must be a whole number"),
    ("grubbs", {}, 2, ValueError, "Grubbs' test needs at least 3 non-missing values, got 2"),
    ("zscore", {}, 2, ValueError, "the z-score rule needs at least 3 non-missing values"),
    ("robust_z", {}, 2, ValueError, "needs at least 3 non-missing values, got 2"),
    ("fences", {"k": 3.0}, 3, ValueError, "the fence rule needs at least 4 non-missing values"),
    ("fences", {"alpha": 0.1}, 30, TypeError, "rule 'fences' takes ['k'], not ['alpha']"),
    ("iqr", {}, 30, ValueError, "unknown rule 'iqr'"),
]


@pytest.mark.parametrize("rule,params,n,exc,fragment", RULE_ERRORS)
def test_rule_parameters_are_checked_screen(rule, params, n, exc, fragment, hold) -> None:
    df = hold(pd.DataFrame({"v": good(30, n=max(n, 20))[:n]}))
    s = strayline.Screen(df)
    before = s.settings()
    with pytest.raises(exc, match=re.escape(fragment)):
        s.configure(rule=rule, **params)
    assert s.settings() == before
    if n >= 4:  # the starting rule still works: the mask is as before
        np.testing.assert_array_equal(s.mask.to_numpy(), tukey_flags(df["v"].to_numpy()))


def test_the_largest_max_outliers_is_accepted_and_exact(hold) -> None:
    df = hold(pd.DataFrame({"v": good(31, n=30)}))
    s = strayline.Screen(df)
    s.configure(rule="gesd", max_outliers=28)
    # brute force generalized ESD (NIST e-Handbook 1.3.5.17.3) with scipy's t distribution
    v = df["v"].to_numpy()
    left, removed, big_r, lam = list(range(30)), [], [], []
    for i in range(1, 29):
        x = v[left]
        dev = np.abs(x - x.mean()) / x.std(ddof=1)
        j = int(np.argmax(dev))
        big_r.append(dev[j])
        removed.append(left.pop(j))
        t = stats.t.ppf(1 - 0.05 / (2 * (30 - i + 1)), 30 - i - 1)
        lam.append((30 - i) * t / np.sqrt((30 - i - 1 + t * t) * (30 - i + 1)))
    n_out = max([i + 1 for i in range(28) if big_r[i] > lam[i]], default=0)
    expected = np.zeros(30, dtype=bool)
    expected[removed[:n_out]] = True
    np.testing.assert_array_equal(s.mask.to_numpy(), expected)
    assert n_out == 2


@pytest.mark.parametrize("rule,params,n,exc,fragment",
                         [r for r in RULE_ERRORS if r[2] == 30 and r[0] != "iqr"
                          and not r[1].get("max_outliers", 1) >= 29])
def test_rule_parameters_are_checked_when_a_ledger_is_read(rule, params, n, exc, fragment,
                                                           hold) -> None:
    template = hold(pd.DataFrame({"v": good(32, n=n)}))
    doc = json.loads(strayline.Screen(template).ledger.to_json())
    doc["columns"][0]["rule"] = rule
    doc["columns"][0]["params"] = {k: (None if isinstance(v, float) and not np.isfinite(v)
                                       else v) for k, v in params.items()}
    with pytest.raises(LedgerError, match=r"columns\[0\]"):
        Ledger.from_dict(doc)


@pytest.mark.parametrize("rule,params,n", [("gesd", {}, 8), ("grubbs", {}, 2),
                                           ("fences", {}, 3)])
def test_a_rule_that_cannot_be_fitted_on_a_new_batch_warns_and_flags_nothing(rule, params, n,
                                                                            hold) -> None:
    template = hold(pd.DataFrame({"level": good(33)}))
    s = strayline.Screen(template)
    s.configure(rule=rule, **params)
    batch = hold(pd.DataFrame({"level": good(34, n=20)[:n]}))
    with pytest.warns(LedgerWarning, match="level"):
        m = s.ledger.apply(batch)
    np.testing.assert_array_equal(m.to_numpy(), np.zeros(n, dtype=bool))


def test_rule_errors_in_the_panel_keep_the_last_good_state(hold) -> None:
    df = hold(pd.DataFrame({"v": good(35)[:8]}))
    ns: dict = {}
    p = strayline.panel(df, mask="m", namespace=ns)
    before = (p.screen.settings(), ns["m"].copy())
    p.rule_select.value = "gesd"  # its default max_outliers = 10 is too many for 8 values
    assert "n - 2 = 6 for 8 values, got 10" in p.last_error
    assert p.rule_select.value == "fences" and p.screen.settings() == before[0]
    pd.testing.assert_series_equal(ns["m"], before[1])
    df2 = hold(pd.DataFrame({"v": good(36, n=30)}))
    p2 = strayline.panel(df2, mask="m", namespace=ns, rule="gesd", max_outliers=3)
    p2.max_input.value = 29
    assert "max_outliers must be between 1 and n - 2 = 28" in p2.last_error
    assert p2.screen.settings().rule_params["max_outliers"] == 3 and p2.max_input.value == 3
    p2.max_input.value = 5
    assert p2.last_error == "" and p2.screen.settings().rule_params["max_outliers"] == 5


# --- ledger files ------------------------------------------------------------------------------


def ledger_doc() -> dict:
    df = pd.DataFrame({"v": good(40), "site": np.repeat(["a", "b", "c"], N // 3)})
    s = strayline.Screen(df, columns="v")
    s.mark_positions([1, 2])
    return json.loads(s.ledger.to_json())


def edit(change: Callable[[dict], Any]) -> Callable[[], str]:
    def make() -> str:
        doc = ledger_doc()
        change(doc)
        return json.dumps(doc)

    return make


def col(doc: dict) -> dict:
    return doc["columns"][0]


FILES = {
    "truncated": (lambda: json.dumps(ledger_doc())[:200], "not valid JSON (truncated or edited?)"),
    "empty file": (lambda: "", "not valid JSON"),
    "not a ledger": (lambda: json.dumps({"columns": []}), "not a strayline ledger"),
    "a list": (lambda: "[1, 2, 3]", "not a strayline ledger"),
    "newer format": (edit(lambda d: d.update(version=2)), "written in ledger format 2 by a "
                                                          "newer strayline"),
    "version as text": (edit(lambda d: d.update(version="1")), "document.version: expected int"),
    "unknown rule": (edit(lambda d: col(d).update(rule="chauvenet")),
                     "columns[0]: unknown rule 'chauvenet'"),
    "unknown transform": (edit(lambda d: col(d).update(transform="arcsine")),
                          "columns[0]: unknown transformation 'arcsine'"),
    "k as text": (edit(lambda d: col(d).update(params={"k": "wide"})), "columns[0]"),
    "k negative": (edit(lambda d: col(d).update(params={"k": -1})),
                   "columns[0]: k must be a positive number"),
    "parameter of another rule": (edit(lambda d: col(d).update(params={"alpha": 0.1})),
                                  "columns[0]"),
    "lambda as text": (edit(lambda d: col(d).update(transform="boxcox", lmbda="0.5")),
                       "columns[0].lmbda: expected a number"),
    "columns not a list": (edit(lambda d: d.update(columns={})),
                           "document.columns: expected list"),
    "no marks": (edit(lambda d: col(d).pop("marks")), "columns[0]: missing 'marks'"),
    "mark value as text": (edit(lambda d: col(d)["marks"][0].update(value="3.1")),
                           "columns[0].marks[0].value"),
    "mark label a list": (edit(lambda d: col(d)["marks"][0].update(label=[1, 2])),
                          "columns[0].marks[0].label"),
    "mark label bad timestamp": (edit(lambda d: col(d)["marks"][0].update(
        label={"timestamp": "yesterday-ish"})), "columns[0].marks[0].label: cannot read"),
    "bound as text": (edit(lambda d: col(d)["bounds"][0].update(lower="low")),
                      "columns[0].bounds[0].lower"),
    "column name true": (edit(lambda d: col(d).update(column=True)),
                         "a bare true/false is not a label"),
    "bounds removed": (edit(lambda d: col(d).update(bounds=[])), "columns[0].bounds"),
    "notes null": (edit(lambda d: d.update(notes=None)), "notes"),
    "bound info as text": (edit(lambda d: col(d)["bounds"][0]["info"].update(q1="x")),
                           "columns[0].bounds[0].info"),
}
@pytest.mark.parametrize("name", list(FILES))
def test_a_broken_ledger_file_is_a_clear_error_and_no_mask(name: str, tmp_path: Path,
                                                           hold) -> None:
    text, fragment = FILES[name]
    path = tmp_path / "ledger.json"
    path.write_text(text(), encoding="utf-8")
    df = hold(pd.DataFrame({"v": good(40), "site": np.repeat(["a", "b", "c"], N // 3)}))
    with pytest.raises(LedgerError, match=re.escape(fragment)):
        ledger = Ledger.load(path)
        ledger.apply(df, refit=False)  # if it loads, it must still not give a mask


def test_a_binary_file_is_a_clear_error(tmp_path: Path) -> None:
    path = tmp_path / "ledger.json"
    path.write_bytes(b"\xff\xfe\x00\x81garbage")
    with pytest.raises(LedgerError, match="not a text file"):
        Ledger.load(path)


@pytest.mark.parametrize("missing", ["v", "w", "site"])
def test_a_column_missing_from_the_new_batch_is_an_error_and_no_partial_mask(missing: str,
                                                                            hold) -> None:
    rng = np.random.default_rng(41)
    df = hold(pd.DataFrame({"v": good(41), "w": good(42), "site": rng.choice(["a", "b"], N)}))
    s = strayline.Screen(df, columns=["v", "w"], group="site")
    ledger = Ledger.from_dict(json.loads(s.ledger.to_json()))
    batch = hold(df.drop(columns=[missing]))
    what = "group column" if missing == "site" else "screened column(s)"
    for refit in (True, False):
        with pytest.raises(LedgerError, match=re.escape(what) + ".*" + missing):
            ledger.apply(batch, refit=refit)


def test_the_panel_shows_a_failed_save_and_goes_on(tmp_path: Path, hold) -> None:
    df = hold(pd.DataFrame({"v": good(43)}))
    p = strayline.panel(df, mask="m", namespace={})
    p.ledger_path.value = str(tmp_path / "no such folder" / "ledger.json")
    p.save_button.click()
    assert "No such file or directory" in p.last_error
    p.ledger_path.value = str(tmp_path / "ledger.json")
    p.save_button.click()
    assert p.last_error == ""
    pd.testing.assert_series_equal(Ledger.load(tmp_path / "ledger.json").apply(df), p.screen.mask)


# --- values near the limits of floating point ------------------------------------------------


RULES = ["fences", "adjusted_fences", "zscore", "robust_z", "grubbs", "gesd"]


@pytest.mark.parametrize("exponent,positive", [(1020, False), (-1000, False), (-1021, True)],
                         ids=["near 1e308", "near 1e-301", "near 1e-308"])
@pytest.mark.parametrize("rule", RULES)
def test_rules_are_exact_near_the_limits_of_floating_point(rule, exponent, positive,
                                                           hold) -> None:
    # multiplying by a power of two is exact, and every rule is scale-equivariant: the flags
    # must equal those on the unscaled data
    x = good(50, loc=0.0, sd=1.0)
    x = np.abs(x) + 1 if positive else x
    base = hold(pd.DataFrame({"v": x}))
    far = hold(pd.DataFrame({"v": np.ldexp(x, exponent)}))
    assert np.all(np.isfinite(far["v"])) and np.all(np.abs(far["v"]) >= 2.0**-1022)
    a, b = strayline.Screen(base), strayline.Screen(far)
    for s in (a, b):
        s.configure(rule=rule)
    np.testing.assert_array_equal(b.mask.to_numpy(), a.mask.to_numpy())
    assert a.mask.any()
    np.testing.assert_allclose(b.evaluation().scores, a.evaluation().scores, rtol=1e-12)


@pytest.mark.parametrize("exponent,positive", [(1020, False), (-1000, False), (-1021, True)],
                         ids=["near 1e308", "near 1e-301", "near 1e-308"])
def test_summary_is_exact_near_the_limits_of_floating_point(exponent, positive, hold) -> None:
    x = good(51, loc=0.0, sd=1.0)
    x = np.abs(x) + 1 if positive else x
    df = hold(pd.DataFrame({"v": np.ldexp(x, exponent)}))
    s = strayline.Screen(df)
    sm = s.summary()
    scale = 2.0**exponent
    # references: numpy and scipy on the unscaled values, scaled back exactly
    assert sm.mean == pytest.approx(np.mean(x) * scale, rel=1e-12)
    assert sm.sd == pytest.approx(np.std(x, ddof=1) * scale, rel=1e-12)
    assert sm.skewness == pytest.approx(stats.skew(x, bias=False), rel=1e-9)
    assert sm.excess_kurtosis == pytest.approx(stats.kurtosis(x, bias=False), rel=1e-9)
    assert s.qq_coordinates().r == pytest.approx(stats.probplot(x)[1][2], rel=1e-12)


# --- the panel survives ----------------------------------------------------------------------


def test_a_numeric_group_column_opens_in_the_panel(hold) -> None:
    rng = np.random.default_rng(52)
    df = hold(pd.DataFrame({"batch": np.repeat([1, 2, 3], 40), "v": rng.normal(size=120)}))
    p = strayline.panel(df, group="batch", mask="m", namespace={})
    assert p.screen.columns == ("v",) and p.group_select.value == "batch"


def test_the_panel_survives_a_failing_computation_and_goes_on(hold) -> None:
    rng = np.random.default_rng(53)
    v = rng.lognormal(2.0, 0.5, 300)
    v[:4] = [-2.0, 0.0, -0.5, 400.0]
    df = hold(pd.DataFrame({"v": v, "w": rng.normal(size=300)}))
    ns: dict = {}
    p = strayline.panel(df, mask="m", namespace=ns)
    p.brush(-9, 9, 30.0, 60.0, "add")
    p.rule_select.value = "zscore"
    good_state = (p.screen.settings(), p.mask.copy(), p.screen.marked_positions().copy())
    p.transform_select.value = "log"
    assert "3 value(s) are not" in p.last_error and "Yeo–Johnson" in p.table.error
    assert "sl-error" in p.status.value
    assert p.screen.settings() == good_state[0]
    assert (p.transform_select.value, p.rule_select.value) == ("none", "zscore")
    pd.testing.assert_series_equal(p.mask, good_state[1])
    pd.testing.assert_series_equal(ns["m"], good_state[1].rename("m"))
    np.testing.assert_array_equal(p.screen.marked_positions(), good_state[2])
    # a brush that reports no numbers is refused the same way
    p.brush(float("nan"), 1.0, 0.0, 10.0, "add")
    assert "a region needs numbers" in p.last_error
    pd.testing.assert_series_equal(p.mask, good_state[1])
    # and everything still works afterwards
    p.column_select.value = "w"
    assert p.last_error == ""
    p.column_select.value = "v"
    p.transform_select.value = "yeojohnson"
    assert p.last_error == "" and p.screen.settings().transform == "yeojohnson"
    p.brush(-9, 9, -1e9, 1e9, "remove")
    assert p.screen.marked_positions().size == 0
    assert p.undo_button.disabled is False


def test_rows_with_tuple_column_names_use_full_keys(hold) -> None:
    df = hold(pd.DataFrame({("turbidity", "NTU"): good(60), ("oxygen", "mg/l"): good(61)}))
    s = strayline.Screen(df)
    with warnings.catch_warnings():
        warnings.simplefilter("error", pd.errors.Pandas4Warning)
        rows = s.rows(which="all")
    assert list(rows.columns) == [("turbidity", "NTU"), ("oxygen", "mg/l"), ("state", ""),
                                  ("score", ""), ("reason", ""), ("note", ""), ("in_mask", "")]


@pytest.mark.parametrize("make,kwargs,exc,fragment", [
    (lambda: pd.Series(good(70), name="v"), {}, TypeError, "wrap a Series with s.to_frame()"),
    (lambda: np.c_[good(70)], {}, TypeError, "needs a pandas DataFrame"),
    (pd.DataFrame, {}, ValueError, "has no numeric columns to screen"),
    (good_frame("v"), {"columns": []}, ValueError, "columns is empty"),
    (good_frame("v"), {"columns": "w"}, KeyError, "column 'w' is not in the DataFrame"),
    (good_frame("v"), {"group": "site"}, KeyError, "group column 'site' is not in the"),
], ids=["a Series", "an array", "no columns", "no column named", "unknown column",
        "unknown group"])
def test_what_a_screen_is_made_of_is_checked(make, kwargs, exc, fragment) -> None:
    data = make()
    with pytest.raises(exc, match=re.escape(fragment)):
        strayline.Screen(data, **kwargs)
    ns: dict = {}
    with pytest.raises(exc, match=re.escape(fragment)):
        strayline.panel(data, mask="m", namespace=ns, **kwargs)
    assert ns == {}
