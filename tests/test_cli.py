"""Tests of the ``photorx`` command line: subcommands, outputs, one-line errors and exit codes.

Run in-process through ``photorx.cli.main([...])`` with captured stdout/stderr, plus one
run of the installed console script in a subprocess. Exit codes follow common practice
(0 success, 1 failure to complete, 2 usage or input error, as argparse uses 2).
"""

from __future__ import annotations

import json
import re
import shutil
import subprocess
import sys

import numpy as np
import pandas as pd
import pytest

from photorx.views import read_sweep_csv  # noqa: E402
from photorx import __version__
from photorx.cli import main, parse_axis, parse_constraint
from photorx.errors import DesignError


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def assert_one_line_error(err):
    lines = [ln for ln in err.splitlines() if ln.strip()]
    assert len(lines) == 1, err
    assert "Traceback" not in err


# -- parsing helpers -----------------------------------------------------------------------------
def test_parse_axis():
    np.testing.assert_allclose(parse_axis("reverse_bias", "0:20:81"), np.linspace(0, 20, 81),
                               rtol=0, atol=0)
    np.testing.assert_allclose(parse_axis("rf", "1 kohm:100 kohm:3:log"), [1e3, 1e4, 1e5],
                               rtol=1e-12)
    np.testing.assert_allclose(parse_axis("cf", "0.1 pF, 0.2 pF"), [0.1e-12, 0.2e-12], rtol=0)
    np.testing.assert_allclose(parse_axis("rf", "1e3,5e3"), [1e3, 5e3], rtol=0)
    for bad in ["0:20", "a:b:c", "0:20:x", "", "0:1:0", "0:10:5:log"]:
        with pytest.raises(DesignError):
            parse_axis("rf", bad)


def test_parse_constraint():
    assert parse_constraint("bandwidth>=1 GHz") == ("bandwidth", (">=", 1e9))
    assert parse_constraint("phase_margin >= 60") == ("phase_margin", (">=", 60.0))
    assert parse_constraint("dark_current<=10 nA") == ("dark_current", ("<=", 10e-9))
    with pytest.raises(DesignError, match="FIGURE>=VALUE"):
        parse_constraint("bandwidth = 1 GHz")


# -- no design needed ------------------------------------------------------------------------------
def test_version(capsys):
    code, out, _ = run(capsys, "--version")
    assert code == 0 and out.strip() == f"photorx {__version__}"


@pytest.mark.parametrize("argv", [["--help"], ["budget", "--help"], ["sweep", "--help"],
                                  ["optimize", "--help"], ["template", "--help"],
                                  ["report", "--help"]])
def test_help(capsys, argv):
    code, out, _ = run(capsys, *argv)
    assert code == 0 and "usage: photorx" in out


def test_no_command_prints_help(capsys):
    code, out, _ = run(capsys)
    assert code == 2 and "budget" in out and "sweep" in out


@pytest.mark.parametrize("argv, words", [
    (["frobnicate"], ["invalid choice", "frobnicate"]),
    (["budget", "--format", "xls"], ["invalid choice", "xls"]),
    (["budget", "--bogus"], ["unrecognized arguments", "--bogus"]),
    (["sweep"], ["at least one axis"]),
    (["optimize"], ["at least one --vary"]),
])
def test_usage_errors_exit_2(capsys, argv, words):
    code, out, err = run(capsys, *argv)
    assert code == 2 and out == ""
    assert_one_line_error(err)
    for w in words:
        assert w in err


def test_demos_list(capsys):
    code, out, _ = run(capsys, "demos")
    assert code == 0 and "ingaas-pin-1310" in out and "[default]" in out


def test_template_to_stdout_and_file(capsys, tmp_path):
    from photorx.designfile import read_design

    code, out, _ = run(capsys, "template")
    assert code == 0 and "[feedback]" in out and "# " in out
    import tomllib

    read_design(tomllib.loads(out))  # the template is a valid design
    target = tmp_path / "my.toml"
    code, _, err = run(capsys, "template", "-o", str(target))
    assert code == 0 and target.read_text() == out
    code, _, err = run(capsys, "template", "-o", str(target))
    assert code == 1 and "exists" in err
    assert_one_line_error(err)
    code, _, _ = run(capsys, "template", "-o", str(target), "--force")
    assert code == 0


