"""Receiver sensitivity from the noise: NEP, minimum detectable power, SNR, dynamic range, BER.

Every function is a pure, vectorised function of numpy arrays (all arguments broadcast).
Currents are photocurrents at the input of the transimpedance stage, noise values are
referred to that input (see :class:`photorx.circuit.noise_spectrum.NoiseSpectrum`).
"""

from __future__ import annotations

import numpy as np

from .._validate import require_finite, require_in_range, require_nonnegative, require_positive
from ..constants import q as _Q
from ..errors import DesignError
from ..circuit.noise import noise_equivalent_power
from ..units import watt_to_dbm

__all__ = [
    "analog_snr",
    "ber_from_q",
    "dynamic_range",
    "maximum_input_current",
    "minimum_detectable_power",
    "noise_equivalent_power",
    "q_factor",
    "q_from_ber",
    "required_average_power",
    "sensitivity_dbm",
]


def minimum_detectable_power(input_noise_rms, responsivity):
    """Optical power giving SNR = 1 in the noise bandwidth: P_min = i_rms / R [W].

    Parameters
    ----------
    input_noise_rms : array_like
        Input-referred rms noise current integrated over the receiver band [A], >= 0
        (equal to NEP x sqrt(ENBW) for a white input noise).
    responsivity : array_like
        Responsivity [A/W], > 0.

    References
    ----------
    .. [1] P. C. D. Hobbs, *Building Electro-Optical Systems*, 2nd ed., Wiley, 2009, sec. 3.4.
    """
    i_n = require_nonnegative("input_noise_rms", input_noise_rms, "A")
    r = require_positive("responsivity", responsivity, "A/W")
    return i_n / r


def analog_snr(
    optical_power,
    responsivity,
    circuit_noise_rms,
    noise_bandwidth,
    modulation_depth=1.0,
    dark_current=0.0,
    noise_factor=1.0,
):
    """Electrical signal-to-noise power ratio of an analog (sinusoidally modulated) receiver.

    Parameters
    ----------
    optical_power : array_like
        Average optical power at the photodiode [W], >= 0.
    responsivity : array_like
        Responsivity [A/W], > 0.
    circuit_noise_rms : array_like
        Input-referred rms noise of everything except the shot noise of the signal and dark
        current, over the noise bandwidth [A], >= 0.
    noise_bandwidth : array_like
        Equivalent noise bandwidth of the receiver [Hz], > 0.
    modulation_depth : array_like
        Optical modulation index m, 0 < m <= 1: P(t) = P (1 + m cos w t).
    dark_current : array_like
        Dark current [A], >= 0 (adds its shot noise); for an avalanche photodiode its
        equivalent full-shot current I_ds + M^2 F I_dm.
    noise_factor : array_like, optional
        Shot-noise factor of the signal current [-], >= 1: M F(M) for an avalanche
        photodiode whose multiplied responsivity is ``responsivity`` (default 1, a PIN).

    Returns
    -------
    numpy.ndarray
        SNR as a power ratio (dimensionless; 10 log10 for dB).

    Notes
    -----
    SNR = (m R P)^2 / 2 / (sigma_c^2 + 2 q (R P nf + I_d) B), nf = M F. Shot-noise limit:
    m^2 R P / (4 q B nf); circuit-noise limit: (m R P)^2 / (2 sigma_c^2).

    References
    ----------
    .. [1] G. P. Agrawal, *Fiber-Optic Communication Systems*, 4th ed., Wiley, 2010,
       sec. 4.4 (SNR of a p-i-n receiver).
    .. [2] B. E. A. Saleh and M. C. Teich, *Fundamentals of Photonics*, 2nd ed., Wiley,
       2007, sec. 18.5.
    """
    p = require_nonnegative("optical_power", optical_power, "W")
    r = require_positive("responsivity", responsivity, "A/W")
    s_c = require_nonnegative("circuit_noise_rms", circuit_noise_rms, "A")
    b = require_positive("noise_bandwidth", noise_bandwidth, "Hz")
    m = _require_modulation(modulation_depth)
    i_d = require_nonnegative("dark_current", dark_current, "A")
    nf = require_in_range("noise_factor", noise_factor, "", 1.0, np.inf)
    i_ph = r * np.asarray(p)
    noise = s_c**2 + 2.0 * _Q * (i_ph * nf + i_d) * b
    if np.any(np.asarray(noise) == 0):
        raise DesignError.out_of_range(
            "circuit_noise_rms", 0.0, "A", "> 0 when there is no photocurrent (SNR undefined)"
        )
    return (m * i_ph) ** 2 / 2.0 / noise


