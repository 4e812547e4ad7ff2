"""Integration of noise power spectral densities for many designs on one shared grid.

:func:`integrate_psd` integrates a PSD (one array or a dict of sources) from ``f_lo`` to
``f_hi`` with Simpson's rule in log frequency, halving the step until the total of every
design point has converged, and supports ``f_lo = 0`` and ``f_hi = inf`` by extending the
band until the neglected ends are below the tolerance.
"""

from __future__ import annotations

import warnings

import numpy as np

from .._validate import require_nonnegative, require_positive
from ..errors import DesignError, ModelRangeWarning

__all__ = ["DEFAULT_RTOL", "integrate_psd"]

DEFAULT_RTOL = 1e-4  #: default relative tolerance of every noise integral
_SCAN_PER_DECADE = 4  # coarse scan used to find the ends of an infinite band
_MAX_GRID_VALUES = 4e7  # memory guard: design points x frequencies x sources


def _stack(result):
    """Turn the PSD callable's output into (names or None, array (S, ..., F))."""
    if isinstance(result, dict):
        names = list(result)
        arrays = np.broadcast_arrays(*[np.asarray(v, dtype=float) for v in result.values()])
        return names, np.stack(arrays)
    return None, np.asarray(result, dtype=float)[None]


def _simpson(g, du):
    """Composite Simpson rule along the last axis (odd number of samples)."""
    w = np.ones(g.shape[-1])
    w[1:-1:2] = 4.0
    w[2:-1:2] = 2.0
    return np.tensordot(g, w, axes=([-1], [0])) * du / 3.0


def _coarse_mean_square(psd_tot, f, lo, hi):
    """Trapezoid estimate of the integral over [lo, hi] from a coarse scan (per design)."""
    g = psd_tot * f  # dP/dln f
    inside = (f >= lo[..., None]) & (f <= hi[..., None])
    g = np.where(inside, g, 0.0)
    du = np.diff(np.log(f))
    return np.sum(0.5 * (g[..., 1:] + g[..., :-1]) * du, axis=-1)


