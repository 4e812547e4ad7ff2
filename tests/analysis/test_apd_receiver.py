"""An avalanche photodiode in the receiver: multiplied signal and shot noise, the figures,
the optimum gain, temperature and gain sweeps."""

import dataclasses
import functools
import sys
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import constants as sc

import photorx as prx
from photorx.units import mm, per_cm3, um

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # tests/ holds the ngspice runner
from spice import run_ngspice

SETTINGS = settings(max_examples=8, deadline=None)
T_LOW, T_HIGH = 233.15, 358.15  # -40 and 85 degC


@functools.lru_cache(maxsize=None)
def _si_apd():
    # a Si reach-through structure, p+ | 30 um i | n+ (invented numbers)
    j = prx.PinJunction(prx.material("Si"), i_thickness=30 * um, i_doping=1e13 * per_cm3,
                        area=(0.5 * mm) ** 2, p_doping=1e19 * per_cm3, n_doping=1e19 * per_cm3)
    return prx.AvalanchePhotodiode(photodiode=prx.Photodiode(junction=j),
                                   surface_dark_current=1e-10, bulk_dark_current=1e-12)


@functools.lru_cache(maxsize=None)
def _sam_apd():
    return prx.AvalanchePhotodiode(structure=prx.SamStructure(area=(50 * um) ** 2),
                                   surface_dark_current=2e-9, bulk_dark_current=1e-10)


def _tia():
    amp = prx.OpAmp(gbw=1e9, dc_gain=1e5, voltage_noise=3e-9, current_noise=1e-15,
                    input_capacitance=2e-12)
    return prx.Tia(amp, rf=10e3, cf=0.3e-12)


@functools.lru_cache(maxsize=None)
def _rx(bias=560.0, power=1e-8):
    return prx.Receiver(photodiode=_si_apd(), tia=_tia(), reverse_bias=bias, wavelength=850e-9,
                        optical_power=power, bit_rate=155e6)


# ------------------------------------------------------------------ PIN and APD figures
def test_a_pin_has_gain_one_excess_noise_one_and_no_k():
    # McIntyre (1966): F(M = 1) = 1 for every k, so k does not apply to a PIN (NaN)
    rx = prx.demo_receiver()
    r = rx.evaluate()
    assert r.gain == 1.0 and r.excess_noise_factor == 1.0 and np.isnan(r.k_effective)
    df = prx.sweep(rx, reverse_bias=[1.0, 2.0])
    assert (df["gain"] == 1.0).all() and (df["excess_noise_factor"] == 1.0).all()
    assert "gain" not in set(rx.budget().tables["operating point"]["quantity"])


def test_apd_figures_follow_the_device():
    rx, apd = _rx(), _si_apd()
    r = rx.evaluate()
    assert r.gain == pytest.approx(apd.gain(560.0), rel=1e-12)
    assert r.excess_noise_factor == pytest.approx(apd.excess_noise_factor(560.0), rel=1e-12)
    assert r.k_effective == pytest.approx(apd.k_effective(560.0), rel=1e-12)
    # signal M R P at the amplifier, the APD's own breakdown in the check
    assert r.photocurrent == pytest.approx(apd.gain(560.0) * apd.responsivity(850e-9, 560.0) * 1e-8,
                                           rel=1e-12)
    assert r.breakdown_voltage == pytest.approx(apd.breakdown_voltage(), rel=1e-12)
    assert bool(r.bias_below_breakdown)
    rows = rx.budget().tables
    names = set(rows["operating point"]["quantity"]) | set(rows["noise"]["quantity"])
    assert any("avalanche gain" in n for n in names) and any("multiplied shot" in n for n in names)


