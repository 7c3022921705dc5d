"""The Ledger: what it records, save → load → apply on the same data and on a new batch,
the equivalent Python code, and an atomic save.

References: Tukey's fences with numpy.quantile (default linear interpolation), k = 1.5 and 3
(common practice); z-scores with scipy.stats.zscore(ddof=1), |z| > 3 (common practice); the
Box–Cox λ of scipy.stats.boxcox; the pandas groupby of each group for the group-wise rule.
"""

from __future__ import annotations

import datetime as dt
import json
import os
import warnings
from contextlib import contextmanager
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from scipy import stats

import strayline
from strayline import Ledger, LedgerWarning

# --- the user's frame is never modified -----------------------------------------------------


@contextmanager
def no_ledger_warning():
    with warnings.catch_warnings():
        warnings.simplefilter("error", LedgerWarning)
        yield


def tukey_flags(values: np.ndarray, k: float = 1.5) -> np.ndarray:
    """Tukey's fences with numpy's default quantiles; NaN is never flagged."""
    v = values[~np.isnan(values)]
    q1, q3 = np.quantile(v, [0.25, 0.75])
    with np.errstate(invalid="ignore"):
        return (values < q1 - k * (q3 - q1)) | (values > q3 + k * (q3 - q1))


def tukey_bounds(values: np.ndarray, k: float = 1.5) -> tuple[float, float]:
    v = values[~np.isnan(values)]
    q1, q3 = np.quantile(v, [0.25, 0.75])
    return q1 - k * (q3 - q1), q3 + k * (q3 - q1)


def readings(rng: np.random.Generator, n: int) -> np.ndarray:
    v = rng.lognormal(2.0, 0.35, n)
    v[rng.choice(n, 3, replace=False)] *= rng.choice([0.25, 4.0], 3)
    v[rng.random(n) < 0.05] = np.nan
    return v


