"""Database-backed optical constants n, k of the photodiode materials.

The package data files ``photorx/data/optical_<material>.csv`` hold vacuum wavelength,
refractive index n and extinction coefficient k extracted from the refractiveindex.info
database (public domain) by ``photorx/data/make_optical_tables.py``; each file's header
names its data sets (author, year, database page), and ``reference/SOURCES.md`` lists
them again. The files are read once per process (cached) and interpolated with numpy:

- ln(alpha) linearly in photon energy (alpha = 4 pi k / lambda), which keeps the
  exponential absorption edges and their sub-gap tails (phonon-assisted absorption in Si
  and Ge, an Urbach tail in the direct-gap materials) exact between rows;
- n linearly in photon energy.

Temperature moves the absorption edge rigidly with the band gap Eg(T) of the material
(:func:`absorption_coefficient`); n is kept at its 300 K value.

Glossary: ``n`` refractive index [-], ``k`` extinction coefficient [-], ``alpha``
absorption coefficient [m^-1].
"""

from __future__ import annotations

import functools
from importlib import resources

import numpy as np

from .._validate import require_positive
from ..constants import c, h, q
from ..errors import DesignError

__all__ = [
    "OPTICAL_MATERIALS",
    "table_key",
    "optical_table",
    "optical_source",
    "refractive_index",
    "extinction_coefficient",
    "complex_index",
    "shifted_absorption",
]

#: Materials with a shipped n, k table (names as :func:`photorx.material` spells them).
OPTICAL_MATERIALS = ("Si", "Ge", "GaAs", "InP", "InGaAs")

_HC_EV_M = h * c / q  # photon energy times wavelength [eV m]
_ALIASES = {"in0.53ga0.47as": "InGaAs", "ga0.47in0.53as": "InGaAs"}


def _out(x):
    return x if np.ndim(x) else (complex(x) if np.iscomplexobj(x) else float(x))


def table_key(name) -> str:
    """Canonical material name of a table (case-insensitive); DesignError if none.

    Parameters
    ----------
    name : str or Material
        Material name, case-insensitive, one of :data:`OPTICAL_MATERIALS` (also
        "In0.53Ga0.47As"), or an object with such a ``name``; DesignError otherwise.
    """
    key = str(getattr(name, "name", name)).strip().lower()
    if key in _ALIASES:
        return _ALIASES[key]
    for known in OPTICAL_MATERIALS:
        if known.lower() == key:
            return known
    raise DesignError(f"material = {name!r} has no absorption table; tables exist for "
                      f"{', '.join(OPTICAL_MATERIALS)} (or give the responsivity directly)",
                      parameter="material")


class _Table:
    """One material's table, with the arrays the interpolation needs precomputed."""

    def __init__(self, text: str):
        lines = text.splitlines()
        self.header = "\n".join(ln[1:].strip() for ln in lines if ln.startswith("#"))
        rows = [ln.split(",") for ln in lines if ln and not ln.startswith("#")][1:]
        self.wavelength = np.array([float(r[0]) for r in rows]) * 1e-9  # [m]
        self.n = np.array([float(r[1]) for r in rows])
        self.k = np.array([float(r[2]) for r in rows])
        self.origin = tuple(r[3].strip() for r in rows)
        self.alpha = 4.0 * np.pi * self.k / self.wavelength  # [m^-1]
        if np.any(np.diff(self.wavelength) <= 0) or np.any(self.k <= 0):
            raise RuntimeError("optical table: wavelengths must increase and k > 0")
        # energies increasing (np.interp needs that): the reversed table
        self.energy = (_HC_EV_M / self.wavelength)[::-1]
        self.log_alpha = np.log(self.alpha)[::-1]
        self.n_by_energy = self.n[::-1]
        for arr in (self.wavelength, self.n, self.k, self.alpha, self.energy, self.log_alpha,
                    self.n_by_energy):
            arr.flags.writeable = False


@functools.lru_cache(maxsize=None)
def _load(key: str) -> _Table:
    text = resources.files("photorx").joinpath(f"data/optical_{key.lower()}.csv").read_text(
        encoding="utf-8")
    return _Table(text)


def optical_table(name):
    """Shipped 300 K table of a material: (wavelength [m], n [-], k [-]), read-only arrays.

    Parameters
    ----------
    name : str or Material
        Material name, case-insensitive, one of :data:`OPTICAL_MATERIALS` (also
        "In0.53Ga0.47As"), or an object with such a ``name``; DesignError otherwise.
    """
    t = _load(table_key(name))
    return t.wavelength, t.n, t.k


def optical_source(name) -> str:
    """The data sets behind a material's n, k table (the file header), as text.

    Parameters
    ----------
    name : str or Material
        Material name, case-insensitive, one of :data:`OPTICAL_MATERIALS` (also
        "In0.53Ga0.47As"), or an object with such a ``name``; DesignError otherwise.
    """
    return _load(table_key(name)).header


