"""The screening model: one DataFrame (never modified), its screened columns, their settings,
the hand decisions, and the mask that follows from them."""

from __future__ import annotations

from collections.abc import Callable, Hashable, Iterable, Sequence
from dataclasses import dataclass
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from . import evaluate as ev
from .stats._input import to_float
from .stats.location import moments, sorted_mad, sorted_median, sorted_quantile
from .stats.normality import Normality, normality_sorted
from .stats.qq import QQ, NormalQuantiles, fit_line, qq_sorted
from .stats.transform import DECREASING, TRANSFORMS, fit

if TYPE_CHECKING:
    from .ledger import Ledger

#: Row states, by code. A row is "kept" when the user cleared a flag or a mark by hand.
PLAIN, FLAGGED, MARKED, KEPT, MISSING = 0, 1, 2, 3, 4
STATE_NAMES = ("", "flagged", "marked", "kept", "missing")
MODES = ("replace", "add", "remove")


@dataclass(frozen=True)
class TransformComparison:
    """How close one transformation brings a column to normal: skewness G1 and the PPCC of
    the transformed values, λ where one is fitted, or why it does not apply."""

    kind: str
    lmbda: float | None
    skewness: float
    ppcc: float
    error: str = ""


@dataclass(frozen=True)
class Summary:
    """Numbers for one column on its current screening scale."""

    column: Hashable
    scale: str
    n: int
    missing: int
    mean: float
    sd: float
    median: float
    mad: float
    q1: float
    q3: float
    iqr: float
    skewness: float
    excess_kurtosis: float
    normality: Normality | None
    comparison: tuple[TransformComparison, ...]
    closest_to_normal: str
    error: str = ""


@dataclass(frozen=True)
class HistogramView:
    edges: np.ndarray
    counts: np.ndarray
    marked_counts: np.ndarray
    curve_x: np.ndarray
    curve_y: np.ndarray


@dataclass(frozen=True)
class BoxView:
    q1: float
    median: float
    q3: float
    whisker_lo: float
    whisker_hi: float
    k: float


@dataclass
class _Change:
    column: Hashable
    positions: np.ndarray
    marked_before: np.ndarray
    kept_before: np.ndarray
    marked_after: np.ndarray
    kept_after: np.ndarray


@dataclass
class _NoteChange:
    positions: np.ndarray
    before: list[str | None]
    after: str | None


def _frozen(a: np.ndarray) -> np.ndarray:
    v = a.view()
    v.flags.writeable = False
    return v


def _numeric_columns(df: pd.DataFrame) -> list[Hashable]:
    repeated = set(df.columns[df.columns.duplicated()])
    return [name for name, dtype in df.dtypes.items()
            if pd.api.types.is_numeric_dtype(dtype) and not pd.api.types.is_complex_dtype(dtype)
            and not pd.api.types.is_bool_dtype(dtype) and name not in repeated]


