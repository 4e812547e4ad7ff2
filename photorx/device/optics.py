"""Optics of a photodiode: absorption data, quantum efficiency and responsivity.

Functional core (pure, vectorised, SI): :func:`absorption_coefficient` interpolates the
shipped n, k tables (:mod:`~photorx.device.optical_data`, extracted from the
refractiveindex.info database, each naming its data sets), :func:`fresnel_reflectance`
and :func:`coated_reflectance` give the front reflectance from the complex index,
:func:`internal_quantum_efficiency` collects the carriers of a
front-illuminated layer stack (undepleted top layer | depletion layer | undepleted bottom
layer), and :func:`responsivity_from_qe` turns quantum efficiency into A/W.

Structure assumed by the quantum-efficiency model (x measured from the illuminated
surface, light at normal incidence)::

    0 .. d            undepleted top layer, minority diffusion length L_t, low-recombination
                      (passivated) front surface
    d .. d + W        depletion layer: every pair generated here is collected
    d + W .. d + W + H  undepleted bottom layer, diffusion length L_b, low-recombination
                      back boundary (high-low junction or heterointerface); H may be inf

Glossary: ``alpha`` absorption coefficient [m^-1]; ``reflectance`` front power
reflectance [-]; ``qe`` external quantum efficiency [-] (electrons per incident photon).
"""

from __future__ import annotations

import numpy as np

from .._validate import as_float_array, require_in_range, require_nonnegative, require_positive
from ..constants import c, h, q
from ..errors import DesignError
from . import optical_data as _od

__all__ = [
    "ABSORPTION_MATERIALS",
    "absorption_table",
    "absorption_source",
    "interpolate_absorption",
    "absorption_coefficient",
    "photon_energy",
    "fresnel_reflectance",
    "coated_reflectance",
    "responsivity_from_qe",
    "qe_from_responsivity",
    "top_layer_collection",
    "bottom_layer_collection",
    "collection_fractions",
    "internal_quantum_efficiency",
    "quantum_efficiency",
    "interpolate_responsivity",
    "require_thickness_or_inf",
]

#: Materials with a shipped absorption table (names as :func:`photorx.material` spells them).
ABSORPTION_MATERIALS = _od.OPTICAL_MATERIALS

_T_REF = 300.0  # temperature of the tables [K]
_HC_EV_M = h * c / q  # photon energy times wavelength [eV m]; 1.23984e-6


def _out(x):
    return x if np.ndim(x) else (complex(x) if np.iscomplexobj(x) else float(x))


# ---------------------------------------------------------------------------------------
# absorption data (photorx.device.optical_data holds the tables)
# ---------------------------------------------------------------------------------------
def absorption_table(name: str):
    """Shipped absorption data of a material at 300 K.

    Parameters
    ----------
    name : str
        One of :data:`ABSORPTION_MATERIALS` (case-insensitive).

    Returns
    -------
    wavelength : numpy.ndarray
        Vacuum wavelengths [m], increasing (read-only).
    alpha : numpy.ndarray
        Absorption coefficient 4 pi k / lambda [m^-1] (read-only).
    """
    t = _od._load(_od.table_key(name))
    return t.wavelength, t.alpha


def absorption_source(name: str) -> str:
    """Header of a material's n, k file: the data sets (author, year, database page).

    Parameters
    ----------
    name : str or Material
        Material name, case-insensitive, one of
        :data:`photorx.device.optical_data.OPTICAL_MATERIALS` (also "In0.53Ga0.47As"), or
        an object with such a ``name``; DesignError otherwise.
    """
    return _od.optical_source(name)


def photon_energy(wavelength):
    """Photon energy h c / lambda [eV] of vacuum wavelength ``wavelength`` [m].

    Parameters
    ----------
    wavelength : float or array_like
        Vacuum wavelength [m], > 0.

    References
    ----------
    .. [1] B. E. A. Saleh and M. C. Teich, *Fundamentals of Photonics*, 2nd ed., Wiley,
       2007, ch. 12 (photon energy E = h nu = h c / lambda).
    """
    wl = require_positive("wavelength", wavelength, "m")
    return _out(_HC_EV_M / np.asarray(wl))


