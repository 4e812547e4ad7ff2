"""Eye figures from the sampled output of a pattern: opening, height, width, jitter, BER.

Functional core on arrays (designs on leading axes where
:func:`photorx.analysis.digital.digital_figures` needs them for many design points).

Conventions: a folded eye ``traces`` has one row per symbol and ``M`` phases per symbol
(shape ``(..., N, M)``); ``levels`` are the symbol indices 0 .. L-1 (L = 2 for NRZ, 4 for
PAM4); traces are in units of the full swing, so an ideal chain gives
``traces = levels / (L - 1)``. Noise is Gaussian with an rms that depends on the level
through the shot noise, sigma_l^2 = sigma_c^2 + 2 q I_l B (input-referred [A]), as in the
noise-only sensitivity of :func:`photorx.analysis.sensitivity.required_average_power`.

References
----------
.. [1] E. Saeckinger, *Broadband Circuits for Optical Fiber Communication*, Wiley, 2005,
   ch. 4 (eye opening, ISI penalty, Personick integrals, multilevel signals).
.. [2] B. K. Casper, M. Haycock and R. Mooney, "An accurate and efficient analysis method
   for multi-Gb/s chip-to-chip signaling schemes", Symp. VLSI Circuits 2002, 54-57
   (peak distortion analysis and the statistical eye from the pulse response).
.. [3] S. D. Personick, "Receiver design for digital fiber optic communication systems",
   Bell Syst. Tech. J. 52 (1973) 843-886.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import special

from ..constants import q as _Q

__all__ = ["inner_edges", "vertical_opening", "worst_case_opening", "level_currents",
           "height_at_ber", "width_at_ber", "isi_jitter", "ber_of_eye", "statistical_sensitivity",
           "personick_integrals", "Eye"]


def inner_edges(traces, levels, n_levels):
    """Lowest sample of each upper level and highest of each lower level, per phase.

    Parameters
    ----------
    traces : numpy.ndarray
        Folded eye ``(..., N, M)``.
    levels : numpy.ndarray
        Symbol indices (N,), 0 .. n_levels - 1.
    n_levels : int
        Number of levels L.

    Returns
    -------
    (low_of_upper, high_of_lower) : numpy.ndarray
        Each ``(..., L - 1, M)``: for the eye between levels l and l + 1, the minimum over
        symbols at level l + 1 and the maximum over symbols at level l.
    """
    up, lo = [], []
    for k in range(n_levels - 1):
        up.append(np.min(traces[..., levels == k + 1, :], axis=-2))
        lo.append(np.max(traces[..., levels == k, :], axis=-2))
    return np.stack(up, axis=-2), np.stack(lo, axis=-2)


def vertical_opening(traces, levels, n_levels):
    """Noise-free vertical opening per phase, relative to the ideal level spacing: (..., M).

    Parameters
    ----------
    traces : numpy.ndarray
        Folded eye ``(..., N, M)`` in units of the full swing.
    levels : numpy.ndarray
        Symbol indices (N,).
    n_levels : int
        Number of levels L.

    Notes
    -----
    (min over level l+1 - max over level l) (L - 1), the smallest over the L - 1 eyes;
    1 for an ideal chain, <= 0 for a closed eye.
    """
    up, lo = inner_edges(traces, levels, n_levels)
    return np.min(up - lo, axis=-2) * (n_levels - 1)


def worst_case_opening(cursors, n_levels):
    """Peak-distortion opening for the worst-case pattern, relative to the ideal: (..., M).

    Parameters
    ----------
    cursors : numpy.ndarray
        The pulse response of one full-swing symbol sampled once per symbol at every
        phase, ``(..., K, M)`` (K symbols of memory), in units of the full swing (the
        samples of one phase sum to 1: the response to a constant input).
    n_levels : int
        Number of levels L.

    Returns
    -------
    numpy.ndarray
        (p_0 - (L - 1) sum_{k != 0} |p_k|) at each phase with the largest cursor as p_0;
        1 for no ISI. The worst pattern sets each other symbol to the extreme level that
        opposes the decision (Casper et al. 2002).
    """
    main = np.max(cursors, axis=-2)
    rest = np.sum(np.abs(cursors), axis=-2) - np.abs(main)
    return main - (n_levels - 1) * rest


def level_currents(power, extinction_ratio, responsivity, dark_current, n_levels):
    """Photocurrent of every level for an average power and extinction ratio [A]: (..., L).

    Parameters
    ----------
    power : array_like
        Average optical power [W].
    extinction_ratio : array_like
        Top over bottom level power, > 1; inf for an unlit bottom level.
    responsivity : array_like
        [A/W].
    dark_current : array_like
        |I_dark| [A].
    n_levels : int
        Number of equally spaced levels L.

    Notes
    -----
    P_bottom = 2 P / (r + 1), P_top = r P_bottom; levels equally spaced in between (their
    mean is P for the equiprobable levels of a PRBS).
    """
    power, ratio = np.asarray(power, dtype=float), np.asarray(extinction_ratio, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        bottom = np.where(np.isinf(ratio), 0.0, 2.0 * power / (ratio + 1.0))
    top = 2.0 * power - bottom
    frac = np.arange(n_levels) / (n_levels - 1)
    p = bottom[..., None] + (top - bottom)[..., None] * frac
    return np.asarray(responsivity)[..., None] * p + np.asarray(dark_current)[..., None]


def _sigmas(currents, circuit_rms, noise_bandwidth, shot_currents=None):
    """rms noise of each level: circuit noise and 2 q I_shot B (I_shot = the level current
    for a PIN; for an APD the multiplied signal counts M F times, Personick 1973)."""
    shot = currents if shot_currents is None else shot_currents
    return np.sqrt(np.asarray(circuit_rms)[..., None] ** 2
                   + 2.0 * _Q * shot * np.asarray(noise_bandwidth)[..., None])


def height_at_ber(traces, levels, n_levels, currents, sigmas, q_value):
    """Eye height at the target BER per phase [A input-referred]: (..., M).

    Parameters
    ----------
    traces : numpy.ndarray
        Folded eye ``(..., N, M)`` in units of the full swing.
    levels : numpy.ndarray
        Symbol indices (N,).
    n_levels : int
        Number of levels L.
    currents : numpy.ndarray
        Level currents (..., L) [A] (:func:`level_currents`).
    sigmas : numpy.ndarray
        rms noise of each level (..., L) [A].
    q_value : float
        Q of the target BER (:func:`photorx.analysis.sensitivity.q_from_ber`).

    Notes
    -----
    min over the eyes of [(I_b + dI u_l+1) - Q s_l+1] - [(I_b + dI d_l) + Q s_l] with the
    inner edges u, d of :func:`inner_edges` and dI the full current swing; negative where
    noise and ISI close the eye.
    """
    up, lo = inner_edges(traces, levels, n_levels)
    swing = (currents[..., -1] - currents[..., 0])[..., None, None]
    s = sigmas[..., :, None]
    h = swing * (up - lo) - q_value * (s[..., 1:, :] + s[..., :-1, :])
    return np.min(h, axis=-2)


def width_at_ber(height, period):
    """Horizontal eye width where the height at the BER stays > 0, around its best phase [s].

    Parameters
    ----------
    height : numpy.ndarray
        Height per phase (..., M), phases spaced ``period / M`` and cyclic.
    period : float
        Symbol period [s].

    Notes
    -----
    The run of positive heights through the best phase, with the two edges placed by
    linear interpolation between samples; the whole period when no phase closes.
    """
    h = np.asarray(height, dtype=float)
    m = h.shape[-1]
    flat = h.reshape(-1, m)
    out = np.zeros(flat.shape[0])
    for i, row in enumerate(flat):  # one short loop per design: M samples each
        best = int(np.argmax(row))
        if row[best] <= 0:
            continue
        if np.all(row > 0):
            out[i] = period
            continue
        rolled = np.roll(row, -best)  # best phase first; the run ends somewhere before M
        right = int(np.argmax(rolled <= 0))
        left = int(np.argmax(rolled[::-1] <= 0))  # samples from the end back to a closed one
        fr = rolled[right - 1] / (rolled[right - 1] - rolled[right])
        inner = rolled[(m - left) % m]  # the last open sample before the closed one
        fl = inner / (inner - rolled[m - 1 - left])
        out[i] = (right - 1 + fr + left + fl) * period / m
    return out.reshape(h.shape[:-1])


def isi_jitter(wave, levels, n_levels, samples_per_symbol, start, period):
    """Spread of the threshold-crossing times of the noise-free waveform [s]: (pp, rms).

    Parameters
    ----------
    wave : numpy.ndarray
        One period of the output (N M,) in units of the full swing, aligned so that symbol k
        is decided at sample k M + start.
    levels : numpy.ndarray
        Symbol indices (N,).
    n_levels : int
        Number of levels L.
    samples_per_symbol : int
        M.
    start : int
        Sample of the decision instant within a symbol.
    period : float
        Symbol period [s].

    Notes
    -----
    Transitions that cross the middle threshold (NRZ: every 0-1 change; PAM4: changes
    between the lower and the upper two levels) are located between consecutive decision
    instants by the first sign change and linear interpolation; pp is max - min of the
    crossing times, rms their standard deviation. Zero for a raised-cosine (roll-off 1)
    chain, whose transitions all cross at mid-symbol (Saeckinger 2005, ch. 4).
    """
    m = samples_per_symbol
    n = levels.size
    th = 0.5
    upper = levels >= n_levels // 2
    k = np.nonzero(upper != np.roll(upper, -1))[0]
    if k.size == 0:
        return 0.0, 0.0
    idx = (k[:, None] * m + start + np.arange(m + 1)[None, :]) % (n * m)
    seg = wave[idx] - th
    sign = np.sign(seg)
    change = sign[:, :-1] != sign[:, 1:]
    first = np.argmax(change, axis=1)
    ok = change.any(axis=1)
    a = seg[np.arange(k.size), first]
    b = seg[np.arange(k.size), first + 1]
    frac = np.where(a != b, a / np.where(a != b, a - b, 1.0), 0.5)
    times = (first + frac)[ok] * period / m
    if times.size == 0:
        return np.nan, np.nan
    return float(np.ptp(times)), float(np.std(times))


def _qfunc(x):
    return 0.5 * special.erfc(x / np.sqrt(2.0))


def ber_of_eye(samples, levels, n_levels, currents, sigmas):
    """BER of symbols sampled at one phase, with the threshold of equal Q at the inner edges.

    Parameters
    ----------
    samples : numpy.ndarray
        Noise-free decision samples (..., N) in units of the full swing.
    levels : numpy.ndarray
        Symbol indices (N,).
    n_levels : int
        Number of levels L.
    currents : numpy.ndarray
        Level currents (..., L) [A].
    sigmas : numpy.ndarray
        rms noise of each level (..., L) [A].

    Returns
    -------
    numpy.ndarray
        Bit-error ratio (...); Gray coding: one bit error per crossing to a neighbouring level.

    Notes
    -----
    I_k = I_0 + dI s_k; the threshold between levels l and l+1 sits where the inner edges
    (lowest upper, highest lower sample) have equal Q:
    th = (u s_l + d s_l+1) / (s_l + s_l+1). BER = sum over symbols and their neighbouring
    thresholds of Q((|I_k - th|)/s) / (N log2 L), with Q(x) = erfc(x / sqrt 2) / 2. For an
    ideal eye this is Q((I_1 - I_0)/(s_1 + s_0)) of the noise-only sensitivity.
    """
    swing = (currents[..., -1] - currents[..., 0])[..., None]
    i_k = currents[..., :1] + swing * samples
    total = np.zeros(np.shape(i_k)[:-1])
    for lv in range(n_levels - 1):
        upper, lower = levels == lv + 1, levels == lv
        u = np.min(i_k[..., upper], axis=-1)
        d = np.max(i_k[..., lower], axis=-1)
        s_lo, s_hi = sigmas[..., lv], sigmas[..., lv + 1]
        th = (u * s_lo + d * s_hi) / (s_lo + s_hi)
        total = total + np.sum(_qfunc((i_k[..., upper] - th[..., None]) / s_hi[..., None]), axis=-1)
        total = total + np.sum(_qfunc((th[..., None] - i_k[..., lower]) / s_lo[..., None]), axis=-1)
    return total / (levels.size * np.log2(n_levels))


def statistical_sensitivity(samples, levels, n_levels, target_ber, responsivity, circuit_rms,
                            noise_bandwidth, extinction_ratio=np.inf, dark_current=0.0,
                            noise_factor=1.0, dark_shot_current=None, guess=None):
    """Average optical power for the target BER with ISI and noise together [W]: (...).

    Parameters
    ----------
    samples : numpy.ndarray
        Noise-free decision samples (..., N) in units of the full swing (the statistical
        eye at the decision phase: every pattern of the PRBS once).
    levels : numpy.ndarray
        Symbol indices (N,).
    n_levels : int
        Number of levels L.
    target_ber : float
        In (0, 0.5).
    responsivity : array_like
        [A/W], > 0.
    circuit_rms : array_like
        Input-referred circuit noise without the signal and dark shot noise [A].
    noise_bandwidth : array_like
        Noise bandwidth for the shot noise [Hz].
    extinction_ratio : array_like
        Top over bottom level power, > 1 (inf allowed).
    dark_current : array_like
        |I_dark| [A] (for an APD the multiplied dark current, the part the output carries).
    noise_factor : array_like
        Shot-noise factor of the signal current, M F for an APD (1 for a PIN): the signal
        part of each level adds 2 q (M F) I B of noise.
    dark_shot_current : array_like, optional
        Shot-noise equivalent of the dark current [A] (I_ds + I_dm M^2 F for an APD);
        default ``dark_current``.
    guess : array_like, optional
        A power near the answer [W] (the noise-only sensitivity: ISI moves it by a few dB):
        the search brackets the root between half and twice it before it walks by decades.
        Only the number of steps depends on it, not the answer (within the tolerance).

    Returns
    -------
    numpy.ndarray
        Average power [W]; inf where ISI closes the eye so that no power reaches the BER.

    Notes
    -----
    :func:`ber_of_eye` falls with the power; ln BER is bracketed by decades of P (from
    ``guess`` if given, from 1 nW otherwise; closed above 100 kW) and the root refined by
    false position (Illinois) to |ln BER - ln target| < 1e-9.
    """
    r = np.asarray(responsivity, dtype=float)
    shape = np.broadcast_shapes(np.shape(samples)[:-1], r.shape, np.shape(circuit_rms),
                                np.shape(noise_bandwidth), np.shape(dark_current))

    dark_shot = dark_current if dark_shot_current is None else dark_shot_current
    nf = np.asarray(noise_factor, dtype=float)[..., None]

    def ber(power):
        cur = level_currents(power, extinction_ratio, r, dark_current, n_levels)
        shot = nf * (cur - np.asarray(dark_current)[..., None]) + np.asarray(dark_shot)[..., None]
        return ber_of_eye(samples, levels, n_levels, cur,
                          _sigmas(cur, circuit_rms, noise_bandwidth, shot))

    ln_target = np.log(target_ber)

    def g(ln_p):  # ln BER - ln target: smooth and falling in ln P
        return np.log(np.maximum(ber(np.exp(ln_p)), 1e-300)) - ln_target

    ln_floor = np.log(1e-30)  # far below any root: BER -> 1/2 there
    ln_cap = np.log(1e-9 * 1e14)  # 100 kW: an eye that needs more is closed
    ln_lo = np.full(shape, ln_floor)
    g_lo = np.full(shape, np.nan)  # NaN: not evaluated yet
    ln_hi = np.full(shape, np.log(1e-9))
    if guess is not None:  # a narrow bracket first: [guess / 2, 2 guess], where it holds
        with np.errstate(divide="ignore", invalid="ignore"):
            ln_g = np.log(np.broadcast_to(np.asarray(guess, dtype=float), shape))
        usable = np.isfinite(ln_g) & (ln_g > ln_floor + 1.0) & (ln_g < ln_cap)
        ln_start = np.where(usable, ln_g - np.log(2.0), ln_floor)
        g_start = g(ln_start)
        usable &= g_start > 0  # its lower end must lie below the root (BER above target)
        ln_lo = np.where(usable, ln_start, ln_floor)
        g_lo = np.where(usable, g_start, np.nan)
        ln_hi = np.where(usable, ln_start + np.log(4.0), ln_hi)
    g_hi = g(ln_hi)
    for _ in range(36):  # by decades up to the cap (1e-30 W to 100 kW at most)
        short = (g_hi > 0) & (ln_hi < ln_cap)
        if not np.any(short):
            break
        ln_lo, g_lo = np.where(short, ln_hi, ln_lo), np.where(short, g_hi, g_lo)
        ln_hi = np.where(short, np.minimum(ln_hi + np.log(10.0), ln_cap), ln_hi)
        g_hi = np.where(short, g(ln_hi), g_hi)
    closed = g_hi > 0
    if np.isnan(g_lo).any():
        g_lo = np.where(np.isnan(g_lo), g(ln_lo), g_lo)
    # Illinois false position on the bracket (Dowell and Jarratt 1971), then bisection
    # steps until the bracket is below 1e-10 in ln P
    x = ln_hi
    last = np.zeros(shape, dtype=np.int8)
    for _ in range(60):
        denom = np.where(g_lo != g_hi, g_lo - g_hi, 1.0)
        x = np.clip(ln_lo + g_lo * (ln_hi - ln_lo) / denom, ln_lo, ln_hi)
        wide = (ln_hi - ln_lo) > 0.5  # far from the root (ln BER saturates): bisect instead
        x = np.where(wide, 0.5 * (ln_lo + ln_hi), x)
        gx = g(x)
        above = gx > 0
        g_hi = np.where(above & (last == 1), 0.5 * g_hi, g_hi)
        g_lo = np.where(~above & (last == -1), 0.5 * g_lo, g_lo)
        ln_lo, g_lo = np.where(above, x, ln_lo), np.where(above, gx, g_lo)
        ln_hi, g_hi = np.where(above, ln_hi, x), np.where(above, g_hi, gx)
        last = np.where(above, 1, -1).astype(np.int8)
        if np.all((np.abs(gx) < 1e-9) | (ln_hi - ln_lo < 1e-10) | closed):
            break
    return np.where(closed, np.inf, np.exp(x))


def personick_integrals(response, bit_rate, n_points=4001):
    """Personick's noise-bandwidth integrals I2 and I3 of a chain response (dimensionless).

    Parameters
    ----------
    response : callable
        ``response(f)`` -> complex H_out(f) / H_in(f), the chain from the received pulse to
        the output pulse [any unit], at frequencies ``f`` [Hz] (1-D); may return leading
        design axes.
    bit_rate : float
        B [bit/s], > 0: frequencies are normalised to it.
    n_points : int
        Log-spaced samples from 1e-6 B to 1e4 B.

    Returns
    -------
    (i2, i3) : numpy.ndarray
        I2 = int_0^inf |H(x B)/H(0)|^2 dx, I3 = int_0^inf |H(x B)/H(0)|^2 x^2 dx; inf where the
        integrand has not decayed at 1e4 B (a response falling slower than f^-1.5 has no I3).

    Notes
    -----
    I2 B is the white-noise bandwidth and I3 B^3 the f^2-noise (en C) bandwidth of the
    receiver. For an NRZ input and a full raised-cosine output Personick (1973) gives
    I2 = 0.562 and I3 = 0.0868 (from memory; the tests rebuild the values by quadrature).
    """
    x = np.logspace(-6.0, 4.0, n_points)
    h = np.asarray(response(x * bit_rate))
    h0 = np.asarray(response(np.zeros(1)))[..., :1]
    g = np.abs(h / h0) ** 2
    lnx = np.log(x)
    out = []
    for weight in (x, x ** 3):  # dx = x dlnx
        integrand = g * weight
        val = np.trapezoid(integrand, lnx, axis=-1)
        tail = integrand[..., -1] > 1e-6 * np.max(integrand, axis=-1)
        out.append(np.where(tail, np.inf, val))
    return out[0], out[1]


@dataclass(frozen=True)
class Eye:
    """The eye of a receiver for a PRBS pattern at a bit rate (from :meth:`Receiver.eye`).

    Every figure is at the receiver's optical power, extinction ratio and target BER.

    Parameters
    ----------
    bit_rate : float
        [bit/s].
    symbol_rate : float
        [symbol/s] (bit rate / log2 of the number of levels).
    modulation : str
        ``"nrz"`` or ``"pam4"``.
    pattern : str
        ``"prbs<n>"``.
    time : numpy.ndarray
        Phase of each trace sample relative to the eye centre [s], (M,).
    decision_time : float
        Best decision instant after the start of a symbol [s] (includes the chain delay).
    traces : numpy.ndarray
        Noise-free output of every symbol of one pattern period around its decision window
        [V], (N, M).
    levels : numpy.ndarray
        Level index of every symbol (N,).
    level_noise : numpy.ndarray
        rms output noise of every level [V] (circuit noise and the level's shot noise).
    target_ber : float
        The BER of ``height``, ``width`` and ``sensitivity``.
    opening : float
        Noise-free vertical opening of the pattern's eye at the best phase, relative to the
        ideal level spacing (1 without ISI, <= 0 closed).
    worst_case_opening : float
        The same for the worst-case pattern (peak distortion analysis).
    height : float
        Vertical opening left at the target BER, Q sigma taken off each edge [V], >= 0.
    width : float
        Horizontal opening at the target BER [s].
    isi_penalty_db : float
        ISI power penalty [dB]: the sensitivity with ISI over the noise-only one.
    worst_case_penalty_db : float
        -10 log10(worst_case_opening) [dB]: the penalty of the worst pattern for
        signal-independent noise.
    jitter_pp : float
        Peak-to-peak ISI jitter of the threshold crossings [s].
    jitter_rms : float
        rms ISI jitter [s].
    sensitivity : float
        Average optical power for the target BER with ISI and noise (statistical eye) [W].
    sensitivity_noise_only : float
        The same without ISI [W].
    personick_i2 : float
        Personick's I2 of the amplifier chain (noise bandwidth / bit rate).
    personick_i3 : float
        Personick's I3 of the amplifier chain.
    dc_transimpedance : float
        |Zt(0)| of the chain [ohm].
    """

    bit_rate: float
    symbol_rate: float
    modulation: str
    pattern: str
    time: np.ndarray
    decision_time: float
    traces: np.ndarray
    levels: np.ndarray
    level_noise: np.ndarray
    target_ber: float
    opening: float
    worst_case_opening: float
    height: float
    width: float
    isi_penalty_db: float
    worst_case_penalty_db: float
    jitter_pp: float
    jitter_rms: float
    sensitivity: float
    sensitivity_noise_only: float
    personick_i2: float
    personick_i3: float
    dc_transimpedance: float

    @property
    def sensitivity_dbm(self) -> float:
        """Sensitivity with ISI [dBm]."""
        return float(10.0 * np.log10(self.sensitivity / 1e-3))

    def figures(self) -> dict:
        """The scalar figures, name -> (value, SI unit)."""
        units = {"bit_rate": "bit/s", "symbol_rate": "Bd", "decision_time": "s", "target_ber": "",
                 "opening": "", "worst_case_opening": "", "height": "V", "width": "s",
                 "isi_penalty_db": "dB", "worst_case_penalty_db": "dB", "jitter_pp": "s",
                 "jitter_rms": "s", "sensitivity": "W", "sensitivity_noise_only": "W",
                 "personick_i2": "", "personick_i3": ""}
        return {k: (getattr(self, k), u) for k, u in units.items()}

    def __repr__(self) -> str:
        from ..units import format_eng

        return (f"Eye({self.modulation.upper()} {self.pattern.upper()} at "
                f"{format_eng(self.bit_rate, 'bit/s')}: opening {self.opening:.3f}, height "
                f"{format_eng(self.height, 'V')}, width {format_eng(self.width, 's')}, ISI penalty "
                f"{self.isi_penalty_db:.2f} dB)")

    def plot(self, ax=None, bins=200, noise=True):
        """Density eye over two symbols, engineering time axis; returns the figure.

        Parameters
        ----------
        ax : matplotlib.axes.Axes, optional
            Axes to draw into (default: a new figure).
        bins : int
            Vertical bins of the density, 20 to 2000.
        noise : bool
            Spread every trace by its level's Gaussian noise (default True).
        """
        from ..views.eye_plot import plot_eye

        return plot_eye(self, ax=ax, bins=bins, noise=noise)
