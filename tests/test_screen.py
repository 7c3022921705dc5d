"""The Screen model: labels at the edge, the mask, hand decisions with undo/redo, brushing a
Q–Q rectangle, group-wise rules, the rows in context and the summary.

References used below (all outside strayline):
- Tukey's fences with numpy.quantile (its default, linear interpolation = type 7), k = 1.5
  (common practice);
- Q–Q coordinates from scipy.stats.probplot (Filliben's plotting positions);
- z-scores from scipy.stats.zscore(ddof=1) with |z| > 3 (common practice); robust z-scores
  0.6745 (x - median) / MAD with scipy.stats.median_abs_deviation and |M| > 3.5
  (Iglewicz & Hoaglin's recommendation);
- skew-adjusted fences from statsmodels' medcouple and the published formula;
- Grubbs' test and the generalized ESD test by brute force with scipy's t distribution
  (NIST/SEMATECH e-Handbook 1.3.5.17);
- moments from numpy / scipy.stats (skew and kurtosis with bias=False), Shapiro–Wilk from
  scipy.stats.shapiro, Box–Cox and Yeo–Johnson λ from scipy.stats.boxcox / yeojohnson.
"""

from __future__ import annotations

import re
import warnings
from contextlib import contextmanager

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st
from scipy import stats

import strayline
from frames import assert_same_frame
from strayline.screen import FLAGGED, MISSING

# --- the user's frame is never modified -----------------------------------------------------


@contextmanager
def untouched(*frames: pd.DataFrame):
    copies = [f.copy(deep=True) for f in frames]
    yield
    for f, c in zip(frames, copies, strict=True):
        assert_same_frame(f, c)


# --- references -------------------------------------------------------------------------------


def tukey_flags(values: np.ndarray, k: float = 1.5) -> np.ndarray:
    """Tukey's fences with numpy's default quantiles; NaN is never flagged."""
    v = values[~np.isnan(values)]
    q1, q3 = np.quantile(v, [0.25, 0.75])
    with np.errstate(invalid="ignore"):
        return (values < q1 - k * (q3 - q1)) | (values > q3 + k * (q3 - q1))


def adjusted_flags(v: np.ndarray, k: float = 1.5) -> np.ndarray:
    """Hubert & Vandervieren (2008) fences with statsmodels' medcouple."""
    from statsmodels.stats.stattools import medcouple

    q1, q3 = np.quantile(v, [0.25, 0.75])
    iqr = q3 - q1
    mc = float(medcouple(v))
    if mc >= 0:
        lo, hi = q1 - k * np.exp(-4 * mc) * iqr, q3 + k * np.exp(3 * mc) * iqr
    else:
        lo, hi = q1 - k * np.exp(-3 * mc) * iqr, q3 + k * np.exp(4 * mc) * iqr
    return (v < lo) | (v > hi)


def grubbs_flags(v: np.ndarray, alpha: float = 0.05) -> np.ndarray:
    """Two-sided Grubbs test, NIST e-Handbook 1.3.5.17.1, by brute force."""
    n = v.size
    dev = np.abs(v - v.mean()) / v.std(ddof=1)
    i = int(np.argmax(dev))
    t = stats.t.isf(alpha / (2 * n), n - 2)
    crit = (n - 1) / np.sqrt(n) * np.sqrt(t * t / (n - 2 + t * t))
    out = np.zeros(n, dtype=bool)
    out[i] = dev[i] > crit
    return out


def gesd_flags(v: np.ndarray, r: int = 10, alpha: float = 0.05) -> np.ndarray:
    """Rosner's generalized ESD, NIST e-Handbook 1.3.5.17.3, by brute force removal."""
    n = v.size
    left = list(range(n))
    removed, big_r, lam = [], [], []
    for i in range(1, r + 1):
        x = v[left]
        dev = np.abs(x - x.mean()) / x.std(ddof=1)
        j = int(np.argmax(dev))
        big_r.append(dev[j])
        removed.append(left.pop(j))
        p = 1 - alpha / (2 * (n - i + 1))
        t = stats.t.ppf(p, n - i - 1)
        lam.append((n - i) * t / np.sqrt((n - i - 1 + t * t) * (n - i + 1)))
    beyond = [i for i in range(r) if big_r[i] > lam[i]]
    n_out = beyond[-1] + 1 if beyond else 0
    out = np.zeros(n, dtype=bool)
    out[removed[:n_out]] = True
    return out


def rule_flags(v: np.ndarray, rule: str) -> np.ndarray | None:
    """The rule applied to present values v (no NaN); None when the rule cannot be applied."""
    n = v.size
    if rule == "fences":
        if n < 4 or np.subtract(*np.quantile(v, [0.75, 0.25])) <= 0:
            return None
        return tukey_flags(v)
    if rule == "adjusted_fences":
        if n < 4 or np.subtract(*np.quantile(v, [0.75, 0.25])) <= 0:
            return None
        return adjusted_flags(v)
    if rule == "zscore":
        if n < 3:
            return None
        return np.abs(stats.zscore(v, ddof=1)) > 3
    if rule == "robust_z":
        mad = stats.median_abs_deviation(v) if n else 0.0
        if n < 3 or mad == 0:
            return None
        return np.abs(0.6745 * (v - np.median(v)) / mad) > 3.5
    if rule == "grubbs":
        return None if n < 3 else grubbs_flags(v)
    if rule == "gesd":
        return None if n - 2 < 10 else gesd_flags(v)
    raise AssertionError(rule)


