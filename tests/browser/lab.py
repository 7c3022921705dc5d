"""Drive a notebook holding a strayline panel in JupyterLab or Notebook 7 through Playwright.

Only what a user can do is used: menus, the keyboard, the mouse over the plot, clicks in the
table. State inside the kernel is read back by typing a new cell that prints it (and, for long
lists, writes them to a JSON file next to the notebook, which the test reads).
"""

from __future__ import annotations

import json
import re
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import nbformat
from playwright.sync_api import Locator, Page

CHROMIUM = "/usr/bin/chromium"
CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
                 "--no-first-run", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync"]

#: The notebook panel in view (JupyterLab keeps hidden ones in the DOM; Notebook 7 has one).
VISIBLE_NOTEBOOK = ".jp-NotebookPanel:not(.lm-mod-hidden)"

#: The scenario's first cell, exactly as a user would write it.
PANEL_CODE = ("import strayline\n"
              "df = strayline.demo.load(rows={rows})\n"
              "panel = strayline.panel(df, mask=\"suspect\")\n"
              "panel")


#: (what, case, seconds) measured during the run; printed at the end, never asserted.
TIMINGS: list[tuple[str, str, float]] = []


def record_timing(what: str, case: str, seconds: float) -> None:
    TIMINGS.append((what, case, seconds))
    print(f"[timing] {what} [{case}]: {seconds:.2f} s")


def write_notebook(folder: Path, name: str, *sources: str) -> Path:
    nb = nbformat.v4.new_notebook()
    nb.cells = [nbformat.v4.new_code_cell(s) for s in sources]
    nb.metadata["kernelspec"] = {"name": "python3", "display_name": "Python 3 (ipykernel)",
                                 "language": "python"}
    nb.metadata["language_info"] = {"name": "python"}
    path = folder / name
    nbformat.write(nb, path)
    return path


def luminance(css_colour: str) -> float:
    """Relative luminance (WCAG 2) of a computed CSS colour such as ``rgb(17, 17, 17)``."""
    numbers = [float(v) for v in re.findall(r"[\d.]+", css_colour)[:3]]
    if len(numbers) < 3:
        raise ValueError(f"not an rgb colour: {css_colour!r}")

    def channel(c: float) -> float:
        c /= 255
        return c / 12.92 if c <= 0.04045 else ((c + 0.055) / 1.055) ** 2.4

    r, g, b = (channel(c) for c in numbers)
    return 0.2126 * r + 0.7152 * g + 0.0722 * b


def contrast(a: str, b: str) -> float:
    la, lb = sorted((luminance(a), luminance(b)), reverse=True)
    return (la + 0.05) / (lb + 0.05)


@dataclass
class Axis:
    """Pixel position = offset + scale * value, fitted to an axis' tick marks."""

    offset: float
    scale: float

    def px(self, value: float) -> float:
        return self.offset + self.scale * value

    def value(self, px: float) -> float:
        return (px - self.offset) / self.scale


def _tick_number(text: str) -> float:
    text = text.strip().replace("\u2212", "-")
    factor = 1.0
    for suffix, f in (("k", 1e3), ("M", 1e6), ("m", 1e-3), ("µ", 1e-6)):
        if text.endswith(suffix):
            text, factor = text[:-1], f
    return float(text) * factor


def fit_axis(ticks: list[tuple[float, str]]) -> Axis:
    pts = [(_tick_number(t), p) for p, t in ticks if t.strip()]
    if len(pts) < 2:
        raise AssertionError(f"too few axis ticks to read the scale: {ticks}")
    (v0, p0), (v1, p1) = pts[0], pts[-1]
    scale = (p1 - p0) / (v1 - v0)
    axis = Axis(p0 - scale * v0, scale)
    for v, p in pts:  # the scale is linear: every tick must sit on the fitted line
        assert abs(axis.px(v) - p) < 0.5, f"axis ticks are not linear: {pts}"
    return axis


