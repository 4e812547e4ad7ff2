"""Digital receivers in the time domain: pulse response, eye, ISI penalty, sensitivity.

Outside references, named beside each check:
- scipy.signal (lti impulse and step of the closed-loop polynomial times a Bessel filter
  that scipy designs itself);
- closed forms of the single-pole chain: p(t) = R (1 - exp(-t/tau)) during the bit,
  R (exp(T/tau) - 1) exp(-t/tau) after; worst-case opening 1 - 2 exp(-T/tau) (every later
  cursor positive; Agrawal, Fiber-Optic Communication Systems, 4th ed., 2010, sec. 4.7;
  Saeckinger, Broadband Circuits for Optical Fiber Communication, 2005, ch. 4);
- the full raised-cosine pulse (Nyquist): zero ISI at the decision instants and
  transitions through half amplitude at mid-symbol (Proakis, Digital Communications,
  4th ed., 2001, sec. 9.2);
- the Gaussian decision BER Q = erfc(x / sqrt 2) / 2 (scipy.special.erfc);
- PAM4 needs 3x the optical amplitude of NRZ at one symbol rate, 10 log10(3) = 4.77 dB,
  for signal-independent noise (common practice);
- Personick's I2 = 0.564, I3 = 0.0868 for an NRZ input and a full raised-cosine output
  (Personick, Bell Syst. Tech. J. 52 (1973) 843; from memory);
- the area of the impulse response is H(0), the DC transimpedance (Fourier transform at 0).
"""

import dataclasses

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st
from scipy import signal, special

import photorx as prx
from photorx.analysis.digital_eye import (ber_of_eye, isi_jitter, level_currents, personick_integrals,
                                          statistical_sensitivity, vertical_opening, worst_case_opening)
from photorx.analysis.digital import _eye_arrays
from photorx.analysis.digital_patterns import pattern_symbols
from photorx.analysis.digital_response import periodic_response
from photorx.analysis.sensitivity import q_from_ber, required_average_power
from photorx.circuit.loop_poles import closed_loop_polynomial
from photorx.constants import q as Q_E


def _datasheet_diode(capacitance=1e-12, series_resistance=10.0):
    # a diode known by numbers only: H_pd = 1, so the whole chain is rational
    return prx.Photodiode.from_datasheet(responsivity=0.8, capacitance=[capacitance] * 2,
                                         capacitance_bias=[0, 10], dark_current=1e-10,
                                         dark_current_bias=5.0, series_resistance=series_resistance)


def _single_pole_rx(bit_rate, tau=1e-9):
    """Rf = 1 kohm, Cf = tau / Rf behind a fast amplifier: one pole at 1/tau, the other
    at 1.6e13 rad/s (6e-5 tau)."""
    amp = prx.OpAmp(gbw=3e12, dc_gain=1e5, voltage_noise=1e-9, current_noise=1e-12,
                    input_capacitance=1e-13)
    return prx.Receiver(photodiode=_datasheet_diode(1e-13, 0.0), tia=prx.Tia(amp, rf=1e3, cf=tau / 1e3),
                        optical_power=1e-4, bit_rate=bit_rate, wavelength=1310e-9)


@pytest.fixture(scope="module")
def demo():
    return prx.demo_receiver() if hasattr(prx, "demo_receiver") else None


@pytest.fixture(scope="module")
def link():
    from importlib.resources import files

    return prx.load_design(str(files("photorx") / "designs" / "ingaas-pin-1310.toml"))


@pytest.fixture(scope="module")
def rational_rx():
    amp = prx.OpAmp(gbw=2e9, dc_gain=1e4, voltage_noise=3e-9, current_noise=2e-12,
                    input_capacitance=0.5e-12, poles=(5e9,))
    return prx.Receiver(photodiode=_datasheet_diode(), tia=prx.Tia(amp, rf=3e3, cf=0.1e-12),
                        optical_power=2e-5, bit_rate=1e9, wavelength=1310e-9,
                        post_filter=prx.PostFilter("bessel", 4, 800e6))