def interpolate_absorption(wavelength, table_wavelength, table_alpha, band_gap, band_gap_ref,
                           table_name="absorption"):
    """Absorption coefficient from a 300 K table, shifted with the band gap.

    Parameters
    ----------
    wavelength : float or array_like
        Vacuum wavelength [m], > 0.
    table_wavelength, table_alpha : array_like
        Table at the reference temperature: increasing wavelengths [m], alpha > 0 [m^-1].
    band_gap : float or array_like
        Band gap at the temperature of interest [eV].
    band_gap_ref : float
        Band gap at the temperature of the table [eV].
    table_name : str, optional
        Name used in the error message.

    Returns
    -------
    float or numpy.ndarray
        alpha [m^-1]. Below the band gap the table's own sub-gap tail applies; beyond the
        table's long end (where the data reach negligible absorption) alpha is 0.

    Raises
    ------
    DesignError
        A wavelength shorter than the (shifted) table; the message names the range.

    Notes
    -----
    E = h c / lambda; E_ref = E - (Eg(T) - Eg(T_ref)); alpha(E, T) = alpha_ref(E_ref),
    ln(alpha) interpolated linearly in photon energy between table points. The rigid
    shift of the absorption edge with the band gap is the usual first-order temperature
    model: it reproduces the sign and size of the red-edge temperature coefficient (for Si
    about +1 %/K at 1064 nm, Green 2008), not the broadening of the edge.

    References
    ----------
    .. [1] M. A. Green, Self-consistent optical parameters of intrinsic silicon at 300 K
       including temperature coefficients, Solar Energy Materials & Solar Cells 92, 1305
       (2008).
    """
    t_wl = np.asarray(table_wavelength, dtype=float)
    t_a = np.asarray(table_alpha, dtype=float)
    shift = np.asarray(band_gap, dtype=float) - np.asarray(band_gap_ref, dtype=float)
    return _od.shifted_absorption(wavelength, (_HC_EV_M / t_wl)[::-1], np.log(t_a)[::-1],
                                  shift, table_name)


def absorption_coefficient(wavelength, material, temperature=_T_REF):
    """Absorption coefficient of a semiconductor from the shipped n, k tables [m^-1].

    Parameters
    ----------
    wavelength : float or array_like
        Vacuum wavelength [m].
    material : Material or str
        A :class:`~photorx.device.materials.Material` or its name; its band gap sets the
        temperature shift.
    temperature : float or array_like, optional
        Temperature [K] (default 300).

    Returns
    -------
    float or numpy.ndarray
        alpha = 4 pi k / lambda [m^-1], with the data's sub-gap tail (no cut at Eg).

    Notes
    -----
    See :func:`interpolate_absorption`; the data sets of each table are in
    :func:`absorption_source` and reference/SOURCES.md. The tables are read once and
    cached; the lookup is one ``numpy.interp`` on ln(alpha).

    References
    ----------
    .. [1] M. A. Green, Solar Energy Materials & Solar Cells 92, 1305 (2008) (Si).
    .. [2] T. N. Nunley et al., J. Vac. Sci. Technol. B 34, 061205 (2016) (Ge).
    .. [3] D. E. Aspnes et al., J. Appl. Phys. 60, 754 (1986) (GaAs); D. E. Aspnes and
       A. A. Studna, Phys. Rev. B 27, 985 (1983) (InP).
    .. [4] S. Adachi, J. Appl. Phys. 66, 6030 (1989) (edges of GaAs and InP, and
       In0.53Ga0.47As).
    .. [5] M. N. Polyanskiy, Refractiveindex.info database of optical constants,
       Scientific Data 11, 94 (2024).
    """
    from .materials import material as _material

    mat = _material(material) if isinstance(material, str) else material
    key = _od.table_key(mat.name)
    t = _od._load(key)
    if np.ndim(temperature) == 0 and temperature == _T_REF:
        shift = 0.0  # the tables' own temperature: no band-gap lookups
    else:
        shift = np.asarray(mat.band_gap(temperature)) - mat.band_gap(_T_REF)
    return _od.shifted_absorption(wavelength, t.energy, t.log_alpha, shift,
                                  f"{key} absorption")


