"""Closed-loop transimpedance against an AC analysis of the same circuit in ngspice.

Source: ngspice (Debian package ``ngspice``), small-signal AC analysis of a netlist written
here: the amplifier is a VCVS of gain A0 followed by unity-buffered RC pole stages (the
dominant pole at GBW/A0 and each extra pole), the photodiode an AC current source in parallel
with Cd and Rsh, then Rs into the summing node, which also carries Cin and the feedback
Rf || Cf. Agreement required: 0.5 % (issue 4); the two solvers agree far better.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from spice import run_ngspice  # noqa: E402  (tests/spice.py, the project's ngspice runner)

from photorx.circuit.metrics import tia_figures  # noqa: E402
from photorx.circuit.tia import transimpedance  # noqa: E402

pytestmark = pytest.mark.ngspice

DESIGNS = {
    # series resistance, finite shunt resistance and a second amplifier pole
    "rs_rsh_pole": dict(gbw=200e6, dc_gain=3e4, poles=(400e6,), rf=2e4, cf=0.8e-12, cd=5e-12,
                        rsh=2e6, rs=50.0, cin=3e-12),
    # two extra poles, no feedback capacitor, ideal diode (peaked response)
    "two_poles_peaked": dict(gbw=1e9, dc_gain=1e5, poles=(3e9, 8e9), rf=5e3, cf=0.1e-12,
                             cd=2e-12, rsh=np.inf, rs=0.0, cin=1e-12),
}


def _netlist(p):
    diode = "pd" if p["rs"] > 0 else "inv"
    lines = [f"I1 {diode} 0 DC 0 AC 1",  # drawn out of the diode node: Zt > 0 at DC
             f"Cd {diode} 0 {p['cd']:.12g}"]
    if np.isfinite(p["rsh"]):
        lines.append(f"Rsh {diode} 0 {p['rsh']:.12g}")
    if p["rs"] > 0:
        lines.append(f"Rs pd inv {p['rs']:.12g}")
    lines += [f"Cin inv 0 {p['cin']:.12g}", f"Rf inv out {p['rf']:.12g}"]
    if p["cf"] > 0:
        lines.append(f"Cf inv out {p['cf']:.12g}")
    # amplifier: v(out) = -A(s) v(inv), A = A0 / prod(1 + s/w_k)
    taus = [p["dc_gain"] / (2 * np.pi * p["gbw"])] + [1 / (2 * np.pi * fp) for fp in p["poles"]]
    lines.append(f"E0 a0 0 0 inv {p['dc_gain']:.12g}")
    node = "a0"
    for k, tau in enumerate(taus, start=1):
        lines += [f"R{k}p {node} b{k} 1k", f"C{k}p b{k} 0 {tau / 1e3:.12g}",
                  f"E{k} a{k} 0 b{k} 0 1"]
        node = f"a{k}"
    lines.append(f"Eout out 0 {node} 0 1")
    return "\n".join(lines)


@pytest.mark.parametrize("name", list(DESIGNS))
def test_transimpedance_against_ngspice_ac(name):
    p = DESIGNS[name]
    res = run_ngspice(_netlist(p), "ac dec 10 1e3 3e9", ["frequency", "v(out)"])
    f = np.real(res["frequency"])
    ours = transimpedance(f, **p)
    rel = np.abs(ours - res["v(out)"]) / np.abs(res["v(out)"])
    # complex relative error bounds magnitude (0.5 %) and phase (0.005 rad) together
    assert rel.max() < 5e-3, f"worst {rel.max():.2e} at {f[np.argmax(rel)]:.3g} Hz"


@pytest.mark.parametrize("name", list(DESIGNS))
def test_dc_transimpedance_bandwidth_and_peaking_against_ngspice(name):
    # Same netlist; ngspice AC at 400 points/decade, bandwidth by log-linear interpolation
    # of the first fall below -3 dB (these designs cross once); rtol 0.5 % (issue 4), peaking
    # within 0.05 dB (grid).
    p = DESIGNS[name]
    fig = tia_figures(**p)
    res = run_ngspice(_netlist(p), "ac dec 400 1e-2 1e10", ["frequency", "v(out)"])
    f = np.real(res["frequency"])
    mag = np.abs(res["v(out)"])
    assert fig["dc_transimpedance"] == pytest.approx(mag[0], rel=1e-4)
    level = mag[0] / np.sqrt(2)
    k = np.argmax(mag < level) - 1  # last point above the level before the first fall
    assert np.all(mag[k + 1:] < level)  # single crossing: first = last
    lf = np.interp(np.log(level), [np.log(mag[k + 1]), np.log(mag[k])],
                   [np.log(f[k + 1]), np.log(f[k])])
    assert fig["bandwidth"] == pytest.approx(np.exp(lf), rel=5e-3)
    assert fig["peaking_db"] == pytest.approx(20 * np.log10(mag.max() / mag[0]), abs=0.05)
