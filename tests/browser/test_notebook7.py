"""The same notebook renders the panel in Notebook 7 (`jupyter notebook`), on a server of its
own, and its first brush stroke reaches the kernel."""

from __future__ import annotations

import time

import numpy as np
import pytest
from lab import PANEL_CODE, Notebook, record_timing

import strayline

pytestmark = pytest.mark.browser

SCREENED = ["turbidity_ntu", "nitrate_mg_l", "dissolved_oxygen_mg_l", "conductivity_us_cm",
            "water_temp_c"]


def tukey_any(df, k: float = 1.5) -> np.ndarray:
    """Rows strictly outside numpy type-7 Tukey fences in any screened column."""
    out = np.zeros(len(df), dtype=bool)
    for c in SCREENED:
        v = df[c].to_numpy(dtype=float)
        ok = ~np.isnan(v)
        q1, q3 = np.percentile(v[ok], [25, 75])
        with np.errstate(invalid="ignore"):
            out |= ok & ((v < q1 - k * (q3 - q1)) | (v > q3 + k * (q3 - q1)))
    return out


def test_panel_in_notebook7(notebook7_server, notebook_factory, page) -> None:
    nb: Notebook = notebook_factory(notebook7_server, "notebook7.ipynb",
                                    PANEL_CODE.format(rows=2000))
    t0 = time.perf_counter()
    nb.open()
    assert "/notebooks/notebook7.ipynb" in page.url
    assert page.locator("#main-panel, .jp-NotebookShell, #jp-main-dock-panel").count() > 0
    assert page.locator(".jp-LabShell").count() == 0  # this is not JupyterLab
    nb.run_all()
    nb.wait_panel()
    record_timing("notebook open to panel visible (Notebook 7)", "2,000 rows",
                  time.perf_counter() - t0)

    df = strayline.demo.load(rows=2000)
    v = df["turbidity_ntu"].to_numpy(dtype=float)
    ok = ~np.isnan(v)
    q1, q3 = np.percentile(v[ok], [25, 75])
    flagged = int((ok & ((v < q1 - 1.5 * (q3 - q1)) | (v > q3 + 1.5 * (q3 - q1)))).sum())
    counts = nb.counts()
    assert counts == {"rows": 2000, "flagged": flagged, "marked": 0, "kept": 0,
                      "missing": int((~ok).sum()), "mask": int(tukey_any(df).sum())}
    assert nb.qq.locator("svg.svg-figure g.object_grp").count() == int(ok.sum())  # all drawn
    assert nb.table.locator("tbody tr.sl-row").count() == 50  # the first page of flagged rows

    # a brush stroke over the upper tail reaches the kernel
    nb.qq.scroll_into_view_if_needed()
    g = nb.qq_geometry()
    released = nb.drag(g.clamp(*g.page_point(1.0, 25.0)), g.clamp(g.left + g.width, g.top))
    page.wait_for_function(
        "el => el.querySelector('[data-count=\"marked\"] .sl-count-num').textContent !== '0'",
        arg=nb.table.element_handle(), timeout=60_000)
    record_timing("mouse-up to table updated (Notebook 7)", "2,000 rows",
                  time.perf_counter() - released)
    state = nb.probe({"sum": "int(suspect.sum())", "marked": "len(panel.screen.marked_positions())",
                      "sx": "[float(x) for x in panel.qq.brush.selected_x]"})
    assert state["marked"] == nb.counts()["marked"] > 0
    assert min(state["sx"]) == pytest.approx(1.0, abs=1.0 / abs(g.x.scale))
    assert nb.table.locator("tbody tr.sl-brushed").count() == min(50, state["marked"])
    page.strayline_log.assert_clean()
