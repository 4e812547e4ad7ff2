"""1-D Poisson solver for an arbitrary doping profile: potential, field, W and C versus bias.

Beyond the depletion approximation: the mobile carriers follow Boltzmann statistics with
flat quasi-Fermi levels (each equal to the potential of its majority-carrier contact, the
usual quasi-equilibrium picture of a reverse-biased junction with negligible current),
so the depletion edges have their true Debye-length tails. Finite volumes on a
non-uniform mesh, Newton's method with :func:`scipy.sparse.linalg.spsolve` and a
logarithmically damped update.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .._validate import require_finite, require_positive
from ..constants import q as Q_E
from ..constants import thermal_voltage
from ..errors import DesignError
from .junction_base import check_material
from .materials import check_temperature

__all__ = ["PoissonSolution", "solve_poisson", "poisson_cv", "junction_mesh"]

_MAX_EXP = 700.0  # exp() argument limit while Newton is far from the solution


def junction_mesh(length, junction, fine_step, coarse_step, fine_width=None):
    """Non-uniform mesh [m]: fine steps around the junction, coarse steps elsewhere.

    Parameters
    ----------
    length : float
        Device length [m] from the left contact (x = 0) to the right one, > 0.
    junction : float
        Position of the metallurgical junction [m], 0 < junction < length.
    fine_step : float
        Mesh step near the junction [m], > 0 (a fraction of the Debye length of the heavier
        side, e.g. 1 nm for 1e24 m^-3 silicon).
    coarse_step : float
        Mesh step far from it [m], >= fine_step.
    fine_width : float, optional
        Half-width of the fine region [m] (default 50 fine steps).

    Returns
    -------
    numpy.ndarray
        Strictly increasing node positions from 0 to ``length``.
    """
    length = float(require_positive("length", length, "m"))
    h, big = (float(require_positive(n, s, "m")) for n, s in (("fine_step", fine_step),
                                                               ("coarse_step", coarse_step)))
    if not 0.0 < junction < length:
        raise DesignError.out_of_range("junction", junction, "m", f"between 0 and {length:g} m")
    half = 50 * h if fine_width is None else float(fine_width)
    lo, hi = max(junction - half, 0.0), min(junction + half, length)
    parts = [np.linspace(lo, hi, max(int(np.ceil((hi - lo) / h)), 2) + 1)]
    # geometric growth (ratio 1.1) from the fine to the coarse step on each side
    for start, end, sign in ((lo, 0.0, -1.0), (hi, length, 1.0)):
        pos, step, out = start, h, []
        while sign * (end - pos) > 0:
            step = min(step * 1.1, big)
            pos = pos + sign * step
            out.append(min(pos, end) if sign > 0 else max(pos, end))
        parts.append(np.asarray(out))
    return np.unique(np.concatenate(parts))


@dataclass(frozen=True, eq=False)  # holds arrays and tables: compared by identity
class PoissonSolution:
    """Electrostatics of the device at one bias (result of :func:`solve_poisson`).

    Parameters
    ----------
    reverse_bias : float
        Reverse bias [V].
    x : numpy.ndarray
        Node positions [m].
    potential : numpy.ndarray
        Electrostatic potential psi [V] at the nodes (0 V = intrinsic level of the p
        contact's Fermi level reference).
    electrons, holes : numpy.ndarray
        Carrier densities [m^-3] at the nodes.
    field : numpy.ndarray
        Electric field -dpsi/dx [V/m] at the faces between nodes.
    charge : float
        Mobile-carrier charge per unit area that the contacts have removed,
        -(q/2) integral (n + p) dx [C/m^2] (relative to an arbitrary zero): in quasi-
        equilibrium electrons enter and leave only through the n contact and holes only
        through the p contact, so dQ/dv_r per unit area is the small-signal capacitance.
    iterations : int
        Newton iterations used.
    """

    reverse_bias: float
    x: np.ndarray = field(repr=False)
    potential: np.ndarray = field(repr=False)
    electrons: np.ndarray = field(repr=False)
    holes: np.ndarray = field(repr=False)
    field: np.ndarray = field(repr=False)
    charge: float
    iterations: int

    @property
    def peak_field(self):
        """Largest |E| [V/m]."""
        return float(np.max(np.abs(self.field)))


class _Device:
    """Mesh, doping and constants of one solve (normalised by V_T and the largest doping)."""

    def __init__(self, x, net_doping, material, temperature, permittivity, intrinsic_density):
        self.x = np.asarray(require_finite("x", x, "m"), dtype=float)
        if self.x.ndim != 1 or self.x.size < 5 or np.any(np.diff(self.x) <= 0):
            raise DesignError("x must be >= 5 strictly increasing node positions [m]",
                              parameter="x")
        n = net_doping(self.x) if callable(net_doping) else net_doping
        self.doping = np.broadcast_to(np.asarray(require_finite("net_doping", n, "m^-3"),
                                                 dtype=float), self.x.shape).copy()
        if not self.doping[0] * self.doping[-1] < 0:
            raise DesignError("net_doping (donors minus acceptors) must have opposite signs at "
                              "the two contacts (a p-n junction); got "
                              f"{self.doping[0]:.3g} and {self.doping[-1]:.3g} m^-3",
                              parameter="net_doping")
        self.t = float(check_temperature(temperature))
        mat = None if material is None else check_material(material)
        if permittivity is None and mat is None or intrinsic_density is None and mat is None:
            raise DesignError("material (or permittivity and intrinsic_density) is required",
                              parameter="material")
        self.eps = float(permittivity if permittivity is not None else mat.permittivity)
        self.ni = float(intrinsic_density if intrinsic_density is not None
                        else mat.intrinsic_density(self.t))
        self.vt = float(thermal_voltage(self.t))
        self.d = np.diff(self.x)
        self.h = np.zeros(self.x.size)
        self.h[1:] += self.d / 2
        self.h[:-1] += self.d / 2
        self.scale = float(np.max(np.abs(self.doping)))
        self.p_left = self.doping[0] < 0

    def contact_potentials(self, v_r):
        """(phi_p, phi_n) [V]: quasi-Fermi levels of holes and electrons (p contact at 0 V)."""
        return 0.0, float(v_r)

    def boundary(self, v_r):
        phi_p, phi_n = self.contact_potentials(v_r)
        left = (phi_p if self.p_left else phi_n) / self.vt
        right = (phi_n if self.p_left else phi_p) / self.vt
        ends = np.arcsinh(self.doping[[0, -1]] / (2 * self.ni))
        return left + ends[0], right + ends[1]


def _newton(dev, u, v_r, tol=1e-10, max_iter=200):
    """Solve the normalised Poisson equation for u = psi/V_T; returns (u, iterations)."""
    from scipy.sparse import diags
    from scipy.sparse.linalg import spsolve

    phi_p, phi_n = dev.contact_potentials(v_r)
    up, un = phi_p / dev.vt, phi_n / dev.vt
    u = u.copy()
    u[0], u[-1] = dev.boundary(v_r)
    c = dev.eps * dev.vt / (Q_E * dev.scale)  # [m^2]: squared Debye length of the scale
    r = dev.ni / dev.scale
    nd = dev.doping / dev.scale
    g = c / dev.d  # face conductances [m]
    for it in range(1, max_iter + 1):
        en = r * np.exp(np.clip(u - un, -_MAX_EXP, _MAX_EXP))
        ho = r * np.exp(np.clip(up - u, -_MAX_EXP, _MAX_EXP))
        flux = g * np.diff(u)
        f = np.zeros_like(u)
        f[1:-1] = flux[1:] - flux[:-1] + dev.h[1:-1] * (ho - en + nd)[1:-1]
        main = -(g[1:] + g[:-1]) - dev.h[1:-1] * (ho + en)[1:-1]
        jac = diags([g[1:-1], main, g[1:-1]], [-1, 0, 1], format="csc")
        du = spsolve(jac, -f[1:-1])
        # logarithmic damping keeps large early steps from overshooting the exponentials
        big = np.abs(du) > 1.0
        du[big] = np.sign(du[big]) * (1.0 + np.log(np.abs(du[big])))
        u[1:-1] += du
        if np.max(np.abs(du)) < tol:
            return u, it
    raise DesignError(f"the Poisson solver did not converge at v_r = {v_r:g} V in {max_iter} "
                      "Newton iterations; refine the mesh near the junction or approach "
                      "the bias in smaller steps", parameter="v_r")


def _initial(dev, v_r):
    phi_p, phi_n = dev.contact_potentials(v_r)
    phi = np.where(dev.doping < 0, phi_p, phi_n) / dev.vt
    return phi + np.arcsinh(dev.doping / (2 * dev.ni))


def _solution(dev, u, v_r, iterations):
    phi_p, phi_n = dev.contact_potentials(v_r)
    psi = u * dev.vt
    en = dev.ni * np.exp(np.clip(u - phi_n / dev.vt, -_MAX_EXP, _MAX_EXP))
    ho = dev.ni * np.exp(np.clip(phi_p / dev.vt - u, -_MAX_EXP, _MAX_EXP))
    efield = -np.diff(psi) / dev.d
    # charge counted from the carriers: the field at the metallurgical junction would
    # include the dipole of holes spilling from a p+ side into the n side (a few Debye
    # lengths), which is not the terminal charge
    charge = -0.5 * Q_E * float(np.sum(dev.h * (en + ho)))
    return PoissonSolution(float(v_r), dev.x, psi, en, ho, efield, float(charge), iterations)


def solve_poisson(x, net_doping, v_r, material=None, temperature=300.0, permittivity=None,
                  intrinsic_density=None):
    """Potential, carriers and field of a 1-D p-n structure at one or more reverse biases.

    Parameters
    ----------
    x : array_like
        Node positions [m], strictly increasing, >= 5 nodes (see :func:`junction_mesh`);
        the contacts are at x[0] and x[-1].
    net_doping : array_like or callable
        Net doping N_D - N_A [m^-3] at the nodes, or a function of x [m] returning it;
        opposite signs at the two contacts.
    v_r : float or array_like
        Reverse bias [V] (negative = forward), solved in the order given, each from the
        previous solution (continuation); start near 0 V for large biases.
    material : Material or str, optional
        Semiconductor (permittivity and ni(T)); or give both of the next two.
    temperature : float, optional
        [K], 50 to 600 (default 300).
    permittivity : float, optional
        Permittivity [F/m], overrides the material's.
    intrinsic_density : float, optional
        ni [m^-3], overrides the material's.

    Returns
    -------
    list of PoissonSolution
        One per bias.

    Notes
    -----
    d/dx(eps dpsi/dx) = -q (p - n + N_D - N_A), n = ni exp((psi - phi_n)/V_T),
    p = ni exp((phi_p - psi)/V_T), phi_p = 0 (p contact) and phi_n = v_r (n contact);
    ohmic contacts: charge neutrality, psi = phi + V_T asinh(N / 2 ni). Box-integration
    finite differences, Newton iteration to |d psi| < 1e-10 V_T. Valid where the
    currents are negligible (reverse and small forward bias); no band-gap narrowing,
    Fermi-Dirac statistics or incomplete ionisation.

    References
    ----------
    .. [1] S. Selberherr, *Analysis and Simulation of Semiconductor Devices*, Springer,
       1984, ch. 6 (box integration) and ch. 7 (Newton, damping).
    .. [2] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2.
    """
    dev = _Device(x, net_doping, material, temperature, permittivity, intrinsic_density)
    biases = np.atleast_1d(require_finite("v_r", v_r, "V")).ravel()
    out, u = [], _initial(dev, 0.0)
    u, _ = _newton(dev, u, 0.0)
    previous = 0.0
    for v in biases:
        # continuation in steps of at most 2 V keeps Newton in its basin
        steps = np.linspace(previous, v, int(np.ceil(abs(v - previous) / 2.0)) + 1)[1:]
        its = 0
        for s in steps:
            u, its = _newton(dev, u, float(s))
        out.append(_solution(dev, u, float(v), its))
        previous = float(v)
    return out


def poisson_cv(x, net_doping, bias, area, material=None, temperature=300.0, permittivity=None,
               intrinsic_density=None, step=1e-3):
    """Small-signal C-V of a 1-D structure from the Poisson solution, C = A dQ/dV.

    Parameters
    ----------
    x : array_like
        Node positions [m] (see :func:`solve_poisson`).
    net_doping : array_like or callable
        Net doping N_D - N_A [m^-3].
    bias : array_like
        Reverse biases [V], ascending is fastest.
    area : float
        Junction area [m^2], > 0.
    material : Material or str, optional
        Semiconductor.
    temperature : float, optional
        [K] (default 300).
    permittivity : float, optional
        [F/m], overrides the material's.
    intrinsic_density : float, optional
        [m^-3], overrides the material's.
    step : float, optional
        Bias step of the central difference dQ/dV [V], > 0 (default 1 mV).

    Returns
    -------
    pandas.DataFrame
        Columns reverse_bias [V], capacitance [F], depletion_width [m] (eps A / C, the
        width a C-V measurement reports), peak_field [V/m]; ``attrs["units"]``.

    Notes
    -----
    For a one-sided abrupt junction this reproduces the classic result that mobile
    carriers shift the 1/C^2 line: 1/C^2 = 2 (Vbi + V_R - 2 kT/q) / (q eps N A^2), the
    depletion approximation without the -2kT/q term being correct only for
    V_R >> kT/q.

    References
    ----------
    .. [1] D. P. Kennedy, P. C. Murley and W. Kleinfelder, "On the measurement of impurity
       atom distributions in silicon by the differential capacitance technique", IBM J.
       Res. Dev. 12, 399 (1968).
    .. [2] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2, section 2.3.2 (the -2kT/q correction to the depletion capacitance).
    """
    import pandas as pd

    area = float(require_positive("area", area, "m^2"))
    step = float(require_positive("step", step, "V"))
    biases = np.atleast_1d(require_finite("bias", bias, "V")).ravel()
    sweep = np.column_stack([biases - step, biases + step]).ravel()
    sols = solve_poisson(x, net_doping, sweep, material, temperature, permittivity,
                         intrinsic_density)
    q = np.array([s.charge for s in sols]).reshape(-1, 2)  # -(q/2) integral (n + p) dx
    cap = area * (q[:, 1] - q[:, 0]) / (2 * step)
    dev_eps = permittivity if permittivity is not None else check_material(material).permittivity
    peak = np.array([s.peak_field for s in sols]).reshape(-1, 2).mean(axis=1)
    out = pd.DataFrame({"reverse_bias": biases, "capacitance": cap,
                        "depletion_width": dev_eps * area / cap, "peak_field": peak})
    out.attrs["units"] = {"reverse_bias": "V", "capacitance": "F", "depletion_width": "m",
                          "peak_field": "V/m"}
    return out
