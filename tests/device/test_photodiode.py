"""Checks of photorx.device.photodiode.Photodiode and the demo photodiodes."""

import dataclasses

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants as sc

import photorx as prx
from photorx.device import speed
from photorx.device.demo import demo_ingaas_pin, demo_silicon_pin
from photorx.device.photodiode import Photodiode
from photorx.errors import DesignError
from photorx.units import mm, per_cm3, pF, um

SETTINGS = settings(max_examples=20, deadline=None)


@pytest.fixture(scope="module")
def si_abrupt():
    j = prx.AbruptJunction(prx.material("Si"), na=1e19 * per_cm3, nd=1e14 * per_cm3,
                           area=(1 * mm) ** 2)
    return Photodiode(junction=j)


@pytest.fixture(scope="module")
def si_pin():
    return demo_silicon_pin()


@pytest.fixture(scope="module")
def ingaas_pin():
    return demo_ingaas_pin()


# --- construction -------------------------------------------------------------------
def test_junction_alone_works_for_every_physical_junction():
    si = prx.material("Si")
    junctions = [
        prx.AbruptJunction(si, na=1e19 * per_cm3, nd=1e15 * per_cm3, area=(1 * mm) ** 2),
        prx.LinearlyGradedJunction(si, gradient=1e20 * 1e8, area=(0.5 * mm) ** 2),
        prx.PinJunction(si, i_thickness=20 * um, i_doping=1e13 * per_cm3, area=(1 * mm) ** 2,
                        p_doping=1e19 * per_cm3, n_doping=1e19 * per_cm3),
    ]
    for j in junctions:
        pd = Photodiode(junction=j)
        assert pd.capacitance(5.0) > 0
        assert 0 < pd.responsivity(850e-9, 5.0) < 850e-9 / 1.23984e-6
        assert pd.dark_current(5.0) > 0
        assert pd.shunt_resistance(0.0) > 0
        assert 0 < pd.transit_bandwidth(5.0) < np.inf


def test_arrays_broadcast(si_pin):
    v = np.array([0.0, 2.0, 10.0])[:, None]
    wl = np.array([450e-9, 650e-9, 850e-9, 950e-9])
    assert si_pin.responsivity(wl, v).shape == (3, 4)
    assert si_pin.quantum_efficiency(wl, v).shape == (3, 4)
    assert si_pin.capacitance(v).shape == (3, 1)
    assert si_pin.dark_current(v[:, 0]).shape == (3,)
    f = np.logspace(5, 9, 5)
    assert si_pin.intrinsic_response(f, v, 850e-9).shape == (3, 5)
    assert si_pin.transit_bandwidth(v[:, 0], 850e-9).shape == (3,)
    assert isinstance(si_pin.responsivity(850e-9, 5.0), float)


def test_responsivity_is_qe_times_lambda_over_1p23984(si_pin):
    # R = eta q lambda / (h c) (scipy.constants); rtol 1e-12.
    wl = np.array([500e-9, 850e-9, 1000e-9])
    eta = si_pin.quantum_efficiency(wl, 5.0)
    np.testing.assert_allclose(si_pin.responsivity(wl, 5.0), eta * sc.e * wl / (sc.h * sc.c),
                               rtol=1e-12)


@SETTINGS
@given(st.floats(0.0, 30.0), st.floats(0.05, 2.0))
def test_more_bias_more_red_response(v1, frac):
    # Property (Sze and Ng, ch. 13; the bias trade-off of the design notes): the depletion
    # layer widens with reverse bias, so the long-wavelength quantum efficiency rises.
    j = prx.AbruptJunction(prx.material("Si"), na=1e19 * per_cm3, nd=1e14 * per_cm3,
                           area=(1 * mm) ** 2)
    pd = Photodiode(junction=j, absorber_thickness=300 * um, lifetime=1e-7)
    v2 = v1 + frac * (1 + v1)
    assert pd.quantum_efficiency(1000e-9, v2) > pd.quantum_efficiency(1000e-9, v1)


