"""Semiconductor materials: permittivity, band gap, densities of states, ni, transport, breakdown.

Values live in the package data file ``photorx/data/materials.toml``, each with the
published source it came from; :func:`material` returns a frozen :class:`Material`
whose ``sources`` field carries those citations. Temperature dependence follows the
textbook forms: Varshni band gap, T^1.5 effective densities of states, and an intrinsic
density anchored at the tabulated 300 K value.

Examples
--------
>>> import photorx as prx
>>> si = prx.material("Si")
>>> round(si.band_gap(300.0), 3)
1.123
"""

from __future__ import annotations

import functools
import tomllib
from dataclasses import dataclass, field
from importlib import resources
from types import MappingProxyType
from typing import Mapping

import numpy as np

from .._validate import require_in_range, require_positive
from ..constants import c, eps0, h, k, q
from ..errors import DesignError

__all__ = [
    "Material",
    "material",
    "known_materials",
    "TEMPERATURE_RANGE",
    "check_temperature",
    "band_gap_varshni",
    "universal_breakdown_voltage",
    "intrinsic_density_from_states",
]

#: Temperatures [K] over which the device models are offered (DesignError outside).
TEMPERATURE_RANGE = (50.0, 600.0)

_T_REF = 300.0  # temperature of the tabulated values [K]

# unit string in materials.toml -> factor to SI
_UNIT_FACTORS = {
    "": 1.0,
    "eV": 1.0,  # band energies stay in eV (the trade's unit; documented as [eV])
    "eV/K": 1.0,
    "K": 1.0,
    "cm^-3": 1e6,
    "cm^2/(V s)": 1e-4,
    "cm/s": 1e-2,
    "V/cm": 1e2,
}

_FIELDS = ("eps_r", "eg_0k", "varshni_alpha", "varshni_beta", "nc_300", "nv_300",
           "mu_n", "mu_p", "v_sat_n", "v_sat_p", "e_crit", "mu_n_exponent", "mu_p_exponent",
           "v_sat_n_coefficient", "v_sat_p_coefficient")


def check_temperature(temperature, name: str = "temperature"):
    """Validate a temperature [K] against :data:`TEMPERATURE_RANGE`; return it as float/array.

    Parameters
    ----------
    temperature : float or array_like
        Temperature [K]; valid 50-600 K (:data:`TEMPERATURE_RANGE`), else a DesignError.
    name : str, optional
        Parameter name quoted in the error message; default "temperature".

    Returns
    -------
    float or numpy.ndarray
        ``temperature`` [K], unchanged, as float (scalar input) or array.
    """
    return require_in_range(name, temperature, "K", *TEMPERATURE_RANGE)


def band_gap_varshni(temperature, eg_0k, alpha, beta):
    """Band gap versus temperature, Varshni form.

    Parameters
    ----------
    temperature : float or array_like
        Temperature [K], >= 0.
    eg_0k : float or array_like
        Band gap at 0 K [eV].
    alpha : float or array_like
        Varshni alpha [eV/K].
    beta : float or array_like
        Varshni beta [K].

    Returns
    -------
    float or numpy.ndarray
        Band gap [eV].

    Notes
    -----
    Eg(T) = Eg(0) - alpha T^2 / (T + beta).

    References
    ----------
    .. [1] Y. P. Varshni, Temperature dependence of the energy gap in semiconductors,
       Physica 34, 149 (1967).
    .. [2] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 1, Eq. (3).
    """
    t = np.asarray(temperature, dtype=float)
    out = eg_0k - alpha * t**2 / (t + beta)
    return out if np.ndim(out) else float(out)


def intrinsic_density_from_states(nc, nv, band_gap, temperature):
    """Intrinsic carrier density ni = sqrt(Nc Nv) exp(-Eg / 2kT) [m^-3].

    Parameters
    ----------
    nc, nv : float or array_like
        Effective densities of states of conduction and valence band at ``temperature``
        [m^-3].
    band_gap : float or array_like
        Band gap at ``temperature`` [eV].
    temperature : float or array_like
        Temperature [K], > 0.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 1, Eq. (25).
    """
    t = np.asarray(temperature, dtype=float)
    out = np.sqrt(np.asarray(nc) * np.asarray(nv)) * np.exp(-np.asarray(band_gap) * q
                                                           / (2.0 * k * t))
    return out if np.ndim(out) else float(out)


