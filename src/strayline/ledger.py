"""The ledger: a screening's decisions as a JSON document that replays them on new data."""

from __future__ import annotations

import datetime as _dt
import json
import os
import tempfile
import warnings
from collections.abc import Hashable
from dataclasses import dataclass, field
from pathlib import Path
from typing import TYPE_CHECKING, Any

import numpy as np
import pandas as pd

from . import evaluate as ev
from ._version import __version__
from .stats._input import to_float

if TYPE_CHECKING:
    from .screen import Screen

FORMAT = "strayline-ledger"
FORMAT_VERSION = 1


class LedgerError(ValueError):
    """A ledger document that cannot be read or applied, with the place that is wrong."""


class LedgerWarning(UserWarning):
    """Hand decisions that could not be replayed on new data."""


# --- labels to JSON and back ---------------------------------------------------------------

def encode_label(label: Any) -> Any:
    """An index label as JSON: numbers and text as they are, others tagged."""
    if isinstance(label, (bool, np.bool_)):
        return {"bool": bool(label)}
    if isinstance(label, (int, np.integer)):
        return int(label)
    if isinstance(label, (float, np.floating)):
        return {"float": repr(float(label))} if not np.isfinite(label) else float(label)
    if isinstance(label, str):
        return label
    if isinstance(label, pd.Timestamp):
        return {"timestamp": label.isoformat()}
    if isinstance(label, _dt.datetime):
        return {"timestamp": pd.Timestamp(label).isoformat()}
    if isinstance(label, _dt.date):
        return {"date": label.isoformat()}
    if isinstance(label, pd.Timedelta):
        return {"timedelta": label.isoformat()}
    if isinstance(label, tuple):
        return {"tuple": [encode_label(v) for v in label]}
    if label is None:
        return {"none": True}
    raise TypeError(f"cannot record the label {label!r} of type {type(label).__name__} in a "
                    "ledger; use numbers, text, timestamps or tuples of them as index labels")


def decode_label(value: Any, where: str = "label") -> Any:
    if isinstance(value, bool):
        raise LedgerError(f"{where}: a bare true/false is not a label")
    if isinstance(value, (int, float, str)):
        return value
    if isinstance(value, dict) and len(value) == 1:
        (tag, v), = value.items()
        try:
            if tag == "bool":
                return bool(v)
            if tag == "float":
                return float(v)
            if tag == "date":
                return _dt.date.fromisoformat(v)
            if tag == "timestamp":
                return pd.Timestamp(v)
            if tag == "timedelta":
                return pd.Timedelta(v)
            if tag == "tuple":
                return tuple(decode_label(x, where) for x in v)
            if tag == "none":
                return None
        except (TypeError, ValueError) as exc:
            raise LedgerError(f"{where}: cannot read {value!r}: {exc}") from None
    raise LedgerError(f"{where}: cannot read the label {value!r}")


def _jsonable(v: Any) -> Any:
    if isinstance(v, (np.floating, float)):
        return float(v) if np.isfinite(v) else None
    if isinstance(v, (np.integer,)):
        return int(v)
    return v


# --- the document -----------------------------------------------------------------------------

@dataclass(frozen=True)
class Decision:
    """A hand decision on one row: its label and the value seen when it was taken, and, when
    several rows share that label and value, which of them (0 = the first in frame order)."""

    label: Any
    value: float | None
    occurrence: int | None = None


@dataclass(frozen=True)
class ColumnRecord:
    """One screened column: its settings (λ as fitted), its fitted bounds per group, and the
    hand marks and keeps."""

    column: Hashable
    settings: ev.Settings
    bounds: tuple[ev.GroupBounds, ...]
    marks: tuple[Decision, ...] = ()
    keeps: tuple[Decision, ...] = ()


