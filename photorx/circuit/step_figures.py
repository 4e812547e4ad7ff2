"""Step-response figures (rise time, overshoot, settling time) of the closed loop, vectorised.

The step response of the loop is exact, y(t)/y(inf) = 1 + sum_i c_i exp(p_i t)
with residues c_i = Den(0) N_A(p_i) / (p_i Den'(p_i)) (N_A = 1 without amplifier zeros); it is sampled on a uniform grid long enough
for every term to decay below the settling band, and crossings and peaks are refined by
safeguarded Newton steps on the exact expression. See the notes of
:mod:`photorx.circuit.metrics` for the sample-count rules.

References
----------
.. [1] K. Ogata, *Modern Control Engineering*, 5th ed., Prentice Hall, 2010, sec. 5-3
       (transient-response specifications).
"""

from __future__ import annotations

import numpy as np

from .loop_poles import _deriv, _horner

__all__: list[str] = []

_TWO_PI = 2.0 * np.pi
_N_TIME_MIN, _N_TIME_MAX = 128, 2 ** 16
_BLOCK_SAMPLES = 2 ** 21  # designs x time samples per block of the step response (memory bound)


def _step_eval(x, cw, t):
    """y(t) and y'(t) of the normalised step response, one time per row (halved pole set)."""
    ce = cw * np.exp(x * t[:, None])
    return 1.0 + ce.sum(-1).real, (ce * x).sum(-1).real


def _newton_in_bracket(fun, lo, hi, t, n_iter=8, rtol=1e-14):
    """Safeguarded Newton: root of fun (returns value and slope) bracketed in [lo, hi].

    Stops early once every row's Newton step is below ``rtol`` of the bracket's end.
    """
    sign_lo = np.sign(fun(lo)[0])
    for _ in range(n_iter):
        f, fp = fun(t)
        same = np.sign(f) == sign_lo
        lo, hi = np.where(same, t, lo), np.where(same, hi, t)
        with np.errstate(divide="ignore", invalid="ignore"):
            tn = t - f / fp
        inside = np.isfinite(tn) & (tn >= lo) & (tn <= hi)
        t_next = np.where(inside, tn, 0.5 * (lo + hi))
        if np.all(inside & (np.abs(t_next - t) <= rtol * np.abs(hi))):
            return t_next
        t = t_next
    return t


def _step_figures(x, d, tol, nn=None):
    """Rise time, overshoot and settling time in units of 1/w0 (stable rows only).

    ``nn``: normalised numerator N_A(s w0) of the amplifier's zeros (None: all-pole); each
    residue is then N_A(p_i) / (p_i Den'(p_i)).
    """
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
        if nn is not None:
            c = c * _horner(nn, xv)
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

    # the first crossings of 10 % and 90 %, both refined in one batch (2 x designs rows)
    level = np.repeat([0.1, 0.9], len(rows))
    r2 = np.tile(rows, 2)
    k = np.maximum(np.concatenate([np.argmax(y >= 0.1, -1), np.argmax(y >= 0.9, -1)]), 1)
    lo, hi = t[r2, k - 1], t[r2, k]
    ylo, yhi = y[r2, k - 1], y[r2, k]
    guess = lo + (level - ylo) / np.where(yhi != ylo, yhi - ylo, 1.0) * (hi - lo)
    x2, c2 = xv[r2], cw[r2]

    def f_level(tt):
        v, s = _step_eval(x2, c2, tt)
        return v - level, s

    t_cross = _newton_in_bracket(f_level, lo, hi, np.clip(guess, lo, hi))
    rise = t_cross[len(rows):] - t_cross[:len(rows)]
    # overshoot: the grid maximum and the first few sampled local maxima, each refined where
    # y' changes sign around it. With only ~6 samples per period a later, slightly lower peak
    # can sample higher than the first one (a high-Q ring decays by only exp(-pi/Q) per
    # period), so the first peaks are refined too and the largest refined value is kept.
    ymax = y.max(-1)

    local = np.zeros(y.shape, dtype=bool)
    local[:, 1:-1] = (y[:, 1:-1] >= y[:, :-2]) & (y[:, 1:-1] >= y[:, 2:]) & (y[:, 1:-1] > 1.0)
    count = np.cumsum(local, -1)
    candidates = [np.argmax(y, -1)] + [np.argmax(local & (count == c), -1) for c in range(1, 9)]
    # all candidate peaks of all designs refined in one batch: (designs x 9) rows
    k = np.stack(candidates, -1).reshape(-1)
    rr = np.repeat(rows, len(candidates))
    kl, kh = np.maximum(k - 1, 0), np.minimum(k + 1, n_t - 1)
    # candidates past the last local maximum are placeholders (argmax of nothing: k = 0, the
    # start of the step, never a peak); a well-damped loop has one real candidate or none,
    # so only the real ones are refined
    sel = np.nonzero(k > 0)[0]
    peaks = np.full(rr.size, -np.inf)
    if sel.size:
        rs_, xr, cr = rr[sel], xv[rr[sel]], cw[rr[sel]]

        def fprime(tt):
            ce = cr * np.exp(xr * tt[:, None]) * xr
            return ce.sum(-1).real, (ce * xr).sum(-1).real

        lo_t, hi_t = t[rs_, kl[sel]], t[rs_, kh[sel]]
        bracketed = (fprime(lo_t)[0] > 0) & (fprime(hi_t)[0] < 0)
        tm = _newton_in_bracket(fprime, lo_t, hi_t, t[rs_, k[sel]])
        ym, _ = _step_eval(xr, cr, tm)
        peaks[sel] = np.where(bracketed, ym, -np.inf)
    peaks = peaks.reshape(len(rows), len(candidates))
    ymax = np.maximum(ymax, peaks.max(-1))
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
