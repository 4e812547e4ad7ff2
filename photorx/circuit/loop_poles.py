"""Closed-loop polynomial and poles of the transimpedance loop (vectorised over designs).

The pieces the loop figures of :mod:`photorx.circuit.metrics` are built from: input
validation and broadcasting, polynomial arithmetic on stacked coefficient arrays, the
denominator Den(s) of Zt(s) = A0 / Den(s), and its roots from batched companion matrices.
The formulas are derived in the notes of :mod:`photorx.circuit.metrics`.

References
----------
.. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996, ch. 2-3.
.. [2] G. H. Golub and C. F. Van Loan, *Matrix Computations*, 4th ed., 2013, sec. 7.4.6
       (polynomial roots as companion-matrix eigenvalues).
"""

from __future__ import annotations

import numpy as np

from .._validate import as_float_array, require_nonnegative, require_positive
from ..errors import DesignError

__all__ = ["closed_loop_polynomial", "closed_loop_poles", "closed_loop_numerator"]

_TWO_PI = 2.0 * np.pi


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


def _corner_list(name, values):
    """A sequence of pole or zero arrays [Hz], each validated (> 0, inf for none)."""
    if values is None:
        values = ()
    elif not isinstance(values, (list, tuple)):
        values = tuple(values) if np.ndim(values) else (values,)
    return [_positive_or_inf(name, v, "Hz") for v in values]


def _prepare(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, output_swing=np.inf, zeros=()):
    """Validate, broadcast and flatten. Returns (shape, dict of 1-D arrays, poles (N, K)).

    The amplifier's zeros, if any, are in the dict as ``"zeros"``, shaped (N, Z).
    """
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
    pole_list = _corner_list("poles", poles)
    zero_list = _corner_list("zeros", zeros)
    shape = np.broadcast_shapes(*(np.shape(v) for v in vals.values()),
                                *(np.shape(p) for p in pole_list + zero_list))
    flat = {k: np.broadcast_to(np.asarray(v, dtype=float), shape).ravel() for k, v in vals.items()}
    n = flat["gbw"].size

    def stack(items):
        return np.stack([np.broadcast_to(np.asarray(p, dtype=float), shape).ravel() for p in items],
                        axis=-1) if items else np.zeros((n, 0))

    if zero_list:
        flat["zeros"] = stack(zero_list)
    return shape, flat, stack(pole_list)


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