# ------------------------------------------------------------------ the rational part
def test_rational_chain_matches_scipy_signal(rational_rx):
    rx = rational_rx
    args = rx.tia._args(rx.equivalent_circuit())
    den_loop = np.asarray(closed_loop_polynomial(**args))[::-1]  # highest power first
    b_f, a_f = signal.bessel(4, 2 * np.pi * 800e6, btype="low", analog=True, norm="mag")
    system = signal.lti(np.polymul([args["dc_gain"]], b_f), np.polymul(den_loop, a_f))
    t = np.linspace(0.0, 6e-9, 601)
    _, h_ref = signal.impulse(system, T=t)
    _, s_ref = signal.step(system, T=t)
    h = rx.impulse_response(t)
    np.testing.assert_allclose(h, h_ref, atol=1e-7 * np.max(np.abs(h_ref)))
    # a 1 A pulse of one bit is the step minus the step delayed by T (linearity)
    p = rx.pulse_response(t)
    s_delayed = np.interp(t - 1e-9, t, s_ref, left=0.0)
    np.testing.assert_allclose(p, s_ref - s_delayed, atol=1e-6 * np.max(s_ref))


def test_single_pole_pulse_response_and_worst_case_penalty_match_the_closed_form():
    tau = 1e-9
    for ratio in (1.5, 2.0, 3.0):  # T / tau
        rx = _single_pole_rx(1.0 / (ratio * tau), tau)
        period = ratio * tau
        t = np.linspace(0.0, 12 * tau, 241)
        closed = np.where(t < period, 1e3 * -np.expm1(-t / tau),
                          1e3 * np.expm1(period / tau) * np.exp(-t / tau))
        # the far pole (6e-5 tau) delays the waveform by about 6e-5 tau
        np.testing.assert_allclose(rx.pulse_response(t), closed, atol=2e-4 * 1e3)
        # the kink of the pulse at t = T is where the band-limited samples err most:
        # 256 samples per bit keep that below 2e-3
        eye = rx.eye(samples_per_symbol=256)
        opening = 1.0 - 2.0 * np.exp(-ratio)
        assert eye.worst_case_opening == pytest.approx(opening, abs=3e-3)
        assert eye.worst_case_penalty_db == pytest.approx(-10 * np.log10(opening), abs=0.02)
        assert 0.0 <= eye.opening - eye.worst_case_opening < 1e-3  # PRBS7 holds the worst pattern


def test_single_pole_statistical_sensitivity_against_brute_force():
    """Every non-zero 7-bit history once (the PRBS7 windows), closed-form cursors, the
    Gaussian tails with scipy.special.erfc, and the power found by scipy's brentq."""
    from scipy.optimize import brentq

    tau, ratio = 1e-9, 2.0
    rx = _single_pole_rx(1.0 / (ratio * tau), tau)
    eye = rx.eye(samples_per_symbol=256)
    r = rx.evaluate()
    cursors = -np.expm1(-ratio) * np.exp(-ratio * np.arange(7))  # p0, p1, ... at t = T + kT
    words = (np.arange(1, 128)[:, None] >> np.arange(7)[None, :]) & 1
    s = words @ cursors
    bit = words[:, 0]
    resp, sig_c, enbw, dark = r.responsivity, r.circuit_noise_rms, r.noise_bandwidth, abs(r.dark_current)

    def log_ber(power):
        i1, i0 = 2 * resp * power + dark, dark  # infinite extinction ratio
        s1, s0 = np.sqrt(sig_c ** 2 + 2 * Q_E * i1 * enbw), np.sqrt(sig_c ** 2 + 2 * Q_E * i0 * enbw)
        level = i0 + (i1 - i0) * s
        up, lo = level[bit == 1].min(), level[bit == 0].max()
        th = (up * s0 + lo * s1) / (s0 + s1)
        tails = np.where(bit == 1, 0.5 * special.erfc((level - th) / s1 / np.sqrt(2)),
                         0.5 * special.erfc((th - level) / s0 / np.sqrt(2)))
        return np.log(max(tails.mean(), 1e-300)) - np.log(rx.target_ber)

    ref = brentq(lambda lp: log_ber(np.exp(lp)), np.log(1e-9), np.log(1e-2), xtol=1e-12)
    assert eye.sensitivity == pytest.approx(np.exp(ref), rel=3e-3)
    assert eye.sensitivity_noise_only == pytest.approx(r.sensitivity, rel=1e-6)
    assert 0.0 < eye.isi_penalty_db < eye.worst_case_penalty_db


