"""The bqplot figures of the panel: Q–Q plot with a brush, histogram and box plot.

They draw what the Screen computed; nothing statistical happens here."""

from __future__ import annotations

from dataclasses import dataclass

import bqplot as bq
import numpy as np

#: Our palette, chosen to stay apart under the common colour-vision deficiencies; each state
#: also has its own marker shape.
PLAIN_COLOUR = "#6B7682"
FLAGGED_COLOUR = "#C8571B"
MARKED_COLOUR = "#1F4E9C"
KEPT_COLOUR = "#1B8A7A"
LINE_COLOUR = "#8A919B"
FOCUS_COLOUR = "#B0126B"

_FIG = {"fig_margin": {"top": 16, "bottom": 40, "left": 60, "right": 12},
        "background_style": {"fill": "transparent"}, "padding_y": 0.04, "padding_x": 0.03}


def _scatter(x: bq.LinearScale, y: bq.LinearScale, colour: str, marker: str, size: int,
             fill: bool = True, name: str = "") -> bq.Scatter:
    return bq.Scatter(x=np.zeros(0), y=np.zeros(0), scales={"x": x, "y": y}, colors=[colour],
                      marker=marker, default_size=size, fill=fill, stroke=colour,
                      opacities=[0.85], display_legend=bool(name), labels=[name],
                      unselected_style={"opacity": 0.85}, selected_style={"opacity": 1.0})


@dataclass
class QQFigure:
    """Q–Q plot: plain, flagged, marked and kept points as separate marks, the reference line,
    a pointwise band, the fences and a focus ring for the row chosen in the table."""

    figure: bq.Figure
    brush: bq.interacts.BrushSelector
    plain: bq.Scatter
    flagged: bq.Scatter
    marked: bq.Scatter
    kept: bq.Scatter
    focus: bq.Scatter
    line: bq.Lines
    band: bq.Lines
    fences: bq.Lines
    x_axis: bq.Axis
    y_axis: bq.Axis


def qq_figure() -> QQFigure:
    sx, sy = bq.LinearScale(), bq.LinearScale()
    plain = _scatter(sx, sy, PLAIN_COLOUR, "circle", 14, name="plain")
    flagged = _scatter(sx, sy, FLAGGED_COLOUR, "triangle-up", 36, name="flagged")
    marked = _scatter(sx, sy, MARKED_COLOUR, "square", 30, name="marked")
    kept = _scatter(sx, sy, KEPT_COLOUR, "diamond", 36, fill=False, name="kept")
    focus = bq.Scatter(x=np.zeros(0), y=np.zeros(0), scales={"x": sx, "y": sy},
                       colors=[FOCUS_COLOUR], stroke=FOCUS_COLOUR, marker="circle",
                       default_size=260, fill=False, stroke_width=2.5)
    line = bq.Lines(x=np.zeros(2), y=np.zeros(2), scales={"x": sx, "y": sy},
                    colors=[LINE_COLOUR], stroke_width=1.5)
    band = bq.Lines(x=np.zeros((2, 2)), y=np.zeros((2, 2)), scales={"x": sx, "y": sy},
                    colors=[LINE_COLOUR], line_style="dashed", stroke_width=1, opacities=[0.6])
    fences = bq.Lines(x=np.zeros((2, 2)), y=np.zeros((2, 2)), scales={"x": sx, "y": sy},
                      colors=[FLAGGED_COLOUR], line_style="dash_dotted", stroke_width=1.2)
    x_axis = bq.Axis(scale=sx, label="normal quantile", grid_lines="none")
    y_axis = bq.Axis(scale=sy, side="left", label="value", grid_lines="none",
                     label_offset="46px")
    brush = bq.interacts.BrushSelector(x_scale=sx, y_scale=sy, marks=[plain], color="#3A6EA5")
    fig = bq.Figure(marks=[band, line, fences, plain, flagged, kept, marked, focus],
                    axes=[x_axis, y_axis], interaction=brush, title="",
                    layout={"width": "100%", "height": "380px", "min_width": "320px"},
                    legend_location="top-left", legend_style={"fill": "transparent",
                                                              "stroke-width": 0},
                    **_FIG)
    fig.add_class("sl-qq")
    return QQFigure(fig, brush, plain, flagged, marked, kept, focus, line, band, fences,
                    x_axis, y_axis)


