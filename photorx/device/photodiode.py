"""The photodiode: a junction plus optics, dark current, series resistance and package.

:class:`Photodiode` is the thin shell of the device stage: a frozen dataclass that holds a
design, validates it and routes every call to the pure functions of
:mod:`~photorx.device.optics`, :mod:`~photorx.device.speed` and
:mod:`~photorx.device.darkcurrent`. Everything broadcasts over the reverse bias ``v_r``,
the wavelength and the frequency.

Two ways to describe a diode:

- from physics: ``Photodiode(junction=j)`` with a physical junction (abrupt, graded or
  p-i-n); quantum efficiency from the shipped absorption tables and the layer stack,
  dark current from ni, lifetimes and the depletion width, transit from the saturation
  velocities. Every other argument has a documented default.
- from a datasheet: :meth:`Photodiode.from_datasheet` with capacitance, responsivity, dark
  current and shunt resistance numbers, on a :class:`~photorx.device.junction.ParametricJunction`.

The two mix: a physical junction with a ``given_responsivity`` (number or table), or
with a measured dark current (``reference_dark_current``, ``zero_bias_resistance``).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field

import numpy as np

from .._validate import (
    as_float_array,
    require_finite,
    require_in_range,
    require_nonnegative,
    require_positive,
)
from ..constants import thermal_voltage
from ..errors import DesignError
from . import darkcurrent as dk
from . import optics, speed
from .equivalent_circuit import EquivalentCircuit
from .junction import FORWARD_LIMIT, ParametricJunction, diffusion_capacitance

__all__ = ["Photodiode"]

_DEFAULT_TOP_THICKNESS = 0.3e-6  # [m] shallow diffused/implanted contact layer
_DEFAULT_TOP_DIFFUSION_LENGTH = 1e-6  # [m] heavily doped (~1e19 cm^-3) contact layer
_DEFAULT_SERIES_RESISTANCE = 10.0  # [ohm]
_MIN_REFERENCE_BIAS = 0.1  # [V] a dark current quoted nearer 0 V does not separate the terms
_SLOPE_STEP = 1e-4  # [V] step for dW/dV


def _out(x):
    return x if np.ndim(x) else (complex(x) if np.iscomplexobj(x) else float(x))


def _optional_positive(name, value, unit):
    """None, or ``value`` > 0 as a float (scalar) or float array (one value per design)."""
    return None if value is None else require_positive(name, value, unit)


def _optional_scalar_positive(name, value, unit):
    """None, or a single ``value`` > 0 (the datasheet fit is solved for one diode at a time)."""
    if value is None:
        return None
    out = require_positive(name, value, unit)
    if np.ndim(out):
        raise DesignError(f"{name} must be a single number [{unit}], not an array of shape "
                          f"{np.shape(out)}; build one Photodiode per datasheet", parameter=name)
    return float(out)


def _responsivity_table(value):
    """Normalise a responsivity table to ((wavelengths...), (values...)), validated."""
    if isinstance(value, dict):
        pairs = sorted((float(k), float(v)) for k, v in value.items())
        wl, r = [p[0] for p in pairs], [p[1] for p in pairs]
    else:
        arr = np.asarray(as_float_array("given_responsivity", value, "A/W"), dtype=float)
        if arr.ndim == 2 and arr.shape[0] == 2:  # (wavelengths, responsivities)
            wl, r = arr[0], arr[1]
        elif arr.ndim == 2 and arr.shape[1] == 2:  # rows [wavelength, responsivity]
            wl, r = arr[:, 0], arr[:, 1]
        else:
            raise DesignError(f"given_responsivity table has shape {arr.shape}; give a number "
                              "[A/W] or a table (wavelengths [m], responsivities [A/W]) with "
                              ">= 2 points", parameter="given_responsivity")
    wl = np.asarray(require_positive("given_responsivity wavelengths", wl, "m"), dtype=float)
    r = np.asarray(require_nonnegative("given_responsivity", r, "A/W"), dtype=float)
    if wl.size < 2 or np.any(np.diff(wl) <= 0):
        raise DesignError("responsivity table wavelengths must be >= 2 strictly increasing "
                          f"values [m]; got {wl.tolist()}", parameter="given_responsivity")
    return tuple(wl.tolist()), tuple(r.tolist())


@dataclass(frozen=True)
class Photodiode:
    """A biased photodiode: capacitance, responsivity, dark current, speed, equivalent circuit.

    Parameters
    ----------
    junction : junction model
        :class:`~photorx.device.junction.AbruptJunction`, ``LinearlyGradedJunction``,
        ``PinJunction`` (physical: material, area, temperature) or
        :class:`~photorx.device.junction.ParametricJunction` (capacitance only; then give
        ``given_responsivity``).
    given_responsivity : None, float or table, optional
        None (default): from physics (absorption table of the junction material, layer
        stack, reflectance). A number [A/W]: the same at every wavelength and bias. A
        table: ``(wavelengths [m], responsivities [A/W])`` (also an (N, 2) array of rows
        [wavelength, responsivity] for N > 2, or a dict wavelength -> responsivity),
        interpolated linearly; outside it is a DesignError.
    reflectance : float, optional
        Front power reflectance [-], 0 to <1. Default: bare surface,
        ((n - 1)/(n + 1))^2 with n = sqrt(eps_r) of the material (about 0.3 for Si, InGaAs;
        give a few percent for an anti-reflection coating).
    top_thickness : float, optional
        Undepleted absorbing layer above the depletion layer [m], >= 0 (default 0.3 um, a
        shallow contact diffusion). 0 for a transparent window layer (InP on InGaAs).
    absorber_thickness : float, optional
        Absorbing material below the top layer: depletion layer plus undepleted bottom
        layer [m], > 0 (default inf: a thick substrate of the same material). For an
        InGaAs layer on an InP substrate give the InGaAs thickness.
    top_diffusion_length : float, optional
        Minority-carrier diffusion length in the top layer [m], > 0 (default 1 um, typical
        of a ~1e19 cm^-3 contact layer).
    lifetime : float, optional
        Minority-carrier lifetime in the undepleted bottom layer [s], > 0 (default by
        material, :data:`~photorx.device.darkcurrent.DEFAULT_LIFETIMES`; 1 us otherwise).
    generation_lifetime : float, optional
        Generation lifetime of the depletion layer [s], > 0 (default by material).
    leakage_resistance : float, optional
        Ohmic (surface) leakage resistance [ohm], > 0 (default inf). Not combined with a
        datasheet dark current, whose fit determines the leakage.
    series_resistance : float, optional
        Series resistance [ohm], >= 0 (default 10 ohm).
    package_capacitance : float, optional
        Package and pad capacitance in parallel with the junction [F], >= 0 (default 0).
    illuminated_side : {"p", "n"}, optional
        Doping type of the illuminated top layer (default "p", p-on-n).
    intrinsic_bandwidth : float, optional
        Given intrinsic (transit) 3-dB bandwidth [Hz], > 0; replaces the transit model by a
        uniform-generation transit response with this bandwidth. Default None: from the
        junction (physical) or no intrinsic limit (parametric).
    reference_dark_current : float, optional
        Measured dark current [A], > 0, at ``reference_bias``; replaces the physical dark
        current model by a fitted one (see Notes).
    reference_bias : float, optional
        Reverse bias of ``reference_dark_current`` [V], >= 0.1.
    zero_bias_resistance : float, optional
        Measured zero-bias shunt resistance R0 [ohm], > 0 (with or without
        ``reference_dark_current``).

    Notes
    -----
    Physical dark current: I = I_s (1 - e^{-v_r/V_T}) + q A ni W / tau_g
    (1 - e^{-v_r/2V_T}) + v_r / R_leak (:mod:`~photorx.device.darkcurrent`). Fitted dark
    current: I = I_g [C_j(0)/C_j(v_r)] (1 - e^{-v_r/2V_T}) + G v_r, a generation current
    proportional to the depletion width (W ~ 1/C_j) plus ohmic leakage; I_g and G follow
    from the reference dark current and R0 (only I: G = 0; only R0: I_g = 0).

    Equivalent circuit: C = C_j + C_diff + C_package, R_sh = (dI/dv_r)^-1 at the bias,
    current = |I_dark| + R (P_signal + P_background). Its noise (shot noise of the current
    plus 4kT/R_sh) is the diode's full noise in reverse and zero bias; in forward bias
    it overstates the diffusion noise by up to a factor 2.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2 and ch. 13.
    .. [2] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996,
       ch. 1 (photodiode model: current source, C, R_sh, R_s).
    """

    junction: object
    given_responsivity: object = None
    reflectance: float | None = None
    top_thickness: float = _DEFAULT_TOP_THICKNESS
    absorber_thickness: float = np.inf
    top_diffusion_length: float = _DEFAULT_TOP_DIFFUSION_LENGTH
    lifetime: float | None = None
    generation_lifetime: float | None = None
    leakage_resistance: float = np.inf
    series_resistance: float = _DEFAULT_SERIES_RESISTANCE
    package_capacitance: float = 0.0
    illuminated_side: str = "p"
    intrinsic_bandwidth: float | None = None
    reference_dark_current: float | None = None
    reference_bias: float | None = None
    zero_bias_resistance: float | None = None
    _fit: tuple = field(init=False, repr=False, compare=False, default=None)

    # ----------------------------------------------------------------------- validation
    def __post_init__(self):
        j = self.junction
        if not callable(getattr(j, "capacitance", None)):
            raise DesignError(f"junction = {j!r} is not a junction model; pass e.g. "
                              "AbruptJunction, PinJunction or ParametricJunction",
                              parameter="junction")
        physical = self._physical
        setf = object.__setattr__
        r = self.given_responsivity
        if r is None:
            if not physical:
                raise DesignError("given_responsivity is required with a junction that has no "
                                  "material (ParametricJunction); give a number [A/W] or a "
                                  "table (wavelengths [m], responsivities [A/W])",
                                  parameter="given_responsivity")
            optics.absorption_table(j.material.name)  # DesignError if no table
        elif np.ndim(r) == 0 and not isinstance(r, dict):
            setf(self, "given_responsivity", float(require_nonnegative("given_responsivity", r,
                                                                       "A/W")))
        else:
            setf(self, "given_responsivity", _responsivity_table(r))
        if self.reflectance is not None:
            setf(self, "reflectance", require_in_range(
                "reflectance", self.reflectance, "", 0.0, 1.0, high_inclusive=False))
        # Geometry and parasitics may be arrays (one value per design point of a sweep).
        setf(self, "top_thickness", require_nonnegative("top_thickness", self.top_thickness, "m"))
        at = _out(np.asarray(optics.require_thickness_or_inf("absorber_thickness",
                                                             self.absorber_thickness), dtype=float))
        if np.any(np.asarray(at) <= 0):
            raise DesignError.out_of_range("absorber_thickness", np.min(at), "m",
                                           "> 0 (inf allowed)")
        setf(self, "absorber_thickness", at)
        setf(self, "top_diffusion_length", require_positive(
            "top_diffusion_length", self.top_diffusion_length, "m"))
        setf(self, "lifetime", _optional_positive("lifetime", self.lifetime, "s"))
        setf(self, "generation_lifetime", _optional_positive(
            "generation_lifetime", self.generation_lifetime, "s"))
        rl = np.asarray(as_float_array("leakage_resistance", self.leakage_resistance, "ohm"))
        if np.any(~(rl > 0)):  # also NaN; +inf (no leakage) is allowed
            raise DesignError.out_of_range("leakage_resistance", rl[~(rl > 0)][0] if rl.ndim
                                           else rl, "ohm", "> 0 (inf allowed)")
        setf(self, "leakage_resistance", _out(rl))
        setf(self, "series_resistance", require_nonnegative(
            "series_resistance", self.series_resistance, "ohm"))
        setf(self, "package_capacitance", require_nonnegative(
            "package_capacitance", self.package_capacitance, "F"))
        if self.illuminated_side not in ("p", "n"):
            raise DesignError(f"illuminated_side = {self.illuminated_side!r} is invalid; "
                              "valid: 'p' (p-on-n) or 'n' (n-on-p)", parameter="illuminated_side")
        setf(self, "intrinsic_bandwidth", _optional_positive(
            "intrinsic_bandwidth", self.intrinsic_bandwidth, "Hz"))
        self._setup_dark_fit()

    def _setup_dark_fit(self):
        setf = object.__setattr__
        i_ref = _optional_scalar_positive("reference_dark_current", self.reference_dark_current,
                                          "A")
        r0 = _optional_scalar_positive("zero_bias_resistance", self.zero_bias_resistance, "ohm")
        setf(self, "reference_dark_current", i_ref)
        setf(self, "zero_bias_resistance", r0)
        if i_ref is None:
            if self.reference_bias is not None:
                raise DesignError("reference_bias is given without reference_dark_current",
                                  parameter="reference_bias")
        else:
            if self.reference_bias is None:
                raise DesignError("reference_bias [V] is required with reference_dark_current",
                                  parameter="reference_bias")
            v_ref = require_in_range("reference_bias", self.reference_bias, "V",
                                     _MIN_REFERENCE_BIAS)
            if np.ndim(v_ref):
                raise DesignError("reference_bias must be a single number [V]",
                                  parameter="reference_bias")
            setf(self, "reference_bias", float(v_ref))
        if i_ref is None and r0 is None:
            setf(self, "_fit", None)
            return
        if np.any(np.isfinite(self.leakage_resistance)):
            raise DesignError("leakage_resistance cannot be combined with "
                              "reference_dark_current / zero_bias_resistance (the fit sets the "
                              "leakage); leave it at inf", parameter="leakage_resistance")
        if i_ref is None:  # only R0: ohmic
            setf(self, "_fit", (0.0, 1.0 / r0))
            return
        nvt = 2.0 * thermal_voltage(self.temperature)
        v = self.reference_bias
        s0 = self._width_ratio(v) * -np.expm1(-v / nvt)
        if r0 is None:
            setf(self, "_fit", (float(i_ref / s0), 0.0))
            return
        lo, hi = nvt * s0 / i_ref, v / i_ref
        if not lo <= r0 <= hi:
            raise DesignError.out_of_range(
                "zero_bias_resistance", r0, "ohm",
                f"{lo:.4g} to {hi:.4g} ohm for reference_dark_current = {i_ref:.4g} A at "
                f"{v:g} V (generation current plus ohmic leakage); leave one of them out")
        i_g = (1.0 / r0 - i_ref / v) / (1.0 / nvt - s0 / v)
        g = max(1.0 / r0 - i_g / nvt, 0.0)
        setf(self, "_fit", (float(max(i_g, 0.0)), float(g)))

    # ----------------------------------------------------------------------- helpers
    @property
    def _physical(self) -> bool:
        j = self.junction
        return hasattr(j, "material") and callable(getattr(j, "depletion_width", None))

    @property
    def temperature(self):
        """Temperature of the junction [K] (300 K for a parametric junction); may be an array."""
        return _out(np.asarray(getattr(self.junction, "temperature", 300.0), dtype=float))

    @property
    def material(self):
        """Material of the junction, or None for a parametric junction."""
        return getattr(self.junction, "material", None) if self._physical else None

    def _lifetimes(self):
        name = self.material.name if self._physical else ""
        tau0, taug0 = dk.default_lifetimes(name)
        return (self.lifetime if self.lifetime is not None else tau0,
                self.generation_lifetime if self.generation_lifetime is not None else taug0)

    def _fit_bias(self, v_r):
        """Check v_r [V]; the fitted dark current of a parametric junction needs v_r > -0.9 Vj.

        Its recombination term grows as e^{V/2V_T} without bound (1e5 A at 2 V, inf at
        40 V); like the physical junctions, forward bias near the junction potential is
        refused rather than returned as nonsense.
        """
        v = require_finite("v_r", v_r, "V")
        if self._fit is not None and not self._physical:
            va, lim = np.broadcast_arrays(np.asarray(v),
                                          -FORWARD_LIMIT * np.asarray(self.junction.vj))
            bad = va <= lim
            if np.any(bad):
                raise DesignError.out_of_range(
                    "v_r", va[bad][0], "V",
                    f"> -{FORWARD_LIMIT}*vj = {lim[bad][0]:.4g} V (forward bias near "
                    "the junction potential is outside the fitted dark-current model)")
        return v

    def _width_ratio(self, v_r):
        """C_j(0)/C_j(v_r) [-]: depletion width relative to zero bias (W ~ 1/C_j)."""
        return np.asarray(self.junction.capacitance(0.0)) / np.asarray(
            self.junction.capacitance(v_r))

    def _slope_points(self, v_r):
        """Bias pair (v_lo, v_hi), v_hi - v_lo = step, for a one-sided difference at v_r.

        Forward difference, turned backward near the breakdown estimate so that the
        derivative exists at every bias the junction accepts (up to breakdown_voltage()).
        """
        v = np.asarray(v_r, dtype=float)
        limits = getattr(self.junction, "_bias_limits", None)  # (Vbi, breakdown), cached
        hi = v + _SLOPE_STEP if limits is None else np.minimum(v + _SLOPE_STEP, limits[1])
        return hi - _SLOPE_STEP, hi

    def _width_slope(self, v_r):
        j = self.junction
        lo, hi = self._slope_points(v_r)
        return np.maximum((np.asarray(j.depletion_width(hi))
                           - np.asarray(j.depletion_width(lo))) / _SLOPE_STEP, 0.0)

    def _has_optics(self) -> bool:
        if not self._physical:
            return False
        try:
            optics.absorption_table(self.material.name)
        except DesignError:
            return False
        return True

    def _mobilities(self):
        """(mu_top_minority, mu_bottom_minority, mu_far, v_sat_far, mu_near, v_sat_near)."""
        m = self.material
        if self.illuminated_side == "p":  # electrons minority on top and drift away
            return m.mu_n, m.mu_p, m.mu_n, m.v_sat_n, m.mu_p, m.v_sat_p
        return m.mu_p, m.mu_n, m.mu_p, m.v_sat_p, m.mu_n, m.v_sat_n

    def _stack(self, v_r):
        """Layer stack at bias: top d, depletion W, bottom H [m], and the diffusion data."""
        w = np.asarray(self.junction.depletion_width(v_r), dtype=float)
        bottom = np.maximum(self.absorber_thickness - w, 0.0)
        t = self.temperature
        mu_top, mu_bot, *_ = self._mobilities()
        tau, _ = self._lifetimes()
        d_top, d_bot = dk.diffusivity(mu_top, t), dk.diffusivity(mu_bot, t)
        l_top = self.top_diffusion_length
        return dict(top_thickness=self.top_thickness, depletion_width=w, bottom_thickness=bottom,
                    top_diffusion_length=l_top,
                    bottom_diffusion_length=dk.diffusion_length(d_bot, tau),
                    top_lifetime=l_top**2 / d_top, bottom_lifetime=tau)

    def _velocities(self, v_r):
        """Drift velocities (far, near) [m/s] at the mean depletion field (Vbi + v_r)/W."""
        j = self.junction
        w = np.asarray(j.depletion_width(v_r), dtype=float)
        e_mean = (np.asarray(v_r, dtype=float) + j.built_in_potential()) / w
        _, _, mu_f, vs_f, mu_n, vs_n = self._mobilities()
        return (np.asarray(speed.drift_velocity(e_mean, mu_f, vs_f)),
                np.asarray(speed.drift_velocity(e_mean, mu_n, vs_n)))

    def _reflectance(self):
        if self.reflectance is not None:
            return self.reflectance
        return optics.fresnel_reflectance(np.sqrt(self.material.eps_r))

    def _alpha(self, wavelength):
        return np.asarray(optics.absorption_coefficient(wavelength, self.material,
                                                        self.temperature))

    # ----------------------------------------------------------------------- optics
    def collection_fractions(self, wavelength, v_r=0.0):
        """Collected carriers per incident photon by region: (top, drift, bottom) [-].

        Physics mode only (see :func:`~photorx.device.optics.collection_fractions`); the
        front reflectance is included, so the sum is the quantum efficiency. The drift part
        absorbs over min(W, absorber_thickness).
        """
        self._require_optics("collection_fractions")
        st = self._stack(v_r)
        for k in ("top_lifetime", "bottom_lifetime"):
            st.pop(k)
        # only the absorbing part of the depletion layer generates carriers: a depletion
        # layer reaching through a thin absorber into a transparent layer (InGaAs on InP)
        # must not absorb beyond absorber_thickness
        st["depletion_width"] = np.minimum(st["depletion_width"], self.absorber_thickness)
        parts = optics.collection_fractions(self._alpha(wavelength), **st)
        r = self._reflectance()
        return tuple(_out((1.0 - r) * np.asarray(p)) for p in parts)

    def _require_optics(self, what):
        if not self._has_optics():
            raise DesignError(f"{what} needs a physical junction whose material has an "
                              f"absorption table ({', '.join(optics.ABSORPTION_MATERIALS)})",
                              parameter="junction")

    def responsivity(self, wavelength, v_r=0.0):
        """Responsivity [A/W] at vacuum wavelength [m] and reverse bias [V].

        Notes
        -----
        Physics mode: R = eta q lambda / (h c) with eta from :meth:`quantum_efficiency`.
        With ``given_responsivity``: that number, or the table interpolated linearly
        (DesignError outside the table; ``wavelength`` may be None for a number).

        References
        ----------
        .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed.,
           Wiley, 2007, ch. 13.
        """
        r = self.given_responsivity
        if r is None:
            return optics.responsivity_from_qe(
                np.clip(self.quantum_efficiency(wavelength, v_r), 0.0, 1.0), wavelength)
        wl = require_positive("wavelength", wavelength, "m") if wavelength is not None else 0.0
        v = require_finite("v_r", v_r, "V")
        if isinstance(r, tuple):
            if wavelength is None:
                raise DesignError("wavelength [m] is required with a responsivity table",
                                  parameter="wavelength")
            out = np.asarray(optics.interpolate_responsivity(wl, r[0], r[1]))
        else:
            out = np.asarray(r)
        return _out(out + 0.0 * np.asarray(wl) + 0.0 * np.asarray(v))

    def quantum_efficiency(self, wavelength, v_r=0.0):
        """External quantum efficiency [-] at vacuum wavelength [m] and reverse bias [V].

        Physics mode: (1 - R)(C_t + e^{-alpha d}(1 - e^{-alpha W}) + e^{-alpha(d+W)} C_b),
        see :func:`~photorx.device.optics.quantum_efficiency`; grows with reverse bias at
        long wavelengths as W widens. Given responsivity: eta = R h c / (q lambda).
        """
        if self.given_responsivity is not None:
            return optics.qe_from_responsivity(self.responsivity(wavelength, v_r), wavelength)
        return _out(sum(np.asarray(p) for p in self.collection_fractions(wavelength, v_r)))

    def diffusion_fraction(self, wavelength, v_r=0.0):
        """Share of the DC photocurrent carried by slow diffusion from undepleted layers [-].

        0 when the optics is not modelled (parametric junction).
        """
        if not self._has_optics():
            return _out(0.0 * np.asarray(wavelength, dtype=float) + 0.0 * np.asarray(v_r))
        top, drift, bottom = (np.asarray(p) for p in self.collection_fractions(wavelength, v_r))
        total = top + drift + bottom
        with np.errstate(invalid="ignore", divide="ignore"):
            return _out(np.where(total > 0, (top + bottom) / np.where(total > 0, total, 1.0), 0.0))

    # ----------------------------------------------------------------------- electrical
    def capacitance(self, v_r=0.0):
        """Total diode capacitance [F]: junction + diffusion (forward bias) + package.

        Notes
        -----
        C = C_j(v_r) + tau I_F / (2 n V_T) + C_pkg, the long-diode diffusion capacitance of
        the forward current I_F (lifetime tau, see
        :func:`~photorx.device.junction.diffusion_capacitance`).
        """
        cj = np.asarray(self.junction.capacitance(v_r))
        i_f, n = self._forward_current(v_r)
        tau, _ = self._lifetimes()
        cd = diffusion_capacitance(i_f, tau / 2.0, n, self.temperature)
        return _out(cj + cd + self.package_capacitance)

    def _forward_current(self, v_r):
        """Forward current that stores charge [A] and its ideality, for C_diff."""
        v = np.asarray(require_finite("v_r", v_r, "V"))
        if np.all(v >= 0):
            return np.zeros(v.shape) if v.ndim else 0.0, 1.0
        if self._fit is not None:
            return np.maximum(-np.asarray(self.dark_current(v)), 0.0), 2.0
        if not self._physical:
            return np.zeros(v.shape) if v.ndim else 0.0, 1.0
        return np.maximum(-np.asarray(self._dark_parts(v)["diffusion"]), 0.0), 1.0

    def _saturation_current(self, v_r):
        j = self.junction
        m = j.material
        t = self.temperature
        tau, _ = self._lifetimes()
        na, nd = _contact_dopings(j)
        d_n, d_p = dk.diffusivity(m.mu_n, t), dk.diffusivity(m.mu_p, t)
        l_n, l_p = dk.diffusion_length(d_n, tau), dk.diffusion_length(d_p, tau)
        w = np.asarray(j.depletion_width(v_r), dtype=float)
        bottom = np.maximum(self.absorber_thickness - w, 0.0)
        # the top layer is the p layer for p-on-n; its diffusion length is given directly
        if self.illuminated_side == "p":
            l_n, wp, wn = self.top_diffusion_length, self.top_thickness, bottom
        else:
            l_p, wp, wn = self.top_diffusion_length, bottom, self.top_thickness
        return dk.diffusion_saturation_current(j.area, m.intrinsic_density(t), na, nd, d_n, d_p,
                                               l_n, l_p, wp, wn)

    def _dark_parts(self, v_r):
        j = self.junction
        t = self.temperature
        _, tau_g = self._lifetimes()
        ni = j.material.intrinsic_density(t)
        i_s = self._saturation_current(v_r)
        w = j.depletion_width(v_r)
        return {"diffusion": np.asarray(dk.diffusion_current(v_r, i_s, t)),
                "generation": np.asarray(dk.generation_current(v_r, j.area, ni, w, tau_g, t)),
                "leakage": np.asarray(dk.leakage_current(v_r, self.leakage_resistance))}

    def dark_current_components(self, v_r=0.0):
        """Dark current by mechanism [A]: dict with "diffusion", "generation", "leakage".

        Positive in the reverse direction. With a fitted (datasheet) dark current the
        fitted generation-like and leakage parts are returned and "diffusion" is 0.
        """
        v = self._fit_bias(v_r)
        if self._fit is not None:
            i_g, g = self._fit
            nvt = 2.0 * thermal_voltage(self.temperature)
            gen = i_g * self._width_ratio(v) * -np.expm1(-np.asarray(v) / nvt)
            parts = {"diffusion": 0.0 * np.asarray(v), "generation": gen,
                     "leakage": g * np.asarray(v)}
        elif self._physical:
            parts = self._dark_parts(v)
        else:
            parts = {k: 0.0 * np.asarray(v) for k in ("diffusion", "generation", "leakage")}
            parts["leakage"] = np.asarray(dk.leakage_current(v, self.leakage_resistance))
        return {k: _out(np.asarray(p, dtype=float)) for k, p in parts.items()}

    def dark_current(self, v_r=0.0):
        """Dark current [A] at reverse bias ``v_r`` [V]; positive in the reverse direction.

        Notes
        -----
        Sum of :meth:`dark_current_components`: diffusion I_s (1 - e^{-v_r/V_T}) ~ ni^2,
        generation q A ni W / tau_g (1 - e^{-v_r/2V_T}) ~ ni W, leakage v_r / R_leak.
        Temperature enters through the junction's temperature (ni, V_T, D); see
        :meth:`at_temperature`. Zero at zero bias; negative (forward current) in forward bias.

        References
        ----------
        .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed.,
           Wiley, 2007, ch. 2 (diffusion and generation currents).
        """
        parts = self.dark_current_components(v_r)
        return _out(sum(np.asarray(p) for p in parts.values()))

    def shunt_resistance(self, v_r=0.0):
        """Differential (shunt) resistance (dI_dark/dv_r)^-1 [ohm] at the bias; R0 at 0 V.

        Notes
        -----
        R_sh = [I_s e^{-v_r/V_T}/V_T + dI_gen/dv_r + 1/R_leak]^-1 (physics); with a fitted
        dark current the derivative of the fitted form. inf when nothing conducts.
        """
        v = np.asarray(self._fit_bias(v_r), dtype=float)
        t = self.temperature
        vt = thermal_voltage(t)
        if self._fit is not None:
            i_g, g = self._fit
            nvt = 2.0 * vt
            s = self._width_ratio(v)
            lo, hi = self._slope_points(v)
            ds = (self._width_ratio(hi) - self._width_ratio(lo)) / _SLOPE_STEP
            cond = i_g * (s * np.exp(-v / nvt) / nvt - np.expm1(-v / nvt) * ds) + g
        elif self._physical:
            j = self.junction
            _, tau_g = self._lifetimes()
            i_s = np.asarray(self._saturation_current(v))
            cond = (i_s * np.exp(-v / vt) / vt
                    + np.asarray(dk.generation_conductance(
                        v, j.area, j.material.intrinsic_density(t), j.depletion_width(v),
                        self._width_slope(v), tau_g, t))
                    + 1.0 / self.leakage_resistance)
        else:
            cond = 0.0 * v + 1.0 / self.leakage_resistance
        with np.errstate(divide="ignore"):
            return _out(1.0 / np.asarray(cond, dtype=float))

    # ----------------------------------------------------------------------- speed
    def transit_time(self, v_r=0.0):
        """Time for the slower carrier to cross the whole depletion layer, W / v [s].

        Drift velocity at the mean field (Vbi + v_r)/W with saturation
        (:func:`~photorx.device.speed.drift_velocity`); so zero-bias (photovoltaic)
        operation is slow. With ``intrinsic_bandwidth`` given: the equivalent
        uniform-generation transit time 0.553 / f_3dB.
        """
        if self.intrinsic_bandwidth is not None:
            return _out(speed.UNIFORM_TRANSIT_FACTOR / self.intrinsic_bandwidth
                        + 0.0 * np.asarray(require_finite("v_r", v_r, "V")))
        self._require_physical("transit_time")
        vf, vn = self._velocities(v_r)
        w = np.asarray(self.junction.depletion_width(v_r))
        return _out(w / np.minimum(vf, vn))

    def _require_physical(self, what):
        if not self._physical:
            raise DesignError(f"{what} needs a physical junction or intrinsic_bandwidth",
                              parameter="intrinsic_bandwidth")

    def transit_bandwidth(self, v_r=0.0, wavelength=None):
        """Transit-limited 3-dB bandwidth of the drift photocurrent [Hz].

        ``wavelength`` None: uniform generation across the depletion layer; otherwise the
        absorption profile at that wavelength. See
        :func:`~photorx.device.speed.transit_bandwidth`. inf for a parametric junction
        without ``intrinsic_bandwidth``.
        """
        if self.intrinsic_bandwidth is not None:
            return _out(self.intrinsic_bandwidth + 0.0 * np.asarray(
                require_finite("v_r", v_r, "V")))
        if not self._physical:
            return _out(np.inf + 0.0 * np.asarray(require_finite("v_r", v_r, "V")))
        vf, vn = self._velocities(v_r)
        w = np.asarray(self.junction.depletion_width(v_r))
        a = 0.0 if wavelength is None else self._alpha(wavelength)
        return speed.transit_bandwidth(w, vf, vn, a)

    def rc_bandwidth(self, v_r=0.0, load_resistance=50.0):
        """RC limit 1 / (2 pi (R_s + R_L) C) [Hz] with a load resistance [ohm]."""
        rl = require_nonnegative("load_resistance", load_resistance, "ohm")
        return speed.rc_bandwidth(self.capacitance(v_r), self.series_resistance + np.asarray(rl))

    def bandwidth(self, v_r=0.0, load_resistance=50.0, wavelength=None):
        """Transit and RC limits combined, (f_t^-2 + f_RC^-2)^-1/2 [Hz] (no diffusion tail)."""
        return speed.combined_bandwidth(self.transit_bandwidth(v_r, wavelength),
                                        self.rc_bandwidth(v_r, load_resistance))

    def intrinsic_response(self, f, v_r=0.0, wavelength=None):
        """Intrinsic photocurrent response H(f) of the diode, complex, H(0) = 1.

        Parameters
        ----------
        f : float or array_like
            Frequency [Hz], >= 0.
        v_r : float or array_like
            Reverse bias [V].
        wavelength : float or array_like, optional
            Vacuum wavelength [m]; needed for the physics model (absorption profile and
            diffusion tails). Without it the drift part for uniform generation is used.

        Notes
        -----
        Physics: the drift (Ramo) and diffusion parts of
        :func:`~photorx.device.speed.photocurrent_spectrum`, normalised by their DC sum.
        The circuit response (C, R_s, amplifier) multiplies this. With
        ``intrinsic_bandwidth``: the uniform-generation transit response with that f_3dB;
        parametric junction without it: H = 1.
        """
        fr = np.asarray(require_nonnegative("f", f, "Hz"))
        if self.intrinsic_bandwidth is not None or not self._physical:
            v = np.asarray(require_finite("v_r", v_r, "V"))
            if self.intrinsic_bandwidth is None:
                return _out(np.ones(np.broadcast(fr, v).shape) + 0j)
            tau = speed.UNIFORM_TRANSIT_FACTOR / self.intrinsic_bandwidth
            h = speed._drift_spectrum(2 * np.pi * fr, 1e-6, tau, tau) / -np.expm1(-1e-6)
            return _out(np.asarray(h) + 0.0 * v)
        vf, vn = self._velocities(v_r)
        if wavelength is None or not self._has_optics():
            w = np.asarray(self.junction.depletion_width(v_r))
            return speed.drift_response(fr, w, vf, vn)
        st = self._stack(v_r)
        parts = speed.photocurrent_spectrum(fr, self._alpha(wavelength), v_far=vf, v_near=vn,
                                            **st)
        dc = speed.photocurrent_spectrum(0.0, self._alpha(wavelength), v_far=vf, v_near=vn,
                                         **st)
        num = sum(np.asarray(p) for p in parts)
        den = np.real(sum(np.asarray(p) for p in dc))
        with np.errstate(invalid="ignore", divide="ignore"):
            h = np.where(den > 0, num / np.where(den > 0, den, 1.0), 1.0 + 0j)
        return _out(h)

    def diffusion_time_constant(self, wavelength, v_r=0.0):
        """Mean delay of the diffusion part of the photocurrent [s] (0 if there is none).

        Notes
        -----
        tau = -Im H_d(w) / (w H_d(0)) for w -> 0, the first moment of the diffusion
        impulse response of :func:`~photorx.device.speed.photocurrent_spectrum` (top and
        bottom parts); for carriers generated a distance d from the edge it is close to
        d^2 / (2 D) (:func:`~photorx.device.speed.diffusion_time`), and tends to the
        lifetime for weakly absorbed light in a thick layer.
        """
        self._require_optics("diffusion_time_constant")
        st = self._stack(v_r)
        vf, vn = self._velocities(v_r)
        scale = np.maximum(st["top_lifetime"], st["bottom_lifetime"])
        omega = 1e-6 / scale
        a = self._alpha(wavelength)
        top0, _, bot0 = speed.photocurrent_spectrum(0.0, a, v_far=vf, v_near=vn, **st)
        top1, _, bot1 = speed.photocurrent_spectrum(omega / (2 * np.pi), a, v_far=vf, v_near=vn,
                                                    **st)
        dc = np.real(np.asarray(top0) + bot0)
        with np.errstate(invalid="ignore", divide="ignore"):
            tau = np.where(dc > 0, -np.imag(np.asarray(top1) + bot1)
                           / (omega * np.where(dc > 0, dc, 1.0)), 0.0)
        return _out(tau)

    # ----------------------------------------------------------------------- circuit
    def equivalent_circuit(self, v_r=0.0, optical_power=0.0, wavelength=None,
                           background_power=0.0):
        """Small-signal equivalent circuit at an operating point.

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].
        optical_power : float or array_like, optional
            Signal optical power on the diode [W], >= 0.
        wavelength : float or array_like, optional
            Vacuum wavelength [m]; required when any optical power is given (unless the
            responsivity is a single number).
        background_power : float or array_like, optional
            Background optical power at the same wavelength [W], >= 0.

        Returns
        -------
        EquivalentCircuit
            capacitance :meth:`capacitance`, series_resistance, shunt_resistance
            :meth:`shunt_resistance` at ``v_r``, current = |I_dark| + R (P + P_bg).
        """
        p = np.asarray(require_nonnegative("optical_power", optical_power, "W"))
        pb = np.asarray(require_nonnegative("background_power", background_power, "W"))
        i_dark = np.abs(np.asarray(self.dark_current(v_r)))
        if np.any(p > 0) or np.any(pb > 0):
            if wavelength is None and not isinstance(self.given_responsivity, float):
                raise DesignError("wavelength [m] is required when optical_power or "
                                  "background_power is given", parameter="wavelength")
            i_ph = np.asarray(self.responsivity(wavelength, v_r)) * (p + pb)
        else:
            i_ph = 0.0 * (p + pb)
        return EquivalentCircuit(capacitance=self.capacitance(v_r),
                                 series_resistance=self.series_resistance,
                                 shunt_resistance=self.shunt_resistance(v_r),
                                 current=_out(i_dark + i_ph))

    # ----------------------------------------------------------------------- variants
    def at_temperature(self, temperature):
        """The same diode with its junction at another temperature [K] (physics mode).

        Raises
        ------
        DesignError
            Parametric junction or fitted dark current (datasheet values hold at their
            measurement temperature only).
        """
        if not self._physical or self._fit is not None:
            raise DesignError("at_temperature needs a physical junction and the physical "
                              "dark-current model (datasheet values hold at their measurement "
                              "temperature)", parameter="temperature")
        j = dataclasses.replace(self.junction, temperature=temperature)
        return dataclasses.replace(self, junction=j)

    @classmethod
    def from_datasheet(cls, responsivity, capacitance=None, capacitance_bias=None, cj0=None,
                       vj=0.7, m=None, dark_current=None, dark_current_bias=None,
                       shunt_resistance=None, series_resistance=_DEFAULT_SERIES_RESISTANCE,
                       package_capacitance=0.0, bandwidth=None, fc=0.5):
        """Photodiode from the few numbers of a datasheet-style description.

        Parameters
        ----------
        responsivity : float or table
            [A/W], a number or a table (wavelengths [m], responsivities [A/W]).
        capacitance : float or (float, float), optional
            Junction capacitance [F] at ``capacitance_bias``: two values (fit of Cj0 and m
            with ``vj`` fixed) or one value (then ``m`` default 0: fixed capacitance).
        capacitance_bias : float or (float, float), optional
            Reverse bias of those capacitances [V].
        cj0, vj, m : float, optional
            Alternatively the parametric form Cj0/(1 + v_r/Vj)^m: cj0 [F], vj [V]
            (default 0.7 V, also used in the two-point fit), m [-].
        dark_current : float, optional
            Dark current [A] at ``dark_current_bias`` [V].
        dark_current_bias : float, optional
            Reverse bias of ``dark_current`` [V], >= 0.1.
        shunt_resistance : float, optional
            Zero-bias shunt resistance R0 [ohm].
        series_resistance : float, optional
            [ohm] (default 10).
        package_capacitance : float, optional
            [F] added to the junction capacitance (default 0).
        bandwidth : float, optional
            Intrinsic (transit) 3-dB bandwidth [Hz]; default none (no intrinsic limit).
        fc : float, optional
            Forward-bias coefficient of the parametric junction [-].

        Returns
        -------
        Photodiode
            On a :class:`~photorx.device.junction.ParametricJunction`; reproduces the
            given capacitances, responsivity, dark current and R0.

        Notes
        -----
        Two capacitance points C1, C2 at v1, v2 with Vj fixed:
        m = ln(C1/C2) / ln((Vj + v2)/(Vj + v1)), Cj0 = C1 (1 + v1/Vj)^m.
        """
        if cj0 is not None:
            if capacitance is not None:
                raise DesignError("give either capacitance (with capacitance_bias) or cj0, "
                                  "not both", parameter="capacitance")
            junction = ParametricJunction(cj0=cj0, vj=vj, m=0.5 if m is None else m, fc=fc)
        else:
            if capacitance is None or capacitance_bias is None:
                raise DesignError("capacitance [F] and capacitance_bias [V] (or cj0, vj, m) "
                                  "are required", parameter="capacitance")
            cc = np.atleast_1d(require_positive("capacitance", capacitance, "F")).astype(float)
            vb = np.atleast_1d(require_finite("capacitance_bias", capacitance_bias, "V"))
            vj_ = float(require_in_range("vj", vj, "V", 0.01, 10.0))
            if cc.shape != vb.shape or cc.size not in (1, 2):
                raise DesignError("capacitance and capacitance_bias must both be one number or "
                                  "both two numbers", parameter="capacitance")
            if np.any(vb <= -vj_ * fc):
                raise DesignError.out_of_range("capacitance_bias", vb.min(), "V",
                                               f"> -fc*vj = {-fc * vj_:g} V")
            if cc.size == 2:
                if m is not None:
                    raise DesignError("m is fitted from two capacitance points; leave it out",
                                      parameter="m")
                if vb[0] == vb[1]:
                    raise DesignError("the two capacitance_bias values must differ",
                                      parameter="capacitance_bias")
                m_fit = np.log(cc[0] / cc[1]) / np.log((vj_ + vb[1]) / (vj_ + vb[0]))
                if not 0.0 <= m_fit <= 2.0:
                    raise DesignError.out_of_range(
                        "capacitance", cc[1], "F",
                        "a capacitance that falls with reverse bias with grading coefficient "
                        f"0 to 2 (the two points give m = {m_fit:.3g})")
                m_ = float(m_fit)
            else:
                m_ = 0.0 if m is None else float(m)
            junction = ParametricJunction(cj0=float(cc[0] * (1.0 + vb[0] / vj_) ** m_), vj=vj_,
                                          m=m_, fc=fc)
        try:
            return cls(junction=junction, given_responsivity=responsivity,
                       series_resistance=series_resistance,
                       package_capacitance=package_capacitance, intrinsic_bandwidth=bandwidth,
                       reference_dark_current=dark_current, reference_bias=dark_current_bias,
                       zero_bias_resistance=shunt_resistance)
        except DesignError as exc:  # speak the datasheet's names
            names = {"given_responsivity": "responsivity", "intrinsic_bandwidth": "bandwidth",
                     "reference_dark_current": "dark_current",
                     "reference_bias": "dark_current_bias",
                     "zero_bias_resistance": "shunt_resistance"}
            msg = str(exc)
            for old, new in names.items():
                msg = msg.replace(old, new)
            raise DesignError(msg, parameter=names.get(exc.parameter, exc.parameter)) from None


def _contact_dopings(junction):
    """(N_A of the p layer, N_D of the n layer) [m^-3] outside the depletion layer."""
    if hasattr(junction, "na") and hasattr(junction, "nd"):
        return junction.na, junction.nd
    if hasattr(junction, "p_doping") and hasattr(junction, "n_doping"):
        return junction.p_doping, junction.n_doping
    if hasattr(junction, "gradient"):  # graded: doping at the zero-bias depletion edges
        x_p, x_n = junction.depletion_edges(0.0)
        return junction.gradient * x_p, junction.gradient * x_n
    raise DesignError(f"cannot find the dopings of junction {type(junction).__name__}; give "
                      "reference_dark_current", parameter="junction")
