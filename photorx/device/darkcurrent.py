"""Dark current and shunt resistance of a photodiode versus bias and temperature.

Functional core (pure, vectorised, SI). Sign convention of photorx: ``v_r`` is the
reverse bias [V] (negative = forward) and the dark current is counted positive when it
flows in the reverse direction, the direction of the photocurrent; in forward bias it is
negative.

Three parts (Sze and Ng, ch. 2 and ch. 13):

- diffusion from the quasi-neutral layers, I_s (1 - e^{-v_r / V_T}), I_s ~ ni^2
  (:func:`diffusion_saturation_current`, :func:`diffusion_current`);
- generation in the depletion layer, q A ni W / tau_g (1 - e^{-v_r / (2 V_T)}), ~ ni W,
  so it grows with reverse bias as the depletion layer widens (:func:`generation_current`);
- ohmic (surface) leakage v_r / R_leak (:func:`leakage_current`).

:func:`zero_bias_resistance` is the classical shunt resistance R0 = (dI/dV at 0 V)^-1.
"""

from __future__ import annotations

from types import MappingProxyType

import numpy as np

from .._validate import require_finite, require_in_range, require_nonnegative, require_positive
from ..constants import q, thermal_voltage
from .optics import require_thickness_or_inf

__all__ = [
    "DEFAULT_LIFETIMES",
    "default_lifetimes",
    "lifetime_at_temperature",
    "diffusivity",
    "diffusion_length",
    "diffusion_saturation_current",
    "diffusion_current",
    "generation_current",
    "generation_conductance",
    "leakage_current",
    "zero_bias_resistance",
]

#: Typical minority-carrier lifetime and generation lifetime [s] of photodiode-grade
#: material, by material name: (lifetime, generation_lifetime). Order-of-magnitude values
#: (common practice): float-zone/epitaxial silicon detectors have generation lifetimes of
#: about a millisecond; direct-gap III-V layers nanoseconds to microseconds.
DEFAULT_LIFETIMES = MappingProxyType({
    "Si": (10e-6, 1e-3),
    "Ge": (1e-6, 10e-6),
    "GaAs": (10e-9, 10e-9),
    "InP": (10e-9, 10e-9),
    "InGaAs": (1e-6, 1e-6),
})
_FALLBACK_LIFETIMES = (1e-6, 1e-6)


def _out(x):
    return x if np.ndim(x) else float(x)


def default_lifetimes(name: str):
    """(lifetime, generation_lifetime) [s] for a material name; (1 us, 1 us) if unknown.

    Parameters
    ----------
    name : str
        Material name, a key of :data:`DEFAULT_LIFETIMES` (case-sensitive); any other
        name gives the fallback (1 us, 1 us).
    """
    return DEFAULT_LIFETIMES.get(name, _FALLBACK_LIFETIMES)


def lifetime_at_temperature(lifetime_300, temperature):
    """Shockley-Read-Hall lifetime at temperature from its 300 K value [s].

    Parameters
    ----------
    lifetime_300 : float or array_like
        Lifetime at 300 K [s], > 0.
    temperature : float or array_like
        Temperature [K].

    Notes
    -----
    tau = 1 / (sigma v_th N_t) with the thermal velocity v_th = sqrt(3 k T / m*), so at a
    fixed capture cross-section sigma and trap density N_t, tau(T) = tau(300 K)
    (T / 300 K)^-1/2. This is the first-order law; capture cross-sections of real
    defects also vary with temperature, so treat it as a 200-400 K estimate. The same law
    applies to the generation lifetime of a mid-gap centre (tau_g = 2 tau_0 cosh((E_t -
    E_i)/kT) with E_t = E_i).

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 1 (recombination: tau = 1/(sigma v_th N_t), v_th = sqrt(3kT/m*)).
    .. [2] W. Shockley and W. T. Read, Statistics of the recombinations of holes and
       electrons, Physical Review 87, 835 (1952).
    """
    tau = require_positive("lifetime", lifetime_300, "s")
    t = require_positive("temperature", temperature, "K")
    return _out(np.asarray(tau) * (np.asarray(t) / 300.0) ** -0.5)


def diffusivity(mobility, temperature=300.0):
    """Einstein relation D = mu k T / q [m^2/s].

    Parameters
    ----------
    mobility : float or array_like
        Minority-carrier mobility [m^2/(V s)], > 0.
    temperature : float or array_like, optional
        Temperature [K] (default 300).

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 1 (Einstein relation).
    """
    mu = require_positive("mobility", mobility, "m^2/(V s)")
    return _out(np.asarray(mu) * thermal_voltage(temperature))


def diffusion_length(diffusivity, lifetime):
    """Minority-carrier diffusion length L = sqrt(D tau) [m].

    Parameters
    ----------
    diffusivity : float or array_like
        Diffusion coefficient [m^2/s], > 0.
    lifetime : float or array_like
        Minority-carrier lifetime [s], > 0.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2 (ideal diode, L = sqrt(D tau)).
    """
    dd = require_positive("diffusivity", diffusivity, "m^2/s")
    tau = require_positive("lifetime", lifetime, "s")
    return _out(np.sqrt(np.asarray(dd) * np.asarray(tau)))


