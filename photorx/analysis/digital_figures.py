"""The time-domain figures of ``evaluate()``: eye opening and sensitivity with ISI, per design.

For every design point of an evaluation (vectorised, no loop over designs) the chain
response H(f) = H_pd(f) Zt(f) H_filter(f) is evaluated at the harmonics of a PRBS7 NRZ
pattern (the loop as polynomial ratios, :class:`~photorx.circuit.loop_rational.LoopPolynomials`;
the photodiode model at a thinned subset, interpolated), the periodic pattern and pulse
responses follow by inverse FFT (:func:`~photorx.analysis.digital_response.periodic_response`)
and the eye figures come from :mod:`~photorx.analysis.digital_eye`. The scalar, full
time-domain view of one receiver (pulse response, :class:`~photorx.analysis.digital_eye.Eye`)
is :mod:`photorx.analysis.digital`, which builds on this module and on the evaluation.

References
----------
.. [1] E. Saeckinger, *Broadband Circuits for Optical Fiber Communication*, Wiley, 2005, ch. 4.
.. [2] G. P. Agrawal, *Fiber-Optic Communication Systems*, 4th ed., Wiley, 2010, sec. 4.5-4.7.
"""

from __future__ import annotations

import functools

import numpy as np

from ..circuit.filters import filter_response
from ..errors import DesignError
from .design_blocks import design_blocks, design_rows, rows_memo, rows_shape
from .digital_eye import statistical_sensitivity, vertical_opening, worst_case_opening
from .digital_patterns import pattern_symbols
from .digital_response import periodic_response
from .parameters import with_trailing_axis

__all__ = ["check_bit_rate", "digital_figures", "DIGITAL_FIGURES"]

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
    return _fold(_rolled(y, shift), n_sym, m), _fold(_rolled(p, shift), n_sym, m), shift, zt0


def _rolled(x, shift):
    """Each row of ``x`` (..., n) rolled left by its own ``shift`` (...): x[(i + shift) % n].

    Row slices of the doubled period (a window view) instead of a gather with a computed
    index array: the same values, several times faster on the eye's (designs x N M) arrays.
    """
    n = x.shape[-1]
    rows = x.reshape(-1, n)
    start = (np.broadcast_to(shift, x.shape[:-1]).reshape(-1)) % n
    doubled = np.concatenate([rows, rows], axis=-1)
    windows = np.lib.stride_tricks.sliding_window_view(doubled, n, axis=-1)
    return windows[np.arange(rows.shape[0]), start].reshape(x.shape)



# ------------------------------------------------------------------ figures for evaluate()
#: Figures that evaluate() adds for a digital receiver (NaN without a bit rate); their units
#: and descriptions are in :data:`photorx.analysis.result.FIGURES`.
DIGITAL_FIGURES = ("eye_opening", "worst_case_eye_opening", "sensitivity_isi", "sensitivity_isi_dbm",
                   "isi_penalty_db")


_EXACT_HARMONICS = 32  # the lowest harmonics (diffusion tail) always get the model itself


_MAX_STEP = 16  # largest thinning step (harmonics per knot)


def _thinning_steps(transit_bandwidth, df):
    """Each design's thinning step: s f_1 <= transit_bandwidth / 10, 1 to 16 (int array)."""
    tb = np.asarray(transit_bandwidth, dtype=float)
    with np.errstate(invalid="ignore", over="ignore"):
        raw = np.floor(0.1 * tb / df)
    return np.where(np.isfinite(raw), np.clip(raw, 1, _MAX_STEP), _MAX_STEP).astype(int)


def _knots(n, step):
    """Harmonic indices the model is evaluated at for a step: the exact ones, then every
    ``step``-th and the last."""
    knots = np.arange(_EXACT_HARMONICS, n, step)
    if knots[-1] != n - 1:
        knots = np.append(knots, n - 1)
    return np.concatenate([np.arange(_EXACT_HARMONICS), knots])


def _interpolated(h, n, step):
    """Every harmonic 0 .. n - 1 from the model ``h`` at :func:`_knots` ``(n, step)``: the
    segments between knots are filled by slices (no gather over the harmonic axis)."""
    exact, hk = h[..., :_EXACT_HARMONICS], h[..., _EXACT_HARMONICS:]
    n_reg = hk.shape[-1] - 2  # regular segments of `step` harmonics, then the last (shorter)
    frac = np.arange(step) / step
    lo, hi = hk[..., :n_reg, None], hk[..., 1:n_reg + 1, None]
    regular = (lo + (hi - lo) * frac).reshape(h.shape[:-1] + (n_reg * step,))
    tail = n - 1 - (_EXACT_HARMONICS + n_reg * step)  # harmonics from the last regular knot
    frac_t = np.arange(tail + 1) / tail
    last = hk[..., -2:-1] + (hk[..., -1:] - hk[..., -2:-1]) * frac_t
    return np.concatenate([exact, regular, last], axis=-1)


