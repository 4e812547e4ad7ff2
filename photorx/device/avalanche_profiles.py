"""Field profiles E(x) of avalanche structures, sampled for the ionisation integral.

Functional core: depletion-approximation fields of a step junction, a p+ / i / n+
(reach-through) junction and a stack of uniformly doped layers (the separate-absorption,
charge and multiplication structure). Each returns positions ``x`` [m] (from the p side,
increasing along the last axis) and field magnitudes ``field`` [V/m] on the same grid;
leading axes broadcast over bias and design parameters.
"""

from __future__ import annotations

import numpy as np

from .._validate import require_positive
from ..constants import q
from .junction_abrupt import abrupt_depletion_width
from .junction_pin import pin_depletion_edges

__all__ = [
    "abrupt_field_profile",
    "pin_field_profile",
    "layered_peak_field",
    "layered_field_profile",
]


def _segments(lengths, n_points):
    """Grid over consecutive segments (last axis), ``n_points`` nodes per segment."""
    s = np.linspace(0.0, 1.0, n_points)
    edges = np.concatenate([np.zeros_like(lengths[0])[..., None]]
                           + [np.asarray(seg)[..., None] for seg in lengths], axis=-1)
    edges = np.cumsum(edges, axis=-1)
    parts = [edges[..., i:i + 1] + (edges[..., i + 1:i + 2] - edges[..., i:i + 1]) * s
             for i in range(len(lengths))]
    return np.concatenate(parts, axis=-1)


def abrupt_field_profile(v_total, na, nd, eps, n_points=101):
    """Field profile of a step junction in the depletion approximation.

    Parameters
    ----------
    v_total : float or array_like
        Vbi + V_R [V], > 0.
    na, nd : float or array_like
        Acceptor and donor densities [m^-3].
    eps : float
        Permittivity [F/m].
    n_points : int, optional
        Grid nodes on each side of the junction.

    Returns
    -------
    x, field : numpy.ndarray
        Positions [m] (0 at the p-side depletion edge, x_p at the junction) and |E| [V/m],
        shape (..., 2 n_points).

    Notes
    -----
    E rises linearly from 0 at -x_p to E_max = q Na x_p / eps at the junction and falls
    to 0 at x_n; E_max = 2 (Vbi + V_R) / W.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2, Eqs. (10)-(12).
    """
    v = np.asarray(require_positive("v_total", v_total, "V"), dtype=float)
    na, nd = np.asarray(na, dtype=float), np.asarray(nd, dtype=float)
    w = np.asarray(abrupt_depletion_width(v, na, nd, eps))
    x_p, x_n = w * nd / (na + nd), w * na / (na + nd)
    x_p, x_n = np.broadcast_arrays(x_p, x_n)
    x = _segments([x_p, x_n], n_points)
    e_max = (2.0 * v / w)[..., None]
    field = np.where(x <= x_p[..., None], e_max * x / x_p[..., None],
                     e_max * (w[..., None] - x) / x_n[..., None])
    return x, np.maximum(field, 0.0)


def pin_field_profile(v_total, na, ni_doping, nd, thickness, eps, n_points=101):
    """Field profile of a p+ / n- / n+ (reach-through) junction.

    Parameters
    ----------
    v_total : float or array_like
        Vbi + V_R [V], > 0.
    na, ni_doping, nd : float or array_like
        p+, i-layer and n+ donor densities [m^-3].
    thickness : float or array_like
        i-layer thickness [m].
    eps : float
        Permittivity [F/m].
    n_points : int, optional
        Grid nodes per segment (p+ side, i layer, n+ side).

    Returns
    -------
    x, field : numpy.ndarray
        Positions [m] from the p+ depletion edge and |E| [V/m], shape (..., 3 n_points).

    Notes
    -----
    Depletion edges from :func:`~photorx.device.junction_pin.pin_depletion_edges`. The
    field rises across x_p, peaks at E0 = q Na x_p / eps at the p+/i interface, falls with
    slope q Ni / eps in the i layer and with q Nd / eps in the n+ layer once punched
    through.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2 and ch. 13.
    """
    v = np.asarray(require_positive("v_total", v_total, "V"), dtype=float)
    na, nid, nd, d = (np.asarray(a, dtype=float) for a in (na, ni_doping, nd, thickness))
    x_p, x_n = (np.asarray(a) for a in pin_depletion_edges(v, na, nid, nd, d, eps))
    x_i = np.minimum(x_n, d)
    x_plus = np.maximum(x_n - d, 0.0)
    x_p, x_i, x_plus = np.broadcast_arrays(x_p, x_i, x_plus)
    x = _segments([x_p, x_i, x_plus], n_points)
    e0 = (q * na * x_p / eps)[..., None]
    u = x - x_p[..., None]  # distance from the p+/i interface
    e_i = e0 - q * nid[..., None] * np.clip(u, 0.0, None) / eps if np.ndim(nid) else \
        e0 - q * nid * np.clip(u, 0.0, None) / eps
    e1 = e0 - q * np.asarray(nid)[..., None] * x_i[..., None] / eps
    e_plus = e1 - q * np.asarray(nd)[..., None] * np.clip(u - x_i[..., None], 0.0, None) / eps
    field = np.where(u < 0, e0 * x / np.where(x_p > 0, x_p, 1.0)[..., None],
                     np.where(u <= x_i[..., None], e_i, e_plus))
    return x, np.maximum(field, 0.0)


