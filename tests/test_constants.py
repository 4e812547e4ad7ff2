"""Tests of photorx.constants against scipy.constants (CODATA) and a textbook value of kT/q."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.constants as sc

from photorx import constants
from photorx.errors import DesignError


# CODATA values as carried by scipy.constants; photorx must not type its own (rtol=0).
@pytest.mark.parametrize("name, expected", [
    ("q", sc.elementary_charge),
    ("k", sc.Boltzmann),
    ("h", sc.Planck),
    ("c", sc.speed_of_light),
    ("eps0", sc.epsilon_0),
])
def test_constants_are_codata_from_scipy(name, expected):
    assert getattr(constants, name) == expected


def test_codata_2018_exact_values():
    # SI 2019 redefinition: q, k, h, c are exact (BIPM SI Brochure, 9th ed., 2019, Table 1)
    assert constants.q == 1.602176634e-19
    assert constants.k == 1.380649e-23
    assert constants.h == 6.62607015e-34
    assert constants.c == 299792458.0


def test_thermal_voltage_at_300k():
    # kT/q = 25.85 mV at 300 K: Sze and Ng, Physics of Semiconductor Devices, 3rd ed. 2007,
    # Appendix (kT/q = 0.0259 V at 300 K, printed to 3 digits); rtol 2e-3 covers the rounding.
    assert constants.thermal_voltage(300.0) == pytest.approx(0.0259, rel=2e-3)
    # and the definition with scipy.constants to full precision (rtol 1e-15)
    assert constants.thermal_voltage(300.0) == pytest.approx(
        sc.Boltzmann * 300.0 / sc.elementary_charge, rel=1e-15)


def test_thermal_voltage_array_and_default():
    t = np.array([250.0, 300.0, 350.0])
    vt = constants.thermal_voltage(t)
    assert isinstance(vt, np.ndarray) and vt.shape == (3,)
    np.testing.assert_allclose(vt, sc.k * t / sc.e, rtol=1e-15)
    assert constants.thermal_voltage() == pytest.approx(sc.k * 300.0 / sc.e, rel=1e-15)


@pytest.mark.parametrize("bad", [0.0, -10.0, np.nan])
def test_thermal_voltage_rejects_nonpositive_temperature(bad):
    with pytest.raises(DesignError, match="temperature"):
        constants.thermal_voltage(bad)