def test_apd_sensitivity_against_the_closed_form_without_dark_current():
    # Agrawal, Fiber-Optic Communication Systems, 4th ed., 2010, sec. 4.5.2 (from memory):
    # zero level dark, no dark current: P = (Q / R)(q F B Q + sigma_T / M), R unity-gain
    apd = dataclasses.replace(_si_apd(), surface_dark_current=0.0, bulk_dark_current=0.0)
    rx = dataclasses.replace(_rx(), photodiode=apd, target_ber=1e-9)
    r = rx.evaluate()
    q_ = 5.997807  # Q for BER 1e-9 (Agrawal sec. 4.5.1: Q ~ 6)
    big_r = apd.responsivity(850e-9, 560.0)
    expected = q_ / big_r * (sc.e * r.excess_noise_factor * r.noise_bandwidth * q_
                             + r.circuit_noise_rms / r.gain)
    assert r.sensitivity == pytest.approx(expected, rel=1e-5)


def test_apd_snr_against_the_textbook_expression():
    # Agrawal 4th ed. sec. 4.4.4 (APD SNR; from memory): SNR = (m M R P)^2 / 2 /
    # (sigma_T^2 + 2 q M^2 F (R P + I_dm) B + 2 q I_ds B)
    rx, apd = _rx(power=1e-7), _si_apd()
    r = rx.evaluate()
    m, f = r.gain, r.excess_noise_factor
    i_ph = apd.responsivity(850e-9, 560.0) * 1e-7
    noise = (r.circuit_noise_rms**2 + 2 * sc.e * r.noise_bandwidth
             * (m**2 * f * (i_ph + 1e-12) + 1e-10))
    assert r.snr == pytest.approx((m * i_ph) ** 2 / 2 / noise, rel=1e-9)


def test_multiplied_shot_noise_against_ngspice():
    # Source: ngspice .noise (Debian package) on the same circuit: the diode's noise is a
    # current source of density sqrt(2 q (I_ds + M^2 F (I_ph + I_dm))) across Cd, made by a
    # resistor noise generator as in test_noise.py. rtol 1e-4 on the densities; the check
    # fails without M^2 F (the multiplied part dominates by > 10x here).
    rx = _rx(power=1e-7)
    ns, net = rx.noise(), rx.equivalent_circuit()
    amp, tia = rx.tia.amp, rx.tia
    kt = sc.k * 300.0
    shot = np.sqrt(2 * sc.e * net.shot_current)
    rg = 1e3
    base = np.sqrt(4 * kt / rg)
    fd = amp.gbw / amp.dc_gain
    lines = [".options temp=26.85 tnom=26.85", "Iin 0 j DC 0 AC 1", f"Cd j 0 {net.capacitance}",
             f"Rs j inm {net.series_resistance}", f"Cin inm 0 {amp.input_capacitance}",
             f"Rf inm out {tia.rf}", f"Cf inm out {tia.cf}",
             "Vshot gshot 0 DC 0", f"Rshot gshot 0 {rg}", f"Fshot 0 j Vshot {shot / base:.12e}",
             "Vin gin 0 DC 0", f"Rin gin 0 {rg}", f"Fin 0 inm Vin {amp.current_noise / base:.12e}",
             "Ven gen 0 DC 0", f"Ren gen 0 {rg}", f"Hen p 0 Ven {amp.voltage_noise / base:.12e}",
             f"Ea na 0 p inm {amp.dc_gain}", "Rp0 na nb 1 noisy=0",
             f"Cp0 nb 0 {1 / (2 * np.pi * fd):.12e}", "Eo out 0 nb 0 1"]
    out = run_ngspice("\n".join(lines), "noise v(out) Iin dec 10 1e3 1e9",
                      ["frequency", "onoise_spectrum"], plot="noise1")
    f = np.real(out["frequency"])
    np.testing.assert_allclose(ns.output_density(f), out["onoise_spectrum"], rtol=1e-4)
    # the multiplied shot noise is what the simulator sees, not 2 q I of the mean current
    assert net.shot_current > 10 * net.current


