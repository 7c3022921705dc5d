"""The panel follows JupyterLab's light and dark themes: screenshots of both, and the computed
colours checked (WCAG 2 contrast ratios), not only that a picture exists.

With STRAYLINE_SCREENSHOTS=docs (``make screenshots``) the two pictures are also written to
docs/panel-light.png and docs/panel-dark.png."""

from __future__ import annotations

import os
import shutil
from collections.abc import Iterator
from pathlib import Path

import pytest
from lab import PANEL_CODE, ConsoleLog, Notebook, contrast, luminance, write_notebook

pytestmark = pytest.mark.browser

DOCS = Path(__file__).resolve().parents[2] / "docs"
THEMES_PLUGIN = "/lab/api/settings/@jupyterlab/apputils-extension:themes"

#: Computed colours of the parts of the panel; the Q–Q figure's marks are, in order, the
#: band, the reference line, the fences and the point marks (see the figure's DOM).
_COLOURS_JS = """el => {
  const panel = el.closest('.sl-panel');
  const qq = panel.querySelector('.sl-qq');
  const css = (node, prop) => node ? getComputedStyle(node)[prop] : '';
  const marks = qq.querySelectorAll('svg.svg-figure g[clip-path]');
  return {
    background: css(el, 'backgroundColor'), text: css(el, 'color'),
    counter_label: css(el.querySelector('.sl-count-label'), 'color'),
    summary: css(panel.querySelector('.sl-summary-box'), 'color'),
    tick: css(qq.querySelector('svg.svg-background g.tick text'), 'fill'),
    axis_label: css(qq.querySelector('text.axislabel'), 'fill'),
    widget_label: css(panel.querySelector('.widget-label'), 'color'),
    reference_line: css(marks[1] && marks[1].querySelector('path.line'), 'stroke'),
    notebook: css(document.querySelector(
      '.jp-NotebookPanel:not(.lm-mod-hidden) .jp-Notebook'), 'backgroundColor'),
  };
}"""


def shoot(nb: Notebook, out: Path, name: str) -> Path:
    nb.page.mouse.move(2, 2)  # away from the figure: bqplot's toolbar shows while hovered
    nb.page.wait_for_timeout(800)
    nb.panel.scroll_into_view_if_needed()
    box = nb.panel.bounding_box()
    height = min(box["height"], 1250)  # controls, plots, summary and the first table rows
    path = out / name
    nb.page.screenshot(path=str(path), clip={"x": box["x"], "y": box["y"],
                                             "width": box["width"], "height": height})
    if os.environ.get("STRAYLINE_SCREENSHOTS") == "docs":
        DOCS.mkdir(exist_ok=True)
        shutil.copyfile(path, DOCS / name)
    return path


def set_theme(nb: Notebook, theme: str, light: bool) -> None:
    nb.menu("Settings", "Theme", theme)
    nb.page.locator(f'body[data-jp-theme-name="{theme}"]'
                    f'[data-jp-theme-light="{str(light).lower()}"]').wait_for(
        state="attached", timeout=30_000)
    # the theme's style sheet is in once the notebook's background has the theme's colour
    nb.page.wait_for_function(
        "light => { const c = getComputedStyle(document.querySelector("
        "'.jp-NotebookPanel:not(.lm-mod-hidden) .jp-Notebook')).backgroundColor;"
        " const n = c.match(/\\d+/g).slice(0, 3).map(Number);"
        " const sum = n[0] + n[1] + n[2]; return light ? sum > 600 : sum < 150; }",
        arg=light, timeout=30_000)
    nb.page.wait_for_timeout(500)


