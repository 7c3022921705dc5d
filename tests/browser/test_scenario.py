"""The demo scenario in JupyterLab: brush the Q–Q plot, add, remove, focus a row, keep it, change
k, and check the page and the kernel against an independent computation.

Every expected value here is computed in the test process from the data alone: the Q–Q points
with ``scipy.stats.probplot`` (Filliben plotting positions, normal quantiles) and the default
rule as Tukey fences from numpy's type-7 quartiles. No strayline statistics code is used.
"""

from __future__ import annotations

import re
import time

import numpy as np
import pytest
from lab import PANEL_CODE, Notebook, record_timing
from scipy import stats

import strayline

pytestmark = pytest.mark.browser

COLUMN = "turbidity_ntu"  # the first numeric column: the one the panel opens on
SCREENED = ["turbidity_ntu", "nitrate_mg_l", "dissolved_oxygen_mg_l", "conductivity_us_cm",
            "water_temp_c"]
PAGE = 50  # rows per table page (RowTable.page_size default)
FOCUS_STROKE = "rgb(176, 18, 107)"  # the focus ring's colour (#B0126B)


# --- the independent computation ------------------------------------------------------------

def tukey(values: np.ndarray, k: float) -> tuple[np.ndarray, float, float]:
    """Rows strictly outside [Q1 - k·IQR, Q3 + k·IQR], quartiles by numpy's type-7 rule."""
    present = ~np.isnan(values)
    q1, q3 = np.percentile(values[present], [25, 75])
    lo, hi = q1 - k * (q3 - q1), q3 + k * (q3 - q1)
    with np.errstate(invalid="ignore"):
        return present & ((values < lo) | (values > hi)), float(lo), float(hi)


class Expected:
    """The scenario's data seen from outside strayline."""

    def __init__(self, rows: int):
        self.df = strayline.demo.load(rows=rows)  # the data; nothing computed by strayline
        self.n = rows
        self.v = self.df[COLUMN].to_numpy(dtype=float)
        self.present = ~np.isnan(self.v)
        (self.osm, self.osr), _ = stats.probplot(self.v[self.present], dist="norm")
        self.others = np.zeros(rows, dtype=bool)
        for c in SCREENED:
            if c != COLUMN:
                self.others |= tukey(self.df[c].to_numpy(dtype=float), 1.5)[0]

    def ranks_in(self, x0: float, x1: float, y0: float, y1: float) -> np.ndarray:
        """Which Q–Q points (by rank) lie in the rectangle."""
        x0, x1 = sorted((x0, x1))
        y0, y1 = sorted((y0, y1))
        return (self.osm >= x0) & (self.osm <= x1) & (self.osr >= y0) & (self.osr <= y1)

    def check_same_points(self, positions: list[int], ranks: np.ndarray, what: str) -> None:
        """The rows chosen are the points in the rectangle(s). Tied values share a value but
        not a quantile, and which tied row takes which quantile is the library's business, so
        the check is per value: for every value, as many rows as points in the region."""
        got_v, got_n = np.unique(self.v[np.asarray(positions, dtype=np.int64)],
                                 return_counts=True)
        want_v, want_n = np.unique(self.osr[ranks], return_counts=True)
        assert len(positions) == int(ranks.sum()), (
            f"{what}: {len(positions)} rows marked, {int(ranks.sum())} points in the region")
        np.testing.assert_array_equal(got_v, want_v, err_msg=f"{what}: values differ")
        np.testing.assert_array_equal(got_n, want_n, err_msg=f"{what}: counts per value differ")

    def mask(self, marked: list[int], kept: list[int], k: float = 1.5) -> np.ndarray:
        flag = tukey(self.v, k)[0]
        mine = np.zeros(self.n, dtype=bool)
        mine[marked] = True
        keep = np.zeros(self.n, dtype=bool)
        keep[kept] = True
        return self.others | ((flag | mine) & ~keep & self.present)

    def counts(self, marked: list[int], kept: list[int], k: float = 1.5) -> dict[str, int]:
        flag = tukey(self.v, k)[0]
        mine = np.zeros(self.n, dtype=bool)
        mine[marked] = True
        keep = np.zeros(self.n, dtype=bool)
        keep[kept] = True
        return {"rows": self.n, "flagged": int((flag & ~mine & ~keep).sum()),
                "marked": int((mine & ~keep).sum()), "kept": int(keep.sum()),
                "missing": int((~self.present).sum()),
                "mask": int(self.mask(marked, kept, k).sum())}