def universal_breakdown_voltage(doping, band_gap_300):
    """Avalanche breakdown voltage of a one-sided abrupt junction, universal expression.

    Parameters
    ----------
    doping : float or array_like
        Doping of the lightly doped side [m^-3], > 0.
    band_gap_300 : float or array_like
        Band gap at 300 K [eV].

    Returns
    -------
    float or numpy.ndarray
        Breakdown voltage [V].

    Notes
    -----
    VB = 60 (Eg / 1.1 eV)^(3/2) (N / 1e16 cm^-3)^(-3/4) V, stated for Ge, Si, GaAs and GaP
    with avalanche breakdown (roughly 1e14 to 1e18 cm^-3); photorx also applies it to InP
    and InGaAs as an estimate.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2, section on junction breakdown (universal expression for abrupt
       junctions).
    """
    n_cm3 = np.asarray(doping, dtype=float) / 1e6
    out = 60.0 * (np.asarray(band_gap_300, dtype=float) / 1.1) ** 1.5 * (n_cm3 / 1e16) ** -0.75
    return out if np.ndim(out) else float(out)


@dataclass(frozen=True)
class Material:
    """A semiconductor and its parameters (SI units, band energies in eV).

    Parameters
    ----------
    name : str
        Short name, e.g. ``"Si"``.
    eps_r : float
        Relative static permittivity [-].
    eg_0k : float
        Band gap at 0 K [eV].
    varshni_alpha : float
        Varshni alpha [eV/K].
    varshni_beta : float
        Varshni beta [K].
    nc_300, nv_300 : float
        Effective densities of states of conduction and valence band at 300 K [m^-3].
    ni_300 : float
        Intrinsic carrier density at 300 K [m^-3].
    mu_n, mu_p : float
        Low-field (lattice) mobility of electrons and holes at 300 K [m^2/(V s)].
    v_sat_n, v_sat_p : float
        Saturation (high-field drift) velocity of electrons and holes [m/s].
    e_crit : float
        Nominal critical (breakdown) field as tabulated [V/m]; the junction models use the
        doping-dependent :meth:`critical_field`.
    mu_n_exponent, mu_p_exponent : float, optional
        Temperature exponents gamma of the lattice mobility, mu(T) = mu(300 K)
        (T / 300 K)^-gamma [-] (default 0: no temperature dependence).
    v_sat_n_coefficient, v_sat_p_coefficient : float, optional
        Coefficient A of the saturation velocity law v_sat(T) = v_sat(300 K) /
        ((1 - A) + A T / 300 K) [-], 0 to 1 (default 0: constant).
    sources : Mapping[str, str]
        Field name -> citation of the published value (read-only).

    Notes
    -----
    Build one with :func:`material`; use :func:`dataclasses.replace` to vary a value
    (for instance to rerun a textbook example with its ``eps_r`` and ``ni_300``).
    """

    name: str
    eps_r: float
    eg_0k: float
    varshni_alpha: float
    varshni_beta: float
    nc_300: float
    nv_300: float
    ni_300: float
    mu_n: float
    mu_p: float
    v_sat_n: float
    v_sat_p: float
    e_crit: float
    mu_n_exponent: float = 0.0
    mu_p_exponent: float = 0.0
    v_sat_n_coefficient: float = 0.0
    v_sat_p_coefficient: float = 0.0
    sources: Mapping[str, str] = field(default_factory=dict, compare=False, hash=False, repr=False)

    def __post_init__(self):
        units = {"eps_r": "", "eg_0k": "eV", "varshni_alpha": "eV/K", "varshni_beta": "K",
                 "nc_300": "m^-3", "nv_300": "m^-3", "ni_300": "m^-3", "mu_n": "m^2/(V s)",
                 "mu_p": "m^2/(V s)", "v_sat_n": "m/s", "v_sat_p": "m/s", "e_crit": "V/m"}
        for name in ("mu_n_exponent", "mu_p_exponent"):
            object.__setattr__(self, name, float(require_in_range(name, getattr(self, name),
                                                                  "", 0.0, 4.0)))
        for name in ("v_sat_n_coefficient", "v_sat_p_coefficient"):
            object.__setattr__(self, name, float(require_in_range(name, getattr(self, name),
                                                                  "", 0.0, 1.0)))
        for name, unit in units.items():
            if name == "varshni_alpha":
                value = require_in_range(name, getattr(self, name), unit, 0.0)
            else:
                value = require_positive(name, getattr(self, name), unit)
            object.__setattr__(self, name, float(value))
        object.__setattr__(self, "sources", MappingProxyType(dict(self.sources)))

    @property
    def optical_source(self) -> str:
        """The published data sets behind this material's n, k table (author, year, page).

        Text of the header of ``photorx/data/optical_<name>.csv``; see
        :mod:`~photorx.device.optical_data`. DesignError for a material without a table.
        """
        from .optical_data import optical_source

        return optical_source(self.name)

    @property
    def permittivity(self) -> float:
        """Absolute static permittivity eps_r * eps0 [F/m]."""
        return self.eps_r * eps0

    def band_gap(self, temperature=_T_REF):
        """Band gap [eV] at ``temperature`` [K] (Varshni form, see :func:`band_gap_varshni`).

        Parameters
        ----------
        temperature : float or array_like, optional
            Temperature [K], 50-600 K (:data:`TEMPERATURE_RANGE`); default 300 K.

        Returns
        -------
        float or numpy.ndarray
            Band gap Eg(T) [eV].
        """
        t = check_temperature(temperature)
        return band_gap_varshni(t, self.eg_0k, self.varshni_alpha, self.varshni_beta)

    def nc(self, temperature=_T_REF):
        """Effective density of states of the conduction band [m^-3]: Nc(300 K) (T/300 K)^1.5.

        Parameters
        ----------
        temperature : float or array_like, optional
            Temperature [K], 50-600 K (:data:`TEMPERATURE_RANGE`); default 300 K.

        Returns
        -------
        float or numpy.ndarray
            Nc(T) [m^-3].
        """
        t = check_temperature(temperature)
        return _scalar_or_array(self.nc_300 * (np.asarray(t) / _T_REF) ** 1.5)

    def nv(self, temperature=_T_REF):
        """Effective density of states of the valence band [m^-3]: Nv(300 K) (T/300 K)^1.5.

        Parameters
        ----------
        temperature : float or array_like, optional
            Temperature [K], 50-600 K (:data:`TEMPERATURE_RANGE`); default 300 K.

        Returns
        -------
        float or numpy.ndarray
            Nv(T) [m^-3].
        """
        t = check_temperature(temperature)
        return _scalar_or_array(self.nv_300 * (np.asarray(t) / _T_REF) ** 1.5)

    def intrinsic_density(self, temperature=_T_REF):
        """Intrinsic carrier density ni [m^-3] at ``temperature`` [K].

        Parameters
        ----------
        temperature : float or array_like, optional
            Temperature [K], 50-600 K (:data:`TEMPERATURE_RANGE`); default 300 K.

        Returns
        -------
        float or numpy.ndarray
            ni(T) [m^-3].

        Notes
        -----
        ni(T) = ni(300 K) (T / 300 K)^(3/2) exp(Eg(300 K) / (2 k 300 K) - Eg(T) / (2 k T)),
        the ratio of ni = sqrt(Nc Nv) exp(-Eg / 2kT) at T and at 300 K. The shipped
        materials have ni(300 K) computed from their Nc, Nv and Eg, so this is
        sqrt(Nc(T) Nv(T)) exp(-Eg(T)/2kT) itself; a user-set ``ni_300`` (e.g. a textbook
        example's) anchors the same law. Valid 50-600 K; for Si it agrees with Misiakos
        and Tsamakis (1993) within about 10 % over 250-400 K.

        References
        ----------
        .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
           2007, ch. 1, Eq. (25).
        """
        t = np.asarray(check_temperature(temperature), dtype=float)
        kq = k / q  # [eV/K]
        eg_t = band_gap_varshni(t, self.eg_0k, self.varshni_alpha, self.varshni_beta)
        eg_r = band_gap_varshni(_T_REF, self.eg_0k, self.varshni_alpha, self.varshni_beta)
        out = self.ni_300 * (t / _T_REF) ** 1.5 * np.exp(eg_r / (2 * kq * _T_REF)
                                                         - eg_t / (2 * kq * t))
        return out if np.ndim(out) else float(out)

    def mobility(self, carrier, temperature=_T_REF):
        """Low-field (lattice) mobility of ``carrier`` ("n" or "p") at temperature [m^2/(V s)].

        Parameters
        ----------
        carrier : {"n", "p"}
            Electrons ("n") or holes ("p"); anything else is a DesignError.
        temperature : float or array_like, optional
            Temperature [K], 50-600 K (:data:`TEMPERATURE_RANGE`); default 300 K.

        Returns
        -------
        float or numpy.ndarray
            Mobility mu(T) [m^2/(V s)].

        Notes
        -----
        mu(T) = mu(300 K) (T / 300 K)^-gamma, the lattice-scattering law of lightly doped
        material (gamma: ``mu_n_exponent`` / ``mu_p_exponent``; Si 2.33 / 2.23 after Arora
        et al. 1982, III-V after Sotoodeh et al. 2000). Valid roughly 200-400 K for doping
        below ~1e16 cm^-3, where lattice scattering dominates (Si: within 8 % of Arora's
        full model there; it omits that model's weak T^-0.57 term, so it falls faster
        above 400 K); ionised-impurity scattering of heavily doped layers is not modelled.

        References
        ----------
        .. [1] N. D. Arora, J. R. Hauser and D. J. Roulston, IEEE Trans. Electron Devices
           29, 292 (1982).
        .. [2] M. Sotoodeh, A. H. Khalid and A. A. Rezazadeh, J. Appl. Phys. 87, 2890
           (2000).
        """
        return self._transport(carrier, "mu", check_temperature(temperature))

    def saturation_velocity(self, carrier, temperature=_T_REF):
        """Saturation velocity of ``carrier`` ("n" or "p") at temperature [m/s].

        Parameters
        ----------
        carrier : {"n", "p"}
            Electrons ("n") or holes ("p"); anything else is a DesignError.
        temperature : float or array_like, optional
            Temperature [K], 50-600 K (:data:`TEMPERATURE_RANGE`); default 300 K.

        Returns
        -------
        float or numpy.ndarray
            Saturation velocity v_sat(T) [m/s].

        Notes
        -----
        v_sat(T) = v_sat(300 K) / ((1 - A) + A T / 300 K) (A: ``v_sat_n_coefficient`` /
        ``v_sat_p_coefficient``), falling with temperature as phonon emission grows.

        References
        ----------
        .. [1] R. Quay, C. Moglestue, V. Palankovski and S. Selberherr, Materials Science
           in Semiconductor Processing 3, 149 (2000).
        """
        return self._transport(carrier, "v_sat", check_temperature(temperature))

    def _transport(self, carrier, what, temperature):
        """mobility ("mu") or saturation velocity ("v_sat") at an already checked T."""
        if carrier not in ("n", "p"):
            raise DesignError(f"carrier = {carrier!r} is invalid; valid: 'n' or 'p'",
                              parameter="carrier")
        t = np.asarray(temperature, dtype=float) / _T_REF
        if what == "mu":
            mu, g = getattr(self, f"mu_{carrier}"), getattr(self, f"mu_{carrier}_exponent")
            return _scalar_or_array(mu * t**-g) if g else mu + 0.0 * t
        v, a = getattr(self, f"v_sat_{carrier}"), getattr(self, f"v_sat_{carrier}_coefficient")
        return _scalar_or_array(v / ((1.0 - a) + a * t))

    def cutoff_wavelength(self, temperature=_T_REF):
        """Long-wavelength absorption edge lambda_c = h c / Eg(T) [m].

        Parameters
        ----------
        temperature : float or array_like, optional
            Temperature [K], 50-600 K (:data:`TEMPERATURE_RANGE`); default 300 K.

        Returns
        -------
        float or numpy.ndarray
            Cut-off wavelength lambda_c [m].
        """
        return _scalar_or_array(h * c / (q * np.asarray(self.band_gap(temperature))))

    def critical_field(self, doping):
        """Critical field for avalanche breakdown versus doping [V/m].

        Parameters
        ----------
        doping : float or array_like
            Doping of the lightly doped side [m^-3], > 0. Clipped to 1e14-1e18 cm^-3, the
            range of the universal expression.

        Returns
        -------
        float or numpy.ndarray
            Ec [V/m].

        Notes
        -----
        Ec = sqrt(2 q N VB(N) / eps) with VB(N) from
        :func:`universal_breakdown_voltage` (Eg at 300 K), i.e. the field that makes the
        depletion approximation reproduce the universal breakdown law; Ec grows as N^(1/8).
        Si: about 3.2e5 V/cm at 1e15 cm^-3, consistent with the tabulated ~3e5 V/cm.

        References
        ----------
        .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
           2007, ch. 2 (junction breakdown) and Appendix G.
        """
        n = np.clip(require_positive("doping", doping, "m^-3"), 1e20, 1e24)
        vb = universal_breakdown_voltage(n, self.band_gap(_T_REF))
        out = np.sqrt(2.0 * q * n * vb / self.permittivity)
        return out if np.ndim(out) else float(out)


