"""Checks of photorx.device.darkcurrent: diffusion, generation and leakage currents, R0."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants as sc

import photorx as prx
from photorx.device import darkcurrent as dk
from photorx.errors import DesignError

SETTINGS = settings(max_examples=30, deadline=None)


def test_shockley_equation_against_scipy_constants():
    # S. M. Sze and K. K. Ng, 3rd ed., ch. 2 (Shockley): I = I_s (exp(qV/kT) - 1) with
    # V = -v_r, written here with scipy.constants; rtol 1e-12.
    v_r = np.array([-0.3, -0.05, 0.0, 0.05, 1.0])
    t = 310.0
    expected = -1e-12 * (np.exp(-sc.e * v_r / (sc.k * t)) - 1.0)
    np.testing.assert_allclose(dk.diffusion_current(v_r, 1e-12, t), expected, rtol=1e-12,
                               atol=1e-30)


def test_saturation_current_long_diode_textbook_form():
    # Sze and Ng, ch. 2: J_s = q ni^2 (D_p/(L_p N_D) + D_n/(L_n N_A)) for long layers,
    # evaluated directly with scipy.constants; rtol 1e-12.
    ni, na, nd = 9.65e15, 1e25, 1e21
    dn, dp, ln, lp = 3.6e-3, 1.2e-3, 1e-5, 1e-4
    expected = sc.e * 1e-6 * ni**2 * (dp / (lp * nd) + dn / (ln * na))
    assert dk.diffusion_saturation_current(1e-6, ni, na, nd, dn, dp, ln, lp) == pytest.approx(
        expected, rel=1e-12)


def test_saturation_current_short_layer_limit():
    # Thin layer with a reflecting boundary: I_s -> q A ni^2 w / (N tau) (volume
    # recombination; Sze and Ng ch. 2 narrow-base limit with zero surface recombination);
    # rtol 1e-3.
    ni, nd, dp, tau, w = 1e16, 1e21, 1e-3, 1e-6, 0.1e-6
    lp = np.sqrt(dp * tau)
    i_s = dk.diffusion_saturation_current(1e-6, ni, 1e30, nd, 1e-3, dp, 1e-6, lp,
                                          thickness_n=w)
    assert i_s == pytest.approx(sc.e * 1e-6 * ni**2 * w / (nd * tau), rel=1e-3)


def test_generation_current_textbook_form():
    # Sze and Ng, ch. 2: J_gen = q ni W / tau_g in reverse bias >> kT/q; rtol 1e-9.
    i = dk.generation_current(5.0, 1e-6, 9.65e15, 10e-6, 1e-3)
    assert i == pytest.approx(sc.e * 1e-6 * 9.65e15 * 10e-6 / 1e-3, rel=1e-9)
    assert dk.generation_current(0.0, 1e-6, 9.65e15, 10e-6, 1e-3) == 0.0
    assert dk.generation_current(-0.3, 1e-6, 9.65e15, 10e-6, 1e-3) < 0  # forward


def test_silicon_generation_current_doubles_every_8_to_10_kelvin():
    # Common practice: silicon photodiode dark current (generation-dominated) doubles about
    # every 8-10 degC near room temperature.
    si = prx.material("Si")
    i = [dk.generation_current(5.0, 1e-6, si.intrinsic_density(t), 20e-6, 1e-3, t)
         for t in (295.0, 305.0)]
    doubling = 10.0 * np.log(2) / np.log(i[1] / i[0])
    assert 7.5 <= doubling <= 10.5


def test_activation_energies():
    # Sze and Ng, ch. 2: diffusion current ~ exp(-Eg/kT), generation ~ exp(-Eg/2kT); the
    # Arrhenius slopes of silicon near 300 K lie near Eg and Eg/2 (Eg(0) ~ 1.17 eV plus the
    # T^3 / T^1.5 prefactors); bands +-0.1 eV.
    si = prx.material("Si")
    t1, t2 = 290.0, 310.0
    ni1, ni2 = si.intrinsic_density(t1), si.intrinsic_density(t2)
    inv = 1 / (sc.k * t1 / sc.e) - 1 / (sc.k * t2 / sc.e)

    def diff(t, ni):
        d = dk.diffusivity(si.mu_p, t)
        return dk.diffusion_saturation_current(1e-6, ni, 1e25, 1e21, d, d, 1e-4, 1e-4)

    e_diff = np.log(diff(t2, ni2) / diff(t1, ni1)) / inv
    e_gen = np.log(ni2 / ni1) / inv
    assert 1.15 <= e_diff <= 1.40
    assert 0.55 <= e_gen <= 0.70


@SETTINGS
@given(st.floats(0.2, 50.0), st.floats(0.01, 1.0))
def test_dark_current_rises_with_reverse_bias_when_generation_dominated(v1, frac):
    # Sze and Ng, ch. 2/13: generation current ~ W, and W grows with reverse bias.
    si = prx.material("Si")
    j = prx.AbruptJunction(si, na=1e25, nd=1e21, area=1e-6)
    v2 = v1 * (1 + frac)
    i = [dk.generation_current(v, j.area, si.ni_300, j.depletion_width(v), 1e-3) for v in (v1, v2)]
    assert i[1] > i[0]


def test_zero_bias_resistance_kt_over_q_is():
    # Common practice (Graeme, Photodiode Amplifiers, 1996, ch. 1): an ideal diode has
    # R0 = kT / (q I_s); rtol 1e-12.
    t = 300.0
    assert dk.zero_bias_resistance(1e-12, 0.0, temperature=t) == pytest.approx(
        sc.k * t / (sc.e * 1e-12), rel=1e-12)


def test_zero_bias_resistance_matches_numerical_derivative():
    # R0 = (dI/dV at 0)^-1 of the summed currents, by central difference; rtol 1e-6.
    i_s, area, ni, w, tau, rl = 1e-13, 1e-6, 1e16, 5e-6, 1e-4, 1e11
    i_g0 = sc.e * area * ni * w / tau

    def total(v):
        return (dk.diffusion_current(v, i_s) + dk.generation_current(v, area, ni, w, tau)
                + dk.leakage_current(v, rl))
    h = 1e-6
    slope = (total(h) - total(-h)) / (2 * h)
    assert dk.zero_bias_resistance(i_s, i_g0, rl) == pytest.approx(1 / slope, rel=1e-6)


def test_generation_conductance_matches_numerical_derivative():
    # d/dv_r of q A ni W(v)/tau_g (1 - e^{-v/2V_T}) with W of an abrupt junction; rtol 1e-5.
    si = prx.material("Si")
    j = prx.AbruptJunction(si, na=1e25, nd=1e21, area=1e-6)

    def gen(v):
        return dk.generation_current(v, j.area, si.ni_300, j.depletion_width(v), 1e-3)
    for v in (0.0, 0.05, 2.0):
        h = 1e-6
        slope_w = (j.depletion_width(v + h) - j.depletion_width(v - h)) / (2 * h)
        g = dk.generation_conductance(v, j.area, si.ni_300, j.depletion_width(v), slope_w, 1e-3)
        assert g == pytest.approx((gen(v + h) - gen(v - h)) / (2 * h), rel=1e-5)


def test_array_inputs_broadcast():
    v = np.linspace(-0.2, 5, 7)[:, None]
    t = np.array([280.0, 300.0, 320.0])
    out = dk.diffusion_current(v, 1e-12, t)
    assert out.shape == (7, 3)
    assert dk.generation_current(v, 1e-6, 1e16, np.full((7, 3), 1e-6), 1e-6, t).shape == (7, 3)


def test_default_lifetimes():
    for name in ("Si", "Ge", "GaAs", "InP", "InGaAs"):
        tau, tau_g = dk.default_lifetimes(name)
        assert 1e-10 < tau < 1e-1 and 1e-10 < tau_g < 1e-1
    assert dk.default_lifetimes("unknown") == (1e-6, 1e-6)


@pytest.mark.parametrize("call, name", [
    (lambda: dk.generation_current(1.0, -1e-6, 1e16, 1e-6, 1e-6), "area"),
    (lambda: dk.generation_current(1.0, 1e-6, 1e16, 1e-6, 0.0), "generation_lifetime"),
    (lambda: dk.diffusion_current(1.0, -1e-12), "saturation_current"),
    (lambda: dk.leakage_current(1.0, 0.0), "resistance"),
    (lambda: dk.zero_bias_resistance(1e-12, 0.0, leakage_resistance=-5.0), "leakage_resistance"),
    (lambda: dk.diffusivity(0.1, temperature=-3.0), "temperature"),
    # a NaN/inf bias came back as NaN silently before
    (lambda: dk.diffusion_current(np.nan, 1e-12), "v_r"),
    (lambda: dk.generation_current(np.array([1.0, np.inf]), 1e-6, 1e16, 1e-6, 1e-6), "v_r"),
    (lambda: dk.generation_conductance(np.nan, 1e-6, 1e16, 1e-6, 0.0, 1e-6), "v_r"),
    (lambda: dk.leakage_current(np.nan, 1e9), "v_r"),
])
def test_bad_inputs_name_parameter(call, name):
    with pytest.raises(DesignError) as err:
        call()
    assert err.value.parameter == name
    assert name in str(err.value)


def test_lifetime_temperature_law_from_srh():
    # Sze and Ng, 3rd ed., ch. 1: tau = 1 / (sigma v_th N_t), v_th = sqrt(3 k T / m*), with
    # scipy.constants (m* = 0.26 m_e, sigma = 1e-15 cm^2, N_t = 1e13 cm^-3); rtol 1e-12.
    def tau(t):
        return 1.0 / (1e-19 * np.sqrt(3 * sc.k * t / (0.26 * sc.m_e)) * 1e19)

    t = np.array([250.0, 300.0, 400.0])
    np.testing.assert_allclose(dk.lifetime_at_temperature(tau(300.0), t), tau(t), rtol=1e-12)


def test_photodiode_lifetimes_follow_the_law():
    from photorx.units import mm, per_cm3

    j = prx.AbruptJunction(prx.material("Si"), na=1e19 * per_cm3, nd=1e14 * per_cm3,
                           area=(1 * mm) ** 2)
    pd = prx.Photodiode(junction=j, lifetime=2e-6, generation_lifetime=1e-4)
    assert pd._lifetimes() == (2e-6, 1e-4)
    hot = pd.at_temperature(400.0)._lifetimes()
    np.testing.assert_allclose(hot, np.array([2e-6, 1e-4]) * np.sqrt(300 / 400), rtol=1e-12)
