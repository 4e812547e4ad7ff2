"""Tests of the measured-parts panel and the synthetic demo measurements.

Outside check: the demo data are photorx's invented p-i-n diode plus noise (written by
photorx/data/make_demo_measurements.py), so the p-i-n fit must return the generating
i layer (20 um, 2e13 cm^-3) within its uncertainties and with a reduced chi-square near 1
(chi-square statistics, common practice); the abrupt model must be flagged.
"""

from __future__ import annotations

import pytest

import photorx as prx
import photorx.views.widgets as pw
from photorx.device.measurements import DEMO_AREA


def test_demo_measurements_are_labelled_synthetic_and_fit_their_model():
    cv, iv = prx.demo_measurements()
    assert "synthetic" in cv.attrs["source"] and "synthetic" in iv.attrs["source"]
    assert sorted(iv["temperature"].unique()) == pytest.approx([298.15, 313.15, 328.15])
    fit = prx.fit_junction(cv, "pin", material="Si", area=DEMO_AREA,
                           sigma=0.002 * cv["capacitance"] + 2e-15)
    assert abs(fit.parameters["i_thickness"] - 20e-6) < 3 * fit.uncertainties["i_thickness"]
    assert abs(fit.parameters["i_doping"] - 2e19) < 3 * fit.uncertainties["i_doping"]
    assert 0.5 < fit.reduced_chi_square < 1.6 and fit.fits


def test_panel_fits_and_flags():
    panel = pw.measured_panel(render=False)
    assert panel.error == ""
    assert panel.fit.model == "pin" and panel.fit.fits
    assert "i_doping" in panel.table.value
    assert panel.set(model="abrupt")
    assert not panel.fit.fits
    assert any("misses" in note for note in panel.notes)
    panel.render()
    assert panel.image.value[:4] == b"\x89PNG"