def _layer_voltage(e0, thicknesses, slopes):
    """Potential across a layer stack for entry field e0 [V]; field clipped at zero."""
    v = np.zeros_like(e0)
    e = e0
    for d, s in zip(thicknesses, slopes):
        e_exit = e - s * d
        full = e_exit >= 0
        # fully depleted layer: trapezoid; else the depletion edge ends inside it
        v = v + np.where(full, (e + np.maximum(e_exit, 0.0)) * d / 2.0,
                         e**2 / (2.0 * np.where(s > 0, s, 1.0)))
        e = np.maximum(e_exit, 0.0)
    # whatever field remains at the end is dropped in the (heavily doped) substrate
    return v


def layered_peak_field(v_total, thicknesses, dopings, permittivities, iterations=80):
    """Peak field E0 at the p+ side of a stack of uniformly doped n layers [V/m].

    Parameters
    ----------
    v_total : float or array_like
        Vbi + V_R [V], > 0.
    thicknesses : sequence of float or array_like
        Layer thicknesses from the p+ contact down [m], > 0.
    dopings : sequence of float or array_like
        Net donor densities of the layers [m^-3], > 0.
    permittivities : sequence of float
        Permittivities of the layers [F/m].
    iterations : int, optional
        Bisection steps in log E0 (80 reach double precision).

    Returns
    -------
    float or numpy.ndarray
        E0 [V/m] with int E dx = v_total.

    Notes
    -----
    One-sided (p+ contact infinitely doped, n+ substrate infinitely doped) depletion
    approximation: in layer i the field falls with slope q N_i / eps_i; the depletion edge
    sits where E reaches 0, or at the substrate once every layer is depleted. The
    potential grows monotonically with E0, so bisection converges for every design.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13 (separate absorption and multiplication APD).
    """
    v = np.asarray(require_positive("v_total", v_total, "V"), dtype=float)
    ds = [np.asarray(d, dtype=float) for d in thicknesses]
    slopes = [q * np.asarray(n, dtype=float) / e for n, e in zip(dopings, permittivities)]
    shape = np.broadcast_shapes(v.shape, *(np.shape(d) for d in ds),
                                *(np.shape(s) for s in slopes))
    lo = np.full(shape, 1.0)
    hi = np.full(shape, 1e10)
    for _ in range(iterations):
        mid = np.sqrt(lo * hi)
        above = _layer_voltage(mid, ds, slopes) >= v
        hi = np.where(above, mid, hi)
        lo = np.where(above, lo, mid)
    out = np.sqrt(lo * hi)
    return out if out.ndim else float(out)


def layered_field_profile(e0, thicknesses, dopings, permittivities, n_points=101):
    """Field profile of a layer stack with peak field ``e0`` at the p+ side.

    Parameters
    ----------
    e0 : float or array_like
        Field at the p+ contact [V/m] (:func:`layered_peak_field`).
    thicknesses, dopings, permittivities : sequences
        As in :func:`layered_peak_field`.
    n_points : int, optional
        Grid nodes per layer.

    Returns
    -------
    x, field : numpy.ndarray
        Positions [m] from the p+ contact and |E| [V/m], shape (..., n_layers * n_points);
        the field is 0 beyond the depletion edge.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13.
    """
    e0 = np.asarray(e0, dtype=float)
    ds = [np.broadcast_to(np.asarray(d, dtype=float), np.broadcast_shapes(
        e0.shape, np.shape(d))) for d in thicknesses]
    x = _segments(ds, n_points)
    field = np.empty_like(x)
    e_in = e0
    for i, (d, n, eps) in enumerate(zip(ds, dopings, permittivities)):
        sl = slice(i * n_points, (i + 1) * n_points)
        s = q * np.asarray(n, dtype=float) / eps
        u = x[..., sl] - x[..., sl][..., :1]
        field[..., sl] = np.maximum(np.asarray(e_in)[..., None] - np.asarray(s)[..., None] * u
                                    if np.ndim(s) else np.asarray(e_in)[..., None] - s * u, 0.0)
        e_in = np.maximum(e_in - s * d, 0.0)
    return x, field
