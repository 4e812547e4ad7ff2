"""Intrinsic speed of a photodiode: carrier transit, diffusion tails and the RC limit.

Functional core (pure, vectorised, SI). The photocurrent of a front-illuminated diode
(layer stack as in :mod:`photorx.device.optics`) has three parts:

- drift: pairs generated in the depletion layer; the induced current follows from the
  Ramo-Shockley theorem, each carrier contributing q v / W while it moves
  (:func:`drift_response`, :func:`transit_bandwidth`);
- diffusion: pairs generated in the undepleted top and bottom layers reach the depletion
  edge by diffusion (slow tail), then cross the depletion layer
  (:func:`photocurrent_spectrum`, :func:`diffusion_time`);
- the RC limit of the diode capacitance with series and load resistance
  (:func:`rc_bandwidth`), combined with the transit limit by :func:`combined_bandwidth`.

Convention: light enters at the top; "far" carriers drift away from the illuminated side
(electrons in a p-on-n diode), "near" carriers drift back towards it (holes).
"""

from __future__ import annotations

import numpy as np

from .._validate import require_nonnegative, require_positive
from .optics import _bottom_collection, _divdiff, _g, _top_collection, require_thickness_or_inf

__all__ = [
    "drift_velocity",
    "transit_time",
    "drift_response",
    "transit_bandwidth",
    "photocurrent_spectrum",
    "photocurrent_layers",
    "photocurrent_spectrum_of",
    "diffusion_time",
    "rc_bandwidth",
    "combined_bandwidth",
    "UNIFORM_TRANSIT_FACTOR",
    "EDGE_TRANSIT_FACTOR",
]

#: f_3dB W / v for uniform generation, both carriers at velocity v (Ramo): 3.4767/(2 pi).
UNIFORM_TRANSIT_FACTOR = 0.5533271272749174
#: f_3dB W / v when all pairs are generated at the illuminated edge (one carrier crosses
#: the full width, sinc response): 2.7831/(2 pi).
EDGE_TRANSIT_FACTOR = 0.44294647068945475


def _out(x):
    return x if np.ndim(x) else (complex(x) if np.iscomplexobj(x) else float(x))


def drift_velocity(field, mobility, saturation_velocity):
    """Carrier drift velocity with velocity saturation [m/s].

    Parameters
    ----------
    field : float or array_like
        Electric field magnitude [V/m], >= 0.
    mobility : float or array_like
        Low-field mobility [m^2/(V s)], > 0.
    saturation_velocity : float or array_like
        Saturation velocity [m/s], > 0.

    Notes
    -----
    v = mu E / (1 + mu E / v_sat), the Caughey-Thomas form with beta = 1 (common practice
    for a single expression for electrons and holes; within about 20 % of the measured
    silicon curves).

    References
    ----------
    .. [1] D. M. Caughey and R. E. Thomas, Carrier mobilities in silicon empirically
       related to doping and field, Proc. IEEE 55, 2192 (1967).
    """
    e = require_nonnegative("field", field, "V/m")
    mu = require_positive("mobility", mobility, "m^2/(V s)")
    vs = require_positive("saturation_velocity", saturation_velocity, "m/s")
    me = np.asarray(mu) * np.asarray(e)
    return _out(me / (1.0 + me / np.asarray(vs)))


def transit_time(width, velocity):
    """Time to cross a depletion layer, t_tr = W / v [s].

    Parameters
    ----------
    width : float or array_like
        Depletion width [m], >= 0.
    velocity : float or array_like
        Drift velocity [m/s], > 0.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13 (response speed of p-i-n photodiodes).
    """
    w = require_nonnegative("width", width, "m")
    v = require_positive("velocity", velocity, "m/s")
    return _out(np.asarray(w) / np.asarray(v))


def _drift_spectrum(omega, aw, tau_far, tau_near, g_far=None, g_near=None):
    """Drift current per photon entering the depletion layer, complex; (1 - e^{-aW}) at DC.

    aw = alpha W; generation ~ e^{-alpha x}, x from the illuminated edge. Far carriers
    from x travel W - x, near carriers travel x (Ramo-Shockley). ``g_far``, ``g_near``:
    g(j omega tau) of the two carriers if the caller has them (the diffusion parts cross
    with the same factors).
    """
    yf = 1j * omega * tau_far
    yn = 1j * omega * tau_near
    far = (_g(yf) if g_far is None else g_far) - _divdiff(yf, aw, 1.0)
    near = _divdiff(0.0, aw + yn, 1.0) - np.exp(-aw) * (_g(yn) if g_near is None else g_near)
    return far + near


