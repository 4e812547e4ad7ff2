"""Design files: amplifier zeros and open-loop gain points fitted on load.

The points are made with scipy.signal.freqs of a known zero-pole-gain model (as in
tests/circuit/test_amplifier_fit.py); the receiver loaded from them must carry the model's
parameters within 1 %, and every design must round-trip (load -> write -> load equal).
"""

from __future__ import annotations

import dataclasses
import re

import numpy as np
import pytest
import scipy.signal

import photorx.designfile as dfile
from photorx.errors import DesignError

_AMP = re.compile(r"\ngbw = [^\n]*\ndc_gain = [^\n]*\npoles = [^\n]*\n")
MODEL = {"gbw": 2e9, "dc_gain": 3000.0, "poles": (1.2e9, 25e9), "zeros": (900e6,)}


def _demo_text():
    return dfile.dumps_design(dfile.demo_receiver())


def _rows(m, f):
    wd = 2 * np.pi * m["gbw"] / m["dc_gain"]
    z = -2 * np.pi * np.array(m["zeros"])
    p = -np.r_[wd, 2 * np.pi * np.array(m["poles"])]
    k = m["dc_gain"] * np.prod(-p) / np.prod(-z)
    _, h = scipy.signal.freqs(*scipy.signal.zpk2tf(z, p, k), worN=2 * np.pi * f)
    mag, ph = 20 * np.log10(np.abs(h)), np.degrees(np.unwrap(np.angle(h)))
    return ", ".join(f'["{x:.8g} Hz", "{y:.6f} dB", "{q:.5f} deg"]' for x, y, q in zip(f, mag, ph))


def _with_amplifier(lines):
    text = _demo_text()
    assert _AMP.search(text)
    return _AMP.sub("\n" + "\n".join(lines) + "\n", text)


def test_zeros_key_loads_and_round_trips():
    text = _with_amplifier(['gbw = "2 GHz"', "dc_gain = 3000", 'poles = ["1.2 GHz", "25 GHz"]',
                            'zeros = ["900 MHz"]'])
    rx = dfile.loads_design(text)
    assert rx.tia.amp.zeros == (900e6,)
    again = dfile.loads_design(dfile.dumps_design(rx))
    assert again == rx
    assert 'zeros = ["900 MHz"]' in dfile.dumps_design(rx)
    # an amplifier without zeros writes no zeros key (the files of before stay as they were)
    assert "zeros" not in _demo_text()


def test_gain_points_are_fitted_on_load_and_round_trip():
    f = np.logspace(2, 10.5, 26)
    text = _with_amplifier([f"gain_points = [{_rows(MODEL, f)}]", "fit_poles = 2",
                            "fit_zeros = 1"])
    rx = dfile.loads_design(text)
    amp = rx.tia.amp
    assert amp.gbw == pytest.approx(MODEL["gbw"], rel=1e-2)
    assert amp.dc_gain == pytest.approx(MODEL["dc_gain"], rel=1e-2)
    np.testing.assert_allclose(amp.poles, MODEL["poles"], rtol=1e-2)
    np.testing.assert_allclose(amp.zeros, MODEL["zeros"], rtol=1e-2)
    # the other amplifier keys are kept
    assert amp.voltage_noise == dfile.demo_receiver().tia.amp.voltage_noise
    # written back: the fitted poles and zeros (not the points), and that loads equal
    written = dfile.dumps_design(rx)
    assert "gain_points" not in written and "zeros = [" in written
    assert dfile.loads_design(written) == rx
    # the receiver from the file matches the receiver of the true amplifier: bandwidth 1 %
    true = dataclasses.replace(rx, tia=dataclasses.replace(
        rx.tia, amp=dataclasses.replace(amp, **MODEL)))
    a = rx.tia.analyze(rx.equivalent_circuit())
    b = true.tia.analyze(true.equivalent_circuit())
    assert a.bandwidth == pytest.approx(b.bandwidth, rel=1e-2)
    assert a.phase_margin == pytest.approx(b.phase_margin, rel=1e-2)


def test_template_example_of_gain_points_loads():
    # the commented example in `photorx template`, uncommented in place of gbw, dc_gain, poles
    template = dfile.design_template()
    line = next(x for x in template.splitlines() if x.startswith("# gain_points = "))
    text = _with_amplifier([line[2:], "fit_poles = 1"])
    amp = dfile.loads_design(text).tia.amp
    assert amp.gbw == pytest.approx(100e6, rel=1e-2)  # the model the example was made from
    assert amp.poles[0] == pytest.approx(300e6, rel=3e-2)


@pytest.mark.parametrize("lines, key, words", [
    (['gbw = "1 GHz"', ('gain_points = [["1 kHz", "100 dB", "-1 deg"], ["1 MHz", "40 dB", '
      '"-90 deg"]]')], "[amplifier] gbw", ["gain_points"]),
    (['gbw = "1 GHz"', "fit_poles = 1"], "[amplifier] fit_poles", ["gain_points"]),
    (["dc_gain = 1000"], "[amplifier] gbw", ["missing", "gain_points"]),
    (['gain_points = [["1 kHz", "100 dB"]]'], "[amplifier] gain_points", ["frequency"]),
    (['gain_points = [["1 kHz", "100 V", "-1 deg"], ["1 MHz", "40 dB", "-90 deg"]]'],
     "[amplifier] gain_points", ["dB"]),
    (['gain_points = [["-1 kHz", "100 dB", "-1 deg"], ["1 MHz", "40 dB", "-90 deg"]]'],
     "[amplifier] gain_points", ["> 0"]),
    (['gain_points = [["1 kHz", "100 dB", "-1 deg"], ["1 MHz", "40 dB", "-90 deg"]]',
      "fit_poles = 3"], "[amplifier] frequency", ["parameters"]),
    (['gbw = "1 GHz"', 'zeros = ["1 GHz"]'], "[amplifier] zeros", ["at most"]),
    (['gbw = "1 GHz"', 'poles = ["2 GHz"]', 'zeros = ["0 Hz"]'], "[amplifier] zeros", [">"]),
])
def test_bad_amplifier_keys_name_the_key(lines, key, words):
    with pytest.raises(DesignError) as err:
        dfile.loads_design(_with_amplifier(lines))
    assert err.value.parameter == key
    for word in words:
        assert word in str(err.value)