# --------------------------------------------------------------- zero-ISI (Nyquist) chains
def _raised_cosine_chain(period):
    """H(f) = RC(f) / sinc(f T): an NRZ input becomes a full raised-cosine pulse (1 kohm)."""
    def response(f):
        x = np.abs(np.asarray(f, dtype=float)) * period
        rc = np.where(x < 1.0, np.cos(np.pi * x / 2) ** 2, 0.0)
        return 1e3 * rc / np.sinc(np.minimum(x, 0.999)) + 0j
    return response


def test_raised_cosine_chain_has_no_isi_and_no_jitter():
    period, m = 1e-9, 32
    response = _raised_cosine_chain(period)
    a = pattern_symbols("prbs9")
    levels = a.astype(int)
    wave = periodic_response(response, a, period, m) / 1e3
    # the NRZ rectangle is undone by 1/sinc, so the output is the delayed raised cosine
    # centred half a symbol after each symbol starts (the rectangle's centre)
    shift = m // 2
    traces = np.roll(wave, -shift).reshape(-1, m)
    opening = vertical_opening(traces, levels, 2)
    assert opening[0] == pytest.approx(1.0, abs=1e-9)  # zero ISI at the centre (Nyquist)
    single = np.zeros(a.size)
    single[0] = 1.0
    pulse = np.roll(periodic_response(response, single, period, m) / 1e3, -shift)
    t = np.arange(pulse.size) * period / m
    t = np.where(t > t[-1] / 2, t - t[-1] - period / m, t)  # centred times (cyclic)
    x = t / period
    with np.errstate(invalid="ignore", divide="ignore"):
        closed = np.where(np.abs(np.abs(x) - 0.5) < 1e-9, 0.5,
                          np.sinc(x) * np.cos(np.pi * x) / (1.0 - 4.0 * x ** 2))
    np.testing.assert_allclose(pulse, closed, atol=1e-8)  # Proakis sec. 9.2
    assert worst_case_opening(pulse.reshape(-1, m), 2)[0] == pytest.approx(1.0, abs=1e-9)
    pp, rms = isi_jitter(np.roll(wave, -shift), levels, 2, m, 0, period)
    assert pp < 1e-6 * period and rms < 1e-6 * period  # every transition crosses at mid-symbol


# ---------------------------------------------------------------------------- noise and BER
def test_gaussian_eye_ber_matches_erfc():
    sig = np.array([2e-7, 3e-7])
    cur = np.array([1e-6, 5e-6])
    levels = np.array([0, 1, 0, 1])
    ideal = levels.astype(float)
    q_val = (cur[1] - cur[0]) / sig.sum()
    assert ber_of_eye(ideal, levels, 2, cur, sig) == pytest.approx(
        0.5 * special.erfc(q_val / np.sqrt(2)), rel=1e-12)
    # with ISI: every symbol's own tail from the equal-Q threshold of the inner edges
    s = np.array([0.1, 0.8, 0.0, 1.0])
    i_k = cur[0] + (cur[1] - cur[0]) * s
    th = (i_k[1] * sig[0] + i_k[0] * sig[1]) / sig.sum()
    tails = [0.5 * special.erfc((th - i_k[0]) / sig[0] / np.sqrt(2)),
             0.5 * special.erfc((i_k[1] - th) / sig[1] / np.sqrt(2)),
             0.5 * special.erfc((th - i_k[2]) / sig[0] / np.sqrt(2)),
             0.5 * special.erfc((i_k[3] - th) / sig[1] / np.sqrt(2))]
    assert ber_of_eye(s, levels, 2, cur, sig) == pytest.approx(np.mean(tails), rel=1e-12)


