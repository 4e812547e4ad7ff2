"""A photodiode built from measured C-V and I-V tables instead of a junction design.

:class:`TabulatedJunction` interpolates a measured C-V curve (monotone cubic in ln C)
within its bias range and refuses biases outside it. :class:`MeasuredPhotodiode` is a
:class:`~photorx.device.photodiode.Photodiode` on such a junction whose dark current is
the diffusion + generation + shunt model fitted to the measured I-V
(:func:`~photorx.device.dark_fit.fit_dark_current`), again only within the measured
bias (and temperature) range. Everything else (responsivity, equivalent circuit, noise
in a :class:`~photorx.analysis.receiver.Receiver`, sweeps) is the photodiode's own.
Build one with :meth:`Photodiode.from_measurements`.
"""

from __future__ import annotations

import dataclasses
import functools
import os
from dataclasses import dataclass

import numpy as np

from .._validate import require_finite, require_positive
from ..errors import DesignError
from .dark_fit import DarkCurrentFit, dark_current_model, fit_dark_current
from .junction_parametric import ParametricJunction
from .materials import check_temperature
from .photodiode import Photodiode

__all__ = ["TabulatedJunction", "MeasuredPhotodiode", "photodiode_from_measurements"]

_SLOPE_STEP = 1e-4  # [V] step of the numerical dI/dV of the shunt resistance
#: Temperatures accepted beyond the measured I-V range [K]: a measurement at 25 degC serves
#: a receiver at 300 K (1.85 K apart), not one at 320 K.
TEMPERATURE_SLACK = 2.0


def _out(x):
    return x if np.ndim(x) else float(x)


def _check_in(name, v, lo, hi, what):
    a = np.asarray(v, dtype=float)
    tol = 1e-9 * max(1.0, abs(lo), abs(hi))
    bad = (a < lo - tol) | (a > hi + tol)
    if np.any(bad):
        raise DesignError.out_of_range(name, a[bad] if a.ndim else a, "V" if name == "v_r"
                                       else "K", f"{lo:g} to {hi:g} (the {what})")


@dataclass(frozen=True)
class TabulatedJunction:
    """Junction capacitance interpolated from a measured C-V table.

    Parameters
    ----------
    bias : sequence of float
        Reverse biases of the measurement [V], strictly increasing, >= 2 points.
    capacitances : sequence of float
        Measured capacitance [F] at ``bias``, > 0.
    temperature : float, optional
        Temperature of the measurement [K] (default 300).

    Notes
    -----
    Monotone piecewise-cubic (PCHIP, :class:`scipy.interpolate.PchipInterpolator`)
    interpolation of ln C against bias: it passes through every point, keeps a falling
    curve falling and adds no overshoot between points. A bias outside the measured
    range is a DesignError (no extrapolation).

    References
    ----------
    .. [1] F. N. Fritsch and R. E. Carlson, "Monotone piecewise cubic interpolation",
       SIAM J. Numer. Anal. 17, 238 (1980).
    """

    bias: tuple
    capacitances: tuple
    temperature: float = 300.0

    def __post_init__(self):
        v = np.atleast_1d(require_finite("bias", self.bias, "V")).astype(float).ravel()
        c = np.atleast_1d(require_positive("capacitances", self.capacitances, "F")).astype(
            float).ravel()
        if v.size < 2 or v.size != c.size or np.any(np.diff(v) <= 0):
            raise DesignError("a tabulated junction needs >= 2 strictly increasing biases [V] "
                              "with one capacitance [F] each", parameter="bias")
        object.__setattr__(self, "bias", tuple(v.tolist()))
        object.__setattr__(self, "capacitances", tuple(c.tolist()))
        object.__setattr__(self, "temperature", check_temperature(self.temperature))

    @functools.cached_property
    def _interpolant(self):
        from scipy.interpolate import PchipInterpolator

        return PchipInterpolator(np.asarray(self.bias), np.log(self.capacitances))

    @property
    def bias_range(self):
        """(lowest, highest) measured reverse bias [V]."""
        return self.bias[0], self.bias[-1]

    def capacitance(self, v_r):
        """Interpolated junction capacitance [F] at reverse bias ``v_r`` [V].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] within :attr:`bias_range`; outside, a DesignError.
        """
        v = require_finite("v_r", v_r, "V")
        _check_in("v_r", v, *self.bias_range, "measured C-V bias range")
        lo, hi = self.bias_range
        return _out(np.exp(self._interpolant(np.clip(np.asarray(v, dtype=float), lo, hi))))


