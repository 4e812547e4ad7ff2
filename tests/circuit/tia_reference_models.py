"""Reference models of the transimpedance loop built with python-control (shared by tests).

Built independently of photorx's polynomial algebra: the loop gain is assembled with
python-control's transfer-function arithmetic straight from the circuit (A(s),
Yf = 1/Rf + s Cf, Yd = 1/(Rs + Rsh || 1/(s Cd)), Yin = Yd + s Cin, beta = Yf / (Yf + Yin));
the closed loop Zt = Zf * Zd/(Zd + Rs) * T/(1 + T) likewise. Frequencies are scaled to rad/us
inside these models to keep the polynomial coefficients near 1.
"""

from __future__ import annotations

import control
import numpy as np

SCALE = 1e6  # model time unit 1 us: s_model = s / SCALE

# designs: cover Rs, finite Rsh, extra poles, Cf = 0 and a loop with two gain crossovers
DESIGNS = {
    "plain": dict(gbw=100e6, dc_gain=1e5, poles=(), rf=1e5, cf=0.3e-12, cd=10e-12, rsh=np.inf,
                  rs=0.0, cin=2e-12),
    "rs_rsh_pole": dict(gbw=200e6, dc_gain=3e4, poles=(400e6,), rf=2e4, cf=0.8e-12, cd=5e-12,
                        rsh=2e6, rs=50.0, cin=3e-12),
    "two_poles": dict(gbw=1e9, dc_gain=1e5, poles=(2e9, 5e9), rf=5e3, cf=0.2e-12, cd=2e-12,
                      rsh=1e8, rs=10.0, cin=1e-12),
    "no_cf_pole": dict(gbw=50e6, dc_gain=2e5, poles=(150e6,), rf=1e5, cf=0.0, cd=20e-12,
                       rsh=1e9, rs=0.0, cin=5e-12),
    # low gain, shunt far below Rf: |T| crosses 1 twice (margins -143.7 and 107.7 deg)
    "two_crossings": dict(gbw=30e6, dc_gain=106.0, poles=(3.29e9,), rf=6.44e5, cf=5.08e-12,
                          cd=21.9e-12, rsh=3990.0, rs=0.0, cin=0.583e-12),
}


def loop_tf(p):
    """Loop gain T(s) as a python-control TransferFunction (s in rad/us)."""
    s = control.tf("s")
    a0 = p["dc_gain"]
    amp = control.tf([a0], [1.0]) / (1 + s * a0 / (2 * np.pi * p["gbw"]) * SCALE)
    for fp in p["poles"]:
        amp = amp / (1 + s * SCALE / (2 * np.pi * fp))
    for fz in p.get("zeros", ()):
        amp = amp * (1 + s * SCALE / (2 * np.pi * fz))
    cs = lambda c: c * SCALE  # noqa: E731 - capacitance in the scaled model
    yf = 1 / p["rf"] + s * cs(p["cf"])
    gsh = 0.0 if np.isinf(p["rsh"]) else 1 / p["rsh"]
    ycd = gsh + s * cs(p["cd"])                        # junction admittance
    yd = ycd / (1 + p["rs"] * ycd)                     # behind Rs
    yin = yd + s * cs(p["cin"])
    beta = yf / (yf + yin)
    return amp * beta, yf, ycd


def closed_tf(p):
    """Closed-loop transimpedance Zt(s) [ohm] (s in rad/us), minimal realisation."""
    t, yf, ycd = loop_tf(p)
    divider = 1 / (1 + p["rs"] * ycd)
    return control.minreal(divider / yf * t / (1 + t), verbose=False)
