"""Evaluate a receiver: call each stage's vectorised core once and collect the figures.

No physics lives here. The photodiode gives capacitance, responsivity, dark current and
its intrinsic response; :func:`~photorx.circuit.metrics.tia_figures` gives the loop
figures; :mod:`photorx.circuit.noise` integrates every noise source;
:mod:`photorx.analysis.sensitivity` turns noise into NEP, SNR and sensitivity. This module
only routes arrays between them and finds -3 dB points of the composed response.

Every receiver field may be an array; all figures then have the broadcast shape of the
design points, which is how :func:`photorx.sweep` evaluates a grid in one call.
"""

from __future__ import annotations

import functools

import numpy as np

from ..circuit.filters import filter_response
from ..circuit.loop_rational import loop_polynomials
from ..circuit.metrics import tia_figures
from ..errors import DesignError
from ..device.optics import qe_from_responsivity
from ..circuit.noise import input_noise_psd, with_frequency_axis
from .digital_figures import digital_figures
from .multiplication import multiplied_currents
from .noise_integrals import chain_noise, density_for_q
from .parameters import with_trailing_axis
from .result import ReceiverResult
from .sensitivity import (_levels, analog_snr, dynamic_range, minimum_detectable_power,
                          noise_equivalent_power, q_from_ber, required_average_power)

__all__ = ["evaluate_receiver", "minus_3db_frequency"]

_BW_GRID = np.logspace(-4.0, 1.5, 111)  # 20 points per decade relative to a scale frequency


def minus_3db_frequency(response, ref, scale, shape=None):
    """First frequency where ``|response(f)|`` falls below ``ref/sqrt(2)``, for many designs.

    Parameters
    ----------
    response : callable
        ``response(f)`` with ``f`` shaped ``design_shape + (n,)``, returning complex values
        of that shape.
    ref : array_like
        Reference (pass-band) magnitude of each design.
    scale : array_like
        A frequency near the expected bandwidth of each design [Hz]; the search covers
        1e-4 to 30 times it.
    shape : tuple, optional
        Shape of the result (default: that of ``scale``).

    Returns
    -------
    numpy.ndarray
        -3 dB frequency [Hz]; NaN where no crossing is found or ``scale`` is not finite
        (an unstable loop has no bandwidth).

    Notes
    -----
    A log grid of 20 points per decade brackets the *first* crossing, so peaking above
    the reference does not stop the search; the Illinois variant of false position on
    log|H| against log f then refines every bracket at once. Within a 12 % bracket log|H|
    is nearly linear in log f, and 8 steps reach about 1e-12 relative.
    Where the response is already below the level at the bottom of the window (a slow
    part far below ``scale``) the window moves down by 10^5 at a time, and where it never
    falls below the level it moves up, up to 6 times, before NaN is returned: a crossing
    outside the first window is found, never replaced by the window's edge.
    """
    scale = np.asarray(scale, dtype=float)
    shape = scale.shape if shape is None else shape
    log_level = np.log(np.asarray(ref, dtype=float) / np.sqrt(2.0))[..., None]
    usable = np.isfinite(scale) & (scale > 0)
    base = np.where(usable, scale, 1.0)
    base = np.broadcast_to(base, np.broadcast_shapes(base.shape, log_level.shape[:-1])).copy()
    for _ in range(7):
        f = base[..., None] * _BW_GRID
        with np.errstate(divide="ignore"):
            g = np.log(np.abs(response(f))) - log_level
        g = np.broadcast_to(g, f.shape)
        # move the window (vectorised): down where even its bottom is below -3 dB, up where
        # nothing in it is; stop when every design has its first crossing inside (designs
        # without a usable scale, e.g. unstable loops, stay NaN and never move it)
        down = (g[..., 0] < 0) & usable
        up = ~(g < 0).any(axis=-1) & usable
        if not (down.any() or up.any()):
            break
        base = np.where(down, base * 1e-5, np.where(up, base * 1e5, base))
    below = g < 0
    has = below.any(axis=-1) & (g[..., 0] >= 0)
    k = np.clip(np.argmax(below, axis=-1), 1, f.shape[-1] - 1)[..., None]
    x_lo, x_hi = np.log(np.take_along_axis(f, k - 1, -1)), np.log(np.take_along_axis(f, k, -1))
    g_lo, g_hi = np.take_along_axis(g, k - 1, -1), np.take_along_axis(g, k, -1)
    x = x_lo
    last = np.zeros(x.shape, dtype=int)  # which end the previous step replaced: +1 low, -1 high
    for _ in range(8):
        denom = np.where(g_lo != g_hi, g_lo - g_hi, 1.0)
        x = np.clip(x_lo + g_lo * (x_hi - x_lo) / denom, x_lo, x_hi)
        with np.errstate(divide="ignore"):
            gx = np.log(np.abs(response(np.exp(x)))) - log_level
        above = gx >= 0
        # Illinois step: when the same end is replaced twice, halve the other end's value
        g_hi = np.where(above & (last == 1), 0.5 * g_hi, g_hi)
        g_lo = np.where(~above & (last == -1), 0.5 * g_lo, g_lo)
        x_lo, g_lo = np.where(above, x, x_lo), np.where(above, gx, g_lo)
        x_hi, g_hi = np.where(above, x_hi, x), np.where(above, g_hi, gx)
        last = np.where(above, 1, -1)
    bw = np.where(has & np.isfinite(scale), np.exp(x[..., 0]), np.nan)
    return np.broadcast_to(bw, shape)


