"""design_feedback_capacitor against python-control, scipy.signal and second-order closed forms."""

from __future__ import annotations

import control
import numpy as np
import pytest
import scipy.signal

from photorx.circuit.amplifier import OpAmp
from photorx.circuit.feedback_design import design_feedback_capacitor
from photorx.device.equivalent_circuit import EquivalentCircuit
from photorx.errors import DesignError

from tia_reference_models import SCALE, closed_tf as _closed_tf, loop_tf as _loop_tf

AMP = OpAmp(gbw=100e6, dc_gain=1e5, poles=(300e6,), input_capacitance=2e-12)
NET = EquivalentCircuit(capacitance=10e-12, series_resistance=20.0, shunt_resistance=1e8)
RF = 1e5


def _params(amp, rf, net, cf):
    return dict(gbw=amp.gbw, dc_gain=amp.dc_gain, poles=amp.poles, rf=rf, cf=cf,
                cd=net.capacitance, rsh=net.shunt_resistance, rs=net.series_resistance,
                cin=amp.input_capacitance)


@pytest.mark.parametrize("target, zeta", [("butterworth", 1 / np.sqrt(2)),
                                          ("bessel", np.sqrt(3) / 2), ("critical", 1.0)])
def test_response_targets_against_python_control_damping(target, zeta):
    # Source: control.damp on the closed loop built by python-control from the circuit: the
    # dominant (lowest natural frequency) pole pair has the target damping ratio
    # (Butterworth 1/sqrt(2), Bessel sqrt(3)/2, critical 1: second-order filter definitions,
    # e.g. Ogata, Modern Control Engineering, 5th ed., 2010, sec. 5-3). rtol 1e-5; at critical
    # damping the double pole is split by rounding, so its damping is checked from the
    # pair's sum and product.
    d = design_feedback_capacitor(AMP, RF, NET, target=target)
    poles = control.poles(_closed_tf(_params(AMP, RF, NET, d.cf))) * SCALE
    poles = poles[np.argsort(np.abs(poles))][:2]
    wn = np.sqrt(np.real(poles[0] * poles[1]))
    assert -np.real(poles.sum()) / (2 * wn) == pytest.approx(zeta, rel=1e-5)
    assert float(d) == d.cf and d.target == target and d.metrics.stable


def test_phase_margin_target_against_python_control():
    # Source: control.stability_margins on the loop gain with the designed Cf; abs 0.01 deg.
    d = design_feedback_capacitor(AMP, RF, NET, phase_margin=60.0)
    pm = control.stability_margins(_loop_tf(_params(AMP, RF, NET, d.cf))[0])[1]
    assert pm == pytest.approx(60.0, abs=0.01)
    assert d.target == "phase_margin" and d.target_value == 60.0


def test_second_order_step_figures_of_the_targets():
    # Near-ideal integrator amplifier (A0 = 1e7, no extra pole, Rs = 0, Rsh = inf): the loop is
    # second order, so the step overshoot is exp(-pi zeta/sqrt(1 - zeta^2)): 4.32 % maximally
    # flat, 0.43 % Bessel, 0 critical (Ogata, 2010, eq. 5-21); rtol 1e-4. The critically damped
    # rise time is checked against scipy.signal.step of 1/(1 + s/wn)^2 (10-90 %, rtol 1e-4).
    amp = OpAmp(gbw=100e6, dc_gain=1e7, poles=(), input_capacitance=0.0)
    net = EquivalentCircuit(capacitance=10e-12)
    for target, zeta in (("butterworth", 1 / np.sqrt(2)), ("bessel", np.sqrt(3) / 2)):
        m = design_feedback_capacitor(amp, RF, net, target=target).metrics
        assert m.overshoot == pytest.approx(np.exp(-np.pi * zeta / np.sqrt(1 - zeta ** 2)),
                                            rel=1e-4)
    d = design_feedback_capacitor(amp, RF, net, target="critical")
    assert d.metrics.overshoot == pytest.approx(0.0, abs=1e-9)
    wn = 2 * np.pi * d.metrics.bandwidth / np.sqrt(np.sqrt(2) - 1)  # f-3dB of a double pole
    t = np.linspace(0.0, 20.0, 400001)
    _, y = scipy.signal.step(([1.0], [1.0, 2.0, 1.0]), T=t)
    rise = (t[np.argmax(y >= 0.9)] - t[np.argmax(y >= 0.1)]) / wn
    assert d.metrics.rise_time == pytest.approx(rise, rel=1e-4)


def test_closed_form_reported_beside_numerical_answer():
    # Cf ~ 2 zeta sqrt(Ci/(2 pi Rf GBW)) (two-pole model; Graeme, Photodiode Amplifiers, 1996,
    # ch. 3, from memory): within 5 % of the full solution for a near-ideal amplifier where
    # Cf/Ci ~ 5 %; the reported error is (closed - cf)/cf.
    amp = OpAmp(gbw=100e6, dc_gain=1e7, poles=(), input_capacitance=2e-12)
    net = EquivalentCircuit(capacitance=8e-12)
    d = design_feedback_capacitor(amp, RF, net, target="butterworth")
    closed = np.sqrt(2) * np.sqrt(10e-12 / (2 * np.pi * RF * 100e6))
    assert d.closed_form_cf == pytest.approx(closed, rel=1e-12)
    assert d.closed_form_error == pytest.approx((closed - d.cf) / d.cf, rel=1e-12)
    assert abs(d.closed_form_error) < 0.05


def test_target_met_without_capacitor():
    # A slow amplifier with a small Rf*C is overdamped already (zeta = wn/(2 w_t) >= 1 in the
    # two-pole model): the answer is Cf = 0 with a note.
    amp = OpAmp(gbw=1e6, dc_gain=1e5, input_capacitance=0.0)
    d = design_feedback_capacitor(amp, 100.0, EquivalentCircuit(capacitance=1e-12),
                                  target="critical")
    assert d.cf == 0.0 and "Cf = 0" in d.note


@pytest.mark.parametrize("kwargs, name", [
    (dict(target="chebyshev"), "target"), (dict(phase_margin=95.0), "phase_margin"),
    (dict(phase_margin=0.0), "phase_margin"),
])
def test_bad_targets(kwargs, name):
    with pytest.raises(DesignError, match=name):
        design_feedback_capacitor(AMP, RF, NET, **kwargs)


def test_unreachable_margin_and_bad_inputs():
    # A second pole at 30 MHz below a 100 MHz GBW caps the margin well under 85 deg.
    amp = OpAmp(gbw=100e6, dc_gain=1e5, poles=(30e6,))
    with pytest.raises(DesignError, match="not reached"):
        design_feedback_capacitor(amp, RF, NET, phase_margin=85.0)
    with pytest.raises(DesignError, match="rf"):
        design_feedback_capacitor(AMP, -1.0, NET)
    with pytest.raises(DesignError, match="rf"):
        design_feedback_capacitor(AMP, np.array([1e4, 1e5]), NET)
    with pytest.raises(DesignError, match="amp"):
        design_feedback_capacitor("opamp", RF, NET)
