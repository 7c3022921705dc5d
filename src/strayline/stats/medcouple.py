"""The medcouple, a robust measure of skewness, computed exactly in O(n log n).

Definition (Brys, Hubert & Struyf, 2004 [1]_): with m the median, for x_i >= m >= x_j,

    h(x_i, x_j) = ((x_i - m) - (m - x_j)) / (x_i - x_j),

and for pairs where x_i = x_j = m (k values tied at the median, numbered a, b = 0..k-1)
h = sign(a + b - (k - 1)). The medcouple is the median of h over all such pairs.

The kernel matrix h(i, j), rows x_i > m ascending and columns x_j < m ascending, increases
along both axes, so the pairs below any t form a staircase: in row i, the columns with
x_j - m < g(t)(x_i - m), g(t) = (t - 1)/(t + 1), one binary search per row. The pairs that
involve a value equal to the median give only -1, 0 and +1 and are counted in closed form.

The median of the remaining pairs is found in two passes over the rows. Counts estimated from
one row in every few hundred place two thresholds just below and just above the wanted ranks;
one pass per threshold cuts every row, and the few hundred thousand pairs between the cuts are
listed and the ranks taken among them. The cuts compare rounded thresholds, so each pair
outside the window is known to within a few units in the last place of its kernel value; the
values found are accepted only when they lie inside the window by more than that margin, and
then no pair outside can reorder them. When many pairs share the value at the wanted rank
(heavy ties), two exact counts at that value decide; failing both, an exact selection by
sampling rounds (each keeping about 1% of the candidates) takes over. Either way the result
is the median of the n²/4 kernel values as the pairwise definition computes them, in
O(n log n) time and O(n) memory.

References
----------
.. [1] G. Brys, M. Hubert and A. Struyf, "A robust measure of skewness", Journal of
   Computational and Graphical Statistics 13(4), 996–1017, 2004.
.. [2] M. Hubert and E. Vandervieren, "An adjusted boxplot for skewed distributions",
   Computational Statistics & Data Analysis 52, 5186–5201, 2008.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from ._exact_selection import BLOCK, Deviations, Rows, cut, kernel, next_above, select_exact
from ._input import column, require, scale_exponent
from .location import sorted_median

_ENUMERATE = 1 << 21
_CHUNK = 1 << 16
_STRETCH = 1 << 12
_EPS = float(np.finfo(float).eps)
_NORMAL = 2.0**-900  # far above the subnormal range even after products with slopes


def _slope(t: float) -> float:
    """g(t) = (t - 1)/(t + 1): h(u, v) < t  <=>  v < g(t) u for u > 0 > v."""
    if t <= -1.0:
        return -np.inf
    if t >= 1.0:
        return 0.0
    return (t - 1.0) / (t + 1.0)


def _cuts(u: Rows, v: np.ndarray, t: float, rows: slice = slice(None)) -> np.ndarray:
    """Per row i of *rows*, the number of columns j with v_j < g(t) u_i, g of :func:`_slope`.

    These are the pairs whose kernel lies below t up to rounding: counted pairs have
    h(i, j) < t + 5 eps and the others h(i, j) > t - 5 eps (the threshold and the kernel each
    carry a relative error of a few eps, and |h| <= 1). The keys fall as u rises, so the rows
    are searched in blocks, each in the short stretch of v that its first and last keys bound,
    which keeps the binary searches in cache.
    """
    g = _slope(t)
    start, stop, stride = rows.indices(u.size)
    count = len(range(start, stop, stride))
    out = np.empty(count, dtype=np.int32 if v.size < 2**31 - 1 else np.int64)
    if not count:
        return out
    if g == -np.inf:
        out[:] = 0
        return out
    step = _STRETCH
    # the cut of each block's first row, the largest of the block
    bounds = np.append(np.searchsorted(v, u[start:stop:stride * step] * g), 0)
    for b, k in enumerate(range(0, count, step)):
        first = start + k * stride
        keys = u[first:min(stop, first + step * stride):stride] * g
        hi, lo = int(bounds[b]), int(bounds[b + 1])
        found = np.searchsorted(v[lo:hi], keys[::-1])[::-1]
        np.add(found, lo, out=out[k:k + step], casting="unsafe")
    return out


def _group(p: int) -> int:
    """Rows per group in :func:`_estimate`: odd, so that the middle row is the centre."""
    return max(1, p >> 15) | 1


def _estimate(u: Rows, v: np.ndarray, zeros: int, t: float) -> float:
    """About how many of the pairs (and the *zeros* zero values) lie below t, from the cuts of
    one row in every group of rows (the middle one), each standing for its group."""
    p = u.size
    step = _group(p)
    cuts = _cuts(u, v, t, slice(step // 2, None, step))
    weights = np.full(cuts.size, step, dtype=np.int64)
    weights[-1] = p - step * (cuts.size - 1)
    return float(cuts @ weights) + (zeros if t > 0 else 0)


def _threshold(u: Rows, v: np.ndarray, zeros: int, target: float, tol: float,
               start: tuple[float, float, float, float] | None = None
               ) -> tuple[float, float, tuple[float, float, float, float]]:
    """A t in [-1, 1] with about *target* values below it (within *tol*), its estimated count,
    and the last bracket (t, count, t, count) around the target; by regula falsi with the
    Illinois step on the estimate, which rises with t, from *start* when it brackets the
    target (else from [-1, 1])."""
    a, ea, b, eb = (-1.0, 0.0, 1.0, float(u.size * v.size + zeros))
    if start is not None and start[1] <= target <= start[3]:
        a, ea, b, eb = start
    fa, fb = ea - target, eb - target
    side = 0
    t, et = a, ea
    for _ in range(100):
        t = (a * fb - b * fa) / (fb - fa) if fb != fa else 0.5 * (a + b)
        if not a < t < b:
            t = 0.5 * (a + b)
        et = _estimate(u, v, zeros, t)
        ft = et - target
        if abs(ft) <= tol or b - a <= 8 * _EPS * max(1.0, abs(t)):
            break
        if ft < 0:
            a, fa, ea = t, ft, et
            if side == -1:
                fb *= 0.5
            side = -1
        else:
            b, fb, eb = t, ft, et
            if side == 1:
                fa *= 0.5
            side = 1
    return t, et, (a, ea, b, eb)


@dataclass(frozen=True)
class _Band:
    """The pairs lo_i <= j < lo_i + w_i between two cuts: lo for every row, and only the rows
    whose band is not empty with their widths w (so the band costs one array of rows)."""

    lo: np.ndarray
    rows: np.ndarray
    widths: np.ndarray
    below: int  # pairs under the band, Σ lo
    size: int  # pairs in it, Σ w


def _band(u: Rows, v: np.ndarray, t_a: float, t_b: float) -> _Band:
    """The pairs between the cuts at t_a and at t_b (see :func:`_cuts`)."""
    lo = _cuts(u, v, t_a)
    rows, widths = [], []
    for start in range(0, u.size, BLOCK):
        w = _cuts(u, v, t_b, slice(start, start + BLOCK))
        w -= lo[start:start + w.size]
        np.maximum(w, 0, out=w)
        nz = np.flatnonzero(w).astype(lo.dtype)
        widths.append(w[nz])
        nz += start
        rows.append(nz)
    r = np.concatenate(rows) if rows else np.empty(0, dtype=lo.dtype)
    w = np.concatenate(widths) if widths else np.empty(0, dtype=lo.dtype)
    return _Band(lo, r, w, int(lo.sum(dtype=np.int64)), int(w.sum(dtype=np.int64)))


def _window(u: Rows, v: np.ndarray, band: _Band) -> np.ndarray:
    """The kernel values of the pairs in *band*, as the pairwise definition computes them,
    listed by chunks of rows so that only the values themselves are held at once."""
    active, counts = band.rows, band.widths
    vals = np.empty(band.size)
    ends = np.cumsum(counts, dtype=np.int64)
    start = 0
    while start < active.size:
        # rows whose pairs fill about one chunk (at least one row)
        stop = max(start + 1, int(np.searchsorted(ends, ends[start] - counts[start] + _CHUNK)))
        rows, c = active[start:stop], counts[start:stop]
        first, total = int(ends[start] - c[0]), int(c.sum())
        dtype = band.lo.dtype
        cols = np.arange(total, dtype=dtype)
        cols -= np.repeat((np.cumsum(c) - c).astype(dtype), c)
        cols += np.repeat(band.lo[rows], c)
        left = np.repeat(u[rows], c)
        right = v[cols]
        out = vals[first:first + total]
        np.add(left, right, out=out)  # the kernel (u + v) / (u - v), as kernel computes it
        np.subtract(left, right, out=left)
        out /= left
        start = stop
    return vals


def _select_fast(u: Rows, v: np.ndarray, zeros: int, r: int, r2: int,
                 limit: int) -> tuple[float, float] | None:
    """The r-th and r2-th smallest (0-based, r2 in {r, r + 1}) of the kernel values
    h(i, j) = (u_i + v_j)/(u_i - v_j) together with *zeros* extra zeros; None when the
    certificate below fails (many ties at the answer), and the exact selection must decide.

    Two thresholds t_a < t_b are placed, from estimated counts, a little below rank r and
    above rank r2; one pass per threshold cuts every row, and the pairs between the cuts are
    listed. Every pair below the cuts has a kernel below t_a + 5 eps and every pair above
    them one above t_b - 5 eps (see :func:`_cuts`). So when the listed values at the wanted
    ranks lie more than that margin inside (t_a, t_b), no pair outside the window can reorder
    them, and they are exactly the r-th and r2-th of all the values.
    """
    p, q = u.size, v.size
    if not p or not q or u[0] < _NORMAL or -v[-1] < _NORMAL:
        return None  # subnormal magnitudes would void the relative error bounds
    margin = 64 * _EPS
    # the estimate errs by about sqrt(p * group) pairs: place the cuts a few times that apart
    spread = max(64.0, min(limit / 6, 16 * np.sqrt(p * _group(p))))
    shift = 0.0  # what the estimates missed by, learnt from the exact cuts of a failed try
    t_a = t_b = e_a = e_b = np.nan
    for _ in range(4):
        if np.isnan(t_a):
            tol = spread / 4
            t_a, e_a, (_, _, b, eb) = _threshold(u, v, zeros, r - spread - shift, tol)
            # the second search starts from the first one's point and its upper end
            t_b, e_b, _ = _threshold(u, v, zeros, r2 + 1 + spread - shift, tol,
                                     (t_a, e_a, b, eb) if e_a > 0 else None)
        band = _band(u, v, t_a, t_b)
        z_below, z_inside = (zeros, 0) if t_a > 0 else ((0, zeros) if t_b > 0 else (0, 0))
        below = band.below + z_below
        above = below + band.size + z_inside
        if above - below > limit:  # crowded: many pairs share a value near the answer
            return _tied(u, v, zeros, r, r2, band)
        if not below <= r < r2 + 1 <= above:
            if t_b - t_a <= 1024 * _EPS:
                # both searches stopped at one jump of the count: the wanted ranks lie in a
                # run of pairs that share one value there
                del band
                return _tied(u, v, zeros, r, r2,
                             _band(u, v, t_a - 1024 * _EPS, t_b + 1024 * _EPS))
            shift = ((below - e_a) + (above - e_b)) / 2
            spread *= 2
            t_a = np.nan
            del band
            continue
        vals = _window(u, v, band)
        if z_inside:
            vals = np.concatenate([vals, np.zeros(z_inside)])
        k, k2 = r - below, r2 - below
        vals = np.partition(vals, (k, k2))
        a, b = float(vals[k]), float(vals[k2])
        del vals, band
        if a > t_a + margin and b < t_b - margin:
            return a, b
        # a wanted value lies within rounding of a cut (a search stopped at a run of equal
        # values there): move that cut past it and list the window again
        if a <= t_a + margin:
            t_a = a - 2 * margin
        if b >= t_b - margin:
            t_b = b + 2 * margin
    return None


def _tied(u: Rows, v: np.ndarray, zeros: int, r: int, r2: int,
          band: _Band) -> tuple[float, float] | None:
    """(c, c) when the ranks r..r2 hold one value c repeated by many pairs of *band*; c is
    the median of a few pairs spread over the band, and two exact counts of the pairs below c
    and at most c decide (None: they do not)."""
    if not band.rows.size:
        return None
    k = np.linspace(0, band.rows.size - 1, 65).astype(np.int64)
    pick = band.rows[k]
    c = float(np.median(kernel(u[pick], v[band.lo[pick] + band.widths[k] // 2])))
    lo = band.lo
    whole = (np.zeros(u.size, dtype=lo.dtype), np.full(u.size, v.size, dtype=lo.dtype))
    less = int(cut(u, v, c, True, *whole).sum(dtype=np.int64)) + (zeros if c > 0 else 0)
    if less > r:
        return None
    at_most = int(cut(u, v, c, False, *whole).sum(dtype=np.int64)) + (zeros if c >= 0 else 0)
    return (c, c) if at_most > r2 else None


def medcouple_sorted(s: np.ndarray, *, enumerate_limit: int = _ENUMERATE) -> float:
    """Medcouple of ascending values *s* with no missing values (see the module notes)."""
    n = s.size
    require(n, 1, "the medcouple")
    med = sorted_median(s)
    first_zero = int(np.searchsorted(s, med, side="left"))  # x - m < 0 exactly when x < m
    past_zero = int(np.searchsorted(s, med, side="right"))
    k = past_zero - first_zero
    # deviations above and below the median, ascending: the lower half as an array for the
    # binary searches, the upper one formed block by block as rows are read
    u = Deviations(s[past_zero:], med)
    v = s[:first_zero] - med
    p, q = u.size + k, v.size + k
    pairs = p * q
    n_minus = k * v.size + k * (k - 1) // 2
    n_plus = u.size * k + k * (k - 1) // 2
    interior = u.size * v.size
    assert n_minus + n_plus + k + interior == pairs
    # Below the interior pairs and the k zeros of the tied block lie n_minus values -1, above
    # them n_plus values +1: the middle ranks are found among the interior values and zeros.
    wanted = [pairs // 2] if pairs % 2 else [pairs // 2 - 1, pairs // 2]
    inner = [w - n_minus for w in wanted if 0 <= w - n_minus < interior + k]
    if inner:
        got = _select_fast(u, v, k, inner[0], inner[-1], enumerate_limit)
        if got is not None:
            known = iter(got if len(inner) == 2 else got[:1])
            vals = [-1.0 if w < n_minus else (1.0 if w >= n_minus + interior + k
                                              else next(known)) for w in wanted]
            return float(sum(vals) / len(vals))
    # pairs with h < 0 (v_j < -u_i, exact) and h == 0 (v_j == -u_i), by blocks of rows
    neg = zero = 0
    for start in range(0, u.size, BLOCK):
        keys = -u[start:start + BLOCK][::-1]
        below = np.searchsorted(v, keys, side="left")
        neg += int(below.sum())
        hit = np.flatnonzero(below < v.size)
        hit = hit[v[below[hit]] == keys[hit]]
        zero += int((np.searchsorted(v, keys[hit], side="right") - below[hit]).sum())

    def locate(r: int) -> tuple[float, int | None]:
        """A constant value for global rank r, or None and the rank among interior pairs."""
        if r < n_minus:
            return -1.0, None
        r -= n_minus
        if r < neg:
            return np.nan, r
        if r < neg + zero + k:
            return 0.0, None
        r -= k
        if r < interior:
            return np.nan, r
        return 1.0, None

    def value(r: int) -> float:
        const, ir = locate(r)
        return const if ir is None else select_exact(u, v, ir, enumerate_limit)[0]

    if pairs % 2:
        return value(pairs // 2)
    (_, ir1), (_, ir2) = locate(pairs // 2 - 1), locate(pairs // 2)
    if ir1 is not None and ir2 == ir1 + 1:
        # both middle values are interior and adjacent: the second is the first again when
        # that value repeats, else the least kernel value above it
        first, second = select_exact(u, v, ir1, enumerate_limit)
        if second is not None:
            return float((first + second) / 2)
        whole = (np.zeros(u.size, dtype=np.int64), np.full(u.size, v.size, dtype=np.int64))
        at_most = int(cut(u, v, first, False, *whole).sum())
        second = first if at_most > ir1 + 1 else next_above(u, v, first)
    else:
        first, second = value(pairs // 2 - 1), value(pairs // 2)
    return float((first + second) / 2)


def medcouple(x: Any) -> float:
    """Medcouple of the non-missing values of *x* [1]_, exact, in O(n log n) time and O(n) memory.

    A value in [-1, 1]: 0 for symmetric data, positive for right skew. It is the median of
    h(x_i, x_j) = ((x_i - m) - (m - x_j)) / (x_i - x_j) over x_i >= m >= x_j, with the
    convention of [1]_ for pairs tied at the median m; the result equals that median of all
    pairs (``statsmodels.stats.stattools.medcouple``) without forming them.

    References
    ----------
    .. [1] G. Brys, M. Hubert and A. Struyf, J. Comput. Graph. Stat. 13(4), 996–1017, 2004.

    Examples
    --------
    >>> import strayline
    >>> strayline.medcouple([1.0, 2.0, 3.0, 4.0, 10.0])
    0.0
    >>> round(strayline.medcouple([1.0, 2.0, 3.0, 5.0, 10.0, 11.0]), 4)
    0.4
    """
    col = column(x)
    s = np.sort(col.clean)
    return medcouple_sorted(np.ldexp(s, -scale_exponent(s)))  # scale-free; no overflow in h
