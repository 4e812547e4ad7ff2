"""Tests of the parametric junction, its fit, and diffusion capacitance.

Outside checks: ngspice's junction-diode capacitance model (Debian package ngspice, AC
analysis), the exact C-V form of the abrupt (m = 1/2) and graded (m = 1/3) junctions
(Sze and Ng, Physics of Semiconductor Devices, 3rd ed. 2007, ch. 2), and the Shockley
diode equation with charge control, Q = tau I (same book, ch. 2).
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest
import scipy.constants as sc
from hypothesis import given, settings
from hypothesis import strategies as st

import photorx as prx
from photorx.errors import DesignError
from photorx.units import mm, per_cm3, per_cm4

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # tests/ holds the ngspice runner
from spice import run_ngspice  # noqa: E402

SI = prx.material("Si")


# -- the form itself -------------------------------------------------------------------------------
def test_reverse_bias_power_law_and_fixed_capacitance():
    pj = prx.ParametricJunction(cj0=2e-12, vj=0.8, m=0.4)
    assert pj.capacitance(0.0) == pytest.approx(2e-12, rel=1e-15)
    # C = Cj0 (1 + V/Vj)^-m written out (the form's definition, Nagel 1975), rtol 1e-14
    v = np.array([0.5, 3.0, 20.0])
    np.testing.assert_allclose(pj.capacitance(v), 2e-12 * (1 + v / 0.8) ** -0.4, rtol=1e-14)
    fixed = prx.ParametricJunction(cj0=1e-12, vj=0.7, m=0.0)
    np.testing.assert_allclose(fixed.capacitance(np.array([-2.0, -0.3, 0.0, 5.0])), 1e-12,
                               rtol=1e-14)
    np.testing.assert_allclose(fixed.charge(np.array([-2.0, 5.0])), 1e-12 * np.array([-2.0, 5.0]),
                               rtol=1e-14)


@settings(max_examples=40, deadline=None)
@given(cj0=st.floats(1e-14, 1e-9), vj=st.floats(0.2, 2.0), m=st.floats(0.0, 1.5),
       fc=st.floats(0.0, 0.9))
def test_form_is_continuous_and_dq_dv_is_c(cj0, vj, m, fc):
    pj = prx.ParametricJunction(cj0=cj0, vj=vj, m=m, fc=fc)
    vb = -fc * vj
    # C and dC/dV continuous at the linearisation point (the tangent extension), rtol 1e-6
    e = 1e-9 * vj
    assert pj.capacitance(vb - e) == pytest.approx(pj.capacitance(vb + e), rel=1e-6)
    e = 1e-4 * vj  # slopes one-sided on each side of the joint, rtol 1e-2 (curvature O(e))
    slope_lo = (pj.capacitance(vb - e) - pj.capacitance(vb - 3 * e)) / (2 * e)
    slope_hi = (pj.capacitance(vb + 3 * e) - pj.capacitance(vb + e)) / (2 * e)
    assert slope_lo == pytest.approx(slope_hi, rel=1e-2, abs=1e-9 * cj0 / vj)
    # dQ/dV = C everywhere, including deep forward bias, rtol 1e-6
    v = np.linspace(-3 * vj, 10 * vj, 41)
    h = 1e-4 * vj
    dq = (pj.charge(v + h) - pj.charge(v - h)) / (2 * h)
    np.testing.assert_allclose(dq, pj.capacitance(v), rtol=1e-6)
    assert np.all(np.isfinite(pj.capacitance(v)))


def test_matches_ngspice_junction_capacitance():
    # ngspice diode model (CJO, VJ, M, FC; negligible IS, no transit time): C from the AC
    # admittance Im(Y)/omega at each DC bias, in reverse and forward bias; rtol 1e-4
    cj0, vj, m, fc = 2e-12, 0.75, 0.45, 0.5
    biases = [10.0, 3.0, 0.5, 0.0, -0.2, -0.5, -0.7]  # reverse bias; forward beyond fc*vj
    lines = [f".model dm D(IS=1e-30 CJO={cj0} VJ={vj} M={m} FC={fc} RS=0 N=1 TT=0)"]
    for i, v in enumerate(biases):
        lines += [f"V{i} a{i} 0 DC {-v} AC 1", f"D{i} a{i} 0 dm"]
    f = 1e6  # three points: the runner cannot parse a one- or two-point complex print
    res = run_ngspice("\n".join(lines), f"ac lin 3 {f} {2 * f}",
                      [f"i(v{i})" for i in range(len(biases))])
    c_spice = np.array([abs(np.imag(res[f"i(v{i})"][0])) / (2 * np.pi * f)
                        for i in range(len(biases))])
    pj = prx.ParametricJunction(cj0=cj0, vj=vj, m=m, fc=fc)
    np.testing.assert_allclose(pj.capacitance(np.array(biases)), c_spice, rtol=1e-4)


# -- fitting ---------------------------------------------------------------------------------------
@settings(max_examples=25, deadline=None)
@given(cj0=st.floats(1e-13, 1e-10), vj=st.floats(0.3, 1.5), m=st.floats(0.2, 0.9))
def test_fit_recovers_known_parameters(cj0, vj, m):
    truth = prx.ParametricJunction(cj0=cj0, vj=vj, m=m)
    fit, residual = prx.fit_parametric_junction(truth, bias_range=(0.0, 30.0))
    assert fit.cj0 == pytest.approx(cj0, rel=1e-5)
    assert fit.vj == pytest.approx(vj, rel=1e-4)
    assert fit.m == pytest.approx(m, rel=1e-4)
    assert residual < 1e-8


def test_fit_to_abrupt_and_graded_gives_textbook_exponents():
    # depletion approximation: C = C(0) (1 + V/Vbi)^-1/2 (abrupt) and ^-1/3 (graded)
    # (Sze & Ng ch. 2, Eqs. 22 and 34): the fit must give m and Vj = Vbi, rtol 1e-5
    ab = prx.AbruptJunction(SI, na=1e19 * per_cm3, nd=1e15 * per_cm3, area=(1 * mm) ** 2)
    gr = prx.LinearlyGradedJunction(SI, gradient=1e20 * per_cm4, area=(1 * mm) ** 2)
    for j, m in ((ab, 0.5), (gr, 1.0 / 3.0)):
        res = prx.fit_parametric_junction(j, bias_range=(0.0, 20.0))
        assert res.junction.m == pytest.approx(m, rel=1e-5)
        assert res.junction.vj == pytest.approx(j.built_in_potential(), rel=1e-5)
        assert res.junction.cj0 == pytest.approx(j.capacitance(0.0), rel=1e-5)
        assert res.residual < 1e-8


def test_fit_to_noisy_measurements_and_residual_reported():
    rng = np.random.default_rng(1)
    v = np.linspace(0.0, 15.0, 30)
    truth = prx.ParametricJunction(cj0=5e-12, vj=0.9, m=0.5)
    c = truth.capacitance(v) * (1 + 0.002 * rng.standard_normal(v.size))
    fit, residual = prx.fit_parametric_junction(bias=v, capacitance=c)
    assert fit.m == pytest.approx(0.5, rel=0.05)
    assert fit.cj0 == pytest.approx(5e-12, rel=0.01)
    # residual is the rms relative error of the fitted curve at the points
    rel = fit.capacitance(v) / c - 1
    assert residual == pytest.approx(np.sqrt(np.mean(rel**2)), rel=1e-12)
    assert 0.0005 < residual < 0.005


def test_fit_to_pin_reports_poor_fit():
    # a p-i-n that punches through is not of the power-law form: the residual says so
    pin = prx.PinJunction(SI, i_thickness=20e-6, i_doping=1e13 * per_cm3, area=1e-6,
                          p_doping=1e19 * per_cm3, n_doping=1e19 * per_cm3)
    _, residual = prx.fit_parametric_junction(pin, bias_range=(0.0, 20.0))
    assert residual > 0.01


def test_fit_bad_input():
    with pytest.raises(DesignError, match="junction"):
        prx.fit_parametric_junction()
    with pytest.raises(DesignError, match="capacitance"):
        prx.fit_parametric_junction(bias=[0, 1, 2], capacitance=[1e-12, -1e-12, 1e-12])
    with pytest.raises(DesignError, match="bias"):
        prx.fit_parametric_junction(bias=[0, 1], capacitance=[1e-12, 0.9e-12])
    with pytest.raises(DesignError, match="capacitance"):
        prx.fit_parametric_junction(bias=[0, 1, 2], capacitance=[1e-12, 0.9e-12])


@pytest.mark.parametrize("kw, name", [
    (dict(cj0=0.0), "cj0"), (dict(vj=-0.1), "vj"), (dict(m=-0.1), "m"), (dict(m=3.0), "m"),
    (dict(fc=1.0), "fc"), (dict(cj0=np.nan), "cj0"),
])
def test_parametric_bad_input_names_parameter(kw, name):
    args = dict(cj0=1e-12, vj=0.7, m=0.5)
    args.update(kw)
    with pytest.raises(DesignError, match=name):
        prx.ParametricJunction(**args)
    with pytest.raises(DesignError, match="v_r"):
        prx.ParametricJunction(1e-12, 0.7, 0.5).capacitance(np.nan)


# -- diffusion capacitance -------------------------------------------------------------------------
def test_diffusion_capacitance_from_charge_control():
    # Shockley diode I = Is exp(V / n V_T) with stored charge Q = tau I (Sze & Ng ch. 2):
    # C_d = dQ/dV numerically; rtol 1e-6
    tau, n, t = 1e-6, 1.3, 320.0
    vt = sc.k * t / sc.e
    i_s = 1e-14
    v = np.array([0.4, 0.55, 0.65])
    h = 1e-6
    dq = tau * i_s * (np.exp((v + h) / (n * vt)) - np.exp((v - h) / (n * vt))) / (2 * h)
    i_f = i_s * np.exp(v / (n * vt))
    np.testing.assert_allclose(prx.diffusion_capacitance(i_f, tau, n, t), dq, rtol=1e-6)
    assert prx.diffusion_capacitance(0.0, tau) == 0.0
    assert isinstance(prx.diffusion_capacitance(1e-3, 1e-9), float)


def test_diffusion_exceeds_junction_capacitance_in_forward_bias():
    # fact of the trade (Sze & Ng ch. 2): at moderate forward current the diffusion
    # capacitance dominates. 1 mA, tau = 1 us in a 1 mm^2 Si diode near 0.6 V forward.
    j = prx.AbruptJunction(SI, na=1e19 * per_cm3, nd=1e15 * per_cm3, area=(1 * mm) ** 2)
    cj = j.capacitance(-0.6)
    cd = prx.diffusion_capacitance(1e-3, 1e-6)
    assert cd > 10 * cj
    assert j.total_capacitance(-0.6, i_forward=1e-3, transit_time=1e-6) == pytest.approx(
        cj + cd, rel=1e-14)
    # reverse bias, no forward current: total = junction capacitance
    assert j.total_capacitance(5.0) == j.capacitance(5.0)
    pj = prx.ParametricJunction(cj0=j.capacitance(0.0), vj=j.built_in_potential(), m=0.5)
    assert pj.total_capacitance(-0.3, 1e-3, 1e-6) == pytest.approx(pj.capacitance(-0.3) + cd,
                                                                   rel=1e-14)


@pytest.mark.parametrize("args, name", [
    ((-1e-3, 1e-6), "i_forward"), ((1e-3, -1e-6), "transit_time"),
    ((1e-3, 1e-6, 0.5), "ideality"), ((1e-3, 1e-6, 1.0, 1000.0), "temperature"),
])
def test_diffusion_bad_input(args, name):
    with pytest.raises(DesignError, match=name):
        prx.diffusion_capacitance(*args)
