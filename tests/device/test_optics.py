"""Checks of photorx.device.optics: absorption data, collection, quantum efficiency, R."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants as sc
from scipy.integrate import quad

import photorx as prx
from photorx.device import optics
from photorx.errors import DesignError

SETTINGS = settings(max_examples=30, deadline=None)


# --- responsivity ---------------------------------------------------------------------
def test_responsivity_against_scipy_constants():
    # R = eta q lambda / (h c) with CODATA constants from scipy.constants; rtol 1e-12.
    wl = np.array([850e-9, 1310e-9, 1550e-9])
    expected = 0.8 * sc.e * wl / (sc.h * sc.c)
    np.testing.assert_allclose(optics.responsivity_from_qe(0.8, wl), expected, rtol=1e-12)


def test_responsivity_rule_of_thumb():
    # Common practice: R [A/W] = eta * lambda / 1.23984 um; rtol 1e-5 (5 digits quoted).
    assert optics.responsivity_from_qe(1.0, 1.23984e-6) == pytest.approx(1.0, rel=1e-5)
    assert optics.responsivity_from_qe(0.9, 1550e-9) == pytest.approx(0.9 * 1.55 / 1.23984,
                                                                       rel=1e-5)


@SETTINGS
@given(st.floats(0.0, 1.0), st.floats(200e-9, 3e-6))
def test_qe_responsivity_round_trip(eta, wl):
    r = optics.responsivity_from_qe(eta, wl)
    assert optics.qe_from_responsivity(r, wl) == pytest.approx(eta, rel=1e-12, abs=1e-15)


def test_photon_energy():
    # scipy.constants: E = h c / (e lambda); 1550 nm is 0.7999 eV; rtol 1e-12.
    assert optics.photon_energy(1550e-9) == pytest.approx(sc.h * sc.c / (sc.e * 1550e-9),
                                                          rel=1e-12)


# --- absorption tables ----------------------------------------------------------------
# The tables themselves are compared with the refractiveindex.info database in
# tests/device/test_optical_data.py; these are the trade facts and the interpolation rules.
@pytest.mark.parametrize("name, wl_nm, alpha_cm, rtol", [
    # D. A. Humphreys et al., Electron. Lett. 21, 1187 (1985): 1.16e4 cm^-1 at 1.3 um and
    # about 7e3 cm^-1 at 1.55 um for In0.53Ga0.47As (from memory); rtol 15 %, the trust
    # range stated for the Adachi (1989) model table.
    ("InGaAs", 1300, 1.16e4, 0.15),
    ("InGaAs", 1550, 7.0e3, 0.15),
    # Ge at 1310 nm: 7e3-1e4 cm^-1 (W. C. Dash and R. Newman, Phys. Rev. 99, 1151 (1955),
    # Fig. 1, from memory); rtol 30 %.
    ("Ge", 1310, 8.0e3, 0.3),
    # GaAs at 850 nm about 1e4 cm^-1 (M. D. Sturge, Phys. Rev. 127, 768 (1962), from
    # memory); rtol 30 %.
    ("GaAs", 850, 1.0e4, 0.3),
])
def test_tables_against_published_values(name, wl_nm, alpha_cm, rtol):
    alpha = optics.absorption_coefficient(wl_nm * 1e-9, prx.material(name))
    assert alpha == pytest.approx(alpha_cm * 100, rel=rtol)


def test_silicon_absorption_depths_common_practice():
    # Common practice: light penetrates silicon ~0.4 um at 450 nm, ~3-4 um at 650 nm,
    # ~18-20 um at 850 nm and ~1 mm at 1064 nm (Nd:YAG); factor-of-1.3 bands.
    si = prx.material("Si")
    depth = 1.0 / np.asarray(optics.absorption_coefficient(
        np.array([450e-9, 650e-9, 850e-9, 1064e-9]), si))
    np.testing.assert_array_less([0.3e-6, 2.8e-6, 15e-6, 0.7e-3], depth)
    np.testing.assert_array_less(depth, [0.52e-6, 4.6e-6, 24e-6, 1.3e-3])


@pytest.mark.parametrize("name, cutoff_um, tol", [
    # Common practice: cutoff wavelengths of the photodiode materials at room temperature.
    ("Si", 1.1, 0.03), ("Ge", 1.85, 0.03), ("InGaAs", 1.7, 0.03), ("GaAs", 0.87, 0.02),
    ("InP", 0.92, 0.02),
])
def test_cutoff_wavelengths_and_sub_gap_tail(name, cutoff_um, tol):
    mat = prx.material(name)
    lam_c = mat.cutoff_wavelength(300.0)
    assert lam_c == pytest.approx(cutoff_um * 1e-6, rel=tol)
    # no hard zero at the gap (issue 13): the data's tail continues below it, falling
    below, above = optics.absorption_coefficient(np.array([0.99 * lam_c, 1.01 * lam_c]), mat)
    assert below > above > 0.0


def test_sub_gap_tail_of_silicon_is_the_data():
    # Green 2008 (database page main/Si/Green-2008): alpha = 0.68 cm^-1 at 1150 nm and 0.022 cm^-1 at 1200 nm, below the 1.124 eV gap
    # (phonon-assisted absorption). The old model returned exactly 0 here.
    a = optics.absorption_coefficient(np.array([1150e-9, 1200e-9]), "Si")
    np.testing.assert_allclose(a, [0.68e2, 0.022e2], rtol=0.01)
    # beyond the table's long end (1450 nm, alpha ~1e-8 cm^-1) absorption is taken as 0
    assert optics.absorption_coefficient(1600e-9, "Si") == 0.0


def test_wavelength_outside_table_names_range():
    with pytest.raises(DesignError, match=r"wavelength.*250 to 1450 nm") as err:
        optics.absorption_coefficient(240e-9, "Si")
    assert err.value.parameter == "wavelength"
    with pytest.raises(DesignError, match="207 to 1936 nm"):
        optics.absorption_coefficient(np.array([200e-9, 1300e-9]), "InGaAs")


def test_unknown_material_table():
    with pytest.raises(DesignError, match="no absorption table"):
        optics.absorption_table("Diamond")


def test_sources_in_headers():
    assert "Green" in optics.absorption_source("Si") and "2008" in optics.absorption_source("Si")
    for name in optics.ABSORPTION_MATERIALS:
        wl, alpha = optics.absorption_table(name)
        assert np.all(np.diff(wl) > 0) and np.all(alpha > 0)
        assert "database page" in optics.absorption_source(name)
        assert "from memory" not in optics.absorption_source(name)


def test_silicon_red_edge_grows_with_temperature():
    # Common practice (Green 2008, temperature coefficients): near the band edge silicon
    # absorbs more when warmer (the gap shrinks), so the red response rises with T.
    si = prx.material("Si")
    a = [optics.absorption_coefficient(1000e-9, si, t) for t in (280.0, 300.0, 330.0)]
    assert a[0] < a[1] < a[2]


# --- collection -------------------------------------------------------------------------
@SETTINGS
@given(st.floats(1e2, 1e7), st.floats(1e-8, 5e-5), st.floats(1e-7, 1e-4))
def test_top_collection_against_quadrature(alpha, d, ln):
    # scipy.integrate.quad of int_0^d alpha e^{-alpha x} cosh(x/L)/cosh(d/L) dx (collection
    # probability with a reflecting front surface, Donolato 1985); rtol 1e-7.
    def f(x):
        return alpha * np.exp(-alpha * x) * np.exp(x / ln - d / ln) * (
            (1 + np.exp(-2 * x / ln)) / (1 + np.exp(-2 * d / ln)))
    pts = [min(1 / alpha, d), max(d - 5 * ln, 0.0)]  # absorption and collection scales
    ref = quad(f, 0, d, points=pts, epsabs=0, epsrel=1e-10, limit=200)[0]
    assert optics.top_layer_collection(alpha, d, ln) == pytest.approx(ref, rel=1e-7, abs=1e-14)


@SETTINGS
@given(st.floats(1e2, 1e7), st.floats(1e-8, 1e-3), st.floats(1e-7, 1e-3))
def test_bottom_collection_against_quadrature(alpha, hh, ln):
    # quad of int_0^H alpha e^{-alpha x} cosh((H-x)/L)/cosh(H/L) dx (reflecting back); rtol 1e-7.
    def f(x):
        return alpha * np.exp(-alpha * x) * np.exp(-x / ln) * (
            (1 + np.exp(-2 * (hh - x) / ln)) / (1 + np.exp(-2 * hh / ln)))
    # the integrand is below 2 alpha e^{-(alpha + 1/L) x}: stop where that is ~e^-60
    x_max = min(hh, 60.0 / (alpha + 1.0 / ln))
    pts = [p for p in (1 / alpha, ln) if p < x_max]
    ref = quad(f, 0, x_max, points=pts or None, epsabs=0, epsrel=1e-10, limit=200)[0]
    assert optics.bottom_layer_collection(alpha, hh, ln) == pytest.approx(ref, rel=1e-7,
                                                                          abs=1e-14)


def test_gaertner_formula():
    # W. W. Gaertner, Phys. Rev. 116, 84 (1959); Sze and Ng, 3rd ed., ch. 13:
    # eta_int = 1 - exp(-alpha W) / (1 + alpha L) for a junction at the surface and a
    # semi-infinite substrate; rtol 1e-12.
    alpha = np.array([1e3, 1e5, 1e6])
    w, ln = 5e-6, 20e-6
    eta = optics.internal_quantum_efficiency(alpha, 0.0, w, np.inf, 1e-6, ln)
    np.testing.assert_allclose(eta, 1 - np.exp(-alpha * w) / (1 + alpha * ln), rtol=1e-12)


@SETTINGS
@given(st.floats(1e2, 1e6), st.floats(0.0, 2e-6), st.floats(1e-7, 5e-5),
       st.floats(1e-7, 2e-4), st.floats(1e-7, 1e-3), st.floats(0.01, 0.99))
def test_wider_depletion_collects_more(alpha, d, w1, ln, absorber, frac):
    # Property (Sze and Ng, ch. 13): widening the depletion layer into a fixed absorbing
    # stack never lowers the quantum efficiency.
    w2 = w1 * (1 + frac)
    if w2 > absorber:
        return
    e1 = optics.quantum_efficiency(alpha, 0.3, d, w1, absorber - w1, 1e-6, ln)
    e2 = optics.quantum_efficiency(alpha, 0.3, d, w2, absorber - w2, 1e-6, ln)
    assert e2 >= e1 * (1 - 1e-12)
    assert 0.0 <= e1 <= 0.7 + 1e-12


def test_fresnel_reflectance():
    # B. E. A. Saleh and M. C. Teich, Fundamentals of Photonics, sec. 6.2: at normal
    # incidence R = ((n-1)/(n+1))^2; GaAs (n = 3.6) reflects about 32 % (from memory);
    # rtol 2 %.
    assert optics.fresnel_reflectance(3.6) == pytest.approx(0.32, rel=0.02)
    assert optics.fresnel_reflectance(1.0) == 0.0


def test_responsivity_table_interpolation_and_range():
    wl = [800e-9, 900e-9]
    assert optics.interpolate_responsivity(850e-9, wl, [0.4, 0.6]) == pytest.approx(0.5)
    out = optics.interpolate_responsivity(np.array([800e-9, 900e-9]), wl, [0.4, 0.6])
    np.testing.assert_allclose(out, [0.4, 0.6])
    with pytest.raises(DesignError, match="800 to 900 nm"):
        optics.interpolate_responsivity(950e-9, wl, [0.4, 0.6])


@pytest.mark.parametrize("call, name", [
    (lambda: optics.responsivity_from_qe(1.2, 1e-6), "qe"),
    (lambda: optics.responsivity_from_qe(0.5, -1e-6), "wavelength"),
    (lambda: optics.top_layer_collection(-1.0, 1e-6, 1e-6), "alpha"),
    (lambda: optics.bottom_layer_collection(1e4, -1e-6, 1e-6), "thickness"),
    (lambda: optics.quantum_efficiency(1e4, 1.5, 0, 1e-6, np.inf, 1e-6, 1e-5), "reflectance"),
    (lambda: optics.collection_fractions(1e4, 0, 1e-6, np.nan, 1e-6, 1e-5),
     "bottom_thickness"),
])
def test_bad_inputs_name_parameter(call, name):
    with pytest.raises(DesignError, match=name) as err:
        call()
    assert err.value.parameter == name


def test_out_of_table_message_states_the_range_at_that_temperature():
    # With the rigid band-gap shift the accepted wavelengths move with temperature; the
    # message used to quote the 300 K range while rejecting a wavelength inside it at 600 K.
    # Short end at T: lambda = h c / (h c / 300 nm + Eg(T) - Eg(300 K)) (scipy.constants).
    si = prx.material("Si")
    e300 = sc.h * sc.c / (sc.e * 250e-9)  # short end of the Green 2008 table
    lo = sc.h * sc.c / (sc.e * (e300 + si.band_gap(600.0) - si.band_gap(300.0)))
    with pytest.raises(DesignError, match=f"{lo * 1e9:.0f} to .* nm") as err:
        optics.absorption_coefficient(0.999 * lo, si, 600.0)
    assert err.value.parameter == "wavelength"
    assert optics.absorption_coefficient(1.001 * lo, si, 600.0) > 0