# -- design errors: one line, exit 2 ----------------------------------------------------------
def test_missing_design_file(capsys, tmp_path):
    code, out, err = run(capsys, "budget", str(tmp_path / "nope.toml"))
    assert code == 2 and out == ""
    assert_one_line_error(err)
    assert "no such design file" in err and "nope.toml" in err


@pytest.mark.parametrize("text, words", [
    ("[feedback\n", ["not a valid TOML file"]),
    ("this is not toml", ["not a valid TOML file"]),
])
def test_bad_design_file(capsys, tmp_path, text, words):
    path = tmp_path / "bad.toml"
    path.write_text(text)
    code, _, err = run(capsys, "budget", str(path))
    assert code == 2
    assert_one_line_error(err)
    for w in words:
        assert w in err and "bad.toml" in err


def test_design_error_names_key(capsys, tmp_path):
    from photorx.designfile import design_template

    path = tmp_path / "bad.toml"
    text = re.sub(r'(?m)^cf = ".*"$', 'cf = "40 kohm"', design_template())
    assert 'cf = "40 kohm"' in text
    path.write_text(text)
    code, _, err = run(capsys, "budget", str(path))
    assert code == 2
    assert_one_line_error(err)
    assert "[feedback] cf" in err and "capacitance" in err


def test_unwritable_output_exits_1(capsys, tmp_path):
    target = tmp_path / "no-such-dir" / "t.toml"
    code, _, err = run(capsys, "template", "-o", str(target))
    assert code == 1 and str(target) in err and ".tmp" not in err
    assert_one_line_error(err)


def test_unexpected_error_is_one_line(capsys, monkeypatch):
    import photorx.cli as cli

    def broken(args):
        raise RuntimeError("boom\nsecond line")

    monkeypatch.setattr(cli, "_cmd_demos", broken)
    code, _, err = run(capsys, "demos")
    assert code == 1 and "internal error: RuntimeError: boom second line" in err
    assert_one_line_error(err)


def test_console_script_subprocess(tmp_path):
    exe = shutil.which("photorx") or str(__import__("pathlib").Path(sys.executable).parent
                                         / "photorx")
    done = subprocess.run([exe, "--version"], capture_output=True, text=True, timeout=60)
    assert done.returncode == 0 and done.stdout.strip() == f"photorx {__version__}"
    done = subprocess.run([exe, "budget", str(tmp_path / "missing.toml")], capture_output=True,
                          text=True, timeout=60)
    assert done.returncode == 2 and done.stdout == ""
    assert len(done.stderr.strip().splitlines()) == 1 and "Traceback" not in done.stderr


# -- with the receiver: budget, sweep, optimize, report -------------------------------------------
def test_budget_default_demo_text(capsys):
    code, out, err = run(capsys, "budget")
    assert code == 0 and err == ""
    # titled with the demo's [design] name
    assert out.startswith("Short-reach 1310 nm InGaAs PIN link receiver\n=====")
    for word in ("phase margin", "bandwidth", "noise by source", "sensitivity"):
        assert word in out


@pytest.mark.parametrize("fmt", ["csv", "json", "md", "latex", "html"])
def test_budget_export_formats(capsys, tmp_path, fmt):
    target = tmp_path / f"b.{fmt}"
    code, out, err = run(capsys, "budget", "--format", fmt, "-o", str(target))
    assert code == 0 and out == "" and "wrote" in err
    text = target.read_text()
    if fmt == "csv":
        df = pd.read_csv(target)
        row = df[(df["table"] == "speed") & (df["quantity"] == "DC transimpedance")]
        # the demo's feedback resistor is 3 kohm; the DC transimpedance is close to it
        assert float(row["value"].iloc[0]) == pytest.approx(3e3, rel=0.01)
        assert row["unit"].iloc[0] == "ohm"
    elif fmt == "json":
        doc = json.loads(text)
        assert "speed" in doc["tables"]
    elif fmt == "html":
        assert "<table" in text and "IEC 60825-1" in text
    elif fmt == "md":
        assert "| quantity" in text
    else:
        assert r"\begin{tabular}" in text


def test_budget_format_from_suffix_and_demo_name(capsys, tmp_path):
    target = tmp_path / "b.json"
    code, _, _ = run(capsys, "budget", "si-pin-850", "-o", str(target))
    assert code == 0
    doc = json.loads(target.read_text())
    rows = {r["quantity"]: r for r in doc["tables"]["operating point"]}
    assert rows["wavelength"]["value"] == pytest.approx(850e-9, rel=1e-12)