@dataclass(frozen=True)
class Ledger:
    """The decisions of a screening: settings per column, fitted bounds, hand marks and keeps
    by index label with the value seen, notes, the library version and a timestamp.

    ``ledger.apply(df)`` rebuilds the mask on new data without the widget;
    ``ledger.save(path)`` / ``Ledger.load(path)`` keep it as JSON; ``ledger.to_code()`` prints
    equivalent Python that uses only :mod:`strayline.stats`.
    """

    columns: tuple[ColumnRecord, ...]
    notes: tuple[tuple[Any, str], ...] = ()
    library: str = __version__
    created: str = field(default_factory=lambda: _dt.datetime.now(_dt.timezone.utc)
                         .isoformat(timespec="seconds"))
    comment: str = ""

    # --- building -------------------------------------------------------------------------

    @classmethod
    def from_screen(cls, screen: Screen) -> Ledger:
        records = []
        index = screen.frame.index
        for c in screen.columns:
            e = screen.evaluation(c)
            raw = screen.raw(c)
            marks = tuple(_decision(index, raw, p) for p in screen.marked_positions(c))
            keeps = tuple(_decision(index, raw, p) for p in screen.kept_positions(c))
            records.append(ColumnRecord(c, e.settings, e.groups, marks, keeps))
        notes = tuple((index[p], text) for p, text in sorted(screen.notes().items()))
        return cls(tuple(records), notes)

    # --- JSON -----------------------------------------------------------------------------

    def to_dict(self) -> dict[str, Any]:
        cols = []
        for r in self.columns:
            s = r.settings
            cols.append({
                "column": encode_label(r.column),
                "transform": s.transform,
                "lmbda": _jsonable(s.lmbda),
                "rule": s.rule,
                "params": {k: _jsonable(v) for k, v in s.params},
                "group": None if s.group is None else encode_label(s.group),
                "bounds": [{"group": None if g.label is None else encode_label(g.label),
                            **{k: _jsonable(v) if not isinstance(v, dict) else
                               {a: _jsonable(b) for a, b in v.items()}
                               for k, v in g.to_dict().items()}} for g in r.bounds],
                "marks": [_decision_dict(d) for d in r.marks],
                "keeps": [_decision_dict(d) for d in r.keeps],
            })
        return {"format": FORMAT, "version": FORMAT_VERSION, "library": self.library,
                "created": self.created, "comment": self.comment, "columns": cols,
                "notes": [{"label": encode_label(lab), "text": t} for lab, t in self.notes]}

    def to_json(self) -> str:
        return json.dumps(self.to_dict(), indent=2, ensure_ascii=False, allow_nan=False)

    def save(self, path: str | os.PathLike[str]) -> Path:
        """Write the ledger as JSON atomically: a temporary file in the same folder, then a
        rename, so an interrupted save never leaves a broken file."""
        path = Path(path)
        text = self.to_json()
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent or ".")
        try:
            with os.fdopen(fd, "w", encoding="utf-8") as fh:
                fh.write(text)
                fh.flush()
                os.fsync(fh.fileno())
            try:
                mode = path.stat().st_mode & 0o777
            except FileNotFoundError:
                umask = os.umask(0)
                os.umask(umask)
                mode = 0o666 & ~umask
            os.chmod(tmp, mode)
            os.replace(tmp, path)
        except BaseException:
            Path(tmp).unlink(missing_ok=True)
            raise
        return path

    @classmethod
    def load(cls, path: str | os.PathLike[str]) -> Ledger:
        """Read and validate a ledger file; a LedgerError says what is wrong and where."""
        try:
            text = Path(path).read_text(encoding="utf-8")
        except UnicodeDecodeError as exc:
            raise LedgerError(f"{path}: not a text file ({exc})") from None
        try:
            doc = json.loads(text)
        except json.JSONDecodeError as exc:
            raise LedgerError(f"{path}: not valid JSON (truncated or edited?): {exc}") from None
        return cls.from_dict(doc, source=str(path))

    @classmethod
    def from_dict(cls, doc: Any, source: str = "ledger") -> Ledger:
        def need(obj: Any, key: str, kind: type | tuple[type, ...], where: str) -> Any:
            if not isinstance(obj, dict) or key not in obj:
                raise LedgerError(f"{source}: {where}: missing {key!r}")
            if not isinstance(obj[key], kind):
                raise LedgerError(f"{source}: {where}.{key}: expected "
                                  f"{getattr(kind, '__name__', kind)}, got {obj[key]!r}"[:300])
            return obj[key]

        if not isinstance(doc, dict) or doc.get("format") != FORMAT:
            raise LedgerError(f"{source}: not a strayline ledger (no \"format\": \"{FORMAT}\")")
        version = need(doc, "version", int, "document")
        if version > FORMAT_VERSION:
            raise LedgerError(f"{source}: written in ledger format {version} by a newer "
                              f"strayline ({doc.get('library')}); this is {__version__}, which "
                              f"reads format {FORMAT_VERSION}: upgrade strayline")
        if version < 1:
            raise LedgerError(f"{source}: unknown ledger format version {version}")
        records = []
        for i, c in enumerate(need(doc, "columns", list, "document")):
            where = f"columns[{i}]"
            try:
                params = need(c, "params", dict, where)
                group = c.get("group")
                settings = ev.Settings(
                    transform=need(c, "transform", str, where),
                    lmbda=c.get("lmbda"),
                    rule=need(c, "rule", str, where),
                    params=tuple(params.items()),
                    group=None if group is None else decode_label(group, f"{where}.group"))
            except (ValueError, TypeError) as exc:
                if isinstance(exc, LedgerError):
                    raise
                raise LedgerError(f"{source}: {where}: {exc}") from None
            if settings.lmbda is not None and not isinstance(settings.lmbda, (int, float)):
                raise LedgerError(f"{source}: {where}.lmbda: expected a number")
            bounds = []
            for j, b in enumerate(need(c, "bounds", list, where)):
                w = f"{where}.bounds[{j}]"
                nums = {}
                for key in ("lower", "upper", "center", "scale_lo", "scale_hi"):
                    v = need(b, key, (int, float, type(None)), w)
                    nums[key] = float("nan") if v is None else float(v)
                label = b.get("group")
                info = need(b, "info", dict, w)
                bad = [k for k, v in info.items() if v is not None
                       and (isinstance(v, bool) or not isinstance(v, (int, float)))]
                if bad:
                    raise LedgerError(f"{source}: {w}.info.{bad[0]}: expected a number, got "
                                      f"{info[bad[0]]!r}"[:300])
                bounds.append(ev.GroupBounds(
                    None if label is None else decode_label(label, f"{w}.group"),
                    int(need(b, "n", int, w)), nums["lower"], nums["upper"], nums["center"],
                    nums["scale_lo"], nums["scale_hi"],
                    {k: float("nan") if v is None else float(v) for k, v in info.items()},
                    str(b.get("error", ""))))
            if settings.group is None and not any(g.label is None for g in bounds):
                raise LedgerError(f"{source}: {where}.bounds: no bounds for the whole column "
                                  "(an entry with \"group\": null)")

            def decisions(key: str, where: str = where, c: Any = c) -> tuple[Decision, ...]:
                out = []
                for j, d in enumerate(need(c, key, list, where)):
                    w = f"{where}.{key}[{j}]"
                    v = need(d, "value", (int, float, type(None)), w)
                    occ = d.get("occurrence")
                    if occ is not None and (isinstance(occ, bool) or not isinstance(occ, int)
                                            or occ < 0):
                        raise LedgerError(f"{source}: {w}.occurrence must be a whole number "
                                          f">= 0, got {occ!r}")
                    out.append(Decision(decode_label(need(d, "label", (int, float, str, dict), w),
                                                     f"{w}.label"), v, occ))
                return tuple(out)

            records.append(ColumnRecord(decode_label(need(c, "column", (int, float, str, dict),
                                                          where), f"{where}.column"),
                                        settings, tuple(bounds), decisions("marks"),
                                        decisions("keeps")))
        raw_notes = doc.get("notes", [])
        if not isinstance(raw_notes, list):
            raise LedgerError(f"{source}: notes: expected a list, got {raw_notes!r}"[:300])
        notes = tuple((decode_label(need(n, "label", (int, float, str, dict), f"notes[{k}]")),
                       str(need(n, "text", str, f"notes[{k}]")))
                      for k, n in enumerate(raw_notes))
        return cls(tuple(records), notes, str(doc.get("library", "")), str(doc.get("created", "")),
                   str(doc.get("comment", "")))

    # --- replay -----------------------------------------------------------------------------

    def apply(self, df: pd.DataFrame, refit: bool = True) -> pd.Series:
        """The mask on (new) data: each column's rule re-fitted on *df* (``refit=True``) or its
        recorded bounds reused (``refit=False``), with the recorded transformation and λ; then
        the hand marks and keeps where their labels exist with the value seen. Labels that are
        missing, or whose value changed, are not replayed and are listed in a LedgerWarning.
        A column missing from *df* is an error: no partial mask is returned."""
        if not isinstance(df, pd.DataFrame):
            raise TypeError(f"apply needs a pandas DataFrame, got {type(df).__name__}")
        absent = [r.column for r in self.columns if r.column not in df.columns]
        if absent:
            raise LedgerError(f"the data lack screened column(s) {absent}; no mask was made")
        needed = [r.column for r in self.columns] + [r.settings.group for r in self.columns
                                                     if r.settings.group is not None]
        repeated = sorted({str(c) for c in needed if int((df.columns == c).sum()) > 1})
        if repeated:
            raise LedgerError(f"{repeated[0]!r} appears more than once in the data's columns; "
                              "rename the duplicates so that each screened column is "
                              "unambiguous; no mask was made")
        mask = np.zeros(len(df), dtype=bool)
        problems: list[str] = []
        for r in self.columns:
            raw = to_float(df[r.column], name=r.column)
            infinite = int(np.isinf(raw).sum())
            if infinite:
                raise LedgerError(f"column {r.column!r} holds {infinite} infinite value(s); "
                                  "replace them with NaN or a bound first; no mask was made")
            codes = labels = None
            s = r.settings
            if s.group is not None:
                if s.group not in df.columns:
                    raise LedgerError(f"the data lack the group column {s.group!r}")
                codes_, uniques = pd.factorize(df[s.group], sort=True)
                codes, labels = codes_.astype(np.int64), list(uniques)
            frozen = None
            if not refit:
                frozen = {g.label: g for g in r.bounds}
            e = ev.evaluate(raw, s, group_codes=codes, group_labels=labels, frozen=frozen)
            for g in e.groups:
                # a whole column that cannot be screened, or a group the frozen bounds never saw
                unseen = frozen is not None and g.label is not None and g.label not in frozen
                if g.error and (g.label is None or (unseen and g.n > 0)):
                    where = "" if g.label is None else f" group {g.label!s}:"
                    problems.append(f"{r.column!s}:{where} not screened: {g.error}")
            marked = np.zeros(len(df), dtype=bool)
            kept = np.zeros(len(df), dtype=bool)
            for decisions, target, what in ((r.marks, marked, "mark"), (r.keeps, kept, "keep")):
                for d in decisions:
                    pos = _positions(df.index, d.label)
                    if pos.size == 0:
                        problems.append(f"{r.column!s}: {what} on {d.label!r}: label not found")
                        continue
                    # a repeated label names several rows: the value seen tells which
                    same = np.isclose(raw[pos], np.nan if d.value is None else d.value,
                                      rtol=1e-12, atol=0.0, equal_nan=True)
                    if not same.any():
                        problems.append(f"{r.column!s}: {what} on {d.label!r}: value changed "
                                        f"from {d.value!r} to {float(raw[pos][0])!r}")
                    rows = pos[same]
                    if d.occurrence is not None:  # the label and value repeat: the n-th row
                        if d.occurrence >= rows.size:
                            if rows.size:
                                problems.append(f"{r.column!s}: {what} on {d.label!r}: row "
                                                f"{d.occurrence + 1} of those with value "
                                                f"{d.value!r} not found")
                            continue
                        rows = rows[d.occurrence:d.occurrence + 1]
                    target[rows] = True
            present = ~np.isnan(e.prepared.values)
            mask |= (e.flagged | marked) & ~kept & present
        if problems:
            warnings.warn(f"{len(problems)} hand decision(s) were not replayed:\n  "
                          + "\n  ".join(problems), LedgerWarning, stacklevel=2)
        return pd.Series(mask, index=df.index, name="suspect")

    # --- as code ----------------------------------------------------------------------------

    def to_code(self, function: str = "suspect_mask") -> str:
        """Python source of a function ``suspect_mask(df)`` that rebuilds the mask with
        :mod:`strayline.stats` calls (rules re-fitted, λ as recorded, hand decisions where the
        label and the recorded value both match exactly; unlike :meth:`apply` it does not warn
        about the decisions it cannot replay)."""
        lines = [
            "import datetime",
            "",
            "import numpy as np",
            "import pandas as pd",
            "import strayline",
            "",
            "",
            f"def {function}(df):",
            f"    # rebuilds the screening mask of the ledger of {_one_line(self.created)}, "
            f"strayline {_one_line(self.library)}",
            "    mask = np.zeros(len(df), dtype=bool)",
        ]
        helper = [
            "",
            "",
            "def _decided(df, column, decisions):",
            '    """Rows whose index label and value match a recorded hand decision (where a',
            '    label and value repeat, the n-th such row in frame order, n from 0)."""',
            "    hit = np.zeros(len(df), dtype=bool)",
            "    if decisions:",
            "        wanted = set(decisions)",
            "        rows = np.flatnonzero(df.index.isin([label for label, _, _ in decisions]))",
            "        values = np.asarray(df[column], dtype=float)[rows]",
            "        count = {}",
            "        for row, label, value in zip(rows, df.index[rows], values):",
            "            n = count[label, value] = count.get((label, value), -1) + 1",
            "            hit[row] = (label, value, None) in wanted or (label, value, n) in wanted",
            "    return hit",
        ]
        for r in self.columns:
            s = r.settings
            lines.append(f"    # {_one_line(str(r.column))}: {s.describe()}")
            lines.append(f"    x = strayline.stats.transform(df[{r.column!r}], {s.transform!r}"
                         + (f", lmbda={s.lmbda!r}" if s.lmbda is not None else "") + ").values")
            lines.append("    x = np.asarray(x, dtype=float)")
            params = ", ".join(f"{k}={v!r}" for k, v in s.params)
            call = f"strayline.stats.flag(part, {s.rule!r}, {params}).mask"
            if s.group is None:
                lines += ["    part = x", f"    flagged = np.asarray({call})"]
            else:
                lines += [
                    f"    codes, _ = pd.factorize(df[{s.group!r}], sort=True)",
                    "    flagged = np.zeros(len(df), dtype=bool)",
                    "    for code in range(codes.max() + 1):",
                    "        rows = np.flatnonzero(codes == code)",
                    "        part = x[rows]",
                    "        try:",
                    f"            flagged[rows] = np.asarray({call})",
                    "        except ValueError:  # too few values or no spread in this group",
                    "            pass",
                ]
            for name, decisions in (("marked", r.marks), ("kept", r.keeps)):
                pairs = _literal([(d.label, d.value, d.occurrence) for d in decisions],
                                 pairs=True)
                lines.append(f"    {name} = _decided(df, {r.column!r}, {pairs})")
            lines.append("    mask |= (flagged | marked) & ~kept & ~np.isnan(x)")
        lines.append('    return pd.Series(mask, index=df.index, name="suspect")')
        return "\n".join(lines + helper) + "\n"

    def __repr__(self) -> str:
        cols = ", ".join(f"{r.column!s} ({r.settings.describe()}; {len(r.marks)} marked, "
                         f"{len(r.keeps)} kept)" for r in self.columns)
        return f"Ledger({cols}; strayline {self.library}, {self.created})"