def _require_modulation(m):
    m = require_finite("modulation_depth", m, "")
    bad = (np.asarray(m) <= 0) | (np.asarray(m) > 1)
    if np.any(bad):
        raise DesignError.out_of_range(
            "modulation_depth", np.asarray(m)[bad].ravel()[0] if np.ndim(m) else m, "", "(0, 1]"
        )
    return m


def maximum_input_current(output_swing, transimpedance):
    """Largest DC photocurrent before the output clips: swing / |Zt(0)| [A].

    Parameters
    ----------
    output_swing : array_like
        Output swing from the quiescent point [V], > 0.
    transimpedance : array_like
        Mid-band (DC) transimpedance magnitude [ohm], > 0.
    """
    v = require_positive("output_swing", output_swing, "V")
    z = require_positive("transimpedance", transimpedance, "ohm")
    return v / z


def dynamic_range(output_swing, transimpedance, input_noise_rms):
    """Ratio of the largest input current (output at its swing limit) to the rms noise floor.

    Parameters
    ----------
    output_swing : array_like
        Output swing [V], > 0.
    transimpedance : array_like
        Mid-band transimpedance magnitude [ohm], > 0.
    input_noise_rms : array_like
        Input-referred rms noise current [A], > 0.

    Returns
    -------
    numpy.ndarray
        I_max / i_rms (dimensionless). Because photocurrent is proportional to optical
        power this is also the optical power ratio: 10 log10 of it is the optical dynamic
        range in dB, 20 log10 the electrical one.

    Notes
    -----
    DR = (V_swing / |Zt(0)|) / i_rms = V_swing / v_rms,out (common practice).
    """
    i_max = maximum_input_current(output_swing, transimpedance)
    i_n = require_positive("input_noise_rms", input_noise_rms, "A")
    return i_max / i_n


def ber_from_q(q_value):
    """Bit-error ratio of a binary receiver with Gaussian noise: BER = erfc(Q/sqrt 2) / 2.

    Parameters
    ----------
    q_value : array_like
        Q factor (dimensionless), finite; Q = 6 gives 1e-9, Q = 7.03 gives 1e-12.

    References
    ----------
    .. [1] S. D. Personick, "Receiver design for digital fiber optic communication systems",
       Bell Syst. Tech. J. 52 (1973) 843-886.
    .. [2] G. P. Agrawal, *Fiber-Optic Communication Systems*, 4th ed., Wiley, 2010, sec. 4.5.
    """
    q_v = require_finite("q_value", q_value, "")
    from scipy import special  # lazy: scipy.special costs ~0.15 s to import

    return 0.5 * special.erfc(np.asarray(q_v) / np.sqrt(2.0))


def q_from_ber(ber):
    """Q factor for a bit-error ratio: Q = sqrt(2) erfcinv(2 BER); inverse of :func:`ber_from_q`.

    Parameters
    ----------
    ber : array_like
        Bit-error ratio, 0 < BER < 0.5.
    """
    b = require_finite("ber", ber, "")
    bad = (np.asarray(b) <= 0) | (np.asarray(b) >= 0.5)
    if np.any(bad):
        raise DesignError.out_of_range(
            "ber", np.asarray(b)[bad].ravel()[0] if np.ndim(b) else b, "", "(0, 0.5)"
        )
    from scipy import special

    return np.sqrt(2.0) * special.erfcinv(2.0 * np.asarray(b))


