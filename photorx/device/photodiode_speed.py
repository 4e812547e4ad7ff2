"""Speed of a :class:`~photorx.device.photodiode.Photodiode`: transit, diffusion, RC.

The routing half of the photodiode shell for its intrinsic response: drift velocities at
the mean depletion field, the transit and diffusion parts of
:func:`~photorx.device.speed.photocurrent_spectrum`, the RC limit with a load.
:class:`SpeedRoutes` is a mixin of :class:`~photorx.device.photodiode.Photodiode`; it
holds no fields of its own.
"""

from __future__ import annotations

import numpy as np

from .._validate import require_finite, require_nonnegative
from ..errors import DesignError
from . import speed

__all__ = ["SpeedRoutes"]


def _out(x):
    return x if np.ndim(x) else (complex(x) if np.iscomplexobj(x) else float(x))


class SpeedRoutes:
    """Transit time, bandwidths and the intrinsic response (mixin of Photodiode)."""

    def _mobilities(self):
        """(mu_top_minority, mu_bottom_minority, mu_far, v_sat_far, mu_near, v_sat_near).

        At the junction temperature: :meth:`~photorx.device.materials.Material.mobility`
        and :meth:`~photorx.device.materials.Material.saturation_velocity`.
        """
        m, t = self.material, self.temperature  # the junction has checked its temperature
        mu_n, mu_p = m._transport("n", "mu", t), m._transport("p", "mu", t)
        vs_n, vs_p = m._transport("n", "v_sat", t), m._transport("p", "v_sat", t)
        if self.illuminated_side == "p":  # electrons minority on top and drift away
            return mu_n, mu_p, mu_n, vs_n, mu_p, vs_p
        return mu_p, mu_n, mu_p, vs_p, mu_n, vs_n

    def _velocities(self, v_r):
        """Drift velocities (far, near) [m/s] at the mean depletion field (Vbi + v_r)/W."""
        j = self.junction
        w = np.asarray(j.depletion_width(v_r), dtype=float)
        e_mean = (np.asarray(v_r, dtype=float) + j.built_in_potential()) / w
        _, _, mu_f, vs_f, mu_n, vs_n = self._mobilities()
        return (np.asarray(speed.drift_velocity(e_mean, mu_f, vs_f)),
                np.asarray(speed.drift_velocity(e_mean, mu_n, vs_n)))

    def transit_time(self, v_r=0.0):
        """Time for the slower carrier to cross the whole depletion layer, W / v [s].

        Drift velocity at the mean field (Vbi + v_r)/W with saturation
        (:func:`~photorx.device.speed.drift_velocity`); so zero-bias (photovoltaic)
        operation is slow. With ``intrinsic_bandwidth`` given: the equivalent
        uniform-generation transit time 0.553 / f_3dB.

        Parameters
        ----------
        v_r : float or array_like, optional
            Reverse bias [V], default 0; positive = reverse, negative = forward. Finite;
            with a physical junction (and no ``intrinsic_bandwidth``)
            -0.9 Vbi < v_r <= ``junction.breakdown_voltage()`` (the breakdown estimate),
            DesignError otherwise.

        Raises
        ------
        DesignError
            A parametric junction without ``intrinsic_bandwidth``.
        """
        if self.intrinsic_bandwidth is not None:
            return _out(speed.UNIFORM_TRANSIT_FACTOR / self.intrinsic_bandwidth
                        + 0.0 * np.asarray(require_finite("v_r", v_r, "V")))
        self._require_physical("transit_time")
        vf, vn = self._velocities(v_r)
        w = np.asarray(self.junction.depletion_width(v_r))
        return _out(w / np.minimum(vf, vn))

    def _require_physical(self, what):
        if not self._physical:
            raise DesignError(f"{what} needs a physical junction or intrinsic_bandwidth",
                              parameter="intrinsic_bandwidth")

    def transit_bandwidth(self, v_r=0.0, wavelength=None):
        """Transit-limited 3-dB bandwidth of the drift photocurrent [Hz].

        ``wavelength`` None: uniform generation across the depletion layer; otherwise the
        absorption profile at that wavelength. See
        :func:`~photorx.device.speed.transit_bandwidth`. inf for a parametric junction
        without ``intrinsic_bandwidth``.

        Parameters
        ----------
        v_r : float or array_like, optional
            Reverse bias [V], default 0; positive = reverse, negative = forward. Finite;
            with a physical junction (and no ``intrinsic_bandwidth``)
            -0.9 Vbi < v_r <= ``junction.breakdown_voltage()`` (the breakdown estimate),
            DesignError otherwise.
        wavelength : float or array_like, optional
            Vacuum wavelength [m], > 0, not shorter than the short end of the material's
            absorption table (DesignError names the range); default None: uniform
            generation across the depletion layer. Used only with a physical junction and no
            ``intrinsic_bandwidth``.
        """
        if self.intrinsic_bandwidth is not None:
            return _out(self.intrinsic_bandwidth + 0.0 * np.asarray(
                require_finite("v_r", v_r, "V")))
        if not self._physical:
            return _out(np.inf + 0.0 * np.asarray(require_finite("v_r", v_r, "V")))
        vf, vn = self._velocities(v_r)
        w = np.asarray(self.junction.depletion_width(v_r))
        a = 0.0 if wavelength is None else self._alpha(wavelength)
        return speed.transit_bandwidth(w, vf, vn, a)

    def rc_bandwidth(self, v_r=0.0, load_resistance=50.0):
        """RC limit 1 / (2 pi (R_s + R_L) C) [Hz] with a load resistance [ohm].

        Parameters
        ----------
        v_r : float or array_like, optional
            Reverse bias [V], default 0; positive = reverse, negative = forward. Finite;
            as :meth:`capacitance`: physical junction -0.9 Vbi < v_r <=
            ``junction.breakdown_voltage()``, fitted dark current on a parametric junction
            v_r > -0.9 vj; DesignError otherwise.
        load_resistance : float or array_like, optional
            Load resistance R_L in series with R_s [ohm], >= 0 (default 50).
        """
        rl = require_nonnegative("load_resistance", load_resistance, "ohm")
        return speed.rc_bandwidth(self.capacitance(v_r), self.series_resistance + np.asarray(rl))

    def bandwidth(self, v_r=0.0, load_resistance=50.0, wavelength=None):
        """Transit and RC limits combined, (f_t^-2 + f_RC^-2)^-1/2 [Hz] (no diffusion tail).

        Parameters
        ----------
        v_r : float or array_like, optional
            Reverse bias [V], default 0; positive = reverse, negative = forward. Finite;
            as :meth:`capacitance`: physical junction -0.9 Vbi < v_r <=
            ``junction.breakdown_voltage()``, fitted dark current on a parametric junction
            v_r > -0.9 vj; DesignError otherwise.
        load_resistance : float or array_like, optional
            Load resistance R_L in series with R_s [ohm], >= 0 (default 50).
        wavelength : float or array_like, optional
            Vacuum wavelength [m], > 0, not shorter than the short end of the material's
            absorption table (DesignError names the range); default None: uniform
            generation across the depletion layer. Used by the transit part only, with a
            physical junction and no ``intrinsic_bandwidth``.
        """
        return speed.combined_bandwidth(self.transit_bandwidth(v_r, wavelength),
                                        self.rc_bandwidth(v_r, load_resistance))

    def intrinsic_response(self, f, v_r=0.0, wavelength=None):
        """Intrinsic photocurrent response H(f) of the diode, complex, H(0) = 1.

        Parameters
        ----------
        f : float or array_like
            Frequency [Hz], >= 0.
        v_r : float or array_like
            Reverse bias [V].
        wavelength : float or array_like, optional
            Vacuum wavelength [m]; needed for the physics model (absorption profile and
            diffusion tails). Without it the drift part for uniform generation is used.

        Notes
        -----
        Physics: the drift (Ramo) and diffusion parts of
        :func:`~photorx.device.speed.photocurrent_spectrum`, normalised by their DC sum.
        The circuit response (C, R_s, amplifier) multiplies this. With
        ``intrinsic_bandwidth``: the uniform-generation transit response with that f_3dB;
        parametric junction without it: H = 1.
        """
        return self.intrinsic_response_at(v_r, wavelength)(f)

    def intrinsic_response_at(self, v_r=0.0, wavelength=None):
        """``f -> intrinsic_response(f, v_r, wavelength)`` with the operating point set up once.

        The velocities, layer stack, absorption and DC normalisation depend on the bias and
        the wavelength only; a search that evaluates the response at many frequency steps
        (the -3 dB refinements) computes them once. Same values as
        :meth:`intrinsic_response`, which calls this.

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].
        wavelength : float or array_like, optional
            Vacuum wavelength [m] (see :meth:`intrinsic_response`).

        Returns
        -------
        callable
            ``response(f)`` -> complex H(f), f [Hz] >= 0.
        """
        if self.intrinsic_bandwidth is not None or not self._physical:
            v = np.asarray(require_finite("v_r", v_r, "V"))
            if self.intrinsic_bandwidth is None:
                def flat(f):
                    fr = np.asarray(require_nonnegative("f", f, "Hz"))
                    return _out(np.ones(np.broadcast(fr, v).shape) + 0j)
                return flat
            tau = speed.UNIFORM_TRANSIT_FACTOR / self.intrinsic_bandwidth

            def uniform(f):
                fr = np.asarray(require_nonnegative("f", f, "Hz"))
                h = speed._drift_spectrum(2 * np.pi * fr, 1e-6, tau, tau) / -np.expm1(-1e-6)
                return _out(np.asarray(h) + 0.0 * v)
            return uniform
        vf, vn = self._velocities(v_r)
        if wavelength is None or not self._has_optics():
            w = np.asarray(self.junction.depletion_width(v_r))

            def drift(f):
                fr = np.asarray(require_nonnegative("f", f, "Hz"))
                return speed.drift_response(fr, w, vf, vn)
            return drift
        st = self._stack(v_r)
        alpha = self._alpha(wavelength)
        layers = speed.photocurrent_layers(alpha, v_far=vf, v_near=vn, **st)  # validated once
        den = np.real(speed.photocurrent_spectrum_of(0.0, layers))
        ok = den > 0
        den_safe = np.where(ok, den, 1.0)
        all_ok = bool(np.all(ok))

        def physical(f):
            fr = np.asarray(require_nonnegative("f", f, "Hz"))
            num = speed.photocurrent_spectrum_of(fr, layers)
            if all_ok:
                return _out(num / den_safe)
            with np.errstate(invalid="ignore", divide="ignore"):
                h = np.where(ok, num / den_safe, 1.0 + 0j)
            return _out(h)
        return physical

    def diffusion_time_constant(self, wavelength, v_r=0.0):
        """Mean delay of the diffusion part of the photocurrent [s] (0 if there is none).

        Notes
        -----
        tau = -Im H_d(w) / (w H_d(0)) for w -> 0, the first moment of the diffusion
        impulse response of :func:`~photorx.device.speed.photocurrent_spectrum` (top and
        bottom parts); for carriers generated a distance d from the edge it is close to
        d^2 / (2 D) (:func:`~photorx.device.speed.diffusion_time`), and tends to the
        lifetime for weakly absorbed light in a thick layer.

        Parameters
        ----------
        wavelength : float or array_like
            Vacuum wavelength [m], > 0, not shorter than the short end of the material's
            absorption table (moved with the band gap; DesignError names the range).
        v_r : float or array_like, optional
            Reverse bias [V], default 0; positive = reverse, negative = forward. Finite;
            -0.9 Vbi < v_r <= ``junction.breakdown_voltage()`` (the breakdown estimate),
            DesignError otherwise.

        Raises
        ------
        DesignError
            A junction without modelled optics (parametric, or no absorption table).
        """
        self._require_optics("diffusion_time_constant")
        st = self._stack(v_r)
        vf, vn = self._velocities(v_r)
        scale = np.maximum(st["top_lifetime"], st["bottom_lifetime"])
        omega = 1e-6 / scale
        a = self._alpha(wavelength)
        top0, _, bot0 = speed.photocurrent_spectrum(0.0, a, v_far=vf, v_near=vn, **st)
        top1, _, bot1 = speed.photocurrent_spectrum(omega / (2 * np.pi), a, v_far=vf, v_near=vn,
                                                    **st)
        dc = np.real(np.asarray(top0) + bot0)
        with np.errstate(invalid="ignore", divide="ignore"):
            tau = np.where(dc > 0, -np.imag(np.asarray(top1) + bot1)
                           / (omega * np.where(dc > 0, dc, 1.0)), 0.0)
        return _out(tau)