def test_response_fades_beyond_the_cutoff(ingaas_pin, si_pin):
    # Common practice: silicon stops responding beyond ~1.1 um, InGaAs beyond ~1.7 um; the
    # response fades through the sub-gap tail instead of dropping to 0 at Eg (issue 13).
    r_si = si_pin.responsivity(np.array([1100e-9, 1110e-9, 1150e-9, 1500e-9]), 5.0)
    assert r_si[0] > r_si[1] > r_si[2] > 0 and r_si[3] == 0.0
    assert r_si[1] > 0.5 * r_si[0]  # continuous through the gap (1.103 um)
    assert ingaas_pin.responsivity(1800e-9, 5.0) < 0.01
    assert ingaas_pin.responsivity(2000e-9, 5.0) == 0.0
    # 1650 nm sits just above the 0.74 eV gap: alpha(Adachi 1989) = 2.3e3 cm^-1 there
    assert ingaas_pin.responsivity(1650e-9, 5.0) > 0.4


def test_wavelength_outside_table_names_range(si_pin):
    with pytest.raises(DesignError, match="250 to 1450 nm") as err:
        si_pin.responsivity(240e-9, 5.0)
    assert err.value.parameter == "wavelength"


def test_demo_responsivities_common_practice(si_pin, ingaas_pin):
    # Common practice: silicon p-i-n diodes give about 0.5-0.65 A/W at 850 nm; InGaAs p-i-n
    # diodes about 0.8-1.0 A/W at 1310 and 1550 nm.
    assert 0.5 <= si_pin.responsivity(850e-9, 10.0) <= 0.685
    for wl in (1310e-9, 1550e-9):
        assert 0.8 <= ingaas_pin.responsivity(wl, 5.0) <= 1.0


def test_photovoltaic_operation(si_pin):
    # Zero bias: no net dark current, shunt resistance = R0, the current is the
    # photocurrent alone.
    assert si_pin.dark_current(0.0) == 0.0
    net = si_pin.equivalent_circuit(0.0, optical_power=1e-6, wavelength=850e-9)
    assert net.shunt_resistance == pytest.approx(si_pin.shunt_resistance(0.0), rel=1e-12)
    assert net.current == pytest.approx(si_pin.responsivity(850e-9, 0.0) * 1e-6, rel=1e-12)


def test_forward_bias_adds_diffusion_capacitance(si_abrupt):
    # Sze and Ng, ch. 2: in forward bias the stored minority charge adds tau I / (2 V_T).
    v = -0.3
    cj = si_abrupt.junction.capacitance(v)
    i_f = -si_abrupt.dark_current_components(v)["diffusion"]
    tau = si_abrupt._lifetimes()[0]
    vt = sc.k * 300.0 / sc.e
    assert si_abrupt.dark_current(v) < 0
    assert si_abrupt.capacitance(v) == pytest.approx(cj + tau / 2 * i_f / vt, rel=1e-9)
    assert si_abrupt.capacitance(2.0) == pytest.approx(si_abrupt.junction.capacitance(2.0),
                                                       rel=1e-12)


def test_equivalent_circuit_current_sums(ingaas_pin):
    v, p, pb, wl = np.array([1.0, 5.0]), 10e-6, 2e-6, 1550e-9
    net = ingaas_pin.equivalent_circuit(v, optical_power=p, wavelength=wl, background_power=pb)
    r = ingaas_pin.responsivity(wl, v)
    np.testing.assert_allclose(net.current, ingaas_pin.dark_current(v) + r * (p + pb),
                               rtol=1e-12)
    np.testing.assert_allclose(net.capacitance, ingaas_pin.capacitance(v), rtol=1e-12)
    np.testing.assert_allclose(net.shunt_resistance, ingaas_pin.shunt_resistance(v), rtol=1e-12)
    assert net.series_resistance == ingaas_pin.series_resistance
    assert isinstance(net, prx.EquivalentCircuit)


def test_package_capacitance_adds(si_pin):
    bare = dataclasses.replace(si_pin, package_capacitance=0.0)
    assert si_pin.capacitance(5.0) - bare.capacitance(5.0) == pytest.approx(0.2 * pF, rel=1e-9)


