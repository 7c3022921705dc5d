"""The panel driven headless, the way the front-end drives it: brush traits, table requests,
control changes. References: scipy.stats.probplot for Q–Q coordinates, numpy.quantile for the
fences (Tukey's 1.5·IQR rule, common practice)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy import stats

import strayline
from strayline.view.panel import Panel


def frame(n: int = 400, seed: int = 7) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    x = rng.lognormal(1.0, 0.5, n)
    x[:3] = [40.0, 55.0, 0.2]
    return pd.DataFrame({"x": x, "y": rng.normal(10, 2, n), "site": rng.choice(list("PQR"), n)},
                        index=pd.Index([f"r{i:04d}" for i in range(n)][::-1], name="id"))


def probplot_points(values: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Q–Q coordinates of each present value, by row: (quantile, value, present)."""
    present = ~np.isnan(values)
    (osm, osr), _ = stats.probplot(values[present], dist="norm", fit=True)
    order = np.argsort(values[present], kind="stable")
    q = np.full(values.size, np.nan)
    q[np.flatnonzero(present)[order]] = osm
    return q, values, present


def tukey_flags(values: np.ndarray, k: float = 1.5) -> np.ndarray:
    v = values[~np.isnan(values)]
    q1, q3 = np.quantile(v, [0.25, 0.75])
    with np.errstate(invalid="ignore"):
        return (values < q1 - k * (q3 - q1)) | (values > q3 + k * (q3 - q1))


def stroke(panel: Panel, x0: float, x1: float, y0: float, y1: float) -> None:
    """What bqplot's BrushSelector does during and at the end of a drag."""
    b = panel.qq.brush
    b.brushing = True
    b.selected_x = np.array([x0, (x0 + x1) / 2])  # streamed while dragging
    b.selected_y = np.array([y0, y1])
    b.selected_x = np.array([x0, x1])
    b.brushing = False


@pytest.fixture
def df() -> pd.DataFrame:
    return frame()


def test_brush_marks_rows_writes_namespace_and_pages_table(df: pd.DataFrame) -> None:
    ns: dict = {}
    p = strayline.panel(df, mask="suspect", namespace=ns)
    before = df.copy(deep=True)
    q, v, present = probplot_points(df["x"].to_numpy())
    x0, x1, y0, y1 = 0.5, 3.0, 2.0, 60.0
    expected = present & (q >= x0) & (q <= x1) & (v >= y0) & (v <= y1)
    stroke(p, x0, x1, y0, y1)
    marked = np.zeros(len(df), bool)
    marked[p.screen.marked_positions()] = True
    np.testing.assert_array_equal(marked, expected)
    flagged = tukey_flags(df["x"].to_numpy()) | tukey_flags(df["y"].to_numpy())
    want = pd.Series(expected | flagged, index=df.index)
    pd.testing.assert_series_equal(ns["suspect"], want, check_names=False)
    assert ns["suspect"].name == "suspect" and p.mask.equals(ns["suspect"])
    assert p.table.view == "marked"
    assert p.table.counts["marked"] == expected.sum() == p.table.total
    page_ids = [r["id"] for r in p.table.rows]
    assert page_ids == sorted(np.flatnonzero(expected))[: p.table.page_size]
    assert set(p.table.brushed) == set(page_ids)
    assert all(r["state"] == "marked" for r in p.table.rows)
    pd.testing.assert_frame_equal(df, before)


def test_brush_modes_add_and_remove(df: pd.DataFrame) -> None:
    p = strayline.panel(df, mask="m", namespace={})
    q, v, present = probplot_points(df["x"].to_numpy())

    def box(a: float, b: float, c: float, d: float) -> np.ndarray:
        return present & (q >= a) & (q <= b) & (v >= c) & (v <= d)

    stroke(p, 1.0, 3.0, 0.0, 100.0)
    p.mode_select.value = "add"
    stroke(p, -3.0, -1.5, 0.0, 100.0)
    want = box(1.0, 3.0, 0.0, 100.0) | box(-3.0, -1.5, 0.0, 100.0)
    assert set(p.screen.marked_positions()) == set(np.flatnonzero(want))
    p.mode_select.value = "remove"
    stroke(p, 2.0, 3.0, 0.0, 100.0)
    want &= ~box(2.0, 3.0, 0.0, 100.0)
    assert set(p.screen.marked_positions()) == set(np.flatnonzero(want))
    assert p.table.counts["marked"] == want.sum()