def q_factor(i_one, i_zero, sigma_one, sigma_zero):
    """Q = (I1 - I0) / (sigma1 + sigma0) for one and zero levels [A] and their rms noise [A].

    The levels must be finite and sigma1 + sigma0 > 0 (otherwise a DesignError).

    Parameters
    ----------
    i_one : array_like
        Mean photocurrent of the one level [A], finite.
    i_zero : array_like
        Mean photocurrent of the zero level [A], finite.
    sigma_one : array_like
        rms noise current on the one level [A], >= 0.
    sigma_zero : array_like
        rms noise current on the zero level [A], >= 0; sigma_one + sigma_zero > 0.

    Returns
    -------
    numpy.ndarray
        Q [-], broadcast over all arguments.

    References
    ----------
    .. [1] G. P. Agrawal, *Fiber-Optic Communication Systems*, 4th ed., Wiley, 2010, sec. 4.5.
    """
    i1 = require_finite("i_one", i_one, "A")
    i0 = require_finite("i_zero", i_zero, "A")
    s1 = require_nonnegative("sigma_one", sigma_one, "A")
    s0 = require_nonnegative("sigma_zero", sigma_zero, "A")
    total = np.asarray(s1, dtype=float) + np.asarray(s0, dtype=float)
    if np.any(total <= 0):  # noiseless levels: Q is undefined, not inf or NaN
        raise DesignError.out_of_range("sigma_one", 0.0, "A",
                                       "> 0 for sigma_one + sigma_zero (Q undefined without noise)")
    return (np.asarray(i1, dtype=float) - np.asarray(i0, dtype=float)) / total


def _levels(power, r, ratio):
    """Optical power of the one and zero levels for an average power and extinction ratio."""
    with np.errstate(divide="ignore", invalid="ignore"):
        zero_frac = np.where(np.isinf(ratio), 0.0, 2.0 / (ratio + 1.0))
    return power * (2.0 - zero_frac), power * zero_frac


