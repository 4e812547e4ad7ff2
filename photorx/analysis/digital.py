"""Digital receivers in the time domain: pulse response, eye, ISI penalty, sensitivity with ISI.

Routing between the receiver and the functional cores: the chain response
H(f) = H_pd(f) Zt(f) H_filter(f) from the stages that own it
(:meth:`~photorx.device.photodiode.Photodiode.intrinsic_response_at`,
:func:`~photorx.circuit.tia.transimpedance`, :func:`~photorx.circuit.filters.filter_response`),
the exact rational part and the periodic pattern response of
:mod:`~photorx.analysis.digital_response`, the patterns of
:mod:`~photorx.analysis.digital_patterns` and the eye figures of
:mod:`~photorx.analysis.digital_eye`. The noise is the receiver's own noise integral
(:func:`~photorx.analysis.evaluation.evaluate_receiver`: circuit noise and ENBW). The ISI
figures that ``evaluate()`` itself reports, for every design point of a sweep, are in
:mod:`~photorx.analysis.digital_figures` (below the evaluation; this module sits above it).

References
----------
.. [1] E. Saeckinger, *Broadband Circuits for Optical Fiber Communication*, Wiley, 2005, ch. 4.
.. [2] G. P. Agrawal, *Fiber-Optic Communication Systems*, 4th ed., Wiley, 2010, sec. 4.5-4.7.
"""

from __future__ import annotations

import numpy as np

from ..circuit.filters import filter_response
from ..circuit.tia import transimpedance
from ..errors import DesignError
from .digital_eye import (Eye, height_at_ber, isi_jitter, level_currents, personick_integrals,
                          statistical_sensitivity, vertical_opening, width_at_ber,
                          worst_case_opening, _sigmas)
from .digital_patterns import levels_per_symbol, parse_pattern, pattern_symbols
from .digital_response import (_require_stable, periodic_response, rational_chain, rational_impulse,
                               rational_pulse)
from .digital_figures import (DIGITAL_FIGURES, _eye_arrays, _thinned, check_bit_rate,
                              digital_figures)
from .evaluation import _evaluate, _has_intrinsic_speed, _Point
from .sensitivity import q_from_ber

__all__ = ["check_bit_rate", "chain_response", "pulse_response", "impulse_response", "receiver_eye",
           "digital_figures", "DIGITAL_FIGURES", "bandwidth_ratio_study"]

# ------------------------------------------------------------------------------ the chain
def _parts(rx):
    """(photodiode response or None, circuit dict, post filter) of a scalar receiver."""
    if np.size(rx.reverse_bias) != 1 or np.size(rx.wavelength) != 1:
        raise DesignError("the time-domain response takes one design point; valid range: scalar "
                          "reverse_bias and wavelength (use evaluate() for arrays)",
                          parameter="reverse_bias")
    pd_ = rx.photodiode_at_temperature()
    circuit = rx.tia._args(rx._circuit_of(pd_))
    photodiode = (pd_.intrinsic_response_at(rx.reverse_bias, rx.wavelength)
                  if _has_intrinsic_speed(pd_) else None)
    return photodiode, circuit, rx.post_filter


def chain_response(rx, harmonics=False):
    """``f -> H(f)``: photocurrent to output of a scalar receiver [ohm], complex.

    Parameters
    ----------
    rx : Receiver
        One design point.
    harmonics : bool
        True when ``f`` is always a uniform grid of harmonics from 0 (a periodic pattern):
        the costly photodiode model is then evaluated at a subset and interpolated
        (:func:`_thinned`, below 1e-3 of the response).
    """
    photodiode, circuit, pf = _parts(rx)
    transit_bw = np.inf
    if photodiode is not None and harmonics:
        try:
            transit_bw = float(rx.photodiode_at_temperature().transit_bandwidth(
                rx.reverse_bias, rx.wavelength))
        except DesignError:
            harmonics = False

    def response(f):
        f = np.asarray(f, dtype=float)
        h = transimpedance(f, **circuit)
        if pf is not None:
            h = h * filter_response(f, pf.kind, pf.order, pf.cutoff)
        if photodiode is None:
            return h
        return h * (_thinned(photodiode, f, transit_bw) if harmonics and f.size > 1 else photodiode(f))
    return response