def make_index(kind: str, n: int, rng: np.random.Generator) -> pd.Index:
    if kind == "string":
        return pd.Index([f"r{i:04d}" for i in range(n)][::-1], name="reading")
    if kind == "int":
        return pd.Index(rng.permutation(n) * 3 + 1000)
    if kind == "datetime_tz":
        return pd.date_range("2025-10-25 20:00", periods=n, freq="13min", tz="Europe/Oslo")
    if kind == "multi":
        return pd.MultiIndex.from_arrays(
            [rng.choice(["Ashdown", "Brook"], n),
             pd.date_range("2025-01-01", periods=n, freq="D")[rng.permutation(n)]],
            names=["site", "day"])
    if kind == "duplicate":
        return pd.Index([f"lot{i}" for i in rng.integers(0, n // 3, n)])
    if kind == "timedelta":
        return pd.to_timedelta(rng.permutation(n), unit="s")
    raise AssertionError(kind)


def screened(df: pd.DataFrame, setup: str) -> strayline.Screen:
    """A screen with settings and hand decisions of every kind."""
    if setup == "grouped":
        s = strayline.Screen(df, columns=["v", "w"], group="site")
        s.configure(rule="robust_z", threshold=3.0)
    else:
        s = strayline.Screen(df, columns=["v", "w"])
        if setup == "log_z":
            s.configure("v", transform="log", rule="zscore", threshold=2.5)
        elif setup == "boxcox_gesd":
            s.configure("v", transform="boxcox", rule="gesd", max_outliers=5)
        s.configure("w", rule="fences", k=3.0)
    v = df["v"].to_numpy()
    present = np.flatnonzero(~np.isnan(v))
    flagged = np.flatnonzero(s.states("v") == 1)
    s.mark_positions(present[[2, 5, 9]], "v")
    s.keep_positions(flagged[:1], "v")
    s.mark_positions(present[[4]], "w")
    s.note_positions(present[[2]], "drift after calibration")
    return s


def frame(n: int, kind: str, seed: int) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    return pd.DataFrame({"rid": np.arange(n), "v": readings(rng, n),
                         "w": rng.normal(7.0, 0.2, n),
                         "site": rng.choice(["east", "west", "north"], n)},
                        index=make_index(kind, n, rng))


SETUPS = ["fences", "log_z", "boxcox_gesd", "grouped"]
KINDS = ["string", "int", "datetime_tz", "multi", "duplicate", "timedelta"]


# --- the document --------------------------------------------------------------------------------


def test_the_document_records_settings_decisions_notes_and_version(tmp_path: Path, hold) -> None:
    df = hold(frame(150, "string", 1))
    s = screened(df, "boxcox_gesd")
    path = s.ledger.save(tmp_path / "ledger.json")
    doc = json.loads(path.read_text(encoding="utf-8"))
    assert doc["format"] == "strayline-ledger" and doc["version"] == 1
    assert doc["library"] == strayline.__version__
    created = dt.datetime.fromisoformat(doc["created"])
    assert created.tzinfo is not None
    assert abs(dt.datetime.now(dt.timezone.utc) - created) < dt.timedelta(minutes=5)
    v, w = doc["columns"]
    assert (v["column"], v["transform"], v["rule"]) == ("v", "boxcox", "gesd")
    present = df["v"].dropna()
    assert v["lmbda"] == pytest.approx(stats.boxcox(present.to_numpy())[1], abs=1e-5)
    assert v["params"] == {"alpha": 0.05, "max_outliers": 5}
    assert v["group"] is None
    assert [m["label"] for m in v["marks"]] == list(present.index[[2, 5, 9]])
    assert [m["value"] for m in v["marks"]] == list(present.iloc[[2, 5, 9]])
    assert len(v["keeps"]) == 1
    assert (w["rule"], w["params"], w["transform"], w["lmbda"]) == ("fences", {"k": 3.0},
                                                                    "none", None)
    lower, upper = tukey_bounds(df["w"].to_numpy(), 3.0)
    assert w["bounds"][0]["lower"] == pytest.approx(lower, rel=1e-12)
    assert w["bounds"][0]["upper"] == pytest.approx(upper, rel=1e-12)
    assert [m["label"] for m in w["marks"]] == [present.index[4]]
    assert doc["notes"] == [{"label": present.index[2], "text": "drift after calibration"}]


# --- replay on the same data -----------------------------------------------------------------


@pytest.mark.parametrize("refit", [True, False])
@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("setup", SETUPS)
def test_save_load_apply_on_the_same_data_gives_the_same_mask(setup: str, kind: str,
                                                              refit: bool, tmp_path: Path,
                                                              hold) -> None:
    df = hold(frame(160, kind, 2))
    s = screened(df, setup)
    assert s.mask.sum() > 0
    path = s.ledger.save(tmp_path / "screening.json")
    loaded = Ledger.load(path)
    with no_ledger_warning():
        replay = loaded.apply(df, refit=refit)
    pd.testing.assert_series_equal(replay, s.mask)
    assert replay.index.equals(df.index)


@pytest.mark.parametrize("kind", ["string", "multi", "duplicate"])
def test_apply_on_the_same_rows_in_another_order(kind: str, hold) -> None:
    df = hold(frame(120, kind, 3))
    s = screened(df, "fences")
    shuffled = hold(df.sample(frac=1, random_state=4))
    with no_ledger_warning():
        m = s.ledger.apply(shuffled)
    assert m.index.equals(shuffled.index)
    p = shuffled["rid"].to_numpy()  # which row of df each shuffled row is
    np.testing.assert_array_equal(m.to_numpy(), s.mask.to_numpy()[p])


# --- replay on a new batch -----------------------------------------------------------------------


def batches(seed: int = 5) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Batch 1 and batch 2: batch 2 repeats rows 0..99 of batch 1 under the same labels, changes
    one value, drops rows 100..199 and brings 120 new rows."""
    rng = np.random.default_rng(seed)
    n = 200
    first = pd.DataFrame({"v": rng.normal(20.0, 1.0, n)},
                         index=pd.Index([f"s{i:03d}" for i in range(n)], name="sample"))
    first.iloc[[7, 150], 0] = [29.0, 11.0]  # two gross errors
    new = pd.DataFrame({"v": rng.normal(20.5, 1.5, 120)},
                       index=pd.Index([f"t{i:03d}" for i in range(120)], name="sample"))
    new.iloc[[3], 0] = [35.0]
    second = pd.concat([first.iloc[:100], new])
    second.loc["s010", "v"] = 24.0  # re-measured
    return first, second


def test_a_new_batch_gets_the_rule_and_the_surviving_hand_decisions(hold) -> None:
    first, second = (hold(f) for f in batches())
    s = strayline.Screen(first)
    s.mark(["s010", "s020", "s120"])  # s010 is re-measured in batch 2, s120 is not in it
    s.keep(["s007", "s150"])  # both flagged in batch 1; s150 is not in batch 2
    assert tukey_flags(first["v"].to_numpy())[[7, 150]].all()
    ledger = Ledger.from_dict(json.loads(s.ledger.to_json()))
    with pytest.warns(LedgerWarning) as caught:
        m = ledger.apply(second)
    msg = "\n".join(str(w.message) for w in caught)
    assert "'s120'" in msg and "'s150'" in msg and msg.count("label not found") == 2
    assert "'s010'" in msg and "value changed" in msg and "24.0" in msg
    assert "'s020'" not in msg and "'s007'" not in msg
    v = second["v"].to_numpy()
    expected = tukey_flags(v)  # refitted on batch 2
    expected[second.index.get_loc("s020")] = True
    expected[second.index.get_loc("s007")] = False
    pd.testing.assert_series_equal(m, pd.Series(expected, index=second.index, name="suspect"))

    # frozen: the bounds fitted on batch 1, the same hand decisions
    lower, upper = tukey_bounds(first["v"].to_numpy())
    expected = (v < lower) | (v > upper)
    expected[second.index.get_loc("s020")] = True
    expected[second.index.get_loc("s007")] = False
    with pytest.warns(LedgerWarning):
        frozen = ledger.apply(second, refit=False)
    np.testing.assert_array_equal(frozen.to_numpy(), expected)
    assert not np.array_equal(frozen.to_numpy(), m.to_numpy())  # the choice matters here


def test_group_wise_rule_on_a_new_batch_is_refitted_per_group(hold) -> None:
    first = hold(frame(240, "string", 6))
    second = hold(frame(300, "int", 7))
    s = strayline.Screen(first, columns="v", group="site")
    s.configure(transform="log", k=2.0)
    with no_ledger_warning():
        m = s.ledger.apply(second)
    y = np.log(second["v"].to_numpy())
    expected = np.zeros(len(second), dtype=bool)
    for _, part in second.reset_index(drop=True).groupby("site"):
        rows = part.index.to_numpy()
        expected[rows] = tukey_flags(y[rows], 2.0)
    np.testing.assert_array_equal(m.to_numpy(), expected)


def test_frozen_bounds_warn_about_a_group_they_do_not_know(hold) -> None:
    first = hold(frame(200, "string", 8))
    second = hold(frame(200, "string", 9).assign(site=lambda d: d["site"].replace(
        "north", "south")))
    ledger = strayline.Screen(first, columns="v", group="site").ledger
    with pytest.warns(LedgerWarning, match="south"):
        ledger.apply(second, refit=False)


def test_a_repeated_label_is_resolved_by_the_value_seen(hold) -> None:
    rng = np.random.default_rng(10)
    df = hold(pd.DataFrame({"v": rng.normal(5, 1, 60)},
                           index=[f"lot{i % 20}" for i in range(60)]))
    s = strayline.Screen(df)
    s.mark_positions([21])  # one of the three rows labelled lot1
    assert df.index[21] == "lot1" and (df.index == "lot1").sum() == 3
    with no_ledger_warning():
        m = s.ledger.apply(df)
    assert m.iloc[21] and not m.iloc[1] and not m.iloc[41]
    pd.testing.assert_series_equal(m, s.mask)


def test_a_repeated_label_and_value_is_resolved_by_its_place_among_them(hold) -> None:
    # rows 3, 8 and 13 share the label "lot3" and the reading 7.5: marking the second of them
    # must replay on that row only, through apply, the file and the generated code
    rng = np.random.default_rng(11)
    v = rng.normal(5, 1, 20)
    v[[3, 8, 13]] = 7.5
    df = hold(pd.DataFrame({"v": v}, index=[f"lot{i % 5}" for i in range(20)]))
    s = strayline.Screen(df)
    s.mark_positions([8])
    s.keep_positions([13])
    assert [d.occurrence for d in s.ledger.columns[0].marks] == [1]
    ledger = Ledger.from_dict(json.loads(s.ledger.to_json()))
    assert [d.occurrence for d in ledger.columns[0].keeps] == [2]
    with no_ledger_warning():
        m = ledger.apply(df)
    assert m.iloc[8] and not m.iloc[3] and not m.iloc[13]
    pd.testing.assert_series_equal(m, s.mask)
    pd.testing.assert_series_equal(run_code(ledger, df), s.mask)
    # on data with fewer such rows the decision is reported, not moved to another row
    with pytest.warns(LedgerWarning, match="keep on .lot3.: row 3 of those with value 7.5"):
        ledger.apply(df.iloc[:10])


@pytest.mark.parametrize("bad", [-1, 1.5, "2", True])
def test_a_bad_occurrence_in_the_file_is_refused(bad) -> None:
    df = pd.DataFrame({"v": np.arange(20.0)}, index=["a"] * 20)
    s = strayline.Screen(df)
    s.mark_positions([4])
    doc = json.loads(s.ledger.to_json())
    doc["columns"][0]["marks"][0]["occurrence"] = bad
    with pytest.raises(strayline.LedgerError, match="occurrence"):
        Ledger.from_dict(doc)


def test_apply_needs_a_dataframe() -> None:
    ledger = strayline.Screen(pd.DataFrame({"v": np.arange(20.0)})).ledger
    with pytest.raises(TypeError, match="DataFrame"):
        ledger.apply(pd.Series(np.arange(20.0), name="v"))


# --- as code ------------------------------------------------------------------------------------


def run_code(ledger: Ledger, df: pd.DataFrame) -> pd.Series:
    namespace: dict = {}
    exec(compile(ledger.to_code(), "<ledger>", "exec"), namespace)
    return namespace["suspect_mask"](df)


@pytest.mark.parametrize("kind", ["string", "datetime_tz", "multi", "duplicate", "timedelta"])
@pytest.mark.parametrize("setup", SETUPS)
def test_code_from_the_ledger_gives_the_same_mask_as_apply(setup: str, kind: str, hold) -> None:
    df = hold(frame(150, kind, 11))
    s = screened(df, setup)
    ledger = Ledger.from_dict(json.loads(s.ledger.to_json()))
    code_mask = run_code(ledger, df)
    pd.testing.assert_series_equal(code_mask, s.mask)
    # and on a new batch with the same labels and some values changed
    other = frame(150, kind, 12)
    other.index = df.index
    for c in ("v", "w"):
        other[c] = np.r_[df[c].to_numpy()[:40], other[c].to_numpy()[40:]]
    hold(other)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LedgerWarning)
        applied = ledger.apply(other)
    pd.testing.assert_series_equal(run_code(ledger, other), applied)


def test_code_handles_nullable_columns_and_odd_column_names(hold) -> None:
    rng = np.random.default_rng(13)
    n = 100
    ints = pd.array(np.where(rng.random(n) < 0.1, None, rng.poisson(40, n)), dtype="Int64")
    df = hold(pd.DataFrame({0: ints, ("temp", "°C"): rng.normal(20, 2, n), "it's": rng.normal(
        size=n)}))
    s = strayline.Screen(df)
    assert s.columns == (0, ("temp", "°C"), "it's")
    s.mark_positions([int(np.flatnonzero(~np.asarray(ints.isna(), dtype=bool))[0])], 0)
    ledger = Ledger.from_dict(json.loads(s.ledger.to_json()))
    pd.testing.assert_series_equal(run_code(ledger, df), s.mask)
    with no_ledger_warning():
        pd.testing.assert_series_equal(ledger.apply(df), s.mask)


@pytest.mark.parametrize("where", ["column", "created"])
def test_code_never_runs_text_from_the_data_or_the_file(where: str, hold) -> None:
    rng = np.random.default_rng(14)
    name = "v\n    hits.append('column') #" if where == "column" else "v"
    df = hold(pd.DataFrame({name: rng.normal(size=50)}))
    doc = json.loads(strayline.Screen(df).ledger.to_json())
    if where == "created":
        doc["created"] = 'x"""; hits.append("created"); """'
    ledger = Ledger.from_dict(doc)
    hits: list[str] = []
    namespace: dict = {"hits": hits}
    exec(compile(ledger.to_code(), "<ledger>", "exec"), namespace)
    namespace["suspect_mask"](df)
    assert hits == []


# --- labels of every kind survive the file -----------------------------------------------------


@pytest.mark.parametrize("index", [
    pd.Index([f"id-{i}" for i in range(40)]),
    pd.Index(np.arange(40) * 11),
    pd.Index(np.arange(40) / 8.0),
    pd.date_range("2025-06-01", periods=40, freq="h", tz="America/Chicago"),
    pd.to_timedelta(np.arange(40), unit="min"),
    pd.MultiIndex.from_product([["a", "b"], pd.date_range("2025-01-01", periods=20)]),
    pd.Index([f"dup{i % 7}" for i in range(40)]),
    pytest.param(pd.Index([dt.date(2025, 1, 1) + dt.timedelta(days=i) for i in range(40)])),
], ids=["str", "int", "float", "datetime_tz", "timedelta", "multi", "duplicate", "date"])
def test_labels_survive_save_and_load(index: pd.Index, tmp_path: Path, hold) -> None:
    rng = np.random.default_rng(15)
    df = hold(pd.DataFrame({"v": rng.normal(size=40)}, index=index))
    s = strayline.Screen(df)
    s.mark_positions([0, 13, 39])
    s.keep_positions([1])
    s.note_positions([13], "check")
    loaded = Ledger.load(s.ledger.save(tmp_path / "l.json"))
    assert [d.label for d in loaded.columns[0].marks] == list(df.index[[0, 13, 39]])
    assert loaded.notes == ((df.index[13], "check"),)
    with no_ledger_warning():
        pd.testing.assert_series_equal(loaded.apply(df), s.mask)


def test_a_nan_index_label_survives_save_and_load(tmp_path: Path, hold) -> None:
    rng = np.random.default_rng(16)
    df = hold(pd.DataFrame({"v": rng.normal(size=30)}, index=[np.nan, *range(29)]))
    s = strayline.Screen(df)
    s.mark_positions([0])
    loaded = Ledger.load(s.ledger.save(tmp_path / "l.json"))
    assert np.isnan(loaded.columns[0].marks[0].label)


def test_the_value_seen_is_the_value_when_the_decision_was_taken() -> None:
    rng = np.random.default_rng(17)
    df = pd.DataFrame({"v": rng.normal(10, 1, 50)})
    original = float(df["v"].iloc[3])
    s = strayline.Screen(df)
    s.mark([3])
    df.loc[3, "v"] = np.nan  # the user sets the suspect value aside in their own frame
    assert s.ledger.columns[0].marks[0].value == original
    assert s.raw()[3] == original


# --- saving is atomic -------------------------------------------------------------------------


@pytest.fixture
def saved(tmp_path: Path, hold):
    """A ledger file on disk and a different ledger to save over it."""
    rng = np.random.default_rng(18)
    df = hold(pd.DataFrame({"v": rng.normal(size=40)}))
    old = strayline.Screen(df).ledger
    path = old.save(tmp_path / "ledger.json")
    s = strayline.Screen(df)
    s.mark_positions([1, 2])
    return path, path.read_bytes(), s.ledger


def boom(*args, **kwargs):
    raise OSError("disk full (simulated)")


def interrupt(*args, **kwargs):
    raise KeyboardInterrupt


@pytest.mark.parametrize("target,fake", [
    ("os.replace", boom), ("os.fsync", boom), ("os.fsync", interrupt),
    ("json.dumps", boom),
], ids=["rename fails", "write fails", "interrupted", "encoding fails"])
def test_an_interrupted_save_leaves_the_old_file_and_no_temporary(target: str, fake, saved,
                                                                  monkeypatch) -> None:
    path, before, new = saved
    module, name = target.split(".")
    monkeypatch.setattr({"os": os, "json": json}[module], name, fake)
    with pytest.raises((OSError, KeyboardInterrupt)):
        new.save(path)
    monkeypatch.undo()
    assert path.read_bytes() == before
    assert sorted(p.name for p in path.parent.iterdir()) == ["ledger.json"]
    Ledger.load(path)  # still a valid ledger


def test_a_save_replaces_the_file(saved) -> None:
    path, before, new = saved
    assert new.save(path) == path
    assert path.read_bytes() != before
    assert len(Ledger.load(path).columns[0].marks) == 2
    assert sorted(p.name for p in path.parent.iterdir()) == ["ledger.json"]


def test_a_saved_ledger_has_the_permissions_of_an_ordinary_file(tmp_path: Path) -> None:
    ledger = strayline.Screen(pd.DataFrame({"v": np.random.default_rng(19).normal(size=20)})
                              ).ledger
    plain = tmp_path / "plain.txt"
    plain.write_text("x")
    path = ledger.save(tmp_path / "ledger.json")
    assert (path.stat().st_mode & 0o777) == (plain.stat().st_mode & 0o777)
