"""Dark current and shunt resistance of a :class:`~photorx.device.photodiode.Photodiode`.

The routing half of the photodiode shell for its dark current: either the physical model
of :mod:`~photorx.device.darkcurrent` (diffusion from the undepleted layers, generation in
the depletion layer, ohmic leakage) or a fit to measured values (a reference dark current
and/or the zero-bias shunt resistance R0). :class:`DarkCurrentRoutes` is a mixin of
:class:`~photorx.device.photodiode.Photodiode`; it holds no fields of its own.
"""

from __future__ import annotations

import numpy as np

from .._validate import require_finite, require_in_range, require_positive
from ..constants import thermal_voltage
from ..errors import DesignError
from . import darkcurrent as dk
from .junction import FORWARD_LIMIT

__all__ = ["DarkCurrentRoutes", "MIN_REFERENCE_BIAS", "datasheet_temperature_factors",
           "junction_potential_at_temperature"]

MIN_REFERENCE_BIAS = 0.1  # [V] a dark current quoted nearer 0 V does not separate the terms
_MIN_REFERENCE_BIAS = MIN_REFERENCE_BIAS
_SLOPE_STEP = 1e-4  # [V] step for dW/dV


def _out(x):
    return x if np.ndim(x) else (complex(x) if np.iscomplexobj(x) else float(x))


def _optional_scalar_positive(name, value, unit):
    """None, or a single ``value`` > 0 (the datasheet fit is solved for one diode at a time)."""
    if value is None:
        return None
    out = require_positive(name, value, unit)
    if np.ndim(out):
        raise DesignError(f"{name} must be a single number [{unit}], not an array of shape "
                          f"{np.shape(out)}; build one Photodiode per datasheet", parameter=name)
    return float(out)


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



def datasheet_temperature_factors(temperature, reference_temperature, band_gap):
    """Scale factors of fitted (datasheet) dark-current terms from T0 to T [-].

    Parameters
    ----------
    temperature, reference_temperature : float
        Temperature T and the temperature T0 of the datasheet values [K].
    band_gap : float
        Band gap of the diode material [eV] (its 300 K value; the law's activation).

    Returns
    -------
    generation, diffusion : float
        Factor of the generation-like term (~ ni) and of the zero-bias conductance term
        (~ ni^2, diffusion-like).

    Notes
    -----
    ni ~ T^(3/2) exp(-Eg / 2kT): generation = (T/T0)^(3/2) exp(-(Eg/2k)(1/T - 1/T0)),
    diffusion = (T/T0)^3 exp(-(Eg/k)(1/T - 1/T0)). For Si (1.12 eV) the generation term
    doubles about every 8-9 K near room temperature (common practice: silicon dark current
    doubles every 8-10 K).

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 1, Eq. (25) (ni) and ch. 2 (generation ~ ni, diffusion ~ ni^2).
    """
    t, t0 = float(temperature), float(reference_temperature)
    kq = 8.617333262e-5  # Boltzmann constant [eV/K] (scipy.constants k/e)
    x = (1.0 / t - 1.0 / t0) / kq
    return (t / t0) ** 1.5 * np.exp(-band_gap * x / 2.0), (t / t0) ** 3 * np.exp(-band_gap * x)


def junction_potential_at_temperature(vj, temperature, reference_temperature, band_gap):
    """Junction (built-in) potential Vj at T from its value at T0 [V].

    Parameters
    ----------
    vj : float
        Junction potential Vj0 at ``reference_temperature`` [V], > 0.
    temperature : float
        Temperature T [K], > 0 (not checked here; :meth:`Photodiode.at_temperature`
        passes 50 to 600 K).
    reference_temperature : float
        Temperature T0 of ``vj`` [K], > 0.
    band_gap : float
        Band gap of the diode material [eV], its 300 K value (held fixed).

    Notes
    -----
    Vbi = Eg/q - (kT/q) ln(Nc Nv / (N_A N_D)) with Nc Nv ~ T^3 gives
    Vj(T) = Eg + (Vj0 - Eg) T/T0 - 3 (k/q) T ln(T/T0) (Eg in V, held at its 300 K value):
    about -1.7 mV/K for a silicon diode with Vj0 = 0.7 V (common practice: -1.5 to
    -2.5 mV/K). The depletion capacitance follows as C ~ (Vj + v_r)^-m.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2, Eq. (3) (Vbi) and ch. 1 (Nc, Nv ~ T^(3/2)).
    """
    t, t0 = float(temperature), float(reference_temperature)
    kq = 8.617333262e-5
    return band_gap + (vj - band_gap) * t / t0 - 3.0 * kq * t * np.log(t / t0)


class DarkCurrentRoutes:
    """Dark current, its components and the shunt resistance (mixin of Photodiode)."""

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
        d_n = dk.diffusivity(m._transport("n", "mu", t), t)  # T checked by the junction
        d_p = dk.diffusivity(m._transport("p", "mu", t), t)
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

        Parameters
        ----------
        v_r : float or array_like, optional
        Reverse bias [V], default 0; positive = reverse, negative = forward. Finite, and
        for a physical junction -0.9 Vbi < v_r <= ``junction.breakdown_voltage()`` (the
        breakdown estimate); with a fitted dark current on a parametric junction
        v_r > -0.9 vj. DesignError otherwise.
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

        Parameters
        ----------
        v_r : float or array_like, optional
        Reverse bias [V], default 0; positive = reverse, negative = forward. Finite, and
        for a physical junction -0.9 Vbi < v_r <= ``junction.breakdown_voltage()`` (the
        breakdown estimate); with a fitted dark current on a parametric junction
        v_r > -0.9 vj. DesignError otherwise.

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

        Parameters
        ----------
        v_r : float or array_like, optional
        Reverse bias [V], default 0; positive = reverse, negative = forward. Finite, and
        for a physical junction -0.9 Vbi < v_r <= ``junction.breakdown_voltage()`` (the
        breakdown estimate); with a fitted dark current on a parametric junction
        v_r > -0.9 vj. DesignError otherwise.

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
