"""Loop figures (photorx.circuit.metrics) against python-control, scipy.signal and textbook forms.

The python-control reference models are in tia_reference_models.py (built from the circuit,
independently of photorx's polynomial algebra).
"""

from __future__ import annotations

import control
import numpy as np
import pytest
import scipy.signal
from hypothesis import given, settings
from hypothesis import strategies as st

from photorx.circuit.amplifier import OpAmp
from photorx.circuit.metrics import (FIGURE_UNITS, TiaMetrics, closed_loop_poles, loop_margins,
                                     tia_figures)
from photorx.circuit.tia import Tia
from photorx.device.equivalent_circuit import EquivalentCircuit
from photorx.errors import DesignError

from tia_reference_models import DESIGNS, SCALE, closed_tf as _closed_tf, loop_tf as _loop_tf

@pytest.mark.parametrize("name", ["plain", "rs_rsh_pole", "two_poles", "no_cf_pole",
                                  "two_crossings"])
def test_margins_against_python_control(name):
    # Source: python-control (PyPI "control", 0.10) stability_margins on the same loop.
    # Both report, over all crossings, the phase margin of smallest magnitude and the gain
    # margin closest to 1 (0 dB).
    p = DESIGNS[name]
    t, _, _ = _loop_tf(p)
    gm, pm, _, wpc, wgc, _ = control.stability_margins(t, returnall=True)
    ours = loop_margins(**p)
    pm = np.atleast_1d(pm)
    k = np.argmin(np.abs(pm))
    assert ours["phase_margin"] == pytest.approx(pm[k], abs=0.01)          # deg
    assert ours["crossover"] == pytest.approx(np.atleast_1d(wgc)[k] * SCALE / (2 * np.pi),
                                              rel=1e-5)
    gm = np.atleast_1d(gm)
    if gm.size == 0 or np.all(~np.isfinite(gm)):
        assert np.isinf(ours["gain_margin_db"])
    else:
        j = np.argmin(np.abs(np.log(gm)))
        assert ours["gain_margin_db"] == pytest.approx(20 * np.log10(gm[j]), abs=0.01)  # dB
        assert ours["phase_crossover"] == pytest.approx(
            np.atleast_1d(wpc)[j] * SCALE / (2 * np.pi), rel=1e-5)


@pytest.mark.parametrize("name", ["plain", "rs_rsh_pole", "two_poles", "no_cf_pole"])
def test_stability_q_and_dc_against_python_control(name):
    # Source: python-control closed-loop poles (control.poles) and control.damp; DC gain
    # from control.dcgain of the closed loop built from the circuit.
    p = DESIGNS[name]
    zt = _closed_tf(p)
    poles = control.poles(zt) * SCALE
    f = tia_figures(**p)
    assert bool(f["stable"]) == bool(np.all(poles.real < 0))
    assert f["dc_transimpedance"] == pytest.approx(control.dcgain(zt), rel=1e-9)
    ours = closed_loop_poles(**p)
    ours = ours[~np.isnan(ours)]
    np.testing.assert_allclose(np.sort_complex(ours), np.sort_complex(poles), rtol=1e-6)
    # dominant pair: lowest natural frequency among the complex pairs
    cplx = poles[poles.imag > 0]
    if cplx.size and f["stable"]:
        pk = cplx[np.argmin(np.abs(cplx))]
        assert f["damping"] == pytest.approx(-pk.real / abs(pk), rel=1e-6)
        assert f["q"] == pytest.approx(abs(pk) / (-2 * pk.real), rel=1e-6)


