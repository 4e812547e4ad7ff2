"""``photorx tolerance``: yield, per-spec pass fractions and drivers; CSV of every unit.

The numbers printed are the library's (the same study through the API must print the same
yield); the checks of the statistics themselves are in tests/analysis/test_tolerance.py.
"""

from __future__ import annotations

import pandas as pd
import pytest

import photorx as prx
from photorx.cli import main
from photorx.designfile import design_template


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_tolerance_prints_yield_specs_drivers_and_writes_the_csv(capsys, tmp_path):
    path = tmp_path / "study.csv"
    code, out, err = run(capsys, "tolerance", "--n", "120", "--tol", "rf=1%", "--tol",
                         "cf=5%", "--spec", "bandwidth>=900 MHz", "--temperature",
                         "-40degC,25degC,85degC", "--output", str(path), "--quiet")
    assert code == 0, err
    study = prx.tolerance_study(prx.demo_receiver(), {"rf": "1%", "cf": "5%"},
                                {"bandwidth": (">=", 900e6)}, n=120,
                                temperatures=[233.15, 298.15, 358.15], figures=[],
                                progress=False)
    assert f"yield: {100 * study.yield_fraction:.2f} %" in out
    assert "bandwidth >= 900 MHz:" in out and "stable:" in out
    assert "drivers" in out and "  cf: rho" in out and "  rf: rho" in out
    assert "-40 degC" in out and "85 degC" in out
    frame = pd.read_csv(path, na_values=["none"])
    assert len(frame) == 360
    assert {"sample", "rf", "cf", "bandwidth", "temperature", "pass"} <= set(frame.columns)
    assert frame["pass"].mean() >= study.yield_fraction


def test_tolerance_reads_the_design_files_sections(capsys, tmp_path):
    text = design_template() + '\n[tolerances]\nrf = "2 %"\n"tia.amp.gbw" = "normal:5 %"\n' \
        '\n[specs]\nphase_margin = ">= 30"\nbandwidth = [">= 1 MHz", "<= 100 GHz"]\n'
    design = tmp_path / "d.toml"
    design.write_text(text, encoding="utf-8")
    code, out, err = run(capsys, "tolerance", str(design), "--n", "50", "--quiet")
    assert code == 0, err
    assert "yield: 100.00 %" in out
    assert "phase_margin >= 30 deg" in out and "bandwidth <= 100 GHz" in out
    assert "tia.amp.gbw: rho" in out
    # and the budget of the same file is unaffected by the study sections
    code, out, err = run(capsys, "budget", str(design))
    assert code == 0, err


@pytest.mark.parametrize("argv, word", [
    (["--tol", "rf=150%", "--spec", "bandwidth>=1 Hz"], "150%"),
    (["--tol", "rff=1%", "--spec", "bandwidth>=1 Hz"], "rff"),
    (["--tol", "rf", "--spec", "bandwidth>=1 Hz"], "NAME=TOLERANCE"),
    (["--tol", "rf=1%", "--spec", "bandwidth>=1 pF"], "pF"),
    (["--tol", "rf=1%"], "--spec"),
    (["--tol", "rf=1%", "--spec", "bandwidth>=1 Hz", "--temperature", "-500degC"],
     "temperature"),
])
def test_tolerance_errors_are_one_line(capsys, argv, word):
    code, out, err = run(capsys, "tolerance", "--n", "10", "--quiet", *argv)
    assert code == 2
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert len(lines) == 1 and word in lines[0] and "Traceback" not in err


def test_report_gains_a_yield_section(capsys, tmp_path):
    text = design_template() + '\n[tolerances]\ncf = "10 %"\n\n[specs]\nbandwidth = ">= 900 MHz"\n'
    design = tmp_path / "d.toml"
    design.write_text(text, encoding="utf-8")
    page = tmp_path / "r.html"
    code, out, err = run(capsys, "report", str(design), "--tolerance", "40", "-o", str(page))
    assert code == 0, err
    html = page.read_text(encoding="utf-8")
    assert "Yield over tolerances" in html and "bandwidth &gt;= 900 MHz" in html
    assert html.count("<img") >= 2
    # without the option, no yield section
    code, out, err = run(capsys, "report", str(design), "-o", str(page))
    assert code == 0 and "Yield over tolerances" not in page.read_text(encoding="utf-8")