# --- kernel read-back ------------------------------------------------------------------------

STATE = {
    "sum": "int(suspect.sum())",
    "sx": "None if panel.qq.brush.selected_x is None else [float(v) for v in "
          "panel.qq.brush.selected_x]",
    "sy": "None if panel.qq.brush.selected_y is None else [float(v) for v in "
          "panel.qq.brush.selected_y]",
    "brushing": "bool(panel.qq.brush.brushing)",
    "error": "panel.last_error",
}
BIG = {
    "marked": "[int(p) for p in panel.screen.marked_positions()]",
    "marked_labels": "panel.screen.labels_of(panel.screen.marked_positions()).tolist()",
    "kept": "[int(p) for p in panel.screen.kept_positions()]",
    "suspect_true": "[int(p) for p in __import__('numpy').flatnonzero(suspect.to_numpy())]",
    "suspect_is_mask": "bool(suspect.equals(panel.mask)) and suspect.index.equals(df.index)",
}


def read_state(nb: Notebook) -> dict:
    state = nb.probe(STATE, BIG)
    assert state["error"] == "", f"the panel reports an error: {state['error']}"
    assert state["suspect_is_mask"], "suspect is not the panel's mask over df's index"
    return state


def check_mask(nb: Notebook, ex: Expected, state: dict, k: float = 1.5) -> None:
    want = ex.mask(state["marked"], state["kept"], k)
    got = np.zeros(ex.n, dtype=bool)
    got[state["suspect_true"]] = True
    bad = np.flatnonzero(got != want)
    assert bad.size == 0, (f"suspect differs from the independent mask on {bad.size} rows, "
                           f"e.g. {ex.df.index[bad[:5]].tolist()}")
    assert state["sum"] == int(want.sum())
    assert state["marked_labels"] == ex.df.index[state["marked"]].tolist()
    assert nb.counts() == ex.counts(state["marked"], state["kept"], k), "counters in the table"


# --- the page --------------------------------------------------------------------------------

def wait_counter_change(nb: Notebook, key: str, before: int, timeout: float = 60_000) -> None:
    nb.page.wait_for_function(
        "([root, key, before]) => { const el = root.querySelector("
        "`[data-count=\"${key}\"] .sl-count-num`);"
        " return el && el.textContent.replace(/\\D/g, '') !== String(before); }",
        arg=[nb.table.element_handle(), key, before], timeout=timeout)
    nb.wait_not_busy()


def stroke(nb: Notebook, ex: Expected, start: tuple[float, float], end: tuple[float, float],
           case: str, what: str) -> tuple[dict, tuple[float, float, float, float]]:
    """Drag over the Q–Q plot from start to end (data coordinates, clamped to the plot area),
    wait for the table to change, and read the state back. Returns the state and the
    rectangle in data coordinates that the mouse covered."""
    nb.qq.scroll_into_view_if_needed()
    g = nb.qq_geometry()
    p0 = g.clamp(*g.page_point(*start))
    p1 = g.clamp(*g.page_point(*end))
    before = nb.counts()["marked"]
    released = nb.drag(p0, p1)
    wait_counter_change(nb, "marked", before)
    record_timing(f"mouse-up to table updated ({what})", case, time.perf_counter() - released)
    covered = (g.x.value(p0[0] - g.left), g.x.value(p1[0] - g.left),
               g.y.value(p0[1] - g.top), g.y.value(p1[1] - g.top))
    state = read_state(nb)
    # the brush reported, in data coordinates, the rectangle the mouse drew (within 1 px)
    assert state["brushing"] is False
    assert state["sx"] is not None and state["sy"] is not None
    tol_x, tol_y = 1.0 / abs(g.x.scale), 1.0 / abs(g.y.scale)
    assert sorted(state["sx"]) == pytest.approx(sorted(covered[:2]), abs=tol_x)
    assert sorted(state["sy"]) == pytest.approx(sorted(covered[2:]), abs=tol_y)
    return state, tuple(state["sx"]) + tuple(state["sy"])  # type: ignore[return-value]


