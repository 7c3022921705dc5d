"""The table of rows in context, as an anywidget.

`RowTable` is deliberately dumb: the panel fills its traits with one page of
already formatted rows, and the browser sends requests back (another page, a
sort, a view, a hand decision on a row, a note). Requests are checked here and
handed to the callbacks registered with `RowTable.on_request`; the table never
changes its own traits in answer to a request, so Python stays the single
source of truth.

Messages from the browser (``model.send`` in ``js/src/table.ts``)::

    {"kind": "page", "page": int}
    {"kind": "sort", "column": str, "ascending": bool}
    {"kind": "view", "value": "affected" | "all" | "flagged" | "marked" | "kept"}
    {"kind": "row", "action": "mark" | "keep" | "clear" | "focus", "id": int}
    {"kind": "note", "id": int, "text": str}
"""

from __future__ import annotations

import logging
import pathlib
import warnings
from collections.abc import Callable, Mapping
from typing import Any

import anywidget
import traitlets

__all__ = [
    "BUNDLE",
    "COUNT_KEYS",
    "REQUEST_KINDS",
    "ROW_ACTIONS",
    "ROW_STATES",
    "SORT_SPECIAL",
    "VIEWS",
    "RequestIgnoredWarning",
    "RowTable",
]

_log = logging.getLogger(__name__)

#: Where the build (``npm run build`` in ``js/``) writes the front-end module.
BUNDLE = pathlib.Path(__file__).parent.parent / "static" / "table.js"

#: Which rows the table lists.
VIEWS = ("affected", "all", "flagged", "marked", "kept")
#: States a row can show; "" is a row with none.
ROW_STATES = ("flagged", "marked", "kept", "missing", "")
#: What a row request can ask for.
ROW_ACTIONS = ("mark", "keep", "clear", "focus")
#: Sort names of the leading columns, besides the data columns' own names.
SORT_SPECIAL = ("__label__", "__score__", "__state__")
#: Keys of the `counts` trait.
COUNT_KEYS = ("rows", "flagged", "marked", "kept", "missing", "mask")
#: Request kinds and, for each, its fields and their types.
REQUEST_KINDS: dict[str, dict[str, type]] = {
    "page": {"page": int},
    "sort": {"column": str, "ascending": bool},
    "view": {"value": str},
    "row": {"action": str, "id": int},
    "note": {"id": int, "text": str},
}

RequestCallback = Callable[[str, dict[str, Any]], Any]

_MISSING_BUNDLE_ESM = """\
export default {
  render({ el }) {
    const p = document.createElement("p");
    p.textContent = "strayline: the table's front-end (static/table.js) is not built. "
      + "Run `npm ci && npm run build` in js/, or reinstall strayline.";
    el.append(p);
  },
};
"""


def _bundle_or_placeholder(path: pathlib.Path) -> pathlib.Path | str:
    """Return `path` if the bundle exists, else a module saying it is missing.

    anywidget reads a path `_esm` when the class is defined and fails if the
    file is not there; a placeholder keeps the package importable (and the
    rest of the panel usable) in a checkout where the front-end is not built.
    """
    return path if path.is_file() else _MISSING_BUNDLE_ESM


class RequestIgnoredWarning(UserWarning):
    """A request from the front-end (or `RowTable.request`) was malformed."""


def _is_int(value: object) -> bool:
    return isinstance(value, int) and not isinstance(value, bool)


class _Row(traitlets.Dict):
    """One row of the page, with the keys and value types the front-end reads."""

    info_text = "a row dict with id, label, state, score, reason, note and cells"

    _TEXT_KEYS = ("label", "score", "reason", "note")

    def validate(self, obj: Any, value: Any) -> dict[str, Any]:
        value = super().validate(obj, value)
        if not _is_int(value.get("id")):
            self.error(obj, value, info="its 'id' must be an int")
        for key in self._TEXT_KEYS:
            if not isinstance(value.get(key, ""), str):
                self.error(obj, value, info=f"its {key!r} must be a str")
        if value.get("state", "") not in ROW_STATES:
            self.error(obj, value, info=f"its 'state' must be one of {ROW_STATES}")
        cells = value.get("cells", [])
        if not isinstance(cells, list) or not all(isinstance(c, str) for c in cells):
            self.error(obj, value, info="its 'cells' must be a list of str")
        return value


