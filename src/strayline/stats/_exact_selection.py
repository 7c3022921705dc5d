"""Exact selection of one rank among the medcouple's kernel values, by sampling rounds.

The kernel values h(i, j) = (u_i + v_j)/(u_i - v_j), u > 0 ascending by row and v < 0
ascending by column, rise along both axes. Each round draws a sample of the candidate pairs,
takes two sample quantiles that bracket the wanted rank and counts, by a binary search per row
checked against the kernel itself, the pairs below each: every round costs O(n log n) and keeps
about 1% of the candidates, and when few remain they are listed and the rank is taken exactly.
The medcouple's windowed selection hands over to this one when heavy ties defeat it.
"""

from __future__ import annotations

from typing import Any

import numpy as np

SAMPLE = 1 << 19
BLOCK = 1 << 19


class Deviations:
    """x - m for ascending values x, formed on demand for the rows indexed, so that the
    longer half of the deviations from the median is never held in memory at once."""

    def __init__(self, x: np.ndarray, m: float) -> None:
        self.x, self.m, self.size = x, m, x.size

    def __getitem__(self, key: Any) -> Any:
        return self.x[key] - self.m


Rows = np.ndarray | Deviations  # the deviations above the median, by row


def kernel(u: np.ndarray, v: np.ndarray) -> np.ndarray:
    """h = (u + v)/(u - v), computed as the pairwise definition computes it."""
    return (u + v) / (u - v)


def cut(u: Rows, v: np.ndarray, t: float, strict: bool, lo: np.ndarray,
        hi: np.ndarray) -> np.ndarray:
    """Per row i, how many columns j have h(i, j) < t (strict) or <= t, clipped to [lo, hi];
    rows are taken in blocks so that the working memory stays small."""
    out = np.empty(u.size, dtype=lo.dtype)
    for start in range(0, u.size, BLOCK):
        rows = slice(start, start + BLOCK)
        out[rows] = _cut_block(u[rows], v, t, strict, lo[rows], hi[rows])
    return out