def check_page(nb: Notebook, state: dict, brushed: set[int]) -> None:
    """The table lists the marked rows in their natural order, page 1, and highlights those
    the last stroke covered."""
    ids = nb.row_ids()
    assert ids == sorted(state["marked"])[:PAGE], "the marked view's first page"
    states = nb.table.locator("tbody tr.sl-row").evaluate_all(
        "rows => rows.map(r => r.getAttribute('data-state'))")
    assert set(states) <= {"marked"}, states
    assert nb.table.locator('select[data-role="view"]').input_value() == "marked"
    highlighted = nb.row_ids("tr.sl-brushed")
    assert highlighted == [i for i in ids if i in brushed], "tr.sl-brushed rows"


@pytest.fixture(scope="module", params=[2_000, 1_000_000], ids=["2k", "1M"])
def expected(request: pytest.FixtureRequest) -> Expected:
    return Expected(request.param)


def test_brush_focus_keep_and_k(lab_server, notebook_factory, page, expected: Expected) -> None:
    ex = expected
    case = f"{ex.n:,} rows"
    nb = notebook_factory(lab_server, f"scenario_{ex.n}.ipynb", PANEL_CODE.format(rows=ex.n))

    t0 = time.perf_counter()
    nb.open()
    nb.run_all()
    nb.wait_panel()
    record_timing("notebook open to panel visible", case, time.perf_counter() - t0)
    assert page.locator("text=Error displaying widget").count() == 0

    # before any brush: the rule's flags only
    state = read_state(nb)
    assert state["marked"] == [] and state["kept"] == []
    check_mask(nb, ex, state)
    if ex.n > 100_000:  # what is drawn is thinned; what is marked never is
        drawn = sum(len(m) for m in nb.qq_marks())
        print(f"[info] Q-Q points drawn for {case}: {drawn:,}")
        assert drawn < 10_000

    # 1. replace: the upper tail, x >= 1, value >= 25, up to the top right corner; the flagged
    # values between the fence (about 15) and 25 stay flagged
    nb.qq.scroll_into_view_if_needed()
    g = nb.qq_geometry()
    top, right = g.y.value(0), g.x.value(g.width)
    s1, rect1 = stroke(nb, ex, (1.0, 25.0), (right, top), case, "replace")
    r1 = ex.ranks_in(*rect1)
    assert r1.sum() > 0
    ex.check_same_points(s1["marked"], r1, "replace")
    check_mask(nb, ex, s1)
    check_page(nb, s1, set(s1["marked"]))
    print(f"[info] {case}: replace marked {len(s1['marked']):,}; suspect.sum() = {s1['sum']:,}")

    # 2. add: a band of the middle, -0.5 <= x <= 0, full height
    nb.set_mode("Add")
    bottom = g.y.value(g.height)
    s2, rect2 = stroke(nb, ex, (-0.5, bottom), (0.0, top), case, "add")
    r2 = ex.ranks_in(*rect2)
    ex.check_same_points(s2["marked"], r1 | r2, "replace then add")
    check_mask(nb, ex, s2)
    check_page(nb, s2, set(s2["marked"]) - set(s1["marked"]))

    # 3. remove: part of the added band, -0.25 <= x <= 0.3, drawn from its top right corner
    # (a press inside the standing brush would move it instead of drawing a new one)
    nb.set_mode("Remove")
    s3, rect3 = stroke(nb, ex, (0.3, top), (-0.25, bottom), case, "remove")
    r3 = ex.ranks_in(*rect3)
    assert (r2 & r3).sum() > 0 and (r2 & ~r3).sum() > 0, "remove takes away part of the band"
    ex.check_same_points(s3["marked"], (r1 | r2) & ~r3, "replace, add, remove")
    check_mask(nb, ex, s3)
    check_page(nb, s3, set())

    # 4. click a row (a data cell, not a button): its point gets the focus ring
    on_page = nb.row_ids()
    pick = next(p for p in on_page if not ex.others[p])  # in the mask only through this column
    label = str(ex.df.index[pick])
    row = nb.table.locator(f'tbody tr[data-id="{pick}"]')
    row.locator("td.sl-cell").first.click()
    nb.page.wait_for_function("r => r.classList.contains('sl-focused')",
                              arg=row.element_handle(), timeout=30_000)
    f = nb.probe({"fx": "[float(v) for v in panel.qq.focus.x]",
                  "fy": "[float(v) for v in panel.qq.focus.y]",
                  "table_focus": "int(panel.table.focus)"})
    assert f["table_focus"] == pick
    assert f["fy"] == [ex.v[pick]]
    ties = ex.osm[ex.osr == ex.v[pick]]  # the quantiles of the row's value
    assert len(f["fx"]) == 1 and np.isclose(ties, f["fx"][0], rtol=0, atol=1e-12).any(), (
        f"focus x {f['fx']} is not a normal quantile of value {ex.v[pick]}")
    nb.qq.scroll_into_view_if_needed()
    g = nb.qq_geometry()
    rings = [pt for mark in nb.qq_marks() for pt in mark if pt[2] == FOCUS_STROKE]
    assert len(rings) == 1, f"focus ring points in the SVG: {rings}"
    assert rings[0][0] == pytest.approx(g.x.px(f["fx"][0]), abs=1.5)
    assert rings[0][1] == pytest.approx(g.y.px(f["fy"][0]), abs=1.5)

    # 5. keep that row: the mask drops it and the counters follow
    before = nb.counts()
    t = time.perf_counter()
    row.locator('button[data-action="keep"]').click()
    wait_counter_change(nb, "kept", before["kept"])
    record_timing("Keep click to counters updated", case, time.perf_counter() - t)
    s5 = read_state(nb)
    assert s5["kept"] == [pick]
    assert s5["marked"] == sorted(set(s3["marked"]) - {pick})
    out = nb.run_cell(f"print('kept row in suspect:', bool(suspect[{label!r}]))")
    assert "kept row in suspect: False" in out
    check_mask(nb, ex, s5)
    after = nb.counts()
    assert (after["kept"], after["marked"], after["mask"]) == (
        before["kept"] + 1, before["marked"] - 1, before["mask"] - 1)

    # 6. k = 3: fences, counters and the mask follow
    k_input = nb.number_input("k")
    flagged_before = nb.counts()["flagged"]
    k_input.fill("3")
    t = time.perf_counter()
    k_input.press("Enter")
    nb.panel.locator(".sl-summary", has_text="k = 3").wait_for(timeout=60_000)
    wait_counter_change(nb, "flagged", flagged_before)
    record_timing("k = 3 entered to counters updated", case, time.perf_counter() - t)
    _, lo, hi = tukey(ex.v, 3.0)
    b = nb.probe({"lower": "float(panel.screen.evaluation().bounds.lower)",
                  "upper": "float(panel.screen.evaluation().bounds.upper)",
                  "fence_y": "[[float(v) for v in r] for r in panel.qq.fences.y]",
                  "k": "float(panel.param_input.value)"})
    assert b["k"] == 3.0
    assert (b["lower"], b["upper"]) == pytest.approx((lo, hi), rel=1e-12)
    np.testing.assert_allclose(b["fence_y"], [[lo, lo], [hi, hi]], rtol=1e-12)
    summary = nb.panel.locator(".sl-summary").text_content() or ""
    m = re.search(r"bounds \[([-\d.e+]+), ([-\d.e+]+)\]", summary)
    assert m, summary[:500]
    assert (float(m.group(1)), float(m.group(2))) == pytest.approx((lo, hi), rel=1e-3)
    s6 = read_state(nb)
    assert s6["marked"] == s5["marked"] and s6["kept"] == s5["kept"]
    check_mask(nb, ex, s6, k=3.0)
    # the upper fence line in the SVG sits at Q3 + 3 IQR
    nb.qq.scroll_into_view_if_needed()
    g = nb.qq_geometry()
    paths = nb.qq.locator("svg.svg-figure g[clip-path]").nth(2).locator("path.line")
    ys = [float(v) for d in paths.evaluate_all("ps => ps.map(p => p.getAttribute('d'))")
          for v in re.findall(r"[-\d.e]+,([-\d.e]+)", d)]
    assert any(abs(y - g.y.px(hi)) < 1.5 for y in ys), (ys, g.y.px(hi))

    page.strayline_log.assert_clean()
