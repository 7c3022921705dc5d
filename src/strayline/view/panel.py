"""The screening panel: controls, Q–Q plot with a brush, histogram, box plot, summary and the
table of rows in context, all linked to one :class:`strayline.Screen`."""

from __future__ import annotations

import html
import time
import traceback
from collections.abc import Hashable
from contextlib import contextmanager
from pathlib import Path
from typing import Any

import ipywidgets as W
import numpy as np
import pandas as pd

from ..evaluate import scale_name
from ..ledger import Ledger
from ..screen import FLAGGED, KEPT, MARKED, MISSING, PLAIN, STATE_NAMES, Screen
from ..stats.rules import RULES
from ..stats.transform import TRANSFORMS
from . import figures as F
from .table import RowTable
from .thinning import HEIGHT, WIDTH, pixel_steps, thin
from .writeback import write_mask

CAUTION = ("A flag is a prompt to look, not a reason to delete: record why a row is set aside, "
           "and follow your own procedures.")
RULE_LABELS = {"zscore": "z-score", "robust_z": "robust z-score (MAD)",
               "fences": "Tukey fences", "adjusted_fences": "skew-adjusted fences",
               "grubbs": "Grubbs' test", "gesd": "generalized ESD"}
TRANSFORM_LABELS = {"none": "none", "log": "log", "sqrt": "square root",
                    "reciprocal": "reciprocal", "boxcox": "Box–Cox", "yeojohnson": "Yeo–Johnson"}
MAX_TABLE_COLUMNS = 12
MAX_CELL = 300


def _text(value: Any) -> str:
    if isinstance(value, (float, np.floating)):
        return "" if np.isnan(value) else f"{value:.6g}"
    if value is None or value is pd.NA or value is pd.NaT:
        return ""
    s = str(value)
    return s if len(s) <= MAX_CELL else s[:MAX_CELL - 1] + "…"


