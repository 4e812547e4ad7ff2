"""Tests of photorx.views.tables.Budget: display, exports that parse back, atomic writes.

Exports are read back with independent parsers (pandas.read_csv, json, html.parser) and
compared with the SI values that went in (exact: rtol=0, the writers keep full precision).
"""

from __future__ import annotations

import json
import math
import os
import re
from html.parser import HTMLParser

import numpy as np
import pandas as pd
import pytest

from photorx.errors import DesignError
from photorx import _files
from photorx.views.cautions import CAUTIONS
from photorx.views.tables import Budget, display_value, normalize_format


def make_budget():
    speed = pd.DataFrame({
        "quantity": ["bandwidth", "rise time", "phase margin", "stable", "limited by", "shunt R"],
        "value": [1.234567e9, 2.8e-10, 61.25, True, "transit", np.inf],
        "unit": ["Hz", "s", "deg", "", "", "ohm"],
    })
    noise = pd.DataFrame({"source": ["Rf thermal", "amplifier e_n"],
                          "output_rms": [1.5e-4, 2.5e-4], "share": [0.265, 0.735]})
    noise.attrs["units"] = {"output_rms": "V"}
    op = pd.DataFrame({"quantity": ["doping_n", "capacitance"], "value": [1e21, 2.2e-12],
                       "unit": ["m^-3", "F"], "display": ["1e15 cm^-3", ""]})
    return Budget({"operating point": op, "speed": speed, "noise by source": noise},
                  title="Test receiver", notes=["model estimate"])


def test_display_value():
    assert display_value(2.2e-12, "F") == "2.2 pF"
    assert display_value(True) == "yes"
    assert display_value(np.bool_(False)) == "no"
    # a figure that does not exist reads "none", never "nan"/"inf" (issue 11)
    assert display_value(float("nan"), "Hz") == "none"
    assert display_value(float("inf"), "dB") == "none"
    assert display_value(-float("inf"), "dB") == "none"
    assert display_value("transit") == "transit"
    assert display_value(None) == ""
    # a vanishing noise share is shown as such, not as "5.51e-09 %"
    assert display_value(5.51e-9, "%") == "< 0.01 %"
    assert display_value(0.0, "%") == "0 %"
    assert display_value(4.74, "%") == "4.74 %"


def test_wavelength_shown_in_nm_and_cautions_in_text_and_latex():
    t = pd.DataFrame({"quantity": ["wavelength", "depletion width"], "value": [1.31e-6, 2e-6],
                      "unit": ["m", "m"]})
    b = Budget({"operating point": t}, title="wl")
    text = str(b)
    assert "1310 nm" in text and "2 um" in text  # wavelengths as the trade writes them
    assert "Cautions:" in text and "IEC 60825-1" in text
    latex = b.to_latex()
    assert "% Cautions" in latex and "IEC 60825-1" in latex
    assert "IEC 60825-1" in b._repr_html_()  # the Jupyter display carries them too
    assert json.loads(b.to_json())["tables"]["operating point"][0]["value"] == 1.31e-6


def test_terminal_text_uses_engineering_units():
    text = str(make_budget())
    assert text.startswith("Test receiver\n=============")
    for piece in ["1.23 GHz", "280 ps", "61.2 deg", "yes", "transit", "none", "150 uV",
                  "1e15 cm^-3", "2.2 pF", "Note: model estimate"]:
        assert piece in text
    assert "1234567000" not in text


def test_access_and_copies():
    b = make_budget()
    assert b.names == ["operating point", "speed", "noise by source"]
    assert len(b) == 3 and list(b) == b.names
    t = b["speed"]
    t.loc[0, "value"] = 0.0
    assert b["speed"].loc[0, "value"] == 1.234567e9  # the budget is not changed through a copy
    assert "Test receiver" in repr(b)


def test_csv_parses_back_with_si_values(tmp_path):
    b = make_budget()
    path = b.to_csv(tmp_path / "b.csv")
    df = pd.read_csv(path)
    speed = df[df["table"] == "speed"].set_index("quantity")
    assert float(speed.loc["bandwidth", "value"]) == 1.234567e9
    assert float(speed.loc["rise time", "value"]) == 2.8e-10
    assert speed.loc["rise time", "unit"] == "s"
    assert speed.loc["shunt R", "value"] == "none"  # not "inf" (issue 11)
    assert math.isnan(pd.read_csv(path, na_values=["none"]).set_index("quantity")
                      .loc["shunt R", "value"])
    noise = df[df["table"] == "noise by source"]
    assert noise["output_rms"].astype(float).tolist() == [1.5e-4, 2.5e-4]
    assert b.to_csv() == path.read_text()


def test_json_parses_back(tmp_path):
    b = make_budget()
    doc = json.loads(b.to_json(tmp_path / "b.json").read_text())
    assert doc["title"] == "Test receiver" and doc["notes"] == ["model estimate"]
    rows = {r["quantity"]: r for r in doc["tables"]["speed"]}
    assert rows["bandwidth"]["value"] == 1.234567e9 and rows["bandwidth"]["unit"] == "Hz"
    assert rows["bandwidth"]["display"] == "1.23 GHz"
    assert rows["stable"]["value"] is True
    assert rows["shunt R"]["value"] is None and rows["shunt R"]["display"] == "none"
    assert doc["column_units"] == {"noise by source": {"output_rms": "V"}}
    assert doc["tables"]["operating point"][0]["display"] == "1e15 cm^-3"
    assert any("IEC 60825-1" in c for c in doc["cautions"])


