"""The budget's tables as rows (views.tables.RowTable): the text of a budget read from the rows
is the text read from the pandas frames, and ``photorx budget`` runs without pandas.

The reference is pandas itself (an outside library): a RowTable column must read as the
frame's ``tolist()`` reads it (a missing value among numbers or text is NaN there), and a
budget built from the frames must print the same text, byte for byte.
"""

import dataclasses
import math
import subprocess
import sys
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st

import photorx as prx
from photorx.analysis.checks import CHECKS, check_rows, checks_frame, receiver_checks
from photorx.analysis.noise_spectrum import source_rows, source_table
from photorx.errors import DesignError
from photorx.units import display_value
from photorx.views.tables import Budget, RowTable

DESIGNS = sorted((Path(prx.__file__).parent / "designs").glob("*.toml"))

_CELL = st.one_of(st.none(), st.floats(allow_nan=True, allow_infinity=True), st.booleans(),
                  st.integers(-10**6, 10**6), st.sampled_from(["", "a", "rf", "1 k"]))


@settings(max_examples=200, deadline=None)
@given(st.lists(_CELL, min_size=1, max_size=6))
@example([None, float("nan"), ""])  # text and NaN: pandas reads the None as NaN too
def test_a_row_column_reads_as_the_frame_column(values):
    given = [v for v in values if v is not None]
    present = [v for v in given if not (isinstance(v, float) and math.isnan(v))]
    if int(pd.__version__.split(".")[0]) < 3 and present and len(given) < len(values) \
            and all(isinstance(v, str) for v in present):
        return  # pandas 2 keeps None among text (pandas 3 reads it NaN, as RowTable does)
    rows = [{"value": v} for v in values]
    table = RowTable(["value"], rows, frame=lambda: pd.DataFrame(rows, columns=["value"]))
    mine = table.column("value")
    theirs = table.frame()["value"].tolist()
    assert [display_value(v, "Hz") for v in mine] == [display_value(v, "Hz") for v in theirs]
    for a, b in zip(mine, theirs):
        if a is None or b is None:
            assert a is None and b is None
        elif isinstance(a, float) and math.isnan(a):
            assert isinstance(b, float) and math.isnan(b)
        else:
            assert a == b


def _variants(rx):
    names = {f.name for f in dataclasses.fields(rx)}
    out = [rx]
    for check in CHECKS:
        if check.limit_field in names and check.limit_field != "bit_rate":
            for value in (1e-30,):
                try:
                    out.append(dataclasses.replace(rx, **{check.limit_field: value}))
                except DesignError:
                    pass
    out.append(dataclasses.replace(rx, bit_rate=None))
    return out


@pytest.mark.parametrize("path", DESIGNS, ids=[p.stem for p in DESIGNS])
def test_budget_text_from_rows_is_the_text_from_frames(path):
    for rx in _variants(prx.load_design(path)):
        budget = rx.budget(title="t")
        assert any(isinstance(t, RowTable) for t in budget._given.values())
        text = str(budget)  # read from the rows
        frames = Budget(budget.tables, title=budget.title, notes=budget.notes)  # from frames
        assert text == str(frames)
        rows, names = check_rows(rx)
        pd.testing.assert_frame_equal(checks_frame(rows, names), receiver_checks(rx))


def test_source_rows_are_the_source_table():
    result = prx.demo_receiver().evaluate()
    parts = result._noise_table_arguments(0.0)
    rows, attrs = source_rows(**parts)
    table = source_table(**parts)
    assert list(rows) == list(table.index)
    for key, row in rows.items():
        assert row == {col: table.loc[key, col] for col in table.columns}
    assert attrs == table.attrs
    assert sum(row["dominant"] for row in rows.values()) >= 1


def test_photorx_budget_does_not_import_pandas():
    code = ("import sys, io, contextlib, photorx.cli as c\n"
            "with contextlib.redirect_stdout(io.StringIO()):\n"
            "    assert c.main(['budget']) == 0\n"
            "print('pandas' in sys.modules, 'pint' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.split() == ["False", "False"]


def test_budget_tables_are_frames():
    budget = prx.demo_receiver().budget()
    tables = budget.tables
    assert all(isinstance(t, pd.DataFrame) for t in tables.values())
    assert isinstance(budget["checks"], pd.DataFrame)
    assert np.isfinite(float(budget["speed"]["value"].iloc[0]))