def test_noise_only_statistical_sensitivity_is_the_receiver_sensitivity():
    levels = np.array([0, 1, 1, 0, 1])
    args = dict(responsivity=0.9, circuit_rms=3e-7, noise_bandwidth=1e9, extinction_ratio=10.0,
                dark_current=1e-9)
    p = statistical_sensitivity(levels.astype(float), levels, 2, 1e-12, **args)
    ref = required_average_power(q_from_ber(1e-12), 0.9, 3e-7, 1e9, 10.0, 1e-9)
    assert p == pytest.approx(ref, rel=1e-8)


def test_apd_noise_only_statistical_sensitivity_is_the_receiver_sensitivity():
    """An APD: signal M R, its shot noise M F times (Personick 1973; the same closed form as
    required_average_power with noise_factor), dark current at its shot-noise equivalent."""
    levels = np.array([0, 1, 1, 0, 1])
    m, f = 20.0, 3.5
    args = dict(responsivity=0.5 * m, circuit_rms=3e-7, noise_bandwidth=1e9,
                extinction_ratio=10.0, dark_current=1e-9)
    p = statistical_sensitivity(levels.astype(float), levels, 2, 1e-12, **args,
                                noise_factor=m * f)
    ref = required_average_power(q_from_ber(1e-12), 0.5 * m, 3e-7, 1e9, 10.0, 1e-9,
                                 noise_factor=m * f)
    assert p == pytest.approx(ref, rel=1e-8)
    pin_like = statistical_sensitivity(levels.astype(float), levels, 2, 1e-12, **args)
    assert pin_like < p  # the excess noise costs sensitivity


def test_apd_design_isi_sensitivity_counts_the_gain():
    """The shipped APD demo (bit rate set): the ISI sensitivity sits at or above the
    noise-only one; without the gain in it, it would sit about M times lower."""
    r = prx.load_design("si-apd-850").evaluate()
    assert float(r.gain) > 5
    assert float(r.sensitivity_isi) >= 0.98 * float(r.sensitivity)
    assert float(r.sensitivity_isi) < 3.0 * float(r.sensitivity)


def test_apd_eye_counts_the_excess_noise_as_evaluate_does():
    """The Eye of an APD and the ISI figures of evaluate() share the noise model (signal
    M R P, its shot noise M F times, dark current at I_ds + M^2 F I_dm) and the harmonics:
    they agree as for a PIN (test_evaluate_reports_the_isi_figures_only_with_a_bit_rate).
    The noise-only sensitivity of the eye is the receiver's closed-form sensitivity
    (required_average_power, Personick 1973)."""
    rx = prx.load_design("si-apd-850")
    r = rx.evaluate()
    eye = rx.eye(samples_per_symbol=16)
    assert eye.sensitivity == pytest.approx(float(r.sensitivity_isi), rel=1e-4)
    assert eye.sensitivity_noise_only == pytest.approx(float(r.sensitivity), rel=1e-6)
    assert eye.isi_penalty_db == pytest.approx(float(r.isi_penalty_db), abs=1e-3)