_PER_DECADE = 5  # shared search grid: 5 points per decade on the lattice 10^(k/5)
_WINDOW = (1e-4, 30.0)  # each part's window relative to its scale, as in minus_3db_frequency


def _lattice(lo, hi):
    """Log grid per design on the lattice 10^(k/_PER_DECADE) covering [lo, hi] [Hz]: (..., n).

    Every design gets the same number of points (the widest span), so one array holds all.
    """
    k_lo = np.floor(np.log10(lo) * _PER_DECADE)
    k_hi = np.ceil(np.log10(hi) * _PER_DECADE)
    n = int(np.max(k_hi - k_lo)) + 1 if np.size(k_lo) else 2
    return 10.0 ** ((k_lo[..., None] + np.arange(max(n, 2))) / _PER_DECADE)


class _Bracket:
    """First -3 dB crossing of many designs, bracketed on a grid and refined step by step.

    ``g = log|H| - log(level)`` sampled on the grid ``f`` (..., n) brackets the first sign
    change; each :meth:`update` with ``g`` at the proposed ``x = ln f`` (..., 1) is one step
    of the Illinois variant of false position on log|H| against log f (superlinear; from a
    bracket of 10^0.2, 8 steps reach about 1e-10 relative). ``found`` is False where the grid's
    bottom is already below the level or no crossing lies on the grid (the caller then falls
    back to the moving-window search of :func:`minus_3db_frequency`).

    References
    ----------
    .. [1] M. Dowell and P. Jarratt, A modified regula falsi method for computing the root
       of an equation, BIT 11 (1971) 168-174 (the Illinois algorithm).
    """

    def __init__(self, f, g, usable):
        below = g < 0
        self.found = below.any(axis=-1) & (g[..., 0] >= 0) & usable
        k = np.clip(np.argmax(below, axis=-1), 1, f.shape[-1] - 1)[..., None]
        self.x_lo = np.log(np.take_along_axis(f, k - 1, -1))
        self.x_hi = np.log(np.take_along_axis(f, k, -1))
        self.g_lo, self.g_hi = np.take_along_axis(g, k - 1, -1), np.take_along_axis(g, k, -1)
        self.x = self.x_lo
        self.last = np.zeros(self.x.shape, dtype=np.int8)
        self.converged = False

    def propose(self):
        denom = np.where(self.g_lo != self.g_hi, self.g_lo - self.g_hi, 1.0)
        x = np.clip(self.x_lo + self.g_lo * (self.x_hi - self.x_lo) / denom, self.x_lo, self.x_hi)
        # every design's step below 1e-13 in ln f (or no crossing to refine): further steps
        # change nothing the figures show
        self.converged = bool(np.all((np.abs(x - self.x) <= _STEP_TOL) | ~self.found[..., None]))
        self.x = x
        return self.x

    def update(self, gx):
        above = gx >= 0
        last = self.last
        g_hi = np.where(above & (last == 1), 0.5 * self.g_hi, self.g_hi)
        g_lo = np.where(~above & (last == -1), 0.5 * self.g_lo, self.g_lo)
        self.x_lo, self.g_lo = np.where(above, self.x, self.x_lo), np.where(above, gx, g_lo)
        self.x_hi, self.g_hi = np.where(above, self.x_hi, self.x), np.where(above, g_hi, gx)
        self.last = np.where(above, 1, -1).astype(np.int8)

    def result(self):
        return np.where(self.found, np.exp(self.x[..., 0]), np.nan)


