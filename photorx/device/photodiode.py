"""The photodiode: a junction plus optics, dark current, series resistance and package.

:class:`Photodiode` is the thin shell of the device stage: a frozen dataclass that holds a
design, validates it and routes every call to the pure functions of
:mod:`~photorx.device.optics`, :mod:`~photorx.device.speed` and
:mod:`~photorx.device.darkcurrent`. Everything broadcasts over the reverse bias ``v_r``,
the wavelength and the frequency.

Two ways to describe a diode:

- from physics: ``Photodiode(junction=j)`` with a physical junction (abrupt, graded or
  p-i-n); quantum efficiency from the shipped absorption tables and the layer stack,
  dark current from ni, lifetimes and the depletion width, transit from the saturation
  velocities. Every other argument has a documented default.
- from a datasheet: :meth:`Photodiode.from_datasheet` with capacitance, responsivity, dark
  current and shunt resistance numbers, on a :class:`~photorx.device.junction.ParametricJunction`.

The two mix: a physical junction with a ``given_responsivity`` (number or table), or
with a measured dark current (``reference_dark_current``, ``zero_bias_resistance``).
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field

import numpy as np

from .._validate import (
    as_float_array,
    require_finite,
    require_in_range,
    require_nonnegative,
    require_positive,
)
from ..constants import thermal_voltage
from ..errors import DesignError
from . import darkcurrent as dk
from . import optics
from .equivalent_circuit import EquivalentCircuit
from .junction import ParametricJunction, diffusion_capacitance
from .photodiode_dark import (
    DarkCurrentRoutes,
    datasheet_temperature_factors,
    junction_potential_at_temperature,
)
from .photodiode_optics import OpticsRoutes
from .photodiode_speed import SpeedRoutes

__all__ = ["Photodiode"]

_DEFAULT_TOP_THICKNESS = 0.3e-6  # [m] shallow diffused/implanted contact layer
_DEFAULT_TOP_DIFFUSION_LENGTH = 1e-6  # [m] heavily doped (~1e19 cm^-3) contact layer
_DEFAULT_SERIES_RESISTANCE = 10.0  # [ohm]


def _out(x):
    return x if np.ndim(x) else (complex(x) if np.iscomplexobj(x) else float(x))


def _optional_positive(name, value, unit):
    """None, or ``value`` > 0 as a float (scalar) or float array (one value per design)."""
    return None if value is None else require_positive(name, value, unit)




def _responsivity_table(value):
    """Normalise a responsivity table to ((wavelengths...), (values...)), validated."""
    if isinstance(value, dict):
        pairs = sorted((float(k), float(v)) for k, v in value.items())
        wl, r = [p[0] for p in pairs], [p[1] for p in pairs]
    else:
        arr = np.asarray(as_float_array("given_responsivity", value, "A/W"), dtype=float)
        if arr.ndim == 2 and arr.shape[0] == 2:  # (wavelengths, responsivities)
            wl, r = arr[0], arr[1]
        elif arr.ndim == 2 and arr.shape[1] == 2:  # rows [wavelength, responsivity]
            wl, r = arr[:, 0], arr[:, 1]
        else:
            raise DesignError(f"given_responsivity table has shape {arr.shape}; give a number "
                              "[A/W] or a table (wavelengths [m], responsivities [A/W]) with "
                              ">= 2 points", parameter="given_responsivity")
    wl = np.asarray(require_positive("given_responsivity wavelengths", wl, "m"), dtype=float)
    r = np.asarray(require_nonnegative("given_responsivity", r, "A/W"), dtype=float)
    if wl.size < 2 or np.any(np.diff(wl) <= 0):
        raise DesignError("responsivity table wavelengths must be >= 2 strictly increasing "
                          f"values [m]; got {wl.tolist()}", parameter="given_responsivity")
    return tuple(wl.tolist()), tuple(r.tolist())


@dataclass(frozen=True)
class Photodiode(OpticsRoutes, DarkCurrentRoutes, SpeedRoutes):
    """A biased photodiode: capacitance, responsivity, dark current, speed, equivalent circuit.

    Parameters
    ----------
    junction : junction model
        :class:`~photorx.device.junction.AbruptJunction`, ``LinearlyGradedJunction``,
        ``PinJunction`` (physical: material, area, temperature) or
        :class:`~photorx.device.junction.ParametricJunction` (capacitance only; then give
        ``given_responsivity``).
    given_responsivity : None, float or table, optional
        None (default): from physics (absorption table of the junction material, layer
        stack, reflectance). A number [A/W]: the same at every wavelength and bias. A
        table: ``(wavelengths [m], responsivities [A/W])`` (also an (N, 2) array of rows
        [wavelength, responsivity] for N > 2, or a dict wavelength -> responsivity),
        interpolated linearly; outside it is a DesignError.
    reflectance : float, optional
        Front power reflectance [-], 0 to <1, the same at every wavelength (overrides the
        surface model). Default None: from the complex index n - i k of the material at
        each wavelength (:mod:`~photorx.device.optical_data`), bare (normal-incidence
        Fresnel, about 0.3 for Si and InGaAs) or with the coating below.
    coating_index : float, optional
        Refractive index of a single-layer anti-reflection coating [-], >= 1 (e.g. 1.45
        SiO2, 1.9-2.0 Si3N4). Default None: bare surface.
    coating_thickness : float, optional
        Physical thickness of that coating [m], >= 0. Default: quarter-wave at
        ``coating_wavelength``, d = lambda_0 / (4 n_1).
    coating_wavelength : float, optional
        Design (vacuum) wavelength of the quarter-wave coating [m], > 0; required with
        ``coating_index`` unless ``coating_thickness`` is given.
    top_thickness : float, optional
        Undepleted absorbing layer above the depletion layer [m], >= 0 (default 0.3 um, a
        shallow contact diffusion). 0 for a transparent window layer (InP on InGaAs).
    absorber_thickness : float, optional
        Absorbing material below the top layer: depletion layer plus undepleted bottom
        layer [m], > 0 (default inf: a thick substrate of the same material). For an
        InGaAs layer on an InP substrate give the InGaAs thickness.
    top_diffusion_length : float, optional
        Minority-carrier diffusion length in the top layer [m], > 0 (default 1 um, typical
        of a ~1e19 cm^-3 contact layer).
    lifetime : float, optional
        Minority-carrier lifetime in the undepleted bottom layer at 300 K [s], > 0
        (default by material, :data:`~photorx.device.darkcurrent.DEFAULT_LIFETIMES`; 1 us
        otherwise); at other junction temperatures it follows tau ~ T^-1/2
        (:func:`~photorx.device.darkcurrent.lifetime_at_temperature`).
    generation_lifetime : float, optional
        Generation lifetime of the depletion layer at 300 K [s], > 0 (default by
        material; same temperature law).
    leakage_resistance : float, optional
        Ohmic (surface) leakage resistance [ohm], > 0 (default inf). Not combined with a
        datasheet dark current, whose fit determines the leakage.
    series_resistance : float, optional
        Series resistance [ohm], >= 0 (default 10 ohm).
    package_capacitance : float, optional
        Package and pad capacitance in parallel with the junction [F], >= 0 (default 0).
    illuminated_side : {"p", "n"}, optional
        Doping type of the illuminated top layer (default "p", p-on-n).
    intrinsic_bandwidth : float, optional
        Given intrinsic (transit) 3-dB bandwidth [Hz], > 0; replaces the transit model by a
        uniform-generation transit response with this bandwidth. Default None: from the
        junction (physical) or no intrinsic limit (parametric).
    reference_dark_current : float, optional
        Measured dark current [A], > 0, at ``reference_bias``; replaces the physical dark
        current model by a fitted one (see Notes).
    reference_bias : float, optional
        Reverse bias of ``reference_dark_current`` [V], >= 0.1.
    zero_bias_resistance : float, optional
        Measured zero-bias shunt resistance R0 [ohm], > 0 (with or without
        ``reference_dark_current``).
    reference_temperature : float, optional
        Temperature [K] at which the datasheet values (capacitance of a parametric
        junction, reference dark current, R0) hold, and the temperature of a diode on a
        parametric junction; default 300 K. :meth:`at_temperature` rescales them.
    band_gap : float, optional
        Band gap [eV] of the diode material for that rescaling (default: the junction
        material's Eg(300 K); required to rescale a diode on a parametric junction).

    Notes
    -----
    Physical dark current: I = I_s (1 - e^{-v_r/V_T}) + q A ni W / tau_g
    (1 - e^{-v_r/2V_T}) + v_r / R_leak (:mod:`~photorx.device.darkcurrent`). Fitted dark
    current: I = I_g [C_j(0)/C_j(v_r)] (1 - e^{-v_r/2V_T}) + G v_r, a generation current
    proportional to the depletion width (W ~ 1/C_j) plus ohmic leakage; I_g and G follow
    from the reference dark current and R0 (only I: G = 0; only R0: I_g = 0).

    Equivalent circuit: C = C_j + C_diff + C_package, R_sh = (dI/dv_r)^-1 at the bias,
    current = |I_dark| + R (P_signal + P_background). Its noise (shot noise of the current
    plus 4kT/R_sh) is the diode's full noise in reverse and zero bias; in forward bias
    it overstates the diffusion noise by up to a factor 2.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2 and ch. 13.
    .. [2] J. G. Graeme, *Photodiode Amplifiers: Op Amp Solutions*, McGraw-Hill, 1996,
       ch. 1 (photodiode model: current source, C, R_sh, R_s).
    """

    junction: object
    given_responsivity: object = None
    reflectance: float | None = None
    coating_index: float | None = None
    coating_thickness: float | None = None
    coating_wavelength: float | None = None
    top_thickness: float = _DEFAULT_TOP_THICKNESS
    absorber_thickness: float = np.inf
    top_diffusion_length: float = _DEFAULT_TOP_DIFFUSION_LENGTH
    lifetime: float | None = None
    generation_lifetime: float | None = None
    leakage_resistance: float = np.inf
    series_resistance: float = _DEFAULT_SERIES_RESISTANCE
    package_capacitance: float = 0.0
    illuminated_side: str = "p"
    intrinsic_bandwidth: float | None = None
    reference_dark_current: float | None = None
    reference_bias: float | None = None
    zero_bias_resistance: float | None = None
    reference_temperature: float | None = None
    band_gap: float | None = None
    _fit: tuple = field(init=False, repr=False, compare=False, default=None)

    # ----------------------------------------------------------------------- validation
    def __post_init__(self):
        j = self.junction
        if not callable(getattr(j, "capacitance", None)):
            raise DesignError(f"junction = {j!r} is not a junction model; pass e.g. "
                              "AbruptJunction, PinJunction or ParametricJunction",
                              parameter="junction")
        physical = self._physical
        setf = object.__setattr__
        r = self.given_responsivity
        if r is None:
            if not physical:
                raise DesignError("given_responsivity is required with a junction that has no "
                                  "material (ParametricJunction); give a number [A/W] or a "
                                  "table (wavelengths [m], responsivities [A/W])",
                                  parameter="given_responsivity")
            optics.absorption_table(j.material.name)  # DesignError if no table
        elif np.ndim(r) == 0 and not isinstance(r, dict):
            setf(self, "given_responsivity", float(require_nonnegative("given_responsivity", r,
                                                                       "A/W")))
        else:
            setf(self, "given_responsivity", _responsivity_table(r))
        if self.reflectance is not None:
            setf(self, "reflectance", require_in_range(
                "reflectance", self.reflectance, "", 0.0, 1.0, high_inclusive=False))
        self._setup_coating()
        # Geometry and parasitics may be arrays (one value per design point of a sweep).
        setf(self, "top_thickness", require_nonnegative("top_thickness", self.top_thickness, "m"))
        at = _out(np.asarray(optics.require_thickness_or_inf("absorber_thickness",
                                                             self.absorber_thickness), dtype=float))
        if np.any(np.asarray(at) <= 0):
            raise DesignError.out_of_range("absorber_thickness", np.min(at), "m",
                                           "> 0 (inf allowed)")
        setf(self, "absorber_thickness", at)
        setf(self, "top_diffusion_length", require_positive(
            "top_diffusion_length", self.top_diffusion_length, "m"))
        setf(self, "lifetime", _optional_positive("lifetime", self.lifetime, "s"))
        setf(self, "generation_lifetime", _optional_positive(
            "generation_lifetime", self.generation_lifetime, "s"))
        rl = np.asarray(as_float_array("leakage_resistance", self.leakage_resistance, "ohm"))
        if np.any(~(rl > 0)):  # also NaN; +inf (no leakage) is allowed
            raise DesignError.out_of_range("leakage_resistance", rl[~(rl > 0)][0] if rl.ndim
                                           else rl, "ohm", "> 0 (inf allowed)")
        setf(self, "leakage_resistance", _out(rl))
        setf(self, "series_resistance", require_nonnegative(
            "series_resistance", self.series_resistance, "ohm"))
        setf(self, "package_capacitance", require_nonnegative(
            "package_capacitance", self.package_capacitance, "F"))
        if self.illuminated_side not in ("p", "n"):
            raise DesignError(f"illuminated_side = {self.illuminated_side!r} is invalid; "
                              "valid: 'p' (p-on-n) or 'n' (n-on-p)", parameter="illuminated_side")
        setf(self, "intrinsic_bandwidth", _optional_positive(
            "intrinsic_bandwidth", self.intrinsic_bandwidth, "Hz"))
        if self.reference_temperature is not None:
            from .materials import check_temperature

            t_ref = check_temperature(self.reference_temperature, "reference_temperature")
            if np.ndim(t_ref):
                raise DesignError("reference_temperature must be a single number [K]",
                                  parameter="reference_temperature")
            if self._physical:
                raise DesignError("reference_temperature is for a parametric junction; a "
                                  "physical junction carries its own temperature",
                                  parameter="reference_temperature")
            setf(self, "reference_temperature", float(t_ref))
        if self.band_gap is not None:
            setf(self, "band_gap", float(require_in_range("band_gap", self.band_gap, "eV",
                                                          0.1, 6.0)))
        self._setup_dark_fit()

    def _setup_coating(self):
        setf = object.__setattr__
        n1, d, wl0 = self.coating_index, self.coating_thickness, self.coating_wavelength
        if n1 is None:
            for name in ("coating_thickness", "coating_wavelength"):
                if getattr(self, name) is not None:
                    raise DesignError(f"{name} is given without coating_index",
                                      parameter=name)
            return
        if self.reflectance is not None:
            raise DesignError("give either reflectance (a fixed number) or coating_index "
                              "(the coating model), not both", parameter="coating_index")
        setf(self, "coating_index", require_in_range("coating_index", n1, "", 1.0, 5.0))
        if wl0 is not None:
            setf(self, "coating_wavelength", require_positive("coating_wavelength", wl0, "m"))
        if d is None:
            if wl0 is None:
                raise DesignError("coating_wavelength [m] (quarter-wave design wavelength) or "
                                  "coating_thickness [m] is required with coating_index",
                                  parameter="coating_wavelength")
            d = np.asarray(self.coating_wavelength) / (4.0 * np.asarray(self.coating_index))
        setf(self, "coating_thickness", _out(np.asarray(require_nonnegative(
            "coating_thickness", d, "m"), dtype=float)))

    # ----------------------------------------------------------------------- helpers
    @property
    def _physical(self) -> bool:
        j = self.junction
        return hasattr(j, "material") and callable(getattr(j, "depletion_width", None))

    @property
    def temperature(self):
        """Temperature of the junction [K]; may be an array.

        A parametric junction has none: ``reference_temperature`` (default 300 K).
        """
        default = 300.0 if self.reference_temperature is None else self.reference_temperature
        return _out(np.asarray(getattr(self.junction, "temperature", default), dtype=float))

    @property
    def material(self):
        """Material of the junction, or None for a parametric junction."""
        return getattr(self.junction, "material", None) if self._physical else None

    def _lifetimes(self):
        """(lifetime, generation lifetime) [s] at the junction temperature.

        The given (or default) values hold at 300 K and follow the SRH thermal-velocity
        law (:func:`~photorx.device.darkcurrent.lifetime_at_temperature`).
        """
        name = self.material.name if self._physical else ""
        tau0, taug0 = dk.default_lifetimes(name)
        tau = self.lifetime if self.lifetime is not None else tau0
        tau_g = self.generation_lifetime if self.generation_lifetime is not None else taug0
        t = self.temperature
        if np.ndim(t) == 0 and t == 300.0:
            return tau, tau_g
        return dk.lifetime_at_temperature(tau, t), dk.lifetime_at_temperature(tau_g, t)

    # ----------------------------------------------------------------------- electrical
    def capacitance(self, v_r=0.0):
        """Total diode capacitance [F]: junction + diffusion (forward bias) + package.

        Parameters
        ----------
        v_r : float or array_like, optional
        Reverse bias [V], default 0; positive = reverse, negative = forward. Finite, and
        for a physical junction -0.9 Vbi < v_r <= ``junction.breakdown_voltage()`` (the
        breakdown estimate); with a fitted dark current on a parametric junction
        v_r > -0.9 vj. DesignError otherwise.

        Notes
        -----
        C = C_j(v_r) + tau I_F / (2 n V_T) + C_pkg, the long-diode diffusion capacitance of
        the forward current I_F (lifetime tau, see
        :func:`~photorx.device.junction.diffusion_capacitance`).
        """
        cj = np.asarray(self.junction.capacitance(v_r))
        i_f, n = self._forward_current(v_r)
        tau, _ = self._lifetimes()
        cd = diffusion_capacitance(i_f, tau / 2.0, n, self.temperature)
        return _out(cj + cd + self.package_capacitance)

    # ----------------------------------------------------------------------- circuit
    def equivalent_circuit(self, v_r=0.0, optical_power=0.0, wavelength=None,
                           background_power=0.0):
        """Small-signal equivalent circuit at an operating point.

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V].
        optical_power : float or array_like, optional
            Signal optical power on the diode [W], >= 0.
        wavelength : float or array_like, optional
            Vacuum wavelength [m]; required when any optical power is given (unless the
            responsivity is a single number).
        background_power : float or array_like, optional
            Background optical power at the same wavelength [W], >= 0.

        Returns
        -------
        EquivalentCircuit
            capacitance :meth:`capacitance`, series_resistance, shunt_resistance
            :meth:`shunt_resistance` at ``v_r``, current = |I_dark| + R (P + P_bg).
        """
        p = np.asarray(require_nonnegative("optical_power", optical_power, "W"))
        pb = np.asarray(require_nonnegative("background_power", background_power, "W"))
        i_dark = np.abs(np.asarray(self.dark_current(v_r)))
        if np.any(p > 0) or np.any(pb > 0):
            if wavelength is None and not isinstance(self.given_responsivity, float):
                raise DesignError("wavelength [m] is required when optical_power or "
                                  "background_power is given", parameter="wavelength")
            i_ph = np.asarray(self.responsivity(wavelength, v_r)) * (p + pb)
        else:
            i_ph = 0.0 * (p + pb)
        return EquivalentCircuit(capacitance=self.capacitance(v_r),
                                 series_resistance=self.series_resistance,
                                 shunt_resistance=self.shunt_resistance(v_r),
                                 current=_out(i_dark + i_ph))

    # ----------------------------------------------------------------------- variants
    def at_temperature(self, temperature):
        """The same diode at another temperature [K].

        Physics mode: the junction at that temperature (every model follows). Datasheet
        values (fitted dark current, R0, a parametric junction's capacitance) are
        rescaled from ``reference_temperature`` as documented in Notes; a given
        responsivity and intrinsic bandwidth are kept.

        Parameters
        ----------
        temperature : float or array_like
            New temperature [K], 50 to 600. An array only for a physical diode without a
            fitted dark current; with datasheet values a single number.

        Notes
        -----
        Fitted dark current I = I_g s(v_r) + G v_r: I_g ~ ni(T) and G ~ ni(T)^2
        (:func:`~photorx.device.photodiode_dark.datasheet_temperature_factors`, band gap
        ``band_gap`` or the material's). Parametric junction: Vj(T) from
        :func:`~photorx.device.photodiode_dark.junction_potential_at_temperature` and
        Cj0(T) = Cj0(T0) (Vj0 / Vj(T))^m, i.e. C ~ (Vj + v_r)^-m of the depletion layer.

        Raises
        ------
        DesignError
            Temperature outside 50-600 K; a parametric junction without ``band_gap``.
        """
        from .materials import check_temperature

        t_new = check_temperature(temperature)
        if self._physical and self._fit is None:
            j = dataclasses.replace(self.junction, temperature=t_new)
            return dataclasses.replace(self, junction=j)
        if np.ndim(t_new):
            raise DesignError("temperature must be a single number [K] for a diode with "
                              "datasheet values", parameter="temperature")
        t_new, t0 = float(t_new), float(self.temperature)
        eg = self.band_gap
        if eg is None and self._physical:
            eg = float(self.material.band_gap(300.0))
        if eg is None:
            raise DesignError("band_gap [eV] of the diode material is required to move a "
                              "datasheet photodiode to another temperature (e.g. 1.12 for Si, "
                              "0.74 for InGaAs)", parameter="band_gap")
        if self._physical:
            junction = dataclasses.replace(self.junction, temperature=t_new)
        else:
            j = self.junction
            vj = junction_potential_at_temperature(j.vj, t_new, t0, eg)
            if not vj > 0.05:
                raise DesignError.out_of_range("temperature", t_new, "K",
                                               "a temperature where the junction potential "
                                               f"stays > 0.05 V (Vj = {vj:.3g} V here)")
            junction = dataclasses.replace(j, vj=float(vj),
                                           cj0=float(j.cj0 * (j.vj / vj) ** j.m))
        kw = dict(junction=junction, reference_temperature=t_new)
        if self._fit is not None:
            f_gen, f_diff = datasheet_temperature_factors(t_new, t0, eg)
            i_g, g = self._fit[0] * f_gen, self._fit[1] * f_diff
            probe = dataclasses.replace(self, junction=junction, reference_temperature=t_new,
                                        reference_dark_current=None, reference_bias=None,
                                        zero_bias_resistance=None)
            nvt = 2.0 * thermal_voltage(t_new)
            if self.reference_dark_current is not None:
                v = self.reference_bias
                s0 = probe._width_ratio(v) * -np.expm1(-v / nvt)
                kw["reference_dark_current"] = float(i_g * s0 + g * v)
            if self.zero_bias_resistance is not None:
                kw["zero_bias_resistance"] = float(1.0 / (i_g / nvt + g))
        return dataclasses.replace(self, **kw)

    @classmethod
    def from_datasheet(cls, responsivity, capacitance=None, capacitance_bias=None, cj0=None,
                       vj=0.7, m=None, dark_current=None, dark_current_bias=None,
                       shunt_resistance=None, series_resistance=_DEFAULT_SERIES_RESISTANCE,
                       package_capacitance=0.0, bandwidth=None, fc=0.5, temperature=None,
                       band_gap=None):
        """Photodiode from the few numbers of a datasheet-style description.

        Parameters
        ----------
        responsivity : float or table
            [A/W], a number or a table (wavelengths [m], responsivities [A/W]).
        capacitance : float or (float, float), optional
            Junction capacitance [F] at ``capacitance_bias``: two values (fit of Cj0 and m
            with ``vj`` fixed) or one value (then ``m`` default 0: fixed capacitance).
        capacitance_bias : float or (float, float), optional
            Reverse bias of those capacitances [V].
        cj0, vj, m : float, optional
            Alternatively the parametric form Cj0/(1 + v_r/Vj)^m: cj0 [F], vj [V]
            (default 0.7 V, also used in the two-point fit), m [-].
        dark_current : float, optional
            Dark current [A] at ``dark_current_bias`` [V].
        dark_current_bias : float, optional
            Reverse bias of ``dark_current`` [V], >= 0.1.
        shunt_resistance : float, optional
            Zero-bias shunt resistance R0 [ohm].
        series_resistance : float, optional
            [ohm] (default 10).
        package_capacitance : float, optional
            [F] added to the junction capacitance (default 0).
        bandwidth : float, optional
            Intrinsic (transit) 3-dB bandwidth [Hz]; default none (no intrinsic limit).
        fc : float, optional
            Forward-bias coefficient of the parametric junction [-].
        temperature : float, optional
            Temperature [K] at which the datasheet values hold (default 300 K).
        band_gap : float, optional
            Band gap of the diode material [eV] (e.g. 1.12 Si, 0.74 InGaAs), needed by
            :meth:`at_temperature` to rescale dark current and capacitance.

        Returns
        -------
        Photodiode
            On a :class:`~photorx.device.junction.ParametricJunction`; reproduces the
            given capacitances, responsivity, dark current and R0.

        Notes
        -----
        Two capacitance points C1, C2 at v1, v2 with Vj fixed:
        m = ln(C1/C2) / ln((Vj + v2)/(Vj + v1)), Cj0 = C1 (1 + v1/Vj)^m.
        """
        if cj0 is not None:
            if capacitance is not None:
                raise DesignError("give either capacitance (with capacitance_bias) or cj0, "
                                  "not both", parameter="capacitance")
            junction = ParametricJunction(cj0=cj0, vj=vj, m=0.5 if m is None else m, fc=fc)
        else:
            if capacitance is None or capacitance_bias is None:
                raise DesignError("capacitance [F] and capacitance_bias [V] (or cj0, vj, m) "
                                  "are required", parameter="capacitance")
            cc = np.atleast_1d(require_positive("capacitance", capacitance, "F")).astype(float)
            vb = np.atleast_1d(require_finite("capacitance_bias", capacitance_bias, "V"))
            vj_ = float(require_in_range("vj", vj, "V", 0.01, 10.0))
            if cc.shape != vb.shape or cc.size not in (1, 2):
                raise DesignError("capacitance and capacitance_bias must both be one number or "
                                  "both two numbers", parameter="capacitance")
            if np.any(vb <= -vj_ * fc):
                raise DesignError.out_of_range("capacitance_bias", vb.min(), "V",
                                               f"> -fc*vj = {-fc * vj_:g} V")
            if cc.size == 2:
                if m is not None:
                    raise DesignError("m is fitted from two capacitance points; leave it out",
                                      parameter="m")
                if vb[0] == vb[1]:
                    raise DesignError("the two capacitance_bias values must differ",
                                      parameter="capacitance_bias")
                m_fit = np.log(cc[0] / cc[1]) / np.log((vj_ + vb[1]) / (vj_ + vb[0]))
                if not 0.0 <= m_fit <= 2.0:
                    raise DesignError.out_of_range(
                        "capacitance", cc[1], "F",
                        "a capacitance that falls with reverse bias with grading coefficient "
                        f"0 to 2 (the two points give m = {m_fit:.3g})")
                m_ = float(m_fit)
            else:
                m_ = 0.0 if m is None else float(m)
            junction = ParametricJunction(cj0=float(cc[0] * (1.0 + vb[0] / vj_) ** m_), vj=vj_,
                                          m=m_, fc=fc)
        try:
            return cls(junction=junction, given_responsivity=responsivity,
                       series_resistance=series_resistance,
                       package_capacitance=package_capacitance, intrinsic_bandwidth=bandwidth,
                       reference_dark_current=dark_current, reference_bias=dark_current_bias,
                       zero_bias_resistance=shunt_resistance, reference_temperature=temperature,
                       band_gap=band_gap)
        except DesignError as exc:  # speak the datasheet's names
            names = {"given_responsivity": "responsivity", "intrinsic_bandwidth": "bandwidth",
                     "reference_dark_current": "dark_current",
                     "reference_bias": "dark_current_bias",
                     "zero_bias_resistance": "shunt_resistance",
                     "reference_temperature": "temperature"}
            msg = str(exc)
            for old, new in names.items():
                msg = msg.replace(old, new)
            raise DesignError(msg, parameter=names.get(exc.parameter, exc.parameter)) from None

    def _repr_html_(self):
        """Jupyter display: a compact parameter table with units (the closed form, where
        there is one, is the LaTeX display)."""
        from ..views.rich import parameter_table_html

        return parameter_table_html(self)



    @classmethod
    def from_measurements(cls, cv, responsivity, iv=None, series_resistance=10.0,
                          package_capacitance=0.0, bandwidth=None, temperature=None,
                          band_gap=None, smooth_cv=False):
        """Photodiode from measured C-V and dark I-V tables (a ``MeasuredPhotodiode``).

        Parameters
        ----------
        cv : pandas.DataFrame, str or os.PathLike
            Measured C-V: a :func:`~photorx.device.measurements.read_cv` table or a CSV
            path. The capacitance is interpolated within its bias range; a bias outside it
            is a DesignError.
        responsivity : float or table
            [A/W], a number or a table (wavelengths [m], responsivities [A/W]).
        iv : pandas.DataFrame, str or os.PathLike, optional
            Measured dark I-V (:func:`~photorx.device.measurements.read_iv`), one or more
            temperatures; the diffusion + generation + shunt model is fitted to it and
            used within its bias (and temperature) range. Default none: no dark current.
        series_resistance : float, optional
            [ohm] (default 10).
        package_capacitance : float, optional
            [F] added to the measured capacitance (default 0).
        bandwidth : float, optional
            Intrinsic (transit) 3-dB bandwidth [Hz]; default no intrinsic limit.
        temperature : float, optional
            Temperature of the diode [K]; default the C-V temperature or 300 K.
        band_gap : float, optional
            Band gap [eV] of the dark-current temperature laws (default 1.12, Si).
        smooth_cv : bool, optional
            Smooth the measured ln C with a cross-validated spline before interpolating
            (default False: through the measured points).

        Returns
        -------
        MeasuredPhotodiode
            Works wherever a Photodiode does (Receiver, sweep, budget); its ``dark_fit``
            holds the I-V fit with residuals and uncertainties.
        """
        from .measured_photodiode import photodiode_from_measurements

        return photodiode_from_measurements(cv, responsivity, iv=iv,
                                            series_resistance=series_resistance,
                                            package_capacitance=package_capacitance,
                                            bandwidth=bandwidth, temperature=temperature,
                                            band_gap=band_gap, smooth_cv=smooth_cv)