class Screen:
    """Screen numeric columns of a DataFrame for outliers.

    Parameters
    ----------
    df : the user's DataFrame. It is held, never modified and never copied wholesale.
    columns : the columns to screen (a label or a list); default every numeric column.
    group : a column whose groups are screened separately (batches, stations, instruments).

    Notes
    -----
    Inside, rows are positions 0..n-1; labels appear only at the edge (``mark``, ``keep``,
    ``clear``, ``mask``, ``rows``), so duplicate labels, MultiIndex and datetime indexes work.
    A row's state in a column is *missing* (no value), *kept* (cleared by hand), *marked*
    (chosen by hand), *flagged* (the rule says it is outlying) or plain, in that precedence.
    ``mask = (flagged | marked) & ~kept`` in any screened column.
    """

    def __init__(self, df: pd.DataFrame, columns: Any = None, group: Hashable | None = None):
        if not isinstance(df, pd.DataFrame):
            raise TypeError(f"Screen needs a pandas DataFrame, got {type(df).__name__}; "
                            "wrap a Series with s.to_frame()")
        self._df = df
        self._n = len(df)
        if columns is None:
            cols = [c for c in _numeric_columns(df) if group is None or c != group]
            if not cols:
                repeated = sorted({str(c) for c in df.columns[df.columns.duplicated()]})
                if repeated:
                    raise ValueError(f"no numeric column can be screened: the names {repeated} "
                                     "appear more than once; rename them (df.columns = [...])")
                raise ValueError("the DataFrame has no numeric columns to screen; pass "
                                 "columns=[...] naming them, or convert text with pd.to_numeric")
        elif isinstance(columns, (list, tuple, pd.Index)) and not (
                isinstance(columns, tuple) and columns in set(df.columns)):
            cols = list(columns)
        else:
            cols = [columns]
        if not cols:
            raise ValueError("columns is empty: name at least one column to screen")
        self._raw: dict[Hashable, np.ndarray] = {}
        for c in cols:
            self._check_label(c, "column")
            raw = to_float(df[c], name=c)
            if np.shares_memory(raw, df[c].array):
                raw = raw.copy()  # later edits of the frame must not reach the screen's state
            self._raw[c] = raw
            inf = np.isinf(self._raw[c])
            if inf.any():
                raise ValueError(f"column {c!r} holds {int(inf.sum())} infinite value(s); "
                                 "replace them with NaN or a finite bound before screening")
        self._columns: tuple[Hashable, ...] = tuple(dict.fromkeys(cols))
        self._group_codes: np.ndarray | None = None
        self._group_labels: list[Any] = []
        self._group: Hashable | None = None
        self._settings: dict[Hashable, ev.Settings] = {c: ev.Settings() for c in self._columns}
        if group is not None:
            self._set_group(group)
            self._settings = {c: ev.Settings(group=group) for c in self._columns}
        self._marked = {c: np.zeros(self._n, dtype=bool) for c in self._columns}
        self._kept = {c: np.zeros(self._n, dtype=bool) for c in self._columns}
        self._notes: dict[int, str] = {}
        self._current: Hashable = self._columns[0]
        self._prepared: dict[tuple[Hashable, str, float | None], ev.Prepared] = {}
        self._evals: dict[Hashable, ev.Evaluation] = {}
        self._contrib: dict[Hashable, np.ndarray] = {}
        self._mask: np.ndarray | None = None
        self._undo: list[_Change | _NoteChange] = []
        self._redo: list[_Change | _NoteChange] = []
        self._summaries: dict[tuple[Any, ...], Summary] = {}
        self._comparisons: dict[Hashable, tuple[TransformComparison, ...]] = {}
        self._qq: dict[tuple[Hashable, ev.Settings], QQ] = {}
        self._states: dict[Hashable, tuple[int, np.ndarray]] = {}
        self._counts: dict[Hashable, tuple[int, dict[str, int]]] = {}
        self._listeners: list[Callable[[], None]] = []
        self.version = 0

    # --- edges: labels and columns ---------------------------------------------------------

    def _check_label(self, c: Hashable, what: str) -> None:
        if c not in self._df.columns:
            raise KeyError(f"{what} {c!r} is not in the DataFrame; its columns are "
                           f"{list(self._df.columns)[:20]}")
        if int((self._df.columns == c).sum()) > 1:
            raise ValueError(f"{what} {c!r} appears more than once in the DataFrame's columns; "
                             "rename the duplicates (df.columns = [...]) before screening")

    def _set_group(self, group: Hashable) -> None:
        self._check_label(group, "group column")
        codes, uniques = pd.factorize(self._df[group], sort=True, use_na_sentinel=True)
        self._group_codes = codes.astype(np.int64)
        self._group_labels = list(uniques)
        self._group = group

    @property
    def frame(self) -> pd.DataFrame:
        """The user's DataFrame, as given."""
        return self._df

    @property
    def columns(self) -> tuple[Hashable, ...]:
        return self._columns

    @property
    def column(self) -> Hashable:
        """The column being looked at."""
        return self._current

    @column.setter
    def column(self, c: Hashable) -> None:
        self._col(c)
        self._current = c

    @property
    def group(self) -> Hashable | None:
        return self._group

    def _col(self, c: Hashable | None) -> Hashable:
        if c is None:
            return self._current
        if c not in self._settings:
            raise KeyError(f"column {c!r} is not screened here; screened columns are "
                           f"{list(self._columns)}")
        return c

    def positions_of(self, labels: Any) -> np.ndarray:
        """Row positions of index labels (every row for a repeated label); a boolean mask
        aligned to the frame is accepted too. Unknown labels raise a KeyError naming them."""
        index = self._df.index
        if isinstance(labels, pd.Series) and pd.api.types.is_bool_dtype(labels.dtype):
            aligned = labels.reindex(index) if not labels.index.equals(index) else labels
            return np.flatnonzero(aligned.fillna(False).to_numpy(dtype=bool))
        if isinstance(labels, np.ndarray) and labels.dtype == bool:
            if labels.size != self._n:
                raise ValueError(f"a boolean selection needs {self._n} values, got {labels.size}")
            return np.flatnonzero(labels)
        if isinstance(index, pd.MultiIndex) and isinstance(labels, tuple):
            labels = [labels]
        elif isinstance(labels, (str, bytes)) or not isinstance(labels, Iterable):
            labels = [labels]
        labels = list(labels)
        if not labels:
            return np.empty(0, dtype=np.int64)
        if isinstance(index, pd.MultiIndex):
            short = [lab for lab in labels
                     if not isinstance(lab, tuple) or len(lab) != index.nlevels]
            if short:
                raise KeyError(f"the index has {index.nlevels} levels; give each label as a "
                               f"tuple of {index.nlevels} values, e.g. not {short[0]!r}")
            wanted = pd.MultiIndex.from_tuples(labels, names=index.names)
        else:
            wanted = pd.Index(labels)
        found = index.get_indexer_for(wanted)
        if (found < 0).any():
            missing = [lab for lab in labels if lab not in index]
            raise KeyError(f"{len(missing)} label(s) are not in the index, e.g. {missing[:5]}")
        return np.unique(found).astype(np.int64)

    def labels_of(self, positions: Sequence[int] | np.ndarray) -> pd.Index:
        return self._df.index[np.asarray(positions, dtype=np.int64)]

    # --- settings and evaluation -------------------------------------------------------------

    def settings(self, column: Hashable | None = None) -> ev.Settings:
        return self._settings[self._col(column)]

    def configure(self, column: Hashable | None = None, **changes: Any) -> ev.Evaluation:
        """Change a column's transformation, λ, rule, rule parameters or group column, e.g.
        ``screen.configure(transform="log", rule="fences", k=3)``. On an error nothing changes.
        """
        c = self._col(column)
        old = self._settings[c]
        new = old.update(**changes)
        if new.group != self._group and new.group is not None:
            self._check_label(new.group, "group column")
        saved = (self._group_codes, self._group_labels, self._group)
        group_before = self._group
        if new.group != self._group:
            if new.group is None:
                self._group_codes, self._group_labels, self._group = None, [], None
            else:
                self._set_group(new.group)
            # the group column is shared by all columns
            for other in self._columns:
                self._settings[other] = self._settings[other].update(group=new.group)
                self._evals.pop(other, None)
        self._settings[c] = new
        self._evals.pop(c, None)
        try:
            result = self.evaluation(c)
            if result.group_codes is None and result.bounds.error:
                raise ValueError(f"column {c!r} cannot be screened so: {result.bounds.error}")
        except Exception:
            self._settings[c] = old
            if self._group != group_before:
                self._group_codes, self._group_labels, self._group = saved
                for other in self._columns:
                    self._settings[other] = self._settings[other].update(group=saved[2])
                    self._evals.pop(other, None)
            self._evals.pop(c, None)
            raise
        self._changed(None if new.group != old.group else c)
        self._notify()
        return result

    def _prepare(self, c: Hashable, s: ev.Settings) -> ev.Prepared:
        key = (c, s.transform, s.lmbda)
        p = self._prepared.get(key)
        if p is None:
            p = ev.prepare(self._raw[c], s.transform, s.lmbda)
            if len(self._prepared) > 16:
                self._prepared.pop(next(iter(self._prepared)))
            self._prepared[key] = p
        return p

    def evaluation(self, column: Hashable | None = None) -> ev.Evaluation:
        """The column's settings applied (cached until the settings change)."""
        c = self._col(column)
        e = self._evals.get(c)
        if e is None:
            s = self._settings[c]
            e = ev.evaluate(self._raw[c], s, group_codes=self._group_codes if s.group is not None
                            else None, group_labels=self._group_labels,
                            prepared=self._prepare(c, s))
            self._evals[c] = e
        return e

    def values(self, column: Hashable | None = None) -> np.ndarray:
        """The column's values on its screening scale, by row position (read-only view)."""
        v = self.evaluation(column).prepared.values.view()
        v.flags.writeable = False
        return v

    # --- states and the mask ------------------------------------------------------------------

    def states(self, column: Hashable | None = None) -> np.ndarray:
        """State code of every row in a column: 0 plain, 1 flagged, 2 marked, 3 kept,
        4 missing (see ``STATE_NAMES``)."""
        c = self._col(column)
        cached = self._states.get(c)
        if cached is not None and cached[0] == self.version:
            return cached[1]
        e = self.evaluation(c)
        st = np.zeros(self._n, dtype=np.int8)
        st[e.flagged] = FLAGGED
        st[self._marked[c]] = MARKED
        st[self._kept[c]] = KEPT
        st[np.isnan(e.prepared.values)] = MISSING
        st.flags.writeable = False
        self._states[c] = (self.version, st)
        return st

    def _contribution(self, c: Hashable) -> np.ndarray:
        m = self._contrib.get(c)
        if m is None:
            e = self.evaluation(c)
            m = (e.flagged | self._marked[c]) & ~self._kept[c] & ~np.isnan(e.prepared.values)
            self._contrib[c] = m
        return m

    def mask_array(self) -> np.ndarray:
        """The mask as a numpy bool array by row position."""
        if self._mask is None:
            out = np.zeros(self._n, dtype=bool)
            for c in self._columns:
                out |= self._contribution(c)
            out.flags.writeable = False
            self._mask = out
        return self._mask

    @property
    def mask(self) -> pd.Series:
        """``(flagged | marked) & ~kept`` in any screened column, as a boolean Series with the
        frame's index: ``df[~screen.mask]`` is the data with the suspect rows set aside."""
        return pd.Series(self.mask_array().copy(), index=self._df.index, name="suspect")

    def counts(self, column: Hashable | None = None) -> dict[str, int]:
        c = self._col(column)
        cached = self._counts.get(c)
        if cached is not None and cached[0] == self.version:
            return dict(cached[1])
        tally = np.bincount(self.states(c), minlength=5)
        out = {"rows": self._n, "flagged": int(tally[FLAGGED]), "marked": int(tally[MARKED]),
               "kept": int(tally[KEPT]), "missing": int(tally[MISSING]),
               "mask": int(np.count_nonzero(self.mask_array()))}
        self._counts[c] = (self.version, out)
        return dict(out)

    def on_change(self, callback: Callable[[], None], remove: bool = False) -> None:
        """Call *callback* (no arguments) after every decision, undo, redo or settings change."""
        if remove:
            self._listeners = [f for f in self._listeners if f is not callback]
        else:
            self._listeners.append(callback)

    def _notify(self) -> None:
        for callback in list(self._listeners):
            callback()

    def _changed(self, column: Hashable | None) -> None:
        if column is None:
            self._contrib.clear()
        else:
            self._contrib.pop(column, None)
        self._mask = None
        self.version += 1

    # --- hand decisions -------------------------------------------------------------------------

    def _checked_positions(self, positions: Any) -> np.ndarray:
        positions = np.asarray(positions)
        if positions.size and positions.dtype.kind not in "iu":
            raise TypeError(f"row positions must be whole numbers, got {positions.dtype}")
        positions = positions.astype(np.int64).ravel()
        if positions.size and (positions.min() < 0 or positions.max() >= self._n):
            raise IndexError(f"row positions must lie in 0..{self._n - 1}")
        return positions

    def _apply(self, c: Hashable, positions: np.ndarray, marked: np.ndarray | bool,
               kept: np.ndarray | bool) -> int:
        """Set marked/kept bits at positions, recording the change for undo."""
        positions = np.asarray(positions, dtype=np.int64)
        present = ~np.isnan(self._raw[c][positions]) if positions.size else np.zeros(0, bool)
        positions = positions[present]
        new_m = np.broadcast_to(marked, positions.shape).copy() if np.ndim(marked) == 0 else \
            np.asarray(marked)[present]
        new_k = np.broadcast_to(kept, positions.shape).copy() if np.ndim(kept) == 0 else \
            np.asarray(kept)[present]
        old_m = self._marked[c][positions]
        old_k = self._kept[c][positions]
        diff = (old_m != new_m) | (old_k != new_k)
        if not diff.any():
            return 0
        change = _Change(c, positions[diff], old_m[diff], old_k[diff], new_m[diff], new_k[diff])
        self._do(change)
        self._undo.append(change)
        self._redo.clear()
        self._notify()
        return int(diff.sum())

    def _do(self, change: _Change | _NoteChange, forward: bool = True) -> None:
        if isinstance(change, _NoteChange):
            for pos, before in zip(change.positions, change.before, strict=True):
                text = change.after if forward else before
                if text:
                    self._notes[int(pos)] = text
                else:
                    self._notes.pop(int(pos), None)
            self.version += 1
            return
        c = change.column
        self._marked[c][change.positions] = change.marked_after if forward else change.marked_before
        self._kept[c][change.positions] = change.kept_after if forward else change.kept_before
        self._changed(c)

    def mark(self, labels: Any, column: Hashable | None = None) -> int:
        """Mark rows by index label: they join the mask. Returns how many rows changed."""
        return self.mark_positions(self.positions_of(labels), column)

    def keep(self, labels: Any, column: Hashable | None = None) -> int:
        """Keep rows by label: a flag or mark on them is cleared by hand."""
        return self.keep_positions(self.positions_of(labels), column)

    def clear(self, labels: Any, column: Hashable | None = None) -> int:
        """Remove marks and keeps from rows by label: the rule's verdict applies again."""
        return self.clear_positions(self.positions_of(labels), column)

    def mark_positions(self, positions: Any, column: Hashable | None = None) -> int:
        return self._apply(self._col(column), self._checked_positions(positions), True, False)

    def keep_positions(self, positions: Any, column: Hashable | None = None) -> int:
        return self._apply(self._col(column), self._checked_positions(positions), False, True)

    def clear_positions(self, positions: Any, column: Hashable | None = None) -> int:
        return self._apply(self._col(column), self._checked_positions(positions), False, False)

    def region_positions(self, x0: float, x1: float, y0: float, y1: float,
                         column: Hashable | None = None) -> np.ndarray:
        """Positions of every row whose Q–Q point (normal quantile, value on the screening
        scale) lies in the rectangle, over all rows: both coordinates increase with rank, so
        the rectangle holds one run of ranks found by two binary searches."""
        return np.flatnonzero(self.region_mask(x0, x1, y0, y1, column))

    def region_mask(self, x0: float, x1: float, y0: float, y1: float,
                    column: Hashable | None = None) -> np.ndarray:
        """:meth:`region_positions` as a boolean array by row position (O(n), no sort)."""
        a, b = self._region_ranks(x0, x1, y0, y1, column)
        inside = np.zeros(self._n, dtype=bool)
        inside[self.evaluation(column).prepared.order[a:b]] = True
        return inside

    def _region_ranks(self, x0: float, x1: float, y0: float, y1: float,
                      column: Hashable | None = None) -> tuple[int, int]:
        """The run of ranks [a, b) whose Q–Q points lie in the rectangle."""
        ordered = self.evaluation(column).prepared.ordered
        n = ordered.size
        if n == 0:
            return 0, 0
        bad = [v for v in (x0, x1, y0, y1) if not np.isfinite(float(v))]
        if bad and not all(np.isinf(float(v)) for v in bad):
            raise ValueError(f"a region needs numbers, got {bad}")
        x0, x1 = sorted((float(x0), float(x1)))
        y0, y1 = sorted((float(y0), float(y1)))
        m = NormalQuantiles(n, "filliben")
        a = max(m.searchsorted(x0, "left"), int(np.searchsorted(ordered, y0, "left")))
        b = min(m.searchsorted(x1, "right"), int(np.searchsorted(ordered, y1, "right")))
        return a, max(a, b)

    def mark_region(self, x0: float, x1: float, y0: float, y1: float, mode: str = "replace",
                    column: Hashable | None = None) -> int:
        """Mark the rows inside a rectangle of the Q–Q plot (theoretical quantile × value on the
        current scale), chosen over all rows. ``mode``: ``"replace"`` the column's marks,
        ``"add"`` to them or ``"remove"`` from them. Returns how many rows the rectangle holds."""
        if mode not in MODES:
            raise ValueError(f"mode must be one of {MODES}, got {mode!r}")
        c = self._col(column)
        inside = self.region_mask(x0, x1, y0, y1, c)
        marked, kept = self._marked[c], self._kept[c]
        if mode == "add":
            new_m, new_k = marked | inside, kept & ~inside
        elif mode == "remove":
            new_m, new_k = marked & ~inside, kept
        else:
            new_m, new_k = inside, kept & ~inside
        changed = np.flatnonzero((new_m != marked) | (new_k != kept))
        self._apply(c, changed, new_m[changed], new_k[changed])
        return int(np.count_nonzero(inside))

    def note(self, labels: Any, text: str | None) -> None:
        """Attach a free-text note to rows (None or "" removes it)."""
        if text is not None and not isinstance(text, str):
            raise TypeError(f"a note must be text, got {type(text).__name__}")
        self.note_positions(self.positions_of(labels), text)

    def note_positions(self, positions: Any, text: str | None) -> None:
        positions = self._checked_positions(positions)
        positions = positions[[self._notes.get(int(p)) != (text or None) for p in positions]]
        if not positions.size:
            return  # nothing changes: no step to undo
        change = _NoteChange(positions, [self._notes.get(int(p)) for p in positions], text or None)
        self._do(change)
        self._undo.append(change)
        self._redo.clear()
        self._notify()

    def notes(self) -> dict[int, str]:
        return dict(self._notes)

    @property
    def can_undo(self) -> bool:
        return bool(self._undo)

    @property
    def can_redo(self) -> bool:
        return bool(self._redo)

    def undo(self) -> bool:
        """Take back the last hand decision (mark, keep, clear, region or note)."""
        if not self._undo:
            return False
        change = self._undo.pop()
        self._do(change, forward=False)
        self._redo.append(change)
        self._notify()
        return True

    def redo(self) -> bool:
        if not self._redo:
            return False
        change = self._redo.pop()
        self._do(change)
        self._undo.append(change)
        self._notify()
        return True

    def marked_positions(self, column: Hashable | None = None) -> np.ndarray:
        return np.flatnonzero(self._marked[self._col(column)])

    def kept_positions(self, column: Hashable | None = None) -> np.ndarray:
        return np.flatnonzero(self._kept[self._col(column)])

    def raw(self, column: Hashable | None = None) -> np.ndarray:
        """The column as floats on its original scale (read-only)."""
        v = self._raw[self._col(column)].view()
        v.flags.writeable = False
        return v

    # --- rows in context -----------------------------------------------------------------

    def reasons(self, positions: Any, column: Hashable | None = None) -> list[str]:
        """Plain-language reason per row position for the given column."""
        c = self._col(column)
        positions = np.asarray(positions, dtype=np.int64)
        e = self.evaluation(c)
        rule = ev.reasons(e, positions)
        st = self.states(c)[positions]
        out = []
        for code, why, pos in zip(st, rule, positions, strict=True):
            if code == MARKED:
                why = "marked by hand" + (f"; the rule says: {why}" if why else "")
            elif code == KEPT:
                why = "kept by hand" + (f"; the rule says: {why}" if why else "")
            elif code == MISSING:
                why = "no value"
            if code == PLAIN and self.mask_array()[pos]:
                through = [str(o) for o in self._columns
                           if o != c and self._contribution(o)[pos]]
                why = (why + "; " if why else "") + "in the mask through " + ", ".join(through)
            note = self._notes.get(int(pos))
            out.append(why + (f" — note: {note}" if note else ""))
        return out

    def affected_positions(self, column: Hashable | None = None) -> np.ndarray:
        """Rows that are flagged, marked or kept in the column, or in the mask."""
        st = self.states(column)
        return np.flatnonzero(((st > PLAIN) & (st < MISSING)) | self.mask_array())

    def rows(self, column: Hashable | None = None, which: str = "affected") -> pd.DataFrame:
        """The rows in context: every original column plus ``state``, ``score`` and ``reason``
        for the column, ``note`` and ``in_mask``. ``which``: ``"affected"`` (flagged, marked,
        kept or in the mask), ``"mask"``, ``"flagged"``, ``"marked"``, ``"kept"`` or ``"all"``."""
        c = self._col(column)
        positions = self.select_rows(which, c)
        out = self._df.iloc[positions].copy()
        st = self.states(c)[positions]
        extra = {
            "state": np.asarray(STATE_NAMES, dtype=object)[st],
            "score": self.evaluation(c).scores_at(positions),
            "reason": self.reasons(positions, c),
            "note": [self._notes.get(int(p), "") for p in positions],
            "in_mask": self.mask_array()[positions],
        }
        for name, values in extra.items():
            label: Any = name
            while label in out.columns:
                label = f"{label}_"
            if isinstance(out.columns, pd.MultiIndex):  # full-length keys for tuple names
                label = (label,) + ("",) * (out.columns.nlevels - 1)
            out[label] = values
        return out

    def select_rows(self, which: str, column: Hashable | None = None) -> np.ndarray:
        """Row positions of one view: affected, mask, flagged, marked, kept or all."""
        if which == "all":
            return np.arange(self._n)
        if which == "affected":
            return self.affected_positions(column)
        if which == "mask":
            return np.flatnonzero(self.mask_array())
        codes = {"flagged": FLAGGED, "marked": MARKED, "kept": KEPT, "missing": MISSING}
        if which not in codes:
            raise ValueError("which must be one of 'affected', 'mask', 'flagged', 'marked', "
                             f"'kept', 'missing', 'all'; got {which!r}")
        return np.flatnonzero(self.states(column) == codes[which])

    # --- summary ---------------------------------------------------------------------------

    def summary(self, column: Hashable | None = None) -> Summary:
        """Location, spread, shape and normality of the column on its current scale, and a
        comparison of the transformations on the raw values."""
        c = self._col(column)
        s = self._settings[c]
        key = (c, s.transform, s.lmbda)
        if key in self._summaries:
            return self._summaries[key]
        e = self.evaluation(c)
        o = e.prepared.ordered
        n = o.size
        comparison = self.compare_transforms(c)
        valid = [t for t in comparison if not t.error and np.isfinite(t.ppcc)]
        best = max(valid, key=lambda t: t.ppcc).kind if valid else ""
        nan = float("nan")
        if n == 0:
            out = Summary(c, ev.scale_name(s.transform), 0, self._n, *([nan] * 9), None,
                          comparison, best, "no values")
        else:
            m = moments(o, ascending=True)
            med = sorted_median(o)
            q1, q3 = sorted_quantile(o, 0.25), sorted_quantile(o, 0.75)
            try:  # the Q–Q plot's r (Filliben positions) is the PPCC
                norm, err = normality_sorted(o, ppcc=self.qq_coordinates(c).r, m=m), ""
            except ValueError as exc:
                norm, err = None, str(exc)
            out = Summary(c, ev.scale_name(s.transform), n, self._n - n, m.mean, m.sd, med,
                          sorted_mad(o, med), q1, q3, q3 - q1, m.skewness,
                          m.excess_kurtosis, norm, comparison, best, err)
        if len(self._summaries) > 32:
            self._summaries.clear()
        self._summaries[key] = out
        return out

    def compare_transforms(self, column: Hashable | None = None) -> tuple[TransformComparison, ...]:
        """Skewness and PPCC of the raw column under each transformation (λ fitted)."""
        c = self._col(column)
        if c in self._comparisons:
            return self._comparisons[c]
        raw = self._raw[c]
        present = raw[~np.isnan(raw)]
        o = np.sort(present)
        out = []
        for kind in TRANSFORMS:
            try:
                with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
                    values, lm = fit(o, kind)
                if kind in DECREASING:
                    values = values[::-1]
                if values.size < 3 or values[0] == values[-1]:
                    raise ValueError("too few distinct values")
                if not np.isfinite(values).all():
                    raise ValueError("values overflow on this scale")
                skew = moments(values).skewness
                r = fit_line(NormalQuantiles(values.size, "filliben"), values)[2]
                out.append(TransformComparison(kind, lm, skew, r))
            except ValueError as exc:
                out.append(TransformComparison(kind, None, float("nan"), float("nan"), str(exc)))
        self._comparisons[c] = tuple(out)
        return self._comparisons[c]

    # --- what the plots draw ----------------------------------------------------------------

    def qq_coordinates(self, column: Hashable | None = None) -> QQ:
        """Q–Q coordinates of every present value on the current scale (arrays are shared and
        read-only): theoretical quantiles, ordered values, their row positions, the
        least-squares reference line and the PPCC."""
        c = self._col(column)
        key = (c, self._settings[c])
        cached = self._qq.get(key)
        if cached is None:
            e = self.evaluation(c)
            o, order = _frozen(e.prepared.ordered), _frozen(e.prepared.order)
            if o.size >= 3:
                cached = qq_sorted(o, order=order)
            else:  # too few points for a line: coordinates only
                nan = float("nan")
                m = NormalQuantiles(o.size)
                cached = QQ(m, o, order, nan, nan, nan, "filliben", "fit")
            if len(self._qq) > 8:
                self._qq.clear()
            self._qq[key] = cached
        return cached

    def qq_band(self, theoretical: np.ndarray, column: Hashable | None = None,
                level: float = 0.95) -> tuple[np.ndarray, np.ndarray]:
        """Pointwise confidence band of the reference line at the given normal quantiles:
        line ± z · slope · sqrt(p(1 - p)/n) / φ(q), the standard error of an order statistic
        (J. Fox, Applied Regression Analysis, 3rd ed., 2016, section 3.1.3)."""
        from scipy import stats as sps

        v = self.qq_coordinates(column)
        n = v.ordered.size
        p = sps.norm.cdf(theoretical)
        se = v.slope * np.sqrt(p * (1 - p) / n) / sps.norm.pdf(theoretical)
        z = sps.norm.ppf(0.5 + level / 2)
        line = v.intercept + v.slope * theoretical
        return line - z * se, line + z * se

    def histogram(self, column: Hashable | None = None, max_bins: int = 60) -> HistogramView:
        """Bin edges and counts of the column on its current scale (Freedman–Diaconis width,
        at most *max_bins* bins), counts of the marked rows, and the fitted normal density
        scaled to counts."""
        c = self._col(column)
        v = self.qq_coordinates(c)
        o = v.ordered
        if o.size == 0 or o[0] == o[-1]:
            lo = float(o[0]) if o.size else 0.0
            half = max(abs(lo) * 1e-3, 0.5) if np.isfinite(lo * 1e3) else abs(lo) * 1e-3
            edges = np.array([lo - half, lo + half])
        else:
            # spans near the largest float would overflow: work in halves, which is exact
            iqr = sorted_quantile(o, 0.75) / 2 - sorted_quantile(o, 0.25) / 2
            width = 2 * iqr / np.cbrt(o.size) if iqr > 0 else 0.0
            span = float(o[-1] / 2 - o[0] / 2)
            bins = int(np.clip(np.ceil(span / width) if width > 0 else 10, 5, max_bins))
            edges = np.linspace(o[0] / 2, o[-1] / 2, bins + 1) * 2
            edges[0], edges[-1] = o[0], o[-1]
        # the values are sorted: each bin's count is the difference of two binary searches
        # ([e_i, e_i+1), the last bin closed), as numpy.histogram counts them
        at = np.searchsorted(o, edges, "left")
        at[-1] = o.size
        counts = np.diff(at)
        e = self.evaluation(c)
        marked = e.prepared.values[self._marked[c] & ~np.isnan(e.prepared.values)]
        marked_counts = np.histogram(marked, edges)[0]
        m = moments(o, ascending=True) if o.size else None
        grid = np.linspace(edges[0] / 2, edges[-1] / 2, 121) * 2  # in halves, as the edges
        if m is not None and m.sd > 0:
            width = edges[1] - edges[0]
            density = np.exp(-0.5 * ((grid - m.mean) / m.sd) ** 2) / (m.sd * np.sqrt(2 * np.pi))
            with np.errstate(over="ignore"):
                curve = density * o.size * width
        else:
            curve = np.zeros_like(grid)
        return HistogramView(edges, counts, marked_counts, grid, curve)

    def box(self, column: Hashable | None = None) -> BoxView:
        """Quartiles, median and whiskers at k·IQR (k of the column's fences, else 1.5) to the
        most extreme values inside, on the current scale."""
        c = self._col(column)
        o = self.qq_coordinates(c).ordered
        if o.size == 0:
            nan = float("nan")
            return BoxView(nan, nan, nan, nan, nan, 1.5)
        s = self._settings[c]
        k = float(s.rule_params.get("k", 1.5))
        q1, q3 = sorted_quantile(o, 0.25), sorted_quantile(o, 0.75)
        lo_fence, hi_fence = q1 - k * (q3 - q1), q3 + k * (q3 - q1)
        a = int(np.searchsorted(o, lo_fence, "left"))
        b = int(np.searchsorted(o, hi_fence, "right")) - 1
        w_lo = float(o[min(a, o.size - 1)])
        w_hi = float(o[max(b, 0)])
        return BoxView(q1, sorted_median(o), q3, min(w_lo, q1), max(w_hi, q3), k)

    def rank_of(self, position: int, column: Hashable | None = None) -> int | None:
        """Rank (index into the ordered values) of one row's point in the Q–Q plot."""
        v = self.qq_coordinates(column)
        value = self.evaluation(column).prepared.values[int(position)]
        if np.isnan(value):
            return None
        lo = int(np.searchsorted(v.ordered, value, "left"))
        hi = int(np.searchsorted(v.ordered, value, "right"))
        hits = np.flatnonzero(v.order[lo:hi] == position)
        return lo + int(hits[0]) if hits.size else lo

    # --- hand-over ------------------------------------------------------------------------

    @property
    def ledger(self) -> Ledger:
        """The decisions as a :class:`strayline.Ledger` that replays them on new data."""
        from .ledger import Ledger

        return Ledger.from_screen(self)

    def __repr__(self) -> str:
        return (f"Screen({self._n} rows, columns={list(self._columns)}, "
                f"current={self._current!r}, in mask={int(self.mask_array().sum())})")