def test_multiplied_shot_noise_share_is_the_gain_path_part():
    # common practice: shares of one total; at high gain the multiplied shot noise dominates
    low = dataclasses.replace(_rx(power=1e-7), reverse_bias=float(_si_apd().bias_for_gain(1.5)))
    r_hi, r_lo = _rx(power=1e-7).evaluate(), low.evaluate()
    assert 0 < r_lo.multiplied_shot_noise_share < r_hi.multiplied_shot_noise_share < 1
    ms = r_hi.noise_mean_square
    lower = (ms["shot_signal"] + ms["shot_background"]) / sum(ms.values())
    assert lower <= r_hi.multiplied_shot_noise_share <= lower + ms["shot_dark"] / sum(ms.values())


# ------------------------------------------------------------------ hypothesis invariants
@SETTINGS
@given(st.lists(st.floats(0.0, 0.995), min_size=2, max_size=6, unique=True))
def test_gain_rises_with_bias_and_f_at_least_one_in_the_receiver(fractions):
    # McIntyre (1966): M rises monotonically to breakdown; F(M) >= 1 for M >= 1, 0 <= k <= 1
    vb = _si_apd().breakdown_voltage()
    v = np.sort(np.asarray(fractions)) * vb
    r = dataclasses.replace(_rx(), reverse_bias=v).evaluate()
    assert np.all(np.diff(r.gain) >= 0)
    assert np.all(r.excess_noise_factor >= 1.0)


@functools.lru_cache(maxsize=None)
def _optimum(objective):
    return prx.optimum_gain(_rx(), objective=objective)


@SETTINGS
@given(st.floats(1.0005, 400.0))
def test_snr_at_the_optimum_gain_beats_any_other_gain(m):
    # the optimum is a maximum of SNR(M) (Personick 1973); M near 1 is the PIN limit
    opt = _optimum("snr")
    v = float(prx.gain_axis(_rx(), m))
    other = dataclasses.replace(_rx(), reverse_bias=v).evaluate().snr
    assert opt.value >= other * (1 - 1e-9)


def test_optimum_gain_against_the_closed_forms():
    # Agrawal 4th ed. sec. 4.4.4 and 4.5.2 (from memory): thermal-noise-limited optimum,
    # k M^3 + (1-k) M = 2 sigma^2 / (2 q B I) for SNR, M = sqrt((sigma/(qBQ) + k - 1)/k)
    # for sensitivity. Here k_eff changes slowly with bias and the loop (not the
    # gain-bandwidth limit) sets the band, so the full model is within 10 % of them.
    for objective in ("snr", "sensitivity"):
        opt = _optimum(objective)
        assert opt.gain == pytest.approx(opt.closed_form_gain, rel=0.10)
        assert 0.0 <= opt.penalty_db < 0.1
        assert float(prx.gain_axis(_rx(), opt.gain)) == pytest.approx(opt.bias, rel=1e-9)


def test_closed_form_limits():
    # Agrawal sec. 4.4.4: for k -> 1 the SNR cubic gives M^3 = rhs; large M: (rhs / k)^(1/3)
    q_, b, i, sigma = sc.e, 1e8, 1e-9, 1e-7
    rhs = sigma**2 / (q_ * b * i)
    assert prx.optimum_gain_closed_form(sigma, i, b, 1.0) == pytest.approx(rhs ** (1 / 3),
                                                                           rel=1e-12)
    m = prx.optimum_gain_closed_form(sigma, i, b, 0.02)
    assert 0.02 * m**3 + 0.98 * m == pytest.approx(rhs, rel=1e-9)  # Cardano's round-off
    m_s = prx.optimum_gain_closed_form(sigma, i, b, 0.5, "sensitivity", q_value=7.0)
    assert m_s == pytest.approx(np.sqrt((sigma / (q_ * b * 7.0) - 0.5) / 0.5), rel=1e-12)
    with pytest.raises(prx.DesignError, match="objective"):
        prx.optimum_gain_closed_form(sigma, i, b, 0.5, "ber")