@pytest.fixture(scope="module")
def seen(lab_server, chromium, output_dir) -> Iterator[dict]:
    """Open the demo panel, brush the upper tail, then read colours and take a screenshot in
    the light theme and again after switching to the dark theme with the Settings menu."""
    write_notebook(lab_server.root, "themes.ipynb", PANEL_CODE.format(rows=2000))
    page = chromium.new_page()
    log = ConsoleLog()
    page.on("console", log.on_console)
    page.on("pageerror", log.on_page_error)
    page.set_viewport_size({"width": 1280, "height": 1600})
    nb = Notebook(page, lab_server, "themes.ipynb")
    try:
        nb.open()
        start = page.get_attribute("body", "data-jp-theme-name")
        nb.run_all()
        nb.wait_panel()
        nb.qq.scroll_into_view_if_needed()
        g = nb.qq_geometry()
        before = nb.counts()["marked"]
        nb.drag(g.clamp(*g.page_point(1.2, 20.0)), g.clamp(g.left + g.width, g.top))
        page.wait_for_function(
            "([el, n]) => el.querySelector('[data-count=\"marked\"] .sl-count-num')"
            ".textContent !== String(n)", arg=[nb.table.element_handle(), before])
        nb.wait_not_busy()
        result = {"start": start, "log": log}
        result["toggles"] = nb.panel.locator(".widget-toggle-buttons button").evaluate_all(
            "bs => bs.map(b => [b.textContent.trim(), b.scrollWidth, b.clientWidth])")
        result["light"] = nb.table.evaluate(_COLOURS_JS)
        result["light_png"] = shoot(nb, output_dir, "panel-light.png")
        set_theme(nb, "JupyterLab Dark", light=False)
        result["dark"] = nb.table.evaluate(_COLOURS_JS)
        result["dark_png"] = shoot(nb, output_dir, "panel-dark.png")
        print(f"[info] screenshots: {result['light_png']} {result['dark_png']}")
        yield result
    finally:
        # the server is shared: leave it in the light theme, and stop this kernel
        lab_server.api("PUT", THEMES_PLUGIN, {"raw": '{"theme": "JupyterLab Light"}'})
        for s in lab_server.api("GET", "/api/sessions") or []:
            if s.get("path", "").endswith("themes.ipynb"):
                lab_server.api("DELETE", f"/api/sessions/{s['id']}")
        page.close()


def test_screenshots_written(seen: dict) -> None:
    for key in ("light_png", "dark_png"):
        data = seen[key].read_bytes()
        assert data[:8] == b"\x89PNG\r\n\x1a\n" and len(data) > 20_000, seen[key]
    assert seen["light_png"].read_bytes() != seen["dark_png"].read_bytes()


def test_light_theme_colours(seen: dict) -> None:
    c = seen["light"]
    assert seen["start"] == "JupyterLab Light"
    assert luminance(c["background"]) > 0.8, c   # a light background
    assert luminance(c["text"]) < 0.1, c         # dark text
    assert contrast(c["background"], c["text"]) > 7, c
    for part in ("counter_label", "summary", "tick", "axis_label", "widget_label"):
        assert contrast(c["notebook"], c[part]) > 4.5, (part, c)
    assert contrast(c["notebook"], c["reference_line"]) >= 3, c


def test_dark_theme_colours(seen: dict) -> None:
    c = seen["dark"]
    assert luminance(c["background"]) < 0.05, c  # a dark background
    assert luminance(c["text"]) > 0.5, c         # light text
    assert contrast(c["background"], c["text"]) > 7, c
    assert c["background"] != seen["light"]["background"]
    for part in ("counter_label", "summary", "tick", "axis_label", "widget_label"):
        assert contrast(c["notebook"], c[part]) > 4.5, (part, c)


def test_dark_theme_reference_line_visible(seen: dict) -> None:
    c = seen["dark"]
    assert contrast(c["notebook"], c["reference_line"]) >= 3, c


def test_brush_mode_labels_fit(seen: dict) -> None:
    labels = [t[0] for t in seen["toggles"]]
    assert labels == ["Replace", "Add", "Remove"], seen["toggles"]
    clipped = [t for t in seen["toggles"] if t[1] > t[2]]
    assert clipped == [], f"clipped labels (text, scrollWidth, clientWidth): {clipped}"


def test_no_errors_from_our_code(seen: dict) -> None:
    seen["log"].assert_clean()
