"""Figures of merit of a transimpedance loop: bandwidth, margins, peaking, step response.

Functional core: :func:`tia_figures` takes broadcastable parameter arrays (one element per
design) and returns a dict of arrays, with no Python loop over design points, so that a sweep
of 10^4 designs is one call. :func:`closed_loop_polynomial`, :func:`closed_loop_poles` and
:func:`loop_margins` are the pieces it is built from. Shell: :class:`TiaMetrics` (a frozen
dataclass holding the figures) and :func:`analyze_tia` (what ``Tia.analyze`` calls).

Method
------
With the nodal analysis of :mod:`photorx.circuit.tia` (A = A0/D_A(s), Yf = Gf + s Cf,
Zd = 1/(Gsh + s Cd), P(s) = 1 + Rs Gsh + s Rs Cd, Yin P = N_in(s), Q2 = Yf P + N_in)
the closed-loop transimpedance is all-pole::

    Zt(s) = A0 / Den(s),   Den(s) = Q2(s) D_A(s) + A0 Yf(s) P(s)

and Den(s) = 0 is also 1 + T(s) = 0 with the loop gain T = A0 Yf P / (D_A Q2). Hence

* poles: eigenvalues of the companion matrix of Den (batched ``numpy.linalg.eigvals``; the
  polynomial is scaled to s/w0 with w0 = sqrt(c0/c2) first); ``stable`` = every pole has
  Re p < 0. Leading coefficients that vanish (Rs = 0, absent poles) lower the degree; designs
  are grouped by degree (a loop over at most a handful of degrees, never over designs).
* DC transimpedance Zt(0) = A0 / (A0 Gf (1 + Rs Gsh) + Gsh + Gf (1 + Rs Gsh)), i.e. Rf
  reduced by the finite gain and the shunt path.
* -3 dB bandwidth: |Zt(jw)/Zt(0)|^2 = Den(0)^2/|Den(jw)|^2 on a log grid (which also holds
  the pole frequencies, so no resonance is stepped over); the *first* fall below 1/2 is
  bracketed and refined by bisection. Peaking above the DC value does not stop the search
  (it is not a fall), and a response that falls below -3 dB and later rises above it again
  at a resonance (a low-phase-margin pole pair above a slow real pole) is measured where it
  first falls: the band over which it stays within 3 dB of DC, as the receiver's chain
  bandwidth (:func:`photorx.analysis.evaluation.minus_3db_frequency`) is.
* peaking: maximum of |Zt/Zt(0)| in dB (0 if the response never rises above DC), refined by
  bisection on d|Den(jw)|^2/dw.
* group-delay variation: tau_g(w) = Re(Den'(jw)/Den(jw)); peak-to-peak over 65 points from
  DC to the -3 dB frequency [s].
* margins: from the loop gain T written as T0 prod(1 + s/wz)/prod(1 + s/wp) with its real
  corners (the passive network Yf + Yin is RC-only, so every corner is real). Phase margin
  = 180 deg + arg T at each |T| = 1 crossing, wrapped to (-180, 180]; with several crossings
  the worst is reported, i.e. the one nearest the critical point (smallest magnitude), with
  its frequency ``crossover``. Gain margin = -20 log10 |T| at each crossing of -180 deg
  (mod 360); the one closest to 0 dB is reported with ``phase_crossover``. Both choices and
  the wrapping are those of python-control's ``stability_margins``. A negative phase margin
  with ``stable = True`` can occur only in multi-crossing (conditionally stable) loops;
  ``stable`` always comes from the closed-loop poles. No gain crossover gives
  phase_margin = inf and crossover = NaN; no phase crossover gives gain_margin_db = inf and
  phase_crossover = NaN (both also python-control's convention).
* Q and damping describe the dominant second-order part of the closed loop: among the
  complex-conjugate pole pairs and the pair made of the two lowest real poles, the one with
  the lowest natural frequency w_n = sqrt(p1 p2); Q = w_n / -(p1 + p2), damping = 1/(2 Q).
  Computed from the pair's sum and product, Q is continuous through critical damping.
* step response of the photocurrent: v(t)/v(inf) = 1 + sum_i c_i exp(p_i t),
  c_i = Den(0) / (p_i Den'(p_i)) (exact residues, simple poles). It is sampled on a uniform
  grid long enough that every term has decayed below the settling band (and with >= 6
  samples per ringing period, up to 65536 samples, i.e. Q up to about 5000; beyond that rise
  time and overshoot come from an early window at the same density); crossings, the
  highest of the first peaks and every ringing peak near the band edge are then refined by
  Newton steps on the exact expression. Rise time is 10 % to 90 % (first crossings);
  overshoot is the fraction (max - final)/final, 0.05 meaning 5 %; settling time is the last
  time the response is outside the +-1 % band (``settling_tolerance``).
* maximum photocurrent: output_swing / |Zt(0)| for a steady (DC) photocurrent;
  ``max_step_photocurrent`` = output_swing / (|Zt(0)| (1 + overshoot)) for a photocurrent
  step from zero, whose overshoot reaches the rail first. (For a sinusoid at the peaking
  frequency divide by 10^(peaking_db/20) instead.)

An unstable loop (any closed-loop pole with Re >= 0) has ``stable = False``; its margins,
DC transimpedance and DC maximum photocurrent are reported, while bandwidth, peaking, Q,
damping, rise, overshoot, settling, group-delay variation and step maximum are NaN, as
documented here: an unstable loop never gets a bandwidth.

References
----------
.. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996, ch. 2-3.
.. [2] K. Ogata, *Modern Control Engineering*, 5th ed., Prentice Hall, 2010, ch. 5 and 7
       (step-response specifications, phase and gain margin).
.. [3] P. C. D. Hobbs, *Building Electro-Optical Systems*, 2nd ed., Wiley, 2009, ch. 18.
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

from .._validate import as_float_array, require_nonnegative, require_positive
from ..errors import DesignError

__all__ = [
    "TiaMetrics",
    "analyze_tia",
    "tia_figures",
    "closed_loop_polynomial",
    "closed_loop_poles",
    "loop_margins",
    "FIGURE_UNITS",
]

#: Output keys of :func:`tia_figures` (= fields of :class:`TiaMetrics`) and their units.
FIGURE_UNITS = {
    "dc_transimpedance": "ohm",
    "bandwidth": "Hz",
    "peaking_db": "dB",
    "phase_margin": "deg",
    "gain_margin_db": "dB",
    "crossover": "Hz",
    "phase_crossover": "Hz",
    "q": "",
    "damping": "",
    "rise_time": "s",
    "overshoot": "",
    "settling_time": "s",
    "group_delay_variation": "s",
    "max_photocurrent": "A",
    "max_step_photocurrent": "A",
    "stable": "",
}

_TWO_PI = 2.0 * np.pi
_N_FREQ = 160          # log-grid points for bandwidth and peaking (plus the pole frequencies)
_N_LOOP = 128          # log-grid points for the loop-gain crossings (then refined by bisection)
_N_TIME_MIN, _N_TIME_MAX = 128, 2 ** 16
_BLOCK_SAMPLES = 2 ** 21  # designs x time samples per block of the step response (memory bound)


# ---------------------------------------------------------------------------------------------
# input handling
# ---------------------------------------------------------------------------------------------
def _positive_or_inf(name, value, unit):
    """> 0, +inf allowed (an absent element), NaN rejected."""
    arr = as_float_array(name, value, unit)
    a = np.asarray(arr)
    bad = np.isnan(a) | (a <= 0)
    if np.any(bad):
        raise DesignError.out_of_range(name, a[bad][0] if a.ndim else float(a), unit,
                                       "> 0 (inf for none)")
    return arr


def _prepare(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, output_swing=np.inf):
    """Validate, broadcast and flatten. Returns (shape, dict of 1-D arrays, poles (N, K))."""
    vals = dict(
        gbw=require_positive("gbw", gbw, "Hz"),
        dc_gain=require_positive("dc_gain", dc_gain, "V/V"),
        rf=require_positive("rf", rf, "ohm"),
        cf=require_nonnegative("cf", cf, "F"),
        cd=require_positive("cd", cd, "F"),
        rsh=_positive_or_inf("rsh", rsh, "ohm"),
        rs=require_nonnegative("rs", rs, "ohm"),
        cin=require_nonnegative("cin", cin, "F"),
        output_swing=_positive_or_inf("output_swing", output_swing, "V"),
    )
    if poles is None:
        poles = ()
    elif not isinstance(poles, (list, tuple)):
        poles = tuple(poles) if np.ndim(poles) else (poles,)
    pole_list = [_positive_or_inf("poles", p, "Hz") for p in poles]
    shape = np.broadcast_shapes(*(np.shape(v) for v in vals.values()),
                                *(np.shape(p) for p in pole_list))
    flat = {k: np.broadcast_to(np.asarray(v, dtype=float), shape).ravel() for k, v in vals.items()}
    n = flat["gbw"].size
    pk = np.stack([np.broadcast_to(np.asarray(p, dtype=float), shape).ravel() for p in pole_list],
                  axis=-1) if pole_list else np.zeros((n, 0))
    return shape, flat, pk


# ---------------------------------------------------------------------------------------------
# polynomials (ascending coefficients on the last axis)
# ---------------------------------------------------------------------------------------------
def _polymul(a, b):
    out = np.zeros(np.broadcast_shapes(a.shape[:-1], b.shape[:-1]) + (a.shape[-1] + b.shape[-1] - 1,))
    for i in range(a.shape[-1]):
        out[..., i:i + b.shape[-1]] += a[..., i:i + 1] * b
    return out


def _polyadd(a, b):
    n = max(a.shape[-1], b.shape[-1])
    pa = np.concatenate([a, np.zeros(a.shape[:-1] + (n - a.shape[-1],))], axis=-1)
    pb = np.concatenate([b, np.zeros(b.shape[:-1] + (n - b.shape[-1],))], axis=-1)
    return pa + pb


def _horner(c, x):
    """sum_k c[..., k] x^k for c (N, m) and x (N, M)."""
    acc = np.zeros(x.shape, dtype=complex) + c[:, -1:]
    for k in range(c.shape[-1] - 2, -1, -1):
        acc = acc * x + c[:, k:k + 1]
    return acc


def _deriv(c):
    return c[:, 1:] * np.arange(1, c.shape[-1])


def _on_axis(c, w):
    """sum_k c[..., k] (j w)^k for real c (N, m) and w (N, M), in real arithmetic."""
    w2 = w * w
    m = c.shape[-1]
    even = np.zeros(w.shape)
    odd = np.zeros(w.shape)
    for k in range(((m - 1) // 2) * 2, -1, -2):   # c0 - c2 w^2 + c4 w^4 ...
        even = c[:, k:k + 1] - even * w2
    for k in range(((m - 2) // 2) * 2 + 1, 0, -2):  # (c1 - c3 w^2 + ...) w
        odd = c[:, k:k + 1] - odd * w2
    return even + 1j * odd * w


def _den_parts(p, pk):
    """The pieces of Den(s) for flattened parameters ``p`` and extra poles ``pk`` [Hz]."""
    gf = 1.0 / p["rf"]
    gsh = 1.0 / p["rsh"]
    p0 = 1.0 + p["rs"] * gsh
    one = np.ones_like(gf)
    nf = np.stack([gf, p["cf"]], -1)
    pp = np.stack([p0, p["rs"] * p["cd"]], -1)
    nin = np.stack([gsh, p["cd"] + p["cin"] * p0, p["cin"] * p["rs"] * p["cd"]], -1)
    nfp = _polymul(nf, pp)
    q2 = nfp + nin
    da = np.stack([one, p["dc_gain"] / (_TWO_PI * p["gbw"])], -1)
    for k in range(pk.shape[-1]):
        da = _polymul(da, np.stack([one, 1.0 / (_TWO_PI * pk[:, k])], -1))
    return dict(gf=gf, gsh=gsh, p0=p0, nfp=nfp, q2=q2, da=da)


def closed_loop_polynomial(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin):
    """Denominator of the closed-loop transimpedance, Zt(s) = dc_gain / Den(s).

    Parameters are those of :func:`photorx.circuit.tia.transimpedance` (broadcastable arrays;
    ``poles`` a sequence of arrays [Hz], ``inf`` for an absent pole; ``rsh`` may be ``inf``).

    Returns
    -------
    numpy.ndarray
        Coefficients of Den(s), s in [rad/s], ascending powers on the last axis, shape
        ``broadcast_shape + (4 + len(poles),)``; units [S s^k].

    Notes
    -----
    Den(s) = Q2(s) D_A(s) + A0 Yf(s) P(s) with the symbols of the module notes.
    """
    shape, p, pk = _prepare(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin)
    d = _den_parts(p, pk)
    den = _polyadd(_polymul(d["q2"], d["da"]), p["dc_gain"][:, None] * d["nfp"])
    return den.reshape(shape + (den.shape[-1],))


def _normalised_poles(den):
    """Poles of Den in units of w0, with w0 and the normalised coefficients (Den(0) = 1).

    Returns x (N, n) complex (NaN where the degree is lower), w0 (N,), d (N, n+1).
    """
    c0 = den[:, 0]
    w0 = np.where(den[:, 2] > 0, np.sqrt(c0 / np.where(den[:, 2] > 0, den[:, 2], 1.0)),
                  c0 / den[:, 1])
    k = np.arange(den.shape[-1])
    d = den / c0[:, None] * w0[:, None] ** k
    n = d.shape[-1] - 1
    nonzero = d != 0
    degree = n - np.argmax(nonzero[:, ::-1], axis=-1)
    x = np.full((d.shape[0], n), np.nan + 0j)
    for m in np.unique(degree):  # at most a few distinct degrees; designs stay batched
        rows = np.nonzero(degree == m)[0]
        lead = d[rows, m]
        comp = np.zeros((rows.size, m, m))
        comp[:, 0, :] = -d[rows, m - 1::-1] / lead[:, None]
        if m > 1:
            comp[:, np.arange(1, m), np.arange(m - 1)] = 1.0
        x[rows, :m] = np.linalg.eigvals(comp)
    # one guarded Newton step polishes each root on the original polynomial
    with np.errstate(all="ignore"):
        dd = _deriv(d)
        xv = np.where(np.isnan(x), 0.0, x)
        f0 = _horner(d, xv)
        step = f0 / _horner(dd, xv)
        x1 = xv - step
        better = np.isfinite(x1) & (np.abs(_horner(d, x1)) < np.abs(f0))
        x = np.where(better & ~np.isnan(x), x1, x)
    return x, w0, d


def closed_loop_poles(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin):
    """Closed-loop poles of the transimpedance [rad/s], complex.

    Returns an array of shape ``broadcast_shape + (3 + len(poles),)``; designs of lower
    degree (Rs = 0, absent poles) are padded with NaN. Parameters as in
    :func:`closed_loop_polynomial`.
    """
    shape, p, pk = _prepare(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin)
    d = _den_parts(p, pk)
    den = _polyadd(_polymul(d["q2"], d["da"]), p["dc_gain"][:, None] * d["nfp"])
    x, w0, _ = _normalised_poles(den)
    return (x * w0[:, None]).reshape(shape + (x.shape[-1],))


# ---------------------------------------------------------------------------------------------
# loop gain and margins
# ---------------------------------------------------------------------------------------------
def _loop_corners(p, pk, parts):
    """T0 and the real corner frequencies [rad/s] of T (inf = absent)."""
    gf, gsh, p0 = parts["gf"], parts["gsh"], parts["p0"]
    t0 = p["dc_gain"] * gf * p0 / (gf * p0 + gsh)
    q0, q1, q2 = parts["q2"][:, 0], parts["q2"][:, 1], parts["q2"][:, 2]
    with np.errstate(divide="ignore", invalid="ignore"):
        root = np.sqrt(np.maximum(q1 * q1 - 4 * q0 * q2, 0.0))
        wq1 = 2 * q0 / (q1 + root)
        wq2 = np.where(q2 > 0, (q1 + root) / (2 * np.where(q2 > 0, q2, 1.0)), np.inf)
        wz = np.stack([np.where(p["cf"] > 0, gf / np.where(p["cf"] > 0, p["cf"], 1.0), np.inf),
                       np.where(p["rs"] > 0, p0 / np.where(p["rs"] > 0, p["rs"] * p["cd"], 1.0),
                                np.inf)], -1)
        wp = np.concatenate([np.stack([_TWO_PI * p["gbw"] / p["dc_gain"], wq1, wq2], -1),
                             _TWO_PI * pk], -1)
    return t0, wz, wp


def _loop_eval(w, t0, wz, wp):
    """log|T| and unwrapped arg T [rad] at w (N, M) from the corners (exact sums)."""
    ratio_z = w[:, :, None] / wz[:, None, :]
    ratio_p = w[:, :, None] / wp[:, None, :]
    logmag = (np.log(t0)[:, None] + 0.5 * np.log1p(ratio_z ** 2).sum(-1)
              - 0.5 * np.log1p(ratio_p ** 2).sum(-1))
    phase = np.arctan(ratio_z).sum(-1) - np.arctan(ratio_p).sum(-1)
    return logmag, phase


def _bisect_rows(fun, lo, hi, rows, n_iter=44):
    """Vectorised bisection in log w of fun(w, rows) whose sign differs at lo and hi."""
    flo = np.sign(fun(lo, rows))
    for _ in range(n_iter):
        mid = np.sqrt(lo * hi)
        fm = np.sign(fun(mid, rows))
        same = fm == flo
        lo = np.where(same, mid, lo)
        hi = np.where(same, hi, mid)
    return np.sqrt(lo * hi)


def _margins(t0, wz, wp):
    n = t0.size
    allc = np.concatenate([wz, wp], -1)
    finite = np.isfinite(allc)
    wmin = np.min(np.where(finite, allc, np.inf), -1) / 100.0
    wmax = np.max(np.where(finite, allc, 0.0), -1) * 1e3
    # beyond every corner |T| falls as w^-(np - nz); push the top of the grid past |T| = 1
    excess = np.isfinite(wp).sum(-1) - np.isfinite(wz).sum(-1)
    lm_top, _ = _loop_eval(wmax[:, None], t0, wz, wp)
    wmax = wmax * np.exp(np.maximum(lm_top[:, 0], 0.0) / np.maximum(excess, 1)) * 10.0
    u = np.linspace(0.0, 1.0, _N_LOOP)
    w = wmin[:, None] * (wmax / wmin)[:, None] ** u
    # on the grid, in real arithmetic: |T|^2 as a running product, and arg T as the angle of
    # prod(1 + j w/wz) prod(1 - j w/wp) (same phase), unwrapped (each step turns it << pi)
    mag2 = np.ones(w.shape)
    re, im = np.ones(w.shape), np.zeros(w.shape)
    for k in range(wz.shape[1]):
        b = w / wz[:, k:k + 1]
        mag2 *= 1.0 + b * b
        re, im = re - im * b, im + re * b
    for k in range(wp.shape[1]):
        b = w / wp[:, k:k + 1]
        mag2 /= 1.0 + b * b
        re, im = re + im * b, im - re * b
    logmag = np.log(t0)[:, None] + 0.5 * np.log(mag2)
    phase = np.unwrap(np.arctan2(im, re), axis=-1)
    def f_mag(x, r):
        return _loop_eval(x[:, None], t0[r], wz[r], wp[r])[0][:, 0]

    def phase_at(x, r):
        return _loop_eval(x[:, None], t0[r], wz[r], wp[r])[1][:, 0]

    # gain crossovers: every sign change of log|T|
    r, k = np.nonzero(np.diff(np.sign(logmag), axis=-1) != 0)
    pm = np.full(n, np.inf)
    wc = np.full(n, np.nan)
    if r.size:
        x = _bisect_rows(f_mag, w[r, k], w[r, k + 1], r)
        pm_all = np.degrees(phase_at(x, r)) + 180.0
        pm_all = 180.0 - np.mod(180.0 - pm_all, 360.0)  # wrap to (-180, 180]
        order = np.lexsort((np.abs(pm_all), r))
        first = np.unique(r[order], return_index=True)[1]
        pick = order[first]
        pm[r[pick]] = pm_all[pick]
        wc[r[pick]] = x[pick]
    # phase crossovers: arg T crossing -180 deg + m 360 deg
    level = np.floor((np.degrees(phase) + 180.0) / 360.0)
    r, k = np.nonzero(np.diff(level, axis=-1) != 0)
    gm = np.full(n, np.inf)
    wpc = np.full(n, np.nan)
    if r.size:
        target = np.radians(-180.0 + 360.0 * np.maximum(level[r, k], level[r, k + 1]))

        def f_phase(x, rr, target=target):
            return phase_at(x, rr) - target

        x = _bisect_rows(f_phase, w[r, k], w[r, k + 1], r)
        gm_all = -20.0 * f_mag(x, r) / np.log(10.0)
        order = np.lexsort((np.abs(gm_all), r))
        first = np.unique(r[order], return_index=True)[1]
        pick = order[first]
        gm[r[pick]] = gm_all[pick]
        wpc[r[pick]] = x[pick]
    return pm, gm, wc / _TWO_PI, wpc / _TWO_PI


def loop_margins(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin):
    """Phase and gain margin of the loop gain T = A beta, vectorised over designs.

    Parameters as in :func:`closed_loop_polynomial`.

    Returns
    -------
    dict of numpy.ndarray
        ``phase_margin`` [deg] (over all gain crossovers the one of smallest magnitude,
        wrapped to (-180, 180]), ``crossover`` [Hz], ``gain_margin_db`` [dB] (the crossing of
        -180 deg mod 360 closest to 0 dB), ``phase_crossover`` [Hz]. See the module notes.

    References
    ----------
    .. [1] K. Ogata, *Modern Control Engineering*, 5th ed., 2010, sec. 7-6.
    """
    shape, p, pk = _prepare(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin)
    parts = _den_parts(p, pk)
    pm, gm, fc, fpc = _margins(*_loop_corners(p, pk, parts))
    return {"phase_margin": pm.reshape(shape), "gain_margin_db": gm.reshape(shape),
            "crossover": fc.reshape(shape), "phase_crossover": fpc.reshape(shape)}


# ---------------------------------------------------------------------------------------------
# closed-loop figures from the normalised poles
# ---------------------------------------------------------------------------------------------
def _dominant_pair(x):
    """Q and damping of the dominant second-order pair; see the module notes."""
    mag = np.abs(x)
    valid = ~np.isnan(x)
    is_cplx = valid & (x.imag > 1e-6 * mag)
    is_real = valid & (np.abs(x.imag) <= 1e-6 * mag)
    wn_c = np.where(is_cplx, mag, np.inf)
    kc = np.argmin(wn_c, -1)
    xc = np.take_along_axis(x, kc[:, None], -1)[:, 0]
    wn_c = np.take_along_axis(wn_c, kc[:, None], -1)[:, 0]
    sum_c = 2 * xc.real
    order = np.argsort(np.where(is_real, mag, np.inf), -1)[:, :2]
    two = np.take_along_axis(x, order, -1)
    two_ok = np.take_along_axis(is_real, order, -1).all(-1)
    with np.errstate(invalid="ignore"):
        wn_r = np.where(two_ok, np.sqrt(np.abs(two[:, 0] * two[:, 1])), np.inf)
    sum_r = (two[:, 0] + two[:, 1]).real
    use_c = wn_c <= wn_r
    wn = np.where(use_c, wn_c, wn_r)
    ssum = np.where(use_c, sum_c, sum_r)
    with np.errstate(divide="ignore", invalid="ignore"):
        damping = -ssum / (2 * wn)
        q = 1.0 / (2 * damping)
    return q, damping


def _frequency_figures(x, d):
    """Bandwidth, peaking (linear ratio) and group-delay variation, in units of w0."""
    n_rows = x.shape[0]
    mag = np.abs(x)
    lo = np.nanmin(mag, -1) * 0.01
    hi = np.nanmax(mag, -1) * 100.0
    u = np.linspace(0.0, 1.0, _N_FREQ)
    w = lo[:, None] * (hi / lo)[:, None] ** u
    extra = np.concatenate([np.abs(x.imag), mag], -1)
    extra = np.where(np.isnan(extra) | (extra < lo[:, None]), lo[:, None], extra)
    w = np.sort(np.concatenate([w, extra], -1), -1)
    dd = _deriv(d)
    g = np.abs(_on_axis(d, w)) ** 2  # |Den(jw)/Den(0)|^2 = 1/|H|^2
    # first grid point below -3 dB (the grid starts at 1 % of the slowest pole, well inside
    # the pass band); the band ends there even if a resonance further up rises above -3 dB
    # again: a response that is down 3 dB over a span is not "flat" across it
    first = np.maximum(np.argmax(g > 2.0, -1), 1)
    rows = np.arange(n_rows)

    def f_bw(xx, r):
        return 2.0 - np.abs(_on_axis(d[r], xx[:, None])[:, 0]) ** 2

    bw = _bisect_rows(f_bw, w[rows, first - 1], w[rows, first], rows)
    # peaking: minimum of |Den|^2, refined where d|Den|^2/dw changes sign around the grid minimum
    k = np.argmin(g, -1)
    peak = 1.0 / g[rows, k]
    kl, kh = np.maximum(k - 1, 0), np.minimum(k + 1, w.shape[1] - 1)

    def slope(xx, r):
        ww = xx[:, None]
        return (np.conj(_on_axis(d[r], ww)) * 1j * _on_axis(dd[r], ww)).real[:, 0]

    ok = (slope(w[rows, kl], rows) < 0) & (slope(w[rows, kh], rows) > 0)
    if np.any(ok):
        r = rows[ok]
        xm = _bisect_rows(slope, w[r, kl[ok]], w[r, kh[ok]], r)
        gm = np.abs(_on_axis(d[r], xm[:, None])[:, 0]) ** 2
        peak[r] = np.maximum(peak[r], 1.0 / gm)
    peak = np.maximum(peak, 1.0)
    wg = bw[:, None] * np.linspace(0.0, 1.0, 65)
    tau = (_on_axis(dd, wg) / _on_axis(d, wg)).real
    gdv = tau.max(-1) - tau.min(-1)
    return bw, peak, gdv


def _step_eval(x, cw, t):
    """y(t) and y'(t) of the normalised step response, one time per row (halved pole set)."""
    ce = cw * np.exp(x * t[:, None])
    return 1.0 + ce.sum(-1).real, (ce * x).sum(-1).real