def test_budget_of_a_template_file(capsys, tmp_path):
    target = tmp_path / "t.toml"
    assert run(capsys, "template", "-o", str(target))[0] == 0
    code, out, _ = run(capsys, "budget", str(target))
    assert code == 0 and "phase margin" in out


def test_sweep_to_csv(capsys, tmp_path):
    target = tmp_path / "s.csv"
    code, _, err = run(capsys, "sweep", "--reverse-bias", "0:5:6", "--rf", "1 kohm,3 kohm",
                       "--columns", "bandwidth,phase_margin", "-o", str(target), "--quiet")
    assert code == 0 and "sweep [" not in err
    assert target.read_text().splitlines()[0] == \
        "reverse_bias [V],rf [ohm],bandwidth [Hz],phase_margin [deg]"  # units in the headers
    df = read_sweep_csv(target)
    assert list(df.columns) == ["reverse_bias", "rf", "bandwidth", "phase_margin"]
    assert df.attrs["units"] == {"reverse_bias": "V", "rf": "ohm", "bandwidth": "Hz",
                                 "phase_margin": "deg"}
    assert len(df) == 12
    np.testing.assert_allclose(sorted(set(df["reverse_bias"])), np.linspace(0, 5, 6), rtol=0)
    assert set(df["rf"]) == {1e3, 3e3}


def test_sweep_progress_and_stdout(capsys):
    code, out, err = run(capsys, "sweep", "--axis", "cf=20e-15:80e-15:4", "--columns",
                         "phase_margin", "--progress-threshold", "1")
    assert code == 0 and "sweep [" in err and "4/4 points" in err
    df = read_sweep_csv(out)
    assert len(df) == 4 and "cf" in df.columns


@pytest.mark.parametrize("argv, words", [
    (["sweep", "--axis", "nonsense=1,2"], ["nonsense"]),
    (["sweep", "--reverse-bias", "0:20"], ["--reverse-bias", "START:STOP:N"]),
    (["sweep", "--reverse-bias", "0:5:3", "--columns", "bogus"], ["bogus"]),
    (["optimize", "--vary", "reverse_bias"], ["NAME=LOW:HIGH"]),
    (["optimize", "--vary", "reverse_bias=0:10", "--constraint", "bandwidth=1"],
     ["FIGURE>=VALUE"]),
])
def test_sweep_and_optimize_errors(capsys, argv, words):
    code, out, err = run(capsys, *argv)
    assert code == 2
    assert_one_line_error(err)
    for w in words:
        assert w in err


def test_optimize(capsys, tmp_path):
    saved, curve = tmp_path / "opt.toml", tmp_path / "trade.csv"
    code, out, _ = run(capsys, "optimize", "--vary", "cf=20fF:200fF", "--objective",
                       "sensitivity_dbm", "--constraint", "phase_margin>=60",
                       "--grid-points", "20", "--save", str(saved), "--trade-curve", str(curve))
    assert code == 0
    assert "objective: min sensitivity_dbm" in out and "phase_margin >= 60 deg" in out
    from photorx.designfile import load_design

    rx = load_design(saved)
    assert 20e-15 * (1 - 1e-12) <= rx.tia.cf <= 200e-15 * (1 + 1e-12)  # within the bounds
    assert rx.evaluate().phase_margin >= 60 * (1 - 0.01)
    assert "reverse_bias" in pd.read_csv(curve).columns


def test_optimize_infeasible_exits_1(capsys):
    code, out, err = run(capsys, "optimize", "--vary", "cf=20fF:30fF", "--constraint",
                         "phase_margin>=89", "--constraint", "bandwidth>=100 GHz",
                         "--grid-points", "5")
    assert code == 1 and "feasible: no" in out and "no design satisfies" in err


def test_report(capsys, tmp_path):
    target = tmp_path / "r.html"
    code, _, err = run(capsys, "report", "-o", str(target))
    assert code == 0 and "wrote" in err
    text = target.read_text()
    assert text.startswith("<!DOCTYPE html>") and "data:image/png;base64," in text