_REFINE_STEPS = 8
_STEP_TOL = 1e-13


def _log_ratio(h, log_level):
    with np.errstate(divide="ignore"):
        return np.log(np.abs(h)) - log_level


def _filter_kwargs(pf):
    return {} if pf is None else dict(filter_kind=pf.kind, filter_order=pf.order, filter_cutoff=pf.cutoff)


def _no_photocurrent(pd_, wavelength, responsivity):
    """A receiver without photocurrent has no figures: say which wavelength and why."""
    wl = np.broadcast_to(np.asarray(wavelength, dtype=float), np.shape(responsivity))
    bad = float(np.ravel(wl)[np.argmax(np.ravel(np.asarray(responsivity) <= 0))])
    material = getattr(pd_, "material", None)
    if material is not None:
        temperature = float(np.max(np.asarray(pd_.temperature)))
        edge = float(material.cutoff_wavelength(temperature))
        why = (f"beyond the absorption edge of {material.name} ({edge * 1e9:.0f} nm at "
               f"{temperature:.0f} K): the photodiode gives no photocurrent")
        valid = f"< {edge * 1e9:.0f} nm"
    else:
        why = "where the photodiode's responsivity is zero"
        valid = "wavelengths with a responsivity > 0"
    return DesignError(f"wavelength = {bad * 1e9:.0f} nm is {why}; valid range: {valid}",
                       parameter="wavelength")


def _is_physical(pd_) -> bool:
    """True for a photodiode built on a physical junction (depletion width, transit)."""
    return callable(getattr(getattr(pd_, "junction", None), "depletion_width", None))


def _has_intrinsic_speed(pd_) -> bool:
    """True when the photodiode has an intrinsic response of its own: a physical junction
    or a given intrinsic bandwidth (a data-sheet diode without either leaves the speed to
    the circuit)."""
    return _is_physical(pd_) or getattr(pd_, "intrinsic_bandwidth", None) is not None


class _Point:
    """The operating point shared by every stage: photodiode numbers and the circuit."""

    def __init__(self, rx):
        self.rx = rx
        self.pd = rx.photodiode_at_temperature()
        self.v = rx.reverse_bias
        self.amp = rx.tia.amp
        self.net = rx._circuit_of(self.pd)  # the same view: one ionisation pass for an APD
        self.responsivity = np.asarray(self.pd.responsivity(rx.wavelength, self.v), dtype=float)
        if np.any(self.responsivity <= 0):
            raise _no_photocurrent(self.pd, rx.wavelength, self.responsivity)
        self.dark = np.asarray(self.pd.dark_current(self.v), dtype=float)
        # shot noise counts the magnitude of the diode current: in forward bias the dark
        # current is negative (it flows forward), and the photodiode's own equivalent circuit
        # uses |I_dark| for its shot-noise current (EquivalentCircuit.current); so do the noise
        # and sensitivity stages here (2 q |I|: Schottky 1918; common practice)
        # avalanche gain (1 for a PIN): signal M R P, shot noise 2q I_ds + 2q I M^2 F
        self.mult = multiplied_currents(self.pd, self.v, self.responsivity, rx.optical_power,
                                        rx.background_power, self.dark)
        self.dark_shot = self.mult["shot_dark"]
        self.i_signal = self.mult["signal_current"]
        self.i_background = self.mult["background_current"]
        self.circuit = rx.tia._args(self.net)
        self.loop = tia_figures(**self.circuit, output_swing=self.amp.output_swing)
        self.shape = np.broadcast_shapes(
            np.shape(self.loop["stable"]), np.shape(self.v), np.shape(rx.wavelength),
            np.shape(rx.optical_power), np.shape(rx.temperature), np.shape(self.responsivity),
            np.shape(self.dark), *(np.shape(getattr(self.amp, name)) for name in (  # noise-only
                "voltage_noise", "current_noise", "voltage_noise_corner", "current_noise_corner")))
        self.physical = _is_physical(self.pd)
        self.has_speed = _has_intrinsic_speed(self.pd)

    @functools.cached_property
    def polynomials(self):
        """The loop's transfer functions as polynomial ratios, over the design shape
        (:func:`photorx.circuit.loop_rational.loop_polynomials`): what the frequency grids
        of the bandwidth search and the time-domain figures evaluate."""
        return loop_polynomials(**self.circuit, shape=self.shape)

    def b(self, x, dtype=float):
        """``x`` broadcast to the design shape."""
        return np.broadcast_to(np.asarray(x, dtype=dtype), self.shape)


