"""Output noise of every source and the chain's noise bandwidth from one shared frequency grid.

The receiver needs two integrals over the same closed-loop response: the mean-square
output noise of every source, integral S_k(f) |H_filter|^2 df from ``f_lo`` to infinity,
and the equivalent noise bandwidth, integral |Zt H_filter|^2 df / |Zt(0)|^2 from 0 to
infinity. :func:`chain_noise` builds the loop's transfer functions once on a fixed grid
uniform in ln f (``points_per_decade`` per decade, from ``f_lo`` to ``top_factor`` times
the largest of the amplifier's gain-bandwidth product, its poles and the filter cutoff),
integrates both with Romberg's R(3,3) rule, and checks each design's error twice: the
difference to the same rule on every other grid point, divided by 4 (the full grid's error
is smaller than the half grid's by about 2^8 for a smooth integrand; 4 is the margin kept),
must be below ``rtol`` of the total, and the part left out above the top of the grid (for a
density falling at least as 1/f^2) below ``rtol / 10``. The designs are integrated in
blocks of a few hundred (bounded memory). A design that misses either check is integrated
again on grids two and then four times denser that end a hundred times higher, and if it
misses those too by the adaptive integrals of :mod:`photorx.circuit.noise`
(:func:`~photorx.circuit.noise.integrated_output_noise`,
:func:`~photorx.circuit.noise.chain_enbw`): they stay the reference. The first grid's
density follows the loop's Q (:func:`density_for_q`, passed by the receiver evaluation).
"""

from __future__ import annotations

import numpy as np

from ..circuit.filters import filter_power_response
from ..circuit.loop_rational import loop_polynomials
from ..circuit.integration import DEFAULT_RTOL, romberg_weights
from ..circuit.noise import (_unfiltered_psd, chain_enbw, integrated_output_noise,
                             noise_transfer_functions, with_frequency_axis)

__all__ = ["chain_noise", "density_for_q"]

_CIRCUIT = ("gbw", "dc_gain", "poles", "rf", "cf", "cd", "rsh", "rs", "cin", "zeros")
_DEFAULTS = dict(poles=(), zeros=(), rsh=np.inf, rs=0.0, cin=0.0, en=0.0, en_corner=0.0,
                 in_=0.0, in_corner=0.0, temperature=300.0, i_shot=0.0, stage2_noise=0.0,
                 stage2_corner=0.0, en_shape=None, in_shape=None)
_SHAPES = ("en_shape", "in_shape")  # tabulated noise shapes: one for all designs, not arrays


def chain_noise(f_lo, *, rtol=DEFAULT_RTOL, points_per_decade=24, top_factor=1e4,
                filter_kind=None, filter_order=4, filter_cutoff=np.inf, **params):
    """Mean-square output noise by source [V^2] and the chain's ENBW [Hz], for many designs.

    Parameters
    ----------
    f_lo : float
        Lower edge of the noise integral [Hz], > 0; the upper edge is infinite.
    rtol : float
        Relative tolerance of each design's total noise and of its ENBW (default 1e-4).
    points_per_decade : int or array_like of int
        Density of the first grid (rounded up so that the number of intervals is a
        multiple of 16); an array gives each design its own (shaped like the designs, e.g.
        denser for a peaked loop: :func:`density_for_q`). Designs of equal density share
        their grids.
    top_factor : float
        The grid ends at this multiple of the highest amplifier frequency (gain-bandwidth
        product, extra poles) or of the filter cutoff if that is lower.
    filter_kind, filter_order, filter_cutoff
        Optional post filter, as in :func:`photorx.circuit.noise.output_noise_psd`.
    **params
        Keywords of :func:`photorx.circuit.noise.output_noise_psd` shaped like the designs
        (no frequency axis).

    Returns
    -------
    mean_square : dict of numpy.ndarray
        Source key -> mean-square output noise [V^2], as
        :func:`~photorx.circuit.noise.integrated_output_noise` (``f_lo`` to inf).
    enbw : numpy.ndarray
        integral_0^inf |Zt H|^2 df / |Zt(0)|^2 [Hz], as
        :func:`~photorx.circuit.noise.chain_enbw`.

    Notes
    -----
    With u = ln f, P = integral S(e^u) e^u du on a uniform u grid (Romberg R(3,3), error
    estimated against the same rule on every other point). The ENBW adds
    the flat part below ``f_lo``, |Zt(f_lo) H(f_lo)|^2 f_lo, as the adaptive integral does.
    A brick-wall filter is an upper limit of the band, handled by the adaptive path.

    References
    ----------
    .. [1] W. H. Press et al., *Numerical Recipes*, 3rd ed., Cambridge University Press,
       2007, sec. 4.3.
    .. [2] C. D. Motchenbacher and J. A. Connelly, *Low-Noise Electronic System Design*,
       Wiley, 1993, ch. 1 (noise bandwidth).
    """
    unknown = sorted(set(params) - _KNOWN)
    if unknown:  # as a signature would: a misspelt keyword must not be ignored
        raise TypeError(f"chain_noise() got an unexpected keyword argument {unknown[0]!r}")
    full = {**_DEFAULTS, **params}
    filt = dict(filter_kind=filter_kind, filter_order=filter_order, filter_cutoff=filter_cutoff)
    if filter_kind != "brickwall" and np.ndim(f_lo) == 0 and float(f_lo) > 0:
        return _on_grid_in_blocks(float(f_lo), rtol, points_per_decade, top_factor, full, filt)
    ms = integrated_output_noise(f_lo, np.inf, rtol=rtol, **full, **filt)
    enbw = chain_enbw(**{k: full[k] for k in _CIRCUIT}, **filt, rtol=rtol)
    return ms, enbw