def fresnel_reflectance(refractive_index, ambient_index=1.0):
    """Power reflectance of a bare surface at normal incidence [-].

    Parameters
    ----------
    refractive_index : float, complex or array_like
        Refractive index of the semiconductor [-]: real n >= 1, or complex n - i k
        (k >= 0; the sign of the imaginary part does not matter for R).
    ambient_index : float or array_like, optional
        Refractive index of the medium the light comes from [-] (1 = air).

    Notes
    -----
    R = |(N - n0) / (N + n0)|^2 = ((n - n0)^2 + k^2) / ((n + n0)^2 + k^2).

    References
    ----------
    .. [1] M. Born and E. Wolf, *Principles of Optics*, 7th ed., Cambridge University
       Press, 1999, sec. 14.2 (reflection at an absorbing medium).
    .. [2] B. E. A. Saleh and M. C. Teich, *Fundamentals of Photonics*, 2nd ed., Wiley,
       2007, sec. 6.2 (Fresnel equations).
    """
    n_c = np.asarray(refractive_index)
    n = require_in_range("refractive_index", np.real(n_c), "", 1.0)
    kk = np.abs(np.imag(n_c))
    n0 = require_in_range("ambient_index", ambient_index, "", 1.0)
    n, n0 = np.asarray(n), np.asarray(n0)
    return _out(((n - n0) ** 2 + kk**2) / ((n + n0) ** 2 + kk**2))


def coated_reflectance(wavelength, substrate_index, coating_index, coating_thickness,
                       ambient_index=1.0):
    """Power reflectance of a surface with one thin-film coating, normal incidence [-].

    Parameters
    ----------
    wavelength : float or array_like
        Vacuum wavelength [m], > 0.
    substrate_index : complex or array_like
        Index of the semiconductor, n - i k [-] (k >= 0, either sign accepted).
    coating_index : float or array_like
        Real index of the (non-absorbing) coating n1 [-], >= 1.
    coating_thickness : float or array_like
        Physical thickness of the coating d [m], >= 0 (0: bare surface).
    ambient_index : float, optional
        Index of the incidence medium n0 [-] (1 = air).

    Notes
    -----
    r = (r01 + r12 e^{-2 i delta}) / (1 + r01 r12 e^{-2 i delta}), delta = 2 pi n1 d /
    lambda, r01 = (n0 - n1)/(n0 + n1), r12 = (n1 - N2)/(n1 + N2), R = |r|^2. A
    quarter-wave layer (n1 d = lambda/4) with n1 = sqrt(n0 n2) gives R = 0 at lambda for
    a non-absorbing substrate.

    References
    ----------
    .. [1] M. Born and E. Wolf, *Principles of Optics*, 7th ed., Cambridge University
       Press, 1999, sec. 1.6.4 (a single homogeneous film).
    .. [2] E. Hecht, *Optics*, 4th ed., Addison-Wesley, 2002, sec. 9.7.1 (single-layer
       antireflection coatings).
    """
    wl = np.asarray(require_positive("wavelength", wavelength, "m"), dtype=float)
    n1 = np.asarray(require_in_range("coating_index", coating_index, "", 1.0), dtype=float)
    d = np.asarray(require_nonnegative("coating_thickness", coating_thickness, "m"), dtype=float)
    n0 = float(require_in_range("ambient_index", ambient_index, "", 1.0))
    sub = np.asarray(substrate_index)
    n2 = np.real(sub) - 1j * np.abs(np.imag(sub))
    r01 = (n0 - n1) / (n0 + n1)
    r12 = (n1 - n2) / (n1 + n2)
    ph = np.exp(-2j * (2.0 * np.pi * n1 * d / wl))
    r = (r01 + r12 * ph) / (1.0 + r01 * r12 * ph)
    return _out(np.abs(r) ** 2)


def responsivity_from_qe(qe, wavelength):
    """Responsivity R = eta q lambda / (h c) [A/W].

    Parameters
    ----------
    qe : float or array_like
        External quantum efficiency [-], 0 to 1 (no gain).
    wavelength : float or array_like
        Vacuum wavelength [m], > 0.

    Notes
    -----
    R = eta lambda / (1.23984 um) A/W.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13 (responsivity of photodetectors).
    """
    eta = require_in_range("qe", qe, "", 0.0, 1.0)
    wl = require_positive("wavelength", wavelength, "m")
    return _out(np.asarray(eta) * np.asarray(wl) / _HC_EV_M)


