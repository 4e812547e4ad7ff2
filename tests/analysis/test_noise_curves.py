"""Tabulated amplifier noise curves in the noise integrals, the NoiseSpectrum and the sweeps."""

import dataclasses
import itertools
import sys
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants as sc
from scipy import integrate

import photorx as prx
from photorx.circuit.noise import integrated_output_noise
from photorx.analysis.sweep import sweep
from photorx.circuit.amplifier import OpAmp
from photorx.circuit.amplifier_noise import NoiseCurve
from photorx.circuit.tia import Tia
from photorx.device.equivalent_circuit import EquivalentCircuit

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # tests/ holds the ngspice runner
from spice import run_ngspice

# a voltage curve with kinks where the noise gain of the demo receiver peaks (GHz), and a
# current curve with kinks too: the integrals must resolve them
V_KINKED = ((1e3, 1e6, 3e8, 1e9, 1e10), (30e-9, 3e-9, 3e-9, 4.5e-9, 4.5e-9))
I_KINKED = ((1e2, 1e5, 1e9, 3e9), (20e-12, 2e-12, 2e-12, 3e-12))


def _with_amp(rx, **changes):
    tia = rx.tia
    return dataclasses.replace(rx, tia=dataclasses.replace(
        tia, amp=dataclasses.replace(tia.amp, **changes)))


def _reference_mean_square(rx, kinks=()):
    """Mean-square output noise [V^2]: scipy.integrate.quad of the design's own density,
    piecewise between half-decade edges and the curve's kinks (each piece smooth)."""
    spectrum = rx.noise()
    lo = float(rx.noise_band_low)

    def psd(f):
        return float(spectrum.output_density(f)) ** 2

    edges = np.unique(np.concatenate([np.logspace(np.log10(lo), 13, 2 * int(np.ceil(
        13 - np.log10(lo))) + 1), [k for k in kinks if k > lo]]))
    total = sum(integrate.quad(psd, a, b, epsrel=1e-9, limit=200)[0]
                for a, b in itertools.pairwise(edges))
    return total + integrate.quad(psd, edges[-1], np.inf, epsrel=1e-9, limit=200)[0]


@pytest.fixture(scope="module")
def kinked():
    rx = _with_amp(prx.demo_receiver(), voltage_noise=None, current_noise=None,
                   voltage_noise_corner=0.0, current_noise_corner=0.0,
                   voltage_noise_curve=V_KINKED, current_noise_curve=I_KINKED)
    return rx, _reference_mean_square(rx, V_KINKED[0] + I_KINKED[0])


def test_kinked_curve_sweep_and_adaptive_integrals_against_scipy(kinked):
    # Source: scipy.integrate.quad (epsrel 1e-9, split at every kink) of the same output
    # PSD; rtol 1e-4, the engine's stated accuracy. Sweep path: chain_noise's fixed grid
    # (Receiver.evaluate); adaptive path: NoiseSpectrum.output_rms.
    rx, ref = kinked
    assert rx.evaluate().output_noise_rms ** 2 == pytest.approx(ref, rel=1e-4)
    assert rx.noise().output_rms(rx.noise_band_low, np.inf) ** 2 == pytest.approx(ref, rel=1e-4)
    # the curve matters: the white levels alone give a clearly different total
    plain = _with_amp(rx, voltage_noise_curve=None, current_noise_curve=None)
    assert abs(plain.evaluate().output_noise_rms ** 2 / ref - 1) > 0.01


def test_kinked_curve_in_a_vectorised_sweep_equals_design_by_design(kinked):
    # the engine stays vectorised: one curve for every design of a sweep; each row equals
    # the same design evaluated alone (rtol 1e-4, the engine's accuracy)
    rx, _ = kinked
    rfs = rx.tia.rf * np.array([0.5, 1.0, 2.0])
    table = sweep(rx, rf=rfs)
    for rf, row in zip(rfs, table["output_noise_rms"]):
        one = dataclasses.replace(rx, tia=dataclasses.replace(rx.tia, rf=float(rf)))
        assert row ** 2 == pytest.approx(_reference_mean_square(
            one, V_KINKED[0] + I_KINKED[0]), rel=1e-4)


def test_sweeping_the_white_level_scales_the_curve(kinked):
    # the rule: voltage_noise scales the curve, so the e_n source scales as its square
    rx, _ = kinked
    table = sweep(rx, tia__amp__voltage_noise=[2.25e-9, 4.5e-9, 9e-9])
    # the sweep's e_n column is that source's input-referred rms [A]
    ms = table["noise_amp_voltage"].to_numpy() ** 2
    own = rx.evaluate().noise_by_source["amp_voltage"] ** 2
    np.testing.assert_allclose(ms / own, [0.25, 1.0, 4.0], rtol=2e-4)


def _flat_vs_white(rx, white_v, white_i):
    flat = _with_amp(rx, voltage_noise=None, current_noise=None, voltage_noise_corner=0.0,
                     current_noise_corner=0.0, voltage_noise_curve=((1.0, 1e3), (white_v,) * 2),
                     current_noise_curve=((1.0, 1e3), (white_i,) * 2))
    plain = _with_amp(rx, voltage_noise=white_v, current_noise=white_i,
                      voltage_noise_corner=0.0, current_noise_corner=0.0)
    return flat, plain