@dataclass
class HistFigure:
    figure: bq.Figure
    bars: bq.Bars
    marked: bq.Bars
    curve: bq.Lines
    fences: bq.Lines
    x_axis: bq.Axis


def hist_figure() -> HistFigure:
    sx, sy = bq.LinearScale(), bq.LinearScale(min=0)
    bars = bq.Bars(x=np.zeros(1), y=np.zeros(1), scales={"x": sx, "y": sy},
                   colors=[PLAIN_COLOUR], opacities=[0.55], padding=0.05, align="center")
    marked = bq.Bars(x=np.zeros(1), y=np.zeros(1), scales={"x": sx, "y": sy},
                     colors=[MARKED_COLOUR], opacities=[0.9], padding=0.3, align="center")
    curve = bq.Lines(x=np.zeros(2), y=np.zeros(2), scales={"x": sx, "y": sy},
                     colors=[LINE_COLOUR], stroke_width=1.5)
    fences = bq.Lines(x=np.zeros((2, 2)), y=np.zeros((2, 2)), scales={"x": sx, "y": sy},
                      colors=[FLAGGED_COLOUR], line_style="dash_dotted", stroke_width=1.2)
    x_axis = bq.Axis(scale=sx, label="value", grid_lines="none")
    y_axis = bq.Axis(scale=sy, side="left", label="count", grid_lines="none",
                     tick_format=".2s")
    fig = bq.Figure(marks=[bars, marked, curve, fences], axes=[x_axis, y_axis],
                    layout={"width": "100%", "height": "220px", "min_width": "260px"}, **_FIG)
    fig.add_class("sl-histogram")
    return HistFigure(fig, bars, marked, curve, fences, x_axis)


@dataclass
class BoxFigure:
    figure: bq.Figure
    box: bq.Lines
    beyond: bq.Scatter
    marked: bq.Scatter
    x_axis: bq.Axis


def box_figure() -> BoxFigure:
    sx, sy = bq.LinearScale(), bq.LinearScale(min=-1, max=1)
    box = bq.Lines(x=np.zeros((5, 2)), y=np.zeros((5, 2)), scales={"x": sx, "y": sy},
                   colors=[LINE_COLOUR], stroke_width=1.5)
    beyond = _scatter(sx, sy, FLAGGED_COLOUR, "triangle-up", 30)
    marked = _scatter(sx, sy, MARKED_COLOUR, "square", 26)
    x_axis = bq.Axis(scale=sx, label="value", grid_lines="none")
    fig = bq.Figure(marks=[box, beyond, marked], axes=[x_axis],
                    layout={"width": "100%", "height": "140px", "min_width": "260px"},
                    **{**_FIG, "fig_margin": {"top": 8, "bottom": 40, "left": 60, "right": 12}})
    fig.add_class("sl-box")
    return BoxFigure(fig, box, beyond, marked, x_axis)


def box_lines(q1: float, median: float, q3: float, lo: float, hi: float) -> tuple[np.ndarray,
                                                                                   np.ndarray]:
    """Segments of a horizontal box plot at y = 0: box outline, median and whiskers."""
    h = 0.45
    xs = np.array([[q1, q3], [q1, q3], [median, median], [lo, q1], [q3, hi]], dtype=float)
    ys = np.array([[h, h], [-h, -h], [-h, h], [0, 0], [0, 0]], dtype=float)
    # close the box with its sides through a second pass of the first two segments
    xs = np.vstack([xs, [[q1, q1], [q3, q3], [lo, lo], [hi, hi]]])
    ys = np.vstack([ys, [[-h, h], [-h, h], [-h / 2, h / 2], [-h / 2, h / 2]]])
    return xs, ys
