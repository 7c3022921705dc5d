"""One column's settings applied to its values: flags, scores, bounds and reasons.

This is the single place where a transformation and a rule meet the data: the Screen calls it to
show a column and the Ledger calls it to replay one, so a replay computes what the Screen showed.
"""

from __future__ import annotations

from collections.abc import Hashable, Mapping
from dataclasses import dataclass, field, replace
from functools import cached_property
from typing import Any

import numpy as np

from .stats.rules import RULES, Bounds, check_rule, describe_rule, scores_for, sorted_bounds
from .stats.transform import DECREASING, TRANSFORMS, fit, inverse


@dataclass(frozen=True)
class Settings:
    """How one column is screened.

    transform : one of ``"none"``, ``"log"``, ``"sqrt"``, ``"reciprocal"``, ``"boxcox"``,
        ``"yeojohnson"``; lmbda : λ for Box–Cox / Yeo–Johnson (None: fit by maximum likelihood);
    rule : a rule of :func:`strayline.flag`; params : its parameters (defaults filled in);
    group : a column whose groups are screened separately (None: the whole column).
    """

    transform: str = "none"
    lmbda: float | None = None
    rule: str = "fences"
    params: tuple[tuple[str, Any], ...] = ()
    group: Hashable | None = None

    def __post_init__(self) -> None:
        if self.transform not in TRANSFORMS:
            raise ValueError(f"unknown transformation {self.transform!r}; choose one of "
                             f"{TRANSFORMS}")
        if self.lmbda is not None and self.transform not in ("boxcox", "yeojohnson"):
            raise ValueError(f"the {self.transform!r} transformation takes no lmbda")
        filled = check_rule(self.rule, dict(self.params))
        object.__setattr__(self, "params", tuple(sorted(filled.items())))

    @property
    def rule_params(self) -> dict[str, Any]:
        return dict(self.params)

    def update(self, **changes: Any) -> Settings:
        """A copy with some fields changed; rule parameters may be passed by name
        (``k=3``); changing the rule resets parameters it does not take."""
        names = {"transform", "lmbda", "rule", "group"}
        direct = {k: v for k, v in changes.items() if k in names}
        extra = {k: v for k, v in changes.items() if k not in names and k != "params"}
        rule = direct.get("rule", self.rule)
        if rule not in RULES:
            raise ValueError(f"unknown rule {rule!r}; choose one of {sorted(RULES)}")
        params = {k: v for k, v in self.params if k in RULES[rule]}
        params.update(dict(changes.get("params", ())))
        params.update(extra)
        new_scale = "transform" in direct and direct["transform"] != self.transform
        if new_scale and "lmbda" not in direct:
            direct["lmbda"] = None
        return replace(self, **direct, params=tuple(params.items()))

    def describe(self) -> str:
        scale = "" if self.transform == "none" else f", {scale_name(self.transform)} scale"
        return describe_rule(self.rule, self.rule_params) + scale


def scale_name(kind: str) -> str:
    return {"none": "original", "log": "log", "sqrt": "square-root", "reciprocal": "reciprocal",
            "boxcox": "Box–Cox", "yeojohnson": "Yeo–Johnson"}[kind]


@dataclass(frozen=True)
class Prepared:
    """A column on its screening scale, sorted once (cached by the Screen per transformation).

    values : transformed values by row position (NaN where missing or untransformable);
    order : positions of the present values, ascending by transformed value;
    ordered : ``values[order]``; lmbda : λ used (fitted or given).
    """

    values: np.ndarray
    order: np.ndarray
    ordered: np.ndarray
    kind: str
    lmbda: float | None


def prepare(raw: np.ndarray, kind: str, lmbda: float | None = None) -> Prepared:
    """Transform raw float values (NaN = missing) and sort them once."""
    values, lm = fit(raw, kind, lmbda)
    n_present = int(np.count_nonzero(~np.isnan(values)))
    order = np.argsort(values)  # NaN sorts last
    # positions fit in 32 bits below 2**31 rows: half the memory for the longest-lived array
    order = order[:n_present].astype(np.int32 if values.size < 2**31 else np.int64)
    return Prepared(values=values, order=order, ordered=values[order], kind=kind, lmbda=lm)


