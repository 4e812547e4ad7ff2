"""Impact ionisation coefficients alpha_n(E), alpha_p(E) of electrons and holes.

Functional core: :func:`chynoweth` (the field law), :func:`phonon_temperature_factor`
(the optical-phonon temperature law) and :func:`ionization_coefficients` (both carriers of
a material from the published parameter table ``photorx/data/ionization_coefficients.csv``,
which names the source of every row). Everything broadcasts over field and temperature.

Fields are magnitudes [V/m]; coefficients are per metre [1/m].
"""

from __future__ import annotations

import csv
import functools
from importlib import resources

import numpy as np

from .._validate import require_nonnegative, require_positive
from ..constants import k, q
from ..errors import DesignError
from .materials import check_temperature

__all__ = [
    "chynoweth",
    "phonon_temperature_factor",
    "ionization_coefficients",
    "ionization_parameters",
    "ionization_materials",
    "ionization_ratio",
]

_T0 = 300.0  # reference temperature of the tabulated sets [K]


def _out(x):
    return x if np.ndim(x) else float(x)


def chynoweth(field, a, b, m=1.0):
    """Chynoweth law of an impact ionisation coefficient [1/m].

    Parameters
    ----------
    field : float or array_like
        Electric field magnitude |E| [V/m], >= 0.
    a : float or array_like
        Prefactor [1/m], > 0.
    b : float or array_like
        Characteristic field [V/m], > 0.
    m : float or array_like, optional
        Exponent [-] (1 for the sets shipped with photorx).

    Returns
    -------
    float or numpy.ndarray
        alpha [1/m]; 0 at zero field.

    Notes
    -----
    alpha(E) = a exp(-(b/E)^m). Valid inside the field range of the parameter set; below
    it the law still falls steeply towards 0, which is the physical trend.

    References
    ----------
    .. [1] A. G. Chynoweth, Ionization rates for electrons and holes in silicon,
       Phys. Rev. 109, 1537 (1958).
    """
    e = np.abs(np.asarray(require_nonnegative("field", field, "V/m"), dtype=float))
    a, b, m = (np.asarray(x, dtype=float) for x in (a, b, m))
    with np.errstate(divide="ignore"):  # E = 0 gives b/E = inf and alpha = 0 exactly
        ratio = np.where(e > 0, b / np.where(e > 0, e, 1.0), np.inf)
    return _out(a * np.exp(-(ratio ** m)))


def phonon_temperature_factor(temperature, phonon_energy, reference_temperature=_T0):
    """Optical-phonon temperature factor gamma(T) of the ionisation law [-].

    Parameters
    ----------
    temperature : float or array_like
        Temperature [K], 50 to 600.
    phonon_energy : float or array_like
        Optical phonon energy [eV], > 0 (0.063 eV for Si).
    reference_temperature : float, optional
        Temperature at which the parameter set was measured [K] (300).

    Returns
    -------
    float or numpy.ndarray
        gamma = tanh(E_ph / 2kT0) / tanh(E_ph / 2kT); 1 at T0, > 1 above it.

    Notes
    -----
    alpha(E, T) = gamma a exp(-gamma b / E): the mean free path between phonon
    emissions shortens as the phonon occupation grows with T, so the ionisation rate at a
    given field falls and breakdown rises with temperature.

    References
    ----------
    .. [1] R. van Overstraeten and H. de Man, Solid-State Electronics 13, 583 (1970).
    .. [2] C. R. Crowell and S. M. Sze, Temperature dependence of avalanche
       multiplication in semiconductors, Appl. Phys. Lett. 9, 242 (1966) (from memory).
    """
    t = np.asarray(check_temperature(temperature), dtype=float)
    e_ph = np.asarray(require_positive("phonon_energy", phonon_energy, "eV"), dtype=float)
    x0 = e_ph * q / (2.0 * k * reference_temperature)
    x = e_ph * q / (2.0 * k * t)
    return _out(np.tanh(x0) / np.tanh(x))


@functools.lru_cache(maxsize=None)
def _table():
    text = resources.files("photorx.data").joinpath("ionization_coefficients.csv").read_text()
    rows = csv.DictReader(line for line in text.splitlines()
                          if line.strip() and not line.startswith("#"))
    out = {}
    for r in rows:
        entry = {
            # table in cm units; convert to SI once here
            "field_min": float(r["field_min"]) * 1e2, "field_max": float(r["field_max"]) * 1e2,
            "a": float(r["a"]) * 1e2, "b": float(r["b"]) * 1e2, "m": float(r["m"]),
            "phonon_energy": float(r["phonon_energy"]) if r["phonon_energy"] else None,
            "source": r["source"],
        }
        out.setdefault((r["material"], r["carrier"]), []).append(entry)
    for rows_ in out.values():
        rows_.sort(key=lambda e: e["field_min"])
    return out