def required_average_power(
    q_value,
    responsivity,
    circuit_noise_rms,
    noise_bandwidth,
    extinction_ratio=np.inf,
    dark_current=0.0,
    noise_factor=1.0,
):
    """Average optical power needed for a Q factor, with signal-dependent shot noise [W].

    Parameters
    ----------
    q_value : array_like
        Target Q factor, > 0 (use :func:`q_from_ber` for a target BER).
    responsivity : array_like
        Responsivity [A/W], > 0.
    circuit_noise_rms : array_like
        Input-referred rms noise of the circuit (thermal, amplifier), without shot noise of
        the signal and dark current, in the receiver band [A], >= 0.
    noise_bandwidth : array_like
        Noise bandwidth for the shot noise [Hz], > 0.
    extinction_ratio : array_like
        r = P1 / P0, > 1; ``inf`` for a zero level without light.
    dark_current : array_like
        Dark current [A], >= 0; for an avalanche photodiode its equivalent full-shot
        current I_ds + M^2 F I_dm.
    noise_factor : array_like, optional
        Shot-noise factor of the signal current [-], >= 1: M F(M) for an avalanche
        photodiode whose multiplied responsivity is ``responsivity`` (default 1, a PIN).

    Returns
    -------
    numpy.ndarray
        Average optical power P = (P1 + P0)/2 [W].

    Notes
    -----
    P1 = 2 P r/(r+1), P0 = 2 P/(r+1); I_k = R P_k + I_d;
    sigma_k^2 = sigma_c^2 + 2 q (nf R P_k + I_d) B; Q = (I1 - I0)/(sigma1 + sigma0).
    With nf = M F this is Personick's APD receiver (signal M R0 P, noise
    2 q M^2 F R0 P).
    Q grows monotonically with P, and the equation is solved by bisection in log P
    (relative precision 1e-12). For r = inf and I_d = 0 the closed form is
    P = (Q/R)(q B Q nf + sigma_c).

    References
    ----------
    .. [1] S. D. Personick, "Receiver design for digital fiber optic communication systems",
       Bell Syst. Tech. J. 52 (1973) 843-886.
    .. [2] G. P. Agrawal, *Fiber-Optic Communication Systems*, 4th ed., Wiley, 2010,
       sec. 4.5 (receiver sensitivity) and 4.6 (extinction-ratio penalty).
    """
    q_v = require_positive("q_value", q_value, "")
    r = require_positive("responsivity", responsivity, "A/W")
    s_c = require_nonnegative("circuit_noise_rms", circuit_noise_rms, "A")
    b = require_positive("noise_bandwidth", noise_bandwidth, "Hz")
    i_d = require_nonnegative("dark_current", dark_current, "A")
    nf = require_in_range("noise_factor", noise_factor, "", 1.0, np.inf)
    ratio = np.asarray(extinction_ratio, dtype=float)
    if np.any(np.isnan(ratio)) or np.any(ratio <= 1):
        bad = ratio[~(ratio > 1)].ravel()[0] if ratio.ndim else float(ratio)
        raise DesignError.out_of_range("extinction_ratio", bad, "", "> 1 (inf allowed)")
    q_v, r, s_c, b, i_d, ratio, nf = np.broadcast_arrays(
        *(np.asarray(x, dtype=float) for x in (q_v, r, s_c, b, i_d, ratio, nf))
    )

    def q_of(power):
        p1, p0 = _levels(power, r, ratio)
        s1, s0 = nf * r * p1 + i_d, nf * r * p0 + i_d  # equivalent full-shot currents
        return r * (p1 - p0) / (np.sqrt(s_c**2 + 2 * _Q * s1 * b) + np.sqrt(s_c**2 + 2 * _Q * s0 * b))

    # bracket: Q rises at least as sqrt(P) for large P, so doubling decades always brackets
    lo = np.full(q_v.shape, 1e-30)
    hi = np.full(q_v.shape, 1e-20)
    for _ in range(100):
        short = q_of(hi) < q_v
        if not np.any(short):
            break
        hi = np.where(short, hi * 1e3, hi)
    ln_lo, ln_hi = np.log(lo), np.log(hi)
    for _ in range(200):
        mid = 0.5 * (ln_lo + ln_hi)
        below = q_of(np.exp(mid)) < q_v
        ln_lo = np.where(below, mid, ln_lo)
        ln_hi = np.where(below, ln_hi, mid)
        if np.all(ln_hi - ln_lo < 1e-13):
            break
    out = np.exp(0.5 * (ln_lo + ln_hi))
    return out if out.ndim else float(out)


def sensitivity_dbm(
    q_value,
    responsivity,
    circuit_noise_rms,
    noise_bandwidth,
    extinction_ratio=np.inf,
    dark_current=0.0,
):
    """Receiver sensitivity: :func:`required_average_power` in dBm (10 log10(P / 1 mW)).

    Parameters
    ----------
    q_value : array_like
        Target Q factor, > 0 (use :func:`q_from_ber` for a target BER).
    responsivity : array_like
        Responsivity [A/W], > 0.
    circuit_noise_rms : array_like
        Input-referred rms noise of the circuit (thermal, amplifier), without shot noise of
        the signal and dark current, in the receiver band [A], >= 0.
    noise_bandwidth : array_like
        Noise bandwidth for the shot noise [Hz], > 0.
    extinction_ratio : array_like
        r = P1 / P0 [-], > 1; ``inf`` for a zero level without light.
    dark_current : array_like
        Dark current [A], >= 0.

    Returns
    -------
    float or numpy.ndarray
        Average optical power needed for ``q_value`` [dBm].
    """
    return watt_to_dbm(
        required_average_power(
            q_value,
            responsivity,
            circuit_noise_rms,
            noise_bandwidth,
            extinction_ratio,
            dark_current,
        )
    )
