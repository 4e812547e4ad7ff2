"""Time-domain response of the receiver chain: impulse, step, pulse and periodic patterns.

The chain from photocurrent to output is H(f) = H_pd(f) Zt(f) H_filter(f). The closed-loop
transimpedance is all-pole, Zt(s) = A0 / Den(s)
(:func:`~photorx.circuit.loop_poles.closed_loop_polynomial`), and Butterworth and Bessel
filters are all-pole too, so the rational part R(s) = Zt(s) H_filter(s) has the exact
partial-fraction impulse response

    r(t) = sum_k c_k exp(p_k t),  c_k = lim_{s -> p_k} (s - p_k) R(s)   (t >= 0).

The photodiode's intrinsic response (transit and the slow diffusion tail) and a brick-wall
filter are not rational; their effect enters as a numerically transformed correction
R(f) (G(f) - 1) with G = H_pd H_brickwall, whose samples are exact at the harmonics of a
periodic window (the window repeats, so a tail longer than it folds back; the window is
chosen many tail time constants long).

:func:`periodic_response` is the workhorse of the eye: the steady-state output for a
periodic symbol sequence, exact at the pattern's harmonics (the response is evaluated at
f_m = m / (N T)) and band-limited to half the sampling rate.

References
----------
.. [1] K. Ogata, *Modern Control Engineering*, 5th ed., Prentice Hall, 2010, ch. 5
   (impulse and step responses from the partial-fraction expansion).
.. [2] A. V. Oppenheim and R. W. Schafer, *Discrete-Time Signal Processing*, 3rd ed.,
   Pearson, 2010, sec. 8.5 (the DFT samples the Fourier series of a periodic signal).
"""

from __future__ import annotations

import numpy as np

from ..circuit.filters import normalized_poles
from ..circuit.loop_poles import closed_loop_numerator, closed_loop_polynomial, closed_loop_poles
from ..errors import DesignError

__all__ = ["rational_chain", "rational_impulse", "rational_step", "rational_pulse",
           "periodic_response"]

_TWO_PI = 2.0 * np.pi


def rational_chain(circuit: dict, post_filter=None):
    """Poles [rad/s] and residues [ohm/s] of R(s) = Zt(s) H_filter(s) for one design.

    Parameters
    ----------
    circuit : dict
        The transimpedance design as scalars: ``gbw, dc_gain, poles, rf, cf, cd, rsh, rs,
        cin`` and optionally ``zeros`` (see :func:`photorx.circuit.tia.transimpedance`), e.g. ``Tia._args(net)``.
    post_filter : PostFilter, optional
        Butterworth or Bessel filters join the rational part; a brick wall does not (the
        caller applies it numerically).

    Returns
    -------
    poles : numpy.ndarray
        Complex poles [rad/s].
    residues : numpy.ndarray
        Complex residues c_k [ohm/s]; r(t) = sum_k c_k exp(p_k t).

    Notes
    -----
    R(s) = K N_A(s) / prod_k (s - p_k) with K = A0 / Den_lead * prod_j(-q_j) for the filter
    poles q_j and N_A the amplifier's zero polynomial (1 without zeros), so
    c_k = K N_A(p_k) / prod_{j != k} (p_k - p_j). Coincident poles (a filter pole on a loop
    pole, critical damping) are split by 1e-6 relative, which changes the response by
    about 1e-12 relative.
    """
    den = np.asarray(closed_loop_polynomial(**circuit), dtype=float).reshape(-1)
    loop_poles = np.asarray(closed_loop_poles(**circuit), dtype=complex).reshape(-1)
    loop_poles = loop_poles[~np.isnan(loop_poles)]
    lead = den[np.nonzero(den)[0][-1]]
    gain = float(np.asarray(circuit["dc_gain"], dtype=float)) / lead
    poles = [loop_poles]
    if post_filter is not None and post_filter.kind != "brickwall":
        q = np.asarray(normalized_poles(post_filter.kind, post_filter.order)) * _TWO_PI * post_filter.cutoff
        gain = gain * np.prod(-q)
        poles.append(q)
    p = np.concatenate(poles)
    for i in range(p.size):  # split coincident poles so that every residue is simple
        for j in range(i + 1, p.size):
            if abs(p[i] - p[j]) < 1e-7 * abs(p[i]):
                p[j] = p[j] * (1.0 - 1e-6) if abs(p[j].imag) < 1e-9 * abs(p[j]) else p[j] * (1 + 1e-6j)
    diff = p[:, None] - p[None, :]
    np.fill_diagonal(diff, 1.0)
    residues = gain / np.prod(diff, axis=1)
    if len(circuit.get("zeros", ())):
        num = np.asarray(closed_loop_numerator(**circuit), dtype=float).reshape(-1)
        residues = residues * np.polynomial.polynomial.polyval(p, num)
    return p, np.real_if_close(residues) * (1 + 0j)