def _step_reference(p):
    """Rise time (10-90 %) [s], overshoot (fraction), 1 % settling time [s] and the grid step
    [s] from scipy.signal.step on a fine grid."""
    zt = _closed_tf(p)
    num, den = control.tfdata(zt)
    sys = scipy.signal.lti(np.ravel(num[0][0]), np.ravel(den[0][0]))
    slow = np.min(np.abs(np.real(sys.poles)))
    t = np.linspace(0.0, 15.0 / slow, 200001)
    _, y = scipy.signal.step(sys, T=t)
    y = y / control.dcgain(zt)

    def first(level):
        k = np.argmax(y >= level)
        return t[k - 1] + (level - y[k - 1]) / (y[k] - y[k - 1]) * (t[k] - t[k - 1])
    settle = t[np.nonzero(np.abs(y - 1.0) > 0.01)[0][-1]]
    return ((first(0.9) - first(0.1)) / SCALE, max(y.max() - 1.0, 0.0), settle / SCALE,
            t[1] / SCALE)


@pytest.mark.parametrize("name", ["plain", "rs_rsh_pole", "two_poles", "no_cf_pole",
                                  "two_crossings"])
def test_step_response_against_scipy_signal(name):
    # Source: scipy.signal.step on scipy.signal.lti of the closed loop (built with
    # python-control from the circuit); 200 001 samples, linear interpolation at the levels.
    # Tolerances: rise and settling time within 2 grid steps, overshoot within 1e-5 (peak
    # sampling). "no_cf_pole" rings (Q ~ 42), which exercises the settling refinement.
    p = DESIGNS[name]
    rise, over, settle, dt = _step_reference(p)
    f = tia_figures(**p)
    assert f["rise_time"] == pytest.approx(rise, abs=2 * dt)
    assert f["overshoot"] == pytest.approx(over, abs=1e-5)
    assert f["settling_time"] == pytest.approx(settle, abs=2 * dt)


def test_second_order_step_and_peaking_closed_forms():
    # Second-order system with damping zeta: overshoot exp(-pi zeta / sqrt(1 - zeta^2)),
    # peaking 1/(2 zeta sqrt(1 - zeta^2)), 1 % settling by the envelope ~ 4.6/(zeta wn)
    # (Ogata, Modern Control Engineering, 5th ed., 2010, sec. 5-3; common practice).
    # A near-ideal integrator TIA (A0 = 1e9, no extra poles, Rs = 0, Rsh = inf) is second order.
    p = dict(gbw=100e6, dc_gain=1e9, poles=(), rf=1e5, cf=0.2e-12, cd=10e-12, rsh=np.inf,
             rs=0.0, cin=0.0)
    f = tia_figures(**p)
    z = f["damping"]
    assert f["overshoot"] == pytest.approx(np.exp(-np.pi * z / np.sqrt(1 - z * z)), rel=1e-6)
    assert 10 ** (f["peaking_db"] / 20) == pytest.approx(1 / (2 * z * np.sqrt(1 - z * z)),
                                                        rel=1e-6)
    poles = closed_loop_poles(**p)
    wn = abs(poles[0])
    # envelope bound: settling lies within one half ringing period of the envelope estimate
    t_env = np.log(0.01 * np.sqrt(1 - z * z)) / (-z * wn)
    half_period = np.pi / (wn * np.sqrt(1 - z * z))
    assert t_env - half_period <= f["settling_time"] <= t_env + 1e-12


def test_textbook_bandwidth_of_compensated_integrator_tia():
    # f_-3dB ~ sqrt(GBW / (2 pi Rf C)) for a maximally flat (Q = 0.707) compensated TIA,
    # Graeme, Photodiode Amplifiers: Op Amp Solutions, 1996, ch. 3 (from memory).
    # Exact for the two-pole model with C = Ci + Cf (tolerance 0.2 % for A0 = 1e7 and the
    # 1/w_t term); with the textbook's C = Ci alone Cf/Ci ~ 5 % here, so 5 %.
    from photorx.circuit.feedback_design import design_feedback_capacitor

    amp = OpAmp(gbw=100e6, dc_gain=1e7, poles=(), input_capacitance=0.0)
    net = EquivalentCircuit(capacitance=10e-12)
    rf = 1e5
    d = design_feedback_capacitor(amp, rf, net, target="butterworth")
    bw = d.metrics.bandwidth
    assert bw == pytest.approx(np.sqrt(100e6 / (2 * np.pi * rf * (10e-12 + d.cf))), rel=2e-3)
    assert bw == pytest.approx(np.sqrt(100e6 / (2 * np.pi * rf * 10e-12)), rel=0.05)
    assert d.metrics.peaking_db == pytest.approx(0.0, abs=1e-6)   # maximally flat: no peak


