"""Step-response waveform of the closed-loop transimpedance stage.

The closed loop is Zt(s) = A0 N_A(s) / Den(s) (see
:func:`photorx.circuit.loop_poles.closed_loop_polynomial`; N_A = 1, all-pole, unless the
amplifier has zeros), so its response to a photocurrent step is a sum of exponentials with
the residues of N_A(s)/(s Den(s)):

    y(t) / y(inf) = 1 + sum_k N_A(p_k) exp(p_k t) / (p_k Den'(p_k) / Den(0))

evaluated exactly at any times (no time-stepping). The figures of
:func:`~photorx.circuit.metrics.tia_figures` (rise time, overshoot, settling) come from the
same expression; this module returns the waveform for plots.
"""

from __future__ import annotations

import numpy as np

from .loop_poles import (
    _deriv,
    _horner,
    _normalised_poles,
    closed_loop_numerator,
    closed_loop_polynomial,
)

__all__ = ["step_response"]


def step_response(t, gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros=()):
    """Normalised step response v_out(t)/v_out(inf) of one transimpedance design.

    Parameters
    ----------
    t : array_like
        Times after the photocurrent step [s], >= 0.
    gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros
        The design (scalars), as in :func:`photorx.circuit.tia.transimpedance`.

    Returns
    -------
    numpy.ndarray
        Output relative to its final value (dimensionless), shape of ``t``; 0 at t = 0
        for a strictly proper response. Growing without bound for an unstable loop.

    Notes
    -----
    Partial fractions of N_A(s)/(s Den(s)) with simple poles (N_A: the amplifier's zeros); coincident poles (critical
    damping) are split by 1e-5 relative along the real axis, which changes the waveform
    by about 1e-10. Den is normalised to Den(0) = 1 and time to the natural scale w0.

    References
    ----------
    .. [1] K. Ogata, *Modern Control Engineering*, 5th ed., Prentice Hall, 2010, ch. 5
       (transient response from the partial-fraction expansion).
    """
    den = closed_loop_polynomial(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros=zeros)
    den = np.asarray(den, dtype=float).reshape(-1, np.shape(den)[-1])
    if den.shape[0] != 1:
        raise ValueError("step_response takes one design; use tia_figures for many")
    x, w0, d = _normalised_poles(den)
    x, w0, d = x[0], float(w0[0]), d[0]
    x = x[~np.isnan(x)].copy()
    for i in range(x.size):  # split coincident poles (simple residues need distinct poles)
        for j in range(i + 1, x.size):
            if abs(x[i] - x[j]) < 1e-6 * abs(x[i]):
                mid, delta = 0.5 * (x[i] + x[j]), 1e-5 * abs(x[i])
                x[i], x[j] = mid + delta, mid - delta
    residues = 1.0 / (x * _horner(_deriv(d[None, :]), x[None, :])[0])  # 1/(x_k D'(x_k)), D(0) = 1
    if len(zeros):  # times N_A(x_k) on the same normalised scale
        num = np.asarray(closed_loop_numerator(gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin,
                                               zeros=zeros), dtype=float).reshape(1, -1)
        num = num * w0 ** np.arange(num.shape[-1])
        residues = residues * _horner(num, x[None, :])[0]
    tau = np.asarray(t, dtype=float) * w0
    y = 1.0 + np.real(np.exp(np.multiply.outer(tau, x)) @ residues)
    return y
