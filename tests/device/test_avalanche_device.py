"""Checks of photorx.device.apd (AvalanchePhotodiode, SamStructure) and the field profiles."""

import csv
import functools
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.constants import epsilon_0, e as q_e
from scipy.integrate import quad

import photorx as prx
from photorx.device.avalanche_profiles import abrupt_field_profile
from photorx.errors import DesignError
from photorx.units import mm, per_cm3, um

REFERENCE = Path(__file__).resolve().parents[2] / "reference"
SETTINGS = settings(max_examples=12, deadline=None)


def _abrupt_apd(nd_cm3, temperature=300.0):
    j = prx.AbruptJunction(prx.material("Si"), na=1e19 * per_cm3, nd=nd_cm3 * per_cm3,
                           area=(0.2 * mm) ** 2, temperature=temperature)
    return prx.AvalanchePhotodiode(photodiode=prx.Photodiode(junction=j))


@functools.lru_cache(maxsize=None)
def _reach_through():
    j = prx.PinJunction(prx.material("Si"), i_thickness=30 * um, i_doping=1e13 * per_cm3,
                        area=(0.5 * mm) ** 2, p_doping=1e19 * per_cm3, n_doping=1e19 * per_cm3)
    return prx.AvalanchePhotodiode(photodiode=prx.Photodiode(junction=j),
                                   surface_dark_current=1e-10, bulk_dark_current=1e-12)


@functools.lru_cache(maxsize=None)
def _sam():
    return prx.AvalanchePhotodiode(structure=prx.SamStructure(area=(50 * um) ** 2),
                                   surface_dark_current=2e-9, bulk_dark_current=1e-10)


# ------------------------------------------------------------------ breakdown
def _sze_gibbons():
    with open(REFERENCE / "si_abrupt_breakdown.csv") as fh:
        rows = csv.DictReader(line for line in fh if not line.startswith("#"))
        return [(float(r["doping_cm3"]), float(r["breakdown_voltage_v"])) for r in rows]


@pytest.mark.parametrize("doping, vb_ref", _sze_gibbons())
def test_si_one_sided_breakdown_against_sze_gibbons(doping, vb_ref):
    # Sze and Gibbons (1966) curve as in Sze and Ng (2007), ch. 2 (values from memory,
    # read to ~15 %); van Overstraeten-de Man coefficients differ from the set behind that
    # curve, so the tolerance is 25 %
    assert _abrupt_apd(doping).breakdown_voltage() == pytest.approx(vb_ref, rel=0.25)


def test_breakdown_is_where_the_integral_reaches_one():
    apd = _reach_through()
    vb = apd.breakdown_voltage()
    assert apd.ionization_integral(vb) == pytest.approx(1.0, abs=1e-8)
    # and within +-30 % of the junction's own universal-law estimate (Sze and Ng 2007)
    assert vb == pytest.approx(apd.photodiode.junction.breakdown_voltage(), rel=0.3)


@SETTINGS
@given(st.floats(220.0, 380.0), st.floats(5.0, 60.0))
def test_si_breakdown_rises_with_temperature(t, dt):
    # Crowell and Sze (1966): positive temperature coefficient of avalanche breakdown
    apd = _reach_through()
    assert apd.breakdown_voltage(t + dt) > apd.breakdown_voltage(t)


def test_breakdown_temperature_coefficient_of_si_reach_through():
    # trade fact (common practice, from memory): Si reach-through APDs drift by roughly
    # 0.1-0.4 %/K of V_B (this model: 0.12 %/K)
    apd = _reach_through()
    tc = (apd.breakdown_voltage(310.0) - apd.breakdown_voltage(290.0)) / 20.0
    assert 0.001 < tc / apd.breakdown_voltage() < 0.004


# ------------------------------------------------------------------ gain
@SETTINGS
@given(st.floats(0.0, 0.995), st.floats(0.0, 0.995))
def test_gain_rises_monotonically_to_breakdown(f1, f2):
    apd = _reach_through()
    vb = apd.breakdown_voltage()
    lo, hi = sorted((f1, f2))
    m_lo, m_hi = apd.gain(lo * vb), apd.gain(hi * vb)
    assert m_lo >= 1.0
    assert m_hi >= m_lo * (1 - 1e-9)


