"""Open-loop gain and TIA core (photorx.circuit.amplifier, photorx.circuit.tia)."""

from __future__ import annotations

import control
import numpy as np
import pytest

from photorx.circuit.amplifier import OpAmp, open_loop_gain
from photorx.circuit.tia import Tia, feedback_factor, noise_gain
from photorx.device.equivalent_circuit import EquivalentCircuit
from photorx.errors import DesignError

from tia_reference_models import DESIGNS, SCALE, closed_tf


def test_open_loop_gain_against_python_control():
    # Source: python-control frequency_response of A0 / ((1 + s/wd)(1 + s/w2)), wd = 2 pi GBW/A0
    # (dominant-pole model, Graeme 1996 ch. 2); rtol 1e-10.
    gbw, a0, f2 = 100e6, 1e5, 300e6
    s = control.tf("s")
    ref = a0 / ((1 + s * a0 / (2 * np.pi * gbw) * SCALE) * (1 + s * SCALE / (2 * np.pi * f2)))
    f = np.geomspace(1.0, 1e10, 41)
    want = np.ravel(control.frequency_response(ref, 2 * np.pi * f / SCALE).complex)
    np.testing.assert_allclose(open_loop_gain(f, gbw, a0, (f2,)), want, rtol=1e-10)
    amp = OpAmp(gbw=gbw, dc_gain=a0, poles=(f2,))
    np.testing.assert_allclose(amp.gain(f), want, rtol=1e-10)
    assert amp.dominant_pole == pytest.approx(gbw / a0)
    # an infinite pole is an absent pole (used to pad pole lists in vectorised sweeps)
    np.testing.assert_allclose(open_loop_gain(f, gbw, a0, (np.inf,)), open_loop_gain(f, gbw, a0))


@pytest.mark.parametrize("name", list(DESIGNS))
def test_transimpedance_against_python_control(name):
    # Source: python-control closed loop built from the circuit (tia_reference_models); rtol 1e-8.
    p = DESIGNS[name]
    tia = Tia(OpAmp(gbw=p["gbw"], dc_gain=p["dc_gain"], poles=p["poles"],
                    input_capacitance=p["cin"]), rf=p["rf"], cf=p["cf"])
    net = EquivalentCircuit(capacitance=p["cd"], series_resistance=p["rs"],
                            shunt_resistance=p["rsh"])
    f = np.geomspace(1e2, 3e9, 25)
    want = np.ravel(control.frequency_response(closed_tf(p), 2 * np.pi * f / SCALE).complex)
    np.testing.assert_allclose(tia.transimpedance(f, net), want, rtol=1e-8)


def test_noise_gain_limits_and_broadcasting():
    # Noise gain 1 + Yin/Yf: 1 + Rf/Rsh at DC and 1 + (Cd + Cin)/Cf at high frequency with
    # Rs = 0 (Graeme 1996, ch. 3; common practice); rtol 1e-6.
    args = dict(rf=1e5, cf=1e-12, cd=10e-12, rsh=1e7, rs=0.0, cin=2e-12)
    assert noise_gain(1e-6, **args).real == pytest.approx(1 + 1e5 / 1e7, rel=1e-6)
    assert abs(noise_gain(1e13, **args)) == pytest.approx(1 + 12.0, rel=1e-6)
    f = np.geomspace(1, 1e9, 7)
    np.testing.assert_allclose(noise_gain(f, **args) * feedback_factor(f, **args), 1.0)
    amp = OpAmp()
    z = Tia(amp, rf=1e4, cf=1e-12).transimpedance(
        f, EquivalentCircuit(capacitance=np.array([[1e-12], [5e-12], [20e-12]])))
    assert z.shape == (3, 7)


@pytest.mark.parametrize("kwargs, name", [
    (dict(gbw=-1.0), "gbw"), (dict(dc_gain=0.0), "dc_gain"), (dict(poles=(1e8, 0.0)), "poles"),
    (dict(poles=0.0), "poles"), (dict(voltage_noise=-1e-9), "voltage_noise"),
    (dict(input_capacitance=-1e-12), "input_capacitance"), (dict(output_swing=0.0), "output_swing"),
])
def test_opamp_bad_input(kwargs, name):
    with pytest.raises(DesignError, match=name) as info:
        OpAmp(**kwargs)
    assert info.value.parameter == name


def test_tia_bad_input():
    with pytest.raises(DesignError, match="rf"):
        Tia(OpAmp(), rf=0.0)
    with pytest.raises(DesignError, match="cf"):
        Tia(OpAmp(), rf=1e4, cf=-1e-12)
    with pytest.raises(DesignError, match="amp"):
        Tia("amplifier", rf=1e4)


def test_noise_densities_with_and_without_a_flicker_corner():
    # e_n(f) = e_w sqrt(1 + f_c/f) (Motchenbacher and Connelly, Low-Noise Electronic System
    # Design, 1993, ch. 1): sqrt(2) e_w at the corner, sqrt(101) e_w two decades below it
    # (f_c/f = 100); with f_c = 0 it is e_w at every frequency, 0 Hz included (no NaN
    # from 0/0 there); with a corner it diverges at 0 Hz. rtol 1e-12.
    amp = OpAmp(voltage_noise=4e-9, voltage_noise_corner=1e3, current_noise=2e-15)
    np.testing.assert_allclose(amp.voltage_noise_density([10.0, 1e3, 1e9]),
                               4e-9 * np.sqrt([101.0, 2.0, 1.0 + 1e-6]), rtol=1e-12)
    assert np.isinf(amp.voltage_noise_density(0.0))
    with np.errstate(all="raise"):
        np.testing.assert_allclose(amp.current_noise_density(np.array([0.0, 1.0])), 2e-15,
                                   rtol=1e-12)
