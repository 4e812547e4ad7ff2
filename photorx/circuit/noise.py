"""Noise of a photodiode transimpedance receiver: every source, at the output and referred to the input.

Functional core (pure, vectorised; parameters broadcast, pass ``p[..., None]`` against a
1-D frequency grid for many designs):

* :func:`johnson_voltage_density`, :func:`johnson_current_density`, :func:`shot_current_density`
* :func:`noise_transfer_functions` - the transfer function of each noise injection point
* :func:`output_noise_psd` / :func:`input_noise_psd` - PSD of every source [V^2/Hz] / [A^2/Hz]
* :func:`integrated_output_noise` and :func:`chain_enbw` - integrals for many designs at once
  (parameters shaped like the designs, no frequency axis)

Shell: :func:`~photorx.circuit.noise_spectrum.tia_noise` (called by :meth:`photorx.Tia.noise`)
returns a :class:`~photorx.circuit.noise_spectrum.NoiseSpectrum`; both live in
:mod:`photorx.circuit.noise_spectrum`, which imports this core (never the reverse).

Noise model (circuit of :mod:`photorx.circuit.tia`; T = loop gain, F = T/(1+T),
Zf = 1/Yf, divider = Zd/(Zd + Rs), Zt = Zf divider F), every source uncorrelated (with a
tabulated amplifier noise curve, ``en_shape`` / ``in_shape``, its shape replaces 1 + f_c/f):

==================  ===========================  ================================
source              density at its injection      output transfer (magnitude^2)
==================  ===========================  ================================
``rf_thermal``      4kT/Rf  [A^2/Hz]              |Zf F|^2
``amp_current``     i_n^2 (1 + f_ci/f)            |Zf F|^2
``rsh_thermal``     4kT/Rsh                       |Zt|^2
``shot*``           2 q I                         |Zt|^2
``rs_thermal``      4kT Rs  [V^2/Hz]              |Zf F / (Rs + Zd)|^2
``amp_voltage``     e_n^2 (1 + f_ce/f)            |F / beta|^2 = |A / (1 + T)|^2
``stage2_voltage``  e_2^2 (1 + f_c2/f)            1 (added at the stage output)
==================  ===========================  ================================

An optional post filter H multiplies every output PSD by |H|^2. Input-referred densities
divide the unfiltered output PSD by |Zt|^2.
"""

from __future__ import annotations

import numpy as np

from .._validate import require_nonnegative, require_positive
from .amplifier import flicker_factor, open_loop_gain
from .amplifier_noise import noise_power_shape
from .filters import filter_response
from ..constants import k as _K
from ..constants import q as _Q
from ..errors import DesignError
from .integration import DEFAULT_RTOL, integrate_psd

__all__ = [
    "SOURCE_LABELS",
    "chain_enbw",
    "with_frequency_axis",
    "input_noise_psd",
    "integrated_output_noise",
    "johnson_current_density",
    "johnson_voltage_density",
    "noise_equivalent_power",
    "noise_transfer_functions",
    "output_noise_psd",
    "shot_current_density",
]

#: Display label of every noise source key.
SOURCE_LABELS = {
    "rf_thermal": "feedback resistor Rf, thermal",
    "amp_current": "amplifier current noise i_n",
    "amp_voltage": "amplifier voltage noise e_n (through the noise gain)",
    "rsh_thermal": "photodiode shunt resistance Rsh, thermal",
    "rs_thermal": "photodiode series resistance Rs, thermal",
    "shot": "shot noise of the diode current",
    "shot_dark": "shot noise of the dark current",
    "shot_signal": "shot noise of the signal photocurrent",
    "shot_background": "shot noise of the background photocurrent",
    "stage2_voltage": "second stage / post filter input noise",
}


