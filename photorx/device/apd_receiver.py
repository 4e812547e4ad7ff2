"""An avalanche photodiode as a receiver sees it: the photodiode-like view at an operating
temperature.

:class:`ApdAtTemperature` pairs an :class:`~photorx.device.apd.AvalanchePhotodiode` with
the receiver's operating temperature (a number or an array, one per design point) and
answers every question the receiver stages ask a photodiode (capacitance, primary
responsivity, dark current, equivalent circuit, intrinsic response, breakdown), plus
:meth:`ApdAtTemperature.multiplication`: gain, excess noise factor, k_eff and the dark
current split. The APD shell itself holds one design at one temperature; this view loops
over the distinct temperatures of a sweep (each a vectorised bias evaluation), which is
how ``sweep(rx, temperature=...)`` works at a fixed bias.

Multiplied shot noise (McIntyre 1966): the white shot-noise density of the diode is
2 q [I_ds + (I_ph + I_bg + I_dm) M^2 F(M)], and the mean current at the amplifier input
is I_ds + M (I_ph + I_bg + I_dm); :class:`~photorx.device.equivalent_circuit.EquivalentCircuit`
carries both (``shot_current`` and ``current``).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._validate import require_nonnegative
from . import avalanche as av
from .equivalent_circuit import EquivalentCircuit
from .materials import check_temperature, material

__all__ = ["ApdAtTemperature", "bias_for_constant_gain"]


def _out(x):
    x = np.asarray(x)
    return x if x.ndim else float(x)


@dataclass(frozen=True)
class _ApdDepletion:
    """The junction-like part of the view: depletion width and breakdown voltage."""

    view: "ApdAtTemperature"

    def depletion_width(self, v_r):
        """Depleted thickness [m] at reverse bias ``v_r`` [V].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].
        """
        apd = self.view.apd
        if apd.structure is not None:
            return apd.structure.depletion_width(v_r)
        return _out(apd._profile(v_r, n_points=3)[0][..., -1])

    def breakdown_voltage(self):
        """Breakdown voltage [V] at the view's temperature(s) (ionisation integral = 1)."""
        return self.view.breakdown_voltage()