def test_textbook_cf_rule_gives_q_near_one():
    # Cf = sqrt(Ci / (2 pi Rf GBW)) (Graeme, 1996, ch. 3, "45 degree" compensation, from
    # memory) puts the noise-gain pole at the geometric mean of its zero and GBW; in the
    # two-pole model that is damping 1/2 (Q = 1, ~1.25 dB peaking), not maximally flat.
    # Tolerance 5 %: the rule neglects Cf against Ci and 1/w_t.
    ci, rf, gbw = 10e-12, 1e5, 100e6
    cf = np.sqrt(ci / (2 * np.pi * rf * gbw))
    f = tia_figures(gbw=gbw, dc_gain=1e7, poles=(), rf=rf, cf=cf, cd=ci, rsh=np.inf, rs=0.0,
                    cin=0.0)
    assert f["q"] == pytest.approx(1.0, rel=0.05)
    assert f["peaking_db"] == pytest.approx(1.25, abs=0.15)


def test_group_delay_variation_against_control_frequency_response():
    # Source: python-control frequency_response of the closed loop; group delay by central
    # differences of the unwrapped phase on a fine linear grid; rtol 1e-4.
    p = DESIGNS["rs_rsh_pole"]
    f = tia_figures(**p)
    zt = _closed_tf(p)
    w = np.linspace(0.0, 2 * np.pi * f["bandwidth"], 20001) / SCALE
    resp = control.frequency_response(zt, w)
    phase = np.unwrap(np.angle(np.ravel(resp.complex)))
    tau = -np.gradient(phase, w) / SCALE
    assert f["group_delay_variation"] == pytest.approx(tau.max() - tau.min(), rel=1e-4)


def _first_fall_below_3db(p, f_lo, f_hi):
    """First frequency [Hz] where the python-control closed loop falls below |Zt(0)|/sqrt 2,
    and the magnitude on the dense grid (200 001 log-spaced points)."""
    zt = _closed_tf(p)
    w = np.geomspace(f_lo, f_hi, 200001) * 2 * np.pi / SCALE
    mag = np.abs(np.ravel(control.frequency_response(zt, w).complex))
    first = np.argmax(mag < abs(control.dcgain(zt)) / np.sqrt(2))
    return w[first] * SCALE / (2 * np.pi), w * SCALE / (2 * np.pi), mag


def test_bandwidth_of_peaked_response():
    # Fact of the trade: peaking above the DC value does not end the band; the -3 dB
    # bandwidth is where |Zt| falls below |Zt(0)|/sqrt(2). Reference: python-control
    # frequency response on a dense grid (grid step 1.4e-4 relative, hence rel=2e-4).
    p = DESIGNS["no_cf_pole"] | dict(cf=0.05e-12)
    f = tia_figures(**p)
    assert f["stable"] and f["peaking_db"] > 6
    bw, _, mag = _first_fall_below_3db(p, 1e2, 1e10)
    assert f["bandwidth"] == pytest.approx(bw, rel=2e-4)
    assert f["peaking_db"] == pytest.approx(20 * np.log10(mag.max() / mag[0]), abs=1e-3)