def density_for_q(q, base=24):
    """Points per decade of the first noise grid for a loop of quality factor Q [1/decade].

    Parameters
    ----------
    q : array_like
        Q of the loop's dominant pole pair (NaN for an unstable or first-order loop).
    base : int
        Density for a loop with Q <= 1.

    Returns
    -------
    numpy.ndarray of int
        ``base`` for Q <= 1 (or NaN), 2 ``base`` for Q <= 2.5, 4 ``base`` above.

    Notes
    -----
    The loop's resonance spans about 1/Q of a decade in ln f; measured on the shipped demos
    (bias x Rf x Cf grids against a 192-per-decade reference), 24 points per decade keep the
    total within 5e-5 up to Q = 1.1 but miss by up to 1e-3 at Q = 2, and a peaked design
    can pass the half-grid check there by coincidence: such loops start denser.
    """
    qq = np.asarray(q, dtype=float)
    with np.errstate(invalid="ignore"):
        return np.where(qq > 2.5, 4 * base, np.where(qq > 1.0, 2 * base, base)).astype(int)


_KNOWN = frozenset(_CIRCUIT) | frozenset(_DEFAULTS)
_BLOCK = 256  # designs per pass over the noise grid: about 11 MB of transfer functions
_HALF_GRID_GAIN = 4.0  # assumed error ratio of the half grid to the full grid (2^8 in theory)
_DENSER = (2, 4)  # density factors of the further tries for designs the first grid misses
_WIDER = 100.0  # and the factor by which their top is higher (two decades more)


def _leaves(params, filt):
    """(key, index, value) of every array-valued input, poles and shot currents included."""
    for k, v in {**params, "filter_cutoff": filt["filter_cutoff"]}.items():
        if k in _SHAPES:
            continue
        if k in ("poles", "zeros"):
            yield from ((k, i, x) for i, x in enumerate(v))
        elif isinstance(v, dict):
            yield from ((k, name, x) for name, x in v.items())
        else:
            yield k, None, v


def _on_grid_in_blocks(f_lo, rtol, per_decade, top_factor, params, filt):
    """:func:`_on_grid` over at most ``_BLOCK`` designs at a time, adaptive where it misses.

    The sources' densities on the grid are (designs x grid) arrays, about a dozen of them:
    a block of a few hundred designs keeps them within a few megabytes, where a chunk of
    thousands would hold tens of megabytes at once. A design whose grid integral misses the
    tolerance tries grids ``_DENSER`` times denser (each design its own density times the
    factor; designs of equal density share a grid); one that misses them all (or whose grid
    cannot be built) is integrated by the adaptive reference, alone: one such design no
    longer sends its whole chunk down the slow path.
    """
    leaves = list(_leaves(params, filt))
    shape = np.broadcast_shapes(np.shape(per_decade), *(np.shape(v) for _, _, v in leaves))
    size = int(np.prod(shape))
    flat = [(k, i, np.broadcast_to(np.asarray(v, dtype=float), shape).reshape(-1))
            for k, i, v in leaves]
    density = np.broadcast_to(np.asarray(per_decade, dtype=int), shape).reshape(-1)
    mean_square, enbw, ok = {}, np.empty(size), np.zeros(size, dtype=bool)

    def store(rows, ms, en):
        for k, v in ms.items():
            mean_square.setdefault(k, np.empty(size))[rows] = np.broadcast_to(v, rows.shape)
        enbw[rows] = en

    # a sharply peaked loop (low phase margin) needs a denser grid than a flat one, and a
    # source that falls only as 1/f^2 above the loop (the amplifier's voltage noise on the
    # input capacitance) a grid that reaches higher: the designs that miss the tolerance try
    # again on denser grids (_DENSER) that end _WIDER times higher
    for factor, top in ((1, top_factor), *((k, _WIDER * top_factor) for k in _DENSER)):
        for d in np.unique(density[~ok]):
            todo = np.nonzero(~ok & (density == d))[0]
            for start in range(0, todo.size, _BLOCK):
                rows = todo[start:start + _BLOCK]
                part = _on_grid(f_lo, rtol, factor * int(d), top,
                                *_subset(params, filt, flat, rows))
                if part is not None:
                    store(rows, *part[:2])
                    ok[rows] = part[2]
        if ok.all():
            break
    if not ok.all():  # the adaptive reference, for the designs no grid served
        bad = np.nonzero(~ok)[0]
        sub_params, sub_filt = _subset(params, filt, flat, bad)
        store(bad, integrated_output_noise(f_lo, np.inf, rtol=rtol, **sub_params, **sub_filt),
              chain_enbw(**{k: sub_params[k] for k in _CIRCUIT}, **sub_filt, rtol=rtol))
    return {k: v.reshape(shape) for k, v in mean_square.items()}, enbw.reshape(shape)