def johnson_voltage_density(resistance, temperature=300.0):
    """Open-circuit thermal (Johnson) noise voltage density sqrt(4 k T R) [V/rtHz].

    Parameters
    ----------
    resistance : array_like
        Resistance [ohm], >= 0.
    temperature : array_like
        Temperature [K], > 0.

    Notes
    -----
    e = sqrt(4 k T R); 4.07 nV/rtHz for 1 kohm at 300 K. Valid for h f << k T (below
    about 1 THz at 300 K).

    References
    ----------
    .. [1] H. Nyquist, "Thermal agitation of electric charge in conductors",
       Phys. Rev. 32 (1928) 110-113.
    """
    r = require_nonnegative("resistance", resistance, "ohm")
    t = require_positive("temperature", temperature, "K")
    return np.sqrt(4.0 * _K * t * r)


def johnson_current_density(resistance, temperature=300.0):
    """Short-circuit thermal noise current density sqrt(4 k T / R) [A/rtHz]; ``inf`` ohm gives 0.

    Parameters
    ----------
    resistance : array_like
        Resistance [ohm], > 0 (``inf`` allowed, giving 0).
    temperature : array_like
        Temperature [K], > 0; default 300 K.

    References
    ----------
    .. [1] H. Nyquist, Phys. Rev. 32 (1928) 110-113.
    """
    r = np.asarray(resistance, dtype=float)
    if np.any(np.isnan(r)) or np.any(r <= 0):
        raise DesignError.out_of_range(
            "resistance", r[~(r > 0)][0] if r.ndim else r, "ohm", "> 0 (inf allowed)"
        )
    t = require_positive("temperature", temperature, "K")
    return np.sqrt(4.0 * _K * t / r)


def shot_current_density(current):
    """Shot noise current density sqrt(2 q I) [A/rtHz] of a DC current ``current`` [A], >= 0.

    Parameters
    ----------
    current : array_like
        DC current [A], >= 0.

    Notes
    -----
    i = sqrt(2 q I); 17.9 pA/rtHz for 1 mA. Full shot noise (no avalanche gain,
    no suppression), valid well below 1/transit time.

    References
    ----------
    .. [1] W. Schottky, "Ueber spontane Stromschwankungen in verschiedenen
       Elektrizitaetsleitern", Ann. Phys. 362 (1918) 541-567.
    """
    i = require_nonnegative("current", current, "A")
    return np.sqrt(2.0 * _Q * i)


def noise_transfer_functions(f, *, gbw, dc_gain, poles=(), rf, cf, cd, rsh=np.inf, rs=0.0, cin=0.0,
                             zeros=()):
    """Transfer functions from each noise injection point to the TIA output.

    Parameters
    ----------
    f : array_like
        Frequency [Hz], >= 0.
    gbw, dc_gain, poles
        Amplifier gain-bandwidth product [Hz], DC gain [V/V], extra poles [Hz] (a sequence).
    rf, cf : array_like
        Feedback resistance [ohm] and capacitance [F].
    cd, rsh, rs : array_like
        Photodiode capacitance [F], shunt resistance [ohm] (inf allowed), series
        resistance [ohm].
    cin : array_like
        Amplifier input capacitance [F].
    zeros : sequence of array_like, optional
        Real zeros of the open-loop gain [Hz] (a sequence, ``inf`` for none); see
        :func:`photorx.circuit.amplifier.open_loop_gain`.

    Returns
    -------
    dict of numpy.ndarray (complex)
        ``summing`` Zf F [ohm] (current into the summing node), ``junction`` Zt [ohm]
        (current across the junction; the closed-loop transimpedance), ``series``
        Zf F / (Rs + Zd) [V/V] (voltage in series with Rs), ``voltage`` A/(1+T) [V/V]
        (amplifier input voltage noise; the noise gain times F).

    Notes
    -----
    Written with the junction admittance Yd = 1/Rsh + s Cd so that f = 0 and Rsh = inf
    are exact: divider = 1/(1 + Rs Yd), 1/(Rs + Zd) = Yd divider,
    Yin = Yd divider + s Cin, beta = Yf/(Yf + Yin), T = A beta.

    References
    ----------
    .. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996, ch. 3 and 4.
    .. [2] P. C. D. Hobbs, *Building Electro-Optical Systems*, 2nd ed., Wiley, 2009, ch. 18.
    """
    f = np.asarray(f, dtype=float)
    s = 2j * np.pi * f
    yf = 1.0 / np.asarray(rf, dtype=float) + s * np.asarray(cf, dtype=float)
    yd = 1.0 / np.asarray(rsh, dtype=float) + s * np.asarray(cd, dtype=float)
    divider = 1.0 / (1.0 + np.asarray(rs, dtype=float) * yd)
    y_series = yd * divider
    yin = y_series + s * np.asarray(cin, dtype=float)
    a = open_loop_gain(f, gbw, dc_gain, poles, zeros)
    t = a * yf / (yf + yin)
    one_plus_t = 1.0 + t
    summing = t / one_plus_t / yf
    return {
        "summing": summing,
        "junction": summing * divider,
        "series": summing * y_series,
        "voltage": a / one_plus_t,
    }