@dataclass(frozen=True)
class MeasuredPhotodiode(Photodiode):
    """Photodiode on a measured C-V table with the dark-current model fitted to measured I-V.

    Parameters
    ----------
    junction : object
        The measured junction (built by :meth:`Photodiode.from_measurements`).
    given_responsivity : float or table
        Responsivity [A/W] (number or table, as for :class:`Photodiode`).
    reflectance, coating_index, coating_thickness, coating_wavelength : optional
        Unused by a measured diode (its responsivity is given); as in :class:`Photodiode`.
    top_thickness, absorber_thickness, top_diffusion_length : float, optional
        Unused (physics-mode layer stack); as in :class:`Photodiode`.
    lifetime, generation_lifetime : float, optional
        Unused (physics-mode lifetimes); as in :class:`Photodiode`.
    leakage_resistance : float, optional
        Must stay inf: the fitted shunt is the leakage.
    series_resistance : float, optional
        [ohm], >= 0.
    package_capacitance : float, optional
        [F] added to the measured capacitance (default 0: a C-V measured on the packaged
        diode already includes it).
    illuminated_side : {"p", "n"}, optional
        Unused; as in :class:`Photodiode`.
    intrinsic_bandwidth : float, optional
        Intrinsic 3-dB bandwidth [Hz]; default none (no intrinsic limit).
    reference_dark_current, reference_bias, zero_bias_resistance : optional
        Must stay None (the measured I-V replaces them).
    reference_temperature : float, optional
        Temperature [K] of the diode (the C-V temperature by default).
    band_gap : float, optional
        Band gap [eV] of the dark-current temperature laws.
    dark_fit : DarkCurrentFit, optional
        The fitted dark current; None: no dark current (no I-V given).
    iv_bias_range : (float, float), optional
        Measured I-V bias range [V].
    iv_temperature_range : (float, float), optional
        Measured I-V temperature range [K]; the diode's temperature (its junction's, set
        by a Receiver) must lie within it +- :data:`TEMPERATURE_SLACK`.
    """

    dark_fit: DarkCurrentFit | None = None
    iv_bias_range: tuple | None = None
    iv_temperature_range: tuple | None = None

    def _dark_bias(self, v_r):
        v = require_finite("v_r", v_r, "V")
        if self.iv_bias_range is not None:
            _check_in("v_r", v, *self.iv_bias_range, "measured I-V bias range")
            lo, hi = self.iv_temperature_range
            _check_in("temperature", self.temperature, lo - TEMPERATURE_SLACK,
                      hi + TEMPERATURE_SLACK, "measured I-V temperatures "
                      f"+- {TEMPERATURE_SLACK:g} K; set the receiver's temperature")
        return np.asarray(v, dtype=float)

    def dark_current_components(self, v_r=0.0):
        """Fitted dark current by part [A]: dict with "diffusion", "generation", "leakage".

        Parameters
        ----------
        v_r : float or array_like, optional
            Reverse bias [V] within the measured I-V range; outside, a DesignError.
        """
        v = self._dark_bias(v_r)
        if self.dark_fit is None:
            return {k: _out(0.0 * v) for k in ("diffusion", "generation", "leakage")}
        f, t = self.dark_fit, self.temperature
        p = f.parameters
        ratio = np.asarray(f.junction.capacitance(0.0)) / np.asarray(f.junction.capacitance(v))
        args = dict(width_ratio=ratio, reference_temperature=f.reference_temperature,
                    band_gap=f.band_gap)
        return {"diffusion": _out(dark_current_model(v, t, p["saturation_current"], 0.0, 0.0,
                                                     **args)),
                "generation": _out(dark_current_model(v, t, 0.0, p["generation_current"], 0.0,
                                                      **args)),
                "leakage": _out(p["shunt_conductance"] * v)}

    def dark_current(self, v_r=0.0):
        """Fitted dark current [A] at reverse bias ``v_r`` [V] (positive in reverse).

        Parameters
        ----------
        v_r : float or array_like, optional
            Reverse bias [V] within the measured I-V range; outside, a DesignError.
        """
        parts = self.dark_current_components(v_r)
        return _out(sum(np.asarray(x) for x in parts.values()))

    def shunt_resistance(self, v_r=0.0):
        """Differential resistance (dI/dv_r)^-1 of the fitted dark current [ohm].

        Parameters
        ----------
        v_r : float or array_like, optional
            Reverse bias [V] within the measured I-V range; outside, a DesignError.
        """
        v = self._dark_bias(v_r)
        if self.dark_fit is None:
            return _out(np.full(v.shape, np.inf))
        lo, hi = self.iv_bias_range
        a = np.clip(v - _SLOPE_STEP / 2, lo, hi - _SLOPE_STEP)
        di = np.asarray(self.dark_current(a + _SLOPE_STEP)) - np.asarray(self.dark_current(a))
        with np.errstate(divide="ignore"):
            return _out(_SLOPE_STEP / np.where(di > 0, di, 0.0))

    def _forward_current(self, v_r):
        v = np.asarray(require_finite("v_r", v_r, "V"))
        return np.zeros(v.shape) if v.ndim else 0.0, 1.0  # no diffusion capacitance model

    def at_temperature(self, temperature):
        """The same diode at another temperature within the measured I-V temperatures.

        The dark current follows its fitted temperature laws; the capacitance stays the
        measured one (C-V at one temperature).

        Parameters
        ----------
        temperature : float
            [K], within the measured I-V temperature range.
        """
        t = float(check_temperature(temperature))
        if np.ndim(t):
            raise DesignError("temperature must be a single number [K]", parameter="temperature")
        if self.iv_temperature_range is not None:
            lo, hi = self.iv_temperature_range
            _check_in("temperature", t, lo - TEMPERATURE_SLACK, hi + TEMPERATURE_SLACK,
                      f"measured I-V temperatures +- {TEMPERATURE_SLACK:g} K")
        return dataclasses.replace(self, junction=dataclasses.replace(self.junction,
                                                                      temperature=t))

    @property
    def temperature(self):
        """Temperature of the diode [K] (its junction's; the receiver sets it)."""
        return _out(np.asarray(self.junction.temperature, dtype=float))


