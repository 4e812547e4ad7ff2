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
from ..constants import q, thermal_voltage
from ..errors import DesignError
from .junction_base import JunctionBase, check_doping
from .materials import Material

__all__ = ["PinJunction", "pin_breakdown_field", "pin_built_in_potential",
           "pin_depletion_edges", "pin_punch_through_potential"]


def _out(x):
    return x if np.ndim(x) else float(x)


def pin_built_in_potential(na, ni_doping, ni, temperature=300.0):
    """Built-in potential of the p+ / i-layer junction of a p+ / n- / n+ structure [V].

    Parameters
    ----------
    na : float or array_like
        Acceptor density of the p+ layer [m^-3], > ni.
    ni_doping : float or array_like
        Net donor density of the i layer [m^-3], > 0 (may be below ni).
    ni : float or array_like
        Intrinsic carrier density [m^-3].
    temperature : float or array_like
        Temperature [K].

    Returns
    -------
    float or numpy.ndarray
        V_bi [V] of the p+/i junction.

    Notes
    -----
    V_bi = V_T ln(Na n0 / ni^2), with n0 = Ni/2 + sqrt(Ni^2/4 + ni^2) the equilibrium
    electron density of the i layer (n0 = Ni for Ni >> ni, n0 = ni for an intrinsic
    layer). This, not the contact-to-contact V_T ln(Na Nd / ni^2), is the potential that
    depletes the i layer below punch-through: the rest, V_T ln(Nd / n0) (0.36 V for
    1e13 / 1e19 cm^-3), drops across the n-/n+ high-low junction, whose dipole is
    screened by the neutral i layer until the depletion edge reaches it.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2, Eq. (3) (built-in potential of a step junction) and ch. 1 (carrier
       density of a doped semiconductor, n0 = Nd/2 + sqrt(Nd^2/4 + ni^2)).
    """
    na, nid, ni = (np.asarray(require_positive(name, x, "m^-3"), dtype=float)
                   for name, x in (("na", na), ("ni_doping", ni_doping), ("ni", ni)))
    n0 = 0.5 * nid + np.sqrt(0.25 * nid**2 + ni**2)
    return _out(thermal_voltage(temperature) * np.log(na * n0 / ni**2))


def pin_breakdown_field(material, ni_doping, thickness, iterations=64):
    """Peak field at avalanche breakdown of a p+ / i / n+ junction [V/m].

    Parameters
    ----------
    material : Material
        Semiconductor (its :meth:`~photorx.device.materials.Material.critical_field`).
    ni_doping : float or array_like
        Net doping of the i layer [m^-3], > 0.
    thickness : float or array_like
        i-layer thickness d [m], > 0.
    iterations : int, optional
        Bisection steps in log E0 (64 reach double precision).

    Returns
    -------
    float or numpy.ndarray
        Peak field E0 at the p+/i interface at breakdown [V/m].

    Notes
    -----
    The universal law Ec(N) ~ N^(1/8) of :meth:`Material.critical_field` is exactly the
    ionisation integral int alpha dx = 1 of a one-sided junction with the power-law
    ionisation coefficient alpha = C E^7 (Fulop's form); C = 8 q / (eps K) with
    K = Ec(N)^8 / N. If the one-sided depletion at breakdown, eps Ec(Ni) / (q Ni), fits in
    the i layer, E0 = Ec(Ni). Otherwise the field falls linearly across the whole layer,
    from E0 to E1 = E0 - q Ni d / eps, and int alpha dx = 1 reads
    (q d / eps) sum_k E0^(7-k) E1^k = K (k = 0..7), solved for E0 by bisection. For
    Ni -> 0 this is the uniform-field result E0 = (eps K / (8 q d))^(1/7); using
    Ec(Ni) of the background doping instead (Sze and Ng's punch-through expression)
    goes to zero with Ni and underestimates thin, lightly doped layers. The thin
    high-field layers of the contacts are left out of the integral.

    References
    ----------
    .. [1] W. Fulop, Calculation of avalanche breakdown voltages of silicon p-n
       junctions, Solid-State Electronics 10, 39 (1967) (alpha ~ E^7) (from memory).
    .. [2] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2 (ionisation integral, universal breakdown law, punch-through diodes).
    """
    nid = np.asarray(ni_doping, dtype=float)
    d = np.asarray(thickness, dtype=float)
    eps = material.permittivity
    e_np = np.asarray(material.critical_field(nid))  # one-sided (not punched through)
    n_ref = 1e22  # [m^-3] inside the range of the universal law: K from the pure power law
    k_law = material.critical_field(n_ref) ** 8 / n_ref
    sd = q * nid * d / eps  # field drop across the i layer [V/m]
    punched = sd < e_np
    # bracket: g(lo = sd) < 0 when punched; g(hi) >= 0 since the k = 0 term alone reaches K
    lo = np.where(punched, sd, 1.0)
    hi = np.maximum((eps * k_law / (q * d)) ** (1.0 / 7.0), lo) * np.ones_like(lo)
    for _ in range(iterations):
        mid = np.sqrt(lo * hi)
        # sum_k E0^(7-k) E1^k = E0^7 (1 - r^8) / (1 - r), r = E1/E0 = 1 - s, written with
        # expm1/log1p so that it stays exact as s = sd/E0 -> 0 (uniform field)
        s = np.minimum(sd / mid, 1.0)
        total = mid**7 * -np.expm1(8.0 * np.log1p(-np.minimum(s, 1.0 - 1e-16))) / s
        above = q * d / eps * total >= k_law
        hi = np.where(above, mid, hi)
        lo = np.where(above, lo, mid)
    return _out(np.where(punched, np.sqrt(lo * hi), e_np))