_QQ_GEOMETRY_JS = """fig => {
  const bg = fig.querySelector('svg.svg-background rect.plotarea_background');
  const ov = fig.querySelector('svg.svg-figure rect.overlay');
  const axes = [...fig.querySelectorAll('svg.svg-background g.axis')];
  const ticks = axes.map(a => [...a.querySelectorAll('g.tick')].map(t => {
    const m = /translate\\(\\s*([-\\d.e]+)[ ,]+([-\\d.e]+)/.exec(t.getAttribute('transform'));
    return [parseFloat(m[1]), parseFloat(m[2]), t.textContent];
  }));
  const box = r => { const b = r.getBoundingClientRect();
                     return {x: b.x, y: b.y, width: b.width, height: b.height}; };
  return {background: box(bg), overlay: box(ov), ticks};
}"""

_QQ_MARKS_JS = """fig => {
  const groups = [...fig.querySelectorAll('svg.svg-figure g[clip-path]')];
  return groups.map(g => [...g.querySelectorAll(':scope > g.object_grp')].map(o => {
    const m = /translate\\(\\s*([-\\d.e]+)[ ,]+([-\\d.e]+)/.exec(o.getAttribute('transform'));
    const dot = o.querySelector('path.dot');
    const st = dot ? getComputedStyle(dot) : null;
    return [parseFloat(m[1]), parseFloat(m[2]), st ? st.stroke : '', st ? st.fill : ''];
  }));
}"""


@dataclass
class QQGeometry:
    left: float   # page coordinates of the plot area's top-left corner
    top: float
    width: float
    height: float
    x: Axis       # plot-area pixels <-> data
    y: Axis

    def page_point(self, qx: float, qy: float) -> tuple[float, float]:
        return self.left + self.x.px(qx), self.top + self.y.px(qy)

    def clamp(self, px: float, py: float, margin: float = 3.0) -> tuple[float, float]:
        return (min(max(px, self.left + margin), self.left + self.width - margin),
                min(max(py, self.top + margin), self.top + self.height - margin))


