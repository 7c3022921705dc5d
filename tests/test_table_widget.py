"""RowTable: trait defaults, the bundle path, and request checking and dispatch."""

from __future__ import annotations

import importlib.util
import logging
import pathlib
import sys
import warnings

import pytest
import traitlets

if importlib.util.find_spec("strayline") is None:  # running from a checkout, not installed
    sys.path.insert(0, str(pathlib.Path(__file__).resolve().parents[1] / "src"))

from strayline.view import table as table_module
from strayline.view.table import RequestIgnoredWarning, RowTable

SRC = pathlib.Path(__file__).resolve().parents[1] / "src" / "strayline"


@pytest.fixture
def table():
    widget = RowTable(columns=["temp", "pressure"])
    yield widget
    widget.close()


@pytest.fixture
def seen(table):
    calls: list[tuple[str, dict]] = []
    table.on_request(lambda kind, payload: calls.append((kind, payload)))
    return calls


def from_browser(table: RowTable, content: object) -> None:
    """Deliver `content` as the comm does for a custom message from the front-end."""
    table._handle_msg(
        {"content": {"data": {"method": "custom", "content": content}}, "buffers": []}
    )


def good_row(**overrides):
    row = {
        "id": 3,
        "label": "2024-01-01",
        "state": "flagged",
        "score": "4.1",
        "reason": "above upper fence",
        "note": "",
        "cells": ["98.2", "1.0"],
    }
    row.update(overrides)
    return row


class TestBundle:
    def test_esm_points_at_the_built_bundle_path(self):
        assert table_module.BUNDLE == SRC / "static" / "table.js"
        assert pathlib.Path(table_module.__file__).parent.parent / "static" / "table.js" == (
            table_module.BUNDLE
        )

    def test_class_uses_the_bundle_when_built_and_a_placeholder_otherwise(self):
        esm = RowTable._esm
        if table_module.BUNDLE.is_file():
            # anywidget wraps a file path in an object that reads (and may watch) the file.
            assert pathlib.Path(esm._path) == table_module.BUNDLE.resolve()
            assert "export" in str(esm) or "default" in str(esm)
        else:
            assert esm == table_module._MISSING_BUNDLE_ESM

    def test_placeholder_chosen_by_whether_the_file_exists(self, tmp_path):
        built = tmp_path / "table.js"
        assert table_module._bundle_or_placeholder(built) == table_module._MISSING_BUNDLE_ESM
        built.write_text("export default {};")
        assert table_module._bundle_or_placeholder(built) == built

    def test_placeholder_is_a_module_that_explains_itself(self):
        text = table_module._MISSING_BUNDLE_ESM
        assert "export default" in text
        assert "npm run build" in text
        assert "innerHTML" not in text


class TestTraits:
    def test_defaults(self, table):
        fresh = RowTable()
        assert fresh.columns == []
        assert fresh.rows == []
        assert fresh.total == 0
        assert fresh.page == 0
        assert fresh.page_size == 50
        assert fresh.sort_column == ""
        assert fresh.sort_ascending is True
        assert fresh.view == "affected"
        assert fresh.counts == {
            "rows": 0,
            "flagged": 0,
            "marked": 0,
            "kept": 0,
            "missing": 0,
            "mask": 0,
        }
        assert fresh.focus == -1
        assert fresh.brushed == []
        assert fresh.busy is False
        assert fresh.error == ""
        assert fresh.caution == ""
        assert fresh.columns_note == ""
        fresh.close()

    @pytest.mark.parametrize(
        "name",
        [
            "columns",
            "rows",
            "total",
            "page",
            "page_size",
            "sort_column",
            "sort_ascending",
            "view",
            "counts",
            "focus",
            "brushed",
            "busy",
            "error",
            "caution",
            "columns_note",
        ],
    )
    def test_every_trait_is_synced(self, table, name):
        assert table.trait_metadata(name, "sync") is True
        assert name in table.get_state()

    def test_counts_default_is_not_shared(self):
        first, second = RowTable(), RowTable()
        first.counts = {**first.counts, "flagged": 5}
        assert second.counts["flagged"] == 0
        first.close()
        second.close()

    def test_well_formed_rows_are_accepted(self, table):
        table.rows = [good_row(), good_row(id=4, state="", cells=["1", "2"])]
        assert [row["id"] for row in table.rows] == [3, 4]

    @pytest.mark.parametrize(
        "row",
        [
            good_row(id="3"),
            good_row(id=True),
            good_row(state="suspicious"),
            good_row(score=4.1),
            good_row(cells=[98.2, 1.0]),
            good_row(cells="98.2"),
            {"label": "no id"},
            "not a dict",
        ],
    )
    def test_malformed_rows_are_refused(self, table, row):
        with pytest.raises(traitlets.TraitError):
            table.rows = [row]
        assert table.rows == []

    def test_view_must_be_known(self, table):
        table.view = "kept"
        with pytest.raises(traitlets.TraitError):
            table.view = "everything"
        assert table.view == "kept"

    def test_brushed_holds_ints(self, table):
        table.brushed = [1, 5]
        with pytest.raises(traitlets.TraitError):
            table.brushed = ["1"]