def _scalar_or_array(x):
    return x if np.ndim(x) else float(x)


def _convert(entry, mat: str, key: str):
    try:
        factor = _UNIT_FACTORS[entry["unit"]]
    except KeyError:  # a malformed data file is a bug of the package, not of the user
        raise RuntimeError(f"materials.toml: [{mat}].{key} has an unknown unit {entry!r}") from None
    return float(entry["value"]) * factor


@functools.lru_cache(maxsize=1)
def _table() -> dict:
    text = resources.files("photorx").joinpath("data/materials.toml").read_text(encoding="utf-8")
    data = tomllib.loads(text)
    cites = data.pop("sources")
    out = {}
    for name, rec in data.items():
        values = {key: _convert(rec[key], name, key) for key in _FIELDS}
        sources = {key: cites[rec[key]["source"]] for key in _FIELDS}
        values["ni_300"] = intrinsic_density_from_states(
            values["nc_300"], values["nv_300"],
            band_gap_varshni(_T_REF, values["eg_0k"], values["varshni_alpha"],
                             values["varshni_beta"]), _T_REF)
        sources["ni_300"] = ("computed: sqrt(Nc Nv) exp(-Eg/2kT) at 300 K (Sze and Ng 2007, "
                             "ch. 1, Eq. (25)) from Nc, Nv and the Varshni gap; tabulated "
                             f"value {_convert(rec['ni_300_published'], name, 'ni'):.3g} m^-3 "
                             f"({cites[rec['ni_300_published']['source']]})")
        out[name.lower()] = Material(name=name, sources=sources, **values)
    return out


def known_materials() -> tuple[str, ...]:
    """Names accepted by :func:`material`, as written in the data file."""
    return tuple(m.name for m in _table().values())


def material(name: str) -> Material:
    """Look up a semiconductor by name (case-insensitive).

    Parameters
    ----------
    name : str
        ``"Si"``, ``"Ge"``, ``"GaAs"``, ``"InP"`` or ``"InGaAs"`` (In0.53Ga0.47As
        lattice-matched to InP; ``"In0.53Ga0.47As"`` is accepted too).

    Returns
    -------
    Material
        Frozen record with the values and their citations (``.sources``).

    Raises
    ------
    DesignError
        Unknown name; the message lists the known materials.
    """
    table = _table()
    key = str(name).strip().lower()
    if key in ("in0.53ga0.47as", "ga0.47in0.53as"):
        key = "ingaas"
    try:
        return table[key]
    except KeyError:
        raise DesignError(f"material = {name!r} is unknown; known materials: "
                          f"{', '.join(known_materials())}", parameter="material") from None