def _thinned(photodiode, f, transit_bandwidth):
    """The photodiode model at every harmonic ``f`` (1-D, uniform from 0), computed at few.

    The lowest harmonics are evaluated exactly; above them every s-th, with s up to 16 and
    s f_1 <= transit_bandwidth / 10 for each design, and the rest linearly interpolated
    (real and imaginary parts): the drift response varies on the scale of the transit
    bandwidth and the diffusion tail like a power of f, so the interpolation error is below
    1e-3 of the response. A sweep evaluates the costly diffusion model at a tenth of the
    points. Each design's step is its own (designs with different steps share the union of
    their knots), so a design's figures do not depend on the other designs of its chunk.
    """
    n = f.size
    df = f[1] - f[0] if n > 1 else 1.0
    steps = _thinning_steps(transit_bandwidth, df)
    distinct = np.unique(steps)
    if n <= _EXACT_HARMONICS + 2 or np.all(distinct == 1):
        return photodiode(f)
    if distinct.size == 1:
        step = int(distinct[0])
        return _interpolated(np.asarray(photodiode(f[_knots(n, step)])), n, step)
    idx = np.unique(np.concatenate([_knots(n, int(s)) for s in distinct]))
    h = np.asarray(photodiode(f[idx]))
    shape = np.broadcast_shapes(h.shape[:-1], steps.shape)
    rows = np.broadcast_to(h, shape + h.shape[-1:]).reshape(-1, idx.size)
    row_steps = np.broadcast_to(steps, shape).reshape(-1)
    out = np.empty((rows.shape[0], n), dtype=np.result_type(h, complex))
    for s in distinct:
        sel = row_steps == s
        pos = np.searchsorted(idx, _knots(n, int(s)))
        out[sel] = _interpolated(rows[sel][:, pos], n, int(s))
    return out.reshape(shape + (n,))


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
    photodiode = pd_e.intrinsic_response_at(v_e, wl_e) if p.has_speed else None
    pf = rx.post_filter
    transit_bw = np.asarray(sensitivity.get("transit_bandwidth", np.inf), dtype=float)

    blocks = design_blocks(p.shape)  # rows of a sweep chunk at a time: memory, same values
    photodiode_at = photodiode if len(blocks) == 1 else rows_memo(photodiode)
    # the post filter is the same for every design: once per harmonic grid, not per block
    filter_at = None if pf is None else rows_memo(
        lambda f: filter_response(f, pf.kind, pf.order, pf.cutoff))

    def response(f, rows=None):
        loop = p.polynomials if rows is None else p.polynomials.rows(rows)
        h = loop.transimpedance(f)
        if pf is not None:
            h = h * filter_at(f)
        if photodiode is not None:
            h = h * _thinned(lambda g: design_rows(photodiode_at(g), p.shape, rows), f,
                             transit_bw if rows is None else
                             np.broadcast_to(transit_bw, p.shape)[rows])
        return np.broadcast_to(h, rows_shape(p.shape, rows) + np.shape(f))

    parts = [_eye_figures(functools.partial(response, rows=rows), symbols, levels, rate)
             for rows in blocks]
    eye_max, worst_max, samples = (np.concatenate(x) if len(parts) > 1 else x[0]
                                   for x in zip(*parts))
    stable = p.b(p.loop["stable"], bool)
    with np.errstate(invalid="ignore", over="ignore"):
        # an APD: signal M R P, its shot noise M F times, the dark current's shot-noise
        # equivalent (as the noise-only sensitivity of evaluation._sensitivity)
        sens = statistical_sensitivity(samples, levels, 2, rx.target_ber,
                                       p.b(p.mult["gain"] * p.responsivity),
                                       noise["circuit_noise_rms"], noise["noise_bandwidth"],
                                       rx.extinction_ratio, p.b(p.dark_shot),
                                       noise_factor=p.b(p.mult["noise_factor"]),
                                       guess=sensitivity["sensitivity"])
        penalty = 10.0 * np.log10(sens / sensitivity["sensitivity"])
        sens_dbm = 10.0 * np.log10(sens / 1e-3)

    def mask(x):
        return np.where(stable, np.broadcast_to(x, p.shape), np.nan)
    return {
        "eye_opening": mask(eye_max), "worst_case_eye_opening": mask(worst_max),
        "sensitivity_isi": mask(sens), "sensitivity_isi_dbm": mask(sens_dbm),
        "isi_penalty_db": mask(penalty),
    }