NUMPY_SCALE = {"none": lambda v: v, "log": np.log, "sqrt": np.sqrt,
               "reciprocal": lambda v: 1.0 / v}


# --- data ---------------------------------------------------------------------------------------


def measurements(rng: np.random.Generator, n: int, nan_fraction: float = 0.08) -> np.ndarray:
    """Normal readings with a few gross errors and some missing values."""
    v = rng.normal(50.0, 4.0, n)
    bad = rng.choice(n, 4, replace=False)
    v[bad] += rng.choice([-1.0, 1.0], 4) * rng.uniform(25, 40, 4)
    v[rng.random(n) < nan_fraction] = np.nan
    return v


def make_index(kind: str, n: int, rng: np.random.Generator) -> pd.Index:
    if kind == "range":
        return pd.RangeIndex(n)
    if kind == "string":
        return pd.Index([f"s{i:04d}" for i in rng.permutation(n)], name="sample")
    if kind == "datetime":
        return pd.date_range("2025-03-01 06:00", periods=n, freq="37min", name="taken")
    if kind == "datetime_tz_unsorted":
        return pd.DatetimeIndex(pd.date_range("2025-03-01", periods=n, freq="h",
                                              tz="Europe/Oslo")[rng.permutation(n)])
    if kind == "multi":
        return pd.MultiIndex.from_arrays([rng.choice(["north", "south", "east"], n),
                                          rng.permutation(n)], names=["site", "k"])
    if kind == "duplicate_int":
        return pd.Index(rng.integers(0, n // 3, n))
    if kind == "duplicate_str":
        return pd.Index([f"lot{i}" for i in rng.integers(0, n // 4, n)])
    if kind == "unsorted_int":
        return pd.Index(rng.permutation(n) * 7 + 3)
    if kind == "float":
        return pd.Index(rng.permutation(n) / 4.0)
    raise AssertionError(kind)


INDEX_KINDS = ["range", "string", "datetime", "datetime_tz_unsorted", "multi", "duplicate_int",
               "duplicate_str", "unsorted_int", "float"]
UNIQUE_KINDS = ["range", "string", "datetime", "datetime_tz_unsorted", "multi", "unsorted_int",
                "float"]


def rows_with_label(index: pd.Index, label) -> np.ndarray:
    """Brute force: positions whose label equals `label`."""
    return np.array([i for i, lab in enumerate(index) if lab == label], dtype=np.int64)


# --- labels and the mask ------------------------------------------------------------------------


@pytest.mark.parametrize("kind", INDEX_KINDS)
def test_mask_has_the_frames_index_and_follows_labels(kind: str, hold) -> None:
    rng = np.random.default_rng(11)
    n = 90
    v = measurements(rng, n)
    df = hold(pd.DataFrame({"v": v, "note": rng.choice(["ok", "redo"], n)},
                           index=make_index(kind, n, rng)))
    s = strayline.Screen(df)
    assert s.columns == ("v",)
    m = s.mask
    assert m.dtype == bool and m.name == "suspect"
    assert m.index.equals(df.index) and type(m.index) is type(df.index)
    expected = tukey_flags(v)
    np.testing.assert_array_equal(m.to_numpy(), expected)

    # marking a plain row by label marks every row with that label (and only rows with a value)
    plain = np.flatnonzero(~expected & ~np.isnan(v))
    label = df.index[plain[len(plain) // 2]]
    s.mark(label)
    hit = rows_with_label(df.index, label)
    expected[hit[~np.isnan(v[hit])]] = True
    np.testing.assert_array_equal(s.mask.to_numpy(), expected)
    # keeping a flagged row's label takes all its rows out of the mask
    flagged_label = df.index[np.flatnonzero(tukey_flags(v))[0]]
    s.keep(flagged_label)
    expected[rows_with_label(df.index, flagged_label)] = False
    np.testing.assert_array_equal(s.mask.to_numpy(), expected)
    # the mask selects the same rows from the frame by label as by position
    pd.testing.assert_frame_equal(df.loc[s.mask], df.iloc[np.flatnonzero(expected)])
    # the returned Series is the caller's: changing it does not change the screen
    mm = s.mask
    mm.iloc[:] = True
    np.testing.assert_array_equal(s.mask.to_numpy(), expected)


@pytest.mark.parametrize("how", ["sort_index", "sample"])
@pytest.mark.parametrize("kind", INDEX_KINDS)
def test_mask_follows_the_rows_when_the_frame_is_reordered(kind: str, how: str, hold) -> None:
    rng = np.random.default_rng(12)
    n = 80
    df = hold(pd.DataFrame({"rid": np.arange(n), "v": measurements(rng, n)},
                           index=make_index(kind, n, rng)))
    other = hold(df.sort_index() if how == "sort_index" else df.sample(frac=1, random_state=5))
    label = df.index[7]
    first, second = strayline.Screen(df, columns="v"), strayline.Screen(other, columns="v")
    for s in (first, second):
        s.mark(label)
    assert second.mask.index.equals(other.index)
    by_row = [pd.Series(s.mask.to_numpy(), index=f["rid"].to_numpy()).sort_index()
              for s, f in ((first, df), (second, other))]
    pd.testing.assert_series_equal(by_row[0], by_row[1])
    if kind in UNIQUE_KINDS:
        # with unique labels the first mask aligns onto the reordered frame by label
        pd.testing.assert_series_equal(first.mask.reindex(other.index), second.mask)


def test_labels_that_are_not_in_the_index_are_refused_by_name(hold) -> None:
    df = hold(pd.DataFrame({"v": measurements(np.random.default_rng(1), 30)},
                           index=[f"r{i}" for i in range(30)]))
    s = strayline.Screen(df)
    with pytest.raises(KeyError, match="r999"):
        s.mark(["r3", "r999"])
    assert s.marked_positions().size == 0 and not s.can_undo


def test_a_partial_multiindex_key_is_refused_by_name(hold) -> None:
    rng = np.random.default_rng(2)
    df = hold(pd.DataFrame({"v": rng.normal(size=10)},
                           index=pd.MultiIndex.from_product([["x", "y"], range(5)])))
    s = strayline.Screen(df)
    with pytest.raises(KeyError, match="'x'"):
        s.mark("x")


def test_datetime_labels_can_be_given_as_text(hold) -> None:
    rng = np.random.default_rng(3)
    df = hold(pd.DataFrame({"v": rng.normal(size=10)},
                           index=pd.date_range("2024-01-01", periods=10, freq="D")))
    s = strayline.Screen(df)
    s.mark("2024-01-03")
    np.testing.assert_array_equal(s.marked_positions(), [2])


def test_nan_rows_are_never_in_the_mask(hold) -> None:
    rng = np.random.default_rng(4)
    n = 120
    a, b = measurements(rng, n, 0.15), measurements(rng, n, 0.15)
    c = pd.array(np.where(rng.random(n) < 0.2, None, rng.integers(0, 100, n)), dtype="Int64")
    df = hold(pd.DataFrame({"a": a, "b": b, "c": c}))
    s = strayline.Screen(df)
    assert s.columns == ("a", "b", "c")
    nan_c = np.asarray(c.isna(), dtype=bool)
    for col in s.columns:
        s.mark(df.index, column=col)
        s.mark_region(-np.inf, np.inf, -np.inf, np.inf, "add", column=col)
        s.mark_positions(np.arange(n), column=col)
    missing_everywhere = np.isnan(a) & np.isnan(b) & nan_c
    assert missing_everywhere.sum() > 0
    m = s.mask.to_numpy()
    assert not m[missing_everywhere].any()
    assert m[~missing_everywhere].all()
    for col, miss in (("a", np.isnan(a)), ("b", np.isnan(b)), ("c", nan_c)):
        st_ = s.states(col)
        np.testing.assert_array_equal(st_ == MISSING, miss)
        assert s.counts(col)["missing"] == int(miss.sum())
        assert not np.isin(s.marked_positions(col), np.flatnonzero(miss)).any()
    rows = s.rows("a", which="missing")
    np.testing.assert_array_equal(rows.index.to_numpy(), np.flatnonzero(np.isnan(a)))
    assert set(rows["reason"]) == {"no value"}


def test_mask_is_the_union_over_columns(hold) -> None:
    rng = np.random.default_rng(5)
    n = 150
    a, b = measurements(rng, n), rng.lognormal(1.0, 0.6, n)
    df = hold(pd.DataFrame({"a": a, "b": b, "site": rng.choice(list("PQ"), n)}))
    s = strayline.Screen(df)
    assert s.columns == ("a", "b")
    s.configure("b", transform="log")
    np.testing.assert_array_equal(s.mask.to_numpy(), tukey_flags(a) | tukey_flags(np.log(b)))
    counts = s.counts("b")
    assert counts["flagged"] == int(tukey_flags(np.log(b)).sum())
    assert counts["mask"] == int((tukey_flags(a) | tukey_flags(np.log(b))).sum())


# --- region selection -----------------------------------------------------------------------------


def probplot_selection(y: np.ndarray, x0: float, x1: float, y0: float, y1: float) -> np.ndarray:
    """Brute force over all points: positions whose (probplot quantile, value) lies in the
    closed rectangle."""
    present = np.flatnonzero(~np.isnan(y))
    if present.size == 0:
        return np.empty(0, dtype=np.int64)
    order = present[np.argsort(y[present], kind="stable")]
    osm, osr = stats.probplot(y[present], dist="norm", fit=False)
    np.testing.assert_array_equal(osr, y[order])
    x0, x1 = min(x0, x1), max(x0, x1)
    y0, y1 = min(y0, y1), max(y0, y1)
    inside = (osm >= x0) & (osm <= x1) & (osr >= y0) & (osr <= y1)
    return np.sort(order[inside])


def off_points(edge: float, points: np.ndarray, step: float) -> float:
    """The edge, moved by small steps until it is not within rounding of any point."""
    while np.any(np.abs(points - edge) <= 1e-9 * max(1.0, abs(edge))):
        edge += step
    return edge


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.filter_too_much])
@given(seed=st.integers(0, 2**32 - 1), n=st.integers(10, 150),
       kind=st.sampled_from(["none", "log", "sqrt", "reciprocal"]),
       rects=st.lists(st.tuples(st.floats(-3.2, 3.2), st.floats(-3.2, 3.2),
                                st.floats(-0.3, 1.3), st.floats(-0.3, 1.3),
                                st.sampled_from(["replace", "add", "remove"])),
                      min_size=1, max_size=4))
def test_region_selection_equals_brute_force_over_all_points(seed, n, kind, rects) -> None:
    rng = np.random.default_rng(seed)
    raw = rng.lognormal(0.5, 0.8, n)
    raw[rng.random(n) < 0.1] = np.nan
    df = pd.DataFrame({"v": raw}, index=make_index("duplicate_str", max(n, 4), rng)[:n])
    assume(np.count_nonzero(~np.isnan(raw)) >= 8)  # tiny columns: see test_bad_input.py
    with untouched(df):
        s = strayline.Screen(df)
        s.configure(transform=kind)
        y = NUMPY_SCALE[kind](raw)
        finite = y[~np.isnan(y)]
        lo, hi = finite.min(), finite.max()
        span = hi - lo
        osm = stats.probplot(finite, fit=False)[0]
        # hand decisions before brushing, so that every mode has something to change
        present = np.flatnonzero(~np.isnan(raw))
        marked = set(rng.choice(present, 3, replace=False).tolist())
        kept = set(rng.choice(present, 2, replace=False).tolist()) - marked
        flagged = tukey_flags(y)
        s.mark_positions(sorted(marked))
        s.keep_positions(sorted(kept))
        for fx0, fx1, fy0, fy1, mode in rects:
            y0, y1 = lo + fy0 * span, lo + fy1 * span
            # an edge on a point's coordinate would compare scipy's last bit with ours: move it
            fx0, fx1 = (off_points(e, osm, 1e-6) for e in (fx0, fx1))
            y0, y1 = (off_points(e, finite, 1e-7 * span) for e in (y0, y1))
            inside = probplot_selection(y, fx0, fx1, y0, y1)
            got = s.region_positions(fx0, fx1, y0, y1)
            np.testing.assert_array_equal(got, inside)
            np.testing.assert_array_equal(s.region_positions(fx1, fx0, y1, y0), inside)
            assert s.mark_region(fx0, fx1, y0, y1, mode) == inside.size
            ins = set(inside.tolist())
            if mode == "replace":
                marked, kept = ins, kept - ins
            elif mode == "add":
                marked, kept = marked | ins, kept - ins
            else:
                marked = marked - ins
            np.testing.assert_array_equal(s.marked_positions(), sorted(marked))
            np.testing.assert_array_equal(s.kept_positions(), sorted(kept))
            expected = flagged.copy()
            expected[sorted(marked)] = True
            expected[sorted(kept)] = False
            np.testing.assert_array_equal(s.mask.to_numpy(), expected)


def test_region_edges_are_inclusive_and_coordinates_are_probplots(hold) -> None:
    rng = np.random.default_rng(6)
    raw = rng.lognormal(1.0, 0.7, 301)
    df = hold(pd.DataFrame({"v": raw}))
    s = strayline.Screen(df)
    s.configure(transform="log")
    v = s.qq_coordinates()
    osm, osr = stats.probplot(np.log(raw), dist="norm", fit=False)
    np.testing.assert_allclose(v.theoretical, osm, rtol=0, atol=1e-12)
    np.testing.assert_array_equal(v.ordered, osr)
    order = np.argsort(np.log(raw), kind="stable")
    # corners exactly on drawn points: both end points are inside
    i, j = 40, 260
    got = s.region_positions(v.theoretical[i], v.theoretical[j], -np.inf, np.inf)
    np.testing.assert_array_equal(got, np.sort(order[i:j + 1]))
    got = s.region_positions(-np.inf, np.inf, v.ordered[i], v.ordered[j])
    np.testing.assert_array_equal(got, np.sort(order[i:j + 1]))
    # a rectangle above the curve holds nothing
    assert s.region_positions(-3, -1, osr.max() + 1, osr.max() + 2).size == 0
    assert s.mark_region(-3, -1, osr.max() + 1, osr.max() + 2) == 0
    assert not s.can_undo  # selecting nothing over nothing is not a decision


def test_region_uses_the_current_scale(hold) -> None:
    rng = np.random.default_rng(7)
    raw = rng.lognormal(2.0, 1.0, 500)
    df = hold(pd.DataFrame({"v": raw}))
    s = strayline.Screen(df)
    rect = (0.5, 2.5, np.log(10.0), np.log(40.0))
    s.configure(transform="log")
    np.testing.assert_array_equal(s.region_positions(*rect), probplot_selection(np.log(raw), *rect))
    s.configure(transform="none")
    np.testing.assert_array_equal(s.region_positions(*rect), probplot_selection(raw, *rect))


# --- group-wise rules -------------------------------------------------------------------------


def grouped_frame(seed: int) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    sizes = {"line A": 60, "line B": 35, "line C": 80, "line D": 3}
    parts = []
    for (label, size), level in zip(sizes.items(), (1.0, 2.5, 0.6, 1.5), strict=True):
        v = rng.lognormal(np.log(10 * level), 0.3, size)
        if size > 10:
            v[rng.choice(size, 2, replace=False)] *= rng.choice([0.2, 5.0], 2)
        parts.append(pd.DataFrame({"line": label, "v": v}))
    df = pd.concat(parts, ignore_index=True)
    df.loc[rng.choice(len(df), 6, replace=False), "line"] = None
    df.loc[rng.choice(len(df), 5, replace=False), "v"] = np.nan
    df = df.iloc[rng.permutation(len(df))]
    df.index = [f"u{i}" for i in rng.integers(0, 90, len(df))]  # duplicate, unsorted labels
    return df


@pytest.mark.parametrize("transform", ["none", "log"])
@pytest.mark.parametrize("rule", ["fences", "adjusted_fences", "zscore", "robust_z", "grubbs",
                                  "gesd"])
def test_group_wise_rule_equals_the_rule_on_each_group(rule: str, transform: str, hold) -> None:
    df = hold(grouped_frame(8))
    s = strayline.Screen(df, columns="v", group="line")
    s.configure(transform=transform, rule=rule)
    # reference: pandas groupby (rows without a group are in none), the rule on each group
    work = df.reset_index(drop=True)
    y = NUMPY_SCALE[transform](work["v"].to_numpy())
    expected = np.zeros(len(work), dtype=bool)
    screened = 0
    for _, part in work.groupby("line"):
        rows = part.index.to_numpy()
        rows = rows[~np.isnan(y[rows])]
        got = rule_flags(y[rows], rule)
        if got is not None:
            expected[rows] = got
            screened += 1
    assert screened >= 3
    np.testing.assert_array_equal(s.mask.to_numpy(), expected)
    np.testing.assert_array_equal(s.states() == FLAGGED, expected)
    assert expected.any()
    # the tiny group is reported, not screened
    tiny = [g for g in s.evaluation().groups if g.label == "line D"]
    assert len(tiny) == 1 and tiny[0].n == 3
    if rule in ("fences", "adjusted_fences", "gesd"):
        assert tiny[0].error
    # back to the whole column: the rule over all rows
    s.configure(group=None)
    whole = rule_flags(y[~np.isnan(y)], rule)
    expected = np.zeros(len(work), dtype=bool)
    expected[~np.isnan(y)] = whole
    np.testing.assert_array_equal(s.mask.to_numpy(), expected)


@pytest.mark.parametrize("make_group", [
    lambda rng, n: pd.Categorical(rng.choice(["b1", "b2", "b3"], n),
                                  categories=["b0", "b1", "b2", "b3"]),
    lambda rng, n: rng.choice([101, 202, 303], n),
    lambda rng, n: pd.to_datetime(rng.choice(["2025-01-01", "2025-01-02", "2025-01-03"], n)),
], ids=["categorical", "integer", "datetime"])
def test_group_column_of_any_kind(make_group, hold) -> None:
    rng = np.random.default_rng(9)
    n = 240
    df = hold(pd.DataFrame({"v": measurements(rng, n), "batch": make_group(rng, n)}))
    s = strayline.Screen(df, columns="v", group="batch")
    v = df["v"].to_numpy()
    expected = np.zeros(n, dtype=bool)
    for _, part in df.reset_index(drop=True).groupby("batch", observed=True):
        rows = part.index.to_numpy()
        rows = rows[~np.isnan(v[rows])]
        expected[rows] = tukey_flags(v[rows])
    np.testing.assert_array_equal(s.mask.to_numpy(), expected)


def test_default_columns_leave_out_the_group_column(hold) -> None:
    rng = np.random.default_rng(10)
    df = hold(pd.DataFrame({"batch": np.repeat([1, 2, 3], 30), "v": rng.normal(size=90)}))
    assert strayline.Screen(df, group="batch").columns == ("v",)


# --- undo and redo --------------------------------------------------------------------------------


def snapshot(s: strayline.Screen) -> tuple:
    return (s.mask.to_numpy().copy(), s.states().copy(), s.marked_positions().tolist(),
            s.kept_positions().tolist(), s.notes())


def assert_snapshot(a: tuple, b: tuple) -> None:
    np.testing.assert_array_equal(a[0], b[0])
    np.testing.assert_array_equal(a[1], b[1])
    assert a[2:] == b[2:]


def decision_screen(df: pd.DataFrame) -> tuple[strayline.Screen, np.ndarray]:
    s = strayline.Screen(df)
    flagged = np.flatnonzero(s.states() == FLAGGED)
    s.mark(df.index[[3, 4, 5]])
    s.keep(df.index[flagged[:1]])
    s.note(df.index[3], "first note")
    return s, flagged


DECISIONS = {
    "mark": lambda s, df, fl: s.mark(df.index[[10, 11]]),
    "keep": lambda s, df, fl: s.keep(df.index[[fl[1], 3]]),
    "clear": lambda s, df, fl: s.clear(df.index[[3, fl[0]]]),
    "region_replace": lambda s, df, fl: s.mark_region(0.0, 3.0, -np.inf, np.inf, "replace"),
    "region_add": lambda s, df, fl: s.mark_region(-3.0, -0.5, -np.inf, np.inf, "add"),
    "region_remove": lambda s, df, fl: s.mark_region(-4.0, 4.0, -np.inf, np.inf, "remove"),
    "note": lambda s, df, fl: s.note(df.index[[3, 12]], "re-measured on the 4th"),
    "note_removed": lambda s, df, fl: s.note(df.index[3], None),
}


@pytest.mark.parametrize("kind", list(DECISIONS))
def test_undo_and_redo_restore_every_decision_exactly(kind: str, hold) -> None:
    rng = np.random.default_rng(13)
    df = hold(pd.DataFrame({"v": measurements(rng, 100)},
                           index=make_index("duplicate_str", 100, rng)))
    s, flagged = decision_screen(df)
    before = snapshot(s)
    DECISIONS[kind](s, df, flagged)
    after = snapshot(s)
    assert (before[2:] != after[2:]) or not np.array_equal(before[1], after[1])
    assert s.can_undo and not s.can_redo
    assert s.undo()
    assert_snapshot(snapshot(s), before)
    assert s.can_redo
    assert s.redo()
    assert_snapshot(snapshot(s), after)
    assert s.undo()
    assert_snapshot(snapshot(s), before)


def test_undo_all_then_redo_all_and_a_new_decision_drops_the_redo_history(hold) -> None:
    rng = np.random.default_rng(14)
    df = hold(pd.DataFrame({"v": measurements(rng, 100)}))
    s = strayline.Screen(df)
    start = snapshot(s)
    flagged = np.flatnonzero(s.states() == FLAGGED)
    states = []
    for kind in DECISIONS:
        if kind == "note_removed":
            s.note(df.index[3], "first note")
            states.append(snapshot(s))
        if kind == "clear":
            s.mark(df.index[[3]])
            states.append(snapshot(s))
        DECISIONS[kind](s, df, flagged)
        states.append(snapshot(s))
    for earlier in [*states[-2::-1], start]:
        assert s.undo()
        assert_snapshot(snapshot(s), earlier)
    assert not s.undo() and not s.can_undo
    for later in states:
        assert s.redo()
        assert_snapshot(snapshot(s), later)
    assert not s.redo()
    s.undo()
    s.undo()
    s.mark(df.index[[int(np.flatnonzero(~np.isnan(df["v"].to_numpy()))[-1])]])
    assert not s.can_redo and not s.redo()


def test_a_decision_that_changes_nothing_is_not_recorded(hold) -> None:
    df = hold(pd.DataFrame({"v": measurements(np.random.default_rng(15), 60)}))
    s = strayline.Screen(df)
    assert s.mark(df.index[[1, 2]]) == 2
    assert s.mark(df.index[[1, 2]]) == 0
    assert s.undo()
    assert s.marked_positions().size == 0 and not s.can_undo


def test_settings_changes_keep_the_hand_decisions(hold) -> None:
    rng = np.random.default_rng(16)
    raw = rng.lognormal(1.0, 0.5, 200)
    df = hold(pd.DataFrame({"v": raw}))
    s = strayline.Screen(df)
    s.mark(df.index[[0, 1]])
    s.keep(df.index[np.flatnonzero(tukey_flags(raw))[:1]])
    s.configure(transform="log", k=3.0)
    expected = tukey_flags(np.log(raw), 3.0)
    expected[[0, 1]] = True
    expected[np.flatnonzero(tukey_flags(raw))[:1]] = False
    np.testing.assert_array_equal(s.mask.to_numpy(), expected)


# --- rows in context ---------------------------------------------------------------------------


def test_rows_show_every_column_plus_state_score_reason_note(hold) -> None:
    rng = np.random.default_rng(17)
    n = 200
    raw = rng.lognormal(2.0, 0.4, n)
    raw[[5, 9]] = [90.0, 1.2]
    raw[20] = np.nan
    df = hold(pd.DataFrame({"site": rng.choice(["P", "Q"], n), "v": raw,
                            "when": pd.date_range("2025-01-01", periods=n, freq="h")},
                           index=make_index("string", n, rng)))
    s = strayline.Screen(df)
    s.configure(transform="log")
    y = np.log(raw)
    present = y[~np.isnan(y)]
    q1, q3 = np.quantile(present, [0.25, 0.75])
    iqr = q3 - q1
    flagged = tukey_flags(y)
    assert flagged[5] and flagged[9]
    marked_pos, kept_pos = 30, 9
    s.mark(df.index[marked_pos])
    s.keep(df.index[kept_pos])
    s.note(df.index[5], "probe fouled")
    rows = s.rows()
    assert list(rows.columns) == ["site", "v", "when", "state", "score", "reason", "note",
                                  "in_mask"]
    positions = np.flatnonzero(flagged | np.isin(np.arange(n), [marked_pos, kept_pos]))
    pd.testing.assert_frame_equal(rows[["site", "v", "when"]], df.iloc[positions])
    by_pos = dict(zip(positions, range(len(positions)), strict=True))
    r5 = rows.iloc[by_pos[5]]
    upper = np.exp(q3 + 1.5 * iqr)
    assert r5["state"] == "flagged" and bool(r5["in_mask"]) is True
    assert r5["reason"] == (f"above the upper fence {upper:.4g} (k = 1.5, log scale)"
                            " — note: probe fouled")
    assert r5["note"] == "probe fouled"
    # the fence score: distance beyond the box in interquartile ranges
    assert r5["score"] == pytest.approx((y[5] - q3) / iqr, rel=1e-12)
    r9 = rows.iloc[by_pos[9]]
    lower = np.exp(q1 - 1.5 * iqr)
    assert r9["state"] == "kept" and not r9["in_mask"]
    assert r9["reason"] == f"kept by hand; the rule says: below the lower fence {lower:.4g} " \
                           "(k = 1.5, log scale)"
    assert r9["score"] == pytest.approx((y[9] - q1) / iqr, rel=1e-12)
    r30 = rows.iloc[by_pos[marked_pos]]
    assert r30["state"] == "marked" and r30["in_mask"] and r30["reason"] == "marked by hand"
    assert set(rows["state"]) == {"flagged", "marked", "kept"}
    assert rows["in_mask"].sum() == s.mask.sum()
    # the other views
    assert s.rows(which="all").shape == (n, 8)
    np.testing.assert_array_equal(s.rows(which="mask").index, df.index[s.mask.to_numpy()])
    with pytest.raises(ValueError, match="which must be one of"):
        s.rows(which="everything")


def test_rows_with_z_score_reasons_and_scores(hold) -> None:
    rng = np.random.default_rng(18)
    raw = rng.normal(0, 1, 300)
    raw[[0, 1]] = [6.5, -5.0]
    df = hold(pd.DataFrame({"v": raw}))
    s = strayline.Screen(df)
    s.configure(rule="zscore")
    z = stats.zscore(raw, ddof=1)
    rows = s.rows(which="flagged")
    np.testing.assert_array_equal(rows.index, np.flatnonzero(np.abs(z) > 3))
    np.testing.assert_allclose(rows["score"], z[np.abs(z) > 3], rtol=1e-12)
    assert rows.loc[0, "reason"] == f"z = {z[0]:+.2f}, beyond ±3"


def test_rows_do_not_clobber_a_column_called_state(hold) -> None:
    rng = np.random.default_rng(19)
    df = hold(pd.DataFrame({"state": rng.choice(["CA", "NY"], 50), "v": measurements(rng, 50)}))
    rows = strayline.Screen(df).rows(which="all")
    assert list(rows.columns) == ["state", "v", "state_", "score", "reason", "note", "in_mask"]
    pd.testing.assert_series_equal(rows["state"], df["state"])


def test_reason_direction_agrees_with_the_number_it_shows_on_a_decreasing_scale(hold) -> None:
    rng = np.random.default_rng(2)
    raw = rng.lognormal(size=200)
    df = hold(pd.DataFrame({"v": raw}))
    s = strayline.Screen(df)
    s.configure(transform="reciprocal")
    rows = s.rows(which="flagged")
    assert len(rows) > 0
    for value, reason in zip(rows["v"], rows["reason"], strict=True):
        word, number = re.match(r"(above|below) the \w+ fence ([0-9.e+-]+)", reason).groups()
        assert (value > float(number)) if word == "above" else (value < float(number)), reason


# --- summary -------------------------------------------------------------------------------------


@pytest.mark.parametrize("transform", ["none", "log", "sqrt"])
def test_summary_numbers_agree_with_numpy_and_scipy(transform: str, hold) -> None:
    rng = np.random.default_rng(20)
    raw = rng.lognormal(1.0, 0.6, 400)
    raw[rng.choice(400, 17, replace=False)] = np.nan
    df = hold(pd.DataFrame({"v": raw}))
    s = strayline.Screen(df)
    s.configure(transform=transform)
    y = NUMPY_SCALE[transform](raw)
    y = y[~np.isnan(y)]
    sm = s.summary()
    assert (sm.n, sm.missing) == (383, 17)
    assert sm.scale == {"none": "original", "log": "log", "sqrt": "square-root"}[transform]
    assert sm.mean == pytest.approx(np.mean(y), rel=1e-12)
    assert sm.sd == pytest.approx(np.std(y, ddof=1), rel=1e-12)
    assert sm.median == pytest.approx(np.median(y), rel=1e-14)
    assert sm.mad == pytest.approx(stats.median_abs_deviation(y, scale=1.0), rel=1e-12)
    q1, q3 = np.quantile(y, [0.25, 0.75])
    assert (sm.q1, sm.q3) == (pytest.approx(q1, rel=1e-14), pytest.approx(q3, rel=1e-14))
    assert sm.iqr == pytest.approx(q3 - q1, rel=1e-12)
    assert sm.skewness == pytest.approx(stats.skew(y, bias=False), rel=1e-9)
    assert sm.excess_kurtosis == pytest.approx(stats.kurtosis(y, bias=False), rel=1e-9)
    w, p = stats.shapiro(y)
    assert sm.normality.shapiro.statistic == pytest.approx(w, rel=1e-9)
    assert sm.normality.shapiro.pvalue == pytest.approx(p, rel=1e-6)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", FutureWarning)  # scipy's announcement about p-values
        a2 = stats.anderson(y, "norm").statistic
    assert sm.normality.anderson.statistic == pytest.approx(a2, rel=1e-9)
    assert sm.normality.ppcc == pytest.approx(stats.probplot(y)[1][2], rel=1e-12)


def test_summary_compares_transformations_and_names_the_closest_to_normal(hold) -> None:
    rng = np.random.default_rng(21)
    raw = rng.lognormal(3.0, 0.9, 600)
    df = hold(pd.DataFrame({"v": raw}))
    sm = strayline.Screen(df).summary()
    by = {t.kind: t for t in sm.comparison}
    assert set(by) == {"none", "log", "sqrt", "reciprocal", "boxcox", "yeojohnson"}
    assert sm.closest_to_normal in ("log", "boxcox")
    assert by["boxcox"].lmbda == pytest.approx(stats.boxcox(raw)[1], abs=1e-5)
    assert by["yeojohnson"].lmbda == pytest.approx(stats.yeojohnson(raw)[1], abs=1e-5)
    assert by["log"].skewness == pytest.approx(stats.skew(np.log(raw), bias=False), rel=1e-9)
    assert by["none"].ppcc == pytest.approx(stats.probplot(raw)[1][2], rel=1e-12)
    assert by["log"].ppcc == pytest.approx(stats.probplot(np.log(raw))[1][2], rel=1e-12)
    # common practice: a lognormal sample is right-skewed and its log is near symmetric
    assert by["none"].skewness > 1.5 and abs(by["log"].skewness) < 0.3


def test_summary_with_values_that_log_cannot_take_names_why(hold) -> None:
    rng = np.random.default_rng(22)
    raw = np.r_[rng.normal(0, 1, 100), 0.0]
    df = hold(pd.DataFrame({"v": raw}))
    by = {t.kind: t for t in strayline.Screen(df).summary().comparison}
    assert "Yeo–Johnson" in by["log"].error and np.isnan(by["log"].ppcc)
    assert by["yeojohnson"].error == ""


def test_a_note_that_changes_nothing_is_not_recorded(hold) -> None:
    df = hold(pd.DataFrame({"v": measurements(np.random.default_rng(23), 60)}))
    s = strayline.Screen(df)
    s.note(df.index[[4]], "re-run")
    s.mark(df.index[[1]])
    s.note(df.index[[4]], "re-run")  # the same text again
    s.note(df.index[[5]], "")  # no note, and none before
    assert s.undo()
    assert s.marked_positions().size == 0  # the mark is what Undo takes back


def test_a_failed_change_of_group_and_scale_changes_nothing(hold) -> None:
    rng = np.random.default_rng(24)
    n = 90
    df = hold(pd.DataFrame({"a": np.r_[-1.0, rng.lognormal(size=n - 1)], "b": rng.normal(size=n),
                            "site": rng.choice(["x", "y", "z"], n)}))
    s = strayline.Screen(df, columns=["a", "b"])
    before = s.mask.copy()
    with pytest.raises(ValueError, match=re.escape("1 value(s) are not")):
        s.configure("a", group="site", transform="log")
    assert s.group is None
    assert s.settings("a").group is None and s.settings("b").group is None
    pd.testing.assert_series_equal(s.mask, before)
    # and a later group change reaches every column
    s.configure("b", group="site")
    assert s.settings("a").group == "site"


def test_shared_arrays_cannot_be_written_through(hold) -> None:
    rng = np.random.default_rng(25)
    df = hold(pd.DataFrame({"v": rng.normal(size=80)}))
    s = strayline.Screen(df)
    v = s.qq_coordinates()
    for arr in (v.ordered, v.order, s.mask_array()):
        assert not arr.flags.writeable
    with pytest.raises(TypeError):  # held as its lower half, with no way to write
        v.theoretical[0] = 0.0