def _operating_point(p: _Point) -> dict:
    rx, pd_, v = p.rx, p.pd, p.v
    junction = pd_.junction
    nan = p.b(np.nan)
    return {
        "reverse_bias": p.b(v), "wavelength": p.b(rx.wavelength), "optical_power": p.b(rx.optical_power),
        "temperature": p.b(rx.temperature),
        "depletion_width": p.b(junction.depletion_width(v)) if p.physical else nan,
        "capacitance": p.b(pd_.capacitance(v)),
        "input_capacitance": p.b(p.net.capacitance) + p.b(p.amp.input_capacitance),
        "responsivity": p.b(p.responsivity),
        "quantum_efficiency": p.b(qe_from_responsivity(p.responsivity, rx.wavelength)),
        "photocurrent": p.b(p.i_signal), "background_current": p.b(p.i_background),
        "dark_current": p.b(p.dark), "shunt_resistance": p.b(p.net.shunt_resistance),
        "series_resistance": p.b(p.net.series_resistance),
        "breakdown_voltage": p.b(junction.breakdown_voltage()) if p.physical else p.b(np.inf),
    }


def _speed(p: _Point) -> dict:
    """Bandwidth of the whole chain H_pd * Zt * H_filter, of its parts, and which one limits it.

    The photodiode response, the transimpedance and the filter are evaluated once per design
    on one shared log grid (both -3 dB searches read it); only the few refinement steps
    evaluate them again, at one frequency per design.
    """
    rx, pd_, loop, pf = p.rx, p.pd, p.loop, p.rx.post_filter
    pd_e = with_trailing_axis(pd_, p.shape)  # swept diode fields broadcast against f grids
    v_e = np.asarray(p.v, dtype=float)[..., None]
    wl_e = np.asarray(rx.wavelength, dtype=float)[..., None]

    # bias- and wavelength-dependent set-up once; each refinement step evaluates f only
    photodiode = (pd_e.intrinsic_response_at(v_e, wl_e) if p.has_speed
                  else (lambda f: pd_e.intrinsic_response(f, v_e, wl_e)))

    def circuit(f):
        h = p.polynomials.transimpedance(f)
        return h if pf is None else h * filter_response(f, pf.kind, pf.order, pf.cutoff)

    def chain(f):
        return photodiode(f) * circuit(f) if p.has_speed else circuit(f)

    loop_bw = p.b(loop["bandwidth"])
    zt0 = p.b(loop["dc_transimpedance"])
    if p.has_speed:
        transit_bw = p.b(pd_.transit_bandwidth(p.v, rx.wavelength))
        transit_time = p.b(pd_.transit_time(p.v))
    else:  # a datasheet diode without a speed figure: the circuit sets the speed
        transit_bw = p.b(np.inf)
        transit_time = p.b(np.nan)
    filter_bw = p.b(pf.cutoff if pf is not None else np.inf)
    # search the chain's -3 dB point near its slowest part (a 10 kHz post filter behind a
    # 1 GHz loop), not near the loop alone; an unstable loop (NaN) keeps NaN
    pd_scale = np.where(np.isfinite(transit_bw) & (transit_bw > 0), transit_bw, np.nan)
    slowest0 = np.fmin(np.fmin(loop_bw, pd_scale), filter_bw)
    chain_scale = np.where(np.isfinite(loop_bw), slowest0, np.nan)
    chain_ok = np.isfinite(chain_scale) & (chain_scale > 0)
    pd_ok = np.isfinite(pd_scale) & p.has_speed
    cs = np.where(chain_ok, chain_scale, 1.0)
    ps = np.where(pd_ok, pd_scale, cs)
    lo = _WINDOW[0] * np.fmin(cs, ps)
    hi = _WINDOW[1] * np.fmax(cs, ps)
    f = _lattice(lo, hi)
    h_circuit = circuit(f)
    log_ref = np.log(np.abs(zt0) / np.sqrt(2.0))[..., None]
    log_half = np.log(1.0 / np.sqrt(2.0))
    if p.has_speed:
        h_pd = photodiode(f)
        pd_b = _Bracket(f, _log_ratio(h_pd, log_half), pd_ok)
        ch_b = _Bracket(f, _log_ratio(h_pd * h_circuit, log_ref), chain_ok)
        for _ in range(_REFINE_STEPS):  # both searches share each call of the photodiode model
            x = np.concatenate([pd_b.propose(), ch_b.propose()], axis=-1)
            if pd_b.converged and ch_b.converged:
                break
            hp = photodiode(np.exp(x))
            pd_b.update(_log_ratio(hp[..., :1], log_half))
            ch_b.update(_log_ratio(hp[..., 1:] * circuit(np.exp(x[..., 1:])), log_ref))
        pd_bw = pd_b.result()
        miss = pd_ok & ~pd_b.found
        if miss.any():  # the crossing lies outside the shared grid: the moving-window search
            slow = minus_3db_frequency(photodiode, p.b(1.0), transit_bw, p.shape)
            pd_bw = np.where(miss, slow, pd_bw)
    else:
        pd_bw = p.b(np.inf)
        ch_b = _Bracket(f, _log_ratio(h_circuit, log_ref), chain_ok)
        for _ in range(_REFINE_STEPS):
            x = ch_b.propose()
            if ch_b.converged:
                break
            ch_b.update(_log_ratio(circuit(np.exp(x)), log_ref))
    bandwidth = ch_b.result()
    miss = chain_ok & ~ch_b.found
    if miss.any():
        slowest = np.fmin(np.fmin(loop_bw, np.where(np.isnan(pd_bw), np.inf, pd_bw)), filter_bw)
        scale = np.where(np.isfinite(loop_bw), slowest, np.nan)
        slow = minus_3db_frequency(chain, zt0, scale, p.shape)
        bandwidth = np.where(miss, slow, bandwidth)
    parts = np.stack([loop_bw, np.where(np.isnan(pd_bw), np.inf, pd_bw), filter_bw])
    names = np.array(["amplifier loop", "photodiode", "post filter"])
    limited_by = names[np.argmin(np.where(np.isnan(parts), np.inf, parts), axis=0)]
    # the photodiode is diffusion-limited when its own bandwidth sits well below the transit limit
    pd_part = np.where(pd_bw < 0.95 * transit_bw, "photodiode diffusion tail", "photodiode transit")
    limited_by = np.where(limited_by == "photodiode", pd_part, limited_by)
    limited_by = np.where(np.isfinite(bandwidth), limited_by, "unstable loop")
    return {
        "bandwidth": bandwidth, "loop_bandwidth": loop_bw, "photodiode_bandwidth": pd_bw,
        "transit_bandwidth": transit_bw, "transit_time": transit_time, "filter_bandwidth": filter_bw,
        "limited_by": limited_by, "rise_time": p.b(loop["rise_time"]),
        "dc_transimpedance": np.abs(p.b(loop["dc_transimpedance"])),
    }