class _Cells(HTMLParser):
    def __init__(self):
        super().__init__()
        self.cells, self.tables, self._in = [], 0, False

    def handle_starttag(self, tag, attrs):
        self.tables += tag == "table"
        self._in = tag in ("td", "th")

    def handle_endtag(self, tag):
        self._in = False

    def handle_data(self, data):
        if self._in:
            self.cells.append(data)


def test_html_contains_tables_and_cautions(tmp_path):
    b = make_budget()
    text = b.to_html(tmp_path / "b.html").read_text()
    parser = _Cells()
    parser.feed(text)
    assert parser.tables == 3
    assert {"bandwidth", "1.23 GHz", "Rf thermal", "150 uV"} <= set(parser.cells)
    assert text.startswith("<!DOCTYPE html>")
    assert "IEC 60825-1" in text and "Cautions" in text
    frag = b._repr_html_()
    assert "<table" in frag and "1.23 GHz" in frag


def test_markdown_and_latex(tmp_path):
    b = make_budget()
    md = b.to_markdown()
    assert "# Test receiver" in md and "| bandwidth" in md and "1.23 GHz" in md
    assert all(c[:40] in md for c in CAUTIONS)
    tex = b.to_latex()
    assert tex.count(r"\begin{tabular}") == 3
    assert r"output\_rms" in tex and r"m\textasciicircum{}-3" in tex
    assert "model estimate" in b.to_markdown(cautions=False)
    assert "IEC" not in b.to_markdown(cautions=False)


def test_export_all_formats(tmp_path):
    b = make_budget()
    written = b.export(tmp_path)
    assert sorted(p.name for p in written) == ["budget.csv", "budget.html", "budget.json",
                                               "budget.md", "budget.tex"]
    stem = b.export(tmp_path / "rx1", formats=("csv", "markdown", "tex"))
    assert [p.name for p in stem] == ["rx1.csv", "rx1.md", "rx1.tex"]
    assert all(p.stat().st_size > 0 for p in written + stem)


def test_bad_inputs():
    with pytest.raises(DesignError, match="tables"):
        Budget({"speed": [1, 2]})
    with pytest.raises(DesignError, match="tables"):
        Budget({})
    with pytest.raises(DesignError, match="format = 'xls'"):
        normalize_format("xls")


def _no_temp_files(directory):
    return [p.name for p in directory.iterdir() if p.name.endswith(".tmp")] == []


def test_atomic_write_failure_leaves_no_partial_file(tmp_path, monkeypatch):
    b = make_budget()
    target = tmp_path / "b.csv"

    def boom(fd):  # the data is written to the temp file, then the disk "fails"
        raise OSError("disk full")

    monkeypatch.setattr(_files.os, "fsync", boom)
    with pytest.raises(OSError, match="disk full"):
        b.to_csv(target)
    assert not target.exists() and _no_temp_files(tmp_path)


def test_atomic_write_failure_keeps_old_content(tmp_path, monkeypatch):
    b = make_budget()
    target = tmp_path / "b.json"
    target.write_text("old")
    calls = []

    def failing_replace(src, dst):
        calls.append(src)
        raise OSError("rename failed")

    monkeypatch.setattr(_files.os, "replace", failing_replace)
    with pytest.raises(OSError):
        b.to_json(target)
    assert target.read_text() == "old" and calls and _no_temp_files(tmp_path)


def test_atomic_write_mode_is_not_private(tmp_path):
    path = _files.atomic_write_text(tmp_path / "x.txt", "hello")
    assert path.read_text() == "hello"
    mask = os.umask(0)
    os.umask(mask)
    assert path.stat().st_mode & 0o777 == 0o666 & ~mask


def test_units_in_column_headers():
    noise = pd.DataFrame({"source": ["Rf thermal"], "output rms [V]": [1.5e-4],
                          "input density [A/rtHz]": [2.5e-12], "share [%]": [26.5]})
    b = Budget({"noise by source": noise})
    shown = b.display_table("noise by source")
    assert list(shown.columns) == ["source", "output rms", "input density", "share"]
    assert shown.iloc[0].tolist() == ["Rf thermal", "150 uV", "2.5 pA/rtHz", "26.5 %"]
    # the CSV keeps the header with its unit and the SI float
    df = pd.read_csv(__import__("io").StringIO(b.to_csv()))
    assert df["output rms [V]"].tolist() == [1.5e-4]


def test_limit_column_takes_each_rows_unit_and_none():
    # a checks table (value, limit, unit per row): the limit is shown in the row's unit
    t = pd.DataFrame({"check": ["phase margin", "dark current", "overshoot"],
                      "value": [62.0, 1e-9, 0.05], "limit": [45.0, 1e-8, None],
                      "unit": ["deg", "A", ""], "ok": [True, True, "no limit set"]})
    shown = Budget({"checks": t}).display_table("checks")
    assert list(shown["limit"]) == ["45 deg", "10 nA", "none"]
    assert list(shown["value"]) == ["62 deg", "1 nA", "0.05"]
    doc = json.loads(Budget({"checks": t}).to_json())
    assert doc["tables"]["checks"][2]["limit"] is None  # JSON keeps null


def test_no_inf_or_nan_in_any_export():
    t = pd.DataFrame({"quantity": ["gain margin", "transit time", "filter"],
                      "value": [np.inf, np.nan, -np.inf], "unit": ["dB", "s", "Hz"]})
    wide = pd.DataFrame({"source": ["a"], "output rms [V]": [np.nan]})
    b = Budget({"stability": t, "wide": wide})
    for text in (str(b), b.to_csv(), b.to_markdown(), b.to_latex(), b.to_html(), b.to_json()):
        assert not re.search(r"\b(inf|nan|n/a)\b", text, flags=re.IGNORECASE), text
