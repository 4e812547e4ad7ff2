"""The parametric junction capacitance Cj0 / (1 + V_R/Vj)^m used by circuit simulators.

Also :func:`fit_parametric_junction`, which fits that form to any junction model or to
measured (bias, capacitance) points with :func:`scipy.optimize.least_squares`.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from .._validate import require_finite, require_in_range, require_positive
from ..errors import DesignError
from .junction_base import diffusion_capacitance

__all__ = [
    "ParametricJunction",
    "ParametricFit",
    "fit_parametric_junction",
    "parametric_capacitance",
    "parametric_charge",
]

_M_RANGE = (0.0, 2.0)  # grading coefficient: 0 fixed C, 1/3 graded, 1/2 abrupt, > 1/2 hyperabrupt
_VJ_RANGE = (0.01, 10.0)  # junction potential [V]
_FC_RANGE = (0.0, 0.95)


def _out(x):
    return x if np.ndim(x) else float(x)


def parametric_capacitance(v_r, cj0, vj, m, fc=0.5):
    """Junction capacitance of the parametric form, with the forward-bias linear extension.

    Parameters
    ----------
    v_r : float or array_like
        Reverse bias [V]; negative is forward bias.
    cj0 : float or array_like
        Zero-bias capacitance [F].
    vj : float or array_like
        Junction potential [V].
    m : float or array_like
        Grading coefficient [-] (0 gives a fixed capacitance).
    fc : float or array_like
        Forward-bias coefficient [-]: the power law holds for forward bias below fc*Vj.

    Returns
    -------
    float or numpy.ndarray
        C [F].

    Notes
    -----
    For v_r > -fc Vj: C = Cj0 (1 + v_r/Vj)^(-m). For forward bias V_D = -v_r >= fc Vj:
    C = Cj0 (1 - fc)^(-(1+m)) (1 - fc (1 + m) + m V_D / Vj), the straight line tangent to
    the power law at V_D = fc Vj, so C and dC/dV are continuous.

    References
    ----------
    .. [1] L. W. Nagel, SPICE2: A computer program to simulate semiconductor circuits,
       Memo UCB/ERL M520, University of California, Berkeley, 1975 (junction capacitance
       model) (from memory).
    """
    v, cj0, vj, m, fc = (np.asarray(x, dtype=float) for x in (v_r, cj0, vj, m, fc))
    u = np.maximum(1.0 + v / vj, 1.0 - fc)  # the max keeps the unused branch finite
    c_pow = cj0 * u ** (-m)
    vd = -v
    c_lin = cj0 * (1.0 - fc) ** (-(1.0 + m)) * (1.0 - fc * (1.0 + m) + m * vd / vj)
    return _out(np.where(vd < fc * vj, c_pow, c_lin))


def _pow_integral(u, m):
    """Integral of u'^(-m) du' from 1 to u, i.e. (u^(1-m) - 1)/(1 - m), or ln u for m = 1."""
    s = 1.0 - m
    lu = np.log(u)
    small = np.abs(s) < 1e-9
    s_safe = np.where(small, 1.0, s)
    return np.where(small, lu, np.expm1(s_safe * lu) / s_safe)


def parametric_charge(v_r, cj0, vj, m, fc=0.5):
    """Junction charge of the parametric form relative to zero bias [C]; dQ/dv_r = C.

    Parameters
    ----------
    v_r : float or array_like
        Reverse bias [V]; negative is forward bias.
    cj0 : float or array_like
        Zero-bias capacitance [F].
    vj : float or array_like
        Junction potential [V].
    m : float or array_like
        Grading coefficient [-] (m = 1 takes the logarithmic form).
    fc : float or array_like
        Forward-bias coefficient [-]: the power law holds for forward bias below fc*Vj,
        the linear capacitance extension beyond.

    Returns
    -------
    float or numpy.ndarray
        Q(v_r) - Q(0) [C].

    Notes
    -----
    Q(v_r) = Cj0 Vj ((1 + v_r/Vj)^(1-m) - 1) / (1 - m) (Cj0 Vj ln(1 + v_r/Vj) for m = 1)
    above -fc Vj, continued by the integral of the linear capacitance below it.
    """
    v, cj0, vj, m, fc = (np.asarray(x, dtype=float) for x in (v_r, cj0, vj, m, fc))
    u = np.maximum(1.0 + v / vj, 1.0 - fc)
    q_pow = cj0 * vj * _pow_integral(u, m)
    v_b = -fc * vj
    q_b = cj0 * vj * _pow_integral(1.0 - fc, m)
    f1 = cj0 * (1.0 - fc) ** (-(1.0 + m))
    q_lin = q_b + f1 * ((1.0 - fc * (1.0 + m)) * (v - v_b) - m * (v**2 - v_b**2) / (2.0 * vj))
    return _out(np.where(v > v_b, q_pow, q_lin))


@dataclass(frozen=True)
class ParametricJunction:
    """Junction capacitance Cj0 / (1 + V_R/Vj)^m with the simulator-style forward extension.

    Parameters
    ----------
    cj0 : float or array_like
        Zero-bias junction capacitance [F], > 0.
    vj : float or array_like
        Junction (built-in) potential [V], 0.01 to 10.
    m : float or array_like
        Grading coefficient [-], 0 to 2: 1/2 abrupt, 1/3 linearly graded, 0 fixed
        capacitance.
    fc : float or array_like, optional
        Forward-bias coefficient [-], 0 to 0.95 (default 0.5).

    Notes
    -----
    See :func:`parametric_capacitance` and :func:`parametric_charge`. The form has no
    breakdown and no material; any bias is accepted. A one-sided abrupt junction in the
    depletion approximation is exactly Cj0 = C(0), Vj = Vbi, m = 1/2; a linearly graded
    one exactly m = 1/3.
    """

    cj0: float
    vj: float
    m: float
    fc: float = 0.5

    def __post_init__(self):
        object.__setattr__(self, "cj0", require_positive("cj0", self.cj0, "F"))
        object.__setattr__(self, "vj", require_in_range("vj", self.vj, "V", *_VJ_RANGE))
        object.__setattr__(self, "m", require_in_range("m", self.m, "", *_M_RANGE))
        object.__setattr__(self, "fc", require_in_range("fc", self.fc, "", *_FC_RANGE))

    def capacitance(self, v_r):
        """Junction capacitance [F] at reverse bias ``v_r`` [V] (negative = forward).

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), any finite value (the form has no
            breakdown; forward bias beyond fc*Vj follows the linear extension).
        """
        v = require_finite("v_r", v_r, "V")
        return parametric_capacitance(v, self.cj0, self.vj, self.m, self.fc)

    def charge(self, v_r):
        """Junction charge relative to zero bias [C]; dQ/dv_r = capacitance(v_r).

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V] (negative is forward bias), any finite value (the form has no
            breakdown; forward bias beyond fc*Vj follows the linear extension).
        """
        v = require_finite("v_r", v_r, "V")
        return parametric_charge(v, self.cj0, self.vj, self.m, self.fc)

    def total_capacitance(self, v_r, i_forward=0.0, transit_time=0.0, ideality=1.0,
                          temperature=300.0):
        """Junction plus diffusion capacitance [F] (see :func:`diffusion_capacitance`).

        Parameters
        ----------
        v_r : float or array_like
            Reverse bias [V]; negative is forward bias. Any finite value.
        i_forward : float or array_like, optional
            Forward DC current [A], >= 0 (0 in reverse bias).
        transit_time : float or array_like, optional
            Minority-carrier transit time or lifetime [s], >= 0.
        ideality : float or array_like, optional
            Ideality factor n [-], 1 to 5.
        temperature : float or array_like, optional
            Temperature [K], 50 to 600 (default 300); the form itself has none, so it is
            given here for the thermal voltage of the diffusion term.

        Notes
        -----
        C = C_j(v_r) + tau I / (n V_T).
        """
        return self.capacitance(v_r) + diffusion_capacitance(i_forward, transit_time, ideality,
                                                             temperature)

    def _repr_html_(self):
        """Jupyter display: a compact parameter table with units (the closed form, where
        there is one, is the LaTeX display)."""
        from ..views.rich import parameter_table_html

        return parameter_table_html(self)

    def _repr_latex_(self):
        """Jupyter display of the model's closed form with this object's values."""
        from ..views.rich import closed_form_latex

        return closed_form_latex(self)


class ParametricFit(NamedTuple):
    """Result of :func:`fit_parametric_junction`; unpacks as ``(junction, residual)``.

    Parameters
    ----------
    junction : ParametricJunction
        The fitted model (also the attribute of that name).
    residual : float
        Root-mean-square relative error of the fitted capacitance over the points [-],
        >= 0 (also the attribute of that name).
    """

    junction: ParametricJunction
    residual: float


def fit_parametric_junction(junction=None, bias=None, capacitance=None, bias_range=(0.0, 10.0),
                            n_points=41, fc=0.5, m_bounds=_M_RANGE):
    """Fit Cj0, Vj and m of :class:`ParametricJunction` to a junction model or to measurements.

    Parameters
    ----------
    junction : object with ``capacitance(v_r)``, optional
        A junction model (e.g. :class:`AbruptJunction`, :class:`PinJunction`) to fit.
        Leave out when fitting measured points.
    bias : array_like, optional
        Reverse biases [V] of the fit points. Default for a model:
        ``numpy.linspace(*bias_range, n_points)``.
    capacitance : array_like, optional
        Measured capacitances [F] at ``bias``, > 0 (fit to measurements).
    bias_range : (float, float), optional
        Bias span [V] used when ``bias`` is not given.
    n_points : int, optional
        Number of points in ``bias_range``.
    fc : float, optional
        Forward-bias coefficient of the result [-].
    m_bounds : (float, float), optional
        Allowed range of the grading coefficient.

    Returns
    -------
    ParametricFit
        ``(junction, residual)``: the fitted :class:`ParametricJunction` and the rms
        relative error of its capacitance at the fit points.

    Notes
    -----
    Least squares on ln C (relative errors weigh all points alike) with
    :func:`scipy.optimize.least_squares`, parameters ln Cj0, ln Vj and m within bounds.
    Vj and m are strongly correlated when the bias span is narrow; fit over a span of at
    least a few Vj to separate them.

    Raises
    ------
    DesignError
        Neither a model nor measured points, fewer than 3 points, or nonpositive
        capacitance.
    """
    if junction is None and capacitance is None:
        raise DesignError("fit_parametric_junction needs a junction model or measured "
                          "capacitance points (bias, capacitance)", parameter="junction")
    if bias is None:
        if capacitance is not None:
            raise DesignError("bias is required with measured capacitance", parameter="bias")
        lo, hi = (float(x) for x in require_finite("bias_range", bias_range, "V"))
        if not hi > lo:
            raise DesignError.out_of_range("bias_range", hi, "V", f"upper end > lower end {lo:g} V")
        bias = np.linspace(lo, hi, int(n_points))
    v = np.atleast_1d(require_finite("bias", bias, "V")).ravel()
    if capacitance is None:
        c_data = np.atleast_1d(np.asarray(junction.capacitance(v), dtype=float)).ravel()
    else:
        c_data = np.atleast_1d(require_positive("capacitance", capacitance, "F")).ravel()
    if c_data.shape != v.shape:
        raise DesignError(f"capacitance has {c_data.size} points but bias has {v.size}",
                          parameter="capacitance")
    if v.size < 3:
        raise DesignError.out_of_range("bias", v.size, "points", ">= 3 points to fit 3 parameters")
    fc = float(require_in_range("fc", fc, "", *_FC_RANGE))
    m_lo, m_hi = (float(x) for x in m_bounds)

    log_c = np.log(c_data)

    def resid(x):
        return np.log(parametric_capacitance(v, np.exp(x[0]), np.exp(x[1]), x[2], fc)) - log_c

    # start: Cj0 from the point closest to zero bias, Vj 0.7 V, m from the end-to-end slope
    i0 = int(np.argmin(np.abs(v)))
    vj0 = 0.7
    span = np.log((1 + v.max() / vj0) / (1 + v.min() / vj0)) if v.min() > -0.5 * vj0 else 0.0
    m0 = -(log_c[np.argmax(v)] - log_c[np.argmin(v)]) / span if span > 0 else 0.4
    m0 = float(np.clip(m0, m_lo + 1e-6, m_hi - 1e-6))
    x0 = [log_c[i0] + m0 * np.log(max(1 + v[i0] / vj0, 1e-3)), np.log(vj0), m0]
    from scipy.optimize import least_squares  # lazy: only fits need it

    sol = least_squares(resid, x0, bounds=([-np.inf, np.log(_VJ_RANGE[0]), m_lo],
                                           [np.inf, np.log(_VJ_RANGE[1]), m_hi]),
                        x_scale=[1.0, 1.0, 0.1], xtol=1e-14, ftol=1e-14, gtol=1e-14)
    fitted = ParametricJunction(cj0=float(np.exp(sol.x[0])), vj=float(np.exp(sol.x[1])),
                                m=float(sol.x[2]), fc=fc)
    rel = fitted.capacitance(v) / c_data - 1.0
    return ParametricFit(fitted, float(np.sqrt(np.mean(rel**2))))