def _tanh_ratio(thickness, length):
    w = np.asarray(thickness, dtype=float)
    return np.where(np.isposinf(w), 1.0, np.tanh(np.where(np.isposinf(w), 0.0, w) / length))


def diffusion_saturation_current(area, ni, na, nd, d_n, d_p, l_n, l_p, thickness_p=np.inf,
                                 thickness_n=np.inf):
    """Saturation current of the quasi-neutral layers (ideal-diode I_s) [A].

    Parameters
    ----------
    area : float or array_like
        Junction area [m^2], > 0.
    ni : float or array_like
        Intrinsic carrier density [m^-3], > 0.
    na, nd : float or array_like
        Acceptor density of the p layer and donor density of the n layer [m^-3], > 0.
    d_n, d_p : float or array_like
        Diffusion coefficients of electrons (minority in p) and holes (minority in n)
        [m^2/s], > 0.
    l_n, l_p : float or array_like
        Their diffusion lengths [m], > 0.
    thickness_p, thickness_n : float or array_like, optional
        Undepleted thickness of the p and n layers [m], >= 0; inf (default) for the
        long-diode limit.

    Notes
    -----
    I_s = q A ni^2 [D_n/(N_A L_n) tanh(w_p/L_n) + D_p/(N_D L_p) tanh(w_n/L_p)]: the
    Shockley long-diode result with a reflecting (passivated surface, high-low junction
    or heterointerface) boundary at distance w, the same boundary the quantum-efficiency
    model assumes; for w << L it tends to q A ni^2 w / (N tau).

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2, Eq. for the ideal current-voltage characteristic (Shockley equation).
    """
    a = np.asarray(require_positive("area", area, "m^2"))
    n_i = np.asarray(require_positive("ni", ni, "m^-3"))
    na_ = np.asarray(require_positive("na", na, "m^-3"))
    nd_ = np.asarray(require_positive("nd", nd, "m^-3"))
    dn = np.asarray(require_positive("d_n", d_n, "m^2/s"))
    dp = np.asarray(require_positive("d_p", d_p, "m^2/s"))
    ln = np.asarray(require_positive("l_n", l_n, "m"))
    lp = np.asarray(require_positive("l_p", l_p, "m"))
    wp = require_thickness_or_inf("thickness_p", thickness_p)
    wn = require_thickness_or_inf("thickness_n", thickness_n)
    js = (dn / (na_ * ln) * _tanh_ratio(wp, ln) + dp / (nd_ * lp) * _tanh_ratio(wn, lp))
    return _out(q * a * n_i**2 * js)


def diffusion_current(v_r, saturation_current, temperature=300.0):
    """Diffusion dark current I_s (1 - exp(-v_r / V_T)) [A], positive in reverse bias.

    Parameters
    ----------
    v_r : float or array_like
        Reverse bias [V] (negative = forward).
    saturation_current : float or array_like
        I_s [A], >= 0.
    temperature : float or array_like, optional
        Temperature [K].

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2 (Shockley equation).
    """
    v = require_finite("v_r", v_r, "V")
    i_s = require_nonnegative("saturation_current", saturation_current, "A")
    vt = thermal_voltage(temperature)
    return _out(np.asarray(i_s) * -np.expm1(-np.asarray(v, dtype=float) / vt))


def generation_current(v_r, area, ni, width, generation_lifetime, temperature=300.0,
                       ideality=2.0):
    """Generation (reverse) / recombination (forward) current of the depletion layer [A].

    Parameters
    ----------
    v_r : float or array_like
        Reverse bias [V] (negative = forward).
    area : float or array_like
        Junction area [m^2], > 0.
    ni : float or array_like
        Intrinsic carrier density [m^-3], > 0.
    width : float or array_like
        Depletion width at ``v_r`` [m], >= 0.
    generation_lifetime : float or array_like
        Generation lifetime tau_g [s], > 0 (tau_g = 2 tau_0 for mid-gap centres with equal
        electron and hole lifetimes tau_0).
    temperature : float or array_like, optional
        Temperature [K].
    ideality : float or array_like, optional
        Ideality n of the bias dependence near zero bias [-], 1 to 10 (2 for mid-gap
        Shockley-Read-Hall centres).

    Notes
    -----
    I = q A ni W / tau_g (1 - exp(-v_r / (n V_T))). In reverse bias beyond a few V_T
    this is Sze and Ng's generation current J_gen = q ni W / tau_g (= q ni W / (2 tau_0));
    in forward bias it grows as exp(V / 2 V_T), the recombination current. Scales with ni,
    so in silicon it doubles about every 8-10 K near room temperature.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2 (generation-recombination current).
    .. [2] C.-T. Sah, R. N. Noyce and W. Shockley, Carrier generation and recombination in
       p-n junctions and p-n junction characteristics, Proc. IRE 45, 1228 (1957).
    """
    a = np.asarray(require_positive("area", area, "m^2"))
    n_i = np.asarray(require_positive("ni", ni, "m^-3"))
    w = np.asarray(require_nonnegative("width", width, "m"))
    tau = np.asarray(require_positive("generation_lifetime", generation_lifetime, "s"))
    n = np.asarray(require_in_range("ideality", ideality, "", 1.0, 10.0))
    v = np.asarray(require_finite("v_r", v_r, "V"), dtype=float)
    vt = thermal_voltage(temperature)
    return _out(q * a * n_i * w / tau * -np.expm1(-v / (n * vt)))


