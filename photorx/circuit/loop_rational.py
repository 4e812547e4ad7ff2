"""The loop's transfer functions as ratios of polynomials, evaluated on the jw axis in real arithmetic.

Every transfer function of the transimpedance circuit (:mod:`photorx.circuit.tia`) shares
the closed-loop denominator Den(s) of :func:`photorx.circuit.loop_poles.closed_loop_polynomial`;
with the symbols of the notes of :mod:`photorx.circuit.metrics` (Yf P = N_fp, Yin P = N_in,
Q2 = N_fp + N_in, P = 1 + Rs/Rsh + s Rs Cd the series-resistance divider, A = A0 / D_A):

==============  =========================================  ===============================
path            nodal form (:mod:`photorx.circuit.tia`)      ratio of polynomials
==============  =========================================  ===============================
``junction``    Zt = Zf (Zd / (Zd + Rs)) T / (1 + T)       A0 / Den
``summing``     Zf T / (1 + T)                              A0 P / Den
``series``      Zf T / (1 + T) Yd / P                       A0 (1/Rsh + s Cd) / Den
``voltage``     A / (1 + T)                                 A0 Q2 / Den
==============  =========================================  ===============================

With amplifier zeros, A = A0 N_A / D_A with N_A(s) = prod(1 + s/w_z), every numerator
carries N_A(s) (and Den = Q2 D_A + A0 N_A N_fp).

On s = jw a real polynomial splits into its even and odd parts, c0 - c2 w^2 + ... and
(c1 - c3 w^2 + ...) w, so |N(jw)|^2 = even^2 + odd^2 takes a few real multiply-adds per
frequency instead of the nodal form's complex divisions. The nodal form stays the reference
(the tests compare both on random designs); this form is what the sweep path evaluates on
its frequency grids.

References
----------
.. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996, ch. 2-3.
.. [2] D. E. Knuth, *The Art of Computer Programming*, vol. 2, 3rd ed., 1997, sec. 4.6.4
       (evaluation of polynomials; splitting into even and odd parts).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .loop_poles import _den_parts, _denominator, _even_odd, _polymul, _prepare

__all__ = ["LoopPolynomials", "loop_polynomials"]

_TWO_PI = 2.0 * np.pi
#: The transfer-function paths, as in :func:`photorx.circuit.noise.noise_transfer_functions`.
PATHS = ("summing", "junction", "series", "voltage")


@dataclass(frozen=True)
class LoopPolynomials:
    """Coefficients of the loop's transfer functions for many designs (see the module notes).

    Parameters
    ----------
    shape : tuple of int
        The designs' broadcast shape.
    den : numpy.ndarray
        Den(s), ascending powers of s [rad/s], shape (N, m), N = prod(shape) [S s^k].
    numerators : dict of numpy.ndarray
        Numerator of each path of :data:`PATHS`, (N, m_k), ascending powers of s; the
        path's transfer function is numerator / den.
    """

    shape: tuple
    den: np.ndarray
    numerators: dict

    def rows(self, rows):
        """The designs ``rows`` (a slice of a 1-D design shape) as their own LoopPolynomials.

        Parameters
        ----------
        rows : slice
            Rows of the flattened designs.
        """
        den = self.den[rows]
        return LoopPolynomials(shape=(den.shape[0],), den=den,
                               numerators={k: v[rows] for k, v in self.numerators.items()})

    def _axis(self, f):
        f = np.asarray(f, dtype=float)
        n = self.den.shape[0]
        if f.ndim == 1:
            f = np.broadcast_to(f, (n, f.size))
        else:  # design shape + (M,)
            f = np.broadcast_to(f, self.shape + f.shape[-1:]).reshape(n, f.shape[-1])
        return _TWO_PI * f

    def _out(self, x):
        return x.reshape(self.shape + x.shape[-1:])

    def transimpedance(self, f):
        """Closed-loop transimpedance Zt(jf) [ohm], complex, shape ``shape + (M,)``.

        Parameters
        ----------
        f : array_like
            Frequencies [Hz], >= 0: 1-D (M,) shared by every design, or ``shape + (M,)``.
        """
        w = self._axis(f)
        w2 = w * w
        even, odd = _even_odd(self.den, w2)
        odd *= w
        # A0 / (e + j o) = A0 (e - j o) / (e^2 + o^2): real arithmetic, no complex division
        scale = even * even
        scale += odd * odd
        num = self.numerators["junction"]
        np.divide(num[:, :1], scale, out=scale)
        out = np.empty(even.shape, dtype=complex)
        np.multiply(even, scale, out=out.real)
        np.multiply(odd, scale, out=out.imag)
        np.negative(out.imag, out=out.imag)
        if num.shape[-1] > 1:  # amplifier zeros: times N_A(jw) / N_A(0)
            ne, no = _even_odd(num / num[:, :1], w2)
            out *= ne + 1j * (no * w)
        return self._out(out)

    def squared_magnitudes(self, f, paths=PATHS):
        """|H(jf)|^2 of each path in ``paths`` [ohm^2, or (V/V)^2 for ``voltage``].

        Parameters
        ----------
        f : array_like
            Frequencies [Hz], >= 0: 1-D (M,) shared by every design, or ``shape + (M,)``.
        paths : sequence of str
            Names from :data:`PATHS`.

        Returns
        -------
        dict of numpy.ndarray
            Path name -> |H|^2, shape ``shape + (M,)``.
        """
        w = self._axis(f)
        w2 = w * w
        even, odd = _even_odd(self.den, w2)
        inv_den2 = 1.0 / (even * even + odd * odd * w2)
        out = {}
        for name in paths:
            num = self.numerators[name]
            if num.shape[-1] == 1:
                mag2 = num[:, :1] ** 2 * inv_den2
            else:
                ne, no = _even_odd(num, w2)
                mag2 = (ne * ne + no * no * w2) * inv_den2
            out[name] = self._out(mag2)
        return out


def loop_polynomials(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros=(), *, shape=()):
    """The loop's transfer functions as polynomial ratios, for many designs at once.

    Parameters
    ----------
    gbw : array_like
        Amplifier gain-bandwidth product [Hz], > 0.
    dc_gain : array_like
        Amplifier DC open-loop gain [V/V], > 0.
    poles : sequence of array_like
        Extra amplifier poles [Hz], > 0, one entry per pole; ``inf`` marks an absent pole.
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
        Every path's numerator carries the amplifier's N_A(s) = prod(1 + s/w_z).
    shape : tuple of int, optional
        A design shape the result must cover besides the arguments' own (the designs of
        a sweep that varies something outside the circuit); default ().

    Returns
    -------
    LoopPolynomials
        Den(s) and the numerator of every path (see the module notes), for the broadcast
        shape of the arguments and ``shape``.

    Notes
    -----
    Same values as :func:`photorx.circuit.tia.transimpedance` and
    :func:`photorx.circuit.noise.noise_transfer_functions` up to rounding (the algebra
    is in the module notes); valid wherever those are, including unstable loops (the
    frequency response of an unstable loop is still the ratio, it just does not describe
    a steady state).
    """
    if shape:  # widen one argument: _prepare broadcasts the rest against it
        gbw = np.broadcast_to(np.asarray(gbw, dtype=float),
                              np.broadcast_shapes(np.shape(gbw), tuple(shape)))
    shape, p, pk = _prepare(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros=zeros)
    parts = _den_parts(p, pk)
    den = _denominator(p, parts)
    a0 = p["dc_gain"][:, None]
    series_divider = np.stack([parts["p0"], p["rs"] * p["cd"]], -1)
    numerators = {
        "junction": a0 * np.ones((a0.shape[0], 1)),
        "summing": a0 * series_divider,
        "series": a0 * np.stack([parts["gsh"], p["cd"]], -1),
        "voltage": a0 * parts["q2"],
    }
    if "na" in parts:  # A = A0 N_A / D_A: every path carries N_A(s)
        numerators = {k: _polymul(parts["na"], v) for k, v in numerators.items()}
    return LoopPolynomials(shape=tuple(shape), den=den, numerators=numerators)