def shifted_absorption(wavelength, table_energy, table_log_alpha, shift, name="absorption"):
    """alpha [m^-1] from a table of ln(alpha) versus photon energy, shifted by ``shift`` [eV].

    Parameters
    ----------
    wavelength : float or array_like
        Vacuum wavelength [m], > 0.
    table_energy : array_like
        Increasing photon energies of the table [eV].
    table_log_alpha : array_like
        ln(alpha [m^-1]) at those energies.
    shift : float or array_like
        Eg(T) - Eg(T_table) [eV]; the whole spectrum moves with the gap.
    name : str, optional
        Table name for the error message.

    Returns
    -------
    float or numpy.ndarray
        alpha [m^-1]; 0 below the lowest table energy (the tables end where absorption is
        negligible: Si 1e-8 cm^-1, Ge and the Urbach tails 1e-2 cm^-1).

    Raises
    ------
    DesignError
        Photon energy above the table (short-wavelength end); the message names the range.

    Notes
    -----
    E = h c / lambda; alpha(E, T) = alpha_300(E - (Eg(T) - Eg(300 K))), ln(alpha)
    interpolated linearly in E. The rigid shift of the edge with the gap is the usual
    first-order temperature model of the absorption edge.
    """
    wl = require_positive("wavelength", wavelength, "m")
    e = _HC_EV_M / np.asarray(wl, dtype=float)
    e_ref = e - np.asarray(shift, dtype=float)
    te = np.asarray(table_energy)
    too_high = e_ref > te[-1] * (1 + 1e-12)
    if np.any(too_high):
        sh = np.broadcast_to(np.asarray(shift, dtype=float), too_high.shape)
        bad_e = np.broadcast_to(e, too_high.shape)[too_high][0]
        _raise(bad_e, float(sh[too_high][0]), name, te)
    log_a = np.interp(e_ref, te, np.asarray(table_log_alpha))
    return _out(np.where(e_ref >= te[0] * (1 - 1e-12), np.exp(log_a), 0.0))


def _raise(bad_e, sh, name, te):
    lo_wl, hi_wl = _HC_EV_M / (te[-1] + sh), _HC_EV_M / max(te[0] + sh, 1e-30)
    note = "" if sh == 0 else (f", {_HC_EV_M / te[-1] * 1e9:.0f} to {_HC_EV_M / te[0] * 1e9:.0f}"
                               " nm at 300 K shifted with the band gap")
    raise DesignError.out_of_range(
        "wavelength", _HC_EV_M / bad_e, "m",
        f"{lo_wl:.4g} to {hi_wl:.4g} m ({lo_wl * 1e9:.0f} to {hi_wl * 1e9:.0f} nm, range of "
        f"the {name} table{note})")


def _energy_ref(wavelength, shift=0.0):
    wl = require_positive("wavelength", wavelength, "m")
    return _HC_EV_M / np.asarray(wl, dtype=float) - shift


def refractive_index(wavelength, material):
    """Refractive index n [-] of a material at vacuum wavelength [m] (300 K table).

    Interpolated linearly in photon energy; held at the end values outside the table
    (n varies slowly there).

    Parameters
    ----------
    wavelength : float or array_like
        Vacuum wavelength [m], > 0 (any value outside the table gets the end value).
    material : str or Material
        Material name, case-insensitive, one of :data:`OPTICAL_MATERIALS` (also
        "In0.53Ga0.47As"), or an object with such a ``name``; DesignError otherwise.
    """
    t = _load(table_key(material))
    return _out(np.interp(_energy_ref(wavelength), t.energy, t.n_by_energy))


def extinction_coefficient(wavelength, material, shift=0.0):
    """Extinction coefficient k = alpha lambda / (4 pi) [-] at 300 K (``shift`` as alpha).

    Parameters
    ----------
    wavelength : float or array_like
        Vacuum wavelength [m], > 0 and not shorter than the table's short end (shifted
        with the band gap; DesignError names the range); 0 beyond the long end.
    material : str or Material
        Material name, case-insensitive, one of :data:`OPTICAL_MATERIALS` (also
        "In0.53Ga0.47As"), or an object with such a ``name``; DesignError otherwise.
    shift : float or array_like, optional
        Band-gap change Eg(T) - Eg(300 K) [eV] that moves the absorption edge rigidly
        (default 0, the 300 K table).
    """
    key = table_key(material)
    t = _load(key)
    a = np.asarray(shifted_absorption(wavelength, t.energy, t.log_alpha, shift,
                                      f"{key} absorption"))
    return _out(a * np.asarray(wavelength, dtype=float) / (4.0 * np.pi))


def complex_index(wavelength, material, shift=0.0):
    """Complex refractive index N = n - i k [-] (engineering sign, loss for Im N < 0).

    Parameters
    ----------
    wavelength : float or array_like
        Vacuum wavelength [m], > 0 and not shorter than the table's short end (shifted
        with the band gap; DesignError names the range); k = 0 beyond the long end.
    material : str or Material
        Material name, case-insensitive, one of :data:`OPTICAL_MATERIALS` (also
        "In0.53Ga0.47As"), or an object with such a ``name``; DesignError otherwise.
    shift : float or array_like, optional
        Band-gap change Eg(T) - Eg(300 K) [eV] that moves the absorption edge rigidly
        (default 0, the 300 K table).
    """
    return _out(np.asarray(refractive_index(wavelength, material))
                - 1j * np.asarray(extinction_coefficient(wavelength, material, shift)))