def test_bandwidth_ends_at_first_fall_when_a_resonance_rises_again():
    # A low-gain amplifier (A0 = 112) with a 479 MHz second pole, Rf = 149 ohm and a 30 pF
    # diode behind 66 ohm: a slow real closed-loop pole takes |Zt| below -3 dB at ~91 MHz,
    # and a lightly damped pair (phase margin 15 deg) lifts it above -3 dB again between
    # ~406 and ~447 MHz. The band over which the response stays within 3 dB of DC ends at
    # the first fall (common practice: -3 dB bandwidth measured from DC); the resonance
    # must not be reported as the bandwidth. Reference: python-control frequency response.
    # (Found by a random search over 2e4 designs; before the fix the last crossing,
    # ~448 MHz, was reported.)
    p = dict(gbw=2.1497e9, dc_gain=111.964, poles=(478.986e6, 13.4666e9), rf=148.961,
             cf=31.496e-15, cd=30.1495e-12, rsh=515.425e3, rs=66.1058, cin=4.76725e-12)
    f = tia_figures(**p)
    assert f["stable"]
    bw, freq, mag = _first_fall_below_3db(p, 1e3, 1e11)
    level = mag[0] / np.sqrt(2)
    assert np.any((freq > 2 * bw) & (mag > level))  # the response does come back above -3 dB
    assert f["bandwidth"] == pytest.approx(bw, rel=2e-4)
    assert f["bandwidth"] < 1.2e8


def test_unstable_loop_reported_as_unstable():
    # An uncompensated loop with a low second amplifier pole oscillates; python-control's
    # closed-loop poles confirm a right-half-plane pair. No bandwidth may be reported.
    p = dict(gbw=100e6, dc_gain=1e5, poles=(20e6,), rf=1e5, cf=0.0, cd=20e-12, rsh=np.inf,
             rs=0.0, cin=5e-12)
    assert np.any(control.poles(_closed_tf(p)).real > 0)
    m = TiaMetrics.from_figures(tia_figures(**p, output_swing=2.0))
    assert m.stable is False
    assert m.phase_margin < 0
    for name in ("bandwidth", "peaking_db", "rise_time", "overshoot", "settling_time", "q",
                 "group_delay_variation", "max_step_photocurrent"):
        assert np.isnan(getattr(m, name)), name
    assert np.isfinite(m.dc_transimpedance)


def test_scalar_and_array_results_agree():
    # Self-consistency: one vectorised call equals per-point scalar calls (rtol 1e-9).
    names = list(DESIGNS)
    keys = ["gbw", "dc_gain", "rf", "cf", "cd", "rsh", "rs", "cin"]
    arrays = {k: np.array([DESIGNS[n][k] for n in names]) for k in keys}
    poles = (np.array([(DESIGNS[n]["poles"] + (np.inf, np.inf))[0] for n in names]),
             np.array([(DESIGNS[n]["poles"] + (np.inf, np.inf))[1] for n in names]))
    vec = tia_figures(**arrays, poles=poles, output_swing=2.0)
    for i, n in enumerate(names):
        one = tia_figures(**DESIGNS[n], output_swing=2.0)
        for key in FIGURE_UNITS:
            np.testing.assert_allclose(vec[key][i], one[key], rtol=1e-9, err_msg=f"{n} {key}")
    # broadcasting: a (3, 1) by (4,) grid gives (3, 4) figures
    grid = tia_figures(**(DESIGNS["plain"] | dict(rf=np.array([[1e4], [1e5], [1e6]]),
                                                  cd=np.array([1, 2, 5, 10]) * 1e-12)))
    assert grid["bandwidth"].shape == (3, 4)