def test_pam4_noise_limited_penalty_is_about_4_8_db():
    """Same symbol rate and signal-independent noise (shot noise made negligible): PAM4
    needs 3x the NRZ amplitude, 10 log10(3) = 4.77 dB (common practice); the exact figure
    counts the 3/2 more neighbours per symbol: Q' = Q^-1(4/3 BER) (scipy erfcinv)."""
    ber = 1e-12
    kw = dict(responsivity=1.0, circuit_rms=1e-6, noise_bandwidth=1e-6)
    nrz_levels = np.array([0, 1])
    pam_levels = np.array([0, 1, 2, 3])
    p_nrz = statistical_sensitivity(nrz_levels.astype(float), nrz_levels, 2, ber, **kw)
    p_pam = statistical_sensitivity(pam_levels / 3.0, pam_levels, 4, ber, **kw)
    penalty = 10 * np.log10(p_pam / p_nrz)
    assert penalty == pytest.approx(10 * np.log10(3.0), abs=0.1)
    q_nrz = np.sqrt(2) * special.erfcinv(2 * ber)
    q_pam = np.sqrt(2) * special.erfcinv(2 * ber * 4 / 3)
    assert penalty == pytest.approx(10 * np.log10(3 * q_pam / q_nrz), abs=1e-6)


def test_level_currents_keep_the_average_power():
    cur = level_currents(1e-5, 10.0, 0.8, 0.0, 4)
    np.testing.assert_allclose(cur.mean(), 0.8e-5, rtol=1e-12)
    assert cur[-1] / cur[0] == pytest.approx(10.0)


# ------------------------------------------------------------------ the whole chain
def test_pulse_and_impulse_areas_equal_the_dc_transimpedance(link):
    """Area of h = H(0) (Fourier transform at 0), with the photodiode's transit response."""
    zt0 = link.evaluate().dc_transimpedance
    t = np.linspace(0.0, 40e-9, 40001)
    h = link.impulse_response(t)
    assert np.trapezoid(h, t) == pytest.approx(zt0, rel=2e-3)
    p = link.pulse_response(t)
    assert np.trapezoid(p, t) == pytest.approx(zt0 / link.bit_rate, rel=1e-3)


def test_diffusion_tail_slows_the_pulse_and_keeps_its_area():
    """A silicon PIN at 850 nm with undepleted top layer: the slow diffusion tail of the
    photodiode model (its diffusion time constant) carries part of the charge late."""
    si = prx.material("Si")
    j = prx.PinJunction(si, i_thickness=20e-6, i_doping=1e13 * 1e6, area=4e-8,
                        p_doping=1e25, n_doping=1e25)
    pd = prx.Photodiode(junction=j, top_thickness=2e-6, lifetime=1e-7)
    amp = prx.OpAmp(gbw=1.5e9, dc_gain=1e5, voltage_noise=4e-9, current_noise=1.5e-12,
                    input_capacitance=1e-12)
    rx = prx.Receiver(photodiode=pd, tia=prx.Tia(amp, rf=1e4, cf=0.3e-12), reverse_bias=5.0,
                      wavelength=850e-9, optical_power=1e-5, bit_rate=50e6)
    tau_d = pd.diffusion_time_constant(850e-9, 5.0)
    assert tau_d > 5e-9
    t = np.linspace(0.0, 60 * tau_d, 60001)
    p = rx.pulse_response(t)
    zt0 = rx.evaluate().dc_transimpedance
    assert np.trapezoid(p, t) == pytest.approx(zt0 / 50e6, rel=5e-3)
    flat = dataclasses.replace(rx, photodiode=_datasheet_diode())
    # late in the tail the diode's pulse is still well above the rational-only chain's
    late = t > 5 * tau_d
    assert np.max(p[late]) > 100 * np.max(np.abs(flat.pulse_response(t[late])))


def test_step_from_the_pulse_response_matches_the_step_figures(rational_rx):
    rx = dataclasses.replace(rational_rx, post_filter=None)
    m = rx.tia.analyze(rx.equivalent_circuit())
    period = 1.0 / rx.bit_rate
    t = np.linspace(0.0, 30 * period, 30001)
    p = rx.pulse_response(t)
    dt = t[1] - t[0]
    k = int(round(period / dt))
    step = np.array(p)
    for shift in range(1, 30):  # a step is the sum of consecutive bits
        step[shift * k:] += p[:-shift * k]
    zt0 = float(np.abs(m.dc_transimpedance))
    y = step / zt0
    t10, t90 = np.interp(0.1, y[:2000], t[:2000]), np.interp(0.9, y[:2000], t[:2000])
    assert t90 - t10 == pytest.approx(m.rise_time, rel=2e-3)
    assert np.max(y) - 1.0 == pytest.approx(m.overshoot, abs=2e-4)