def _stability(p: _Point) -> dict:
    loop = p.loop
    out = {"stable": p.b(loop["stable"], bool)}
    for name in ("phase_margin", "gain_margin_db", "crossover", "peaking_db", "overshoot", "q",
                 "settling_time"):
        out[name] = p.b(loop[name])
    return out


def _noise(p: _Point):
    """Every source integrated over the real response.

    Returns the figures, the input-referred rms [A], the mean-square output noise [V^2] and
    the input-referred spot density at ENBW/10 [A/rtHz] of every source.
    """
    rx, amp = p.rx, p.amp
    circuit = {k: (tuple(p.b(x) for x in val) if k in ("poles", "zeros") else p.b(val))
               for k, val in p.circuit.items()}
    filt = _filter_kwargs(rx.post_filter)
    sources = dict(
        en=p.b(amp.voltage_noise), en_corner=p.b(amp.voltage_noise_corner), in_=p.b(amp.current_noise),
        in_corner=p.b(amp.current_noise_corner), temperature=p.b(rx.temperature),
        en_shape=amp.voltage_noise_curve, in_shape=amp.current_noise_curve,
        i_shot={k: p.b(p.mult[f"shot_{k}"]) for k in ("dark", "signal", "background")})
    # one grid for both integrals: the loop's transfer functions are built once
    # a peaked loop's resonance needs a denser grid from the start (density_for_q)
    mean_square, enbw = chain_noise(rx.noise_band_low, **circuit, **filt, **sources,
                                    points_per_decade=density_for_q(p.b(p.loop["q"])))
    enbw = p.b(enbw)
    # input-referred spot density of every source at ENBW/10 (in the flat part of the
    # response), the column of the budget's by-source table
    spot_psd = input_noise_psd((enbw / 10.0)[..., None], **with_frequency_axis({**circuit, **sources}))
    spot = {name: p.b(np.sqrt(v[..., 0])) for name, v in spot_psd.items()}
    zt0 = np.abs(p.b(p.loop["dc_transimpedance"]))
    total = sum(mean_square.values())
    # circuit noise = all but the signal and dark shot noise, which the sensitivity formulas add
    circuit_ms = total - mean_square["shot_signal"] - mean_square["shot_dark"]
    keys = list(mean_square)
    dominant = np.array(keys)[np.argmax(np.stack([p.b(mean_square[k]) for k in keys]), axis=0)]
    in_rms = np.sqrt(total) / zt0
    # noise floor = everything present without the signal (circuit, dark and background shot
    # noise): NEP, minimum detectable power and dynamic range are defined at vanishing signal,
    # where the shot noise of the operating-point photocurrent does not exist (Hobbs, Building
    # Electro-Optical Systems, 2nd ed., 2009, sec. 3.4; Agrawal, Fiber-Optic Communication
    # Systems, 4th ed., 2010, sec. 4.4: NEP is the power giving SNR = 1 in 1 Hz)
    floor_rms = np.sqrt(np.clip(total - mean_square["shot_signal"], 0.0, None)) / zt0
    figures = {
        "noise_bandwidth": enbw, "output_noise_rms": np.sqrt(total), "input_noise_rms": in_rms,
        "input_noise_density": in_rms / np.sqrt(enbw),
        "circuit_noise_rms": np.sqrt(np.clip(circuit_ms, 0.0, None)) / zt0,
        "noise_floor_rms": floor_rms, "noise_floor_density": floor_rms / np.sqrt(enbw),
        "dominant_noise_source": dominant,
    }
    by_source = {name: p.b(np.sqrt(ms) / zt0) for name, ms in mean_square.items()}
    return figures, by_source, {name: p.b(ms) for name, ms in mean_square.items()}, spot