def test_flat_curve_is_the_white_model():
    # a flat table is the white-only model to 1e-12 (the shape is 1 up to rounding)
    flat, plain = _flat_vs_white(prx.demo_receiver(), 3e-9, 2e-12)
    f = np.geomspace(0.1, 1e11, 57)
    a, b = flat.noise(), plain.noise()
    for k, v in a.by_source(f).items():
        np.testing.assert_allclose(v, b.by_source(f)[k], rtol=1e-12, err_msg=k)
    assert a.output_rms() == pytest.approx(b.output_rms(), rel=1e-12)
    ra, rb = flat.evaluate(), plain.evaluate()
    for k, v in ra.noise_mean_square.items():
        assert v == pytest.approx(rb.noise_mean_square[k], rel=1e-12), k


def test_sampled_corner_curve_reproduces_the_corner_model():
    # The white-plus-1/f model sampled at 20 points per decade from 0.01 Hz to 1 THz. ln d is
    # linear between points, ln(e_w sqrt(1 + f_c/f)) is not: the interpolation error of a
    # line through two points is <= h^2/8 max|y''|, |y''| <= 1/8 in u = ln f, so the density
    # is within exp(h^2/64) - 1 = 2.1e-4 (h = ln 10 / 20), the power within twice that
    # (common practice: linear-interpolation error bound). Above 1 THz the held value is off
    # by f_c / 2 THz = 5e-8. Integrals: twice the density bound plus the two integrals' own
    # tolerance 1e-4 each.
    rx = prx.demo_receiver()
    amp = rx.tia.amp
    fc_v, fc_i = amp.voltage_noise_corner, 3e3
    assert fc_v > 0
    rx = _with_amp(rx, current_noise_corner=fc_i)
    f_tab = np.geomspace(1e-2, 1e12, 14 * 20 + 1)
    curves = _with_amp(
        rx, voltage_noise=None, current_noise=None, voltage_noise_corner=0.0,
        current_noise_corner=0.0,
        voltage_noise_curve=NoiseCurve.from_white_and_corner(amp.voltage_noise, fc_v, f_tab),
        current_noise_curve=NoiseCurve.from_white_and_corner(amp.current_noise, fc_i, f_tab,
                                                             "A/rtHz"))
    bound = np.expm1((np.log(10.0) / 20) ** 2 / 64)
    f = np.geomspace(1.0, 1e11, 211)
    a, b = curves.noise(), rx.noise()
    for k in ("amp_voltage", "amp_current"):
        np.testing.assert_allclose(a.by_source(f)[k], b.by_source(f)[k], rtol=bound, err_msg=k)
    tol = 2 * bound + 2e-4
    ra, rb = curves.evaluate(), rx.evaluate()
    for k in ("amp_voltage", "amp_current"):
        assert ra.noise_mean_square[k] == pytest.approx(rb.noise_mean_square[k], rel=tol), k
    assert a.output_rms() == pytest.approx(b.output_rms(), rel=tol)


# -- property: raising any density point raises the integrated noise ----------------------------
_CIRCUIT = {"gbw": 1e9, "dc_gain": 1e5, "poles": (), "rf": 1e4, "cf": 1e-12, "cd": 0.5e-12,
            "rsh": np.inf, "rs": 0.0, "cin": 0.0}


@st.composite
def one_over_f_tables(draw):
    """4 to 6 points from 1 Hz to 1 MHz, densities about 1/sqrt(f) (every decade weighs about
    the same in the integral) with a random factor 0.3 to 3 at each point."""
    n = draw(st.integers(4, 6))
    f = np.geomspace(1.0, 1e6, n)
    jitter = np.asarray(draw(st.lists(st.floats(0.3, 3.0), min_size=n, max_size=n)))
    return f, 5e-9 * np.sqrt(1e6 / f) * jitter


@settings(max_examples=15, deadline=None)
@given(one_over_f_tables(), st.data(), st.floats(1.05, 2.0))
def test_integrated_noise_rises_with_any_density_point(table, data, factor):
    f, d = table
    i = data.draw(st.integers(0, f.size - 1))
    raised = d.copy()
    raised[i] *= factor

    def ms(dens):
        curve = NoiseCurve(tuple(f), tuple(dens))
        out = integrated_output_noise(1.0, 1e6, rtol=1e-7, **_CIRCUIT, en=curve.white,
                                      en_shape=curve)
        return float(out["amp_voltage"])

    assert ms(raised) > ms(d) * (1 + 1e-5)


# -- ngspice: a TIA whose amplifier voltage noise is shaped by an RC network --------------------
KT = sc.k * 300.0
# amplifier and diode as test_noise.py's design A (white current noise, no shot noise)
TIA = {"gbw": 100e6, "dc_gain": 3e4, "rf": 47e3, "cf": 0.2e-12, "cd": 2e-12, "rsh": 5e7,
       "cin": 1.5e-12, "in_": 5e-15}