def test_tia_analyze_and_metrics_shell():
    amp = OpAmp(gbw=100e6, dc_gain=1e5, input_capacitance=2e-12, output_swing=2.0)
    net = EquivalentCircuit(capacitance=10e-12, shunt_resistance=1e9)
    m = Tia(amp, rf=1e5, cf=0.5e-12).analyze(net)
    assert isinstance(m, TiaMetrics) and isinstance(m.bandwidth, float) and m.stable is True
    # DC transimpedance with finite gain and shunt: Rf / (1 + (1 + Rf/Rsh)/A0) (nodal analysis,
    # common practice); max photocurrent = swing / |Zt(0)|
    assert m.dc_transimpedance == pytest.approx(1e5 / (1 + (1 + 1e5 / 1e9) / 1e5), rel=1e-12)
    assert m.max_photocurrent == pytest.approx(2.0 / m.dc_transimpedance, rel=1e-12)
    assert m.max_step_photocurrent == pytest.approx(m.max_photocurrent / (1 + m.overshoot))
    frame = m.to_frame()
    assert list(frame.columns) == list(FIGURE_UNITS) and len(frame) == 1
    assert "bandwidth" in m._repr_html_() and set(m.to_dict()) == set(FIGURE_UNITS)
    arr = Tia(amp, rf=1e5, cf=0.5e-12).analyze(
        EquivalentCircuit(capacitance=np.array([5e-12, 10e-12, 20e-12])))
    assert arr.bandwidth.shape == (3,) and len(arr.to_frame()) == 3


@pytest.mark.parametrize("kwargs, name", [
    (dict(rf=-1.0), "rf"), (dict(cd=0.0), "cd"), (dict(cf=-1e-12), "cf"),
    (dict(gbw=np.nan), "gbw"), (dict(poles=(0.0,)), "poles"), (dict(rsh=-5.0), "rsh"),
    (dict(rs=-1.0), "rs"), (dict(dc_gain=0.0), "dc_gain"), (dict(cin=-1e-12), "cin"),
])
def test_bad_input_names_the_parameter(kwargs, name):
    with pytest.raises(DesignError, match=name) as info:
        tia_figures(**(DESIGNS["plain"] | kwargs))
    assert info.value.parameter == name
    assert "valid range" in str(info.value)


def test_bad_settling_tolerance_and_swing():
    with pytest.raises(DesignError, match="settling_tolerance"):
        tia_figures(**DESIGNS["plain"], settling_tolerance=0.7)
    with pytest.raises(DesignError, match="output_swing"):
        tia_figures(**DESIGNS["plain"], output_swing=0.0)


_base = dict(gbw=100e6, dc_gain=1e5, poles=(), rs=0.0, cin=2e-12)


@settings(max_examples=30, deadline=None)
@given(rf=st.floats(1e3, 1e6), cf=st.floats(1e-14, 5e-12), cd=st.floats(0.1e-12, 100e-12),
       factor=st.floats(1.01, 5.0), rsh=st.sampled_from([np.inf, 1e6, 1e9]),
       dc_gain=st.sampled_from([1e5, 1e7]))
def test_more_diode_capacitance_never_raises_phase_margin(rf, cf, cd, factor, rsh, dc_gain):
    # Physical invariant of the two-pole loop (dominant-pole amplifier, Rs = 0; Graeme 1996,
    # ch. 3): more input capacitance raises the noise gain 1 + Yin/Yf and the lag of beta, so
    # for a fixed Cf the phase margin cannot improve. Exact for an integrator amplifier; a low
    # dc_gain (dominant pole near the crossover) or an extra amplifier pole can break it
    # (see the next test), hence dc_gain >= 1e5 and no extra pole here.
    p = _base | dict(rf=rf, cf=cf, rsh=rsh, dc_gain=dc_gain)
    pm = loop_margins(**p, cd=np.array([cd, cd * factor]))["phase_margin"]
    assert pm[1] <= pm[0] + 1e-9


def test_extra_pole_lets_capacitance_raise_phase_margin():
    # Counter-example to the invariant above, confirmed with python-control: with a second
    # amplifier pole at 100 MHz and a heavily compensated loop (Cf = 5 pF), more diode
    # capacitance lowers the crossover away from that pole and the margin improves.
    p = dict(gbw=100e6, dc_gain=1e5, poles=(100e6,), rf=1.2e5, cf=5e-12, rsh=np.inf, rs=0.0,
             cin=2e-12)
    pms = []
    for cd in (1e-12, 30e-12):
        pm_control = control.stability_margins(_loop_tf(p | dict(cd=cd))[0])[1]
        pm_ours = float(loop_margins(**p, cd=cd)["phase_margin"])
        assert pm_ours == pytest.approx(pm_control, abs=0.01)
        pms.append(pm_ours)
    assert pms[1] > pms[0] + 5.0


