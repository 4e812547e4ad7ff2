"""Run the ngspice circuit simulator (Debian package ``ngspice``) in batch mode for reference checks.

Tests write their own netlists; this module only runs ngspice and reads back the vectors
they ask for. When ngspice is missing the calling test is skipped, unless
``PHOTORX_REQUIRE_NGSPICE=1`` (set by ``.ci/run``), in which case it fails.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import tempfile
from pathlib import Path

import numpy as np
import pytest

__all__ = ["require_ngspice", "run_ngspice"]


def require_ngspice() -> str:
    """Return the ngspice executable path, or skip/fail the test when it is absent."""
    exe = shutil.which("ngspice")
    if exe is None:
        if os.environ.get("PHOTORX_REQUIRE_NGSPICE") == "1":
            pytest.fail("ngspice is required (PHOTORX_REQUIRE_NGSPICE=1) but not installed")
        pytest.skip("ngspice not installed (Debian package 'ngspice')")
    return exe


def run_ngspice(circuit: str, analysis: str, vectors: list[str], plot: str | None = None,
                timeout: float = 60.0) -> dict[str, np.ndarray]:
    """Simulate ``circuit`` with ``analysis`` and return the named vectors.

    Parameters
    ----------
    circuit : str
        Netlist body: elements and models, without title, ``.control`` or ``.end``.
    analysis : str
        One interactive analysis command, e.g. ``"ac dec 20 1 1e9"`` or
        ``"noise v(out) I1 dec 20 1 1e9"``.
    vectors : list of str
        Vectors to write, e.g. ``["frequency", "v(out)"]``. Complex vectors come back
        complex.
    plot : str, optional
        Plot to select before writing (``"noise1"`` for noise spectra, ``"noise2"`` for
        integrated noise). Default: the analysis's own plot.

    Returns
    -------
    dict of numpy.ndarray
        One array per requested vector, keyed by the name as given.
    """
    exe = require_ngspice()
    with tempfile.TemporaryDirectory() as tmp:
        tmpdir = Path(tmp)
        out = {}
        lines = ["* photorx reference check", circuit.strip(), ".control", "set noaskquit",
                 "set filetype=ascii", "set numdgt=12", analysis]
        if plot:
            lines.append(f"setplot {plot}")
        for i, name in enumerate(vectors):
            lines.append(f"print {name} > {tmpdir / f'v{i}.txt'}")
        lines += ["quit", ".endc", ".end", ""]
        cir = tmpdir / "check.cir"
        cir.write_text("\n".join(lines))
        proc = subprocess.run([exe, "-b", str(cir)], capture_output=True, text=True,
                              timeout=timeout, cwd=tmpdir)
        for i, name in enumerate(vectors):
            path = tmpdir / f"v{i}.txt"
            if not path.exists():
                raise RuntimeError(f"ngspice produced no vector {name!r}:\n{proc.stdout}\n{proc.stderr}")
            out[name] = _read_print(path.read_text())
        return out


def _read_print(text: str) -> np.ndarray:
    """Parse ngspice 'print' output: rows 'index  value' or 'index  re,  im'."""
    values = []
    for line in text.splitlines():
        if "=" in line:  # scalar vectors print as 'name = value'
            values.append(float(line.split("=")[1].split()[0].rstrip(",")))
            continue
        parts = line.replace(",", " ").split()
        if not parts or not parts[0].isdigit():
            continue
        nums = [float(p) for p in parts[1:]]
        if len(nums) >= 3:  # index, sweep variable, re, im  (print shows the scale first)
            values.append(complex(nums[-2], nums[-1]))
        elif len(nums) == 2:
            values.append(nums[-1])
        else:
            values.append(nums[0])
    return np.asarray(values)
