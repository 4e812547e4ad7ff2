"""Avalanche multiplication: McIntyre gain, breakdown, Miller fit, excess noise, speed.

Functional core of the avalanche photodiode. Positions run across the multiplying
region from the p side (x = 0) to the n side (x = W): electrons drift towards +x, holes
towards -x. Field profiles are sampled on a grid along the last axis, so that a whole
bias sweep (leading axes) is one array expression.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.integrate import cumulative_trapezoid, trapezoid
from scipy.optimize import brentq, least_squares

from .._validate import as_float_array, require_in_range, require_nonnegative, require_positive
from ..errors import DesignError

__all__ = [
    "ionization_integral",
    "multiplication_gain",
    "uniform_gain",
    "breakdown_bias",
    "miller_gain",
    "MillerFit",
    "fit_miller",
    "excess_noise_factor",
    "emmons_factor",
    "avalanche_buildup_time",
    "gain_bandwidth_limit",
    "apd_bandwidth",
    "avalanche_dark_current",
]

INJECTIONS = ("electron", "hole", "mixed")


def _out(x):
    return x if np.ndim(x) else float(x)


def _integrals(x, alpha_n, alpha_p):
    """(I, phi): ionisation integral and the exponent phi(x) = int_0^x (a_n - a_p) dx'."""
    x, a_n, a_p = np.broadcast_arrays(*(np.asarray(v, dtype=float) for v in (x, alpha_n, alpha_p)))
    phi = cumulative_trapezoid(a_n - a_p, x, axis=-1, initial=0.0)
    # int a_n e^-phi = int (a_n - a_p) e^-phi + int a_p e^-phi, and the first part is
    # exactly 1 - e^-phi(W): so 1 - I = e^-phi(W) - int a_p e^-phi dx, free of the
    # cancellation that 1 - (quadrature of I) suffers near breakdown
    one_minus = np.exp(-phi[..., -1]) - trapezoid(a_p * np.exp(-phi), x, axis=-1)
    return 1.0 - one_minus, phi, one_minus


def ionization_integral(x, alpha_n, alpha_p):
    """McIntyre's ionisation integral of electrons injected at x = 0 [-].

    Parameters
    ----------
    x : array_like
        Positions across the multiplying region [m], increasing along the last axis
        (x = 0 at the p side).
    alpha_n, alpha_p : array_like
        Electron and hole ionisation coefficients at those positions [1/m], >= 0;
        broadcast against ``x``.

    Returns
    -------
    float or numpy.ndarray
        I = int_0^W alpha_n exp(-int_0^x (alpha_n - alpha_p) dx') dx; shape of the leading
        axes. Breakdown where I = 1 (the same condition for either injected carrier).

    Notes
    -----
    Trapezoidal quadrature on the given grid (second order in the spacing), evaluated as
    1 - I = exp(-phi(W)) - int_0^W alpha_p exp(-phi) dx (exact for alpha_p = 0).

    References
    ----------
    .. [1] R. J. McIntyre, Multiplication noise in uniform avalanche diodes, IEEE Trans.
       Electron Devices 13, 164 (1966).
    .. [2] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2 (ionisation integral and avalanche breakdown).
    """
    return _out(_integrals(x, alpha_n, alpha_p)[0])


