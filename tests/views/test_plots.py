"""Tests of photorx.views.plots: the plots draw the data they are given, on engineering axes.

The drawn line data are read back from matplotlib and compared with the inputs (the
plots must not alter or recompute numbers). Magnitudes in dB follow 20*log10|H|
(common practice).
"""

from __future__ import annotations

import base64

import numpy as np
import pytest

matplotlib = pytest.importorskip("matplotlib")
from matplotlib.ticker import EngFormatter  # noqa: E402

from photorx.views import plots  # noqa: E402


def test_bode_draws_magnitude_and_phase():
    f = np.geomspace(1e3, 1e9, 61)
    t = 1e4 / (1 + 1j * f / 1e3)          # a single-pole loop gain
    z = 1e4 / (1 + 1j * f / 1e7)          # a single-pole transimpedance
    fig = plots.plot_bode(f, loop_gain=t, closed_loop=z)
    ax_mag, ax_ph = fig.axes
    line = ax_mag.get_lines()[0]
    np.testing.assert_allclose(line.get_xdata(), f, rtol=0)
    np.testing.assert_allclose(line.get_ydata(), 20 * np.log10(np.abs(t)), rtol=1e-12)
    # single pole: phase tends to -90 deg well above the pole (common practice)
    assert ax_ph.get_lines()[0].get_ydata()[-1] == pytest.approx(-90.0, abs=0.1)
    assert isinstance(ax_ph.xaxis.get_major_formatter(), EngFormatter)
    assert ax_mag.get_xscale() == "log"


def test_bode_into_given_axes():
    from matplotlib.figure import Figure

    fig = Figure()
    axes = fig.subplots(2, 1)
    out = plots.plot_bode([1.0, 10.0], closed_loop=[1 + 0j, 0.5 + 0j], ax=axes)
    labelled = [ln for ln in axes[0].get_lines() if not ln.get_label().startswith("_")]
    assert out is fig and len(labelled) == 1
    with pytest.raises(ValueError, match="2 axes"):
        plots.plot_bode([1.0], loop_gain=[1j], ax=axes[0])


def test_step_and_curve():
    t = np.linspace(0, 1e-9, 11)
    v = 1 - np.exp(-t / 1e-10)
    fig = plots.plot_step(t, v, unit="", final=1.0)
    np.testing.assert_allclose(fig.axes[0].get_lines()[0].get_ydata(), v, rtol=0)
    assert isinstance(fig.axes[0].xaxis.get_major_formatter(), EngFormatter)
    fig = plots.plot_curve([0, 5, 10], [3e-12, 2e-12, 1.5e-12], xunit="V", yunit="F",
                           mark=(5, 2e-12))
    assert fig.axes[0].yaxis.get_major_formatter().unit == "F"
    assert len(fig.axes[0].get_lines()) == 2  # the curve and the marked point


def test_noise_stack_stacks_powers():
    f = np.geomspace(1e3, 1e9, 31)
    dens = {"Rf thermal": np.full(31, 10e-9), "amplifier e_n": np.full(31, 20e-9)}
    fig = plots.plot_noise_stack(f, dens)
    ax = fig.axes[0]
    top = ax.collections[-1].get_paths()[0].vertices[:, 1].max()
    # uncorrelated sources add in power: (10 nV)^2 + (20 nV)^2 = 5e-16 V^2/Hz = 500 nV^2/Hz
    # (common practice: the axis is labelled in nV^2/Hz, not with a prefix on V^2)
    assert top == pytest.approx(500.0, rel=1e-9)
    assert "nV$^2$/Hz" in ax.get_ylabel()
    assert ax.get_xscale() == "log"


def test_bias_tradeoff_panels():
    bias = np.linspace(0, 10, 11)
    series = [("bandwidth", 1e9 * (1 + bias / 10), "Hz", False),
              ("dark current", 1e-9 * (1 + bias), "A", True)]
    fig = plots.plot_bias_tradeoff(bias, series, mark=5.0)
    assert len(fig.axes) == 2
    assert fig.axes[1].get_yscale() == "log"
    np.testing.assert_allclose(fig.axes[0].get_lines()[0].get_ydata(), series[0][1], rtol=0)


@pytest.mark.parametrize("fmt, head", [("png", b"\x89PNG"), ("svg", b"<?xml")])
def test_figure_to_base64(fmt, head):
    fig = plots.plot_curve([0, 1], [0, 1])
    uri = plots.figure_to_base64(fig, fmt)
    prefix, data = uri.split(",", 1)
    assert prefix.startswith(f"data:image/{fmt}")
    assert base64.b64decode(data).startswith(head)


def test_matplotlib_not_imported_by_views_tables():
    import subprocess
    import sys

    code = ("import sys, photorx.views.tables, photorx.views.plots; "
            "print('matplotlib' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == "False"