def _cut_block(u: np.ndarray, v: np.ndarray, t: float, strict: bool, lo: np.ndarray,
               hi: np.ndarray) -> np.ndarray:
    """:func:`cut` for one block of rows.

    h < t  <=>  v_j < u_i (t - 1)/(t + 1), so a binary search per row finds the cut; the cut is
    then checked against the kernel itself so that the counts agree with the values selected.
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        g = (t - 1.0) / (t + 1.0) if t > -1.0 else -np.inf
        thr = u * g
    side = "left" if strict else "right"
    c = np.searchsorted(v, thr[::-1], side=side)[::-1]
    np.clip(c, lo, hi, out=c)
    q = v.size
    # The binary search compared v_j with a rounded threshold; only rows whose neighbours of the
    # cut lie within a few ulps of it can disagree with the kernel, so only those are checked.
    tol = 16 * np.finfo(float).eps * np.abs(thr) + np.finfo(float).tiny
    above = v[np.minimum(c, q - 1)]
    under = v[np.maximum(c - 1, 0)]
    near = (c < np.minimum(hi, q)) & (np.abs(above - thr) <= tol)
    near |= (c > lo) & (np.abs(under - thr) <= tol)
    rows = np.flatnonzero(near)
    if rows.size:
        c[rows] = _fix_cut(u, v, t, strict, c[rows], lo[rows], hi[rows], rows)
    return c


def _fix_cut(u: Rows, v: np.ndarray, t: float, strict: bool, c: np.ndarray,
             lo: np.ndarray, hi: np.ndarray, rows: np.ndarray) -> np.ndarray:
    """Move cuts so that they agree with the kernel values themselves (ties and rounding)."""
    q = v.size

    def below(k: np.ndarray, j: np.ndarray) -> np.ndarray:
        h = kernel(u[rows[k]], v[j])
        return h < t if strict else h <= t

    for _ in range(64):  # up over values that still count as below t
        k = np.flatnonzero(c < np.minimum(hi, q))
        k = k[below(k, c[k])]
        if not k.size:
            break
        c[k] = np.minimum(np.searchsorted(v, v[c[k]], side="right"), hi[k])
    for _ in range(64):  # down over values that do not
        k = np.flatnonzero(c > lo)
        k = k[~below(k, c[k] - 1)]
        if not k.size:
            break
        c[k] = np.maximum(np.searchsorted(v, v[c[k] - 1], side="left"), lo[k])
    return c


def select_exact(u: Rows, v: np.ndarray, r: int,
                 enumerate_limit: int) -> tuple[float, float | None]:
    """The r-th smallest (0-based) of h(i, j) = (u_i + v_j)/(u_i - v_j) over all i, j, for
    ascending u > 0 and ascending v < 0, and the (r+1)-th when it is found on the way (else None).
    """
    p, q = u.size, v.size
    index = np.int32 if q < 2**31 - 1 else np.int64
    lo = np.zeros(p, dtype=index)
    hi = np.full(p, q, dtype=index)
    rng = np.random.default_rng(20080801)
    for rounds in range(10**6):
        w = hi - lo
        total = int(w.sum())
        below = int(lo.sum())
        k = r - below
        if total <= enumerate_limit or rounds >= 200:
            active = np.flatnonzero(w)  # only rows with candidates left: no arrays of size p
            counts = w[active]
            rows = np.repeat(active.astype(lo.dtype), counts)
            cols = np.arange(total, dtype=lo.dtype)
            cols -= np.repeat((np.cumsum(counts) - counts).astype(lo.dtype), counts)
            cols += np.repeat(lo[active], counts)
            del active, counts
            left = u[rows]
            right = v[cols]
            del rows, cols
            vals = left + right  # the kernel (u + v) / (u - v), as kernel computes it
            np.subtract(left, right, out=left)
            vals /= left
            del left, right
            if k + 1 < total:
                vals = np.partition(vals, (k, k + 1))
                return float(vals[k]), float(vals[k + 1])
            return float(np.partition(vals, k)[k]), None
        cw = np.cumsum(w)
        size = int(min(SAMPLE, 4 * total))  # a sample larger than the candidates adds nothing
        draws = rng.integers(0, total, size=size)
        rows = np.searchsorted(cw, draws, side="right")
        cols = lo[rows] + (draws - (cw[rows] - w[rows]))
        del cw
        sample = np.sort(kernel(u[rows], v[cols]))
        f = k / total
        spread = int(3.5 * np.sqrt(size * f * (1 - f))) + 2
        t_lo = float(sample[max(0, int(f * size) - spread)])
        t_hi = float(sample[min(size - 1, int(f * size) + spread)])
        lt_lo = cut(u, v, t_lo, True, lo, hi)
        if r < lt_lo.sum():
            hi = lt_lo
            continue
        le_hi = cut(u, v, t_hi, False, lo, hi)
        if r >= le_hi.sum():
            lo = le_hi
            continue
        if int((le_hi - lt_lo).sum()) * 2 <= total:
            lo, hi = lt_lo, le_hi
            continue
        # little progress: many pairs equal a bracket value; take the pivots themselves out
        le_lo = cut(u, v, t_lo, False, lt_lo, le_hi)
        if r < le_lo.sum():
            return t_lo, None
        lt_hi = cut(u, v, t_hi, True, le_lo, le_hi)
        if r >= lt_hi.sum():
            return t_hi, None
        lo, hi = le_lo, lt_hi
    raise AssertionError("unreachable")  # pragma: no cover


def next_above(u: Rows, v: np.ndarray, t: float) -> float:
    """Smallest h(i, j) strictly greater than t (inf when there is none)."""
    c = cut(u, v, t, False, np.zeros(u.size, dtype=np.int64),
             np.full(u.size, v.size, dtype=np.int64))
    rows = np.flatnonzero(c < v.size)
    if not rows.size:
        return np.inf
    return float(kernel(u[rows], v[c[rows]]).min())


