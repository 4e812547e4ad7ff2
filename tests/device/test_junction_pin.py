"""Tests of the p-i-n junction with punch-through (photorx.device.junction_pin).

Outside checks: the one-sided abrupt-junction width at punch-through and the fully
depleted parallel-plate capacitance eps A / d (Sze and Ng, Physics of Semiconductor
Devices, 3rd ed. 2007, ch. 2 and ch. 13), Sze and Ng's punch-through-diode breakdown
expression, and facts of the trade as hypothesis properties.
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.constants as sc
from hypothesis import given, settings
from hypothesis import strategies as st

import photorx as prx
from photorx.errors import DesignError
from photorx.units import per_cm3, um

SI = prx.material("Si")


def _pin(mat=SI, d=10 * um, ni=1e13 * per_cm3, p=1e19 * per_cm3, n=1e19 * per_cm3, area=1e-6,
         temperature=300.0):
    return prx.PinJunction(mat, i_thickness=d, i_doping=ni, area=area, p_doping=p, n_doping=n,
                           temperature=temperature)


def test_punch_through_voltage_matches_one_sided_width():
    # at punch-through the one-sided width sqrt(2 eps V / (q Ni)) equals d (Sze & Ng ch. 2,
    # Eq. 13 with W = d): Vbi + Vpt = q Ni d^2 / (2 eps); rtol 1e-5 (Ni/Na = 1e-6 correction)
    j = _pin()
    v_total = sc.e * 1e13 * per_cm3 * (10 * um) ** 2 / (2 * SI.permittivity)
    assert j.punch_through_voltage() + j.built_in_potential() == pytest.approx(v_total, rel=1e-5)
    assert j.depletion_width(j.punch_through_voltage()) == pytest.approx(10 * um, rel=1e-5)


def test_fully_depleted_capacitance_is_parallel_plate():
    # fully depleted p-i-n: C = eps A / d (Sze & Ng ch. 13, p-i-n photodiode), rtol 1 % with
    # 1e19 cm^-3 contacts up to 50 V
    j = _pin()
    v = np.linspace(j.punch_through_voltage() + 0.1, 50.0, 20)
    np.testing.assert_allclose(j.capacitance(v), SI.permittivity * 1e-6 / (10 * um), rtol=0.01)
    # nearly uniform field (common practice): E_peak = (Vbi + V)/d + q Ni d / (2 eps), rtol 1 %
    e_ref = (j.built_in_potential() + v) / (10 * um) + sc.e * 1e13 * per_cm3 * 10 * um / (
        2 * SI.permittivity)
    np.testing.assert_allclose(j.peak_field(v), e_ref, rtol=0.01)


def test_continuity_across_punch_through():
    j = _pin(ni=1e14 * per_cm3, p=1e17 * per_cm3, n=1e17 * per_cm3)
    vpt = j.punch_through_voltage()
    eps = 1e-9
    for f in (j.capacitance, j.depletion_width, j.charge, j.peak_field):
        lo, hi = f(vpt - eps), f(vpt + eps)
        assert hi == pytest.approx(lo, rel=1e-6)


def test_below_punch_through_progressive_depletion():
    # below punch-through x_n = sqrt(2 eps (Vbi+V) / (q Ni (1 + Ni/Na))) (one-sided abrupt
    # junction, Sze & Ng ch. 2, Eq. 12), rtol 1e-12
    j = _pin(d=50 * um, ni=1e14 * per_cm3)
    v = np.array([0.0, 1.0, 5.0, 0.9 * j.punch_through_voltage()])
    x_p, x_n = j.depletion_edges(v)
    na, nid = 1e19 * per_cm3, 1e14 * per_cm3
    ref = np.sqrt(2 * SI.permittivity * (j.built_in_potential() + v)
                  / (sc.e * nid * (1 + nid / na)))
    np.testing.assert_allclose(x_n, ref, rtol=1e-12)
    assert np.all(x_n < 50 * um)
    np.testing.assert_allclose(na * x_p, nid * x_n, rtol=1e-12)  # charge neutrality


def test_breakdown_matches_punch_through_diode_expression():
    # punch-through diode: VB' = Ec W - q N W^2 / (2 eps) (Sze & Ng 3rd ed. ch. 2, breakdown of
    # punch-through diodes), total potential with the critical field of the i-layer doping;
    # photorx adds the contact depletion and subtracts Vbi: rtol 2 %
    j = _pin(d=10 * um, ni=1e14 * per_cm3)
    ec = SI.critical_field(1e14 * per_cm3)
    w = 10 * um
    vb = ec * w - sc.e * 1e14 * per_cm3 * w**2 / (2 * SI.permittivity)
    assert j.breakdown_voltage() == pytest.approx(vb, rel=0.02)
    assert j.peak_field(0.999 * j.breakdown_voltage()) < ec


# -- properties -----------------------------------------------------------------------------------
exp = st.floats
pins = st.builds(
    lambda name, d, ni, p, n: _pin(prx.material(name), d * um, 10**ni * per_cm3, 10**p * per_cm3,
                                   10**n * per_cm3),
    name=st.sampled_from(["Si", "GaAs", "InP", "InGaAs"]), d=exp(3.0, 50.0), ni=exp(12.5, 15.5),
    p=exp(18.0, 19.5), n=exp(18.0, 19.5))


@settings(max_examples=40, deadline=None)
@given(j=pins)
def test_pin_invariants(j):
    vbi, vb = j.built_in_potential(), j.breakdown_voltage()
    v = np.linspace(-0.8 * vbi, min(0.99 * vb, 100.0), 80)
    c = j.capacitance(v)
    w = j.depletion_width(v)
    assert np.all(np.isfinite(c)) and np.all(c > 0)
    assert np.all(np.diff(c) < 0)  # C falls with reverse bias (common practice)
    np.testing.assert_allclose(c * w, j.material.permittivity * j.area, rtol=1e-13)
    h = 1e-5 * (vbi + v)
    dq = (j.charge(v + h) - j.charge(v - h)) / (2 * h)
    np.testing.assert_allclose(dq, c, rtol=1e-4)  # dQ/dV = C (kink at punch-through: rtol 1e-4)


@settings(max_examples=40, deadline=None)
@given(j=pins)
def test_pin_flat_above_punch_through(j):
    # fact of the trade: above punch-through the p-i-n capacitance is flat within a few
    # percent (Sze & Ng ch. 13): here within 5 % over 10 V with contacts >= 1e18 cm^-3
    v0 = max(j.punch_through_voltage(), 0.0)
    v1 = v0 + 10.0
    if v1 > 0.99 * j.breakdown_voltage():
        return
    assert j.capacitance(v1) / j.capacitance(v0) > 0.95


def test_scalar_array_and_broadcast():
    j = _pin()
    assert isinstance(j.capacitance(1.0), float)
    x_p, x_n = j.depletion_edges(1.0)
    assert isinstance(x_p, float) and isinstance(x_n, float)
    d = np.array([5.0, 10.0, 20.0]) * um
    jj = _pin(d=d[:, None])
    c = jj.capacitance(np.linspace(0, 20, 4))
    assert c.shape == (3, 4)
    np.testing.assert_allclose(c[1], j.capacitance(np.linspace(0, 20, 4)), rtol=1e-14)


@pytest.mark.parametrize("kw, name", [
    (dict(d=0.0), "i_thickness"), (dict(d=-1e-6), "i_thickness"), (dict(ni=0.0), "i_doping"),
    (dict(ni=2e19 * per_cm3), "i_doping"), (dict(p=-1.0), "p_doping"), (dict(n=1e3), "n_doping"),
    (dict(area=0.0), "area"), (dict(temperature=40.0), "temperature"),
])
def test_bad_design_names_parameter(kw, name):
    with pytest.raises(DesignError, match=name):
        _pin(**kw)


def test_bias_limits():
    j = _pin()
    with pytest.raises(DesignError, match="v_r"):
        j.capacitance(-j.built_in_potential())
    with pytest.raises(DesignError, match="v_r"):
        j.capacitance(1.01 * j.breakdown_voltage())
    with pytest.raises(DesignError, match="v_r"):
        j.depletion_edges(np.array([0.0, np.inf]))