def _one_line(text: str) -> str:
    """Text safe inside a one-line comment of generated code."""
    return repr(str(text))[1:-1][:200]


def _decision(index: pd.Index, raw: np.ndarray, p: int) -> Decision:
    """The decision on row position *p*, with its rank among the rows that share its label and
    value when there are several."""
    pos = _positions(index, index[p])
    same = pos[np.isclose(raw[pos], raw[p], rtol=1e-12, atol=0.0, equal_nan=True)]
    occurrence = int(np.searchsorted(same, p)) if same.size > 1 else None
    return Decision(index[p], _jsonable(raw[p]), occurrence)


def _decision_dict(d: Decision) -> dict[str, Any]:
    out = {"label": encode_label(d.label), "value": d.value}
    if d.occurrence is not None:
        out["occurrence"] = d.occurrence
    return out


def _positions(index: pd.Index, label: Any) -> np.ndarray:
    try:
        loc = index.get_loc(label)
    except (KeyError, TypeError):
        return np.empty(0, dtype=np.int64)
    if isinstance(loc, slice):
        return np.arange(len(index))[loc]
    if isinstance(loc, np.ndarray):
        return np.flatnonzero(loc) if loc.dtype == bool else loc.astype(np.int64)
    return np.array([loc], dtype=np.int64)


def _literal(labels: list[Any], pairs: bool = False) -> str:
    def one(v: Any) -> str:
        if isinstance(v, pd.Timestamp):
            return f"pd.Timestamp({v.isoformat()!r})"
        if isinstance(v, pd.Timedelta):
            return f"pd.Timedelta({v.isoformat()!r})"
        if isinstance(v, tuple):
            inner = ", ".join(one(x) for x in v)
            return f"({inner}{',' if len(v) == 1 else ''})"
        if isinstance(v, _dt.date) and not isinstance(v, _dt.datetime):
            return f"datetime.date.fromisoformat({v.isoformat()!r})"
        if isinstance(v, (bool, np.bool_)):
            return repr(bool(v))
        if isinstance(v, (np.integer,)):
            return repr(int(v))
        if isinstance(v, (float, np.floating)):
            f = float(v)
            return repr(f) if np.isfinite(f) else f"float({repr(f)!r})"
        return repr(v)

    if pairs:
        return "[" + ", ".join(f"({one(a)}, {float(b)!r}, {None if c is None else int(c)!r})"
                               for a, b, c in labels) + "]"
    return "[" + ", ".join(one(v) for v in labels) + "]"
