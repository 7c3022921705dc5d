"""Checks shared by the tests: the user's frame is never modified."""

from __future__ import annotations

import pandas as pd


def assert_same_frame(df: pd.DataFrame, before: pd.DataFrame) -> None:
    pd.testing.assert_frame_equal(df, before, check_exact=True, check_index_type=True,
                                  check_column_type=True, check_freq=True, check_flags=True)
    assert list(df.dtypes) == list(before.dtypes)
    assert df.index.equals(before.index) and df.index.dtype == before.index.dtype
    assert list(df.index.names) == list(before.index.names)