GOOD = [
    ({"kind": "page", "page": 3}, ("page", {"page": 3})),
    ({"kind": "page", "page": 0}, ("page", {"page": 0})),
    (
        {"kind": "sort", "column": "temp", "ascending": False},
        ("sort", {"column": "temp", "ascending": False}),
    ),
    (
        {"kind": "sort", "column": "__score__", "ascending": True},
        ("sort", {"column": "__score__", "ascending": True}),
    ),
    (
        {"kind": "sort", "column": "", "ascending": True},
        ("sort", {"column": "", "ascending": True}),
    ),
    ({"kind": "view", "value": "all"}, ("view", {"value": "all"})),
    ({"kind": "row", "action": "mark", "id": 7}, ("row", {"action": "mark", "id": 7})),
    ({"kind": "row", "action": "keep", "id": 0}, ("row", {"action": "keep", "id": 0})),
    ({"kind": "row", "action": "clear", "id": 7}, ("row", {"action": "clear", "id": 7})),
    ({"kind": "row", "action": "focus", "id": 7}, ("row", {"action": "focus", "id": 7})),
    (
        {"kind": "note", "id": 7, "text": "<b>re-run</b> \u05d1\u05d3\u05d9\u05e7\u05d4"},
        ("note", {"id": 7, "text": "<b>re-run</b> \u05d1\u05d3\u05d9\u05e7\u05d4"}),
    ),
    ({"kind": "note", "id": 7, "text": ""}, ("note", {"id": 7, "text": ""})),
]

BAD = [
    ("not a dict", "must be a dict"),
    (["page", 1], "must be a dict"),
    ({}, "unknown request kind"),
    ({"kind": "delete", "id": 1}, "unknown request kind"),
    ({"kind": 5}, "unknown request kind"),
    ({"kind": "page"}, "without 'page'"),
    ({"kind": "page", "page": "2"}, "'page' must be int"),
    ({"kind": "page", "page": 2.0}, "'page' must be int"),
    ({"kind": "page", "page": True}, "'page' must be int"),
    ({"kind": "page", "page": -1}, "0 or more"),
    ({"kind": "sort", "column": "temp"}, "without 'ascending'"),
    ({"kind": "sort", "column": "temp", "ascending": "yes"}, "'ascending' must be bool"),
    ({"kind": "sort", "column": 1, "ascending": True}, "'column' must be str"),
    ({"kind": "sort", "column": "humidity", "ascending": True}, "no column 'humidity'"),
    ({"kind": "view", "value": "everything"}, "view must be one of"),
    ({"kind": "view", "value": None}, "'value' must be str"),
    ({"kind": "row", "action": "delete", "id": 1}, "action must be one of"),
    ({"kind": "row", "action": "mark"}, "without 'id'"),
    ({"kind": "row", "action": "mark", "id": "1"}, "'id' must be int"),
    ({"kind": "row", "action": "mark", "id": -3}, "0 or more"),
    ({"kind": "note", "id": 1}, "without 'text'"),
    ({"kind": "note", "id": 1, "text": None}, "'text' must be str"),
    ({"kind": "note", "id": 1, "text": ["a"]}, "'text' must be str"),
]


