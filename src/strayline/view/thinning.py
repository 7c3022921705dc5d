"""Which points of a Q–Q plot to draw: every point that matters, and about one per pixel of the
dense middle. Brushing never depends on this (the Screen selects over all rows)."""

from __future__ import annotations

import numpy as np


def pixel_steps(x: np.ndarray, y: np.ndarray, width: float, height: float,
                resolution: float = 1.0) -> np.ndarray:
    """Indices of a monotone curve (x and y ascending) keeping one point per pixel step.

    The curve's length in the Chebyshev metric on a width × height pixel grid is at most
    width + height, so at most that many points (times *resolution*) are kept, first and last
    included."""
    n = x.size
    if n <= 2:
        return np.arange(n)
    span_x = float(x[-1] - x[0]) or 1.0
    span_y = float(y[-1] - y[0]) or 1.0
    step = np.maximum(np.abs(np.diff(x)) * (width * resolution / span_x),
                      np.abs(np.diff(y)) * (height * resolution / span_y))
    arc = np.concatenate([[0.0], np.cumsum(step)])
    cell = np.floor(arc)
    keep = np.flatnonzero(np.diff(cell, prepend=-1.0) > 0)
    if keep[-1] != n - 1:
        keep = np.append(keep, n - 1)
    return keep


#: the plot area thinned for, in pixels
WIDTH, HEIGHT = 560, 380


def thin(theoretical: np.ndarray, ordered: np.ndarray, special: np.ndarray, *,
         width: float = WIDTH, height: float = HEIGHT, tail: int = 40,
         budget: int = 3000, middle: np.ndarray | None = None) -> np.ndarray:
    """Ranks to draw, ascending: the *tail* lowest and highest, every *special* rank (flagged,
    marked, kept, outside the fences) while they fit in *budget*, else those thinned at four
    points per pixel, and the rest at about one point per pixel (*middle*: those
    ``pixel_steps(theoretical, ordered, width, height)`` when the caller keeps them, as they
    change only with the values)."""
    n = ordered.size
    if n <= budget:
        return np.arange(n)
    ends = np.concatenate([np.arange(min(tail, n)), np.arange(max(n - tail, 0), n)])
    if middle is None:
        middle = pixel_steps(theoretical, ordered, width, height)
    chosen = np.flatnonzero(special)
    if chosen.size > budget // 2:
        fine = pixel_steps(theoretical[chosen], ordered[chosen], width, height, resolution=4)
        chosen = chosen[fine]
    return np.unique(np.concatenate([ends, middle, chosen]))