def _shot_items(i_shot):
    if isinstance(i_shot, dict):
        return [(f"shot_{name}", np.asarray(v, dtype=float)) for name, v in i_shot.items()]
    return [("shot", np.asarray(i_shot, dtype=float))]


def _unfiltered_psd(
    f,
    gbw,
    dc_gain,
    poles,
    rf,
    cf,
    cd,
    rsh,
    rs,
    cin,
    en,
    en_corner,
    in_,
    in_corner,
    temperature,
    i_shot,
    stage2_noise,
    stage2_corner,
    en_shape=None,
    in_shape=None,
    zeros=(),
    squared_magnitudes=None,
):
    # squared_magnitudes: |H|^2 of every path of noise_transfer_functions, computed by the
    # caller another way (the sweep path's polynomial ratios); None evaluates the nodal form
    f = np.asarray(f, dtype=float)
    if squared_magnitudes is None:
        h = noise_transfer_functions(
            f, gbw=gbw, dc_gain=dc_gain, poles=poles, rf=rf, cf=cf, cd=cd, rsh=rsh, rs=rs, cin=cin,
            zeros=zeros,
        )
        mag2 = {k: np.abs(v) ** 2 for k, v in h.items()}
    else:
        mag2 = squared_magnitudes
    kt4 = 4.0 * _K * np.asarray(temperature, dtype=float)
    h_sum2 = mag2["summing"]
    zt2 = mag2["junction"]
    out = {
        "rf_thermal": kt4 / np.asarray(rf, dtype=float) * h_sum2,
        "amp_current": np.asarray(in_, dtype=float) ** 2
        * noise_power_shape(f, in_corner, in_shape)
        * h_sum2,
        "amp_voltage": np.asarray(en, dtype=float) ** 2
        * noise_power_shape(f, en_corner, en_shape)
        * mag2["voltage"],
        "rsh_thermal": kt4 / np.asarray(rsh, dtype=float) * zt2,
        "rs_thermal": kt4 * np.asarray(rs, dtype=float) * mag2["series"],
    }
    for name, current in _shot_items(i_shot):
        out[name] = 2.0 * _Q * current * zt2
    out["stage2_voltage"] = (
        np.asarray(stage2_noise, dtype=float) ** 2
        * flicker_factor(f, stage2_corner)
        * np.ones_like(zt2)
    )
    return out, zt2


