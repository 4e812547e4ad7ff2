"""A receiver whose amplifier has a zero: evaluate(), noise, sweep and pulse agree with the stages.

The stage checks against outside references are in tests/circuit/test_amplifier_zeros.py;
here the receiver routes the zeros to every stage (as tests/analysis/test_receiver.py checks
for the all-pole amplifier), and its integrated noise is compared with scipy.integrate.quad
of the output PSD.
"""

from __future__ import annotations

import dataclasses

import numpy as np
import pytest
from scipy.integrate import quad

import photorx as prx
from photorx.circuit.noise import output_noise_psd


@pytest.fixture(scope="module")
def rz():
    rx = prx.demo_receiver()
    amp = dataclasses.replace(rx.tia.amp, poles=(25e9, 8e9), zeros=(6e9,))
    return dataclasses.replace(rx, tia=dataclasses.replace(rx.tia, amp=amp))


def test_loop_figures_match_tia_analysis(rz):
    r = rz.evaluate()
    m = rz.tia.analyze(rz.equivalent_circuit())
    for name in ("phase_margin", "crossover", "peaking_db", "rise_time", "dc_transimpedance"):
        np.testing.assert_allclose(getattr(r, name), abs(getattr(m, name)), rtol=1e-9,
                                   err_msg=name)
    # the zero changes the loop: not the all-pole receiver's figures
    base = prx.demo_receiver().evaluate()
    assert abs(r.phase_margin - base.phase_margin) > 1.0


def test_noise_figures_match_noise_spectrum_and_quad(rz):
    r = rz.evaluate()
    ns = rz.noise()
    np.testing.assert_allclose(r.output_noise_rms, ns.output_rms(rz.noise_band_low, np.inf),
                               rtol=1e-3)
    np.testing.assert_allclose(r.noise_bandwidth, ns.enbw(), rtol=1e-3)
    # Source: scipy.integrate.quad of the summed output PSD of the same circuit (the
    # spectrum's own parameters, zeros and post filter included), per decade; rtol 1e-3
    params = dict(ns.params) | {"filter_kind": rz.post_filter.kind,
                                "filter_order": rz.post_filter.order,
                                "filter_cutoff": rz.post_filter.cutoff}
    assert params["zeros"] == (6e9,)
    edges = np.logspace(np.log10(rz.noise_band_low), 13, 14)

    def total(f):
        return sum(output_noise_psd(np.array([f]), **params).values())[0]

    ms = sum(quad(total, a, b, limit=200, epsrel=1e-8)[0] for a, b in zip(edges[:-1], edges[1:]))
    assert ns.output_rms(rz.noise_band_low, np.inf) == pytest.approx(np.sqrt(ms), rel=1e-3)


def test_sweep_with_zeros_matches_single_designs(rz):
    rf = [2e3, 4e3]
    frame = prx.sweep(rz, **{"tia.rf": rf})
    for i, value in enumerate(rf):
        one = dataclasses.replace(rz, tia=dataclasses.replace(rz.tia, rf=value)).evaluate()
        for name in ("bandwidth", "phase_margin", "output_noise_rms"):
            assert frame[name].iloc[i] == pytest.approx(float(getattr(one, name)), rel=1e-6)


def test_pulse_response_integrates_to_dc_transimpedance(rz):
    # the impulse response of the chain integrates to its DC gain (final-value theorem)
    t = np.linspace(0.0, 5e-9, 20001)
    h = np.asarray(rz.impulse_response(t))
    area = np.trapezoid(h, t)
    assert area == pytest.approx(float(rz.evaluate().dc_transimpedance), rel=2e-3)
