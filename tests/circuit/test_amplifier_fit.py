"""Open-loop gain fitted to magnitude/phase points (photorx.circuit.amplifier_fit).

Source of the points: scipy.signal.freqs of a known zero-pole-gain model (synthetic
data-sheet curves), optionally with seeded Gaussian noise; the receiver built from the fit
is compared with the receiver of the true model.
"""

from __future__ import annotations

import warnings

import numpy as np
import pytest
import scipy.signal
from hypothesis import given, settings
from hypothesis import strategies as st

from photorx.circuit.amplifier import OpAmp
from photorx.circuit.amplifier_fit import fit_open_loop_gain
from photorx.circuit.tia import Tia
from photorx.device.equivalent_circuit import EquivalentCircuit
from photorx.errors import DesignError, ModelRangeWarning

MODELS = {
    "dominant_only": {"gbw": 80e6, "dc_gain": 2e5, "poles": (), "zeros": ()},
    "one_pole": {"gbw": 300e6, "dc_gain": 5e4, "poles": (450e6,), "zeros": ()},
    "pole_zero_pair": {"gbw": 150e6, "dc_gain": 1e5, "poles": (200e6, 1.5e9), "zeros": (90e6,)},
    "two_zeros": {"gbw": 1e9, "dc_gain": 3e4, "poles": (600e6, 2e9, 6e9),
                  "zeros": (300e6, 1.2e9)},
}
F = np.logspace(1, 10, 46)  # 10 Hz to 10 GHz, 5 points per decade


def _points(m, f=F):
    """20 log10 |A| [dB] and unwrapped arg A [deg] from scipy.signal.freqs of the zpk."""
    wd = 2 * np.pi * m["gbw"] / m["dc_gain"]
    z = -2 * np.pi * np.array(m["zeros"], dtype=float)
    p = -np.r_[wd, 2 * np.pi * np.array(m["poles"], dtype=float)]
    k = m["dc_gain"] * np.prod(-p) / np.prod(-z)
    _, h = scipy.signal.freqs(*scipy.signal.zpk2tf(z, p, k), worN=2 * np.pi * f)
    return 20 * np.log10(np.abs(h)), np.degrees(np.unwrap(np.angle(h)))


def _fit(m, mag, ph, **kw):
    return fit_open_loop_gain(F, mag, ph, poles=len(m["poles"]), zeros=len(m["zeros"]), **kw)


@pytest.mark.parametrize("name", list(MODELS))
def test_fit_recovers_known_model_from_exact_points(name):
    # noise-free points: every parameter within 1 % (the fit reaches ~1e-9); residuals tiny
    m = MODELS[name]
    fit = _fit(m, *_points(m))
    assert fit.dc_gain == pytest.approx(m["dc_gain"], rel=1e-2)
    assert fit.gbw == pytest.approx(m["gbw"], rel=1e-2)
    np.testing.assert_allclose(fit.poles, m["poles"], rtol=1e-2)
    np.testing.assert_allclose(fit.zeros, m["zeros"], rtol=1e-2)
    assert fit.worst_magnitude_error < 1e-3 and fit.worst_phase_error < 1e-2
    assert fit.acceptable


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_fit_with_noise_is_within_its_stated_uncertainty(seed):
    # seeded noise of 0.1 dB and 0.5 deg, the tolerances given to the fit; every parameter
    # within 4 of its stated standard errors (relative, from the scaled covariance)
    m = MODELS["pole_zero_pair"]
    mag, ph = _points(m)
    rng = np.random.default_rng(seed)
    fit = _fit(m, mag + rng.normal(0, 0.1, F.size), ph + rng.normal(0, 0.5, F.size),
               magnitude_tolerance=0.5, phase_tolerance=2.5)
    u = fit.uncertainty
    for got, true, sd in [(fit.dc_gain, m["dc_gain"], u["dc_gain"]), (fit.gbw, m["gbw"], u["gbw"]),
                          *zip(fit.poles, m["poles"], u["poles"]),
                          *zip(fit.zeros, m["zeros"], u["zeros"])]:
        assert 0 < sd < 0.2
        assert abs(np.log(got / true)) < 4 * sd
    assert fit.acceptable