# -- first-use paper cuts ----------------------------------------------------------------------
def test_negative_values_follow_options(capsys):
    # argparse alone rejects "--temperature -10degC,..." ("expected one argument")
    code, out, err = run(capsys, "sweep", "--temperature", "-10 degC,20 degC", "--columns",
                         "dark_current", "-q")
    assert code == 0, err
    frame = read_sweep_csv(out)
    # degC to K: T[K] = T[degC] + 273.15 (SI brochure, 9th ed., 2019, sec. 2.3.1)
    np.testing.assert_allclose(frame["temperature"], [263.15, 293.15], rtol=0, atol=1e-12)
    code, _, err = run(capsys, "sweep", "--rf", "-1k:2k:3")
    assert code == 2 and "expected one argument" not in err and "rf = -1000 ohm" in err
    assert_one_line_error(err)


def test_vary_bounds_in_order(capsys):
    code, _, err = run(capsys, "optimize", "--vary", "rf=10k:1k")
    assert code == 2 and "LOW must be below HIGH" in err and "rf=1k:10k" in err
    assert_one_line_error(err)


def test_evaluation_error_names_design_and_meaning(capsys, tmp_path):
    from photorx.designfile import design_template

    path = tmp_path / "high.toml"
    path.write_text(re.sub(r'(?m)^reverse_bias = ".*"$', 'reverse_bias = "60 V"',
                           design_template()))
    code, _, err = run(capsys, "budget", str(path))
    assert code == 2
    assert_one_line_error(err)
    assert "high.toml" in err and "60 V" in err and "[operating_point] reverse_bias" in err


def test_unknown_demo_name_lists_demos(capsys):
    code, _, err = run(capsys, "budget", "ingaas-pin")
    assert code == 2 and "si-pin-850" in err
    assert_one_line_error(err)


def test_output_error_is_readable(capsys, tmp_path):
    target = tmp_path / "missing" / "b.csv"
    code, _, err = run(capsys, "budget", "-o", str(target))
    assert code == 1 and f"{target}: " in err
    assert_one_line_error(err)


def test_terminal_budget_carries_cautions(capsys):
    code, out, _ = run(capsys, "budget")
    assert code == 0 and "Cautions:" in out and "IEC 60825-1" in out
    assert "1310 nm" in out  # the demo's wavelength as the trade writes it


def test_template_documents_other_junction_models(capsys, tmp_path):
    code, out, _ = run(capsys, "template")
    assert code == 0
    for line in ['#   na = "1e19 cm^-3"', '#   gradient = "1e20 cm^-4"', '#   cj0 = "1 pF"']:
        assert line in out
    # switching the model as the template says gives a loadable design
    text = out.replace('model = "pin"', 'model = "abrupt"')
    text = re.sub(r"(?m)^(i_thickness|i_doping|p_doping|n_doping) = .*$", "", text)
    text = re.sub(r'(?m)^#   (na|nd) = ("[^"]*").*$', r"\1 = \2", text)
    path = tmp_path / "abrupt.toml"
    path.write_text(text)
    code, out, err = run(capsys, "budget", str(path))
    assert code == 0, err
    assert "depletion width" in out


# -- limits and checks (issue 11) ----------------------------------------------------------------
def _design_file(tmp_path, name, **changes):
    """The embedded demo with fields changed, written as a design file."""
    import dataclasses

    from photorx.designfile import demo_receiver, dumps_design

    rx = demo_receiver()
    tia_changes = {k: changes.pop(k) for k in ("cf",) if k in changes}
    if tia_changes:
        changes["tia"] = dataclasses.replace(rx.tia, **tia_changes)
    path = tmp_path / f"{name}.toml"
    path.write_text(dumps_design(dataclasses.replace(rx, **changes)))
    return path


def test_optimize_honours_the_design_limits_as_python_does(capsys, tmp_path):
    from photorx import demo_receiver, optimize
    from photorx.designfile import load_design

    saved = tmp_path / "opt.toml"
    code, out, err = run(capsys, "optimize", "--vary", "reverse_bias=0:20", "--objective", "snr",
                         "--constraint", "bandwidth>=900 MHz", "--grid-points", "200",
                         "--save", str(saved))
    assert code == 0, err
    cli_bias = load_design(saved).reverse_bias
    assert cli_bias <= 10.0  # the design's supply limit (max_bias = 10 V), not 20 V
    assert "max_bias = 10 V" in out and "[design limit]" in out
    # the same answer as the Python optimiser with the same design and limits
    res = optimize(demo_receiver(), vary={"reverse_bias": (0.0, 20.0)}, objective="snr",
                   constraints={"bandwidth": (">=", 900e6)}, grid_points=200)
    assert cli_bias == pytest.approx(res.parameters["reverse_bias"], rel=1e-3)
    # a flat objective is named, with the least bias for the same result
    assert res.flat and "flat objective" in out
    low = re.search(r"least bias.*\n\s+reverse_bias = ([\d.]+) (m?)V", out)
    assert low, out
    value = float(low.group(1)) * (1e-3 if low.group(2) == "m" else 1.0)
    assert value == pytest.approx(res.low_bias_parameters["reverse_bias"], rel=1e-2)