def integrate_psd(
    psd,
    f_lo=0.0,
    f_hi=np.inf,
    *,
    rtol=DEFAULT_RTOL,
    points_per_decade=10,
    f_scale=None,
    f_min=1e-9,
    f_max=1e18,
    _return_band=False,
):
    """Integrate a power spectral density over frequency for many designs at once.

    Parameters
    ----------
    psd : callable
        ``psd(f)`` returns the PSD [unit^2/Hz] as an array or a dict of arrays (one per
        source) of shape ``design_shape + (F,)``. It is called with a 1-D grid ``f`` [Hz],
        or with ``f`` of shape ``design_shape + (F,)`` when the limits differ between
        designs; parameters inside should therefore be shaped ``p[..., None]``.
    f_lo, f_hi : float or array_like
        Band limits [Hz], 0 <= f_lo < f_hi; f_hi may be ``inf``. Arrays broadcast over
        the design points.
    rtol : float
        Relative tolerance of the total (sum of the sources) of every design, default
        1e-4. The step is halved until two successive Simpson estimates agree within
        ``rtol``; at least two halvings are made. The band ends are extended until the
        part left out is below ``rtol / 10`` of the total, assuming the density falls at
        least as 1/f^2 above the top and is flat below the bottom of the band.
    points_per_decade : int
        Samples per decade of the starting grid.
    f_scale : float, optional
        A characteristic frequency [Hz] (e.g. the amplifier's gain-bandwidth product) where
        the search for the ends of an infinite band starts.
    f_min, f_max : float
        Lowest and highest frequency [Hz] the band search may reach before giving up.
    _return_band : bool
        Internal: when True also return the band ``(f_lo, f_hi)`` [Hz] actually integrated,
        after the ends were extended; default False. Not part of the interface.

    Returns
    -------
    dict or numpy.ndarray
        The mean-square value [unit^2] per source (dict, like ``psd``'s output) or total,
        of shape ``design_shape``.

    Raises
    ------
    DesignError
        If the band is empty, if ``f_lo = 0`` with a density that rises as 1/f (the
        integral diverges), or if the density does not fall off towards ``f_hi = inf``.

    Notes
    -----
    With u = ln f, P = integral S(f) df = integral S(e^u) e^u du, evaluated by composite
    Simpson on a grid uniform in u between ln f_lo and ln f_hi of each design; the
    segment [0, f_a] of a band starting at 0 Hz adds S(f_a) f_a.

    References
    ----------
    .. [1] W. H. Press et al., *Numerical Recipes*, 3rd ed., Cambridge University Press,
       2007, sec. 4.2 (extended Simpson rule, successive halving).
    """
    rtol = float(require_positive("rtol", rtol, ""))
    lo = np.asarray(require_nonnegative("f_lo", f_lo, "Hz"), dtype=float)
    hi = np.asarray(f_hi, dtype=float)
    if np.any(np.isnan(hi)) or np.any(hi == -np.inf):
        raise DesignError.out_of_range("f_hi", hi, "Hz", "> f_lo, may be inf")
    lo, hi = np.broadcast_arrays(lo, hi)
    bad = ~(hi > lo)
    if np.any(bad):
        raise DesignError.out_of_range("f_hi", hi[bad][0], "Hz", f"> f_lo ({lo[bad][0]:g} Hz)")

    def total(f):
        _, arr = _stack(psd(f))
        return arr.sum(axis=0)

    need_top = np.isinf(hi)
    need_bottom = lo == 0
    a, b = _band_start(lo, hi, f_scale)
    if need_top.any() or need_bottom.any():
        a, b = _extend_band(total, lo, hi, a, b, need_top, need_bottom, rtol, f_min, f_max)
    lo_eff = np.where(need_bottom, a, lo)
    hi_eff = np.where(need_top, b, hi)

    shared = lo_eff.ndim == 0 or (
        np.all(lo_eff == lo_eff.flat[0]) and np.all(hi_eff == hi_eff.flat[0])
    )
    ln_lo = np.log(lo_eff.flat[0] if shared else lo_eff)
    ln_hi = np.log(hi_eff.flat[0] if shared else hi_eff)
    span = ln_hi - ln_lo  # scalar or design_shape

    def grid(u):
        if shared:
            return np.exp(ln_lo + u * span)
        return np.exp(ln_lo[..., None] + u * span[..., None])

    def integrand(u):
        f = grid(u)
        names_, arr = _stack(psd(f))
        return names_, arr * f  # dP/du = S f span (span applied at the end)

    decades = float(np.max(span)) / np.log(10.0)
    n = max(8, 2 * int(np.ceil(points_per_decade * decades / 2)))
    u = np.linspace(0.0, 1.0, n + 1)
    names, g = integrand(u)
    estimate = _simpson(g, 1.0 / n)
    halvings = 0
    while True:
        mid = (u[:-1] + u[1:]) / 2
        _, g_mid = integrand(mid)
        g_new = np.empty(g.shape[:-1] + (2 * g.shape[-1] - 1,))
        g_new[..., 0::2] = g
        g_new[..., 1::2] = g_mid
        u_new = np.empty(2 * u.size - 1)
        u_new[0::2] = u
        u_new[1::2] = mid
        g, u, n = g_new, u_new, 2 * n
        new = _simpson(g, 1.0 / n)
        halvings += 1
        tot_new, tot_old = new.sum(axis=0), estimate.sum(axis=0)
        err = np.abs(tot_new - tot_old)
        estimate = new
        if halvings >= 2 and np.all(err <= rtol * np.abs(tot_new) + 1e-300):
            break
        if g.size * 2 > _MAX_GRID_VALUES:
            warnings.warn(
                f"noise integral not converged to rtol={rtol:g} "
                f"(largest relative change {np.max(err / np.abs(tot_new)):.2g}); "
                "result returned from the finest grid",
                ModelRangeWarning,
                stacklevel=2,
            )
            break
    result = estimate * span  # Simpson was on u in [0, 1]
    if need_bottom.any():
        # flat density below the bottom of the band: rectangle from 0 Hz
        _, s_a = _stack(psd(np.array([a])))
        result = result + np.where(need_bottom, s_a[..., 0] * a, 0.0)
    out = dict(zip(names, result)) if names is not None else result[0]
    if _return_band:
        return out, (lo_eff, hi_eff)
    return out


def _band_start(lo, hi, f_scale):
    """Initial coarse band [a, b] for the search of infinite limits."""
    pos = lo[lo > 0]
    fin = hi[np.isfinite(hi)]
    if pos.size:
        a = float(pos.min())
    elif f_scale:
        a = float(f_scale) * 1e-4
    elif fin.size:
        a = float(fin.min()) * 1e-4
    else:
        a = 1.0
    candidates = [a * 100.0]
    if fin.size:
        candidates.append(float(fin.max()))
    if pos.size:
        candidates.append(float(pos.max()) * 10.0)
    if f_scale:
        candidates.append(float(f_scale))
    return a, max(candidates)