@dataclass(frozen=True)
class GroupBounds:
    """The fitted rule in one group (or overall): bounds on the screening scale and the
    centre and scales that turn values into scores. ``error`` explains a group that could not
    be screened (too few values, zero spread); its rows are then not flagged."""

    label: Any
    n: int
    lower: float
    upper: float
    center: float
    scale_lo: float
    scale_hi: float
    info: Mapping[str, float] = field(default_factory=dict)
    error: str = ""

    def to_dict(self) -> dict[str, Any]:
        return {"n": self.n, "lower": self.lower, "upper": self.upper, "center": self.center,
                "scale_lo": self.scale_lo, "scale_hi": self.scale_hi, "info": dict(self.info),
                "error": self.error}


@dataclass(frozen=True)
class Evaluation:
    """A column's settings applied: everything per row is indexed by row position.

    flagged : bool per row; group_codes : int per row (-1 = missing group) or None;
    groups : one GroupBounds per group (a single one labelled None without a group column);
    settings : with λ filled in. Scores are formed on demand, for the rows asked
    (:meth:`scores_at`) or, once, for all of them (:attr:`scores`).
    """

    settings: Settings
    prepared: Prepared
    flagged: np.ndarray
    group_codes: np.ndarray | None
    groups: tuple[GroupBounds, ...]

    @property
    def bounds(self) -> GroupBounds:
        """The overall bounds (the only group when there is no group column)."""
        return self.groups[0]

    def row_bounds(self, positions: np.ndarray) -> list[GroupBounds | None]:
        if self.group_codes is None:
            return [self.groups[0]] * len(positions)
        codes = self.group_codes[positions]
        return [self.groups[c] if c >= 0 else None for c in codes]

    def scores_at(self, positions: np.ndarray | None) -> np.ndarray:
        """The rule's score of the rows at *positions* (None: every row); NaN where missing,
        in a group that could not be screened, or without a group."""
        if positions is None:
            values = self.prepared.values
        else:
            positions = np.asarray(positions, dtype=np.int64)
            values = self.prepared.values[positions]
        out = np.full(values.size, np.nan)
        if self.group_codes is None:
            g = self.groups[0]
            if not g.error:
                out[:] = scores_for(values, self.settings.rule, _bounds_of(g))
            return out
        codes = self.group_codes if positions is None else self.group_codes[positions]
        for code in np.unique(codes[codes >= 0]):
            g = self.groups[code]
            if g.error:
                continue
            rows = np.flatnonzero(codes == code)
            out[rows] = scores_for(values[rows], self.settings.rule, _bounds_of(g))
        return out

    @cached_property
    def scores(self) -> np.ndarray:
        """:meth:`scores_at` of every row (formed on first use, then kept)."""
        out = self.scores_at(None)
        out.flags.writeable = False
        return out


def _fit_group(ordered: np.ndarray, rule: str, params: dict[str, Any]) -> tuple[Bounds | None, str]:
    try:
        return sorted_bounds(ordered, rule, params), ""
    except ValueError as exc:
        return None, str(exc)


def _as_group(label: Any, n: int, b: Bounds | None, error: str) -> GroupBounds:
    if b is None:
        return GroupBounds(label, n, np.nan, np.nan, np.nan, np.nan, np.nan, {}, error)
    return GroupBounds(label, n, b.lower, b.upper, b.center, b.scale_lo, b.scale_hi,
                       dict(b.info), "")


def _bounds_of(g: GroupBounds) -> Bounds:
    return Bounds(g.lower, g.upper, np.empty(0, dtype=np.int64), g.center, g.scale_lo,
                  g.scale_hi, dict(g.info))