def test_personick_integrals():
    period = 1.0
    i2, i3 = personick_integrals(_raised_cosine_chain(period), 1.0, n_points=40001)
    assert i2 == pytest.approx(0.564, abs=2e-3)
    assert i3 == pytest.approx(0.0868, abs=5e-4)


def test_personick_i2_is_the_noise_bandwidth_over_the_bit_rate(link):
    eye = link.eye()
    r = link.evaluate()
    assert eye.personick_i2 * link.bit_rate == pytest.approx(r.noise_bandwidth, rel=1e-3)
    assert 0 < eye.personick_i3 < np.inf


def test_evaluate_reports_the_isi_figures_only_with_a_bit_rate(link):
    r = link.evaluate()
    eye = link.eye(samples_per_symbol=16)
    # evaluate() interpolates the photodiode model between harmonics (1e-4 of the figures)
    assert r.eye_opening == pytest.approx(eye.opening, abs=1e-4)
    assert r.sensitivity_isi == pytest.approx(eye.sensitivity, rel=1e-4)
    assert r.isi_penalty_db == pytest.approx(eye.isi_penalty_db, abs=1e-3)
    analog = dataclasses.replace(link, bit_rate=None).evaluate()
    assert np.isnan(analog.eye_opening) and np.isnan(analog.isi_penalty_db)
    assert "ISI power penalty" not in repr(analog)


def test_eye_closes_as_bandwidth_falls(link):
    slow = dataclasses.replace(link, post_filter=prx.PostFilter("bessel", 4, 300e6)).eye()
    fast = link.eye()
    assert slow.opening < fast.opening and slow.isi_penalty_db > fast.isi_penalty_db
    assert slow.width < fast.width and slow.jitter_pp > fast.jitter_pp


def test_eye_pam4_and_plot(link):
    eye = link.eye(bit_rate=1.25e9, modulation="pam4", pattern="prbs9")
    assert eye.symbol_rate == pytest.approx(0.625e9)
    assert eye.traces.shape == (511, 32) and set(np.unique(eye.levels)) == {0, 1, 2, 3}
    assert eye.sensitivity > link.eye(bit_rate=0.625e9).sensitivity  # 3 sub-eyes, same baud
    fig = eye.plot()
    assert fig.axes and "PAM4" in fig.axes[0].get_title()
    assert "ps" in fig.axes[0].xaxis.get_major_formatter()(1e-10)  # engineering time axis


def test_bandwidth_ratio_study_finds_an_interior_optimum(link):
    table = prx.bandwidth_ratio_study(link, vary="cf", values=np.geomspace(10e-15, 1e-12, 21))
    best = table.attrs["best"]
    assert best["sensitivity_isi_dbm"] == table["sensitivity_isi_dbm"].min()
    assert table["ratio"].iloc[0] > best["ratio"] > table["ratio"].iloc[-1]  # a trade, not an edge


# ------------------------------------------------------------------ input paths and invariants
@given(st.one_of(st.floats(allow_nan=True, allow_infinity=True), st.integers(-10, 0),
                 st.text(max_size=5), st.none()))
@settings(max_examples=40)
def test_bad_bit_rates_name_the_parameter(rate):
    rx = _single_pole_rx(1e8)
    if isinstance(rate, float) and 1.0 <= rate <= 1e12:
        return
    with pytest.raises(prx.DesignError) as err:
        rx.eye(bit_rate=rate) if rate is not None else dataclasses.replace(rx, bit_rate=None).eye()
    assert err.value.parameter == "bit_rate" and "bit/s" in str(err.value)