def _extend_band(total, lo, hi, a, b, need_top, need_bottom, rtol, f_min, f_max):
    """Widen [a, b] decade by decade until the left-out ends are below rtol/10 of the total."""
    step = 10.0 ** (1.0 / _SCAN_PER_DECADE)
    n = max(2, int(np.ceil(np.log(b / a) / np.log(step))) + 1)
    f = a * step ** np.arange(n)
    b = f[-1]
    s = total(f)
    s = np.broadcast_to(s, np.broadcast_shapes(s.shape, lo.shape + (1,))).copy()
    lo_c = np.where(need_bottom, 0.0, lo)
    hi_c = np.where(need_top, np.inf, hi)
    while True:
        ms = _coarse_mean_square(s, f, lo_c, hi_c)
        top_ok = ~need_top | (s[..., -1] * f[-1] <= 0.1 * rtol * ms)
        bottom_ok = ~need_bottom | (s[..., 0] * f[0] <= 0.1 * rtol * ms)
        if np.all(top_ok) and np.all(bottom_ok):
            return float(f[0]), float(f[-1])
        if not np.all(top_ok):
            if f[-1] * 10 > f_max:
                raise DesignError.out_of_range(
                    "f_hi",
                    np.inf,
                    "Hz",
                    "a finite frequency: the noise density does not fall off "
                    f"below {f_max:g} Hz (add a post filter or give a finite f_hi)",
                )
            f_new = f[-1] * step ** np.arange(1, _SCAN_PER_DECADE + 1)
            s_new = np.broadcast_to(total(f_new), s.shape[:-1] + f_new.shape)
            f, s = np.concatenate([f, f_new]), np.concatenate([s, s_new], axis=-1)
        if not np.all(bottom_ok):
            if f[0] / 10 < f_min:
                raise DesignError.out_of_range(
                    "f_lo",
                    0.0,
                    "Hz",
                    "> 0 here: the noise density rises as 1/f towards 0 Hz "
                    "and its integral diverges",
                )
            f_new = f[0] * step ** np.arange(-_SCAN_PER_DECADE, 0)
            s_new = np.broadcast_to(total(f_new), s.shape[:-1] + f_new.shape)
            f, s = np.concatenate([f_new, f]), np.concatenate([s_new, s], axis=-1)


def _romberg33(n):
    """Weights of Romberg's R(3,3) (order h^8) on ``linspace(0, 1, n + 1)``, n a multiple of 8."""
    trap = []
    for stride in (8, 4, 2, 1):  # level 0 (coarsest) to 3 (finest)
        w = np.zeros(n + 1)
        w[::stride] = stride / n
        w[0] = w[-1] = 0.5 * stride / n
        trap.append(w)
    table = [trap]
    for j in (1, 2, 3):
        prev = table[-1]
        table.append([prev[k] + (prev[k] - prev[k - 1]) / (4.0 ** j - 1.0)
                      for k in range(1, len(prev))])
    return table[3][-1]


def romberg_weights(n):
    """Romberg R(3,3) weights on a uniform grid of n+1 points on [0, 1], and a check rule.

    Parameters
    ----------
    n : int
        Number of intervals; a multiple of 16 (trapezoid sums with steps h to 8h, on the
        grid and on every other point of it).

    Returns
    -------
    best, check : numpy.ndarray
        Weights w with integral ~ sum(w * g) for samples g on ``linspace(0, 1, n + 1)``:
        ``best`` is Romberg R(3,3) (order h^8); ``check`` is the same rule on every other
        point (zero weight in between). ``|best . g - check . g|`` estimates the error of
        the half grid, which exceeds the full grid's by about 2^8 for a smooth integrand.
        The difference of R(3,3) to R(3,2) on one grid is not used: it can be small by
        coincidence where a loop resonance spans only a few points (seen: an integral
        3e-4 off with that estimate below 1e-4).

    References
    ----------
    .. [1] W. H. Press et al., *Numerical Recipes*, 3rd ed., Cambridge University Press,
       2007, sec. 4.3 (Romberg integration).
    """
    if n % 16 or n <= 0:
        raise DesignError.out_of_range("n", n, "", "a positive multiple of 16")
    check = np.zeros(n + 1)
    check[::2] = _romberg33(n // 2)
    return _romberg33(n), check