def drift_response(f, width, v_far, v_near, alpha=0.0):
    """Normalised transit-limited response of the depletion-layer photocurrent, H(0) = 1.

    Parameters
    ----------
    f : float or array_like
        Frequency [Hz], >= 0.
    width : float or array_like
        Depletion width W [m], > 0.
    v_far, v_near : float or array_like
        Drift velocities of the carriers moving away from / towards the illuminated side
        [m/s], > 0.
    alpha : float or array_like, optional
        Absorption coefficient [m^-1], >= 0; 0 means uniform generation.

    Returns
    -------
    complex or numpy.ndarray
        H(f), complex.

    Notes
    -----
    Ramo-Shockley: a carrier moving at v across a layer of width W induces the current
    q v / W. With generation G(x) ~ e^{-alpha x} in 0 < x < W, far carriers travel
    W - x in time tau_f = W / v_far, near carriers travel x in tau_n = W / v_near. In
    units a = alpha W, y = omega tau and g(z) = (1 - e^{-z})/z:
    (1 - e^{-a}) H = [g(j y_f) - (e^{-j y_f} - e^{-a})/(a - j y_f)]
    + [(1 - e^{-a - j y_n})/(a + j y_n) - e^{-a} g(j y_n)].

    Uniform generation (a -> 0), equal velocities: H = (2/(j y)) (1 - g(j y)), each carrier
    type a triangular current pulse; f_3dB = 0.553 v/W (3.5 v / (2 pi W)). Generation at
    the illuminated edge (a -> inf): H = g(j y_f), the sinc of the full transit,
    f_3dB = 0.443 v_far/W.

    References
    ----------
    .. [1] S. Ramo, Currents induced by electron motion, Proc. IRE 27, 584 (1939).
    .. [2] J. E. Bowers and C. A. Burrus, Ultrawide-band long-wavelength p-i-n
       photodetectors, J. Lightwave Technol. LT-5, 1339 (1987) (f_3dB = 3.5 v/(2 pi W)
       for uniform absorption).
    .. [3] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13 (transit-time limit, f_3dB about 0.4 v_s / W).
    """
    fr = require_nonnegative("f", f, "Hz")
    w = require_positive("width", width, "m")
    vf = require_positive("v_far", v_far, "m/s")
    vn = require_positive("v_near", v_near, "m/s")
    a = require_nonnegative("alpha", alpha, "m^-1")
    aw = np.maximum(np.asarray(a) * np.asarray(w), 1e-6)  # uniform limit, 1e-6 relative
    omega = 2 * np.pi * np.asarray(fr)
    h = _drift_spectrum(omega, aw, np.asarray(w) / vf, np.asarray(w) / vn) / -np.expm1(-aw)
    return _out(h)


def _first_crossing(func, lo, hi, n_grid=16, n_refine=10):
    """Lowest omega in [lo, hi] (arrays, log grid) where |func(omega)|^2 falls below 1/2.

    A coarse log grid brackets the first crossing; the Illinois variant of false position
    on ln|func|^2 against ln omega (one evaluation per design and step, superlinear) then
    narrows it to a relative error of about 1e-12.
    """
    lo, hi = np.broadcast_arrays(np.asarray(lo, dtype=float), np.asarray(hi, dtype=float))
    t = np.linspace(0.0, 1.0, n_grid)
    grid = np.exp(np.log(lo)[..., None] + (np.log(hi) - np.log(lo))[..., None] * t)

    def level(x):  # ln|H|^2 - ln(1/2); positive above the -3 dB level
        with np.errstate(divide="ignore"):
            return np.log(np.abs(func(np.exp(x))) ** 2) + np.log(2.0)

    gv = level(np.log(grid))
    below = gv < 0
    idx = np.argmax(below, axis=-1)
    found = np.take_along_axis(below, idx[..., None], -1)[..., 0]
    k = np.maximum(idx, 1)[..., None]
    x_lo, x_hi = np.log(np.take_along_axis(grid, k - 1, -1)), np.log(np.take_along_axis(grid, k, -1))
    g_lo, g_hi = np.take_along_axis(gv, k - 1, -1), np.take_along_axis(gv, k, -1)
    x = x_lo
    last = np.zeros(x.shape, dtype=np.int8)
    for _ in range(n_refine):
        denom = np.where(g_lo != g_hi, g_lo - g_hi, 1.0)
        x = np.clip(x_lo + g_lo * (x_hi - x_lo) / denom, x_lo, x_hi)
        gx = level(x)
        above = gx >= 0
        g_hi = np.where(above & (last == 1), 0.5 * g_hi, g_hi)
        g_lo = np.where(~above & (last == -1), 0.5 * g_lo, g_lo)
        x_lo, g_lo = np.where(above, x, x_lo), np.where(above, gx, g_lo)
        x_hi, g_hi = np.where(above, x_hi, x), np.where(above, g_hi, gx)
        last = np.where(above, 1, -1).astype(np.int8)
    return np.where(found, np.exp(x[..., 0]), np.inf)