def _sensitivity(p: _Point, noise: dict) -> dict:
    rx = p.rx
    # multiplied responsivity M R and shot-noise factor M F (1 and 1 for a PIN)
    r, power, dark = p.b(p.mult["gain"] * p.responsivity), p.b(rx.optical_power), p.b(p.dark_shot)
    nf = p.b(p.mult["noise_factor"])
    enbw, circuit_rms = noise["noise_bandwidth"], noise["circuit_noise_rms"]
    snr = np.where(power > 0, analog_snr(power, r, circuit_rms, enbw, rx.modulation_depth, dark,
                                         noise_factor=nf), 0.0)
    with np.errstate(divide="ignore"):
        snr_db = np.where(snr > 0, 10.0 * np.log10(np.where(snr > 0, snr, 1.0)), -np.inf)
    zt0 = np.abs(p.b(p.loop["dc_transimpedance"]))
    sens = p.b(required_average_power(q_from_ber(rx.target_ber), r, circuit_rms, enbw,
                                      rx.extinction_ratio, dark, noise_factor=nf))
    return {
        # at vanishing signal: the floor without the signal's own shot noise (see _noise)
        "nep": noise_equivalent_power(noise["noise_floor_density"], r),
        "min_detectable_power": minimum_detectable_power(noise["noise_floor_rms"], r),
        "snr": snr, "snr_db": snr_db, "max_photocurrent": p.b(p.loop["max_photocurrent"]),
        # 20 log10: a ratio of currents (the optical dynamic range is half as many dB)
        "dynamic_range_db": 20.0 * np.log10(p.b(dynamic_range(p.amp.output_swing, zt0,
                                                              noise["noise_floor_rms"]))),
        "target_ber": p.b(rx.target_ber), "sensitivity": sens, "sensitivity_dbm": 10.0 * np.log10(sens / 1e-3),
    }


