"""Weighted least squares with parameter uncertainties, shared by the measurement fits.

One engine for :func:`~photorx.device.junction_fit.fit_junction` and
:func:`~photorx.device.dark_fit.fit_dark_current`: :func:`scipy.optimize.least_squares`
on (model - data) / sigma, the covariance from the Jacobian at the solution, the
goodness of fit and the bias ranges where the model misses the data.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import DesignError

__all__ = ["LeastSquaresResult", "weighted_least_squares", "misfit_ranges", "check_sigma"]

#: Normalised residual beyond which a point counts as not fitted (3 standard deviations).
MISFIT_SIGMAS = 3.0


@dataclass(frozen=True, eq=False)  # holds arrays and tables: compared by identity
class LeastSquaresResult:
    """Solution of :func:`weighted_least_squares` in the fit variables.

    Parameters
    ----------
    x : numpy.ndarray
        Best-fit variables.
    covariance : numpy.ndarray
        Covariance of ``x`` [(units of x)^2]; scaled by the reduced chi-square unless the
        weights were absolute.
    chi_square : float
        Sum of squared normalised residuals [-].
    dof : int
        Degrees of freedom, points minus fitted parameters.
    residual : numpy.ndarray
        Normalised residuals (model - data) / sigma at the solution [-].
    """

    x: np.ndarray
    covariance: np.ndarray
    chi_square: float
    dof: int
    residual: np.ndarray


def check_sigma(sigma, data, name="sigma", unit=""):
    """(sigma array, absolute): the given standard deviations, or |data| (relative weights).

    Parameters
    ----------
    sigma : None, float or array_like
        Standard deviation of each data point (same unit as the data), > 0. None:
        relative weighting (sigma = |data|) with the scatter estimated from the fit.
    data : numpy.ndarray
        The data points.
    name : str, optional
        Parameter name for messages.
    unit : str, optional
        Unit of the data for messages.
    """
    data = np.asarray(data, dtype=float)
    if sigma is None:
        scale = np.abs(data)
        if np.any(scale == 0):
            raise DesignError("a data point is exactly 0, so relative weights do not exist; "
                              f"give {name} [{unit}] (standard deviation of each point)",
                              parameter=name)
        return scale, False
    s = np.broadcast_to(np.asarray(sigma, dtype=float), data.shape).astype(float)
    if not np.all(np.isfinite(s)) or np.any(s <= 0):
        bad = s[~(np.isfinite(s) & (s > 0))][0]
        raise DesignError.out_of_range(name, bad, unit, "> 0 and finite (one standard "
                                       "deviation per data point)")
    return s, True


def weighted_least_squares(residual, x0, bounds, absolute, x_scale=1.0):
    """Minimise sum(residual(x)^2) and estimate the covariance of the solution.

    Parameters
    ----------
    residual : callable
        x -> normalised residuals (model - data) / sigma.
    x0 : array_like
        Start values of the fit variables.
    bounds : (array_like, array_like)
        Lower and upper bounds of the variables.
    absolute : bool
        True when sigma are true standard deviations (covariance not rescaled); False for
        relative weights (covariance scaled by the reduced chi-square, as
        :func:`scipy.optimize.curve_fit` does with ``absolute_sigma=False``).
    x_scale : float or array_like, optional
        Typical size of each variable (passed to :func:`scipy.optimize.least_squares`).

    Returns
    -------
    LeastSquaresResult

    Notes
    -----
    Covariance (J^T J)^-1 (times chi^2/dof for relative weights), J the Jacobian of the
    normalised residuals at the solution, through the pseudo-inverse from the singular
    value decomposition (as :func:`scipy.optimize.curve_fit`). A parameter the data do not
    determine has an infinite variance.

    References
    ----------
    .. [1] W. H. Press et al., *Numerical Recipes*, 3rd ed., Cambridge University Press,
       2007, section 15.5 (nonlinear least squares, covariance from the curvature matrix).
    """
    from scipy.optimize import least_squares

    sol = least_squares(residual, np.asarray(x0, dtype=float), bounds=bounds, x_scale=x_scale,
                        method="trf", xtol=1e-12, ftol=1e-12, gtol=1e-12, max_nfev=2000)
    r = np.asarray(sol.fun, dtype=float)
    n, p = r.size, sol.x.size
    dof = max(n - p, 0)
    chi2 = float(np.sum(r**2))
    _, s, vt = np.linalg.svd(sol.jac, full_matrices=False)
    tiny = np.finfo(float).eps * max(sol.jac.shape) * (s[0] if s.size else 0.0)
    keep = s > tiny
    cov = (vt[keep].T / s[keep] ** 2) @ vt[keep]
    if not np.all(keep):
        cov = cov.copy()
        undetermined = np.any(np.abs(vt[~keep]) > 1e-3, axis=0)
        cov[undetermined, :] = np.inf
        cov[:, undetermined] = np.inf
    if not absolute:
        cov = cov * (chi2 / dof if dof > 0 else np.inf)
    return LeastSquaresResult(sol.x, cov, chi2, dof, r)


def misfit_ranges(bias, flagged, min_points=2):
    """Contiguous bias ranges [(v_lo, v_hi), ...] [V] of flagged points (bias sorted).

    A lone flagged point is an outlier, not a range the model misses (with 3-sigma
    flags, one in 370 points of a correct model is flagged by chance), so a range needs
    ``min_points`` adjacent flagged points.

    Parameters
    ----------
    bias : array_like
        Bias of each point [V], sorted ascending.
    flagged : array_like of bool
        Points where the model misses the data.
    min_points : int, optional
        Fewest adjacent flagged points that make a range (default 2).

    Returns
    -------
    list of (float, float)
    """
    v = np.asarray(bias, dtype=float)
    f = np.asarray(flagged, dtype=bool)
    out, start = [], None
    for i, bad in enumerate(f):
        if bad and start is None:
            start = i
        if start is not None and (not bad or i == f.size - 1):
            end = i if bad else i - 1
            if end - start + 1 >= min_points:
                out.append((float(v[start]), float(v[end])))
            start = None
    return out
