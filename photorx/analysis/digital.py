"""Digital receivers in the time domain: pulse response, eye, ISI penalty, sensitivity with ISI.

Routing between the receiver and the functional cores: the chain response
H(f) = H_pd(f) Zt(f) H_filter(f) from the stages that own it
(:meth:`~photorx.device.photodiode.Photodiode.intrinsic_response_at`,
:func:`~photorx.circuit.tia.transimpedance`, :func:`~photorx.circuit.filters.filter_response`),
the exact rational part and the periodic pattern response of
:mod:`~photorx.analysis.digital_response`, the patterns of
:mod:`~photorx.analysis.digital_patterns` and the eye figures of
:mod:`~photorx.analysis.digital_eye`. The noise is the receiver's own noise integral
(:func:`~photorx.analysis.evaluation.evaluate_receiver`: circuit noise and ENBW).

References
----------
.. [1] E. Saeckinger, *Broadband Circuits for Optical Fiber Communication*, Wiley, 2005, ch. 4.
.. [2] G. P. Agrawal, *Fiber-Optic Communication Systems*, 4th ed., Wiley, 2010, sec. 4.5-4.7.
"""

from __future__ import annotations

import functools

import numpy as np

from ..circuit.filters import filter_response
from ..circuit.tia import transimpedance
from ..errors import DesignError
from .design_blocks import design_blocks, design_rows, rows_memo, rows_shape
from .digital_eye import (Eye, height_at_ber, isi_jitter, level_currents, personick_integrals,
                          statistical_sensitivity, vertical_opening, width_at_ber,
                          worst_case_opening, _sigmas)
from .digital_patterns import levels_per_symbol, parse_pattern, pattern_symbols
from .digital_response import (_require_stable, periodic_response, rational_chain, rational_impulse,
                               rational_pulse)
from .noise import with_frequency_axis
from .parameters import with_trailing_axis
from .sensitivity import q_from_ber

__all__ = ["check_bit_rate", "chain_response", "pulse_response", "impulse_response", "receiver_eye",
           "digital_figures", "DIGITAL_FIGURES", "bandwidth_ratio_study"]

_BIT_RATE_RANGE = (1.0, 1e12)  # bit/s, as the design-file schema
_EVAL_SAMPLES = 16  # samples per bit for the figures of evaluate() (PRBS7)


def check_bit_rate(bit_rate, name="bit_rate"):
    """``bit_rate`` as a float in 1 bit/s .. 1 Tbit/s, else a DesignError naming it.

    Parameters
    ----------
    bit_rate : float
        Bit rate [bit/s].
    name : str
        Parameter name for the message.
    """
    if bit_rate is None:
        raise DesignError(f"{name} is not set: the eye needs a bit rate; valid range: "
                          "1 bit/s to 1e12 bit/s", parameter=name)
    if isinstance(bit_rate, (str, bytes)):  # text is the command line's to parse (units)
        raise DesignError(f"{name} = {bit_rate!r} is not a number; valid range: 1 bit/s to "
                          "1e12 bit/s (write 10e9 or parse '10 Gbit/s' with photorx.units)",
                          parameter=name)
    if isinstance(bit_rate, bool) or np.ndim(bit_rate) != 0:
        raise DesignError.out_of_range(name, bit_rate, "bit/s", "one number, 1 to 1e12")
    try:
        value = float(bit_rate)
    except (TypeError, ValueError):
        raise DesignError(f"{name} = {bit_rate!r} is not a number; valid range: 1 to 1e12 bit/s",
                          parameter=name) from None
    if not _BIT_RATE_RANGE[0] <= value <= _BIT_RATE_RANGE[1]:  # also NaN
        raise DesignError.out_of_range(name, value, "bit/s", "1 bit/s to 1e12 bit/s")
    return value


# ------------------------------------------------------------------------------ the chain
def _parts(rx):
    """(photodiode response or None, circuit dict, post filter) of a scalar receiver."""
    if np.size(rx.reverse_bias) != 1 or np.size(rx.wavelength) != 1:
        raise DesignError("the time-domain response takes one design point; valid range: scalar "
                          "reverse_bias and wavelength (use evaluate() for arrays)",
                          parameter="reverse_bias")
    from .evaluation import _has_intrinsic_speed

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
def _fold(wave, n_sym, m):
    """Roll one period so that the peak of the summed response sits mid-symbol; fold (N, M)."""
    return wave.reshape(wave.shape[:-1] + (n_sym, m))