@dataclass(frozen=True)
class ApdAtTemperature:
    """An avalanche photodiode at an operating temperature, as the receiver stages see it.

    Parameters
    ----------
    apd : AvalanchePhotodiode
        The device (its own temperature is replaced by ``temperature``).
    temperature : float or array_like
        Operating temperature [K], 50 to 600; an array gives one per design point
        (it broadcasts against the bias).

    Notes
    -----
    Intrinsic response: one pole at f_pd = (f_t^-2 + f_av^-2)^-1/2 with the transit limit
    f_t = 0.443 / tau (tau = W / v_sat; Sze and Ng, 3rd ed., ch. 13) and Emmons'
    build-up limit f_av = 1 / (2 pi M N k tau_m)
    (:func:`~photorx.device.avalanche.gain_bandwidth_limit`); the RC limit is not in it:
    the receiver's loop carries the diode capacitance. The receiver reports f_pd as the
    photodiode's transit (transit and avalanche build-up) bandwidth.

    References
    ----------
    .. [1] R. J. McIntyre, Multiplication noise in uniform avalanche diodes, IEEE Trans.
       Electron Devices 13, 164 (1966).
    .. [2] R. B. Emmons, Avalanche-photodiode frequency response, J. Appl. Phys. 38, 3705
       (1967) (from memory).
    """

    apd: object
    temperature: object = 300.0

    def __post_init__(self):
        object.__setattr__(self, "temperature", check_temperature(self.temperature))
        # the stages ask for the same bias several times: one ionisation pass per bias array
        object.__setattr__(self, "_memo", {})

    # ---------------------------------------------------------------- per temperature
    def _each(self, fn, v_r, n=0):
        """fn(apd_at_T, v) over the distinct temperatures, v and T broadcast together.

        ``fn`` returns an array of v's shape, or of shape ``(n,) + v.shape`` when n > 0.
        """
        v = np.asarray(v_r, dtype=float)
        t = np.asarray(self.temperature, dtype=float)
        lead = (n,) if n else ()
        if t.ndim == 0 or np.all(t == t.flat[0]):
            out = np.asarray(fn(self.apd.at_temperature(float(t.flat[0])), v), dtype=float)
            shape = lead + np.broadcast_shapes(out.shape[len(lead):], t.shape)
            return np.broadcast_to(out, shape).copy()
        v, t = np.broadcast_arrays(v, t)
        out = np.empty(lead + v.shape)
        for t_u in np.unique(t):
            sel = t == t_u
            out[..., sel] = fn(self.apd.at_temperature(float(t_u)), v[sel])
        return out

    # ---------------------------------------------------------------- avalanche
    def gain(self, v_r):
        """Avalanche gain M [-] at reverse bias ``v_r`` [V] and the view's temperature(s).

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V], below breakdown at every temperature.
        """
        return _out(self._each(lambda a, v: a.gain(v), v_r))

    def breakdown_voltage(self):
        """Breakdown voltage [V] at the view's temperature(s)."""
        t = np.asarray(self.temperature, dtype=float)
        vals = {float(t_u): self.apd.breakdown_voltage(float(t_u)) for t_u in np.unique(t)}
        return _out(np.vectorize(vals.__getitem__, otypes=[float])(t))

    def multiplication(self, v_r):
        """Gain, excess noise and dark-current split at reverse bias ``v_r`` [V].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].

        Returns
        -------
        dict of numpy.ndarray
            ``gain`` M [-], ``excess_noise_factor`` F(M, k_eff) [-] (McIntyre 1966),
            ``k_effective`` [-], ``surface_dark_current`` I_ds [A] (unmultiplied) and
            ``bulk_dark_current`` I_dm [A] (primary, multiplied by M).
        """
        def one(a, v):
            m = np.asarray(a.gain(v), dtype=float)
            k = np.asarray(a.k_effective(v), dtype=float)
            i_dm = np.asarray(a._primary_bulk(v), dtype=float)
            return np.stack(np.broadcast_arrays(m, k, i_dm))

        def compute(v):
            shape = np.broadcast_shapes(v.shape, np.shape(self.temperature))
            m, k, i_dm = self._each(one, v, n=3)
            f = np.asarray(av.excess_noise_factor(m, k))
            i_ds = np.broadcast_to(self.apd.surface_dark_current, shape).astype(float)
            return {"gain": m, "excess_noise_factor": f, "k_effective": k,
                    "surface_dark_current": i_ds, "bulk_dark_current": i_dm}
        return self._memoised("multiplication", v_r, compute)

    def _memoised(self, name, v_r, compute):
        """``compute(v)`` (a dict of arrays) once per bias array and quantity.

        The stages ask for the same bias several times, some with a trailing frequency axis
        (``v[..., None]``): a bias that differs only by trailing length-1 axes reuses the
        result, reshaped (when the temperature does not reach into those axes).
        """
        v = np.asarray(v_r, dtype=float)
        trail = 0
        while trail < v.ndim and v.shape[v.ndim - 1 - trail] == 1:
            trail += 1
        if trail and np.ndim(self.temperature) <= v.ndim - trail:
            base = self._memoised(name, v.reshape(v.shape[:v.ndim - trail]), compute)
            return {k: np.reshape(x, np.shape(x) + (1,) * trail) for k, x in base.items()}
        key = (name, v.shape, v.tobytes())
        if key not in self._memo:
            if len(self._memo) > 8:
                self._memo.clear()
            self._memo[key] = compute(v)
        return dict(self._memo[key])

    # ---------------------------------------------------------------- photodiode-like
    @property
    def junction(self):
        """Junction-like part: ``depletion_width(v_r)`` [m], ``breakdown_voltage()`` [V]."""
        return _ApdDepletion(self)

    @property
    def series_resistance(self):
        """Series resistance [ohm]."""
        return self.apd.series_resistance

    @property
    def material(self):
        """The absorbing material (InGaAs for the SAM kind, the junction's otherwise)."""
        if self.apd.structure is not None:
            return material("InGaAs")
        return self.apd.photodiode.junction.material

    def capacitance(self, v_r=0.0):
        """Diode capacitance [F] at reverse bias ``v_r`` [V].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].
        """
        return self.apd.capacitance(v_r)

    def responsivity(self, wavelength, v_r=0.0):
        """Primary (unity-gain) responsivity [A/W]; the current at the amplifier is M times it.

        Parameters
        ----------
        wavelength : float or array_like
            Vacuum wavelength [m].
        v_r : float or array_like, optional
            Reverse bias [V].
        """
        return self.apd.responsivity(wavelength, v_r)

    def dark_current(self, v_r=0.0):
        """Total dark current I_ds + M I_dm [A] at reverse bias ``v_r`` [V].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].
        """
        d = self.multiplication(v_r)
        return _out(d["surface_dark_current"] + d["gain"] * d["bulk_dark_current"])

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
            current = I_ds + M (R (P + P_bg) + I_dm) [A], shot_current =
            I_ds + M^2 F (R (P + P_bg) + I_dm) [A] (the white shot-noise density is
            2 q shot_current), no shunt resistance.
        """
        p = np.asarray(require_nonnegative("optical_power", optical_power, "W"))
        pb = np.asarray(require_nonnegative("background_power", background_power, "W"))
        if np.any(p > 0) or np.any(pb > 0):
            if wavelength is None:
                from ..errors import DesignError

                raise DesignError("wavelength [m] is required when optical_power or "
                                  "background_power is given", parameter="wavelength")
            i_ph = np.asarray(self.responsivity(wavelength, v_r)) * (p + pb)
        else:
            i_ph = 0.0 * (p + pb)
        mult = self.multiplication(v_r)
        m, f = mult["gain"], mult["excess_noise_factor"]
        primary = i_ph + mult["bulk_dark_current"]
        i_ds = mult["surface_dark_current"]
        return EquivalentCircuit(capacitance=self.capacitance(v_r),
                                 series_resistance=self.series_resistance,
                                 shunt_resistance=np.inf,
                                 current=_out(i_ds + m * primary),
                                 shot_current=_out(i_ds + m**2 * f * primary))

    def transit_time(self, v_r=0.0):
        """Transit time W / v_sat of the depleted region [s].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].
        """
        return self.apd.transit_time(v_r)

    def _intrinsic_bandwidth(self, v_r):
        def compute(v):
            tau = np.asarray(self.apd.transit_time(v), dtype=float)
            d = self.multiplication(v)
            # multiplier transit time: the multiplying region's width at the saturated velocity
            tau_m = self.apd._profile(v, n_points=3)[0][..., -1] / self.apd.saturation_velocity
            f_av = av.gain_bandwidth_limit(d["gain"], np.maximum(d["k_effective"], 1e-3), tau_m)
            return {"bandwidth": np.asarray(av.apd_bandwidth(0.443 / tau, np.inf, f_av))}
        return self._memoised("intrinsic_bandwidth", v_r, compute)["bandwidth"]

    def transit_bandwidth(self, v_r=0.0, wavelength=None):
        """Intrinsic bandwidth of transit and avalanche build-up [Hz] (see Notes of the class).

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].
        wavelength : float or array_like, optional
            Unused (uniform generation is assumed); kept for the photodiode interface.
        """
        return _out(self._intrinsic_bandwidth(v_r))

    def intrinsic_response_at(self, v_r=0.0, wavelength=None):
        """The intrinsic response as a function of frequency only: ``h(f)``, complex [-].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].
        wavelength : float or array_like, optional
            Unused; kept for the photodiode interface.
        """
        f_pd = self._intrinsic_bandwidth(v_r)

        def response(f):
            return 1.0 / (1.0 + 1j * np.asarray(f, dtype=float) / f_pd)

        return response

    def intrinsic_response(self, f, v_r=0.0, wavelength=None):
        """Intrinsic response at frequency ``f`` [Hz], complex [-] (one pole, see the class).

        Parameters
        ----------
        f : float or array_like
            Frequency [Hz], >= 0.
        v_r : float or array_like
            Reverse bias [V].
        wavelength : float or array_like, optional
            Unused; kept for the photodiode interface.
        """
        return self.intrinsic_response_at(v_r, wavelength)(f)


def bias_for_constant_gain(apd, gain, temperatures):
    """Reverse bias that holds the avalanche gain at ``gain`` at each temperature [V].

    The bias program of a temperature-compensated APD supply: breakdown rises with
    temperature (phonon scattering lowers the ionisation rates), so the bias must track it.

    Parameters
    ----------
    apd : AvalanchePhotodiode
        The device.
    gain : float
        Gain to hold [-], > 1 and below the gain at 0.99999 V_B at every temperature.
    temperatures : float or array_like
        Temperatures [K], 50 to 600 (e.g. 233.15 to 358.15 K for -40 to 85 degC).

    Returns
    -------
    float or numpy.ndarray
        v_r(T) [V] with M(v_r(T), T) = gain (brentq at each temperature, see
        :meth:`~photorx.device.apd.AvalanchePhotodiode.bias_for_gain`).

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 13 (temperature dependence of avalanche breakdown and gain).
    """
    t = np.asarray(check_temperature(temperatures), dtype=float)
    out = np.array([apd.at_temperature(float(tt)).bias_for_gain(gain)
                    for tt in np.ravel(t)]).reshape(t.shape)
    return _out(out)
