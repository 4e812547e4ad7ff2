"""Optics of a :class:`~photorx.device.photodiode.Photodiode`: QE, responsivity, reflectance.

The routing half of the photodiode shell for its optics: the absorption coefficient of
the junction material at the junction temperature (:mod:`~photorx.device.optical_data`),
the front reflectance (a given number, a single-layer coating or the bare surface, from
the complex index), and carrier collection in the layer stack
(:func:`~photorx.device.optics.collection_fractions`). :class:`OpticsRoutes` is a mixin
of :class:`~photorx.device.photodiode.Photodiode`; it holds no fields of its own.
"""

from __future__ import annotations

import numpy as np

from .._validate import require_finite, require_positive
from ..errors import DesignError
from . import darkcurrent as dk
from . import optical_data, optics

__all__ = ["OpticsRoutes"]


def _out(x):
    return x if np.ndim(x) else (complex(x) if np.iscomplexobj(x) else float(x))


class OpticsRoutes:
    """Quantum efficiency, responsivity and surface reflectance (mixin of Photodiode)."""

    def _has_optics(self) -> bool:
        if not self._physical:
            return False
        try:
            optics.absorption_table(self.material.name)
        except DesignError:
            return False
        return True

    def _require_optics(self, what):
        if not self._has_optics():
            raise DesignError(f"{what} needs a physical junction whose material has an "
                              f"absorption table ({', '.join(optics.ABSORPTION_MATERIALS)})",
                              parameter="junction")

    def _stack(self, v_r):
        """Layer stack at bias: top d, depletion W, bottom H [m], and the diffusion data."""
        w = np.asarray(self.junction.depletion_width(v_r), dtype=float)
        bottom = np.maximum(self.absorber_thickness - w, 0.0)
        t = self.temperature
        mu_top, mu_bot, *_ = self._mobilities()
        tau, _ = self._lifetimes()
        d_top, d_bot = dk.diffusivity(mu_top, t), dk.diffusivity(mu_bot, t)
        l_top = self.top_diffusion_length
        return dict(top_thickness=self.top_thickness, depletion_width=w, bottom_thickness=bottom,
                    top_diffusion_length=l_top,
                    bottom_diffusion_length=dk.diffusion_length(d_bot, tau),
                    top_lifetime=l_top**2 / d_top, bottom_lifetime=tau)

    def _reflectance(self, wavelength):
        if self.reflectance is not None:
            return self.reflectance
        n_c = optical_data.complex_index(wavelength, self.material)
        if self.coating_index is None:
            return np.asarray(optics.fresnel_reflectance(n_c))
        return np.asarray(optics.coated_reflectance(wavelength, n_c, self.coating_index,
                                                    self.coating_thickness))

    def surface_reflectance(self, wavelength):
        """Front power reflectance [-] at vacuum wavelength [m].

        Parameters
        ----------
        wavelength : float or array_like
            Vacuum wavelength [m], > 0; without a given ``reflectance`` also within the
            300 K n, k table of the material (DesignError names the range).

        Notes
        -----
        ``reflectance`` if given; otherwise |r|^2 of the air/coating/semiconductor stack at
        normal incidence with the 300 K complex index of the material
        (:func:`~photorx.device.optics.coated_reflectance`) or, without a coating, of the
        bare surface (:func:`~photorx.device.optics.fresnel_reflectance`).

        References
        ----------
        .. [1] M. Born and E. Wolf, *Principles of Optics*, 7th ed., 1999, sec. 1.5-1.6.
        """
        wl = require_positive("wavelength", wavelength, "m")
        if self.reflectance is not None:
            return _out(np.asarray(self.reflectance) + 0.0 * np.asarray(wl))
        self._require_optics("surface_reflectance")
        return _out(self._reflectance(wl))

    def _alpha(self, wavelength):
        return np.asarray(optics.absorption_coefficient(wavelength, self.material,
                                                        self.temperature))

    def collection_fractions(self, wavelength, v_r=0.0):
        """Collected carriers per incident photon by region: (top, drift, bottom) [-].

        Physics mode only (see :func:`~photorx.device.optics.collection_fractions`); the
        front reflectance is included, so the sum is the quantum efficiency. The drift part
        absorbs over min(W, absorber_thickness).

        Parameters
        ----------
        wavelength : float or array_like
            Vacuum wavelength [m], > 0, not shorter than the short end of the material's
            absorption table (moved with the band gap; DesignError names the range); the
            result is 0 beyond its long end.
        v_r : float or array_like, optional
            Reverse bias [V], default 0; positive = reverse, negative = forward. Finite; in
            physics mode -0.9 Vbi < v_r <= ``junction.breakdown_voltage()`` (the breakdown
            estimate), DesignError otherwise.
        """
        self._require_optics("collection_fractions")
        st = self._stack(v_r)
        for k in ("top_lifetime", "bottom_lifetime"):
            st.pop(k)
        # only the absorbing part of the depletion layer generates carriers: a depletion
        # layer reaching through a thin absorber into a transparent layer (InGaAs on InP)
        # must not absorb beyond absorber_thickness
        st["depletion_width"] = np.minimum(st["depletion_width"], self.absorber_thickness)
        parts = optics.collection_fractions(self._alpha(wavelength), **st)
        r = self._reflectance(wavelength)
        return tuple(_out((1.0 - r) * np.asarray(p)) for p in parts)

    def responsivity(self, wavelength, v_r=0.0):
        """Responsivity [A/W] at vacuum wavelength [m] and reverse bias [V].

        Parameters
        ----------
        wavelength : float or array_like or None
            Vacuum wavelength [m], > 0. Physics mode: not shorter than the short end of
            the material's absorption table (moved with the band gap; DesignError names
            the range), 0 A/W beyond its long end. Given table: within the table. Given
            number: ignored, may be None.
        v_r : float or array_like, optional
            Reverse bias [V], default 0; positive = reverse, negative = forward. Finite; in
            physics mode -0.9 Vbi < v_r <= ``junction.breakdown_voltage()`` (the breakdown
            estimate), DesignError otherwise.

        Notes
        -----
        Physics mode: R = eta q lambda / (h c) with eta from :meth:`quantum_efficiency`.
        With ``given_responsivity``: that number, or the table interpolated linearly
        (DesignError outside the table; ``wavelength`` may be None for a number).

        References
        ----------
        .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed.,
           Wiley, 2007, ch. 13.
        """
        r = self.given_responsivity
        if r is None:
            return optics.responsivity_from_qe(
                np.clip(self.quantum_efficiency(wavelength, v_r), 0.0, 1.0), wavelength)
        wl = require_positive("wavelength", wavelength, "m") if wavelength is not None else 0.0
        v = require_finite("v_r", v_r, "V")
        if isinstance(r, tuple):
            if wavelength is None:
                raise DesignError("wavelength [m] is required with a responsivity table",
                                  parameter="wavelength")
            out = np.asarray(optics.interpolate_responsivity(wl, r[0], r[1]))
        else:
            out = np.asarray(r)
        return _out(out + 0.0 * np.asarray(wl) + 0.0 * np.asarray(v))

    def quantum_efficiency(self, wavelength, v_r=0.0):
        """External quantum efficiency [-] at vacuum wavelength [m] and reverse bias [V].

        Physics mode: (1 - R)(C_t + e^{-alpha d}(1 - e^{-alpha W}) + e^{-alpha(d+W)} C_b),
        see :func:`~photorx.device.optics.quantum_efficiency`; grows with reverse bias at
        long wavelengths as W widens. Given responsivity: eta = R h c / (q lambda).

        Parameters
        ----------
        wavelength : float or array_like
            Vacuum wavelength [m], > 0. Physics mode: not shorter than the short end of
            the material's absorption table (moved with the band gap; DesignError names
            the range), 0 beyond its long end. Given responsivity table: within the table.
        v_r : float or array_like, optional
            Reverse bias [V], default 0; positive = reverse, negative = forward. Finite; in
            physics mode -0.9 Vbi < v_r <= ``junction.breakdown_voltage()`` (the breakdown
            estimate), DesignError otherwise.
        """
        if self.given_responsivity is not None:
            return optics.qe_from_responsivity(self.responsivity(wavelength, v_r), wavelength)
        return _out(sum(np.asarray(p) for p in self.collection_fractions(wavelength, v_r)))

    def diffusion_fraction(self, wavelength, v_r=0.0):
        """Share of the DC photocurrent carried by slow diffusion from undepleted layers [-].

        0 when the optics is not modelled (parametric junction).

        Parameters
        ----------
        wavelength : float or array_like
            Vacuum wavelength [m], > 0, not shorter than the short end of the material's
            absorption table (moved with the band gap; DesignError names the range); 0
            beyond its long end. Not checked when the optics is not modelled.
        v_r : float or array_like, optional
            Reverse bias [V], default 0; positive = reverse, negative = forward. Finite; in
            physics mode -0.9 Vbi < v_r <= ``junction.breakdown_voltage()`` (the breakdown
            estimate), DesignError otherwise; not checked when the optics is not modelled.
        """
        if not self._has_optics():
            return _out(0.0 * np.asarray(wavelength, dtype=float) + 0.0 * np.asarray(v_r))
        top, drift, bottom = (np.asarray(p) for p in self.collection_fractions(wavelength, v_r))
        total = top + drift + bottom
        with np.errstate(invalid="ignore", divide="ignore"):
            return _out(np.where(total > 0, (top + bottom) / np.where(total > 0, total, 1.0), 0.0))
