"""The step-response waveform against scipy.signal.step on the same transfer function.

Reference: scipy.signal.step (a general-purpose LTI simulator) of Zt(s) = A0/Den(s) built
from python-control-independent polynomial coefficients; and the second-order overshoot
exp(-pi zeta / sqrt(1 - zeta^2)) (Ogata, Modern Control Engineering, 5th ed., eq. 5-21, from
memory) through the stage's own figures.
"""

import numpy as np
import pytest
from scipy import signal

import photorx as prx
from photorx.circuit.metrics import closed_loop_polynomial


@pytest.mark.parametrize("cf, poles, rs", [(0.2e-12, (), 0.0), (0.05e-12, (), 10.0), (0.3e-12, (800e6,), 20.0)])
def test_waveform_matches_scipy(cf, poles, rs):
    amp = prx.OpAmp(gbw=300e6, dc_gain=3e4, poles=poles, input_capacitance=2e-12)
    tia = prx.Tia(amp, rf=20e3, cf=cf)
    net = prx.EquivalentCircuit(capacitance=3e-12, series_resistance=rs, shunt_resistance=1e9)
    t, y = tia.step_response(net)
    den = np.asarray(closed_loop_polynomial(**tia._args(net)), dtype=float)
    den = np.trim_zeros(den, "b")
    _, y_ref = signal.step(signal.lti([den[0]], den[::-1]), T=t)
    np.testing.assert_allclose(y, y_ref, atol=1e-6)  # scipy's matrix exponential: ~1e-9 here
    m = tia.analyze(net)
    assert y.max() == pytest.approx(1 + m.overshoot, abs=2e-3)  # the figures describe this waveform
    assert y[-1] == pytest.approx(1.0, abs=0.011)