def _even_odd(c, w2):
    """Even and odd parts of sum_k c[:, k] (j w)^k: (c0 - c2 w^2 + ..., c1 - c3 w^2 + ...).

    The odd part still needs its factor w. ``c`` is (N, m), ``w2`` = w^2 is (N, M). Horner
    in -w^2, in place (the sweep path's grids are large: no temporaries per degree).
    """
    m = c.shape[-1]
    minus_w2 = -w2
    parts = []
    for top in (((m - 1) // 2) * 2, ((m - 2) // 2) * 2 + 1):
        acc = np.empty(w2.shape)
        if top < 0:
            acc.fill(0.0)
        else:
            acc[...] = c[:, top:top + 1]
            for k in range(top - 2, -1, -2):
                np.multiply(acc, minus_w2, out=acc)
                np.add(acc, c[:, k:k + 1], out=acc)
        parts.append(acc)
    return parts[0], parts[1]


def _on_axis(c, w):
    """sum_k c[..., k] (j w)^k for real c (N, m) and w (N, M), in real arithmetic."""
    even, odd = _even_odd(c, w * w)
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
    parts = dict(gf=gf, gsh=gsh, p0=p0, nfp=nfp, q2=q2, da=da)
    zk = p.get("zeros")
    if zk is not None:  # N_A(s) = prod(1 + s/w_z); absent (inf) zeros give 0 coefficients
        na = one[:, None]
        for k in range(zk.shape[-1]):
            na = _polymul(na, np.stack([one, 1.0 / (_TWO_PI * zk[:, k])], -1))
        parts["na"] = na
    return parts


def _denominator(p, parts):
    """Den(s) = Q2(s) D_A(s) + A0 N_A(s) Yf(s) P(s) from :func:`_den_parts` (ascending
    coefficients; N_A = 1 without amplifier zeros)."""
    nfp = parts["nfp"] if "na" not in parts else _polymul(parts["na"], parts["nfp"])
    return _polyadd(_polymul(parts["q2"], parts["da"]), p["dc_gain"][:, None] * nfp)


def _numerator(p, parts, w0):
    """N_A(s w0) of the normalised closed loop (ascending in s/w0), or None without zeros."""
    na = parts.get("na")
    if na is None:
        return None
    return na * w0[:, None] ** np.arange(na.shape[-1])


def closed_loop_numerator(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros=()):
    """Numerator of the closed-loop transimpedance, Zt(s) = dc_gain N_A(s) / Den(s).

    N_A(s) = prod_j (1 + s/w_zj) is the zero polynomial of the amplifier's open-loop gain
    (:func:`photorx.circuit.amplifier.open_loop_gain`); the passive network adds no finite
    zero to Zt, so these are its only zeros. Parameters as in :func:`closed_loop_polynomial`.

    Parameters
    ----------
    gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros
        The design, as in :func:`closed_loop_polynomial`.

    Returns
    -------
    numpy.ndarray
        Coefficients of N_A(s), s in [rad/s], ascending powers on the last axis, shape
        ``broadcast_shape + (1 + len(zeros),)``; N_A(0) = 1, units [s^k].
    """
    shape, p, pk = _prepare(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros=zeros)
    na = _den_parts(p, pk).get("na", np.ones((p["gbw"].size, 1)))
    return na.reshape(shape + (na.shape[-1],))


def closed_loop_polynomial(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros=()):
    """Denominator of the closed-loop transimpedance, Zt(s) = dc_gain N_A(s) / Den(s).

    All parameters broadcast against each other (one element per design), as in
    :func:`photorx.circuit.tia.transimpedance`.

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
        ``()`` (default) for none; see :func:`closed_loop_numerator`.

    Returns
    -------
    numpy.ndarray
        Coefficients of Den(s), s in [rad/s], ascending powers on the last axis, shape
        ``broadcast_shape + (max(4 + len(poles), 3 + len(zeros)),)``; units [S s^k].

    Notes
    -----
    Den(s) = Q2(s) D_A(s) + A0 N_A(s) Yf(s) P(s) with the symbols of the module notes.
    """
    shape, p, pk = _prepare(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros=zeros)
    d = _den_parts(p, pk)
    den = _denominator(p, d)
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


def closed_loop_poles(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros=()):
    """Closed-loop poles of the transimpedance [rad/s], complex.

    The roots of :func:`closed_loop_polynomial`, from batched companion-matrix eigenvalues
    polished by one guarded Newton step.

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
        ``()`` (default) for none; see :func:`closed_loop_numerator`.

    Returns
    -------
    numpy.ndarray
        Complex poles [rad/s], shape ``broadcast_shape + (degree of Den,)``; designs of
        lower degree (Rs = 0, absent poles) are padded with NaN.
    """
    shape, p, pk = _prepare(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros=zeros)
    d = _den_parts(p, pk)
    den = _denominator(p, d)
    x, w0, _ = _normalised_poles(den)
    return (x * w0[:, None]).reshape(shape + (x.shape[-1],))


def _bisect_rows(fun, lo, hi, rows, n_iter=60, rtol=1e-13):
    """Root in log w of fun(w, rows), whose sign differs at lo and hi, for every row at once.

    Illinois false position (Dowell and Jarratt 1971) on ln w: superlinear for the smooth
    loop functions here (a handful of steps to ``rtol`` where bisection needs 44), with the
    bracket kept, so it cannot leave the interval the grid found. Stops when the step of
    every row is below ``rtol`` (relative, in w) or after ``n_iter`` steps.

    References
    ----------
    .. [1] M. Dowell and P. Jarratt, A modified regula falsi method for computing the root
       of an equation, BIT 11, 168 (1971).
    """
    x_lo, x_hi = np.log(lo), np.log(hi)
    g_lo, g_hi = fun(lo, rows), fun(hi, rows)
    x = 0.5 * (x_lo + x_hi)
    last = np.zeros(x.shape, dtype=np.int8)
    for _ in range(n_iter):
        denom = g_lo - g_hi
        ok = np.isfinite(denom) & (denom != 0)
        secant = x_lo + g_lo * (x_hi - x_lo) / np.where(ok, denom, 1.0)
        x_new = np.where(ok, np.clip(secant, x_lo, x_hi), 0.5 * (x_lo + x_hi))
        done = np.abs(x_new - x) <= rtol
        x = x_new
        if done.all():
            break
        gx = fun(np.exp(x), rows)
        left = np.sign(gx) == np.sign(g_lo)  # the root lies in [x, x_hi]
        # Illinois: halve the value kept at an end that survives twice in a row
        g_hi = np.where(left & (last == 1), 0.5 * g_hi, g_hi)
        g_lo = np.where(~left & (last == -1), 0.5 * g_lo, g_lo)
        x_lo, g_lo = np.where(left, x, x_lo), np.where(left, gx, g_lo)
        x_hi, g_hi = np.where(left, x_hi, x), np.where(left, g_hi, gx)
        last = np.where(left, 1, -1).astype(np.int8)
        exact = gx == 0
        if exact.any():
            x_lo, x_hi = np.where(exact, x, x_lo), np.where(exact, x, x_hi)
    return np.exp(x)
