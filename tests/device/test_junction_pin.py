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


def test_built_in_potential_is_that_of_the_p_plus_i_junction():
    # Below punch-through the i layer is depleted by the p+/n- barrier, Vbi = (kT/q)
    # ln(Na Ni / ni^2) (Sze & Ng 3rd ed. ch. 2, Eq. 3, with scipy.constants; rtol 1e-7, the
    # exact i-layer electron density differs from Ni by (ni/Ni)^2 ~ 1e-6);
    # the contact-to-contact (kT/q) ln(Na Nd / ni^2) exceeds it by the n-/n+ high-low step
    # (kT/q) ln(Nd/Ni) (potentials in series add; rtol 1e-9).
    j = _pin(ni=1e13 * per_cm3)
    vt = sc.k * 300.0 / sc.e
    ni = SI.ni_300
    ref = vt * np.log(1e19 * per_cm3 * 1e13 * per_cm3 / ni**2)
    assert j.built_in_potential() == pytest.approx(ref, rel=1e-7)
    contact = vt * np.log((1e19 * per_cm3) ** 2 / ni**2)
    assert j.built_in_potential() + vt * np.log(1e19 / 1e13) == pytest.approx(contact, rel=1e-7)
    # intrinsic i layer (Ni << ni): the electron density there is ni, Vbi = (kT/q) ln(Na/ni)
    # (Sze & Ng ch. 1, n0 = Nd/2 + sqrt(Nd^2/4 + ni^2)); rtol 1e-6
    ji = _pin(ni=1e4 * per_cm3)
    assert ji.built_in_potential() == pytest.approx(vt * np.log(1e19 * per_cm3 / ni), rel=1e-6)


def test_zero_bias_capacitance_of_partly_depleted_pin():
    # A thick, lightly doped i layer not depleted at 0 V is a one-sided p+/n- junction:
    # C/A = sqrt(q eps Ni / (2 Vbi)) with Vbi of the p+/n- junction (Sze & Ng 3rd ed. ch. 2,
    # Eqs. 13 and 22, scipy.constants); rtol 1e-5 (the Ni/Na term).
    j = _pin(d=100 * um, ni=1e13 * per_cm3)
    assert j.punch_through_voltage() > 0
    vt = sc.k * 300.0 / sc.e
    vbi = vt * np.log(1e19 * 1e13 * per_cm3**2 / SI.ni_300**2)
    ref = 1e-6 * np.sqrt(sc.e * SI.permittivity * 1e13 * per_cm3 / (2 * vbi))
    assert j.capacitance(0.0) == pytest.approx(ref, rel=1e-5)


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


def _universal_k(mat):
    # Sze & Ng 3rd ed. ch. 2, universal law for one-sided abrupt junctions, written out here:
    # VB = 60 (Eg/1.1)^1.5 (N/1e16 cm^-3)^-3/4 V and Ec^2 = 2 q N VB / eps, so Ec^8/N = K
    n = 1e16 * per_cm3
    vb = 60.0 * (mat.band_gap(300.0) / 1.1) ** 1.5
    return (2 * sc.e * n * vb / mat.permittivity) ** 4 / n


@pytest.mark.parametrize("d, nid", [(10 * um, 1e14), (1 * um, 1e15), (0.2 * um, 1e13),
                                    (40 * um, 5e12), (3 * um, 3e15)])
def test_breakdown_satisfies_ionisation_integral(d, nid):
    # Breakdown condition int alpha dx = 1 (Sze & Ng 3rd ed. ch. 2, ionisation integral) with
    # Fulop's power law alpha = C E^7 (Solid-State Electronics 10, 39 (1967), from memory),
    # C fixed by the universal law (alpha = C E^7 reproduces Ec ~ N^1/8 exactly). The field
    # at breakdown is read from photorx's peak_field and integrated over the i layer with
    # scipy.integrate.quad; rtol 1e-6 on the integral.
    from scipy.integrate import quad

    j = _pin(d=d, ni=nid * per_cm3)
    assert j.punch_through_voltage() < j.breakdown_voltage()  # punched through at breakdown
    eps, n_i = SI.permittivity, nid * per_cm3
    c7 = 8 * sc.e / (eps * _universal_k(SI))
    e0 = j.peak_field(j.breakdown_voltage())
    integral = quad(lambda x: c7 * (e0 - sc.e * n_i * x / eps) ** 7, 0.0, d, epsrel=1e-12)[0]
    assert integral == pytest.approx(1.0, rel=1e-6)


def test_breakdown_against_punch_through_diode_expression():
    # Sze & Ng 3rd ed. ch. 2 (punch-through diodes): VB' = Ec W - q N W^2 / (2 eps) with Ec of
    # the background doping. Ec(N) is reached only by a field that falls to zero within the
    # layer, so for a punched-through layer the ionisation integral needs a higher peak
    # field: the textbook expression is a lower bound, within 20 % here (10 um, 1e14 cm^-3).
    j = _pin(d=10 * um, ni=1e14 * per_cm3)
    ec = SI.critical_field(1e14 * per_cm3)
    w = 10 * um
    vb = ec * w - sc.e * 1e14 * per_cm3 * w**2 / (2 * SI.permittivity)
    assert vb < j.breakdown_voltage() + j.built_in_potential() < 1.2 * vb
    assert j.peak_field(0.999 * j.breakdown_voltage()) < j.peak_field(j.breakdown_voltage())


def test_breakdown_of_thick_layer_is_the_universal_law():
    # i layer thicker than the one-sided depletion at breakdown (not punched through): the
    # universal law of Sze & Ng 3rd ed. ch. 2 for N = 1e15 cm^-3 (with Eg(300 K)), minus Vbi;
    # rtol 1e-6 (same law, independent arithmetic).
    j = _pin(d=500 * um, ni=1e15 * per_cm3)
    vb = 60.0 * (SI.band_gap(300.0) / 1.1) ** 1.5 * (1e15 / 1e16) ** -0.75
    assert j.punch_through_voltage() > j.breakdown_voltage()
    assert j.breakdown_voltage() + j.built_in_potential() == pytest.approx(
        vb * (1 + 1e15 / 1e19), rel=1e-6)  # (1 + Ni/Na): the p+ side's share of the potential


def test_thin_lightly_doped_i_layer_usable_at_zero_bias():
    # A 0.1-1 um p-i-n (high-speed photodiodes) must accept zero and modest reverse bias; the
    # old background-doping critical field made its breakdown estimate negative. Thinner
    # layers need a higher field to break down (fact of the trade: dead space aside, the
    # ionisation integral over a shorter path), and VB grows with thickness.
    vb = []
    for d in (0.1 * um, 0.3 * um, 1 * um, 3 * um):
        j = _pin(d=d, ni=1e13 * per_cm3)
        vb.append(j.breakdown_voltage())
        assert np.isfinite(j.capacitance(np.array([0.0, 0.5 * vb[-1]]))).all()
        assert j.peak_field(vb[-1]) > SI.critical_field(1e13 * per_cm3)
    assert np.all(np.diff(vb) > 0) and vb[0] > 1.0


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
