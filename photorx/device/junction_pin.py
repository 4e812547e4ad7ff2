"""p-i-n junction: progressive depletion of the i layer, punch-through, then nearly flat C.

Structure (common practice for photodiodes): p+ contact (Na) | lightly n-type i layer
(Ni, thickness d) | n+ contact (Nd). The depletion layer starts at the p+/i interface and
grows through the i layer; once it reaches the n+ layer (punch-through) it can only grow
into the heavily doped contacts, so the capacitance barely changes with further bias.
For a lightly p-type i layer swap the roles of ``p_doping`` and ``n_doping``; the
capacitance above punch-through is the same.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._validate import require_in_range, require_positive
from ..constants import q
from ..errors import DesignError
from .junction_abrupt import abrupt_built_in_potential
from .junction_base import JunctionBase, check_doping
from .materials import Material

__all__ = ["PinJunction", "pin_depletion_edges", "pin_punch_through_potential"]


def _out(x):
    return x if np.ndim(x) else float(x)


def pin_punch_through_potential(na, ni_doping, thickness, eps):
    """Total potential (Vbi + V_R) at which the i layer is just fully depleted [V].

    Notes
    -----
    V_pt = q Ni d^2 (1 + Ni/Na) / (2 eps): the one-sided p+/n- junction whose n- depletion
    width equals the i-layer thickness d (the p+ side takes x_p = Ni d / Na).

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2 (abrupt junction) and ch. 13 (p-i-n photodiode).
    """
    na, ni_d, d, eps = (np.asarray(x, dtype=float) for x in (na, ni_doping, thickness, eps))
    return _out(q * ni_d * d**2 * (1.0 + ni_d / na) / (2.0 * eps))


def pin_depletion_edges(v_total, na, ni_doping, nd, thickness, eps):
    """Depletion extents of a p+ / n- / n+ structure [m].

    Parameters
    ----------
    v_total : float or array_like
        Total potential across the depletion layer, Vbi + V_R [V], > 0.
    na, ni_doping, nd : float or array_like
        p+ acceptor, i-layer donor and n+ donor densities [m^-3] (Ni < Na, Nd).
    thickness : float or array_like
        i-layer thickness d [m].
    eps : float or array_like
        Permittivity [F/m].

    Returns
    -------
    x_p, x_n : float or numpy.ndarray
        Depletion extent into the p+ layer, and on the other side of the p+/i interface
        (i layer plus n+ layer) [m]. W = x_p + x_n.

    Notes
    -----
    Before punch-through (V < V_pt): x_n = sqrt(2 eps V / (q Ni (1 + Ni/Na))),
    x_p = Ni x_n / Na. After: with Q = Nd x_n+ (charge per area / q in the n+ layer),
    charge neutrality Na x_p = Ni d + Q and Poisson's equation give
    (1/Na + 1/Nd) Q^2 + 2 d (1 + Ni/Na) Q = 2 eps (V - V_pt) / q, solved in the form
    Q = 2c / (b + sqrt(b^2 + 4 a c)) that is exact and stable as Q -> 0; x_n = d + Q/Nd.
    W, C and Q are continuous at punch-through and dQ/dV = eps A / W holds in both
    regimes. The n-/n+ high-low junction's small built-in share is lumped into Vbi.
    """
    v, na, ni_d, nd, d, eps = (np.asarray(x, dtype=float)
                               for x in (v_total, na, ni_doping, nd, thickness, eps))
    v_pt = q * ni_d * d**2 * (1.0 + ni_d / na) / (2.0 * eps)
    # regime 1: depletion inside the i layer
    x_i = np.sqrt(2.0 * eps * np.minimum(v, v_pt) / (q * ni_d * (1.0 + ni_d / na)))
    # regime 2: i layer fully depleted, edges move into the contacts
    a = 1.0 / na + 1.0 / nd
    b = 2.0 * d * (1.0 + ni_d / na)
    cc = 2.0 * eps * np.maximum(v - v_pt, 0.0) / q
    big_q = 2.0 * cc / (b + np.sqrt(b**2 + 4.0 * a * cc))
    punched = v > v_pt
    x_n = np.where(punched, d + big_q / nd, x_i)
    x_p = np.where(punched, (ni_d * d + big_q) / na, ni_d * x_i / na)
    return _out(x_p), _out(x_n)


@dataclass(frozen=True)
class PinJunction(JunctionBase):
    """p-i-n junction with a lightly doped intrinsic layer (punch-through model).

    Parameters
    ----------
    material : Material or str
        Semiconductor.
    i_thickness : float or array_like
        Thickness of the i layer [m], 10 nm to 1 mm.
    i_doping : float or array_like
        Residual (net donor) doping of the i layer [m^-3], > 0 and below both contact
        dopings.
    area : float or array_like
        Junction area [m^2], > 0.
    p_doping, n_doping : float or array_like
        Doping of the p+ and n+ contact layers [m^-3], ni(T) < N <= 1e27.
    temperature : float or array_like, optional
        Temperature [K], 50 to 600 (default 300).

    Notes
    -----
    Vbi = V_T ln(Na Nd / ni^2) (contact to contact). See :func:`pin_depletion_edges` for
    W; C = eps A / W; charge Q = q A Na x_p; peak field q Na x_p / eps at the p+/i
    interface. Breakdown: the bias at which the peak field reaches the critical field of
    the i-layer doping (:meth:`Material.critical_field`, at least that of 1e14 cm^-3),
    a conservative estimate for thin i layers.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2 and ch. 13 (p-i-n photodiode).
    """

    material: Material
    i_thickness: float
    i_doping: float
    area: float
    p_doping: float
    n_doping: float
    temperature: float = 300.0

    def __post_init__(self):
        self._setup_common()
        ni = self.material.intrinsic_density(self.temperature)
        object.__setattr__(self, "p_doping", check_doping("p_doping", self.p_doping, ni))
        object.__setattr__(self, "n_doping", check_doping("n_doping", self.n_doping, ni))
        object.__setattr__(self, "i_thickness",
                           require_in_range("i_thickness", self.i_thickness, "m", 1e-8, 1e-3))
        nid = require_positive("i_doping", self.i_doping, "m^-3")
        a, lim = np.broadcast_arrays(np.asarray(nid),
                                     np.minimum(np.asarray(self.p_doping), self.n_doping))
        bad = a >= lim
        if np.any(bad):
            raise DesignError.out_of_range("i_doping", a[bad][0], "m^-3",
                                           f"> 0 and < min(p_doping, n_doping) = "
                                           f"{lim[bad][0]:.4g} m^-3")
        object.__setattr__(self, "i_doping", nid)

    def built_in_potential(self):
        """Built-in potential V_T ln(Na Nd / ni^2) between the contact layers [V]."""
        return abrupt_built_in_potential(self.p_doping, self.n_doping,
                                         self.material.intrinsic_density(self.temperature),
                                         self.temperature)

    def punch_through_voltage(self):
        """Reverse bias at which the i layer becomes fully depleted [V].

        Negative when the i layer is already depleted by the built-in potential (it is
        then fully depleted at zero bias and somewhat into forward bias).
        """
        v_pt = pin_punch_through_potential(self.p_doping, self.i_doping, self.i_thickness,
                                           self.material.permittivity)
        return self._scalar(np.asarray(v_pt) - self.built_in_potential())

    def depletion_edges(self, v_r):
        """Depletion extents (x_p, x_n) [m]: into the p+ layer, and from the p+/i interface
        through the i layer (and, above punch-through, into the n+ layer)."""
        return pin_depletion_edges(self._total_potential(v_r), self.p_doping, self.i_doping,
                                   self.n_doping, self.i_thickness, self.material.permittivity)

    def depletion_width(self, v_r):
        """Depletion width W = x_p + x_n [m]."""
        x_p, x_n = self.depletion_edges(v_r)
        return self._scalar(np.asarray(x_p) + x_n)

    def capacitance(self, v_r):
        """Junction capacitance C = eps A / W [F]; continuous across punch-through."""
        return self._scalar(self.material.permittivity * np.asarray(self.area)
                            / np.asarray(self.depletion_width(v_r)))

    def charge(self, v_r):
        """Depletion charge on one side, Q = q A Na x_p [C]; dQ/dv_r = capacitance(v_r)."""
        x_p, _ = self.depletion_edges(v_r)
        return self._scalar(q * np.asarray(self.area) * np.asarray(self.p_doping) * x_p)

    def peak_field(self, v_r):
        """Peak field at the p+/i interface, q Na x_p / eps [V/m]."""
        x_p, _ = self.depletion_edges(v_r)
        return self._scalar(q * np.asarray(self.p_doping) * x_p / self.material.permittivity)

    def breakdown_voltage(self):
        """Reverse bias at which the peak field reaches the critical field [V] (estimate)."""
        na, nid, nd, d = (np.asarray(x, dtype=float) for x in
                          (self.p_doping, self.i_doping, self.n_doping, self.i_thickness))
        eps = self.material.permittivity
        ec = np.asarray(self.material.critical_field(nid))
        sheet = eps * ec / q  # Na x_p at breakdown [m^-2]
        # not punched through at breakdown: one-sided p+/n- junction
        v1 = q * sheet**2 * (1.0 + nid / na) / (2.0 * eps * nid)
        # punched through: invert the regime-2 quadratic for Q = sheet - Ni d
        big_q = np.maximum(sheet - nid * d, 0.0)
        v_pt = q * nid * d**2 * (1.0 + nid / na) / (2.0 * eps)
        v2 = v_pt + q / (2.0 * eps) * ((1.0 / na + 1.0 / nd) * big_q**2
                                        + 2.0 * d * (1.0 + nid / na) * big_q)
        v_total = np.where(sheet <= nid * d, v1, v2)
        return self._scalar(v_total - self.built_in_potential())