def test_optimum_gain_needs_an_apd_and_a_bit_rate():
    with pytest.raises(prx.DesignError, match="photodiode"):
        prx.optimum_gain(prx.demo_receiver())
    with pytest.raises(prx.DesignError, match="bit_rate"):
        prx.optimum_gain(dataclasses.replace(_rx(), bit_rate=None), objective="sensitivity")


# ------------------------------------------------------------------ temperature, gain axis
def test_temperature_sweep_at_fixed_bias_follows_breakdown():
    # Sze and Ng 3rd ed. ch. 2 / 13: breakdown (and so the bias for a gain) rises with
    # temperature, by about +0.1 %/K in Si (trade fact, from memory): gain falls at fixed bias
    rx = dataclasses.replace(_rx(), reverse_bias=525.0)
    df = prx.sweep(rx, temperature=[T_LOW, 300.0, T_HIGH])
    assert np.all(np.diff(df["gain"]) < 0) and np.all(np.diff(df["breakdown_voltage"]) > 0)
    coeff = np.polyfit(df["temperature"], df["breakdown_voltage"], 1)[0] / df["breakdown_voltage"][1]
    assert 0.0005 < coeff < 0.003
    for t, m in zip(df["temperature"], df["gain"]):
        assert m == pytest.approx(_si_apd().at_temperature(t).gain(525.0), rel=1e-10)


def test_bias_for_constant_gain_holds_the_gain_from_minus_40_to_85_degc():
    temps = np.linspace(T_LOW, T_HIGH, 6)
    v = prx.bias_for_constant_gain(_si_apd(), 50.0, temps)
    assert np.all(np.diff(v) > 0)
    held = [_si_apd().at_temperature(t).gain(vi) for t, vi in zip(temps, v)]
    np.testing.assert_allclose(held, 50.0, rtol=1e-6)
    df = prx.sweep(_rx(), gain=[50.0], temperature=temps)
    np.testing.assert_allclose(df["gain"], 50.0, rtol=1e-6)
    np.testing.assert_allclose(df["reverse_bias"], v, rtol=1e-9)


def test_sweep_in_gain_samples_the_steep_part():
    gains = [2.0, 5.0, 20.0, 50.0, 100.0]
    df = prx.sweep(_rx(), gain=gains)
    np.testing.assert_allclose(df["gain"], gains, rtol=1e-6)
    assert np.all(np.diff(df["reverse_bias"]) > 0)
    # gains 20 to 100 sit within 4 % of breakdown: a 1 %-of-V_B volt grid holds 3 points there
    assert df["reverse_bias"].iloc[-1] - df["reverse_bias"].iloc[-3] < 0.04 * _si_apd().breakdown_voltage()
    with pytest.raises(prx.DesignError, match="gain"):
        prx.sweep(_rx(), gain=[10.0], reverse_bias=[1.0])
    with pytest.raises(prx.DesignError, match="photodiode"):
        prx.sweep(prx.demo_receiver(), gain=[10.0])


def test_sam_apd_in_the_receiver():
    # InP k about 0.4-0.5 (trade fact, from memory); F = k M + (1-k)(2 - 1/M) (McIntyre)
    apd = _sam_apd()
    v = float(apd.bias_for_gain(10.0))
    rx = prx.Receiver(photodiode=apd, tia=_tia(), reverse_bias=v, wavelength=1550e-9,
                      optical_power=1e-6)
    r = rx.evaluate()
    assert r.gain == pytest.approx(10.0, rel=1e-6)
    k = r.k_effective
    assert r.excess_noise_factor == pytest.approx(k * 10 + (1 - k) * (2 - 0.1), rel=1e-9)
    with pytest.raises(prx.DesignError, match="reverse_bias"):
        dataclasses.replace(rx, reverse_bias=1.01 * apd.breakdown_voltage()).evaluate()
