"""Shared fixtures: a comm that records what widgets would send to the browser."""

from __future__ import annotations

import json
from typing import Any

import comm
import pandas as pd
import pytest
from comm.base_comm import BaseComm

from frames import assert_same_frame


class RecordingComm(BaseComm):
    """A comm that keeps the size of every message instead of sending it."""

    log: list[tuple[str, int]] = []

    def __init__(self, *args: Any, **kwargs: Any) -> None:
        self.kernel = object()  # ipywidgets sends only through a comm that has a kernel
        super().__init__(*args, **kwargs)

    def publish_msg(self, msg_type: str, data: Any = None, metadata: Any = None,
                    buffers: Any = None, **keys: Any) -> None:
        size = len(json.dumps(data, default=str)) + sum(memoryview(b).nbytes for b in buffers or [])
        RecordingComm.log.append((msg_type, size))


@pytest.fixture
def comm_log(monkeypatch: pytest.MonkeyPatch) -> list[tuple[str, int]]:
    """Sizes in bytes of every comm message sent by widgets created in the test."""
    RecordingComm.log = []
    monkeypatch.setattr(comm, "create_comm", lambda *a, **k: RecordingComm(*a, **k))
    return RecordingComm.log


@pytest.fixture
def hold():
    """hold(df) registers a user frame; after the test it must equal its deep copy."""
    held: list[tuple[pd.DataFrame, pd.DataFrame]] = []

    def _hold(df: pd.DataFrame) -> pd.DataFrame:
        held.append((df, df.copy(deep=True)))
        return df

    yield _hold
    for df, before in held:
        assert_same_frame(df, before)