def test_gain_diverges_near_breakdown_and_is_array_in_array_out():
    apd = _reach_through()
    vb = apd.breakdown_voltage()
    v = vb * np.array([0.5, 0.9, 0.99, 0.999])
    m = apd.gain(v)
    assert m.shape == (4,) and np.all(np.diff(m) > 0)
    # 1/M vanishes linearly at breakdown (the integral is smooth in bias): (1 - 1/M) -> 1
    assert m[-1] > 500


def test_bias_at_or_beyond_breakdown_is_a_design_error():
    apd = _reach_through()
    vb = apd.breakdown_voltage()
    with pytest.raises(DesignError, match=r"reverse_bias = .* V .*breakdown_voltage"):
        apd.gain(vb * 1.001)


def test_k_effective_trade_facts():
    # Si reach-through: k about 0.02-0.05; InP (hole injection): about 0.4-0.5 at low
    # field, larger near the breakdown fields of thin multipliers (common practice);
    # the Cook et al. set gives ~0.7 at 4.8e5 V/cm, so the InP bound is loose
    si, sam = _reach_through(), _sam()
    assert 0.015 < si.k_effective(0.97 * si.breakdown_voltage()) < 0.06
    assert 0.35 < sam.k_effective(0.97 * sam.breakdown_voltage()) < 0.8


def test_k_effective_of_uniform_field_is_the_coefficient_ratio():
    # a thin, very lightly doped i layer has an almost uniform field
    j = prx.PinJunction(prx.material("Si"), i_thickness=2 * um, i_doping=1e12 * per_cm3,
                        area=(0.1 * mm) ** 2, p_doping=1e20 * per_cm3, n_doping=1e20 * per_cm3)
    apd = prx.AvalanchePhotodiode(photodiode=prx.Photodiode(junction=j))
    v = 0.9 * apd.breakdown_voltage()
    e = (v + j.built_in_potential()) / 2e-6
    from photorx.device.ionization import ionization_ratio
    assert apd.k_effective(v) == pytest.approx(ionization_ratio(e, "Si"), rel=0.05)


def test_excess_noise_uses_gain_and_k():
    apd = _reach_through()
    v = 0.98 * apd.breakdown_voltage()
    assert apd.excess_noise_factor(v) == pytest.approx(
        prx.excess_noise_factor(apd.gain(v), apd.k_effective(v)), rel=1e-12)


def test_dark_current_parts():
    apd = _reach_through()
    v = 0.95 * apd.breakdown_voltage()
    surface, multiplied = apd.dark_current_parts(v)
    assert surface == pytest.approx(1e-10)
    assert multiplied == pytest.approx(apd.gain(v) * 1e-12, rel=1e-12)
    assert apd.dark_current(v) == pytest.approx(surface + multiplied, rel=1e-12)


# ------------------------------------------------------------------ field profiles
def test_abrupt_profile_integrates_to_the_potential():
    # int E dx = Vbi + V_R (Poisson's equation), with the peak 2 V / W (Sze and Ng 2007)
    eps = 11.9 * epsilon_0
    x, e = abrupt_field_profile(np.array([10.0, 50.0]), 1e25, 1e22, eps, 401)
    np.testing.assert_allclose(np.trapezoid(e, x, axis=-1), [10.0, 50.0], rtol=1e-9)


def test_sam_field_obeys_gauss_and_the_bias():
    s = prx.SamStructure(area=(50 * um) ** 2)
    v = 40.0
    x, e = s.field_profile(v, n_points=401)
    eps_inp = prx.material("InP").permittivity
    # field step across the charge layer = q N_c d_c / eps (Gauss's law)
    i0, i1 = 401, 2 * 401 - 1
    assert e[i0] - e[i1] == pytest.approx(q_e * s.charge_doping * s.charge_thickness / eps_inp,
                                          rel=1e-9)
    # potential across the stack = v + Vbi (quad over the piecewise-linear field)
    total = quad(lambda xx: np.interp(xx, x, e), 0.0, x[-1], points=list(x[::401]),
                 limit=200)[0]
    assert total == pytest.approx(v + s.built_in_potential, rel=1e-6)