def output_noise_psd(
    f,
    *,
    gbw,
    dc_gain,
    poles=(),
    rf,
    cf,
    cd,
    rsh=np.inf,
    rs=0.0,
    cin=0.0,
    zeros=(),
    en=0.0,
    en_corner=0.0,
    in_=0.0,
    in_corner=0.0,
    temperature=300.0,
    i_shot=0.0,
    stage2_noise=0.0,
    stage2_corner=0.0,
    filter_kind=None,
    filter_order=4,
    filter_cutoff=np.inf,
    en_shape=None,
    in_shape=None,
):
    """Output noise power spectral density of every source [V^2/Hz].

    Parameters
    ----------
    f : array_like
        Frequency [Hz], > 0 (the 1/f terms are infinite at 0 Hz).
    gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros
        Circuit, see :func:`noise_transfer_functions`.
    en, en_corner : array_like
        Amplifier white input voltage noise [V/rtHz] and its 1/f corner [Hz].
    in_, in_corner : array_like
        Amplifier white input current noise [A/rtHz] and its 1/f corner [Hz].
    temperature : array_like
        Temperature of Rf, Rsh and Rs [K].
    i_shot : array_like or dict
        DC current whose full shot noise counts [A]; a dict ``{"dark": ..., "signal": ...,
        "background": ...}`` gives one source ``shot_<name>`` per entry.
    stage2_noise, stage2_corner : array_like
        Input voltage noise of a following stage or post filter [V/rtHz], added at the TIA
        output, and its 1/f corner [Hz].
    filter_kind, filter_order, filter_cutoff
        Optional post filter (see :func:`photorx.circuit.filters.filter_response`);
        ``filter_kind=None`` for none. ``filter_cutoff`` [Hz] broadcasts.
    en_shape, in_shape : NoiseCurve, callable or None
        Tabulated shape of the amplifier voltage / current noise power over its white
        level (:func:`photorx.circuit.amplifier_noise.noise_power_shape`), one for all
        designs; it replaces 1 + f_c/f (the corner is then ignored). None (default): the
        corner model.

    Returns
    -------
    dict of numpy.ndarray
        Source key (see :data:`SOURCE_LABELS`) -> PSD at the output [V^2/Hz], all of the
        broadcast shape of ``f`` and the parameters.

    Notes
    -----
    See the module table: S_out,k = S_k |H_k|^2 |H_filter|^2 with the source densities of
    Nyquist (4kT/R, 4kTR) and Schottky (2qI) and amplifier densities
    x_w^2 (1 + f_c/f), or x_w^2 (c(f)/c_w)^2 for a tabulated curve c.

    References
    ----------
    .. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996, ch. 4.
    .. [2] C. D. Motchenbacher and J. A. Connelly, *Low-Noise Electronic System Design*,
       Wiley, 1993, ch. 1-2.
    """
    out, _ = _unfiltered_psd(
        f,
        gbw,
        dc_gain,
        poles,
        rf,
        cf,
        cd,
        rsh,
        rs,
        cin,
        en,
        en_corner,
        in_,
        in_corner,
        temperature,
        i_shot,
        stage2_noise,
        stage2_corner,
        en_shape,
        in_shape,
        zeros,
    )
    if filter_kind is not None:
        h2 = np.abs(filter_response(f, filter_kind, filter_order, filter_cutoff)) ** 2
        out = {name: v * h2 for name, v in out.items()}
    return out