def multiplication_gain(x, alpha_n, alpha_p, injection="electron", weights=None):
    """Avalanche gain M of a field profile for electron, hole or mixed injection [-].

    Parameters
    ----------
    x : array_like
        Positions [m], increasing along the last axis (x = 0 at the p side).
    alpha_n, alpha_p : array_like
        Ionisation coefficients at those positions [1/m], >= 0.
    injection : {"electron", "hole", "mixed"}, optional
        "electron": electrons enter at x = 0; "hole": holes enter at x = W; "mixed":
        pairs generated inside with the density ``weights`` (any positive scale).
    weights : array_like, optional
        Generation profile g(x) for "mixed" [any unit], >= 0, broadcast against ``x``.

    Returns
    -------
    float or numpy.ndarray
        M >= 1 (shape of the leading axes). Raises DesignError at or beyond breakdown.

    Notes
    -----
    M(x0) = exp(-phi(x0)) / (1 - I), phi(x) = int_0^x (alpha_n - alpha_p) dx',
    I = :func:`ionization_integral`; electron injection M(0), hole injection M(W), mixed
    injection the g-weighted mean of M(x0). Uniform field, alpha_n = alpha_p = alpha:
    M = 1/(1 - alpha W); alpha_p = 0: M = exp(alpha_n W) (:func:`uniform_gain`).

    References
    ----------
    .. [1] R. J. McIntyre, Multiplication noise in uniform avalanche diodes, IEEE Trans.
       Electron Devices 13, 164 (1966).
    .. [2] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2 and ch. 13 (avalanche photodiode).
    """
    if injection not in INJECTIONS:
        raise DesignError(f"injection = {injection!r} is invalid; valid: "
                          f"{', '.join(INJECTIONS)}", parameter="injection")
    integral, phi, one_minus = _integrals(x, alpha_n, alpha_p)
    if np.any(one_minus <= 0.0):
        raise DesignError.out_of_range("ionization integral", np.max(integral), "",
                                       "< 1 (at or beyond avalanche breakdown)")
    if injection == "electron":
        num = np.exp(-phi[..., 0])
    elif injection == "hole":
        num = np.exp(-phi[..., -1])
    else:
        if weights is None:
            raise DesignError("weights (generation profile) are required with "
                              "injection='mixed'", parameter="weights")
        g = np.broadcast_to(np.asarray(require_nonnegative("weights", weights, ""), dtype=float),
                            phi.shape)
        xb = np.broadcast_to(np.asarray(x, dtype=float), phi.shape)
        norm = trapezoid(g, xb, axis=-1)
        if np.any(norm <= 0):
            raise DesignError("weights must not be all zero", parameter="weights")
        num = trapezoid(g * np.exp(-phi), xb, axis=-1) / norm
    return _out(num / one_minus)


def uniform_gain(alpha_n, alpha_p, width, injection="electron"):
    """Closed-form gain of a uniform-field multiplying region [-].

    Parameters
    ----------
    alpha_n, alpha_p : float or array_like
        Ionisation coefficients [1/m], >= 0.
    width : float or array_like
        Width of the region W [m], > 0.
    injection : {"electron", "hole"}, optional
        Carrier entering the region.

    Returns
    -------
    float or numpy.ndarray
        Electron injection: M = (1 - k) / (exp(-(1 - k) alpha_n W) - k) with
        k = alpha_p / alpha_n; k = 1: 1/(1 - alpha W); alpha_p = 0: exp(alpha_n W).
        Hole injection swaps the roles of the two carriers. inf at or beyond breakdown.

    References
    ----------
    .. [1] R. J. McIntyre, IEEE Trans. Electron Devices 13, 164 (1966).
    .. [2] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13 (gain of a uniform-field avalanche region).
    """
    a_n = np.asarray(require_nonnegative("alpha_n", alpha_n, "1/m"), dtype=float)
    a_p = np.asarray(require_nonnegative("alpha_p", alpha_p, "1/m"), dtype=float)
    w = np.asarray(require_positive("width", width, "m"), dtype=float)
    if injection == "hole":
        a_n, a_p = a_p, a_n
    elif injection != "electron":
        raise DesignError(f"injection = {injection!r} is invalid; valid: 'electron' or 'hole'",
                          parameter="injection")
    d = (a_n - a_p) * w
    # 1/M = (exp(-d) - k)/(1 - k) = 1 - a_n W * (-expm1(-d))/d ; exact as d -> 0
    with np.errstate(divide="ignore", invalid="ignore"):
        ratio = np.where(np.abs(d) > 1e-12, -np.expm1(-d) / np.where(d == 0, 1.0, d), 1.0 - d / 2)
        inv = 1.0 - a_n * w * ratio
        return _out(np.where(inv > 0, 1.0 / np.where(inv > 0, inv, 1.0), np.inf))