def generation_conductance(v_r, area, ni, width, width_slope, generation_lifetime,
                           temperature=300.0, ideality=2.0):
    """Differential conductance dI/dv_r of :func:`generation_current` [S].

    Parameters
    ----------
    v_r : float or array_like
        Reverse bias [V], finite (negative = forward).
    area : float or array_like
        Junction area [m^2], > 0.
    ni : float or array_like
        Intrinsic carrier density [m^-3], > 0.
    width : float or array_like
        Depletion width at ``v_r`` [m], >= 0.
    width_slope : float or array_like
        dW/dv_r at ``v_r`` [m/V], >= 0 (0 above punch-through of a p-i-n diode).
    generation_lifetime : float or array_like
        Generation lifetime tau_g [s], > 0.
    temperature : float or array_like, optional
        Temperature [K], > 0 (default 300).
    ideality : float or array_like, optional
        Ideality n of the bias dependence near zero bias [-], 1 to 10 (default 2).

    Notes
    -----
    dI/dv_r = q A ni / tau_g [W e^{-v_r/(n V_T)} / (n V_T) + (1 - e^{-v_r/(n V_T)}) dW/dv_r].
    """
    a = np.asarray(require_positive("area", area, "m^2"))
    n_i = np.asarray(require_positive("ni", ni, "m^-3"))
    w = np.asarray(require_nonnegative("width", width, "m"))
    dw = np.asarray(require_nonnegative("width_slope", width_slope, "m/V"))
    tau = np.asarray(require_positive("generation_lifetime", generation_lifetime, "s"))
    n = np.asarray(require_in_range("ideality", ideality, "", 1.0, 10.0))
    nvt = n * thermal_voltage(temperature)
    x = np.asarray(require_finite("v_r", v_r, "V"), dtype=float) / nvt
    return _out(q * a * n_i / tau * (w * np.exp(-x) / nvt - np.expm1(-x) * dw))


def leakage_current(v_r, resistance):
    """Ohmic (surface) leakage v_r / R [A]; R = inf gives zero.

    Parameters
    ----------
    v_r : float or array_like
        Reverse bias [V].
    resistance : float or array_like
        Leakage resistance [ohm], > 0 (inf allowed).

    References
    ----------
    .. [1] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996,
       ch. 1 (shunt resistance of the photodiode model).
    """
    v = np.asarray(require_finite("v_r", v_r, "V"), dtype=float)
    r = np.asarray(resistance, dtype=float)
    if np.any(~(r > 0)):
        require_positive("resistance", r, "ohm")
    return _out(v / r)


def zero_bias_resistance(saturation_current, generation_current_max, leakage_resistance=np.inf,
                         temperature=300.0, ideality=2.0):
    """Zero-bias shunt resistance R0 = (dI/dV at 0 V)^-1 [ohm].

    Parameters
    ----------
    saturation_current : float or array_like
        Diffusion saturation current I_s [A], >= 0.
    generation_current_max : float or array_like
        q A ni W(0) / tau_g, the generation current scale at zero bias [A], >= 0.
    leakage_resistance : float or array_like, optional
        Ohmic leakage resistance [ohm], > 0 (inf default).
    temperature : float or array_like, optional
        Temperature [K].
    ideality : float or array_like, optional
        Ideality of the generation term [-].

    Notes
    -----
    1/R0 = I_s / V_T + I_g0 / (n V_T) + 1/R_leak: the derivative of the three dark-current
    terms at v_r = 0 (the dW/dV term of the generation current vanishes there). The
    Johnson noise 4kT/R0 equals the shot noise of the two opposing diode currents at zero
    bias.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13 (zero-bias resistance and detectivity, R0 A).
    """
    i_s = np.asarray(require_nonnegative("saturation_current", saturation_current, "A"))
    i_g = np.asarray(require_nonnegative("generation_current_max", generation_current_max, "A"))
    r = np.asarray(leakage_resistance, dtype=float)
    if np.any(~(r > 0)):
        require_positive("leakage_resistance", r, "ohm")
    n = np.asarray(require_in_range("ideality", ideality, "", 1.0, 10.0))
    vt = thermal_voltage(temperature)
    g = i_s / vt + i_g / (n * vt) + 1.0 / r
    with np.errstate(divide="ignore"):
        return _out(1.0 / g)
