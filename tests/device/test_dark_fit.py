"""Tests of the dark-current fit to measured I-V curves (one or several temperatures).

Outside checks: the dark-current parts of the physical photodiode (Shockley diffusion
current and Sah-Noyce-Shockley generation current, Sze and Ng, Physics of Semiconductor
Devices, 3rd ed. 2007, ch. 2) and their temperature laws (diffusion ~ ni^2, generation
~ ni, same book ch. 1 and 2); the fit must recover the parts used to make noisy data
within its stated uncertainties.
"""

from __future__ import annotations

import io

import numpy as np
import pytest

import photorx as prx
from photorx.device.dark_fit import dark_current_model
from photorx.errors import DesignError

SI = prx.material("Si")
AREA = 1e-6


def _diode():
    j = prx.AbruptJunction(SI, na=1e25, nd=1e21, area=AREA)
    return j, prx.Photodiode(j, leakage_resistance=1e11)


def test_fit_recovers_the_physical_parts_at_one_temperature():
    j, diode = _diode()
    v = np.linspace(-0.3, 10.0, 60)
    parts = diode.dark_current_components(v)
    i = np.asarray(diode.dark_current(v))
    rng = np.random.default_rng(4)
    noisy = i * (1 + 0.01 * rng.standard_normal(v.size))
    fit = prx.fit_dark_current((v, noisy), junction=j, sigma=0.01 * np.abs(noisy))
    vt = prx.thermal_voltage(300.0)
    # the physical photodiode's own parts (Sze and Ng ch. 2), read back at 10 V
    i_s = parts["diffusion"][-1] / -np.expm1(-10.0 / vt)
    i_g = parts["generation"][-1] / (j.capacitance(0.0) / j.capacitance(10.0)) / -np.expm1(
        -5.0 / vt)
    for name, true in (("saturation_current", i_s), ("generation_current", i_g),
                       ("shunt_conductance", 1e-11)):
        assert abs(fit.parameters[name] - true) < 3 * fit.uncertainties[name], name
    assert fit.fits
    assert fit.shunt_resistance == pytest.approx(1e11, rel=0.05)
    np.testing.assert_allclose(fit.current(v), i, rtol=0.02)


def test_fit_over_temperatures_recovers_parts_within_uncertainty(tmp_path):
    j, _ = _diode()
    v = np.linspace(0.05, 10.0, 25)
    truth = dict(saturation_current=2e-13, generation_current=2e-12, shunt_conductance=5e-12)
    rows = []
    rng = np.random.default_rng(9)
    for t in (280.0, 300.0, 320.0, 340.0):
        i = dark_current_model(v, t, width_ratio=j.capacitance(0.0) / j.capacitance(v),
                               band_gap=1.12, **truth)
        i = i * (1 + 0.005 * rng.standard_normal(v.size))
        rows += [f"{a}, {float(b) * 1e9!r}, {t - 273.15!r}" for a, b in zip(v, i)]
    path = tmp_path / "iv.csv"
    path.write_text("reverse_bias [V], current [nA], temperature [degC]\n" + "\n".join(rows))
    iv = prx.read_iv(path)
    fit = prx.fit_dark_current(iv, junction=j, sigma=0.005 * np.abs(iv["current"]),
                               band_gap=1.12)
    for name, true in truth.items():
        assert abs(fit.parameters[name] - true) < 3 * fit.uncertainties[name], name
        assert fit.uncertainties[name] < 0.1 * true, name
    # generation ~ ni doubles about every 8-9 K near 300 K in silicon (common practice)
    gen = [dark_current_model(5.0, t, 0.0, fit.parameters["generation_current"], 0.0, 1.0,
                              band_gap=1.12) for t in (300.0, 310.0)]
    assert 1.8 < gen[1] / gen[0] < 2.6


def test_missing_part_is_flagged():
    j, diode = _diode()
    v = np.linspace(0.1, 10.0, 40)
    i = np.asarray(diode.dark_current(v))  # leakage dominates at high bias
    fit = prx.fit_dark_current((v, i), junction=j, parts=("diffusion", "generation"))
    assert not fit.fits
    assert fit.misfit_ranges[-1][1] == pytest.approx(10.0)
    fig = fit.plot()
    assert len(fig.axes) == 2


def test_bad_parts_and_zero_currents():
    v = np.array([0.0, 1.0, 2.0, 3.0, 4.0])
    i = np.array([0.0, 1e-12, 1.5e-12, 1.8e-12, 2e-12])
    with pytest.raises(DesignError, match="parts"):
        prx.fit_dark_current((v, i), parts=("tunnelling",))
    fit = prx.fit_dark_current((v, i), parts=("generation", "shunt"))
    assert fit.dof == 2  # the zero-bias point is left out
    with pytest.raises(DesignError, match="sigma"):
        prx.fit_dark_current((v[1:], np.array([1e-12, 0.0, 1e-12, 2e-12])))
    with pytest.raises(DesignError):
        prx.read_iv(io.StringIO("reverse_bias [V], current [A]\n0, 0\n1, x\n2, 1\n"))