def _time_scales(poles, rx, photodiode):
    """(fastest, slowest) time constants of the chain [s] for the correction window."""
    mag = np.sort(np.abs(poles))
    fast = 1.0 / mag[min(1, mag.size - 1)]  # far poles (Rs Cd) barely shape the waveform
    slow = 1.0 / np.min(-np.real(poles))
    if photodiode is not None:
        pd_ = rx.photodiode_at_temperature()
        try:
            slow = max(slow, float(pd_.diffusion_time_constant(rx.wavelength, rx.reverse_bias)))
        except (DesignError, AttributeError, TypeError):
            pass
        try:
            fast = min(fast, float(pd_.transit_time(rx.reverse_bias)) / 4.0)
        except (DesignError, AttributeError, TypeError):
            pass
    return fast, slow


def _response_in_time(rx, t, width):
    """Exact rational part + numerically transformed photodiode correction [ohm or ohm/s]."""
    t = np.asarray(t, dtype=float)
    if t.size and not np.all(np.isfinite(t)):
        raise DesignError.out_of_range("t", t[~np.isfinite(t)].ravel()[0], "s", "finite times")
    photodiode, circuit, pf = _parts(rx)
    poles, residues = rational_chain(circuit, pf)
    _require_stable(poles)
    exact = (rational_impulse(t, poles, residues) if width is None
             else rational_pulse(t, poles, residues, width))
    brickwall = pf is not None and pf.kind == "brickwall"
    if photodiode is None and not brickwall:
        return exact

    def rational(f):
        s = 2j * np.pi * np.asarray(f, dtype=float)
        return (residues[None, :] / (s[:, None] - poles[None, :])).sum(-1)

    def correction(f):
        g = np.ones(np.shape(f), dtype=complex) if photodiode is None else photodiode(f)
        if brickwall:
            g = g * filter_response(f, pf.kind, pf.order, pf.cutoff)
        return rational(f) * (g - 1.0)

    fast, slow = _time_scales(poles, rx, photodiode)
    t_max = float(np.max(t)) if t.size else 0.0
    window = max(t_max, 0.0) + 40.0 * slow + (width or 0.0)
    dt = fast / 8.0 if width is None else min(fast / 8.0, width / 32.0)
    n = int(min(2 ** 18, max(2 ** 10, 2 ** np.ceil(np.log2(window / dt)))))
    dt = window / n
    # one "symbol" of length dt per sample: a rectangle of width dt approximates the
    # impulse, a pulse of `width` is the NRZ symbol of the window's grid
    if width is None:
        seq = np.zeros(n)
        seq[0] = 1.0 / dt  # unit area
        y = periodic_response(correction, seq, dt, 1, shape="impulse")
    else:
        m = max(1, int(round(width / dt)))
        n_sym = max(1, n // m)
        seq = np.zeros(n_sym)
        seq[0] = 1.0
        dt = width / m
        y = periodic_response(correction, seq, width, m)
    grid = np.arange(y.size) * dt
    corr = np.interp(t, grid, y, left=0.0, right=0.0)
    return exact + np.where(t >= 0, corr, 0.0)


def pulse_response(rx, t, bit_rate=None):
    """Output for a rectangular photocurrent pulse of 1 A lasting one bit [V per A = ohm].

    Parameters
    ----------
    rx : Receiver
        One design point.
    t : array_like
        Times after the pulse starts [s], finite.
    bit_rate : float, optional
        Bit rate [bit/s], 1 to 1e12; default the receiver's ``bit_rate``. The pulse lasts
        1 / bit_rate.

    Returns
    -------
    numpy.ndarray
        p(t) [ohm], shape of ``t``; its area is Zt(0) / bit_rate.

    Notes
    -----
    Exact partial fractions of the rational part (loop, Butterworth/Bessel filter) plus
    the photodiode's intrinsic response (transit, diffusion tail) and a brick-wall filter as
    an FFT correction, linearly interpolated on a grid of at least 32 points per bit.
    """
    width = 1.0 / check_bit_rate(rx.bit_rate if bit_rate is None else bit_rate)
    return _response_in_time(rx, t, width)


def impulse_response(rx, t):
    """Impulse response of the chain, photocurrent to output [ohm/s]; its area is Zt(0).

    Parameters
    ----------
    rx : Receiver
        One design point.
    t : array_like
        Times [s], finite.
    """
    return _response_in_time(rx, t, None)


# -------------------------------------------------------------------------------- the eye
def receiver_eye(rx, bit_rate=None, pattern="prbs7", modulation="nrz", samples_per_symbol=32):
    """The eye of a scalar receiver for a PRBS pattern: see :class:`Eye`.

    Parameters
    ----------
    rx : Receiver
        One design point; its optical power, extinction ratio and target BER apply.
    bit_rate : float, optional
        [bit/s], 1 to 1e12; default the receiver's. PAM4 sends bit_rate / 2 symbols/s.
    pattern : str
        ``"prbs7"`` (default), ``"prbs9"``, ``"prbs10"``, ``"prbs11"`` or ``"prbs15"``.
    modulation : str
        ``"nrz"`` or ``"pam4"``.
    samples_per_symbol : int
        Phases per symbol, 8 to 256.
    """
    rate = check_bit_rate(rx.bit_rate if bit_rate is None else bit_rate)
    n = parse_pattern(pattern)
    n_levels = levels_per_symbol(modulation)
    m = samples_per_symbol
    if isinstance(m, bool) or not isinstance(m, (int, np.integer)) or not 8 <= m <= 256:
        raise DesignError.out_of_range("samples_per_symbol", m, "", "integers 8 to 256")
    symbols = pattern_symbols(n, modulation)
    levels = np.rint(symbols * (n_levels - 1)).astype(int)
    period = np.log2(n_levels) / rate
    response = chain_response(rx, harmonics=True)
    poles, _ = rational_chain(_parts(rx)[1], rx.post_filter)
    _require_stable(poles)
    traces, cursors, shift, zt0 = _eye_arrays(response, symbols, levels, n_levels, period, int(m))
    zt0 = float(zt0)
    point = _Point(rx)
    r = _evaluate(point)
    circuit_rms, enbw = float(r.circuit_noise_rms), float(r.noise_bandwidth)
    # as the sensitivities of evaluate(): signal M R P with its shot noise M F times
    # (Personick 1973), the dark current as its shot-noise equivalent I_ds + M^2 F I_dm
    # (1, 1 and |I_dark| for a PIN)
    resp_a = float(point.mult["gain"] * point.responsivity)
    noise_factor = float(point.mult["noise_factor"])
    dark = float(point.dark_shot)
    currents = level_currents(rx.optical_power, rx.extinction_ratio, resp_a, dark, n_levels)
    sigmas = _sigmas(currents, circuit_rms, enbw, noise_factor * (currents - dark) + dark)
    q_value = float(q_from_ber(rx.target_ber))
    best = int(np.argmax(vertical_opening(traces, levels, n_levels)))
    # centre the window on the best decision phase (the pulse peak was only a first guess)
    roll = best - m // 2
    traces = np.roll(traces.reshape(-1), -roll).reshape(traces.shape)
    cursors = np.roll(cursors.reshape(-1), -roll).reshape(cursors.shape)
    shift, best = shift + roll, m // 2
    opening_phase = vertical_opening(traces, levels, n_levels)
    height_phase = height_at_ber(traces, levels, n_levels, currents, sigmas, q_value)
    ideal = levels / (n_levels - 1)
    sens = statistical_sensitivity(traces[:, best], levels, n_levels, rx.target_ber, resp_a,
                                   circuit_rms, enbw, rx.extinction_ratio, dark,
                                   noise_factor=noise_factor)
    sens0 = statistical_sensitivity(ideal, levels, n_levels, rx.target_ber, resp_a, circuit_rms,
                                    enbw, rx.extinction_ratio, dark, noise_factor=noise_factor)
    wave = traces.reshape(-1)
    jit_pp, jit_rms = isi_jitter(wave, levels, n_levels, int(m), best, period)
    wc = worst_case_opening(cursors, n_levels)
    circuit = _parts(rx)[1]
    pf = rx.post_filter

    def noise_path(f):
        h = transimpedance(f, **circuit)
        return h if pf is None else h * filter_response(f, pf.kind, pf.order, pf.cutoff)
    i2, i3 = personick_integrals(noise_path, rate)
    with np.errstate(divide="ignore"):
        penalty = 10.0 * np.log10(sens / sens0)
        wc_best = float(np.max(wc))
        wc_penalty = -10.0 * np.log10(wc_best) if wc_best > 0 else np.inf
    base = zt0 * currents[0]
    swing = zt0 * (currents[-1] - currents[0])
    return Eye(
        bit_rate=rate, symbol_rate=1.0 / period, modulation=modulation.strip().lower(),
        pattern=f"prbs{n}", time=(np.arange(m) - m // 2) * period / m,
        decision_time=float((shift + best) * period / m), traces=base + swing * traces,
        levels=levels, level_noise=zt0 * sigmas, target_ber=float(rx.target_ber),
        opening=float(opening_phase[best]), worst_case_opening=wc_best,
        height=float(max(np.max(height_phase), 0.0) * zt0),
        width=float(width_at_ber(height_phase, period)),
        isi_penalty_db=float(penalty), worst_case_penalty_db=float(wc_penalty),
        jitter_pp=jit_pp, jitter_rms=jit_rms, sensitivity=float(sens),
        sensitivity_noise_only=float(sens0), personick_i2=float(i2), personick_i3=float(i3),
        dc_transimpedance=zt0)


# ----------------------------------------------------------------- bandwidth / bit-rate study
def bandwidth_ratio_study(rx, vary="cf", values=None):
    """Sensitivity with ISI against the bandwidth-to-bit-rate ratio, over Rf or Cf.

    Parameters
    ----------
    rx : Receiver
        One design point with a bit rate.
    vary : {"cf", "rf"}
        The feedback element swept.
    values : array_like, optional
        Its values [F or ohm], > 0; default 41 log-spaced values from 1/10 to 10 times the
        design's (Cf = 0 designs sweep 1 fF to 1 pF).

    Returns
    -------
    pandas.DataFrame
        One row per value: ``vary``, ``bandwidth`` [Hz], ``ratio`` (bandwidth / bit rate),
        ``sensitivity_dbm`` (noise only), ``sensitivity_isi_dbm``, ``isi_penalty_db``,
        ``stable``; ``attrs["best"]`` is the row with the lowest sensitivity with ISI (the
        best trade of noise bandwidth against ISI) and ``attrs["units"]`` the SI units.
    """
    import dataclasses

    import pandas as pd

    check_bit_rate(rx.bit_rate)
    if vary not in ("cf", "rf"):
        raise DesignError(f"vary = {vary!r} is invalid; valid values: cf, rf", parameter="vary")
    base = float(getattr(rx.tia, vary))
    if values is None:
        centre = base if base > 0 else 1e-13
        values = np.logspace(np.log10(centre) - 1.0, np.log10(centre) + 1.0, 41)
    values = np.asarray(values, dtype=float)
    tia = dataclasses.replace(rx.tia, **{vary: values})
    r = dataclasses.replace(rx, tia=tia).evaluate()
    table = pd.DataFrame({
        vary: values, "bandwidth": np.broadcast_to(r.bandwidth, values.shape),
        "ratio": np.broadcast_to(r.bandwidth, values.shape) / rx.bit_rate,
        "sensitivity_dbm": np.broadcast_to(r.sensitivity_dbm, values.shape),
        "sensitivity_isi_dbm": np.broadcast_to(r.sensitivity_isi_dbm, values.shape),
        "isi_penalty_db": np.broadcast_to(r.isi_penalty_db, values.shape),
        "stable": np.broadcast_to(r.stable, values.shape)})
    ok = table["stable"] & np.isfinite(table["sensitivity_isi_dbm"])
    table.attrs["units"] = {vary: "F" if vary == "cf" else "ohm", "bandwidth": "Hz", "ratio": "",
                            "sensitivity_dbm": "dBm", "sensitivity_isi_dbm": "dBm",
                            "isi_penalty_db": "dB", "stable": ""}
    table.attrs["best"] = table[ok].loc[table[ok]["sensitivity_isi_dbm"].idxmin()] if ok.any() else None
    return table