@pytest.mark.parametrize("changes, words", [
    ({"cf": 6e-15}, ["phase margin", "peaking"]),        # phase margin about 10 deg
    ({"optical_power": 1e-3}, ["average photocurrent", "largest photocurrent"]),  # 0 dBm: clipped
])
def test_budget_warns_once_for_every_failed_check(capsys, tmp_path, changes, words):
    from photorx.designfile import load_design

    path = _design_file(tmp_path, "failing", **changes)
    failed = load_design(path).checks().query("not ok")
    assert len(failed) == len(words)
    code, out, err = run(capsys, "budget", str(path))
    assert code == 0
    warnings = [ln for ln in err.splitlines() if ln.startswith("photorx: warning:")]
    assert len(warnings) == len(failed) == len(err.strip().splitlines())
    for w in words:
        assert any(w in ln for ln in warnings), err
    assert "against a limit of" in warnings[0]
    # the budget's checks table shows the same rows, with the failures
    for check in failed["check"]:
        assert check in out


@pytest.mark.parametrize("fmt", ["text", "csv", "json", "md", "latex", "html"])
def test_exports_read_none_for_missing_figures(capsys, tmp_path, fmt):
    path = _design_file(tmp_path, "nofilter", post_filter=None, bit_rate=None)
    code, out, err = run(capsys, "budget", str(path), "--format", fmt)
    assert code == 0, err
    # no post filter and no phase crossover: "none", never inf or nan (JSON keeps null)
    assert not re.search(r"\b(inf|nan|n/a)\b", out, flags=re.IGNORECASE), out
    assert "none" in out
    if fmt == "json":
        rows = {r["quantity"]: r for r in json.loads(out)["tables"]["stability"]}
        assert rows["gain margin"]["value"] is None and rows["gain margin"]["display"] == "none"
    # an analog design: no BER sensitivity
    assert "bit-error" not in out and "BER" not in out


def test_trade_curve_export_reads_none(capsys, tmp_path):
    curve = tmp_path / "trade.csv"
    code, _, err = run(capsys, "optimize", "--vary", "reverse_bias=1:5", "--constraint",
                       "gain_margin_db>=6", "--grid-points", "8", "--trade-curve", str(curve))
    assert code == 0, err
    text = curve.read_text()
    # the demo's loop has no phase crossover: its gain margin does not exist
    assert "none" in text and not re.search(r"\b(inf|nan)\b", text, flags=re.IGNORECASE)
    df = pd.read_csv(curve, na_values=["none"])
    assert df["gain_margin_db"].isna().all()


# -- sweeps and optimisation refuse what would mislead (issue 11) --------------------------------
def test_sweep_refuses_more_than_max_points(capsys):
    # 1001 x 1000 points: refused before the design is even evaluated
    code, out, err = run(capsys, "sweep", "--reverse-bias", "0:20:1001", "--rf", "1e3:1e4:1000")
    assert code == 2 and out == ""
    assert_one_line_error(err)
    assert "1001000 points" in err and "--max-points" in err
    # one axis alone beyond the cap: refused before its values are allocated
    code, _, err = run(capsys, "sweep", "--reverse-bias", "0:20:1000000000000")
    assert code == 2 and "--max-points" in err
    assert_one_line_error(err)


def test_sweep_max_points_raises_or_lowers_the_cap(capsys):
    code, _, err = run(capsys, "sweep", "--reverse-bias", "0:5:6", "--max-points", "5")
    assert code == 2 and "more than --max-points 5" in err
    code, out, _ = run(capsys, "sweep", "--reverse-bias", "0:5:6", "--max-points", "6",
                       "--columns", "bandwidth", "-q")
    assert code == 0 and len(read_sweep_csv(out)) == 6