def test_shunt_resistance_is_inverse_slope_of_dark_current(si_abrupt, ingaas_pin):
    # R_sh = (dI/dv_r)^-1, by central difference of dark_current; rtol 1e-3.
    for pd, biases in ((si_abrupt, (0.0, 0.02, 1.0)), (ingaas_pin, (0.0, 0.03))):
        for v in biases:
            h = 1e-5
            slope = (pd.dark_current(v + h) - pd.dark_current(v - h)) / (2 * h)
            assert pd.shunt_resistance(v) == pytest.approx(1 / slope, rel=1e-3)


def test_dark_current_rises_with_reverse_bias(si_abrupt):
    # Generation-dominated silicon diode: I_dark grows with W, hence with reverse bias.
    i = si_abrupt.dark_current(np.array([1.0, 5.0, 20.0]))
    assert np.all(np.diff(i) > 0)
    parts = si_abrupt.dark_current_components(5.0)
    assert parts["generation"] > 3 * parts["diffusion"]


def test_dark_current_temperature_doubling(si_pin):
    # Common practice: silicon photodiode dark current doubles about every 8-10 K.
    i300 = si_pin.dark_current(10.0)
    i310 = si_pin.at_temperature(310.0).dark_current(10.0)
    assert 2 ** (10 / 10.5) <= i310 / i300 <= 2 ** (10 / 7.5)


def test_transit_bandwidth_at_high_bias_uses_saturation_velocities(ingaas_pin):
    # Far above punch-through the carriers approach v_sat: f_3dB tends to (and never
    # exceeds) the uniform-generation Ramo result for W, v_sat,n, v_sat,p (Bowers and
    # Burrus 1987); within 10 % at 30 V on 2 um (mean field 15 V/um).
    m = ingaas_pin.material
    v = 30.0
    w = ingaas_pin.junction.depletion_width(v)
    ref = speed.transit_bandwidth(w, m.v_sat_n, m.v_sat_p)
    assert 0.9 * ref <= ingaas_pin.transit_bandwidth(v) <= ref


def test_intrinsic_response_normalised_and_falling(si_pin):
    f = np.array([0.0, 1e6, 1e8, 1e9, 5e9])
    h = si_pin.intrinsic_response(f, 10.0, 850e-9)
    assert h[0] == pytest.approx(1.0, abs=1e-12)
    assert np.all(np.diff(np.abs(h)) < 0)
    # at 950 nm more light is absorbed deep in the undepleted substrate: bigger slow tail
    assert si_pin.diffusion_fraction(950e-9, 10.0) > si_pin.diffusion_fraction(650e-9, 10.0)
    assert si_pin.diffusion_time_constant(950e-9, 10.0) > 0


def test_bandwidth_combines_transit_and_rc(ingaas_pin):
    # f = (f_t^-2 + f_RC^-2)^-1/2 with f_RC = 1/(2 pi (Rs + RL) C); rtol 1e-12.
    ft = ingaas_pin.transit_bandwidth(5.0)
    frc = 1 / (2 * np.pi * (10.0 + 50.0) * ingaas_pin.capacitance(5.0))
    assert ingaas_pin.bandwidth(5.0, 50.0) == pytest.approx((ft**-2 + frc**-2) ** -0.5,
                                                            rel=1e-12)


# --- simple (given) responsivity ------------------------------------------------------
def test_given_responsivity_with_physical_junction(si_pin):
    pd = dataclasses.replace(si_pin, given_responsivity=0.55)
    np.testing.assert_allclose(pd.responsivity(np.array([650e-9, 850e-9]), 5.0), 0.55)
    table = ([800e-9, 850e-9, 900e-9], [0.50, 0.56, 0.60])
    pd = dataclasses.replace(si_pin, given_responsivity=table)
    assert pd.responsivity(875e-9, 5.0) == pytest.approx(0.58, rel=1e-12)
    assert pd.quantum_efficiency(850e-9) == pytest.approx(0.56 * 1.23984e-6 / 850e-9, rel=1e-5)
    with pytest.raises(DesignError, match="800 to 900 nm"):
        pd.responsivity(950e-9)
    # the speed model still comes from the junction
    assert pd.transit_bandwidth(5.0) == pytest.approx(si_pin.transit_bandwidth(5.0))