def _newton_in_bracket(fun, lo, hi, t, n_iter=8):
    """Safeguarded Newton: root of fun (returns value and slope) bracketed in [lo, hi]."""
    sign_lo = np.sign(fun(lo)[0])
    for _ in range(n_iter):
        f, fp = fun(t)
        same = np.sign(f) == sign_lo
        lo, hi = np.where(same, t, lo), np.where(same, hi, t)
        with np.errstate(divide="ignore", invalid="ignore"):
            tn = t - f / fp
        t = np.where(np.isfinite(tn) & (tn >= lo) & (tn <= hi), tn, 0.5 * (lo + hi))
    return t


def _step_figures(x, d, tol):
    """Rise time, overshoot and settling time in units of 1/w0 (stable rows only)."""
    n_rows = x.shape[0]
    valid = ~np.isnan(x)
    xv = np.where(valid, x, -1.0)
    # repeated poles (critical damping) have no simple residues: split each coincident pair by
    # +-1e-5 relative along the real axis, which changes the response by ~1e-10 only
    xv = xv.copy()
    for i in range(xv.shape[1]):
        for j in range(i + 1, xv.shape[1]):
            close = valid[:, i] & valid[:, j] & (np.abs(xv[:, i] - xv[:, j])
                                                 < 1e-6 * np.abs(xv[:, i]))
            mid, delta = 0.5 * (xv[:, i] + xv[:, j]), 1e-5 * np.abs(xv[:, i])
            both_real = np.abs(mid.imag) < 1e-6 * np.abs(mid)
            mid = np.where(both_real, mid.real, mid)
            xv[:, i] = np.where(close, mid + delta, xv[:, i])
            xv[:, j] = np.where(close, mid - delta, xv[:, j])
    with np.errstate(invalid="ignore", divide="ignore"):
        c = np.where(valid, 1.0 / (xv * _horner(_deriv(d), xv)), 0.0)
    n_eff = valid.sum(-1)[:, None]
    with np.errstate(divide="ignore", invalid="ignore"):
        t_term = np.log(np.maximum(n_eff * np.abs(c) / tol, 1.0)) / -xv.real
    t_end = np.max(np.where(valid, t_term, 0.0), -1) * 1.2
    t_end = np.where(t_end > 0, t_end, 1.0)
    matter = valid & (n_eff * np.abs(c) > tol)
    periods = np.max(np.where(matter, np.abs(xv.imag), 0.0), -1) * t_end / _TWO_PI
    # conjugate symmetry: keep Im >= 0 with weight 2 on complex poles; active poles first
    weight = np.where(~valid | (xv.imag < 0), 0.0, np.where(xv.imag > 0, 2.0, 1.0))
    order = np.argsort(weight == 0, -1, kind="stable")
    xv = np.take_along_axis(xv, order, -1)
    cw = np.take_along_axis(c * weight, order, -1)
    n_act = int((weight > 0).sum(-1).max())
    xv, cw = xv[:, :n_act], cw[:, :n_act]
    # samples: >= 6 per ringing period of any pole that matters, in power-of-two bins
    need = np.maximum(6.0 * periods + 1.0, _N_TIME_MIN)
    n_bin = 2 ** np.ceil(np.log2(np.minimum(need, _N_TIME_MAX))).astype(int)
    rise, overshoot, settle = (np.empty(n_rows) for _ in range(3))
    for n_t in np.unique(n_bin):  # a handful of bin sizes, each fully vectorised
        in_bin = np.nonzero(n_bin == n_t)[0]
        block = max(1, _BLOCK_SAMPLES // n_t)  # bounds memory, not a loop over designs
        for start in range(0, in_bin.size, block):
            r = in_bin[start:start + block]
            rise[r], overshoot[r], settle[r] = _step_block(xv[r], cw[r], t_end[r], n_t, tol)
    # Ringing beyond the sample cap (Q of several thousand, an oscillator in all but name):
    # the full-length grid has < 6 samples per period and misses the first crossings and the
    # first, highest peak. Rise time and overshoot happen at the start, so take them from an
    # early window holding 6 samples per period (_N_TIME_MAX / 6 periods); the settling time
    # stays from the full grid (its refinement of the last band exit is then approximate).
    over = np.nonzero(need > _N_TIME_MAX)[0]
    block = max(1, _BLOCK_SAMPLES // _N_TIME_MAX)
    for start in range(0, over.size, block):
        r = over[start:start + block]
        t_early = t_end[r] * _N_TIME_MAX / need[r]
        rise[r], overshoot[r], _ = _step_block(xv[r], cw[r], t_early, _N_TIME_MAX, tol)
    return rise, overshoot, settle


def _step_block(xv, cw, t_end, n_t, tol):
    rows = np.arange(xv.shape[0])
    t = t_end[:, None] * np.linspace(0.0, 1.0, n_t)
    dt = t_end / (n_t - 1)
    y = np.ones((xv.shape[0], n_t))
    for i in range(xv.shape[1]):  # loop over the few poles; powers by a running product
        ratio = np.exp(xv[:, i] * dt)[:, None]
        powers = np.cumprod(np.broadcast_to(ratio, (xv.shape[0], n_t - 1)), -1)
        y[:, 0] += cw[:, i].real
        y[:, 1:] += (cw[:, i:i + 1] * powers).real

    def crossing_first(level):
        k = np.maximum(np.argmax(y >= level, -1), 1)
        lo, hi = t[rows, k - 1], t[rows, k]
        ylo, yhi = y[rows, k - 1], y[rows, k]
        guess = lo + (level - ylo) / np.where(yhi != ylo, yhi - ylo, 1.0) * (hi - lo)

        def f(tt):
            v, s = _step_eval(xv, cw, tt)
            return v - level, s
        return _newton_in_bracket(f, lo, hi, np.clip(guess, lo, hi))

    rise = crossing_first(0.9) - crossing_first(0.1)
    # overshoot: the grid maximum and the first few sampled local maxima, each refined where
    # y' changes sign around it. With only ~6 samples per period a later, slightly lower peak
    # can sample higher than the first one (a high-Q ring decays by only exp(-pi/Q) per
    # period), so the first peaks are refined too and the largest refined value is kept.
    ymax = y.max(-1)

    def fprime(tt):
        ce = cw * np.exp(xv * tt[:, None]) * xv
        return ce.sum(-1).real, (ce * xv).sum(-1).real

    local = np.zeros(y.shape, dtype=bool)
    local[:, 1:-1] = (y[:, 1:-1] >= y[:, :-2]) & (y[:, 1:-1] >= y[:, 2:]) & (y[:, 1:-1] > 1.0)
    count = np.cumsum(local, -1)
    candidates = [np.argmax(y, -1)] + [np.argmax(local & (count == c), -1) for c in range(1, 9)]
    for k in candidates:
        kl, kh = np.maximum(k - 1, 0), np.minimum(k + 1, n_t - 1)
        ok = (fprime(t[rows, kl])[0] > 0) & (fprime(t[rows, kh])[0] < 0)
        tm = _newton_in_bracket(fprime, t[rows, kl], t[rows, kh], t[rows, k])
        ym, _ = _step_eval(xv, cw, tm)
        ymax = np.where(ok, np.maximum(ymax, ym), ymax)
    overshoot = np.maximum(ymax - 1.0, 0.0)
    # settling: the last sample outside the band, then the exact crossing after it
    out = np.abs(y - 1.0) > tol
    last = np.minimum(n_t - 1 - np.argmax(out[:, ::-1], -1), n_t - 2)
    lo, hi = t[rows, last], t[rows, last + 1]
    sgn = np.sign(y[rows, last] - 1.0)

    def fset(tt):
        v, s = _step_eval(xv, cw, tt)
        return sgn * (v - 1.0) - tol, sgn * s

    e_lo = np.abs(y[rows, last] - 1.0) - tol
    e_hi = np.abs(y[rows, last + 1] - 1.0) - tol
    guess = lo + e_lo / np.where(e_lo != e_hi, e_lo - e_hi, 1.0) * (hi - lo)
    # a ringing peak between samples can leave the band although both samples are inside it
    # (sampling at >= 6 points per period sees >= cos(pi/6) = 0.87 of a peak): refine every
    # later local maximum of |y - 1| that samples above 0.8 tol, keep the last one that is
    # truly outside the band, and start the crossing search from it
    err = np.abs(y - 1.0)
    peak = np.zeros(err.shape, dtype=bool)
    peak[:, 1:-1] = (err[:, 1:-1] >= err[:, :-2]) & (err[:, 1:-1] >= err[:, 2:])
    peak &= (err > 0.8 * tol) & (np.arange(n_t) > last[:, None])
    r, k = np.nonzero(peak)
    if r.size:
        def slope_rows(tt, r=r):
            ce = cw[r] * np.exp(xv[r] * tt[:, None]) * xv[r]
            return ce.sum(-1).real, (ce * xv[r]).sum(-1).real

        a, b = t[r, k - 1], t[r, k + 1]
        bracketed = np.sign(slope_rows(a)[0]) != np.sign(slope_rows(b)[0])
        tp = np.where(bracketed, _newton_in_bracket(slope_rows, a, b, t[r, k]), t[r, k])
        vp = 1.0 + (cw[r] * np.exp(xv[r] * tp[:, None])).sum(-1).real
        out_p = np.abs(vp - 1.0) > tol
        r, k, tp, vp = r[out_p], k[out_p], tp[out_p], vp[out_p]
        if r.size:
            order = np.lexsort((k, r))
            final = order[np.r_[r[order][1:] != r[order][:-1], True]]  # last peak per row
            rr = r[final]
            lo[rr], hi[rr] = tp[final], t[rr, k[final] + 1]
            sgn[rr] = np.sign(vp[final] - 1.0)
            guess[rr] = 0.5 * (lo[rr] + hi[rr])
    settle = _newton_in_bracket(fset, lo, hi, np.clip(guess, lo, hi))
    return rise, overshoot, settle


def tia_figures(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, output_swing=np.inf, *,
                settling_tolerance=0.01):
    """Every figure of merit of the transimpedance loop for many designs at once.

    Parameters
    ----------
    gbw : array_like
        Amplifier gain-bandwidth product [Hz], > 0.
    dc_gain : array_like
        Amplifier DC open-loop gain [V/V], > 0.
    poles : sequence of array_like
        Extra amplifier poles [Hz], > 0, one entry per pole; ``inf`` marks an absent pole
        (pad with ``inf`` when designs differ in their number of poles). ``()`` for none.
    rf : array_like
        Feedback resistance [ohm], > 0.
    cf : array_like
        Feedback capacitance [F], >= 0.
    cd : array_like
        Photodiode capacitance [F], > 0.
    rsh : array_like
        Photodiode shunt resistance [ohm], > 0, ``inf`` for none.
    rs : array_like
        Photodiode series resistance [ohm], >= 0.
    cin : array_like
        Amplifier input capacitance [F], >= 0.
    output_swing : array_like, optional
        Largest output magnitude [V], > 0; ``inf`` (default) means no limit and gives an
        infinite maximum photocurrent.
    settling_tolerance : float, optional
        Settling band as a fraction of the final value, in (0, 0.5); default 0.01 (1 %).

    Returns
    -------
    dict of numpy.ndarray
        Keys and units as in :data:`FIGURE_UNITS` (the fields of :class:`TiaMetrics`),
        each shaped like the broadcast of the inputs. ``stable`` is boolean; figures that
        have no meaning for an unstable loop are NaN exactly where ``stable`` is False.

    Notes
    -----
    See the module notes for every formula. Work scales linearly with the number of
    designs (about 2e4 designs/s on one core, tests/benchmarks/bench_tia_metrics.py); the
    only Python loops run over polynomial degree, pole index, refinement steps, step-response
    sample-count bins and memory blocks of about 2e6 samples, never over design points.
    A bare 1-D array for ``poles`` is read as several poles (as in :class:`OpAmp`); give one
    array per pole inside a tuple to vary a pole across designs.

    References
    ----------
    .. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996.
    .. [2] K. Ogata, *Modern Control Engineering*, 5th ed., Prentice Hall, 2010.
    """
    tol = float(as_float_array("settling_tolerance", settling_tolerance))
    if not 0.0 < tol < 0.5:
        raise DesignError.out_of_range("settling_tolerance", tol, "", "(0, 0.5)")
    shape, p, pk = _prepare(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, output_swing)
    n = p["gbw"].size
    parts = _den_parts(p, pk)
    a0 = p["dc_gain"]
    den = _polyadd(_polymul(parts["q2"], parts["da"]), a0[:, None] * parts["nfp"])
    zt0 = a0 / den[:, 0]
    x, w0, d = _normalised_poles(den)
    stable = np.all(np.isnan(x) | (x.real < 0), -1)
    pm, gm, fc, fpc = _margins(*_loop_corners(p, pk, parts))

    out = {key: np.full(n, np.nan) for key in FIGURE_UNITS}
    out.update(dc_transimpedance=zt0, phase_margin=pm, gain_margin_db=gm, crossover=fc,
               phase_crossover=fpc, max_photocurrent=p["output_swing"] / np.abs(zt0))
    out["stable"] = stable
    s = np.nonzero(stable)[0]
    if s.size:
        q, damping = _dominant_pair(x[s])
        bw, peak, gdv = _frequency_figures(x[s], d[s])
        out["q"][s], out["damping"][s] = q, damping
        out["bandwidth"][s] = bw * w0[s] / _TWO_PI
        out["peaking_db"][s] = 10.0 * np.log10(peak)  # peak is |H|^2
        out["group_delay_variation"][s] = gdv / w0[s]
        rise, over, settle = _step_figures(x[s], d[s], tol)
        out["rise_time"][s] = rise / w0[s]
        out["overshoot"][s] = over
        out["settling_time"][s] = settle / w0[s]
        out["max_step_photocurrent"][s] = out["max_photocurrent"][s] / (1.0 + out["overshoot"][s])
    return {k: v.reshape(shape) for k, v in out.items()}


# ---------------------------------------------------------------------------------------------
# shell
# ---------------------------------------------------------------------------------------------
@dataclass(frozen=True)
class TiaMetrics:
    """Figures of merit of a transimpedance stage (fields are floats, or arrays for many designs).

    Attributes
    ----------
    dc_transimpedance : DC closed-loop transimpedance [ohm] (finite gain and shunt included).
    bandwidth : -3 dB frequency of the transimpedance [Hz] (first fall; NaN if unstable).
    peaking_db : peak of |Zt| above its DC value [dB], >= 0.
    phase_margin : worst phase margin of the loop gain [deg]; inf without a crossover.
    gain_margin_db : gain margin closest to 0 dB [dB]; inf without a -180 deg crossing.
    crossover : gain-crossover frequency of the reported phase margin [Hz].
    phase_crossover : frequency of the reported gain margin [Hz].
    q, damping : quality factor and damping ratio (1/(2Q)) of the dominant pole pair.
    rise_time : 10-90 % rise time of the step response [s].
    overshoot : step overshoot as a fraction of the final value (0.05 = 5 %).
    settling_time : time to stay within +-1 % of the final value [s].
    group_delay_variation : peak-to-peak group delay from DC to the bandwidth [s].
    max_photocurrent : output_swing / |Zt(0)|, largest steady photocurrent [A].
    max_step_photocurrent : largest photocurrent step whose overshoot stays inside the swing [A].
    stable : True when every closed-loop pole has a negative real part.

    Unstable loops carry ``stable=False``, their margins and DC figures; the other figures
    are NaN there (see :mod:`photorx.circuit.metrics`).
    """

    dc_transimpedance: float
    bandwidth: float
    peaking_db: float
    phase_margin: float
    gain_margin_db: float
    crossover: float
    phase_crossover: float
    q: float
    damping: float
    rise_time: float
    overshoot: float
    settling_time: float
    group_delay_variation: float
    max_photocurrent: float
    max_step_photocurrent: float
    stable: bool

    @classmethod
    def from_figures(cls, figures):
        """Build from the dict of :func:`tia_figures` (0-d arrays become Python scalars)."""
        def plain(v):
            a = np.asarray(v)
            return a.item() if a.ndim == 0 else a
        return cls(**{f.name: plain(figures[f.name]) for f in fields(cls)})

    def to_dict(self):
        """Field name -> value (floats or arrays)."""
        return {f.name: getattr(self, f.name) for f in fields(self)}

    def to_frame(self):
        """A pandas DataFrame: one row per design, one column per figure (SI units)."""
        import pandas as pd

        cols = {k: np.ravel(v) for k, v in self.to_dict().items()}
        size = max(c.size for c in cols.values())
        return pd.DataFrame({k: np.broadcast_to(c, (size,)) for k, c in cols.items()})

    def _repr_html_(self):
        from ..units import format_eng

        rows = []
        for name, value in self.to_dict().items():
            unit = FIGURE_UNITS[name]
            if np.ndim(value):
                text = f"array, shape {np.shape(value)}"
            elif name == "stable":
                text = "yes" if value else "<b>no: unstable loop</b>"
            elif name == "overshoot":
                text = format_eng(100.0 * value, "%")
            else:
                text = format_eng(value, unit)
            rows.append(f"<tr><td>{name}</td><td>{text}</td></tr>")
        return ("<table><thead><tr><th>figure</th><th>value</th></tr></thead><tbody>"
                + "".join(rows) + "</tbody></table>")


def analyze_tia(tia, net, settling_tolerance=0.01):
    """Figures of merit of ``tia`` loaded by the photodiode circuit ``net``.

    Parameters
    ----------
    tia : photorx.circuit.tia.Tia
        The stage (amplifier, Rf, Cf); the amplifier's ``output_swing`` bounds the photocurrent.
    net : photorx.device.equivalent_circuit.EquivalentCircuit
        The photodiode as the amplifier sees it (fields may be arrays).
    settling_tolerance : float, optional
        Settling band, fraction of the final value (default 0.01).

    Returns
    -------
    TiaMetrics
    """
    figures = tia_figures(**tia._args(net), output_swing=tia.amp.output_swing,
                          settling_tolerance=settling_tolerance)
    return TiaMetrics.from_figures(figures)