def breakdown_bias(integral_of_bias, bias_low, bias_high):
    """Reverse bias at which an ionisation integral reaches 1 [V] (scipy brentq).

    Parameters
    ----------
    integral_of_bias : callable
        Scalar function v_r [V] -> ionisation integral I(v_r) [-], increasing.
    bias_low, bias_high : float
        Bracket [V] with I(low) < 1 < I(high).

    Returns
    -------
    float
        V_B [V] with |I - 1| below the brentq tolerance (xtol 1e-9 V relative).

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2 (breakdown condition int alpha dx = 1).
    """
    lo, hi = float(bias_low), float(bias_high)
    f_lo, f_hi = integral_of_bias(lo) - 1.0, integral_of_bias(hi) - 1.0
    if not (f_lo < 0.0 < f_hi):
        raise DesignError(f"breakdown not bracketed: ionisation integral {f_lo + 1:.4g} at "
                          f"{lo:.4g} V and {f_hi + 1:.4g} at {hi:.4g} V; valid bracket: "
                          "integral < 1 at the low bias and > 1 at the high bias",
                          parameter="bias_high")
    return float(brentq(lambda v: integral_of_bias(v) - 1.0, lo, hi, xtol=1e-9 * hi, rtol=1e-12))


def miller_gain(v_r, breakdown_voltage, exponent):
    """Empirical gain-voltage law M = 1 / (1 - (V/V_B)^n) [-].

    Parameters
    ----------
    v_r : float or array_like
        Reverse bias [V], 0 <= v_r < breakdown_voltage.
    breakdown_voltage : float or array_like
        V_B [V], > 0.
    exponent : float or array_like
        n [-], > 0 (typically 1 to 6: larger for abrupt, heavily doped junctions).

    Returns
    -------
    float or numpy.ndarray
        M [-].

    References
    ----------
    .. [1] S. L. Miller, Avalanche breakdown in germanium, Phys. Rev. 99, 1234 (1955).
    .. [2] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2 (empirical multiplication factor).
    """
    v = np.asarray(require_nonnegative("v_r", v_r, "V"), dtype=float)
    vb = np.asarray(require_positive("breakdown_voltage", breakdown_voltage, "V"), dtype=float)
    n = np.asarray(require_positive("exponent", exponent, ""), dtype=float)
    vv, vbb = np.broadcast_arrays(v, vb)
    if np.any(vv >= vbb):
        bad = vv >= vbb
        raise DesignError.out_of_range("v_r", vv[bad].flat[0], "V",
                                       f"< breakdown_voltage = {vbb[bad].flat[0]:.4g} V")
    return _out(1.0 / (1.0 - (v / vb) ** n))


@dataclass(frozen=True)
class MillerFit:
    """Result of :func:`fit_miller`.

    Parameters
    ----------
    breakdown_voltage : float
        V_B [V].
    exponent : float
        n [-].
    rms_residual : float
        Root-mean-square relative residual of 1/M, sqrt(mean((1/M_fit - 1/M)^2)) [-].
    """

    breakdown_voltage: float
    exponent: float
    rms_residual: float

    def gain(self, v_r):
        """Fitted gain at reverse bias ``v_r`` (see :func:`miller_gain`).

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V], 0 <= v_r < breakdown_voltage.
        """
        return miller_gain(v_r, self.breakdown_voltage, self.exponent)