def test_sweep_progress_bar_is_tqdm(capsys, monkeypatch):
    import tqdm

    made = []
    real = tqdm.tqdm

    def spy(*args, **kwargs):
        made.append(kwargs)
        return real(*args, **kwargs)

    monkeypatch.setattr(tqdm, "tqdm", spy)
    code, _, err = run(capsys, "sweep", "--reverse-bias", "0:5:600", "--columns", "bandwidth")
    assert code == 0
    # shown only once the sweep has run for a second (tqdm's delay)
    assert made and made[0]["delay"] == 1.0 and made[0]["total"] == 600
    code, _, err = run(capsys, "sweep", "--reverse-bias", "0:5:600", "--columns", "bandwidth",
                       "--progress-threshold", "1")
    assert code == 0 and "600/600 points" in err


def test_sweep_in_python_honours_max_points():
    import photorx as prx

    with pytest.raises(DesignError, match="max_points"):
        prx.sweep(prx.demo_receiver(), reverse_bias=np.linspace(0, 5, 11), rf=[1e3, 2e3],
                  max_points=21)


def test_grid_points_must_be_at_least_two(capsys):
    for n in ("1", "0", "-5", "x"):
        code, _, err = run(capsys, "optimize", "--vary", "reverse_bias=0:5", "--grid-points", n)
        assert code == 2 and "--grid-points" in err
        assert_one_line_error(err)


@pytest.mark.parametrize("argv", [
    ["--objective", "stable"], ["--objective", "max:stable"],
    ["--constraint", "stable>=1"], ["--constraint", "bias_within_limit>=1"],
])
def test_yes_no_figures_are_not_objectives_or_constraints(capsys, argv):
    code, _, err = run(capsys, "optimize", "--vary", "reverse_bias=0:5", "--grid-points", "3",
                       *argv)
    assert code == 2 and "yes/no" in err
    assert_one_line_error(err)


def test_yes_no_figure_list_matches_the_engine():
    # every boolean figure of an evaluation is in the CLI's list, so none slips through
    import photorx as prx
    from photorx.cli import _is_yes_no

    values = prx.demo_receiver().evaluate().values
    booleans = {k for k, v in values.items() if np.asarray(v).dtype == bool}
    assert booleans and all(_is_yes_no(k) for k in booleans)
    assert not any(_is_yes_no(k) for k in values if k not in booleans)


@pytest.mark.parametrize("argv", [
    ["budget", "-o", "{d}"], ["sweep", "--reverse-bias", "0:1:2", "-o", "{d}"],
    ["template", "-o", "{d}", "--force"], ["report", "-o", "{d}"],
    ["optimize", "--vary", "reverse_bias=0:5", "--save", "{d}"],
])
def test_output_path_that_is_a_directory_is_named(capsys, tmp_path, argv):
    folder = tmp_path / "results"
    folder.mkdir()
    code, _, err = run(capsys, *[a.format(d=folder) for a in argv])
    assert code == 2 and f"{folder}: is a directory" in err
    assert ".tmp" not in err  # the user's path, not the temporary file
    assert_one_line_error(err)
    assert list(folder.iterdir()) == []


def test_no_runtime_warning_reaches_the_terminal(capsys, monkeypatch):
    # numpy's floating-point warnings inside a command never reach the user's terminal
    import warnings

    from photorx import cli

    def noisy(args):
        np.float64(1.0) / np.float64(0.0)  # numpy: "divide by zero encountered"
        warnings.warn("overflow encountered", RuntimeWarning)
        return 0

    original = cli.build_parser
    monkeypatch.setattr(cli, "build_parser", lambda: _with_func(original(), noisy))
    with warnings.catch_warnings():
        warnings.simplefilter("default")  # show what would reach a terminal
        code, _, err = run(capsys, "demos")
    assert code == 0 and "Warning" not in err and "encountered" not in err


def _with_func(parser, func):
    for action in parser._subparsers._group_actions:
        for sub in action.choices.values():
            sub.set_defaults(func=func)
    return parser


def test_photorx_warnings_get_one_line(capsys, monkeypatch):
    import warnings

    from photorx import cli
    from photorx.errors import ModelRangeWarning

    def warns(args):
        warnings.warn("noise integral not converged\n to rtol", ModelRangeWarning)
        return 0

    original = cli.build_parser
    monkeypatch.setattr(cli, "build_parser", lambda: _with_func(original(), warns))
    with warnings.catch_warnings():
        warnings.simplefilter("default")
        code, _, err = run(capsys, "demos")
    assert code == 0
    assert err.strip() == "photorx: warning: noise integral not converged to rtol"