def qe_from_responsivity(responsivity, wavelength):
    """Quantum efficiency eta = R h c / (q lambda) [-] of responsivity [A/W] at wavelength [m].

    Parameters
    ----------
    responsivity : float or array_like
        Responsivity [A/W], >= 0 (not capped: a value above q lambda / (h c) gives eta > 1).
    wavelength : float or array_like
        Vacuum wavelength [m], > 0.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13 (responsivity of photodetectors).
    """
    r = require_nonnegative("responsivity", responsivity, "A/W")
    wl = require_positive("wavelength", wavelength, "m")
    return _out(np.asarray(r) * _HC_EV_M / np.asarray(wl))


# ---------------------------------------------------------------------------------------
# carrier collection
# ---------------------------------------------------------------------------------------
def require_thickness_or_inf(name, value):
    """Thickness [m] >= 0 where ``numpy.inf`` (a thick substrate) is allowed.

    Parameters
    ----------
    name : str
        Parameter name used in the DesignError message.
    value : float or array_like
        Thickness [m], >= 0 or +inf; NaN, -inf and negatives raise DesignError.

    Returns
    -------
    float or numpy.ndarray
        ``value`` as float (scalar in, scalar out) or float array.
    """
    raw = np.asarray(as_float_array(name, value, "m"), dtype=float)
    finite = np.where(np.isposinf(raw), 0.0, raw)
    require_nonnegative(name, finite, "m")  # rejects NaN, -inf and negatives
    return _out(raw)


def _g(z):
    """(1 - exp(-z)) / z with g(0) = 1; complex-safe. Callers keep Re(z) >= 0.

    Each element takes only the branch it needs: 1 - exp(-z) where |z| >= 0.01 (cancellation
    costs under 2 digits there, and complex exp is about 3 times cheaper than complex
    expm1), expm1 below, the series 1 - z/2 below 1e-8.
    """
    z = np.asarray(z)
    az = np.abs(z)
    big = az >= 1e-2
    if big.all():
        return (1.0 - np.exp(-z)) / z
    out = np.empty(z.shape, dtype=np.result_type(z, 1.0))
    zb = z[big]
    out[big] = (1.0 - np.exp(-zb)) / zb
    rest = ~big
    zr = z[rest]
    small = az[rest] < 1e-8
    zs = np.where(small, 1.0, zr)
    out[rest] = np.where(small, 1.0 - zr / 2.0, -np.expm1(-zs) / zs)
    return out if out.ndim else out[()]


def _divdiff(p, s, d):
    """(exp(-p d) - exp(-s d)) / (s - p), stable for any p, s with Re >= 0, complex-safe."""
    p, s = np.broadcast_arrays(np.asarray(p), np.asarray(s))
    swap = np.real(p) > np.real(s)
    lo = np.where(swap, s, p)
    hi = np.where(swap, p, s)
    return np.exp(-lo * d) * d * _g((hi - lo) * d)


def _clip_thickness(thickness, b):
    # carriers generated more than ~400 diffusion lengths beyond the depletion edge are
    # never collected (e^-400): clipping a bottom layer there is exact and handles H = inf
    return np.minimum(np.asarray(thickness, dtype=float), 400.0 / np.real(b))


def _top_collection(a, d, b):
    """Top layer, reflecting front surface: int_0^d a e^{-ax} cosh(bx)/cosh(bd) dx."""
    d = np.asarray(d, dtype=float)  # no clipping: e^{-ad} of a thick top layer matters
    e2 = np.exp(-2.0 * b * d)
    return a / (1.0 + e2) * (_divdiff(b, a, d) + _divdiff(b, a + 2.0 * b, d))


def _bottom_collection(a, thick, b):
    """Bottom layer, reflecting back: int_0^H a e^{-ax} cosh(b(H-x))/cosh(bH) dx."""
    hh = _clip_thickness(thick, b)
    e2 = np.exp(-2.0 * b * hh)
    return a / (1.0 + e2) * (_divdiff(0.0, a + b, hh) + _divdiff(2.0 * b, a + b, hh))