def _checks(p: _Point, op: dict, speed: dict) -> dict:
    rx = p.rx
    ok = np.ones(p.shape, bool)
    v = op["reverse_bias"]
    bias_power = np.abs(v * p.b(p.net.current))  # net.current = dark + signal + background
    # the largest signal power: the one level of NRZ (average and extinction ratio, as the
    # sensitivity stage splits them) or the crest P (1 + m) of the analog signal
    power = p.b(rx.optical_power)
    peak = (_levels(power, None, float(rx.extinction_ratio))[0] if rx.bit_rate is not None
            else power * (1.0 + rx.modulation_depth))
    # a DC-coupled stage carries background and dark current at its output too
    i_peak = p.b(p.mult["gain"] * p.responsivity) * peak + p.b(p.i_background) + np.abs(p.b(p.dark))
    return {
        "peak_photocurrent": i_peak,
        "peak_output": i_peak * speed["dc_transimpedance"],
        # the DC level a DC-coupled stage sits at: average signal + background + dark current
        "average_output": np.abs(p.b(p.net.current)) * speed["dc_transimpedance"],
        "output_swing": p.b(p.amp.output_swing),
        "bit_rate": p.b(np.nan if rx.bit_rate is None else rx.bit_rate),
        "bias_power": bias_power,
        "bias_below_breakdown": v < op["breakdown_voltage"],
        "bias_within_limit": v <= rx.max_bias if rx.max_bias is not None else ok,
        "dark_current_within_limit": np.abs(op["dark_current"]) <= rx.max_dark_current
        if rx.max_dark_current is not None else ok,
        "bias_power_within_limit": bias_power <= rx.max_bias_power if rx.max_bias_power is not None else ok,
        # NRZ rule of thumb: a bandwidth of about 0.7 x bit rate (common practice, Agrawal)
        "bandwidth_for_bit_rate": speed["bandwidth"] >= 0.7 * rx.bit_rate if rx.bit_rate is not None else ok,
    }


_WARNINGS = (
    ("stable", "the feedback loop is unstable at some design points: no bandwidth is reported there"),
    ("bias_below_breakdown", "reverse bias at or beyond the breakdown estimate at some design points"),
    ("bias_within_limit", "reverse bias above its supply limit at some design points"),
    ("dark_current_within_limit", "dark current above its limit at some design points"),
    ("bias_power_within_limit", "bias-supply power above its limit at some design points"),
)


def evaluate_receiver(rx):
    """Every figure of merit of a receiver (see :data:`photorx.analysis.receiver.FIGURES`).

    Parameters
    ----------
    rx : Receiver
        The design; any numeric field may be an array of design points.

    Returns
    -------
    ReceiverResult
    """
    return _evaluate(_Point(rx))


def _evaluate(p: _Point):
    """:func:`evaluate_receiver` from an operating point already built (the eye reuses its
    point for the level currents)."""
    op = _operating_point(p)
    speed = _speed(p)
    noise, by_source, mean_square, spot = _noise(p)
    values = {**op, **speed, **_stability(p), **noise, **_sensitivity(p, noise), **_checks(p, op, speed),
              **_multiplication(p, mean_square)}

    values.update(digital_figures(p, noise, values))
    warnings = tuple(text for name, text in _WARNINGS if not np.all(values[name]))
    return ReceiverResult(values=values, noise_by_source=by_source, warnings=warnings,
                          noise_mean_square=mean_square, noise_spot_density=spot)


def _multiplication(p: _Point, mean_square: dict) -> dict:
    """Avalanche figures: M, F, k_eff and the share of the output noise power that passes
    the gain (2 q (I_ph + I_bg + I_dm) M^2 F; for a PIN the same sources at M = 1)."""
    mult = p.mult
    total = sum(mean_square.values())
    with np.errstate(invalid="ignore", divide="ignore"):
        dark_part = np.where(mult["shot_dark"] > 0,
                             mult["shot_dark_multiplied"] / np.where(mult["shot_dark"] > 0,
                                                                     mult["shot_dark"], 1.0), 0.0)
    multiplied = mean_square["shot_signal"] + mean_square["shot_background"] \
        + mean_square["shot_dark"] * p.b(dark_part)
    return {"gain": p.b(mult["gain"]), "excess_noise_factor": p.b(mult["excess_noise_factor"]),
            "k_effective": p.b(mult["k_effective"]),
            "multiplied_shot_noise_share": p.b(multiplied / total)}