def transit_bandwidth(width, v_far, v_near, alpha=0.0):
    """Transit-limited 3-dB bandwidth of the depletion-layer photocurrent [Hz].

    Parameters
    ----------
    width : float or array_like
        Depletion width W [m], > 0.
    v_far, v_near : float or array_like
        Drift velocities of the far- and near-travelling carriers [m/s], > 0.
    alpha : float or array_like, optional
        Absorption coefficient [m^-1] (0 = uniform generation).

    Returns
    -------
    float or numpy.ndarray
        Lowest f with |H(f)|^2 = 1/2 for :func:`drift_response`, found by a log-grid scan
        and false position (relative accuracy about 1e-12).

    Notes
    -----
    Uniform generation, v_far = v_near = v: f_3dB = 0.553 v/W
    (:data:`UNIFORM_TRANSIT_FACTOR`); edge generation: 0.443 v_far/W
    (:data:`EDGE_TRANSIT_FACTOR`), the often-quoted "about 0.45 v_s/W".

    References
    ----------
    .. [1] J. E. Bowers and C. A. Burrus, J. Lightwave Technol. LT-5, 1339 (1987).
    .. [2] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13.
    """
    w = np.asarray(require_positive("width", width, "m"))
    vf = np.asarray(require_positive("v_far", v_far, "m/s"))
    vn = np.asarray(require_positive("v_near", v_near, "m/s"))
    a = np.asarray(require_nonnegative("alpha", alpha, "m^-1"))
    aw = np.maximum(a * w, 1e-6)
    tf, tn = w / vf, w / vn
    norm = -np.expm1(-aw)
    aw_, tf_, tn_, norm_ = (np.asarray(x)[..., None] for x in np.broadcast_arrays(aw, tf, tn,
                                                                                   norm))

    def h(omega):
        return _drift_spectrum(omega, aw_, tf_, tn_) / norm_

    tmin, tmax = np.minimum(tf, tn), np.maximum(tf, tn)
    lo = np.broadcast_to(0.1 / tmax, np.broadcast(aw, tf, tn).shape)
    hi = np.broadcast_to(60.0 / tmin, lo.shape)
    return _out(_first_crossing(h, lo, hi) / (2 * np.pi))


def photocurrent_spectrum(f, alpha, top_thickness, depletion_width, bottom_thickness,
                          top_diffusion_length, bottom_diffusion_length, top_lifetime,
                          bottom_lifetime, v_far, v_near):
    """Collected carriers per photon entering the semiconductor, versus frequency [-], complex.

    Parameters
    ----------
    f : float or array_like
        Frequency [Hz], >= 0.
    alpha : float or array_like
        Absorption coefficient [m^-1].
    top_thickness, depletion_width, bottom_thickness : float or array_like
        Layer stack d, W, H [m] (H may be inf), see :mod:`photorx.device.optics`.
    top_diffusion_length, bottom_diffusion_length : float or array_like
        Minority-carrier diffusion lengths [m], > 0.
    top_lifetime, bottom_lifetime : float or array_like
        Minority-carrier lifetimes of the two layers [s], > 0.
    v_far, v_near : float or array_like
        Drift velocities in the depletion layer [m/s], > 0 (the top layer's minority
        carriers cross as far carriers, the bottom layer's as near carriers).

    Returns
    -------
    top, drift, bottom : complex or numpy.ndarray
        The three parts; at f = 0 they equal :func:`photorx.device.optics.collection_fractions`.

    Notes
    -----
    Small-signal diffusion at angular frequency w obeys the DC equation with lifetime
    tau / (1 + j w tau), i.e. L_w = L / sqrt(1 + j w tau); the collection integrals of
    :mod:`photorx.device.optics` evaluated with L_w give the diffusion parts exactly
    (1-D). Diffused carriers then cross the whole depletion layer: factor g(j w W / v).

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13 (diffusion and drift components of the response).
    .. [2] J. E. Bowers and C. A. Burrus, J. Lightwave Technol. LT-5, 1339 (1987).
    """
    fr = np.asarray(require_nonnegative("f", f, "Hz"))
    layers = photocurrent_layers(alpha, top_thickness, depletion_width, bottom_thickness,
                                 top_diffusion_length, bottom_diffusion_length, top_lifetime,
                                 bottom_lifetime, v_far, v_near)
    return tuple(_out(part + 0j) for part in _photocurrent_parts(fr, layers))


