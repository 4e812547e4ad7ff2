"""The optimum avalanche gain of a receiver and the bias that sets it.

Past unity, gain lifts the signal above the amplifier's noise, but the multiplied shot
noise grows as M^2 F(M), faster than the signal power's M^2; so SNR (and the BER
sensitivity) has an optimum gain. :func:`optimum_gain` finds it numerically with the whole
receiver model (k_eff, dark current, bandwidth all following the bias), and compares it
with the classical closed forms of the thermal-noise-limited receiver
(:func:`optimum_gain_closed_form`). :func:`gain_axis` turns gains into biases, which is
how ``sweep(rx, gain=[...])`` samples the steep part of M(V) near breakdown.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np

from .._validate import require_in_range, require_nonnegative, require_positive
from ..constants import q as _Q
from ..errors import DesignError
from .sensitivity import q_from_ber

__all__ = ["OptimumGain", "optimum_gain", "optimum_gain_closed_form", "gain_axis"]

OBJECTIVES = ("snr", "sensitivity")
_MAX_GAIN = 1000.0  # top of the default search: beyond it a real device's gain is unstable


def _apd(receiver):
    apd = receiver.photodiode
    if not callable(getattr(apd, "bias_for_gain", None)):
        raise DesignError(f"photodiode = {type(apd).__name__} has no avalanche gain; valid: an "
                          "AvalanchePhotodiode", parameter="photodiode")
    return apd


def gain_axis(receiver, gain, temperature=None):
    """Reverse bias [V] that gives each avalanche gain of the receiver's photodiode.

    Parameters
    ----------
    receiver : Receiver
        A receiver on an :class:`~photorx.device.apd.AvalanchePhotodiode`.
    gain : float or array_like
        Gains M [-], > 1 and below the gain at 0.99999 V_B.
    temperature : float or array_like, optional
        Temperature of each point [K], 50 to 600 (broadcasts against ``gain``); default the
        receiver's (which must then be a single number).

    Returns
    -------
    float or numpy.ndarray
        v_r [V] with M(v_r, T) = gain (see
        :meth:`~photorx.device.apd.AvalanchePhotodiode.bias_for_gain`).
    """
    apd = _apd(receiver)
    t = receiver.temperature if temperature is None else temperature
    m, t = np.broadcast_arrays(np.asarray(gain, dtype=float), np.asarray(t, dtype=float))
    out = np.empty(m.shape)
    for t_u in np.unique(t):
        sel = t == t_u
        out[sel] = np.atleast_1d(apd.at_temperature(float(t_u)).bias_for_gain(m[sel]))
    return out if out.ndim else float(out)


def optimum_gain_closed_form(circuit_noise_rms, primary_current, noise_bandwidth, k,
                             objective="snr", q_value=7.034):
    """Optimum avalanche gain of a thermal-noise-limited receiver, McIntyre F(M) [-].

    Parameters
    ----------
    circuit_noise_rms : array_like
        Input-referred rms noise that the gain does not multiply (amplifier, resistors,
        shot noise of the surface dark current) [A], > 0.
    primary_current : array_like
        Primary (unity-gain) current that is multiplied [A], > 0: R P + I_dm for
        ``"snr"``; ignored for ``"sensitivity"`` (the one level follows from Q).
    noise_bandwidth : array_like
        Noise bandwidth [Hz], > 0.
    k : array_like
        Ionisation ratio [-], 0 < k <= 1.
    objective : {"snr", "sensitivity"}
        Analog SNR or the average power for a Q factor (NRZ, zero level dark).
    q_value : float, optional
        Q factor of the ``"sensitivity"`` objective [-], > 0 (default 7.034: BER 1e-12).

    Returns
    -------
    numpy.ndarray or float
        M_opt [-].

    Notes
    -----
    With F = k M + (1 - k)(2 - 1/M), sigma the unmultiplied noise and I the primary
    current:

    - SNR = M^2 I^2 / (sigma^2 + 2 q B I M^2 F) is largest where
      k M^3 + (1 - k) M = 2 sigma^2 / (2 q B I) (solved as a cubic; for large M,
      M_opt ~ (sigma^2 / (q B I k))^(1/3)) [1]_.
    - P = (Q / R)(q B Q F(M) + sigma / M) is smallest at
      M_opt = sqrt((sigma / (q B Q) + k - 1) / k) [1]_ [2]_.

    References
    ----------
    .. [1] G. P. Agrawal, *Fiber-Optic Communication Systems*, 4th ed., Wiley, 2010,
       sec. 4.4.4 (optimum APD gain for SNR) and sec. 4.5.2 (APD receiver sensitivity)
       (equation numbers from memory).
    .. [2] R. G. Smith and S. D. Personick, Receiver design for optical fiber communication
       systems, in *Semiconductor Devices for Optical Communication*, Springer, 1980
       (from memory).
    """
    if objective not in OBJECTIVES:
        raise DesignError(f"objective = {objective!r} is invalid; valid: 'snr' or 'sensitivity'",
                          parameter="objective")
    sigma = np.asarray(require_positive("circuit_noise_rms", circuit_noise_rms, "A"), dtype=float)
    b = np.asarray(require_positive("noise_bandwidth", noise_bandwidth, "Hz"), dtype=float)
    kk = np.asarray(require_in_range("k", k, "", 0.0, 1.0, low_inclusive=False), dtype=float)
    if objective == "sensitivity":
        qv = float(require_positive("q_value", q_value, ""))
        m2 = (sigma / (_Q * b * qv) + kk - 1.0) / kk
        out = np.sqrt(np.maximum(m2, 1.0))
    else:
        i = np.asarray(require_positive("primary_current", primary_current, "A"), dtype=float)
        rhs = sigma**2 / (_Q * b * i)
        # k M^3 + (1-k) M - rhs = 0 has one positive root (monotonic left side): Cardano
        p_, q_ = (1.0 - kk) / kk, -rhs / kk
        disc = np.sqrt((q_ / 2.0) ** 2 + (p_ / 3.0) ** 3)
        out = np.maximum(np.cbrt(-q_ / 2.0 + disc) + np.cbrt(-q_ / 2.0 - disc), 1.0)
    return out if out.ndim else float(out)


@dataclass(frozen=True)
class OptimumGain:
    """The optimum avalanche gain of a receiver, numeric and closed form.

    Parameters
    ----------
    objective : str
        ``"snr"`` (largest analog SNR) or ``"sensitivity"`` (lowest average power for the
        target BER).
    gain : float
        Numeric optimum gain M_opt [-].
    bias : float
        Reverse bias that gives it [V].
    value : float
        The objective there: SNR [-] (power ratio) or sensitivity [W].
    k_effective : float
        k_eff at the optimum [-].
    closed_form_gain : float
        Thermal-noise-limited closed form (:func:`optimum_gain_closed_form`) with the
        receiver's unmultiplied noise, bandwidth and k_eff at the numeric optimum [-].
    closed_form_value : float
        The objective evaluated with the full model at the closed-form gain.
    penalty_db : float
        How much worse the closed-form gain is than the numeric optimum [dB], >= 0.
    scan : pandas.DataFrame
        The gain scan: ``gain``, ``reverse_bias`` [V], ``excess_noise_factor``,
        ``k_effective``, ``snr_db`` [dB] and ``sensitivity_dbm`` [dBm] (digital designs).
    """

    objective: str
    gain: float
    bias: float
    value: float
    k_effective: float
    closed_form_gain: float
    closed_form_value: float
    penalty_db: float
    scan: object = dataclasses.field(repr=False, default=None)

    def summary(self) -> str:
        """One line: the numeric and closed-form optimum and their difference."""
        what = "SNR" if self.objective == "snr" else "sensitivity"
        return (f"optimum gain {self.gain:.4g} at {self.bias:.4g} V ({what}); closed form "
                f"{self.closed_form_gain:.4g} (k = {self.k_effective:.3g}), "
                f"{self.penalty_db:.3g} dB worse")


def _figure(result, objective):
    return np.asarray(result.snr if objective == "snr" else result.sensitivity, dtype=float)


def _penalty_db(objective, best, other):
    ratio = best / other if objective == "snr" else other / best
    return float(max(10.0 * np.log10(ratio), 0.0))


def optimum_gain(receiver, objective="snr", gain_range=None, n_points=25):
    """Numeric optimum avalanche gain and its bias for SNR or BER sensitivity.

    Parameters
    ----------
    receiver : Receiver
        A scalar receiver on an :class:`~photorx.device.apd.AvalanchePhotodiode`
        (``bit_rate`` set for ``"sensitivity"``).
    objective : {"snr", "sensitivity"}
        Largest analog SNR at the optical power, or lowest average power for the target
        BER.
    gain_range : tuple of float, optional
        (M_low, M_high) of the search [-], 1 < M_low < M_high (default 1.05 to 1000 or
        half the gain at 0.99999 V_B, whichever is lower).
    n_points : int, optional
        Gains of the log-spaced scan, 5 to 1001 (default 25); zooming scans then refine
        the best one.

    Returns
    -------
    OptimumGain

    Notes
    -----
    The scan is one vectorised evaluation at the biases of :func:`gain_axis`; three
    zooming scans of 9 gains between the best point's neighbours and the vertex of a
    parabola in log M refine it (about 1e-4 in log M: the objective is within about 1e-8
    of its maximum). The closed form assumes a constant k,
    white noise in a fixed band and no multiplied dark current; the full model differs
    where k_eff changes with bias, the surface and bulk dark currents matter, or the
    gain-bandwidth limit narrows the band.

    References
    ----------
    .. [1] S. D. Personick, Receiver design for digital fiber optic communication
       systems, Bell Syst. Tech. J. 52, 843 (1973).
    .. [2] G. P. Agrawal, *Fiber-Optic Communication Systems*, 4th ed., Wiley, 2010,
       sec. 4.4-4.5.
    """
    import pandas as pd

    if objective not in OBJECTIVES:
        raise DesignError(f"objective = {objective!r} is invalid; valid: 'snr' or 'sensitivity'",
                          parameter="objective")
    apd = _apd(receiver)
    if objective == "sensitivity" and receiver.bit_rate is None:
        raise DesignError("bit_rate = None is invalid for objective 'sensitivity'; valid: a bit "
                          "rate > 0 [bit/s]", parameter="bit_rate")
    if objective == "snr" and not float(np.max(receiver.optical_power)) > 0:
        raise DesignError("optical_power = 0 W is invalid for objective 'snr'; valid: > 0 W",
                          parameter="optical_power")
    if any(np.ndim(getattr(receiver, f)) for f in ("temperature", "optical_power", "wavelength")):
        raise DesignError("optimum_gain needs a scalar receiver (one design point)",
                          parameter="receiver")
    n = int(require_in_range("n_points", n_points, "", 5, 1001))
    at_t = apd.at_temperature(float(receiver.temperature))
    if gain_range is None:
        vb = at_t.breakdown_voltage()
        lo, hi = 1.05, min(_MAX_GAIN, 0.5 * float(at_t.gain(0.99999 * vb)))
    else:
        lo, hi = (float(require_in_range("gain_range", g, "", 1.0, np.inf, low_inclusive=False))
                  for g in gain_range)
    if not hi > lo:
        raise DesignError.out_of_range("gain_range", hi, "", f"(M_low, M_high) with M_high > "
                                       f"M_low = {lo:.4g}")
    gains = np.geomspace(lo, hi, n)
    biases = np.asarray(gain_axis(receiver, gains))
    results = dataclasses.replace(receiver, reverse_bias=biases).evaluate()
    values = _figure(results, objective)
    sign = -1.0 if objective == "snr" else 1.0
    m_opt, value = _refine(receiver, objective, sign, gains, values)
    bias = float(gain_axis(receiver, m_opt))
    r = dataclasses.replace(receiver, reverse_bias=bias).evaluate()
    k = float(r.k_effective)
    # unmultiplied noise: the circuit's plus the surface dark current's shot noise
    parts = at_t.receiver_view().multiplication(bias)
    i_ds = float(parts["surface_dark_current"])
    enbw = float(r.noise_bandwidth)
    sigma = float(np.sqrt(float(r.circuit_noise_rms) ** 2 + 2 * _Q * i_ds * enbw))
    primary = float(r.photocurrent) / float(r.gain) + float(parts["bulk_dark_current"])
    m_cf = optimum_gain_closed_form(sigma, primary, enbw, max(k, 1e-6), objective,
                                    q_value=float(q_from_ber(receiver.target_ber)))
    m_cf_in = float(np.clip(m_cf, lo, hi))
    cf_value = float(_figure(dataclasses.replace(
        receiver, reverse_bias=float(gain_axis(receiver, m_cf_in))).evaluate(), objective))
    scan = pd.DataFrame({"gain": gains, "reverse_bias": biases,
                         "excess_noise_factor": np.asarray(results.excess_noise_factor, float),
                         "k_effective": np.asarray(results.k_effective, float),
                         "snr_db": 10 * np.log10(np.maximum(np.asarray(results.snr, float),
                                                            1e-300))})
    if receiver.bit_rate is not None:
        scan["sensitivity_dbm"] = np.asarray(results.sensitivity_dbm, dtype=float)
    scan.attrs["units"] = {"gain": "", "reverse_bias": "V", "excess_noise_factor": "",
                           "k_effective": "", "snr_db": "dB", "sensitivity_dbm": "dBm"}
    return OptimumGain(objective=objective, gain=m_opt, bias=bias, value=value, k_effective=k,
                       closed_form_gain=float(m_cf), closed_form_value=cf_value,
                       penalty_db=_penalty_db(objective, value, cf_value), scan=scan)


def _refine(receiver, objective, sign, gains, values, rounds=3, n=9):
    """Zoom in on the best scan point: ``rounds`` vectorised scans of ``n`` gains between
    the best point's neighbours, then the vertex of a parabola in log M through the best
    three. Returns (gain, objective value) of the best point evaluated."""
    log_m, cost = np.log(gains), sign * np.asarray(values, dtype=float)
    for _ in range(rounds):
        i = int(np.argmin(cost))
        lo, hi = log_m[max(i - 1, 0)], log_m[min(i + 1, log_m.size - 1)]
        log_m = np.linspace(lo, hi, n)
        cost = sign * _figure(dataclasses.replace(
            receiver, reverse_bias=np.asarray(gain_axis(receiver, np.exp(log_m)))).evaluate(),
            objective)
    i = int(np.clip(np.argmin(cost), 1, log_m.size - 2))
    x, y = log_m[i - 1:i + 2], cost[i - 1:i + 2]
    curvature = (y[2] - 2 * y[1] + y[0]) / (x[1] - x[0]) ** 2
    best_x, best_cost = log_m[int(np.argmin(cost))], float(np.min(cost))
    if curvature > 0:  # a minimum of the cost between the points: try its vertex
        vertex = x[1] - (y[2] - y[0]) / (2 * (x[1] - x[0])) / curvature
        if x[0] < vertex < x[2]:
            v = float(gain_axis(receiver, float(np.exp(vertex))))
            c = sign * float(_figure(dataclasses.replace(receiver, reverse_bias=v).evaluate(),
                                     objective))
            if c < best_cost:
                best_x, best_cost = vertex, c
    return float(np.exp(best_x)), sign * best_cost


def gain_points(receiver, points):
    """Replace a ``gain`` axis of a flattened sweep grid by the biases that give it.

    Parameters
    ----------
    receiver : Receiver
        The base design (on an avalanche photodiode).
    points : dict of str to numpy.ndarray
        The flattened grid of :func:`photorx.analysis.sweep.grid`, holding ``gain``.

    Returns
    -------
    dict of str to numpy.ndarray
        The same grid with ``reverse_bias`` in the place of ``gain``, point by point at
        each point's temperature (a swept ``temperature`` or the receiver's).
    """
    if "reverse_bias" in points:
        raise DesignError("sweep either gain or reverse_bias, not both (gain sets the bias)",
                          parameter="gain")
    require_nonnegative("gain", points["gain"], "")
    t = points.get("temperature", receiver.temperature)
    bias = gain_axis(receiver, points["gain"], temperature=t)
    return {("reverse_bias" if k == "gain" else k): (np.atleast_1d(bias) if k == "gain" else v)
            for k, v in points.items()}