def _eye_arrays(response, symbols, levels, n_levels, period, m):
    """Traces (..., N, M) and cursors (..., N, M) in units of the full swing; the shift."""
    n_sym = symbols.size
    single = np.zeros(n_sym)
    single[0] = 1.0
    memo = {}

    def once(f):  # both patterns share the harmonic grid: evaluate the chain once
        if "h" not in memo:
            memo["h"] = response(f)
        return memo["h"]
    y = periodic_response(once, symbols, period, m)  # the pattern
    p = periodic_response(once, single, period, m)  # one full-swing pulse, folded at N T
    zt0 = np.abs(np.asarray(response(np.zeros(1)))[..., 0])
    y, p = y / zt0[..., None], p / zt0[..., None]
    # align: the pulse peak mid-symbol, so the eye window is centred on the decision
    peak = np.argmax(p, axis=-1)
    shift = peak - m // 2
    idx = (np.arange(n_sym * m) + shift[..., None]) % (n_sym * m)
    y = np.take_along_axis(y, idx, axis=-1)
    p = np.take_along_axis(p, idx, axis=-1)
    return _fold(y, n_sym, m), _fold(p, n_sym, m), shift, zt0


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
    from .evaluation import evaluate_receiver

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
    r = evaluate_receiver(rx)
    circuit_rms, enbw = float(r.circuit_noise_rms), float(r.noise_bandwidth)
    gain, excess = float(r.gain), float(r.excess_noise_factor)  # 1 and 1 for a PIN
    resp_a = float(r.responsivity) * gain
    dark = abs(float(r.dark_current))
    currents = level_currents(rx.optical_power, rx.extinction_ratio, resp_a, dark, n_levels)
    # the multiplied signal's shot noise counts M F times (Personick 1973)
    sigmas = _sigmas(currents, circuit_rms, enbw, gain * excess * (currents - dark) + dark)
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
                                   circuit_rms, enbw, rx.extinction_ratio, dark)
    sens0 = statistical_sensitivity(ideal, levels, n_levels, rx.target_ber, resp_a, circuit_rms,
                                    enbw, rx.extinction_ratio, dark)
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


# ------------------------------------------------------------------ figures for evaluate()
#: Figures that evaluate() adds for a digital receiver (NaN without a bit rate); their units
#: and descriptions are in :data:`photorx.analysis.result.FIGURES`.
DIGITAL_FIGURES = ("eye_opening", "worst_case_eye_opening", "sensitivity_isi", "sensitivity_isi_dbm",
                   "isi_penalty_db")


_EXACT_HARMONICS = 32  # the lowest harmonics (diffusion tail) always get the model itself


def _thinned(photodiode, f, transit_bandwidth):
    """The photodiode model at every harmonic ``f`` (1-D, uniform from 0), computed at few.

    The lowest harmonics are evaluated exactly; above them every s-th, with s up to 16 and
    s f_1 <= transit_bandwidth / 10, and the rest linearly interpolated (real and imaginary
    parts): the drift response varies on the scale of the transit bandwidth and the
    diffusion tail like a power of f, so the interpolation error is below 1e-3 of the
    response. A sweep evaluates the costly diffusion model at a tenth of the points.
    """
    n = f.size
    df = f[1] - f[0] if n > 1 else 1.0
    lowest = float(np.min(transit_bandwidth)) if np.size(transit_bandwidth) else np.inf
    step = int(np.clip(np.floor(0.1 * lowest / df), 1, 16)) if np.isfinite(lowest) else 16
    if step == 1 or n <= _EXACT_HARMONICS + 2:
        return photodiode(f)
    idx = np.unique(np.concatenate([np.arange(_EXACT_HARMONICS), np.arange(_EXACT_HARMONICS, n, step),
                                    [n - 1]]))
    h = np.asarray(photodiode(f[idx]))
    pos = np.clip(np.searchsorted(idx, np.arange(n), side="right") - 1, 0, idx.size - 2)
    w = (np.arange(n) - idx[pos]) / (idx[pos + 1] - idx[pos])
    return h[..., pos] * (1.0 - w) + h[..., pos + 1] * w