def ionization_materials() -> tuple[str, ...]:
    """Materials with a shipped ionisation parameter set (e.g. ``("InP", "Si")``)."""
    return tuple(sorted({m for m, _ in _table()}))


def ionization_parameters(material: str, carrier: str) -> tuple[dict, ...]:
    """The parameter rows of one material and carrier, SI units, low field range first.

    Parameters
    ----------
    material : str
        Material name (see :func:`ionization_materials`).
    carrier : {"n", "p"}
        Electrons or holes.

    Returns
    -------
    tuple of dict
        Keys field_min, field_max [V/m], a [1/m], b [V/m], m [-], phonon_energy [eV] or
        None, source (key into the CSV header's source list).
    """
    name = getattr(material, "name", material)
    if carrier not in ("n", "p"):
        raise DesignError(f"carrier = {carrier!r} is invalid; valid: 'n' or 'p'",
                          parameter="carrier")
    try:
        return tuple(dict(e) for e in _table()[(name, carrier)])
    except KeyError:
        raise DesignError(f"material = {name!r} has no impact ionisation parameter set; "
                          f"valid: {', '.join(ionization_materials())}",
                          parameter="material") from None


def _coefficient(field, rows, temperature):
    e = np.asarray(field, dtype=float)
    out = np.zeros(np.broadcast_shapes(e.shape, np.shape(temperature)))
    for i, r in enumerate(rows):
        g = 1.0 if r["phonon_energy"] is None else np.asarray(
            phonon_temperature_factor(temperature, r["phonon_energy"]))
        value = np.asarray(chynoweth(e, g * r["a"], g * r["b"], r["m"]))
        # each row holds from its lower range limit up (the first row also below it, the
        # last also above it), so that the piecewise law is defined at every field
        lo = -np.inf if i == 0 else r["field_min"]
        out = np.where(e >= lo, value, out)
    return out


def ionization_coefficients(field, material, temperature=_T0):
    """Electron and hole impact ionisation coefficients (alpha_n, alpha_p) [1/m].

    Parameters
    ----------
    field : float or array_like
        Electric field magnitude [V/m], >= 0.
    material : str or Material
        "Si" or "InP" (see :func:`ionization_materials`).
    temperature : float or array_like, optional
        Temperature [K], 50 to 600 (default 300). Ignored (no dependence) for sets whose
        source gives none (InP).

    Returns
    -------
    alpha_n, alpha_p : float or numpy.ndarray
        [1/m], broadcast of field and temperature.

    Notes
    -----
    alpha = gamma a exp(-(gamma b / E)^m), piecewise in field where the source gives two
    ranges (Si holes: switch at 4e5 V/cm), gamma from :func:`phonon_temperature_factor`.
    Validity (as published): Si 1.75e5 to 6e5 V/cm; InP 2.4e5 to 3.8e5 V/cm (used up to
    about 7e5 V/cm, where InP multipliers break down, as an extrapolation). Dead space
    (thin multipliers below about 0.2 um) is not modelled.

    References
    ----------
    .. [1] R. van Overstraeten and H. de Man, Measurement of the ionization rates in
       diffused silicon p-n junctions, Solid-State Electronics 13, 583 (1970) (values
       from memory, see the data file header).
    .. [2] L. W. Cook, G. E. Bulman and G. E. Stillman, Electron and hole impact
       ionization coefficients in InP determined by photomultiplication measurements,
       Appl. Phys. Lett. 40, 589 (1982) (from memory).
    """
    e = require_nonnegative("field", field, "V/m")
    t = check_temperature(temperature)
    a_n = _coefficient(e, ionization_parameters(material, "n"), t)
    a_p = _coefficient(e, ionization_parameters(material, "p"), t)
    return _out(a_n), _out(a_p)


def ionization_ratio(field, material, temperature=_T0):
    """Ionisation coefficient ratio k = alpha_p / alpha_n at a field [-].

    Parameters
    ----------
    field : float or array_like
        Electric field magnitude [V/m], > 0.
    material : str or Material
        "Si" or "InP".
    temperature : float or array_like, optional
        Temperature [K] (default 300).

    Returns
    -------
    float or numpy.ndarray
        alpha_p / alpha_n: the k of McIntyre's excess noise for electron injection (Si);
        for hole injection (InP) use its inverse.

    References
    ----------
    .. [1] R. J. McIntyre, Multiplication noise in uniform avalanche diodes, IEEE Trans.
       Electron Devices 13, 164 (1966).
    """
    require_positive("field", field, "V/m")
    a_n, a_p = ionization_coefficients(field, material, temperature)
    return _out(np.asarray(a_p) / np.asarray(a_n))
