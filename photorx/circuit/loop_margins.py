"""Phase and gain margins of the transimpedance loop gain T = A beta (vectorised).

The loop gain is written from its real corner frequencies, T = T0 prod(1 + s/wz) /
prod(1 + s/wp) (the passive network is RC-only, so every corner is real, and the
amplifier's own zeros are real by construction: they join the zero corners); crossings are
found on a log grid and refined by bisection. Conventions (worst crossing, wrapping) are
those of python-control's ``stability_margins``; see the notes of
:mod:`photorx.circuit.metrics`.

References
----------
.. [1] K. Ogata, *Modern Control Engineering*, 5th ed., Prentice Hall, 2010, sec. 7-6.
"""

from __future__ import annotations

import numpy as np

from .loop_poles import _bisect_rows, _den_parts, _prepare

__all__ = ["loop_margins"]

_TWO_PI = 2.0 * np.pi
_N_LOOP = 128          # log-grid points for the loop-gain crossings (then refined by bisection)


# ---------------------------------------------------------------------------------------------
# loop gain and margins
# ---------------------------------------------------------------------------------------------
def _loop_corners(p, pk, parts):
    """T0 and the real corner frequencies [rad/s] of T (inf = absent)."""
    gf, gsh, p0 = parts["gf"], parts["gsh"], parts["p0"]
    t0 = p["dc_gain"] * gf * p0 / (gf * p0 + gsh)
    q0, q1, q2 = parts["q2"][:, 0], parts["q2"][:, 1], parts["q2"][:, 2]
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):  # inf: no corner
        root = np.sqrt(np.maximum(q1 * q1 - 4 * q0 * q2, 0.0))
        wq1 = 2 * q0 / (q1 + root)
        wq2 = np.where(q2 > 0, (q1 + root) / (2 * np.where(q2 > 0, q2, 1.0)), np.inf)
        wz = np.stack([np.where(p["cf"] > 0, gf / np.where(p["cf"] > 0, p["cf"], 1.0), np.inf),
                       np.where(p["rs"] > 0, p0 / np.where(p["rs"] > 0, p["rs"] * p["cd"], 1.0),
                                np.inf)], -1)
        wp = np.concatenate([np.stack([_TWO_PI * p["gbw"] / p["dc_gain"], wq1, wq2], -1),
                             _TWO_PI * pk], -1)
    if "zeros" in p:
        wz = np.concatenate([wz, _TWO_PI * p["zeros"]], -1)
    return t0, wz, wp


def _loop_eval(w, t0, wz, wp):
    """log|T| and unwrapped arg T [rad] at w (N, M) from the corners (exact sums)."""
    ratio_z = w[:, :, None] / wz[:, None, :]
    ratio_p = w[:, :, None] / wp[:, None, :]
    logmag = (np.log(t0)[:, None] + 0.5 * np.log1p(ratio_z ** 2).sum(-1)
              - 0.5 * np.log1p(ratio_p ** 2).sum(-1))
    phase = np.arctan(ratio_z).sum(-1) - np.arctan(ratio_p).sum(-1)
    return logmag, phase


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


def loop_margins(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros=()):
    """Phase and gain margin of the loop gain T = A beta, vectorised over designs.

    Parameters
    ----------
    gbw : array_like
        Amplifier gain-bandwidth product [Hz], > 0.
    dc_gain : array_like
        Amplifier DC open-loop gain [V/V], > 0.
    poles : sequence of array_like
        Extra amplifier poles [Hz], > 0, one entry per pole; ``inf`` marks an absent pole.
        ``()`` for none.
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
    zeros : sequence of array_like, optional
        Real amplifier zeros [Hz], > 0, one entry per zero; ``inf`` marks an absent zero.
        ``()`` (default) for none.

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
    shape, p, pk = _prepare(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros=zeros)
    parts = _den_parts(p, pk)
    pm, gm, fc, fpc = _margins(*_loop_corners(p, pk, parts))
    return {"phase_margin": pm.reshape(shape), "gain_margin_db": gm.reshape(shape),
            "crossover": fc.reshape(shape), "phase_crossover": fpc.reshape(shape)}
