"""Hostile text in the data reaches the page as text: markup is not parsed, scripts do not run,
very long and right-to-left strings do not break the layout."""

from __future__ import annotations

import pytest
from lab import Notebook

pytestmark = pytest.mark.browser

EVIL_IMG = "<img src=x onerror=window.__pwned=1>"
EVIL_SCRIPT = "</script><script>window.__pwned=1</script>"
LONG = "W" * 10_000  # no break opportunity at all
RTL = "قراءة غير طبيعية عند المحطة — קריאה חריגה בתחנה"
EVIL_COLUMN = "<svg onload=window.__pwned=2><b>bold</b>\"'&amp;"
EVIL_LABEL = "<img src=x onerror=window.__pwned=3>"
MAX_CELL = 300  # the panel shortens cell text to this many characters, ending with "…"

CODE = f"""\
import numpy as np
import pandas as pd
import strayline

rng = np.random.default_rng(7)
n = 80
values = rng.normal(10, 1, n)
values[:4] = [40.0, -20.0, 35.0, 30.0]   # outlying, so these rows are flagged and listed
text = ["plain"] * n
text[:4] = [{EVIL_IMG!r}, {EVIL_SCRIPT!r}, "W" * 10_000, {RTL!r}]
labels = [f"r{{i}}" for i in range(n)]
labels[0] = {EVIL_LABEL!r}
hostile = pd.DataFrame({{{EVIL_COLUMN!r}: values, "remark": text,
                         "other": np.arange(n, dtype=float)}}, index=labels)
panel = strayline.panel(hostile, mask="suspect")
panel"""


def test_hostile_text_stays_text(lab_server, notebook_factory, page) -> None:
    nb: Notebook = notebook_factory(lab_server, "hostile.ipynb", CODE)
    nb.open()
    nb.run_all()
    nb.wait_panel()
    table, panel = nb.table, nb.panel

    # the four rows with hostile text are flagged and listed; their text is text
    cells = table.locator("tbody td.sl-cell").evaluate_all("cs => cs.map(c => c.textContent)")
    assert EVIL_IMG in cells
    assert EVIL_SCRIPT in cells
    assert RTL in cells
    shortened = [c for c in cells if c.startswith("WWWW")]
    assert shortened == [LONG[:MAX_CELL - 1] + "…"], [c[:20] for c in shortened]
    rtl_cell = table.locator("tbody td.sl-cell", has_text=RTL).first
    assert rtl_cell.get_attribute("dir") == "auto"
    labels = table.locator("tbody th.sl-label").evaluate_all("cs => cs.map(c => c.textContent)")
    assert EVIL_LABEL in labels

    # the hostile column name, everywhere the panel shows it
    heads = table.locator("thead th[data-column] .sl-head-text").evaluate_all(
        "hs => hs.map(h => h.textContent)")
    assert EVIL_COLUMN in heads
    # (ipywidgets' Dropdown writes spaces in option text as no-break spaces)
    options = panel.locator("select option").evaluate_all(
        "os => os.map(o => o.textContent.replace(/\u00a0/g, ' '))")
    assert EVIL_COLUMN in options
    assert nb.qq.locator("text.axislabel", has_text="svg onload").first.text_content() \
        == EVIL_COLUMN
    assert EVIL_COLUMN in (panel.locator(".sl-summary b").first.text_content() or "")

    # hover and click over the hostile cells: nothing runs
    for text in (EVIL_IMG, EVIL_SCRIPT, RTL):
        table.locator("tbody td.sl-cell", has_text=text).first.hover()
    page.wait_for_timeout(500)
    assert page.evaluate("typeof window.__pwned") == "undefined"
    assert page.evaluate("document.querySelectorAll('img[src=\"x\"]').length") == 0
    assert panel.evaluate(
        "p => p.querySelectorAll('[onerror], [onload], [onmouseover], script').length") == 0
    assert panel.evaluate(
        "p => [...p.querySelectorAll('b')].filter(b => b.textContent === 'bold').length") == 0

    # layout: the table, the panel and the long cell stay inside the notebook
    notebook_box = nb.root.bounding_box()
    for what, box in (("table", table.bounding_box()), ("panel", panel.bounding_box())):
        assert box["width"] <= notebook_box["width"] + 0.5, (what, box, notebook_box)
        assert box["x"] >= notebook_box["x"] - 0.5, (what, box, notebook_box)
    long_cell = table.locator("tbody td.sl-cell", has_text="WWWW").first.bounding_box()
    assert long_cell["width"] < notebook_box["width"] / 2, long_cell
    assert table.locator("tbody tr.sl-row").count() == 4  # "other" is evenly spread: no flags

    page.strayline_log.assert_clean()
