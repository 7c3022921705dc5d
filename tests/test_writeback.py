"""Writing the mask into the notebook's namespace: strayline.write_mask and the panel's use of it.

The IPython shell is simulated with a stand-in that has a ``user_ns`` dict (what
``IPython.get_ipython()`` returns inside a kernel); outside a kernel get_ipython() is None.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import strayline


class FakeShell:
    def __init__(self) -> None:
        self.user_ns: dict = {}


@pytest.fixture
def shell(monkeypatch):
    import IPython

    sh = FakeShell()
    monkeypatch.setattr(IPython, "get_ipython", lambda: sh)
    return sh


@pytest.fixture
def no_shell(monkeypatch):
    import IPython

    monkeypatch.setattr(IPython, "get_ipython", lambda: None)


def a_mask(n: int = 30, seed: int = 0) -> pd.Series:
    rng = np.random.default_rng(seed)
    return pd.Series(rng.random(n) > 0.8, index=[f"r{i}" for i in range(n)], name="suspect")


def test_writes_a_copy_named_as_the_variable(shell) -> None:
    m = a_mask()
    strayline.write_mask("suspect_jan", m)
    out = shell.user_ns["suspect_jan"]
    assert out is not m and out.name == "suspect_jan"
    pd.testing.assert_series_equal(out, m.rename("suspect_jan"))
    # the caller's Series is left as it was
    assert m.name == "suspect" and m.attrs == {}
    out.iloc[:] = True
    assert not m.all()


def test_writes_into_a_given_namespace_without_ipython(no_shell) -> None:
    ns: dict = {}
    strayline.write_mask("m", a_mask(), namespace=ns)
    assert list(ns) == ["m"]


def test_outside_ipython_it_raises_a_clear_error(no_shell) -> None:
    with pytest.raises(RuntimeError, match="inside IPython or Jupyter only"):
        strayline.write_mask("suspect", a_mask())


def test_it_refuses_to_overwrite_a_variable_it_did_not_write(shell) -> None:
    ns = shell.user_ns
    mine = pd.Series([True, False], name="suspect")
    for foreign in (42, "text", pd.DataFrame({"a": [1]}), mine):
        ns["suspect"] = foreign
        with pytest.raises(ValueError, match="did not write; choose another mask name or "
                                             "pass overwrite=True"):
            strayline.write_mask("suspect", a_mask())
        assert ns["suspect"] is foreign
    strayline.write_mask("suspect", a_mask(), overwrite=True)
    pd.testing.assert_series_equal(ns["suspect"], a_mask())


def test_it_overwrites_its_own_earlier_mask(shell) -> None:
    strayline.write_mask("suspect", a_mask(seed=1))
    strayline.write_mask("suspect", a_mask(seed=2))
    pd.testing.assert_series_equal(shell.user_ns["suspect"], a_mask(seed=2))


def test_a_variable_the_user_derived_from_a_mask_is_not_its_own(shell) -> None:
    ns = shell.user_ns
    strayline.write_mask("suspect", a_mask(seed=1))
    ns["clean"] = ~ns["suspect"]  # the user's own variable
    with pytest.raises(ValueError, match="did not write"):
        strayline.write_mask("clean", a_mask(seed=2))


@pytest.mark.parametrize("name", ["1st", "my mask", "class", "__mask", "", "a-b"])
def test_the_name_must_be_a_plain_variable_name(name: str, shell) -> None:
    with pytest.raises(ValueError, match="mask name"):
        strayline.write_mask(name, a_mask())
    assert shell.user_ns == {}


@pytest.mark.parametrize("value", [np.array([True, False]), pd.Series([1, 0]),
                                   pd.DataFrame({"a": [True]}), [True, False]],
                         ids=["ndarray", "int Series", "DataFrame", "list"])
def test_only_a_boolean_series_is_written(value, shell) -> None:
    with pytest.raises(TypeError, match="boolean pandas Series"):
        strayline.write_mask("m", value)
    assert shell.user_ns == {}


# --- through the panel --------------------------------------------------------------------------


def frame(seed: int = 3) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    v = rng.normal(10, 1, 200)
    v[[4, 8]] = [20.0, -1.0]
    return pd.DataFrame({"v": v}, index=pd.date_range("2025-02-01", periods=200, freq="h"))


def test_the_panel_writes_the_mask_after_every_change(hold) -> None:
    df = hold(frame())
    ns: dict = {}
    p = strayline.panel(df, mask="suspect", namespace=ns)
    pd.testing.assert_series_equal(ns["suspect"], p.mask)
    assert ns["suspect"].name == "suspect" and ns["suspect"].index.equals(df.index)
    first = ns["suspect"]
    v = df["v"].to_numpy()
    q1, q3 = np.quantile(v, [0.25, 0.75])  # Tukey's fences, k = 1.5 (common practice)
    fenced = (v < q1 - 1.5 * (q3 - q1)) | (v > q3 + 1.5 * (q3 - q1))
    np.testing.assert_array_equal(first.to_numpy(), fenced)
    p.brush(-4, 4, 11.5, 13.5, "add")
    np.testing.assert_array_equal(ns["suspect"].to_numpy(), fenced | ((v >= 11.5) & (v <= 13.5)))
    p.undo_button.click()
    pd.testing.assert_series_equal(ns["suspect"], first)
    p.redo_button.click()
    pd.testing.assert_series_equal(ns["suspect"], p.mask)
    assert ns["suspect"].sum() > 2


def test_the_panel_refuses_a_foreign_variable_at_creation(hold) -> None:
    df = hold(frame())
    ns = {"suspect": "my notes"}
    with pytest.raises(ValueError, match="did not write"):
        strayline.panel(df, mask="suspect", namespace=ns)
    assert ns == {"suspect": "my notes"}
    p = strayline.panel(df, mask="suspect", namespace=ns, overwrite=True)
    pd.testing.assert_series_equal(ns["suspect"], p.mask)
    p.brush(-4, 4, 11.5, 13.5, "add")  # once written, it is the panel's own
    pd.testing.assert_series_equal(ns["suspect"], p.mask)