class TestRequests:
    @pytest.mark.parametrize(("message", "expected"), GOOD)
    def test_good_request_reaches_the_callback(self, table, seen, message, expected):
        kind = message["kind"]
        payload = {k: v for k, v in message.items() if k != "kind"}
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            assert table.request(kind, **payload) is True
        assert seen == [expected]

    @pytest.mark.parametrize(("message", "expected"), GOOD)
    def test_good_message_from_the_browser_reaches_the_callback(
        self, table, seen, message, expected
    ):
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            from_browser(table, message)
        assert seen == [expected]

    @pytest.mark.parametrize(("message", "why"), BAD)
    def test_bad_message_from_the_browser_is_ignored_with_a_warning(
        self, table, seen, message, why
    ):
        with pytest.warns(RequestIgnoredWarning, match=why):
            from_browser(table, message)
        assert seen == []
        assert table.error == ""

    @pytest.mark.parametrize(("message", "why"), [b for b in BAD if isinstance(b[0], dict)])
    def test_bad_request_is_ignored_with_a_warning(self, table, seen, message, why):
        payload = {k: v for k, v in message.items() if k != "kind"}
        with pytest.warns(RequestIgnoredWarning, match=why):
            assert table.request(message.get("kind"), **payload) is False
        assert seen == []

    def test_request_warning_points_at_the_caller(self, table):
        with pytest.warns(RequestIgnoredWarning) as record:
            table.request("nonsense")
        assert record[0].filename == __file__

    def test_extra_fields_are_dropped(self, table, seen):
        assert table.request("page", page=1, extra="x") is True
        assert seen == [("page", {"page": 1})]

    def test_sort_follows_the_current_columns(self, table, seen):
        table.columns = ["humidity"]
        table.request("sort", column="humidity", ascending=True)
        with pytest.warns(RequestIgnoredWarning):
            table.request("sort", column="temp", ascending=True)
        assert seen == [("sort", {"column": "humidity", "ascending": True})]

    def test_requests_do_not_change_traits(self, table, seen):
        before = table.get_state()
        table.request("page", page=4)
        table.request("sort", column="temp", ascending=False)
        table.request("view", value="all")
        table.request("row", action="focus", id=2)
        assert table.get_state() == before
        assert len(seen) == 4

    def test_anywidget_protocol_messages_are_left_alone(self, table, seen):
        with warnings.catch_warnings():
            warnings.simplefilter("error")
            from_browser(table, {"kind": "anywidget-command", "name": "x", "id": "1", "msg": {}})
        assert seen == []

    def test_every_callback_is_called_and_can_be_removed(self, table):
        first: list = []
        second: list = []

        def one(kind, payload):
            first.append(kind)

        def two(kind, payload):
            second.append(kind)
            payload["page"] = 99  # a callback's changes do not leak to the next one

        table.on_request(one)
        table.on_request(two)
        table.on_request(one)  # registering twice calls it once
        table.request("page", page=1)
        table.on_request(two, remove=True)
        table.on_request(two, remove=True)  # removing an absent callback is harmless
        table.request("page", page=2)
        assert first == ["page", "page"]
        assert second == ["page"]

    def test_callbacks_see_their_own_copy_of_the_payload(self, table):
        payloads: list = []
        table.on_request(lambda kind, payload: payload.update(page=-5))
        table.on_request(lambda kind, payload: payloads.append(payload))
        table.request("page", page=1)
        assert payloads == [{"page": 1}]

    def test_failing_callback_from_the_browser_is_logged_and_shown(self, table, caplog):
        def broken(kind, payload):
            raise RuntimeError("no such page")

        table.on_request(broken)
        with caplog.at_level(logging.ERROR, logger="strayline.view.table"):
            from_browser(table, {"kind": "page", "page": 1})
        assert "no such page" in table.error
        assert any("handling" in r.getMessage() for r in caplog.records)

    def test_failing_callback_propagates_from_request(self, table):
        def broken(kind, payload):
            raise RuntimeError("no such page")

        table.on_request(broken)
        with pytest.raises(RuntimeError, match="no such page"):
            table.request("page", page=1)