def top_layer_collection(alpha, thickness, diffusion_length):
    """Fraction of photons entering the top layer whose carriers reach the depletion edge [-].

    Parameters
    ----------
    alpha : float or array_like
        Absorption coefficient [m^-1], >= 0.
    thickness : float or array_like
        Undepleted top-layer thickness d [m], >= 0.
    diffusion_length : float or array_like
        Minority-carrier diffusion length in the top layer [m], > 0.

    Notes
    -----
    Generation alpha e^{-alpha x}; collection probability cosh(x/L)/cosh(d/L) (diffusion
    equation with a reflecting, i.e. passivated, front surface and a perfectly collecting
    depletion edge at x = d); the integral in closed form. Limits: alpha d for thin
    layers, 1 - e^{-alpha d} for L -> inf.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13 (quantum efficiency, diffusion from the undepleted regions).
    .. [2] C. Donolato, A reciprocity theorem for charge collection, Applied Physics
       Letters 46, 270 (1985) (collection-probability formulation).
    """
    a = require_nonnegative("alpha", alpha, "m^-1")
    d = require_nonnegative("thickness", thickness, "m")
    ln = require_positive("diffusion_length", diffusion_length, "m")
    return _out(np.real(_top_collection(np.asarray(a), np.asarray(d), 1.0 / np.asarray(ln))))


def bottom_layer_collection(alpha, thickness, diffusion_length):
    """Fraction of photons entering the bottom layer whose carriers reach the depletion edge [-].

    Parameters
    ----------
    alpha : float or array_like
        Absorption coefficient [m^-1], >= 0.
    thickness : float or array_like
        Undepleted bottom-layer thickness H [m], >= 0; ``numpy.inf`` for a thick substrate.
    diffusion_length : float or array_like
        Minority-carrier diffusion length [m], > 0.

    Notes
    -----
    Collection probability cosh((H - x)/L)/cosh(H/L) (reflecting back boundary). For
    H -> inf this is Gaertner's alpha L / (1 + alpha L).

    References
    ----------
    .. [1] W. W. Gaertner, Depletion-layer photoeffects in semiconductors, Physical Review
       116, 84 (1959).
    .. [2] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13.
    """
    a = require_nonnegative("alpha", alpha, "m^-1")
    hh = require_thickness_or_inf("thickness", thickness)
    ln = require_positive("diffusion_length", diffusion_length, "m")
    return _out(np.real(_bottom_collection(np.asarray(a), hh, 1.0 / np.asarray(ln))))


def collection_fractions(alpha, top_thickness, depletion_width, bottom_thickness,
                         top_diffusion_length, bottom_diffusion_length):
    """Collected carriers per photon entering the semiconductor, by region [-].

    Parameters
    ----------
    alpha : float or array_like
        Absorption coefficient [m^-1], >= 0.
    top_thickness : float or array_like
        Undepleted top layer d [m], >= 0.
    depletion_width : float or array_like
        Depletion width W [m], >= 0.
    bottom_thickness : float or array_like
        Undepleted absorbing bottom layer H [m], >= 0 or inf.
    top_diffusion_length, bottom_diffusion_length : float or array_like
        Minority-carrier diffusion lengths [m], > 0.

    Returns
    -------
    top, drift, bottom : float or numpy.ndarray
        Diffusion from the top layer, drift in the depletion layer, diffusion from the
        bottom layer. Their sum is the internal quantum efficiency.

    Notes
    -----
    top = C_t(alpha, d, L_t); drift = e^{-alpha d} (1 - e^{-alpha W});
    bottom = e^{-alpha (d + W)} C_b(alpha, H, L_b), with C_t, C_b from
    :func:`top_layer_collection` and :func:`bottom_layer_collection`. For d = 0, H = inf
    this is Gaertner's eta = 1 - e^{-alpha W} / (1 + alpha L).

    References
    ----------
    .. [1] W. W. Gaertner, Physical Review 116, 84 (1959).
    .. [2] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13 (quantum efficiency of p-i-n photodiodes).
    """
    a = np.asarray(require_nonnegative("alpha", alpha, "m^-1"))
    d = np.asarray(require_nonnegative("top_thickness", top_thickness, "m"))
    w = np.asarray(require_nonnegative("depletion_width", depletion_width, "m"))
    hraw = np.asarray(require_thickness_or_inf("bottom_thickness", bottom_thickness))
    lt = np.asarray(require_positive("top_diffusion_length", top_diffusion_length, "m"))
    lb = np.asarray(require_positive("bottom_diffusion_length", bottom_diffusion_length, "m"))
    top = np.real(_top_collection(a, d, 1.0 / lt))
    drift = np.exp(-a * d) * -np.expm1(-a * w)
    bottom = np.exp(-a * (d + w)) * np.real(_bottom_collection(a, hraw, 1.0 / lb))
    return _out(top), _out(drift), _out(bottom)