@dataclass(frozen=True)
class _WidthJunction:
    """C(v) for the generation width W ~ 1/C: the measured table inside its range, beyond it
    the abrupt-junction law (1 + v/0.7 V)^-1/2 scaled to meet the table at its ends
    (continuous). A fit of the table's own form would be worse there: a p-i-n curve fitted
    by Cj0/(1 + V/Vj)^m takes a small Vj that diverges in forward bias."""

    table: TabulatedJunction
    fitted: object = ParametricJunction(cj0=1.0, vj=0.7, m=0.5)

    def capacitance(self, v_r):
        v = np.asarray(v_r, dtype=float)
        lo, hi = self.table.bias_range
        inside = np.asarray(self.table.capacitance(np.clip(v, lo, hi)))
        edge = np.where(v < lo, lo, hi)
        scale = np.asarray(self.table.capacitance(edge)) / np.asarray(self.fitted.capacitance(edge))
        outside = np.asarray(self.fitted.capacitance(v)) * scale
        return _out(np.where((v < lo) | (v > hi), outside, inside))


def _table(value, reader, kind):
    if isinstance(value, (str, os.PathLike)) or hasattr(value, "read"):
        return reader(value)
    if not hasattr(value, "columns"):
        raise DesignError(f"{kind} must be a table from photorx.read_{kind} or a CSV path",
                          parameter=kind)
    return value