def pin_punch_through_potential(na, ni_doping, thickness, eps):
    """Total potential (Vbi + V_R) at which the i layer is just fully depleted [V].

    Parameters
    ----------
    na : float or array_like
        Acceptor density of the p+ layer [m^-3], > 0.
    ni_doping : float or array_like
        Net donor density of the i layer [m^-3], > 0.
    thickness : float or array_like
        i-layer thickness d [m], > 0.
    eps : float or array_like
        Permittivity [F/m].

    Returns
    -------
    float or numpy.ndarray
        V_pt [V]; subtract Vbi for the punch-through reverse bias.

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
    regimes. ``v_total`` is Vbi of the p+/i junction plus V_R
    (:func:`pin_built_in_potential`); the n-/n+ high-low junction's share V_T ln(Nd/Ni),
    released when the depletion edge reaches it, is left out above punch-through too, so
    that W and Q stay continuous (including it would move the edge by a fraction of a
    Debye length and raise the peak field by V_T ln(Nd/Ni) / d, 0.1 kV/cm for 40 um).
    """
    v_total = require_positive("v_total", v_total, "V")
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
    Vbi = V_T ln(Na n0 / ni^2) of the p+/i junction (:func:`pin_built_in_potential`;
    n0 ~ Ni the electron density of the i layer), the potential that depletes the i layer.
    See :func:`pin_depletion_edges` for W; C = eps A / W; charge Q = q A Na x_p; peak
    field q Na x_p / eps at the p+/i interface. Breakdown: :func:`pin_breakdown_field`
    (ionisation integral over the i layer, consistent with the universal breakdown law),
    an estimate that stays positive and physical for thin, lightly doped i layers.

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
        """Built-in potential V_T ln(Na n0 / ni^2) of the p+/i junction [V].

        See :func:`pin_built_in_potential` (n0 ~ i_doping); the contact-to-contact value
        V_T ln(Na Nd / ni^2) is larger by the n-/n+ high-low junction's V_T ln(Nd / n0).
        """
        return pin_built_in_potential(self.p_doping, self.i_doping,
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
        through the i layer (and, above punch-through, into the n+ layer).

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), -0.9 Vbi < v_r <=
            :meth:`breakdown_voltage`; outside, a DesignError. Broadcasts against the
            design's array fields.
        """
        return pin_depletion_edges(self._total_potential(v_r), self.p_doping, self.i_doping,
                                   self.n_doping, self.i_thickness, self.material.permittivity)

    def depletion_width(self, v_r):
        """Depletion width W = x_p + x_n [m].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), -0.9 Vbi < v_r <=
            :meth:`breakdown_voltage`; outside, a DesignError. Broadcasts against the
            design's array fields.
        """
        x_p, x_n = self.depletion_edges(v_r)
        return self._scalar(np.asarray(x_p) + x_n)

    def capacitance(self, v_r):
        """Junction capacitance C = eps A / W [F]; continuous across punch-through.

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
        """Depletion charge on one side, Q = q A Na x_p [C]; dQ/dv_r = capacitance(v_r).

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), -0.9 Vbi < v_r <=
            :meth:`breakdown_voltage`; outside, a DesignError. Broadcasts against the
            design's array fields.
        """
        x_p, _ = self.depletion_edges(v_r)
        return self._scalar(q * np.asarray(self.area) * np.asarray(self.p_doping) * x_p)

    def peak_field(self, v_r):
        """Peak field at the p+/i interface, q Na x_p / eps [V/m].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), -0.9 Vbi < v_r <=
            :meth:`breakdown_voltage`; outside, a DesignError. Broadcasts against the
            design's array fields.
        """
        x_p, _ = self.depletion_edges(v_r)
        return self._scalar(q * np.asarray(self.p_doping) * x_p / self.material.permittivity)

    def breakdown_voltage(self):
        """Reverse bias at which the peak field reaches :func:`pin_breakdown_field` [V].

        An estimate (+-30 % typical, like the universal law it is calibrated to); for a
        punched-through i layer thinner than about 0.2 um it is conservative (dead-space
        effects raise the real value).
        """
        na, nid, nd, d = (np.asarray(x, dtype=float) for x in
                          (self.p_doping, self.i_doping, self.n_doping, self.i_thickness))
        eps = self.material.permittivity
        ec = np.asarray(pin_breakdown_field(self.material, nid, d))
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