def test_brush_waits_for_the_drag_to_end(df: pd.DataFrame) -> None:
    p = strayline.panel(df, namespace={})
    b = p.qq.brush
    b.brushing = True
    b.selected_x = np.array([0.0, 3.0])
    b.selected_y = np.array([0.0, 100.0])
    assert p.screen.marked_positions().size == 0  # nothing happens mid-drag
    b.brushing = False
    assert p.screen.marked_positions().size > 0


def test_table_click_highlights_the_point(df: pd.DataFrame) -> None:
    p = strayline.panel(df, namespace={})
    q, v, _ = probplot_points(df["x"].to_numpy())
    pos = int(np.argmax(v))
    assert p.table.request("row", action="focus", id=pos)
    assert p.table.focus == pos
    np.testing.assert_allclose(p.qq.focus.x, [q[pos]])
    np.testing.assert_allclose(p.qq.focus.y, [v[pos]])


def test_keep_and_mark_from_the_table_change_mask(df: pd.DataFrame) -> None:
    ns: dict = {}
    p = strayline.panel(df, mask="suspect", namespace=ns)
    top = int(np.argmax(df["x"].to_numpy()))  # 55.0: far outside the fences
    assert ns["suspect"].iloc[top]
    p.table.request("row", action="keep", id=top)
    assert not ns["suspect"].iloc[top]
    assert p.screen.states()[top] == 3
    p.table.request("row", action="clear", id=top)
    assert ns["suspect"].iloc[top]
    quiet = int(np.argsort(df["x"].to_numpy())[len(df) // 2])
    p.table.request("row", action="mark", id=quiet)
    assert ns["suspect"].iloc[quiet]
    p.undo_button.click()
    assert not ns["suspect"].iloc[quiet]
    p.redo_button.click()
    assert ns["suspect"].iloc[quiet]


def test_note_from_the_table_reaches_rows_and_ledger(df: pd.DataFrame) -> None:
    p = strayline.panel(df, namespace={})
    pos = int(np.argmax(df["x"].to_numpy()))
    p.table.request("note", id=pos, text="probe fouled: see log 17")
    assert p.screen.rows().loc[df.index[pos], "note"] == "probe fouled: see log 17"
    assert (df.index[pos], "probe fouled: see log 17") in p.ledger.notes


def test_changing_k_moves_fences_counts_and_mask(df: pd.DataFrame) -> None:
    ns: dict = {}
    p = strayline.panel(df, mask="suspect", namespace=ns)
    x = df["x"].to_numpy()
    q1, q3 = np.quantile(x, [0.25, 0.75])
    np.testing.assert_allclose(p.qq.fences.y[:, 0], [q1 - 1.5 * (q3 - q1), q3 + 1.5 * (q3 - q1)])
    assert p.table.counts["flagged"] == tukey_flags(x).sum()
    p.param_input.value = 3.0
    np.testing.assert_allclose(p.qq.fences.y[:, 0], [q1 - 3 * (q3 - q1), q3 + 3 * (q3 - q1)])
    np.testing.assert_allclose(p.hist.fences.x[:, 0], [q1 - 3 * (q3 - q1), q3 + 3 * (q3 - q1)])
    assert p.table.counts["flagged"] == tukey_flags(x, 3.0).sum()
    want = tukey_flags(x, 3.0) | tukey_flags(df["y"].to_numpy())
    np.testing.assert_array_equal(ns["suspect"].to_numpy(), want)


def test_changing_scale_redraws_on_the_log_scale(df: pd.DataFrame) -> None:
    p = strayline.panel(df, namespace={})
    p.transform_select.value = "log"
    logx = np.log(df["x"].to_numpy())
    (osm, osr), (slope, intercept, r) = stats.probplot(logx, dist="norm")
    drawn = np.concatenate([p.qq.plain.y, p.qq.flagged.y, p.qq.marked.y, p.qq.kept.y])
    assert np.isin(drawn, osr).all() and drawn.size == logx.size  # small n: all drawn
    np.testing.assert_allclose(p.qq.line.y, intercept + slope * p.qq.line.x)
    q1, q3 = np.quantile(logx, [0.25, 0.75])
    np.testing.assert_allclose(p.qq.fences.y[:, 0], [q1 - 1.5 * (q3 - q1), q3 + 1.5 * (q3 - q1)])
    assert "log" in p.qq.y_axis.label


def test_rule_change_shows_the_rules_parameter(df: pd.DataFrame) -> None:
    p = strayline.panel(df, namespace={})
    p.rule_select.value = "zscore"
    assert p.param_input.description == "threshold" and p.param_input.value == 3.0
    x = df["x"].to_numpy()
    z = (x - x.mean()) / x.std(ddof=1)  # |z| > 3, common practice
    assert p.table.counts["flagged"] == (np.abs(z) > 3).sum()
    p.rule_select.value = "gesd"
    assert p.max_input.layout.display is None and p.param_input.description == "alpha"


def test_a_failing_change_shows_the_error_and_keeps_the_last_good_state() -> None:
    df = frame()
    df["x"] = df["x"] - 5.0  # negatives: no log
    ns: dict = {}
    p = strayline.panel(df, mask="suspect", namespace=ns)
    before = ns["suspect"].copy()
    p.transform_select.value = "log"
    assert "log transformation needs positive values" in p.table.error
    assert p.screen.settings().transform == "none" and p.transform_select.value == "none"
    pd.testing.assert_series_equal(ns["suspect"], before)
    p.transform_select.value = "yeojohnson"
    assert p.table.error == ""


def test_sorting_and_paging_from_the_table(df: pd.DataFrame) -> None:
    p = strayline.panel(df, namespace={})
    p.table.request("view", value="all")
    assert p.table.total == len(df)
    p.table.request("sort", column="x", ascending=False)
    got = [float(r["cells"][p.table.columns.index("x")]) for r in p.table.rows]
    want = np.sort(df["x"].to_numpy())[::-1][: p.table.page_size]
    np.testing.assert_allclose(got, want, rtol=1e-5)
    p.table.request("page", page=2)
    assert p.table.page == 2 and p.table.rows[0]["id"] == int(np.argsort(-df["x"].to_numpy(),
                                                                          kind="stable")[100])


def test_hostile_text_is_sent_as_text_not_markup() -> None:
    df = frame(60)
    df["<b>name</b>"] = ["<img src=x onerror=alert(1)>"] * 60
    p = strayline.panel(df, columns=["x"], namespace={})
    p.table.request("view", value="all")
    assert "<b>name</b>" in p.table.columns
    assert p.table.rows[0]["cells"][p.table.columns.index("<b>name</b>")] == \
        "<img src=x onerror=alert(1)>"
    assert "<img" not in p.summary_html.value  # the summary is escaped HTML


def test_mask_variable_is_not_clobbered() -> None:
    df = frame(60)
    ns = {"suspect": [1, 2, 3]}
    with pytest.raises(ValueError, match="already has a variable 'suspect'"):
        strayline.panel(df, mask="suspect", namespace=ns)
    assert ns["suspect"] == [1, 2, 3]


def test_thinning_draws_every_special_point_and_a_bounded_total() -> None:
    rng = np.random.default_rng(3)
    n = 200_000
    x = rng.normal(size=n)
    df = pd.DataFrame({"x": x})
    p = strayline.panel(df, namespace={})
    drawn = p.qq.plain.x.size + p.qq.flagged.x.size
    assert drawn < 5000
    assert p.qq.flagged.y.size == tukey_flags(x).sum()  # every flagged point is drawn
    # brushing still selects over all rows, not the drawn ones
    p.brush(-0.5, 0.5, -10, 10)
    q, v, present = probplot_points(x)
    assert p.screen.marked_positions().size == ((q >= -0.5) & (q <= 0.5)).sum()


@pytest.mark.slow
def test_no_update_exceeds_one_megabyte_at_a_million_rows(comm_log: list) -> None:
    rng = np.random.default_rng(11)
    n = 1_000_000
    df = pd.DataFrame({"a": rng.lognormal(size=n), "b": rng.normal(size=n),
                       "label": np.repeat(np.array(["x" * 200]), n)})
    p = strayline.panel(df, mask="s", namespace={})
    first = [size for _, size in comm_log]
    assert first and max(first) < 1_000_000
    del comm_log[:]
    p.brush(0.0, 5.0, -1e9, 1e9)
    p.table.request("view", value="all")
    p.table.request("sort", column="a", ascending=False)
    p.param_input.value = 3.0
    p.transform_select.value = "log"
    sizes = [size for _, size in comm_log]
    assert sizes and max(sizes) < 1_000_000
    assert p.table.counts["marked"] == p.screen.marked_positions().size > 100_000