class Notebook:
    """One open notebook in the page."""

    def __init__(self, page: Page, server: Any, name: str, app: str = "lab"):
        self.page = page
        self.server = server
        self.url = server.url
        self.name = name
        self.app = app
        self.root = page.locator(VISIBLE_NOTEBOOK)
        self.probe_count = 0
        self.folder: Path | None = None

    # --- opening and running -------------------------------------------------------------

    def open(self) -> float:
        """Open the notebook and wait for its kernel; returns the time the click took."""
        t0 = time.perf_counter()
        path = f"/lab/tree/{self.name}?reset" if self.app == "lab" else f"/notebooks/{self.name}"
        self.page.goto(self.url + path)
        self.page.locator(f"{VISIBLE_NOTEBOOK} .jp-Cell").first.wait_for(timeout=90_000)
        self.wait_kernel()
        return time.perf_counter() - t0

    def wait_kernel(self, timeout: float = 90) -> None:
        """Wait until the notebook's kernel is started, connected to the page and idle (two
        looks in a row). Running cells before that can start a second kernel that replaces
        the first and loses the request."""
        deadline = time.monotonic() + timeout
        seen = None
        while time.monotonic() < deadline:
            ready = [s["kernel"]["id"] for s in self.server.api("GET", "/api/sessions")
                     if s.get("path", "").endswith(self.name) and s.get("kernel")
                     and s["kernel"].get("execution_state") == "idle"
                     and s["kernel"].get("connections", 0) >= 1]
            if len(ready) == 1 and ready[0] == seen:
                return
            seen = ready[0] if len(ready) == 1 else None
            time.sleep(0.4)
        raise AssertionError(f"the kernel of {self.name} did not become ready in {timeout} s")

    def menu(self, *path: str) -> None:
        """Click through the menu bar, e.g. ``menu("Run", "Run All Cells")``."""
        top = re.compile(f"^{path[0]}$")
        self.page.locator(".lm-MenuBar-itemLabel", has_text=top).first.click()
        for item in path[1:]:
            entry = self.page.locator(".lm-Menu:visible .lm-Menu-item",
                                      has=self.page.locator(".lm-Menu-itemLabel",
                                                            has_text=re.compile(f"^{item}$")))
            entry.first.hover()
            entry.first.click()

    def run_all(self) -> None:
        self.menu("Run", "Run All Cells")
        # the first cell shows [*] or a number once the kernel has it
        self.root.locator(".jp-Cell .jp-InputPrompt").first.filter(
            has_text=re.compile(r"\[(\*|\d+)\]")).wait_for(timeout=30_000)

    @property
    def panel(self) -> Locator:
        return self.root.locator(".sl-panel").first

    @property
    def table(self) -> Locator:
        return self.root.locator('[data-strayline="table"]').first

    @property
    def qq(self) -> Locator:
        return self.root.locator(".sl-qq").first

    def wait_panel(self, timeout: float = 180_000) -> None:
        self.table.wait_for(timeout=timeout)
        self.qq.locator("svg.svg-figure g.object_grp").first.wait_for(timeout=timeout)
        self.table.locator("tr.sl-row, tr.sl-empty").first.wait_for(timeout=timeout)
        self.wait_not_busy()

    def wait_not_busy(self, timeout: float = 60_000) -> None:
        self.table.locator('[data-role="busy"]').wait_for(state="hidden", timeout=timeout)

    # --- reading the kernel ----------------------------------------------------------------

    def run_cell(self, code: str, timeout: float = 120_000) -> str:
        """Add a cell at the end (through its prompt and the keyboard, never by clicking a
        figure), run it and return its output text."""
        cells = self.root.locator(".jp-Cell")
        n = cells.count()
        cells.nth(n - 1).locator(".jp-InputPrompt").click()
        self.page.keyboard.press("Escape")
        self.page.keyboard.press("b")
        self.page.wait_for_function(
            "([sel, n]) => document.querySelectorAll(sel).length > n",
            arg=[f"{VISIBLE_NOTEBOOK} .jp-Cell", n], timeout=15_000)
        cell = cells.nth(n)
        cell.locator(".cm-content").click()
        self.page.keyboard.insert_text(code)
        self.page.keyboard.press("Control+Enter")
        prompt = cell.locator(".jp-InputPrompt").filter(has_text=re.compile(r"\[\d+\]"))
        prompt.wait_for(timeout=timeout)
        return cell.locator(".jp-OutputArea").text_content() or ""

    def probe(self, expressions: dict[str, str], big: dict[str, str] | None = None
              ) -> dict[str, Any]:
        """Evaluate Python expressions in the kernel; the small ones are printed in the cell
        (and parsed back from the page), the big ones go through a JSON file."""
        assert self.folder is not None
        self.probe_count += 1
        tag = f"probe{self.probe_count}"
        small = ", ".join(f"{k!r}: {v}" for k, v in expressions.items())
        lines = ["import json as _json", f"_small = {{{small}}}",
                 f"print('{tag}=' + _json.dumps(_small, default=str))"]
        if big:
            large = ", ".join(f"{k!r}: {v}" for k, v in big.items())
            lines += [f"_big = {{{large}}}",
                      f"open('{self.name}.{tag}.json', 'w').write(_json.dumps(_big, default=str))",
                      f"print('{tag} file written')"]
        out = self.run_cell("\n".join(lines))
        found = [line[len(tag) + 1:] for line in out.splitlines() if line.startswith(f"{tag}=")]
        if not found:
            raise AssertionError(f"probe cell printed no result: {out[:2000]}")
        result = json.loads(found[0])
        if big:
            path = self.folder / f"{self.name}.{tag}.json"
            result.update(json.loads(path.read_text()))
        return result

    # --- the panel in the page -------------------------------------------------------------

    def counts(self) -> dict[str, int]:
        out = {}
        for key in ("rows", "flagged", "marked", "kept", "missing", "mask"):
            text = self.table.locator(f'[data-count="{key}"] .sl-count-num').text_content() or ""
            out[key] = int(text.replace(",", "").replace("\u202f", "").replace(" ", "") or -1)
        return out

    def row_ids(self, selector: str = "tr.sl-row") -> list[int]:
        return [int(v) for v in self.table.locator(f"tbody {selector}").evaluate_all(
            "rows => rows.map(r => r.getAttribute('data-id'))")]

    def qq_geometry(self) -> QQGeometry:
        g = self.qq.evaluate(_QQ_GEOMETRY_JS)
        bg, ov = g["background"], g["overlay"]
        for k in ("x", "y", "width", "height"):
            assert abs(bg[k] - ov[k]) < 1.0, f"plot area and brush overlay differ: {bg} {ov}"
        x_ticks, y_ticks = g["ticks"][0], g["ticks"][1]
        return QQGeometry(ov["x"], ov["y"], ov["width"], ov["height"],
                          fit_axis([(t[0], t[2]) for t in x_ticks]),
                          fit_axis([(t[1], t[2]) for t in y_ticks]))

    def qq_marks(self) -> list[list[list[Any]]]:
        """For each mark of the Q–Q figure, its drawn points as [px, py, stroke, fill]."""
        return self.qq.evaluate(_QQ_MARKS_JS)

    def drag(self, start: tuple[float, float], end: tuple[float, float], steps: int = 12) -> float:
        """Press at start, move in steps, release at end; returns perf_counter at release."""
        m = self.page.mouse
        m.move(*start)
        m.down()
        for i in range(1, steps + 1):
            m.move(start[0] + (end[0] - start[0]) * i / steps,
                   start[1] + (end[1] - start[1]) * i / steps)
            self.page.wait_for_timeout(25)
        t = time.perf_counter()
        m.up()
        return t

    def set_mode(self, label: str) -> None:
        button = self.panel.locator(".widget-toggle-buttons button",
                                    has_text=re.compile(f"^{label}$"))
        button.click()
        self.page.wait_for_function("b => b.classList.contains('mod-active')",
                                    arg=button.element_handle(), timeout=10_000)

    def number_input(self, label: str) -> Locator:
        box = self.panel.locator(".widget-inline-hbox").filter(
            has=self.page.locator("label.widget-label", has_text=re.compile(f"^{label}$")))
        return box.locator("input").first