# --- datasheet constructor ----------------------------------------------------------
def test_from_datasheet_reproduces_inputs():
    pd = Photodiode.from_datasheet(
        responsivity={850e-9: 0.55, 905e-9: 0.6}, capacitance=(3e-12, 1.2e-12),
        capacitance_bias=(0.0, 10.0), dark_current=0.5e-9, dark_current_bias=10.0,
        shunt_resistance=2e9, series_resistance=20.0, package_capacitance=0.1e-12,
        bandwidth=300e6)
    np.testing.assert_allclose(pd.capacitance([0.0, 10.0]), [3.1e-12, 1.3e-12], rtol=1e-12)
    assert pd.dark_current(10.0) == pytest.approx(0.5e-9, rel=1e-12)
    assert pd.shunt_resistance(0.0) == pytest.approx(2e9, rel=1e-6)
    assert pd.responsivity(850e-9) == pytest.approx(0.55)
    assert abs(pd.intrinsic_response(300e6, 5.0)) ** 2 == pytest.approx(0.5, rel=1e-6)
    net = pd.equivalent_circuit(10.0, optical_power=1e-6, wavelength=905e-9)
    assert net.current == pytest.approx(0.5e-9 + 0.6e-6, rel=1e-12)
    assert net.series_resistance == 20.0


def test_from_datasheet_other_forms():
    pd = Photodiode.from_datasheet(responsivity=0.9, cj0=1e-12, vj=0.6, m=0.5)
    assert pd.capacitance(1.8) == pytest.approx(0.5e-12, rel=1e-12)
    assert pd.dark_current(5.0) == 0.0 and pd.shunt_resistance(0.0) == np.inf
    assert pd.intrinsic_response(1e12, 5.0) == 1.0
    net = pd.equivalent_circuit(5.0, optical_power=1e-6)  # number: no wavelength needed
    assert net.current == pytest.approx(0.9e-6)
    fixed = Photodiode.from_datasheet(responsivity=0.9, capacitance=2e-12, capacitance_bias=5.0,
                                      shunt_resistance=1e9)
    np.testing.assert_allclose(fixed.capacitance([0.0, 5.0, 20.0]), 2e-12, rtol=1e-12)
    assert fixed.dark_current(5.0) == pytest.approx(5.0 / 1e9, rel=1e-12)
    only_i = Photodiode.from_datasheet(responsivity=0.9, capacitance=2e-12, capacitance_bias=5.0,
                                       dark_current=1e-9, dark_current_bias=5.0)
    assert only_i.dark_current(5.0) == pytest.approx(1e-9, rel=1e-12)


def test_from_datasheet_inconsistent_numbers_name_parameter():
    with pytest.raises(DesignError, match="shunt_resistance.*valid range") as err:
        Photodiode.from_datasheet(responsivity=0.5, capacitance=1e-12, capacitance_bias=5.0,
                                  dark_current=1e-9, dark_current_bias=10.0,
                                  shunt_resistance=1e12)
    assert err.value.parameter == "shunt_resistance"
    with pytest.raises(DesignError) as err:
        Photodiode.from_datasheet(responsivity=0.5, capacitance=(1e-12, 2e-12),
                                  capacitance_bias=(0.0, 5.0))
    assert err.value.parameter == "capacitance"
    with pytest.raises(DesignError) as err:
        Photodiode.from_datasheet(responsivity=0.5, capacitance=1e-12, capacitance_bias=5.0,
                                  dark_current=1e-9)
    assert err.value.parameter == "dark_current_bias"


