"""The avalanche photodiode: a thin shell over the ionisation and multiplication core.

Two device kinds:

- **junction APD**: a :class:`~photorx.device.photodiode.Photodiode` on an
  :class:`~photorx.device.junction.AbruptJunction` or a
  :class:`~photorx.device.junction.PinJunction` (reach-through); the multiplying field is
  the junction's own depletion field, optics and primary dark current are the
  photodiode's.
- **SAM APD**: a :class:`SamStructure`, p+ contact | InP multiplier | InP charge layer |
  InGaAs absorber | n+ substrate, with a piecewise-linear field; holes generated in the
  absorber drift into the multiplier (hole injection).

:class:`AvalanchePhotodiode` exposes gain, breakdown, excess noise, k_effective, the dark
current parts, the speed limits and the photodiode-like quantities the receiver reads
(``capacitance``, ``responsivity``, ``dark_current``, ``series_resistance``,
``temperature``).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass

import numpy as np
from scipy.integrate import trapezoid

from .._validate import require_finite, require_in_range, require_nonnegative, require_positive
from ..constants import c, h, q
from ..errors import DesignError
from . import avalanche as av
from . import optics
from .avalanche_profiles import (
    abrupt_field_profile,
    layered_field_profile,
    layered_peak_field,
    pin_field_profile,
)
from .ionization import ionization_coefficients
from .materials import check_temperature, material

__all__ = ["SamStructure", "AvalanchePhotodiode"]

_GRID = 201  # nodes per field segment: trapezoid error below 1e-4 in the integral
_BREAKDOWN_CACHE: dict = {}  # (device, temperature) -> breakdown voltage [V]
_BREAKDOWN_MARGIN = 1e-7  # 1 - I at which a bias counts as breakdown (brentq root tolerance)


def _out(x):
    return x if np.ndim(x) else float(x)


@dataclass(frozen=True)
class SamStructure:
    """Separate absorption, charge and multiplication layers (InGaAs on InP), one-sided.

    Parameters
    ----------
    area : float
        Optical and junction area [m^2], > 0.
    multiplier_thickness : float
        InP multiplication layer d_m [m], 0.05 to 5 um.
    multiplier_doping : float
        Its net donor density [m^-3], 1e19 to 1e23.
    charge_thickness : float
        InP charge (field-control) layer d_c [m], 10 nm to 1 um.
    charge_doping : float
        Its donor density [m^-3], 1e21 to 1e25 (sheet q N_c d_c sets the field step).
    absorber_thickness : float
        InGaAs absorber d_a [m], 0.1 to 10 um.
    absorber_doping : float
        Its residual donor density [m^-3], 1e19 to 1e23.
    built_in_potential : float, optional
        Vbi of the p+/n stack [V], 0.1 to 2 (default 1.0, an estimate of an InP p+/n
        junction, common practice).
    temperature : float, optional
        [K], 50 to 600 (default 300).

    Notes
    -----
    Field from :func:`~photorx.device.avalanche_profiles.layered_peak_field`; gain from
    the InP layers only (ionisation in the low-field InGaAs is neglected, as intended by
    the design: the absorber field should stay below about 1.5e5 V/cm to avoid
    tunnelling, common practice).

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13 (separate absorption and multiplication APD).
    """

    area: float
    multiplier_thickness: float = 0.5e-6
    multiplier_doping: float = 1e21
    charge_thickness: float = 0.1e-6
    charge_doping: float = 2.5e23
    absorber_thickness: float = 2.0e-6
    absorber_doping: float = 5e20
    built_in_potential: float = 1.0
    temperature: float = 300.0

    def __post_init__(self):
        setf = object.__setattr__
        setf(self, "area", require_positive("area", self.area, "m^2"))
        for name, lo, hi, unit in (("multiplier_thickness", 5e-8, 5e-6, "m"),
                                   ("multiplier_doping", 1e19, 1e23, "m^-3"),
                                   ("charge_thickness", 1e-8, 1e-6, "m"),
                                   ("charge_doping", 1e21, 1e25, "m^-3"),
                                   ("absorber_thickness", 1e-7, 1e-5, "m"),
                                   ("absorber_doping", 1e19, 1e23, "m^-3"),
                                   ("built_in_potential", 0.1, 2.0, "V")):
            setf(self, name, require_in_range(name, getattr(self, name), unit, lo, hi))
        setf(self, "temperature", check_temperature(self.temperature))

    def _layers(self):
        eps_inp = material("InP").permittivity
        eps_ga = material("InGaAs").permittivity
        return ((self.multiplier_thickness, self.charge_thickness, self.absorber_thickness),
                (self.multiplier_doping, self.charge_doping, self.absorber_doping),
                (eps_inp, eps_inp, eps_ga))

    def peak_field(self, v_r):
        """Field at the p+/multiplier interface [V/m] at reverse bias ``v_r`` [V].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].
        """
        v = require_finite("v_r", v_r, "V")
        return layered_peak_field(np.asarray(v) + self.built_in_potential, *self._layers())

    def field_profile(self, v_r, n_points=_GRID):
        """(x [m], |E| [V/m]) across the three layers at reverse bias ``v_r`` [V].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].
        n_points : int, optional
            Grid nodes per layer.
        """
        return layered_field_profile(self.peak_field(v_r), *self._layers(), n_points=n_points)

    def punch_through_voltage(self):
        """Reverse bias at which the depletion edge reaches the absorber [V]."""
        (dm, dc, _), (nm, nc, _), (eps, _, _) = self._layers()
        # field that just vanishes at the charge/absorber interface
        e0 = q * (np.asarray(nm) * dm + np.asarray(nc) * dc) / eps
        v = e0 * (dm + dc) - q * nm * dm**2 / (2 * eps) - q * nc * dc**2 / (2 * eps) \
            - q * nm * dm * dc / eps
        return _out(v - self.built_in_potential)

    def depletion_width(self, v_r):
        """Depleted thickness [m] (the whole stack once the absorber is depleted).

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].
        """
        return _out(self._depleted_thickness(v_r))

    def _depleted_thickness(self, v_r):
        """Depleted thickness [m] as an array (the edge is where the field reaches zero)."""
        x, e = self.field_profile(v_r)
        return np.max(np.where(e > 0, x, 0.0), axis=-1)

    def capacitance(self, v_r):
        """Depletion capacitance A / sum(d_i / eps_i) over the depleted layers [F].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].
        """
        (dm, dc, _), _, (eps_m, _, eps_a) = self._layers()
        w = self._depleted_thickness(v_r)
        d_inp = np.minimum(w, dm + dc)
        d_ga = np.maximum(w - dm - dc, 0.0)
        return _out(np.asarray(self.area) / (d_inp / eps_m + d_ga / eps_a))


@dataclass(frozen=True)
class AvalanchePhotodiode:
    """An avalanche photodiode: gain, breakdown, excess noise, dark current, speed.

    Parameters
    ----------
    photodiode : Photodiode, optional
        Junction kind: a physical photodiode on an AbruptJunction or PinJunction of Si
        (or InP). Its optics give the primary responsivity, its dark-current model the
        multiplied bulk part (unless ``bulk_dark_current`` is given).
    structure : SamStructure, optional
        SAM kind (give exactly one of ``photodiode`` and ``structure``).
    injection : {"electron", "hole", "mixed"}, optional
        Carrier that enters the multiplier (default: "electron" for the junction kind,
        as in p-on-n Si reach-through diodes lit from the p side; "hole" for SAM).
    surface_dark_current : float, optional
        Unmultiplied surface leakage I_ds [A], >= 0 (default 0).
    bulk_dark_current : float, optional
        Primary multiplied dark current I_dm [A], >= 0. Default: the photodiode's dark
        current model (junction kind) or 0 (SAM).
    reflectance : float, optional
        SAM front reflectance [-], 0 to <1 (default 0: anti-reflection coated).
    series_resistance : float, optional
        Series resistance [ohm], >= 0. Default: the photodiode's (junction kind) or
        10 ohm (SAM).
    saturation_velocity : float, optional
        Carrier velocity in the multiplier for the transit and build-up times [m/s],
        > 0 (default 1e5 m/s, about the saturated drift velocity in Si and InP, from
        memory).

    Notes
    -----
    Gain from McIntyre's ionisation integral over the field profile
    (:func:`~photorx.device.avalanche.multiplication_gain`), breakdown where it reaches 1,
    excess noise F(M, k_eff) (:func:`~photorx.device.avalanche.excess_noise_factor`),
    dark current I_ds + M I_dm, bandwidth from transit, RC and Emmons' gain-bandwidth
    limit. Bias at or above breakdown is a DesignError.

    References
    ----------
    .. [1] R. J. McIntyre, IEEE Trans. Electron Devices 13, 164 (1966).
    .. [2] R. B. Emmons, J. Appl. Phys. 38, 3705 (1967) (from memory).
    .. [3] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13.
    """

    photodiode: object = None
    structure: SamStructure | None = None
    injection: str | None = None
    surface_dark_current: float = 0.0
    bulk_dark_current: float | None = None
    reflectance: float = 0.0
    series_resistance: float | None = None
    saturation_velocity: float = 1e5

    def __post_init__(self):
        setf = object.__setattr__
        if (self.photodiode is None) == (self.structure is None):
            raise DesignError("give exactly one of photodiode (junction APD) and structure "
                              "(SamStructure)", parameter="structure")
        if self.photodiode is not None:
            j = getattr(self.photodiode, "junction", None)
            kind = type(j).__name__
            if kind not in ("AbruptJunction", "PinJunction"):
                raise DesignError(f"photodiode.junction = {kind} is invalid; valid: an "
                                  "AbruptJunction or PinJunction (a field profile is needed)",
                                  parameter="photodiode")
            if j.material.name not in ("Si", "InP"):
                raise DesignError(f"junction material = {j.material.name!r} is invalid; valid: "
                                  "'Si' or 'InP' (materials with ionisation data)",
                                  parameter="photodiode")
            if any(np.ndim(getattr(j, f)) for f in ("area", "temperature")):
                raise DesignError("the APD shell takes a single design (scalar junction "
                                  "fields); sweep bias instead", parameter="photodiode")
        inj = self.injection or ("hole" if self.structure is not None else "electron")
        if inj not in ("electron", "hole"):
            raise DesignError(f"injection = {inj!r} is invalid; valid: 'electron' or 'hole'",
                              parameter="injection")
        setf(self, "injection", inj)
        setf(self, "surface_dark_current", require_nonnegative(
            "surface_dark_current", self.surface_dark_current, "A"))
        if self.bulk_dark_current is not None:
            setf(self, "bulk_dark_current", require_nonnegative(
                "bulk_dark_current", self.bulk_dark_current, "A"))
        setf(self, "reflectance", require_in_range("reflectance", self.reflectance, "", 0.0, 1.0,
                                                   high_inclusive=False))
        r_s = self.series_resistance
        if r_s is None:
            r_s = 10.0 if self.structure is not None else self.photodiode.series_resistance
        setf(self, "series_resistance", require_nonnegative("series_resistance", r_s, "ohm"))
        setf(self, "saturation_velocity", require_positive(
            "saturation_velocity", self.saturation_velocity, "m/s"))

    # ------------------------------------------------------------------ routing helpers
    @property
    def temperature(self):
        """Device temperature [K]."""
        src = self.structure if self.structure is not None else self.photodiode.junction
        return float(src.temperature)

    @property
    def multiplier_material(self) -> str:
        """Name of the material whose ionisation coefficients are used."""
        if self.structure is not None:
            return "InP"
        return self.photodiode.junction.material.name

    def _profile(self, v_r, n_points=_GRID):
        """(x, field) of the multiplying region at reverse bias ``v_r`` [V]."""
        v = np.asarray(require_finite("v_r", v_r, "V"), dtype=float)
        if self.structure is not None:
            s = self.structure
            x, e = s.field_profile(v, n_points)
            n_inp = 2 * n_points  # multiplier and charge layers (InP)
            return x[..., :n_inp], e[..., :n_inp]
        j = self.photodiode.junction
        # the core functions directly: the junction's own bias check stops at its
        # universal-law breakdown estimate, which can lie below the ionisation-integral one
        v_total = v + j.built_in_potential()
        if np.any(v_total <= 0):
            raise DesignError.out_of_range("v_r", v.min(), "V",
                                           f"> -Vbi = {-j.built_in_potential():.4g} V")
        eps = j.material.permittivity
        if type(j).__name__ == "AbruptJunction":
            return abrupt_field_profile(v_total, j.na, j.nd, eps, n_points)
        return pin_field_profile(v_total, j.p_doping, j.i_doping, j.n_doping, j.i_thickness,
                                 eps, n_points)

    def _alphas(self, v_r, temperature):
        x, e = self._profile(v_r)
        a_n, a_p = ionization_coefficients(e, self.multiplier_material, temperature)
        return x, np.asarray(a_n), np.asarray(a_p)

    def _temperature(self, temperature):
        return self.temperature if temperature is None else float(
            check_temperature(temperature))

    # ------------------------------------------------------------------ avalanche
    def ionization_integral(self, v_r, temperature=None):
        """McIntyre's ionisation integral at reverse bias ``v_r`` [V] (1 at breakdown) [-].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].
        temperature : float, optional
            [K] (default: the device's).
        """
        x, a_n, a_p = self._alphas(v_r, self._temperature(temperature))
        return av.ionization_integral(x, a_n, a_p)

    def breakdown_voltage(self, temperature=None):
        """Reverse bias at which the ionisation integral reaches 1 [V] (brentq).

        Parameters
        ----------
        temperature : float, optional
            [K] (default: the device's).

        Notes
        -----
        Compared with the junction's universal-law estimate (Sze and Ng, 3rd ed., ch. 2):
        the van Overstraeten-de Man coefficients give a Si one-sided abrupt junction
        10-25 % below that estimate at 1e15-1e16 cm^-3 and above it at 1e17 cm^-3 and
        beyond (the universal curve was drawn with older coefficient sets; above
        about 5e17 cm^-3 tunnelling, not modelled, takes over). The ionisation-integral
        value is the one this device uses.
        """
        t = self._temperature(temperature)
        try:  # a frozen design at one temperature has one breakdown: solve it once
            key = (self, t)
            cached = _BREAKDOWN_CACHE.get(key)
        except TypeError:  # a field that does not hash (an array): no cache
            key = cached = None
        if cached is not None:
            return cached
        vb = self._solve_breakdown(t)
        if key is not None:
            if len(_BREAKDOWN_CACHE) > 256:
                _BREAKDOWN_CACHE.clear()
            _BREAKDOWN_CACHE[key] = vb
        return vb

    def _solve_breakdown(self, t):
        def integral(v):
            return float(self.ionization_integral(v, t))

        hi = 10.0
        while integral(hi) < 1.0:
            hi *= 2.0
            if hi > 1e5:
                raise DesignError("no breakdown below 100 kV: the multiplying field never "
                                  "reaches ionising strength", parameter="structure")
        lo = 0.0 if integral(0.0) < 1.0 else None
        if lo is None:
            raise DesignError("the structure is already at breakdown at zero bias; lower "
                              "the doping (charge or multiplier) ", parameter="structure")
        return av.breakdown_bias(integral, lo, hi)

    def gain(self, reverse_bias, temperature=None):
        """Avalanche gain M(v_r) [-], >= 1; DesignError at or beyond breakdown.

        A bias where 1 - I < 1e-7 (M > 1e7) counts as breakdown: it lies within the
        root tolerance of :meth:`breakdown_voltage`.

        Parameters
        ----------
        reverse_bias : float or array_like
            Reverse bias [V].
        temperature : float, optional
            [K] (default: the device's).
        """
        t = self._temperature(temperature)
        x, a_n, a_p = self._alphas(reverse_bias, t)
        # 1 - I below 1e-7 (M beyond ~1e7) is breakdown within the solver's tolerance
        if np.any(av._integrals(x, a_n, a_p)[2] <= _BREAKDOWN_MARGIN):
            vb = self.breakdown_voltage(t)
            v = np.asarray(reverse_bias, dtype=float)
            raise DesignError.out_of_range("reverse_bias", np.max(v), "V",
                                           f"< breakdown_voltage = {vb:.4g} V at {t:.4g} K")
        return av.multiplication_gain(x, a_n, a_p, self.injection)

    def bias_for_gain(self, gain, temperature=None):
        """Reverse bias [V] that gives the gain ``gain`` (root of 1/M(v) - 1/gain below breakdown).

        Parameters
        ----------
        gain : float or array_like
            Target gain M [-], > 1 and below the gain at 0.99999 V_B.
        temperature : float, optional
            [K] (default: the device's).

        Returns
        -------
        float or numpy.ndarray
            v_r [V] with M(v_r) = gain (relative tolerance 1e-10 in bias). Sampling a bias
            sweep in gain resolves the steep part near breakdown; at several temperatures
            it is the bias of a constant-gain (temperature-compensated) supply.
        """
        t = self._temperature(temperature)
        m = np.asarray(require_in_range("gain", gain, "", 1.0, np.inf, low_inclusive=False),
                       dtype=float)
        vb = self.breakdown_voltage(t)
        top = 0.99999 * vb
        m_top = float(self.gain(top, t))
        if np.any(m >= m_top):
            raise DesignError.out_of_range("gain", np.max(m), "",
                                           f"> 1 and < {m_top:.4g} (the gain at 0.99999 V_B "
                                           f"= {top:.4g} V)")
        # M(0) may exceed 1 slightly (the built-in field multiplies too): start below it
        low = -0.5 * float(self.photodiode.junction.built_in_potential()) \
            if self.structure is None else 0.0
        m_low = float(self.gain(low, t))

        if np.any(m <= m_low):
            raise DesignError.out_of_range("gain", np.min(m), "",
                                           f"> {m_low:.6g} (the gain at {low:.3g} V)")
        return _out(self._solve_bias(m, t, low, top, vb))

    def _solve_bias(self, m, t, low, top, vb):
        """Biases with 1/M(v) = 1/m, all targets at once (bracketed Illinois false position).

        1/M is close to linear in bias near breakdown, so false position on 1/M converges
        in a few steps; a grid that crowds towards breakdown brackets every target first.
        """
        y = 1.0 / m.ravel()
        grid = top - np.geomspace(1.0, 1e-7, 160) * (top - low)
        grid = np.concatenate([[low], grid[1:], [top]])
        inv = 1.0 / np.asarray(self.gain(grid, t))
        # inv falls with bias: the first node where it drops to the target closes the bracket
        k = np.clip(np.searchsorted(-inv, -y, side="left"), 1, grid.size - 1)
        a, b = grid[k - 1], grid[k]
        fa, fb = inv[k - 1] - y, inv[k] - y
        side = np.zeros(y.shape, dtype=int)
        x = b.copy()
        for _ in range(100):
            done = (b - a <= 1e-10 * vb) | (fb == 0.0)
            if np.all(done):
                break
            denom = np.where(fa != fb, fa - fb, 1.0)
            x = np.clip(a + fa * (b - a) / denom, a, b)
            fx = 1.0 / np.asarray(self.gain(x, t)) - y
            high = fx <= 0.0  # the root lies below x: x becomes the upper end
            # Illinois: halve the kept end's value when the same end moves twice
            fa = np.where(high & (side == 1), 0.5 * fa, fa)
            fb = np.where(~high & (side == -1), 0.5 * fb, fb)
            a, fa = np.where(high | done, a, x), np.where(high | done, fa, fx)
            b, fb = np.where(high & ~done, x, b), np.where(high & ~done, fx, fb)
            side = np.where(high, 1, -1)
        # the end whose 1/M is nearer the target
        out = np.where(np.abs(fa) < np.abs(fb), a, b)
        return out.reshape(m.shape)

    def k_effective(self, reverse_bias, temperature=None):
        """Effective ionisation ratio of the injected carrier, gain-weighted [-].

        Parameters
        ----------
        reverse_bias : float or array_like
            Reverse bias [V].
        temperature : float, optional
            [K] (default: the device's).

        Notes
        -----
        k = int alpha_other M(x)^2 dx / int alpha_injected M(x)^2 dx, with M(x) the gain
        of a pair generated at x: the weighting of McIntyre's nonuniform-field noise
        theory (R. J. McIntyre, IEEE Trans. Electron Devices 19, 703 (1972), from
        memory); in a uniform field it is alpha_p/alpha_n exactly.
        """
        x, a_n, a_p = self._alphas(reverse_bias, self._temperature(temperature))
        _, phi, one_minus = av._integrals(x, a_n, a_p)
        m_x = np.exp(-phi) / np.asarray(one_minus)[..., None]
        num, den = (a_p, a_n) if self.injection == "electron" else (a_n, a_p)
        with np.errstate(invalid="ignore", divide="ignore"):
            k = trapezoid(num * m_x**2, x, axis=-1) / trapezoid(den * m_x**2, x, axis=-1)
        return _out(np.clip(np.nan_to_num(k, nan=0.0), 0.0, 1.0))

    def excess_noise_factor(self, reverse_bias, temperature=None):
        """McIntyre F(M, k_eff) at ``reverse_bias`` [-] (see :meth:`k_effective`).

        Parameters
        ----------
        reverse_bias : float or array_like
            Reverse bias [V].
        temperature : float, optional
            [K] (default: the device's).
        """
        return av.excess_noise_factor(self.gain(reverse_bias, temperature),
                                      self.k_effective(reverse_bias, temperature))

    # ------------------------------------------------------------------ dark current
    def _primary_bulk(self, v_r):
        if self.bulk_dark_current is not None:
            return self.bulk_dark_current + 0.0 * np.asarray(v_r, dtype=float)
        if self.structure is not None:
            return 0.0 * np.asarray(v_r, dtype=float)
        # the photodiode's model holds up to its own breakdown estimate; beyond it the
        # generation current's W dependence is frozen there (it changes little)
        return np.abs(np.asarray(self.photodiode.dark_current(self._pd_bias(v_r))))

    def _pd_bias(self, v_r):
        vb = self.photodiode.junction.breakdown_voltage()
        return np.minimum(np.asarray(v_r, dtype=float), 0.999 * vb)

    def dark_current_parts(self, reverse_bias, temperature=None):
        """(surface I_ds, multiplied M I_dm) dark currents [A] at ``reverse_bias``.

        Parameters
        ----------
        reverse_bias : float or array_like
            Reverse bias [V].
        temperature : float, optional
            [K] (default: the device's).
        """
        m = np.asarray(self.gain(reverse_bias, temperature))
        i_dm = np.asarray(self._primary_bulk(reverse_bias))
        i_ds = self.surface_dark_current + 0.0 * m
        return _out(i_ds), _out(m * i_dm)

    def dark_current(self, reverse_bias, temperature=None):
        """Total dark current I_ds + M I_dm [A] (:func:`avalanche_dark_current`).

        Parameters
        ----------
        reverse_bias : float or array_like
            Reverse bias [V].
        temperature : float, optional
            [K] (default: the device's).
        """
        m = self.gain(reverse_bias, temperature)
        return av.avalanche_dark_current(m, self.surface_dark_current,
                                         self._primary_bulk(reverse_bias))

    # ------------------------------------------------------------------ photodiode-like
    def capacitance(self, reverse_bias=0.0):
        """Depletion capacitance [F] (plus the photodiode's package capacitance).

        Parameters
        ----------
        reverse_bias : float or array_like
            Reverse bias [V].
        """
        if self.structure is not None:
            return self.structure.capacitance(reverse_bias)
        j, pd_ = self.photodiode.junction, self.photodiode
        x, _ = self._profile(reverse_bias, n_points=3)
        w = x[..., -1]
        return _out(j.material.permittivity * j.area / w + pd_.package_capacitance)

    def responsivity(self, wavelength, reverse_bias=0.0):
        """Primary (unity-gain) responsivity [A/W]; the multiplied one is M times it.

        SAM: (1 - R)(1 - exp(-alpha d_a)) q lambda / (h c) with the InGaAs absorption
        coefficient (:func:`~photorx.device.optics.absorption_coefficient`; the InP
        window is transparent beyond 920 nm). Junction kind: the photodiode's.

        Parameters
        ----------
        wavelength : float or array_like
            Vacuum wavelength [m].
        reverse_bias : float or array_like, optional
            Reverse bias [V].
        """
        if self.structure is None:
            return self.photodiode.responsivity(wavelength, self._pd_bias(reverse_bias))
        wl = np.asarray(require_positive("wavelength", wavelength, "m"), dtype=float)
        a = np.asarray(optics.absorption_coefficient(wl, material("InGaAs"), self.temperature))
        qe = (1.0 - self.reflectance) * -np.expm1(-a * self.structure.absorber_thickness)
        return _out(qe * q * wl / (h * c) + 0.0 * np.asarray(reverse_bias, dtype=float))

    def transit_time(self, reverse_bias=0.0):
        """Transit time of the depleted region at the saturated velocity, W / v_sat [s].

        Parameters
        ----------
        reverse_bias : float or array_like
            Reverse bias [V].
        """
        if self.structure is not None:
            w = self.structure.depletion_width(reverse_bias)
        else:
            w = self._profile(reverse_bias, n_points=3)[0][..., -1]
        return _out(np.asarray(w) / self.saturation_velocity)

    def bandwidth(self, reverse_bias, load_resistance=50.0, temperature=None):
        """Intrinsic -3 dB bandwidth from transit, RC and gain-bandwidth limits [Hz].

        Parameters
        ----------
        reverse_bias : float or array_like
            Reverse bias [V].
        load_resistance : float, optional
            Load in series with the diode's series resistance [ohm], >= 0 (default 50).
        temperature : float, optional
            [K] (default: the device's).

        Notes
        -----
        f_t = 0.443 v / W (uniform generation, Sze and Ng ch. 13), f_RC = 1/(2 pi R C),
        f_av = 1/(2 pi M N k tau_m) with tau_m the multiplier transit time (Emmons);
        combined by :func:`~photorx.device.avalanche.apd_bandwidth`.
        """
        rl = require_nonnegative("load_resistance", load_resistance, "ohm")
        tau = np.asarray(self.transit_time(reverse_bias))
        f_t = 0.443 / tau
        r_s = self.series_resistance
        f_rc = 1.0 / (2 * np.pi * (r_s + np.asarray(rl)) * np.asarray(
            self.capacitance(reverse_bias)))
        m = np.asarray(self.gain(reverse_bias, temperature))
        k = np.maximum(np.asarray(self.k_effective(reverse_bias, temperature)), 1e-3)
        x, _ = self._profile(reverse_bias, n_points=3)
        tau_m = x[..., -1] / self.saturation_velocity
        f_av = av.gain_bandwidth_limit(m, k, tau_m)
        return av.apd_bandwidth(f_t, f_rc, f_av)

    def at_temperature(self, temperature):
        """The same APD at another temperature.

        Parameters
        ----------
        temperature : float
            [K], 50 to 600.
        """
        t = float(check_temperature(temperature))
        if self.structure is not None:
            return dataclasses.replace(self, structure=dataclasses.replace(self.structure,
                                                                           temperature=t))
        return dataclasses.replace(self, photodiode=self.photodiode.at_temperature(t))

    # ------------------------------------------------------------------ receiver routes
    def receiver_view(self, temperature=None):
        """The photodiode-like view the receiver stages read, at ``temperature``.

        Parameters
        ----------
        temperature : float or array_like, optional
            Operating temperature(s) [K], 50 to 600 (default: the device's); an array
            gives one per design point.

        Returns
        -------
        ApdAtTemperature
            See :class:`~photorx.device.apd_receiver.ApdAtTemperature`.
        """
        from .apd_receiver import ApdAtTemperature

        return ApdAtTemperature(self, self.temperature if temperature is None else temperature)

    def multiplication(self, reverse_bias):
        """Gain, excess noise factor, k_eff and dark-current split at ``reverse_bias``.

        Parameters
        ----------
        reverse_bias : float or array_like
            Reverse bias [V].

        Returns
        -------
        dict of numpy.ndarray
            See :meth:`~photorx.device.apd_receiver.ApdAtTemperature.multiplication`.
        """
        return self.receiver_view().multiplication(reverse_bias)

    def equivalent_circuit(self, v_r=0.0, optical_power=0.0, wavelength=None,
                           background_power=0.0):
        """Small-signal equivalent circuit with the multiplied currents.

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].
        optical_power : float or array_like, optional
            Signal optical power [W], >= 0.
        wavelength : float or array_like, optional
            Vacuum wavelength [m]; required when any optical power is given.
        background_power : float or array_like, optional
            Background optical power [W], >= 0.

        Returns
        -------
        EquivalentCircuit
            See :meth:`~photorx.device.apd_receiver.ApdAtTemperature.equivalent_circuit`.
        """
        return self.receiver_view().equivalent_circuit(v_r, optical_power, wavelength,
                                                       background_power)