class RowTable(anywidget.AnyWidget):
    """A page of rows in context, with their states, scores, reasons and notes.

    Every trait is synced to the browser and set by Python only.

    Attributes
    ----------
    columns : list of str, default []
        Header texts of the data columns shown.
    rows : list of dict, default []
        The current page. Each row is ``{"id": int, "label": str, "state": str,
        "score": str, "reason": str, "note": str, "cells": list of str}``; `id`
        is the row position, `state` one of ``"flagged"``, ``"marked"``,
        ``"kept"``, ``"missing"`` or ``""``, and `cells` follow `columns`.
    total : int, default 0
        Rows in the current view.
    page : int, default 0
        Current page, 0-based.
    page_size : int, default 50
        Rows per page.
    sort_column : str, default ""
        Column the view is sorted by: a data column's header text, one of
        ``"__label__"``, ``"__score__"``, ``"__state__"``, or ``""`` for the
        natural order.
    sort_ascending : bool, default True
        Direction of the sort.
    view : str, default "affected"
        Which rows are listed: ``"affected"`` (flagged, marked or kept),
        ``"all"``, ``"flagged"``, ``"marked"`` or ``"kept"``.
    counts : dict of str to int
        ``{"rows", "flagged", "marked", "kept", "missing", "mask"}``, all 0 at first.
    focus : int, default -1
        Id of the row to highlight as focused, -1 for none.
    brushed : list of int, default []
        Ids on the current page covered by the last brush.
    busy : bool, default False
        Show the "Working…" indicator.
    error : str, default ""
        Message for the alert area; empty hides it.
    caution : str, default ""
        One-line caution under the counters; empty hides it.
    columns_note : str, default ""
        Say that only some columns are shown, e.g. "12 of 10,000 columns shown".

    Examples
    --------
    >>> table = RowTable()
    >>> seen = []
    >>> table.on_request(lambda kind, payload: seen.append((kind, payload)))
    >>> table.request("page", page=2)
    True
    >>> seen
    [('page', {'page': 2})]
    """

    _esm = _bundle_or_placeholder(BUNDLE)

    columns = traitlets.List(traitlets.Unicode()).tag(sync=True)
    rows = traitlets.List(_Row()).tag(sync=True)
    total = traitlets.Int(0).tag(sync=True)
    page = traitlets.Int(0).tag(sync=True)
    page_size = traitlets.Int(50).tag(sync=True)
    sort_column = traitlets.Unicode("").tag(sync=True)
    sort_ascending = traitlets.Bool(True).tag(sync=True)
    view = traitlets.Enum(VIEWS, default_value="affected").tag(sync=True)
    counts = traitlets.Dict(
        value_trait=traitlets.Int(),
        key_trait=traitlets.Unicode(),
        default_value=dict.fromkeys(COUNT_KEYS, 0),
    ).tag(sync=True)
    focus = traitlets.Int(-1).tag(sync=True)
    brushed = traitlets.List(traitlets.Int()).tag(sync=True)
    busy = traitlets.Bool(False).tag(sync=True)
    error = traitlets.Unicode("").tag(sync=True)
    caution = traitlets.Unicode("").tag(sync=True)
    columns_note = traitlets.Unicode("").tag(sync=True)

    def __init__(self, **kwargs: Any) -> None:
        super().__init__(**kwargs)
        self._request_callbacks: list[RequestCallback] = []
        self.on_msg(self._receive_from_frontend)

    def on_request(self, callback: RequestCallback, remove: bool = False) -> None:
        """Register (or with ``remove=True`` unregister) a request callback.

        Parameters
        ----------
        callback : callable
            Called as ``callback(kind, payload)`` for every valid request, where
            `kind` is ``"page"``, ``"sort"``, ``"view"``, ``"row"`` or ``"note"``
            and `payload` holds the message's fields without ``"kind"``.
        remove : bool, default False
            Unregister `callback` instead.
        """
        if remove:
            if callback in self._request_callbacks:
                self._request_callbacks.remove(callback)
        elif callback not in self._request_callbacks:
            self._request_callbacks.append(callback)

    def request(self, kind: str, **payload: Any) -> bool:
        """Make a request as the browser would.

        The request is checked and dispatched exactly as a message from the
        front-end. A malformed one is ignored with a `RequestIgnoredWarning`.
        Unlike a message from the browser, an exception raised by a callback
        propagates to the caller.

        Returns
        -------
        bool
            Whether the request was valid and passed to the callbacks.
        """
        return self._dispatch({"kind": kind, **payload})

    # -- incoming messages ------------------------------------------------

    def _receive_from_frontend(
        self, _widget: object, content: object, _buffers: list[bytes] | None
    ) -> None:
        if isinstance(content, Mapping) and str(content.get("kind", "")).startswith("anywidget-"):
            return  # anywidget's own protocol (commands), not ours
        try:
            self._dispatch(content)
        except Exception as exc:  # a failing callback must not break the comm
            _log.exception("strayline table: handling %r failed", content)
            self.error = f"Could not handle that request: {type(exc).__name__}: {exc}"

    def _dispatch(self, message: object) -> bool:
        checked = self._check(message)
        if checked is None:
            return False
        kind, payload = checked
        for callback in list(self._request_callbacks):
            callback(kind, dict(payload))
        return True

    def _check(self, message: object) -> tuple[str, dict[str, Any]] | None:
        """The request's kind and payload, or None (with a warning) if malformed."""
        if not isinstance(message, Mapping):
            return self._ignore(f"a request must be a dict, not {type(message).__name__}")
        kind = message.get("kind")
        fields = REQUEST_KINDS.get(kind) if isinstance(kind, str) else None
        if fields is None:
            return self._ignore(
                f"unknown request kind {kind!r}; expected one of {tuple(REQUEST_KINDS)}"
            )
        payload: dict[str, Any] = {}
        for name, expected in fields.items():
            if name not in message:
                return self._ignore(f"{kind!r} request without {name!r}")
            value = message[name]
            right_type = _is_int(value) if expected is int else isinstance(value, expected)
            if not right_type:
                return self._ignore(
                    f"{kind!r} request: {name!r} must be {expected.__name__}, got {value!r}"
                )
            payload[name] = value

        problem = self._check_values(kind, payload)
        if problem:
            return self._ignore(f"{kind!r} request: {problem}")
        return kind, payload

    def _check_values(self, kind: str, payload: dict[str, Any]) -> str | None:
        if kind == "page" and payload["page"] < 0:
            return f"page must be 0 or more, got {payload['page']!r}"
        if kind == "sort":
            column = payload["column"]
            if column != "" and column not in SORT_SPECIAL and column not in self.columns:
                return f"no column {column!r} to sort by"
        if kind == "view" and payload["value"] not in VIEWS:
            return f"view must be one of {VIEWS}, got {payload['value']!r}"
        if kind == "row" and payload["action"] not in ROW_ACTIONS:
            return f"action must be one of {ROW_ACTIONS}, got {payload['action']!r}"
        if kind in ("row", "note") and payload["id"] < 0:
            return f"id must be 0 or more, got {payload['id']!r}"
        return None

    @staticmethod
    def _ignore(reason: str) -> None:
        warnings.warn(
            f"strayline table ignored a request: {reason}",
            RequestIgnoredWarning,
            stacklevel=5,
        )
        return None