def input_noise_psd(
    f,
    *,
    gbw,
    dc_gain,
    poles=(),
    rf,
    cf,
    cd,
    rsh=np.inf,
    rs=0.0,
    cin=0.0,
    zeros=(),
    en=0.0,
    en_corner=0.0,
    in_=0.0,
    in_corner=0.0,
    temperature=300.0,
    i_shot=0.0,
    stage2_noise=0.0,
    stage2_corner=0.0,
    filter_kind=None,
    filter_order=4,
    filter_cutoff=np.inf,
    en_shape=None,
    in_shape=None,
):
    """Input-referred noise PSD of every source [A^2/Hz]: unfiltered output PSD / |Zt(f)|^2.

    Takes the parameters of :func:`output_noise_psd`; the post filter, if given, is ignored
    because it scales signal and noise alike.

    Parameters
    ----------
    f : array_like
        Frequency [Hz], > 0 (the 1/f terms are infinite at 0 Hz).
    gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros
        Circuit, see :func:`noise_transfer_functions`; defaults ``poles=()``,
        ``rsh=inf``, ``rs=0``, ``cin=0``.
    en, en_corner, in_, in_corner, temperature, i_shot, stage2_noise, stage2_corner
        Noise sources, as in :func:`output_noise_psd` (all default 0, temperature 300 K).
    filter_kind, filter_order, filter_cutoff
        Accepted for symmetry with :func:`output_noise_psd` and ignored.
    en_shape, in_shape : NoiseCurve, callable or None
        Tabulated amplifier noise shapes, as in :func:`output_noise_psd`.

    Returns
    -------
    dict of numpy.ndarray
        Source key (see :data:`SOURCE_LABELS`) -> input-referred PSD [A^2/Hz].

    Notes
    -----
    S_in,k(f) = S_out,k(f) / |Zt(f)|^2 with Zt the closed-loop transimpedance.
    """
    out, zt2 = _unfiltered_psd(
        f, gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, en, en_corner, in_, in_corner,
        temperature, i_shot, stage2_noise, stage2_corner, en_shape, in_shape, zeros,
    )  # fmt: skip
    return {name: v / zt2 for name, v in out.items()}


def noise_equivalent_power(input_noise_density, responsivity):
    """Noise-equivalent power NEP = i_n / R [W/rtHz].

    Parameters
    ----------
    input_noise_density : array_like
        Input-referred noise current density [A/rtHz], >= 0 (spectral or at a frequency).
    responsivity : array_like
        Photodiode responsivity [A/W], > 0.

    Notes
    -----
    The optical power (modulated at the frequency considered) whose photocurrent equals the
    noise in a 1 Hz band.

    References
    ----------
    .. [1] P. C. D. Hobbs, *Building Electro-Optical Systems*, 2nd ed., Wiley, 2009, sec. 3.4.
    """
    i_n = require_nonnegative("input_noise_density", input_noise_density, "A/rtHz")
    r = require_positive("responsivity", responsivity, "A/W")
    return i_n / r


def with_frequency_axis(params):
    """Give every design parameter a trailing frequency axis (``p[..., None]``).

    Parameters
    ----------
    params : dict
        Keywords of :func:`output_noise_psd` (without ``f``), each shaped like the designs;
        ``poles`` and ``zeros`` are sequences of arrays, ``i_shot`` may be a dict,
        ``filter_kind`` and ``filter_order`` are scalars and ``en_shape``, ``in_shape``
        noise shapes (one for all designs): these are passed through unchanged.

    Returns
    -------
    dict
        The same keys, array values with one trailing axis of length 1.
    """
    out = {}
    for name, value in params.items():
        if name in ("poles", "zeros"):
            out[name] = tuple(np.asarray(p, dtype=float)[..., None] for p in value)
        elif name == "i_shot" and isinstance(value, dict):
            out[name] = {k_: np.asarray(v, dtype=float)[..., None] for k_, v in value.items()}
        elif name in ("filter_kind", "filter_order", "en_shape", "in_shape"):
            out[name] = value
        else:
            out[name] = np.asarray(value, dtype=float)[..., None]
    return out


def integrated_output_noise(f_lo=0.0, f_hi=np.inf, *, rtol=DEFAULT_RTOL, **params):
    """Mean-square output noise of every source for many designs at once [V^2].

    Parameters
    ----------
    f_lo, f_hi : float or array_like
        Band [Hz]; ``f_hi = inf`` integrates until converged. Must be > 0 when a 1/f
        corner is set.
    rtol : float
        Relative tolerance of each design's total (default 1e-4), see
        :func:`photorx.circuit.integration.integrate_psd`.
    **params
        Keywords of :func:`output_noise_psd`, each shaped like the designs (NO trailing
        frequency axis; it is added here). ``poles`` is a sequence of such arrays.

    Returns
    -------
    dict of numpy.ndarray
        Source key -> mean-square output noise [V^2] of shape ``design_shape``; the total is
        the sum (uncorrelated sources).

    Notes
    -----
    v_rms^2 = integral_{f_lo}^{f_hi} S_out(f) df. A brick-wall post filter is applied as an
    upper limit min(f_hi, cutoff) so that no discontinuity enters the integrand.
    """
    expanded = with_frequency_axis(params)
    f_hi = np.asarray(f_hi, dtype=float)
    if expanded.get("filter_kind") == "brickwall":
        f_hi = np.minimum(f_hi, np.asarray(params["filter_cutoff"], dtype=float))
        expanded["filter_kind"] = None
    return integrate_psd(
        lambda f: output_noise_psd(f, **expanded),
        f_lo,
        f_hi,
        rtol=rtol,
        f_scale=float(np.max(params["gbw"])),
    )