def photocurrent_layers(alpha, top_thickness, depletion_width, bottom_thickness,
                        top_diffusion_length, bottom_diffusion_length, top_lifetime,
                        bottom_lifetime, v_far, v_near):
    """The validated layer stack of :func:`photocurrent_spectrum`, for many frequencies.

    A search that evaluates the spectrum at many frequency steps validates the stack once
    here and calls :func:`photocurrent_spectrum_of` for each step.

    Parameters
    ----------
    alpha, top_thickness, depletion_width, bottom_thickness, top_diffusion_length,
    bottom_diffusion_length, top_lifetime, bottom_lifetime, v_far, v_near
        As in :func:`photocurrent_spectrum` (SI units; DesignError out of range).

    Returns
    -------
    dict
        The stack as arrays, with the transit times W / v_far and W / v_near.
        :func:`photocurrent_spectrum_of` adds ``"distinct"`` on its first frequency grid:
        the designs' distinct stacks (or None), which it then evaluates once each.
    """
    a = np.asarray(require_nonnegative("alpha", alpha, "m^-1"))
    w = np.asarray(require_nonnegative("depletion_width", depletion_width, "m"))
    vf = np.asarray(require_positive("v_far", v_far, "m/s"))
    vn = np.asarray(require_positive("v_near", v_near, "m/s"))
    return {
        "a": a, "d": np.asarray(require_nonnegative("top_thickness", top_thickness, "m")), "w": w,
        "h": np.asarray(require_thickness_or_inf("bottom_thickness", bottom_thickness)),
        "lt": np.asarray(require_positive("top_diffusion_length", top_diffusion_length, "m")),
        "lb": np.asarray(require_positive("bottom_diffusion_length", bottom_diffusion_length,
                                          "m")),
        "tt": np.asarray(require_positive("top_lifetime", top_lifetime, "s")),
        "tb": np.asarray(require_positive("bottom_lifetime", bottom_lifetime, "s")),
        "tau_f": w / vf, "tau_n": w / vn,
    }


_STACK_KEYS = ("a", "d", "w", "h", "lt", "lb", "tt", "tb", "tau_f", "tau_n")


def _distinct_stacks(stack):
    """The designs' distinct layer stacks, when a grid repeats them (None otherwise).

    A grid of bias x Rf x Cf holds a few stacks, one per bias, each repeated for every
    amplifier; the spectrum of a stack is computed once and copied to the designs that share
    it. Returns ``(inverse, u, stacks)``: the distinct stack of each design (n,), their
    number and the layer arrays of the distinct stacks, each (u, 1) (or as given if
    shared); only for a stack of shape (n, 1) (a design axis in front of the frequency
    axis) with u <= n / 2.
    """
    shape = np.broadcast_shapes(*(np.shape(stack[k]) for k in _STACK_KEYS))
    if len(shape) != 2 or shape[1] != 1 or shape[0] < 4:
        return None
    table = np.column_stack([np.broadcast_to(stack[k], shape)[:, 0] for k in _STACK_KEYS])
    _, first, inverse = np.unique(table, axis=0, return_index=True, return_inverse=True)
    if first.size > shape[0] // 2:
        return None
    stacks = {k: (stack[k][first] if np.shape(stack[k])[:1] == shape[:1] else stack[k])
              for k in _STACK_KEYS}
    return inverse.reshape(-1), first.size, stacks


def _spectrum_of_distinct(fr, inverse, u, stacks):
    """:func:`photocurrent_spectrum_of` computed once per distinct (stack, frequency) pair.

    ``fr`` is shared by all designs (a leading axis of 1 or none) or per design (n, m);
    per-design grids on one log lattice share most of their frequencies, so the distinct
    (frequency, stack) pairs are found by one sort of ``f + j * stack index``.
    """
    if fr.ndim == 1 or fr.shape[0] == 1:
        h = sum(_photocurrent_parts(fr.reshape(1, -1), stacks))  # (u, m) or (1, m)
        return np.broadcast_to(h, (u, fr.shape[-1]))[inverse]
    pairs, at = np.unique((fr + 1j * inverse[:, None]).reshape(-1), return_inverse=True)
    ids = pairs.imag.astype(int)
    one = {k: (v[ids, 0] if np.ndim(v) == 2 and v.shape[0] == u else v)
           for k, v in stacks.items()}
    h = np.broadcast_to(sum(_photocurrent_parts(pairs.real, one)), (1, pairs.size))
    return h[0][at].reshape(fr.shape)