def internal_quantum_efficiency(alpha, top_thickness, depletion_width, bottom_thickness,
                                top_diffusion_length, bottom_diffusion_length):
    """Collected carriers per photon entering the semiconductor [-].

    The sum of the three parts of :func:`collection_fractions`, with the same parameters.

    Parameters
    ----------
    alpha : float or array_like
        Absorption coefficient [m^-1], >= 0.
    top_thickness : float or array_like
        Undepleted top layer d [m], >= 0.
    depletion_width : float or array_like
        Depletion width W [m], >= 0.
    bottom_thickness : float or array_like
        Undepleted absorbing bottom layer H [m], >= 0 or inf.
    top_diffusion_length, bottom_diffusion_length : float or array_like
        Minority-carrier diffusion lengths [m], > 0.
    """
    top, drift, bottom = collection_fractions(alpha, top_thickness, depletion_width,
                                              bottom_thickness, top_diffusion_length,
                                              bottom_diffusion_length)
    return _out(np.asarray(top) + drift + bottom)


def quantum_efficiency(alpha, reflectance, top_thickness, depletion_width, bottom_thickness,
                       top_diffusion_length, bottom_diffusion_length):
    """External quantum efficiency eta = (1 - R) eta_int [-].

    Parameters
    ----------
    alpha : float or array_like
        Absorption coefficient [m^-1].
    reflectance : float or array_like
        Front power reflectance [-], 0 to 1.
    top_thickness, depletion_width, bottom_thickness, top_diffusion_length, bottom_diffusion_length
        As :func:`collection_fractions` [m].

    Notes
    -----
    eta = (1 - R) [C_t + e^{-alpha d}(1 - e^{-alpha W}) + e^{-alpha(d+W)} C_b]; light
    reaching the back of the absorbing stack is lost (no back reflection).

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13.
    """
    r = require_in_range("reflectance", reflectance, "", 0.0, 1.0)
    eta = internal_quantum_efficiency(alpha, top_thickness, depletion_width, bottom_thickness,
                                      top_diffusion_length, bottom_diffusion_length)
    return _out((1.0 - np.asarray(r)) * np.asarray(eta))


def interpolate_responsivity(wavelength, table_wavelength, table_responsivity):
    """Responsivity from a user table, linear in wavelength [A/W].

    Parameters
    ----------
    wavelength : float or array_like
        Vacuum wavelength [m].
    table_wavelength : array_like
        Increasing wavelengths of the table [m].
    table_responsivity : array_like
        Responsivity at those wavelengths [A/W], >= 0.

    Raises
    ------
    DesignError
        A wavelength outside the table; the message names the table range.
    """
    wl = require_positive("wavelength", wavelength, "m")
    t_wl = np.asarray(table_wavelength, dtype=float)
    t_r = np.asarray(table_responsivity, dtype=float)
    a = np.asarray(wl)
    bad = (a < t_wl[0] * (1 - 1e-12)) | (a > t_wl[-1] * (1 + 1e-12))
    if np.any(bad):
        raise DesignError.out_of_range(
            "wavelength", a[bad][0] if a.ndim else a, "m",
            f"{t_wl[0]:.4g} to {t_wl[-1]:.4g} m ({t_wl[0] * 1e9:.0f} to {t_wl[-1] * 1e9:.0f} nm,"
            " range of the responsivity table)")
    return _out(np.interp(a, t_wl, t_r))
