"""Abrupt (step) and linearly graded p-n junctions in the depletion approximation.

Functional core: ``abrupt_*`` and ``graded_*`` functions of numpy arrays (broadcast over
every argument). Shell: the frozen dataclasses :class:`AbruptJunction` and
:class:`LinearlyGradedJunction`, which validate a design and call the core.

Sign convention: ``v_r`` is the reverse bias [V]; negative values are forward bias.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

from .._validate import require_in_range, require_positive
from ..constants import q, thermal_voltage
from ..errors import DesignError
from .junction_base import JunctionBase, check_doping
from .materials import Material

__all__ = [
    "AbruptJunction",
    "LinearlyGradedJunction",
    "abrupt_built_in_potential",
    "abrupt_depletion_width",
    "graded_built_in_potential",
    "graded_depletion_width",
    "graded_breakdown_voltage",
]


def _out(x):
    return x if np.ndim(x) else float(x)


def abrupt_built_in_potential(na, nd, ni, temperature=300.0):
    """Built-in potential of a step junction [V].

    Parameters
    ----------
    na, nd : float or array_like
        Acceptor and donor densities [m^-3], > ni.
    ni : float or array_like
        Intrinsic carrier density [m^-3].
    temperature : float or array_like
        Temperature [K].

    Returns
    -------
    float or numpy.ndarray
        Vbi [V].

    Notes
    -----
    Vbi = (kT/q) ln(Na Nd / ni^2) (non-degenerate Boltzmann statistics, full ionisation).

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2, Eq. (3).
    """
    na, nd, ni = (np.asarray(require_positive(name, x, "m^-3"), dtype=float)
                  for name, x in (("na", na), ("nd", nd), ("ni", ni)))
    ratio = na * nd / ni**2
    if np.any(ratio <= 1.0):  # Vbi <= 0: no junction (a doping at or below ni)
        raise DesignError.out_of_range("na*nd", np.broadcast_to(na * nd, ratio.shape)[
            ratio <= 1.0][0] if ratio.ndim else na * nd, "m^-6", "> ni^2 (dopings above ni)")
    return _out(thermal_voltage(temperature) * np.log(ratio))


def abrupt_depletion_width(v_total, na, nd, eps):
    """Depletion width of a step junction [m].

    Parameters
    ----------
    v_total : float or array_like
        Total potential across the depletion layer, Vbi + v_r [V], > 0.
    na, nd : float or array_like
        Acceptor and donor densities [m^-3].
    eps : float or array_like
        Permittivity [F/m].

    Returns
    -------
    float or numpy.ndarray
        W [m].

    Notes
    -----
    W = sqrt(2 eps (Vbi + V_R) / q (1/Na + 1/Nd)); the p side holds x_p = W Nd/(Na+Nd),
    the n side x_n = W Na/(Na+Nd). One-sided junctions are the limit Na >> Nd (or the
    reverse). The 2kT/q majority-carrier-tail correction is not applied, so that the
    textbook worked examples are reproduced as printed.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2, Eqs. (10)-(12).
    """
    v_total = require_positive("v_total", v_total, "V")
    v, na, nd, eps = (np.asarray(x, dtype=float) for x in (v_total, na, nd, eps))
    return _out(np.sqrt(2.0 * eps * v / q * (1.0 / na + 1.0 / nd)))


def graded_built_in_potential(gradient, ni, eps, temperature=300.0, iterations=40):
    """Built-in potential of a linearly graded junction, solved self-consistently [V].

    Parameters
    ----------
    gradient : float or array_like
        Net impurity gradient a [m^-4], > 0.
    ni : float or array_like
        Intrinsic carrier density [m^-3].
    eps : float or array_like
        Permittivity [F/m].
    temperature : float or array_like
        Temperature [K].
    iterations : int
        Fixed-point iterations; the map contracts by about (2 V_T/3)/Vbi per step.

    Returns
    -------
    float or numpy.ndarray
        Vbi [V]; values <= 2 V_T mean the gradient is too small for a depletion layer.

    Notes
    -----
    Vbi = 2 V_T ln(a W / (2 ni)) with W = (12 eps Vbi / (q a))^(1/3) at zero bias.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2, Eqs. (30)-(32).
    """
    a, ni, eps = (np.asarray(x, dtype=float) for x in (gradient, ni, eps))
    vt = thermal_voltage(temperature)
    vbi = np.ones(np.broadcast_shapes(a.shape, ni.shape, eps.shape, np.shape(vt)))
    for _ in range(iterations):
        w = (12.0 * eps * vbi / (q * a)) ** (1.0 / 3.0)
        # clamp the log argument at 1 so that a hopeless gradient converges to 0, not NaN
        vbi = np.maximum(2.0 * vt * np.log(np.maximum(a * w / (2.0 * ni), 1.0)), 1e-12)
    return _out(vbi)


def graded_depletion_width(v_total, gradient, eps):
    """Depletion width of a linearly graded junction [m]: W = (12 eps (Vbi+V_R)/(q a))^(1/3).

    Parameters
    ----------
    v_total : float or array_like
        Total potential across the depletion layer, Vbi + v_r [V], > 0.
    gradient : float or array_like
        Net impurity gradient a [m^-4], > 0 (1 cm^-4 = 1e8 m^-4).
    eps : float or array_like
        Permittivity [F/m].

    Returns
    -------
    float or numpy.ndarray
        W [m].

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2, Eq. (31).
    """
    v_total = require_positive("v_total", v_total, "V")
    v, a, eps = (np.asarray(x, dtype=float) for x in (v_total, gradient, eps))
    return _out(np.cbrt(12.0 * eps * v / (q * a)))


def graded_breakdown_voltage(gradient, band_gap_300):
    """Universal avalanche breakdown voltage of a linearly graded junction [V].

    Parameters
    ----------
    gradient : float or array_like
        Net impurity gradient a [m^-4] (1 cm^-4 = 1e8 m^-4), > 0.
    band_gap_300 : float or array_like
        Band gap of the semiconductor at 300 K [eV] (the law is written for Eg in eV).

    Returns
    -------
    float or numpy.ndarray
        Breakdown voltage VB [V], counted from zero bias (Vbi not subtracted).

    Notes
    -----
    VB = 60 (Eg / 1.1 eV)^(6/5) (a / 3e20 cm^-4)^(-2/5) V.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2, section on junction breakdown.
    """
    a_cm4 = np.asarray(gradient, dtype=float) / 1e8
    return _out(60.0 * (np.asarray(band_gap_300) / 1.1) ** 1.2 * (a_cm4 / 3e20) ** -0.4)


@dataclass(frozen=True)
class AbruptJunction(JunctionBase):
    """Two-sided step junction (one-sided as the limit of unequal doping).

    Parameters
    ----------
    material : Material or str
        Semiconductor, e.g. ``photorx.material("Si")``.
    na : float or array_like
        Acceptor density of the p side [m^-3], ni(T) < na <= 1e27.
    nd : float or array_like
        Donor density of the n side [m^-3], ni(T) < nd <= 1e27.
    area : float or array_like
        Junction area [m^2], > 0.
    temperature : float or array_like, optional
        Temperature [K], 50 to 600 (default 300).

    Notes
    -----
    Depletion approximation: C = eps A / W exactly, charge Q = q A Na x_p = q A Nd x_n,
    peak field E = q Na x_p / eps = 2 (Vbi + V_R) / W. Bias is accepted for
    -0.9 Vbi < v_r <= breakdown_voltage(); outside, a DesignError. The breakdown
    estimate uses the doping-dependent critical field (:meth:`Material.critical_field`)
    of the lighter side. Degenerate doping (above Nc or Nv, e.g. 1e19 cm^-3 in GaAs or
    InGaAs): Boltzmann statistics and no band-gap narrowing make Vbi approximate, and it
    may exceed Eg/q.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2, section 2.2.
    """

    material: Material
    na: float
    nd: float
    area: float
    temperature: float = 300.0

    def __post_init__(self):
        self._setup_common()
        ni = self.material.intrinsic_density(self.temperature)
        object.__setattr__(self, "na", check_doping("na", self.na, ni))
        object.__setattr__(self, "nd", check_doping("nd", self.nd, ni))

    @property
    def effective_doping(self):
        """Na Nd / (Na + Nd) [m^-3]: the doping of the equivalent one-sided junction."""
        return self._scalar(np.asarray(self.na) * self.nd / (np.asarray(self.na) + self.nd))

    def built_in_potential(self):
        """Built-in potential Vbi [V] (see :func:`abrupt_built_in_potential`)."""
        return abrupt_built_in_potential(self.na, self.nd,
                                         self.material.intrinsic_density(self.temperature),
                                         self.temperature)

    def depletion_width(self, v_r):
        """Depletion width W [m] at reverse bias ``v_r`` [V] (:func:`abrupt_depletion_width`).

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), -0.9 Vbi < v_r <=
            :meth:`breakdown_voltage`; outside, a DesignError. Broadcasts against the
            design's array fields.
        """
        return abrupt_depletion_width(self._total_potential(v_r), self.na, self.nd,
                                      self.material.permittivity)

    def depletion_edges(self, v_r):
        """Depletion extents (x_p, x_n) [m] into the p and n sides from the junction.

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), -0.9 Vbi < v_r <=
            :meth:`breakdown_voltage`; outside, a DesignError. Broadcasts against the
            design's array fields.
        """
        w = np.asarray(self.depletion_width(v_r))
        na, nd = np.asarray(self.na), np.asarray(self.nd)
        return self._scalar(w * nd / (na + nd)), self._scalar(w * na / (na + nd))

    def capacitance(self, v_r):
        """Junction (depletion) capacitance C = eps A / W [F].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), -0.9 Vbi < v_r <=
            :meth:`breakdown_voltage`; outside, a DesignError. Broadcasts against the
            design's array fields.
        """
        return self._scalar(self.material.permittivity * np.asarray(self.area)
                            / np.asarray(self.depletion_width(v_r)))

    def charge(self, v_r):
        """Depletion charge on one side, Q = q A N_eff W [C]; dQ/dv_r = capacitance(v_r).

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), -0.9 Vbi < v_r <=
            :meth:`breakdown_voltage`; outside, a DesignError. Broadcasts against the
            design's array fields.
        """
        return self._scalar(q * np.asarray(self.area) * self.effective_doping
                            * np.asarray(self.depletion_width(v_r)))

    def peak_field(self, v_r):
        """Peak field at the metallurgical junction, 2 (Vbi + v_r) / W [V/m].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), -0.9 Vbi < v_r <=
            :meth:`breakdown_voltage`; outside, a DesignError. Broadcasts against the
            design's array fields.
        """
        v = np.asarray(self._total_potential(v_r))
        return self._scalar(2.0 * v / np.asarray(self.depletion_width(v_r)))

    def breakdown_voltage(self):
        """Reverse bias at which the peak field reaches the critical field [V].

        Notes
        -----
        V_B = eps Ec(N)^2 / (2 q N) - Vbi with N = Na Nd/(Na + Nd) and Ec(N) from
        :meth:`Material.critical_field`, which reproduces the universal expression of
        Sze and Ng for one-sided junctions. An estimate (+-30 % typical); it may be
        negative for two heavily doped sides (tunnel junction).
        """
        n = self.effective_doping
        ec = np.asarray(self.material.critical_field(n))
        return self._scalar(self.material.permittivity * ec**2 / (2.0 * q * np.asarray(n))
                            - self.built_in_potential())


@dataclass(frozen=True)
class LinearlyGradedJunction(JunctionBase):
    """Linearly graded junction, net doping a*x across the junction (cube-root law).

    Parameters
    ----------
    material : Material or str
        Semiconductor.
    gradient : float or array_like
        Net impurity gradient a [m^-4] (1 cm^-4 = 1e8 m^-4), 1e24 to 1e32.
    area : float or array_like
        Junction area [m^2], > 0.
    temperature : float or array_like, optional
        Temperature [K], 50 to 600 (default 300).

    Notes
    -----
    W = (12 eps (Vbi + V_R) / (q a))^(1/3), C = eps A / W, charge per side
    Q = q A a W^2 / 8, peak field q a W^2 / (8 eps) = 3 (Vbi + V_R) / (2 W).
    Vbi = 2 V_T ln(a W0 / 2 ni) is solved self-consistently at zero bias and held fixed
    (the depletion approximation). Breakdown from the universal graded-junction law.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2, section 2.2.3.
    """

    material: Material
    gradient: float
    area: float
    temperature: float = 300.0

    def __post_init__(self):
        self._setup_common()
        a = require_in_range("gradient", self.gradient, "m^-4", 1e24, 1e32)
        object.__setattr__(self, "gradient", a)
        vbi = np.asarray(self.built_in_potential())
        vt = thermal_voltage(self.temperature)
        a_b, vbi_b, vt_b = np.broadcast_arrays(np.asarray(a), vbi, np.asarray(vt))
        bad = vbi_b <= 4.0 * vt_b
        if np.any(bad):
            raise DesignError.out_of_range(
                "gradient", a_b[bad][0], "m^-4",
                "large enough for a built-in potential above 4 kT/q (the graded-junction "
                "model needs a depletion layer much wider than the Debye length)")

    @functools.cached_property
    def _vbi(self):
        return graded_built_in_potential(self.gradient,
                                         self.material.intrinsic_density(self.temperature),
                                         self.material.permittivity, self.temperature)

    def built_in_potential(self):
        """Self-consistent built-in potential [V] (see :func:`graded_built_in_potential`)."""
        return self._vbi

    def depletion_width(self, v_r):
        """Depletion width W [m] (cube-root law).

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), -0.9 Vbi < v_r <=
            :meth:`breakdown_voltage`; outside, a DesignError. Broadcasts against the
            design's array fields.
        """
        return graded_depletion_width(self._total_potential(v_r), self.gradient,
                                      self.material.permittivity)

    def depletion_edges(self, v_r):
        """Depletion extents (x_p, x_n) = (W/2, W/2) [m].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), -0.9 Vbi < v_r <=
            :meth:`breakdown_voltage`; outside, a DesignError. Broadcasts against the
            design's array fields.
        """
        w = self.depletion_width(v_r)
        return self._scalar(np.asarray(w) / 2.0), self._scalar(np.asarray(w) / 2.0)

    def capacitance(self, v_r):
        """Junction capacitance C = eps A / W [F].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), -0.9 Vbi < v_r <=
            :meth:`breakdown_voltage`; outside, a DesignError. Broadcasts against the
            design's array fields.
        """
        return self._scalar(self.material.permittivity * np.asarray(self.area)
                            / np.asarray(self.depletion_width(v_r)))

    def charge(self, v_r):
        """Depletion charge on one side, Q = q A a W^2 / 8 [C]; dQ/dv_r = capacitance(v_r).

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), -0.9 Vbi < v_r <=
            :meth:`breakdown_voltage`; outside, a DesignError. Broadcasts against the
            design's array fields.
        """
        w = np.asarray(self.depletion_width(v_r))
        return self._scalar(q * np.asarray(self.area) * np.asarray(self.gradient) * w**2 / 8.0)

    def peak_field(self, v_r):
        """Peak field at the junction, q a W^2 / (8 eps) [V/m].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), -0.9 Vbi < v_r <=
            :meth:`breakdown_voltage`; outside, a DesignError. Broadcasts against the
            design's array fields.
        """
        w = np.asarray(self.depletion_width(v_r))
        return self._scalar(q * np.asarray(self.gradient) * w**2
                            / (8.0 * self.material.permittivity))

    def breakdown_voltage(self):
        """Reverse breakdown voltage estimate [V]: universal graded law minus Vbi."""
        vb = graded_breakdown_voltage(self.gradient, self.material.band_gap(300.0))
        return self._scalar(np.asarray(vb) - self.built_in_potential())