def photocurrent_spectrum_of(f, layers):
    """Sum of the three parts of :func:`photocurrent_spectrum` for a validated stack [-].

    Parameters
    ----------
    f : array_like
        Frequency [Hz], >= 0 (not checked: the caller's grid).
    layers : dict
        From :func:`photocurrent_layers`.

    Returns
    -------
    numpy.ndarray
        top + drift + bottom, complex.
    """
    fr = np.asarray(f, dtype=float)
    if fr.ndim >= 1:
        if "distinct" not in layers:  # once per stack, on its first grid (not for one f)
            layers["distinct"] = _distinct_stacks(layers)
        distinct = layers["distinct"]
        if distinct is not None and fr.shape[:-1] in ((), (1,), (distinct[0].size,)):
            return _spectrum_of_distinct(fr, *distinct)
    top, drift, bottom = _photocurrent_parts(fr, layers)
    return top + drift + bottom


def _photocurrent_parts(fr, st):
    a, d, w = st["a"], st["d"], st["w"]
    omega = 2 * np.pi * fr
    tau_f, tau_n = st["tau_f"], st["tau_n"]
    b_top = np.sqrt(1.0 + 1j * omega * st["tt"]) / st["lt"]
    b_bot = np.sqrt(1.0 + 1j * omega * st["tb"]) / st["lb"]
    g_far, g_near = _g(1j * omega * tau_f), _g(1j * omega * tau_n)  # each crossing once
    top = _top_collection(a, d, b_top) * g_far
    drift = np.exp(-a * d) * _drift_spectrum(omega, a * w, tau_f, tau_n, g_far, g_near)
    bottom = np.exp(-a * (d + w)) * _bottom_collection(a, st["h"], b_bot) * g_near
    return top, drift, bottom


def diffusion_time(distance, diffusivity):
    """Time for minority carriers to diffuse a distance d, t = d^2 / (2 D) [s].

    Parameters
    ----------
    distance : float or array_like
        Diffusion distance [m], >= 0.
    diffusivity : float or array_like
        Minority-carrier diffusion coefficient [m^2/s], > 0.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13 (diffusion time of carriers generated outside the depletion region).
    """
    d = require_nonnegative("distance", distance, "m")
    dd = require_positive("diffusivity", diffusivity, "m^2/s")
    return _out(np.asarray(d) ** 2 / (2.0 * np.asarray(dd)))


def rc_bandwidth(capacitance, resistance):
    """RC-limited bandwidth f = 1 / (2 pi R C) [Hz].

    Parameters
    ----------
    capacitance : float or array_like
        Diode (plus package) capacitance [F], > 0.
    resistance : float or array_like
        Series plus load resistance [ohm], >= 0 (0 gives inf).

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13.
    """
    cc = require_positive("capacitance", capacitance, "F")
    r = require_nonnegative("resistance", resistance, "ohm")
    with np.errstate(divide="ignore"):
        return _out(1.0 / (2 * np.pi * np.asarray(r) * np.asarray(cc)))


def combined_bandwidth(*bandwidths):
    """Bandwidth of cascaded limits, f = (sum f_i^-2)^(-1/2) [Hz] (inf entries drop out).

    Notes
    -----
    Common practice for combining the transit and RC limits of a photodiode (exact for
    cascaded Gaussian responses, a good estimate otherwise).

    References
    ----------
    .. [1] J. E. Bowers and C. A. Burrus, J. Lightwave Technol. LT-5, 1339 (1987)
       (f_3dB = (f_t^-2 + f_RC^-2)^(-1/2)).
    """
    total = 0.0
    for i, f in enumerate(bandwidths):
        total = total + np.asarray(require_positive(f"bandwidths[{i}]", np.where(
            np.isposinf(np.asarray(f, dtype=float)), 1.0, f), "Hz")) ** -2.0 * np.where(
            np.isposinf(np.asarray(f, dtype=float)), 0.0, 1.0)
    with np.errstate(divide="ignore"):
        return _out(np.asarray(total) ** -0.5)