def chain_enbw(
    *,
    gbw,
    dc_gain,
    poles=(),
    rf,
    cf,
    cd,
    rsh=np.inf,
    rs=0.0,
    cin=0.0,
    zeros=(),
    filter_kind=None,
    filter_order=4,
    filter_cutoff=np.inf,
    rtol=DEFAULT_RTOL,
):
    """Equivalent noise bandwidth of the closed-loop transimpedance times a post filter [Hz].

    Parameters are shaped like the designs (no frequency axis), as in
    :func:`integrated_output_noise`.

    Parameters
    ----------
    gbw, dc_gain, poles, rf, cf, cd, rsh, rs, cin, zeros
        Circuit, see :func:`noise_transfer_functions`; defaults ``poles=()``,
        ``rsh=inf``, ``rs=0``, ``cin=0``.
    filter_kind, filter_order, filter_cutoff
        Optional post filter, see :func:`photorx.circuit.filters.filter_response`:
        kind ``"butterworth"``, ``"bessel"``, ``"brickwall"`` or None (default, no filter);
        order an integer 1 to 6 (default 4); cutoff [Hz] (default inf).
    rtol : float
        Relative tolerance of the integral (default 1e-4), see
        :func:`photorx.circuit.integration.integrate_psd`.

    Returns
    -------
    numpy.ndarray
        Equivalent noise bandwidth [Hz], shaped like the designs.

    Notes
    -----
    ENBW = integral_0^inf |Zt(f) H(f)|^2 df / |Zt(0)|^2. For a single pole at f_p it is
    (pi/2) f_p.

    References
    ----------
    .. [1] C. D. Motchenbacher and J. A. Connelly, *Low-Noise Electronic System Design*,
       Wiley, 1993, ch. 1.
    """
    circuit = {
        "gbw": gbw,
        "dc_gain": dc_gain,
        "poles": poles,
        "rf": rf,
        "cf": cf,
        "cd": cd,
        "rsh": rsh,
        "rs": rs,
        "cin": cin,
        "zeros": zeros,
    }
    p = with_frequency_axis(circuit)
    zt0 = np.abs(noise_transfer_functions(0.0, **p)["junction"])[..., 0]
    f_hi = np.inf
    kind = filter_kind
    cutoff = np.asarray(filter_cutoff, dtype=float)[..., None]
    if kind == "brickwall":
        f_hi = np.asarray(filter_cutoff, dtype=float)
        kind = None

    def psd(f):
        zt2 = np.abs(noise_transfer_functions(f, **p)["junction"]) ** 2
        if kind is not None:
            zt2 = zt2 * np.abs(filter_response(f, kind, filter_order, cutoff)) ** 2
        return zt2

    return integrate_psd(psd, 0.0, f_hi, rtol=rtol, f_scale=float(np.max(gbw))) / zt0**2


def __getattr__(name):
    """``NoiseSpectrum`` and ``tia_noise`` live in :mod:`photorx.circuit.noise_spectrum`, the
    shell above this core; this keeps ``photorx.circuit.noise.NoiseSpectrum`` working without
    a module-level import cycle."""
    if name in ("NoiseSpectrum", "tia_noise"):
        from . import noise_spectrum

        return getattr(noise_spectrum, name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