def fit_miller(v_r, gain):
    """Fit the Miller law to measured gain-voltage points (scipy least_squares).

    Parameters
    ----------
    v_r : array_like
        Reverse biases [V], > 0, at least 2 points.
    gain : array_like
        Measured gains M [-], > 1, same length.

    Returns
    -------
    MillerFit
        breakdown_voltage [V], exponent [-], rms_residual [-].

    Notes
    -----
    Residuals in 1/M = 1 - (V/V_B)^n, which weights the points near breakdown as
    evenly as the low-gain ones (a fit in M lets the steepest point dominate). Parameters
    are fitted in log V_B and log n (both stay positive); V_B starts just above the
    highest bias.

    References
    ----------
    .. [1] S. L. Miller, Phys. Rev. 99, 1234 (1955).
    """
    v = np.asarray(require_positive("v_r", v_r, "V"), dtype=float).ravel()
    m = np.asarray(require_positive("gain", gain, ""), dtype=float).ravel()
    if v.size != m.size or v.size < 2:
        raise DesignError(f"v_r and gain must have the same length >= 2; got {v.size} and "
                          f"{m.size}", parameter="gain")
    if np.any(m <= 1.0):
        raise DesignError.out_of_range("gain", m[m <= 1.0][0], "", "> 1 (multiplying points)")

    def resid(p):
        vb, n = np.exp(p)
        return 1.0 - (v / vb) ** n - 1.0 / m

    # start: n = 2 and V_B from the highest point, V_B = V / (1 - 1/M)^(1/n)
    i = int(np.argmax(m))
    p0 = np.log([v[i] / (1.0 - 1.0 / m[i]) ** 0.5, 2.0])
    sol = least_squares(resid, p0, method="lm")
    vb, n = np.exp(sol.x)
    return MillerFit(float(vb), float(n), float(np.sqrt(np.mean(sol.fun**2))))


def excess_noise_factor(gain, k):
    """McIntyre excess noise factor F(M) of an avalanche multiplier [-].

    Parameters
    ----------
    gain : float or array_like
        Mean gain M [-], >= 1.
    k : float or array_like
        Ionisation coefficient ratio [-], 0 to 1: alpha_p/alpha_n for electron
        injection, alpha_n/alpha_p for hole injection (the non-injected over the injected
        carrier's coefficient).

    Returns
    -------
    float or numpy.ndarray
        F = k M + (1 - k)(2 - 1/M); F(1) = 1, F = M for k = 1, F -> 2 for k = 0.

    Notes
    -----
    Multiplied shot noise S_i = 2 q I M^2 F(M). Uniform field and constant k (local
    model); in thin multipliers dead space lowers F below this.

    References
    ----------
    .. [1] R. J. McIntyre, Multiplication noise in uniform avalanche diodes, IEEE Trans.
       Electron Devices 13, 164 (1966).
    """
    m = np.asarray(require_in_range("gain", gain, "", 1.0, np.inf), dtype=float)
    kk = np.asarray(require_in_range("k", k, "", 0.0, 1.0), dtype=float)
    return _out(kk * m + (1.0 - kk) * (2.0 - 1.0 / m))


def emmons_factor(k):
    """Emmons' slowly varying factor N(k) of the avalanche build-up time [-].

    Parameters
    ----------
    k : float or array_like
        Ionisation ratio [-], 1e-3 to 1.

    Returns
    -------
    float or numpy.ndarray
        N, interpolated linearly in log10 k between N(1) = 1/3 and N(1e-3) = 2 (the end
        values of Emmons' curve, from memory; between them an approximation).

    References
    ----------
    .. [1] R. B. Emmons, Avalanche-photodiode frequency response, J. Appl. Phys. 38,
       3705 (1967) (from memory).
    """
    kk = np.asarray(require_in_range("k", k, "", 1e-3, 1.0), dtype=float)
    return _out(1.0 / 3.0 + (2.0 - 1.0 / 3.0) * (-np.log10(kk) / 3.0))