def _eye_figures(response, symbols, levels, rate):
    """Best-phase vertical opening, worst-case opening and the samples at the best phase."""
    traces, cursors, _, _ = _eye_arrays(response, symbols, levels, 2, 1.0 / rate, _EVAL_SAMPLES)
    opening_phase = vertical_opening(traces, levels, 2)
    best = np.argmax(opening_phase, axis=-1)
    samples = np.take_along_axis(traces, best[..., None, None], axis=-1)[..., 0]
    return (np.max(opening_phase, axis=-1), np.max(worst_case_opening(cursors, 2), axis=-1),
            samples)


def digital_figures(p, noise: dict, sensitivity: dict) -> dict:
    """The ISI figures of :data:`DIGITAL_FIGURES` for every design point of an evaluation.

    Parameters
    ----------
    p : photorx.analysis.evaluation._Point
        The evaluation's operating point (photodiode, circuit, design shape).
    noise : dict
        Its noise figures (``circuit_noise_rms`` [A], ``noise_bandwidth`` [Hz]).
    sensitivity : dict
        Its figures so far: ``sensitivity`` [W] (noise only) and ``transit_bandwidth`` [Hz]
        (the scale on which the photodiode response varies).

    Returns
    -------
    dict
        Figure name -> array of the design shape; NaN everywhere without a bit rate (no
        work is done then) and at unstable design points.
    """
    rx = p.rx
    if rx.bit_rate is None:
        nan = p.b(np.nan)
        return {name: nan for name in DIGITAL_FIGURES}
    rate = check_bit_rate(rx.bit_rate)
    symbols = pattern_symbols(7, "nrz")
    levels = symbols.astype(int)
    pd_e = with_trailing_axis(p.pd, p.shape)
    v_e = np.asarray(p.v, dtype=float)[..., None]
    wl_e = np.asarray(rx.wavelength, dtype=float)[..., None]
    circuit_e = with_frequency_axis(p.circuit)
    photodiode = pd_e.intrinsic_response_at(v_e, wl_e) if p.has_speed else None
    pf = rx.post_filter
    transit_bw = np.asarray(sensitivity.get("transit_bandwidth", np.inf), dtype=float)

    blocks = design_blocks(p.shape)  # rows of a sweep chunk at a time: memory, same values
    photodiode_at = photodiode if len(blocks) == 1 else rows_memo(photodiode)

    def response(f, rows=None):
        h = transimpedance(f, **design_rows(circuit_e, p.shape, rows))
        if pf is not None:
            h = h * filter_response(f, pf.kind, pf.order, pf.cutoff)
        if photodiode is not None:
            h = h * _thinned(lambda g: design_rows(photodiode_at(g), p.shape, rows), f, transit_bw)
        return np.broadcast_to(h, rows_shape(p.shape, rows) + np.shape(f))

    parts = [_eye_figures(functools.partial(response, rows=rows), symbols, levels, rate)
             for rows in blocks]
    eye_max, worst_max, samples = (np.concatenate(x) if len(parts) > 1 else x[0] for x in zip(*parts))
    stable = p.b(p.loop["stable"], bool)
    with np.errstate(invalid="ignore", over="ignore"):
        # an APD: signal M R P, its shot noise M F times, the dark current's shot-noise
        # equivalent (as the noise-only sensitivity of evaluation._sensitivity)
        sens = statistical_sensitivity(samples, levels, 2, rx.target_ber,
                                       p.b(p.mult["gain"] * p.responsivity),
                                       noise["circuit_noise_rms"], noise["noise_bandwidth"],
                                       rx.extinction_ratio, p.b(p.dark_shot),
                                       noise_factor=p.b(p.mult["noise_factor"]))
        penalty = 10.0 * np.log10(sens / sensitivity["sensitivity"])
        sens_dbm = 10.0 * np.log10(sens / 1e-3)

    def mask(x):
        return np.where(stable, np.broadcast_to(x, p.shape), np.nan)
    return {
        "eye_opening": mask(eye_max), "worst_case_eye_opening": mask(worst_max),
        "sensitivity_isi": mask(sens), "sensitivity_isi_dbm": mask(sens_dbm),
        "isi_penalty_db": mask(penalty),
    }


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