def _require_stable(poles):
    if np.any(np.real(poles) >= 0):
        raise DesignError("the feedback loop is unstable (a closed-loop pole with Re p >= 0): "
                          "it has no pulse response; valid range: a stable loop (raise cf or "
                          "the phase margin)", parameter="cf")


def rational_impulse(t, poles, residues):
    """Exact impulse response sum_k c_k exp(p_k t) for t >= 0, 0 before [ohm/s].

    Parameters
    ----------
    t : array_like
        Times [s].
    poles : array_like
        Complex poles [rad/s] (conjugate pairs for a real response), Re p < 0.
    residues : array_like
        Their residues [ohm/s].
    """
    t = np.asarray(t, dtype=float)
    tt = np.maximum(t, 0.0)
    y = np.real(np.exp(np.multiply.outer(tt, poles)) @ residues)
    return np.where(t >= 0, y, 0.0)


def rational_step(t, poles, residues):
    """Exact step response sum_k (c_k / p_k)(exp(p_k t) - 1) for t >= 0, 0 before [ohm].

    Parameters
    ----------
    t : array_like
        Times after the unit current step [s].
    poles : array_like
        Complex poles [rad/s], Re p < 0.
    residues : array_like
        Their residues [ohm/s].
    """
    t = np.asarray(t, dtype=float)
    tt = np.maximum(t, 0.0)
    y = np.real(np.expm1(np.multiply.outer(tt, poles)) @ (residues / poles))
    return np.where(t >= 0, y, 0.0)


def rational_pulse(t, poles, residues, width):
    """Exact response to a unit current pulse of ``width`` starting at t = 0 [ohm].

    Parameters
    ----------
    t : array_like
        Times [s].
    poles : array_like
        Complex poles [rad/s], Re p < 0.
    residues : array_like
        Their residues [ohm/s].
    width : float
        Pulse width [s], > 0 (the bit period of NRZ).
    """
    return rational_step(t, poles, residues) - rational_step(np.asarray(t, dtype=float) - width,
                                                             poles, residues)


def periodic_response(response, symbols, symbol_period, samples_per_symbol=32, shape="nrz"):
    """Steady-state output for a periodically repeated symbol sequence, sampled uniformly.

    Parameters
    ----------
    response : callable
        ``response(f)`` -> complex chain response [ohm] at frequencies ``f`` [Hz] (1-D);
        may return leading design axes, ``design_shape + f.shape``.
    symbols : array_like
        One period of the symbol amplitudes a_k [A] (1-D, length N).
    symbol_period : float
        Symbol duration T [s], > 0.
    samples_per_symbol : int
        Samples per symbol M (>= 2).
    shape : {"nrz", "impulse"}
        Each symbol is a rectangle a_k over [kT, (k+1)T) ("nrz") or an impulse a_k T
        delta(t - kT) ("impulse"; the same area).

    Returns
    -------
    numpy.ndarray
        Output [V] at times n T / M, n = 0 .. N M - 1, shape ``design_shape + (N M,)``.

    Notes
    -----
    Fourier series of the periodic input at f_m = m / (N T): X_m = (A_m / N) sinc(m/N)
    exp(-j pi m / N) for rectangles, A_m / N for impulses, with A_m the DFT of the
    symbols; Y_m = H(f_m) X_m and the samples are the inverse real DFT of Y (harmonics
    up to the Nyquist rate M / (2T); the Nyquist term itself is dropped).
    """
    a = np.asarray(symbols, dtype=float)
    n_sym, m_s = a.size, int(samples_per_symbol)
    n = n_sym * m_s
    m = np.arange(n // 2 + 1)
    a_m = np.fft.fft(a)[m % n_sym] / n_sym
    if shape == "nrz":
        x = a_m * np.sinc(m / n_sym) * np.exp(-1j * np.pi * m / n_sym)
    else:
        x = a_m
    if n % 2 == 0:
        x[-1] = 0.0
    y = np.asarray(response(m / (n_sym * symbol_period))) * x
    # scipy's pocketfft handles the PRBS period's prime factor (127) about 1.5 times faster
    # than numpy's, with the same values
    from scipy import fft

    y *= n
    return fft.irfft(y, n=n, axis=-1, overwrite_x=True)