@given(ratio=st.floats(0.3, 8.0), q_extra=st.floats(0.0, 2.0))
@settings(max_examples=15)
def test_openings_and_penalties_are_bounded(ratio, q_extra):
    """Worst-case opening <= PRBS opening <= 1 and the worst-case penalty >= 0 for a
    two-pole chain of any damping and any bit rate (Casper et al. 2002: the peak-distortion
    pattern is the worst of all patterns)."""
    tau = 1e-9
    w0 = 1.0 / tau
    zeta = 0.3 + q_extra
    period = ratio * tau

    def response(f):
        s = 2j * np.pi * np.asarray(f)
        return w0 ** 2 / (s ** 2 + 2 * zeta * w0 * s + w0 ** 2)
    a = pattern_symbols("prbs7")
    lv = a.astype(int)
    traces, cursors, _, _ = _eye_arrays(response, a, lv, 2, period, 16)
    wc = worst_case_opening(cursors, 2)
    op = vertical_opening(traces, lv, 2)
    pulse = cursors.reshape(-1)
    m = 16
    assert np.all(wc <= 1.0 + 1e-9)
    best_phase = int(np.argmax(wc))  # where the peak cursor decides (the alignment's row)
    assert wc[best_phase] <= op[best_phase] + 1e-9
    assert np.max(op) <= 1.0 + 1e-6 + 2 * np.sum(np.abs(pulse[m * 7:]))  # tail beyond 7 bits
    best = np.max(wc)
    if best > 0:
        assert -10 * np.log10(best) >= -1e-9


def test_pattern_response_is_the_superposition_of_exact_pulses(rational_rx):
    """The FFT pattern engine against the sum of exact (partial-fraction) pulse responses,
    one per bit of the repeated pattern: y(t) = sum_k a_k sum_n p(t - kT - nNT)."""
    from photorx.analysis.digital import chain_response

    rx = rational_rx
    period, m = 1.0 / rx.bit_rate, 16
    a = pattern_symbols("prbs7")
    wave = periodic_response(chain_response(rx), a, period, m)
    n_samples = a.size * m
    # the exact pulse once on every sample offset t - kT + nNT (n = 0, 1: the pulse has
    # decayed below 1e-12 after one 127-bit period)
    offsets = np.arange(-n_samples, 2 * n_samples)
    pulse = rx.pulse_response(offsets * period / m)
    j = np.arange(n_samples)
    total = np.zeros(n_samples)
    for n in range(2):
        for k in np.nonzero(a)[0]:
            total += pulse[j - k * m + n * n_samples + n_samples]
    # band-limited samples of a pulse with kinks: about 1e-4 of the peak
    np.testing.assert_allclose(wave, total, atol=3e-4 * np.max(total))


def test_gaussian_eye_height_of_an_ideal_eye():
    """No ISI: height = (I1 - I0) - Q (sigma1 + sigma0), Q from scipy's erfcinv."""
    from photorx.analysis.digital_eye import height_at_ber

    levels = np.array([0, 1, 1, 0])
    traces = np.repeat(levels.astype(float)[:, None], 8, axis=1)
    cur, sig = np.array([1e-6, 9e-6]), np.array([2e-7, 4e-7])
    q_val = np.sqrt(2) * special.erfcinv(2e-12)
    h = height_at_ber(traces, levels, 2, cur, sig, q_val)
    np.testing.assert_allclose(h, 8e-6 - q_val * 6e-7, rtol=1e-12)