#: Console errors that come from our code (the table bundle, the anywidget loader, the widget
#: views of the panel); anything else in the console is JupyterLab's and only printed.
OURS = re.compile(r"strayline|table\.js|anywidget|sl-table|data-strayline|"
                  r"Could not create (a )?view|Error displaying widget|"
                  r"Failed to (load|create) (model|view)|Error setting state|"
                  r"Class \w+ not found in module", re.I)


class ConsoleLog:
    """Console errors and page errors of one page."""

    def __init__(self) -> None:
        self.errors: list[str] = []

    def on_console(self, msg: object) -> None:
        if msg.type == "error":  # type: ignore[attr-defined]
            loc = msg.location or {}  # type: ignore[attr-defined]
            self.errors.append(f"console: {msg.text} @ {loc.get('url', '')}")  # type: ignore

    def on_page_error(self, exc: object) -> None:
        self.errors.append(f"page error: {exc}")

    def ours(self) -> list[str]:
        return [e for e in self.errors if OURS.search(e)]

    def assert_clean(self) -> None:
        noise = [e for e in self.errors if not OURS.search(e)]
        for e in noise:
            print(f"[console, not ours] {e[:400]}")
        assert not self.ours(), "errors from strayline in the browser console:\n" + \
            "\n".join(self.ours())