class Panel(W.VBox):
    """The screening panel. Create it with :func:`strayline.panel`.

    Attributes
    ----------
    screen : the :class:`strayline.Screen` behind the panel (all statistics live there).
    mask : the current mask (a boolean Series with the frame's index).
    ledger : the decisions as a :class:`strayline.Ledger`.
    """

    def __init__(self, screen: Screen, mask: str | None = None, *, overwrite: bool = False,
                 namespace: dict[str, Any] | None = None, max_points: int = 3000):
        self.screen = screen
        self.mask_name = mask
        self._overwrite = overwrite
        self._namespace = namespace
        self._max_points = max_points
        self._brushed = np.zeros(len(screen.frame), dtype=bool)  # rows the last stroke covered
        self._drawn_ranks = np.empty(0, dtype=np.int64)
        self._steps_for: Any = None  # the Q–Q coordinates that self._steps thinned
        self._steps = np.empty(0, dtype=np.int64)
        self._page_positions = np.empty(0, dtype=np.int64)
        self._sort_cache: dict[tuple[Any, ...], np.ndarray] = {}
        self.last_error = ""
        self.timings: dict[str, float] = {}
        df = screen.frame

        # controls
        self.column_select = W.Dropdown(options=[(str(c), c) for c in screen.columns],
                                        value=screen.column, description="Column",
                                        layout=W.Layout(width="220px"))
        repeated = set(df.columns[df.columns.duplicated()])
        group_options = [("(none)", None), *[(str(c), c) for c in df.columns
                                             if c not in screen.columns
                                             and c not in repeated][:500]]
        self.group_select = W.Dropdown(options=group_options, value=screen.group,
                                       description="By group", layout=W.Layout(width="220px"))
        self.transform_select = W.Dropdown(options=[(TRANSFORM_LABELS[t], t) for t in TRANSFORMS],
                                           description="Scale", layout=W.Layout(width="210px"))
        self.rule_select = W.Dropdown(options=[(RULE_LABELS[r], r) for r in RULES],
                                      description="Rule", layout=W.Layout(width="250px"))
        self.param_input = W.BoundedFloatText(value=1.5, min=1e-6, max=1e6, step=0.5,
                                              description="k", layout=W.Layout(width="150px"))
        self.max_input = W.BoundedIntText(value=10, min=1, max=10**7, description="at most",
                                          layout=W.Layout(width="150px"))
        self.mode_select = W.ToggleButtons(options=[("Replace", "replace"), ("Add", "add"),
                                                    ("Remove", "remove")], value="replace",
                                           description="Brush",
                                           tooltips=["the brush replaces the marks",
                                                     "the brush adds to the marks",
                                                     "the brush takes marks away"],
                                           style={"button_width": "88px"})
        self.band_toggle = W.Checkbox(value=True, description="95% band", indent=False,
                                      layout=W.Layout(width="110px"))
        self.undo_button = W.Button(description="Undo", icon="undo", layout=W.Layout(width="80px"))
        self.redo_button = W.Button(description="Redo", icon="repeat",
                                    layout=W.Layout(width="80px"))
        self.ledger_path = W.Text(value="screening-ledger.json", description="Ledger file",
                                  layout=W.Layout(width="330px"))
        self.save_button = W.Button(description="Save ledger", icon="save",
                                    layout=W.Layout(width="120px"))
        self.columns_shown = W.SelectMultiple(
            options=[(str(c), i) for i, c in enumerate(df.columns)],
            value=tuple(self._default_table_columns()), description="Table columns", rows=4,
            layout=W.Layout(width="330px"))
        self.status = W.HTML(layout=W.Layout(min_height="1.4em"))
        self.status.add_class("sl-status")
        self.summary_html = W.HTML()
        self.summary_html.add_class("sl-summary")

        # figures and table
        self.qq = F.qq_figure()
        self.hist = F.hist_figure()
        self.boxfig = F.box_figure()
        self.table = RowTable(caution=CAUTION)
        self.table.add_class("sl-table-widget")

        controls = W.VBox([
            W.HBox([self.column_select, self.group_select, self.transform_select,
                    self.rule_select, self.param_input, self.max_input],
                   layout=W.Layout(flex_flow="row wrap")),
            W.HBox([self.mode_select, self.undo_button, self.redo_button, self.band_toggle],
                   layout=W.Layout(flex_flow="row wrap", align_items="center")),
        ])
        plots = W.HBox([W.Box([self.qq.figure], layout=W.Layout(flex="3 1 420px")),
                        W.VBox([self.hist.figure, self.boxfig.figure],
                               layout=W.Layout(flex="2 1 300px"))],
                       layout=W.Layout(flex_flow="row wrap", width="100%"))
        footer = W.HBox([self.columns_shown, W.VBox([self.ledger_path, self.save_button])],
                        layout=W.Layout(flex_flow="row wrap", align_items="flex-start"))
        super().__init__([controls, self.status, plots, self.summary_html, self.table, footer])
        self.add_class("sl-panel")

        # events
        self.column_select.observe(self._on_column, "value")
        self.group_select.observe(self._on_settings, "value")
        self.transform_select.observe(self._on_settings, "value")
        self.rule_select.observe(self._on_rule, "value")
        self.param_input.observe(self._on_settings, "value")
        self.max_input.observe(self._on_settings, "value")
        self.qq.brush.observe(self._on_brushing, "brushing")
        self.band_toggle.observe(lambda ch: setattr(self.qq.band, "visible", bool(ch["new"])),
                                 "value")
        self.undo_button.on_click(lambda _: self._guard(self._undo))
        self.redo_button.on_click(lambda _: self._guard(self._redo))
        self.save_button.on_click(lambda _: self._guard(self._save))
        self.columns_shown.observe(lambda _: self._guard(self._refresh_table), "value")
        self.table.on_request(self._on_table)
        self._acting = False
        self.screen.on_change(self._on_screen_change)
        self._syncing = False
        self._sync_controls()
        self._refresh_all()

    # --- public -------------------------------------------------------------------------------

    def __repr__(self) -> str:
        s = self.screen
        target = f", writes {self.mask_name!r}" if self.mask_name else ""
        return (f"strayline panel: {len(s.columns)} column(s), {s.frame.shape[0]:,} rows, "
                f"{int(s.mask_array().sum()):,} in the mask{target}")

    @property
    def mask(self) -> pd.Series:
        s = self.screen.mask
        if self.mask_name:
            s.name = self.mask_name
        return s

    @property
    def ledger(self) -> Ledger:
        return self.screen.ledger

    def brush(self, x0: float, x1: float, y0: float, y1: float, mode: str | None = None) -> int:
        """Do what a finished brush stroke does (for scripts and tests)."""
        if mode is not None:
            self.mode_select.value = mode
        self.qq.brush.selected_x = np.array([x0, x1], dtype=float)
        self.qq.brush.selected_y = np.array([y0, y1], dtype=float)
        self.qq.brush.brushing = True
        self.qq.brush.brushing = False
        return int(np.count_nonzero(self._brushed))

    # --- plumbing -----------------------------------------------------------------------------

    @contextmanager
    def _busy(self, what: str):
        t0 = time.perf_counter()
        self.table.busy = True
        try:
            yield
        finally:
            self.table.busy = False
            self.timings[what] = time.perf_counter() - t0

    def _guard(self, action: Any, *args: Any) -> bool:
        """Run an action; on failure show the error in the panel and keep the last good state."""
        acting, self._acting = self._acting, True
        try:
            action(*args)
        except Exception as exc:  # the panel must survive anything the data can do
            self.last_error = f"{type(exc).__name__}: {exc}"
            self.table.error = self.last_error
            self.status.value = f"<span class='sl-error'>{html.escape(self.last_error)}</span>"
            self._tb = traceback.format_exc()
            self._sync_controls()
            return False
        finally:
            self._acting = acting
        self.last_error = ""
        self.table.error = ""
        return True

    def _on_screen_change(self) -> None:
        """Decisions taken on ``panel.screen`` directly (in a cell) redraw the panel too."""
        if self._acting:
            return
        self._guard(self._follow_screen)

    def _follow_screen(self) -> None:
        self._sort_cache.clear()
        self._sync_controls()
        self._after_decision()  # points, histogram, table
        self._refresh_lines()
        self._refresh_summary()

    def _write_back(self) -> None:
        if self.mask_name:
            write_mask(self.mask_name, self.mask, overwrite=self._overwrite,
                       namespace=self._namespace)
            self._overwrite = False  # once ours, it is recognised as ours

    def _default_table_columns(self) -> list[int]:
        df = self.screen.frame
        wanted = list(self.screen.columns)
        if self.screen.group is not None:
            wanted.insert(0, self.screen.group)
        chosen = [i for i, c in enumerate(df.columns) if c in wanted]
        for i in range(len(df.columns)):
            if len(chosen) >= MAX_TABLE_COLUMNS:
                break
            if i not in chosen:
                chosen.append(i)
        return sorted(chosen[:MAX_TABLE_COLUMNS])

    def _sync_controls(self) -> None:
        """Set the controls from the Screen's settings without triggering events."""
        self._syncing = True
        try:
            s = self.screen.settings()
            self.column_select.value = self.screen.column
            offered = [value for _, value in self.group_select.options]
            self.group_select.value = s.group if s.group in offered else None
            self.transform_select.value = s.transform
            self.rule_select.value = s.rule
            p = s.rule_params
            name = "k" if "k" in p else "threshold" if "threshold" in p else "alpha"
            self.param_input.description = {"k": "k", "threshold": "threshold",
                                            "alpha": "alpha"}[name]
            self.param_input.min, self.param_input.max = (
                (1e-6, 0.999999) if name == "alpha" else (1e-6, 1e6))
            self.param_input.step = 0.01 if name == "alpha" else 0.5
            self.param_input.value = float(p[name])
            self.max_input.layout.display = None if "max_outliers" in p else "none"
            if "max_outliers" in p:
                self.max_input.value = int(p["max_outliers"])
            self.undo_button.disabled = not self.screen.can_undo
            self.redo_button.disabled = not self.screen.can_redo
        finally:
            self._syncing = False

    # --- events -------------------------------------------------------------------------------

    def _on_column(self, change: dict[str, Any]) -> None:
        if self._syncing:
            return

        def go() -> None:
            self.screen.column = change["new"]
            self._brushed[:] = False
            self._sync_controls()
            self._refresh_all()

        self._guard(go)

    def _on_rule(self, change: dict[str, Any]) -> None:
        if self._syncing:
            return
        self._guard(self._configure, {"rule": change["new"]})

    def _on_settings(self, change: dict[str, Any]) -> None:
        if self._syncing:
            return
        owner = change["owner"]
        if owner is self.group_select:
            changes = {"group": change["new"]}
        elif owner is self.transform_select:
            changes = {"transform": change["new"]}
        elif owner is self.max_input:
            changes = {"max_outliers": int(change["new"])}
        else:
            changes = {self.param_input.description: float(change["new"])}
        self._guard(self._configure, changes)

    def _configure(self, changes: dict[str, Any]) -> None:
        with self._busy("configure"):
            self.screen.configure(**changes)
            self._sort_cache.clear()
            self._sync_controls()
            self._refresh_all()
            self._write_back()

    def _on_brushing(self, change: dict[str, Any]) -> None:
        if change["new"]:  # still dragging: wait for the stroke to end
            return
        self._guard(self._apply_brush)

    def _apply_brush(self) -> None:
        sx, sy = self.qq.brush.selected_x, self.qq.brush.selected_y
        if sx is None or sy is None or len(sx) < 2 or len(sy) < 2:
            return
        with self._busy("brush"):
            x0, x1 = float(sx[0]), float(sx[-1])
            y0, y1 = float(sy[0]), float(sy[-1])
            mode = self.mode_select.value
            self._brushed = self.screen.region_mask(x0, x1, y0, y1)
            self.screen.mark_region(x0, x1, y0, y1, mode=mode)
            self._after_decision(view="marked" if mode != "remove" else None)

    def _after_decision(self, view: str | None = None) -> None:
        self._sort_cache.clear()
        self._write_back()
        self._sync_controls()
        self._refresh_points()
        self._refresh_histogram()
        if view is not None and self.table.view != view:
            self.table.view = view
            self.table.page = 0
        self._refresh_table()

    def _undo(self) -> None:
        if self.screen.undo():
            self._after_decision()

    def _redo(self) -> None:
        if self.screen.redo():
            self._after_decision()

    def _save(self) -> None:
        path = Path(self.ledger_path.value).expanduser()
        self.ledger.save(path)
        self.status.value = f"Ledger saved to {html.escape(str(path))}"

    def _on_table(self, kind: str, payload: dict[str, Any]) -> None:
        self._guard(self._table_request, kind, payload)

    def _table_request(self, kind: str, payload: dict[str, Any]) -> None:
        t = self.table
        if kind == "page":
            t.page = int(payload["page"])
        elif kind == "sort":
            t.sort_column = payload["column"]
            t.sort_ascending = bool(payload["ascending"])
            t.page = 0
        elif kind == "view":
            t.view = payload["value"]
            t.page = 0
        elif kind == "note":
            self.screen.note_positions([int(payload["id"])], payload["text"])
            self._sync_controls()
        elif kind == "row":
            pos = int(payload["id"])
            action = payload["action"]
            if action == "focus":
                self.focus(pos)
                return
            with self._busy("row"):
                getattr(self.screen, f"{action}_positions")([pos])
                self._after_decision()
                self.focus(pos)
            return
        self._refresh_table()

    def focus(self, position: int) -> None:
        """Highlight one row's point in the plots and the row in the table."""
        self.table.focus = int(position)
        rank = self.screen.rank_of(position)
        v = self.screen.qq_coordinates()
        if rank is None:
            self.qq.focus.x, self.qq.focus.y = np.zeros(0), np.zeros(0)
        else:
            self.qq.focus.x = np.array([v.theoretical[rank]])
            self.qq.focus.y = np.array([v.ordered[rank]])

    # --- drawing ------------------------------------------------------------------------------

    def _refresh_all(self) -> None:
        t0 = time.perf_counter()
        unscreened = [g for g in self.screen.evaluation().groups if (g.error and g.n > 0)
                      or (g.error and g.label is None)]
        if unscreened:
            where = "this column" if unscreened[0].label is None else (
                f"{len(unscreened)} group(s), e.g. {unscreened[0].label!s}")
            self.status.value = html.escape(f"Not screened in {where}: {unscreened[0].error}")
        elif not self.last_error:
            self.status.value = ""
        self._refresh_points()
        self._refresh_histogram()
        self._refresh_lines()
        self._refresh_summary()
        self._refresh_table()
        self.timings["refresh"] = time.perf_counter() - t0

    def _refresh_points(self) -> None:
        s = self.screen
        v = s.qq_coordinates()
        states = s.states()
        st_sorted = states[v.order] if v.order.size else np.zeros(0, dtype=np.int8)
        values = v.ordered
        b = s.evaluation().bounds
        special = st_sorted != PLAIN
        if s.settings().group is None and np.isfinite(b.lower):
            # the values are sorted: those outside the bounds are the two ends
            special[:int(np.searchsorted(values, b.lower, "left"))] = True
            special[int(np.searchsorted(values, b.upper, "right")):] = True
        if self._steps_for is not v and values.size > self._max_points:
            # one point per pixel of the curve: it changes only with the values
            self._steps_for, self._steps = v, pixel_steps(v.theoretical, values, WIDTH, HEIGHT)
        ranks = thin(v.theoretical, values, special, budget=self._max_points,
                     middle=self._steps)
        self._drawn_ranks = ranks
        drawn_states = st_sorted[ranks]
        for mark, code in ((self.qq.plain, PLAIN), (self.qq.flagged, FLAGGED),
                           (self.qq.marked, MARKED), (self.qq.kept, KEPT)):
            pick = ranks[drawn_states == code]
            with mark.hold_sync():
                mark.x = v.theoretical[pick].astype(float)
                mark.y = values[pick].astype(float)
        self.qq.brush.marks = [self.qq.plain]
        c = s.column
        label = f"{c!s} ({scale_name(s.settings().transform)} scale)" if \
            s.settings().transform != "none" else f"{c!s}"
        self.qq.y_axis.label = label
        self.hist.x_axis.label = label
        self.boxfig.x_axis.label = label
        self.qq.focus.x, self.qq.focus.y = np.zeros(0), np.zeros(0)
        # box plot points beyond the whiskers and the marked ones, from the drawn set
        box = s.box()
        beyond = ranks[(values[ranks] < box.whisker_lo) | (values[ranks] > box.whisker_hi)]
        with self.boxfig.beyond.hold_sync():
            self.boxfig.beyond.x = values[beyond].astype(float)
            self.boxfig.beyond.y = np.zeros(beyond.size)
        marked = ranks[drawn_states == MARKED]
        with self.boxfig.marked.hold_sync():
            self.boxfig.marked.x = values[marked].astype(float)
            self.boxfig.marked.y = np.zeros(marked.size)
        xs, ys = F.box_lines(box.q1, box.median, box.q3, box.whisker_lo, box.whisker_hi)
        with self.boxfig.box.hold_sync():
            self.boxfig.box.x, self.boxfig.box.y = xs, ys

    def _refresh_lines(self) -> None:
        s = self.screen
        v = s.qq_coordinates()
        q = self.qq
        if v.ordered.size < 3:
            return
        x = np.array([v.theoretical[0], v.theoretical[-1]])
        with q.line.hold_sync():
            q.line.x, q.line.y = x, v.intercept + v.slope * x
        grid = np.linspace(v.theoretical[0], v.theoretical[-1], 80)
        lo, hi = s.qq_band(grid)
        with q.band.hold_sync():
            q.band.x, q.band.y = np.vstack([grid, grid]), np.vstack([lo, hi])
        b = s.evaluation().bounds
        grouped = s.settings().group is not None
        if grouped or not np.isfinite(b.lower):
            fx = fy = np.full((2, 2), np.nan)
            hx = hy = np.full((2, 2), np.nan)
        else:
            fx = np.array([x, x])
            fy = np.array([[b.lower, b.lower], [b.upper, b.upper]])
            top = float(np.max(self.hist.bars.y, initial=1.0))
            hx = np.array([[b.lower, b.lower], [b.upper, b.upper]])
            hy = np.array([[0, top], [0, top]], dtype=float)
        with q.fences.hold_sync():
            q.fences.x, q.fences.y = fx, fy
        with self.hist.fences.hold_sync():
            self.hist.fences.x, self.hist.fences.y = hx, hy

    def _refresh_histogram(self) -> None:
        h = self.screen.histogram()
        centres = h.edges[:-1] / 2 + h.edges[1:] / 2  # halves first: no overflow near 1e308
        with self.hist.bars.hold_sync():
            self.hist.bars.x, self.hist.bars.y = centres, h.counts.astype(float)
        with self.hist.marked.hold_sync():
            self.hist.marked.x, self.hist.marked.y = centres, h.marked_counts.astype(float)
        with self.hist.curve.hold_sync():
            self.hist.curve.x, self.hist.curve.y = h.curve_x, h.curve_y

    def _refresh_summary(self) -> None:
        sm = self.screen.summary()
        e = html.escape
        if sm.n == 0:
            self.summary_html.value = (f"<div class='sl-summary-box'>{e(str(sm.column))}: "
                                       "no values</div>")
            return
        nm = sm.normality
        tests = []
        if nm is not None:
            if nm.shapiro is not None:
                tests.append(f"Shapiro–Wilk W = {nm.shapiro.statistic:.4f}, "
                             f"p = {nm.shapiro.pvalue:.3g}")
            tests.append(f"Anderson–Darling A² = {nm.anderson.statistic:.3f}, "
                         f"p ≈ {nm.anderson.pvalue:.3g}")
            if nm.dagostino is not None:
                tests.append(f"D'Agostino K² = {nm.dagostino.statistic:.3g}, "
                             f"p = {nm.dagostino.pvalue:.3g}")
            tests.append(f"PPCC r = {nm.ppcc:.4f}")
        rows = "".join(
            f"<tr data-transform='{e(t.kind)}'><td>{e(TRANSFORM_LABELS[t.kind])}</td>"
            f"<td>{'' if t.lmbda is None else f'{t.lmbda:.3f}'}</td>"
            f"<td>{'' if t.error else f'{t.skewness:+.3f}'}</td>"
            f"<td>{e(t.error[:60]) if t.error else f'{t.ppcc:.4f}'}</td></tr>"
            for t in sm.comparison)
        best = TRANSFORM_LABELS.get(sm.closest_to_normal, "")
        b = self.screen.evaluation().bounds
        fence = ""
        if self.screen.settings().group is None and np.isfinite(b.lower):
            fence = f"bounds [{b.lower:.4g}, {b.upper:.4g}] · "
        self.summary_html.value = (
            "<div class='sl-summary-box' style='display:flex;flex-wrap:wrap;gap:1.5em;"
            "font-size:var(--jp-ui-font-size1,13px);color:var(--jp-ui-font-color1,#222)'>"
            f"<div><b>{e(str(sm.column))}</b> on the {e(sm.scale)} scale · "
            f"{e(self.screen.settings().describe())}<br>"
            f"n = {sm.n:,} · missing = {sm.missing:,} · {fence}"
            f"mean = {sm.mean:.4g} · SD = {sm.sd:.4g} · median = {sm.median:.4g} · "
            f"MAD = {sm.mad:.4g}<br>Q1 = {sm.q1:.4g} · Q3 = {sm.q3:.4g} · IQR = {sm.iqr:.4g} · "
            f"skewness = {sm.skewness:+.3f} · excess kurtosis = {sm.excess_kurtosis:+.3f}<br>"
            f"{' · '.join(e(t) for t in tests)}</div>"
            "<div><table class='sl-compare' style='border-collapse:collapse'><thead><tr>"
            "<th style='text-align:left'>scale</th><th>λ</th><th>skewness</th><th>PPCC</th>"
            f"</tr></thead><tbody>{rows}</tbody></table>"
            f"closest to normal: <b data-role='closest'>{e(best)}</b></div></div>")

    def _sorted_positions(self) -> np.ndarray:
        t = self.table
        s = self.screen
        key = (s.version, s.column, s.settings(), t.view, t.sort_column, t.sort_ascending)
        cached = self._sort_cache.get(key)
        if cached is not None:
            return cached
        positions = s.select_rows(t.view)
        col = t.sort_column
        if col and positions.size:
            if col == "__label__":
                keys = pd.Series(s.frame.index[positions])
            elif col == "__score__":
                keys = pd.Series(np.abs(s.evaluation().scores_at(positions)))
            elif col == "__state__":
                keys = pd.Series(s.states()[positions])
            else:
                names = [str(c) for c in s.frame.columns]
                keys = pd.Series(s.frame.iloc[positions, names.index(col)].to_numpy())
            try:
                order = np.argsort(keys.to_numpy(), kind="stable")
            except TypeError:
                order = np.argsort(keys.astype(str).to_numpy(), kind="stable")
            na = pd.isna(keys.to_numpy()[order])
            order = np.concatenate([order[~na], order[na]])
            if not t.sort_ascending:
                order = np.concatenate([order[~na][::-1], order[na]])
            positions = positions[order]
        if len(self._sort_cache) > 8:
            self._sort_cache.clear()
        self._sort_cache[key] = positions
        return positions

    def _refresh_table(self) -> None:
        t = self.table
        s = self.screen
        positions = self._sorted_positions()
        size = t.page_size
        pages = max(1, -(-positions.size // size))
        page = min(t.page, pages - 1)
        pick = positions[page * size:(page + 1) * size]
        self._page_positions = pick
        df = s.frame
        shown = list(self.columns_shown.value)[:40]
        names = [str(df.columns[i]) for i in shown]
        block = df.iloc[pick, shown] if shown else None
        states = s.states()[pick]
        scores = s.evaluation().scores_at(pick)
        reasons = s.reasons(pick)
        notes = s.notes()
        labels = df.index[pick]
        rows = []
        for k, pos in enumerate(pick):
            cells = [] if block is None else [_text(v) for v in block.iloc[k].tolist()]
            rows.append({"id": int(pos), "label": _text(labels[k]),
                         "state": STATE_NAMES[states[k]] if states[k] != MISSING else "missing",
                         "score": "" if np.isnan(scores[k]) else f"{scores[k]:+.2f}",
                         "reason": _text(reasons[k]), "note": _text(notes.get(int(pos), "")),
                         "cells": cells})
        brushed = pick[self._brushed[pick]]
        with t.hold_sync():
            t.columns = names
            t.rows = rows
            t.total = int(positions.size)
            t.page = int(page)
            t.counts = s.counts()
            t.brushed = [int(p) for p in brushed]
            t.columns_note = (f"{len(names)} of {len(df.columns):,} columns shown"
                              if len(df.columns) > len(names) else "")


def panel(df: pd.DataFrame, column: Hashable | None = None, group: Hashable | None = None,
          mask: str | None = None, *, columns: Any = None, transform: str = "none",
          rule: str = "fences", overwrite: bool = False,
          namespace: dict[str, Any] | None = None, **params: Any) -> Panel:
    """Open the screening panel on a DataFrame.

    Parameters
    ----------
    df : the data (never modified).
    column : the column to look at first; columns : the columns to screen (default: every
        numeric column).
    group : a column whose groups are screened separately.
    mask : a variable name; the panel writes the mask there after every change
        (``mask="suspect"`` gives ``suspect`` in the notebook).
    transform, rule, **params : the starting scale, rule and its parameters (``k=3``,
        ``threshold=3.5``, ``alpha=0.01``, ``max_outliers=20``), applied to every column.

    Examples
    --------
    >>> panel = strayline.panel(df, mask="suspect")   # doctest: +SKIP
    """
    if columns is None and column is not None:
        columns = None
    screen = Screen(df, columns=columns, group=group)
    if column is not None:
        screen.column = column
    problems = []
    if transform != "none" or rule != "fences" or params:
        for c in screen.columns:
            try:
                screen.configure(c, transform=transform, rule=rule, **params)
            except ValueError as exc:
                if c == screen.column:
                    raise
                problems.append(f"{c!s}: {exc}")
    p = Panel(screen, mask=mask, overwrite=overwrite, namespace=namespace)
    if not p._guard(p._write_back):
        raise ValueError(p.last_error)
    if problems:
        p.status.value = html.escape("Start settings not applied to " + "; ".join(problems))
    return p