# two lag-lead sections (R1 in series, R2 + C to ground): |H| = |1 + j f/fz| / |1 + j f/fp|
SECTIONS = ((1.5915494e6, 15.915494e3, 1e-9), (53.051648e3, 26.525824e3, 1e-12))
WHITE = 4e-9  # e_n above both sections [V/rtHz]


def _shaping(f):
    h = np.ones_like(np.asarray(f, dtype=float), dtype=complex)
    for r1, r2, c in SECTIONS:
        s = 2j * np.pi * np.asarray(f, dtype=float)
        h = h * (1 + s * r2 * c) / (1 + s * (r1 + r2) * c)
    return np.abs(h)


def _hf_gain():
    return np.prod([r2 / (r1 + r2) for r1, r2, _ in SECTIONS])


def _curve_netlist():
    base = np.sqrt(4 * KT / 1e3)  # the 1 kohm generator's current noise [A/rtHz]
    p = TIA
    lines = [".options temp=26.85 tnom=26.85",
             "Iin 0 inm DC 0 AC 1", f"Cd inm 0 {p['cd']}", f"Rsh inm 0 {p['rsh']}",
             f"Cin inm 0 {p['cin']}", f"Rf inm out {p['rf']}", f"Cf inm out {p['cf']}",
             # white current noise: a 1 kohm resistor's 4kT/R, scaled by a CCCS
             "Vgi gi 0 DC 0", "Rgi gi 0 1e3", f"Fin 0 inm Vgi {p['in_'] / base:.12e}",
             # voltage noise: the same generator through a CCVS, then the RC sections with
             # noiseless resistors, each buffered by a unity VCVS
             "Vgv gv 0 DC 0", "Rgv gv 0 1e3", f"Hv a0 0 Vgv {WHITE / _hf_gain() / base:.12e}"]
    node = "a0"
    for i, (r1, r2, c) in enumerate(SECTIONS):
        lines += [f"R1s{i} {node} x{i} {r1} noisy=0", f"R2s{i} x{i} y{i} {r2} noisy=0",
                  f"Cs{i} y{i} 0 {c}", f"Eb{i} a{i + 1} 0 x{i} 0 1"]
        node = f"a{i + 1}"
    fd = p["gbw"] / p["dc_gain"]
    lines += [f"Ea na 0 {node} inm {p['dc_gain']}", "Rp0 na nb 1 noisy=0",
              f"Cp0 nb 0 {1 / (2 * np.pi * fd):.12e}", "Eo out 0 nb 0 1"]
    return "\n".join(lines)


@pytest.mark.ngspice
def test_rc_shaped_voltage_noise_against_ngspice():
    # Source: ngspice .noise (Debian package) of a TIA whose amplifier voltage noise is a
    # resistor's thermal noise shaped by two passive lag-lead RC sections (noiseless
    # resistors, buffered), 300 K. photorx gets that known e_n(f) tabulated at 40 points per
    # decade (interpolation error <= 1e-4 here). Required: 1 %; spot densities rtol 1e-4
    # (agree to ~2e-7), the integrated rms (ngspice's own 100-point-per-decade sum) rtol 2e-3
    # (agrees to ~1e-4).
    f_tab = np.geomspace(0.1, 1e11, 12 * 40 + 1)
    amp = OpAmp(gbw=TIA["gbw"], dc_gain=TIA["dc_gain"], current_noise=TIA["in_"],
                input_capacitance=TIA["cin"],
                voltage_noise_curve=(f_tab, WHITE / _hf_gain() * _shaping(f_tab)))
    assert amp.voltage_noise == pytest.approx(WHITE, rel=1e-8)
    net = EquivalentCircuit(capacitance=TIA["cd"], series_resistance=0.0,
                            shunt_resistance=TIA["rsh"], current=0.0)
    ns = Tia(amp, rf=TIA["rf"], cf=TIA["cf"]).noise(net, temperature=300.0)
    netlist = _curve_netlist()
    spec = run_ngspice(netlist, "noise v(out) Iin dec 10 1 1e10",
                       ["frequency", "onoise_spectrum"], plot="noise1")
    total = run_ngspice(netlist, "noise v(out) Iin dec 100 1 1e10", ["onoise_total"],
                        plot="noise2")["onoise_total"][0]
    f = np.real(spec["frequency"])
    np.testing.assert_allclose(ns.output_density(f), spec["onoise_spectrum"], rtol=1e-4)
    assert ns.output_rms(1.0, 1e10) == pytest.approx(total, rel=2e-3)
    # the shaping is really there: e_n at 1 Hz is 1/(high-frequency gain) = 303 times its
    # white level, and the white-only model misses the total by far more than the tolerance
    assert amp.voltage_noise_density(1.0) / WHITE == pytest.approx(1 / _hf_gain(), rel=1e-3)
    assert 1 / _hf_gain() > 300
    white_only = Tia(dataclasses.replace(amp, voltage_noise_curve=None), rf=TIA["rf"],
                     cf=TIA["cf"]).noise(net, temperature=300.0)
    assert abs(white_only.output_rms(1.0, 1e10) / total - 1) > 0.05