def photodiode_from_measurements(cv, responsivity, iv=None, series_resistance=10.0,
                                 package_capacitance=0.0, bandwidth=None, temperature=None,
                                 band_gap=None, parts=("diffusion", "generation", "shunt"),
                                 smooth_cv=False):
    """Build a :class:`MeasuredPhotodiode` from measured tables (see
    :meth:`Photodiode.from_measurements`).

    Parameters
    ----------
    cv : pandas.DataFrame, str or os.PathLike
        Measured C-V (:func:`~photorx.device.measurements.read_cv` table or CSV path).
    responsivity : float or table
        [A/W], a number or (wavelengths [m], responsivities [A/W]).
    iv : pandas.DataFrame, str or os.PathLike, optional
        Measured dark I-V (one or more temperatures); None: no dark current.
    series_resistance : float, optional
        [ohm] (default 10).
    package_capacitance : float, optional
        [F] added to the measured C (default 0).
    bandwidth : float, optional
        Intrinsic 3-dB bandwidth [Hz].
    temperature : float, optional
        Temperature of the diode [K]; default the C-V temperature (or 300 K). With a
        C-V table of several temperatures, the one to use.
    band_gap : float, optional
        Band gap [eV] of the dark-current temperature laws (default 1.12, Si).
    parts : sequence of str, optional
        Dark-current parts to fit (see :func:`~photorx.device.dark_fit.fit_dark_current`).
    smooth_cv : bool, optional
        Replace the measured ln C by a cubic smoothing spline through it against
        ln(1 + (V - V_min)/1 V) (smoothing by generalised cross-validation,
        :func:`scipy.interpolate.make_smoothing_spline`) before interpolating, so that measurement noise does not make C(V), and every
        figure that depends on it, wiggle between points (default False: through the
        points as measured).

    Returns
    -------
    MeasuredPhotodiode
    """
    from .measurements import read_cv, read_iv

    cv = _table(cv, read_cv, "cv")
    t_cv = None
    if "temperature" in cv.columns:
        temps = np.unique(cv["temperature"].to_numpy(float))
        if temps.size > 1 and temperature is None:
            raise DesignError(f"cv holds {temps.size} temperatures; pass temperature [K]",
                              parameter="temperature")
        t_cv = float(temperature) if temperature is not None else float(temps[0])
        cv = cv[np.isclose(cv["temperature"].to_numpy(float), t_cv)]
        if cv.empty:
            raise DesignError.out_of_range("temperature", t_cv, "K",
                                           f"one of the C-V temperatures {temps.tolist()}")
    t_diode = float(temperature if temperature is not None else (t_cv or 300.0))
    bias = cv["reverse_bias"].to_numpy(float)
    cap = cv["capacitance"].to_numpy(float)
    if smooth_cv:
        from scipy.interpolate import make_smoothing_spline

        order = np.argsort(bias)
        bias, cap = bias[order], cap[order]
        # in ln C against ln(1 + (V - V_min)/1 V) a depletion capacitance is close to a
        # straight line, which the spline's cross-validation smooths far better than the
        # strongly bent ln C(V) near zero bias
        x = np.log1p(bias - bias[0])
        cap = np.exp(make_smoothing_spline(x, np.log(cap))(x))
    table = TabulatedJunction(bias, cap, t_cv if t_cv is not None else t_diode)
    kw = {}
    if iv is not None:
        iv = _table(iv, read_iv, "iv")
        # the generation current scales with the depletion width W ~ 1/C: the measured C-V
        # where it exists, a parametric fit of it beyond (e.g. forward-bias I-V points)
        width = _WidthJunction(table)
        fit = fit_dark_current(iv, junction=width, parts=parts, reference_temperature=t_diode,
                               band_gap=band_gap)
        v = iv["reverse_bias"].to_numpy(float)
        kw = dict(dark_fit=fit, iv_bias_range=(float(v.min()), float(v.max())))
        t = (iv["temperature"].to_numpy(float) if "temperature" in iv.columns
             else np.array([t_diode]))
        kw["iv_temperature_range"] = (float(t.min()), float(t.max()))
    return MeasuredPhotodiode(junction=table, given_responsivity=responsivity,
                              series_resistance=series_resistance,
                              package_capacitance=package_capacitance,
                              intrinsic_bandwidth=bandwidth, reference_temperature=t_diode,
                              band_gap=band_gap, **kw)
