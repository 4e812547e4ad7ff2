"""Fit the dark-current model (diffusion + generation + shunt) to measured I-V curves.

:func:`fit_dark_current` fits I = I_s(T) (1 - e^{-V/V_T}) + I_g(T) w(V) (1 - e^{-V/2V_T})
+ V / R_sh to one or more I-V curves (one per temperature), with the temperature laws
of the diffusion (~ ni^2) and generation (~ ni) parts, and returns a
:class:`DarkCurrentFit` with the parameters, their uncertainties, residuals and misfit
ranges.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .._validate import require_in_range, require_positive
from ..constants import thermal_voltage
from ..errors import DesignError
from .fitting import MISFIT_SIGMAS, check_sigma, misfit_ranges, weighted_least_squares
from .junction_base import check_material
from .junction_parametric import ParametricJunction
from .photodiode_dark import datasheet_temperature_factors

__all__ = ["DarkCurrentFit", "fit_dark_current", "dark_current_model", "DARK_PARTS"]

#: Parts of the dark-current model and their fitted parameter.
DARK_PARTS = {"diffusion": "saturation_current", "generation": "generation_current",
              "shunt": "shunt_conductance"}

_FLOOR = 1e-30  # [A] or [S]: lower bound of a fitted part (effectively absent)


def _temperature_factors(t, t0, band_gap):
    t = np.asarray(t, dtype=float)
    gen = np.ones_like(t)
    diff = np.ones_like(t)
    for tt in np.unique(t):
        g, d = datasheet_temperature_factors(tt, t0, band_gap)
        gen[t == tt], diff[t == tt] = g, d
    return gen, diff


def dark_current_model(v_r, temperature, saturation_current, generation_current,
                       shunt_conductance, width_ratio, reference_temperature=300.0,
                       band_gap=1.12):
    """Dark current [A] of the fitted model at reverse bias ``v_r`` and ``temperature``.

    Parameters
    ----------
    v_r : array_like
        Reverse bias [V] (negative = forward).
    temperature : array_like
        Temperature [K], 50 to 600.
    saturation_current : float
        Diffusion saturation current I_s at ``reference_temperature`` [A], >= 0.
    generation_current : float
        Generation current I_g at zero-bias depletion width and ``reference_temperature``
        [A], >= 0.
    shunt_conductance : float
        Ohmic leakage conductance 1/R_sh [S], >= 0 (the same at every temperature).
    width_ratio : array_like
        Depletion width W(v_r)/W(0) [-] at each bias (e.g. C_j(0)/C_j(v_r)).
    reference_temperature : float, optional
        Temperature of I_s and I_g [K].
    band_gap : float, optional
        Band gap [eV] of the temperature laws.

    Returns
    -------
    numpy.ndarray
        Current [A], positive in the reverse direction.

    Notes
    -----
    I = I_s f_d(T) (1 - e^{-V/V_T}) + I_g f_g(T) w(V) (1 - e^{-V/2V_T}) + G V with
    f_g ~ ni(T), f_d ~ ni(T)^2
    (:func:`~photorx.device.photodiode_dark.datasheet_temperature_factors`).
    """
    v, t = np.broadcast_arrays(np.asarray(v_r, dtype=float),
                               np.asarray(temperature, dtype=float))
    vt = thermal_voltage(t)
    f_gen, f_diff = _temperature_factors(t, reference_temperature, band_gap)
    return (saturation_current * f_diff * -np.expm1(-v / vt)
            + generation_current * f_gen * np.asarray(width_ratio) * -np.expm1(-v / (2 * vt))
            + shunt_conductance * v)


@dataclass(frozen=True, eq=False)  # holds arrays and tables: compared by identity
class DarkCurrentFit:
    """The dark-current model fitted to I-V data (result of :func:`fit_dark_current`).

    Parameters
    ----------
    parameters : dict
        saturation_current [A], generation_current [A] (at zero-bias width), both at
        ``reference_temperature``, and shunt_conductance [S]; parts left out are 0.
    uncertainties : dict
        One standard deviation of each fitted parameter, same units.
    covariance : numpy.ndarray
        Covariance of the fit variables (logarithms of the parameters).
    residuals : pandas.DataFrame
        reverse_bias [V], temperature [K], measured [A], fitted [A], relative and
        normalised residuals.
    chi_square : float
        Sum of squared normalised residuals.
    dof : int
        Degrees of freedom.
    misfit_ranges : list of (float, float, float)
        (v_lo, v_hi, temperature) [V, V, K] where the model misses the data.
    reference_temperature : float
        Temperature of the fitted currents [K].
    band_gap : float
        Band gap of the temperature laws [eV].
    junction : object
        The junction whose C_j(0)/C_j(v_r) gives the width ratio.
    absolute_sigma : bool
        Whether ``sigma`` was given.
    """

    parameters: dict
    uncertainties: dict
    covariance: np.ndarray = field(repr=False)
    residuals: object = field(repr=False)
    chi_square: float
    dof: int
    misfit_ranges: list
    reference_temperature: float
    band_gap: float
    junction: object = field(repr=False)
    absolute_sigma: bool

    @property
    def shunt_resistance(self):
        """R_sh = 1 / shunt_conductance [ohm] (inf without leakage)."""
        g = self.parameters["shunt_conductance"]
        return float("inf") if g <= _FLOOR else 1.0 / g

    @property
    def fits(self):
        """True when no bias range is flagged as misfit."""
        return not self.misfit_ranges

    def current(self, v_r, temperature=None):
        """Fitted dark current [A] at ``v_r`` [V] and ``temperature`` [K].

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V], above -0.9 times the junction potential.
        temperature : float or array_like, optional
            [K], 50 to 600; default ``reference_temperature``.
        """
        t = self.reference_temperature if temperature is None else temperature
        t = require_in_range("temperature", t, "K", 50.0, 600.0)
        v = np.asarray(v_r, dtype=float)
        p = self.parameters
        out = dark_current_model(v, t, p["saturation_current"], p["generation_current"],
                                 p["shunt_conductance"], _width_ratio(self.junction, v),
                                 self.reference_temperature, self.band_gap)
        return out if np.ndim(out) else float(out)

    def plot(self, ax=None):
        """Measured and fitted |I| against bias (log scale) with the residuals below.

        Parameters
        ----------
        ax : pair of matplotlib.axes.Axes, optional
            Axes for the curve and the residuals; by default a new Figure.
        """
        from ..views.plots_measured import plot_fit_residuals

        r = self.residuals
        return plot_fit_residuals(r["reverse_bias"], r["measured"], r["fitted"],
                                  r["normalised"], [(lo, hi) for lo, hi, _ in self.misfit_ranges],
                                  ax=ax, ylabel="|Dark current| [A]", logy=True,
                                  title="I-V fit: diffusion + generation + shunt")


def _width_ratio(junction, v):
    try:
        return np.asarray(junction.capacitance(0.0)) / np.asarray(junction.capacitance(v))
    except DesignError as exc:
        raise DesignError(f"the junction used for the generation width refuses a bias of the "
                          f"I-V data: {exc}", parameter="junction") from None


def fit_dark_current(iv, junction=None, parts=("diffusion", "generation", "shunt"), sigma=None,
                     reference_temperature=300.0, band_gap=None, material=None, tolerance=0.05):
    """Fit diffusion, generation and shunt parts of the dark current to I-V data.

    Parameters
    ----------
    iv : pandas.DataFrame or (array_like, array_like)
        I-V table from :func:`~photorx.device.measurements.read_iv` (columns
        ``reverse_bias`` [V], ``current`` [A], optional ``temperature`` [K]: several
        temperatures are fitted together), or (bias [V], current [A]) at 300 K.
    junction : object with ``capacitance(v_r)``, optional
        Junction whose C_j(0)/C_j(v_r) = W(v_r)/W(0) scales the generation current (e.g.
        ``fit_junction(cv).junction``). Default: an abrupt-like ParametricJunction
        (vj = 0.7 V, m = 1/2).
    parts : sequence of str, optional
        Parts to fit, from "diffusion", "generation", "shunt" (default all three).
    sigma : float or array_like, optional
        Standard deviation of each current [A]. Default relative weights (|I|).
    reference_temperature : float, optional
        Temperature of the fitted currents [K] (default 300 K).
    band_gap : float, optional
        Band gap [eV] of the temperature laws; default the material's Eg(300 K), else
        1.12 (Si). Matters only with several temperatures.
    material : Material or str, optional
        Material, for the band gap.
    tolerance : float, optional
        Relative residual beyond which a point is flagged without ``sigma`` [-] (default
        0.05).

    Returns
    -------
    DarkCurrentFit

    Notes
    -----
    Model of :func:`dark_current_model`, fitted by weighted least squares over the
    logarithms of the parts (each part stays >= 0). Points at exactly zero bias carry
    no information (every part is zero there) and are left out. Diffusion and
    generation separate best with forward-bias points (ideality 1 against 2) or several
    temperatures (activation Eg against Eg/2); over a narrow reverse-bias span they are
    strongly correlated, which shows in the uncertainties.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2 (diffusion and generation-recombination currents).
    .. [2] C.-T. Sah, R. N. Noyce and W. Shockley, "Carrier generation and recombination in
       p-n junctions and p-n junction characteristics", Proc. IRE 45, 1228 (1957).
    """
    import pandas as pd

    if hasattr(iv, "columns"):
        v = iv["reverse_bias"].to_numpy(float)
        i = iv["current"].to_numpy(float)
        t = (iv["temperature"].to_numpy(float) if "temperature" in iv.columns
             else np.full(v.size, 300.0))
    else:
        v, i = (np.asarray(x, dtype=float).ravel() for x in iv)
        t = np.full(v.size, 300.0)
    keep = ~((v == 0) & (i == 0))
    v, i, t = v[keep], i[keep], t[keep]
    parts = tuple(parts)
    unknown = [p for p in parts if p not in DARK_PARTS]
    if unknown or not parts:
        raise DesignError(f"parts = {parts!r} is invalid; choose from {', '.join(DARK_PARTS)}",
                          parameter="parts")
    if v.size <= len(parts):
        raise DesignError.out_of_range("iv", v.size, "points",
                                       f"> {len(parts)} (number of fitted parts)")
    t0 = float(require_in_range("reference_temperature", reference_temperature, "K", 50, 600))
    if band_gap is None:
        band_gap = (float(check_material(material).band_gap(300.0)) if material is not None
                    else 1.12)
    band_gap = float(require_in_range("band_gap", band_gap, "eV", 0.1, 6.0))
    tolerance = float(require_positive("tolerance", tolerance))
    junction = junction if junction is not None else ParametricJunction(cj0=1e-12, vj=0.7, m=0.5)
    ratio = _width_ratio(junction, v)
    if sigma is not None and np.ndim(sigma):
        sigma = np.asarray(sigma, dtype=float).ravel()[keep]
    s, absolute = check_sigma(sigma, i, "sigma", "A")

    # linear in the parts: the start is a non-negative linear least-squares solution
    vt = thermal_voltage(t)
    f_gen, f_diff = _temperature_factors(t, t0, band_gap)
    basis = {"diffusion": f_diff * -np.expm1(-v / vt),
             "generation": f_gen * ratio * -np.expm1(-v / (2 * vt)),
             "shunt": v}
    from scipy.optimize import nnls

    a = np.column_stack([basis[p] / s for p in parts])
    col = np.maximum(np.max(np.abs(a), axis=0), 1e-300)
    start, _ = nnls(a / col, i / s)
    start = start / col
    x0 = np.log(np.maximum(start, np.maximum(1e-6 * np.max(start), _FLOOR * 10)))

    def model(x):
        return sum(np.exp(xk) * basis[p] for xk, p in zip(x, parts))

    def resid(x):
        return (model(x) - i) / s

    n = len(parts)
    sol = weighted_least_squares(resid, x0, ([np.log(_FLOOR)] * n, [np.log(1e3)] * n), absolute)
    values = {name: 0.0 for name in DARK_PARTS.values()}
    errors = {name: 0.0 for name in DARK_PARTS.values()}
    for k, p in enumerate(parts):
        values[DARK_PARTS[p]] = float(np.exp(sol.x[k]))
        errors[DARK_PARTS[p]] = values[DARK_PARTS[p]] * float(np.sqrt(sol.covariance[k, k]))
    fitted = model(sol.x)
    rel = fitted / i - 1.0 if np.all(i != 0) else (fitted - i) / s
    scatter = s if absolute else s * np.sqrt(sol.chi_square / max(sol.dof, 1))
    normalised = (fitted - i) / scatter
    flagged = np.abs(normalised) > MISFIT_SIGMAS if absolute else np.abs(rel) > tolerance
    ranges = []
    for tt in np.unique(t):
        sel = t == tt
        order = np.argsort(v[sel])
        ranges += [(lo, hi, float(tt)) for lo, hi in
                   misfit_ranges(v[sel][order], flagged[sel][order])]
    residuals = pd.DataFrame({"reverse_bias": v, "temperature": t, "measured": i,
                              "fitted": fitted, "relative": rel, "normalised": normalised})
    residuals.attrs["units"] = {"reverse_bias": "V", "temperature": "K", "measured": "A",
                                "fitted": "A", "relative": "", "normalised": ""}
    return DarkCurrentFit(parameters=values, uncertainties=errors, covariance=sol.covariance,
                          residuals=residuals, chi_square=sol.chi_square, dof=sol.dof,
                          misfit_ranges=ranges, reference_temperature=t0, band_gap=band_gap,
                          junction=junction, absolute_sigma=absolute)
