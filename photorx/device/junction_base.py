"""What every physical junction model shares: input checks, bias limits, diffusion capacitance.

The junction classes (abrupt, linearly graded, PIN) are frozen dataclasses that validate
their design in ``__post_init__`` and route each call to a pure, vectorised function of
numpy arrays. This module holds the pieces they have in common.
"""

from __future__ import annotations

import functools

import numpy as np

from .._validate import require_finite, require_in_range, require_nonnegative, require_positive
from ..constants import thermal_voltage
from ..errors import DesignError
from .materials import Material, check_temperature, material

__all__ = [
    "FORWARD_LIMIT",
    "MAX_DOPING",
    "diffusion_capacitance",
    "JunctionBase",
]

#: Largest forward bias accepted by the depletion models, as a fraction of Vbi. Beyond it
#: the depletion approximation (no free carriers in the depletion layer) fails badly.
FORWARD_LIMIT = 0.9

#: Largest doping accepted [m^-3] (1e21 cm^-3, beyond solid solubility of common dopants).
MAX_DOPING = 1e27


def diffusion_capacitance(i_forward, transit_time, ideality=1.0, temperature=300.0):
    """Small-signal diffusion (storage) capacitance of a forward-biased junction.

    Parameters
    ----------
    i_forward : float or array_like
        Forward DC current [A], >= 0.
    transit_time : float or array_like
        Minority-carrier lifetime (long diode) or transit time (short diode) [s], >= 0.
    ideality : float or array_like, optional
        Ideality factor n [-], 1 to 5.
    temperature : float or array_like, optional
        Temperature [K], 50 to 600.

    Returns
    -------
    float or numpy.ndarray
        Diffusion capacitance [F].

    Notes
    -----
    C_d = tau I / (n V_T), V_T = kT/q. For a long diode the low-frequency small-signal
    value carries an extra factor 1/2 (tau = lifetime); pass ``transit_time = tau/2`` for
    that case. It dominates the junction capacitance at moderate forward current.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2, section on diffusion capacitance.
    """
    i = require_nonnegative("i_forward", i_forward, "A")
    tau = require_nonnegative("transit_time", transit_time, "s")
    n = require_in_range("ideality", ideality, "", 1.0, 5.0)
    vt = thermal_voltage(check_temperature(temperature))
    out = np.asarray(tau) * np.asarray(i) / (np.asarray(n) * vt)
    return out if np.ndim(out) else float(out)


def check_material(value) -> Material:
    """Accept a :class:`Material` or a material name; anything else is a DesignError."""
    if isinstance(value, Material):
        return value
    if isinstance(value, str):
        return material(value)
    raise DesignError(f"material = {value!r} is invalid; pass a Material, e.g. "
                      f"photorx.material('Si')", parameter="material")


def check_doping(name: str, value, ni):
    """Doping [m^-3] must exceed the intrinsic density and stay below :data:`MAX_DOPING`."""
    n = require_positive(name, value, "m^-3")
    a, lim = np.broadcast_arrays(np.asarray(n), np.asarray(ni, dtype=float))
    bad = (a <= lim) | (a > MAX_DOPING)
    if np.any(bad):
        raise DesignError.out_of_range(
            name, a[bad][0], "m^-3",
            f"> ni(T) = {lim[bad][0]:.4g} m^-3 (intrinsic density) and <= {MAX_DOPING:.0e} m^-3")
    return n


class JunctionBase:
    """Mixin of the physical junctions: bias checks and total small-signal capacitance.

    Subclasses provide ``built_in_potential()``, ``breakdown_voltage()``,
    ``capacitance(v_r)`` and the fields ``material``, ``area``, ``temperature``.
    """

    def _setup_common(self):
        object.__setattr__(self, "material", check_material(self.material))
        object.__setattr__(self, "temperature", check_temperature(self.temperature))
        object.__setattr__(self, "area", require_positive("area", self.area, "m^2"))

    @functools.cached_property
    def _bias_limits(self):
        # a frozen design never changes, so Vbi and the breakdown estimate are computed once
        return self.built_in_potential(), self.breakdown_voltage()

    def _total_potential(self, v_r):
        """Validate the reverse bias ``v_r`` [V] and return Vbi + v_r [V] (broadcast)."""
        v = require_finite("v_r", v_r, "V")
        vbi, vbr = self._bias_limits
        va, vb = np.broadcast_arrays(np.asarray(v), np.asarray(vbi))
        bad = va <= -FORWARD_LIMIT * vb
        if np.any(bad):
            raise DesignError.out_of_range(
                "v_r", va[bad][0], "V",
                f"> -{FORWARD_LIMIT}*Vbi = {-FORWARD_LIMIT * vb[bad][0]:.4g} V (forward bias "
                "near the built-in potential is outside the depletion approximation)")
        va, vbr_b = np.broadcast_arrays(np.asarray(v), np.asarray(vbr))
        bad = (va > 0) & (va > vbr_b)
        if np.any(bad):
            raise DesignError.out_of_range(
                "v_r", va[bad][0], "V",
                f"<= breakdown_voltage() = {vbr_b[bad][0]:.4g} V (avalanche breakdown estimate)")
        out = np.asarray(v) + vbi
        return out if np.ndim(out) else float(out)

    def total_capacitance(self, v_r, i_forward=0.0, transit_time=0.0, ideality=1.0):
        """Junction plus diffusion capacitance [F] at bias ``v_r`` [V] and forward current [A].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V]; negative is forward bias.
        i_forward : float or array_like, optional
            Forward DC current [A], >= 0 (0 in reverse bias).
        transit_time : float or array_like, optional
            Minority-carrier transit time or lifetime [s], >= 0.
        ideality : float or array_like, optional
            Ideality factor [-].

        Notes
        -----
        C = C_j(v_r) + tau I / (n V_T); see :func:`diffusion_capacitance`.
        """
        return self.capacitance(v_r) + diffusion_capacitance(i_forward, transit_time, ideality,
                                                             self.temperature)

    def _scalar(self, x):
        return x if np.ndim(x) else float(x)

    def _repr_html_(self):
        """Jupyter display: a compact parameter table with units (the closed form, where
        there is one, is the LaTeX display)."""
        from ..views.rich import parameter_table_html

        return parameter_table_html(self)

    def _repr_latex_(self):
        """Jupyter display of the model's closed form with this object's values."""
        from ..views.rich import closed_form_latex

        return closed_form_latex(self)