# --- bad inputs ---------------------------------------------------------------------
@pytest.mark.parametrize("kwargs, name", [
    (dict(reflectance=1.2), "reflectance"),
    (dict(top_thickness=-1e-6), "top_thickness"),
    (dict(absorber_thickness=0.0), "absorber_thickness"),
    (dict(series_resistance=-1.0), "series_resistance"),
    (dict(package_capacitance=-1e-12), "package_capacitance"),
    (dict(lifetime=0.0), "lifetime"),
    (dict(illuminated_side="x"), "illuminated_side"),
    (dict(given_responsivity=-0.5), "given_responsivity"),
    (dict(reference_dark_current=1e-9), "reference_bias"),
    (dict(reference_dark_current=1e-9, reference_bias=0.01), "reference_bias"),
    (dict(leakage_resistance=0.0), "leakage_resistance"),
])
def test_bad_constructor_inputs_name_parameter(si_pin, kwargs, name):
    with pytest.raises(DesignError) as err:
        Photodiode(junction=si_pin.junction, **kwargs)
    assert err.value.parameter == name
    assert name in str(err.value)


def test_bad_call_inputs_name_parameter(si_pin):
    for call, name in ((lambda: si_pin.equivalent_circuit(5.0, optical_power=1e-6), "wavelength"),
                       (lambda: si_pin.equivalent_circuit(5.0, optical_power=-1.0),
                        "optical_power"),
                       (lambda: si_pin.intrinsic_response(-1.0, 5.0), "f"),
                       (lambda: si_pin.capacitance(np.nan), "v_r"),
                       (lambda: si_pin.rc_bandwidth(5.0, load_resistance=-1.0),
                        "load_resistance")):
        with pytest.raises(DesignError) as err:
            call()
        assert err.value.parameter == name


def test_parametric_junction_needs_responsivity():
    with pytest.raises(DesignError, match="given_responsivity") as err:
        Photodiode(junction=prx.ParametricJunction(cj0=1e-12, vj=0.7, m=0.5))
    assert err.value.parameter == "given_responsivity"
    with pytest.raises(DesignError) as err:
        Photodiode(junction="not a junction")
    assert err.value.parameter == "junction"


# --- review fixes: derivatives at the bias limits, forward bias of fitted diodes ----------
def test_shunt_resistance_defined_up_to_the_breakdown_estimate(si_pin):
    # Every bias the junction accepts (up to breakdown_voltage()) must give a finite R_sh and
    # an equivalent circuit; the finite-difference step used to step past breakdown and
    # raise. R_sh = (dI/dv_r)^-1 by a backward difference of dark_current there; rtol 1e-3.
    vb = si_pin.junction.breakdown_voltage()
    v = np.array([vb - 1.0, vb - 1e-6, vb])
    r = si_pin.shunt_resistance(v)
    assert np.all(np.isfinite(r)) and np.all(r > 0)
    h = 1e-3
    slope = (si_pin.dark_current(vb - 1.0) - si_pin.dark_current(vb - 1.0 - h)) / h
    assert r[0] == pytest.approx(1 / slope, rel=1e-3)
    assert si_pin.equivalent_circuit(vb).shunt_resistance == pytest.approx(r[2], rel=1e-12)
    fitted = dataclasses.replace(si_pin, reference_dark_current=1e-9, reference_bias=5.0)
    assert np.isfinite(fitted.shunt_resistance(vb)) and fitted.shunt_resistance(vb) > 0


def test_fitted_dark_current_refuses_forward_bias_beyond_the_junction_potential():
    # The fitted recombination term grows as e^{V/2V_T}: at 40 V forward it overflowed to inf
    # (then a confusing i_forward error from the diffusion capacitance). Like the physical
    # junctions (-0.9 Vbi), bias at or beyond -0.9 Vj is a DesignError naming v_r.
    pd = Photodiode.from_datasheet(responsivity=0.5, capacitance=(2e-12, 1e-12),
                                   capacitance_bias=(0.0, 5.0), dark_current=1e-9,
                                   dark_current_bias=5.0, shunt_resistance=1e9)
    vj = pd.junction.vj
    for call in (pd.dark_current, pd.shunt_resistance, pd.capacitance, pd.equivalent_circuit,
                 pd.dark_current_components):
        for bad in (-40.0, -0.9 * vj, np.array([0.0, -1.0])):
            with pytest.raises(DesignError, match="v_r") as err:
                call(bad)
            assert err.value.parameter == "v_r"
    ok = pd.dark_current(np.array([-0.5 * vj, 0.0, 5.0]))
    assert np.all(np.isfinite(ok)) and ok[0] < 0 and ok[2] > 0
    # without a fitted dark current the parametric diode keeps accepting any bias
    plain = Photodiode.from_datasheet(responsivity=0.5, cj0=1e-12, vj=0.7, m=0.5)
    assert np.isfinite(plain.capacitance(-2.0)) and plain.dark_current(-2.0) == 0.0