@settings(max_examples=30, deadline=None)
@given(rf=st.floats(1e3, 1e6), cd=st.floats(0.5e-12, 50e-12), factor=st.floats(1.01, 3.0),
       scale=st.floats(1.0, 20.0))
def test_more_feedback_capacitance_never_widens_overdamped_response(rf, cd, factor, scale):
    # Physical invariant: once the loop is overdamped (Q <= 1/2), more Cf only lowers the
    # feedback pole 1/(2 pi Rf Cf) and the closed-loop bandwidth.
    from photorx.circuit.feedback_design import design_feedback_capacitor

    amp = OpAmp(gbw=100e6, dc_gain=1e5, input_capacitance=2e-12)
    net = EquivalentCircuit(capacitance=cd)
    cf0 = design_feedback_capacitor(amp, rf, net, target="critical").cf * scale
    f = tia_figures(**(_base | dict(rf=rf, cd=cd, rsh=np.inf)), cf=np.array([cf0, cf0 * factor]))
    assert np.all(f["q"] <= 0.5 + 1e-9)
    assert f["bandwidth"][1] <= f["bandwidth"][0] * (1 + 1e-9)


@pytest.mark.parametrize("rf", [1e8, 1e9, 1e10])   # Q ~ 790, 2500, 7900
def test_step_figures_of_very_high_q_loops(rf):
    # Cf = 0, Rs = 0, Rsh = inf, no extra pole: the loop is exactly second order, so the step
    # response has the closed form y = 1 - exp(-z wn t)(cos wd t + z/sqrt(1-z^2) sin wd t),
    # overshoot exp(-pi z/sqrt(1-z^2)) (Ogata, Modern Control Engineering, 5th ed., 2010,
    # sec. 5-3). Rise time: 10 % and 90 % crossings of that expression in the first half
    # period (scipy.optimize.brentq), rtol 1e-6; overshoot rtol 1e-9. Settling: the envelope
    # estimate minus at most half a period. Before the fix the 4096-sample cap left < 1 sample
    # per period: the rise time came out 13x too long and the overshoot 0.97 instead of 0.998.
    from scipy.optimize import brentq

    p = dict(gbw=1e8, dc_gain=1e9, poles=(), rf=rf, cf=0.0, cd=10e-12, rsh=np.inf, rs=0.0,
             cin=0.0)
    f = tia_figures(**p)
    pole = closed_loop_poles(**p)[0]
    wn, z = abs(pole), -pole.real / abs(pole)
    wd = wn * np.sqrt(1 - z * z)
    assert f["q"] == pytest.approx(1 / (2 * z), rel=1e-9) and f["q"] > 500

    def y(t):
        return 1 - np.exp(-z * wn * t) * (np.cos(wd * t) + z / np.sqrt(1 - z * z) * np.sin(wd * t))

    half = np.pi / wd  # the first peak
    rise = brentq(lambda t: y(t) - 0.9, 0, half, xtol=1e-20) - brentq(lambda t: y(t) - 0.1, 0, half,
                                                                       xtol=1e-20)
    assert f["rise_time"] == pytest.approx(rise, rel=1e-6)
    assert f["overshoot"] == pytest.approx(np.exp(-np.pi * z / np.sqrt(1 - z * z)), rel=1e-9)
    t_env = np.log(0.01 * np.sqrt(1 - z * z)) / (-z * wn)
    assert t_env - half <= f["settling_time"] <= t_env + 1e-12 * t_env
