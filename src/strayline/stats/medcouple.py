"""The medcouple, a robust measure of skewness, computed exactly in O(n log n).

Definition (Brys, Hubert & Struyf, 2004 [1]_): with m the median, for x_i >= m >= x_j,

    h(x_i, x_j) = ((x_i - m) - (m - x_j)) / (x_i - x_j),

and for pairs where x_i = x_j = m (k values tied at the median, numbered a, b = 0..k-1)
h = sign(a + b - (k - 1)). The medcouple is the median of h over all such pairs.

The kernel matrix h(i, j), rows x_i >= m ascending and columns x_j <= m ascending, increases
along both axes. The pairs that involve a value equal to the median give only -1, 0 and +1, and
are counted in closed form; the median is then found by selection in the sorted matrix of the
remaining pairs: each round draws a sample of the candidate pairs, takes two sample quantiles
that bracket the wanted rank, and counts the pairs below each by a binary search per row, so
every round costs O(n log n) and keeps about 1% of the candidates. When few candidates remain
they are listed and the rank is taken exactly. The result equals the median of the full n²/4
kernel values, as the pairwise definition computes it.

References
----------
.. [1] G. Brys, M. Hubert and A. Struyf, "A robust measure of skewness", Journal of
   Computational and Graphical Statistics 13(4), 996–1017, 2004.
.. [2] M. Hubert and E. Vandervieren, "An adjusted boxplot for skewed distributions",
   Computational Statistics & Data Analysis 52, 5186–5201, 2008.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ._input import column, require, scale_exponent
from .location import sorted_median

_ENUMERATE = 1 << 22
_SAMPLE = 1 << 19
_BLOCK = 1 << 19


def _kernel(u: np.ndarray, v: np.ndarray) -> np.ndarray:
    return (u + v) / (u - v)


def _cut(u: np.ndarray, v: np.ndarray, t: float, strict: bool, lo: np.ndarray,
         hi: np.ndarray) -> np.ndarray:
    """Per row i, how many columns j have h(i, j) < t (strict) or <= t, clipped to [lo, hi];
    rows are taken in blocks so that the working memory stays small."""
    out = np.empty(u.size, dtype=lo.dtype)
    for start in range(0, u.size, _BLOCK):
        rows = slice(start, start + _BLOCK)
        out[rows] = _cut_block(u[rows], v, t, strict, lo[rows], hi[rows])
    return out


def _cut_block(u: np.ndarray, v: np.ndarray, t: float, strict: bool, lo: np.ndarray,
               hi: np.ndarray) -> np.ndarray:
    """:func:`_cut` for one block of rows.

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


def _fix_cut(u: np.ndarray, v: np.ndarray, t: float, strict: bool, c: np.ndarray,
             lo: np.ndarray, hi: np.ndarray, rows: np.ndarray) -> np.ndarray:
    """Move cuts so that they agree with the kernel values themselves (ties and rounding)."""
    q = v.size

    def below(k: np.ndarray, j: np.ndarray) -> np.ndarray:
        h = _kernel(u[rows[k]], v[j])
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


def _select(u: np.ndarray, v: np.ndarray, r: int,
            enumerate_limit: int = _ENUMERATE) -> tuple[float, float | None]:
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
            vals = left + right  # the kernel (u + v) / (u - v), as _kernel computes it
            np.subtract(left, right, out=left)
            vals /= left
            del left, right
            if k + 1 < total:
                vals = np.partition(vals, (k, k + 1))
                return float(vals[k]), float(vals[k + 1])
            return float(np.partition(vals, k)[k]), None
        cw = np.cumsum(w)
        size = int(min(_SAMPLE, 4 * total))  # a sample larger than the candidates adds nothing
        draws = rng.integers(0, total, size=size)
        rows = np.searchsorted(cw, draws, side="right")
        cols = lo[rows] + (draws - (cw[rows] - w[rows]))
        del cw
        sample = np.sort(_kernel(u[rows], v[cols]))
        f = k / total
        spread = int(3.5 * np.sqrt(size * f * (1 - f))) + 2
        t_lo = float(sample[max(0, int(f * size) - spread)])
        t_hi = float(sample[min(size - 1, int(f * size) + spread)])
        lt_lo = _cut(u, v, t_lo, True, lo, hi)
        if r < lt_lo.sum():
            hi = lt_lo
            continue
        le_hi = _cut(u, v, t_hi, False, lo, hi)
        if r >= le_hi.sum():
            lo = le_hi
            continue
        if int((le_hi - lt_lo).sum()) * 2 <= total:
            lo, hi = lt_lo, le_hi
            continue
        # little progress: many pairs equal a bracket value; take the pivots themselves out
        le_lo = _cut(u, v, t_lo, False, lt_lo, le_hi)
        if r < le_lo.sum():
            return t_lo, None
        lt_hi = _cut(u, v, t_hi, True, le_lo, le_hi)
        if r >= lt_hi.sum():
            return t_hi, None
        lo, hi = le_lo, lt_hi
    raise AssertionError("unreachable")  # pragma: no cover


def _next_above(u: np.ndarray, v: np.ndarray, t: float) -> float:
    """Smallest h(i, j) strictly greater than t (inf when there is none)."""
    c = _cut(u, v, t, False, np.zeros(u.size, dtype=np.int64),
             np.full(u.size, v.size, dtype=np.int64))
    rows = np.flatnonzero(c < v.size)
    if not rows.size:
        return np.inf
    return float(_kernel(u[rows], v[c[rows]]).min())


def medcouple_sorted(s: np.ndarray, *, enumerate_limit: int = _ENUMERATE) -> float:
    """Medcouple of ascending values *s* with no missing values (see the module notes)."""
    n = s.size
    require(n, 1, "the medcouple")
    z = s - sorted_median(s)
    first_zero = int(np.searchsorted(z, 0.0, side="left"))
    past_zero = int(np.searchsorted(z, 0.0, side="right"))
    k = past_zero - first_zero
    u = z[past_zero:]  # views of z: values above and below the median, ascending
    v = z[:first_zero]
    p, q = u.size + k, v.size + k
    pairs = p * q
    n_minus = k * v.size + k * (k - 1) // 2
    n_plus = u.size * k + k * (k - 1) // 2
    interior = u.size * v.size
    # pairs with h < 0 (v_j < -u_i, exact) and h == 0 (v_j == -u_i), by blocks of rows
    neg = zero = 0
    for start in range(0, u.size, _BLOCK):
        keys = -u[start:start + _BLOCK][::-1]
        cut = np.searchsorted(v, keys, side="left")
        neg += int(cut.sum())
        hit = np.flatnonzero(cut < v.size)
        hit = hit[v[cut[hit]] == keys[hit]]
        zero += int((np.searchsorted(v, keys[hit], side="right") - cut[hit]).sum())

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
        return const if ir is None else _select(u, v, ir, enumerate_limit)[0]

    assert n_minus + n_plus + k + interior == pairs
    if pairs % 2:
        return value(pairs // 2)
    (_, ir1), (_, ir2) = locate(pairs // 2 - 1), locate(pairs // 2)
    if ir1 is not None and ir2 == ir1 + 1:
        # both middle values are interior and adjacent: the second is the first again when
        # that value repeats, else the least kernel value above it
        first, second = _select(u, v, ir1, enumerate_limit)
        if second is not None:
            return float((first + second) / 2)
        whole = (np.zeros(u.size, dtype=np.int64), np.full(u.size, v.size, dtype=np.int64))
        at_most = int(_cut(u, v, first, False, *whole).sum())
        second = first if at_most > ir1 + 1 else _next_above(u, v, first)
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