def evaluate(raw: np.ndarray, settings: Settings, *, group_codes: np.ndarray | None = None,
             group_labels: list[Any] | None = None, prepared: Prepared | None = None,
             frozen: Mapping[Any, GroupBounds] | None = None) -> Evaluation:
    """Apply *settings* to a column of raw floats (NaN = missing).

    Parameters
    ----------
    raw : float values by row position.
    settings : the transformation and rule.
    group_codes, group_labels : integer group of each row (-1 = none) and the label of each
        code, when the rule is applied within groups.
    prepared : the transformed, sorted column when the caller has it cached.
    frozen : bounds to reuse instead of fitting the rule (by group label; None for overall):
        values strictly outside them are flagged.

    A column (or group) that the rule cannot screen (too few values, no spread) flags nothing;
    its ``GroupBounds.error`` says why.
    """
    if prepared is None:
        prepared = prepare(raw, settings.transform, settings.lmbda)
    settings = replace(settings, lmbda=prepared.lmbda)
    params = settings.rule_params
    rule = settings.rule
    values = prepared.values
    n = values.size
    flagged = np.zeros(n, dtype=bool)
    groups: list[GroupBounds] = []
    if group_codes is None:
        if frozen is not None:
            if None not in frozen:
                raise ValueError("no recorded bounds for the whole column")
            g = frozen[None]
            if g.error:
                return Evaluation(settings, prepared, flagged, None, (g,))
            groups.append(g)
            with np.errstate(invalid="ignore"):
                flagged = (values < g.lower) | (values > g.upper)
        else:
            fitted, error = _fit_group(prepared.ordered, rule, params)
            groups.append(_as_group(None, prepared.ordered.size, fitted, error))
            if fitted is None:  # the column cannot be screened: nothing is flagged, and why
                return Evaluation(settings, prepared, flagged, None, tuple(groups))
            flagged[prepared.order[fitted.flagged]] = True
        return Evaluation(settings, prepared, flagged, None, tuple(groups))
    labels = list(group_labels or [])
    codes_in_order = group_codes[prepared.order]
    by_group = prepared.order[np.argsort(codes_in_order, kind="stable")]
    sorted_codes = group_codes[by_group]
    starts = np.searchsorted(sorted_codes, np.arange(len(labels)), side="left")
    ends = np.searchsorted(sorted_codes, np.arange(len(labels)), side="right")
    for code, label in enumerate(labels):
        rows = by_group[starts[code]:ends[code]]
        ordered = values[rows]
        fitted: Bounds | None = None
        if frozen is not None:
            g = frozen.get(label)
            if g is None:
                g = GroupBounds(label, rows.size, np.nan, np.nan, np.nan, np.nan, np.nan, {},
                                f"group {label!r} was not in the screened data")
        else:
            fitted, error = _fit_group(ordered, rule, params)
            g = _as_group(label, rows.size, fitted, error)
        groups.append(g)
        if g.error:
            continue
        if fitted is None:
            flagged[rows] = (ordered < g.lower) | (ordered > g.upper)
        else:
            flagged[rows[fitted.flagged]] = True
    return Evaluation(settings, prepared, flagged, group_codes, tuple(groups))


def _fmt(v: float) -> str:
    return f"{v:.4g}"


def reasons(ev: Evaluation, positions: np.ndarray) -> list[str]:
    """Plain-language reason per row for the flagged rows among *positions* ("" otherwise)."""
    s = ev.settings
    kind = s.transform
    scale = "" if kind == "none" else f", {scale_name(kind)} scale"
    params = s.rule_params
    out: list[str] = []
    for pos, g in zip(positions, ev.row_bounds(np.asarray(positions)), strict=True):
        if not ev.flagged[pos] or g is None:
            out.append("")
            continue
        v = ev.prepared.values[pos]
        where = "" if g.label is None else f" in group {g.label!s}"
        above = v > g.upper
        if s.rule in ("fences", "adjusted_fences"):
            name = "fence" if s.rule == "fences" else "skew-adjusted fence"
            bound = g.upper if above else g.lower
            shown = float(inverse(np.array([bound]), kind, s.lmbda)[0])
            # a scale that reverses the order (reciprocal) turns its upper fence into a lower
            # bound in original units: say it the way the number shown reads
            high = above != (kind in DECREASING)
            side = "upper" if high else "lower"
            out.append(f"{'above' if high else 'below'} the {side} {name} {_fmt(shown)}"
                       f" (k = {params['k']:g}{scale}){where}")
        elif s.rule in ("zscore", "robust_z"):
            name = "z" if s.rule == "zscore" else "robust z"
            out.append(f"{name} = {ev.scores_at([pos])[0]:+.2f}, beyond ±{params['threshold']:g}"
                       f"{' (' + scale[2:] + ')' if scale else ''}{where}")
        elif s.rule == "grubbs":
            out.append(f"most extreme value, rejected by Grubbs' test at alpha = "
                       f"{params['alpha']:g}{' (' + scale[2:] + ')' if scale else ''}{where}")
        else:
            k = int(g.info.get("n_outliers", 0))
            out.append(f"one of {k} outliers found by the generalized ESD test at alpha = "
                       f"{params['alpha']:g}{' (' + scale[2:] + ')' if scale else ''}{where}")
    return out