def _subset(params, filt, flat, rows):
    """``params`` and ``filt`` with every array input taken at the flat design indices ``rows``."""
    sub = {k: (list(v) if k in ("poles", "zeros") else dict(v) if isinstance(v, dict) else v)
           for k, v in params.items()}
    sub_filt = dict(filt)
    for k, i, v in flat:
        piece = v[rows]
        if k == "filter_cutoff":
            sub_filt[k] = piece
        elif i is None:
            sub[k] = piece
        else:
            sub[k][i] = piece
    sub["poles"] = tuple(sub["poles"])
    if "zeros" in sub:
        sub["zeros"] = tuple(sub["zeros"])
    return sub, sub_filt


def _on_grid(f_lo, rtol, per_decade, top_factor, params, filt):
    """The fixed-grid integrals and, per design, whether they meet the tolerance.

    Returns (mean squares by source, ENBW, ok), or None where no grid can be built (an
    unbounded amplifier or a band too narrow for the grid).
    """
    top = np.asarray(params["gbw"], dtype=float)
    for pole in params["poles"]:
        top = np.maximum(top, pole)
    if filt["filter_kind"] is not None:  # above its cutoff the filter takes every source down
        cut = np.asarray(filt["filter_cutoff"], dtype=float)
        top = np.minimum(top, np.where(np.isfinite(cut), cut, np.inf))
    top = top_factor * top
    if not (np.all(np.isfinite(top)) and np.all(top > 10.0 * f_lo)):
        return None
    span = np.log(top) - np.log(f_lo)  # design shape
    decades = float(np.max(span)) / np.log(10.0)
    n = 16 * int(np.ceil(per_decade * decades / 16.0))
    best, check = romberg_weights(n)  # check: the same rule on every other point
    u = np.linspace(0.0, 1.0, n + 1)
    f = np.exp(np.log(f_lo) + np.asarray(span)[..., None] * u)  # (..., n + 1)
    e = with_frequency_axis(params)
    loop = _loop_polynomials(params, np.shape(span))
    out, zt2 = _unfiltered_psd(f, *(e[k] for k in ("gbw", "dc_gain", "poles", "rf", "cf", "cd",
                                                    "rsh", "rs", "cin", "en", "en_corner", "in_",
                                                    "in_corner", "temperature", "i_shot",
                                                    "stage2_noise", "stage2_corner",
                                                    *_SHAPES)),
                               zeros=e.get("zeros", ()),
                               squared_magnitudes=loop.squared_magnitudes(f))
    if filt["filter_kind"] is not None:
        cutoff = np.asarray(filt["filter_cutoff"], dtype=float)[..., None]
        h2 = filter_power_response(f, filt["filter_kind"], filt["filter_order"], cutoff)
    else:
        h2 = 1.0
    names = list(out)
    scale = np.asarray(span)[..., None] * f * h2  # dP/du on u in [0, 1]
    # one source at a time: no (sources x designs x grid) stack in memory
    shape = np.broadcast_shapes(np.shape(scale), *(np.shape(out[k]) for k in names))
    total_g = np.zeros(shape)
    ms = []
    for k in names:
        g_k = np.broadcast_to(out[k] * scale, shape)
        total_g += g_k
        ms.append(g_k @ best)
        del g_k
    ms = np.stack(ms)  # (S, ...): small, one number per source and design
    ok = _converged(total_g, best, check, ms.sum(axis=0), span, rtol)
    zg = zt2 * scale
    enbw_ms = zg @ best
    ok = ok & _converged(zg, best, check, enbw_ms, span, rtol)
    zt0_2 = zt2[..., :1] * (h2[..., :1] if np.ndim(h2) else h2)
    enbw = (enbw_ms + (zt0_2 * f[..., :1])[..., 0]) / _zt_dc2(e)
    return dict(zip(names, ms)), enbw, ok


def _converged(g, best, check, total, span, rtol):
    # |full - half| estimates the half grid's error; the full grid's is smaller by 2^8 for a
    # smooth integrand (R(3,3) is of order h^8), taken here as at least _HALF_GRID_GAIN
    err = np.abs(g @ best - g @ check) / _HALF_GRID_GAIN
    # the part left out above the top, for S falling at least as 1/f^2: S_top f_top = g_top / span
    tail = np.abs(g[..., -1]) / span
    return (err <= rtol * np.abs(total)) & (tail <= 0.1 * rtol * np.abs(total))


def _loop_polynomials(params, grid_shape):
    """The loop's polynomial ratios for the designs of ``params``, widened to the grid's
    design shape (a swept filter cutoff widens it)."""
    return loop_polynomials(**{k: params[k] for k in _CIRCUIT}, shape=grid_shape)


def _zt_dc2(e):
    circuit = {k: e[k] for k in _CIRCUIT}
    return np.abs(noise_transfer_functions(0.0, **circuit)["junction"][..., 0]) ** 2