def avalanche_buildup_time(gain, k, transit_time, n_factor=None):
    """Avalanche build-up time tau_av = M N k tau [s].

    Parameters
    ----------
    gain : float or array_like
        DC gain M [-], >= 1.
    k : float or array_like
        Ionisation ratio [-], 1e-3 to 1.
    transit_time : float or array_like
        Carrier transit time of the multiplying region tau = W / v_sat [s], > 0.
    n_factor : float or array_like, optional
        Emmons' N [-], > 0 (default :func:`emmons_factor`).

    Returns
    -------
    float or numpy.ndarray
        tau_av [s]; M(w) = M / (1 + j w tau_av) for M > 1/k.

    References
    ----------
    .. [1] R. B. Emmons, J. Appl. Phys. 38, 3705 (1967) (from memory).
    """
    m = np.asarray(require_in_range("gain", gain, "", 1.0, np.inf), dtype=float)
    tau = np.asarray(require_positive("transit_time", transit_time, "s"), dtype=float)
    n = emmons_factor(k) if n_factor is None else require_positive("n_factor", n_factor, "")
    return _out(m * np.asarray(n) * np.asarray(k) * tau)


def gain_bandwidth_limit(gain, k, transit_time, n_factor=None):
    """Gain-bandwidth-limited 3-dB bandwidth of the avalanche [Hz].

    Parameters
    ----------
    gain, k, transit_time, n_factor
        As in :func:`avalanche_buildup_time`.

    Returns
    -------
    float or numpy.ndarray
        f_av = 1 / (2 pi M N k tau); the product M f_av = 1/(2 pi N k tau) is the
        gain-bandwidth product. Emmons' form for M > 1/k; at lower gain the transit
        time limits (combine with :func:`apd_bandwidth`).

    References
    ----------
    .. [1] R. B. Emmons, Avalanche-photodiode frequency response, J. Appl. Phys. 38,
       3705 (1967) (from memory).
    """
    return _out(1.0 / (2.0 * np.pi * np.asarray(avalanche_buildup_time(gain, k, transit_time,
                                                                       n_factor))))


def apd_bandwidth(transit_bandwidth, rc_bandwidth, avalanche_bandwidth):
    """Intrinsic -3 dB bandwidth of an APD from its transit, RC and avalanche limits [Hz].

    Parameters
    ----------
    transit_bandwidth, rc_bandwidth, avalanche_bandwidth : float or array_like
        The three limits [Hz], > 0 (inf for a limit that does not apply).

    Returns
    -------
    float or numpy.ndarray
        f = (f_t^-2 + f_RC^-2 + f_av^-2)^-1/2, the root-sum-square of the time constants
        (common practice; exact for three first-order Gaussian-like stages only).
    """
    fs = []
    for name, f in (("transit_bandwidth", transit_bandwidth), ("rc_bandwidth", rc_bandwidth),
                    ("avalanche_bandwidth", avalanche_bandwidth)):
        arr = np.asarray(as_float_array(name, f, "Hz"), dtype=float)
        if np.any(~(arr > 0)):  # also NaN; +inf (no limit) is allowed
            raise DesignError.out_of_range(name, arr[~(arr > 0)].flat[0] if arr.ndim else arr,
                                           "Hz", "> 0 (inf allowed)")
        fs.append(arr)
    return _out(1.0 / np.sqrt(sum(1.0 / f**2 for f in fs)))


def avalanche_dark_current(gain, surface_current, bulk_current):
    """APD dark current split into unmultiplied surface and multiplied bulk parts [A].

    Parameters
    ----------
    gain : float or array_like
        Gain M [-], >= 1.
    surface_current : float or array_like
        Unmultiplied (surface leakage) dark current I_ds [A], >= 0.
    bulk_current : float or array_like
        Primary bulk dark current that passes the multiplier, I_dm [A], >= 0.

    Returns
    -------
    float or numpy.ndarray
        I_dark = I_ds + M I_dm. Its noise: 2 q I_ds + 2 q I_dm M^2 F(M).

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13 (avalanche photodiode dark current and noise) (from memory).
    """
    m = np.asarray(require_in_range("gain", gain, "", 1.0, np.inf), dtype=float)
    i_s = np.asarray(require_nonnegative("surface_current", surface_current, "A"), dtype=float)
    i_b = np.asarray(require_nonnegative("bulk_current", bulk_current, "A"), dtype=float)
    return _out(i_s + m * i_b)
