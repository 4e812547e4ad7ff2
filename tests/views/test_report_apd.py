"""The avalanche-photodiode section of the report."""

import re

import numpy as np
import pytest

import photorx as prx
from photorx.views.report_apd import apd_section, is_avalanche


@pytest.fixture(scope="module")
def section():
    return apd_section(prx.load_design("si-apd-850"))


def test_apd_section_has_gain_k_f_optimum_and_the_high_voltage_caution(section):
    rx = prx.load_design("si-apd-850")
    r = rx.evaluate()
    assert "Avalanche photodiode" in section
    assert f"{float(r.gain):.4g}" in section and f"{float(r.k_effective):.3g}" in section
    assert "optimum gain" in section and "closed form" in section
    # the cautions the trade expects with APD bias supplies (common practice)
    for words in ("hundreds of volts", "Current-limit", "ESD", "eye safety", "local codes"):
        assert words in section
    # -40 to 85 degC: the compensated bias rises with temperature (breakdown does; Sze and Ng)
    volts = [float(v) for v in re.findall(r"degC</td><td>([\d.]+) V", section)]
    assert len(volts) == 6 and np.all(np.diff(volts) > 0)
    assert section.count("<img") == 1


def test_no_apd_section_for_a_pin():
    rx = prx.demo_receiver()
    assert not is_avalanche(rx) and apd_section(rx) == ""


def test_avalanche_panel_shows_the_optimum_and_its_bias_range_follows_breakdown():
    from photorx.views import widgets as pw

    panel = pw.avalanche_panel("si-apd-850", render=False)
    assert panel.error == "" and "optimum gain" in panel.table.value
    assert panel.optimum.gain > 1 and "hundreds of volts" in panel.message.value
    assert panel.set(bias=0.999 * panel.apd.breakdown_voltage()) is True
    # at -40 degC breakdown is lower (Sze and Ng ch. 2: dV_B/dT > 0): the slider end follows
    # it, so the bias stays below breakdown and the panel still draws
    vb_cold = panel.apd.at_temperature(233.15).breakdown_voltage()
    assert panel.set(temperature=233.15) is True
    assert float(panel.current.reverse_bias) < vb_cold