def test_lifetimes_leakage_and_bandwidth_may_be_arrays(si_pin):
    # One value per design point (param[..., None] against a bias grid), as every other
    # geometry/parasitic field; these raised a bare TypeError (float() of an array) before.
    # Each row must equal the scalar design (rtol 1e-12).
    cases = [("lifetime", [1e-7, 1e-5]), ("generation_lifetime", [1e-5, 1e-3]),
             ("leakage_resistance", [1e9, np.inf]), ("intrinsic_bandwidth", [1e8, 1e9]),
             ("top_diffusion_length", [0.2e-6, 2e-6])]
    v = np.array([0.0, 2.0, 10.0])
    for name, values in cases:
        arr = dataclasses.replace(si_pin, **{name: np.array(values)[:, None]})
        got = np.broadcast_to(arr.dark_current(v), (2, 3))
        tau = np.broadcast_to(arr.diffusion_time_constant(850e-9, v), (2, 3))
        for i, val in enumerate(values):
            one = dataclasses.replace(si_pin, **{name: val})
            np.testing.assert_allclose(got[i], one.dark_current(v), rtol=1e-12)
            np.testing.assert_allclose(tau[i], one.diffusion_time_constant(850e-9, v),
                                       rtol=1e-12)
    with pytest.raises(DesignError) as err:
        dataclasses.replace(si_pin, leakage_resistance=np.array([1e9, -1.0]))
    assert err.value.parameter == "leakage_resistance"


def test_datasheet_fit_numbers_must_be_scalars(si_pin):
    # The dark-current fit is solved for one diode; arrays are a DesignError naming the
    # parameter (they raised a bare TypeError before).
    for kwargs, name in ((dict(reference_dark_current=np.array([1e-9, 2e-9]), reference_bias=5.0),
                          "reference_dark_current"),
                         (dict(reference_dark_current=1e-9, reference_bias=np.array([5.0, 6.0])),
                          "reference_bias"),
                         (dict(zero_bias_resistance=np.array([1e9, 2e9])), "zero_bias_resistance")):
        with pytest.raises(DesignError) as err:
            dataclasses.replace(si_pin, **kwargs)
        assert err.value.parameter == name


def test_absorber_thinner_than_depletion_layer_limits_absorption(ingaas_pin):
    # Beer-Lambert (B. E. A. Saleh and M. C. Teich, Fundamentals of Photonics, 2nd ed.,
    # 2007, sec. 18.1: eta = (1 - R)(1 - exp(-alpha d))): with no absorbing top layer and
    # the whole absorber depleted, eta = (1 - R)(1 - e^{-alpha a}) for absorber thickness a,
    # even when the depletion layer reaches further into transparent material. Before, a
    # 0.5 um absorber gave the 2 um absorption (0.74 instead of 0.29). rtol 1e-12.
    alpha = prx.device.optics.absorption_coefficient(1550e-9, "InGaAs")
    assert ingaas_pin.junction.depletion_width(5.0) > 2 * um
    for a in (0.5 * um, 1 * um, 2 * um):
        pd = dataclasses.replace(ingaas_pin, absorber_thickness=a)
        assert pd.quantum_efficiency(1550e-9, 5.0) == pytest.approx(
            0.98 * -np.expm1(-alpha * a), rel=1e-12)


# --- datasheet diodes at temperature -----------------------------------------------------
def _datasheet(**kw):
    return Photodiode.from_datasheet(responsivity=0.6, capacitance=(12e-12, 5e-12),
                                     capacitance_bias=(0.0, 10.0), dark_current=1e-9,
                                     dark_current_bias=10.0, **kw)


