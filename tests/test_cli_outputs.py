"""Command-line outputs that must not mislead or break: "none" in sweep CSV, a warning for
every failed check in ``photorx report``, and a quiet stop when the reader of a pipe leaves.

Exit status 141 after a broken pipe is 128 + SIGPIPE (13), what a shell reports for a
pipeline stage stopped by the signal (common practice; POSIX signal number 13 from memory,
checked against the standard library's ``signal.SIGPIPE`` below).
"""

from __future__ import annotations

import io
import os
import re
import shutil
import signal
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from photorx.cli import EXIT_BROKEN_PIPE, main


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


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


# -- sweep CSV: figures that do not exist read "none" ----------------------------------------------
def test_sweep_csv_reads_none_for_missing_figures(capsys, tmp_path):
    path = _design_file(tmp_path, "nofilter", post_filter=None)
    code, out, err = run(capsys, "sweep", str(path), "--rf", "1 kohm,3 kohm", "-q")
    assert code == 0, err
    # no phase crossover (gain margin) and no post filter: "none", never inf or nan
    assert not re.search(r"\b(inf|nan)\b", out, flags=re.IGNORECASE), out[:2000]
    from photorx.views import read_sweep_csv

    frame = read_sweep_csv(out)
    assert frame["gain_margin_db"].isna().all()
    assert frame["filter_bandwidth"].isna().all()
    # the figures that do exist are untouched numbers
    assert np.isfinite(frame["bandwidth"]).all() and (frame["rf"] == [1e3, 3e3]).all()


# -- report: one warning line for every failed check, as budget prints -----------------------------
def test_report_warns_once_for_every_failed_check(capsys, tmp_path):
    from photorx.designfile import load_design

    path = _design_file(tmp_path, "lowcf", cf=6e-15)  # phase margin about 10 deg
    failed = load_design(path).checks().query("not ok")
    assert len(failed) >= 1 and failed["check"].str.contains("phase margin").any()
    code, _, err = run(capsys, "report", str(path), "-o", str(tmp_path / "r.html"))
    assert code == 0, err
    warnings = [ln for ln in err.splitlines() if ln.startswith("photorx: warning:")]
    assert len(warnings) == len(failed), err
    assert any("phase margin" in w and "against a limit of" in w for w in warnings), err
    # the same lines as photorx budget prints for that design
    code, _, budget_err = run(capsys, "budget", str(path))
    assert warnings == [ln for ln in budget_err.splitlines()
                        if ln.startswith("photorx: warning:")]


def test_report_of_a_passing_design_warns_nothing(capsys, tmp_path):
    code, _, err = run(capsys, "report", "-o", str(tmp_path / "r.html"))
    assert code == 0 and "warning" not in err, err


# -- broken pipe --------------------------------------------------------------------------------
def _console_script() -> str:
    return shutil.which("photorx") or str(Path(sys.executable).parent / "photorx")


@pytest.mark.parametrize("argv", [["budget"], ["sweep", "--rf", "1e3:1e4:50", "-q"]])
def test_broken_pipe_exits_quietly(argv):
    assert EXIT_BROKEN_PIPE == 128 + signal.SIGPIPE
    read_end, write_end = os.pipe()
    os.close(read_end)  # the reader has gone before the first line, as after `| head -1`
    try:
        done = subprocess.run([_console_script(), *argv], stdout=write_end,
                              stderr=subprocess.PIPE, text=True, timeout=120)
    finally:
        os.close(write_end)
    assert done.returncode == EXIT_BROKEN_PIPE, done.stderr
    assert done.stderr == ""  # no traceback, no "Exception ignored", no error line


def test_broken_pipe_in_process_is_quiet(monkeypatch, capsys):
    class Closed(io.StringIO):
        def write(self, text):
            raise BrokenPipeError(32, "Broken pipe")

    monkeypatch.setattr(sys, "stdout", Closed())
    code = main(["budget"])
    err = capsys.readouterr().err
    assert code == EXIT_BROKEN_PIPE and err == ""
