"""Checks of photorx.device.ionization and photorx.device.avalanche (functional core)."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import photorx as prx
from photorx.device import avalanche as av
from photorx.device.ionization import (
    chynoweth,
    ionization_coefficients,
    ionization_parameters,
    ionization_ratio,
    phonon_temperature_factor,
)
from photorx.errors import DesignError

SETTINGS = settings(max_examples=30, deadline=None)


# ------------------------------------------------------------------ ionisation coefficients
def test_chynoweth_law_and_zero_field():
    # the law as written by Chynoweth (Phys. Rev. 109, 1537, 1958): a exp(-b/E)
    e = np.array([0.0, 2e7, 5e7])
    out = chynoweth(e, 7.03e7, 1.231e8)
    assert out[0] == 0.0
    np.testing.assert_allclose(out[1:], 7.03e7 * np.exp(-1.231e8 / e[1:]), rtol=1e-14)


def test_si_hole_ranges_join_at_4e5_v_per_cm():
    # van Overstraeten and de Man (1970) fitted the two hole ranges to one curve: at the
    # switch field 4e5 V/cm the low- and high-field laws agree to better than 1 %
    # (published fact of the set; a typo in either row of the data table breaks it)
    lo, hi = ionization_parameters("Si", "p")
    e = 4e7
    a_lo = lo["a"] * np.exp(-lo["b"] / e)
    a_hi = hi["a"] * np.exp(-hi["b"] / e)
    assert a_hi == pytest.approx(a_lo, rel=0.01)
    _, a_p = ionization_coefficients([e * (1 - 1e-9), e * (1 + 1e-9)], "Si")
    assert a_p[1] == pytest.approx(a_p[0], rel=0.01)


def test_si_electron_coefficient_order_of_magnitude():
    # Sze and Ng (3rd ed., 2007), ch. 2, ionisation-rate figure: Si electrons about 1e4 /cm
    # at 3e5 V/cm, holes about 1e3 /cm (from memory; factor-2 tolerance)
    a_n, a_p = ionization_coefficients(3e7, "Si")
    assert 0.5e6 < a_n < 2e6
    assert 0.5e5 < a_p < 4e5


def test_ionisation_ratio_trade_facts():
    # trade facts (common practice): Si k = alpha_p/alpha_n about 0.02-0.05 at the fields
    # of Si reach-through multipliers (~2e5 V/cm); InP alpha_n/alpha_p about 0.4-0.5
    # near 3.5e5 V/cm (hole-injected InP multipliers)
    assert 0.015 < ionization_ratio(2e7, "Si") < 0.06
    assert 0.35 < 1.0 / ionization_ratio(3.5e7, "InP") < 0.6


def test_phonon_factor_and_temperature_trend():
    # Crowell and Sze (1966) / van Overstraeten and de Man (1970): gamma(T0) = 1, and the
    # ionisation rate at fixed field falls as the lattice warms
    assert phonon_temperature_factor(300.0, 0.063) == pytest.approx(1.0, abs=1e-15)
    t = np.array([250.0, 300.0, 350.0])
    assert np.all(np.diff(phonon_temperature_factor(t, 0.063)) > 0)
    a_n, a_p = ionization_coefficients(3e7, "Si", t)
    assert np.all(np.diff(a_n) < 0) and np.all(np.diff(a_p) < 0)


def test_ionisation_bad_inputs_name_the_parameter():
    with pytest.raises(DesignError, match="material"):
        ionization_coefficients(3e7, "Ge")
    with pytest.raises(DesignError, match="field.*V/m"):
        ionization_coefficients(-1.0, "Si")
    with pytest.raises(DesignError, match="temperature.*K"):
        ionization_coefficients(3e7, "Si", 10.0)


# ------------------------------------------------------------------ gain
def _uniform(alpha_n, alpha_p, w, n=4001):
    x = np.linspace(0.0, w, n)
    return x, np.full_like(x, alpha_n), np.full_like(x, alpha_p)


def test_uniform_equal_coefficients_closed_form():
    # McIntyre (1966): alpha_n = alpha_p = alpha in a uniform field gives M = 1/(1 - alpha W)
    for aw in (0.1, 0.5, 0.9, 0.99):
        x, a_n, a_p = _uniform(aw / 1e-6, aw / 1e-6, 1e-6)
        m = av.multiplication_gain(x, a_n, a_p)
        assert m == pytest.approx(1.0 / (1.0 - aw), rel=1e-9)


def test_uniform_electrons_only_is_exponential():
    # alpha_p = 0: no feedback, M = exp(alpha_n W) (Sze and Ng 2007, ch. 13); trapezoid
    # error of exp on 4001 nodes is below 1e-7
    for aw in (0.5, 2.0, 5.0):
        x, a_n, a_p = _uniform(aw / 1e-6, 0.0, 1e-6)
        assert av.multiplication_gain(x, a_n, a_p) == pytest.approx(np.exp(aw), rel=1e-6)
        assert av.uniform_gain(aw / 1e-6, 0.0, 1e-6) == pytest.approx(np.exp(aw), rel=1e-12)


@pytest.mark.parametrize("k", [0.02, 0.3, 0.7])
def test_uniform_general_k_against_mcintyre_closed_form(k):
    # McIntyre (1966), uniform field: M_e = (1 - k)/(exp(-(1 - k) alpha W) - k), written
    # here directly, and hole injection the same with the carriers swapped
    a_n, w = 1.5e6, 1e-6
    for m_target in (5.0, 50.0):
        # alpha_n W giving m_target for this k
        aw = -np.log((1 - k) / m_target + k) / (1 - k)
        x, an, ap = _uniform(aw / w, k * aw / w, w)
        expected = (1 - k) / (np.exp(-(1 - k) * aw) - k)
        assert av.multiplication_gain(x, an, ap, "electron") == pytest.approx(expected, rel=1e-5)
        assert av.uniform_gain(aw / w, k * aw / w, w) == pytest.approx(m_target, rel=1e-10)
        # holes see the mirrored region: swap coefficients
        assert av.multiplication_gain(x, ap, an, "hole") == pytest.approx(expected, rel=1e-5)
    assert a_n > 0


def test_mixed_injection_limits():
    # generation concentrated at x = 0 is electron injection, at x = W hole injection
    x, an, ap = _uniform(1.2e6, 0.4e6, 1e-6)
    near0 = np.exp(-((x - 0.0) / 2e-9) ** 2)
    nearw = np.exp(-((x - 1e-6) / 2e-9) ** 2)
    m_e = av.multiplication_gain(x, an, ap, "electron")
    m_h = av.multiplication_gain(x, an, ap, "hole")
    assert av.multiplication_gain(x, an, ap, "mixed", near0) == pytest.approx(m_e, rel=1e-2)
    assert av.multiplication_gain(x, an, ap, "mixed", nearw) == pytest.approx(m_h, rel=1e-2)
    assert m_h < av.multiplication_gain(x, an, ap, "mixed", np.ones_like(x)) < m_e


def test_gain_vectorised_over_bias_axis():
    w = 1e-6
    aw = np.array([0.2, 0.5, 0.8])[:, None]
    x = np.linspace(0, w, 2001)
    m = av.multiplication_gain(x, aw / w + 0 * x, aw / w + 0 * x)
    np.testing.assert_allclose(m, 1 / (1 - aw[:, 0]), rtol=1e-9)


def test_gain_at_breakdown_is_an_error():
    x, a_n, a_p = _uniform(1.01e6, 1.01e6, 1e-6)
    with pytest.raises(DesignError, match="ionization integral"):
        av.multiplication_gain(x, a_n, a_p)
    with pytest.raises(DesignError, match="injection"):
        av.multiplication_gain(x, a_n * 0.5, a_p * 0.5, "both")


# ------------------------------------------------------------------ Miller law
def test_miller_fit_recovers_exact_parameters():
    v = np.linspace(10.0, 95.0, 12)
    m = av.miller_gain(v, 100.0, 3.0)
    fit = av.fit_miller(v, m)
    assert fit.breakdown_voltage == pytest.approx(100.0, rel=1e-8)
    assert fit.exponent == pytest.approx(3.0, rel=1e-8)
    assert fit.rms_residual < 1e-10
    assert fit.gain(50.0) == pytest.approx(1 / (1 - 0.5**3), rel=1e-8)


def test_miller_fit_to_mcintyre_gain_of_a_junction():
    # the empirical law is a description of real (here: ionisation-integral) M-V curves:
    # fitted V_B lands within 5 % of the integral's breakdown (Sze and Ng 2007, ch. 2:
    # Miller's law holds near breakdown); the residual is reported, small but not zero
    from photorx.units import mm, per_cm3
    j = prx.AbruptJunction(prx.material("Si"), na=1e19 * per_cm3, nd=1e16 * per_cm3,
                           area=(0.2 * mm) ** 2)
    apd = prx.AvalanchePhotodiode(photodiode=prx.Photodiode(junction=j))
    vb = apd.breakdown_voltage()
    v = vb * np.linspace(0.6, 0.98, 10)
    fit = av.fit_miller(v, apd.gain(v))
    assert fit.breakdown_voltage == pytest.approx(vb, rel=0.05)
    assert 0.0 < fit.rms_residual < 0.05


def test_miller_bad_inputs():
    with pytest.raises(DesignError, match="v_r.*breakdown_voltage"):
        av.miller_gain(101.0, 100.0, 3.0)
    with pytest.raises(DesignError, match="gain"):
        av.fit_miller([10.0, 20.0], [0.5, 2.0])


# ------------------------------------------------------------------ excess noise
def test_excess_noise_limits_and_worked_value():
    # McIntyre (1966): F(1) = 1; k = 1 gives F = M; k = 0 tends to 2 at large M
    f = prx.excess_noise_factor
    assert f(1.0, 0.3) == pytest.approx(1.0, rel=1e-15)
    np.testing.assert_allclose(f(np.array([2.0, 10.0, 100.0]), 1.0), [2.0, 10.0, 100.0],
                               rtol=1e-15)
    assert f(1e6, 0.0) == pytest.approx(2.0, abs=1e-5)
    # M = 10, k = 0.02: 0.2 + 0.98 * 1.9 = 2.062 (closed form evaluated by hand)
    assert f(10.0, 0.02) == pytest.approx(2.062, rel=1e-12)


@SETTINGS
@given(st.floats(1.0, 1e4), st.floats(1.0, 1e4), st.floats(0.0, 1.0), st.floats(0.0, 1.0))
def test_excess_noise_properties(m1, m2, k1, k2):
    f = prx.excess_noise_factor
    assert f(m1, k1) >= 1.0 - 1e-12
    lo, hi = sorted((m1, m2))
    assert f(lo, k1) <= f(hi, k1) + 1e-9 * hi
    klo, khi = sorted((k1, k2))
    assert f(m1, klo) <= f(m1, khi) + 1e-9 * m1


def test_excess_noise_bad_inputs():
    with pytest.raises(DesignError, match="gain.*1"):
        prx.excess_noise_factor(0.5, 0.1)
    with pytest.raises(DesignError, match="k.*0, 1"):
        prx.excess_noise_factor(10.0, 1.5)


# ------------------------------------------------------------------ speed and dark current
def test_gain_bandwidth_product_is_constant():
    # Emmons (1967): above M = 1/k the 3-dB bandwidth is 1/(2 pi M N k tau), so M f is
    # constant; N(1) = 1/3 (from memory)
    m = np.array([20.0, 50.0, 200.0])
    f = av.gain_bandwidth_limit(m, 0.02, 10e-12)
    np.testing.assert_allclose(m * f, m[0] * f[0], rtol=1e-12)
    assert av.emmons_factor(1.0) == pytest.approx(1 / 3, rel=1e-12)
    assert av.avalanche_buildup_time(10.0, 1.0, 1e-12) == pytest.approx(10 / 3 * 1e-12)


def test_apd_bandwidth_combination():
    # one finite limit returns itself; equal limits combine as f / sqrt(3) (common practice)
    assert av.apd_bandwidth(1e9, np.inf, np.inf) == pytest.approx(1e9)
    assert av.apd_bandwidth(1e9, 1e9, 1e9) == pytest.approx(1e9 / np.sqrt(3))


def test_dark_current_split():
    np.testing.assert_allclose(av.avalanche_dark_current(np.array([1.0, 10.0]), 1e-9, 1e-11),
                               [1.01e-9, 1.1e-9], rtol=1e-12)
    with pytest.raises(DesignError, match="surface_current.*A"):
        av.avalanche_dark_current(10.0, -1e-9, 1e-11)