def test_sam_punch_through_and_capacitance():
    s = prx.SamStructure(area=(50 * um) ** 2)
    vpt = s.punch_through_voltage()
    x, e = s.field_profile(vpt, n_points=401)
    assert e[2 * 401 - 1] == pytest.approx(0.0, abs=1e-3 * e[0])  # edge at the absorber
    # fully depleted: series plate capacitor of the InP and InGaAs layers
    eps_inp, eps_ga = prx.material("InP").permittivity, prx.material("InGaAs").permittivity
    c_full = s.area / ((s.multiplier_thickness + s.charge_thickness) / eps_inp
                       + s.absorber_thickness / eps_ga)
    assert s.capacitance(vpt + 30.0) == pytest.approx(c_full, rel=1e-9)


def test_sam_gain_hole_injection_and_responsivity():
    apd = _sam()
    assert apd.injection == "hole"
    vb = apd.breakdown_voltage()
    assert apd.structure.punch_through_voltage() < vb
    m = apd.gain(vb * np.array([0.8, 0.95, 0.99]))
    assert np.all(np.diff(m) > 0) and m[0] >= 1.0
    # responsivity below the ideal q lambda / (h c) of unit quantum efficiency (1.25 A/W)
    r = apd.responsivity(1550e-9, 0.9 * vb)
    assert 0.5 < r < 1550e-9 * q_e / (6.62607015e-34 * 299792458.0)


def test_bandwidth_falls_at_high_gain():
    # Emmons (1967): at M > 1/k the gain-bandwidth product limits
    apd = _sam()
    vb = apd.breakdown_voltage()
    f = apd.bandwidth(vb * np.array([0.9, 0.99, 0.999]))
    assert np.all(np.diff(f) < 0)


def test_design_errors_name_the_parameter():
    with pytest.raises(DesignError, match="multiplier_thickness = .* m"):
        prx.SamStructure(area=1e-9, multiplier_thickness=1e-3)
    with pytest.raises(DesignError, match="exactly one"):
        prx.AvalanchePhotodiode()
    with pytest.raises(DesignError, match="injection"):
        prx.AvalanchePhotodiode(structure=prx.SamStructure(area=1e-9), injection="photon")
    j = prx.AbruptJunction(prx.material("Ge"), na=1e19 * per_cm3, nd=1e16 * per_cm3,
                           area=1e-8)
    with pytest.raises(DesignError, match="material"):
        prx.AvalanchePhotodiode(photodiode=prx.Photodiode(junction=j))


def test_bias_for_gain_inverts_the_gain_and_tracks_temperature():
    # round trip through the model's own gain, and the temperature-compensated bias rises
    # with temperature because breakdown does (Crowell and Sze 1966)
    apd = _reach_through()
    m = np.array([5.0, 50.0, 200.0])
    v = apd.bias_for_gain(m)
    np.testing.assert_allclose(apd.gain(v), m, rtol=1e-7)
    v_cold, v_hot = apd.bias_for_gain(50.0, 233.15), apd.bias_for_gain(50.0, 358.15)
    assert v_cold < apd.bias_for_gain(50.0) < v_hot
    with pytest.raises(DesignError, match="gain"):
        apd.bias_for_gain(1e9)


@SETTINGS
@given(st.floats(1.0, 3.0))
def test_any_bias_at_or_above_breakdown_is_refused(factor):
    apd = _sam()
    with pytest.raises(DesignError, match="reverse_bias.*V"):
        apd.gain(factor * apd.breakdown_voltage())


@SETTINGS
@given(st.sampled_from(["multiplier_doping", "charge_doping", "absorber_doping"]),
       st.floats(1e25 * 10, 1e30))
def test_sam_doping_out_of_range_names_parameter_unit_and_range(name, value):
    with pytest.raises(DesignError, match=rf"{name} = .* m\^-3 is invalid; valid range: \["):
        prx.SamStructure(area=1e-9, **{name: value})


def test_series_resistance_follows_the_photodiode_or_is_given():
    assert _reach_through().series_resistance == _reach_through().photodiode.series_resistance
    assert _sam().series_resistance == 10.0
    apd = prx.AvalanchePhotodiode(structure=prx.SamStructure(area=(50 * um) ** 2),
                                  series_resistance=25.0)
    assert apd.series_resistance == 25.0