def test_datasheet_dark_current_scales_like_ni():
    # Generation current ~ ni(T) ~ T^1.5 exp(-Eg/2kT) (Sze and Ng, ch. 1 Eq. 25, ch. 2),
    # computed here with scipy.constants for Eg = 1.12 eV; rtol 1e-9. Common practice:
    # silicon dark current doubles every 8-10 K.
    pd = _datasheet(band_gap=1.12)
    hot = pd.at_temperature(310.0)
    kq = sc.k / sc.e
    ref = (310 / 300) ** 1.5 * np.exp(-1.12 / (2 * kq) * (1 / 310 - 1 / 300))
    vt = lambda t: sc.k * t / sc.e  # noqa: E731
    # the bias factor 1 - exp(-v/2V_T) and the capacitance ratio move slightly as well
    s = lambda p, t: p._width_ratio(10.0) * -np.expm1(-10.0 / (2 * vt(t)))  # noqa: E731
    assert hot.dark_current(10.0) == pytest.approx(1e-9 * ref * s(hot, 310) / s(pd, 300),
                                                   rel=1e-9)
    assert 2 ** (10 / 10.5) <= hot.dark_current(10.0) / pd.dark_current(10.0) <= 2 ** (10 / 7.5)
    assert hot.temperature == 310.0 and pd.temperature == 300.0


def test_datasheet_capacitance_follows_the_junction_potential():
    # Vbi falls with temperature (Sze and Ng ch. 2: Vbi = Eg - kT ln(Nc Nv/(Na Nd)) with
    # Nc Nv ~ T^3), about -1.5 to -2.5 mV/K for silicon (common practice); C ~ (Vj + v)^-m
    # of the depletion layer, so C at 0 V rises with temperature and C at high bias barely
    # moves. Reference: the closed form typed in here, rtol 1e-9.
    pd = _datasheet(band_gap=1.12)
    j0 = pd.junction
    hot = pd.at_temperature(350.0)
    kq = sc.k / sc.e
    vj = 1.12 + (j0.vj - 1.12) * 350 / 300 - 3 * kq * 350 * np.log(350 / 300)
    assert hot.junction.vj == pytest.approx(vj, rel=1e-9)
    assert -2.5e-3 < (hot.junction.vj - j0.vj) / 50.0 < -1.5e-3
    for v in (0.0, 5.0, 20.0):
        ref = j0.cj0 * j0.vj**j0.m / (vj + v) ** j0.m
        assert hot.capacitance(v) == pytest.approx(ref, rel=1e-9)
    assert hot.capacitance(0.0) > pd.capacitance(0.0)
    assert hot.responsivity(850e-9) == pd.responsivity(850e-9)
    assert hot.at_temperature(300.0).capacitance(5.0) == pytest.approx(pd.capacitance(5.0),
                                                                       rel=1e-9)


def test_datasheet_shunt_resistance_scales_like_ni_squared():
    # R0 of a zero-bias-limited diode ~ 1/ni^2 (diffusion current, Sze and Ng ch. 2);
    # common practice: silicon R0 halves roughly every 5-7 K.
    pd = Photodiode.from_datasheet(responsivity=0.6, cj0=10e-12, m=0.5,
                                   shunt_resistance=1e9)
    pd = dataclasses.replace(pd, band_gap=1.12)
    ratio = pd.shunt_resistance(0.0) / pd.at_temperature(306.0).shunt_resistance(0.0)
    kq = sc.k / sc.e
    assert ratio == pytest.approx((306 / 300) ** 3 * np.exp(1.12 / kq * (1 / 300 - 1 / 306)),
                                  rel=1e-9)
    assert 1.7 < ratio < 2.6


def test_datasheet_at_temperature_needs_a_band_gap():
    with pytest.raises(DesignError, match="band_gap") as err:
        _datasheet().at_temperature(320.0)
    assert err.value.parameter == "band_gap"
    with pytest.raises(DesignError, match="temperature"):
        _datasheet(band_gap=1.12).at_temperature(700.0)