def test_receiver_from_the_fit_matches_the_true_receiver():
    # bandwidth and phase margin of the same stage with the fitted amplifier, within 1 %,
    # from points with 0.1 dB / 0.5 deg noise
    m = MODELS["pole_zero_pair"]
    mag, ph = _points(m)
    rng = np.random.default_rng(7)
    fields = {"input_capacitance": 2e-12, "voltage_noise": 4e-9}
    amp_fit = OpAmp.from_gain_points(F, mag + rng.normal(0, 0.1, F.size),
                                     ph + rng.normal(0, 0.5, F.size), poles=2, zeros=1,
                                     **fields)
    amp_true = OpAmp(gbw=m["gbw"], dc_gain=m["dc_gain"], poles=m["poles"], zeros=m["zeros"],
                     **fields)
    assert amp_fit.voltage_noise == 4e-9 and amp_fit.input_capacitance == 2e-12
    net = EquivalentCircuit(capacitance=3e-12, series_resistance=20.0, shunt_resistance=1e8)
    a = Tia(amp_fit, rf=2e4, cf=0.3e-12).analyze(net)
    b = Tia(amp_true, rf=2e4, cf=0.3e-12).analyze(net)
    assert a.bandwidth == pytest.approx(b.bandwidth, rel=1e-2)
    assert a.phase_margin == pytest.approx(b.phase_margin, rel=1e-2)
    assert a.stable and b.stable


def test_phase_points_off_by_whole_turns_give_the_same_fit():
    # data sheets print phase from different origins (0, 360 deg, or wrapped); residuals are
    # wrapped, so whole turns added to any point change nothing
    m = MODELS["pole_zero_pair"]
    mag, ph = _points(m)
    a = _fit(m, mag, ph)
    turns = 360.0 * np.where(np.arange(F.size) % 2, 1.0, -2.0)
    b = _fit(m, mag, ph + turns)
    assert b.gbw == pytest.approx(a.gbw, rel=1e-6)
    np.testing.assert_allclose(b.poles, a.poles, rtol=1e-6)
    np.testing.assert_allclose(b.zeros, a.zeros, rtol=1e-6)
    np.testing.assert_allclose(b.phase_error, a.phase_error, atol=1e-6)


def test_magnitude_only_fit():
    # the gain of a minimum-phase model follows from its magnitude alone (Bode): 1 %
    m = MODELS["one_pole"]
    mag, _ = _points(m)
    fit = fit_open_loop_gain(F, mag, poles=1)
    assert fit.gbw == pytest.approx(m["gbw"], rel=1e-2)
    assert fit.poles[0] == pytest.approx(m["poles"][0], rel=1e-2)
    assert np.isnan(fit.worst_phase_error) and fit.acceptable


def test_poor_fit_warns_and_is_flagged():
    # three corners in the points, none allowed in the model: the phase cannot follow
    m = MODELS["two_zeros"]
    mag, ph = _points(m)
    with pytest.warns(ModelRangeWarning, match="misses the points"):
        fit = fit_open_loop_gain(F, mag, ph, poles=0)
    assert not fit.acceptable
    assert fit.worst_phase_error > 5.0
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        quiet = fit_open_loop_gain(F, mag, ph, poles=0, warn=False)
    assert not quiet.acceptable


@pytest.mark.parametrize("kwargs, parameter", [
    ({"frequency": [1e3, -1e4, 1e5]}, "frequency"),
    ({"frequency": [1e3, 1e3, 1e5]}, "frequency"),
    ({"magnitude_db": [100.0, 80.0]}, "magnitude_db"),
    ({"phase_deg": [0.0, np.nan, -90.0]}, "phase_deg"),
    ({"poles": 1.5}, "poles"),
    ({"poles": -1}, "poles"),
    ({"zeros": 1, "poles": 0}, "zeros"),
    ({"poles": 3, "zeros": 3}, "frequency"),  # 8 parameters from 6 values
    ({"magnitude_tolerance": 0.0}, "magnitude_tolerance"),
])
def test_bad_inputs_raise_design_error(kwargs, parameter):
    args = {"frequency": [1e3, 1e4, 1e5], "magnitude_db": [100.0, 90.0, 70.0],
            "phase_deg": [-5.0, -45.0, -85.0]} | kwargs
    with pytest.raises(DesignError) as err:
        fit_open_loop_gain(args.pop("frequency"), args.pop("magnitude_db"),
                           args.pop("phase_deg"), **args)
    assert err.value.parameter == parameter


def test_amplifier_refuses_gain_fields():
    m = MODELS["one_pole"]
    fit = _fit(m, *_points(m))
    with pytest.raises(DesignError, match="gbw"):
        fit.amplifier(gbw=1e9)


@settings(max_examples=25, deadline=None)
@given(bad=st.one_of(st.just(float("nan")), st.just(float("inf")), st.floats(max_value=0.0)),
       where=st.integers(0, 3))
def test_bad_frequency_anywhere_raises(bad, where):
    f = [1e3, 1e4, 1e5, 1e6]
    f[where] = bad
    with pytest.raises(DesignError, match="frequency"):
        fit_open_loop_gain(f, [100.0, 90.0, 70.0, 50.0], [-5.0, -45.0, -85.0, -90.0])
