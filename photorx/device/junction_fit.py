"""Fit photorx's junction models to a measured C-V curve, with uncertainties and residuals.

:func:`fit_junction` fits the parametric form Cj0 / (1 + V_R/Vj)^m, a one-sided abrupt
junction (doping from the data, or the area), a linearly graded junction (gradient) or a
p-i-n junction (i-layer doping and thickness) by weighted least squares, and returns a
:class:`JunctionFit`: the fitted junction object, each parameter with its standard
deviation, the residuals, the goodness of fit and the bias ranges where the model does
not describe the data.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .._validate import require_positive
from ..constants import q as Q_E
from ..errors import DesignError
from .cv_profile import _as_cv
from .fitting import MISFIT_SIGMAS, check_sigma, misfit_ranges, weighted_least_squares
from .junction_abrupt import AbruptJunction, LinearlyGradedJunction
from .junction_base import MAX_DOPING, check_material
from .junction_parametric import ParametricJunction
from .junction_pin import PinJunction

__all__ = ["JunctionFit", "fit_junction", "JUNCTION_MODELS"]

#: Models :func:`fit_junction` knows, with the parameters it fits.
JUNCTION_MODELS = {
    "parametric": ("cj0", "vj", "m"),
    "abrupt": ("doping",),  # or ("area",) when the doping is given
    "graded": ("gradient",),
    "pin": ("i_doping", "i_thickness"),
}

_DEFAULT_CONTACT_DOPING = 1e25  # [m^-3] 1e19 cm^-3, a typical diffused contact layer
_PENALTY = 1e6  # normalised residual returned where a trial junction is outside its range


@dataclass(frozen=True, eq=False)  # holds arrays and tables: compared by identity
class JunctionFit:
    """A junction model fitted to C-V data (result of :func:`fit_junction`).

    Parameters
    ----------
    model : str
        "parametric", "abrupt", "graded" or "pin".
    junction : object
        The fitted photorx junction (:class:`ParametricJunction`, :class:`AbruptJunction`,
        :class:`LinearlyGradedJunction` or :class:`PinJunction`).
    parameters : dict
        Fitted parameter -> value in SI (cj0 [F], vj [V], m [-], doping [m^-3], area
        [m^2], gradient [m^-4], i_doping [m^-3], i_thickness [m]).
    uncertainties : dict
        Parameter -> one standard deviation, same units (linearised, from the covariance).
    covariance : numpy.ndarray
        Covariance of the fit variables (logarithms of the positive parameters, m as is).
    residuals : pandas.DataFrame
        Columns reverse_bias [V], measured [F], fitted [F], relative (fitted/measured - 1)
        and normalised ((fitted - measured)/sigma, sigma estimated from the scatter when
        no ``sigma`` was given).
    chi_square : float
        Sum of squared normalised residuals with the given sigma (with relative weights,
        it equals the number of degrees of freedom by construction).
    dof : int
        Degrees of freedom (points minus parameters).
    rms_relative_error : float
        Root-mean-square relative residual [-].
    misfit_ranges : list of (float, float)
        Bias ranges [V] where the model misses the data: two or more adjacent points with
        |normalised residual| > 3 with a given sigma, or |relative residual| >
        ``tolerance`` without.
    absolute_sigma : bool
        Whether ``sigma`` was given (uncertainties from it) or estimated from the scatter.
    """

    model: str
    junction: object
    parameters: dict
    uncertainties: dict
    covariance: np.ndarray = field(repr=False)
    residuals: object = field(repr=False)
    chi_square: float
    dof: int
    rms_relative_error: float
    misfit_ranges: list
    absolute_sigma: bool

    @property
    def reduced_chi_square(self):
        """chi_square / dof [-] (about 1 for a good fit with correct sigma)."""
        return self.chi_square / self.dof if self.dof > 0 else float("inf")

    @property
    def p_value(self):
        """Probability of a chi-square this large by chance [-] (given sigma only, else NaN)."""
        if not self.absolute_sigma or self.dof <= 0:
            return float("nan")
        from scipy.stats import chi2

        return float(chi2.sf(self.chi_square, self.dof))

    @property
    def fits(self):
        """True when no bias range is flagged as misfit."""
        return not self.misfit_ranges

    def plot(self, ax=None):
        """Measured and fitted C-V with the residuals below (matplotlib Figure).

        Parameters
        ----------
        ax : pair of matplotlib.axes.Axes, optional
            Axes for the curve and the residuals; by default a new Figure.
        """
        from ..views.plots_measured import plot_fit_residuals

        r = self.residuals
        return plot_fit_residuals(r["reverse_bias"], r["measured"], r["fitted"],
                                  r["normalised"], self.misfit_ranges, ax=ax, yunit="F",
                                  ylabel="Capacitance", title=f"C-V fit: {self.model}")


def _slope_intercept(v, y):
    a = np.polyfit(v, y, 1)
    return float(a[0]), float(a[1])


def _spec(model, v, c, mat, area, doping, contact_doping, temperature):
    """(names, log flags, x0, lower, upper, builder) of a model."""
    eps = mat.permittivity if mat is not None else None
    if model == "parametric":
        from .junction_parametric import fit_parametric_junction

        start = fit_parametric_junction(bias=v, capacitance=c).junction
        x0 = [np.log(start.cj0), np.log(start.vj), start.m]

        def build(x):
            return ParametricJunction(cj0=float(np.exp(x[0])), vj=float(np.exp(x[1])),
                                      m=float(x[2]))

        return (("cj0", "vj", "m"), (True, True, False), x0,
                [-np.inf, np.log(0.01), 0.0], [np.inf, np.log(10.0), 2.0], build)
    if mat is None:
        raise DesignError(f"material is required for model={model!r}", parameter="material")
    s, _ = _slope_intercept(v, 1.0 / c**2)
    if model == "abrupt":
        if (area is None) == (doping is None):
            raise DesignError("model='abrupt' fits the doping of the lightly doped side with "
                              "area given, or the area with doping given: give exactly one "
                              "of area [m^2] and doping [m^-3]", parameter="area")
        if s <= 0:
            raise DesignError("1/C^2 does not rise with reverse bias; the data are not a "
                              "depletion capacitance", parameter="cv")
        if area is not None:
            n0 = 2.0 / (Q_E * eps * area**2 * s)
            names, x0 = ("doping",), [np.log(np.clip(n0, 1e16, 1e26))]
            lo, hi = [np.log(1e16)], [np.log(MAX_DOPING / 10)]

            def build(x):
                return AbruptJunction(mat, na=contact_doping, nd=float(np.exp(x[0])),
                                      area=area, temperature=temperature)
        else:
            a0 = np.sqrt(2.0 / (Q_E * eps * doping * s))
            names, x0, lo, hi = ("area",), [np.log(a0)], [np.log(a0) - 10], [np.log(a0) + 10]

            def build(x):
                return AbruptJunction(mat, na=contact_doping, nd=doping,
                                      area=float(np.exp(x[0])), temperature=temperature)
        return names, (True,), x0, lo, hi, build
    area = float(require_positive("area", area, "m^2")) if area is not None else None
    if area is None:
        raise DesignError(f"area [m^2] is required for model={model!r}", parameter="area")
    if model == "graded":
        s3, _ = _slope_intercept(v, 1.0 / c**3)
        a0 = 12.0 / (Q_E * eps**2 * area**3 * max(s3, 1e-300))

        def build(x):
            return LinearlyGradedJunction(mat, gradient=float(np.exp(x[0])), area=area,
                                          temperature=temperature)

        return (("gradient",), (True,), [np.log(a0)], [np.log(a0) - 15], [np.log(a0) + 15],
                build)
    if model == "pin":
        k = max(3, v.size // 4)
        s_low, _ = _slope_intercept(v[:k], 1.0 / c[:k] ** 2)
        n0 = 2.0 / (Q_E * eps * area**2 * max(s_low, 1e-300))
        d0 = eps * area / float(np.min(c))
        cd = float(contact_doping)

        def build(x):
            return PinJunction(mat, i_thickness=float(np.exp(x[1])), i_doping=float(np.exp(x[0])),
                               area=area, p_doping=cd, n_doping=cd, temperature=temperature)

        return (("i_doping", "i_thickness"), (True, True),
                [np.log(np.clip(n0, 1e15, cd / 10)), np.log(np.clip(d0, 2e-8, 5e-4))],
                [np.log(1e15), np.log(1e-8)], [np.log(cd / 10), np.log(1e-3)], build)
    raise DesignError(f"model = {model!r} is invalid; valid: "
                      f"{', '.join(repr(m) for m in JUNCTION_MODELS)}", parameter="model")


def fit_junction(cv, model="parametric", sigma=None, material=None, area=None, doping=None,
                 contact_doping=_DEFAULT_CONTACT_DOPING, temperature=None, tolerance=0.01):
    """Fit a junction model to a measured C-V curve by weighted least squares.

    Parameters
    ----------
    cv : pandas.DataFrame or (array_like, array_like)
        C-V table from :func:`~photorx.device.measurements.read_cv`, or (bias [V],
        capacitance [F]). A table with several temperatures needs ``temperature``.
    model : {"parametric", "abrupt", "graded", "pin"}, optional
        "parametric": Cj0, Vj, m of Cj0/(1 + V_R/Vj)^m. "abrupt": one-sided p+n junction
        (p side ``contact_doping``), fits the n-side doping with ``area`` given or the area
        with ``doping`` given. "graded": the gradient of a linearly graded junction
        (``area`` given). "pin": the i-layer doping and thickness (``area`` given, contacts
        ``contact_doping``).
    sigma : float or array_like, optional
        Standard deviation of each capacitance [F]. Default None: relative weights, the
        scatter estimated from the fit (as :func:`scipy.optimize.curve_fit` with
        ``absolute_sigma=False``).
    material : Material or str, optional
        Semiconductor; required by the physical models.
    area : float, optional
        Junction area [m^2], > 0.
    doping : float, optional
        Doping of the lightly doped side [m^-3] ("abrupt" only, to fit the area instead).
    contact_doping : float, optional
        Doping of the heavily doped contact layers [m^-3] (default 1e25, i.e. 1e19 cm^-3).
    temperature : float, optional
        Temperature [K] of the data; default the table's (single) temperature or 300 K.
    tolerance : float, optional
        Relative residual beyond which a point is flagged as misfit when ``sigma`` is not
        given [-], > 0 (default 0.01).

    Returns
    -------
    JunctionFit

    Notes
    -----
    Minimises sum(((C_model(V_i) - C_i) / sigma_i)^2) with
    :func:`scipy.optimize.least_squares` over the logarithms of the positive parameters;
    the covariance is (J^T J)^-1 (scaled by chi^2/dof for relative weights), and the
    standard deviation of a parameter p fitted as ln p is p times that of ln p. The
    physical models use photorx's own junction classes (depletion approximation), so a
    misfit near zero bias of about 2kT/q in the 1/C^2 intercept is expected (mobile
    carriers; see :mod:`~photorx.device.poisson`). Strongly correlated parameters (Vj and
    m over a narrow bias span, i-layer doping and thickness without punch-through in the
    data) come with large uncertainties.

    References
    ----------
    .. [1] S. M. Sze and K. K. Ng, *Physics of Semiconductor Devices*, 3rd ed., Wiley,
       2007, ch. 2 (depletion capacitance).
    .. [2] W. H. Press et al., *Numerical Recipes*, 3rd ed., Cambridge University Press,
       2007, section 15.5.
    """
    import pandas as pd

    v, c, t = _as_cv(cv)
    if t is not None:
        temps = np.unique(t)
        if temperature is None and temps.size > 1:
            raise DesignError(f"cv holds {temps.size} temperatures; pass temperature [K] to "
                              "choose one", parameter="temperature")
        if temperature is not None:
            sel = np.isclose(t, float(temperature))
            if not np.any(sel):
                raise DesignError.out_of_range("temperature", temperature, "K",
                                               f"one of the table's {temps.tolist()}")
            v, c = v[sel], c[sel]
        temperature = float(temps[0]) if temperature is None else float(temperature)
    temperature = 300.0 if temperature is None else float(temperature)
    order = np.argsort(v)
    v, c = v[order], c[order]
    mat = None if material is None else check_material(material)
    if model not in JUNCTION_MODELS:
        raise DesignError(f"model = {model!r} is invalid; valid: "
                          f"{', '.join(repr(m) for m in JUNCTION_MODELS)}", parameter="model")
    if area is not None:
        area = float(require_positive("area", area, "m^2"))
    if doping is not None:
        doping = float(require_positive("doping", doping, "m^-3"))
    tolerance = float(require_positive("tolerance", tolerance))
    names, logs, x0, lo, hi, build = _spec(model, v, c, mat, area, doping,
                                           float(contact_doping), temperature)
    if v.size <= len(names):
        raise DesignError.out_of_range("cv", v.size, "points",
                                       f"> {len(names)} (number of fitted parameters)")
    if sigma is not None:
        sigma = np.asarray(sigma, dtype=float)
        if sigma.ndim:
            sigma = sigma[order]
    s, absolute = check_sigma(sigma, c, "sigma", "F")

    def resid(x):
        try:
            return (np.asarray(build(x).capacitance(v)) - c) / s
        except DesignError:  # a trial design outside the model's range (e.g. breakdown)
            return np.full(v.size, _PENALTY)

    sol = weighted_least_squares(resid, x0, (lo, hi), absolute)
    junction = build(sol.x)
    values, errors = {}, {}
    for i, (name, is_log) in enumerate(zip(names, logs)):
        sd = float(np.sqrt(sol.covariance[i, i]))
        values[name] = float(np.exp(sol.x[i])) if is_log else float(sol.x[i])
        errors[name] = values[name] * sd if is_log else sd
    fitted = np.asarray(junction.capacitance(v), dtype=float)
    rel = fitted / c - 1.0
    scatter = s if absolute else s * np.sqrt(sol.chi_square / max(sol.dof, 1))
    normalised = (fitted - c) / scatter
    flagged = np.abs(normalised) > MISFIT_SIGMAS if absolute else np.abs(rel) > tolerance
    residuals = pd.DataFrame({"reverse_bias": v, "measured": c, "fitted": fitted,
                              "relative": rel, "normalised": normalised})
    residuals.attrs["units"] = {"reverse_bias": "V", "measured": "F", "fitted": "F",
                                "relative": "", "normalised": ""}
    return JunctionFit(model=model, junction=junction, parameters=values, uncertainties=errors,
                       covariance=sol.covariance, residuals=residuals,
                       chi_square=sol.chi_square, dof=sol.dof,
                       rms_relative_error=float(np.sqrt(np.mean(rel**2))),
                       misfit_ranges=misfit_ranges(v, flagged), absolute_sigma=absolute)
