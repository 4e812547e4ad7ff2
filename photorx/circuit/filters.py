"""Post filters after the transimpedance stage: Butterworth, Bessel and brick-wall low-pass.

Functional core: :func:`filter_response` (complex response, broadcasting over frequency
and cutoff), :func:`filter_power_response` (its squared magnitude) and
:func:`filter_enbw_factor` (noise bandwidth over cutoff).
Shell: :class:`PostFilter`, a frozen dataclass that validates and routes calls.

All filters have unity gain at DC. Butterworth and Bessel filters are normalised so that
``cutoff`` is the -3 dB frequency (for the Bessel filter this is the "magnitude"
normalisation; a Bessel filter normalised for unit group delay instead has its -3 dB
point at 1.36 (order 2) to 2.70 (order 6) times its delay-normalised frequency).
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cache
from math import factorial

import numpy as np

from .._validate import require_positive
from ..errors import DesignError

__all__ = [
    "FILTER_KINDS",
    "PostFilter",
    "filter_enbw_factor",
    "filter_power_response",
    "filter_response",
    "normalized_poles",
]

FILTER_KINDS = ("butterworth", "bessel", "brickwall")
_MAX_ORDER = 6


def _check_kind_order(kind, order):
    if kind not in FILTER_KINDS:
        raise DesignError(
            f"kind = {kind!r} is invalid; valid values: {', '.join(FILTER_KINDS)}", parameter="kind"
        )
    if (
        isinstance(order, bool)
        or not isinstance(order, (int, np.integer))
        or not 1 <= order <= _MAX_ORDER
    ):
        raise DesignError.out_of_range("order", order, "", f"integers 1 to {_MAX_ORDER}")
    return str(kind), int(order)


@cache
def normalized_poles(kind, order):
    """Poles of the low-pass prototype with its -3 dB point at 1 rad/s.

    Parameters
    ----------
    kind : {"butterworth", "bessel"}
        Filter family.
    order : int
        Filter order, 1 to 6.

    Returns
    -------
    tuple of complex
        The left-half-plane poles [rad/s].

    Notes
    -----
    Butterworth: p_k = exp(j pi (2k + n - 1) / (2n)), k = 1..n.
    Bessel: roots of the reverse Bessel polynomial
    theta_n(s) = sum_k (2n - k)! / (2^(n-k) k! (n-k)!) s^k (unit group delay at DC),
    then divided by the frequency w3 at which |H(j w3)|^2 = 1/2, so that the -3 dB
    frequency is 1 rad/s.

    References
    ----------
    .. [1] C. D. Motchenbacher and J. A. Connelly, *Low-Noise Electronic System Design*,
       Wiley, 1993, ch. 1 (noise bandwidth of Butterworth filters).
    .. [2] W. E. Thomson, "Delay networks having maximally flat frequency characteristics",
       Proc. IEE 96 (1949) 487-490 (Bessel polynomials).
    """
    kind, order = _check_kind_order(kind, order)
    n = order
    if kind == "butterworth":
        k = np.arange(1, n + 1)
        return tuple(np.exp(1j * np.pi * (2 * k + n - 1) / (2 * n)))
    if kind == "bessel":
        coeffs = [
            factorial(2 * n - k) / (2 ** (n - k) * factorial(k) * factorial(n - k))
            for k in range(n, -1, -1)
        ]  # highest power first
        poles = np.roots(coeffs)

        # |H(jw)|^2 = 1/2 with H = D(0)/D(s): |D(jw)|^2 = D(s) D(-s) at s^2 = -w^2 is a
        # polynomial in x = w^2 that rises monotonically from D(0)^2; its one positive root
        # x = w3^2 is polished by Newton steps (numpy only: no solver import on this path)
        d = np.asarray(coeffs[::-1], dtype=float)  # lowest power first
        d_minus = d * (-1.0) ** np.arange(d.size)
        prod = np.polynomial.polynomial.polymul(d, d_minus)  # even powers of s only
        px = prod[::2] * (-1.0) ** np.arange(prod[::2].size)  # s^2 -> -x
        px[0] -= 2.0 * d[0] ** 2
        roots = np.polynomial.polynomial.polyroots(px)
        x = float(np.max(roots[(np.abs(roots.imag) < 1e-9 * np.abs(roots)) & (roots.real > 0)].real))
        dpx = np.polynomial.polynomial.polyder(px)
        for _ in range(3):
            x -= np.polynomial.polynomial.polyval(x, px) / np.polynomial.polynomial.polyval(x, dpx)
        w3 = np.sqrt(x)
        return tuple(poles / w3)
    raise DesignError(f"kind = {kind!r} has no poles (brick-wall filter)", parameter="kind")


def filter_response(f, kind, order, cutoff):
    """Complex response of a unity-DC-gain low-pass post filter.

    Parameters
    ----------
    f : array_like
        Frequency [Hz], >= 0.
    kind : {"butterworth", "bessel", "brickwall"}
        Filter family (scalar).
    order : int
        Order 1 to 6 (scalar; ignored for the brick wall).
    cutoff : array_like
        -3 dB frequency [Hz] for Butterworth and Bessel, edge frequency for the brick wall;
        broadcasts against ``f`` (pass ``cutoff[..., None]`` for many designs).

    Returns
    -------
    numpy.ndarray
        H(jf), complex, dimensionless.

    Notes
    -----
    H(s) = prod_k(-p_k) / prod_k(s/w_c - p_k) with the prototype poles of
    :func:`normalized_poles` and w_c = 2 pi cutoff. Brick wall: H = 1 for f <= cutoff,
    0 above.
    """
    f = np.asarray(f, dtype=float)
    cutoff = np.asarray(cutoff, dtype=float)
    kind, order = _check_kind_order(kind, order)
    if kind == "brickwall":
        return np.where(f <= cutoff, 1.0 + 0j, 0.0 + 0j)
    x = 1j * f / cutoff
    h = np.ones(np.broadcast_shapes(f.shape, cutoff.shape), dtype=complex)
    for p in normalized_poles(kind, order):
        h = h * (-p / (x - p))
    return h


def filter_power_response(f, kind, order, cutoff):
    """Squared magnitude |H(jf)|^2 of :func:`filter_response`, in real arithmetic [-].

    Parameters
    ----------
    f, kind, order, cutoff
        As in :func:`filter_response`.

    Returns
    -------
    numpy.ndarray
        |H(jf)|^2, real, 1 at DC.

    Notes
    -----
    |H(jx)|^2 = prod_k |p_k|^2 / (Re(p_k)^2 + (x - Im(p_k))^2), x = f / cutoff, with the
    prototype poles of :func:`normalized_poles`: the same value as ``abs(filter_response)**2``
    without complex division (the noise integrals evaluate it on every design's grid).
    Brick wall: 1 for f <= cutoff, 0 above.
    """
    f = np.asarray(f, dtype=float)
    cutoff = np.asarray(cutoff, dtype=float)
    kind, order = _check_kind_order(kind, order)
    if kind == "brickwall":
        return np.where(f <= cutoff, 1.0, 0.0)
    x = f / cutoff
    h2 = np.ones(x.shape)
    d = np.empty(x.shape)
    for p in normalized_poles(kind, order):
        np.subtract(x, p.imag, out=d)
        np.multiply(d, d, out=d)
        np.add(d, p.real**2, out=d)
        np.divide(h2, d, out=h2)
        h2 *= abs(p) ** 2
    return h2


@cache
def filter_enbw_factor(kind, order):
    """Equivalent noise bandwidth divided by the cutoff frequency (dimensionless).

    Parameters
    ----------
    kind : {"butterworth", "bessel", "brickwall"}
        Filter family.
    order : int
        Order 1 to 6 (ignored for the brick wall).

    Returns
    -------
    float
        ENBW / cutoff [-].

    Notes
    -----
    ENBW = integral_0^inf |H(f)|^2 df / |H(0)|^2, evaluated numerically (adaptive
    quadrature, relative error < 1e-10). For Butterworth filters the closed form is
    ENBW / f_c = (pi / 2n) / sin(pi / 2n): 1.571, 1.111, 1.047, 1.026 for n = 1..4.
    Brick wall: 1.

    References
    ----------
    .. [1] C. D. Motchenbacher and J. A. Connelly, *Low-Noise Electronic System Design*,
       Wiley, 1993, ch. 1.
    """
    kind, order = _check_kind_order(kind, order)
    if kind == "brickwall":
        return 1.0

    def power(x):
        return float(np.abs(filter_response(x, kind, order, 1.0)) ** 2)

    from scipy import integrate  # lazy, as above

    low, _ = integrate.quad(power, 0.0, 1.0, epsabs=0, epsrel=1e-12)
    high, _ = integrate.quad(power, 1.0, np.inf, epsabs=0, epsrel=1e-12, limit=200)
    return low + high


@dataclass(frozen=True)
class PostFilter:
    """A unity-gain low-pass filter after the transimpedance stage.

    Parameters
    ----------
    kind : {"butterworth", "bessel", "brickwall"}
        Filter family. The brick wall is the ideal rectangular response.
    order : int
        Order 1 to 6 (ignored for the brick wall).
    cutoff : float
        -3 dB frequency [Hz] (Butterworth and Bessel, the Bessel filter normalised to
        -3 dB at ``cutoff`` rather than to unit group delay), or the edge frequency of the
        brick wall [Hz]; > 0.

    Examples
    --------
    >>> PostFilter("bessel", 4, 700e6).enbw()  # doctest: +SKIP
    """

    kind: str = "bessel"
    order: int = 4
    cutoff: float = 1e9

    def __post_init__(self):
        kind = self.kind.lower() if isinstance(self.kind, str) else self.kind
        kind, order = _check_kind_order(kind, self.order)
        object.__setattr__(self, "kind", kind)
        object.__setattr__(self, "order", order)
        object.__setattr__(self, "cutoff", float(require_positive("cutoff", self.cutoff, "Hz")))

    def response(self, f):
        """Complex response H(jf) [dimensionless]; see :func:`filter_response`.

        Parameters
        ----------
        f : float or array_like
            Frequency [Hz], >= 0.
        """
        return filter_response(f, self.kind, self.order, self.cutoff)

    def enbw(self):
        """Equivalent noise bandwidth of the filter alone [Hz]; see :func:`filter_enbw_factor`."""
        return filter_enbw_factor(self.kind, self.order) * self.cutoff