@given(cf=st.floats(20e-15, 400e-15), rate=st.floats(0.3e9, 3e9))
@settings(max_examples=6)
def test_receiver_eye_invariants(link, cf, rate):
    """On the 1310 nm demo at any Cf and bit rate: the openings are at most ideal, the
    worst-case pattern is no better than PRBS7 and its penalty is >= 0 (Casper et al. 2002)."""
    rx = dataclasses.replace(link, tia=dataclasses.replace(link.tia, cf=cf), bit_rate=rate)
    if not rx.evaluate().stable:
        with pytest.raises(prx.DesignError):
            rx.eye(samples_per_symbol=16)
        return
    eye = rx.eye(samples_per_symbol=16)
    assert eye.worst_case_opening <= eye.opening + 1e-9
    assert eye.opening <= 1.0 + 1e-3  # peaking rings past the 7-bit words by less than this
    assert eye.worst_case_opening <= 1.0 + 1e-9
    assert eye.worst_case_penalty_db >= -1e-9 or not np.isfinite(eye.worst_case_penalty_db)
    assert eye.height >= 0 and 0 <= eye.width <= 1.0 / rate


def test_isi_figures_of_a_design_do_not_depend_on_its_sweep_companions(link):
    """common practice (a sweep is many independent evaluations): each design thins the
    photodiode harmonics with its own step, so a design's ISI figures in a sweep equal its
    own evaluate(). At 10 Gbit/s the demo's steps differ with the bias (8, 9, 16 harmonics
    per knot here), which once made them depend on the chunk's slowest design."""
    from photorx.analysis.digital_figures import _thinning_steps

    fast = dataclasses.replace(link, bit_rate=10e9)
    biases = [0.05, 0.3, 5.0]
    table = prx.sweep(fast, reverse_bias=biases)
    steps = _thinning_steps(table["transit_bandwidth"].to_numpy(), 10e9 / 127)
    assert len(set(steps.tolist())) > 1  # the case this test is about
    for i, v in enumerate(biases):
        alone = dataclasses.replace(fast, reverse_bias=v).evaluate()
        assert table["eye_opening"][i] == pytest.approx(float(alone.eye_opening), rel=1e-12)
        assert table["worst_case_eye_opening"][i] == pytest.approx(
            float(alone.worst_case_eye_opening), rel=1e-12)


@settings(max_examples=40, deadline=None)
@given(rows=st.integers(1, 6), n=st.integers(1, 40), seed=st.integers(0, 2**32 - 1))
def test_eye_alignment_roll_matches_numpy_roll(rows, n, seed):
    # Source: numpy.roll of each row by its own shift (any sign, beyond one period); exact
    from photorx.analysis.digital_figures import _rolled
    rng = np.random.default_rng(seed)
    x = rng.normal(size=(rows, 2, n))
    shift = rng.integers(-3 * n, 3 * n + 1, size=(rows, 2))
    got = _rolled(x, shift)
    for i in np.ndindex(shift.shape):
        np.testing.assert_array_equal(got[i], np.roll(x[i], -shift[i]))


@settings(max_examples=30, deadline=None)
@given(log_factor=st.floats(-12.0, 12.0), opening=st.floats(0.3, 1.0))
def test_statistical_sensitivity_guess_changes_steps_not_the_answer(log_factor, opening):
    # Source: the closed form of required_average_power (Q from scipy's erfc inverse) for an
    # ideal eye; an eye with ISI against the same search without a guess. A guess anywhere
    # from 1e-12 to 1e12 times the answer (also above it, where the bracket falls back).
    levels = np.array([0, 1, 1, 0, 1, 0, 0, 1])
    args = dict(responsivity=0.9, circuit_rms=3e-7, noise_bandwidth=1e9, extinction_ratio=10.0,
                dark_current=1e-9)
    ref = required_average_power(q_from_ber(1e-12), 0.9, 3e-7, 1e9, 10.0, 1e-9)
    ideal = statistical_sensitivity(levels.astype(float), levels, 2, 1e-12, **args,
                                    guess=ref * np.exp(log_factor))
    assert ideal == pytest.approx(ref, rel=1e-8)
    samples = np.where(levels == 1, opening, 0.15 * (1 - opening))
    plain = statistical_sensitivity(samples, levels, 2, 1e-12, **args)
    guessed = statistical_sensitivity(samples, levels, 2, 1e-12, **args,
                                      guess=ref * np.exp(log_factor))
    assert guessed == pytest.approx(plain, rel=1e-8)
