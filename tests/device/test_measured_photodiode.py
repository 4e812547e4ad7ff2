"""Tests of the photodiode built from measured C-V and I-V tables.

Outside checks: the tables are made from photorx's physical photodiode (depletion
capacitance and Shockley / Sah-Noyce-Shockley dark current, Sze and Ng, Physics of
Semiconductor Devices, 3rd ed. 2007, ch. 2), so a receiver on the measured diode must
reproduce the receiver on the physical one; interpolation passes through the measured
points (scipy.interpolate.PchipInterpolator, Fritsch and Carlson 1980).
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pandas as pd
import pytest

import photorx as prx
from photorx.device.measurements import table_text
from photorx.errors import DesignError

SI = prx.material("Si")
AREA = 1e-6


def _tables():
    j = prx.AbruptJunction(SI, na=1e25, nd=1e21, area=AREA)
    physical = prx.Photodiode(j, leakage_resistance=1e11, given_responsivity=0.55,
                              intrinsic_bandwidth=2e9)
    v = np.linspace(0.0, 20.0, 41)
    cv = pd.DataFrame({"reverse_bias": v, "capacitance": j.capacitance(v)})
    vi = np.linspace(-0.2, 20.0, 60)
    iv = pd.DataFrame({"reverse_bias": vi, "current": physical.dark_current(vi)})
    return physical, cv, iv


def test_measured_diode_reproduces_the_tables_and_the_physics():
    physical, cv, iv = _tables()
    m = prx.Photodiode.from_measurements(cv=cv, iv=iv, responsivity=0.55, bandwidth=2e9)
    assert isinstance(m, prx.Photodiode)
    # through every measured point (PCHIP interpolates), 1e-12
    np.testing.assert_allclose(m.capacitance(cv["reverse_bias"]), cv["capacitance"], rtol=1e-12)
    # between points (0.5 V apart) the interpolated C follows the junction: 0.5 % near
    # zero bias where C bends most, 1e-4 above 2 V
    v = np.linspace(0.25, 19.75, 40)
    np.testing.assert_allclose(m.capacitance(v), physical.capacitance(v), rtol=5e-3)
    np.testing.assert_allclose(m.capacitance(v[v > 2]), physical.capacitance(v[v > 2]),
                               rtol=1e-4)
    # the fitted dark current and shunt resistance follow the physical diode, 0.5 %
    np.testing.assert_allclose(m.dark_current(v), physical.dark_current(v), rtol=5e-3)
    np.testing.assert_allclose(m.shunt_resistance(v), physical.shunt_resistance(v), rtol=5e-3)
    assert m.dark_fit.fits


def test_receiver_on_the_measured_diode_matches_the_physical_one():
    physical, cv, iv = _tables()
    m = prx.Photodiode.from_measurements(cv=cv, iv=iv, responsivity=0.55, bandwidth=2e9)
    base = dataclasses.replace(prx.demo_receiver(), wavelength=850e-9, reverse_bias=5.0)
    r_m = dataclasses.replace(base, photodiode=m).evaluate()
    r_p = dataclasses.replace(base, photodiode=physical).evaluate()
    for name in ("capacitance", "bandwidth", "phase_margin", "input_noise_rms",
                 "sensitivity_dbm", "dark_current"):
        assert getattr(r_m, name) == pytest.approx(getattr(r_p, name), rel=1e-3), name
    table = prx.sweep(dataclasses.replace(base, photodiode=m), reverse_bias=[1.0, 5.0, 15.0])
    assert table["capacitance"].is_monotonic_decreasing
    assert "noise" in str(dataclasses.replace(base, photodiode=m).budget()).lower()


def test_outside_the_measured_range_is_a_design_error():
    _, cv, iv = _tables()
    m = prx.Photodiode.from_measurements(cv=cv, iv=iv, responsivity=0.55)
    with pytest.raises(DesignError, match="measured C-V bias range"):
        m.capacitance(25.0)
    with pytest.raises(DesignError, match="measured I-V bias range"):
        m.dark_current(-0.5)
    rx = dataclasses.replace(prx.demo_receiver(), photodiode=m, wavelength=850e-9)
    with pytest.raises(DesignError, match="measured"):
        prx.sweep(rx, reverse_bias=[5.0, 30.0])
    with pytest.raises(DesignError, match="temperature"):
        dataclasses.replace(rx, temperature=330.0).evaluate()


def test_from_csv_files_and_several_temperatures(tmp_path):
    physical, cv, _ = _tables()
    rows = []
    vi = np.linspace(0.1, 20.0, 30)
    for t in (290.0, 310.0, 330.0):
        d = dataclasses.replace(physical, junction=dataclasses.replace(physical.junction,
                                                                       temperature=t))
        rows.append(pd.DataFrame({"reverse_bias": vi, "current": d.dark_current(vi),
                                  "temperature": t}))
    iv = pd.concat(rows, ignore_index=True)
    iv.attrs["units"] = {"reverse_bias": "V", "current": "A", "temperature": "K"}
    cv.attrs["units"] = {"reverse_bias": "V", "capacitance": "F"}
    (tmp_path / "cv.csv").write_text(table_text(cv))
    (tmp_path / "iv.csv").write_text(table_text(iv))
    m = prx.Photodiode.from_measurements(cv=tmp_path / "cv.csv", iv=tmp_path / "iv.csv",
                                         responsivity=0.55, temperature=310.0)
    hot = m.at_temperature(325.0)
    # dark current rises with temperature (ni(T), Sze and Ng ch. 1); between the measured
    # curves the fitted laws stay within 20 % of the physical diode (their T laws differ:
    # the physical one has D(T), tau(T) and Varshni Eg(T))
    d325 = dataclasses.replace(physical, junction=dataclasses.replace(physical.junction,
                                                                      temperature=325.0))
    assert hot.dark_current(5.0) > m.dark_current(5.0)
    assert hot.dark_current(5.0) == pytest.approx(d325.dark_current(5.0), rel=0.2)
    with pytest.raises(DesignError, match="temperature"):
        m.at_temperature(360.0)


def test_smoothing_the_cv_takes_out_measurement_noise():
    physical, cv, iv = _tables()
    rng = np.random.default_rng(12)
    noisy = cv.copy()
    noisy["capacitance"] = cv["capacitance"] * (1 + 0.003 * rng.standard_normal(len(cv)))
    v = np.linspace(2.1, 19.9, 60)
    truth = np.asarray(physical.capacitance(v))
    errors = []
    for smooth in (False, True):
        m = prx.Photodiode.from_measurements(cv=noisy, iv=iv, responsivity=0.55,
                                             smooth_cv=smooth)
        errors.append(np.sqrt(np.mean((np.asarray(m.capacitance(v)) / truth - 1) ** 2)))
    # a smoothing spline averages the 0.3 % noise of neighbouring points (common practice)
    assert errors[1] < 0.6 * errors[0]
